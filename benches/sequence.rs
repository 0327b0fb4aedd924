//! The confidence sequences along a stream of 1,000,000 observations at δ = 0.05, read at 60
//! log-spaced checkpoints as a plot reads them: the betting and empirical-Bernstein sequences on
//! the skewed observations of benches/common/observations.rs, and the beta-binomial mixture on
//! binary trials derived from them (an event when the value exceeds 0.9, rate about 0.051).
//!
//!     cargo bench --bench sequence

use criterion::{Criterion, criterion_group, criterion_main};
use std::hint::black_box;
use surety::bounds::{End, beta_binomial, betting_sequence, eb_sequence};

#[path = "common/observations.rs"]
#[allow(dead_code)]
mod observations;

const COUNT: usize = 1_000_000;

/// 60 checkpoints from 10 to COUNT, spaced evenly in ln t.
fn checkpoints() -> Vec<u64> {
    let (lo, hi) = (10f64.ln(), (COUNT as f64).ln());
    let mut t: Vec<u64> = (0..60)
        .map(|i| (lo + (hi - lo) * i as f64 / 59.0).exp().round() as u64)
        .collect();
    t.dedup();
    t
}

fn bench(c: &mut Criterion) {
    let x = observations::observations(COUNT);
    let binary: Vec<f64> = x.iter().map(|&v| if v > 0.9 { 1.0 } else { 0.0 }).collect();
    let ts = checkpoints();
    let d = observations::DELTA;
    let mut group = c.benchmark_group("sequence_1e6_observations");
    group.sample_size(10);
    group.bench_function("betting_sequence_path_upper", |b| {
        b.iter(|| betting_sequence::path(black_box(&x), d, End::Upper, false, &ts))
    });
    group.bench_function("betting_sequence_path_hedged_lower", |b| {
        b.iter(|| betting_sequence::path(black_box(&x), d, End::Lower, true, &ts))
    });
    group.bench_function("betting_sequence_upper", |b| {
        b.iter(|| betting_sequence::upper_values(black_box(&x), d))
    });
    group.bench_function("eb_sequence_path_upper", |b| {
        b.iter(|| eb_sequence::path(black_box(&x), d, End::Upper, false, &ts))
    });
    group.bench_function("beta_binomial_path_upper", |b| {
        b.iter(|| beta_binomial::path(black_box(&binary), d, End::Upper, false, &ts))
    });
    group.bench_function("beta_binomial_path_two_sided_lower", |b| {
        b.iter(|| beta_binomial::path(black_box(&binary), d, End::Lower, true, &ts))
    });
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
