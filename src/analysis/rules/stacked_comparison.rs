//! `stacked-comparison`: stacked bars or areas where the chart's purpose is comparison.
//! Documentation: `stacked-comparison.md`.

use crate::analysis::channels::unstack_fix;
use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, Severity};
use crate::spec::model::{Mark, Purpose};

pub const ID: &str = "stacked-comparison";

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Warning,
    group: "effectiveness",
    summary: "stacked bars or areas in a chart meant for comparison",
    has_fix: true,
    docs: include_str!("stacked-comparison.md"),
    check: RuleCheck::Semantic(check),
};

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let spec = context.spec();
    if spec.purpose.as_ref().map(|purpose| purpose.value) != Some(Purpose::Compare) {
        return Vec::new();
    }
    let mut diagnostics = Vec::new();
    for layer in &context.layers {
        if !matches!(layer.mark(), Some(Mark::Bar | Mark::Area)) {
            continue;
        }
        let Some(arrange) = layer
            .layer
            .arrange
            .as_ref()
            .filter(|arrange| arrange.value.is_stacked())
        else {
            continue;
        };
        let mut diagnostic = Diagnostic::new(
            ID,
            Severity::Warning,
            arrange.range,
            format!(
                "the chart is for comparing, but `{}` puts only the bottom series on the common baseline: the others are judged as lengths on shifting baselines",
                arrange.value.as_str()
            ),
        );
        if let Some(fix) = unstack_fix(layer) {
            diagnostic.fixes.push(fix);
        }
        diagnostics.push(diagnostic);
    }
    diagnostics
}
