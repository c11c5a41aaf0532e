//! Rules that judge what is drawn: the same fixture analysed with the evaluation (as `markwell
//! check` does) and without it (the profile alone, as the editor does before the rows are read),
//! and `markwell check` itself stating the lie factor of the demo's truncated bar chart of sums.

use std::path::{Path, PathBuf};
use std::process::Command;

use markwell::analysis::{analyze, analyze_with_evaluation, parse_document, AnalysisConfig};
use markwell::data::{ProfileCache, ResolveOptions};

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// The messages of `rule` for a fixture: (with the evaluation, without it).
fn messages(fixture: &str, rule: &str) -> (Vec<String>, Vec<String>) {
    let path = root().join("tests/fixtures").join(fixture);
    let text = std::fs::read_to_string(&path).expect("fixture");
    let document = parse_document(&text);
    let options = ResolveOptions {
        spec_dir: path.parent().map(Path::to_path_buf).unwrap_or_default(),
        workspace_root: Some(root().join("tests/fixtures")),
        allow_outside_workspace: false,
        limits: markwell::data::ProfileLimits::default(),
    };
    let data = ProfileCache::new().load_for_spec(&document.spec, &options);
    let mut open = |source: &markwell::spec::model::Source| {
        markwell::data::rows::open_rows(source, &options, false)
    };
    let evaluation = markwell::eval::evaluate_chart(
        &document.spec,
        &mut open,
        &markwell::eval::EvalOptions::default(),
    );
    let config = AnalysisConfig::default();
    let of_rule = |diagnostics: Vec<markwell::diagnostic::Diagnostic>| {
        diagnostics
            .into_iter()
            .filter(|d| d.rule == rule)
            .map(|d| d.message)
            .collect::<Vec<_>>()
    };
    (
        of_rule(analyze_with_evaluation(
            &document,
            &data,
            &config,
            Some(&evaluation),
        )),
        of_rule(analyze(&document, &data, &config)),
    )
}

#[test]
fn the_lie_factor_of_a_bar_chart_of_sums_comes_from_the_drawn_sums() {
    let (evaluated, profiled) = messages(
        "truncated-baseline/hit-sums-from-150.chart.json",
        "truncated-baseline",
    );
    // Sums by hand from tests/fixtures/data/orchard.csv: Bramley 42 + 51 + 33 + 55 = 181,
    // Cox 37 + 46 + 31 + 44 = 158, Gala 29 + 40 + 48 + 39 = 156. From the baseline 150 the
    // shortest bar (Gala) is 6 long and the longest (Bramley) 31: drawn 31 / 6 = 5.2x, values
    // 181 / 156 = 1.16x. Tufte (1983, ch. 2), lie factor = effect shown / effect in the data =
    // (31 / 6 − 1) / (181 / 156 − 1) = 4.167 / 0.1603 = 26.0 (= 156 / 6).
    assert_eq!(
        evaluated,
        vec!["the bars of `sum(crates)` start at 150 instead of 0: the longest bar (`Bramley`, 181) is drawn 5.2x as long as the shortest (`Gala`, 156) but holds 1.2x its value, so differences look 26.0x larger than they are (Tufte's lie factor)"]
    );
    // the profile cannot bound a sum
    assert_eq!(
        profiled,
        vec!["the bars of `sum(crates)` start at 150 instead of 0: bar lengths are no longer proportional to the values"]
    );
}

#[test]
fn rows_sharing_a_bar_are_counted_when_drawn_and_proven_from_the_profile_without() {
    let (evaluated, profiled) = messages(
        "rows-share-a-mark/hit-one-bar-per-branch.chart.json",
        "rows-share-a-mark",
    );
    // tests/fixtures/data/bakery.csv: 2 days x 12 branches x 4 products = 96 rows, 8 per branch
    assert_eq!(
        evaluated,
        vec!["`loaves` has no `summary`, but all 12 bars stand for more than one row (up to 8 rows at `Millbrook`): the reader sees one row's value, drawn over the others"]
    );
    assert_eq!(
        profiled,
        vec!["`loaves` has no `summary`, but its 96 rows fall on at most 12 bars (`branch` has 12 distinct values): the reader sees one row's value, drawn over the others"]
    );
}

#[test]
fn binned_positions_are_left_to_the_evaluation() {
    let (evaluated, profiled) = messages(
        "rows-share-a-mark/hit-binned-temperatures.chart.json",
        "rows-share-a-mark",
    );
    assert_eq!(evaluated.len(), 1, "{evaluated:?}");
    assert!(profiled.is_empty(), "{profiled:?}");
}

#[test]
fn markwell_check_states_the_lie_factor_of_the_demo_bar_chart_of_sums() {
    let output = Command::new(env!("CARGO_BIN_EXE_markwell"))
        .args([
            "check",
            "demo-data/bakery-branch-totals-from-20000.chart.json",
        ])
        .current_dir(root())
        .env("NO_COLOR", "1")
        .output()
        .expect("runs");
    let report = String::from_utf8_lossy(&output.stdout);
    // Branch sums of demo-data/bakery-sales.csv (awk): shortest Millbrook 21347, longest
    // Dockyard 27577. From 20000: lengths 1347 and 7577 (5.6x), values 1.29x; lie factor
    // 21347 / 1347 = 15.8 (Tufte 1983).
    assert!(
        report.contains("the longest bar (`Dockyard`, 27577) is drawn 5.6x as long as the shortest (`Millbrook`, 21347) but holds 1.3x its value, so differences look 15.8x larger than they are (Tufte's lie factor)"),
        "{report}"
    );
    assert_eq!(output.status.code(), Some(0), "warnings only: {report}");
}
