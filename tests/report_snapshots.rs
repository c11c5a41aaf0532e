//! Snapshot tests of the terminal report of `markwell check` over demo specs: the expected output
//! is a plain text file under `tests/snapshots/`. After an intended change of the report, run
//! `MARKWELL_UPDATE_SNAPSHOTS=1 cargo test --test report_snapshots` and review the diff.

use std::path::PathBuf;
use std::process::Command;

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn check_snapshot(name: &str, args: &[&str]) {
    let output = Command::new(env!("CARGO_BIN_EXE_markwell"))
        .current_dir(root())
        .env("NO_COLOR", "1")
        .args(args)
        .output()
        .expect("markwell runs");
    let actual = String::from_utf8_lossy(&output.stdout).into_owned();
    let path = root().join("tests/snapshots").join(format!("{name}.txt"));
    if std::env::var_os("MARKWELL_UPDATE_SNAPSHOTS").is_some() {
        std::fs::write(&path, &actual).expect("write snapshot");
        return;
    }
    let expected = std::fs::read_to_string(&path).unwrap_or_default();
    if actual != expected {
        let first_difference = actual
            .lines()
            .zip(expected.lines())
            .position(|(a, e)| a != e)
            .unwrap_or(actual.lines().count().min(expected.lines().count()));
        panic!(
            "report differs from {} at line {}:\n--- actual ---\n{actual}\n--- expected ---\n{expected}",
            path.display(),
            first_difference + 1
        );
    }
}

#[test]
fn report_of_a_spec_with_colour_findings_and_related_places() {
    check_snapshot(
        "colours-products",
        &["check", "demo-data/bakery-colours-products.chart.json"],
    );
}

#[test]
fn report_of_a_misspelt_column_with_fixes_for_fix() {
    check_snapshot(
        "renamed-column",
        &["check", "demo-data/ferry-renamed-column.chart.json"],
    );
}

#[test]
fn report_of_a_spec_with_syntax_errors() {
    check_snapshot(
        "half-typed",
        &["check", "demo-data/bakery-half-typed.chart.json"],
    );
}

#[test]
fn report_of_layers_and_a_clean_spec() {
    check_snapshot(
        "two-forms-and-clean",
        &[
            "check",
            "demo-data/ferry-two-forms.chart.json",
            "demo-data/ferry-monthly-trend.chart.json",
        ],
    );
}

#[test]
fn report_of_missing_data_and_of_specs_that_draw_nothing() {
    check_snapshot(
        "lost-file-and-fixtures",
        &[
            "check",
            "demo-data/ferry-lost-file.chart.json",
            "tests/fixtures/missing-source",
            "tests/fixtures/spec-structure",
        ],
    );
}
