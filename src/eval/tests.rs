//! Evaluation over inline rows: every summary, bins, the arrangements, panels, the density cap,
//! missing values and the notes for layers that cannot be drawn. Expected values are worked out
//! by hand from the rows written in each test.

use super::*;
use crate::data::rows::InlineRows;
use crate::spec::model::{AttributeKind, Channel, SourceLocation};

fn spec_of(text: &str) -> ChartSpec {
    crate::spec::lower::lower_document(&crate::syntax::parse(text)).0
}

fn evaluate_with(text: &str, options: &EvalOptions) -> EvaluatedChart {
    let spec = spec_of(text);
    let mut open = |source: &Source| -> Result<Box<dyn RowSource + Send>, DataError> {
        match &source.location {
            SourceLocation::Rows { rows, .. } => Ok(Box::new(InlineRows::new(rows.clone()))),
            _ => Err(DataError {
                kind: crate::data::DataErrorKind::NotFound,
                message: "no file here".to_string(),
                path: None,
                line: None,
                byte_offset: None,
            }),
        }
    };
    evaluate_chart(&spec, &mut open, options)
}

fn evaluate(text: &str) -> EvaluatedChart {
    evaluate_with(text, &EvalOptions::default())
}

const BAKERY_ROWS: &str = r#"[
  {"branch": "North", "product": "rye", "loaves": 10, "day": "2026-03-02"},
  {"branch": "North", "product": "spelt", "loaves": 4, "day": "2026-03-02"},
  {"branch": "South", "product": "rye", "loaves": 7, "day": "2026-03-02"},
  {"branch": "North", "product": "rye", "loaves": 6, "day": "2026-03-03"},
  {"branch": "South", "product": "spelt", "loaves": null, "day": "2026-03-03"},
  {"branch": "South", "product": "spelt", "loaves": 3, "day": "2026-03-04"},
  {"branch": "East", "product": "rye", "loaves": 1, "day": "2026-03-04"}
]"#;

fn bar_of(summary: &str) -> String {
    format!(
        r#"{{"source": {{"rows": {BAKERY_ROWS}}}, "mark": "bar",
            "bind": {{"x": "branch", "y": {{"column": "loaves", "summary": "{summary}"}}}}}}"#
    )
}

/// (category on x, value on y) of each mark of the first layer.
fn bars(chart: &EvaluatedChart) -> Vec<(String, Option<f64>)> {
    let layer = &chart.layers[0];
    let x = layer.channel_index(Channel::X).unwrap_or(0);
    let y = layer.channel_index(Channel::Y).unwrap_or(1);
    layer
        .marks
        .iter()
        .map(|mark| {
            (
                mark.values[x].as_text().unwrap_or("?").to_string(),
                mark.values[y].as_f64(),
            )
        })
        .collect()
}

fn pairs(expected: &[(&str, Option<f64>)]) -> Vec<(String, Option<f64>)> {
    expected
        .iter()
        .map(|(name, value)| (name.to_string(), *value))
        .collect()
}

#[test]
fn every_summary_per_branch() {
    // North: 10, 4, 6; South: 7, missing, 3; East: 1 (branches in the order first seen)
    let cases: [(&str, [Option<f64>; 3]); 7] = [
        ("sum", [Some(20.0), Some(10.0), Some(1.0)]),
        ("count", [Some(3.0), Some(2.0), Some(1.0)]),
        ("mean", [Some(20.0 / 3.0), Some(5.0), Some(1.0)]),
        ("median", [Some(6.0), Some(5.0), Some(1.0)]),
        ("min", [Some(4.0), Some(3.0), Some(1.0)]),
        ("max", [Some(10.0), Some(7.0), Some(1.0)]),
        ("distinct", [Some(3.0), Some(2.0), Some(1.0)]),
    ];
    for (summary, [north, south, east]) in cases {
        let chart = evaluate(&bar_of(summary));
        assert!(chart.notes.is_empty(), "{summary}: {:?}", chart.notes);
        assert_eq!(
            bars(&chart),
            pairs(&[("North", north), ("South", south), ("East", east)]),
            "{summary}"
        );
        let layer = &chart.layers[0];
        assert_eq!(layer.rows_read, 7);
        assert_eq!(layer.rows_left_out, 0, "{summary}");
        let rows: Vec<u64> = layer.marks.iter().map(|mark| mark.rows).collect();
        assert_eq!(rows, vec![3, 3, 1], "{summary}");
    }
}

#[test]
fn a_bare_count_counts_rows_and_titles_say_what_is_drawn() {
    let chart = evaluate(&format!(
        r#"{{"source": {{"rows": {BAKERY_ROWS}}},
            "columns": {{"loaves": {{"label": "Loaves sold", "unit": "loaves"}}}},
            "layers": [
              {{"mark": "bar", "bind": {{"x": "branch", "y": {{"summary": "count"}}}}}},
              {{"mark": "bar", "bind": {{"x": "branch", "y": {{"column": "loaves", "summary": "sum"}}}}}}
            ]}}"#
    ));
    assert_eq!(
        bars(&chart),
        pairs(&[
            ("North", Some(3.0)),
            ("South", Some(3.0)),
            ("East", Some(1.0))
        ])
    );
    let y = chart.layers[0]
        .channel(Channel::Y)
        .map(|info| info.title.clone());
    assert_eq!(y.as_deref(), Some("number of rows"));
    let y = chart.layers[1].channel(Channel::Y);
    assert_eq!(
        y.map(|info| info.title.as_str()),
        Some("sum of Loaves sold (loaves)")
    );
    assert_eq!(
        y.map(|info| info.domain.clone()),
        Some(Domain::Numeric {
            min: 1.0,
            max: 20.0
        })
    );
    assert!(y.is_some_and(|info| info.from_zero));
    let x = chart.layers[1].channel(Channel::X);
    assert_eq!(
        x.map(|info| info.domain.clone()),
        Some(Domain::Categories(vec![
            "North".to_string(),
            "South".to_string(),
            "East".to_string()
        ]))
    );
}

#[test]
fn order_and_levels_set_the_order_of_categories() {
    let ascending = evaluate(&format!(
        r#"{{"source": {{"rows": {BAKERY_ROWS}}}, "mark": "bar",
            "bind": {{"x": {{"column": "branch", "order": "ascending"}}, "y": {{"column": "loaves", "summary": "sum"}}}}}}"#
    ));
    let names: Vec<String> = bars(&ascending).into_iter().map(|(name, _)| name).collect();
    assert_eq!(names, vec!["East", "North", "South"]);
    let listed = evaluate(&format!(
        r#"{{"source": {{"rows": {BAKERY_ROWS}}}, "mark": "bar",
            "columns": {{"branch": {{"kind": "ordered", "levels": ["South", "East", "North"]}}}},
            "bind": {{"x": "branch", "y": {{"column": "loaves", "summary": "sum"}}}}}}"#
    ));
    let names: Vec<String> = bars(&listed).into_iter().map(|(name, _)| name).collect();
    assert_eq!(names, vec!["South", "East", "North"]);
    let descending = evaluate(&format!(
        r#"{{"source": {{"rows": {BAKERY_ROWS}}}, "mark": "bar",
            "columns": {{"branch": {{"kind": "ordered", "levels": ["South", "East", "North"]}}}},
            "bind": {{"x": {{"column": "branch", "order": "descending"}}, "y": {{"column": "loaves", "summary": "sum"}}}}}}"#
    ));
    let names: Vec<String> = bars(&descending)
        .into_iter()
        .map(|(name, _)| name)
        .collect();
    assert_eq!(names, vec!["North", "East", "South"]);
}

fn arranged(arrange: &str) -> EvaluatedLayer {
    let chart = evaluate(&format!(
        r#"{{"source": {{"rows": [
              {{"month": "Jan", "kind": "rye", "loaves": 3}},
              {{"month": "Jan", "kind": "spelt", "loaves": 5}},
              {{"month": "Feb", "kind": "rye", "loaves": 2}},
              {{"month": "Feb", "kind": "spelt", "loaves": -1}},
              {{"month": "Feb", "kind": "oat", "loaves": 4}}
            ]}},
            "mark": "bar", "arrange": "{arrange}",
            "bind": {{"x": "month", "y": {{"column": "loaves", "summary": "sum"}}, "hue": "kind"}}}}"#
    ));
    assert!(chart.notes.is_empty(), "{:?}", chart.notes);
    chart.layers[0].clone()
}

/// (month, series, start, end) of every mark.
fn stacked(layer: &EvaluatedLayer) -> Vec<(String, u32, Option<f64>, Option<f64>)> {
    let x = layer.channel_index(Channel::X).unwrap_or(0);
    let y = layer.channel_index(Channel::Y).unwrap_or(1);
    layer
        .marks
        .iter()
        .map(|mark| {
            (
                mark.values[x].as_text().unwrap_or("?").to_string(),
                mark.series,
                mark.stack_start,
                mark.values[y].as_f64(),
            )
        })
        .collect()
}

#[test]
fn stacks_run_up_for_positive_values_and_down_for_negative_ones() {
    let layer = arranged("stack");
    // series by first seen hue: rye 0, spelt 1, oat 2; marks ordered by series then month
    assert_eq!(
        stacked(&layer),
        vec![
            ("Jan".to_string(), 0, Some(0.0), Some(3.0)),
            ("Feb".to_string(), 0, Some(0.0), Some(2.0)),
            ("Jan".to_string(), 1, Some(3.0), Some(8.0)),
            ("Feb".to_string(), 1, Some(0.0), Some(-1.0)),
            ("Feb".to_string(), 2, Some(2.0), Some(6.0)),
        ]
    );
    assert_eq!(
        layer.channel(Channel::Y).map(|info| info.domain.clone()),
        Some(Domain::Numeric {
            min: -1.0,
            max: 8.0
        })
    );
}

#[test]
fn share_divides_each_stack_by_its_total() {
    let layer = arranged("share");
    let ends: Vec<(String, u32, Option<f64>, Option<f64>)> = stacked(&layer);
    // Jan: 3 + 5 = 8; Feb: 2 + |-1| + 4 = 7
    assert_eq!(
        ends,
        vec![
            ("Jan".to_string(), 0, Some(0.0), Some(3.0 / 8.0)),
            ("Feb".to_string(), 0, Some(0.0), Some(2.0 / 7.0)),
            ("Jan".to_string(), 1, Some(3.0 / 8.0), Some(1.0)),
            ("Feb".to_string(), 1, Some(0.0), Some(-1.0 / 7.0)),
            ("Feb".to_string(), 2, Some(2.0 / 7.0), Some(6.0 / 7.0)),
        ]
    );
}

#[test]
fn side_by_side_and_overlap_keep_values_from_the_baseline() {
    for arrange in ["side-by-side", "overlap"] {
        let layer = arranged(arrange);
        assert!(layer.marks.iter().all(|mark| mark.stack_start.is_none()));
        let series: Vec<u32> = layer.marks.iter().map(|mark| mark.series).collect();
        assert_eq!(series, vec![0, 0, 1, 1, 2], "{arrange}");
        assert_eq!(
            layer.channel(Channel::Y).map(|info| info.domain.clone()),
            Some(Domain::Numeric {
                min: -1.0,
                max: 5.0
            })
        );
    }
}

#[test]
fn bins_group_numbers_into_nice_intervals() {
    let chart = evaluate(
        r#"{"source": {"rows": [
              {"weight": 3.1}, {"weight": 4.9}, {"weight": 12}, {"weight": 18.5},
              {"weight": 48.7}, {"weight": "NA"}
            ]},
            "mark": "bar",
            "bind": {"x": {"column": "weight", "bins": 10}, "y": {"summary": "count"}}}"#,
    );
    let layer = &chart.layers[0];
    let x = layer.channel(Channel::X);
    assert_eq!(x.map(|info| info.kind), Some(AttributeKind::Ordered));
    let Some(Domain::Categories(labels)) = x.map(|info| info.domain.clone()) else {
        panic!("bins have categories: {x:?}");
    };
    assert_eq!(labels.len(), 10);
    assert_eq!(labels[0], "0\u{2013}5");
    assert_eq!(labels[9], "45\u{2013}50");
    assert_eq!(
        bars(&chart),
        pairs(&[
            ("0\u{2013}5", Some(2.0)),
            ("10\u{2013}15", Some(1.0)),
            ("15\u{2013}20", Some(1.0)),
            ("45\u{2013}50", Some(1.0))
        ])
    );
    // the row without a weight has no bin on the x axis
    assert_eq!(layer.rows_left_out, 1);
}

#[test]
fn panels_split_the_groups_and_are_listed_in_order() {
    let chart = evaluate(&format!(
        r#"{{"source": {{"rows": {BAKERY_ROWS}}}, "mark": "bar",
            "panels": {{"by": "product"}},
            "bind": {{"x": "branch", "y": {{"column": "loaves", "summary": "sum"}}}}}}"#
    ));
    let labels: Vec<Option<String>> = chart
        .panels
        .iter()
        .map(|panel| panel.label.clone())
        .collect();
    assert_eq!(
        labels,
        vec![Some("rye".to_string()), Some("spelt".to_string())]
    );
    let layer = &chart.layers[0];
    let by_panel: Vec<(u32, String, Option<f64>)> = layer
        .marks
        .iter()
        .map(|mark| {
            (
                mark.panel,
                mark.values[0].as_text().unwrap_or("?").to_string(),
                mark.values[1].as_f64(),
            )
        })
        .collect();
    assert_eq!(
        by_panel,
        vec![
            (0, "North".to_string(), Some(16.0)),
            (0, "South".to_string(), Some(7.0)),
            (0, "East".to_string(), Some(1.0)),
            (1, "North".to_string(), Some(4.0)),
            (1, "South".to_string(), Some(3.0)),
        ]
    );
}

#[test]
fn numeric_panels_are_ordered_by_number() {
    let chart = evaluate(
        r#"{"source": {"rows": [{"year": 2010, "v": 1}, {"year": 9, "v": 2}, {"year": 100, "v": 3}]},
            "panels": {"by": "year"}, "mark": "point", "bind": {"x": "v", "y": "v"}}"#,
    );
    let labels: Vec<String> = chart
        .panels
        .iter()
        .filter_map(|panel| panel.label.clone())
        .collect();
    assert_eq!(labels, vec!["9", "100", "2010"]);
    let panels: Vec<u32> = chart.layers[0]
        .marks
        .iter()
        .map(|mark| mark.panel)
        .collect();
    assert_eq!(panels, vec![0, 1, 2]);
}

#[test]
fn a_density_grid_keeps_each_panels_rows_in_its_own_counts() {
    // two harbours whose points lie apart: the calm one's near the origin, the exposed one's
    // in the far corner. The first two rows set the extent the grid starts on to 0..320 by
    // 0..200, one unit per cell (320 by 200 cells), so a point at k + 0.5 lies in cell k.
    let mut points: Vec<(&str, f64, f64)> = vec![("calm", 0.0, 0.0), ("exposed", 320.0, 200.0)];
    for index in 0..100 {
        points.push(("calm", 0.5 + (index % 10) as f64, 0.5 + (index % 5) as f64));
        points.push((
            "exposed",
            300.5 + (index % 10) as f64,
            180.5 + (index % 7) as f64,
        ));
    }
    let rows: Vec<String> = points
        .iter()
        .map(|(harbour, x, y)| format!(r#"{{"harbour": "{harbour}", "x": {x}, "y": {y}}}"#))
        .collect();
    let text = format!(
        r#"{{"source": {{"rows": [{}]}}, "mark": "point", "panels": {{"by": "harbour"}},
            "bind": {{"x": "x", "y": "y"}}}}"#,
        rows.join(",")
    );
    let chart = evaluate_with(
        &text,
        &EvalOptions {
            max_kept_marks: 50,
            ..EvalOptions::default()
        },
    );
    let layer = &chart.layers[0];
    assert!(layer.marks.is_empty());
    let Some(grid) = &layer.density else {
        panic!("a density grid past the cap");
    };
    assert_eq!((grid.width, grid.height), (320, 200));
    assert_eq!(grid.x_domain.0, 0.0);
    assert!((grid.x_domain.1 - 320.0).abs() < 1e-6);
    assert_eq!(grid.panels.len(), 2);
    for (index, panel) in chart.panels.iter().enumerate() {
        let Some(harbour) = panel.label.as_deref() else {
            panic!("panel {index} has a label");
        };
        // the counts worked out from the rows: cell k for k <= value < k + 1, the largest
        // value in the last cell, row 0 of the grid at the top (largest y)
        let mut expected = vec![0u32; 320 * 200];
        for (_, x, y) in points.iter().filter(|(name, _, _)| *name == harbour) {
            let column = (x.floor() as usize).min(319);
            let row = 199 - (y.floor() as usize).min(199);
            expected[row * 320 + column] += 1;
        }
        let Some(counts) = grid.counts_of(index as u32) else {
            panic!("{harbour} has a grid");
        };
        assert!(counts == expected.as_slice(), "{harbour}: counts differ");
        let total: u32 = counts.iter().sum();
        assert_eq!(total, 101, "{harbour}");
    }
    // one colour scale for both: the largest count of either panel (calm: 100 rows over 10
    // distinct points, 10 each, and the corner row at 0, 0 shares the cell of 0.5, 0.5: 11;
    // exposed: 100 rows over 70 distinct points, at most 2 each)
    assert_eq!(grid.max_count(), 11);
    assert!(chart
        .notes
        .iter()
        .any(|note| note.message.contains("one per panel")));
}

#[test]
fn a_density_grid_counts_in_the_units_of_its_axes_spacing() {
    // x on a logarithmic axis, y on a square-root one: the cells are even in log10(x) and in
    // sqrt(y), as the axes are drawn. The first two rows set the grid's start to log10 x in
    // 0..3.2 (0.01 per cell, 320 cells) and sqrt y in 0..20 (0.1 per cell, 200 cells).
    let mut points: Vec<(f64, f64)> = vec![(1.0, 0.0), (10f64.powf(3.2), 400.0), (0.0, 4.0)];
    let mut expected_cells = Vec::new();
    for index in 0..100usize {
        let (column, row_up) = ((index * 3) % 320, (index * 7) % 200);
        let x = 10f64.powf(0.005 + 0.01 * column as f64);
        let y = (0.05 + 0.1 * row_up as f64).powi(2);
        points.push((x, y));
        expected_cells.push((column, row_up));
    }
    points.push((-5.0, 9.0));
    let rows: Vec<String> = points
        .iter()
        .map(|(x, y)| format!(r#"{{"yield": {x}, "height": {y}}}"#))
        .collect();
    let text = format!(
        r#"{{"source": {{"rows": [{}]}}, "mark": "point",
            "bind": {{"x": {{"column": "yield", "mapping": {{"spacing": "logarithmic"}}}},
                      "y": {{"column": "height", "mapping": {{"spacing": "square-root"}}}}}}}}"#,
        rows.join(",")
    );
    let chart = evaluate_with(
        &text,
        &EvalOptions {
            max_kept_marks: 50,
            ..EvalOptions::default()
        },
    );
    let Some(grid) = &chart.layers[0].density else {
        panic!("a density grid past the cap");
    };
    assert_eq!(
        (grid.x_spacing, grid.y_spacing),
        (
            crate::spec::model::Spacing::Logarithmic,
            crate::spec::model::Spacing::SquareRoot
        )
    );
    assert!(grid.x_domain.0.abs() < 1e-12 && (grid.x_domain.1 - 3.2).abs() < 1e-6);
    assert!(grid.y_domain.0.abs() < 1e-12 && (grid.y_domain.1 - 20.0).abs() < 1e-6);
    // the two rows at x 0 and -5, one among the kept marks and one after: no logarithm
    assert_eq!(grid.unplaced, 2);
    let Some(counts) = grid.counts_of(0) else {
        panic!("panel 0 has a grid");
    };
    let mut expected = vec![0u32; 320 * 200];
    // the two rows that set the start: (log 0, sqrt 0) in the first cell, (3.2, 20) in the last
    expected[199 * 320] += 1;
    expected[319] += 1;
    for (column, row_up) in expected_cells {
        expected[(199 - row_up) * 320 + column] += 1;
    }
    assert!(counts == expected.as_slice(), "counts differ");
}

#[test]
fn density_grids_stop_at_the_panel_cap_and_say_how_many_rows_are_not_drawn() {
    // 70 bakeries, one row each beyond the first 10 kept: the grid takes the first 64 seen
    let rows: Vec<String> = (0..140)
        .map(|index| {
            format!(
                r#"{{"bakery": "b{}", "x": {}, "y": 1}}"#,
                index % 70,
                index % 9
            )
        })
        .collect();
    let text = format!(
        r#"{{"source": {{"rows": [{}]}}, "mark": "point", "panels": {{"by": "bakery"}},
            "bind": {{"x": "x", "y": "y"}}}}"#,
        rows.join(",")
    );
    let chart = evaluate_with(
        &text,
        &EvalOptions {
            max_kept_marks: 10,
            ..EvalOptions::default()
        },
    );
    let Some(grid) = &chart.layers[0].density else {
        panic!("a density grid past the cap");
    };
    assert_eq!(grid.panels.len(), density::MAX_DENSITY_PANELS);
    let counted: u64 = grid
        .panels
        .iter()
        .flat_map(|panel| panel.counts.iter())
        .map(|&count| u64::from(count))
        .sum();
    // 6 bakeries past the cap, two rows each
    assert_eq!(counted, 140 - 12);
    assert!(chart.notes.iter().any(|note| note
        .message
        .contains("12 rows of further panels are not drawn")));
}

fn scatter_rows(count: usize) -> String {
    let rows: Vec<String> = (0..count)
        .map(|index| {
            format!(
                r#"{{"x": {}, "y": {}, "kind": "{}"}}"#,
                index % 97,
                (index * 7) % 31,
                if index % 2 == 0 { "even" } else { "odd" }
            )
        })
        .collect();
    format!("[{}]", rows.join(","))
}

#[test]
fn points_keep_one_mark_per_row_up_to_the_cap_then_become_a_density_grid() {
    let text = format!(
        r#"{{"source": {{"rows": {}}}, "mark": "point", "bind": {{"x": "x", "y": "y", "hue": "kind"}}}}"#,
        scatter_rows(500)
    );
    let kept = evaluate(&text);
    let layer = &kept.layers[0];
    assert_eq!(layer.marks.len(), 500);
    assert!(layer.density.is_none());
    assert!(layer.marks.iter().all(|mark| mark.rows == 1));
    // grouped by series: the even rows first
    assert_eq!(layer.marks[0].series, 0);
    assert_eq!(layer.marks[499].series, 1);
    assert_eq!(
        layer.channel(Channel::X).map(|info| info.domain.clone()),
        Some(Domain::Numeric {
            min: 0.0,
            max: 96.0
        })
    );

    let capped = evaluate_with(
        &text,
        &EvalOptions {
            max_kept_marks: 100,
            ..EvalOptions::default()
        },
    );
    let layer = &capped.layers[0];
    assert!(layer.marks.is_empty());
    let Some(grid) = &layer.density else {
        panic!("a density grid past the cap");
    };
    assert_eq!(grid.panels.len(), 1);
    let total: u64 = grid.panels[0]
        .counts
        .iter()
        .map(|&count| u64::from(count))
        .sum();
    assert_eq!(total, 500);
    assert!(grid.x_domain.0 <= 0.0 && grid.x_domain.1 >= 96.0);
    assert_eq!(capped.notes.len(), 1);
    assert!(capped.notes[0].message.contains("density grid"));
    // the domain still spans every row
    assert_eq!(
        layer.channel(Channel::Y).map(|info| info.domain.clone()),
        Some(Domain::Numeric {
            min: 0.0,
            max: 30.0
        })
    );
}

#[test]
fn missing_positions_are_left_out_and_counted() {
    let chart = evaluate(
        r#"{"source": {"rows": [
              {"x": 1, "y": 2}, {"x": null, "y": 3}, {"x": 4, "y": "NA"}, {"x": "n/a", "y": 1},
              {"x": 5, "y": 6}, {"y": 7}
            ]},
            "mark": "point", "bind": {"x": "x", "y": "y"}}"#,
    );
    let layer = &chart.layers[0];
    assert_eq!(layer.rows_read, 6);
    assert_eq!(layer.rows_left_out, 4);
    assert_eq!(layer.marks.len(), 2);
    // a bar whose category is missing is left out too; a missing summed value is skipped
    let chart = evaluate(&bar_of("sum").replace(r#""branch": "East""#, r#""branch": null"#));
    assert_eq!(chart.layers[0].rows_left_out, 1);
    assert_eq!(chart.layers[0].marks.len(), 2);
}

#[test]
fn lines_without_a_summary_are_ordered_along_x_within_each_series() {
    let chart = evaluate(
        r#"{"source": {"rows": [
              {"day": "2026-03-03", "v": 2, "shop": "A"}, {"day": "2026-03-01", "v": 1, "shop": "B"},
              {"day": "2026-03-01", "v": 5, "shop": "A"}, {"day": "2026-03-02", "v": 4, "shop": "A"}
            ]},
            "mark": "line", "bind": {"x": "day", "y": "v", "hue": "shop"}}"#,
    );
    let layer = &chart.layers[0];
    assert_eq!(
        layer.channel(Channel::X).map(|info| info.kind),
        Some(AttributeKind::Time)
    );
    let order: Vec<(u32, Option<f64>)> = layer
        .marks
        .iter()
        .map(|mark| (mark.series, mark.values[1].as_f64()))
        .collect();
    assert_eq!(
        order,
        vec![
            (0, Some(5.0)),
            (0, Some(4.0)),
            (0, Some(2.0)),
            (1, Some(1.0))
        ]
    );
    // 2026-03-01 is day 20513 after 1970-01-01 (H. Hinnant's days_from_civil, worked by hand)
    assert_eq!(
        layer.channel(Channel::X).map(|info| info.domain.clone()),
        Some(Domain::Time {
            min: 20_513.0 * 86_400.0,
            max: 20_515.0 * 86_400.0
        })
    );
}

#[test]
fn bars_without_a_summary_say_how_many_rows_each_bar_stands_for() {
    let chart = evaluate(&format!(
        r#"{{"source": {{"rows": {BAKERY_ROWS}}}, "mark": "bar", "bind": {{"x": "branch", "y": "loaves"}}}}"#
    ));
    let layer = &chart.layers[0];
    let rows: Vec<u64> = layer.marks.iter().map(|mark| mark.rows).collect();
    // South's missing loaves row has no bar height, so it is left out
    assert_eq!(rows, vec![3, 2, 1]);
    assert_eq!(layer.rows_left_out, 1);
    // the value drawn on top is the last row's
    assert_eq!(
        bars(&chart),
        pairs(&[
            ("North", Some(6.0)),
            ("South", Some(3.0)),
            ("East", Some(1.0))
        ])
    );
}

#[test]
fn medians_past_the_exact_budget_come_from_the_sketch_and_say_so() {
    let rows: Vec<String> = (0..3000)
        .map(|index| format!(r#"{{"g": "{}", "v": {index}}}"#, index % 3))
        .collect();
    let text = format!(
        r#"{{"source": {{"rows": [{}]}}, "columns": {{"g": {{"kind": "categorical"}}}}, "mark": "bar", "bind": {{"x": "g", "y": {{"column": "v", "summary": "median"}}}}}}"#,
        rows.join(",")
    );
    let exact = evaluate(&text);
    assert!(exact.layers[0].approximations.is_empty());
    // group 0 holds 0, 3, ..., 2997: median 1498.5
    assert_eq!(bars(&exact)[0].1, Some(1498.5));
    let sketched = evaluate_with(
        &text,
        &EvalOptions {
            exact_quantile_budget_bytes: 4096,
            ..EvalOptions::default()
        },
    );
    let layer = &sketched.layers[0];
    assert_eq!(layer.approximations.len(), 1, "{:?}", layer.approximations);
    assert!(layer.approximations[0].contains("Greenwald"));
    for (name, value) in bars(&sketched) {
        let group: f64 = name.parse().unwrap_or(f64::NAN);
        let exact_median = 1498.5 + group;
        // 0.1 % of 1000 values: within one rank, and ranks are 3 apart
        assert!(
            (value.unwrap_or(f64::NAN) - exact_median).abs() <= 4.5,
            "{name}: {value:?}"
        );
    }
}

#[test]
fn layers_that_cannot_be_drawn_are_left_out_with_a_note() {
    let chart = evaluate(&format!(
        r#"{{"source": {{"rows": {BAKERY_ROWS}}},
            "layers": [
              {{"bind": {{"x": "branch"}}}},
              {{"mark": "bar", "bind": {{"x": "branchh", "y": "loaves"}}}},
              {{"mark": "bar", "source": {{"path": "gone.csv"}}, "bind": {{"x": "branch", "y": "loaves"}}}},
              {{"mark": "bar", "bind": {{"x": "branch", "y": {{"column": "loaves", "summary": "sum"}}}}}}
            ]}}"#
    ));
    assert_eq!(chart.layers.len(), 1);
    assert_eq!(chart.layers[0].index, 3);
    let layers: Vec<Option<usize>> = chart.notes.iter().map(|note| note.layer).collect();
    assert_eq!(layers, vec![Some(0), Some(1), Some(2)]);
    assert!(chart.notes[1].message.contains("`branchh`"));
    assert!(chart.notes[2].message.contains("no file here"));
}

#[test]
fn a_spec_without_any_source_draws_nothing_and_says_why() {
    let chart = evaluate(r#"{"mark": "bar", "bind": {"x": "a", "y": "b"}}"#);
    assert!(chart.layers.is_empty());
    assert_eq!(chart.notes.len(), 1);
    assert!(chart.notes[0].message.contains("no `source`"));
    assert_eq!(chart.panels, vec![PanelInfo { label: None }]);
}

#[test]
fn the_data_layer_opener_plugs_in_as_is() {
    // the call the front ends make, with the data layer's own opener
    let spec = spec_of(&bar_of("sum"));
    let options = crate::data::ResolveOptions::default();
    let chart = evaluate_chart(
        &spec,
        &mut |source| crate::data::rows::open_rows(source, &options, false),
        &EvalOptions::default(),
    );
    assert_eq!(chart.layers.len(), 1);
    assert_eq!(bars(&chart)[0], ("North".to_string(), Some(20.0)));
}

/// Inline rows that say they are a sampled head.
struct SampledRows(InlineRows);

impl RowSource for SampledRows {
    fn column_names(&self) -> Vec<String> {
        self.0.column_names()
    }

    fn scan(
        &mut self,
        wanted: &[usize],
        row: &mut dyn FnMut(&[Option<&str>]) -> bool,
    ) -> Result<(), DataError> {
        self.0.scan(wanted, row)
    }

    fn is_sample(&self) -> bool {
        true
    }
}

#[test]
fn a_chart_from_a_sampled_head_says_so() {
    let spec = spec_of(&bar_of("sum"));
    let mut open = |source: &Source| -> Result<Box<dyn RowSource + Send>, DataError> {
        match &source.location {
            SourceLocation::Rows { rows, .. } => {
                Ok(Box::new(SampledRows(InlineRows::new(rows.clone()))))
            }
            _ => Err(DataError {
                kind: crate::data::DataErrorKind::NotFound,
                message: "no file here".to_string(),
                path: None,
                line: None,
                byte_offset: None,
            }),
        }
    };
    let chart = evaluate_chart(&spec, &mut open, &EvalOptions::default());
    assert!(chart.is_sample);
    assert!(!evaluate(&bar_of("sum")).is_sample);
}

/// Rows without end (a stand-in for a file too big to read within the budget), counted.
struct EndlessRows {
    read: std::sync::Arc<std::sync::atomic::AtomicU64>,
}

impl RowSource for EndlessRows {
    fn column_names(&self) -> Vec<String> {
        vec!["route".to_string(), "passengers".to_string()]
    }

    fn scan(
        &mut self,
        _wanted: &[usize],
        row: &mut dyn FnMut(&[Option<&str>]) -> bool,
    ) -> Result<(), DataError> {
        let routes = ["Harbour", "Islet", "Point"];
        let mut index = 0usize;
        loop {
            self.read.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
            if !row(&[Some(routes[index % 3]), Some("12")]) {
                return Ok(());
            }
            index += 1;
        }
    }
}

#[test]
fn the_time_budget_stops_an_endless_source_and_names_every_layer_left_out() {
    let text = r#"{ "source": { "path": "crossings.csv" }, "layers": [
        { "mark": "bar", "bind": { "x": "route", "y": { "column": "passengers", "summary": "sum" } } },
        { "mark": "point", "bind": { "x": "route", "y": "passengers" } } ] }"#;
    let spec = spec_of(text);
    let read = std::sync::Arc::new(std::sync::atomic::AtomicU64::new(0));
    let counter = read.clone();
    let mut open = move |_: &Source| -> Result<Box<dyn RowSource + Send>, DataError> {
        Ok(Box::new(EndlessRows {
            read: counter.clone(),
        }))
    };
    let options = EvalOptions::with_time(TimeBudget::seconds(0.05));
    let started = std::time::Instant::now();
    let chart = evaluate_chart(&spec, &mut open, &options);
    // the budget is looked at every 4,096 rows: it stops soon after 50 ms (generous bound for a
    // loaded machine; the point is that it stops at all)
    assert!(started.elapsed() < std::time::Duration::from_secs(20));
    assert!(read.load(std::sync::atomic::Ordering::Relaxed) > 0);
    assert!(chart.layers.is_empty(), "{:?}", chart.layers.len());
    assert_eq!(chart.timed_out, vec![0, 1]);
    assert_eq!(chart.time_budget, TimeBudget::seconds(0.05));
    assert_eq!(chart.notes.len(), 2, "{:?}", chart.notes);
    assert!(
        chart.notes[0].message.contains("time budget of 0.05 s")
            && chart.notes[0].message.contains("evaluate-seconds"),
        "{}",
        chart.notes[0].message
    );
}

#[test]
fn within_the_budget_nothing_is_left_out() {
    let chart = evaluate_with(
        &bar_of("sum"),
        &EvalOptions::with_time(TimeBudget::seconds(600.0)),
    );
    assert!(chart.timed_out.is_empty());
    assert_eq!(chart.layers.len(), 1);
    // a budget already spent leaves the layer out before its first row
    let spent = evaluate_with(
        &bar_of("sum"),
        &EvalOptions::with_time(TimeBudget::seconds(0.0)),
    );
    assert_eq!(spent.timed_out, vec![0]);
    assert!(spent.layers.is_empty());
}
