//! The running state of one `summary` in one group, fed one cell at a time.
//!
//! Memory per group: a few numbers for `count`, `sum`, `mean`, `min`, `max`; for `median` the
//! group's values while the layer's values fit the exact budget (8 bytes each), then a
//! Greenwald–Khanna sketch ([`super::quantile`]); for `distinct` a set of 64-bit hashes of the
//! values (8 bytes each, exact but for hash collisions, about `n² / 2^65`) while they fit the
//! same budget, then a HyperLogLog (16 KiB, 0.81 % standard error). Missing cells and cells that
//! are not numbers are skipped, as the reference dataframe libraries skip missing values.

use std::collections::HashSet;

use super::model::Datum;
use super::quantile::QuantileSketch;
use crate::data::sketch::{CompensatedSum, HyperLogLog};
use crate::spec::model::Summary;

#[derive(Clone, Debug)]
pub enum MedianState {
    Exact(Vec<f64>),
    Sketch(Box<QuantileSketch>),
}

#[derive(Clone, Debug)]
pub enum DistinctState {
    Exact(HashSet<u64>),
    Estimate(Box<HyperLogLog>),
}

/// One summary of one group.
#[derive(Clone, Debug)]
pub enum Accumulator {
    Count(u64),
    Sum {
        sum: CompensatedSum,
        count: u64,
    },
    Mean {
        sum: CompensatedSum,
        count: u64,
    },
    Min(Option<f64>),
    Max(Option<f64>),
    Median(MedianState),
    Distinct(DistinctState),
    /// No summary: the value of the last row (drawn on top of the others).
    Last(Datum),
}

impl Accumulator {
    pub fn new(summary: Option<Summary>) -> Accumulator {
        match summary {
            Some(Summary::Count) => Accumulator::Count(0),
            Some(Summary::Sum) => Accumulator::Sum {
                sum: CompensatedSum::default(),
                count: 0,
            },
            Some(Summary::Mean) => Accumulator::Mean {
                sum: CompensatedSum::default(),
                count: 0,
            },
            Some(Summary::Min) => Accumulator::Min(None),
            Some(Summary::Max) => Accumulator::Max(None),
            Some(Summary::Median) => Accumulator::Median(MedianState::Exact(Vec::new())),
            Some(Summary::Distinct) => Accumulator::Distinct(DistinctState::Exact(HashSet::new())),
            None => Accumulator::Last(Datum::Missing),
        }
    }

    /// Add one cell: `present` (not missing), its number (for number and time columns), its
    /// hash (for `distinct`) and its value (for `Last`). Returns the bytes the exact state grew by.
    pub fn add(&mut self, cell: &CellValue) -> usize {
        match self {
            Accumulator::Count(count) => {
                if cell.present {
                    *count += 1;
                }
                0
            }
            Accumulator::Sum { sum, count } | Accumulator::Mean { sum, count } => {
                if let Some(value) = cell.number {
                    sum.add(value);
                    *count += 1;
                }
                0
            }
            Accumulator::Min(minimum) => {
                if let Some(value) = cell.number {
                    *minimum = Some(minimum.map_or(value, |m| m.min(value)));
                }
                0
            }
            Accumulator::Max(maximum) => {
                if let Some(value) = cell.number {
                    *maximum = Some(maximum.map_or(value, |m| m.max(value)));
                }
                0
            }
            Accumulator::Median(state) => match (state, cell.number) {
                (MedianState::Exact(values), Some(value)) => {
                    let before = values.capacity();
                    values.push(value);
                    (values.capacity() - before) * std::mem::size_of::<f64>()
                }
                (MedianState::Sketch(sketch), Some(value)) => {
                    sketch.add(value);
                    0
                }
                (_, None) => 0,
            },
            Accumulator::Distinct(state) => match (state, cell.present) {
                (DistinctState::Exact(hashes), true) => {
                    let before = hashes.capacity();
                    hashes.insert(cell.hash);
                    // a hash set slot holds the value and a control byte
                    (hashes.capacity() - before) * (std::mem::size_of::<u64>() + 1)
                }
                (DistinctState::Estimate(sketch), true) => {
                    sketch.add_hash(cell.hash);
                    0
                }
                (_, false) => 0,
            },
            Accumulator::Last(last) => {
                last.clone_from(&cell.datum);
                0
            }
        }
    }

    /// Bytes held by the exact state that a budget counts (median values, distinct hashes).
    pub fn exact_bytes(&self) -> usize {
        match self {
            Accumulator::Median(MedianState::Exact(values)) => {
                values.capacity() * std::mem::size_of::<f64>()
            }
            Accumulator::Distinct(DistinctState::Exact(hashes)) => {
                hashes.capacity() * (std::mem::size_of::<u64>() + 1)
            }
            _ => 0,
        }
    }

    /// Move an exact median or distinct count to its sketch (freeing the exact state).
    /// Returns whether it moved.
    pub fn to_sketch(&mut self, rank_error: f64) -> bool {
        match self {
            Accumulator::Median(state @ MedianState::Exact(_)) => {
                let MedianState::Exact(values) =
                    std::mem::replace(state, MedianState::Exact(Vec::new()))
                else {
                    return false;
                };
                let mut sketch = QuantileSketch::new(rank_error);
                for value in values {
                    sketch.add(value);
                }
                *state = MedianState::Sketch(Box::new(sketch));
                true
            }
            Accumulator::Distinct(state @ DistinctState::Exact(_)) => {
                let DistinctState::Exact(hashes) =
                    std::mem::replace(state, DistinctState::Exact(HashSet::new()))
                else {
                    return false;
                };
                let mut sketch = HyperLogLog::new();
                for hash in hashes {
                    sketch.add_hash(hash);
                }
                *state = DistinctState::Estimate(Box::new(sketch));
                true
            }
            _ => false,
        }
    }

    /// Whether the result is an estimate.
    pub fn is_estimate(&self) -> bool {
        matches!(
            self,
            Accumulator::Median(MedianState::Sketch(_))
                | Accumulator::Distinct(DistinctState::Estimate(_))
        )
    }

    /// The drawn number (`None` when the group has no value: a mean of nothing).
    pub fn result(&mut self) -> Option<f64> {
        match self {
            Accumulator::Count(count) => Some(*count as f64),
            // the sum of no values is 0, as the reference dataframe libraries have it
            Accumulator::Sum { sum, .. } => Some(sum.value()),
            Accumulator::Mean { sum, count } => (*count > 0).then(|| sum.value() / *count as f64),
            Accumulator::Min(value) | Accumulator::Max(value) => *value,
            Accumulator::Median(MedianState::Exact(values)) => exact_median(values),
            Accumulator::Median(MedianState::Sketch(sketch)) => sketch.quantile(0.5),
            Accumulator::Distinct(DistinctState::Exact(hashes)) => Some(hashes.len() as f64),
            Accumulator::Distinct(DistinctState::Estimate(sketch)) => {
                Some(sketch.estimate().round())
            }
            Accumulator::Last(datum) => datum.as_f64(),
        }
    }
}

/// The median of `values` (reordered): the middle value, or the mean of the two middle values
/// for an even count (the usual definition, and the reference dataframe libraries').
pub fn exact_median(values: &mut [f64]) -> Option<f64> {
    let count = values.len();
    if count == 0 {
        return None;
    }
    let middle = count / 2;
    let (below, upper, _) = values.select_nth_unstable_by(middle, f64::total_cmp);
    let upper = *upper;
    if count % 2 == 1 {
        return Some(upper);
    }
    let lower = below.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    Some(lower + (upper - lower) / 2.0)
}

/// One cell as the accumulators read it.
#[derive(Clone, Debug)]
pub struct CellValue {
    pub present: bool,
    pub number: Option<f64>,
    pub hash: u64,
    pub datum: Datum,
}

#[cfg(test)]
mod tests {
    use super::*;

    fn number(value: f64) -> CellValue {
        CellValue {
            present: true,
            number: Some(value),
            hash: value.to_bits(),
            datum: Datum::Number(value),
        }
    }

    fn missing() -> CellValue {
        CellValue {
            present: false,
            number: None,
            hash: 0,
            datum: Datum::Missing,
        }
    }

    fn run(summary: Summary, cells: &[CellValue]) -> Option<f64> {
        let mut accumulator = Accumulator::new(Some(summary));
        for cell in cells {
            accumulator.add(cell);
        }
        accumulator.result()
    }

    #[test]
    fn every_summary_skips_missing_cells() {
        let cells = [
            number(4.0),
            missing(),
            number(1.0),
            number(4.0),
            number(7.0),
        ];
        assert_eq!(run(Summary::Count, &cells), Some(4.0));
        assert_eq!(run(Summary::Sum, &cells), Some(16.0));
        assert_eq!(run(Summary::Mean, &cells), Some(4.0));
        assert_eq!(run(Summary::Median, &cells), Some(4.0));
        assert_eq!(run(Summary::Min, &cells), Some(1.0));
        assert_eq!(run(Summary::Max, &cells), Some(7.0));
        assert_eq!(run(Summary::Distinct, &cells), Some(3.0));
        assert_eq!(run(Summary::Mean, &[missing()]), None);
        assert_eq!(run(Summary::Sum, &[missing()]), Some(0.0));
    }

    #[test]
    fn an_even_count_has_the_mean_of_the_two_middle_values_as_median() {
        assert_eq!(exact_median(&mut [3.0, 1.0, 10.0, 2.0]), Some(2.5));
        assert_eq!(exact_median(&mut []), None);
    }

    #[test]
    fn moving_to_the_sketch_keeps_the_answer_close() {
        let mut accumulator = Accumulator::new(Some(Summary::Median));
        for step in 0..10_001 {
            accumulator.add(&number(f64::from(step)));
        }
        assert!(accumulator.exact_bytes() >= 80_000);
        assert!(accumulator.to_sketch(0.001));
        assert!(accumulator.is_estimate());
        assert_eq!(accumulator.exact_bytes(), 0);
        let median = accumulator.result().unwrap_or(f64::NAN);
        // rank error at most 0.1 % of 10,001 values: within 10 ranks of 5,000
        assert!((median - 5000.0).abs() <= 10.0, "{median}");
    }

    #[test]
    fn distinct_counts_move_to_an_estimate_within_its_error() {
        let mut accumulator = Accumulator::new(Some(Summary::Distinct));
        for step in 0..20_000u64 {
            let cell = CellValue {
                present: true,
                number: None,
                hash: crate::data::sketch::hash_number_bits(step % 5000),
                datum: Datum::Missing,
            };
            accumulator.add(&cell);
        }
        assert_eq!(accumulator.result(), Some(5000.0));
        assert!(accumulator.to_sketch(0.001));
        assert!(accumulator.is_estimate());
        let estimate = accumulator.result().unwrap_or(f64::NAN);
        // HyperLogLog with 2^14 registers: 0.81 % standard error; four of them allowed here
        assert!((estimate - 5000.0).abs() <= 5000.0 * 0.0325, "{estimate}");
    }
}
