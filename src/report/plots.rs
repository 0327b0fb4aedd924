//! Plots as SVG text, drawn with plotters.
//!
//! Text in the SVGs names a concrete family that the typst World serves ([`SANS_FAMILY`]), and
//! plotters measures labels with the very same font bytes, so what plotters laid out is what
//! typst draws. Tick positions are chosen here from integers rather than by plotters, and every
//! label is formatted with a fixed number of decimals, so the SVG text is the same on every
//! machine.

use std::sync::OnceLock;

use std::ops::Range;

use plotters::coord::combinators::LogCoord;
use plotters::coord::ranged1d::{DefaultFormatting, KeyPointHint, Ranged};
use plotters::coord::types::RangedCoordf64;
use plotters::prelude::*;
use plotters::style::FontStyle;

use super::fonts::{SANS_BOLD, SANS_FAMILY, SANS_REGULAR};
use crate::analysis::model::{Analysis, ArmResult, Curve};

const INK: RGBColor = RGBColor(0x22, 0x25, 0x2a);
const GRID: RGBColor = RGBColor(0xe2, 0xe4, 0xe8);
const AXIS: RGBColor = RGBColor(0x8a, 0x90, 0x98);
const ACCENT: RGBColor = RGBColor(0x1f, 0x4e, 0x79);
const SECOND: RGBColor = RGBColor(0x7d, 0x84, 0x8c);
const LIMIT: RGBColor = RGBColor(0x9b, 0x3d, 0x2f);

/// An axis whose ticks are given, rather than chosen by plotters from floating-point
/// arithmetic, so that tick positions and labels are the same on every machine.
struct Ticked<R: Ranged<ValueType = f64>> {
    inner: R,
    ticks: Vec<f64>,
}

impl<R: Ranged<ValueType = f64>> Ranged for Ticked<R> {
    type FormatOption = DefaultFormatting;
    type ValueType = f64;

    fn map(&self, value: &f64, limit: (i32, i32)) -> i32 {
        self.inner.map(value, limit)
    }

    fn key_points<Hint: KeyPointHint>(&self, hint: Hint) -> Vec<f64> {
        // Only bold (labelled) points: light grid lines would add clutter.
        if hint.weight().allow_light_points() {
            Vec::new()
        } else {
            self.ticks.clone()
        }
    }

    fn range(&self) -> Range<f64> {
        self.inner.range()
    }

    fn axis_pixel_range(&self, limit: (i32, i32)) -> Range<i32> {
        self.inner.axis_pixel_range(limit)
    }
}

fn log_axis(lo: f64, hi: f64) -> Ticked<LogCoord<f64>> {
    Ticked {
        inner: (lo..hi).log_scale().into(),
        ticks: log_ticks(lo, hi),
    }
}

fn linear_axis(hi: f64, ticks: Vec<f64>) -> Ticked<RangedCoordf64> {
    Ticked {
        inner: (0.0..hi).into(),
        ticks,
    }
}

/// Every SVG one report needs, in the order the template refers to them.
pub(crate) struct PlotSet {
    /// One "bound against number of trials" chart per arm, in arm order.
    pub curves: Vec<String>,
    /// The chart comparing all arms; only drawn when there is more than one arm.
    pub arms: Option<String>,
}

/// Registers the embedded sans faces with plotters' font registry (once per process).
fn register_fonts() -> Result<(), String> {
    static DONE: OnceLock<Result<(), String>> = OnceLock::new();
    DONE.get_or_init(|| {
        for (style, bytes) in [
            (FontStyle::Normal, SANS_REGULAR),
            (FontStyle::Bold, SANS_BOLD),
        ] {
            plotters::style::register_font(SANS_FAMILY, style, bytes)
                .map_err(|_| format!("plotters rejected the embedded font {SANS_FAMILY}"))?;
        }
        Ok(())
    })
    .clone()
}

/// How values are shown on a rate axis: binary outcomes as percentages, bounded ones in their
/// declared unit.
struct Scale {
    factor: f64,
    suffix: String,
}

impl Scale {
    fn for_analysis(a: &Analysis) -> Self {
        if a.outcome.kind == "binary" {
            // Small rates read better per million or per billion than as long decimals of %.
            let largest = a
                .arms
                .iter()
                .filter_map(|arm| deciding_value(a, arm))
                .fold(a.claim.limit, f64::max);
            let (factor, suffix) = if largest >= 1e-3 {
                (100.0, "%")
            } else if largest >= 1e-6 {
                (1e6, "per million")
            } else {
                (1e9, "per billion")
            };
            Scale {
                factor,
                suffix: suffix.into(),
            }
        } else {
            Scale {
                factor: 1.0,
                suffix: a.outcome.unit.clone().unwrap_or_default(),
            }
        }
    }

    fn axis_unit(&self) -> String {
        if self.suffix.is_empty() {
            String::new()
        } else {
            format!(" ({})", self.suffix)
        }
    }
}

/// Draws every plot of the report.
pub(crate) fn render_plots(a: &Analysis) -> Result<PlotSet, String> {
    register_fonts()?;
    let scale = Scale::for_analysis(a);
    let several = a.arms.len() > 1;
    // One curve per arm that has one (binary counts), in arm order.
    let curves = a
        .arms
        .iter()
        .filter_map(|arm| {
            arm.curve
                .as_ref()
                .map(|c| curve_svg(a, arm, c, &scale, several))
        })
        .collect::<Result<Vec<_>, _>>()?;
    let arms = if several {
        Some(arms_svg(a, &scale)?)
    } else {
        None
    };
    Ok(PlotSet { curves, arms })
}

fn finite(points: &[[f64; 2]]) -> impl Iterator<Item = (f64, f64)> + Clone + '_ {
    points
        .iter()
        .filter(|p| p[0].is_finite() && p[1].is_finite() && p[0] > 0.0)
        .map(|p| (p[0], p[1]))
}

/// "1-2-5" ticks inside [lo, hi] for a logarithmic axis of trial counts.
fn log_ticks(lo: f64, hi: f64) -> Vec<f64> {
    let mut out = Vec::new();
    for mantissas in [&[1u64][..], &[1, 2, 5], &[1, 2, 3, 4, 5, 6, 7, 8, 9]] {
        out.clear();
        let mut decade: u64 = 1;
        while (decade as f64) <= hi && decade < u64::MAX / 100 {
            for m in mantissas {
                let v = (m * decade) as f64;
                if v >= lo && v <= hi {
                    out.push(v);
                }
            }
            decade *= 10;
        }
        if out.len() >= 3 {
            break;
        }
    }
    if out.len() > 9 {
        // Many decades: keep powers of ten only.
        out.retain(|v| {
            let l = v.log10();
            (l - l.round()).abs() < 1e-9
        });
    }
    out
}

/// A "nice" linear step (1, 2, 2.5 or 5 times a power of ten) giving close to `target`
/// intervals below `span`, and the number of decimals its labels need.
fn nice_step(span: f64, target: f64) -> (f64, usize) {
    let raw = (span / target).max(f64::MIN_POSITIVE);
    let exp = raw.log10().floor() as i32;
    let mut best = (f64::INFINITY, 1.0, 0usize);
    for e in [exp - 1, exp, exp + 1] {
        for (m, extra) in [(1.0, 0usize), (2.0, 0), (2.5, 1), (5.0, 0)] {
            let step = m * 10f64.powi(e);
            let count = (span / step).floor();
            if count < 3.0 {
                continue;
            }
            let miss = (count - target).abs();
            if miss < best.0 {
                let decimals = if e >= 1 { 0 } else { (-e) as usize + extra };
                best = (miss, step, decimals.min(8));
            }
        }
    }
    (best.1, best.2)
}

/// Linear ticks from 0 to `hi`, as multiples of the step (computed from integers so that no
/// accumulated rounding reaches the labels).
fn linear_ticks(hi: f64, target: f64) -> (Vec<f64>, usize) {
    let (step, decimals) = nice_step(hi, target);
    let count = (hi / step).floor() as u64;
    (
        (0..=count.min(50)).map(|i| i as f64 * step).collect(),
        decimals,
    )
}

/// Groups thousands with commas, matching the model's display strings ("4,600").
/// A tick label for a number of trials: grouped digits up to ten million, a power-of-ten form
/// beyond, so that labels of huge campaigns stay short.
fn trials_label(v: f64) -> String {
    if v < 1e7 {
        return group(v);
    }
    let exp = v.log10().floor() as i32;
    let mantissa = v / 10f64.powi(exp);
    let digits = crate::analysis::display::superscript(exp);
    if (mantissa - 1.0).abs() < 1e-9 {
        format!("10{digits}")
    } else {
        format!("{}×10{digits}", (mantissa * 10.0).round() / 10.0)
    }
}

fn group(v: f64) -> String {
    let digits = format!("{}", v.round().max(0.0) as u64);
    let mut out = String::new();
    for (i, c) in digits.chars().enumerate() {
        if i > 0 && (digits.len() - i) % 3 == 0 {
            out.push(',');
        }
        out.push(c);
    }
    out
}

/// A user string fit for a plot label: at most `max` characters, and no control characters
/// (which XML, and so SVG, cannot carry).
fn shorten(name: &str, max: usize) -> String {
    let clean: String = name
        .chars()
        .map(|c| if c.is_control() { ' ' } else { c })
        .collect();
    if clean.chars().count() <= max {
        clean
    } else {
        let mut s: String = clean.chars().take(max.saturating_sub(1)).collect();
        s.push('…');
        s
    }
}

fn side_word(bound: &str) -> &'static str {
    if bound == "lower" { "lower" } else { "upper" }
}

/// One legend entry drawn below a chart.
enum Key {
    Line(RGBColor, bool),
    Dot(RGBColor),
}

/// Draws a legend row (outside the plotting area, so it can never hide data).
fn legend<DB: DrawingBackend>(
    area: &DrawingArea<DB, plotters::coord::Shift>,
    entries: &[(Key, String)],
    font_px: u32,
) -> Result<(), String> {
    let font = (SANS_FAMILY, font_px).into_font().color(&INK);
    let (width, height) = area.dim_in_pixel();
    let y = (height / 2) as i32;
    let sample = 22;
    let widths: Vec<i32> = entries
        .iter()
        .map(|(_, label)| {
            let w = area
                .estimate_text_size(label, &font)
                .map(|(w, _)| w as i32)
                .unwrap_or(0);
            sample + 6 + w
        })
        .collect();
    let gap = 28;
    let total: i32 = widths.iter().sum::<i32>() + gap * (entries.len() as i32 - 1).max(0);
    let mut x = ((width as i32 - total) / 2).max(4);
    for ((key, label), w) in entries.iter().zip(widths) {
        match key {
            Key::Line(color, dashed) => {
                if *dashed {
                    for k in 0..3 {
                        let x0 = x + k * 8;
                        area.draw(&PathElement::new(
                            vec![(x0, y), (x0 + 5, y)],
                            color.stroke_width(2),
                        ))
                        .map_err(|e| e.to_string())?;
                    }
                } else {
                    area.draw(&PathElement::new(
                        vec![(x, y), (x + sample, y)],
                        color.stroke_width(2),
                    ))
                    .map_err(|e| e.to_string())?;
                }
            }
            Key::Dot(color) => {
                area.draw(&Circle::new((x + sample / 2, y), 4, color.filled()))
                    .map_err(|e| e.to_string())?;
            }
        }
        area.draw(&Text::new(
            label.clone(),
            (x + sample + 6, y),
            font.clone().pos(plotters::style::text_anchor::Pos::new(
                plotters::style::text_anchor::HPos::Left,
                plotters::style::text_anchor::VPos::Center,
            )),
        ))
        .map_err(|e| e.to_string())?;
        x += w + gap;
    }
    Ok(())
}

/// The deciding bound of one arm against the number of trials.
fn curve_svg(
    a: &Analysis,
    arm: &ArmResult,
    curve: &Curve,
    scale: &Scale,
    small: bool,
) -> Result<String, String> {
    let (w, h, font_px, title_px) = if small {
        (440, 330, 16, 17)
    } else {
        (660, 350, 14, 16)
    };
    let held: Vec<(f64, f64)> = finite(&curve.at_observed_rate).collect();
    let none: Vec<(f64, f64)> = finite(&curve.no_further_events).collect();
    let obs = (curve.observed[0], curve.observed[1]);
    let limit = a.claim.limit;

    let xs = held
        .iter()
        .chain(none.iter())
        .map(|p| p.0)
        .chain([obs.0])
        .filter(|x| *x > 0.0);
    let (mut xlo, mut xhi) = xs.fold((f64::INFINITY, 0.0f64), |(lo, hi), x| {
        (lo.min(x), hi.max(x))
    });
    if !xlo.is_finite() || xlo <= 0.0 {
        xlo = 1.0;
    }
    if xhi <= xlo * 1.5 {
        xhi = xlo * 10.0;
    }
    let ys = held
        .iter()
        .chain(none.iter())
        .map(|p| p.1)
        .chain([obs.1, limit]);
    let ymax_raw = ys.filter(|y| y.is_finite()).fold(0.0f64, f64::max);
    let ymax = if ymax_raw > 0.0 {
        ymax_raw * scale.factor * 1.12
    } else {
        scale.factor
    };
    let (yticks, decimals) = linear_ticks(ymax, 6.0);

    let side = side_word(&curve.bound);
    let title = if a.arms.len() > 1 {
        format!("Arm {}", shorten(&arm.name, 34))
    } else {
        format!(
            "{} {} bound against number of trials",
            capitalise(side),
            a_confidence(a)
        )
    };
    let held_label = "observed rate held".to_string();
    let none_label = "no further events".to_string();
    let obs_label = format!(
        "observed: {} trials, bound {}",
        if arm.n >= 10_000_000 {
            trials_label(arm.n as f64)
        } else {
            arm.display.n.clone()
        },
        deciding_display(a, arm).unwrap_or_else(|| "n/a".into())
    );
    let limit_label = format!("limit {}", a.claim.display.limit);

    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (w, h)).into_drawing_area();
        root.fill(&WHITE).map_err(|e| e.to_string())?;
        let legend_h = if small { 52 } else { 30 };
        let (upper, lower) = root.split_vertically(h - legend_h);
        let mut chart = ChartBuilder::on(&upper)
            .caption(
                &title,
                (SANS_FAMILY, title_px, FontStyle::Bold)
                    .into_font()
                    .color(&INK),
            )
            .margin_top(6)
            .margin_left(8)
            .margin_right(18)
            .x_label_area_size(if small { 44 } else { 42 })
            .y_label_area_size(if small { 58 } else { 62 })
            .build_cartesian_2d(log_axis(xlo, xhi), linear_axis(ymax, yticks))
            .map_err(|e| e.to_string())?;
        let label_font = (SANS_FAMILY, font_px).into_font().color(&INK);
        chart
            .configure_mesh()
            .bold_line_style(GRID.stroke_width(1))
            .light_line_style(TRANSPARENT)
            .axis_style(AXIS.stroke_width(1))
            .label_style(label_font.clone())
            .axis_desc_style(label_font.clone())
            .x_desc("number of trials (log scale)")
            .y_desc(format!("{} bound{}", side, scale.axis_unit()))
            .x_label_formatter(&|v| trials_label(*v))
            .y_label_formatter(&|v| format!("{:.*}", decimals, v))
            .draw()
            .map_err(|e| e.to_string())?;

        let f = scale.factor;
        chart
            .draw_series(DashedLineSeries::new(
                vec![(xlo, limit * f), (xhi, limit * f)],
                7,
                5,
                LIMIT.stroke_width(2),
            ))
            .map_err(|e| e.to_string())?;
        chart
            .draw_series(DashedLineSeries::new(
                none.iter().map(|(x, y)| (*x, y * f)).collect::<Vec<_>>(),
                5,
                4,
                SECOND.stroke_width(2),
            ))
            .map_err(|e| e.to_string())?;
        chart
            .draw_series(LineSeries::new(
                held.iter().map(|(x, y)| (*x, y * f)).collect::<Vec<_>>(),
                ACCENT.stroke_width(2),
            ))
            .map_err(|e| e.to_string())?;
        if obs.0 > 0.0 && obs.1.is_finite() {
            chart
                .draw_series(std::iter::once(Circle::new(
                    (obs.0, obs.1 * f),
                    5,
                    ACCENT.filled(),
                )))
                .map_err(|e| e.to_string())?;
            chart
                .draw_series(std::iter::once(Circle::new(
                    (obs.0, obs.1 * f),
                    5,
                    WHITE.stroke_width(1),
                )))
                .map_err(|e| e.to_string())?;
        }

        let entries = vec![
            (Key::Line(ACCENT, false), held_label),
            (Key::Line(SECOND, true), none_label),
            (Key::Dot(ACCENT), obs_label),
            (Key::Line(LIMIT, true), limit_label),
        ];
        if small {
            let (l1, l2) = lower.split_vertically(legend_h / 2);
            let mut it = entries.into_iter();
            let first: Vec<_> = it.by_ref().take(2).collect();
            let second: Vec<_> = it.collect();
            legend(&l1, &first, font_px - 1)?;
            legend(&l2, &second, font_px - 1)?;
        } else {
            legend(&lower, &entries, font_px - 1)?;
        }
        root.present().map_err(|e| e.to_string())?;
    }
    Ok(svg)
}

fn capitalise(s: &str) -> String {
    let mut c = s.chars();
    match c.next() {
        Some(f) => f.to_uppercase().collect::<String>() + c.as_str(),
        None => String::new(),
    }
}

fn a_confidence(a: &Analysis) -> String {
    format!("{} confidence", a.claim.display.confidence)
}

/// `lower` for a lower-side claim, else `upper`: the bound that decides a pass.
fn deciding_side(a: &Analysis) -> &'static str {
    if a.claim.side == "lower" {
        "lower"
    } else {
        "upper"
    }
}

fn deciding_value(a: &Analysis, arm: &ArmResult) -> Option<f64> {
    if deciding_side(a) == "lower" {
        arm.primary.lower
    } else {
        arm.primary.upper
    }
}

fn deciding_display(a: &Analysis, arm: &ArmResult) -> Option<String> {
    if deciding_side(a) == "lower" {
        arm.primary.display.lower.clone()
    } else {
        arm.primary.display.upper.clone()
    }
}

/// All arms side by side: each arm's observed rate, its deciding bound and the limit.
fn arms_svg(a: &Analysis, scale: &Scale) -> Result<String, String> {
    let k = a.arms.len();
    let row = 34u32;
    let (w, h) = (660u32, 96 + row * k as u32);
    let f = scale.factor;
    let limit = a.claim.limit;
    let xmax_raw = a
        .arms
        .iter()
        .flat_map(|arm| [Some(arm.mean), deciding_value(a, arm)])
        .flatten()
        .chain([limit])
        .filter(|v| v.is_finite())
        .fold(0.0f64, f64::max);
    let xmax = if xmax_raw > 0.0 {
        xmax_raw * f * 1.12
    } else {
        f
    };
    let (xticks, decimals) = linear_ticks(xmax, 6.0);
    let names: Vec<String> = a.arms.iter().map(|arm| shorten(&arm.name, 20)).collect();
    let side = side_word(deciding_side(a));
    let title = format!(
        "Deciding {} bound by arm ({} confidence)",
        side, a.claim.display.confidence
    );

    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (w, h)).into_drawing_area();
        root.fill(&WHITE).map_err(|e| e.to_string())?;
        let legend_h = 30;
        let (upper, lower) = root.split_vertically(h - legend_h);
        let label_font = (SANS_FAMILY, 14).into_font().color(&INK);
        let name_w = names
            .iter()
            .map(|n| {
                root.estimate_text_size(n, &label_font)
                    .map(|(w, _)| w)
                    .unwrap_or(0)
            })
            .max()
            .unwrap_or(0)
            + 14;
        let mut chart = ChartBuilder::on(&upper)
            .caption(
                &title,
                (SANS_FAMILY, 16, FontStyle::Bold).into_font().color(&INK),
            )
            .margin_top(6)
            .margin_left(8)
            .margin_right(18)
            .x_label_area_size(42)
            .y_label_area_size(name_w.max(60))
            .build_cartesian_2d(
                linear_axis(xmax, xticks),
                linear_axis(k as f64, (0..k).map(|i| i as f64 + 0.5).collect()),
            )
            .map_err(|e| e.to_string())?;
        let names_for_labels = names.clone();
        chart
            .configure_mesh()
            .bold_line_style(GRID.stroke_width(1))
            .light_line_style(TRANSPARENT)
            .axis_style(AXIS.stroke_width(1))
            .label_style(label_font.clone())
            .axis_desc_style(label_font.clone())
            .x_desc(format!("rate{}", scale.axis_unit()))
            .x_label_formatter(&|v| format!("{:.*}", decimals, v))
            .y_label_formatter(&move |v| {
                // Rows run top to bottom in arm order.
                let i = (k as f64 - v).floor() as usize;
                names_for_labels.get(i).cloned().unwrap_or_default()
            })
            .draw()
            .map_err(|e| e.to_string())?;
        chart
            .draw_series(DashedLineSeries::new(
                vec![(limit * f, 0.0), (limit * f, k as f64)],
                7,
                5,
                LIMIT.stroke_width(2),
            ))
            .map_err(|e| e.to_string())?;
        for (i, arm) in a.arms.iter().enumerate() {
            let y = (k - 1 - i) as f64 + 0.5;
            let mean = arm.mean * f;
            if let Some(b) = deciding_value(a, arm).filter(|b| b.is_finite()) {
                let b = b * f;
                chart
                    .draw_series(LineSeries::new(
                        vec![(mean, y), (b, y)],
                        ACCENT.stroke_width(3),
                    ))
                    .map_err(|e| e.to_string())?;
                chart
                    .draw_series(LineSeries::new(
                        vec![(b, y - 0.22), (b, y + 0.22)],
                        ACCENT.stroke_width(3),
                    ))
                    .map_err(|e| e.to_string())?;
            }
            if mean.is_finite() {
                chart
                    .draw_series(std::iter::once(Circle::new((mean, y), 5, INK.filled())))
                    .map_err(|e| e.to_string())?;
            }
        }
        let entries = vec![
            (Key::Dot(INK), "observed rate".to_string()),
            (
                Key::Line(ACCENT, false),
                format!("{side} bound, primary method"),
            ),
            (
                Key::Line(LIMIT, true),
                format!("limit {}", a.claim.display.limit),
            ),
        ];
        legend(&lower, &entries, 13)?;
        root.present().map_err(|e| e.to_string())?;
    }
    Ok(svg)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn log_ticks_follow_one_two_five() {
        assert_eq!(
            log_ticks(460.0, 46000.0),
            vec![500.0, 1000.0, 2000.0, 5000.0, 10000.0, 20000.0]
        );
        // A narrow range falls back to every integer mantissa.
        assert_eq!(log_ticks(110.0, 480.0), vec![200.0, 300.0, 400.0]);
    }

    #[test]
    fn grouping_matches_display_strings() {
        // The model prints 4600 trials as "4,600" (results sample).
        assert_eq!(group(4600.0), "4,600");
        assert_eq!(group(1_000_000.0), "1,000,000");
        assert_eq!(group(999.0), "999");
    }

    #[test]
    fn plot_labels_drop_control_characters() {
        assert_eq!(shorten("a\u{1}b", 10), "a b");
        assert_eq!(shorten("abcdefghij", 5), "abcd…");
    }

    #[test]
    fn odd_curves_still_draw() {
        // An arm with no curve points (and the observed point at zero) must not fail or panic.
        let mut a: Analysis =
            serde_json::from_str(include_str!("../../tests/data/sample-results.json")).unwrap();
        let curve = a.arms[0].curve.as_mut().expect("binary sample has curves");
        curve.at_observed_rate.clear();
        curve.no_further_events.clear();
        curve.observed = [0.0, 0.0];
        let mut b = a.arms[0].clone();
        b.name = "second\u{7}arm".into();
        a.arms.push(b);
        let set = render_plots(&a).expect("draws");
        assert_eq!(set.curves.len(), 2);
        assert!(set.arms.is_some());
        assert!(
            !set.curves
                .iter()
                .chain(set.arms.iter())
                .any(|s| s.contains('\u{7}'))
        );
        // Labels name the served family, never a generic one.
        assert!(set.curves[0].contains("font-family=\"Noto Sans\""));
        assert!(!set.curves[0].contains("sans-serif"));
    }

    #[test]
    fn nice_steps() {
        assert_eq!(nice_step(1.213, 6.0), (0.2, 1));
        assert_eq!(nice_step(12.0, 5.0), (2.0, 0));
        assert_eq!(nice_step(3.0, 1.0), (1.0, 0));
        assert_eq!(nice_step(0.05, 5.0), (0.01, 2));
        assert_eq!(nice_step(30.0, 6.0), (5.0, 0));
    }
}
