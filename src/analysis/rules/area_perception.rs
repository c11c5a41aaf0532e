//! `area-perception`: sizes over a wide range look less different than they are (Stevens'
//! power law for area). Documentation: `area-perception.md`.

use crate::analysis::channels::{drawn_nouns, free_channels};
use crate::analysis::rules::part_to_whole_invalid::format_number;
use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Severity};
use crate::knowledge::perceived::PerceivedChannel;
use crate::knowledge::stevens::{apparent_ratio, exponent_for, FLANNERY_RADIUS_EXPONENT};
use crate::spec::model::Channel;

pub const ID: &str = "area-perception";

/// Ratio of largest to smallest value from which the rule speaks up. Common practice, no
/// source: at a ratio of 3 an exponent of 0.7 already shows it as about 2.2.
pub const MIN_RATIO: f64 = 3.0;

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Info,
    group: "baseline",
    summary: "mark sizes over a wide range look less different than they are",
    has_fix: false,
    docs: include_str!("area-perception.md"),
    check: RuleCheck::Semantic(check),
};

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let Some(exponent) = exponent_for(PerceivedChannel::Area) else {
        return Vec::new();
    };
    let mut diagnostics = Vec::new();
    for layer in &context.layers {
        let Some(facts) = layer.binding(Channel::Area) else {
            continue;
        };
        if facts.binding.summary.is_some() {
            continue; // summarised sizes are not in the profile
        }
        let Some(numbers) = facts.profile.and_then(|profile| profile.numeric.as_ref()) else {
            continue;
        };
        if numbers.min <= 0.0 || numbers.max <= 0.0 {
            continue; // negative-area speaks about those
        }
        let ratio = numbers.max / numbers.min;
        if ratio < MIN_RATIO {
            continue;
        }
        let looks = apparent_ratio(exponent.exponent, ratio);
        let (_, many) = drawn_nouns(layer);
        let instead = match free_channels(layer)
            .into_iter()
            .find(|channel| channel.is_position())
        {
            Some(free) => format!(
                "move `{}` to the free `{}`, where values are read nearly in proportion",
                facts.display_name(),
                free.as_str()
            ),
            None => format!(
                "to show the differences as they are, draw `{}` on a position or as the length of bars",
                facts.display_name()
            ),
        };
        diagnostics.push(Diagnostic::new(
            ID,
            Severity::Info,
            facts.binding.key_range,
            format!(
                "the largest `{}` ({}) is {:.1}x the smallest ({}), but {many} {:.1}x apart in size look only about {:.1}x apart (Stevens' exponent for area {}); radii drawn in proportion to value^{} make up for this (Flannery 1971), which the format cannot express: {instead}",
                facts.display_name(),
                format_number(numbers.max),
                ratio,
                format_number(numbers.min),
                ratio,
                looks,
                exponent.exponent,
                FLANNERY_RADIUS_EXPONENT
            ),
        ));
    }
    diagnostics
}
