//! `ordered-channel-for-categories`: magnitude channels (length, area, angle, luminance,
//! saturation) carrying unordered categories. Documentation: `ordered-channel-for-categories.md`.

use crate::analysis::channels::{misleading_bindings, move_binding_fix};
use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Severity};
use crate::knowledge::expressiveness::MisleadingReason;

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
    misleading_bindings(
        context.spec(),
        &context.layers,
        MisleadingReason::ImpliesOrderTheDataLacks,
    )
    .into_iter()
    .map(|found| {
        let facts = found.facts;
        let values = facts
            .profile
            .map(|profile| format!(" ({} distinct values)", profile.distinct.value))
            .unwrap_or_default();
        let channel = facts.binding.channel.as_str();
        // say what the eye reads only when it is not the key itself (a bar's `y` is a length)
        let reading = if found.perceived.as_str() == channel {
            format!("`{channel}`")
        } else {
            format!("`{channel}`, read as {},", found.perceived.description())
        };
        let mut diagnostic = Diagnostic::new(
            ID,
            Severity::Warning,
            facts.binding.key_range,
            format!(
                "`{}` is categorical{values}, but {reading} shows more and less: it ranks the categories in an order they do not have",
                facts.display_name(),
            ),
        );
        if let Some(target) = found.better_free_channel {
            diagnostic.fixes.push(move_binding_fix(facts, target));
        }
        diagnostic
    })
    .collect()
}
