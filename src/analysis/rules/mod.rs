//! The rule registry. Each rule lives in its own file with its documentation beside it.

use crate::analysis::{AnalysisConfig, ParsedDocument};
use crate::data::DataContext;
use crate::diagnostic::Diagnostic;

/// Id of syntax errors (not a rule of the registry: parsing reports them).
pub const SYNTAX_ERROR: &str = "syntax-error";

/// Run every registered rule.
pub fn run_all(
    document: &ParsedDocument,
    data: &DataContext,
    config: &AnalysisConfig,
) -> Vec<Diagnostic> {
    let _ = (document, data, config);
    Vec::new()
}
