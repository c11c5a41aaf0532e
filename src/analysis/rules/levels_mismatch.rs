//! `levels-mismatch`: declared `levels` of an ordered column that do not match the data's
//! values. Documentation: `levels-mismatch.md`.

use crate::analysis::rules::{backticked, Rule, RuleCheck, RuleContext};
use crate::data::ColumnProfile;
use crate::diagnostic::{Diagnostic, Severity};

pub const ID: &str = "levels-mismatch";

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Warning,
    group: "data",
    summary: "declared `levels` that the data's values do not match",
    has_fix: false,
    docs: include_str!("levels-mismatch.md"),
    check: RuleCheck::Semantic(check),
};

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let mut diagnostics = Vec::new();
    for declaration in &context.spec().columns {
        let Some(levels) = &declaration.levels else {
            continue;
        };
        let Some(profile) = first_profile(context, &declaration.name.value) else {
            continue;
        };
        // only an exact list of values can be compared
        let Some(values) = &profile.all_values else {
            continue;
        };
        for level in &levels.value {
            if !values.iter().any(|(value, _)| *value == level.value) {
                diagnostics.push(Diagnostic::new(
                    ID,
                    Severity::Warning,
                    level.range,
                    format!(
                        "level `{}` does not occur in column `{}`",
                        level.value, declaration.name.value
                    ),
                ));
            }
        }
        let unplaced: Vec<&(String, u64)> = values
            .iter()
            .filter(|(value, _)| !levels.value.iter().any(|level| level.value == *value))
            .collect();
        if !unplaced.is_empty() {
            let rows: u64 = unplaced.iter().map(|(_, count)| count).sum();
            let shown = backticked(unplaced.iter().map(|(value, _)| value), 6);
            diagnostics.push(Diagnostic::new(
                ID,
                Severity::Warning,
                levels.range,
                format!(
                    "`levels` leaves out {} of column `{}` ({} rows), which then {} no place in the order: {}{}",
                    if unplaced.len() == 1 { "a value".to_string() } else { format!("{} values", unplaced.len()) },
                    declaration.name.value,
                    rows,
                    if unplaced.len() == 1 { "has" } else { "have" },
                    shown,
                    if unplaced.len() > 6 { ", ..." } else { "" }
                ),
            ));
        }
    }
    diagnostics
}

fn first_profile<'a>(context: &RuleContext<'a>, name: &str) -> Option<&'a ColumnProfile> {
    context
        .layers
        .iter()
        .filter_map(|layer| layer.data)
        .find_map(|data| data.column(name))
}
