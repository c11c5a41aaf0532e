//! Expressiveness: whether a perceived channel can say what a kind of attribute is.
//!
//! Munzner (2014) splits channels into magnitude channels (they show how much: for ordered and
//! quantitative attributes) and identity channels (they show what or where: for categorical
//! attributes); Bertin (1967) says the same through his levels of organisation (colour and
//! shape are not ordered; size and value are ordered, not associative). Putting a categorical
//! column on a magnitude channel implies an order the data lacks; putting an ordered or
//! quantitative column on an identity channel hides the order it has.

use crate::knowledge::citations;
use crate::knowledge::perceived::PerceivedChannel;
use crate::knowledge::Citation;
use crate::spec::model::AttributeKind;

/// What kind of information a channel carries.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ChannelNature {
    /// Position: expresses every kind (Mackinlay 1986 ranks position first for all three data
    /// types; Munzner 2014 lists position among magnitude channels and spatial region first
    /// among identity channels; Bertin 1967: the planar dimensions allow all levels).
    Both,
    /// Shows how much (Munzner 2014 magnitude channels; Bertin 1967 ordered variables).
    Magnitude,
    /// Shows what or where (Munzner 2014 identity channels; Bertin 1967 not-ordered variables).
    Identity,
    /// The sources disagree; the text says how.
    Disputed(&'static str),
    /// Not perceptual: the value is written out.
    Textual,
}

/// The nature of each perceived channel.
///
/// Texture is taken as an identity channel: the spec's `texture` key assigns distinct patterns,
/// which do not read in an order; Bertin's texture variable (the grain of one pattern) is
/// ordered, and Mackinlay (1986) ranks texture above length for ordinal data, so an ordered
/// grain ramp would be an exception this table does not model.
pub fn channel_nature(channel: PerceivedChannel) -> ChannelNature {
    match channel {
        PerceivedChannel::PositionCommonScale | PerceivedChannel::PositionUnalignedScale => {
            ChannelNature::Both
        }
        PerceivedChannel::Length
        | PerceivedChannel::Angle
        | PerceivedChannel::Area
        | PerceivedChannel::Volume
        | PerceivedChannel::Luminance
        | PerceivedChannel::Saturation
        | PerceivedChannel::Curvature
        | PerceivedChannel::Depth => ChannelNature::Magnitude,
        PerceivedChannel::Hue
        | PerceivedChannel::Shape
        | PerceivedChannel::Texture
        | PerceivedChannel::Connection
        | PerceivedChannel::Containment
        | PerceivedChannel::Motion
        | PerceivedChannel::SpatialRegion => ChannelNature::Identity,
        PerceivedChannel::Tilt => ChannelNature::Disputed(
            "Munzner (2014) ranks tilt among magnitude channels, Bertin (1967) gives orientation \
             no order (associative and selective only)",
        ),
        PerceivedChannel::Text => ChannelNature::Textual,
    }
}

/// Why a channel misleads for a kind.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum MisleadingReason {
    /// A magnitude channel carrying categories: readers see more and less where the data has
    /// only different.
    ImpliesOrderTheDataLacks,
    /// An identity channel carrying ordered or quantitative values: the order cannot be seen.
    CannotShowOrder,
}

impl MisleadingReason {
    pub fn explanation(self) -> &'static str {
        match self {
            MisleadingReason::ImpliesOrderTheDataLacks => {
                "the channel is read as more or less, which implies an order the categories lack"
            }
            MisleadingReason::CannotShowOrder => {
                "the channel has no perceived order, so the order of the values is lost"
            }
        }
    }

    pub fn sources(self) -> &'static [Citation] {
        &[citations::BERTIN_1967, citations::MUNZNER_2014]
    }
}

/// Whether a channel can express a kind.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Expressiveness {
    Good,
    Misleading(MisleadingReason),
    /// The sources disagree (see [`ChannelNature::Disputed`]); rules should stay silent.
    Disputed(&'static str),
    /// A text label: expresses anything by writing it out, not by perception.
    NotPerceptual,
}

impl Expressiveness {
    pub fn is_misleading(self) -> bool {
        matches!(self, Expressiveness::Misleading(_))
    }
}

/// Whether `channel` can express an attribute of `kind` (Munzner 2014 expressiveness principle,
/// Bertin 1967 levels of organisation). Time counts as ordered.
pub fn expresses(kind: AttributeKind, channel: PerceivedChannel) -> Expressiveness {
    match (channel_nature(channel), kind.is_ordered()) {
        (ChannelNature::Both, _) => Expressiveness::Good,
        (ChannelNature::Magnitude, true) | (ChannelNature::Identity, false) => Expressiveness::Good,
        (ChannelNature::Magnitude, false) => {
            Expressiveness::Misleading(MisleadingReason::ImpliesOrderTheDataLacks)
        }
        (ChannelNature::Identity, true) => {
            Expressiveness::Misleading(MisleadingReason::CannotShowOrder)
        }
        (ChannelNature::Disputed(note), _) => Expressiveness::Disputed(note),
        (ChannelNature::Textual, _) => Expressiveness::NotPerceptual,
    }
}
