//! Benchmark of the evaluation (`cargo bench --bench eval`): prints figures, asserts nothing.
//!
//! 1. Every demo spec that draws, evaluated over its data with the file in the page cache:
//!    the median time per spec (the evaluation alone; layout and SVG are measured by the draw
//!    benchmark).
//! 2. A bar chart of the sum of `fare_eur` per `port` over the generated ferry CSV of the profile
//!    benchmark (`MARKWELL_BENCH_BYTES`, default 1 GiB): throughput and this process's peak
//!    resident memory (`VmHWM`), beside polars' group-by on the same file
//!    (`tests/benches/bench_eval_polars.py`, run by `MARKWELL_PYTHON` or `python3`; skipped with
//!    a message when polars is not installed).

/// The same allocator as the `markwell` binary (see `src/main.rs`).
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

use std::path::{Path, PathBuf};
use std::process::Command;
use std::time::{Duration, Instant};

use markwell::data::ResolveOptions;
use markwell::eval::{evaluate_chart, Datum, EvalOptions, EvaluatedChart};
use markwell::spec::model::ChartSpec;

mod ferry_data;

fn median(mut samples: Vec<Duration>) -> Duration {
    samples.sort();
    samples[samples.len() / 2]
}

fn cpu_seconds() -> f64 {
    let Ok(stat) = std::fs::read_to_string("/proc/self/stat") else {
        return f64::NAN;
    };
    let after_name = stat.rsplit_once(')').map_or("", |(_, rest)| rest);
    let fields: Vec<&str> = after_name.split_whitespace().collect();
    let ticks = |index: usize| fields.get(index).and_then(|f| f.parse::<f64>().ok());
    match (ticks(11), ticks(12)) {
        (Some(user), Some(system)) => (user + system) / 100.0,
        _ => f64::NAN,
    }
}

fn peak_resident_mib() -> f64 {
    let Ok(status) = std::fs::read_to_string("/proc/self/status") else {
        return f64::NAN;
    };
    status
        .lines()
        .find(|line| line.starts_with("VmHWM:"))
        .and_then(|line| line.split_whitespace().nth(1))
        .and_then(|kib| kib.parse::<f64>().ok())
        .map_or(f64::NAN, |kib| kib / 1024.0)
}

fn evaluate(spec: &ChartSpec, options: &ResolveOptions) -> EvaluatedChart {
    evaluate_chart(
        spec,
        &mut |source| markwell::data::rows::open_rows(source, options, false),
        &EvalOptions::default(),
    )
}

fn demo_specs() {
    let folder = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("demo-data");
    let options = ResolveOptions {
        spec_dir: folder.clone(),
        workspace_root: Some(folder.clone()),
        allow_outside_workspace: false,
        limits: markwell::data::ProfileLimits::default(),
    };
    let mut names: Vec<PathBuf> = std::fs::read_dir(&folder)
        .map(|entries| {
            entries
                .filter_map(|entry| entry.ok().map(|entry| entry.path()))
                .filter(|path| path.to_string_lossy().ends_with(".chart.json"))
                .collect()
        })
        .unwrap_or_default();
    names.sort();
    println!("demo specs, evaluation alone (median of 200 runs, data in the page cache):");
    let mut medians = Vec::new();
    for path in names {
        let Ok(text) = std::fs::read_to_string(&path) else {
            continue;
        };
        let spec = markwell::analysis::parse_document(&text).spec;
        let first = evaluate(&spec, &options);
        if first.layers.is_empty() {
            continue;
        }
        let samples: Vec<Duration> = (0..200)
            .map(|_| {
                let started = Instant::now();
                let chart = evaluate(&spec, &options);
                let elapsed = started.elapsed();
                std::hint::black_box(chart);
                elapsed
            })
            .collect();
        let marks: usize = first.layers.iter().map(|layer| layer.marks.len()).sum();
        let rows: u64 = first.layers.iter().map(|layer| layer.rows_read).sum();
        let time = median(samples);
        medians.push(time);
        println!(
            "  {:<46} {:>8.3} ms  ({rows} rows, {marks} marks)",
            path.file_name()
                .map_or(String::new(), |name| name.to_string_lossy().into_owned()),
            time.as_secs_f64() * 1000.0
        );
    }
    if !medians.is_empty() {
        println!(
            "  median over the demo specs: {:.3} ms",
            median(medians).as_secs_f64() * 1000.0
        );
    }
}

struct PolarsFigures {
    name: String,
    ways: Vec<(String, f64, f64)>,
    sums: Vec<(String, f64)>,
    peak_mib: f64,
}

fn run_polars(path: &Path) -> Option<PolarsFigures> {
    let script =
        PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/benches/bench_eval_polars.py");
    let python = std::env::var("MARKWELL_PYTHON").unwrap_or_else(|_| "python3".to_string());
    let output = match Command::new(&python).arg(&script).arg(path).output() {
        Ok(output) => output,
        Err(error) => {
            println!("polars: `{python}` does not run ({error}); skipped");
            return None;
        }
    };
    let stdout = String::from_utf8_lossy(&output.stdout);
    let mut figures = PolarsFigures {
        name: String::new(),
        ways: Vec::new(),
        sums: Vec::new(),
        peak_mib: f64::NAN,
    };
    for line in stdout.lines() {
        let fields: Vec<&str> = line.split_whitespace().collect();
        match fields.as_slice() {
            ["MISSING", ..] => {
                println!("polars is not installed ({line}); the comparison is skipped");
                return None;
            }
            ["library", rest @ ..] => figures.name = rest.join(" "),
            ["way", name, seconds, cpu] => figures.ways.push((
                name.to_string(),
                seconds.parse().unwrap_or(f64::NAN),
                cpu.parse().unwrap_or(f64::NAN),
            )),
            ["sum", port, value] => figures
                .sums
                .push((port.to_string(), value.parse().unwrap_or(f64::NAN))),
            ["peak_rss_mib", value] => figures.peak_mib = value.parse().unwrap_or(f64::NAN),
            _ => {}
        }
    }
    if figures.ways.is_empty() {
        println!(
            "polars failed: {stdout}{}",
            String::from_utf8_lossy(&output.stderr)
        );
        return None;
    }
    Some(figures)
}

fn bar_of_sums() {
    let target_bytes = std::env::var("MARKWELL_BENCH_BYTES")
        .ok()
        .and_then(|text| text.trim().parse::<u64>().ok())
        .unwrap_or(ferry_data::DEFAULT_BYTES);
    let Some(path) = ferry_data::bench_file(target_bytes) else {
        return;
    };
    let size = std::fs::metadata(&path).map(|m| m.len()).unwrap_or(0);
    let megabytes = size as f64 / 1e6;
    let folder = path.parent().map(Path::to_path_buf).unwrap_or_default();
    let options = ResolveOptions {
        spec_dir: folder.clone(),
        workspace_root: Some(folder),
        allow_outside_workspace: false,
        limits: markwell::data::ProfileLimits::default(),
    };
    let file_name = path
        .file_name()
        .map_or(String::new(), |name| name.to_string_lossy().into_owned());
    let text = format!(
        r#"{{"source": {{"path": "{file_name}"}}, "mark": "bar",
            "bind": {{"x": "port", "y": {{"column": "fare_eur", "summary": "sum"}}}}}}"#
    );
    let spec = markwell::analysis::parse_document(&text).spec;
    // warm the page cache as polars will find it
    let _ = evaluate(&spec, &options);
    let cpu_before = cpu_seconds();
    let started = Instant::now();
    let chart = evaluate(&spec, &options);
    let seconds = started.elapsed().as_secs_f64();
    let cpu = cpu_seconds() - cpu_before;
    let peak = peak_resident_mib();
    let Some(layer) = chart.layers.first() else {
        println!("the bar chart was not evaluated: {:?}", chart.notes);
        return;
    };
    let mut sums: Vec<(String, f64)> = layer
        .marks
        .iter()
        .filter_map(|mark| match (&mark.values[0], mark.values[1].as_f64()) {
            (Datum::Text(port), Some(sum)) => Some((port.to_string(), sum)),
            _ => None,
        })
        .collect();
    sums.sort_by(|a, b| a.0.cmp(&b.0));
    println!();
    println!(
        "bar chart of sums over {} ({megabytes:.0} MB, {} rows, {} bars)",
        path.display(),
        layer.rows_read,
        layer.marks.len()
    );
    let polars = run_polars(&path);
    println!(
        "{:<22} {:>9} {:>9} {:>12} {:>13}",
        "", "seconds", "MB/s", "CPU seconds", "peak RSS MiB"
    );
    println!(
        "{:<22} {seconds:>9.2} {:>9.0} {cpu:>12.2} {peak:>13.1}",
        "markwell",
        megabytes / seconds
    );
    if let Some(polars) = &polars {
        for (way, wall, cpu) in &polars.ways {
            println!(
                "{:<22} {wall:>9.2} {:>9.0} {cpu:>12.2} {:>13}",
                format!("{} {way}", polars.name),
                megabytes / wall,
                if way == "eager" {
                    format!("{:.1}", polars.peak_mib)
                } else {
                    "-".to_string()
                }
            );
        }
        let agree = polars.sums.len() == sums.len()
            && polars.sums.iter().zip(&sums).all(|(theirs, ours)| {
                theirs.0 == ours.0 && (theirs.1 - ours.1).abs() <= 1e-9 * theirs.1.abs().max(1.0)
            });
        println!(
            "sums agree with polars (relative 1e-9): {agree}{}",
            if agree {
                String::new()
            } else {
                format!(" (ours {sums:?}, polars {:?})", polars.sums)
            }
        );
    }
    println!("targets: at least 287 MB/s (the profile scan), under 100 MiB peak, 2x polars");
}

fn main() {
    if std::env::var_os("MARKWELL_BENCH_SKIP_DEMO").is_none() {
        demo_specs();
    }
    bar_of_sums();
}
