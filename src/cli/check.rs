//! `surety check`: validate a spec and list the assumptions, without writing anything.

use crate::error::Error;
use crate::study;
use std::fmt::Write;
use std::path::PathBuf;

/// Arguments of `surety check`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The study spec (YAML).
    pub spec: PathBuf,
}

/// Validate and summarise.
pub fn run(args: Args) -> Result<i32, Error> {
    let mut bar = super::progress::ProgressBar::new("reading the data");
    let prepared = study::prepare(
        &args.spec,
        &super::environment(),
        study::LedgerUse::Peek,
        &mut |d, t| bar.update(d, t),
    );
    bar.finish();
    let prepared = prepared?;
    let a = &prepared.analysis;
    let mut out = String::new();
    let _ = writeln!(out, "{}: the spec is valid", args.spec.display());
    out.push_str(&crate::report::summary::header(a));
    let trials: u64 = a.arms.iter().map(|r| r.n).sum();
    let plural = |n: u64, word: &str| {
        let s = if n == 1 { "" } else { "s" };
        format!("{} {word}{s}", crate::analysis::display::count(n))
    };
    let what = if a.outcome.kind == "binary" {
        let events: u64 = a.arms.iter().filter_map(|r| r.events).sum();
        plural(events, "event")
    } else {
        let means: Vec<String> = a
            .arms
            .iter()
            .map(|r| r.display.mean.replace('\u{a0}', " "))
            .collect();
        format!("mean {}", means.join(" / "))
    };
    let _ = writeln!(
        out,
        "data     {}, {}, {}",
        plural(a.arms.len() as u64, "arm"),
        plural(trials, "trial"),
        what
    );
    for f in &a.provenance.inputs {
        let _ = writeln!(
            out,
            "         {} ({} rows, SHA-256 {})",
            f.path,
            crate::analysis::display::count(f.rows.unwrap_or(0)),
            f.sha256.get(..16).unwrap_or(&f.sha256)
        );
    }
    let compare: Vec<&str> = a.methods.iter().skip(1).map(|m| m.id.as_str()).collect();
    let _ = writeln!(
        out,
        "method   {} (primary), compare: {}",
        a.methods[0].id,
        if compare.is_empty() {
            "none".to_string()
        } else {
            compare.join(", ")
        }
    );
    let _ = writeln!(
        out,
        "budget   δ = {} per one-sided bound",
        crate::analysis::display::probability(a.adjustments.delta_per_bound)
    );
    for s in &a.adjustments.steps {
        let _ = writeln!(out, "         {}", s.reason);
    }
    if let Some(p) = &prepared.ledger_preview {
        let _ = writeln!(out, "ledger   {p}");
    }
    let _ = writeln!(out, "assumptions:");
    for c in &a.checklist {
        let who =
            c.by.as_deref()
                .map(|b| format!(" by {b}"))
                .unwrap_or_default();
        let _ = writeln!(out, "  {:<9} {}{}", c.status, c.id, who);
    }
    super::print_stdout(&out);
    Ok(0)
}
