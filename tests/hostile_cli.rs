//! Hostile input and faults against the `markwell` binary (issue: nothing outside the
//! workspace is read, nothing blocks, write errors are errors). Each test starts with the case
//! that used to answer wrongly. Every run of the binary has a time limit (`run_limited`): a
//! test that would block fails after it instead of hanging CI.

use std::io::Read;
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

/// Longest any single run of the binary may take here; the cases are small, so a run that
/// takes longer is a block (FIFO, endless device), not slowness.
const RUN_LIMIT: Duration = Duration::from_secs(20);

fn binary() -> &'static Path {
    Path::new(env!("CARGO_BIN_EXE_markwell"))
}

/// Run the binary in `dir`, killing it after [`RUN_LIMIT`]; panics (test failure) on timeout.
fn run_limited(args: &[&str], dir: &Path, environment: &[(&str, &str)]) -> Output {
    let mut command = Command::new(binary());
    command
        .current_dir(dir)
        .env("NO_COLOR", "1")
        .args(args)
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped());
    for (name, value) in environment {
        command.env(name, value);
    }
    let mut child = command
        .spawn()
        .unwrap_or_else(|error| panic!("spawn: {error}"));
    let mut stdout = child.stdout.take().unwrap_or_else(|| panic!("stdout"));
    let mut stderr = child.stderr.take().unwrap_or_else(|| panic!("stderr"));
    let out_reader = std::thread::spawn(move || {
        let mut bytes = Vec::new();
        let _ = stdout.read_to_end(&mut bytes);
        bytes
    });
    let err_reader = std::thread::spawn(move || {
        let mut bytes = Vec::new();
        let _ = stderr.read_to_end(&mut bytes);
        bytes
    });
    let started = Instant::now();
    let status = loop {
        if let Ok(Some(status)) = child.try_wait() {
            break status;
        }
        if started.elapsed() > RUN_LIMIT {
            let _ = child.kill();
            let _ = child.wait();
            panic!("markwell {args:?} did not finish within {RUN_LIMIT:?} (blocked?)");
        }
        std::thread::sleep(Duration::from_millis(10));
    };
    Output {
        status,
        stdout: out_reader.join().unwrap_or_default(),
        stderr: err_reader.join().unwrap_or_default(),
    }
}

fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let path = dir.join(name);
    if let Some(parent) = path.parent() {
        std::fs::create_dir_all(parent).unwrap_or_else(|error| panic!("{error}"));
    }
    std::fs::write(&path, text).unwrap_or_else(|error| panic!("{error}"));
    path
}

fn text(output: &Output) -> String {
    format!(
        "{}{}",
        String::from_utf8_lossy(&output.stdout),
        String::from_utf8_lossy(&output.stderr)
    )
}

fn spec_reading(path: &str) -> String {
    format!(
        r#"{{ "source": {{ "path": "{path}" }}, "mark": "bar", "bind": {{ "x": "a", "y": "b" }} }}"#
    )
}

fn make_fifo(path: &Path) {
    let status = Command::new("mkfifo")
        .arg(path)
        .status()
        .unwrap_or_else(|error| panic!("mkfifo: {error}"));
    assert!(status.success());
}

fn symlink(target: &Path, link: &Path) {
    std::os::unix::fs::symlink(target, link).unwrap_or_else(|error| panic!("{error}"));
}

#[test]
fn data_outside_the_folder_of_the_spec_is_not_read_nor_quoted() {
    // was: `/etc/passwd` read and one of its lines (the superuser's entry) listed in a message
    let dir = tempfile::tempdir().unwrap_or_else(|error| panic!("{error}"));
    for (name, path) in [
        ("absolute.chart.json", "/etc/passwd"),
        ("climb.chart.json", "../../../../../../../../etc/passwd"),
    ] {
        write(dir.path(), name, &spec_reading(path));
        let output = run_limited(&["check", "--format", "json", name], dir.path(), &[]);
        let all = text(&output);
        assert!(!all.contains("root:x:"), "{all}");
        assert!(all.contains("outside the workspace"), "{all}");
        assert_eq!(output.status.code(), Some(1), "{all}");
    }
}

#[test]
fn a_refused_path_says_nothing_about_what_lies_outside() {
    // was: the message told whether the outside file exists and where a symlink points
    let outer = tempfile::tempdir().unwrap_or_else(|error| panic!("{error}"));
    let project = outer.path().join("project");
    std::fs::create_dir_all(project.join(".git")).unwrap_or_else(|error| panic!("{error}"));
    write(outer.path(), "exists.csv", "a,b\nsecret-cell,1\n");
    symlink(&outer.path().join("exists.csv"), &project.join("link.csv"));
    symlink(
        &outer.path().join("missing.csv"),
        &project.join("dangling.csv"),
    );
    let mut messages = Vec::new();
    for written in [
        "../exists.csv",
        "../missing.csv",
        "link.csv",
        "dangling.csv",
    ] {
        write(&project, "spec.chart.json", &spec_reading(written));
        let output = run_limited(&["check", "spec.chart.json"], &project, &[]);
        let all = text(&output);
        assert!(!all.contains("secret-cell"), "{all}");
        assert!(
            !all.contains("missing.csv") || written.contains("missing"),
            "{all}"
        );
        assert!(
            !all.contains("exists.csv") || written.contains("exists"),
            "{all}"
        );
        assert!(all.contains("outside the workspace"), "{written}: {all}");
        let first_line = all
            .lines()
            .next()
            .unwrap_or_default()
            .replace(written, "PATH");
        messages.push(first_line);
    }
    // the same words whether the outside file exists or not, and for both symlinks
    assert_eq!(messages[0], messages[1]);
    assert_eq!(messages[2], messages[3]);
}

#[test]
fn a_markwell_toml_above_the_repository_cannot_switch_containment_off() {
    // was: a markwell.toml anywhere up to `/` was found and could allow reading outside
    let outer = tempfile::tempdir().unwrap_or_else(|error| panic!("{error}"));
    write(
        outer.path(),
        "markwell.toml",
        "[data]\nallow-outside-workspace = true\n",
    );
    write(outer.path(), "secret.csv", "a,b\nsecret-cell,1\n");
    let repository = outer.path().join("repository");
    std::fs::create_dir_all(repository.join(".git")).unwrap_or_else(|error| panic!("{error}"));
    write(
        &repository,
        "specs/spec.chart.json",
        &spec_reading("../../secret.csv"),
    );
    let output = run_limited(&["check", "specs"], &repository, &[]);
    let all = text(&output);
    assert!(!all.contains("secret-cell"), "{all}");
    assert!(all.contains("outside the workspace"), "{all}");

    // without a .git the walk stops at the folder given (the current folder here)
    let plain = outer.path().join("plain");
    write(
        &plain,
        "specs/spec.chart.json",
        &spec_reading("../../secret.csv"),
    );
    let output = run_limited(&["check", "specs"], &plain, &[]);
    assert!(
        text(&output).contains("outside the workspace"),
        "{}",
        text(&output)
    );
}

#[test]
fn a_spec_symlinked_to_proc_is_refused_and_never_printed() {
    // was: `*.chart.json` → /proc/self/environ printed the environment (a token) in the report
    let dir = tempfile::tempdir().unwrap_or_else(|error| panic!("{error}"));
    symlink(
        Path::new("/proc/self/environ"),
        &dir.path().join("env.chart.json"),
    );
    symlink(
        Path::new("/proc/self/pagemap"),
        &dir.path().join("pages.chart.json"),
    );
    symlink(Path::new("/dev/zero"), &dir.path().join("zero.chart.json"));
    let token = "MARKWELL_TEST_TOKEN=ghp_not_a_real_token_0123456789";
    let output = run_limited(
        &["check", "."],
        dir.path(),
        &[("MARKWELL_TEST_TOKEN", "ghp_not_a_real_token_0123456789")],
    );
    let all = text(&output);
    assert!(
        !all.contains("ghp_not_a_real_token"),
        "{token} leaked: {all}"
    );
    assert_eq!(output.status.code(), Some(2), "{all}");
    assert!(all.contains("env.chart.json"), "{all}");
    assert!(all.contains("outside the workspace"), "{all}");
    // a spec given by name that is a device is refused by kind, in bounded time and memory
    let output = run_limited(
        &["check", "--workspace", "/", "zero.chart.json"],
        dir.path(),
        &[],
    );
    assert_eq!(output.status.code(), Some(2), "{}", text(&output));
}

#[test]
fn a_fifo_as_data_spec_or_configuration_does_not_block() {
    // was: a FIFO `source.path` blocked the analysis for ever (bounded here by RUN_LIMIT)
    let dir = tempfile::tempdir().unwrap_or_else(|error| panic!("{error}"));
    make_fifo(&dir.path().join("pipe.csv"));
    write(dir.path(), "fifo.chart.json", &spec_reading("pipe.csv"));
    let output = run_limited(
        &["check", "--format", "json", "fifo.chart.json"],
        dir.path(),
        &[],
    );
    let all = text(&output);
    assert!(all.contains("FIFO"), "{all}");
    assert!(
        all.contains("not-regular") || all.contains("regular file"),
        "{all}"
    );

    // a FIFO named like a spec, and one named markwell.toml
    make_fifo(&dir.path().join("piped.chart.json"));
    make_fifo(&dir.path().join("markwell.toml"));
    let output = run_limited(&["check", "."], dir.path(), &[]);
    let all = text(&output);
    assert_eq!(output.status.code(), Some(2), "{all}");
    assert!(
        all.contains("markwell.toml") && all.contains("FIFO"),
        "{all}"
    );
}

#[test]
fn a_configuration_symlinked_to_an_endless_device_is_refused_at_once() {
    // was: markwell.toml → /dev/zero read 3 GB before anything was said; bound: no read at all
    let dir = tempfile::tempdir().unwrap_or_else(|error| panic!("{error}"));
    std::fs::create_dir(dir.path().join(".git")).unwrap_or_else(|error| panic!("{error}"));
    write(dir.path(), "a.chart.json", &spec_reading("a.csv"));
    write(dir.path(), "a.csv", "a,b\nx,1\n");
    symlink(Path::new("/dev/zero"), &dir.path().join("markwell.toml"));
    let output = run_limited(&["check", "."], dir.path(), &[]);
    assert_eq!(output.status.code(), Some(2), "{}", text(&output));
    assert!(text(&output).contains("markwell.toml"), "{}", text(&output));
    let output = run_limited(&["check", "--config", "/dev/zero", "."], dir.path(), &[]);
    assert_eq!(output.status.code(), Some(2), "{}", text(&output));
    assert!(
        text(&output).contains("not a regular file"),
        "{}",
        text(&output)
    );
    // a too-large configuration is refused by size (1 MiB limit)
    std::fs::remove_file(dir.path().join("markwell.toml")).unwrap_or_else(|e| panic!("{e}"));
    write(dir.path(), "markwell.toml", &"#".repeat(2 << 20));
    let output = run_limited(&["check", "."], dir.path(), &[]);
    assert_eq!(output.status.code(), Some(2), "{}", text(&output));
    assert!(text(&output).contains("1 MiB"), "{}", text(&output));
}

#[test]
fn a_symlink_loop_is_a_clear_error() {
    let dir = tempfile::tempdir().unwrap_or_else(|error| panic!("{error}"));
    symlink(&dir.path().join("b.csv"), &dir.path().join("a.csv"));
    symlink(&dir.path().join("a.csv"), &dir.path().join("b.csv"));
    write(dir.path(), "loop.chart.json", &spec_reading("a.csv"));
    let output = run_limited(&["check", "loop.chart.json"], dir.path(), &[]);
    assert_eq!(output.status.code(), Some(1), "{}", text(&output));
    assert!(text(&output).contains("a.csv"), "{}", text(&output));
}

/// A pipe whose reading end is already closed, as the stdout of a child.
fn closed_pipe() -> Stdio {
    use std::os::fd::{FromRawFd, OwnedFd};
    let mut fds = [0i32; 2];
    // SAFETY: `pipe` fills two new descriptors; each is owned exactly once below
    let result = unsafe { libc::pipe(fds.as_mut_ptr()) };
    assert_eq!(result, 0, "pipe");
    // SAFETY: fresh descriptors from `pipe`, owned here only
    let (read_end, write_end) =
        unsafe { (OwnedFd::from_raw_fd(fds[0]), OwnedFd::from_raw_fd(fds[1])) };
    drop(read_end);
    Stdio::from(write_end)
}

fn run_with_stdout(args: &[&str], dir: &Path, stdout: Stdio) -> (Option<i32>, String) {
    let output = Command::new(binary())
        .current_dir(dir)
        .args(args)
        .stdin(Stdio::null())
        .stdout(stdout)
        .stderr(Stdio::piped())
        .output()
        .unwrap_or_else(|error| panic!("{error}"));
    (
        output.status.code(),
        String::from_utf8_lossy(&output.stderr).into_owned(),
    )
}

/// A CSV of 2,000 columns: its profile prints megabytes (far more than the output buffer), so a
/// write fails or the pipe closes in the middle of the output, not only at the end.
fn write_wide_csv(dir: &Path) {
    let columns = 2_000;
    let header: Vec<String> = (0..columns).map(|index| format!("crate{index}")).collect();
    let mut text = header.join(",") + "\n";
    for row in 0..3 {
        let cells: Vec<String> = (0..columns)
            .map(|index| ((index + row) % 7).to_string())
            .collect();
        text.push_str(&(cells.join(",") + "\n"));
    }
    write(dir, "wide.csv", &text);
}

#[test]
fn a_closed_stdout_ends_quietly_with_the_usual_status() {
    // was: `markwell check ... | head -1` and `rules` panicked with exit code 101
    let dir = tempfile::tempdir().unwrap_or_else(|error| panic!("{error}"));
    write(
        dir.path(),
        "clean.chart.json",
        r#"{ "source": { "rows": [{"a": "x", "b": 1}] }, "mark": "bar", "bind": { "x": "a", "y": "b" } }"#,
    );
    write(
        dir.path(),
        "wrong.chart.json",
        r#"{ "mark": "bar", "bnid": {} }"#,
    );
    write(dir.path(), "d.csv", "a,b\nx,1\n");
    write_wide_csv(dir.path());
    for (args, usual) in [
        (&["rules"][..], 0),
        (&["explain", "unknown-key"][..], 0),
        (&["check", "clean.chart.json"][..], 0),
        (&["check", "wrong.chart.json"][..], 1),
        (&["check", "--format", "json", "."][..], 1),
        (&["profile", "d.csv"][..], 0),
        (&["profile", "wide.csv"][..], 0),
        (&["profile", "--format", "json", "wide.csv"][..], 0),
        (&["profile", "--format", "json", "wide.csv", "d.csv"][..], 0),
    ] {
        let (code, stderr) = run_with_stdout(args, dir.path(), closed_pipe());
        assert_eq!(code, Some(usual), "{args:?}: {stderr}");
        assert!(!stderr.contains("panicked"), "{args:?}: {stderr}");
    }
}

#[cfg(target_os = "linux")]
#[test]
fn a_full_disk_is_exit_code_2_with_a_message() {
    // was: `profile` exited 0 having written nothing; `check` and `rules` panicked (101)
    let dir = tempfile::tempdir().unwrap_or_else(|error| panic!("{error}"));
    write(dir.path(), "d.csv", "a,b\nx,1\n");
    write(
        dir.path(),
        "wrong.chart.json",
        r#"{ "mark": "bar", "bnid": {} }"#,
    );
    write_wide_csv(dir.path());
    for args in [
        &["rules"][..],
        &["profile", "d.csv"][..],
        &["profile", "--format", "json", "d.csv"][..],
        &["profile", "wide.csv"][..],
        &["profile", "--format", "json", "wide.csv"][..],
        &["profile", "--format", "json", "wide.csv", "d.csv"][..],
        &["check", "wrong.chart.json"][..],
    ] {
        let full = std::fs::OpenOptions::new()
            .write(true)
            .open("/dev/full")
            .unwrap_or_else(|error| panic!("{error}"));
        let (code, stderr) = run_with_stdout(args, dir.path(), Stdio::from(full));
        assert_eq!(code, Some(2), "{args:?}: {stderr}");
        assert!(stderr.contains("could not write"), "{args:?}: {stderr}");
    }
}

#[test]
fn control_characters_from_data_never_reach_the_terminal() {
    // was: `profile` wrote escape sequences from data files straight to the terminal, including
    // OSC 52, which sets the clipboard
    let dir = tempfile::tempdir().unwrap_or_else(|error| panic!("{error}"));
    let osc52 = "\u{1b}]52;c;ZWNobyBoaQ==\u{7}";
    write(
        dir.path(),
        "d.csv",
        &format!("name\u{1b}[31m,b\n{osc52},1\nplain,2\n\u{9b}2J,3\n"),
    );
    let output = run_limited(&["profile", "d.csv"], dir.path(), &[]);
    let all = text(&output);
    assert_eq!(output.status.code(), Some(0), "{all}");
    assert!(
        !all.contains('\u{1b}') && !all.contains('\u{9b}') && !all.contains('\u{7}'),
        "{all:?}"
    );
    assert!(all.contains("\\x1b]52"), "{all}");
    // and in check messages that quote data
    write(
        dir.path(),
        "s.chart.json",
        r#"{ "source": { "path": "d.csv" }, "mark": "bar", "bind": { "x": "nmae", "y": "b" } }"#,
    );
    let output = run_limited(&["check", "s.chart.json"], dir.path(), &[]);
    let all = text(&output);
    assert!(
        !all.contains('\u{1b}') && !all.contains('\u{9b}'),
        "{all:?}"
    );
}
