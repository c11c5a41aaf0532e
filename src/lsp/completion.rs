//! Completion: what to offer at a byte offset (keys valid in the enclosing object, enum values of
//! the key being written, column names from the data profiles), as a pure function of the syntax
//! tree, the model and the profiles. `to_lsp_item` converts at the edge.
//!
//! The keys and enum values follow the chart-spec format (keys per object from the format's
//! description, enum values from `spec::model`'s keyword enums). FIXME(issue 5): read the keys
//! from `schema/chart-spec.schema.json` once it is in main, so the two cannot drift apart.

use tower_lsp::lsp_types as lsp;

use crate::analysis::ParsedDocument;
use crate::data::DataContext;
use crate::lsp::convert::to_lsp_range;
use crate::lsp::features::{column_brief, profile_of, ColumnReference};
use crate::positions::{LineIndex, PositionEncoding};
use crate::spec::model::{
    Arrange, AttributeKind, Channel, DataFormat, Mark, Purpose, ScaleType, Summary, ZeroMeaning,
};
use crate::syntax::{Node, NodeKind};
use crate::text_range::TextRange;

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum CandidateKind {
    Key,
    EnumValue,
    Column,
}

/// One completion: the label, a detail line, and the text replacing `replace_range`.
#[derive(Clone, Debug, PartialEq)]
pub struct CompletionCandidate {
    pub label: String,
    pub detail: Option<String>,
    pub kind: CandidateKind,
    pub replace_range: TextRange,
    pub insert_text: String,
}

/// A step of the path from the root to the object being completed.
#[derive(Clone, Debug, PartialEq)]
enum PathStep {
    Key(String),
    Element,
}

const TOP_LEVEL_KEYS: &[&str] = &[
    "$schema",
    "title",
    "description",
    "source",
    "columns",
    "purpose",
    "emphasis",
    "frame",
    "mark",
    "bind",
    "arrange",
    "style",
    "layers",
    "panels",
];
const SOURCE_KEYS: &[&str] = &["path", "rows", "format", "delimiter"];
const COLUMN_DECLARATION_KEYS: &[&str] = &["kind", "levels", "zero", "unit", "label"];
const FRAME_KEYS: &[&str] = &["width", "height", "background"];
const LAYER_KEYS: &[&str] = &["mark", "bind", "arrange", "style", "source"];
const BINDING_KEYS: &[&str] = &["column", "summary", "bins", "scale", "palette", "order"];
const SCALE_KEYS: &[&str] = &["type", "domain", "zero", "reverse"];
const STYLE_KEYS: &[&str] = &["color", "opacity", "radius", "stroke-width"];
const PANELS_KEYS: &[&str] = &["by", "wrap"];
const ORDER_VALUES: &[&str] = &["ascending", "descending", "data"];

fn key(path: &[PathStep], index: usize) -> Option<&str> {
    match path.get(index)? {
        PathStep::Key(key) => Some(key),
        PathStep::Element => None,
    }
}

/// The path of a layer-level object: the root of a single-layer chart, or `layers[i]`.
fn layer_relative(path: &[PathStep]) -> Option<&[PathStep]> {
    if key(path, 0) == Some("layers") && path.get(1) == Some(&PathStep::Element) {
        Some(&path[2..])
    } else {
        Some(path)
    }
}

/// Keys valid in the object at `path`.
fn keys_for_object(path: &[PathStep]) -> Vec<String> {
    let static_keys: &[&str] = match path {
        [] => TOP_LEVEL_KEYS,
        [PathStep::Key(source)] if source == "source" => SOURCE_KEYS,
        [PathStep::Key(columns), PathStep::Key(_)] if columns == "columns" => {
            COLUMN_DECLARATION_KEYS
        }
        [PathStep::Key(frame)] if frame == "frame" => FRAME_KEYS,
        [PathStep::Key(panels)] if panels == "panels" => PANELS_KEYS,
        [PathStep::Key(layers), PathStep::Element] if layers == "layers" => LAYER_KEYS,
        _ => {
            let relative = layer_relative(path).unwrap_or(path);
            match relative {
                [PathStep::Key(bind)] if bind == "bind" => {
                    return Channel::ALL
                        .iter()
                        .map(|c| c.as_str().to_string())
                        .collect();
                }
                [PathStep::Key(bind), PathStep::Key(_)] if bind == "bind" => BINDING_KEYS,
                [PathStep::Key(bind), PathStep::Key(_), PathStep::Key(scale)]
                    if bind == "bind" && scale == "scale" =>
                {
                    SCALE_KEYS
                }
                [PathStep::Key(style)] if style == "style" => STYLE_KEYS,
                [PathStep::Key(source)] if source == "source" => SOURCE_KEYS,
                _ => &[],
            }
        }
    };
    static_keys.iter().map(|key| key.to_string()).collect()
}

/// What a value at `path` (ending in its key) may be: enum values, or `None` plus whether it
/// names a column.
fn values_for(path: &[PathStep]) -> (Vec<&'static str>, bool) {
    let relative = layer_relative(path).unwrap_or(path);
    let names = |all: &[&'static str]| all.to_vec();
    let last = path.iter().rev().find_map(|step| match step {
        PathStep::Key(key) => Some(key.as_str()),
        PathStep::Element => None,
    });
    match (relative, last) {
        ([PathStep::Key(mark)], _) if mark == "mark" => (
            names(&Mark::ALL.iter().map(|m| m.as_str()).collect::<Vec<_>>()),
            false,
        ),
        ([PathStep::Key(arrange)], _) if arrange == "arrange" => {
            (Arrange::ALL.iter().map(|a| a.as_str()).collect(), false)
        }
        ([PathStep::Key(bind), PathStep::Key(_)], _) if bind == "bind" => (Vec::new(), true),
        ([PathStep::Key(bind), PathStep::Key(_), PathStep::Key(field)], _) if bind == "bind" => {
            match field.as_str() {
                "column" => (Vec::new(), true),
                "summary" => (Summary::ALL.iter().map(|s| s.as_str()).collect(), false),
                "order" => (ORDER_VALUES.to_vec(), false),
                _ => (Vec::new(), false),
            }
        }
        (
            [PathStep::Key(bind), PathStep::Key(_), PathStep::Key(scale), PathStep::Key(field)],
            _,
        ) if bind == "bind" && scale == "scale" && field == "type" => {
            (ScaleType::ALL.iter().map(|s| s.as_str()).collect(), false)
        }
        ([PathStep::Key(source), PathStep::Key(field)], _)
            if source == "source" && field == "format" =>
        {
            (DataFormat::ALL.iter().map(|f| f.as_str()).collect(), false)
        }
        _ => match (path, last) {
            ([PathStep::Key(purpose)], _) if purpose == "purpose" => {
                (Purpose::ALL.iter().map(|p| p.as_str()).collect(), false)
            }
            ([PathStep::Key(emphasis), PathStep::Element], _) if emphasis == "emphasis" => {
                (Vec::new(), true)
            }
            ([PathStep::Key(panels), PathStep::Key(by)], _) if panels == "panels" && by == "by" => {
                (Vec::new(), true)
            }
            ([PathStep::Key(columns), PathStep::Key(_), PathStep::Key(field)], _)
                if columns == "columns" =>
            {
                match field.as_str() {
                    "kind" => (
                        AttributeKind::ALL.iter().map(|k| k.as_str()).collect(),
                        false,
                    ),
                    "zero" => (
                        [ZeroMeaning::Meaningful, ZeroMeaning::Arbitrary]
                            .iter()
                            .map(|z| z.as_str())
                            .collect(),
                        false,
                    ),
                    _ => (Vec::new(), false),
                }
            }
            _ => (Vec::new(), false),
        },
    }
}

/// The path from the root value to `object` (an object or array node).
fn path_to(node: Node<'_>) -> Vec<PathStep> {
    let mut steps = Vec::new();
    let mut current = node;
    while let Some(parent) = current.parent() {
        match parent.kind() {
            NodeKind::Member => {
                let member_key = parent
                    .children()
                    .next()
                    .filter(|child| child.kind() == NodeKind::String)
                    .and_then(|child| child.as_str().map(|text| text.into_owned()));
                if let Some(member_key) = member_key {
                    steps.push(PathStep::Key(member_key));
                }
            }
            NodeKind::Array => steps.push(PathStep::Element),
            _ => {}
        }
        current = parent;
    }
    steps.reverse();
    steps
}

/// Where the cursor is: completing a key of an object, or a value of a member / array element.
enum CursorContext<'t> {
    Key {
        object: Node<'t>,
        replace: Option<TextRange>,
    },
    Value {
        path: Vec<PathStep>,
        replace: Option<TextRange>,
    },
}

fn string_inside(node: Node<'_>) -> TextRange {
    let range = node.range();
    let text = node.text();
    let start = range.start + usize::from(text.starts_with('"'));
    let end = if text.len() >= 2 && text.ends_with('"') {
        range.end - 1
    } else {
        range.end
    };
    TextRange::new(start.min(end), end)
}

fn cursor_context(document: &ParsedDocument, offset: usize) -> Option<CursorContext<'_>> {
    let tree = &document.tree;
    let node = tree.node_at_offset(offset);
    match node.kind() {
        NodeKind::String => {
            let parent = node.parent()?;
            let inside = Some(string_inside(node));
            match parent.kind() {
                NodeKind::Member => {
                    let is_key = parent.children().next() == Some(node);
                    if is_key {
                        Some(CursorContext::Key {
                            object: parent.parent()?,
                            replace: inside,
                        })
                    } else {
                        Some(CursorContext::Value {
                            path: path_to(node),
                            replace: inside,
                        })
                    }
                }
                NodeKind::Array => Some(CursorContext::Value {
                    path: path_to(node),
                    replace: inside,
                }),
                NodeKind::Object => Some(CursorContext::Key {
                    object: parent,
                    replace: inside,
                }),
                _ => None,
            }
        }
        NodeKind::Object => Some(CursorContext::Key {
            object: node,
            replace: None,
        }),
        NodeKind::Member => {
            // after `"key":` with no value yet
            let mut path = path_to(node);
            let member_key = node
                .children()
                .next()
                .and_then(|key| key.as_str().map(|text| text.into_owned()))?;
            path.push(PathStep::Key(member_key));
            Some(CursorContext::Value {
                path,
                replace: None,
            })
        }
        NodeKind::Array => {
            let mut path = path_to(node);
            path.push(PathStep::Element);
            Some(CursorContext::Value {
                path,
                replace: None,
            })
        }
        NodeKind::Document if tree.root_value().is_none() => None,
        _ => None,
    }
}

/// Candidates at `offset`.
pub fn complete_at(
    document: &ParsedDocument,
    data: &DataContext,
    offset: usize,
) -> Vec<CompletionCandidate> {
    let Some(context) = cursor_context(document, offset) else {
        return Vec::new();
    };
    match context {
        CursorContext::Key { object, replace } => {
            let present: Vec<String> = object
                .members()
                .filter(|member| replace.is_none_or(|range| !member.range().contains_range(range)))
                .filter_map(|member| member.key_text().map(|key| key.into_owned()))
                .collect();
            let path = path_to(object);
            keys_for_object(&path)
                .into_iter()
                .filter(|key| !present.contains(key))
                .map(|key| CompletionCandidate {
                    insert_text: match replace {
                        Some(_) => key.clone(),
                        None => format!("\"{key}\": "),
                    },
                    replace_range: replace.unwrap_or(TextRange::empty(offset)),
                    label: key,
                    detail: Some("key".to_string()),
                    kind: CandidateKind::Key,
                })
                .collect()
        }
        CursorContext::Value { path, replace } => {
            let (values, names_column) = values_for(&path);
            let replace_range = replace.unwrap_or(TextRange::empty(offset));
            let quote = |text: &str| match replace {
                Some(_) => text.to_string(),
                None => format!("\"{text}\""),
            };
            let mut out: Vec<CompletionCandidate> = values
                .into_iter()
                .map(|value| CompletionCandidate {
                    label: value.to_string(),
                    detail: None,
                    kind: CandidateKind::EnumValue,
                    replace_range,
                    insert_text: quote(value),
                })
                .collect();
            if names_column {
                out.extend(column_candidates(
                    document,
                    data,
                    &path,
                    replace_range,
                    &quote,
                ));
            }
            out
        }
    }
}

fn column_candidates(
    document: &ParsedDocument,
    data: &DataContext,
    path: &[PathStep],
    replace_range: TextRange,
    quote: &dyn Fn(&str) -> String,
) -> Vec<CompletionCandidate> {
    let spec = &document.spec;
    // a binding inside `layers[i]` reads that layer's source
    let source = match path {
        [PathStep::Key(layers), PathStep::Element, ..] if layers == "layers" => spec
            .layers
            .iter()
            .find(|layer| layer.range.contains_range(replace_range))
            .and_then(|layer| spec.source_for_layer(layer)),
        _ => spec.source.as_ref(),
    };
    let Some(source) = source else {
        return Vec::new();
    };
    let Some(Ok(profile)) = data.for_source(source) else {
        return Vec::new();
    };
    profile
        .columns
        .iter()
        .map(|column| {
            let reference = ColumnReference {
                name: &column.name,
                range: replace_range,
                source: Some(source),
            };
            let detail = profile_of(data, &reference).map(|(profile, _)| column_brief(profile));
            CompletionCandidate {
                label: column.name.clone(),
                detail,
                kind: CandidateKind::Column,
                replace_range,
                insert_text: quote(&column.name),
            }
        })
        .collect()
}

pub fn to_lsp_item(
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
        insert_text_format: Some(lsp::InsertTextFormat::PLAIN_TEXT),
        text_edit: Some(lsp::CompletionTextEdit::Edit(lsp::TextEdit {
            range: to_lsp_range(index, candidate.replace_range, encoding),
            new_text: candidate.insert_text,
        })),
        ..lsp::CompletionItem::default()
    }
}
