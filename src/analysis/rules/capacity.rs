//! Shared check of the capacity rules (`too-many-hues`, `too-many-shapes`, `too-many-slices`):
//! how many distinct values a channel is asked to tell apart.

use crate::analysis::facts::BindingFacts;
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

/// A diagnostic when the column bound by `facts` has more distinct values than `limit`.
pub fn check_capacity(
    id: &'static str,
    facts: &BindingFacts<'_>,
    range: TextRange,
    limit: u64,
    what: &str,
) -> Option<Diagnostic> {
    check_capacity_with(id, facts, range, limit, |name, count| {
        format!("`{name}` has {count}, but readers can tell apart only about {limit} {what}")
    })
}

/// Like [`check_capacity`], with the message written by `message(column, count phrase)`.
pub fn check_capacity_with(
    id: &'static str,
    facts: &BindingFacts<'_>,
    range: TextRange,
    limit: u64,
    message: impl Fn(&str, &str) -> String,
) -> Option<Diagnostic> {
    let profile = facts.profile?;
    if facts.binding.bins.is_some() || facts.binding.summary.is_some() {
        return None;
    }
    if profile.distinct.value <= limit {
        return None;
    }
    Some(Diagnostic::new(
        id,
        Severity::Warning,
        range,
        message(&facts.display_name(), &distinct_phrase(&profile.distinct)),
    ))
}
