//! The short human summary printed on the terminal after a run, rendered from the same
//! [`Analysis`] as results.json and the PDF.

use crate::analysis::model::{Analysis, Verdict};
use std::fmt::Write;

fn verdict_word(v: Verdict) -> &'static str {
    match v {
        Verdict::Pass => "PASS",
        Verdict::Fail => "FAIL",
        Verdict::Inconclusive => "INCONCLUSIVE",
    }
}

/// The study line and the claim line that open both `run` and `check` output.
pub fn header(a: &Analysis) -> String {
    let relation = if a.claim.side == "lower" {
        "≥"
    } else {
        "≤"
    };
    format!(
        "{}  {}\nclaim    {} {relation} {} at {} confidence ({}, scope {})\n",
        a.study.id,
        a.study.title,
        a.claim.quantity,
        a.claim.display.limit,
        a.claim.display.confidence,
        a.claim.side,
        a.claim.scope
    )
}

/// Widest table line the summary prints before compare methods move to a table of their own.
const SUMMARY_WIDTH: usize = 110;

/// Rows as aligned text columns: those for which `left(column, columns)` holds read left to
/// right (names, verdicts), the others line up on the right (numbers). Short rows are padded.
fn aligned(rows: &[Vec<String>], left: impl Fn(usize, usize) -> bool) -> String {
    let columns = rows.iter().map(Vec::len).max().unwrap_or(0);
    fn cell(r: &[String], c: usize) -> &str {
        r.get(c).map(String::as_str).unwrap_or("")
    }
    let widths: Vec<usize> = (0..columns)
        .map(|c| {
            rows.iter()
                .map(|r| cell(r, c).chars().count())
                .max()
                .unwrap_or(0)
        })
        .collect();
    let mut out = String::new();
    for row in rows {
        let mut line = String::from(" ");
        for (c, width) in widths.iter().enumerate() {
            let text = cell(row, c);
            let pad = " ".repeat(width - text.chars().count());
            line.push(' ');
            if left(c, columns) {
                line.push_str(text);
                line.push_str(&pad);
            } else {
                line.push_str(&pad);
                line.push_str(text);
            }
            line.push(' ');
        }
        let _ = writeln!(out, "{}", line.trim_end());
    }
    out
}

/// `mean ± sd` for a bounded arm, with the unit written once when both strings carry it.
fn mean_and_spread(a: &Analysis, mean: &str, sd: &str) -> String {
    if let Some(unit) = a.outcome.unit.as_deref().filter(|u| !u.is_empty()) {
        for sep in ['\u{a0}', ' '] {
            let suffix = format!("{sep}{unit}");
            if let (Some(m), true) = (mean.strip_suffix(&suffix), sd.ends_with(&suffix)) {
                return format!("{m} ± {sd}");
            }
        }
    }
    format!("{mean} ± {sd}")
}

/// A few lines: the study, the verdict and statement, a table of arms, open assumptions.
///
/// Binary arms show trials and events; bounded arms show trials and the mean ± the sample
/// standard deviation in the outcome's unit. Every figure is a display string of the model.
pub fn summary(a: &Analysis) -> String {
    let mut out = header(a);
    let _ = writeln!(out, "look     {}", look_status(a));
    if let Some(note) = &a.looks.ledger.new_ledger {
        let _ = writeln!(out, "         {note}");
    }
    let _ = writeln!(out, "verdict  {}", verdict_word(a.verdict));
    let _ = writeln!(out, "         {}", a.statement);
    let binary = a.outcome.kind == "binary";
    let primary = a
        .methods
        .iter()
        .find(|m| m.role == "primary")
        .or(a.methods.first())
        .map(|m| m.id.as_str())
        .or(a.arms.first().map(|arm| arm.primary.method.as_str()))
        .unwrap_or("");
    let lower_side = a.claim.side == "lower";
    // Compare methods in order of first appearance, so that every arm fills the same columns.
    let mut compare_ids: Vec<&str> = Vec::new();
    for arm in &a.arms {
        for c in &arm.compare {
            if !compare_ids.contains(&c.method.as_str()) {
                compare_ids.push(&c.method);
            }
        }
    }
    let dash = || "–".to_string();
    // A clustered analysis counts clusters: its `n` is the effective sample size.
    let clustered = a.arms.iter().any(|arm| arm.nominal.is_some());
    let counted = if clustered { "clusters" } else { "trials" };
    let mut header = vec!["arm".to_string(), counted.to_string()];
    if binary {
        header.push("events".to_string());
        header.push("observed".to_string());
    } else {
        header.push("mean ± sd".to_string());
    }
    header.push(format!("{primary} lower"));
    header.push(format!("{primary} upper"));
    let mut rows = vec![header];
    // The compare methods' bounds, one list per arm in `compare_ids` order.
    let mut compare_cells: Vec<Vec<String>> = Vec::new();
    for arm in &a.arms {
        let mut row = vec![arm.name.clone(), arm.display.n.clone()];
        if binary {
            row.push(
                arm.events
                    .map(crate::analysis::display::count)
                    .unwrap_or_else(dash),
            );
            row.push(arm.display.mean.clone());
        } else {
            row.push(match &arm.values {
                Some(v) => mean_and_spread(a, &arm.display.mean, &v.display.sd),
                None => arm.display.mean.clone(),
            });
        }
        row.push(arm.primary.display.lower.clone().unwrap_or_else(dash));
        row.push(arm.primary.display.upper.clone().unwrap_or_else(dash));
        rows.push(row);
        compare_cells.push(
            compare_ids
                .iter()
                .map(|id| {
                    arm.compare
                        .iter()
                        .find(|b| b.method == *id)
                        .and_then(|b| {
                            if lower_side {
                                b.display.lower.clone()
                            } else {
                                b.display.upper.clone()
                            }
                        })
                        .unwrap_or_else(dash)
                })
                .collect(),
        );
    }
    let verdicts: Vec<String> = std::iter::once("verdict")
        .chain(a.arms.iter().map(|arm| match arm.verdict {
            Verdict::Pass => "pass",
            Verdict::Fail => "fail",
            Verdict::Inconclusive => "inconclusive",
        }))
        .map(str::to_string)
        .collect();

    // Compare methods as extra columns while the table stays narrow; beyond that (bounded
    // outcomes often have five or more), as a table of their own with one row per method.
    let mut wide = rows.clone();
    wide[0].extend(compare_ids.iter().map(|id| format!("{id}*")));
    for (row, cells) in wide.iter_mut().skip(1).zip(&compare_cells) {
        row.extend(cells.iter().cloned());
    }
    for (row, v) in wide.iter_mut().zip(&verdicts) {
        row.push(v.clone());
    }
    let _ = writeln!(out);
    let table = aligned(&wide, |c, n| c == 0 || c == n - 1);
    if compare_ids.is_empty() || table.lines().all(|l| l.chars().count() <= SUMMARY_WIDTH) {
        out.push_str(&table);
        if !compare_ids.is_empty() {
            let _ = writeln!(
                out,
                "  * {} bound of a compare method, for information only, not the guarantee",
                if lower_side { "lower" } else { "upper" }
            );
        }
    } else {
        for (row, v) in rows.iter_mut().zip(&verdicts) {
            row.push(v.clone());
        }
        out.push_str(&aligned(&rows, |c, n| c == 0 || c == n - 1));
        let _ = writeln!(
            out,
            "\n  {} bounds of the compare methods, for information only, not the guarantee:",
            if lower_side { "lower" } else { "upper" }
        );
        let mut side = vec![
            std::iter::once("method".to_string())
                .chain(a.arms.iter().map(|arm| arm.name.clone()))
                .collect::<Vec<_>>(),
        ];
        for (i, id) in compare_ids.iter().enumerate() {
            side.push(
                std::iter::once(id.to_string())
                    .chain(compare_cells.iter().map(|cells| cells[i].clone()))
                    .collect(),
            );
        }
        out.push_str(&aligned(&side, |c, _| c == 0));
        out.push('\n');
    }
    if !binary {
        let range = a.outcome.range.or_else(|| {
            a.arms
                .iter()
                .find_map(|arm| arm.values.as_ref())
                .map(|v| v.range)
        });
        if let Some([lo, hi]) = range {
            let unit = match a.outcome.unit.as_deref() {
                Some(u) if !u.is_empty() => format!(" {u}"),
                _ => String::new(),
            };
            // The ends as written in the spec (shortest exact decimals), not rounded.
            let _ = writeln!(
                out,
                "  values in the declared range [{lo}, {hi}]{unit}; ± is the sample standard deviation"
            );
        }
    }
    for arm in &a.arms {
        if let Some(c) = &arm.nominal {
            let events = match c.events {
                Some(e) => format!(
                    " ({} {})",
                    crate::analysis::display::count(e),
                    if e == 1 { "event" } else { "events" }
                ),
                None => String::new(),
            };
            let _ = writeln!(
                out,
                "  {}: {} trials{events} in {} clusters, {} per cluster ({} to {}); effective n = {}",
                arm.name,
                c.display.trials,
                c.display.clusters,
                c.display.per_cluster,
                crate::analysis::display::count(c.smallest_cluster),
                crate::analysis::display::count(c.largest_cluster),
                c.display.clusters
            );
        }
    }
    if let Some(m) = a.dependence.m {
        let _ = writeln!(
            out,
            "  dependence {} with m = {m}: trials more than {m} apart taken as independent",
            a.dependence.model
        );
    }
    for m in &a.omitted_methods {
        let _ = writeln!(out, "  not computed: {} ({})", m.method, m.reason);
    }
    if a.adjustments.delta_per_bound != a.claim.delta {
        let _ = writeln!(
            out,
            "  error budget δ = {} divided to {} per bound ({})",
            crate::analysis::display::probability(a.claim.delta),
            crate::analysis::display::probability(a.adjustments.delta_per_bound),
            a.adjustments
                .steps
                .iter()
                .map(|s| s.reason.as_str())
                .collect::<Vec<_>>()
                .join("; ")
        );
    }
    let open: Vec<&str> = a
        .checklist
        .iter()
        .filter(|c| c.status == "open")
        .map(|c| c.id.as_str())
        .collect();
    if !open.is_empty() {
        let _ = writeln!(
            out,
            "  open assumptions (attest them in the spec): {}",
            open.join(", ")
        );
    }
    for w in &a.warnings {
        let _ = writeln!(out, "  note: {w}");
    }
    out
}

/// Where this look stands in the study's ledger, in a few words: the look's number (of how
/// many planned), and whether it was registered, re-issued or not registered at all.
pub fn look_status(a: &Analysis) -> String {
    let l = &a.looks;
    let file = l.ledger.file.as_deref().unwrap_or("the ledger");
    let which = if l.mode == "anytime" {
        format!("{}, anytime-valid", l.look)
    } else {
        format!("{} of {} planned", l.look, l.planned)
    };
    match l.ledger.status.as_str() {
        "not-registered" => "not registered (--no-ledger): exploration only".to_string(),
        "re-issue" => format!("{which}, re-issued (already in {file}; nothing further spent)"),
        _ if l.mode == "anytime" => {
            format!("{which} (registered in {file}; looking again spends nothing)")
        }
        _ => format!("{which} (registered in {file})"),
    }
}
