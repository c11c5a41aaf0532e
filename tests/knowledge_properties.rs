//! Property tests of the knowledge layer: mathematical properties the published definitions
//! imply (CIEDE2000 is symmetric and zero only for equal colours, Sharma et al. 2005; the WCAG
//! 2.1 contrast ratio lies in 1..=21 and is symmetric; the sRGB encoding inverts the decoding,
//! IEC 61966-2-1), and robustness (hex parsing never panics on arbitrary text).

use markwell::knowledge::colour::{
    ciede2000, ciede2000_between, parse_hex_colour, simulate_deficiency, srgb_decode, srgb_encode,
    wcag_contrast_ratio, ColourVisionDeficiency, Lab, Srgb8,
};
use markwell::knowledge::stevens::{apparent_ratio, truncated_baseline_lie_factor};
use proptest::prelude::*;

fn any_colour() -> impl Strategy<Value = Srgb8> {
    (any::<u8>(), any::<u8>(), any::<u8>()).prop_map(|(r, g, b)| Srgb8::new(r, g, b))
}

fn any_lab() -> impl Strategy<Value = Lab> {
    (0.0..100.0_f64, -128.0..128.0_f64, -128.0..128.0_f64).prop_map(|(lightness, a, b)| Lab {
        lightness,
        a,
        b,
    })
}

proptest! {
    #[test]
    fn hex_parsing_never_panics(text in "#?[0-9a-fA-Fg-z\u{e9} ]{0,8}|.{0,12}") {
        let _ = parse_hex_colour(&text);
    }

    #[test]
    fn hex_round_trips(colour in any_colour()) {
        prop_assert_eq!(parse_hex_colour(&colour.to_hex()), Ok(colour));
        prop_assert_eq!(parse_hex_colour(&colour.to_hex().to_lowercase()), Ok(colour));
    }

    #[test]
    fn eight_bit_colours_survive_decode_and_encode(colour in any_colour()) {
        prop_assert_eq!(colour.to_linear().to_srgb8_clipped(), colour);
    }

    #[test]
    fn transfer_function_inverts(value in -0.5..1.5_f64) {
        prop_assert!((srgb_decode(srgb_encode(value)) - value).abs() < 1e-12);
    }

    #[test]
    fn ciede2000_is_symmetric_and_non_negative(first in any_lab(), second in any_lab()) {
        let forward = ciede2000(first, second);
        let backward = ciede2000(second, first);
        prop_assert!(forward >= 0.0 && forward.is_finite());
        // symmetric up to rounding, except exactly on the 180° hue edge (see the pair-14 note)
        prop_assert!((forward - backward).abs() < 1e-9, "{} vs {}", forward, backward);
    }

    #[test]
    fn distinct_colours_have_a_positive_difference(first in any_colour(), second in any_colour()) {
        let difference = ciede2000_between(first, second);
        if first == second {
            prop_assert_eq!(difference, 0.0);
        } else {
            prop_assert!(difference > 0.0);
        }
    }

    #[test]
    fn contrast_ratio_is_between_1_and_21(first in any_colour(), second in any_colour()) {
        let ratio = wcag_contrast_ratio(first, second);
        prop_assert!((1.0..=21.0 + 1e-12).contains(&ratio));
        prop_assert_eq!(ratio, wcag_contrast_ratio(second, first));
    }

    #[test]
    fn simulation_keeps_greys(level in any::<u8>()) {
        // Machado et al. (2009) matrices' rows sum to 1 within 1e-6: greys map to themselves
        let grey = Srgb8::new(level, level, level);
        for deficiency in ColourVisionDeficiency::ALL {
            prop_assert_eq!(simulate_deficiency(grey, deficiency), grey);
        }
    }

    #[test]
    fn compressive_exponents_understate_ratios(ratio in 1.01..1000.0_f64) {
        // Stevens' power law with an exponent below 1 (area 0.7): a ratio looks smaller
        prop_assert!(apparent_ratio(0.7, ratio) < ratio);
        prop_assert!(apparent_ratio(1.7, ratio) > ratio);
    }

    #[test]
    fn raising_the_baseline_towards_the_data_exaggerates(
        first in 10.0..100.0_f64,
        extra in 1.0..100.0_f64,
        share in 0.01..0.99_f64,
    ) {
        // Tufte (1983): a bar chart from zero has lie factor 1; a baseline between zero and
        // the smaller value makes differences look larger
        let second = first + extra;
        let baseline = share * first;
        let factor = truncated_baseline_lie_factor(baseline, first, second);
        prop_assert!(factor.is_some_and(|factor| factor > 1.0));
    }
}
