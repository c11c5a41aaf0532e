//! Error-tolerant recursive-descent JSON parser over the lexer's tokens.
//! PLACEHOLDER: the real parser replaces this file.

use std::sync::Arc;

use crate::syntax::tree::{SyntaxTree, TokenKind, TreeBuilder};
use crate::text_range::TextRange;

/// Deeper nesting than this is an error node, so deep input cannot overflow the stack.
pub const MAX_NESTING_DEPTH: usize = 256;

/// Parse `text` into a lossless tree. Never fails, never panics.
pub fn parse(text: &str) -> SyntaxTree {
    let mut builder = TreeBuilder::new(Arc::from(text));
    if !text.is_empty() {
        builder.token(TokenKind::Error, TextRange::new(0, text.len()));
        builder.error(TextRange::new(0, text.len()), "parser not written yet");
    }
    builder.finish()
}
