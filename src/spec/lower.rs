//! Lowering: syntax tree → `ChartSpec`. PLACEHOLDER: filled in next.

use crate::diagnostic::Diagnostic;
use crate::spec::model::ChartSpec;
use crate::syntax::SyntaxTree;

/// Lower a parsed document into the model. Never fails: what cannot be read is left out and
/// reported in the returned diagnostics.
pub fn lower_document(tree: &SyntaxTree) -> (ChartSpec, Vec<Diagnostic>) {
    let _ = tree;
    (ChartSpec::default(), Vec::new())
}
