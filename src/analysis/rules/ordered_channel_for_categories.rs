//! `ordered-channel-for-categories`: magnitude channels (length, area, angle, luminance,
//! saturation) carrying unordered categories. Documentation: `ordered-channel-for-categories.md`.

use crate::analysis::channels::{
    free_channels, move_binding_fix, perceived_for, perceived_if_moved,
};
use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Severity};
use crate::knowledge::expressiveness::{expresses, Expressiveness, MisleadingReason};
use crate::spec::model::Channel;

pub const ID: &str = "ordered-channel-for-categories";

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Warning,
    group: "expressiveness",
    summary: "length, area, angle, luminance or saturation carrying unordered categories",
    has_fix: true,
    docs: include_str!("ordered-channel-for-categories.md"),
    check: RuleCheck::Semantic(check),
};

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let spec = context.spec();
    let mut diagnostics = Vec::new();
    for layer in &context.layers {
        for facts in &layer.bindings {
            let (Some(kind), Some(perceived)) = (facts.kind, perceived_for(spec, layer, facts))
            else {
                continue;
            };
            if expresses(kind, perceived)
                != Expressiveness::Misleading(MisleadingReason::ImpliesOrderTheDataLacks)
            {
                continue;
            }
            let values = facts
                .profile
                .map(|profile| format!(" ({} distinct values)", profile.distinct.value))
                .unwrap_or_default();
            let mut diagnostic = Diagnostic::new(
                ID,
                Severity::Warning,
                facts.binding.key_range,
                format!(
                    "`{}` is categorical{values} but `{}` is read as {}, which ranks the categories as more and less",
                    facts.display_name(),
                    facts.binding.channel.as_str(),
                    perceived.description()
                ),
            );
            let target = free_channels(layer).into_iter().find(|channel| {
                *channel != Channel::Label
                    && perceived_if_moved(spec, layer, facts, *channel)
                        .is_some_and(|moved| expresses(kind, moved) == Expressiveness::Good)
            });
            if let Some(target) = target {
                diagnostic.fixes.push(move_binding_fix(facts, target));
            }
            diagnostics.push(diagnostic);
        }
    }
    diagnostics
}
