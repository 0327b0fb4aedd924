//! The plan results model, format `surety-plan/1` (DESIGN §6): what `surety plan --json` prints
//! and what the report's sample-size section reads. Numbers are full-precision `f64`; absent
//! values are `null`, so every document has the same shape.

use serde::{Deserialize, Serialize};

use super::bounded::{AssumedLaw, LawKind, bounded_sizes};
use super::demonstration::ExactTest;
use super::operating::{Operating, operating, target_trials};
use super::simulate::{MeanBound, SimConfig, simulate_n_with};
use super::still_needed::{AtObservedRate, still_needed};
use super::{PlanError, check_pass_probability};

/// The format id written in every plan document.
pub const FORMAT: &str = "surety-plan/1";

/// Allowed event counts planned when the spec lists none.
pub const DEFAULT_ALLOWED_EVENTS: [u64; 4] = [0, 1, 2, 3];

/// How the tie, the "held" sample size and the observed-rate projection are defined, in words
/// for the report.
pub const TIE_RULE: &str = "The exact test passes when the upper bound is at most the limit, \
    equality included. The bound is at most the limit exactly when the chance of at most the \
    observed events at the limit is at most the error budget; a chance that double-precision \
    arithmetic cannot tell from the budget (within 4e-15 to 2e-14 of it in relative terms, times \
    1 + ln(1/budget)) counts as equal, so that ties written in decimals pass however they were \
    rounded.";
/// See [`TIE_RULE`].
pub const HELD_RULE: &str = "The sample size for the wanted chance of passing is the smallest \
    number of trials from which that chance is reached at that number and every larger one. The \
    chance falls between the steps of the allowed number of events, so it can be reached first \
    at a smaller number and lost again.";
/// See [`TIE_RULE`].
pub const OBSERVED_RATE_RULE: &str = "At the observed rate: with N trials in total the events \
    are projected as ceil(k N / n), the observed rate rounded up; the answer is the first number \
    of further trials at which that projection passes.";

/// The plan document.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PlanResults {
    /// Always [`FORMAT`].
    pub format: String,
    /// The claim planned for.
    pub claim: PlanClaim,
    /// `binary` or `bounded`.
    pub outcome: String,
    /// The definitions the numbers follow, in words.
    pub rules: Rules,
    /// Binary: one demonstration plan per allowed number of events, increasing.
    pub demonstration: Vec<DemonstrationRow>,
    /// Binary: the operating characteristic of each demonstration plan, then of the target plan
    /// when it is not among them.
    pub operating: Vec<OperatingRow>,
    /// Binary: the sample size for the wanted chance of passing at the assumed rate.
    pub target: Option<TargetRow>,
    /// Binary, with data already collected: the trials still needed.
    pub still_needed: Option<StillNeededRow>,
    /// Bounded: plug-in and simulated sample sizes.
    pub bounded: Option<BoundedRow>,
}

/// The claim: `rate ≤ limit` (or `mean ≤ limit`) at confidence 1 − δ.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PlanClaim {
    /// Always `upper` here (lower claims are mirrored by the caller).
    pub side: String,
    /// The limit, in data units for bounded outcomes.
    pub limit: f64,
    /// The confidence as given (for display; computations use `delta`).
    pub confidence: f64,
    /// δ = 1 − confidence, as carried.
    pub delta: f64,
}

/// The definitions in words.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Rules {
    /// [`TIE_RULE`].
    pub tie: String,
    /// [`HELD_RULE`].
    pub held: String,
    /// [`OBSERVED_RATE_RULE`].
    pub at_observed_rate: String,
}

/// One demonstration plan.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DemonstrationRow {
    /// Events allowed, c.
    pub allowed_events: u64,
    /// Smallest number of trials with which c events pass.
    pub trials: u64,
    /// `P(Bin(trials, limit) ≤ c)`: the chance of passing when the rate equals the limit (≤ δ).
    pub consumer_risk: f64,
}

/// The operating characteristic of one plan.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct OperatingRow {
    /// Number of trials.
    pub trials: u64,
    /// Acceptance number at that number of trials.
    pub allowed_events: u64,
    /// The assumed rate, when given.
    pub assumed_rate: Option<f64>,
    /// Chance of passing at the assumed rate.
    pub pass_probability_at_assumed: Option<f64>,
    /// Chance of passing at the limit (≤ δ).
    pub consumer_risk: f64,
    /// Chance of not passing at the assumed rate.
    pub producer_risk: Option<f64>,
    /// `[rate, chance of passing]`, increasing in rate.
    pub curve: Vec<[f64; 2]>,
}

impl From<Operating> for OperatingRow {
    fn from(o: Operating) -> Self {
        OperatingRow {
            trials: o.trials,
            allowed_events: o.allowed_events,
            assumed_rate: o.assumed_rate,
            pass_probability_at_assumed: o.pass_probability_at_assumed,
            consumer_risk: o.consumer_risk,
            producer_risk: o.producer_risk,
            curve: o.curve,
        }
    }
}

/// The sample size for a wanted chance of passing at the assumed rate.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TargetRow {
    /// The assumed rate.
    pub assumed_rate: f64,
    /// The wanted chance of passing.
    pub pass_probability: f64,
    /// Smallest n from which the chance is reached at n and every larger n; `null` when
    /// unreachable.
    pub trials: Option<u64>,
    /// Acceptance number at `trials`.
    pub allowed_events: Option<u64>,
    /// Chance of passing at `trials`.
    pub pass_probability_at_trials: Option<f64>,
    /// Smallest n at which the chance is reached at all.
    pub first_reached: Option<u64>,
    /// Acceptance number at `first_reached`.
    pub first_reached_allowed_events: Option<u64>,
    /// Chance of passing at `first_reached`.
    pub pass_probability_at_first_reached: Option<f64>,
    /// From here on a Chernoff bound proves the target; below it every n was settled exactly.
    pub proven_from: Option<u64>,
    /// Why no sample size reaches the target, when none does.
    pub unreachable: Option<String>,
}

/// Trials still needed after the data collected so far.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct StillNeededRow {
    /// Events so far.
    pub events: u64,
    /// Trials so far.
    pub trials: u64,
    /// Further trials needed if none has an event.
    pub zero_further_events: u64,
    /// Further trials needed if events continue at the observed rate (rounded up); `null` when
    /// that never passes.
    pub at_observed_rate: Option<u64>,
    /// Events projected at that point.
    pub at_observed_rate_events: Option<u64>,
    /// Why the observed-rate projection never passes, when it does not.
    pub at_observed_rate_reason: Option<String>,
}

/// Bounded outcome: the assumed law and the sample sizes per method.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BoundedRow {
    /// Declared range [a, b].
    pub range: [f64; 2],
    /// Assumed mean (data units).
    pub assumed_mean: f64,
    /// Assumed standard deviation (data units).
    pub assumed_sd: f64,
    /// Law simulated: `beta`, `two-point` or `point`.
    pub law: String,
    /// Beta shapes on the unit scale, for `beta`.
    pub alpha: Option<f64>,
    /// See `alpha`.
    pub beta: Option<f64>,
    /// Plug-in sample size per method.
    pub sizes: Vec<BoundedSizeRow>,
    /// Simulated sample size per method, when a pass probability was wanted.
    pub simulated: Vec<SimulatedRow>,
}

/// A plug-in sample size.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BoundedSizeRow {
    /// Method id.
    pub method: String,
    /// Smallest n at which the plug-in bound meets the limit.
    pub trials: u64,
    /// Unrounded closed-form n, where one exists.
    pub closed_form: Option<f64>,
}

/// A simulated sample size.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SimulatedRow {
    /// Method id.
    pub method: String,
    /// Wanted chance of passing.
    pub pass_probability: f64,
    /// Sample size at which the simulated fraction reaches it.
    pub trials: u64,
    /// Simulated fraction there.
    pub pass_fraction: f64,
    /// Simulated fraction one below.
    pub pass_fraction_below: Option<f64>,
    /// Monte Carlo standard error at the target.
    pub standard_error: f64,
    /// Replications per sample size.
    pub replications: u32,
    /// Seed.
    pub seed: u64,
}

/// What a binary plan is computed from (the `plan:` section with the claim).
#[derive(Debug, Clone, Copy)]
pub struct BinaryRequest<'a> {
    /// The claim's limit on the rate, in (0, 1).
    pub limit: f64,
    /// δ, in (0, 1).
    pub delta: f64,
    /// The confidence as written (display only).
    pub confidence: f64,
    /// Allowed event counts; empty means [`DEFAULT_ALLOWED_EVENTS`].
    pub allowed_events: &'a [u64],
    /// The rate believed true.
    pub assumed_rate: Option<f64>,
    /// Wanted chance of passing at the assumed rate.
    pub pass_probability: Option<f64>,
    /// `(events, trials)` collected so far.
    pub observed: Option<(u64, u64)>,
}

/// What a bounded plan is computed from.
pub struct BoundedRequest<'a> {
    /// Declared range, lower end.
    pub low: f64,
    /// Declared range, upper end.
    pub high: f64,
    /// The claim's limit on the mean (data units), strictly inside the range.
    pub limit: f64,
    /// δ, in (0, 1).
    pub delta: f64,
    /// The confidence as written (display only).
    pub confidence: f64,
    /// Assumed mean (data units).
    pub assumed_mean: f64,
    /// Assumed standard deviation (data units).
    pub assumed_sd: f64,
    /// Wanted chance of passing; simulations run only when it is given.
    pub pass_probability: Option<f64>,
    /// Bounds to simulate, by method id: `bound(observations on [0, 1], delta)`.
    pub simulate: &'a [(&'a str, &'a MeanBound)],
    /// Seed of the simulations.
    pub seed: u64,
    /// Replications and cap of the simulations.
    pub config: SimConfig,
}

fn rules() -> Rules {
    Rules {
        tie: TIE_RULE.to_string(),
        held: HELD_RULE.to_string(),
        at_observed_rate: OBSERVED_RATE_RULE.to_string(),
    }
}

fn claim(limit: f64, confidence: f64, delta: f64) -> PlanClaim {
    PlanClaim {
        side: "upper".to_string(),
        limit,
        confidence,
        delta,
    }
}

/// The binary plan: demonstration plans for each allowed event count, their operating
/// characteristics, the target sample size (when an assumed rate and a pass probability are
/// given) and the trials still needed (when data are given). An unreachable target is recorded
/// in the document with its reason; every other problem is an error.
pub fn binary_plan(req: &BinaryRequest<'_>) -> Result<PlanResults, PlanError> {
    let test = ExactTest::new(req.limit, req.delta)?;
    if let Some(p) = req.pass_probability {
        check_pass_probability(p)?;
    }
    let mut counts: Vec<u64> = if req.allowed_events.is_empty() {
        DEFAULT_ALLOWED_EVENTS.to_vec()
    } else {
        req.allowed_events.to_vec()
    };
    counts.sort_unstable();
    counts.dedup();
    let mut demonstration = Vec::with_capacity(counts.len());
    let mut operating_rows: Vec<OperatingRow> = Vec::with_capacity(counts.len() + 1);
    for &c in &counts {
        let n = test.min_trials(c)?;
        demonstration.push(DemonstrationRow {
            allowed_events: c,
            trials: n,
            consumer_risk: test.ln_tail(c, n).exp(),
        });
        operating_rows.push(operating(n, req.limit, req.delta, req.assumed_rate)?.into());
    }
    let target = match (req.assumed_rate, req.pass_probability) {
        (Some(rate), Some(p)) => Some(match target_trials(req.limit, req.delta, rate, p) {
            Ok(t) => {
                if !operating_rows.iter().any(|o| o.trials == t.trials) {
                    operating_rows
                        .push(operating(t.trials, req.limit, req.delta, Some(rate))?.into());
                }
                TargetRow {
                    assumed_rate: rate,
                    pass_probability: p,
                    trials: Some(t.trials),
                    allowed_events: Some(t.allowed_events),
                    pass_probability_at_trials: Some(t.pass_probability_at_trials),
                    first_reached: Some(t.first_reached),
                    first_reached_allowed_events: Some(t.first_reached_allowed_events),
                    pass_probability_at_first_reached: Some(t.pass_probability_at_first_reached),
                    proven_from: Some(t.proven_from),
                    unreachable: None,
                }
            }
            Err(PlanError::Unreachable(u)) => TargetRow {
                assumed_rate: rate,
                pass_probability: p,
                trials: None,
                allowed_events: None,
                pass_probability_at_trials: None,
                first_reached: None,
                first_reached_allowed_events: None,
                pass_probability_at_first_reached: None,
                proven_from: None,
                unreachable: Some(u.to_string()),
            },
            Err(e) => return Err(e),
        }),
        _ => None,
    };
    let still = match req.observed {
        Some((events, trials)) => {
            let s = still_needed(events, trials, req.limit, req.delta)?;
            let (further, projected, reason) = match s.at_observed_rate {
                AtObservedRate::Reached { further, events } => (Some(further), Some(events), None),
                AtObservedRate::Unreachable(u) => (None, None, Some(u.to_string())),
            };
            Some(StillNeededRow {
                events,
                trials,
                zero_further_events: s.zero_further_events,
                at_observed_rate: further,
                at_observed_rate_events: projected,
                at_observed_rate_reason: reason,
            })
        }
        None => None,
    };
    Ok(PlanResults {
        format: FORMAT.to_string(),
        claim: claim(req.limit, req.confidence, req.delta),
        outcome: "binary".to_string(),
        rules: rules(),
        demonstration,
        operating: operating_rows,
        target,
        still_needed: still,
        bounded: None,
    })
}

/// The bounded plan: the assumed law, plug-in sample sizes per method, and (with a pass
/// probability) a simulated sample size for every bound in `simulate`.
pub fn bounded_plan(req: &BoundedRequest<'_>) -> Result<PlanResults, PlanError> {
    let law = AssumedLaw::new(req.low, req.high, req.assumed_mean, req.assumed_sd)?;
    let sizes = bounded_sizes(&law, req.limit, req.delta)?
        .into_iter()
        .map(|s| BoundedSizeRow {
            method: s.method.to_string(),
            trials: s.trials,
            closed_form: s.closed_form,
        })
        .collect();
    let mut simulated = Vec::new();
    if let Some(p) = req.pass_probability {
        for &(method, bound) in req.simulate {
            let s = simulate_n_with(bound, &law, p, req.delta, req.limit, req.seed, &req.config)?;
            simulated.push(SimulatedRow {
                method: method.to_string(),
                pass_probability: p,
                trials: s.trials,
                pass_fraction: s.pass_fraction,
                pass_fraction_below: s.pass_fraction_below,
                standard_error: s.standard_error,
                replications: s.replications,
                seed: s.seed,
            });
        }
    }
    let (name, alpha, beta) = match law.kind {
        LawKind::Point => ("point", None, None),
        LawKind::TwoPoint => ("two-point", None, None),
        LawKind::Beta { alpha, beta } => ("beta", Some(alpha), Some(beta)),
    };
    Ok(PlanResults {
        format: FORMAT.to_string(),
        claim: claim(req.limit, req.confidence, req.delta),
        outcome: "bounded".to_string(),
        rules: rules(),
        demonstration: Vec::new(),
        operating: Vec::new(),
        target: None,
        still_needed: None,
        bounded: Some(BoundedRow {
            range: [req.low, req.high],
            assumed_mean: req.assumed_mean,
            assumed_sd: req.assumed_sd,
            law: name.to_string(),
            alpha,
            beta,
            sizes,
            simulated,
        }),
    })
}

/// One row of the standard table: the zero- to three-event plans for one
/// confidence / reliability pair.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct StandardRow {
    /// Confidence in percent.
    pub confidence_percent: u32,
    /// Reliability in percent (the limit on the failure rate is 1 − reliability).
    pub reliability_percent: u32,
    /// δ = 1 − confidence.
    pub delta: f64,
    /// Limit on the failure rate.
    pub limit: f64,
    /// Trials for 0, 1, 2 and 3 allowed failures.
    pub trials: Vec<u64>,
}

/// The usual confidence / reliability pairs, with δ and the failure-rate limit written as
/// decimals (never computed as 1 − confidence, so they are the doubles nearest the decimals).
const STANDARD_PAIRS: [(u32, u32, f64, f64); 5] = [
    (90, 90, 0.10, 0.10),
    (95, 90, 0.05, 0.10),
    (95, 95, 0.05, 0.05),
    (95, 99, 0.05, 0.01),
    (99, 99, 0.01, 0.01),
];

/// The standard demonstration table: trials for c = 0…3 allowed failures at the confidence /
/// reliability pairs 90/90, 95/90, 95/95, 95/99 and 99/99, computed with [`super::min_trials`].
pub fn standard_table() -> Result<Vec<StandardRow>, PlanError> {
    STANDARD_PAIRS
        .iter()
        .map(|&(conf, rel, delta, limit)| {
            let test = ExactTest::new(limit, delta)?;
            let trials = (0..=3)
                .map(|c| test.min_trials(c))
                .collect::<Result<Vec<_>, _>>()?;
            Ok(StandardRow {
                confidence_percent: conf,
                reliability_percent: rel,
                delta,
                limit,
                trials,
            })
        })
        .collect()
}
