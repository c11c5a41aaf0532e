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
    /// Where `text`'s lines start, for printing positions.
    pub lines: LineColumns,
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

/// Bytes between two character-count checkpoints of [`LineColumns`].
const CHECKPOINT_BYTES: usize = 4096;

/// The line starts and character counts of one text, built once in linear time, so that each
/// of many positions (a spec with 100,000 findings) is printed in logarithmic time plus at
/// most [`CHECKPOINT_BYTES`] of counting, however long its line. LF, CR and CRLF break lines
/// (CRLF once), as a count over the text before the offset would (the oracle in the tests).
#[derive(Clone, Debug, Default)]
pub struct LineColumns {
    /// Byte offset of each line's first byte (the first is 0).
    line_starts: Vec<usize>,
    /// Characters in the text before byte `k * CHECKPOINT_BYTES`.
    char_checkpoints: Vec<usize>,
}

/// Characters in `bytes` of UTF-8: the bytes that do not continue a character.
fn count_characters(bytes: &[u8]) -> usize {
    bytes
        .iter()
        .filter(|&&byte| (byte & 0b1100_0000) != 0b1000_0000)
        .count()
}

impl LineColumns {
    pub fn new(text: &str) -> LineColumns {
        let bytes = text.as_bytes();
        let mut line_starts = vec![0];
        for position in memchr::memchr2_iter(b'\n', b'\r', bytes) {
            if bytes[position] == b'\r' && bytes.get(position + 1) == Some(&b'\n') {
                continue; // the LF of this CRLF starts the next line
            }
            line_starts.push(position + 1);
        }
        let mut char_checkpoints = Vec::with_capacity(bytes.len() / CHECKPOINT_BYTES + 1);
        let mut characters = 0usize;
        char_checkpoints.push(0);
        for chunk in bytes.chunks(CHECKPOINT_BYTES) {
            characters += count_characters(chunk);
            char_checkpoints.push(characters);
        }
        LineColumns {
            line_starts,
            char_checkpoints,
        }
    }

    fn characters_before(&self, text: &str, offset: usize) -> usize {
        let checkpoint = offset / CHECKPOINT_BYTES;
        let counted = self.char_checkpoints.get(checkpoint).copied().unwrap_or(0);
        let from = (checkpoint * CHECKPOINT_BYTES).min(offset);
        counted + count_characters(&text.as_bytes()[from..offset])
    }

    /// 0-based index of the line holding `offset`.
    fn line_index(&self, offset: usize) -> usize {
        self.line_starts
            .partition_point(|&start| start <= offset)
            .saturating_sub(1)
    }

    /// Between the CR and the LF of a CRLF: the CR alone ended a line there.
    fn inside_crlf(text: &str, offset: usize) -> bool {
        let bytes = text.as_bytes();
        offset > 0 && bytes[offset - 1] == b'\r' && bytes.get(offset) == Some(&b'\n')
    }

    /// 1-based line and 1-based column (in characters) of a byte offset of `text` (the text
    /// this index was built from).
    pub fn line_and_column(&self, text: &str, offset: usize) -> (usize, usize) {
        let offset = floor_char_boundary(text, offset.min(text.len()));
        let line = self.line_index(offset);
        if LineColumns::inside_crlf(text, offset) {
            return (line + 2, 1);
        }
        let start = self.line_starts.get(line).copied().unwrap_or(0);
        let column = self.characters_before(text, offset) - self.characters_before(text, start);
        (line + 1, column + 1)
    }

    /// Start and end (the offset of its line break, or the text's end) of the line holding
    /// `offset`.
    pub fn line_bounds(&self, text: &str, offset: usize) -> (usize, usize) {
        let offset = offset.min(text.len());
        if LineColumns::inside_crlf(text, offset) {
            return (offset, offset);
        }
        let bytes = text.as_bytes();
        let line = self.line_index(offset);
        let start = self.line_starts.get(line).copied().unwrap_or(0);
        let end = match self.line_starts.get(line + 1) {
            Some(&next) if next >= 2 && bytes[next - 1] == b'\n' && bytes[next - 2] == b'\r' => {
                next - 2
            }
            Some(&next) => next - 1,
            None => text.len(),
        };
        (start, end)
    }
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

fn position_json(lines: &LineColumns, text: &str, offset: usize) -> Value {
    let (line, column) = lines.line_and_column(text, offset);
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
                .map(|diagnostic| diagnostic_json(&path, &file.text, &file.lines, diagnostic))
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
pub fn diagnostic_json(
    path: &str,
    text: &str,
    lines: &LineColumns,
    diagnostic: &Diagnostic,
) -> Value {
    let related: Vec<Value> = diagnostic
        .related
        .iter()
        .map(|related| match &related.target {
            RelatedTarget::SameDocument(range) => json!({
                "path": path,
                "start": position_json(lines, text, range.start),
                "end": position_json(lines, text, range.end),
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
                        "start": position_json(lines, text, edit.range.start),
                        "end": position_json(lines, text, edit.range.end),
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
        "start": position_json(lines, text, diagnostic.range.start),
        "end": position_json(lines, text, diagnostic.range.end),
        "related": related,
        "fixes": fixes,
    })
}

#[cfg(test)]
mod tests {
    use super::{floor_char_boundary, LineColumns};

    /// The direct count (linear in the offset), the oracle for [`LineColumns`].
    fn line_and_column(text: &str, offset: usize) -> (usize, usize) {
        let offset = floor_char_boundary(text, offset.min(text.len()));
        let before = &text[..offset];
        let line_start = before.rfind(['\n', '\r']).map_or(0, |index| index + 1);
        // a CRLF pair counts as one line break
        let line = 1 + before.matches('\n').count() + before.matches('\r').count()
            - before.matches("\r\n").count();
        (line, before[line_start..].chars().count() + 1)
    }

    fn line_bounds(text: &str, offset: usize) -> (usize, usize) {
        let start = text[..offset]
            .rfind(['\n', '\r'])
            .map_or(0, |index| index + 1);
        let end = text[offset..]
            .find(['\n', '\r'])
            .map_or(text.len(), |index| offset + index);
        (start, end)
    }

    #[test]
    fn the_index_answers_like_the_direct_count_everywhere() {
        let long_line = "é".repeat(5000) + "x";
        for text in [
            "ab\r\ncé\rx\ny",
            "",
            "\n\n\r\r\n",
            "{\r\n  \"a\": 1\r\n}\r\n",
            long_line.as_str(),
            "😀\n😀😀\r\n\rz",
        ] {
            let index = LineColumns::new(text);
            for offset in 0..=text.len() + 2 {
                assert_eq!(
                    index.line_and_column(text, offset),
                    line_and_column(text, offset),
                    "{text:?} at {offset}"
                );
                if offset <= text.len() && text.is_char_boundary(offset) {
                    assert_eq!(
                        index.line_bounds(text, offset),
                        line_bounds(text, offset),
                        "{text:?} at {offset}"
                    );
                }
            }
        }
    }

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
