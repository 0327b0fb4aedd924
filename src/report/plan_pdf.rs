//! The plan report: a study's plan in, PDF/A-3b bytes out — the written record that justifies
//! the sample size before testing starts.
//!
//! [`render_plan_pdf`] is pure. It draws the plan's charts, renders `templates/plan.typ.j2`
//! (which includes `templates/plan-section.typ.j2`, the part the run report shows as its
//! sample-size rationale) into `main.typ`, and serves those, the exact plan.json bytes, the
//! printed forms of its numbers and the spec to typst from memory. The PDF carries the spec and
//! plan.json as attachments. The same inputs give the same bytes: fonts come from the binary,
//! the date from the caller, and the PDF identifier from the plan's SHA-256.

use std::collections::HashMap;

use minijinja::{AutoEscape, Environment, UndefinedBehavior, context};
use serde_json::{Value, json};
use typst::diag::Warned;
use typst::foundations::{Bytes, Datetime, Smart};
use typst_layout::PagedDocument;
use typst_pdf::{PdfOptions, PdfStandard, PdfStandards, Timestamp};

use super::fonts::{self, fonts_sha256};
use super::pdf::{Diagnostic, ReportError, SpecNames, Stage, convert, creator};
use super::plan_plots::{self, OC_PLOT, SAW_PLOT};
use super::world::{ReportWorld, file_id};
use crate::analysis::display::{self, Rounding};
use crate::plan::{PlanResults, min_trials, pass_probability, standard_table};
use crate::provenance::{ReportDate, sha256_hex};
use crate::spec::{OutcomeKind, Scope, Side, Spec};

/// Name of the plan report template, in error messages.
pub const PLAN_TEMPLATE_NAME: &str = "plan.typ.j2";
/// Name under which the plan section must be registered for `{% include %}`.
pub const PLAN_SECTION_NAME: &str = "plan-section.typ.j2";

/// The text of the plan report template.
pub fn plan_template() -> &'static str {
    include_str!("../../templates/plan.typ.j2")
}

/// The text of the plan section: the plan's tables and charts as a part of a larger document.
///
/// It expects, in typst, `P` (the plan JSON, `surety-plan/1`) and `PD` (its printed forms, from
/// [`plan_display`]); and, in minijinja, `oc_plot` and `saw_plot` (paths of the charts, or none)
/// and `plan_level` (the heading level of its subsections).
pub fn plan_section_template() -> &'static str {
    include_str!("../../templates/plan-section.typ.j2")
}

/// Everything a plan report is made from. The PDF depends on these values and nothing else.
#[derive(Debug, Clone, Copy)]
pub struct PlanInputs<'a> {
    /// The validated spec: study fields, claim, plan section and outcome unit.
    pub spec: &'a Spec,
    /// The plan the report shows.
    pub plan: &'a PlanResults,
    /// The exact plan.json bytes: read by the template, attached, and hashed for the PDF id.
    pub plan_json: &'a [u8],
    /// SHA-256 of the spec's acceptance criteria, to be kept as `plan.registered`.
    pub criteria_sha256: &'a str,
    /// The spec's file name (for example `study.yaml`); only its last path component is used.
    pub spec_name: &'a str,
    /// The spec's bytes, attached unchanged.
    pub spec_bytes: &'a [u8],
    /// The report date, already resolved (spec, SOURCE_DATE_EPOCH or clock).
    pub date: ReportDate,
}

const MAIN: &str = "main.typ";
const PLAN: &str = "data/plan.json";
const DISPLAY: &str = "data/plan-display.json";
const CONTEXT: &str = "data/plan-report.json";

/// Renders the plan report (PDF/A-3b, A4) for `inputs`.
///
/// Guarantees: the output depends only on `inputs` and the surety build; equal inputs give
/// identical bytes. No file, font, clock or network of the host is consulted. Every value —
/// numbers and user text alike — reaches typst as JSON data, never as markup. A plan whose
/// target cannot be reached renders, with the reason, rather than failing.
pub fn render_plan_pdf(inputs: &PlanInputs) -> Result<Vec<u8>, ReportError> {
    render_with(inputs, PLAN_TEMPLATE_NAME, plan_template(), 1)
}

/// Renders `template` (which may include the plan section) as the document's `main.typ`, with
/// the plan section's subsections at heading level `plan_level`.
fn render_with(
    inputs: &PlanInputs,
    template_name: &str,
    template: &str,
    plan_level: u8,
) -> Result<Vec<u8>, ReportError> {
    let plan = inputs.plan;
    let carried: PlanResults = serde_json::from_slice(inputs.plan_json)
        .map_err(|e| ReportError::Internal(format!("plan.json is not a plan document: {e}")))?;
    if carried != *plan {
        return Err(ReportError::Internal(
            "plan.json does not describe the plan being reported".into(),
        ));
    }
    let d = inputs.date;
    let bad_date = || ReportError::Date(d.iso());
    let today = Datetime::from_ymd(d.year, d.month, d.day).ok_or_else(bad_date)?;
    let midnight = Datetime::from_ymd_hms(d.year, d.month, d.day, 0, 0, 0).ok_or_else(bad_date)?;

    let plots = plan_plots::render_plan_plots(plan)
        .map_err(|e| ReportError::Internal(format!("plan plot: {e}")))?;
    let main = render_main(
        template_name,
        template,
        plots.oc.is_some(),
        plots.sawtooth.is_some(),
        plan_level,
    )?;
    let font_set = fonts::font_set().map_err(ReportError::Internal)?;

    let spec = SpecNames::beside(inputs.spec_name, "plan.json");
    let unit = inputs.spec.outcome.unit.as_deref();
    let to_bytes = |v: &Value, what: &str| {
        serde_json::to_vec_pretty(v).map_err(|e| ReportError::Internal(format!("{what}: {e}")))
    };
    let display_json = to_bytes(&plan_display(plan, unit), "plan display")?;
    let context_json = to_bytes(&report_context(inputs, &spec), "plan report context")?;

    let mut files: HashMap<_, Bytes> = HashMap::new();
    let mut put = |path: &str, bytes: Bytes| -> Result<(), ReportError> {
        files.insert(file_id(path).map_err(ReportError::Internal)?, bytes);
        Ok(())
    };
    put(MAIN, Bytes::from_string(main))?;
    put(PLAN, Bytes::new(inputs.plan_json.to_vec()))?;
    put(DISPLAY, Bytes::new(display_json))?;
    put(CONTEXT, Bytes::new(context_json))?;
    if let Some(svg) = plots.oc {
        put(OC_PLOT, Bytes::from_string(svg))?;
    }
    if let Some(svg) = plots.sawtooth {
        put(SAW_PLOT, Bytes::from_string(svg))?;
    }
    put(&spec.served, Bytes::new(inputs.spec_bytes.to_vec()))?;

    let world = ReportWorld::new(
        file_id(MAIN).map_err(ReportError::Internal)?,
        files,
        font_set,
        today,
    );
    let ident = format!("surety-plan-{}", sha256_hex(inputs.plan_json));
    let result = compile_and_export(&world, ident, midnight);
    // Keep the process-wide memo cache from growing without bound across many reports.
    typst::comemo::evict(10);
    result
}

fn render_main(
    name: &str,
    template: &str,
    oc: bool,
    saw: bool,
    plan_level: u8,
) -> Result<String, ReportError> {
    let failure = |e: minijinja::Error| {
        let mut message = e.kind().to_string();
        if let Some(detail) = e.detail() {
            message.push_str(": ");
            message.push_str(detail);
        }
        if let (Some(name), Some(line)) = (e.name(), e.line()) {
            message.push_str(&format!(" @ {name}:{line}"));
        }
        ReportError::Template {
            user: false,
            message,
            line: None,
        }
    };
    let mut env = Environment::new();
    // Typst source is not HTML; and an unknown variable is a template bug, never silently "".
    env.set_auto_escape_callback(|_| AutoEscape::None);
    env.set_undefined_behavior(UndefinedBehavior::Strict);
    env.add_template(name, template).map_err(failure)?;
    env.add_template(PLAN_SECTION_NAME, plan_section_template())
        .map_err(failure)?;
    let ctx = context! {
        oc_plot => oc.then_some(OC_PLOT),
        saw_plot => saw.then_some(SAW_PLOT),
        plan_level => plan_level,
    };
    env.get_template(name)
        .and_then(|t| t.render(ctx))
        .map_err(failure)
}

fn compile_and_export(
    world: &ReportWorld,
    ident: String,
    midnight: Datetime,
) -> Result<Vec<u8>, ReportError> {
    // Every served file is generated by surety from its own template, so any diagnostic is a
    // defect of surety, never of the user's input.
    let fail = |stage, diags: Vec<Diagnostic>| ReportError::Typst {
        stage,
        internal: true,
        user_template: false,
        diagnostics: diags,
    };
    let Warned { output, warnings } = typst::compile::<PagedDocument>(world);
    let document = match output {
        Ok(doc) if warnings.is_empty() => doc,
        Ok(_) => {
            let diags = warnings.iter().map(|d| convert(world, d)).collect();
            return Err(fail(Stage::Layout, diags));
        }
        Err(errors) => {
            let diags = errors
                .iter()
                .chain(warnings.iter())
                .map(|d| convert(world, d))
                .collect();
            return Err(fail(Stage::Layout, diags));
        }
    };
    let standards = PdfStandards::new(&[PdfStandard::A_3b])
        .map_err(|e| ReportError::Internal(format!("PDF/A-3b configuration: {e:?}")))?;
    let options = PdfOptions {
        ident: Smart::Custom(ident),
        creator: Smart::Custom(Some(creator())),
        timestamp: Some(Timestamp::new_utc(midnight)),
        standards,
        ..PdfOptions::default()
    };
    typst_pdf::pdf(&document, &options).map_err(|errors| {
        fail(
            Stage::Export,
            errors.iter().map(|d| convert(world, d)).collect(),
        )
    })
}

/// A value as the user wrote it, in percent (0.002 → `0.2 %`): inputs are never rounded.
fn as_written(p: f64) -> String {
    display::limit_percent(p)
}

fn opt_count(v: Option<u64>) -> Value {
    v.map_or(Value::Null, |n| Value::from(display::count(n)))
}

fn opt_pct(v: Option<f64>, rounding: Rounding) -> Value {
    v.map_or(Value::Null, |p| Value::from(display::percent(p, rounding)))
}

/// The printed form of every number in `plan`, in the same shape as the plan document.
///
/// Outward rounding: chances of passing at the limit (consumer's risk) and producer's risks are
/// rounded up, chances of passing at the assumed rate rounded down, so a printed figure never
/// looks better than the computed one. Inputs (limit, assumed rate, wanted chance) are printed
/// as written. `unit` is the unit of a bounded outcome.
pub fn plan_display(plan: &PlanResults, unit: Option<&str>) -> Value {
    let bounded = plan.outcome == "bounded";
    let limit = if bounded {
        display::quantity_exact(plan.claim.limit, unit)
    } else {
        as_written(plan.claim.limit)
    };
    let demonstration: Vec<Value> = plan
        .demonstration
        .iter()
        .map(|d| {
            json!({
                "allowed_events": d.allowed_events.to_string(),
                "trials": display::count(d.trials),
                "consumer_risk": display::percent(d.consumer_risk, Rounding::Up),
            })
        })
        .collect();
    let target_n = plan.target.as_ref().and_then(|t| t.trials);
    let operating: Vec<Value> = plan
        .operating
        .iter()
        .map(|o| {
            json!({
                "trials": display::count(o.trials),
                "allowed_events": o.allowed_events.to_string(),
                "pass_at_assumed": opt_pct(o.pass_probability_at_assumed, Rounding::Down),
                "producer_risk": opt_pct(o.producer_risk, Rounding::Up),
                "consumer_risk": display::percent(o.consumer_risk, Rounding::Up),
                "is_target": Some(o.trials) == target_n,
                "is_demonstration": plan.demonstration.iter().any(|d| d.trials == o.trials),
            })
        })
        .collect();
    let assumed = plan
        .target
        .as_ref()
        .map(|t| t.assumed_rate)
        .or_else(|| plan.operating.iter().find_map(|o| o.assumed_rate));
    json!({
        "claim": {
            "limit": limit,
            "confidence": as_written(plan.claim.confidence),
            "delta": display::probability(plan.claim.delta),
            "delta_percent": display::risk_percent(plan.claim.delta),
        },
        "assumed_rate": assumed.map(as_written),
        "demonstration": demonstration,
        "operating": operating,
        "target": target_display(plan),
        "still_needed": plan.still_needed.as_ref().map(|s| json!({
            "events": display::count(s.events),
            "trials": display::count(s.trials),
            "zero_further": display::count(s.zero_further_events),
            "zero_total": display::count(s.trials.saturating_add(s.zero_further_events)),
            "at_observed": opt_count(s.at_observed_rate),
            "at_observed_total": opt_count(s.at_observed_rate.map(|m| s.trials.saturating_add(m))),
            "at_observed_events": opt_count(s.at_observed_rate_events),
            "reason": s.at_observed_rate_reason,
        })),
        "bounded": plan.bounded.as_ref().map(|b| {
            let q = |v: f64| display::quantity_exact(v, unit);
            json!({
                "range": format!("[{}, {}]", b.range[0], b.range[1]),
                "unit": unit,
                "assumed_mean": q(b.assumed_mean),
                "assumed_sd": q(b.assumed_sd),
                "law": b.law,
                "alpha": b.alpha.map(|a| display::quantity(a, None, Rounding::Nearest)),
                "beta": b.beta.map(|a| display::quantity(a, None, Rounding::Nearest)),
                "sizes": b.sizes.iter().map(|s| json!({
                    "method": s.method,
                    "name": method_name(&s.method),
                    "trials": display::count(s.trials),
                    "closed_form": s.closed_form.map(|x| display::quantity(x, None, Rounding::Up)),
                })).collect::<Vec<_>>(),
                "simulated": b.simulated.iter().map(|s| json!({
                    "method": s.method,
                    "name": method_name(&s.method),
                    "trials": display::count(s.trials),
                    "pass_probability": as_written(s.pass_probability),
                    "pass_fraction": display::percent(s.pass_fraction, Rounding::Down),
                    "pass_fraction_below": opt_pct(s.pass_fraction_below, Rounding::Down),
                    "standard_error": display::probability(s.standard_error),
                    "replications": display::count(u64::from(s.replications)),
                    "seed": s.seed.to_string(),
                })).collect::<Vec<_>>(),
            })
        }),
    })
}

/// The catalogue's display name of a method, or its id for methods only the planner knows.
fn method_name(id: &str) -> String {
    match id {
        "bernstein-known-sd" => "Bernstein with a known sd (reference)".to_string(),
        _ => crate::bounds::find(id).map_or_else(|| id.to_string(), |m| m.name.to_string()),
    }
}

fn target_display(plan: &PlanResults) -> Value {
    let Some(t) = plan.target.as_ref() else {
        return Value::Null;
    };
    let (limit, delta, rate) = (plan.claim.limit, plan.claim.delta, t.assumed_rate);
    let chance = |n: u64| pass_probability(n, limit, delta, rate).ok();
    let n0 = min_trials(0, limit, delta).ok();
    // The number of trials just below the held one, where the chance is still short of the
    // target; shown only when such a plan exists at all (at least the zero-event minimum).
    let before_held = match (t.trials, n0) {
        (Some(held), Some(n0)) if held > n0 => chance(held - 1).map(|p| {
            json!({
                "trials": display::count(held - 1),
                "pass": display::percent(p, Rounding::Down),
            })
        }),
        _ => None,
    };
    let drops = match (
        t.first_reached,
        t.trials,
        t.first_reached_allowed_events,
        t.allowed_events,
    ) {
        (Some(first), Some(held), Some(c_first), Some(c_held)) if first < held => drops_below_at(
            limit,
            delta,
            rate,
            t.pass_probability,
            first,
            c_first,
            c_held,
        ),
        _ => None,
    };
    json!({
        "assumed_rate": as_written(rate),
        "pass_probability": as_written(t.pass_probability),
        "reachable": t.trials.is_some(),
        "trials": opt_count(t.trials),
        "allowed_events": t.allowed_events.map(|c| c.to_string()),
        "pass_at_trials": opt_pct(t.pass_probability_at_trials, Rounding::Down),
        "first_reached": opt_count(t.first_reached),
        "first_reached_allowed_events": t.first_reached_allowed_events.map(|c| c.to_string()),
        "pass_at_first_reached": opt_pct(t.pass_probability_at_first_reached, Rounding::Down),
        "proven_from": opt_count(t.proven_from),
        "first_differs": matches!((t.first_reached, t.trials), (Some(f), Some(h)) if f < h),
        "drops_below_at": opt_count(drops),
        "before_held": before_held,
        "unreachable": t.unreachable,
    })
}

/// The first number of trials after `first` at which the chance of passing at `rate` is below
/// `target` again. Within one step of the allowed events the chance only falls, so it is found
/// step by step, by bisection inside the first step that ends below the target.
fn drops_below_at(
    limit: f64,
    delta: f64,
    rate: f64,
    target: f64,
    first: u64,
    c_first: u64,
    c_held: u64,
) -> Option<u64> {
    let below = |n: u64| pass_probability(n, limit, delta, rate).is_ok_and(|p| p < target);
    // Bounded so that a pathological plan cannot make the report slow; the sentence that
    // uses the answer is simply left out when it is not found.
    for c in (c_first..c_held).take(100_000) {
        let a = if c == c_first {
            first
        } else {
            min_trials(c, limit, delta).ok()?
        };
        let b = min_trials(c + 1, limit, delta).ok()? - 1;
        if !below(b) {
            continue;
        }
        if below(a) {
            return Some(a);
        }
        let (mut lo, mut hi) = (a, b);
        while hi - lo > 1 {
            let mid = lo + (hi - lo) / 2;
            if below(mid) {
                hi = mid;
            } else {
                lo = mid;
            }
        }
        return Some(hi);
    }
    None
}

fn side_id(side: Side) -> &'static str {
    match side {
        Side::Upper => "upper",
        Side::Lower => "lower",
        Side::TwoSided => "two-sided",
    }
}

fn scope_id(scope: Scope) -> &'static str {
    match scope {
        Scope::Each => "each",
        Scope::All => "all",
        Scope::Best => "best",
    }
}

/// The report's own facts: the study, the claim as written, the registration status, the
/// standard table, the served file names and digests — all as printed text.
fn report_context(inputs: &PlanInputs, spec_files: &SpecNames) -> Value {
    let spec = inputs.spec;
    let plan = inputs.plan;
    let bounded = spec.outcome.kind == OutcomeKind::Bounded;
    let unit = spec.outcome.unit.as_deref();
    let value = |v: f64| {
        if bounded {
            display::quantity_exact(v, unit)
        } else {
            as_written(v)
        }
    };
    let p = spec.plan.as_ref();
    let registered = p.and_then(|p| p.registered.as_deref());
    let status = match registered {
        None => "absent",
        Some(r) if r.trim().eq_ignore_ascii_case(inputs.criteria_sha256) => "matches",
        Some(_) => "differs",
    };
    let standard: Vec<Value> = if bounded {
        Vec::new()
    } else {
        standard_table()
            .unwrap_or_default()
            .iter()
            .map(|row| {
                json!({
                    "confidence": format!("{}\u{a0}%", row.confidence_percent),
                    "reliability": format!("{}\u{a0}%", row.reliability_percent),
                    "trials": row.trials.iter().map(|&n| display::count(n)).collect::<Vec<_>>(),
                })
            })
            .collect()
    };
    let allowed = p.filter(|p| !p.allowed_events.is_empty()).map(|p| {
        p.allowed_events
            .iter()
            .map(u64::to_string)
            .collect::<Vec<_>>()
            .join(", ")
    });
    let s = &spec.study;
    json!({
        "study": {
            "id": s.id,
            "title": s.title,
            "owner": s.owner,
            "requirement": s.requirement,
            "description": s.description,
            "date": inputs.date.iso(),
            "date_source": inputs.date.source.id(),
        },
        "tool": creator(),
        "fonts_sha256": fonts_sha256(),
        "outcome": if bounded { "bounded" } else { "binary" },
        "event": spec.outcome.event,
        "claim": {
            "quantity": spec.claim.quantity,
            "side": side_id(spec.claim.side),
            "scope": scope_id(spec.claim.scope),
            "confidence": format!("{}\u{a0}%", spec.claim.confidence_percent),
            "confidence_text": spec.claim.confidence_text,
            "limit": value(spec.claim.limit),
            "delta": display::probability(spec.claim.delta),
            "delta_per_bound": display::probability(plan.claim.delta),
            "divided": plan.claim.delta != spec.claim.delta,
            "mirrored": spec.claim.side == Side::Lower,
            "planned_limit": if bounded {
                display::quantity_exact(plan.claim.limit, unit)
            } else {
                as_written(plan.claim.limit)
            },
        },
        "inputs": {
            "assumed": p.and_then(|p| p.assumed_rate).map(value),
            "assumed_sd": p.and_then(|p| p.assumed_sd).map(|v| display::quantity_exact(v, unit)),
            "pass_probability": p.and_then(|p| p.pass_probability).map(as_written),
            "allowed_events": allowed,
        },
        "criteria_sha256": inputs.criteria_sha256,
        "registered": {"status": status, "written": registered},
        "standard": standard,
        "files": {"spec_served": spec_files.served, "spec_attach": spec_files.attach},
        "sha256": {
            "spec": sha256_hex(inputs.spec_bytes),
            "plan": sha256_hex(inputs.plan_json),
        },
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::plan::model::{BinaryRequest, binary_plan};

    fn plan(assumed: f64) -> PlanResults {
        binary_plan(&BinaryRequest {
            limit: 0.01,
            delta: 0.05,
            confidence: 0.95,
            allowed_events: &[0, 1, 2, 3],
            assumed_rate: Some(assumed),
            pass_probability: Some(0.9),
            observed: None,
        })
        .expect("plans")
    }

    #[test]
    fn printed_chances_round_outwards() {
        let p = plan(0.002);
        let d = plan_display(&p, None);
        for (row, shown) in p.operating.iter().zip(d["operating"].as_array().unwrap()) {
            let parse = |v: &Value| -> f64 {
                v.as_str()
                    .unwrap()
                    .trim_end_matches('%')
                    .trim_end_matches('\u{a0}')
                    .parse::<f64>()
                    .unwrap()
                    / 100.0
            };
            // Outward rounding rule (DESIGN.md §6): the chance at the assumed rate is never
            // printed above its value, the consumer's and producer's risks never below.
            assert!(parse(&shown["pass_at_assumed"]) <= row.pass_probability_at_assumed.unwrap());
            assert!(parse(&shown["consumer_risk"]) >= row.consumer_risk);
            assert!(parse(&shown["producer_risk"]) >= row.producer_risk.unwrap());
        }
    }

    #[test]
    fn the_drop_after_first_reaching_lies_between_first_and_held() {
        let p = plan(0.002);
        let t = p.target.as_ref().unwrap();
        let (first, held) = (t.first_reached.unwrap(), t.trials.unwrap());
        assert!(first < held, "this plan is reached before it is held");
        let at = drops_below_at(
            0.01,
            0.05,
            0.002,
            0.9,
            first,
            t.first_reached_allowed_events.unwrap(),
            t.allowed_events.unwrap(),
        )
        .expect("the chance falls below the target before it is held");
        assert!(at > first && at < held);
        // By definition of the held size the chance just before it is short of the target,
        // and at the drop it is short too, while one trial earlier it was not.
        let chance = |n| pass_probability(n, 0.01, 0.05, 0.002).unwrap();
        assert!(chance(at) < 0.9 && chance(at - 1) >= 0.9);
        assert!(chance(held - 1) < 0.9);
    }

    /// How the run report will use the section: the plan data bound to `P` and `PD`, its
    /// subsections one level down, under a heading of the including document.
    const INCLUDING: &str = r#"#let P = json("data/plan.json")
#let PD = json("data/plan-display.json")
#set document(date: datetime(year: 2026, month: 6, day: 15))
#set text(font: "Noto Sans")
#set heading(numbering: "1.1")
= Sample-size rationale
{% include "plan-section.typ.j2" %}
"#;

    #[test]
    fn the_section_compiles_inside_another_document() {
        let spec = crate::spec::parse(
            "s.yaml",
            "surety: 1\nstudy: {id: T-1, title: t}\nclaim: {quantity: q, side: upper, \
             limit: 0.01, confidence: 0.95}\noutcome: {type: binary, event: e}\n\
             data: {trials: 200, events: 1}\nplan: {assumed_rate: 0.002, pass_probability: 0.9}\n",
        )
        .expect("spec parses");
        let p = crate::plan::from_spec::plan(&spec, crate::data::inline(&spec).as_ref())
            .expect("plans");
        let json = serde_json::to_vec_pretty(&p).unwrap();
        let date = ReportDate {
            year: 2026,
            month: 6,
            day: 15,
            source: crate::provenance::DateSource::Spec,
        };
        let inputs = PlanInputs {
            spec: &spec,
            plan: &p,
            plan_json: &json,
            criteria_sha256: "0",
            spec_name: "s.yaml",
            spec_bytes: b"",
            date,
        };
        let pdf = render_with(&inputs, "including.typ.j2", INCLUDING, 2).expect("compiles");
        assert!(pdf.starts_with(b"%PDF-"));
    }

    #[test]
    fn a_plan_json_that_is_not_the_plan_is_refused() {
        let spec = crate::spec::parse(
            "s.yaml",
            "surety: 1\nstudy: {id: T-1, title: t}\nclaim: {quantity: q, side: upper, \
             limit: 0.01, confidence: 0.95}\noutcome: {type: binary, event: e}\n\
             data: {trials: 200, events: 1}\n",
        )
        .expect("spec parses");
        let p = plan(0.002);
        let other = serde_json::to_vec(&plan(0.003)).unwrap();
        let inputs = PlanInputs {
            spec: &spec,
            plan: &p,
            plan_json: &other,
            criteria_sha256: "0",
            spec_name: "s.yaml",
            spec_bytes: b"",
            date: ReportDate {
                year: 2026,
                month: 6,
                day: 15,
                source: crate::provenance::DateSource::Spec,
            },
        };
        assert!(matches!(
            render_plan_pdf(&inputs),
            Err(ReportError::Internal(_))
        ));
    }

    #[test]
    fn spec_names_keep_only_a_safe_file_name() {
        assert_eq!(
            SpecNames::beside("a/b/plan.yaml", "plan.json").served,
            "spec/plan.yaml"
        );
        assert_eq!(
            SpecNames::beside("C:\\x\\v1.yaml", "plan.json").attach,
            "v1.yaml"
        );
        assert_eq!(
            SpecNames::beside("..", "plan.json").served,
            "spec/study.yaml"
        );
        assert_eq!(
            SpecNames::beside("plan.json", "plan.json").attach,
            "spec-plan.json"
        );
    }
}
