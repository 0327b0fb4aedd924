//! One-sided exact (Clopper–Pearson) upper bounds at delta = 0.05 for 1,000,000
//! (events, trials) pairs; see benches/common/pairs.rs for the workload and
//! benches/exact_bounds_scipy.py for the same computation with SciPy.
//!
//!     cargo bench --bench exact_bounds

use criterion::{Criterion, criterion_group, criterion_main};
use rayon::prelude::*;
use std::hint::black_box;
use surety::bounds::exact;

#[path = "common/pairs.rs"]
#[allow(dead_code)]
mod pairs;

fn bench(c: &mut Criterion) {
    let work = pairs::pairs(pairs::PAIRS);
    let mut group = c.benchmark_group("exact_upper_1e6_pairs");
    group.sample_size(10);
    group.bench_function("serial", |b| {
        b.iter(|| {
            work.iter()
                .map(|&(k, n)| exact::upper(black_box(k), n, pairs::DELTA))
                .sum::<f64>()
        })
    });
    group.bench_function("rayon", |b| {
        b.iter(|| {
            work.par_iter()
                .map(|&(k, n)| exact::upper(black_box(k), n, pairs::DELTA))
                .sum::<f64>()
        })
    });
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
