//! `negative-area`: the area channel over negative values. Documentation: `negative-area.md`.

use crate::analysis::channels::drawn_nouns;
use crate::analysis::rules::part_to_whole_invalid::format_number;
use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Severity};
use crate::spec::model::Channel;

pub const ID: &str = "negative-area";

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Error,
    group: "expressiveness",
    summary: "mark area driven by negative values",
    has_fix: false,
    docs: include_str!("negative-area.md"),
    check: RuleCheck::Semantic(check),
};

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let mut diagnostics = Vec::new();
    for layer in &context.layers {
        let Some(facts) = layer.binding(Channel::Area) else {
            continue;
        };
        if facts
            .binding
            .summary
            .as_ref()
            .is_some_and(|summary| summary.value.is_counting())
        {
            continue;
        }
        let Some(numbers) = facts.profile.and_then(|profile| profile.numeric.as_ref()) else {
            continue;
        };
        if numbers.min >= 0.0 {
            continue;
        }
        diagnostics.push(Diagnostic::new(
            ID,
            Severity::Error,
            facts.binding.key_range,
            format!(
                "`{}` goes down to {}, but {many} cannot be smaller than nothing: the negative values are drawn as tiny {many}, as large as their opposites, or not at all",
                facts.display_name(),
                format_number(numbers.min),
                many = drawn_nouns(layer).1
            ),
        ));
    }
    diagnostics
}
