//! Layer 1: an error-tolerant JSON lexer and parser producing a lossless tree with byte ranges.
//! No IO, no LSP. Parsing never fails: it returns a tree and a list of syntax errors.

pub mod format;
mod lexer;
mod parser;
pub mod tree;

pub use parser::{parse, parse_shared, MAX_NESTING_DEPTH};
pub use tree::{
    Member, Node, NodeId, NodeKind, SyntaxError, SyntaxErrorKind, SyntaxTree, Token, TokenKind,
};
