//! The sampled evaluation of an open spec, kept between analyses: typing in the title or the
//! description (or the frame) must not read the head of every data file again (up to 4 MiB a
//! file). One entry per document, replaced by each new evaluation.
//!
//! What `eval::evaluate_chart` reads of the spec: the layers (mark, bindings with their column,
//! summary, bins, mapping, palette and order, arrangement, own source), the chart's source, the
//! column declarations (kinds, levels, zero), the panels; and it copies the title, the
//! description and the frame into its result without reading rows for them. It reads no byte
//! range. So the key is the text with the root's `title`, `description` and `frame` members cut
//! out (a change anywhere else is a miss, which is always correct), the resolve options, and the
//! stamp (size and modification time) of every data file the spec names; a hit copies the
//! current title, description and frame into the kept result.

use std::path::PathBuf;
use std::sync::Arc;
use std::time::SystemTime;

use crate::analysis::ParsedDocument;
use crate::data::ResolveOptions;
use crate::eval::EvaluatedChart;
use crate::spec::model::{ChartSpec, SourceLocation};
use crate::syntax::NodeKind;

/// Root members the evaluation only copies into its result.
const COPIED_MEMBERS: [&str; 3] = ["title", "description", "frame"];

/// The stamp of one data file: `None` when it cannot be read (then a new file is a new stamp).
type FileStamp = Option<(u64, SystemTime)>;

/// One kept sampled evaluation and what it was computed from.
#[derive(Debug)]
pub struct CachedEvaluation {
    key: String,
    stamps: Vec<(String, FileStamp)>,
    pub evaluation: Arc<EvaluatedChart>,
}

/// The text with the members the evaluation only copies cut out, and the resolve options.
fn evaluation_key(parsed: &ParsedDocument, resolve: &ResolveOptions) -> String {
    let text = parsed.tree.text();
    let mut cut: Vec<crate::TextRange> = parsed
        .tree
        .root_value()
        .filter(|root| root.kind() == NodeKind::Object)
        .map(|root| {
            root.members()
                .filter(|member| {
                    member
                        .key_text()
                        .is_some_and(|key| COPIED_MEMBERS.contains(&key.as_ref()))
                })
                .map(|member| member.range())
                .collect()
        })
        .unwrap_or_default();
    cut.sort_by_key(|range| range.start);
    let mut key = format!("{resolve:?}\n");
    key.reserve(text.len());
    let mut at = 0;
    for range in cut {
        if range.start >= at {
            key.push_str(text.get(at..range.start).unwrap_or_default());
            at = range.end;
        }
    }
    key.push_str(text.get(at..).unwrap_or_default());
    key
}

/// The stamp of every data file `spec` names, in spec order.
fn data_stamps(spec: &ChartSpec, resolve: &ResolveOptions) -> Vec<(String, FileStamp)> {
    spec.source
        .iter()
        .chain(spec.layers.iter().filter_map(|layer| layer.source.as_ref()))
        .filter_map(|source| match &source.location {
            SourceLocation::Path(path) => Some(path.value.clone()),
            _ => None,
        })
        .map(|written| {
            let stamp = crate::data::resolve::resolve_source_path(&written, resolve)
                .ok()
                .and_then(|path: PathBuf| std::fs::metadata(path).ok())
                .and_then(|metadata| Some((metadata.len(), metadata.modified().ok()?)));
            (written, stamp)
        })
        .collect()
}

/// `evaluation` with the title, description and frame of `spec` (shared when they are the same).
fn with_copied_members(evaluation: &Arc<EvaluatedChart>, spec: &ChartSpec) -> Arc<EvaluatedChart> {
    let title = spec.title.as_ref().map(|title| title.value.clone());
    let description = spec.description.as_ref().map(|d| d.value.clone());
    let (width, height) = (
        spec.frame.width_or_default(),
        spec.frame.height_or_default(),
    );
    let background = spec.frame.background_or_default();
    if evaluation.title == title
        && evaluation.description == description
        && evaluation.width == width
        && evaluation.height == height
        && evaluation.background == background
    {
        return evaluation.clone();
    }
    let mut patched = EvaluatedChart::clone(evaluation);
    patched.title = title;
    patched.description = description;
    patched.width = width;
    patched.height = height;
    patched.background = background.to_string();
    Arc::new(patched)
}

/// What an entry is keyed on, taken before the evaluation reads the data: a file that changes
/// while it is read then has a new stamp, and the entry misses.
#[derive(Debug)]
pub struct PendingEntry {
    key: String,
    stamps: Vec<(String, FileStamp)>,
}

/// The key and data stamps of `parsed` now, for an evaluation about to start.
pub fn pending_entry(parsed: &ParsedDocument, resolve: &ResolveOptions) -> PendingEntry {
    PendingEntry {
        key: evaluation_key(parsed, resolve),
        stamps: data_stamps(&parsed.spec, resolve),
    }
}

impl PendingEntry {
    /// The entry to keep for `evaluation`: `None` for one that ran out of time (the next text
    /// must try again).
    pub fn keep(self, evaluation: &Arc<EvaluatedChart>) -> Option<Arc<CachedEvaluation>> {
        evaluation.timed_out.is_empty().then(|| {
            Arc::new(CachedEvaluation {
                key: self.key,
                stamps: self.stamps,
                evaluation: evaluation.clone(),
            })
        })
    }
}

/// The sampled evaluation of `parsed`: the kept one when only what it copies changed, else a new
/// one through `evaluate`. The kept one may be exact (the
/// background evaluation over all rows replaces the entry when it arrives), so a title edit
/// keeps the exact evaluation and starts no new whole-file scan. Returns it with the entry to
/// keep (`None`: keep nothing, for an evaluation that failed or ran out of time).
pub fn sampled_evaluation(
    kept: Option<&CachedEvaluation>,
    parsed: &ParsedDocument,
    resolve: &ResolveOptions,
    evaluate: impl FnOnce() -> Option<EvaluatedChart>,
) -> (Option<Arc<EvaluatedChart>>, Option<Arc<CachedEvaluation>>) {
    let pending = pending_entry(parsed, resolve);
    if let Some(kept) = kept.filter(|kept| kept.key == pending.key && kept.stamps == pending.stamps)
    {
        let evaluation = with_copied_members(&kept.evaluation, &parsed.spec);
        let entry = CachedEvaluation {
            key: pending.key,
            stamps: pending.stamps,
            evaluation: evaluation.clone(),
        };
        return (Some(evaluation), Some(Arc::new(entry)));
    }
    let Some(evaluation) = evaluate().map(Arc::new) else {
        return (None, None);
    };
    let entry = pending.keep(&evaluation);
    (Some(evaluation), entry)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::parse_document;
    use std::cell::Cell;

    fn spec(title: &str, y: &str) -> String {
        format!(
            r#"{{ "title": "{title}", "source": {{ "path": "loaves.csv" }}, "mark": "bar", "frame": {{ "width": 300 }}, "bind": {{ "x": "bakery", "y": {{ "column": "{y}", "summary": "sum" }} }} }}"#
        )
    }

    #[test]
    fn a_title_edit_reuses_the_evaluation_and_a_binding_edit_or_new_data_does_not() {
        let dir = tempfile::tempdir().unwrap_or_else(|error| panic!("{error}"));
        let data = dir.path().join("loaves.csv");
        std::fs::write(
            &data,
            "bakery,loaves,rolls\nmill,12,3\nquay,7,9\nmill,5,1\n",
        )
        .unwrap_or_else(|error| panic!("{error}"));
        let resolve = ResolveOptions {
            spec_dir: dir.path().to_path_buf(),
            workspace_root: Some(dir.path().to_path_buf()),
            ..ResolveOptions::default()
        };
        let evaluations = Cell::new(0);
        let mut kept: Option<Arc<CachedEvaluation>> = None;
        let mut run = |text: &str| {
            let parsed = parse_document(text);
            let (evaluation, entry) =
                sampled_evaluation(kept.as_deref(), &parsed, &resolve, || {
                    evaluations.set(evaluations.get() + 1);
                    crate::lsp::evaluate::evaluate_sampled(&parsed.spec, &resolve)
                });
            kept = entry;
            evaluation.unwrap_or_else(|| panic!("no evaluation"))
        };
        let first = run(&spec("Loaves", "loaves"));
        assert_eq!(evaluations.get(), 1);
        assert_eq!(first.title.as_deref(), Some("Loaves"));
        // typing in the title (which moves every range after it): no new evaluation, and the
        // result carries the new title
        let retitled = run(&spec("Loaves sold per bakery", "loaves"));
        assert_eq!(evaluations.get(), 1);
        assert_eq!(retitled.title.as_deref(), Some("Loaves sold per bakery"));
        assert_eq!(retitled.layers, first.layers);
        // a binding: evaluated again
        let rolls = run(&spec("Loaves sold per bakery", "rolls"));
        assert_eq!(evaluations.get(), 2);
        assert_ne!(rolls.layers, first.layers);
        // the same text over changed data: evaluated again
        std::fs::write(
            &data,
            "bakery,loaves,rolls\nmill,12,3\nquay,7,9\nmill,5,100\n",
        )
        .unwrap_or_else(|error| panic!("{error}"));
        let changed = run(&spec("Loaves sold per bakery", "rolls"));
        assert_eq!(evaluations.get(), 3);
        assert_ne!(changed.layers, rolls.layers);
    }

    #[test]
    fn an_exact_evaluation_kept_for_a_text_is_reused_after_a_title_edit() {
        let dir = tempfile::tempdir().unwrap_or_else(|error| panic!("{error}"));
        std::fs::write(
            dir.path().join("loaves.csv"),
            "bakery,loaves,rolls\nmill,12,3\nquay,7,9\nmill,5,1\n",
        )
        .unwrap_or_else(|error| panic!("{error}"));
        let resolve = ResolveOptions {
            spec_dir: dir.path().to_path_buf(),
            workspace_root: Some(dir.path().to_path_buf()),
            ..ResolveOptions::default()
        };
        // the background run: stamps first, then the evaluation over all rows
        let parsed = parse_document(&spec("Loaves", "loaves"));
        let pending = pending_entry(&parsed, &resolve);
        let exact = Arc::new(
            crate::lsp::evaluate::evaluate_exactly(&parsed.spec, &resolve, Arc::new(|| true))
                .unwrap_or_else(|| panic!("no evaluation")),
        );
        assert!(!exact.is_sample);
        let kept = pending.keep(&exact);
        // a title edit: the exact evaluation comes back, with the new title, and nothing is
        // evaluated
        let retitled = parse_document(&spec("Loaves by bakery", "loaves"));
        let (evaluation, entry) = sampled_evaluation(kept.as_deref(), &retitled, &resolve, || {
            panic!("a title edit must not evaluate again")
        });
        let evaluation = evaluation.unwrap_or_else(|| panic!("no evaluation"));
        assert!(!evaluation.is_sample);
        assert_eq!(evaluation.title.as_deref(), Some("Loaves by bakery"));
        assert_eq!(evaluation.layers, exact.layers);
        assert!(entry.is_some());
        // a timed-out evaluation is never kept
        let mut timed_out = EvaluatedChart::clone(&exact);
        timed_out.timed_out = vec![0];
        assert!(pending_entry(&parsed, &resolve)
            .keep(&Arc::new(timed_out))
            .is_none());
    }
}
