//! Error-tolerant recursive-descent JSON parser over the lexer's tokens. It drives
//! [`TreeBuilder`] and recovers from the usual mistakes of hand-edited JSON (missing commas,
//! colons and values, unquoted keys, trailing commas, stray and mismatched brackets, unclosed
//! containers), so that the rest of the document still yields a usable tree.
//!
//! Trivia (whitespace, comments) goes to the innermost node open when it is met: leading trivia
//! is pushed before a node starts, so it belongs to the parent.
//!
//! Recovery, in short (the unit tests below show each case with its messages and ranges):
//! - a missing `,` between members or elements is reported on the next item, which is parsed;
//! - a key without `:` takes the following value (`"a" 1`), unless that is a string followed
//!   by `:`, which starts the next member (`"a" "b": 1`);
//! - a missing value (`"a": ,`) leaves a member without value; a key that is not a
//!   double-quoted string (`mark:`, `'mark':`, `1:`) sits in an `Error` node in the key's place,
//!   so the member still has its value (`Member::key` is `None`);
//! - words (`tru`, `NaN`), single-quoted strings and stray characters are `Error` nodes where a
//!   value stands; stray `:`/`,`/closers are `Error` nodes too;
//! - a closer of the wrong kind closes the current container when an enclosing container of
//!   its kind is open (`{"a": [1}` closes the array, then the object), otherwise it is taken as
//!   the current container's closer (`[1}`);
//! - containers still open at the end are reported at their opening bracket;
//! - content after the top-level value is one `Error` node;
//! - containers nested deeper than [`MAX_NESTING_DEPTH`] are one `Error` node each, skipped by
//!   counting brackets, so recursion stays bounded whatever the input.

use std::borrow::Cow;
use std::collections::{HashSet, VecDeque};
use std::sync::Arc;

use crate::syntax::lexer::{shorten, Lexer};
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
    parse_shared(Arc::from(text))
}

/// [`parse`] keeping `text` itself in the tree (no copy: the server shares one text between
/// its line index and the tree).
pub fn parse_shared(shared: Arc<str>) -> SyntaxTree {
    // the builder owns one handle; the lexer and parser borrow through the other
    let borrowed = shared.clone();
    let text: &str = &borrowed;
    let mut lexer = Lexer::new(text);
    let current = lexer.next_token();
    let mut parser = Parser {
        text,
        lexer,
        current,
        lookahead: VecDeque::new(),
        builder: TreeBuilder::new(shared),
        last_significant_end: 0,
        depth: 0,
        open_objects: 0,
        open_arrays: 0,
    };
    parser.parse_document();
    let Parser {
        lexer, mut builder, ..
    } = parser;
    for error in lexer.into_errors() {
        builder.error(error.range, error.message);
    }
    builder.finish()
}

struct Parser<'t> {
    text: &'t str,
    /// Tokens are pulled as the parser goes, so they are stored once, in the tree.
    lexer: Lexer<'t>,
    /// The next token to push.
    current: Option<Token>,
    /// Tokens lexed after `current` by a look-ahead, not yet pushed.
    lookahead: VecDeque<Token>,
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
        while let Some(token) = self.current {
            if !token.kind.is_trivia() {
                break;
            }
            self.builder.token(token.kind, token.range());
            self.advance();
        }
    }

    fn advance(&mut self) {
        self.current = match self.lookahead.pop_front() {
            Some(token) => Some(token),
            None => self.lexer.next_token(),
        };
    }

    /// The next token (call `skip_trivia` first to make it a significant one).
    fn current(&self) -> Option<Token> {
        self.current
    }

    fn current_kind(&self) -> Option<TokenKind> {
        self.current.map(|token| token.kind)
    }

    /// Push the next token, whatever it is.
    fn bump(&mut self) {
        if let Some(token) = self.current {
            self.builder.token(token.kind, token.range());
            if !token.kind.is_trivia() {
                self.last_significant_end = token.range().end;
            }
            self.advance();
        }
    }

    /// The last character of the value pushed last: where a missing `,` belongs.
    fn end_of_previous_value(&self) -> TextRange {
        let end = self.last_significant_end;
        let start = self.text[..end]
            .char_indices()
            .next_back()
            .map_or(end, |(index, _)| index);
        TextRange::new(start, end)
    }

    /// The kind of the first significant token after the current one, without consuming.
    fn kind_after_current(&mut self) -> Option<TokenKind> {
        let mut index = 0;
        loop {
            if index == self.lookahead.len() {
                let token = self.lexer.next_token()?;
                self.lookahead.push_back(token);
            }
            let kind = self.lookahead[index].kind;
            if !kind.is_trivia() {
                return Some(kind);
            }
            index += 1;
        }
    }

    fn token_text(&self, token: Token) -> &'t str {
        self.text
            .get(token.range().start..token.range().end)
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
                TextRange::new(first.range().start, self.last_significant_end),
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
        self.builder.error(token.range(), message);
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
        self.builder.error(token.range(), message);
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
            opener.range(),
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
                    .error(opener.range(), "unclosed object: expected `}`");
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
                        .error(opener.range(), "unclosed object: expected `}`");
                    break;
                }
                TokenKind::RBracket => {
                    self.report_trailing_comma(expecting_member, last_comma);
                    self.builder.error(token.range(), "expected `}`, found `]`");
                    self.bump();
                    break;
                }
                TokenKind::Comma => {
                    if expecting_member {
                        self.builder
                            .error(token.range(), "expected a member before `,`");
                    }
                    self.bump();
                    last_comma = Some(token.range());
                    expecting_member = true;
                }
                _ => {
                    if !expecting_member {
                        let range = self.end_of_previous_value();
                        self.builder.error(range, "missing `,` after this member");
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
                if let Err(key) = seen_keys.insert(key) {
                    self.builder.error_of_kind(
                        SyntaxErrorKind::DuplicateKey,
                        key_token.range(),
                        format!("duplicate key `{}`", shorten(&key)),
                    );
                }
            }
            TokenKind::Colon => {
                // an empty `Error` node holds the key's place, so the value is not taken for it
                self.builder.start_node(NodeKind::Error);
                self.builder.finish_node();
                self.builder
                    .error(key_token.range(), "missing key before `:`");
            }
            TokenKind::Error => self.error_token_node(key_token, Place::Key),
            _ => {
                self.builder.start_node(NodeKind::Error);
                self.parse_value();
                self.builder.finish_node();
                self.builder.error(
                    TextRange::new(key_token.range().start, self.last_significant_end),
                    "keys must be strings in double quotes",
                );
            }
        }
        let key_range = TextRange::new(
            key_token.range().start,
            self.last_significant_end.max(key_token.range().start),
        );

        self.skip_trivia();
        let Some(colon) = self
            .current()
            .filter(|token| token.kind == TokenKind::Colon)
        else {
            self.builder.error(key_range, "expected `:` after key");
            if self.value_follows_without_colon() {
                self.parse_value();
            }
            self.builder.finish_node();
            return;
        };
        self.bump();
        self.skip_trivia();
        while let Some(extra_colon) = self
            .current()
            .filter(|token| token.kind == TokenKind::Colon)
        {
            self.stray_token_node(extra_colon);
            self.skip_trivia();
        }
        if !self.parse_value() {
            self.builder.error(colon.range(), "missing value after `:`");
        }
        self.builder.finish_node();
    }

    /// After a key without a colon: does a value follow (`"a" 1`), or the next member (`"a" "b": 1`)?
    fn value_follows_without_colon(&mut self) -> bool {
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
                    .error(opener.range(), "unclosed array: expected `]`");
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
                        .error(opener.range(), "unclosed array: expected `]`");
                    break;
                }
                TokenKind::RBrace => {
                    self.report_trailing_comma(expecting_value, last_comma);
                    self.builder.error(token.range(), "expected `]`, found `}`");
                    self.bump();
                    break;
                }
                TokenKind::Comma => {
                    if expecting_value {
                        self.builder
                            .error(token.range(), "missing value before `,`");
                    }
                    self.bump();
                    last_comma = Some(token.range());
                    expecting_value = true;
                }
                TokenKind::Colon => self.stray_token_node(token),
                _ => {
                    if !expecting_value {
                        let range = self.end_of_previous_value();
                        self.builder.error(range, "missing `,` after this value");
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

    /// Record `key`; give it back as the error when it was seen before.
    fn insert(&mut self, key: Cow<'t, str>) -> Result<(), Cow<'t, str>> {
        let is_new = match &mut self.many {
            Some(many) => {
                if many.contains(&key) {
                    false
                } else {
                    many.insert(key.clone());
                    true
                }
            }
            None if self.few.contains(&key) => false,
            None => {
                self.few.push(key.clone());
                if self.few.len() > Self::LIST_LIMIT {
                    self.many = Some(self.few.drain(..).collect());
                }
                true
            }
        };
        if is_new {
            Ok(())
        } else {
            Err(key)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::syntax::tree::Node;

    /// Parse a fixture and compare its errors with the annotations in it.
    ///
    /// A fixture line made of spaces, carets and a message annotates the line above it: the
    /// carets mark the error's byte range on that line. The other lines, joined by `\n`, are the
    /// input. Returns the tree for structure checks.
    fn check(fixture: &str) -> SyntaxTree {
        let mut input = String::new();
        let mut expected: Vec<(TextRange, String)> = Vec::new();
        let mut last_line_start = 0;
        for line in fixture.trim_matches('\n').lines() {
            let trimmed = line.trim_start();
            if trimmed.starts_with('^') {
                let caret_start = line.len() - trimmed.len();
                let carets = trimmed.len() - trimmed.trim_start_matches('^').len();
                let message = trimmed.trim_start_matches('^').trim().to_string();
                let start = last_line_start + caret_start;
                expected.push((TextRange::new(start, start + carets), message));
                continue;
            }
            if !input.is_empty() {
                input.push('\n');
            }
            last_line_start = input.len();
            input.push_str(line);
        }
        let tree = parse(&input);
        let mut actual: Vec<(TextRange, String)> = tree
            .errors()
            .iter()
            .map(|error| (error.range, error.message.clone()))
            .collect();
        expected.sort_by_key(|(range, _)| (range.start, range.end));
        actual.sort_by_key(|(range, _)| (range.start, range.end));
        let show = |errors: &[(TextRange, String)]| -> Vec<String> {
            errors
                .iter()
                .map(|(range, message)| {
                    format!(
                        "{:?} `{}`: {message}",
                        range,
                        &input[range.start..range.end]
                    )
                })
                .collect()
        };
        assert_eq!(show(&actual), show(&expected), "input:\n{input}");
        let concatenated: String = tree
            .tokens()
            .iter()
            .map(|token| &input[token.range().start..token.range().end])
            .collect();
        assert_eq!(concatenated, input, "the tokens cover the input");
        tree
    }

    fn root(tree: &SyntaxTree) -> Node<'_> {
        tree.root_value().expect("the document has a value")
    }

    fn number(node: Option<Node<'_>>) -> Option<f64> {
        node.and_then(|node| node.as_f64())
    }

    fn keys(node: Node<'_>) -> Vec<Option<String>> {
        node.members()
            .map(|member| member.key_text().map(|key| key.into_owned()))
            .collect()
    }

    #[test]
    fn valid_documents_have_no_errors_and_the_expected_structure() {
        let tree = check(
            r#"
{"mark": "bar", "bind": {"x": "orchard", "y": {"column": "crates", "bins": 12}},
 "emphasis": ["crates", "row\u00e9"], "frame": {"width": 640.5, "zero": true, "n": null}}
"#,
        );
        let spec = root(&tree);
        assert_eq!(spec.kind(), NodeKind::Object);
        assert_eq!(
            spec.get("mark").and_then(|mark| mark.as_str()).as_deref(),
            Some("bar")
        );
        let y = spec.get("bind").and_then(|bind| bind.get("y"));
        assert_eq!(number(y.and_then(|y| y.get("bins"))), Some(12.0));
        let emphasis: Vec<String> = spec
            .get("emphasis")
            .map(|array| {
                array
                    .elements()
                    .filter_map(|e| e.as_str())
                    .map(|s| s.into_owned())
                    .collect()
            })
            .unwrap_or_default();
        assert_eq!(emphasis, vec!["crates".to_string(), "rowé".to_string()]);
        let frame = spec.get("frame");
        assert_eq!(number(frame.and_then(|f| f.get("width"))), Some(640.5));
        assert_eq!(
            frame.and_then(|f| f.get("zero")).and_then(|z| z.as_bool()),
            Some(true)
        );
        assert!(frame.and_then(|f| f.get("n")).is_some_and(|n| n.is_null()));
    }

    #[test]
    fn a_leading_byte_order_mark_is_accepted() {
        // RFC 8259 section 8.1: a parser MAY ignore a byte-order mark
        let tree = check("\u{FEFF}[1]");
        assert_eq!(root(&tree).elements().count(), 1);
    }

    #[test]
    fn empty_documents() {
        let tree = parse("");
        assert_eq!(tree.errors().len(), 1);
        assert_eq!(tree.errors()[0].message, "empty document");
        assert_eq!(tree.errors()[0].range, TextRange::new(0, 0));
        check(
            r#"
   
^^^ empty document
"#,
        );
    }

    #[test]
    fn missing_commas_are_inserted_virtually() {
        let tree = check(
            r#"
{"mark": "bar" "bind": {}}
             ^ missing `,` after this member
"#,
        );
        let spec = root(&tree);
        assert_eq!(keys(spec), vec![Some("mark".into()), Some("bind".into())]);
        assert_eq!(
            spec.get("mark").and_then(|m| m.as_str()).as_deref(),
            Some("bar")
        );
        assert_eq!(spec.get("bind").map(|b| b.kind()), Some(NodeKind::Object));

        let tree = check(
            r#"
[1 2, 3]
 ^ missing `,` after this value
"#,
        );
        let values: Vec<f64> = root(&tree).elements().filter_map(|e| e.as_f64()).collect();
        assert_eq!(values, vec![1.0, 2.0, 3.0]);
    }

    #[test]
    fn a_missing_comma_is_reported_at_the_end_of_the_value_that_needs_it() {
        // not at the start of the next line: the `,` belongs after `"bar"`
        let text = "{\n  \"mark\": \"bar\"\n  \"bind\": {}\n}\n";
        let tree = parse(text);
        assert_eq!(tree.errors().len(), 1);
        assert_eq!(tree.errors()[0].message, "missing `,` after this member");
        assert_eq!(tree.errors()[0].range, TextRange::new(16, 17));
        assert_eq!(&text[16..17], "\"");
        assert_eq!(text.find("\"bar\"").map(|start| start + 5), Some(17));
        // after a nested value, the error sits on its closing bracket
        let text = "[[1, 2]\n [3]]";
        let tree = parse(text);
        assert_eq!(tree.errors().len(), 1);
        assert_eq!(tree.errors()[0].range, TextRange::new(6, 7));
        assert_eq!(&text[6..7], "]");
    }

    #[test]
    fn missing_colons() {
        let tree = check(
            r#"
{"a" 1, "b": 2}
 ^^^ expected `:` after key
"#,
        );
        assert_eq!(number(root(&tree).get("a")), Some(1.0));
        assert_eq!(number(root(&tree).get("b")), Some(2.0));

        // the string is followed by `:`, so it is the next key, not the value
        let tree = check(
            r#"
{"a" "b": 2}
 ^^^ expected `:` after key
   ^ missing `,` after this member
"#,
        );
        assert_eq!(keys(root(&tree)), vec![Some("a".into()), Some("b".into())]);
        assert_eq!(root(&tree).get("a"), None);
        assert_eq!(number(root(&tree).get("b")), Some(2.0));

        check(
            r#"
{"a"}
 ^^^ expected `:` after key
"#,
        );
    }

    #[test]
    fn missing_values() {
        let tree = check(
            r#"
{"a": , "b": 2, "c":}
    ^ missing value after `:`
                   ^ missing value after `:`
"#,
        );
        assert_eq!(keys(root(&tree)).len(), 3);
        assert_eq!(root(&tree).get("a"), None);
        assert_eq!(number(root(&tree).get("b")), Some(2.0));

        let tree = check(
            r#"
[,1,,2,]
 ^ missing value before `,`
    ^ missing value before `,`
      ^ trailing comma
"#,
        );
        assert_eq!(root(&tree).elements().count(), 2);
    }

    #[test]
    fn keys_that_are_not_double_quoted_strings() {
        let tree = check(
            r#"
{mark: "bar", 'bind': {}, "ok": 1}
 ^^^^ unquoted key `mark`, keys need double quotes
              ^^^^^^ single-quoted key, keys need double quotes
"#,
        );
        let spec = root(&tree);
        let members: Vec<_> = spec.members().collect();
        assert_eq!(members.len(), 3);
        // a member whose key is an error node has no key, but keeps its value
        assert_eq!(members[0].key(), None);
        assert_eq!(
            members[0].value().and_then(|v| v.as_str()).as_deref(),
            Some("bar")
        );
        assert_eq!(members[1].value().map(|v| v.kind()), Some(NodeKind::Object));
        assert_eq!(number(spec.get("ok")), Some(1.0));

        let tree = check(
            r#"
{: "x", 1: 2, [3]: 4}
 ^ missing key before `:`
        ^ keys must be strings in double quotes
              ^^^ keys must be strings in double quotes
"#,
        );
        let members: Vec<_> = root(&tree).members().collect();
        assert_eq!(members.len(), 3);
        assert_eq!(members[0].key(), None);
        assert_eq!(
            members[0].value().and_then(|v| v.as_str()).as_deref(),
            Some("x")
        );
        assert_eq!(number(members[1].value()), Some(2.0));
        assert_eq!(number(members[2].value()), Some(4.0));
    }

    #[test]
    fn values_that_are_not_json() {
        let tree = check(
            r#"
["a", 'b', tru, True, NaN, bar, @#]
      ^^^ single-quoted string, JSON strings need double quotes
           ^^^ incomplete literal `tru`, expected `true`
                ^^^^ literals are lowercase: expected `true`
                      ^^^ `NaN` is not a JSON value
                           ^^^ unknown word `bar`, strings need double quotes
                                ^^ unexpected characters `@#`
"#,
        );
        // error values take a place between the commas but are not elements
        assert_eq!(root(&tree).elements().count(), 1);
        assert_eq!(root(&tree).children().count(), 7);
    }

    #[test]
    fn trailing_commas() {
        let tree = check(
            r#"
{"a": [1, 2,], "b": 3,}
           ^ trailing comma
                     ^ trailing comma
"#,
        );
        assert_eq!(root(&tree).get("a").map(|a| a.elements().count()), Some(2));
        check(
            r#"
{"a": 1,,}
        ^ expected a member before `,`
        ^ trailing comma
"#,
        );
    }

    #[test]
    fn stray_tokens_are_wrapped_in_error_nodes() {
        let tree = check(
            r#"
[1 : 2]
   ^ unexpected `:`
   ^ missing `,` after this value
"#,
        );
        assert_eq!(root(&tree).elements().count(), 2);
        let tree = check(
            r#"
{"a":: 1}
     ^ unexpected `:`
"#,
        );
        assert_eq!(number(root(&tree).get("a")), Some(1.0));
        let tree = check(
            r#"
], {"a": 1}
^ unexpected `]`
 ^ unexpected `,`
"#,
        );
        assert_eq!(number(root(&tree).get("a")), Some(1.0));
    }

    #[test]
    fn unclosed_containers_at_the_end() {
        let tree = check(
            r#"
{"a": [1, 2
      ^ unclosed array: expected `]`
^ unclosed object: expected `}`
"#,
        );
        assert_eq!(root(&tree).get("a").map(|a| a.elements().count()), Some(2));
        check(
            r#"
{"a": {"b": 1}, "c": "open
                     ^^^^^ unterminated string
^ unclosed object: expected `}`
"#,
        );
    }

    #[test]
    fn mismatched_closers_close_the_inner_container() {
        let tree = check(
            r#"
{"a": [1, 2}, "b": 3}
      ^ unclosed array: expected `]`
            ^^^^^^^^^ unexpected content after the document
"#,
        );
        // the `}` closes the object, so what follows is outside the document
        assert_eq!(root(&tree).get("a").map(|a| a.elements().count()), Some(2));

        let tree = check(
            r#"
[[{"a": 1], 2]
  ^ unclosed object: expected `}`
"#,
        );
        // the `]` closes the inner array, the outer one goes on
        assert_eq!(root(&tree).elements().count(), 2);

        // no enclosing object: the wrong closer closes the array
        let tree = check(
            r#"
[1, 2}
     ^ expected `]`, found `}`
"#,
        );
        assert_eq!(root(&tree).elements().count(), 2);
    }

    #[test]
    fn content_after_the_document() {
        let tree = check(
            r#"
{"a": 1} {"b": 2} x
         ^^^^^^^^^^ unexpected content after the document
"#,
        );
        assert_eq!(number(root(&tree).get("a")), Some(1.0));
        let last = tree.document().children().last();
        assert_eq!(last.map(|node| node.kind()), Some(NodeKind::Error));
    }

    #[test]
    fn duplicate_keys_are_reported_on_the_later_key() {
        let tree = check(
            r#"
{"mark": "bar", "bind": {"x": 1, "x": 2}, "mark": "line", "m\u0061rk": 0}
                                 ^^^ duplicate key `x`
                                          ^^^^^^ duplicate key `mark`
                                                          ^^^^^^^^^^^ duplicate key `mark`
"#,
        );
        assert!(tree
            .errors()
            .iter()
            .all(|error| error.kind == SyntaxErrorKind::DuplicateKey));
        // the first member wins for `get`
        assert_eq!(
            root(&tree).get("mark").and_then(|m| m.as_str()).as_deref(),
            Some("bar")
        );
        // many keys: the set takes over from the list
        let many: Vec<String> = (0..40)
            .map(|index| format!("\"k{index}\": {index}"))
            .collect();
        let text = format!("{{{}, \"k39\": 0}}", many.join(", "));
        let tree = parse(&text);
        assert_eq!(tree.errors().len(), 1);
        assert_eq!(tree.errors()[0].message, "duplicate key `k39`");
    }

    #[test]
    fn comments_are_trivia_but_errors() {
        let tree = check(
            r#"
{"a": 1, // the count
         ^^^^^^^^^^^^ comments are not allowed in JSON
 "b": /* two */ 2}
      ^^^^^^^^^ comments are not allowed in JSON
"#,
        );
        assert_eq!(number(root(&tree).get("b")), Some(2.0));
    }

    #[test]
    fn an_unterminated_string_ends_at_the_end_of_its_line() {
        let tree = check(
            r#"
{"a": "open,
      ^^^^^^ unterminated string
           ^ missing `,` after this member
 "b": 2}
"#,
        );
        assert_eq!(
            root(&tree).get("a").and_then(|a| a.as_str()).as_deref(),
            Some("open,")
        );
        assert_eq!(number(root(&tree).get("b")), Some(2.0));
    }

    #[test]
    fn nesting_beyond_the_bound_is_one_error_node() {
        let depth = MAX_NESTING_DEPTH + 10;
        let text = format!("{}{}", "[".repeat(depth), "]".repeat(depth));
        let tree = parse(&text);
        assert_eq!(tree.errors().len(), 1);
        assert_eq!(tree.errors()[0].message, "nesting deeper than 256 levels");
        assert_eq!(
            tree.errors()[0].range,
            TextRange::new(MAX_NESTING_DEPTH, MAX_NESTING_DEPTH + 1)
        );
        // the innermost array that fits holds one error node
        let mut node = root(&tree);
        for _ in 1..MAX_NESTING_DEPTH {
            node = node.elements().next().expect("nested array");
        }
        assert_eq!(node.kind(), NodeKind::Array);
        let children: Vec<_> = node.children().map(|child| child.kind()).collect();
        assert_eq!(children, vec![NodeKind::Error]);
    }
}
