//! Properties of the tick search (Talbot, Lin & Hanrahan 2010's extended Wilkinson algorithm)
//! and of the calendar ticks, on random ranges.

use markwell::draw::ticks::{
    calendar_ticks, extended_ticks, extended_ticks_with_room, LabelRoom, TickOptions, NICE_NUMBERS,
};
use proptest::prelude::*;

/// A random range: a centre over many magnitudes and a span that is not lost in the centre's
/// rounding (at least 1e-9 of it).
fn range() -> impl Strategy<Value = (f64, f64)> {
    (-8i32..12, -1.0f64..1.0, -8i32..12, 0.05f64..1.0).prop_filter_map(
        "span too small for the centre",
        |(centre_power, centre_sign, span_power, span_mantissa)| {
            let centre = centre_sign * 10f64.powi(centre_power);
            let span = span_mantissa * 10f64.powi(span_power);
            (span >= centre.abs() * 1e-9).then_some((centre - span / 2.0, centre + span / 2.0))
        },
    )
}

fn relative_tolerance(low: f64, high: f64) -> f64 {
    (high - low) * 1e-9 + (low.abs().max(high.abs())) * 1e-12
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(400))]

    #[test]
    fn loose_ticks_cover_the_data((low, high) in range(), target in 2usize..10) {
        let ticks = extended_ticks(low, high, TickOptions { target_count: target, loose: true }).unwrap();
        let tolerance = relative_tolerance(low, high);
        prop_assert!(ticks.values[0] <= low + tolerance, "{:?} for [{low}, {high}]", ticks.values);
        prop_assert!(*ticks.values.last().unwrap() >= high - tolerance, "{:?} for [{low}, {high}]", ticks.values);
    }

    #[test]
    fn steps_are_nice_numbers_times_a_power_of_ten((low, high) in range(), target in 2usize..10, loose: bool) {
        let ticks = extended_ticks(low, high, TickOptions { target_count: target, loose }).unwrap();
        let q = ticks.step / ticks.skip as f64 / 10f64.powi(ticks.exponent);
        prop_assert!(NICE_NUMBERS.iter().any(|nice| (nice - q).abs() < 1e-9), "q = {q}");
        prop_assert!(NICE_NUMBERS.contains(&ticks.nice));
        for pair in ticks.values.windows(2) {
            let gap = pair[1] - pair[0];
            prop_assert!((gap - ticks.step).abs() <= ticks.step * 1e-6 + relative_tolerance(low, high),
                "gap {gap} step {} in {:?}", ticks.step, ticks.values);
        }
        // Every label is a multiple of q·10^z. The quotient carries the rounding of both its
        // operands, a few ulps of its own size: -86564.54865 / 0.00001 is 8.7e9 give or take 2e-6.
        let unit = ticks.nice * 10f64.powi(ticks.exponent);
        for value in &ticks.values {
            let multiple = value / unit;
            prop_assert!((multiple - multiple.round()).abs() < 1e-6 + multiple.abs() * 1e-14,
                "{value} is not a multiple of {unit}");
        }
        // The labels meet the data: a labelling never lies wholly beside the range.
        prop_assert!(ticks.values[0] <= high && *ticks.values.last().unwrap() >= low,
            "{:?} for [{low}, {high}]", ticks.values);
    }

    #[test]
    fn labels_are_distinct_and_read_back((low, high) in range(), target in 2usize..12) {
        let ticks = extended_ticks(low, high, TickOptions { target_count: target, loose: false }).unwrap();
        prop_assert_eq!(ticks.values.len(), ticks.labels.len());
        for pair in ticks.labels.windows(2) {
            prop_assert_ne!(&pair[0], &pair[1]);
        }
        for (value, label) in ticks.values.iter().zip(&ticks.labels) {
            let read: f64 = label.parse().unwrap();
            prop_assert!((read - value).abs() <= ticks.step * 1e-3, "label {label} for {value}");
        }
    }

    #[test]
    fn labels_do_not_overlap_in_their_room((low, high) in range(), axis in 80.0f64..900.0, char_width in 4.0f64..10.0) {
        let extent = move |label: &str| label.chars().count() as f64 * char_width;
        let room = LabelRoom { axis_length: axis, label_extent: &extent, min_gap: 6.0 };
        let ticks = extended_ticks_with_room(low, high, TickOptions::default(), Some(&room)).unwrap();
        if ticks.score.is_finite() {
            let left = ticks.values[0].min(low);
            let right = ticks.values.last().unwrap().max(high);
            let pixels = axis / (right - left);
            for index in 1..ticks.values.len() {
                let distance = (ticks.values[index] - ticks.values[index - 1]) * pixels;
                let half = (extent(&ticks.labels[index]) + extent(&ticks.labels[index - 1])) / 2.0;
                prop_assert!(distance - half >= 6.0 - 1e-9, "{:?} on {axis} px", ticks.labels);
            }
        }
    }

    #[test]
    fn calendar_ticks_lie_in_the_range(low in -2_000_000_000i64..4_000_000_000, span in 1i64..3_000_000_000, target in 3usize..10) {
        let high = low + span;
        let ticks = calendar_ticks(low, high, target);
        prop_assert!(!ticks.seconds.is_empty() || span < ticks.step.nominal_seconds() as i64 * 2,
            "no ticks over {span} s with step {:?}", ticks.step);
        prop_assert!(ticks.seconds.iter().all(|tick| (low..=high).contains(tick)));
        prop_assert!(ticks.seconds.windows(2).all(|pair| pair[0] < pair[1]));
        prop_assert!(ticks.seconds.len() <= target * 3, "{} ticks for {target}", ticks.seconds.len());
        let mut labels = ticks.labels.clone();
        labels.sort();
        labels.dedup();
        prop_assert_eq!(labels.len(), ticks.labels.len(), "{:?}", ticks.labels);
    }
}

#[path = "support/charts.rs"]
mod charts;

/// A scatter over the random ranges on both axes, at a random frame size and panel count.
fn laid_out_scatter(
    (x_low, x_high): (f64, f64),
    (y_low, y_high): (f64, f64),
    width: f64,
    height: f64,
    panels: usize,
) -> markwell::draw::layout::Scene {
    use markwell::eval::model::{Datum, Domain, PanelInfo};
    let mut chart = charts::apiary_scatter();
    let layer = &mut chart.layers[0];
    layer.channels[0].domain = Domain::Numeric {
        min: x_low,
        max: x_high,
    };
    layer.channels[1].domain = Domain::Numeric {
        min: y_low,
        max: y_high,
    };
    for (index, mark) in layer.marks.iter_mut().enumerate() {
        let t = index as f64 / 59.0;
        mark.values[0] = Datum::Number(x_low + t * (x_high - x_low));
        mark.values[1] = Datum::Number(y_high - t * (y_high - y_low));
        mark.panel = (index % panels) as u32;
    }
    chart.width = width;
    chart.height = height;
    chart.panels = (0..panels)
        .map(|index| PanelInfo {
            label: Some(format!("buoy {index}")),
        })
        .collect();
    markwell::draw::layout::layout(&chart)
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(120))]

    /// On laid-out axes (label widths measured with the bundled font), no two drawn tick labels
    /// overlap, none leaves the frame, and every tick lies on its axis; across panels too. The
    /// frames leave each of up to four panels some room beside the two legends of the scatter
    /// (narrower frames squeeze the plots to their 10 px floor and the labels overflow).
    #[test]
    fn laid_out_tick_labels_do_not_overlap(
        x in range(),
        y in range(),
        width in 420.0f64..1200.0,
        height in 200.0f64..900.0,
        panels in 1usize..5,
    ) {
        let scene = laid_out_scatter(x, y, width, height, panels);
        let mut boxes = Vec::new();
        for axis in &scene.axes {
            let (low, high) = (axis.extent.0.min(axis.extent.1), axis.extent.0.max(axis.extent.1));
            for tick in &axis.ticks {
                prop_assert!(tick.pixel >= low - 0.5 && tick.pixel <= high + 0.5);
                if let Some(bounds) = tick.label_bounds() {
                    prop_assert!(bounds.x >= -0.5 && bounds.right() <= scene.width + 0.5,
                        "label {} leaves the frame: {:?}", tick.label, bounds);
                    boxes.push((tick.label.clone(), bounds));
                }
            }
        }
        for (index, (first, first_box)) in boxes.iter().enumerate() {
            for (second, second_box) in &boxes[index + 1..] {
                prop_assert!(!first_box.overlaps(second_box), "{} and {} overlap", first, second);
            }
        }
    }
}
