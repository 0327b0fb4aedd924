//! A probability carried together with its complement.
//!
//! Bounds near 1 (upper bounds with few trials) and near 0 (lower bounds) are both
//! wanted to full relative precision. Storing `1 - p` separately lets a lower bound be
//! read off the complement of a mirrored upper bound without the cancellation of
//! `1.0 - upper`.

/// A probability `p` and its complement `q = 1 - p`, each with full relative precision.
///
/// Invariant: both fields lie in [0, 1] and whichever of the two is smaller was computed
/// directly (not by subtraction), so both are relatively accurate.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Prob {
    p: f64,
    q: f64,
}

impl Prob {
    /// The probability `p` (clamped to [0, 1]; NaN counts as 0); the complement is exact
    /// for `p >= 1/2` and relatively accurate otherwise.
    pub fn new(p: f64) -> Prob {
        let p = if p.is_nan() { 0.0 } else { p.clamp(0.0, 1.0) };
        Prob { p, q: 1.0 - p }
    }

    /// The probability whose complement is `q` (clamped to [0, 1]; NaN counts as 0).
    pub fn from_complement(q: f64) -> Prob {
        Prob::new(q).flip()
    }

    /// `k / n` and `(n - k) / n` from counts, each rounded once (k is clamped to n;
    /// `n = 0` gives p = 0).
    pub fn from_counts(k: u64, n: u64) -> Prob {
        if n == 0 {
            return Prob { p: 0.0, q: 1.0 };
        }
        let k = k.min(n);
        let nf = n as f64;
        Prob {
            p: (k as f64 / nf).clamp(0.0, 1.0),
            q: ((n - k) as f64 / nf).clamp(0.0, 1.0),
        }
    }

    /// Both parts given separately; the caller guarantees that they are accurate and in [0, 1].
    pub(crate) fn from_parts(p: f64, q: f64) -> Prob {
        Prob { p, q }
    }

    /// The probability.
    pub fn p(self) -> f64 {
        self.p
    }

    /// Its complement.
    pub fn q(self) -> f64 {
        self.q
    }

    /// `p` rounded upwards: when `p` is held as `1 - q` (rounded to nearest), the float
    /// just above is returned if the rounding went down. Upper bounds are read this way.
    pub fn p_up(self) -> f64 {
        if self.p_is_primary() {
            return self.p;
        }
        // 1 - p is exact here (Sterbenz: p >= 1/2), so the comparison is exact.
        if 1.0 - self.p > self.q {
            self.p.next_up().min(1.0)
        } else {
            self.p
        }
    }

    /// `p` rounded downwards (the mirror of [`Prob::p_up`]). Lower bounds are read this way.
    pub fn p_down(self) -> f64 {
        if self.p_is_primary() {
            return self.p;
        }
        if 1.0 - self.p < self.q {
            self.p.next_down().max(0.0)
        } else {
            self.p
        }
    }

    /// The pair with the roles of `p` and `q` exchanged.
    pub fn flip(self) -> Prob {
        Prob {
            p: self.q,
            q: self.p,
        }
    }

    /// `ln p`, accurate also when `p` is close to 1.
    pub fn ln_p(self) -> f64 {
        if self.p <= 0.5 {
            self.p.ln()
        } else {
            (-self.q).ln_1p()
        }
    }

    /// `ln q`, accurate also when `q` is close to 1.
    pub fn ln_q(self) -> f64 {
        if self.q <= 0.5 {
            self.q.ln()
        } else {
            (-self.p).ln_1p()
        }
    }

    /// Whether `self.p < other.p`, compared on whichever coordinate is held exactly (p, or
    /// 1 − p when both are above ½).
    pub(crate) fn below(self, other: Prob) -> bool {
        if self.p <= 0.5 || other.p <= 0.5 {
            self.p < other.p
        } else {
            self.q > other.q
        }
    }

    /// Whether `p` is the smaller (directly held) coordinate.
    pub(crate) fn p_is_primary(self) -> bool {
        self.p <= self.q
    }

    /// The point moved by `step` in `p`, applied to the smaller coordinate so that the
    /// result keeps full relative precision in both parts.
    pub(crate) fn shifted(self, step: f64) -> Prob {
        if self.p_is_primary() {
            Prob::new(self.p + step)
        } else {
            Prob::from_complement(self.q - step)
        }
    }

    /// `p - other.p`, computed on the complements when both are close to 1.
    pub(crate) fn diff(self, other: Prob) -> f64 {
        if self.p > 0.5 && other.p > 0.5 {
            other.q - self.q
        } else {
            self.p - other.p
        }
    }

    /// The smaller of `p` and `q`: the scale for relative tolerances on the point.
    pub(crate) fn scale(self) -> f64 {
        self.p.min(self.q)
    }

    /// A point between `lo` and `hi` (`lo.p < hi.p`): geometric midpoint of the small
    /// coordinates when they span more than a factor 8, arithmetic otherwise.
    pub(crate) fn midpoint(lo: Prob, hi: Prob) -> Prob {
        if hi.p <= 0.5 {
            if lo.p > 0.0 && hi.p > 8.0 * lo.p {
                Prob::new((lo.p.ln() * 0.5 + hi.p.ln() * 0.5).exp())
            } else if lo.p == 0.0 && hi.p > 1e-300 {
                Prob::new(hi.p * 0.125)
            } else {
                Prob::new(lo.p + 0.5 * (hi.p - lo.p))
            }
        } else if lo.q <= 0.5 {
            if hi.q > 0.0 && lo.q > 8.0 * hi.q {
                Prob::from_complement((lo.q.ln() * 0.5 + hi.q.ln() * 0.5).exp())
            } else if hi.q == 0.0 && lo.q > 1e-300 {
                Prob::from_complement(lo.q * 0.125)
            } else {
                Prob::from_complement(hi.q + 0.5 * (lo.q - hi.q))
            }
        } else {
            Prob::new(0.5)
        }
    }

    /// `p = 1 - exp(-eps)`, `q = exp(-eps)` for `eps >= 0`, rounded outwards (`p` up):
    /// `eps` is inflated by 4 ulps to cover its own rounding in the callers (a log and a
    /// division), and the result by one more ulp for `exp_m1` / `exp`.
    pub(crate) fn one_minus_exp_neg(eps: f64) -> Prob {
        let e = eps * (1.0 + 4.0 * f64::EPSILON);
        Prob::from_parts(-(-e).exp_m1(), (-e).exp()).nudged_up(1)
    }

    /// The next representable point above (`p` up, `q` down), used to round outwards.
    pub(crate) fn nudged_up(self, steps: u32) -> Prob {
        let mut r = self;
        for _ in 0..steps {
            if r.p_is_primary() {
                r = Prob::new(r.p.next_up().min(1.0));
            } else {
                r = Prob::from_complement(r.q.next_down().max(0.0));
            }
        }
        r
    }
}
