//! What `markwell check` found, and its JSON form (`--format json`) with line/column positions,
//! byte ranges and fixes. The terminal report is in `report`, SARIF in `sarif`.

use std::path::PathBuf;

use serde_json::{json, Value};

use crate::diagnostic::{Diagnostic, FixKind, RelatedTarget, Severity};

use super::report::SpecOutline;

/// One checked spec and its findings.
pub struct CheckedFile {
    pub path: PathBuf,
    pub text: String,
    pub diagnostics: Vec<Diagnostic>,
    /// What the spec draws and which parts of the text concern what (for the report).
    pub outline: SpecOutline,
}

/// A path or file that could not be checked (it does not exist, cannot be read, is not a spec).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct RunError {
    pub path: String,
    pub message: String,
}

/// A data file's path as the user would type it: relative to the current folder when inside it.
pub fn shown_path(path: &std::path::Path) -> std::path::PathBuf {
    std::env::current_dir()
        .ok()
        .and_then(|current| std::fs::canonicalize(current).ok())
        .and_then(|current| path.strip_prefix(current).ok().map(|p| p.to_path_buf()))
        .unwrap_or_else(|| path.to_path_buf())
}

/// 1-based line and 1-based column (in characters) of a byte offset.
pub fn line_and_column(text: &str, offset: usize) -> (usize, usize) {
    let offset = floor_char_boundary(text, offset.min(text.len()));
    let before = &text[..offset];
    let line_start = before.rfind(['\n', '\r']).map_or(0, |index| index + 1);
    // a CRLF pair counts as one line break
    let line = 1 + before.matches('\n').count() + before.matches('\r').count()
        - before.matches("\r\n").count();
    (line, before[line_start..].chars().count() + 1)
}

fn floor_char_boundary(text: &str, mut offset: usize) -> usize {
    while offset > 0 && !text.is_char_boundary(offset) {
        offset -= 1;
    }
    offset
}

/// How many findings of `severity` the files have.
pub fn count(files: &[CheckedFile], severity: Severity) -> usize {
    files
        .iter()
        .flat_map(|file| &file.diagnostics)
        .filter(|diagnostic| diagnostic.severity == severity)
        .count()
}

fn position_json(text: &str, offset: usize) -> Value {
    let (line, column) = line_and_column(text, offset);
    json!({ "line": line, "column": column, "offset": offset })
}

/// The JSON report (`--format json`).
pub fn render_json(files: &[CheckedFile], errors: &[RunError]) -> String {
    let files_json: Vec<Value> = files
        .iter()
        .map(|file| {
            let path = file.path.display().to_string();
            let diagnostics: Vec<Value> = file
                .diagnostics
                .iter()
                .map(|diagnostic| diagnostic_json(&path, &file.text, diagnostic))
                .collect();
            json!({ "path": path, "diagnostics": diagnostics })
        })
        .collect();
    let errors_json: Vec<Value> = errors
        .iter()
        .map(|error| json!({ "path": error.path, "message": error.message }))
        .collect();
    let report = json!({
        "tool": "markwell",
        "version": env!("CARGO_PKG_VERSION"),
        "files": files_json,
        "errors": errors_json,
        "summary": {
            "specs": files.len(),
            "clean": files.iter().filter(|file| file.diagnostics.is_empty()).count(),
            "error": count(files, Severity::Error),
            "warning": count(files, Severity::Warning),
            "info": count(files, Severity::Info),
            "hint": count(files, Severity::Hint),
            "unreadable": errors.len(),
        }
    });
    serde_json::to_string_pretty(&report).unwrap_or_else(|_| "{}".to_string())
}

/// One finding as JSON. Related locations have one shape wherever they point: `path`, `start`
/// and `end` (line, column, byte offset) and `message`; in a data file the place is the start of
/// the line (column 1, the byte offset of the line start), so `start` and `end` are equal.
pub fn diagnostic_json(path: &str, text: &str, diagnostic: &Diagnostic) -> Value {
    let related: Vec<Value> = diagnostic
        .related
        .iter()
        .map(|related| match &related.target {
            RelatedTarget::SameDocument(range) => json!({
                "path": path,
                "start": position_json(text, range.start),
                "end": position_json(text, range.end),
                "message": related.message,
            }),
            RelatedTarget::File {
                path: data_path,
                line,
                byte_offset,
            } => {
                let place = json!({ "line": line + 1, "column": 1, "offset": byte_offset });
                json!({
                    "path": data_path.display().to_string(),
                    "start": place,
                    "end": place,
                    "message": related.message,
                })
            }
        })
        .collect();
    let fixes: Vec<Value> = diagnostic
        .fixes
        .iter()
        .map(|fix| {
            let edits: Vec<Value> = fix
                .edits
                .iter()
                .map(|edit| {
                    json!({
                        "start": position_json(text, edit.range.start),
                        "end": position_json(text, edit.range.end),
                        "new_text": edit.new_text,
                    })
                })
                .collect();
            json!({
                "title": fix.title,
                "kind": match fix.kind { FixKind::QuickFix => "quickfix", FixKind::Refactor => "refactor" },
                "safe": fix.safe,
                "edits": edits,
            })
        })
        .collect();
    json!({
        "rule": diagnostic.rule,
        "severity": diagnostic.severity.as_str(),
        "message": diagnostic.message,
        "start": position_json(text, diagnostic.range.start),
        "end": position_json(text, diagnostic.range.end),
        "related": related,
        "fixes": fixes,
    })
}

#[cfg(test)]
mod tests {
    use super::line_and_column;

    #[test]
    fn lines_and_columns_count_characters_and_all_line_breaks() {
        let text = "ab\r\ncé\rx\ny";
        assert_eq!(line_and_column(text, 0), (1, 1));
        assert_eq!(line_and_column(text, 4), (2, 1));
        assert_eq!(line_and_column(text, 7), (2, 3)); // after the two-byte é
        assert_eq!(line_and_column(text, 8), (3, 1)); // after a lone CR
        assert_eq!(line_and_column(text, 10), (4, 1));
        assert_eq!(line_and_column(text, 99), (4, 2)); // clamped
    }
}
