//! The report template: minijinja turns a `*.typ.j2` file into the typst source `main.typ`.
//!
//! The template context carries **structure only** — how many arms, which sections exist, the
//! names of the generated plot files — and never a string or number taken from the study. Every
//! value the reader sees is read inside typst from `data/results.json` with `json(..)`, so text
//! written by a user (a title, a note, an arm name) can never become template or typst code,
//! whatever it contains.

use minijinja::{Environment, UndefinedBehavior, context};
use sha2::{Digest, Sha256};

use super::plots::{
    compare_parts, histogram_of, look_series, look_sides, path_of, running, selected_arm,
};
use crate::analysis::display::{self, Rounding};
use crate::analysis::model::Analysis;
use crate::provenance::hex;

/// The text of the built-in template.
pub fn default_template() -> &'static str {
    include_str!("../../templates/report.typ.j2")
}

/// SHA-256 (lowercase hex) of a template's text, as recorded in provenance.
pub fn template_sha256(text: &str) -> String {
    hex(&Sha256::digest(text.as_bytes()))
}

/// Name under which the template is known in error messages.
pub(crate) const TEMPLATE_NAME: &str = "report.typ.j2";

/// Path of the generated plot for arm `i` (0-based), relative to the project root.
pub(crate) fn curve_path(i: usize) -> String {
    format!("plots/curve-{:02}.svg", i + 1)
}

/// Path of the chart comparing arms.
pub(crate) const ARMS_PLOT: &str = "plots/arms.svg";

/// Path of method comparison chart `i` (0-based; one per part from `plots::compare_parts`).
pub(crate) fn compare_path(i: usize) -> String {
    format!("plots/methods-{:02}.svg", i + 1)
}

/// Path of the `i`-th histogram (0-based, counted over the arms that have one).
pub(crate) fn histogram_path(i: usize) -> String {
    format!("plots/values-{:02}.svg", i + 1)
}

/// Path of the `i`-th "bound over looks" chart (0-based, over the arms that have one).
pub(crate) fn looks_path(i: usize) -> String {
    format!("plots/looks-{:02}.svg", i + 1)
}

/// Path of the `i`-th "bound along the trials" chart (0-based, over the arms with a path).
pub(crate) fn path_path(i: usize) -> String {
    format!("plots/path-{:02}.svg", i + 1)
}

/// Where the printed forms of the look history are served (see [`looks_display`]).
pub(crate) const LOOKS_JSON: &str = "data/looks.json";

/// Where the run report's plan (sample-size rationale) is served, and its printed forms.
pub(crate) const PLAN_JSON: &str = "data/plan.json";
/// See [`PLAN_JSON`].
pub(crate) const PLAN_DISPLAY_JSON: &str = "data/plan-display.json";

/// A failure to turn the template into typst source.
#[derive(Debug, Clone, PartialEq, Eq)]
pub(crate) struct TemplateFailure {
    pub message: String,
    pub line: Option<usize>,
}

/// Renders `template` into the text of `main.typ`.
///
/// Context variables (all structural):
/// - `arms`: list of `{index, number, plot, histogram, looks_plot, path_plot}` — 0-based index
///   into `results.arms`, 1-based number, and the paths of that arm's curve plot, histogram,
///   bound-over-looks chart and bound-along-the-trials chart (each or none);
/// - `arm_count`, `several_arms` (more than one arm), `arms_plot` (path, or none);
/// - `compare_plots`: list of `{plot, first, last, part, parts}` — one method comparison chart
///   per run of arms, with the 0-based indices of its first and last arm;
/// - `methods`: list of `{index}` into `results.methods`; `signatures`: list of `{index}`;
/// - `has_open`, `has_warnings`, `has_steps`, `has_inputs`, `has_compare`,
///   `has_lower` (some bound has a lower value), `has_curves`, `has_histograms`,
///   `has_omitted` (some compare method was left out), `binary` (binary outcome), `bounded`;
/// - `has_plan`, `oc_plot`, `saw_plot`, `plan_level`: the sample-size rationale, rendered by the
///   shared `plan-section.typ.j2` from data/plan.json and data/plan-display.json;
/// - `look_count` (entries in the look history), `has_looks_plots`, `has_paths` (some arm has
///   a `looks_plot` or a `path_plot`, also listed per arm), `clustered` (some arm carries the
///   nominal trials behind its cluster means); the look table reads data/looks.json.
pub(crate) fn render_main(template: &str, a: &Analysis) -> Result<String, TemplateFailure> {
    let mut env = Environment::new();
    // Typst source is not HTML; and an unknown variable is a template bug, never silently "".
    env.set_auto_escape_callback(|_| minijinja::AutoEscape::None);
    env.set_undefined_behavior(UndefinedBehavior::Strict);
    env.add_template(TEMPLATE_NAME, template).map_err(failure)?;
    // The plan section is shared with the plan report, so the two never diverge.
    env.add_template(
        super::plan_pdf::PLAN_SECTION_NAME,
        super::plan_pdf::plan_section_template(),
    )
    .map_err(failure)?;
    let (oc, saw) = match &a.plan {
        Some(p) => (
            super::plan_plots::oc_svg(p).ok().flatten().is_some(),
            super::plan_plots::sawtooth_svg(p).ok().flatten().is_some(),
        ),
        None => (false, false),
    };

    let several = a.arms.len() > 1;
    // Curve plots are numbered over the arms that have a curve (binary counts).
    // Histograms likewise over the arms that have one; both orders match `plots::render_plots`.
    let mut plotted = 0;
    let mut binned = 0;
    let mut looked = 0;
    let mut pathed = 0;
    let arms: Vec<_> = (0..a.arms.len())
        .map(|i| {
            let plot = a.arms[i].curve.as_ref().map(|_| {
                plotted += 1;
                curve_path(plotted - 1)
            });
            let histogram = histogram_of(&a.arms[i]).map(|_| {
                binned += 1;
                histogram_path(binned - 1)
            });
            let looks_plot = look_series(a, &a.arms[i]).map(|_| {
                looked += 1;
                looks_path(looked - 1)
            });
            let path_plot = path_of(&a.arms[i]).map(|_| {
                pathed += 1;
                path_path(pathed - 1)
            });
            context! {
                index => i,
                number => i + 1,
                plot => plot,
                histogram => histogram,
                looks_plot => looks_plot,
                path_plot => path_plot,
            }
        })
        .collect();
    let parts = compare_parts(a);
    let compare_plots: Vec<_> = parts
        .iter()
        .enumerate()
        .map(|(i, part)| {
            context! {
                plot => compare_path(i),
                first => part.start,
                last => part.end.saturating_sub(1),
                part => i + 1,
                parts => parts.len(),
            }
        })
        .collect();
    let methods: Vec<_> = (0..a.methods.len())
        .map(|i| context! { index => i })
        .collect();
    let signatures: Vec<_> = (0..a.signatures.len())
        .map(|i| context! { index => i })
        .collect();
    let ctx = context! {
        arms => arms,
        arm_count => a.arms.len(),
        several_arms => several,
        arms_plot => if several { Some(ARMS_PLOT) } else { None },
        compare_plots => compare_plots,
        methods => methods,
        signatures => signatures,
        has_open => a.checklist.iter().any(|c| c.status == "open"),
        has_warnings => !a.warnings.is_empty(),
        has_steps => !a.adjustments.steps.is_empty(),
        has_inputs => !a.provenance.inputs.is_empty(),
        has_compare => a.arms.iter().any(|arm| !arm.compare.is_empty()),
        has_lower => a.arms.iter().any(|arm| {
            arm.primary.lower.is_some() || arm.compare.iter().any(|c| c.lower.is_some())
        }),
        has_curves => plotted > 0,
        has_histograms => binned > 0,
        has_omitted => !a.omitted_methods.is_empty(),
        binary => a.outcome.kind == "binary",
        has_plan => a.plan.is_some(),
        oc_plot => oc.then_some(super::plan_plots::OC_PLOT),
        saw_plot => saw.then_some(super::plan_plots::SAW_PLOT),
        plan_level => 2,
        bounded => a.outcome.kind != "binary",
        look_count => a.looks.history.len(),
        has_looks_plots => looked > 0,
        has_paths => pathed > 0,
        clustered => a.arms.iter().any(|arm| arm.nominal.is_some()),
    };
    env.get_template(TEMPLATE_NAME)
        .and_then(|t| t.render(ctx))
        .map_err(failure)
}

/// The printed forms of the look history, which the results carry as bare numbers: for each
/// look its time, δ and the share it spent, and for each arm in it the trials, the look's own
/// deciding bound(s) and the running bound after it (the intersection over the looks so far,
/// as the verdict uses it). Bounds round outwards, as every printed bound does; `selected` is
/// the arm a `best` scope certified, if any.
///
/// Arms are matched across looks by name; the rows keep the history's order.
pub(crate) fn looks_display(a: &Analysis) -> serde_json::Value {
    let binary = a.outcome.kind == "binary";
    let unit = a.outcome.unit.as_deref();
    let show = |v: f64, rounding: Rounding| {
        if binary {
            display::percent(v, rounding)
        } else {
            display::quantity(v, unit, rounding)
        }
    };
    let sides = look_sides(a);
    let text = |upper: Option<f64>, lower: Option<f64>| -> Option<String> {
        let parts: Vec<String> = sides
            .iter()
            .map(|side| {
                let (v, r) = if *side == "upper" {
                    (upper, Rounding::Up)
                } else {
                    (lower, Rounding::Down)
                };
                v.filter(|x| x.is_finite())
                    .map(|x| show(x, r))
                    .unwrap_or_else(|| "—".to_string())
            })
            .collect();
        (upper.is_some() || lower.is_some()).then(|| parts.join(" – "))
    };
    // Per arm name, the own upper and lower bounds of every look so far, in order.
    type SoFar = (String, Vec<Option<f64>>, Vec<Option<f64>>);
    let mut seen: Vec<SoFar> = Vec::new();
    let rows: Vec<serde_json::Value> = a
        .looks
        .history
        .iter()
        .map(|record| {
            let arms: Vec<serde_json::Value> = record
                .arms
                .iter()
                .map(|l| {
                    let at = match seen.iter().position(|(n, _, _)| *n == l.name) {
                        Some(i) => i,
                        None => {
                            seen.push((l.name.clone(), Vec::new(), Vec::new()));
                            seen.len() - 1
                        }
                    };
                    let (_, ups, los) = &mut seen[at];
                    ups.push(l.upper);
                    los.push(l.lower);
                    let up = running(ups, true).last().copied().flatten();
                    let lo = running(los, false).last().copied().flatten();
                    serde_json::json!({
                        "name": l.name,
                        "n": display::count(l.n),
                        "own": text(l.upper, l.lower),
                        "running": text(up, lo),
                    })
                })
                .collect();
            serde_json::json!({
                "look": record.look,
                // RFC 3339 in UTC, as the ledger records it, shortened for a table cell.
                "time": record.time.as_ref().map(|t| t.replacen('T', " ", 1).replace('Z', " UTC")),
                "delta": display::probability(record.delta),
                "spent": display::probability(record.spent),
                "verdict": record.verdict,
                "arms": arms,
            })
        })
        .collect();
    serde_json::json!({
        "rows": rows,
        "selected": selected_arm(a),
    })
}

fn failure(e: minijinja::Error) -> TemplateFailure {
    let mut message = e.kind().to_string();
    if let Some(detail) = e.detail() {
        message.push_str(": ");
        message.push_str(detail);
    }
    TemplateFailure {
        message,
        line: e.line(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn template_digest_is_sha256_of_the_text() {
        // SHA-256("abc") from FIPS 180-2, appendix B.1.
        assert_eq!(
            template_sha256("abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
    }
}
