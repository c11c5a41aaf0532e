//! `sparse-column`: a bound column that is mostly missing. Documentation: `sparse-column.md`.

use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Severity};

pub const ID: &str = "sparse-column";

/// Share of missing values above which a bound column is reported. Common practice, no source.
pub const MAX_MISSING_SHARE: f64 = 0.5;

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Warning,
    group: "data",
    summary: "a bound column that is mostly empty",
    has_fix: false,
    docs: include_str!("sparse-column.md"),
    check: RuleCheck::Semantic(check),
};

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let mut diagnostics = Vec::new();
    for layer in &context.layers {
        for facts in &layer.bindings {
            let (Some(profile), Some(column)) = (facts.profile, facts.binding.column.as_ref())
            else {
                continue;
            };
            if profile.rows == 0 {
                continue;
            }
            let share = profile.missing as f64 / profile.rows as f64;
            if share > MAX_MISSING_SHARE {
                diagnostics.push(Diagnostic::new(
                    ID,
                    Severity::Warning,
                    column.range,
                    format!(
                        "`{}` is missing in {:.0} % of rows ({} of {}); the chart shows only what is left",
                        column.value,
                        share * 100.0,
                        profile.missing,
                        profile.rows
                    ),
                ));
            }
        }
    }
    diagnostics
}
