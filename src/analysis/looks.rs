//! Looks: how the claim's δ is paid for when the same study is analysed more than once.
//!
//! Each analysis is a look. A fixed-n bound is valid only at a sample size fixed in advance,
//! so fixed-n looks share δ by a union bound over the planned looks (METHODS.md §11) and the
//! reported bound is the intersection over those looks. A method valid at any time spends
//! nothing per look; its bounds from earlier looks at the same level may be intersected freely.
//! What happened at earlier looks comes from the ledger (or, when a report is re-checked, from
//! its recorded results), never from the data.

use super::model::{Analysis, LedgerInfo, LookArm, LookRecord};
use crate::bounds::{Guarantee, Method};

/// What is known of the study's earlier looks when this one is analysed.
#[derive(Debug, Clone)]
pub struct LookContext {
    /// This look's number (for a re-issue, the number of the look it re-issues).
    pub look: u32,
    /// The recorded looks before this one, oldest first.
    pub earlier: Vec<LookRecord>,
    /// What the ledger recorded.
    pub ledger: LedgerInfo,
}

impl LookContext {
    /// A first look that no ledger records (`--no-ledger`, or a library caller).
    pub fn unregistered() -> LookContext {
        LookContext {
            look: 1,
            earlier: Vec::new(),
            ledger: LedgerInfo {
                status: "not-registered".to_string(),
                file: None,
                previous: None,
                new_ledger: None,
            },
        }
    }

    /// The context a recorded result was computed in, so that it can be recomputed exactly.
    pub fn of_results(analysis: &Analysis) -> LookContext {
        let looks = &analysis.looks;
        let mut earlier = looks.history.clone();
        earlier.pop();
        LookContext {
            look: looks.look,
            earlier,
            ledger: looks.ledger.clone(),
        }
    }

    /// δ spent by the recorded fixed-n looks before this one.
    pub fn spent_before(&self) -> f64 {
        self.earlier.iter().map(|r| r.spent).sum()
    }
}

/// Whether an earlier look's bounds may be intersected with this look's: fixed-n looks each
/// spent their own share of δ, so the union bound covers all of them together; looks of a
/// method valid at any time may be intersected only when they ran the same method at the same
/// level, for then they are points of one confidence sequence.
pub fn combinable(earlier: &LookRecord, method: &Method, budget: f64) -> bool {
    match method.guarantee {
        Guarantee::FixedN => earlier.guarantee == Guarantee::FixedN.id() && earlier.spent > 0.0,
        Guarantee::Anytime => {
            earlier.guarantee == Guarantee::Anytime.id()
                && earlier.method == method.id
                && earlier.delta == budget
        }
    }
}

/// The running intersection of `own` (this look's bounds, data units) with the combinable
/// earlier bounds of the arm called `arm`: the smallest upper end and the largest lower end.
pub fn intersect(
    own: (Option<f64>, Option<f64>),
    arm: &str,
    earlier: &[&LookRecord],
) -> (Option<f64>, Option<f64>) {
    let (mut lower, mut upper) = own;
    for record in earlier {
        if let Some(a) = record.arms.iter().find(|a| a.name == arm) {
            if let (Some(u), Some(e)) = (upper, a.upper) {
                upper = Some(u.min(e));
            }
            if let (Some(l), Some(e)) = (lower, a.lower) {
                lower = Some(l.max(e));
            }
        }
    }
    (lower, upper)
}

/// The arm of the latest earlier look with more trials than `n` now, if any: data should only
/// grow from look to look.
pub fn shrunk<'a>(earlier: &'a [LookRecord], arm: &str, n: u64) -> Option<&'a LookArm> {
    earlier
        .last()?
        .arms
        .iter()
        .find(|a| a.name == arm && a.n > n)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::model::Verdict;

    fn record(
        method: &str,
        guarantee: Guarantee,
        delta: f64,
        spent: f64,
        upper: f64,
    ) -> LookRecord {
        LookRecord {
            look: 1,
            time: None,
            method: method.to_string(),
            guarantee: guarantee.id().to_string(),
            delta,
            spent,
            verdict: Verdict::Inconclusive,
            arms: vec![LookArm {
                name: "all".to_string(),
                n: 10,
                upper: Some(upper),
                lower: Some(0.0),
            }],
        }
    }

    // METHODS.md §11: fixed-n looks that each spent their share combine by the union bound;
    // a confidence sequence combines only with itself at the same level.
    #[test]
    fn only_bounds_covered_by_one_budget_combine() {
        let exact = crate::bounds::find("exact").unwrap();
        let fixed = record("hoeffding", Guarantee::FixedN, 0.025, 0.025, 0.1);
        assert!(combinable(&fixed, exact, 0.025));
        let free = record("exact", Guarantee::FixedN, 0.05, 0.0, 0.1);
        assert!(!combinable(&free, exact, 0.025));
        let seq = record("exact", Guarantee::Anytime, 0.05, 0.0, 0.1);
        assert!(!combinable(&seq, exact, 0.05));
    }

    #[test]
    fn intersection_keeps_the_tightest_ends() {
        let a = record("exact", Guarantee::FixedN, 0.025, 0.025, 0.08);
        let b = record("exact", Guarantee::FixedN, 0.025, 0.025, 0.12);
        let (lo, hi) = intersect((Some(0.01), Some(0.1)), "all", &[&a, &b]);
        assert_eq!(hi, Some(0.08));
        assert_eq!(lo, Some(0.01));
        let (_, hi) = intersect((Some(0.01), Some(0.1)), "other", &[&a]);
        assert_eq!(hi, Some(0.1));
    }
}
