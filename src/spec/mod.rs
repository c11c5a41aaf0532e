//! Layer 2: the typed chart-spec model lowered from the syntax tree, and the JSON Schema check.

pub mod lower;
pub mod model;
pub mod schema;
pub mod suggest;
pub mod synonyms;

pub use lower::lower_document;
pub use model::*;
