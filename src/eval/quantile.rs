//! A streaming quantile summary with a stated rank error: M. Greenwald and S. Khanna (2001),
//! "Space-efficient online computation of quantile summaries", Proceedings of ACM SIGMOD 2001,
//! pp. 58–66.
//!
//! The summary keeps tuples `(v, g, Δ)` sorted by `v`: `g` is the gap in minimum rank to the
//! previous tuple and `Δ` the uncertainty of the tuple's rank, so that `rmin(i) = Σ_{j≤i} g_j`
//! and `rmax(i) = rmin(i) + Δ_i`. The invariant `g_i + Δ_i ≤ ⌊2εn⌋` makes every query answer
//! within `εn` ranks of the asked rank. This is the simplified form in common use (a new value
//! gets `Δ = ⌊2εn⌋`, or 0 at either end; COMPRESS merges a tuple into its successor when the
//! merged tuple keeps the invariant), without the paper's band-based merge order; the rank
//! guarantee rests on the invariant alone, which this form keeps (the paper's space bound
//! `O((1/ε) log(εn))` is proved for the band form only).
//!
//! Values arrive in batches: they are buffered (at most `1 / (2ε)` of them), sorted, and merged
//! into the tuples in one pass as if inserted one by one in ascending order, then COMPRESS runs.
//! Memory: the tuples (24 bytes each) plus the buffer.

/// The rank error of the sketches the evaluation uses: 0.1 % of a group's values.
pub const DEFAULT_RANK_ERROR: f64 = 0.001;

#[derive(Clone, Copy, Debug, PartialEq)]
struct Tuple {
    value: f64,
    gap: u64,
    delta: u64,
}

/// A Greenwald–Khanna quantile summary.
#[derive(Clone, Debug)]
pub struct QuantileSketch {
    epsilon: f64,
    tuples: Vec<Tuple>,
    buffer: Vec<f64>,
    /// Values merged into `tuples` (not counting the buffer).
    merged: u64,
}

impl QuantileSketch {
    /// A summary whose answers are within `epsilon * n` ranks (`epsilon` in (0, 0.5)).
    pub fn new(epsilon: f64) -> QuantileSketch {
        let epsilon = if epsilon.is_finite() {
            epsilon.clamp(1e-6, 0.5)
        } else {
            DEFAULT_RANK_ERROR
        };
        QuantileSketch {
            epsilon,
            tuples: Vec::new(),
            buffer: Vec::new(),
            merged: 0,
        }
    }

    pub fn epsilon(&self) -> f64 {
        self.epsilon
    }

    /// Values added so far.
    pub fn count(&self) -> u64 {
        self.merged + self.buffer.len() as u64
    }

    fn buffer_capacity(&self) -> usize {
        ((1.0 / (2.0 * self.epsilon)) as usize).max(16)
    }

    /// Add one value (NaN is ignored).
    pub fn add(&mut self, value: f64) {
        if value.is_nan() {
            return;
        }
        self.buffer.push(value);
        if self.buffer.len() >= self.buffer_capacity() {
            self.flush();
        }
    }

    /// Bytes held (tuples and buffer).
    pub fn bytes(&self) -> usize {
        self.tuples.capacity() * std::mem::size_of::<Tuple>()
            + self.buffer.capacity() * std::mem::size_of::<f64>()
    }

    /// Merge the buffer into the tuples, then COMPRESS.
    fn flush(&mut self) {
        if self.buffer.is_empty() {
            return;
        }
        self.buffer.sort_unstable_by(f64::total_cmp);
        let mut merged = Vec::with_capacity(self.tuples.len() + self.buffer.len());
        let mut count = self.merged;
        let mut old = self.tuples.iter().copied().peekable();
        let incoming = std::mem::take(&mut self.buffer);
        for &value in &incoming {
            while let Some(tuple) = old.next_if(|tuple| tuple.value <= value) {
                merged.push(tuple);
            }
            count += 1;
            // a new minimum or maximum knows its rank exactly
            let is_end = merged.is_empty() || old.peek().is_none();
            let delta = if is_end {
                0
            } else {
                (2.0 * self.epsilon * count as f64).floor() as u64
            };
            merged.push(Tuple {
                value,
                gap: 1,
                delta,
            });
        }
        merged.extend(old);
        self.tuples = merged;
        self.merged = count;
        self.buffer = incoming;
        self.buffer.clear();
        self.compress();
    }

    /// Merge each tuple into its successor while `g_i + g_{i+1} + Δ_{i+1} ≤ ⌊2εn⌋` (the first
    /// and last tuple are kept, so the minimum and maximum stay exact).
    fn compress(&mut self) {
        if self.tuples.len() < 3 {
            return;
        }
        let threshold = (2.0 * self.epsilon * self.merged as f64).floor() as u64;
        let last = self.tuples.len() - 1;
        let mut kept: Vec<Tuple> = Vec::with_capacity(self.tuples.len());
        // walk from the end, folding tuples into the successor kept last
        let mut successor = self.tuples[last];
        for index in (1..last).rev() {
            let tuple = self.tuples[index];
            if tuple.gap + successor.gap + successor.delta <= threshold {
                successor.gap += tuple.gap;
            } else {
                kept.push(successor);
                successor = tuple;
            }
        }
        kept.push(successor);
        kept.push(self.tuples[0]);
        kept.reverse();
        self.tuples = kept;
    }

    /// A value whose rank is within `ε n` of `⌈q n⌉` (`q` in 0..=1); `None` when empty.
    pub fn quantile(&mut self, q: f64) -> Option<f64> {
        self.flush();
        let n = self.merged;
        if n == 0 {
            return None;
        }
        let q = if q.is_finite() {
            q.clamp(0.0, 1.0)
        } else {
            0.5
        };
        let rank = ((q * n as f64).ceil() as u64).clamp(1, n);
        // the tuple whose rank interval lies closest around the asked rank: while the invariant
        // holds, one lies within `εn` on both sides (the guarantee of GK 2001)
        let mut minimum_rank = 0u64;
        let mut best: Option<(u64, f64)> = None;
        for tuple in &self.tuples {
            minimum_rank += tuple.gap;
            let maximum_rank = minimum_rank + tuple.delta;
            let distance = rank
                .saturating_sub(minimum_rank)
                .max(maximum_rank.saturating_sub(rank));
            if best.is_none_or(|(nearest, _)| distance < nearest) {
                best = Some((distance, tuple.value));
            }
        }
        best.map(|(_, value)| value)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn small_inputs_are_exact_at_the_ends_and_near_the_middle() {
        let mut sketch = QuantileSketch::new(0.01);
        for value in [5.0, 1.0, 9.0, 3.0, 7.0] {
            sketch.add(value);
        }
        assert_eq!(sketch.count(), 5);
        assert_eq!(sketch.quantile(0.0), Some(1.0));
        assert_eq!(sketch.quantile(1.0), Some(9.0));
        // ⌊0.01 · 5⌋ = 0 ranks of error allowed: the exact rank-3 value
        assert_eq!(sketch.quantile(0.5), Some(5.0));
        assert_eq!(QuantileSketch::new(0.01).quantile(0.5), None);
    }

    #[test]
    fn memory_stays_far_below_the_values_it_summarises() {
        let mut sketch = QuantileSketch::new(0.001);
        let mut state = 12345u64;
        for _ in 0..1_000_000 {
            state = state
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            sketch.add((state >> 11) as f64);
        }
        // a million values take 8 MB as a list; the summary a small part of it
        assert!(sketch.bytes() < 1_000_000, "{} bytes", sketch.bytes());
    }
}
