//! Lowering: syntax tree → [`ChartSpec`]. Lenient by design: what has the wrong type or is
//! missing is left out here, because the schema check (see `schema.rs`) reports it with a precise
//! range and a suggestion. Lowering reports only what the schema cannot say well (for example a
//! spec with both `layers` and a top-level `mark`).

use crate::diagnostic::{Diagnostic, Severity};
use crate::spec::model::*;
use crate::syntax::{Node, NodeKind, SyntaxTree};
use crate::text_range::TextRange;

/// Rule id of structural problems found while lowering.
pub const SPEC_STRUCTURE: &str = "spec-structure";

/// Lower a parsed document into the model. Never fails: what cannot be read is left out and
/// reported in the returned diagnostics (or by the schema check).
pub fn lower_document(tree: &SyntaxTree) -> (ChartSpec, Vec<Diagnostic>) {
    let mut diagnostics = Vec::new();
    let Some(root) = tree
        .root_value()
        .filter(|node| node.kind() == NodeKind::Object)
    else {
        return (ChartSpec::default(), diagnostics);
    };
    let mut spec = ChartSpec {
        range: root.range(),
        title: root.get("title").and_then(lower_string),
        description: root.get("description").and_then(lower_string),
        source: root.get("source").and_then(lower_source),
        columns: root.get("columns").map(lower_columns).unwrap_or_default(),
        purpose: root
            .get("purpose")
            .and_then(|node| lower_keyword(node, Purpose::parse)),
        emphasis: Vec::new(),
        emphasis_range: None,
        frame: root.get("frame").map(lower_frame).unwrap_or_default(),
        layers: Vec::new(),
        uses_layers_key: false,
        panels: root.get("panels").and_then(lower_panels),
    };
    if let Some(emphasis) = root.get("emphasis") {
        spec.emphasis_range = Some(emphasis.range());
        spec.emphasis = lower_string_array(emphasis);
    }

    let layers_member = root.member("layers");
    let top_level_mark = root.member("mark");
    let top_level_bind = root.member("bind");
    if let Some(layers_member) = layers_member {
        spec.uses_layers_key = true;
        if let Some(layers) = layers_member.value() {
            spec.layers = layers
                .elements()
                .filter(|node| node.kind() == NodeKind::Object)
                .enumerate()
                .map(|(index, node)| lower_layer(index, node, node))
                .collect();
            // the server keeps the model of every open document: no growth slack
            spec.layers.shrink_to_fit();
        }
        for conflicting in [top_level_mark, top_level_bind, root.member("arrange")]
            .into_iter()
            .flatten()
        {
            let key = conflicting.key_text().unwrap_or_default();
            diagnostics.push(Diagnostic::new(
                SPEC_STRUCTURE,
                Severity::Error,
                conflicting.key_range().unwrap_or(conflicting.range()),
                format!(
                    "top-level `{key}` cannot be used together with `layers`; move it into a layer"
                ),
            ));
        }
    } else if top_level_mark.is_some() || top_level_bind.is_some() {
        spec.layers.push(lower_layer(0, root, root));
        spec.layers.shrink_to_fit();
        if top_level_mark.is_none() {
            let range = top_level_bind
                .and_then(|member| member.key_range())
                .unwrap_or(root.range());
            diagnostics.push(Diagnostic::new(
                SPEC_STRUCTURE,
                Severity::Error,
                range,
                "the chart binds channels but has no `mark`",
            ));
        }
    } else {
        diagnostics.push(Diagnostic::new(
            SPEC_STRUCTURE,
            Severity::Error,
            opening_brace_range(root),
            "the chart draws nothing: add a `mark` and `bind`, or `layers`",
        ));
    }
    (spec, diagnostics)
}

/// The range of an object's opening brace (a short place to point at for whole-object problems).
fn opening_brace_range(node: Node<'_>) -> TextRange {
    let start = node.range().start;
    TextRange::new(start, (start + 1).min(node.range().end))
}

/// The members of an object with a value, key decoded, in document order. Each lowering
/// function walks them once and dispatches on the key (repeated `get` calls would decode every
/// key once per lookup); the first of duplicate keys wins, as everywhere else.
fn entries<'t>(node: Node<'t>) -> impl Iterator<Item = (std::borrow::Cow<'t, str>, Node<'t>)> {
    node.members()
        .filter_map(|member| Some((member.key_text()?, member.value()?)))
}

/// Set `slot` from `value` unless an earlier duplicate key already did.
fn first<T>(slot: &mut Option<T>, value: Option<T>) {
    if slot.is_none() {
        *slot = value;
    }
}

fn lower_string(node: Node<'_>) -> Option<Spanned<String>> {
    node.as_str()
        .map(|text| Spanned::new(text.into_owned(), node.range()))
}

fn lower_number(node: Node<'_>) -> Option<Spanned<f64>> {
    node.as_f64().map(|value| Spanned::new(value, node.range()))
}

fn lower_bool(node: Node<'_>) -> Option<Spanned<bool>> {
    node.as_bool()
        .map(|value| Spanned::new(value, node.range()))
}

fn lower_count(node: Node<'_>) -> Option<Spanned<u32>> {
    let value = node.as_f64()?;
    if value.fract() != 0.0 || !(0.0..=u32::MAX as f64).contains(&value) {
        return None;
    }
    Some(Spanned::new(value as u32, node.range()))
}

fn lower_keyword<T>(node: Node<'_>, parse: fn(&str) -> Option<T>) -> Option<Spanned<T>> {
    let text = node.as_str()?;
    parse(&text).map(|value| Spanned::new(value, node.range()))
}

fn lower_string_array(node: Node<'_>) -> Vec<Spanned<String>> {
    node.elements().filter_map(lower_string).collect()
}

fn lower_source(node: Node<'_>) -> Option<Source> {
    if node.kind() != NodeKind::Object {
        return None;
    }
    let location = if let Some(path) = node.get("path").and_then(lower_string) {
        SourceLocation::Path(path)
    } else if let Some(rows) = node
        .get("rows")
        .filter(|rows| rows.kind() == NodeKind::Array)
    {
        SourceLocation::Rows {
            rows: rows.elements().filter_map(lower_inline_row).collect(),
            range: rows.range(),
        }
    } else {
        SourceLocation::Missing
    };
    let delimiter = node.get("delimiter").and_then(|value| {
        let text = value.as_str()?;
        let mut chars = text.chars();
        let first = chars.next()?;
        chars
            .next()
            .is_none()
            .then(|| Spanned::new(first, value.range()))
    });
    Some(Source {
        range: node.range(),
        location,
        format: node
            .get("format")
            .and_then(|value| lower_keyword(value, DataFormat::parse)),
        delimiter,
    })
}

fn lower_inline_row(node: Node<'_>) -> Option<InlineRow> {
    if node.kind() != NodeKind::Object {
        return None;
    }
    Some(
        node.members()
            .filter_map(|member| {
                let key = member.key_text()?.into_owned();
                let value = member.value()?;
                let scalar = match value.kind() {
                    NodeKind::Null => InlineValue::Null,
                    NodeKind::True => InlineValue::Bool(true),
                    NodeKind::False => InlineValue::Bool(false),
                    NodeKind::Number => InlineValue::Number(value.as_f64()?),
                    NodeKind::String => InlineValue::Text(value.as_str()?.into_owned()),
                    // nested values are not columns: written as their JSON text
                    _ => InlineValue::Text(value.text().to_string()),
                };
                Some((key, scalar))
            })
            .collect(),
    )
}

fn lower_columns(node: Node<'_>) -> Vec<ColumnDeclaration> {
    node.members()
        .filter_map(|member| {
            let key = member.key()?;
            let name = Spanned::new(key.as_str()?.into_owned(), key.range());
            let value = member
                .value()
                .filter(|value| value.kind() == NodeKind::Object)?;
            Some(ColumnDeclaration {
                name,
                range: value.range(),
                kind: value
                    .get("kind")
                    .and_then(|kind| lower_keyword(kind, AttributeKind::parse)),
                levels: value.get("levels").and_then(|levels| {
                    (levels.kind() == NodeKind::Array)
                        .then(|| Spanned::new(lower_string_array(levels), levels.range()))
                }),
                zero: value
                    .get("zero")
                    .and_then(|zero| lower_keyword(zero, ZeroMeaning::parse)),
                unit: value.get("unit").and_then(lower_string),
                label: value.get("label").and_then(lower_string),
            })
        })
        .collect()
}

fn lower_frame(node: Node<'_>) -> Frame {
    Frame {
        range: Some(node.range()),
        width: node.get("width").and_then(lower_number),
        height: node.get("height").and_then(lower_number),
        background: node.get("background").and_then(lower_string),
    }
}

fn lower_panels(node: Node<'_>) -> Option<Panels> {
    (node.kind() == NodeKind::Object).then(|| Panels {
        range: node.range(),
        by: node.get("by").and_then(lower_string),
        wrap: node.get("wrap").and_then(lower_count),
    })
}

/// Lower a layer. `node` holds `mark`, `bind`, ...; for a single-layer chart it is the root.
fn lower_layer(index: usize, node: Node<'_>, range_node: Node<'_>) -> Layer {
    let mut layer = Layer {
        index,
        range: range_node.range(),
        mark: None,
        unknown_mark: None,
        bind_range: None,
        bindings: Vec::new(),
        arrange: None,
        style: Style::default(),
        source: None,
    };
    let (mut bind_seen, mut style_seen) = (false, false);
    for (key, value) in entries(node) {
        match key.as_ref() {
            "mark" if layer.mark.is_none() && layer.unknown_mark.is_none() => {
                layer.mark = lower_keyword(value, Mark::parse);
                if layer.mark.is_none() {
                    layer.unknown_mark = lower_string(value);
                }
            }
            "arrange" => first(&mut layer.arrange, lower_keyword(value, Arrange::parse)),
            "source" => first(&mut layer.source, lower_source(value)),
            "bind" if !bind_seen => {
                bind_seen = true;
                if value.kind() == NodeKind::Object {
                    layer.bind_range = Some(value.range());
                    layer.bindings = lower_bindings(value);
                }
            }
            "style" if !style_seen => {
                style_seen = true;
                layer.style = lower_style(value);
            }
            _ => {}
        }
    }
    layer
}

fn lower_style(node: Node<'_>) -> Style {
    let mut style = Style {
        range: Some(node.range()),
        ..Style::default()
    };
    for (key, value) in entries(node) {
        match key.as_ref() {
            "colour" => first(&mut style.colour, lower_string(value)),
            "opacity" => first(&mut style.opacity, lower_number(value)),
            "radius" => first(&mut style.radius, lower_number(value)),
            "stroke-width" => first(&mut style.stroke_width, lower_number(value)),
            _ => {}
        }
    }
    style
}

fn lower_bindings(bind: Node<'_>) -> Vec<Binding> {
    let mut bindings: Vec<Binding> = Vec::new();
    for member in bind.members() {
        let Some(channel) = member.key_text().and_then(|key| Channel::parse(&key)) else {
            continue;
        };
        // a duplicate key is a syntax error already; the first one counts
        if bindings.iter().any(|binding| binding.channel == channel) {
            continue;
        }
        let Some(value) = member.value() else {
            continue;
        };
        let key_range = member.key_range().unwrap_or(member.range());
        let mut binding = Binding {
            channel,
            key_range,
            member_range: member.range(),
            value_range: value.range(),
            shorthand: false,
            column: None,
            summary: None,
            bins: None,
            mapping: None,
            palette: None,
            order: None,
        };
        match value.kind() {
            NodeKind::String => {
                binding.shorthand = true;
                binding.column = lower_string(value).filter(|column| !column.value.is_empty());
            }
            NodeKind::Object => {
                for (key, field) in entries(value) {
                    match key.as_ref() {
                        "column" => first(
                            &mut binding.column,
                            lower_string(field).filter(|column| !column.value.is_empty()),
                        ),
                        "summary" => {
                            first(&mut binding.summary, lower_keyword(field, Summary::parse))
                        }
                        "bins" => first(&mut binding.bins, lower_count(field)),
                        "mapping" => first(&mut binding.mapping, lower_mapping(field)),
                        "palette" => first(
                            &mut binding.palette,
                            (field.kind() == NodeKind::Array)
                                .then(|| Spanned::new(lower_string_array(field), field.range())),
                        ),
                        "order" => first(&mut binding.order, lower_order(field)),
                        _ => {}
                    }
                }
            }
            _ => continue,
        }
        bindings.push(binding);
    }
    bindings.shrink_to_fit();
    bindings
}

fn lower_mapping(node: Node<'_>) -> Option<Mapping> {
    if node.kind() != NodeKind::Object {
        return None;
    }
    let mut mapping = Mapping {
        range: node.range(),
        spacing: None,
        extent: None,
        from: None,
        flip: None,
    };
    for (key, value) in entries(node) {
        match key.as_ref() {
            "spacing" => first(&mut mapping.spacing, lower_keyword(value, Spacing::parse)),
            "from" => first(&mut mapping.from, lower_keyword(value, MappingFrom::parse)),
            "flip" => first(&mut mapping.flip, lower_bool(value)),
            "extent" => first(&mut mapping.extent, lower_extent(value)),
            _ => {}
        }
    }
    Some(mapping)
}

/// `[low, high]`: exactly two numbers.
fn lower_extent(node: Node<'_>) -> Option<Spanned<(f64, f64)>> {
    let mut elements = node.elements();
    let low = elements.next()?.as_f64()?;
    let high = elements.next()?.as_f64()?;
    if elements.next().is_some() {
        return None;
    }
    Some(Spanned::new((low, high), node.range()))
}

fn lower_order(node: Node<'_>) -> Option<Spanned<SortOrder>> {
    let order = match node.kind() {
        NodeKind::String => match node.as_str()?.as_ref() {
            "ascending" => SortOrder::Ascending,
            "descending" => SortOrder::Descending,
            "data" => SortOrder::Data,
            _ => return None,
        },
        NodeKind::Array => SortOrder::Explicit(lower_string_array(node)),
        _ => return None,
    };
    Some(Spanned::new(order, node.range()))
}
