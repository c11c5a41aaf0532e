//! Benchmark: the default categorical palette (N = 12, and N = 4 and 20) for the default
//! background, computed from scratch (the candidate grid is built once per process and counted
//! in the first run, reported apart), plus the ramps.

use std::time::Instant;

use markwell::draw::palette::{categorical, diverging_at, ramp, sequential_at, DEFAULT_BACKGROUND};

#[global_allocator]
static GLOBAL: mimalloc::MiMalloc = mimalloc::MiMalloc;

fn median(mut samples: Vec<f64>) -> f64 {
    samples.sort_by(f64::total_cmp);
    samples[samples.len() / 2]
}

fn main() {
    let start = Instant::now();
    let first = categorical(12, DEFAULT_BACKGROUND).unwrap_or_else(|error| panic!("{error}"));
    let cold = start.elapsed().as_secs_f64() * 1e3;
    println!("categorical N=12, first call (builds the candidate grid): {cold:.2} ms");
    println!(
        "  colours: {}",
        first
            .colours
            .iter()
            .map(|colour| colour.to_hex())
            .collect::<Vec<_>>()
            .join(" ")
    );
    println!(
        "  min CIEDE2000 normal / protan / deutan / tritan: {:.2} / {:.2} / {:.2} / {:.2}",
        first.min_difference_by_vision[0],
        first.min_difference_by_vision[1],
        first.min_difference_by_vision[2],
        first.min_difference_by_vision[3]
    );
    for count in [4usize, 12, 20] {
        let samples: Vec<f64> = (0..15)
            .map(|_| {
                let start = Instant::now();
                let palette = categorical(count, DEFAULT_BACKGROUND);
                let elapsed = start.elapsed().as_secs_f64() * 1e3;
                assert!(palette.is_ok());
                elapsed
            })
            .collect();
        let max = samples.iter().copied().fold(0.0, f64::max);
        println!(
            "categorical N={count}: median {:.2} ms, max {max:.2} ms (15 runs, grid cached)",
            median(samples)
        );
    }
    let start = Instant::now();
    let ramps = (ramp(256, sequential_at), ramp(256, diverging_at));
    println!(
        "ramps of 256 (sequential + diverging): {:.2} ms ({} colours)",
        start.elapsed().as_secs_f64() * 1e3,
        ramps.0.len() + ramps.1.len()
    );
}
