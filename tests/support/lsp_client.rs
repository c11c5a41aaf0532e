//! A small JSON-RPC / LSP client over a child process's stdio, for the stdio tests and the LSP
//! benchmark. Every read has a timeout (no test can hang), messages the test did not look at are
//! kept in a queue, and [`LspClient::finish`] fails when the server left a message unread.
//!
//! Framing follows the LSP base protocol: `Content-Length: N\r\n\r\n` then N bytes of JSON.
//! Server-to-client requests are answered automatically (configuration from
//! `configuration_response`, `null` for the rest) and recorded in `server_requests`.

#![allow(dead_code)] // each test target uses a different part of the client

use std::collections::VecDeque;
use std::io::{BufRead, BufReader, Write};
use std::path::Path;
use std::process::{Child, ChildStdin, Command, ExitStatus, Stdio};
use std::sync::mpsc::{channel, Receiver, RecvTimeoutError};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

use serde_json::{json, Value};

pub enum Incoming {
    Message(Value),
    /// A frame that was not JSON (a protocol error of the server).
    Garbage(String),
    End,
}

pub struct LspClient {
    child: Child,
    stdin: Option<ChildStdin>,
    incoming: Receiver<(Instant, Incoming)>,
    /// Received, not yet looked at by the test.
    queue: VecDeque<(Instant, Value)>,
    next_id: i64,
    pub stderr: Arc<Mutex<String>>,
    pub timeout: Duration,
    pub server_requests: Vec<Value>,
    pub configuration_response: Value,
    ended: bool,
}

fn read_frame(reader: &mut impl BufRead) -> Option<Result<Vec<u8>, String>> {
    let mut length: Option<usize> = None;
    loop {
        let mut line = String::new();
        match reader.read_line(&mut line) {
            Ok(0) => return None,
            Ok(_) => {}
            Err(error) => return Some(Err(format!("read error: {error}"))),
        }
        let line = line.trim_end_matches(['\r', '\n']);
        if line.is_empty() {
            break;
        }
        if let Some(value) = line.strip_prefix("Content-Length:") {
            length = value.trim().parse().ok();
        }
    }
    let length = match length {
        Some(length) => length,
        None => return Some(Err("frame without Content-Length".to_string())),
    };
    let mut body = vec![0; length];
    match reader.read_exact(&mut body) {
        Ok(()) => Some(Ok(body)),
        Err(error) => Some(Err(format!("truncated frame: {error}"))),
    }
}

impl LspClient {
    pub fn start(binary: &Path, environment: &[(&str, &str)]) -> LspClient {
        let mut command = Command::new(binary);
        command
            .arg("serve")
            .stdin(Stdio::piped())
            .stdout(Stdio::piped())
            .stderr(Stdio::piped());
        for (name, value) in environment {
            command.env(name, value);
        }
        let mut child = command.spawn().expect("the markwell binary starts");
        let stdin = child.stdin.take();
        let stdout = child.stdout.take().expect("piped stdout");
        let stderr = child.stderr.take().expect("piped stderr");
        let (sender, incoming) = channel();
        std::thread::spawn(move || {
            let mut reader = BufReader::new(stdout);
            loop {
                let item = match read_frame(&mut reader) {
                    None => Incoming::End,
                    Some(Err(error)) => Incoming::Garbage(error),
                    Some(Ok(body)) => match serde_json::from_slice::<Value>(&body) {
                        Ok(value) => Incoming::Message(value),
                        Err(error) => Incoming::Garbage(format!(
                            "{error}: {}",
                            String::from_utf8_lossy(&body)
                        )),
                    },
                };
                let end = matches!(item, Incoming::End);
                if sender.send((Instant::now(), item)).is_err() || end {
                    return;
                }
            }
        });
        let stderr_log = Arc::new(Mutex::new(String::new()));
        let stderr_sink = stderr_log.clone();
        std::thread::spawn(move || {
            let reader = BufReader::new(stderr);
            for line in reader.lines().map_while(Result::ok) {
                if let Ok(mut log) = stderr_sink.lock() {
                    log.push_str(&line);
                    log.push('\n');
                }
            }
        });
        LspClient {
            child,
            stdin,
            incoming,
            queue: VecDeque::new(),
            next_id: 1,
            stderr: stderr_log,
            timeout: Duration::from_secs(20),
            server_requests: Vec::new(),
            configuration_response: Value::Null,
            ended: false,
        }
    }

    pub fn pid(&self) -> u32 {
        self.child.id()
    }

    pub fn stderr_text(&self) -> String {
        self.stderr
            .lock()
            .map(|log| log.clone())
            .unwrap_or_default()
    }

    pub fn send_raw(&mut self, bytes: &[u8]) {
        let stdin = self.stdin.as_mut().expect("stdin open");
        stdin.write_all(bytes).expect("write to the server");
        stdin.flush().expect("flush to the server");
    }

    pub fn send(&mut self, message: &Value) {
        let body = serde_json::to_vec(message).expect("serialisable");
        let mut frame = format!("Content-Length: {}\r\n\r\n", body.len()).into_bytes();
        frame.extend_from_slice(&body);
        self.send_raw(&frame);
    }

    /// Null params are left out of the message (as `shutdown` and `exit` have none).
    pub fn notify(&mut self, method: &str, params: Value) {
        let mut message = json!({"jsonrpc": "2.0", "method": method, "params": params});
        if params_are_null(&message) {
            message
                .as_object_mut()
                .map(|object| object.remove("params"));
        }
        self.send(&message);
    }

    /// Send a request; returns its id.
    pub fn send_request(&mut self, method: &str, params: Value) -> i64 {
        let id = self.next_id;
        self.next_id += 1;
        let mut message = json!({"jsonrpc": "2.0", "id": id, "method": method, "params": params});
        if params_are_null(&message) {
            message
                .as_object_mut()
                .map(|object| object.remove("params"));
        }
        self.send(&message);
        id
    }

    /// Send a request and wait for its response (the whole response object).
    pub fn request(&mut self, method: &str, params: Value) -> Value {
        let id = self.send_request(method, params);
        self.wait_for(&format!("response to {method} #{id}"), |message| {
            message.get("id") == Some(&json!(id)) && message.get("method").is_none()
        })
    }

    /// The `result` of a request; fails on an error response.
    pub fn request_result(&mut self, method: &str, params: Value) -> Value {
        let response = self.request(method, params);
        assert!(
            response.get("error").is_none(),
            "{method} failed: {response}"
        );
        response.get("result").cloned().unwrap_or(Value::Null)
    }

    fn answer_server_request(&mut self, message: &Value) {
        let method = message["method"].as_str().unwrap_or_default().to_string();
        let result = match method.as_str() {
            "workspace/configuration" => {
                let count = message["params"]["items"].as_array().map_or(1, Vec::len);
                Value::Array(vec![self.configuration_response.clone(); count])
            }
            _ => Value::Null,
        };
        let id = message["id"].clone();
        self.server_requests.push(message.clone());
        self.send(&json!({"jsonrpc": "2.0", "id": id, "result": result}));
    }

    /// Receive one message from the server before `deadline`.
    fn receive(&mut self, deadline: Instant) -> Option<(Instant, Value)> {
        loop {
            let now = Instant::now();
            if now >= deadline || self.ended {
                return None;
            }
            match self.incoming.recv_timeout(deadline - now) {
                Ok((at, Incoming::Message(message))) => {
                    if message.get("method").is_some() && message.get("id").is_some() {
                        self.answer_server_request(&message);
                        continue;
                    }
                    return Some((at, message));
                }
                Ok((_, Incoming::Garbage(error))) => {
                    panic!("the server wrote a malformed frame: {error}")
                }
                Ok((_, Incoming::End)) | Err(RecvTimeoutError::Disconnected) => {
                    self.ended = true;
                    return None;
                }
                Err(RecvTimeoutError::Timeout) => return None,
            }
        }
    }

    /// Wait (with the client's timeout) for the first message matching `wanted`, looking at the
    /// queue first; other messages stay queued. Returns the message and when it arrived.
    pub fn wait_for_timed(
        &mut self,
        what: &str,
        wanted: impl Fn(&Value) -> bool,
    ) -> (Instant, Value) {
        if let Some(position) = self.queue.iter().position(|(_, message)| wanted(message)) {
            return self
                .queue
                .remove(position)
                .expect("position is in the queue");
        }
        let deadline = Instant::now() + self.timeout;
        while let Some((at, message)) = self.receive(deadline) {
            if wanted(&message) {
                return (at, message);
            }
            self.queue.push_back((at, message));
        }
        panic!(
            "timed out after {:?} waiting for {what}; unread: {:?}\nserver stderr:\n{}",
            self.timeout,
            self.queue
                .iter()
                .map(|(_, m)| m.to_string())
                .collect::<Vec<_>>(),
            self.stderr_text()
        );
    }

    pub fn wait_for(&mut self, what: &str, wanted: impl Fn(&Value) -> bool) -> Value {
        self.wait_for_timed(what, wanted).1
    }

    /// Wait for `publishDiagnostics` of `uri` with exactly `version`; returns the diagnostics.
    pub fn wait_for_publish(&mut self, uri: &str, version: i64) -> Vec<Value> {
        let message = self.wait_for(&format!("diagnostics of {uri} v{version}"), |m| {
            m["method"] == "textDocument/publishDiagnostics"
                && m["params"]["uri"] == uri
                && m["params"]["version"] == version
        });
        message["params"]["diagnostics"]
            .as_array()
            .cloned()
            .unwrap_or_default()
    }

    /// Remove and return the queued (already received) messages of `method`.
    pub fn take_queued(&mut self, method: &str) -> Vec<Value> {
        let (taken, kept): (Vec<_>, Vec<_>) = self
            .queue
            .drain(..)
            .partition(|(_, message)| message["method"] == method);
        self.queue = kept.into_iter().collect();
        taken.into_iter().map(|(_, message)| message).collect()
    }

    /// Collect whatever arrives within `quiet` (used before checking that nothing is left).
    pub fn settle(&mut self, quiet: Duration) {
        let deadline = Instant::now() + quiet;
        while let Some(message) = self.receive(deadline) {
            self.queue.push_back(message);
        }
    }

    pub fn initialize(&mut self, capabilities: Value, root_uri: Option<&str>) -> Value {
        let result = self.request_result(
            "initialize",
            json!({"processId": null, "rootUri": root_uri, "capabilities": capabilities}),
        );
        self.notify("initialized", json!({}));
        result
    }

    pub fn open(&mut self, uri: &str, text: &str, version: i64) {
        self.notify(
            "textDocument/didOpen",
            json!({"textDocument": {"uri": uri, "languageId": "chartspec", "version": version, "text": text}}),
        );
    }

    pub fn change_full(&mut self, uri: &str, version: i64, text: &str) {
        self.notify(
            "textDocument/didChange",
            json!({"textDocument": {"uri": uri, "version": version}, "contentChanges": [{"text": text}]}),
        );
    }

    pub fn change_range(&mut self, uri: &str, version: i64, range: Value, text: &str) {
        self.notify(
            "textDocument/didChange",
            json!({"textDocument": {"uri": uri, "version": version},
                   "contentChanges": [{"range": range, "text": text}]}),
        );
    }

    /// `shutdown`, then `exit`; waits for the process and fails if any message was left
    /// unread (in the queue, or arriving before the server's stdout closed).
    pub fn finish(mut self) -> ExitStatus {
        let response = self.request("shutdown", Value::Null);
        assert!(
            response.get("error").is_none(),
            "shutdown failed: {response}"
        );
        self.notify("exit", Value::Null);
        let deadline = Instant::now() + self.timeout;
        while let Some(message) = self.receive(deadline) {
            self.queue.push_back(message);
        }
        let status = self.wait_exit();
        // Diagnostics are pushed whenever an analysis finishes, so one may land after a test has
        // drained the queue (a loaded machine analyses late); every other message (responses,
        // server requests, progress, logs) must have been read.
        let unread: Vec<&Value> = self
            .queue
            .iter()
            .map(|(_, message)| message)
            .filter(|message| message["method"] != "textDocument/publishDiagnostics")
            .collect();
        assert!(
            unread.is_empty(),
            "the server left messages unread: {unread:#?}"
        );
        status
    }

    /// Wait for the process to end (bounded); kills it on timeout and fails.
    pub fn wait_exit(&mut self) -> ExitStatus {
        self.stdin.take();
        let deadline = Instant::now() + self.timeout;
        loop {
            match self.child.try_wait() {
                Ok(Some(status)) => return status,
                Ok(None) if Instant::now() < deadline => {
                    std::thread::sleep(Duration::from_millis(5))
                }
                _ => {
                    let _ = self.child.kill();
                    panic!("the server did not exit in time\n{}", self.stderr_text());
                }
            }
        }
    }
}

impl Drop for LspClient {
    fn drop(&mut self) {
        // a failed test must not leave a server behind
        if let Ok(None) = self.child.try_wait() {
            let _ = self.child.kill();
            let _ = self.child.wait();
        }
    }
}

fn params_are_null(message: &Value) -> bool {
    message.get("params") == Some(&Value::Null)
}

/// Length of `text` in UTF-16 code units (LSP's default position encoding), written
/// independently of the crate's `positions` module.
pub fn utf16_len(text: &str) -> usize {
    text.encode_utf16().count()
}

/// The LSP position (UTF-16) of byte `offset` of `text`, lines split at \n, \r\n and \r.
pub fn utf16_position(text: &str, offset: usize) -> Value {
    let before = &text[..offset];
    let mut line = 0;
    let mut line_start = 0;
    let bytes = before.as_bytes();
    let mut index = 0;
    while index < bytes.len() {
        match bytes[index] {
            b'\n' => {
                line += 1;
                line_start = index + 1;
            }
            b'\r' if bytes.get(index + 1) != Some(&b'\n') => {
                line += 1;
                line_start = index + 1;
            }
            _ => {}
        }
        index += 1;
    }
    json!({"line": line, "character": utf16_len(&before[line_start..])})
}

/// The byte offset of an LSP (UTF-16) position, the inverse of `utf16_position`.
pub fn offset_of_utf16_position(text: &str, position: &Value) -> usize {
    let wanted_line = position["line"].as_u64().unwrap_or(0) as usize;
    let wanted_character = position["character"].as_u64().unwrap_or(0) as usize;
    let mut line = 0;
    let mut offset = 0;
    let bytes = text.as_bytes();
    while line < wanted_line && offset < bytes.len() {
        if bytes[offset] == b'\n'
            || (bytes[offset] == b'\r' && bytes.get(offset + 1) != Some(&b'\n'))
        {
            line += 1;
        }
        offset += 1;
    }
    let mut units = 0;
    for (index, character) in text[offset..].char_indices() {
        if units >= wanted_character || character == '\n' || character == '\r' {
            return offset + index;
        }
        units += character.len_utf16();
    }
    text.len()
}

/// Apply LSP text edits (UTF-16 ranges) to `text`, last edit first.
pub fn apply_lsp_edits(text: &str, edits: &[Value]) -> String {
    let mut spans: Vec<(usize, usize, String)> = edits
        .iter()
        .map(|edit| {
            (
                offset_of_utf16_position(text, &edit["range"]["start"]),
                offset_of_utf16_position(text, &edit["range"]["end"]),
                edit["newText"].as_str().unwrap_or_default().to_string(),
            )
        })
        .collect();
    spans.sort_by_key(|span| std::cmp::Reverse(span.0));
    let mut out = text.to_string();
    for (start, end, new_text) in spans {
        out.replace_range(start..end, &new_text);
    }
    out
}
