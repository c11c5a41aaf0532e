//! Error-tolerant recursive-descent JSON parser over the lexer's tokens. It drives
//! [`TreeBuilder`] and recovers from the usual mistakes of hand-edited JSON (missing commas,
//! colons and values, unquoted keys, trailing commas, stray and mismatched brackets, unclosed
//! containers), so that the rest of the document still yields a usable tree.
//!
//! Trivia (whitespace, comments) goes to the innermost node open when it is met: leading trivia
//! is pushed before a node starts, so it belongs to the parent.

use std::borrow::Cow;
use std::collections::HashSet;
use std::sync::Arc;

use crate::syntax::lexer::{self, shorten};
use crate::syntax::tree::{
    unescape_string_literal, NodeKind, SyntaxErrorKind, SyntaxTree, Token, TokenKind, TreeBuilder,
};
use crate::text_range::TextRange;

/// Deeper nesting than this is an error node, so deep input cannot overflow the stack.
pub const MAX_NESTING_DEPTH: usize = 256;

/// Parse `text` into a lossless tree. Never fails, never panics; linear in the input.
///
/// The input is a `&str`, so it is valid UTF-8: front ends replace invalid UTF-8 by U+FFFD
/// (`String::from_utf8_lossy`) before parsing and report the invalid bytes themselves.
pub fn parse(text: &str) -> SyntaxTree {
    let lexed = lexer::lex(text);
    let mut builder = TreeBuilder::new(Arc::from(text));
    for error in lexed.errors {
        builder.error(error.range, error.message);
    }
    let mut parser = Parser {
        text,
        tokens: &lexed.tokens,
        position: 0,
        builder,
        last_significant_end: 0,
        depth: 0,
        open_objects: 0,
        open_arrays: 0,
    };
    parser.parse_document();
    parser.builder.finish()
}

struct Parser<'t> {
    text: &'t str,
    tokens: &'t [Token],
    /// Index of the next token to push.
    position: usize,
    builder: TreeBuilder,
    /// End of the last non-trivia token pushed.
    last_significant_end: usize,
    /// Containers open right now.
    depth: usize,
    open_objects: usize,
    open_arrays: usize,
}

/// Where an `Error` token stands, which decides how it is described.
#[derive(Clone, Copy, PartialEq, Eq)]
enum Place {
    Key,
    Value,
}

impl<'t> Parser<'t> {
    // ---- token cursor ----

    /// Push trivia tokens into the innermost open node.
    fn skip_trivia(&mut self) {
        while let Some(token) = self.tokens.get(self.position) {
            if !token.kind.is_trivia() {
                break;
            }
            self.builder.token(token.kind, token.range);
            self.position += 1;
        }
    }

    /// The next token (call `skip_trivia` first to make it a significant one).
    fn current(&self) -> Option<Token> {
        self.tokens.get(self.position).copied()
    }

    fn current_kind(&self) -> Option<TokenKind> {
        self.current().map(|token| token.kind)
    }

    /// Push the next token, whatever it is.
    fn bump(&mut self) {
        if let Some(token) = self.tokens.get(self.position) {
            self.builder.token(token.kind, token.range);
            if !token.kind.is_trivia() {
                self.last_significant_end = token.range.end;
            }
            self.position += 1;
        }
    }

    /// The kind of the first significant token after the current one, without consuming.
    fn kind_after_current(&self) -> Option<TokenKind> {
        self.tokens
            .get(self.position + 1..)?
            .iter()
            .map(|token| token.kind)
            .find(|kind| !kind.is_trivia())
    }

    fn token_text(&self, token: Token) -> &'t str {
        self.text
            .get(token.range.start..token.range.end)
            .unwrap_or_default()
    }

    // ---- grammar ----

    fn parse_document(&mut self) {
        self.skip_trivia();
        if self.current().is_none() {
            self.builder
                .error(TextRange::new(0, self.text.len()), "empty document");
            return;
        }
        // tokens that cannot start a value are reported one by one until a value comes
        while let Some(token) = self.current() {
            if starts_value(token.kind) {
                self.parse_value();
                break;
            }
            self.stray_token_node(token);
            self.skip_trivia();
        }
        self.skip_trivia();
        if let Some(first) = self.current() {
            self.builder.start_node(NodeKind::Error);
            while self.current().is_some() {
                self.bump();
            }
            self.builder.finish_node();
            self.builder.error(
                TextRange::new(first.range.start, self.last_significant_end),
                "unexpected content after the document",
            );
        }
    }

    /// Parse a value at the current (significant) token. Returns false, consuming nothing, when
    /// the token cannot start a value (a closer, comma, colon or the end of the input).
    fn parse_value(&mut self) -> bool {
        self.skip_trivia();
        let Some(token) = self.current() else {
            return false;
        };
        match token.kind {
            TokenKind::LBrace | TokenKind::LBracket if self.depth >= MAX_NESTING_DEPTH => {
                self.swallow_too_deep_container(token)
            }
            TokenKind::LBrace => self.parse_object(token),
            TokenKind::LBracket => self.parse_array(token),
            TokenKind::String => self.scalar_node(NodeKind::String),
            TokenKind::Number => self.scalar_node(NodeKind::Number),
            TokenKind::True => self.scalar_node(NodeKind::True),
            TokenKind::False => self.scalar_node(NodeKind::False),
            TokenKind::Null => self.scalar_node(NodeKind::Null),
            TokenKind::Error => self.error_token_node(token, Place::Value),
            TokenKind::RBrace
            | TokenKind::RBracket
            | TokenKind::Colon
            | TokenKind::Comma
            | TokenKind::Whitespace
            | TokenKind::Comment => return false,
        }
        true
    }

    fn scalar_node(&mut self, kind: NodeKind) {
        self.builder.start_node(kind);
        self.bump();
        self.builder.finish_node();
    }

    /// An `Error` token (a word, a single-quoted string, stray characters) in its own node.
    fn error_token_node(&mut self, token: Token, place: Place) {
        self.builder.start_node(NodeKind::Error);
        self.bump();
        self.builder.finish_node();
        let message = describe_error_token(self.token_text(token), place);
        self.builder.error(token.range, message);
    }

    /// A token that has no place where it stands, in an `Error` node.
    fn stray_token_node(&mut self, token: Token) {
        if token.kind == TokenKind::Error {
            self.error_token_node(token, Place::Value);
            return;
        }
        self.builder.start_node(NodeKind::Error);
        self.bump();
        self.builder.finish_node();
        let message = format!("unexpected `{}`", shorten(self.token_text(token)));
        self.builder.error(token.range, message);
    }

    /// A container opened beyond [`MAX_NESTING_DEPTH`]: everything up to its matching closer
    /// (counting brackets and braces alike, without recursion) goes into one `Error` node.
    fn swallow_too_deep_container(&mut self, opener: Token) {
        self.builder.start_node(NodeKind::Error);
        let mut balance = 0usize;
        while let Some(token) = self.current() {
            match token.kind {
                TokenKind::LBrace | TokenKind::LBracket => balance += 1,
                TokenKind::RBrace | TokenKind::RBracket => balance -= 1,
                _ => {}
            }
            self.bump();
            if balance == 0 {
                break;
            }
        }
        self.builder.finish_node();
        self.builder.error(
            opener.range,
            format!("nesting deeper than {MAX_NESTING_DEPTH} levels"),
        );
    }

    fn parse_object(&mut self, opener: Token) {
        self.builder.start_node(NodeKind::Object);
        self.bump();
        self.depth += 1;
        self.open_objects += 1;
        let mut seen_keys = SeenKeys::default();
        let mut expecting_member = true;
        let mut last_comma: Option<TextRange> = None;
        loop {
            self.skip_trivia();
            let Some(token) = self.current() else {
                self.builder
                    .error(opener.range, "unclosed object: expected `}`");
                break;
            };
            match token.kind {
                TokenKind::RBrace => {
                    self.report_trailing_comma(expecting_member, last_comma);
                    self.bump();
                    break;
                }
                TokenKind::RBracket if self.open_arrays > 0 => {
                    // `[{"a": 1]`: close the object, the enclosing array takes the `]`
                    self.builder
                        .error(opener.range, "unclosed object: expected `}`");
                    break;
                }
                TokenKind::RBracket => {
                    self.report_trailing_comma(expecting_member, last_comma);
                    self.builder
                        .error(token.range, "expected `}`, found `]`");
                    self.bump();
                    break;
                }
                TokenKind::Comma => {
                    if expecting_member {
                        self.builder
                            .error(token.range, "expected a member before `,`");
                    }
                    self.bump();
                    last_comma = Some(token.range);
                    expecting_member = true;
                }
                _ => {
                    if !expecting_member {
                        self.builder
                            .error(token.range, "expected `,` between members");
                    }
                    self.parse_member(&mut seen_keys);
                    expecting_member = false;
                }
            }
        }
        self.depth -= 1;
        self.open_objects -= 1;
        self.builder.finish_node();
    }

    fn report_trailing_comma(&mut self, expecting: bool, last_comma: Option<TextRange>) {
        if let (true, Some(comma)) = (expecting, last_comma) {
            self.builder.error(comma, "trailing comma");
        }
    }

    /// A member, starting at a token that is not a closer or a comma.
    fn parse_member(&mut self, seen_keys: &mut SeenKeys<'t>) {
        self.builder.start_node(NodeKind::Member);
        let Some(key_token) = self.current() else {
            self.builder.finish_node();
            return;
        };
        match key_token.kind {
            TokenKind::String => {
                self.scalar_node(NodeKind::String);
                let key = unescape_string_literal(self.token_text(key_token));
                let message = format!("duplicate key `{}`", shorten(&key));
                if !seen_keys.insert(key) {
                    self.builder.error_of_kind(
                        SyntaxErrorKind::DuplicateKey,
                        key_token.range,
                        message,
                    );
                }
            }
            TokenKind::Colon => {
                // an empty `Error` node holds the key's place, so the value is not taken for it
                self.builder.start_node(NodeKind::Error);
                self.builder.finish_node();
                self.builder
                    .error(key_token.range, "missing key before `:`");
            }
            TokenKind::Error => self.error_token_node(key_token, Place::Key),
            _ => {
                self.builder.start_node(NodeKind::Error);
                self.parse_value();
                self.builder.finish_node();
                self.builder.error(
                    TextRange::new(key_token.range.start, self.last_significant_end),
                    "keys must be strings in double quotes",
                );
            }
        }
        let key_range = TextRange::new(
            key_token.range.start,
            self.last_significant_end.max(key_token.range.start),
        );

        self.skip_trivia();
        let Some(colon) = self.current().filter(|token| token.kind == TokenKind::Colon) else {
            self.builder.error(key_range, "expected `:` after key");
            if self.value_follows_without_colon() {
                self.parse_value();
            }
            self.builder.finish_node();
            return;
        };
        self.bump();
        self.skip_trivia();
        while let Some(extra_colon) = self.current().filter(|token| token.kind == TokenKind::Colon)
        {
            self.stray_token_node(extra_colon);
            self.skip_trivia();
        }
        if !self.parse_value() {
            self.builder
                .error(colon.range, "missing value after `:`");
        }
        self.builder.finish_node();
    }

    /// After a key without a colon: does a value follow (`"a" 1`), or the next member (`"a" "b": 1`)?
    fn value_follows_without_colon(&self) -> bool {
        match self.current_kind() {
            Some(
                TokenKind::LBrace
                | TokenKind::LBracket
                | TokenKind::Number
                | TokenKind::True
                | TokenKind::False
                | TokenKind::Null,
            ) => true,
            Some(TokenKind::String | TokenKind::Error) => {
                self.kind_after_current() != Some(TokenKind::Colon)
            }
            _ => false,
        }
    }

    fn parse_array(&mut self, opener: Token) {
        self.builder.start_node(NodeKind::Array);
        self.bump();
        self.depth += 1;
        self.open_arrays += 1;
        let mut expecting_value = true;
        let mut last_comma: Option<TextRange> = None;
        loop {
            self.skip_trivia();
            let Some(token) = self.current() else {
                self.builder
                    .error(opener.range, "unclosed array: expected `]`");
                break;
            };
            match token.kind {
                TokenKind::RBracket => {
                    self.report_trailing_comma(expecting_value, last_comma);
                    self.bump();
                    break;
                }
                TokenKind::RBrace if self.open_objects > 0 => {
                    // `{"a": [1}`: close the array, the enclosing object takes the `}`
                    self.builder
                        .error(opener.range, "unclosed array: expected `]`");
                    break;
                }
                TokenKind::RBrace => {
                    self.report_trailing_comma(expecting_value, last_comma);
                    self.builder
                        .error(token.range, "expected `]`, found `}`");
                    self.bump();
                    break;
                }
                TokenKind::Comma => {
                    if expecting_value {
                        self.builder
                            .error(token.range, "missing value before `,`");
                    }
                    self.bump();
                    last_comma = Some(token.range);
                    expecting_value = true;
                }
                TokenKind::Colon => self.stray_token_node(token),
                _ => {
                    if !expecting_value {
                        self.builder
                            .error(token.range, "expected `,` between elements");
                    }
                    self.parse_value();
                    expecting_value = false;
                }
            }
        }
        self.depth -= 1;
        self.open_arrays -= 1;
        self.builder.finish_node();
    }
}

fn starts_value(kind: TokenKind) -> bool {
    matches!(
        kind,
        TokenKind::LBrace
            | TokenKind::LBracket
            | TokenKind::String
            | TokenKind::Number
            | TokenKind::True
            | TokenKind::False
            | TokenKind::Null
            | TokenKind::Error
    )
}

const LITERALS: [&str; 3] = ["true", "false", "null"];

/// The message for an `Error` token: a word, a single-quoted string or stray characters.
fn describe_error_token(text: &str, place: Place) -> String {
    let Some(first) = text.chars().next() else {
        return "unexpected end of input".to_string();
    };
    if first == '\'' {
        return match place {
            Place::Key => "single-quoted key, keys need double quotes".to_string(),
            Place::Value => "single-quoted string, JSON strings need double quotes".to_string(),
        };
    }
    if first.is_alphabetic() || first == '_' || first == '$' {
        let word = shorten(text);
        if place == Place::Key {
            return format!("unquoted key `{word}`, keys need double quotes");
        }
        let lowercase = text.to_lowercase();
        if let Some(literal) = LITERALS.iter().find(|literal| **literal == lowercase) {
            return format!("literals are lowercase: expected `{literal}`");
        }
        if let Some(literal) = LITERALS.iter().find(|literal| literal.starts_with(text)) {
            return format!("incomplete literal `{word}`, expected `{literal}`");
        }
        if matches!(text, "NaN" | "Infinity" | "undefined") {
            return format!("`{word}` is not a JSON value");
        }
        return format!("unknown word `{word}`, strings need double quotes");
    }
    if text.chars().nth(1).is_some() {
        format!("unexpected characters `{}`", shorten(text))
    } else {
        format!("unexpected character `{}`", shorten(text))
    }
}

/// The keys of one object seen so far: a short list, then a hash set once it grows.
#[derive(Default)]
struct SeenKeys<'t> {
    few: Vec<Cow<'t, str>>,
    many: Option<HashSet<Cow<'t, str>>>,
}

impl<'t> SeenKeys<'t> {
    const LIST_LIMIT: usize = 16;

    /// Record `key`; false when it was seen before.
    fn insert(&mut self, key: Cow<'t, str>) -> bool {
        if let Some(many) = &mut self.many {
            return many.insert(key);
        }
        if self.few.contains(&key) {
            return false;
        }
        self.few.push(key);
        if self.few.len() > Self::LIST_LIMIT {
            self.many = Some(self.few.drain(..).collect());
        }
        true
    }
}
