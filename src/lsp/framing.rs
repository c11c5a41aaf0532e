//! Guards around tower-lsp's transport, on both sides of it.
//!
//! Input: everything read from stdin is checked for LSP base-protocol framing
//! (`Content-Length: N\r\n\r\n` + N bytes) and for a body that is a JSON-RPC message; only
//! such frames reach tower-lsp. Why: tower-lsp 0.20 stops reading after the first frame it cannot
//! decode (its `FramedRead` ends after a decoder error), so one bad header or one body that is not
//! JSON would end the session. Here an unreadable frame is answered with a JSON-RPC error
//! (JSON-RPC 2.0, section 5.1: -32700 "Parse error" for invalid JSON, -32600 "Invalid Request" for
//! JSON that is not a request, id null when it cannot be read) and skipped; after a bad header the
//! input is skipped up to the next `Content-Length`.
//!
//! Output: tower-lsp's frames and these error responses are interleaved whole on stdout.

use serde_json::{json, Value};
use tokio::io::{AsyncRead, AsyncReadExt, AsyncWrite, AsyncWriteExt};
use tokio::sync::mpsc::{UnboundedReceiver, UnboundedSender};

/// A header block longer than this without its blank line is garbage.
const MAX_HEADER_BYTES: usize = 8 * 1024;
/// Bodies larger than this are refused (a 10 MB document is far below it).
const MAX_BODY_BYTES: usize = 1 << 30;
const CONTENT_LENGTH: &[u8] = b"Content-Length";
/// JSON-RPC 2.0 error codes (section 5.1).
const PARSE_ERROR: i64 = -32700;
const INVALID_REQUEST: i64 = -32600;

/// What the start of the buffered input holds.
#[derive(Debug, PartialEq, Eq)]
pub enum FrameScan {
    /// A complete frame: `header_len` bytes of header (blank line included), then the body.
    Complete {
        header_len: usize,
        body_len: usize,
    },
    /// Bytes that are not a readable frame: drop the first `skip` bytes.
    Invalid {
        skip: usize,
    },
    NeedMore,
}

fn find(haystack: &[u8], needle: &[u8], from: usize) -> Option<usize> {
    if from >= haystack.len() {
        return None;
    }
    haystack[from..]
        .windows(needle.len())
        .position(|window| window == needle)
        .map(|position| position + from)
}

/// Where to resume after garbage: the next `Content-Length` after the first byte, or (keeping a
/// tail that may be the start of a header split across reads) near the end.
fn resync_point(buffer: &[u8]) -> usize {
    find(buffer, CONTENT_LENGTH, 1)
        .unwrap_or_else(|| buffer.len().saturating_sub(CONTENT_LENGTH.len()).max(1))
}

fn content_length(header: &[u8]) -> Option<usize> {
    let text = std::str::from_utf8(header).ok()?;
    let mut length = None;
    for line in text.split("\r\n") {
        let (name, value) = line.split_once(':')?;
        if name.trim().eq_ignore_ascii_case("content-length") {
            length = Some(value.trim().parse::<usize>().ok()?);
        }
    }
    length.filter(|&length| length <= MAX_BODY_BYTES)
}

/// Look at the start of `buffer`.
pub fn scan_frame(buffer: &[u8]) -> FrameScan {
    if buffer.is_empty() {
        return FrameScan::NeedMore;
    }
    let Some(header_end) = find(buffer, b"\r\n\r\n", 0) else {
        return if buffer.len() > MAX_HEADER_BYTES {
            FrameScan::Invalid {
                skip: resync_point(buffer),
            }
        } else {
            FrameScan::NeedMore
        };
    };
    match content_length(&buffer[..header_end]) {
        Some(body_len) => {
            let header_len = header_end + 4;
            if buffer.len() >= header_len + body_len {
                FrameScan::Complete {
                    header_len,
                    body_len,
                }
            } else {
                FrameScan::NeedMore
            }
        }
        None => FrameScan::Invalid {
            skip: resync_point(buffer),
        },
    }
}

/// A complete frame around `body`.
pub fn frame(body: &[u8]) -> Vec<u8> {
    let mut out = format!("Content-Length: {}\r\n\r\n", body.len()).into_bytes();
    out.extend_from_slice(body);
    out
}

fn error_response(id: Value, code: i64, message: &str) -> Vec<u8> {
    let response = json!({"jsonrpc": "2.0", "id": id, "error": {"code": code, "message": message}});
    frame(response.to_string().as_bytes())
}

/// `Ok` when tower-lsp can decode `body` (a JSON-RPC request, notification or response);
/// otherwise the error response to send back.
pub fn check_body(body: &[u8]) -> Result<(), Vec<u8>> {
    let value: Value = match serde_json::from_slice(body) {
        Ok(value) => value,
        Err(error) => {
            return Err(error_response(
                Value::Null,
                PARSE_ERROR,
                &format!("Parse error: {error}"),
            ))
        }
    };
    let is_request = serde_json::from_value::<tower_lsp::jsonrpc::Request>(value.clone()).is_ok();
    let is_response = serde_json::from_value::<tower_lsp::jsonrpc::Response>(value.clone()).is_ok();
    if is_request || is_response {
        return Ok(());
    }
    let id = value
        .get("id")
        .filter(|id| id.is_string() || id.is_i64() || id.is_u64())
        .cloned()
        .unwrap_or(Value::Null);
    Err(error_response(
        id,
        INVALID_REQUEST,
        "Invalid Request: not a JSON-RPC 2.0 request, notification or response",
    ))
}

/// Copy well-formed frames from `input` to `output` until the input ends, then close `output`.
/// Error responses for unreadable frames go to `errors` (written by [`write_frames`]).
pub async fn forward_valid_frames(
    mut input: impl AsyncRead + Unpin,
    mut output: impl AsyncWrite + Unpin,
    errors: UnboundedSender<Vec<u8>>,
) {
    let mut buffer: Vec<u8> = Vec::new();
    let mut chunk = vec![0u8; 64 * 1024];
    // one error per run of garbage, not one per skipped piece
    let mut in_garbage = false;
    'reading: loop {
        loop {
            match scan_frame(&buffer) {
                FrameScan::Complete {
                    header_len,
                    body_len,
                } => {
                    in_garbage = false;
                    let frame_end = header_len + body_len;
                    let body = &buffer[header_len..frame_end];
                    match check_body(body) {
                        Ok(()) => {
                            let written = async {
                                output.write_all(&frame(body)).await?;
                                output.flush().await
                            }
                            .await;
                            if written.is_err() {
                                break 'reading;
                            }
                        }
                        Err(response) => {
                            crate::lsp::log::error(
                                "unreadable message from the client: answered with an error",
                            );
                            let _ = errors.send(response);
                        }
                    }
                    buffer.drain(..frame_end);
                }
                FrameScan::Invalid { skip } => {
                    if !in_garbage {
                        crate::lsp::log::error(
                            "unreadable message header from the client: skipped",
                        );
                        let _ = errors.send(error_response(
                            Value::Null,
                            PARSE_ERROR,
                            "Parse error: unreadable message header",
                        ));
                    }
                    in_garbage = true;
                    buffer.drain(..skip.min(buffer.len()));
                }
                FrameScan::NeedMore => break,
            }
        }
        match input.read(&mut chunk).await {
            Ok(0) | Err(_) => break,
            Ok(read) => buffer.extend_from_slice(&chunk[..read]),
        }
    }
    let _ = output.shutdown().await;
}

/// Copy tower-lsp's output frames and the injected error responses to `stdout`, each frame whole.
pub async fn write_frames(
    mut server_output: impl AsyncRead + Unpin,
    mut injected: UnboundedReceiver<Vec<u8>>,
    mut stdout: impl AsyncWrite + Unpin,
) {
    let mut buffer: Vec<u8> = Vec::new();
    let mut chunk = vec![0u8; 64 * 1024];
    let mut injected_open = true;
    loop {
        tokio::select! {
            read = server_output.read(&mut chunk) => {
                let read = match read {
                    Ok(0) | Err(_) => break,
                    Ok(read) => read,
                };
                buffer.extend_from_slice(&chunk[..read]);
                let mut complete = 0;
                loop {
                    match scan_frame(&buffer[complete..]) {
                        FrameScan::Complete { header_len, body_len } => complete += header_len + body_len,
                        // tower-lsp writes well-formed frames; pass anything else through as is
                        FrameScan::Invalid { skip } => complete += skip,
                        FrameScan::NeedMore => break,
                    }
                }
                if complete > 0 {
                    if stdout.write_all(&buffer[..complete]).await.is_err() || stdout.flush().await.is_err() {
                        break;
                    }
                    buffer.drain(..complete);
                }
            }
            message = injected.recv(), if injected_open => match message {
                Some(frame) => {
                    if stdout.write_all(&frame).await.is_err() || stdout.flush().await.is_err() {
                        break;
                    }
                }
                None => injected_open = false,
            },
        }
    }
    let _ = stdout.write_all(&buffer).await;
    let _ = stdout.flush().await;
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn complete_and_partial_frames() {
        // LSP 3.17 "Base Protocol": header part, "\r\n\r\n", then Content-Length bytes of content
        let frame = b"Content-Length: 2\r\n\r\n{}";
        assert_eq!(
            scan_frame(frame),
            FrameScan::Complete {
                header_len: 21,
                body_len: 2
            }
        );
        assert_eq!(scan_frame(&frame[..22]), FrameScan::NeedMore);
        assert_eq!(scan_frame(b"Content-Len"), FrameScan::NeedMore);
        let with_type = b"Content-Type: application/vscode-jsonrpc; charset=utf-8\r\nContent-Length: 2\r\n\r\n{}";
        assert!(matches!(
            scan_frame(with_type),
            FrameScan::Complete { body_len: 2, .. }
        ));
    }

    #[test]
    fn bad_headers_skip_to_the_next_content_length() {
        let input = b"Content-Length: lots\r\n\r\n{}Content-Length: 2\r\n\r\n[]";
        let FrameScan::Invalid { skip } = scan_frame(input) else {
            panic!("a bad length is invalid");
        };
        assert_eq!(&input[skip..skip + 14], b"Content-Length");
        assert!(matches!(
            scan_frame(&input[skip..]),
            FrameScan::Complete { body_len: 2, .. }
        ));
        assert!(matches!(
            scan_frame(b"garbage\r\n\r\n"),
            FrameScan::Invalid { .. }
        ));
        let huge = vec![b'x'; MAX_HEADER_BYTES + 10];
        assert!(matches!(scan_frame(&huge), FrameScan::Invalid { .. }));
    }

    #[test]
    fn bodies_must_be_json_rpc_messages() {
        assert!(check_body(br#"{"jsonrpc":"2.0","id":1,"method":"shutdown"}"#).is_ok());
        assert!(check_body(br#"{"jsonrpc":"2.0","method":"exit"}"#).is_ok());
        assert!(check_body(br#"{"jsonrpc":"2.0","id":3,"result":null}"#).is_ok());
        let parse_error = check_body(b"{\"jsonrpc").expect_err("not JSON");
        assert!(String::from_utf8_lossy(&parse_error).contains("-32700"));
        let invalid = check_body(br#"{"id":4,"method":7}"#).expect_err("not a request");
        let text = String::from_utf8_lossy(&invalid);
        assert!(
            text.contains("-32600") && text.contains("\"id\":4"),
            "{text}"
        );
    }

    #[tokio::test]
    async fn forwarding_drops_garbage_and_reports_it_once() {
        let valid = br#"{"jsonrpc":"2.0","method":"exit"}"#;
        let mut input = b"Content-Length: lots\r\n\r\n{}".to_vec();
        input.extend_from_slice(&frame(b"[1, 2"));
        input.extend_from_slice(&frame(valid));
        let (sender, mut receiver) = tokio::sync::mpsc::unbounded_channel();
        let mut output = Vec::new();
        forward_valid_frames(input.as_slice(), &mut output, sender).await;
        assert_eq!(output, frame(valid));
        let mut errors = Vec::new();
        while let Ok(error) = receiver.try_recv() {
            errors.push(String::from_utf8_lossy(&error).into_owned());
        }
        assert_eq!(errors.len(), 2, "{errors:?}");
        assert!(errors.iter().all(|error| error.contains("-32700")));
    }
}
