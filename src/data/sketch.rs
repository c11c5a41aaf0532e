//! Small fixed-memory summaries used while scanning: a 64-bit hash for cell values, the
//! HyperLogLog distinct-count estimate, compensated summation and a streaming histogram whose
//! bins double in width as the range grows. All of them merge, so that two threads can scan two
//! halves of a file and combine their partial results.

/// Murmur3's 64-bit finaliser (Appleby, MurmurHash3, public domain; constants from memory).
fn finalize_mix(mut value: u64) -> u64 {
    value ^= value >> 33;
    value = value.wrapping_mul(0xff51_afd7_ed55_8ccd);
    value ^= value >> 33;
    value = value.wrapping_mul(0xc4ce_b9fe_1a85_ec53);
    value ^= value >> 33;
    value
}

const WORD_MULTIPLIER_ONE: u64 = 0x87c3_7b91_1142_53d5;
const WORD_MULTIPLIER_TWO: u64 = 0x4cf5_ad43_2745_937f;

/// A 64-bit hash of a byte string, well mixed in every bit (HyperLogLog reads the top bits
/// for the register and the rest for the run of zeros, so both ends must be uniform).
pub fn hash_bytes(bytes: &[u8]) -> u64 {
    let mut state: u64 =
        0x9e37_79b9_7f4a_7c15 ^ (bytes.len() as u64).wrapping_mul(WORD_MULTIPLIER_TWO);
    let mut words = bytes.chunks_exact(8);
    for chunk in &mut words {
        let mut word_bytes = [0u8; 8];
        word_bytes.copy_from_slice(chunk);
        let word = u64::from_le_bytes(word_bytes)
            .wrapping_mul(WORD_MULTIPLIER_ONE)
            .rotate_left(31)
            .wrapping_mul(WORD_MULTIPLIER_TWO);
        state = (state ^ word)
            .rotate_left(27)
            .wrapping_mul(5)
            .wrapping_add(0x52dc_e729);
    }
    let tail = words.remainder();
    if !tail.is_empty() {
        let mut word_bytes = [0u8; 8];
        word_bytes[..tail.len()].copy_from_slice(tail);
        let word = u64::from_le_bytes(word_bytes)
            .wrapping_mul(WORD_MULTIPLIER_ONE)
            .rotate_left(31)
            .wrapping_mul(WORD_MULTIPLIER_TWO);
        state ^= word;
    }
    finalize_mix(state)
}

/// A 64-bit hash of a number's bits, kept apart from text hashes by a different seed.
pub fn hash_number_bits(bits: u64) -> u64 {
    finalize_mix(bits ^ 0x2545_f491_4f6c_dd1d)
}

/// Bits of the register index: m = 2^14 = 16384 registers (16 KiB), standard error
/// 1.04 / sqrt(16384) = 0.8125 %. A profile under a tight memory budget (a very wide file)
/// uses fewer registers per column, down to [`HYPERLOGLOG_MINIMUM_PRECISION`], and says so
/// through the larger error it reports.
pub const HYPERLOGLOG_PRECISION: u32 = 14;
/// 2^4 = 16 registers: standard error 26 %, the least a column's sketch may have.
pub const HYPERLOGLOG_MINIMUM_PRECISION: u32 = 4;

/// HyperLogLog distinct-count estimator.
///
/// Source: P. Flajolet, É. Fusy, O. Gandouet, F. Meunier (2007), "HyperLogLog: the analysis of a
/// near-optimal cardinality estimation algorithm", AofA 2007, Figure 3: the raw estimate
/// `alpha_m * m^2 / sum 2^-M[j]` with `alpha_m = 0.7213 / (1 + 1.079 / m)`, the small-range
/// correction `m ln(m / V)` when the raw estimate is at most `5/2 m` and `V` registers are zero,
/// and the standard error `1.04 / sqrt(m)`. The paper's large-range correction exists for 32-bit
/// hashes; with 64-bit hashes it is not needed (Heule, Nunkesser, Hall 2013, "HyperLogLog in
/// practice", from memory). The `alpha_m` formula is the paper's for m >= 128; for the smaller
/// sketches of very wide files the paper's table gives 0.673 (m = 16), 0.697 (m = 32) and
/// 0.709 (m = 64) (from memory), used here.
///
/// Two sketches of different precision merge by folding the finer one down (register `j` at
/// precision `p` lands in `j >> (p - q)` at `q`; the dropped index bits lead the remaining bits,
/// so the rank is their leading zeros plus one, or `p - q` plus the old rank when they are all
/// zero). The fold gives exactly the sketch that precision `q` would have built.
#[derive(Clone, Debug)]
pub struct HyperLogLog {
    precision: u32,
    registers: Vec<u8>,
}

impl Default for HyperLogLog {
    fn default() -> HyperLogLog {
        HyperLogLog::new()
    }
}

impl HyperLogLog {
    pub fn new() -> HyperLogLog {
        HyperLogLog::with_precision(HYPERLOGLOG_PRECISION)
    }

    /// A sketch of `2^precision` registers (precision clamped to 4..=14).
    pub fn with_precision(precision: u32) -> HyperLogLog {
        let precision = precision.clamp(HYPERLOGLOG_MINIMUM_PRECISION, HYPERLOGLOG_PRECISION);
        HyperLogLog {
            precision,
            registers: vec![0; 1 << precision],
        }
    }

    pub fn precision(&self) -> u32 {
        self.precision
    }

    /// Bytes the registers take.
    pub fn heap_bytes(&self) -> usize {
        self.registers.len()
    }

    /// Standard error of the estimate relative to the true count, at the default precision.
    pub fn relative_standard_error() -> f64 {
        HyperLogLog::relative_standard_error_at(HYPERLOGLOG_PRECISION)
    }

    pub fn relative_standard_error_at(precision: u32) -> f64 {
        1.04 / ((1u64 << precision) as f64).sqrt()
    }

    /// Standard error of this sketch's estimate relative to the true count.
    pub fn relative_error(&self) -> f64 {
        HyperLogLog::relative_standard_error_at(self.precision)
    }

    pub fn add_hash(&mut self, hash: u64) {
        let precision = self.precision;
        let index = (hash >> (64 - precision)) as usize;
        let remaining = hash << precision;
        // position of the leftmost 1-bit among the remaining 64 - p bits, 1-based
        let rank = (remaining.leading_zeros().min(64 - precision) + 1) as u8;
        if let Some(register) = self.registers.get_mut(index) {
            if rank > *register {
                *register = rank;
            }
        }
    }

    /// This sketch at a coarser precision (the same when `precision` is not coarser).
    pub fn folded_to(&self, precision: u32) -> HyperLogLog {
        let precision = precision.clamp(HYPERLOGLOG_MINIMUM_PRECISION, self.precision);
        if precision == self.precision {
            return self.clone();
        }
        let dropped = self.precision - precision;
        let mut folded = HyperLogLog::with_precision(precision);
        for (index, &register) in self.registers.iter().enumerate() {
            if register == 0 {
                continue;
            }
            let low_bits = (index as u64) & ((1u64 << dropped) - 1);
            let rank = if low_bits != 0 {
                // the dropped bits, as the leading bits of a `dropped`-bit field
                (low_bits.leading_zeros() - (64 - dropped) + 1) as u8
            } else {
                (dropped as u8).saturating_add(register)
            };
            let target = &mut folded.registers[index >> dropped];
            if rank > *target {
                *target = rank;
            }
        }
        folded
    }

    /// Merge `other` in; when the precisions differ, the result has the coarser one.
    pub fn merge(&mut self, other: &HyperLogLog) {
        if other.precision < self.precision {
            *self = self.folded_to(other.precision);
        }
        let folded;
        let other = if other.precision > self.precision {
            folded = other.folded_to(self.precision);
            &folded
        } else {
            other
        };
        for (mine, theirs) in self.registers.iter_mut().zip(other.registers.iter()) {
            if *theirs > *mine {
                *mine = *theirs;
            }
        }
    }

    pub fn estimate(&self) -> f64 {
        let register_count = self.registers.len() as f64;
        let alpha = match self.registers.len() {
            16 => 0.673,
            32 => 0.697,
            64 => 0.709,
            _ => 0.7213 / (1.0 + 1.079 / register_count),
        };
        let mut harmonic_sum = 0.0;
        let mut zero_registers = 0usize;
        for &register in &self.registers {
            harmonic_sum += (-(register as f64)).exp2();
            if register == 0 {
                zero_registers += 1;
            }
        }
        let raw = alpha * register_count * register_count / harmonic_sum;
        if raw <= 2.5 * register_count && zero_registers > 0 {
            register_count * (register_count / zero_registers as f64).ln()
        } else {
            raw
        }
    }
}

/// Neumaier's compensated sum (Neumaier 1974, an improvement of Kahan summation; from memory),
/// so that the mean of a billion values keeps its digits.
#[derive(Clone, Copy, Debug, Default)]
pub struct CompensatedSum {
    sum: f64,
    compensation: f64,
}

impl CompensatedSum {
    pub fn add(&mut self, value: f64) {
        let total = self.sum + value;
        if self.sum.abs() >= value.abs() {
            self.compensation += (self.sum - total) + value;
        } else {
            self.compensation += (value - total) + self.sum;
        }
        self.sum = total;
    }

    pub fn merge(&mut self, other: &CompensatedSum) {
        self.add(other.sum);
        self.compensation += other.compensation;
    }

    pub fn value(&self) -> f64 {
        self.sum + self.compensation
    }
}

const FINE_BIN_COUNT: usize = 512;
/// Fine bins of the small histogram that columns of very wide files keep (512 bytes).
pub const SMALL_FINE_BIN_COUNT: usize = 64;

/// A histogram of equal, power-of-two-wide bins aligned on multiples of the width. When a value
/// falls outside the bins, the width doubles and neighbouring bins merge, so memory stays fixed
/// whatever the range. Read it back with [`DoublingHistogram::rebin`].
#[derive(Clone, Debug)]
pub struct DoublingHistogram {
    /// Bin `i` of `counts` covers `[(first_bin + i) * width, (first_bin + i + 1) * width)`.
    width: f64,
    first_bin: i64,
    counts: Vec<u64>,
    total: u64,
    /// Bins kept at once: 512, or [`SMALL_FINE_BIN_COUNT`] under a tight memory budget.
    fine_bins: usize,
}

impl Default for DoublingHistogram {
    fn default() -> DoublingHistogram {
        DoublingHistogram::with_fine_bins(FINE_BIN_COUNT)
    }
}

fn floor_div_by_two(value: i64) -> i64 {
    value.div_euclid(2)
}

impl DoublingHistogram {
    /// A histogram that keeps `fine_bins` bins (at least 16).
    pub fn with_fine_bins(fine_bins: usize) -> DoublingHistogram {
        DoublingHistogram {
            width: (-30.0f64).exp2(),
            first_bin: 0,
            counts: Vec::new(),
            total: 0,
            fine_bins: fine_bins.max(16),
        }
    }

    pub fn fine_bins(&self) -> usize {
        self.fine_bins
    }

    /// Bytes the bins take.
    pub fn heap_bytes(&self) -> usize {
        self.counts.capacity() * std::mem::size_of::<u64>()
    }

    fn bin_of(&self, value: f64) -> i64 {
        // `as` saturates, so huge values land far away and force doublings, never a panic
        (value / self.width).floor() as i64
    }

    fn double_width(&mut self) {
        let new_first = floor_div_by_two(self.first_bin);
        let mut merged = vec![0u64; self.fine_bins];
        for (offset, &count) in self.counts.iter().enumerate() {
            let old_bin = self.first_bin + offset as i64;
            let new_offset = (floor_div_by_two(old_bin) - new_first) as usize;
            if let Some(slot) = merged.get_mut(new_offset) {
                *slot += count;
            }
        }
        self.counts = merged;
        self.first_bin = new_first;
        self.width *= 2.0;
    }

    /// Lowest and highest occupied bin.
    fn occupied_span(&self) -> Option<(i64, i64)> {
        let low = self.counts.iter().position(|&count| count > 0)?;
        let high = self.counts.iter().rposition(|&count| count > 0)?;
        Some((self.first_bin + low as i64, self.first_bin + high as i64))
    }

    /// Make room so that bins `low..=high` (at the current width) are all covered.
    fn cover(&mut self, mut low: i64, mut high: i64) {
        loop {
            let (occupied_low, occupied_high) = self.occupied_span().unwrap_or((low, high));
            let span_low = occupied_low.min(low);
            let span_high = occupied_high.max(high);
            if span_high.saturating_sub(span_low) < self.fine_bins as i64 {
                if span_low < self.first_bin
                    || span_high >= self.first_bin + self.fine_bins as i64
                    || self.counts.is_empty()
                {
                    // shift the window to start at the lowest needed bin
                    let mut shifted = vec![0u64; self.fine_bins];
                    for (offset, &count) in self.counts.iter().enumerate() {
                        let bin = self.first_bin + offset as i64;
                        if count > 0 {
                            if let Some(slot) = shifted.get_mut((bin - span_low) as usize) {
                                *slot += count;
                            }
                        }
                    }
                    self.counts = shifted;
                    self.first_bin = span_low;
                }
                return;
            }
            if self.width > f64::MAX / 4.0 {
                return;
            }
            self.double_width();
            low = floor_div_by_two(low);
            high = floor_div_by_two(high);
        }
    }

    pub fn add(&mut self, value: f64, count: u64) {
        if !value.is_finite() || count == 0 {
            return;
        }
        let mut bin = self.bin_of(value);
        if self.counts.is_empty()
            || bin < self.first_bin
            || bin >= self.first_bin + self.fine_bins as i64
        {
            self.cover(bin, bin);
            bin = self.bin_of(value);
        }
        let offset = bin - self.first_bin;
        if (0..self.fine_bins as i64).contains(&offset) {
            self.counts[offset as usize] += count;
        } else if let Some(last) = self.counts.last_mut() {
            // only reachable at the very edge of the f64 range
            *last += count;
        }
        self.total += count;
    }

    pub fn merge(&mut self, other: &DoublingHistogram) {
        if other.total == 0 {
            return;
        }
        let mut other = other.clone();
        while other.width < self.width {
            other.double_width();
        }
        while self.width < other.width {
            self.double_width();
        }
        if let Some((low, high)) = other.occupied_span() {
            self.cover(low, high);
            // the cover may have doubled our width again
            while other.width < self.width {
                other.double_width();
            }
        }
        for (offset, &count) in other.counts.iter().enumerate() {
            if count == 0 {
                continue;
            }
            let bin = other.first_bin + offset as i64;
            let centre = (bin as f64 + 0.5) * other.width;
            self.add(centre, count);
            self.total -= count; // `add` counted it; the total is added once below
        }
        self.total += other.total;
    }

    pub fn total(&self) -> u64 {
        self.total
    }

    /// Counts in `bin_count` equal bins from `min` to `max`: each fine bin goes to the output
    /// bin holding its centre (clamped into `min..=max`).
    pub fn rebin(&self, min: f64, max: f64, bin_count: usize) -> Vec<u64> {
        let mut out = vec![0u64; bin_count.max(1)];
        let last = out.len() - 1;
        for (offset, &count) in self.counts.iter().enumerate() {
            if count == 0 {
                continue;
            }
            let centre = ((self.first_bin + offset as i64) as f64 + 0.5) * self.width;
            let clamped = centre.clamp(min, max);
            let index = equal_width_bin(clamped, min, max, out.len()).min(last);
            out[index] += count;
        }
        out
    }
}

/// The bin of `value` among `bin_count` equal bins from `min` to `max` (the last bin is closed).
pub fn equal_width_bin(value: f64, min: f64, max: f64, bin_count: usize) -> usize {
    if max <= min || bin_count <= 1 {
        return 0;
    }
    let position = (value - min) / (max - min) * bin_count as f64;
    if position <= 0.0 {
        0
    } else {
        (position.floor() as usize).min(bin_count - 1)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_folded_sketch_is_the_sketch_built_at_the_coarser_precision() {
        let mut fine = HyperLogLog::new();
        let mut coarse = HyperLogLog::with_precision(7);
        for value in 0..50_000u64 {
            let hash = hash_number_bits(value);
            fine.add_hash(hash);
            coarse.add_hash(hash);
        }
        let folded = fine.folded_to(7);
        assert_eq!(folded.registers, coarse.registers);
        let mut merged = HyperLogLog::new();
        merged.merge(&coarse);
        assert_eq!(merged.precision(), 7);
        let error = (coarse.estimate() - 50_000.0).abs() / 50_000.0;
        assert!(error < 3.0 * coarse.relative_error(), "error {error}");
    }

    #[test]
    fn doubling_histogram_keeps_every_count_and_orders_bins() {
        let mut histogram = DoublingHistogram::default();
        for value in 0..1000 {
            histogram.add(value as f64, 1);
        }
        histogram.add(-5000.0, 1);
        assert_eq!(histogram.total(), 1001);
        let bins = histogram.rebin(-5000.0, 999.0, 10);
        assert_eq!(bins.iter().sum::<u64>(), 1001);
        assert_eq!(bins[0], 1);
        assert!(bins[8] + bins[9] >= 999);
    }

    #[test]
    fn merged_histograms_add_up() {
        let mut left = DoublingHistogram::default();
        let mut right = DoublingHistogram::default();
        for value in 0..100 {
            left.add(value as f64 * 0.01, 1);
            right.add(1e6 + value as f64, 2);
        }
        left.merge(&right);
        assert_eq!(left.total(), 300);
        let bins = left.rebin(0.0, 1e6 + 99.0, 4);
        assert_eq!(bins, vec![100, 0, 0, 200]);
    }

    #[test]
    fn compensated_sum_keeps_small_terms() {
        let mut sum = CompensatedSum::default();
        sum.add(1e16);
        for _ in 0..10 {
            sum.add(1.0);
        }
        sum.add(-1e16);
        assert_eq!(sum.value(), 10.0);
    }

    #[test]
    fn hyperloglog_small_counts_use_linear_counting() {
        let mut sketch = HyperLogLog::new();
        for value in 0..1000u64 {
            sketch.add_hash(hash_number_bits(value));
        }
        let estimate = sketch.estimate();
        assert!((estimate - 1000.0).abs() < 30.0, "estimate {estimate}");
    }
}
