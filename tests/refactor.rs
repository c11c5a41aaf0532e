//! The re-encode and swap refactors: applied, then analysed again.

use std::path::PathBuf;

use markwell::analysis::refactor::refactors_at;
use markwell::analysis::{analyze, parse_document, AnalysisConfig};
use markwell::data::{ProfileCache, ResolveOptions};
use markwell::diagnostic::{FixKind, Severity};
use markwell::TextRange;

fn options() -> ResolveOptions {
    let fixtures = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures");
    ResolveOptions {
        spec_dir: fixtures.join("data"),
        workspace_root: Some(fixtures),
        allow_outside_workspace: false,
        ..Default::default()
    }
}

const SPEC: &str = r#"{
  "source": { "path": "orchard.csv" },
  "emphasis": ["crates", "variety"],
  "mark": "point",
  "bind": { "x": "soil_temp_c", "luminance": "crates", "shape": "variety" }
}"#;

#[test]
fn reencode_puts_the_most_important_column_on_the_best_channel() {
    let cache = ProfileCache::new();
    let document = parse_document(SPEC);
    let data = cache.load_for_spec(&document.spec, &options());
    let config = AnalysisConfig::default();
    let before = analyze(&document, &data, &config);
    assert!(
        before.iter().any(|d| d.rule == "better-channel-free"),
        "{before:#?}"
    );

    let cursor = SPEC
        .find("\"luminance\"")
        .map(|offset| TextRange::empty(offset + 1))
        .unwrap_or_default();
    let fixes = refactors_at(&document, &data, &config, cursor);
    let reencode = fixes
        .iter()
        .find(|fix| fix.title.starts_with("re-encode"))
        .unwrap_or_else(|| panic!("a re-encode refactor in {fixes:#?}"));
    assert_eq!(reencode.kind, FixKind::Refactor);
    let text = reencode.apply(SPEC).expect("edits apply");
    // crates (quantitative, most important) and variety take the two positions
    assert!(text.contains("\"x\": \"crates\""), "{text}");
    assert!(text.contains("\"y\": \"variety\""), "{text}");
    // the first try put `soil_temp_c` on `area`, where `magnitude-of-interval` objects: the
    // offered re-encoding gives it luminance instead
    assert!(text.contains("\"luminance\": \"soil_temp_c\""), "{text}");
    // ranks before and after under the default ranking (Mackinlay 1986: luminance 7th for
    // quantitative data, position 1st; from the ranking table, itself not yet checked against
    // the paper)
    assert!(
        reencode
            .title
            .contains("`crates` `luminance`->`x` (7th->1st)"),
        "{}",
        reencode.title
    );

    let after_document = parse_document(&text);
    let after = analyze(
        &after_document,
        &cache.load_for_spec(&after_document.spec, &options()),
        &config,
    );
    let count = |list: &[markwell::diagnostic::Diagnostic]| {
        list.iter()
            .filter(|d| d.rule == "better-channel-free")
            .count()
    };
    assert!(count(&after) < count(&before), "{after:#?}");
    let errors = after
        .iter()
        .filter(|d| d.severity == Severity::Error)
        .count();
    assert_eq!(errors, 0, "{after:#?}");

    // swaps from the cursor: at most one per other binding, each accepted by the rules
    let swaps: Vec<_> = fixes
        .iter()
        .filter(|fix| fix.title.starts_with("swap"))
        .collect();
    assert!(swaps.len() <= 2, "{fixes:#?}");
    for swap in swaps {
        assert!(swap.title.contains("->"), "{}", swap.title);
        assert_ne!(swap.apply(SPEC).expect("edits apply"), SPEC);
    }
}

#[test]
fn a_reencode_that_a_quick_fix_already_offers_is_not_repeated() {
    let spec = r#"{
  "source": { "path": "orchard.csv" },
  "emphasis": ["crates", "variety"],
  "mark": "point",
  "bind": { "x": "variety", "hue": "crates", "area": "soil_temp_c" }
}"#;
    let cache = ProfileCache::new();
    let document = parse_document(spec);
    let data = cache.load_for_spec(&document.spec, &options());
    let config = AnalysisConfig::default();
    let quick: Vec<_> = analyze(&document, &data, &config)
        .into_iter()
        .flat_map(|d| d.fixes)
        .collect();
    // the quick fix of unordered-channel-for-order moves `crates` to `y`, which is also the
    // best re-encoding: only the quick fix is offered
    assert!(
        quick
            .iter()
            .any(|fix| fix.title == "move `crates` from `hue` to `y`"),
        "{quick:#?}"
    );
    let refactors = refactors_at(&document, &data, &config, TextRange::new(0, spec.len()));
    assert!(
        !refactors
            .iter()
            .any(|fix| fix.title.starts_with("re-encode")),
        "{refactors:#?}"
    );
}

#[test]
fn no_reencode_when_the_layer_is_already_optimal() {
    let spec = r#"{
  "source": { "path": "orchard.csv" },
  "emphasis": ["crates", "variety"],
  "mark": "point",
  "bind": { "y": "crates", "x": "variety" }
}"#;
    let cache = ProfileCache::new();
    let document = parse_document(spec);
    let data = cache.load_for_spec(&document.spec, &options());
    let fixes = refactors_at(
        &document,
        &data,
        &AnalysisConfig::default(),
        TextRange::new(0, spec.len()),
    );
    assert!(
        !fixes.iter().any(|fix| fix.title.starts_with("re-encode")),
        "{fixes:#?}"
    );
}

fn demo_options() -> ResolveOptions {
    let demo = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("demo-data");
    ResolveOptions {
        spec_dir: demo.clone(),
        workspace_root: Some(demo),
        allow_outside_workspace: false,
        ..Default::default()
    }
}

/// Every refactor offered anywhere in the spec's `bind`, with the diagnostics before.
fn refactors_over_bind(
    text: &str,
    options: &ResolveOptions,
) -> (
    Vec<markwell::diagnostic::Fix>,
    Vec<markwell::diagnostic::Diagnostic>,
) {
    let cache = ProfileCache::new();
    let document = parse_document(text);
    let data = cache.load_for_spec(&document.spec, options);
    let config = AnalysisConfig::default();
    let before = analyze(&document, &data, &config);
    let start = text.find("\"bind\"").unwrap_or(0);
    let mut all: Vec<markwell::diagnostic::Fix> = Vec::new();
    for offset in start..text.len() {
        for fix in refactors_at(&document, &data, &config, TextRange::empty(offset)) {
            if !all.iter().any(|seen| seen.edits == fix.edits) {
                all.push(fix);
            }
        }
    }
    (all, before)
}

fn rules_of(text: &str, options: &ResolveOptions) -> Vec<&'static str> {
    let document = parse_document(text);
    let data = ProfileCache::new().load_for_spec(&document.spec, options);
    let mut rules: Vec<&'static str> = analyze(&document, &data, &AnalysisConfig::default())
        .iter()
        .map(|d| d.rule)
        .collect();
    rules.sort_unstable();
    rules
}

/// No rule reports more findings in `after` than in `before`.
fn adds_nothing(before: &[&'static str], after: &[&'static str]) -> bool {
    after.iter().all(|rule| {
        after.iter().filter(|r| *r == rule).count() <= before.iter().filter(|r| *r == rule).count()
    })
}

#[test]
fn the_pie_gets_no_swap_that_puts_a_category_on_angle() {
    let path =
        PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("demo-data/bakery-branch-pie.chart.json");
    let text = std::fs::read_to_string(path).expect("demo pie");
    let (refactors, _) = refactors_over_bind(&text, &demo_options());
    println!(
        "pie: {:?}",
        refactors.iter().map(|f| &f.title).collect::<Vec<_>>()
    );
    for fix in &refactors {
        let applied = fix.apply(&text).expect("edits apply");
        assert!(
            !applied.contains("\"angle\": \"branch\""),
            "{}\n{applied}",
            fix.title
        );
    }
}

#[test]
fn bubbles_keep_month_on_x_and_every_refactor_is_accepted_by_the_rules() {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("demo-data/ferry-passenger-bubbles.chart.json");
    let text = std::fs::read_to_string(path).expect("demo bubbles");
    let options = demo_options();
    let (refactors, _) = refactors_over_bind(&text, &options);
    let before = rules_of(&text, &options);
    let reencode = refactors
        .iter()
        .find(|fix| fix.title.starts_with("re-encode"))
        .expect("a re-encode the rules accept");
    for fix in &refactors {
        let applied = fix.apply(&text).expect("edits apply");
        // `month` is a time column on `x`: no refactor moves it
        assert!(
            applied.contains("\"x\": \"month\""),
            "{}\n{applied}",
            fix.title
        );
        assert!(!applied.contains("\"area\": \"month\""), "{}", fix.title);
        let after = rules_of(&applied, &options);
        assert!(
            adds_nothing(&before, &after),
            "{}: {before:?} -> {after:?}",
            fix.title
        );
    }
    println!("bubbles: {}", reencode.title);
    // the title says what moves and the ranks before and after, under the active ranking
    assert!(
        reencode
            .title
            .starts_with("re-encode by rank under Mackinlay (1986): "),
        "{}",
        reencode.title
    );
    assert!(
        reencode.title.contains("`passengers` `area`->`"),
        "{}",
        reencode.title
    );
    assert!(reencode.title.contains("(5th->1st)"), "{}", reencode.title);
}

#[test]
fn no_refactors_on_a_document_with_syntax_errors() {
    let text = r#"{
  "source": { "path": "orchard.csv" },
  "mark": "point",
  "bind": { "x": "variety", "hue": "crates" "area": "soil_temp_c" }
}"#;
    let (refactors, before) = refactors_over_bind(text, &options());
    assert!(
        before.iter().any(|d| d.rule == "syntax-error"),
        "{before:#?}"
    );
    assert!(refactors.is_empty(), "{refactors:#?}");
}

#[test]
fn refactors_are_never_offered_twice_nor_as_a_copy_of_a_quick_fix() {
    let cache = ProfileCache::new();
    let document = parse_document(SPEC);
    let data = cache.load_for_spec(&document.spec, &options());
    let config = AnalysisConfig::default();
    let quick_fixes: Vec<_> = analyze(&document, &data, &config)
        .into_iter()
        .flat_map(|d| d.fixes)
        .collect();
    assert!(
        !quick_fixes.is_empty(),
        "the spec has quick fixes to compare with"
    );
    for offset in 0..SPEC.len() {
        let refactors = refactors_at(&document, &data, &config, TextRange::empty(offset));
        for (index, fix) in refactors.iter().enumerate() {
            assert!(
                !refactors[..index]
                    .iter()
                    .any(|other| other.edits == fix.edits),
                "offered twice at {offset}: {}",
                fix.title
            );
            assert!(
                !quick_fixes.iter().any(|quick| quick.edits == fix.edits),
                "copies a quick fix: {}",
                fix.title
            );
        }
    }
}

#[test]
fn time_and_the_first_emphasis_column_stay_on_their_position_channel() {
    let text = r#"{
  "source": { "path": "orchard.csv" },
  "emphasis": ["variety", "crates"],
  "mark": "point",
  "bind": { "x": "pick_date", "y": "variety", "hue": "crates" }
}"#;
    let (refactors, _) = refactors_over_bind(text, &options());
    for fix in &refactors {
        let applied = fix.apply(text).expect("edits apply");
        assert!(
            applied.contains("\"x\": \"pick_date\""),
            "{}\n{applied}",
            fix.title
        );
        assert!(
            applied.contains("\"y\": \"variety\""),
            "{}\n{applied}",
            fix.title
        );
    }
    // from the cursor on a pinned binding there is nothing to swap
    let cache = ProfileCache::new();
    let document = parse_document(text);
    let data = cache.load_for_spec(&document.spec, &options());
    let cursor = text
        .find("\"x\"")
        .map(|at| TextRange::empty(at + 1))
        .unwrap_or_default();
    let swaps: Vec<_> = refactors_at(&document, &data, &AnalysisConfig::default(), cursor)
        .into_iter()
        .filter(|fix| fix.title.starts_with("swap"))
        .collect();
    assert!(swaps.is_empty(), "{swaps:#?}");
}
