//! The rule registry. Each rule lives in its own file with its documentation beside it (a
//! Markdown file of the same name with the sections of [`DOC_SECTIONS`]); `markwell explain ID`
//! prints it.

mod angle_for_comparison;
mod area_perception;
mod better_channel_free;
mod capacity;
mod channel_not_on_mark;
mod connected_unordered;
mod emphasis_order;
mod evaluation_timed_out;
mod kind_conflict;
mod levels_mismatch;
mod log_of_nonpositive;
mod low_contrast_mark;
mod magnitude_of_interval;
pub mod malformed_data;
mod missing_source;
mod negative_area;
mod no_data_source;
mod ordered_channel_for_categories;
mod palette_cvd_collision;
mod palette_too_short;
mod palette_too_similar;
pub mod part_to_whole_invalid;
mod ramp_not_monotonic;
mod rows_share_a_mark;
mod sparse_column;
mod stacked_comparison;
mod summary_on_categorical;
mod too_many_hues;
mod too_many_shapes;
mod too_many_slices;
mod truncated_baseline;
mod unknown_column;
mod unordered_channel_for_order;

use crate::analysis::facts::{layer_facts_with_evaluation, LayerFacts};
use crate::analysis::{AnalysisConfig, ParsedDocument};
use crate::data::DataContext;
use crate::diagnostic::{Diagnostic, Severity};
use crate::eval::EvaluatedChart;
use crate::spec::model::ChartSpec;

/// Id of syntax errors (reported by the parser).
pub const SYNTAX_ERROR: &str = "syntax-error";

/// Id of duplicate keys (found by the parser; valid JSON, but readers disagree on which wins).
pub const DUPLICATE_KEY: &str = "duplicate-key";

/// Everything a rule may look at.
pub struct RuleContext<'a> {
    pub document: &'a ParsedDocument,
    pub data: &'a DataContext,
    pub config: &'a AnalysisConfig,
    /// What the chart draws, when the front end evaluated it over the data.
    pub evaluation: Option<&'a EvaluatedChart>,
    /// Per-layer facts (sources, profiles, effective kinds, drawn marks), computed once.
    pub layers: Vec<LayerFacts<'a>>,
}

impl<'a> RuleContext<'a> {
    pub fn new(
        document: &'a ParsedDocument,
        data: &'a DataContext,
        config: &'a AnalysisConfig,
    ) -> RuleContext<'a> {
        RuleContext::with_evaluation(document, data, config, None)
    }

    /// A context whose layers carry what `evaluation` says they draw.
    pub fn with_evaluation(
        document: &'a ParsedDocument,
        data: &'a DataContext,
        config: &'a AnalysisConfig,
        evaluation: Option<&'a EvaluatedChart>,
    ) -> RuleContext<'a> {
        RuleContext {
            document,
            data,
            config,
            evaluation,
            layers: layer_facts_with_evaluation(&document.spec, data, evaluation),
        }
    }

    pub fn spec(&self) -> &'a ChartSpec {
        &self.document.spec
    }

    /// The text of the document.
    pub fn text(&self) -> &'a str {
        self.document.tree.text()
    }
}

/// Where a rule's findings come from.
#[derive(Clone, Copy)]
pub enum RuleCheck {
    /// Found while parsing, lowering or checking the schema (not run by the registry).
    Document,
    /// Run over the model and the data.
    Semantic(fn(&RuleContext<'_>) -> Vec<Diagnostic>),
}

/// A registered rule.
pub struct Rule {
    /// Stable kebab-case id.
    pub id: &'static str,
    pub default_severity: Severity,
    /// Catalogue section (`document`, `data`, `expressiveness`, ...).
    pub group: &'static str,
    /// One line for `markwell rules`.
    pub summary: &'static str,
    pub has_fix: bool,
    /// The Markdown documentation.
    pub docs: &'static str,
    pub check: RuleCheck,
}

/// The sections every rule's documentation has, exactly these and in this order: what readers
/// misjudge, what in the spec and the data triggers the rule, a spec with the problem, one
/// without, and the evidence (full citations, or "Common practice; no published source").
pub const DOC_SECTIONS: [&str; 5] = [
    "## What readers get wrong",
    "## What sets it off",
    "## A spec that has it",
    "## A spec that does not",
    "## Evidence",
];

/// The body of one section of a rule's documentation (without its heading), trimmed.
pub fn doc_section<'d>(docs: &'d str, heading: &str) -> Option<&'d str> {
    let start = docs.find(heading)? + heading.len();
    let rest = &docs[start..];
    let end = rest.find("\n## ").unwrap_or(rest.len());
    Some(rest[..end].trim())
}

/// All rules, in catalogue order.
pub fn registry() -> &'static [Rule] {
    static RULES: &[Rule] = &[
        Rule {
            id: SYNTAX_ERROR,
            default_severity: Severity::Error,
            group: "document",
            summary: "JSON that does not parse",
            has_fix: false,
            docs: include_str!("syntax-error.md"),
            check: RuleCheck::Document,
        },
        Rule {
            id: DUPLICATE_KEY,
            default_severity: Severity::Error,
            group: "document",
            summary: "a key written twice in one object",
            has_fix: true,
            docs: include_str!("duplicate-key.md"),
            check: RuleCheck::Document,
        },
        Rule {
            id: crate::spec::schema::UNKNOWN_KEY,
            default_severity: Severity::Error,
            group: "document",
            summary: "a key the format does not have",
            has_fix: true,
            docs: include_str!("unknown-key.md"),
            check: RuleCheck::Document,
        },
        Rule {
            id: crate::spec::schema::INVALID_VALUE,
            default_severity: Severity::Error,
            group: "document",
            summary: "a value outside the allowed set",
            has_fix: true,
            docs: include_str!("invalid-value.md"),
            check: RuleCheck::Document,
        },
        Rule {
            id: crate::spec::schema::SCHEMA_MISMATCH,
            default_severity: Severity::Error,
            group: "document",
            summary: "a value of the wrong type or a missing required key",
            has_fix: false,
            docs: include_str!("schema-mismatch.md"),
            check: RuleCheck::Document,
        },
        Rule {
            id: crate::spec::lower::SPEC_STRUCTURE,
            default_severity: Severity::Error,
            group: "document",
            summary: "a chart that draws nothing or mixes layers with a top-level mark",
            has_fix: false,
            docs: include_str!("spec-structure.md"),
            check: RuleCheck::Document,
        },
        missing_source::RULE,
        channel_not_on_mark::RULE,
        malformed_data::RULE,
        no_data_source::RULE,
        evaluation_timed_out::RULE,
        unknown_column::RULE,
        levels_mismatch::RULE,
        kind_conflict::RULE,
        summary_on_categorical::RULE,
        sparse_column::RULE,
        unordered_channel_for_order::RULE,
        ordered_channel_for_categories::RULE,
        connected_unordered::RULE,
        part_to_whole_invalid::RULE,
        rows_share_a_mark::RULE,
        magnitude_of_interval::RULE,
        log_of_nonpositive::RULE,
        negative_area::RULE,
        truncated_baseline::RULE,
        area_perception::RULE,
        better_channel_free::RULE,
        emphasis_order::RULE,
        angle_for_comparison::RULE,
        stacked_comparison::RULE,
        too_many_hues::RULE,
        too_many_shapes::RULE,
        too_many_slices::RULE,
        palette_too_similar::RULE,
        palette_cvd_collision::RULE,
        ramp_not_monotonic::RULE,
        low_contrast_mark::RULE,
        palette_too_short::RULE,
    ];
    RULES
}

pub fn rule_by_id(id: &str) -> Option<&'static Rule> {
    registry().iter().find(|rule| rule.id == id)
}

/// Up to `limit` values in backticks, comma-separated, for messages (`a`, `b`, `c`).
pub fn backticked<S: AsRef<str>>(values: impl IntoIterator<Item = S>, limit: usize) -> String {
    values
        .into_iter()
        .take(limit)
        .map(|value| format!("`{}`", value.as_ref()))
        .collect::<Vec<_>>()
        .join(", ")
}

/// Run every registered semantic rule (with what the chart draws, when it was evaluated).
pub fn run_all(
    document: &ParsedDocument,
    data: &DataContext,
    config: &AnalysisConfig,
    evaluation: Option<&EvaluatedChart>,
) -> Vec<Diagnostic> {
    let context = RuleContext::with_evaluation(document, data, config, evaluation);
    let mut diagnostics = Vec::new();
    for rule in registry() {
        if let RuleCheck::Semantic(check) = rule.check {
            if config
                .severity_for(rule.id, rule.default_severity)
                .is_some()
            {
                diagnostics.extend(check(&context));
            }
        }
    }
    diagnostics
}

/// The messages a rule's check gives for `spec` analysed without data (for the rules' unit tests).
#[cfg(test)]
pub(crate) fn messages_without_data(
    check: fn(&RuleContext<'_>) -> Vec<Diagnostic>,
    spec: &str,
) -> Vec<String> {
    let document = crate::analysis::parse_document(spec);
    let data = DataContext::default();
    let config = AnalysisConfig::default();
    let context = RuleContext::new(&document, &data, &config);
    check(&context).into_iter().map(|d| d.message).collect()
}

/// The messages a rule's check gives for `spec` without data but with a hand-built evaluation.
#[cfg(test)]
pub(crate) fn messages_with_evaluation(
    check: fn(&RuleContext<'_>) -> Vec<Diagnostic>,
    spec: &str,
    evaluation: &EvaluatedChart,
) -> Vec<String> {
    let document = crate::analysis::parse_document(spec);
    let data = DataContext::default();
    let config = AnalysisConfig::default();
    let context = RuleContext::with_evaluation(&document, &data, &config, Some(evaluation));
    check(&context).into_iter().map(|d| d.message).collect()
}
