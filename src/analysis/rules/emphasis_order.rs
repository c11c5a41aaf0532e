//! `emphasis-order`: a more emphasized column on a lower-ranked channel than a less emphasized
//! one. Documentation: `emphasis-order.md`.

use crate::analysis::channels::{active_ranking, ordinal, perceived_for, swap_bindings_fix};
use crate::analysis::facts::{BindingFacts, LayerFacts};
use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Severity};
use crate::knowledge::expressiveness::{expresses, Expressiveness};
use crate::knowledge::perceived::perceived_channel;
use crate::knowledge::rankings::{Rank, Ranking};
use crate::spec::model::ChartSpec;

pub const ID: &str = "emphasis-order";

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Info,
    group: "effectiveness",
    summary: "a more important column on a less effective channel than a less important one",
    has_fix: true,
    docs: include_str!("emphasis-order.md"),
    check: RuleCheck::Semantic(check),
};

fn rank_on(
    spec: &ChartSpec,
    layer: &LayerFacts<'_>,
    facts: &BindingFacts<'_>,
    ranking: &Ranking,
) -> Option<Rank> {
    let kind = facts.kind?;
    let perceived = perceived_for(spec, layer, facts)?;
    ranking.rank(kind, perceived)
}

/// The rank `facts` would have on `other`'s channel, if that channel can express it.
fn rank_if_swapped(
    spec: &ChartSpec,
    layer: &LayerFacts<'_>,
    facts: &BindingFacts<'_>,
    other: &BindingFacts<'_>,
    ranking: &Ranking,
) -> Option<Rank> {
    let kind = facts.kind?;
    let mut context = crate::analysis::channels::channel_context(
        spec,
        layer,
        other.binding.channel,
        facts.binding.summary.is_some(),
    )?;
    // after the swap, the value axis follows the magnitude
    if other.binding.channel.is_position() && facts.is_magnitude() {
        context.value_axis = Some(other.binding.channel);
    } else if facts.binding.channel.is_position() && other.is_magnitude() {
        context.value_axis = Some(facts.binding.channel);
    }
    let perceived = perceived_channel(&context);
    (expresses(kind, perceived) == Expressiveness::Good).then_some(())?;
    ranking.rank(kind, perceived)
}

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let spec = context.spec();
    let ranking = active_ranking(context.config);
    let mut diagnostics = Vec::new();
    for layer in &context.layers {
        // bindings in emphasis order, most important first
        let mut emphasized: Vec<(usize, &BindingFacts<'_>)> = layer
            .bindings
            .iter()
            .filter_map(|facts| Some((spec.emphasis_rank(facts.column_name()?)?, facts)))
            .collect();
        emphasized.sort_by_key(|(position, _)| *position);
        let mut reported = Vec::new();
        for (index, (_, important)) in emphasized.iter().enumerate() {
            if reported.contains(&important.binding.channel) {
                continue;
            }
            let Some(important_rank) = rank_on(spec, layer, important, ranking) else {
                continue;
            };
            for (_, lesser) in emphasized.iter().skip(index + 1) {
                if reported.contains(&lesser.binding.channel) {
                    continue;
                }
                let Some(lesser_rank) = rank_on(spec, layer, lesser, ranking) else {
                    continue;
                };
                // the swap must help the important column and keep both expressive
                let (Some(important_after), Some(_)) = (
                    rank_if_swapped(spec, layer, important, lesser, ranking),
                    rank_if_swapped(spec, layer, lesser, important, ranking),
                ) else {
                    continue;
                };
                if !important_after.is_better_than(important_rank) {
                    continue;
                }
                diagnostics.push(
                    Diagnostic::new(
                        ID,
                        Severity::Info,
                        important.binding.key_range,
                        format!(
                            "`{}` comes before `{}` in `emphasis`, but sits on `{}` ({} for its kind in {}) while `{}` has `{}` ({}); on `{}` it would rank {}",
                            important.display_name(),
                            lesser.display_name(),
                            important.binding.channel.as_str(),
                            ordinal(important_rank.level),
                            ranking.citation.short,
                            lesser.display_name(),
                            lesser.binding.channel.as_str(),
                            ordinal(lesser_rank.level),
                            lesser.binding.channel.as_str(),
                            ordinal(important_after.level)
                        ),
                    )
                    .with_fix(swap_bindings_fix(important, lesser)),
                );
                reported.push(important.binding.channel);
                reported.push(lesser.binding.channel);
                break;
            }
        }
    }
    diagnostics
}
