//! `better-channel-free`: a column on a low-ranked channel while a higher-ranked channel that
//! can express its kind is free. Documentation: `better-channel-free.md`.

use crate::analysis::channels::{
    active_ranking, free_channels, move_binding_fix, ordinal, perceived_for, perceived_if_moved,
};
use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Severity};
use crate::knowledge::expressiveness::{expresses, Expressiveness};
use crate::spec::model::Channel;

pub const ID: &str = "better-channel-free";

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Info,
    group: "effectiveness",
    summary: "a column on a low-ranked channel while a better one is free",
    has_fix: true,
    docs: include_str!("better-channel-free.md"),
    check: RuleCheck::Semantic(check),
};

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let spec = context.spec();
    let ranking = active_ranking(context.config);
    let mut diagnostics = Vec::new();
    for layer in &context.layers {
        let free = free_channels(layer);
        for facts in &layer.bindings {
            let (Some(kind), Some(current)) = (facts.kind, perceived_for(spec, layer, facts))
            else {
                continue;
            };
            if expresses(kind, current) != Expressiveness::Good {
                continue; // the expressiveness rules speak first
            }
            let Some(current_rank) = ranking.rank(kind, current) else {
                continue;
            };
            let best = free
                .iter()
                .copied()
                .filter(|channel| *channel != Channel::Label)
                .filter_map(|channel| {
                    let moved = perceived_if_moved(spec, layer, facts, channel)?;
                    (expresses(kind, moved) == Expressiveness::Good)
                        .then_some(())
                        .and_then(|_| ranking.rank(kind, moved))
                        .filter(|rank| rank.is_better_than(current_rank))
                        .map(|rank| (channel, moved, rank))
                })
                .min_by_key(|(_, _, rank)| rank.level);
            let Some((channel, moved, rank)) = best else {
                continue;
            };
            diagnostics.push(
                Diagnostic::new(
                    ID,
                    Severity::Info,
                    facts.binding.key_range,
                    format!(
                        "`{}` ({}) is on `{}`, read as {} ({} of {} for {} data in {}), while `{}` is free and would be read as {} ({})",
                        facts.display_name(),
                        kind.as_str(),
                        facts.binding.channel.as_str(),
                        current.description(),
                        ordinal(current_rank.level),
                        current_rank.level_count,
                        kind.as_str(),
                        ranking.citation.short,
                        channel.as_str(),
                        moved.description(),
                        ordinal(rank.level)
                    ),
                )
                .with_fix(move_binding_fix(facts, channel)),
            );
        }
    }
    diagnostics
}
