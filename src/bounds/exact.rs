//! Exact binomial (Clopper–Pearson) one-sided confidence bounds.
//!
//! For `k ~ Binomial(n, rate)`, the upper bound is the `p` solving
//! `P(Bin(n, p) <= k) = delta`, i.e. the upper tail of Beta(k+1, n-k) at `p` equals
//! `delta`. The lower bound is its mirror image, `1 - upper(n - k)`, read off the
//! complement that the solver carries to full precision.
//!
//! The solver relies on one fact: the Beta survival function is log-concave in `p` (its
//! density is log-concave for parameters >= 1). So `G(p) = ln P(Bin(n,p) <= k) - ln delta`
//! is concave and decreasing, and the Newton iterate from *any* point lies at or to the
//! right of the root. Halley steps (cheap here, as `G''` follows from the density) move
//! the iterate; the returned value is a Newton iterate taken once the step is negligible,
//! moved outwards by the estimated evaluation error. Points where `G > 0` and Newton
//! iterates bracket the root at all times, and bisection takes over if a step leaves the
//! bracket.

use crate::stats::{BetaTail, Prob, norm_isf_approx};

/// Upper confidence bound: `P(rate <= upper) >= 1 - delta` for Binomial(`trials`, rate)
/// counts. One-sided at level `delta` (use `delta / 2` per side for a two-sided interval).
///
/// Relative error below 1e-10 (typically ~1e-14), and never below the exact bound by
/// more than that. Returns 1 (vacuous) when `trials == 0`, `events > trials`, or `delta`
/// is not in (0, 1).
pub fn upper(events: u64, trials: u64, delta: f64) -> f64 {
    upper_point(events, trials, delta).map_or(1.0, |x| x.p_up())
}

/// Lower confidence bound: `P(rate >= lower) >= 1 - delta`, the mirror of [`upper`]
/// (`lower(k, n, d) = 1 - upper(n - k, n, d)`, computed without cancellation). Returns
/// 0 (vacuous) on invalid input.
pub fn lower(events: u64, trials: u64, delta: f64) -> f64 {
    if events > trials {
        return 0.0;
    }
    upper_point(trials - events, trials, delta).map_or(0.0, |x| x.flip().p_down())
}

/// The upper bound as a point carrying both `p` and `1 - p`; None on invalid input.
pub(crate) fn upper_point(k: u64, n: u64, delta: f64) -> Option<Prob> {
    if n == 0 || k > n || !(delta > 0.0 && delta < 1.0) {
        return None;
    }
    if k == n {
        return Some(Prob::from_parts(1.0, 0.0));
    }
    let ln_delta = delta.ln();
    if k == 0 {
        // (1 - p)^n = delta
        return Some(Prob::one_minus_exp_neg(-ln_delta / n as f64));
    }
    Some(solve(k, n, delta, ln_delta))
}

/// Assumed absolute error of a computed `ln P(Bin(n, p) <= k)`, per unit of
/// `1 + |ln delta|`: the outward margin added to the root.
const LN_TAIL_ERR: f64 = 2e-15;
const MAX_ITER: usize = 300;

#[inline]
fn below(x: Prob, y: Prob) -> bool {
    x.below(y)
}

fn solve(k: u64, n: u64, delta: f64, ln_delta: f64) -> Prob {
    let a = (k + 1) as f64;
    let b = (n - k) as f64;
    let mut tail = BetaTail::new(k + 1, n - k);
    // Certified bracket: G(lo) > 0 (the median of Bin(n, k/n) is k, so
    // P(K <= k) >= 1/2 > delta there), G(hi) <= 0.
    let mut lo = if delta < 0.5 {
        Prob::from_counts(k, n)
    } else {
        Prob::new(0.0)
    };
    let mut hi = Prob::from_parts(1.0, 0.0);
    let mut x = tail.upper_quantile_guess(norm_isf_approx(delta));
    if !(below(lo, x) && below(x, hi)) {
        x = Prob::midpoint(lo, hi);
    }
    // Outward margin for the evaluation error, from the latest slope.
    let mut margin = 0.0;
    for _ in 0..MAX_ITER {
        // ln tail and |G'| = density / tail
        let (ln_tail, slope) = tail.eval(x).upper_with_hazard();
        let g = ln_tail - ln_delta;
        if g > 0.0 {
            if below(lo, x) {
                lo = x;
            }
        } else if below(x, hi) {
            hi = x;
        }
        let mut next = None;
        if g.is_finite() && slope.is_finite() && slope > 0.0 {
            let newton = g / slope;
            margin = LN_TAIL_ERR * (1.0 + ln_delta.abs()) / slope;
            let xn = x.shifted(newton);
            // Concavity: the Newton iterate is never left of the root.
            if below(xn, hi) && below(lo, xn) {
                hi = xn;
            }
            // d/dp ln density, and G'' = -slope * (dlnf + slope) (<= 0 by log-concavity).
            let dlnf = (a - 1.0) / x.p() - (b - 1.0) / x.q();
            let curv = slope * (dlnf + slope);
            let scale = x.scale();
            let second_order = 0.5 * curv * newton * newton / slope;
            if newton.abs() <= 1e-7 * scale && second_order.abs() <= 1e-17 * scale {
                return xn.shifted(margin + second_order.abs()).nudged_up(2);
            }
            // Far from the root the tail is flat (G' ~ 0) and a local step crawls: bisect
            // whenever the Newton step is longer than the bracket itself.
            // Measured where it is held exactly, as `below` compares: p, or 1 - p above 1/2.
            let width = if lo.p() <= 0.5 || hi.p() <= 0.5 {
                hi.p() - lo.p()
            } else {
                lo.q() - hi.q()
            };
            if newton.abs() <= width {
                let den = 2.0 * slope + g * (dlnf + slope);
                let halley = if den > 0.0 { 2.0 * g / den } else { newton };
                let xh = x.shifted(halley);
                if below(lo, xh) && below(xh, hi) {
                    next = Some(xh);
                } else if below(lo, xn) && below(xn, hi) {
                    next = Some(xn);
                }
            }
        }
        x = match next {
            Some(y) => y,
            None => Prob::midpoint(lo, hi),
        };
        if !(below(lo, x) && below(x, hi)) {
            // The bracket has shrunk to adjacent floating-point numbers.
            break;
        }
    }
    hi.shifted(margin).nudged_up(2)
}
