//! The lossless syntax tree: a flat token list that covers every byte of the input, and an arena of
//! nodes over it. Nodes are built by the parser through [`TreeBuilder`]; readers walk them through
//! [`Node`], whose accessors return `Option` because any part may be missing in broken input.

use std::borrow::Cow;
use std::sync::Arc;

use crate::text_range::TextRange;

#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum TokenKind {
    LBrace,
    RBrace,
    LBracket,
    RBracket,
    Colon,
    Comma,
    /// A string literal, quotes included (possibly unterminated: see the errors).
    String,
    Number,
    True,
    False,
    Null,
    /// Spaces, tabs, CR and LF.
    Whitespace,
    /// `//` or `/* */` comments: kept so the tree stays lossless, but JSON forbids them.
    Comment,
    /// Bytes that start no token (a stray letter, a control character, invalid UTF-8 replaced).
    Error,
}

impl TokenKind {
    pub fn is_trivia(self) -> bool {
        matches!(self, TokenKind::Whitespace | TokenKind::Comment)
    }
}

/// One token: 12 bytes (offsets as `u32`; a text past 4 GiB, which no front end accepts, would
/// get its offsets clamped).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Token {
    pub kind: TokenKind,
    start: u32,
    end: u32,
}

impl Token {
    pub fn new(kind: TokenKind, range: TextRange) -> Token {
        Token {
            kind,
            start: compact_offset(range.start),
            end: compact_offset(range.end),
        }
    }

    pub fn range(&self) -> TextRange {
        TextRange::new(self.start as usize, self.end as usize)
    }
}

/// An offset stored in 32 bits (saturating: see [`Token`]).
fn compact_offset(offset: usize) -> u32 {
    u32::try_from(offset).unwrap_or(u32::MAX)
}

/// `NodeData::parent` of the document node.
const NO_PARENT: u32 = u32::MAX;

#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum NodeKind {
    /// The whole input: every token belongs to it.
    Document,
    Object,
    /// `"key": value` inside an object. Children: the key (a `String` node) and the value, either
    /// of which may be missing in broken input.
    Member,
    Array,
    String,
    Number,
    True,
    False,
    Null,
    /// Tokens the parser could not place.
    Error,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct NodeId(pub u32);

/// 32 bytes a node: offsets and indexes as `u32`.
#[derive(Clone, Debug)]
struct NodeData {
    kind: NodeKind,
    /// Range of the node's own (non-trivia) tokens; empty at a position for a node with none.
    start: u32,
    end: u32,
    /// [`NO_PARENT`] for the document.
    parent: u32,
    /// Index range into `SyntaxTree::children`.
    children_start: u32,
    children_end: u32,
    /// Index range into `SyntaxTree::tokens`, trivia inside the node included.
    tokens_start: u32,
    tokens_end: u32,
}

/// A syntax error: where and what.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SyntaxError {
    pub range: TextRange,
    pub message: String,
    pub kind: SyntaxErrorKind,
}

/// Whether an error breaks the JSON grammar, or is legal JSON that a chart spec still rejects.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum SyntaxErrorKind {
    /// The text is not JSON (RFC 8259 grammar).
    Grammar,
    /// A key repeated in one object. RFC 8259 section 4 only says names SHOULD be unique, so the
    /// text is valid JSON, but readers disagree on which value wins, so a spec must not do it.
    DuplicateKey,
}

/// The result of parsing: never fails. Bad input sits in `Error` nodes and in `errors`.
#[derive(Clone, Debug)]
pub struct SyntaxTree {
    text: Arc<str>,
    tokens: Vec<Token>,
    nodes: Vec<NodeData>,
    children: Vec<NodeId>,
    errors: Vec<SyntaxError>,
}

impl SyntaxTree {
    pub fn text(&self) -> &str {
        &self.text
    }

    pub fn shared_text(&self) -> Arc<str> {
        self.text.clone()
    }

    pub fn tokens(&self) -> &[Token] {
        &self.tokens
    }

    pub fn errors(&self) -> &[SyntaxError] {
        &self.errors
    }

    /// The `Document` node.
    pub fn document(&self) -> Node<'_> {
        Node {
            tree: self,
            id: NodeId(0),
        }
    }

    /// The top-level value, if the input has one.
    pub fn root_value(&self) -> Option<Node<'_>> {
        self.document()
            .children()
            .find(|node| node.kind() != NodeKind::Error)
    }

    pub fn node(&self, id: NodeId) -> Node<'_> {
        Node { tree: self, id }
    }

    pub fn node_count(&self) -> usize {
        self.nodes.len()
    }

    /// The deepest node whose range contains `offset` (inclusive of its end).
    pub fn node_at_offset(&self, offset: usize) -> Node<'_> {
        let mut current = self.document();
        'descend: loop {
            for child in current.children() {
                if child.range().contains_inclusive(offset) && !child.range().is_empty() {
                    current = child;
                    continue 'descend;
                }
            }
            return current;
        }
    }
}

/// A cheap handle to a node of a tree.
#[derive(Clone, Copy)]
pub struct Node<'t> {
    tree: &'t SyntaxTree,
    id: NodeId,
}

impl std::fmt::Debug for Node<'_> {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{:?}@{:?}", self.kind(), self.range())
    }
}

impl PartialEq for Node<'_> {
    fn eq(&self, other: &Self) -> bool {
        std::ptr::eq(self.tree, other.tree) && self.id == other.id
    }
}

impl<'t> Node<'t> {
    fn data(&self) -> &'t NodeData {
        &self.tree.nodes[self.id.0 as usize]
    }

    pub fn id(&self) -> NodeId {
        self.id
    }

    pub fn tree(&self) -> &'t SyntaxTree {
        self.tree
    }

    pub fn kind(&self) -> NodeKind {
        self.data().kind
    }

    pub fn range(&self) -> TextRange {
        let data = self.data();
        TextRange::new(data.start as usize, data.end as usize)
    }

    /// The node's source text (its own tokens, without surrounding trivia).
    pub fn text(&self) -> &'t str {
        let range = self.range();
        &self.tree.text[range.start..range.end]
    }

    pub fn parent(&self) -> Option<Node<'t>> {
        let parent = self.data().parent;
        (parent != NO_PARENT).then_some(Node {
            tree: self.tree,
            id: NodeId(parent),
        })
    }

    pub fn children(&self) -> impl Iterator<Item = Node<'t>> + 't {
        let data = self.data();
        let tree = self.tree;
        tree.children[data.children_start as usize..data.children_end as usize]
            .iter()
            .map(move |&id| Node { tree, id })
    }

    /// All tokens inside the node, trivia included.
    pub fn tokens(&self) -> &'t [Token] {
        let data = self.data();
        &self.tree.tokens[data.tokens_start as usize..data.tokens_end as usize]
    }

    /// The members of an object node (empty for other kinds).
    pub fn members(&self) -> impl Iterator<Item = Member<'t>> + 't {
        let is_object = self.kind() == NodeKind::Object;
        self.children()
            .filter(move |child| is_object && child.kind() == NodeKind::Member)
            .map(|node| Member { node })
    }

    /// The first member whose key equals `key`.
    pub fn member(&self, key: &str) -> Option<Member<'t>> {
        self.members()
            .find(|member| member.key_text().as_deref() == Some(key))
    }

    /// The value of the first member named `key`.
    pub fn get(&self, key: &str) -> Option<Node<'t>> {
        self.member(key).and_then(|member| member.value())
    }

    /// The elements of an array node, error nodes left out (empty for other kinds).
    pub fn elements(&self) -> impl Iterator<Item = Node<'t>> + 't {
        let is_array = self.kind() == NodeKind::Array;
        self.children()
            .filter(move |child| is_array && child.kind() != NodeKind::Error)
    }

    /// The unescaped value of a string node. `None` for other kinds. Invalid escapes are kept as
    /// written; an unterminated string yields what was typed so far.
    pub fn as_str(&self) -> Option<Cow<'t, str>> {
        if self.kind() != NodeKind::String {
            return None;
        }
        Some(unescape_string_literal(self.text()))
    }

    pub fn as_f64(&self) -> Option<f64> {
        if self.kind() != NodeKind::Number {
            return None;
        }
        self.text()
            .parse::<f64>()
            .ok()
            .filter(|value| value.is_finite())
    }

    pub fn as_bool(&self) -> Option<bool> {
        match self.kind() {
            NodeKind::True => Some(true),
            NodeKind::False => Some(false),
            _ => None,
        }
    }

    pub fn is_null(&self) -> bool {
        self.kind() == NodeKind::Null
    }
}

/// A `"key": value` pair of an object.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Member<'t> {
    node: Node<'t>,
}

impl<'t> Member<'t> {
    pub fn node(&self) -> Node<'t> {
        self.node
    }

    pub fn range(&self) -> TextRange {
        self.node.range()
    }

    /// The key's string node.
    pub fn key(&self) -> Option<Node<'t>> {
        self.node
            .children()
            .next()
            .filter(|child| child.kind() == NodeKind::String)
    }

    pub fn key_text(&self) -> Option<Cow<'t, str>> {
        self.key().and_then(|key| key.as_str())
    }

    /// The range of the key, quotes included.
    pub fn key_range(&self) -> Option<TextRange> {
        self.key().map(|key| key.range())
    }

    /// The value node: the first child after the key that is not an error node.
    pub fn value(&self) -> Option<Node<'t>> {
        let key_id = self.key().map(|key| key.id());
        self.node
            .children()
            .filter(|child| Some(child.id()) != key_id)
            .find(|child| child.kind() != NodeKind::Error)
    }
}

/// Unescape a JSON string literal as written (with its quotes, the closing one possibly missing).
pub fn unescape_string_literal(literal: &str) -> Cow<'_, str> {
    let inner = literal.strip_prefix('"').unwrap_or(literal);
    let inner = if !inner.is_empty() && inner.ends_with('"') && !ends_with_escaped_quote(inner) {
        &inner[..inner.len() - 1]
    } else {
        inner
    };
    if !inner.contains('\\') {
        return Cow::Borrowed(inner);
    }
    let mut out = String::with_capacity(inner.len());
    let mut chars = inner.chars();
    while let Some(c) = chars.next() {
        if c != '\\' {
            out.push(c);
            continue;
        }
        match chars.next() {
            Some('"') => out.push('"'),
            Some('\\') => out.push('\\'),
            Some('/') => out.push('/'),
            Some('b') => out.push('\u{8}'),
            Some('f') => out.push('\u{c}'),
            Some('n') => out.push('\n'),
            Some('r') => out.push('\r'),
            Some('t') => out.push('\t'),
            Some('u') => {
                let first = read_hex4(&mut chars);
                match first {
                    Some(high @ 0xD800..=0xDBFF) => {
                        let mut lookahead = chars.clone();
                        let low = if lookahead.next() == Some('\\') && lookahead.next() == Some('u')
                        {
                            read_hex4(&mut lookahead)
                        } else {
                            None
                        };
                        match low {
                            Some(low @ 0xDC00..=0xDFFF) => {
                                chars = lookahead;
                                let code = 0x10000 + ((high - 0xD800) << 10) + (low - 0xDC00);
                                out.push(char::from_u32(code).unwrap_or('\u{FFFD}'));
                            }
                            _ => out.push('\u{FFFD}'),
                        }
                    }
                    Some(code) => out.push(char::from_u32(code).unwrap_or('\u{FFFD}')),
                    None => out.push('\u{FFFD}'),
                }
            }
            Some(other) => {
                out.push('\\');
                out.push(other);
            }
            None => out.push('\\'),
        }
    }
    Cow::Owned(out)
}

fn ends_with_escaped_quote(inner: &str) -> bool {
    // `inner` ends with '"'; it is escaped when preceded by an odd number of backslashes
    let before = &inner.as_bytes()[..inner.len() - 1];
    let backslashes = before.iter().rev().take_while(|&&b| b == b'\\').count();
    backslashes % 2 == 1
}

fn read_hex4(chars: &mut std::str::Chars<'_>) -> Option<u32> {
    let mut value = 0u32;
    for _ in 0..4 {
        let digit = chars.next()?.to_digit(16)?;
        value = value * 16 + digit;
    }
    Some(value)
}

/// Builds a [`SyntaxTree`] from a stream of tokens and start/finish events.
///
/// Protocol: `new` opens the `Document` node; every token of the input is pushed exactly once,
/// in order, with `token`; nodes are opened with `start_node` and closed with `finish_node`;
/// `finish` closes the document (and any node left open) and returns the tree.
pub struct TreeBuilder {
    text: Arc<str>,
    tokens: Vec<Token>,
    nodes: Vec<NodeData>,
    children: Vec<NodeId>,
    errors: Vec<SyntaxError>,
    /// Open nodes: (id, length of `pending_children` when opened).
    open: Vec<(NodeId, usize)>,
    pending_children: Vec<NodeId>,
    /// Index of the last non-trivia token pushed: the last own token of every node that
    /// closes while it is inside, found without scanning back over trailing trivia.
    last_significant_token: Option<usize>,
}

impl TreeBuilder {
    pub fn new(text: Arc<str>) -> TreeBuilder {
        let estimated_tokens = text.len() / 3 + 4;
        let mut builder = TreeBuilder {
            text,
            tokens: Vec::with_capacity(estimated_tokens),
            nodes: Vec::with_capacity(estimated_tokens / 2),
            children: Vec::with_capacity(estimated_tokens / 2),
            errors: Vec::new(),
            open: Vec::new(),
            pending_children: Vec::new(),
            last_significant_token: None,
        };
        builder.start_node(NodeKind::Document);
        builder
    }

    pub fn text(&self) -> &str {
        &self.text
    }

    /// Open a node; it becomes a child of the innermost open node.
    pub fn start_node(&mut self, kind: NodeKind) -> NodeId {
        let id = NodeId(self.nodes.len() as u32);
        let parent = self.open.last().map(|(parent, _)| *parent);
        let offset = self.tokens.last().map_or(0, |token| token.end);
        self.nodes.push(NodeData {
            kind,
            start: offset,
            end: offset,
            parent: parent.map_or(NO_PARENT, |parent| parent.0),
            children_start: 0,
            children_end: 0,
            tokens_start: self.tokens.len() as u32,
            tokens_end: self.tokens.len() as u32,
        });
        if parent.is_some() {
            self.pending_children.push(id);
        }
        self.open.push((id, self.pending_children.len()));
        id
    }

    /// Push the next token of the input into the innermost open node.
    pub fn token(&mut self, kind: TokenKind, range: TextRange) {
        debug_assert_eq!(
            range.start,
            self.tokens.last().map_or(0, |token| token.range().end),
            "tokens must cover the input without gaps"
        );
        if !kind.is_trivia() {
            self.last_significant_token = Some(self.tokens.len());
        }
        self.tokens.push(Token::new(kind, range));
    }

    /// Close the innermost open node.
    pub fn finish_node(&mut self) {
        if self.open.len() <= 1 {
            return; // the document is closed by `finish`
        }
        self.close_innermost();
    }

    fn close_innermost(&mut self) {
        let Some((id, pending_start)) = self.open.pop() else {
            return;
        };
        let children_start = self.children.len() as u32;
        self.children
            .extend(self.pending_children.drain(pending_start..));
        let children_end = self.children.len() as u32;
        let tokens_start = self.nodes[id.0 as usize].tokens_start as usize;
        let tokens_end = self.tokens.len();
        let last = self
            .last_significant_token
            .filter(|&index| index >= tokens_start)
            .map(|index| self.tokens[index]);
        // nodes open right before their first significant token, so this scan is short
        let first = last.and_then(|_| {
            self.tokens[tokens_start..tokens_end]
                .iter()
                .find(|token| !token.kind.is_trivia())
        });
        let data = &mut self.nodes[id.0 as usize];
        data.children_start = children_start;
        data.children_end = children_end;
        data.tokens_end = tokens_end as u32;
        if let (Some(first), Some(last)) = (first, last) {
            data.start = first.start;
            data.end = last.end;
        }
        // a node without tokens keeps the empty range where it was opened
    }

    /// Report a grammar error.
    pub fn error(&mut self, range: TextRange, message: impl Into<String>) {
        self.error_of_kind(SyntaxErrorKind::Grammar, range, message);
    }

    pub fn error_of_kind(
        &mut self,
        kind: SyntaxErrorKind,
        range: TextRange,
        message: impl Into<String>,
    ) {
        self.errors.push(SyntaxError {
            range,
            message: message.into(),
            kind,
        });
    }

    /// Close all open nodes and return the tree; its errors are sorted by position (stable, so
    /// errors at the same place keep the order they were reported in).
    pub fn finish(mut self) -> SyntaxTree {
        while !self.open.is_empty() {
            self.close_innermost();
        }
        self.errors
            .sort_by_key(|error| (error.range.start, error.range.end));
        let end = compact_offset(self.text.len());
        if let Some(document) = self.nodes.first_mut() {
            document.start = 0;
            document.end = end;
        }
        // the capacities were estimated from the text's length: give back what was not used,
        // since the server keeps the tree of every open document
        self.tokens.shrink_to_fit();
        self.nodes.shrink_to_fit();
        self.children.shrink_to_fit();
        self.errors.shrink_to_fit();
        SyntaxTree {
            text: self.text,
            tokens: self.tokens,
            nodes: self.nodes,
            children: self.children,
            errors: self.errors,
        }
    }
}
