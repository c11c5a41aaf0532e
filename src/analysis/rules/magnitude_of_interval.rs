//! `magnitude-of-interval`: lengths or areas drawn for values without a true zero.
//! Documentation: `magnitude-of-interval.md`.

use crate::analysis::channels::{drawn_nouns, perceived_for, twice_as_much_phrase};
use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Fix, Severity, TextEdit};
use crate::knowledge::perceived::PerceivedChannel;
use crate::spec::model::{Mark, ZeroMeaning};
use crate::spec::schema::json_string;

pub const ID: &str = "magnitude-of-interval";

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Warning,
    group: "expressiveness",
    summary: "length or area encoding values with no true zero (degC, calendar years)",
    has_fix: true,
    docs: include_str!("magnitude-of-interval.md"),
    check: RuleCheck::Semantic(check),
};

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let spec = context.spec();
    let mut diagnostics = Vec::new();
    for layer in &context.layers {
        for facts in &layer.bindings {
            if facts.zero != Some(ZeroMeaning::Arbitrary)
                || facts
                    .binding
                    .summary
                    .as_ref()
                    .is_some_and(|summary| summary.value.is_counting())
            {
                continue;
            }
            let Some(perceived) = perceived_for(spec, layer, facts) else {
                continue;
            };
            if !matches!(perceived, PerceivedChannel::Length | PerceivedChannel::Area) {
                continue;
            }
            let unit = facts
                .declaration
                .and_then(|declaration| declaration.unit.as_ref())
                .map(|unit| format!(" (in {})", unit.value))
                .unwrap_or_default();
            let mut diagnostic = Diagnostic::new(
                ID,
                Severity::Warning,
                facts.binding.key_range,
                format!(
                    "`{}`{unit} has no true zero, yet `{}` draws it as the {} of {}: {} does not mean twice as much",
                    facts.display_name(),
                    facts.binding.channel.as_str(),
                    perceived.description(),
                    drawn_nouns(layer).1,
                    twice_as_much_phrase(layer, perceived)
                ),
            );
            if let Some(mark) = layer.layer.mark.as_ref().filter(|mark| {
                matches!(mark.value, Mark::Bar | Mark::Area) && facts.binding.channel.is_position()
            }) {
                diagnostic.fixes.push(Fix::quick(
                    format!(
                        "draw points (a position needs no zero): mark `{}`->`{}`",
                        mark.value.as_str(),
                        Mark::Point.as_str()
                    ),
                    vec![TextEdit {
                        range: mark.range,
                        new_text: json_string(Mark::Point.as_str()),
                    }],
                ));
            }
            diagnostics.push(diagnostic);
        }
    }
    diagnostics
}
