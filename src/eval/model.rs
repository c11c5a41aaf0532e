//! What a spec draws, before layout: the contract between the evaluation (which fills it from the
//! rows) and the layout and rendering (which place and draw it), and the rules that judge what is
//! drawn. Pure data; no IO.

use std::sync::Arc;

use crate::spec::model::{Arrange, AttributeKind, Channel, Mark, Spacing, Summary};

/// One drawn value on one channel.
#[derive(Clone, Debug, PartialEq)]
pub enum Datum {
    /// Missing in the data (empty, `NA`, ...) or not readable as the channel's kind.
    Missing,
    Number(f64),
    /// A time, in seconds since 1970-01-01T00:00:00Z (fractions allowed).
    Time(f64),
    /// A category or level (also the label of a bin, e.g. `10–20`).
    Text(Arc<str>),
}

impl Datum {
    /// The number behind a `Number` or `Time`.
    pub fn as_f64(&self) -> Option<f64> {
        match self {
            Datum::Number(value) | Datum::Time(value) => Some(*value),
            _ => None,
        }
    }

    pub fn as_text(&self) -> Option<&str> {
        match self {
            Datum::Text(text) => Some(text),
            _ => None,
        }
    }
}

/// The values a channel takes across every mark of a layer (all panels), as the scale needs them.
#[derive(Clone, Debug, PartialEq)]
pub enum Domain {
    /// Smallest and largest drawn number (for stacked layers: of the stacked ends, and 0).
    Numeric { min: f64, max: f64 },
    /// Earliest and latest time, seconds since the epoch.
    Time { min: f64, max: f64 },
    /// Categories in the order they are drawn (declared `levels`, `order`, or first seen).
    Categories(Vec<String>),
    /// Nothing drawable (no rows, or every value missing).
    Empty,
}

/// One channel of a layer as it is drawn.
#[derive(Clone, Debug, PartialEq)]
pub struct ChannelInfo {
    pub channel: Channel,
    /// The column, `None` for a bare `count`.
    pub column: Option<String>,
    pub summary: Option<Summary>,
    /// `bins` asked for (the drawn values are then the bins' labels, `kind` Ordered).
    pub bins: Option<u32>,
    /// The kind of the drawn values (after summary and bins).
    pub kind: AttributeKind,
    /// Axis or legend title: the column's `label`, else e.g. `sum of loaves`; with the unit.
    pub title: String,
    pub domain: Domain,
    /// From `mapping`: spacing, `extent` (low, high), whether it starts at zero, flipped.
    pub spacing: Option<Spacing>,
    pub extent: Option<(f64, f64)>,
    /// `mapping.from` is `zero` (or the default for a bar/area value axis).
    pub from_zero: bool,
    pub flip: bool,
    /// The spec's `palette` for colour channels.
    pub palette: Option<Vec<String>>,
}

/// One drawn mark: a bar, a point, a wedge, a cell, a label, or one vertex of a line/area series.
#[derive(Clone, Debug, PartialEq)]
pub struct DrawnMark {
    /// Index into `EvaluatedChart::panels`.
    pub panel: u32,
    /// One value per entry of `EvaluatedLayer::channels`, in the same order.
    pub values: Vec<Datum>,
    /// For stacked and shared (100 %) arrangements, the start of this mark on the value channel
    /// (the end is its value in `values`); `None` when the mark starts at the axis baseline.
    pub stack_start: Option<f64>,
    /// The series (colour group) within the panel: lines and areas join the vertices of one
    /// series in order of the position channel; side-by-side bars are offset by it.
    pub series: u32,
    /// Rows of the data that this mark stands for (1 for a mark per row).
    pub rows: u64,
}

/// How a layer that draws one mark per row is drawn past the cap on kept marks: one grid of
/// counts per panel. Every panel's grid has the same cells (the same `width`, `height` and
/// domains, so the same cell size), and drawing puts all of them on one colour scale (up to
/// [`DensityGrid::max_count`]), so that the panels can be compared.
#[derive(Clone, Debug, PartialEq)]
pub struct DensityGrid {
    /// Cells across and down; the grid spans the x and y domains.
    pub width: u32,
    pub height: u32,
    /// The panels that have rows, in the order of their index; a chart without panels has one,
    /// panel 0.
    pub panels: Vec<PanelCounts>,
    pub x_domain: (f64, f64),
    pub y_domain: (f64, f64),
    /// How the cells are spaced along x and y: even in the values (`Spacing::Even`), or even in
    /// their base-10 logarithm (`Logarithmic`) or signed square root (`SquareRoot`) for an axis
    /// drawn with that spacing, so that the cells are even on screen. The domains are in those
    /// units ([`crate::eval::density::to_grid_units`]).
    pub x_spacing: Spacing,
    pub y_spacing: Spacing,
    /// Rows not counted because a logarithmic axis cannot place their value (zero or below).
    pub unplaced: u64,
}

/// The counts of one panel's density grid.
#[derive(Clone, Debug, PartialEq)]
pub struct PanelCounts {
    /// Index into `EvaluatedChart::panels`.
    pub panel: u32,
    /// Row-major counts, `width * height` long, row 0 at the top (largest y).
    pub counts: Vec<u32>,
}

impl DensityGrid {
    /// The counts of a panel (`None`: the panel has no rows in this layer).
    pub fn counts_of(&self, panel: u32) -> Option<&[u32]> {
        self.panels
            .iter()
            .find(|counts| counts.panel == panel)
            .map(|counts| counts.counts.as_slice())
    }

    /// The largest count in any panel: the top of the colour scale every panel shares.
    pub fn max_count(&self) -> u32 {
        self.panels
            .iter()
            .flat_map(|counts| counts.counts.iter().copied())
            .max()
            .unwrap_or(0)
    }
}

#[derive(Clone, Debug, PartialEq)]
pub struct EvaluatedLayer {
    /// 0-based position in the spec's layers.
    pub index: usize,
    pub mark: Mark,
    pub arrange: Option<Arrange>,
    pub channels: Vec<ChannelInfo>,
    /// The marks drawn, grouped by panel then series, in drawing order.
    pub marks: Vec<DrawnMark>,
    /// Set when there were more rows than `EvalOptions::max_kept_marks`: the marks are then drawn
    /// as this density grid (rasterised) and `marks` holds none of them.
    pub density: Option<DensityGrid>,
    /// Rows read for this layer, and rows left out (missing values on a position channel, ...).
    pub rows_read: u64,
    pub rows_left_out: u64,
    /// How the summaries were computed when not exactly (e.g. "median by a Greenwald-Khanna
    /// sketch, rank error at most 0.1 %"), for the output to say.
    pub approximations: Vec<String>,
}

impl EvaluatedLayer {
    pub fn channel_index(&self, channel: Channel) -> Option<usize> {
        self.channels
            .iter()
            .position(|info| info.channel == channel)
    }

    pub fn channel(&self, channel: Channel) -> Option<&ChannelInfo> {
        self.channels.iter().find(|info| info.channel == channel)
    }
}

/// One panel of the grid (`panels.by`); a chart without panels has one, with `label` `None`.
#[derive(Clone, Debug, PartialEq)]
pub struct PanelInfo {
    pub label: Option<String>,
}

/// Something the output must say about what was drawn or left out.
#[derive(Clone, Debug, PartialEq)]
pub struct EvalNote {
    /// The layer concerned, when one.
    pub layer: Option<usize>,
    pub message: String,
}

/// A whole chart, evaluated.
#[derive(Clone, Debug, PartialEq)]
pub struct EvaluatedChart {
    pub title: Option<String>,
    pub description: Option<String>,
    /// `frame` size in CSS pixels, and background colour.
    pub width: f64,
    pub height: f64,
    pub background: String,
    pub panels: Vec<PanelInfo>,
    /// Layers that could be evaluated, in spec order; a layer that could not is named in `notes`.
    pub layers: Vec<EvaluatedLayer>,
    /// Evaluated from the sampled head of the data (the exact evaluation comes later).
    pub is_sample: bool,
    pub notes: Vec<EvalNote>,
    /// Layers (their index in the spec) left out because the time budget ran out while they
    /// were read; also named in `notes`.
    pub timed_out: Vec<usize>,
    /// The time budget the evaluation had, for messages.
    pub time_budget: crate::budget::TimeBudget,
}
