//! Messages speak of what the chart draws: circles on a bubble chart, bars on a bar chart,
//! labels for text; and advice names only what the format can express.

use std::path::PathBuf;

use markwell::analysis::{analyze, parse_document, AnalysisConfig};
use markwell::data::{ProfileCache, ResolveOptions};

/// Inline rows (invented ferry numbers) shared by the specs below.
const ROWS: &str = r#"[
  { "route": "Harbour Loop", "passengers": 900, "water_temp_c": 6.5, "margin": -40 },
  { "route": "North Pier", "passengers": 4200, "water_temp_c": 9.0, "margin": 15 },
  { "route": "Isle Run", "passengers": 11000, "water_temp_c": 14.5, "margin": 60 }
]"#;

fn messages(rule: &str, mark_and_bind: &str) -> Vec<String> {
    let text = format!(
        r#"{{ "columns": {{ "water_temp_c": {{ "zero": "arbitrary", "unit": "degC" }} }},
  "source": {{ "rows": {ROWS} }}, {mark_and_bind} }}"#
    );
    let document = parse_document(&text);
    let options = ResolveOptions {
        spec_dir: PathBuf::from(env!("CARGO_MANIFEST_DIR")),
        workspace_root: None,
        allow_outside_workspace: false,
        ..Default::default()
    };
    let data = ProfileCache::new().load_for_spec(&document.spec, &options);
    analyze(&document, &data, &AnalysisConfig::default())
        .into_iter()
        .filter(|d| d.rule == rule)
        .map(|d| d.message)
        .collect()
}

#[test]
fn area_perception_speaks_of_circles_and_advises_what_the_format_can_do() {
    let found = messages(
        "area-perception",
        r#""mark": "point", "bind": { "x": "route", "area": "passengers" }"#,
    );
    assert_eq!(found.len(), 1, "{found:?}");
    let message = &found[0];
    assert!(message.contains("circles 12.2x apart"), "{message}");
    assert!(!message.contains("bar"), "{message}");
    // the advice is a move the format can express; Flannery's exponent is only the explanation
    assert!(
        message.ends_with(
            "move `passengers` to the free `y`, where values are read nearly in proportion"
        ),
        "{message}"
    );
    assert!(
        message.contains("which the format cannot express"),
        "{message}"
    );
}

#[test]
fn area_perception_without_a_free_position_suggests_bars_or_a_position() {
    let found = messages(
        "area-perception",
        r#""mark": "point", "bind": { "x": "route", "y": "margin", "area": "passengers" }"#,
    );
    assert_eq!(found.len(), 1, "{found:?}");
    assert!(
        found[0].ends_with("draw `passengers` on a position or as the length of bars"),
        "{}",
        found[0]
    );
}

#[test]
fn magnitude_of_interval_is_worded_by_what_is_drawn() {
    let bubbles = messages(
        "magnitude-of-interval",
        r#""mark": "point", "bind": { "x": "route", "area": "water_temp_c" }"#,
    );
    assert_eq!(bubbles.len(), 1, "{bubbles:?}");
    assert!(
        bubbles[0].contains("as the area of circles: a circle twice the size"),
        "{}",
        bubbles[0]
    );
    assert!(!bubbles[0].contains("bar"), "{}", bubbles[0]);

    let bars = messages(
        "magnitude-of-interval",
        r#""mark": "bar", "bind": { "x": "route", "y": "water_temp_c" }"#,
    );
    assert_eq!(bars.len(), 1, "{bars:?}");
    assert!(
        bars[0].contains("as the length of bars: a bar twice as long"),
        "{}",
        bars[0]
    );
}

#[test]
fn negative_area_names_labels_for_text_and_circles_for_points() {
    let text = messages(
        "negative-area",
        r#""mark": "text", "bind": { "x": "route", "y": "passengers", "area": "margin" }"#,
    );
    assert_eq!(text.len(), 1, "{text:?}");
    assert!(text[0].contains("labels cannot be smaller"), "{}", text[0]);
    let points = messages(
        "negative-area",
        r#""mark": "point", "bind": { "x": "route", "y": "passengers", "area": "margin" }"#,
    );
    assert!(
        points[0].contains("circles cannot be smaller"),
        "{}",
        points[0]
    );
}
