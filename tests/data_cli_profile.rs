//! `markwell profile` end to end through the real binary: the text table and the JSON of the
//! Iris copy (facts from tests/datasets/SOURCES.md: Fisher 1936 via scikit-learn 1.9.1), the
//! sampled mode, and exit codes for unusable inputs.

use std::path::PathBuf;
use std::process::Command;

fn dataset(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/datasets")
        .join(name)
}

fn markwell(arguments: &[&str]) -> (i32, String, String) {
    let output = Command::new(env!("CARGO_BIN_EXE_markwell"))
        .args(arguments)
        .output()
        .unwrap_or_else(|error| panic!("could not run markwell: {error}"));
    (
        output.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&output.stdout).into_owned(),
        String::from_utf8_lossy(&output.stderr).into_owned(),
    )
}

#[test]
fn text_table_of_iris() {
    let path = dataset("iris.csv");
    let (code, stdout, stderr) = markwell(&["profile", &path.to_string_lossy()]);
    assert_eq!(code, 0, "{stderr}");
    // Iris: 150 rows, 5 columns (SOURCES.md)
    assert!(stdout.contains("150 rows, 5 columns (csv)"), "{stdout}");
    let species = stdout
        .lines()
        .find(|line| line.starts_with("species"))
        .unwrap_or_default();
    // Iris: species categorical with 3 values of 50 (SOURCES.md)
    assert!(species.contains("categorical"), "{species}");
    assert!(species.contains("setosa (50)"), "{species}");
    let sepal = stdout
        .lines()
        .find(|line| line.starts_with("sepal_length"))
        .unwrap_or_default();
    // Iris: sepal_length 35 distinct, min 4.3, max 7.9, mean 5.843333 (SOURCES.md)
    for expected in ["quantitative", "35", "4.3", "7.9", "mean 5.84333"] {
        assert!(sepal.contains(expected), "{expected} in {sepal}");
    }
    // one histogram per numeric column
    assert_eq!(stdout.matches('│').count(), 4 * 10, "{stdout}");
}

#[test]
fn json_of_iris() {
    let path = dataset("iris.csv");
    let (code, stdout, stderr) =
        markwell(&["profile", "--format", "json", &path.to_string_lossy()]);
    assert_eq!(code, 0, "{stderr}");
    let value: serde_json::Value =
        serde_json::from_str(&stdout).unwrap_or_else(|error| panic!("{error}: {stdout}"));
    assert_eq!(value["rows"], 150); // Iris: 150 rows (SOURCES.md)
    assert_eq!(value["sampled"], false);
    let columns = value["columns"].as_array().cloned().unwrap_or_default();
    assert_eq!(columns.len(), 5);
    // Iris: petal_width min 0.1, max 2.5, 22 distinct (SOURCES.md)
    let petal_width = &columns[3];
    assert_eq!(petal_width["name"], "petal_width");
    assert_eq!(petal_width["numbers"]["min"], 0.1);
    assert_eq!(petal_width["numbers"]["max"], 2.5);
    assert_eq!(petal_width["distinct"]["count"], 22);
    assert_eq!(columns[4]["kind"], "categorical");
}

#[test]
fn sample_mode_and_unusable_inputs() {
    let path = dataset("penguins.csv");
    let (code, stdout, _) = markwell(&["profile", "--sample", &path.to_string_lossy()]);
    assert_eq!(code, 0);
    // a small file is read whole even when sampling, so it is not marked as a sample
    assert!(!stdout.contains("from a sample"), "{stdout}");
    assert!(stdout.contains("344 rows"), "{stdout}"); // Penguins: 344 rows (SOURCES.md)

    let (code, _, stderr) = markwell(&["profile", "does-not-exist.csv"]);
    assert_eq!(code, 2);
    assert!(stderr.contains("no file"), "{stderr}");
    let (code, _, stderr) = markwell(&["profile", "https://example.org/data.csv"]);
    assert_eq!(code, 2);
    assert!(stderr.contains("never fetches"), "{stderr}");
}
