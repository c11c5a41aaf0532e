//! `rows-share-a-mark`: several rows drawn on one bar, slice, cell or area position while the
//! value has no `summary`, so the reader sees one row's value (or a pile of overdrawn marks)
//! where they expect the group's. Documentation: `rows-share-a-mark.md`.
//!
//! Decided from the evaluation when there is one (a drawn mark standing for several rows, or
//! several marks with the same panel and placing values), else from the profile by counting:
//! when the placing columns have fewer distinct combinations than there are rows, some
//! position must hold two rows (the pigeonhole principle). The profile decides only then, and
//! only with exact distinct counts; otherwise the rule stays silent.

use crate::analysis::drawn::{panel_labels, placing_channels, shared_positions};
use crate::analysis::facts::{BindingFacts, LayerFacts};
use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Fix, Severity, TextEdit};
use crate::spec::model::{AttributeKind, Channel, ChartSpec, Mark, Summary};
use crate::spec::schema::json_string;

pub const ID: &str = "rows-share-a-mark";

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Warning,
    group: "expressiveness",
    summary: "several rows drawn on one bar, slice, cell or area position without a `summary`",
    has_fix: true,
    docs: include_str!("rows-share-a-mark.md"),
    check: RuleCheck::Semantic(check),
};

/// The summaries the fixes offer, in order: the total of the rows, then their average.
const FIX_SUMMARIES: [(Summary, &str); 2] = [(Summary::Sum, "sum"), (Summary::Mean, "average")];

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let panels = panel_labels(context.evaluation);
    let mut diagnostics = Vec::new();
    for layer in &context.layers {
        let Some(mark) = layer.mark() else {
            continue;
        };
        let Some(value) = value_binding(layer, mark) else {
            continue;
        };
        let Some(column) = value.column_name() else {
            continue;
        };
        // an aggregated layer (a summary on another channel) is grouped by the evaluation;
        // bars of a categorical column are another rule's matter
        if layer
            .bindings
            .iter()
            .any(|facts| facts.binding.summary.is_some())
            || value.kind != Some(AttributeKind::Quantitative)
        {
            continue;
        }
        let channel = value.binding.channel;
        let stacked = layer
            .layer
            .arrange
            .as_ref()
            .is_some_and(|arrange| arrange.value.is_stacked());
        let (one, many) = mark_nouns(mark, stacked);
        let shared = match shared_positions(layer, channel, &panels) {
            Some(drawn) if drawn.shared == 0 => continue,
            Some(drawn) => {
                let sample = if layer.drawn_from_sample {
                    " in the sampled head of the data"
                } else {
                    ""
                };
                if drawn.positions == 1 {
                    format!(
                        "all {} rows{sample} are drawn on one {one}",
                        drawn.most_rows
                    )
                } else {
                    let place = drawn
                        .most_rows_place
                        .map(|place| format!(" at `{place}`"))
                        .unwrap_or_default();
                    let which = if drawn.shared == drawn.positions {
                        format!("all {} {many}", drawn.positions)
                    } else {
                        format!("{} of the {} {many}", drawn.shared, drawn.positions)
                    };
                    format!(
                        "{which}{sample} stand for more than one row (up to {} rows{place})",
                        drawn.most_rows
                    )
                }
            }
            None => match profile_sharing(context.spec(), layer, mark, channel) {
                Some(phrase) => phrase,
                None => continue,
            },
        };
        let consequence = match mark {
            Mark::Bar if stacked => {
                "their rows are stacked as segments of one colour that cannot be told apart"
            }
            Mark::Bar => "the reader sees one row's value, drawn over the others",
            Mark::Area => "the outline jumps between their values at one place",
            Mark::Wedge => "the pie gets several slices of one colour that cannot be told apart",
            _ => "the cells are drawn over each other and only the top one's colour shows",
        };
        let mut diagnostic = Diagnostic::new(
            ID,
            Severity::Warning,
            value.binding.value_range,
            format!("`{column}` has no `summary`, but {shared}: {consequence}"),
        );
        for (summary, verb) in FIX_SUMMARIES {
            if let Some(fix) = add_summary_fix(context.text(), value, summary, verb, one) {
                diagnostic.fixes.push(fix);
            }
        }
        diagnostics.push(diagnostic);
    }
    diagnostics
}

/// The binding whose values the marks show: the value axis of bars and areas, `angle` of
/// slices, the first colour channel of cells.
fn value_binding<'l, 'a>(layer: &'l LayerFacts<'a>, mark: Mark) -> Option<&'l BindingFacts<'a>> {
    match mark {
        Mark::Bar | Mark::Area => layer.binding(layer.value_axis()?),
        Mark::Wedge => layer.binding(Channel::Angle),
        Mark::Cell => [Channel::Luminance, Channel::Hue, Channel::Saturation]
            .into_iter()
            .filter_map(|channel| layer.binding(channel))
            .find(|facts| facts.kind == Some(AttributeKind::Quantitative)),
        _ => None,
    }
}

/// One and many of what holds the rows, for messages.
fn mark_nouns(mark: Mark, stacked: bool) -> (&'static str, &'static str) {
    match mark {
        Mark::Bar if stacked => ("segment", "segments"),
        Mark::Bar => ("bar", "bars"),
        Mark::Area => ("position of the area", "positions of the area"),
        Mark::Wedge => ("slice", "slices"),
        _ => ("cell", "cells"),
    }
}

/// "the 60 rows fall on at most 12 bars (`vessel` has 12 distinct values)" when the profile
/// proves that some position holds two rows: the placing columns (and `panels.by`) have fewer
/// distinct combinations than there are rows with all of them present. `None` when it cannot
/// be told (no profile, bins, an estimated distinct count, or enough combinations).
fn profile_sharing(
    spec: &ChartSpec,
    layer: &LayerFacts<'_>,
    mark: Mark,
    value_channel: Channel,
) -> Option<String> {
    let data = layer.data?;
    let value = layer.binding(value_channel)?;
    let mut missing = value.profile?.missing;
    let mut combinations: u64 = 1;
    let mut parts: Vec<(String, u64)> = Vec::new();
    let placing = placing_channels(mark, value_channel)
        .iter()
        .filter(|channel| **channel != value_channel)
        .filter_map(|channel| layer.binding(*channel));
    let mut columns: Vec<(&str, &crate::data::ColumnProfile)> = Vec::new();
    for facts in placing {
        if facts.binding.bins.is_some() {
            return None;
        }
        columns.push((facts.column_name()?, facts.profile?));
    }
    if let Some(by) = spec.panels.as_ref().and_then(|panels| panels.by.as_ref()) {
        columns.push((by.value.as_str(), data.column(&by.value)?));
    }
    for (name, profile) in columns {
        if !profile.distinct.exact {
            return None;
        }
        missing = missing.saturating_add(profile.missing);
        combinations = combinations.saturating_mul(profile.distinct.value);
        parts.push((name.to_string(), profile.distinct.value));
    }
    let rows = data.rows.saturating_sub(missing);
    if rows <= combinations {
        return None;
    }
    let stacked = layer
        .layer
        .arrange
        .as_ref()
        .is_some_and(|arrange| arrange.value.is_stacked());
    let (one, many) = mark_nouns(mark, stacked);
    let sample = if data.is_sample { " read so far" } else { "" };
    Some(match parts.as_slice() {
        [] => format!("all {rows} rows{sample} are drawn on one {one}"),
        [(name, distinct)] => format!(
            "its {rows} rows{sample} fall on at most {combinations} {many} (`{name}` has {distinct} distinct values)"
        ),
        _ => format!(
            "its {rows} rows{sample} fall on at most {combinations} {many} ({}: {} combinations)",
            parts
                .iter()
                .map(|(name, _)| format!("`{name}`"))
                .collect::<Vec<_>>()
                .join(" × "),
            parts
                .iter()
                .map(|(_, distinct)| distinct.to_string())
                .collect::<Vec<_>>()
                .join(" × ")
        ),
    })
}

/// The fix that adds `"summary": SUMMARY` to the value binding: a shorthand `"loaves"` becomes
/// `{ "column": "loaves", "summary": "sum" }`; an object gets the key after its `column`.
fn add_summary_fix(
    text: &str,
    value: &BindingFacts<'_>,
    summary: Summary,
    verb: &str,
    one: &str,
) -> Option<Fix> {
    let column = value.binding.column.as_ref()?;
    let member = format!(
        "{}: {}",
        json_string("summary"),
        json_string(summary.as_str())
    );
    let (edit, shown) = if value.binding.shorthand {
        let replacement = format!(
            "{{ {}: {}, {member} }}",
            json_string("column"),
            json_string(&column.value)
        );
        let written = text.get(value.binding.value_range.start..value.binding.value_range.end)?;
        let shown = format!("`{written}`->`{replacement}`");
        (
            TextEdit {
                range: value.binding.value_range,
                new_text: replacement,
            },
            shown,
        )
    } else {
        (
            TextEdit {
                range: crate::text_range::TextRange::new(column.range.end, column.range.end),
                new_text: format!(", {member}"),
            },
            format!("add `{member}`"),
        )
    };
    Some(Fix::quick(
        format!("{verb} the rows of each {one}: {shown}"),
        vec![edit],
    ))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::drawn::testing::{channel, chart, layer, mark, text};
    use crate::analysis::rules::{messages_with_evaluation, messages_without_data};
    use crate::eval::{Datum, EvaluatedChart};
    use crate::spec::model::Mark;

    const BARS: &str = r#"{ "columns": { "loaves": { "kind": "quantitative" } },
      "mark": "bar", "bind": { "x": "branch", "y": "loaves" } }"#;

    fn bars(marks: &[(&str, f64, u64)]) -> EvaluatedChart {
        let mut y = channel(Channel::Y, "loaves", None);
        y.kind = AttributeKind::Quantitative;
        chart(vec![layer(
            Mark::Bar,
            None,
            vec![channel(Channel::X, "branch", None), y],
            marks
                .iter()
                .map(|(branch, loaves, rows)| {
                    mark(vec![text(branch), Datum::Number(*loaves)], *rows)
                })
                .collect(),
        )])
    }

    #[test]
    fn several_marks_at_one_position_or_a_mark_of_several_rows_set_it_off() {
        // Millbrook is drawn twice (2 rows), Quayside once for 3 rows, Hilltop once for 1 row:
        // 2 of the 3 bars hold more than one row; the most is 3, at Quayside
        let evaluation = bars(&[
            ("Millbrook", 412.0, 1),
            ("Quayside", 288.0, 3),
            ("Millbrook", 398.0, 1),
            ("Hilltop", 240.0, 1),
        ]);
        assert_eq!(
            messages_with_evaluation(check, BARS, &evaluation),
            vec!["`loaves` has no `summary`, but 2 of the 3 bars stand for more than one row (up to 3 rows at `Quayside`): the reader sees one row's value, drawn over the others".to_string()]
        );
    }

    #[test]
    fn one_row_per_bar_is_silent_and_the_evaluation_overrules_the_profile() {
        let evaluation = bars(&[("Millbrook", 412.0, 1), ("Quayside", 288.0, 1)]);
        assert!(messages_with_evaluation(check, BARS, &evaluation).is_empty());
        // without data and without an evaluation nothing can be told
        assert!(messages_without_data(check, BARS).is_empty());
    }

    #[test]
    fn a_sampled_evaluation_says_so_and_a_single_position_is_said_plainly() {
        let spec = r#"{ "columns": { "loaves": { "kind": "quantitative" } },
          "mark": "bar", "bind": { "y": "loaves" } }"#;
        let mut y = channel(Channel::Y, "loaves", None);
        y.kind = AttributeKind::Quantitative;
        let mut evaluation = chart(vec![layer(
            Mark::Bar,
            None,
            vec![y],
            vec![
                mark(vec![Datum::Number(412.0)], 1),
                mark(vec![Datum::Number(288.0)], 1),
            ],
        )]);
        evaluation.is_sample = true;
        assert_eq!(
            messages_with_evaluation(check, spec, &evaluation),
            vec!["`loaves` has no `summary`, but all 2 rows in the sampled head of the data are drawn on one bar: the reader sees one row's value, drawn over the others".to_string()]
        );
    }
}
