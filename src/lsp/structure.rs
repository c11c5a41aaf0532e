//! Editor features that follow the document's structure, as pure functions over the tree and the
//! model in byte ranges (converted to LSP types in `convert`): folding ranges, selection ranges,
//! document links (`source.path` and `$schema` to their files) and semantic tokens (columns,
//! channels, marks and summaries told apart).

use std::path::PathBuf;

use crate::data::ResolveOptions;
use crate::spec::model::{ChartSpec, Layer, SourceLocation};
use crate::syntax::{Node, NodeKind, SyntaxTree};
use crate::text_range::TextRange;

/// Objects and arrays that span more than one line: their ranges (the client folds by line).
pub fn folding_ranges(tree: &SyntaxTree) -> Vec<TextRange> {
    let text = tree.text();
    let mut ranges = Vec::new();
    let mut pending = Vec::new();
    if let Some(root) = tree.root_value() {
        pending.push(root);
    }
    while let Some(node) = pending.pop() {
        if matches!(node.kind(), NodeKind::Object | NodeKind::Array) {
            let range = node.range();
            if text[range.start..range.end].contains('\n') {
                ranges.push(range);
            }
        }
        for child in node.children() {
            pending.push(child);
        }
    }
    ranges.sort_by_key(|range| (range.start, std::cmp::Reverse(range.end)));
    ranges
}

/// For each offset, the ranges that contain it from the innermost outwards: the value under it,
/// its member (`"key": value`), the object or array around it, and so on up to the document.
pub fn selection_ranges(tree: &SyntaxTree, offsets: &[usize]) -> Vec<Vec<TextRange>> {
    offsets
        .iter()
        .map(|&offset| {
            let mut chain: Vec<TextRange> = Vec::new();
            let mut node: Option<Node<'_>> = Some(tree.node_at_offset(offset));
            while let Some(current) = node {
                let range = current.range();
                let grows = chain
                    .last()
                    .is_none_or(|last| range.start <= last.start && range.end >= last.end);
                if grows && chain.last() != Some(&range) && !range.is_empty() {
                    chain.push(range);
                }
                node = current.parent();
            }
            let whole = TextRange::new(0, tree.text().len());
            if chain.last() != Some(&whole) {
                chain.push(whole);
            }
            chain
        })
        .collect()
}

/// A link from a range of the spec to a file.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct FileLink {
    /// The string's contents (inside the quotes).
    pub range: TextRange,
    pub target: PathBuf,
}

/// `source.path` (of the chart and of each layer) and a relative `$schema`, linked to the files
/// they name when those resolve under the same containment policy as the data (a path the
/// policy refuses gets no link, so nothing is said about what lies outside).
pub fn document_links(
    tree: &SyntaxTree,
    spec: &ChartSpec,
    resolve: &ResolveOptions,
) -> Vec<FileLink> {
    let mut links = Vec::new();
    let sources = spec.source.iter().chain(
        spec.layers
            .iter()
            .filter_map(|layer: &Layer| layer.source.as_ref()),
    );
    for source in sources {
        if let SourceLocation::Path(path) = &source.location {
            if let Ok(target) = crate::data::resolve::resolve_source_path(&path.value, resolve) {
                links.push(FileLink {
                    range: inside_quotes(path.range),
                    target,
                });
            }
        }
    }
    if let Some(schema) = tree.root_value().and_then(|root| root.get("$schema")) {
        if let Some(written) = schema.as_str() {
            let relative = !written.contains("://") && !written.starts_with('#');
            if relative {
                if let Ok(target) = crate::data::resolve::resolve_source_path(&written, resolve) {
                    links.push(FileLink {
                        range: inside_quotes(schema.range()),
                        target,
                    });
                }
            }
        }
    }
    links.sort_by_key(|link| link.range.start);
    links.dedup_by_key(|link| link.range);
    links
}

fn inside_quotes(range: TextRange) -> TextRange {
    if range.len() >= 2 {
        TextRange::new(range.start + 1, range.end - 1)
    } else {
        range
    }
}

/// What a semantic token is. The order is the legend's order (`LEGEND`).
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub enum SemanticKind {
    /// A data column's name (bindings, `emphasis`, `columns`, `panels.by`).
    Column,
    /// A channel key of `bind`.
    Channel,
    /// A mark (`mark` values).
    Mark,
    /// A summary (`summary` values).
    Summary,
}

impl SemanticKind {
    pub fn index(self) -> u32 {
        self as u32
    }
}

/// LSP's standard token types used for each kind, in `SemanticKind` order: columns read as
/// variables, channels as properties, marks as types and summaries as functions.
pub const LEGEND: [&str; 4] = ["variable", "property", "type", "function"];

/// The semantic tokens of the spec, sorted by position, not overlapping.
pub fn semantic_tokens(spec: &ChartSpec) -> Vec<(TextRange, SemanticKind)> {
    let mut tokens = Vec::new();
    for column in &spec.columns {
        tokens.push((column.name.range, SemanticKind::Column));
    }
    for entry in &spec.emphasis {
        tokens.push((entry.range, SemanticKind::Column));
    }
    if let Some(by) = spec.panels.as_ref().and_then(|panels| panels.by.as_ref()) {
        tokens.push((by.range, SemanticKind::Column));
    }
    for layer in &spec.layers {
        if let Some(mark) = &layer.mark {
            tokens.push((mark.range, SemanticKind::Mark));
        }
        for binding in &layer.bindings {
            tokens.push((binding.key_range, SemanticKind::Channel));
            if let Some(column) = &binding.column {
                tokens.push((column.range, SemanticKind::Column));
            }
            if let Some(summary) = &binding.summary {
                tokens.push((summary.range, SemanticKind::Summary));
            }
        }
    }
    tokens.retain(|(range, _)| !range.is_empty());
    tokens.sort_by_key(|(range, _)| (range.start, range.end));
    // a shorthand binding's column and a layer shared with the chart can name a range twice
    let mut kept: Vec<(TextRange, SemanticKind)> = Vec::with_capacity(tokens.len());
    for token in tokens {
        if kept.last().is_none_or(|last| last.0.end <= token.0.start) {
            kept.push(token);
        }
    }
    kept
}

#[cfg(test)]
mod tests {
    use super::*;

    const SPEC: &str = "{\n  \"mark\": \"bar\",\n  \"bind\": {\n    \"x\": \"variety\",\n    \"y\": { \"column\": \"crates\", \"summary\": \"sum\" }\n  }\n}\n";

    #[test]
    fn folds_multi_line_containers_only() {
        let tree = crate::syntax::parse(SPEC);
        let folds = folding_ranges(&tree);
        let texts: Vec<&str> = folds.iter().map(|r| &SPEC[r.start..r.end]).collect();
        assert_eq!(texts.len(), 2);
        assert!(texts[0].starts_with("{\n  \"mark\""));
        assert!(texts[1].starts_with("{\n    \"x\""));
    }

    #[test]
    fn selection_grows_from_the_value_to_the_document() {
        let tree = crate::syntax::parse(SPEC);
        let offset = SPEC.find("crates").unwrap_or(0);
        let chains = selection_ranges(&tree, &[offset]);
        let texts: Vec<&str> = chains[0].iter().map(|r| &SPEC[r.start..r.end]).collect();
        assert_eq!(texts[0], "\"crates\"");
        assert_eq!(texts[1], "\"column\": \"crates\"");
        assert!(texts[2].starts_with("{ \"column\""));
        assert_eq!(*texts.last().unwrap_or(&""), SPEC);
        for pair in chains[0].windows(2) {
            assert!(pair[1].start <= pair[0].start && pair[1].end >= pair[0].end);
        }
    }

    #[test]
    fn semantic_tokens_tell_columns_channels_marks_and_summaries_apart() {
        let parsed = crate::analysis::parse_document(SPEC);
        let tokens = semantic_tokens(&parsed.spec);
        let named: Vec<(&str, SemanticKind)> = tokens
            .iter()
            .map(|(range, kind)| (&SPEC[range.start..range.end], *kind))
            .collect();
        assert_eq!(
            named,
            vec![
                ("\"bar\"", SemanticKind::Mark),
                ("\"x\"", SemanticKind::Channel),
                ("\"variety\"", SemanticKind::Column),
                ("\"y\"", SemanticKind::Channel),
                ("\"crates\"", SemanticKind::Column),
                ("\"sum\"", SemanticKind::Summary),
            ]
        );
    }
}
