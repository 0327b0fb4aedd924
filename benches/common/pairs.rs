//! Deterministic benchmark workload, reproducible bit for bit in Python
//! (benches/exact_bounds_scipy.py implements the same generator).
//!
//! SplitMix64 (Steele, Lea & Flood 2014) with seed 0x5EED_0001; for each pair, three
//! consecutive outputs r1, r2, r3 (all arithmetic modulo 2^64, integers only):
//!
//! * decade `d = 1 + r1 % 5`, `base = 10^d`; `n = base + r2 % (9 * base)`, so n is
//!   uniform within a decade and the decades 10..1e6 are equally likely (log-uniform at
//!   decade resolution, n in [10, 1e6));
//! * `k = r3 % (n / 5 + 1)`: a failure count anywhere from 0 to a fifth of the trials.

/// Seed of the benchmark workload.
pub const SEED: u64 = 0x5EED_0001;

/// Number of (events, trials) pairs in the benchmark.
pub const PAIRS: usize = 1_000_000;

/// One-sided error level used by the benchmark.
pub const DELTA: f64 = 0.05;

/// The SplitMix64 generator.
pub struct SplitMix64(pub u64);

impl SplitMix64 {
    pub fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }
}

/// The benchmark's (events, trials) pairs.
pub fn pairs(count: usize) -> Vec<(u64, u64)> {
    let mut g = SplitMix64(SEED);
    (0..count)
        .map(|_| {
            let d = 1 + g.next_u64() % 5;
            let base = 10u64.pow(d as u32);
            let n = base + g.next_u64() % (9 * base);
            let k = g.next_u64() % (n / 5 + 1);
            (k, n)
        })
        .collect()
}
