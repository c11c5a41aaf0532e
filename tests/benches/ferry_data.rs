//! The generated ferry-trip CSV the data benchmarks share (`profile`, `eval`): deterministic,
//! `MARKWELL_BENCH_BYTES` bytes (default 1 GiB), cached in `target/bench-data/` (never in git),
//! with ids, dates, date-times, categories, an ordinal column, integers, decimals with missing
//! values and quoted text.

use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};
use std::time::Instant;

pub const DEFAULT_BYTES: u64 = 1 << 30;

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

/// The benchmark file of `target_bytes` bytes, generated on first use.
pub fn bench_file(target_bytes: u64) -> Option<PathBuf> {
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
