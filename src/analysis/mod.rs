//! Orchestration: a validated [`Spec`] and its data become one [`Analysis`].
//!
//! Everything here is pure. The caller supplies what comes from outside (the report date, the
//! hashes of the spec, template and fonts), so the same inputs always give the same result.

pub mod display;
pub mod model;

use crate::adjust::{self, Division};
use crate::bounds::{self, Confirmation, Method};
use crate::provenance::ReportDate;
use crate::spec::suggest::closest;
use crate::spec::{self, DataSource, Side, Spec, SpecError};
use display::Rounding;
use model::*;

/// Facts from outside the spec that the analysis records.
#[derive(Debug, Clone)]
pub struct Context {
    /// The report date, already resolved (spec, SOURCE_DATE_EPOCH or clock).
    pub date: ReportDate,
    /// The spec's file name as it should appear in provenance (no folders).
    pub spec_name: String,
    /// SHA-256 of the spec's bytes.
    pub spec_sha256: String,
    /// SHA-256 of the report template's text.
    pub template_sha256: String,
    /// SHA-256 of the embedded fonts.
    pub fonts_sha256: String,
}

/// Name and version of this program, as recorded in results.
pub fn tool() -> Tool {
    Tool {
        name: "surety".to_string(),
        version: env!("CARGO_PKG_VERSION").to_string(),
    }
}

/// Counts of one arm, ready for the bounds.
#[derive(Debug, Clone)]
struct ArmCounts {
    name: String,
    trials: u64,
    events: u64,
}

/// The methods chosen for a study: the primary and the compare methods.
#[derive(Debug, Clone)]
pub struct MethodSelection {
    /// The method whose bound is the guarantee.
    pub primary: &'static Method,
    /// Methods shown beside it, for information only.
    pub compare: Vec<&'static Method>,
}

/// Refuse what this version cannot analyse, with a located message, before any computation.
fn require_supported(spec: &Spec) -> Result<(), SpecError> {
    if spec.outcome.kind != spec::OutcomeKind::Binary {
        return Err(spec.error_at(
            "outcome.type",
            "bounded outcomes are not analysed by this version of surety",
            Some("this version handles binary (event / no event) outcomes".to_string()),
        ));
    }
    if let DataSource::File(_) = spec.data.source {
        return Err(spec.error_at(
            "data.file",
            "reading trials from a data file is not supported by this version of surety",
            Some("give the counts inline: `trials:` and `events:`, or a list of `arms:`".into()),
        ));
    }
    if spec.dependence.model != spec::DependenceModel::Independent {
        return Err(spec.error_at(
            "dependence.model",
            "only `independent` trials are analysed by this version of surety",
            Some("clustered, martingale and m-dependent models need per-trial data".into()),
        ));
    }
    if spec.looks.mode != spec::LookMode::Planned || spec.looks.planned != 1 {
        let key = if spec.looks.mode != spec::LookMode::Planned {
            "looks.mode"
        } else {
            "looks.planned"
        };
        return Err(spec.error_at(
            key,
            "this version of surety analyses a single planned look only",
            Some("remove the `looks` section, or set `mode: planned` and `planned: 1`".into()),
        ));
    }
    if spec.looks.ledger.is_some() {
        return Err(spec.error_at(
            "looks.ledger",
            "the look ledger is not supported by this version of surety",
            None,
        ));
    }
    if spec.plan.is_some() {
        return Err(spec.error_at(
            "plan",
            "the `plan` section is used for sample-size planning, which this version of surety \
             does not provide",
            Some("remove the section; it does not change the analysis".into()),
        ));
    }
    for id in spec.attestations.keys() {
        if bounds::assumption(id).is_none() {
            let known: Vec<&str> = bounds::ASSUMPTIONS.iter().map(|a| a.id).collect();
            let key = format!("attestations.{id}");
            let mut error = spec.error_at(
                &key,
                format!("`{id}` is not an assumption surety knows"),
                Some(format!(
                    "{}known assumptions: {}",
                    closest(id, &known)
                        .map(|c| format!("did you mean `{c}`? "))
                        .unwrap_or_default(),
                    known.join(", ")
                )),
            );
            // The key itself is what is wrong here, not the attestation under it.
            if let Some(at) = spec.locate_key(&key) {
                error.location = Some(at);
            }
            return Err(error);
        }
    }
    Ok(())
}

/// Resolve `method.primary` (`auto` or an id) and `method.compare` against the catalogue.
///
/// `auto` depends on the spec alone, never on the data, so choosing it costs no confidence.
pub fn select_methods(spec: &Spec) -> Result<MethodSelection, SpecError> {
    let outcome = bounds::OutcomeKind::Binary;
    let dependence = bounds::Dependence::Independent;
    let ids: Vec<&str> = bounds::CATALOGUE.iter().map(|m| m.id).collect();
    let lookup = |key: &str, id: &str| -> Result<&'static Method, SpecError> {
        let method = bounds::find(id).ok_or_else(|| {
            spec.error_at(
                key,
                format!("`{id}` is not a method surety knows"),
                Some(format!(
                    "{}methods: auto, {} (see `surety methods`)",
                    closest(id, &ids)
                        .map(|c| format!("did you mean `{c}`? "))
                        .unwrap_or_default(),
                    ids.join(", ")
                )),
            )
        })?;
        if !method.valid_for(outcome, dependence) {
            let valid: Vec<&str> = bounds::CATALOGUE
                .iter()
                .filter(|m| m.valid_for(outcome, dependence))
                .map(|m| m.id)
                .collect();
            return Err(spec.error_at(
                key,
                format!("`{id}` is not valid for binary outcomes from independent trials"),
                Some(format!("valid methods here: {}", valid.join(", "))),
            ));
        }
        Ok(method)
    };
    let primary = if spec.method.primary == "auto" {
        bounds::find("exact").expect("the catalogue has the exact method")
    } else {
        lookup("method.primary", &spec.method.primary)?
    };
    let mut compare: Vec<&'static Method> = Vec::new();
    for (i, id) in spec.method.compare.iter().enumerate() {
        let key = format!("method.compare[{i}]");
        let method = lookup(&key, id)?;
        if method.id == primary.id || compare.iter().any(|m| m.id == method.id) {
            return Err(spec.error_at(
                &key,
                format!("`{id}` is listed twice (as primary or compare method)"),
                None,
            ));
        }
        compare.push(method);
    }
    if spec.method.compare.is_empty() {
        compare = bounds::CATALOGUE
            .iter()
            .filter(|m| m.id != primary.id && m.valid_for(outcome, dependence))
            .collect();
    }
    Ok(MethodSelection { primary, compare })
}

fn arms_of(spec: &Spec) -> Vec<ArmCounts> {
    match &spec.data.source {
        DataSource::Counts { trials, events } => vec![ArmCounts {
            name: "all".to_string(),
            trials: *trials,
            events: *events,
        }],
        DataSource::Arms(arms) => arms
            .iter()
            .map(|a| ArmCounts {
                name: a.name.clone(),
                trials: a.trials,
                events: a.events,
            })
            .collect(),
        DataSource::File(_) => Vec::new(),
    }
}

fn side_id(side: Side) -> &'static str {
    match side {
        Side::Upper => "upper",
        Side::Lower => "lower",
        Side::TwoSided => "two-sided",
    }
}

fn scope_id(scope: spec::Scope) -> &'static str {
    match scope {
        spec::Scope::Each => "each",
        spec::Scope::All => "all",
        spec::Scope::Best => "best",
    }
}

/// Which bound decides a pass: the upper one, except for a lower-side claim.
fn deciding_is_upper(side: Side) -> bool {
    side != Side::Lower
}

/// Verdict of one arm from its primary bounds (DESIGN.md §7), on unrounded values.
pub fn verdict(side: Side, limit: f64, lower: f64, upper: f64) -> Verdict {
    match side {
        Side::Upper | Side::TwoSided => {
            if upper <= limit {
                Verdict::Pass
            } else if lower > limit {
                Verdict::Fail
            } else {
                Verdict::Inconclusive
            }
        }
        Side::Lower => {
            if lower >= limit {
                Verdict::Pass
            } else if upper < limit {
                Verdict::Fail
            } else {
                Verdict::Inconclusive
            }
        }
    }
}

fn worst(verdicts: impl Iterator<Item = Verdict>) -> Verdict {
    let mut result = Verdict::Pass;
    for v in verdicts {
        result = match (result, v) {
            (Verdict::Fail, _) | (_, Verdict::Fail) => Verdict::Fail,
            (Verdict::Inconclusive, _) | (_, Verdict::Inconclusive) => Verdict::Inconclusive,
            _ => Verdict::Pass,
        };
    }
    result
}

fn bound_result(
    method: &Method,
    arm: &ArmCounts,
    delta: f64,
    side: Side,
    full: bool,
) -> BoundResult {
    let counts = method
        .counts
        .expect("binary methods in the catalogue bound counts");
    let want_upper = full || deciding_is_upper(side);
    let want_lower = full || !deciding_is_upper(side);
    let upper = want_upper.then(|| (counts.upper)(arm.events, arm.trials, delta));
    let lower = want_lower.then(|| (counts.lower)(arm.events, arm.trials, delta));
    let vacuous = if deciding_is_upper(side) {
        upper.is_some_and(|u| u >= 1.0)
    } else {
        lower.is_some_and(|l| l <= 0.0)
    };
    BoundResult {
        method: method.id.to_string(),
        upper,
        lower,
        guarantee: method.guarantee.id().to_string(),
        vacuous,
        display: BoundDisplay {
            upper: upper.map(|u| display::percent(u, Rounding::Up)),
            lower: lower.map(|l| display::percent(l, Rounding::Down)),
        },
    }
}

/// Trial counts at which the curve is drawn: logarithmically spaced around the observed n.
fn curve_grid(n: u64) -> Vec<u64> {
    let lo = (n as f64 / 10.0).max(1.0);
    let hi = (n as f64 * 10.0).max(10.0);
    let steps = 48;
    let mut grid: Vec<u64> = (0..=steps)
        .map(|i| {
            let t = i as f64 / steps as f64;
            (lo.ln() + t * (hi.ln() - lo.ln())).exp().round().max(1.0) as u64
        })
        .collect();
    grid.push(n);
    grid.sort_unstable();
    grid.dedup();
    grid
}

fn curve(method: &Method, arm: &ArmCounts, delta: f64, side: Side) -> Curve {
    let counts = method
        .counts
        .expect("binary methods in the catalogue bound counts");
    let upper = deciding_is_upper(side);
    let bound = |k: u64, m: u64| {
        if upper {
            (counts.upper)(k, m, delta)
        } else {
            (counts.lower)(k, m, delta)
        }
    };
    let rate = arm.events as f64 / arm.trials as f64;
    let grid = curve_grid(arm.trials);
    let at_observed_rate = grid
        .iter()
        .map(|&m| {
            let k = ((rate * m as f64).round() as u64).min(m);
            [m as f64, bound(k, m)]
        })
        .collect();
    let no_further_events = grid
        .iter()
        .filter(|&&m| m >= arm.trials)
        .map(|&m| [m as f64, bound(arm.events, m)])
        .collect();
    Curve {
        bound: if upper { "upper" } else { "lower" }.to_string(),
        at_observed_rate,
        no_further_events,
        observed: [arm.trials as f64, bound(arm.events, arm.trials)],
    }
}

/// Smallest number of trials with no events at all whose exact upper bound meets `limit`.
fn zero_event_trials_needed(limit: f64, delta: f64) -> Option<u64> {
    if !(limit > 0.0 && limit < 1.0) {
        return None;
    }
    // Success-run estimate ln δ / ln(1 − limit), then confirmed with the bound itself so that
    // floating ties cannot put it one off.
    let estimate = (delta.ln() / (-limit).ln_1p()).ceil();
    if !estimate.is_finite() || estimate > 1e17 {
        return None;
    }
    let mut n = (estimate as u64).saturating_sub(2).max(1);
    while bounds::exact::upper(0, n, delta) > limit {
        n += 1;
    }
    Some(n)
}

fn checklist(spec: &Spec, primary: &Method, arms: &[ArmCounts]) -> Vec<ChecklistItem> {
    primary
        .assumptions
        .iter()
        .filter_map(|id| bounds::assumption(id))
        .map(|a| {
            let mut item = ChecklistItem {
                id: a.id.to_string(),
                text: a.text.to_string(),
                status: "open".to_string(),
                evidence: None,
                by: None,
                date: None,
                consequence: a.consequence.to_string(),
            };
            if a.confirmation == Confirmation::Data && a.id == "whole-counts" {
                item.status = "checked".to_string();
                let trials: u64 = arms.iter().map(|a| a.trials).sum();
                let events: u64 = arms.iter().map(|a| a.events).sum();
                item.evidence = Some(if arms.len() == 1 {
                    format!(
                        "{} event{} in {} trials, both whole numbers, events ≤ trials",
                        display::count(events),
                        if events == 1 { "" } else { "s" },
                        display::count(trials)
                    )
                } else {
                    format!(
                        "{} arms, {} events in {} trials in all; every arm has whole counts \
                         with events ≤ trials",
                        arms.len(),
                        display::count(events),
                        display::count(trials)
                    )
                });
            } else if let Some(att) = spec.attestations.get(a.id) {
                item.status = "attested".to_string();
                item.by = Some(att.by.clone());
                item.date = att.date.as_ref().map(|d| d.to_string());
                item.evidence = att.note.clone();
            } else if a.id == "independent-trials" {
                item.evidence = spec
                    .dependence
                    .rationale
                    .as_ref()
                    .map(|r| format!("rationale given, not attested: {r}"));
            }
            item
        })
        .collect()
}

fn method_info(method: &Method, role: &str) -> MethodInfo {
    MethodInfo {
        id: method.id.to_string(),
        name: method.name.to_string(),
        role: role.to_string(),
        citation: method.citation.to_string(),
        statement: method.statement.to_string(),
        formula_typst: method.formula_typst.to_string(),
        guarantee: method.guarantee.id().to_string(),
        assumptions: method.assumptions.iter().map(|s| s.to_string()).collect(),
    }
}

/// Standing cautions printed with every result.
pub fn cautions() -> Vec<String> {
    [
        "The guarantee holds only if every assumption in the checklist holds, and only for \
         the population and conditions the trials represent.",
        "A pass bounds the rate at the stated confidence; it does not show that the rate is \
         zero, nor that untested designs, lots or conditions behave alike.",
        "Each analysis of the same study is a look. Re-running a fixed-sample-size bound as \
         trials accumulate, and stopping when it passes, raises the false-pass risk above δ.",
        "surety computes statistical bounds. It does not replace the applicable regulations \
         and standards, the organisation's procedures, or review by a qualified statistician.",
    ]
    .iter()
    .map(|s| s.to_string())
    .collect()
}

fn comparison_word(side: Side, verdict: Verdict) -> &'static str {
    match (side, verdict) {
        (Side::Lower, Verdict::Pass) => "at or above",
        (Side::Lower, _) => "below",
        (_, Verdict::Pass) => "at or below",
        _ => "above",
    }
}

fn arm_sentence(claim: &ClaimInfo, side: Side, arm: &ArmResult) -> String {
    let conf = &claim.display.confidence;
    let limit = &claim.display.limit;
    let q = &claim.quantity;
    let p = &arm.primary.display;
    let upper = p.upper.clone().unwrap_or_default();
    let lower = p.lower.clone().unwrap_or_default();
    match (side, arm.verdict) {
        (Side::TwoSided, v) => {
            let tail = match v {
                Verdict::Pass => format!("at or below the limit of {limit}: pass."),
                Verdict::Fail => format!("above the limit of {limit}: fail."),
                Verdict::Inconclusive => format!(
                    "an interval that contains the limit of {limit}: inconclusive, more trials \
                     are needed."
                ),
            };
            format!("With {conf} confidence the {q} lies between {lower} and {upper}, {tail}")
        }
        (Side::Lower, Verdict::Pass) => format!(
            "With {conf} confidence the {q} is at least {lower}, at or above the limit of {limit}: pass."
        ),
        (Side::Lower, Verdict::Fail) => format!(
            "With {conf} confidence the {q} is at most {upper}, below the limit of {limit}: fail."
        ),
        (Side::Lower, Verdict::Inconclusive) => format!(
            "The {conf} lower bound on the {q} is {lower}, below the limit of {limit}, and the \
             upper bound {upper} does not fall below it: inconclusive, more trials are needed."
        ),
        (_, Verdict::Pass) => format!(
            "With {conf} confidence the {q} is at most {upper}, at or below the limit of {limit}: pass."
        ),
        (_, Verdict::Fail) => format!(
            "With {conf} confidence the {q} is at least {lower}, above the limit of {limit}: fail."
        ),
        (_, Verdict::Inconclusive) => format!(
            "The {conf} upper bound on the {q} is {upper}, above the limit of {limit}, and the \
             lower bound {lower} does not exceed it: inconclusive, more trials are needed."
        ),
    }
}

fn statement(
    claim: &ClaimInfo,
    side: Side,
    scope: spec::Scope,
    arms: &[ArmResult],
    selected: Option<usize>,
    verdict: Verdict,
) -> String {
    if arms.len() == 1 {
        return arm_sentence(claim, side, &arms[0]);
    }
    let k = arms.len();
    let count = |v: Verdict| arms.iter().filter(|a| a.verdict == v).count();
    let tally = format!(
        "{} pass, {} inconclusive, {} fail",
        count(Verdict::Pass),
        count(Verdict::Inconclusive),
        count(Verdict::Fail)
    );
    let word = match verdict {
        Verdict::Pass => "pass",
        Verdict::Fail => "fail",
        Verdict::Inconclusive => "inconclusive",
    };
    match scope {
        spec::Scope::Each => format!(
            "Each of the {k} arms was assessed on its own at {} confidence ({tally}); this is \
             not a simultaneous statement about all arms. Overall: {word}.",
            claim.display.confidence
        ),
        spec::Scope::All if verdict == Verdict::Pass => {
            let upper = deciding_is_upper(side);
            let key = |a: &&ArmResult| {
                if upper {
                    a.primary.upper.unwrap_or(1.0)
                } else {
                    -a.primary.lower.unwrap_or(0.0)
                }
            };
            let worst_arm = arms
                .iter()
                .max_by(|a, b| key(a).total_cmp(&key(b)))
                .unwrap_or(&arms[0]);
            let (word, value) = if upper {
                ("at most", worst_arm.primary.display.upper.clone())
            } else {
                ("at least", worst_arm.primary.display.lower.clone())
            };
            format!(
                "With {} confidence, simultaneously for all {k} arms, the {} is {word} {} in \
                 every arm (the least favourable is {}), {} the limit of {}: pass.",
                claim.display.confidence,
                claim.quantity,
                value.unwrap_or_default(),
                worst_arm.name,
                comparison_word(side, Verdict::Pass),
                claim.display.limit,
            )
        }
        spec::Scope::All => format!(
            "At {} confidence, simultaneously for all {k} arms: {tally}. Not every arm is shown \
             to meet the limit of {}: {word}.",
            claim.display.confidence, claim.display.limit
        ),
        spec::Scope::Best => {
            let arm = &arms[selected.unwrap_or(0)];
            format!(
                "Arm {}, selected as the best of {k} on the same data and certified at the \
                 adjusted level: {}",
                arm.name,
                arm_sentence(claim, side, arm)
            )
        }
    }
}

fn decision_rule(claim: &ClaimInfo, side: Side, primary: &Method, per_bound: f64) -> DecisionRule {
    let conf = &claim.display.confidence;
    let limit = &claim.display.limit;
    let text = match side {
        Side::Lower => format!(
            "Pass when the lower confidence bound of the primary method ({}) is at or above \
             the limit {limit}; fail when its upper bound at the same level is below the limit; \
             otherwise inconclusive. Each one-sided bound uses δ = {} after the adjustments \
             below (claim confidence {conf}). Comparisons use unrounded values.",
            primary.name,
            display::probability(per_bound)
        ),
        _ => format!(
            "Pass when the upper confidence bound of the primary method ({}) is at or below \
             the limit {limit}; fail when its lower bound at the same level exceeds the limit; \
             otherwise inconclusive. Each one-sided bound uses δ = {} after the adjustments \
             below (claim confidence {conf}). Comparisons use unrounded values.",
            primary.name,
            display::probability(per_bound)
        ),
    };
    DecisionRule {
        text,
        false_accept_risk: claim.delta,
        false_reject_note: "The rule caps the chance of a false pass at δ whatever the true \
                            rate. The chance of not passing when the true rate is below the \
                            limit is not capped: it shrinks as the true rate moves away from \
                            the limit and as the number of trials grows."
            .to_string(),
    }
}

/// Analyse a study: bounds per arm, verdicts, adjustments, checklist and provenance.
///
/// Errors are located in the spec: a capability this version lacks, or an unknown method or
/// assumption id. On success `provenance.results_sha256` is empty; it is filled in when the
/// results are serialised ([`crate::report::json`]).
pub fn analyse(spec: &Spec, ctx: &Context) -> Result<Analysis, SpecError> {
    require_supported(spec)?;
    let selection = select_methods(spec)?;
    let claim_spec = &spec.claim;
    let side = claim_spec.side;
    let arms = arms_of(spec);
    let k = arms.len() as u64;

    let mut divisions = Vec::new();
    if k > 1 {
        match claim_spec.scope {
            spec::Scope::All => divisions.push(Division::AllArms(k)),
            spec::Scope::Best => divisions.push(Division::BestOf(k)),
            spec::Scope::Each => {}
        }
    }
    if side == Side::TwoSided && !selection.primary.two_sided_built {
        divisions.push(Division::TwoSides);
    }
    let budget = adjust::divide(claim_spec.delta, &divisions);
    let per_bound = budget.delta_per_bound;

    let claim = ClaimInfo {
        quantity: claim_spec.quantity.clone(),
        side: side_id(side).to_string(),
        limit: claim_spec.limit,
        confidence: claim_spec.confidence,
        confidence_text: claim_spec.confidence_text.clone(),
        delta: claim_spec.delta,
        scope: scope_id(claim_spec.scope).to_string(),
        display: ClaimDisplay {
            limit: display::limit_percent(claim_spec.limit),
            confidence: format!("{}\u{a0}%", claim_spec.confidence_percent),
            delta: display::probability(claim_spec.delta),
            false_accept_risk: display::risk_percent(claim_spec.delta),
        },
    };

    let mut warnings = Vec::new();
    let arm_results: Vec<ArmResult> = arms
        .iter()
        .map(|arm| {
            let primary = bound_result(selection.primary, arm, per_bound, side, true);
            let compare = selection
                .compare
                .iter()
                .map(|m| bound_result(m, arm, per_bound, side, false))
                .collect();
            let v = verdict(
                side,
                claim_spec.limit,
                primary.lower.unwrap_or(0.0),
                primary.upper.unwrap_or(1.0),
            );
            let mean = arm.events as f64 / arm.trials as f64;
            ArmResult {
                name: arm.name.clone(),
                n: arm.trials,
                events: Some(arm.events),
                mean,
                delta: per_bound,
                primary,
                compare,
                verdict: v,
                curve: curve(selection.primary, arm, per_bound, side),
                display: ArmDisplay {
                    mean: display::percent(mean, Rounding::Nearest),
                    n: display::count(arm.trials),
                    events: Some(display::count(arm.events)),
                    delta: display::probability(per_bound),
                },
            }
        })
        .collect();

    let selected = (claim_spec.scope == spec::Scope::Best && arm_results.len() > 1).then(|| {
        let mut best = 0;
        for (i, a) in arm_results.iter().enumerate() {
            let better = if deciding_is_upper(side) {
                a.mean < arm_results[best].mean
            } else {
                a.mean > arm_results[best].mean
            };
            if better {
                best = i;
            }
        }
        best
    });
    let overall = match selected {
        Some(i) => arm_results[i].verdict,
        None => worst(arm_results.iter().map(|a| a.verdict)),
    };

    for arm in &arm_results {
        let prefix = if arm_results.len() > 1 {
            format!("arm {}: ", arm.name)
        } else {
            String::new()
        };
        if arm.primary.vacuous {
            warnings.push(format!(
                "{prefix}the primary bound is vacuous (it spans the whole range): these data \
                 say nothing about the rate at this confidence"
            ));
        }
        if arm.verdict == Verdict::Inconclusive
            && deciding_is_upper(side)
            && let Some(needed) = zero_event_trials_needed(claim_spec.limit, per_bound)
            && needed > arm.n
        {
            warnings.push(format!(
                "{prefix}even with no events at all, at least {} trials are needed for the exact \
                 upper bound to reach the limit at this confidence ({} were run)",
                display::count(needed),
                display::count(arm.n)
            ));
        }
    }

    let mut methods = vec![method_info(selection.primary, "primary")];
    methods.extend(selection.compare.iter().map(|m| method_info(m, "compare")));

    let statement = statement(
        &claim,
        side,
        claim_spec.scope,
        &arm_results,
        selected,
        overall,
    );
    let decision_rule = decision_rule(&claim, side, selection.primary, per_bound);
    let study = &spec.study;
    Ok(Analysis {
        format: RESULTS_FORMAT.to_string(),
        tool: tool(),
        study: StudyInfo {
            id: study.id.clone(),
            title: study.title.clone(),
            owner: study.owner.clone(),
            requirement: study.requirement.clone(),
            date: ctx.date.iso(),
            date_source: ctx.date.source.id().to_string(),
            description: study.description.clone(),
        },
        outcome: OutcomeInfo {
            kind: "binary".to_string(),
            event: spec.outcome.event.clone(),
            unit: spec.outcome.unit.clone(),
        },
        verdict: overall,
        statement,
        decision_rule,
        adjustments: Adjustments {
            arms: if claim_spec.scope == spec::Scope::Each {
                1
            } else {
                k
            },
            looks_planned: spec.looks.planned,
            look: 1,
            sides: if divisions.contains(&Division::TwoSides) {
                2
            } else {
                1
            },
            delta_per_bound: per_bound,
            steps: budget.steps,
            display_delta_per_bound: display::probability(per_bound),
        },
        checklist: checklist(spec, selection.primary, &arms),
        signatures: spec
            .signatures
            .iter()
            .map(|s| SignatureBlock {
                role: s.role.clone(),
                name: s.name.clone(),
                meaning: s.meaning.clone(),
            })
            .collect(),
        claim,
        arms: arm_results,
        methods,
        cautions: cautions(),
        warnings,
        provenance: Provenance {
            spec: FileDigest {
                path: ctx.spec_name.clone(),
                sha256: ctx.spec_sha256.clone(),
            },
            inputs: Vec::new(),
            tool_version: format!("surety {}", env!("CARGO_PKG_VERSION")),
            template_sha256: ctx.template_sha256.clone(),
            fonts_sha256: ctx.fonts_sha256.clone(),
            results_sha256: String::new(),
        },
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    // The verdict rule of DESIGN.md §7, on both sides of a boundary.
    #[test]
    fn verdict_rule_upper() {
        assert_eq!(verdict(Side::Upper, 0.01, 0.001, 0.01), Verdict::Pass);
        assert_eq!(
            verdict(Side::Upper, 0.01, 0.001, 0.0100001),
            Verdict::Inconclusive
        );
        assert_eq!(
            verdict(Side::Upper, 0.01, 0.01, 0.02),
            Verdict::Inconclusive
        );
        assert_eq!(verdict(Side::Upper, 0.01, 0.0100001, 0.02), Verdict::Fail);
    }

    #[test]
    fn verdict_rule_lower_is_the_mirror() {
        assert_eq!(verdict(Side::Lower, 0.9, 0.9, 0.99), Verdict::Pass);
        assert_eq!(verdict(Side::Lower, 0.9, 0.89, 0.99), Verdict::Inconclusive);
        assert_eq!(verdict(Side::Lower, 0.9, 0.5, 0.9), Verdict::Inconclusive);
        assert_eq!(verdict(Side::Lower, 0.9, 0.5, 0.8999), Verdict::Fail);
    }

    #[test]
    fn worst_verdict_wins() {
        use Verdict::*;
        assert_eq!(worst([Pass, Pass].into_iter()), Pass);
        assert_eq!(worst([Pass, Inconclusive].into_iter()), Inconclusive);
        assert_eq!(worst([Inconclusive, Fail, Pass].into_iter()), Fail);
    }

    // Success-run rule n = ceil(ln(1 − C) / ln R): 59 trials for 95 % / 95 % (common practice).
    #[test]
    fn zero_event_trials_for_95_95() {
        assert_eq!(zero_event_trials_needed(0.05, 0.05), Some(59));
        assert_eq!(zero_event_trials_needed(0.10, 0.05), Some(29));
        assert_eq!(zero_event_trials_needed(0.01, 0.05), Some(299));
    }

    fn spec(yaml: &str) -> Spec {
        crate::spec::parse("t.yaml", yaml).expect("test spec parses")
    }

    fn ctx() -> Context {
        Context {
            date: crate::provenance::resolve_date(Some((2026, 1, 2)), None, 0).unwrap(),
            spec_name: "t.yaml".into(),
            spec_sha256: String::new(),
            template_sha256: String::new(),
            fonts_sha256: String::new(),
        }
    }

    const ARMS: &str = "surety: 1
study: {id: T, title: t}
claim: {quantity: rate, side: upper, limit: 0.05, confidence: 0.95, scope: SCOPE}
outcome: {type: binary}
data:
  arms:
    - {name: a, trials: 200, events: 4}
    - {name: b, trials: 200, events: 1}
    - {name: c, trials: 200, events: 9}
";

    // Bonferroni over K = 3 arms for `all` and `best` (METHODS.md §11); `each` keeps δ.
    #[test]
    fn scope_sets_the_budget_and_the_selected_arm() {
        let each = analyse(&spec(&ARMS.replace("SCOPE", "each")), &ctx()).unwrap();
        assert_eq!(each.adjustments.delta_per_bound, 0.05);
        let all = analyse(&spec(&ARMS.replace("SCOPE", "all")), &ctx()).unwrap();
        assert_eq!(all.adjustments.delta_per_bound, 0.05 / 3.0);
        let best = analyse(&spec(&ARMS.replace("SCOPE", "best")), &ctx()).unwrap();
        assert_eq!(best.adjustments.delta_per_bound, 0.05 / 3.0);
        // Arm b has the lowest observed rate, so it is the one certified.
        assert!(
            best.statement
                .starts_with("Arm b, selected as the best of 3")
        );
        assert_eq!(best.verdict, best.arms[1].verdict);
    }

    #[test]
    fn two_sided_claims_split_the_budget() {
        let yaml = ARMS
            .replace("side: upper", "side: two-sided")
            .replace("SCOPE", "each");
        let a = analyse(&spec(&yaml), &ctx()).unwrap();
        assert_eq!(a.adjustments.delta_per_bound, 0.025);
        assert_eq!(a.adjustments.sides, 2);
    }
}
