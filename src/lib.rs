//! markwell: a checker and language server for chart-spec documents.
//!
//! Layers, imports one way (see DEVELOPERS.md):
//! `syntax` → `spec` → `data`, `knowledge` → `analysis` → `cli`, `lsp`.
//! Only `lsp` talks LSP; only `cli` talks to the terminal.

pub mod analysis;
pub mod budget;
pub mod cli;
pub mod data;
pub mod diagnostic;
pub mod draw;
pub mod eval;
pub mod fsguard;
pub mod knowledge;
pub mod lsp;
pub mod positions;
pub mod spec;
pub mod syntax;
pub mod text_range;

pub use diagnostic::{Diagnostic, Fix, FixKind, RelatedLocation, Severity, TextEdit};
pub use text_range::TextRange;
