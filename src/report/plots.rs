//! Plots as SVG text, drawn with plotters.
//!
//! Text in the SVGs names a concrete family that the typst World serves ([`SANS_FAMILY`]), and
//! plotters measures labels with the very same font bytes, so what plotters laid out is what
//! typst draws. Tick positions are chosen here from integers rather than by plotters, and every
//! label is formatted with a fixed number of decimals, so the SVG text is the same on every
//! machine.

use std::sync::OnceLock;

use std::ops::Range;

use plotters::chart::MeshStyle;
use plotters::coord::combinators::LogCoord;
use plotters::coord::ranged1d::{DefaultFormatting, KeyPointHint, Ranged, ValueFormatter};
use plotters::coord::types::RangedCoordf64;
use plotters::prelude::*;
use plotters::style::FontStyle;

use super::fonts::{SANS_BOLD, SANS_FAMILY, SANS_REGULAR};
use crate::analysis::model::{Analysis, ArmResult, BoundPath, BoundResult, Curve};

pub(crate) const INK: RGBColor = RGBColor(0x22, 0x25, 0x2a);
pub(crate) const GRID: RGBColor = RGBColor(0xe2, 0xe4, 0xe8);
pub(crate) const AXIS: RGBColor = RGBColor(0x8a, 0x90, 0x98);
pub(crate) const ACCENT: RGBColor = RGBColor(0x1f, 0x4e, 0x79);
const SECOND: RGBColor = RGBColor(0x7d, 0x84, 0x8c);
pub(crate) const LIMIT: RGBColor = RGBColor(0x9b, 0x3d, 0x2f);
/// Histogram bars: a light tint of the accent, so that the mean line drawn over them stays clear.
const BAR: RGBColor = RGBColor(0xb4, 0xc7, 0xda);
/// Bands behind group headings, and the parts of a histogram axis outside the declared range.
const BAND: RGBColor = RGBColor(0xee, 0xf0, 0xf2);

/// An axis whose ticks are given, rather than chosen by plotters from floating-point
/// arithmetic, so that tick positions and labels are the same on every machine.
pub(crate) struct Ticked<R: Ranged<ValueType = f64>> {
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
    span_axis(0.0, hi, ticks)
}

pub(crate) fn span_axis(lo: f64, hi: f64, ticks: Vec<f64>) -> Ticked<RangedCoordf64> {
    Ticked {
        inner: (lo..hi).into(),
        ticks,
    }
}

/// Every SVG one report needs, in the order the template refers to them.
pub(crate) struct PlotSet {
    /// One "bound against number of trials" chart per arm, in arm order.
    pub curves: Vec<String>,
    /// The chart comparing all arms; only drawn when there is more than one arm.
    pub arms: Option<String>,
    /// Method comparison charts, one per run of arms given by [`compare_parts`].
    pub compare: Vec<String>,
    /// One histogram of the observed values per arm that has one ([`histogram_of`]), in arm
    /// order.
    pub histograms: Vec<String>,
    /// One "bound over looks" chart per arm that appears in two or more recorded looks
    /// ([`look_series`]), in arm order.
    pub looks: Vec<String>,
    /// One "bound along the trials" chart per arm with an anytime path ([`path_of`]), in arm
    /// order.
    pub paths: Vec<String>,
}

/// Most method rows (plus arm headings) one comparison chart holds, so that it fits a page.
const COMPARE_ROWS_PER_CHART: usize = 30;

/// How the arms are split over method comparison charts: consecutive runs of arm indices, in
/// order. Empty when no arm has a compare method (the per-arm chart then says it all).
pub(crate) fn compare_parts(a: &Analysis) -> Vec<Range<usize>> {
    if a.arms.iter().all(|arm| arm.compare.is_empty()) {
        return Vec::new();
    }
    let heading = usize::from(a.arms.len() > 1);
    let rows: Vec<usize> = a
        .arms
        .iter()
        .map(|arm| heading + 1 + arm.compare.len())
        .collect();
    let total: usize = rows.iter().sum();
    // Parts of even size rather than full charts followed by a stub.
    let target = total.div_ceil(total.div_ceil(COMPARE_ROWS_PER_CHART).max(1));
    let mut parts = Vec::new();
    let (mut start, mut used) = (0, 0);
    for (i, r) in rows.iter().enumerate() {
        if i > start && (used >= target || used + r > COMPARE_ROWS_PER_CHART) {
            parts.push(start..i);
            start = i;
            used = 0;
        }
        used += r;
    }
    parts.push(start..a.arms.len());
    parts
}

/// An arm's histogram counts and the declared range they cover, when there is one that can be
/// drawn (at least one bin over a range of positive width).
pub(crate) fn histogram_of(arm: &ArmResult) -> Option<(&[u64], [f64; 2])> {
    let values = arm.values.as_ref()?;
    let counts = values.histogram.as_deref()?;
    let [lo, hi] = values.range;
    (!counts.is_empty() && lo.is_finite() && hi.is_finite() && hi > lo)
        .then_some((counts, values.range))
}

/// Registers the embedded sans faces with plotters' font registry (once per process).
pub(crate) fn register_fonts() -> Result<(), String> {
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

/// How values are shown on a value axis: binary outcomes as percentages (or per million, per
/// billion), bounded ones in their declared unit.
struct Scale {
    factor: f64,
    suffix: String,
    /// Where a value axis naturally starts, in data units: 0 for a rate, the start a of the
    /// declared range [a, b] for a bounded outcome.
    origin: f64,
    /// What the arms' central value is called: `rate` or `mean`.
    word: &'static str,
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
                origin: 0.0,
                word: "rate",
            }
        } else {
            let origin = a
                .outcome
                .range
                .or_else(|| {
                    a.arms
                        .iter()
                        .find_map(|arm| arm.values.as_ref())
                        .map(|v| v.range)
                })
                .map(|r| r[0])
                .filter(|v| v.is_finite())
                .unwrap_or(0.0);
            Scale {
                factor: 1.0,
                suffix: clean(a.outcome.unit.as_deref().unwrap_or_default()),
                origin,
                word: "mean",
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
    let parts = compare_parts(a);
    let compare = parts
        .iter()
        .map(|part| compare_svg(a, part.clone(), parts.len(), &scale))
        .collect::<Result<Vec<_>, _>>()?;
    let histograms = a
        .arms
        .iter()
        .filter_map(|arm| {
            histogram_of(arm)
                .map(|(counts, range)| histogram_svg(a, arm, counts, range, &scale, several))
        })
        .collect::<Result<Vec<_>, _>>()?;
    let looks = a
        .arms
        .iter()
        .filter_map(|arm| look_series(a, arm).map(|pts| looks_svg(a, arm, &pts, &scale, several)))
        .collect::<Result<Vec<_>, _>>()?;
    let paths = a
        .arms
        .iter()
        .filter_map(|arm| path_of(arm).map(|p| path_svg(a, arm, p, &scale, several)))
        .collect::<Result<Vec<_>, _>>()?;
    Ok(PlotSet {
        curves,
        arms,
        compare,
        histograms,
        looks,
        paths,
    })
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

/// Multiples of `step` inside [lo, hi], each computed from its integer multiplier so that no
/// accumulated rounding reaches the labels.
fn ticks_between(lo: f64, hi: f64, step: f64) -> Vec<f64> {
    if !(step > 0.0 && lo.is_finite() && hi.is_finite() && hi >= lo) {
        return Vec::new();
    }
    // A hair of slack so that an end which is itself a multiple still gets its tick.
    let slack = step * 1e-9;
    let first = ((lo - slack) / step).ceil() as i64;
    let last = ((hi + slack) / step).floor() as i64;
    (first..=last.min(first + 50))
        .map(|k| if k == 0 { 0.0 } else { k as f64 * step })
        .collect()
}

/// A value axis fitted to some scaled values.
struct ValueAxis {
    lo: f64,
    hi: f64,
    ticks: Vec<f64>,
    decimals: usize,
    /// Whether the axis was cut, so that it starts above the natural origin: said in the axis
    /// title, because distances to the axis start then mean nothing.
    cut: bool,
}

impl ValueAxis {
    /// An axis from the natural `origin` (0 for rates, a for bounded values) to just past the
    /// largest value; but when all values sit in the upper half of that span, an axis around
    /// the values only, so that differences between methods stay visible.
    fn fit(values: &[f64], origin: f64) -> Self {
        let vals: Vec<f64> = values.iter().copied().filter(|v| v.is_finite()).collect();
        let origin = if origin.is_finite() { origin } else { 0.0 };
        let vmin = vals.iter().copied().fold(f64::INFINITY, f64::min);
        let vmax = vals.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        let (vmin, vmax) = if vals.is_empty() {
            (origin, origin)
        } else {
            (vmin, vmax)
        };
        let base = origin.min(vmin);
        let reach = if vmax > base { vmax - base } else { 1.0 };
        let mut cut = vmin - base > 0.5 * reach;
        let (mut lo, hi) = if cut {
            let spread = vmax - vmin;
            let pad = if spread > 0.0 {
                0.12 * spread
            } else {
                0.05 * reach
            };
            (vmin - pad, vmax + pad)
        } else {
            (base, base + reach * 1.12)
        };
        let (step, decimals) = nice_step(hi - lo, 6.0);
        if cut {
            // Start on a tick, so the first label says where the cut axis begins.
            lo = ((lo / step).floor() * step).max(base);
            if lo <= base {
                cut = false;
            }
        }
        ValueAxis {
            lo,
            hi,
            ticks: ticks_between(lo, hi, step),
            decimals,
            cut,
        }
    }

    /// The axis title: what is shown, its unit, and a warning when the axis is cut.
    fn title(&self, what: &str, scale: &Scale) -> String {
        let mut t = format!("{what}{}", scale.axis_unit());
        if self.cut {
            let origin = scale.origin * scale.factor;
            let origin = if origin == 0.0 { 0.0 } else { origin };
            t.push_str(&format!(" — axis does not start at {origin}"));
        }
        t
    }
}

/// A tick label for a number of trials: grouped digits up to ten million, a power-of-ten form
/// beyond, so that labels of huge campaigns stay short.
pub(crate) fn trials_label(v: f64) -> String {
    if v < 1e7 {
        return crate::analysis::display::count(v.round().max(0.0) as u64);
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

/// Text fit for a plot label, whole: control characters (which XML, and so SVG, cannot carry)
/// become spaces. For display strings, which carry the user's unit and must never be cut.
fn clean(text: &str) -> String {
    text.chars()
        .map(|c| if c.is_control() { ' ' } else { c })
        .collect()
}

/// A user string fit for a plot label: at most `max` characters, and no control characters
/// (which XML, and so SVG, cannot carry).
fn shorten(name: &str, max: usize) -> String {
    let clean = clean(name);
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
    Block(RGBColor),
    /// A hollow circle: a look's own bound, drawn around the running bound's dot.
    Ring(RGBColor),
    /// A line through a dot: a bound marked at each look.
    LineDot(RGBColor),
}

/// Width in pixels of `text` set in `font`, as plotters measures it.
fn text_width(font: &FontDesc, text: &str) -> i32 {
    font.box_size(text)
        .map(|(w, _)| (w as f64 * measure_correction()).ceil() as i32)
        .unwrap_or(0)
}

/// How much wider typst sets a label than plotters measures it. plotters (with ab_glyph)
/// scales a face so that its ascender-to-descender height spans the font size, while
/// plotters-svg writes `font-size` as that size divided by 1.24, which typst applies per em:
/// the ratio of the two scales, read from the served face's own metrics.
fn measure_correction() -> f64 {
    static RATIO: OnceLock<f64> = OnceLock::new();
    *RATIO.get_or_init(|| {
        typst::text::Font::new(typst::foundations::Bytes::new(SANS_REGULAR), 0)
            .map(|f| {
                // The face has no variation axes, so the size given here changes nothing.
                let face = f.clone().instantiate(
                    f.info().variant,
                    typst::layout::Abs::pt(10.0),
                    &typst::text::FontVariations::default(),
                );
                let t = face.ttf();
                (f64::from(t.ascender()) - f64::from(t.descender()))
                    / f64::from(t.units_per_em())
                    / 1.24
            })
            .filter(|r| r.is_finite() && *r > 0.5 && *r < 2.0)
            // Noto Sans: (1069 + 293) / 1000 / 1.24, should the face ever fail to parse.
            .unwrap_or(1.098)
    })
}

/// Splits legend entries over as few rows as fit `width` pixels (at most three).
fn legend_rows(entries: Vec<(Key, String)>, font_px: u32, width: u32) -> Vec<Vec<(Key, String)>> {
    let font: FontDesc = (SANS_FAMILY, font_px).into_font();
    let widths: Vec<i32> = entries
        .iter()
        .map(|(_, label)| 22 + 6 + text_width(&font, label))
        .collect();
    let fits = |ws: &[i32]| ws.iter().sum::<i32>() + 28 * (ws.len() as i32 - 1) <= width as i32 - 8;
    let n = entries.len();
    let rows = (1..=3)
        .find(|&r| {
            let per = n.div_ceil(r).max(1);
            widths.chunks(per).all(fits)
        })
        .unwrap_or(3);
    let per = n.div_ceil(rows).max(1);
    let mut out = Vec::new();
    let mut it = entries.into_iter().peekable();
    while it.peek().is_some() {
        out.push(it.by_ref().take(per).collect());
    }
    out
}

/// Draws legend rows stacked in `area`, each `row_h` pixels high.
fn legend_stack<DB: DrawingBackend>(
    area: &DrawingArea<DB, plotters::coord::Shift>,
    rows: &[Vec<(Key, String)>],
    row_h: u32,
    font_px: u32,
) -> Result<(), String> {
    let mut rest = area.clone();
    for row in rows {
        let (this, next) = rest.split_vertically(row_h);
        legend(&this, row, font_px)?;
        rest = next;
    }
    Ok(())
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
        .map(|(_, label)| sample + 6 + text_width(&font.font, label))
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
            Key::Block(color) => {
                area.draw(&Rectangle::new(
                    [(x + 4, y - 6), (x + sample - 4, y + 6)],
                    color.filled(),
                ))
                .map_err(|e| e.to_string())?;
            }
            Key::Ring(color) => {
                area.draw(&Circle::new((x + sample / 2, y), 6, color.stroke_width(2)))
                    .map_err(|e| e.to_string())?;
            }
            Key::LineDot(color) => {
                area.draw(&PathElement::new(
                    vec![(x, y), (x + sample, y)],
                    color.stroke_width(2),
                ))
                .map_err(|e| e.to_string())?;
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

/// Legend rows laid out for a chart's width, with the height they take below it.
struct Legend {
    rows: Vec<Vec<(Key, String)>>,
    row_h: u32,
    font_px: u32,
}

impl Legend {
    /// Lays `entries` out in as few rows of `row_h` pixels as fit `width` ([`legend_rows`]).
    fn lay_out(entries: Vec<(Key, String)>, font_px: u32, width: u32, row_h: u32) -> Self {
        Legend {
            rows: legend_rows(entries, font_px, width),
            row_h,
            font_px,
        }
    }

    /// Pixels the legend takes, with a little air below the last row.
    fn height(&self) -> u32 {
        self.row_h * self.rows.len() as u32 + 4
    }

    /// Draws the rows in `area`, which should be [`Legend::height`] pixels high.
    fn draw<DB: DrawingBackend>(
        &self,
        area: &DrawingArea<DB, plotters::coord::Shift>,
    ) -> Result<(), String> {
        legend_stack(area, &self.rows, self.row_h, self.font_px)
    }
}

/// The sizes of one arm's chart: full width for a single arm or, `small`, narrower with
/// larger type when there are several arms' charts to show.
struct Panel {
    small: bool,
    w: u32,
    h: u32,
    font_px: u32,
    title_px: u32,
}

impl Panel {
    /// A panel whose full-width form is `wide_h` pixels high; small ones are all 440 × 330.
    fn new(small: bool, wide_h: u32) -> Self {
        let (w, h, font_px, title_px) = if small {
            (440, 330, 16, 17)
        } else {
            (660, wide_h, 14, 16)
        };
        Panel {
            small,
            w,
            h,
            font_px,
            title_px,
        }
    }

    /// Height of the area under the plot that holds the trial or value tick labels.
    fn x_labels(&self) -> u32 {
        if self.small { 44 } else { 42 }
    }

    /// Width of the area left of the plot that holds the value tick labels and axis title.
    fn value_labels(&self) -> u32 {
        if self.small { 70 } else { 72 }
    }

    /// Height of one legend row under the plot.
    fn legend_row_h(&self) -> u32 {
        if self.small { 25 } else { 26 }
    }
}

/// A white SVG canvas of `size` pixels writing into `svg`, shared with the plan report's
/// charts so that both reports start from the same page colour.
pub(crate) fn white_canvas(
    svg: &mut String,
    size: (u32, u32),
) -> Result<DrawingArea<SVGBackend<'_>, plotters::coord::Shift>, String> {
    let root = SVGBackend::with_string(svg, size).into_drawing_area();
    root.fill(&WHITE).map_err(|e| e.to_string())?;
    Ok(root)
}

/// What varies between charts in the house frame: the title and the room around the plot.
pub(crate) struct Frame<'t> {
    /// The caption above the plot.
    pub title: &'t str,
    /// Font size of the caption, in pixels.
    pub title_px: u32,
    /// Room right of the plot, for the last tick label or for labels printed beside rows.
    pub margin_right: u32,
    /// Height of the area below the plot (tick labels and axis title).
    pub x_labels: u32,
    /// Width of the area left of the plot (tick labels and axis title).
    pub y_labels: u32,
}

/// A chart on `area` in the house frame, which every chart of both reports shares: a bold
/// title in ink and the same top and left margins, so that the charts read as one set.
pub(crate) fn house_chart<'a, DB, X, Y>(
    area: &'a DrawingArea<DB, plotters::coord::Shift>,
    frame: Frame<'_>,
    x: X,
    y: Y,
) -> Result<ChartContext<'a, DB, Cartesian2d<X, Y>>, String>
where
    DB: DrawingBackend,
    X: Ranged,
    Y: Ranged,
{
    ChartBuilder::on(area)
        .caption(
            frame.title,
            (SANS_FAMILY, frame.title_px, FontStyle::Bold)
                .into_font()
                .color(&INK),
        )
        .margin_top(6)
        .margin_left(8)
        .margin_right(frame.margin_right)
        .x_label_area_size(frame.x_labels)
        .y_label_area_size(frame.y_labels)
        .build_cartesian_2d(x, y)
        .map_err(|e| e.to_string())
}

/// The house mesh of `chart`: grid lines at the labelled ticks only, grey axes, labels in ink at
/// `font_px`; the caller adds the axis titles and label formats and draws it.
pub(crate) fn house_mesh<'a, 'b, DB, X, Y>(
    chart: &'b mut ChartContext<'a, DB, Cartesian2d<X, Y>>,
    font_px: u32,
) -> MeshStyle<'a, 'b, X, Y, DB>
where
    DB: DrawingBackend,
    X: Ranged + ValueFormatter<X::ValueType>,
    Y: Ranged + ValueFormatter<Y::ValueType>,
{
    let label_font = (SANS_FAMILY, font_px).into_font().color(&INK);
    let mut mesh = chart.configure_mesh();
    mesh.bold_line_style(GRID.stroke_width(1))
        .light_line_style(TRANSPARENT)
        .axis_style(AXIS.stroke_width(1))
        .label_style(label_font.clone())
        .axis_desc_style(label_font);
    mesh
}

/// Draws the claim's limit as the house dashed line from `from` to `to`, in chart units, so
/// that the limit looks the same on every chart of both reports.
pub(crate) fn draw_limit<DB, X, Y>(
    chart: &mut ChartContext<'_, DB, Cartesian2d<X, Y>>,
    from: (f64, f64),
    to: (f64, f64),
) -> Result<(), String>
where
    DB: DrawingBackend,
    X: Ranged<ValueType = f64>,
    Y: Ranged<ValueType = f64>,
{
    chart
        .draw_series(DashedLineSeries::new(
            vec![from, to],
            7,
            5,
            LIMIT.stroke_width(2),
        ))
        .map_err(|e| e.to_string())?;
    Ok(())
}

/// Marks a point of a bound with a filled dot in a thin white ring, which keeps it apart from
/// the line it sits on.
fn draw_mark<DB, X, Y>(
    chart: &mut ChartContext<'_, DB, Cartesian2d<X, Y>>,
    at: (f64, f64),
) -> Result<(), String>
where
    DB: DrawingBackend,
    X: Ranged<ValueType = f64>,
    Y: Ranged<ValueType = f64>,
{
    chart
        .draw_series(std::iter::once(Circle::new(at, 5, ACCENT.filled())))
        .map_err(|e| e.to_string())?;
    chart
        .draw_series(std::iter::once(Circle::new(at, 5, WHITE.stroke_width(1))))
        .map_err(|e| e.to_string())?;
    Ok(())
}

/// The legend entry of the claim's limit, as every run-report chart shows it.
fn limit_entry(a: &Analysis) -> (Key, String) {
    (
        Key::Line(LIMIT, true),
        format!("limit {}", clean(&a.claim.display.limit)),
    )
}

/// "Arm <name>": the title of one arm's chart when several arms share a page.
fn arm_title(arm: &ArmResult) -> String {
    format!("Arm {}", shorten(&arm.name, 34))
}

/// The deciding bound of one arm against the number of trials.
fn curve_svg(
    a: &Analysis,
    arm: &ArmResult,
    curve: &Curve,
    scale: &Scale,
    small: bool,
) -> Result<String, String> {
    let panel = Panel::new(small, 350);
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
        arm_title(arm)
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

    let mut svg = String::new();
    {
        let root = white_canvas(&mut svg, (panel.w, panel.h))?;
        let legend_h = if small { 52 } else { 30 };
        let (upper, lower) = root.split_vertically(panel.h - legend_h);
        let frame = Frame {
            title: &title,
            title_px: panel.title_px,
            margin_right: 18,
            x_labels: panel.x_labels(),
            y_labels: if small { 58 } else { 62 },
        };
        let mut chart = house_chart(&upper, frame, log_axis(xlo, xhi), linear_axis(ymax, yticks))?;
        house_mesh(&mut chart, panel.font_px)
            .x_desc("number of trials (log scale)")
            .y_desc(format!("{} bound{}", side, scale.axis_unit()))
            .x_label_formatter(&|v| trials_label(*v))
            .y_label_formatter(&|v| format!("{:.*}", decimals, v))
            .draw()
            .map_err(|e| e.to_string())?;

        let f = scale.factor;
        draw_limit(&mut chart, (xlo, limit * f), (xhi, limit * f))?;
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
            draw_mark(&mut chart, (obs.0, obs.1 * f))?;
        }

        let entries = vec![
            (Key::Line(ACCENT, false), held_label),
            (Key::Line(SECOND, true), none_label),
            (Key::Dot(ACCENT), obs_label),
            limit_entry(a),
        ];
        if small {
            let (l1, l2) = lower.split_vertically(legend_h / 2);
            let mut it = entries.into_iter();
            let first: Vec<_> = it.by_ref().take(2).collect();
            let second: Vec<_> = it.collect();
            legend(&l1, &first, panel.font_px - 1)?;
            legend(&l2, &second, panel.font_px - 1)?;
        } else {
            legend(&lower, &entries, panel.font_px - 1)?;
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
    // 30 px of legend and 20 of budget note below the rows.
    let (w, h) = (660u32, 116 + row * k as u32);
    let f = scale.factor;
    let limit = a.claim.limit;
    let values: Vec<f64> = a
        .arms
        .iter()
        .flat_map(|arm| [Some(arm.mean), deciding_value(a, arm)])
        .flatten()
        .chain([limit])
        .map(|v| v * f)
        .collect();
    let axis = ValueAxis::fit(&values, scale.origin * f);
    let decimals = axis.decimals;
    let selected = selected_arm(a);
    let names: Vec<String> = a
        .arms
        .iter()
        .enumerate()
        .map(|(i, arm)| {
            let name = shorten(&arm.name, 20);
            if Some(i) == selected {
                format!("{name} (selected)")
            } else {
                name
            }
        })
        .collect();
    let side = side_word(deciding_side(a));
    let title = format!(
        "Deciding {} bound by arm ({} confidence)",
        side, a.claim.display.confidence
    );
    let note = arms_adjustment(a);

    let mut svg = String::new();
    {
        let root = white_canvas(&mut svg, (w, h))?;
        let legend_h = 50;
        let (upper, lower) = root.split_vertically(h - legend_h);
        let font_px = 14;
        let label_font: FontDesc = (SANS_FAMILY, font_px).into_font();
        let name_w = names
            .iter()
            .map(|n| text_width(&label_font, n).max(0) as u32)
            .max()
            .unwrap_or(0)
            + 14;
        let frame = Frame {
            title: &title,
            title_px: 16,
            margin_right: 18,
            x_labels: 42,
            y_labels: name_w.max(60),
        };
        let mut chart = house_chart(
            &upper,
            frame,
            span_axis(axis.lo, axis.hi, axis.ticks.clone()),
            linear_axis(k as f64, (0..k).map(|i| i as f64 + 0.5).collect()),
        )?;
        let names_for_labels = names.clone();
        house_mesh(&mut chart, font_px)
            .x_desc(axis.title(scale.word, scale))
            .x_label_formatter(&|v| format!("{:.*}", decimals, v))
            .y_label_formatter(&move |v| {
                // Rows run top to bottom in arm order.
                let i = (k as f64 - v).floor() as usize;
                names_for_labels.get(i).cloned().unwrap_or_default()
            })
            .draw()
            .map_err(|e| e.to_string())?;
        if let Some(i) = selected {
            // A band behind the selected arm's row, under everything else drawn on it.
            let y = (k - 1 - i) as f64;
            chart
                .draw_series(std::iter::once(Rectangle::new(
                    [(axis.lo, y + 0.06), (axis.hi, y + 0.94)],
                    BAND.filled(),
                )))
                .map_err(|e| e.to_string())?;
        }
        draw_limit(&mut chart, (limit * f, 0.0), (limit * f, k as f64))?;
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
            (Key::Dot(INK), format!("observed {}", scale.word)),
            (
                Key::Line(ACCENT, false),
                format!("{side} bound, primary method"),
            ),
            limit_entry(a),
        ];
        let (keys, strip) = lower.split_vertically(28);
        legend(&keys, &entries, 13)?;
        strip
            .draw(&Text::new(
                note,
                ((w / 2) as i32, 8),
                (SANS_FAMILY, 13).into_font().color(&AXIS).pos(
                    plotters::style::text_anchor::Pos::new(
                        plotters::style::text_anchor::HPos::Center,
                        plotters::style::text_anchor::VPos::Center,
                    ),
                ),
            ))
            .map_err(|e| e.to_string())?;
        root.present().map_err(|e| e.to_string())?;
    }
    Ok(svg)
}

/// How the arms share the error budget, in a few words, for the per-arm chart: the scope, the
/// division by the arms and the δ every bound ended with (after looks and sides too).
fn arms_adjustment(a: &Analysis) -> String {
    let k = a.adjustments.arms;
    let each = clean(&a.adjustments.display_delta_per_bound);
    match a.claim.scope.as_str() {
        "all" => format!("scope all: Bonferroni δ/{k} over the arms; each bound at δ = {each}"),
        "best" => format!(
            "scope best: the best of {} arms is certified at δ/{k}; each bound at δ = {each}",
            a.arms.len()
        ),
        _ => format!("scope each: every arm on its own; each bound at δ = {each}"),
    }
}

/// The catalogue name of a method without its parenthesised authors ("Betting
/// (Waudby-Smith–Ramdas)" → "Betting"), so that row labels stay short; the tables carry the
/// full names.
fn short_method_name(a: &Analysis, id: &str) -> String {
    let name = a
        .methods
        .iter()
        .find(|m| m.id == id)
        .map(|m| m.name.as_str())
        .unwrap_or(id);
    let short = match name.split_once(" (") {
        Some((head, _)) if !head.trim().is_empty() => head.trim(),
        _ => name,
    };
    shorten(short, 30)
}

/// The values of a bound that a chart shows: both ends for a two-sided claim, else the
/// deciding one.
fn shown_bounds(a: &Analysis, b: &BoundResult) -> (Option<f64>, Option<f64>) {
    let finite = |v: Option<f64>| v.filter(|x| x.is_finite());
    match a.claim.side.as_str() {
        "two-sided" => (finite(b.lower), finite(b.upper)),
        "lower" => (finite(b.lower), None),
        _ => (None, finite(b.upper)),
    }
}

/// The printed form of the bound a chart shows, taken from the model's display strings.
fn shown_display(a: &Analysis, b: &BoundResult) -> String {
    let dash = || "—".to_string();
    let text = match a.claim.side.as_str() {
        "two-sided" => match (&b.display.lower, &b.display.upper) {
            (None, None) => dash(),
            (lo, up) => format!(
                "{} – {}",
                lo.clone().unwrap_or_else(dash),
                up.clone().unwrap_or_else(dash)
            ),
        },
        "lower" => b.display.lower.clone().unwrap_or_else(dash),
        _ => b.display.upper.clone().unwrap_or_else(dash),
    };
    let text = clean(&text);
    if b.vacuous {
        format!("{text} (vacuous)")
    } else {
        text
    }
}

/// One row of the method comparison chart.
enum CompareRow<'a> {
    /// An arm's name, above its methods (several arms only).
    Heading(&'a ArmResult),
    /// One method's bound on one arm; `true` for the primary method.
    Method(&'a ArmResult, &'a BoundResult, bool),
}

/// Every method's deciding bound for the arms in `part`, on one value axis shared by all parts:
/// a segment from the observed value to the bound, a bar at the bound, the limit, and the
/// printed bound at the right. The primary method is drawn in the accent colour and named in
/// bold; compare methods in grey.
fn compare_svg(
    a: &Analysis,
    part: Range<usize>,
    parts: usize,
    scale: &Scale,
) -> Result<String, String> {
    let f = scale.factor;
    let several = a.arms.len() > 1;
    let arms = a.arms.get(part.clone()).unwrap_or(&[]);

    // One axis for every part, so that separate charts of one report read alike.
    let mut values = vec![a.claim.limit * f];
    for arm in &a.arms {
        values.push(arm.mean * f);
        for b in std::iter::once(&arm.primary).chain(&arm.compare) {
            let (lo, up) = shown_bounds(a, b);
            values.extend(lo.into_iter().chain(up).map(|v| v * f));
        }
    }
    let axis = ValueAxis::fit(&values, scale.origin * f);
    let decimals = axis.decimals;

    let mut rows = Vec::new();
    for arm in arms {
        if several {
            rows.push(CompareRow::Heading(arm));
        }
        rows.push(CompareRow::Method(arm, &arm.primary, true));
        rows.extend(
            arm.compare
                .iter()
                .map(|c| CompareRow::Method(arm, c, false)),
        );
    }
    let nrows = rows.len().max(1);

    let font_px = 13u32;
    let plain: FontDesc = (SANS_FAMILY, font_px).into_font();
    let bold: FontDesc = (SANS_FAMILY, font_px, FontStyle::Bold).into_font();
    let primary_label =
        |arm: &ArmResult| format!("{} (primary)", short_method_name(a, &arm.primary.method));
    let label_w = rows
        .iter()
        .map(|r| match r {
            CompareRow::Method(arm, _, true) => text_width(&bold, &primary_label(arm)),
            CompareRow::Method(_, b, false) => text_width(&plain, &short_method_name(a, &b.method)),
            CompareRow::Heading(_) => 0,
        })
        .max()
        .unwrap_or(0)
        + 14;
    let value_w = rows
        .iter()
        .map(|r| match r {
            CompareRow::Method(_, b, primary) => {
                text_width(if *primary { &bold } else { &plain }, &shown_display(a, b))
            }
            CompareRow::Heading(_) => 0,
        })
        .max()
        .unwrap_or(0)
        + 22;

    let side = deciding_side(a);
    let mut title = if a.claim.side == "two-sided" {
        "Bounds by method".to_string()
    } else {
        format!("{} bound by method", capitalise(side))
    };
    if parts > 1 {
        title.push_str(&format!(
            ", arms {}–{} of {}",
            part.start + 1,
            part.end,
            a.arms.len()
        ));
    }
    title.push_str(&format!(" ({} confidence)", a.claim.display.confidence));
    let entries = vec![
        (Key::Dot(INK), format!("observed {}", scale.word)),
        (
            Key::Line(ACCENT, false),
            "primary method (the guarantee)".to_string(),
        ),
        (Key::Line(SECOND, false), "compare methods".to_string()),
        limit_entry(a),
    ];

    let w = 660u32;
    let row_px = 22u32;
    let legend = Legend::lay_out(entries, font_px, w, 26);
    let h = 38 + row_px * nrows as u32 + 44 + legend.height();

    let mut svg = String::new();
    {
        let root = white_canvas(&mut svg, (w, h))?;
        let (upper, lower) = root.split_vertically(h - legend.height());
        let frame = Frame {
            title: &title,
            title_px: 16,
            margin_right: value_w.max(18) as u32,
            x_labels: 44,
            y_labels: label_w.max(60) as u32,
        };
        let mut chart = house_chart(
            &upper,
            frame,
            span_axis(axis.lo, axis.hi, axis.ticks.clone()),
            linear_axis(nrows as f64, Vec::new()),
        )?;
        house_mesh(&mut chart, font_px)
            .x_desc(axis.title(scale.word, scale))
            .x_label_formatter(&|v| format!("{:.*}", decimals, v))
            .draw()
            .map_err(|e| e.to_string())?;

        let (px_range, _) = chart.plotting_area().get_pixel_range();
        let err = |e: DrawingAreaErrorKind<_>| e.to_string();
        // Row r (0 at the top) is centred at y = nrows - r - 0.5.
        let row_y = |r: usize| nrows as f64 - r as f64 - 0.5;
        let pixel = |x: f64, r: usize| chart.backend_coord(&(x, row_y(r)));
        let half = (row_px / 2) as i32;

        // The limit, once per arm, across that arm's method rows only (never through a heading).
        let mut r = 0;
        while r < rows.len() {
            if let CompareRow::Heading(_) = rows[r] {
                r += 1;
                continue;
            }
            let start = r;
            while r < rows.len() && matches!(rows[r], CompareRow::Method(..)) {
                r += 1;
            }
            let (x, top) = pixel(a.claim.limit * f, start);
            let (_, bottom) = pixel(a.claim.limit * f, r - 1);
            let mut y = top - half + 1;
            while y < bottom + half {
                let end = (y + 7).min(bottom + half);
                root.draw(&PathElement::new(
                    vec![(x, y), (x, end)],
                    LIMIT.stroke_width(2),
                ))
                .map_err(err)?;
                y += 12;
            }
        }

        for (r, row) in rows.iter().enumerate() {
            let (_, y) = pixel(axis.lo, r);
            match row {
                CompareRow::Heading(arm) => {
                    root.draw(&Rectangle::new(
                        [(8, y - half + 2), (w as i32 - 8, y + half - 1)],
                        BAND.filled(),
                    ))
                    .map_err(err)?;
                    root.draw(&Text::new(
                        format!("Arm {}", shorten(&arm.name, 60)),
                        (14, y),
                        bold.clone()
                            .color(&INK)
                            .pos(plotters::style::text_anchor::Pos::new(
                                plotters::style::text_anchor::HPos::Left,
                                plotters::style::text_anchor::VPos::Center,
                            )),
                    ))
                    .map_err(err)?;
                }
                CompareRow::Method(arm, b, primary) => {
                    let (color, width, font, label) = if *primary {
                        (ACCENT, 3, bold.clone(), primary_label(arm))
                    } else {
                        (SECOND, 2, plain.clone(), short_method_name(a, &b.method))
                    };
                    let ink = if *primary { ACCENT } else { INK };
                    root.draw(&Text::new(
                        label,
                        (px_range.start - 8, y),
                        font.clone()
                            .color(&ink)
                            .pos(plotters::style::text_anchor::Pos::new(
                                plotters::style::text_anchor::HPos::Right,
                                plotters::style::text_anchor::VPos::Center,
                            )),
                    ))
                    .map_err(err)?;
                    root.draw(&Text::new(
                        shown_display(a, b),
                        (w as i32 - 10, y),
                        font.color(&ink).pos(plotters::style::text_anchor::Pos::new(
                            plotters::style::text_anchor::HPos::Right,
                            plotters::style::text_anchor::VPos::Center,
                        )),
                    ))
                    .map_err(err)?;
                    let mean = arm.mean * f;
                    let (lo, up) = shown_bounds(a, b);
                    let ends: Vec<f64> = lo.into_iter().chain(up).map(|v| v * f).collect();
                    // The segment runs from the observed value (or between two-sided ends).
                    let span = if ends.len() == 2 {
                        Some((ends[0], ends[1]))
                    } else {
                        ends.first().map(|e| (mean, *e))
                    };
                    if let Some((x0, x1)) = span.filter(|_| mean.is_finite()) {
                        let (p0, _) = pixel(x0, r);
                        let (p1, _) = pixel(x1, r);
                        root.draw(&PathElement::new(
                            vec![(p0, y), (p1, y)],
                            color.stroke_width(width),
                        ))
                        .map_err(err)?;
                    }
                    // The dot goes under the bar: a bound very close to the mean must still
                    // show its bar.
                    if mean.is_finite() {
                        let (p, _) = pixel(mean, r);
                        root.draw(&Circle::new((p, y), 4, INK.filled()))
                            .map_err(err)?;
                    }
                    for e in &ends {
                        let (p, _) = pixel(*e, r);
                        root.draw(&Rectangle::new(
                            [(p - 2, y - 7), (p + 2, y + 7)],
                            color.filled(),
                        ))
                        .map_err(err)?;
                    }
                }
            }
        }
        legend.draw(&lower)?;
        root.present().map_err(|e| e.to_string())?;
    }
    Ok(svg)
}

/// The observed values of one arm in their bins across the declared range [a, b]: the range
/// ends as solid grey lines (the padding beyond them shaded), the observed mean and the limit.
fn histogram_svg(
    a: &Analysis,
    arm: &ArmResult,
    counts: &[u64],
    range: [f64; 2],
    scale: &Scale,
    small: bool,
) -> Result<String, String> {
    let panel = Panel::new(small, 330);
    let f = scale.factor;
    let (ra, rb) = (range[0] * f, range[1] * f);
    let width = rb - ra;
    let pad = width * 0.03;
    let (lo, hi) = (ra - pad, rb + pad);
    let (step, decimals) = nice_step(width, if small { 4.0 } else { 6.0 });
    let xticks = ticks_between(ra, rb, step);
    let top = counts.iter().copied().max().unwrap_or(0) as f64;
    let ymax = if top > 0.0 { top * 1.12 } else { 1.0 };
    // Counts are whole numbers: never a fractional tick.
    let (ystep, _) = nice_step(ymax, 5.0);
    let ystep = ystep.max(1.0).ceil();
    let yticks = ticks_between(0.0, ymax, ystep);

    let title = if a.arms.len() > 1 {
        arm_title(arm)
    } else {
        "Observed values across the declared range".to_string()
    };
    // The declared ends, as written in the spec: `{}` prints an f64's shortest exact decimal.
    let range_text = if scale.suffix.is_empty() {
        format!("declared range {ra} to {rb}")
    } else {
        format!("declared range {ra} to {rb}\u{a0}{}", scale.suffix)
    };
    let entries = vec![
        (Key::Block(BAR), format!("values in {} bins", counts.len())),
        (Key::Line(SECOND, false), range_text),
        (
            Key::Line(ACCENT, false),
            format!("observed mean {}", clean(&arm.display.mean)),
        ),
        limit_entry(a),
    ];
    let legend = Legend::lay_out(entries, panel.font_px - 1, panel.w, panel.legend_row_h());

    let mut svg = String::new();
    {
        let root = white_canvas(&mut svg, (panel.w, panel.h))?;
        let (upper, lower) = root.split_vertically(panel.h - legend.height());
        let frame = Frame {
            title: &title,
            title_px: panel.title_px,
            margin_right: 18,
            x_labels: panel.x_labels(),
            y_labels: panel.value_labels(),
        };
        let mut chart = house_chart(
            &upper,
            frame,
            span_axis(lo, hi, xticks),
            linear_axis(ymax, yticks),
        )?;
        house_mesh(&mut chart, panel.font_px)
            .x_desc(format!("observed value{}", scale.axis_unit()))
            .y_desc("number of values")
            .x_label_formatter(&|v| format!("{:.*}", decimals, v))
            .y_label_formatter(&|v| crate::analysis::display::count(v.round().max(0.0) as u64))
            .draw()
            .map_err(|e| e.to_string())?;
        let err = |e: DrawingAreaErrorKind<_>| e.to_string();

        // Values cannot lie beyond the declared range: shade the padding there.
        for (x0, x1) in [(lo, ra), (rb, hi)] {
            chart
                .draw_series(std::iter::once(Rectangle::new(
                    [(x0, 0.0), (x1, ymax)],
                    BAND.filled(),
                )))
                .map_err(err)?;
        }
        let n = counts.len() as f64;
        for (i, c) in counts.iter().enumerate() {
            if *c == 0 {
                continue;
            }
            let x0 = ra + width * i as f64 / n;
            let x1 = ra + width * (i + 1) as f64 / n;
            let c = *c as f64;
            chart
                .draw_series(std::iter::once(Rectangle::new(
                    [(x0, 0.0), (x1, c)],
                    BAR.filled(),
                )))
                .map_err(err)?;
            chart
                .draw_series(std::iter::once(Rectangle::new(
                    [(x0, 0.0), (x1, c)],
                    WHITE.stroke_width(1),
                )))
                .map_err(err)?;
        }
        for x in [ra, rb] {
            chart
                .draw_series(LineSeries::new(
                    vec![(x, 0.0), (x, ymax)],
                    SECOND.stroke_width(3),
                ))
                .map_err(err)?;
        }
        let mean = arm.mean * f;
        if mean.is_finite() && (lo..=hi).contains(&mean) {
            chart
                .draw_series(LineSeries::new(
                    vec![(mean, 0.0), (mean, ymax)],
                    ACCENT.stroke_width(2),
                ))
                .map_err(err)?;
        }
        let limit = a.claim.limit * f;
        if limit.is_finite() && (lo..=hi).contains(&limit) {
            draw_limit(&mut chart, (limit, 0.0), (limit, ymax))?;
        }
        legend.draw(&lower)?;
        root.present().map_err(|e| e.to_string())?;
    }
    Ok(svg)
}

/// One arm at one recorded look: its size and its own primary bounds, in data units.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct LookPoint {
    /// The look's number in the ledger.
    pub look: u32,
    /// Trials (clusters, for a clustered analysis) the look was computed on.
    pub n: f64,
    /// The look's own upper bound, when it computed a finite one.
    pub upper: Option<f64>,
    /// The look's own lower bound, when it computed a finite one.
    pub lower: Option<f64>,
}

/// An arm's own bounds at every recorded look it appears in (matched by name, oldest first),
/// when there are two or more: with a single look there is nothing to draw over looks.
pub(crate) fn look_series(a: &Analysis, arm: &ArmResult) -> Option<Vec<LookPoint>> {
    let finite = |v: Option<f64>| v.filter(|x| x.is_finite());
    let points: Vec<LookPoint> = a
        .looks
        .history
        .iter()
        .filter_map(|record| {
            let own = record.arms.iter().find(|l| l.name == arm.name)?;
            Some(LookPoint {
                look: record.look,
                n: own.n as f64,
                upper: finite(own.upper),
                lower: finite(own.lower),
            })
        })
        .collect();
    (points.len() >= 2).then_some(points)
}

/// The running bound after each look: the smallest upper (`upper` true) or the largest lower
/// bound of the looks so far, which is what an intersection over looks gives. Looks without
/// that bound keep the running value of the looks before them.
pub(crate) fn running(values: &[Option<f64>], upper: bool) -> Vec<Option<f64>> {
    let mut best: Option<f64> = None;
    values
        .iter()
        .map(|v| {
            if let Some(v) = v.filter(|x| x.is_finite()) {
                best = Some(match best {
                    None => v,
                    Some(b) if upper => b.min(v),
                    Some(b) => b.max(v),
                });
            }
            best
        })
        .collect()
}

/// Which bounds a chart over looks draws: both for a two-sided claim, else the deciding one.
pub(crate) fn look_sides(a: &Analysis) -> &'static [&'static str] {
    match a.claim.side.as_str() {
        "two-sided" => &["lower", "upper"],
        "lower" => &["lower"],
        _ => &["upper"],
    }
}

/// An arm's anytime path, when it has at least two points that can be drawn.
pub(crate) fn path_of(arm: &ArmResult) -> Option<&BoundPath> {
    let path = arm.path.as_ref()?;
    (finite(&path.points).count() >= 2).then_some(path)
}

/// The arm a `best` scope selected, as the analysis recorded it.
pub(crate) fn selected_arm(a: &Analysis) -> Option<usize> {
    a.selected_arm.filter(|&i| i < a.arms.len())
}

/// What a clustered analysis counts: its `n` is the number of clusters.
fn counted(a: &Analysis) -> &'static str {
    if a.dependence.model == "clustered" {
        "clusters"
    } else {
        "trials"
    }
}

/// A trial-count axis, drawn on a linear pixel scale over `at(n)`: logarithmic when the
/// counts span a factor of 20 or more (a path from the first trial to the last), else linear
/// from 0 (a few looks of similar size, whose spacing then reads true).
struct TrialsAxis {
    log: bool,
    lo: f64,
    hi: f64,
    ticks: Vec<f64>,
}

impl TrialsAxis {
    fn fit(counts: impl Iterator<Item = f64>) -> Self {
        let (min, max) = counts
            .filter(|x| x.is_finite() && *x > 0.0)
            .fold((f64::INFINITY, 0.0f64), |(lo, hi), x| {
                (lo.min(x), hi.max(x))
            });
        let (min, max) = if min.is_finite() {
            (min, max)
        } else {
            (1.0, 1.0)
        };
        if max >= 20.0 * min {
            let (l0, l1) = (min.log10(), max.log10());
            let pad = 0.04 * (l1 - l0);
            let (lo, hi) = (l0 - pad, l1 + pad);
            let ticks = log_ticks(10f64.powf(lo), 10f64.powf(hi))
                .into_iter()
                .map(f64::log10)
                .collect();
            TrialsAxis {
                log: true,
                lo,
                hi,
                ticks,
            }
        } else {
            let hi = max * 1.08;
            // Counts are whole numbers: a step of 2.5 would put ticks between them.
            let (step, _) = nice_step(hi, 5.0);
            let step = if step.fract() == 0.0 {
                step
            } else {
                step.ceil()
            };
            TrialsAxis {
                log: false,
                lo: 0.0,
                hi,
                ticks: ticks_between(0.0, hi, step.max(1.0)),
            }
        }
    }

    fn at(&self, n: f64) -> f64 {
        if self.log { n.max(1e-300).log10() } else { n }
    }

    fn label(&self, v: f64) -> String {
        trials_label(if self.log { 10f64.powf(v) } else { v })
    }

    fn desc(&self, what: &str) -> String {
        if self.log {
            format!("{what} (log scale)")
        } else {
            what.to_string()
        }
    }
}

/// The parts of a polyline inside the horizontal band [lo, hi], cut where it crosses the band's
/// edges: plotters does not clip, and a line drawn beyond the plotting area would run over the
/// axis labels.
fn clip_band(points: &[(f64, f64)], lo: f64, hi: f64) -> Vec<Vec<(f64, f64)>> {
    let mut runs: Vec<Vec<(f64, f64)>> = Vec::new();
    let mut run: Vec<(f64, f64)> = Vec::new();
    let mut close = |run: &mut Vec<(f64, f64)>| {
        if run.len() >= 2 {
            runs.push(std::mem::take(run));
        } else {
            run.clear();
        }
    };
    for w in points.windows(2) {
        let ((x0, y0), (x1, y1)) = (w[0], w[1]);
        let dy = y1 - y0;
        let (t0, t1) = if dy == 0.0 {
            if (lo..=hi).contains(&y0) {
                (0.0, 1.0)
            } else {
                (1.0, 0.0)
            }
        } else {
            let (ta, tb) = ((lo - y0) / dy, (hi - y0) / dy);
            (ta.min(tb).max(0.0), ta.max(tb).min(1.0))
        };
        if t0 > t1 {
            close(&mut run);
            continue;
        }
        let at = |t: f64| (x0 + t * (x1 - x0), y0 + t * dy);
        if t0 > 0.0 || run.is_empty() {
            close(&mut run);
            run.push(at(t0));
        }
        run.push(at(t1));
        if t1 < 1.0 {
            close(&mut run);
        }
    }
    close(&mut run);
    runs
}

/// A label for one marked point, in pixels of the whole chart.
struct PointLabel {
    text: String,
    at: (i32, i32),
    /// Above the point, else below it.
    above: bool,
    /// Centred on the point, else starting just right of it.
    centred: bool,
}

/// Draws the labels of marked points, at `font_px`, within the plot's horizontal pixel span
/// `plot_x` and the right margin beyond it. When any two would touch,
/// only the last (this look) is labelled: a label beside the wrong point would mislead, while
/// the legend and the table still say which mark is which.
fn draw_point_labels<DB: DrawingBackend>(
    root: &DrawingArea<DB, plotters::coord::Shift>,
    labels: &[PointLabel],
    font_px: u32,
    plot_x: Range<i32>,
) -> Result<(), String> {
    use plotters::style::text_anchor::{HPos, Pos, VPos};
    let font = (SANS_FAMILY, font_px).into_font().color(&INK);
    // A label may run on into the right margin, which the charts keep wide for it.
    let (left, right) = (plot_x.start, plot_x.end + 18);
    let spans: Vec<(i32, i32)> = labels
        .iter()
        .map(|l| {
            let w = text_width(&font.font, &l.text);
            let x0 = if l.centred {
                l.at.0 - w / 2
            } else {
                l.at.0 + 5
            };
            // Kept inside the chart: shifted left at the right edge, right at the left one.
            let x0 = x0.min(right - w).max(left);
            (x0, x0 + w)
        })
        .collect();
    let crowded = spans
        .iter()
        .enumerate()
        .any(|(i, a)| spans[..i].iter().any(|b| !(a.1 + 6 < b.0 || a.0 > b.1 + 6)));
    let first = if crowded {
        labels.len().saturating_sub(1)
    } else {
        0
    };
    for (l, (x0, _)) in labels.iter().zip(&spans).skip(first) {
        let (y, v) = if l.above {
            (l.at.1 - 8, VPos::Bottom)
        } else {
            (l.at.1 + 8, VPos::Top)
        };
        root.draw(&Text::new(
            l.text.clone(),
            (*x0, y),
            font.clone().pos(Pos::new(HPos::Left, v)),
        ))
        .map_err(|e| e.to_string())?;
    }
    Ok(())
}

/// A chart whose axes are both given by ticks on a linear pixel scale.
type SpanChart<'a, DB> =
    ChartContext<'a, DB, Cartesian2d<Ticked<RangedCoordf64>, Ticked<RangedCoordf64>>>;

/// A bound against a trial count (the charts over looks and along the trials): trials across
/// on `x`, the bound up on `axis`, framed and meshed, ready for the data.
fn trials_chart<'a, DB: DrawingBackend>(
    area: &'a DrawingArea<DB, plotters::coord::Shift>,
    panel: &Panel,
    title: &str,
    x: &TrialsAxis,
    axis: &ValueAxis,
    x_desc: String,
    y_desc: String,
) -> Result<SpanChart<'a, DB>, String> {
    let frame = Frame {
        title,
        title_px: panel.title_px,
        // Wider than the usual 18: the labels of points near the right edge run into it.
        margin_right: 22,
        x_labels: panel.x_labels(),
        y_labels: panel.value_labels(),
    };
    let mut chart = house_chart(
        area,
        frame,
        span_axis(x.lo, x.hi, x.ticks.clone()),
        span_axis(axis.lo, axis.hi, axis.ticks.clone()),
    )?;
    let decimals = axis.decimals;
    house_mesh(&mut chart, panel.font_px)
        .x_desc(x_desc)
        .y_desc(y_desc)
        .x_label_formatter(&|v| x.label(*v))
        .y_label_formatter(&|v| format!("{:.*}", decimals, v))
        .draw()
        .map_err(|e| e.to_string())?;
    Ok(chart)
}

/// One look as a chart over looks draws it: the look's number, its position on the trials axis,
/// and its own and running bound in chart units.
type LookRow = (u32, f64, Option<f64>, Option<f64>);

/// One arm's bound at each recorded look on its own (rings) and the running bound that
/// decides (a step line with dots: it holds from one look until the next), against the limit.
fn looks_svg(
    a: &Analysis,
    arm: &ArmResult,
    points: &[LookPoint],
    scale: &Scale,
    small: bool,
) -> Result<String, String> {
    let panel = Panel::new(small, 330);
    let f = scale.factor;
    let limit = a.claim.limit * f;
    let x = TrialsAxis::fit(points.iter().map(|p| p.n));
    // Per side drawn: the own and running bounds at each look, in chart units.
    let series: Vec<(bool, Vec<LookRow>)> = look_sides(a)
        .iter()
        .map(|side| {
            let upper = *side == "upper";
            let own: Vec<Option<f64>> = points
                .iter()
                .map(|p| if upper { p.upper } else { p.lower })
                .collect();
            let run = running(&own, upper);
            let rows = points
                .iter()
                .zip(own.iter().zip(&run))
                .map(|(p, (o, r))| (p.look, x.at(p.n), o.map(|v| v * f), r.map(|v| v * f)))
                .collect();
            (upper, rows)
        })
        .collect();
    let values: Vec<f64> = series
        .iter()
        .flat_map(|(_, rows)| rows.iter().flat_map(|r| [r.2, r.3]))
        .flatten()
        .chain([limit])
        .collect();
    let axis = ValueAxis::fit(&values, scale.origin * f);

    let title = if a.arms.len() > 1 {
        arm_title(arm)
    } else if a.claim.side == "two-sided" {
        format!("Bounds over looks ({})", a_confidence(a))
    } else {
        format!(
            "{} bound over looks ({})",
            capitalise(deciding_side(a)),
            a_confidence(a)
        )
    };
    let entries = vec![
        (Key::Ring(SECOND), "each look's own bound".to_string()),
        (Key::LineDot(ACCENT), "running bound (decides)".to_string()),
        limit_entry(a),
    ];
    let legend = Legend::lay_out(entries, panel.font_px - 1, panel.w, panel.legend_row_h());
    let side = if a.claim.side == "two-sided" {
        "bounds".to_string()
    } else {
        format!("{} bound", deciding_side(a))
    };

    let mut svg = String::new();
    {
        let root = white_canvas(&mut svg, (panel.w, panel.h))?;
        let (upper_area, lower_area) = root.split_vertically(panel.h - legend.height());
        let mut chart = trials_chart(
            &upper_area,
            &panel,
            &title,
            &x,
            &axis,
            x.desc(&format!("{} at each look", counted(a))),
            axis.title(&side, scale),
        )?;
        let err = |e: DrawingAreaErrorKind<_>| e.to_string();
        let (band_lo, band_hi) = (axis.lo, axis.hi);
        if (band_lo..=band_hi).contains(&limit) {
            draw_limit(&mut chart, (x.lo, limit), (x.hi, limit))?;
        }
        let mut labels: Vec<PointLabel> = Vec::new();
        for (upper, rows) in &series {
            // The running bound holds from one look until the next: a step, not a slope.
            let mut steps: Vec<(f64, f64)> = Vec::new();
            for r in rows {
                if let Some(v) = r.3 {
                    if let Some(&(_, prev)) = steps.last() {
                        steps.push((r.1, prev));
                    }
                    steps.push((r.1, v));
                }
            }
            for run in clip_band(&steps, band_lo, band_hi) {
                chart
                    .draw_series(LineSeries::new(run, ACCENT.stroke_width(2)))
                    .map_err(err)?;
            }
            for r in rows {
                if let Some(v) = r.2.filter(|v| (band_lo..=band_hi).contains(v)) {
                    chart
                        .draw_series(std::iter::once(Circle::new(
                            (r.1, v),
                            6,
                            SECOND.stroke_width(2),
                        )))
                        .map_err(err)?;
                    // Below a falling upper bound and above a rising lower one: the step
                    // line reaches each look from the other side.
                    labels.push(PointLabel {
                        text: format!("look {}", r.0),
                        at: chart.backend_coord(&(r.1, v)),
                        above: !*upper,
                        centred: true,
                    });
                }
                if let Some(v) = r.3.filter(|v| (band_lo..=band_hi).contains(v)) {
                    chart
                        .draw_series(std::iter::once(Circle::new((r.1, v), 4, ACCENT.filled())))
                        .map_err(err)?;
                }
            }
        }
        let (plot_x, _) = chart.plotting_area().get_pixel_range();
        draw_point_labels(&root, &labels, panel.font_px - 2, plot_x)?;
        legend.draw(&lower_area)?;
        root.present().map_err(|e| e.to_string())?;
    }
    Ok(svg)
}

/// An anytime bound along the cumulative trials, with each recorded look marked on it and the
/// limit. The bound starts at the end of the range, far from where the decision is made, so
/// the value axis is capped near the limit and the looks; the line enters from the top.
fn path_svg(
    a: &Analysis,
    arm: &ArmResult,
    path: &BoundPath,
    scale: &Scale,
    small: bool,
) -> Result<String, String> {
    let panel = Panel::new(small, 350);
    let f = scale.factor;
    let limit = a.claim.limit * f;
    let origin = scale.origin * f;
    let points: Vec<(f64, f64)> = finite(&path.points).map(|(n, v)| (n, v * f)).collect();
    let marks: Vec<(f64, f64)> = finite(&path.looks).map(|(n, v)| (n, v * f)).collect();
    let x = TrialsAxis::fit(points.iter().chain(&marks).map(|p| p.0));
    let upper = path.bound != "lower";

    // Far enough above the limit and the looks that the approach to them shows, no further.
    let near = marks
        .iter()
        .map(|p| p.1)
        .chain(points.last().map(|p| p.1))
        .chain([limit, arm.mean * f])
        .filter(|v| v.is_finite())
        .fold(origin, f64::max);
    let cap = if near > origin {
        origin + 2.5 * (near - origin)
    } else {
        f64::INFINITY
    };
    let shown: Vec<f64> = points
        .iter()
        .chain(&marks)
        .map(|p| p.1.min(cap))
        .chain([limit])
        .collect();
    let axis = ValueAxis::fit(&shown, origin);
    let drawn: Vec<(f64, f64)> = points.iter().map(|(n, v)| (x.at(*n), *v)).collect();

    let side = side_word(&path.bound);
    let title = if a.arms.len() > 1 {
        arm_title(arm)
    } else {
        format!(
            "{} {} bound along the {}",
            capitalise(side),
            a_confidence(a),
            counted(a)
        )
    };
    // Recorded looks of this arm, by number, to label the marks; the path marks one point per
    // recorded look, so the two lists pair up when their lengths agree.
    let numbers: Vec<u32> = a
        .looks
        .history
        .iter()
        .filter(|r| r.arms.iter().any(|l| l.name == arm.name))
        .map(|r| r.look)
        .collect();
    let numbers: Vec<u32> = if numbers.len() == marks.len() {
        numbers
    } else {
        (1..=marks.len() as u32).collect()
    };
    let entries = vec![
        (
            Key::Line(ACCENT, false),
            format!(
                "running {side} bound, {}",
                short_method_name(a, &arm.primary.method)
            ),
        ),
        (
            Key::Dot(ACCENT),
            if marks.len() == 1 {
                "this look".to_string()
            } else {
                "recorded looks, this one last".to_string()
            },
        ),
        limit_entry(a),
    ];
    let legend = Legend::lay_out(entries, panel.font_px - 1, panel.w, panel.legend_row_h());

    let mut svg = String::new();
    {
        let root = white_canvas(&mut svg, (panel.w, panel.h))?;
        let (upper_area, lower_area) = root.split_vertically(panel.h - legend.height());
        let mut chart = trials_chart(
            &upper_area,
            &panel,
            &title,
            &x,
            &axis,
            x.desc(&format!("number of {}", counted(a))),
            axis.title(&format!("{side} bound"), scale),
        )?;
        let err = |e: DrawingAreaErrorKind<_>| e.to_string();
        let (band_lo, band_hi) = (axis.lo, axis.hi);
        if (band_lo..=band_hi).contains(&limit) {
            draw_limit(&mut chart, (x.lo, limit), (x.hi, limit))?;
        }
        for run in clip_band(&drawn, band_lo, band_hi) {
            chart
                .draw_series(LineSeries::new(run, ACCENT.stroke_width(2)))
                .map_err(err)?;
        }
        let mut labels: Vec<PointLabel> = Vec::new();
        for ((n, v), look) in marks.iter().zip(&numbers) {
            let v = v.clamp(band_lo, band_hi);
            let at = (x.at(*n), v);
            draw_mark(&mut chart, at)?;
            // Above and to the right of a falling upper bound (below and to the right of a
            // rising lower one), where the line has already passed.
            labels.push(PointLabel {
                text: format!("look {look}"),
                at: chart.backend_coord(&at),
                above: upper,
                centred: false,
            });
        }
        let (plot_x, _) = chart.plotting_area().get_pixel_range();
        draw_point_labels(&root, &labels, panel.font_px - 2, plot_x)?;
        legend.draw(&lower_area)?;
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
    fn trial_labels_group_digits_then_use_powers_of_ten() {
        // Expected strings by decimal arithmetic: digits grouped in threes as the model prints
        // them ("4,600"), powers of ten from 10^7 on.
        assert_eq!(trials_label(4600.0), "4,600");
        assert_eq!(trials_label(1_000_000.0), "1,000,000");
        assert_eq!(trials_label(1e8), "10⁸");
        assert_eq!(trials_label(2.5e9), "2.5×10⁹");
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

    fn bounded_sample() -> Analysis {
        serde_json::from_str(include_str!("../../tests/data/bounded-sample-results.json"))
            .expect("bounded sample deserializes")
    }

    /// Occurrences of an SVG element with the given fill colour.
    fn filled(svg: &str, element: &str, fill: &str) -> usize {
        svg.lines()
            .filter(|l| {
                l.trim_start().starts_with(&format!("<{element} "))
                    && l.contains(&format!("fill=\"{fill}\""))
            })
            .count()
    }

    #[test]
    fn histogram_draws_one_bar_per_occupied_bin() {
        let a = bounded_sample();
        let set = render_plots(&a).expect("draws");
        assert!(set.curves.is_empty(), "bounded arms have no curve");
        assert!(set.arms.is_none(), "one arm: no per-arm chart");
        assert_eq!(set.histograms.len(), 1);
        let svg = &set.histograms[0];
        // tests/data/bounded-sample-results.json: bins 1 to 13 of 40 hold values (4847 … 6),
        // the other 27 are empty; plus one block in the legend.
        assert_eq!(filled(svg, "rect", "#B4C7DA"), 13 + 1);
        // Declared range [0, 2.5] m, and the display strings of the mean and the limit, from
        // the same file (they join number and unit with a no-break space).
        assert!(svg.contains("declared range 0 to 2.5\u{a0}m"), "{svg}");
        assert!(svg.contains(&format!("observed mean {}", a.arms[0].display.mean)));
        assert!(svg.contains(&format!("limit {}", a.claim.display.limit)));
        assert!(svg.contains("observed value (m)"));
    }

    #[test]
    fn comparison_chart_marks_every_method() {
        let a = bounded_sample();
        let set = render_plots(&a).expect("draws");
        assert_eq!(set.compare.len(), 1);
        let svg = &set.compare[0];
        // The sample has 1 primary (betting) and 5 compare methods, all upper bounds: one bar
        // each, and one dot for the mean on each of the 6 rows (+1 in the legend).
        assert_eq!(filled(svg, "rect", "#1F4E79"), 1);
        assert_eq!(filled(svg, "rect", "#7D848C"), 5);
        assert_eq!(filled(svg, "circle", "#22252A"), 6 + 1);
        for b in std::iter::once(&a.arms[0].primary).chain(&a.arms[0].compare) {
            let shown = b.display.upper.as_deref().expect("upper bound");
            assert!(svg.contains(shown), "{shown} printed beside its bar");
        }
        assert!(svg.contains("Betting (primary)"));
        assert!(svg.contains("Hoeffding"));
        // Values 0.2812 to 0.35 m sit in the top fifth of [0, 0.35]: the axis is cut, and says so.
        assert!(svg.contains("axis does not start at 0"));

        // Three arms: one chart, grouped under arm headings.
        let mut three = a.clone();
        for name in ["dock-b", "dock-c"] {
            let mut arm = three.arms[0].clone();
            arm.name = name.into();
            three.arms.push(arm);
        }
        let set = render_plots(&three).expect("draws");
        assert_eq!(set.compare.len(), 1);
        assert_eq!(set.histograms.len(), 3);
        let svg = &set.compare[0];
        assert_eq!(filled(svg, "rect", "#1F4E79"), 3);
        assert_eq!(filled(svg, "rect", "#7D848C"), 15);
        assert!(svg.contains("Arm dock-b") && svg.contains("Arm dock-c"));
    }

    #[test]
    fn a_unit_with_control_characters_cannot_break_the_svg() {
        let mut a = bounded_sample();
        let bell = |s: &mut String| *s = s.replace('m', "m\u{7}");
        a.outcome.unit = Some("m\u{7}".into());
        bell(&mut a.claim.display.limit);
        bell(&mut a.arms[0].display.mean);
        let arm = &mut a.arms[0];
        for b in std::iter::once(&mut arm.primary).chain(arm.compare.iter_mut()) {
            b.display.upper.iter_mut().for_each(bell);
        }
        let set = render_plots(&a).expect("draws");
        for svg in set.compare.iter().chain(&set.histograms) {
            assert!(!svg.contains('\u{7}'));
        }
    }

    #[test]
    fn binary_reports_get_a_comparison_chart_too() {
        let a: Analysis =
            serde_json::from_str(include_str!("../../tests/data/sample-results.json")).unwrap();
        let set = render_plots(&a).expect("draws");
        assert_eq!(set.curves.len(), 1);
        assert!(set.histograms.is_empty(), "no values one by one");
        let svg = &set.compare[0];
        // tests/data/sample-results.json: exact (primary), chernoff-kl and hoeffding.
        assert_eq!(filled(svg, "rect", "#1F4E79"), 1);
        assert_eq!(filled(svg, "rect", "#7D848C"), 2);
        assert!(svg.contains("2.07 %") && svg.contains("rate (%)"));
        assert!(!svg.contains("axis does not start"));
    }

    #[test]
    fn comparison_charts_split_to_fit_a_page() {
        let mut a = bounded_sample();
        assert_eq!(compare_parts(&a), vec![0..1]);
        // Six arms of 1 heading + 6 methods = 42 rows, more than the 30 one chart holds: two
        // charts of 21 rows (arithmetic from COMPARE_ROWS_PER_CHART).
        let arm = a.arms[0].clone();
        a.arms = vec![arm; 6];
        assert_eq!(compare_parts(&a), vec![0..3, 3..6]);
        let set = render_plots(&a).expect("draws");
        assert_eq!(set.compare.len(), 2);
        assert!(set.compare[1].contains("arms 4–6 of 6"));
        a.arms.iter_mut().for_each(|arm| arm.compare.clear());
        assert!(compare_parts(&a).is_empty(), "nothing to compare");
    }

    #[test]
    fn value_axes_cut_only_when_values_sit_far_from_the_origin() {
        // Worked by hand from the rule in ValueAxis::fit: values 0.2812 to 0.35 padded by 12 %
        // of their spread give [0.2729, 0.3583]; a step of 0.01 gives 8 intervals, the start
        // snaps down to 0.27, and ticks run 0.27, 0.28, …, 0.35.
        let axis = ValueAxis::fit(&[0.2812, 0.28237, 0.29869, 0.35], 0.0);
        assert!(axis.cut);
        assert!((axis.lo - 0.27).abs() < 1e-12, "{}", axis.lo);
        assert_eq!(axis.ticks.len(), 9);
        assert_eq!(axis.decimals, 2);
        // Binary sample in percent (0.261, 0.423, 2.07, limit 1): from 0, 12 % headroom.
        let axis = ValueAxis::fit(&[0.261, 0.423, 2.07, 1.0], 0.0);
        assert!(!axis.cut);
        assert_eq!(axis.lo, 0.0);
        assert!((axis.hi - 2.07 * 1.12).abs() < 1e-12);
        // No finite value at all still gives a usable axis.
        let axis = ValueAxis::fit(&[f64::NAN], 0.0);
        assert!(axis.hi > axis.lo && !axis.ticks.is_empty());
    }

    /// Fixtures written by `surety run` (see tests/report.rs for how each was made).
    fn fixture(name: &str) -> Analysis {
        let text = match name {
            "planned" => include_str!("../../tests/data/looks-planned-results.json"),
            "anytime" => include_str!("../../tests/data/looks-anytime-results.json"),
            _ => include_str!("../../tests/data/clustered-looks-results.json"),
        };
        serde_json::from_str(text).expect("fixture deserializes")
    }

    /// Circles drawn as rings (no fill) in the given stroke colour.
    fn rings(svg: &str, stroke: &str) -> usize {
        svg.lines()
            .filter(|l| {
                l.trim_start().starts_with("<circle ")
                    && l.contains("fill=\"none\"")
                    && l.contains(&format!("stroke=\"{stroke}\""))
            })
            .count()
    }

    #[test]
    fn looks_chart_marks_every_look() {
        let a = fixture("planned");
        let set = render_plots(&a).expect("draws");
        // tests/data/looks-planned-results.json: one arm seen at looks 1, 2 and 3.
        assert_eq!(set.looks.len(), 1);
        let svg = &set.looks[0];
        // A ring per look's own bound and a dot per running bound, plus one of each in the legend.
        assert_eq!(rings(svg, "#7D848C"), 3 + 1);
        assert_eq!(filled(svg, "circle", "#1F4E79"), 3 + 1);
        for label in [
            "look 1",
            "look 2",
            "look 3",
            "Upper bound over looks",
            "trials at each look",
        ] {
            assert!(svg.contains(label), "{label}");
        }
        assert!(set.paths.is_empty(), "a fixed-n method has no path");
        // One look only: nothing to draw over looks.
        let mut one = a.clone();
        one.looks.history.truncate(1);
        assert!(render_plots(&one).expect("draws").looks.is_empty());
    }

    #[test]
    fn path_chart_marks_every_look_and_stays_inside_its_axes() {
        let a = fixture("anytime");
        let set = render_plots(&a).expect("draws");
        assert_eq!(set.paths.len(), 1);
        let svg = &set.paths[0];
        // tests/data/looks-anytime-results.json: path.looks holds looks at 60,000, 150,000 and
        // 240,000 trials: three marks (filled, each with a white ring) plus the legend's dot.
        assert_eq!(filled(svg, "circle", "#1F4E79"), 3 + 1);
        assert!(
            svg.contains("look 3") && svg.contains("(log scale)"),
            "{svg}"
        );
        // The confidence is the model's display string (with its no-break space).
        let title = format!(
            "Upper {} confidence bound along the trials",
            a.claim.display.confidence
        );
        assert!(svg.contains(&title), "{svg}");
        // The path starts at the top of the range (2.5 m at one trial) and is cut at the top
        // of the chart: the axis stops below 1 m (2.5 × the largest look bound, hand-worked).
        assert!(!svg.contains(">2.5<") && !svg.contains(">1.0<"), "{svg}");
        assert_eq!(set.looks.len(), 1, "three looks of an anytime method too");
    }

    #[test]
    fn running_bounds_intersect_looks_so_far() {
        let v = [Some(0.5), Some(0.6), None, Some(0.3)];
        assert_eq!(
            running(&v, true),
            vec![Some(0.5), Some(0.5), Some(0.5), Some(0.3)]
        );
        assert_eq!(
            running(&v, false),
            vec![Some(0.5), Some(0.6), Some(0.6), Some(0.6)]
        );
        assert_eq!(running(&[None, Some(1.0)], true), vec![None, Some(1.0)]);
    }

    #[test]
    fn clipping_cuts_a_line_where_it_leaves_the_band() {
        // Worked by hand: from (0, 4) to (2, 0) the line crosses y = 2 at x = 1.
        assert_eq!(
            clip_band(&[(0.0, 4.0), (2.0, 0.0)], 0.0, 2.0),
            vec![vec![(1.0, 2.0), (2.0, 0.0)]]
        );
        // Out and back in: two runs.
        let runs = clip_band(&[(0.0, 1.0), (1.0, 3.0), (2.0, 1.0)], 0.0, 2.0);
        assert_eq!(
            runs,
            vec![vec![(0.0, 1.0), (0.5, 2.0)], vec![(1.5, 2.0), (2.0, 1.0)]]
        );
        assert!(clip_band(&[(0.0, 5.0), (1.0, 6.0)], 0.0, 2.0).is_empty());
    }

    #[test]
    fn trial_axes_turn_logarithmic_for_wide_spans() {
        // 800 to 2,300 trials: linear from 0, whole-number ticks.
        let axis = TrialsAxis::fit([800.0, 1600.0, 2300.0].into_iter());
        assert!(!axis.log && axis.lo == 0.0);
        assert!(axis.ticks.iter().all(|t| t.fract() == 0.0));
        // 1 to 240,000: logarithmic, ticks at powers of ten (log_ticks keeps those alone).
        let axis = TrialsAxis::fit([1.0, 240_000.0].into_iter());
        assert!(axis.log);
        assert_eq!(axis.label(axis.ticks[1]), "10");
    }

    #[test]
    fn best_scope_marks_the_selected_arm() {
        let mut a = fixture("clustered");
        let svg = render_plots(&a).expect("draws").arms.expect("two arms");
        // scope all with two arms (tests/data/clustered-looks-results.json).
        assert!(svg.contains("scope all: Bonferroni δ/2 over the arms; each bound at δ = 0.0125"));
        assert!(!svg.contains("(selected)"));
        a.claim.scope = "best".into();
        // The chart marks the arm the analysis selected (the rule itself is tested there).
        a.selected_arm = Some(0);
        let svg = render_plots(&a).expect("draws").arms.expect("two arms");
        assert!(svg.contains("line-1 (selected)") && !svg.contains("line-2 (selected)"));
        assert!(svg.contains("scope best: the best of 2 arms is certified at δ/2"));
        a.selected_arm = Some(1);
        let svg = render_plots(&a).expect("draws").arms.expect("two arms");
        assert!(svg.contains("line-2 (selected)") && !svg.contains("line-1 (selected)"));
    }

    #[test]
    fn labels_are_measured_as_typst_sets_them() {
        // Independent measure: the face's own advance widths (hmtx) at the size typst uses,
        // plotters-svg's font-size, which is the plotters size divided by 1.24.
        register_fonts().unwrap();
        let text = "running bound (decides the verdict)";
        let face = typst::text::Font::new(typst::foundations::Bytes::new(SANS_REGULAR), 0)
            .expect("face parses");
        let inst = face.clone().instantiate(
            face.info().variant,
            typst::layout::Abs::pt(10.0),
            &typst::text::FontVariations::default(),
        );
        let t = inst.ttf();
        let ems: f64 = text
            .chars()
            .map(|c| {
                let g = t.glyph_index(c).expect("glyph");
                f64::from(t.glyph_hor_advance(g).expect("advance")) / f64::from(t.units_per_em())
            })
            .sum();
        let expected = ems * 15.0 / 1.24;
        let measured = text_width(&(SANS_FAMILY, 15).into_font(), text) as f64;
        assert!(
            (measured - expected).abs() <= 2.0,
            "{measured} vs {expected}"
        );
    }
}
