//! Multiplicity: how the claim's error budget δ is divided among the bounds computed on the
//! same data (DESIGN.md §8). Bonferroni division needs no assumption on how arms, sides or looks
//! depend on each other, which is why it is the default.

use crate::analysis::model::AdjustmentStep;

/// Why the budget is divided.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Division {
    /// Several arms certified simultaneously (`scope: all`).
    AllArms(u64),
    /// One arm selected as the best of several on the same data, then certified (`scope: best`).
    BestOf(u64),
    /// A two-sided claim from a method that is not built two-sided.
    TwoSides,
    /// Look `look` of `planned` planned looks of a fixed-n method, spending `share` of δ.
    Look {
        /// This look's number, 1-based.
        look: u32,
        /// Number of planned looks.
        planned: u32,
        /// The share of δ this look may spend, in (0, 1].
        share: f64,
        /// Whether every planned look has the same share.
        equal: bool,
    },
    /// What earlier fixed-n looks spent is no longer available to a method valid at any time.
    Spent {
        /// δ already spent.
        spent: f64,
        /// The claim's δ.
        delta: f64,
    },
}

impl Division {
    fn divisor(self) -> f64 {
        match self {
            Division::AllArms(k) | Division::BestOf(k) => k.max(1) as f64,
            Division::TwoSides => 2.0,
            Division::Look {
                planned,
                equal,
                share,
                ..
            } => {
                if equal {
                    f64::from(planned)
                } else {
                    1.0 / share
                }
            }
            Division::Spent { spent, delta } => delta / (delta - spent),
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
            Division::Look {
                look,
                planned,
                share,
                equal,
            } => {
                if equal {
                    format!(
                        "look {look} of {planned} planned looks of a fixed-n method: equal \
                         spending, δ/{planned} for this look (the running bound over looks \
                         is covered by the union bound)"
                    )
                } else {
                    format!(
                        "look {look} of {planned} planned looks of a fixed-n method: this look's \
                         weight is {:.4} of δ (the running bound over looks is covered by the \
                         union bound)",
                        share
                    )
                }
            }
            Division::Spent { spent, delta } => format!(
                "earlier fixed-n looks spent {} of δ = {}: the confidence sequence uses what \
                 is left",
                crate::analysis::display::probability(spent),
                crate::analysis::display::probability(delta)
            ),
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
        if divisor <= 1.0 {
            continue;
        }
        // A share is applied as a product: δ·w is exact where δ/(1/w) may not be.
        current = match division {
            Division::Look {
                share,
                equal: false,
                ..
            } => current * share,
            Division::Spent { spent, delta } => current * ((delta - spent) / delta),
            _ => current / divisor,
        };
        steps.push(AdjustmentStep {
            reason: division.reason(),
            divisor,
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

    // METHODS.md §11: look l of L with equal spending gets δ/L.
    #[test]
    fn equal_looks_divide_by_the_number_planned() {
        let look = Division::Look {
            look: 2,
            planned: 4,
            share: 0.25,
            equal: true,
        };
        let b = divide(0.05, &[look]);
        assert_eq!(b.delta_per_bound, 0.05 / 4.0);
        let weighted = Division::Look {
            look: 1,
            planned: 2,
            share: 0.2,
            equal: false,
        };
        assert_eq!(divide(0.05, &[weighted]).delta_per_bound, 0.05 * 0.2);
    }

    #[test]
    fn single_arm_is_not_a_division() {
        let b = divide(0.05, &[Division::AllArms(1)]);
        assert!(b.steps.is_empty());
        assert_eq!(b.delta_per_bound, 0.05);
    }
}
