//! Compensated summation.

/// Neumaier's improved Kahan summation: the error of the running sum is bounded by about
/// two ulps of the result plus `n * eps^2` times the sum of magnitudes, independently
/// of the order of the terms (unlike a plain f64 sum, whose error grows like `n * eps`).
#[derive(Clone, Copy, Debug, Default)]
pub struct NeumaierSum {
    sum: f64,
    comp: f64,
}

impl NeumaierSum {
    /// An empty sum.
    pub fn new() -> Self {
        Self::default()
    }

    /// Adds one term.
    pub fn add(&mut self, x: f64) {
        let t = self.sum + x;
        if self.sum.abs() >= x.abs() {
            self.comp += (self.sum - t) + x;
        } else {
            self.comp += (x - t) + self.sum;
        }
        self.sum = t;
    }

    /// The compensated value of the sum so far.
    pub fn value(&self) -> f64 {
        self.sum + self.comp
    }
}

impl Extend<f64> for NeumaierSum {
    fn extend<I: IntoIterator<Item = f64>>(&mut self, iter: I) {
        for x in iter {
            self.add(x);
        }
    }
}

impl FromIterator<f64> for NeumaierSum {
    fn from_iter<I: IntoIterator<Item = f64>>(iter: I) -> Self {
        let mut s = NeumaierSum::new();
        s.extend(iter);
        s
    }
}

#[cfg(test)]
mod unit {
    use super::*;

    #[test]
    fn recovers_what_plain_sum_loses() {
        // 1 + 1e-16 * 1e4 - 1 = 1e-12 exactly in real arithmetic; the plain f64 sum of
        // these terms gives 0 because every 1e-16 is absorbed by the 1.
        let mut s = NeumaierSum::new();
        s.add(1.0);
        for _ in 0..10_000 {
            s.add(1e-16);
        }
        s.add(-1.0);
        assert!((s.value() - 1e-12).abs() < 1e-20);
        let plain: f64 = std::iter::once(1.0)
            .chain(std::iter::repeat_n(1e-16, 10_000))
            .sum::<f64>()
            - 1.0;
        assert_eq!(plain, 0.0);
    }
}
