//! What the evaluation says a layer draws, read for the rules: how far each bar or area reaches
//! on its value channel (the stacked end for stacks), and which positions several rows share.
//! Everything here reads `LayerFacts::drawn`; without an evaluation the rules use the profile.

use std::collections::HashMap;

use crate::analysis::facts::LayerFacts;
use crate::analysis::rules::part_to_whole_invalid::format_number;
use crate::eval::{Datum, DrawnMark, EvaluatedLayer};
use crate::spec::model::{Channel, Mark};

/// A drawn value for messages: text as it is, numbers as [`format_number`], times as dates
/// (with the time of day when it is not midnight, UTC).
pub fn datum_text(datum: &Datum) -> Option<String> {
    match datum {
        Datum::Missing => None,
        Datum::Number(value) => Some(format_number(*value)),
        Datum::Text(text) => Some(text.to_string()),
        Datum::Time(seconds) => {
            if !seconds.is_finite() {
                return None;
            }
            let whole = seconds.floor() as i64;
            let days = whole.div_euclid(86_400);
            let in_day = whole.rem_euclid(86_400);
            let (year, month, day) = crate::draw::ticks::civil_from_days(days);
            Some(if in_day == 0 {
                format!("{year:04}-{month:02}-{day:02}")
            } else {
                format!(
                    "{year:04}-{month:02}-{day:02}T{:02}:{:02}Z",
                    in_day / 3600,
                    (in_day % 3600) / 60
                )
            })
        }
    }
}

/// How far one bar (or one vertex of an area) reaches on the value channel, and where it is.
#[derive(Clone, Debug, PartialEq)]
pub struct DrawnReach {
    /// The drawn value: the mark's value, or for stacks the end of the stack at that position.
    pub value: f64,
    /// Where it is drawn, for messages: the values of the channels that place it (`Millbrook`,
    /// `Millbrook, rye`), with the panel's label when there are panels.
    pub place: Option<String>,
    /// Rows of the data behind it.
    pub rows: u64,
}

/// The channels that place a layer's marks, apart from the value they show: the other position
/// channel and the series (colour, texture) channels for bars and areas, both positions for
/// cells, the splitting channels for wedges. `value_channel` is left out.
pub fn placing_channels(mark: Mark, value_channel: Channel) -> &'static [Channel] {
    const BAR_X: &[Channel] = &[
        Channel::X,
        Channel::Hue,
        Channel::Luminance,
        Channel::Saturation,
        Channel::Texture,
    ];
    const BAR_Y: &[Channel] = &[
        Channel::Y,
        Channel::Hue,
        Channel::Luminance,
        Channel::Saturation,
        Channel::Texture,
    ];
    const CELL: &[Channel] = &[Channel::X, Channel::Y];
    const WEDGE: &[Channel] = &[
        Channel::Hue,
        Channel::Texture,
        Channel::Luminance,
        Channel::Saturation,
        Channel::Label,
    ];
    match mark {
        Mark::Cell => CELL,
        Mark::Wedge => WEDGE,
        _ if value_channel == Channel::X => BAR_Y,
        _ => BAR_X,
    }
}

/// The key that places `mark` (its panel and the values of the placing channels present in the
/// layer), and those channels' indexes into the layer's channels.
fn placing_indexes(layer: &EvaluatedLayer, value_channel: Channel) -> Vec<usize> {
    placing_channels(layer.mark, value_channel)
        .iter()
        .filter(|channel| **channel != value_channel)
        .filter_map(|channel| layer.channel_index(*channel))
        .collect()
}

fn place_of(
    mark: &DrawnMark,
    indexes: &[usize],
    panel_labels: &[Option<String>],
) -> Option<String> {
    let mut parts: Vec<String> = indexes
        .iter()
        .filter_map(|index| mark.values.get(*index).and_then(datum_text))
        .collect();
    if let Some(Some(panel)) = panel_labels.get(mark.panel as usize) {
        parts.insert(0, panel.clone());
    }
    (!parts.is_empty()).then(|| parts.join(", "))
}

/// How far each bar or area vertex of `layer` reaches on `value_channel`, when the layer was
/// evaluated: one entry per mark, or for stacked layers one per stack (the end farthest up when
/// `upward`, else farthest down). `panel_labels` are the chart's panel labels (by index).
pub fn drawn_reaches(
    layer: &LayerFacts<'_>,
    value_channel: Channel,
    upward: bool,
    panel_labels: &[Option<String>],
) -> Option<Vec<DrawnReach>> {
    let drawn = layer.drawn?;
    let value_index = drawn.channel_index(value_channel)?;
    let stacked = drawn.arrange.is_some_and(|arrange| arrange.is_stacked());
    if !stacked {
        let indexes = placing_indexes(drawn, value_channel);
        return Some(
            drawn
                .marks
                .iter()
                .filter_map(|mark| {
                    let value = mark.values.get(value_index)?.as_f64()?;
                    value.is_finite().then(|| DrawnReach {
                        value,
                        place: place_of(mark, &indexes, panel_labels),
                        rows: mark.rows,
                    })
                })
                .collect(),
        );
    }
    // a stack is one bar: it reaches as far as its farthest segment end
    let position = if value_channel == Channel::X {
        Channel::Y
    } else {
        Channel::X
    };
    let indexes: Vec<usize> = drawn.channel_index(position).into_iter().collect();
    let mut stacks: Vec<DrawnReach> = Vec::new();
    let mut by_key: HashMap<(u32, Option<String>), usize> = HashMap::new();
    for mark in &drawn.marks {
        let Some(value) = mark.values.get(value_index).and_then(Datum::as_f64) else {
            continue;
        };
        if !value.is_finite() {
            continue;
        }
        let key_text = indexes
            .first()
            .and_then(|index| mark.values.get(*index))
            .and_then(datum_text);
        match by_key.get(&(mark.panel, key_text.clone())) {
            Some(&at) => {
                let stack = &mut stacks[at];
                stack.rows += mark.rows;
                if (upward && value > stack.value) || (!upward && value < stack.value) {
                    stack.value = value;
                }
            }
            None => {
                by_key.insert((mark.panel, key_text), stacks.len());
                stacks.push(DrawnReach {
                    value,
                    place: place_of(mark, &indexes, panel_labels),
                    rows: mark.rows,
                });
            }
        }
    }
    Some(stacks)
}

/// What [`drawn_min`] measures of each mark.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Measure {
    /// The value on the channel (for stacked layers the end of the segment).
    Values,
    /// The size of each mark's part: for stacked layers the segment's end minus its start.
    Parts,
}

/// The smallest number drawn on `channel` (with where), when the layer was evaluated and drew
/// some; marks not kept (a density grid) leave it to the profile.
pub fn drawn_min(
    layer: &LayerFacts<'_>,
    channel: Channel,
    measure: Measure,
    panel_labels: &[Option<String>],
) -> Option<DrawnReach> {
    let drawn = layer.drawn.filter(|drawn| drawn.density.is_none())?;
    let index = drawn.channel_index(channel)?;
    let placing = placing_indexes(drawn, channel);
    let mut smallest: Option<(f64, &DrawnMark)> = None;
    for mark in &drawn.marks {
        let Some(end) = mark.values.get(index).and_then(Datum::as_f64) else {
            continue;
        };
        let value = match measure {
            Measure::Values => end,
            Measure::Parts => end - mark.stack_start.unwrap_or(0.0),
        };
        if value.is_finite() && smallest.is_none_or(|(known, _)| value < known) {
            smallest = Some((value, mark));
        }
    }
    let (value, mark) = smallest?;
    Some(DrawnReach {
        value,
        place: place_of(mark, &placing, panel_labels),
        rows: mark.rows,
    })
}

/// " (at `Quayside`)" or " (at `Quayside`, in the sampled head of the data)" for a drawn value
/// named in a message; empty when there is nothing to say.
pub fn drawn_place(layer: &LayerFacts<'_>, reach: &DrawnReach) -> String {
    let sample = layer
        .drawn_from_sample
        .then_some("in the sampled head of the data");
    let place = reach.place.as_ref().map(|place| format!("at `{place}`"));
    match (place, sample) {
        (Some(place), Some(sample)) => format!(" ({place}, {sample})"),
        (Some(place), None) => format!(" ({place})"),
        (None, Some(sample)) => format!(" ({sample})"),
        (None, None) => String::new(),
    }
}

/// Positions where several rows are drawn on one mark, or several marks on one position.
#[derive(Clone, Debug, PartialEq)]
pub struct SharedPositions {
    /// Positions drawn (distinct keys).
    pub positions: usize,
    /// Positions with more than one row.
    pub shared: usize,
    /// The most rows at one position, and where.
    pub most_rows: u64,
    pub most_rows_place: Option<String>,
}

/// A panel and the drawn text of each placing value (a missing value is a key too).
type PlaceKey = (u32, Vec<Option<String>>);

/// Which positions of an evaluated layer hold more than one row: a mark that stands for several
/// rows, or several marks with the same panel and the same values on every placing channel.
/// `None` without an evaluation or when the layer's marks were not kept (density grid).
pub fn shared_positions(
    layer: &LayerFacts<'_>,
    value_channel: Channel,
    panel_labels: &[Option<String>],
) -> Option<SharedPositions> {
    let drawn = layer.drawn?;
    if drawn.density.is_some() {
        return None;
    }
    let indexes = placing_indexes(drawn, value_channel);
    // the key keeps the drawn text of each placing value (missing values are a key too)
    let mut rows_at: HashMap<PlaceKey, (u64, usize)> = HashMap::new();
    for (at, mark) in drawn.marks.iter().enumerate() {
        let key: Vec<Option<String>> = indexes
            .iter()
            .map(|index| mark.values.get(*index).and_then(datum_text))
            .collect();
        rows_at
            .entry((mark.panel, key))
            .and_modify(|(rows, _)| *rows += mark.rows.max(1))
            .or_insert((mark.rows.max(1), at));
    }
    let mut found = SharedPositions {
        positions: rows_at.len(),
        shared: 0,
        most_rows: 0,
        most_rows_place: None,
    };
    // the first mark drawn wins a tie, so the message does not depend on the map's order
    let mut most: Option<(u64, usize)> = None;
    for (rows, first) in rows_at.values() {
        if *rows > 1 {
            found.shared += 1;
        }
        let better = match most {
            None => true,
            Some((most_rows, most_first)) => {
                *rows > most_rows || (*rows == most_rows && *first < most_first)
            }
        };
        if better {
            most = Some((*rows, *first));
        }
    }
    if let Some((rows, first)) = most {
        found.most_rows = rows;
        found.most_rows_place = drawn
            .marks
            .get(first)
            .and_then(|mark| place_of(mark, &indexes, panel_labels));
    }
    Some(found)
}

/// The panel labels of the evaluated chart the facts came from, by index (empty without one).
pub fn panel_labels(evaluation: Option<&crate::eval::EvaluatedChart>) -> Vec<Option<String>> {
    evaluation
        .map(|chart| {
            chart
                .panels
                .iter()
                .map(|panel| panel.label.clone())
                .collect()
        })
        .unwrap_or_default()
}

/// Evaluations built by hand for the rules' unit tests.
#[cfg(test)]
pub(crate) mod testing {
    use std::sync::Arc;

    use crate::eval::{
        ChannelInfo, Datum, Domain, DrawnMark, EvaluatedChart, EvaluatedLayer, PanelInfo,
    };
    use crate::spec::model::{Arrange, AttributeKind, Channel, Mark, Summary};

    pub fn text(value: &str) -> Datum {
        Datum::Text(Arc::from(value))
    }

    pub fn channel(channel: Channel, column: &str, summary: Option<Summary>) -> ChannelInfo {
        ChannelInfo {
            channel,
            column: Some(column.to_string()),
            summary,
            bins: None,
            kind: if summary.is_some() {
                AttributeKind::Quantitative
            } else {
                AttributeKind::Categorical
            },
            title: column.to_string(),
            domain: Domain::Empty,
            spacing: None,
            extent: None,
            from_zero: true,
            flip: false,
            palette: None,
        }
    }

    /// A mark in panel 0, series 0.
    pub fn mark(values: Vec<Datum>, rows: u64) -> DrawnMark {
        DrawnMark {
            panel: 0,
            values,
            stack_start: None,
            series: 0,
            rows,
        }
    }

    pub fn layer(
        mark: Mark,
        arrange: Option<Arrange>,
        channels: Vec<ChannelInfo>,
        marks: Vec<DrawnMark>,
    ) -> EvaluatedLayer {
        let rows_read = marks.iter().map(|mark| mark.rows).sum();
        EvaluatedLayer {
            index: 0,
            mark,
            arrange,
            channels,
            marks,
            density: None,
            rows_read,
            rows_left_out: 0,
            approximations: Vec::new(),
        }
    }

    pub fn chart(layers: Vec<EvaluatedLayer>) -> EvaluatedChart {
        EvaluatedChart {
            title: None,
            description: None,
            width: 640.0,
            height: 400.0,
            background: "#ffffff".to_string(),
            panels: vec![PanelInfo { label: None }],
            layers,
            is_sample: false,
            notes: Vec::new(),
            timed_out: Vec::new(),
            time_budget: crate::budget::TimeBudget::DEFAULT_EVALUATION,
        }
    }
}
