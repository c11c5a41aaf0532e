//! Magnitude perception as numbers: Stevens' power-law exponents (perceived = k · stimulus^a),
//! Flannery's apparent-size compensation for circles, and Tufte's lie factor (with the
//! truncated-baseline case the baseline rules need).
//!
//! FROM MEMORY: the exponents were transcribed from memory of Stevens' tables (Stevens 1957;
//! Stevens 1975, the table of exponents for various continua) and of Flannery (1971); the
//! publications could not be consulted while writing this. Measured exponents vary between
//! studies and observers: treat them as typical values, not constants of nature.

use crate::knowledge::citations;
use crate::knowledge::perceived::PerceivedChannel;
use crate::knowledge::Citation;

/// One row of a table of power-law exponents.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PowerLawExponent {
    /// The perceptual continuum, e.g. "visual area".
    pub continuum: &'static str,
    /// The stimulus condition it was measured with, e.g. "projected square".
    pub stimulus: &'static str,
    pub exponent: f64,
    /// The perceived channel this continuum corresponds to, where one does.
    pub perceived_channel: Option<PerceivedChannel>,
    pub source: Citation,
    pub note: &'static str,
}

/// Power-law exponents for the visual continua charts use (from memory, see the module docs).
pub static STEVENS_EXPONENTS: [PowerLawExponent; 7] = [
    PowerLawExponent {
        continuum: "visual length",
        stimulus: "projected line",
        exponent: 1.0,
        perceived_channel: Some(PerceivedChannel::Length),
        source: citations::STEVENS_1975,
        note: "from memory; lengths are judged nearly in proportion",
    },
    PowerLawExponent {
        continuum: "visual area",
        stimulus: "projected square",
        exponent: 0.7,
        perceived_channel: Some(PerceivedChannel::Area),
        source: citations::STEVENS_1975,
        note: "from memory; a ratio R of areas looks like R^0.7",
    },
    PowerLawExponent {
        continuum: "visual volume",
        stimulus: "drawn or projected solids",
        exponent: 0.6,
        perceived_channel: Some(PerceivedChannel::Volume),
        source: citations::STEVENS_1975,
        note: "from memory and uncertain; reported values range roughly from 0.5 to 0.8",
    },
    PowerLawExponent {
        continuum: "brightness",
        stimulus: "5 degree target in the dark",
        exponent: 0.33,
        perceived_channel: Some(PerceivedChannel::Luminance),
        source: citations::STEVENS_1975,
        note: "from memory",
    },
    PowerLawExponent {
        continuum: "brightness",
        stimulus: "point source",
        exponent: 0.5,
        perceived_channel: Some(PerceivedChannel::Luminance),
        source: citations::STEVENS_1975,
        note: "from memory",
    },
    PowerLawExponent {
        continuum: "lightness",
        stimulus: "reflectance of grey papers",
        exponent: 1.2,
        perceived_channel: Some(PerceivedChannel::Luminance),
        source: citations::STEVENS_1975,
        note: "from memory; surface lightness rather than the brightness of a light",
    },
    PowerLawExponent {
        continuum: "redness (saturation)",
        stimulus: "red-grey mixture",
        exponent: 1.7,
        perceived_channel: Some(PerceivedChannel::Saturation),
        source: citations::STEVENS_1975,
        note: "from memory; saturation differences look larger than they are",
    },
];

/// The representative exponent for a perceived channel: the first row of
/// [`STEVENS_EXPONENTS`] for it (for luminance the 5° target, the most conservative).
pub fn exponent_for(channel: PerceivedChannel) -> Option<&'static PowerLawExponent> {
    STEVENS_EXPONENTS
        .iter()
        .find(|row| row.perceived_channel == Some(channel))
}

/// How large a true ratio between two stimuli looks under Stevens' power law:
/// `true_ratio^exponent` (the constant k cancels in a ratio). An area twice as large, with
/// exponent 0.7, looks 2^0.7 ≈ 1.62 times as large.
pub fn apparent_ratio(exponent: f64, true_ratio: f64) -> f64 {
    true_ratio.powf(exponent)
}

/// Flannery (1971): perceived size of graduated circles grows with their true area to about
/// the power 0.87 (from memory).
pub const FLANNERY_PERCEIVED_CIRCLE_AREA_EXPONENT: f64 = 0.87;

/// Flannery (1971) apparent-size compensation: make the radius proportional to
/// value^0.5716 instead of value^0.5 (true area scaling), so that circles look as different as
/// the values are (from memory). 0.5716 ≈ 0.5 / 0.8747.
pub const FLANNERY_RADIUS_EXPONENT: f64 = 0.5716;

/// The source of the two Flannery constants.
pub const FLANNERY_SOURCE: Citation = citations::FLANNERY_1971;

/// Radius of a circle for `value` with Flannery's compensation, given the radius of a
/// reference value. `None` when a value is not positive or not finite.
pub fn flannery_compensated_radius(
    value: f64,
    reference_value: f64,
    reference_radius: f64,
) -> Option<f64> {
    if !(value > 0.0 && reference_value > 0.0 && value.is_finite() && reference_value.is_finite()) {
        return None;
    }
    Some(reference_radius * (value / reference_value).powf(FLANNERY_RADIUS_EXPONENT))
}

/// The source of the lie factor.
pub const LIE_FACTOR_SOURCE: Citation = citations::TUFTE_1983;

/// The size of an effect as Tufte (1983) defines it: the relative change from the first to the
/// second value, `(second − first) / first`. `None` when `first` is zero or a value is not
/// finite.
pub fn relative_effect(first: f64, second: f64) -> Option<f64> {
    if first == 0.0 || !first.is_finite() || !second.is_finite() {
        return None;
    }
    Some((second - first) / first)
}

/// Tufte's (1983) lie factor: size of the effect shown in the graphic divided by the size of
/// the effect in the data. 1 means the graphic is accurate; above 1 it exaggerates, below 1 it
/// understates. `None` when the data effect is zero (no change to distort) or not finite.
pub fn lie_factor(size_of_effect_in_graphic: f64, size_of_effect_in_data: f64) -> Option<f64> {
    if size_of_effect_in_data == 0.0
        || !size_of_effect_in_data.is_finite()
        || !size_of_effect_in_graphic.is_finite()
    {
        return None;
    }
    Some(size_of_effect_in_graphic / size_of_effect_in_data)
}

/// Lie factor of two bars (or area heights) drawn from a `baseline` instead of zero, for the
/// values `first` and `second`.
///
/// The bars' drawn lengths are `first − baseline` and `second − baseline`, so
/// - effect in the graphic = (second − baseline) / (first − baseline) − 1,
/// - effect in the data    = second / first − 1,
/// - lie factor = graphic effect / data effect.
///
/// With `baseline = 0` it is exactly 1. Example: bars from 400 for 410 and 450 have lengths 10
/// and 50: the graphic shows +400 %, the data +9.76 %, a lie factor of 41. Like Tufte's effect
/// size, the result depends on which value is `first` (from 450 down to 410 it is 9): rules
/// should say which pair they compare. `None` when
/// `first` equals the baseline or zero, or the two values are equal.
pub fn truncated_baseline_lie_factor(baseline: f64, first: f64, second: f64) -> Option<f64> {
    let effect_in_graphic = relative_effect(first - baseline, second - baseline)?;
    let effect_in_data = relative_effect(first, second)?;
    lie_factor(effect_in_graphic, effect_in_data)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_row_has_a_positive_exponent_and_a_note() {
        for row in &STEVENS_EXPONENTS {
            assert!(
                row.exponent > 0.0 && row.exponent.is_finite(),
                "{}",
                row.continuum
            );
            assert!(row.note.contains("from memory"), "{}", row.continuum);
        }
    }

    #[test]
    fn undefined_effects_are_none() {
        assert_eq!(relative_effect(0.0, 5.0), None);
        assert_eq!(relative_effect(f64::NAN, 5.0), None);
        assert_eq!(lie_factor(1.0, 0.0), None);
        assert_eq!(truncated_baseline_lie_factor(10.0, 10.0, 20.0), None);
        assert_eq!(truncated_baseline_lie_factor(0.0, 20.0, 20.0), None);
        assert_eq!(flannery_compensated_radius(-1.0, 1.0, 4.0), None);
    }
}
