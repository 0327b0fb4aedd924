//! Orchestration: a validated [`Spec`] and its data become one [`Analysis`].
//!
//! Everything here is pure. The caller supplies what comes from outside (the report date, the
//! hashes of the spec, template and fonts), so the same inputs always give the same result.

pub mod dependence;
pub mod display;
pub mod looks;
pub mod model;

use crate::adjust::{self, Division};
use crate::bounds::{self, Confirmation, Method, Needs, Sample};
use crate::data::{Arm, Dataset, Values};
use crate::provenance::ReportDate;
use crate::spec::suggest::closest;
use crate::spec::{self, Side, Spec, SpecError};
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
    /// The study's earlier looks, from the ledger or from recorded results.
    pub looks: looks::LookContext,
}

/// Name and version of this program, as recorded in results.
pub fn tool() -> Tool {
    Tool {
        name: "surety".to_string(),
        version: env!("CARGO_PKG_VERSION").to_string(),
    }
}

/// The methods chosen for a study: the primary and the compare methods.
#[derive(Debug, Clone)]
pub struct MethodSelection {
    /// The method whose bound is the guarantee.
    pub primary: &'static Method,
    /// Methods shown beside it, for information only.
    pub compare: Vec<&'static Method>,
    /// Compare methods asked for but not valid here, with the reason.
    pub omitted: Vec<OmittedMethod>,
}

/// Refuse what the spec asks for but cannot be honoured, with a located message, before any
/// computation.
fn require_supported(spec: &Spec) -> Result<(), SpecError> {
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

/// Resolve `method.primary` (`auto` or an id) and `method.compare` against the catalogue, for
/// the spec's outcome, dependence model and look mode.
///
/// `auto` depends on the spec alone, never on the data, so choosing it costs no confidence.
/// A primary method the model or look mode rules out is an error that says which methods are
/// valid; such a compare method is left out with a note.
pub fn select_methods(spec: &Spec) -> Result<MethodSelection, SpecError> {
    let outcome = dependence::analysed_outcome(spec);
    let model = dependence::catalogue_model(spec);
    let anytime = spec.looks.mode == spec::LookMode::Anytime;
    let outcome_words = match outcome {
        bounds::OutcomeKind::Binary => "binary outcomes",
        bounds::OutcomeKind::Bounded => "bounded outcomes",
    };
    let context_words = format!(
        "{outcome_words} {}{}",
        dependence::words(spec),
        if anytime { " looked at any time" } else { "" }
    );
    let fits = |m: &Method| {
        m.valid_for(outcome, model) && (!anytime || m.guarantee == bounds::Guarantee::Anytime)
    };
    let valid_ids = || -> String {
        let valid: Vec<&str> = bounds::CATALOGUE
            .iter()
            .filter(|m| fits(m))
            .map(|m| m.id)
            .collect();
        if valid.is_empty() {
            "no method is valid here".to_string()
        } else {
            format!("valid methods here: {}", valid.join(", "))
        }
    };
    let why_not = |m: &Method| -> String {
        if !m.outcomes.contains(&outcome) {
            format!("not valid for {outcome_words}")
        } else if !m.dependence.contains(&model) {
            format!("not valid {}", dependence::words(spec))
        } else {
            "valid only at a number of trials fixed in advance, not when looking at any time \
             (looks.mode: anytime)"
                .to_string()
        }
    };
    let ids: Vec<&str> = bounds::CATALOGUE.iter().map(|m| m.id).collect();
    let lookup = |key: &str, id: &str| -> Result<&'static Method, SpecError> {
        bounds::find(id).ok_or_else(|| {
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
        })
    };
    let (primary, key) = if spec.method.primary == "auto" {
        let id = auto_method(spec);
        (
            bounds::find(id).expect("the auto rule names catalogue methods"),
            "method.primary",
        )
    } else {
        (
            lookup("method.primary", &spec.method.primary)?,
            "method.primary",
        )
    };
    if !fits(primary) {
        let key = if spec.method.primary == "auto" {
            if anytime {
                "looks.mode"
            } else {
                "dependence.model"
            }
        } else {
            key
        };
        return Err(spec.error_at(
            key,
            format!(
                "`{}` cannot be the primary method for {context_words}: it is {}",
                primary.id,
                why_not(primary)
            ),
            Some(valid_ids()),
        ));
    }
    let mut compare: Vec<&'static Method> = Vec::new();
    let mut omitted = Vec::new();
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
        if fits(method) {
            compare.push(method);
        } else {
            omitted.push(OmittedMethod {
                method: method.id.to_string(),
                reason: why_not(method),
            });
        }
    }
    if spec.method.compare.is_empty() {
        compare = bounds::CATALOGUE
            .iter()
            .filter(|m| m.id != primary.id && fits(m))
            .collect();
    }
    Ok(MethodSelection {
        primary,
        compare,
        omitted,
    })
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

/// How the outcome's values map to [0, 1] (where the methods work) and back to data units.
#[derive(Debug, Clone)]
struct Scale {
    /// `Some((a, b))` for bounded outcomes; binary outcomes are already in [0, 1].
    range: Option<(f64, f64)>,
    unit: Option<String>,
}

impl Scale {
    fn of(spec: &Spec) -> Scale {
        Scale {
            range: match spec.outcome.kind {
                spec::OutcomeKind::Bounded => spec.outcome.range,
                spec::OutcomeKind::Binary => None,
            },
            unit: spec.outcome.unit.clone(),
        }
    }

    /// A bound in [0, 1] units as a value in data units, rounded outwards as asked
    /// (METHODS.md §0.2: a + (b − a)·u).
    fn to_data(&self, u: f64, rounding: Rounding) -> f64 {
        let Some((a, b)) = self.range else {
            return u;
        };
        let v = a + (b - a) * u;
        // The product and the sum are each rounded once; a margin of 2 ulps of the larger
        // term covers both, so the data-unit bound is never less conservative than u.
        let margin = 2.0 * f64::EPSILON * (a.abs() + ((b - a) * u).abs());
        match rounding {
            Rounding::Up => (v + margin).next_up().min(b),
            Rounding::Down => (v - margin).next_down().max(a),
            Rounding::Nearest => v,
        }
    }

    fn show(&self, v: f64, rounding: Rounding) -> String {
        match self.range {
            None => display::percent(v, rounding),
            Some(_) => display::quantity(v, self.unit.as_deref(), rounding),
        }
    }
}

/// The `auto` primary method (DESIGN.md §5), decided from the spec alone: binary → exact
/// (fixed looks) or the beta-binomial mixture (anytime); bounded → betting or the betting
/// sequence; m-dependent → Hoeffding in Janson's form; clustered → betting (or the betting
/// sequence) on the cluster means. For bounded values given only as n, mean and sd — visible
/// in the spec — betting cannot run: the empirical Bernstein bound, which needs exactly those,
/// is used instead (Chernoff-kl under the martingale model, where that bound is not valid).
fn auto_method(spec: &Spec) -> &'static str {
    use spec::DependenceModel as D;
    let anytime = spec.looks.mode == spec::LookMode::Anytime;
    let summary = matches!(
        spec.data.source,
        spec::DataSource::Summary(_) | spec::DataSource::ArmSummaries(_)
    );
    match (spec.dependence.model, spec.outcome.kind) {
        (D::MDependent, _) => "hoeffding",
        (D::Clustered, _) | (_, spec::OutcomeKind::Bounded) if anytime => "betting-sequence",
        // Cluster means of pass/fail trials sit near 0 when failures are rare, where the kl
        // bound (the binomial bound's extension to [0, 1] values) is the tight one.
        (D::Clustered, spec::OutcomeKind::Binary) => "chernoff-kl",
        (D::Clustered, _) => "betting",
        (_, spec::OutcomeKind::Binary) if anytime => "beta-binomial-mixture",
        (_, spec::OutcomeKind::Binary) => "exact",
        (D::Martingale, spec::OutcomeKind::Bounded) if summary => "chernoff-kl",
        (_, spec::OutcomeKind::Bounded) if summary => "bernstein-empirical",
        (_, spec::OutcomeKind::Bounded) => "betting",
    }
}

/// Whether a method can be computed from what an arm's data provide.
fn computable(method: &Method, arm: &Arm) -> bool {
    match &arm.values {
        Values::Counts { .. } => method.counts.is_some(),
        Values::Bounded(v) => match method.bounded {
            None => false,
            Some(b) => match b.needs {
                Needs::Mean | Needs::Moments => true,
                Needs::Split => v.summary.split.is_some(),
                Needs::Observations => v.observations.is_some(),
            },
        },
    }
}

/// Upper and lower bound of one method on one arm, in [0, 1] units, at `delta` per side
/// (for a method built two-sided and a two-sided claim: `delta` is the interval's total).
/// `m`: the dependence distance of an m-dependent model, for methods with Janson's form.
fn raw_bounds(
    method: &Method,
    arm: &Arm,
    delta: f64,
    two_sided_built: bool,
    m: Option<u64>,
) -> (f64, f64) {
    if let (Some(m), Some(j)) = (m, method.m_dependent) {
        let mean = match &arm.values {
            Values::Counts { events } => *events as f64 / arm.n as f64,
            Values::Bounded(v) => v.summary.mean(),
        };
        return (
            (j.lower)(mean, arm.n, m, delta),
            (j.upper)(mean, arm.n, m, delta),
        );
    }
    match &arm.values {
        Values::Counts { events } => match method.counts {
            Some(c) => match (two_sided_built, c.interval) {
                (true, Some(interval)) => interval(*events, arm.n, delta),
                _ => (
                    (c.lower)(*events, arm.n, delta),
                    (c.upper)(*events, arm.n, delta),
                ),
            },
            None => (0.0, 1.0),
        },
        Values::Bounded(v) => {
            let sample = Sample {
                summary: v.summary,
                observations: v.observations.as_deref(),
            };
            match method.bounded {
                Some(b) => match (two_sided_built, b.interval) {
                    (true, Some(interval)) => interval(&sample, delta),
                    // The two ends of a method that reads every observation are each a pass
                    // over the whole stream: one per core.
                    _ if b.needs == Needs::Observations => {
                        rayon::join(|| (b.lower)(&sample, delta), || (b.upper)(&sample, delta))
                    }
                    _ => ((b.lower)(&sample, delta), (b.upper)(&sample, delta)),
                },
                None => (0.0, 1.0),
            }
        }
    }
}

/// An anytime method's running bound over the cumulative number of trials, with the arm's
/// recorded looks marked on it: `None` for a fixed-n method or without the ordered stream.
fn bound_path(
    method: &Method,
    arm: &Arm,
    delta: f64,
    side: Side,
    scale: &Scale,
    looks: &[(u64, Option<f64>)],
) -> Option<BoundPath> {
    if method.guarantee != bounds::Guarantee::Anytime {
        return None;
    }
    let path = method.path?;
    let x: &[f64] = match &arm.values {
        Values::Bounded(v) => v.observations.as_deref()?,
        Values::Counts { .. } => arm.ordered.as_deref()?,
    };
    let n = x.len() as u64;
    if n == 0 {
        return None;
    }
    // 48 points on a log scale draw the curve smoothly; each costs a pass over its prefix.
    let steps = 48u64.min(n);
    let mut checkpoints: Vec<u64> = (0..=steps)
        .map(|i| {
            let t = i as f64 / steps as f64;
            ((n as f64).powf(t)).round().clamp(1.0, n as f64) as u64
        })
        .collect();
    checkpoints.extend(looks.iter().map(|l| l.0).filter(|&t| t >= 1 && t <= n));
    checkpoints.sort_unstable();
    checkpoints.dedup();
    let upper = deciding_is_upper(side);
    let end = if upper {
        bounds::End::Upper
    } else {
        bounds::End::Lower
    };
    let two_sided = side == Side::TwoSided && method.two_sided_built;
    let values = path(x, delta, end, two_sided, &checkpoints);
    let rounding = if upper { Rounding::Up } else { Rounding::Down };
    Some(BoundPath {
        bound: if upper { "upper" } else { "lower" }.to_string(),
        points: checkpoints
            .iter()
            .zip(values)
            .map(|(&t, v)| [t as f64, scale.to_data(v, rounding)])
            .collect(),
        looks: looks
            .iter()
            .filter_map(|&(t, b)| b.map(|b| [t as f64, b]))
            .collect(),
    })
}

/// What every bound of one analysis shares: the claim's side, the data units and the
/// dependence distance of an m-dependent model.
struct Setting<'a> {
    side: Side,
    scale: &'a Scale,
    m: Option<u64>,
}

fn bound_result(
    method: &Method,
    arm: &Arm,
    delta: f64,
    full: bool,
    setting: &Setting,
) -> BoundResult {
    let (side, scale) = (setting.side, setting.scale);
    let built = side == Side::TwoSided && method.two_sided_built;
    let (lo, hi) = raw_bounds(method, arm, delta, built, setting.m);
    let want_upper = full || deciding_is_upper(side);
    let want_lower = full || !deciding_is_upper(side);
    let vacuous = if deciding_is_upper(side) {
        hi >= 1.0
    } else {
        lo <= 0.0
    };
    let upper = want_upper.then(|| scale.to_data(hi, Rounding::Up));
    let lower = want_lower.then(|| scale.to_data(lo, Rounding::Down));
    BoundResult {
        method: method.id.to_string(),
        upper,
        lower,
        guarantee: method.guarantee.id().to_string(),
        vacuous,
        display: BoundDisplay {
            upper: upper.map(|u| scale.show(u, Rounding::Up)),
            lower: lower.map(|l| scale.show(l, Rounding::Down)),
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

/// The deciding bound against the number of trials, for binary counts: `None` for bounded
/// outcomes, whose bounds depend on more than the count of events.
fn curve(method: &Method, arm: &Arm, delta: f64, side: Side) -> Option<Curve> {
    let Values::Counts { events } = arm.values else {
        return None;
    };
    let counts = method.counts?;
    let trials = arm.n;
    let upper = deciding_is_upper(side);
    let bound = |k: u64, m: u64| {
        if upper {
            (counts.upper)(k, m, delta)
        } else {
            (counts.lower)(k, m, delta)
        }
    };
    let rate = events as f64 / trials as f64;
    let grid = curve_grid(trials);
    let at_observed_rate = grid
        .iter()
        .map(|&m| {
            let k = ((rate * m as f64).round() as u64).min(m);
            [m as f64, bound(k, m)]
        })
        .collect();
    let no_further_events = grid
        .iter()
        .filter(|&&m| m >= trials)
        .map(|&m| [m as f64, bound(events, m)])
        .collect();
    Some(Curve {
        bound: if upper { "upper" } else { "lower" }.to_string(),
        at_observed_rate,
        no_further_events,
        observed: [trials as f64, bound(events, trials)],
    })
}

/// What the data show about an assumption the data can check; `None` when these data cannot
/// show it (for example a summary given in place of the values).
fn data_evidence(id: &str, spec: &Spec, arms: &[Arm]) -> Option<String> {
    match id {
        "whole-counts" => {
            let mut trials = 0u64;
            let mut events = 0u64;
            for arm in arms {
                let Values::Counts { events: e } = arm.values else {
                    return None;
                };
                trials = trials.saturating_add(arm.n);
                events = events.saturating_add(e);
            }
            Some(if arms.len() == 1 {
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
            })
        }
        "values-in-range" => {
            let (a, b) = spec.outcome.range?;
            let unit = spec.outcome.unit.as_deref();
            let mut n = 0u64;
            let mut lo = f64::INFINITY;
            let mut hi = f64::NEG_INFINITY;
            for arm in arms {
                let Values::Bounded(v) = &arm.values else {
                    return None;
                };
                // Only values read one by one were checked; a stated summary proves nothing.
                v.histogram.as_ref()?;
                n = n.saturating_add(arm.n);
                lo = lo.min(a + (b - a) * v.summary.min);
                hi = hi.max(a + (b - a) * v.summary.max);
            }
            Some(format!(
                "all {} values lie in the declared range [{}, {}] (smallest {}, largest {})",
                display::count(n),
                display::quantity_exact(a, None),
                display::quantity_exact(b, unit),
                display::quantity(lo, unit, Rounding::Nearest),
                display::quantity(hi, unit, Rounding::Nearest),
            ))
        }
        _ => None,
    }
}

/// The checklist item on registration of the acceptance criteria, and a warning when the
/// criteria changed after they were registered.
fn registration_item(spec: &Spec) -> (ChecklistItem, Option<String>) {
    let a = bounds::assumption("criteria-registered").expect("catalogued assumption");
    let digest = crate::provenance::criteria_sha256(spec);
    let registered = spec.plan.as_ref().and_then(|p| p.registered.as_deref());
    let (status, evidence, warning) = match registered {
        None => (
            "open",
            "criteria not registered before testing: the spec has no plan.registered digest"
                .to_string(),
            None,
        ),
        Some(r) if r.trim().eq_ignore_ascii_case(&digest) => (
            "checked",
            format!(
                "plan.registered matches the SHA-256 of the claim and plan sections ({}…)",
                &digest[..12]
            ),
            None,
        ),
        Some(r) => (
            "open",
            format!(
                "the claim or plan changed after registration: registered {}, now {}…",
                r.trim(),
                &digest[..12]
            ),
            Some(
                "the claim or plan section changed after it was registered \
                 (plan.registered no longer matches): the acceptance criteria may have moved \
                 after the data were seen"
                    .to_string(),
            ),
        ),
    };
    (checklist_item(a, status, Some(evidence)), warning)
}

/// A checklist entry for assumption `a` with the given status and evidence.
fn checklist_item(a: &bounds::Assumption, status: &str, evidence: Option<String>) -> ChecklistItem {
    ChecklistItem {
        id: a.id.to_string(),
        text: a.text.to_string(),
        status: status.to_string(),
        evidence,
        by: None,
        date: None,
        consequence: a.consequence.to_string(),
    }
}

/// How this look's bound combines with earlier ones, in words.
fn looks_rule(primary: &Method, spec: &Spec, combined: usize) -> String {
    let with = match combined {
        0 => "no earlier look is combined with it".to_string(),
        1 => "it is intersected with the bound of 1 earlier look".to_string(),
        c => format!("it is intersected with the bounds of {c} earlier looks"),
    };
    match primary.guarantee {
        bounds::Guarantee::FixedN if spec.looks.planned > 1 => format!(
            "fixed-n method over {} planned looks: each look spends its share of δ, and the \
             reported bound is the tightest over the looks so far (a union bound covers them \
             all); {with}",
            spec.looks.planned
        ),
        bounds::Guarantee::FixedN => {
            format!("fixed-n method, one planned look: the whole δ is spent on it; {with}")
        }
        bounds::Guarantee::Anytime => format!(
            "confidence sequence: valid at every number of trials at once, so looking again \
             spends nothing; {with}"
        ),
    }
}

/// The checklist item on whether this look is one the ledger records.
fn looks_item(spec: &Spec, lc: &looks::LookContext, primary: &Method) -> ChecklistItem {
    let a = bounds::assumption("looks-recorded").expect("catalogued assumption");
    let file = lc.ledger.file.as_deref().unwrap_or("the ledger");
    let of = match primary.guarantee {
        bounds::Guarantee::FixedN => format!(" of {} planned", spec.looks.planned),
        bounds::Guarantee::Anytime => String::new(),
    };
    let (status, evidence) = match lc.ledger.status.as_str() {
        "registered" => (
            "checked",
            format!(
                "look {}{of}, recorded in {file}; the chain of {} earlier look{} was verified",
                lc.look,
                lc.earlier.len(),
                if lc.earlier.len() == 1 { "" } else { "s" }
            ),
        ),
        "re-issue" => (
            "checked",
            format!(
                "a re-issue of look {}{of} recorded in {file}: same inputs and claim, \
                 nothing further spent",
                lc.look
            ),
        ),
        _ => (
            "open",
            "not a registered look: run without a ledger (--no-ledger), for exploration only"
                .to_string(),
        ),
    };
    checklist_item(a, status, Some(evidence))
}

fn checklist(spec: &Spec, primary: &Method, arms: &[Arm]) -> Vec<ChecklistItem> {
    let model_id = dependence::assumption_id(spec);
    let mut ids: Vec<&str> = Vec::new();
    for &id in primary.assumptions {
        // The declared model replaces the independence the method states for trials: it is
        // what the analysis actually relied on.
        let id = if id == "independent-trials" {
            model_id
        } else {
            id
        };
        if !ids.contains(&id) {
            ids.push(id);
        }
    }
    // A method that needs only a constant conditional mean already names what independent
    // trials with one common mean provide; any other model is always stated.
    let covered = spec.dependence.model == spec::DependenceModel::Independent
        && ids.contains(&"constant-conditional-mean");
    if !ids.contains(&model_id) && !covered {
        ids.insert(0, model_id);
    }
    ids.iter()
        .filter_map(|id| bounds::assumption(id))
        .map(|a| {
            let mut item = checklist_item(a, "open", None);
            let checked = (a.confirmation == Confirmation::Data)
                .then(|| data_evidence(a.id, spec, arms))
                .flatten();
            if let Some(evidence) = checked {
                item.status = "checked".to_string();
                item.evidence = Some(evidence);
            } else if let Some(att) = spec.attestations.get(a.id) {
                item.status = "attested".to_string();
                item.by = Some(att.by.clone());
                item.date = att.date.as_ref().map(|d| d.to_string());
                item.evidence = att.note.clone();
            } else if a.id == model_id {
                item.evidence = spec
                    .dependence
                    .rationale
                    .as_ref()
                    .map(|r| format!("rationale given, not attested: {r}"));
            } else if a.id == "values-in-range" {
                item.evidence = Some(
                    "only n, mean and sd were given, so the individual values could not be \
                     checked against the declared range"
                        .to_string(),
                );
            }
            item
        })
        .collect()
}

fn method_info(method: &Method, role: &str, m: Option<u64>) -> MethodInfo {
    let mut info = MethodInfo {
        id: method.id.to_string(),
        name: method.name.to_string(),
        role: role.to_string(),
        citation: method.citation.to_string(),
        statement: method.statement.to_string(),
        formula_typst: method.formula_typst.to_string(),
        guarantee: method.guarantee.id().to_string(),
        assumptions: method.assumptions.iter().map(|s| s.to_string()).collect(),
    };
    // Under an m-dependent model the bound computed is Janson's form, so that is what the
    // appendix must state and cite.
    if let (Some(m), Some(_)) = (m, method.m_dependent) {
        info.name = format!("{} (Janson form, m = {m})", method.name);
        info.statement = format!(
            "Trials more than m = {m} apart in run order are independent. Splitting the sum \
             into m + 1 = {} interleaved independent parts and applying Hoeffding's lemma to \
             each widens the radius by the square root of m + 1: the bound behaves as if there \
             were n/(m + 1) trials.",
            m + 1
        );
        info.formula_typst = "U = hat(p) + sqrt(((m + 1) ln(1 slash delta)) / (2 n)), quad \
                              L = hat(p) - sqrt(((m + 1) ln(1 slash delta)) / (2 n))"
            .to_string();
        info.citation = format!(
            "S. Janson (2004), \"Large deviations for sums of partly dependent random \
             variables\", Random Structures & Algorithms 24(3):234–248, Theorem 2.1; {}",
            method.citation
        );
        info.assumptions = info
            .assumptions
            .iter()
            .map(|a| {
                if a == "independent-trials" {
                    "m-dependent-trials".to_string()
                } else {
                    a.clone()
                }
            })
            .collect();
    }
    info
}

/// Standing cautions printed with every result.
pub fn cautions() -> Vec<String> {
    [
        "The guarantee holds only if every assumption in the checklist holds, and only for \
         the population and conditions the trials represent.",
        "A pass bounds the rate or mean at the stated confidence; it does not show that no \
         failure can occur, nor that untested designs, lots or conditions behave alike.",
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

fn decision_rule(
    claim: &ClaimInfo,
    side: Side,
    primary: &Method,
    per_bound: f64,
    word: &str,
) -> DecisionRule {
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
        false_reject_note: format!(
            "The rule caps the chance of a false pass at δ whatever the true {w}. The chance of \
             not passing when the true {w} is on the good side of the limit is not capped: it \
             shrinks as the true {w} moves away from the limit and as the number of trials grows.",
            w = word
        ),
    }
}

/// What a method must be given, in words.
fn needs_words(method: &Method) -> &'static str {
    match method.bounded.map(|b| b.needs) {
        _ if method.counts.is_some() && method.bounded.is_none() => "counts of events",
        Some(Needs::Observations) => "every observation in trial order (raw data)",
        Some(Needs::Split) => "the values one by one (raw data), not only their summary",
        Some(Needs::Moments) => "the number of trials, mean and standard deviation",
        Some(Needs::Mean) | None => "the number of trials and the mean",
    }
}

/// Spread and range of an arm's bounded values, in data units.
fn value_summary(v: &crate::data::BoundedValues, scale: &Scale) -> ValueSummary {
    let (a, b) = scale.range.unwrap_or((0.0, 1.0));
    let s = &v.summary;
    let sd = v.stated_sd.unwrap_or_else(|| {
        if s.n < 2 {
            return 0.0;
        }
        let n = s.n as f64;
        let mean = s.sum / n;
        let var = ((s.sum_sq - n * mean * mean) / (n - 1.0)).max(0.0);
        (b - a) * var.sqrt()
    });
    let raw = v.histogram.is_some();
    let min = raw.then_some(a + (b - a) * s.min);
    let max = raw.then_some(a + (b - a) * s.max);
    let unit = scale.unit.as_deref();
    ValueSummary {
        sd,
        min,
        max,
        histogram: v.histogram.clone(),
        range: [a, b],
        display: ValueSummaryDisplay {
            sd: display::quantity(sd, unit, Rounding::Nearest),
            min: min.map(|x| display::quantity(x, unit, Rounding::Nearest)),
            max: max.map(|x| display::quantity(x, unit, Rounding::Nearest)),
        },
    }
}

/// Analyse a study: bounds per arm, verdicts, adjustments, checklist and provenance.
///
/// Errors are located in the spec: a capability this version lacks, or an unknown method or
/// assumption id. On success `provenance.results_sha256` is empty; it is filled in when the
/// results are serialised ([`crate::report::json`]).
pub fn analyse(spec: &Spec, data: &Dataset, ctx: &Context) -> Result<Analysis, SpecError> {
    require_supported(spec)?;
    let mut selection = select_methods(spec)?;
    let claim_spec = &spec.claim;
    let side = claim_spec.side;
    let scale = Scale::of(spec);
    let arms = &data.arms;
    if arms.is_empty() {
        return Err(spec.error_at("data", "the data hold no trials", None));
    }
    let k = arms.len() as u64;
    let primary = selection.primary;
    let lc = &ctx.looks;

    // The look's share of δ: fixed-n looks spend from the plan, a method valid at any time
    // spends nothing but cannot use what earlier fixed-n looks already spent.
    let spent_before = lc.spent_before();
    let mut divisions = Vec::new();
    let look_share = match primary.guarantee {
        bounds::Guarantee::FixedN => {
            let Some(share) = spec.looks.share(lc.look) else {
                return Err(spec.error_at(
                    "looks.planned",
                    format!(
                        "this would be look {} of a study planned for {} look{}: `{}` is a \
                         fixed-n method, and a look beyond the plan has no δ left to spend",
                        lc.look,
                        spec.looks.planned,
                        if spec.looks.planned == 1 { "" } else { "s" },
                        primary.id
                    ),
                    Some(
                        "an open-ended study needs `looks.mode: anytime` and a method valid at \
                         any time (see `surety methods`); planning more looks now, after \
                         seeing the data, would not be honest. Rerunning the same inputs and \
                         claim re-issues a recorded look, and `--no-ledger` explores without \
                         registering a look"
                            .to_string(),
                    ),
                ));
            };
            if spec.looks.planned > 1 {
                divisions.push(Division::Look {
                    look: lc.look,
                    planned: spec.looks.planned,
                    share,
                    equal: spec.looks.spending == spec::Spending::Equal,
                });
            }
            Some(share)
        }
        bounds::Guarantee::Anytime => {
            if spent_before >= claim_spec.delta * (1.0 - 1e-12) {
                return Err(spec.error_at(
                    "looks.mode",
                    "earlier fixed-n looks have spent the whole error budget δ: no confidence \
                     is left for a confidence sequence",
                    Some("start a new study with its own ledger (`--new-ledger`)".to_string()),
                ));
            }
            if spent_before > 0.0 {
                divisions.push(Division::Spent {
                    spent: spent_before,
                    delta: claim_spec.delta,
                });
            }
            None
        }
    };
    let look_delta = match look_share {
        Some(share) if spec.looks.planned > 1 => claim_spec.delta * share,
        Some(_) => claim_spec.delta,
        None => claim_spec.delta - spent_before,
    };
    let registered = lc.ledger.status != "not-registered";
    let look_spent = if look_share.is_some() && registered {
        look_delta
    } else {
        0.0
    };
    let earlier: Vec<&LookRecord> = lc
        .earlier
        .iter()
        .filter(|r| looks::combinable(r, primary, look_delta))
        .collect();

    // A method the data cannot feed: the primary is an error (it is the guarantee), a compare
    // method is left out with a note saying what it would have needed.
    let mut omitted = std::mem::take(&mut selection.omitted);
    if let Some(arm) = arms.iter().find(|a| !computable(selection.primary, a)) {
        return Err(spec.error_at(
            "method.primary",
            format!(
                "`{}` needs {}, which the data of arm {} do not provide",
                selection.primary.id,
                needs_words(selection.primary),
                arm.name
            ),
            Some(
                "give the data as a file with one row per trial, or choose a method that \
                  works from a summary (see `surety methods`)"
                    .to_string(),
            ),
        ));
    }
    selection.compare.retain(|m| {
        let ok = arms.iter().all(|a| computable(m, a));
        if !ok {
            omitted.push(OmittedMethod {
                method: m.id.to_string(),
                reason: format!("needs {}, which the data do not provide", needs_words(m)),
            });
        }
        ok
    });

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
    // A compare method built differently from the primary still spends the same total δ:
    // one not built two-sided splits it, one built two-sided takes both halves at once.
    let delta_for = |m: &Method| match (
        side == Side::TwoSided,
        selection.primary.two_sided_built,
        m.two_sided_built,
    ) {
        (true, true, false) => per_bound / 2.0,
        (true, false, true) => per_bound * 2.0,
        _ => per_bound,
    };

    let limit_display = match scale.range {
        None => display::limit_percent(claim_spec.limit),
        Some(_) => display::quantity_exact(claim_spec.limit, scale.unit.as_deref()),
    };
    let claim = ClaimInfo {
        quantity: claim_spec.quantity.clone(),
        side: side_id(side).to_string(),
        limit: claim_spec.limit,
        confidence: claim_spec.confidence,
        confidence_text: claim_spec.confidence_text.clone(),
        delta: claim_spec.delta,
        scope: scope_id(claim_spec.scope).to_string(),
        display: ClaimDisplay {
            limit: limit_display,
            confidence: format!("{}\u{a0}%", claim_spec.confidence_percent),
            delta: display::probability(claim_spec.delta),
            false_accept_risk: display::risk_percent(claim_spec.delta),
        },
    };

    let setting = Setting {
        side,
        scale: &scale,
        m: (spec.dependence.model == spec::DependenceModel::MDependent)
            .then(|| spec.dependence.m.unwrap_or(1)),
    };
    let mut warnings = Vec::new();
    let mut shrunk = Vec::new();
    let mut own_bounds = Vec::new();
    let arm_results: Vec<ArmResult> = arms
        .iter()
        .map(|arm| {
            let mut own = bound_result(primary, arm, per_bound, true, &setting);
            let upper_decides = deciding_is_upper(side);
            let marks: Vec<(u64, Option<f64>)> = earlier
                .iter()
                .filter_map(|r| r.arms.iter().find(|a| a.name == arm.name))
                .map(|a| (a.n, if upper_decides { a.upper } else { a.lower }))
                .collect();
            let mut path = bound_path(primary, arm, per_bound, side, &scale, &marks);
            if let Some(p) = path.as_mut() {
                // The path's last point is the running intersection over every prefix of this
                // look's trials, which a confidence sequence allows and which is never looser
                // than the bound from the totals alone: the look's own bound is the tighter.
                if let Some(&[t, v]) = p.points.last()
                    && t == arm.n as f64
                {
                    let tighter = if upper_decides {
                        own.upper.filter(|&u| v < u).map(|_| own.upper = Some(v))
                    } else {
                        own.lower.filter(|&l| v > l).map(|_| own.lower = Some(v))
                    };
                    if tighter.is_some() {
                        own.vacuous = false;
                        own.display = BoundDisplay {
                            upper: own.upper.map(|u| scale.show(u, Rounding::Up)),
                            lower: own.lower.map(|l| scale.show(l, Rounding::Down)),
                        };
                    }
                }
                if let Some(b) = if upper_decides { own.upper } else { own.lower } {
                    p.looks.push([arm.n as f64, b]);
                }
            }
            let (lower, upper) = looks::intersect((own.lower, own.upper), &arm.name, &earlier);
            if let Some(before) = looks::shrunk(&lc.earlier, &arm.name, arm.n) {
                shrunk.push(format!(
                    "arm {}: {} trials now, {} at the look before: the data of successive \
                     looks should only grow",
                    arm.name,
                    display::count(arm.n),
                    display::count(before.n)
                ));
            }
            own_bounds.push(LookArm {
                name: arm.name.clone(),
                n: arm.n,
                upper: own.upper,
                lower: own.lower,
            });
            let primary = BoundResult {
                display: BoundDisplay {
                    upper: upper.map(|u| scale.show(u, Rounding::Up)),
                    lower: lower.map(|l| scale.show(l, Rounding::Down)),
                },
                upper,
                lower,
                ..own
            };
            let compare = selection
                .compare
                .iter()
                .map(|m| bound_result(m, arm, delta_for(m), false, &setting))
                .collect();
            let v = verdict(
                side,
                claim_spec.limit,
                primary.lower.unwrap_or(f64::NEG_INFINITY),
                primary.upper.unwrap_or(f64::INFINITY),
            );
            // At an exact tie the floating bound can land one unit above the limit; the
            // exact test decides ties on the binomial tail itself, as the plan does.
            let v = match (&arm.values, v, side) {
                (Values::Counts { events }, Verdict::Inconclusive, Side::Lower)
                    if selection.primary.id == "exact"
                        && crate::plan::exact_test_passes(
                            arm.n - events,
                            arm.n,
                            1.0 - claim_spec.limit,
                            per_bound,
                        ) =>
                {
                    Verdict::Pass
                }
                (
                    Values::Counts { events },
                    Verdict::Inconclusive,
                    Side::Upper | Side::TwoSided,
                ) if selection.primary.id == "exact"
                    && crate::plan::exact_test_passes(
                        *events,
                        arm.n,
                        claim_spec.limit,
                        per_bound,
                    ) =>
                {
                    Verdict::Pass
                }
                _ => v,
            };
            let (mean, events, values) = match &arm.values {
                Values::Counts { events } => (*events as f64 / arm.n as f64, Some(*events), None),
                Values::Bounded(b) => (
                    scale.to_data(b.summary.mean(), Rounding::Nearest),
                    None,
                    Some(value_summary(b, &scale)),
                ),
            };
            ArmResult {
                name: arm.name.clone(),
                n: arm.n,
                events,
                mean,
                delta: per_bound,
                primary,
                compare,
                verdict: v,
                // Along-the-trials paths replace the projection for a confidence sequence.
                curve: if path.is_some() {
                    None
                } else {
                    curve(selection.primary, arm, per_bound, side)
                },
                values,
                nominal: arm.nominal.map(|n| NominalInfo {
                    trials: n.trials,
                    events: n.events,
                    clusters: n.clusters,
                    smallest_cluster: n.smallest_cluster,
                    largest_cluster: n.largest_cluster,
                    display: NominalDisplay {
                        trials: display::count(n.trials),
                        clusters: display::count(n.clusters),
                        per_cluster: format!("{:.1}", n.trials as f64 / n.clusters.max(1) as f64),
                    },
                }),
                path,
                display: ArmDisplay {
                    mean: scale.show(mean, Rounding::Nearest),
                    n: display::count(arm.n),
                    events: events.map(display::count),
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

    warnings.append(&mut shrunk);
    for arm in &arm_results {
        let prefix = if arm_results.len() > 1 {
            format!("arm {}: ", arm.name)
        } else {
            String::new()
        };
        if arm.primary.vacuous {
            warnings.push(format!(
                "{prefix}the primary bound is vacuous (it spans the whole range): these data \
                 say nothing at this confidence"
            ));
        }
        if arm.verdict == Verdict::Inconclusive
            && deciding_is_upper(side)
            && arm.events.is_some()
            && let Ok(needed) = crate::plan::min_trials(0, claim_spec.limit, per_bound)
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

    if matches!(
        spec.data.source,
        spec::DataSource::Summary(_) | spec::DataSource::ArmSummaries(_)
    ) {
        warnings.push(
            "the data were given as n, mean and sd: the bounds take these as exact, so any \
             rounding in them (up to half a unit of the last digit written) is carried into the \
             bounds; give the values themselves in a data file to avoid it"
                .to_string(),
        );
    }
    let (registration, moved) = registration_item(spec);
    warnings.extend(moved);
    let plan = match &spec.plan {
        None => None,
        Some(_) => match crate::plan::from_spec::plan(spec, Some(data)) {
            Ok(p) => Some(p),
            Err(e) => {
                warnings.push(format!(
                    "the plan section could not be planned: {}",
                    e.message
                ));
                None
            }
        },
    };

    let mut methods = vec![method_info(selection.primary, "primary", setting.m)];
    methods.extend(
        selection
            .compare
            .iter()
            .map(|m| method_info(m, "compare", setting.m)),
    );

    let statement = statement(
        &claim,
        side,
        claim_spec.scope,
        &arm_results,
        selected,
        overall,
    );
    let decision_rule = decision_rule(
        &claim,
        side,
        selection.primary,
        per_bound,
        if scale.range.is_some() {
            "mean"
        } else {
            "rate"
        },
    );
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
            kind: match spec.outcome.kind {
                spec::OutcomeKind::Binary => "binary",
                spec::OutcomeKind::Bounded => "bounded",
            }
            .to_string(),
            range: scale.range.map(|(a, b)| [a, b]),
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
            look: lc.look,
            sides: if divisions.contains(&Division::TwoSides) {
                2
            } else {
                1
            },
            delta_per_bound: per_bound,
            steps: budget.steps,
            display_delta_per_bound: display::probability(per_bound),
        },
        checklist: {
            let mut items = checklist(spec, selection.primary, arms);
            items.push(registration);
            items.push(looks_item(spec, lc, primary));
            items
        },
        dependence: dependence::info(spec, scale.range.is_none()),
        looks: {
            let mut history = lc.earlier.clone();
            history.push(LookRecord {
                look: lc.look,
                time: None,
                method: primary.id.to_string(),
                guarantee: primary.guarantee.id().to_string(),
                delta: look_delta,
                spent: look_spent,
                verdict: overall,
                arms: own_bounds,
            });
            let total = spent_before + look_spent;
            LooksInfo {
                mode: match spec.looks.mode {
                    spec::LookMode::Planned => "planned",
                    spec::LookMode::Anytime => "anytime",
                }
                .to_string(),
                planned: spec.looks.planned,
                look: lc.look,
                ledger: lc.ledger.clone(),
                history,
                delta_spent: look_spent,
                delta_spent_total: total,
                rule: looks_rule(primary, spec, earlier.len()),
                display: LooksDisplay {
                    delta_spent: display::probability(look_spent),
                    delta_spent_total: display::probability(total),
                },
            }
        },
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
        selected_arm: selected,
        arms: arm_results,
        methods,
        cautions: cautions(),
        plan,
        omitted_methods: omitted,
        warnings,
        provenance: Provenance {
            spec: FileDigest {
                path: ctx.spec_name.clone(),
                sha256: ctx.spec_sha256.clone(),
                bytes: None,
                rows: None,
            },
            inputs: data
                .inputs
                .iter()
                .map(|f| FileDigest {
                    path: f.path.clone(),
                    sha256: f.sha256.clone(),
                    bytes: Some(f.bytes),
                    rows: Some(f.rows),
                })
                .collect(),
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
            looks: crate::analysis::looks::LookContext::unregistered(),
        }
    }

    fn run(yaml: &str) -> Analysis {
        let s = spec(yaml);
        let data = crate::data::inline(&s).expect("inline data");
        analyse(&s, &data, &ctx()).unwrap()
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
        let each = run(&ARMS.replace("SCOPE", "each"));
        assert_eq!(each.adjustments.delta_per_bound, 0.05);
        let all = run(&ARMS.replace("SCOPE", "all"));
        assert_eq!(all.adjustments.delta_per_bound, 0.05 / 3.0);
        let best = run(&ARMS.replace("SCOPE", "best"));
        assert_eq!(best.adjustments.delta_per_bound, 0.05 / 3.0);
        // Arm b has the lowest observed rate, so it is the one certified.
        assert!(
            best.statement
                .starts_with("Arm b, selected as the best of 3")
        );
        assert_eq!(best.verdict, best.arms[1].verdict);
        assert_eq!(best.selected_arm, Some(1));
        assert_eq!(all.selected_arm, None);
        // A lower claim selects the largest observed rate: arm c (9 of 200).
        let lower = run(&ARMS
            .replace("SCOPE", "best")
            .replace("side: upper", "side: lower"));
        assert_eq!(lower.selected_arm, Some(2));
    }

    #[test]
    fn two_sided_claims_split_the_budget() {
        let yaml = ARMS
            .replace("side: upper", "side: two-sided")
            .replace("SCOPE", "each");
        let a = run(&yaml);
        assert_eq!(a.adjustments.delta_per_bound, 0.025);
        assert_eq!(a.adjustments.sides, 2);
    }
}
