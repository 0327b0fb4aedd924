//! The terminal form of a plan: demonstration plans, operating characteristics, the sample size
//! for the wanted chance of passing, trials still needed, the standard table, and the line that
//! registers the criteria.

use crate::analysis::display::{self, Rounding};
use crate::plan::PlanResults;
use crate::spec::{OutcomeKind, Side, Spec};
use std::fmt::Write;

fn pct(p: f64, rounding: Rounding) -> String {
    display::percent(p, rounding).replace('\u{a0}', " ")
}

fn n(v: u64) -> String {
    display::count(v)
}

/// The plan as text for a terminal (plain spaces, no colour).
pub fn summary(spec: &Spec, plan: &PlanResults, criteria_sha256: &str) -> String {
    let mut out = String::new();
    let _ = writeln!(out, "plan     {}  {}", spec.study.id, spec.study.title);
    let bounded = spec.outcome.kind == OutcomeKind::Bounded;
    let unit = spec.outcome.unit.as_deref().unwrap_or("");
    let limit = if bounded {
        format!("{} {unit}", spec.claim.limit)
            .trim_end()
            .to_string()
    } else {
        display::limit_percent(spec.claim.limit).replace('\u{a0}', " ")
    };
    let word = if bounded { "mean" } else { "rate" };
    let sign = match spec.claim.side {
        Side::Lower => "≥",
        _ => "≤",
    };
    let _ = writeln!(
        out,
        "claim    {word} {sign} {limit} with {} % confidence; δ = {} per one-sided bound",
        spec.claim.confidence_percent,
        display::probability(plan.claim.delta)
    );
    if spec.claim.side == Side::Lower && !bounded {
        let _ = writeln!(
            out,
            "         (a lower claim is planned on its complement: \"events\" below are trials \
             without the event, against a limit of {})",
            display::limit_percent(plan.claim.limit).replace('\u{a0}', " ")
        );
    }
    if !plan.demonstration.is_empty() {
        let _ = writeln!(out, "\ndemonstration plans (exact binomial test)");
        let _ = writeln!(
            out,
            "  {:>14}  {:>16}  chance of passing at the limit",
            "allowed events", "trials needed"
        );
        for d in &plan.demonstration {
            let _ = writeln!(
                out,
                "  {:>14}  {:>16}  {}",
                d.allowed_events,
                n(d.trials),
                pct(d.consumer_risk, Rounding::Up)
            );
        }
    }
    if let Some(op) = plan.operating.first().filter(|o| o.assumed_rate.is_some()) {
        let _ = writeln!(
            out,
            "\noperating characteristics at the assumed rate {}",
            pct(op.assumed_rate.unwrap_or(0.0), Rounding::Nearest)
        );
        let _ = writeln!(
            out,
            "  {:>16}  {:>14}  {:>18}  {:>15}",
            "trials", "allowed events", "chance of passing", "producer's risk"
        );
        for o in &plan.operating {
            let _ = writeln!(
                out,
                "  {:>16}  {:>14}  {:>18}  {:>15}",
                n(o.trials),
                o.allowed_events,
                o.pass_probability_at_assumed
                    .map(|p| pct(p, Rounding::Down))
                    .unwrap_or_default(),
                o.producer_risk
                    .map(|p| pct(p, Rounding::Up))
                    .unwrap_or_default()
            );
        }
    }
    if let Some(t) = &plan.target {
        let _ = writeln!(out);
        match (t.trials, &t.unreachable) {
            (Some(trials), _) => {
                let _ = writeln!(
                    out,
                    "for a {} chance of passing at rate {}: {} trials (pass with at most {} \
                     events){}",
                    pct(t.pass_probability, Rounding::Nearest),
                    pct(t.assumed_rate, Rounding::Nearest),
                    n(trials),
                    t.allowed_events.unwrap_or(0),
                    match t.first_reached {
                        Some(first) if first < trials => format!(
                            "; the chance is first reached at {} trials but falls below it \
                             again before {}",
                            n(first),
                            n(trials)
                        ),
                        _ => String::new(),
                    }
                );
            }
            (None, Some(reason)) => {
                let _ = writeln!(out, "wanted chance of passing: {reason}");
            }
            (None, None) => {}
        }
    }
    if let Some(s) = &plan.still_needed {
        let _ = writeln!(
            out,
            "\ntrials still needed after {} event{} in {} trials:",
            n(s.events),
            if s.events == 1 { "" } else { "s" },
            n(s.trials)
        );
        let _ = writeln!(
            out,
            "  with no further events:      {} more",
            n(s.zero_further_events)
        );
        match (s.at_observed_rate, &s.at_observed_rate_reason) {
            (Some(m), _) => {
                let _ = writeln!(
                    out,
                    "  at the observed rate:        {} more ({} events in all)",
                    n(m),
                    s.at_observed_rate_events.unwrap_or(0)
                );
            }
            (None, Some(r)) => {
                let _ = writeln!(out, "  at the observed rate:        never: {r}");
            }
            _ => {}
        }
    }
    if let Some(b) = &plan.bounded {
        let _ = writeln!(
            out,
            "\nsample size per method, assumed mean {} {unit} and sd {} {unit} ({} law on [{}, {}])",
            b.assumed_mean, b.assumed_sd, b.law, b.range[0], b.range[1]
        );
        for s in &b.sizes {
            let note = if s.method == "bernstein-known-sd" {
                " — needs the true sd; a reference, not a method you can sign with"
            } else {
                ""
            };
            let _ = writeln!(
                out,
                "  {:<22} {:>14} trials (bound at the assumed values meets the limit){note}",
                s.method,
                n(s.trials)
            );
        }
        for s in &b.simulated {
            let _ = writeln!(
                out,
                "  {:<22} {:>14} trials for a {} chance of passing (simulated, {} runs, \
                 standard error {:.3})",
                s.method,
                n(s.trials),
                pct(s.pass_probability, Rounding::Nearest),
                s.replications,
                s.standard_error
            );
        }
    }
    if !bounded && let Ok(table) = crate::plan::standard_table() {
        let _ = writeln!(
            out,
            "\nusual demonstration plans (exact test; trials for c = 0, 1, 2, 3 events allowed)"
        );
        let _ = writeln!(
            out,
            "  {:>10}  {:>11}  {:>7} {:>7} {:>7} {:>7}",
            "confidence", "reliability", "c = 0", "c = 1", "c = 2", "c = 3"
        );
        for row in &table {
            let t: Vec<String> = row.trials.iter().map(|&v| n(v)).collect();
            let _ = writeln!(
                out,
                "  {:>8} %  {:>9} %  {:>7} {:>7} {:>7} {:>7}",
                row.confidence_percent,
                row.reliability_percent,
                t.first().cloned().unwrap_or_default(),
                t.get(1).cloned().unwrap_or_default(),
                t.get(2).cloned().unwrap_or_default(),
                t.get(3).cloned().unwrap_or_default()
            );
        }
    }
    let _ = writeln!(
        out,
        "\nregister the criteria before testing by keeping this line in the plan section:\n  \
         registered: {criteria_sha256}"
    );
    match spec.plan.as_ref().and_then(|p| p.registered.as_deref()) {
        Some(r) if r.trim().eq_ignore_ascii_case(criteria_sha256) => {
            let _ = writeln!(out, "  (the spec already carries it: criteria unchanged)");
        }
        Some(_) => {
            let _ = writeln!(
                out,
                "  (the spec carries a different digest: the claim or plan changed after it was \
                 registered)"
            );
        }
        None => {}
    }
    out
}
