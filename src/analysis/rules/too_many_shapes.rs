//! `too-many-shapes`: more categories on shape than readers can tell apart. Documentation:
//! `too-many-shapes.md`.

use crate::analysis::rules::capacity::check_capacity;
use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Severity};
use crate::spec::model::Channel;

pub const ID: &str = "too-many-shapes";

/// Distinct shapes readers can tell apart at a glance. Common practice, no source: about 6.
pub const MAX_SHAPES: u64 = 6;

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Warning,
    group: "capacity",
    summary: "more distinct values on shape than readers can tell apart",
    has_fix: false,
    docs: include_str!("too-many-shapes.md"),
    check: RuleCheck::Semantic(check),
};

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    context
        .layers
        .iter()
        .filter_map(|layer| {
            let facts = layer.binding(Channel::Shape)?;
            check_capacity(
                ID,
                layer,
                facts,
                facts.binding.key_range,
                MAX_SHAPES,
                "shapes",
            )
        })
        .collect()
}
