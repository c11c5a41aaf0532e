//! `connected-unordered`: a line or area drawn across unordered categories. Documentation:
//! `connected-unordered.md`.

use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Fix, Severity, TextEdit};
use crate::spec::model::{AttributeKind, Channel, Mark};
use crate::spec::schema::json_string;

pub const ID: &str = "connected-unordered";

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Warning,
    group: "expressiveness",
    summary: "a line or area joining unordered categories",
    has_fix: true,
    docs: include_str!("connected-unordered.md"),
    check: RuleCheck::Semantic(check),
};

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let mut diagnostics = Vec::new();
    for layer in &context.layers {
        let Some(mark) = layer.layer.mark.as_ref() else {
            continue;
        };
        if !matches!(mark.value, Mark::Line | Mark::Area) {
            continue;
        }
        // the axis the line runs along is the one that is not the value axis
        let run_axis = match layer.value_axis() {
            Some(Channel::X) => Channel::Y,
            _ => Channel::X,
        };
        let Some(facts) = layer.binding(run_axis) else {
            continue;
        };
        if facts.kind != Some(AttributeKind::Categorical) {
            continue;
        }
        let replacement = if mark.value == Mark::Line {
            Mark::Point
        } else {
            Mark::Bar
        };
        diagnostics.push(
            Diagnostic::new(
                ID,
                Severity::Warning,
                mark.range,
                format!(
                    "{} joins the values of `{}` in sequence, but `{}` is categorical: the slopes between them mean nothing",
                    if mark.value == Mark::Line { "a line" } else { "an area" },
                    facts.display_name(),
                    facts.display_name()
                ),
            )
            .with_fix(Fix::quick(
                format!(
                    "draw {}s, which are not joined: mark `{}`->`{}`",
                    replacement.as_str(),
                    mark.value.as_str(),
                    replacement.as_str()
                ),
                vec![TextEdit {
                    range: mark.range,
                    new_text: json_string(replacement.as_str()),
                }],
            )),
        );
    }
    diagnostics
}
