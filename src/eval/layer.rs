//! Evaluating one layer: which bindings group the rows and which are summarised, one streaming
//! pass over the rows (after a short probe for the kinds the spec does not declare, and a pass
//! for the extent of binned columns), then the marks, their order, the arrangement and the
//! domains.
//!
//! Memory: bounded by the number of groups (at most [`MAX_GROUPS`] per layer, and as many values
//! per key channel), by the exact budget for medians and distinct counts, and for layers of one
//! mark per row by `max_kept_marks` marks, then a fixed density grid per panel for at most
//! `density::MAX_DENSITY_PANELS` panels. Never by the rows.

use std::collections::HashMap;

use hashbrown::HashTable;
use std::sync::Arc;

use super::bins::Bins;
use super::density::{grid_spacing, to_grid_units, DoublingGrid, MAX_DENSITY_PANELS};
use super::model::*;
use super::quantile::DEFAULT_RANK_ERROR;
use super::summary::{Accumulator, CellValue};
use super::{EvalOptions, OpenRows};
use crate::data::infer::{
    is_missing_token, ordinal_vocabulary_of, parse_iso_time, parse_number, trim_cell,
};
use crate::data::profile::{decide_kind, KindCounts, ALL_VALUES_CAP};
use crate::data::rows::RowSource;
use crate::data::sketch::{hash_bytes, hash_number_bits};
use crate::knowledge::perceived::mark_shows;
use crate::spec::model::*;

/// Groups (and values per key channel) kept per layer; rows of further groups are left out with
/// a note. Common practice, no source: a million bars cannot be told apart on any screen.
pub const MAX_GROUPS: usize = 1_000_000;
/// Rows read to tell a column's kind when the spec does not declare it (the profile's rules
/// applied to the first rows).
pub const KIND_PROBE_ROWS: u64 = 50_000;
/// Id of a missing value on a key channel.
const MISSING_ID: u32 = u32::MAX;

/// What the first rows of an undeclared column hold, for its kind: the profile's rules
/// (`data::profile::decide_kind`) over the same cell readings.
#[derive(Default)]
struct KindProbe {
    present: u64,
    numbers: u64,
    times: u64,
    /// Distinct texts while there are at most `ALL_VALUES_CAP` (the ordinal vocabularies).
    texts: std::collections::HashSet<Box<str>>,
    too_many_texts: bool,
}

impl KindProbe {
    fn add(&mut self, cell: Option<&str>) {
        let Some(trimmed) = cell.map(trim_cell).filter(|text| !is_missing_token(text)) else {
            return;
        };
        self.present += 1;
        if parse_number(trimmed).is_some() {
            self.numbers += 1;
            return;
        }
        if parse_iso_time(trimmed).is_some() {
            self.times += 1;
        }
        if !self.too_many_texts && !self.texts.contains(trimmed) {
            if self.texts.len() >= ALL_VALUES_CAP {
                self.too_many_texts = true;
                self.texts.clear();
            } else {
                self.texts.insert(Box::from(trimmed));
            }
        }
    }

    fn kind(&self) -> AttributeKind {
        let share = |count: u64| {
            if self.present == 0 {
                0.0
            } else {
                count as f64 / self.present as f64
            }
        };
        // numbers and dates are never words of an ordinal vocabulary
        let texts: Option<Vec<&str>> = (!self.too_many_texts && self.numbers == 0)
            .then(|| self.texts.iter().map(|text| &**text).collect());
        decide_kind(
            KindCounts {
                present: self.present,
                numbers: self.numbers,
                times: self.times,
                numeric_share: share(self.numbers),
                time_share: share(self.times),
            },
            texts.as_deref(),
        )
        .0
    }
}

/// What the chart's layers share while they are evaluated.
pub(super) struct ChartState<'s> {
    pub spec: &'s ChartSpec,
    pub options: &'s EvalOptions,
    /// `panels.by`, when the chart has panels.
    pub panel_column: Option<&'s str>,
    /// Panel values in first-seen order, and their ids.
    pub panel_values: Vec<Arc<str>>,
    panel_ids: HashMap<Arc<str>, u32>,
    pub notes: Vec<EvalNote>,
    pub is_sample: bool,
    /// Layers left out because the time budget ran out.
    pub timed_out: Vec<usize>,
}

impl<'s> ChartState<'s> {
    pub fn new(spec: &'s ChartSpec, options: &'s EvalOptions) -> ChartState<'s> {
        ChartState {
            spec,
            options,
            panel_column: spec
                .panels
                .as_ref()
                .and_then(|panels| panels.by.as_ref())
                .map(|by| by.value.as_str()),
            panel_values: Vec::new(),
            panel_ids: HashMap::new(),
            notes: Vec::new(),
            is_sample: false,
            timed_out: Vec::new(),
        }
    }

    fn note(&mut self, layer: Option<usize>, message: String) {
        self.notes.push(EvalNote { layer, message });
    }

    fn panel_id(&mut self, text: &str) -> Option<u32> {
        if let Some(&id) = self.panel_ids.get(text) {
            return Some(id);
        }
        if self.panel_values.len() >= MAX_GROUPS {
            return None;
        }
        let id = self.panel_values.len() as u32;
        let value: Arc<str> = Arc::from(text);
        self.panel_values.push(value.clone());
        self.panel_ids.insert(value, id);
        Some(id)
    }
}

/// The role of a binding in its layer.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Role {
    /// Groups the rows (one mark per distinct combination of keys).
    Key,
    /// Summarised within a group (or the last row's value when there is no summary).
    Measure,
    /// One mark per row: the row's own value.
    Row,
}

struct Plan<'s> {
    binding: &'s Binding,
    /// Index into the wanted columns.
    slot: Option<usize>,
    column_kind: AttributeKind,
    bins: Option<Bins>,
    drawn_kind: AttributeKind,
    role: Role,
}

impl Plan<'_> {
    fn channel(&self) -> Channel {
        self.binding.channel
    }

    /// The spacing its mapping asks for, if any.
    fn spacing(&self) -> Option<Spacing> {
        self.binding
            .mapping
            .as_ref()
            .and_then(|mapping| mapping.spacing.as_ref())
            .map(|spacing| spacing.value)
    }

    fn summary(&self) -> Option<Summary> {
        self.binding.summary.as_ref().map(|summary| summary.value)
    }

    fn is_discrete(&self) -> bool {
        self.bins.is_some()
            || matches!(
                self.drawn_kind,
                AttributeKind::Categorical | AttributeKind::Ordered
            )
    }
}

/// The values one key channel takes, each with an id.
#[derive(Default)]
struct KeyValues {
    values: Vec<Datum>,
    /// Ids of text values, by `hash_bytes` of the text (the text is in `values`).
    by_text: HashTable<u32>,
    by_bits: HashTable<(u64, u32)>,
}

fn text_at(values: &[Datum], id: u32) -> &str {
    values
        .get(id as usize)
        .and_then(Datum::as_text)
        .unwrap_or("")
}

/// A hash of a group key (ids), for the group table.
fn hash_key(key: &[u32]) -> u64 {
    key.iter().fold(0x243f_6a88_85a3_08d3, |state, &id| {
        hash_number_bits(state ^ u64::from(id)).wrapping_add(state.rotate_left(17))
    })
}

impl KeyValues {
    fn for_bins(bins: &Bins) -> KeyValues {
        KeyValues {
            values: (0..bins.count)
                .map(|index| Datum::Text(Arc::from(bins.label(index))))
                .collect(),
            ..KeyValues::default()
        }
    }

    fn find_text(&self, text: &str) -> Option<u32> {
        let values = &self.values;
        self.by_text
            .find(hash_bytes(text.as_bytes()), |&id| {
                text_at(values, id) == text
            })
            .copied()
    }

    fn text_id(&mut self, text: &str) -> Option<u32> {
        let hash = hash_bytes(text.as_bytes());
        let values = &self.values;
        if let Some(&id) = self.by_text.find(hash, |&id| text_at(values, id) == text) {
            return Some(id);
        }
        if self.values.len() >= MAX_GROUPS {
            return None;
        }
        let id = self.values.len() as u32;
        self.values.push(Datum::Text(Arc::from(text)));
        let values = &self.values;
        self.by_text
            .insert_unique(hash, id, |&id| hash_bytes(text_at(values, id).as_bytes()));
        Some(id)
    }

    fn number_id(&mut self, value: f64, time: bool) -> Option<u32> {
        let bits = if value == 0.0 { 0 } else { value.to_bits() };
        let hash = hash_number_bits(bits);
        if let Some(&(_, id)) = self.by_bits.find(hash, |&(entry, _)| entry == bits) {
            return Some(id);
        }
        if self.values.len() >= MAX_GROUPS {
            return None;
        }
        let id = self.values.len() as u32;
        self.values.push(if time {
            Datum::Time(value)
        } else {
            Datum::Number(value)
        });
        self.by_bits
            .insert_unique(hash, (bits, id), |&(entry, _)| hash_number_bits(entry));
        Some(id)
    }

    fn value(&self, id: u32) -> Datum {
        self.values
            .get(id as usize)
            .cloned()
            .unwrap_or(Datum::Missing)
    }
}

/// Seconds since the epoch of an ISO 8601 cell.
fn time_seconds(trimmed: &str) -> Option<f64> {
    parse_iso_time(trimmed).map(|(seconds, nanos)| seconds as f64 + f64::from(nanos) / 1e9)
}

/// A cell read as the column's kind: `None` when missing or not readable as that kind.
fn cell_number(trimmed: &str, kind: AttributeKind) -> Option<f64> {
    match kind {
        AttributeKind::Time => time_seconds(trimmed).or_else(|| parse_number(trimmed)),
        _ => parse_number(trimmed),
    }
}

/// What one row's cell is on a key or row channel.
enum KeyCell<'c> {
    Missing,
    Number(f64),
    Time(f64),
    Text(&'c str),
    Bin(usize),
}

fn read_key_cell<'c>(cell: Option<&'c str>, plan: &Plan<'_>) -> KeyCell<'c> {
    let Some(cell) = cell else {
        return KeyCell::Missing;
    };
    let trimmed = trim_cell(cell);
    if is_missing_token(trimmed) {
        return KeyCell::Missing;
    }
    if let Some(bins) = &plan.bins {
        return match parse_number(trimmed) {
            Some(value) => KeyCell::Bin(bins.index_of(value)),
            None => KeyCell::Missing,
        };
    }
    match plan.column_kind {
        AttributeKind::Quantitative => match parse_number(trimmed) {
            Some(value) => KeyCell::Number(value),
            None => KeyCell::Missing,
        },
        AttributeKind::Time => match time_seconds(trimmed) {
            Some(value) => KeyCell::Time(value),
            None => KeyCell::Missing,
        },
        AttributeKind::Categorical | AttributeKind::Ordered => KeyCell::Text(trimmed),
    }
}

fn measure_cell(cell: Option<&str>, plan: &Plan<'_>) -> CellValue {
    if plan.slot.is_none() {
        // a bare `count`: every row counts
        return CellValue {
            present: true,
            number: None,
            hash: 0,
            datum: Datum::Missing,
        };
    }
    let trimmed = cell.map(trim_cell).filter(|text| !is_missing_token(text));
    let Some(trimmed) = trimmed else {
        return CellValue {
            present: false,
            number: None,
            hash: 0,
            datum: Datum::Missing,
        };
    };
    let number = cell_number(trimmed, plan.column_kind);
    let summary = plan.summary();
    let hash = if summary == Some(Summary::Distinct) {
        match (number, plan.column_kind) {
            (Some(value), AttributeKind::Quantitative | AttributeKind::Time) => {
                hash_number_bits(if value == 0.0 { 0 } else { value.to_bits() })
            }
            _ => hash_bytes(trimmed.as_bytes()),
        }
    } else {
        0
    };
    let datum = if summary.is_none() {
        match (number, plan.column_kind) {
            (Some(value), AttributeKind::Time) => Datum::Time(value),
            (Some(value), AttributeKind::Quantitative) => Datum::Number(value),
            _ => Datum::Text(Arc::from(trimmed)),
        }
    } else {
        Datum::Missing
    };
    CellValue {
        present: true,
        number,
        hash,
        datum,
    }
}

struct Group {
    /// Panel id, then one id per key plan.
    key: Vec<u32>,
    rows: u64,
    measures: Vec<Accumulator>,
}

/// The position channel that carries a bar's or area's value: the quantitative one, `y` when
/// both or neither are (the analysis's `value_axis` rule).
fn value_axis(plans: &[Plan<'_>]) -> Option<Channel> {
    let kind_of = |channel: Channel| {
        plans
            .iter()
            .find(|plan| plan.channel() == channel)
            .map(|plan| plan.drawn_kind == AttributeKind::Quantitative && plan.bins.is_none())
    };
    match (kind_of(Channel::X), kind_of(Channel::Y)) {
        (Some(true), Some(false)) | (Some(true), None) => Some(Channel::X),
        (_, Some(_)) => Some(Channel::Y),
        _ => None,
    }
}

/// Title of an axis or legend: the column's `label` (else its name), the summary, the unit.
fn channel_title(spec: &ChartSpec, binding: &Binding) -> String {
    let column = binding.column.as_ref().map(|column| column.value.as_str());
    let declaration = column.and_then(|column| spec.column_declaration(column));
    let name = declaration
        .and_then(|declaration| declaration.label.as_ref())
        .map(|label| label.value.as_str())
        .or(column)
        .unwrap_or("rows");
    let unit = declaration
        .and_then(|declaration| declaration.unit.as_ref())
        .map(|unit| format!(" ({})", unit.value))
        .unwrap_or_default();
    match (
        binding.summary.as_ref().map(|summary| summary.value),
        column,
    ) {
        (Some(Summary::Count), None) => "number of rows".to_string(),
        (Some(Summary::Count), Some(_)) => format!("count of {name}"),
        (Some(Summary::Distinct), _) => format!("distinct values of {name}"),
        (Some(summary), _) => format!("{} of {name}{unit}", summary.as_str()),
        (None, _) => format!("{name}{unit}"),
    }
}

/// Compare two drawn values: numbers and times by value, text by its characters, missing last.
fn compare_datum(a: &Datum, b: &Datum) -> std::cmp::Ordering {
    use std::cmp::Ordering;
    match (a, b) {
        (Datum::Missing, Datum::Missing) => Ordering::Equal,
        (Datum::Missing, _) => Ordering::Greater,
        (_, Datum::Missing) => Ordering::Less,
        (Datum::Text(x), Datum::Text(y)) => x.cmp(y),
        (Datum::Text(_), _) => Ordering::Greater,
        (_, Datum::Text(_)) => Ordering::Less,
        (x, y) => x
            .as_f64()
            .unwrap_or(0.0)
            .total_cmp(&y.as_f64().unwrap_or(0.0)),
    }
}

/// The ids of `values` in drawing order: declared `levels`, an ordinal vocabulary, bins and
/// numbers in their natural order; categories as first seen; `order` changes that (`ascending`:
/// natural order, alphabetical for categories; `descending`: its reverse; `data`: first seen;
/// a list: those values first).
fn drawing_order(
    values: &[Datum],
    plan_kind: AttributeKind,
    is_bins: bool,
    levels: Option<&[Spanned<String>]>,
    order: Option<&SortOrder>,
) -> Vec<u32> {
    let first_seen: Vec<u32> = (0..values.len() as u32).collect();
    let text_of = |id: u32| values[id as usize].as_text().unwrap_or("").to_string();
    let natural = || -> Option<Vec<u32>> {
        if is_bins {
            return Some(first_seen.clone());
        }
        if let Some(levels) = levels {
            let position = |id: u32| {
                let text = text_of(id);
                levels
                    .iter()
                    .position(|level| level.value == text)
                    .unwrap_or(usize::MAX)
            };
            let mut ids = first_seen.clone();
            ids.sort_by_key(|&id| position(id));
            return Some(ids);
        }
        match plan_kind {
            AttributeKind::Quantitative | AttributeKind::Time => {
                let mut ids = first_seen.clone();
                ids.sort_by(|&a, &b| compare_datum(&values[a as usize], &values[b as usize]));
                Some(ids)
            }
            AttributeKind::Ordered => {
                let texts: Vec<String> = first_seen.iter().map(|&id| text_of(id)).collect();
                let borrowed: Vec<&str> = texts.iter().map(String::as_str).collect();
                let vocabulary = ordinal_vocabulary_of(&borrowed)?;
                let mut ids = first_seen.clone();
                ids.sort_by_key(|&id| {
                    let lowered = text_of(id).to_lowercase();
                    vocabulary
                        .iter()
                        .position(|word| *word == lowered)
                        .unwrap_or(usize::MAX)
                });
                Some(ids)
            }
            AttributeKind::Categorical => None,
        }
    };
    let alphabetical = || {
        let mut ids = first_seen.clone();
        ids.sort_by(|&a, &b| compare_datum(&values[a as usize], &values[b as usize]));
        ids
    };
    match order {
        Some(SortOrder::Data) => first_seen.clone(),
        Some(SortOrder::Ascending) => natural().unwrap_or_else(alphabetical),
        Some(SortOrder::Descending) => {
            let mut ids = natural().unwrap_or_else(alphabetical);
            ids.reverse();
            ids
        }
        Some(SortOrder::Explicit(listed)) => {
            let position = |id: u32| {
                let text = text_of(id);
                listed
                    .iter()
                    .position(|item| item.value == text)
                    .unwrap_or(usize::MAX)
            };
            let mut ids = first_seen.clone();
            ids.sort_by_key(|&id| position(id));
            ids
        }
        None => natural().unwrap_or_else(|| first_seen.clone()),
    }
}

/// Evaluate one layer; `None` (with a note) when it cannot be drawn.
pub(super) fn evaluate_layer(
    state: &mut ChartState<'_>,
    layer: &Layer,
    open_rows: &mut OpenRows<'_>,
) -> Option<EvaluatedLayer> {
    let spec = state.spec;
    let number = layer.index;
    let Some(mark) = layer.mark.as_ref().map(|mark| mark.value) else {
        state.note(Some(number), "no `mark`, so it is not drawn".to_string());
        return None;
    };
    let Some(source) = spec.source_for_layer(layer) else {
        state.note(
            Some(number),
            "no `source`, so there are no rows to draw".to_string(),
        );
        return None;
    };
    let mut rows = match open_rows(source) {
        Ok(rows) => rows,
        Err(error) => {
            read_error(state, number, &error);
            return None;
        }
    };
    let names = rows.column_names();

    // the columns to read: every shown binding's, then the panels'
    let mut wanted: Vec<usize> = Vec::new();
    let slot_of = |column: usize, wanted: &mut Vec<usize>| -> usize {
        match wanted.iter().position(|&existing| existing == column) {
            Some(slot) => slot,
            None => {
                wanted.push(column);
                wanted.len() - 1
            }
        }
    };
    let mut bound: Vec<(&Binding, Option<usize>)> = Vec::new();
    for binding in &layer.bindings {
        if !mark_shows(mark, binding.channel) {
            state.note(
                Some(number),
                format!(
                    "a `{}` mark does not show `{}`, so that binding is not drawn",
                    mark.as_str(),
                    binding.channel.as_str()
                ),
            );
            continue;
        }
        let column = binding.column.as_ref().map(|column| column.value.as_str());
        match column {
            None if binding.summary.as_ref().map(|s| s.value) == Some(Summary::Count) => {
                bound.push((binding, None));
            }
            None => {
                state.note(
                    Some(number),
                    format!(
                        "`{}` names no column, so that binding is not drawn",
                        binding.channel.as_str()
                    ),
                );
            }
            Some(column) => match names.iter().position(|name| name == column) {
                Some(index) => {
                    let slot = slot_of(index, &mut wanted);
                    bound.push((binding, Some(slot)));
                }
                None => {
                    state.note(
                        Some(number),
                        format!("`{column}` is not a column of its data, so it is not drawn"),
                    );
                    return None;
                }
            },
        }
    }
    let panel_slot = match state.panel_column {
        None => None,
        Some(column) => match names.iter().position(|name| name == column) {
            Some(index) => Some(slot_of(index, &mut wanted)),
            None => {
                state.note(
                    Some(number),
                    format!(
                        "the panels are by `{column}`, which is not a column of its data, so it is not drawn"
                    ),
                );
                return None;
            }
        },
    };
    if bound.is_empty() {
        state.note(
            Some(number),
            "no column it can draw is bound, so it is not drawn".to_string(),
        );
        return None;
    }

    // kinds: declared, else the profile's rules over the first rows; extents of binned columns
    let declared_kind = |slot: usize| {
        let name = names.get(*wanted.get(slot)?)?;
        spec.column_declaration(name)?
            .kind
            .as_ref()
            .map(|kind| kind.value)
    };
    let binned_slots: Vec<usize> = bound
        .iter()
        .filter(|(binding, _)| binding.bins.is_some())
        .filter_map(|(_, slot)| *slot)
        .collect();
    let needs_probe = bound
        .iter()
        .any(|(_, slot)| slot.is_some_and(|slot| declared_kind(slot).is_none()));
    let mut probed_kinds: Vec<Option<AttributeKind>> = vec![None; wanted.len()];
    let mut extents: Vec<Option<(f64, f64)>> = vec![None; wanted.len()];
    if needs_probe || !binned_slots.is_empty() {
        let mut probes: Vec<KindProbe> = wanted.iter().map(|_| KindProbe::default()).collect();
        let mut seen = 0u64;
        let scanned = rows.scan(&wanted, &mut |cells| {
            seen += 1;
            if needs_probe && seen <= KIND_PROBE_ROWS {
                for (probe, cell) in probes.iter_mut().zip(cells) {
                    probe.add(*cell);
                }
            }
            for &slot in &binned_slots {
                let value = cells
                    .get(slot)
                    .copied()
                    .flatten()
                    .and_then(|cell| parse_number(trim_cell(cell)));
                if let Some(value) = value {
                    let extent = &mut extents[slot];
                    *extent = Some(extent.map_or((value, value), |(low, high)| {
                        (low.min(value), high.max(value))
                    }));
                }
            }
            !binned_slots.is_empty() || seen < KIND_PROBE_ROWS
        });
        if let Err(error) = scanned {
            read_error(state, number, &error);
            return None;
        }
        if needs_probe {
            for (slot, probe) in probes.iter().enumerate() {
                probed_kinds[slot] = Some(probe.kind());
            }
        }
    }
    let column_kind = |slot: Option<usize>| match slot {
        None => AttributeKind::Quantitative,
        Some(slot) => declared_kind(slot)
            .or(probed_kinds[slot])
            .unwrap_or(AttributeKind::Categorical),
    };

    let mut plans: Vec<Plan<'_>> = Vec::new();
    for (binding, slot) in &bound {
        let kind = column_kind(*slot);
        let summary = binding.summary.as_ref().map(|summary| summary.value);
        let mut bins = None;
        if let (Some(asked), None) = (&binding.bins, summary) {
            match slot.and_then(|slot| extents[slot]) {
                Some((low, high)) => bins = Some(Bins::covering(low, high, asked.value)),
                None => state.note(
                    Some(number),
                    format!(
                        "`bins` on `{}` need numbers and the column has none, so its values are drawn unbinned",
                        binding.channel.as_str()
                    ),
                ),
            }
        }
        let drawn_kind = match (summary, kind) {
            (
                Some(Summary::Min | Summary::Max | Summary::Mean | Summary::Median),
                AttributeKind::Time,
            ) => AttributeKind::Time,
            (Some(_), _) => AttributeKind::Quantitative,
            (None, _) if bins.is_some() => AttributeKind::Ordered,
            (None, kind) => kind,
        };
        plans.push(Plan {
            binding,
            slot: *slot,
            column_kind: kind,
            bins,
            drawn_kind,
            role: Role::Key,
        });
    }

    let has_summary = plans.iter().any(|plan| plan.summary().is_some());
    let one_per_row =
        !has_summary && matches!(mark, Mark::Point | Mark::Text | Mark::Line | Mark::Segment);
    let axis = value_axis(&plans);
    for plan in &mut plans {
        plan.role = if one_per_row {
            Role::Row
        } else if has_summary {
            if plan.summary().is_some() {
                Role::Measure
            } else {
                Role::Key
            }
        } else {
            // bars, areas, wedges and cells without summaries: the value channels keep the last
            // row's value, every other binding groups
            let is_value = match mark {
                Mark::Bar | Mark::Area => {
                    Some(plan.channel()) == axis
                        || (!plan.channel().is_position()
                            && plan.drawn_kind == AttributeKind::Quantitative
                            && plan.bins.is_none())
                }
                _ => {
                    !plan.channel().is_position()
                        && plan.drawn_kind == AttributeKind::Quantitative
                        && plan.bins.is_none()
                }
            };
            if is_value {
                Role::Measure
            } else {
                Role::Key
            }
        };
    }
    let series_plan = [
        Channel::Hue,
        Channel::Luminance,
        Channel::Saturation,
        Channel::Shape,
        Channel::Texture,
    ]
    .iter()
    .find_map(|channel| {
        plans.iter().position(|plan| {
            plan.channel() == *channel && plan.role != Role::Measure && plan.is_discrete()
        })
    });

    let evaluated = if one_per_row {
        evaluate_rows(
            state,
            layer,
            mark,
            &mut plans,
            panel_slot,
            series_plan,
            rows.as_mut(),
            &wanted,
        )
    } else {
        evaluate_groups(
            state,
            layer,
            mark,
            &mut plans,
            panel_slot,
            series_plan,
            axis,
            rows.as_mut(),
            &wanted,
        )
    };
    if rows.is_sample() {
        state.is_sample = true;
    }
    evaluated
}

fn read_error(state: &mut ChartState<'_>, layer: usize, error: &crate::data::DataError) {
    if error.kind == crate::data::DataErrorKind::TimedOut {
        if !state.timed_out.contains(&layer) {
            state.timed_out.push(layer);
        }
        state.note(
            Some(layer),
            format!(
                "{error}, so it is not drawn; `evaluate-seconds` under `[data]` in markwell.toml (or `--evaluate-seconds`) raises the budget"
            ),
        );
        return;
    }
    state.note(
        Some(layer),
        format!("its data could not be read ({error}), so it is not drawn"),
    );
}

/// The channel descriptions, with each domain.
fn channel_infos(
    spec: &ChartSpec,
    mark: Mark,
    plans: &[Plan<'_>],
    domains: Vec<Domain>,
    value_axis: Option<Channel>,
) -> Vec<ChannelInfo> {
    plans
        .iter()
        .zip(domains)
        .map(|(plan, domain)| {
            let binding = plan.binding;
            let mapping = binding.mapping.as_ref();
            let from = mapping
                .and_then(|mapping| mapping.from.as_ref())
                .map(|from| from.value);
            let from_zero = match from {
                Some(MappingFrom::Zero) => true,
                Some(MappingFrom::Data) => false,
                None => {
                    matches!(mark, Mark::Bar | Mark::Area)
                        && Some(plan.channel()) == value_axis
                        && plan.drawn_kind == AttributeKind::Quantitative
                }
            };
            ChannelInfo {
                channel: plan.channel(),
                column: binding.column.as_ref().map(|column| column.value.clone()),
                summary: plan.summary(),
                bins: binding
                    .bins
                    .as_ref()
                    .map(|bins| bins.value)
                    .filter(|_| plan.bins.is_some()),
                kind: plan.drawn_kind,
                title: channel_title(spec, binding),
                domain,
                spacing: plan.spacing(),
                extent: mapping
                    .and_then(|mapping| mapping.extent.as_ref())
                    .map(|e| e.value),
                from_zero,
                flip: mapping
                    .and_then(|mapping| mapping.flip.as_ref())
                    .is_some_and(|flip| flip.value),
                palette: binding.palette.as_ref().map(|palette| {
                    palette
                        .value
                        .iter()
                        .map(|colour| colour.value.clone())
                        .collect()
                }),
            }
        })
        .collect()
}

fn levels_of<'s>(spec: &'s ChartSpec, plan: &Plan<'_>) -> Option<&'s [Spanned<String>]> {
    let column = plan.binding.column.as_ref()?;
    spec.column_declaration(&column.value)?
        .levels
        .as_ref()
        .map(|levels| levels.value.as_slice())
}

/// A running numeric extent.
#[derive(Clone, Copy, Debug, Default)]
struct Extent(Option<(f64, f64)>);

impl Extent {
    fn add(&mut self, value: f64) {
        if value.is_finite() {
            self.0 = Some(self.0.map_or((value, value), |(low, high)| {
                (low.min(value), high.max(value))
            }));
        }
    }

    fn domain(&self, kind: AttributeKind) -> Domain {
        match (self.0, kind) {
            (None, _) => Domain::Empty,
            (Some((min, max)), AttributeKind::Time) => Domain::Time { min, max },
            (Some((min, max)), _) => Domain::Numeric { min, max },
        }
    }
}

/// The domain of a discrete channel: its values in drawing order, and each id's rank.
fn discrete_domain(spec: &ChartSpec, plan: &Plan<'_>, values: &KeyValues) -> (Domain, Vec<u32>) {
    let order = drawing_order(
        &values.values,
        plan.drawn_kind,
        plan.bins.is_some(),
        levels_of(spec, plan),
        plan.binding.order.as_ref().map(|order| &order.value),
    );
    let mut rank = vec![0u32; values.values.len()];
    for (position, &id) in order.iter().enumerate() {
        rank[id as usize] = position as u32;
    }
    let domain = match plan.drawn_kind {
        AttributeKind::Quantitative | AttributeKind::Time if plan.bins.is_none() => {
            let mut extent = Extent::default();
            for value in &values.values {
                if let Some(number) = value.as_f64() {
                    extent.add(number);
                }
            }
            extent.domain(plan.drawn_kind)
        }
        _ if order.is_empty() => Domain::Empty,
        _ => Domain::Categories(
            order
                .iter()
                .map(|&id| match &values.values[id as usize] {
                    Datum::Text(text) => text.to_string(),
                    Datum::Number(value) | Datum::Time(value) => format!("{value}"),
                    Datum::Missing => String::new(),
                })
                .collect(),
        ),
    };
    (domain, rank)
}

#[allow(clippy::too_many_arguments)]
fn evaluate_groups(
    state: &mut ChartState<'_>,
    layer: &Layer,
    mark: Mark,
    plans: &mut [Plan<'_>],
    panel_slot: Option<usize>,
    series_plan: Option<usize>,
    value_axis: Option<Channel>,
    rows: &mut dyn RowSource,
    wanted: &[usize],
) -> Option<EvaluatedLayer> {
    let number = layer.index;
    let budget = state.options.exact_quantile_budget_bytes;
    let key_plans: Vec<usize> = (0..plans.len())
        .filter(|&index| plans[index].role == Role::Key)
        .collect();
    let measure_plans: Vec<usize> = (0..plans.len())
        .filter(|&index| plans[index].role == Role::Measure)
        .collect();
    let mut key_values: Vec<KeyValues> = plans
        .iter()
        .map(|plan| match &plan.bins {
            Some(bins) => KeyValues::for_bins(bins),
            None => KeyValues::default(),
        })
        .collect();
    let mut groups: Vec<Group> = Vec::new();
    let mut group_of: HashTable<usize> = HashTable::new();
    let mut key = Vec::with_capacity(key_plans.len() + 1);
    let mut rows_read = 0u64;
    let mut rows_left_out = 0u64;
    let mut rows_over_cap = 0u64;
    let mut exact_bytes = 0usize;
    let plans_view: &[Plan<'_>] = plans;
    let mut panel_values_full = false;
    let mut measured: Vec<CellValue> = Vec::with_capacity(measure_plans.len());
    let scanned = rows.scan(wanted, &mut |cells| {
        rows_read += 1;
        key.clear();
        match panel_slot {
            None => key.push(0),
            Some(slot) => {
                let cell = cells.get(slot).copied().flatten().map(trim_cell);
                match cell.filter(|text| !is_missing_token(text)) {
                    None => {
                        rows_left_out += 1;
                        return true;
                    }
                    Some(text) => match state.panel_id(text) {
                        Some(id) => key.push(id),
                        None => {
                            panel_values_full = true;
                            rows_over_cap += 1;
                            return true;
                        }
                    },
                }
            }
        }
        for &index in &key_plans {
            let plan = &plans_view[index];
            let cell = plan
                .slot
                .and_then(|slot| cells.get(slot).copied().flatten());
            let values = &mut key_values[index];
            let id = match read_key_cell(cell, plan) {
                KeyCell::Missing => {
                    if plan.channel().is_position() {
                        rows_left_out += 1;
                        return true;
                    }
                    Some(MISSING_ID)
                }
                KeyCell::Bin(bin) => Some(bin as u32),
                KeyCell::Number(value) => values.number_id(value, false),
                KeyCell::Time(value) => values.number_id(value, true),
                KeyCell::Text(text) => values.text_id(text),
            };
            match id {
                Some(id) => key.push(id),
                None => {
                    rows_over_cap += 1;
                    return true;
                }
            }
        }
        // a value channel without a summary draws the row's value: a row without one is left out
        measured.clear();
        for &index in &measure_plans {
            let plan = &plans_view[index];
            let cell = plan
                .slot
                .and_then(|slot| cells.get(slot).copied().flatten());
            let value = measure_cell(cell, plan);
            if plan.summary().is_none() && plan.channel().is_position() && value.number.is_none() {
                rows_left_out += 1;
                return true;
            }
            measured.push(value);
        }
        let key_hash = hash_key(&key);
        let found = group_of
            .find(key_hash, |&index| groups[index].key == key)
            .copied();
        let group_index = match found {
            Some(index) => index,
            None => {
                if groups.len() >= MAX_GROUPS {
                    rows_over_cap += 1;
                    return true;
                }
                groups.push(Group {
                    key: key.clone(),
                    rows: 0,
                    measures: measure_plans
                        .iter()
                        .map(|&index| Accumulator::new(plans_view[index].summary()))
                        .collect(),
                });
                group_of.insert_unique(key_hash, groups.len() - 1, |&index| {
                    hash_key(&groups[index].key)
                });
                groups.len() - 1
            }
        };
        let group = &mut groups[group_index];
        group.rows += 1;
        for (accumulator, value) in group.measures.iter_mut().zip(&measured) {
            exact_bytes += accumulator.add(value);
        }
        if exact_bytes > budget {
            exact_bytes = shrink_to_budget(&mut groups, budget);
        }
        true
    });
    if let Err(error) = scanned {
        read_error(state, number, &error);
        return None;
    }
    if rows_over_cap > 0 {
        state.note(
            Some(number),
            format!(
                "more than {MAX_GROUPS} groups{}; {rows_over_cap} rows of further groups are not drawn",
                if panel_values_full { " or panels" } else { "" }
            ),
        );
    }

    // the order of every key channel
    let mut domains: Vec<Domain> = vec![Domain::Empty; plans.len()];
    let mut ranks: Vec<Vec<u32>> = vec![Vec::new(); plans.len()];
    for &index in &key_plans {
        let (domain, rank) = discrete_domain(state.spec, &plans[index], &key_values[index]);
        domains[index] = domain;
        ranks[index] = rank;
    }
    let rank_of = |plan: usize, id: u32| -> u32 {
        if id == MISSING_ID {
            u32::MAX
        } else {
            ranks[plan].get(id as usize).copied().unwrap_or(u32::MAX)
        }
    };

    // estimates, for the output to say
    let mut approximations = Vec::new();
    for (position, &index) in measure_plans.iter().enumerate() {
        let estimated = groups
            .iter()
            .filter(|group| group.measures[position].is_estimate())
            .count();
        if estimated == 0 {
            continue;
        }
        let plan = &plans[index];
        let column = plan
            .binding
            .column
            .as_ref()
            .map_or("rows", |column| column.value.as_str());
        approximations.push(match plan.summary() {
            Some(Summary::Median) => format!(
                "median of `{column}`: {estimated} of {} groups by a Greenwald–Khanna sketch, within {} % of a group's values in rank (past the exact budget of {} MiB)",
                groups.len(),
                DEFAULT_RANK_ERROR * 100.0,
                budget >> 20
            ),
            _ => format!(
                "distinct values of `{column}`: {estimated} of {} groups by a HyperLogLog estimate, standard error {:.2} % (past the exact budget of {} MiB)",
                groups.len(),
                crate::data::sketch::HyperLogLog::relative_standard_error() * 100.0,
                budget >> 20
            ),
        });
    }

    // the order of the marks: panel, series, then the keys (positions first)
    let mut order_plans: Vec<usize> = key_plans
        .iter()
        .copied()
        .filter(|&index| plans[index].channel().is_position())
        .collect();
    order_plans.extend(
        key_plans
            .iter()
            .copied()
            .filter(|&index| !plans[index].channel().is_position()),
    );
    let key_position = |plan: usize| key_plans.iter().position(|&k| k == plan).map(|p| p + 1);
    let series_key = series_plan.and_then(key_position);
    let sort_key = |group: &Group| -> Vec<u32> {
        let mut sort = vec![group.key[0]];
        sort.push(series_key.map_or(0, |position| {
            rank_of(key_plans[position - 1], group.key[position])
        }));
        for &plan in &order_plans {
            if let Some(position) = key_position(plan) {
                sort.push(rank_of(plan, group.key[position]));
            }
        }
        sort
    };
    groups.sort_by_cached_key(|group| sort_key(group));

    let mut marks: Vec<DrawnMark> = Vec::with_capacity(groups.len());
    for group in &mut groups {
        let mut values = vec![Datum::Missing; plans.len()];
        for (position, &index) in key_plans.iter().enumerate() {
            let id = group.key[position + 1];
            if id != MISSING_ID {
                values[index] = key_values[index].value(id);
            }
        }
        for (position, &index) in measure_plans.iter().enumerate() {
            let accumulator = &mut group.measures[position];
            values[index] = match accumulator {
                Accumulator::Last(datum) => datum.clone(),
                _ => match (accumulator.result(), plans[index].drawn_kind) {
                    (None, _) => Datum::Missing,
                    (Some(value), AttributeKind::Time) => Datum::Time(value),
                    (Some(value), _) => Datum::Number(value),
                },
            };
        }
        let series = series_key.map_or(0, |position| {
            let id = group.key[position];
            let plan = key_plans[position - 1];
            if id == MISSING_ID {
                key_values[plan].values.len() as u32
            } else {
                rank_of(plan, id)
            }
        });
        marks.push(DrawnMark {
            panel: group.key[0],
            values,
            stack_start: None,
            series,
            rows: group.rows,
        });
    }

    let arrange = layer.arrange.as_ref().map(|arrange| arrange.value);
    let value_index = value_axis.and_then(|axis| {
        plans
            .iter()
            .position(|plan| plan.channel() == axis && plan.role == Role::Measure)
    });
    if let (Some(arrange), true) = (arrange, matches!(mark, Mark::Bar | Mark::Area)) {
        if arrange.is_stacked() {
            match value_index {
                Some(value_index) => {
                    // the position of a mark: its keys but the series
                    let positions: Vec<Vec<u32>> = groups
                        .iter()
                        .map(|group| {
                            let mut position = vec![group.key[0]];
                            for (offset, id) in group.key[1..].iter().enumerate() {
                                if Some(offset + 1) != series_key {
                                    position.push(*id);
                                }
                            }
                            position
                        })
                        .collect();
                    stack(
                        &mut marks,
                        &positions,
                        value_index,
                        arrange == Arrange::Share,
                    );
                }
                None => state.note(
                    Some(number),
                    format!(
                        "`arrange` asks to `{}` its marks but it has no value axis to stack on",
                        arrange.as_str()
                    ),
                ),
            }
        }
    }

    for &index in &measure_plans {
        let mut extent = Extent::default();
        let mut texts: Vec<String> = Vec::new();
        for mark in &marks {
            match &mark.values[index] {
                Datum::Text(text) => {
                    if texts.len() < MAX_GROUPS && !texts.iter().any(|seen| **seen == **text) {
                        texts.push(text.to_string());
                    }
                }
                datum => {
                    if let Some(value) = datum.as_f64() {
                        extent.add(value);
                    }
                }
            }
            if Some(index) == value_index {
                if let Some(start) = mark.stack_start {
                    extent.add(start);
                    extent.add(0.0);
                }
            }
        }
        domains[index] = if !texts.is_empty() && extent.0.is_none() {
            Domain::Categories(texts)
        } else {
            extent.domain(plans[index].drawn_kind)
        };
    }

    Some(EvaluatedLayer {
        index: number,
        mark,
        arrange,
        channels: channel_infos(state.spec, mark, plans, domains, value_axis),
        marks,
        density: None,
        rows_read,
        rows_left_out,
        approximations,
    })
}

/// Move the largest exact medians and distinct sets to their sketches until the exact state
/// holds at most half the budget; returns the bytes still held exactly.
fn shrink_to_budget(groups: &mut [Group], budget: usize) -> usize {
    let mut held: Vec<(usize, usize, usize)> = Vec::new();
    let mut total = 0usize;
    for (group_index, group) in groups.iter().enumerate() {
        for (measure, accumulator) in group.measures.iter().enumerate() {
            let bytes = accumulator.exact_bytes();
            if bytes > 0 {
                held.push((bytes, group_index, measure));
                total += bytes;
            }
        }
    }
    held.sort_unstable_by_key(|entry| std::cmp::Reverse(entry.0));
    for (bytes, group_index, measure) in held {
        if total <= budget / 2 {
            break;
        }
        if groups[group_index].measures[measure].to_sketch(DEFAULT_RANK_ERROR) {
            total -= bytes;
        }
    }
    total
}

/// Stack the marks (in series order) per position: positive values upwards from 0, negative
/// ones downwards, each mark from the end of the previous; with `share` every position is then
/// divided by the sum of its absolute values, so its marks fill 0..1.
fn stack(marks: &mut [DrawnMark], positions: &[Vec<u32>], value_index: usize, share: bool) {
    let mut running: HashMap<&[u32], (f64, f64, f64)> = HashMap::new();
    for (mark, position) in marks.iter_mut().zip(positions) {
        let Some(value) = mark.values[value_index].as_f64() else {
            continue;
        };
        let entry = running
            .entry(position.as_slice())
            .or_insert((0.0, 0.0, 0.0));
        let start = if value >= 0.0 { entry.0 } else { entry.1 };
        let end = start + value;
        if value >= 0.0 {
            entry.0 = end;
        } else {
            entry.1 = end;
        }
        entry.2 += value.abs();
        mark.stack_start = Some(start);
        mark.values[value_index] = Datum::Number(end);
    }
    if share {
        for (mark, position) in marks.iter_mut().zip(positions) {
            let total = running
                .get(position.as_slice())
                .map_or(0.0, |entry| entry.2);
            if total <= 0.0 {
                continue;
            }
            if let (Some(start), Some(end)) = (mark.stack_start, mark.values[value_index].as_f64())
            {
                mark.stack_start = Some(start / total);
                mark.values[value_index] = Datum::Number(end / total);
            }
        }
    }
}

/// How the rows of a layer of one mark per row are kept.
enum Keeping {
    Marks,
    /// The grid, and the rows of panels past `MAX_DENSITY_PANELS` that it refused.
    Density(Box<DoublingGrid>, u64),
    /// No density possible (a position is not a number): rows past the cap are counted only.
    Dropping(u64),
}

/// The units a density grid counts in along a plan's axis: those of its spacing for numbers
/// (times are drawn on an even calendar axis).
fn grid_spacing_of(plan: &Plan<'_>) -> Spacing {
    if plan.drawn_kind == AttributeKind::Time {
        Spacing::Even
    } else {
        grid_spacing(plan.spacing())
    }
}

#[allow(clippy::too_many_arguments)]
fn evaluate_rows(
    state: &mut ChartState<'_>,
    layer: &Layer,
    mark: Mark,
    plans: &mut [Plan<'_>],
    panel_slot: Option<usize>,
    series_plan: Option<usize>,
    rows: &mut dyn RowSource,
    wanted: &[usize],
) -> Option<EvaluatedLayer> {
    let number = layer.index;
    let cap = state.options.max_kept_marks;
    let plans_view: &[Plan<'_>] = plans;
    let position_of = |channel: Channel| {
        plans_view.iter().position(|plan| {
            plan.channel() == channel
                && plan.bins.is_none()
                && matches!(
                    plan.drawn_kind,
                    AttributeKind::Quantitative | AttributeKind::Time
                )
        })
    };
    let density_axes = match (position_of(Channel::X), position_of(Channel::Y)) {
        (Some(x), Some(y)) => Some((x, y)),
        _ => None,
    };
    let mut key_values: Vec<KeyValues> = plans_view
        .iter()
        .map(|plan| match &plan.bins {
            Some(bins) => KeyValues::for_bins(bins),
            None => KeyValues::default(),
        })
        .collect();
    let mut extents = vec![Extent::default(); plans_view.len()];
    let mut marks: Vec<DrawnMark> = Vec::new();
    let mut keeping = Keeping::Marks;
    let mut rows_read = 0u64;
    let mut rows_left_out = 0u64;
    let mut numbers: Vec<Option<f64>> = vec![None; plans_view.len()];
    let scanned = rows.scan(wanted, &mut |cells| {
        rows_read += 1;
        let panel = match panel_slot {
            None => 0,
            Some(slot) => {
                let cell = cells.get(slot).copied().flatten().map(trim_cell);
                match cell
                    .filter(|text| !is_missing_token(text))
                    .and_then(|text| state.panel_id(text))
                {
                    Some(id) => id,
                    None => {
                        rows_left_out += 1;
                        return true;
                    }
                }
            }
        };
        let keep_values = matches!(keeping, Keeping::Marks);
        let mut values: Vec<Datum> = if keep_values {
            Vec::with_capacity(plans_view.len())
        } else {
            Vec::new()
        };
        for (index, plan) in plans_view.iter().enumerate() {
            let cell = plan
                .slot
                .and_then(|slot| cells.get(slot).copied().flatten());
            let read = read_key_cell(cell, plan);
            numbers[index] = match read {
                KeyCell::Number(value) | KeyCell::Time(value) => Some(value),
                _ => None,
            };
            if matches!(read, KeyCell::Missing) && plan.channel().is_position() {
                rows_left_out += 1;
                return true;
            }
            if !keep_values {
                continue;
            }
            let values_of_plan = &mut key_values[index];
            values.push(match read {
                KeyCell::Missing => Datum::Missing,
                KeyCell::Number(value) => Datum::Number(value),
                KeyCell::Time(value) => Datum::Time(value),
                KeyCell::Bin(bin) => values_of_plan.value(bin as u32),
                KeyCell::Text(text) => match values_of_plan.text_id(text) {
                    Some(id) => values_of_plan.value(id),
                    None => Datum::Text(Arc::from(text)),
                },
            });
        }
        for (extent, value) in extents.iter_mut().zip(&numbers) {
            if let Some(value) = value {
                extent.add(*value);
            }
        }
        if keep_values && marks.len() >= cap {
            keeping = match density_axes {
                Some((x, y)) => {
                    // cells even on screen: in the units of the axes' spacings, over the
                    // extent of the kept marks in those units
                    let spacing = (
                        grid_spacing_of(&plans_view[x]),
                        grid_spacing_of(&plans_view[y]),
                    );
                    let mut unit_extents = (Extent::default(), Extent::default());
                    for kept in &marks {
                        if let (Some(x), Some(y)) = (
                            kept.values[x]
                                .as_f64()
                                .and_then(|value| to_grid_units(spacing.0, value)),
                            kept.values[y]
                                .as_f64()
                                .and_then(|value| to_grid_units(spacing.1, value)),
                        ) {
                            unit_extents.0.add(x);
                            unit_extents.1.add(y);
                        }
                    }
                    let x_extent = unit_extents.0 .0.unwrap_or((0.0, 1.0));
                    let y_extent = unit_extents.1 .0.unwrap_or((0.0, 1.0));
                    let mut grid = Box::new(DoublingGrid::spaced(x_extent, y_extent, spacing));
                    let mut refused = 0u64;
                    for kept in marks.drain(..) {
                        if let (Some(x), Some(y)) =
                            (kept.values[x].as_f64(), kept.values[y].as_f64())
                        {
                            if !grid.add(kept.panel, x, y) {
                                refused += 1;
                            }
                        }
                    }
                    marks.shrink_to_fit();
                    Keeping::Density(grid, refused)
                }
                None => Keeping::Dropping(0),
            };
        }
        match &mut keeping {
            Keeping::Marks => marks.push(DrawnMark {
                panel,
                values,
                stack_start: None,
                series: 0,
                rows: 1,
            }),
            Keeping::Density(grid, refused) => {
                if let Some((x, y)) = density_axes {
                    if let (Some(x), Some(y)) = (numbers[x], numbers[y]) {
                        if !grid.add(panel, x, y) {
                            *refused += 1;
                        }
                    }
                }
            }
            Keeping::Dropping(dropped) => *dropped += 1,
        }
        true
    });
    if let Err(error) = scanned {
        read_error(state, number, &error);
        return None;
    }

    let mut domains = Vec::with_capacity(plans_view.len());
    let mut ranks: Vec<Vec<u32>> = Vec::with_capacity(plans_view.len());
    for (index, plan) in plans_view.iter().enumerate() {
        if plan.is_discrete() {
            let (domain, rank) = discrete_domain(state.spec, plan, &key_values[index]);
            domains.push(domain);
            ranks.push(rank);
        } else {
            domains.push(extents[index].domain(plan.drawn_kind));
            ranks.push(Vec::new());
        }
    }
    let mut density = None;
    match keeping {
        Keeping::Marks => {}
        Keeping::Density(grid, refused) => {
            density = Some((*grid).finish());
            state.note(
                Some(number),
                format!(
                    "more than {cap} rows to draw, so its marks are drawn as a density grid (rows per cell){}",
                    if panel_slot.is_some() {
                        ", one per panel on one colour scale"
                    } else {
                        ""
                    }
                ),
            );
            if refused > 0 {
                state.note(
                    Some(number),
                    format!(
                        "layer {} has density grids for {MAX_DENSITY_PANELS} of its panels only (the first seen in the rows); {refused} rows of further panels are not drawn",
                        number + 1
                    ),
                );
            }
        }
        Keeping::Dropping(dropped) => state.note(
            Some(number),
            format!(
                "layer {} has more than {cap} rows to draw and a position that is not a number, so only the first {cap} are drawn ({dropped} rows are not)",
                number + 1
            ),
        ),
    }

    // series, then drawing order: panel, series, and along x for lines
    let rank_in = |plan: usize, datum: &Datum, values: &KeyValues| -> u32 {
        let id = match datum {
            Datum::Text(text) => values.find_text(text),
            _ => None,
        };
        id.and_then(|id| ranks[plan].get(id as usize).copied())
            .unwrap_or(values.values.len() as u32)
    };
    if let Some(series) = series_plan {
        for drawn in &mut marks {
            drawn.series = if plans_view[series].bins.is_some() {
                // bins: the bin index is its rank
                match &drawn.values[series] {
                    Datum::Text(text) => key_values[series]
                        .values
                        .iter()
                        .position(|value| value.as_text() == Some(&**text))
                        .unwrap_or(key_values[series].values.len())
                        as u32,
                    _ => key_values[series].values.len() as u32,
                }
            } else {
                rank_in(series, &drawn.values[series], &key_values[series])
            };
        }
    }
    let along = plans_view
        .iter()
        .position(|plan| plan.channel() == Channel::X)
        .filter(|_| mark == Mark::Line);
    match along {
        Some(x) if !plans_view[x].is_discrete() => marks.sort_by(|a, b| {
            (a.panel, a.series)
                .cmp(&(b.panel, b.series))
                .then_with(|| compare_datum(&a.values[x], &b.values[x]))
        }),
        Some(x) => marks.sort_by_cached_key(|drawn| {
            (
                drawn.panel,
                drawn.series,
                rank_in(x, &drawn.values[x], &key_values[x]),
            )
        }),
        None => marks.sort_by_key(|drawn| (drawn.panel, drawn.series)),
    }

    Some(EvaluatedLayer {
        index: number,
        mark,
        arrange: layer.arrange.as_ref().map(|arrange| arrange.value),
        channels: channel_infos(state.spec, mark, plans_view, domains, None),
        marks,
        density,
        rows_read,
        rows_left_out,
        approximations: Vec::new(),
    })
}
