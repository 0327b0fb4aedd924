//! Split-kl bounds (Wu & Seldin 2022) with the split at mid-range, one-sided.
//!
//! Each value x in [0, 1] is ½ + x⁺ − x⁻ with x⁺ = max(0, x − ½) and x⁻ = max(0, ½ − x),
//! both in [0, ½]. Doubling each part gives a [0, 1] variable with its own Chernoff-kl bound;
//! with ε = ln(2/δ)/n (δ/2 to each part), with probability at least 1 − δ
//!
//! ```text
//! μ ≤ ½ + ½ kl⁻¹₊(2 p̂⁺, ε) − ½ kl⁻¹₋(2 p̂⁻, ε),
//! ```
//!
//! where p̂± are the means of the parts. For values on {0, ½, 1} both parts are Bernoulli, so
//! each inverse is tight; on binary data the bound is Chernoff-kl at δ/2. The lower bound is
//! the upper bound of the reflection 1 − x, which swaps the parts.

use super::sample::{Sample, Summary};
use crate::stats::Prob;
use crate::stats::kl::{kl_inv_lower_prob, kl_inv_upper_prob};

/// The two parts as [0, 1] means `(2 p̂⁺, 2 p̂⁻)` and the budget `ln(2/delta)/n`; `None` on
/// invalid input or a summary without its split.
fn parts(s: &Summary, delta: f64) -> Option<(f64, f64, f64)> {
    if !(s.is_consistent() && delta > 0.0 && delta < 1.0) {
        return None;
    }
    let (above, below) = s.split?;
    let n = s.n as f64;
    let eps = (std::f64::consts::LN_2 - delta.ln()) / n;
    Some((
        (2.0 * above / n).clamp(0.0, 1.0),
        (2.0 * below / n).clamp(0.0, 1.0),
        eps,
    ))
}

/// `(U, 1 − U)` for U = ½ kl⁻¹₊(`up`, eps) + ½ (1 − kl⁻¹₋(`down`, eps)), each end of the two
/// inverses rounded outwards. `up` is moved up and `down` down by three ulps first (U increases
/// in `up` and decreases in `down`): that covers the rounding of each part mean, which is a
/// compensated sum (one ulp), of terms ½ − x rounded for x < ¼ (half an ulp of the mean in
/// all), divided by n (half an ulp).
fn combine(up: f64, down: f64, eps: f64) -> (f64, f64) {
    let up = up.next_up().next_up().next_up().min(1.0);
    let down = down.next_down().next_down().next_down().max(0.0);
    // Inflate the budget by a few ulps for its own rounding (a log and a division).
    let eps = eps * (1.0 + 4.0 * f64::EPSILON);
    let a = kl_inv_upper_prob(Prob::new(up), eps);
    let b = kl_inv_lower_prob(Prob::new(down), eps);
    // U = (a + (1 - b)) / 2 and 1 - U = ((1 - a) + b) / 2 use only accurately held parts.
    (0.5 * (a.p() + b.q()), 0.5 * (a.q() + b.p()))
}

/// Upper bound on the mean from a summary with split parts: `P(mean <= upper) >= 1 - delta`
/// for independent, identically distributed values in [0, 1]. Rounded upwards, at most 1.
/// Returns 1 (vacuous) without split parts, for an inconsistent summary, or for `delta`
/// outside (0, 1).
pub fn upper_summary(s: &Summary, delta: f64) -> f64 {
    match parts(s, delta) {
        Some((up, down, eps)) => {
            let (u, _) = combine(up, down, eps);
            (u * (1.0 + 2.0 * f64::EPSILON)).next_up().min(1.0)
        }
        None => 1.0,
    }
}

/// Lower bound on the mean from a summary with split parts: `P(mean >= lower) >= 1 - delta`,
/// computed as 1 − (upper bound of the reflection), with the complement carried directly.
/// Rounded downwards, at least 0; 0 (vacuous) on invalid input.
pub fn lower_summary(s: &Summary, delta: f64) -> f64 {
    match parts(s, delta) {
        // The reflection swaps the parts: above becomes below.
        Some((up, down, eps)) => {
            let (_, l) = combine(down, up, eps);
            (l * (1.0 - 2.0 * f64::EPSILON)).next_down().max(0.0)
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
    fn needs_the_split() {
        let values: Vec<f64> = (0..60).map(|i| [0.0, 0.5, 1.0][i % 3]).collect();
        let mut s = Summary::from_values(&values).expect("valid");
        assert!(upper_summary(&s, 0.1) < 1.0);
        s.split = None;
        assert_eq!(upper_summary(&s, 0.1), 1.0);
        assert_eq!(lower_summary(&s, 0.1), 0.0);
    }
}
