//! Hostile data files through the library: samples that cannot hold a row, wide files, long
//! lines, binary and invalid UTF-8, files replaced during the scan. Each states its bound.

use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use markwell::data::cache::SAMPLE_BYTES;
use markwell::data::{DataErrorKind, ProfileCache, ReadOptions};

fn write(dir: &Path, name: &str, bytes: &[u8]) -> PathBuf {
    let path = dir.join(name);
    std::fs::write(&path, bytes).unwrap_or_else(|error| panic!("{error}"));
    path
}

#[test]
fn a_sample_shorter_than_the_first_line_never_says_no_rows() {
    // was: an NDJSON file whose first line is longer than the sample "holds no rows", and the
    // full profile never replaced it. Bound: one 5 MiB line, profiled in full in < 30 s.
    let dir = tempfile::tempdir().unwrap_or_else(|error| panic!("{error}"));
    let long = "x".repeat(SAMPLE_BYTES + (1 << 20));
    let text = format!(
        "{{\"crate\": \"{long}\", \"apples\": 1}}\n{{\"crate\": \"short\", \"apples\": 2}}\n"
    );
    let path = write(dir.path(), "orchard.ndjson", text.as_bytes());
    let cache = ProfileCache::new();
    let sample = cache.sample_profile(&path, &ReadOptions::default());
    match sample {
        Ok(profile) => assert!(profile.rows > 0, "a sample with rows {profile:?}"),
        Err(error) => {
            assert_eq!(
                error.kind,
                DataErrorKind::SampleIncomplete,
                "{}",
                error.message
            );
            assert!(!error.message.contains("no rows"), "{}", error.message);
            assert!(error.message.contains("full profile"), "{}", error.message);
        }
    }
    let started = Instant::now();
    let full = cache
        .full_profile(&path, &ReadOptions::default(), &|_| true)
        .unwrap_or_else(|error| panic!("{}", error.message));
    assert_eq!(full.rows, 2);
    assert!(started.elapsed() < Duration::from_secs(30));
    // and the sample now answers with the full profile
    let again = cache
        .sample_profile(&path, &ReadOptions::default())
        .unwrap_or_else(|error| panic!("{}", error.message));
    assert_eq!(again.rows, 2);
    assert!(!again.is_sample);

    // the same for a CSV whose header line is longer than the sample
    let header = format!("orchard_{},apples", "y".repeat(SAMPLE_BYTES + 1024));
    let path = write(
        dir.path(),
        "wide.csv",
        format!("{header}\nnorth,3\n").as_bytes(),
    );
    let sample = cache.sample_profile(&path, &ReadOptions::default());
    assert!(
        matches!(&sample, Err(error) if error.kind == DataErrorKind::SampleIncomplete),
        "{:?}",
        sample.as_ref().err().map(|e| &e.message)
    );
}

#[test]
fn binary_and_invalid_utf8_are_clear_errors_or_profiles_never_panics() {
    let dir = tempfile::tempdir().unwrap_or_else(|error| panic!("{error}"));
    let cache = ProfileCache::new();
    let binary = write(
        dir.path(),
        "blob.csv",
        &[0x89, b'P', b'N', b'G', 0, 0, 1, 2, 3],
    );
    let error = cache
        .full_profile(&binary, &ReadOptions::default(), &|_| true)
        .err()
        .map(|error| error.kind);
    assert_eq!(error, Some(DataErrorKind::Binary));
    // invalid UTF-8 in a header and in cells: profiled (replacement characters) or refused
    let bad = write(
        dir.path(),
        "bad.csv",
        b"na\xffme,count\nqu\xfe\xffay,1\nmill,2\n",
    );
    match cache.full_profile(&bad, &ReadOptions::default(), &|_| true) {
        Ok(profile) => assert_eq!(profile.rows, 2),
        Err(error) => assert_eq!(error.kind, DataErrorKind::InvalidUtf8, "{}", error.message),
    }
}

/// A CSV of `rows` rows of an orchard ledger.
fn orchard_rows(rows: usize) -> Vec<u8> {
    let mut text = String::from("orchard,apples,picked\n");
    for row in 0..rows {
        text.push_str(&format!(
            "orchard{},{},2024-09-{:02}\n",
            row % 40,
            row % 997,
            row % 28 + 1
        ));
    }
    text.into_bytes()
}

#[test]
fn a_tiny_time_budget_stops_the_scan_with_a_clear_error() {
    use markwell::budget::TimeBudget;
    use markwell::data::ProfileLimits;
    // bound: the scan stops at its first look at the clock (every 4096 records), well under 5 s
    let dir = tempfile::tempdir().unwrap_or_else(|error| panic!("{error}"));
    let big = write(dir.path(), "big.csv", &orchard_rows(400_000));
    assert!(std::fs::metadata(&big).map_or(0, |m| m.len()) > SAMPLE_BYTES as u64);
    let small = write(dir.path(), "small.csv", &orchard_rows(20_000));
    let cache = ProfileCache::new();
    for (path, seconds) in [(&big, 0.0), (&big, 0.000_001), (&small, 0.0)] {
        let limits = ProfileLimits {
            time: TimeBudget::seconds(seconds),
            ..ProfileLimits::default()
        };
        let started = Instant::now();
        let result = cache.full_profile_within(path, &ReadOptions::default(), &limits, &|_| true);
        let error = result.err().unwrap_or_else(|| panic!("{path:?} profiled"));
        assert_eq!(error.kind, DataErrorKind::TimedOut, "{}", error.message);
        assert!(
            error.message.contains("time budget") && error.message.contains("profile-seconds"),
            "{}",
            error.message
        );
        assert!(started.elapsed() < Duration::from_secs(5));
    }
    // nothing is cached from a stopped scan: with time enough the same file profiles
    let full = cache
        .full_profile(&big, &ReadOptions::default(), &|_| true)
        .unwrap_or_else(|error| panic!("{}", error.message));
    assert_eq!(full.rows, 400_000);
}

#[test]
fn a_key_named_twice_in_one_row_gives_one_cell_and_a_problem() {
    // found by fuzzing (`data_readers`, input kept in the corpus as regression-duplicate-key):
    // a row naming `crossings` twice counted two numbers in one row (more numbers than rows)
    use markwell::data::csv_reader::ScanControl;
    use markwell::data::json_reader::{scan_json_array, scan_ndjson};
    use markwell::spec::model::DataFormat;
    let ndjson: &[u8] =
        b"{\"route\":\"North\",\"crossings\":4,\"crossings\":5}\n{\"route\":\"South\",\"crossings\":2}\n";
    let array: &[u8] =
        b"[{\"route\":\"North\",\"crossings\":4,\"crossings\":5},{\"route\":\"South\"}]";
    let control = ScanControl::default();
    for (format, table) in [
        (
            DataFormat::Ndjson,
            scan_ndjson(ndjson, false, &control, None),
        ),
        (
            DataFormat::Json,
            scan_json_array(array, false, &control, None),
        ),
    ] {
        let table = table.unwrap_or_else(|error| panic!("{}", error.message));
        let profile = table.finish(None, format, false, &[]);
        let crossings = profile
            .column("crossings")
            .unwrap_or_else(|| panic!("no crossings column"));
        let numbers = crossings
            .numeric
            .as_ref()
            .map_or(0, |numeric| numeric.count);
        assert!(
            numbers <= profile.rows,
            "{numbers} numbers in {} rows",
            profile.rows
        );
        // the first value counts, the repeated one does not
        assert!(crossings.top_values.iter().any(|(value, _)| value == "4"));
        assert!(!crossings.top_values.iter().any(|(value, _)| value == "5"));
        assert!(
            profile
                .problems
                .iter()
                .any(|problem| problem.message.contains("names the key `crossings` twice")),
            "{:?}",
            profile.problems
        );
    }
}

#[test]
fn a_file_truncated_or_replaced_during_the_scan_is_never_profiled_as_it_was() {
    // bound: each scan ends (with an error) in under 30 s; the change happens at the first
    // progress report, while the scanning threads read
    let dir = tempfile::tempdir().unwrap_or_else(|error| panic!("{error}"));
    for change in ["truncate", "replace"] {
        let path = write(dir.path(), "mill.csv", &orchard_rows(400_000));
        let replacement = write(dir.path(), "other.csv", &orchard_rows(10));
        let changed = std::cell::Cell::new(false);
        let progress = |_: f64| {
            if !changed.get() {
                changed.set(true);
                if change == "truncate" {
                    let file = std::fs::OpenOptions::new()
                        .write(true)
                        .open(&path)
                        .unwrap_or_else(|error| panic!("{error}"));
                    file.set_len(1000).unwrap_or_else(|error| panic!("{error}"));
                } else {
                    std::fs::rename(&replacement, &path).unwrap_or_else(|error| panic!("{error}"));
                }
            }
            true
        };
        let started = Instant::now();
        let result = ProfileCache::new().full_profile(&path, &ReadOptions::default(), &progress);
        assert!(changed.get(), "{change}: the scan reported no progress");
        match result {
            Ok(profile) => panic!("{change}: profiled {} rows", profile.rows),
            Err(error) => assert_eq!(
                error.kind,
                DataErrorKind::ChangedDuringScan,
                "{change}: {}",
                error.message
            ),
        }
        assert!(started.elapsed() < Duration::from_secs(30));
    }
}

#[test]
fn invalid_utf8_in_a_cell_names_the_line_and_column_and_binary_without_nul_never_panics() {
    let dir = tempfile::tempdir().unwrap_or_else(|error| panic!("{error}"));
    let cache = ProfileCache::new();
    // the header is fine, a cell of line 3 is not
    let cells = write(
        dir.path(),
        "cells.csv",
        b"bakery,loaves\nnorth,12\nqu\xc3\x28ay,7\n",
    );
    let error = cache
        .full_profile(&cells, &ReadOptions::default(), &|_| true)
        .err()
        .unwrap_or_else(|| panic!("invalid UTF-8 profiled"));
    assert_eq!(error.kind, DataErrorKind::InvalidUtf8, "{}", error.message);
    assert_eq!(error.line, Some(2), "{}", error.message);
    assert!(error.message.contains("`bakery`"), "{}", error.message);
    // only the header is bad
    let header = write(dir.path(), "header.csv", b"bak\xffery,loaves\nnorth,12\n");
    let error = cache
        .full_profile(&header, &ReadOptions::default(), &|_| true)
        .err()
        .unwrap_or_else(|| panic!("invalid UTF-8 header profiled"));
    assert_eq!(error.kind, DataErrorKind::InvalidUtf8, "{}", error.message);
    assert!(error.message.contains("header cell 1"), "{}", error.message);
    // bytes of a binary file that hold no NUL (so they pass the text probe), in every format
    let mut state = 0x2545_f491_4f6c_dd1du64;
    let noise: Vec<u8> = (0..200_000)
        .map(|_| {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            (state >> 56) as u8 | 1
        })
        .collect();
    for name in ["noise.csv", "noise.tsv", "noise.json", "noise.ndjson"] {
        let path = write(dir.path(), name, &noise);
        match cache.full_profile(&path, &ReadOptions::default(), &|_| true) {
            Ok(profile) => assert!(profile.rows > 0, "{name}"),
            Err(error) => assert!(
                matches!(
                    error.kind,
                    DataErrorKind::InvalidUtf8
                        | DataErrorKind::Malformed
                        | DataErrorKind::BadHeader
                ),
                "{name}: {:?} {}",
                error.kind,
                error.message
            ),
        }
    }
}
