//! Prints the one-sided betting upper bound on the benchmark observations, its time, and the
//! number of observations, for benches/betting_numpy.py to compare against.
//!
//!     cargo run --release --example betting_value

use std::time::Instant;
use surety::bounds::betting;

#[path = "common/observations.rs"]
mod observations;

fn main() {
    let x = observations::observations(observations::COUNT);
    let start = Instant::now();
    let u = betting::upper_values(&x, observations::DELTA);
    let secs = start.elapsed().as_secs_f64();
    println!("{u:.17e} {secs:.4} {}", x.len());
}
