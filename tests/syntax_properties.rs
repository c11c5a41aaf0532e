//! Property tests of the parser: on random bytes and on random edits of a valid chart spec it
//! never panics, its tokens give the input back, and every node and error range lies inside the
//! text on char boundaries (see `syntax_support::check_tree_invariants`).

mod syntax_support;

use markwell::syntax;
use proptest::prelude::*;

/// A valid chart spec, invented for the tests (a ferry timetable).
const FERRY_SPEC: &str = r##"{
  "$schema": "../schema/chart-spec.schema.json",
  "title": "Crossings per ferry and weekday — «Nordhavn»",
  "source": { "path": "crossings.csv" },
  "columns": {
    "weekday": { "kind": "ordered", "levels": ["Mon", "Tue", "Wed", "Thu", "Fri"] },
    "load_pct": { "kind": "quantitative", "zero": "meaningful", "unit": "%" }
  },
  "layers": [
    {
      "mark": "bar",
      "bind": {
        "x": "weekday",
        "y": { "column": "crossings", "summary": "sum", "mapping": { "from": "zero" } },
        "hue": { "column": "ferry", "palette": ["#d9e6f2", "#7fa7cf", "#1f4e79"] }
      },
      "arrange": "stack"
    },
    { "mark": "segment", "bind": { "y": { "column": "load_pct", "summary": "mean" } },
      "style": { "opacity": 0.5, "stroke-width": 1.5e0 } }
  ],
  "frame": { "width": 640, "height": 400, "background": "#ffffff" },
  "note": "tab\tand \u00e9 and \ud83d\udea2 escapes", "draft": false, "owner": null
}"##;

/// Pieces that edits insert: JSON punctuation, broken literals, quotes, multi-byte characters.
const INSERTABLE_PIECES: &[&str] = &[
    "{", "}", "[", "]", ":", ",", "\"", "'", "\\", "/", "/*", "//", "*/", "\n", "\r\n", " ", "\t",
    "-", "+", ".", "e", "0", "01", "1.", "tru", "null", "NaN", "\u{FEFF}", "\u{FFFD}", "é", "🚢",
    "\u{0}", "\"key\":", "[[[[", "}}}}",
];

#[derive(Clone, Debug)]
enum Edit {
    Insert {
        at: usize,
        piece: usize,
    },
    InsertChar {
        at: usize,
        character: char,
    },
    Delete {
        at: usize,
        length: usize,
    },
    Replace {
        at: usize,
        length: usize,
        piece: usize,
    },
}

fn edit_strategy() -> impl Strategy<Value = Edit> {
    prop_oneof![
        (any::<usize>(), 0..INSERTABLE_PIECES.len())
            .prop_map(|(at, piece)| Edit::Insert { at, piece }),
        (any::<usize>(), any::<char>())
            .prop_map(|(at, character)| Edit::InsertChar { at, character }),
        (any::<usize>(), 1usize..12).prop_map(|(at, length)| Edit::Delete { at, length }),
        (any::<usize>(), 1usize..6, 0..INSERTABLE_PIECES.len())
            .prop_map(|(at, length, piece)| Edit::Replace { at, length, piece }),
    ]
}

/// The char boundary at or before `offset % (len + 1)`.
fn boundary_at(text: &str, offset: usize) -> usize {
    let mut at = offset % (text.len() + 1);
    while !text.is_char_boundary(at) {
        at -= 1;
    }
    at
}

/// The char boundary at or after `offset` (clamped to the end).
fn boundary_after(text: &str, offset: usize) -> usize {
    let mut at = offset.min(text.len());
    while !text.is_char_boundary(at) {
        at += 1;
    }
    at
}

fn apply(text: &mut String, edit: &Edit) {
    match *edit {
        Edit::Insert { at, piece } => {
            let at = boundary_at(text, at);
            text.insert_str(at, INSERTABLE_PIECES[piece]);
        }
        Edit::InsertChar { at, character } => {
            let at = boundary_at(text, at);
            text.insert(at, character);
        }
        Edit::Delete { at, length } => {
            let start = boundary_at(text, at);
            let end = boundary_after(text, start + length);
            text.replace_range(start..end, "");
        }
        Edit::Replace { at, length, piece } => {
            let start = boundary_at(text, at);
            let end = boundary_after(text, start + length);
            text.replace_range(start..end, INSERTABLE_PIECES[piece]);
        }
    }
}

fn assert_invariants(text: &str) -> Result<(), TestCaseError> {
    let tree = syntax::parse(text);
    syntax_support::check_tree_invariants(text, &tree).map_err(TestCaseError::fail)?;
    Ok(())
}

#[test]
fn the_ferry_spec_is_valid_json() {
    let tree = syntax::parse(FERRY_SPEC);
    assert_eq!(tree.errors(), &[]);
    // and serde_json agrees that the fixture is JSON
    assert!(serde_json::from_str::<serde_json::Value>(FERRY_SPEC).is_ok());
}

proptest! {
    // 300 cases keep the suite fast; set PROPTEST_CASES for a longer search
    #![proptest_config(ProptestConfig {
        cases: std::env::var("PROPTEST_CASES").ok().and_then(|cases| cases.parse().ok()).unwrap_or(300),
        ..ProptestConfig::default()
    })]

    #[test]
    fn random_bytes_parse_into_a_lossless_tree(bytes in proptest::collection::vec(any::<u8>(), 0..400)) {
        let text = String::from_utf8_lossy(&bytes);
        assert_invariants(&text)?;
    }

    #[test]
    fn random_json_alphabet_strings_parse_into_a_lossless_tree(
        pieces in proptest::collection::vec(0..INSERTABLE_PIECES.len(), 0..80)
    ) {
        let text: String = pieces.iter().map(|&piece| INSERTABLE_PIECES[piece]).collect();
        assert_invariants(&text)?;
    }

    #[test]
    fn random_edits_of_a_valid_spec_parse_into_a_lossless_tree(
        edits in proptest::collection::vec(edit_strategy(), 1..8)
    ) {
        let mut text = FERRY_SPEC.to_string();
        for edit in &edits {
            apply(&mut text, edit);
        }
        assert_invariants(&text)?;
        // a single edit leaves most of the spec readable: the root is still an object
        if edits.len() == 1 {
            let tree = syntax::parse(&text);
            let root_kind = tree.root_value().map(|root| root.kind());
            let starts_broken = !text.trim_start_matches(['\u{FEFF}', ' ', '\n', '\t', '\r']).starts_with('{');
            prop_assert!(
                starts_broken || root_kind == Some(syntax::NodeKind::Object),
                "root {:?} for {:?}", root_kind, text
            );
        }
    }
}
