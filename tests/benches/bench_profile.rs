//! Benchmark of data profiling (`cargo bench --bench profile`): prints figures, asserts nothing.
//!
//! Generates once (cached in `target/bench-data/`, never in git) a deterministic CSV of
//! `MARKWELL_BENCH_BYTES` bytes (default 1 GiB) with ids, dates, date-times, categories, an
//! ordinal column, integers, decimals with missing values and quoted text; then measures the
//! time to the first (sampled) profile, the full-profile throughput and this process's peak
//! resident memory (`VmHWM`), and runs `tests/benches/bench_profile_polars.py` on the same file for a
//! side-by-side figure (load, then per column nulls, distinct count, min and max).

use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};
use std::process::Command;
use std::time::Instant;

use markwell::data::{ProfileCache, ReadOptions};

const DEFAULT_BYTES: u64 = 1 << 30;

/// SplitMix64 (Steele, Lea, Flood 2014; constants from memory): a small deterministic generator.
struct SplitMix64(u64);

impl SplitMix64 {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut value = self.0;
        value = (value ^ (value >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        value = (value ^ (value >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        value ^ (value >> 31)
    }

    fn below(&mut self, bound: u64) -> u64 {
        self.next() % bound.max(1)
    }
}

const PORTS: [&str; 12] = [
    "Harwick",
    "Lowmere",
    "Saltby",
    "Orrin",
    "Kessock",
    "Brae",
    "Tollan",
    "Ferrow",
    "Dunmore",
    "Ashpoint",
    "Gullhaven",
    "Pennock",
];
const LOADS: [&str; 3] = ["light", "medium", "heavy"];

fn generate(path: &Path, target_bytes: u64) -> std::io::Result<()> {
    let temporary = path.with_extension("partial");
    let mut out = BufWriter::with_capacity(1 << 20, File::create(&temporary)?);
    let header =
        "trip_id,sailed_on,departed_at,port,vessel,load,passengers,fare_eur,sea_temp_degc,remark\n";
    out.write_all(header.as_bytes())?;
    let mut written = header.len() as u64;
    let mut random = SplitMix64(20261201);
    let mut trip: u64 = 0;
    let mut line = String::with_capacity(256);
    use std::fmt::Write as _;
    while written < target_bytes {
        line.clear();
        trip += 1;
        let day = random.below(3 * 365);
        let (year, day_of_year) = (2022 + day / 365, day % 365);
        let month = day_of_year / 31 + 1;
        let day_of_month = day_of_year % 28 + 1;
        let passengers = random.below(400);
        let fare_cents = 250 + random.below(9000);
        let temperature = random.below(260) as i64 - 20;
        let _ = write!(
            line,
            "{trip},{year}-{month:02}-{day_of_month:02},{year}-{month:02}-{day_of_month:02}T{:02}:{:02}:00Z,{},V-{:04},{},",
            random.below(24),
            random.below(60),
            PORTS[random.below(PORTS.len() as u64) as usize],
            random.below(5000),
            LOADS[random.below(3) as usize],
        );
        if random.below(50) == 0 {
            line.push_str("NA");
        } else {
            let _ = write!(line, "{passengers}");
        }
        let _ = write!(line, ",{}.{:02},", fare_cents / 100, fare_cents % 100);
        if random.below(100) == 0 {
            line.push_str("NA");
        } else {
            let _ = write!(line, "{}.{}", temperature / 10, (temperature % 10).abs());
        }
        line.push(',');
        match random.below(100) {
            0 => line.push_str("\"delayed, fog\""),
            1 => line.push_str("\"crew said \"\"calm\"\"\""),
            2..=9 => line.push_str("on time"),
            _ => {}
        }
        line.push('\n');
        out.write_all(line.as_bytes())?;
        written += line.len() as u64;
    }
    out.flush()?;
    drop(out);
    std::fs::rename(&temporary, path)
}

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

fn bench_file(target_bytes: u64) -> Option<PathBuf> {
    let folder = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target/bench-data");
    std::fs::create_dir_all(&folder).ok()?;
    let path = folder.join(format!("ferry-trips-{target_bytes}.csv"));
    if !path.is_file() {
        println!(
            "generating {} ({} MiB) ...",
            path.display(),
            target_bytes >> 20
        );
        let started = Instant::now();
        if let Err(error) = generate(&path, target_bytes) {
            println!("could not generate the benchmark file: {error}");
            return None;
        }
        println!("generated in {:.1} s", started.elapsed().as_secs_f64());
    }
    Some(path)
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
        .unwrap_or(DEFAULT_BYTES);
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
