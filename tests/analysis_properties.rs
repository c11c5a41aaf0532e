//! Property tests of the whole analysis on random edits of the demo specs (with their real data
//! profiles): it never panics; every diagnostic, related range and fix edit lies inside the text
//! on char boundaries; every fix applies and the result analyses again without panicking; and
//! the editor features (hover, completion, refactors, inlay hints, definitions, outline,
//! colours) answer at random offsets without panicking.

use std::path::PathBuf;
use std::sync::OnceLock;

use markwell::analysis::refactor::refactors_at;
use markwell::analysis::{analyze, parse_document, AnalysisConfig};
use markwell::data::{DataContext, ProfileCache, ResolveOptions};
use markwell::diagnostic::{Diagnostic, RelatedTarget};
use markwell::lsp::{completion, features};
use markwell::TextRange;
use proptest::prelude::*;

fn demo_dir() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("demo-data")
}

/// The demo specs' texts, read once.
fn demo_texts() -> &'static Vec<String> {
    static TEXTS: OnceLock<Vec<String>> = OnceLock::new();
    TEXTS.get_or_init(|| {
        let mut paths: Vec<PathBuf> = std::fs::read_dir(demo_dir())
            .map(|entries| entries.filter_map(|e| e.ok().map(|e| e.path())).collect())
            .unwrap_or_default();
        paths.retain(|path| path.to_string_lossy().ends_with(".chart.json"));
        paths.sort();
        paths
            .iter()
            .filter_map(|path| std::fs::read_to_string(path).ok())
            .collect()
    })
}

fn cache() -> &'static ProfileCache {
    static CACHE: OnceLock<ProfileCache> = OnceLock::new();
    CACHE.get_or_init(ProfileCache::new)
}

fn load(text: &str) -> (markwell::analysis::ParsedDocument, DataContext) {
    let document = parse_document(text);
    let options = ResolveOptions {
        spec_dir: demo_dir(),
        workspace_root: Some(demo_dir()),
        allow_outside_workspace: false,
        ..Default::default()
    };
    let data = cache().load_for_spec(&document.spec, &options);
    (document, data)
}

fn valid_range(text: &str, range: TextRange) -> bool {
    range.start <= range.end
        && range.end <= text.len()
        && text.is_char_boundary(range.start)
        && text.is_char_boundary(range.end)
}

fn check_diagnostics(text: &str, diagnostics: &[Diagnostic]) -> Result<(), TestCaseError> {
    for diagnostic in diagnostics {
        prop_assert!(valid_range(text, diagnostic.range), "{diagnostic:?}");
        prop_assert!(!diagnostic.message.is_empty());
        for related in &diagnostic.related {
            if let RelatedTarget::SameDocument(range) = related.target {
                prop_assert!(valid_range(text, range), "{related:?}");
            }
        }
        for fix in &diagnostic.fixes {
            for edit in &fix.edits {
                prop_assert!(valid_range(text, edit.range), "{fix:?}");
            }
            let fixed = fix.apply(text);
            prop_assert!(fixed.is_some(), "fix does not apply: {fix:?}");
            if let Some(fixed) = fixed {
                let (document, data) = load(&fixed);
                let _ = analyze(&document, &data, &AnalysisConfig::default());
            }
        }
    }
    Ok(())
}

/// Pieces that edits insert: JSON punctuation, keys and values of the format, multi-byte text.
const PIECES: &[&str] = &[
    "{",
    "}",
    "[",
    "]",
    ":",
    ",",
    "\"",
    "\\",
    " ",
    "\n",
    "\r\n",
    "-1",
    "0",
    "1e309",
    "null",
    "true",
    "\"mark\": ",
    "\"bind\"",
    "\"x\"",
    "\"area\"",
    "\"angle\"",
    "\"wedge\"",
    "\"bar\"",
    "\"logarithmic\"",
    "\"stack\"",
    "\"from\": \"data\"",
    "\"extent\": [5, 1]",
    "\"summary\": \"mean\"",
    "\"palette\": [\"#fff\", \"#ffffff\", \"#zzz\"]",
    "\"emphasis\": [",
    "\"layers\": [",
    "\"columns\": {\"route\": {\"kind\": \"ordered\", \"levels\": []}}",
    "é",
    "🚢",
    "\u{FFFD}",
];

fn edited(text: &str, edits: &[(usize, usize, usize)]) -> String {
    let mut out = text.to_string();
    for &(at, delete, piece) in edits {
        let mut start = at % (out.len() + 1);
        while !out.is_char_boundary(start) {
            start -= 1;
        }
        let mut end = (start + delete % 8).min(out.len());
        while !out.is_char_boundary(end) {
            end += 1;
        }
        out.replace_range(start..end, PIECES[piece % PIECES.len()]);
    }
    out
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 300, ..ProptestConfig::default() })]

    #[test]
    fn analysis_and_editor_features_survive_random_edits(
        spec in 0usize..64,
        edits in proptest::collection::vec((0usize..100_000, 0usize..8, 0usize..64), 0..6),
        probes in proptest::collection::vec(0usize..100_000, 4),
    ) {
        let texts = demo_texts();
        prop_assume!(!texts.is_empty());
        let text = edited(&texts[spec % texts.len()], &edits);
        let (document, data) = load(&text);
        let config = AnalysisConfig::default();
        let diagnostics = analyze(&document, &data, &config);
        check_diagnostics(&text, &diagnostics)?;
        for probe in probes {
            let offset = probe % (text.len() + 1);
            let _ = features::hover_at(&document, &data, &diagnostics, offset, None);
            let candidates = completion::complete_at(&document, &data, offset);
            for candidate in candidates {
                prop_assert!(valid_range(&text, candidate.replace_range), "{candidate:?}");
            }
            for fix in refactors_at(&document, &data, &config, TextRange::empty(offset)) {
                prop_assert!(fix.apply(&text).is_some(), "{fix:?}");
            }
            let _ = features::definition_at(&document.spec, &data, offset);
        }
        let _ = features::inlay_hints(&document.spec, &data, TextRange::new(0, text.len()));
        let _ = features::document_outline(&document.spec);
        let _ = features::document_colours(&document.spec);
    }
}
