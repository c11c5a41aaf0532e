//! `markwell check --fix`: the safe fixes of one spec, applied once, and a preview of the change.
//!
//! Only fixes marked `safe` (see DEVELOPERS.md, "Safe fixes") of the `QuickFix` kind are taken; a
//! spec with syntax errors is never touched. When two fixes overlap, the first (by position)
//! wins and the other stays reported after the re-check.

use std::io::{self, Write};

use crate::diagnostic::{apply_edits, Diagnostic, FixKind, TextEdit};

use super::render::LineColumns;
use super::report::{has_syntax_errors, printable};

/// What `--fix` would do to one spec.
#[derive(Debug, PartialEq, Eq)]
pub enum FixPlan {
    /// Nothing safe to apply.
    Nothing,
    /// The spec has syntax errors; it is left as it is.
    SyntaxErrors,
    /// The new text, the edits that make it, and the titles of the fixes applied.
    Change {
        new_text: String,
        edits: Vec<TextEdit>,
        titles: Vec<String>,
    },
}

/// Plan the safe fixes of `diagnostics` over `text`.
pub fn plan(text: &str, diagnostics: &[Diagnostic]) -> FixPlan {
    let candidates: Vec<_> = diagnostics
        .iter()
        .flat_map(|diagnostic| diagnostic.fixes.iter())
        .filter(|fix| fix.safe && fix.kind == FixKind::QuickFix && !fix.edits.is_empty())
        .collect();
    if candidates.is_empty() {
        return FixPlan::Nothing;
    }
    if has_syntax_errors(diagnostics) {
        return FixPlan::SyntaxErrors;
    }
    let mut chosen: Vec<TextEdit> = Vec::new();
    let mut titles = Vec::new();
    for fix in candidates {
        let overlaps = fix.edits.iter().any(|edit| {
            chosen.iter().any(|taken| {
                edit.range.start < taken.range.end && taken.range.start < edit.range.end
                    || edit.range == taken.range
            })
        });
        if overlaps {
            continue;
        }
        chosen.extend(fix.edits.iter().cloned());
        titles.push(fix.title.clone());
    }
    chosen.sort_by_key(|edit| (edit.range.start, edit.range.end));
    match apply_edits(text, &chosen) {
        Some(new_text) if new_text != text => FixPlan::Change {
            new_text,
            edits: chosen,
            titles,
        },
        _ => FixPlan::Nothing,
    }
}

/// The preview of a change: per block of touched lines, the line number, the lines as they were
/// (`was`) and as they become (`now`).
pub fn write_preview(
    out: &mut dyn Write,
    path: &str,
    text: &str,
    edits: &[TextEdit],
    titles: &[String],
    written: bool,
) -> io::Result<()> {
    let verb = if written { "changed" } else { "would change" };
    let fixes = if titles.len() == 1 { "fix" } else { "fixes" };
    writeln!(
        out,
        "{} {verb} by --fix ({} {fixes}: {})",
        printable(path),
        titles.len(),
        printable(&titles.join("; "))
    )?;
    // blocks of edits on the same or adjacent lines
    let lines = LineColumns::new(text);
    let mut index = 0;
    while index < edits.len() {
        let block_start = lines.line_bounds(text, edits[index].range.start).0;
        let mut block_end = lines.line_bounds(text, edits[index].range.end).1;
        let mut last = index;
        while last + 1 < edits.len() && edits[last + 1].range.start <= block_end + 1 {
            last += 1;
            block_end = lines
                .line_bounds(text, edits[last].range.end.max(block_end))
                .1;
        }
        let block_edits: Vec<TextEdit> = edits[index..=last]
            .iter()
            .map(|edit| TextEdit {
                range: crate::TextRange::new(
                    edit.range.start - block_start,
                    edit.range.end - block_start,
                ),
                new_text: edit.new_text.clone(),
            })
            .collect();
        let old = &text[block_start..block_end];
        let new = apply_edits(old, &block_edits).unwrap_or_default();
        let (line, _) = lines.line_and_column(text, block_start);
        writeln!(out, "  at line {line}")?;
        for old_line in old.split(['\n', '\r']).filter(|l| !l.is_empty()) {
            writeln!(out, "    was  {}", printable(old_line))?;
        }
        for new_line in new.split(['\n', '\r']).filter(|l| !l.is_empty()) {
            writeln!(out, "    now  {}", printable(new_line))?;
        }
        index = last + 1;
    }
    writeln!(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::diagnostic::{Fix, Severity};
    use crate::TextRange;

    fn finding(range: TextRange, new_text: &str, safe: bool) -> Diagnostic {
        let fix = Fix::quick(
            format!("rename to {new_text}"),
            vec![TextEdit {
                range,
                new_text: new_text.to_string(),
            }],
        );
        Diagnostic::new("unknown-key", Severity::Error, range, "unknown key").with_fix(if safe {
            fix.marked_safe()
        } else {
            fix
        })
    }

    #[test]
    fn only_safe_fixes_apply_and_overlapping_ones_once() {
        let text = "{\"mrak\": 1, \"bnid\": 2}";
        let diagnostics = vec![
            finding(TextRange::new(1, 7), "\"mark\"", true),
            finding(TextRange::new(1, 7), "\"marker\"", true),
            finding(TextRange::new(12, 18), "\"bind\"", false),
        ];
        match plan(text, &diagnostics) {
            FixPlan::Change {
                new_text, titles, ..
            } => {
                assert_eq!(new_text, "{\"mark\": 1, \"bnid\": 2}");
                assert_eq!(titles.len(), 1);
            }
            other => panic!("expected a change, got {other:?}"),
        }
    }

    #[test]
    fn a_spec_with_syntax_errors_is_not_touched() {
        let text = "{\"mrak\": 1,, }";
        let diagnostics = vec![
            finding(TextRange::new(1, 7), "\"mark\"", true),
            Diagnostic::new(
                crate::analysis::rules::SYNTAX_ERROR,
                Severity::Error,
                TextRange::new(11, 12),
                "stray comma",
            ),
        ];
        assert_eq!(plan(text, &diagnostics), FixPlan::SyntaxErrors);
    }

    #[test]
    fn the_preview_shows_the_lines_before_and_after() {
        let text = "{\n  \"bnid\": {}\n}\n";
        let edits = vec![TextEdit {
            range: TextRange::new(4, 10),
            new_text: "\"bind\"".to_string(),
        }];
        let mut out = Vec::new();
        let titles = vec!["rename to `bind`".to_string()];
        write_preview(&mut out, "a.chart.json", text, &edits, &titles, false).unwrap_or(());
        let shown = String::from_utf8_lossy(&out);
        assert!(shown.contains("at line 2"), "{shown}");
        assert!(shown.contains("was    \"bnid\": {}"), "{shown}");
        assert!(shown.contains("now    \"bind\": {}"), "{shown}");
    }
}
