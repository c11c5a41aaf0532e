//! The marks of a layer: bars, segments, lines, areas, points, labels, cells, wedges and the
//! density image, placed by the chart's scales.

use super::texture::{texture_index, tilt_degrees, tilted_stroke, DASHES, HATCHES};
use super::*;
use crate::eval::density::{from_grid_units, to_grid_units};
use crate::knowledge::perceived::mark_shows;

// ---------------------------------------------------------------------------------------------
// Marks

struct LayerScales<'a> {
    x: Option<(&'a PositionScale, usize)>,
    y: Option<(&'a PositionScale, usize)>,
}

#[allow(clippy::too_many_arguments)]
pub(super) fn layer_group(
    chart: &EvaluatedChart,
    layer_index: usize,
    layer: &EvaluatedLayer,
    panels: &[PanelLayout],
    panel_scales: &[(Option<PositionScale>, Option<PositionScale>)],
    background: Srgb8,
    is_pie: bool,
    notes: &mut Vec<String>,
) -> Group {
    let colour_index = [Channel::Hue, Channel::Luminance, Channel::Saturation]
        .iter()
        .find_map(|channel| layer.channel_index(*channel));
    let colour_scale =
        colour_index.and_then(|index| ColourScale::new(&layer.channels[index], background));
    let default_colour = cached_categorical(1, background)
        .first()
        .copied()
        .unwrap_or(Srgb8::new(0x2f, 0x5d, 0x8a))
        .to_hex();
    let size_index = layer.channel_index(Channel::Area);
    let size_max = size_index
        .and_then(|index| match layer.channels[index].domain {
            Domain::Numeric { min, max } => Some(min.abs().max(max.abs())),
            _ => None,
        })
        .filter(|max| *max > 0.0);
    let shape_index = layer.channel_index(Channel::Shape);
    let shape_categories = shape_index.and_then(|index| match &layer.channels[index].domain {
        Domain::Categories(categories) => Some(categories.clone()),
        _ => None,
    });
    // texture and tilt, on the marks that show them (the `channel-not-on-mark` rule and a
    // scene note name the others)
    let shown_index = |channel: Channel| {
        layer
            .channel_index(channel)
            .filter(|_| mark_shows(layer.mark, channel))
    };
    let texture_at = shown_index(Channel::Texture);
    let texture_of = |mark: &DrawnMark| -> Option<usize> {
        let index = texture_at?;
        texture_index(&layer.channels[index], mark.values.get(index)?)
    };
    let hatch_of = |mark: &DrawnMark| texture_of(mark).map(|index| HATCHES[index % HATCHES.len()]);
    let dash_of = |mark: &DrawnMark, width: f64| -> Vec<f64> {
        texture_of(mark).map_or_else(Vec::new, |index| {
            DASHES[index % DASHES.len()]
                .iter()
                .map(|length| length * width)
                .collect()
        })
    };
    let tilt_at = shown_index(Channel::Tilt);
    let tilt_of = |mark: &DrawnMark| -> Option<f64> {
        let index = tilt_at?;
        tilt_degrees(&layer.channels[index], mark.values.get(index)?)
    };
    let label_index = layer.channel_index(Channel::Label);
    let angle_index = layer.channel_index(Channel::Angle);
    let x_index = layer.channel_index(Channel::X);
    let y_index = layer.channel_index(Channel::Y);
    let labelled = layer.marks.len() <= MAX_LABELLED_MARKS;
    let series_count = layer
        .marks
        .iter()
        .map(|mark| mark.series)
        .max()
        .map_or(1, |max| max as usize + 1);

    let colour_of = |mark: &DrawnMark| -> String {
        colour_index
            .and_then(|index| {
                colour_scale
                    .as_ref()
                    .and_then(|scale| scale.colour(mark.values.get(index)?))
            })
            .unwrap_or_else(|| default_colour.clone())
    };
    let describe = |mark: &DrawnMark, value: Option<f64>| -> Option<String> {
        if !labelled {
            return None;
        }
        let mut parts: Vec<String> = Vec::new();
        for (info, datum) in layer.channels.iter().zip(&mark.values) {
            let is_value = matches!(
                (info.channel, &info.domain),
                (
                    Channel::X | Channel::Y | Channel::Angle,
                    Domain::Numeric { .. }
                )
            );
            if is_value {
                continue;
            }
            if let Some(text) = datum_text(datum) {
                parts.push(text);
            }
        }
        let mut text = parts.join(", ");
        if let Some(value) = value {
            if !text.is_empty() {
                text.push_str(": ");
            }
            text.push_str(&format_number(value));
        }
        Some(text)
    };

    let mut children: Vec<Node> = Vec::new();
    let mut skipped = 0u64;

    if let Some(grid) = &layer.density {
        // each panel draws its own rows' counts in its own plot area; every panel's grid has
        // the same cells and one colour scale (up to the largest count of any panel), so the
        // panels can be compared
        let max_count = grid.max_count();
        let mut drawable = false;
        for (panel, (x, y)) in panels.iter().zip(panel_scales) {
            if let (Some(PositionScale::Continuous(x)), Some(PositionScale::Continuous(y))) = (x, y)
            {
                drawable = true;
                let Some(counts) = u32::try_from(panel.index)
                    .ok()
                    .and_then(|index| grid.counts_of(index))
                else {
                    continue;
                };
                if let Some(node) = density_image(grid, counts, max_count, x, y, panel) {
                    children.push(node);
                }
            }
        }
        if !drawable {
            notes.push(format!(
                "layer {}: the density grid needs number or time positions on both axes",
                layer.index + 1
            ));
        }
        if grid.unplaced > 0 {
            notes.push(format!(
                "layer {}: {} {} not drawn in the density grid (zero or below on a logarithmic axis)",
                layer.index + 1,
                grid.unplaced,
                if grid.unplaced == 1 { "row" } else { "rows" }
            ));
        }
        return Group {
            role: Role::Density,
            label: Some(format!(
                "{} rows drawn as a density grid of {} by {} cells",
                layer.rows_read, grid.width, grid.height
            )),
            children,
        };
    }

    if is_pie || layer.mark == Mark::Wedge {
        let Some(angle_index) = angle_index else {
            notes.push(format!(
                "layer {}: a wedge needs an `angle` channel",
                layer.index + 1
            ));
            return empty_layer(layer);
        };
        for panel in panels {
            let marks: Vec<(usize, &DrawnMark)> = layer
                .marks
                .iter()
                .enumerate()
                .filter(|(_, mark)| mark.panel as usize == panel.index)
                .collect();
            let total: f64 = marks
                .iter()
                .filter_map(|(_, mark)| mark.values.get(angle_index)?.as_f64())
                .filter(|value| *value > 0.0)
                .sum();
            if total <= 0.0 {
                continue;
            }
            let centre = Point {
                x: panel.plot.x + panel.plot.width / 2.0,
                y: panel.plot.y + panel.plot.height / 2.0,
            };
            let radius = (panel.plot.width.min(panel.plot.height) / 2.0 - 4.0).max(2.0);
            let mut angle = 0.0;
            for (mark_index, mark) in marks {
                let Some(value) = mark.values.get(angle_index).and_then(Datum::as_f64) else {
                    skipped += 1;
                    continue;
                };
                if value <= 0.0 {
                    skipped += 1;
                    continue;
                }
                let sweep = value / total * std::f64::consts::TAU;
                let mut paint = Paint::fill(&colour_of(mark));
                paint.stroke = Some(chart_background_hex(background));
                paint.stroke_width = 1.0;
                paint.hatch = hatch_of(mark);
                children.push(Node::Primitive(Primitive {
                    shape: Shape::Wedge {
                        centre,
                        radius,
                        start_angle: angle,
                        end_angle: angle + sweep,
                    },
                    paint,
                    label: describe(mark, Some(value)),
                    mark: Some(MarkRef {
                        layer: layer_index,
                        mark: mark_index,
                    }),
                }));
                angle += sweep;
            }
        }
        note_skipped(notes, layer, skipped);
        return layer_group_of(chart, layer, children);
    }

    let scales_of = |panel: usize| -> LayerScales<'_> {
        let (x, y) = panel_scales
            .get(panel)
            .map(|(x, y)| (x.as_ref(), y.as_ref()))
            .unwrap_or((None, None));
        LayerScales {
            x: x.zip(x_index),
            y: y.zip(y_index),
        }
    };

    match layer.mark {
        Mark::Bar | Mark::Segment => {
            let continuous_band =
                continuous_band_widths(layer, panels, panel_scales, x_index, y_index);
            for (mark_index, mark) in layer.marks.iter().enumerate() {
                let scales = scales_of(mark.panel as usize);
                let Some(panel) = panels.get(mark.panel as usize) else {
                    skipped += 1;
                    continue;
                };
                let geometry = bar_geometry(
                    mark,
                    &scales,
                    panel,
                    layer.arrange,
                    series_count,
                    continuous_band,
                );
                let Some((rect, value)) = geometry else {
                    skipped += 1;
                    continue;
                };
                let colour = colour_of(mark);
                let (shape, paint) = if layer.mark == Mark::Bar {
                    let mut paint = Paint::fill(&colour);
                    paint.hatch = hatch_of(mark);
                    (Shape::Rect(rect), paint)
                } else {
                    let (from, to) = if rect.width <= rect.height {
                        let x = rect.x + rect.width / 2.0;
                        (
                            Point { x, y: rect.y },
                            Point {
                                x,
                                y: rect.bottom(),
                            },
                        )
                    } else {
                        let y = rect.y + rect.height / 2.0;
                        (Point { x: rect.x, y }, Point { x: rect.right(), y })
                    };
                    let mut paint = Paint::stroke(&colour, 1.5);
                    paint.dash = dash_of(mark, 1.5);
                    (Shape::Line { from, to }, paint)
                };
                children.push(Node::Primitive(Primitive {
                    shape,
                    paint,
                    label: describe(mark, value),
                    mark: Some(MarkRef {
                        layer: layer_index,
                        mark: mark_index,
                    }),
                }));
            }
        }
        Mark::Line | Mark::Area => {
            // vertices of one (panel, series) joined in order of the position channel
            type Series<'a> = ((u32, u32), Vec<(usize, &'a DrawnMark)>);
            let mut series: Vec<Series<'_>> = Vec::new();
            for (mark_index, mark) in layer.marks.iter().enumerate() {
                let key = (mark.panel, mark.series);
                match series.iter_mut().find(|(existing, _)| *existing == key) {
                    Some((_, marks)) => marks.push((mark_index, mark)),
                    None => series.push((key, vec![(mark_index, mark)])),
                }
            }
            for ((panel_index, _), marks) in series {
                let scales = scales_of(panel_index as usize);
                let (Some((x_scale, x_at)), Some((y_scale, y_at))) = (scales.x, scales.y) else {
                    skipped += marks.len() as u64;
                    continue;
                };
                // the position channel is the one with the band or calendar scale, else x
                let vertical_values = !matches!(y_scale, PositionScale::Band(_))
                    || matches!(x_scale, PositionScale::Band(_));
                let mut vertices: Vec<(f64, f64, Option<f64>, usize)> = Vec::new();
                for (mark_index, mark) in &marks {
                    let (Some(x), Some(y)) = (
                        mark.values
                            .get(x_at)
                            .and_then(|datum| x_scale.position(datum)),
                        mark.values
                            .get(y_at)
                            .and_then(|datum| y_scale.position(datum)),
                    ) else {
                        skipped += 1;
                        continue;
                    };
                    let start = mark.stack_start.and_then(|start| {
                        if vertical_values {
                            y_scale.position(&Datum::Number(start))
                        } else {
                            x_scale.position(&Datum::Number(start))
                        }
                    });
                    vertices.push((x, y, start, *mark_index));
                }
                if vertices.is_empty() {
                    continue;
                }
                if vertical_values {
                    vertices.sort_by(|a, b| a.0.total_cmp(&b.0));
                } else {
                    vertices.sort_by(|a, b| a.1.total_cmp(&b.1));
                }
                let first_mark = vertices[0].3;
                let mark = &layer.marks[first_mark];
                let colour = colour_of(mark);
                let series_label = if labelled {
                    let mut label = describe_series(layer, mark);
                    if label.is_empty() {
                        label = format!("{} points", vertices.len());
                    } else {
                        label = format!("{label}, {} points", vertices.len());
                    }
                    Some(label)
                } else {
                    None
                };
                let top: Vec<Point> = vertices
                    .iter()
                    .map(|(x, y, _, _)| Point { x: *x, y: *y })
                    .collect();
                if layer.mark == Mark::Line {
                    let mut paint = Paint::stroke(&colour, 2.0);
                    paint.fill = None;
                    paint.dash = dash_of(mark, 2.0);
                    children.push(Node::Primitive(Primitive {
                        shape: Shape::Polyline {
                            points: top,
                            closed: false,
                        },
                        paint,
                        label: series_label,
                        mark: Some(MarkRef {
                            layer: layer_index,
                            mark: first_mark,
                        }),
                    }));
                } else {
                    let base = if vertical_values {
                        y_scale.baseline()
                    } else {
                        x_scale.baseline()
                    };
                    let Some(base) = base else {
                        skipped += vertices.len() as u64;
                        continue;
                    };
                    let mut points = top;
                    for (x, y, start, _) in vertices.iter().rev() {
                        let start = start.unwrap_or(base);
                        points.push(if vertical_values {
                            Point { x: *x, y: start }
                        } else {
                            Point { x: start, y: *y }
                        });
                    }
                    let mut paint = Paint::fill(&colour);
                    paint.hatch = hatch_of(mark);
                    paint.fill_opacity = if layer.arrange == Some(Arrange::Overlap) {
                        0.55
                    } else {
                        0.9
                    };
                    children.push(Node::Primitive(Primitive {
                        shape: Shape::Polyline {
                            points,
                            closed: true,
                        },
                        paint,
                        label: series_label,
                        mark: Some(MarkRef {
                            layer: layer_index,
                            mark: first_mark,
                        }),
                    }));
                }
            }
        }
        Mark::Point | Mark::Text => {
            for (mark_index, mark) in layer.marks.iter().enumerate() {
                let scales = scales_of(mark.panel as usize);
                let Some(panel) = panels.get(mark.panel as usize) else {
                    skipped += 1;
                    continue;
                };
                let centre_x = match scales.x {
                    Some((scale, at)) => {
                        mark.values.get(at).and_then(|datum| scale.position(datum))
                    }
                    None => Some(panel.plot.x + panel.plot.width / 2.0),
                };
                let centre_y = match scales.y {
                    Some((scale, at)) => {
                        mark.values.get(at).and_then(|datum| scale.position(datum))
                    }
                    None => Some(panel.plot.y + panel.plot.height / 2.0),
                };
                let (Some(x), Some(y)) = (centre_x, centre_y) else {
                    skipped += 1;
                    continue;
                };
                let centre = Point { x, y };
                let colour = colour_of(mark);
                if layer.mark == Mark::Text {
                    let content = label_index
                        .and_then(|index| datum_text(mark.values.get(index)?))
                        .unwrap_or_default();
                    if content.is_empty() {
                        skipped += 1;
                        continue;
                    }
                    let item = text_item(
                        Point {
                            x,
                            y: y + (ascent(MARK_LABEL_SIZE) - descent(MARK_LABEL_SIZE)) / 2.0,
                        },
                        Text {
                            content: &shorten_label(&content),
                            size: MARK_LABEL_SIZE,
                            anchor: Anchor::Middle,
                            // clockwise on screen: the tilt turns counter-clockwise
                            rotation: tilt_of(mark).map_or(0.0, |degrees| -degrees),
                            colour: &colour,
                        },
                    );
                    children.push(Node::Primitive(Primitive {
                        paint: Paint::fill(&colour),
                        shape: Shape::Text(item),
                        label: None,
                        mark: Some(MarkRef {
                            layer: layer_index,
                            mark: mark_index,
                        }),
                    }));
                    continue;
                }
                let radius = match (size_index, size_max) {
                    (Some(index), Some(max)) => mark
                        .values
                        .get(index)
                        .and_then(Datum::as_f64)
                        .map(|value| symbol_radius(value, max)),
                    _ => Some(DEFAULT_POINT_RADIUS),
                };
                let Some(radius) = radius else {
                    skipped += 1;
                    continue;
                };
                let symbol = match (shape_index, &shape_categories) {
                    (Some(index), Some(categories)) => mark
                        .values
                        .get(index)
                        .and_then(category_key)
                        .and_then(|key| categories.iter().position(|c| *c == key))
                        .map_or(Symbol::Circle, |i| SYMBOLS[i % SYMBOLS.len()]),
                    _ => Symbol::Circle,
                };
                let mut paint = Paint::fill(&colour);
                paint.fill_opacity = 0.8;
                paint.stroke = Some(chart_background_hex(background));
                paint.stroke_width = 0.6;
                let shape = if symbol == Symbol::Circle {
                    Shape::Circle { centre, radius }
                } else {
                    Shape::Symbol {
                        symbol,
                        centre,
                        radius,
                    }
                };
                if matches!(symbol, Symbol::Plus | Symbol::Cross) {
                    paint = Paint::stroke(&colour, 1.6);
                }
                // a tilted point is a short stroke through its centre
                let (shape, paint) = match tilt_of(mark) {
                    Some(degrees) => {
                        let (from, to) = tilted_stroke(centre, radius * 1.6, degrees);
                        (Shape::Line { from, to }, Paint::stroke(&colour, 2.0))
                    }
                    None if tilt_at.is_some() => {
                        skipped += 1;
                        continue;
                    }
                    None => (shape, paint),
                };
                children.push(Node::Primitive(Primitive {
                    shape,
                    paint,
                    label: describe(mark, None),
                    mark: Some(MarkRef {
                        layer: layer_index,
                        mark: mark_index,
                    }),
                }));
            }
        }
        Mark::Cell => {
            for (mark_index, mark) in layer.marks.iter().enumerate() {
                let scales = scales_of(mark.panel as usize);
                let (Some((x_scale, x_at)), Some((y_scale, y_at))) = (scales.x, scales.y) else {
                    skipped += 1;
                    continue;
                };
                let (Some((x, w)), Some((y, h))) = (
                    mark.values.get(x_at).and_then(|datum| x_scale.band(datum)),
                    mark.values.get(y_at).and_then(|datum| y_scale.band(datum)),
                ) else {
                    skipped += 1;
                    continue;
                };
                // tiles touch: widen each band to its step, less a hairline
                let (step_x, step_y) = (band_step(x_scale), band_step(y_scale));
                let rect = BoxRect {
                    x: x - (step_x - w) / 2.0 + 0.5,
                    y: y.min(y + h) - (step_y - h.abs()) / 2.0 + 0.5,
                    width: (step_x - 1.0).max(0.5),
                    height: (step_y - 1.0).max(0.5),
                };
                let value = colour_index
                    .and_then(|index| mark.values.get(index))
                    .and_then(Datum::as_f64);
                children.push(Node::Primitive(Primitive {
                    shape: Shape::Rect(rect),
                    paint: Paint {
                        hatch: hatch_of(mark),
                        ..Paint::fill(&colour_of(mark))
                    },
                    label: describe(mark, value),
                    mark: Some(MarkRef {
                        layer: layer_index,
                        mark: mark_index,
                    }),
                }));
            }
        }
        Mark::Wedge => {}
    }
    note_skipped(notes, layer, skipped);
    layer_group_of(chart, layer, children)
}

/// How far symbols reach past their centre: the inset of continuous ranges (0 without point or
/// text layers, whose marks are drawn as rows of individual symbols).
pub(super) fn mark_inset(chart: &EvaluatedChart) -> f64 {
    chart
        .layers
        .iter()
        .filter(|layer| layer.density.is_none())
        .map(|layer| match layer.mark {
            Mark::Point if layer.channel(Channel::Area).is_some() => MAX_SYMBOL_RADIUS + 1.0,
            Mark::Point => DEFAULT_POINT_RADIUS * 1.25 + 1.0,
            Mark::Text => MARK_LABEL_SIZE * 0.6,
            _ => 0.0,
        })
        .fold(0.0, f64::max)
}

fn band_step(scale: &PositionScale) -> f64 {
    match scale {
        PositionScale::Band(band) => band.step().abs(),
        PositionScale::Continuous(_) => 0.0,
    }
}

fn chart_background_hex(background: Srgb8) -> String {
    background.to_hex()
}

fn empty_layer(layer: &EvaluatedLayer) -> Group {
    Group {
        role: Role::Layer(layer.mark),
        label: Some(format!(
            "layer {} ({}), not drawn",
            layer.index + 1,
            layer.mark.as_str()
        )),
        children: Vec::new(),
    }
}

fn layer_group_of(chart: &EvaluatedChart, layer: &EvaluatedLayer, children: Vec<Node>) -> Group {
    let _ = chart;
    Group {
        role: Role::Layer(layer.mark),
        label: Some(format!(
            "{} {}",
            children.len(),
            plural_mark(layer.mark, children.len())
        )),
        children,
    }
}

fn note_skipped(notes: &mut Vec<String>, layer: &EvaluatedLayer, skipped: u64) {
    if skipped > 0 {
        notes.push(format!(
            "layer {}: {skipped} {} not drawn (a value missing or outside its scale)",
            layer.index + 1,
            if skipped == 1 { "mark" } else { "marks" }
        ));
    }
}

pub(super) fn datum_text(datum: &Datum) -> Option<String> {
    match datum {
        Datum::Missing => None,
        Datum::Number(value) => Some(format_number(*value)),
        Datum::Time(seconds) => {
            let civil = crate::draw::ticks::CivilTime::from_seconds(seconds.floor() as i64);
            Some(format!(
                "{:04}-{:02}-{:02}",
                civil.year, civil.month, civil.day
            ))
        }
        Datum::Text(text) => Some(text.to_string()),
    }
}

fn describe_series(layer: &EvaluatedLayer, mark: &DrawnMark) -> String {
    layer
        .channels
        .iter()
        .zip(&mark.values)
        .filter(|(info, _)| !info.channel.is_position())
        .filter_map(|(_, datum)| datum_text(datum))
        .collect::<Vec<_>>()
        .join(", ")
}

pub(super) fn symbol_radius(value: f64, max: f64) -> f64 {
    // the symbol's area, not its radius, is proportional to the value
    (MAX_SYMBOL_RADIUS * (value.abs() / max).sqrt()).max(MIN_SYMBOL_RADIUS)
}

/// Bar widths on a continuous axis: 80 % of the smallest gap between neighbouring positions.
fn continuous_band_widths(
    layer: &EvaluatedLayer,
    panels: &[PanelLayout],
    panel_scales: &[(Option<PositionScale>, Option<PositionScale>)],
    x_index: Option<usize>,
    y_index: Option<usize>,
) -> f64 {
    let (Some(x_at), Some((Some(x_scale), _))) = (x_index, panel_scales.first()) else {
        return 8.0;
    };
    let _ = y_index;
    let mut pixels: Vec<f64> = layer
        .marks
        .iter()
        .filter(|mark| mark.panel == 0)
        .filter_map(|mark| x_scale.position(mark.values.get(x_at)?))
        .collect();
    pixels.sort_by(f64::total_cmp);
    pixels.dedup_by(|a, b| (*a - *b).abs() < 1e-9);
    let smallest_gap = pixels
        .windows(2)
        .map(|pair| pair[1] - pair[0])
        .fold(f64::INFINITY, f64::min);
    let width = panels.first().map_or(100.0, |panel| panel.plot.width);
    if smallest_gap.is_finite() {
        (smallest_gap * 0.8).clamp(1.0, width / 2.0)
    } else {
        (width / 10.0).max(1.0)
    }
}

/// A bar's box and the value it shows (its length in data units).
fn bar_geometry(
    mark: &DrawnMark,
    scales: &LayerScales<'_>,
    panel: &PanelLayout,
    arrange: Option<Arrange>,
    series_count: usize,
    continuous_width: f64,
) -> Option<(BoxRect, Option<f64>)> {
    let x = scales.x;
    let y = scales.y;
    // which channel carries the value: the continuous one beside a band, else y
    let horizontal = match (x, y) {
        (Some((x_scale, _)), Some((y_scale, _))) => {
            matches!(y_scale, PositionScale::Band(_))
                && matches!(x_scale, PositionScale::Continuous(_))
        }
        (Some((PositionScale::Continuous(_), _)), None) => true,
        _ => false,
    };
    let (position, value) = if horizontal { (y, x) } else { (x, y) };
    let side_by_side = arrange == Some(Arrange::SideBySide) && series_count > 1;
    // the band across the bar
    let (start, thickness) = match position {
        Some((scale, at)) => {
            let datum = mark.values.get(at)?;
            match scale {
                PositionScale::Band(_) => scale.band(datum)?,
                PositionScale::Continuous(_) => {
                    let centre = scale.position(datum)?;
                    (centre - continuous_width / 2.0, continuous_width)
                }
            }
        }
        None => {
            if horizontal {
                (panel.plot.y, panel.plot.height)
            } else {
                (panel.plot.x, panel.plot.width)
            }
        }
    };
    let (start, thickness) = if side_by_side {
        let part = thickness / series_count as f64;
        (start + part * mark.series as f64, part)
    } else {
        (start, thickness)
    };
    // the extent along the value axis
    let (low_pixel, high_pixel, shown) = match value {
        Some((scale, at)) => {
            let datum = mark.values.get(at)?;
            let end_value = datum.as_f64()?;
            let end = scale.position(datum)?;
            let (begin, begin_value) = match mark.stack_start {
                Some(stack_start) => (scale.position(&Datum::Number(stack_start))?, stack_start),
                None => {
                    let base = scale.baseline()?;
                    let base_value = match scale {
                        PositionScale::Continuous(continuous) => continuous.invert(base),
                        PositionScale::Band(_) => None,
                    };
                    (base, base_value.unwrap_or(0.0))
                }
            };
            let shown = if mark.stack_start.is_some() {
                end_value - begin_value
            } else {
                end_value
            };
            (begin.min(end), begin.max(end), Some(shown))
        }
        None => {
            if horizontal {
                (panel.plot.x, panel.plot.right(), None)
            } else {
                (panel.plot.y, panel.plot.bottom(), None)
            }
        }
    };
    let rect = if horizontal {
        BoxRect {
            x: low_pixel,
            y: start,
            width: high_pixel - low_pixel,
            height: thickness,
        }
    } else {
        BoxRect {
            x: start,
            y: low_pixel,
            width: thickness,
            height: high_pixel - low_pixel,
        }
    };
    if ![rect.x, rect.y, rect.width, rect.height]
        .iter()
        .all(|v| v.is_finite())
    {
        return None;
    }
    Some((rect, shown))
}

/// One panel's counts of the grid as an image over the grid's domains, coloured up to
/// `max_count`, cropped to the cells that meet the panel's plot area: the grid doubles its span
/// while it reads the rows and can reach well past the domains drawn, and those cells (empty
/// of rows past the data, but not of area) would cover the frame or a neighbouring panel. A
/// cell cut by the plot's edge is kept whole.
///
/// The evaluation spaces the cells as the axes are spaced (even in the values, their logarithm
/// or their square root), so along an axis drawn that way, the usual way round (x to the right,
/// y upward), the cells are even on screen and the image holds one pixel per cell. Along any
/// other axis (flipped, or a spacing the grid was not counted in) the image holds one pixel
/// per CSS pixel of the plot, each taking the count of the cell its centre's value falls in,
/// so every row is still drawn where its value lies on the axis.
fn density_image(
    grid: &DensityGrid,
    counts: &[u32],
    max_count: u32,
    x: &ContinuousScale,
    y: &ContinuousScale,
    panel: &PanelLayout,
) -> Option<Node> {
    let width = grid.width as usize;
    let height = grid.height as usize;
    let cells = width.checked_mul(height)?;
    if cells == 0 || counts.len() != cells || cells > 4096 * 4096 {
        return None;
    }
    let plot = panel.plot;
    let columns = axis_samples(
        (grid.x_domain, width, grid.x_spacing),
        x,
        (plot.x, plot.right()),
        false,
    )?;
    // the counts' row 0 is the top (largest y); samples run top to bottom
    let rows = axis_samples(
        (grid.y_domain, height, grid.y_spacing),
        y,
        (plot.y, plot.bottom()),
        true,
    )?;
    let pixel_width = u32::try_from(columns.cells.len()).ok()?;
    let pixel_height = u32::try_from(rows.cells.len()).ok()?;
    let mut sampled = Vec::with_capacity(columns.cells.len() * rows.cells.len());
    for row in &rows.cells {
        for column in &columns.cells {
            sampled.push(match (row, column) {
                (Some(row), Some(column)) => counts[row * width + column],
                _ => 0,
            });
        }
    }
    let bounds = BoxRect {
        x: columns.from,
        y: rows.from,
        width: columns.to - columns.from,
        height: rows.to - rows.from,
    };
    let png = density_png(pixel_width, pixel_height, &sampled, max_count)?;
    Some(Node::Primitive(Primitive {
        shape: Shape::Image(ImageItem {
            bounds,
            png,
            pixel_width,
            pixel_height,
        }),
        paint: Paint::fill(INK),
        label: None,
        mark: None,
    }))
}

/// Along one axis of a density image: the grid cell each pixel of the image shows (`None`:
/// no cell, transparent), in screen order (left to right, top to bottom), and the screen span
/// the pixels cover.
struct AxisSamples {
    cells: Vec<Option<usize>>,
    from: f64,
    to: f64,
}

/// Image pixels at most along one axis: a plot this long is past any frame markwell draws.
const MAX_RESAMPLED_PIXELS: f64 = 4096.0;

/// The samples of one axis of a density image (see [`density_image`]): `cells` cells over
/// `domain` in the grid units of `spacing`, drawn by `scale` into the plot's `edges` (screen,
/// low to high). `vertical`: the cells are counted from the top (the largest value) and screen
/// positions grow downward. `None` when no cell meets the plot.
fn axis_samples(
    (domain, cells, spacing): ((f64, f64), usize, Spacing),
    scale: &ContinuousScale,
    edges: (f64, f64),
    vertical: bool,
) -> Option<AxisSamples> {
    let units = |value: f64| to_grid_units(spacing, value);
    let screen = |units: f64| scale.map(from_grid_units(spacing, units));
    let same_spacing = match scale.transform {
        Transform::Even | Transform::Calendar => spacing == Spacing::Even,
        Transform::Logarithmic => spacing == Spacing::Logarithmic,
        Transform::SquareRoot => spacing == Spacing::SquareRoot,
    };
    let ends = screen(domain.0).zip(screen(domain.1));
    // screen positions grow along x and shrink along y as values grow, unless flipped
    let usual_way = ends.is_some_and(|(low, high)| if vertical { low > high } else { low < high });
    if same_spacing && usual_way {
        let edge_units = scale
            .invert(edges.0)
            .and_then(units)
            .zip(scale.invert(edges.1).and_then(units));
        let (kept, span) = cells_within(domain, cells, edge_units)?;
        let screen_low = screen(span.0)?;
        let screen_high = screen(span.1)?;
        let cells = if vertical {
            (cells - kept.end..cells - kept.start).map(Some).collect()
        } else {
            kept.map(Some).collect()
        };
        return Some(AxisSamples {
            cells,
            from: screen_low.min(screen_high),
            to: screen_low.max(screen_high),
        });
    }
    let length = edges.1 - edges.0;
    let size = (domain.1 - domain.0) / cells as f64;
    if !(length > 0.0 && length.is_finite() && size > 0.0 && size.is_finite()) {
        return None;
    }
    let pixels = length.ceil().clamp(1.0, MAX_RESAMPLED_PIXELS) as usize;
    let step = length / pixels as f64;
    let samples: Vec<Option<usize>> = (0..pixels)
        .map(|pixel| {
            let value = scale.invert(edges.0 + (pixel as f64 + 0.5) * step)?;
            let cell = ((units(value)? - domain.0) / size).floor();
            if !(cell >= 0.0 && cell < cells as f64) {
                return None;
            }
            let cell = cell as usize;
            Some(if vertical { cells - 1 - cell } else { cell })
        })
        .collect();
    if samples.iter().all(Option::is_none) {
        return None;
    }
    Some(AxisSamples {
        cells: samples,
        from: edges.0,
        to: edges.1,
    })
}

/// The cells along one axis (`cells` of them over `domain`) that meet the data values between
/// the two `edges` (either way round; `None`: all of them), and the values their span covers.
/// `None` when no cell meets them.
fn cells_within(
    domain: (f64, f64),
    cells: usize,
    edges: Option<(f64, f64)>,
) -> Option<(std::ops::Range<usize>, (f64, f64))> {
    let size = (domain.1 - domain.0) / cells as f64;
    let Some((a, b)) = edges.filter(|_| size > 0.0 && size.is_finite()) else {
        return Some((0..cells, domain));
    };
    let (low, high) = (a.min(b), a.max(b));
    if !(low.is_finite() && high.is_finite()) {
        return Some((0..cells, domain));
    }
    let first = ((low - domain.0) / size).floor().clamp(0.0, cells as f64) as usize;
    let end = ((high - domain.0) / size).ceil().clamp(0.0, cells as f64) as usize;
    if first >= end {
        return None;
    }
    // the grid's own ends where a side is not cut, so an uncut grid is drawn as before
    let from = if first == 0 {
        domain.0
    } else {
        domain.0 + first as f64 * size
    };
    let to = if end == cells {
        domain.1
    } else {
        domain.0 + end as f64 * size
    };
    Some((first..end, (from, to)))
}

/// One panel's counts (`width * height`, row 0 at the top) as an RGBA PNG: empty cells
/// transparent, counts on the ramp by the logarithm of the count over that of `max_count`, the
/// largest count of every panel (common practice for density plots, so single points still
/// show).
pub fn density_png(width: u32, height: u32, counts: &[u32], max_count: u32) -> Option<Vec<u8>> {
    let scale = (1.0 + f64::from(max_count)).ln().max(1e-9);
    let mut pixels = Vec::with_capacity(counts.len() * 4);
    let table: Vec<[u8; 3]> = (0..=255)
        .map(|step| {
            let colour = ramp_colour(step as f64 / 255.0);
            [colour.red, colour.green, colour.blue]
        })
        .collect();
    for count in counts {
        if *count == 0 {
            pixels.extend_from_slice(&[0, 0, 0, 0]);
        } else {
            let t = (1.0 + f64::from(*count)).ln() / scale;
            let step = ((0.15 + 0.85 * t) * 255.0).round().clamp(0.0, 255.0) as usize;
            let [red, green, blue] = table[step];
            pixels.extend_from_slice(&[red, green, blue, 255]);
        }
    }
    let size = resvg::tiny_skia::IntSize::from_wh(width, height)?;
    let pixmap = resvg::tiny_skia::Pixmap::from_vec(pixels, size)?;
    pixmap.encode_png().ok()
}
