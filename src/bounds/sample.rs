//! Bounded observations as the methods see them: rescaled to [0, 1], summarised in one pass,
//! and, for the methods that need the order of the trials, the stream itself.
//!
//! Every bounded method works in unit scale; rescaling from the declared range [a, b] and back
//! happens in the caller (METHODS.md §0.2).

use crate::stats::sum::NeumaierSum;

/// Streaming summary of n observations that have already been rescaled to [0, 1].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Summary {
    /// Number of observations.
    pub n: u64,
    /// Compensated sum of the observations.
    pub sum: f64,
    /// Compensated sum of their squares.
    pub sum_sq: f64,
    /// Smallest observation (in [0, 1]).
    pub min: f64,
    /// Largest observation (in [0, 1]).
    pub max: f64,
    /// Σ max(0, x − ½) and Σ max(0, ½ − x): the two parts split-kl uses (split at mid-range).
    /// `None` when only n, mean and sd were given (summary-only input).
    pub split: Option<(f64, f64)>,
}

/// What a bounded method can be computed from: always a summary, sometimes the raw stream.
#[derive(Debug, Clone, Copy)]
pub struct Sample<'a> {
    /// The one-pass summary.
    pub summary: Summary,
    /// The observations in [0, 1], in trial order (order column, else row order); `None` when
    /// the input was a summary only or no selected method needs them.
    pub observations: Option<&'a [f64]>,
}

/// What a bounded method must be given.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Needs {
    /// n and the mean.
    Mean,
    /// n, the sum and the sum of squares.
    Moments,
    /// The sums of the parts above and below mid-range.
    Split,
    /// Every observation, in trial order.
    Observations,
}

/// Builds a [`Summary`] one observation at a time, with compensated sums, so that memory stays
/// bounded however many observations there are.
#[derive(Debug, Clone, Default)]
pub struct Accumulator {
    n: u64,
    sum: NeumaierSum,
    sum_sq: NeumaierSum,
    above: NeumaierSum,
    below: NeumaierSum,
    min: f64,
    max: f64,
    rejected: bool,
}

impl Accumulator {
    /// An empty accumulator.
    pub fn new() -> Self {
        Self::default()
    }

    /// Adds one observation. Returns false, and poisons the accumulator so that
    /// [`Accumulator::finish`] gives `None`, when `x` is not in [0, 1] (NaN included).
    pub fn push(&mut self, x: f64) -> bool {
        if !(0.0..=1.0).contains(&x) {
            self.rejected = true;
            return false;
        }
        if self.n == 0 {
            self.min = x;
            self.max = x;
        } else {
            self.min = self.min.min(x);
            self.max = self.max.max(x);
        }
        self.n += 1;
        self.sum.add(x);
        self.sum_sq.add(x * x);
        // Exact for x >= 1/4 (Sterbenz); one rounding below that.
        if x > 0.5 {
            self.above.add(x - 0.5);
        } else {
            self.below.add(0.5 - x);
        }
        true
    }

    /// The summary of everything pushed; `None` when nothing was pushed or a value was
    /// rejected.
    pub fn finish(&self) -> Option<Summary> {
        if self.rejected || self.n == 0 {
            return None;
        }
        Some(Summary {
            n: self.n,
            sum: self.sum.value(),
            sum_sq: self.sum_sq.value(),
            min: self.min,
            max: self.max,
            split: Some((self.above.value(), self.below.value())),
        })
    }
}

impl Summary {
    /// The summary of `values` (compensated sums, split parts included); `None` when `values`
    /// is empty or holds a value outside [0, 1] or a NaN.
    pub fn from_values(values: &[f64]) -> Option<Summary> {
        let mut acc = Accumulator::new();
        for &x in values {
            if !acc.push(x) {
                return None;
            }
        }
        acc.finish()
    }

    /// The sample mean Σx / n, inside [0, 1] (0 for an empty summary).
    pub fn mean(&self) -> f64 {
        if self.n == 0 {
            return 0.0;
        }
        (self.sum / self.n as f64).clamp(0.0, 1.0)
    }

    /// The mean of the squares Σx² / n, inside [0, 1] (0 for an empty summary).
    pub fn mean_sq(&self) -> f64 {
        if self.n == 0 {
            return 0.0;
        }
        (self.sum_sq / self.n as f64).clamp(0.0, 1.0)
    }

    /// The unbiased sample variance Σ(x − x̄)² / (n − 1), never negative (0 when n < 2).
    pub fn variance(&self) -> f64 {
        if self.n < 2 {
            return 0.0;
        }
        let n = self.n as f64;
        let mean = self.sum / n;
        ((self.sum_sq - self.sum * mean) / (n - 1.0)).max(0.0)
    }

    /// The unbiased sample variance rounded up: [`Summary::variance`] plus the worst rounding
    /// of `Σx² − (Σx)²/n` (each of the two terms off by a few ulps, including the rounding of
    /// the compensated sums themselves). Bounds that grow with the variance use this.
    pub(crate) fn variance_up(&self) -> f64 {
        if self.n < 2 {
            return 0.0;
        }
        let n = self.n as f64;
        (self.biased_variance_up() * (n / (n - 1.0))) * (1.0 + 2.0 * f64::EPSILON)
    }

    /// The biased sample variance Σ(x − x̄)² / n rounded up, as [`Summary::variance_up`]
    /// (0 for an empty summary).
    pub(crate) fn biased_variance_up(&self) -> f64 {
        if self.n == 0 {
            return 0.0;
        }
        let n = self.n as f64;
        let mean_sq = self.sum_sq / n;
        let mean = self.sum / n;
        ((mean_sq - mean * mean).max(0.0) + 16.0 * f64::EPSILON * mean_sq)
            * (1.0 + 2.0 * f64::EPSILON)
    }

    /// The summary of the reflected observations 1 − x: sums become n − Σx and
    /// Σ(1 − x)² = (n − Σx) − (Σx − Σx²), the extremes swap through 1 − ·, and so do the split
    /// parts. Lower bounds are upper bounds of the reflection.
    ///
    /// The reflected sums are accurate to a few ulps of n (not of themselves); callers that
    /// read bounds off the reflection allow for that.
    pub fn reflected(&self) -> Summary {
        let n = self.n as f64;
        let sum = (n - self.sum).clamp(0.0, n);
        let sum_sq = (sum - (self.sum - self.sum_sq).max(0.0)).clamp(0.0, sum);
        Summary {
            n: self.n,
            sum,
            sum_sq,
            min: 1.0 - self.max,
            max: 1.0 - self.min,
            split: self.split.map(|(above, below)| (below, above)),
        }
    }

    /// Whether the fields the methods read are consistent with n values in [0, 1]:
    /// n ≥ 1, 0 ≤ Σx ≤ n, 0 ≤ Σx² ≤ Σx (up to rounding), split parts in [0, n/2], no NaN.
    /// Methods return the vacuous bound for a summary that fails this.
    pub fn is_consistent(&self) -> bool {
        if self.n == 0 {
            return false;
        }
        let n = self.n as f64;
        let slack = 8.0 * f64::EPSILON * n;
        let sums_ok =
            (0.0..=n).contains(&self.sum) && self.sum_sq >= 0.0 && self.sum_sq <= self.sum + slack;
        let split_ok = match self.split {
            None => true,
            Some((a, b)) => {
                (0.0..=0.5 * n + slack).contains(&a) && (0.0..=0.5 * n + slack).contains(&b)
            }
        };
        sums_ok && split_ok
    }
}

impl Sample<'_> {
    /// Whether this sample provides what a method with these needs reads.
    pub fn provides(&self, needs: Needs) -> bool {
        match needs {
            Needs::Mean | Needs::Moments => true,
            Needs::Split => self.summary.split.is_some(),
            Needs::Observations => self.observations.is_some(),
        }
    }
}

#[cfg(test)]
mod unit {
    use super::*;

    #[test]
    fn summary_of_a_few_values() {
        // Worked by hand: 0, 0.25, 0.5, 1 -> sum 1.75, squares 0 + 1/16 + 1/4 + 1 = 1.3125,
        // parts above 1/2: 0.5; below: 0.5 + 0.25 + 0 = 0.75.
        let s = Summary::from_values(&[0.0, 0.25, 0.5, 1.0]).expect("valid values");
        assert_eq!(s.n, 4);
        assert_eq!(s.sum, 1.75);
        assert_eq!(s.sum_sq, 1.3125);
        assert_eq!((s.min, s.max), (0.0, 1.0));
        assert_eq!(s.split, Some((0.5, 0.75)));
        assert_eq!(s.mean(), 0.4375);
        // (1.3125 - 1.75 * 0.4375) / 3 = 0.546875 / 3
        assert!((s.variance() - 0.546875 / 3.0).abs() < 1e-16);
        assert!(s.variance_up() >= s.variance());
    }

    #[test]
    fn rejects_values_outside_the_unit_interval() {
        assert!(Summary::from_values(&[0.5, 1.5]).is_none());
        assert!(Summary::from_values(&[f64::NAN]).is_none());
        assert!(Summary::from_values(&[]).is_none());
    }

    #[test]
    fn reflection_matches_the_reflected_values() {
        let xs = [0.0, 0.125, 0.5, 0.75, 1.0, 0.875];
        let ys: Vec<f64> = xs.iter().map(|x| 1.0 - x).collect();
        let r = Summary::from_values(&xs).expect("valid").reflected();
        let direct = Summary::from_values(&ys).expect("valid");
        // All values are dyadic, so every sum is exact and the two must agree bit for bit.
        assert_eq!(r, direct);
        assert!(r.is_consistent());
    }
}
