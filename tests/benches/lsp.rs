//! Benchmark of `markwell serve` (run with `cargo bench --bench lsp`): the release binary is
//! driven over stdio with 1,000 scripted keystrokes, one incremental `didChange` each, on a typical
//! spec and on a 1 MB spec (the typical spec plus about 1 MB of inline rows). For each keystroke it
//! measures the time from writing the `didChange` to reading the `publishDiagnostics` of that
//! version, and prints the median and the 99th percentile; it also prints the server's resident
//! memory (VmRSS from /proc/<pid>/status) after opening the typical spec.
//!
//! The server does not republish an unchanged set of diagnostics, so every keystroke must change
//! the set: the keystrokes type into the title, and the same line holds a misspelt key after the
//! title (`subtitel`), whose range moves with each character typed.
//!
//! Targets (issue 5): typical median < 5 ms, p99 < 20 ms; memory < 50 MiB. Figures are printed,
//! not asserted: this is a benchmark, not a timed test.

#[path = "../support/lsp_client.rs"]
mod lsp_client;

use std::path::Path;
use std::time::{Duration, Instant};

use lsp_client::{utf16_position, LspClient};
use serde_json::json;

const KEYSTROKES: usize = 1000;

/// A typical spec: about 30 lines, one layer, a few declarations, a palette.
fn typical_spec(rows: &str) -> String {
    format!(
        r##"{{
  "$schema": "../schema/chart-spec.schema.json",
  "title": "Passengers per route, winter timetable", "subtitel": "weekday sailings",
  "description": "Monthly passengers on each ferry route of the harbour service",
  "source": {rows},
  "columns": {{
    "route": {{ "kind": "categorical", "label": "Route" }},
    "passengers": {{ "kind": "quantitative", "zero": "meaningful", "unit": "people" }},
    "fare_band": {{ "kind": "ordered", "levels": ["low", "mid", "high"] }}
  }},
  "purpose": "compare",
  "emphasis": ["passengers", "route"],
  "frame": {{ "width": 640, "height": 400, "background": "#ffffff" }},
  "mark": "bar",
  "bind": {{
    "x": "route",
    "y": {{ "column": "passengers", "summary": "sum", "mapping": {{ "from": "zero" }} }},
    "hue": {{ "column": "fare_band", "palette": ["#d9e6f2", "#7fa7cf", "#1f4e79"] }}
  }},
  "arrange": "stack",
  "style": {{ "opacity": 0.9 }}
}}
"##
    )
}

fn inline_rows(target_bytes: usize) -> String {
    let routes = ["Harbour Loop", "North Pier", "Lighthouse Run", "Island Hop"];
    let bands = ["low", "mid", "high"];
    let mut rows = String::from("{ \"rows\": [\n");
    let mut index = 0usize;
    while rows.len() < target_bytes {
        if index > 0 {
            rows.push_str(",\n");
        }
        rows.push_str(&format!(
            "    {{ \"route\": \"{}\", \"passengers\": {}, \"fare_band\": \"{}\" }}",
            routes[index % routes.len()],
            800 + (index * 37) % 2500,
            bands[index % bands.len()]
        ));
        index += 1;
    }
    rows.push_str("\n  ] }");
    rows
}

fn percentile(sorted: &[Duration], fraction: f64) -> Duration {
    if sorted.is_empty() {
        return Duration::ZERO;
    }
    let rank = ((sorted.len() as f64 - 1.0) * fraction).round() as usize;
    sorted[rank.min(sorted.len() - 1)]
}

fn resident_memory_kib(pid: u32) -> Option<u64> {
    let status = std::fs::read_to_string(format!("/proc/{pid}/status")).ok()?;
    status
        .lines()
        .find(|line| line.starts_with("VmRSS:"))?
        .split_whitespace()
        .nth(1)?
        .parse()
        .ok()
}

/// Type `KEYSTROKES` characters into the title; returns the latencies and the server's RSS
/// right after the first diagnostics.
fn run(name: &str, text: &str) -> (Vec<Duration>, Option<u64>) {
    let mut client = LspClient::start(Path::new(env!("CARGO_BIN_EXE_markwell")), &[]);
    client.timeout = Duration::from_secs(60);
    client.initialize(json!({}), None);
    let demo_data = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data");
    let uri = format!("file://{}/bench-{name}.chart.json", demo_data.display());
    let opened = Instant::now();
    client.open(&uri, text, 1);
    client.wait_for_publish(&uri, 1);
    let first_publish = opened.elapsed();
    let memory = resident_memory_kib(client.pid());
    let mut document = text.to_string();
    let mut insert_at =
        document.find("winter timetable").expect("title") + "winter timetable".len();
    let mut latencies = Vec::with_capacity(KEYSTROKES);
    let typed = " and summer";
    for keystroke in 0..KEYSTROKES {
        let character = typed.chars().nth(keystroke % typed.len()).unwrap_or('x');
        let position = utf16_position(&document, insert_at);
        let version = 2 + keystroke as i64;
        let sent = Instant::now();
        client.change_range(
            &uri,
            version,
            json!({"start": position, "end": position}),
            &character.to_string(),
        );
        let (arrived, _) = client.wait_for_timed("the keystroke's diagnostics", |message| {
            message["method"] == "textDocument/publishDiagnostics"
                && message["params"]["version"] == version
        });
        latencies.push(arrived.saturating_duration_since(sent));
        document.insert(insert_at, character);
        insert_at += character.len_utf8();
    }
    eprintln!(
        "{name}: {} bytes, first diagnostics after {first_publish:?}",
        text.len()
    );
    assert!(client.finish().success());
    (latencies, memory)
}

fn report(name: &str, mut latencies: Vec<Duration>) {
    latencies.sort();
    println!(
        "{name:<8} {KEYSTROKES} keystrokes: median {:>8.3} ms   p99 {:>8.3} ms   max {:>8.3} ms",
        percentile(&latencies, 0.5).as_secs_f64() * 1e3,
        percentile(&latencies, 0.99).as_secs_f64() * 1e3,
        latencies.last().copied().unwrap_or_default().as_secs_f64() * 1e3,
    );
}

fn main() {
    // the typical spec reads the demo data: its URI is placed in demo-data/ (not written)
    let typical = typical_spec(r#"{ "path": "ferry-crossings.csv" }"#);
    let large = typical_spec(&inline_rows(1024 * 1024));
    println!("markwell serve: didChange -> publishDiagnostics latency (release build)");
    let (typical_latencies, typical_memory) = run("typical", &typical);
    report("typical", typical_latencies);
    let (large_latencies, _) = run("1MB", &large);
    report("1 MB", large_latencies);
    match typical_memory {
        Some(kib) => println!(
            "resident memory after opening the typical spec: {:.1} MiB (VmRSS)",
            kib as f64 / 1024.0
        ),
        None => println!("resident memory: /proc/<pid>/status not readable"),
    }
}
