//! `truncated-baseline`: bars or areas whose value axis does not start at zero, with Tufte's
//! lie factor computed from the data. Documentation: `truncated-baseline.md`.

use crate::analysis::drawn::{drawn_reaches, panel_labels, DrawnReach};
use crate::analysis::facts::{BindingFacts, LayerFacts};
use crate::analysis::rules::part_to_whole_invalid::format_number;
use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Fix, Severity, TextEdit};
use crate::knowledge::stevens::truncated_baseline_lie_factor;
use crate::spec::model::{Channel, MappingFrom, Mark, Summary};
use crate::spec::schema::json_string;
use crate::text_range::TextRange;

pub const ID: &str = "truncated-baseline";

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Warning,
    group: "baseline",
    summary: "bars or areas whose value axis does not start at zero (with the lie factor)",
    has_fix: true,
    docs: include_str!("truncated-baseline.md"),
    check: RuleCheck::Semantic(check),
};

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let mut diagnostics = Vec::new();
    for layer in &context.layers {
        if !matches!(layer.mark(), Some(Mark::Bar | Mark::Area)) {
            continue;
        }
        let Some(axis) = layer.value_axis() else {
            continue;
        };
        let Some(facts) = layer.binding(axis) else {
            continue;
        };
        let Some(mapping) = &facts.binding.mapping else {
            continue;
        };
        let zero_off = mapping
            .from
            .as_ref()
            .filter(|from| from.value == MappingFrom::Data);
        let domain = mapping
            .extent
            .as_ref()
            .filter(|domain| domain.value.0 > 0.0 || domain.value.1 < 0.0);
        if zero_off.is_none() && domain.is_none() {
            continue;
        }
        let mark_word = if layer.mark() == Some(Mark::Bar) {
            "bars"
        } else {
            "areas"
        };
        let panels = panel_labels(context.evaluation);
        let (range, message) = match domain {
            Some(domain) => {
                let (low, high) = domain.value;
                let baseline = if low > 0.0 { low } else { high };
                let clause = drawn_lie_factor_clause(layer, axis, baseline, &panels)
                    .unwrap_or_else(|| lie_factor_clause(facts, baseline));
                (
                    domain.range,
                    format!(
                        "the {mark_word} of `{}` start at {} instead of 0{clause}",
                        facts.display_name(),
                        format_number(baseline),
                    ),
                )
            }
            None => {
                let zero = zero_off.map_or(mapping.range, |from| from.range);
                let message = drawn_from_data_message(layer, axis, mark_word, &panels)
                    .unwrap_or_else(|| {
                        let smallest = facts
                            .profile
                            .and_then(|profile| profile.numeric.as_ref())
                            .filter(|_| facts.binding.summary.is_none())
                            .map(|numbers| format!(" ({})", format_number(numbers.min)))
                            .unwrap_or_default();
                        format!(
                            "`from` is `data`, so the {mark_word} of `{}` start near the smallest value{smallest} instead of 0: the shortest almost vanish and differences look many times larger than they are",
                            facts.display_name()
                        )
                    });
                (zero, message)
            }
        };
        let mut edits = Vec::new();
        let mut changes = Vec::new();
        if let Some(zero) = zero_off {
            edits.push(TextEdit {
                range: zero.range,
                new_text: json_string(MappingFrom::Zero.as_str()),
            });
            changes.push("`from` `data`->`zero`".to_string());
        }
        if let Some(domain) = domain {
            if let Some(bound_range) =
                extent_bound_range(context.text(), domain.range, domain.value.0 > 0.0)
            {
                let old = context
                    .text()
                    .get(bound_range.start..bound_range.end)
                    .unwrap_or("");
                edits.push(TextEdit {
                    range: bound_range,
                    new_text: "0".to_string(),
                });
                changes.push(format!("`extent` bound `{old}`->`0`"));
            }
        }
        let mut diagnostic = Diagnostic::new(ID, Severity::Warning, range, message);
        if !edits.is_empty() {
            edits.sort_by_key(|edit| edit.range.start);
            diagnostic.fixes.push(Fix::quick(
                format!("start the {mark_word} at zero: {}", changes.join(", ")),
                edits,
            ));
        }
        diagnostics.push(diagnostic);
    }
    diagnostics
}

/// ", so differences look 6.2x larger than they are (...)" from the bound data, when it can be
/// computed: the lie factor (Tufte 1983) of the smallest against the largest value.
fn lie_factor_clause(facts: &BindingFacts<'_>, baseline: f64) -> String {
    let Some(numbers) = facts.profile.and_then(|profile| profile.numeric.as_ref()) else {
        return ": bar lengths are no longer proportional to the values".to_string();
    };
    let summary = facts.binding.summary.as_ref().map(|summary| summary.value);
    // raw values and minima are exact; means, medians and maxima lie within the column's range,
    // so the smallest raw value gives the largest possible lie factor; sums and counts cannot
    // be bounded from the profile
    let qualifier = match summary {
        None | Some(Summary::Min) => "",
        Some(Summary::Mean | Summary::Median | Summary::Max) => "up to ",
        Some(Summary::Sum | Summary::Count | Summary::Distinct) => {
            return ": bar lengths are no longer proportional to the values".to_string();
        }
    };
    if numbers.min <= baseline {
        return format!(
            ": values below {} are cut off and the rest are not proportional",
            format_number(baseline)
        );
    }
    match truncated_baseline_lie_factor(baseline, numbers.min, numbers.max) {
        Some(factor) if factor.is_finite() => format!(
            ", so differences look {qualifier}{factor:.1}x larger than they are (Tufte's lie factor, smallest value {} against largest {})",
            format_number(numbers.min),
            format_number(numbers.max)
        ),
        _ => ": bar lengths are no longer proportional to the values".to_string(),
    }
}

/// Said after a figure computed from an evaluation of the sampled head of the data.
pub const SAMPLE_NOTE: &str = " (in the sampled head of the data)";

/// A ratio for messages: one decimal, two when one decimal would show `1.0`.
fn ratio_text(ratio: f64) -> String {
    if (ratio * 10.0).round() == 10.0 {
        format!("{ratio:.2}")
    } else {
        format!("{ratio:.1}")
    }
}

/// "`Millbrook`, 433" or "433" for messages.
fn reach_text(reach: &DrawnReach) -> String {
    match &reach.place {
        Some(place) => format!("`{place}`, {}", format_number(reach.value)),
        None => format_number(reach.value),
    }
}

/// ": the longest bar (`Riverside`, 521) is drawn 3.7x as long as the shortest (`Elm Park`, 433)
/// but holds 1.2x its value, so differences look 13.1x larger than they are (Tufte's lie
/// factor)", from what the evaluation draws; `None` when the layer was not evaluated or drew
/// nothing on the axis. The pair is the shortest against the longest drawn mark beyond the
/// baseline: Tufte's lie factor of a pair from `first` is first / (first − baseline) whatever the
/// second, so the shortest gives the largest figure. Stacks are measured by their ends.
fn drawn_lie_factor_clause(
    layer: &LayerFacts<'_>,
    axis: Channel,
    baseline: f64,
    panels: &[Option<String>],
) -> Option<String> {
    let upward = baseline > 0.0;
    let reaches = drawn_reaches(layer, axis, upward, panels)?;
    if reaches.is_empty() {
        return None;
    }
    let (one, many, longest, shortest, as_long) = if layer.mark() == Some(Mark::Bar) {
        ("bar", "bars", "longest", "shortest", "as long as")
    } else {
        (
            "point of the area",
            "points of the area",
            "farthest",
            "nearest",
            "as far from the axis as",
        )
    };
    let beyond = |reach: &&DrawnReach| {
        if upward {
            reach.value > baseline
        } else {
            reach.value < baseline
        }
    };
    let cut = reaches.iter().filter(|reach| !beyond(reach)).count();
    let cut_note = match cut {
        0 => String::new(),
        _ => format!(
            "; {cut} of the {} {many} {} {} {} and {} cut off at the axis",
            reaches.len(),
            if cut == 1 { "holds" } else { "hold" },
            format_number(baseline),
            if upward { "or less" } else { "or more" },
            if cut == 1 { "is" } else { "are" },
        ),
    };
    let sample = if layer.drawn_from_sample {
        SAMPLE_NOTE
    } else {
        ""
    };
    let distance = |reach: &DrawnReach| (reach.value - baseline).abs();
    let mut drawn = reaches.iter().filter(beyond);
    let Some(first) = drawn.next() else {
        return Some(format!(
            ": every {one} holds {} {} and is cut off at the axis{sample}",
            format_number(baseline),
            if upward { "or less" } else { "or more" }
        ));
    };
    let (mut near, mut far) = (first, first);
    for reach in drawn {
        // the first drawn wins a tie, so the message follows the drawing order
        if distance(reach) < distance(near) {
            near = reach;
        }
        if distance(reach) > distance(far) {
            far = reach;
        }
    }
    let factor = truncated_baseline_lie_factor(baseline, near.value, far.value)
        .filter(|factor| factor.is_finite());
    let Some(factor) = factor else {
        // one drawn length, or all alike: nothing to compare
        let lengths = if layer.mark() == Some(Mark::Bar) {
            "bar lengths"
        } else {
            "heights"
        };
        return Some(format!(
            ": {lengths} are not proportional to the values{cut_note}{sample}"
        ));
    };
    Some(format!(
        ": the {longest} {one} ({}) is drawn {}x {as_long} the {shortest} ({}) but holds {}x its value, so differences look {factor:.1}x larger than they are (Tufte's lie factor){cut_note}{sample}",
        reach_text(far),
        ratio_text(distance(far) / distance(near)),
        reach_text(near),
        ratio_text(far.value / near.value),
    ))
}

/// The message for `"from": "data"` from what the evaluation draws: the smallest drawn value is
/// named (the axis starts near it); `None` when the layer was not evaluated, drew nothing, or
/// drew values on both sides of zero.
fn drawn_from_data_message(
    layer: &LayerFacts<'_>,
    axis: Channel,
    mark_word: &str,
    panels: &[Option<String>],
) -> Option<String> {
    let facts = layer.binding(axis)?;
    let reaches = drawn_reaches(layer, axis, true, panels)?;
    let upward = reaches.iter().all(|reach| reach.value > 0.0);
    let downward = reaches.iter().all(|reach| reach.value < 0.0);
    if reaches.is_empty() || !(upward || downward) {
        return None;
    }
    let reaches = if upward {
        reaches
    } else {
        drawn_reaches(layer, axis, false, panels)?
    };
    let mut nearest = reaches.first()?;
    for reach in &reaches {
        if reach.value.abs() < nearest.value.abs() {
            nearest = reach;
        }
    }
    let value = format_number(nearest.value);
    let sample = if layer.drawn_from_sample {
        SAMPLE_NOTE
    } else {
        ""
    };
    Some(format!(
        "`from` is `data`, so the {mark_word} of `{}` start near the smallest drawn value ({}) instead of 0: the shortest almost vanish, and Tufte's lie factor against it, {value} / ({value} − the axis start), grows without bound as the axis nears {value}{sample}",
        facts.display_name(),
        reach_text(nearest),
    ))
}

/// The range of the lower (`first = true`) or upper bound number inside a `[low, high]` domain.
fn extent_bound_range(text: &str, domain: TextRange, first: bool) -> Option<TextRange> {
    let inner = text.get(domain.start..domain.end)?;
    let mut numbers = Vec::new();
    let mut start = None;
    for (index, c) in inner.char_indices() {
        let part_of_number = c.is_ascii_digit() || matches!(c, '-' | '+' | '.' | 'e' | 'E');
        match (part_of_number, start) {
            (true, None) => start = Some(index),
            (false, Some(begin)) => {
                numbers.push(TextRange::new(domain.start + begin, domain.start + index));
                start = None;
            }
            _ => {}
        }
    }
    if let Some(begin) = start {
        numbers.push(TextRange::new(domain.start + begin, domain.end));
    }
    if numbers.len() != 2 {
        return None;
    }
    Some(if first { numbers[0] } else { numbers[1] })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::drawn::testing::{channel, chart, layer, mark, text};
    use crate::analysis::rules::{messages_with_evaluation, messages_without_data};
    use crate::eval::{Datum, DrawnMark};
    use crate::spec::model::{Arrange, Channel, Mark, Summary};

    const SUMS_FROM_400: &str = r#"{ "mark": "bar", "bind": { "x": "branch",
      "y": { "column": "loaves", "summary": "sum", "mapping": { "extent": [400, 600] } } } }"#;

    fn sums(values: &[(&str, f64)]) -> crate::eval::EvaluatedChart {
        chart(vec![layer(
            Mark::Bar,
            None,
            vec![
                channel(Channel::X, "branch", None),
                channel(Channel::Y, "loaves", Some(Summary::Sum)),
            ],
            values
                .iter()
                .map(|(branch, sum)| mark(vec![text(branch), Datum::Number(*sum)], 3))
                .collect(),
        )])
    }

    #[test]
    fn the_lie_factor_of_summed_bars_comes_from_the_drawn_sums() {
        // Worked by hand (Tufte 1983, ch. 2: lie factor = size of effect shown in the graphic /
        // size of effect in the data). Baseline 400; the shortest drawn bar is Quayside (440,
        // drawn 40 long), the longest Millbrook (520, drawn 120 long). Effect shown:
        // 120 / 40 − 1 = 2; effect in the data: 520 / 440 − 1 = 0.1818...; lie factor
        // 2 / 0.1818 = 11.0 (= 440 / (440 − 400)). Drawn ratio 3.0, value ratio 1.18 -> 1.2.
        let evaluation = sums(&[
            ("Millbrook", 520.0),
            ("Quayside", 440.0),
            ("Hilltop", 470.0),
        ]);
        let found = messages_with_evaluation(check, SUMS_FROM_400, &evaluation);
        assert_eq!(
            found,
            vec!["the bars of `sum(loaves)` start at 400 instead of 0: the longest bar (`Millbrook`, 520) is drawn 3.0x as long as the shortest (`Quayside`, 440) but holds 1.2x its value, so differences look 11.0x larger than they are (Tufte's lie factor)".to_string()]
        );
        // without the evaluation, a sum cannot be bounded from the profile
        let profile_only = messages_without_data(check, SUMS_FROM_400);
        assert_eq!(
            profile_only,
            vec!["the bars of `sum(loaves)` start at 400 instead of 0: bar lengths are no longer proportional to the values".to_string()]
        );
    }

    #[test]
    fn stacks_are_measured_by_their_ends_and_cut_bars_are_counted() {
        let spec = r#"{ "mark": "bar", "arrange": "stack", "bind": { "x": "branch", "hue": "product",
          "y": { "column": "loaves", "summary": "sum", "mapping": { "extent": [400, 600] } } } }"#;
        let segment = |branch: &str, product: &str, start: f64, end: f64| DrawnMark {
            stack_start: Some(start),
            ..mark(vec![text(branch), text(product), Datum::Number(end)], 2)
        };
        let evaluation = chart(vec![layer(
            Mark::Bar,
            Some(Arrange::Stack),
            vec![
                channel(Channel::X, "branch", None),
                channel(Channel::Hue, "product", None),
                channel(Channel::Y, "loaves", Some(Summary::Sum)),
            ],
            vec![
                segment("Millbrook", "rye", 0.0, 300.0),
                segment("Millbrook", "spelt", 300.0, 520.0),
                segment("Quayside", "rye", 0.0, 200.0),
                segment("Quayside", "spelt", 200.0, 440.0),
                segment("Dockyard", "rye", 0.0, 150.0),
                segment("Dockyard", "spelt", 150.0, 390.0),
            ],
        )]);
        // the stacks end at 520, 440 and 390: the same pair as above (lie factor 11.0), and
        // Dockyard's stack (390) does not reach the axis at 400
        let found = messages_with_evaluation(check, spec, &evaluation);
        assert_eq!(
            found,
            vec!["the bars of `sum(loaves)` start at 400 instead of 0: the longest bar (`Millbrook`, 520) is drawn 3.0x as long as the shortest (`Quayside`, 440) but holds 1.2x its value, so differences look 11.0x larger than they are (Tufte's lie factor); 1 of the 3 bars holds 400 or less and is cut off at the axis".to_string()]
        );
    }

    #[test]
    fn from_data_names_the_smallest_drawn_value_and_a_sample_is_said() {
        let spec = r#"{ "mark": "bar", "bind": { "x": "branch",
          "y": { "column": "loaves", "summary": "mean", "mapping": { "from": "data" } } } }"#;
        let mut evaluation = sums(&[("Millbrook", 52.5), ("Quayside", 44.25)]);
        evaluation.layers[0].channels[1].summary = Some(Summary::Mean);
        evaluation.is_sample = true;
        let found = messages_with_evaluation(check, spec, &evaluation);
        assert_eq!(
            found,
            vec!["`from` is `data`, so the bars of `mean(loaves)` start near the smallest drawn value (`Quayside`, 44.25) instead of 0: the shortest almost vanish, and Tufte's lie factor against it, 44.25 / (44.25 − the axis start), grows without bound as the axis nears 44.25 (in the sampled head of the data)".to_string()]
        );
    }

    #[test]
    fn an_evaluation_of_another_mark_is_not_read() {
        let mut evaluation = sums(&[("Millbrook", 520.0), ("Quayside", 440.0)]);
        evaluation.layers[0].mark = Mark::Point;
        let found = messages_with_evaluation(check, SUMS_FROM_400, &evaluation);
        assert_eq!(
            found,
            messages_without_data(check, SUMS_FROM_400),
            "falls back to the profile"
        );
    }
}
