//! Deterministic benchmark observations, reproducible bit for bit in Python
//! (benches/betting_numpy.py implements the same generator).
//!
//! SplitMix64 (Steele, Lea & Flood 2014) with seed 0x5EED_0002, as in `pairs.rs`; observation
//! i uses output i: u = (r >> 11) · 2^-53, uniform on [0, 1) with 53 random bits, and
//! x = u · u (one correctly rounded product), a skewed law on [0, 1) with mean 1/3.

#[path = "pairs.rs"]
#[allow(dead_code)]
mod pairs;

/// Seed of the observation stream.
pub const SEED: u64 = 0x5EED_0002;

/// Number of observations in the benchmark.
pub const COUNT: usize = 10_000_000;

/// One-sided error level used by the benchmark.
pub const DELTA: f64 = 0.05;

/// The benchmark's observations.
pub fn observations(count: usize) -> Vec<f64> {
    let mut g = pairs::SplitMix64(SEED);
    (0..count)
        .map(|_| {
            let u = (g.next_u64() >> 11) as f64 * (1.0 / 9_007_199_254_740_992.0);
            u * u
        })
        .collect()
}
