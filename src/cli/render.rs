//! How `markwell check` prints findings: readable text with source snippets (honouring
//! `NO_COLOR`), or JSON with line/column positions, byte ranges and fixes.

use std::io::IsTerminal;
use std::path::PathBuf;

use annotate_snippets::{AnnotationKind, Group, Level, Renderer, Snippet};
use serde_json::{json, Value};

use crate::diagnostic::{Diagnostic, FixKind, RelatedTarget, Severity};

/// One checked spec and its findings.
pub struct CheckedFile {
    pub path: PathBuf,
    pub text: String,
    pub diagnostics: Vec<Diagnostic>,
}

fn use_colour() -> bool {
    std::env::var_os("NO_COLOR").is_none_or(|value| value.is_empty())
        && std::io::stdout().is_terminal()
}

fn level_for(severity: Severity) -> Level<'static> {
    match severity {
        Severity::Error => Level::ERROR,
        Severity::Warning => Level::WARNING,
        Severity::Info => Level::INFO,
        Severity::Hint => Level::NOTE,
    }
}

/// A data file's path as the user would type it: relative to the current folder when inside it.
fn shown_path(path: &std::path::Path) -> std::path::PathBuf {
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

/// The readable report: one block per finding, then a summary line.
pub fn render_human(files: &[CheckedFile]) -> String {
    let renderer = if use_colour() {
        Renderer::styled()
    } else {
        Renderer::plain()
    };
    let mut out = String::new();
    for file in files {
        let path = file.path.display().to_string();
        for diagnostic in &file.diagnostics {
            let start =
                floor_char_boundary(&file.text, diagnostic.range.start.min(file.text.len()));
            let end = floor_char_boundary(&file.text, diagnostic.range.end.min(file.text.len()))
                .max(start);
            let mut groups = vec![level_for(diagnostic.severity)
                .primary_title(diagnostic.message.as_str())
                .id(diagnostic.rule)
                .element(
                    Snippet::source(file.text.as_str())
                        .path(path.as_str())
                        .fold(true)
                        .annotation(AnnotationKind::Primary.span(start..end)),
                )];
            for related in &diagnostic.related {
                let place = match &related.target {
                    RelatedTarget::SameDocument(range) => {
                        let (line, column) = line_and_column(&file.text, range.start);
                        format!("{path}:{line}:{column}")
                    }
                    RelatedTarget::File {
                        path: data_path,
                        line,
                        ..
                    } => format!("{}:{}", shown_path(data_path).display(), line + 1),
                };
                groups.push(Group::with_title(
                    Level::NOTE.secondary_title(format!("{}: {}", place, related.message)),
                ));
            }
            for fix in &diagnostic.fixes {
                let name = match fix.kind {
                    FixKind::QuickFix => "fix",
                    FixKind::Refactor => "refactor",
                };
                groups.push(Group::with_title(
                    Level::HELP
                        .with_name(Some(name))
                        .secondary_title(fix.title.as_str()),
                ));
            }
            out.push_str(&renderer.render(&groups));
            out.push_str("\n\n");
        }
    }
    out.push_str(&summary_line(files));
    out.push('\n');
    out
}

fn count(files: &[CheckedFile], severity: Severity) -> usize {
    files
        .iter()
        .flat_map(|file| &file.diagnostics)
        .filter(|diagnostic| diagnostic.severity == severity)
        .count()
}

fn plural(count: usize, one: &str, many: &str) -> String {
    format!("{count} {}", if count == 1 { one } else { many })
}

fn summary_line(files: &[CheckedFile]) -> String {
    let errors = count(files, Severity::Error);
    let warnings = count(files, Severity::Warning);
    let notes = count(files, Severity::Info) + count(files, Severity::Hint);
    let clean = files
        .iter()
        .filter(|file| file.diagnostics.is_empty())
        .count();
    format!(
        "markwell: {} checked ({} clean): {}, {}, {}",
        plural(files.len(), "spec", "specs"),
        clean,
        plural(errors, "error", "errors"),
        plural(warnings, "warning", "warnings"),
        plural(notes, "note", "notes"),
    )
}

fn position_json(text: &str, offset: usize) -> Value {
    let (line, column) = line_and_column(text, offset);
    json!({ "line": line, "column": column, "offset": offset })
}

/// The JSON report (`--format json`).
pub fn render_json(files: &[CheckedFile]) -> String {
    let files_json: Vec<Value> = files
        .iter()
        .map(|file| {
            let diagnostics: Vec<Value> = file
                .diagnostics
                .iter()
                .map(|diagnostic| diagnostic_json(&file.text, diagnostic))
                .collect();
            json!({ "path": file.path.display().to_string(), "diagnostics": diagnostics })
        })
        .collect();
    let report = json!({
        "tool": "markwell",
        "version": env!("CARGO_PKG_VERSION"),
        "files": files_json,
        "summary": {
            "specs": files.len(),
            "errors": count(files, Severity::Error),
            "warnings": count(files, Severity::Warning),
            "notes": count(files, Severity::Info) + count(files, Severity::Hint),
        }
    });
    serde_json::to_string_pretty(&report).unwrap_or_else(|_| "{}".to_string())
}

pub fn diagnostic_json(text: &str, diagnostic: &Diagnostic) -> Value {
    let related: Vec<Value> = diagnostic
        .related
        .iter()
        .map(|related| match &related.target {
            RelatedTarget::SameDocument(range) => json!({
                "message": related.message,
                "start": position_json(text, range.start),
                "end": position_json(text, range.end),
            }),
            RelatedTarget::File {
                path,
                line,
                byte_offset,
            } => json!({
                "message": related.message,
                "file": path.display().to_string(),
                "line": line + 1,
                "offset": byte_offset,
            }),
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
