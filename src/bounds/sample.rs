//! Bounded observations as the methods see them: rescaled to [0, 1], summarised in one pass,
//! and, for the methods that need the order of the trials, the stream itself.

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

impl Summary {
    /// The sample mean Σx / n, inside [0, 1] (0 for an empty summary).
    pub fn mean(&self) -> f64 {
        if self.n == 0 {
            return 0.0;
        }
        (self.sum / self.n as f64).clamp(0.0, 1.0)
    }
}
