//! The bundled demo shows every rule at least once, and its clean specs stay clean.

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

use markwell::analysis::{analyze_with_evaluation, parse_document, AnalysisConfig};
use markwell::data::{ProfileCache, ResolveOptions};

#[test]
fn every_rule_fires_somewhere_in_the_demo_and_clean_specs_are_clean() {
    let demo = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("demo-data");
    let mut specs: Vec<PathBuf> = std::fs::read_dir(&demo)
        .expect("demo-data")
        .filter_map(|entry| entry.ok().map(|entry| entry.path()))
        .filter(|path| path.to_string_lossy().ends_with(".chart.json"))
        .collect();
    specs.sort();
    let cache = ProfileCache::new();
    let mut fired = BTreeSet::new();
    let mut clean = Vec::new();
    for spec in &specs {
        let text = std::fs::read_to_string(spec).expect("demo spec");
        let document = parse_document(&text);
        let options = ResolveOptions {
            spec_dir: spec.parent().map(Path::to_path_buf).unwrap_or_default(),
            workspace_root: Some(demo.clone()),
            allow_outside_workspace: false,
            ..Default::default()
        };
        let data = cache.load_for_spec(&document.spec, &options);
        let evaluation = evaluated(&document.spec, &options);
        let diagnostics = analyze_with_evaluation(
            &document,
            &data,
            &AnalysisConfig::default(),
            Some(&evaluation),
        );
        if diagnostics.is_empty() {
            clean.push(
                spec.file_name()
                    .map(|n| n.to_string_lossy().into_owned())
                    .unwrap_or_default(),
            );
        }
        fired.extend(diagnostics.iter().map(|diagnostic| diagnostic.rule));
    }
    // `evaluation-timed-out` needs data too big to bundle, or a budget set too small for the
    // demo's own data: it would tell a new user nothing about charts. Its fixture sets the
    // budget (tests/fixtures/evaluation-timed-out).
    let not_in_the_demo = ["evaluation-timed-out"];
    let missing: Vec<&str> = markwell::analysis::rules::registry()
        .iter()
        .map(|rule| rule.id)
        .filter(|id| !fired.contains(id) && !not_in_the_demo.contains(id))
        .collect();
    for id in not_in_the_demo {
        assert!(!fired.contains(id), "`{id}` fired in the demo");
    }
    assert!(
        missing.is_empty(),
        "rules the demo never shows: {missing:?}"
    );
    // the two specs meant to show a well-made chart
    for expected in [
        "ferry-passengers-by-route.chart.json",
        "ferry-monthly-trend.chart.json",
    ] {
        assert!(
            clean.iter().any(|name| name == expected),
            "{expected} should be clean; clean: {clean:?}"
        );
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
