//! Memory and time budgets of one profile, measured on the real binary: very wide files, very
//! long lines, many distinct values, and a tiny time budget. Each test generates its file in a
//! temporary folder, runs `markwell` on it and reads the child's peak resident memory from
//! `wait4` (its `ru_maxrss`), then asserts it under the stated bound.
//!
//! Bound: the default budget of one profile is 256 MiB; the process around it (binary, spec,
//! analysis, output) adds a few tens of MiB (27 MiB measured for a spec without data), so every
//! run here must stay under [`PEAK_BOUND_KIB`].

use std::io::{Read, Write};
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

/// 256 MiB of budget plus 44 MiB for the process around it.
const PEAK_BOUND_KIB: i64 = 300 * 1024;
/// Longest one run may take here (debug build, 2-core CI machine).
const RUN_LIMIT: Duration = Duration::from_secs(120);

struct Run {
    code: Option<i32>,
    stdout: String,
    stderr: String,
    peak_kib: i64,
    elapsed: Duration,
    /// Processor time in user mode (steadier than the wall clock on a loaded machine).
    user_time: Duration,
}

/// Run the binary in `dir` and measure its peak resident memory (KiB) with `wait4`.
fn run_measured(args: &[&str], dir: &Path) -> Run {
    run_measured_with_stdout(args, dir, None)
}

/// [`run_measured`] with the child's standard output written to `stdout_file` when given (then
/// `Run::stdout` is empty). A large output must not pass through this process: on Linux a
/// child's `ru_maxrss` starts from the resident memory of the process it was forked from (exec
/// keeps the high-water mark), so a test holding 116 MB of output raised the peak measured for
/// the next child from 179 to 225 MiB (measured), and would raise that of any test running
/// beside it.
fn run_measured_with_stdout(args: &[&str], dir: &Path, stdout_file: Option<std::fs::File>) -> Run {
    let to_file = stdout_file.is_some();
    let mut child = Command::new(env!("CARGO_BIN_EXE_markwell"))
        .current_dir(dir)
        .env("NO_COLOR", "1")
        .args(args)
        .stdin(Stdio::null())
        .stdout(stdout_file.map_or_else(Stdio::piped, Stdio::from))
        .stderr(Stdio::piped())
        .spawn()
        .unwrap_or_else(|error| panic!("spawn: {error}"));
    let stdout = child.stdout.take();
    assert!(to_file || stdout.is_some(), "stdout");
    let mut stderr = child.stderr.take().unwrap_or_else(|| panic!("stderr"));
    let out_reader = std::thread::spawn(move || {
        let mut bytes = Vec::new();
        if let Some(mut stdout) = stdout {
            let _ = stdout.read_to_end(&mut bytes);
        }
        bytes
    });
    let err_reader = std::thread::spawn(move || {
        let mut bytes = Vec::new();
        let _ = stderr.read_to_end(&mut bytes);
        bytes
    });
    let pid = child.id() as libc::pid_t;
    let started = Instant::now();
    let (status, usage) = loop {
        let mut status: libc::c_int = 0;
        // SAFETY: `rusage` is plain data that `wait4` fills; the pid is our own child.
        let mut usage: libc::rusage = unsafe { std::mem::zeroed() };
        let waited = unsafe { libc::wait4(pid, &mut status, libc::WNOHANG, &mut usage) };
        if waited == pid {
            break (status, usage);
        }
        assert!(waited == 0, "wait4 failed");
        if started.elapsed() > RUN_LIMIT {
            let _ = child.kill();
            let _ = child.wait();
            panic!("markwell {args:?} did not finish within {RUN_LIMIT:?}");
        }
        std::thread::sleep(Duration::from_millis(20));
    };
    let elapsed = started.elapsed();
    // already reaped by `wait4`: this only lets the standard library know (it gets ECHILD)
    let _ = child.wait();
    let code = libc::WIFEXITED(status).then(|| libc::WEXITSTATUS(status));
    Run {
        code,
        stdout: String::from_utf8_lossy(&out_reader.join().unwrap_or_default()).into_owned(),
        stderr: String::from_utf8_lossy(&err_reader.join().unwrap_or_default()).into_owned(),
        peak_kib: usage.ru_maxrss,
        elapsed,
        user_time: Duration::from_secs(usage.ru_utime.tv_sec as u64)
            + Duration::from_micros(usage.ru_utime.tv_usec as u64),
    }
}

fn create(dir: &Path, name: &str) -> (PathBuf, std::io::BufWriter<std::fs::File>) {
    let path = dir.join(name);
    let file = std::fs::File::create(&path).unwrap_or_else(|error| panic!("{error}"));
    (path, std::io::BufWriter::with_capacity(1 << 20, file))
}

fn finish(mut writer: std::io::BufWriter<std::fs::File>) {
    writer.flush().unwrap_or_else(|error| panic!("{error}"));
}

fn spec_reading(dir: &Path, data: &str, x: &str, y: &str) -> String {
    let name = format!("{}.chart.json", data.replace('.', "-"));
    let text = format!(
        r#"{{ "source": {{ "path": "{data}" }}, "mark": "bar", "bind": {{ "x": "{x}", "y": "{y}" }} }}"#
    );
    std::fs::write(dir.join(&name), text).unwrap_or_else(|error| panic!("{error}"));
    name
}

fn assert_within_bound(run: &Run, what: &str) {
    eprintln!(
        "{what}: peak {} MiB in {:.1} s",
        run.peak_kib / 1024,
        run.elapsed.as_secs_f64()
    );
    assert!(
        run.peak_kib < PEAK_BOUND_KIB,
        "{what}: peak {} KiB over {PEAK_BOUND_KIB} KiB\n{}{}",
        run.peak_kib,
        run.stdout,
        run.stderr
    );
}

#[test]
fn a_million_columns_are_refused_within_the_budget_with_a_clear_message() {
    let dir = tempfile::tempdir().unwrap_or_else(|error| panic!("{error}"));
    let (_, mut writer) = create(dir.path(), "ledger.csv");
    let columns = 1_000_000;
    for index in 0..columns {
        let separator = if index + 1 == columns { "\n" } else { "," };
        write!(writer, "crate{index}{separator}").unwrap_or_else(|error| panic!("{error}"));
    }
    for index in 0..columns {
        let separator = if index + 1 == columns { "\n" } else { "," };
        write!(writer, "{}{separator}", index % 97).unwrap_or_else(|error| panic!("{error}"));
    }
    finish(writer);
    let spec = spec_reading(dir.path(), "ledger.csv", "crate1", "crate2");
    let run = run_measured(&["check", &spec], dir.path());
    let output = format!("{}{}", run.stdout, run.stderr);
    assert!(
        output.contains("more than 104857 columns") && output.contains("profile-memory-mib"),
        "{output}"
    );
    assert_within_bound(&run, "1,000,000 columns");
}

/// `orchards.csv` in `dir`: 100,000 columns of small integers, 3 rows.
fn write_hundred_thousand_columns(dir: &Path) {
    let (_, mut writer) = create(dir, "orchards.csv");
    let columns = 100_000;
    for index in 0..columns {
        let separator = if index + 1 == columns { "\n" } else { "," };
        write!(writer, "tree{index}{separator}").unwrap_or_else(|error| panic!("{error}"));
    }
    for row in 0..3 {
        for index in 0..columns {
            let separator = if index + 1 == columns { "\n" } else { "," };
            write!(writer, "{}{separator}", (index + row) % 31)
                .unwrap_or_else(|error| panic!("{error}"));
        }
    }
    finish(writer);
}

#[test]
fn a_hundred_thousand_columns_are_profiled_within_the_budget() {
    let dir = tempfile::tempdir().unwrap_or_else(|error| panic!("{error}"));
    write_hundred_thousand_columns(dir.path());
    let spec = spec_reading(dir.path(), "orchards.csv", "tree1", "tree2");
    let run = run_measured(&["check", &spec], dir.path());
    let output = format!("{}{}", run.stdout, run.stderr);
    assert!(!output.contains("columns; a profile"), "{output}");
    assert!(output.contains("1 spec checked"), "{output}");
    assert_within_bound(&run, "100,000 columns");
}

/// What a streamed check of a large output file found, read a block at a time.
struct OutputFacts {
    bytes: u64,
    /// Lines starting (after spaces) with `line_start`.
    lines_starting: usize,
    /// The last 200 bytes.
    tail: String,
}

fn output_facts(path: &Path, line_start: &str) -> OutputFacts {
    use std::io::BufRead;
    let file = std::fs::File::open(path).unwrap_or_else(|error| panic!("{error}"));
    let mut reader = std::io::BufReader::new(file);
    let mut facts = OutputFacts {
        bytes: 0,
        lines_starting: 0,
        tail: String::new(),
    };
    let mut line = Vec::new();
    let mut tail: std::collections::VecDeque<u8> = std::collections::VecDeque::new();
    loop {
        line.clear();
        let read = reader
            .read_until(b'\n', &mut line)
            .unwrap_or_else(|error| panic!("{error}"));
        if read == 0 {
            break;
        }
        facts.bytes += read as u64;
        let text = String::from_utf8_lossy(&line);
        if text.trim_start().starts_with(line_start) {
            facts.lines_starting += 1;
        }
        tail.extend(line.iter().copied());
        while tail.len() > 200 {
            tail.pop_front();
        }
    }
    facts.tail = String::from_utf8_lossy(&tail.into_iter().collect::<Vec<u8>>()).into_owned();
    facts
}

#[test]
fn the_profile_of_a_hundred_thousand_columns_is_printed_within_the_budget() {
    // was: `profile --format json` built its whole output in memory first (about 10 KB a
    // column): 1,681 MiB peak for this file, 21.7 s; the text form 234 MiB. Streamed one
    // column at a time: 179 MiB for either, about what the profile itself takes (the figures of
    // the 2-core development machine, debug build), and 179 MiB for three such files.
    // Bound: `PEAK_BOUND_KIB`
    let dir = tempfile::tempdir().unwrap_or_else(|error| panic!("{error}"));
    write_hundred_thousand_columns(dir.path());
    let output_path = dir.path().join("profile.out");
    let output = || std::fs::File::create(&output_path).unwrap_or_else(|error| panic!("{error}"));
    let run = run_measured_with_stdout(
        &["profile", "--format", "json", "orchards.csv"],
        dir.path(),
        Some(output()),
    );
    assert_eq!(run.code, Some(0), "{}", run.stderr);
    // about 116 MB of JSON, one object per column, complete to the end
    let facts = output_facts(&output_path, "\"position\": ");
    assert!(facts.bytes > 100_000_000, "{} bytes", facts.bytes);
    assert_eq!(facts.lines_starting, 100_000);
    assert!(
        facts.tail.ends_with("\"sampled\": false\n}\n"),
        "{}",
        facts.tail
    );
    assert_within_bound(&run, "100,000 columns printed as JSON");
    // three such files in one run: one profile at a time is held (was: every profile stayed
    // in the command's cache until the end, 336 MiB for three)
    for copy in ["orchards-2.csv", "orchards-3.csv"] {
        std::fs::copy(dir.path().join("orchards.csv"), dir.path().join(copy))
            .unwrap_or_else(|error| panic!("{error}"));
    }
    let run = run_measured_with_stdout(
        &[
            "profile",
            "orchards.csv",
            "orchards-2.csv",
            "orchards-3.csv",
        ],
        dir.path(),
        Some(output()),
    );
    assert_eq!(run.code, Some(0), "{}", run.stderr);
    // a table line and a histogram per column, for each file
    let facts = output_facts(&output_path, "tree");
    assert!(facts.bytes > 100_000_000, "{} bytes", facts.bytes);
    assert_eq!(facts.lines_starting, 3 * 2 * 100_000);
    // the last histogram: every bar full (one value per bin)
    let last_bar = format!("│{} 1\n", "█".repeat(30));
    assert!(facts.tail.ends_with(&last_bar), "{}", facts.tail);
    assert_within_bound(&run, "3 files of 100,000 columns printed as text");
}

#[test]
fn a_hundred_megabyte_single_line_csv_is_refused_within_the_budget() {
    let dir = tempfile::tempdir().unwrap_or_else(|error| panic!("{error}"));
    let (path, mut writer) = create(dir.path(), "oneline.csv");
    let chunk = "ferry,".repeat(1 << 14);
    let mut written = 0usize;
    while written < 100_000_000 {
        writer
            .write_all(chunk.as_bytes())
            .unwrap_or_else(|error| panic!("{error}"));
        written += chunk.len();
    }
    finish(writer);
    assert!(std::fs::metadata(&path).map_or(0, |m| m.len()) >= 100_000_000);
    let run = run_measured(&["profile", "oneline.csv"], dir.path());
    assert_eq!(run.code, Some(2), "{}{}", run.stdout, run.stderr);
    assert!(
        run.stderr.contains("longer than 16 MiB") && run.stderr.contains("profile-memory-mib"),
        "{}",
        run.stderr
    );
    assert_within_bound(&run, "100 MB single-line CSV");
}

#[test]
fn a_two_hundred_megabyte_ndjson_line_is_refused_within_the_budget() {
    let dir = tempfile::tempdir().unwrap_or_else(|error| panic!("{error}"));
    let (_, mut writer) = create(dir.path(), "harbour.ndjson");
    writeln!(writer, r#"{{"boat": "small", "tons": 3}}"#).unwrap_or_else(|error| panic!("{error}"));
    write!(writer, r#"{{"boat": "huge", "cargo": ""#).unwrap_or_else(|error| panic!("{error}"));
    let chunk = "crates of apples ".repeat(1 << 12);
    let mut written = 0usize;
    while written < 200_000_000 {
        writer
            .write_all(chunk.as_bytes())
            .unwrap_or_else(|error| panic!("{error}"));
        written += chunk.len();
    }
    writeln!(writer, r#""}}"#).unwrap_or_else(|error| panic!("{error}"));
    finish(writer);
    let run = run_measured(&["profile", "harbour.ndjson"], dir.path());
    assert_eq!(run.code, Some(2), "{}{}", run.stdout, run.stderr);
    assert!(
        run.stderr.contains("longer than 16 MiB") && run.stderr.contains("line 2"),
        "{}",
        run.stderr
    );
    assert_within_bound(&run, "200 MB NDJSON line");
}

#[test]
fn a_json_object_with_two_hundred_thousand_keys_stays_within_the_budget() {
    let dir = tempfile::tempdir().unwrap_or_else(|error| panic!("{error}"));
    let (_, mut writer) = create(dir.path(), "bakery.json");
    write!(writer, "[{{").unwrap_or_else(|error| panic!("{error}"));
    let keys = 200_000;
    for index in 0..keys {
        let separator = if index + 1 == keys { "" } else { ", " };
        write!(writer, "\"loaf{index}\": {index}{separator}")
            .unwrap_or_else(|error| panic!("{error}"));
    }
    write!(writer, "}}]").unwrap_or_else(|error| panic!("{error}"));
    finish(writer);
    let spec = spec_reading(dir.path(), "bakery.json", "loaf1", "loaf2");
    let run = run_measured(&["check", &spec], dir.path());
    let output = format!("{}{}", run.stdout, run.stderr);
    // more keys than the budget's column limit: refused, naming the limit and the setting
    assert!(
        output.contains("more than 104857 columns") && output.contains("profile-memory-mib"),
        "{output}"
    );
    assert_within_bound(&run, "JSON object with 200,000 keys");
}

#[test]
fn a_wide_file_of_distinct_values_is_profiled_within_the_budget_with_estimates() {
    // 1,000 columns x 8,000 rows, every cell different: exact sets took 870 MiB (34 s) before the
    // budget (measured on the binary of the previous version)
    let dir = tempfile::tempdir().unwrap_or_else(|error| panic!("{error}"));
    let (_, mut writer) = create(dir.path(), "mill.csv");
    let columns = 1_000;
    let rows = 8_000;
    let mut line = String::new();
    for index in 0..columns {
        line.push_str(&format!("sack{index}"));
        line.push(if index + 1 == columns { '\n' } else { ',' });
    }
    writer
        .write_all(line.as_bytes())
        .unwrap_or_else(|error| panic!("{error}"));
    for row in 0..rows {
        line.clear();
        for index in 0..columns {
            line.push_str(&format!("r{row}c{index}"));
            line.push(if index + 1 == columns { '\n' } else { ',' });
        }
        writer
            .write_all(line.as_bytes())
            .unwrap_or_else(|error| panic!("{error}"));
    }
    finish(writer);
    let run = run_measured(&["profile", "--format", "json", "mill.csv"], dir.path());
    assert_eq!(run.code, Some(0), "{}", run.stderr);
    let profile: serde_json::Value =
        serde_json::from_str(&run.stdout).unwrap_or_else(|error| panic!("{error}"));
    let first = &profile["columns"][0]["distinct"];
    assert_eq!(first["exact"], serde_json::Value::Bool(false), "{first}");
    let estimate = first["count"].as_f64().unwrap_or(0.0);
    let error = first["relative_error"].as_f64().unwrap_or(1.0);
    // within three stated standard errors of the truth
    assert!(
        (estimate - rows as f64).abs() <= 3.0 * error * rows as f64,
        "{estimate} ± {error}"
    );
    assert_within_bound(&run, "1,000 columns of distinct values");
}

#[test]
fn the_time_budget_is_set_in_markwell_toml_or_on_the_command_line() {
    let dir = tempfile::tempdir().unwrap_or_else(|error| panic!("{error}"));
    let (_, mut writer) = create(dir.path(), "ferries.csv");
    writeln!(writer, "ferry,crossings").unwrap_or_else(|error| panic!("{error}"));
    for row in 0..300_000 {
        writeln!(writer, "ferry{},{}", row % 12, row % 50)
            .unwrap_or_else(|error| panic!("{error}"));
    }
    finish(writer);
    std::fs::create_dir(dir.path().join(".git")).unwrap_or_else(|error| panic!("{error}"));
    let spec = spec_reading(dir.path(), "ferries.csv", "ferry", "crossings");
    std::fs::write(
        dir.path().join("markwell.toml"),
        "[data]\nprofile-seconds = 0.000001\n",
    )
    .unwrap_or_else(|error| panic!("{error}"));
    let run = run_measured(&["check", &spec], dir.path());
    let output = format!("{}{}", run.stdout, run.stderr);
    assert!(output.contains("time budget of 0.000001 s"), "{output}");
    // the command line wins over the file
    let run = run_measured(&["check", "--profile-seconds", "600", &spec], dir.path());
    let output = format!("{}{}", run.stdout, run.stderr);
    assert!(!output.contains("time budget"), "{output}");
    let run = run_measured(
        &["profile", "--profile-seconds", "0", "ferries.csv"],
        dir.path(),
    );
    assert_eq!(run.code, Some(2), "{}", run.stderr);
    assert!(run.stderr.contains("above 0"), "{}", run.stderr);
}

/// Evaluating a chart over all of its rows has its own time budget (`evaluate-seconds`): past
/// it, `check` warns on each layer left out and `draw` says what it did not draw. Bound: the run
/// ends (the profile of the 3,000,000 rows, about 40 MB, is read in full within its own budget)
/// and stays under [`PEAK_BOUND_KIB`].
#[test]
fn the_evaluation_time_budget_stops_a_long_evaluation_with_a_warning() {
    let dir = tempfile::tempdir().unwrap_or_else(|error| panic!("{error}"));
    let (_, mut writer) = create(dir.path(), "crossings.csv");
    writeln!(writer, "route,passengers").unwrap_or_else(|error| panic!("{error}"));
    let routes = ["Harbour", "Islet", "Point", "Quay", "Skerry"];
    for row in 0..3_000_000usize {
        writeln!(writer, "{},{}", routes[row % 5], 10 + row % 97)
            .unwrap_or_else(|error| panic!("{error}"));
    }
    finish(writer);
    std::fs::create_dir(dir.path().join(".git")).unwrap_or_else(|error| panic!("{error}"));
    std::fs::write(
        dir.path().join("crossings.chart.json"),
        r#"{ "source": { "path": "crossings.csv" }, "layers": [
  { "mark": "bar", "bind": { "x": "route", "y": { "column": "passengers", "summary": "sum" } } },
  { "mark": "point", "bind": { "x": "route", "y": "passengers" } } ] }"#,
    )
    .unwrap_or_else(|error| panic!("{error}"));

    let run = run_measured(
        &["check", "--evaluate-seconds", "0.2", "crossings.chart.json"],
        dir.path(),
    );
    assert_within_bound(&run, "check with a 0.2 s evaluation budget");
    let output = format!("{}{}", run.stdout, run.stderr);
    assert_eq!(
        output.matches("evaluation-timed-out").count(),
        2,
        "one warning for each layer left out: {output}"
    );
    assert!(output.contains("time budget of 0.2 s"), "{output}");
    // a warning: the run passes under the default `--fail-on error`
    assert_eq!(run.code, Some(0), "{output}");

    // the same from markwell.toml; the command line wins over the file
    std::fs::write(
        dir.path().join("markwell.toml"),
        "[data]\nevaluate-seconds = 0.2\n",
    )
    .unwrap_or_else(|error| panic!("{error}"));
    let run = run_measured(&["check", "crossings.chart.json"], dir.path());
    let output = format!("{}{}", run.stdout, run.stderr);
    assert!(output.contains("evaluation-timed-out"), "{output}");
    let run = run_measured(
        &["check", "--evaluate-seconds", "600", "crossings.chart.json"],
        dir.path(),
    );
    let output = format!("{}{}", run.stdout, run.stderr);
    assert!(!output.contains("evaluation-timed-out"), "{output}");

    // `draw` says what it left out, and fails
    let run = run_measured(
        &["draw", "-o", "pictures", "crossings.chart.json"],
        dir.path(),
    );
    assert_within_bound(&run, "draw with a 0.2 s evaluation budget");
    // nothing was drawn: exit 2, as for any spec with nothing to draw
    assert_eq!(run.code, Some(2), "{}", run.stderr);
    assert!(
        run.stderr
            .contains("layer 1: evaluating the chart took longer")
            && run.stderr.contains("so it is not drawn")
            && run.stderr.contains("evaluate-seconds"),
        "{}",
        run.stderr
    );
    let run = run_measured(
        &["draw", "--evaluate-seconds=-1", "crossings.chart.json"],
        dir.path(),
    );
    assert_eq!(run.code, Some(2), "{}", run.stderr);
    assert!(run.stderr.contains("above 0"), "{}", run.stderr);
}

/// A one-line spec of `count` unknown keys of about 100 bytes each (one finding each, with a
/// fix): the worst case for printing positions, since every finding is on the same line.
fn one_line_spec_with_unknown_keys(dir: &Path, name: &str, count: usize) -> String {
    let mut text = String::from("{\"mark\": \"bar\"");
    let value = "pear".repeat(16);
    for index in 0..count {
        text.push_str(&format!(
            ", \"unknown_orchard_key_{index:06}\": \"{value}\""
        ));
    }
    text.push('}');
    std::fs::write(dir.join(name), &text).unwrap_or_else(|error| panic!("{error}"));
    name.to_string()
}

#[test]
fn a_ten_megabyte_spec_with_100000_findings_is_reported_in_linear_time() {
    // was: every position was counted from the start of the text (and every excerpt searched
    // its whole line), so 100,000 findings on one 10 MB line cost about 5 * 10^11 steps; the
    // previous binary took over 300 s for the 25,000-finding spec below.
    // bound: 4 times the findings within 8 times the processor time (plus 2 s of slack), and
    // under 120 s of processor time in a debug build
    let dir = tempfile::tempdir().unwrap_or_else(|error| panic!("{error}"));
    let quarter = one_line_spec_with_unknown_keys(dir.path(), "quarter.chart.json", 25_000);
    let whole = one_line_spec_with_unknown_keys(dir.path(), "whole.chart.json", 100_000);
    let size = std::fs::metadata(dir.path().join(&whole)).map_or(0, |m| m.len());
    assert!(size > 9_500_000, "{size} bytes");
    let small = run_measured(&["check", "--format", "json", &quarter], dir.path());
    let large = run_measured(&["check", "--format", "json", &whole], dir.path());
    assert_eq!(large.code, Some(1), "{}", large.stderr);
    assert_eq!(
        large.stdout.matches("\"rule\": \"unknown-key\"").count(),
        100_000
    );
    // the last finding's position is on line 1, far along it
    assert!(
        large.stdout.contains("\"line\": 1,"),
        "positions are printed"
    );
    eprintln!(
        "json: 25,000 findings {:?}, 100,000 findings {:?} of processor time",
        small.user_time, large.user_time
    );
    assert!(
        large.user_time < small.user_time * 8 + Duration::from_secs(2),
        "25,000 findings {:?}, 100,000 findings {:?}: not linear",
        small.user_time,
        large.user_time
    );
    assert!(large.user_time < Duration::from_secs(120));
    // the terminal report: excerpts and positions of every finding
    let report = run_measured(&["check", &whole], dir.path());
    assert_eq!(report.code, Some(1), "{}", report.stderr);
    assert!(
        report.stdout.contains("whole.chart.json:1:"),
        "{}",
        &report.stdout[..200]
    );
    eprintln!("report: 100,000 findings {:?}", report.user_time);
    assert!(report.user_time < Duration::from_secs(120));
}
