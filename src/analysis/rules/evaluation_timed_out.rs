//! `evaluation-timed-out`: evaluating the chart over all of its rows took longer than the time
//! budget (`evaluate-seconds` under `[data]`), so the layers still being read were left out of
//! the evaluation and the rules that judge what is drawn read those layers' profiles instead.
//! Documentation: `evaluation-timed-out.md`.
//!
//! Severity `warning`: the spec is not wrong, but its report is less complete than one whose
//! evaluation finished, and a CI run must not take that for a clean chart. No quick fix: the
//! budget is a project setting, not something in the spec.

use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Severity};

pub const ID: &str = "evaluation-timed-out";

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Warning,
    group: "data",
    summary: "evaluating the chart over its data ran out of time; what it draws was not checked",
    has_fix: false,
    docs: include_str!("evaluation-timed-out.md"),
    check: RuleCheck::Semantic(check),
};

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let Some(evaluation) = context.evaluation else {
        return Vec::new();
    };
    let spec = context.spec();
    let mut diagnostics = Vec::new();
    for facts in &context.layers {
        let layer = facts.layer;
        if !evaluation.timed_out.contains(&layer.index) {
            continue;
        }
        let range = layer
            .mark
            .as_ref()
            .map(|mark| mark.range)
            .or(layer.bind_range)
            .unwrap_or(layer.range);
        let what = if spec.uses_layers_key {
            format!("layer {}", layer.index + 1)
        } else {
            "the chart".to_string()
        };
        diagnostics.push(Diagnostic::new(
            ID,
            Severity::Warning,
            range,
            format!(
                "evaluating {what} over its data took longer than the time budget of {} and was stopped, so the checks of what it draws used the data's profile instead; `evaluate-seconds` under `[data]` in markwell.toml (or `--evaluate-seconds`) raises the budget",
                evaluation.time_budget.describe()
            ),
        ));
    }
    diagnostics
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::{analyze_with_evaluation, parse_document, AnalysisConfig};
    use crate::data::DataContext;

    fn findings(text: &str, timed_out: Vec<usize>) -> Vec<Diagnostic> {
        let document = parse_document(text);
        let mut evaluation = crate::analysis::drawn::testing::chart(Vec::new());
        evaluation.timed_out = timed_out;
        evaluation.time_budget = crate::budget::TimeBudget::seconds(0.25);
        analyze_with_evaluation(
            &document,
            &DataContext::default(),
            &AnalysisConfig::default(),
            Some(&evaluation),
        )
        .into_iter()
        .filter(|diagnostic| diagnostic.rule == ID)
        .collect()
    }

    #[test]
    fn names_each_layer_left_out_on_its_mark() {
        let text = r#"{ "layers": [
            { "mark": "bar", "bind": { "x": "pier" } },
            { "mark": "point", "bind": { "x": "pier" } } ] }"#;
        let found = findings(text, vec![1]);
        assert_eq!(found.len(), 1, "{found:?}");
        assert_eq!(&text[found[0].range.start..found[0].range.end], "\"point\"");
        assert!(found[0].message.contains("layer 2"), "{}", found[0].message);
        assert!(found[0].message.contains("0.25 s"), "{}", found[0].message);
        assert!(findings(text, Vec::new()).is_empty());
    }

    #[test]
    fn a_chart_without_layers_is_the_chart() {
        let text = r#"{ "mark": "bar", "bind": { "x": "pier" } }"#;
        let found = findings(text, vec![0]);
        assert_eq!(found.len(), 1, "{found:?}");
        assert!(found[0].message.starts_with("evaluating the chart"));
    }
}
