//! Published effectiveness rankings of perceived channels, as data with citations, selectable
//! by an id of our own (`mackinlay-1986`, `cleveland-mcgill-1984`, `munzner-2014`).
//!
//! A ranking has one or more lists; each list serves one or more groups of attribute kinds
//! (quantitative, ordinal, nominal, as in Mackinlay 1986). Entries carry a level (1 = most
//! effective; entries a source prints together share a level), the perceived channel, and the
//! source's own term for it, because the sources name channels differently (Mackinlay's
//! "density" is our luminance, Cleveland & McGill's "direction" our tilt, ...).
//!
//! FROM MEMORY: every order below was transcribed from memory of the papers' figures
//! (Mackinlay 1986, figure of the ranking of perceptual tasks; Cleveland & McGill 1984, the
//! ordering of elementary perceptual tasks; Munzner 2014, figure 5.1 "channels ranked by
//! effectiveness"); the papers could not be consulted while writing this.

use crate::knowledge::citations;
use crate::knowledge::perceived::PerceivedChannel;
use crate::knowledge::perceived::PerceivedChannel as P;
use crate::knowledge::Citation;
use crate::spec::model::AttributeKind;

/// The ranking used when the configuration names none.
pub const DEFAULT_RANKING_ID: &str = "mackinlay-1986";

/// Groups of attribute kinds the published rankings distinguish (Mackinlay 1986's three).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum RankedGroup {
    Quantitative,
    Ordinal,
    Nominal,
}

impl RankedGroup {
    pub const ALL: [RankedGroup; 3] = [
        RankedGroup::Quantitative,
        RankedGroup::Ordinal,
        RankedGroup::Nominal,
    ];

    /// The group whose list ranks channels for a kind: `Time` uses the quantitative list
    /// (time values are read as magnitudes on an interval scale; our choice, the sources rank
    /// no time kind), `Ordered` the ordinal list, `Categorical` the nominal list.
    pub fn for_kind(kind: AttributeKind) -> RankedGroup {
        match kind {
            AttributeKind::Quantitative | AttributeKind::Time => RankedGroup::Quantitative,
            AttributeKind::Ordered => RankedGroup::Ordinal,
            AttributeKind::Categorical => RankedGroup::Nominal,
        }
    }

    pub fn as_str(self) -> &'static str {
        match self {
            RankedGroup::Quantitative => "quantitative",
            RankedGroup::Ordinal => "ordinal",
            RankedGroup::Nominal => "nominal",
        }
    }
}

/// One channel in a ranked list.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct RankedEntry {
    /// 1 = most effective. Entries the source prints as tied share a level.
    pub level: u8,
    pub channel: PerceivedChannel,
    /// The source's own name for the channel.
    pub published_term: &'static str,
}

/// A ranked list and the groups of kinds it serves.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct RankedList {
    /// The source's name for the list, e.g. "magnitude channels".
    pub name: &'static str,
    pub serves: &'static [RankedGroup],
    /// Best first; levels never decrease along the slice.
    pub entries: &'static [RankedEntry],
}

impl RankedList {
    pub fn entry(&self, channel: PerceivedChannel) -> Option<&RankedEntry> {
        self.entries.iter().find(|entry| entry.channel == channel)
    }

    /// Number of distinct levels.
    pub fn level_count(&self) -> u8 {
        self.entries
            .iter()
            .map(|entry| entry.level)
            .max()
            .unwrap_or(0)
    }
}

/// A channel's place in a ranked list.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Rank {
    /// 1 = most effective.
    pub level: u8,
    /// How many levels the list has (for "3rd of 13" in messages).
    pub level_count: u8,
    /// Whether other channels share this level (a tie in the source, or several of our
    /// channels mapped to one term of the source).
    pub shares_level: bool,
}

impl Rank {
    /// Strictly more effective (a lower level).
    pub fn is_better_than(self, other: Rank) -> bool {
        self.level < other.level
    }
}

/// A published ranking.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Ranking {
    /// Our kebab-case id, used in configuration.
    pub id: &'static str,
    pub title: &'static str,
    pub citation: Citation,
    /// How the table was transcribed, and the mapping choices we made.
    pub from_memory_note: &'static str,
    pub lists: &'static [RankedList],
}

impl Ranking {
    /// The list ranking channels for a kind, if the source has one.
    pub fn list_for(&self, kind: AttributeKind) -> Option<&'static RankedList> {
        let group = RankedGroup::for_kind(kind);
        self.lists.iter().find(|list| list.serves.contains(&group))
    }

    /// Where a channel ranks for a kind; `None` when the source does not rank that kind or
    /// does not list that channel for it (e.g. text, or hue in Cleveland & McGill 1984).
    pub fn rank(&self, kind: AttributeKind, channel: PerceivedChannel) -> Option<Rank> {
        let list = self.list_for(kind)?;
        let entry = list.entry(channel)?;
        let shares_level = list
            .entries
            .iter()
            .filter(|other| other.level == entry.level)
            .count()
            > 1;
        Some(Rank {
            level: entry.level,
            level_count: list.level_count(),
            shares_level,
        })
    }

    /// The channels ranked for a kind, best first (tied channels in the source's order).
    pub fn ordered_channels(&self, kind: AttributeKind) -> Vec<PerceivedChannel> {
        self.list_for(kind)
            .map(|list| list.entries.iter().map(|entry| entry.channel).collect())
            .unwrap_or_default()
    }

    /// The source's term for a channel in the list for a kind.
    pub fn published_term(&self, kind: AttributeKind, channel: PerceivedChannel) -> Option<&str> {
        Some(self.list_for(kind)?.entry(channel)?.published_term)
    }
}

/// Every ranking, the default first.
pub static ALL_RANKINGS: [&Ranking; 3] = [&MACKINLAY_1986, &CLEVELAND_MCGILL_1984, &MUNZNER_2014];

/// The ranking with this id.
pub fn ranking_by_id(id: &str) -> Option<&'static Ranking> {
    ALL_RANKINGS
        .iter()
        .copied()
        .find(|ranking| ranking.id == id)
}

/// The ids of all rankings, for messages listing the valid choices.
pub fn ranking_ids() -> Vec<&'static str> {
    ALL_RANKINGS.iter().map(|ranking| ranking.id).collect()
}

const fn entry(level: u8, channel: PerceivedChannel, published_term: &'static str) -> RankedEntry {
    RankedEntry {
        level,
        channel,
        published_term,
    }
}

/// Mackinlay (1986), ranking of perceptual tasks for quantitative, ordinal and nominal data
/// (from memory of the paper's figure). Mackinlay has a single "position": both of our
/// position channels map to it and share level 1. His "density" (grey-scale density) is our
/// luminance and his "slope" our tilt.
pub static MACKINLAY_1986: Ranking = Ranking {
    id: "mackinlay-1986",
    title: "Mackinlay's ranking of perceptual tasks by data type",
    citation: citations::MACKINLAY_1986,
    from_memory_note: "Transcribed from memory of the paper's ranking figure (three lists: \
        quantitative, ordinal, nominal). Position covers both position on a common scale and \
        on unaligned scales (Mackinlay does not separate them); density is mapped to \
        luminance, slope to tilt.",
    lists: &[
        RankedList {
            name: "quantitative",
            serves: &[RankedGroup::Quantitative],
            entries: &[
                entry(1, P::PositionCommonScale, "position"),
                entry(1, P::PositionUnalignedScale, "position"),
                entry(2, P::Length, "length"),
                entry(3, P::Angle, "angle"),
                entry(4, P::Tilt, "slope"),
                entry(5, P::Area, "area"),
                entry(6, P::Volume, "volume"),
                entry(7, P::Luminance, "density"),
                entry(8, P::Saturation, "color saturation"),
                entry(9, P::Hue, "color hue"),
                entry(10, P::Texture, "texture"),
                entry(11, P::Connection, "connection"),
                entry(12, P::Containment, "containment"),
                entry(13, P::Shape, "shape"),
            ],
        },
        RankedList {
            name: "ordinal",
            serves: &[RankedGroup::Ordinal],
            entries: &[
                entry(1, P::PositionCommonScale, "position"),
                entry(1, P::PositionUnalignedScale, "position"),
                entry(2, P::Luminance, "density"),
                entry(3, P::Saturation, "color saturation"),
                entry(4, P::Hue, "color hue"),
                entry(5, P::Texture, "texture"),
                entry(6, P::Connection, "connection"),
                entry(7, P::Containment, "containment"),
                entry(8, P::Length, "length"),
                entry(9, P::Angle, "angle"),
                entry(10, P::Tilt, "slope"),
                entry(11, P::Area, "area"),
                entry(12, P::Volume, "volume"),
                entry(13, P::Shape, "shape"),
            ],
        },
        RankedList {
            name: "nominal",
            serves: &[RankedGroup::Nominal],
            entries: &[
                entry(1, P::PositionCommonScale, "position"),
                entry(1, P::PositionUnalignedScale, "position"),
                entry(2, P::Hue, "color hue"),
                entry(3, P::Texture, "texture"),
                entry(4, P::Connection, "connection"),
                entry(5, P::Containment, "containment"),
                entry(6, P::Luminance, "density"),
                entry(7, P::Saturation, "color saturation"),
                entry(8, P::Shape, "shape"),
                entry(9, P::Length, "length"),
                entry(10, P::Angle, "angle"),
                entry(11, P::Tilt, "slope"),
                entry(12, P::Area, "area"),
                entry(13, P::Volume, "volume"),
            ],
        },
    ],
};

/// Cleveland & McGill (1984), ordering of elementary perceptual tasks for judging quantities,
/// most accurate first (from memory): position along a common scale; position along
/// non-aligned scales; length, direction, angle; area; volume, curvature; shading, colour
/// saturation. Their experiments judged quantities, so the list serves the quantitative group
/// only; ordinal and nominal data are not ranked (hue is not in the ordering).
pub static CLEVELAND_MCGILL_1984: Ranking = Ranking {
    id: "cleveland-mcgill-1984",
    title: "Cleveland and McGill's ordering of elementary perceptual tasks",
    citation: citations::CLEVELAND_MCGILL_1984,
    from_memory_note: "Transcribed from memory of the paper's ordering of elementary perceptual \
        tasks; tasks printed together are tied. Direction is mapped to tilt, shading to \
        luminance. Ranks quantitative judgements only.",
    lists: &[RankedList {
        name: "elementary perceptual tasks",
        serves: &[RankedGroup::Quantitative],
        entries: &[
            entry(1, P::PositionCommonScale, "position along a common scale"),
            entry(
                2,
                P::PositionUnalignedScale,
                "position along non-aligned scales",
            ),
            entry(3, P::Length, "length"),
            entry(3, P::Tilt, "direction"),
            entry(3, P::Angle, "angle"),
            entry(4, P::Area, "area"),
            entry(5, P::Volume, "volume"),
            entry(5, P::Curvature, "curvature"),
            entry(6, P::Luminance, "shading"),
            entry(6, P::Saturation, "color saturation"),
        ],
    }],
};

/// Munzner (2014), figure 5.1: magnitude channels for ordered attributes and identity channels
/// for categorical attributes, each ranked by effectiveness (from memory). Munzner's
/// "tilt/angle" covers both our tilt and angle (tied). Her "spatial region" is the position
/// channel used for categories (each category placed in its own region), so our position
/// channels share its level in the identity list: that mapping is our reading.
pub static MUNZNER_2014: Ranking = Ranking {
    id: "munzner-2014",
    title: "Munzner's magnitude and identity channels ranked by effectiveness",
    citation: citations::MUNZNER_2014,
    from_memory_note: "Transcribed from memory of the book's figure of channels ranked by \
        effectiveness (magnitude channels for ordered attributes, identity channels for \
        categorical ones). Tilt/angle covers tilt and angle; position on an axis carrying \
        categories is taken as spatial region (our reading). Texture is not ranked.",
    lists: &[
        RankedList {
            name: "magnitude channels",
            serves: &[RankedGroup::Quantitative, RankedGroup::Ordinal],
            entries: &[
                entry(1, P::PositionCommonScale, "position on common scale"),
                entry(2, P::PositionUnalignedScale, "position on unaligned scale"),
                entry(3, P::Length, "length (1D size)"),
                entry(4, P::Tilt, "tilt/angle"),
                entry(4, P::Angle, "tilt/angle"),
                entry(5, P::Area, "area (2D size)"),
                entry(6, P::Depth, "depth (3D position)"),
                entry(7, P::Luminance, "color luminance"),
                entry(8, P::Saturation, "color saturation"),
                entry(9, P::Curvature, "curvature"),
                entry(10, P::Volume, "volume (3D size)"),
            ],
        },
        RankedList {
            name: "identity channels",
            serves: &[RankedGroup::Nominal],
            entries: &[
                entry(1, P::SpatialRegion, "spatial region"),
                entry(1, P::PositionCommonScale, "spatial region"),
                entry(1, P::PositionUnalignedScale, "spatial region"),
                entry(2, P::Hue, "color hue"),
                entry(3, P::Motion, "motion"),
                entry(4, P::Shape, "shape"),
            ],
        },
    ],
};

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_list_is_well_formed() {
        for ranking in ALL_RANKINGS {
            for list in ranking.lists {
                assert!(!list.entries.is_empty(), "{} {}", ranking.id, list.name);
                assert_eq!(list.entries[0].level, 1, "{} {}", ranking.id, list.name);
                for pair in list.entries.windows(2) {
                    let step = pair[1].level - pair[0].level;
                    assert!(
                        step <= 1,
                        "{} {}: levels must not skip",
                        ranking.id,
                        list.name
                    );
                }
                let mut channels: Vec<PerceivedChannel> =
                    list.entries.iter().map(|e| e.channel).collect();
                channels.sort_unstable();
                channels.dedup();
                assert_eq!(
                    channels.len(),
                    list.entries.len(),
                    "{} {}",
                    ranking.id,
                    list.name
                );
                assert!(
                    list.entry(PerceivedChannel::Text).is_none(),
                    "text is never ranked"
                );
            }
            // no group is served twice
            for group in RankedGroup::ALL {
                let serving = ranking
                    .lists
                    .iter()
                    .filter(|list| list.serves.contains(&group))
                    .count();
                assert!(serving <= 1, "{} serves {group:?} twice", ranking.id);
            }
        }
    }

    #[test]
    fn ids_are_unique_and_the_default_exists() {
        let ids = ranking_ids();
        let mut sorted = ids.clone();
        sorted.sort_unstable();
        sorted.dedup();
        assert_eq!(sorted.len(), ids.len());
        assert_eq!(ALL_RANKINGS[0].id, DEFAULT_RANKING_ID);
        assert!(ranking_by_id(DEFAULT_RANKING_ID).is_some());
        assert!(ranking_by_id("no-such-ranking").is_none());
    }
}
