//! Legends for colour (categories and ramps), size, shape, texture and tilt channels, and for a
//! density grid,
//! and their arrangement inside the frame (`plan_legends`): one column at the right, more
//! columns, rows below the plots, and as a last resort fewer entries; what is left out is said
//! in a note.

use super::texture::{texture_legend, tilt_legend, tilted_stroke, DASHES, HATCHES};
use super::*;
use crate::knowledge::perceived::mark_shows;

// ---------------------------------------------------------------------------------------------
// Legends

#[derive(Clone, Debug)]
pub(super) struct LegendSpec {
    channel: Channel,
    title: String,
    /// The entries drawn, without the closing "+N more" line.
    entries: Vec<LegendEntry>,
    /// Entries left out (said by a closing "+N more" line).
    hidden: usize,
    /// The entries are values sampled from a continuous scale (a ramp, sizes, counts): when
    /// there is no room for all, fewer are drawn, the two ends kept, with no "+N more" line.
    sampled: bool,
    /// The widest entry line and the title's width, measured once (`measured`).
    entry_width: f64,
    title_width: f64,
}

const SWATCH: f64 = 11.0;
/// The length of the stroke that shows a dash pattern in a legend: long enough for two
/// repeats of the longest pattern at the legend's stroke width.
const DASH_KEY_LENGTH: f64 = 24.0;
/// Entries one legend lists at most; past it the last says how many more there are.
pub const MAX_LEGEND_ENTRIES: usize = 16;
const LEGEND_ROW: f64 = 17.0;
/// Legends drawn at most; the others are left out with a note (markwell's choice: past a
/// dozen, a reader cannot hold them apart).
pub const MAX_LEGENDS: usize = 12;
/// The widest a legend's title or entry column is drawn (pixels).
const MAX_LEGEND_WIDTH: f64 = 220.0;
/// Gap between a legend's title and its first entry.
const TITLE_GAP: f64 = 4.0;
/// Gap between two entry columns of one legend.
const ENTRY_COLUMN_GAP: f64 = 12.0;
/// Gap between two legends stacked in one column, and between two rows of legends below.
pub(super) const LEGEND_GAP_DOWN: f64 = 12.0;
/// Gap between two columns of legends at the right, and between two legends side by side below.
pub(super) const LEGEND_GAP_ACROSS: f64 = 16.0;

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
                            glyph: None,
                        })
                        .collect(),
                    ColourScale::Ramp { low, high, .. } => legend_values(*low, *high)
                        .into_iter()
                        .map(|(value, label)| LegendEntry {
                            label,
                            colour: Some(scale.ramp_at(value).to_hex()),
                            symbol: None,
                            radius: SWATCH / 2.0,
                            glyph: None,
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
                        glyph: None,
                    })
                    .collect()
            } else if info.channel == Channel::Texture && mark_shows(layer.mark, Channel::Texture) {
                let strokes = matches!(layer.mark, Mark::Line | Mark::Segment);
                texture_legend(info)
                    .into_iter()
                    .map(|(label, index)| LegendEntry {
                        label: shorten_label(&label),
                        colour: None,
                        symbol: None,
                        radius: SWATCH / 2.0,
                        glyph: Some(if strokes {
                            LegendGlyph::Dash(index)
                        } else {
                            LegendGlyph::Hatch(HATCHES[index % HATCHES.len()])
                        }),
                    })
                    .collect()
            } else if info.channel == Channel::Tilt && mark_shows(layer.mark, Channel::Tilt) {
                let samples = match info.domain {
                    Domain::Numeric { min, max } => legend_values(min, max),
                    _ => Vec::new(),
                };
                tilt_legend(info, samples)
                    .into_iter()
                    .map(|(label, degrees)| LegendEntry {
                        label: shorten_label(&label),
                        colour: None,
                        symbol: None,
                        radius: SWATCH / 2.0,
                        glyph: Some(LegendGlyph::Tilt(degrees)),
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
                        glyph: None,
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
            let sampled = !matches!(
                (&info.channel, &info.domain),
                (Channel::Shape, _) | (_, Domain::Categories(_))
            );
            let mut entries = entries;
            let mut hidden = 0;
            if entries.len() > MAX_LEGEND_ENTRIES {
                hidden = entries.len() - (MAX_LEGEND_ENTRIES - 1);
                entries.truncate(MAX_LEGEND_ENTRIES - 1);
            }
            specs.push(
                LegendSpec {
                    channel: info.channel,
                    title: info.title.clone(),
                    entries,
                    hidden,
                    sampled,
                    entry_width: 0.0,
                    title_width: 0.0,
                }
                .measured(),
            );
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
                    glyph: None,
                });
            }
            if !seen.contains(&max) {
                entries.push(LegendEntry {
                    label: format_number(f64::from(max)),
                    colour: Some(ramp_colour(1.0).to_hex()),
                    symbol: None,
                    radius: SWATCH / 2.0,
                    glyph: None,
                });
            }
            specs.push(
                LegendSpec {
                    channel: Channel::Luminance,
                    title: "rows per cell".to_string(),
                    entries,
                    hidden: 0,
                    sampled: true,
                    entry_width: 0.0,
                    title_width: 0.0,
                }
                .measured(),
            );
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

impl LegendSpec {
    /// The lines drawn: the entries, then "+N more" when some are left out.
    fn lines(&self) -> Vec<LegendEntry> {
        let mut lines = self.entries.clone();
        if self.hidden > 0 {
            lines.push(LegendEntry {
                label: format!("+{} more", self.hidden),
                colour: None,
                symbol: None,
                radius: SWATCH / 2.0,
                glyph: None,
            });
        }
        lines
    }

    fn line_count(&self) -> usize {
        self.entries.len() + usize::from(self.hidden > 0)
    }

    fn mark_room(&self) -> f64 {
        self.entries
            .iter()
            .map(|entry| match entry.glyph {
                Some(LegendGlyph::Dash(_)) => DASH_KEY_LENGTH,
                _ => entry.radius * 2.0,
            })
            .fold(SWATCH, f64::max)
    }

    fn measured(mut self) -> LegendSpec {
        let mark_room = self.mark_room();
        self.entry_width = self
            .lines()
            .iter()
            .map(|entry| mark_room + 6.0 + text_width(&entry.label, LEGEND_SIZE))
            .fold(0.0, f64::max)
            .min(MAX_LEGEND_WIDTH);
        self.title_width = text_width(&self.title, LEGEND_SIZE).min(MAX_LEGEND_WIDTH);
        self
    }

    fn entry_width(&self) -> f64 {
        self.entry_width
    }

    fn title_height() -> f64 {
        line_height(LEGEND_SIZE) + TITLE_GAP
    }

    fn row_height(entry: &LegendEntry) -> f64 {
        LEGEND_ROW.max(entry.radius * 2.0 + 4.0)
    }

    /// The lines of each entry column when the lines are set in `columns` columns, top to
    /// bottom and then left to right.
    fn column_lines(&self, columns: usize) -> Vec<Vec<LegendEntry>> {
        let lines = self.lines();
        let per_column = lines.len().div_ceil(columns.max(1)).max(1);
        lines
            .chunks(per_column)
            .map(|chunk| chunk.to_vec())
            .collect()
    }

    /// Width and height of the legend with its lines in `columns` columns.
    fn size(&self, columns: usize) -> (f64, f64) {
        let mut rows: Vec<f64> = self.entries.iter().map(Self::row_height).collect();
        if self.hidden > 0 {
            rows.push(LEGEND_ROW);
        }
        let per_column = rows.len().div_ceil(columns.max(1)).max(1);
        let count = rows.len().div_ceil(per_column).max(1) as f64;
        let entries_width = count * self.entry_width() + (count - 1.0) * ENTRY_COLUMN_GAP;
        let width = self.title_width.max(entries_width);
        let tallest = rows
            .chunks(per_column)
            .map(|column| column.iter().sum::<f64>())
            .fold(0.0, f64::max);
        (width, Self::title_height() + tallest)
    }

    /// The fewest entry columns that keep the legend within `height`.
    fn columns_within_height(&self, height: f64) -> Option<usize> {
        (1..=self.line_count().max(1)).find(|&columns| self.size(columns).1 <= height + 1e-9)
    }

    /// The most entry columns that keep the legend within `width` (at most one line each).
    fn columns_within_width(&self, width: f64) -> Option<usize> {
        (1..=self.line_count().max(1))
            .rev()
            .find(|&columns| self.size(columns).0 <= width + 1e-9)
    }

    /// The legend with at most `cap` lines: a list keeps its first entries and says how many
    /// more there are; sampled values keep both ends and an even spread between them.
    fn capped(&self, cap: usize) -> LegendSpec {
        let cap = cap.max(1);
        let mut capped = self.clone();
        if self.line_count() <= cap {
            return capped;
        }
        if self.sampled && self.hidden == 0 {
            let count = self.entries.len();
            capped.entries = if cap == 1 {
                vec![self.entries[count - 1].clone()]
            } else {
                let mut kept: Vec<usize> = (0..cap)
                    .map(|i| ((i * (count - 1)) as f64 / (cap - 1) as f64).round() as usize)
                    .collect();
                kept.dedup();
                kept.iter().map(|&i| self.entries[i].clone()).collect()
            };
        } else {
            let keep = cap - 1;
            capped.hidden = self.hidden + (self.entries.len() - keep);
            capped.entries.truncate(keep);
        }
        capped.measured()
    }

    /// Entries of the legend's scale or list that the drawing leaves out.
    fn shown_of_total(&self) -> (usize, usize) {
        (self.entries.len(), self.entries.len() + self.hidden)
    }
}

/// Where the legends go.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) enum LegendSide {
    /// In one or more columns right of the plots.
    Right,
    /// In rows under the plots and the x axis title.
    Below,
}

/// A legend with its place inside the legends' block and its entry columns.
pub(super) struct PlacedLegend {
    spec: LegendSpec,
    offset: Point,
    columns: usize,
}

/// The legends of a chart, arranged: the side they take and the size of their block.
pub(super) struct LegendPlan {
    pub(super) side: LegendSide,
    pub(super) placed: Vec<PlacedLegend>,
    pub(super) width: f64,
    pub(super) height: f64,
    /// What was left out, for the scene's notes.
    pub(super) notes: Vec<String>,
}

/// The room the legends may take.
pub(super) struct LegendRoom {
    /// Height of a column at the right (the frame below the title).
    pub(super) right_height: f64,
    /// Width legends may take at the right with the plots kept at their smallest width.
    pub(super) right_width: f64,
    /// Width of a row below the plots.
    pub(super) below_width: f64,
    /// Height legends may take below with the plots kept at their smallest height.
    pub(super) below_height: f64,
    /// The same two when the plots keep only their last-resort size.
    pub(super) right_width_last_resort: f64,
    pub(super) below_height_last_resort: f64,
}

/// Legends in columns at the right, each at most `height` tall: in order, a column is filled
/// before the next starts; a legend taller than `height` sets its entries in columns.
fn pack_right(specs: &[LegendSpec], height: f64) -> Option<(Vec<PlacedLegend>, f64, f64)> {
    let mut placed = Vec::new();
    let (mut column_x, mut column_width, mut used) = (0.0, 0.0f64, 0.0);
    let mut tallest = 0.0f64;
    for spec in specs {
        let columns = spec.columns_within_height(height)?;
        let (legend_width, legend_height) = spec.size(columns);
        let mut y = if placed.is_empty() {
            0.0
        } else {
            used + LEGEND_GAP_DOWN
        };
        if !placed.is_empty() && y + legend_height > height + 1e-9 {
            column_x += column_width + LEGEND_GAP_ACROSS;
            column_width = 0.0;
            y = 0.0;
        }
        placed.push(PlacedLegend {
            spec: spec.clone(),
            offset: Point { x: column_x, y },
            columns,
        });
        used = y + legend_height;
        tallest = tallest.max(used);
        column_width = column_width.max(legend_width);
    }
    Some((placed, column_x + column_width, tallest))
}

/// Legends in rows below the plots, each row at most `width` wide: each legend sets its
/// entries in as many columns as fit, so it is as short as it can be.
fn pack_below(specs: &[LegendSpec], width: f64) -> Option<(Vec<PlacedLegend>, f64, f64)> {
    let mut placed = Vec::new();
    let (mut x, mut y, mut row_height) = (0.0, 0.0, 0.0f64);
    let mut widest = 0.0f64;
    for spec in specs {
        let columns = spec.columns_within_width(width)?;
        let (legend_width, legend_height) = spec.size(columns);
        if x > 0.0 && x + legend_width > width + 1e-9 {
            y += row_height + LEGEND_GAP_DOWN;
            x = 0.0;
            row_height = 0.0;
        }
        placed.push(PlacedLegend {
            spec: spec.clone(),
            offset: Point { x, y },
            columns,
        });
        widest = widest.max(x + legend_width);
        x += legend_width + LEGEND_GAP_ACROSS;
        row_height = row_height.max(legend_height);
    }
    Some((placed, widest, y + row_height))
}

fn fits_right(specs: &[LegendSpec], room: &LegendRoom, width: f64) -> Option<LegendPlan> {
    let (placed, block_width, block_height) = pack_right(specs, room.right_height)?;
    (block_width <= width + 1e-9).then_some(LegendPlan {
        side: LegendSide::Right,
        placed,
        width: block_width,
        height: block_height,
        notes: Vec::new(),
    })
}

fn fits_below(specs: &[LegendSpec], room: &LegendRoom, height: f64) -> Option<LegendPlan> {
    let (placed, block_width, block_height) = pack_below(specs, room.below_width)?;
    (block_height <= height + 1e-9).then_some(LegendPlan {
        side: LegendSide::Below,
        placed,
        width: block_width,
        height: block_height,
        notes: Vec::new(),
    })
}

/// Arrange the legends inside the frame. In order of preference: one column at the right (or
/// more columns, when one is taller than the frame), while the plots keep their smallest width;
/// rows below the plots, while they keep their smallest height; and as a last resort, with the
/// plots at their last-resort size, fewer entries per legend (the same most for every legend)
/// until they fit, then fewer legends. What is left out is said in the plan's notes.
pub(super) fn plan_legends(specs: Vec<LegendSpec>, room: &LegendRoom) -> LegendPlan {
    let empty = LegendPlan {
        side: LegendSide::Right,
        placed: Vec::new(),
        width: 0.0,
        height: 0.0,
        notes: Vec::new(),
    };
    if specs.is_empty() {
        return empty;
    }
    let mut specs = specs;
    let mut notes = Vec::new();
    if specs.len() > MAX_LEGENDS {
        notes.push(format!(
            "{} legends are left out: markwell draws {MAX_LEGENDS} at most",
            specs.len() - MAX_LEGENDS
        ));
        specs.truncate(MAX_LEGENDS);
    }
    let mut plan = plan_some_legends(&specs, room);
    notes.append(&mut plan.notes);
    plan.notes = notes;
    plan
}

fn plan_some_legends(specs: &[LegendSpec], room: &LegendRoom) -> LegendPlan {
    let empty = LegendPlan {
        side: LegendSide::Right,
        placed: Vec::new(),
        width: 0.0,
        height: 0.0,
        notes: Vec::new(),
    };
    if let Some(plan) = fits_right(specs, room, room.right_width)
        .or_else(|| fits_below(specs, room, room.below_height))
    {
        return plan;
    }
    // the legend with the most lines gives one up (the later one of a tie) until they fit;
    // when one line each is still too much, the last legends are left out
    let mut caps: Vec<usize> = specs.iter().map(LegendSpec::line_count).collect();
    loop {
        let capped: Vec<LegendSpec> = specs
            .iter()
            .zip(&caps)
            .map(|(spec, cap)| spec.capped(*cap))
            .collect();
        let plan = fits_right(&capped, room, room.right_width_last_resort)
            .or_else(|| fits_below(&capped, room, room.below_height_last_resort));
        if let Some(mut plan) = plan {
            for (original, drawn) in specs.iter().zip(&capped) {
                let (shown, _) = drawn.shown_of_total();
                let (all, total) = original.shown_of_total();
                if shown == 0 && all > 0 {
                    plan.notes.push(format!(
                        "the legend `{}` shows only how many entries it has ({total}): the frame is too small for them",
                        original.title
                    ));
                } else if shown < all {
                    plan.notes.push(format!(
                        "the legend `{}` shows {shown} of its {total} entries: the frame is too small for the rest",
                        original.title
                    ));
                }
            }
            for original in &specs[caps.len()..] {
                plan.notes.push(format!(
                    "the legend `{}` is left out: the frame is too small for it",
                    original.title
                ));
            }
            return plan;
        }
        match caps
            .iter()
            .enumerate()
            .filter(|(_, cap)| **cap > 1)
            .max_by_key(|(index, cap)| (**cap, *index))
        {
            Some((largest, _)) => caps[largest] -= 1,
            None if caps.len() > 1 => {
                caps.pop();
            }
            None => break,
        }
    }
    let mut plan = empty;
    for original in specs {
        plan.notes.push(format!(
            "the legend `{}` is left out: the frame is too small for it",
            original.title
        ));
    }
    plan
}

/// The key of a texture or tilt legend entry, centred on `centre`.
fn glyph_key(glyph: &LegendGlyph, centre: Point) -> Node {
    match glyph {
        LegendGlyph::Hatch(hatch) => {
            let mut paint = Paint::fill(MUTED_INK);
            paint.hatch = Some(*hatch);
            paint.stroke = Some(MUTED_INK.to_string());
            paint.stroke_width = 0.8;
            plain(
                Shape::Rect(BoxRect {
                    x: centre.x - SWATCH / 2.0,
                    y: centre.y - SWATCH / 2.0,
                    width: SWATCH,
                    height: SWATCH,
                }),
                paint,
            )
        }
        LegendGlyph::Dash(index) => {
            let width = 2.0;
            let mut paint = Paint::stroke(INK, width);
            paint.dash = DASHES[index % DASHES.len()]
                .iter()
                .map(|length| length * width)
                .collect();
            plain(
                Shape::Line {
                    from: Point {
                        x: centre.x - DASH_KEY_LENGTH / 2.0,
                        y: centre.y,
                    },
                    to: Point {
                        x: centre.x + DASH_KEY_LENGTH / 2.0,
                        y: centre.y,
                    },
                },
                paint,
            )
        }
        LegendGlyph::Tilt(degrees) => {
            let (from, to) = tilted_stroke(centre, SWATCH * 0.6, *degrees);
            plain(Shape::Line { from, to }, Paint::stroke(INK, 2.0))
        }
    }
}

pub(super) fn legend_group(placed: PlacedLegend, origin: Point) -> (Group, LegendLayout) {
    let spec = placed.spec;
    let x = origin.x + placed.offset.x;
    let top = origin.y + placed.offset.y;
    let (width, height) = spec.size(placed.columns);
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
    let mark_room = spec.mark_room();
    let entry_width = spec.entry_width();
    let lines = spec.lines();
    for (column_index, column) in spec.column_lines(placed.columns).iter().enumerate() {
        let column_x = x + column_index as f64 * (entry_width + ENTRY_COLUMN_GAP);
        let mut y = top + LegendSpec::title_height();
        for entry in column {
            let row = LegendSpec::row_height(entry);
            let centre = Point {
                x: column_x + mark_room / 2.0,
                y: y + row / 2.0,
            };
            if let Some(glyph) = &entry.glyph {
                children.push(glyph_key(glyph, centre));
            } else {
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
            }
            children.push(text_node(text_item(
                Point {
                    x: column_x + mark_room + 6.0,
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
    }
    let bounds = BoxRect {
        x,
        y: top,
        width,
        height,
    };
    let label = format!(
        "legend, {}: {}",
        spec.title,
        lines
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
            entries: lines,
        },
    )
}
