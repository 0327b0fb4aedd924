//! The trial counts at which a running bound is read, as the path functions of the catalogue
//! receive them: put in order and checked once, and the values handed back in the caller's order.

/// The distinct usable checkpoints (1 ≤ t ≤ n), ascending, and where each requested one goes.
pub(crate) struct Checkpoints {
    /// Distinct prefix lengths to evaluate, ascending.
    pub(crate) lengths: Vec<usize>,
    /// For each requested checkpoint, its index in `lengths`, or `None` when it is outside
    /// 1..=n (its value stays vacuous).
    slots: Vec<Option<usize>>,
}

impl Checkpoints {
    /// The checkpoints `requested` for a stream of `n` observations. Any order is accepted;
    /// repeated counts share one evaluation.
    pub(crate) fn new(requested: &[u64], n: usize) -> Checkpoints {
        let usable = |t: u64| t >= 1 && usize::try_from(t).is_ok_and(|t| t <= n);
        let mut lengths: Vec<usize> = requested
            .iter()
            .filter(|&&t| usable(t))
            .map(|&t| t as usize)
            .collect();
        lengths.sort_unstable();
        lengths.dedup();
        let slots = requested
            .iter()
            .map(|&t| {
                usable(t)
                    .then(|| lengths.binary_search(&(t as usize)).ok())
                    .flatten()
            })
            .collect();
        Checkpoints { lengths, slots }
    }

    /// One value per requested checkpoint: `values[i]` belongs to `lengths[i]`; checkpoints
    /// outside 1..=n get `vacuous`.
    pub(crate) fn scatter(&self, values: &[f64], vacuous: f64) -> Vec<f64> {
        self.slots
            .iter()
            .map(|s| s.and_then(|i| values.get(i).copied()).unwrap_or(vacuous))
            .collect()
    }
}

#[cfg(test)]
mod unit {
    use super::*;

    #[test]
    fn unordered_repeated_and_unusable_checkpoints() {
        let c = Checkpoints::new(&[5, 0, 2, 5, 11, 10], 10);
        assert_eq!(c.lengths, vec![2, 5, 10]);
        assert_eq!(
            c.scatter(&[0.2, 0.5, 1.0], -1.0),
            vec![0.5, -1.0, 0.2, 0.5, -1.0, 1.0]
        );
    }
}
