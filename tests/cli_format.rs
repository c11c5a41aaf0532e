//! `markwell format` through the real binary: --check lists and exits 1, a write keeps the value
//! and is stable, half-typed and invalid files are never touched, and a spec that is a symbolic
//! link out of the workspace is refused, not read.

use std::path::Path;
use std::process::Command;

fn markwell(dir: &Path, args: &[&str]) -> (i32, String, String) {
    let output = Command::new(env!("CARGO_BIN_EXE_markwell"))
        .args(args)
        .current_dir(dir)
        .output();
    match output {
        Ok(output) => (
            output.status.code().unwrap_or(-1),
            String::from_utf8_lossy(&output.stdout).into_owned(),
            String::from_utf8_lossy(&output.stderr).into_owned(),
        ),
        Err(error) => panic!("could not run markwell: {error}"),
    }
}

fn project() -> tempfile::TempDir {
    let dir = match tempfile::tempdir() {
        Ok(dir) => dir,
        Err(error) => panic!("tempdir: {error}"),
    };
    let write = |name: &str, text: &str| {
        if let Err(error) = std::fs::write(dir.path().join(name), text) {
            panic!("write {name}: {error}");
        }
    };
    let _ = std::fs::create_dir(dir.path().join(".git"));
    write(
        "orchard.chart.json",
        "{\"mark\":\"bar\",\"bind\":{\"x\":\"variety\",\"y\":{\"column\":\"crates\",\"summary\":\"sum\"}}}",
    );
    write(
        "tidy.chart.json",
        "{\n  \"mark\": \"point\",\n  \"bind\": { \"x\": \"crates\", \"y\": \"rain_mm\" }\n}\n",
    );
    write("half.chart.json", "{\"mark\": \"ba");
    dir
}

#[test]
fn check_lists_what_would_change_and_writes_nothing() {
    let dir = project();
    let before = std::fs::read(dir.path().join("orchard.chart.json")).unwrap_or_default();
    let (code, out, err) = markwell(
        dir.path(),
        &["format", "--check", "orchard.chart.json", "tidy.chart.json"],
    );
    assert_eq!(code, 1, "{out}{err}");
    assert_eq!(
        out,
        "would reformat orchard.chart.json\nmarkwell: 2 specs, 1 would be reformatted, 1 already formatted\n"
    );
    assert_eq!(
        std::fs::read(dir.path().join("orchard.chart.json")).unwrap_or_default(),
        before
    );
}

#[test]
fn format_writes_a_stable_layout_and_leaves_half_typed_text_alone() {
    let dir = project();
    let (code, out, err) = markwell(dir.path(), &["format", "."]);
    // the half-typed spec is trouble (exit 2), the others are formatted anyway
    assert_eq!(code, 2, "{out}{err}");
    assert!(
        err.contains("half.chart.json: not formatted: the text has"),
        "{err}"
    );
    assert_eq!(
        std::fs::read_to_string(dir.path().join("half.chart.json")).unwrap_or_default(),
        "{\"mark\": \"ba"
    );
    let formatted =
        std::fs::read_to_string(dir.path().join("orchard.chart.json")).unwrap_or_default();
    assert_eq!(
        formatted,
        "{\n  \"mark\": \"bar\",\n  \"bind\": { \"x\": \"variety\", \"y\": { \"column\": \"crates\", \"summary\": \"sum\" } }\n}\n"
    );
    let (code, out, _) = markwell(
        dir.path(),
        &["format", "--check", "orchard.chart.json", "tidy.chart.json"],
    );
    assert_eq!(code, 0, "{out}");
    // no temporary files left beside the specs
    let leftovers: Vec<_> = std::fs::read_dir(dir.path())
        .into_iter()
        .flatten()
        .flatten()
        .filter(|entry| entry.file_name().to_string_lossy().contains(".markwell-"))
        .collect();
    assert!(leftovers.is_empty());
}

#[test]
fn sort_keys_orders_members() {
    let dir = project();
    let (code, _, err) = markwell(dir.path(), &["format", "--sort-keys", "orchard.chart.json"]);
    assert_eq!(code, 0, "{err}");
    assert_eq!(
        std::fs::read_to_string(dir.path().join("orchard.chart.json")).unwrap_or_default(),
        "{\n  \"bind\": { \"x\": \"variety\", \"y\": { \"column\": \"crates\", \"summary\": \"sum\" } },\n  \"mark\": \"bar\"\n}\n"
    );
}

#[cfg(unix)]
#[test]
fn a_spec_linked_out_of_the_workspace_is_refused() {
    let dir = project();
    let outside = match tempfile::tempdir() {
        Ok(dir) => dir,
        Err(error) => panic!("tempdir: {error}"),
    };
    let target = outside.path().join("secret.chart.json");
    let _ = std::fs::write(&target, "{\"token\":\"do-not-print\"}");
    let _ = std::os::unix::fs::symlink(&target, dir.path().join("link.chart.json"));
    let (code, out, err) = markwell(dir.path(), &["format", "link.chart.json"]);
    assert_eq!(code, 2);
    assert!(err.contains("leads outside the workspace"), "{err}");
    assert!(!out.contains("do-not-print") && !err.contains("do-not-print"));
    assert_eq!(
        std::fs::read_to_string(&target).unwrap_or_default(),
        "{\"token\":\"do-not-print\"}"
    );
}
