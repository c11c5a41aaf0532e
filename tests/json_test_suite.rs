//! The parser against Nicolas Seriot's JSONTestSuite (2016, MIT; copy and source note in
//! `tests/json-test-suite/`). File-name prefixes, from the suite's README: `y_` must be
//! accepted, `n_` must be rejected, `i_` is the parser's choice (we only require no panic).

mod syntax_support;

use std::path::{Path, PathBuf};
use std::sync::mpsc;
use std::time::{Duration, Instant};

use markwell::syntax::{self, SyntaxErrorKind, SyntaxTree};

/// Hang guard, generous on purpose: this is not a performance test.
const TIME_LIMIT_PER_FILE: Duration = Duration::from_secs(2);

fn suite_directory() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/json-test-suite/test_parsing")
}

struct Case {
    file_name: String,
    bytes: Vec<u8>,
}

fn load_cases() -> Vec<Case> {
    let entries = std::fs::read_dir(suite_directory()).expect("test data directory is readable");
    let mut cases: Vec<Case> = entries
        .map(|entry| {
            let path = entry.expect("directory entry is readable").path();
            let file_name = path
                .file_name()
                .and_then(|name| name.to_str())
                .expect("suite file names are ASCII")
                .to_string();
            let bytes = std::fs::read(&path).expect("test file is readable");
            Case { file_name, bytes }
        })
        .filter(|case| case.file_name.ends_with(".json"))
        .collect();
    cases.sort_by(|a, b| a.file_name.cmp(&b.file_name));
    cases
}

/// Parse on a separate thread and fail if it takes longer than the time limit.
fn parse_with_time_limit(file_name: &str, text: String) -> SyntaxTree {
    let (sender, receiver) = mpsc::channel();
    std::thread::spawn(move || {
        let started = Instant::now();
        let tree = syntax::parse(&text);
        let _ = sender.send((tree, started.elapsed()));
    });
    match receiver.recv_timeout(TIME_LIMIT_PER_FILE) {
        Ok((tree, elapsed)) => {
            assert!(
                elapsed < TIME_LIMIT_PER_FILE,
                "{file_name}: parsing took {elapsed:?}"
            );
            tree
        }
        Err(mpsc::RecvTimeoutError::Timeout) => {
            panic!("{file_name}: parsing did not finish within {TIME_LIMIT_PER_FILE:?}")
        }
        Err(mpsc::RecvTimeoutError::Disconnected) => panic!("{file_name}: the parser panicked"),
    }
}

#[test]
fn json_test_suite_cases_are_accepted_and_rejected_as_the_suite_says() {
    let cases = load_cases();
    let mut accepted_y = Vec::new();
    let mut failed_y = Vec::new();
    let mut rejected_n_by_parser = 0;
    let mut rejected_n_as_invalid_utf8 = 0;
    let mut failed_n = Vec::new();
    let mut invalid_utf8_n_also_rejected_by_parser = 0;
    let mut survived_i = 0;
    let mut accepted_i = 0;
    let mut y_with_duplicate_keys = Vec::new();
    let (mut count_y, mut count_n, mut count_i) = (0, 0, 0);

    for case in &cases {
        // The front ends read bytes, report invalid UTF-8 themselves and parse the lossy text
        // (U+FFFD for bad bytes); we do the same here. So a file that is not UTF-8 counts as
        // rejected at the reading step, before the parser sees it.
        let is_valid_utf8 = std::str::from_utf8(&case.bytes).is_ok();
        let text = String::from_utf8_lossy(&case.bytes).into_owned();
        let tree = parse_with_time_limit(&case.file_name, text.clone());
        if let Err(violation) = syntax_support::check_tree_invariants(&text, &tree) {
            panic!("{}: {violation}", case.file_name);
        }
        let grammar_errors: Vec<_> = tree
            .errors()
            .iter()
            .filter(|error| error.kind == SyntaxErrorKind::Grammar)
            .collect();
        let has_duplicate_keys = tree
            .errors()
            .iter()
            .any(|error| error.kind == SyntaxErrorKind::DuplicateKey);
        if has_duplicate_keys && case.file_name.starts_with("y_") {
            y_with_duplicate_keys.push(case.file_name.as_str());
        }

        if case.file_name.starts_with("y_") {
            count_y += 1;
            if is_valid_utf8 && grammar_errors.is_empty() {
                accepted_y.push(case.file_name.as_str());
            } else {
                failed_y.push(format!("{}: {grammar_errors:?}", case.file_name));
            }
        } else if case.file_name.starts_with("n_") {
            count_n += 1;
            if !is_valid_utf8 {
                rejected_n_as_invalid_utf8 += 1;
                if !grammar_errors.is_empty() {
                    invalid_utf8_n_also_rejected_by_parser += 1;
                }
            } else if !grammar_errors.is_empty() {
                rejected_n_by_parser += 1;
            } else {
                failed_n.push(case.file_name.clone());
            }
        } else if case.file_name.starts_with("i_") {
            count_i += 1;
            survived_i += 1; // reaching here means: no panic, no hang, invariants hold
            if is_valid_utf8 && grammar_errors.is_empty() {
                accepted_i += 1;
            }
        }
    }

    println!(
        "json test suite: y {}/{count_y} accepted, n {}/{count_n} rejected \
         ({rejected_n_by_parser} by the parser, {rejected_n_as_invalid_utf8} as invalid UTF-8 \
         when read, of which the parser alone also rejects \
         {invalid_utf8_n_also_rejected_by_parser}), i {survived_i} no panic \
         ({accepted_i} accepted)",
        accepted_y.len(),
        rejected_n_by_parser + rejected_n_as_invalid_utf8,
    );

    // counts of the suite at the copied commit (tests/json-test-suite/SOURCES.md)
    assert_eq!((count_y, count_n, count_i), (95, 188, 35));
    assert!(failed_y.is_empty(), "y_ cases with errors: {failed_y:#?}");
    assert!(failed_n.is_empty(), "n_ cases accepted: {failed_n:#?}");
    // RFC 8259 section 4: object names SHOULD be unique, so duplicate keys are valid JSON (the
    // suite has them as `y_`); our parser still flags them, as a separate kind of error.
    assert_eq!(
        y_with_duplicate_keys,
        vec![
            "y_object_duplicated_key.json",
            "y_object_duplicated_key_and_value.json"
        ]
    );
}

#[test]
fn nesting_far_beyond_the_bound_is_one_error_node_without_stack_overflow() {
    // 1,000,000 levels: the parser must neither recurse that deep nor take long
    let depth = 1_000_000;
    let mut text = "[".repeat(depth);
    text.push_str(&"]".repeat(depth));
    let tree = parse_with_time_limit("a million nested arrays", text.clone());
    syntax_support::check_tree_invariants(&text, &tree).expect("invariants hold");
    let nesting_errors: Vec<_> = tree
        .errors()
        .iter()
        .filter(|error| error.message.starts_with("nesting deeper than"))
        .collect();
    assert_eq!(nesting_errors.len(), 1, "{nesting_errors:?}");
    assert_eq!(tree.errors().len(), 1, "balanced input has no other error");
    // the 257th `[` opens the swallowed part
    let bound = syntax::MAX_NESTING_DEPTH;
    assert_eq!(nesting_errors[0].range.start, bound);

    let mut objects = "{\"a\":".repeat(depth);
    objects.push_str(&"}".repeat(depth));
    let tree = parse_with_time_limit("a million nested objects", objects.clone());
    syntax_support::check_tree_invariants(&objects, &tree).expect("invariants hold");
    assert_eq!(
        tree.errors().len(),
        1,
        "{:?}",
        &tree.errors()[..3.min(tree.errors().len())]
    );
}

#[test]
fn nesting_up_to_the_bound_is_accepted() {
    let bound = syntax::MAX_NESTING_DEPTH;
    let text = format!("{}{}", "[".repeat(bound), "]".repeat(bound));
    let tree = parse_with_time_limit("nesting at the bound", text);
    assert_eq!(tree.errors(), &[]);
    let text = format!("{}{}", "[".repeat(bound + 1), "]".repeat(bound + 1));
    let tree = parse_with_time_limit("nesting one past the bound", text);
    assert_eq!(tree.errors().len(), 1);
}

/// The real binary over the suite: `markwell check --format json` gives no `syntax-error` for
/// any of the 95 must-accept cases (duplicate keys there are `duplicate-key`, not a syntax
/// error) and at least one for each of the 188 must-reject cases. Source of the cases and of
/// their expected results: Nicolas Seriot's JSONTestSuite (2016), file-name prefixes `y_`/`n_`
/// as its README defines them; copy and notes in `tests/json-test-suite/SOURCES.md`.
#[test]
fn the_cli_reports_syntax_errors_exactly_for_the_must_reject_cases() {
    let dir = tempfile::tempdir().expect("temp dir");
    let mut expected = std::collections::BTreeMap::new();
    for case in load_cases() {
        let Some(stem) = case.file_name.strip_suffix(".json") else {
            continue;
        };
        if !(stem.starts_with("y_") || stem.starts_with("n_")) {
            continue;
        }
        // `check` looks for `*.chart.json` in a folder; the bytes are copied unchanged
        let name = format!("{stem}.chart.json");
        std::fs::write(dir.path().join(&name), &case.bytes).expect("write case");
        expected.insert(name, stem.starts_with("n_"));
    }
    let output = std::process::Command::new(env!("CARGO_BIN_EXE_markwell"))
        .current_dir(dir.path())
        .env("NO_COLOR", "1")
        .args(["check", "--format", "json", "."])
        .output()
        .expect("markwell runs");
    let report: serde_json::Value =
        serde_json::from_slice(&output.stdout).expect("a JSON report on stdout");
    let files = report["files"].as_array().expect("files in the report");
    let mut seen = 0;
    let mut wrong = Vec::new();
    let (mut y_count, mut n_count) = (0, 0);
    for file in files {
        let path = file["path"].as_str().unwrap_or_default();
        let name = Path::new(path)
            .file_name()
            .map(|name| name.to_string_lossy().into_owned())
            .unwrap_or_default();
        let Some(must_reject) = expected.get(&name) else {
            continue;
        };
        seen += 1;
        let syntax_errors = file["diagnostics"]
            .as_array()
            .map(|all| all.iter().filter(|d| d["rule"] == "syntax-error").count())
            .unwrap_or(0);
        if *must_reject {
            n_count += 1;
            if syntax_errors == 0 {
                wrong.push(format!("{name}: accepted"));
            }
        } else {
            y_count += 1;
            if syntax_errors > 0 {
                wrong.push(format!("{name}: {syntax_errors} syntax errors"));
            }
        }
    }
    assert_eq!(seen, expected.len(), "every case is in the report");
    assert_eq!((y_count, n_count), (95, 188));
    assert!(wrong.is_empty(), "{wrong:#?}");
    // the two must-accept cases with a repeated key get `duplicate-key` instead
    let duplicates: Vec<&str> = files
        .iter()
        .filter(|file| {
            file["diagnostics"]
                .as_array()
                .is_some_and(|all| all.iter().any(|d| d["rule"] == "duplicate-key"))
        })
        .filter_map(|file| file["path"].as_str())
        .filter(|path| path.contains("y_"))
        .collect();
    assert_eq!(duplicates.len(), 2, "{duplicates:?}");
}
