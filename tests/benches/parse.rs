//! Benchmark: parsing (and parsing + lowering) a ~1 MB chart spec, against
//! `serde_json::from_str::<serde_json::Value>` on the same text. Run with
//! `cargo bench --bench parse`; it prints figures and asserts nothing about speed.

/// The same allocator as the `markwell` binary (see `src/main.rs`), so the figures are the
/// ones users get.
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

use std::hint::black_box;
use std::time::{Duration, Instant};

use serde_json::{json, Value};

const RUNS: usize = 25;
const TARGET_BYTES: usize = 1_000_000;

/// A small deterministic generator (64-bit linear congruential, Knuth's MMIX constants), so
/// every run measures the same text.
struct Dice(u64);

impl Dice {
    fn next(&mut self) -> u64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        self.0 >> 33
    }

    fn pick<'a>(&mut self, choices: &[&'a str]) -> &'a str {
        choices[(self.next() as usize) % choices.len()]
    }
}

const MARKS: &[&str] = &[
    "bar", "line", "point", "area", "cell", "segment", "text", "wedge",
];
const COLUMNS: &[&str] = &[
    "bakery",
    "loaves",
    "flour_kg",
    "oven",
    "shift",
    "weekday",
    "crust_score",
    "proof_minutes",
    "orchard",
    "crates",
    "ferry",
    "crossings",
    "load_pct",
];
const SUMMARIES: &[&str] = &["sum", "mean", "median", "count", "max", "min"];
const COLOURS: &[&str] = &[
    "#d9e6f2", "#7fa7cf", "#1f4e79", "#f4e3c1", "#c98f3d", "#6b3f12", "#e8f0d8", "#7a9a4b",
];

fn generated_layer(dice: &mut Dice, index: usize) -> Value {
    let palette: Vec<&str> = (0..3 + dice.next() as usize % 4)
        .map(|_| dice.pick(COLOURS))
        .collect();
    json!({
        "mark": dice.pick(MARKS),
        "bind": {
            "x": dice.pick(COLUMNS),
            "y": {
                "column": dice.pick(COLUMNS),
                "summary": dice.pick(SUMMARIES),
                "mapping": { "spacing": "even", "from": if dice.next() % 2 == 0 { "zero" } else { "data" }, "extent": [0, (dice.next() % 900) as f64 + 0.5] }
            },
            "hue": { "column": dice.pick(COLUMNS), "palette": palette },
            "area": { "column": dice.pick(COLUMNS), "bins": 4 + dice.next() % 8 },
            "label": format!("layer {index}: \u{e9}clair batch \"{}\"", dice.next() % 1000)
        },
        "arrange": "stack",
        "style": { "opacity": 0.25 + (dice.next() % 70) as f64 / 100.0, "stroke-width": 1.5 }
    })
}

fn generated_spec_text() -> String {
    let mut dice = Dice(0x5EED);
    let mut layers = Vec::new();
    let mut approximate_size = 0;
    while approximate_size < TARGET_BYTES {
        let layer = generated_layer(&mut dice, layers.len());
        // indented three levels deeper inside the document: a few bytes more per line
        approximate_size += serde_json::to_string_pretty(&layer)
            .map(|pretty| pretty.len() + 6 * pretty.lines().count())
            .unwrap_or(TARGET_BYTES);
        layers.push(layer);
    }
    let spec = json!({
        "$schema": "../schema/chart-spec.schema.json",
        "title": "Loaves baked per bakery and shift",
        "source": { "path": "bakeries.csv" },
        "columns": { "weekday": { "kind": "ordered", "levels": ["Mon", "Tue", "Wed", "Thu", "Fri"] } },
        "frame": { "width": 640, "height": 400, "background": "#ffffff" },
        "layers": layers
    });
    serde_json::to_string_pretty(&spec).unwrap_or_default()
}

struct Timing {
    best: Duration,
    median: Duration,
}

fn time(mut work: impl FnMut()) -> Timing {
    work(); // warm-up
    let mut times: Vec<Duration> = (0..RUNS)
        .map(|_| {
            let started = Instant::now();
            work();
            started.elapsed()
        })
        .collect();
    times.sort();
    Timing {
        best: times[0],
        median: times[RUNS / 2],
    }
}

fn report(label: &str, timing: &Timing, bytes: usize) {
    let megabytes = bytes as f64 / 1e6;
    println!(
        "{label:<28} best {:>8.2} ms  median {:>8.2} ms  ({:>6.0} MB/s at median)",
        timing.best.as_secs_f64() * 1e3,
        timing.median.as_secs_f64() * 1e3,
        megabytes / timing.median.as_secs_f64()
    );
}

fn main() {
    let text = generated_spec_text();
    let tree = markwell::syntax::parse(&text);
    println!(
        "input: {} bytes, {} tokens, {} nodes, {} syntax errors; {} runs each",
        text.len(),
        tree.tokens().len(),
        tree.node_count(),
        tree.errors().len(),
        RUNS
    );
    drop(tree);

    let parse = time(|| {
        black_box(markwell::syntax::parse(black_box(&text)));
    });
    let parse_and_lower = time(|| {
        let tree = markwell::syntax::parse(black_box(&text));
        black_box(markwell::spec::lower_document(&tree));
    });
    let serde_value = time(|| {
        black_box(serde_json::from_str::<Value>(black_box(&text)).ok());
    });

    report("syntax::parse", &parse, text.len());
    report("parse + spec::lower_document", &parse_and_lower, text.len());
    report("serde_json Value", &serde_value, text.len());
    let ratio = |ours: &Timing| ours.median.as_secs_f64() / serde_value.median.as_secs_f64();
    println!(
        "ratio at median: parse {:.2}x serde_json, parse + lower {:.2}x serde_json (target: at most 3x)",
        ratio(&parse),
        ratio(&parse_and_lower)
    );
}
