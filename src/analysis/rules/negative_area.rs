//! `negative-area`: the area channel over negative values. Documentation: `negative-area.md`.

use crate::analysis::channels::drawn_nouns;
use crate::analysis::drawn::{drawn_min, drawn_place, panel_labels, Measure};
use crate::analysis::rules::part_to_whole_invalid::format_number;
use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Severity};
use crate::spec::model::Channel;

pub const ID: &str = "negative-area";

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Error,
    group: "expressiveness",
    summary: "mark area driven by negative values",
    has_fix: false,
    docs: include_str!("negative-area.md"),
    check: RuleCheck::Semantic(check),
};

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let panels = panel_labels(context.evaluation);
    let mut diagnostics = Vec::new();
    for layer in &context.layers {
        let Some(facts) = layer.binding(Channel::Area) else {
            continue;
        };
        let (smallest, place) = match drawn_min(layer, Channel::Area, Measure::Values, &panels) {
            // what is drawn, after the summary
            Some(drawn) => (drawn.value, drawn_place(layer, &drawn)),
            None => {
                if facts
                    .binding
                    .summary
                    .as_ref()
                    .is_some_and(|summary| summary.value.is_counting())
                {
                    continue;
                }
                let Some(numbers) = facts.profile.and_then(|profile| profile.numeric.as_ref())
                else {
                    continue;
                };
                (numbers.min, String::new())
            }
        };
        if smallest >= 0.0 {
            continue;
        }
        diagnostics.push(Diagnostic::new(
            ID,
            Severity::Error,
            facts.binding.key_range,
            format!(
                "`{}` goes down to {}{place}, but {many} cannot be smaller than nothing: the negative values are drawn as tiny {many}, as large as their opposites, or not at all",
                facts.display_name(),
                format_number(smallest),
                many = drawn_nouns(layer).1
            ),
        ));
    }
    diagnostics
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::drawn::testing::{channel, chart, layer, mark, text};
    use crate::analysis::rules::messages_with_evaluation;
    use crate::eval::Datum;
    use crate::spec::model::{Mark, Summary};

    const BUBBLES: &str = r#"{ "mark": "point",
      "bind": { "x": "branch", "area": { "column": "margin", "summary": "sum" } } }"#;

    fn bubbles(sums: &[(&str, f64)]) -> crate::eval::EvaluatedChart {
        chart(vec![layer(
            Mark::Point,
            None,
            vec![
                channel(Channel::X, "branch", None),
                channel(Channel::Area, "margin", Some(Summary::Sum)),
            ],
            sums.iter()
                .map(|(branch, sum)| mark(vec![text(branch), Datum::Number(*sum)], 4))
                .collect(),
        )])
    }

    #[test]
    fn the_drawn_sums_decide_not_the_rows() {
        // rows may be negative, but every drawn sum is positive: nothing to say
        assert!(messages_with_evaluation(
            check,
            BUBBLES,
            &bubbles(&[("Millbrook", 12.5), ("Quayside", 3.0)])
        )
        .is_empty());
        assert_eq!(
            messages_with_evaluation(
                check,
                BUBBLES,
                &bubbles(&[("Millbrook", 12.5), ("Quayside", -3.25)])
            ),
            vec!["`sum(margin)` goes down to -3.25 (at `Quayside`), but circles cannot be smaller than nothing: the negative values are drawn as tiny circles, as large as their opposites, or not at all".to_string()]
        );
    }
}
