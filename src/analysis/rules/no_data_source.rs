//! `no-data-source`: a layer binds columns but reads no data (neither its own `source` nor the
//! chart's), so every check against the data is skipped. Documentation: `no-data-source.md`.
//!
//! Severity `info`: a spec without data is not wrong (a template whose data is supplied when it
//! is drawn, a draft), so it must not fail a run; but a spec that could not be checked against
//! its data must not look as clean as one that was. There is no quick fix: any `source` the fix
//! could write would name a file that does not exist or hold no rows, trading this note for an
//! error.

use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Severity};

pub const ID: &str = "no-data-source";

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Info,
    group: "data",
    summary: "no `source`: the checks against the data were skipped",
    has_fix: false,
    docs: include_str!("no-data-source.md"),
    check: RuleCheck::Semantic(check),
};

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let spec = context.spec();
    let without: Vec<_> = context
        .layers
        .iter()
        .filter(|layer| layer.source.is_none())
        .filter(|layer| layer.bindings.iter().any(|b| b.binding.column.is_some()))
        .collect();
    let all_without = without.len() == context.layers.len();
    let mut diagnostics = Vec::new();
    for layer in without {
        let range = layer
            .layer
            .mark
            .as_ref()
            .map(|mark| mark.range)
            .or(layer.layer.bind_range)
            .unwrap_or(layer.layer.range);
        let message = if !spec.uses_layers_key {
            "the chart reads no data, so its columns, kinds and values were not checked: add a `source` with a `path` to a data file or inline `rows`".to_string()
        } else if all_without {
            "no layer reads data, so the columns, kinds and values were not checked: add a `source` to the chart (a `path` to a data file or inline `rows`)".to_string()
        } else {
            format!(
                "layer {} reads no data (no `source` of its own and none on the chart), so its columns were not checked",
                layer.layer.index + 1
            )
        };
        diagnostics.push(Diagnostic::new(ID, Severity::Info, range, message));
        if all_without {
            break; // one note for the whole chart
        }
    }
    diagnostics
}
