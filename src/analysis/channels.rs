//! Channel helpers the rules share: what the eye reads for a binding (through
//! `knowledge::perceived`), the active ranking, which channels a mark can draw, which are free,
//! and the edits that move or swap bindings.

use crate::analysis::facts::{BindingFacts, LayerFacts};
use crate::analysis::AnalysisConfig;
use crate::diagnostic::{Fix, TextEdit};
use crate::knowledge::perceived::{perceived_channel, ChannelContext, PerceivedChannel};
use crate::knowledge::rankings::{ranking_by_id, Ranking, DEFAULT_RANKING_ID, MACKINLAY_1986};
use crate::spec::model::{AttributeKind, Channel, ChartSpec, Mark};
use crate::spec::schema::json_string;

/// The ranking the configuration selects (an unknown id falls back to the default; the
/// configuration loader reports it).
pub fn active_ranking(config: &AnalysisConfig) -> &'static Ranking {
    config
        .ranking
        .as_deref()
        .and_then(ranking_by_id)
        .or_else(|| ranking_by_id(DEFAULT_RANKING_ID))
        .unwrap_or(&MACKINLAY_1986)
}

/// The context `knowledge::perceived` needs for a binding of a layer.
pub fn channel_context(
    spec: &ChartSpec,
    layer: &LayerFacts<'_>,
    channel: Channel,
    summarised: bool,
) -> Option<ChannelContext> {
    Some(ChannelContext {
        mark: layer.mark()?,
        channel,
        arrange: layer.layer.arrange.as_ref().map(|arrange| arrange.value),
        in_panels: spec.panels.is_some(),
        value_axis: layer.value_axis(),
        binding_is_summarised: summarised,
    })
}

/// What the eye reads for a binding.
pub fn perceived_for(
    spec: &ChartSpec,
    layer: &LayerFacts<'_>,
    facts: &BindingFacts<'_>,
) -> Option<PerceivedChannel> {
    let context = channel_context(
        spec,
        layer,
        facts.binding.channel,
        facts.binding.summary.is_some(),
    )?;
    Some(perceived_channel(&context))
}

/// The channels each mark can draw: the knowledge table
/// [`crate::knowledge::perceived::MARK_CHANNELS`].
pub fn channels_for_mark(mark: Mark) -> &'static [Channel] {
    crate::knowledge::perceived::channels_of_mark(mark)
}

/// Channels of the layer's mark that no binding uses.
pub fn free_channels(layer: &LayerFacts<'_>) -> Vec<Channel> {
    let Some(mark) = layer.mark() else {
        return Vec::new();
    };
    channels_for_mark(mark)
        .iter()
        .copied()
        .filter(|channel| layer.binding(*channel).is_none())
        .collect()
}

/// The perceived channel a binding would have on `channel` instead, everything else equal.
/// Moving to a position channel makes that axis the value axis when the values are magnitudes.
pub fn perceived_if_moved(
    spec: &ChartSpec,
    layer: &LayerFacts<'_>,
    facts: &BindingFacts<'_>,
    channel: Channel,
) -> Option<PerceivedChannel> {
    let mut context = channel_context(spec, layer, channel, facts.binding.summary.is_some())?;
    if channel.is_position() && context.value_axis.is_none() && facts.is_magnitude() {
        context.value_axis = Some(channel);
    }
    Some(perceived_channel(&context))
}

/// A fix that renames a binding's key to `channel` (the value stays as written).
pub fn move_binding_fix(facts: &BindingFacts<'_>, channel: Channel) -> Fix {
    Fix::quick(
        format!(
            "move `{}` from `{}` to `{}`",
            facts.display_name(),
            facts.binding.channel.as_str(),
            channel.as_str()
        ),
        vec![TextEdit {
            range: facts.binding.key_range,
            new_text: json_string(channel.as_str()),
        }],
    )
}

/// A fix that swaps the channels of two bindings (by swapping their keys).
pub fn swap_bindings_fix(first: &BindingFacts<'_>, second: &BindingFacts<'_>) -> Fix {
    let mut edits = vec![
        TextEdit {
            range: first.binding.key_range,
            new_text: json_string(second.binding.channel.as_str()),
        },
        TextEdit {
            range: second.binding.key_range,
            new_text: json_string(first.binding.channel.as_str()),
        },
    ];
    edits.sort_by_key(|edit| edit.range.start);
    Fix::quick(
        format!(
            "swap `{}` and `{}` between `{}` and `{}`",
            first.display_name(),
            second.display_name(),
            first.binding.channel.as_str(),
            second.binding.channel.as_str()
        ),
        edits,
    )
}

/// "quantitative" / "ordered" / ... with an article for messages.
pub fn kind_phrase(kind: AttributeKind) -> &'static str {
    match kind {
        AttributeKind::Categorical => "a categorical",
        AttributeKind::Ordered => "an ordered",
        AttributeKind::Quantitative => "a quantitative",
        AttributeKind::Time => "a time",
    }
}

/// "1st", "2nd", "3rd", ...
pub fn ordinal(number: u8) -> String {
    let suffix = match (number % 10, number % 100) {
        (1, 11) | (2, 12) | (3, 13) => "th",
        (1, _) => "st",
        (2, _) => "nd",
        (3, _) => "rd",
        _ => "th",
    };
    format!("{number}{suffix}")
}

/// A fix that redraws a wedge layer as bars: the mark becomes `bar`, the `angle` binding moves
/// to `y` and the binding that splits the slices (the first categorical colour, texture or
/// label binding) moves to `x`, when those channels are free. The title lists every edit.
pub fn arc_to_bar_fix(layer: &LayerFacts<'_>) -> Option<Fix> {
    let mark = layer.layer.mark.as_ref()?;
    let mut edits = vec![TextEdit {
        range: mark.range,
        new_text: json_string(Mark::Bar.as_str()),
    }];
    let mut changes = vec![format!(
        "mark `{}`->`{}`",
        mark.value.as_str(),
        Mark::Bar.as_str()
    )];
    if let (Some(angle), None) = (layer.binding(Channel::Angle), layer.binding(Channel::Y)) {
        edits.push(TextEdit {
            range: angle.binding.key_range,
            new_text: json_string(Channel::Y.as_str()),
        });
        changes.push(format!(
            "`{}`->`{}`",
            Channel::Angle.as_str(),
            Channel::Y.as_str()
        ));
    }
    if layer.binding(Channel::X).is_none() {
        let splitter = [
            Channel::Hue,
            Channel::Texture,
            Channel::Luminance,
            Channel::Saturation,
            Channel::Label,
        ]
        .into_iter()
        .filter_map(|channel| layer.binding(channel))
        .find(|facts| facts.kind == Some(AttributeKind::Categorical) || facts.kind.is_none());
        if let Some(splitter) = splitter {
            edits.push(TextEdit {
                range: splitter.binding.key_range,
                new_text: json_string(Channel::X.as_str()),
            });
            changes.push(format!(
                "`{}`->`{}`",
                splitter.binding.channel.as_str(),
                Channel::X.as_str()
            ));
        }
    }
    edits.sort_by_key(|edit| edit.range.start);
    Some(Fix::quick(
        format!("draw bars: {}", changes.join(", ")),
        edits,
    ))
}

/// A fix that sets a stacked layer's `arrange` to side by side (bars) or overlap (areas).
pub fn unstack_fix(layer: &LayerFacts<'_>) -> Option<Fix> {
    let arrange = layer.layer.arrange.as_ref()?;
    let replacement = match layer.mark()? {
        Mark::Area => crate::spec::model::Arrange::Overlap,
        _ => crate::spec::model::Arrange::SideBySide,
    };
    Some(Fix::quick(
        format!(
            "stop stacking the series: arrange `{}`->`{}`",
            arrange.value.as_str(),
            replacement.as_str()
        ),
        vec![TextEdit {
            range: arrange.range,
            new_text: json_string(replacement.as_str()),
        }],
    ))
}

/// The binding whose values a layer's marks are sized by: `angle` for arcs, the value axis for
/// bars and areas.
pub fn magnitude_binding<'l, 'a>(layer: &'l LayerFacts<'a>) -> Option<&'l BindingFacts<'a>> {
    match layer.mark()? {
        Mark::Wedge => layer.binding(Channel::Angle),
        Mark::Bar | Mark::Area => layer.binding(layer.value_axis()?),
        _ => None,
    }
}

/// Every binding whose channel misleads for its kind for `reason`, with the free channel that
/// would express it (the first of the mark's channels that does, label left out): the shared
/// walk of the two expressiveness rules.
pub fn misleading_bindings<'c, 'a>(
    spec: &ChartSpec,
    layers: &'c [LayerFacts<'a>],
    reason: crate::knowledge::expressiveness::MisleadingReason,
) -> Vec<MisleadingBinding<'c, 'a>> {
    use crate::knowledge::expressiveness::{expresses, Expressiveness};
    let mut found = Vec::new();
    for layer in layers {
        for facts in &layer.bindings {
            let (Some(kind), Some(perceived)) = (facts.kind, perceived_for(spec, layer, facts))
            else {
                continue;
            };
            if expresses(kind, perceived) != Expressiveness::Misleading(reason) {
                continue;
            }
            let better_free_channel = free_channels(layer).into_iter().find(|channel| {
                *channel != Channel::Label
                    && perceived_if_moved(spec, layer, facts, *channel)
                        .is_some_and(|moved| expresses(kind, moved) == Expressiveness::Good)
            });
            found.push(MisleadingBinding {
                facts,
                kind,
                perceived,
                better_free_channel,
            });
        }
    }
    found
}

/// A binding on a channel that cannot express its kind.
pub struct MisleadingBinding<'c, 'a> {
    pub facts: &'c BindingFacts<'a>,
    pub kind: AttributeKind,
    pub perceived: PerceivedChannel,
    pub better_free_channel: Option<Channel>,
}

/// The range that removes the member at `member_range` from its object together with the comma
/// that separates it from a neighbour (the one before it, else the one after it).
pub fn member_removal_range(
    tree: &crate::syntax::SyntaxTree,
    member_range: crate::text_range::TextRange,
) -> Option<crate::text_range::TextRange> {
    use crate::syntax::NodeKind;
    use crate::text_range::TextRange;
    let mut node = tree.node_at_offset(member_range.start);
    while !(node.kind() == NodeKind::Member && node.range() == member_range) {
        node = node.parent()?;
    }
    let object = node.parent()?;
    let members: Vec<TextRange> = object.members().map(|member| member.range()).collect();
    let index = members.iter().position(|range| *range == member_range)?;
    Some(match (index.checked_sub(1), members.get(index + 1)) {
        (Some(previous), _) => TextRange::new(members[previous].end, member_range.end),
        (None, Some(next)) => TextRange::new(member_range.start, next.start),
        (None, None) => member_range,
    })
}

/// A fix that removes a binding (and its separating comma) from `bind`.
pub fn remove_binding_fix(
    tree: &crate::syntax::SyntaxTree,
    facts: &BindingFacts<'_>,
) -> Option<Fix> {
    let range = member_removal_range(tree, facts.binding.member_range)?;
    Some(Fix::quick(
        format!(
            "remove the `{}` binding of `{}`",
            facts.binding.channel.as_str(),
            facts.display_name()
        ),
        vec![TextEdit {
            range,
            new_text: String::new(),
        }],
    ))
}

/// The names of what a layer draws, one and many, for messages: `bar`/`bars`, `circle`/`circles`
/// (points sized by `area`; `symbol` when `shape` varies), `label`/`labels` (text), `slice` for
/// the parts of a pie.
pub fn drawn_nouns(layer: &LayerFacts<'_>) -> (String, String) {
    let (one, many) = match layer.mark() {
        Some(Mark::Bar) => ("bar", "bars"),
        Some(Mark::Area) => ("filled area", "filled areas"),
        Some(Mark::Line) => ("line", "lines"),
        Some(Mark::Wedge) => ("slice", "slices"),
        Some(Mark::Point) if layer.binding(Channel::Shape).is_some() => ("symbol", "symbols"),
        Some(Mark::Point) => ("circle", "circles"),
        Some(Mark::Text) => ("label", "labels"),
        Some(mark) => return (mark.as_str().to_string(), format!("{}s", mark.as_str())),
        None => ("mark", "marks"),
    };
    (one.to_string(), many.to_string())
}

/// "a bar twice as long", "a circle twice the size", "an area twice as large": how a doubled
/// value looks for what the layer draws on a channel read as `perceived`.
pub fn twice_as_much_phrase(layer: &LayerFacts<'_>, perceived: PerceivedChannel) -> String {
    let (one, _) = drawn_nouns(layer);
    let article = if one.starts_with(['a', 'e', 'i', 'o', 'u']) {
        "an"
    } else {
        "a"
    };
    let how = match perceived {
        PerceivedChannel::Length => "twice as long",
        PerceivedChannel::Angle => "twice as wide",
        PerceivedChannel::Area if layer.mark() == Some(Mark::Area) => "twice as large",
        _ => "twice the size",
    };
    format!("{article} {one} {how}")
}
