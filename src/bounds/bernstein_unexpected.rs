//! "Unexpected Bernstein" bounds (Mhammedi, Grünwald & Guedj 2019; the inequality of Fan,
//! Grama & Liu 2012) on a fixed grid of learning rates, one-sided.
//!
//! For Z ≤ 1 and η in (0, 1), E exp(η (E Z − Z) − ψ(−η) Z²) ≤ 1 with ψ(u) = u − ln(1 + u).
//! Multiplying over n independent values and applying Markov's inequality gives, with
//! probability at least 1 − δ,
//!
//! ```text
//! E Z ≤ Z̄ + (ψ(−η)/η) · mean(Z²) + ln(1/δ) / (η n).
//! ```
//!
//! The bound reported is the smallest of these over the grid η_i = 2^−(i+1), i < k, with
//! k = max(1, ⌈log₂(½ sqrt(n / ln(1/δ)))⌉) and ln(k/δ) in place of ln(1/δ) (a union bound
//! over the grid). The grid depends on n and δ only, never on the data. The lower bound
//! applies the same to Z = 1 − X, whose mean square is (1 − x̄)² + the biased variance.

use super::sample::{Sample, Summary};
use crate::stats::ln1pmx;

/// Relative rounding allowance for one grid value: a sum of three non-negative terms, each a
/// product or quotient of a few correctly rounded operations and one `ln1pmx`.
const REL_ERR: f64 = 8.0 * f64::EPSILON;

/// Number of grid points for `n` observations at level `delta` (`ln_inv_delta = ln(1/delta)`).
pub fn grid_size(n: u64, ln_inv_delta: f64) -> u32 {
    let t = 0.5 * (n as f64 / ln_inv_delta).sqrt();
    if t.is_nan() || t <= 1.0 {
        return 1;
    }
    // 64 points already reach eta = 2^-64, far below any useful rate at any n that fits a u64.
    (t.log2().ceil() as u32).clamp(1, 64)
}

/// `min over the grid of [ mean + (psi(-eta)/eta) * mean_sq + ln(k/delta) / (eta n) ]`,
/// the raw (unrounded) bound for values Z in [0, 1] with the given mean and mean square.
fn grid_minimum(mean: f64, mean_sq: f64, n: u64, delta: f64) -> Option<f64> {
    if n == 0 || !(delta > 0.0 && delta < 1.0) {
        return None;
    }
    let l = -delta.ln();
    let k = grid_size(n, l);
    let lk = (k as f64).ln() + l;
    let nf = n as f64;
    let mut best = f64::INFINITY;
    for i in 0..k {
        let eta = 0.5f64.powi(i as i32 + 1);
        // psi(-eta) = -eta - ln(1 - eta) = -ln1pmx(-eta), without cancellation at small eta.
        let slope = -ln1pmx(-eta) / eta;
        let value = mean + slope * mean_sq + lk / (eta * nf);
        best = best.min(value);
    }
    Some(best)
}

/// Upper bound on the mean from a summary: `P(mean <= upper) >= 1 - delta` for independent
/// values in [0, 1]. Rounded upwards, at most 1. Returns 1 (vacuous) for an inconsistent
/// summary or `delta` outside (0, 1).
pub fn upper_summary(s: &Summary, delta: f64) -> f64 {
    if !s.is_consistent() {
        return 1.0;
    }
    match grid_minimum(s.mean(), s.mean_sq(), s.n, delta) {
        Some(u) => (u + REL_ERR * u).next_up().min(1.0),
        None => 1.0,
    }
}

/// Lower bound on the mean from a summary: `P(mean >= lower) >= 1 - delta`, the upper bound
/// of the reflected values 1 − x read back as 1 − upper. Rounded downwards, at least 0.
pub fn lower_summary(s: &Summary, delta: f64) -> f64 {
    if !s.is_consistent() {
        return 0.0;
    }
    let m = s.mean();
    let mirrored = 1.0 - m;
    // Mean square of 1 - x, rounded up: (1 - x̄)^2 plus the biased variance.
    let mean_sq = (mirrored * mirrored + s.biased_variance_up()) * (1.0 + 4.0 * f64::EPSILON);
    match grid_minimum(mirrored, mean_sq.min(1.0), s.n, delta) {
        Some(u) => {
            // u is a sum of terms in [0, 1]-scale with REL_ERR relative error; 1 - x̄ and the
            // subtraction below add about two ulps of 1.
            (1.0 - u - REL_ERR * u - 4.0 * f64::EPSILON)
                .next_down()
                .max(0.0)
        }
        None => 0.0,
    }
}

/// [`upper_summary`] of the sample's summary.
pub fn upper(sample: &Sample, delta: f64) -> f64 {
    upper_summary(&sample.summary, delta)
}

/// [`lower_summary`] of the sample's summary.
pub fn lower(sample: &Sample, delta: f64) -> f64 {
    lower_summary(&sample.summary, delta)
}

#[cfg(test)]
mod unit {
    use super::*;

    #[test]
    fn grid_sizes_quoted_in_methods() {
        // METHODS.md §5 (computed): k = 2 at n = 100, δ = 0.05, and k = 4 at n = 1000.
        let l = -(0.05f64).ln();
        assert_eq!(grid_size(100, l), 2);
        assert_eq!(grid_size(1000, l), 4);
        assert_eq!(grid_size(1, l), 1);
    }
}
