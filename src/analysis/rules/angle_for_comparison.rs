//! `angle-for-comparison`: wedge slices where the chart's purpose is comparison. Documentation:
//! `angle-for-comparison.md`.

use crate::analysis::channels::arc_to_bar_fix;
use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Severity};
use crate::spec::model::{Mark, Purpose};

pub const ID: &str = "angle-for-comparison";

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Warning,
    group: "effectiveness",
    summary: "wedge slices in a chart meant for comparison",
    has_fix: true,
    docs: include_str!("angle-for-comparison.md"),
    check: RuleCheck::Semantic(check),
};

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let spec = context.spec();
    if spec.purpose.as_ref().map(|purpose| purpose.value) != Some(Purpose::Compare) {
        return Vec::new();
    }
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
        let mut diagnostic = Diagnostic::new(
            ID,
            Severity::Warning,
            mark.range,
            "the chart is for comparing, but wedge slices are read by angle and area, which readers judge far less accurately than the lengths of bars",
        );
        if let Some(fix) = arc_to_bar_fix(layer) {
            diagnostic.fixes.push(fix);
        }
        diagnostics.push(diagnostic);
    }
    diagnostics
}
