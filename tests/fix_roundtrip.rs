//! Every quick fix is applied and the document analysed again: the diagnostic it fixes is gone
//! (its rule reports one finding fewer) and no new error appeared. Runs over every `hit-*`
//! fixture of `tests/fixtures/`, and fails when a rule that says it has a fix never offered one.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use markwell::analysis::{analyze_with_evaluation, parse_document, AnalysisConfig};
use markwell::data::{ProfileCache, ResolveOptions};
use markwell::diagnostic::{Diagnostic, Severity};

fn fixtures_root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures")
}

fn diagnostics_for(text: &str, spec_path: &Path, cache: &ProfileCache) -> Vec<Diagnostic> {
    let document = parse_document(text);
    let options = ResolveOptions {
        spec_dir: spec_path
            .parent()
            .map(Path::to_path_buf)
            .unwrap_or_default(),
        workspace_root: Some(fixtures_root()),
        allow_outside_workspace: false,
        ..Default::default()
    };
    let data = cache.load_for_spec(&document.spec, &options);
    let evaluation = evaluated(&document.spec, &options);
    analyze_with_evaluation(
        &document,
        &data,
        &AnalysisConfig::default(),
        Some(&evaluation),
    )
}

fn errors_by_rule(diagnostics: &[Diagnostic]) -> BTreeMap<&'static str, usize> {
    let mut counts = BTreeMap::new();
    for diagnostic in diagnostics.iter().filter(|d| d.severity == Severity::Error) {
        *counts.entry(diagnostic.rule).or_insert(0) += 1;
    }
    counts
}

#[test]
fn every_fix_removes_its_diagnostic_and_adds_no_error() {
    let cache = ProfileCache::new();
    let mut failures = Vec::new();
    let mut fixes_applied: BTreeMap<&'static str, usize> = BTreeMap::new();
    let mut folders: Vec<PathBuf> = std::fs::read_dir(fixtures_root())
        .expect("fixtures")
        .filter_map(|entry| entry.ok().map(|entry| entry.path()))
        .filter(|path| path.is_dir())
        .collect();
    folders.sort();
    for folder in folders {
        let mut specs: Vec<PathBuf> = std::fs::read_dir(&folder)
            .expect("folder")
            .filter_map(|entry| entry.ok().map(|entry| entry.path()))
            .filter(|path| {
                let name = path
                    .file_name()
                    .map(|n| n.to_string_lossy().into_owned())
                    .unwrap_or_default();
                name.starts_with("hit-") && name.ends_with(".chart.json")
            })
            .collect();
        specs.sort();
        for spec in specs {
            let text = std::fs::read_to_string(&spec).expect("fixture");
            let before = diagnostics_for(&text, &spec, &cache);
            for diagnostic in &before {
                for fix in &diagnostic.fixes {
                    let name = format!("{}: `{}` / {}", spec.display(), diagnostic.rule, fix.title);
                    // the title lists every edit: each new text appears in it, in backticks
                    // (a JSON string without its quotes; an inserted member without the comma
                    // that separates it)
                    for edit in &fix.edits {
                        let member = edit
                            .new_text
                            .trim_matches(|c: char| c == ',' || c.is_whitespace());
                        let shown = edit.new_text.trim_matches('"');
                        if !shown.is_empty()
                            && !fix.title.contains(&format!("`{shown}`"))
                            && !fix.title.contains(&format!("`{member}`"))
                        {
                            failures.push(format!("{name}: the title hides the edit to `{shown}`"));
                        }
                    }
                    let Some(fixed) = fix.apply(&text) else {
                        failures.push(format!("{name}: edits do not apply"));
                        continue;
                    };
                    let after = diagnostics_for(&fixed, &spec, &cache);
                    let count = |list: &[Diagnostic]| {
                        list.iter().filter(|d| d.rule == diagnostic.rule).count()
                    };
                    if count(&after) >= count(&before) {
                        failures.push(format!("{name}: still reported after the fix\n{fixed}"));
                    }
                    let old_errors = errors_by_rule(&before);
                    for (rule, new_count) in errors_by_rule(&after) {
                        if rule != diagnostic.rule
                            && new_count > old_errors.get(rule).copied().unwrap_or(0)
                        {
                            failures.push(format!(
                                "{name}: the fix introduced a `{rule}` error\n{fixed}"
                            ));
                        }
                    }
                    *fixes_applied.entry(diagnostic.rule).or_insert(0) += 1;
                }
            }
        }
    }
    println!("fixes applied and re-analysed, per rule: {fixes_applied:?}");
    for rule in markwell::analysis::rules::registry() {
        if rule.has_fix && !fixes_applied.contains_key(rule.id) {
            failures.push(format!(
                "rule `{}` says it has a fix but no fixture exercised one",
                rule.id
            ));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n\n"));
}

/// The fixes of `rows-share-a-mark` add a summary to the value: the shorthand becomes an object,
/// an object gets the key after its column; the fixed text has no such finding; a mean is not
/// offered where parts must add up (stacks).
#[test]
fn rows_share_a_mark_fixes_add_a_sum_or_a_mean_and_the_finding_goes() {
    let cache = ProfileCache::new();
    let folder = fixtures_root().join("rows-share-a-mark");
    let cases = [
        (
            "hit-one-bar-per-branch.chart.json",
            vec![
                r#""y": { "column": "loaves", "summary": "sum" }"#,
                r#""y": { "column": "loaves", "summary": "mean" }"#,
            ],
        ),
        (
            "hit-stacked-days.chart.json",
            vec![r#""y": { "column": "loaves", "summary": "sum" }"#],
        ),
    ];
    for (name, fixed_bindings) in cases {
        let spec = folder.join(name);
        let text = std::fs::read_to_string(&spec).expect("fixture");
        let before = diagnostics_for(&text, &spec, &cache);
        let found: Vec<&Diagnostic> = before
            .iter()
            .filter(|d| d.rule == "rows-share-a-mark")
            .collect();
        assert_eq!(found.len(), 1, "{name}: {before:?}");
        let fixes = &found[0].fixes;
        assert_eq!(fixes.len(), fixed_bindings.len(), "{name}: {fixes:?}");
        for (fix, binding) in fixes.iter().zip(fixed_bindings) {
            let fixed = fix.apply(&text).expect("the edits apply");
            assert!(fixed.contains(binding), "{name}: {fixed}");
            let after = diagnostics_for(&fixed, &spec, &cache);
            assert!(
                after.iter().all(|d| d.rule != "rows-share-a-mark"),
                "{name}: {after:?}"
            );
        }
    }
}

/// What `markwell check` gives the rules: the chart evaluated over all of its rows.
fn evaluated(
    spec: &markwell::spec::model::ChartSpec,
    options: &ResolveOptions,
) -> markwell::eval::EvaluatedChart {
    let mut open = |source: &markwell::spec::model::Source| {
        markwell::data::rows::open_rows(source, options, false)
    };
    markwell::eval::evaluate_chart(spec, &mut open, &markwell::eval::EvalOptions::default())
}
