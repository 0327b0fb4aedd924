//! Sample sizes for a bounded outcome (values in a declared range [a, b]) from an assumed mean
//! μ and standard deviation σ, for the claim `mean ≤ limit`.
//!
//! Each method's bound is evaluated as if the data had exactly the assumed summary (sample mean
//! μ, sample variance σ²), and the plan is the smallest n at which that plug-in bound meets the
//! limit. This is the usual planning heuristic, not a guarantee: real data scatter around μ, so
//! at the plug-in n the chance of passing is roughly one half (exactly one half for Hoeffding
//! when the sample mean has a symmetric law). [`super::simulate`] finds the n for a wanted
//! chance of passing.
//!
//! All work is done on the unit scale x = (y − a)/(b − a) (METHODS §0.2); write
//! m = (μ − a)/(b − a), s² = σ²/(b − a)², ℓ = (L − a)/(b − a), Δ = ℓ − m, λ = ln(1/δ).

use super::{MAX_TRIALS, PlanError, Unreachable, check_delta, first_true, first_true_from};
use crate::bounds::{chernoff_kl, hoeffding};
use crate::stats::kl::kl;

/// The shape of the law assumed for simulation (unit scale).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum LawKind {
    /// σ = 0: every value equals the mean.
    Point,
    /// σ at its largest possible value sqrt(m(1 − m)): only the two ends of the range occur,
    /// the upper one with probability m. This is the limit of Beta laws as both shapes go to 0.
    TwoPoint,
    /// Beta(α, β) with α = m·ν, β = (1 − m)·ν, ν = m(1 − m)/s² − 1.
    Beta {
        /// First shape parameter α > 0.
        alpha: f64,
        /// Second shape parameter β > 0.
        beta: f64,
    },
}

/// The assumed law of one observation: declared range, assumed mean and standard deviation in
/// data units, and the law on [0, 1] with that mean and standard deviation after rescaling.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AssumedLaw {
    /// Lower end a of the declared range.
    pub low: f64,
    /// Upper end b of the declared range.
    pub high: f64,
    /// Assumed mean μ (data units).
    pub mean: f64,
    /// Assumed standard deviation σ (data units).
    pub sd: f64,
    /// m = (μ − a)/(b − a).
    pub unit_mean: f64,
    /// s² = σ²/(b − a)².
    pub unit_variance: f64,
    /// The law used to draw observations.
    pub kind: LawKind,
}

/// Relative slack with which σ may exceed its largest possible value and still be read as that
/// value (the two-point law): rounding of a σ computed by the user from m(1 − m).
const SD_SLACK: f64 = 1e-9;

impl AssumedLaw {
    /// The law with mean `mean` and standard deviation `sd` (data units) on `[low, high]`.
    ///
    /// Any law on [a, b] with mean μ has σ² ≤ (μ − a)(b − μ) (Bhatia–Davis), with equality only
    /// for the two-point law on {a, b}. So σ above that is impossible
    /// ([`PlanError::AssumedSd`]); σ at it gives [`LawKind::TwoPoint`]; σ = 0 gives
    /// [`LawKind::Point`]; anything between is the unique Beta law with that mean and variance.
    /// A mean at an end of the range allows only σ = 0.
    pub fn new(low: f64, high: f64, mean: f64, sd: f64) -> Result<AssumedLaw, PlanError> {
        if !(low.is_finite() && high.is_finite() && low < high && (high - low).is_finite()) {
            return Err(PlanError::Range { low, high });
        }
        if !(low..=high).contains(&mean) {
            return Err(PlanError::AssumedMean { mean, low, high });
        }
        let width = high - low;
        let m = ((mean - low) / width).clamp(0.0, 1.0);
        let max_var = m * (1.0 - m);
        let max_sd = max_var.sqrt() * width;
        if !(sd.is_finite() && sd >= 0.0) || sd > max_sd * (1.0 + SD_SLACK) {
            return Err(PlanError::AssumedSd { sd, max: max_sd });
        }
        let s = sd / width;
        let var = s * s;
        let kind = if sd == 0.0 {
            LawKind::Point
        } else if var >= max_var * (1.0 - SD_SLACK) {
            LawKind::TwoPoint
        } else {
            let nu = max_var / var - 1.0;
            LawKind::Beta {
                alpha: m * nu,
                beta: (1.0 - m) * nu,
            }
        };
        Ok(AssumedLaw {
            low,
            high,
            mean,
            sd,
            unit_mean: m,
            unit_variance: var.min(max_var),
            kind,
        })
    }

    /// A limit in data units on the unit scale, checked to lie strictly inside the range.
    pub(crate) fn unit_limit(&self, limit: f64) -> Result<f64, PlanError> {
        if !(limit > self.low && limit < self.high) {
            return Err(PlanError::Limit {
                limit,
                low: self.low,
                high: self.high,
            });
        }
        Ok(((limit - self.low) / (self.high - self.low)).clamp(0.0, 1.0))
    }
}

/// The plug-in sample size for one method.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BoundedSize {
    /// Method id (`hoeffding`, `chernoff-kl`, `bernstein-empirical`, `bernstein-known-sd`).
    pub method: &'static str,
    /// Smallest n at which the plug-in bound is at most the limit.
    pub trials: u64,
    /// The unrounded solution for n of the plug-in equation, where there is a closed form.
    pub closed_form: Option<f64>,
}

/// Plug-in sample sizes for the claim `mean ≤ limit` at confidence 1 − δ, one per method:
///
/// * `hoeffding`: m + sqrt(λ/(2n)) ≤ ℓ, i.e. n = λ/(2Δ²) = (b − a)² ln(1/δ) / (2(L − μ)²), decided
///   with [`crate::bounds::hoeffding::upper_mean`];
/// * `chernoff-kl`: kl⁻¹₊(m, λ/n) ≤ ℓ, i.e. n = λ / kl(m ‖ ℓ), decided with
///   [`crate::bounds::chernoff_kl::upper_mean`];
/// * `bernstein-empirical` (Maurer & Pontil 2009, Thm 4; METHODS §4b) with the sample variance
///   set to s²: m + sqrt(2s² ln(2/δ)/n) + 7 ln(2/δ)/(3(n − 1)) ≤ ℓ, n ≥ 2 (no closed form
///   because of n − 1: searched);
/// * `bernstein-known-sd` with known variance s² (METHODS §4a, Bennett form), as a reference for what
///   knowing the variance would save: m + sqrt(2s²λ/n) + λ/(3n) ≤ ℓ, a quadratic in 1/√n.
///
/// Each n is the smallest at which the bound as computed meets the limit (verified at n and
/// n − 1), so a tie passes, as in the verdict rule.
/// Errors: invalid δ, limit not strictly inside the range,
/// [`Unreachable::AssumedNotBelowLimit`] when μ ≥ L, [`PlanError::TooManyTrials`] beyond
/// [`MAX_TRIALS`].
pub fn bounded_sizes(
    law: &AssumedLaw,
    limit: f64,
    delta: f64,
) -> Result<Vec<BoundedSize>, PlanError> {
    check_delta(delta)?;
    let l = law.unit_limit(limit)?;
    let m = law.unit_mean;
    if m >= l || law.mean >= limit {
        return Err(PlanError::Unreachable(Unreachable::AssumedNotBelowLimit {
            assumed: law.mean,
            limit,
            delta,
        }));
    }
    let v = law.unit_variance;
    let lam = -delta.ln();
    let lam2 = std::f64::consts::LN_2 + lam;
    let gap = l - m;
    let search = |start: f64, bound: &dyn Fn(u64) -> f64| {
        let pred = |n: u64| bound(n) <= l;
        // `as` saturates; NaN (impossible here) would start at 1.
        let start = (start as u64).clamp(1, MAX_TRIALS);
        // The closed form is only a starting point: the bound itself decides, both ways.
        if pred(start) {
            Ok(first_true(0, start, pred))
        } else {
            first_true_from(start, MAX_TRIALS, pred)
                .ok_or(PlanError::TooManyTrials { cap: MAX_TRIALS })
        }
    };

    let hoeffding_x = lam / (2.0 * gap * gap);
    let kl_x = lam / kl(m, l);
    // Bennett form: with y = 1/sqrt(n), (λ/3) y² + sqrt(2 s² λ) y − Δ = 0.
    let (qa, qb) = (lam / 3.0, (2.0 * v * lam).sqrt());
    let y = 2.0 * gap / (qb + (qb * qb + 4.0 * qa * gap).sqrt());
    let bernstein_x = 1.0 / (y * y);

    let eb = |n: u64| {
        if n < 2 {
            return 1.0;
        }
        let nf = n as f64;
        m + (2.0 * v * lam2 / nf).sqrt() + 7.0 * lam2 / (3.0 * (nf - 1.0))
    };
    let bern = |n: u64| {
        let nf = n as f64;
        m + (2.0 * v * lam / nf).sqrt() + lam / (3.0 * nf)
    };
    // The empirical Bernstein n is at least the known-variance one (its terms are larger).
    Ok(vec![
        BoundedSize {
            method: "hoeffding",
            trials: search(hoeffding_x.floor(), &|n| hoeffding::upper_mean(m, n, delta))?,
            closed_form: Some(hoeffding_x),
        },
        BoundedSize {
            method: "chernoff-kl",
            trials: search(kl_x.floor(), &|n| chernoff_kl::upper_mean(m, n, delta))?,
            closed_form: Some(kl_x),
        },
        BoundedSize {
            method: "bernstein-empirical",
            trials: search(bernstein_x.floor().max(2.0), &eb)?,
            closed_form: None,
        },
        BoundedSize {
            method: "bernstein-known-sd",
            trials: search(bernstein_x.floor(), &bern)?,
            closed_form: Some(bernstein_x),
        },
    ])
}
