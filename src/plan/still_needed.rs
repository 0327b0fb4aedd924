//! Trials still needed after k events in n trials, for the exact test of `rate ≤ limit`.
//!
//! Two projections, both decided with [`super::exact_test_passes`]:
//!
//! * **No further events**: the smallest m ≥ 0 such that k events in n + m trials pass. The
//!   bound falls as trials grow at a fixed count, so every larger m passes too; this is
//!   `min_trials(k) − n` (0 when the data already pass).
//! * **At the observed rate**: events keep occurring at the rate k/n, rounded up. With N = n + m
//!   trials in total the count is taken to be `e(N) = ⌈k·N/n⌉` (so e(n) = k, and the projection
//!   never assumes fewer events than the observed rate gives), and the answer is the smallest
//!   m ≥ 0 such that e(n + m) events in n + m trials pass. Because c(N) and e(N) both move in
//!   steps, a larger m need not pass as well; the answer is the first m that does. `None`, with
//!   the reason, when k/n is not below the limit.

use super::demonstration::ExactTest;
use super::{MAX_TRIALS, PlanError, Unreachable, first_true_from};
use crate::stats::kl::kl_inv_lower;

/// What the data collected so far still need.
#[derive(Debug, Clone, PartialEq)]
pub struct StillNeeded {
    /// Events so far.
    pub events: u64,
    /// Trials so far.
    pub trials: u64,
    /// Further trials needed if none of them has an event (0 when the data already pass).
    pub zero_further_events: u64,
    /// The projection at the observed rate.
    pub at_observed_rate: AtObservedRate,
}

/// The projection at the observed rate (module docs for the definition).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum AtObservedRate {
    /// The exact test first passes after `further` more trials.
    Reached {
        /// Further trials m.
        further: u64,
        /// Events projected at n + m trials, ⌈k·(n + m)/n⌉.
        events: u64,
    },
    /// No number of further trials passes at that rate; the reason says why.
    Unreachable(Unreachable),
}

impl AtObservedRate {
    /// The number of further trials, when there is one.
    pub fn further(&self) -> Option<u64> {
        match *self {
            AtObservedRate::Reached { further, .. } => Some(further),
            AtObservedRate::Unreachable(_) => None,
        }
    }
}

/// Trials still needed after `events` events in `trials` trials to demonstrate `rate ≤ limit` at
/// confidence 1 − δ with the exact test (module docs for both definitions).
/// Errors: invalid limit or δ, zero trials, events > trials; [`PlanError::TooManyTrials`] when
/// even the zero-event projection needs more than [`MAX_TRIALS`] trials in total.
pub fn still_needed(
    events: u64,
    trials: u64,
    limit: f64,
    delta: f64,
) -> Result<StillNeeded, PlanError> {
    let test = ExactTest::new(limit, delta)?;
    if trials == 0 {
        return Err(PlanError::NoTrials);
    }
    if events > trials {
        return Err(PlanError::EventsExceedTrials { events, trials });
    }
    let zero_further_events = test.min_trials(events)?.saturating_sub(trials);
    let at_observed_rate = if events == 0 {
        AtObservedRate::Reached {
            further: zero_further_events,
            events: 0,
        }
    } else if events as f64 / trials as f64 >= limit {
        AtObservedRate::Unreachable(Unreachable::ObservedNotBelowLimit {
            events,
            trials,
            limit,
        })
    } else {
        match first_at_rate(&test, events, trials) {
            Some(total) => AtObservedRate::Reached {
                further: total - trials,
                events: projected(events, trials, total),
            },
            None => AtObservedRate::Unreachable(Unreachable::BeyondCap { cap: MAX_TRIALS }),
        }
    };
    Ok(StillNeeded {
        events,
        trials,
        zero_further_events,
        at_observed_rate,
    })
}

/// e(N) = ⌈k·N/n⌉ in exact integer arithmetic.
fn projected(k: u64, n: u64, total: u64) -> u64 {
    let num = u128::from(k) * u128::from(total);
    let den = u128::from(n);
    u64::try_from(num.div_ceil(den)).unwrap_or(u64::MAX)
}

/// The smallest N ≥ n at which e(N) events pass, `None` beyond [`MAX_TRIALS`].
///
/// Why it is found. Let r = k/n < L. By the Chernoff bound (as in
/// [`super::operating::target_trials`]) c(N) ≥ ⌊N·q_N⌋ with q_N = kl⁻¹₋(L, ln(1/δ)/N), and
/// e(N) ≤ rN + 1, so every N with N·(q_N − r) ≥ 2 passes; q_N increases with N, so that holds
/// from some N* on (found by doubling and bisection). Below N* blocks [a, b] are walked up: on a
/// block c(N) − e(N) ≤ c(b) − e(a), so a block with c(b) < e(a) fails throughout; blocks double
/// after a settled block and halve otherwise, down to single N, which are tested directly.
fn first_at_rate(test: &ExactTest, k: u64, n: u64) -> Option<u64> {
    let r = k as f64 / n as f64;
    let ln_inv_delta = -test.delta.ln();
    let proves = |big: u64| {
        let q = kl_inv_lower(test.limit, ln_inv_delta / big as f64) * (1.0 - 1e-12);
        big as f64 * (q - r) * (1.0 - 1e-12) >= 2.0 + 1e-9 * big as f64 * r
    };
    let proven = first_true_from(n, MAX_TRIALS, proves)?;
    let passes = |big: u64| test.passes(projected(k, n, big), big);
    let mut a = n;
    let mut size = 1u64;
    loop {
        if a >= proven {
            return Some(proven);
        }
        let b = a.saturating_add(size - 1).min(proven - 1);
        let settled = if a == b {
            if passes(a) {
                return Some(a);
            }
            true
        } else {
            let room = test.allowed_events(b);
            room.is_none_or(|c| c < projected(k, n, a))
        };
        if settled {
            a = b + 1;
            size = size.saturating_mul(2);
        } else {
            size = (b - a).div_ceil(2).max(1);
        }
    }
}
