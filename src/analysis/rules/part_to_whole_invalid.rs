//! `part-to-whole-invalid`: slices or stacks of values that are not parts of a whole.
//! Documentation: `part-to-whole-invalid.md`.

use crate::analysis::channels::{arc_to_bar_fix, magnitude_binding, unstack_fix};
use crate::analysis::drawn::{drawn_min, drawn_place, panel_labels, Measure};
use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Severity};
use crate::spec::model::Mark;

pub const ID: &str = "part-to-whole-invalid";

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Error,
    group: "expressiveness",
    summary: "wedge slices or stacks of values that are not parts of a whole",
    has_fix: true,
    docs: include_str!("part-to-whole-invalid.md"),
    check: RuleCheck::Semantic(check),
};

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let panels = panel_labels(context.evaluation);
    let mut diagnostics = Vec::new();
    for layer in &context.layers {
        let Some(mark) = layer.mark() else {
            continue;
        };
        let stacked = layer
            .layer
            .arrange
            .as_ref()
            .is_some_and(|arrange| arrange.value.is_stacked());
        let whole = match mark {
            Mark::Wedge => "the slices of a pie",
            Mark::Bar if stacked => "stacked bar segments",
            Mark::Area if stacked => "stacked areas",
            _ => continue,
        };
        let Some(facts) = magnitude_binding(layer) else {
            continue;
        };
        let problem = if let Some(summary) = facts
            .binding
            .summary
            .as_ref()
            .filter(|summary| !summary.value.is_additive())
        {
            Some((
                summary.range,
                format!(
                    "{whole} add up to a whole, but {} of `{}` do not add up to anything",
                    summary_plural(summary.value),
                    facts.column_name().unwrap_or("the values")
                ),
            ))
        } else if let Some(drawn) = drawn_min(layer, facts.binding.channel, Measure::Parts, &panels)
        {
            // what is drawn, after the summary: the size of each slice or segment
            (drawn.value < 0.0).then(|| {
                (
                    negative_range(facts),
                    format!(
                        "{whole} add up to a whole, but `{}` is drawn negative, down to {}{}, which cannot be a part of it",
                        facts.display_name(),
                        format_number(drawn.value),
                        drawn_place(layer, &drawn)
                    ),
                )
            })
        } else if facts
            .binding
            .summary
            .as_ref()
            .is_none_or(|summary| !summary.value.is_counting())
        {
            facts
                .profile
                .and_then(|profile| profile.numeric.as_ref())
                .filter(|numbers| numbers.min < 0.0)
                .map(|numbers| {
                    (
                        negative_range(facts),
                        format!(
                            "{whole} add up to a whole, but `{}` has negative values (down to {}), which cannot be a part of it",
                            facts.column_name().unwrap_or("the column"),
                            format_number(numbers.min)
                        ),
                    )
                })
        } else {
            None
        };
        let Some((range, message)) = problem else {
            continue;
        };
        let mut diagnostic = Diagnostic::new(ID, Severity::Error, range, message);
        let fix = if mark == Mark::Wedge {
            arc_to_bar_fix(layer)
        } else {
            unstack_fix(layer)
        };
        if let Some(fix) = fix {
            diagnostic.fixes.push(fix);
        }
        diagnostics.push(diagnostic);
    }
    diagnostics
}

/// Where a negative part is reported: the column, else the whole binding.
fn negative_range(facts: &crate::analysis::facts::BindingFacts<'_>) -> crate::TextRange {
    facts
        .binding
        .column
        .as_ref()
        .map_or(facts.binding.value_range, |column| column.range)
}

/// A number for messages: up to 3 significant decimals, no trailing zeros.
pub fn format_number(value: f64) -> String {
    if value.fract() == 0.0 && value.abs() < 1e15 {
        return format!("{value:.0}");
    }
    let text = format!("{value:.3}");
    text.trim_end_matches('0').trim_end_matches('.').to_string()
}

/// "means", "medians", "minimums", ... for messages.
fn summary_plural(summary: crate::spec::model::Summary) -> String {
    use crate::spec::model::Summary;
    match summary {
        Summary::Min => "minimums".to_string(),
        Summary::Max => "maximums".to_string(),
        Summary::Count => "counts".to_string(),
        Summary::Distinct => "distinct counts".to_string(),
        other => format!("{}s", other.as_str()),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::drawn::testing::{channel, chart, layer, mark, text};
    use crate::analysis::rules::messages_with_evaluation;
    use crate::eval::{Datum, DrawnMark};
    use crate::spec::model::{Arrange, Channel, Summary};

    #[test]
    fn a_negative_drawn_segment_is_found_and_positive_sums_pass() {
        let spec = r#"{ "mark": "bar", "arrange": "stack",
          "bind": { "x": "branch", "hue": "product", "y": { "column": "margin", "summary": "sum" } } }"#;
        let stack = |second_end: f64| {
            let segment = |product: &str, start: f64, end: f64| DrawnMark {
                stack_start: Some(start),
                ..mark(
                    vec![text("Millbrook"), text(product), Datum::Number(end)],
                    3,
                )
            };
            chart(vec![layer(
                Mark::Bar,
                Some(Arrange::Stack),
                vec![
                    channel(Channel::X, "branch", None),
                    channel(Channel::Hue, "product", None),
                    channel(Channel::Y, "margin", Some(Summary::Sum)),
                ],
                vec![
                    segment("rye", 0.0, 40.0),
                    segment("spelt", 40.0, second_end),
                ],
            )])
        };
        // the spelt segment runs from 40 to 55: +15
        assert!(messages_with_evaluation(check, spec, &stack(55.0)).is_empty());
        // from 40 down to 28: a part of -12
        assert_eq!(
            messages_with_evaluation(check, spec, &stack(28.0)),
            vec!["stacked bar segments add up to a whole, but `sum(margin)` is drawn negative, down to -12 (at `Millbrook, spelt`), which cannot be a part of it".to_string()]
        );
    }
}
