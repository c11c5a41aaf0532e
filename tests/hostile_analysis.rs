//! Linear costs and caps on hostile documents, through the library (the analysis the server
//! and the CLI run). Each test states its time bound; bounds are generous for a debug build on
//! a loaded 2-core machine, and the cases are far above the size where a quadratic step would
//! blow through them (20,000 findings: a quadratic step costs 4·10⁸ operations).

use std::time::{Duration, Instant};

use markwell::analysis::{analyze, parse_document, AnalysisConfig};
use markwell::data::DataContext;

/// A spec with `count` unknown top-level keys (about 15 bytes each).
fn spec_with_unknown_keys(count: usize) -> String {
    let mut text = String::from("{\"mark\": \"bar\"");
    for index in 0..count {
        text.push_str(&format!(", \"unknown_{index:05}\": {index}"));
    }
    text.push('}');
    text
}

#[test]
fn twenty_thousand_unknown_keys_are_diagnosed_in_linear_time() {
    // was: a 300 KB spec with 20,000 unknown keys took 3.5-4 s per keystroke (release build);
    // bound: 20,000 keys within 4 times the time of 5,000 keys (plus slack for noise), and
    // under 20 s in a debug build
    let small = spec_with_unknown_keys(5_000);
    let large = spec_with_unknown_keys(20_000);
    assert!(large.len() > 300_000, "{} bytes", large.len());
    let time = |text: &str| {
        let started = Instant::now();
        let document = parse_document(text);
        let diagnostics = analyze(
            &document,
            &DataContext::default(),
            &AnalysisConfig::default(),
        );
        (started.elapsed(), diagnostics)
    };
    let (small_time, small_diagnostics) = time(&small);
    let (large_time, large_diagnostics) = time(&large);
    let unknown = |diagnostics: &[markwell::Diagnostic]| {
        diagnostics
            .iter()
            .filter(|d| d.rule == "unknown-key")
            .count()
    };
    assert_eq!(unknown(&small_diagnostics), 5_000);
    assert_eq!(unknown(&large_diagnostics), 20_000);
    assert!(
        large_time < small_time * 8 + Duration::from_millis(500),
        "5,000 keys {small_time:?}, 20,000 keys {large_time:?}: not linear"
    );
    assert!(large_time < Duration::from_secs(20), "{large_time:?}");
}
