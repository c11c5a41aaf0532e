//! `too-many-slices`: a pie or ring with more slices than can be compared. Documentation:
//! `too-many-slices.md`.

use crate::analysis::rules::capacity::{check_capacity_with, Counted};
use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Severity};
use crate::spec::model::{Channel, Mark};

pub const ID: &str = "too-many-slices";

/// Slices a pie can hold before the small ones become unreadable. Common practice, no source:
/// about 6.
pub const MAX_SLICES: u64 = 6;

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Warning,
    group: "capacity",
    summary: "more wedge slices than can be compared",
    has_fix: false,
    docs: include_str!("too-many-slices.md"),
    check: RuleCheck::Semantic(check),
};

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let mut diagnostics = Vec::new();
    for layer in &context.layers {
        let Some(mark) = layer
            .layer
            .mark
            .as_ref()
            .filter(|mark| mark.value == Mark::Wedge)
        else {
            continue;
        };
        // the column that splits the whole into slices
        let splitter = [
            Channel::Hue,
            Channel::Texture,
            Channel::Luminance,
            Channel::Saturation,
            Channel::Label,
        ]
        .into_iter()
        .find_map(|channel| layer.binding(channel));
        if let Some(facts) = splitter {
            let channel = facts.binding.channel.as_str();
            if let Some(diagnostic) = check_capacity_with(
                ID,
                layer,
                facts,
                Counted::PerPanel,
                mark.range,
                MAX_SLICES,
                |name, count| {
                    format!(
                        "`{name}` on `{channel}` cuts the pie into one slice for each of its {count}; past about {MAX_SLICES} slices the small ones cannot be compared or labelled"
                    )
                },
            ) {
                diagnostics.push(diagnostic);
            }
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
    use crate::spec::model::Summary;

    const PIE: &str = r#"{ "mark": "wedge",
      "bind": { "hue": "branch", "angle": { "column": "loaves", "summary": "sum" } } }"#;

    fn pie(branches: usize, panels: u32) -> crate::eval::EvaluatedChart {
        let mut marks = Vec::new();
        for panel in 0..panels {
            for index in 0..branches {
                let mut slice = mark(
                    vec![text(&format!("branch {index}")), Datum::Number(10.0)],
                    2,
                );
                slice.panel = panel;
                marks.push(slice);
            }
        }
        chart(vec![layer(
            Mark::Wedge,
            None,
            vec![
                channel(Channel::Hue, "branch", None),
                channel(Channel::Angle, "loaves", Some(Summary::Sum)),
            ],
            marks,
        )])
    }

    #[test]
    fn the_slices_drawn_in_one_pie_are_counted() {
        assert_eq!(
            messages_with_evaluation(check, PIE, &pie(8, 1)),
            vec!["`branch` on `hue` cuts the pie into one slice for each of its 8 distinct values drawn; past about 6 slices the small ones cannot be compared or labelled".to_string()]
        );
        // 6 slices in each of 3 pies: 6 to a pie, not 18
        assert!(messages_with_evaluation(check, PIE, &pie(6, 3)).is_empty());
    }
}
