//! Chernoff / kl-inverse bounds (Hoeffding 1963, Thm 1 in kl form).
//!
//! Valid for any independent [0, 1] observations with the given mean, since a bounded
//! variable is MGF-dominated by a Bernoulli with the same mean. For binary data it is
//! never tighter than the exact bound, and equal to it at zero events.

use crate::stats::Prob;
use crate::stats::kl::{kl_inv_lower_prob, kl_inv_upper_prob};

fn valid(n: u64, delta: f64) -> bool {
    n > 0 && delta > 0.0 && delta < 1.0
}

/// `ln(1/delta) / n`, the kl budget.
fn budget(n: u64, delta: f64) -> f64 {
    -delta.ln() / n as f64
}

/// Upper bound `kl⁻¹₊(events/trials, ln(1/delta)/trials)`: `P(rate <= upper) >= 1 - delta`.
/// Never below the true inverse by more than rounding. Returns 1 on invalid input
/// (`trials == 0`, `events > trials`, `delta` outside (0, 1)).
pub fn upper(events: u64, trials: u64, delta: f64) -> f64 {
    if events > trials || !valid(trials, delta) {
        return 1.0;
    }
    kl_inv_upper_prob(Prob::from_counts(events, trials), budget(trials, delta)).p_up()
}

/// Lower bound `kl⁻¹₋(events/trials, ln(1/delta)/trials)`: `P(rate >= lower) >= 1 - delta`.
/// Returns 0 on invalid input.
pub fn lower(events: u64, trials: u64, delta: f64) -> f64 {
    if events > trials || !valid(trials, delta) {
        return 0.0;
    }
    kl_inv_lower_prob(Prob::from_counts(events, trials), budget(trials, delta)).p_down()
}

/// Upper bound on the mean of `n` independent [0, 1] observations whose sample mean is
/// `mean`. Returns 1 on invalid input (`n == 0`, `mean` outside [0, 1] or NaN, bad `delta`).
pub fn upper_mean(mean: f64, n: u64, delta: f64) -> f64 {
    if !(0.0..=1.0).contains(&mean) || !valid(n, delta) {
        return 1.0;
    }
    kl_inv_upper_prob(Prob::new(mean), budget(n, delta)).p_up()
}

/// Lower bound on the mean of `n` independent [0, 1] observations whose sample mean is
/// `mean`. Returns 0 on invalid input.
pub fn lower_mean(mean: f64, n: u64, delta: f64) -> f64 {
    if !(0.0..=1.0).contains(&mean) || !valid(n, delta) {
        return 0.0;
    }
    kl_inv_lower_prob(Prob::new(mean), budget(n, delta)).p_down()
}

/// The sample's mean as an event count when its sum is a whole number (binary data, for
/// instance), so that the bound is exactly the count-based one.
fn whole_sum(s: &crate::bounds::Summary) -> Option<u64> {
    let k = s.sum;
    (k.fract() == 0.0 && k >= 0.0 && k <= s.n as f64).then_some(k as u64)
}

/// [`upper_mean`] on a bounded sample rescaled to [0, 1]: `P(mean <= upper) >= 1 - delta` for
/// independent values. A whole-number sum k gives exactly [`upper`]`(k, n, delta)`; otherwise the
/// mean is moved up by three ulps first (a compensated sum, within an ulp, divided by n).
/// Returns 1 for an inconsistent summary.
pub fn upper_sample(sample: &crate::bounds::Sample, delta: f64) -> f64 {
    let s = &sample.summary;
    if !s.is_consistent() {
        return 1.0;
    }
    match whole_sum(s) {
        Some(k) => upper(k, s.n, delta),
        None => upper_mean(s.mean().next_up().next_up().next_up().min(1.0), s.n, delta),
    }
}

/// [`lower_mean`] on a bounded sample rescaled to [0, 1], the mirror of [`upper_sample`].
/// Returns 0 for an inconsistent summary.
pub fn lower_sample(sample: &crate::bounds::Sample, delta: f64) -> f64 {
    let s = &sample.summary;
    if !s.is_consistent() {
        return 0.0;
    }
    match whole_sum(s) {
        Some(k) => lower(k, s.n, delta),
        None => lower_mean(
            s.mean().next_down().next_down().next_down().max(0.0),
            s.n,
            delta,
        ),
    }
}
