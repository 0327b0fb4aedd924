//! A seeded simulation driver: the sample size at which any bound on a bounded mean passes with a
//! wanted probability under an assumed law.
//!
//! **Law.** Observations are drawn on the unit scale from the [`AssumedLaw`]: the Beta law with
//! the assumed mean and standard deviation after rescaling from [a, b] (METHODS §0.2), or its
//! limits, the point mass (σ = 0) and the two-point law on the ends of the range (σ² =
//! (μ − a)(b − μ), the largest any law on [a, b] with mean μ can have). A larger σ is impossible
//! for every law on the range, and [`AssumedLaw::new`] refuses it.
//!
//! **Draws.** Replicate r uses the ChaCha8 generator seeded with `seed` on stream r, and its
//! dataset of size n is the first n values of that stream. The datasets for different n are
//! therefore nested (common random numbers), which makes the simulated pass fraction nearly
//! monotone in n and the search stable; the same seed always gives the same answer.
//! Gamma variates follow Marsaglia & Tsang (2000), "A simple method for generating gamma
//! variables", ACM TOMS 26(3):363–372, in log space (shapes below 1 by the usual
//! `G(α) = G(α + 1)·U^(1/α)`), and Beta = X/(X + Y) for independent gamma variates X, Y.
//!
//! **Monte Carlo error.** With R replications the simulated pass fraction at a true pass
//! probability π has standard error sqrt(π(1 − π)/R): with the default R = 1000, about 0.016 at
//! π = 0.5 and 0.0095 at π = 0.9. The sample size found is where the simulated fraction crosses
//! the target, so it is uncertain by the range of n over which the true pass probability moves by
//! about two standard errors; [`Simulated::standard_error`] reports the error at the target.

use rand_chacha::ChaCha8Rng;
use rand_chacha::rand_core::{RngCore, SeedableRng};

use super::bounded::{AssumedLaw, LawKind};
use super::{PlanError, Unreachable, check_delta, check_pass_probability};

/// A bound on the mean of observations on [0, 1]: `bound(observations, delta)`.
pub type MeanBound = dyn Fn(&[f64], f64) -> f64 + Sync;

/// Default number of simulated datasets per sample size.
pub const SIM_REPLICATIONS: u32 = 1000;

/// Default largest sample size a simulation tries: with the default replications that is 10^8
/// draws (and bound evaluations over them) for one sample size, seconds to minutes of work.
pub const SIM_MAX_TRIALS: u64 = 100_000;

/// Hard limit on [`SimConfig::max_trials`] and on the size of one simulated dataset: 10^8
/// observations (800 MB of buffer).
pub const SIM_HARD_CAP: u64 = 100_000_000;

/// How much a simulation may do.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct SimConfig {
    /// Simulated datasets per sample size (≥ 1).
    pub replications: u32,
    /// Largest sample size tried (at most [`SIM_HARD_CAP`]); beyond it the search stops with
    /// [`PlanError::TooManyTrials`].
    pub max_trials: u64,
}

impl Default for SimConfig {
    fn default() -> Self {
        SimConfig {
            replications: SIM_REPLICATIONS,
            max_trials: SIM_MAX_TRIALS,
        }
    }
}

/// The outcome of a simulated sample-size search.
#[derive(Debug, Clone, PartialEq)]
pub struct Simulated {
    /// Sample size n at which the simulated pass fraction first reached the target in the search:
    /// it does at n and does not at n − 1 (or n = 1).
    pub trials: u64,
    /// Simulated pass fraction at `trials`.
    pub pass_fraction: f64,
    /// Simulated pass fraction at `trials − 1` (`None` when `trials` is 1).
    pub pass_fraction_below: Option<f64>,
    /// Monte Carlo standard error of a fraction at the target, sqrt(t(1 − t)/R).
    pub standard_error: f64,
    /// Replications R per sample size.
    pub replications: u32,
    /// The seed.
    pub seed: u64,
    /// Every `[n, pass fraction]` evaluated, increasing in n.
    pub evaluated: Vec<[f64; 2]>,
}

/// [`simulate_n_with`] with the default [`SimConfig`] (1000 replications, n ≤ 100 000).
pub fn simulate_n(
    bound: &MeanBound,
    law: &AssumedLaw,
    target_pass_probability: f64,
    delta: f64,
    limit: f64,
    seed: u64,
) -> Result<Simulated, PlanError> {
    simulate_n_with(
        bound,
        law,
        target_pass_probability,
        delta,
        limit,
        seed,
        &SimConfig::default(),
    )
}

/// The sample size at which the fraction of simulated datasets whose bound meets the limit
/// reaches `target_pass_probability`.
///
/// `bound(observations, delta)` receives observations already rescaled to [0, 1] and returns an
/// upper bound on their mean on the same scale; it passes when the bound is at most the limit
/// rescaled from data units (a NaN bound never passes). The search doubles n from 1 until the
/// fraction reaches the target, then bisects between the last n below and the first n at or
/// above it, so the answer reaches the target and n − 1 does not (module docs for the law, the
/// seeding and the Monte Carlo error).
/// Errors: target outside (0, 1), invalid δ, limit not strictly inside the range,
/// [`Unreachable::AssumedNotBelowLimit`] for an assumed mean at or above the limit, zero
/// replications, [`PlanError::TooManyTrials`] when `config.max_trials` does not reach the target.
pub fn simulate_n_with(
    bound: &MeanBound,
    law: &AssumedLaw,
    target_pass_probability: f64,
    delta: f64,
    limit: f64,
    seed: u64,
    config: &SimConfig,
) -> Result<Simulated, PlanError> {
    let t = target_pass_probability;
    check_pass_probability(t)?;
    check_delta(delta)?;
    let l = law.unit_limit(limit)?;
    if law.mean >= limit {
        return Err(PlanError::Unreachable(Unreachable::AssumedNotBelowLimit {
            assumed: law.mean,
            limit,
            delta,
        }));
    }
    let r = config.replications;
    if r == 0 {
        return Err(PlanError::Replications);
    }
    let cap = config.max_trials.clamp(1, SIM_HARD_CAP);
    let mut seen: Vec<(u64, f64)> = Vec::new();
    let frac = |n: u64, seen: &mut Vec<(u64, f64)>| {
        let f = fraction(bound, law, n, delta, l, seed, r);
        seen.push((n, f));
        f
    };
    // Doubling: lo is the largest n seen below the target (0: none), hi the first at or above.
    let mut lo = 0u64;
    let mut hi = 1u64;
    loop {
        if frac(hi, &mut seen) >= t {
            break;
        }
        if hi >= cap {
            return Err(PlanError::TooManyTrials { cap });
        }
        lo = hi;
        hi = hi.saturating_mul(2).min(cap);
    }
    while hi - lo > 1 {
        let mid = lo + (hi - lo) / 2;
        if frac(mid, &mut seen) >= t {
            hi = mid;
        } else {
            lo = mid;
        }
    }
    seen.sort_by_key(|&(n, _)| n);
    seen.dedup_by_key(|&mut (n, _)| n);
    let at = |n: u64| seen.iter().find(|&&(m, _)| m == n).map(|&(_, f)| f);
    Ok(Simulated {
        trials: hi,
        pass_fraction: at(hi).unwrap_or(t),
        pass_fraction_below: if lo == 0 { None } else { at(lo) },
        standard_error: (t * (1.0 - t) / f64::from(r)).sqrt(),
        replications: r,
        seed,
        evaluated: seen.iter().map(|&(n, f)| [n as f64, f]).collect(),
    })
}

/// The fraction of `replications` simulated datasets of size `trials` whose bound is at most
/// `limit` (data units), with the draws of [`simulate_n_with`]. Same errors as there, except that
/// an assumed mean above the limit is allowed (the fraction is then small, not an error).
#[allow(clippy::too_many_arguments)]
pub fn pass_fraction(
    bound: &MeanBound,
    law: &AssumedLaw,
    trials: u64,
    delta: f64,
    limit: f64,
    seed: u64,
    replications: u32,
) -> Result<f64, PlanError> {
    check_delta(delta)?;
    let l = law.unit_limit(limit)?;
    if replications == 0 {
        return Err(PlanError::Replications);
    }
    if trials == 0 {
        return Err(PlanError::NoTrials);
    }
    if trials > SIM_HARD_CAP {
        return Err(PlanError::TooManyTrials { cap: SIM_HARD_CAP });
    }
    Ok(fraction(bound, law, trials, delta, l, seed, replications))
}

/// The dataset of replicate `replicate` with `trials` observations on the unit scale, as the
/// simulation draws it (for reproducing one simulated case); at most [`SIM_HARD_CAP`] values.
pub fn draw(law: &AssumedLaw, trials: usize, seed: u64, replicate: u64) -> Vec<f64> {
    let trials = trials.min(usize::try_from(SIM_HARD_CAP).unwrap_or(usize::MAX));
    let mut out = Vec::with_capacity(trials);
    fill(law, seed, replicate, trials, &mut out);
    out
}

#[allow(clippy::too_many_arguments)]
fn fraction(
    bound: &MeanBound,
    law: &AssumedLaw,
    n: u64,
    delta: f64,
    unit_limit: f64,
    seed: u64,
    replications: u32,
) -> f64 {
    use rayon::prelude::*;
    let len = usize::try_from(n).unwrap_or(usize::MAX);
    // Each replicate draws from its own stream, so the count does not depend on how the
    // replicates are shared among threads.
    let passed: u32 = (0..replications)
        .into_par_iter()
        .map_init(Vec::new, |b, r| {
            fill(law, seed, u64::from(r), len, b);
            u32::from(bound(b, delta) <= unit_limit)
        })
        .sum();
    f64::from(passed) / f64::from(replications)
}

fn fill(law: &AssumedLaw, seed: u64, replicate: u64, n: usize, buf: &mut Vec<f64>) {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    rng.set_stream(replicate);
    buf.clear();
    let m = law.unit_mean;
    match law.kind {
        LawKind::Point => buf.resize(n, m),
        LawKind::TwoPoint => buf.extend((0..n).map(|_| f64::from(u8::from(uniform(&mut rng) < m)))),
        LawKind::Beta { alpha, beta } => {
            buf.extend((0..n).map(|_| beta_variate(&mut rng, alpha, beta)))
        }
    }
}

/// Uniform on the open interval (0, 1): 53 random bits, offset by half a step.
fn uniform(rng: &mut ChaCha8Rng) -> f64 {
    ((rng.next_u64() >> 11) as f64 + 0.5) * (1.0 / (1u64 << 53) as f64)
}

/// Standard normal by Marsaglia's polar method (one of the pair is used, so every draw consumes
/// a whole number of attempts and the stream stays a simple function of the seed).
fn normal(rng: &mut ChaCha8Rng) -> f64 {
    loop {
        let u = 2.0 * uniform(rng) - 1.0;
        let v = 2.0 * uniform(rng) - 1.0;
        let s = u * u + v * v;
        if s > 0.0 && s < 1.0 {
            return u * (-2.0 * s.ln() / s).sqrt();
        }
    }
}

/// ln of a Gamma(shape, 1) variate (Marsaglia & Tsang 2000), shape > 0.
fn ln_gamma_variate(rng: &mut ChaCha8Rng, shape: f64) -> f64 {
    if shape < 1.0 {
        let boosted = ln_gamma_variate(rng, shape + 1.0);
        return boosted + uniform(rng).ln() / shape;
    }
    let d = shape - 1.0 / 3.0;
    let c = 1.0 / (9.0 * d).sqrt();
    loop {
        let x = normal(rng);
        let v = 1.0 + c * x;
        if v <= 0.0 {
            continue;
        }
        let v = v * v * v;
        let u = uniform(rng);
        let x2 = x * x;
        if u < 1.0 - 0.0331 * x2 * x2 || u.ln() < 0.5 * x2 + d * (1.0 - v + v.ln()) {
            return d.ln() + v.ln();
        }
    }
}

/// A Beta(a, b) variate as X/(X + Y) from log gamma variates, so that tiny shapes (whose gamma
/// variates underflow) still give values in [0, 1].
fn beta_variate(rng: &mut ChaCha8Rng, a: f64, b: f64) -> f64 {
    let lx = ln_gamma_variate(rng, a);
    let ly = ln_gamma_variate(rng, b);
    let t = ly - lx;
    if t.is_nan() {
        // Both underflowed to -inf (shapes near the smallest floats): the law is all but
        // two-point, and the larger log decides the end.
        return if lx >= ly { 1.0 } else { 0.0 };
    }
    if t > 0.0 {
        let e = (-t).exp();
        e / (1.0 + e)
    } else {
        1.0 / (1.0 + t.exp())
    }
}

#[cfg(test)]
mod unit {
    use super::*;

    // Moments of Beta(a, b): mean a/(a+b), variance ab/((a+b)^2 (a+b+1)) (textbook algebra).
    // 5 standard errors of the sample mean and variance with 200 000 draws.
    #[test]
    fn beta_draws_have_the_beta_moments() {
        for &(a, b) in &[(2.0f64, 5.0f64), (0.3, 0.7), (40.0, 3.0), (0.05, 2.0)] {
            let mut rng = ChaCha8Rng::seed_from_u64(7);
            let n = 200_000;
            let xs: Vec<f64> = (0..n).map(|_| beta_variate(&mut rng, a, b)).collect();
            let mean = xs.iter().sum::<f64>() / n as f64;
            let var = xs.iter().map(|x| (x - mean) * (x - mean)).sum::<f64>() / (n - 1) as f64;
            let s = a + b;
            let (m, v) = (a / s, a * b / (s * s * (s + 1.0)));
            assert!(xs.iter().all(|x| (0.0..=1.0).contains(x)));
            assert!(
                (mean - m).abs() < 5.0 * (v / n as f64).sqrt(),
                "{a} {b} {mean} {m}"
            );
            // Var of the sample variance <= E[(X - m)^4] / n <= v / n on [0, 1].
            assert!(
                (var - v).abs() < 5.0 * (v / n as f64).sqrt(),
                "{a} {b} {var} {v}"
            );
        }
    }
}
