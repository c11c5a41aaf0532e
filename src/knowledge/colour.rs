//! Colour science for the palette and contrast checks: hex parsing, the sRGB transfer function
//! (IEC 61966-2-1), linear sRGB → CIE XYZ (D65) → CIELAB (CIE 15), the CIEDE2000 colour
//! difference (Sharma, Wu & Dalal 2005), colour-vision-deficiency simulation with the Machado,
//! Oliveira & Fernandes (2009) matrices, and WCAG 2.1 relative luminance and contrast ratio.
//!
//! Values of type [`EncodedRgb`] and [`LinearRgb`] are not clipped: a simulated colour can fall
//! outside the sRGB gamut, and the functions apply the formulas as written (the transfer
//! function's linear segment also covers negative values). Only [`EncodedRgb::to_srgb8_clipped`]
//! clips, when going back to 8-bit values.

use std::fmt;

use crate::knowledge::citations;
use crate::knowledge::Citation;

/// A colour as 8-bit sRGB channel values, as written in `#rrggbb`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub struct Srgb8 {
    pub red: u8,
    pub green: u8,
    pub blue: u8,
}

/// sRGB-encoded (gamma-compressed) channel values, nominally in 0..=1.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct EncodedRgb {
    pub red: f64,
    pub green: f64,
    pub blue: f64,
}

/// Linear-light sRGB channel values, nominally in 0..=1.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LinearRgb {
    pub red: f64,
    pub green: f64,
    pub blue: f64,
}

/// CIE 1931 XYZ tristimulus values, scaled so that Y of the reference white is 1.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Xyz {
    pub x: f64,
    pub y: f64,
    pub z: f64,
}

/// CIE 1976 L*a*b* (CIELAB) coordinates: `lightness` in 0..=100, `a` green–red, `b` blue–yellow.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Lab {
    pub lightness: f64,
    pub a: f64,
    pub b: f64,
}

/// Why a text is not a `#rgb` or `#rrggbb` colour.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum HexColourError {
    /// The text does not start with `#`.
    MissingHash,
    /// The number of characters after `#` is neither 3 nor 6.
    WrongLength { digits: usize },
    /// The character at this byte offset (from the start of the text) is not a hex digit.
    NotHexDigit { offset: usize },
}

impl fmt::Display for HexColourError {
    fn fmt(&self, formatter: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            HexColourError::MissingHash => write!(formatter, "a colour starts with `#`"),
            HexColourError::WrongLength { digits } => write!(
                formatter,
                "a colour has 3 or 6 hex digits after `#`, this one has {digits}"
            ),
            HexColourError::NotHexDigit { offset } => {
                write!(formatter, "character at offset {offset} is not a hex digit")
            }
        }
    }
}

impl std::error::Error for HexColourError {}

/// Parse `#rgb` or `#rrggbb` (digits in either case). `#rgb` doubles each digit (`#f80` is
/// `#ff8800`). No surrounding space, no alpha.
pub fn parse_hex_colour(text: &str) -> Result<Srgb8, HexColourError> {
    let Some(digits) = text.strip_prefix('#') else {
        return Err(HexColourError::MissingHash);
    };
    let mut values = Vec::with_capacity(6);
    for (index, character) in digits.char_indices() {
        match character.to_digit(16) {
            Some(value) => values.push(value as u8),
            None => return Err(HexColourError::NotHexDigit { offset: index + 1 }),
        }
    }
    match values.as_slice() {
        [r, g, b] => Ok(Srgb8 {
            red: r * 17,
            green: g * 17,
            blue: b * 17,
        }),
        [r1, r2, g1, g2, b1, b2] => Ok(Srgb8 {
            red: r1 * 16 + r2,
            green: g1 * 16 + g2,
            blue: b1 * 16 + b2,
        }),
        _ => Err(HexColourError::WrongLength {
            digits: digits.chars().count(),
        }),
    }
}

impl Srgb8 {
    pub const fn new(red: u8, green: u8, blue: u8) -> Srgb8 {
        Srgb8 { red, green, blue }
    }

    /// `#RRGGBB`, uppercase.
    pub fn to_hex(self) -> String {
        format!("#{:02X}{:02X}{:02X}", self.red, self.green, self.blue)
    }

    /// Channel values divided by 255.
    pub fn to_encoded(self) -> EncodedRgb {
        EncodedRgb {
            red: f64::from(self.red) / 255.0,
            green: f64::from(self.green) / 255.0,
            blue: f64::from(self.blue) / 255.0,
        }
    }

    pub fn to_linear(self) -> LinearRgb {
        self.to_encoded().to_linear()
    }

    /// CIELAB under D65 (see [`LinearRgb::to_lab`]).
    pub fn to_lab(self) -> Lab {
        self.to_linear().to_lab()
    }
}

impl fmt::Display for Srgb8 {
    fn fmt(&self, formatter: &mut fmt::Formatter<'_>) -> fmt::Result {
        formatter.write_str(&self.to_hex())
    }
}

/// The source of the sRGB transfer function and matrix.
pub const SRGB_SOURCE: Citation = citations::IEC_61966_2_1;

/// sRGB decoding (IEC 61966-2-1): encoded value → linear light.
/// `V ≤ 0.04045 → V / 12.92`, else `((V + 0.055) / 1.055)^2.4`.
pub fn srgb_decode(encoded: f64) -> f64 {
    if encoded <= 0.04045 {
        encoded / 12.92
    } else {
        ((encoded + 0.055) / 1.055).powf(2.4)
    }
}

/// sRGB encoding (IEC 61966-2-1): linear light → encoded value.
/// `L ≤ 0.0031308 → 12.92 · L` (negative values included), else `1.055 · L^(1/2.4) − 0.055`.
pub fn srgb_encode(linear: f64) -> f64 {
    if linear <= 0.0031308 {
        12.92 * linear
    } else {
        1.055 * linear.powf(1.0 / 2.4) - 0.055
    }
}

impl EncodedRgb {
    pub fn to_linear(self) -> LinearRgb {
        LinearRgb {
            red: srgb_decode(self.red),
            green: srgb_decode(self.green),
            blue: srgb_decode(self.blue),
        }
    }

    /// Clip each channel to 0..=1, scale to 255 and round half up.
    pub fn to_srgb8_clipped(self) -> Srgb8 {
        fn to_byte(value: f64) -> u8 {
            let clipped = if value.is_nan() {
                0.0
            } else {
                value.clamp(0.0, 1.0)
            };
            // 0 ≤ clipped · 255 + 0.5 < 256, so the cast cannot truncate a valid byte
            (clipped * 255.0 + 0.5).floor() as u8
        }
        Srgb8 {
            red: to_byte(self.red),
            green: to_byte(self.green),
            blue: to_byte(self.blue),
        }
    }
}

/// Linear sRGB → XYZ under D65, the matrix of IEC 61966-2-1 (rows give X, Y, Z).
pub const LINEAR_SRGB_TO_XYZ: [[f64; 3]; 3] = [
    [0.4124, 0.3576, 0.1805],
    [0.2126, 0.7152, 0.0722],
    [0.0193, 0.1192, 0.9505],
];

/// The D65 white of the sRGB matrix: [`LINEAR_SRGB_TO_XYZ`] applied to (1, 1, 1), i.e. its row
/// sums, so that `#FFFFFF` maps to L* = 100, a* = b* = 0 exactly. CIE 15 tabulates D65 (2°) as
/// (0.95047, 1, 1.08883) ([`CIE_15_D65_WHITE`]); the two differ by less than 2e-4.
pub const SRGB_D65_WHITE: Xyz = Xyz {
    x: 0.9505,
    y: 1.0,
    z: 1.089,
};

/// D65 (CIE 1931 2° observer) as tabulated in CIE 15, scaled to Y = 1.
pub const CIE_15_D65_WHITE: Xyz = Xyz {
    x: 0.95047,
    y: 1.0,
    z: 1.08883,
};

fn multiply(matrix: &[[f64; 3]; 3], vector: [f64; 3]) -> [f64; 3] {
    let row = |index: usize| {
        matrix[index][0] * vector[0] + matrix[index][1] * vector[1] + matrix[index][2] * vector[2]
    };
    [row(0), row(1), row(2)]
}

impl LinearRgb {
    fn as_array(self) -> [f64; 3] {
        [self.red, self.green, self.blue]
    }

    fn from_array(values: [f64; 3]) -> LinearRgb {
        LinearRgb {
            red: values[0],
            green: values[1],
            blue: values[2],
        }
    }

    pub fn to_encoded(self) -> EncodedRgb {
        EncodedRgb {
            red: srgb_encode(self.red),
            green: srgb_encode(self.green),
            blue: srgb_encode(self.blue),
        }
    }

    /// Encode and clip to 8 bits (see [`EncodedRgb::to_srgb8_clipped`]).
    pub fn to_srgb8_clipped(self) -> Srgb8 {
        self.to_encoded().to_srgb8_clipped()
    }

    pub fn to_xyz(self) -> Xyz {
        let [x, y, z] = multiply(&LINEAR_SRGB_TO_XYZ, self.as_array());
        Xyz { x, y, z }
    }

    /// CIELAB relative to [`SRGB_D65_WHITE`].
    pub fn to_lab(self) -> Lab {
        xyz_to_lab(self.to_xyz(), SRGB_D65_WHITE)
    }
}

/// The source of the CIELAB formulas.
pub const CIELAB_SOURCE: Citation = citations::CIE_15;

/// XYZ → CIELAB relative to `white` (CIE 15): with `f(t) = t^(1/3)` for `t > (6/29)^3`, else
/// `t · (29/6)^2 / 3 + 4/29`: `L* = 116 f(Y/Yn) − 16`, `a* = 500 (f(X/Xn) − f(Y/Yn))`,
/// `b* = 200 (f(Y/Yn) − f(Z/Zn))`.
pub fn xyz_to_lab(colour: Xyz, white: Xyz) -> Lab {
    const DELTA: f64 = 6.0 / 29.0;
    fn f(t: f64) -> f64 {
        if t > DELTA * DELTA * DELTA {
            t.cbrt()
        } else {
            t / (3.0 * DELTA * DELTA) + 4.0 / 29.0
        }
    }
    let fx = f(colour.x / white.x);
    let fy = f(colour.y / white.y);
    let fz = f(colour.z / white.z);
    Lab {
        lightness: 116.0 * fy - 16.0,
        a: 500.0 * (fx - fy),
        b: 200.0 * (fy - fz),
    }
}

/// The source of the CIEDE2000 implementation and its test data.
pub const CIEDE2000_SOURCE: Citation = citations::SHARMA_WU_DALAL_2005;

/// Parametric weights of CIEDE2000 (all 1 under reference conditions).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Ciede2000Weights {
    pub lightness: f64,
    pub chroma: f64,
    pub hue: f64,
}

impl Ciede2000Weights {
    pub const REFERENCE: Ciede2000Weights = Ciede2000Weights {
        lightness: 1.0,
        chroma: 1.0,
        hue: 1.0,
    };
}

/// CIEDE2000 colour difference ΔE00 with kL = kC = kH = 1.
pub fn ciede2000(first: Lab, second: Lab) -> f64 {
    ciede2000_with_weights(first, second, Ciede2000Weights::REFERENCE)
}

/// CIEDE2000 colour difference ΔE00, following the equations of Sharma, Wu & Dalal (2005)
/// step by step (hue angles in degrees, in 0..360).
///
/// Near |h1′ − h2′| = 180° the mean-hue rule is discontinuous (the paper's pairs 13 to 15); the
/// result there depends on the last bit of `atan2`, as the paper's own test data shows.
pub fn ciede2000_with_weights(first: Lab, second: Lab, weights: Ciede2000Weights) -> f64 {
    const TWENTY_FIVE_TO_THE_SEVENTH: f64 = 6_103_515_625.0;
    let chroma_first = first.a.hypot(first.b);
    let chroma_second = second.a.hypot(second.b);
    let mean_chroma = (chroma_first + chroma_second) / 2.0;
    let mean_chroma_7 = mean_chroma.powi(7);
    let g = 0.5 * (1.0 - (mean_chroma_7 / (mean_chroma_7 + TWENTY_FIVE_TO_THE_SEVENTH)).sqrt());
    let a_prime_first = (1.0 + g) * first.a;
    let a_prime_second = (1.0 + g) * second.a;
    let c_prime_first = a_prime_first.hypot(first.b);
    let c_prime_second = a_prime_second.hypot(second.b);
    let hue_angle = |b: f64, a_prime: f64| {
        if b == 0.0 && a_prime == 0.0 {
            0.0
        } else {
            let degrees = b.atan2(a_prime).to_degrees();
            if degrees < 0.0 {
                degrees + 360.0
            } else {
                degrees
            }
        }
    };
    let h_prime_first = hue_angle(first.b, a_prime_first);
    let h_prime_second = hue_angle(second.b, a_prime_second);

    let delta_l_prime = second.lightness - first.lightness;
    let delta_c_prime = c_prime_second - c_prime_first;
    let chroma_product = c_prime_first * c_prime_second;
    let hue_difference = h_prime_second - h_prime_first;
    let delta_h_prime_degrees = if chroma_product == 0.0 {
        0.0
    } else if hue_difference.abs() <= 180.0 {
        hue_difference
    } else if hue_difference > 180.0 {
        hue_difference - 360.0
    } else {
        hue_difference + 360.0
    };
    let delta_big_h_prime =
        2.0 * chroma_product.sqrt() * (delta_h_prime_degrees.to_radians() / 2.0).sin();

    let mean_l_prime = (first.lightness + second.lightness) / 2.0;
    let mean_c_prime = (c_prime_first + c_prime_second) / 2.0;
    let hue_sum = h_prime_first + h_prime_second;
    let mean_h_prime = if chroma_product == 0.0 {
        hue_sum
    } else if hue_difference.abs() <= 180.0 {
        hue_sum / 2.0
    } else if hue_sum < 360.0 {
        (hue_sum + 360.0) / 2.0
    } else {
        (hue_sum - 360.0) / 2.0
    };

    let cos_degrees = |degrees: f64| degrees.to_radians().cos();
    let t = 1.0 - 0.17 * cos_degrees(mean_h_prime - 30.0)
        + 0.24 * cos_degrees(2.0 * mean_h_prime)
        + 0.32 * cos_degrees(3.0 * mean_h_prime + 6.0)
        - 0.20 * cos_degrees(4.0 * mean_h_prime - 63.0);
    let delta_theta = 30.0 * (-((mean_h_prime - 275.0) / 25.0).powi(2)).exp();
    let mean_c_prime_7 = mean_c_prime.powi(7);
    let r_c = 2.0 * (mean_c_prime_7 / (mean_c_prime_7 + TWENTY_FIVE_TO_THE_SEVENTH)).sqrt();
    let lightness_offset_squared = (mean_l_prime - 50.0).powi(2);
    let s_l = 1.0 + 0.015 * lightness_offset_squared / (20.0 + lightness_offset_squared).sqrt();
    let s_c = 1.0 + 0.045 * mean_c_prime;
    let s_h = 1.0 + 0.015 * mean_c_prime * t;
    let r_t = -(2.0 * delta_theta).to_radians().sin() * r_c;

    let lightness_term = delta_l_prime / (weights.lightness * s_l);
    let chroma_term = delta_c_prime / (weights.chroma * s_c);
    let hue_term = delta_big_h_prime / (weights.hue * s_h);
    (lightness_term * lightness_term
        + chroma_term * chroma_term
        + hue_term * hue_term
        + r_t * chroma_term * hue_term)
        .sqrt()
}

/// CIEDE2000 (reference weights) between two 8-bit colours, through CIELAB under D65.
pub fn ciede2000_between(first: Srgb8, second: Srgb8) -> f64 {
    ciede2000(first.to_lab(), second.to_lab())
}

/// The three dichromacies simulated with the severity-1.0 matrices.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum ColourVisionDeficiency {
    /// No working L cones (red-weak). Machado's protanomaly at severity 1.0.
    Protanopia,
    /// No working M cones (green-weak). Machado's deuteranomaly at severity 1.0.
    Deuteranopia,
    /// No working S cones (blue-weak). Machado's tritanomaly at severity 1.0, which only
    /// approximates tritanopia (the model's shift paradigm does not reach full tritanopia).
    Tritanopia,
}

impl ColourVisionDeficiency {
    pub const ALL: [ColourVisionDeficiency; 3] = [
        ColourVisionDeficiency::Protanopia,
        ColourVisionDeficiency::Deuteranopia,
        ColourVisionDeficiency::Tritanopia,
    ];

    pub fn as_str(self) -> &'static str {
        match self {
            ColourVisionDeficiency::Protanopia => "protanopia",
            ColourVisionDeficiency::Deuteranopia => "deuteranopia",
            ColourVisionDeficiency::Tritanopia => "tritanopia",
        }
    }

    /// The name of the anomaly in Machado et al.'s tables (`protanomaly`, ...).
    pub fn machado_name(self) -> &'static str {
        match self {
            ColourVisionDeficiency::Protanopia => "protanomaly",
            ColourVisionDeficiency::Deuteranopia => "deuteranomaly",
            ColourVisionDeficiency::Tritanopia => "tritanomaly",
        }
    }

    /// The severity-1.0 simulation matrix (acts on linear RGB column vectors).
    pub fn machado_matrix(self) -> &'static [[f64; 3]; 3] {
        match self {
            ColourVisionDeficiency::Protanopia => &MACHADO_2009_PROTANOMALY_SEVERITY_1,
            ColourVisionDeficiency::Deuteranopia => &MACHADO_2009_DEUTERANOMALY_SEVERITY_1,
            ColourVisionDeficiency::Tritanopia => &MACHADO_2009_TRITANOMALY_SEVERITY_1,
        }
    }
}

/// The source of the simulation matrices.
pub const CVD_SOURCE: Citation = citations::MACHADO_OLIVEIRA_FERNANDES_2009;

// The three matrices below are the severity-1.0 rows of the authors' published pre-computed
// matrices (Machado, Oliveira & Fernandes 2009), copied from tests/colour-data/cvd-machado-2009.tsv
// (see tests/colour-data/SOURCES.md; read from colour-science 0.4.7, BSD-3-Clause, and checked
// against colorspacious 1.1.2). Row-major; `simulated = M · linear_rgb`. A test checks them
// against the TSV.

/// Protanomaly, severity 1.0 (protanopia).
pub const MACHADO_2009_PROTANOMALY_SEVERITY_1: [[f64; 3]; 3] = [
    [0.152286, 1.052583, -0.204868],
    [0.114503, 0.786281, 0.099216],
    [-0.003882, -0.048116, 1.051998],
];

/// Deuteranomaly, severity 1.0 (deuteranopia).
pub const MACHADO_2009_DEUTERANOMALY_SEVERITY_1: [[f64; 3]; 3] = [
    [0.367322, 0.860646, -0.227968],
    [0.280085, 0.672501, 0.047413],
    [-0.011820, 0.042940, 0.968881],
];

/// Tritanomaly, severity 1.0 (approximates tritanopia).
pub const MACHADO_2009_TRITANOMALY_SEVERITY_1: [[f64; 3]; 3] = [
    [1.255528, -0.076749, -0.178779],
    [-0.078411, 0.930809, 0.147602],
    [0.004733, 0.691367, 0.303900],
];

/// Simulate how a linear-RGB colour looks with a colour-vision deficiency (Machado et al. 2009,
/// severity 1.0, applied in linear RGB). Not clipped.
pub fn simulate_deficiency_linear(
    colour: LinearRgb,
    deficiency: ColourVisionDeficiency,
) -> LinearRgb {
    LinearRgb::from_array(multiply(deficiency.machado_matrix(), colour.as_array()))
}

/// Simulate an 8-bit colour: decode, apply the matrix in linear RGB, encode, clip to 8 bits.
pub fn simulate_deficiency(colour: Srgb8, deficiency: ColourVisionDeficiency) -> Srgb8 {
    simulate_deficiency_linear(colour.to_linear(), deficiency).to_srgb8_clipped()
}

/// The source of the contrast formulas and thresholds.
pub const WCAG_SOURCE: Citation = citations::WCAG_2_1;

/// WCAG 2.1 SC 1.4.11 (non-text contrast): graphical objects need at least 3:1 against
/// adjacent colours.
pub const WCAG_NON_TEXT_MINIMUM_CONTRAST: f64 = 3.0;
/// WCAG 2.1 SC 1.4.3 (contrast, minimum; level AA) for normal text.
pub const WCAG_TEXT_MINIMUM_CONTRAST_AA: f64 = 4.5;
/// WCAG 2.1 SC 1.4.6 (contrast, enhanced; level AAA) for normal text.
pub const WCAG_TEXT_MINIMUM_CONTRAST_AAA: f64 = 7.0;

/// WCAG 2.1 relative luminance: `0.2126 R + 0.7152 G + 0.0722 B` with each channel
/// `c = s / 12.92` if `s ≤ 0.03928`, else `((s + 0.055) / 1.055)^2.4`, `s` = 8-bit value / 255.
/// (The W3C threshold 0.03928 and the sRGB standard's 0.04045 agree on every 8-bit value.)
pub fn wcag_relative_luminance(colour: Srgb8) -> f64 {
    fn channel(value: u8) -> f64 {
        let s = f64::from(value) / 255.0;
        if s <= 0.03928 {
            s / 12.92
        } else {
            ((s + 0.055) / 1.055).powf(2.4)
        }
    }
    0.2126 * channel(colour.red) + 0.7152 * channel(colour.green) + 0.0722 * channel(colour.blue)
}

/// WCAG 2.1 contrast ratio `(L_lighter + 0.05) / (L_darker + 0.05)`, from 1 to 21, symmetric.
pub fn wcag_contrast_ratio(first: Srgb8, second: Srgb8) -> f64 {
    let first_luminance = wcag_relative_luminance(first);
    let second_luminance = wcag_relative_luminance(second);
    let lighter = first_luminance.max(second_luminance);
    let darker = first_luminance.min(second_luminance);
    (lighter + 0.05) / (darker + 0.05)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn short_and_long_hex_forms_agree() {
        assert_eq!(parse_hex_colour("#f80"), parse_hex_colour("#FF8800"));
        assert_eq!(
            parse_hex_colour("#4682b4").map(Srgb8::to_hex),
            Ok("#4682B4".into())
        );
    }

    #[test]
    fn bad_hex_is_an_error_not_a_panic() {
        assert_eq!(parse_hex_colour("ff8800"), Err(HexColourError::MissingHash));
        assert_eq!(
            parse_hex_colour("#"),
            Err(HexColourError::WrongLength { digits: 0 })
        );
        assert_eq!(
            parse_hex_colour("#ff88"),
            Err(HexColourError::WrongLength { digits: 4 })
        );
        assert_eq!(
            parse_hex_colour("#ff88zz"),
            Err(HexColourError::NotHexDigit { offset: 5 })
        );
        // multi-byte characters are reported at their byte offset
        assert_eq!(
            parse_hex_colour("#ffé"),
            Err(HexColourError::NotHexDigit { offset: 3 })
        );
        assert!(parse_hex_colour("").is_err());
    }

    #[test]
    fn clipping_handles_out_of_gamut_and_nan() {
        let wild = EncodedRgb {
            red: -0.3,
            green: 1.7,
            blue: f64::NAN,
        };
        assert_eq!(wild.to_srgb8_clipped(), Srgb8::new(0, 255, 0));
    }
}
