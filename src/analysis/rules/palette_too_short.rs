//! `palette-too-short`: a colour channel on discrete values (categories, ordered levels or
//! bins) with fewer palette colours than values, so some values must share a colour.
//! Documentation: `palette-too-short.md`.

use crate::analysis::facts::BindingFacts;
use crate::analysis::rules::palette_too_similar::{palette_bindings, palette_name};
use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::data::DistinctCount;
use crate::diagnostic::{Diagnostic, Severity};
use crate::spec::model::AttributeKind;

pub const ID: &str = "palette-too-short";

/// An estimated distinct count is trusted to exceed the palette only when the palette is shorter
/// than the estimate by more than this many standard errors (about 99.7 % one-sided for a
/// normal error; our choice).
pub const ESTIMATE_STANDARD_ERRORS: f64 = 3.0;

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Error,
    group: "colour",
    summary: "fewer palette colours than the values they must tell apart",
    has_fix: false,
    docs: include_str!("palette-too-short.md"),
    check: RuleCheck::Semantic(check),
};

/// How many values a binding's palette must cover, and where the count comes from.
#[derive(Clone, Debug, PartialEq)]
pub enum ValueCount {
    /// `bins` on the binding.
    Bins(u64),
    /// Distinct values in the data (exact, or an estimate with its relative error).
    Distinct(DistinctCount),
    /// `levels` declared for the column (used when the data was not read).
    Levels(u64),
}

impl ValueCount {
    /// True when `palette_length` colours are surely too few.
    pub fn exceeds(&self, palette_length: u64) -> bool {
        match self {
            ValueCount::Bins(count) | ValueCount::Levels(count) => *count > palette_length,
            ValueCount::Distinct(distinct) if distinct.exact => distinct.value > palette_length,
            ValueCount::Distinct(distinct) => {
                let value = distinct.value as f64;
                let error = value * distinct.relative_error.max(0.0);
                value - ESTIMATE_STANDARD_ERRORS * error > palette_length as f64
            }
        }
    }

    fn describe(&self, column: &str) -> String {
        match self {
            ValueCount::Bins(count) => format!("{count} bins of `{column}`"),
            ValueCount::Distinct(distinct) if distinct.exact => {
                format!("{} distinct values of `{column}`", distinct.value)
            }
            ValueCount::Distinct(distinct) => format!(
                "about {} distinct values of `{column}` (estimated, ±{:.1} %)",
                distinct.value,
                distinct.relative_error * 100.0
            ),
            ValueCount::Levels(count) => format!("{count} declared levels of `{column}`"),
        }
    }
}

/// The values a binding's colours must tell apart: bins, else for categorical and ordered
/// values the distinct values in the data, else the declared levels. `None` for quantitative
/// and time values (their palette is a ramp whose colours are stops between which values are
/// blended) and when the count is not known.
pub fn value_count(facts: &BindingFacts<'_>) -> Option<ValueCount> {
    if let Some(bins) = &facts.binding.bins {
        return Some(ValueCount::Bins(u64::from(bins.value)));
    }
    if !matches!(
        facts.kind,
        Some(AttributeKind::Categorical | AttributeKind::Ordered)
    ) {
        return None;
    }
    if let Some(profile) = facts.profile {
        return Some(ValueCount::Distinct(profile.distinct.clone()));
    }
    facts
        .declaration
        .and_then(|declaration| declaration.levels.as_ref())
        .map(|levels| ValueCount::Levels(levels.value.len() as u64))
}

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let mut diagnostics = Vec::new();
    for facts in palette_bindings(&context.layers) {
        let Some(palette) = &facts.binding.palette else {
            continue;
        };
        let Some(count) = value_count(facts) else {
            continue;
        };
        let length = palette.value.len() as u64;
        if !count.exceeds(length) {
            continue;
        }
        let colours = if length == 1 { "colour" } else { "colours" };
        diagnostics.push(Diagnostic::new(
            ID,
            Severity::Error,
            palette.range,
            format!(
                "{} has {length} {colours} for {}, so some values will share a colour",
                palette_name(facts),
                count.describe(&facts.display_name())
            ),
        ));
    }
    diagnostics
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The messages this rule gives for a spec without data.
    fn messages(spec: &str) -> Vec<String> {
        crate::analysis::rules::messages_without_data(check, spec)
    }

    #[test]
    fn declared_levels_count_when_there_is_no_data() {
        let found = messages(
            r##"{ "columns": { "crust": { "kind": "ordered", "levels": ["pale", "golden", "dark"] } }, "mark": "bar", "bind": { "x": "branch", "luminance": { "column": "crust", "palette": ["#b8762a", "#4a2a08"] } } }"##,
        );
        assert_eq!(
            found,
            vec![
                "the `luminance` palette of `crust` has 2 colours for 3 declared levels of `crust`, so some values will share a colour"
            ]
        );
        // without a kind, levels or data nothing is known
        assert!(messages(
            r##"{ "mark": "bar", "bind": { "x": "branch", "hue": { "column": "crust", "palette": ["#b8762a"] } } }"##
        )
        .is_empty());
    }

    fn estimate(value: u64, relative_error: f64) -> ValueCount {
        ValueCount::Distinct(DistinctCount {
            value,
            exact: false,
            relative_error,
        })
    }

    #[test]
    fn exact_counts_compare_directly() {
        let exact = |value| {
            ValueCount::Distinct(DistinctCount {
                value,
                exact: true,
                relative_error: 0.0,
            })
        };
        assert!(exact(6).exceeds(5));
        assert!(!exact(5).exceeds(5));
        assert!(ValueCount::Bins(4).exceeds(3));
        assert!(!ValueCount::Levels(3).exceeds(3));
    }

    #[test]
    fn close_estimates_are_skipped() {
        // 1000 ± 1.6 % (three errors: 952) against palettes of 900 and 960 colours
        assert!(estimate(1000, 0.016).exceeds(900));
        assert!(!estimate(1000, 0.016).exceeds(960));
        // a negative error (a broken profile) counts as exact, not as a wider margin
        assert!(estimate(1000, -1.0).exceeds(999));
    }

    #[test]
    fn messages_name_where_the_count_comes_from() {
        assert_eq!(
            ValueCount::Bins(6).describe("proof_minutes"),
            "6 bins of `proof_minutes`"
        );
        assert_eq!(
            estimate(1200, 0.0162).describe("loaf"),
            "about 1200 distinct values of `loaf` (estimated, ±1.6 %)"
        );
    }
}
