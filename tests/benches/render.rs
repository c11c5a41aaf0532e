//! Benchmark: drawing. (1) Evaluate + lay out + write SVG for demo specs, with their rows cached
//! in memory (aim: under 2 ms). (2) A scatter plot of 10 million points to PNG through the real
//! evaluation over a generated CSV (the density-grid path; aim: under 5 s and 200 MiB peak).
//! Run with `cargo bench --bench render`. Prints figures; asserts nothing about time.

/// The same allocator as the `markwell` binary (see `src/main.rs`).
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

use std::io::Write;
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use markwell::analysis::parse_document;
use markwell::data::{DataError, ResolveOptions};
use markwell::draw::layout::layout;
use markwell::draw::png::svg_to_png;
use markwell::draw::svg::write_svg;
use markwell::eval::{evaluate_chart, EvalOptions, RowSource};
use markwell::spec::model::Source;

fn median(mut samples: Vec<Duration>) -> Duration {
    samples.sort();
    samples[samples.len() / 2]
}

/// A CSV held in memory: the "data cached" case.
struct Table {
    columns: Vec<String>,
    rows: Vec<Vec<String>>,
}

impl Table {
    fn read(path: &Path) -> Table {
        let mut reader = csv::Reader::from_path(path).expect("the demo CSV reads");
        let columns = reader
            .headers()
            .expect("a header")
            .iter()
            .map(str::to_string)
            .collect();
        let rows = reader
            .records()
            .map(|record| {
                record
                    .expect("a record")
                    .iter()
                    .map(str::to_string)
                    .collect()
            })
            .collect();
        Table { columns, rows }
    }
}

struct CachedRows<'a> {
    table: &'a Table,
}

impl RowSource for CachedRows<'_> {
    fn column_names(&self) -> Vec<String> {
        self.table.columns.clone()
    }

    fn scan(
        &mut self,
        wanted: &[usize],
        row: &mut dyn FnMut(&[Option<&str>]) -> bool,
    ) -> Result<(), DataError> {
        let mut cells: Vec<Option<&str>> = Vec::with_capacity(wanted.len());
        for record in &self.table.rows {
            cells.clear();
            cells.extend(
                wanted
                    .iter()
                    .map(|index| record.get(*index).map(String::as_str)),
            );
            if !row(&cells) {
                break;
            }
        }
        Ok(())
    }
}

fn typical(spec_name: &str, csv_name: &str) {
    let demo = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("demo-data");
    let text = std::fs::read_to_string(demo.join(spec_name)).expect("the demo spec reads");
    let document = parse_document(&text);
    let table = Table::read(&demo.join(csv_name));
    let options = EvalOptions::default();
    let (mut eval_times, mut layout_times, mut svg_times, mut totals) =
        (Vec::new(), Vec::new(), Vec::new(), Vec::new());
    let mut bytes = 0;
    for round in 0..320 {
        let started = Instant::now();
        let mut open = |_: &Source| -> Result<Box<dyn RowSource + Send + '_>, DataError> {
            Ok(Box::new(CachedRows { table: &table }))
        };
        let chart = evaluate_chart(&document.spec, &mut open, &options);
        let evaluated = Instant::now();
        let scene = layout(&chart);
        let laid_out = Instant::now();
        let svg = write_svg(&scene);
        let written = Instant::now();
        bytes = svg.len();
        if round >= 20 {
            // the first rounds warm the palette cache and the allocator
            eval_times.push(evaluated - started);
            layout_times.push(laid_out - evaluated);
            svg_times.push(written - laid_out);
            totals.push(written - started);
        }
    }
    println!(
        "{spec_name} ({} rows cached): eval {:.3} ms + layout {:.3} ms + SVG {:.3} ms = {:.3} ms median ({} KiB of SVG)",
        table.rows.len(),
        median(eval_times).as_secs_f64() * 1e3,
        median(layout_times).as_secs_f64() * 1e3,
        median(svg_times).as_secs_f64() * 1e3,
        median(totals).as_secs_f64() * 1e3,
        bytes / 1024
    );
}

fn peak_resident_kib() -> Option<u64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|line| line.starts_with("VmHWM:"))?;
    line.split_whitespace().nth(1)?.parse().ok()
}

/// Ten million invented buoy readings: wind speed and wave height, a noisy rising cloud.
fn scatter_file(points: u64) -> Option<PathBuf> {
    let folder = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target/bench-data");
    std::fs::create_dir_all(&folder).ok()?;
    let path = folder.join(format!("buoy-readings-{points}.csv"));
    if path.is_file() {
        return Some(path);
    }
    println!("generating {} ...", path.display());
    let temporary = path.with_extension("partial");
    let file = std::fs::File::create(&temporary).ok()?;
    let mut out = std::io::BufWriter::with_capacity(1 << 20, file);
    writeln!(out, "wind_ms,wave_m").ok()?;
    let mut state: u64 = 0x9e37_79b9_7f4a_7c15;
    let mut next = || {
        // xorshift64*
        state ^= state >> 12;
        state ^= state << 25;
        state ^= state >> 27;
        (state.wrapping_mul(0x2545_f491_4f6c_dd1d) >> 11) as f64 / (1u64 << 53) as f64
    };
    for _ in 0..points {
        let wind = next() * 30.0;
        let wave = (wind * 0.22 + (next() + next() + next() - 1.5) * 1.4).max(0.0);
        writeln!(out, "{wind:.2},{wave:.2}").ok()?;
    }
    out.flush().ok()?;
    drop(out);
    std::fs::rename(&temporary, &path).ok()?;
    Some(path)
}

fn big_scatter(points: u64) {
    let Some(path) = scatter_file(points) else {
        println!("could not generate the scatter file");
        return;
    };
    let size_mib = std::fs::metadata(&path).map_or(0, |m| m.len()) >> 20;
    let spec_text = format!(
        r#"{{ "title": "Wave height against wind speed", "source": {{ "path": "{}" }},
             "mark": "point", "bind": {{ "x": "wind_ms", "y": "wave_m" }} }}"#,
        path.file_name()
            .map_or(String::new(), |n| n.to_string_lossy().into_owned())
    );
    let document = parse_document(&spec_text);
    let options = ResolveOptions {
        spec_dir: path.parent().map(Path::to_path_buf).unwrap_or_default(),
        workspace_root: path.parent().map(Path::to_path_buf),
        allow_outside_workspace: false,
        limits: markwell::data::ProfileLimits::default(),
    };
    let before = peak_resident_kib().unwrap_or(0);
    let started = Instant::now();
    let mut open = |source: &Source| markwell::data::rows::open_rows(source, &options, false);
    let chart = evaluate_chart(&document.spec, &mut open, &EvalOptions::default());
    let evaluated = Instant::now();
    let scene = layout(&chart);
    let svg = write_svg(&scene);
    let drawn = Instant::now();
    let png = match svg_to_png(&svg, 1.0) {
        Ok(png) => png,
        Err(error) => {
            println!("the PNG failed: {error}");
            return;
        }
    };
    let finished = Instant::now();
    let density = chart
        .layers
        .first()
        .and_then(|layer| layer.density.as_ref())
        .map(|grid| format!("density grid {} x {}", grid.width, grid.height))
        .unwrap_or_else(|| "no density grid".to_string());
    println!(
        "{points} points ({size_mib} MiB CSV, {density}): eval {:.2} s + layout and SVG {:.3} s + PNG {:.3} s = {:.2} s; peak resident {:.0} MiB (before the run {:.0} MiB); PNG {} KiB",
        (evaluated - started).as_secs_f64(),
        (drawn - evaluated).as_secs_f64(),
        (finished - drawn).as_secs_f64(),
        (finished - started).as_secs_f64(),
        peak_resident_kib().unwrap_or(0) as f64 / 1024.0,
        before as f64 / 1024.0,
        png.len() / 1024
    );
}

fn main() {
    typical(
        "ferry-passengers-by-route.chart.json",
        "ferry-crossings.csv",
    );
    typical("bakery-margin-stack.chart.json", "bakery-sales.csv");
    big_scatter(10_000_000);
}
