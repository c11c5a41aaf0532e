//! The Greenwald–Khanna sketch keeps its stated rank error against exact quantiles: for every
//! asked quantile q the value it answers has a rank within ε·n of ⌈q·n⌉ (the guarantee of
//! M. Greenwald and S. Khanna (2001), "Space-efficient online computation of quantile
//! summaries", SIGMOD 2001), on generated data of several shapes and orders.

use markwell::eval::quantile::QuantileSketch;

/// SplitMix64 (Steele, Lea, Flood 2014; constants from memory).
struct SplitMix64(u64);

impl SplitMix64 {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut value = self.0;
        value = (value ^ (value >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        value = (value ^ (value >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        value ^ (value >> 31)
    }

    fn unit(&mut self) -> f64 {
        (self.next() >> 11) as f64 / (1u64 << 53) as f64
    }
}

fn datasets(count: usize) -> Vec<(&'static str, Vec<f64>)> {
    let mut random = SplitMix64(20261203);
    let uniform: Vec<f64> = (0..count).map(|_| random.unit() * 1000.0).collect();
    let mut ascending = uniform.clone();
    ascending.sort_by(f64::total_cmp);
    let descending: Vec<f64> = ascending.iter().rev().copied().collect();
    // heavy tail: the inverse of a Pareto distribution with shape 1.1
    let heavy: Vec<f64> = (0..count)
        .map(|_| (1.0 - random.unit()).powf(-1.0 / 1.1))
        .collect();
    let few_values: Vec<f64> = (0..count).map(|_| (random.next() % 7) as f64).collect();
    let sawtooth: Vec<f64> = (0..count).map(|index| (index % 1013) as f64).collect();
    vec![
        ("uniform", uniform),
        ("ascending", ascending),
        ("descending", descending),
        ("heavy-tailed", heavy),
        ("seven values", few_values),
        ("sawtooth", sawtooth),
    ]
}

#[test]
fn every_answer_is_within_the_stated_rank_error() {
    let count = 200_000;
    for epsilon in [0.01, 0.001] {
        for (name, values) in datasets(count) {
            let mut sketch = QuantileSketch::new(epsilon);
            for &value in &values {
                sketch.add(value);
            }
            assert_eq!(sketch.count(), count as u64);
            let mut sorted = values.clone();
            sorted.sort_by(f64::total_cmp);
            let allowed = (epsilon * count as f64).floor() as usize;
            let mut worst = 0usize;
            for step in 0..=200 {
                let q = f64::from(step) / 200.0;
                let rank = ((q * count as f64).ceil() as usize).clamp(1, count);
                let Some(answer) = sketch.quantile(q) else {
                    panic!("{name}: no answer for {q}");
                };
                // the ranks the answer holds (1-based): ties share a run of ranks
                let first = sorted.partition_point(|&value| value < answer) + 1;
                let last = sorted.partition_point(|&value| value <= answer);
                assert!(last >= first, "{name}: {answer} is not one of the values");
                let error = if rank < first {
                    first - rank
                } else {
                    rank.saturating_sub(last)
                };
                worst = worst.max(error);
                assert!(
                    error <= allowed,
                    "{name}, ε = {epsilon}: q = {q} answered {answer} at ranks {first}..={last}, asked {rank}, error {error} > {allowed}"
                );
            }
            println!(
                "{name}, ε = {epsilon}: worst rank error {worst} of {allowed} allowed, {} bytes",
                sketch.bytes()
            );
            // far smaller than the values themselves
            assert!(
                sketch.bytes() < count * 8 / 4,
                "{name}: {} bytes",
                sketch.bytes()
            );
        }
    }
}
