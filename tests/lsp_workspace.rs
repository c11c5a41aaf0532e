//! The whole workspace through `markwell serve` over stdio (real binary): references and rename
//! of a column across specs (open and closed) and from the data file's header, closed specs
//! checked when their data changes and by the workspace command, data files as documents
//! (diagnostics for malformed rows, hover on a header cell), workspace symbols.

#[path = "support/lsp_client.rs"]
mod lsp_client;

use std::path::{Path, PathBuf};
use std::process::Command;

use lsp_client::{apply_lsp_edits, utf16_position, LspClient};
use serde_json::{json, Value};

fn start() -> LspClient {
    LspClient::start(Path::new(env!("CARGO_BIN_EXE_markwell")), &[])
}

/// Invented orchard data.
const HARVEST_CSV: &str = "variety,crates,rain_mm\nBramley,120,31\nCox,95,28\nGala,143,35\n";

const BARS: &str = "{\n  \"title\": \"Crates per variety\",\n  \"source\": { \"path\": \"harvest.csv\" },\n  \"mark\": \"bar\",\n  \"bind\": { \"x\": \"variety\", \"y\": { \"column\": \"crates\", \"summary\": \"sum\" } }\n}\n";
const POINTS: &str = "{\n  \"title\": \"Rain and crates\",\n  \"source\": { \"path\": \"harvest.csv\" },\n  \"emphasis\": [\"crates\"],\n  \"mark\": \"point\",\n  \"bind\": { \"x\": \"rain_mm\", \"y\": \"crates\" }\n}\n";

struct Workspace {
    directory: tempfile::TempDir,
}

impl Workspace {
    fn new() -> Workspace {
        let directory = match tempfile::tempdir() {
            Ok(directory) => directory,
            Err(error) => panic!("tempdir: {error}"),
        };
        let workspace = Workspace { directory };
        let _ = std::fs::create_dir(workspace.path(".git"));
        workspace.write("harvest.csv", HARVEST_CSV);
        workspace.write("bars.chart.json", BARS);
        let _ = std::fs::create_dir(workspace.path("more"));
        workspace.write(
            "more/points.chart.json",
            &POINTS.replace("harvest.csv", "../harvest.csv"),
        );
        workspace
    }

    fn path(&self, name: &str) -> PathBuf {
        self.directory.path().join(name)
    }

    fn write(&self, name: &str, text: &str) {
        if let Err(error) = std::fs::write(self.path(name), text) {
            panic!("write {name}: {error}");
        }
    }

    fn read(&self, name: &str) -> String {
        std::fs::read_to_string(self.path(name)).unwrap_or_default()
    }

    fn uri(&self, name: &str) -> String {
        let canonical = self
            .path(name)
            .canonicalize()
            .unwrap_or_else(|_| self.path(name));
        format!("file://{}", canonical.display())
    }

    fn root_uri(&self) -> String {
        let canonical = self.directory.path().canonicalize().unwrap_or_default();
        format!("file://{}", canonical.display())
    }
}

fn position_of(text: &str, needle: &str) -> Value {
    let at = text
        .find(needle)
        .unwrap_or_else(|| panic!("{needle} not in text"));
    utf16_position(text, at + 1)
}

fn edits_for(edit: &Value, uri: &str) -> Vec<Value> {
    edit["changes"][uri].as_array().cloned().unwrap_or_default()
}

#[test]
fn references_and_rename_reach_every_spec_that_reads_the_file() {
    let workspace = Workspace::new();
    let mut client = start();
    client.initialize(json!({}), Some(&workspace.root_uri()));
    let bars = workspace.uri("bars.chart.json");
    let points = workspace.uri("more/points.chart.json");
    let csv = workspace.uri("harvest.csv");
    client.open(&bars, BARS, 1);
    client.wait_for_publish(&bars, 1);

    let references = client.request_result(
        "textDocument/references",
        json!({"textDocument": {"uri": bars}, "position": position_of(BARS, "\"crates\""),
               "context": {"includeDeclaration": true}}),
    );
    let mut found: Vec<(String, u64)> = references
        .as_array()
        .into_iter()
        .flatten()
        .map(|location| {
            (
                location["uri"].as_str().unwrap_or_default().to_string(),
                location["range"]["start"]["line"].as_u64().unwrap_or(99),
            )
        })
        .collect();
    found.sort();
    let mut expected = vec![
        (bars.clone(), 4),
        (csv.clone(), 0),
        (points.clone(), 3),
        (points.clone(), 5),
    ];
    expected.sort();
    assert_eq!(found, expected, "{references}");

    // rename from a spec: the specs change, the data file does not
    let edit = client.request_result(
        "textDocument/rename",
        json!({"textDocument": {"uri": bars}, "position": position_of(BARS, "\"crates\""), "newName": "crates_packed"}),
    );
    assert!(edit["changes"][&csv].is_null(), "{edit}");
    assert_eq!(edits_for(&edit, &bars).len(), 1);
    assert_eq!(edits_for(&edit, &points).len(), 2);
    assert!(client.finish().success());
}

#[test]
fn renaming_from_the_header_and_checking_again_leaves_no_unknown_column() {
    let workspace = Workspace::new();
    let mut client = start();
    client.initialize(json!({}), Some(&workspace.root_uri()));
    let csv = workspace.uri("harvest.csv");
    client.open(&csv, HARVEST_CSV, 1);
    let prepared = client.request_result(
        "textDocument/prepareRename",
        json!({"textDocument": {"uri": csv}, "position": position_of(HARVEST_CSV, "crates")}),
    );
    assert_eq!(prepared["placeholder"], "crates");
    let edit = client.request_result(
        "textDocument/rename",
        json!({"textDocument": {"uri": csv}, "position": position_of(HARVEST_CSV, "crates"), "newName": "crates, packed"}),
    );
    // apply it as a client would: every file named in the edit
    for (name, text) in [
        ("harvest.csv", HARVEST_CSV.to_string()),
        ("bars.chart.json", workspace.read("bars.chart.json")),
        (
            "more/points.chart.json",
            workspace.read("more/points.chart.json"),
        ),
    ] {
        let edits = edits_for(&edit, &workspace.uri(name));
        assert!(!edits.is_empty(), "no edits for {name}: {edit}");
        workspace.write(name, &apply_lsp_edits(&text, &edits));
    }
    assert!(workspace
        .read("harvest.csv")
        .starts_with("variety,\"crates, packed\",rain_mm\n"));
    assert!(client.finish().success());
    let output = Command::new(env!("CARGO_BIN_EXE_markwell"))
        .args(["check", "--format", "json", "."])
        .current_dir(workspace.directory.path())
        .output();
    let stdout = match output {
        Ok(output) => String::from_utf8_lossy(&output.stdout).into_owned(),
        Err(error) => panic!("markwell check: {error}"),
    };
    assert!(!stdout.contains("unknown-column"), "{stdout}");
    assert!(stdout.contains("\"clean\": 2"), "{stdout}");
    assert!(workspace
        .read("bars.chart.json")
        .contains("\"column\": \"crates, packed\""));
    assert!(workspace
        .read("more/points.chart.json")
        .contains("\"emphasis\": [\"crates, packed\"]"));
}

#[test]
fn closed_specs_are_checked_when_their_data_changes_and_on_command() {
    let workspace = Workspace::new();
    let mut client = start();
    client.initialize(json!({}), Some(&workspace.root_uri()));
    let points = workspace.uri("more/points.chart.json");
    // the data loses `crates`: the closed spec that reads it must light up
    workspace.write("harvest.csv", "variety,boxes,rain_mm\nBramley,120,31\n");
    client.notify(
        "workspace/didChangeWatchedFiles",
        json!({"changes": [{"uri": workspace.uri("harvest.csv"), "type": 2}]}),
    );
    let published = client.wait_for("diagnostics of the closed spec", |message| {
        message["method"] == "textDocument/publishDiagnostics"
            && message["params"]["uri"] == points.as_str()
    });
    let codes: Vec<&str> = published["params"]["diagnostics"]
        .as_array()
        .into_iter()
        .flatten()
        .filter_map(|d| d["code"].as_str())
        .collect();
    assert!(codes.contains(&"unknown-column"), "{published}");
    client.take_queued("textDocument/publishDiagnostics");

    // the command checks every closed spec and says how many
    let result = client.request_result(
        "workspace/executeCommand",
        json!({"command": "markwell.checkWorkspace", "arguments": []}),
    );
    assert_eq!(result["checked"], 2, "{result}");
    assert!(result["findings"].as_u64().unwrap_or(0) >= 2, "{result}");
    client.settle(std::time::Duration::from_millis(200));
    client.take_queued("textDocument/publishDiagnostics");
    assert!(client.finish().success());
}

#[test]
fn data_files_are_documents_too() {
    let workspace = Workspace::new();
    let ragged = "variety,crates,rain_mm\nBramley,120,31\nCox,95\nGala,143,35\n";
    workspace.write("harvest.csv", ragged);
    let mut client = start();
    client.initialize(json!({}), Some(&workspace.root_uri()));
    let csv = workspace.uri("harvest.csv");
    client.open(&csv, ragged, 1);
    let diagnostics = client.wait_for_publish(&csv, 1);
    assert!(!diagnostics.is_empty(), "no diagnostics for the ragged row");
    assert_eq!(diagnostics[0]["code"], "malformed-data");
    assert_eq!(
        diagnostics[0]["range"]["start"]["line"], 2,
        "{diagnostics:?}"
    );

    let hover = client.request_result(
        "textDocument/hover",
        json!({"textDocument": {"uri": csv}, "position": position_of(ragged, "crates")}),
    );
    let text = hover["contents"]["value"].as_str().unwrap_or_default();
    assert!(text.contains("**column `crates`**"), "{text}");
    assert!(
        text.contains("`bars.chart.json`") && text.contains("`points.chart.json`"),
        "{text}"
    );

    let symbols = client.request_result("workspace/symbol", json!({"query": "rain"}));
    let names: Vec<&str> = symbols
        .as_array()
        .into_iter()
        .flatten()
        .filter_map(|symbol| symbol["name"].as_str())
        .collect();
    assert!(
        names.contains(&"Rain and crates") && names.contains(&"rain_mm"),
        "{names:?}"
    );
    assert!(client.finish().success());
}

#[test]
fn a_client_that_pulls_gets_the_closed_specs_from_workspace_diagnostic() {
    let workspace = Workspace::new();
    workspace.write("harvest.csv", "variety,boxes,rain_mm\nBramley,120,31\n");
    let mut client = start();
    let result = client.initialize(
        json!({"textDocument": {"diagnostic": {"dynamicRegistration": false}}}),
        Some(&workspace.root_uri()),
    );
    assert_eq!(
        result["capabilities"]["diagnosticProvider"]["workspaceDiagnostics"],
        true
    );
    let report = client.request_result("workspace/diagnostic", json!({"previousResultIds": []}));
    let items = report["items"].as_array().cloned().unwrap_or_default();
    assert_eq!(items.len(), 2, "{report}");
    let points = items
        .iter()
        .find(|item| item["uri"] == workspace.uri("more/points.chart.json").as_str())
        .unwrap_or_else(|| panic!("no report for the points spec: {report}"));
    assert_eq!(points["kind"], "full");
    assert!(points["items"]
        .as_array()
        .into_iter()
        .flatten()
        .any(|d| d["code"] == "unknown-column"));
    // asked again with the ids it got: unchanged
    let previous: Vec<Value> = items
        .iter()
        .map(|item| json!({"uri": item["uri"], "value": item["resultId"]}))
        .collect();
    let again = client.request_result(
        "workspace/diagnostic",
        json!({"previousResultIds": previous}),
    );
    assert!(
        again["items"]
            .as_array()
            .into_iter()
            .flatten()
            .all(|item| item["kind"] == "unchanged"),
        "{again}"
    );
    client.settle(std::time::Duration::from_millis(200));
    assert!(client
        .take_queued("textDocument/publishDiagnostics")
        .is_empty());
    assert!(client.finish().success());
}
