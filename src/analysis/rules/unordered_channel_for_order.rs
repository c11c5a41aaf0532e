//! `unordered-channel-for-order`: hue, shape or texture carrying ordered or quantitative values.
//! Documentation: `unordered-channel-for-order.md`.

use crate::analysis::channels::{kind_phrase, misleading_bindings, move_binding_fix};
use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Severity};
use crate::knowledge::expressiveness::MisleadingReason;

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
    misleading_bindings(context.spec(), &context.layers, MisleadingReason::CannotShowOrder)
        .into_iter()
        .map(|found| {
            let facts = found.facts;
            let channel = facts.binding.channel.as_str();
            let mut diagnostic = Diagnostic::new(
                ID,
                Severity::Warning,
                facts.binding.key_range,
                format!(
                    "`{}` is {} column on `{channel}`: {channel} has no order readers can see, so which values are larger is lost",
                    facts.display_name(),
                    kind_phrase(found.kind),
                ),
            );
            if let Some(target) = found.better_free_channel {
                diagnostic.fixes.push(move_binding_fix(facts, target));
            }
            diagnostic
        })
        .collect()
}
