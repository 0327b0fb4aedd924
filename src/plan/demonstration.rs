//! Demonstration plans for a binary rate: how many trials, with at most c events, show
//! `rate ≤ limit` at confidence 1 − δ with the exact (Clopper–Pearson) test.
//!
//! **Decision rule.** DESIGN §7 passes a claim when the upper bound U ≤ L, ties included. For
//! the exact bound, `U_CP(k, n, δ) ≤ L` holds exactly when `P(Bin(n, L) ≤ k) ≤ δ`, because the
//! binomial distribution function falls as the rate grows and U_CP is the rate at which it
//! equals δ. Every function in this module decides with that tail probability, in log space:
//! `k = 0` by the closed form `n·ln(1 − L)`, `k > 0` by [`crate::stats::ln_binom_cdf`].
//!
//! **Ties pass.** Decimal inputs reach the program rounded to binary floating point, so an exact
//! tie in the decimals (confidence 0.3439 and reliability 0.9, where 0.9⁴ = 0.6561 exactly;
//! METHODS §12) arrives as a difference of a few units in the last place, on either side, and no
//! double-precision evaluation can tell it from equality. So a tail that the computation cannot
//! separate from δ counts as equal to it, and equal passes: the test passes when
//! `ln P(Bin(n, L) ≤ k) ≤ ln δ + τ·(1 + |ln δ|)` with τ = [`TIE_ZERO_EVENTS`] = 4e-15 for k = 0
//! (the closed form `n·ln(1 − L)` and `ln δ`, each within a few units in the last place) and
//! τ = [`TIE_EVENTS`] = 2e-14 for k > 0 (twice the stated accuracy of the log tail). The band is a
//! rounding allowance, not a change of the guarantee: the consumer's risk is at most
//! `δ·exp(τ·(1 + |ln δ|))`, below δ·(1 + 1e-12) for every δ ≥ 1e-15.
//!
//! The outward-rounded bound [`crate::bounds::exact::upper`] can exceed the limit by a few units
//! in the last place at such a tie; a verdict that must agree with these plans should be decided
//! with [`exact_test_passes`].

use super::{MAX_TRIALS, PlanError, check_delta, check_rate_limit, first_true, first_true_from};
use crate::stats::kl::kl_inv_lower;
use crate::stats::ln_binom_cdf;

/// Tie band for zero events, per unit of `1 + |ln δ|`, in `ln P(Bin(n, L) ≤ 0) − ln δ`
/// (module docs).
pub const TIE_ZERO_EVENTS: f64 = 4e-15;

/// Tie band for one or more events, per unit of `1 + |ln δ|` (module docs).
pub const TIE_EVENTS: f64 = 2e-14;

/// The exact test at a fixed limit and δ, with the logs computed once.
#[derive(Clone, Copy, Debug)]
pub(crate) struct ExactTest {
    pub(crate) limit: f64,
    pub(crate) delta: f64,
    ln_keep: f64,
    /// ln δ + the tie band, for k = 0 and for k > 0.
    threshold_zero: f64,
    threshold: f64,
}

impl ExactTest {
    /// Validates `limit` in (0, 1) and `delta` in (0, 1).
    pub(crate) fn new(limit: f64, delta: f64) -> Result<ExactTest, PlanError> {
        check_rate_limit(limit)?;
        check_delta(delta)?;
        Ok(ExactTest {
            limit,
            delta,
            ln_keep: (-limit).ln_1p(),
            threshold_zero: delta.ln() + TIE_ZERO_EVENTS * (1.0 - delta.ln()),
            threshold: delta.ln() + TIE_EVENTS * (1.0 - delta.ln()),
        })
    }

    /// `ln P(Bin(n, L) ≤ k)` (0 when k ≥ n).
    pub(crate) fn ln_tail(&self, k: u64, n: u64) -> f64 {
        if k >= n {
            0.0
        } else if k == 0 {
            n as f64 * self.ln_keep
        } else {
            ln_binom_cdf(k, n, self.limit)
        }
    }

    /// Whether k events in n trials pass: `U_CP(k, n, δ) ≤ L`, ties included.
    pub(crate) fn passes(&self, k: u64, n: u64) -> bool {
        // k >= n: the bound is 1 > L.
        let threshold = if k == 0 {
            self.threshold_zero
        } else {
            self.threshold
        };
        n > 0 && k < n && self.ln_tail(k, n) <= threshold
    }

    /// Smallest n with which c events pass; `TooManyTrials` beyond [`MAX_TRIALS`].
    pub(crate) fn min_trials(&self, c: u64) -> Result<u64, PlanError> {
        let too_many = PlanError::TooManyTrials { cap: MAX_TRIALS };
        if c >= MAX_TRIALS {
            return Err(too_many);
        }
        if c == 0 {
            return self.success_run();
        }
        // Fewer than c + 1 trials can never pass (the bound is 1); the zero-event plan is a
        // lower bound too, since P(Bin(n, L) ≤ c) ≥ P(Bin(n, L) = 0).
        let start = self.success_run()?.max(c + 1);
        first_true_from(start, MAX_TRIALS, |n| self.passes(c, n)).ok_or(too_many)
    }

    /// The success-run plan `n = ⌈ln δ / ln(1 − L)⌉`, guarded against floating ties (METHODS
    /// §12): the ratio is taken 1e-9 low, and the exact comparison in log space then moves it.
    fn success_run(&self) -> Result<u64, PlanError> {
        let too_many = PlanError::TooManyTrials { cap: MAX_TRIALS };
        let x = self.delta.ln() / self.ln_keep;
        if x.is_nan() {
            return Err(too_many);
        }
        // `as` saturates, and the clamp keeps the start inside [1, MAX_TRIALS].
        let mut n = ((x - 1e-9).ceil() as u64).clamp(1, MAX_TRIALS);
        // The estimate is within one or two of the answer; the steps are capped so that a
        // misbehaving comparison falls back to bisection instead of looping.
        for _ in 0..64 {
            if n > 1 && self.passes(0, n - 1) {
                n -= 1;
            } else if !self.passes(0, n) {
                if n == MAX_TRIALS {
                    return Err(too_many);
                }
                n += 1;
            } else {
                return Ok(n);
            }
        }
        first_true_from(1, MAX_TRIALS, |m| self.passes(0, m)).ok_or(too_many)
    }

    /// The largest number of events with which n trials pass, `None` when not even zero does.
    pub(crate) fn allowed_events(&self, n: u64) -> Option<u64> {
        if !self.passes(0, n) {
            return None;
        }
        // Chernoff: P(Bin(n, L) ≤ k) ≤ exp(−n kl(k/n ‖ L)) ≤ δ for k ≤ n·q with
        // q = kl⁻¹₋(L, ln(1/δ)/n), so floor(n q) passes; it is checked, not trusted.
        let mut lo = 0u64;
        let q = kl_inv_lower(self.limit, -self.delta.ln() / n as f64) * (1.0 - 1e-12);
        let guess = (q * n as f64).floor();
        if guess >= 1.0 && guess < n as f64 {
            let g = guess as u64;
            if self.passes(g, n) {
                lo = g;
            }
        }
        // A failing upper end: the median of Bin(n, L) is at most ⌈nL⌉, so
        // P(Bin(n, L) ≤ ⌈nL⌉) ≥ 1/2, which exceeds δ when δ < 1/2; otherwise n itself fails.
        let mut hi = n;
        let med = (n as f64 * self.limit).ceil();
        if med < n as f64 {
            let m = med as u64;
            if m > lo && !self.passes(m, n) {
                hi = m;
            }
        }
        // The last passing k is one below the first failing one.
        Some(first_true(lo, hi, |k| !self.passes(k, n)) - 1)
    }
}

/// Whether `events` events in `trials` trials demonstrate `rate ≤ limit` at confidence 1 − δ
/// with the exact test: `U_CP(events, trials, δ) ≤ limit`, decided as
/// `P(Bin(trials, limit) ≤ events) ≤ δ` in log space, ties passing (module docs). False for
/// invalid input (no trials, events > trials, limit or δ outside (0, 1)).
pub fn exact_test_passes(events: u64, trials: u64, limit: f64, delta: f64) -> bool {
    ExactTest::new(limit, delta).is_ok_and(|t| t.passes(events, trials))
}

/// The smallest number of trials n such that `events` events in n trials pass the exact test
/// ([`exact_test_passes`]) for `rate ≤ limit` at confidence 1 − δ. Every smaller n fails and
/// every larger one passes (the tail falls as n grows).
///
/// `events = 0` is the success-run rule `⌈ln δ / ln(1 − limit)⌉`, guarded against floating ties;
/// more events are found by doubling from the zero-event answer, then bisection.
/// Errors: limit or δ outside (0, 1); [`PlanError::TooManyTrials`] beyond [`MAX_TRIALS`].
pub fn min_trials(events: u64, limit: f64, delta: f64) -> Result<u64, PlanError> {
    ExactTest::new(limit, delta)?.min_trials(events)
}

/// The largest number of events k with which `trials` trials still pass the exact test, i.e.
/// the acceptance number of the plan with n = `trials`; `Ok(None)` when even zero events fail.
/// Nondecreasing in `trials`, and it grows by at most one per extra trial.
pub fn allowed_events(trials: u64, limit: f64, delta: f64) -> Result<Option<u64>, PlanError> {
    let t = ExactTest::new(limit, delta)?;
    if trials == 0 {
        return Err(PlanError::NoTrials);
    }
    Ok(t.allowed_events(trials))
}

#[cfg(test)]
mod unit {
    use super::*;

    // Algebra: (1/2)^3 = 0.125 and P(Bin(4, 1/2) ≤ 1) = 5/16 = 0.3125 are exact binary ties.
    #[test]
    fn exact_binary_ties_pass() {
        assert_eq!(min_trials(0, 0.5, 0.125), Ok(3));
        assert_eq!(min_trials(1, 0.5, 0.3125), Ok(4));
    }

    #[test]
    fn allowed_events_is_the_inverse_of_min_trials() {
        let t = ExactTest::new(0.05, 0.05).unwrap();
        for c in 0..20 {
            let n = t.min_trials(c).unwrap();
            assert_eq!(t.allowed_events(n), Some(c), "c = {c}");
            assert_eq!(
                t.allowed_events(n - 1),
                c.checked_sub(1),
                "c = {c}, n - 1 = {}",
                n - 1
            );
        }
    }
}
