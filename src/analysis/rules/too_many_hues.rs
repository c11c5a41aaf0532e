//! `too-many-hues`: more categories on hue than readers can tell apart. Documentation:
//! `too-many-hues.md`.

use crate::analysis::rules::capacity::check_capacity;
use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Severity};
use crate::spec::model::{AttributeKind, Channel};

pub const ID: &str = "too-many-hues";

/// Distinct hues readers can tell apart and name. Common practice, no source: the usual advice
/// is about 8 to 12; 10 sits in the middle.
pub const MAX_HUES: u64 = 10;

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Warning,
    group: "capacity",
    summary: "more distinct values on hue than readers can tell apart",
    has_fix: false,
    docs: include_str!("too-many-hues.md"),
    check: RuleCheck::Semantic(check),
};

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    context
        .layers
        .iter()
        .filter_map(|layer| {
            // on arcs every hue is a slice: `too-many-slices` speaks about them
            if layer.mark() == Some(crate::spec::model::Mark::Wedge) {
                return None;
            }
            let facts = layer.binding(Channel::Hue)?;
            if facts.kind != Some(AttributeKind::Categorical) {
                return None; // ordered values on hue are another rule's matter
            }
            check_capacity(ID, layer, facts, facts.binding.key_range, MAX_HUES, "hues")
        })
        .collect()
}
