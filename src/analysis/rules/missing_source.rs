//! `missing-source`: the data a spec reads is not there: the file is absent, cannot be opened,
//! lies outside the workspace, or the `source` names no data at all. Data that is there but
//! broken is `malformed-data`'s. Documentation: `missing-source.md`.

use crate::analysis::rules::{Rule, RuleCheck, RuleContext};
use crate::data::{DataError, DataErrorKind, DataProfile, SourceKey};
use crate::diagnostic::{Diagnostic, RelatedLocation, RelatedTarget, Severity};
use crate::spec::model::{Source, SourceLocation};

pub const ID: &str = "missing-source";

pub const RULE: Rule = Rule {
    id: ID,
    default_severity: Severity::Error,
    group: "data",
    summary: "the data file is absent, cannot be opened or lies outside the workspace",
    has_fix: false,
    docs: include_str!("missing-source.md"),
    check: RuleCheck::Semantic(check),
};

/// Whether a data error means the data could not be reached (this rule), as opposed to data
/// that was reached but does not read as a table (`malformed-data`).
pub fn is_absent(kind: DataErrorKind) -> bool {
    match kind {
        DataErrorKind::NotFound
        | DataErrorKind::PermissionDenied
        | DataErrorKind::IsDirectory
        | DataErrorKind::OutsideWorkspace
        | DataErrorKind::Io
        | DataErrorKind::BadPath
        | DataErrorKind::Remote
        | DataErrorKind::ChangedDuringScan
        | DataErrorKind::Cancelled
        | DataErrorKind::NotRegular
        | DataErrorKind::TooLarge
        | DataErrorKind::TimedOut
        | DataErrorKind::SampleIncomplete => true,
        DataErrorKind::Binary
        | DataErrorKind::InvalidUtf8
        | DataErrorKind::Empty
        | DataErrorKind::HeaderOnly
        | DataErrorKind::BadHeader
        | DataErrorKind::Malformed => false,
    }
}

/// What loading one distinct source gave.
pub enum SourceOutcome<'a> {
    /// A `source` with neither `path` nor `rows`.
    NoLocation,
    Failed(&'a DataError),
    Read(&'a DataProfile),
}

/// Every distinct source of the spec (the chart's and the layers'), once each, with what
/// loading it gave; sources the front end did not load are left out.
pub fn source_outcomes<'a>(context: &RuleContext<'a>) -> Vec<(&'a Source, SourceOutcome<'a>)> {
    let spec = context.spec();
    let sources = spec
        .source
        .iter()
        .chain(spec.layers.iter().filter_map(|layer| layer.source.as_ref()));
    let mut seen: Vec<SourceKey> = Vec::new();
    let mut out = Vec::new();
    for source in sources {
        if matches!(source.location, SourceLocation::Missing) {
            out.push((source, SourceOutcome::NoLocation));
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
            Some(Err(error)) => out.push((source, SourceOutcome::Failed(error))),
            Some(Ok(profile)) => out.push((source, SourceOutcome::Read(profile.as_ref()))),
            None => {}
        }
    }
    out
}

fn check(context: &RuleContext<'_>) -> Vec<Diagnostic> {
    let mut diagnostics = Vec::new();
    for (source, outcome) in source_outcomes(context) {
        match outcome {
            SourceOutcome::NoLocation => diagnostics.push(Diagnostic::new(
                ID,
                Severity::Error,
                source.range,
                "`source` needs a `path` to a data file or inline `rows`",
            )),
            SourceOutcome::Failed(error) if is_absent(error.kind) => {
                diagnostics.push(error_diagnostic(ID, source, error));
            }
            SourceOutcome::Failed(_) | SourceOutcome::Read(_) => {}
        }
    }
    diagnostics
}

/// The range of `path` (or `rows`) inside the source.
pub fn location_range(source: &Source) -> crate::TextRange {
    match &source.location {
        SourceLocation::Path(path) => path.range,
        SourceLocation::Rows { range, .. } => *range,
        SourceLocation::Missing => source.range,
    }
}

/// A diagnostic for a data error under `rule`, pointing at the data file's line when it has one.
pub fn error_diagnostic(rule: &'static str, source: &Source, error: &DataError) -> Diagnostic {
    // a sample without one whole row is no finding yet: the full profile follows
    let severity = if error.kind == DataErrorKind::SampleIncomplete {
        Severity::Info
    } else {
        Severity::Error
    };
    let mut diagnostic = Diagnostic::new(
        rule,
        severity,
        location_range(source),
        error.message.clone(),
    );
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
