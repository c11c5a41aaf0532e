//! Byte ranges into a document's text. Every layer below `lsp` speaks in these.

use std::fmt;

/// A half-open byte range `start..end` into a UTF-8 text.
#[derive(Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Default)]
pub struct TextRange {
    pub start: usize,
    pub end: usize,
}

impl TextRange {
    pub fn new(start: usize, end: usize) -> TextRange {
        debug_assert!(start <= end, "range {start}..{end} is reversed");
        TextRange { start, end }
    }

    /// An empty range at `offset`.
    pub fn empty(offset: usize) -> TextRange {
        TextRange {
            start: offset,
            end: offset,
        }
    }

    pub fn len(&self) -> usize {
        self.end - self.start
    }

    pub fn is_empty(&self) -> bool {
        self.start == self.end
    }

    /// The smallest range that covers both.
    pub fn cover(self, other: TextRange) -> TextRange {
        TextRange {
            start: self.start.min(other.start),
            end: self.end.max(other.end),
        }
    }

    /// `offset` lies inside the range, or at its end.
    pub fn contains_inclusive(&self, offset: usize) -> bool {
        self.start <= offset && offset <= self.end
    }

    pub fn contains_range(&self, other: TextRange) -> bool {
        self.start <= other.start && other.end <= self.end
    }

    pub fn intersects(&self, other: TextRange) -> bool {
        self.start <= other.end && other.start <= self.end
    }
}

impl fmt::Debug for TextRange {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}..{}", self.start, self.end)
    }
}
