//! The one place that converts byte offsets to and from LSP positions (line, character), in
//! UTF-16 code units (the LSP default) or UTF-8 bytes, through a line index.
//! PLACEHOLDER: the real module replaces this file.

/// How the `character` of an LSP position is counted (LSP 3.17 `PositionEncodingKind`).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
pub enum PositionEncoding {
    Utf8,
    #[default]
    Utf16,
}

/// A 0-based line and character, as in LSP.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Default)]
pub struct LinePosition {
    pub line: u32,
    pub character: u32,
}
