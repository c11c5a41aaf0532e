//! Shared check of the capacity rules (`too-many-hues`, `too-many-shapes`, `too-many-slices`):
//! how many distinct values a channel is asked to tell apart: drawn, when the chart was
//! evaluated, else the column's distinct count in the profile.

use std::collections::{HashMap, HashSet};

use crate::analysis::drawn::datum_text;
use crate::analysis::facts::{BindingFacts, LayerFacts};
use crate::data::DistinctCount;
use crate::diagnostic::{Diagnostic, Severity};
use crate::text_range::TextRange;

/// "13 distinct values" or "about 1,200 distinct values (±2 %)".
pub fn distinct_phrase(distinct: &DistinctCount) -> String {
    if distinct.exact {
        format!("{} distinct values", distinct.value)
    } else {
        format!(
            "about {} distinct values (±{:.0} %)",
            distinct.value,
            distinct.relative_error * 100.0
        )
    }
}

/// Where the distinct drawn values are counted: over the whole chart (one legend), or in each
/// panel (one pie per panel), taking the largest.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Counted {
    AcrossPanels,
    PerPanel,
}

/// The distinct values drawn on `facts`' channel (missing values left out), when the layer was
/// evaluated and its marks kept.
pub fn drawn_distinct(
    layer: &LayerFacts<'_>,
    facts: &BindingFacts<'_>,
    counted: Counted,
) -> Option<u64> {
    let drawn = layer.drawn.filter(|drawn| drawn.density.is_none())?;
    let index = drawn.channel_index(facts.binding.channel)?;
    let mut seen: HashMap<u32, HashSet<String>> = HashMap::new();
    for mark in &drawn.marks {
        if let Some(text) = mark.values.get(index).and_then(datum_text) {
            let panel = match counted {
                Counted::AcrossPanels => 0,
                Counted::PerPanel => mark.panel,
            };
            seen.entry(panel).or_default().insert(text);
        }
    }
    Some(
        seen.values()
            .map(|values| values.len() as u64)
            .max()
            .unwrap_or(0),
    )
}

/// A diagnostic when the column bound by `facts` has more distinct values than `limit`.
pub fn check_capacity(
    id: &'static str,
    layer: &LayerFacts<'_>,
    facts: &BindingFacts<'_>,
    range: TextRange,
    limit: u64,
    what: &str,
) -> Option<Diagnostic> {
    check_capacity_with(
        id,
        layer,
        facts,
        Counted::AcrossPanels,
        range,
        limit,
        |name, count| {
            format!("`{name}` has {count}, but readers can tell apart only about {limit} {what}")
        },
    )
}

/// Like [`check_capacity`], counted as `counted`, with the message written by
/// `message(column, count phrase)`. The drawn values decide when the chart was evaluated
/// (`bins` then count as the bins drawn), else the profile's distinct count (not for bins).
pub fn check_capacity_with(
    id: &'static str,
    layer: &LayerFacts<'_>,
    facts: &BindingFacts<'_>,
    counted: Counted,
    range: TextRange,
    limit: u64,
    message: impl Fn(&str, &str) -> String,
) -> Option<Diagnostic> {
    if facts.binding.summary.is_some() {
        return None;
    }
    let count = match drawn_distinct(layer, facts, counted) {
        Some(drawn) if drawn <= limit => return None,
        Some(drawn) => {
            let sample = if layer.drawn_from_sample {
                " in the sampled head of the data"
            } else {
                ""
            };
            let place = match counted {
                Counted::PerPanel
                    if layer
                        .drawn
                        .is_some_and(|d| d.marks.iter().any(|m| m.panel > 0)) =>
                {
                    " in one panel"
                }
                _ => "",
            };
            format!("{drawn} distinct values drawn{place}{sample}")
        }
        None => {
            let profile = facts.profile?;
            if facts.binding.bins.is_some() || profile.distinct.value <= limit {
                return None;
            }
            distinct_phrase(&profile.distinct)
        }
    };
    Some(Diagnostic::new(
        id,
        Severity::Warning,
        range,
        message(&facts.display_name(), &count),
    ))
}
