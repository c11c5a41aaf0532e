//! The LSP frame decoder: any byte stream is split into frames, invalid stretches skipped, and
//! every body checked, without a panic and always making progress.
#![no_main]

use libfuzzer_sys::fuzz_target;
use markwell::lsp::framing::{check_body, scan_frame, FrameScan};

fuzz_target!(|data: &[u8]| {
    let mut rest = data;
    while !rest.is_empty() {
        match scan_frame(rest) {
            FrameScan::NeedMore => break,
            FrameScan::Complete {
                header_len,
                body_len,
            } => {
                assert!(header_len + body_len <= rest.len());
                assert!(header_len + body_len > 0, "a frame must consume bytes");
                let _ = check_body(&rest[header_len..header_len + body_len]);
                rest = &rest[header_len + body_len..];
            }
            FrameScan::Invalid { skip } => {
                assert!(skip > 0 && skip <= rest.len(), "skip {skip} of {}", rest.len());
                rest = &rest[skip..];
            }
        }
    }
});
