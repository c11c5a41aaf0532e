//! Position scales: a domain of data values mapped onto a pixel range, with the inverse, nice
//! domains from the tick search and the ticks themselves.
//!
//! Continuous scales transform the value (`even`: identity, `logarithmic`: log10,
//! `square-root`: sign-preserving square root) and interpolate linearly between the transformed
//! domain ends; calendar scales are even scales over Unix seconds with calendar ticks; band
//! scales split the range into one band per category.

use crate::draw::ticks::{calendar_ticks, extended_ticks, CalendarTicks, TickOptions, Ticks};

/// How a continuous scale spaces values.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Transform {
    Even,
    Logarithmic,
    SquareRoot,
    /// Unix seconds, ticked by the calendar.
    Calendar,
}

/// Why a scale cannot be built.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum ScaleError {
    /// An end of the domain or range is NaN or infinite.
    NotFinite,
    /// A logarithmic domain must be positive on both ends.
    NonPositiveLogDomain { low: f64, high: f64 },
}

impl std::fmt::Display for ScaleError {
    fn fmt(&self, formatter: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            ScaleError::NotFinite => {
                write!(formatter, "a domain or range end is not a finite number")
            }
            ScaleError::NonPositiveLogDomain { low, high } => write!(
                formatter,
                "a logarithmic scale needs values above zero, the domain is [{low}, {high}]"
            ),
        }
    }
}

impl std::error::Error for ScaleError {}

/// A continuous position scale.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ContinuousScale {
    pub transform: Transform,
    /// Data values at the two ends of the range (`domain.0` maps to `range.0`).
    pub domain: (f64, f64),
    /// Pixels; `range.0 > range.1` is allowed (a vertical axis that grows upward, or a flip).
    pub range: (f64, f64),
}

fn forward(transform: Transform, value: f64) -> f64 {
    match transform {
        Transform::Even | Transform::Calendar => value,
        Transform::Logarithmic => value.log10(),
        Transform::SquareRoot => value.signum() * value.abs().sqrt(),
    }
}

fn backward(transform: Transform, value: f64) -> f64 {
    match transform {
        Transform::Even | Transform::Calendar => value,
        Transform::Logarithmic => 10f64.powf(value),
        Transform::SquareRoot => value.signum() * value * value,
    }
}

impl ContinuousScale {
    pub fn new(
        transform: Transform,
        domain: (f64, f64),
        range: (f64, f64),
    ) -> Result<Self, ScaleError> {
        if ![domain.0, domain.1, range.0, range.1]
            .iter()
            .all(|value| value.is_finite())
        {
            return Err(ScaleError::NotFinite);
        }
        if transform == Transform::Logarithmic && (domain.0 <= 0.0 || domain.1 <= 0.0) {
            return Err(ScaleError::NonPositiveLogDomain {
                low: domain.0,
                high: domain.1,
            });
        }
        Ok(ContinuousScale {
            transform,
            domain,
            range,
        })
    }

    /// The pixel position of a value; `None` for values the transform cannot take (NaN, a
    /// non-positive value on a logarithmic scale). Values outside the domain extrapolate.
    pub fn map(&self, value: f64) -> Option<f64> {
        if !value.is_finite() || (self.transform == Transform::Logarithmic && value <= 0.0) {
            return None;
        }
        let low = forward(self.transform, self.domain.0);
        let high = forward(self.transform, self.domain.1);
        let t = if high == low {
            0.5
        } else {
            (forward(self.transform, value) - low) / (high - low)
        };
        Some(self.range.0 + t * (self.range.1 - self.range.0))
    }

    /// The value at a pixel position (the inverse of [`ContinuousScale::map`]).
    pub fn invert(&self, pixel: f64) -> Option<f64> {
        if !pixel.is_finite() || self.range.0 == self.range.1 {
            return None;
        }
        let low = forward(self.transform, self.domain.0);
        let high = forward(self.transform, self.domain.1);
        let t = (pixel - self.range.0) / (self.range.1 - self.range.0);
        Some(backward(self.transform, low + t * (high - low)))
    }

    /// The domain widened to tick values: for even and square-root scales the loose labelling
    /// of the tick search, for logarithmic scales whole powers of ten, for calendar scales
    /// unchanged (calendar ticks fall inside). The domain's direction is kept.
    pub fn nice(&self, target_count: usize) -> ContinuousScale {
        let (low, high, flipped) = if self.domain.0 <= self.domain.1 {
            (self.domain.0, self.domain.1, false)
        } else {
            (self.domain.1, self.domain.0, true)
        };
        let (low, high) = match self.transform {
            Transform::Calendar => (low, high),
            Transform::Logarithmic => (
                10f64.powf(low.log10().floor()),
                10f64.powf(high.log10().ceil()),
            ),
            Transform::Even | Transform::SquareRoot => {
                match extended_ticks(
                    low,
                    high,
                    TickOptions {
                        target_count,
                        loose: true,
                    },
                ) {
                    Ok(ticks) => (ticks.first().unwrap_or(low), ticks.last().unwrap_or(high)),
                    Err(_) => (low, high),
                }
            }
        };
        let domain = if flipped { (high, low) } else { (low, high) };
        ContinuousScale { domain, ..*self }
    }

    /// Tick values and labels inside the domain. Logarithmic scales tick the powers of ten
    /// (and 2 and 5 times them when the domain spans fewer than three decades); others use the
    /// tick search over the domain, keeping the ticks inside it.
    pub fn ticks(&self, target_count: usize) -> ScaleTicks {
        let low = self.domain.0.min(self.domain.1);
        let high = self.domain.0.max(self.domain.1);
        let tolerance = (high - low).abs() * 1e-9;
        match self.transform {
            Transform::Calendar => ScaleTicks::Calendar(calendar_ticks(
                low.floor() as i64,
                high.ceil() as i64,
                target_count,
            )),
            Transform::Logarithmic => {
                let first = low.log10().floor() as i32;
                let last = high.log10().ceil() as i32;
                let multiples: &[f64] = if last - first < 3 {
                    &[1.0, 2.0, 5.0]
                } else {
                    &[1.0]
                };
                let mut values = Vec::new();
                for power in first..=last {
                    for multiple in multiples {
                        let value = multiple * 10f64.powi(power);
                        if value >= low * (1.0 - 1e-12) && value <= high * (1.0 + 1e-12) {
                            values.push(value);
                        }
                    }
                }
                let labels = values
                    .iter()
                    .map(|value| format_log_label(*value))
                    .collect();
                ScaleTicks::Numeric { values, labels }
            }
            Transform::Even | Transform::SquareRoot => {
                match extended_ticks(
                    low,
                    high,
                    TickOptions {
                        target_count,
                        loose: false,
                    },
                ) {
                    Ok(Ticks { values, labels, .. }) => {
                        let (values, labels) = values
                            .into_iter()
                            .zip(labels)
                            .filter(|(value, _)| {
                                *value >= low - tolerance && *value <= high + tolerance
                            })
                            .unzip();
                        ScaleTicks::Numeric { values, labels }
                    }
                    Err(_) => ScaleTicks::Numeric {
                        values: Vec::new(),
                        labels: Vec::new(),
                    },
                }
            }
        }
    }
}

fn format_log_label(value: f64) -> String {
    if (1e-4..1e7).contains(&value) {
        let text = format!("{value:.4}");
        text.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        format!("{value:e}")
    }
}

/// Ticks of a scale.
#[derive(Clone, Debug, PartialEq)]
pub enum ScaleTicks {
    Numeric {
        values: Vec<f64>,
        labels: Vec<String>,
    },
    Calendar(CalendarTicks),
}

impl ScaleTicks {
    /// The tick values (Unix seconds for calendar ticks) and their labels.
    pub fn pairs(&self) -> Vec<(f64, &str)> {
        match self {
            ScaleTicks::Numeric { values, labels } => values
                .iter()
                .copied()
                .zip(labels.iter().map(String::as_str))
                .collect(),
            ScaleTicks::Calendar(ticks) => ticks
                .seconds
                .iter()
                .map(|seconds| *seconds as f64)
                .zip(ticks.labels.iter().map(String::as_str))
                .collect(),
        }
    }
}

/// A band scale: one band per category, in the order given, with padding between bands
/// (`inner`, a fraction of the step) and at both ends (`outer`, a fraction of the step).
#[derive(Clone, Debug, PartialEq)]
pub struct BandScale {
    pub categories: Vec<String>,
    pub range: (f64, f64),
    pub inner: f64,
    pub outer: f64,
}

/// Default padding between bands, as a fraction of the step (common practice, no source).
pub const DEFAULT_BAND_INNER_PADDING: f64 = 0.2;
/// Default padding at the ends, as a fraction of the step (common practice, no source).
pub const DEFAULT_BAND_OUTER_PADDING: f64 = 0.1;

impl BandScale {
    pub fn new(categories: Vec<String>, range: (f64, f64)) -> BandScale {
        BandScale {
            categories,
            range,
            inner: DEFAULT_BAND_INNER_PADDING,
            outer: DEFAULT_BAND_OUTER_PADDING,
        }
    }

    /// The distance from one band's start to the next one's (signed like the range).
    pub fn step(&self) -> f64 {
        let count = self.categories.len() as f64;
        let inner = self.inner.clamp(0.0, 1.0);
        let outer = self.outer.max(0.0);
        let slots = count - inner + 2.0 * outer;
        if slots <= 0.0 {
            0.0
        } else {
            (self.range.1 - self.range.0) / slots
        }
    }

    /// The width of a band (signed like the range).
    pub fn bandwidth(&self) -> f64 {
        self.step() * (1.0 - self.inner.clamp(0.0, 1.0))
    }

    /// The start of the band of a category by index.
    pub fn start_of_index(&self, index: usize) -> Option<f64> {
        (index < self.categories.len())
            .then(|| self.range.0 + self.step() * (self.outer.max(0.0) + index as f64))
    }

    /// The start of a category's band; `None` for a category the scale does not have.
    pub fn start(&self, category: &str) -> Option<f64> {
        let index = self.categories.iter().position(|known| known == category)?;
        self.start_of_index(index)
    }

    /// The centre of a category's band.
    pub fn centre(&self, category: &str) -> Option<f64> {
        Some(self.start(category)? + self.bandwidth() / 2.0)
    }

    /// The category whose band (with half the padding on each side) holds a pixel position.
    pub fn invert(&self, pixel: f64) -> Option<&str> {
        let step = self.step();
        if step == 0.0 || !pixel.is_finite() {
            return None;
        }
        let offset =
            (pixel - self.range.0) / step - self.outer.max(0.0) + self.inner.clamp(0.0, 1.0) / 2.0;
        if offset < 0.0 {
            return None;
        }
        self.categories
            .get(offset.floor() as usize)
            .map(String::as_str)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(actual: f64, expected: f64) -> bool {
        (actual - expected).abs() < 1e-9 * expected.abs().max(1.0)
    }

    #[test]
    fn even_scale_maps_and_inverts() {
        // A vertical axis: 0 at the bottom (400 px), 200 at the top (0 px).
        let scale = ContinuousScale::new(Transform::Even, (0.0, 200.0), (400.0, 0.0)).unwrap();
        assert_eq!(scale.map(0.0), Some(400.0));
        assert_eq!(scale.map(50.0), Some(300.0));
        assert_eq!(scale.map(250.0), Some(-100.0));
        assert_eq!(scale.invert(300.0), Some(50.0));
        assert_eq!(scale.map(f64::NAN), None);
    }

    #[test]
    fn log_scale_spaces_decades_evenly() {
        let scale =
            ContinuousScale::new(Transform::Logarithmic, (1.0, 1000.0), (0.0, 300.0)).unwrap();
        assert!(close(scale.map(10.0).unwrap(), 100.0));
        assert!(close(scale.map(100.0).unwrap(), 200.0));
        assert!(close(scale.invert(150.0).unwrap(), 10f64.powf(1.5)));
        assert_eq!(scale.map(0.0), None);
        assert_eq!(scale.map(-3.0), None);
        assert!(matches!(
            ContinuousScale::new(Transform::Logarithmic, (0.0, 10.0), (0.0, 1.0)),
            Err(ScaleError::NonPositiveLogDomain { .. })
        ));
    }

    #[test]
    fn square_root_scale_maps_areas() {
        let scale = ContinuousScale::new(Transform::SquareRoot, (0.0, 100.0), (0.0, 10.0)).unwrap();
        assert!(close(scale.map(25.0).unwrap(), 5.0));
        assert!(close(scale.invert(5.0).unwrap(), 25.0));
        assert!(close(scale.map(-25.0).unwrap(), -5.0));
    }

    #[test]
    fn nice_widens_to_ticks_and_keeps_direction() {
        let scale = ContinuousScale::new(Transform::Even, (3.2, 96.5), (0.0, 500.0))
            .unwrap()
            .nice(5);
        assert_eq!(scale.domain, (0.0, 100.0));
        let flipped = ContinuousScale::new(Transform::Even, (96.5, 3.2), (0.0, 500.0))
            .unwrap()
            .nice(5);
        assert_eq!(flipped.domain, (100.0, 0.0));
        let log = ContinuousScale::new(Transform::Logarithmic, (3.0, 4200.0), (0.0, 1.0))
            .unwrap()
            .nice(5);
        assert_eq!(log.domain, (1.0, 10_000.0));
    }

    #[test]
    fn ticks_stay_inside_the_domain() {
        let scale = ContinuousScale::new(Transform::Even, (3.2, 96.5), (0.0, 500.0)).unwrap();
        let ScaleTicks::Numeric { values, labels } = scale.ticks(5) else {
            panic!("numeric ticks expected")
        };
        assert!(
            values.iter().all(|value| (3.2..=96.5).contains(value)),
            "{values:?}"
        );
        assert_eq!(labels.len(), values.len());
        let log = ContinuousScale::new(Transform::Logarithmic, (1.0, 1e6), (0.0, 1.0)).unwrap();
        let ScaleTicks::Numeric { labels, .. } = log.ticks(5) else {
            panic!("numeric ticks expected")
        };
        assert_eq!(
            labels,
            vec!["1", "10", "100", "1000", "10000", "100000", "1000000"]
        );
        let narrow =
            ContinuousScale::new(Transform::Logarithmic, (1.0, 100.0), (0.0, 1.0)).unwrap();
        let ScaleTicks::Numeric { labels, .. } = narrow.ticks(5) else {
            panic!("numeric ticks expected")
        };
        assert_eq!(labels, vec!["1", "2", "5", "10", "20", "50", "100"]);
    }

    #[test]
    fn calendar_scale_ticks_by_the_calendar() {
        // 2024-01-01 to 2024-12-31 (Unix seconds).
        let scale = ContinuousScale::new(
            Transform::Calendar,
            (1_704_067_200.0, 1_735_603_200.0),
            (0.0, 640.0),
        )
        .unwrap();
        let ticks = scale.ticks(5);
        let pairs = ticks.pairs();
        assert_eq!(pairs.first().map(|pair| pair.1), Some("2024-01"));
        assert!(pairs.iter().all(|(seconds, _)| scale
            .map(*seconds)
            .is_some_and(|pixel| (0.0..=640.0).contains(&pixel))));
    }

    #[test]
    fn bands_split_the_range() {
        let names = ["pears", "plums", "quinces", "apples"]
            .map(String::from)
            .to_vec();
        let bands = BandScale {
            categories: names,
            range: (0.0, 420.0),
            inner: 0.2,
            outer: 0.1,
        };
        // 4 − 0.2 + 0.2 = 4 slots → step 105, band 84, first start 10.5.
        assert!(close(bands.step(), 105.0));
        assert!(close(bands.bandwidth(), 84.0));
        assert!(close(bands.start("pears").unwrap(), 10.5));
        assert!(close(bands.start("apples").unwrap(), 325.5));
        assert!(close(bands.centre("plums").unwrap(), 157.5));
        assert_eq!(bands.start("figs"), None);
        assert_eq!(bands.invert(157.5), Some("plums"));
        assert_eq!(bands.invert(410.0), Some("apples"));
        assert_eq!(bands.invert(-50.0), None);
        let empty = BandScale::new(Vec::new(), (0.0, 100.0));
        assert_eq!(empty.invert(10.0), None);
        assert_eq!(empty.start_of_index(0), None);
    }
}

#[cfg(test)]
mod properties {
    use super::*;
    use proptest::prelude::*;

    proptest! {
        #[test]
        fn map_then_invert_returns_the_value(
            low in 0.001f64..1e6, width in 0.001f64..1e6, t in 0.0f64..1.0, flip: bool,
            transform in prop_oneof![Just(Transform::Even), Just(Transform::Logarithmic), Just(Transform::SquareRoot)],
        ) {
            let high = low + width;
            let range = if flip { (480.0, 20.0) } else { (20.0, 480.0) };
            let scale = ContinuousScale::new(transform, (low, high), range).unwrap();
            let value = low + t * width;
            let pixel = scale.map(value).unwrap();
            prop_assert!((20.0 - 1e-6..=480.0 + 1e-6).contains(&pixel));
            let back = scale.invert(pixel).unwrap();
            prop_assert!((back - value).abs() <= 1e-7 * value.abs().max(1.0), "{value} -> {pixel} -> {back}");
            let nice = scale.nice(5);
            prop_assert!(nice.domain.0 <= low * (1.0 + 1e-12) && nice.domain.1 >= high * (1.0 - 1e-12));
        }
    }
}
