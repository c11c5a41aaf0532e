//! The default palettes: categorical colours kept apart under normal vision and the three
//! simulated dichromacies (CIEDE2000, Sharma, Wu & Dalal 2005; Machado, Oliveira & Fernandes
//! 2009), with 3:1 contrast to the background (WCAG 2.1 SC 1.4.11); ramps monotonic in CIELAB
//! L* (CIE 15).

use markwell::draw::palette::{categorical, diverging_at, ramp, sequential_at, DEFAULT_BACKGROUND};
use markwell::knowledge::colour::{
    ciede2000, simulate_deficiency, wcag_contrast_ratio, ColourVisionDeficiency, Srgb8,
};

/// The smallest CIEDE2000 difference the default 12-colour palette keeps under every vision.
/// Our own floor, set a little under what the search reaches (see the palette benchmark's
/// printout), so that a change that makes the palette worse fails here.
const MIN_DIFFERENCE_12: f64 = 9.0;
/// The same for 8 colours.
const MIN_DIFFERENCE_8: f64 = 14.0;

fn worst_difference(colours: &[Srgb8]) -> f64 {
    let mut worst = f64::INFINITY;
    for (index, first) in colours.iter().enumerate() {
        for second in &colours[index + 1..] {
            worst = worst.min(ciede2000(first.to_lab(), second.to_lab()));
            for deficiency in ColourVisionDeficiency::ALL {
                let first = simulate_deficiency(*first, deficiency).to_lab();
                let second = simulate_deficiency(*second, deficiency).to_lab();
                worst = worst.min(ciede2000(first, second));
            }
        }
    }
    worst
}

#[test]
fn categorical_colours_stay_apart_under_every_vision() {
    for (count, floor) in [(8usize, MIN_DIFFERENCE_8), (12, MIN_DIFFERENCE_12)] {
        let palette = categorical(count, DEFAULT_BACKGROUND).unwrap();
        let hex: Vec<String> = palette
            .colours
            .iter()
            .map(|colour| colour.to_hex())
            .collect();
        println!(
            "N = {count}: {hex:?}, min by vision {:?}",
            palette.min_difference_by_vision
        );
        assert_eq!(palette.colours.len(), count);
        // Recomputed here from the colours, independently of what the search reports.
        let worst = worst_difference(&palette.colours);
        assert!(
            (worst - palette.min_difference()).abs() < 1e-6,
            "{worst} vs {}",
            palette.min_difference()
        );
        assert!(
            worst >= floor,
            "N = {count}: worst CIEDE2000 {worst:.2} under the floor {floor}"
        );
        let mut distinct = palette.colours.clone();
        distinct.sort_by_key(|colour| (colour.red, colour.green, colour.blue));
        distinct.dedup();
        assert_eq!(distinct.len(), count);
    }
}

#[test]
fn categorical_colours_have_non_text_contrast() {
    for count in 1..=20 {
        let palette = categorical(count, DEFAULT_BACKGROUND).unwrap();
        for colour in &palette.colours {
            // WCAG 2.1 SC 1.4.11: at least 3:1 against adjacent colours.
            assert!(
                wcag_contrast_ratio(*colour, DEFAULT_BACKGROUND) >= 3.0,
                "{colour}"
            );
        }
    }
}

#[test]
fn a_smaller_palette_is_never_less_spread() {
    let spreads: Vec<f64> = (2..=12)
        .map(|count| {
            categorical(count, DEFAULT_BACKGROUND)
                .unwrap()
                .min_difference()
        })
        .collect();
    for pair in spreads.windows(2) {
        assert!(pair[0] + 1e-9 >= pair[1], "{spreads:?}");
    }
}

#[test]
fn sequential_ramp_rises_in_lightness() {
    let colours = ramp(64, sequential_at);
    let lightness: Vec<f64> = colours
        .iter()
        .map(|colour| colour.to_lab().lightness)
        .collect();
    assert!(
        lightness.windows(2).all(|pair| pair[1] > pair[0]),
        "{lightness:?}"
    );
    // The ends are far apart: the dark end reads on the background and against the light end.
    let dark = colours[0];
    let light = colours[colours.len() - 1];
    assert!(wcag_contrast_ratio(dark, light) >= 7.0);
    assert!(wcag_contrast_ratio(dark, DEFAULT_BACKGROUND) >= 3.0);
    // Nine steps are each at least a just-noticeable CIEDE2000 difference apart.
    let steps = ramp(9, sequential_at);
    assert!(steps
        .windows(2)
        .all(|pair| ciede2000(pair[0].to_lab(), pair[1].to_lab()) > 5.0));
}

#[test]
fn diverging_ramp_is_light_in_the_middle_and_monotonic_on_each_side() {
    let colours = ramp(65, diverging_at);
    let lightness: Vec<f64> = colours
        .iter()
        .map(|colour| colour.to_lab().lightness)
        .collect();
    let middle = 32;
    assert!(
        lightness[..=middle]
            .windows(2)
            .all(|pair| pair[1] > pair[0]),
        "{lightness:?}"
    );
    assert!(
        lightness[middle..].windows(2).all(|pair| pair[1] < pair[0]),
        "{lightness:?}"
    );
    for end in [colours[0], colours[64]] {
        assert!(wcag_contrast_ratio(end, DEFAULT_BACKGROUND) >= 3.0, "{end}");
    }
    // The two arms differ in hue: the ends are far apart under every vision.
    assert!(worst_difference(&[colours[0], colours[64]]) > 15.0);
}

#[test]
fn the_default_palettes_are_pinned() {
    // the colours the search chose for N = 1..12 on the default background before its speed-up
    // (this project's own output, pinned so that faster code is held to the same answer)
    let expected: [(usize, &[&str]); 12] = [
        (1, &["#73008A"]),
        (2, &["#73008A", "#17A100"]),
        (3, &["#4500CF", "#00A18A", "#732E00"]),
        (4, &["#004573", "#732E00", "#45A173", "#B873E6"]),
        (5, &["#004573", "#00A18A", "#FD4500", "#B85CFD", "#732E2E"]),
        (
            6,
            &[
                "#005C5C", "#5C00CF", "#E65C00", "#A173FD", "#8A1700", "#00A18A",
            ],
        ),
        (
            7,
            &[
                "#732E73", "#0000FD", "#45735C", "#A173FD", "#454500", "#00A1A1", "#B88A00",
            ],
        ),
        (
            8,
            &[
                "#5C2E8A", "#732E45", "#0000FD", "#A173FD", "#A10017", "#5C8A5C", "#FD1700",
                "#B85C8A",
            ],
        ),
        (
            9,
            &[
                "#5C2E8A", "#0000FD", "#732E45", "#8A5C73", "#A10017", "#5C8A5C", "#FD1700",
                "#CF73A1", "#8A73FD",
            ],
        ),
        (
            10,
            &[
                "#5C2E8A", "#0000FD", "#732E45", "#CF7373", "#5C7317", "#454500", "#5CA100",
                "#177373", "#5C8AFD", "#A173A1",
            ],
        ),
        (
            11,
            &[
                "#5C2E73", "#732E45", "#B82E45", "#FD4573", "#454517", "#8A8AB8", "#B88A00",
                "#2EA18A", "#455CFD", "#8A5C8A", "#0000E6",
            ],
        ),
        (
            12,
            &[
                "#5C2E8A", "#B82E5C", "#CF7373", "#5C7300", "#8A8ACF", "#454500", "#5CA100",
                "#0000E6", "#A12EFD", "#A1738A", "#735C8A", "#005C45",
            ],
        ),
    ];
    for (count, colours) in expected {
        let palette =
            categorical(count, DEFAULT_BACKGROUND).unwrap_or_else(|error| panic!("{error}"));
        let hex: Vec<String> = palette
            .colours
            .iter()
            .map(|colour| colour.to_hex())
            .collect();
        assert_eq!(hex, colours, "N = {count}");
    }
}
