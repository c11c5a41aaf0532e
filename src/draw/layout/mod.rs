//! Layout: an evaluated chart becomes a scene, every primitive placed in pixels at the frame
//! size. Scales per channel (even, logarithmic, square-root, calendar, band), ticks and labels
//! (`ticks`), axes and their titles, a legend per colour, size and shape channel, the panel grid
//! (panels wrap), margins from the measured width of the labels (`text`), and the marks.
//!
//! The marks of each layer are placed in `marks`, the legends in `legend`.
//!
//! The scene is plain public data: the SVG writer only translates it, and rules and tests read
//! positions, lengths and colours from it. Pure: no IO.

mod legend;
mod marks;
pub mod texture;

use legend::{
    legend_channels, legend_group, plan_legends, LegendRoom, LegendSide, LEGEND_GAP_ACROSS,
};
use marks::{layer_group, mark_inset, symbol_radius};

pub use legend::{MAX_LEGENDS, MAX_LEGEND_ENTRIES};

use std::collections::HashMap;
use std::sync::{Mutex, OnceLock};

use crate::draw::palette::{self, DEFAULT_BACKGROUND};
use crate::draw::scale::{BandScale, ContinuousScale, ScaleTicks, Transform};
use crate::draw::text::{ascent, descent, line_height, text_width};
use crate::draw::ticks::{extended_ticks, TickOptions};
use crate::eval::model::{
    ChannelInfo, Datum, DensityGrid, Domain, DrawnMark, EvaluatedChart, EvaluatedLayer,
};
use crate::knowledge::colour::{parse_hex_colour, LinearRgb, Srgb8};
use crate::spec::model::{Arrange, AttributeKind, Channel, Mark, Spacing};

/// Font sizes in pixels (our own style).
pub const TITLE_SIZE: f64 = 16.0;
pub const AXIS_TITLE_SIZE: f64 = 12.0;
pub const TICK_LABEL_SIZE: f64 = 11.0;
pub const PANEL_LABEL_SIZE: f64 = 11.5;
pub const LEGEND_SIZE: f64 = 11.0;
pub const MARK_LABEL_SIZE: f64 = 10.5;

/// Colours of the frame furniture (our own style: warm greys on the paper background).
pub const INK: &str = "#34302a";
pub const MUTED_INK: &str = "#6f695f";
pub const GRID_COLOUR: &str = "#e7e2d6";
pub const BASELINE_COLOUR: &str = "#4d483f";
pub const STRIP_COLOUR: &str = "#efeade";

/// The outer padding of the frame, in pixels.
pub const FRAME_PADDING: f64 = 14.0;
/// Length of a tick mark, and the gap between a tick and its label.
pub const TICK_LENGTH: f64 = 4.0;
pub const TICK_LABEL_GAP: f64 = 3.0;
/// Smallest gap between neighbouring tick labels on one axis, in pixels (common practice).
pub const MIN_LABEL_GAP: f64 = 6.0;
/// The longest category label drawn before it is shortened with an ellipsis (characters).
pub const MAX_LABEL_CHARS: usize = 28;
/// The widest a point symbol of the area channel grows (radius, pixels), and the smallest.
pub const MAX_SYMBOL_RADIUS: f64 = 13.0;
pub const MIN_SYMBOL_RADIUS: f64 = 1.5;
/// Radius of a point without an area channel.
pub const DEFAULT_POINT_RADIUS: f64 = 3.5;
/// The plots keep at least this share of the frame's width beside legends at the right, and of
/// its height above legends set below; past it the legends move below (markwell's choice).
pub const MIN_PLOT_SHARE: f64 = 0.45;
/// When the legends fit neither way, the plots may shrink to this share of the frame (and
/// `MIN_PLOT_SIDE` pixels) before the legends show fewer entries (markwell's choice).
pub const LAST_RESORT_PLOT_SHARE: f64 = 0.25;
pub const MIN_PLOT_SIDE: f64 = 40.0;
/// Gap between the x axis title and legends set below the plots.
const LEGENDS_BELOW_GAP: f64 = 10.0;
/// Marks with an accessible label each, at most (past it only the layer is labelled).
pub const MAX_LABELLED_MARKS: usize = 2_000;

/// A position in pixels, origin at the top left, y downward.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Point {
    pub x: f64,
    pub y: f64,
}

/// An axis-aligned box in pixels.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BoxRect {
    pub x: f64,
    pub y: f64,
    pub width: f64,
    pub height: f64,
}

impl BoxRect {
    pub fn right(&self) -> f64 {
        self.x + self.width
    }

    pub fn bottom(&self) -> f64 {
        self.y + self.height
    }

    /// True when the two boxes share more than a hairline.
    pub fn overlaps(&self, other: &BoxRect) -> bool {
        let epsilon = 1e-6;
        self.x < other.right() - epsilon
            && other.x < self.right() - epsilon
            && self.y < other.bottom() - epsilon
            && other.y < self.bottom() - epsilon
    }
}

/// Where a text's anchor point sits along its line.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Anchor {
    Start,
    Middle,
    End,
}

/// Point symbols for the shape channel (our own set and order).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Symbol {
    Circle,
    Square,
    TriangleUp,
    Diamond,
    Plus,
    TriangleDown,
    Cross,
}

pub const SYMBOLS: [Symbol; 7] = [
    Symbol::Circle,
    Symbol::Square,
    Symbol::TriangleUp,
    Symbol::Diamond,
    Symbol::Plus,
    Symbol::TriangleDown,
    Symbol::Cross,
];

/// How a primitive is painted. Colours are `#rrggbb`.
#[derive(Clone, Debug, PartialEq)]
pub struct Paint {
    pub fill: Option<String>,
    pub fill_opacity: f64,
    pub stroke: Option<String>,
    pub stroke_width: f64,
    /// Dash and gap lengths, empty for a solid stroke.
    pub dash: Vec<f64>,
    /// A fill pattern of the `texture` channel, drawn in the `fill` colour (`None` and
    /// [`texture::Hatch::Solid`]: the plain fill).
    pub hatch: Option<texture::Hatch>,
}

impl Paint {
    pub fn fill(colour: &str) -> Paint {
        Paint {
            fill: Some(colour.to_string()),
            fill_opacity: 1.0,
            stroke: None,
            stroke_width: 0.0,
            dash: Vec::new(),
            hatch: None,
        }
    }

    pub fn stroke(colour: &str, width: f64) -> Paint {
        Paint {
            fill: None,
            fill_opacity: 1.0,
            stroke: Some(colour.to_string()),
            stroke_width: width,
            dash: Vec::new(),
            hatch: None,
        }
    }
}

/// A text on one line.
#[derive(Clone, Debug, PartialEq)]
pub struct TextItem {
    /// The anchor point; `y` is the baseline.
    pub at: Point,
    pub content: String,
    pub size: f64,
    pub anchor: Anchor,
    /// Degrees clockwise about `at`.
    pub rotation: f64,
    pub colour: String,
    /// The box the text covers, rotation applied (as an axis-aligned box).
    pub bounds: BoxRect,
}

/// A raster image (a density grid), as PNG bytes.
#[derive(Clone, Debug, PartialEq)]
pub struct ImageItem {
    pub bounds: BoxRect,
    pub png: Vec<u8>,
    pub pixel_width: u32,
    pub pixel_height: u32,
}

/// The geometry of a primitive.
#[derive(Clone, Debug, PartialEq)]
pub enum Shape {
    Rect(BoxRect),
    Line {
        from: Point,
        to: Point,
    },
    /// Connected points; `closed` for areas.
    Polyline {
        points: Vec<Point>,
        closed: bool,
    },
    Circle {
        centre: Point,
        radius: f64,
    },
    Symbol {
        symbol: Symbol,
        centre: Point,
        /// Half the symbol's width.
        radius: f64,
    },
    /// A pie slice; angles in radians clockwise from twelve o'clock.
    Wedge {
        centre: Point,
        radius: f64,
        start_angle: f64,
        end_angle: f64,
    },
    Text(TextItem),
    Image(ImageItem),
}

/// Which drawn mark a primitive stands for.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct MarkRef {
    /// Index into `EvaluatedChart::layers`.
    pub layer: usize,
    /// Index into that layer's `marks` (for a line or area: its first vertex).
    pub mark: usize,
}

#[derive(Clone, Debug, PartialEq)]
pub struct Primitive {
    pub shape: Shape,
    pub paint: Paint,
    /// What a screen reader says for it (`None`: nothing).
    pub label: Option<String>,
    pub mark: Option<MarkRef>,
}

/// What a group of primitives is.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Role {
    Title,
    Panel,
    PanelLabel,
    Grid,
    Axis,
    AxisTitle,
    Legend,
    /// The marks of one layer.
    Layer(Mark),
    Density,
}

#[derive(Clone, Debug, PartialEq)]
pub struct Group {
    pub role: Role,
    /// What a screen reader says for the group.
    pub label: Option<String>,
    pub children: Vec<Node>,
}

// Nearly every node of a scene is a primitive (the marks, ticks and labels; groups are a few
// per layer, axis and legend), so boxing the larger variant would add an allocation per mark
// and save nothing.
#[allow(clippy::large_enum_variant)]
#[derive(Clone, Debug, PartialEq)]
pub enum Node {
    Primitive(Primitive),
    Group(Group),
}

/// Which side of the plot an axis is on.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum AxisSide {
    Bottom,
    Left,
}

/// One tick of a laid-out axis.
#[derive(Clone, Debug, PartialEq)]
pub struct TickLayout {
    /// The value (numbers and Unix seconds); `None` for a category.
    pub value: Option<f64>,
    /// Pixel along the axis (x for a bottom axis, y for a left one).
    pub pixel: f64,
    pub label: String,
    /// The drawn label; `None` when it is left out to avoid overlap.
    pub label_item: Option<TextItem>,
}

impl TickLayout {
    /// The box the drawn label covers.
    pub fn label_bounds(&self) -> Option<BoxRect> {
        self.label_item.as_ref().map(|item| item.bounds)
    }
}

/// A laid-out axis, for the writers and for checks.
#[derive(Clone, Debug, PartialEq)]
pub struct AxisLayout {
    pub panel: usize,
    pub channel: Channel,
    pub side: AxisSide,
    /// The pixel extent of the axis along its direction (low, high).
    pub extent: (f64, f64),
    pub ticks: Vec<TickLayout>,
    pub title: String,
    pub transform: Option<Transform>,
}

/// A legend entry or swatch.
#[derive(Clone, Debug, PartialEq)]
pub struct LegendEntry {
    pub label: String,
    pub colour: Option<String>,
    pub symbol: Option<Symbol>,
    pub radius: f64,
    /// The key of a `texture` or `tilt` legend, drawn instead of a swatch or symbol.
    pub glyph: Option<LegendGlyph>,
}

/// The key of a `texture` or `tilt` legend entry.
#[derive(Clone, Debug, PartialEq)]
pub enum LegendGlyph {
    /// A swatch filled with this pattern.
    Hatch(texture::Hatch),
    /// A short stroke with this dash pattern (the index into [`texture::DASHES`]).
    Dash(usize),
    /// A short stroke at this many degrees counter-clockwise from horizontal.
    Tilt(f64),
}

#[derive(Clone, Debug, PartialEq)]
pub struct LegendLayout {
    pub channel: Channel,
    pub title: String,
    pub bounds: BoxRect,
    pub entries: Vec<LegendEntry>,
}

/// A panel's plot area.
#[derive(Clone, Debug, PartialEq)]
pub struct PanelLayout {
    pub index: usize,
    pub label: Option<String>,
    pub plot: BoxRect,
}

/// A chart, laid out.
#[derive(Clone, Debug, PartialEq)]
pub struct Scene {
    pub width: f64,
    pub height: f64,
    pub background: String,
    pub title: Option<String>,
    pub description: Option<String>,
    /// A plain sentence of what is drawn, for `<desc>` and screen readers.
    pub summary: String,
    /// Drawing order: later groups paint over earlier ones.
    pub groups: Vec<Group>,
    pub panels: Vec<PanelLayout>,
    pub axes: Vec<AxisLayout>,
    pub legends: Vec<LegendLayout>,
    /// What the layout left out or drew differently, for the output to say.
    pub notes: Vec<String>,
}

impl Scene {
    /// Every primitive, depth first, in drawing order.
    pub fn primitives(&self) -> Vec<&Primitive> {
        fn walk<'a>(node: &'a Node, out: &mut Vec<&'a Primitive>) {
            match node {
                Node::Primitive(primitive) => out.push(primitive),
                Node::Group(group) => group.children.iter().for_each(|child| walk(child, out)),
            }
        }
        let mut out = Vec::new();
        for group in &self.groups {
            group
                .children
                .iter()
                .for_each(|child| walk(child, &mut out));
        }
        out
    }
}

// ---------------------------------------------------------------------------------------------
// Scales

/// A position scale of a chart.
#[derive(Clone, Debug, PartialEq)]
pub enum PositionScale {
    Continuous(ContinuousScale),
    Band(BandScale),
}

impl PositionScale {
    /// The pixel of a value (the band's centre for a category).
    pub fn position(&self, datum: &Datum) -> Option<f64> {
        match (self, datum) {
            (PositionScale::Continuous(scale), Datum::Number(value) | Datum::Time(value)) => {
                scale.map(*value)
            }
            (PositionScale::Band(band), Datum::Text(text)) => band.centre(text),
            (PositionScale::Band(band), Datum::Number(value)) => {
                band.centre(&format_number(*value))
            }
            _ => None,
        }
    }

    /// Start and width of the band of a category.
    pub fn band(&self, datum: &Datum) -> Option<(f64, f64)> {
        match (self, datum) {
            (PositionScale::Band(band), Datum::Text(text)) => {
                Some((band.start(text)?, band.bandwidth()))
            }
            (PositionScale::Band(band), Datum::Number(value)) => {
                Some((band.start(&format_number(*value))?, band.bandwidth()))
            }
            _ => None,
        }
    }

    fn with_range(&self, range: (f64, f64)) -> PositionScale {
        match self {
            PositionScale::Continuous(scale) => {
                PositionScale::Continuous(ContinuousScale { range, ..*scale })
            }
            PositionScale::Band(band) => PositionScale::Band(BandScale {
                range,
                ..band.clone()
            }),
        }
    }

    /// The pixel of the value bars and areas grow from: zero when the domain holds it, else
    /// the domain's low end.
    fn baseline(&self) -> Option<f64> {
        match self {
            PositionScale::Continuous(scale) => {
                let low = scale.domain.0.min(scale.domain.1);
                let high = scale.domain.0.max(scale.domain.1);
                let base = if scale.transform == Transform::Logarithmic {
                    low
                } else if low <= 0.0 && high >= 0.0 {
                    0.0
                } else if low > 0.0 {
                    low
                } else {
                    high
                };
                scale.map(base)
            }
            PositionScale::Band(_) => None,
        }
    }
}

/// The channel description a chart-wide scale is built from: the first layer's, with the
/// domains of every layer joined.
fn joined_channel(chart: &EvaluatedChart, channel: Channel) -> Option<ChannelInfo> {
    let mut joined: Option<ChannelInfo> = None;
    for layer in &chart.layers {
        let Some(info) = layer.channel(channel) else {
            continue;
        };
        match &mut joined {
            None => joined = Some(info.clone()),
            Some(existing) => existing.domain = join_domains(&existing.domain, &info.domain),
        }
    }
    joined
}

fn join_domains(first: &Domain, second: &Domain) -> Domain {
    match (first, second) {
        (Domain::Empty, other) | (other, Domain::Empty) => other.clone(),
        (Domain::Numeric { min: a, max: b }, Domain::Numeric { min: c, max: d }) => {
            Domain::Numeric {
                min: a.min(*c),
                max: b.max(*d),
            }
        }
        (Domain::Time { min: a, max: b }, Domain::Time { min: c, max: d }) => Domain::Time {
            min: a.min(*c),
            max: b.max(*d),
        },
        (Domain::Categories(a), Domain::Categories(b)) => {
            let mut joined = a.clone();
            for category in b {
                if !joined.contains(category) {
                    joined.push(category.clone());
                }
            }
            Domain::Categories(joined)
        }
        (first, _) => first.clone(),
    }
}

/// Distinct values a `ranked` axis draws at most, one step each; past it the axis is spaced
/// evenly. Common practice, no source: a few thousand steps are already under a pixel each on
/// the default frame.
pub const MAX_RANKED_STEPS: usize = 2_000;

/// A `ranked` number axis: its values in order, one step apart whatever their difference, as
/// the spec asks. The drawn numbers become ordered steps (the domain's categories, labelled as
/// the numbers are printed; values printed alike share a step), smallest first along x and at
/// the bottom along y. Spaced evenly instead, with a note, where steps cannot be drawn: on a
/// value axis that starts at zero (bars and areas grow from a baseline), for rows drawn as a
/// density grid (their values are not kept), or past [`MAX_RANKED_STEPS`] values.
fn rank_numbers(
    chart: &EvaluatedChart,
    info: &mut ChannelInfo,
    vertical: bool,
    notes: &mut Vec<String>,
) {
    if info.spacing != Some(Spacing::Ranked) || !matches!(info.domain, Domain::Numeric { .. }) {
        return;
    }
    let mut values: Vec<f64> = Vec::new();
    let mut reason = None;
    for layer in &chart.layers {
        let Some(index) = layer.channel_index(info.channel) else {
            continue;
        };
        if layer.density.is_some() {
            reason = Some("its rows are drawn as a density grid".to_string());
            break;
        }
        values.extend(
            layer
                .marks
                .iter()
                .filter_map(|mark| match mark.values.get(index) {
                    Some(Datum::Number(value)) if value.is_finite() => Some(*value),
                    _ => None,
                }),
        );
    }
    values.sort_by(f64::total_cmp);
    values.dedup();
    if info.from_zero {
        reason = Some("bars and areas grow from zero along it".to_string());
    } else if reason.is_none() && values.len() > MAX_RANKED_STEPS {
        reason = Some(format!(
            "it has {} values, more than the {MAX_RANKED_STEPS} steps drawn",
            values.len()
        ));
    }
    if let Some(reason) = reason {
        notes.push(format!(
            "`ranked` spacing on `{}` is drawn as even spacing: {reason}",
            info.channel.as_str()
        ));
        return;
    }
    let mut labels: Vec<String> = values.into_iter().map(format_number).collect();
    labels.dedup();
    if vertical {
        // band axes read top-down: the largest value first puts the smallest at the bottom
        labels.reverse();
    }
    info.domain = Domain::Categories(labels);
}

/// A position scale for `info` over a placeholder range (set per panel later).
fn position_scale(info: &ChannelInfo, target_ticks: usize) -> Option<PositionScale> {
    match &info.domain {
        Domain::Empty => None,
        Domain::Categories(categories) => Some(PositionScale::Band(BandScale::new(
            categories.clone(),
            (0.0, 1.0),
        ))),
        Domain::Numeric { min, max } | Domain::Time { min, max } => {
            let is_time = matches!(info.domain, Domain::Time { .. });
            let transform = if is_time {
                Transform::Calendar
            } else {
                match info.spacing {
                    Some(Spacing::Logarithmic) => Transform::Logarithmic,
                    Some(Spacing::SquareRoot) => Transform::SquareRoot,
                    Some(Spacing::Calendar) => Transform::Calendar,
                    _ => Transform::Even,
                }
            };
            let (mut low, mut high) = (min.min(*max), min.max(*max));
            if transform == Transform::Logarithmic && low <= 0.0 {
                // the evaluation drops non-positive values on a log scale; keep a valid domain
                low = if high > 0.0 { high / 1000.0 } else { 1.0 };
                high = high.max(low * 10.0);
            }
            if info.from_zero && transform != Transform::Logarithmic {
                low = low.min(0.0);
                high = high.max(0.0);
            }
            if let Some((extent_low, extent_high)) = info.extent {
                if extent_low.is_finite() && extent_high.is_finite() && extent_low != extent_high {
                    low = extent_low.min(extent_high);
                    high = extent_low.max(extent_high);
                }
            }
            if low == high {
                let pad = if low == 0.0 { 1.0 } else { low.abs() * 0.1 };
                if transform != Transform::Logarithmic || low - pad > 0.0 {
                    low -= pad;
                }
                high += pad;
            }
            let scale = ContinuousScale::new(transform, (low, high), (0.0, 1.0)).ok()?;
            let scale = if info.extent.is_some() {
                scale
            } else {
                scale.nice(target_ticks)
            };
            Some(PositionScale::Continuous(scale))
        }
    }
}

/// Ticks of a scale: (value, pixel, label).
fn scale_ticks(scale: &PositionScale, target: usize) -> Vec<(Option<f64>, f64, String)> {
    match scale {
        PositionScale::Band(band) => band
            .categories
            .iter()
            .filter_map(|category| Some((None, band.centre(category)?, shorten_label(category))))
            .collect(),
        PositionScale::Continuous(continuous) => {
            // a nice domain is the loose labelling's span: when the loose search lands on the
            // domain's ends again, its ticks are the ones drawn (ticks at both ends of the axis)
            if matches!(
                continuous.transform,
                Transform::Even | Transform::SquareRoot
            ) {
                let (low, high) = (
                    continuous.domain.0.min(continuous.domain.1),
                    continuous.domain.0.max(continuous.domain.1),
                );
                let tolerance = (high - low).abs() * 1e-9;
                if let Ok(loose) = extended_ticks(
                    low,
                    high,
                    TickOptions {
                        target_count: target,
                        loose: true,
                    },
                ) {
                    let ends_match = loose
                        .first()
                        .is_some_and(|first| (first - low).abs() <= tolerance)
                        && loose
                            .last()
                            .is_some_and(|last| (last - high).abs() <= tolerance);
                    if ends_match {
                        return loose
                            .values
                            .iter()
                            .zip(&loose.labels)
                            .filter_map(|(value, label)| {
                                Some((Some(*value), continuous.map(*value)?, label.clone()))
                            })
                            .collect();
                    }
                }
            }
            let ticks = continuous.ticks(target);
            let pairs = match &ticks {
                ScaleTicks::Numeric { .. } | ScaleTicks::Calendar(_) => ticks.pairs(),
            };
            pairs
                .into_iter()
                .filter_map(|(value, label)| {
                    Some((Some(value), continuous.map(value)?, label.to_string()))
                })
                .collect()
        }
    }
}

fn shorten_label(label: &str) -> String {
    if label.chars().count() <= MAX_LABEL_CHARS {
        label.to_string()
    } else {
        let mut short: String = label.chars().take(MAX_LABEL_CHARS - 1).collect();
        short.push('…');
        short
    }
}

/// `text` as it is when it is at most `room` wide, else shortened with an ellipsis to fit
/// (empty when not even one character and the ellipsis fit).
fn fit_to_width(text: &str, size: f64, room: f64) -> String {
    if text_width(text, size) <= room {
        return text.to_string();
    }
    // as many characters as can fit when none is narrower than a fifth of the size (the bundled
    // font's printing glyphs are wider): a very long text costs no more than a short one, and a
    // text of narrower marks is only cut sooner than it needs to be
    let most = (room.max(0.0) / (size * 0.2)).ceil() as usize + 1;
    let mut chars: Vec<char> = text.chars().take(most).collect();
    while !chars.is_empty() {
        chars.pop();
        let shortened = chars.iter().collect::<String>() + "…";
        if text_width(&shortened, size) <= room {
            return shortened;
        }
    }
    String::new()
}

/// A title centred on `centre` along its line, moved to stay within `span` (low, high), and
/// shortened with an ellipsis when it is longer than the span: the text and its centre.
fn title_within(title: &str, size: f64, centre: f64, span: (f64, f64)) -> (String, f64) {
    let (low, high) = span;
    let room = (high - low).max(0.0);
    let text = fit_to_width(title, size, room);
    let half = text_width(&text, size) / 2.0;
    let centre = if half * 2.0 >= room {
        (low + high) / 2.0
    } else {
        centre.clamp(low + half, high - half)
    };
    (text, centre)
}

/// A number as a label: up to six significant digits, no trailing zeros.
pub fn format_number(value: f64) -> String {
    if !value.is_finite() {
        return value.to_string();
    }
    if value == 0.0 {
        return "0".to_string();
    }
    let magnitude = value.abs();
    if !(1e-4..1e9).contains(&magnitude) {
        return format!("{value:.3e}");
    }
    let digits = (5 - magnitude.log10().floor() as i32).clamp(0, 10) as usize;
    let text = format!("{value:.digits$}");
    if text.contains('.') {
        text.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        text
    }
}

// ---------------------------------------------------------------------------------------------
// Colour, size and shape scales

#[derive(Clone, Debug, PartialEq)]
enum ColourScale {
    Categories {
        categories: Vec<String>,
        colours: Vec<String>,
    },
    Ramp {
        low: f64,
        high: f64,
        diverging: bool,
        stops: Option<Vec<Srgb8>>,
    },
}

fn cached_categorical(count: usize, background: Srgb8) -> Vec<Srgb8> {
    type PaletteCache = Mutex<HashMap<(usize, [u8; 3]), Vec<Srgb8>>>;
    static CACHE: OnceLock<PaletteCache> = OnceLock::new();
    let key = (count, [background.red, background.green, background.blue]);
    let cache = CACHE.get_or_init(|| Mutex::new(HashMap::new()));
    if let Ok(map) = cache.lock() {
        if let Some(colours) = map.get(&key) {
            return colours.clone();
        }
    }
    let colours = match palette::categorical(count.min(palette::MAX_CATEGORICAL), background) {
        Ok(found) => found.colours,
        Err(_) => palette::ramp(count.min(palette::MAX_CATEGORICAL), ramp_colour),
    };
    if let Ok(mut map) = cache.lock() {
        map.insert(key, colours.clone());
    }
    colours
}

/// The sequential ramp as quantities read it: more is darker; the palest tenth is left out so
/// the smallest value still shows on the background.
fn ramp_colour(t: f64) -> Srgb8 {
    palette::sequential_at(0.88 * (1.0 - t.clamp(0.0, 1.0)))
}

fn mix_linear(first: Srgb8, second: Srgb8, t: f64) -> Srgb8 {
    let (a, b) = (first.to_linear(), second.to_linear());
    LinearRgb {
        red: a.red + (b.red - a.red) * t,
        green: a.green + (b.green - a.green) * t,
        blue: a.blue + (b.blue - a.blue) * t,
    }
    .to_srgb8_clipped()
}

impl ColourScale {
    fn new(info: &ChannelInfo, background: Srgb8) -> Option<ColourScale> {
        let spec_palette: Option<Vec<Srgb8>> = info.palette.as_ref().map(|colours| {
            colours
                .iter()
                .filter_map(|text| parse_hex_colour(text).ok())
                .collect()
        });
        let spec_palette = spec_palette.filter(|colours| !colours.is_empty());
        match &info.domain {
            Domain::Empty => None,
            Domain::Categories(categories) => {
                let count = categories.len().max(1);
                let colours: Vec<Srgb8> = match (&spec_palette, info.kind) {
                    (Some(given), _) => (0..count).map(|i| given[i % given.len()]).collect(),
                    (None, AttributeKind::Ordered) => (0..count)
                        .map(|i| {
                            ramp_colour(if count == 1 {
                                0.5
                            } else {
                                i as f64 / (count - 1) as f64
                            })
                        })
                        .collect(),
                    (None, _) => {
                        let found = cached_categorical(count, background);
                        if found.is_empty() {
                            vec![ramp_colour(0.6)]
                        } else {
                            (0..count).map(|i| found[i % found.len()]).collect()
                        }
                    }
                };
                Some(ColourScale::Categories {
                    categories: categories.clone(),
                    colours: colours.into_iter().map(Srgb8::to_hex).collect(),
                })
            }
            Domain::Numeric { min, max } | Domain::Time { min, max } => Some(ColourScale::Ramp {
                low: min.min(*max),
                high: min.max(*max),
                diverging: *min < 0.0 && *max > 0.0 && spec_palette.is_none(),
                stops: spec_palette,
            }),
        }
    }

    fn colour(&self, datum: &Datum) -> Option<String> {
        match (self, datum) {
            (
                ColourScale::Categories {
                    categories,
                    colours,
                },
                datum,
            ) => {
                let key = match datum {
                    Datum::Text(text) => text.to_string(),
                    Datum::Number(value) => format_number(*value),
                    _ => return None,
                };
                let index = categories.iter().position(|category| *category == key)?;
                colours.get(index).cloned()
            }
            (ColourScale::Ramp { .. }, Datum::Number(value) | Datum::Time(value)) => {
                Some(self.ramp_at(*value).to_hex())
            }
            _ => None,
        }
    }

    fn ramp_at(&self, value: f64) -> Srgb8 {
        let ColourScale::Ramp {
            low,
            high,
            diverging,
            stops,
        } = self
        else {
            return ramp_colour(0.5);
        };
        if let Some(stops) = stops {
            let t = if high > low {
                ((value - low) / (high - low)).clamp(0.0, 1.0)
            } else {
                0.5
            };
            if stops.len() == 1 {
                return stops[0];
            }
            let scaled = t * (stops.len() - 1) as f64;
            let index = (scaled.floor() as usize).min(stops.len() - 2);
            return mix_linear(stops[index], stops[index + 1], scaled - index as f64);
        }
        if *diverging {
            let reach = low.abs().max(high.abs());
            let t = 0.5 + 0.5 * (value / reach).clamp(-1.0, 1.0);
            palette::diverging_at(t)
        } else {
            let t = if high > low {
                (value - low) / (high - low)
            } else {
                0.5
            };
            ramp_colour(t)
        }
    }
}

fn category_key(datum: &Datum) -> Option<String> {
    match datum {
        Datum::Text(text) => Some(text.to_string()),
        Datum::Number(value) => Some(format_number(*value)),
        _ => None,
    }
}

// ---------------------------------------------------------------------------------------------
// The layout itself

struct Text<'a> {
    content: &'a str,
    size: f64,
    anchor: Anchor,
    rotation: f64,
    colour: &'a str,
}

fn text_item(at: Point, text: Text<'_>) -> TextItem {
    let width = text_width(text.content, text.size);
    let (up, down) = (ascent(text.size), descent(text.size));
    let start = match text.anchor {
        Anchor::Start => 0.0,
        Anchor::Middle => -width / 2.0,
        Anchor::End => -width,
    };
    let bounds = if text.rotation.abs() < 1e-9 {
        BoxRect {
            x: at.x + start,
            y: at.y - up,
            width,
            height: up + down,
        }
    } else {
        // the four corners, rotated about the anchor
        let angle = text.rotation.to_radians();
        let (sin, cos) = angle.sin_cos();
        let corners = [
            (start, -up),
            (start + width, -up),
            (start, down),
            (start + width, down),
        ];
        let rotated: Vec<(f64, f64)> = corners
            .iter()
            .map(|(x, y)| (at.x + x * cos - y * sin, at.y + x * sin + y * cos))
            .collect();
        let min_x = rotated.iter().map(|p| p.0).fold(f64::INFINITY, f64::min);
        let max_x = rotated
            .iter()
            .map(|p| p.0)
            .fold(f64::NEG_INFINITY, f64::max);
        let min_y = rotated.iter().map(|p| p.1).fold(f64::INFINITY, f64::min);
        let max_y = rotated
            .iter()
            .map(|p| p.1)
            .fold(f64::NEG_INFINITY, f64::max);
        BoxRect {
            x: min_x,
            y: min_y,
            width: max_x - min_x,
            height: max_y - min_y,
        }
    };
    TextItem {
        at,
        content: text.content.to_string(),
        size: text.size,
        anchor: text.anchor,
        rotation: text.rotation,
        colour: text.colour.to_string(),
        bounds,
    }
}

fn text_node(item: TextItem) -> Node {
    Node::Primitive(Primitive {
        paint: Paint::fill(&item.colour),
        shape: Shape::Text(item),
        label: None,
        mark: None,
    })
}

fn plain(shape: Shape, paint: Paint) -> Node {
    Node::Primitive(Primitive {
        shape,
        paint,
        label: None,
        mark: None,
    })
}

/// How the x-axis labels are set.
#[derive(Clone, Copy, Debug, PartialEq)]
enum XLabelSetting {
    Level,
    /// Turned to read upward (−90°), for many or long category labels.
    Upright,
}

/// A target tick count for an axis of `length` pixels (common practice: a label per 70 px
/// across, per 45 px down).
fn target_ticks(length: f64, across: bool) -> usize {
    let per = if across { 70.0 } else { 45.0 };
    ((length / per).round() as usize).clamp(2, 10)
}

fn max_label_width(ticks: &[(Option<f64>, f64, String)], size: f64) -> f64 {
    ticks
        .iter()
        .map(|(_, _, label)| text_width(label, size))
        .fold(0.0, f64::max)
}

/// Continuous x ticks whose labels do not overlap: fewer targets until they fit.
fn fitting_x_ticks(scale: &PositionScale, length: f64) -> Vec<(Option<f64>, f64, String)> {
    let mut target = target_ticks(length, true);
    loop {
        let ticks = scale_ticks(scale, target);
        if matches!(scale, PositionScale::Band(_)) || target <= 2 || labels_fit_across(&ticks) {
            return ticks;
        }
        target -= 1;
    }
}

fn labels_fit_across(ticks: &[(Option<f64>, f64, String)]) -> bool {
    let mut sorted: Vec<(f64, f64)> = ticks
        .iter()
        .map(|(_, pixel, label)| (*pixel, text_width(label, TICK_LABEL_SIZE)))
        .collect();
    sorted.sort_by(|a, b| a.0.total_cmp(&b.0));
    sorted
        .windows(2)
        .all(|pair| pair[1].0 - pair[0].0 >= (pair[0].1 + pair[1].1) / 2.0 + MIN_LABEL_GAP)
}

fn fitting_y_ticks(scale: &PositionScale, length: f64) -> Vec<(Option<f64>, f64, String)> {
    let mut target = target_ticks(length, false);
    let room = line_height(TICK_LABEL_SIZE) + 2.0;
    loop {
        let ticks = scale_ticks(scale, target);
        let fits = match scale {
            PositionScale::Band(band) => band.step().abs() >= room || target <= 2,
            PositionScale::Continuous(_) => {
                let mut pixels: Vec<f64> = ticks.iter().map(|tick| tick.1).collect();
                pixels.sort_by(f64::total_cmp);
                pixels.windows(2).all(|pair| pair[1] - pair[0] >= room)
            }
        };
        if fits || target <= 2 {
            return ticks;
        }
        target -= 1;
    }
}

/// The grid of panels: columns and rows.
fn panel_grid(count: usize, width: f64, height: f64) -> (usize, usize) {
    if count <= 1 {
        return (1, 1);
    }
    // the column count whose panels come closest to the frame's own aspect ratio
    let mut best = (count, 1, f64::INFINITY);
    for columns in 1..=count {
        let rows = count.div_ceil(columns);
        let panel_aspect = (width / columns as f64) / (height / rows as f64);
        let aspect = (width / height).max(1e-6);
        let miss = (panel_aspect / aspect).ln().abs() + 0.15 * (rows * columns - count) as f64;
        if miss < best.2 {
            best = (columns, rows, miss);
        }
    }
    (best.0, best.1)
}

/// Lay out an evaluated chart at its frame size.
pub fn layout(chart: &EvaluatedChart) -> Scene {
    let width = if chart.width.is_finite() && chart.width >= 40.0 {
        chart.width.min(20_000.0)
    } else {
        640.0
    };
    let height = if chart.height.is_finite() && chart.height >= 40.0 {
        chart.height.min(20_000.0)
    } else {
        400.0
    };
    let background_colour = parse_hex_colour(&chart.background).unwrap_or(DEFAULT_BACKGROUND);
    let background = background_colour.to_hex();
    let mut notes = Vec::new();
    let mut groups = Vec::new();

    // the title
    let mut top = FRAME_PADDING;
    if let Some(title) = chart.title.as_deref().filter(|title| !title.is_empty()) {
        let baseline = top + ascent(TITLE_SIZE);
        // a title wider than the frame is shortened (the SVG's <title> keeps it whole)
        let shown = fit_to_width(title, TITLE_SIZE, width - 2.0 * FRAME_PADDING);
        let item = text_item(
            Point {
                x: FRAME_PADDING,
                y: baseline,
            },
            Text {
                content: &shown,
                size: TITLE_SIZE,
                anchor: Anchor::Start,
                rotation: 0.0,
                colour: INK,
            },
        );
        groups.push(Group {
            role: Role::Title,
            label: None,
            children: vec![text_node(item)],
        });
        top += line_height(TITLE_SIZE) + 8.0;
    }

    let is_pie = !chart.layers.is_empty()
        && chart
            .layers
            .iter()
            .all(|layer| layer.mark == Mark::Wedge || layer.channel(Channel::Angle).is_some())
        && chart.layers.iter().all(|layer| {
            layer.channel(Channel::X).is_none() && layer.channel(Channel::Y).is_none()
        });

    let mut x_info = joined_channel(chart, Channel::X);
    let mut y_info = joined_channel(chart, Channel::Y);
    for (info, vertical) in [(&mut x_info, false), (&mut y_info, true)] {
        if let Some(info) = info {
            rank_numbers(chart, info, vertical, &mut notes);
        }
    }

    // legends take the right side: in one column, or in more when one is taller than the
    // frame; else rows below the plots; else fewer entries (see `plan_legends`)
    let legend_specs = legend_channels(chart, background_colour);
    let below_furniture =
        if is_pie || x_info.is_none() {
            0.0
        } else {
            TICK_LENGTH + TICK_LABEL_GAP + line_height(TICK_LABEL_SIZE) + 2.0
        } + if !is_pie && x_info.as_ref().is_some_and(|info| !info.title.is_empty()) {
            line_height(AXIS_TITLE_SIZE) + 4.0
        } else {
            0.0
        };
    // the estimate of the left margin the first pass uses too
    let left_estimate = 60.0;
    let right_room = width - 2.0 * FRAME_PADDING - LEGEND_GAP_ACROSS - left_estimate;
    let below_room = height - top - FRAME_PADDING - below_furniture - LEGENDS_BELOW_GAP;
    let legend_plan = plan_legends(
        legend_specs,
        &LegendRoom {
            right_height: height - top - FRAME_PADDING,
            right_width: right_room - MIN_PLOT_SHARE * width,
            below_width: width - 2.0 * FRAME_PADDING,
            below_height: below_room - MIN_PLOT_SHARE * height,
            right_width_last_resort: right_room - MIN_PLOT_SIDE.max(LAST_RESORT_PLOT_SHARE * width),
            below_height_last_resort: below_room
                - MIN_PLOT_SIDE.max(LAST_RESORT_PLOT_SHARE * height),
        },
    );
    notes.extend(legend_plan.notes.iter().cloned());
    let right = FRAME_PADDING
        + if legend_plan.side == LegendSide::Right && legend_plan.width > 0.0 {
            legend_plan.width + LEGEND_GAP_ACROSS
        } else {
            0.0
        };
    let legends_below = if legend_plan.side == LegendSide::Below && legend_plan.height > 0.0 {
        legend_plan.height + LEGENDS_BELOW_GAP
    } else {
        0.0
    };

    let panel_count = chart.panels.len().max(1);
    let (columns, rows) = panel_grid(
        panel_count,
        width - FRAME_PADDING - right,
        height - top - FRAME_PADDING,
    );
    let strip = if panel_count > 1 {
        line_height(PANEL_LABEL_SIZE) + 6.0
    } else {
        0.0
    };

    // first pass: the scales' domains and labels at an estimated size
    let estimate_width = ((width - right - FRAME_PADDING - 60.0) / columns as f64).max(20.0);
    let estimate_height =
        ((height - top - FRAME_PADDING - legends_below - 40.0) / rows as f64 - strip).max(20.0);
    let x_scale = if is_pie {
        None
    } else {
        x_info
            .as_ref()
            .and_then(|info| position_scale(info, target_ticks(estimate_width, true)))
    };
    let y_scale = if is_pie {
        None
    } else {
        y_info
            .as_ref()
            .and_then(|info| position_scale(info, target_ticks(estimate_height, false)))
    };
    // y grows upward unless flipped; band axes read top-down
    let y_range = |low: f64, high: f64, info: &ChannelInfo, scale: &PositionScale| match scale {
        PositionScale::Band(_) => {
            if info.flip {
                (high, low)
            } else {
                (low, high)
            }
        }
        PositionScale::Continuous(_) => {
            if info.flip {
                (low, high)
            } else {
                (high, low)
            }
        }
    };
    let x_range = |low: f64, high: f64, info: &ChannelInfo| {
        if info.flip {
            (high, low)
        } else {
            (low, high)
        }
    };

    let y_ticks_estimate = match (&y_scale, &y_info) {
        (Some(scale), Some(info)) => fitting_y_ticks(
            &scale.with_range(y_range(0.0, estimate_height, info, scale)),
            estimate_height,
        ),
        _ => Vec::new(),
    };
    let y_label_width = max_label_width(&y_ticks_estimate, TICK_LABEL_SIZE);
    let y_title = y_info
        .as_ref()
        .filter(|_| y_scale.is_some())
        .map(|info| info.title.clone());
    let x_title = x_info
        .as_ref()
        .filter(|_| x_scale.is_some())
        .map(|info| info.title.clone());
    let left = FRAME_PADDING
        + if y_scale.is_some() {
            y_label_width + TICK_LENGTH + TICK_LABEL_GAP + 2.0
        } else {
            0.0
        }
        + if y_title.as_deref().is_some_and(|title| !title.is_empty()) {
            line_height(AXIS_TITLE_SIZE) + 4.0
        } else {
            0.0
        };
    // level labels of a continuous x axis are centred on their ticks: the end ones reach past
    // the plot by half their width, into the margins and the gaps between panels
    let x_overhang = match (&x_scale, &x_info) {
        (Some(scale @ PositionScale::Continuous(_)), Some(info)) => {
            let ranged = scale.with_range(x_range(0.0, estimate_width, info));
            max_label_width(&fitting_x_ticks(&ranged, estimate_width), TICK_LABEL_SIZE) / 2.0 + 2.0
        }
        _ => 0.0,
    };
    let right = right.max(x_overhang);
    let left = left.max(x_overhang);
    let panel_gap_x = if columns > 1 {
        16f64.max(2.0 * x_overhang + MIN_LABEL_GAP)
    } else {
        0.0
    };
    let plot_width =
        ((width - left - right - panel_gap_x * (columns - 1) as f64) / columns as f64).max(10.0);

    // x labels: level when they fit, else upright
    let (x_ticks_first, x_setting) = match (&x_scale, &x_info) {
        (Some(scale), Some(info)) => {
            let ranged = scale.with_range(x_range(0.0, plot_width, info));
            let ticks = fitting_x_ticks(&ranged, plot_width);
            let setting = match &ranged {
                PositionScale::Band(band) => {
                    let widest = max_label_width(&ticks, TICK_LABEL_SIZE);
                    if widest + MIN_LABEL_GAP > band.step().abs() {
                        XLabelSetting::Upright
                    } else {
                        XLabelSetting::Level
                    }
                }
                PositionScale::Continuous(_) => XLabelSetting::Level,
            };
            (ticks, setting)
        }
        _ => (Vec::new(), XLabelSetting::Level),
    };
    let x_label_room = match x_setting {
        _ if x_scale.is_none() => 0.0,
        XLabelSetting::Level => line_height(TICK_LABEL_SIZE),
        XLabelSetting::Upright => max_label_width(&x_ticks_first, TICK_LABEL_SIZE)
            .min(height * 0.3)
            .max(line_height(TICK_LABEL_SIZE)),
    };
    let bottom = FRAME_PADDING
        + legends_below
        + if x_title.as_deref().is_some_and(|title| !title.is_empty()) {
            line_height(AXIS_TITLE_SIZE) + 4.0
        } else {
            0.0
        };
    let panel_gap_y = 10.0;
    // turned labels take no more than leaves each plot `MIN_PLOT_SIDE` tall; longer ones are
    // shortened to the room
    let x_label_room = if x_setting == XLabelSetting::Upright && x_scale.is_some() {
        let per_row =
            (height - top - bottom - panel_gap_y * (rows - 1) as f64) / rows as f64 - strip;
        x_label_room
            .min(per_row - TICK_LENGTH - TICK_LABEL_GAP - 2.0 - MIN_PLOT_SIDE)
            .max(line_height(TICK_LABEL_SIZE))
    } else {
        x_label_room
    };
    let x_axis_band = if x_scale.is_some() {
        TICK_LENGTH + TICK_LABEL_GAP + x_label_room + 2.0
    } else {
        0.0
    };
    let plot_height = ((height - top - bottom - (strip + x_axis_band) * rows as f64 + 0.0
        - panel_gap_y * (rows - 1) as f64)
        / rows as f64)
        .max(10.0);

    // panels
    let mut panels = Vec::new();
    let mut axes = Vec::new();
    for index in 0..panel_count {
        let column = index % columns;
        let row = index / columns;
        let cell_x = left + column as f64 * (plot_width + panel_gap_x);
        let cell_y = top + row as f64 * (strip + plot_height + x_axis_band + panel_gap_y);
        let plot = BoxRect {
            x: cell_x,
            y: cell_y + strip,
            width: plot_width,
            height: plot_height,
        };
        panels.push(PanelLayout {
            index,
            label: chart
                .panels
                .get(index)
                .and_then(|panel| panel.label.clone()),
            plot,
        });
    }

    // the nice domains again at the final plot size, so the axes' ticks (searched with the same
    // target count) reach the domain's ends
    let x_scale = x_scale.and(
        x_info
            .as_ref()
            .and_then(|info| position_scale(info, target_ticks(plot_width, true))),
    );
    let y_scale = y_scale.and(
        y_info
            .as_ref()
            .and_then(|info| position_scale(info, target_ticks(plot_height, false))),
    );
    // symbols and labels drawn at the ends of a continuous scale stay inside the plot: its
    // range is inset by the largest symbol's radius
    let inset = mark_inset(chart);
    let inset_for = |scale: &PositionScale| match scale {
        PositionScale::Continuous(_) => inset,
        PositionScale::Band(_) => 0.0,
    };
    let panel_scales: Vec<(Option<PositionScale>, Option<PositionScale>)> = panels
        .iter()
        .map(|panel| {
            let x = match (&x_scale, &x_info) {
                (Some(scale), Some(info)) => {
                    let inset = inset_for(scale);
                    Some(scale.with_range(x_range(
                        panel.plot.x + inset,
                        panel.plot.right() - inset,
                        info,
                    )))
                }
                _ => None,
            };
            let y = match (&y_scale, &y_info) {
                (Some(scale), Some(info)) => {
                    let inset = inset_for(scale);
                    Some(scale.with_range(y_range(
                        panel.plot.y + inset,
                        panel.plot.bottom() - inset,
                        info,
                        scale,
                    )))
                }
                _ => None,
            };
            (x, y)
        })
        .collect();

    // panel backgrounds, strips, grid and axes
    let mut panel_groups = Vec::new();
    for (panel, (x, y)) in panels.iter().zip(&panel_scales) {
        let mut furniture = Vec::new();
        if let Some(label) = &panel.label {
            furniture.push(plain(
                Shape::Rect(BoxRect {
                    x: panel.plot.x,
                    y: panel.plot.y - strip,
                    width: panel.plot.width,
                    height: strip - 2.0,
                }),
                Paint::fill(STRIP_COLOUR),
            ));
            furniture.push(text_node(text_item(
                Point {
                    x: panel.plot.x + 6.0,
                    y: panel.plot.y - strip + 3.0 + ascent(PANEL_LABEL_SIZE),
                },
                Text {
                    content: &shorten_label(label),
                    size: PANEL_LABEL_SIZE,
                    anchor: Anchor::Start,
                    rotation: 0.0,
                    colour: INK,
                },
            )));
        }
        let mut grid = Vec::new();
        if let (Some(scale), Some(info)) = (x, &x_info) {
            let ticks = fitting_x_ticks(scale, panel.plot.width);
            let axis = x_axis(panel, scale, info, ticks, x_setting, x_label_room);
            if matches!(scale, PositionScale::Continuous(_)) {
                for tick in &axis.ticks {
                    grid.push(plain(
                        Shape::Line {
                            from: Point {
                                x: tick.pixel,
                                y: panel.plot.y,
                            },
                            to: Point {
                                x: tick.pixel,
                                y: panel.plot.bottom(),
                            },
                        },
                        Paint::stroke(GRID_COLOUR, 1.0),
                    ));
                }
            }
            axes.push(axis);
        }
        if let (Some(scale), Some(info)) = (y, &y_info) {
            let ticks = fitting_y_ticks(scale, panel.plot.height);
            let axis = y_axis(panel, scale, info, ticks, panel.index % columns == 0);
            if matches!(scale, PositionScale::Continuous(_)) {
                for tick in &axis.ticks {
                    grid.push(plain(
                        Shape::Line {
                            from: Point {
                                x: panel.plot.x,
                                y: tick.pixel,
                            },
                            to: Point {
                                x: panel.plot.right(),
                                y: tick.pixel,
                            },
                        },
                        Paint::stroke(GRID_COLOUR, 1.0),
                    ));
                }
            }
            axes.push(axis);
        }
        panel_groups.push(groups.len());
        groups.push(Group {
            role: Role::Panel,
            label: panel.label.as_ref().map(|label| format!("panel {label}")),
            children: vec![
                Node::Group(Group {
                    role: Role::PanelLabel,
                    label: None,
                    children: furniture,
                }),
                Node::Group(Group {
                    role: Role::Grid,
                    label: None,
                    children: grid,
                }),
            ]
            .into_iter()
            .collect(),
        });
    }

    // a label that would touch one already drawn (of any axis: neighbouring panels' ends meet)
    // is left out; its tick stays
    let mut drawn_labels: Vec<BoxRect> = Vec::new();
    for axis in &mut axes {
        for tick in &mut axis.ticks {
            let Some(bounds) = tick.label_bounds() else {
                continue;
            };
            let padded = BoxRect {
                x: bounds.x - MIN_LABEL_GAP / 2.0,
                y: bounds.y,
                width: bounds.width + MIN_LABEL_GAP,
                height: bounds.height,
            };
            if drawn_labels.iter().any(|other| other.overlaps(&padded)) {
                tick.label_item = None;
            } else {
                drawn_labels.push(bounds);
            }
        }
    }
    for axis in &axes {
        if let (Some(group_index), Some(panel)) =
            (panel_groups.get(axis.panel), panels.get(axis.panel))
        {
            let node = axis_group(axis, panel);
            groups[*group_index].children.push(node);
        }
    }

    // axis titles, once for the grid
    let grid_left = left;
    let grid_right = width - right;
    let grid_top = top;
    let grid_bottom = height - bottom;
    // a title wider than the grid is moved, then shortened, to stay clear of the frame's edges
    // and of the legends
    let titles_right = if legend_plan.side == LegendSide::Right && legend_plan.width > 0.0 {
        width - right + LEGEND_GAP_ACROSS / 2.0
    } else {
        width - FRAME_PADDING
    };
    let mut titles = Vec::new();
    if let Some(title) = x_title.as_deref().filter(|title| !title.is_empty()) {
        let (title, centre) = title_within(
            title,
            AXIS_TITLE_SIZE,
            (grid_left + grid_right) / 2.0,
            (FRAME_PADDING, titles_right),
        );
        titles.push(text_node(text_item(
            Point {
                x: centre,
                y: height - FRAME_PADDING - legends_below - descent(AXIS_TITLE_SIZE),
            },
            Text {
                content: &title,
                size: AXIS_TITLE_SIZE,
                anchor: Anchor::Middle,
                rotation: 0.0,
                colour: MUTED_INK,
            },
        )));
    }
    if let Some(title) = y_title.as_deref().filter(|title| !title.is_empty()) {
        let (title, centre) = title_within(
            title,
            AXIS_TITLE_SIZE,
            (grid_top + grid_bottom) / 2.0,
            (top, height - FRAME_PADDING - legends_below),
        );
        titles.push(text_node(text_item(
            Point {
                x: FRAME_PADDING + ascent(AXIS_TITLE_SIZE),
                y: centre,
            },
            Text {
                content: &title,
                size: AXIS_TITLE_SIZE,
                anchor: Anchor::Middle,
                rotation: -90.0,
                colour: MUTED_INK,
            },
        )));
    }
    if !titles.is_empty() {
        groups.push(Group {
            role: Role::AxisTitle,
            label: None,
            children: titles,
        });
    }

    // marks
    for (layer_index, layer) in chart.layers.iter().enumerate() {
        let group = layer_group(
            chart,
            layer_index,
            layer,
            &panels,
            &panel_scales,
            background_colour,
            is_pie,
            &mut notes,
        );
        groups.push(group);
    }

    // legends
    let mut legends = Vec::new();
    let legend_origin = match legend_plan.side {
        LegendSide::Right => Point {
            x: width - right + LEGEND_GAP_ACROSS,
            y: top,
        },
        LegendSide::Below => Point {
            x: FRAME_PADDING,
            y: height - FRAME_PADDING - legend_plan.height,
        },
    };
    for placed in legend_plan.placed {
        let (group, legend) = legend_group(placed, legend_origin);
        groups.push(group);
        legends.push(legend);
    }

    for layer in &chart.layers {
        for info in &layer.channels {
            if matches!(info.channel, Channel::Tilt | Channel::Texture)
                && !crate::knowledge::perceived::mark_shows(layer.mark, info.channel)
            {
                notes.push(format!(
                    "layer {}: {} marks do not show the `{}` channel, so it is not drawn",
                    layer.index + 1,
                    layer.mark.as_str(),
                    info.channel.as_str()
                ));
            }
        }
    }

    Scene {
        width,
        height,
        background,
        title: chart.title.clone(),
        description: chart.description.clone(),
        summary: summary_sentence(chart),
        groups,
        panels,
        axes,
        legends,
        notes,
    }
}

fn x_axis(
    panel: &PanelLayout,
    scale: &PositionScale,
    info: &ChannelInfo,
    ticks: Vec<(Option<f64>, f64, String)>,
    setting: XLabelSetting,
    upright_room: f64,
) -> AxisLayout {
    let baseline = panel.plot.bottom() + TICK_LENGTH + TICK_LABEL_GAP;
    let mut laid: Vec<TickLayout> = Vec::new();
    let mut last_box: Option<BoxRect> = None;
    for (value, pixel, label) in ticks {
        let item = match setting {
            XLabelSetting::Level => text_item(
                Point {
                    x: pixel,
                    y: baseline + ascent(TICK_LABEL_SIZE),
                },
                Text {
                    content: &label,
                    size: TICK_LABEL_SIZE,
                    anchor: Anchor::Middle,
                    rotation: 0.0,
                    colour: MUTED_INK,
                },
            ),
            XLabelSetting::Upright => text_item(
                Point {
                    x: pixel + (ascent(TICK_LABEL_SIZE) - descent(TICK_LABEL_SIZE)) / 2.0,
                    y: baseline,
                },
                Text {
                    content: &fit_to_width(&label, TICK_LABEL_SIZE, upright_room),
                    size: TICK_LABEL_SIZE,
                    anchor: Anchor::End,
                    rotation: -90.0,
                    colour: MUTED_INK,
                },
            ),
        };
        // a label that would touch the one before it is left out (its tick stays)
        let keep = last_box.is_none_or(|previous| {
            let padded = BoxRect {
                x: previous.x - MIN_LABEL_GAP / 2.0,
                width: previous.width + MIN_LABEL_GAP,
                ..previous
            };
            !padded.overlaps(&item.bounds)
        });
        if keep {
            last_box = Some(item.bounds);
        }
        laid.push(TickLayout {
            value,
            pixel,
            label,
            label_item: keep.then_some(item),
        });
    }
    AxisLayout {
        panel: panel.index,
        channel: Channel::X,
        side: AxisSide::Bottom,
        extent: (panel.plot.x, panel.plot.right()),
        ticks: laid,
        title: info.title.clone(),
        transform: match scale {
            PositionScale::Continuous(continuous) => Some(continuous.transform),
            PositionScale::Band(_) => None,
        },
    }
}

fn y_axis(
    panel: &PanelLayout,
    scale: &PositionScale,
    info: &ChannelInfo,
    ticks: Vec<(Option<f64>, f64, String)>,
    with_labels: bool,
) -> AxisLayout {
    let right_edge = panel.plot.x - TICK_LENGTH - TICK_LABEL_GAP;
    let mut laid = Vec::new();
    let mut last_box: Option<BoxRect> = None;
    for (value, pixel, label) in ticks {
        let item = text_item(
            Point {
                x: right_edge,
                y: pixel + (ascent(TICK_LABEL_SIZE) - descent(TICK_LABEL_SIZE)) / 2.0,
            },
            Text {
                content: &label,
                size: TICK_LABEL_SIZE,
                anchor: Anchor::End,
                rotation: 0.0,
                colour: MUTED_INK,
            },
        );
        let keep = with_labels && last_box.is_none_or(|previous| !previous.overlaps(&item.bounds));
        if keep {
            last_box = Some(item.bounds);
        }
        laid.push(TickLayout {
            value,
            pixel,
            label,
            label_item: keep.then_some(item),
        });
    }
    AxisLayout {
        panel: panel.index,
        channel: Channel::Y,
        side: AxisSide::Left,
        extent: (panel.plot.y, panel.plot.bottom()),
        ticks: laid,
        title: info.title.clone(),
        transform: match scale {
            PositionScale::Continuous(continuous) => Some(continuous.transform),
            PositionScale::Band(_) => None,
        },
    }
}

fn axis_group(axis: &AxisLayout, panel: &PanelLayout) -> Node {
    let name = match axis.side {
        AxisSide::Bottom => "x axis",
        AxisSide::Left => "y axis",
    };
    Node::Group(Group {
        role: Role::Axis,
        label: Some(if axis.title.is_empty() {
            name.to_string()
        } else {
            format!("{name}, {}", axis.title)
        }),
        children: axis_primitives(axis, panel),
    })
}

fn axis_primitives(axis: &AxisLayout, panel: &PanelLayout) -> Vec<Node> {
    let mut nodes = Vec::new();
    let tick_paint = Paint::stroke(MUTED_INK, 1.0);
    match axis.side {
        AxisSide::Bottom => {
            nodes.push(plain(
                Shape::Line {
                    from: Point {
                        x: panel.plot.x,
                        y: panel.plot.bottom(),
                    },
                    to: Point {
                        x: panel.plot.right(),
                        y: panel.plot.bottom(),
                    },
                },
                Paint::stroke(BASELINE_COLOUR, 1.0),
            ));
            for tick in &axis.ticks {
                nodes.push(plain(
                    Shape::Line {
                        from: Point {
                            x: tick.pixel,
                            y: panel.plot.bottom(),
                        },
                        to: Point {
                            x: tick.pixel,
                            y: panel.plot.bottom() + TICK_LENGTH,
                        },
                    },
                    tick_paint.clone(),
                ));
            }
        }
        AxisSide::Left => {
            // a quiet spine the height of the plot, in the grid's colour
            nodes.push(plain(
                Shape::Line {
                    from: Point {
                        x: panel.plot.x,
                        y: panel.plot.y,
                    },
                    to: Point {
                        x: panel.plot.x,
                        y: panel.plot.bottom(),
                    },
                },
                Paint::stroke(GRID_COLOUR, 1.0),
            ));
            for tick in &axis.ticks {
                nodes.push(plain(
                    Shape::Line {
                        from: Point {
                            x: panel.plot.x - TICK_LENGTH,
                            y: tick.pixel,
                        },
                        to: Point {
                            x: panel.plot.x,
                            y: tick.pixel,
                        },
                    },
                    tick_paint.clone(),
                ));
            }
        }
    }
    for tick in &axis.ticks {
        if let Some(item) = &tick.label_item {
            nodes.push(text_node(item.clone()));
        }
    }
    nodes
}

// ---------------------------------------------------------------------------------------------
// The summary sentence

fn plural_mark(mark: Mark, count: usize) -> &'static str {
    let one = count == 1;
    match mark {
        Mark::Point => {
            if one {
                "point"
            } else {
                "points"
            }
        }
        Mark::Line => {
            if one {
                "line"
            } else {
                "lines"
            }
        }
        Mark::Area => {
            if one {
                "area"
            } else {
                "areas"
            }
        }
        Mark::Bar => {
            if one {
                "bar"
            } else {
                "bars"
            }
        }
        Mark::Wedge => {
            if one {
                "wedge"
            } else {
                "wedges"
            }
        }
        Mark::Cell => {
            if one {
                "cell"
            } else {
                "cells"
            }
        }
        Mark::Text => {
            if one {
                "label"
            } else {
                "labels"
            }
        }
        Mark::Segment => {
            if one {
                "segment"
            } else {
                "segments"
            }
        }
    }
}

fn summary_sentence(chart: &EvaluatedChart) -> String {
    if chart.layers.is_empty() {
        return "An empty chart: nothing could be drawn.".to_string();
    }
    let mut parts = Vec::new();
    for layer in &chart.layers {
        let count = if layer.density.is_some() {
            layer.rows_read as usize
        } else {
            layer.marks.len()
        };
        let mut part = format!("{} {}", count, plural_mark(layer.mark, count));
        let value = layer
            .channel(Channel::Y)
            .or_else(|| layer.channel(Channel::Angle));
        if let Some(value) = value {
            part.push_str(&format!(" of {}", value.title));
        }
        if let Some(x) = layer.channel(Channel::X) {
            part.push_str(&format!(" by {}", x.title));
        }
        let colour = [Channel::Hue, Channel::Luminance, Channel::Saturation]
            .iter()
            .find_map(|channel| layer.channel(*channel));
        if let Some(colour) = colour {
            part.push_str(&format!(", coloured by {}", colour.title));
        }
        if layer.density.is_some() {
            part.push_str(", drawn as a density grid");
        }
        parts.push(part);
    }
    let mut sentence = parts.join("; ");
    if chart.panels.len() > 1 {
        sentence.push_str(&format!(", in {} panels", chart.panels.len()));
    }
    sentence.push('.');
    if chart.is_sample {
        sentence.push_str(" Drawn from a sample of the data.");
    }
    let mut chars = sentence.chars();
    match chars.next() {
        Some(first) => first.to_uppercase().collect::<String>() + chars.as_str(),
        None => sentence,
    }
}
