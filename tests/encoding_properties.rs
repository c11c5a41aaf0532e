//! Property test of the fixes and refactors on random specs over the demo and fixture data:
//! applying any quick fix or any offered refactor never adds a finding. The multiset of rule ids
//! after may only lose members (the fixed finding disappears), never gain one.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::sync::OnceLock;

use markwell::analysis::channels::channels_for_mark;
use markwell::analysis::refactor::refactors_at;
use markwell::analysis::{analyze, parse_document, AnalysisConfig};
use markwell::data::{ProfileCache, ResolveOptions};
use markwell::diagnostic::Diagnostic;
use markwell::spec::model::{Arrange, Mark, Purpose, Summary};
use markwell::TextRange;
use proptest::prelude::*;

/// (folder, file name, column names) of every data file the specs may read.
fn data_files() -> &'static Vec<(PathBuf, String, Vec<String>)> {
    static FILES: OnceLock<Vec<(PathBuf, String, Vec<String>)>> = OnceLock::new();
    FILES.get_or_init(|| {
        let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
        let mut files = Vec::new();
        for folder in [root.join("demo-data"), root.join("tests/fixtures/data")] {
            let mut names: Vec<String> = std::fs::read_dir(&folder)
                .map(|entries| {
                    entries
                        .filter_map(|e| e.ok())
                        .map(|e| e.file_name().to_string_lossy().into_owned())
                        .filter(|name| name.ends_with(".csv"))
                        .collect()
                })
                .unwrap_or_default();
            names.sort();
            for name in names {
                let header = std::fs::read_to_string(folder.join(&name))
                    .ok()
                    .and_then(|text| text.lines().next().map(str::to_string))
                    .unwrap_or_default();
                let columns: Vec<String> = header
                    .split(',')
                    .map(|c| c.trim().to_string())
                    .filter(|c| !c.is_empty())
                    .collect();
                if columns.len() >= 2 {
                    files.push((folder.clone(), name, columns));
                }
            }
        }
        files
    })
}

fn cache() -> &'static ProfileCache {
    static CACHE: OnceLock<ProfileCache> = OnceLock::new();
    CACHE.get_or_init(ProfileCache::new)
}

fn rule_multiset(diagnostics: &[Diagnostic]) -> BTreeMap<&'static str, usize> {
    let mut counts = BTreeMap::new();
    for diagnostic in diagnostics {
        *counts.entry(diagnostic.rule).or_insert(0) += 1;
    }
    counts
}

/// The rules that report more findings in `after` than in `before`.
fn grown(
    before: &BTreeMap<&'static str, usize>,
    after: &BTreeMap<&'static str, usize>,
) -> Vec<&'static str> {
    after
        .iter()
        .filter(|(rule, count)| **count > before.get(**rule).copied().unwrap_or(0))
        .map(|(rule, _)| *rule)
        .collect()
}

/// A random spec: one layer over one data file, 1-4 bindings on channels of its mark, with
/// optional summaries, `purpose`, `arrange` and `emphasis`.
#[allow(clippy::too_many_arguments)]
fn spec_text(
    file: &(PathBuf, String, Vec<String>),
    mark: Mark,
    picks: &[(usize, usize, usize)],
    purpose: Option<usize>,
    arrange: Option<usize>,
    emphasis: usize,
) -> String {
    let (_, name, columns) = file;
    let channels = channels_for_mark(mark);
    let mut used = Vec::new();
    let mut bind = Vec::new();
    let mut bound_columns = Vec::new();
    for &(channel, column, summary) in picks {
        let channel = channels[channel % channels.len()];
        if used.contains(&channel) {
            continue;
        }
        used.push(channel);
        let column = &columns[column % columns.len()];
        bound_columns.push(column.clone());
        // mostly bare columns; sometimes a summary
        let value = match Summary::ALL.get(summary % (Summary::ALL.len() * 3)) {
            Some(summary) => format!(
                r#"{{ "column": "{column}", "summary": "{}" }}"#,
                summary.as_str()
            ),
            None => format!(r#""{column}""#),
        };
        bind.push(format!(r#""{}": {value}"#, channel.as_str()));
    }
    let mut members = vec![format!(r#""source": {{ "path": "{name}" }}"#)];
    if let Some(purpose) = purpose {
        members.push(format!(
            r#""purpose": "{}""#,
            Purpose::ALL[purpose % Purpose::ALL.len()].as_str()
        ));
    }
    let emphasised: Vec<String> = bound_columns
        .iter()
        .take(emphasis % 3)
        .map(|c| format!(r#""{c}""#))
        .collect();
    if !emphasised.is_empty() {
        members.push(format!(r#""emphasis": [{}]"#, emphasised.join(", ")));
    }
    members.push(format!(r#""mark": "{}""#, mark.as_str()));
    if let Some(arrange) = arrange {
        members.push(format!(
            r#""arrange": "{}""#,
            Arrange::ALL[arrange % Arrange::ALL.len()].as_str()
        ));
    }
    members.push(format!(r#""bind": {{ {} }}"#, bind.join(", ")));
    format!("{{\n  {}\n}}\n", members.join(",\n  "))
}

fn analyse(
    text: &str,
    folder: &Path,
) -> (
    markwell::analysis::ParsedDocument,
    markwell::data::DataContext,
    Vec<Diagnostic>,
) {
    let document = parse_document(text);
    let options = ResolveOptions {
        spec_dir: folder.to_path_buf(),
        workspace_root: Some(folder.to_path_buf()),
        allow_outside_workspace: false,
        ..Default::default()
    };
    let data = cache().load_for_spec(&document.spec, &options);
    let diagnostics = analyze(&document, &data, &AnalysisConfig::default());
    (document, data, diagnostics)
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 256, ..ProptestConfig::default() })]

    #[test]
    fn no_fix_and_no_refactor_adds_a_finding(
        file in 0usize..64,
        mark in 0usize..64,
        picks in proptest::collection::vec((0usize..64, 0usize..64, 0usize..64), 1..5),
        purpose in proptest::option::of(0usize..64),
        arrange in proptest::option::weighted(0.3, 0usize..64),
        emphasis in 0usize..3,
    ) {
        let files = data_files();
        prop_assume!(!files.is_empty());
        let file = &files[file % files.len()];
        let mark = Mark::ALL[mark % Mark::ALL.len()];
        let text = spec_text(file, mark, &picks, purpose, arrange, emphasis);
        let (document, data, before) = analyse(&text, &file.0);
        let before_rules = rule_multiset(&before);
        let config = AnalysisConfig::default();
        let mut offered: Vec<(String, markwell::diagnostic::Fix)> = before
            .iter()
            .flat_map(|d| d.fixes.iter().map(move |fix| (format!("fix of `{}`", d.rule), fix.clone())))
            .collect();
        let whole = TextRange::new(0, text.len());
        offered.extend(
            refactors_at(&document, &data, &config, whole)
                .into_iter()
                .map(|fix| ("refactor".to_string(), fix)),
        );
        // refactors from each binding's cursor, as an editor asks for them
        for binding in document.spec.layers.iter().flat_map(|layer| layer.bindings.iter()) {
            let cursor = TextRange::empty(binding.key_range.start + 1);
            offered.extend(
                refactors_at(&document, &data, &config, cursor)
                    .into_iter()
                    .map(|fix| ("refactor".to_string(), fix)),
            );
        }
        for (what, fix) in offered {
            let applied = fix.apply(&text);
            prop_assert!(applied.is_some(), "{what} `{}` does not apply", fix.title);
            let applied = applied.unwrap_or_default();
            let (_, _, after) = analyse(&applied, &file.0);
            let added = grown(&before_rules, &rule_multiset(&after));
            prop_assert!(
                added.is_empty(),
                "{what} `{}` adds {added:?}\nbefore:\n{text}\n{before_rules:?}\nafter:\n{applied}\n{:?}",
                fix.title,
                rule_multiset(&after)
            );
        }
    }
}
