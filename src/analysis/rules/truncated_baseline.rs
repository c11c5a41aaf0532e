//! `truncated-baseline`: bars or areas whose value axis does not start at zero, with Tufte's
//! lie factor computed from the data. Documentation: `truncated-baseline.md`.

use crate::analysis::facts::BindingFacts;
use crate::analysis::rules::part_to_whole_invalid::format_number;
use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Fix, Severity, TextEdit};
use crate::knowledge::stevens::truncated_baseline_lie_factor;
use crate::spec::model::{MappingFrom, Mark, Summary};
use crate::spec::schema::json_string;
use crate::text_range::TextRange;

pub const ID: &str = "truncated-baseline";

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Warning,
    group: "baseline",
    summary: "bars or areas whose value axis does not start at zero (with the lie factor)",
    has_fix: true,
    docs: include_str!("truncated-baseline.md"),
    check: RuleCheck::Semantic(check),
};

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let mut diagnostics = Vec::new();
    for layer in &context.layers {
        if !matches!(layer.mark(), Some(Mark::Bar | Mark::Area)) {
            continue;
        }
        let Some(axis) = layer.value_axis() else {
            continue;
        };
        let Some(facts) = layer.binding(axis) else {
            continue;
        };
        let Some(mapping) = &facts.binding.mapping else {
            continue;
        };
        let zero_off = mapping
            .from
            .as_ref()
            .filter(|from| from.value == MappingFrom::Data);
        let domain = mapping
            .extent
            .as_ref()
            .filter(|domain| domain.value.0 > 0.0 || domain.value.1 < 0.0);
        if zero_off.is_none() && domain.is_none() {
            continue;
        }
        let mark_word = if layer.mark() == Some(Mark::Bar) {
            "bars"
        } else {
            "areas"
        };
        let (range, message) = match domain {
            Some(domain) => {
                let (low, high) = domain.value;
                let baseline = if low > 0.0 { low } else { high };
                (
                    domain.range,
                    format!(
                        "the {mark_word} of `{}` start at {} instead of 0{}",
                        facts.display_name(),
                        format_number(baseline),
                        lie_factor_clause(facts, baseline)
                    ),
                )
            }
            None => {
                let zero = zero_off.map_or(mapping.range, |from| from.range);
                let smallest = facts
                    .profile
                    .and_then(|profile| profile.numeric.as_ref())
                    .filter(|_| facts.binding.summary.is_none())
                    .map(|numbers| format!(" ({})", format_number(numbers.min)))
                    .unwrap_or_default();
                (
                    zero,
                    format!(
                        "`from` is `data`, so the {mark_word} of `{}` start near the smallest value{smallest} instead of 0: the shortest almost vanish and differences look many times larger than they are",
                        facts.display_name()
                    ),
                )
            }
        };
        let mut edits = Vec::new();
        let mut changes = Vec::new();
        if let Some(zero) = zero_off {
            edits.push(TextEdit {
                range: zero.range,
                new_text: json_string(MappingFrom::Zero.as_str()),
            });
            changes.push("`from` `data`->`zero`".to_string());
        }
        if let Some(domain) = domain {
            if let Some(bound_range) =
                extent_bound_range(context.text(), domain.range, domain.value.0 > 0.0)
            {
                let old = context
                    .text()
                    .get(bound_range.start..bound_range.end)
                    .unwrap_or("");
                edits.push(TextEdit {
                    range: bound_range,
                    new_text: "0".to_string(),
                });
                changes.push(format!("`extent` bound `{old}`->`0`"));
            }
        }
        let mut diagnostic = Diagnostic::new(ID, Severity::Warning, range, message);
        if !edits.is_empty() {
            edits.sort_by_key(|edit| edit.range.start);
            diagnostic.fixes.push(Fix::quick(
                format!("start the {mark_word} at zero: {}", changes.join(", ")),
                edits,
            ));
        }
        diagnostics.push(diagnostic);
    }
    diagnostics
}

/// ", so differences look 6.2x larger than they are (...)" from the bound data, when it can be
/// computed: the lie factor (Tufte 1983) of the smallest against the largest value.
fn lie_factor_clause(facts: &BindingFacts<'_>, baseline: f64) -> String {
    let Some(numbers) = facts.profile.and_then(|profile| profile.numeric.as_ref()) else {
        return ": bar lengths are no longer proportional to the values".to_string();
    };
    let summary = facts.binding.summary.as_ref().map(|summary| summary.value);
    // raw values and minima are exact; means, medians and maxima lie within the column's range,
    // so the smallest raw value gives the largest possible lie factor; sums and counts cannot
    // be bounded from the profile
    let qualifier = match summary {
        None | Some(Summary::Min) => "",
        Some(Summary::Mean | Summary::Median | Summary::Max) => "up to ",
        Some(Summary::Sum | Summary::Count | Summary::Distinct) => {
            return ": bar lengths are no longer proportional to the values".to_string();
        }
    };
    if numbers.min <= baseline {
        return format!(
            ": values below {} are cut off and the rest are not proportional",
            format_number(baseline)
        );
    }
    match truncated_baseline_lie_factor(baseline, numbers.min, numbers.max) {
        Some(factor) if factor.is_finite() => format!(
            ", so differences look {qualifier}{factor:.1}x larger than they are (Tufte's lie factor, smallest value {} against largest {})",
            format_number(numbers.min),
            format_number(numbers.max)
        ),
        _ => ": bar lengths are no longer proportional to the values".to_string(),
    }
}

/// The range of the lower (`first = true`) or upper bound number inside a `[low, high]` domain.
fn extent_bound_range(text: &str, domain: TextRange, first: bool) -> Option<TextRange> {
    let inner = text.get(domain.start..domain.end)?;
    let mut numbers = Vec::new();
    let mut start = None;
    for (index, c) in inner.char_indices() {
        let part_of_number = c.is_ascii_digit() || matches!(c, '-' | '+' | '.' | 'e' | 'E');
        match (part_of_number, start) {
            (true, None) => start = Some(index),
            (false, Some(begin)) => {
                numbers.push(TextRange::new(domain.start + begin, domain.start + index));
                start = None;
            }
            _ => {}
        }
    }
    if let Some(begin) = start {
        numbers.push(TextRange::new(domain.start + begin, domain.end));
    }
    if numbers.len() != 2 {
        return None;
    }
    Some(if first { numbers[0] } else { numbers[1] })
}
