//! Data-driven rule tests. Each folder `tests/fixtures/<rule-id>/` holds specs named `hit-*`
//! (must trigger the rule) and `miss-*` (near misses that must not). Beside each spec, a
//! `.expect` file lists every diagnostic the spec must produce, one per line, as
//! `rule-id: exact source text of the range` (an empty or absent file: no diagnostics at all).
//! A line `    message: ...` (four spaces) under an expectation also pins its exact message.
//! Specs read invented data from `tests/fixtures/data/`. A spec `NAME.chart.json` may have a
//! `NAME.toml` beside it, read as `check` reads a project's `markwell.toml`: its rules, ranking
//! and `[data]` budgets apply to that spec.
//!
//! The test reports true positives, false positives and false negatives per rule and fails on
//! any false result; it also fails when a registered rule has no hit or no near miss.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use markwell::analysis::config::{parse_project_config, ProjectConfig};
use markwell::analysis::{analyze_with_evaluation, parse_document};
use markwell::data::{ProfileCache, ResolveOptions};

fn fixtures_root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures")
}

#[derive(Default, Debug)]
struct Tally {
    true_positives: usize,
    false_positives: usize,
    false_negatives: usize,
    hit_files: usize,
    miss_files: usize,
}

/// (rule, source text, message) a spec produces.
fn actual_findings(
    path: &Path,
    cache: &ProfileCache,
    project: &ProjectConfig,
) -> Vec<(String, String, String)> {
    let text = std::fs::read_to_string(path).unwrap_or_default();
    let document = parse_document(&text);
    let options = ResolveOptions {
        spec_dir: path.parent().map(Path::to_path_buf).unwrap_or_default(),
        workspace_root: Some(fixtures_root()),
        allow_outside_workspace: false,
        limits: project.profile_limits,
    };
    let data = cache.load_for_spec(&document.spec, &options);
    let evaluation = evaluated(&document.spec, &options);
    analyze_with_evaluation(&document, &data, &project.analysis, Some(&evaluation))
        .into_iter()
        .map(|diagnostic| {
            let snippet = text
                .get(diagnostic.range.start..diagnostic.range.end)
                .unwrap_or("<bad range>")
                .to_string();
            (diagnostic.rule.to_string(), snippet, diagnostic.message)
        })
        .collect()
}

/// (rule, source text, exact message if pinned) a spec must produce.
fn expected_findings(spec: &Path) -> Vec<(String, String, Option<String>)> {
    let expect = spec.with_extension("").with_extension("expect");
    let text = std::fs::read_to_string(expect).unwrap_or_default();
    let mut expected: Vec<(String, String, Option<String>)> = Vec::new();
    for line in text.lines().filter(|line| !line.trim().is_empty()) {
        if let Some(message) = line.strip_prefix("    message: ") {
            if let Some(last) = expected.last_mut() {
                last.2 = Some(message.to_string());
            }
            continue;
        }
        if let Some((rule, snippet)) = line.split_once(": ") {
            expected.push((rule.trim().to_string(), snippet.to_string(), None));
        }
    }
    expected
}

#[test]
fn every_rule_fixture_produces_exactly_its_expected_diagnostics() {
    let cache = ProfileCache::new();
    let mut tallies: BTreeMap<String, Tally> = BTreeMap::new();
    let mut failures = Vec::new();
    let mut folders: Vec<PathBuf> = std::fs::read_dir(fixtures_root())
        .expect("fixtures folder")
        .filter_map(|entry| entry.ok().map(|entry| entry.path()))
        .filter(|path| path.is_dir() && !path.ends_with("data"))
        .collect();
    folders.sort();
    for folder in folders {
        let rule = folder
            .file_name()
            .map(|name| name.to_string_lossy().into_owned())
            .unwrap_or_default();
        let mut specs: Vec<PathBuf> = std::fs::read_dir(&folder)
            .expect("rule folder")
            .filter_map(|entry| entry.ok().map(|entry| entry.path()))
            .filter(|path| path.to_string_lossy().ends_with(".chart.json"))
            .collect();
        specs.sort();
        for spec in specs {
            let config_path = spec.with_extension("").with_extension("toml");
            let project = match std::fs::read_to_string(&config_path) {
                Err(_) => ProjectConfig::default(),
                Ok(text) => match parse_project_config(&text) {
                    Ok((project, warnings)) if warnings.is_empty() => project,
                    Ok((_, warnings)) => panic!("{}: {warnings:?}", config_path.display()),
                    Err(error) => panic!("{}: {error}", config_path.display()),
                },
            };
            let name = spec
                .file_name()
                .map(|n| n.to_string_lossy().into_owned())
                .unwrap_or_default();
            let expected = expected_findings(&spec);
            let mut actual = actual_findings(&spec, &cache, &project);
            let tally = tallies.entry(rule.clone()).or_default();
            if name.starts_with("hit-") {
                tally.hit_files += 1;
                if !expected.iter().any(|(r, _, _)| *r == rule) {
                    failures.push(format!("{name}: a hit fixture must expect `{rule}`"));
                }
            } else if name.starts_with("miss-") {
                tally.miss_files += 1;
                if expected.iter().any(|(r, _, _)| *r == rule) {
                    failures.push(format!("{name}: a near miss must not expect `{rule}`"));
                }
            }
            for finding in &expected {
                let counted = tallies.entry(finding.0.clone()).or_default();
                if let Some(index) = actual.iter().position(|found| {
                    found.0 == finding.0
                        && found.1 == finding.1
                        && finding.2.as_ref().is_none_or(|message| *message == found.2)
                }) {
                    actual.remove(index);
                    counted.true_positives += 1;
                } else {
                    counted.false_negatives += 1;
                    failures.push(format!(
                        "{}/{name}: missing `{}: {}`{}",
                        rule,
                        finding.0,
                        finding.1,
                        finding
                            .2
                            .as_ref()
                            .map(|message| format!(" with message `{message}`"))
                            .unwrap_or_default()
                    ));
                }
            }
            for (found_rule, snippet, message) in actual {
                tallies
                    .entry(found_rule.clone())
                    .or_default()
                    .false_positives += 1;
                failures.push(format!(
                    "{rule}/{name}: unexpected `{found_rule}: {snippet}` ({message})"
                ));
            }
        }
    }
    println!(
        "{:<32} {:>4} {:>4} {:>4} {:>5} {:>5}",
        "rule", "TP", "FP", "FN", "hits", "miss"
    );
    for (rule, tally) in &tallies {
        println!(
            "{:<32} {:>4} {:>4} {:>4} {:>5} {:>5}",
            rule,
            tally.true_positives,
            tally.false_positives,
            tally.false_negatives,
            tally.hit_files,
            tally.miss_files
        );
    }
    for rule in markwell::analysis::rules::registry() {
        match tallies.get(rule.id) {
            Some(tally) if tally.hit_files > 0 && tally.miss_files > 0 => {}
            _ => failures.push(format!(
                "rule `{}` needs a folder tests/fixtures/{}/ with hit-* and miss-* specs",
                rule.id, rule.id
            )),
        }
    }
    assert!(
        failures.is_empty(),
        "{} problems:\n{}",
        failures.len(),
        failures.join("\n")
    );
}

/// What `markwell check` gives the rules: the chart evaluated over all of its rows.
fn evaluated(
    spec: &markwell::spec::model::ChartSpec,
    options: &ResolveOptions,
) -> markwell::eval::EvaluatedChart {
    let mut open = |source: &markwell::spec::model::Source| {
        markwell::data::rows::open_rows(source, options, false)
    };
    markwell::eval::evaluate_chart(
        spec,
        &mut open,
        &markwell::eval::EvalOptions::with_time(options.limits.evaluation),
    )
}
