//! End-to-end tests of the `markwell` command line: exit codes, output formats, bad paths.

use std::path::PathBuf;
use std::process::{Command, Output};

use serde_json::Value;

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn markwell(args: &[&str], dir: &std::path::Path) -> Output {
    Command::new(env!("CARGO_BIN_EXE_markwell"))
        .current_dir(dir)
        .env("NO_COLOR", "1")
        .args(args)
        .output()
        .expect("markwell runs")
}

fn write(dir: &std::path::Path, name: &str, text: &str) -> PathBuf {
    let path = dir.join(name);
    std::fs::write(&path, text).expect("write fixture");
    path
}

#[test]
fn clean_spec_exits_zero_and_says_so() {
    let dir = tempfile::tempdir().expect("temp dir");
    write(
        dir.path(),
        "loaves.csv",
        "branch,loaves\nQuayside,120\nHilltop,95\n",
    );
    write(
        dir.path(),
        "loaves.chart.json",
        r#"{ "source": { "path": "loaves.csv" }, "mark": "bar", "bind": { "x": "branch", "y": "loaves" } }"#,
    );
    let output = markwell(&["check", "."], dir.path());
    let stdout = String::from_utf8_lossy(&output.stdout);
    assert_eq!(output.status.code(), Some(0), "{stdout}");
    assert!(stdout.contains("1 spec checked, 1 clean"), "{stdout}");
    assert!(stdout.contains("passes (--fail-on error)"), "{stdout}");
}

#[test]
fn misspelled_key_is_an_error_at_its_exact_place_with_the_closest_key_as_fix() {
    let dir = tempfile::tempdir().expect("temp dir");
    write(dir.path(), "loaves.csv", "branch,loaves\nQuayside,120\n");
    write(
        dir.path(),
        "typo.chart.json",
        "{\n  \"source\": { \"path\": \"loaves.csv\" },\n  \"mark\": \"bar\",\n  \"bnid\": { \"x\": \"branch\" }\n}\n",
    );
    let output = markwell(
        &["check", "--format", "json", "typo.chart.json"],
        dir.path(),
    );
    assert_eq!(output.status.code(), Some(1));
    let report: Value = serde_json::from_slice(&output.stdout).expect("JSON report");
    let diagnostics = report["files"][0]["diagnostics"]
        .as_array()
        .expect("diagnostics");
    let unknown = diagnostics
        .iter()
        .find(|d| d["rule"] == "unknown-key")
        .expect("unknown-key reported");
    // `"bnid"` sits on line 4, columns 3 to 9 (1-based, the quotes included)
    assert_eq!(unknown["start"]["line"], 4);
    assert_eq!(unknown["start"]["column"], 3);
    assert_eq!(unknown["end"]["column"], 9);
    assert_eq!(unknown["fixes"][0]["edits"][0]["new_text"], "\"bind\"");
    assert!(unknown["message"]
        .as_str()
        .unwrap_or("")
        .contains("did you mean `bind`"));

    let report = markwell(&["check", "typo.chart.json"], dir.path());
    let text = String::from_utf8_lossy(&report.stdout);
    assert!(
        text.lines()
            .any(|line| line.starts_with("typo.chart.json:4:3  error  unknown-key")),
        "{text}"
    );
    assert!(text.contains("⟦\"bnid\"⟧"), "the key is marked: {text}");
    assert!(text.contains("--fix: rename to `bind`"), "{text}");
}

#[test]
fn missing_data_file_is_an_error_on_the_path() {
    let dir = tempfile::tempdir().expect("temp dir");
    write(
        dir.path(),
        "gone.chart.json",
        r#"{ "source": { "path": "nowhere.csv" }, "mark": "bar", "bind": { "x": "a", "y": "b" } }"#,
    );
    let output = markwell(
        &["check", "--format", "json", "gone.chart.json"],
        dir.path(),
    );
    assert_eq!(output.status.code(), Some(1));
    let report: Value = serde_json::from_slice(&output.stdout).expect("JSON report");
    let rules: Vec<&str> = report["files"][0]["diagnostics"]
        .as_array()
        .expect("diagnostics")
        .iter()
        .filter_map(|d| d["rule"].as_str())
        .collect();
    assert!(rules.contains(&"missing-source"), "{rules:?}");
}

#[test]
fn usage_and_io_problems_exit_two() {
    let dir = tempfile::tempdir().expect("temp dir");
    let missing = markwell(&["check", "no-such-folder"], dir.path());
    assert_eq!(missing.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&missing.stderr).contains("no such file or folder"));
    let bad_flag = markwell(&["check", "--format", "xml"], dir.path());
    assert_eq!(bad_flag.status.code(), Some(2));
    let bad_severity = markwell(
        &["check", "--severity", "unknown-key=loud", "."],
        dir.path(),
    );
    assert_eq!(bad_severity.status.code(), Some(2));
    let unknown_rule = markwell(&["explain", "no-such-rule"], dir.path());
    assert_eq!(unknown_rule.status.code(), Some(2));
}

#[test]
fn fail_on_and_severity_overrides_change_the_exit_code() {
    let dir = tempfile::tempdir().expect("temp dir");
    write(
        dir.path(),
        "trips.csv",
        "pier,notes\nNorth,\nSouth,\nEast,late\n",
    );
    write(
        dir.path(),
        "sparse.chart.json",
        r#"{ "source": { "path": "trips.csv" }, "mark": "point", "bind": { "x": "pier", "shape": "notes" } }"#,
    );
    let plain = markwell(&["check", "sparse.chart.json"], dir.path());
    assert_eq!(
        plain.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&plain.stdout)
    );
    let denied = markwell(
        &["check", "--fail-on", "warning", "sparse.chart.json"],
        dir.path(),
    );
    assert_eq!(denied.status.code(), Some(1));
    let off = markwell(
        &[
            "check",
            "--fail-on",
            "warning",
            "--severity",
            "sparse-column=off",
            "sparse.chart.json",
        ],
        dir.path(),
    );
    assert_eq!(
        off.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&off.stdout)
    );
}

#[test]
fn configuration_file_sets_severities() {
    let dir = tempfile::tempdir().expect("temp dir");
    write(
        dir.path(),
        "markwell.toml",
        "[rules]\nmissing-source = \"warning\"\n",
    );
    write(
        dir.path(),
        "gone.chart.json",
        r#"{ "source": { "path": "nowhere.csv" }, "mark": "bar", "bind": { "x": "a", "y": "b" } }"#,
    );
    let output = markwell(&["check", "gone.chart.json"], dir.path());
    assert_eq!(
        output.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&output.stdout)
    );
}

#[test]
fn invalid_utf8_and_huge_and_folder_inputs_are_handled() {
    let dir = tempfile::tempdir().expect("temp dir");
    std::fs::write(
        dir.path().join("bad.chart.json"),
        b"{ \"title\": \"caf\xe9\" }",
    )
    .expect("write");
    let output = markwell(&["check", "--format", "json", "bad.chart.json"], dir.path());
    assert_eq!(output.status.code(), Some(1));
    let report: Value = serde_json::from_slice(&output.stdout).expect("JSON report");
    let messages: Vec<&str> = report["files"][0]["diagnostics"]
        .as_array()
        .expect("diagnostics")
        .iter()
        .filter_map(|d| d["message"].as_str())
        .collect();
    assert!(
        messages.iter().any(|m| m.contains("not valid UTF-8")),
        "{messages:?}"
    );

    // a folder named like a spec is searched, not read (and holds no specs: exit 2)
    std::fs::create_dir(dir.path().join("odd.chart.json")).expect("mkdir");
    let folder = markwell(&["check", "odd.chart.json"], dir.path());
    assert_eq!(folder.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&folder.stderr).contains("no chart specs"));
}

#[test]
fn rules_and_explain_print_the_registry_and_docs() {
    let rules = markwell(&["rules"], &root());
    let text = String::from_utf8_lossy(&rules.stdout);
    assert!(text.contains("unknown-column"), "{text}");
    let explain = markwell(&["explain", "unknown-column"], &root());
    let docs = String::from_utf8_lossy(&explain.stdout);
    for section in markwell::analysis::rules::DOC_SECTIONS {
        assert!(docs.contains(section), "{docs}");
    }
}

#[test]
fn the_active_ranking_is_selectable_and_checked() {
    let demo = root().join("demo-data");
    let default = markwell(&["check", "ferry-delay-size.chart.json"], &demo);
    let text = String::from_utf8_lossy(&default.stdout);
    assert!(text.contains("Mackinlay (1986)"), "{text}");
    let munzner = markwell(
        &[
            "check",
            "--ranking",
            "munzner-2014",
            "ferry-delay-size.chart.json",
        ],
        &demo,
    );
    let text = String::from_utf8_lossy(&munzner.stdout);
    assert!(text.contains("Munzner (2014)"), "{text}");
    let unknown = markwell(&["check", "--ranking", "alphabetical", "."], &demo);
    assert_eq!(unknown.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&unknown.stderr).contains("mackinlay-1986"));
}

#[test]
fn a_spec_over_the_size_limit_is_refused_with_a_clear_error() {
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("huge.chart.json");
    let file = std::fs::File::create(&path).expect("create");
    // a sparse 17 MiB file: over the 16 MiB limit without writing 17 MiB
    file.set_len(17 * 1024 * 1024).expect("set length");
    let output = markwell(&["check", "huge.chart.json"], dir.path());
    assert_eq!(output.status.code(), Some(2));
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(stderr.contains("larger than 16 MiB"), "{stderr}");
}

#[test]
fn a_ragged_row_is_a_warning_pointing_at_the_data_file_line() {
    let dir = tempfile::tempdir().expect("temp dir");
    write(
        dir.path(),
        "piers.csv",
        "pier,boats\nNorth,3\nSouth,4,extra\nEast,5\n",
    );
    write(
        dir.path(),
        "piers.chart.json",
        r#"{ "source": { "path": "piers.csv" }, "mark": "bar", "bind": { "x": "pier", "y": "boats" } }"#,
    );
    let output = markwell(
        &["check", "--format", "json", "piers.chart.json"],
        dir.path(),
    );
    assert_eq!(
        output.status.code(),
        Some(0),
        "a warning does not fail the run"
    );
    let report: Value = serde_json::from_slice(&output.stdout).expect("JSON report");
    let diagnostic = report["files"][0]["diagnostics"]
        .as_array()
        .and_then(|all| all.iter().find(|d| d["rule"] == "malformed-data").cloned())
        .expect("the ragged row is reported under its own rule");
    assert_eq!(diagnostic["severity"], "warning");
    // said once, with the right plural, and the related location does not repeat it
    let message = diagnostic["message"].as_str().unwrap_or("");
    assert_eq!(
        message,
        "line 3 of the data: a row of 3 cells but the header names 2 columns; the extra cells are ignored"
    );
    assert_eq!(diagnostic["related"][0]["message"], "this row");
    // `South,4,extra` is the third line of the file (1-based, as editors count)
    assert_eq!(diagnostic["related"][0]["start"]["line"], 3);
    assert!(diagnostic["related"][0]["path"]
        .as_str()
        .unwrap_or("")
        .ends_with("piers.csv"));
}

#[test]
fn switching_off_absent_files_keeps_data_corruption_visible() {
    let dir = tempfile::tempdir().expect("temp dir");
    write(
        dir.path(),
        "markwell.toml",
        "[rules]\nmissing-source = \"off\"\n",
    );
    write(dir.path(), "piers.csv", "pier,boats\nNorth\nSouth,4\n");
    write(
        dir.path(),
        "piers.chart.json",
        r#"{ "source": { "path": "piers.csv" }, "mark": "bar", "bind": { "x": "pier", "y": "boats" } }"#,
    );
    let output = markwell(
        &["check", "--format", "json", "piers.chart.json"],
        dir.path(),
    );
    let report: Value = serde_json::from_slice(&output.stdout).expect("JSON report");
    let diagnostics = report["files"][0]["diagnostics"]
        .as_array()
        .cloned()
        .unwrap_or_default();
    let ragged: Vec<&Value> = diagnostics
        .iter()
        .filter(|d| d["rule"] == "malformed-data")
        .collect();
    assert_eq!(ragged.len(), 1, "{diagnostics:#?}");
    assert_eq!(
        ragged[0]["message"],
        "line 2 of the data: a row of 1 cell but the header names 2 columns; the missing cells count as missing values"
    );
}

#[test]
fn a_spec_without_source_is_not_reported_clean() {
    let dir = tempfile::tempdir().expect("temp dir");
    write(
        dir.path(),
        "draft.chart.json",
        r#"{ "mark": "bar", "bind": { "x": "pier", "y": "boats" } }"#,
    );
    let output = markwell(
        &["check", "--format", "json", "draft.chart.json"],
        dir.path(),
    );
    assert_eq!(
        output.status.code(),
        Some(0),
        "a note does not fail the run"
    );
    let report: Value = serde_json::from_slice(&output.stdout).expect("JSON report");
    let rules: Vec<&str> = report["files"][0]["diagnostics"]
        .as_array()
        .map(|all| all.iter().filter_map(|d| d["rule"].as_str()).collect())
        .unwrap_or_default();
    assert_eq!(rules, vec!["no-data-source"]);
}

#[test]
fn sources_says_once_which_tables_are_unchecked_and_rule_pages_do_not() {
    let sources = markwell(&["sources"], &root());
    assert_eq!(sources.status.code(), Some(0));
    let page = String::from_utf8_lossy(&sources.stdout);
    assert!(
        page.contains("## Not yet checked against the publication"),
        "{page}"
    );
    for publication in [
        "Mackinlay, J. (1986)",
        "Stevens, S. S. (1957)",
        "Bertin, J. (1967)",
    ] {
        assert!(page.contains(publication), "{page}");
    }
    let explain = markwell(&["explain", "better-channel-free"], &root());
    let docs = String::from_utf8_lossy(&explain.stdout);
    assert!(docs.contains("markwell sources"), "{docs}");
    assert!(!docs.contains("memory") && !docs.contains("src/"), "{docs}");
}

fn stderr_of(output: &Output) -> String {
    String::from_utf8_lossy(&output.stderr).into_owned()
}

#[test]
fn argument_errors_speak_in_markwell_s_voice_and_exit_two() {
    let dir = tempfile::tempdir().expect("temp dir");
    let old_flag = markwell(&["check", "--deny", "warnings", "."], dir.path());
    assert_eq!(old_flag.status.code(), Some(2));
    let text = stderr_of(&old_flag);
    assert!(
        text.starts_with("markwell: there is no option `--deny`"),
        "{text}"
    );
    assert!(
        !text.contains("error:"),
        "no label of another program: {text}"
    );

    let old_format = markwell(&["check", "--format", "human", "."], dir.path());
    assert_eq!(old_format.status.code(), Some(2));
    let text = stderr_of(&old_format);
    assert!(
        text.starts_with(
            "markwell: `--format human` is not an option; use `report`, `json` or `sarif`"
        ),
        "{text}"
    );

    let typo = markwell(&["chek"], dir.path());
    assert_eq!(typo.status.code(), Some(2));
    let text = stderr_of(&typo);
    assert!(text.contains("did you mean `check`?"), "{text}");

    let bad_fail_on = markwell(&["check", "--fail-on", "warnings", "."], dir.path());
    assert_eq!(bad_fail_on.status.code(), Some(2));
    let text = stderr_of(&bad_fail_on);
    assert!(
        text.contains("use `error`, `warning`, `info` or `hint`"),
        "{text}"
    );

    // our own usage errors read the same way
    let unknown_rule = markwell(&["explain", "no-such-rule"], dir.path());
    assert!(stderr_of(&unknown_rule).starts_with("markwell: there is no rule `no-such-rule`"));
    let preview_alone = markwell(&["check", "--preview", "."], dir.path());
    assert_eq!(preview_alone.status.code(), Some(2));
    assert!(stderr_of(&preview_alone).starts_with("markwell: "));
}

#[test]
fn an_empty_run_exits_two_and_says_why() {
    let dir = tempfile::tempdir().expect("temp dir");
    write(dir.path(), "loaves.csv", "branch,loaves\nQuayside,120\n");
    let output = markwell(&["check", "."], dir.path());
    assert_eq!(output.status.code(), Some(2));
    let text = stderr_of(&output);
    assert!(text.contains("no chart specs (`*.chart.json`)"), "{text}");

    let json = markwell(&["check", "--format", "json", "."], dir.path());
    assert_eq!(json.status.code(), Some(2));
    let report: Value = serde_json::from_slice(&json.stdout).expect("JSON report");
    assert_eq!(report["files"].as_array().map(Vec::len), Some(0));
    assert!(report["errors"][0]["message"]
        .as_str()
        .unwrap_or("")
        .contains("no chart specs"));
}

#[test]
fn invalid_configuration_exits_two_with_a_suggestion() {
    let spec = r#"{ "source": { "rows": [{ "a": "x", "b": 1 }] }, "mark": "bar", "bind": { "x": "a", "y": "b" } }"#;
    let cases = [
        (
            "[rules]\nsparse-colum = \"off\"\n",
            "did you mean `sparse-column`?",
        ),
        (
            "[rules]\nsparse-column = \"warn\"\n",
            "did you mean `warning`?",
        ),
        (
            "[data]\nallow-outside-workspce = true\n",
            "did you mean `allow-outside-workspace`?",
        ),
        ("rankng = \"munzner-2014\"\n", "did you mean `ranking`?"),
    ];
    for (config, expected) in cases {
        let dir = tempfile::tempdir().expect("temp dir");
        write(dir.path(), "markwell.toml", config);
        write(dir.path(), "rows.chart.json", spec);
        let output = markwell(&["check", "rows.chart.json"], dir.path());
        assert_eq!(output.status.code(), Some(2), "{config}");
        let text = stderr_of(&output);
        assert!(text.contains("markwell.toml"), "{text}");
        assert!(text.contains(expected), "{config}: {text}");
        assert!(output.stdout.is_empty(), "no report on defaults");

        let json = markwell(
            &["check", "--format", "json", "rows.chart.json"],
            dir.path(),
        );
        assert_eq!(json.status.code(), Some(2), "{config}");
        let report: Value = serde_json::from_slice(&json.stdout).expect("JSON report");
        assert_eq!(report["files"].as_array().map(Vec::len), Some(0));
        let problem = &report["errors"][0];
        assert!(problem["path"]
            .as_str()
            .unwrap_or("")
            .ends_with("markwell.toml"));
        assert!(
            problem["message"].as_str().unwrap_or("").contains(expected),
            "{problem}"
        );
    }
}

#[test]
fn a_data_file_given_to_check_and_a_spec_given_to_profile_name_the_right_command() {
    let dir = tempfile::tempdir().expect("temp dir");
    write(dir.path(), "loaves.csv", "branch,loaves\nQuayside,120\n");
    write(
        dir.path(),
        "loaves.json",
        "[{\"branch\": \"Quayside\", \"loaves\": 120}]",
    );
    write(
        dir.path(),
        "loaves.chart.json",
        r#"{ "source": { "path": "loaves.csv" }, "mark": "bar", "bind": { "x": "branch", "y": "loaves" } }"#,
    );
    for data in ["loaves.csv", "loaves.json"] {
        let output = markwell(&["check", data], dir.path());
        assert_eq!(output.status.code(), Some(2), "{data}");
        let text = stderr_of(&output);
        assert_eq!(text.lines().count(), 1, "one sentence: {text}");
        assert!(text.contains("is a data file"), "{text}");
        assert!(
            text.contains(&format!("`markwell profile {data}`")),
            "{text}"
        );
    }
    let output = markwell(&["profile", "loaves.chart.json"], dir.path());
    assert_eq!(output.status.code(), Some(2));
    let text = stderr_of(&output);
    assert_eq!(text.lines().count(), 1, "one sentence: {text}");
    assert!(text.contains("is a chart spec"), "{text}");
    assert!(
        text.contains("`markwell check loaves.chart.json`"),
        "{text}"
    );
}

const TYPO_SPEC: &str = "{\n  \"source\": { \"path\": \"loaves.csv\" },\n  \"mark\": \"bar\",\n  \"bnid\": { \"x\": \"branch\", \"y\": \"lovaes\" }\n}\n";

#[test]
fn fix_applies_the_safe_fixes_previews_them_and_checks_again() {
    let dir = tempfile::tempdir().expect("temp dir");
    write(
        dir.path(),
        "loaves.csv",
        "branch,loaves\nQuayside,120\nHilltop,95\n",
    );
    let spec = write(dir.path(), "typo.chart.json", TYPO_SPEC);

    // the report marks what --fix can do
    let before = markwell(&["check", "typo.chart.json"], dir.path());
    let text = String::from_utf8_lossy(&before.stdout);
    assert!(text.contains("--fix: rename to `bind`"), "{text}");

    // --preview shows the change and writes nothing
    let preview = markwell(
        &["check", "--fix", "--preview", "typo.chart.json"],
        dir.path(),
    );
    let text = String::from_utf8_lossy(&preview.stdout);
    assert!(
        text.contains("typo.chart.json would change by --fix"),
        "{text}"
    );
    assert!(
        text.contains("was    \"bnid\": { \"x\": \"branch\", \"y\": \"lovaes\" }"),
        "{text}"
    );
    assert!(
        text.contains("now    \"bind\": { \"x\": \"branch\", \"y\": \"lovaes\" }"),
        "{text}"
    );
    assert_eq!(
        std::fs::read_to_string(&spec).unwrap_or_default(),
        TYPO_SPEC
    );

    // --fix writes; the re-check then finds the misspelt column, which a second run fixes
    let first = markwell(&["check", "--fix", "typo.chart.json"], dir.path());
    let text = String::from_utf8_lossy(&first.stdout);
    assert!(text.contains("typo.chart.json changed by --fix"), "{text}");
    let written = std::fs::read_to_string(&spec).unwrap_or_default();
    assert!(written.contains("\"bind\""), "{written}");
    assert!(
        text.contains("--fix: use column `loaves`"),
        "re-checked: {text}"
    );
    assert_eq!(first.status.code(), Some(1), "the column is still wrong");

    let second = markwell(&["check", "--fix", "typo.chart.json"], dir.path());
    let written = std::fs::read_to_string(&spec).unwrap_or_default();
    assert!(written.contains("\"y\": \"loaves\""), "{written}");
    assert_eq!(
        second.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&second.stdout)
    );
}

#[test]
fn fix_never_touches_a_spec_with_syntax_errors_and_leaves_unsafe_fixes_to_the_editor() {
    let dir = tempfile::tempdir().expect("temp dir");
    write(dir.path(), "loaves.csv", "branch,loaves\nQuayside,120\n");
    let broken_text = "{\n  \"source\": { \"path\": \"loaves.csv\" },,\n  \"mrak\": \"bar\"\n}\n";
    let broken = write(dir.path(), "broken.chart.json", broken_text);
    let output = markwell(&["check", "--fix", "broken.chart.json"], dir.path());
    let text = String::from_utf8_lossy(&output.stdout);
    assert!(
        text.contains("broken.chart.json has syntax errors: --fix leaves it as it is"),
        "{text}"
    );
    assert_eq!(
        std::fs::read_to_string(&broken).unwrap_or_default(),
        broken_text
    );
    assert!(text.contains("in an editor: rename to `mark`"), "{text}");
    assert!(!text.contains("--fix: rename"), "{text}");

    // a stacked bar of a negative column: the fix changes the chart, so --fix leaves it
    write(
        dir.path(),
        "margins.csv",
        "branch,kind,margin\nQuay,rye,-3\nQuay,spelt,4\n",
    );
    let stack_text = r#"{ "source": { "path": "margins.csv" }, "mark": "bar", "arrange": "stack", "bind": { "x": "branch", "y": { "column": "margin", "summary": "sum" }, "hue": "kind" } }"#;
    let stack = write(dir.path(), "stack.chart.json", stack_text);
    let output = markwell(&["check", "--fix", "stack.chart.json"], dir.path());
    let text = String::from_utf8_lossy(&output.stdout);
    assert!(text.contains("in an editor: "), "{text}");
    assert!(!text.contains("changed by --fix"), "{text}");
    assert_eq!(
        std::fs::read_to_string(&stack).unwrap_or_default(),
        stack_text
    );
}

#[test]
fn json_related_locations_have_one_shape_and_io_problems_are_listed() {
    let demo = root().join("demo-data");
    let output = markwell(
        &[
            "check",
            "--format",
            "json",
            "bakery-colours-products.chart.json",
            "no-such.chart.json",
        ],
        &demo,
    );
    assert_eq!(output.status.code(), Some(2));
    let report: Value = serde_json::from_slice(&output.stdout).expect("JSON report");
    let related: Vec<&Value> = report["files"][0]["diagnostics"]
        .as_array()
        .expect("diagnostics")
        .iter()
        .flat_map(|d| d["related"].as_array().into_iter().flatten())
        .collect();
    assert!(!related.is_empty());
    for place in related {
        assert_eq!(place["path"], "bakery-colours-products.chart.json");
        for end in ["start", "end"] {
            for key in ["line", "column", "offset"] {
                assert!(place[end][key].is_u64(), "{place}");
            }
        }
        assert!(place["message"].is_string());
    }
    assert_eq!(report["errors"][0]["path"], "no-such.chart.json");
    assert_eq!(report["errors"][0]["message"], "no such file or folder");
    assert_eq!(report["summary"]["unreadable"], 1);
    for word in ["error", "warning", "info", "hint"] {
        assert!(report["summary"][word].is_u64(), "{word}");
    }
}

#[test]
fn the_report_uses_the_configuration_s_severity_words() {
    let demo = root().join("demo-data");
    let output = markwell(&["check", "."], &demo);
    let text = String::from_utf8_lossy(&output.stdout);
    let summary = text.lines().last().unwrap_or("");
    assert!(
        summary.contains("· error ")
            && summary.contains("· warning ")
            && summary.contains("· info ")
            && summary.contains("· hint "),
        "{summary}"
    );
    for foreign in ["note:", "note[", "warning[", " --> ", "^^^", "help:"] {
        assert!(!text.contains(foreign), "`{foreign}` in {text}");
    }
    let words = ["error", "warning", "info", "hint"];
    for line in text.lines().filter(|line| line.contains(".chart.json:")) {
        if line.starts_with(' ') {
            continue;
        }
        let severity = line.split("  ").nth(1).unwrap_or("");
        assert!(words.contains(&severity), "{line}");
    }
}
