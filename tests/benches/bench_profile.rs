//! Benchmark of data profiling (`cargo bench --bench profile`): prints figures, asserts nothing.
//!
//! Generates once (cached in `target/bench-data/`, never in git) a deterministic CSV of
//! `MARKWELL_BENCH_BYTES` bytes (default 1 GiB) with ids, dates, date-times, categories, an
//! ordinal column, integers, decimals with missing values and quoted text; then measures the
//! time to the first (sampled) profile, the full-profile throughput and this process's peak
//! resident memory (`VmHWM`), and runs `tests/benches/bench_profile_polars.py` on the same file for a
//! side-by-side figure (load, then per column nulls, distinct count, min and max).

use std::path::{Path, PathBuf};
use std::process::Command;
use std::time::Instant;

use markwell::data::{ProfileCache, ReadOptions};

mod ferry_data;
use ferry_data::bench_file;

/// CPU seconds (user + system) this process has used, from /proc/self/stat (fields 14 and 15,
/// in clock ticks of 1/100 s on Linux).
fn cpu_seconds() -> f64 {
    let Ok(stat) = std::fs::read_to_string("/proc/self/stat") else {
        return f64::NAN;
    };
    // the command name may hold spaces: fields are counted after the closing parenthesis
    let after_name = stat.rsplit_once(')').map_or("", |(_, rest)| rest);
    let fields: Vec<&str> = after_name.split_whitespace().collect();
    let ticks = |index: usize| fields.get(index).and_then(|f| f.parse::<f64>().ok());
    match (ticks(11), ticks(12)) {
        (Some(user), Some(system)) => (user + system) / 100.0,
        _ => f64::NAN,
    }
}

fn peak_resident_kib() -> Option<u64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|line| line.starts_with("VmHWM:"))?;
    line.split_whitespace().nth(1)?.parse().ok()
}

struct LibraryFigures {
    name: String,
    seconds: f64,
    cpu_seconds: f64,
    peak_mib: f64,
}

fn run_reference_library(path: &Path) -> Option<LibraryFigures> {
    let script =
        PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/benches/bench_profile_polars.py");
    let output = Command::new("python3").arg(&script).arg(path).output();
    let output = match output {
        Ok(output) => output,
        Err(error) => {
            println!("reference library: python3 not runnable ({error}); skipped");
            return None;
        }
    };
    let stdout = String::from_utf8_lossy(&output.stdout);
    let mut figures = LibraryFigures {
        name: String::new(),
        seconds: f64::NAN,
        cpu_seconds: f64::NAN,
        peak_mib: f64::NAN,
    };
    for line in stdout.lines() {
        if let Some(rest) = line.strip_prefix("MISSING ") {
            println!("reference library not installed: {rest}; skipped");
            return None;
        }
        if let Some(rest) = line.strip_prefix("library ") {
            figures.name = rest.to_string();
        }
        if let Some(rest) = line.strip_prefix("seconds ") {
            figures.seconds = rest.trim().parse().unwrap_or(f64::NAN);
        }
        if let Some(rest) = line.strip_prefix("cpu_seconds ") {
            figures.cpu_seconds = rest.trim().parse().unwrap_or(f64::NAN);
        }
        if let Some(rest) = line.strip_prefix("peak_rss_mib ") {
            figures.peak_mib = rest.trim().parse().unwrap_or(f64::NAN);
        }
    }
    if figures.name.is_empty() || !figures.seconds.is_finite() {
        println!(
            "reference library failed: {}{}",
            stdout,
            String::from_utf8_lossy(&output.stderr)
        );
        return None;
    }
    Some(figures)
}

fn main() {
    let target_bytes = std::env::var("MARKWELL_BENCH_BYTES")
        .ok()
        .and_then(|text| text.trim().parse::<u64>().ok())
        .unwrap_or(ferry_data::DEFAULT_BYTES);
    let Some(path) = bench_file(target_bytes) else {
        return;
    };
    let size = std::fs::metadata(&path).map(|m| m.len()).unwrap_or(0);
    let megabytes = size as f64 / 1e6;
    let read = ReadOptions::default();

    // the sampled profile: best of five fresh runs (the machine is shared)
    let mut sample_ms = f64::INFINITY;
    let mut sample = Err(markwell::data::DataError {
        kind: markwell::data::DataErrorKind::Io,
        message: "not run".to_string(),
        path: None,
        line: None,
        byte_offset: None,
    });
    for _ in 0..5 {
        let fresh_cache = ProfileCache::new();
        let started = Instant::now();
        sample = fresh_cache.sample_profile(&path, &read);
        sample_ms = sample_ms.min(started.elapsed().as_secs_f64() * 1000.0);
    }
    if std::env::var_os("MARKWELL_BENCH_SAMPLE_ONLY").is_some() {
        println!("sampled profile: {sample_ms:.1} ms");
        return;
    }
    let cache = ProfileCache::new();
    match &sample {
        Ok(profile) => println!(
            "sampled profile: {sample_ms:.1} ms ({} rows from the head, sample = {})",
            profile.rows, profile.is_sample
        ),
        Err(error) => println!("sampled profile failed: {error}"),
    }

    let started = Instant::now();
    let cpu_before = cpu_seconds();
    let full = cache.full_profile(&path, &read, &|_| true);
    let seconds = started.elapsed().as_secs_f64();
    let cpu = cpu_seconds() - cpu_before;
    let peak_mib = peak_resident_kib().map_or(f64::NAN, |kib| kib as f64 / 1024.0);
    match &full {
        Ok(profile) => {
            println!(
                "full profile: {} rows, {} columns in {seconds:.2} s",
                profile.rows,
                profile.columns.len()
            );
            for column in &profile.columns {
                println!(
                    "  {:<14} {:<12} missing {:>8} distinct {}{}",
                    column.name,
                    column.kind.as_str(),
                    column.missing,
                    if column.distinct.exact { "" } else { "~" },
                    column.distinct.value
                );
            }
        }
        Err(error) => println!("full profile failed: {error}"),
    }

    let reference = run_reference_library(&path);
    println!();
    println!("file: {} ({megabytes:.0} MB)", path.display());
    println!(
        "{:<16} {:>9} {:>9} {:>12} {:>16} {:>13}",
        "", "seconds", "MB/s", "CPU seconds", "MB per CPU-sec", "peak RSS MiB"
    );
    let row = |name: &str, wall: f64, cpu: f64, peak: f64| {
        println!(
            "{name:<16} {wall:>9.2} {:>9.0} {cpu:>12.2} {:>16.0} {peak:>13.1}",
            megabytes / wall,
            megabytes / cpu
        );
    };
    row("markwell", seconds, cpu, peak_mib);
    if let Some(reference) = reference {
        row(
            &reference.name,
            reference.seconds,
            reference.cpu_seconds,
            reference.peak_mib,
        );
    } else {
        println!("(install the reference library with: python3 -m pip install polars)");
    }
    println!("time to the first (sampled) profile: {sample_ms:.1} ms (target < 100 ms)");
}
