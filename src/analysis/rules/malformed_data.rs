//! `malformed-data`: the data file is there but does not read as a clean table: binary content,
//! invalid UTF-8, no rows, a bad header, ragged rows, an unclosed quote, JSON that is not rows.
//! Documentation: `malformed-data.md`.

use crate::analysis::rules::missing_source::{
    error_diagnostic, is_absent, location_range, source_outcomes, SourceOutcome,
};
use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::diagnostic::{Diagnostic, RelatedLocation, RelatedTarget, Severity};

pub const ID: &str = "malformed-data";

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Warning,
    group: "data",
    summary: "the data file is there but broken: ragged rows, bad encoding, no rows, a bad header",
    has_fix: false,
    docs: include_str!("malformed-data.md"),
    check: RuleCheck::Semantic(check),
};

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let mut diagnostics = Vec::new();
    for (source, outcome) in source_outcomes(context) {
        match outcome {
            // the file could not be read as data at all: nothing was checked against it
            SourceOutcome::Failed(error) if !is_absent(error.kind) => {
                diagnostics.push(error_diagnostic(ID, source, error));
            }
            // the data was read, with problems: the checks ran on what could be read
            SourceOutcome::Read(profile) => {
                if let Some(diagnostic) = problems_diagnostic(source, profile) {
                    diagnostics.push(diagnostic);
                }
            }
            SourceOutcome::Failed(_) | SourceOutcome::NoLocation => {}
        }
    }
    diagnostics
}

/// One finding per source for the problems met while reading it: the first in the message, each
/// (the first included) at its line in the data file.
fn problems_diagnostic(
    source: &crate::spec::model::Source,
    profile: &crate::data::DataProfile,
) -> Option<Diagnostic> {
    let first = profile.problems.first()?;
    let mut message = match first.line {
        Some(line) => format!("line {} of the data: {}", line + 1, first.message),
        None => first.message.clone(),
    };
    let others = profile.problems.len() - 1;
    if others > 0 {
        message.push_str(&format!(
            " ({} more {} in the data)",
            others,
            if others == 1 { "problem" } else { "problems" }
        ));
    }
    let mut diagnostic = Diagnostic::new(ID, Severity::Warning, location_range(source), message);
    for (index, problem) in profile.problems.iter().enumerate() {
        if let (Some(path), Some(line)) = (profile.path.as_ref(), problem.line) {
            diagnostic.related.push(RelatedLocation {
                target: RelatedTarget::File {
                    path: path.clone(),
                    line,
                    byte_offset: problem.byte_offset.unwrap_or(0),
                },
                message: if index == 0 {
                    "this row".to_string()
                } else {
                    problem.message.clone()
                },
            });
        }
    }
    Some(diagnostic)
}
