//! Group summaries of the evaluation checked against the outside world: the Iris and Palmer
//! Penguins tables (`tests/datasets/`, sources and licences in `tests/datasets/SOURCES.md`)
//! grouped by a categorical column, every summary of every numeric column, compared with pandas,
//! the reference dataframe library (PyPI `pandas`, pinned in `tests/requirements-reference.txt`),
//! computed in this test by the Python in `MARKWELL_PYTHON` (set by `.ci/test` to the venv with
//! the reference packages).
//!
//! Both sides are printed to 12 significant digits by the same formatter and must agree in every
//! printed digit. pandas' `groupby` leaves out rows whose key is missing (its `dropna=True`
//! default) and its summaries skip missing values (`skipna`); the evaluation leaves out rows
//! whose position is missing and skips missing values in summaries, so both group the same rows.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::process::Command;

use markwell::data::ResolveOptions;
use markwell::eval::{evaluate_chart, Datum, EvalOptions};
use markwell::spec::model::Channel;

fn datasets() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/datasets")
}

/// The Python with pandas, or `None` (with a notice) when it is not set up outside CI.
fn reference_python() -> Option<String> {
    match std::env::var("MARKWELL_PYTHON") {
        Ok(python) if !python.trim().is_empty() => Some(python),
        _ => {
            let in_ci = std::env::var("CI").is_ok_and(|value| value == "true");
            assert!(
                !in_ci,
                "MARKWELL_PYTHON is not set: in CI this test needs the Python with pandas \
                 (tests/requirements-reference.txt), which .ci/test sets up in target/e2e-venv"
            );
            println!(
                "notice: MARKWELL_PYTHON is not set, so the pandas comparison is skipped \
                 (python3 -m venv VENV && VENV/bin/pip install -r tests/requirements-reference.txt, \
                 then MARKWELL_PYTHON=VENV/bin/python)"
            );
            None
        }
    }
}

/// What pandas computes: per (group column, value column, summary, group) the value's repr.
const PANDAS_SCRIPT: &str = r#"
import sys
import pandas as pd

path, group_column = sys.argv[1], sys.argv[2]
value_columns = sys.argv[3].split(",")
table = pd.read_csv(path)
grouped = table.groupby(group_column)
print("pandas", pd.__version__)
for column in value_columns:
    for summary, method in [("count", "count"), ("sum", "sum"), ("mean", "mean"),
                            ("median", "median"), ("min", "min"), ("max", "max"),
                            ("distinct", "nunique")]:
        result = getattr(grouped[column], method)()
        for group, value in result.items():
            print("\t".join([column, summary, str(group), repr(float(value))]))
"#;

type Results = BTreeMap<(String, String, String), f64>;

fn pandas_results(python: &str, path: &Path, group: &str, columns: &[&str]) -> Results {
    let output = Command::new(python)
        .arg("-c")
        .arg(PANDAS_SCRIPT)
        .arg(path)
        .arg(group)
        .arg(columns.join(","))
        .output();
    let output = match output {
        Ok(output) => output,
        Err(error) => panic!("the reference Python `{python}` does not run: {error}"),
    };
    assert!(
        output.status.success(),
        "pandas failed (is it installed in MARKWELL_PYTHON?): {}",
        String::from_utf8_lossy(&output.stderr)
    );
    let stdout = String::from_utf8_lossy(&output.stdout);
    let mut results = Results::new();
    for line in stdout.lines() {
        if line.starts_with("pandas ") {
            println!("reference: {line}");
            continue;
        }
        let fields: Vec<&str> = line.split('\t').collect();
        assert_eq!(fields.len(), 4, "a line from pandas: {line}");
        let value: f64 = match fields[3].parse() {
            Ok(value) => value,
            Err(_) => panic!("a number from pandas: {line}"),
        };
        results.insert(
            (
                fields[0].to_string(),
                fields[1].to_string(),
                fields[2].to_string(),
            ),
            value,
        );
    }
    results
}

fn markwell_results(file: &str, group: &str, columns: &[&str]) -> Results {
    let folder = datasets();
    let options = ResolveOptions {
        spec_dir: folder.clone(),
        workspace_root: Some(folder),
        allow_outside_workspace: false,
        limits: markwell::data::ProfileLimits::default(),
    };
    let mut results = Results::new();
    for column in columns {
        for summary in ["count", "sum", "mean", "median", "min", "max", "distinct"] {
            let text = format!(
                r#"{{"source": {{"path": "{file}"}}, "columns": {{"{group}": {{"kind": "categorical"}}}},
                    "mark": "bar", "bind": {{"x": "{group}", "y": {{"column": "{column}", "summary": "{summary}"}}}}}}"#
            );
            let parsed = markwell::analysis::parse_document(&text);
            let chart = evaluate_chart(
                &parsed.spec,
                &mut |source| markwell::data::rows::open_rows(source, &options, false),
                &EvalOptions::default(),
            );
            assert!(chart.notes.is_empty(), "{:?}", chart.notes);
            let layer = &chart.layers[0];
            assert!(layer.approximations.is_empty());
            let x = layer.channel_index(Channel::X).unwrap_or(0);
            let y = layer.channel_index(Channel::Y).unwrap_or(1);
            for mark in &layer.marks {
                let Datum::Text(name) = &mark.values[x] else {
                    panic!("a group name: {:?}", mark.values[x]);
                };
                let value = mark.values[y].as_f64().unwrap_or(f64::NAN);
                results.insert(
                    (column.to_string(), summary.to_string(), name.to_string()),
                    value,
                );
            }
        }
    }
    results
}

/// A value to 12 significant digits.
fn printed(value: f64) -> String {
    format!("{value:.11e}")
}

fn compare(file: &str, group: &str, columns: &[&str]) {
    let Some(python) = reference_python() else {
        return;
    };
    let reference = pandas_results(&python, &datasets().join(file), group, columns);
    let ours = markwell_results(file, group, columns);
    assert!(!reference.is_empty());
    let reference_keys: Vec<_> = reference.keys().collect();
    let our_keys: Vec<_> = ours.keys().collect();
    assert_eq!(
        our_keys, reference_keys,
        "{file} by {group}: the same groups"
    );
    let mut mismatches = Vec::new();
    for (key, expected) in &reference {
        let got = ours.get(key).copied().unwrap_or(f64::NAN);
        if printed(got) != printed(*expected) {
            mismatches.push(format!(
                "{key:?}: markwell {} pandas {}",
                printed(got),
                printed(*expected)
            ));
        }
    }
    assert!(
        mismatches.is_empty(),
        "{file} by {group}:\n{}",
        mismatches.join("\n")
    );
    println!(
        "{file} by {group}: {} values agree with pandas",
        reference.len()
    );
}

#[test]
fn iris_summaries_by_species_equal_pandas() {
    // pandas, the reference dataframe library: groupby("species")[column].sum() and so on
    compare(
        "iris.csv",
        "species",
        &["sepal_length", "sepal_width", "petal_length", "petal_width"],
    );
}

#[test]
fn penguin_summaries_by_species_island_and_sex_equal_pandas() {
    // pandas, the reference dataframe library; the penguins' `NA` cells are missing on both sides
    let columns = [
        "bill_length_mm",
        "bill_depth_mm",
        "flipper_length_mm",
        "body_mass_g",
        "year",
    ];
    compare("penguins.csv", "species", &columns);
    compare("penguins.csv", "island", &columns);
    // `sex` is missing in 11 rows: pandas and markwell both leave those rows out of the groups
    compare("penguins.csv", "sex", &columns);
}
