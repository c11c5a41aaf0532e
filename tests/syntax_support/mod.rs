//! Shared checks for the syntax tests: the invariants every tree must satisfy, whatever the input.

use markwell::syntax::SyntaxTree;
use markwell::TextRange;

/// Check the lossless-tree invariants of `tree`, parsed from `text`. Returns the first
/// violation found, described, so that callers can name the input in their failure.
pub fn check_tree_invariants(text: &str, tree: &SyntaxTree) -> Result<(), String> {
    if tree.text() != text {
        return Err("the tree's text differs from the input".to_string());
    }
    let on_boundaries = |range: TextRange| {
        range.start <= range.end
            && range.end <= text.len()
            && text.is_char_boundary(range.start)
            && text.is_char_boundary(range.end)
    };

    // tokens: non-empty, contiguous, covering the whole input, on char boundaries
    let mut expected_start = 0;
    let mut concatenated = String::with_capacity(text.len());
    for token in tree.tokens() {
        if token.range().start != expected_start {
            return Err(format!("gap or overlap before token {token:?}"));
        }
        if token.range().is_empty() {
            return Err(format!("empty token {token:?}"));
        }
        if !on_boundaries(token.range()) {
            return Err(format!("token {token:?} is not on char boundaries"));
        }
        concatenated.push_str(&text[token.range().start..token.range().end]);
        expected_start = token.range().end;
    }
    if concatenated != text {
        return Err("token texts do not concatenate to the input".to_string());
    }

    // nodes: ranges inside the text and inside the parent; children in order
    let document = tree.document();
    if document.range() != TextRange::new(0, text.len()) {
        return Err(format!("document range {:?}", document.range()));
    }
    if document.tokens().len() != tree.tokens().len() {
        return Err("the document does not hold every token".to_string());
    }
    for index in 0..tree.node_count() {
        let node = tree.node(markwell::syntax::NodeId(index as u32));
        let range = node.range();
        if !on_boundaries(range) {
            return Err(format!("node {node:?} range is not on char boundaries"));
        }
        if let Some(parent) = node.parent() {
            if !parent.range().contains_range(range) {
                return Err(format!("node {node:?} lies outside its parent {parent:?}"));
            }
        }
        let mut previous_end = range.start;
        for child in node.children() {
            if child.parent() != Some(node) {
                return Err(format!("child {child:?} does not name {node:?} as parent"));
            }
            if child.range().start < previous_end {
                return Err(format!("child {child:?} of {node:?} is out of order"));
            }
            previous_end = child.range().end;
        }
        // the node's range spans its first to its last non-trivia token
        let tokens = node.tokens();
        let first = tokens.iter().find(|token| !token.kind.is_trivia());
        let last = tokens.iter().rev().find(|token| !token.kind.is_trivia());
        if let (Some(first), Some(last)) = (first, last) {
            if TextRange::new(first.range().start, last.range().end) != range
                && node.parent().is_some()
            {
                return Err(format!("node {node:?} range differs from its tokens'"));
            }
        }
    }

    // errors: inside the text, on char boundaries, sorted by start
    let mut previous_start = 0;
    for error in tree.errors() {
        if !on_boundaries(error.range) {
            return Err(format!("error {error:?} is not on char boundaries"));
        }
        if error.range.start < previous_start {
            return Err(format!("error {error:?} is out of order"));
        }
        previous_start = error.range.start;
        if error.message.is_empty() {
            return Err("an error without a message".to_string());
        }
    }
    Ok(())
}
