//! Perceived channels: what the eye actually reads when a column drives a channel key of a mark
//! (a bar bound on `y` is read by its length, an area mark on `y` by its area, a point on `y` by
//! its position), and the pure function [`perceived_channel`] that derives it.
//!
//! The variants cover every channel that appears in the rankings of [`super::rankings`]
//! (Cleveland & McGill 1984, Mackinlay 1986, Munzner 2014), also those no spec key maps to
//! (volume, curvature, connection, containment, depth, motion, spatial region), so the ranking
//! tables can be complete.

use crate::spec::model::{Arrange, Channel, Mark};

/// A channel as perceived, named after the elementary perceptual tasks of the literature.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum PerceivedChannel {
    /// Position along a common scale (Cleveland & McGill 1984), e.g. points on one shared axis.
    PositionCommonScale,
    /// Position along identical but non-aligned scales (Cleveland & McGill 1984), e.g. the same
    /// axis repeated in different panels of small multiples.
    PositionUnalignedScale,
    /// Length (1D size), e.g. a bar read from its baseline.
    Length,
    /// Angle, e.g. the slices of a wedge (pie) mark.
    Angle,
    /// Area (2D size), e.g. a point whose size encodes a value, or an area mark.
    Area,
    /// Volume (3D size). No spec key maps to it; ranked by all three rankings.
    Volume,
    /// Luminance (lightness, grey value; Bertin's "value", Mackinlay's "density",
    /// Cleveland & McGill's "shading").
    Luminance,
    /// Colour saturation.
    Saturation,
    /// Colour hue.
    Hue,
    /// Shape.
    Shape,
    /// Texture (pattern).
    Texture,
    /// Tilt (orientation of a mark; Cleveland & McGill's "direction", Mackinlay's "slope").
    Tilt,
    /// Curvature. No spec key maps to it.
    Curvature,
    /// Connection (marks joined by lines; Mackinlay 1986). No spec key maps to it.
    Connection,
    /// Containment (marks enclosed together; Mackinlay 1986). No spec key maps to it.
    Containment,
    /// Depth (3D position; Munzner 2014). No spec key maps to it.
    Depth,
    /// Motion (Munzner 2014). No spec key maps to it.
    Motion,
    /// Spatial region (grouping by place; Munzner 2014). No spec key maps to it.
    SpatialRegion,
    /// Text: the value is written out as a label. Not a perceptual channel: it is read, not seen.
    Text,
}

impl PerceivedChannel {
    pub const ALL: [PerceivedChannel; 19] = [
        PerceivedChannel::PositionCommonScale,
        PerceivedChannel::PositionUnalignedScale,
        PerceivedChannel::Length,
        PerceivedChannel::Angle,
        PerceivedChannel::Area,
        PerceivedChannel::Volume,
        PerceivedChannel::Luminance,
        PerceivedChannel::Saturation,
        PerceivedChannel::Hue,
        PerceivedChannel::Shape,
        PerceivedChannel::Texture,
        PerceivedChannel::Tilt,
        PerceivedChannel::Curvature,
        PerceivedChannel::Connection,
        PerceivedChannel::Containment,
        PerceivedChannel::Depth,
        PerceivedChannel::Motion,
        PerceivedChannel::SpatialRegion,
        PerceivedChannel::Text,
    ];

    /// Stable kebab-case id (our own), for configuration and JSON output.
    pub fn as_str(self) -> &'static str {
        match self {
            PerceivedChannel::PositionCommonScale => "position-common-scale",
            PerceivedChannel::PositionUnalignedScale => "position-unaligned-scale",
            PerceivedChannel::Length => "length",
            PerceivedChannel::Angle => "angle",
            PerceivedChannel::Area => "area",
            PerceivedChannel::Volume => "volume",
            PerceivedChannel::Luminance => "luminance",
            PerceivedChannel::Saturation => "saturation",
            PerceivedChannel::Hue => "hue",
            PerceivedChannel::Shape => "shape",
            PerceivedChannel::Texture => "texture",
            PerceivedChannel::Tilt => "tilt",
            PerceivedChannel::Curvature => "curvature",
            PerceivedChannel::Connection => "connection",
            PerceivedChannel::Containment => "containment",
            PerceivedChannel::Depth => "depth",
            PerceivedChannel::Motion => "motion",
            PerceivedChannel::SpatialRegion => "spatial-region",
            PerceivedChannel::Text => "text",
        }
    }

    pub fn parse(text: &str) -> Option<PerceivedChannel> {
        PerceivedChannel::ALL
            .into_iter()
            .find(|channel| channel.as_str() == text)
    }

    /// Words for messages and hovers, e.g. "position on a common scale".
    pub fn description(self) -> &'static str {
        match self {
            PerceivedChannel::PositionCommonScale => "position on a common scale",
            PerceivedChannel::PositionUnalignedScale => "position on unaligned scales",
            PerceivedChannel::Length => "length",
            PerceivedChannel::Angle => "angle",
            PerceivedChannel::Area => "area",
            PerceivedChannel::Volume => "volume",
            PerceivedChannel::Luminance => "luminance",
            PerceivedChannel::Saturation => "saturation",
            PerceivedChannel::Hue => "hue",
            PerceivedChannel::Shape => "shape",
            PerceivedChannel::Texture => "texture",
            PerceivedChannel::Tilt => "tilt",
            PerceivedChannel::Curvature => "curvature",
            PerceivedChannel::Connection => "connection",
            PerceivedChannel::Containment => "containment",
            PerceivedChannel::Depth => "depth",
            PerceivedChannel::Motion => "motion",
            PerceivedChannel::SpatialRegion => "spatial region",
            PerceivedChannel::Text => "text label",
        }
    }

    /// Either kind of position.
    pub fn is_position(self) -> bool {
        matches!(
            self,
            PerceivedChannel::PositionCommonScale | PerceivedChannel::PositionUnalignedScale
        )
    }

    /// Whether a spec key (of some mark) can produce this perceived channel. The others appear
    /// in the published rankings only.
    pub fn is_reachable_from_spec(self) -> bool {
        !matches!(
            self,
            PerceivedChannel::Volume
                | PerceivedChannel::Curvature
                | PerceivedChannel::Connection
                | PerceivedChannel::Containment
                | PerceivedChannel::Depth
                | PerceivedChannel::Motion
                | PerceivedChannel::SpatialRegion
        )
    }
}

impl std::fmt::Display for PerceivedChannel {
    fn fmt(&self, formatter: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        formatter.write_str(self.description())
    }
}

/// Which channels each mark can show. Where this comes from: the chart-spec format's own
/// definition of its marks (what `schema/chart-spec.schema.json` says each mark draws), not a
/// publication. A bar has no symbol shape and no size of its own (its length is the value), a
/// wedge sits in a ring rather than on axes, a point has no angle, a line no size or shape.
pub const MARK_CHANNELS: &[(Mark, &[Channel])] = {
    use Channel::*;
    &[
        (
            Mark::Point,
            &[X, Y, Hue, Luminance, Saturation, Area, Shape, Tilt, Label],
        ),
        (
            Mark::Line,
            &[X, Y, Hue, Luminance, Saturation, Texture, Label],
        ),
        (
            Mark::Area,
            &[X, Y, Hue, Luminance, Saturation, Texture, Label],
        ),
        (
            Mark::Bar,
            &[X, Y, Hue, Luminance, Saturation, Texture, Label],
        ),
        (
            Mark::Wedge,
            &[Angle, Hue, Luminance, Saturation, Texture, Label],
        ),
        (
            Mark::Cell,
            &[X, Y, Hue, Luminance, Saturation, Texture, Label],
        ),
        (
            Mark::Text,
            &[X, Y, Hue, Luminance, Saturation, Area, Tilt, Label],
        ),
        (
            Mark::Segment,
            &[X, Y, Hue, Luminance, Saturation, Texture, Label],
        ),
    ]
};

/// The channels `mark` can show (see [`MARK_CHANNELS`]).
pub fn channels_of_mark(mark: Mark) -> &'static [Channel] {
    MARK_CHANNELS
        .iter()
        .find(|(candidate, _)| *candidate == mark)
        .map_or(&[], |(_, channels)| channels)
}

/// Whether `mark` can show `channel`.
pub fn mark_shows(mark: Mark, channel: Channel) -> bool {
    channels_of_mark(mark).contains(&channel)
}

/// The marks that can show every one of `channels`, in the order of [`MARK_CHANNELS`].
pub fn marks_showing(channels: &[Channel]) -> Vec<Mark> {
    MARK_CHANNELS
        .iter()
        .filter(|(_, shown)| channels.iter().all(|channel| shown.contains(channel)))
        .map(|(mark, _)| *mark)
        .collect()
}

/// Everything [`perceived_channel`] needs to know about one binding.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct ChannelContext {
    /// The layer's mark.
    pub mark: Mark,
    /// The `bind` key.
    pub channel: Channel,
    /// The layer's `arrange`, if any (see [`baseline_sharing`]; it does not change the
    /// perceived channel itself).
    pub arrange: Option<Arrange>,
    /// Whether the chart has `panels` (small multiples).
    pub in_panels: bool,
    /// The position axis carrying the value (the axis bound to a quantitative or summarised
    /// column; the analysis computes it from the profiles). `None` when neither or both axes
    /// carry one, e.g. a scatterplot of two quantitative columns.
    pub value_axis: Option<Channel>,
    /// Whether this binding applies a `summary`. When `value_axis` is `None`, a summarised
    /// binding on `x` or `y` of a bar or area mark is taken as the value axis.
    pub binding_is_summarised: bool,
}

/// What the eye reads for one binding. Rules, with their sources:
///
/// - `label` → [`PerceivedChannel::Text`] on every mark (the chart-spec design: a label is text,
///   not a perceptual channel).
/// - `hue`, `luminance`, `saturation`, `shape`, `texture`, `tilt` → the same-named channel; the
///   `area` key → [`PerceivedChannel::Area`] (mark size as area); `angle` →
///   [`PerceivedChannel::Angle`] (for an arc the slices are also judged by their area; the
///   angle is the primary reading, Cleveland & McGill 1984 rank it above area).
/// - `x`/`y` of a `bar` on its value axis → [`PerceivedChannel::Length`], read from the
///   baseline (Cleveland & McGill 1984, bar charts as length judgements). Stacked (`stack`,
///   `share`) bars stay `Length`: the bottom segment sits on the common baseline, the segments
///   above it on baselines that differ from bar to bar, and Cleveland & McGill (1984) classed
///   judgements of such segments of divided bar charts as length judgements (their
///   position-length experiment; from memory). That only the bottom series shares a baseline is
///   left to the rules reading `arrange` (stacked-comparison).
/// - `x`/`y` of an `area` mark on its value axis → [`PerceivedChannel::Area`] (the chart-spec
///   design: an area mark on `y` is read by its area); stacked areas likewise.
/// - any other `x`/`y` (points, lines, tiles, text, rules, arcs placed on axes, and the
///   category axis of bars and areas) → [`PerceivedChannel::PositionCommonScale`].
/// - In panels (small multiples), a position on the value axis becomes
///   [`PerceivedChannel::PositionUnalignedScale`]: values in different panels sit on identical
///   but non-aligned scales (Cleveland & McGill 1984 distinguish "position along a common
///   scale" from "position along non-aligned scales"). With no single value axis (scatterplot)
///   both axes carry values and both become unaligned. The category axis stays a common scale:
///   categories are read within their panel.
pub fn perceived_channel(context: &ChannelContext) -> PerceivedChannel {
    match context.channel {
        Channel::Label => PerceivedChannel::Text,
        Channel::Hue => PerceivedChannel::Hue,
        Channel::Luminance => PerceivedChannel::Luminance,
        Channel::Saturation => PerceivedChannel::Saturation,
        Channel::Shape => PerceivedChannel::Shape,
        Channel::Texture => PerceivedChannel::Texture,
        Channel::Tilt => PerceivedChannel::Tilt,
        Channel::Area => PerceivedChannel::Area,
        Channel::Angle => PerceivedChannel::Angle,
        Channel::X | Channel::Y => perceived_position_channel(context),
    }
}

/// The value axis as [`perceived_channel`] uses it: the given one, or for bar and area marks a
/// summarised position binding.
pub fn effective_value_axis(context: &ChannelContext) -> Option<Channel> {
    if context.value_axis.is_some() {
        return context.value_axis;
    }
    let mark_has_baseline = matches!(context.mark, Mark::Bar | Mark::Area);
    if mark_has_baseline && context.binding_is_summarised && context.channel.is_position() {
        return Some(context.channel);
    }
    None
}

fn perceived_position_channel(context: &ChannelContext) -> PerceivedChannel {
    let value_axis = effective_value_axis(context);
    let on_value_axis = value_axis == Some(context.channel);
    if on_value_axis {
        match context.mark {
            Mark::Bar => return PerceivedChannel::Length,
            Mark::Area => return PerceivedChannel::Area,
            _ => {}
        }
    }
    let carries_values = on_value_axis || value_axis.is_none();
    if context.in_panels && carries_values {
        PerceivedChannel::PositionUnalignedScale
    } else {
        PerceivedChannel::PositionCommonScale
    }
}

/// Which marks of a series share the baseline their length or area is read from.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum BaselineSharing {
    /// Every bar or area starts on the same baseline (unstacked, side by side, overlapping).
    AllSeries,
    /// Stacked (`stack`, `share`): only the bottom series starts on the common baseline; the
    /// segments above sit on baselines that differ from bar to bar (Cleveland & McGill 1984,
    /// divided bar charts; from memory).
    BottomSeriesOnly,
    /// The binding is not read from a baseline (not `Length` or `Area` of a bar or area mark).
    NotApplicable,
}

/// Whether the lengths or areas of a bar or area layer start on one common baseline.
pub fn baseline_sharing(context: &ChannelContext) -> BaselineSharing {
    let perceived = perceived_channel(context);
    let read_from_baseline = matches!(context.mark, Mark::Bar | Mark::Area)
        && context.channel.is_position()
        && matches!(perceived, PerceivedChannel::Length | PerceivedChannel::Area);
    if !read_from_baseline {
        return BaselineSharing::NotApplicable;
    }
    match context.arrange {
        Some(arrange) if arrange.is_stacked() => BaselineSharing::BottomSeriesOnly,
        _ => BaselineSharing::AllSeries,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn context(mark: Mark, channel: Channel) -> ChannelContext {
        ChannelContext {
            mark,
            channel,
            arrange: None,
            in_panels: false,
            value_axis: None,
            binding_is_summarised: false,
        }
    }

    #[test]
    fn every_mark_has_its_channels_and_angle_belongs_to_wedges_alone() {
        for mark in Mark::ALL {
            assert!(!channels_of_mark(*mark).is_empty(), "{mark:?}");
            assert!(
                mark_shows(*mark, Channel::Label),
                "every mark can carry a label"
            );
        }
        assert_eq!(MARK_CHANNELS.len(), Mark::ALL.len());
        assert_eq!(marks_showing(&[Channel::Angle]), vec![Mark::Wedge]);
        assert_eq!(marks_showing(&[Channel::Shape]), vec![Mark::Point]);
        assert!(!mark_shows(Mark::Point, Channel::Angle));
        assert!(!mark_shows(Mark::Line, Channel::Area));
        assert!(marks_showing(&[Channel::Angle, Channel::X]).is_empty());
    }

    #[test]
    fn ids_round_trip_and_are_unique() {
        for channel in PerceivedChannel::ALL {
            assert_eq!(PerceivedChannel::parse(channel.as_str()), Some(channel));
        }
        let mut ids: Vec<&str> = PerceivedChannel::ALL.iter().map(|c| c.as_str()).collect();
        ids.sort_unstable();
        ids.dedup();
        assert_eq!(ids.len(), PerceivedChannel::ALL.len());
    }

    #[test]
    fn summarised_bar_binding_is_its_own_value_axis_when_none_is_given() {
        let mut bar_y = context(Mark::Bar, Channel::Y);
        bar_y.binding_is_summarised = true;
        assert_eq!(perceived_channel(&bar_y), PerceivedChannel::Length);
        // a summarised point is still a position
        let mut point_y = context(Mark::Point, Channel::Y);
        point_y.binding_is_summarised = true;
        assert_eq!(
            perceived_channel(&point_y),
            PerceivedChannel::PositionCommonScale
        );
    }

    #[test]
    fn given_value_axis_wins_over_the_summary_fallback() {
        let mut bar_x = context(Mark::Bar, Channel::X);
        bar_x.binding_is_summarised = true;
        bar_x.value_axis = Some(Channel::Y);
        assert_eq!(
            perceived_channel(&bar_x),
            PerceivedChannel::PositionCommonScale
        );
    }
}
