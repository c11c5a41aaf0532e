//! Perceived channels (mark + key → what the eye reads), expressiveness and Bertin's table,
//! as data-driven cases with the source of each expectation beside it.

use markwell::knowledge::bertin::{
    bertin_variable_for, BertinVariable, LevelOfOrganisation, Support, BERTIN_TABLE,
};
use markwell::knowledge::expressiveness::{
    channel_nature, expresses, ChannelNature, Expressiveness, MisleadingReason,
};
use markwell::knowledge::perceived::{
    baseline_sharing, perceived_channel, BaselineSharing, ChannelContext, PerceivedChannel as P,
};
use markwell::knowledge::rankings::MUNZNER_2014;
use markwell::spec::model::{Arrange, AttributeKind, Channel, Mark};

/// One case: a binding and the perceived channel expected for it.
struct Case {
    mark: Mark,
    channel: Channel,
    arrange: Option<Arrange>,
    in_panels: bool,
    value_axis: Option<Channel>,
    expected: P,
    source: &'static str,
}

const fn case(
    mark: Mark,
    channel: Channel,
    value_axis: Option<Channel>,
    expected: P,
    source: &'static str,
) -> Case {
    Case {
        mark,
        channel,
        arrange: None,
        in_panels: false,
        value_axis,
        expected,
        source,
    }
}

fn context_of(case: &Case) -> ChannelContext {
    ChannelContext {
        mark: case.mark,
        channel: case.channel,
        arrange: case.arrange,
        in_panels: case.in_panels,
        value_axis: case.value_axis,
        binding_is_summarised: false,
    }
}

const CHART_SPEC: &str = "chart-spec design, 'what the mark does to the channel'";
const CM_1984: &str = "Cleveland & McGill (1984), common vs non-aligned scales";

#[test]
fn perceived_channel_cases() {
    let y = Some(Channel::Y);
    let x = Some(Channel::X);
    let mut cases = vec![
        // a point on y is read by position
        case(
            Mark::Point,
            Channel::Y,
            None,
            P::PositionCommonScale,
            CHART_SPEC,
        ),
        case(
            Mark::Point,
            Channel::X,
            None,
            P::PositionCommonScale,
            CHART_SPEC,
        ),
        case(Mark::Line, Channel::Y, y, P::PositionCommonScale, CM_1984),
        case(Mark::Line, Channel::X, y, P::PositionCommonScale, CM_1984),
        case(
            Mark::Cell,
            Channel::X,
            None,
            P::PositionCommonScale,
            CM_1984,
        ),
        case(
            Mark::Text,
            Channel::Y,
            None,
            P::PositionCommonScale,
            CM_1984,
        ),
        case(
            Mark::Segment,
            Channel::Y,
            y,
            P::PositionCommonScale,
            CM_1984,
        ),
        // a bar on its value axis is read by its length from the baseline
        case(Mark::Bar, Channel::Y, y, P::Length, CHART_SPEC),
        case(
            Mark::Bar,
            Channel::X,
            x,
            P::Length,
            "horizontal bars; chart-spec design",
        ),
        // the category axis of a bar chart is a position
        case(Mark::Bar, Channel::X, y, P::PositionCommonScale, CHART_SPEC),
        // an area mark on y is read by its area
        case(Mark::Area, Channel::Y, y, P::Area, CHART_SPEC),
        case(
            Mark::Area,
            Channel::X,
            y,
            P::PositionCommonScale,
            CHART_SPEC,
        ),
        // an arc by its angle (and area)
        case(Mark::Wedge, Channel::Angle, None, P::Angle, CHART_SPEC),
        // same-named channels
        case(Mark::Point, Channel::Area, None, P::Area, CHART_SPEC),
        case(Mark::Point, Channel::Hue, None, P::Hue, CHART_SPEC),
        case(
            Mark::Cell,
            Channel::Luminance,
            None,
            P::Luminance,
            CHART_SPEC,
        ),
        case(
            Mark::Point,
            Channel::Saturation,
            None,
            P::Saturation,
            CHART_SPEC,
        ),
        case(Mark::Point, Channel::Shape, None, P::Shape, CHART_SPEC),
        case(Mark::Bar, Channel::Texture, y, P::Texture, CHART_SPEC),
        case(Mark::Point, Channel::Tilt, None, P::Tilt, CHART_SPEC),
        // a label is text, not a perceptual channel
        case(Mark::Text, Channel::Label, None, P::Text, CHART_SPEC),
        case(Mark::Bar, Channel::Label, y, P::Text, CHART_SPEC),
    ];
    // stacked and filled bars stay lengths (Cleveland & McGill 1984 class divided-bar segments
    // as length judgements; from memory); stacked areas stay areas (chart-spec design)
    for arrange in [
        Arrange::Stack,
        Arrange::Share,
        Arrange::SideBySide,
        Arrange::Overlap,
    ] {
        let mut bar = case(Mark::Bar, Channel::Y, y, P::Length, CM_1984);
        bar.arrange = Some(arrange);
        cases.push(bar);
        let mut area = case(Mark::Area, Channel::Y, y, P::Area, CHART_SPEC);
        area.arrange = Some(arrange);
        cases.push(area);
    }
    // in panels the value axis is read on non-aligned scales (Cleveland & McGill 1984)
    let mut panel_line_value = case(
        Mark::Line,
        Channel::Y,
        y,
        P::PositionUnalignedScale,
        CM_1984,
    );
    panel_line_value.in_panels = true;
    cases.push(panel_line_value);
    let mut panel_line_time = case(Mark::Line, Channel::X, y, P::PositionCommonScale, CM_1984);
    panel_line_time.in_panels = true;
    cases.push(panel_line_time);
    // a scatterplot in panels: both axes carry values
    for channel in [Channel::X, Channel::Y] {
        let mut scatter = case(
            Mark::Point,
            channel,
            None,
            P::PositionUnalignedScale,
            CM_1984,
        );
        scatter.in_panels = true;
        cases.push(scatter);
    }
    // bars in panels are still lengths (read from each panel's own baseline)
    let mut panel_bar = case(Mark::Bar, Channel::Y, y, P::Length, CHART_SPEC);
    panel_bar.in_panels = true;
    cases.push(panel_bar);

    let mut failures = Vec::new();
    for case in &cases {
        let got = perceived_channel(&context_of(case));
        if got != case.expected {
            failures.push(format!(
                "{:?} on {:?} (arrange {:?}, panels {}, value axis {:?}): got {got:?}, \
                 expected {:?} ({})",
                case.mark,
                case.channel,
                case.arrange,
                case.in_panels,
                case.value_axis,
                case.expected,
                case.source
            ));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn every_spec_key_maps_to_a_reachable_channel() {
    for mark in Mark::ALL {
        for channel in Channel::ALL {
            for value_axis in [None, Some(Channel::X), Some(Channel::Y)] {
                let context = ChannelContext {
                    mark: *mark,
                    channel: *channel,
                    arrange: None,
                    in_panels: false,
                    value_axis,
                    binding_is_summarised: false,
                };
                assert!(perceived_channel(&context).is_reachable_from_spec());
            }
        }
    }
}

#[test]
fn only_stacked_layers_lose_the_common_baseline() {
    // stacked-comparison: only the bottom series sits on the common baseline (Cleveland &
    // McGill 1984, divided bar charts; from memory)
    let stacked_bar = ChannelContext {
        mark: Mark::Bar,
        channel: Channel::Y,
        arrange: Some(Arrange::Stack),
        in_panels: false,
        value_axis: Some(Channel::Y),
        binding_is_summarised: false,
    };
    assert_eq!(
        baseline_sharing(&stacked_bar),
        BaselineSharing::BottomSeriesOnly
    );
    let filled_area = ChannelContext {
        mark: Mark::Area,
        arrange: Some(Arrange::Share),
        ..stacked_bar
    };
    assert_eq!(
        baseline_sharing(&filled_area),
        BaselineSharing::BottomSeriesOnly
    );
    let side_by_side = ChannelContext {
        arrange: Some(Arrange::SideBySide),
        ..stacked_bar
    };
    assert_eq!(baseline_sharing(&side_by_side), BaselineSharing::AllSeries);
    let category_axis = ChannelContext {
        channel: Channel::X,
        ..stacked_bar
    };
    assert_eq!(
        baseline_sharing(&category_axis),
        BaselineSharing::NotApplicable
    );
    let points = ChannelContext {
        mark: Mark::Point,
        ..stacked_bar
    };
    assert_eq!(baseline_sharing(&points), BaselineSharing::NotApplicable);
}

#[test]
fn expressiveness_cases() {
    use AttributeKind::{Categorical, Ordered, Quantitative, Time};
    let misleading_order = Expressiveness::Misleading(MisleadingReason::ImpliesOrderTheDataLacks);
    let loses_order = Expressiveness::Misleading(MisleadingReason::CannotShowOrder);
    let cases = [
        // position expresses everything (Mackinlay 1986: first for all three types)
        (Categorical, P::PositionCommonScale, Expressiveness::Good),
        (
            Quantitative,
            P::PositionUnalignedScale,
            Expressiveness::Good,
        ),
        // magnitude channels for ordered data (Munzner 2014; Bertin 1967 size and value ordered)
        (Quantitative, P::Length, Expressiveness::Good),
        (Ordered, P::Luminance, Expressiveness::Good),
        (Time, P::Area, Expressiveness::Good),
        // ... imply an order categories lack (Munzner 2014; Bertin 1967)
        (Categorical, P::Area, misleading_order),
        (Categorical, P::Length, misleading_order),
        (Categorical, P::Luminance, misleading_order),
        (Categorical, P::Saturation, misleading_order),
        (Categorical, P::Angle, misleading_order),
        // identity channels for categories (Munzner 2014; Bertin 1967 colour, shape)
        (Categorical, P::Hue, Expressiveness::Good),
        (Categorical, P::Shape, Expressiveness::Good),
        (Categorical, P::Texture, Expressiveness::Good),
        // ... cannot show order (Bertin 1967: colour and shape are not ordered)
        (Quantitative, P::Hue, loses_order),
        (Ordered, P::Shape, loses_order),
        (Time, P::Texture, loses_order),
        // text is not perceptual (chart-spec design)
        (Quantitative, P::Text, Expressiveness::NotPerceptual),
    ];
    for (kind, channel, expected) in cases {
        assert_eq!(
            expresses(kind, channel),
            expected,
            "{kind:?} on {channel:?}"
        );
    }
    // tilt: Munzner (2014) magnitude, Bertin (1967) orientation not ordered
    assert!(matches!(
        expresses(AttributeKind::Quantitative, P::Tilt),
        Expressiveness::Disputed(_)
    ));
}

#[test]
fn expressiveness_agrees_with_munzner_lists() {
    // Munzner (2014): channels of the magnitude list are for ordered attributes, channels of
    // the identity list for categorical ones.
    for kind in [AttributeKind::Quantitative, AttributeKind::Ordered] {
        for channel in MUNZNER_2014.ordered_channels(kind) {
            assert!(!expresses(kind, channel).is_misleading(), "{channel:?}");
        }
    }
    for channel in MUNZNER_2014.ordered_channels(AttributeKind::Categorical) {
        assert!(
            !expresses(AttributeKind::Categorical, channel).is_misleading(),
            "{channel:?}"
        );
    }
}

#[test]
fn expressiveness_agrees_with_bertin_on_order() {
    // Bertin (1967): magnitude channels map to variables with the ordered level; identity
    // channels to variables without it, except texture (Bertin's grain is ordered; the spec's
    // texture key assigns distinct patterns, see channel_nature) and spatial region (Munzner's
    // categorical use of the planar dimensions, which allow every level).
    for channel in P::ALL {
        let Some(variable) = bertin_variable_for(channel) else {
            continue;
        };
        let ordered = variable
            .supports(LevelOfOrganisation::Ordered)
            .is_supported();
        match channel_nature(channel) {
            ChannelNature::Magnitude | ChannelNature::Both => {
                assert!(ordered, "{channel:?} / {variable:?}")
            }
            ChannelNature::Identity if !matches!(channel, P::Texture | P::SpatialRegion) => {
                assert!(!ordered, "{channel:?} / {variable:?}")
            }
            _ => {}
        }
    }
}

#[test]
fn bertin_1967_levels_of_organisation() {
    use LevelOfOrganisation::{Associative, Ordered, Quantitative, Selective};
    // Bertin (1967), from memory: (variable, associative, selective, ordered, quantitative)
    let expected = [
        (BertinVariable::PlanarDimensions, true, true, true, true),
        (BertinVariable::Size, false, true, true, true),
        (BertinVariable::Value, false, true, true, false),
        (BertinVariable::Texture, true, true, true, false),
        (BertinVariable::Colour, true, true, false, false),
        (BertinVariable::Orientation, true, true, false, false),
        (BertinVariable::Shape, true, false, false, false),
    ];
    assert_eq!(expected.len(), BERTIN_TABLE.len());
    for (variable, associative, selective, ordered, quantitative) in expected {
        assert_eq!(
            variable.supports(Associative).is_supported(),
            associative,
            "{variable:?}"
        );
        assert_eq!(
            variable.supports(Selective).is_supported(),
            selective,
            "{variable:?}"
        );
        assert_eq!(
            variable.supports(Ordered).is_supported(),
            ordered,
            "{variable:?}"
        );
        assert_eq!(
            variable.supports(Quantitative).is_supported(),
            quantitative,
            "{variable:?}"
        );
    }
    // orientation is selective only with a restriction (points and lines)
    assert!(matches!(
        BertinVariable::Orientation.supports(Selective),
        Support::Restricted(_)
    ));
    // sizes of every dimension are Bertin's size variable
    for channel in [P::Length, P::Area, P::Volume] {
        assert_eq!(bertin_variable_for(channel), Some(BertinVariable::Size));
    }
    assert_eq!(
        bertin_variable_for(P::Luminance),
        Some(BertinVariable::Value)
    );
    assert_eq!(bertin_variable_for(P::Hue), Some(BertinVariable::Colour));
    assert_eq!(bertin_variable_for(P::Text), None);
}
