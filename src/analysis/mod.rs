//! Layer 4: the analysis, a pure function of (document text, data profiles, configuration,
//! evaluation). It knows nothing of LSP or the terminal.
//!
//! Two steps so that front ends can load data in between:
//! 1. [`parse_document`] parses and lowers the text (syntax, schema and model diagnostics);
//! 2. [`analyze`] runs the rules over the model and the profiles the front end loaded for it;
//!    [`analyze_with_evaluation`] also gives them what the chart draws (the front end evaluated
//!    the spec over its rows), so that rules judge the drawn values rather than the profile.

pub mod channels;
pub mod config;
pub mod drawn;
pub mod facts;
pub mod refactor;
pub mod rules;

use std::collections::HashMap;

use crate::data::DataContext;
use crate::diagnostic::Diagnostic;
use crate::eval::EvaluatedChart;
use crate::spec::model::ChartSpec;
use crate::syntax::SyntaxTree;

pub use config::AnalysisConfig;

/// Syntax errors reported per document; a megabyte of stray commas stays readable. Common
/// practice, no source.
pub const MAX_SYNTAX_ERRORS: usize = 200;

/// A parsed and lowered document.
#[derive(Clone, Debug)]
pub struct ParsedDocument {
    pub tree: SyntaxTree,
    pub spec: ChartSpec,
    /// Syntax, schema and model diagnostics.
    pub diagnostics: Vec<Diagnostic>,
}

/// Parse and lower `text`. Never fails.
pub fn parse_document(text: &str) -> ParsedDocument {
    parse_shared_document(std::sync::Arc::from(text))
}

/// [`parse_document`] keeping `text` itself in the tree, without a copy.
pub fn parse_shared_document(text: std::sync::Arc<str>) -> ParsedDocument {
    let tree = crate::syntax::parse_shared(text);
    let errors = tree.errors();
    let mut diagnostics: Vec<Diagnostic> = errors
        .iter()
        .take(MAX_SYNTAX_ERRORS)
        .map(|error| {
            // a duplicate key is valid JSON (RFC 8259 section 4: names SHOULD be unique) but
            // ambiguous, so it has its own rule
            let rule = match error.kind {
                crate::syntax::SyntaxErrorKind::DuplicateKey => rules::DUPLICATE_KEY,
                _ => rules::SYNTAX_ERROR,
            };
            let mut diagnostic = Diagnostic::new(
                rule,
                crate::diagnostic::Severity::Error,
                error.range,
                error.message.clone(),
            );
            if rule == rules::DUPLICATE_KEY {
                diagnostic
                    .message
                    .push_str(": markwell reads the first one, other readers may take this one");
                if let Some(fix) = remove_duplicate_member(&tree, error.range) {
                    diagnostic.fixes.push(fix);
                }
            }
            diagnostic
        })
        .collect();
    if let Some(first_hidden) = errors.get(MAX_SYNTAX_ERRORS) {
        diagnostics.push(Diagnostic::new(
            rules::SYNTAX_ERROR,
            crate::diagnostic::Severity::Error,
            first_hidden.range,
            format!(
                "{} more syntax errors from here on are not shown",
                errors.len() - MAX_SYNTAX_ERRORS
            ),
        ));
    }
    let (spec, model_diagnostics) = crate::spec::lower_document(&tree);
    diagnostics.extend(model_diagnostics);
    diagnostics.extend(crate::spec::schema::check_schema(&tree));
    ParsedDocument {
        tree,
        spec,
        diagnostics,
    }
}

/// The fix for a duplicate key at `key_range`: remove its member together with the comma
/// before it (a duplicate always has an earlier member in the same object).
fn remove_duplicate_member(
    tree: &SyntaxTree,
    key_range: crate::TextRange,
) -> Option<crate::diagnostic::Fix> {
    let mut node = tree.node_at_offset(key_range.start);
    while node.kind() != crate::syntax::NodeKind::Member {
        node = node.parent()?;
    }
    let object = node.parent()?;
    let mut previous = None;
    for member in object.members() {
        if member.range() == node.range() {
            break;
        }
        previous = Some(member.range());
    }
    let previous = previous?;
    let key = tree
        .text()
        .get(key_range.start..key_range.end)
        .unwrap_or_default();
    let key = key.trim_matches('"');
    let shown = key.get(..40).unwrap_or(key);
    Some(crate::diagnostic::Fix::quick(
        format!("remove the second `{shown}` and its value"),
        vec![crate::diagnostic::TextEdit {
            range: crate::TextRange::new(previous.end, node.range().end),
            new_text: String::new(),
        }],
    ))
}
/// Documents up to this size have every fix of a semantic rule checked by applying it and
/// analysing the result (one analysis per fix); larger ones keep their fixes unchecked, so that
/// a megabyte spec is not analysed once per fix on every keystroke. markwell's choice, no source.
pub const MAX_TEXT_FOR_FIX_CHECK: usize = 256 * 1024;

/// Bytes analysed, summed over the fix checks of one analysis: past it the remaining fixes stay
/// unchecked, so a document with hundreds of fixable findings still answers quickly (a 16 KiB
/// spec gets 64 checks, a 256 KiB one 4). markwell's choice, no source.
pub const FIX_CHECK_BUDGET_BYTES: usize = 1024 * 1024;

/// All diagnostics for a document: those of parsing and lowering, then the rules', with the
/// configuration's severities applied, sorted by position. A fix of a semantic rule is kept only
/// when applying it adds no finding (no rule reports more than before); see
/// [`MAX_TEXT_FOR_FIX_CHECK`] and [`FIX_CHECK_BUDGET_BYTES`] for the limits of that check.
pub fn analyze(
    document: &ParsedDocument,
    data: &DataContext,
    config: &AnalysisConfig,
) -> Vec<Diagnostic> {
    analyze_with_evaluation(document, data, config, None)
}

/// [`analyze`] with what the chart draws: `evaluation` must be of `document`'s spec over the
/// same data (the layers are matched by index and mark). The fixes are checked on the fixed
/// text without the evaluation (it was of the text before the fix), against the findings of
/// the text before the fix without it too, so that both sides are judged alike.
pub fn analyze_with_evaluation(
    document: &ParsedDocument,
    data: &DataContext,
    config: &AnalysisConfig,
    evaluation: Option<&EvaluatedChart>,
) -> Vec<Diagnostic> {
    let mut diagnostics = analyze_unchecked_with_evaluation(document, data, config, evaluation);
    let text = document.tree.text();
    if text.len() > MAX_TEXT_FOR_FIX_CHECK {
        return diagnostics;
    }
    let has_checked_fix = diagnostics.iter().any(|diagnostic| {
        !diagnostic.fixes.is_empty()
            && matches!(
                rules::rule_by_id(diagnostic.rule).map(|rule| rule.check),
                Some(rules::RuleCheck::Semantic(_))
            )
    });
    if !has_checked_fix {
        return diagnostics;
    }
    let mut budget = FIX_CHECK_BUDGET_BYTES;
    let before = match evaluation {
        None => rule_counts(&diagnostics),
        Some(_) => {
            budget = budget.saturating_sub(text.len());
            rule_counts(&analyze_unchecked(document, data, config))
        }
    };
    for diagnostic in &mut diagnostics {
        let checked = matches!(
            rules::rule_by_id(diagnostic.rule).map(|rule| rule.check),
            Some(rules::RuleCheck::Semantic(_))
        );
        if !checked || diagnostic.fixes.is_empty() {
            continue;
        }
        let fixes = std::mem::take(&mut diagnostic.fixes);
        diagnostic.fixes = fixes
            .into_iter()
            .filter(|fix| {
                if budget < text.len() {
                    return true; // past the budget: kept unchecked
                }
                budget -= text.len();
                adds_no_finding(text, &before, &fix.edits, data, config).is_some()
            })
            .collect();
    }
    diagnostics
}

/// How many findings each rule reports.
pub fn rule_counts(diagnostics: &[Diagnostic]) -> HashMap<&'static str, usize> {
    let mut counts = HashMap::new();
    for diagnostic in diagnostics {
        *counts.entry(diagnostic.rule).or_insert(0) += 1;
    }
    counts
}

/// Apply `edits` to `text` and analyse the result (fixes unchecked): the new text and its
/// diagnostics when no rule reports more findings than in `before`, `None` otherwise (or when
/// the edits do not apply). The data is the same: edits that change a `source` are not meant.
pub fn adds_no_finding(
    text: &str,
    before: &HashMap<&'static str, usize>,
    edits: &[crate::diagnostic::TextEdit],
    data: &DataContext,
    config: &AnalysisConfig,
) -> Option<(String, Vec<Diagnostic>)> {
    let edited = crate::diagnostic::apply_edits(text, edits)?;
    let after = analyze_unchecked(&parse_document(&edited), data, config);
    let grew = rule_counts(&after)
        .into_iter()
        .any(|(rule, count)| count > before.get(rule).copied().unwrap_or(0));
    (!grew).then_some((edited, after))
}

/// [`analyze`] without checking the fixes.
pub fn analyze_unchecked(
    document: &ParsedDocument,
    data: &DataContext,
    config: &AnalysisConfig,
) -> Vec<Diagnostic> {
    analyze_unchecked_with_evaluation(document, data, config, None)
}

/// [`analyze_with_evaluation`] without checking the fixes.
pub fn analyze_unchecked_with_evaluation(
    document: &ParsedDocument,
    data: &DataContext,
    config: &AnalysisConfig,
    evaluation: Option<&EvaluatedChart>,
) -> Vec<Diagnostic> {
    let mut diagnostics = document.diagnostics.clone();
    diagnostics.extend(rules::run_all(document, data, config, evaluation));
    let mut out: Vec<Diagnostic> = diagnostics
        .into_iter()
        .filter_map(|mut diagnostic| {
            let severity = config.severity_for(diagnostic.rule, diagnostic.severity)?;
            diagnostic.severity = severity;
            Some(diagnostic)
        })
        .collect();
    out.sort_by(|a, b| {
        (a.range.start, a.range.end, a.rule).cmp(&(b.range.start, b.range.end, b.rule))
    });
    // the same finding from two routes (for example schema and model) is reported once
    let mut seen: HashMap<(usize, usize, &'static str), ()> = HashMap::new();
    out.retain(|d| {
        seen.insert((d.range.start, d.range.end, d.rule), ())
            .is_none()
    });
    out
}
