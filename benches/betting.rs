//! The betting bound on 10,000,000 observations at δ = 0.05: one-sided upper and lower bound
//! and the hedged two-sided interval. See benches/common/observations.rs for the data and
//! benches/betting_numpy.py for the one-sided upper bound computed with numpy on the same data.
//!
//!     cargo bench --bench betting

use criterion::{Criterion, criterion_group, criterion_main};
use std::hint::black_box;
use surety::bounds::betting;

#[path = "common/observations.rs"]
mod observations;

fn bench(c: &mut Criterion) {
    let x = observations::observations(observations::COUNT);
    let mut group = c.benchmark_group("betting_1e7_observations");
    group.sample_size(10);
    group.bench_function("upper", |b| {
        b.iter(|| betting::upper_values(black_box(&x), observations::DELTA))
    });
    group.bench_function("lower", |b| {
        b.iter(|| betting::lower_values(black_box(&x), observations::DELTA))
    });
    group.bench_function("interval", |b| {
        b.iter(|| betting::interval_values(black_box(&x), observations::DELTA))
    });
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
