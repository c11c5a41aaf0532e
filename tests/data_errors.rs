//! Every way a data file can be unusable gives a clear `DataError` (never a panic): missing,
//! no permission, a folder, binary, invalid UTF-8, empty, header only, bad header names,
//! changed during the scan, cancelled; and path resolution refuses network addresses,
//! hostile paths and paths that leave the workspace.

use std::io::Write;
use std::path::{Path, PathBuf};

use markwell::data::resolve::resolve_source_path;
use markwell::data::{
    io_error, DataError, DataErrorKind, ProfileCache, ReadOptions, ResolveOptions,
};

fn write_file(folder: &Path, name: &str, content: &[u8]) -> PathBuf {
    let path = folder.join(name);
    std::fs::write(&path, content).unwrap_or_else(|error| panic!("write {name}: {error}"));
    path
}

fn profile_error(path: &Path) -> DataError {
    match ProfileCache::new().full_profile(path, &ReadOptions::default(), &|_| true) {
        Ok(profile) => panic!("expected an error, got a profile of {} rows", profile.rows),
        Err(error) => error,
    }
}

fn temp_folder() -> tempfile::TempDir {
    tempfile::tempdir().unwrap_or_else(|error| panic!("tempdir: {error}"))
}

#[test]
fn missing_file() {
    let folder = temp_folder();
    let error = profile_error(&folder.path().join("absent.csv"));
    assert_eq!(error.kind, DataErrorKind::NotFound);
    assert!(error.message.contains("absent.csv"), "{}", error.message);
}

#[test]
fn permission_denied_maps_to_its_own_kind() {
    // the tests may run as root, who can read anything: check the mapping of the OS error
    let error = io_error(
        Some(Path::new("/srv/bakery/locked.csv")),
        &std::io::Error::from(std::io::ErrorKind::PermissionDenied),
    );
    assert_eq!(error.kind, DataErrorKind::PermissionDenied);
    assert!(error.message.contains("no permission"), "{}", error.message);
}

#[test]
fn a_folder_is_not_a_data_file() {
    let folder = temp_folder();
    let error = profile_error(folder.path());
    assert_eq!(error.kind, DataErrorKind::IsDirectory);
}

#[test]
fn binary_file_with_nul_bytes() {
    let folder = temp_folder();
    let path = write_file(folder.path(), "photo.csv", b"a,b\n1,2\n\x89PNG\x00\x00\x01");
    let error = profile_error(&path);
    assert_eq!(error.kind, DataErrorKind::Binary);
    assert_eq!(error.byte_offset, Some(12));
    assert_eq!(error.line, Some(2));
}

#[test]
fn invalid_utf8_reports_its_line() {
    let folder = temp_folder();
    let path = write_file(
        folder.path(),
        "latin1.csv",
        b"town,pop\nOslo,700\nM\xfcnchen,1500\n",
    );
    let error = profile_error(&path);
    assert_eq!(error.kind, DataErrorKind::InvalidUtf8);
    assert_eq!(error.line, Some(2));
    assert_eq!(error.byte_offset, Some(19));
}

#[test]
fn empty_and_blank_files() {
    let folder = temp_folder();
    for (name, content) in [
        ("empty.csv", &b""[..]),
        ("blank.csv", &b"\n\r\n  \n"[..]),
        ("mark.csv", &b"\xEF\xBB\xBF"[..]),
        ("empty.json", &b"[]"[..]),
    ] {
        let path = write_file(folder.path(), name, content);
        assert_eq!(profile_error(&path).kind, DataErrorKind::Empty, "{name}");
    }
}

#[test]
fn lone_carriage_returns_are_refused_with_a_hint() {
    let folder = temp_folder();
    let path = write_file(folder.path(), "old-mac.csv", b"tray,buns\rA,12\rB,9\r");
    let error = profile_error(&path);
    assert_eq!(error.kind, DataErrorKind::Malformed);
    assert!(error.message.contains("lone CR"), "{}", error.message);
}

#[test]
fn header_only() {
    let folder = temp_folder();
    let path = write_file(folder.path(), "plan.csv", b"ferry,departure\n");
    let error = profile_error(&path);
    assert_eq!(error.kind, DataErrorKind::HeaderOnly);
    assert!(error.message.contains("`ferry`"), "{}", error.message);
}

#[test]
fn duplicate_and_empty_header_names() {
    let folder = temp_folder();
    let path = write_file(folder.path(), "dup.csv", b"loaf,price,loaf\nrye,4,spelt\n");
    let error = profile_error(&path);
    assert_eq!(error.kind, DataErrorKind::BadHeader);
    assert_eq!(error.line, Some(0));
    assert_eq!(error.byte_offset, Some(11));
    assert!(error.message.contains("`loaf` twice"), "{}", error.message);

    let path = write_file(folder.path(), "blank-name.csv", b"loaf,,price\nrye,x,4\n");
    let error = profile_error(&path);
    assert_eq!(error.kind, DataErrorKind::BadHeader);
    assert_eq!(error.byte_offset, Some(5));
}

fn write_big_csv(folder: &Path) -> PathBuf {
    let path = folder.join("big.csv");
    let mut file = std::fs::File::create(&path).unwrap_or_else(|error| panic!("{error}"));
    let mut content = String::from("crate,kilos\n");
    for row in 0..400_000 {
        content.push_str(&format!("c{row},{}\n", row % 50));
    }
    file.write_all(content.as_bytes())
        .unwrap_or_else(|error| panic!("{error}"));
    path
}

#[test]
fn a_file_that_changes_during_the_scan() {
    let folder = temp_folder();
    let path = write_big_csv(folder.path());
    let appended = std::cell::Cell::new(false);
    let progress = |_: f64| {
        if !appended.get() {
            appended.set(true);
            let mut file = std::fs::OpenOptions::new()
                .append(true)
                .open(&path)
                .unwrap_or_else(|error| panic!("{error}"));
            file.write_all(b"late,1\n").ok();
        }
        true
    };
    let result = ProfileCache::new().full_profile(&path, &ReadOptions::default(), &progress);
    let error = match result {
        Ok(_) => panic!("a file that grew during the scan must not give a profile"),
        Err(error) => error,
    };
    assert_eq!(error.kind, DataErrorKind::ChangedDuringScan);
}

#[test]
fn a_cancelled_scan() {
    let folder = temp_folder();
    let path = write_big_csv(folder.path());
    let result = ProfileCache::new().full_profile(&path, &ReadOptions::default(), &|_| false);
    match result {
        Ok(_) => panic!("a cancelled scan must not give a profile"),
        Err(error) => assert_eq!(error.kind, DataErrorKind::Cancelled),
    }
}

fn options_in(folder: &Path) -> ResolveOptions {
    ResolveOptions {
        spec_dir: folder.to_path_buf(),
        workspace_root: Some(folder.to_path_buf()),
        allow_outside_workspace: false,
        ..Default::default()
    }
}

#[test]
fn relative_paths_resolve_against_the_spec_folder() {
    let folder = temp_folder();
    std::fs::create_dir(folder.path().join("data")).unwrap_or_else(|error| panic!("{error}"));
    let path = write_file(&folder.path().join("data"), "sales.csv", b"a\n1\n");
    let resolved = resolve_source_path("data/../data/sales.csv", &options_in(folder.path()));
    let canonical = std::fs::canonicalize(&path).unwrap_or_else(|error| panic!("{error}"));
    assert_eq!(resolved, Ok(canonical));
}

#[test]
fn paths_that_leave_the_workspace_are_refused_unless_allowed() {
    let outer = temp_folder();
    let workspace = outer.path().join("workspace");
    std::fs::create_dir(&workspace).unwrap_or_else(|error| panic!("{error}"));
    write_file(outer.path(), "secret.csv", b"a\n1\n");
    let options = options_in(&workspace);
    let error = resolve_source_path("../secret.csv", &options).err();
    assert_eq!(error.map(|e| e.kind), Some(DataErrorKind::OutsideWorkspace));

    // a symlink inside the workspace pointing outside is refused too
    std::os::unix::fs::symlink(outer.path().join("secret.csv"), workspace.join("link.csv"))
        .unwrap_or_else(|error| panic!("{error}"));
    let error = resolve_source_path("link.csv", &options).err();
    assert_eq!(error.map(|e| e.kind), Some(DataErrorKind::OutsideWorkspace));

    let allowed = ResolveOptions {
        allow_outside_workspace: true,
        ..options
    };
    assert!(resolve_source_path("../secret.csv", &allowed).is_ok());
}

#[test]
fn network_addresses_are_never_fetched() {
    let folder = temp_folder();
    for written in [
        "https://example.org/ferries.csv",
        "http://localhost/x.csv",
        "s3://bucket/key.csv",
        "data:text/csv,a",
    ] {
        let error = resolve_source_path(written, &options_in(folder.path())).err();
        let Some(error) = error else {
            panic!("{written} resolved")
        };
        assert_eq!(error.kind, DataErrorKind::Remote, "{written}");
        assert!(error.message.contains("never fetches"), "{}", error.message);
    }
}

#[test]
fn hostile_paths_are_errors_not_panics() {
    let folder = temp_folder();
    let options = options_in(folder.path());
    let long = "a/".repeat(5000);
    for written in ["", "   ", "bad\0name.csv", long.as_str(), &"x".repeat(300)] {
        let result = resolve_source_path(written, &options);
        assert!(result.is_err(), "{written:?} resolved");
    }
    let nul = resolve_source_path("bad\0name.csv", &options).err();
    assert_eq!(nul.map(|e| e.kind), Some(DataErrorKind::BadPath));
    let too_long = resolve_source_path(&long, &options).err();
    assert_eq!(too_long.map(|e| e.kind), Some(DataErrorKind::BadPath));
}

#[test]
fn a_folder_path_is_refused_at_resolution() {
    let folder = temp_folder();
    std::fs::create_dir(folder.path().join("data")).unwrap_or_else(|error| panic!("{error}"));
    let error = resolve_source_path("data", &options_in(folder.path())).err();
    assert_eq!(error.map(|e| e.kind), Some(DataErrorKind::IsDirectory));
}

/// Which rule reports which data error: absent or unreachable data is `missing-source`, data
/// that is there but broken is `malformed-data`, so that switching one off never hides the other.
#[test]
fn absent_and_broken_data_are_reported_under_different_rules() {
    use markwell::analysis::{analyze, parse_document, AnalysisConfig};
    let folder = temp_folder();
    write_file(folder.path(), "header.csv", b"pier,boats\n");
    write_file(folder.path(), "latin1.csv", b"pier,boats\nM\xfcnster,3\n");
    write_file(folder.path(), "short.csv", b"pier,boats\nNorth\n");
    let cases = [
        ("absent.csv", "missing-source"),
        ("header.csv", "malformed-data"),
        ("latin1.csv", "malformed-data"),
        ("short.csv", "malformed-data"),
    ];
    let cache = ProfileCache::new();
    let options = ResolveOptions {
        spec_dir: folder.path().to_path_buf(),
        workspace_root: Some(folder.path().to_path_buf()),
        allow_outside_workspace: false,
        ..Default::default()
    };
    for (file, rule) in cases {
        let text = format!(
            r#"{{ "source": {{ "path": "{file}" }}, "mark": "bar", "bind": {{ "x": "pier", "y": "boats" }} }}"#
        );
        let document = parse_document(&text);
        let data = cache.load_for_spec(&document.spec, &options);
        let rules: Vec<&str> = analyze(&document, &data, &AnalysisConfig::default())
            .iter()
            .map(|d| d.rule)
            .filter(|id| *id == "missing-source" || *id == "malformed-data")
            .collect();
        assert_eq!(rules, vec![rule], "{file}");
    }
}
