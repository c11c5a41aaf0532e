//! `log-of-nonpositive`: logarithmic spacing over data with zero or negative values. Documentation:
//! `log-of-nonpositive.md`.

use crate::analysis::channels::drawn_nouns;
use crate::analysis::drawn::{drawn_min, drawn_place, panel_labels, Measure};
use crate::analysis::rules::part_to_whole_invalid::format_number;
use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Fix, Severity, TextEdit};
use crate::spec::model::Spacing;
use crate::spec::schema::json_string;

pub const ID: &str = "log-of-nonpositive";

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Error,
    group: "expressiveness",
    summary: "logarithmic spacing over data with zero or negative values",
    has_fix: true,
    docs: include_str!("log-of-nonpositive.md"),
    check: RuleCheck::Semantic(check),
};

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let panels = panel_labels(context.evaluation);
    let mut diagnostics = Vec::new();
    for layer in &context.layers {
        for facts in &layer.bindings {
            let Some(spacing) = facts
                .binding
                .mapping
                .as_ref()
                .and_then(|mapping| mapping.spacing.as_ref())
                .filter(|spacing| spacing.value == Spacing::Logarithmic)
            else {
                continue;
            };
            let (smallest, place) =
                match drawn_min(layer, facts.binding.channel, Measure::Values, &panels) {
                    // what is drawn, after the summary
                    Some(drawn) => (drawn.value, drawn_place(layer, &drawn)),
                    None => {
                        // counts are at least 1; other summaries keep the sign of the values
                        if facts
                            .binding
                            .summary
                            .as_ref()
                            .is_some_and(|summary| summary.value.is_counting())
                        {
                            continue;
                        }
                        let Some(numbers) =
                            facts.profile.and_then(|profile| profile.numeric.as_ref())
                        else {
                            continue;
                        };
                        (numbers.min, String::new())
                    }
                };
            if smallest > 0.0 {
                continue;
            }
            diagnostics.push(
                Diagnostic::new(
                    ID,
                    Severity::Error,
                    spacing.range,
                    format!(
                        "`{}` goes down to {}{place}, and a logarithmic `{}` has no place for zero or negative values: those {} vanish",
                        facts.display_name(),
                        format_number(smallest),
                        facts.binding.channel.as_str(),
                        drawn_nouns(layer).1
                    ),
                )
                .with_fix(Fix::quick(
                    format!(
                        "space `{}` evenly: `{}`->`{}`",
                        facts.binding.channel.as_str(),
                        Spacing::Logarithmic.as_str(),
                        Spacing::Even.as_str()
                    ),
                    vec![TextEdit {
                        range: spacing.range,
                        new_text: json_string(Spacing::Even.as_str()),
                    }],
                )),
            );
        }
    }
    diagnostics
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::drawn::testing::{channel, chart, layer, mark, text};
    use crate::analysis::rules::messages_with_evaluation;
    use crate::eval::Datum;
    use crate::spec::model::{Channel, Mark, Summary};

    #[test]
    fn the_drawn_means_decide() {
        let spec = r#"{ "mark": "point", "bind": { "x": "branch",
          "y": { "column": "margin", "summary": "mean", "mapping": { "spacing": "logarithmic" } } } }"#;
        let means = |second: f64| {
            chart(vec![layer(
                Mark::Point,
                None,
                vec![
                    channel(Channel::X, "branch", None),
                    channel(Channel::Y, "margin", Some(Summary::Mean)),
                ],
                vec![
                    mark(vec![text("Millbrook"), Datum::Number(4.5)], 2),
                    mark(vec![text("Quayside"), Datum::Number(second)], 2),
                ],
            )])
        };
        assert!(messages_with_evaluation(check, spec, &means(0.5)).is_empty());
        assert_eq!(
            messages_with_evaluation(check, spec, &means(0.0)),
            vec!["`mean(margin)` goes down to 0 (at `Quayside`), and a logarithmic `y` has no place for zero or negative values: those circles vanish".to_string()]
        );
    }
}
