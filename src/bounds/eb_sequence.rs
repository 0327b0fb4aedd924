//! Predictable plug-in empirical-Bernstein confidence sequence (Waudby-Smith & Ramdas 2024) for
//! the mean of values in [0, 1] whose conditional mean given the past is constant
//! (METHODS.md §9a): a closed form, one pass over the data, valid at every number of trials.
//!
//! With the plug-in estimates of the betting methods (μ̂_0 = ½, σ̂²_0 = ¼),
//!
//! ```text
//! λ_i = min(sqrt(2 L / (σ̂²_{i−1} i ln(1 + i))), c),   c = ½,   L = ln(1/α),
//! ψ(λ) = −ln(1 − λ) − λ,
//! U_t = (Σ_{i≤t} λ_i X_i + L + Σ_{i≤t} (X_i − μ̂_{i−1})² ψ(λ_i)) / Σ_{i≤t} λ_i.
//! ```
//!
//! Validity [derived in METHODS.md §9a]: for ξ ≥ −1 and λ in [0, 1),
//! exp(λξ − ψ(λ)ξ²) ≤ 1 + λξ (Fan, Grama & Liu 2012); with ξ = μ̂_{i−1} − X_i this makes
//! exp(λ_i(μ − X_i) − ψ(λ_i)(X_i − μ̂_{i−1})²) a factor of conditional mean at most
//! e^{−y}(1 + y) ≤ 1, y = λ_i(μ̂_{i−1} − μ). The product over i is a non-negative
//! supermartingale, and by Ville's inequality it stays below 1/α at every t with probability at
//! least 1 − α; solving for μ gives U_t. The lower bound is the same statement for 1 − X, whose
//! bets are the same (σ̂² is symmetric): L_t = (Σ λ_i X_i − L − Σ (X_i − μ̂_{i−1})² ψ(λ_i)) / Σ λ_i.
//! Each U_t is valid at every t at once, so their running minimum is too.
//!
//! The truncation c = ½ matches the betting methods. The tuning L is ln(1/α), the one-sided
//! choice; any predictable λ is valid, it only changes the width. Not built two-sided: a
//! two-sided interval uses α/2 on each side.
//!
//! The centre Σ λ_i X_i / Σ λ_i is a weighted mean, not the sample mean.

use super::checkpoints::Checkpoints;
use super::{End, Sample};
use crate::stats::ln1pmx;
use crate::stats::sum::NeumaierSum;

/// The truncation c of the bets.
pub const TRUNCATION: f64 = 0.5;

/// Outward margin, relative to the numerator: its terms are products of at most four rounded
/// operations (ψ itself accurate to a few ulps), summed with compensation (two more ulps), over
/// a denominator off by at most three ulps; 32 units of 2^-53 cover the sum of these (about 21).
const MARGIN: f64 = 16.0 * f64::EPSILON;

/// Runs the sequence over `x`, calling `at(t, upper, lower)` after every t with the running
/// minimum of the upper bounds and the running maximum of the lower bounds so far (clamped to
/// [0, 1], rounded outwards). Returns false, without calling `at`, on invalid input.
fn run(x: &[f64], delta: f64, mut at: impl FnMut(usize, f64, f64)) -> bool {
    if x.is_empty() || !(delta > 0.0 && delta < 1.0) || x.iter().any(|v| !(0.0..=1.0).contains(v)) {
        return false;
    }
    let l = -delta.ln();
    let scale = 2.0 * l;
    // Running sums behind μ̂ and σ̂² (plain sequential sums, as in the betting bets: they need
    // only be predictable), and the compensated sums of the bound.
    let (mut sum, mut sq) = (0.5f64, 0.25f64);
    let mut weighted = NeumaierSum::new();
    let mut penalty = NeumaierSum::new();
    let mut weights = NeumaierSum::new();
    let (mut best_upper, mut best_lower) = (1.0f64, 0.0f64);
    for (i, &xi) in x.iter().enumerate() {
        let t = (i + 1) as f64;
        // sq = t σ̂²_{t−1}, sum / t = μ̂_{t−1}.
        let rate = (scale / (sq * t.ln_1p())).sqrt();
        let lambda = rate.min(TRUNCATION);
        let d = xi - sum / t;
        let psi = -ln1pmx(-lambda);
        weighted.add(lambda * xi);
        penalty.add(d * d * psi);
        weights.add(lambda);
        sum += xi;
        let e = xi - sum / (t + 1.0);
        sq += e * e;
        let (a, b, w) = (weighted.value(), penalty.value(), weights.value());
        let numerator = a + l + b;
        let upper = numerator / w * (1.0 + MARGIN);
        let lower = (a - l - b) / w - MARGIN * (numerator / w);
        best_upper = best_upper.min(upper.next_up());
        best_lower = best_lower.max(lower.next_down());
        at(i + 1, best_upper, best_lower);
    }
    true
}

/// Upper bound on the mean after the ordered observations `x` in [0, 1], valid at every number
/// of trials at once: `P(mean <= upper after t trials, for every t) >= 1 - delta` when each value
/// has conditional mean μ given the values before it; the running minimum over every t ≤
/// `x.len()`. Returns 1 (vacuous) for empty input, a value outside [0, 1] or NaN, or `delta`
/// outside (0, 1).
pub fn upper_values(x: &[f64], delta: f64) -> f64 {
    let mut out = 1.0;
    run(x, delta, |_, u, _| out = u);
    out
}

/// Lower bound on the mean, the mirror of [`upper_values`]:
/// `P(mean >= lower after t trials, for every t) >= 1 - delta`. Returns 0 (vacuous) on invalid
/// input.
pub fn lower_values(x: &[f64], delta: f64) -> f64 {
    let mut out = 0.0;
    run(x, delta, |_, _, l| out = l);
    out
}

/// [`upper_values`] on the sample's observations; 1 (vacuous) when the sample has none, or when
/// their number differs from the summary's n.
pub fn upper(sample: &Sample, delta: f64) -> f64 {
    super::betting::observations(sample, delta).map_or(1.0, |x| upper_values(x, delta))
}

/// [`lower_values`] on the sample's observations; 0 (vacuous) when the sample has none.
pub fn lower(sample: &Sample, delta: f64) -> f64 {
    super::betting::observations(sample, delta).map_or(0.0, |x| lower_values(x, delta))
}

/// The bound after each of the first `t` observations of `x`, for every `t` in `checkpoints`
/// (a [`super::PathFn`]): the running minimum (upper) or maximum (lower) over every s ≤ t of the
/// one-sided bound at `delta`, all holding together with probability at least 1 − delta. The
/// method is not built two-sided, so `two_sided` is ignored: a two-sided claim passes delta/2.
/// Checkpoints outside 1..=`x.len()`, and every checkpoint on invalid input, get the vacuous
/// value.
pub fn path(x: &[f64], delta: f64, end: End, _two_sided: bool, checkpoints: &[u64]) -> Vec<f64> {
    let vacuous = match end {
        End::Upper => 1.0,
        End::Lower => 0.0,
    };
    let plan = Checkpoints::new(checkpoints, x.len());
    let mut values = Vec::with_capacity(plan.lengths.len());
    let mut next = plan.lengths.iter().peekable();
    let ran = run(x, delta, |t, u, l| {
        if next.next_if(|&&m| m == t).is_some() {
            values.push(match end {
                End::Upper => u,
                End::Lower => l,
            });
        }
    });
    if !ran {
        return vec![vacuous; checkpoints.len()];
    }
    plan.scatter(&values, vacuous)
}

#[cfg(test)]
mod unit {
    use super::*;

    #[test]
    fn one_observation_is_vacuous() {
        // n = 1: λ_1 = ½ and U_1 = x + 2 ln(1/δ) + ..., above 1 for any δ < e^{-1/2}.
        assert_eq!(upper_values(&[0.0], 0.3), 1.0);
        assert_eq!(lower_values(&[1.0], 0.3), 0.0);
    }

    #[test]
    fn running_minimum_never_widens() {
        let x: Vec<f64> = (0..3000).map(|i| ((i * 37) % 101) as f64 / 400.0).collect();
        let ts: Vec<u64> = (1..=30).map(|i| i * 100).collect();
        let up = path(&x, 0.01, End::Upper, false, &ts);
        let lo = path(&x, 0.01, End::Lower, false, &ts);
        assert!(up.windows(2).all(|w| w[1] <= w[0]), "{up:?}");
        assert!(lo.windows(2).all(|w| w[1] >= w[0]), "{lo:?}");
        assert!(up[29] < 1.0 && lo[29] > 0.0 && lo[29] < up[29]);
        assert_eq!(up[29], upper_values(&x, 0.01));
        assert_eq!(lo[29], lower_values(&x, 0.01));
    }

    #[test]
    fn invalid_input_is_vacuous() {
        assert_eq!(upper_values(&[], 0.05), 1.0);
        assert_eq!(upper_values(&[0.2, f64::NAN], 0.05), 1.0);
        assert_eq!(lower_values(&[0.2, 1.5], 0.05), 0.0);
        assert_eq!(upper_values(&[0.2; 10], 0.0), 1.0);
        assert_eq!(lower_values(&[0.2; 10], 1.0), 0.0);
        assert_eq!(
            path(&[0.2; 3], 0.05, End::Lower, false, &[0, 2, 9]),
            vec![0.0, 0.0, 0.0]
        );
    }
}
