//! Colour science checked against published reference data copied into `tests/colour-data/`
//! (see `tests/colour-data/SOURCES.md` for sources, licences and how the tables were verified):
//! CIEDE2000 against Sharma, Wu & Dalal (2005) table 1, colour-vision-deficiency simulation
//! against the Machado, Oliveira & Fernandes (2009) matrices and check rows, WCAG 2.1 relative
//! luminance and contrast ratio against the W3C formulas' table.

use markwell::knowledge::colour::{
    ciede2000, parse_hex_colour, simulate_deficiency, simulate_deficiency_linear, srgb_decode,
    srgb_encode, wcag_contrast_ratio, wcag_relative_luminance, xyz_to_lab, ColourVisionDeficiency,
    Lab, Srgb8, CIE_15_D65_WHITE, SRGB_D65_WHITE,
};

const CIEDE2000_TABLE: &str = include_str!("colour-data/ciede2000-sharma-2005.tsv");
const MACHADO_MATRICES_TABLE: &str = include_str!("colour-data/cvd-machado-2009.tsv");
const MACHADO_CHECKS_TABLE: &str = include_str!("colour-data/cvd-machado-2009-checks.tsv");
const WCAG_TABLE: &str = include_str!("colour-data/wcag-contrast.tsv");

/// The data rows of a TSV table, after checking its header.
fn tsv_rows<'t>(text: &'t str, expected_header: &[&str]) -> Vec<Vec<&'t str>> {
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().unwrap_or_default().split('\t').collect();
    assert_eq!(header, expected_header, "unexpected header");
    lines
        .filter(|line| !line.is_empty())
        .map(|line| {
            let fields: Vec<&str> = line.split('\t').collect();
            assert_eq!(fields.len(), expected_header.len(), "ragged row {line:?}");
            fields
        })
        .collect()
}

fn number(field: &str) -> f64 {
    match field.parse::<f64>() {
        Ok(value) => value,
        Err(error) => panic!("{field:?} is not a number: {error}"),
    }
}

fn colour(field: &str) -> Srgb8 {
    match parse_hex_colour(field) {
        Ok(colour) => colour,
        Err(error) => panic!("{field:?} is not a colour: {error}"),
    }
}

fn deficiency_named(machado_name: &str) -> ColourVisionDeficiency {
    match ColourVisionDeficiency::ALL
        .into_iter()
        .find(|deficiency| deficiency.machado_name() == machado_name)
    {
        Some(deficiency) => deficiency,
        None => panic!("unknown deficiency {machado_name:?}"),
    }
}

// ---------------------------------------------------------------------------------------------
// CIEDE2000: Sharma, Wu & Dalal (2005), table 1, 34 pairs, ΔE00 printed with 4 decimals.

/// ΔE00 of pair 15 of the table (the value pair 14 jumps to on the other side of the edge).
const PAIR_15_DELTA_E: f64 = 4.7461;

#[test]
fn ciede2000_matches_all_34_published_pairs() {
    let rows = tsv_rows(
        CIEDE2000_TABLE,
        &["pair", "L1", "a1", "b1", "L2", "a2", "b2", "dE00"],
    );
    assert_eq!(rows.len(), 34, "Sharma et al. (2005) table 1 has 34 pairs");
    let mut failures = Vec::new();
    let mut largest_error: f64 = 0.0;
    for row in &rows {
        let pair = row[0];
        let first = Lab {
            lightness: number(row[1]),
            a: number(row[2]),
            b: number(row[3]),
        };
        let second = Lab {
            lightness: number(row[4]),
            a: number(row[5]),
            b: number(row[6]),
        };
        let published = number(row[7]);
        let computed = ciede2000(first, second);
        let computed_swapped = ciede2000(second, first);
        // Pair 14 sits exactly on |h1' - h2'| = 180°, where the mean-hue rule is discontinuous
        // (SOURCES.md, "pair 14 is numerically fragile"): with an atan2 that rounds the hue
        // difference to exactly 180 the formula gives the published 4.8045, with one that lands
        // at 180.000000000000028 it gives 4.7461 (pair 15's value). Both are the paper's
        // formula evaluated faithfully, so for pair 14 alone either value is accepted; any other
        // value, or a mismatch on another pair, is a failure.
        let acceptable = if pair == "14" {
            vec![published, PAIR_15_DELTA_E]
        } else {
            vec![published]
        };
        for (label, value) in [("forward", computed), ("swapped", computed_swapped)] {
            let error = acceptable
                .iter()
                .map(|target| (value - target).abs())
                .fold(f64::INFINITY, f64::min);
            largest_error = largest_error.max(error);
            if error > 1e-4 {
                failures.push(format!(
                    "pair {pair} ({label}): computed {value:.6}, published {published}"
                ));
            }
        }
    }
    assert!(
        failures.is_empty(),
        "CIEDE2000 mismatches:\n{}",
        failures.join("\n")
    );
    eprintln!("CIEDE2000: largest |computed - published| = {largest_error:.3e}");
    // the table is rounded to 4 decimals, so errors up to 5e-5 are expected
    assert!(
        largest_error <= 5.0e-5 + 1e-9,
        "largest error {largest_error}"
    );
}

#[test]
fn ciede2000_pair_14_lands_on_the_published_side_on_this_platform() {
    // Not a tolerance widening: record which side of the 180° edge this build's atan2 lands
    // on. Sharma et al. (2005) publish 4.8045 for pair 14; SOURCES.md reports that three
    // independent implementations (x86-64 Linux) got 4.804525.
    let first = Lab {
        lightness: 50.0,
        a: -0.0010,
        b: 2.4900,
    };
    let second = Lab {
        lightness: 50.0,
        a: 0.0010,
        b: -2.4900,
    };
    let computed = ciede2000(first, second);
    let on_published_side = (computed - 4.8045).abs() <= 1e-4;
    let on_other_side = (computed - PAIR_15_DELTA_E).abs() <= 1e-4;
    assert!(on_published_side || on_other_side, "computed {computed}");
    if cfg!(all(target_arch = "x86_64", target_os = "linux")) {
        assert!(on_published_side, "computed {computed}");
    }
}

#[test]
fn ciede2000_of_identical_colours_is_zero() {
    // ΔE00 is a distance: zero for identical colours (Sharma et al. 2005, equation 14 with all
    // differences zero).
    for hex in ["#000000", "#FFFFFF", "#4682B4", "#FA8072"] {
        let lab = colour(hex).to_lab();
        assert_eq!(ciede2000(lab, lab), 0.0, "{hex}");
    }
}

// ---------------------------------------------------------------------------------------------
// sRGB and CIELAB.

#[test]
fn srgb_transfer_function_round_trips_every_8_bit_value() {
    // IEC 61966-2-1: the encoding is the inverse of the decoding.
    for value in 0..=255_u8 {
        let encoded = f64::from(value) / 255.0;
        let round_trip = srgb_encode(srgb_decode(encoded));
        assert!((round_trip - encoded).abs() < 1e-12, "{value}");
    }
    // the two segments meet: 0.04045 / 12.92 = 0.0031308 (IEC 61966-2-1 breakpoints)
    assert!((srgb_decode(0.04045) - 0.0031308).abs() < 1e-7);
}

#[test]
fn white_black_and_grey_in_cielab() {
    // CIE 15: the reference white has L* = 100, a* = b* = 0; black has L* = 0.
    let white = colour("#FFFFFF").to_lab();
    assert!((white.lightness - 100.0).abs() < 1e-9);
    assert!(white.a.abs() < 1e-9 && white.b.abs() < 1e-9);
    let black = colour("#000000").to_lab();
    assert!(black.lightness.abs() < 1e-12 && black.a.abs() < 1e-12 && black.b.abs() < 1e-12);
    // Y = 0.18 (middle grey) has L* = 116 · 0.18^(1/3) − 16 = 49.496 (CIE 15 formula; worked
    // here by hand).
    let middle_grey = xyz_to_lab(
        markwell::knowledge::colour::Xyz {
            x: 0.18 * SRGB_D65_WHITE.x,
            y: 0.18,
            z: 0.18 * SRGB_D65_WHITE.z,
        },
        SRGB_D65_WHITE,
    );
    assert!((middle_grey.lightness - 49.496).abs() < 1e-3);
    // the matrix white and CIE 15's tabulated D65 differ by less than 2e-4
    assert!((SRGB_D65_WHITE.x - CIE_15_D65_WHITE.x).abs() < 2e-4);
    assert!((SRGB_D65_WHITE.z - CIE_15_D65_WHITE.z).abs() < 2e-4);
}

#[test]
fn primaries_in_cielab_are_close_to_commonly_quoted_values() {
    // Commonly quoted CIELAB (D65) of the sRGB primaries, from memory: red (53.24, 80.09,
    // 67.20), green (87.73, -86.18, 83.18), blue (32.30, 79.19, -107.86). Tolerance 0.1
    // because the quoted values use slightly different matrix precisions.
    let expectations = [
        ("#FF0000", 53.24, 80.09, 67.20),
        ("#00FF00", 87.73, -86.18, 83.18),
        ("#0000FF", 32.30, 79.19, -107.86),
    ];
    for (hex, lightness, a, b) in expectations {
        let lab = colour(hex).to_lab();
        assert!((lab.lightness - lightness).abs() < 0.1, "{hex} L* {lab:?}");
        assert!((lab.a - a).abs() < 0.1, "{hex} a* {lab:?}");
        assert!((lab.b - b).abs() < 0.1, "{hex} b* {lab:?}");
    }
}

// ---------------------------------------------------------------------------------------------
// Machado, Oliveira & Fernandes (2009).

#[test]
fn severity_one_matrices_equal_the_published_table() {
    let rows = tsv_rows(
        MACHADO_MATRICES_TABLE,
        &[
            "deficiency",
            "severity",
            "m00",
            "m01",
            "m02",
            "m10",
            "m11",
            "m12",
            "m20",
            "m21",
            "m22",
        ],
    );
    assert_eq!(rows.len(), 33, "3 deficiencies x 11 severities");
    let mut severity_one_rows = 0;
    for row in &rows {
        let values: Vec<f64> = row[2..].iter().map(|field| number(field)).collect();
        // every published matrix maps greys to themselves: rows sum to 1 within 1e-6
        for matrix_row in values.chunks(3) {
            let sum: f64 = matrix_row.iter().sum();
            assert!((sum - 1.0).abs() <= 1e-6 + 1e-12, "{row:?}");
        }
        // severity 0.0 is normal vision: the identity matrix (SOURCES.md section 3)
        if row[1] == "0.0" {
            assert_eq!(
                values,
                [1.0, 0.0, 0.0, 0.0, 1.0, 0.0, 0.0, 0.0, 1.0],
                "{}",
                row[0]
            );
        }
        if row[1] != "1.0" {
            continue;
        }
        severity_one_rows += 1;
        let deficiency = deficiency_named(row[0]);
        let ours = deficiency.machado_matrix();
        for (index, published) in values.iter().enumerate() {
            let (row_index, column_index) = (index / 3, index % 3);
            assert_eq!(
                ours[row_index][column_index], *published,
                "{} m{row_index}{column_index}",
                row[0]
            );
        }
    }
    assert_eq!(severity_one_rows, 3);
}

#[test]
fn simulation_matches_the_60_check_rows() {
    let rows = tsv_rows(
        MACHADO_CHECKS_TABLE,
        &[
            "hex",
            "deficiency",
            "severity",
            "lin_r",
            "lin_g",
            "lin_b",
            "srgb_r",
            "srgb_g",
            "srgb_b",
            "hex_out",
        ],
    );
    assert_eq!(rows.len(), 60, "20 colours x 3 deficiencies");
    let mut failures = Vec::new();
    for row in &rows {
        assert_eq!(row[2], "1.0");
        let input = colour(row[0]);
        let deficiency = deficiency_named(row[1]);
        let linear = simulate_deficiency_linear(input.to_linear(), deficiency);
        let encoded = linear.to_encoded();
        let computed = [
            linear.red,
            linear.green,
            linear.blue,
            encoded.red,
            encoded.green,
            encoded.blue,
        ];
        for (offset, value) in computed.iter().enumerate() {
            let expected = number(row[3 + offset]);
            // the table has 6 decimals: 1e-5 covers its rounding
            if (value - expected).abs() > 1e-5 {
                failures.push(format!(
                    "{} {} column {}: {value} vs {expected}",
                    row[0],
                    row[1],
                    3 + offset
                ));
            }
        }
        let hex_out = simulate_deficiency(input, deficiency).to_hex();
        if hex_out != row[9] {
            failures.push(format!("{} {}: {hex_out} vs {}", row[0], row[1], row[9]));
        }
    }
    assert!(
        failures.is_empty(),
        "CVD mismatches:\n{}",
        failures.join("\n")
    );
}

// ---------------------------------------------------------------------------------------------
// WCAG 2.1 relative luminance and contrast ratio.

#[test]
fn wcag_luminance_and_contrast_match_the_15_pairs() {
    let rows = tsv_rows(
        WCAG_TABLE,
        &[
            "color1",
            "color2",
            "luminance1",
            "luminance2",
            "contrast_ratio",
        ],
    );
    assert_eq!(rows.len(), 15);
    for row in &rows {
        let first = colour(row[0]);
        let second = colour(row[1]);
        let luminance_first = wcag_relative_luminance(first);
        let luminance_second = wcag_relative_luminance(second);
        let ratio = wcag_contrast_ratio(first, second);
        assert!(
            (luminance_first - number(row[2])).abs() <= 1e-6,
            "{row:?}: {luminance_first}"
        );
        assert!(
            (luminance_second - number(row[3])).abs() <= 1e-6,
            "{row:?}: {luminance_second}"
        );
        assert!((ratio - number(row[4])).abs() <= 1e-6, "{row:?}: {ratio}");
        assert_eq!(ratio, wcag_contrast_ratio(second, first), "symmetric");
    }
}

#[test]
fn wcag_threshold_neighbours() {
    // From the table (SOURCES.md section 4): #767676 on white passes 4.5:1, #777777 fails.
    let white = colour("#FFFFFF");
    assert!(wcag_contrast_ratio(colour("#767676"), white) >= 4.5);
    assert!(wcag_contrast_ratio(colour("#777777"), white) < 4.5);
    // WCAG 2.1: black on white is 21:1, the maximum.
    assert!((wcag_contrast_ratio(colour("#000000"), white) - 21.0).abs() < 1e-12);
}
