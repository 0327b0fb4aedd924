//! Hoeffding bounds (Hoeffding 1963, Thm 2): mean ± sqrt(ln(1/delta) / (2 n)).
//!
//! Valid for independent [0, 1] observations, and for martingale differences with
//! range 1 (Azuma–Hoeffding), clamped to [0, 1] and rounded outwards by one ulp.
//!
//! For m-dependent trials (trials more than m apart independent) Janson's (2004) form for a
//! dependency graph applies: the graph joining trials at most m apart has fractional chromatic
//! number m + 1 (it holds (m + 1)-cliques and is coloured by i mod (m + 1)), so the exponent is
//! divided by m + 1 and the radius is sqrt((m + 1) ln(1/delta) / (2 n)) (METHODS.md §10). The
//! target is the average mean of the n trials; m must be fixed before the data are seen.

/// sqrt(chi ln(1/delta) / (2 n)), chi the fractional chromatic number of the dependency graph
/// (1 for independent trials, where the product with 1 is exact and the radius unchanged).
fn radius_scaled(n: u64, delta: f64, chi: f64) -> Option<f64> {
    if n == 0 || !(delta > 0.0 && delta < 1.0) {
        return None;
    }
    Some((chi * -delta.ln() / (2.0 * n as f64)).sqrt())
}

fn radius(n: u64, delta: f64) -> Option<f64> {
    radius_scaled(n, delta, 1.0)
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

/// Upper bound on the average mean of `n` m-dependent [0, 1] observations with sample mean
/// `mean` (Janson 2004): `mean + sqrt((m + 1) ln(1/delta) / (2 n))`, at most 1, rounded
/// outwards as [`upper_mean`]. `P(average mean <= upper) >= 1 - delta` when observations more
/// than `m` apart are independent, with n and m fixed in advance. `m = 0` is [`upper_mean`].
/// Returns 1 on invalid input (`n == 0`, `mean` outside [0, 1] or NaN, bad `delta`).
pub fn upper_m_dependent(mean: f64, n: u64, m: u64, delta: f64) -> f64 {
    if !(0.0..=1.0).contains(&mean) {
        return 1.0;
    }
    // m as f64 + 1 is exact up to 2^53; beyond, it is off by at most 2^-53 relative, which
    // halves under the square root and is covered by the margin below.
    match radius_scaled(n, delta, m as f64 + 1.0) {
        // 2 ulps of (mean + r) cover the rounding of r (log, product, division, sqrt) and of
        // mean.
        Some(r) => (mean + r + 2.0 * f64::EPSILON * (mean + r))
            .next_up()
            .min(1.0),
        None => 1.0,
    }
}

/// Lower bound on the average mean of `n` m-dependent [0, 1] observations, the mirror of
/// [`upper_m_dependent`]: `mean - sqrt((m + 1) ln(1/delta) / (2 n))`, at least 0. Returns 0 on
/// invalid input.
pub fn lower_m_dependent(mean: f64, n: u64, m: u64, delta: f64) -> f64 {
    if !(0.0..=1.0).contains(&mean) {
        return 0.0;
    }
    match radius_scaled(n, delta, m as f64 + 1.0) {
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
