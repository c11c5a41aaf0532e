//! The JSON Schema check: the bundled `schema/chart-spec.schema.json` (draft 2020-12) is compiled
//! once; each error's instance path is walked through the syntax tree to the node it names (or the
//! nearest existing parent), so schema errors land on exact ranges. Unknown keys and invalid enum
//! values get the closest valid name from the schema itself as a quick fix.

use std::collections::HashMap;
use std::sync::OnceLock;

use jsonschema::error::{TypeKind, ValidationErrorKind};
use jsonschema::paths::LocationSegment;
use serde_json::{Map, Number, Value};

use crate::diagnostic::{Diagnostic, Fix, Severity, TextEdit};
use crate::spec::suggest::closest_name;
use crate::syntax::{Node, NodeKind, SyntaxTree};
use crate::text_range::TextRange;

/// The schema text, as shipped in `schema/`.
pub const SCHEMA_TEXT: &str = include_str!("../../schema/chart-spec.schema.json");

/// Rule ids of schema findings.
pub const UNKNOWN_KEY: &str = "unknown-key";
pub const INVALID_VALUE: &str = "invalid-value";
pub const SCHEMA_MISMATCH: &str = "schema-mismatch";

struct CompiledSchema {
    document: Value,
    validator: Option<jsonschema::Validator>,
}

fn compiled_schema() -> &'static CompiledSchema {
    static SCHEMA: OnceLock<CompiledSchema> = OnceLock::new();
    SCHEMA.get_or_init(|| {
        let document: Value = serde_json::from_str(SCHEMA_TEXT).unwrap_or(Value::Null);
        // the bundled schema is checked by the test suite; a broken one disables the check
        let validator = jsonschema::draft202012::new(&document).ok();
        CompiledSchema {
            document,
            validator,
        }
    })
}

/// The parsed bundled schema.
pub fn schema_document() -> &'static Value {
    &compiled_schema().document
}

/// Convert the recovered tree to a JSON value for validation. Members without a value and error
/// nodes are left out; for duplicate keys the first wins (the duplicate is a syntax error).
pub fn tree_to_json(node: Node<'_>) -> Option<Value> {
    Some(match node.kind() {
        NodeKind::Object => {
            let mut map = Map::new();
            for member in node.members() {
                let (Some(key), Some(value)) = (member.key_text(), member.value()) else {
                    continue;
                };
                if map.contains_key(key.as_ref()) {
                    continue;
                }
                if let Some(value) = tree_to_json(value) {
                    map.insert(key.into_owned(), value);
                }
            }
            Value::Object(map)
        }
        NodeKind::Array => Value::Array(node.elements().filter_map(tree_to_json).collect()),
        NodeKind::String => Value::String(node.as_str()?.into_owned()),
        NodeKind::Number => {
            let text = node.text();
            match text.parse::<i64>() {
                Ok(integer) => Value::Number(integer.into()),
                Err(_) => Value::Number(Number::from_f64(node.as_f64()?)?),
            }
        }
        NodeKind::True => Value::Bool(true),
        NodeKind::False => Value::Bool(false),
        NodeKind::Null => Value::Null,
        NodeKind::Document | NodeKind::Member | NodeKind::Error => return None,
    })
}

/// Path segments of an instance location.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum PathSegment {
    Key(String),
    Index(usize),
}

/// Walk `path` from `root` through the tree: the node it names, or the nearest existing parent.
pub fn node_at_path<'t>(root: Node<'t>, path: &[PathSegment]) -> Node<'t> {
    let mut current = root;
    for segment in path {
        let next = match segment {
            PathSegment::Key(key) => current.get(key),
            PathSegment::Index(index) => current.elements().nth(*index),
        };
        match next {
            Some(node) => current = node,
            None => break,
        }
    }
    current
}

/// The schema object that describes the instance at `path`, following local `$ref`s.
pub fn schema_at_path<'s>(schema: &'s Value, path: &[PathSegment]) -> Option<&'s Value> {
    let mut current = resolve_ref(schema, schema)?;
    for segment in path {
        current = match segment {
            PathSegment::Key(key) => current
                .get("properties")
                .and_then(|properties| properties.get(key))
                .or_else(|| {
                    current
                        .get("additionalProperties")
                        .filter(|v| v.is_object())
                })?,
            PathSegment::Index(_) => current.get("items")?,
        };
        current = resolve_ref(schema, current)?;
    }
    Some(current)
}

fn resolve_ref<'s>(root: &'s Value, node: &'s Value) -> Option<&'s Value> {
    let mut current = node;
    // refs are local (`#/$defs/...`); a bound guards against cycles
    for _ in 0..16 {
        match current.get("$ref").and_then(Value::as_str) {
            Some(reference) => {
                let pointer = reference.strip_prefix('#')?;
                current = root.pointer(pointer)?;
            }
            None => return Some(current),
        }
    }
    None
}

/// Property names the schema allows at `path`.
pub fn keys_at_path(path: &[PathSegment]) -> Vec<&'static str> {
    schema_at_path(schema_document(), path)
        .and_then(|schema| schema.get("properties"))
        .and_then(Value::as_object)
        .map(|properties| properties.keys().map(String::as_str).collect())
        .unwrap_or_default()
}

/// Description of the schema at `path` (for hovers and completion details).
pub fn description_at_path(path: &[PathSegment]) -> Option<&'static str> {
    schema_at_path(schema_document(), path)?
        .get("description")?
        .as_str()
}

/// Allowed enum values at `path`, with their descriptions when the schema has them.
pub fn enum_values_at_path(path: &[PathSegment]) -> Vec<(&'static str, Option<&'static str>)> {
    let Some(schema) = schema_at_path(schema_document(), path) else {
        return Vec::new();
    };
    let schema = schema
        .get("then")
        .filter(|_| schema.get("enum").is_none())
        .unwrap_or(schema);
    let descriptions = schema.get("valueDescriptions");
    schema
        .get("enum")
        .and_then(Value::as_array)
        .map(|values| {
            values
                .iter()
                .filter_map(Value::as_str)
                .map(|value| {
                    let description = descriptions
                        .and_then(|d| d.get(value))
                        .and_then(Value::as_str);
                    (value, description)
                })
                .collect()
        })
        .unwrap_or_default()
}

/// Validate the document against the schema; diagnostics land on exact ranges.
pub fn check_schema(tree: &SyntaxTree) -> Vec<Diagnostic> {
    let Some(root) = tree.root_value() else {
        return Vec::new();
    };
    let Some(validator) = compiled_schema().validator.as_ref() else {
        return Vec::new();
    };
    let Some(instance) = tree_to_json(root) else {
        return Vec::new();
    };
    let mut diagnostics = Vec::new();
    for error in validator.iter_errors(&instance) {
        let path: Vec<PathSegment> = error
            .instance_path()
            .iter()
            .map(|segment| match segment {
                LocationSegment::Property(key) => PathSegment::Key(key.into_owned()),
                LocationSegment::Index(index) => PathSegment::Index(index),
            })
            .collect();
        let node = node_at_path(root, &path);
        let place = describe_place(&path);
        match error.kind() {
            ValidationErrorKind::AdditionalProperties { unexpected }
            | ValidationErrorKind::UnevaluatedProperties { unexpected } => {
                let valid = keys_at_path(&path);
                // one pass over the members (not a search per key: 20,000 unknown keys in one
                // object were quadratic), and one suggestion per distinct key
                let mut key_ranges: HashMap<String, TextRange> = HashMap::new();
                if unexpected.len() > 1 {
                    for member in node.members() {
                        if let (Some(key), Some(range)) = (member.key_text(), member.key_range()) {
                            key_ranges.entry(key.into_owned()).or_insert(range);
                        }
                    }
                }
                for key in unexpected {
                    let range = if unexpected.len() > 1 {
                        key_ranges.get(key.as_str()).copied()
                    } else {
                        node.member(key).and_then(|member| member.key_range())
                    }
                    .unwrap_or(node.range());
                    let mut diagnostic = Diagnostic::new(
                        UNKNOWN_KEY,
                        Severity::Error,
                        range,
                        format!("unknown key `{key}` {place}"),
                    );
                    if let Some(suggestion) = closest_name(key, valid.iter().copied()) {
                        diagnostic.message =
                            format!("{}; did you mean `{suggestion}`?", diagnostic.message);
                        diagnostic.fixes.push(Fix::quick(
                            format!("rename to `{suggestion}`"),
                            vec![TextEdit {
                                range,
                                new_text: json_string(suggestion),
                            }],
                        ));
                    }
                    diagnostics.push(diagnostic);
                }
            }
            ValidationErrorKind::Enum { options } => {
                let allowed: Vec<&str> = options
                    .as_array()
                    .map(|values| values.iter().filter_map(Value::as_str).collect())
                    .unwrap_or_default();
                let written = node.as_str().map(|text| text.into_owned());
                let shown = written
                    .as_deref()
                    .map(|text| format!("`{text}`"))
                    .unwrap_or_else(|| "this value".to_string());
                let mut diagnostic = Diagnostic::new(
                    INVALID_VALUE,
                    Severity::Error,
                    node.range(),
                    format!(
                        "{shown} is not allowed {place}; expected one of {}",
                        list_in_backticks(&allowed)
                    ),
                );
                if let Some(suggestion) = written
                    .as_deref()
                    .and_then(|text| closest_name(text, allowed.iter().copied()))
                {
                    diagnostic.message =
                        format!("{shown} is not allowed {place}; did you mean `{suggestion}`?");
                    diagnostic.fixes.push(Fix::quick(
                        format!("change to `{suggestion}`"),
                        vec![TextEdit {
                            range: node.range(),
                            new_text: json_string(suggestion),
                        }],
                    ));
                }
                diagnostics.push(diagnostic);
            }
            ValidationErrorKind::Type { kind } => {
                let expected = match kind {
                    TypeKind::Single(single) => article_type(&single.to_string()),
                    TypeKind::Multiple(multiple) => {
                        let names: Vec<String> = multiple
                            .iter()
                            .map(|single| article_type(&single.to_string()))
                            .collect();
                        names.join(" or ")
                    }
                };
                diagnostics.push(Diagnostic::new(
                    SCHEMA_MISMATCH,
                    Severity::Error,
                    node.range(),
                    format!("expected {expected} {place}"),
                ));
            }
            ValidationErrorKind::Required { property } => {
                let name = property.as_str().unwrap_or("?");
                let range = TextRange::new(
                    node.range().start,
                    (node.range().start + 1).min(node.range().end),
                );
                diagnostics.push(Diagnostic::new(
                    SCHEMA_MISMATCH,
                    Severity::Error,
                    range,
                    format!("missing required key `{name}` {place}"),
                ));
            }
            _ => {
                let message = error.to_string();
                diagnostics.push(Diagnostic::new(
                    SCHEMA_MISMATCH,
                    Severity::Error,
                    node.range(),
                    format!("{} {place}", lowercase_first(&message)),
                ));
            }
        }
    }
    diagnostics
}

fn article_type(name: &str) -> String {
    match name {
        "object" | "array" | "integer" => format!("an {name}"),
        "null" => "null".to_string(),
        other => format!("a {other}"),
    }
}

fn lowercase_first(text: &str) -> String {
    let mut chars = text.chars();
    match chars.next() {
        Some(first) => first.to_lowercase().chain(chars).collect(),
        None => String::new(),
    }
}

fn list_in_backticks(values: &[&str]) -> String {
    values
        .iter()
        .map(|value| format!("`{value}`"))
        .collect::<Vec<_>>()
        .join(", ")
}

/// "in `bind.y.scale`" / "at the top level".
fn describe_place(path: &[PathSegment]) -> String {
    if path.is_empty() {
        return "at the top level".to_string();
    }
    let mut dotted = String::new();
    for segment in path {
        match segment {
            PathSegment::Key(key) => {
                if !dotted.is_empty() {
                    dotted.push('.');
                }
                dotted.push_str(key);
            }
            PathSegment::Index(index) => dotted.push_str(&format!("[{index}]")),
        }
    }
    format!("in `{dotted}`")
}

/// A JSON string literal for `text`.
pub fn json_string(text: &str) -> String {
    Value::String(text.to_string()).to_string()
}
