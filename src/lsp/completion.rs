//! Completion: what to offer at a byte offset (keys valid in the enclosing object, enum values of
//! the key being written, column names from the data profiles), as a pure function of the syntax
//! tree, the model and the profiles (`convert::to_completion_item` turns candidates into lsp-types).
//!
//! Keys, enum values and their descriptions come from the bundled JSON Schema
//! (`schema/chart-spec.schema.json`, through `spec::schema`), so completion cannot drift from
//! what the checker accepts.

use crate::analysis::ParsedDocument;
use crate::data::DataContext;
use crate::lsp::features::{column_brief, profile_of, ColumnReference};
use crate::spec::schema::{description_at_path, enum_values_at_path, keys_at_path, PathSegment};
use crate::syntax::{Node, NodeKind, TokenKind};
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
    /// Position in the list the client should show (0 first); `None` keeps the client's order.
    pub sort_rank: Option<u32>,
    pub label: String,
    pub detail: Option<String>,
    pub kind: CandidateKind,
    pub replace_range: TextRange,
    pub insert_text: String,
}

/// The path of a layer-level object: the root of a single-layer chart, or `layers[i]`.
fn layer_relative(path: &[PathSegment]) -> &[PathSegment] {
    match path {
        [PathSegment::Key(layers), PathSegment::Index(_), rest @ ..] if layers == "layers" => rest,
        _ => path,
    }
}

/// Whether the value at `path` names a data column.
fn names_a_column(path: &[PathSegment]) -> bool {
    let relative = layer_relative(path);
    match relative {
        // shorthand binding, or the `column` of a binding object
        [PathSegment::Key(bind), PathSegment::Key(_)] => bind == "bind",
        [PathSegment::Key(bind), PathSegment::Key(_), PathSegment::Key(field)] => {
            bind == "bind" && field == "column"
        }
        _ => match path {
            [PathSegment::Key(emphasis), PathSegment::Index(_)] => emphasis == "emphasis",
            [PathSegment::Key(panels), PathSegment::Key(by)] => panels == "panels" && by == "by",
            _ => false,
        },
    }
}

/// The path from the root value to `node`: keys of the members and indexes of the arrays on
/// the way (the form the schema helpers take).
pub fn json_path_of(node: Node<'_>) -> Vec<PathSegment> {
    let mut segments = Vec::new();
    let mut current = node;
    while let Some(parent) = current.parent() {
        match parent.kind() {
            NodeKind::Member => {
                let key_node = parent
                    .children()
                    .next()
                    .filter(|child| child.kind() == NodeKind::String);
                // the key itself is not part of its own path
                if key_node != Some(current) {
                    if let Some(key) = key_node.and_then(|key| key.as_str()) {
                        segments.push(PathSegment::Key(key.into_owned()));
                    }
                }
            }
            NodeKind::Array => {
                let index = parent
                    .elements()
                    .position(|element| element == current)
                    .unwrap_or(0);
                segments.push(PathSegment::Index(index));
            }
            _ => {}
        }
        current = parent;
    }
    segments.reverse();
    segments
}

/// Where the cursor is: completing a key of an object, or a value of a member / array element.
enum CursorContext<'t> {
    Key {
        object: Node<'t>,
        replace: Option<TextRange>,
    },
    Value {
        path: Vec<PathSegment>,
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
                            path: json_path_of(node),
                            replace: inside,
                        })
                    }
                }
                NodeKind::Array => Some(CursorContext::Value {
                    path: json_path_of(node),
                    replace: inside,
                }),
                NodeKind::Object => Some(CursorContext::Key {
                    object: parent,
                    replace: inside,
                }),
                _ => None,
            }
        }
        NodeKind::Object => Some(
            value_after_colon(node, offset).unwrap_or(CursorContext::Key {
                object: node,
                replace: None,
            }),
        ),
        NodeKind::Member => {
            // after `"key":` with no value yet
            let mut path = json_path_of(node);
            let member_key = node
                .children()
                .next()
                .and_then(|key| key.as_str().map(|text| text.into_owned()))?;
            path.push(PathSegment::Key(member_key));
            Some(CursorContext::Value {
                path,
                replace: None,
            })
        }
        NodeKind::Array => {
            let mut path = json_path_of(node);
            path.push(PathSegment::Index(node.elements().count()));
            Some(CursorContext::Value {
                path,
                replace: None,
            })
        }
        NodeKind::Document if tree.root_value().is_none() => None,
        _ => None,
    }
}

/// `"key": |` (only whitespace between the colon and the cursor, no value yet): the value of
/// that member, not a new key.
fn value_after_colon(object: Node<'_>, offset: usize) -> Option<CursorContext<'_>> {
    let tree = object.tree();
    let tokens = tree.tokens();
    let before = tokens.partition_point(|token| token.range().end <= offset);
    let previous = tokens[..before]
        .iter()
        .rev()
        .find(|token| !token.kind.is_trivia())?;
    if previous.kind != TokenKind::Colon {
        return None;
    }
    let member = object
        .members()
        .find(|member| member.range().contains_range(previous.range()))?;
    if member.value().is_some() {
        return None;
    }
    let mut path = json_path_of(object);
    path.push(PathSegment::Key(member.key_text()?.into_owned()));
    Some(CursorContext::Value {
        path,
        replace: None,
    })
}

/// Candidates at `offset`, channel keys ranked under the default ranking.
pub fn complete_at(
    document: &ParsedDocument,
    data: &DataContext,
    offset: usize,
) -> Vec<CompletionCandidate> {
    complete_at_with_ranking(document, data, offset, None)
}

/// Candidates at `offset`. Keys of `bind` are ordered by how effectively each channel would show
/// the column being bound (its kind from the declaration or the data profile) under the active
/// ranking, channels that cannot express the kind last.
pub fn complete_at_with_ranking(
    document: &ParsedDocument,
    data: &DataContext,
    offset: usize,
    ranking: Option<&str>,
) -> Vec<CompletionCandidate> {
    let mut candidates = complete_at_unranked(document, data, offset);
    rank_channel_keys(document, data, offset, ranking, &mut candidates);
    candidates
}

fn complete_at_unranked(
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
            let path = json_path_of(object);
            keys_at_path(&path)
                .into_iter()
                .filter(|key| !present.iter().any(|present| present == key))
                .map(|key| {
                    let mut key_path = path.clone();
                    key_path.push(PathSegment::Key(key.to_string()));
                    CompletionCandidate {
                        sort_rank: None,
                        insert_text: match replace {
                            Some(_) => key.to_string(),
                            None => format!("\"{key}\": "),
                        },
                        replace_range: replace.unwrap_or(TextRange::empty(offset)),
                        label: key.to_string(),
                        detail: description_at_path(&key_path).map(str::to_string),
                        kind: CandidateKind::Key,
                    }
                })
                .collect()
        }
        CursorContext::Value { path, replace } => {
            let values = enum_values_at_path(&path);
            let names_column = names_a_column(&path);
            let replace_range = replace.unwrap_or(TextRange::empty(offset));
            let quote = |text: &str| match replace {
                Some(_) => text.to_string(),
                None => format!("\"{text}\""),
            };
            let mut out: Vec<CompletionCandidate> = values
                .into_iter()
                .map(|(value, description)| CompletionCandidate {
                    sort_rank: None,
                    label: value.to_string(),
                    detail: description.map(str::to_string),
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

/// Order channel-key candidates inside a `bind` object by effectiveness for the column of the
/// member being written (or, with none yet, for a quantitative column).
fn rank_channel_keys(
    document: &ParsedDocument,
    data: &DataContext,
    offset: usize,
    ranking: Option<&str>,
    candidates: &mut Vec<CompletionCandidate>,
) {
    use crate::analysis::facts::layer_facts;
    use crate::knowledge::expressiveness::{expresses, Expressiveness};
    use crate::knowledge::{perceived_channel, ChannelContext};
    use crate::spec::model::{AttributeKind, Channel};

    let spec = &document.spec;
    let layers = layer_facts(spec, data);
    let Some(layer) = layers.iter().find(|layer| {
        layer
            .layer
            .bind_range
            .is_some_and(|range| range.contains_inclusive(offset))
    }) else {
        return;
    };
    let Some(mark) = layer.mark() else {
        return;
    };
    // a channel the mark cannot show is never offered (`angle` on a point)
    candidates.retain(|candidate| {
        candidate.kind != CandidateKind::Key
            || Channel::parse(&candidate.label)
                .is_none_or(|channel| crate::knowledge::perceived::mark_shows(mark, channel))
    });
    // the column of the member under the cursor, if it names one
    let column = document
        .tree
        .node_at_offset(offset)
        .parent()
        .into_iter()
        .chain(
            document
                .tree
                .node_at_offset(offset)
                .parent()
                .and_then(|p| p.parent()),
        )
        .find(|node| node.kind() == NodeKind::Member)
        .and_then(|member| {
            let value = member.children().nth(1)?;
            match value.kind() {
                NodeKind::String => value.as_str().map(|text| text.into_owned()),
                NodeKind::Object => value.get("column")?.as_str().map(|text| text.into_owned()),
                _ => None,
            }
        });
    let kind = column
        .as_deref()
        .and_then(|name| {
            let declared = spec
                .column_declaration(name)
                .and_then(|declaration| declaration.kind.as_ref())
                .map(|kind| kind.value);
            declared.or_else(|| {
                layer
                    .data
                    .and_then(|profile| profile.column(name))
                    .map(|c| c.kind)
            })
        })
        .unwrap_or(AttributeKind::Quantitative);
    let ranking = crate::knowledge::rankings::ranking_by_id(
        ranking.unwrap_or(crate::knowledge::DEFAULT_RANKING_ID),
    )
    .unwrap_or(&crate::knowledge::rankings::MACKINLAY_1986);
    let mut scored: Vec<(usize, (u8, u8), String)> = Vec::new();
    for (index, candidate) in candidates.iter().enumerate() {
        if candidate.kind != CandidateKind::Key {
            continue;
        }
        let Some(channel) = Channel::parse(&candidate.label) else {
            continue;
        };
        let value_axis = match (channel.is_position(), kind == AttributeKind::Quantitative) {
            (true, true) => Some(channel),
            _ => layer.value_axis(),
        };
        let perceived = perceived_channel(&ChannelContext {
            mark,
            channel,
            arrange: layer.layer.arrange.as_ref().map(|arrange| arrange.value),
            in_panels: spec.panels.is_some(),
            value_axis,
            binding_is_summarised: false,
        });
        let expressive = expresses(kind, perceived) == Expressiveness::Good;
        let rank = ranking.rank(kind, perceived);
        let note = match (expressive, rank) {
            (true, Some(rank)) => format!(
                "read as {}: {} of {} for {} data ({})",
                perceived.description(),
                rank.level,
                rank.level_count,
                kind.as_str(),
                ranking.citation.short
            ),
            (true, None) => format!("read as {}", perceived.description()),
            (false, _) => format!(
                "read as {}: cannot express {} data",
                perceived.description(),
                kind.as_str()
            ),
        };
        let order = (
            u8::from(!expressive) * 2 + u8::from(rank.is_none()),
            rank.map_or(u8::MAX, |rank| rank.level),
        );
        scored.push((index, order, note));
    }
    scored.sort_by_key(|(index, order, _)| (*order, *index));
    for (position, (index, _, note)) in scored.into_iter().enumerate() {
        let candidate = &mut candidates[index];
        candidate.sort_rank = Some(position as u32);
        candidate.detail = Some(match candidate.detail.take() {
            Some(description) => format!("{note}. {description}"),
            None => note,
        });
    }
}

fn column_candidates(
    document: &ParsedDocument,
    data: &DataContext,
    path: &[PathSegment],
    replace_range: TextRange,
    quote: &dyn Fn(&str) -> String,
) -> Vec<CompletionCandidate> {
    let spec = &document.spec;
    // a binding inside `layers[i]` reads that layer's source
    let source = match path {
        [PathSegment::Key(layers), PathSegment::Index(_), ..] if layers == "layers" => spec
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
                sort_rank: None,
                label: column.name.clone(),
                detail,
                kind: CandidateKind::Column,
                replace_range,
                insert_text: quote(&column.name),
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use std::path::PathBuf;
    use std::sync::Arc;

    use super::*;
    use crate::analysis::parse_document;
    use crate::data::{ColumnProfile, DataProfile, DistinctCount, SourceKey};
    use crate::spec::model::{AttributeKind, DataFormat};

    /// Completions at the `|` of `marked` (the marker is removed before parsing).
    fn complete(marked: &str, data: &DataContext) -> (String, Vec<CompletionCandidate>) {
        let offset = marked.find('|').expect("a cursor marker");
        let text = marked.replacen('|', "", 1);
        let document = parse_document(&text);
        let candidates = complete_at(&document, data, offset);
        (text, candidates)
    }

    fn labels(candidates: &[CompletionCandidate]) -> Vec<&str> {
        candidates
            .iter()
            .map(|candidate| candidate.label.as_str())
            .collect()
    }

    fn bakery_data() -> DataContext {
        let column = |name: &str, index: usize, kind: AttributeKind| ColumnProfile {
            name: name.to_string(),
            index,
            kind,
            kind_evidence: String::new(),
            zero: None,
            rows: 4,
            missing: 0,
            distinct: DistinctCount {
                value: 4,
                exact: true,
                relative_error: 0.0,
            },
            numeric: None,
            numeric_share: 0.0,
            non_numeric_examples: Vec::new(),
            top_values: Vec::new(),
            all_values: None,
            samples: Vec::new(),
            time_range: None,
            header_range: None,
        };
        let profile = DataProfile {
            path: Some(PathBuf::from("/bakery/loaves.csv")),
            format: DataFormat::Csv,
            rows: 4,
            columns: vec![
                column("branch", 0, AttributeKind::Categorical),
                column("loaves", 1, AttributeKind::Quantitative),
            ],
            is_sample: false,
            problems: Vec::new(),
        };
        DataContext {
            entries: vec![(
                SourceKey::Path("loaves.csv".to_string()),
                Ok(Arc::new(profile)),
            )],
        }
    }

    /// Channel-key labels in the order the client is asked to show them.
    fn ranked_channels(candidates: &[CompletionCandidate]) -> Vec<&str> {
        let mut ranked: Vec<&CompletionCandidate> = candidates
            .iter()
            .filter(|candidate| candidate.sort_rank.is_some())
            .collect();
        ranked.sort_by_key(|candidate| candidate.sort_rank);
        ranked
            .iter()
            .map(|candidate| candidate.label.as_str())
            .collect()
    }

    #[test]
    fn channel_keys_are_ordered_by_effectiveness_for_the_column_being_bound() {
        let data = bakery_data();
        // a categorical column: Mackinlay (1986) ranks position, then hue, for nominal data
        let (_, candidates) = complete(
            r#"{ "source": { "path": "loaves.csv" }, "mark": "point", "bind": { "x": "loaves", "|": "branch" } }"#,
            &data,
        );
        let order = ranked_channels(&candidates);
        assert_eq!(order.first(), Some(&"y"), "{order:?}");
        assert_eq!(order.get(1), Some(&"hue"), "{order:?}");
        // magnitude channels cannot express categories: after every expressive one
        let luminance = order.iter().position(|c| *c == "luminance");
        let shape = order.iter().position(|c| *c == "shape");
        assert!(shape < luminance, "{order:?}");
        // a quantitative column: position first, then (for points) size before colour
        let (_, candidates) = complete(
            r#"{ "source": { "path": "loaves.csv" }, "mark": "point", "bind": { "x": "branch", "|": "loaves" } }"#,
            &data,
        );
        let order = ranked_channels(&candidates);
        assert_eq!(order.first(), Some(&"y"), "{order:?}");
        let area = order.iter().position(|c| *c == "area");
        let hue = order.iter().position(|c| *c == "hue");
        assert!(area < hue, "{order:?}");
        let detail = candidates
            .iter()
            .find(|c| c.label == "y")
            .and_then(|c| c.detail.clone())
            .unwrap_or_default();
        assert!(detail.contains("1 of"), "{detail}");
    }

    #[test]
    fn channels_the_mark_cannot_show_are_not_offered() {
        let data = bakery_data();
        let (_, candidates) = complete(
            r#"{ "source": { "path": "loaves.csv" }, "mark": "point", "bind": { "x": "loaves", "|": "branch" } }"#,
            &data,
        );
        let offered = labels(&candidates);
        assert!(offered.contains(&"shape"), "{offered:?}");
        assert!(
            !offered.contains(&"angle"),
            "a point has no angle: {offered:?}"
        );
        assert!(!offered.contains(&"texture"), "{offered:?}");
        let (_, candidates) = complete(
            r#"{ "source": { "path": "loaves.csv" }, "mark": "wedge", "bind": { "|": "loaves" } }"#,
            &data,
        );
        let offered = labels(&candidates);
        assert!(offered.contains(&"angle"), "{offered:?}");
        assert!(
            !offered.contains(&"x") && !offered.contains(&"y"),
            "a wedge has no axes: {offered:?}"
        );
        assert_eq!(ranked_channels(&candidates).first(), Some(&"angle"));
    }

    #[test]
    fn top_level_keys_leave_out_those_present() {
        let (_, candidates) = complete("{ \"mark\": \"bar\", | }", &DataContext::default());
        let offered = labels(&candidates);
        assert!(
            offered.contains(&"bind") && offered.contains(&"source"),
            "{offered:?}"
        );
        assert!(
            !offered.contains(&"mark"),
            "`mark` is already there: {offered:?}"
        );
        let bind = candidates.iter().find(|c| c.label == "bind").expect("bind");
        // outside quotes the key is inserted with its quotes and colon
        assert_eq!(bind.insert_text, "\"bind\": ");
        assert_eq!(bind.kind, CandidateKind::Key);
        assert!(bind.detail.is_some(), "described by the schema");
    }

    #[test]
    fn enum_values_inside_a_string_replace_its_content() {
        let (text, candidates) = complete("{ \"mark\": \"ba|\" }", &DataContext::default());
        let offered = labels(&candidates);
        assert_eq!(
            offered,
            ["point", "line", "area", "bar", "wedge", "cell", "text", "segment"]
        );
        let bar = candidates.iter().find(|c| c.label == "bar").expect("bar");
        assert_eq!(&text[bar.replace_range.start..bar.replace_range.end], "ba");
        assert_eq!(bar.insert_text, "bar");
        assert_eq!(bar.kind, CandidateKind::EnumValue);
    }

    #[test]
    fn channels_and_binding_keys_come_from_the_schema() {
        let (_, candidates) =
            complete("{ \"bind\": { \"x\": \"a\", | } }", &DataContext::default());
        let offered = labels(&candidates);
        assert!(
            offered.contains(&"y") && offered.contains(&"hue"),
            "{offered:?}"
        );
        assert!(!offered.contains(&"x"));
        let (_, candidates) = complete(
            "{ \"layers\": [ { \"bind\": { \"y\": { | } } } ] }",
            &DataContext::default(),
        );
        let offered = labels(&candidates);
        assert!(
            offered.contains(&"column") && offered.contains(&"summary"),
            "{offered:?}"
        );
    }

    #[test]
    fn column_names_come_from_the_data_profile() {
        let data = bakery_data();
        let spec = "{ \"source\": { \"path\": \"loaves.csv\" }, \"mark\": \"bar\", \"bind\": { \"x\": \"|\" } }";
        let (_, candidates) = complete(spec, &data);
        assert_eq!(labels(&candidates), ["branch", "loaves"]);
        assert!(candidates.iter().all(|c| c.kind == CandidateKind::Column));
        assert_eq!(
            candidates[1].detail.as_deref(),
            Some("quantitative, 4 distinct")
        );
        let emphasis = "{ \"source\": { \"path\": \"loaves.csv\" }, \"emphasis\": [\"|\"] }";
        let (_, candidates) = complete(emphasis, &data);
        assert_eq!(labels(&candidates), ["branch", "loaves"]);
        // no data: no column names, and no crash
        let (_, candidates) = complete(spec, &DataContext::default());
        assert!(candidates.is_empty());
    }

    #[test]
    fn broken_documents_do_not_panic() {
        for marked in [
            "|",
            "{|",
            "{ \"mark\": |",
            "[|]",
            "{ \"bind\": { \"x\": { \"column\": \"|",
            "\"|",
        ] {
            let (_, candidates) = complete(marked, &bakery_data());
            let _ = candidates;
        }
        let (_, after_colon) = complete("{ \"mark\": | }", &DataContext::default());
        assert!(
            labels(&after_colon).contains(&"bar"),
            "{:?}",
            labels(&after_colon)
        );
        assert_eq!(after_colon[0].insert_text, "\"point\"");
    }
}
