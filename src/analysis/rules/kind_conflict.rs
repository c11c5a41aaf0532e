//! `kind-conflict`: a declared `kind` that the data contradicts. Documentation:
//! `kind-conflict.md`.

use crate::analysis::rules::{backticked, Rule, RuleCheck, RuleContext};
use crate::data::ColumnProfile;
use crate::diagnostic::{Diagnostic, Fix, Severity, TextEdit};
use crate::spec::model::AttributeKind;
use crate::spec::schema::json_string;

pub const ID: &str = "kind-conflict";

/// Share of non-missing values that must be numbers for a column declared quantitative. Common
/// practice, no source: a few stray cells are tolerated, more are a different kind of column.
pub const MIN_NUMERIC_SHARE: f64 = 0.95;

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Error,
    group: "data",
    summary: "a declared kind that the data contradicts",
    has_fix: true,
    docs: include_str!("kind-conflict.md"),
    check: RuleCheck::Semantic(check),
};

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let mut diagnostics = Vec::new();
    for declaration in &context.spec().columns {
        let Some(kind) = &declaration.kind else {
            continue;
        };
        let Some(profile) = context
            .layers
            .iter()
            .filter_map(|layer| layer.data)
            .find_map(|data| data.column(&declaration.name.value))
        else {
            continue;
        };
        if profile.rows == profile.missing {
            continue;
        }
        let Some(problem) = contradiction(kind.value, profile) else {
            continue;
        };
        let mut diagnostic = Diagnostic::new(
            ID,
            Severity::Error,
            kind.range,
            format!(
                "`{}` is declared {} but {}",
                declaration.name.value,
                kind.value.as_str(),
                problem
            ),
        );
        if profile.kind != kind.value {
            diagnostic.fixes.push(Fix::quick(
                format!(
                    "declare `{}` as the data reads it: kind `{}`->`{}`",
                    declaration.name.value,
                    kind.value.as_str(),
                    profile.kind.as_str()
                ),
                vec![TextEdit {
                    range: kind.range,
                    new_text: json_string(profile.kind.as_str()),
                }],
            ));
        }
        diagnostics.push(diagnostic);
    }
    diagnostics
}

/// " (for example `a`, `b`, `c`)" from some of `values`, or nothing.
fn for_example(values: &[String]) -> String {
    if values.is_empty() {
        String::new()
    } else {
        format!(" (for example {})", backticked(values, 3))
    }
}

/// Why the data contradicts `declared`, if it does.
fn contradiction(declared: AttributeKind, profile: &ColumnProfile) -> Option<String> {
    match declared {
        AttributeKind::Quantitative if profile.numeric_share < MIN_NUMERIC_SHARE => {
            Some(if profile.numeric_share == 0.0 {
                format!(
                    "none of its values are numbers{}",
                    for_example(&profile.non_numeric_examples)
                )
            } else {
                format!(
                    "{:.0} % of its values are not numbers{}",
                    (1.0 - profile.numeric_share) * 100.0,
                    for_example(&profile.non_numeric_examples)
                )
            })
        }
        AttributeKind::Time if profile.kind != AttributeKind::Time && !is_year_like(profile) => {
            Some(format!(
                "its values are not ISO 8601 dates or times{}",
                for_example(&profile.samples)
            ))
        }
        _ => None,
    }
}

/// Whole numbers between 1000 and 2999: years written as numbers, which can be a time axis.
fn is_year_like(profile: &ColumnProfile) -> bool {
    profile.numeric_share >= MIN_NUMERIC_SHARE
        && profile.numeric.as_ref().is_some_and(|numbers| {
            numbers.min >= 1000.0
                && numbers.max <= 2999.0
                && profile.samples.iter().all(|sample| !sample.contains('.'))
        })
}
