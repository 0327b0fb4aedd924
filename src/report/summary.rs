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

/// A few lines: the study, the verdict and statement, a table of arms, open assumptions.
pub fn summary(a: &Analysis) -> String {
    let mut out = header(a);
    let _ = writeln!(out, "verdict  {}", verdict_word(a.verdict));
    let _ = writeln!(out, "         {}", a.statement);
    let primary = a.methods.first().map(|m| m.id.as_str()).unwrap_or("");
    let lower_side = a.claim.side == "lower";
    let compare_ids: Vec<&str> = a.methods.iter().skip(1).map(|m| m.id.as_str()).collect();
    let dash = || "–".to_string();
    let mut header = vec![
        "arm".to_string(),
        "trials".to_string(),
        "events".to_string(),
        "observed".to_string(),
        format!("{primary} lower"),
        format!("{primary} upper"),
    ];
    header.extend(compare_ids.iter().map(|id| format!("{id}*")));
    header.push("verdict".to_string());
    let mut rows = vec![header];
    for arm in &a.arms {
        let mut row = vec![
            arm.name.clone(),
            arm.display.n.clone(),
            arm.events
                .map(crate::analysis::display::count)
                .unwrap_or_else(dash),
            arm.display.mean.clone(),
            arm.primary.display.lower.clone().unwrap_or_else(dash),
            arm.primary.display.upper.clone().unwrap_or_else(dash),
        ];
        for b in &arm.compare {
            let value = if lower_side {
                &b.display.lower
            } else {
                &b.display.upper
            };
            row.push(value.clone().unwrap_or_else(dash));
        }
        row.push(
            match arm.verdict {
                Verdict::Pass => "pass",
                Verdict::Fail => "fail",
                Verdict::Inconclusive => "inconclusive",
            }
            .to_string(),
        );
        rows.push(row);
    }
    let columns = rows[0].len();
    let widths: Vec<usize> = (0..columns)
        .map(|c| rows.iter().map(|r| r[c].chars().count()).max().unwrap_or(0))
        .collect();
    let _ = writeln!(out);
    for row in &rows {
        let mut line = String::from(" ");
        for (c, cell) in row.iter().enumerate() {
            let pad = widths[c] - cell.chars().count();
            line.push(' ');
            // Names and verdicts read left to right; numbers line up on the right.
            if c == 0 || c == columns - 1 {
                line.push_str(cell);
                line.push_str(&" ".repeat(pad));
            } else {
                line.push_str(&" ".repeat(pad));
                line.push_str(cell);
            }
            line.push(' ');
        }
        let _ = writeln!(out, "{}", line.trim_end());
    }
    if !compare_ids.is_empty() {
        let _ = writeln!(
            out,
            "  * {} bound of a compare method, for information only, not the guarantee",
            if lower_side { "lower" } else { "upper" }
        );
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
