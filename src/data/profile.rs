//! Streaming per-column accumulators and their merge: every reader (CSV, JSON, NDJSON, inline
//! rows) pushes cells into a [`TableAccumulator`]; threads that scanned parts of a file merge
//! theirs; [`TableAccumulator::finish`] turns the result into a [`DataProfile`].
//!
//! Memory is bounded whatever the file size: distinct values are kept exactly (with counts) up
//! to [`EXACT_DISTINCT_CAP`] values or [`EXACT_DISTINCT_BYTES_CAP`] bytes of text per column;
//! past that the column switches to a HyperLogLog estimate, keeps only the
//! [`KEPT_AFTER_SWITCH`] most frequent values so far, and only those keep counting (so top
//! values of such a column are the most frequent among those seen before the switch).

use std::collections::HashMap;
use std::path::PathBuf;

use hashbrown::HashTable;

use super::infer::{
    is_integer_text, is_missing_token, ordinal_vocabulary_of, parse_iso_time, parse_number,
    trim_cell, zero_meaning_hint, NumericShape, TimeKey, MAJORITY_SHARE,
};
use super::sketch::{
    equal_width_bin, hash_bytes, hash_number_bits, CompensatedSum, DoublingHistogram, HyperLogLog,
    HYPERLOGLOG_MINIMUM_PRECISION, HYPERLOGLOG_PRECISION, SMALL_FINE_BIN_COUNT,
};
use super::{ColumnProfile, DataProblem, DataProfile, DistinctCount, NumericSummary};
use crate::spec::model::{AttributeKind, DataFormat, ZeroMeaning};

/// Distinct values kept exactly per column before switching to an estimate.
pub const EXACT_DISTINCT_CAP: usize = 100_000;
/// Bytes of distinct text kept per column before switching to an estimate.
pub const EXACT_DISTINCT_BYTES_CAP: usize = 4 << 20;
/// Values that keep their counts after the switch to an estimate (for the top values).
pub const KEPT_AFTER_SWITCH: usize = 1024;
/// `all_values` is filled when a column has at most this many distinct values.
pub const ALL_VALUES_CAP: usize = 256;
pub const TOP_VALUE_COUNT: usize = 10;
pub const HISTOGRAM_BIN_COUNT: usize = 10;
const EXAMPLE_COUNT: usize = 5;
/// Problems kept per file; the rest are counted in one closing line.
pub const PROBLEM_CAP: usize = 20;

#[derive(Clone, Copy, Debug)]
struct NumberEntry {
    bits: u64,
    count: u64,
}

#[derive(Clone, Copy, Debug)]
struct TextEntry {
    hash: u64,
    offset: u32,
    length: u32,
    count: u64,
}

/// What one column's distinct values may take: the table sets it from its memory budget and
/// its width (see [`TableBudget`]); a column alone is bounded only by the fixed caps.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct DistinctQuota {
    /// Bytes of exact values (tables and text) before the switch to an estimate, and the most
    /// the estimate with its kept values and histogram may take after it.
    pub bytes: usize,
    /// HyperLogLog precision of the estimate.
    pub precision: u32,
}

impl DistinctQuota {
    pub const UNBOUNDED: DistinctQuota = DistinctQuota {
        bytes: usize::MAX,
        precision: HYPERLOGLOG_PRECISION,
    };

    /// The quota for a share of `bytes`: the sketch takes at most a quarter of it.
    pub fn for_share(bytes: usize) -> DistinctQuota {
        let mut precision = HYPERLOGLOG_PRECISION;
        while precision > HYPERLOGLOG_MINIMUM_PRECISION && (1usize << precision) > bytes / 4 {
            precision -= 1;
        }
        DistinctQuota { bytes, precision }
    }

    fn histogram_bins(&self) -> usize {
        if self.bytes < 64 << 10 {
            SMALL_FINE_BIN_COUNT
        } else {
            DoublingHistogram::default().fine_bins()
        }
    }
}

/// Bytes a `hashbrown` table with room for `capacity` entries of `entry` bytes allocates
/// (buckets are a power of two, at most 7/8 full, one control byte each, plus a group).
fn table_heap_bytes(capacity: usize, entry: usize) -> usize {
    if capacity == 0 {
        return 0;
    }
    let buckets = if capacity < 8 {
        (capacity + 1).next_power_of_two()
    } else {
        (capacity * 8 / 7).next_power_of_two()
    };
    buckets * (entry + 1) + 16
}

/// Exact distinct values with counts, then a HyperLogLog once there are too many (by count,
/// by bytes of text, or by the quota the table's memory budget gives the column).
#[derive(Clone, Debug)]
struct DistinctTracker {
    numbers: HashTable<NumberEntry>,
    texts: HashTable<TextEntry>,
    text_arena: Vec<u8>,
    estimate: Option<Box<HyperLogLog>>,
    /// Every number since the switch to an estimate (before it, the exact values give the
    /// histogram), so a column that stays exact allocates no bins.
    histogram: DoublingHistogram,
    quota: DistinctQuota,
}

impl Default for DistinctTracker {
    fn default() -> DistinctTracker {
        DistinctTracker {
            numbers: HashTable::new(),
            texts: HashTable::new(),
            text_arena: Vec::new(),
            estimate: None,
            histogram: DoublingHistogram::default(),
            quota: DistinctQuota::UNBOUNDED,
        }
    }
}

/// Equal numbers share one key: `-0.0` is `0.0`.
fn canonical_number_bits(value: f64) -> u64 {
    if value == 0.0 {
        0
    } else {
        value.to_bits()
    }
}

impl DistinctTracker {
    fn exact_len(&self) -> usize {
        self.numbers.len() + self.texts.len()
    }

    /// Bytes held on the heap (an estimate from the capacities, computed in constant time).
    fn heap_bytes(&self) -> usize {
        table_heap_bytes(self.numbers.capacity(), std::mem::size_of::<NumberEntry>())
            + table_heap_bytes(self.texts.capacity(), std::mem::size_of::<TextEntry>())
            + self.text_arena.capacity()
            + self.estimate.as_ref().map_or(0, |sketch| {
                sketch.heap_bytes() + std::mem::size_of::<HyperLogLog>()
            })
            + self.histogram.heap_bytes()
    }

    fn over_cap(&self) -> bool {
        self.exact_len() > EXACT_DISTINCT_CAP
            || self.text_arena.len() > EXACT_DISTINCT_BYTES_CAP
            || self.heap_bytes() > self.quota.bytes
    }

    fn switch_to_estimate(&mut self) {
        if self.estimate.is_some() {
            return;
        }
        let mut sketch = Box::new(HyperLogLog::with_precision(self.quota.precision));
        let mut histogram = DoublingHistogram::with_fine_bins(self.quota.histogram_bins());
        for entry in self.numbers.iter() {
            sketch.add_hash(hash_number_bits(entry.bits));
            histogram.add(f64::from_bits(entry.bits), entry.count);
        }
        for entry in self.texts.iter() {
            sketch.add_hash(entry.hash);
        }
        self.estimate = Some(sketch);
        self.histogram = histogram;
        self.keep_only_most_frequent();
    }

    /// Apply a new (smaller) quota: switch to an estimate, coarsen it, or keep fewer values.
    fn set_quota(&mut self, quota: DistinctQuota) {
        self.quota = quota;
        if let Some(sketch) = &mut self.estimate {
            if sketch.precision() > quota.precision {
                **sketch = sketch.folded_to(quota.precision);
            }
            if self.histogram.fine_bins() > quota.histogram_bins() {
                let mut coarse = DoublingHistogram::with_fine_bins(quota.histogram_bins());
                coarse.merge(&self.histogram);
                self.histogram = coarse;
            }
            if self.heap_bytes() > quota.bytes {
                self.keep_only_most_frequent();
            }
        } else if self.over_cap() {
            self.switch_to_estimate();
        }
    }

    /// After the switch to an estimate, keep counting only the most frequent values seen so
    /// far (at most [`KEPT_AFTER_SWITCH`] of each sort, and within what the quota leaves after
    /// the sketch and the histogram): a small table stays in the processor's cache and bounds
    /// memory.
    fn keep_only_most_frequent(&mut self) {
        let fixed = self
            .estimate
            .as_ref()
            .map_or(0, |sketch| sketch.heap_bytes())
            + self.histogram.heap_bytes();
        let room = self.quota.bytes.saturating_sub(fixed) / 2;
        // an entry costs its slot (about twice its size once the table's slack is counted)
        let number_cost = 2 * (std::mem::size_of::<NumberEntry>() + 1);
        let text_cost = 2 * (std::mem::size_of::<TextEntry>() + 1);

        let mut numbers: Vec<NumberEntry> = self.numbers.iter().copied().collect();
        numbers.sort_unstable_by_key(|entry| std::cmp::Reverse(entry.count));
        numbers.truncate(KEPT_AFTER_SWITCH.min(room / number_cost));
        let mut number_table = HashTable::with_capacity(numbers.len());
        for entry in numbers {
            number_table.insert_unique(hash_number_bits(entry.bits), entry, |entry| {
                hash_number_bits(entry.bits)
            });
        }
        self.numbers = number_table;

        let mut texts: Vec<TextEntry> = self.texts.iter().copied().collect();
        texts.sort_unstable_by_key(|entry| std::cmp::Reverse(entry.count));
        let mut used = 0usize;
        let mut kept = 0usize;
        for entry in &texts {
            let cost = text_cost.saturating_add(entry.length as usize);
            if kept == KEPT_AFTER_SWITCH || used.saturating_add(cost) > room {
                break;
            }
            used += cost;
            kept += 1;
        }
        texts.truncate(kept);
        let mut arena = Vec::with_capacity(used.saturating_sub(kept * text_cost));
        let mut text_table = HashTable::with_capacity(texts.len());
        for entry in texts {
            let text = DistinctTracker::text_of(&self.text_arena, &entry);
            let offset = arena.len() as u32;
            arena.extend_from_slice(text);
            text_table.insert_unique(entry.hash, TextEntry { offset, ..entry }, |entry| {
                entry.hash
            });
        }
        self.texts = text_table;
        self.text_arena = arena;
    }

    fn add_number_count(&mut self, value: f64, count: u64) {
        self.add_number_count_to(value, count, true);
    }

    /// `to_histogram`: false for values a merged estimate's histogram already holds.
    fn add_number_count_to(&mut self, value: f64, count: u64, to_histogram: bool) {
        let bits = canonical_number_bits(value);
        let hash = hash_number_bits(bits);
        if to_histogram && self.estimate.is_some() {
            self.histogram.add(value, count);
        }
        if let Some(entry) = self.numbers.find_mut(hash, |entry| entry.bits == bits) {
            entry.count += count;
            return;
        }
        match &mut self.estimate {
            Some(sketch) => sketch.add_hash(hash),
            None => {
                self.numbers
                    .insert_unique(hash, NumberEntry { bits, count }, |entry| {
                        hash_number_bits(entry.bits)
                    });
                if self.over_cap() {
                    self.switch_to_estimate();
                }
            }
        }
    }

    fn text_of<'a>(arena: &'a [u8], entry: &TextEntry) -> &'a [u8] {
        let start = entry.offset as usize;
        arena
            .get(start..start + entry.length as usize)
            .unwrap_or(&[])
    }

    fn add_text_count(&mut self, text: &[u8], hash: u64, count: u64) {
        let arena = &self.text_arena;
        if let Some(entry) = self
            .texts
            .find_mut(hash, |entry| DistinctTracker::text_of(arena, entry) == text)
        {
            entry.count += count;
            return;
        }
        match &mut self.estimate {
            Some(sketch) => sketch.add_hash(hash),
            None => {
                let offset = self.text_arena.len() as u32;
                self.text_arena.extend_from_slice(text);
                self.texts.insert_unique(
                    hash,
                    TextEntry {
                        hash,
                        offset,
                        length: text.len() as u32,
                        count,
                    },
                    |entry| entry.hash,
                );
                if self.over_cap() {
                    self.switch_to_estimate();
                }
            }
        }
    }

    fn merge(&mut self, other: &DistinctTracker) {
        if other.estimate.is_some() {
            // its histogram holds all its numbers, the kept ones included
            self.switch_to_estimate();
            self.histogram.merge(&other.histogram);
        }
        let to_histogram = other.estimate.is_none();
        for entry in other.numbers.iter() {
            self.add_number_count_to(f64::from_bits(entry.bits), entry.count, to_histogram);
        }
        for entry in other.texts.iter() {
            let text = DistinctTracker::text_of(&other.text_arena, entry);
            self.add_text_count(text, entry.hash, entry.count);
        }
        if let Some(other_sketch) = &other.estimate {
            self.switch_to_estimate();
            if let Some(sketch) = &mut self.estimate {
                sketch.merge(other_sketch);
            }
        }
    }

    fn distinct_count(&self) -> DistinctCount {
        match &self.estimate {
            None => DistinctCount {
                value: self.exact_len() as u64,
                exact: true,
                relative_error: 0.0,
            },
            Some(sketch) => DistinctCount {
                value: sketch.estimate().round() as u64,
                exact: false,
                relative_error: sketch.relative_error(),
            },
        }
    }

    /// Every kept value as a reference with its count.
    fn kept_references(&self) -> Vec<(KeptValue<'_>, u64)> {
        let mut values = Vec::with_capacity(self.exact_len());
        for entry in self.numbers.iter() {
            values.push((KeptValue::Number(f64::from_bits(entry.bits)), entry.count));
        }
        for entry in self.texts.iter() {
            let text = DistinctTracker::text_of(&self.text_arena, entry);
            values.push((KeptValue::Text(text), entry.count));
        }
        values
    }

    /// The `limit` most frequent kept values, most frequent first, ties in value order.
    fn most_frequent(&self, limit: usize) -> Vec<(String, u64)> {
        let mut values = self.kept_references();
        let by_frequency = |a: &(KeptValue<'_>, u64), b: &(KeptValue<'_>, u64)| {
            b.1.cmp(&a.1).then_with(|| a.0.cmp_value(&b.0))
        };
        if values.len() > limit && limit > 0 {
            values.select_nth_unstable_by(limit - 1, by_frequency);
            values.truncate(limit);
        }
        values.sort_unstable_by(by_frequency);
        values
            .iter()
            .take(limit)
            .map(|(value, count)| (value.display(), *count))
            .collect()
    }

    /// Every value with its count in value order, when exact and at most `cap` values.
    fn every_value(&self, cap: usize) -> Option<Vec<(String, u64)>> {
        if self.estimate.is_some() || self.exact_len() > cap {
            return None;
        }
        let mut values = self.kept_references();
        values.sort_unstable_by(|a, b| a.0.cmp_value(&b.0));
        Some(
            values
                .iter()
                .map(|(value, count)| (value.display(), *count))
                .collect(),
        )
    }
}

/// A kept distinct value, borrowed from the tracker.
#[derive(Clone, Copy, Debug)]
enum KeptValue<'a> {
    Number(f64),
    Text(&'a [u8]),
}

impl KeptValue<'_> {
    /// Numbers first in numeric order, then text in byte order.
    fn cmp_value(&self, other: &KeptValue<'_>) -> std::cmp::Ordering {
        match (self, other) {
            (KeptValue::Number(x), KeptValue::Number(y)) => x.total_cmp(y),
            (KeptValue::Number(_), KeptValue::Text(_)) => std::cmp::Ordering::Less,
            (KeptValue::Text(_), KeptValue::Number(_)) => std::cmp::Ordering::Greater,
            (KeptValue::Text(a), KeptValue::Text(b)) => a.cmp(b),
        }
    }

    fn display(&self) -> String {
        match self {
            KeptValue::Number(number) => format_number(*number),
            KeptValue::Text(text) => String::from_utf8_lossy(text).into_owned(),
        }
    }
}

/// A number as its shortest round-trip text (`42`, `39.1`).
pub fn format_number(value: f64) -> String {
    format!("{value}")
}

/// Everything learnt about one column so far.
#[derive(Clone, Debug, Default)]
pub struct ColumnAccumulator {
    /// Cells seen (missing or not); rows without the cell count as missing at the end.
    cells: u64,
    missing: u64,
    numeric_count: u64,
    numeric_sum: CompensatedSum,
    numeric_min: f64,
    numeric_max: f64,
    integer_texts: u64,
    time_count: u64,
    earliest: Option<(TimeKey, String)>,
    latest: Option<(TimeKey, String)>,
    non_numeric_examples: Vec<String>,
    samples: Vec<String>,
    distinct: DistinctTracker,
}

impl ColumnAccumulator {
    pub fn add_missing(&mut self) {
        self.cells += 1;
        self.missing += 1;
    }

    fn keep_sample(&mut self, text: &str) {
        if self.samples.len() < EXAMPLE_COUNT && !self.samples.iter().any(|sample| sample == text) {
            self.samples.push(text.to_string());
        }
    }

    fn record_number(&mut self, value: f64) {
        if self.numeric_count == 0 {
            self.numeric_min = value;
            self.numeric_max = value;
        } else {
            if value < self.numeric_min {
                self.numeric_min = value;
            }
            if value > self.numeric_max {
                self.numeric_max = value;
            }
        }
        self.numeric_count += 1;
        self.numeric_sum.add(value);
        self.distinct.add_number_count(value, 1);
    }

    /// A number that came typed (JSON, inline rows).
    pub fn add_number(&mut self, value: f64) {
        self.cells += 1;
        if !value.is_finite() {
            self.missing += 1;
            return;
        }
        if self.samples.len() < EXAMPLE_COUNT {
            self.keep_sample(&format_number(value));
        }
        if value.fract() == 0.0 {
            self.integer_texts += 1;
        }
        self.record_number(value);
    }

    /// A cell as written in a text file (or a JSON string).
    pub fn add_text(&mut self, cell: &str) {
        self.cells += 1;
        let trimmed = trim_cell(cell);
        if is_missing_token(trimmed) {
            self.missing += 1;
            return;
        }
        if self.samples.len() < EXAMPLE_COUNT {
            self.keep_sample(trimmed);
        }
        if let Some(value) = parse_number(trimmed) {
            if is_integer_text(trimmed) {
                self.integer_texts += 1;
            }
            self.record_number(value);
            return;
        }
        if let Some(key) = parse_iso_time(trimmed) {
            self.time_count += 1;
            let is_earlier = self
                .earliest
                .as_ref()
                .is_none_or(|(earliest, _)| key < *earliest);
            if is_earlier {
                self.earliest = Some((key, trimmed.to_string()));
            }
            let is_later = self.latest.as_ref().is_none_or(|(latest, _)| key > *latest);
            if is_later {
                self.latest = Some((key, trimmed.to_string()));
            }
        } else if self.non_numeric_examples.len() < EXAMPLE_COUNT
            && !self
                .non_numeric_examples
                .iter()
                .any(|example| example == trimmed)
        {
            self.non_numeric_examples.push(trimmed.to_string());
        }
        let bytes = trimmed.as_bytes();
        self.distinct.add_text_count(bytes, hash_bytes(bytes), 1);
    }

    pub fn merge(&mut self, other: &ColumnAccumulator) {
        self.cells += other.cells;
        self.missing += other.missing;
        if other.numeric_count > 0 {
            if self.numeric_count == 0 {
                self.numeric_min = other.numeric_min;
                self.numeric_max = other.numeric_max;
            } else {
                self.numeric_min = self.numeric_min.min(other.numeric_min);
                self.numeric_max = self.numeric_max.max(other.numeric_max);
            }
        }
        self.numeric_count += other.numeric_count;
        self.numeric_sum.merge(&other.numeric_sum);
        self.integer_texts += other.integer_texts;
        self.time_count += other.time_count;
        if let Some((key, text)) = &other.earliest {
            if self.earliest.as_ref().is_none_or(|(mine, _)| key < mine) {
                self.earliest = Some((*key, text.clone()));
            }
        }
        if let Some((key, text)) = &other.latest {
            if self.latest.as_ref().is_none_or(|(mine, _)| key > mine) {
                self.latest = Some((*key, text.clone()));
            }
        }
        for example in &other.non_numeric_examples {
            if self.non_numeric_examples.len() < EXAMPLE_COUNT
                && !self.non_numeric_examples.contains(example)
            {
                self.non_numeric_examples.push(example.clone());
            }
        }
        for sample in &other.samples {
            self.keep_sample(sample);
        }
        self.distinct.merge(&other.distinct);
    }

    fn finish(&self, name: &str, index: usize, rows: u64) -> ColumnProfile {
        let missing = self.missing + rows.saturating_sub(self.cells);
        let present = rows.saturating_sub(missing);
        let numeric_share = if present == 0 {
            0.0
        } else {
            self.numeric_count as f64 / present as f64
        };
        let time_share = if present == 0 {
            0.0
        } else {
            self.time_count as f64 / present as f64
        };
        let distinct = self.distinct.distinct_count();
        let numeric = (self.numeric_count > 0).then(|| {
            let bin_count = histogram_bin_count(
                self.numeric_min,
                self.numeric_max,
                self.integer_texts == self.numeric_count,
            );
            let histogram = if self.distinct.estimate.is_none() {
                let mut bins = vec![0u64; bin_count];
                for entry in self.distinct.numbers.iter() {
                    let bin = equal_width_bin(
                        f64::from_bits(entry.bits),
                        self.numeric_min,
                        self.numeric_max,
                        bin_count,
                    );
                    bins[bin] += entry.count;
                }
                bins
            } else {
                self.distinct
                    .histogram
                    .rebin(self.numeric_min, self.numeric_max, bin_count)
            };
            NumericSummary {
                count: self.numeric_count,
                min: self.numeric_min,
                max: self.numeric_max,
                mean: self.numeric_sum.value() / self.numeric_count as f64,
                histogram,
            }
        });
        let top_values = self.distinct.most_frequent(TOP_VALUE_COUNT);
        let all_values = self.distinct.every_value(ALL_VALUES_CAP);

        let (kind, kind_evidence) =
            self.decide_kind(present, numeric_share, time_share, &all_values);
        let shape = numeric.as_ref().map(|summary| NumericShape {
            min: summary.min,
            all_integers: self.integer_texts == self.numeric_count,
            is_year_range: summary.min >= 1000.0 && summary.max <= 2999.0,
        });
        let (zero, zero_evidence) = if kind == AttributeKind::Time {
            (
                Some(ZeroMeaning::Arbitrary),
                Some("dates and times have no natural zero".to_string()),
            )
        } else if kind == AttributeKind::Quantitative {
            match zero_meaning_hint(name, shape) {
                Some((zero, evidence)) => (Some(zero), Some(evidence)),
                None => (None, None),
            }
        } else {
            (None, None)
        };
        let kind_evidence = match zero_evidence {
            Some(evidence) => format!(
                "{kind_evidence}; zero is {}: {evidence}",
                zero.map_or("", |z| z.as_str())
            ),
            None => kind_evidence,
        };
        let time_range = match (&self.earliest, &self.latest) {
            (Some((_, earliest)), Some((_, latest))) if kind == AttributeKind::Time => {
                Some((earliest.clone(), latest.clone()))
            }
            _ => None,
        };
        ColumnProfile {
            name: name.to_string(),
            index,
            kind,
            kind_evidence,
            zero,
            rows,
            missing,
            distinct,
            numeric,
            numeric_share,
            non_numeric_examples: self.non_numeric_examples.clone(),
            top_values,
            all_values,
            samples: self.samples.clone(),
            time_range,
            header_range: None,
        }
    }

    fn decide_kind(
        &self,
        present: u64,
        numeric_share: f64,
        time_share: f64,
        all_values: &Option<Vec<(String, u64)>>,
    ) -> (AttributeKind, String) {
        let texts: Option<Vec<&str>> = all_values
            .as_ref()
            .map(|values| values.iter().map(|(text, _)| text.as_str()).collect());
        decide_kind(
            KindCounts {
                present,
                numbers: self.numeric_count,
                times: self.time_count,
                numeric_share,
                time_share,
            },
            texts.as_deref(),
        )
    }
}

/// What a column's kind is decided from: values present, how many are numbers and times.
#[derive(Clone, Copy, Debug)]
pub struct KindCounts {
    pub present: u64,
    pub numbers: u64,
    pub times: u64,
    pub numeric_share: f64,
    pub time_share: f64,
}

/// The kind of a column, with the evidence in words (the rules in [`super::infer`]):
/// `distinct_values` are every distinct value when there are few enough (for the ordinal
/// vocabularies). The evaluation decides kinds of undeclared columns with it too.
pub fn decide_kind(
    counts: KindCounts,
    distinct_values: Option<&[&str]>,
) -> (AttributeKind, String) {
    let KindCounts {
        present,
        numeric_share,
        time_share,
        ..
    } = counts;
    if present == 0 {
        return (
            AttributeKind::Categorical,
            "no values to judge by (every cell is missing)".to_string(),
        );
    }
    let percent = |share: f64| format!("{:.1} %", share * 100.0);
    if numeric_share >= MAJORITY_SHARE {
        let evidence = if counts.numbers == present {
            format!("all {present} values are numbers")
        } else {
            format!(
                "{} of {present} values ({}) are numbers",
                counts.numbers,
                percent(numeric_share)
            )
        };
        return (AttributeKind::Quantitative, evidence);
    }
    if time_share >= MAJORITY_SHARE {
        let evidence = if counts.times == present {
            format!("all {present} values are ISO 8601 dates or date-times")
        } else {
            format!(
                "{} of {present} values ({}) are ISO 8601 dates or date-times",
                counts.times,
                percent(time_share)
            )
        };
        return (AttributeKind::Time, evidence);
    }
    if let Some(texts) = distinct_values {
        if let Some(vocabulary) = ordinal_vocabulary_of(texts) {
            return (
                AttributeKind::Ordered,
                format!(
                    "all {} distinct values belong to the ordered scale {}",
                    texts.len(),
                    vocabulary.join(" < ")
                ),
            );
        }
    }
    let mut evidence = format!(
        "text values ({} of {present} are numbers, {} are dates)",
        counts.numbers, counts.times
    );
    if counts.numbers == 0 && counts.times == 0 {
        evidence = format!("all {present} values are text");
    }
    (AttributeKind::Categorical, evidence)
}

/// Bins for a histogram from `min` to `max`: [`HISTOGRAM_BIN_COUNT`], or one per integer when
/// all values are integers spanning fewer (years 2007-2009 get three bins, not ten).
pub fn histogram_bin_count(min: f64, max: f64, all_integers: bool) -> usize {
    let span = max - min;
    if all_integers && span >= 0.0 && span < HISTOGRAM_BIN_COUNT as f64 {
        span as usize + 1
    } else {
        HISTOGRAM_BIN_COUNT
    }
}

/// Bytes one column costs a profile whatever its values: its accumulator, its name (kept
/// twice, in order and in the index), a few samples, and the finished [`ColumnProfile`] with
/// its strings. Measured with `markwell check` on 100,000 one-row columns (see
/// `tests/hostile_limits.rs`: 1.25 KB a column), rounded up.
pub const COLUMN_FIXED_BYTES: usize = 1280;

/// What a table may hold, from the profile's memory budget (see [`super::ProfileLimits`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct TableBudget {
    /// Bytes for the distinct values of all columns together: each column gets an equal
    /// share of it (recomputed as the table widens), and switches to an estimate past it.
    pub distinct_bytes: usize,
    /// Most columns; keys past it are not profiled and the table is marked too wide.
    pub max_columns: usize,
}

/// The profile of a whole table under construction.
#[derive(Clone, Debug, Default)]
pub struct TableAccumulator {
    pub names: Vec<String>,
    pub columns: Vec<ColumnAccumulator>,
    index_by_name: HashMap<String, usize>,
    pub rows: u64,
    problems: Vec<DataProblem>,
    /// Problems seen, including those not kept.
    problem_total: u64,
    budget: Option<TableBudget>,
    /// Columns the quotas were last computed for (a power of two).
    quota_level: usize,
    /// A key past `max_columns` was seen (and left out).
    too_wide: bool,
    /// Per column, the row (as `rows` counted it) that last gave it a cell: a JSON row that
    /// names a key twice gives its column one cell, not two.
    last_row_with_cell: Vec<u64>,
}

impl TableAccumulator {
    pub fn with_columns(names: &[String]) -> TableAccumulator {
        let mut table = TableAccumulator::default();
        for name in names {
            table.column_index(name);
        }
        table
    }

    /// A table for `names` (possibly none yet, for JSON) that stays within `budget`. The
    /// caller checks the width of a header against `budget.max_columns` first.
    pub fn with_budget(names: &[String], budget: TableBudget) -> TableAccumulator {
        let mut table = TableAccumulator {
            budget: Some(budget),
            quota_level: names.len().max(1).next_power_of_two(),
            ..TableAccumulator::default()
        };
        table.names.reserve(names.len());
        table.columns.reserve(names.len());
        table.index_by_name.reserve(names.len());
        for name in names {
            table.column_index(name);
        }
        table
    }

    /// Whether a key was left out for the column limit.
    pub fn is_too_wide(&self) -> bool {
        self.too_wide
    }

    fn quota_at(&self, level: usize) -> DistinctQuota {
        match self.budget {
            None => DistinctQuota::UNBOUNDED,
            Some(budget) => DistinctQuota::for_share(budget.distinct_bytes / level.max(1)),
        }
    }

    /// The index of column `name`, adding it (for JSON rows, whose keys appear as they come).
    pub fn column_index(&mut self, name: &str) -> usize {
        if let Some(&index) = self.index_by_name.get(name) {
            return index;
        }
        let index = self.names.len();
        self.names.push(name.to_string());
        let mut column = ColumnAccumulator::default();
        if self.budget.is_some() {
            if self.names.len() > self.quota_level {
                // twice as wide: every column's share halves (amortised constant per column)
                self.quota_level = self.names.len().next_power_of_two();
                let quota = self.quota_at(self.quota_level);
                for existing in &mut self.columns {
                    existing.distinct.set_quota(quota);
                }
            }
            column.distinct.quota = self.quota_at(self.quota_level);
        }
        self.columns.push(column);
        self.index_by_name.insert(name.to_string(), index);
        index
    }

    /// Whether the current row (number `rows`) has not yet given column `index` a cell; marks
    /// it as given. A second key of the same name in one row is then a problem, not a cell.
    pub fn first_cell_in_row(&mut self, index: usize, key: &str) -> bool {
        if self.last_row_with_cell.len() < self.columns.len() {
            self.last_row_with_cell.resize(self.columns.len(), 0);
        }
        let Some(last) = self.last_row_with_cell.get_mut(index) else {
            return true;
        };
        if *last == self.rows {
            self.add_problem(DataProblem {
                message: format!(
                    "a row names the key `{key}` twice; only its first value is profiled"
                ),
                line: None,
                byte_offset: None,
            });
            return false;
        }
        *last = self.rows;
        true
    }

    /// Like [`TableAccumulator::column_index`], but `None` (and the table marked too wide)
    /// for a new key past the budget's column limit.
    pub fn try_column_index(&mut self, name: &str) -> Option<usize> {
        if let Some(&index) = self.index_by_name.get(name) {
            return Some(index);
        }
        if let Some(budget) = self.budget {
            if self.names.len() >= budget.max_columns {
                self.too_wide = true;
                return None;
            }
        }
        Some(self.column_index(name))
    }

    pub fn add_problem(&mut self, problem: DataProblem) {
        self.problem_total += 1;
        if self.problems.len() < PROBLEM_CAP {
            self.problems.push(problem);
        }
    }

    pub fn problem_count(&self) -> u64 {
        self.problem_total
    }

    /// Shift the lines of kept problems (a chunk scanned from the middle of a file learns its
    /// first line only afterwards).
    pub fn shift_problem_lines(&mut self, lines: usize) {
        for problem in &mut self.problems {
            if let Some(line) = &mut problem.line {
                *line += lines;
            }
        }
    }

    /// Add `other` (which scanned rows after ours) into this table.
    pub fn merge(&mut self, other: &TableAccumulator) {
        for (name, column) in other.names.iter().zip(other.columns.iter()) {
            let index = self.column_index(name);
            self.columns[index].merge(column);
        }
        self.rows += other.rows;
        self.too_wide |= other.too_wide;
        for problem in &other.problems {
            if self.problems.len() < PROBLEM_CAP {
                self.problems.push(problem.clone());
            }
        }
        self.problem_total += other.problem_total;
    }

    pub fn finish(
        &self,
        path: Option<PathBuf>,
        format: DataFormat,
        is_sample: bool,
        header_ranges: &[Option<(u64, u64)>],
    ) -> DataProfile {
        let columns = self
            .names
            .iter()
            .zip(self.columns.iter())
            .enumerate()
            .map(|(index, (name, column))| {
                let mut profile = column.finish(name, index, self.rows);
                profile.header_range = header_ranges.get(index).copied().flatten();
                profile
            })
            .collect();
        let mut problems = self.problems.clone();
        let hidden = self.problem_total.saturating_sub(problems.len() as u64);
        if hidden > 0 {
            problems.push(DataProblem {
                message: format!("{hidden} more problems like these are not listed"),
                line: None,
                byte_offset: None,
            });
        }
        DataProfile {
            path,
            format,
            rows: self.rows,
            columns,
            is_sample,
            problems,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn merged_halves_equal_one_pass() {
        let values: Vec<String> = (0..2000).map(|i| format!("{}", i % 300)).collect();
        let mut whole = ColumnAccumulator::default();
        let mut left = ColumnAccumulator::default();
        let mut right = ColumnAccumulator::default();
        for (position, value) in values.iter().enumerate() {
            whole.add_text(value);
            if position < 777 {
                left.add_text(value);
            } else {
                right.add_text(value);
            }
        }
        left.merge(&right);
        let whole_profile = whole.finish("n", 0, 2000);
        let merged_profile = left.finish("n", 0, 2000);
        assert_eq!(whole_profile, merged_profile);
        assert_eq!(merged_profile.distinct.value, 300);
    }

    #[test]
    fn past_the_cap_the_count_is_an_estimate() {
        let mut column = ColumnAccumulator::default();
        for value in 0..(EXACT_DISTINCT_CAP as u64 + 50_000) {
            column.add_text(&format!("id-{value}"));
        }
        let profile = column.finish("id", 0, EXACT_DISTINCT_CAP as u64 + 50_000);
        assert!(!profile.distinct.exact);
        let truth = (EXACT_DISTINCT_CAP + 50_000) as f64;
        let error = (profile.distinct.value as f64 - truth).abs() / truth;
        assert!(
            error < 3.0 * profile.distinct.relative_error,
            "error {error}"
        );
        assert!(profile.all_values.is_none());
    }
}
