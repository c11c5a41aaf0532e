//! The one diagnostic type: the currency of the analysis for the CLI and the language server.
//!
//! Ranges are byte ranges into the spec's text; front ends convert them (see `positions`).

use std::path::PathBuf;

use crate::text_range::TextRange;

#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Severity {
    Error,
    Warning,
    Info,
    Hint,
}

impl Severity {
    pub fn as_str(self) -> &'static str {
        match self {
            Severity::Error => "error",
            Severity::Warning => "warning",
            Severity::Info => "info",
            Severity::Hint => "hint",
        }
    }

    pub fn parse(text: &str) -> Option<Severity> {
        match text {
            "error" => Some(Severity::Error),
            "warning" => Some(Severity::Warning),
            "info" => Some(Severity::Info),
            "hint" => Some(Severity::Hint),
            _ => None,
        }
    }
}

/// One replacement in the spec's text.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct TextEdit {
    pub range: TextRange,
    pub new_text: String,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum FixKind {
    /// A safe edit that removes the diagnostic.
    QuickFix,
    /// A restructuring the user asks for (for example swapping two channels).
    Refactor,
}

/// A titled set of edits. Edits never overlap and are sorted by start.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Fix {
    pub title: String,
    pub kind: FixKind,
    pub edits: Vec<TextEdit>,
    /// The fix cannot change what the chart means (it only corrects a spelling to the one name
    /// it must have meant), so `markwell check --fix` applies it without asking. Default: false.
    /// The criterion is in DEVELOPERS.md ("Safe fixes").
    pub safe: bool,
}

impl Fix {
    pub fn quick(title: impl Into<String>, edits: Vec<TextEdit>) -> Fix {
        Fix {
            title: title.into(),
            kind: FixKind::QuickFix,
            edits,
            safe: false,
        }
    }

    /// Mark the fix as safe to apply unattended (see [`Fix::safe`]).
    pub fn marked_safe(mut self) -> Fix {
        self.safe = true;
        self
    }

    /// Apply the edits to `text`; edits are applied from the last to the first.
    pub fn apply(&self, text: &str) -> Option<String> {
        apply_edits(text, &self.edits)
    }
}

/// Apply non-overlapping edits to `text`. `None` when an edit is out of bounds, splits a
/// character or overlaps another.
pub fn apply_edits(text: &str, edits: &[TextEdit]) -> Option<String> {
    let mut sorted: Vec<&TextEdit> = edits.iter().collect();
    sorted.sort_by_key(|edit| (edit.range.start, edit.range.end));
    let mut out = String::with_capacity(text.len());
    let mut cursor = 0;
    for edit in sorted {
        if edit.range.start < cursor || edit.range.end > text.len() {
            return None;
        }
        out.push_str(text.get(cursor..edit.range.start)?);
        // `get` checks the char boundary of the end as well
        text.get(edit.range.start..edit.range.end)?;
        out.push_str(&edit.new_text);
        cursor = edit.range.end;
    }
    out.push_str(text.get(cursor..)?);
    Some(out)
}

/// Where a related location points.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum RelatedTarget {
    /// A range in the same spec document.
    SameDocument(TextRange),
    /// A place in another file (a data file), by 0-based line and byte offset of the line start.
    File {
        path: PathBuf,
        line: usize,
        byte_offset: u64,
    },
}

#[derive(Clone, Debug, PartialEq, Eq)]
pub struct RelatedLocation {
    pub target: RelatedTarget,
    pub message: String,
}

#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Diagnostic {
    pub range: TextRange,
    pub severity: Severity,
    /// Stable kebab-case rule id (`syntax-error`, `unknown-key`, `truncated-baseline`, ...).
    pub rule: &'static str,
    pub message: String,
    pub related: Vec<RelatedLocation>,
    pub fixes: Vec<Fix>,
}

impl Diagnostic {
    pub fn new(
        rule: &'static str,
        severity: Severity,
        range: TextRange,
        message: impl Into<String>,
    ) -> Diagnostic {
        Diagnostic {
            range,
            severity,
            rule,
            message: message.into(),
            related: Vec::new(),
            fixes: Vec::new(),
        }
    }

    pub fn with_fix(mut self, fix: Fix) -> Diagnostic {
        self.fixes.push(fix);
        self
    }

    pub fn with_related(mut self, related: RelatedLocation) -> Diagnostic {
        self.related.push(related);
        self
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn edits_apply_back_to_front() {
        let text = "{\"a\": 1, \"b\": 2}";
        let edits = vec![
            TextEdit {
                range: TextRange::new(14, 15),
                new_text: "20".into(),
            },
            TextEdit {
                range: TextRange::new(2, 3),
                new_text: "x".into(),
            },
        ];
        assert_eq!(
            apply_edits(text, &edits).as_deref(),
            Some("{\"x\": 1, \"b\": 20}")
        );
    }

    #[test]
    fn overlapping_or_out_of_bounds_edits_are_refused() {
        let text = "abc";
        let overlapping = vec![
            TextEdit {
                range: TextRange::new(0, 2),
                new_text: String::new(),
            },
            TextEdit {
                range: TextRange::new(1, 3),
                new_text: String::new(),
            },
        ];
        assert_eq!(apply_edits(text, &overlapping), None);
        let outside = vec![TextEdit {
            range: TextRange::new(2, 9),
            new_text: String::new(),
        }];
        assert_eq!(apply_edits(text, &outside), None);
    }
}
