//! End-to-end tests of `markwell serve`: the built binary driven over stdio by a small JSON-RPC
//! client (tests/support/lsp_client.rs). Every read has a timeout; every test ends with
//! shutdown + exit, checks exit code 0, and fails if the server left a message unread.
//!
//! Position values are checked against the LSP 3.17 definition of `Position`: a zero-based line
//! and a "character offset in a line", counted in UTF-16 code units unless another encoding was
//! negotiated; line endings are \n, \r\n and \r. The test client converts with its own code
//! (`str::encode_utf16`), not with the crate's `positions` module.

#[path = "support/lsp_client.rs"]
mod lsp_client;

use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use lsp_client::{apply_lsp_edits, utf16_position, LspClient};
use serde_json::{json, Value};

fn binary() -> &'static Path {
    Path::new(env!("CARGO_BIN_EXE_markwell"))
}

fn start() -> LspClient {
    LspClient::start(binary(), &[])
}

fn file_uri(path: &Path) -> String {
    format!("file://{}", path.display())
}

/// A spec with one unknown key (`colur` in `style`), which has a rename fix.
const FERRY_SPEC_WITH_TYPO: &str = r##"{
  "title": "Departure delays against passengers",
  "source": { "path": "crossings.csv" },
  "purpose": "relationship",
  "mark": "point",
  "bind": {
    "x": "passengers",
    "y": { "column": "delay_min" }
  },
  "style": { "colur": "#1b6ca8", "opacity": 0.8 }
}
"##;

/// Invented data for the ferry specs.
const FERRY_CSV: &str = "month,route,passengers,delay_min\n\
2026-01,Harbour Loop,3032,1.9\n\
2026-01,North Pier,1732,5.3\n\
2026-02,Harbour Loop,2980,2.4\n\
2026-02,North Pier,1655,4.1\n";

/// A workspace folder with the ferry data and the spec on disk.
struct Workspace {
    directory: tempfile::TempDir,
}

impl Workspace {
    fn new() -> Workspace {
        let directory = tempfile::tempdir().expect("temporary folder");
        std::fs::write(directory.path().join("crossings.csv"), FERRY_CSV).expect("write data");
        Workspace { directory }
    }

    fn path(&self, name: &str) -> PathBuf {
        self.directory.path().join(name)
    }

    fn uri(&self, name: &str) -> String {
        file_uri(&self.path(name))
    }

    fn root_uri(&self) -> String {
        file_uri(self.directory.path())
    }
}

fn codes(diagnostics: &[Value]) -> Vec<String> {
    diagnostics
        .iter()
        .map(|d| d["code"].as_str().unwrap_or_default().to_string())
        .collect()
}

fn find_code<'d>(diagnostics: &'d [Value], code: &str) -> &'d Value {
    diagnostics
        .iter()
        .find(|d| d["code"] == code)
        .unwrap_or_else(|| panic!("no `{code}` diagnostic in {diagnostics:#?}"))
}

fn range_of(text: &str, needle: &str) -> Value {
    let start = text
        .find(needle)
        .unwrap_or_else(|| panic!("`{needle}` not in the text"));
    json!({"start": utf16_position(text, start), "end": utf16_position(text, start + needle.len())})
}

#[test]
fn initialize_negotiates_the_position_encoding_and_advertises_what_is_implemented() {
    // LSP 3.17 general.positionEncodings: without it the client means UTF-16
    let mut client = start();
    let result = client.initialize(json!({}), None);
    let capabilities = &result["capabilities"];
    assert_eq!(capabilities["positionEncoding"], "utf-16");
    assert_eq!(
        capabilities["textDocumentSync"]["change"], 2,
        "incremental sync"
    );
    for provider in [
        "hoverProvider",
        "completionProvider",
        "codeActionProvider",
        "documentSymbolProvider",
        "colorProvider",
        "inlayHintProvider",
        "definitionProvider",
        "documentFormattingProvider",
        "documentRangeFormattingProvider",
        "foldingRangeProvider",
        "selectionRangeProvider",
        "documentLinkProvider",
        "semanticTokensProvider",
        "referencesProvider",
        "renameProvider",
        "workspaceSymbolProvider",
        "executeCommandProvider",
    ] {
        assert!(!capabilities[provider].is_null(), "{provider} advertised");
    }
    // not implemented, so not advertised
    // pull diagnostics only for a client that declared textDocument.diagnostic
    assert!(
        capabilities["diagnosticProvider"].is_null(),
        "diagnosticProvider must not be advertised"
    );
    assert_eq!(result["serverInfo"]["name"], "markwell");
    assert!(client.finish().success());

    let mut client = start();
    let result = client.initialize(
        json!({"general": {"positionEncodings": ["utf-32", "utf-8", "utf-16"]}}),
        None,
    );
    assert_eq!(result["capabilities"]["positionEncoding"], "utf-8");
    assert!(client.finish().success());
}

#[test]
fn diagnostics_carry_rule_code_source_version_and_fixes() {
    let workspace = Workspace::new();
    let uri = workspace.uri("delays.chart.json");
    let mut client = start();
    client.initialize(json!({}), Some(&workspace.root_uri()));
    client.open(&uri, FERRY_SPEC_WITH_TYPO, 7);
    let diagnostics = client.wait_for_publish(&uri, 7);
    let unknown = find_code(&diagnostics, "unknown-key");
    assert_eq!(unknown["source"], "markwell");
    assert_eq!(unknown["severity"], 1);
    assert_eq!(
        unknown["range"],
        range_of(FERRY_SPEC_WITH_TYPO, "\"colur\"")
    );
    let fix = &unknown["data"]["fixes"][0];
    assert_eq!(fix["kind"], "quickfix");
    assert_eq!(
        apply_lsp_edits(
            FERRY_SPEC_WITH_TYPO,
            fix["edits"].as_array().expect("edits")
        ),
        FERRY_SPEC_WITH_TYPO.replace("\"colur\"", "\"colour\"")
    );
    assert!(client.finish().success());
}

#[test]
fn utf16_and_utf8_ranges_after_an_astral_character() {
    // an apple emoji (U+1F34E) is 2 UTF-16 code units and 4 UTF-8 bytes
    let text = "{ \"title\": \"\u{1F34E}\", \"colour\": 1 }";
    let key = text.find("\"colour\"").expect("key");
    for (capabilities, expected_start) in [
        (json!({}), lsp_client::utf16_len(&text[..key])),
        (json!({"general": {"positionEncodings": ["utf-8"]}}), key),
    ] {
        let mut client = start();
        client.initialize(capabilities, None);
        client.open("untitled:apples.chart.json", text, 1);
        let diagnostics = client.wait_for_publish("untitled:apples.chart.json", 1);
        let unknown = find_code(&diagnostics, "unknown-key");
        assert_eq!(unknown["range"]["start"]["character"], expected_start);
        assert_eq!(
            unknown["range"]["end"]["character"],
            expected_start + "\"colour\"".len()
        );
        assert!(client.finish().success());
    }
    // the two encodings really differ here: 12 UTF-16 units vs 14 bytes before the key
    assert_eq!(lsp_client::utf16_len(&text[..key]) + 2, key);
}

#[test]
fn code_action_round_trip_removes_the_diagnostic() {
    let workspace = Workspace::new();
    let uri = workspace.uri("delays.chart.json");
    let mut client = start();
    client.initialize(json!({}), Some(&workspace.root_uri()));
    client.open(&uri, FERRY_SPEC_WITH_TYPO, 1);
    let diagnostics = client.wait_for_publish(&uri, 1);
    let unknown = find_code(&diagnostics, "unknown-key").clone();
    let actions = client.request_result(
        "textDocument/codeAction",
        json!({"textDocument": {"uri": uri}, "range": unknown["range"],
               "context": {"diagnostics": [unknown]}}),
    );
    let actions = actions.as_array().expect("an array of code actions");
    let fix = actions
        .iter()
        .find(|action| action["kind"] == "quickfix")
        .unwrap_or_else(|| panic!("no quickfix in {actions:#?}"));
    assert_eq!(fix["diagnostics"][0]["code"], "unknown-key");
    let edits = fix["edit"]["changes"][&uri]
        .as_array()
        .expect("edits for the document");
    // apply through incremental changes, as an editor does
    let mut text = FERRY_SPEC_WITH_TYPO.to_string();
    for edit in edits {
        client.change_range(
            &uri,
            2,
            edit["range"].clone(),
            edit["newText"].as_str().unwrap_or(""),
        );
        text = apply_lsp_edits(&text, std::slice::from_ref(edit));
    }
    assert!(text.contains("\"colour\": \"#1b6ca8\""));
    let after = client.wait_for_publish(&uri, 2);
    assert!(
        !codes(&after).contains(&"unknown-key".to_string()),
        "the fix removed the finding: {after:#?}"
    );
    // only quickfix actions when asked for them, none for a range without findings
    let none = client.request_result(
        "textDocument/codeAction",
        json!({"textDocument": {"uri": uri}, "range": range_of(&text, "\"purpose\""),
               "context": {"diagnostics": [], "only": ["quickfix"]}}),
    );
    assert_eq!(none, json!([]));
    assert!(client.finish().success());
}

#[test]
fn hover_explains_a_diagnostic_and_symbols_outline_the_spec() {
    let workspace = Workspace::new();
    let uri = workspace.uri("delays.chart.json");
    let mut client = start();
    client.initialize(json!({}), Some(&workspace.root_uri()));
    client.open(&uri, FERRY_SPEC_WITH_TYPO, 1);
    client.wait_for_publish(&uri, 1);
    let key = range_of(FERRY_SPEC_WITH_TYPO, "\"colur\"");
    let hover = client.request_result(
        "textDocument/hover",
        json!({"textDocument": {"uri": uri}, "position": key["start"]}),
    );
    assert_eq!(hover["contents"]["kind"], "markdown");
    let markdown = hover["contents"]["value"].as_str().expect("markdown text");
    assert!(markdown.contains("unknown-key"), "{markdown}");
    assert_eq!(hover["range"], key);

    let symbols = client.request_result(
        "textDocument/documentSymbol",
        json!({"textDocument": {"uri": uri}}),
    );
    let symbols = symbols.as_array().expect("document symbols");
    let chart = symbols
        .iter()
        .find(|symbol| symbol["detail"] == "point")
        .unwrap_or_else(|| panic!("a layer symbol for the point mark: {symbols:#?}"));
    let channels: Vec<&str> = chart["children"]
        .as_array()
        .expect("bindings")
        .iter()
        .filter_map(|child| child["name"].as_str())
        .collect();
    assert_eq!(channels, ["x", "y"]);
    assert_eq!(chart["children"][0]["detail"], "passengers");

    let colours = client.request_result(
        "textDocument/documentColor",
        json!({"textDocument": {"uri": uri}}),
    );
    // `style.colur` is an unknown key, so the model has no style colour: no swatch
    assert_eq!(colours, json!([]));
    assert!(client.finish().success());
}

#[test]
fn completion_offers_marks_keys_and_palette_colours_show() {
    let text = "{\n  \"mark\": \"po\",\n  \"frame\": { \"background\": \"#fafaf5\" },\n  \"bind\": {  }\n}\n";
    let uri = "untitled:complete.chart.json";
    let mut client = start();
    client.initialize(json!({}), None);
    client.open(uri, text, 1);
    client.wait_for_publish(uri, 1);
    let inside_mark = text.find("\"po\"").expect("mark value") + 3;
    let items = client.request_result(
        "textDocument/completion",
        json!({"textDocument": {"uri": uri}, "position": utf16_position(text, inside_mark)}),
    );
    let labels: Vec<&str> = items
        .as_array()
        .expect("a completion list")
        .iter()
        .filter_map(|item| item["label"].as_str())
        .collect();
    for mark in ["point", "line", "bar", "area"] {
        assert!(labels.contains(&mark), "{mark} offered: {labels:?}");
    }
    let inside_bind = text.find("{  }").expect("bind object") + 2;
    let items = client.request_result(
        "textDocument/completion",
        json!({"textDocument": {"uri": uri}, "position": utf16_position(text, inside_bind)}),
    );
    let labels: Vec<&str> = items
        .as_array()
        .expect("a completion list")
        .iter()
        .filter_map(|item| item["label"].as_str())
        .collect();
    for channel in ["x", "y", "hue", "shape"] {
        assert!(labels.contains(&channel), "{channel} offered: {labels:?}");
    }
    let colours = client.request_result(
        "textDocument/documentColor",
        json!({"textDocument": {"uri": uri}}),
    );
    // #fafaf5 = (250, 250, 245) / 255
    let colour = &colours[0]["color"];
    assert!((colour["red"].as_f64().unwrap_or(0.0) - 250.0 / 255.0).abs() < 1e-6);
    assert!((colour["blue"].as_f64().unwrap_or(0.0) - 245.0 / 255.0).abs() < 1e-6);
    assert_eq!(colours[0]["range"], range_of(text, "#fafaf5"));
    assert!(client.finish().success());
}

#[test]
fn malformed_messages_are_answered_and_the_server_lives_on() {
    let mut client = start();
    client.initialize(json!({}), None);
    // JSON-RPC 2.0 section 5.1: "Parse error ... -32700", the response id is null
    let broken = b"{\"jsonrpc\": \"2.0\", \"id\": 5, \"method\": ";
    let mut frame = format!("Content-Length: {}\r\n\r\n", broken.len()).into_bytes();
    frame.extend_from_slice(broken);
    client.send_raw(&frame);
    let parse_error = client.wait_for("a parse error response", |m| m.get("error").is_some());
    assert_eq!(parse_error["error"]["code"], -32700);
    assert_eq!(parse_error["id"], Value::Null);
    // a header without a usable length: answered with a parse error (id null), the input is
    // skipped to the next header, and the request after it is answered normally
    client.send_raw(b"Content-Length: lots\r\n\r\n{}");
    let header_error = client.wait_for("a header error response", |m| m.get("error").is_some());
    assert_eq!(header_error["error"]["code"], -32700);
    assert_eq!(header_error["id"], Value::Null);
    let after_bad_header = client.request(
        "textDocument/hover",
        json!({"textDocument": {"uri": "untitled:none"}, "position": {"line": 0, "character": 0}}),
    );
    assert_eq!(
        after_bad_header["result"],
        Value::Null,
        "{after_bad_header}"
    );
    // a body shorter than its Content-Length would swallow the next message: not tested, as
    // no reader can tell where such a frame ends
    // JSON that is not a JSON-RPC message: "Invalid Request ... -32600" (JSON-RPC 2.0, 5.1)
    client.send_raw(b"Content-Length: 23\r\n\r\n{\"id\": 12, \"method\": 7}");
    let invalid = client.wait_for("an invalid request response", |m| m["id"] == 12);
    assert_eq!(invalid["error"]["code"], -32600);
    // a request that is valid JSON but has the wrong params shape: invalid params (-32602)
    let response = client.request("textDocument/hover", json!({"textDocument": 5}));
    assert_eq!(response["error"]["code"], -32602);
    // still serving
    let hover = client.request(
        "textDocument/hover",
        json!({"textDocument": {"uri": "untitled:none"}, "position": {"line": 0, "character": 0}}),
    );
    assert_eq!(hover["result"], Value::Null);
    assert!(client.finish().success());
}

#[test]
fn unknown_methods_get_method_not_found_and_unknown_notifications_nothing() {
    let mut client = start();
    client.initialize(json!({}), None);
    let response = client.request("markwell/noSuchRequest", json!({}));
    // JSON-RPC 2.0 section 5.1: "Method not found ... -32601"
    assert_eq!(response["error"]["code"], -32601);
    client.notify("markwell/noSuchNotification", json!({}));
    client.notify("$/cancelRequest", json!({"id": 999}));
    client.settle(Duration::from_millis(100));
    assert!(client.finish().success());
}

#[test]
fn out_of_range_positions_clamp() {
    let text = "{\r\n  \"mark\": \"bar\"\r\n}";
    let uri = "untitled:clamp.chart.json";
    let mut client = start();
    client.initialize(json!({}), None);
    client.open(uri, text, 1);
    client.wait_for_publish(uri, 1);
    for position in [
        json!({"line": 99, "character": 0}),
        json!({"line": 1, "character": 4000}),
    ] {
        for method in [
            "textDocument/hover",
            "textDocument/completion",
            "textDocument/definition",
        ] {
            let response = client.request(
                method,
                json!({"textDocument": {"uri": uri}, "position": position}),
            );
            assert!(
                response.get("error").is_none(),
                "{method} at {position}: {response}"
            );
        }
    }
    // an edit past the end of the document clamps to the end: an append that breaks the JSON
    client.change_range(
        uri,
        2,
        json!({"start": {"line": 40, "character": 3}, "end": {"line": 90, "character": 0}}),
        ",",
    );
    let diagnostics = client.wait_for_publish(uri, 2);
    let syntax = find_code(&diagnostics, "syntax-error");
    // the comma landed after the closing brace on line 2 (lines split at CRLF)
    assert_eq!(syntax["range"]["start"]["line"], 2);
    assert!(client.finish().success());
}

#[test]
fn panic_inside_a_handler_becomes_an_error_response() {
    let mut client = LspClient::start(binary(), &[("MARKWELL_LSP_TEST_HOOKS", "1")]);
    client.initialize(json!({}), None);
    let response = client.request("markwell/testPanic", json!({}));
    // JSON-RPC 2.0 section 5.1: "Internal error ... -32603"
    assert_eq!(response["error"]["code"], -32603);
    client.open("untitled:after.chart.json", "{\"mark\": \"bar\",}", 1);
    let diagnostics = client.wait_for_publish("untitled:after.chart.json", 1);
    assert!(codes(&diagnostics).contains(&"syntax-error".to_string()));
    assert!(client
        .stderr_text()
        .contains("panic while handling markwell/testPanic"));
    assert!(client.finish().success());
}

#[test]
fn exit_without_shutdown_ends_with_code_1() {
    // LSP 3.17 `exit`: "The server should exit with success code 0 if the shutdown request has
    // been received before; otherwise with error code 1"
    let mut client = start();
    client.initialize(json!({}), None);
    client.notify("exit", Value::Null);
    let status = client.wait_exit();
    assert_eq!(status.code(), Some(1));
}

#[test]
fn thousand_rapid_edits_end_in_the_right_diagnostics() {
    let workspace = Workspace::new();
    let uri = workspace.uri("typing.chart.json");
    let mut client = start();
    client.initialize(json!({}), Some(&workspace.root_uri()));
    client.open(&uri, FERRY_SPEC_WITH_TYPO, 1);
    client.wait_for_publish(&uri, 1);
    // type 999 characters into the title, one incremental change per keystroke, without waiting
    let mut text = FERRY_SPEC_WITH_TYPO.to_string();
    let title_end = text.find(" passengers\"").expect("title") + " passengers".len();
    let typed = "é🍏x";
    for keystroke in 0..999 {
        let character = typed.chars().nth(keystroke % 3).unwrap_or('x');
        let offset = title_end + typed_len(&text, title_end, keystroke);
        let position = utf16_position(&text, offset);
        client.change_range(
            &uri,
            2 + keystroke as i64,
            json!({"start": position, "end": position}),
            &character.to_string(),
        );
        text.insert(offset, character);
    }
    // the 1,000th edit fixes the unknown key
    let key = range_of(&text, "\"colur\"");
    client.change_range(&uri, 1001, key, "\"colour\"");
    text = text.replacen("\"colur\"", "\"colour\"", 1);
    let finals = client.wait_for_publish(&uri, 1001);
    assert!(
        !codes(&finals).contains(&"unknown-key".to_string()),
        "{finals:#?}"
    );
    // earlier publishes (if any) had lower versions and came in order
    let earlier = client.take_queued("textDocument/publishDiagnostics");
    let versions: Vec<i64> = earlier
        .iter()
        .filter_map(|m| m["params"]["version"].as_i64())
        .collect();
    assert!(
        versions.windows(2).all(|pair| pair[0] < pair[1]),
        "{versions:?}"
    );
    assert!(versions.iter().all(|&version| version < 1001));
    // the server's text is the client's: the outline shows the typed title exactly
    let symbols = client.request_result(
        "textDocument/documentSymbol",
        json!({"textDocument": {"uri": uri}}),
    );
    let title = symbols
        .as_array()
        .and_then(|symbols| symbols.iter().find(|s| s["name"] == "title"))
        .expect("title symbol");
    let expected_title = {
        let start = text.find("\"Departure").expect("title start") + 1;
        let end = text[start..].find('"').expect("title end") + start;
        text[start..end].to_string()
    };
    assert_eq!(title["detail"], expected_title);
    assert_eq!(
        expected_title.chars().count(),
        "Departure delays against passengers".len() + 999
    );
    assert!(client.finish().success());
}

/// Bytes typed so far after the title (the typed characters cycle through `é🍏x`).
fn typed_len(_text: &str, _title_end: usize, keystrokes: usize) -> usize {
    let cycle = ["é", "🍏", "x"];
    (0..keystrokes).map(|index| cycle[index % 3].len()).sum()
}

#[test]
fn ten_megabyte_document_opens_edits_and_answers() {
    // inline rows, about 10 MB of JSON
    let mut text =
        String::from("{\n  \"title\": \"Loaves baked per oven\",\n  \"source\": { \"rows\": [\n");
    let mut row = 0;
    while text.len() < 10 * 1024 * 1024 {
        text.push_str(&format!(
            "    {{\"oven\": \"oven-{}\", \"loaves\": {}, \"crust\": \"{}\"}},\n",
            row % 7,
            (row * 37) % 500,
            ["pale", "golden", "dark"][row % 3]
        ));
        row += 1;
    }
    text.push_str("    {\"oven\": \"oven-0\", \"loaves\": 1, \"crust\": \"pale\"}\n  ] },\n  \"mark\": \"bar\",\n  \"bind\": { \"x\": \"oven\", \"y\": \"loaves\" }\n}\n");
    let uri = "untitled:ovens.chart.json";
    let mut client = start();
    client.timeout = Duration::from_secs(120);
    client.initialize(json!({}), None);
    let opened = Instant::now();
    client.open(uri, &text, 1);
    let diagnostics = client.wait_for_publish(uri, 1);
    let open_time = opened.elapsed();
    assert!(
        !codes(&diagnostics).contains(&"syntax-error".to_string()),
        "{diagnostics:?}"
    );
    // break the JSON at the very end with an incremental edit
    let end = utf16_position(&text, text.len());
    client.change_range(uri, 2, json!({"start": end, "end": end}), "}");
    let diagnostics = client.wait_for_publish(uri, 2);
    let syntax = find_code(&diagnostics, "syntax-error");
    assert_eq!(syntax["range"]["start"], end);
    let hover = client.request(
        "textDocument/hover",
        json!({"textDocument": {"uri": uri}, "position": {"line": 1, "character": 5}}),
    );
    assert!(hover.get("error").is_none());
    eprintln!("10 MB document: first diagnostics after {open_time:?}");
    assert!(client.finish().success());
}

#[test]
fn watched_data_file_changes_republish_the_specs_that_read_them() {
    let workspace = Workspace::new();
    let uri = workspace.uri("late.chart.json");
    let text = "{\n  \"source\": { \"path\": \"arrivals.csv\" },\n  \"mark\": \"bar\",\n  \"bind\": { \"x\": \"route\", \"y\": \"passengers\" }\n}\n";
    let mut client = start();
    let capabilities =
        json!({"workspace": {"didChangeWatchedFiles": {"dynamicRegistration": true}}});
    client.initialize(capabilities, Some(&workspace.root_uri()));
    client.open(&uri, text, 1);
    let before = client.wait_for_publish(&uri, 1);
    assert!(
        codes(&before).contains(&"missing-source".to_string()),
        "{before:#?}"
    );
    let registration = client
        .server_requests
        .iter()
        .find(|request| request["method"] == "client/registerCapability")
        .unwrap_or_else(|| panic!("file watchers registered: {:?}", client.server_requests))
        .clone();
    assert_eq!(
        registration["params"]["registrations"][0]["method"],
        "workspace/didChangeWatchedFiles"
    );
    // the file appears: created event → the spec is analysed again and republished
    let data_path = workspace.path("arrivals.csv");
    std::fs::write(&data_path, FERRY_CSV).expect("write data");
    client.notify(
        "workspace/didChangeWatchedFiles",
        json!({"changes": [{"uri": file_uri(&data_path), "type": 1}]}),
    );
    let after = client.wait_for_publish(&uri, 1);
    assert_ne!(before, after, "the diagnostics changed with the data file");
    assert!(client.finish().success());
}

#[test]
fn editor_configuration_changes_rule_severities() {
    let workspace = Workspace::new();
    let uri = workspace.uri("quiet.chart.json");
    let mut client = start();
    client.configuration_response = json!({"rules": {"unknown-key": "off"}});
    client.initialize(
        json!({"workspace": {"configuration": true}}),
        Some(&workspace.root_uri()),
    );
    // wait until the server asked for the configuration before opening
    let asked = Instant::now();
    while !client
        .server_requests
        .iter()
        .any(|request| request["method"] == "workspace/configuration")
    {
        assert!(
            asked.elapsed() < Duration::from_secs(10),
            "configuration requested"
        );
        client.settle(Duration::from_millis(20));
    }
    client.open(&uri, FERRY_SPEC_WITH_TYPO, 1);
    let diagnostics = client.wait_for_publish(&uri, 1);
    assert!(
        !codes(&diagnostics).contains(&"unknown-key".to_string()),
        "{diagnostics:#?}"
    );
    // a pushed change of settings (clients without workspace/configuration) turns it back on
    // here the server pulls again, and gets severity `warning`
    client.configuration_response = json!({"rules": {"unknown-key": "warning"}});
    client.notify("workspace/didChangeConfiguration", json!({"settings": {}}));
    let message = client.wait_for("republished diagnostics", |m| {
        m["method"] == "textDocument/publishDiagnostics" && m["params"]["uri"] == uri
    });
    let diagnostics = message["params"]["diagnostics"]
        .as_array()
        .cloned()
        .unwrap_or_default();
    assert_eq!(find_code(&diagnostics, "unknown-key")["severity"], 2);
    assert!(client.finish().success());
}

#[test]
fn shutdown_and_exit_with_null_params_are_accepted() {
    // LSP 3.17: `shutdown` and `exit` have void params; some clients send `"params": null`
    let mut client = start();
    client.initialize(json!({}), None);
    client.send(&json!({"jsonrpc": "2.0", "id": 77, "method": "shutdown", "params": null}));
    let response = client.wait_for("shutdown response", |m| m["id"] == 77);
    assert!(response.get("error").is_none(), "{response}");
    client.send(&json!({"jsonrpc": "2.0", "method": "exit", "params": null}));
    assert_eq!(client.wait_exit().code(), Some(0));
}

#[test]
fn markwell_toml_at_the_workspace_root_sets_rule_severities() {
    let workspace = Workspace::new();
    std::fs::write(
        workspace.path("markwell.toml"),
        "[rules]\nunknown-key = \"hint\"\n",
    )
    .expect("write markwell.toml");
    let uri = workspace.uri("delays.chart.json");
    let mut client = start();
    client.initialize(json!({}), Some(&workspace.root_uri()));
    client.open(&uri, FERRY_SPEC_WITH_TYPO, 1);
    let diagnostics = client.wait_for_publish(&uri, 1);
    // LSP DiagnosticSeverity: 4 = Hint
    assert_eq!(find_code(&diagnostics, "unknown-key")["severity"], 4);
    assert!(client.finish().success());
}

#[test]
fn an_evaluation_past_its_time_budget_is_a_warning_in_the_editor() {
    let workspace = Workspace::new();
    // one nanosecond: spent before the first row is read
    std::fs::write(
        workspace.path("markwell.toml"),
        "[data]\nevaluate-seconds = 0.000000001\n",
    )
    .expect("write markwell.toml");
    let uri = workspace.uri("crossings.chart.json");
    let text = "{\n  \"source\": { \"path\": \"crossings.csv\" },\n  \"mark\": \"bar\",\n  \"bind\": { \"x\": \"route\", \"y\": { \"column\": \"passengers\", \"summary\": \"sum\" } }\n}\n";
    let mut client = start();
    client.initialize(json!({}), Some(&workspace.root_uri()));
    client.open(&uri, text, 1);
    let published = client.wait_for("the evaluation-timed-out warning", |m| {
        m["method"] == "textDocument/publishDiagnostics"
            && m["params"]["uri"] == uri.as_str()
            && m["params"]["diagnostics"]
                .as_array()
                .is_some_and(|d| codes(d).contains(&"evaluation-timed-out".to_string()))
    });
    let diagnostics = published["params"]["diagnostics"]
        .as_array()
        .cloned()
        .unwrap_or_default();
    let warning = find_code(&diagnostics, "evaluation-timed-out");
    // LSP DiagnosticSeverity: 2 = Warning
    assert_eq!(warning["severity"], 2);
    assert_eq!(warning["range"], range_of(text, "\"bar\""));
    assert!(client.finish().success());
}

#[test]
fn hover_on_a_channel_key_shows_the_perceived_channel_and_rankings() {
    let text = r#"{
  "columns": { "loaves": { "kind": "quantitative" } },
  "mark": "bar",
  "bind": { "x": "branch", "y": "loaves" }
}
"#;
    let uri = "untitled:bakery.chart.json";
    let mut client = start();
    client.initialize(json!({}), None);
    client.open(uri, text, 1);
    client.wait_for_publish(uri, 1);
    let key = range_of(text, "\"y\"");
    let hover = client.request_result(
        "textDocument/hover",
        json!({"textDocument": {"uri": uri}, "position": key["start"]}),
    );
    let markdown = hover["contents"]["value"].as_str().expect("markdown");
    assert!(markdown.contains("read as **length**"), "{markdown}");
    assert!(markdown.contains("Cleveland & McGill (1984)"), "{markdown}");
    assert_eq!(hover["range"], key);
    assert!(client.finish().success());
}

#[test]
fn close_clears_and_reopen_with_the_same_version_is_analysed_afresh() {
    let uri = "untitled:reopen.chart.json";
    let mut client = start();
    client.initialize(json!({}), None);
    client.open(uri, FERRY_SPEC_WITH_TYPO, 1);
    assert!(codes(&client.wait_for_publish(uri, 1)).contains(&"unknown-key".to_string()));
    client.notify(
        "textDocument/didClose",
        json!({"textDocument": {"uri": uri}}),
    );
    // closing clears what the editor shows (a publish without version, no diagnostics)
    let cleared = client.wait_for("diagnostics cleared on close", |m| {
        m["method"] == "textDocument/publishDiagnostics" && m["params"]["uri"] == uri
    });
    assert_eq!(cleared["params"]["diagnostics"], json!([]));
    // a client may reuse version numbers after a reopen: the new text is what counts
    let fixed = FERRY_SPEC_WITH_TYPO.replace("\"colur\"", "\"colour\"");
    client.open(uri, &fixed, 1);
    assert!(!codes(&client.wait_for_publish(uri, 1)).contains(&"unknown-key".to_string()));
    // versions going backwards are still applied in order
    client.change_full(uri, 0, FERRY_SPEC_WITH_TYPO);
    assert!(codes(&client.wait_for_publish(uri, 0)).contains(&"unknown-key".to_string()));
    assert!(client.finish().success());
}

#[test]
fn large_data_gets_a_sampled_profile_first_then_the_full_one_with_progress() {
    let workspace = Workspace::new();
    // about 24 MB of invented ferry counts: far more than the sampled head the data layer reads
    let mut csv = String::from("month,route,passengers\n");
    let routes = ["Harbour Loop", "North Pier", "Lighthouse Run"];
    let mut rows = 0u64;
    while csv.len() < 24 * 1024 * 1024 {
        csv.push_str(&format!(
            "2026-{:02},{},{}\n",
            rows % 12 + 1,
            routes[(rows % 3) as usize],
            1000 + rows % 997
        ));
        rows += 1;
    }
    std::fs::write(workspace.path("crossings-big.csv"), &csv).expect("write data");
    let text = "{\n  \"source\": { \"path\": \"crossings-big.csv\" },\n  \"mark\": \"bar\",\n  \"bind\": { \"x\": \"route\", \"y\": \"passengers\" }\n}\n";
    let uri = workspace.uri("big.chart.json");
    let mut client = start();
    client.timeout = Duration::from_secs(120);
    client.initialize(
        json!({"window": {"workDoneProgress": true},
               "workspace": {"inlayHint": {"refreshSupport": true}}}),
        Some(&workspace.root_uri()),
    );
    let opened = Instant::now();
    client.open(&uri, text, 1);
    client.wait_for_publish(&uri, 1);
    let first_diagnostics = opened.elapsed();
    // poll the hover of `passengers` until it shows every row (the full profile)
    let column = range_of(text, "\"passengers\"");
    let full_rows = format!("rows: {rows},");
    let mut first_hover = None;
    let full_profile_after = loop {
        let hover = client.request_result(
            "textDocument/hover",
            json!({"textDocument": {"uri": uri}, "position": column["start"]}),
        );
        let markdown = hover["contents"]["value"]
            .as_str()
            .unwrap_or_default()
            .to_string();
        first_hover.get_or_insert_with(|| markdown.clone());
        if markdown.contains(&full_rows) {
            break opened.elapsed();
        }
        assert!(
            opened.elapsed() < Duration::from_secs(100),
            "no full profile: {markdown}"
        );
        std::thread::sleep(Duration::from_millis(100));
    };
    // the first diagnostics did not wait for the full scan
    assert!(
        first_diagnostics < full_profile_after,
        "{first_diagnostics:?} {full_profile_after:?}"
    );
    assert!(
        !first_hover.unwrap_or_default().contains(&full_rows),
        "the first profile was a sample"
    );
    // LSP 3.17 work done progress: create (server → client request), then begin / report* / end
    // the value ranges of inlay hints changed with the full profile: the client is asked to
    // fetch them again (LSP 3.17 workspace/inlayHint/refresh); the hover may have seen the full
    // profile before the analysis loop did, so wait for the request (bounded) rather than a
    // fixed pause that a loaded machine can outrun
    let waiting = Instant::now();
    while waiting.elapsed() < Duration::from_secs(30)
        && !client
            .server_requests
            .iter()
            .any(|request| request["method"] == "workspace/inlayHint/refresh")
    {
        client.settle(Duration::from_millis(50));
    }
    client.settle(Duration::from_millis(300));
    assert!(
        client
            .server_requests
            .iter()
            .any(|request| request["method"] == "workspace/inlayHint/refresh"),
        "inlay hints refreshed: {:?}",
        client.server_requests
    );
    let progress = client.take_queued("$/progress");
    let created = client
        .server_requests
        .iter()
        .filter(|request| request["method"] == "window/workDoneProgress/create")
        .count();
    if full_profile_after - first_diagnostics > Duration::from_millis(1500) {
        // a scan this long crossed the 0.5 s threshold
        assert!(created >= 1, "a progress token was created");
    }
    if created > 0 {
        let kinds: Vec<&str> = progress
            .iter()
            .filter_map(|message| message["params"]["value"]["kind"].as_str())
            .collect();
        assert_eq!(kinds.first(), Some(&"begin"), "{kinds:?}");
        assert_eq!(kinds.last(), Some(&"end"), "{kinds:?}");
        // per token: a slow first analysis may show its own progress beside the full scan's
        let mut tokens: Vec<Value> = progress
            .iter()
            .map(|message| message["params"]["token"].clone())
            .collect();
        tokens.dedup();
        for token in tokens {
            let percentages: Vec<u64> = progress
                .iter()
                .filter(|message| message["params"]["token"] == token)
                .filter_map(|message| message["params"]["value"]["percentage"].as_u64())
                .collect();
            assert!(
                percentages.windows(2).all(|pair| pair[0] <= pair[1]),
                "{percentages:?}"
            );
            assert!(percentages.iter().all(|&percentage| percentage <= 100));
        }
    }
    eprintln!(
        "first diagnostics {first_diagnostics:?}, full profile {full_profile_after:?}, progress messages {}",
        progress.len()
    );
    let _ = client.take_queued("textDocument/publishDiagnostics");
    assert!(client.finish().success());
}

#[test]
fn definition_inlay_hints_and_column_completion_use_the_data_profile() {
    let workspace = Workspace::new();
    let uri = workspace.uri("delays.chart.json");
    let text = FERRY_SPEC_WITH_TYPO;
    let mut client = start();
    client.initialize(json!({}), Some(&workspace.root_uri()));
    client.open(&uri, text, 1);
    let diagnostics = client.wait_for_publish(&uri, 1);
    assert!(
        !codes(&diagnostics).contains(&"missing-source".to_string()),
        "{diagnostics:#?}"
    );

    // go to definition: the header cell of `passengers` in crossings.csv (line 0, bytes 12..22
    // of "month,route,passengers,delay_min")
    let column = range_of(text, "\"passengers\"");
    let location = client.request_result(
        "textDocument/definition",
        json!({"textDocument": {"uri": uri}, "position": column["start"]}),
    );
    assert_eq!(location["uri"], workspace.uri("crossings.csv"));
    assert_eq!(
        location["range"],
        json!({"start": {"line": 0, "character": 12}, "end": {"line": 0, "character": 22}})
    );

    // inlay hints: after each column reference, its kind and value range from the data
    let hints = client.request_result(
        "textDocument/inlayHint",
        json!({"textDocument": {"uri": uri},
               "range": {"start": {"line": 0, "character": 0}, "end": {"line": 20, "character": 0}}}),
    );
    let hints = hints.as_array().expect("inlay hints");
    let after_passengers = hints
        .iter()
        .find(|hint| hint["position"] == column["end"])
        .unwrap_or_else(|| panic!("a hint after `passengers`: {hints:#?}"));
    // the four invented rows have 1655, 1732, 2980 and 3032 passengers
    assert_eq!(after_passengers["label"], "quantitative 1655..3032");

    // completion of a column name inside the `column` string of `y`
    let inside = text.find("\"delay_min\"").expect("delay_min") + 1;
    let items = client.request_result(
        "textDocument/completion",
        json!({"textDocument": {"uri": uri}, "position": utf16_position(text, inside)}),
    );
    let labels: Vec<&str> = items
        .as_array()
        .expect("completion items")
        .iter()
        .filter_map(|item| item["label"].as_str())
        .collect();
    assert_eq!(labels, ["month", "route", "passengers", "delay_min"]);
    assert!(client.finish().success());
}

#[test]
fn every_request_answers_without_error_all_over_the_demo_specs() {
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data");
    let mut specs: Vec<PathBuf> = std::fs::read_dir(&demo)
        .expect("demo-data folder")
        .flatten()
        .map(|entry| entry.path())
        .filter(|path| path.to_string_lossy().ends_with(".chart.json"))
        .collect();
    specs.sort();
    assert!(specs.len() >= 3, "demo specs: {specs:?}");
    let mut client = start();
    client.initialize(json!({}), Some(&file_uri(&demo)));
    let mut requests = 0;
    for spec in &specs {
        let text = std::fs::read_to_string(spec).expect("demo spec");
        let uri = file_uri(spec);
        client.open(&uri, &text, 1);
        client.wait_for_publish(&uri, 1);
        for (line_number, line) in text.split('\n').enumerate() {
            // every third UTF-16 position of the line, and one past its end
            let units = lsp_client::utf16_len(line);
            for character in (0..=units + 1).step_by(3) {
                let position = json!({"line": line_number, "character": character});
                for method in [
                    "textDocument/hover",
                    "textDocument/completion",
                    "textDocument/definition",
                ] {
                    let response = client.request(
                        method,
                        json!({"textDocument": {"uri": uri}, "position": position}),
                    );
                    assert!(
                        response.get("error").is_none(),
                        "{method} at {position} in {}: {response}",
                        spec.display()
                    );
                    requests += 1;
                }
                let range = json!({"start": position, "end": position});
                let actions = client.request(
                    "textDocument/codeAction",
                    json!({"textDocument": {"uri": uri}, "range": range, "context": {"diagnostics": []}}),
                );
                assert!(actions.get("error").is_none(), "{actions}");
                requests += 1;
            }
        }
        for method in ["textDocument/documentSymbol", "textDocument/documentColor"] {
            let response = client.request(method, json!({"textDocument": {"uri": uri}}));
            assert!(response.get("error").is_none(), "{method}: {response}");
        }
        let hints = client.request(
            "textDocument/inlayHint",
            json!({"textDocument": {"uri": uri}, "range": {"start": {"line": 0, "character": 0}, "end": {"line": 9999, "character": 0}}}),
        );
        assert!(hints.get("error").is_none(), "{hints}");
        client.notify(
            "textDocument/didClose",
            json!({"textDocument": {"uri": uri}}),
        );
    }
    eprintln!(
        "{requests} position requests over {} demo specs",
        specs.len()
    );
    client.settle(Duration::from_millis(200));
    let _ = client.take_queued("textDocument/publishDiagnostics");
    assert!(client.finish().success());
}

#[test]
fn swap_channels_refactor_round_trip() {
    let workspace = Workspace::new();
    let uri = workspace.uri("swap.chart.json");
    let text = "{\n  \"source\": { \"path\": \"crossings.csv\" },\n  \"mark\": \"point\",\n  \"bind\": { \"x\": \"delay_min\", \"y\": \"passengers\" }\n}\n";
    let mut client = start();
    client.initialize(json!({}), Some(&workspace.root_uri()));
    client.open(&uri, text, 1);
    client.wait_for_publish(&uri, 1);
    let cursor = range_of(text, "\"y\"");
    let actions = client.request_result(
        "textDocument/codeAction",
        json!({"textDocument": {"uri": uri}, "range": {"start": cursor["start"], "end": cursor["start"]},
               "context": {"diagnostics": [], "only": ["refactor"]}}),
    );
    let actions = actions.as_array().expect("code actions");
    assert!(
        actions.iter().all(|action| action["kind"] == "refactor"),
        "{actions:#?}"
    );
    let swap = actions
        .iter()
        .find(|action| {
            action["title"]
                .as_str()
                .is_some_and(|title| title.starts_with("swap"))
        })
        .unwrap_or_else(|| panic!("a swap refactor: {actions:#?}"));
    let edits = swap["edit"]["changes"][&uri].as_array().expect("edits");
    let swapped = apply_lsp_edits(text, edits);
    assert!(
        swapped.contains("\"y\": \"delay_min\", \"x\": \"passengers\""),
        "{swapped}"
    );
    client.change_full(&uri, 2, &swapped);
    client.settle(Duration::from_millis(300));
    let _ = client.take_queued("textDocument/publishDiagnostics");
    let symbols = client.request_result(
        "textDocument/documentSymbol",
        json!({"textDocument": {"uri": uri}}),
    );
    let chart = symbols
        .as_array()
        .and_then(|symbols| symbols.iter().find(|symbol| symbol["detail"] == "point"))
        .expect("the layer");
    assert_eq!(chart["children"][0]["name"], "y");
    assert_eq!(chart["children"][0]["detail"], "delay_min");
    assert!(client.finish().success());
}

#[test]
fn diagnostics_from_the_sampled_head_are_replaced_by_the_exact_evaluation() {
    // a file longer than the sampled head (4 MiB): the first analysis draws the head, the exact
    // evaluation in the background draws all of it and the spec is published again
    let workspace = Workspace::new();
    let mut csv = String::from("branch,loaves\n");
    while csv.len() < (4 << 20) + (64 << 10) {
        csv.push_str("Millbrook,10\nQuayside,10\n");
    }
    for _ in 0..2000 {
        csv.push_str("Quayside,1000\n");
    }
    std::fs::write(workspace.path("long.csv"), &csv).expect("write data");
    let uri = workspace.uri("sums.chart.json");
    let text = r#"{ "source": { "path": "long.csv" }, "mark": "bar",
  "bind": { "x": "branch", "y": { "column": "loaves", "summary": "sum", "mapping": { "extent": [1000, 9000000] } } } }"#;
    let mut client = start();
    client.initialize(json!({}), Some(&workspace.root_uri()));
    client.open(&uri, text, 1);
    let message_of = |diagnostics: &[Value]| {
        diagnostics
            .iter()
            .find(|d| d["code"] == "truncated-baseline")
            .and_then(|d| d["message"].as_str())
            .unwrap_or_default()
            .to_string()
    };
    let first = message_of(&client.wait_for_publish(&uri, 1));
    assert!(
        first.ends_with("(in the sampled head of the data)"),
        "{first}"
    );
    let exact = client.wait_for("the exact evaluation's diagnostics", |m| {
        m["method"] == "textDocument/publishDiagnostics"
            && m["params"]["diagnostics"].as_array().is_some_and(|all| {
                let message = message_of(all);
                message.contains("Tufte's lie factor") && !message.contains("sampled head")
            })
    });
    let message = message_of(exact["params"]["diagnostics"].as_array().expect("array"));
    // all the rows: Quayside has the 2,000 rows of 1,000 past the head, so it is the longest
    assert!(
        message.contains("the longest bar (`Quayside`, "),
        "{message}"
    );
    client.settle(Duration::from_millis(200));
    assert!(client.finish().success());
}
