//! `summary-on-categorical`: an arithmetic summary of a column whose values are not numbers.
//! Documentation: `summary-on-categorical.md`.

use crate::analysis::rules::{backticked, Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Fix, Severity, TextEdit};
use crate::spec::model::{AttributeKind, Summary};
use crate::spec::schema::json_string;

pub const ID: &str = "summary-on-categorical";

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Error,
    group: "data",
    summary: "`sum`, `mean` or another arithmetic summary of a non-numeric column",
    has_fix: true,
    docs: include_str!("summary-on-categorical.md"),
    check: RuleCheck::Semantic(check),
};

/// Whether `summary` means something for a column of `kind` (Stevens 1946: permissible
/// statistics per level of measurement: the median and extremes need an order, sums and means
/// need numbers).
pub fn summary_fits(summary: Summary, kind: AttributeKind) -> bool {
    match summary {
        Summary::Count | Summary::Distinct => true,
        Summary::Median | Summary::Min | Summary::Max => kind != AttributeKind::Categorical,
        Summary::Mean => matches!(kind, AttributeKind::Quantitative | AttributeKind::Time),
        Summary::Sum => kind == AttributeKind::Quantitative,
    }
}

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let mut diagnostics = Vec::new();
    for layer in &context.layers {
        for facts in &layer.bindings {
            let (Some(summary), Some(column), Some(kind)) = (
                facts.binding.summary.as_ref(),
                facts.binding.column.as_ref(),
                facts.column_kind,
            ) else {
                continue;
            };
            if summary_fits(summary.value, kind) {
                continue;
            }
            let fixes = [Summary::Count, Summary::Distinct]
                .into_iter()
                .map(|replacement| {
                    Fix::quick(
                        format!(
                            "summarise by `{}`: `{}`->`{}`",
                            replacement.as_str(),
                            summary.value.as_str(),
                            replacement.as_str()
                        ),
                        vec![TextEdit {
                            range: summary.range,
                            new_text: json_string(replacement.as_str()),
                        }],
                    )
                })
                .collect();
            let mut diagnostic = Diagnostic::new(
                ID,
                Severity::Error,
                summary.range,
                format!(
                    "`{}` of `{}` means nothing: the column is {}{}",
                    summary.value.as_str(),
                    column.value,
                    kind.as_str(),
                    facts
                        .profile
                        .filter(|profile| !profile.top_values.is_empty())
                        .map(|profile| {
                            let values = profile.top_values.iter().map(|(value, _)| value);
                            format!(" (values such as {})", backticked(values, 3))
                        })
                        .unwrap_or_default()
                ),
            );
            diagnostic.fixes = fixes;
            diagnostics.push(diagnostic);
        }
    }
    diagnostics
}
