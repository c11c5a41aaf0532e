//! Open documents: one record per URI with its version, its text in a `ropey::Rope`, the line
//! index of that text, and the outcome of the latest analysis. Applying a change is synchronous
//! (no `.await`), so changes are applied in the order the client sent them.
//!
//! Positions of incremental changes are converted on the rope itself
//! ([`crate::positions::rope_char_range`]; ropey is built with the LSP line rule only), so each
//! change of a `didChange` costs O(log n) and the text and its [`LineIndex`] are materialised once
//! per notification (O(n)), because the parser wants a `&str`.

use std::path::PathBuf;
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::Arc;

use ropey::Rope;

use crate::analysis::ParsedDocument;
use crate::data::{DataContext, ReadOptions};
use crate::diagnostic::Diagnostic;
use crate::positions::{LineIndex, LinePosition, PositionEncoding};

/// A process-wide counter: every text state of every document gets its own generation, so a
/// result is matched to the exact text it was computed from even when a client reuses version
/// numbers (or closes and reopens a document).
pub fn next_generation() -> u64 {
    static COUNTER: AtomicU64 = AtomicU64::new(1);
    COUNTER.fetch_add(1, Ordering::Relaxed)
}

/// One change of `textDocument/didChange`, with LSP types already stripped.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct TextChange {
    /// `None` replaces the whole document.
    pub range: Option<(LinePosition, LinePosition)>,
    pub text: String,
}

/// The result of analysing one version of a document.
#[derive(Debug)]
pub struct AnalysisOutcome {
    /// The client's version of the analysed text (for publishing).
    pub version: i32,
    /// The generation of the analysed text (for matching results to texts).
    pub generation: u64,
    pub index: Arc<LineIndex>,
    pub parsed: Arc<ParsedDocument>,
    pub data: Arc<DataContext>,
    pub diagnostics: Vec<Diagnostic>,
    /// Files that only have a sampled profile yet: (canonical path, how to read them).
    pub pending_full_scans: Vec<(PathBuf, ReadOptions)>,
    /// What the chart draws, as the rules saw it (over the sampled head until the exact
    /// evaluation arrives); `None` when it was not evaluated.
    pub evaluation: Option<Arc<crate::eval::EvaluatedChart>>,
    /// The sampled evaluation the next analysis may reuse (see `evaluation_cache`).
    pub kept_evaluation: Option<Arc<crate::lsp::evaluation_cache::CachedEvaluation>>,
}

#[derive(Debug)]
pub struct OpenDocument {
    pub version: i32,
    pub generation: u64,
    pub language_id: String,
    rope: Rope,
    index: Arc<LineIndex>,
    /// The latest analysis (possibly of an older version).
    pub latest: Option<Arc<AnalysisOutcome>>,
}

impl OpenDocument {
    pub fn new(text: &str, version: i32, language_id: String) -> OpenDocument {
        OpenDocument {
            version,
            generation: next_generation(),
            language_id,
            rope: Rope::from_str(text),
            index: Arc::new(LineIndex::new(text)),
            latest: None,
        }
    }

    pub fn index(&self) -> Arc<LineIndex> {
        self.index.clone()
    }

    pub fn text(&self) -> &str {
        self.index.text()
    }

    /// Apply the changes in order and set the new version. Every change's range is read in the
    /// document as left by the previous change (LSP 3.17 `didChange`).
    pub fn apply_changes(
        &mut self,
        version: i32,
        changes: Vec<TextChange>,
        encoding: PositionEncoding,
    ) {
        for change in changes {
            match change.range {
                None => self.rope = Rope::from_str(&change.text),
                Some((start, end)) => {
                    // read in the previous change's result, as the protocol says
                    let (start_char, end_char) =
                        crate::positions::rope_char_range(&self.rope, start, end, encoding);
                    self.rope.remove(start_char..end_char);
                    self.rope.insert(start_char, &change.text);
                }
            }
        }
        self.index = Arc::new(LineIndex::from_rope(&self.rope));
        self.version = version;
        self.generation = next_generation();
    }

    /// The latest analysis if it is of the current version.
    pub fn current_analysis(&self) -> Option<Arc<AnalysisOutcome>> {
        self.latest
            .as_ref()
            .filter(|outcome| outcome.generation == self.generation)
            .cloned()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn change(start: (u32, u32), end: (u32, u32), text: &str) -> TextChange {
        TextChange {
            range: Some((
                LinePosition::new(start.0, start.1),
                LinePosition::new(end.0, end.1),
            )),
            text: text.to_string(),
        }
    }

    #[test]
    fn incremental_changes_apply_in_order_on_the_previous_result() {
        let mut document = OpenDocument::new("{\n  \"mark\": \"bar\"\n}\n", 1, "chartspec".into());
        document.apply_changes(
            2,
            vec![
                change((1, 11), (1, 14), "line"),
                // this range is read in the text after the first change
                change((1, 15), (1, 16), "\","),
            ],
            PositionEncoding::Utf16,
        );
        assert_eq!(document.text(), "{\n  \"mark\": \"line\",\n}\n");
        assert_eq!(document.version, 2);
    }

    #[test]
    fn utf16_change_after_an_emoji_lands_on_the_right_bytes() {
        // "x 😀 bad": `bad` is UTF-16 columns 5..8 (the emoji counts 2 units)
        let mut document = OpenDocument::new("x \u{1F600} bad\n", 1, "chartspec".into());
        document.apply_changes(
            2,
            vec![change((0, 5), (0, 8), "good")],
            PositionEncoding::Utf16,
        );
        assert_eq!(document.text(), "x \u{1F600} good\n");
        let mut utf8 = OpenDocument::new("x \u{1F600} bad\n", 1, "chartspec".into());
        utf8.apply_changes(
            2,
            vec![change((0, 7), (0, 10), "good")],
            PositionEncoding::Utf8,
        );
        assert_eq!(utf8.text(), "x \u{1F600} good\n");
    }

    #[test]
    fn unicode_line_separator_does_not_shift_lines() {
        // ropey would count U+2028 as a line break; LSP (and our index) does not
        let mut document = OpenDocument::new("a\u{2028}b\nc", 1, "chartspec".into());
        document.apply_changes(
            2,
            vec![change((1, 0), (1, 1), "z")],
            PositionEncoding::Utf16,
        );
        assert_eq!(document.text(), "a\u{2028}b\nz");
    }

    #[test]
    fn whole_document_change_and_out_of_range_positions() {
        let mut document = OpenDocument::new("abc", 1, "chartspec".into());
        document.apply_changes(
            2,
            vec![TextChange {
                range: None,
                text: "hello\r\nworld".into(),
            }],
            PositionEncoding::Utf16,
        );
        assert_eq!(document.text(), "hello\r\nworld");
        // a range past the end clamps to the end: an append
        document.apply_changes(
            3,
            vec![change((40, 2), (99, 0), "!")],
            PositionEncoding::Utf16,
        );
        assert_eq!(document.text(), "hello\r\nworld!");
        // a character past the end of line 0 clamps before the CRLF
        document.apply_changes(
            4,
            vec![change((0, 80), (0, 90), ",")],
            PositionEncoding::Utf16,
        );
        assert_eq!(document.text(), "hello,\r\nworld!");
    }

    /// UTF-16 position of a byte offset, lines split at \n, \r\n and \r (naive, for checking).
    fn naive_utf16_position(text: &str, offset: usize) -> LinePosition {
        let bytes = text.as_bytes();
        let (mut line, mut line_start) = (0, 0);
        for index in 0..offset {
            if bytes[index] == b'\n'
                || (bytes[index] == b'\r' && bytes.get(index + 1) != Some(&b'\n'))
            {
                line += 1;
                line_start = index + 1;
            }
        }
        LinePosition::new(line, text[line_start..offset].encode_utf16().count() as u32)
    }

    /// `changes` one-character inserts in one notification, to a document of `changes / 10`
    /// lines of 100 bytes: the document grows with the batch, so a cost per change that grows
    /// with the document shows as a quadratic total.
    fn apply_many_changes(changes: usize) -> std::time::Duration {
        let lines = changes / 10;
        let line = format!("{}\n", "x".repeat(99));
        let mut document = OpenDocument::new(&line.repeat(lines), 1, "chartspec".into());
        let batch: Vec<TextChange> = (0..changes)
            .map(|step| {
                let at = ((step * 7) % lines) as u32;
                change((at, 10), (at, 10), "y")
            })
            .collect();
        let started = std::time::Instant::now();
        document.apply_changes(2, batch, PositionEncoding::Utf16);
        let elapsed = started.elapsed();
        assert_eq!(document.text().len(), lines * 100 + changes);
        elapsed
    }

    #[test]
    fn many_changes_in_one_notification_cost_linear_time() {
        // was: the line index (a copy of the whole text) was rebuilt after every change: 16
        // times the work for 4 times the changes on a 4 times larger document (20,000 changes
        // to 200 KB took 2 minutes in a debug build). Linear: at most 8 times as long, plus
        // 0.5 s of slack for a loaded machine.
        let small = apply_many_changes(5_000);
        let large = apply_many_changes(20_000);
        assert!(
            large <= small * 8 + std::time::Duration::from_millis(500),
            "5,000 changes to 50 KB {small:?}, 20,000 changes to 200 KB {large:?}"
        );
    }

    proptest::proptest! {
        #[test]
        fn random_incremental_edits_match_plain_string_edits(
            start_text in "[a\r\n\u{1F34F}\u{e9}\u{2028}{}\" ]{0,40}",
            edits in proptest::collection::vec((0usize..64, 0usize..8, "[b\r\n\u{1F600}\u{2028}]{0,4}"), 1..12)
        ) {
            let mut document = OpenDocument::new(&start_text, 1, "chartspec".into());
            let mut expected = start_text.clone();
            let mut batch = Vec::new();
            for (step, (at, length, insert)) in edits.into_iter().enumerate() {
                let boundaries: Vec<usize> = expected
                    .char_indices()
                    .map(|(offset, _)| offset)
                    .chain([expected.len()])
                    // not between the CR and the LF of a CRLF: no position names that byte
                    .filter(|&offset| {
                        !(offset > 0
                            && expected.as_bytes().get(offset) == Some(&b'\n')
                            && expected.as_bytes()[offset - 1] == b'\r')
                    })
                    .collect();
                let start = boundaries[at % boundaries.len()];
                let end = boundaries[(at % boundaries.len() + length).min(boundaries.len() - 1)];
                let change = TextChange {
                    range: Some((naive_utf16_position(&expected, start), naive_utf16_position(&expected, end))),
                    text: insert.clone(),
                };
                document.apply_changes(2 + step as i32, vec![change.clone()], PositionEncoding::Utf16);
                batch.push(change);
                expected.replace_range(start..end, &insert);
                proptest::prop_assert_eq!(document.text(), expected.as_str());
            }
            // the same changes in one notification, each read in the previous one's result
            let mut batched = OpenDocument::new(&start_text, 1, "chartspec".into());
            batched.apply_changes(2, batch, PositionEncoding::Utf16);
            proptest::prop_assert_eq!(batched.text(), expected.as_str());
            let index = batched.index();
            proptest::prop_assert_eq!(index.text(), expected.as_str());
        }
    }
}
