//! Sample sizes, operating characteristics and trials still needed, before or during a test
//! campaign.
//!
//! Everything here is pure: numbers in, numbers out, typed errors for bad input, no I/O.
//!
//! * [`demonstration`]: the smallest number of trials that demonstrates `rate ≤ limit` at
//!   confidence 1 − δ with the exact (Clopper–Pearson) test when at most c events occur, and the
//!   decision rule [`exact_test_passes`] every other part uses.
//! * [`operating`]: the chance of passing as a function of the true rate, the consumer's and
//!   producer's risks, and the smallest number of trials whose chance of passing at an assumed
//!   rate reaches a target and stays there for every larger number of trials.
//! * [`still_needed`]: further trials needed after k events in n trials.
//! * [`bounded`]: sample sizes for bounded outcomes from the assumed mean and standard deviation.
//! * [`simulate`]: a seeded simulation driver that finds the sample size for any bound.
//! * [`model`]: the plan results model (`surety-plan/1`) and the standard table.
//!
//! Only upper claims (`rate ≤ limit`, `mean ≤ limit`) are planned here. A lower claim is the
//! mirror image: count non-events (binary: `rate ≥ L` is `1 − rate ≤ 1 − L`) or reflect the
//! values (bounded: `x ↦ a + b − x`) before calling.

pub mod bounded;
pub mod demonstration;
pub mod from_spec;
pub mod model;
pub mod operating;
pub mod simulate;
pub mod still_needed;

use std::fmt;

pub use bounded::{AssumedLaw, BoundedSize, LawKind, bounded_sizes};
pub use demonstration::{allowed_events, exact_test_passes, min_trials};
pub use model::{PlanResults, standard_table};
pub use operating::{Operating, TargetSize, operating, pass_probability, target_trials};
pub use simulate::{MeanBound, SimConfig, Simulated, simulate_n, simulate_n_with};
pub use still_needed::{AtObservedRate, StillNeeded, still_needed};

/// Largest number of trials any plan may call for: 10^15.
///
/// The special functions are accurate to the stated tolerance for counts up to 10^15 (DESIGN
/// §11), counts stay exact in `f64` far beyond it (2^53 ≈ 9.0e15), and no test campaign comes
/// near it. A plan that would need more returns [`PlanError::TooManyTrials`] instead of a number
/// that cannot be computed reliably.
pub const MAX_TRIALS: u64 = 1_000_000_000_000_000;

/// Why no sample size reaches what was asked.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Unreachable {
    /// The assumed rate (or mean) is not below the limit. At any true value at or above the limit
    /// the test passes with probability at most δ, whatever the number of trials.
    AssumedNotBelowLimit {
        /// The assumed rate or mean.
        assumed: f64,
        /// The limit of the claim.
        limit: f64,
        /// The error budget.
        delta: f64,
    },
    /// The observed rate is not below the limit, so a projection at that rate never
    /// demonstrates the claim (at δ < 1/2 the upper bound never falls below the point estimate).
    ObservedNotBelowLimit {
        /// Events so far.
        events: u64,
        /// Trials so far.
        trials: u64,
        /// The limit of the claim.
        limit: f64,
    },
    /// The answer exists but lies beyond [`MAX_TRIALS`].
    BeyondCap {
        /// The cap, [`MAX_TRIALS`].
        cap: u64,
    },
}

impl fmt::Display for Unreachable {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match *self {
            Unreachable::AssumedNotBelowLimit {
                assumed,
                limit,
                delta,
            } => write!(
                f,
                "no sample size reaches the target: the assumed value {assumed} is not below the \
                 limit {limit}, and when the true value is at or above the limit the test passes \
                 with probability at most δ = {delta}, however many trials are run"
            ),
            Unreachable::ObservedNotBelowLimit {
                events,
                trials,
                limit,
            } => write!(
                f,
                "the observed rate {events}/{trials} is not below the limit {limit}: if events \
                 keep occurring at that rate, no number of further trials demonstrates the claim"
            ),
            Unreachable::BeyondCap { cap } => write!(
                f,
                "the number of trials needed exceeds {cap}, the largest this version of surety \
                 plans for"
            ),
        }
    }
}

/// A planning input that cannot be planned for, with the reason.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum PlanError {
    /// δ (1 − confidence) is not strictly between 0 and 1.
    Delta(f64),
    /// A binary limit not strictly between 0 and 1, or a bounded limit not strictly inside the
    /// declared range.
    Limit {
        /// The limit given.
        limit: f64,
        /// Lower end of the allowed interval (0 for a rate).
        low: f64,
        /// Upper end of the allowed interval (1 for a rate).
        high: f64,
    },
    /// The wanted chance of passing is not strictly between 0 and 1.
    PassProbability(f64),
    /// The assumed rate is not in [0, 1).
    AssumedRate(f64),
    /// More events than trials.
    EventsExceedTrials {
        /// Events given.
        events: u64,
        /// Trials given.
        trials: u64,
    },
    /// Zero trials where at least one is needed.
    NoTrials,
    /// So few trials that the exact test cannot pass even with no events.
    TooFewTrials {
        /// Trials given.
        trials: u64,
        /// The fewest trials with which the test can pass (zero events).
        minimum: u64,
    },
    /// The plan would need more than [`MAX_TRIALS`] trials.
    TooManyTrials {
        /// The cap, [`MAX_TRIALS`] (or the simulation's own cap).
        cap: u64,
    },
    /// The exact search for the smallest sample size ran out of its step budget (an assumed rate
    /// extremely close to the limit); `proven_from` trials are proven to suffice.
    SearchTooLong {
        /// The assumed rate.
        assumed: f64,
        /// The limit.
        limit: f64,
        /// A number of trials from which the target provably holds (not the smallest).
        proven_from: u64,
    },
    /// The target cannot be reached at all; the reason says why.
    Unreachable(Unreachable),
    /// The declared range [low, high] is not a finite interval with low < high.
    Range {
        /// Lower end given.
        low: f64,
        /// Upper end given.
        high: f64,
    },
    /// The assumed mean does not lie in the declared range.
    AssumedMean {
        /// Mean given.
        mean: f64,
        /// Lower end of the range.
        low: f64,
        /// Upper end of the range.
        high: f64,
    },
    /// The assumed standard deviation is negative, not finite, or larger than any law on the
    /// range with that mean can have.
    AssumedSd {
        /// Standard deviation given (data units).
        sd: f64,
        /// The largest possible one, sqrt((mean − low)(high − mean)) (Bhatia–Davis).
        max: f64,
    },
    /// The simulation was asked for zero replications.
    Replications,
}

impl fmt::Display for PlanError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match *self {
            PlanError::Delta(d) => write!(
                f,
                "δ = 1 − confidence must be strictly between 0 and 1, found {d}"
            ),
            PlanError::Limit { limit, low, high } => write!(
                f,
                "the limit must lie strictly between {low} and {high}, found {limit}"
            ),
            PlanError::PassProbability(p) => write!(
                f,
                "pass_probability must be strictly between 0 and 1 (a chance of passing such as \
                 0.9), found {p}"
            ),
            PlanError::AssumedRate(r) => write!(
                f,
                "the assumed rate must be at least 0 and below 1, found {r}"
            ),
            PlanError::EventsExceedTrials { events, trials } => {
                write!(f, "{events} events cannot occur in {trials} trials")
            }
            PlanError::NoTrials => write!(f, "at least one trial is needed"),
            PlanError::TooFewTrials { trials, minimum } => write!(
                f,
                "with {trials} trials the exact test cannot pass even with no events; at least \
                 {minimum} trials are needed"
            ),
            PlanError::TooManyTrials { cap } => write!(
                f,
                "the plan would need more than {cap} trials, the largest this version of surety \
                 plans for"
            ),
            PlanError::SearchTooLong {
                assumed,
                limit,
                proven_from,
            } => write!(
                f,
                "the assumed rate {assumed} is so close to the limit {limit} that the smallest \
                 sample size cannot be settled exactly within the search budget; {proven_from} \
                 trials are proven to suffice, for that and every larger number"
            ),
            PlanError::Unreachable(u) => u.fmt(f),
            PlanError::Range { low, high } => write!(
                f,
                "the declared range must be finite with its lower end below its upper end, \
                 found [{low}, {high}]"
            ),
            PlanError::AssumedMean { mean, low, high } => write!(
                f,
                "the assumed mean {mean} lies outside the declared range [{low}, {high}]"
            ),
            PlanError::AssumedSd { sd, max } => write!(
                f,
                "no distribution on the declared range has this mean and a standard deviation of \
                 {sd}: the largest possible is {max} (all values at the two ends of the range)"
            ),
            PlanError::Replications => write!(f, "a simulation needs at least one replication"),
        }
    }
}

impl std::error::Error for PlanError {}

/// δ must be a probability strictly between 0 and 1.
fn check_delta(delta: f64) -> Result<(), PlanError> {
    if delta > 0.0 && delta < 1.0 {
        Ok(())
    } else {
        Err(PlanError::Delta(delta))
    }
}

/// A binary limit must be a rate strictly between 0 and 1.
fn check_rate_limit(limit: f64) -> Result<(), PlanError> {
    if limit > 0.0 && limit < 1.0 {
        Ok(())
    } else {
        Err(PlanError::Limit {
            limit,
            low: 0.0,
            high: 1.0,
        })
    }
}

fn check_pass_probability(p: f64) -> Result<(), PlanError> {
    if p > 0.0 && p < 1.0 {
        Ok(())
    } else {
        Err(PlanError::PassProbability(p))
    }
}

/// Smallest `n` in `(lo, hi]` with `pred(n)`, for a predicate that fails at `lo` and is monotone
/// (false then true) on `[lo, hi]`, given that it holds at `hi`. Returns `hi` itself when the
/// interval is a single step.
fn first_true(mut lo: u64, mut hi: u64, mut pred: impl FnMut(u64) -> bool) -> u64 {
    while hi - lo > 1 {
        let mid = lo + (hi - lo) / 2;
        if pred(mid) {
            hi = mid;
        } else {
            lo = mid;
        }
    }
    hi
}

/// Smallest `n >= start` (start ≥ 1) with `pred(n)` for a monotone predicate, by doubling then
/// bisection; `None` when it does not hold at `cap`.
fn first_true_from(start: u64, cap: u64, mut pred: impl FnMut(u64) -> bool) -> Option<u64> {
    let start = start.clamp(1, cap);
    if pred(start) {
        return Some(start);
    }
    let mut lo = start;
    let mut hi = start;
    loop {
        if hi >= cap {
            return None;
        }
        hi = hi.saturating_mul(2).min(cap);
        if pred(hi) {
            break;
        }
        lo = hi;
    }
    Some(first_true(lo, hi, pred))
}
