//! Betting confidence bounds (Waudby-Smith & Ramdas 2024) for the mean of values in [0, 1]
//! whose conditional mean given the past is constant (independence is not needed).
//!
//! For a candidate mean m, a gambler who bets against "μ = m" holds the capital
//!
//! ```text
//! K⁻_t(m) = ∏_{i≤t} (1 + λ⁻_i(m) (m − X_i)),   λ⁻_i(m) = min(λ̇_i, c / (1 − m)),
//! K⁺_t(m) = ∏_{i≤t} (1 + λ⁺_i(m) (X_i − m)),   λ⁺_i(m) = min(λ̇_i, c / m),
//! ```
//!
//! where the bet sizes λ̇_i depend on X_1..X_{i−1} only (predictable plug-in, fixed-n tuning):
//!
//! ```text
//! μ̂_t = (½ + Σ_{i≤t} X_i) / (t + 1),   σ̂²_t = (¼ + Σ_{i≤t} (X_i − μ̂_i)²) / (t + 1),
//! λ̇_t = sqrt(2 ln(1/α) / (n σ̂²_{t−1})).
//! ```
//!
//! Under μ = m both capitals are non-negative martingales starting at 1, so by Ville's
//! inequality P(max_{t≤n} K⁻_t(μ) ≥ 1/α) ≤ α. The upper bound is the smallest m that the running
//! maximum rejects, U = inf{m : max_{t≤n} K⁻_t(m) ≥ 1/α}; the lower bound mirrors it with K⁺.
//! Because λ̇ does not depend on m, every factor of K⁻ is non-decreasing in m (METHODS.md §7), so
//! the rejected candidates form an interval and a bracketing root-finder is exact; the value
//! returned is always a candidate whose rejection was verified, with the rounding error of the
//! log-capital subtracted first.
//!
//! Truncation c = ½: every factor is then at least ½, so one unexpected observation costs at most
//! ln 2 of log-capital. It is the value behind the computed check value in METHODS.md §7, and it
//! keeps the floating-point error of each factor below three ulps (the error grows like
//! c / (1 − c)). The larger choice c = ¾ gives smaller bounds when almost every value sits at
//! the favourable end (about L/(¾ n) instead of L/(½ n) for an all-zero sample), but loses ln 4
//! per contrary observation.
//!
//! Two-sided intervals use the hedged capital max{θ K⁺_t, (1 − θ) K⁻_t} with θ = ½ and the
//! tuning ln(2/α). A candidate survives every t ≤ n iff max_t K⁺_t(m) < 1/(θ α) and
//! max_t K⁻_t(m) < 1/((1 − θ) α). The first set is an upper interval and the second a lower
//! one (by the monotonicity above), so the interval's ends are the one-sided problems with
//! thresholds ln(1/(θα)) and ln(1/((1 − θ)α)), here both ln(2/α), and the same bets. With
//! θ = ½ the interval at α is therefore (lower at α/2, upper at α/2), computed from one set of
//! bets.
//!
//! Cost: one pass over the data for the bets, kept as one f64 per observation, then one pass per
//! candidate mean; about ten candidates per bound.

use super::sample::Sample;
use crate::stats::sum::NeumaierSum;

/// The truncation c of the bets (see the module documentation for the choice).
pub const TRUNCATION: f64 = 0.5;

/// The hedging weight θ of the two-sided interval.
pub const HEDGE: f64 = 0.5;

/// Factors multiplied together before one logarithm is taken. Each factor lies in
/// [1 − c, 1 + λ̇_max]; since t σ̂²_{t−1} ≥ ¼, λ̇_t ≤ sqrt(8 ln(1/α) t / n) < 80 for the
/// fixed-n bets and λ̇_t ≤ sqrt(8 ln(1/α) / ln 2) < 93 for the sequence's, for any positive f64
/// α (ln(1/α) < 745, ln(2/α) < 746), so a product of 64 stays within [2^-64, 93^64] ⊂
/// [1e-20, 1e127]: far from underflow and overflow.
const BLOCK: usize = 64;

/// Root-finder budget: candidates evaluated after the bracket is found.
const MAX_STEPS: usize = 100;

/// Relative width at which the bracket is considered closed.
const REL_TOL: f64 = 2e-15;

/// Which capital process, and which way the rejected side lies.
#[derive(Clone, Copy, PartialEq, Eq, Debug)]
pub(super) enum Side {
    /// K⁻: large when m is above the data (rejects high candidates; upper bound).
    Upper,
    /// K⁺: large when m is below the data (rejects low candidates; lower bound).
    Lower,
}

/// How the bet sizes are tuned: to a number of trials fixed in advance, or to an open-ended
/// sequence of trials.
#[derive(Clone, Copy, PartialEq, Eq, Debug)]
pub(super) enum Horizon {
    /// λ̇_t = sqrt(2 L / (n σ̂²_{t−1})) for n = `x.len()` planned trials (the fixed-n interval).
    Fixed,
    /// λ̇_t = sqrt(2 L / (σ̂²_{t−1} t ln(1 + t))), which does not depend on n (the confidence
    /// sequence, METHODS.md §7): every prefix of the bets is the bets of that prefix.
    Open,
}

/// Where the root-finder starts: the sample mean and the plug-in variance σ̂²_t of a prefix.
#[derive(Clone, Copy, Debug)]
pub(super) struct Guess {
    /// Mean of the prefix.
    pub(super) mean: f64,
    /// Plug-in variance σ̂²_t of the prefix.
    pub(super) variance: f64,
}

/// The bet sizes λ̇_1..λ̇_n, with the root-finder's first guess for the whole sample and, when
/// asked for, for some of its prefixes.
pub(super) struct Bets {
    pub(super) lambda: Vec<f64>,
    pub(super) horizon: Horizon,
    pub(super) whole: Guess,
    /// The guesses of the prefixes of lengths `marks` (as passed to [`bets_marked`]).
    pub(super) marks: Vec<Guess>,
}

/// The bets for the tuning ln(1/α) = `tuning`; `None` if a value is outside [0, 1] or NaN.
fn bets(x: &[f64], tuning: f64) -> Option<Bets> {
    bets_marked(x, tuning, Horizon::Fixed, &[])
}

/// The bets for the tuning ln(1/α) = `tuning` and `horizon`, with the guesses of the prefixes
/// of lengths `marks` (ascending, each in 1..=n); `None` if a value is outside [0, 1] or NaN.
///
/// The running sums are plain sequential f64 sums: the bets need only be functions of the past,
/// not accurate ones, and a sequential sum makes them reproducible bit for bit elsewhere.
pub(super) fn bets_marked(
    x: &[f64],
    tuning: f64,
    horizon: Horizon,
    marks: &[usize],
) -> Option<Bets> {
    if x.iter().any(|v| !(0.0..=1.0).contains(v)) {
        return None;
    }
    let n = x.len() as f64;
    // First pass (sequential): lambda[i] holds ¼ + Σ_{j<i} (x_j − μ̂_j)², i.e. (t σ̂²_{t−1})
    // for t = i + 1, with ½ + Σ x as the running sum behind μ̂.
    let mut lambda = Vec::with_capacity(x.len());
    let mut guesses = Vec::with_capacity(marks.len());
    let mut next_mark = marks.iter().peekable();
    let mut sum = 0.5;
    let mut sq = 0.25;
    let mut t_next = 2.0;
    for (i, &xi) in x.iter().enumerate() {
        lambda.push(sq);
        sum += xi;
        let d = xi - sum / t_next;
        sq += d * d;
        t_next += 1.0;
        while next_mark.next_if(|&&m| m <= i + 1).is_some() {
            // After t = i + 1 values: mean (sum − ½)/t and σ̂²_t = sq / (t + 1).
            let t = (i + 1) as f64;
            guesses.push(Guess {
                mean: (sum - 0.5) / t,
                variance: sq / (t_next - 1.0),
            });
        }
    }
    match horizon {
        Horizon::Fixed => {
            // Second pass (independent per element, so it vectorises):
            // λ̇_t = sqrt(2 L t / (n · that)).
            let scale = 2.0 * tuning / n;
            for (c, chunk) in lambda.chunks_mut(1024).enumerate() {
                let base = (c * 1024) as f64 + 1.0;
                for (j, v) in chunk.iter_mut().enumerate() {
                    let t = base + (j as i32) as f64;
                    *v = (scale * t / *v).sqrt();
                }
            }
        }
        Horizon::Open => {
            // λ̇_t = sqrt(2 L / (that · ln(1 + t))), since that = t σ̂²_{t−1}.
            let scale = 2.0 * tuning;
            for (i, v) in lambda.iter_mut().enumerate() {
                let t = (i + 1) as f64;
                *v = (scale / (*v * t.ln_1p())).sqrt();
            }
        }
    }
    Some(Bets {
        lambda,
        horizon,
        whole: Guess {
            mean: (sum - 0.5) / n,
            // σ̂²_n = (¼ + Σ_{i≤n} (x_i − μ̂_i)²) / (n + 1); t_next is n + 2 here.
            variance: sq / (t_next - 1.0),
        },
        marks: guesses,
    })
}

/// Result of scanning the capital process at one candidate.
#[derive(Clone, Copy, Debug)]
struct Scan {
    /// max_{t≤n} ln K_t(m) minus its worst rounding error minus the threshold: the candidate
    /// is rejected (verified) iff this is ≥ 0. When the scan stopped early it is the value at
    /// the stopping block, a lower bound of the full value.
    margin: f64,
}

impl Scan {
    fn rejected(self) -> bool {
        self.margin >= 0.0
    }
}

/// Scans max_{t≤n} ln K_t(m) for one side, against the threshold `thr` = ln(1/α).
/// With `stop_early`, returns as soon as the rejection is verified.
///
/// Rounding: each factor 1 + b (m − x) is computed with three roundings; since b (m − x) ≥ −c
/// and c ≤ ½, its relative error is at most 3u (u = 2^-53), and each multiplication adds u. So
/// a block's product (and each partial product) is off by at most 4·64·u relative, its logarithm
/// by that plus 2u of itself, the compensated sum of the block logarithms by 2u of its magnitude
/// and the last addition by u of the value: u (4 t + 4 Σ|ln P| + 2 |value| + 8) covers it all.
fn scan(x: &[f64], lambda: &[f64], m: f64, side: Side, thr: f64, stop_early: bool) -> Scan {
    let cap = match side {
        Side::Upper => TRUNCATION / (1.0 - m),
        Side::Lower => TRUNCATION / m,
    };
    let mut total = NeumaierSum::new();
    let mut abs_logs = 0.0f64;
    // K_0 = 1: the running maximum starts at ln 1 = 0.
    let mut best = 0.0f64;
    let mut seen = 0usize;
    for (xs, ls) in x.chunks(BLOCK).zip(lambda.chunks(BLOCK)) {
        let (p, peak) = match side {
            Side::Upper => block(xs, ls, |xi, li| 1.0 + li.min(cap) * (m - xi)),
            Side::Lower => block(xs, ls, |xi, li| 1.0 + li.min(cap) * (xi - m)),
        };
        seen += xs.len();
        let before = total.value();
        let lp = p.ln();
        // ln(peak) <= peak - 1: skip the logarithm when the block cannot raise the maximum
        // (skipping can only lower the maximum, never raise it).
        let candidate = if peak == p {
            Some(before + lp)
        } else if before + (peak - 1.0) <= best {
            None
        } else {
            Some(before + peak.ln())
        };
        total.add(lp);
        abs_logs += lp.abs();
        if let Some(c) = candidate {
            best = best.max(c);
            if stop_early && c >= thr {
                let err = error_bound(seen, abs_logs, c);
                if c - err >= thr {
                    return Scan {
                        margin: c - err - thr,
                    };
                }
            }
        }
    }
    let err = error_bound(seen, abs_logs, best);
    Scan {
        margin: best - err - thr,
    }
}

/// The product of one block's factors and the largest of its partial products. Factors are
/// taken in pairs so that the loop-carried chain has one multiplication per two factors; the
/// partial product after the first of a pair is formed off that chain, so the maximum is still
/// taken over every t.
#[inline(always)]
fn block(xs: &[f64], ls: &[f64], factor: impl Fn(f64, f64) -> f64) -> (f64, f64) {
    let mut p = 1.0f64;
    let mut peak = 0.0f64;
    let mut px = xs.chunks_exact(2);
    let mut pl = ls.chunks_exact(2);
    for (x2, l2) in px.by_ref().zip(pl.by_ref()) {
        let f0 = factor(x2[0], l2[0]);
        let f1 = factor(x2[1], l2[1]);
        let first = p * f0;
        let second = p * (f0 * f1);
        peak = peak.max(first.max(second));
        p = second;
    }
    for (&xi, &li) in px.remainder().iter().zip(pl.remainder()) {
        p *= factor(xi, li);
        peak = peak.max(p);
    }
    (p, peak)
}

/// Worst rounding error of a log-capital `value` after `t` factors whose block logarithms have
/// absolute sum `abs_logs` (see [`scan`]).
fn error_bound(t: usize, abs_logs: f64, value: f64) -> f64 {
    0.5 * f64::EPSILON * (4.0 * t as f64 + 4.0 * abs_logs + 2.0 * value.abs() + 8.0)
}

/// How closely the root-finder closes in on the edge of the rejected set. The value returned is
/// a verified-rejected candidate whatever the precision; a looser one only makes it larger
/// (upper) or smaller (lower) than it could be.
#[derive(Clone, Copy, Debug)]
pub(super) struct Precision {
    /// Candidates evaluated after the bracket is found, at most.
    pub(super) max_steps: usize,
    /// Relative width at which the bracket is considered closed.
    pub(super) rel_tol: f64,
}

/// The precision of reported bounds.
pub(super) const FULL: Precision = Precision {
    max_steps: MAX_STEPS,
    rel_tol: REL_TOL,
};

/// The one-sided bound for `side` at threshold `thr`, given the whole sample's bets.
fn solve(x: &[f64], b: &Bets, side: Side, thr: f64) -> f64 {
    solve_prefix(x, &b.lambda, b.horizon, b.whole, side, thr, FULL)
}

/// The one-sided bound for `side` at threshold `thr` from the observations `x` and their bets
/// `lambda` (of equal length), over the running maximum of the capital for every t ≤ `x.len()`.
/// Upper: the smallest verified-rejected candidate found (1 if even m = 1 is not rejected).
/// Lower: the largest (0 if m = 0 is not rejected).
pub(super) fn solve_prefix(
    x: &[f64],
    lambda: &[f64],
    horizon: Horizon,
    guess: Guess,
    side: Side,
    thr: f64,
    precision: Precision,
) -> f64 {
    let eval = |m: f64, early: bool| scan(x, lambda, m, side, thr, early);
    // The far end: every factor at m = 0 (upper) or m = 1 (lower) is at most 1, so the near
    // end is never rejected; the far end may not be either, and then the bound is vacuous.
    let (near, far) = match side {
        Side::Upper => (0.0, 1.0),
        Side::Lower => (1.0, 0.0),
    };
    if !eval(far, true).rejected() {
        return far;
    }
    let toward_far = |m: f64, r: f64| match side {
        Side::Upper => (m + r).min(1.0),
        Side::Lower => (m - r).max(0.0),
    };
    // Bracket: a = not rejected, b = rejected. The first guess is the Bernstein-like width
    // sqrt(2 σ̂² L / n) plus the truncation-limited width L / (c n) for near-constant data;
    // the sequence's bets are smaller by about sqrt(ln(1 + n)), its width larger by as much.
    let n = x.len() as f64;
    let spread = match horizon {
        Horizon::Fixed => 2.0 * guess.variance * thr / n,
        Horizon::Open => 2.0 * guess.variance * thr * n.ln_1p() / n,
    };
    let mut r = spread.sqrt() + thr / (TRUNCATION * n);
    if !(r > 0.0 && r.is_finite()) {
        r = 0.5;
    }
    let start = guess.mean.clamp(0.0, 1.0);
    let m0 = toward_far(start, r);
    let s0 = eval(m0, false);
    let (a, fa, rb, fb) = if s0.rejected() {
        // Move back toward the sample mean until a candidate survives.
        let (mut rb, mut fb) = (m0, s0.margin);
        let mut survivor = None;
        let mut step = r;
        for _ in 0..64 {
            step *= 0.25;
            let m = toward_far(start, step);
            if m == start {
                break;
            }
            if m == rb {
                continue; // clamped at the far end again
            }
            let s = eval(m, false);
            if s.rejected() {
                rb = m;
                fb = s.margin;
            } else {
                survivor = Some((m, s.margin));
                break;
            }
        }
        let (a, fa) = match survivor {
            Some(p) => p,
            None => {
                let s = eval(start, false);
                if s.rejected() {
                    // Even the sample mean is rejected (the running maximum can do that when
                    // early and late values disagree): bracket with the near end.
                    rb = start;
                    fb = s.margin;
                    (near, eval(near, false).margin)
                } else {
                    (start, s.margin)
                }
            }
        };
        (a, fa, rb, fb)
    } else {
        // Move away from the sample mean until a candidate is rejected.
        let (mut a, mut fa) = (m0, s0.margin);
        let mut step = r;
        loop {
            step *= 4.0;
            let m = toward_far(start, step);
            let s = eval(m, false);
            if s.rejected() {
                break (a, fa, m, s.margin);
            }
            if m == far {
                // The far end was verified rejected with the early-stopping error bound; the
                // full scan's bound is larger and may not verify it. The far end is safe.
                return far;
            }
            a = m;
            fa = s.margin;
        }
    };
    false_position(&eval, a, fa, rb, fb, precision)
}

/// Safeguarded false position with the Anderson–Björck rescaling of the retained end, on a
/// bracket with `fa < 0 <= fb` (either order in m). Every candidate is scanned in full so that
/// interpolation sees true values; a bisection step is forced whenever two steps have not
/// halved the bracket. Returns `b`, the verified-rejected end.
fn false_position(
    eval: &dyn Fn(f64, bool) -> Scan,
    mut a: f64,
    mut fa: f64,
    mut b: f64,
    mut fb: f64,
    precision: Precision,
) -> f64 {
    let Precision { max_steps, rel_tol } = precision;
    // Which end the previous step replaced: +1 for b, -1 for a.
    let mut last: i8 = 0;
    // Bracket widths at the start of the previous two steps.
    let mut width_two_ago = f64::INFINITY;
    let mut width_one_ago = f64::INFINITY;
    // Whether the last step was a probe beside b that was rejected (see below).
    let mut probe_rejected = false;
    for _ in 0..max_steps {
        let width = (b - a).abs();
        if width <= rel_tol * b.abs().max(a.abs()) {
            break;
        }
        let lo = a.min(b);
        let hi = a.max(b);
        let mid = lo + 0.5 * (hi - lo);
        let secant = (fb - fa > 0.0 && (fb - fa).is_finite()).then(|| fb * ((b - a) / (fb - fa)));
        if let Some(step) = secant
            && step.abs() <= rel_tol * b.abs()
            && !probe_rejected
        {
            // The interpolated root is within the tolerance of b. Interpolation can be wrong
            // where the capital is flat over part of the bracket (and the rescaled end values
            // make it more so), so the claim is checked: a candidate half the tolerance away
            // from b that survives puts the edge within the tolerance of b. Only tightness is
            // at stake; b is verified rejected whatever happens.
            let d = 0.5 * rel_tol * b.abs();
            let c = if a < b { b - d } else { b + d };
            if !(c > lo && c < hi) {
                break;
            }
            let fc = eval(c, false).margin;
            if fc < 0.0 {
                break;
            }
            b = c;
            fb = fc;
            last = 1;
            probe_rejected = true;
            continue;
        }
        let force_bisect = probe_rejected || width > 0.5 * width_two_ago;
        probe_rejected = false;
        let mut c = match secant {
            Some(step) if !force_bisect => b - step,
            _ => mid,
        };
        // Keep the candidate strictly inside, a little away from either end.
        let guard = width * 1e-4;
        if !(c > lo + guard && c < hi - guard) {
            c = c.clamp(lo + guard, hi - guard);
        }
        if !(c > lo && c < hi) {
            c = mid;
            if !(c > lo && c < hi) {
                break; // adjacent floating-point numbers
            }
        }
        let fc = eval(c, false).margin;
        if fc >= 0.0 {
            if last == 1 {
                let k = 1.0 - fc / fb;
                fa *= if k > 0.0 { k } else { 0.5 };
            }
            b = c;
            fb = fc;
            last = 1;
        } else {
            if last == -1 {
                let k = 1.0 - fc / fa;
                fb *= if k > 0.0 { k } else { 0.5 };
            }
            a = c;
            fa = fc;
            last = -1;
        }
        width_two_ago = width_one_ago;
        width_one_ago = width;
    }
    b
}

/// Checks `delta`, the observations and their agreement with the summary.
pub(super) fn observations<'a>(sample: &Sample<'a>, delta: f64) -> Option<&'a [f64]> {
    let x = sample.observations?;
    let ok = delta > 0.0 && delta < 1.0 && !x.is_empty() && sample.summary.n == x.len() as u64;
    ok.then_some(x)
}

/// Upper bound on the mean from the ordered observations `x` in [0, 1]:
/// `P(mean <= upper) >= 1 - delta` when every value has conditional mean μ given the values
/// before it, with n = `x.len()` fixed in advance. Returns 1 (vacuous) for empty input, a value
/// outside [0, 1] or NaN, or `delta` outside (0, 1).
pub fn upper_values(x: &[f64], delta: f64) -> f64 {
    if x.is_empty() || !(delta > 0.0 && delta < 1.0) {
        return 1.0;
    }
    let l = -delta.ln();
    match bets(x, l) {
        Some(b) => solve(x, &b, Side::Upper, l),
        None => 1.0,
    }
}

/// Lower bound on the mean from the ordered observations `x` in [0, 1]:
/// `P(mean >= lower) >= 1 - delta` under the same conditions as [`upper_values`]. Returns 0
/// (vacuous) on invalid input.
pub fn lower_values(x: &[f64], delta: f64) -> f64 {
    if x.is_empty() || !(delta > 0.0 && delta < 1.0) {
        return 0.0;
    }
    let l = -delta.ln();
    match bets(x, l) {
        Some(b) => solve(x, &b, Side::Lower, l),
        None => 0.0,
    }
}

/// Two-sided interval `(lower, upper)` from the hedged capital at total error `delta`:
/// `P(lower <= mean <= upper) >= 1 - delta` under the conditions of [`upper_values`].
/// Returns `(0, 1)` on invalid input. The ends may cross only when every candidate is rejected,
/// which under the assumptions happens with probability at most `delta`.
pub fn interval_values(x: &[f64], delta: f64) -> (f64, f64) {
    if x.is_empty() || !(delta > 0.0 && delta < 1.0) {
        return (0.0, 1.0);
    }
    let tuning = std::f64::consts::LN_2 - delta.ln();
    let Some(b) = bets(x, tuning) else {
        return (0.0, 1.0);
    };
    // ln(1/(θ α)) for the K⁺ side and ln(1/((1 − θ) α)) for the K⁻ side.
    let thr_lower = -HEDGE.ln() - delta.ln();
    let thr_upper = -(1.0 - HEDGE).ln() - delta.ln();
    (
        solve(x, &b, Side::Lower, thr_lower),
        solve(x, &b, Side::Upper, thr_upper),
    )
}

/// [`upper_values`] on the sample's observations; 1 (vacuous) when the sample has none, or
/// when their number differs from the summary's n.
pub fn upper(sample: &Sample, delta: f64) -> f64 {
    observations(sample, delta).map_or(1.0, |x| upper_values(x, delta))
}

/// [`lower_values`] on the sample's observations; 0 (vacuous) when the sample has none.
pub fn lower(sample: &Sample, delta: f64) -> f64 {
    observations(sample, delta).map_or(0.0, |x| lower_values(x, delta))
}

/// [`interval_values`] on the sample's observations; `(0, 1)` when the sample has none.
pub fn interval(sample: &Sample, delta: f64) -> (f64, f64) {
    observations(sample, delta).map_or((0.0, 1.0), |x| interval_values(x, delta))
}

#[cfg(test)]
mod unit {
    use super::*;

    #[test]
    fn all_zeros_matches_methods_check_value() {
        // METHODS.md §7 (computed): binary data, n = 1000, k = 0, α = 0.05, c = ½: 0.005965.
        // That value has every bet at the cap c/(1 − m), i.e. n ln(1 + c m/(1 − m)) = ln(1/α);
        // the plug-in bets start below the cap (the first 16 here), and a smaller bet can only
        // lower the capital of an all-zero sample, so the bound lies a little above it.
        let u = upper_values(&[0.0; 1000], 0.05);
        let y = ((1.0f64 / 0.05).ln() / 1000.0).exp_m1();
        let capped = y / (TRUNCATION + y);
        assert!((capped - 0.005965).abs() < 5e-7, "{capped}");
        assert!(u > capped && u < capped * 1.01, "{u}");
        assert_eq!(lower_values(&[0.0; 1000], 0.05), 0.0);
    }

    #[test]
    fn invalid_input_is_vacuous() {
        assert_eq!(upper_values(&[], 0.05), 1.0);
        assert_eq!(upper_values(&[0.2, f64::NAN], 0.05), 1.0);
        assert_eq!(upper_values(&[0.2, 1.5], 0.05), 1.0);
        assert_eq!(lower_values(&[0.2, -0.1], 0.05), 0.0);
        assert_eq!(upper_values(&[0.2; 10], 1.0), 1.0);
        assert_eq!(interval_values(&[0.2; 10], 0.0), (0.0, 1.0));
    }
}
