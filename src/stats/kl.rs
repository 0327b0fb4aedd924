//! Binary kl divergence and its inverses (the Chernoff / kl-inverse bound).

use super::prob::Prob;
use super::special::scaled_phi;

/// `ln(a / b)` for positive `a`, `b` that are not close to each other.
#[inline]
fn ln_ratio(a: Prob, b: Prob, use_q: bool) -> f64 {
    let (x, y) = if use_q {
        (a.q(), b.q())
    } else {
        (a.p(), b.p())
    };
    let r = x / y;
    if r.is_finite() && r > 0.0 {
        r.ln()
    } else if use_q {
        a.ln_q() - b.ln_q()
    } else {
        a.ln_p() - b.ln_p()
    }
}

/// Binary kl divergence `kl(p || q) = p ln(p/q) + (1-p) ln((1-p)/(1-q))` in nats, for `p`,
/// `q` in [0, 1] (clamped). Computed as `p phi(d/p) + (1-p) phi(-d/(1-p))` with
/// `d = q - p`, so that it keeps full relative precision when `q` is close to `p`.
/// Returns +inf where the divergence is infinite.
pub fn kl(p: f64, q: f64) -> f64 {
    kl_prob(Prob::new(p), Prob::new(q))
}

/// [`kl`] on probabilities carried with their complements.
pub(crate) fn kl_prob(p: Prob, q: Prob) -> f64 {
    if p.p() == 0.0 {
        return -q.ln_q();
    }
    if p.q() == 0.0 {
        return -q.ln_p();
    }
    if q.p() == 0.0 || q.q() == 0.0 {
        return f64::INFINITY;
    }
    let d = q.diff(p);
    let t1 = scaled_phi(p.p(), d, || ln_ratio(q, p, false));
    let t2 = scaled_phi(p.q(), -d, || ln_ratio(q, p, true));
    t1 + t2
}

/// Upper kl inverse `sup { q in [p_hat, 1] : kl(p_hat || q) <= eps }`.
///
/// The result is never below the true value by more than rounding: Newton's method on
/// a convex increasing function, started to the right of the root, approaches it from
/// the right. Returns 1 (vacuous) for NaN input or `p_hat` outside [0, 1].
pub fn kl_inv_upper(p_hat: f64, eps: f64) -> f64 {
    if !(0.0..=1.0).contains(&p_hat) || eps.is_nan() {
        return 1.0;
    }
    kl_inv_upper_prob(Prob::new(p_hat), eps).p_up()
}

/// Lower kl inverse `inf { q in [0, p_hat] : kl(p_hat || q) <= eps }`, never above the
/// true value by more than rounding. Returns 0 (vacuous) for NaN input or `p_hat`
/// outside [0, 1].
pub fn kl_inv_lower(p_hat: f64, eps: f64) -> f64 {
    if !(0.0..=1.0).contains(&p_hat) || eps.is_nan() {
        return 0.0;
    }
    kl_inv_lower_prob(Prob::new(p_hat), eps).p_down()
}

/// [`kl_inv_lower`] on a probability with its complement: the mirror of the upper inverse.
pub(crate) fn kl_inv_lower_prob(p_hat: Prob, eps: f64) -> Prob {
    kl_inv_upper_prob(p_hat.flip(), eps).flip()
}

/// [`kl_inv_upper`] on a probability with its complement; the result carries both `q`
/// and `1 - q` to full relative precision.
pub(crate) fn kl_inv_upper_prob(p_hat: Prob, eps: f64) -> Prob {
    if eps.is_nan() || eps == f64::INFINITY || p_hat.q() == 0.0 {
        return Prob::from_parts(1.0, 0.0);
    }
    if eps <= 0.0 {
        return p_hat;
    }
    if p_hat.p() == 0.0 {
        // kl(0 || q) = -ln(1 - q)
        return Prob::one_minus_exp_neg(eps);
    }
    // Work in psi = -ln(1 - q): f(psi) = kl(p_hat || q(psi)) - eps is increasing and convex
    // in psi as well (f'' = p (1 - q) / q^2 > 0), and it is nearly linear when q is close
    // to 1, where Newton in q itself would crawl.
    let at = |psi: f64| Prob::from_parts(-(-psi).exp_m1(), (-psi).exp());
    let ph = p_hat.p();
    // Right-hand starting points: the refined Pinsker bound kl >= (q - p)^2 / (2 q), and
    // kl >= (1 - p) psi - H(p) (drop p ln(1/q) >= 0), which holds everywhere.
    let entropy = -(ph * p_hat.ln_p() + p_hat.q() * p_hat.ln_q());
    let mut psi = (eps + entropy) / p_hat.q();
    let q_rp = ph + eps + (eps * eps + 2.0 * ph * eps).sqrt();
    if q_rp < 1.0 {
        psi = psi.min(-(-q_rp).ln_1p());
    }
    // Evaluation error of f at the last iterate, in units of psi (for the outward margin).
    let mut err_psi = 0.0;
    for _ in 0..200 {
        let q = at(psi);
        // From the right f >= 0; a negative f can only come from rounding at the root, and
        // then the Newton step moves right again.
        let f = kl_prob(p_hat, q) - eps;
        let slope = q.diff(p_hat) / q.p();
        if slope.is_nan() || slope <= 0.0 {
            break;
        }
        let step = f / slope;
        err_psi = 8.0 * f64::EPSILON * (eps + f.abs()) / slope;
        let next = psi - step;
        if !next.is_finite() {
            break;
        }
        let converged = step.abs() <= 4.0 * f64::EPSILON * psi;
        psi = next;
        if converged {
            break;
        }
    }
    // Round outwards: the error of kl itself, and two ulps of psi for q(psi).
    at(psi + err_psi + 4.0 * f64::EPSILON * psi)
}

#[cfg(test)]
mod unit {
    use super::*;

    #[test]
    fn kl_textbook_agrees_away_from_cancellation() {
        for &(p, q) in &[(0.1f64, 0.3f64), (0.5, 0.01), (0.9, 0.2), (0.3, 0.31)] {
            let textbook = p * (p / q).ln() + (1.0 - p) * ((1.0 - p) / (1.0 - q)).ln();
            assert!((kl(p, q) / textbook - 1.0).abs() < 1e-12, "{p} {q}");
        }
    }

    #[test]
    fn kl_small_difference_is_quadratic() {
        // kl(p || p + d) ~ d^2 / (2 p (1 - p)) for small d (Taylor expansion)
        let (p, d) = (0.3f64, 1e-9f64);
        let approx = d * d / (2.0 * p * (1.0 - p));
        assert!((kl(p, p + d) / approx - 1.0).abs() < 1e-6);
    }

    #[test]
    fn inverse_satisfies_equation() {
        // The root is bracketed by +-1e-12 relative around the returned value (for results
        // like 1e-59 the relative precision is that of ln(result), a few 1e-14).
        for &(p, e) in &[
            (0.1f64, 0.03f64),
            (0.5, 1e-12),
            (0.999, 2.0),
            (1e-9, 1e-3),
            (0.3, 40.0),
        ] {
            let u = kl_inv_upper(p, e);
            assert!(u >= p, "{p} {e} {u}");
            if u < 1.0 {
                assert!(
                    kl(p, u * (1.0 - 1e-12)) < e && kl(p, u * (1.0 + 1e-12)) > e,
                    "{p} {e} {u}"
                );
            }
            let l = kl_inv_lower(p, e);
            assert!(l <= p);
            if l > 0.0 {
                assert!(
                    kl(p, l * (1.0 - 1e-12)) > e && kl(p, l * (1.0 + 1e-12)) < e,
                    "{p} {e} {l}"
                );
            }
        }
    }
}
