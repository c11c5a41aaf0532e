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
    }
}

const SPEC: &str = r#"{
  "source": { "path": "orchard.csv" },
  "emphasis": ["crates", "variety"],
  "mark": "point",
  "bind": { "x": "variety", "hue": "crates", "area": "soil_temp_c" }
}"#;

#[test]
fn reencode_puts_the_most_important_column_on_the_best_free_channel() {
    let cache = ProfileCache::new();
    let document = parse_document(SPEC);
    let data = cache.load_for_spec(&document.spec, &options());
    let config = AnalysisConfig::default();
    let before = analyze(&document, &data, &config);
    assert!(
        before
            .iter()
            .any(|d| d.rule == "unordered-channel-for-order"),
        "{before:#?}"
    );

    let cursor = SPEC
        .find("\"hue\"")
        .map(|offset| TextRange::empty(offset + 1))
        .unwrap_or_default();
    let fixes = refactors_at(&document, &data, &config, cursor);
    let reencode = fixes
        .iter()
        .find(|fix| fix.title.starts_with("re-encode"))
        .expect("a re-encode refactor");
    assert_eq!(reencode.kind, FixKind::Refactor);
    let text = reencode.apply(SPEC).expect("edits apply");
    // crates (quantitative, most important) takes the free vertical position; variety keeps x
    assert!(text.contains("\"y\": \"crates\""), "{text}");
    assert!(text.contains("\"x\": \"variety\""), "{text}");

    let after_document = parse_document(&text);
    let after = analyze(
        &after_document,
        &cache.load_for_spec(&after_document.spec, &options()),
        &config,
    );
    assert!(
        !after
            .iter()
            .any(|d| d.rule == "unordered-channel-for-order"),
        "{after:#?}"
    );
    let errors = after
        .iter()
        .filter(|d| d.severity == Severity::Error)
        .count();
    assert_eq!(errors, 0, "{after:#?}");

    // swapping from the cursor offers one refactor per other binding of the layer
    let swaps: Vec<_> = fixes
        .iter()
        .filter(|fix| fix.title.starts_with("swap"))
        .collect();
    assert_eq!(swaps.len(), 2, "{fixes:#?}");
    let swapped = swaps[0].apply(SPEC).expect("edits apply");
    assert_ne!(swapped, SPEC);
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
