//! `too-many-slices`: a pie or ring with more slices than can be compared. Documentation:
//! `too-many-slices.md`.

use crate::analysis::rules::capacity::check_capacity_with;
use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Severity};
use crate::spec::model::{Channel, Mark};

pub const ID: &str = "too-many-slices";

/// Slices a pie can hold before the small ones become unreadable. Common practice, no source:
/// about 6.
pub const MAX_SLICES: u64 = 6;

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Warning,
    group: "capacity",
    summary: "more wedge slices than can be compared",
    has_fix: false,
    docs: include_str!("too-many-slices.md"),
    check: RuleCheck::Semantic(check),
};

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let mut diagnostics = Vec::new();
    for layer in &context.layers {
        let Some(mark) = layer
            .layer
            .mark
            .as_ref()
            .filter(|mark| mark.value == Mark::Wedge)
        else {
            continue;
        };
        // the column that splits the whole into slices
        let splitter = [
            Channel::Hue,
            Channel::Texture,
            Channel::Luminance,
            Channel::Saturation,
            Channel::Label,
        ]
        .into_iter()
        .find_map(|channel| layer.binding(channel));
        if let Some(facts) = splitter {
            let channel = facts.binding.channel.as_str();
            if let Some(diagnostic) = check_capacity_with(
                ID,
                facts,
                mark.range,
                MAX_SLICES,
                |name, count| {
                    format!(
                        "`{name}` on `{channel}` cuts the pie into one slice for each of its {count}; past about {MAX_SLICES} slices the small ones cannot be compared or labelled"
                    )
                },
            ) {
                diagnostics.push(diagnostic);
            }
        }
    }
    diagnostics
}
