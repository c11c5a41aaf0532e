//! `part-to-whole-invalid`: slices or stacks of values that are not parts of a whole.
//! Documentation: `part-to-whole-invalid.md`.

use crate::analysis::channels::{arc_to_bar_fix, magnitude_binding, unstack_fix};
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
                        facts.binding.column.as_ref().map_or(facts.binding.value_range, |c| c.range),
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
