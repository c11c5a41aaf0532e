//! `markwell check --format sarif` produces a SARIF 2.1.0 log that validates against the
//! standard's JSON schema (OASIS SARIF 2.1.0, schema copy in `tests/sarif/`, see SOURCES.md).

use std::path::PathBuf;
use std::process::Command;

use serde_json::Value;

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// Replace the published `language` pattern by the same pattern with its stray `]` escaped,
/// everywhere in the schema; returns how many were replaced.
fn escape_stray_bracket(node: &mut Value) -> usize {
    const PUBLISHED: &str = "^[a-zA-Z]{2}|^[a-zA-Z]{2}-[a-zA-Z]{2}]?$";
    const ESCAPED: &str = "^[a-zA-Z]{2}|^[a-zA-Z]{2}-[a-zA-Z]{2}\\]?$";
    match node {
        Value::Object(map) => {
            let mut count = 0;
            for (key, value) in map.iter_mut() {
                if key == "pattern" && value.as_str() == Some(PUBLISHED) {
                    *value = Value::String(ESCAPED.to_string());
                    count += 1;
                } else {
                    count += escape_stray_bracket(value);
                }
            }
            count
        }
        Value::Array(items) => items.iter_mut().map(escape_stray_bracket).sum(),
        _ => 0,
    }
}

#[test]
fn sarif_log_of_the_demo_validates_against_the_sarif_2_1_0_schema() {
    let output = Command::new(env!("CARGO_BIN_EXE_markwell"))
        .current_dir(root())
        .args(["check", "--format", "sarif", "demo-data"])
        .output()
        .expect("markwell runs");
    assert_eq!(output.status.code(), Some(1), "the demo has errors");
    let log: Value = serde_json::from_slice(&output.stdout).expect("SARIF is JSON");

    let schema_text = std::fs::read_to_string(root().join("tests/sarif/sarif-2.1.0-rtm.5.json"))
        .expect("schema copy");
    let mut schema: Value = serde_json::from_str(&schema_text).expect("schema is JSON");
    // The published pattern of `run.language` ends in a stray `]`, a literal in ECMA-262
    // regular expressions (which JSON Schema patterns use) but a syntax error for the Rust regex
    // engine the crate checks patterns with; escaping it keeps the meaning. The Python check
    // below validates against the unmodified file.
    let escaped = escape_stray_bracket(&mut schema);
    assert_eq!(escaped, 2, "`run.language` and `toolComponent.language`");
    // the SARIF 2.1.0 schema is written in JSON Schema draft-04
    let validator = jsonschema::draft4::new(&schema).expect("SARIF schema compiles");
    let errors: Vec<String> = validator
        .iter_errors(&log)
        .map(|error| format!("{} at {}", error, error.instance_path()))
        .collect();
    assert!(errors.is_empty(), "SARIF log invalid: {errors:#?}");

    // second opinion: the Python reference implementation on the unmodified schema
    let script = "import json,sys,jsonschema; s=json.load(open(sys.argv[1])); l=json.load(sys.stdin); jsonschema.Draft4Validator.check_schema(s); errs=list(jsonschema.Draft4Validator(s).iter_errors(l)); print(len(errs)); [print(e.message) for e in errs[:5]]";
    let mut python = Command::new(python())
        .arg("-c")
        .arg(script)
        .arg(root().join("tests/sarif/sarif-2.1.0-rtm.5.json"))
        .stdin(std::process::Stdio::piped())
        .stdout(std::process::Stdio::piped())
        .spawn()
        .expect("python runs (set MARKWELL_PYTHON or install python3)");
    if let Some(mut stdin) = python.stdin.take() {
        use std::io::Write;
        stdin.write_all(&output.stdout).expect("write log");
    }
    let checked = python.wait_with_output().expect("python finishes");
    let verdict = String::from_utf8_lossy(&checked.stdout);
    assert!(
        checked.status.success() && verdict.trim() == "0",
        "python jsonschema: {verdict}"
    );

    assert_eq!(log["version"], "2.1.0");
    let run = &log["runs"][0];
    assert_eq!(run["tool"]["driver"]["name"], "markwell");
    let rules = run["tool"]["driver"]["rules"].as_array().expect("rules");
    let results = run["results"].as_array().expect("results");
    assert!(!results.is_empty());
    for result in results {
        // every result names a registered rule, by id and by index
        let index = result["ruleIndex"].as_u64().expect("ruleIndex") as usize;
        assert_eq!(rules[index]["id"], result["ruleId"]);
        let region = &result["locations"][0]["physicalLocation"]["region"];
        assert!(region["startLine"].as_u64().unwrap_or(0) >= 1);
        assert!(region["startColumn"].as_u64().unwrap_or(0) >= 1);
    }
    // the misspelled key in the demo carries its fix as a SARIF replacement
    let typo = results
        .iter()
        .find(|result| result["ruleId"] == "unknown-key")
        .expect("the demo has an unknown key");
    assert_eq!(
        typo["fixes"][0]["artifactChanges"][0]["replacements"][0]["insertedContent"]["text"],
        "\"colour\""
    );
}

/// The Python with the reference packages: `MARKWELL_PYTHON` (set by `.ci/test` to the venv
/// that `.ci/setup` fills), else `python3`.
fn python() -> String {
    std::env::var("MARKWELL_PYTHON").unwrap_or_else(|_| "python3".to_string())
}
