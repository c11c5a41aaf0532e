//! JSON lexer: splits the input into tokens that cover every byte, in order, whitespace and
//! comments included, so that concatenating the token texts gives the input back.
//!
//! The lexer reports what is wrong *inside* a token it recognises (bad escapes, control
//! characters and unterminated strings, malformed numbers, comments). Bytes that start no JSON
//! token (words such as `NaN`, single-quoted strings, stray characters) become `Error` tokens
//! without a message: the parser describes them, because the right wording depends on where
//! they stand (an unquoted key reads differently from a misspelled literal).
//!
//! All stops happen on ASCII bytes or at char boundaries found through `char` decoding, so every
//! token range lies on char boundaries of the input.

use crate::syntax::tree::{Token, TokenKind};
use crate::text_range::TextRange;

/// A problem found inside a token, reported with the range of the offending part.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) struct LexError {
    pub range: TextRange,
    pub message: String,
}

/// The tokens of `text` and the problems found inside them, both in text order.
#[cfg(test)]
pub(crate) struct LexedText {
    pub tokens: Vec<Token>,
    pub errors: Vec<LexError>,
}

const BYTE_ORDER_MARK: char = '\u{FEFF}';

/// Split all of `text` into tokens (the parser pulls them one by one instead).
#[cfg(test)]
pub(crate) fn lex(text: &str) -> LexedText {
    let mut lexer = Lexer::new(text);
    let mut tokens = Vec::new();
    while let Some(token) = lexer.next_token() {
        tokens.push(token);
    }
    LexedText {
        tokens,
        errors: lexer.into_errors(),
    }
}

/// A pull lexer: `next_token` hands out the tokens in order; errors collect on the side.
/// Linear in the input, never panics.
pub(crate) struct Lexer<'t> {
    text: &'t str,
    bytes: &'t [u8],
    position: usize,
    produced: Option<Token>,
    errors: Vec<LexError>,
}

impl<'t> Lexer<'t> {
    pub(crate) fn new(text: &'t str) -> Lexer<'t> {
        Lexer {
            text,
            bytes: text.as_bytes(),
            position: 0,
            produced: None,
            errors: Vec::new(),
        }
    }

    /// The next token, `None` at the end of the input.
    pub(crate) fn next_token(&mut self) -> Option<Token> {
        if self.position >= self.bytes.len() {
            return None;
        }
        // RFC 8259 section 8.1: parsers MAY ignore a byte-order mark; we treat it as whitespace.
        if self.position == 0 && self.text.starts_with(BYTE_ORDER_MARK) {
            self.push_token(TokenKind::Whitespace, BYTE_ORDER_MARK.len_utf8());
        } else {
            self.lex_one_token();
        }
        self.produced.take()
    }

    /// The problems found in the tokens handed out so far, in text order.
    pub(crate) fn into_errors(self) -> Vec<LexError> {
        self.errors
    }

    fn push_token(&mut self, kind: TokenKind, end: usize) {
        self.produced = Some(Token::new(kind, TextRange::new(self.position, end)));
        self.position = end;
    }

    fn error(&mut self, range: TextRange, message: impl Into<String>) {
        self.errors.push(LexError {
            range,
            message: message.into(),
        });
    }

    fn lex_one_token(&mut self) {
        let start = self.position;
        let byte = self.bytes[start];
        match byte {
            b' ' | b'\t' | b'\r' | b'\n' => {
                let end = self.skip_while(start, |b| matches!(b, b' ' | b'\t' | b'\r' | b'\n'));
                self.push_token(TokenKind::Whitespace, end);
            }
            b'{' => self.push_token(TokenKind::LBrace, start + 1),
            b'}' => self.push_token(TokenKind::RBrace, start + 1),
            b'[' => self.push_token(TokenKind::LBracket, start + 1),
            b']' => self.push_token(TokenKind::RBracket, start + 1),
            b':' => self.push_token(TokenKind::Colon, start + 1),
            b',' => self.push_token(TokenKind::Comma, start + 1),
            b'"' => self.lex_string(),
            b'\'' => self.lex_single_quoted_string(),
            b'/' if matches!(self.bytes.get(start + 1), Some(b'/') | Some(b'*')) => {
                self.lex_comment()
            }
            b'0'..=b'9' | b'-' | b'+' | b'.' => self.lex_number(),
            _ => {
                let first_char = self.char_at(start);
                if starts_word(first_char) {
                    self.lex_word();
                } else {
                    self.lex_stray_characters();
                }
            }
        }
    }

    /// The char starting at `offset` (a char boundary). U+FFFD if there is none (cannot happen
    /// for a boundary inside the text, but keeps this total).
    fn char_at(&self, offset: usize) -> char {
        self.text
            .get(offset..)
            .and_then(|rest| rest.chars().next())
            .unwrap_or('\u{FFFD}')
    }

    fn skip_while(&self, mut offset: usize, keep: impl Fn(u8) -> bool) -> usize {
        while offset < self.bytes.len() && keep(self.bytes[offset]) {
            offset += 1;
        }
        offset
    }

    /// A `"`-string. It ends at the closing quote; without one, at the end of the line (so the
    /// next lines still parse) or of the input.
    fn lex_string(&mut self) {
        let start = self.position;
        let mut offset = start + 1;
        loop {
            let Some(&byte) = self.bytes.get(offset) else {
                self.error(TextRange::new(start, offset), "unterminated string");
                break;
            };
            match byte {
                b'"' => {
                    offset += 1;
                    break;
                }
                b'\\' => offset = self.check_escape(offset),
                b'\n' | b'\r' => {
                    self.error(TextRange::new(start, offset), "unterminated string");
                    break;
                }
                0x00..=0x1F => {
                    self.error(
                        TextRange::new(offset, offset + 1),
                        format!("control character U+{byte:04X} in string, write it as an escape"),
                    );
                    offset += 1;
                }
                _ => offset += 1,
            }
        }
        self.push_token(TokenKind::String, offset);
    }

    /// Check the escape whose backslash is at `backslash`; return the offset after it.
    fn check_escape(&mut self, backslash: usize) -> usize {
        let Some(&escaped) = self.bytes.get(backslash + 1) else {
            return backslash + 1; // end of input: reported as an unterminated string
        };
        match escaped {
            b'"' | b'\\' | b'/' | b'b' | b'f' | b'n' | b'r' | b't' => backslash + 2,
            b'\n' | b'\r' => backslash + 1, // reported as an unterminated string
            b'u' => {
                let digits_start = backslash + 2;
                let mut digits_end = digits_start;
                while digits_end < digits_start + 4
                    && self
                        .bytes
                        .get(digits_end)
                        .is_some_and(|b| b.is_ascii_hexdigit())
                {
                    digits_end += 1;
                }
                if digits_end < digits_start + 4 {
                    self.error(
                        TextRange::new(backslash, digits_end),
                        "invalid escape: `\\u` needs four hex digits",
                    );
                }
                digits_end
            }
            _ => {
                let escaped_char = self.char_at(backslash + 1);
                let end = backslash + 1 + escaped_char.len_utf8();
                self.error(
                    TextRange::new(backslash, end),
                    format!("invalid escape `\\{}`", printable(escaped_char)),
                );
                end
            }
        }
    }

    /// `'text'`, up to the closing quote or the end of the line: one `Error` token.
    fn lex_single_quoted_string(&mut self) {
        let start = self.position;
        let mut offset = start + 1;
        while let Some(&byte) = self.bytes.get(offset) {
            match byte {
                b'\'' => {
                    offset += 1;
                    break;
                }
                b'\n' | b'\r' => break,
                b'\\' if matches!(self.bytes.get(offset + 1), Some(b'\'') | Some(b'\\')) => {
                    offset += 2
                }
                _ => offset += 1,
            }
        }
        self.push_token(TokenKind::Error, offset);
    }

    fn lex_comment(&mut self) {
        let start = self.position;
        let end = if self.bytes.get(start + 1) == Some(&b'/') {
            self.skip_while(start + 2, |b| b != b'\n' && b != b'\r')
        } else {
            match find_block_comment_end(self.bytes, start + 2) {
                Some(end) => end,
                None => {
                    self.error(
                        TextRange::new(start, self.bytes.len()),
                        "unterminated comment",
                    );
                    self.bytes.len()
                }
            }
        };
        self.error(
            TextRange::new(start, end),
            "comments are not allowed in JSON",
        );
        self.push_token(TokenKind::Comment, end);
    }

    /// A run of number-like characters is one `Number` token, checked against the JSON grammar.
    fn lex_number(&mut self) {
        let start = self.position;
        let end = self.skip_while(start, |b| {
            b.is_ascii_alphanumeric() || matches!(b, b'.' | b'+' | b'-' | b'_')
        });
        if let Some(message) = number_error(&self.text[start..end]) {
            self.error(TextRange::new(start, end), message);
        }
        self.push_token(TokenKind::Number, end);
    }

    /// A run of letters, digits, `_` and `$`: `true`, `false`, `null`, or an `Error` token.
    fn lex_word(&mut self) {
        let start = self.position;
        let mut end = start;
        for character in self.text[start..].chars() {
            if !continues_word(character) {
                break;
            }
            end += character.len_utf8();
        }
        let kind = match &self.text[start..end] {
            "true" => TokenKind::True,
            "false" => TokenKind::False,
            "null" => TokenKind::Null,
            _ => TokenKind::Error,
        };
        self.push_token(kind, end);
    }

    /// Characters that start no token, taken together as one `Error` token.
    fn lex_stray_characters(&mut self) {
        let start = self.position;
        let mut end = start;
        for character in self.text[start..].chars() {
            if end > start && !is_stray(character) {
                break;
            }
            end += character.len_utf8();
        }
        // a `/` that starts no comment is stray too; never leave an empty token
        let end = end.max(start + self.char_at(start).len_utf8());
        self.push_token(TokenKind::Error, end);
    }
}

/// The offset just after the first `*/` at or after `from`.
fn find_block_comment_end(bytes: &[u8], from: usize) -> Option<usize> {
    let mut offset = from;
    while let Some(found) = memchr::memchr(b'*', bytes.get(offset..)?) {
        let star = offset + found;
        if bytes.get(star + 1) == Some(&b'/') {
            return Some(star + 2);
        }
        offset = star + 1;
    }
    None
}

fn starts_word(character: char) -> bool {
    character.is_alphabetic() || character == '_' || character == '$'
}

fn continues_word(character: char) -> bool {
    character.is_alphanumeric() || character == '_' || character == '$'
}

/// A character that starts no token of its own.
fn is_stray(character: char) -> bool {
    !matches!(
        character,
        ' ' | '\t' | '\r' | '\n' | '{' | '}' | '[' | ']' | ':' | ',' | '"' | '\'' | '/' | '0'
            ..='9' | '-' | '+' | '.'
    ) && !starts_word(character)
}

/// Why `text` (a run of number-like characters) is not a JSON number, if it is not.
/// Grammar: RFC 8259 section 6, `[ minus ] int [ frac ] [ exp ]`.
fn number_error(text: &str) -> Option<String> {
    let bytes = text.as_bytes();
    if bytes
        .iter()
        .any(|b| !(b.is_ascii_digit() || matches!(b, b'.' | b'+' | b'-' | b'e' | b'E')))
    {
        return Some(format!("invalid number `{}`", shorten(text)));
    }
    let mut offset = 0;
    match bytes.first() {
        Some(b'+') => return Some("numbers cannot start with `+`".to_string()),
        Some(b'.') => return Some("expected a digit before `.`".to_string()),
        Some(b'-') => offset += 1,
        _ => {}
    }
    let is_digit_at = |offset: usize| bytes.get(offset).is_some_and(|b| b.is_ascii_digit());
    if !is_digit_at(offset) {
        return Some("expected a digit after `-`".to_string());
    }
    if bytes[offset] == b'0' {
        offset += 1;
        if is_digit_at(offset) {
            return Some("leading zeros are not allowed".to_string());
        }
    } else {
        while is_digit_at(offset) {
            offset += 1;
        }
    }
    if bytes.get(offset) == Some(&b'.') {
        offset += 1;
        if !is_digit_at(offset) {
            return Some("expected a digit after `.`".to_string());
        }
        while is_digit_at(offset) {
            offset += 1;
        }
    }
    if matches!(bytes.get(offset), Some(b'e') | Some(b'E')) {
        offset += 1;
        if matches!(bytes.get(offset), Some(b'+') | Some(b'-')) {
            offset += 1;
        }
        if !is_digit_at(offset) {
            return Some("expected a digit in the exponent".to_string());
        }
        while is_digit_at(offset) {
            offset += 1;
        }
    }
    if offset != bytes.len() {
        return Some(format!("invalid number `{}`", shorten(text)));
    }
    None
}

/// A character as it can be shown in a message: itself, or `U+XXXX` for invisible ones.
pub(crate) fn printable(character: char) -> String {
    let invisible = character.is_control()
        || character.is_whitespace()
        || matches!(
            character,
            '\u{200B}'..='\u{200F}' | '\u{2060}'..='\u{2064}' | '\u{FEFF}' | '\u{FFFD}'
        );
    if invisible {
        format!("U+{:04X}", character as u32)
    } else {
        character.to_string()
    }
}

/// Text for a message: invisible characters spelled out, cut after 40 characters.
pub(crate) fn shorten(text: &str) -> String {
    const MAX_CHARS: usize = 40;
    let mut out = String::new();
    for (index, character) in text.chars().enumerate() {
        if index == MAX_CHARS {
            out.push('…');
            break;
        }
        out.push_str(&printable(character));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn kinds_and_texts(text: &str) -> Vec<(TokenKind, &str)> {
        lex(text)
            .tokens
            .iter()
            .map(|token| (token.kind, &text[token.range().start..token.range().end]))
            .collect()
    }

    fn error_messages(text: &str) -> Vec<(String, &str)> {
        lex(text)
            .errors
            .into_iter()
            .map(|error| (error.message, &text[error.range.start..error.range.end]))
            .collect()
    }

    #[test]
    fn punctuation_literals_and_whitespace() {
        use TokenKind::*;
        assert_eq!(
            kinds_and_texts("{ \"a\" :[true,false, null]}\r\n"),
            vec![
                (LBrace, "{"),
                (Whitespace, " "),
                (String, "\"a\""),
                (Whitespace, " "),
                (Colon, ":"),
                (LBracket, "["),
                (True, "true"),
                (Comma, ","),
                (False, "false"),
                (Comma, ","),
                (Whitespace, " "),
                (Null, "null"),
                (RBracket, "]"),
                (RBrace, "}"),
                (Whitespace, "\r\n"),
            ]
        );
    }

    #[test]
    fn strings_end_at_the_closing_quote_or_the_end_of_the_line() {
        use TokenKind::*;
        assert_eq!(
            kinds_and_texts("\"a\\\"b\" \"open\n1"),
            vec![
                (String, "\"a\\\"b\""),
                (Whitespace, " "),
                (String, "\"open"),
                (Whitespace, "\n"),
                (Number, "1"),
            ]
        );
        assert_eq!(
            error_messages("\"open\n1"),
            vec![("unterminated string".to_string(), "\"open")]
        );
        assert_eq!(
            error_messages("\"tail"),
            vec![("unterminated string".to_string(), "\"tail")]
        );
    }

    #[test]
    fn escapes_are_checked_with_the_range_of_the_escape() {
        assert_eq!(error_messages(r#""\n\t\/\u00e9\"""#), vec![]);
        assert_eq!(
            error_messages(r#""a\qb""#),
            vec![("invalid escape `\\q`".to_string(), "\\q")]
        );
        assert_eq!(
            error_messages(r#""\u12x""#),
            vec![(
                "invalid escape: `\\u` needs four hex digits".to_string(),
                "\\u12"
            )]
        );
        assert_eq!(
            error_messages("\"\\é\""),
            vec![("invalid escape `\\é`".to_string(), "\\é")]
        );
        assert_eq!(
            error_messages("\"a\tb\""),
            vec![(
                "control character U+0009 in string, write it as an escape".to_string(),
                "\t"
            )]
        );
    }

    #[test]
    fn malformed_numbers_are_one_token_with_an_error() {
        // cases from the JSON number grammar, RFC 8259 section 6
        for (text, message) in [
            ("01", "leading zeros are not allowed"),
            ("-01", "leading zeros are not allowed"),
            ("1.", "expected a digit after `.`"),
            (".5", "expected a digit before `.`"),
            ("+1", "numbers cannot start with `+`"),
            ("-", "expected a digit after `-`"),
            ("1e", "expected a digit in the exponent"),
            ("1e+", "expected a digit in the exponent"),
            ("1.5.3", "invalid number `1.5.3`"),
            ("0x1F", "invalid number `0x1F`"),
            ("-Infinity", "invalid number `-Infinity`"),
        ] {
            let lexed = lex(text);
            assert_eq!(lexed.tokens.len(), 1, "{text}");
            assert_eq!(lexed.tokens[0].kind, TokenKind::Number, "{text}");
            assert_eq!(
                error_messages(text),
                vec![(message.to_string(), text)],
                "{text}"
            );
        }
        for valid in ["0", "-0", "12", "1.25", "1e5", "1E+2", "-3.5e-7", "0e1"] {
            assert_eq!(error_messages(valid), vec![], "{valid}");
        }
    }

    #[test]
    fn words_comments_and_stray_characters() {
        use TokenKind::*;
        assert_eq!(
            kinds_and_texts("tru NaN 'x' @#/*c*/ //d"),
            vec![
                (Error, "tru"),
                (Whitespace, " "),
                (Error, "NaN"),
                (Whitespace, " "),
                (Error, "'x'"),
                (Whitespace, " "),
                (Error, "@#"),
                (Comment, "/*c*/"),
                (Whitespace, " "),
                (Comment, "//d"),
            ]
        );
        assert_eq!(
            error_messages("/* open"),
            vec![
                ("unterminated comment".to_string(), "/* open"),
                ("comments are not allowed in JSON".to_string(), "/* open"),
            ]
        );
        assert_eq!(kinds_and_texts("/"), vec![(Error, "/")]);
    }

    #[test]
    fn block_comments_end_at_the_first_star_slash() {
        use TokenKind::*;
        assert_eq!(
            kinds_and_texts("/* a * b **/1/***/"),
            vec![(Comment, "/* a * b **/"), (Number, "1"), (Comment, "/***/")]
        );
        // `/*/` opens a comment that never closes
        assert_eq!(kinds_and_texts("/*/ 1"), vec![(Comment, "/*/ 1")]);
        assert_eq!(error_messages("/*/ 1")[0].0, "unterminated comment");
    }

    #[test]
    fn a_leading_byte_order_mark_is_whitespace() {
        assert_eq!(
            kinds_and_texts("\u{FEFF}{}"),
            vec![
                (TokenKind::Whitespace, "\u{FEFF}"),
                (TokenKind::LBrace, "{"),
                (TokenKind::RBrace, "}"),
            ]
        );
        assert_eq!(
            kinds_and_texts("[\u{FEFF}]")[1],
            (TokenKind::Error, "\u{FEFF}")
        );
    }
}
