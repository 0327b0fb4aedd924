//! Multiplicity: how the claim's error budget δ is divided among the bounds computed on the
//! same data (DESIGN.md §8). Bonferroni division needs no assumption on how arms, sides or looks
//! depend on each other, which is why it is the default.

use crate::analysis::model::AdjustmentStep;

/// Why the budget is divided.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Division {
    /// Several arms certified simultaneously (`scope: all`).
    AllArms(u64),
    /// One arm selected as the best of several on the same data, then certified (`scope: best`).
    BestOf(u64),
    /// A two-sided claim from a method that is not built two-sided.
    TwoSides,
}

impl Division {
    fn divisor(self) -> u64 {
        match self {
            Division::AllArms(k) | Division::BestOf(k) => k.max(1),
            Division::TwoSides => 2,
        }
    }

    fn reason(self) -> String {
        match self {
            Division::AllArms(k) => format!(
                "scope all: {k} arms certified simultaneously, Bonferroni δ/{k} for each arm"
            ),
            Division::BestOf(k) => format!(
                "scope best: the best of {k} arms is selected on the same data, so it is \
                 certified at δ/{k} (simultaneous coverage makes the selection harmless)"
            ),
            Division::TwoSides => "two-sided claim: δ/2 for each side".to_string(),
        }
    }
}

/// The δ left for each one-sided bound, and the divisions that produced it.
#[derive(Debug, Clone)]
pub struct Budget {
    /// δ for each one-sided bound.
    pub delta_per_bound: f64,
    /// Each division, in the order applied.
    pub steps: Vec<AdjustmentStep>,
}

/// Divide `delta` by each division in turn. Divisions by one are not recorded.
///
/// The result never exceeds `delta`, so a bound computed at it is at least as conservative as
/// one computed at the undivided budget.
pub fn divide(delta: f64, divisions: &[Division]) -> Budget {
    let mut current = delta;
    let mut steps = Vec::new();
    for division in divisions {
        let divisor = division.divisor();
        if divisor <= 1 {
            continue;
        }
        current /= divisor as f64;
        steps.push(AdjustmentStep {
            reason: division.reason(),
            divisor: divisor as f64,
            delta_after: current,
            display_delta_after: crate::analysis::display::probability(current),
        });
    }
    Budget {
        delta_per_bound: current,
        steps,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Bonferroni division by the number of simultaneous statements (METHODS.md §11).
    #[test]
    fn arms_and_sides_multiply() {
        let b = divide(0.05, &[Division::AllArms(4), Division::TwoSides]);
        assert_eq!(b.steps.len(), 2);
        assert!((b.delta_per_bound - 0.05 / 8.0).abs() < 1e-18);
    }

    #[test]
    fn single_arm_is_not_a_division() {
        let b = divide(0.05, &[Division::AllArms(1)]);
        assert!(b.steps.is_empty());
        assert_eq!(b.delta_per_bound, 0.05);
    }
}
