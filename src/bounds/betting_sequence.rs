//! Betting confidence sequence (Waudby-Smith & Ramdas 2024) for the mean of values in [0, 1]
//! whose conditional mean given the past is constant: bounds that hold at every number of
//! trials at once, so testing may stop or go on because of what was seen (METHODS.md §7).
//!
//! The capital processes, the truncation c = ½ and the root-finder are those of the fixed-n
//! betting bound ([`super::betting`]); only the bet sizes differ. The sequence's plug-in bets
//!
//! ```text
//! λ̇_t = sqrt(2 L / (σ̂²_{t−1} t ln(1 + t))),   L = ln(1/α) one-sided, ln(2/α) two-sided,
//! ```
//!
//! do not depend on a planned number of trials, so the bets of the first t observations are the
//! same whatever follows, and by Ville's inequality
//! P(∃t: max_{s≤t} K⁻_s(μ) ≥ 1/α) ≤ α for the true mean μ. The bound after t trials is the edge of
//! the candidates that the running maximum over every s ≤ t has not rejected; it is the running
//! intersection of the sets of every earlier trial, so it never widens as trials are added.
//!
//! Two-sided: the hedged capital max{θ K⁺, (1 − θ) K⁻}, θ = ½, at total α; as for the fixed-n
//! interval its ends are the one-sided problems at threshold ln(2/α) with the tuning ln(2/α).

use super::betting::{
    self, FULL, Guess, HEDGE, Horizon, Precision, Side, bets_marked, solve_prefix,
};
use super::checkpoints::Checkpoints;
use super::{End, Sample};

/// Precision of the points of a path. The value returned is still a verified-rejected candidate
/// (so a valid bound); closing the bracket only to 1e-9 relative saves about a third of the
/// candidate scans on long streams, and no plot can show the difference.
const PATH: Precision = Precision {
    max_steps: 60,
    rel_tol: 1e-9,
};

/// Tuning ln(1/α) (one-sided) or ln(2/α) (hedged), and the thresholds of the upper (K⁻) and
/// lower (K⁺) side.
fn levels(delta: f64, two_sided: bool) -> (f64, f64, f64) {
    if two_sided {
        let tuning = std::f64::consts::LN_2 - delta.ln();
        (
            tuning,
            -(1.0 - HEDGE).ln() - delta.ln(),
            -HEDGE.ln() - delta.ln(),
        )
    } else {
        let l = -delta.ln();
        (l, l, l)
    }
}

fn valid(x: &[f64], delta: f64) -> bool {
    !x.is_empty() && delta > 0.0 && delta < 1.0
}

/// Upper bound on the mean after the ordered observations `x` in [0, 1], valid at every number
/// of trials at once: `P(mean <= upper after t trials, for every t) >= 1 - delta` when each value
/// has conditional mean μ given the values before it. The bound after `x.len()` trials is the
/// intersection over every earlier t. Returns 1 (vacuous) for empty input, a value outside
/// [0, 1] or NaN, or `delta` outside (0, 1).
pub fn upper_values(x: &[f64], delta: f64) -> f64 {
    if !valid(x, delta) {
        return 1.0;
    }
    let (tuning, thr, _) = levels(delta, false);
    match bets_marked(x, tuning, Horizon::Open, &[]) {
        Some(b) => solve_prefix(x, &b.lambda, b.horizon, b.whole, Side::Upper, thr, FULL),
        None => 1.0,
    }
}

/// Lower bound on the mean, the mirror of [`upper_values`]:
/// `P(mean >= lower after t trials, for every t) >= 1 - delta`. Returns 0 (vacuous) on invalid
/// input.
pub fn lower_values(x: &[f64], delta: f64) -> f64 {
    if !valid(x, delta) {
        return 0.0;
    }
    let (tuning, _, thr) = levels(delta, false);
    match bets_marked(x, tuning, Horizon::Open, &[]) {
        Some(b) => solve_prefix(x, &b.lambda, b.horizon, b.whole, Side::Lower, thr, FULL),
        None => 0.0,
    }
}

/// Two-sided interval `(lower, upper)` from the hedged capital at total error `delta`, valid at
/// every number of trials at once: `P(lower <= mean <= upper after t trials, for every t) >=
/// 1 - delta` under the conditions of [`upper_values`]. Returns `(0, 1)` on invalid input. The
/// ends may cross only when every candidate is rejected, which under the assumptions happens
/// with probability at most `delta`.
pub fn interval_values(x: &[f64], delta: f64) -> (f64, f64) {
    if !valid(x, delta) {
        return (0.0, 1.0);
    }
    let (tuning, thr_upper, thr_lower) = levels(delta, true);
    let Some(b) = bets_marked(x, tuning, Horizon::Open, &[]) else {
        return (0.0, 1.0);
    };
    (
        solve_prefix(
            x,
            &b.lambda,
            b.horizon,
            b.whole,
            Side::Lower,
            thr_lower,
            FULL,
        ),
        solve_prefix(
            x,
            &b.lambda,
            b.horizon,
            b.whole,
            Side::Upper,
            thr_upper,
            FULL,
        ),
    )
}

/// [`upper_values`] on the sample's observations; 1 (vacuous) when the sample has none, or when
/// their number differs from the summary's n.
pub fn upper(sample: &Sample, delta: f64) -> f64 {
    betting::observations(sample, delta).map_or(1.0, |x| upper_values(x, delta))
}

/// [`lower_values`] on the sample's observations; 0 (vacuous) when the sample has none.
pub fn lower(sample: &Sample, delta: f64) -> f64 {
    betting::observations(sample, delta).map_or(0.0, |x| lower_values(x, delta))
}

/// [`interval_values`] on the sample's observations; `(0, 1)` when the sample has none.
pub fn interval(sample: &Sample, delta: f64) -> (f64, f64) {
    betting::observations(sample, delta).map_or((0.0, 1.0), |x| interval_values(x, delta))
}

/// The bound after each of the first `t` observations of `x`, for every `t` in `checkpoints`
/// (a [`super::PathFn`]): the one-sided bound at `delta`, or with `two_sided` the requested end
/// of the hedged interval at total error `delta`. Each value is the intersection over every
/// s ≤ t, so the values never widen with t, and all of them hold together with probability at
/// least 1 − delta. A point is a verified-rejected candidate found to 1e-9 relative, so it may
/// lie that much outside [`upper_values`] of the same prefix, never inside. Checkpoints outside
/// 1..=`x.len()`, and every checkpoint on invalid input, get the vacuous value.
pub fn path(x: &[f64], delta: f64, end: End, two_sided: bool, checkpoints: &[u64]) -> Vec<f64> {
    let vacuous = match end {
        End::Upper => 1.0,
        End::Lower => 0.0,
    };
    if !valid(x, delta) {
        return vec![vacuous; checkpoints.len()];
    }
    let plan = Checkpoints::new(checkpoints, x.len());
    let (tuning, thr_upper, thr_lower) = levels(delta, two_sided);
    let (side, thr) = match end {
        End::Upper => (Side::Upper, thr_upper),
        End::Lower => (Side::Lower, thr_lower),
    };
    let Some(b) = bets_marked(x, tuning, Horizon::Open, &plan.lengths) else {
        return vec![vacuous; checkpoints.len()];
    };
    let mut running = vacuous;
    let values: Vec<f64> = plan
        .lengths
        .iter()
        .zip(&b.marks)
        .map(|(&t, &guess): (&usize, &Guess)| {
            let v = solve_prefix(
                &x[..t],
                &b.lambda[..t],
                Horizon::Open,
                guess,
                side,
                thr,
                PATH,
            );
            // The sets are nested in exact arithmetic; the running extreme makes the computed
            // values so too (each is a valid bound, so their minimum is one).
            running = match end {
                End::Upper => running.min(v),
                End::Lower => running.max(v),
            };
            running
        })
        .collect();
    plan.scatter(&values, vacuous)
}

#[cfg(test)]
mod unit {
    use super::*;
    use crate::bounds::betting::TRUNCATION;

    #[test]
    fn all_zeros_bets_at_the_cap() {
        // On an all-zero stream the sequence's bets exceed the cap c/(1 − m) from the first
        // trial on (λ̇_t ≥ sqrt(2 ln 20 / (0.42 ln(1 + t))) > 1.4 for t ≤ 1000, since
        // t σ̂²_{t−1} < ¼ + ¼ (π²/6 − 1) here), so every bet is capped and the bound solves
        // n ln(1 + c m / (1 − m)) = ln(1/α): METHODS.md §7 (computed), 0.005965 at n = 1000,
        // α = 0.05.
        let x = vec![0.0; 4000];
        let seq = upper_values(&x[..1000], 0.05);
        let y = ((1.0f64 / 0.05).ln() / 1000.0).exp_m1();
        let capped = y / (TRUNCATION + y);
        assert!((capped - 0.005965).abs() < 5e-7, "{capped}");
        assert!(
            seq >= capped && seq <= capped * (1.0 + 1e-12),
            "{seq} vs {capped}"
        );
        let p = path(&x, 0.05, End::Upper, false, &[10, 100, 1000, 4000]);
        assert!(p.windows(2).all(|w| w[1] < w[0]), "{p:?}");
        assert!(
            p[2] >= seq && p[2] <= seq * (1.0 + 1e-8),
            "{} vs {seq}",
            p[2]
        );
        assert_eq!(lower_values(&x, 0.05), 0.0);
    }

    #[test]
    fn wider_than_the_fixed_n_bound_on_spread_data() {
        // Validity at every n costs width where the bets are not capped: on values spread
        // over [0, 1] the sequence must be wider than the fixed-n bound tuned to this n.
        let x: Vec<f64> = (0..1000)
            .map(|i| ((i * 7919) % 1000) as f64 / 1000.0)
            .collect();
        let (fl, fu) = betting::interval_values(&x, 0.05);
        let (sl, su) = interval_values(&x, 0.05);
        assert!(su > fu && sl < fl, "[{sl}, {su}] vs [{fl}, {fu}]");
        assert!(sl < 0.4995 && su > 0.4995);
    }

    #[test]
    fn one_observation_all_ones_and_tiny_delta() {
        // n = 1 at α = 0.05: λ̇_1 = sqrt(8 ln 20 / ln 2) ≈ 5.88, so K⁻_1(m) ≤ 1 + 5.88 m < 20 for
        // every m and nothing is rejected.
        assert_eq!(upper_values(&[0.0], 0.05), 1.0);
        assert_eq!(lower_values(&[1.0], 0.05), 0.0);
        // All ones mirror all zeros: the bets depend on the values only through σ̂², which is
        // symmetric, so the lower bound is 1 minus the all-zero upper bound.
        let ones = vec![1.0; 500];
        let zeros = vec![0.0; 500];
        assert_eq!(upper_values(&ones, 0.05), 1.0);
        let (l, u) = (lower_values(&ones, 0.05), upper_values(&zeros, 0.05));
        assert!((l - (1.0 - u)).abs() < 1e-12, "{l} vs {}", 1.0 - u);
        // δ = 1e-12: finite, wider than at 1e-6, still informative at n = 2000.
        let x: Vec<f64> = (0..2000).map(|i| ((i * 31) % 17) as f64 / 32.0).collect();
        let (a, b) = (upper_values(&x, 1e-12), upper_values(&x, 1e-6));
        assert!(a.is_finite() && a > b && a < 1.0, "{a} {b}");
        let (la, lb) = interval_values(&x, 1e-12);
        assert!(la > 0.0 && la < lb, "{la} {lb}");
    }

    #[test]
    fn invalid_input_is_vacuous() {
        assert_eq!(upper_values(&[], 0.05), 1.0);
        assert_eq!(upper_values(&[0.2, f64::NAN], 0.05), 1.0);
        assert_eq!(lower_values(&[0.2, -0.1], 0.05), 0.0);
        assert_eq!(upper_values(&[0.2; 10], 1.0), 1.0);
        assert_eq!(interval_values(&[0.2; 10], 0.0), (0.0, 1.0));
        assert_eq!(
            path(&[0.2, 2.0], 0.05, End::Upper, false, &[1, 2]),
            vec![1.0, 1.0]
        );
        assert_eq!(
            path(&[0.2; 5], f64::NAN, End::Lower, true, &[1, 5]),
            vec![0.0, 0.0]
        );
    }
}
