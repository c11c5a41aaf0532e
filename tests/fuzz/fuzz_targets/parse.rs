//! The JSON parser: any bytes (as lossy UTF-8) parse without a panic, the token list covers
//! every byte, and node ranges sit inside the text.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let text = String::from_utf8_lossy(data);
    let tree = markwell::syntax::parse(&text);
    let covered: usize = tree.tokens().iter().map(|token| token.range().len()).sum();
    assert_eq!(covered, text.len(), "tokens must cover every byte");
    for index in 0..tree.node_count() {
        let node = tree.node(markwell::syntax::NodeId(index as u32));
        assert!(node.range().end <= text.len());
    }
});
