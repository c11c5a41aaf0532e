//! `missing-source`: the data a spec reads is absent, unreadable, outside the workspace or
//! malformed. Documentation: `missing-source.md`.

use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::data::{DataError, SourceKey};
use crate::diagnostic::{Diagnostic, RelatedLocation, RelatedTarget, Severity};
use crate::spec::model::{Source, SourceLocation};

pub const ID: &str = "missing-source";

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Error,
    group: "data",
    summary: "the data file is absent, unreadable, outside the workspace or malformed",
    has_fix: false,
    docs: include_str!("missing-source.md"),
    check: RuleCheck::Semantic(check),
};

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let spec = context.spec();
    let mut diagnostics = Vec::new();
    let sources = spec
        .source
        .iter()
        .chain(spec.layers.iter().filter_map(|layer| layer.source.as_ref()));
    let mut seen: Vec<SourceKey> = Vec::new();
    for source in sources {
        if matches!(source.location, SourceLocation::Missing) {
            diagnostics.push(Diagnostic::new(
                ID,
                Severity::Error,
                source.range,
                "`source` needs a `path` to a data file or inline `rows`",
            ));
            continue;
        }
        let Some(key) = SourceKey::for_source(source) else {
            continue;
        };
        if seen.contains(&key) {
            continue;
        }
        seen.push(key);
        match context.data.for_source(source) {
            Some(Err(error)) => diagnostics.push(error_diagnostic(source, error)),
            Some(Ok(profile)) => {
                for problem in &profile.problems {
                    let mut diagnostic = Diagnostic::new(
                        ID,
                        Severity::Warning,
                        location_range(source),
                        format!("the data has a problem: {}", problem.message),
                    );
                    if let (Some(path), Some(line)) = (profile.path.as_ref(), problem.line) {
                        diagnostic.related.push(RelatedLocation {
                            target: RelatedTarget::File {
                                path: path.clone(),
                                line,
                                byte_offset: problem.byte_offset.unwrap_or(0),
                            },
                            message: problem.message.clone(),
                        });
                    }
                    diagnostics.push(diagnostic);
                }
            }
            None => {}
        }
    }
    diagnostics
}

/// The range of `path` (or `rows`) inside the source.
fn location_range(source: &Source) -> crate::TextRange {
    match &source.location {
        SourceLocation::Path(path) => path.range,
        SourceLocation::Rows { range, .. } => *range,
        SourceLocation::Missing => source.range,
    }
}

fn error_diagnostic(source: &Source, error: &DataError) -> Diagnostic {
    // a sample without one whole row is no finding yet: the full profile follows
    let severity = if error.kind == crate::data::DataErrorKind::SampleIncomplete {
        Severity::Info
    } else {
        Severity::Error
    };
    let mut diagnostic =
        Diagnostic::new(ID, severity, location_range(source), error.message.clone());
    if let (Some(path), Some(line)) = (error.path.as_ref(), error.line) {
        diagnostic.related.push(RelatedLocation {
            target: RelatedTarget::File {
                path: path.clone(),
                line,
                byte_offset: error.byte_offset.unwrap_or(0),
            },
            message: "here in the data file".to_string(),
        });
    }
    diagnostic
}
