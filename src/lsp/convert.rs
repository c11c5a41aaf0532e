//! Conversions between the crate's types (byte ranges, diagnostics, fixes, outline entries) and
//! lsp-types, at the edge of the server. Every position goes through [`LineIndex`].

use std::collections::HashMap;
use std::path::Path;

use serde::{Deserialize, Serialize};
use tower_lsp::lsp_types as lsp;

use crate::diagnostic::{Diagnostic, Fix, FixKind, RelatedTarget, Severity};
use crate::lsp::completion::{CandidateKind, CompletionCandidate};
use crate::lsp::features::{OutlineEntry, OutlineKind};
use crate::positions::{LineIndex, LinePosition, PositionEncoding};
use crate::text_range::TextRange;

/// Name in `Diagnostic.source`.
pub const DIAGNOSTIC_SOURCE: &str = "markwell";

pub fn to_lsp_position(position: LinePosition) -> lsp::Position {
    lsp::Position::new(position.line, position.character)
}

pub fn from_lsp_position(position: lsp::Position) -> LinePosition {
    LinePosition::new(position.line, position.character)
}

pub fn to_lsp_range(index: &LineIndex, range: TextRange, encoding: PositionEncoding) -> lsp::Range {
    let (start, end) = index.range_to_positions(range, encoding);
    lsp::Range::new(to_lsp_position(start), to_lsp_position(end))
}

pub fn from_lsp_range(
    index: &LineIndex,
    range: lsp::Range,
    encoding: PositionEncoding,
) -> TextRange {
    index.positions_to_range(
        from_lsp_position(range.start),
        from_lsp_position(range.end),
        encoding,
    )
}

pub fn to_lsp_severity(severity: Severity) -> lsp::DiagnosticSeverity {
    match severity {
        Severity::Error => lsp::DiagnosticSeverity::ERROR,
        Severity::Warning => lsp::DiagnosticSeverity::WARNING,
        Severity::Info => lsp::DiagnosticSeverity::INFORMATION,
        Severity::Hint => lsp::DiagnosticSeverity::HINT,
    }
}

/// A fix as carried in a published diagnostic's `data`, positions already converted.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct FixPayload {
    pub title: String,
    /// `"quickfix"` or `"refactor"` (LSP `CodeActionKind` values).
    pub kind: String,
    pub edits: Vec<lsp::TextEdit>,
}

/// The `data` of a published diagnostic.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct DiagnosticData {
    pub fixes: Vec<FixPayload>,
}

pub fn code_action_kind(kind: FixKind) -> lsp::CodeActionKind {
    match kind {
        FixKind::QuickFix => lsp::CodeActionKind::QUICKFIX,
        FixKind::Refactor => lsp::CodeActionKind::REFACTOR,
    }
}

pub fn fix_payload(fix: &Fix, index: &LineIndex, encoding: PositionEncoding) -> FixPayload {
    FixPayload {
        title: fix.title.clone(),
        kind: code_action_kind(fix.kind).as_str().to_string(),
        edits: fix
            .edits
            .iter()
            .map(|edit| lsp::TextEdit {
                range: to_lsp_range(index, edit.range, encoding),
                new_text: edit.new_text.clone(),
            })
            .collect(),
    }
}

pub fn file_uri(path: &Path) -> Option<lsp::Url> {
    lsp::Url::from_file_path(path).ok()
}

pub fn to_lsp_diagnostic(
    diagnostic: &Diagnostic,
    uri: &lsp::Url,
    index: &LineIndex,
    encoding: PositionEncoding,
) -> lsp::Diagnostic {
    let related: Vec<lsp::DiagnosticRelatedInformation> = diagnostic
        .related
        .iter()
        .filter_map(|related| {
            let location = match &related.target {
                RelatedTarget::SameDocument(range) => {
                    lsp::Location::new(uri.clone(), to_lsp_range(index, *range, encoding))
                }
                RelatedTarget::File { path, line, .. } => {
                    let line = u32::try_from(*line).unwrap_or(u32::MAX);
                    let start = lsp::Position::new(line, 0);
                    lsp::Location::new(file_uri(path)?, lsp::Range::new(start, start))
                }
            };
            Some(lsp::DiagnosticRelatedInformation {
                location,
                message: related.message.clone(),
            })
        })
        .collect();
    let data = if diagnostic.fixes.is_empty() {
        None
    } else {
        let payload = DiagnosticData {
            fixes: diagnostic
                .fixes
                .iter()
                .map(|fix| fix_payload(fix, index, encoding))
                .collect(),
        };
        serde_json::to_value(payload).ok()
    };
    lsp::Diagnostic {
        range: to_lsp_range(index, diagnostic.range, encoding),
        severity: Some(to_lsp_severity(diagnostic.severity)),
        code: Some(lsp::NumberOrString::String(diagnostic.rule.to_string())),
        code_description: None,
        source: Some(DIAGNOSTIC_SOURCE.to_string()),
        message: diagnostic.message.clone(),
        related_information: if related.is_empty() {
            None
        } else {
            Some(related)
        },
        tags: None,
        data,
    }
}

/// Code actions for every fix of the diagnostics that overlap `requested` (byte range).
pub fn code_actions(
    diagnostics: &[Diagnostic],
    requested: TextRange,
    uri: &lsp::Url,
    index: &LineIndex,
    encoding: PositionEncoding,
) -> Vec<lsp::CodeActionOrCommand> {
    let mut actions = Vec::new();
    for diagnostic in diagnostics
        .iter()
        .filter(|diagnostic| diagnostic.range.intersects(requested))
    {
        let lsp_diagnostic = to_lsp_diagnostic(diagnostic, uri, index, encoding);
        for (position, fix) in diagnostic.fixes.iter().enumerate() {
            let payload = fix_payload(fix, index, encoding);
            let mut changes = HashMap::new();
            changes.insert(uri.clone(), payload.edits);
            actions.push(lsp::CodeActionOrCommand::CodeAction(lsp::CodeAction {
                title: fix.title.clone(),
                kind: Some(code_action_kind(fix.kind)),
                diagnostics: Some(vec![lsp_diagnostic.clone()]),
                edit: Some(lsp::WorkspaceEdit {
                    changes: Some(changes),
                    document_changes: None,
                    change_annotations: None,
                }),
                command: None,
                is_preferred: Some(position == 0 && fix.kind == FixKind::QuickFix),
                disabled: None,
                data: None,
            }));
        }
    }
    actions
}

/// Code actions for fixes the user asks for at a range (refactors such as swapping channels),
/// tied to no diagnostic.
pub fn refactor_actions(
    fixes: &[Fix],
    uri: &lsp::Url,
    index: &LineIndex,
    encoding: PositionEncoding,
) -> Vec<lsp::CodeActionOrCommand> {
    fixes
        .iter()
        .map(|fix| {
            let payload = fix_payload(fix, index, encoding);
            let mut changes = HashMap::new();
            changes.insert(uri.clone(), payload.edits);
            lsp::CodeActionOrCommand::CodeAction(lsp::CodeAction {
                title: fix.title.clone(),
                kind: Some(code_action_kind(fix.kind)),
                diagnostics: None,
                edit: Some(lsp::WorkspaceEdit {
                    changes: Some(changes),
                    document_changes: None,
                    change_annotations: None,
                }),
                command: None,
                is_preferred: None,
                disabled: None,
                data: None,
            })
        })
        .collect()
}

fn symbol_kind(kind: OutlineKind) -> lsp::SymbolKind {
    match kind {
        OutlineKind::Title => lsp::SymbolKind::STRING,
        OutlineKind::Source => lsp::SymbolKind::FILE,
        OutlineKind::Column => lsp::SymbolKind::FIELD,
        OutlineKind::Layer => lsp::SymbolKind::CLASS,
        OutlineKind::Binding => lsp::SymbolKind::PROPERTY,
        OutlineKind::Frame => lsp::SymbolKind::OBJECT,
        OutlineKind::Panels => lsp::SymbolKind::ARRAY,
    }
}

#[allow(deprecated)] // `DocumentSymbol::deprecated` must still be filled in lsp-types 0.94
pub fn to_document_symbol(
    entry: &OutlineEntry,
    index: &LineIndex,
    encoding: PositionEncoding,
) -> lsp::DocumentSymbol {
    let children: Vec<lsp::DocumentSymbol> = entry
        .children
        .iter()
        .map(|child| to_document_symbol(child, index, encoding))
        .collect();
    lsp::DocumentSymbol {
        // an empty name is invalid in LSP
        name: if entry.name.is_empty() {
            "\"\"".to_string()
        } else {
            entry.name.clone()
        },
        detail: entry.detail.clone(),
        kind: symbol_kind(entry.kind),
        tags: None,
        deprecated: None,
        range: to_lsp_range(index, entry.range, encoding),
        selection_range: to_lsp_range(index, entry.selection_range, encoding),
        children: if children.is_empty() {
            None
        } else {
            Some(children)
        },
    }
}

pub fn to_completion_item(
    candidate: CompletionCandidate,
    index: &LineIndex,
    encoding: PositionEncoding,
) -> lsp::CompletionItem {
    let kind = match candidate.kind {
        CandidateKind::Key => lsp::CompletionItemKind::PROPERTY,
        CandidateKind::EnumValue => lsp::CompletionItemKind::ENUM_MEMBER,
        CandidateKind::Column => lsp::CompletionItemKind::FIELD,
    };
    lsp::CompletionItem {
        label: candidate.label,
        kind: Some(kind),
        detail: candidate.detail,
        sort_text: candidate.sort_rank.map(|rank| format!("{rank:04}")),
        insert_text_format: Some(lsp::InsertTextFormat::PLAIN_TEXT),
        text_edit: Some(lsp::CompletionTextEdit::Edit(lsp::TextEdit {
            range: to_lsp_range(index, candidate.replace_range, encoding),
            new_text: candidate.insert_text,
        })),
        ..lsp::CompletionItem::default()
    }
}

/// Formatting edits (byte ranges of the current text) as LSP text edits.
pub fn to_text_edits(
    index: &LineIndex,
    edits: &[crate::syntax::format::FormatEdit],
    encoding: PositionEncoding,
) -> Vec<lsp::TextEdit> {
    edits
        .iter()
        .map(|edit| lsp::TextEdit {
            range: to_lsp_range(index, edit.range, encoding),
            new_text: edit.new_text.clone(),
        })
        .collect()
}

/// Folds by line: a container that starts and ends on one line has nothing to fold.
pub fn to_folding_ranges(
    index: &LineIndex,
    ranges: &[TextRange],
    encoding: PositionEncoding,
) -> Vec<lsp::FoldingRange> {
    ranges
        .iter()
        .filter_map(|range| {
            let lsp_range = to_lsp_range(index, *range, encoding);
            (lsp_range.end.line > lsp_range.start.line).then_some(lsp::FoldingRange {
                start_line: lsp_range.start.line,
                start_character: None,
                end_line: lsp_range.end.line,
                end_character: None,
                kind: None,
                collapsed_text: None,
            })
        })
        .collect()
}

/// A chain of ranges, innermost first, as nested selection ranges.
pub fn to_selection_range(
    index: &LineIndex,
    chain: &[TextRange],
    encoding: PositionEncoding,
) -> Option<lsp::SelectionRange> {
    let mut outer: Option<lsp::SelectionRange> = None;
    for range in chain.iter().rev() {
        outer = Some(lsp::SelectionRange {
            range: to_lsp_range(index, *range, encoding),
            parent: outer.map(Box::new),
        });
    }
    outer
}

pub fn to_document_links(
    index: &LineIndex,
    links: &[crate::lsp::structure::FileLink],
    encoding: PositionEncoding,
) -> Vec<lsp::DocumentLink> {
    links
        .iter()
        .filter_map(|link| {
            Some(lsp::DocumentLink {
                range: to_lsp_range(index, link.range, encoding),
                target: Some(file_uri(&link.target)?),
                tooltip: None,
                data: None,
            })
        })
        .collect()
}

pub fn semantic_tokens_legend() -> lsp::SemanticTokensLegend {
    lsp::SemanticTokensLegend {
        token_types: crate::lsp::structure::LEGEND
            .iter()
            .map(|name| lsp::SemanticTokenType::new(name))
            .collect(),
        token_modifiers: Vec::new(),
    }
}

/// Semantic tokens (sorted, not overlapping, one line each) in LSP's relative encoding, with
/// lengths in the negotiated position encoding.
pub fn to_semantic_tokens(
    index: &LineIndex,
    tokens: &[(TextRange, crate::lsp::structure::SemanticKind)],
    encoding: PositionEncoding,
) -> Vec<lsp::SemanticToken> {
    let mut data = Vec::with_capacity(tokens.len());
    let (mut previous_line, mut previous_start) = (0u32, 0u32);
    for (range, kind) in tokens {
        let (start, end) = index.range_to_positions(*range, encoding);
        if end.line != start.line {
            continue; // a token must not span lines; strings in a spec never do
        }
        let delta_line = start.line - previous_line;
        let delta_start = if delta_line == 0 {
            start.character - previous_start
        } else {
            start.character
        };
        data.push(lsp::SemanticToken {
            delta_line,
            delta_start,
            length: end.character - start.character,
            token_type: kind.index(),
            token_modifiers_bitset: 0,
        });
        previous_line = start.line;
        previous_start = start.character;
    }
    data
}

#[cfg(test)]
mod tests {
    use std::path::PathBuf;

    use super::*;
    use crate::diagnostic::{RelatedLocation, TextEdit};

    /// A spec line with an astral character before the finding, so UTF-16 and byte columns differ.
    const TEXT: &str = "{ \"title\": \"\u{1F34F}\", \"bind\": { \"x\": \"a\", \"y\": \"b\" } }";

    fn range_of(needle: &str) -> TextRange {
        let start = TEXT.find(needle).unwrap_or(0);
        TextRange::new(start, start + needle.len())
    }

    fn swap_finding() -> Diagnostic {
        let x = range_of("\"a\"");
        let y = range_of("\"b\"");
        Diagnostic::new("some-rule", Severity::Warning, x, "`a` on x")
            .with_fix(Fix::quick(
                "bind `c` instead",
                vec![TextEdit {
                    range: x,
                    new_text: "\"c\"".to_string(),
                }],
            ))
            .with_fix(Fix {
                title: "swap x and y".to_string(),
                kind: FixKind::Refactor,
                safe: false,
                edits: vec![
                    TextEdit {
                        range: x,
                        new_text: "\"b\"".to_string(),
                    },
                    TextEdit {
                        range: y,
                        new_text: "\"a\"".to_string(),
                    },
                ],
            })
            .with_related(RelatedLocation {
                target: RelatedTarget::File {
                    path: PathBuf::from("/bakery/loaves.csv"),
                    line: 3,
                    byte_offset: 40,
                },
                message: "the first row where `a` is not a number".to_string(),
            })
    }

    fn uri() -> lsp::Url {
        lsp::Url::parse("file:///bakery/loaves.chart.json").expect("a valid uri")
    }

    #[test]
    fn diagnostics_carry_code_source_related_files_and_fixes_in_data() {
        let index = LineIndex::new(TEXT);
        let diagnostic =
            to_lsp_diagnostic(&swap_finding(), &uri(), &index, PositionEncoding::Utf16);
        assert_eq!(
            diagnostic.code,
            Some(lsp::NumberOrString::String("some-rule".to_string()))
        );
        assert_eq!(diagnostic.source.as_deref(), Some("markwell"));
        assert_eq!(diagnostic.severity, Some(lsp::DiagnosticSeverity::WARNING));
        // UTF-16: the apple (U+1F34F) counts 2 units, so `"a"` starts 2 units earlier than its byte
        let byte_start = TEXT.find("\"a\"").unwrap_or(0) as u32;
        assert_eq!(diagnostic.range.start.character, byte_start - 2);
        let related = diagnostic.related_information.expect("related information");
        assert_eq!(
            related[0].location.uri.as_str(),
            "file:///bakery/loaves.csv"
        );
        assert_eq!(related[0].location.range.start, lsp::Position::new(3, 0));
        let data: DiagnosticData =
            serde_json::from_value(diagnostic.data.expect("fixes in data")).expect("decodes");
        assert_eq!(data.fixes.len(), 2);
        assert_eq!(data.fixes[0].kind, "quickfix");
        assert_eq!(data.fixes[1].kind, "refactor");
        assert_eq!(data.fixes[1].edits.len(), 2);
    }

    #[test]
    fn code_actions_for_overlapping_findings_only_with_their_kinds() {
        let index = LineIndex::new(TEXT);
        let findings = [swap_finding()];
        let actions = code_actions(
            &findings,
            range_of("\"x\""),
            &uri(),
            &index,
            PositionEncoding::Utf8,
        );
        assert!(
            actions.is_empty(),
            "the key `x` does not overlap the finding on its value"
        );
        let actions = code_actions(
            &findings,
            range_of("\"a\""),
            &uri(),
            &index,
            PositionEncoding::Utf8,
        );
        let actions: Vec<lsp::CodeAction> = actions
            .into_iter()
            .filter_map(|action| match action {
                lsp::CodeActionOrCommand::CodeAction(action) => Some(action),
                lsp::CodeActionOrCommand::Command(_) => None,
            })
            .collect();
        assert_eq!(actions.len(), 2);
        assert_eq!(actions[0].kind, Some(lsp::CodeActionKind::QUICKFIX));
        assert_eq!(actions[0].is_preferred, Some(true));
        assert_eq!(actions[1].kind, Some(lsp::CodeActionKind::REFACTOR));
        assert_eq!(actions[1].is_preferred, Some(false));
        let edits = &actions[1]
            .edit
            .as_ref()
            .and_then(|edit| edit.changes.as_ref())
            .and_then(|changes| changes.get(&uri()))
            .expect("edits for the spec");
        // UTF-8 negotiated: characters are byte columns
        let byte_start = TEXT.find("\"a\"").unwrap_or(0) as u32;
        assert_eq!(edits[0].range.start, lsp::Position::new(0, byte_start));
        assert_eq!(edits[1].new_text, "\"a\"");
    }
}
