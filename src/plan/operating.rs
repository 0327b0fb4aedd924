//! Operating characteristics of the exact test, and the sample size that gives a wanted chance
//! of passing at an assumed rate.
//!
//! With n trials the test passes when the event count k satisfies `U_CP(k, n, δ) ≤ L`, that is
//! `k ≤ c(n)` with c(n) = [`super::allowed_events`]. The chance of passing at a true rate p is
//! `P(n, p) = P(Bin(n, p) ≤ c(n))`. At p = L it is at most δ (the consumer's risk); at the assumed
//! rate p₀ one minus it is the producer's risk.
//!
//! **P(n, p₀) is not monotone in n.** While c(n) stays put it falls (more trials, same allowance);
//! when c(n) steps up it jumps. [`target_trials`] therefore answers two questions: the first n at
//! which the target is reached, and the smallest n from which it holds for that n and every
//! larger one. The argument behind the second is in [`target_trials`].

use super::demonstration::ExactTest;
use super::{
    MAX_TRIALS, PlanError, Unreachable, check_delta, check_pass_probability, check_rate_limit,
    first_true_from,
};
use crate::bounds::exact;
use crate::stats::kl::{kl, kl_inv_lower};
use crate::stats::{ln_binom_cdf, ln_binom_sf};

/// Most blocks [`target_trials`] examines (a few microseconds each) before it gives up with
/// [`PlanError::SearchTooLong`]. An assumed rate within 0.01 % of the limit (about 10^11 trials)
/// takes about 1.4 million; closer ones need ever more.
pub const SEARCH_STEPS: u64 = 2_000_000;

/// Largest number of points [`sawtooth`] returns in one call.
pub const SAWTOOTH_MAX_POINTS: u64 = 1_000_000;

/// The operating characteristic of the exact test with a given number of trials.
#[derive(Debug, Clone, PartialEq)]
pub struct Operating {
    /// Number of trials n.
    pub trials: u64,
    /// Acceptance number c(n): the test passes with at most this many events.
    pub allowed_events: u64,
    /// Chance of passing when the true rate equals the limit, `P(Bin(n, L) ≤ c)`; at most δ
    /// (up to the tie band of [`super::demonstration`]: below a relative 1e-12 for δ ≥ 1e-15).
    pub consumer_risk: f64,
    /// The assumed rate p₀, when one was given.
    pub assumed_rate: Option<f64>,
    /// Chance of passing at the assumed rate, `P(Bin(n, p₀) ≤ c)`.
    pub pass_probability_at_assumed: Option<f64>,
    /// Chance of not passing at the assumed rate, `P(Bin(n, p₀) > c)`, computed directly (not as
    /// one minus the above) so that small risks keep their digits.
    pub producer_risk: Option<f64>,
    /// `[rate, chance of passing]` points, increasing in rate, from rate 0 (chance 1) to a rate at
    /// which the chance is below 1e-4; denser where the curve falls and near the limit and the
    /// assumed rate, both of which are points of the curve.
    pub curve: Vec<[f64; 2]>,
}

/// The smallest sample size that gives the wanted chance of passing at an assumed rate.
#[derive(Debug, Clone, PartialEq)]
pub struct TargetSize {
    /// The assumed rate p₀.
    pub assumed_rate: f64,
    /// The wanted chance of passing at p₀.
    pub pass_probability: f64,
    /// Smallest n such that every n' ≥ n passes with at least the wanted chance.
    pub trials: u64,
    /// Acceptance number at `trials`.
    pub allowed_events: u64,
    /// Chance of passing at p₀ with `trials` trials.
    pub pass_probability_at_trials: f64,
    /// Smallest n at which the wanted chance is reached at all (≤ `trials`).
    pub first_reached: u64,
    /// Acceptance number at `first_reached`.
    pub first_reached_allowed_events: u64,
    /// Chance of passing at p₀ with `first_reached` trials.
    pub pass_probability_at_first_reached: f64,
    /// From this n on, a Chernoff lower bound alone proves the target holds (see
    /// [`target_trials`]); everything below it was checked exactly.
    pub proven_from: u64,
}

/// One point of the pass probability as a function of the number of trials.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SawPoint {
    /// Number of trials n.
    pub trials: u64,
    /// Acceptance number c(n); `None` when even zero events fail.
    pub allowed_events: Option<u64>,
    /// `P(Bin(n, p) ≤ c(n))`, 0 when `allowed_events` is `None`.
    pub pass_probability: f64,
}

fn check_assumed(rate: f64) -> Result<(), PlanError> {
    if (0.0..1.0).contains(&rate) {
        Ok(())
    } else {
        Err(PlanError::AssumedRate(rate))
    }
}

/// `P(Bin(n, p) ≤ c)`.
fn pass_prob(c: u64, n: u64, p: f64) -> f64 {
    ln_binom_cdf(c, n, p).exp()
}

/// `P(Bin(n, p) > c)`.
fn fail_prob(c: u64, n: u64, p: f64) -> f64 {
    ln_binom_sf(c, n, p).exp()
}

/// Whether `P(Bin(n, p) ≤ c) ≥ target`, compared on the smaller of the two tails.
fn meets(c: Option<u64>, n: u64, p: f64, target: f64) -> bool {
    match c {
        None => false,
        // 1 − target is exact for target ≥ 1/2 (Sterbenz).
        Some(c) if target > 0.5 => fail_prob(c, n, p) <= 1.0 - target,
        Some(c) => pass_prob(c, n, p) >= target,
    }
}

/// The chance that the exact test with `trials` trials passes when the true rate is `rate`:
/// `P(Bin(trials, rate) ≤ c(trials))`, 0 when no number of events passes.
/// Errors: limit or δ outside (0, 1), rate outside [0, 1], zero trials.
pub fn pass_probability(trials: u64, limit: f64, delta: f64, rate: f64) -> Result<f64, PlanError> {
    let test = ExactTest::new(limit, delta)?;
    if !(0.0..=1.0).contains(&rate) {
        return Err(PlanError::AssumedRate(rate));
    }
    if trials == 0 {
        return Err(PlanError::NoTrials);
    }
    Ok(test
        .allowed_events(trials)
        .map_or(0.0, |c| pass_prob(c, trials, rate)))
}

/// The operating characteristic of the exact test with `trials` trials for `rate ≤ limit` at
/// confidence 1 − δ: acceptance number, consumer's risk, and (with an assumed rate) the chance of
/// passing and the producer's risk, plus a curve for plotting.
/// Errors: invalid limit, δ or assumed rate (not in [0, 1)); [`PlanError::TooFewTrials`] when not
/// even zero events pass.
pub fn operating(
    trials: u64,
    limit: f64,
    delta: f64,
    assumed_rate: Option<f64>,
) -> Result<Operating, PlanError> {
    let test = ExactTest::new(limit, delta)?;
    if let Some(r) = assumed_rate {
        check_assumed(r)?;
    }
    if trials == 0 {
        return Err(PlanError::NoTrials);
    }
    let Some(c) = test.allowed_events(trials) else {
        return Err(PlanError::TooFewTrials {
            trials,
            minimum: test.min_trials(0)?,
        });
    };
    Ok(Operating {
        trials,
        allowed_events: c,
        consumer_risk: pass_prob(c, trials, limit),
        assumed_rate,
        pass_probability_at_assumed: assumed_rate.map(|p| pass_prob(c, trials, p)),
        producer_risk: assumed_rate.map(|p| fail_prob(c, trials, p)),
        curve: curve(c, trials, limit, assumed_rate),
    })
}

/// Rates at which the pass probability takes these values are points of the curve, so that the
/// steep part is drawn with as many points as the flat parts.
const CURVE_LEVELS: [f64; 19] = [
    0.999, 0.995, 0.99, 0.98, 0.95, 0.9, 0.8, 0.7, 0.6, 0.5, 0.4, 0.3, 0.2, 0.1, 0.05, 0.02, 0.01,
    0.005, 0.001,
];

fn curve(c: u64, n: u64, limit: f64, assumed: Option<f64>) -> Vec<[f64; 2]> {
    // The rate at which P(Bin(n, p) ≤ c) = level is the Clopper–Pearson bound at that level.
    let at_level = |level: f64| exact::upper(c, n, level);
    let mut rates: Vec<f64> = CURVE_LEVELS.iter().map(|&l| at_level(l)).collect();
    let mut top = at_level(1e-4).max(limit);
    let mut marks = vec![limit];
    if let Some(a) = assumed {
        top = top.max(a);
        if a > 0.0 {
            marks.push(a);
        }
    }
    let top = (top * 1.05).min(1.0);
    let steps = 40;
    rates.extend((0..=steps).map(|i| top * i as f64 / steps as f64));
    for &m in &marks {
        rates.push(m);
        rates.extend((1..=5).flat_map(|j| {
            let d = 0.01 * j as f64;
            [m * (1.0 - d), (m * (1.0 + d)).min(1.0)]
        }));
    }
    rates.retain(|r| (0.0..=1.0).contains(r));
    rates.sort_by(f64::total_cmp);
    rates.dedup_by(|a, b| (*a - *b).abs() <= 1e-12 * b.abs());
    rates.into_iter().map(|p| [p, pass_prob(c, n, p)]).collect()
}

/// The smallest number of trials n such that the exact test for `rate ≤ limit` at confidence
/// 1 − δ passes with probability at least `pass_probability` when the true rate is
/// `assumed_rate`, **for n and every larger number of trials**; also the first n at which that
/// chance is reached, which can be smaller (the chance falls between steps of c(n)).
///
/// Why the answer is right. Write P(n) = P(Bin(n, p₀) ≤ c(n)) and t for the target.
/// 1. *Tail.* The Chernoff bound P(Bin(n, L) ≤ k) ≤ exp(−n·kl(k/n ‖ L)) gives
///    c(n) ≥ ⌊n·q_n⌋ with q_n = kl⁻¹₋(L, ln(1/δ)/n), and the same bound on the upper tail of
///    Bin(n, p₀) gives P(n) ≥ 1 − exp(−g(n)) with g(n) = n·kl(q_n ‖ p₀) whenever q_n ≥ p₀.
///    q_n increases to L as n grows, and kl(q ‖ p₀) increases in q ≥ p₀, so g is nondecreasing
///    once q_n ≥ p₀. The first n* where 1 − exp(−g(n*)) ≥ t (found by doubling and bisection,
///    with q and kl shrunk by 1e-12 so that rounding cannot overstate them) therefore proves
///    P(n) ≥ t for every n ≥ n*.
/// 2. *Below n\*, exactly.* c(n) is nondecreasing and P(Bin(n, p) ≤ k) falls in n and grows in
///    k, so on a block [a, b] of trial counts P(Bin(b, p₀) ≤ c(a)) ≤ P(n) ≤ P(Bin(a, p₀) ≤ c(b)).
///    When c(a) = c(b) the block lies inside one step and P falls across it, so both ends are
///    exact. Blocks are walked down from n* (for the smallest n that holds onwards: the first
///    failing n found going down, plus one) and up from the zero-event plan (for the first n
///    that reaches t), doubling after a block is settled and halving when the bounds cannot
///    settle it, until blocks are single steps.
///
/// Errors: invalid limit, δ or pass probability; assumed rate outside [0, 1);
/// [`Unreachable::AssumedNotBelowLimit`] when `assumed_rate ≥ limit` (then the chance of passing
/// is at most δ for every n); [`PlanError::TooManyTrials`] if n* exceeds [`MAX_TRIALS`];
/// [`PlanError::SearchTooLong`] (which still reports n*, a number of trials proven to suffice)
/// when the exact search needs more than [`SEARCH_STEPS`] blocks.
pub fn target_trials(
    limit: f64,
    delta: f64,
    assumed_rate: f64,
    pass_probability: f64,
) -> Result<TargetSize, PlanError> {
    check_rate_limit(limit)?;
    check_delta(delta)?;
    check_pass_probability(pass_probability)?;
    check_assumed(assumed_rate)?;
    if assumed_rate >= limit {
        return Err(PlanError::Unreachable(Unreachable::AssumedNotBelowLimit {
            assumed: assumed_rate,
            limit,
            delta,
        }));
    }
    let test = ExactTest::new(limit, delta)?;
    let search = Search {
        test,
        p0: assumed_rate,
        t: pass_probability,
        steps: std::cell::Cell::new(0),
    };
    let n0 = test.min_trials(0)?;
    let proven_from = if assumed_rate == 0.0 {
        // No events can occur: every n ≥ n0 passes with certainty.
        n0
    } else {
        search.tail_start(n0)?
    };
    let too_long = PlanError::SearchTooLong {
        assumed: assumed_rate,
        limit,
        proven_from,
    };
    let held = search.held(n0, proven_from).ok_or(too_long)?;
    let first = search.first(n0, held).ok_or(too_long)?;
    let at = |n: u64| {
        let c = test.allowed_events(n).unwrap_or(0);
        (c, pass_prob(c, n, assumed_rate))
    };
    let (c_held, p_held) = at(held);
    let (c_first, p_first) = at(first);
    Ok(TargetSize {
        assumed_rate,
        pass_probability,
        trials: held,
        allowed_events: c_held,
        pass_probability_at_trials: p_held,
        first_reached: first,
        first_reached_allowed_events: c_first,
        pass_probability_at_first_reached: p_first,
        proven_from,
    })
}

struct Search {
    test: ExactTest,
    p0: f64,
    t: f64,
    /// Blocks examined so far by [`Search::held`] and [`Search::first`].
    steps: std::cell::Cell<u64>,
}

impl Search {
    fn meets(&self, c: Option<u64>, n: u64) -> bool {
        meets(c, n, self.p0, self.t)
    }

    /// Counts one block; false once [`SEARCH_STEPS`] are used up.
    fn step(&self) -> bool {
        let used = self.steps.get() + 1;
        self.steps.set(used);
        used <= SEARCH_STEPS
    }

    /// c(n − 1) from c(n): it is c(n) or one less.
    fn c_before(&self, c: Option<u64>, n: u64) -> Option<u64> {
        let c = c?;
        if n <= 1 {
            return None;
        }
        if self.test.passes(c, n - 1) {
            Some(c)
        } else {
            c.checked_sub(1)
        }
    }

    /// c(n + 1) from c(n): it is c(n) or one more.
    fn c_after(&self, c: Option<u64>, n: u64) -> Option<u64> {
        let next = c.map_or(0, |c| c + 1);
        if self.test.passes(next, n + 1) {
            Some(next)
        } else {
            c
        }
    }

    /// The n* of step 1 of [`target_trials`]: every n ≥ n* meets the target.
    fn tail_start(&self, n0: u64) -> Result<u64, PlanError> {
        let need = -(-self.t).ln_1p();
        let ln_inv_delta = -self.test.delta.ln();
        let proves = |n: u64| {
            let q = kl_inv_lower(self.test.limit, ln_inv_delta / n as f64) * (1.0 - 1e-12);
            q > self.p0 && n as f64 * kl(q, self.p0) * (1.0 - 1e-12) >= need
        };
        first_true_from(n0, MAX_TRIALS, proves).ok_or(PlanError::TooManyTrials { cap: MAX_TRIALS })
    }

    /// Smallest n such that every n' ≥ n meets the target, given that every n' ≥ `proven`
    /// does (step 2, walking down).
    fn held(&self, n0: u64, proven: u64) -> Option<u64> {
        if proven <= n0 {
            return Some(n0);
        }
        // Invariant: every n > b meets the target.
        let mut b = proven - 1;
        let mut cb = self.test.allowed_events(b);
        let mut size = 1u64;
        loop {
            if !self.step() {
                return None;
            }
            if b < n0 {
                // Below n0 nothing passes, so n0 - 1 fails and n0 is the answer.
                return Some(n0);
            }
            let a = b.saturating_sub(size - 1).max(n0);
            let ca = self.test.allowed_events(a);
            let settled = if ca == cb {
                // One step: P falls across [a, b], so its smallest value is at b.
                if !self.meets(cb, b) {
                    return Some(b + 1);
                }
                true
            } else {
                // P(n) ≥ P(Bin(b, p0) ≤ c(a)) on the block.
                self.meets(ca, b)
            };
            if settled {
                cb = self.c_before(ca, a);
                b = a - 1;
                size = size.saturating_mul(2);
            } else {
                size = (b - a).div_ceil(2).max(1);
            }
        }
    }

    /// Smallest n ≥ n0 meeting the target, given that `held` does (step 2, walking up).
    fn first(&self, n0: u64, held: u64) -> Option<u64> {
        let mut a = n0;
        let mut ca = self.test.allowed_events(a);
        let mut size = 1u64;
        loop {
            if !self.step() {
                return None;
            }
            if a >= held {
                return Some(held);
            }
            let b = a.saturating_add(size - 1).min(held - 1);
            let cb = self.test.allowed_events(b);
            let settled = if ca == cb {
                // One step: P falls across [a, b], so its largest value is at a.
                if self.meets(ca, a) {
                    return Some(a);
                }
                true
            } else {
                // P(n) ≤ P(Bin(a, p0) ≤ c(b)) on the block.
                !self.meets(cb, a)
            };
            if settled {
                ca = self.c_after(cb, b);
                a = b + 1;
                size = size.saturating_mul(2);
            } else {
                size = (b - a).div_ceil(2).max(1);
            }
        }
    }
}

/// The chance of passing at `rate` for every number of trials in `from..=to`, with the
/// acceptance number at each: the sawtooth that [`target_trials`] searches, for plots and
/// checks. At most [`SAWTOOTH_MAX_POINTS`] points (else [`PlanError::TooManyTrials`]).
pub fn sawtooth(
    limit: f64,
    delta: f64,
    rate: f64,
    from: u64,
    to: u64,
) -> Result<Vec<SawPoint>, PlanError> {
    let test = ExactTest::new(limit, delta)?;
    if !(0.0..=1.0).contains(&rate) {
        return Err(PlanError::AssumedRate(rate));
    }
    if from == 0 {
        return Err(PlanError::NoTrials);
    }
    if to < from {
        return Ok(Vec::new());
    }
    if to - from >= SAWTOOTH_MAX_POINTS {
        return Err(PlanError::TooManyTrials {
            cap: SAWTOOTH_MAX_POINTS,
        });
    }
    let search = Search {
        test,
        p0: rate,
        t: 0.5,
        steps: std::cell::Cell::new(0),
    };
    let mut c = test.allowed_events(from);
    let mut out = Vec::with_capacity((to - from + 1) as usize);
    for n in from..=to {
        if n > from {
            c = search.c_after(c, n - 1);
        }
        out.push(SawPoint {
            trials: n,
            allowed_events: c,
            pass_probability: c.map_or(0.0, |c| pass_prob(c, n, rate)),
        });
    }
    Ok(out)
}
