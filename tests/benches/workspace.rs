//! Benchmark of the workspace features of `markwell serve` (run with `cargo bench --bench
//! workspace`): a generated workspace of 1,000 specs over 20 data files (invented orchard
//! harvests), driven over stdio.
//!
//! - initial workspace check: `markwell.checkWorkspace` once to read every data file, then again
//!   with the profiles cached; the time of the second is the figure (issue target: under 2 s);
//! - one data file changes (`workspace/didChangeWatchedFiles`): the time until every spec that
//!   reads it has been re-published (target: within 500 ms).
//!
//! Figures are printed, not asserted.

#[path = "../support/lsp_client.rs"]
mod lsp_client;

use std::collections::HashSet;
use std::path::Path;
use std::time::{Duration, Instant};

use lsp_client::LspClient;
use serde_json::json;

const DATA_FILES: usize = 20;
const SPECS: usize = 1000;
const ROWS: usize = 2000;

fn harvest_csv(seed: usize, crates_name: &str) -> String {
    let varieties = ["Bramley", "Cox", "Gala", "Russet", "Jazz", "Egremont"];
    let mut text = format!("orchard,variety,{crates_name},rain_mm,picked_on\n");
    let mut state = (seed as u64 + 1) * 6364136223846793005;
    for row in 0..ROWS {
        state = state
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        let crates = 40 + (state >> 33) % 160;
        let rain = 10 + (state >> 45) % 50;
        text.push_str(&format!(
            "plot-{},{},{},{},2026-{:02}-{:02}\n",
            row % 17,
            varieties[row % varieties.len()],
            crates,
            rain,
            1 + row % 12,
            1 + row % 28
        ));
    }
    text
}

fn spec(index: usize) -> String {
    let data = index % DATA_FILES;
    let (mark, x, y) = match index % 4 {
        0 => (
            "bar",
            "\"variety\"",
            "{ \"column\": \"crates\", \"summary\": \"sum\" }",
        ),
        1 => ("point", "\"rain_mm\"", "\"crates\""),
        2 => (
            "line",
            "\"picked_on\"",
            "{ \"column\": \"crates\", \"summary\": \"mean\" }",
        ),
        _ => (
            "bar",
            "\"orchard\"",
            "{ \"column\": \"crates\", \"summary\": \"count\" }",
        ),
    };
    format!(
        "{{\n  \"title\": \"Harvest chart {index}\",\n  \"source\": {{ \"path\": \"../data/harvest-{data}.csv\" }},\n  \"mark\": \"{mark}\",\n  \"bind\": {{ \"x\": {x}, \"y\": {y}, \"hue\": \"variety\" }}\n}}\n"
    )
}

fn main() {
    let directory = tempfile::tempdir().expect("temporary folder");
    let root = directory.path().canonicalize().expect("canonical root");
    std::fs::create_dir(root.join(".git")).expect(".git");
    std::fs::create_dir(root.join("data")).expect("data");
    std::fs::create_dir(root.join("specs")).expect("specs");
    for data in 0..DATA_FILES {
        std::fs::write(
            root.join(format!("data/harvest-{data}.csv")),
            harvest_csv(data, "crates"),
        )
        .expect("write data");
    }
    for index in 0..SPECS {
        std::fs::write(
            root.join(format!("specs/chart-{index:04}.chart.json")),
            spec(index),
        )
        .expect("write spec");
    }
    let mut client = LspClient::start(Path::new(env!("CARGO_BIN_EXE_markwell")), &[]);
    client.timeout = Duration::from_secs(120);
    let root_uri = format!("file://{}", root.display());
    client.initialize(json!({}), Some(&root_uri));

    let started = Instant::now();
    let first = client.request_result(
        "workspace/executeCommand",
        json!({"command": "markwell.checkWorkspace", "arguments": []}),
    );
    let cold = started.elapsed();
    client.settle(Duration::from_millis(500));
    client.take_queued("textDocument/publishDiagnostics");
    let started = Instant::now();
    let second = client.request_result(
        "workspace/executeCommand",
        json!({"command": "markwell.checkWorkspace", "arguments": []}),
    );
    let warm = started.elapsed();
    client.settle(Duration::from_millis(500));
    client.take_queued("textDocument/publishDiagnostics");
    println!("markwell serve: workspace of {SPECS} specs over {DATA_FILES} data files of {ROWS} rows (release build)");
    println!(
        "workspace check, profiles read: {:>8.1} ms ({} specs, {} findings)",
        cold.as_secs_f64() * 1e3,
        first["checked"],
        first["findings"]
    );
    println!(
        "workspace check, profiles cached: {:>7.1} ms ({} specs, {} findings)",
        warm.as_secs_f64() * 1e3,
        second["checked"],
        second["findings"]
    );

    // one data file renames `crates`: its 50 specs get unknown-column and must be re-published
    let changed = root.join("data/harvest-7.csv");
    std::fs::write(&changed, harvest_csv(7, "boxes")).expect("rewrite data");
    let affected: HashSet<String> = (0..SPECS)
        .filter(|index| index % DATA_FILES == 7)
        .map(|index| {
            format!(
                "file://{}",
                root.join(format!("specs/chart-{index:04}.chart.json"))
                    .display()
            )
        })
        .collect();
    let sent = Instant::now();
    client.notify(
        "workspace/didChangeWatchedFiles",
        json!({"changes": [{"uri": format!("file://{}", changed.display()), "type": 2}]}),
    );
    let mut seen: HashSet<String> = HashSet::new();
    let mut last = Duration::ZERO;
    while seen.len() < affected.len() {
        let (arrived, message) = client.wait_for_timed("re-published specs", |message| {
            message["method"] == "textDocument/publishDiagnostics"
        });
        let uri = message["params"]["uri"]
            .as_str()
            .unwrap_or_default()
            .to_string();
        if affected.contains(&uri) {
            seen.insert(uri);
            last = arrived.saturating_duration_since(sent);
        }
    }
    println!(
        "one data file changed: all {} affected specs re-published after {:>6.1} ms",
        affected.len(),
        last.as_secs_f64() * 1e3
    );
    client.settle(Duration::from_millis(300));
    client.take_queued("textDocument/publishDiagnostics");
    assert!(client.finish().success());
}
