//! `channel-not-on-mark`: a binding on a channel the layer's mark cannot show (`angle` on a
//! `point`, `area` on a `line`), driven by the knowledge table of which channels each mark shows
//! (`knowledge::perceived::MARK_CHANNELS`). Documentation: `channel-not-on-mark.md`.

use crate::analysis::channels::remove_binding_fix;
use crate::analysis::rules::{backticked, Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Fix, Severity, TextEdit};
use crate::knowledge::perceived::{channels_of_mark, marks_showing};
use crate::spec::model::Channel;
use crate::spec::schema::json_string;

pub const ID: &str = "channel-not-on-mark";

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Error,
    group: "expressiveness",
    summary: "a channel the layer's mark cannot show",
    has_fix: true,
    docs: include_str!("channel-not-on-mark.md"),
    check: RuleCheck::Semantic(check),
};

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let mut diagnostics = Vec::new();
    for layer in &context.layers {
        let (Some(mark), Some(written_mark)) = (layer.mark(), layer.layer.mark.as_ref()) else {
            continue;
        };
        let bound: Vec<Channel> = layer
            .layer
            .bindings
            .iter()
            .map(|binding| binding.channel)
            .collect();
        for facts in &layer.unshown {
            let channel = facts.binding.channel;
            let shown: Vec<&str> = channels_of_mark(mark)
                .iter()
                .map(|channel| channel.as_str())
                .collect();
            let mut diagnostic = Diagnostic::new(
                ID,
                Severity::Error,
                facts.binding.key_range,
                format!(
                    "a `{}` mark cannot show `{}`, so `{}` is not drawn; it shows {}",
                    mark.as_str(),
                    channel.as_str(),
                    facts.display_name(),
                    backticked(&shown, shown.len())
                ),
            );
            if let Some(fix) = remove_binding_fix(&context.document.tree, facts) {
                diagnostic.fixes.push(fix);
            }
            // where exactly one mark shows this channel and every other bound one, offer it
            if let [other] = marks_showing(&bound).as_slice() {
                diagnostic.fixes.push(Fix::quick(
                    format!(
                        "draw `{}` marks instead of `{}`, which can show `{}`",
                        other.as_str(),
                        mark.as_str(),
                        channel.as_str()
                    ),
                    vec![TextEdit {
                        range: written_mark.range,
                        new_text: json_string(other.as_str()),
                    }],
                ));
            }
            diagnostics.push(diagnostic);
        }
    }
    diagnostics
}
