//! Anytime-valid bounds on a binary rate from Robbins' beta-binomial mixture with the uniform
//! prior (METHODS.md §8): for every candidate rate p, the likelihood ratio of the trials so far
//! against p, averaged over alternatives q drawn from a prior fixed in advance, is a
//! non-negative martingale under p with mean 1. By Ville's inequality it ever reaches 1/α with
//! probability at most α, so the rates it never rejects form a confidence sequence: valid at
//! every number of trials at once, however the decision to stop was made.
//!
//! After t trials with S events and F = t − S non-events:
//!
//! * **Two-sided** (prior Beta(1, 1) over every q):
//!   M_t(p) = B(1 + S, 1 + F) / (p^S (1 − p)^F). Because B(1 + S, 1 + F) = 1/((t + 1) C(t, S)),
//!   this is M_t(p) = 1 / ((t + 1) P(Bin(t, p) = S)) [derived]: one binomial probability, which
//!   the saddle-point form of [`crate::stats`] gives without the cancellation of log-gammas of
//!   size 1e12 (METHODS.md §8, numerics). ln M_t is convex in p with its minimum at S/t, where
//!   M_t ≤ 1 (the pmf integrates to 1/(t + 1) over p, so its maximum is at least that).
//! * **One-sided** (prior uniform on [0, p], only alternatives below p, for the upper bound):
//!   M⁻_t(p) = ∫_0^p q^S (1 − q)^F dq / (p^{S+1} (1 − p)^F)
//!   = P(Bin(t + 1, p) ≥ S + 1) / ((S + 1) P(Bin(t + 1, p) = S + 1)) [derived, the same
//!   identity one trial later]. With q = p u, M⁻_t = E_u[u^S ((1 − p u)/(1 − p))^F], which is
//!   non-decreasing in p (METHODS.md §8) and log-convex (each integrand is, and so is a mixture
//!   of log-convex functions); for p ≤ S/t the integrand increases in u up to its value 1 at
//!   u = 1, so M⁻_t ≤ 1 there and no such p is rejected. It is valid because mixing martingales
//!   with weights that depend on the null p keeps the martingale property under that p.
//!
//! Both are solved for the upper end by safeguarded Newton steps from the rejected side (on a
//! convex increasing function every Newton iterate lands at or beyond the root), bisecting when
//! a step leaves the bracket. The candidate returned is rejected with the evaluation error
//! allowed for, so rounding can only widen the bound. Lower bounds follow by reflection
//! (S ↔ F), read off the complement that the solver carries, so a lower bound of 1e-9 keeps its
//! relative precision. Closed forms: F = 0 gives the upper bound 1; S = 0 gives the two-sided
//! upper end 1 − exp(−(L + ln(1 + t))/t), L = ln(1/α).

use super::End;
use super::checkpoints::Checkpoints;
use crate::stats::kl::kl_inv_upper_prob;
use crate::stats::{BetaTail, Prob, ln_binom_pmf_at};

/// Which mixture.
#[derive(Clone, Copy, PartialEq, Eq, Debug)]
enum Mixture {
    /// Prior uniform on [0, p]: the one-sided upper bound.
    Below,
    /// Prior uniform on [0, 1]: both ends of the two-sided interval.
    Both,
}

/// Root-finder budget. Newton from the rejected side converges in a handful of steps; the
/// budget only bounds the bisection fallback (about 60 steps span any f64 bracket).
const MAX_ITER: usize = 200;

/// Allowance for the evaluation error of ln M, per unit of 1 + L + ln(1 + t): the mixture is
/// compared with L plus this, so a candidate counts as rejected only when it is rejected
/// whatever the rounding. The binomial probability and the incomplete beta function are
/// accurate to about 1e-15 and 1e-14 relative, i.e. absolute in the logarithm; 1e-13 per unit
/// covers them with room to spare and moves the bound by about 1e-13 relative.
const LN_ERR: f64 = 1e-13;

/// The threshold a computed ln M must reach for p to count as rejected.
fn threshold(delta: f64, t: u64) -> f64 {
    let l = -delta.ln();
    let ln_t = (t as f64).ln_1p();
    l + LN_ERR * (1.0 + l + ln_t)
}

/// ln M(p) for `s` events in `t` trials and its derivative in p.
fn log_mixture(kind: Mixture, s: u64, t: u64, x: Prob) -> (f64, f64) {
    let f = (t - s) as f64;
    let sf = s as f64;
    match kind {
        Mixture::Both => {
            let ln_m = -(t as f64).ln_1p() - ln_binom_pmf_at(s, t, x);
            (ln_m, f / x.q() - sf / x.p())
        }
        Mixture::Below => {
            let (ln_i, hazard) = BetaTail::new(s + 1, t - s + 1).eval(x).lower_with_hazard();
            let ln_m = ln_i - (sf + 1.0).ln() - ln_binom_pmf_at(s + 1, t + 1, x);
            (ln_m, hazard + f / x.q() - (sf + 1.0) / x.p())
        }
    }
}

/// The upper end for `s` events in `t ≥ 1` trials (`s < t`), rejected at threshold `thr`,
/// starting from `start`; `hi` is a known rejected point (the end of the bracket returned if
/// nothing better is found).
fn solve(kind: Mixture, s: u64, t: u64, thr: f64, start: Prob, mut hi: Prob) -> Prob {
    // Never rejected: p ≤ S/t (M ≤ 1 < 1/α there, for both mixtures).
    let mut lo = Prob::from_counts(s, t);
    let mut x = start;
    if !(lo.below(x) && x.below(hi)) {
        x = if hi.p() < 1.0 {
            hi
        } else {
            Prob::midpoint(lo, hi)
        };
    }
    for _ in 0..MAX_ITER {
        let (ln_m, slope) = log_mixture(kind, s, t, x);
        let g = ln_m - thr;
        let rejected = g >= 0.0;
        if rejected {
            if x.below(hi) {
                hi = x;
            }
        } else if lo.below(x) {
            lo = x;
        }
        let mut next = None;
        if g.is_finite() && slope.is_finite() && slope > 0.0 {
            let step = g / slope;
            if rejected && step <= 4.0 * f64::EPSILON * x.scale() {
                // Newton from the rejected side has stopped moving: x is the root to rounding.
                break;
            }
            let xn = x.shifted(-step);
            if lo.below(xn) && xn.below(hi) {
                next = Some(xn);
            }
        }
        x = next.unwrap_or_else(|| Prob::midpoint(lo, hi));
        if !(lo.below(x) && x.below(hi)) {
            break; // the bracket has closed to adjacent floating-point numbers
        }
    }
    hi
}

/// The upper end as a point carrying both p and 1 − p; `None` on invalid input.
fn upper_point(kind: Mixture, s: u64, t: u64, delta: f64) -> Option<Prob> {
    if t == 0 || s > t || !(delta > 0.0 && delta < 1.0) {
        return None;
    }
    if s == t {
        return Some(Prob::from_parts(1.0, 0.0));
    }
    let thr = threshold(delta, t);
    if s == 0 && kind == Mixture::Both {
        // −ln(1 + t) − t ln(1 − p) = thr
        return Some(Prob::one_minus_exp_neg(
            (thr + (t as f64).ln_1p()) / t as f64,
        ));
    }
    // First guess: t kl(S/t ‖ p) = L + ½ ln(1 + t), the leading terms of ln M (Laplace).
    let eps = (thr + 0.5 * (t as f64).ln_1p()) / t as f64;
    let start = kl_inv_upper_prob(Prob::from_counts(s, t), eps);
    Some(solve(kind, s, t, thr, start, Prob::from_parts(1.0, 0.0)))
}

/// One-sided upper bound on a binary rate from `events` in `trials`, valid at every number of
/// trials at once: `P(rate <= upper after t trials, for every t) >= 1 - delta` for trials whose
/// event probability given the past is the rate (equivalently iid Bernoulli). From the truncated
/// uniform mixture M⁻; relative error below 1e-11 up to n = 1e12 and delta = 1e-12 (typically
/// 1e-13), always on the conservative side. Returns 1
/// (vacuous) when `trials == 0`, `events > trials`, or `delta` is not in (0, 1).
pub fn upper(events: u64, trials: u64, delta: f64) -> f64 {
    upper_point(Mixture::Below, events, trials, delta).map_or(1.0, |x| x.nudged_up(1).p_up())
}

/// One-sided lower bound, the mirror of [`upper`] (events and non-events exchanged):
/// `P(rate >= lower after t trials, for every t) >= 1 - delta`. Returns 0 (vacuous) on invalid
/// input.
pub fn lower(events: u64, trials: u64, delta: f64) -> f64 {
    if events > trials {
        return 0.0;
    }
    upper_point(Mixture::Below, trials - events, trials, delta)
        .map_or(0.0, |x| x.nudged_up(1).flip().p_down())
}

/// Two-sided interval `(lower, upper)` from the uniform Beta(1, 1) mixture at total error
/// `delta`, valid at every number of trials at once:
/// `P(lower <= rate <= upper after t trials, for every t) >= 1 - delta`. Returns `(0, 1)` on
/// invalid input.
pub fn interval(events: u64, trials: u64, delta: f64) -> (f64, f64) {
    if events > trials {
        return (0.0, 1.0);
    }
    let up =
        upper_point(Mixture::Both, events, trials, delta).map_or(1.0, |x| x.nudged_up(1).p_up());
    let lo = upper_point(Mixture::Both, trials - events, trials, delta)
        .map_or(0.0, |x| x.nudged_up(1).flip().p_down());
    (lo, up)
}

/// The running upper end over every s ≤ t for t in `lengths` (ascending), from the event
/// indicators `events`: one pass over the trials. A trial changes the running minimum m* only
/// if it rejects m*, which is ruled out cheaply for almost every trial, so the root-finder runs
/// only where the minimum moves.
fn running_upper(kind: Mixture, events: &[bool], delta: f64, lengths: &[usize]) -> Vec<Prob> {
    let mut out = Vec::with_capacity(lengths.len());
    let Some(&last) = lengths.last() else {
        return out;
    };
    let l = -delta.ln();
    let u = 0.5 * f64::EPSILON;
    let mut best = Prob::from_parts(1.0, 0.0);
    let (mut ln_p, mut ln_q) = (0.0f64, f64::NEG_INFINITY);
    let (mut s, mut f) = (0u64, 0u64);
    // ln B(1 + S, 1 + F), built up from B(2 + S, 1 + F) / B(1 + S, 1 + F) = (S + 1)/(t + 1).
    let mut ln_b = crate::stats::sum::NeumaierSum::new();
    let mut next = lengths.iter().peekable();
    for (i, &event) in events[..last].iter().enumerate() {
        let t = (i + 1) as u64;
        let tf = t as f64;
        let before = if event { s } else { f };
        ln_b.add(((before + 1) as f64 / (tf + 1.0)).ln());
        if event {
            s += 1;
        } else {
            f += 1;
        }
        // F = 0: the upper end is 1; p ≤ S/t is never rejected (module documentation).
        let may_reject = f > 0 && best.p() * tf > s as f64 * (1.0 + 4.0 * f64::EPSILON);
        if may_reject {
            let thr = l + LN_ERR * (1.0 + l + tf.ln_1p());
            let (sf, ff) = (s as f64, f as f64);
            // An upper bound of ln M⁻ (≤ ln M − ln p, since ∫_0^p ≤ ∫_0^1) or ln M itself,
            // with every rounding of the running sum and the products allowed for.
            let a = ln_b.value();
            let mut cheap = a - sf * ln_p - ff * ln_q;
            if kind == Mixture::Below {
                cheap -= ln_p;
            }
            let slack =
                8.0 * u * (tf * tf.ln_1p() + (sf + 1.0) * ln_p.abs() + ff * ln_q.abs()) + 1e-12;
            if cheap + slack >= thr {
                let (ln_m, _) = log_mixture(kind, s, t, best);
                if ln_m >= thr {
                    best = solve(kind, s, t, thr, best, best);
                    ln_p = best.ln_p();
                    ln_q = best.ln_q();
                }
            }
        }
        if next.next_if(|&&m| m == i + 1).is_some() {
            out.push(best);
        }
    }
    out
}

/// The bound after each of the first `t` trials of `x` (each 0 or 1, 1 an event), for every `t`
/// in `checkpoints` (a [`super::PathFn`]): the one-sided bound at `delta` (truncated mixture),
/// or with `two_sided` the requested end of the two-sided mixture interval at total error
/// `delta`. Each value is the intersection over every s ≤ t, so the values never widen with t,
/// and all of them hold together with probability at least 1 − delta. Checkpoints outside
/// 1..=`x.len()`, and every checkpoint when a value is not 0 or 1 or `delta` is not in (0, 1),
/// get the vacuous value.
pub fn path(x: &[f64], delta: f64, end: End, two_sided: bool, checkpoints: &[u64]) -> Vec<f64> {
    let vacuous = match end {
        End::Upper => 1.0,
        End::Lower => 0.0,
    };
    let binary = x.iter().all(|&v| v == 0.0 || v == 1.0);
    if !(binary && delta > 0.0 && delta < 1.0) {
        return vec![vacuous; checkpoints.len()];
    }
    let plan = Checkpoints::new(checkpoints, x.len());
    let kind = if two_sided {
        Mixture::Both
    } else {
        Mixture::Below
    };
    // The lower end is the upper end of the reflected trials, read off its complement.
    let upper_end = end == End::Upper;
    let events: Vec<bool> = x.iter().map(|&v| (v == 1.0) == upper_end).collect();
    let values: Vec<f64> = running_upper(kind, &events, delta, &plan.lengths)
        .into_iter()
        .map(|b| {
            let b = b.nudged_up(1);
            if upper_end {
                b.p_up()
            } else {
                b.flip().p_down()
            }
        })
        .collect();
    plan.scatter(&values, vacuous)
}

#[cfg(test)]
mod unit {
    use super::*;

    #[test]
    fn closed_forms() {
        // S = 0, two-sided: 1 − exp(−(ln(1 + t) + L)/t), and all events: upper end 1.
        let want = -(-((1001f64).ln() + (20f64).ln()) / 1000.0).exp_m1();
        let (lo, up) = interval(0, 1000, 0.05);
        assert_eq!(lo, 0.0);
        assert!(up >= want && up <= want * (1.0 + 1e-12), "{up} vs {want}");
        assert_eq!(upper(7, 7, 0.05), 1.0);
        assert_eq!(interval(7, 7, 0.05).1, 1.0);
        assert_eq!(lower(0, 7, 0.05), 0.0);
    }

    #[test]
    fn one_sided_is_tighter_than_two_sided_at_the_same_delta() {
        for &(k, n) in &[
            (0u64, 1u64),
            (0, 100),
            (5, 100),
            (50, 100),
            (99, 100),
            (3, 100_000),
        ] {
            let one = upper(k, n, 0.05);
            let two = interval(k, n, 0.05).1;
            assert!(one <= two, "k={k} n={n}: {one} vs {two}");
            assert!(lower(k, n, 0.05) >= interval(k, n, 0.05).0, "k={k} n={n}");
        }
    }

    #[test]
    fn one_trial() {
        // t = 1, S = 0 [derived]: M⁻ = (1 − q²)/(2 p q) = (1 + q)/(2 q) reaches 1/α = 20 at
        // q = 1/39, so U = 38/39; the two-sided mixture M = 1/(2 q) reaches 20 at q = 1/40.
        let u = upper(0, 1, 0.05);
        assert!(u >= 38.0 / 39.0 && u - 38.0 / 39.0 < 1e-12, "{u}");
        let (lo, up) = interval(0, 1, 0.05);
        assert!(lo == 0.0 && up >= 0.975 && up - 0.975 < 1e-12, "{up}");
        // S = 1 mirrors S = 0.
        assert!((lower(1, 1, 0.05) - 1.0 / 39.0).abs() < 1e-12);
        assert_eq!(upper(1, 1, 0.05), 1.0);
    }

    #[test]
    fn path_never_widens_and_ends_at_the_running_bound() {
        // 3000 trials, an event wherever (7919 i + 13) mod 1000 < 40.
        let x: Vec<f64> = (0..3000u64)
            .map(|i| f64::from((7919 * i + 13) % 1000 < 40))
            .collect();
        let ts: Vec<u64> = (1..=3000).collect();
        for two_sided in [false, true] {
            let up = path(&x, 1e-3, End::Upper, two_sided, &ts);
            let lo = path(&x, 1e-3, End::Lower, two_sided, &ts);
            assert!(up.windows(2).all(|w| w[1] <= w[0]));
            assert!(lo.windows(2).all(|w| w[1] >= w[0]));
            // The running bound is no wider than the bound from the final counts alone.
            let k = x.iter().filter(|&&v| v == 1.0).count() as u64;
            let (l_end, u_end) = if two_sided {
                interval(k, 3000, 1e-3)
            } else {
                (lower(k, 3000, 1e-3), upper(k, 3000, 1e-3))
            };
            assert!(up[2999] <= u_end && lo[2999] >= l_end);
            assert!(lo[2999] < 0.04 && up[2999] > 0.04);
        }
    }

    #[test]
    fn tiny_delta_and_huge_n() {
        // Finite, ordered and inside (0, 1) at δ = 1e-12 and n = 1e12.
        for &(k, n) in &[
            (0u64, 1_000_000_000_000u64),
            (5, 1_000_000_000_000),
            (999_999, 1_000_000_000_000),
        ] {
            let (l, u) = (lower(k, n, 1e-12), upper(k, n, 1e-12));
            let (l2, u2) = interval(k, n, 1e-12);
            assert!(
                l.is_finite() && u.is_finite() && l < u && u < 1e-5,
                "{l} {u}"
            );
            assert!(l2 <= l && u2 >= u, "{l2} {u2}");
        }
    }

    #[test]
    fn invalid_input_is_vacuous() {
        assert_eq!(upper(0, 0, 0.05), 1.0);
        assert_eq!(upper(5, 4, 0.05), 1.0);
        assert_eq!(lower(5, 4, 0.05), 0.0);
        assert_eq!(upper(1, 10, 0.0), 1.0);
        assert_eq!(upper(1, 10, f64::NAN), 1.0);
        assert_eq!(interval(1, 10, 1.0), (0.0, 1.0));
        assert_eq!(
            path(&[0.0, 0.5], 0.05, End::Upper, false, &[1, 2]),
            vec![1.0, 1.0]
        );
    }
}
