//! The plan report's two charts, as SVG text drawn with plotters.
//!
//! * The operating characteristic: the chance that each plan passes, against the true rate, with
//!   the limit, the assumed rate and the consumer's risk (at most δ at the limit) marked.
//! * The sawtooth: the chance of passing at the assumed rate against the number of trials near the
//!   sample size for the wanted chance, showing where that chance is first reached and from where
//!   it holds. It is the picture behind the "held" rule: more trials do not always help.
//!
//! As in the run report's plots, text names a concrete family that the typst World serves and
//! plotters measures it with the same font bytes; ticks are computed here from integers and
//! labels carry a fixed number of decimals, so the SVG text is the same on every machine.

use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use typst::layout::Abs;
use typst::text::FontVariations;

use super::fonts::SANS_FAMILY;
use super::plots::{
    ACCENT, Frame, INK, LIMIT, draw_limit, house_chart, house_mesh, register_fonts, span_axis,
    white_canvas,
};
use crate::analysis::display::{self, Rounding};
use crate::plan::operating::{SawPoint, sawtooth};
use crate::plan::{PlanResults, min_trials, pass_probability};

const HELD: RGBColor = RGBColor(0xea, 0xf0, 0xf6);
/// Demonstration plans run from a light to a dark grey as the allowed events grow.
const RAMP_LIGHT: (u8, u8, u8) = (0xa8, 0xae, 0xb5);
const RAMP_DARK: (u8, u8, u8) = (0x3c, 0x42, 0x4a);

/// A number of trials as an axis label: grouped digits below a billion, else a power of ten.
/// (The run report's log axis switches at 10^7; the sawtooth's linear axis spans a narrow range
/// of large numbers, where switching form partway along would mix two styles on one axis.)
fn trials_label(v: f64) -> String {
    if v < 1e9 {
        return display::count(v.round().max(0.0) as u64);
    }
    let exp = v.log10().floor() as i32;
    let mantissa = v / 10f64.powi(exp);
    format!(
        "{}×10{}",
        (mantissa * 100.0).round() / 100.0,
        display::superscript(exp)
    )
}

/// Largest number of points drawn on the sawtooth; long teeth are sampled, their ends never.
const SAW_POINTS: u64 = 1600;
/// Most steps of the allowed number of events the sawtooth shows.
const SAW_STEPS: u64 = 150;

/// Path under which the operating-characteristic chart is served to typst.
pub(crate) const OC_PLOT: &str = "plots/plan-oc.svg";
/// Path under which the sawtooth chart is served to typst.
pub(crate) const SAW_PLOT: &str = "plots/plan-sawtooth.svg";

/// The charts of one plan; each is absent when the plan has nothing to draw (a bounded outcome
/// has no operating characteristic, an unreachable target no sawtooth).
pub(crate) struct PlanPlots {
    /// Chance of passing against the true rate, for every plan in `operating`.
    pub oc: Option<String>,
    /// Chance of passing at the assumed rate against the number of trials.
    pub sawtooth: Option<String>,
}

/// Draws both charts of `plan`.
pub(crate) fn render_plan_plots(plan: &PlanResults) -> Result<PlanPlots, String> {
    Ok(PlanPlots {
        oc: oc_svg(plan)?,
        sawtooth: sawtooth_svg(plan)?,
    })
}

/// Ticks at whole multiples of a "nice" step (1, 2, 2.5 or 5 times a power of ten) inside
/// [lo, hi], close to `target` intervals, and the decimals their labels need. With `whole`, the
/// step is at least 1 (numbers of trials).
fn ticks(lo: f64, hi: f64, target: f64, whole: bool) -> (Vec<f64>, usize) {
    let span = (hi - lo).max(f64::MIN_POSITIVE);
    let raw = span / target;
    let exp = raw.log10().floor() as i32;
    let mut best = (f64::INFINITY, 1.0, 0usize);
    for e in [exp - 1, exp, exp + 1] {
        for (m, extra) in [(1.0, 0usize), (2.0, 0), (2.5, 1), (5.0, 0)] {
            let step = m * 10f64.powi(e);
            if whole && step < 1.0 {
                continue;
            }
            let count = (span / step).floor();
            if count < 2.0 {
                continue;
            }
            let miss = (count - target).abs();
            if miss < best.0 {
                let decimals = if e >= 1 { 0 } else { (-e) as usize + extra };
                best = (miss, step, decimals.min(8));
            }
        }
    }
    let step = best.1;
    let first = (lo / step).ceil() as i64;
    let last = (hi / step).floor() as i64;
    let out = (first..=last.min(first + 60))
        .map(|k| k as f64 * step)
        .collect();
    (out, if whole { 0 } else { best.2 })
}

/// How rates are written on the axis: in percent, per million or per billion, whichever keeps
/// the limit readable.
struct Scale {
    factor: f64,
    unit: &'static str,
}

impl Scale {
    /// A rate as written, in this scale's unit: 0.002 → `0.2 %`, 1e-6 → `1 per million`.
    fn written(&self, rate: f64) -> String {
        if self.unit == "%" {
            return as_written(rate);
        }
        let text = format!("{:.6}", rate * self.factor);
        let text = text.trim_end_matches('0').trim_end_matches('.');
        format!("{text} {}", self.unit)
    }

    fn for_limit(limit: f64) -> Self {
        if limit >= 1e-3 {
            Scale {
                factor: 100.0,
                unit: "%",
            }
        } else if limit >= 1e-6 {
            Scale {
                factor: 1e6,
                unit: "per million",
            }
        } else {
            Scale {
                factor: 1e9,
                unit: "per billion",
            }
        }
    }
}

fn mix(t: f64) -> RGBColor {
    let lerp = |a: u8, b: u8| (a as f64 + (b as f64 - a as f64) * t).round() as u8;
    RGBColor(
        lerp(RAMP_LIGHT.0, RAMP_DARK.0),
        lerp(RAMP_LIGHT.1, RAMP_DARK.1),
        lerp(RAMP_LIGHT.2, RAMP_DARK.2),
    )
}

/// One legend entry.
enum Key {
    Line(RGBColor, u32, Dash),
    Dot(RGBColor, bool),
    Band(RGBColor),
}

#[derive(Clone, Copy)]
enum Dash {
    Solid,
    Dashed,
    Dotted,
}

const LEGEND_ROW: u32 = 21;
const SAMPLE: i32 = 24;
const GAP: i32 = 24;

/// The width, in pixels, that typst gives `text` in the SVG that plotters writes for a font
/// size of `px`. plotters-svg writes `font-size = px / 1.24`, while plotters' own measurement
/// scales the font to a line height of `px` and so comes out about a tenth too narrow for this
/// face; the legend is therefore measured here from the served font's advances.
fn text_width(text: &str, px: u32) -> i32 {
    let em = px as f64 / 1.24;
    let face = super::fonts::font_set().ok().and_then(|set| {
        set.fonts
            .iter()
            .find(|f| f.info().family.eq_ignore_ascii_case(SANS_FAMILY))
            .map(|f| {
                // The face has no variation axes, so the size given here changes nothing.
                f.clone()
                    .instantiate(f.info().variant, Abs::pt(10.0), &FontVariations::default())
            })
    });
    let face = face.as_ref();
    let ems: f64 = text
        .chars()
        .map(|c| {
            face.and_then(|f| {
                let glyph = f.ttf().glyph_index(c)?;
                f.x_advance(glyph.0)
            })
            // A character the face lacks is drawn from a fallback font; allow an average width.
            .map_or(0.6, |w| w.get())
        })
        .sum();
    (ems * em).ceil() as i32
}

/// Lays the legend entries out in rows no wider than `width`; returns (rows of entry indices,
/// widths of the entries).
fn legend_rows(entries: &[(Key, String)], font_px: u32, width: u32) -> (Vec<Vec<usize>>, Vec<i32>) {
    let widths: Vec<i32> = entries
        .iter()
        .map(|(_, label)| SAMPLE + 6 + text_width(label, font_px))
        .collect();
    let usable = width as i32 - 16;
    let mut rows: Vec<Vec<usize>> = Vec::new();
    let mut used = 0;
    for (i, w) in widths.iter().enumerate() {
        match rows.last_mut() {
            Some(row) if used + GAP + w <= usable => {
                row.push(i);
                used += GAP + w;
            }
            _ => {
                rows.push(vec![i]);
                used = *w;
            }
        }
    }
    (rows, widths)
}

fn stroke_sample<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    x: i32,
    y: i32,
    color: RGBColor,
    width: u32,
    dash: Dash,
) -> Result<(), String> {
    let style = color.stroke_width(width);
    let segments: Vec<(i32, i32)> = match dash {
        Dash::Solid => vec![(0, SAMPLE)],
        Dash::Dashed => vec![(0, 6), (9, 15), (18, 24)],
        Dash::Dotted => (0..7).map(|k| (k * 4, k * 4 + 1)).collect(),
    };
    for (a, b) in segments {
        area.draw(&PathElement::new(vec![(x + a, y), (x + b, y)], style))
            .map_err(|e| e.to_string())?;
    }
    Ok(())
}

/// Draws a legend below a chart, outside the plotting area so it can never hide data.
fn draw_legend<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    entries: &[(Key, String)],
    rows: &[Vec<usize>],
    widths: &[i32],
    font_px: u32,
) -> Result<(), String> {
    let font = (SANS_FAMILY, font_px).into_font().color(&INK);
    let (width, _) = area.dim_in_pixel();
    for (r, row) in rows.iter().enumerate() {
        let y = (r as u32 * LEGEND_ROW + LEGEND_ROW / 2 + 4) as i32;
        let total: i32 = row.iter().map(|&i| widths[i]).sum::<i32>() + GAP * (row.len() as i32 - 1);
        let mut x = ((width as i32 - total) / 2).max(6);
        for &i in row {
            let (key, label) = &entries[i];
            match key {
                Key::Line(color, w, dash) => stroke_sample(area, x, y, *color, *w, *dash)?,
                Key::Dot(color, filled) => {
                    let c = (x + SAMPLE / 2, y);
                    if *filled {
                        area.draw(&Circle::new(c, 4, color.filled()))
                    } else {
                        area.draw(&Circle::new(c, 4, color.stroke_width(2)))
                    }
                    .map_err(|e| e.to_string())?;
                }
                Key::Band(color) => {
                    area.draw(&Rectangle::new(
                        [(x, y - 6), (x + SAMPLE, y + 6)],
                        color.filled(),
                    ))
                    .map_err(|e| e.to_string())?;
                }
            }
            area.draw(&Text::new(
                label.clone(),
                (x + SAMPLE + 6, y),
                font.clone().pos(Pos::new(HPos::Left, VPos::Center)),
            ))
            .map_err(|e| e.to_string())?;
            x += widths[i] + GAP;
        }
    }
    Ok(())
}

fn pct(p: f64, rounding: Rounding) -> String {
    display::percent(p, rounding).replace('\u{a0}', " ")
}

fn as_written(p: f64) -> String {
    display::limit_percent(p).replace('\u{a0}', " ")
}

/// The operating characteristic of every plan in `plan.operating`: the demonstration plans in
/// greys (darker as more events are allowed), the plan for the wanted chance in the accent
/// colour. `None` when the plan has no operating rows (bounded outcomes).
pub(crate) fn oc_svg(plan: &PlanResults) -> Result<Option<String>, String> {
    if plan.operating.is_empty() {
        return Ok(None);
    }
    register_fonts()?;
    let limit = plan.claim.limit;
    let delta = plan.claim.delta;
    let assumed = plan
        .target
        .as_ref()
        .map(|t| t.assumed_rate)
        .or_else(|| plan.operating.iter().find_map(|o| o.assumed_rate));
    let target_n = plan.target.as_ref().and_then(|t| t.trials);
    let wanted = plan.target.as_ref().map(|t| t.pass_probability);
    let scale = Scale::for_limit(limit);
    let f = scale.factor;
    let xmax = (2.0 * limit)
        .max(assumed.map_or(0.0, |a| a * 1.15))
        .min(1.0);
    let (xticks, xdec) = ticks(0.0, xmax * f, 7.0, false);
    let yticks: Vec<f64> = (0..=5).map(|k| k as f64 * 20.0).collect();

    // Each plan's curve from the plan document, cut at the edge of the chart where it is
    // evaluated exactly, so no line leaves the plotting area.
    let demos: Vec<u64> = plan.demonstration.iter().map(|d| d.trials).collect();
    let mut curves = Vec::new();
    for o in &plan.operating {
        let mut pts: Vec<(f64, f64)> = o
            .curve
            .iter()
            .filter(|p| p[0].is_finite() && p[1].is_finite() && p[0] <= xmax)
            .map(|p| (p[0] * f, p[1] * 100.0))
            .collect();
        if pts.last().is_none_or(|p| p.0 < xmax * f) {
            let edge = pass_probability(o.trials, limit, delta, xmax).map_err(|e| e.to_string())?;
            pts.push((xmax * f, edge * 100.0));
        }
        curves.push((o, pts));
    }
    let n_demo = curves
        .iter()
        .filter(|(o, _)| demos.contains(&o.trials) && Some(o.trials) != target_n)
        .count();

    let mut entries: Vec<(Key, String)> = Vec::new();
    let mut shade = 0usize;
    let mut styles = Vec::new();
    for (o, _) in &curves {
        let label = format!(
            "{} trials, at most {} event{}",
            display::count(o.trials),
            o.allowed_events,
            if o.allowed_events == 1 { "" } else { "s" }
        );
        if Some(o.trials) == target_n {
            styles.push((ACCENT, 3u32));
            entries.push((
                Key::Line(ACCENT, 3, Dash::Solid),
                format!("{label} (plan for the wanted chance)"),
            ));
        } else {
            let t = if n_demo > 1 {
                shade as f64 / (n_demo - 1) as f64
            } else {
                1.0
            };
            shade += 1;
            let c = mix(t);
            styles.push((c, 2u32));
            entries.push((Key::Line(c, 2, Dash::Solid), label));
        }
    }
    entries.push((
        Key::Line(LIMIT, 2, Dash::Dashed),
        format!("limit {}", scale.written(limit)),
    ));
    entries.push((
        Key::Line(LIMIT, 1, Dash::Dotted),
        format!(
            "δ = {}: the most any plan passes at the limit",
            display::risk_percent(delta).replace('\u{a0}', " ")
        ),
    ));
    if let Some(a) = assumed {
        entries.push((
            Key::Line(ACCENT, 1, Dash::Dotted),
            format!("assumed rate {}", scale.written(a)),
        ));
    }
    if let (Some(w), Some(_)) = (wanted, target_n) {
        entries.push((
            Key::Dot(ACCENT, true),
            format!("wanted chance {} at the assumed rate", as_written(w)),
        ));
    }

    let (w, plot_h, font_px) = (680u32, 380u32, 14u32);
    let mut svg = String::new();
    {
        let (rows, widths) = legend_rows(&entries, font_px - 1, w);
        let legend_h = rows.len() as u32 * LEGEND_ROW + 10;
        let h = plot_h + legend_h;
        let root = white_canvas(&mut svg, (w, h))?;
        let (upper, lower) = root.split_vertically(plot_h);
        let frame = Frame {
            title: "Chance of passing against the true rate",
            title_px: 16,
            margin_right: 20,
            x_labels: 44,
            y_labels: 56,
        };
        let mut chart = house_chart(
            &upper,
            frame,
            span_axis(0.0, xmax * f, xticks),
            span_axis(0.0, 100.0, yticks),
        )?;
        house_mesh(&mut chart, font_px)
            .x_desc(format!("true rate ({})", scale.unit))
            .y_desc("chance of passing (%)")
            .x_label_formatter(&|v| format!("{:.*}", xdec, v))
            .y_label_formatter(&|v| format!("{v:.0}"))
            .draw()
            .map_err(|e| e.to_string())?;

        chart
            .draw_series(DashedLineSeries::new(
                vec![(0.0, delta * 100.0), (xmax * f, delta * 100.0)],
                2,
                4,
                LIMIT.stroke_width(1),
            ))
            .map_err(|e| e.to_string())?;
        draw_limit(&mut chart, (limit * f, 0.0), (limit * f, 100.0))?;
        if let Some(a) = assumed.filter(|a| *a <= xmax) {
            chart
                .draw_series(DashedLineSeries::new(
                    vec![(a * f, 0.0), (a * f, 100.0)],
                    2,
                    4,
                    ACCENT.stroke_width(1),
                ))
                .map_err(|e| e.to_string())?;
        }
        // Demonstration plans first, so the plan for the wanted chance is drawn on top.
        let mut order: Vec<usize> = (0..curves.len()).collect();
        order.sort_by_key(|&i| Some(curves[i].0.trials) == target_n);
        for i in order {
            let (color, width) = styles[i];
            chart
                .draw_series(LineSeries::new(
                    curves[i].1.clone(),
                    color.stroke_width(width),
                ))
                .map_err(|e| e.to_string())?;
        }
        if let (Some(a), Some(p)) = (
            assumed.filter(|a| *a <= xmax),
            plan.target
                .as_ref()
                .and_then(|t| t.pass_probability_at_trials),
        ) {
            chart
                .draw_series(std::iter::once(Circle::new(
                    (a * f, p * 100.0),
                    5,
                    ACCENT.filled(),
                )))
                .map_err(|e| e.to_string())?;
        }
        // Where every curve must lie at or below: δ at the limit.
        chart
            .draw_series(std::iter::once(Circle::new(
                (limit * f, delta * 100.0),
                4,
                LIMIT.stroke_width(2),
            )))
            .map_err(|e| e.to_string())?;

        draw_legend(&lower, &entries, &rows, &widths, font_px - 1)?;
        root.present().map_err(|e| e.to_string())?;
    }
    Ok(Some(svg))
}

/// The trial counts and chances drawn on the sawtooth: every number of trials from the step
/// before the one where the wanted chance is first reached to the step after the one where it is
/// held. Long steps are sampled (their first and last points always included), since within a
/// step the chance only falls.
pub(crate) fn sawtooth_points(plan: &PlanResults) -> Result<Option<Vec<SawPoint>>, String> {
    let Some(t) = plan.target.as_ref() else {
        return Ok(None);
    };
    let (Some(_), Some(c_held), Some(c_first)) =
        (t.trials, t.allowed_events, t.first_reached_allowed_events)
    else {
        return Ok(None);
    };
    let (limit, delta, rate) = (plan.claim.limit, plan.claim.delta, t.assumed_rate);
    let start = |c: u64| min_trials(c, limit, delta).map_err(|e| e.to_string());
    let mut c_lo = c_first.saturating_sub(1);
    let c_hi = c_held + 1;
    if c_hi - c_lo + 1 > SAW_STEPS {
        c_lo = c_hi + 1 - SAW_STEPS;
    }
    let steps = c_hi - c_lo + 1;
    let per_step = (SAW_POINTS / steps).max(3);
    let mut out = Vec::new();
    for c in c_lo..=c_hi {
        let (a, b) = (start(c)?, start(c + 1)? - 1);
        let points = if b - a < per_step {
            sawtooth(limit, delta, rate, a, b).map_err(|e| e.to_string())?
        } else {
            let mut pts = Vec::with_capacity(per_step as usize);
            for j in 0..per_step {
                let n = a + ((b - a) as u128 * j as u128 / (per_step - 1) as u128) as u64;
                pts.extend(sawtooth(limit, delta, rate, n, n).map_err(|e| e.to_string())?);
            }
            pts
        };
        out.extend(points);
    }
    Ok(Some(out))
}

/// The sawtooth chart; `None` when the plan has no reachable target.
pub(crate) fn sawtooth_svg(plan: &PlanResults) -> Result<Option<String>, String> {
    let Some(points) = sawtooth_points(plan)? else {
        return Ok(None);
    };
    let Some(t) = plan.target.as_ref() else {
        return Ok(None);
    };
    let (Some(held), Some(first), Some(p_held), Some(p_first)) = (
        t.trials,
        t.first_reached,
        t.pass_probability_at_trials,
        t.pass_probability_at_first_reached,
    ) else {
        return Ok(None);
    };
    if points.is_empty() {
        return Ok(None);
    }
    register_fonts()?;
    let wanted = t.pass_probability;
    let xlo = points[0].trials as f64;
    let xhi = points[points.len() - 1].trials as f64;
    let xhi = if xhi > xlo { xhi } else { xlo + 1.0 };
    let (pmin, pmax) = points
        .iter()
        .map(|p| p.pass_probability)
        .chain([wanted])
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), p| {
            (lo.min(p), hi.max(p))
        });
    let pad = ((pmax - pmin) * 0.08).max(0.005);
    let ylo = ((pmin - pad) * 100.0).max(0.0);
    let yhi = ((pmax + pad) * 100.0).min(100.0);
    let (ylo, yhi) = if yhi - ylo < 1.0 {
        ((yhi - 1.0).max(0.0), (ylo + 1.0).min(100.0))
    } else {
        (ylo, yhi)
    };
    let (xticks, _) = ticks(xlo, xhi, 6.0, true);
    let (yticks, ydec) = ticks(ylo, yhi, 5.0, false);

    let first_in = (first as f64) >= xlo;
    let entries = vec![
        (
            Key::Line(ACCENT, 2, Dash::Solid),
            format!(
                "chance of passing at the assumed rate {}",
                as_written(t.assumed_rate)
            ),
        ),
        (
            Key::Line(LIMIT, 1, Dash::Dashed),
            format!("wanted {}", as_written(wanted)),
        ),
        (
            Key::Dot(ACCENT, false),
            if first_in {
                format!(
                    "first reached: {} trials ({})",
                    display::count(first),
                    pct(p_first, Rounding::Down)
                )
            } else {
                format!(
                    "first reached: {} trials (left of this window)",
                    display::count(first)
                )
            },
        ),
        (
            Key::Dot(ACCENT, true),
            format!(
                "held from: {} trials ({})",
                display::count(held),
                pct(p_held, Rounding::Down)
            ),
        ),
        (
            Key::Band(HELD),
            "at or above the wanted chance for every larger number".to_string(),
        ),
    ];

    let (w, plot_h, font_px) = (680u32, 300u32, 14u32);
    let mut svg = String::new();
    {
        let (rows, widths) = legend_rows(&entries, font_px - 1, w);
        let legend_h = rows.len() as u32 * LEGEND_ROW + 10;
        let h = plot_h + legend_h;
        let root = white_canvas(&mut svg, (w, h))?;
        let (upper, lower) = root.split_vertically(plot_h);
        let frame = Frame {
            title: "Chance of passing at the assumed rate, by number of trials",
            title_px: 16,
            margin_right: 24,
            x_labels: 44,
            y_labels: 62,
        };
        let mut chart = house_chart(
            &upper,
            frame,
            span_axis(xlo, xhi, xticks),
            span_axis(ylo, yhi, yticks),
        )?;
        // The band first, so grid lines and data are drawn over it.
        chart
            .draw_series(std::iter::once(Rectangle::new(
                [((held as f64).min(xhi), ylo), (xhi, yhi)],
                HELD.filled(),
            )))
            .map_err(|e| e.to_string())?;
        house_mesh(&mut chart, font_px)
            .x_desc("number of trials")
            .y_desc("chance of passing (%)")
            .x_label_formatter(&|v| trials_label(*v))
            .y_label_formatter(&|v| format!("{:.*}", ydec, v))
            .draw()
            .map_err(|e| e.to_string())?;
        chart
            .draw_series(DashedLineSeries::new(
                vec![(xlo, wanted * 100.0), (xhi, wanted * 100.0)],
                7,
                5,
                LIMIT.stroke_width(1),
            ))
            .map_err(|e| e.to_string())?;
        chart
            .draw_series(LineSeries::new(
                points.iter().map(|p| {
                    (
                        p.trials as f64,
                        (p.pass_probability * 100.0).clamp(ylo, yhi),
                    )
                }),
                ACCENT.stroke_width(2),
            ))
            .map_err(|e| e.to_string())?;
        if first_in {
            chart
                .draw_series(std::iter::once(Circle::new(
                    (first as f64, p_first * 100.0),
                    5,
                    ACCENT.stroke_width(2),
                )))
                .map_err(|e| e.to_string())?;
        }
        chart
            .draw_series(std::iter::once(Circle::new(
                (held as f64, p_held * 100.0),
                5,
                ACCENT.filled(),
            )))
            .map_err(|e| e.to_string())?;
        draw_legend(&lower, &entries, &rows, &widths, font_px - 1)?;
        root.present().map_err(|e| e.to_string())?;
    }
    Ok(Some(svg))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::plan::model::{BinaryRequest, binary_plan};

    fn seal_plan(assumed: f64) -> PlanResults {
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
    fn ticks_are_whole_multiples_of_a_nice_step() {
        // Decimal arithmetic: 0–2 % in steps of 0.25 gives nine ticks with two decimals.
        let (t, d) = ticks(0.0, 2.0, 7.0, false);
        assert_eq!(t.first(), Some(&0.0));
        assert_eq!(t.last(), Some(&2.0));
        assert_eq!(d, 2);
        let (t, d) = ticks(299.0, 1101.0, 6.0, true);
        assert_eq!(d, 0);
        assert!(
            t.iter()
                .all(|v| *v >= 299.0 && *v <= 1101.0 && v.fract() == 0.0)
        );
    }

    #[test]
    fn sawtooth_covers_first_reached_and_held() {
        let plan = seal_plan(0.002);
        let t = plan.target.as_ref().unwrap();
        let pts = sawtooth_points(&plan).unwrap().expect("a reachable target");
        let at = |n: u64| {
            pts.iter()
                .find(|p| p.trials == n)
                .map(|p| p.pass_probability)
        };
        // The chart's own points agree with the target search at both marked sample sizes.
        assert_eq!(
            at(t.first_reached.unwrap()),
            t.pass_probability_at_first_reached
        );
        assert_eq!(at(t.trials.unwrap()), t.pass_probability_at_trials);
        assert!(pts.windows(2).all(|w| w[0].trials < w[1].trials));
    }

    #[test]
    fn charts_name_the_served_family_and_skip_what_does_not_exist() {
        let plan = seal_plan(0.002);
        let plots = render_plan_plots(&plan).unwrap();
        for svg in [plots.oc.as_ref().unwrap(), plots.sawtooth.as_ref().unwrap()] {
            assert!(svg.contains("font-family=\"Noto Sans\""));
            assert!(!svg.contains("sans-serif"));
        }
        // At or above the limit no number of trials reaches the target: no sawtooth.
        let plots = render_plan_plots(&seal_plan(0.012)).unwrap();
        assert!(plots.oc.is_some());
        assert!(plots.sawtooth.is_none());
    }

    #[test]
    fn trial_labels_group_digits() {
        // Thousands grouped in threes, as display::count prints them (decimal arithmetic).
        assert_eq!(trials_label(2_995_731.0), "2,995,731");
        assert_eq!(trials_label(10_513_033.0), "10,513,033");
        assert_eq!(trials_label(2e9), "2×10⁹");
    }
}
