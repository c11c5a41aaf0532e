//! The one place that converts byte offsets to and from LSP positions (line, character).
//!
//! LSP 3.17, "Position": a position is a zero-based line and a zero-based "character offset in a
//! line"; "the meaning of character depends on the negotiated position encoding" (UTF-16 code units
//! unless client and server agree on another `PositionEncodingKind`), and the line endings are
//! "\n", "\r\n" and "\r" (LSP 3.17, section "Text Documents": "To ensure that both client and server
//! split the string into the same line representation the protocol specifies the following
//! end-of-line sequences: '\n', '\r\n' and '\r'"). Nothing else ends a line: U+2028, U+2029 and NEL
//! (U+0085) are ordinary characters here.
//!
//! A [`LineIndex`] is built once per text version. It records where lines start and where the
//! non-ASCII characters are, so that an ASCII line converts in O(log n) and a line with wide
//! characters in O(log n + wide characters of that line), even for a 10 MB single-line document.
//!
//! Out-of-range input never panics, it clamps:
//! - a line past the last line → the end of the text;
//! - a character past the end of its line → the end of the line's content (before its line break);
//! - a character inside a character (between the two UTF-16 units of a surrogate pair, or inside a
//!   multi-byte UTF-8 sequence) → the start of that character;
//! - a byte offset past the end → the end; a byte offset inside a character → its start.
//!
//! Open documents are kept in a `ropey::Rope` by the language server. Ropey is built with only
//! its `cr_lines` line breaks (LF, CR, CRLF: the LSP rule; its default `unicode_lines` would also
//! count U+2028, NEL and others), so [`rope_char_range`] converts the positions of an incremental
//! change on the rope itself in O(log n), without building a [`LineIndex`] per change.

use std::sync::Arc;

use crate::text_range::TextRange;

/// How the `character` of an LSP position is counted (LSP 3.17 `PositionEncodingKind`).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
pub enum PositionEncoding {
    /// `"utf-8"`: bytes of the UTF-8 encoding.
    Utf8,
    /// `"utf-16"`: UTF-16 code units, the LSP default every client must support.
    #[default]
    Utf16,
}

impl PositionEncoding {
    /// The `PositionEncodingKind` string of LSP 3.17.
    pub fn as_lsp_str(self) -> &'static str {
        match self {
            PositionEncoding::Utf8 => "utf-8",
            PositionEncoding::Utf16 => "utf-16",
        }
    }

    /// Negotiation (LSP 3.17 `general.positionEncodings`): UTF-8 when the client offers it,
    /// otherwise UTF-16, which every client supports.
    pub fn negotiate<'a>(offered: impl IntoIterator<Item = &'a str>) -> PositionEncoding {
        if offered.into_iter().any(|kind| kind == "utf-8") {
            PositionEncoding::Utf8
        } else {
            PositionEncoding::Utf16
        }
    }
}

/// A 0-based line and character, as in LSP.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Default)]
pub struct LinePosition {
    pub line: u32,
    pub character: u32,
}

impl LinePosition {
    pub fn new(line: u32, character: u32) -> LinePosition {
        LinePosition { line, character }
    }
}

/// A non-ASCII character: where it starts and how long it is in UTF-8 and UTF-16.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
struct WideCharacter {
    offset: usize,
    utf8_len: u8,
    utf16_len: u8,
}

/// Line starts and wide characters of one text, for converting offsets ↔ positions.
#[derive(Clone, Debug)]
pub struct LineIndex {
    text: Arc<str>,
    /// Byte offset of the first byte of every line; `line_starts[0] == 0`. A text ending in a
    /// line break has an empty last line starting at `text.len()`.
    line_starts: Vec<usize>,
    /// Every non-ASCII character, by offset.
    wide_characters: Vec<WideCharacter>,
}

impl LineIndex {
    pub fn new(text: &str) -> LineIndex {
        LineIndex::from_shared(Arc::from(text))
    }

    /// Build from shared text without copying it.
    pub fn from_shared(text: Arc<str>) -> LineIndex {
        let mut line_starts = vec![0];
        let bytes = text.as_bytes();
        for position in memchr::memchr2_iter(b'\n', b'\r', bytes) {
            let is_cr_of_crlf = bytes[position] == b'\r' && bytes.get(position + 1) == Some(&b'\n');
            if !is_cr_of_crlf {
                line_starts.push(position + 1);
            }
        }
        let mut wide_characters = Vec::new();
        if !text.is_ascii() {
            for (offset, character) in text.char_indices() {
                if !character.is_ascii() {
                    wide_characters.push(WideCharacter {
                        offset,
                        utf8_len: character.len_utf8() as u8,
                        utf16_len: character.len_utf16() as u8,
                    });
                }
            }
        }
        LineIndex {
            text,
            line_starts,
            wide_characters,
        }
    }

    /// Build from an open document's rope. Ropey's line APIs are not used: they also count
    /// Unicode line breaks (U+2028, NEL, ...), which LSP does not.
    pub fn from_rope(rope: &ropey::Rope) -> LineIndex {
        let mut text = String::with_capacity(rope.len_bytes());
        for chunk in rope.chunks() {
            text.push_str(chunk);
        }
        LineIndex::new(&text)
    }

    pub fn text(&self) -> &str {
        &self.text
    }

    pub fn shared_text(&self) -> Arc<str> {
        self.text.clone()
    }

    /// Number of lines as LSP counts them (a trailing line break opens an empty last line).
    pub fn line_count(&self) -> usize {
        self.line_starts.len()
    }

    /// Byte range of line `line` without its line break; `None` past the last line.
    pub fn line_content_range(&self, line: usize) -> Option<TextRange> {
        let start = *self.line_starts.get(line)?;
        let Some(&next_start) = self.line_starts.get(line + 1) else {
            // the last line has no line break (a break would open another line)
            return Some(TextRange::new(start, self.text.len()));
        };
        let bytes = self.text.as_bytes();
        // the line ends in '\n', '\r' or '\r\n'
        let mut end = next_start - 1;
        if bytes[end] == b'\n' && end > start && bytes[end - 1] == b'\r' {
            end -= 1;
        }
        Some(TextRange::new(start, end))
    }

    /// The 0-based line containing `offset` (clamped to the text).
    fn line_of_offset(&self, offset: usize) -> usize {
        self.line_starts
            .partition_point(|&start| start <= offset)
            .saturating_sub(1)
    }

    /// Snap a byte offset to the text: past the end → end, inside a character → its start.
    pub fn clamp_offset(&self, offset: usize) -> usize {
        let mut offset = offset.min(self.text.len());
        while !self.text.is_char_boundary(offset) {
            offset -= 1;
        }
        offset
    }

    fn wide_characters_in(&self, range: TextRange) -> &[WideCharacter] {
        let first = self
            .wide_characters
            .partition_point(|wide| wide.offset < range.start);
        let last = self
            .wide_characters
            .partition_point(|wide| wide.offset < range.end);
        &self.wide_characters[first..last]
    }

    /// The LSP position of a byte offset.
    pub fn position_of_offset(&self, offset: usize, encoding: PositionEncoding) -> LinePosition {
        let offset = self.clamp_offset(offset);
        let line = self.line_of_offset(offset);
        let content = self
            .line_content_range(line)
            .unwrap_or(TextRange::empty(offset));
        // an offset between the CR and LF of a CRLF maps to the end of the line's content
        let offset = offset.min(content.end);
        let byte_column = offset - content.start;
        let character = match encoding {
            PositionEncoding::Utf8 => byte_column,
            PositionEncoding::Utf16 => {
                let wide = self.wide_characters_in(TextRange::new(content.start, offset));
                let saved: usize = wide
                    .iter()
                    .map(|w| usize::from(w.utf8_len) - usize::from(w.utf16_len))
                    .sum();
                byte_column - saved
            }
        };
        LinePosition {
            line: to_u32(line),
            character: to_u32(character),
        }
    }

    /// The byte offset of an LSP position, clamped as described in the module docs.
    pub fn offset_of_position(&self, position: LinePosition, encoding: PositionEncoding) -> usize {
        let Some(content) = self.line_content_range(position.line as usize) else {
            return self.text.len();
        };
        let wanted = position.character as usize;
        match encoding {
            PositionEncoding::Utf8 => self.clamp_offset((content.start + wanted).min(content.end)),
            PositionEncoding::Utf16 => {
                let mut units_left = wanted;
                let mut cursor = content.start;
                for wide in self.wide_characters_in(content) {
                    let ascii_gap = wide.offset - cursor;
                    if units_left <= ascii_gap {
                        return cursor + units_left;
                    }
                    units_left -= ascii_gap;
                    if units_left < usize::from(wide.utf16_len) {
                        return wide.offset; // inside a surrogate pair: snap to the character start
                    }
                    units_left -= usize::from(wide.utf16_len);
                    cursor = wide.offset + usize::from(wide.utf8_len);
                }
                (cursor + units_left).min(content.end)
            }
        }
    }

    pub fn range_to_positions(
        &self,
        range: TextRange,
        encoding: PositionEncoding,
    ) -> (LinePosition, LinePosition) {
        (
            self.position_of_offset(range.start, encoding),
            self.position_of_offset(range.end, encoding),
        )
    }

    /// The byte range between two positions; a reversed pair is put in order.
    pub fn positions_to_range(
        &self,
        start: LinePosition,
        end: LinePosition,
        encoding: PositionEncoding,
    ) -> TextRange {
        let start = self.offset_of_position(start, encoding);
        let end = self.offset_of_position(end, encoding);
        TextRange::new(start.min(end), start.max(end))
    }
}

/// The char range of `ropey::Rope` between two LSP positions, clamped like
/// [`LineIndex::offset_of_position`] (a reversed pair is put in order). O(log n + 1) per position:
/// many changes in one `didChange` cost no rebuilt index each.
pub fn rope_char_range(
    rope: &ropey::Rope,
    start: LinePosition,
    end: LinePosition,
    encoding: PositionEncoding,
) -> (usize, usize) {
    let start = rope_char_of_position(rope, start, encoding);
    let end = rope_char_of_position(rope, end, encoding);
    (start.min(end), start.max(end))
}

fn rope_char_of_position(
    rope: &ropey::Rope,
    position: LinePosition,
    encoding: PositionEncoding,
) -> usize {
    let line = position.line as usize;
    if line >= rope.len_lines() {
        return rope.len_chars();
    }
    let line_start = rope.line_to_char(line);
    let mut content_end = if line + 1 < rope.len_lines() {
        rope.line_to_char(line + 1)
    } else {
        rope.len_chars()
    };
    // the line's content ends before its break: LF, CRLF or CR
    if content_end > line_start && rope.char(content_end - 1) == '\n' {
        content_end -= 1;
        if content_end > line_start && rope.char(content_end - 1) == '\r' {
            content_end -= 1;
        }
    } else if content_end > line_start && rope.char(content_end - 1) == '\r' {
        content_end -= 1;
    }
    let wanted = position.character as usize;
    // past the content end clamps to it; inside a character snaps to its start (ropey's
    // conversions return the char a unit or byte belongs to)
    match encoding {
        PositionEncoding::Utf16 => {
            let target = rope.char_to_utf16_cu(line_start).saturating_add(wanted);
            if target >= rope.char_to_utf16_cu(content_end) {
                content_end
            } else {
                rope.utf16_cu_to_char(target)
            }
        }
        PositionEncoding::Utf8 => {
            let target = rope.char_to_byte(line_start).saturating_add(wanted);
            if target >= rope.char_to_byte(content_end) {
                content_end
            } else {
                rope.byte_to_char(target)
            }
        }
    }
}

fn to_u32(value: usize) -> u32 {
    u32::try_from(value).unwrap_or(u32::MAX)
}

#[cfg(test)]
mod tests {
    use super::*;
    use PositionEncoding::{Utf16, Utf8};

    fn pos(line: u32, character: u32) -> LinePosition {
        LinePosition::new(line, character)
    }

    #[test]
    fn lf_crlf_and_lone_cr_all_end_lines() {
        // LSP 3.17 "Text Documents": end-of-line sequences are '\n', '\r\n' and '\r'
        let index = LineIndex::new("a\nbb\r\ncc\rd");
        assert_eq!(index.line_count(), 4);
        assert_eq!(index.position_of_offset(2, Utf16), pos(1, 0));
        assert_eq!(index.position_of_offset(6, Utf16), pos(2, 0));
        assert_eq!(index.position_of_offset(9, Utf16), pos(3, 0));
        assert_eq!(index.offset_of_position(pos(3, 0), Utf16), 9);
        // the content of line 1 is "bb", without the CRLF
        assert_eq!(index.line_content_range(1), Some(TextRange::new(2, 4)));
        assert_eq!(index.line_content_range(2), Some(TextRange::new(6, 8)));
    }

    #[test]
    fn unicode_line_separators_are_not_line_breaks() {
        // LSP lists only \n, \r\n and \r; U+2028, U+2029 and NEL stay inside the line
        let text = "a\u{2028}b\u{2029}c\u{85}d";
        let index = LineIndex::new(text);
        assert_eq!(index.line_count(), 1);
        // U+2028 and U+2029 are 1 UTF-16 unit / 3 bytes, NEL 1 unit / 2 bytes: 7 units, 12 bytes
        assert_eq!(index.position_of_offset(text.len(), Utf16), pos(0, 7));
        assert_eq!(index.position_of_offset(text.len(), Utf8), pos(0, 12));
    }

    #[test]
    fn rope_lines_follow_the_lsp_rule() {
        let text = "x\u{2028}y\r\nz\rw";
        let rope = ropey::Rope::from_str(text);
        // built with `cr_lines` only: U+2028 is no line break, LF, CR and CRLF are (LSP 3.17)
        assert_eq!(rope.len_lines(), 3);
        let index = LineIndex::from_rope(&rope);
        assert_eq!(index.line_count(), 3);
        assert_eq!(index.text(), text);
    }

    #[test]
    fn rope_positions_agree_with_the_line_index_everywhere() {
        let text = "a\u{1F34F}b\r\n\u{e9}\u{2028}c\rd\n\nlast";
        let rope = ropey::Rope::from_str(text);
        let index = LineIndex::new(text);
        for encoding in [Utf16, Utf8] {
            for line in 0..8 {
                for character in 0..12 {
                    let position = pos(line, character);
                    let (start, _) = rope_char_range(&rope, position, position, encoding);
                    let expected = index.offset_of_position(position, encoding);
                    assert_eq!(
                        rope.char_to_byte(start),
                        expected,
                        "{encoding:?} {line}:{character}"
                    );
                }
            }
        }
    }

    #[test]
    fn crlf_position_at_end_of_line_content() {
        let index = LineIndex::new("ab\r\ncd");
        // offset 3 sits between CR and LF: the end of line 0's content
        assert_eq!(index.position_of_offset(3, Utf16), pos(0, 2));
        assert_eq!(index.position_of_offset(2, Utf16), pos(0, 2));
        // a character past the line end clamps to the content end, before the CR
        assert_eq!(index.offset_of_position(pos(0, 10), Utf16), 2);
    }

    #[test]
    fn empty_last_line_after_trailing_break() {
        let index = LineIndex::new("{}\n");
        assert_eq!(index.line_count(), 2);
        assert_eq!(index.position_of_offset(3, Utf16), pos(1, 0));
        assert_eq!(index.offset_of_position(pos(1, 0), Utf16), 3);
        assert_eq!(index.offset_of_position(pos(1, 5), Utf16), 3);
        let crlf = LineIndex::new("{}\r\n");
        assert_eq!(crlf.position_of_offset(4, Utf16), pos(1, 0));
        let cr = LineIndex::new("{}\r");
        assert_eq!(cr.position_of_offset(3, Utf16), pos(1, 0));
        assert_eq!(cr.line_content_range(0), Some(TextRange::new(0, 2)));
    }

    #[test]
    fn empty_text() {
        let index = LineIndex::new("");
        assert_eq!(index.line_count(), 1);
        assert_eq!(index.position_of_offset(0, Utf16), pos(0, 0));
        assert_eq!(index.position_of_offset(7, Utf16), pos(0, 0));
        assert_eq!(index.offset_of_position(pos(3, 3), Utf16), 0);
    }

    #[test]
    fn astral_plane_characters_count_two_utf16_units_and_four_bytes() {
        // U+1F600 is outside the BMP: 2 UTF-16 code units (a surrogate pair), 4 UTF-8 bytes
        // (Unicode Standard, ch. 3.9 "Unicode Encoding Forms"); the recipe's "x 😀 bad" case has
        // `bad` at UTF-16 columns 5..8
        let text = "x \u{1F600} bad";
        let index = LineIndex::new(text);
        let bad = text.find("bad").unwrap_or(0);
        assert_eq!(bad, 7);
        assert_eq!(index.position_of_offset(bad, Utf16), pos(0, 5));
        assert_eq!(index.position_of_offset(bad + 3, Utf16), pos(0, 8));
        assert_eq!(index.position_of_offset(bad, Utf8), pos(0, 7));
        assert_eq!(index.offset_of_position(pos(0, 5), Utf16), bad);
        assert_eq!(index.offset_of_position(pos(0, 7), Utf8), bad);
    }

    #[test]
    fn inside_a_surrogate_pair_snaps_to_the_character_start() {
        let text = "a\u{1F34E}b"; // an apple emoji between a and b
        let index = LineIndex::new(text);
        // character 2 falls between the high and the low surrogate
        assert_eq!(index.offset_of_position(pos(0, 2), Utf16), 1);
        assert_eq!(index.offset_of_position(pos(0, 3), Utf16), 5);
        // UTF-8: byte 3 is inside the 4-byte sequence
        assert_eq!(index.offset_of_position(pos(0, 3), Utf8), 1);
        // a byte offset inside the character snaps back too
        assert_eq!(index.position_of_offset(3, Utf16), pos(0, 1));
    }

    #[test]
    fn bmp_characters_are_one_utf16_unit() {
        // é (U+00E9, 2 bytes) and 木 (U+6728, 3 bytes) are one UTF-16 unit each
        let text = "é木x";
        let index = LineIndex::new(text);
        assert_eq!(index.position_of_offset(5, Utf16), pos(0, 2));
        assert_eq!(index.position_of_offset(5, Utf8), pos(0, 5));
        assert_eq!(index.offset_of_position(pos(0, 2), Utf16), 5);
    }

    #[test]
    fn out_of_range_positions_clamp() {
        let text = "ab\ncd";
        let index = LineIndex::new(text);
        assert_eq!(index.offset_of_position(pos(9, 0), Utf16), text.len());
        assert_eq!(index.offset_of_position(pos(0, 99), Utf16), 2);
        assert_eq!(index.offset_of_position(pos(1, u32::MAX), Utf8), 5);
        assert_eq!(index.position_of_offset(999, Utf16), pos(1, 2));
    }

    #[test]
    fn round_trips_on_every_character_boundary() {
        let text = "{\"t\": \"🍏 crates\",\r\n \"x\": \"naïve\"\r\r\n\u{2028}\"z\" 😀😀\n";
        let index = LineIndex::new(text);
        for encoding in [Utf8, Utf16] {
            for (offset, _) in text.char_indices().chain([(text.len(), ' ')]) {
                let position = index.position_of_offset(offset, encoding);
                let back = index.offset_of_position(position, encoding);
                let is_cr_of_crlf = text.as_bytes().get(offset) == Some(&b'\n')
                    && offset > 0
                    && text.as_bytes()[offset - 1] == b'\r';
                if is_cr_of_crlf {
                    assert_eq!(back, offset - 1, "LF of CRLF maps to the CR at {offset}");
                } else {
                    assert_eq!(back, offset, "{encoding:?} round trip at {offset}");
                }
            }
        }
    }

    #[test]
    fn negotiation_prefers_utf8_when_offered() {
        // LSP 3.17 general.positionEncodings: utf-16 must always be supported and is the default
        assert_eq!(PositionEncoding::negotiate([]), Utf16);
        assert_eq!(PositionEncoding::negotiate(["utf-16"]), Utf16);
        assert_eq!(
            PositionEncoding::negotiate(["utf-32", "utf-8", "utf-16"]),
            Utf8
        );
    }

    /// A naive reference: split into lines by the LSP rule, count the units before `offset`.
    fn reference_position(text: &str, offset: usize, encoding: PositionEncoding) -> LinePosition {
        let mut line = 0u32;
        let mut line_start = 0usize;
        let bytes = text.as_bytes();
        let mut index = 0;
        while index < offset {
            let is_break = bytes[index] == b'\n'
                || (bytes[index] == b'\r' && bytes.get(index + 1) != Some(&b'\n'));
            if is_break {
                line += 1;
                line_start = index + 1;
            }
            index += 1;
        }
        let prefix = &text[line_start..offset];
        let character = match encoding {
            Utf8 => prefix.len(),
            Utf16 => prefix.encode_utf16().count(),
        };
        LinePosition::new(line, character as u32)
    }

    proptest::proptest! {
        #[test]
        fn agrees_with_a_naive_reference_on_random_texts(
            pieces in proptest::collection::vec(
                proptest::sample::select(vec!["a", "\n", "\r", "\r\n", "\u{1F600}", "\u{e9}", "\u{2028}", "\u{85}", "{", " "]),
                0..60,
            )
        ) {
            let text: String = pieces.concat();
            let index = LineIndex::new(&text);
            for encoding in [Utf8, Utf16] {
                for (offset, _) in text.char_indices().chain([(text.len(), ' ')]) {
                    // the LF of a CRLF belongs to the line break, not to a line
                    let inside_crlf = offset > 0
                        && text.as_bytes().get(offset) == Some(&b'\n')
                        && text.as_bytes()[offset - 1] == b'\r';
                    if inside_crlf {
                        continue;
                    }
                    let position = index.position_of_offset(offset, encoding);
                    proptest::prop_assert_eq!(position, reference_position(&text, offset, encoding));
                    proptest::prop_assert_eq!(index.offset_of_position(position, encoding), offset);
                }
            }
        }
    }
}
