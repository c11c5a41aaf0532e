//! Formatting a spec's text, over the lossless tree: two-space indentation, one member per line,
//! short containers of scalars on one line, one newline at the end. Strings and numbers are kept
//! exactly as written (escapes, exponents), and so is key order unless sorting is asked for.
//!
//! Formatting never loses text: a document with syntax errors or comments (a half-typed spec)
//! is not formatted at all; the caller says why. Without sorting, the result is given as edits of
//! the whitespace between tokens only (so a client's cursor and marks stay put), and a range
//! format touches only the gaps inside the range. Formatting is idempotent: the layout depends on
//! the tokens alone, never on the whitespace that was there.

use crate::text_range::TextRange;

use super::tree::{Node, NodeKind, SyntaxTree, TokenKind};

/// How to format.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct FormatOptions {
    /// Spaces per level.
    pub indent: usize,
    /// A container is written on one line only when that line stays within this many characters.
    pub width: usize,
    /// Order each object's members by key (Unicode code point order of the unescaped keys).
    pub sort_keys: bool,
}

impl Default for FormatOptions {
    fn default() -> FormatOptions {
        FormatOptions {
            indent: 2,
            width: 80,
            sort_keys: false,
        }
    }
}

/// Why a document was left as it is.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum FormatRefusal {
    /// The text is not (yet) valid JSON, or repeats a key: formatting could lose what was typed.
    SyntaxErrors(usize),
    /// The text holds comments, which JSON does not allow and which have no place in the layout.
    Comments,
    /// The text holds no value (empty or whitespace only).
    Empty,
}

impl FormatRefusal {
    pub fn message(&self) -> String {
        match self {
            FormatRefusal::SyntaxErrors(1) => {
                "not formatted: the text has a syntax error; fix it first".to_string()
            }
            FormatRefusal::SyntaxErrors(count) => {
                format!("not formatted: the text has {count} syntax errors; fix them first")
            }
            FormatRefusal::Comments => {
                "not formatted: the text holds comments, which JSON does not allow".to_string()
            }
            FormatRefusal::Empty => "not formatted: the text holds no JSON value".to_string(),
        }
    }
}

/// One replacement of the original text.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct FormatEdit {
    pub range: TextRange,
    pub new_text: String,
}

fn check_formattable(tree: &SyntaxTree) -> Result<Node<'_>, FormatRefusal> {
    if tree
        .tokens()
        .iter()
        .any(|token| token.kind == TokenKind::Comment)
    {
        return Err(FormatRefusal::Comments);
    }
    if !tree.errors().is_empty() {
        return Err(FormatRefusal::SyntaxErrors(tree.errors().len()));
    }
    tree.root_value().ok_or(FormatRefusal::Empty)
}

/// The whole formatted text.
pub fn format_tree(tree: &SyntaxTree, options: &FormatOptions) -> Result<String, FormatRefusal> {
    let root = check_formattable(tree)?;
    let mut printer = Printer {
        out: String::with_capacity(tree.text().len() + tree.text().len() / 4),
        line_start: 0,
        options,
    };
    printer.value(root, 0);
    printer.out.push('\n');
    Ok(printer.out)
}

/// Formats `text` (parsed here).
pub fn format_text(text: &str, options: &FormatOptions) -> Result<String, FormatRefusal> {
    format_tree(&super::parse(text), options)
}

/// The edits that format `tree`'s text, or only the part within `range`. Without
/// `sort_keys` they replace whitespace between tokens only; with it, the whole text.
pub fn format_edits(
    tree: &SyntaxTree,
    options: &FormatOptions,
    range: Option<TextRange>,
) -> Result<Vec<FormatEdit>, FormatRefusal> {
    let formatted = format_tree(tree, options)?;
    let original = tree.text();
    if options.sort_keys {
        if formatted == original {
            return Ok(Vec::new());
        }
        return Ok(vec![FormatEdit {
            range: TextRange::new(0, original.len()),
            new_text: formatted,
        }]);
    }
    let old_tokens: Vec<TextRange> = significant(tree);
    let new_tree = super::parse(&formatted);
    let new_tokens: Vec<TextRange> = significant(&new_tree);
    let same_tokens = old_tokens.len() == new_tokens.len()
        && old_tokens
            .iter()
            .zip(&new_tokens)
            .all(|(old, new)| original[old.start..old.end] == formatted[new.start..new.end]);
    if !same_tokens {
        // cannot happen for a tree without errors; never risk a wrong edit
        return Ok(vec![FormatEdit {
            range: TextRange::new(0, original.len()),
            new_text: formatted,
        }]);
    }
    let mut edits = Vec::new();
    // gaps: before the first token, between tokens, after the last
    let gap_count = old_tokens.len() + 1;
    for gap in 0..gap_count {
        let old_start = if gap == 0 { 0 } else { old_tokens[gap - 1].end };
        let old_end = old_tokens
            .get(gap)
            .map_or(original.len(), |token| token.start);
        let new_start = if gap == 0 { 0 } else { new_tokens[gap - 1].end };
        let new_end = new_tokens
            .get(gap)
            .map_or(formatted.len(), |token| token.start);
        if let Some(wanted) = range {
            // a gap belongs to the range when it touches it
            if old_end < wanted.start || old_start > wanted.end {
                continue;
            }
        }
        let old_gap = &original[old_start..old_end];
        let new_gap = &formatted[new_start..new_end];
        if old_gap != new_gap {
            edits.push(FormatEdit {
                range: TextRange::new(old_start, old_end),
                new_text: new_gap.to_string(),
            });
        }
    }
    Ok(edits)
}

fn significant(tree: &SyntaxTree) -> Vec<TextRange> {
    tree.tokens()
        .iter()
        .filter(|token| !token.kind.is_trivia())
        .map(|token| token.range())
        .collect()
}

/// How deep a container written on one line may nest (see `Printer::inline_form`).
const INLINE_DEPTH: usize = 2;

struct Printer<'o> {
    out: String,
    /// Byte offset in `out` where the current line starts.
    line_start: usize,
    options: &'o FormatOptions,
}

impl Printer<'_> {
    fn column(&self) -> usize {
        self.out[self.line_start..].chars().count()
    }

    fn newline(&mut self, level: usize) {
        self.out.push('\n');
        self.line_start = self.out.len();
        for _ in 0..level * self.options.indent {
            self.out.push(' ');
        }
    }

    fn members<'t>(&self, node: Node<'t>) -> Vec<(Node<'t>, Option<Node<'t>>)> {
        let mut members: Vec<(Node<'t>, Option<Node<'t>>)> = node
            .members()
            .filter_map(|member| member.key().map(|key| (key, member.value())))
            .collect();
        if self.options.sort_keys {
            members.sort_by(|a, b| a.0.as_str().cmp(&b.0.as_str()));
        }
        members
    }

    /// The one-line form of `node`, when it has one: scalars, empty containers, and containers
    /// nested at most `depth` deep (2: a binding with its `mapping`; 1: only scalars inside).
    fn inline_form(&self, node: Node<'_>, depth: usize) -> Option<String> {
        match node.kind() {
            NodeKind::Object => {
                let members = self.members(node);
                if members.is_empty() {
                    return Some("{}".to_string());
                }
                if depth == 0 {
                    return None;
                }
                let mut parts = Vec::with_capacity(members.len());
                for (key, value) in members {
                    let value = self.inline_form(value?, depth - 1)?;
                    parts.push(format!("{}: {}", key.text(), value));
                }
                Some(format!("{{ {} }}", parts.join(", ")))
            }
            NodeKind::Array => {
                let elements: Vec<Node<'_>> = node.elements().collect();
                if elements.is_empty() {
                    return Some("[]".to_string());
                }
                if depth == 0 {
                    return None;
                }
                let mut parts = Vec::with_capacity(elements.len());
                for element in elements {
                    parts.push(self.inline_form(element, depth - 1)?);
                }
                Some(format!("[{}]", parts.join(", ")))
            }
            _ => Some(node.text().to_string()),
        }
    }

    fn value(&mut self, node: Node<'_>, level: usize) {
        // the document's own object or array is always laid out member by member
        let depth = if level == 0 { 0 } else { INLINE_DEPTH };
        if let Some(inline) = self.inline_form(node, depth) {
            if self.column() + inline.chars().count() <= self.options.width
                || !matches!(node.kind(), NodeKind::Object | NodeKind::Array)
            {
                self.out.push_str(&inline);
                return;
            }
        }
        match node.kind() {
            NodeKind::Object => {
                self.out.push('{');
                let members = self.members(node);
                let count = members.len();
                for (index, (key, value)) in members.into_iter().enumerate() {
                    self.newline(level + 1);
                    self.out.push_str(key.text());
                    self.out.push_str(": ");
                    if let Some(value) = value {
                        self.value(value, level + 1);
                    }
                    if index + 1 < count {
                        self.out.push(',');
                    }
                }
                self.newline(level);
                self.out.push('}');
            }
            NodeKind::Array => {
                self.out.push('[');
                let elements: Vec<Node<'_>> = node.elements().collect();
                let count = elements.len();
                for (index, element) in elements.into_iter().enumerate() {
                    self.newline(level + 1);
                    self.value(element, level + 1);
                    if index + 1 < count {
                        self.out.push(',');
                    }
                }
                self.newline(level);
                self.out.push(']');
            }
            _ => self.out.push_str(node.text()),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn fmt(text: &str) -> String {
        match format_text(text, &FormatOptions::default()) {
            Ok(formatted) => formatted,
            Err(refusal) => panic!("refused: {refusal:?}"),
        }
    }

    #[test]
    fn lays_out_members_one_per_line_and_short_scalar_containers_inline() {
        let text = r#"{"mark":"bar","bind":{"x":"vessel","y":{"column":"passengers","summary":"sum"}},"emphasis":["passengers","vessel"]}"#;
        assert_eq!(
            fmt(text),
            "{\n  \"mark\": \"bar\",\n  \"bind\": { \"x\": \"vessel\", \"y\": { \"column\": \"passengers\", \"summary\": \"sum\" } },\n  \"emphasis\": [\"passengers\", \"vessel\"]\n}\n"
        );
    }

    #[test]
    fn a_line_past_80_characters_is_broken_one_level() {
        let text =
            r#"{"bind":{"x":"vessel","y":{"column":"passengers","summary":"sum","bins":12}}}"#;
        assert_eq!(
            fmt(text),
            "{\n  \"bind\": {\n    \"x\": \"vessel\",\n    \"y\": { \"column\": \"passengers\", \"summary\": \"sum\", \"bins\": 12 }\n  }\n}\n"
        );
    }

    #[test]
    fn keeps_strings_and_numbers_as_written() {
        let text = "{\"t\":\"caf\\u00e9 \\\"x\\\"\",\"n\":1.50e+3}";
        assert_eq!(
            fmt(text),
            "{\n  \"t\": \"caf\\u00e9 \\\"x\\\"\",\n  \"n\": 1.50e+3\n}\n"
        );
    }

    #[test]
    fn breaks_a_container_that_would_pass_the_width() {
        let long = format!(
            "{{\"k\": [\"{}\", \"{}\"]}}",
            "a".repeat(40),
            "b".repeat(40)
        );
        let formatted = fmt(&long);
        assert_eq!(
            formatted,
            format!(
                "{{\n  \"k\": [\n    \"{}\",\n    \"{}\"\n  ]\n}}\n",
                "a".repeat(40),
                "b".repeat(40)
            )
        );
    }

    #[test]
    fn is_idempotent_and_sorts_on_request() {
        let text = "{ \"b\": [ { \"z\": 1, \"a\": 2 } ], \"a\": {} }";
        let once = fmt(text);
        assert_eq!(fmt(&once), once);
        let sorted = format_text(
            text,
            &FormatOptions {
                sort_keys: true,
                ..FormatOptions::default()
            },
        );
        assert_eq!(
            sorted,
            Ok("{\n  \"a\": {},\n  \"b\": [{ \"a\": 2, \"z\": 1 }]\n}\n".to_string())
        );
    }

    #[test]
    fn refuses_half_typed_text_and_comments() {
        assert!(matches!(
            format_text("{\"mark\": \"ba", &FormatOptions::default()),
            Err(FormatRefusal::SyntaxErrors(_))
        ));
        assert_eq!(
            format_text("{ // note\n \"a\": 1 }", &FormatOptions::default()),
            Err(FormatRefusal::Comments)
        );
        // an empty document is a syntax error (a value is expected), so it is left alone too
        assert!(format_text("  \n", &FormatOptions::default()).is_err());
    }

    #[test]
    fn edits_touch_whitespace_only_and_ranges_stay_inside() {
        let text = "{\"a\":1,\n\"b\":{\"c\":[1,2]}}";
        let tree = crate::syntax::parse(text);
        let edits = format_edits(&tree, &FormatOptions::default(), None).unwrap_or_default();
        let mut applied = text.to_string();
        for edit in edits.iter().rev() {
            assert!(text[edit.range.start..edit.range.end]
                .chars()
                .all(char::is_whitespace));
            applied.replace_range(edit.range.start..edit.range.end, &edit.new_text);
        }
        assert_eq!(Ok(applied), format_text(text, &FormatOptions::default()));
        // only the gaps of `{"c":[1,2]}` (bytes 12..23)
        let ranged = format_edits(
            &tree,
            &FormatOptions::default(),
            Some(TextRange::new(13, 22)),
        )
        .unwrap_or_default();
        assert!(!ranged.is_empty());
        assert!(ranged
            .iter()
            .all(|edit| edit.range.start >= 12 && edit.range.end <= 23));
    }
}
