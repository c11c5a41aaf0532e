//! The structural editor features of `markwell serve` over stdio (real binary): formatting
//! (whole and range; a half-typed document is left alone), folding ranges, selection ranges,
//! document links, semantic tokens, and pull diagnostics for a client that asks for them.
//! Positions are checked with the test client's own UTF-16 conversion (LSP 3.17 `Position`).

#[path = "support/lsp_client.rs"]
mod lsp_client;

use std::path::Path;

use lsp_client::{apply_lsp_edits, offset_of_utf16_position, utf16_position, LspClient};
use serde_json::{json, Value};

fn start() -> LspClient {
    LspClient::start(Path::new(env!("CARGO_BIN_EXE_markwell")), &[])
}

/// Invented orchard data.
const HARVEST_CSV: &str = "variety,crates,rain_mm\nBramley,120,31\nCox,95,28\nGala,143,35\n";

const SPEC: &str = "{\"$schema\":\"schema.json\",\"source\":{\"path\":\"harvest.csv\"},\n\"mark\":\"bar\",\"bind\":{\"x\":\"variety\",\n\"y\":{\"column\":\"crates\",\"summary\":\"sum\"}}}";

struct Workspace {
    directory: tempfile::TempDir,
}

impl Workspace {
    fn new() -> Workspace {
        let directory = match tempfile::tempdir() {
            Ok(directory) => directory,
            Err(error) => panic!("tempdir: {error}"),
        };
        let _ = std::fs::write(directory.path().join("harvest.csv"), HARVEST_CSV);
        let _ = std::fs::write(directory.path().join("schema.json"), "{}");
        Workspace { directory }
    }

    fn uri(&self, name: &str) -> String {
        format!("file://{}", self.directory.path().join(name).display())
    }

    fn root_uri(&self) -> String {
        format!("file://{}", self.directory.path().display())
    }
}

fn edits(result: &Value) -> Vec<Value> {
    result.as_array().cloned().unwrap_or_default()
}

#[test]
fn formatting_gives_the_cli_layout_and_leaves_half_typed_text_alone() {
    let workspace = Workspace::new();
    let uri = workspace.uri("orchard.chart.json");
    let mut client = start();
    client.initialize(json!({}), Some(&workspace.root_uri()));
    client.open(&uri, SPEC, 1);
    client.wait_for_publish(&uri, 1);
    let result = client.request_result(
        "textDocument/formatting",
        json!({"textDocument": {"uri": uri}, "options": {"tabSize": 2, "insertSpaces": true}}),
    );
    let formatted = apply_lsp_edits(SPEC, &edits(&result));
    let expected = markwell::syntax::format::format_text(SPEC, &Default::default());
    assert_eq!(Ok(formatted.clone()), expected);
    // the edits replace whitespace only
    for edit in edits(&result) {
        let start = offset_of_utf16_position(SPEC, &edit["range"]["start"]);
        let end = offset_of_utf16_position(SPEC, &edit["range"]["end"]);
        assert!(SPEC[start..end].chars().all(char::is_whitespace), "{edit}");
    }
    // range formatting of the `y` binding's line touches that line only
    let line = SPEC.find("\"y\"").unwrap_or(0);
    let range =
        json!({"start": utf16_position(SPEC, line), "end": utf16_position(SPEC, SPEC.len())});
    let ranged = client.request_result(
        "textDocument/rangeFormatting",
        json!({"textDocument": {"uri": uri}, "range": range, "options": {"tabSize": 2, "insertSpaces": true}}),
    );
    assert!(!edits(&ranged).is_empty());
    for edit in edits(&ranged) {
        assert!(offset_of_utf16_position(SPEC, &edit["range"]["start"]) >= line - 1);
    }
    // half-typed: no edits at all
    client.change_full(&uri, 2, "{\"mark\": \"ba");
    client.wait_for_publish(&uri, 2);
    let result = client.request_result(
        "textDocument/formatting",
        json!({"textDocument": {"uri": uri}, "options": {"tabSize": 2, "insertSpaces": true}}),
    );
    assert!(result.is_null() || edits(&result).is_empty(), "{result}");
    assert!(client.finish().success());
}

#[test]
fn folding_selection_links_and_semantic_tokens() {
    let workspace = Workspace::new();
    let uri = workspace.uri("orchard.chart.json");
    let text = markwell::syntax::format::format_text(SPEC, &Default::default()).unwrap_or_default();
    let mut client = start();
    client.initialize(json!({}), Some(&workspace.root_uri()));
    client.open(&uri, &text, 1);
    client.wait_for_publish(&uri, 1);

    let folds = client.request_result(
        "textDocument/foldingRange",
        json!({"textDocument": {"uri": uri}}),
    );
    let folds = folds.as_array().cloned().unwrap_or_default();
    let last_line = text.lines().count() as u64 - 1;
    assert!(
        folds
            .iter()
            .any(|f| f["startLine"] == 0 && f["endLine"] == last_line),
        "{folds:?}"
    );

    let crates = text.find("\"crates\"").unwrap_or(0) + 2;
    let selection = client.request_result(
        "textDocument/selectionRange",
        json!({"textDocument": {"uri": uri}, "positions": [utf16_position(&text, crates)]}),
    );
    let innermost = &selection[0];
    let start = offset_of_utf16_position(&text, &innermost["range"]["start"]);
    let end = offset_of_utf16_position(&text, &innermost["range"]["end"]);
    assert_eq!(&text[start..end], "\"crates\"");
    let parent = &innermost["parent"]["range"];
    let start = offset_of_utf16_position(&text, &parent["start"]);
    let end = offset_of_utf16_position(&text, &parent["end"]);
    assert_eq!(&text[start..end], "\"column\": \"crates\"");

    let links = client.request_result(
        "textDocument/documentLink",
        json!({"textDocument": {"uri": uri}}),
    );
    let targets: Vec<String> = links
        .as_array()
        .into_iter()
        .flatten()
        .map(|link| link["target"].as_str().unwrap_or_default().to_string())
        .collect();
    assert_eq!(targets.len(), 2, "{links}");
    assert!(
        targets[0].ends_with("/schema.json") && targets[1].ends_with("/harvest.csv"),
        "{targets:?}"
    );

    let tokens = client.request_result(
        "textDocument/semanticTokens/full",
        json!({"textDocument": {"uri": uri}}),
    );
    let data: Vec<u64> = tokens["data"]
        .as_array()
        .into_iter()
        .flatten()
        .filter_map(Value::as_u64)
        .collect();
    assert_eq!(data.len() % 5, 0);
    // decode LSP's relative encoding (line delta, start delta, length, type, modifiers)
    let lines: Vec<&str> = text.lines().collect();
    let (mut line, mut column) = (0usize, 0usize);
    let mut decoded = Vec::new();
    for chunk in data.chunks(5) {
        if chunk[0] > 0 {
            line += chunk[0] as usize;
            column = chunk[1] as usize;
        } else {
            column += chunk[1] as usize;
        }
        let units: Vec<u16> = lines[line].encode_utf16().collect();
        let word = String::from_utf16_lossy(&units[column..column + chunk[2] as usize]);
        decoded.push((word, chunk[3]));
    }
    let legend = client_legend(&workspace);
    let named: Vec<(String, String)> = decoded
        .into_iter()
        .map(|(word, kind)| (word, legend[kind as usize].clone()))
        .collect();
    assert_eq!(
        named,
        vec![
            ("\"bar\"".to_string(), "type".to_string()),
            ("\"x\"".to_string(), "property".to_string()),
            ("\"variety\"".to_string(), "variable".to_string()),
            ("\"y\"".to_string(), "property".to_string()),
            ("\"crates\"".to_string(), "variable".to_string()),
            ("\"sum\"".to_string(), "function".to_string()),
        ]
    );
    assert!(client.finish().success());
}

fn client_legend(workspace: &Workspace) -> Vec<String> {
    let mut client = start();
    let result = client.initialize(json!({}), Some(&workspace.root_uri()));
    let legend = result["capabilities"]["semanticTokensProvider"]["legend"]["tokenTypes"]
        .as_array()
        .into_iter()
        .flatten()
        .map(|name| name.as_str().unwrap_or_default().to_string())
        .collect();
    assert!(client.finish().success());
    legend
}

#[test]
fn a_client_that_pulls_diagnostics_gets_them_pulled_not_pushed() {
    let workspace = Workspace::new();
    let uri = workspace.uri("orchard.chart.json");
    let typo = SPEC.replace("\"crates\"", "\"crate\"");
    let mut client = start();
    let result = client.initialize(
        json!({"textDocument": {"diagnostic": {"dynamicRegistration": false}}}),
        Some(&workspace.root_uri()),
    );
    assert_eq!(
        result["capabilities"]["diagnosticProvider"]["identifier"],
        "markwell"
    );
    client.open(&uri, &typo, 1);
    let report = client.request_result(
        "textDocument/diagnostic",
        json!({"textDocument": {"uri": uri}}),
    );
    assert_eq!(report["kind"], "full");
    let codes: Vec<&str> = report["items"]
        .as_array()
        .into_iter()
        .flatten()
        .filter_map(|d| d["code"].as_str())
        .collect();
    assert!(codes.contains(&"unknown-column"), "{report}");
    let again = client.request_result(
        "textDocument/diagnostic",
        json!({"textDocument": {"uri": uri}, "previousResultId": report["resultId"]}),
    );
    assert_eq!(again["kind"], "unchanged");
    client.settle(std::time::Duration::from_millis(300));
    assert!(
        client
            .take_queued("textDocument/publishDiagnostics")
            .is_empty(),
        "pushed as well"
    );
    assert!(client.finish().success());
}
