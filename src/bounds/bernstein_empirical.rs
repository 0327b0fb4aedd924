//! Empirical Bernstein bounds (Maurer & Pontil 2009, Thm 4), one-sided.
//!
//! For n ≥ 2 independent, identically distributed values in [0, 1] with unbiased sample
//! variance V, with probability at least 1 − δ
//!
//! ```text
//! μ ≤ x̄ + sqrt(2 V ln(2/δ) / n) + 7 ln(2/δ) / (3 (n − 1)).
//! ```
//!
//! Half of δ pays for Bernstein's inequality at the true variance, half for replacing the true
//! standard deviation by an upper confidence bound built from V; hence ln(2/δ) even for one
//! side. The lower bound is the upper bound of the reflected values 1 − x, which have the same
//! variance, so it reads x̄ − sqrt(2 V ln(2/δ)/n) − 7 ln(2/δ)/(3 (n − 1)).

use super::sample::{Sample, Summary};

/// Relative rounding allowance for a sum of three non-negative terms, each computed with a
/// handful of roundings (log, products, a square root, a division).
const REL_ERR: f64 = 8.0 * f64::EPSILON;

/// `ln(2/delta)` for `delta` in (0, 1), written so that a tiny `delta` cannot overflow `2/delta`.
fn ln_two_over(delta: f64) -> Option<f64> {
    (delta > 0.0 && delta < 1.0).then(|| std::f64::consts::LN_2 - delta.ln())
}

/// The two radius terms `sqrt(2 V L / n)` and `7 L / (3 (n − 1))`, with V rounded up.
fn radius_terms(s: &Summary, delta: f64) -> Option<(f64, f64)> {
    if s.n < 2 || !s.is_consistent() {
        return None;
    }
    let l = ln_two_over(delta)?;
    let n = s.n as f64;
    let v = s.variance_up();
    Some(((2.0 * v * l / n).sqrt(), 7.0 * l / (3.0 * (n - 1.0))))
}

/// Upper bound on the mean from a summary: `P(mean <= upper) >= 1 - delta` for independent,
/// identically distributed values in [0, 1]. Rounded upwards, at most 1. Returns 1 (vacuous)
/// when n < 2, the summary is inconsistent, or `delta` is not in (0, 1).
pub fn upper_summary(s: &Summary, delta: f64) -> f64 {
    match radius_terms(s, delta) {
        Some((a, b)) => {
            let u = s.mean() + a + b;
            (u + REL_ERR * u).next_up().min(1.0)
        }
        None => 1.0,
    }
}

/// Lower bound on the mean from a summary: `P(mean >= lower) >= 1 - delta`, the reflection of
/// [`upper_summary`]. Rounded downwards, at least 0; 0 (vacuous) where the upper bound is
/// vacuous for invalid input.
pub fn lower_summary(s: &Summary, delta: f64) -> f64 {
    match radius_terms(s, delta) {
        Some((a, b)) => {
            let m = s.mean();
            (m - a - b - REL_ERR * (m + a + b)).next_down().max(0.0)
        }
        None => 0.0,
    }
}

/// [`upper_summary`] of the sample's summary (the observations themselves are not read).
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
    fn zero_variance_leaves_the_range_term() {
        // All zeros: V = 0, so U = 7 ln(2/δ) / (3 (n − 1)); METHODS.md §4b (computed):
        // n = 1000, δ = 0.05 gives 0.008616.
        let s = Summary::from_values(&[0.0; 1000]).expect("valid");
        let u = upper_summary(&s, 0.05);
        assert!((u - 0.008616).abs() < 5e-7, "{u}");
        assert_eq!(lower_summary(&s, 0.05), 0.0);
    }

    #[test]
    fn vacuous_below_two_observations() {
        let s = Summary::from_values(&[0.3]).expect("valid");
        assert_eq!(upper_summary(&s, 0.05), 1.0);
        assert_eq!(lower_summary(&s, 0.05), 0.0);
        let s = Summary::from_values(&[0.3, 0.4]).expect("valid");
        assert_eq!(upper_summary(&s, 0.0), 1.0);
        assert_eq!(upper_summary(&s, f64::NAN), 1.0);
    }
}
