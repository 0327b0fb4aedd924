//! A study spec's claim and `plan:` section as a planning request, and its plan.
//!
//! The plan uses the same error budget per bound as the analysis would (arms under scope `all`
//! or `best`, two sides of a two-sided claim), so a plan that says "n trials pass" is decided by
//! the same rule as the run. Lower claims are planned on the mirror image (DESIGN.md §7).

use super::model::{BinaryRequest, BoundedRequest, PlanResults, binary_plan, bounded_plan};
use super::simulate::{MeanBound, SimConfig};
use super::{PlanError, Unreachable};
use crate::adjust::{self, Division};
use crate::bounds::{self, Sample, Summary};
use crate::data::{Dataset, Values};
use crate::spec::{OutcomeKind, Scope, Side, Spec, SpecError};

/// Seed of every planning simulation: fixed, so a plan is reproducible byte for byte.
pub const PLAN_SEED: u64 = 20_261_202;

/// Replications per sample size in planning simulations of sequential (O(n)) bounds.
pub const PLAN_REPLICATIONS: u32 = 200;

/// The δ each one-sided bound may use, as the analysis divides it. With several planned
/// looks, the plan is for the last one, whose share of δ is the one a demonstration at the full
/// planned size gets (δ/L under equal spending).
pub fn delta_per_bound(spec: &Spec, arms: u64, primary_two_sided_built: bool) -> f64 {
    let mut divisions = Vec::new();
    let planned = spec.looks.planned;
    if planned > 1
        && let Some(share) = spec.looks.share(planned)
    {
        divisions.push(Division::Look {
            look: planned,
            planned,
            share,
            equal: spec.looks.spending == crate::spec::Spending::Equal,
        });
    }
    if arms > 1 {
        match spec.claim.scope {
            Scope::All => divisions.push(Division::AllArms(arms)),
            Scope::Best => divisions.push(Division::BestOf(arms)),
            Scope::Each => {}
        }
    }
    if spec.claim.side == Side::TwoSided && !primary_two_sided_built {
        divisions.push(Division::TwoSides);
    }
    adjust::divide(spec.claim.delta, &divisions).delta_per_bound
}

fn located(spec: &Spec, e: PlanError) -> SpecError {
    let key = match e {
        PlanError::PassProbability(_) => "plan.pass_probability",
        PlanError::AssumedRate(_) | PlanError::AssumedMean { .. } => "plan.assumed_rate",
        PlanError::AssumedSd { .. } => "plan.assumed_sd",
        PlanError::Limit { .. } => "claim.limit",
        PlanError::Delta(_) => "claim.confidence",
        PlanError::Unreachable(Unreachable::AssumedNotBelowLimit { .. }) => "plan.assumed_rate",
        _ => "plan",
    };
    let key = if spec.locate(key).is_some() {
        key
    } else {
        "plan"
    };
    spec.error_at(key, e.to_string(), None)
}

fn betting_bound(x: &[f64], delta: f64) -> f64 {
    let Some(summary) = Summary::from_values(x) else {
        return 1.0;
    };
    let sample = Sample {
        summary,
        observations: Some(x),
    };
    bounds::betting::upper(&sample, delta)
}

/// The plan of a study: demonstration plans, operating characteristics and the sample size for
/// the wanted chance of passing (binary), or per-method sample sizes (bounded), plus the trials
/// still needed when the data in `data` did not yet pass.
pub fn plan(spec: &Spec, data: Option<&Dataset>) -> Result<PlanResults, SpecError> {
    if spec.looks.mode == crate::spec::LookMode::Anytime {
        return Err(spec.error_at(
            "looks.mode",
            "sample sizes are planned for fixed-n bounds; a study looked at any time uses a \
             confidence sequence, which needs more trials than these plans would show",
            Some(
                "plan with `looks.mode: planned` to see the fixed-n figures, and allow extra \
                 trials for the sequence"
                    .to_string(),
            ),
        ));
    }
    let arms = data
        .map(|d| d.arms.len() as u64)
        .unwrap_or(match &spec.data.source {
            crate::spec::DataSource::Arms(a) => a.len() as u64,
            _ => 1,
        });
    let p = spec.plan.clone().unwrap_or(crate::spec::Plan {
        assumed_rate: None,
        assumed_sd: None,
        pass_probability: None,
        allowed_events: Vec::new(),
        registered: None,
    });
    let lower = spec.claim.side == Side::Lower;
    match spec.outcome.kind {
        OutcomeKind::Binary => {
            let delta = delta_per_bound(spec, arms, false);
            let mirror = |r: f64| if lower { 1.0 - r } else { r };
            // Trials so far, for a single arm only: several arms each need their own count.
            let observed = data.and_then(|d| match d.arms.as_slice() {
                [arm] => match arm.values {
                    Values::Counts { events } => {
                        Some((if lower { arm.n - events } else { events }, arm.n))
                    }
                    Values::Bounded(_) => None,
                },
                _ => None,
            });
            let req = BinaryRequest {
                limit: mirror(spec.claim.limit),
                delta,
                confidence: spec.claim.confidence,
                allowed_events: &p.allowed_events,
                assumed_rate: p.assumed_rate.map(mirror),
                pass_probability: p.pass_probability,
                observed,
            };
            binary_plan(&req).map_err(|e| located(spec, e))
        }
        OutcomeKind::Bounded => {
            let Some((a, b)) = spec.outcome.range else {
                return Err(spec.error_at(
                    "outcome.range",
                    "a bounded outcome needs a range",
                    None,
                ));
            };
            let (Some(mean), Some(sd)) = (p.assumed_rate, p.assumed_sd) else {
                return Err(spec.error_at(
                    "plan",
                    "planning a bounded outcome needs `assumed_rate` (the assumed mean) and \
                     `assumed_sd` in the plan section",
                    Some(
                        "for example plan: {assumed_rate: 0.28, assumed_sd: 0.12, \
                          pass_probability: 0.9}"
                            .to_string(),
                    ),
                ));
            };
            // Two-sided claims halve δ for every method planned here: the hedged betting
            // interval's ends are exactly the one-sided bounds at δ/2, and the others split it.
            let delta = delta_per_bound(spec, arms, false);
            // Reflect x ↦ a + b − x for a lower claim: the mean's lower bound becomes an upper one.
            let flip = |x: f64| if lower { a + b - x } else { x };
            let sims: Vec<(&str, &MeanBound)> = if p.pass_probability.is_some() {
                vec![("betting", &betting_bound as &MeanBound)]
            } else {
                Vec::new()
            };
            let req = BoundedRequest {
                low: a,
                high: b,
                limit: flip(spec.claim.limit),
                delta,
                confidence: spec.claim.confidence,
                assumed_mean: flip(mean),
                assumed_sd: sd,
                pass_probability: p.pass_probability,
                simulate: &sims,
                seed: PLAN_SEED,
                config: SimConfig {
                    replications: PLAN_REPLICATIONS,
                    ..SimConfig::default()
                },
            };
            bounded_plan(&req).map_err(|e| located(spec, e))
        }
    }
}
