//! `markwell profile` end to end through the real binary: the text table and the JSON of the
//! Iris copy (facts from tests/datasets/SOURCES.md: Fisher 1936 via scikit-learn 1.9.1), the
//! sampled mode, and exit codes for unusable inputs. The output is streamed one column at a
//! time: it is checked byte for byte against pretty-printing the whole JSON value, and against
//! snapshots printed before streaming, for files with odd names (`tests/fixtures/data/odd-names`).

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

fn fixture_data(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures/data")
        .join(name)
}

/// The profile of `path` as the library makes it (the path canonical, as the CLI prints it).
fn library_profile(path: &std::path::Path) -> std::sync::Arc<markwell::data::DataProfile> {
    let canonical = path
        .canonicalize()
        .unwrap_or_else(|error| panic!("{}: {error}", path.display()));
    match markwell::data::ProfileCache::new().full_profile(
        &canonical,
        &markwell::data::ReadOptions::default(),
        &|_| true,
    ) {
        Ok(profile) => profile,
        Err(error) => panic!("{}: {error}", path.display()),
    }
}

/// Files whose column names and values hold quotes, backslashes, control characters (escape
/// sequences, BEL, tab), non-ASCII letters, an emoji, a bidirectional override and an empty
/// name, with numbers from -1e-300 to the largest finite double (`NaN` and `inf` are text there).
fn files_with_odd_names() -> Vec<PathBuf> {
    vec![
        fixture_data("odd-names/profile-odd-names.csv"),
        fixture_data("odd-names/profile-odd-names.ndjson"),
        fixture_data("odd-names/profile-odd-names.json"),
        dataset("iris.csv"),
        dataset("penguins.csv"),
    ]
}

#[test]
fn streamed_json_is_byte_for_byte_the_json_value_of_the_whole_profile() {
    // `profile --format json` writes one column at a time; the JSON must be exactly what
    // pretty-printing the whole value (`render_profile_json`, the form it had before) gives
    let mut values = Vec::new();
    for path in files_with_odd_names() {
        let value = markwell::data::render::render_profile_json(&library_profile(&path));
        let expected =
            serde_json::to_string_pretty(&value).unwrap_or_else(|error| panic!("{error}")) + "\n";
        let (code, stdout, stderr) =
            markwell(&["profile", "--format", "json", &path.to_string_lossy()]);
        assert_eq!(code, 0, "{}: {stderr}", path.display());
        assert_eq!(stdout, expected, "{}", path.display());
        let parsed: serde_json::Value =
            serde_json::from_str(&stdout).unwrap_or_else(|error| panic!("{error}"));
        assert_eq!(parsed, value, "{}", path.display());
        values.push(value);
    }
    // several files: an array of the profiles, nested one level deeper, byte for byte
    let arguments: Vec<String> = files_with_odd_names()
        .iter()
        .map(|path| path.to_string_lossy().into_owned())
        .collect();
    let mut command = vec!["profile", "--format", "json"];
    command.extend(arguments.iter().map(String::as_str));
    let (code, stdout, stderr) = markwell(&command);
    assert_eq!(code, 0, "{stderr}");
    let expected = serde_json::to_string_pretty(&serde_json::Value::Array(values))
        .unwrap_or_else(|error| panic!("{error}"))
        + "\n";
    assert_eq!(stdout, expected);
}

#[test]
fn the_library_writes_the_json_nested_at_any_depth() {
    let profile = library_profile(&fixture_data("odd-names/profile-odd-names.ndjson"));
    let value = markwell::data::render::render_profile_json(&profile);
    for depth in 0..3 {
        // the value nested `depth` arrays deep, as pretty JSON lays it out there
        let mut nested = value.clone();
        for _ in 0..depth {
            nested = serde_json::Value::Array(vec![nested]);
        }
        let whole = serde_json::to_string_pretty(&nested).unwrap_or_else(|error| panic!("{error}"));
        let indent = "  ".repeat(depth);
        let start = whole
            .find(&format!("{indent}{{"))
            .unwrap_or_else(|| panic!("{whole}"));
        let end = whole.rfind('}').map_or(whole.len(), |end| end + 1);
        let mut streamed = Vec::new();
        markwell::data::render::write_profile_json(&profile, depth, &mut streamed)
            .unwrap_or_else(|error| panic!("{error}"));
        assert_eq!(
            String::from_utf8_lossy(&streamed),
            &whole[start + indent.len()..end],
            "depth {depth}"
        );
    }
}

#[test]
fn profiles_with_odd_names_print_as_before() {
    // the JSON below was printed by the binary that built the whole output in memory (before it
    // was streamed); the text snapshots were printed again when table widths came to be measured
    // on the escaped cells (before, `bell\x07tab\x09cr` pushed its row out of line); the data
    // folder's path is replaced by `<data>`
    let folder = fixture_data("")
        .canonicalize()
        .unwrap_or_else(|error| panic!("{error}"));
    let folder_text = folder.to_string_lossy().into_owned();
    let snapshots = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/snapshots");
    let read = |name: &str| {
        std::fs::read_to_string(snapshots.join(name))
            .unwrap_or_else(|error| panic!("{name}: {error}"))
    };
    for extension in ["csv", "ndjson", "json"] {
        let path = fixture_data(&format!("odd-names/profile-odd-names.{extension}"));
        let (code, stdout, stderr) = markwell(&["profile", &path.to_string_lossy()]);
        assert_eq!(code, 0, "{stderr}");
        // every row of the table starts its `kind` cell where the heading does
        let lines: Vec<&str> = stdout.lines().collect();
        let heading = lines
            .iter()
            .position(|line| line.starts_with("column "))
            .unwrap_or_else(|| panic!("{stdout}"));
        let kind_at = lines[heading].find("kind").unwrap_or_default();
        // in terminal columns: wide characters take two (Unicode Standard Annex #11)
        let width = markwell::data::render::terminal_width;
        let kind_at = width(&lines[heading][..kind_at]);
        for row in lines[heading + 2..]
            .iter()
            .take_while(|line| !line.is_empty())
        {
            let split = row
                .char_indices()
                .map(|(index, _)| index)
                .find(|index| width(&row[..*index]) >= kind_at)
                .unwrap_or(row.len());
            let cell: String = row[split..].chars().take(4).collect();
            assert!(
                width(&row[..split]) == kind_at
                    && ["quan", "cate", "time", "orde"].contains(&cell.as_str())
                    && row[..split].ends_with(' '),
                "{extension}: row out of line: {row}"
            );
        }
        let expected = read(&format!("profile-odd-names-{extension}.txt"));
        assert_eq!(
            stdout.replace(&folder_text, "<data>"),
            expected,
            "{extension}"
        );
    }
    let path = fixture_data("odd-names/profile-odd-names.csv");
    let (code, stdout, stderr) =
        markwell(&["profile", "--format", "json", &path.to_string_lossy()]);
    assert_eq!(code, 0, "{stderr}");
    let escaped_folder = serde_json::to_string(&folder_text).unwrap_or_default();
    let escaped_folder = escaped_folder.trim_matches('"');
    assert_eq!(
        stdout.replace(escaped_folder, "<data>"),
        read("profile-odd-names-csv.json")
    );
}

#[test]
fn json_of_files_that_cannot_be_profiled() {
    let good = fixture_data("odd-names/profile-odd-names.json");
    let good = good.to_string_lossy();
    // one file: its profile, or `null`
    let (code, stdout, stderr) = markwell(&["profile", "--format", "json", "missing-bakery.csv"]);
    assert_eq!(code, 2, "{stderr}");
    assert_eq!(stdout, "null\n");
    // several files: an array of those profiled, empty when none was
    let (code, stdout, _) = markwell(&[
        "profile",
        "--format",
        "json",
        "missing-bakery.csv",
        "missing-ferry.csv",
    ]);
    assert_eq!(code, 2);
    assert_eq!(stdout, "[]\n");
    let (code, stdout, stderr) = markwell(&[
        "profile",
        "--format",
        "json",
        "missing-bakery.csv",
        &good,
        "missing-ferry.csv",
        &good,
    ]);
    assert_eq!(code, 2, "{stderr}");
    let value: serde_json::Value =
        serde_json::from_str(&stdout).unwrap_or_else(|error| panic!("{error}: {stdout}"));
    let profiles = value.as_array().cloned().unwrap_or_default();
    assert_eq!(profiles.len(), 2, "{stdout}");
    assert_eq!(profiles[0], profiles[1]);
    assert_eq!(profiles[0]["rows"], 2);
    assert!(stderr.contains("missing-bakery.csv") && stderr.contains("missing-ferry.csv"));
}

/// Wide characters (CJK, emoji) take two terminal columns and combining marks none (Unicode
/// Standard Annex #11): the table lines up by what a terminal shows, not by characters.
#[test]
fn the_table_lines_up_names_with_wide_and_combining_characters() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("stalls.csv");
    std::fs::write(
        &path,
        "🍎 apples,梨の木,Cafe\u{301} crêpe,plain\n3,pear,fig,x\n4,plum,fig,y\n",
    )
    .unwrap();
    let (code, stdout, stderr) = markwell(&["profile", &path.to_string_lossy()]);
    assert_eq!(code, 0, "{stderr}");
    let width = |text: &str| markwell::data::render::terminal_width(text);
    assert_eq!(width("🍎"), 2);
    assert_eq!(width("e\u{301}"), 1);
    // the second cell of the heading and of each row starts at the same terminal column
    let lines: Vec<&str> = stdout
        .lines()
        .skip_while(|line| !line.starts_with("column"))
        .filter(|line| !line.starts_with('-'))
        .take(5)
        .collect();
    assert_eq!(lines.len(), 5, "{stdout}");
    let kind_at: Vec<usize> = lines
        .iter()
        .map(|line| {
            let at = line
                .find("kind")
                .or_else(|| line.find("categorical"))
                .or_else(|| line.find("quantitative"))
                .unwrap_or_else(|| panic!("{line}"));
            width(&line[..at])
        })
        .collect();
    assert!(
        kind_at.windows(2).all(|pair| pair[0] == pair[1]),
        "{kind_at:?}\n{stdout}"
    );
}
