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
use crate::spec::synonyms::{key_synonym, value_synonym};
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

/// Allowed values at `path` with their descriptions: the `const` branches of a `oneOf` (how the
/// schema describes each value in standard JSON Schema), or a plain `enum` without descriptions.
pub fn enum_values_at_path(path: &[PathSegment]) -> Vec<(&'static str, Option<&'static str>)> {
    schema_at_path(schema_document(), path)
        .map(allowed_values)
        .unwrap_or_default()
}

/// The allowed values of one schema object (looking into `then` for a conditional like `order`).
fn allowed_values(schema: &Value) -> Vec<(&str, Option<&str>)> {
    let has_values = |schema: &Value| schema.get("oneOf").is_some() || schema.get("enum").is_some();
    let schema = match schema.get("then") {
        Some(then) if !has_values(schema) => then,
        _ => schema,
    };
    if let Some(branches) = schema.get("oneOf").and_then(Value::as_array) {
        return branches
            .iter()
            .filter_map(|branch| {
                let value = branch.get("const")?.as_str()?;
                Some((value, branch.get("description").and_then(Value::as_str)))
            })
            .collect();
    }
    schema
        .get("enum")
        .and_then(Value::as_array)
        .map(|values| {
            values
                .iter()
                .filter_map(Value::as_str)
                .map(|value| (value, None))
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
                // object were quadratic); the first of duplicate keys counts
                let mut members: HashMap<String, crate::syntax::Member<'_>> = HashMap::new();
                for member in node.members() {
                    if let Some(key) = member.key_text() {
                        members.entry(key.into_owned()).or_insert(member);
                    }
                }
                for key in unexpected {
                    let member = members.get(key.as_str()).copied();
                    let range = member
                        .and_then(|member| member.key_range())
                        .unwrap_or(node.range());
                    let mut diagnostic = Diagnostic::new(
                        UNKNOWN_KEY,
                        Severity::Error,
                        range,
                        format!("unknown key `{key}` {place}"),
                    );
                    // a word from elsewhere first, then a near spelling; never a key the
                    // object already has
                    let synonym = key_synonym(&path, key)
                        .filter(|name| valid.contains(name) && !members.contains_key(*name));
                    let suggestion = synonym.or_else(|| {
                        closest_name(key, valid.iter().copied())
                            .filter(|name| !members.contains_key(*name))
                    });
                    if let Some(suggestion) = suggestion {
                        diagnostic.message = if synonym.is_some() {
                            format!(
                                "{}; this format calls it `{suggestion}`",
                                diagnostic.message
                            )
                        } else {
                            format!("{}; did you mean `{suggestion}`?", diagnostic.message)
                        };
                        let mut edits = vec![TextEdit {
                            range,
                            new_text: json_string(suggestion),
                        }];
                        let mut title = format!("rename to `{suggestion}`");
                        // `"zero": true` was a switch; `from` names where the axis starts
                        if suggestion == "from" {
                            if let Some(value) = member.and_then(|member| member.value()) {
                                let new_value = match value.kind() {
                                    NodeKind::True => Some("zero"),
                                    NodeKind::False => Some("data"),
                                    _ => None,
                                };
                                if let Some(new_value) = new_value {
                                    title = format!("rename to `from` and write `\"{new_value}\"`");
                                    edits.push(TextEdit {
                                        range: value.range(),
                                        new_text: json_string(new_value),
                                    });
                                }
                            }
                        }
                        // a near spelling is safe for `--fix`; a word from elsewhere may
                        // not mean the same here, so it waits for a person
                        let fix = Fix::quick(title, edits);
                        diagnostic.fixes.push(if synonym.is_none() {
                            fix.marked_safe()
                        } else {
                            fix
                        });
                    }
                    diagnostics.push(diagnostic);
                }
            }
            ValidationErrorKind::Enum { .. } | ValidationErrorKind::OneOfNotValid { .. } => {
                let allowed: Vec<&str> = enum_values_at_path(&path)
                    .into_iter()
                    .map(|(value, _)| value)
                    .collect();
                // a value of the wrong type already has its type error
                if allowed.is_empty() || node.kind() != NodeKind::String {
                    continue;
                }
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
                let holder = match path.last() {
                    Some(PathSegment::Key(key)) => key.as_str(),
                    _ => "",
                };
                let synonym = written
                    .as_deref()
                    .and_then(|text| value_synonym(holder, text))
                    .filter(|value| allowed.contains(value));
                let suggestion = synonym.or_else(|| {
                    written
                        .as_deref()
                        .and_then(|text| closest_name(text, allowed.iter().copied()))
                });
                if let Some(suggestion) = suggestion {
                    diagnostic.message = if synonym.is_some() {
                        format!(
                            "{shown} is not allowed {place}; this format calls it `{suggestion}`"
                        )
                    } else {
                        format!("{shown} is not allowed {place}; did you mean `{suggestion}`?")
                    };
                    let fix = Fix::quick(
                        format!("change to `{suggestion}`"),
                        vec![TextEdit {
                            range: node.range(),
                            new_text: json_string(suggestion),
                        }],
                    );
                    diagnostic.fixes.push(if synonym.is_none() {
                        fix.marked_safe()
                    } else {
                        fix
                    });
                }
                diagnostics.push(diagnostic);
            }
            ValidationErrorKind::Type { kind } => {
                let expected = match kind {
                    TypeKind::Single(single) => type_words(&single.to_string()).to_string(),
                    TypeKind::Multiple(multiple) => {
                        let names: Vec<&str> = multiple
                            .iter()
                            .map(|single| type_words(&single.to_string()))
                            .collect();
                        names.join(" or ")
                    }
                };
                diagnostics.push(Diagnostic::new(
                    SCHEMA_MISMATCH,
                    Severity::Error,
                    node.range(),
                    format!(
                        "{} must be {expected}, not {}",
                        subject(&path),
                        written_kind(node)
                    ),
                ));
            }
            ValidationErrorKind::Required { property } => {
                let name = property.as_str().unwrap_or("?");
                let range = TextRange::new(
                    node.range().start,
                    (node.range().start + 1).min(node.range().end),
                );
                let owner = match path.as_slice() {
                    [PathSegment::Key(layers), PathSegment::Index(index)] if layers == "layers" => {
                        format!("layer {} of `layers`", index + 1)
                    }
                    _ => format!("this object {place}"),
                };
                diagnostics.push(Diagnostic::new(
                    SCHEMA_MISMATCH,
                    Severity::Error,
                    range,
                    format!("{owner} has no `{name}`, which it needs"),
                ));
            }
            other => {
                diagnostics.push(Diagnostic::new(
                    SCHEMA_MISMATCH,
                    Severity::Error,
                    node.range(),
                    plain_message(other, &path, node),
                ));
            }
        }
    }
    diagnostics
}

/// What a schema type asks for, in words.
fn type_words(name: &str) -> &'static str {
    match name {
        "string" => "text in quotes",
        "number" => "a number",
        "integer" => "a whole number",
        "boolean" => "`true` or `false`",
        "object" => "an object (`{ ... }`)",
        "array" => "a list (`[ ... ]`)",
        "null" => "`null`",
        _ => "another kind of value",
    }
}

/// What the document has, in words.
fn written_kind(node: Node<'_>) -> String {
    match node.kind() {
        NodeKind::String => "text".to_string(),
        NodeKind::Number => format!("the number {}", node.text()),
        NodeKind::True => "`true`".to_string(),
        NodeKind::False => "`false`".to_string(),
        NodeKind::Null => "`null`".to_string(),
        NodeKind::Object => "an object".to_string(),
        NodeKind::Array => "a list".to_string(),
        _ => "this value".to_string(),
    }
}

/// "`opacity` in `style`", "entry 2 of `bind.hue.palette`", "the chart" for the root.
fn subject(path: &[PathSegment]) -> String {
    match path.split_last() {
        None => "the chart".to_string(),
        Some((PathSegment::Key(key), [])) => format!("`{key}`"),
        Some((PathSegment::Key(key), parent)) => {
            format!("`{key}` {}", describe_place(parent))
        }
        Some((PathSegment::Index(index), parent)) => {
            format!("entry {} of `{}`", index + 1, dotted(parent))
        }
    }
}

/// The key that holds the value at `path` (the last key, skipping list positions).
fn holder(path: &[PathSegment]) -> &str {
    path.iter()
        .rev()
        .find_map(|segment| match segment {
            PathSegment::Key(key) => Some(key.as_str()),
            PathSegment::Index(_) => None,
        })
        .unwrap_or("")
}

fn number_text(value: &Value) -> String {
    match value.as_f64() {
        Some(number) if number.fract() == 0.0 && number.abs() < 1e15 => {
            format!("{}", number as i64)
        }
        Some(number) => format!("{number}"),
        None => value.to_string(),
    }
}

/// Our own sentence for each kind of schema error that has no branch of its own above.
fn plain_message(kind: &ValidationErrorKind, path: &[PathSegment], node: Node<'_>) -> String {
    let subject = subject(path);
    let key = holder(path);
    let inside_bind = path
        .iter()
        .any(|segment| matches!(segment, PathSegment::Key(key) if key == "bind"));
    let schema = schema_at_path(schema_document(), path);
    let bound = |name: &str| schema.and_then(|schema| schema.get(name)).map(number_text);
    let written = || {
        node.as_str()
            .map(|text| format!("`{text}`"))
            .unwrap_or_else(|| format!("`{}`", node.text()))
    };
    match kind {
        ValidationErrorKind::Pattern { .. } => {
            let colour = schema
                .and_then(|schema| schema.get("pattern"))
                .zip(schema_document().pointer("/$defs/colour/pattern"))
                .is_some_and(|(here, colour)| here == colour);
            if colour {
                format!(
                    "{} is not a colour: colours are written `#rgb` or `#rrggbb` with hex digits (0-9, a-f), e.g. `#1b6ca8`",
                    written()
                )
            } else {
                format!("{} is not written the way {subject} needs", written())
            }
        }
        ValidationErrorKind::MinLength { .. } => {
            let what = match key {
                "column" | "by" => "name a column",
                _ if inside_bind => "name a column",
                "path" => "name a data file",
                "delimiter" => "give the one character that separates fields",
                _ => "write something or leave the key out",
            };
            format!("{subject} is empty: {what}")
        }
        ValidationErrorKind::MaxLength { limit } => {
            let length = node.as_str().map_or(0, |text| text.chars().count());
            if *limit == 1 {
                format!(
                    "{subject} must be one character; {} has {length}",
                    written()
                )
            } else {
                format!(
                    "{subject} can be at most {limit} characters; {} has {length}",
                    written()
                )
            }
        }
        ValidationErrorKind::MinItems { limit } | ValidationErrorKind::MaxItems { limit } => {
            let count = node.elements().count();
            let has = match count {
                0 => "it is empty".to_string(),
                1 => "it has 1".to_string(),
                _ => format!("it has {count}"),
            };
            match key {
                "extent" => format!("{subject} needs two numbers, low and high; {has}"),
                "layers" => format!("{subject} needs at least one layer; {has}"),
                _ if matches!(kind, ValidationErrorKind::MinItems { .. }) => {
                    format!("{subject} needs at least {limit} entries; {has}")
                }
                _ => format!("{subject} can hold at most {limit} entries; {has}"),
            }
        }
        ValidationErrorKind::Minimum { limit } | ValidationErrorKind::Maximum { limit } => {
            let shown = node.text();
            match (bound("minimum"), bound("maximum")) {
                (Some(low), Some(high)) => {
                    format!("{subject} must be between {low} and {high}; {shown} is outside")
                }
                _ if matches!(kind, ValidationErrorKind::Minimum { .. }) => {
                    if number_text(limit) == "0" {
                        format!("{subject} cannot be negative; it is {shown}")
                    } else {
                        format!(
                            "{subject} must be at least {}; it is {shown}",
                            number_text(limit)
                        )
                    }
                }
                _ => format!(
                    "{subject} can be at most {}; it is {shown}",
                    number_text(limit)
                ),
            }
        }
        ValidationErrorKind::ExclusiveMinimum { limit } => {
            format!(
                "{subject} must be more than {}; it is {}",
                number_text(limit),
                node.text()
            )
        }
        ValidationErrorKind::ExclusiveMaximum { limit } => {
            format!(
                "{subject} must be less than {}; it is {}",
                number_text(limit),
                node.text()
            )
        }
        ValidationErrorKind::Constant { expected_value } => {
            format!("{subject} must be {expected_value}")
        }
        _ => format!("{subject} does not fit the chart-spec format here"),
    }
}

fn list_in_backticks(values: &[&str]) -> String {
    values
        .iter()
        .map(|value| format!("`{value}`"))
        .collect::<Vec<_>>()
        .join(", ")
}

/// "in `bind.y.mapping`" / "at the top level".
fn describe_place(path: &[PathSegment]) -> String {
    if path.is_empty() {
        return "at the top level".to_string();
    }
    format!("in `{}`", dotted(path))
}

/// `bind.y.mapping`, `layers[0].bind`.
fn dotted(path: &[PathSegment]) -> String {
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
    dotted
}

/// A JSON string literal for `text`.
pub fn json_string(text: &str) -> String {
    Value::String(text.to_string()).to_string()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn values_and_their_descriptions_come_from_one_of_const_branches() {
        let marks = enum_values_at_path(&[PathSegment::Key("mark".to_string())]);
        let names: Vec<&str> = marks.iter().map(|(value, _)| *value).collect();
        assert_eq!(
            names,
            ["point", "line", "area", "bar", "wedge", "cell", "text", "segment"]
        );
        assert!(marks.iter().all(|(_, description)| description.is_some()));
        // `order` lists its words under `then` of a conditional
        let order = enum_values_at_path(&[
            PathSegment::Key("bind".to_string()),
            PathSegment::Key("x".to_string()),
            PathSegment::Key("order".to_string()),
        ]);
        assert_eq!(order.len(), 3);
        assert_eq!(order[0], ("ascending", Some("Smallest first.")));
    }

    fn apply(text: &str, fix: &Fix) -> String {
        let mut edits = fix.edits.clone();
        edits.sort_by_key(|edit| std::cmp::Reverse(edit.range.start));
        let mut text = text.to_string();
        for edit in edits {
            text.replace_range(edit.range.start..edit.range.end, &edit.new_text);
        }
        text
    }

    fn findings(text: &str) -> Vec<Diagnostic> {
        check_schema(&crate::syntax::parse(text))
    }

    #[test]
    fn words_from_elsewhere_get_the_format_name_as_a_fix() {
        let cases = [
            (r#"{ "data": { "path": "a.csv" } }"#, "data", r#""source""#),
            (r#"{ "encoding": {} }"#, "encoding", r#""bind""#),
            (
                r#"{ "bind": { "x": { "field": "a" } } }"#,
                "field",
                r#""column""#,
            ),
            (
                r##"{ "style": { "color": "#123" } }"##,
                "color",
                r#""colour""#,
            ),
            (r#"{ "bind": { "color": "route" } }"#, "color", r#""hue""#),
            (r#"{ "bind": { "size": "route" } }"#, "size", r#""area""#),
            (
                r#"{ "columns": { "a": { "type": "time" } } }"#,
                "type",
                r#""kind""#,
            ),
            (
                r#"{ "bind": { "x": { "column": "a", "scale": {} } } }"#,
                "scale",
                r#""mapping""#,
            ),
            (
                r#"{ "bind": { "x": { "mapping": { "type": "even" } } } }"#,
                "type",
                r#""spacing""#,
            ),
            (
                r#"{ "bind": { "x": { "mapping": { "domain": [0, 1] } } } }"#,
                "domain",
                r#""extent""#,
            ),
            (
                r#"{ "bind": { "x": { "mapping": { "reverse": true } } } }"#,
                "reverse",
                r#""flip""#,
            ),
            (
                r#"{ "bind": { "x": { "aggregate": "sum" } } }"#,
                "aggregate",
                r#""summary""#,
            ),
        ];
        for (text, key, new_text) in cases {
            let found = findings(text);
            let unknown = found
                .iter()
                .find(|d| d.rule == UNKNOWN_KEY)
                .unwrap_or_else(|| panic!("no unknown-key in {text}: {found:?}"));
            assert!(
                unknown.message.contains(&format!("`{key}`")),
                "{}",
                unknown.message
            );
            assert!(
                unknown.message.contains("this format calls it"),
                "{}",
                unknown.message
            );
            assert_eq!(unknown.fixes[0].edits[0].new_text, new_text, "{text}");
            let fixed = apply(text, &unknown.fixes[0]);
            assert!(
                findings(&fixed).iter().all(|d| d.rule != UNKNOWN_KEY),
                "{fixed}"
            );
        }
    }

    #[test]
    fn zero_switch_becomes_from_with_its_value() {
        let text = r#"{ "bind": { "y": { "mapping": { "zero": false } } } }"#;
        let found = findings(text);
        let fix = &found[0].fixes[0];
        assert_eq!(fix.title, "rename to `from` and write `\"data\"`");
        assert_eq!(
            apply(text, fix),
            r#"{ "bind": { "y": { "mapping": { "from": "data" } } } }"#
        );
    }

    #[test]
    fn value_words_get_the_format_value_as_a_fix() {
        let cases = [
            (
                r#"{ "columns": { "a": { "kind": "ordinal" } } }"#,
                r#""ordered""#,
            ),
            (
                r#"{ "columns": { "a": { "kind": "nominal" } } }"#,
                r#""categorical""#,
            ),
            (
                r#"{ "columns": { "a": { "kind": "temporal" } } }"#,
                r#""time""#,
            ),
            (r#"{ "bind": { "x": { "summary": "total" } } }"#, r#""sum""#),
            (
                r#"{ "bind": { "x": { "summary": "average" } } }"#,
                r#""mean""#,
            ),
            (r#"{ "mark": "arc" }"#, r#""wedge""#),
            (r#"{ "mark": "pie" }"#, r#""wedge""#),
            (r#"{ "mark": "tile" }"#, r#""cell""#),
            (r#"{ "mark": "rule" }"#, r#""segment""#),
            (r#"{ "arrange": "fill" }"#, r#""share""#),
            (
                r#"{ "bind": { "x": { "mapping": { "spacing": "log" } } } }"#,
                r#""logarithmic""#,
            ),
            (
                r#"{ "bind": { "x": { "mapping": { "spacing": "ordinal" } } } }"#,
                r#""ranked""#,
            ),
        ];
        for (text, new_text) in cases {
            let found = findings(text);
            let invalid = found
                .iter()
                .find(|d| d.rule == INVALID_VALUE)
                .unwrap_or_else(|| panic!("no invalid-value in {text}: {found:?}"));
            assert!(
                invalid.message.contains("this format calls it"),
                "{}",
                invalid.message
            );
            assert_eq!(invalid.fixes[0].edits[0].new_text, new_text, "{text}");
            assert!(
                findings(&apply(text, &invalid.fixes[0])).is_empty(),
                "{text}"
            );
        }
    }
}
