//! Standard normal tail through the Mills ratio.

use super::special::LN_SQRT_2PI;
use super::tables::MILLS_ANCHORS;

/// Mills ratio `R(v) = exp(v^2/2) * int_v^inf exp(-t^2/2) dt` (= sqrt(pi/2) erfcx(v/sqrt 2)),
/// relative error about 1e-15 for `v >= 0`. For `v < 0` it is computed by reflection and
/// grows like `sqrt(2 pi) exp(v^2/2)` (+inf below about -37.6).
pub fn mills_ratio(v: f64) -> f64 {
    if v.is_nan() {
        return 0.0;
    }
    if v < 0.0 {
        let e = 0.5 * v * v;
        return (e + LN_SQRT_2PI).exp() - mills_ratio(-v);
    }
    if v < 4.0 {
        return mills_taylor(v);
    }
    if v.is_infinite() {
        return 0.0;
    }
    // Laplace continued fraction R(v) = 1/(v + 1/(v + 2/(v + 3/(v + ...)))), evaluated
    // backwards from a depth that gives full precision for v >= 4 (checked against mpmath
    // in the tests: 33 levels suffice at v = 4, 14 at v = 8).
    let depth = (6.0 + 112.0 / v) as u32;
    let mut t = v;
    let mut m = depth;
    while m > 0 {
        t = v + m as f64 / t;
        m -= 1;
    }
    1.0 / t
}

/// Taylor expansion about the anchor `c = ceil(8 v) / 8 >= v` (|v - c| < 1/8, 12 terms
/// give about 1e-15 relative, checked against mpmath in the generator's tests). R solves R' = v R - 1, so
/// the coefficients follow a_{n+1} = (c a_n + a_{n-1}) / (n + 1). Expanding downwards
/// from the anchor keeps the growing solution exp(v^2/2) from amplifying errors.
fn mills_taylor(v: f64) -> f64 {
    let i = (8.0 * v).ceil() as usize;
    let c = i as f64 * 0.125;
    let d = v - c;
    let a0 = MILLS_ANCHORS[i];
    let a1 = c * a0 - 1.0;
    let mut sum = a0 + a1 * d;
    let (mut am, mut an) = (a0, a1);
    let mut dn = d;
    for inv in RECIPROCALS {
        let ap = (c * an + am) * inv;
        dn *= d;
        sum += ap * dn;
        am = an;
        an = ap;
    }
    sum
}

/// 1/(n + 1) for n = 1..=10: the Taylor recurrence multiplies instead of dividing.
const RECIPROCALS: [f64; 10] = [
    1.0 / 2.0,
    1.0 / 3.0,
    1.0 / 4.0,
    1.0 / 5.0,
    1.0 / 6.0,
    1.0 / 7.0,
    1.0 / 8.0,
    1.0 / 9.0,
    1.0 / 10.0,
    1.0 / 11.0,
];

/// `ln P(Z > z)` for a standard normal Z, accurate in both tails.
pub fn ln_norm_sf(z: f64) -> f64 {
    if z.is_nan() {
        return 0.0;
    }
    if z >= 0.0 {
        mills_ratio(z).ln() - 0.5 * z * z - LN_SQRT_2PI
    } else {
        // P(Z > z) = 1 - P(Z > -z), the subtracted part being below 1/2.
        (-(mills_ratio(-z).ln() - 0.5 * z * z - LN_SQRT_2PI).exp()).ln_1p()
    }
}

/// Approximate upper quantile `z` with `P(Z > z) = delta`, for starting values only
/// (absolute error below about 5e-4). Abramowitz & Stegun 26.2.23 (Hastings' rational
/// approximation; constants recalled from memory, only the speed of the callers depends
/// on them).
pub(crate) fn norm_isf_approx(delta: f64) -> f64 {
    if delta.is_nan() || delta <= 0.0 {
        return 40.0;
    }
    if delta >= 1.0 {
        return -40.0;
    }
    let (p, sign) = if delta <= 0.5 {
        (delta, 1.0)
    } else {
        (1.0 - delta, -1.0)
    };
    let t = (-2.0 * p.ln()).sqrt();
    let num = 2.515517 + t * (0.802853 + t * 0.010328);
    let den = 1.0 + t * (1.432788 + t * (0.189269 + t * 0.001308));
    sign * (t - num / den)
}

#[cfg(test)]
mod unit {
    use super::*;

    #[test]
    fn mills_at_zero_and_symmetry() {
        // R(0) = sqrt(pi/2) (definition)
        assert!((mills_ratio(0.0) / (std::f64::consts::PI / 2.0).sqrt() - 1.0).abs() < 1e-15);
        // ln P(Z > 0) = ln 1/2 (symmetry)
        assert!((ln_norm_sf(0.0) - 0.5f64.ln()).abs() < 1e-15);
        // P(Z > z) + P(Z > -z) = 1 (symmetry)
        for &z in &[0.3, 1.0, 2.5, 5.0] {
            let s = ln_norm_sf(z).exp() + ln_norm_sf(-z).exp();
            assert!((s - 1.0).abs() < 1e-15);
        }
    }

    #[test]
    fn continued_fraction_meets_taylor() {
        // Both methods must agree at the switch point v = 4.
        let below = mills_taylor(4.0);
        let above = {
            let v = 4.0f64;
            let mut t = v;
            for m in (1..200u32).rev() {
                t = v + m as f64 / t;
            }
            1.0 / t
        };
        assert!((below / above - 1.0).abs() < 2e-15);
    }
}
