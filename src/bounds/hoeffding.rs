//! Hoeffding bounds (Hoeffding 1963, Thm 2): mean ± sqrt(ln(1/delta) / (2 n)).
//!
//! Valid for independent [0, 1] observations, and for martingale differences with
//! range 1 (Azuma–Hoeffding), clamped to [0, 1] and rounded outwards by one ulp.

fn radius(n: u64, delta: f64) -> Option<f64> {
    if n == 0 || !(delta > 0.0 && delta < 1.0) {
        return None;
    }
    Some((-delta.ln() / (2.0 * n as f64)).sqrt())
}

/// Upper bound `events/trials + sqrt(ln(1/delta) / (2 trials))`, at most 1.
/// Returns 1 on invalid input (`trials == 0`, `events > trials`, `delta` outside (0, 1)).
pub fn upper(events: u64, trials: u64, delta: f64) -> f64 {
    if events > trials || trials == 0 {
        return 1.0;
    }
    upper_mean(events as f64 / trials as f64, trials, delta)
}

/// Lower bound `events/trials - sqrt(ln(1/delta) / (2 trials))`, at least 0.
/// Returns 0 on invalid input.
pub fn lower(events: u64, trials: u64, delta: f64) -> f64 {
    if events > trials || trials == 0 {
        return 0.0;
    }
    lower_mean(events as f64 / trials as f64, trials, delta)
}

/// Upper bound on the mean of `n` independent [0, 1] observations with sample mean
/// `mean`. Returns 1 on invalid input (`n == 0`, `mean` outside [0, 1] or NaN, bad `delta`).
pub fn upper_mean(mean: f64, n: u64, delta: f64) -> f64 {
    if !(0.0..=1.0).contains(&mean) {
        return 1.0;
    }
    match radius(n, delta) {
        // 2 ulps of (mean + r) cover the rounding of r (log, division, sqrt) and of mean.
        Some(r) => (mean + r + 2.0 * f64::EPSILON * (mean + r))
            .next_up()
            .min(1.0),
        None => 1.0,
    }
}

/// Lower bound on the mean of `n` independent [0, 1] observations with sample mean
/// `mean`. Returns 0 on invalid input.
pub fn lower_mean(mean: f64, n: u64, delta: f64) -> f64 {
    if !(0.0..=1.0).contains(&mean) {
        return 0.0;
    }
    match radius(n, delta) {
        Some(r) => (mean - r - 2.0 * f64::EPSILON * (mean + r))
            .next_down()
            .max(0.0),
        None => 0.0,
    }
}

/// [`upper_mean`] on a bounded sample rescaled to [0, 1]: `P(mean <= upper) >= 1 - delta` for
/// independent values (its margin of two ulps covers the rounding of the mean). Returns 1 for
/// an inconsistent summary.
pub fn upper_sample(sample: &crate::bounds::Sample, delta: f64) -> f64 {
    let s = &sample.summary;
    if !s.is_consistent() {
        return 1.0;
    }
    upper_mean(s.mean(), s.n, delta)
}

/// [`lower_mean`] on a bounded sample rescaled to [0, 1]. Returns 0 for an inconsistent
/// summary.
pub fn lower_sample(sample: &crate::bounds::Sample, delta: f64) -> f64 {
    let s = &sample.summary;
    if !s.is_consistent() {
        return 0.0;
    }
    lower_mean(s.mean(), s.n, delta)
}
