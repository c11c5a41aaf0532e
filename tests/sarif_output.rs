//! `markwell check --format sarif` produces a SARIF 2.1.0 log that validates against the
//! standard's JSON schema (OASIS SARIF 2.1.0, schema copy in `tests/sarif/`, see SOURCES.md).

use std::path::PathBuf;
use std::process::Command;

use serde_json::Value;

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
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
    let schema: Value = serde_json::from_str(&schema_text).expect("schema is JSON");
    // the SARIF 2.1.0 schema is written in JSON Schema draft-04
    let validator = jsonschema::draft4::new(&schema).expect("SARIF schema compiles");
    let errors: Vec<String> = validator
        .iter_errors(&log)
        .map(|error| format!("{} at {}", error, error.instance_path()))
        .collect();
    assert!(errors.is_empty(), "SARIF log invalid: {errors:#?}");

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
        "\"color\""
    );
}
