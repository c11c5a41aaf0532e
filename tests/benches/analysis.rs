//! Benchmark: analysis time (parse, lower, schema, all rules) with data profiles cached, for a
//! typical demo spec and for a generated 1 MB spec. Run with `cargo bench --bench analysis` (it lives under `tests/benches/` so that it is not also built as a test).
//! Prints figures; asserts nothing about time.

/// The same allocator as the `markwell` binary (see `src/main.rs`), so the figures are the
/// ones users get.
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use markwell::analysis::{analyze, parse_document, AnalysisConfig};
use markwell::data::{ProfileCache, ResolveOptions};

fn median(mut samples: Vec<Duration>) -> Duration {
    samples.sort();
    samples[samples.len() / 2]
}

fn percentile(mut samples: Vec<Duration>, share: f64) -> Duration {
    samples.sort();
    let index = ((samples.len() as f64 - 1.0) * share).round() as usize;
    samples[index]
}

/// A spec with many layers, each binding several columns of the demo's ferry data.
fn generated_spec(target_bytes: usize) -> String {
    let mut layers = Vec::new();
    let mut size = 0;
    let mut index = 0;
    while size < target_bytes {
        let layer = format!(
            "    {{\n      \"mark\": \"{}\",\n      \"bind\": {{\n        \"x\": \"month\",\n        \"y\": {{ \"column\": \"passengers\", \"summary\": \"sum\", \"mapping\": {{ \"from\": \"zero\" }} }},\n        \"hue\": {{ \"column\": \"route\", \"palette\": [\"#1b6ca8\", \"#e08a1e\", \"#2a9d5c\", \"#c23b7a\", \"#6b5b95\"] }}\n      }},\n      \"style\": {{ \"opacity\": 0.{} }}\n    }}",
            if index % 2 == 0 { "line" } else { "point" },
            index % 9 + 1
        );
        size += layer.len() + 2;
        layers.push(layer);
        index += 1;
    }
    format!(
        "{{\n  \"title\": \"Generated\",\n  \"source\": {{ \"path\": \"ferry-crossings.csv\" }},\n  \"layers\": [\n{}\n  ]\n}}\n",
        layers.join(",\n")
    )
}

fn measure(name: &str, text: &str, spec_dir: &Path, runs: usize) {
    let cache = ProfileCache::new();
    let options = ResolveOptions {
        spec_dir: spec_dir.to_path_buf(),
        workspace_root: Some(spec_dir.to_path_buf()),
        allow_outside_workspace: false,
        ..Default::default()
    };
    let config = AnalysisConfig::default();
    // warm the profile cache
    let document = parse_document(text);
    let _ = cache.load_for_spec(&document.spec, &options);
    let mut samples = Vec::with_capacity(runs);
    let mut findings = 0;
    for _ in 0..runs {
        let start = Instant::now();
        let document = parse_document(text);
        let data = cache.load_for_spec(&document.spec, &options);
        findings = analyze(&document, &data, &config).len();
        samples.push(start.elapsed());
    }
    println!(
        "{name}: {} bytes, {findings} findings, {runs} runs: median {:.3} ms, p99 {:.3} ms",
        text.len(),
        median(samples.clone()).as_secs_f64() * 1e3,
        percentile(samples, 0.99).as_secs_f64() * 1e3
    );
}

fn main() {
    let demo: PathBuf = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("demo-data");
    let typical_path = demo.join("ferry-monthly-trend.chart.json");
    let typical = match std::fs::read_to_string(&typical_path) {
        Ok(text) => text,
        Err(error) => {
            eprintln!("cannot read {}: {error}", typical_path.display());
            return;
        }
    };
    measure("typical spec (ferry-monthly-trend)", &typical, &demo, 500);
    let large = generated_spec(1024 * 1024);
    measure("generated 1 MB spec", &large, &demo, 10);
}
