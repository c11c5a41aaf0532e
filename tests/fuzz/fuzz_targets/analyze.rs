//! Lowering plus the whole analysis (schema, every rule) with inline rows and no files: any
//! text is diagnosed without a panic, and every diagnostic range sits inside the text on
//! character boundaries.
#![no_main]

use libfuzzer_sys::fuzz_target;
use markwell::analysis::{analyze, parse_document, AnalysisConfig};
use markwell::data::{DataContext, ProfileCache, ResolveOptions};

fuzz_target!(|data: &[u8]| {
    let text = String::from_utf8_lossy(data);
    let document = parse_document(&text);
    // inline rows are profiled; paths resolve inside an empty folder that holds no files
    let cache = ProfileCache::new();
    let options = ResolveOptions {
        spec_dir: std::path::PathBuf::from("/nonexistent-markwell-fuzz"),
        workspace_root: Some(std::path::PathBuf::from("/nonexistent-markwell-fuzz")),
        allow_outside_workspace: false,
        ..Default::default()
    };
    let loaded = cache.load_for_spec_sampled(&document.spec, &options);
    for context in [loaded, DataContext::default()] {
        let diagnostics = analyze(&document, &context, &AnalysisConfig::default());
        for diagnostic in &diagnostics {
            assert!(diagnostic.range.start <= diagnostic.range.end);
            assert!(diagnostic.range.end <= text.len());
            assert!(text.is_char_boundary(diagnostic.range.start));
            assert!(text.is_char_boundary(diagnostic.range.end));
            for fix in &diagnostic.fixes {
                for edit in &fix.edits {
                    assert!(edit.range.end <= text.len());
                }
            }
        }
    }
});
