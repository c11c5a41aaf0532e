//! Properties of `markwell format` (syntax::format): formatting twice equals formatting once,
//! and the JSON before and after is the same value, with the same keys in the same order unless
//! sorting was asked for. Inputs: generated JSON documents written compactly or with odd
//! whitespace, and every spec under demo-data/ and tests/fixtures/.

use markwell::syntax::format::{format_text, FormatOptions};
use markwell::syntax::{parse, TokenKind};
use proptest::prelude::*;

/// The non-whitespace tokens' texts, in order.
fn token_texts(text: &str) -> Vec<String> {
    let tree = parse(text);
    tree.tokens()
        .iter()
        .filter(|token| token.kind != TokenKind::Whitespace)
        .map(|token| text[token.range().start..token.range().end].to_string())
        .collect()
}

fn check_properties(text: &str) {
    let plain = FormatOptions::default();
    let sorted = FormatOptions {
        sort_keys: true,
        ..FormatOptions::default()
    };
    let Ok(once) = format_text(text, &plain) else {
        // refused (syntax errors, comments): nothing to check but that it did not panic
        return;
    };
    assert_eq!(
        format_text(&once, &plain).as_ref(),
        Ok(&once),
        "not idempotent"
    );
    assert_eq!(token_texts(text), token_texts(&once), "tokens changed");
    let before: serde_json::Value = match serde_json::from_str(text) {
        Ok(value) => value,
        Err(error) => panic!("formatted a text serde_json rejects: {error}"),
    };
    let after: serde_json::Value = match serde_json::from_str(&once) {
        Ok(value) => value,
        Err(error) => panic!("the formatted text is not JSON: {error}\n{once}"),
    };
    assert_eq!(before, after);
    let Ok(sorted_once) = format_text(text, &sorted) else {
        panic!("sorting refused a text that formatted");
    };
    assert_eq!(
        format_text(&sorted_once, &sorted).as_ref(),
        Ok(&sorted_once)
    );
    let sorted_value: serde_json::Value = match serde_json::from_str(&sorted_once) {
        Ok(value) => value,
        Err(error) => panic!("the sorted text is not JSON: {error}"),
    };
    assert_eq!(before, sorted_value);
    assert!(once.ends_with("}\n") || once.ends_with("]\n") || once.ends_with('\n'));
}

fn json_value() -> impl Strategy<Value = serde_json::Value> {
    let leaf = prop_oneof![
        Just(serde_json::Value::Null),
        any::<bool>().prop_map(serde_json::Value::Bool),
        (-1.0e9f64..1.0e9).prop_map(|n| serde_json::json!(n)),
        any::<i32>().prop_map(|n| serde_json::json!(n)),
        "[a-z\"\\\\é\u{1F600} \t\n]{0,12}".prop_map(serde_json::Value::String),
    ];
    leaf.prop_recursive(4, 48, 6, |inner| {
        prop_oneof![
            prop::collection::vec(inner.clone(), 0..6).prop_map(serde_json::Value::Array),
            prop::collection::btree_map("[a-z_\"]{1,8}", inner, 0..6)
                .prop_map(|map| serde_json::Value::Object(map.into_iter().collect())),
        ]
    })
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(256))]

    #[test]
    fn formatting_is_stable_and_keeps_the_value(value in json_value(), pretty in any::<bool>(), pad in "[ \t\r\n]{0,3}") {
        let written = if pretty {
            serde_json::to_string_pretty(&value).unwrap_or_default()
        } else {
            serde_json::to_string(&value).unwrap_or_default()
        };
        let text = format!("{pad}{written}{pad}");
        check_properties(&text);
    }
}

#[test]
fn every_demo_and_fixture_spec_keeps_its_properties() {
    let mut count = 0;
    for folder in ["demo-data", "tests/fixtures"] {
        let mut pending = vec![std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR")).join(folder)];
        while let Some(dir) = pending.pop() {
            let Ok(entries) = std::fs::read_dir(&dir) else {
                continue;
            };
            for entry in entries.flatten() {
                let path = entry.path();
                if path.is_dir() {
                    pending.push(path);
                } else if path.to_string_lossy().ends_with(".chart.json") {
                    if let Ok(text) = std::fs::read_to_string(&path) {
                        check_properties(&text);
                        count += 1;
                    }
                }
            }
        }
    }
    assert!(count > 20, "found only {count} specs");
}
