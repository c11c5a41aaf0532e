//! The bundled JSON Schema: valid against the draft 2020-12 meta-schema (checked by the Rust
//! `jsonschema` crate and by the Python reference implementation `jsonschema`), documented on
//! every key and value, and satisfied by every demo spec.

use std::path::{Path, PathBuf};
use std::process::Command;

use serde_json::Value;

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn schema() -> Value {
    let text = std::fs::read_to_string(root().join("schema/chart-spec.schema.json"))
        .expect("schema file readable");
    serde_json::from_str(&text).expect("schema is JSON")
}

fn demo_specs() -> Vec<PathBuf> {
    let mut specs: Vec<PathBuf> = std::fs::read_dir(root().join("demo-data"))
        .expect("demo-data readable")
        .filter_map(|entry| entry.ok().map(|entry| entry.path()))
        .filter(|path| path.to_string_lossy().ends_with(".chart.json"))
        .collect();
    specs.sort();
    specs
}

#[test]
fn schema_is_valid_draft_2020_12_for_the_rust_validator() {
    // JSON Schema draft 2020-12 meta-schema, as bundled by the `jsonschema` crate
    let schema = schema();
    assert_eq!(
        schema["$schema"],
        "https://json-schema.org/draft/2020-12/schema"
    );
    if let Err(error) = jsonschema::meta::validate(&schema) {
        panic!("schema fails the 2020-12 meta-schema: {error}");
    }
    assert!(jsonschema::draft202012::new(&schema).is_ok());
}

#[test]
fn schema_is_valid_for_the_python_reference_implementation() {
    // The Python `jsonschema` package (the reference implementation, installed from PyPI by
    // .ci/run) checks the schema against the 2020-12 meta-schema and validates the demo specs
    // that are meant to be schema-valid.
    let script = r#"
import json, sys
import jsonschema
schema = json.load(open(sys.argv[1]))
jsonschema.Draft202012Validator.check_schema(schema)
validator = jsonschema.Draft202012Validator(schema)
for path in sys.argv[2:]:
    errors = list(validator.iter_errors(json.load(open(path))))
    if errors:
        print(path, errors[0].message)
        sys.exit(3)
print("ok", len(sys.argv) - 2)
"#;
    let valid: Vec<PathBuf> = demo_specs()
        .into_iter()
        .filter(|path| schema_valid_demo(path))
        .collect();
    let output = Command::new(python())
        .arg("-c")
        .arg(script)
        .arg(root().join("schema/chart-spec.schema.json"))
        .args(&valid)
        .output()
        .expect("python runs (set MARKWELL_PYTHON or install python3)");
    let stdout = String::from_utf8_lossy(&output.stdout);
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(
        output.status.success(),
        "python jsonschema check failed (run `bash .ci/setup`, which installs it): {stdout}{stderr}"
    );
    assert_eq!(stdout.trim(), format!("ok {}", valid.len()));
}

/// Demo specs whose name says they break the format on purpose are left out of validation.
fn schema_valid_demo(path: &Path) -> bool {
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    !(name.contains("typo") || name.contains("half-typed") || name.contains("two-forms"))
}

#[test]
fn every_demo_spec_meant_to_be_valid_validates() {
    let validator = jsonschema::draft202012::new(&schema()).expect("schema compiles");
    let specs = demo_specs();
    assert!(specs.len() >= 4, "demo specs found: {specs:?}");
    let mut checked = 0;
    for path in specs.iter().filter(|path| schema_valid_demo(path)) {
        let text = std::fs::read_to_string(path).expect("demo readable");
        let value: Value = serde_json::from_str(&text).expect("demo is JSON");
        let errors: Vec<String> = validator
            .iter_errors(&value)
            .map(|e| e.to_string())
            .collect();
        assert!(errors.is_empty(), "{}: {errors:?}", path.display());
        checked += 1;
    }
    assert!(checked >= 3);
}

/// Walk every subschema: each property and each definition has a description (directly, or on
/// the definition its `$ref` points to), and each allowed value is a `const` with a description.
#[test]
fn every_key_and_value_is_described() {
    let schema = schema();
    let mut missing = Vec::new();
    walk(&schema, &schema, "#", &mut missing);
    assert!(missing.is_empty(), "undocumented: {missing:#?}");
}

fn has_description(root: &Value, node: &Value) -> bool {
    if node
        .get("description")
        .and_then(Value::as_str)
        .is_some_and(|d| !d.is_empty())
    {
        return true;
    }
    node.get("$ref")
        .and_then(Value::as_str)
        .and_then(|reference| reference.strip_prefix('#'))
        .and_then(|pointer| root.pointer(pointer))
        .is_some_and(|target| has_description(root, target))
}

fn walk(root: &Value, node: &Value, path: &str, missing: &mut Vec<String>) {
    let Some(object) = node.as_object() else {
        return;
    };
    // values are described in standard JSON Schema (a `oneOf` of `const` + `description`), so
    // editors without markwell show them; a bare `enum` would leave its values undescribed
    if object.contains_key("enum") || object.contains_key("valueDescriptions") {
        missing.push(format!(
            "{path}: values listed without a `oneOf` of described `const`s"
        ));
    }
    if let Some(branches) = object.get("oneOf").and_then(Value::as_array) {
        for (index, branch) in branches.iter().enumerate() {
            let value = branch.get("const").and_then(Value::as_str);
            let described = branch
                .get("description")
                .and_then(Value::as_str)
                .is_some_and(|d| !d.is_empty());
            match value {
                Some(_) if described => {}
                Some(value) => missing.push(format!("{path}: value `{value}`")),
                None => missing.push(format!("{path}/oneOf/{index}: not a `const` branch")),
            }
        }
    }
    for container in ["properties", "$defs"] {
        if let Some(children) = object.get(container).and_then(Value::as_object) {
            for (name, child) in children {
                let child_path = format!("{path}/{container}/{name}");
                if !has_description(root, child) {
                    missing.push(child_path.clone());
                }
                walk(root, child, &child_path, missing);
            }
        }
    }
    for keyword in ["items", "additionalProperties", "then"] {
        if let Some(child) = object.get(keyword) {
            walk(root, child, &format!("{path}/{keyword}"), missing);
        }
    }
}

/// The Python with the reference packages: `MARKWELL_PYTHON` (set by `.ci/test` to the venv
/// that `.ci/setup` fills), else `python3`.
fn python() -> String {
    std::env::var("MARKWELL_PYTHON").unwrap_or_else(|_| "python3".to_string())
}
