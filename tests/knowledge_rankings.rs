//! The ranking tables checked against the published orders they transcribe. Every assertion
//! names its source; the orders were transcribed from memory of the publications' figures (see
//! `src/knowledge/rankings.rs`), so these tests pin the well-known facts of each figure.

use markwell::knowledge::perceived::PerceivedChannel as P;
use markwell::knowledge::rankings::{
    ranking_by_id, Rank, RankedGroup, Ranking, ALL_RANKINGS, CLEVELAND_MCGILL_1984,
    DEFAULT_RANKING_ID, MACKINLAY_1986, MUNZNER_2014,
};
use markwell::spec::model::AttributeKind::{self, Categorical, Ordered, Quantitative, Time};

fn rank(ranking: &Ranking, kind: AttributeKind, channel: P) -> Rank {
    match ranking.rank(kind, channel) {
        Some(rank) => rank,
        None => panic!("{} ranks no {channel:?} for {kind:?}", ranking.id),
    }
}

/// Asserts that the channels are in strictly decreasing effectiveness, in the order given.
fn assert_strictly_ordered(ranking: &Ranking, kind: AttributeKind, channels: &[P]) {
    for pair in channels.windows(2) {
        let better = rank(ranking, kind, pair[0]);
        let worse = rank(ranking, kind, pair[1]);
        assert!(
            better.is_better_than(worse),
            "{} {kind:?}: {:?} (level {}) should rank above {:?} (level {})",
            ranking.id,
            pair[0],
            better.level,
            pair[1],
            worse.level
        );
    }
}

fn assert_tied(ranking: &Ranking, kind: AttributeKind, channels: &[P]) {
    let first = rank(ranking, kind, channels[0]);
    for channel in channels {
        let other = rank(ranking, kind, *channel);
        assert_eq!(
            other.level, first.level,
            "{} {kind:?}: {channel:?}",
            ranking.id
        );
        assert!(other.shares_level, "{} {kind:?}: {channel:?}", ranking.id);
    }
}

#[test]
fn rankings_are_selectable_by_id_and_cited() {
    assert_eq!(DEFAULT_RANKING_ID, "mackinlay-1986");
    for id in ["mackinlay-1986", "cleveland-mcgill-1984", "munzner-2014"] {
        let ranking = ranking_by_id(id).unwrap_or_else(|| panic!("missing ranking {id}"));
        assert_eq!(ranking.id, id);
        assert!(!ranking.citation.full.is_empty() && !ranking.title.is_empty());
        assert!(ranking.from_memory_note.contains("from memory"), "{id}");
    }
    assert_eq!(ALL_RANKINGS.len(), 3);
    assert!(ranking_by_id("Mackinlay-1986").is_none(), "ids are exact");
}

#[test]
fn mackinlay_1986_position_is_first_for_all_three_data_types() {
    // Mackinlay (1986), ranking figure: position heads the quantitative, ordinal and nominal
    // lists.
    for kind in [Quantitative, Ordered, Categorical] {
        assert_eq!(
            rank(&MACKINLAY_1986, kind, P::PositionCommonScale).level,
            1,
            "{kind:?}"
        );
        assert_eq!(
            MACKINLAY_1986.ordered_channels(kind)[0],
            P::PositionCommonScale
        );
        // Mackinlay has one "position": both of ours share it
        assert_tied(
            &MACKINLAY_1986,
            kind,
            &[P::PositionCommonScale, P::PositionUnalignedScale],
        );
    }
}

#[test]
fn mackinlay_1986_quantitative_order() {
    // Mackinlay (1986), quantitative list: position, length, angle, slope, area, volume,
    // density, colour saturation, colour hue, texture, connection, containment, shape.
    assert_eq!(
        MACKINLAY_1986.ordered_channels(Quantitative),
        vec![
            P::PositionCommonScale,
            P::PositionUnalignedScale,
            P::Length,
            P::Angle,
            P::Tilt,
            P::Area,
            P::Volume,
            P::Luminance,
            P::Saturation,
            P::Hue,
            P::Texture,
            P::Connection,
            P::Containment,
            P::Shape,
        ]
    );
    // the well-known facts: length above angle above area; colour below the sizes; shape last
    assert_strictly_ordered(
        &MACKINLAY_1986,
        Quantitative,
        &[
            P::Length,
            P::Angle,
            P::Area,
            P::Volume,
            P::Luminance,
            P::Hue,
            P::Shape,
        ],
    );
    assert_eq!(rank(&MACKINLAY_1986, Quantitative, P::Shape).level, 13);
    assert_eq!(
        rank(&MACKINLAY_1986, Quantitative, P::Shape).level_count,
        13
    );
}

#[test]
fn mackinlay_1986_ordinal_order() {
    // Mackinlay (1986), ordinal list: position, density, colour saturation, colour hue,
    // texture, connection, containment, length, angle, slope, area, volume, shape.
    assert_strictly_ordered(
        &MACKINLAY_1986,
        Ordered,
        &[
            P::PositionCommonScale,
            P::Luminance,
            P::Saturation,
            P::Hue,
            P::Texture,
            P::Connection,
            P::Containment,
            P::Length,
            P::Angle,
            P::Tilt,
            P::Area,
            P::Volume,
            P::Shape,
        ],
    );
    // density (grey value) is second for ordinal data
    assert_eq!(rank(&MACKINLAY_1986, Ordered, P::Luminance).level, 2);
    assert_eq!(
        MACKINLAY_1986.published_term(Ordered, P::Luminance),
        Some("density")
    );
}

#[test]
fn mackinlay_1986_nominal_order() {
    // Mackinlay (1986), nominal list: position, colour hue, texture, connection, containment,
    // density, colour saturation, shape, length, angle, slope, area, volume.
    assert_strictly_ordered(
        &MACKINLAY_1986,
        Categorical,
        &[
            P::PositionCommonScale,
            P::Hue,
            P::Texture,
            P::Connection,
            P::Containment,
            P::Luminance,
            P::Saturation,
            P::Shape,
            P::Length,
            P::Angle,
            P::Tilt,
            P::Area,
            P::Volume,
        ],
    );
    // hue is second for nominal data, above area and length
    assert_eq!(rank(&MACKINLAY_1986, Categorical, P::Hue).level, 2);
    assert_strictly_ordered(&MACKINLAY_1986, Categorical, &[P::Hue, P::Length]);
    assert_strictly_ordered(&MACKINLAY_1986, Categorical, &[P::Hue, P::Area]);
    // shape ranks above the sizes for nominal data but last for quantitative data
    assert_strictly_ordered(&MACKINLAY_1986, Categorical, &[P::Shape, P::Length]);
}

#[test]
fn cleveland_mcgill_1984_order_of_elementary_tasks() {
    // Cleveland & McGill (1984): 1 position along a common scale; 2 position along non-aligned
    // scales; 3 length, direction, angle; 4 area; 5 volume, curvature; 6 shading, colour
    // saturation.
    let ranking = &CLEVELAND_MCGILL_1984;
    assert_strictly_ordered(
        ranking,
        Quantitative,
        &[
            P::PositionCommonScale,
            P::PositionUnalignedScale,
            P::Length,
            P::Area,
            P::Volume,
            P::Luminance,
        ],
    );
    // tasks printed together are tied
    assert_tied(ranking, Quantitative, &[P::Length, P::Tilt, P::Angle]);
    assert_tied(ranking, Quantitative, &[P::Volume, P::Curvature]);
    assert_tied(ranking, Quantitative, &[P::Luminance, P::Saturation]);
    assert_strictly_ordered(ranking, Quantitative, &[P::Angle, P::Area]);
    assert_eq!(rank(ranking, Quantitative, P::PositionCommonScale).level, 1);
    assert!(!rank(ranking, Quantitative, P::PositionCommonScale).shares_level);
    assert_eq!(rank(ranking, Quantitative, P::Saturation).level, 6);
    assert_eq!(rank(ranking, Quantitative, P::Saturation).level_count, 6);
    // hue is not one of their elementary tasks, and they rank quantitative judgements only
    assert!(ranking.rank(Quantitative, P::Hue).is_none());
    assert!(ranking.rank(Categorical, P::PositionCommonScale).is_none());
    assert!(ranking.rank(Ordered, P::Length).is_none());
    assert!(ranking.ordered_channels(Categorical).is_empty());
}

#[test]
fn munzner_2014_magnitude_channels() {
    // Munzner (2014), figure 5.1, magnitude channels for ordered attributes: position on common
    // scale, position on unaligned scale, length, tilt/angle, area, depth, colour luminance,
    // colour saturation, curvature, volume.
    for kind in [Quantitative, Ordered] {
        assert_strictly_ordered(
            &MUNZNER_2014,
            kind,
            &[
                P::PositionCommonScale,
                P::PositionUnalignedScale,
                P::Length,
                P::Angle,
                P::Area,
                P::Depth,
                P::Luminance,
                P::Saturation,
                P::Curvature,
                P::Volume,
            ],
        );
        // "tilt/angle" is one entry of the figure
        assert_tied(&MUNZNER_2014, kind, &[P::Tilt, P::Angle]);
        // hue and shape are identity channels, not ranked for ordered attributes
        assert!(MUNZNER_2014.rank(kind, P::Hue).is_none());
        assert!(MUNZNER_2014.rank(kind, P::Shape).is_none());
    }
}

#[test]
fn munzner_2014_identity_channels() {
    // Munzner (2014), figure 5.1, identity channels for categorical attributes: spatial region,
    // colour hue, motion, shape.
    assert_strictly_ordered(
        &MUNZNER_2014,
        Categorical,
        &[P::SpatialRegion, P::Hue, P::Motion, P::Shape],
    );
    // our reading: a position axis carrying categories places them in regions
    assert_tied(
        &MUNZNER_2014,
        Categorical,
        &[P::SpatialRegion, P::PositionCommonScale],
    );
    // magnitude channels are not ranked for categories
    assert!(MUNZNER_2014.rank(Categorical, P::Length).is_none());
    assert!(MUNZNER_2014.rank(Categorical, P::Luminance).is_none());
}

#[test]
fn time_uses_the_quantitative_list_in_every_ranking() {
    // our mapping (documented in RankedGroup::for_kind): time is ranked as quantitative
    assert_eq!(RankedGroup::for_kind(Time), RankedGroup::Quantitative);
    assert_eq!(RankedGroup::for_kind(Ordered), RankedGroup::Ordinal);
    assert_eq!(RankedGroup::for_kind(Categorical), RankedGroup::Nominal);
    for ranking in ALL_RANKINGS {
        for channel in P::ALL {
            assert_eq!(
                ranking.rank(Time, channel),
                ranking.rank(Quantitative, channel),
                "{} {channel:?}",
                ranking.id
            );
        }
    }
}

#[test]
fn text_is_never_ranked() {
    // a label is read, not perceived (chart-spec design)
    for ranking in ALL_RANKINGS {
        for kind in AttributeKind::ALL {
            assert!(
                ranking.rank(kind, P::Text).is_none(),
                "{} {kind:?}",
                ranking.id
            );
        }
    }
}
