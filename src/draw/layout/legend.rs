//! Legends for colour (categories and ramps), size and shape channels, and for a density grid.

use super::*;

// ---------------------------------------------------------------------------------------------
// Legends

pub(super) struct LegendSpec {
    channel: Channel,
    title: String,
    entries: Vec<LegendEntry>,
    pub(super) width: f64,
}

const SWATCH: f64 = 11.0;
/// Entries one legend lists at most; past it the last says how many more there are.
pub const MAX_LEGEND_ENTRIES: usize = 16;
const LEGEND_ROW: f64 = 17.0;

pub(super) fn legend_channels(chart: &EvaluatedChart, background: Srgb8) -> Vec<LegendSpec> {
    let mut specs: Vec<LegendSpec> = Vec::new();
    for layer in &chart.layers {
        for info in &layer.channels {
            let entries: Vec<LegendEntry> = if info.channel.is_colour() {
                let Some(scale) = ColourScale::new(info, background) else {
                    continue;
                };
                match &scale {
                    ColourScale::Categories {
                        categories,
                        colours,
                    } => categories
                        .iter()
                        .zip(colours)
                        .map(|(category, colour)| LegendEntry {
                            label: shorten_label(category),
                            colour: Some(colour.clone()),
                            symbol: None,
                            radius: SWATCH / 2.0,
                        })
                        .collect(),
                    ColourScale::Ramp { low, high, .. } => legend_values(*low, *high)
                        .into_iter()
                        .map(|(value, label)| LegendEntry {
                            label,
                            colour: Some(scale.ramp_at(value).to_hex()),
                            symbol: None,
                            radius: SWATCH / 2.0,
                        })
                        .collect(),
                }
            } else if info.channel == Channel::Area && layer.mark == Mark::Point {
                let Domain::Numeric { min, max } = info.domain else {
                    continue;
                };
                let reach = min.abs().max(max.abs());
                if reach <= 0.0 {
                    continue;
                }
                legend_values(min.max(0.0), max)
                    .into_iter()
                    .filter(|(value, _)| *value > 0.0)
                    .map(|(value, label)| LegendEntry {
                        label,
                        colour: None,
                        symbol: Some(Symbol::Circle),
                        radius: symbol_radius(value, reach),
                    })
                    .collect()
            } else if info.channel == Channel::Shape {
                let Domain::Categories(categories) = &info.domain else {
                    continue;
                };
                categories
                    .iter()
                    .enumerate()
                    .map(|(index, category)| LegendEntry {
                        label: shorten_label(category),
                        colour: None,
                        symbol: Some(SYMBOLS[index % SYMBOLS.len()]),
                        radius: DEFAULT_POINT_RADIUS + 1.0,
                    })
                    .collect()
            } else {
                continue;
            };
            if entries.is_empty()
                || specs
                    .iter()
                    .any(|spec| spec.channel == info.channel && spec.title == info.title)
            {
                continue;
            }
            let mut entries = entries;
            if entries.len() > MAX_LEGEND_ENTRIES {
                let hidden = entries.len() - (MAX_LEGEND_ENTRIES - 1);
                entries.truncate(MAX_LEGEND_ENTRIES - 1);
                entries.push(LegendEntry {
                    label: format!("and {hidden} more"),
                    colour: None,
                    symbol: None,
                    radius: SWATCH / 2.0,
                });
            }
            let mark_room = entries
                .iter()
                .map(|entry| entry.radius * 2.0)
                .fold(SWATCH, f64::max);
            let width = entries
                .iter()
                .map(|entry| mark_room + 6.0 + text_width(&entry.label, LEGEND_SIZE))
                .fold(text_width(&info.title, LEGEND_SIZE), f64::max)
                .min(220.0);
            specs.push(LegendSpec {
                channel: info.channel,
                title: info.title.clone(),
                entries,
                width,
            });
        }
    }
    if let Some(layer) = chart.layers.iter().find(|layer| layer.density.is_some()) {
        let max = layer
            .density
            .as_ref()
            .map(|grid| grid.max_count())
            .unwrap_or(0);
        if max > 0 {
            let scale = (1.0 + f64::from(max)).ln();
            let mut entries = Vec::new();
            let mut seen = Vec::new();
            for count in [1u32, 10, 100, 1_000, 10_000, 100_000, 1_000_000] {
                if count > max || seen.contains(&count) {
                    continue;
                }
                seen.push(count);
                let t = (1.0 + f64::from(count)).ln() / scale;
                entries.push(LegendEntry {
                    label: format_number(f64::from(count)),
                    colour: Some(ramp_colour(0.15 + 0.85 * t).to_hex()),
                    symbol: None,
                    radius: SWATCH / 2.0,
                });
            }
            if !seen.contains(&max) {
                entries.push(LegendEntry {
                    label: format_number(f64::from(max)),
                    colour: Some(ramp_colour(1.0).to_hex()),
                    symbol: None,
                    radius: SWATCH / 2.0,
                });
            }
            let title = "rows per cell".to_string();
            let width = text_width(&title, LEGEND_SIZE).max(SWATCH + 6.0 + 50.0);
            specs.push(LegendSpec {
                channel: Channel::Luminance,
                title,
                entries,
                width,
            });
        }
    }
    specs
}

fn legend_values(low: f64, high: f64) -> Vec<(f64, String)> {
    match extended_ticks(
        low,
        high,
        TickOptions {
            target_count: 5,
            loose: false,
        },
    ) {
        Ok(ticks) => ticks
            .values
            .into_iter()
            .zip(ticks.labels)
            .filter(|(value, _)| {
                *value >= low - 1e-9 * (high - low).abs()
                    && *value <= high + 1e-9 * (high - low).abs()
            })
            .collect(),
        Err(_) => vec![(low, format_number(low))],
    }
}

pub(super) fn legend_group(spec: LegendSpec, x: f64, top: f64) -> (Group, LegendLayout) {
    let mut children = Vec::new();
    let title_item = text_item(
        Point {
            x,
            y: top + ascent(LEGEND_SIZE),
        },
        Text {
            content: &spec.title,
            size: LEGEND_SIZE,
            anchor: Anchor::Start,
            rotation: 0.0,
            colour: INK,
        },
    );
    children.push(text_node(title_item));
    let mark_room = spec
        .entries
        .iter()
        .map(|entry| entry.radius * 2.0)
        .fold(SWATCH, f64::max);
    let mut y = top + line_height(LEGEND_SIZE) + 4.0;
    for entry in &spec.entries {
        let row = LEGEND_ROW.max(entry.radius * 2.0 + 4.0);
        let centre = Point {
            x: x + mark_room / 2.0,
            y: y + row / 2.0,
        };
        match (entry.symbol, &entry.colour) {
            (None, Some(colour)) => children.push(plain(
                Shape::Rect(BoxRect {
                    x: centre.x - SWATCH / 2.0,
                    y: centre.y - SWATCH / 2.0,
                    width: SWATCH,
                    height: SWATCH,
                }),
                Paint::fill(colour),
            )),
            (Some(symbol), _) => {
                let paint = Paint::stroke(INK, 1.0);
                let shape = if symbol == Symbol::Circle {
                    Shape::Circle {
                        centre,
                        radius: entry.radius,
                    }
                } else {
                    Shape::Symbol {
                        symbol,
                        centre,
                        radius: entry.radius,
                    }
                };
                children.push(plain(shape, paint));
            }
            (None, None) => {}
        }
        children.push(text_node(text_item(
            Point {
                x: x + mark_room + 6.0,
                y: centre.y + (ascent(LEGEND_SIZE) - descent(LEGEND_SIZE)) / 2.0,
            },
            Text {
                content: &entry.label,
                size: LEGEND_SIZE,
                anchor: Anchor::Start,
                rotation: 0.0,
                colour: MUTED_INK,
            },
        )));
        y += row;
    }
    let bounds = BoxRect {
        x,
        y: top,
        width: spec.width,
        height: y - top,
    };
    let label = format!(
        "legend, {}: {}",
        spec.title,
        spec.entries
            .iter()
            .map(|entry| entry.label.as_str())
            .collect::<Vec<_>>()
            .join(", ")
    );
    (
        Group {
            role: Role::Legend,
            label: Some(label),
            children,
        },
        LegendLayout {
            channel: spec.channel,
            title: spec.title,
            bounds,
            entries: spec.entries,
        },
    )
}
