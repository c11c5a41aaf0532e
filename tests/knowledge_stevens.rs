//! Stevens' exponents, Flannery's compensation and Tufte's lie factor, with worked numbers.
//! Exponents and the Tufte example are from memory of the publications (marked beside each).

use markwell::knowledge::perceived::PerceivedChannel as P;
use markwell::knowledge::stevens::{
    apparent_ratio, exponent_for, flannery_compensated_radius, lie_factor, relative_effect,
    truncated_baseline_lie_factor, FLANNERY_PERCEIVED_CIRCLE_AREA_EXPONENT,
    FLANNERY_RADIUS_EXPONENT, STEVENS_EXPONENTS,
};

fn close(actual: f64, expected: f64, tolerance: f64) -> bool {
    (actual - expected).abs() <= tolerance
}

#[test]
fn stevens_exponents_for_the_chart_channels() {
    // Stevens (1957, 1975), from memory: visual length 1.0, visual area 0.7, brightness 0.33
    // (5° target in the dark), redness (saturation) 1.7.
    let exponent = |channel: P| match exponent_for(channel) {
        Some(row) => row.exponent,
        None => panic!("no exponent for {channel:?}"),
    };
    assert_eq!(exponent(P::Length), 1.0);
    assert_eq!(exponent(P::Area), 0.7);
    assert_eq!(exponent(P::Luminance), 0.33);
    assert_eq!(exponent(P::Saturation), 1.7);
    // the rule catalogue's summary: area below 1, saturation above 1, brightness 0.33 to 0.5
    let brightness: Vec<f64> = STEVENS_EXPONENTS
        .iter()
        .filter(|row| row.continuum == "brightness")
        .map(|row| row.exponent)
        .collect();
    assert_eq!(brightness, vec![0.33, 0.5]);
    assert!(
        exponent(P::Volume) < exponent(P::Area),
        "volume is compressed more than area"
    );
    assert!(
        exponent_for(P::Hue).is_none(),
        "hue has no magnitude continuum"
    );
}

#[test]
fn apparent_ratio_worked_numbers() {
    // Stevens' power law: a ratio R looks like R^a. Worked by hand: 2^0.7 = 1.6245,
    // 10^0.7 = 5.0119 (an area ten times larger looks about five times larger).
    assert!(close(apparent_ratio(0.7, 2.0), 1.624_504_8, 1e-6));
    assert!(close(apparent_ratio(0.7, 10.0), 5.011_872_3, 1e-6));
    // exponent 1: seen as it is
    assert_eq!(apparent_ratio(1.0, 3.5), 3.5);
    // saturation exaggerates: 2^1.7 = 3.249
    assert!(close(apparent_ratio(1.7, 2.0), 3.249_009_6, 1e-6));
}

#[test]
fn flannery_compensation() {
    // Flannery (1971), from memory: perceived circle size ∝ area^0.87; the compensating
    // radius exponent 0.5716 is close to 0.5 / 0.87 = 0.5747 (0.5716 = 0.5 / 0.8747).
    assert!(close(
        0.5 / FLANNERY_PERCEIVED_CIRCLE_AREA_EXPONENT,
        FLANNERY_RADIUS_EXPONENT,
        0.005
    ));
    // worked: a value 4x the reference gets 4^0.5716 = 2.2087 times the radius (true area
    // scaling would give 2)
    let radius = flannery_compensated_radius(40.0, 10.0, 3.0);
    assert!(radius.is_some_and(|radius| close(radius, 3.0 * 2.208_703_9, 1e-6)));
    assert_eq!(flannery_compensated_radius(10.0, 10.0, 3.0), Some(3.0));
}

#[test]
fn lie_factor_definition() {
    // Tufte (1983): lie factor = size of effect shown in graphic / size of effect in data,
    // size of effect = (second − first) / first; 1 means the graphic is accurate.
    assert_eq!(relative_effect(18.0, 27.5), Some(9.5 / 18.0));
    assert_eq!(lie_factor(0.25, 0.25), Some(1.0));
    // Tufte's fuel-economy example (from memory): the data rise from 18 to 27.5 miles per
    // gallon (+53 %), the drawn lines from 0.6 to 5.3 inches (+783 %): lie factor 14.8.
    let graphic = relative_effect(0.6, 5.3).unwrap_or(f64::NAN);
    let data = relative_effect(18.0, 27.5).unwrap_or(f64::NAN);
    assert!(close(graphic, 7.833, 1e-3));
    assert!(close(data, 0.528, 1e-3));
    let factor = lie_factor(graphic, data).unwrap_or(f64::NAN);
    assert!(close(factor, 14.8, 0.05), "{factor}");
}

#[test]
fn truncated_baseline_worked_numbers() {
    // Bars from a baseline b for values v1 < v2: graphic effect (v2 − b)/(v1 − b) − 1, data
    // effect v2/v1 − 1 (Tufte 1983 definitions applied to the drawn lengths).
    // b = 400, v1 = 410, v2 = 450: lengths 10 and 50 → +400 % shown, +9.756 % in the data → 41.
    let factor = truncated_baseline_lie_factor(400.0, 410.0, 450.0).unwrap_or(f64::NAN);
    assert!(close(factor, 41.0, 1e-9), "{factor}");
    // b = 50, v1 = 60, v2 = 90: lengths 10 and 40 → +300 % shown, +50 % in the data → 6.
    let factor = truncated_baseline_lie_factor(50.0, 60.0, 90.0).unwrap_or(f64::NAN);
    assert!(close(factor, 6.0, 1e-9), "{factor}");
    // a zero baseline is accurate: lie factor exactly 1 (Tufte 1983)
    for (first, second) in [(3.0, 7.0), (120.0, 80.0), (0.5, 0.25)] {
        assert_eq!(truncated_baseline_lie_factor(0.0, first, second), Some(1.0));
    }
    // read the other way (from 450 down to 410) the effect is relative to the larger bar:
    // graphic 10/50 − 1 = −0.8, data 410/450 − 1 = −0.0889 → 9; still an exaggeration
    let falling = truncated_baseline_lie_factor(400.0, 450.0, 410.0).unwrap_or(f64::NAN);
    assert!(close(falling, 9.0, 1e-9), "{falling}");
}
