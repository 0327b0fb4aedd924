//! Writes the exact upper bounds of the benchmark workload (benches/common/pairs.rs) to a
//! file as little-endian f64, for comparison with SciPy by benches/exact_bounds_scipy.py,
//! and prints the wall time of one serial and one parallel pass.
//!
//!     cargo run --release --example exact_bounds_pairs -- OUT.bin

use rayon::prelude::*;
use std::io::Write;
use std::time::Instant;
use surety::bounds::exact;

#[path = "common/pairs.rs"]
#[allow(dead_code)]
mod pairs;

fn main() -> std::io::Result<()> {
    let out = std::env::args()
        .nth(1)
        .unwrap_or_else(|| "exact_bounds_rust.bin".to_string());
    let work = pairs::pairs(pairs::PAIRS);
    let t = Instant::now();
    let serial: Vec<f64> = work
        .iter()
        .map(|&(k, n)| exact::upper(k, n, pairs::DELTA))
        .collect();
    let t_serial = t.elapsed().as_secs_f64();
    let t = Instant::now();
    let parallel: Vec<f64> = work
        .par_iter()
        .map(|&(k, n)| exact::upper(k, n, pairs::DELTA))
        .collect();
    let t_parallel = t.elapsed().as_secs_f64();
    assert!(serial == parallel);
    let mut bytes = Vec::with_capacity(8 * serial.len());
    for v in &serial {
        bytes.extend_from_slice(&v.to_le_bytes());
    }
    std::fs::File::create(&out)?.write_all(&bytes)?;
    println!(
        "rust: {} pairs, serial {t_serial:.3} s, rayon ({} threads) {t_parallel:.3} s",
        work.len(),
        rayon::current_num_threads()
    );
    Ok(())
}
