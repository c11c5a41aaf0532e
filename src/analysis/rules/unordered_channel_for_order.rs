//! `unordered-channel-for-order`: hue, shape or texture carrying ordered or quantitative values.
//! Documentation: `unordered-channel-for-order.md`.

use crate::analysis::channels::{
    free_channels, kind_phrase, move_binding_fix, perceived_for, perceived_if_moved,
};
use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Severity};
use crate::knowledge::expressiveness::{expresses, Expressiveness, MisleadingReason};

pub const ID: &str = "unordered-channel-for-order";

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Warning,
    group: "expressiveness",
    summary: "hue, shape or texture carrying ordered or quantitative values",
    has_fix: true,
    docs: include_str!("unordered-channel-for-order.md"),
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
                != Expressiveness::Misleading(MisleadingReason::CannotShowOrder)
            {
                continue;
            }
            let mut diagnostic = Diagnostic::new(
                ID,
                Severity::Warning,
                facts.binding.key_range,
                format!(
                    "`{}` is {} column on `{}`: {} has no order readers can see, so which values are larger is lost",
                    facts.display_name(),
                    kind_phrase(kind),
                    facts.binding.channel.as_str(),
                    facts.binding.channel.as_str()
                ),
            );
            // a free channel that shows order (luminance before saturation; position if free)
            let target = free_channels(layer).into_iter().find(|channel| {
                perceived_if_moved(spec, layer, facts, *channel)
                    .is_some_and(|moved| expresses(kind, moved) == Expressiveness::Good)
                    && !matches!(channel, crate::spec::model::Channel::Label)
            });
            if let Some(target) = target {
                diagnostic.fixes.push(move_binding_fix(facts, target));
            }
            diagnostics.push(diagnostic);
        }
    }
    diagnostics
}
