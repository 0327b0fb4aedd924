//! From the spec as written to a checked [`Spec`]: the rules that involve meaning or more than
//! one key, each error placed where the author has to change something.

use std::collections::BTreeMap;
use std::path::PathBuf;

use super::confidence::parse_confidence;
use super::date::{Date, DateError};
use super::de::Trace;
use super::error::{Mark, RawError};
use super::model::*;
use super::number::{self, yaml12_bool};
use super::raw::*;
use super::yaml::{Style, join_index, join_key, shorten};

struct Ctx<'a> {
    trace: &'a Trace,
}

impl Ctx<'_> {
    /// Where the value at `path` was written; for a path not in the file, its nearest parent.
    fn at(&self, path: &str) -> Mark {
        let mut p = path;
        loop {
            if let Some(e) = self.trace.get(p) {
                return e.value;
            }
            match p.rfind(['.', '[']) {
                Some(i) => p = &p[..i],
                None if !p.is_empty() => p = "",
                None => return Mark { line: 1, col: 1 },
            }
        }
    }

    fn key_at(&self, path: &str) -> Mark {
        match self.trace.get(path) {
            Some(e) => e.key.unwrap_or(e.value),
            None => self.at(path),
        }
    }

    /// Whether the key was written, even with an empty value.
    fn given(&self, path: &str) -> bool {
        self.trace.contains_key(path)
    }

    /// Half a unit in the last digit of the number written at `path`; 0 for a whole number
    /// written without a decimal point or exponent.
    fn half_unit(&self, path: &str) -> f64 {
        match self.trace.get(path).and_then(|e| e.last_place) {
            // Clamped: beyond ±400 the power is 0 or infinite in f64 anyway.
            Some(place) => 0.5 * 10f64.powi(place.clamp(-400, 400) as i32),
            None => 0.0,
        }
    }

    fn style(&self, path: &str) -> Style {
        self.trace
            .get(path)
            .and_then(|e| e.style)
            .unwrap_or(Style::Plain)
    }

    /// An error about the value at `path`.
    fn err(&self, path: &str, message: impl Into<String>) -> RawError {
        RawError::new(self.at(path), Some(path.to_owned()), message)
    }

    /// An error about the key at `path` itself (it should not be there).
    fn key_err(&self, path: &str, message: impl Into<String>) -> RawError {
        RawError::new(self.key_at(path), Some(path.to_owned()), message)
    }

    /// A key that is required here is missing: placed at the mapping that should hold it.
    fn missing(&self, parent: &str, key: &str, why: &str) -> RawError {
        RawError::new(
            self.at(parent),
            Some(join_key(parent, key)),
            format!("missing key `{key}`: {why}"),
        )
    }

    fn required_text(&self, path: &str, text: String) -> Result<String, RawError> {
        if text.trim().is_empty() {
            Err(self.err(path, "must not be empty"))
        } else {
            Ok(text)
        }
    }

    /// Optional prose: an empty string says nothing and reads as absent.
    fn optional_text(text: Option<Text>) -> Option<String> {
        text.map(|t| t.0).filter(|t| !t.trim().is_empty())
    }

    fn date(&self, path: &str, raw: Option<Scalar>) -> Result<Option<Date>, RawError> {
        let Some(Scalar(text)) = raw else {
            return Ok(None);
        };
        Date::parse(text.trim()).map(Some).map_err(|why| match why {
            DateError::Shape => self
                .err(
                    path,
                    format!(
                        "expected a date written YYYY-MM-DD, found `{}`",
                        shorten(&text)
                    ),
                )
                .hint("for example 2026-11-30"),
            DateError::NoSuchDay(why) => self.err(
                path,
                format!("`{}` is not a calendar date: {why}", text.trim()),
            ),
        })
    }

    fn path(&self, path: &str, text: Option<String>) -> Result<Option<PathBuf>, RawError> {
        text.map(|t| self.required_text(path, t).map(PathBuf::from))
            .transpose()
    }
}

/// Checks the meaning of a spec that has the right shape and builds the typed [`Spec`].
pub(crate) fn build(raw: RawSpec, trace: &Trace, source: &str) -> Result<Spec, RawError> {
    let cx = Ctx { trace };
    let study = study(&cx, raw.study)?;
    let (claim, raw_limit) = claim(&cx, raw.claim)?;
    let outcome = outcome(&cx, raw.outcome)?;
    let claim = Claim {
        limit: check_limit(&cx, raw_limit, &outcome)?,
        ..claim
    };
    let data = data(&cx, raw.data, &outcome)?;
    let dependence = dependence(&cx, raw.dependence, &data)?;
    let looks = looks(&cx, raw.looks)?;
    let method = method(&cx, raw.method)?;
    let plan = raw.plan.map(|p| plan(&cx, p, &outcome)).transpose()?;
    let attestations = attestations(&cx, raw.attestations)?;
    let signatures = signatures(&cx, raw.signatures)?;
    let report = report(&cx, raw.report)?;
    let places = trace
        .iter()
        .map(|(k, e)| {
            (
                k.clone(),
                Place {
                    key: e.key,
                    value: e.value,
                },
            )
        })
        .collect();
    Ok(Spec {
        format: raw.surety,
        study,
        claim,
        outcome,
        data,
        dependence,
        looks,
        method,
        plan,
        attestations,
        signatures,
        report,
        source: source.to_owned(),
        places,
    })
}

fn study(cx: &Ctx, raw: RawStudy) -> Result<Study, RawError> {
    Ok(Study {
        id: cx.required_text("study.id", raw.id)?,
        title: cx.required_text("study.title", raw.title.0)?,
        owner: Ctx::optional_text(raw.owner),
        requirement: Ctx::optional_text(raw.requirement),
        date: cx.date("study.date", raw.date)?,
        description: Ctx::optional_text(raw.description),
    })
}

fn claim(cx: &Ctx, raw: RawClaim) -> Result<(Claim, f64), RawError> {
    let quantity = cx.required_text("claim.quantity", raw.quantity.0)?;
    let written = raw.confidence.0.trim().to_owned();
    let confidence =
        parse_confidence(&written, cx.style("claim.confidence")).map_err(|(message, hint)| {
            let e = cx.err("claim.confidence", message);
            match hint {
                Some(h) => e.hint(h),
                None => e,
            }
        })?;
    let claim = Claim {
        quantity,
        side: raw.side,
        limit: raw.limit,
        confidence: confidence.value,
        delta: confidence.delta,
        confidence_text: written,
        confidence_percent: confidence.percent,
        scope: raw.scope.unwrap_or(Scope::Each),
    };
    Ok((claim, raw.limit))
}

fn outcome(cx: &Ctx, raw: RawOutcome) -> Result<Outcome, RawError> {
    let kind = raw.kind;
    let bounded_only = |key: &str| {
        cx.key_err(
            &join_key("outcome", key),
            format!("`{key}` applies only to bounded outcomes; this outcome is binary (0 or 1)"),
        )
        .hint("remove it, or set `type: bounded`")
    };
    if kind == OutcomeKind::Bounded && raw.event.is_some() {
        return Err(cx
            .key_err(
                "outcome.event",
                "`event` applies only to binary outcomes; this outcome is bounded",
            )
            .hint("describe the measured value in `claim.quantity` and its unit in `unit`"));
    }
    if kind == OutcomeKind::Binary && cx.given("outcome.unit") {
        return Err(bounded_only("unit"));
    }
    let range = match (kind, raw.range) {
        (OutcomeKind::Binary, None) if !cx.given("outcome.range") => None,
        (OutcomeKind::Binary, _) => return Err(bounded_only("range")),
        (OutcomeKind::Bounded, None) => {
            return Err(cx
                .missing("outcome", "range", "a bounded outcome needs the range its values lie in, declared before seeing data")
                .hint("for example range: [0, 2.5]"));
        }
        (OutcomeKind::Bounded, Some(r)) => {
            let [low, high] = r[..] else {
                return Err(cx
                    .err(
                        "outcome.range",
                        format!(
                            "expected a range written [low, high], found a list of {} number(s)",
                            r.len()
                        ),
                    )
                    .hint("for example range: [0, 2.5]"));
            };
            if low >= high {
                return Err(cx.err(
                    "outcome.range",
                    format!("the low end must be below the high end, found [{low}, {high}]"),
                ));
            }
            Some((low, high))
        }
    };
    Ok(Outcome {
        kind,
        event: Ctx::optional_text(raw.event),
        range,
        unit: Ctx::optional_text(raw.unit),
    })
}

fn check_limit(cx: &Ctx, limit: f64, outcome: &Outcome) -> Result<f64, RawError> {
    const PATH: &str = "claim.limit";
    match outcome.range {
        None => {
            if limit >= 1.0 {
                let meant = limit / 100.0;
                let e = cx.err(
                    PATH,
                    format!("a rate limit must lie strictly between 0 and 1, found {limit}"),
                );
                return Err(if meant < 1.0 {
                    e.hint(format!(
                        "a rate is a fraction: did you mean {meant} for {limit} %?"
                    ))
                } else {
                    e.hint("a rate is a fraction: did you mean 0.01 for 1 %?")
                });
            }
            if limit <= 0.0 {
                return Err(cx
                    .err(
                        PATH,
                        format!("a rate limit must lie strictly between 0 and 1, found {limit}"),
                    )
                    .hint("a limit of 0 or below can never be demonstrated from a finite test"));
            }
        }
        Some((low, high)) => {
            if limit <= low || limit >= high {
                return Err(cx
                    .err(PATH, format!("the limit must lie strictly inside the outcome range [{low}, {high}], found {limit}"))
                    .hint("a limit at or beyond the end of the range is decided without data"));
            }
        }
    }
    Ok(limit)
}

fn counts(cx: &Ctx, base: &str, trials: u64, events: u64) -> Result<(), RawError> {
    if trials == 0 {
        return Err(cx
            .err(
                &join_key(base, "trials"),
                "trials must be at least 1: no trials demonstrate nothing",
            )
            .hint("give the number of trials run"));
    }
    if events > trials {
        return Err(cx.err(
            &join_key(base, "events"),
            format!("events ({events}) cannot exceed trials ({trials})"),
        ));
    }
    Ok(())
}

/// How one group of data keys is written: inline counts or a summary of bounded values.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Form {
    Counts,
    Summary,
}

impl Form {
    const COUNT_KEYS: [&'static str; 2] = ["trials", "events"];
    const SUMMARY_KEYS: [&'static str; 3] = ["n", "mean", "sd"];

    fn keys(self) -> &'static [&'static str] {
        match self {
            Form::Counts => &Self::COUNT_KEYS,
            Form::Summary => &Self::SUMMARY_KEYS,
        }
    }

    fn words(self) -> &'static str {
        match self {
            Form::Counts => "inline counts (`trials` and `events`)",
            Form::Summary => "a summary (`n`, `mean` and `sd`)",
        }
    }
}

/// Counts are for binary outcomes, summaries for bounded ones; said whenever the two meet.
const COUNTS_OR_SUMMARY: &str = "counts (`trials`, `events`) describe a binary outcome and a summary (`n`, `mean`, `sd`) a bounded one: keep the form that matches outcome.type and remove the other";

/// The first key of `form` written under `base`, by position in the file.
fn first_key(cx: &Ctx, base: &str, form: Form) -> Option<String> {
    form.keys()
        .iter()
        .map(|k| join_key(base, k))
        .filter(|p| cx.given(p))
        .min_by_key(|p| cx.key_at(p))
}

/// The value of a key that a form requires: refused when written empty or left out.
fn required<T>(
    cx: &Ctx,
    base: &str,
    key: &str,
    value: Option<T>,
    expected: &str,
    why: &str,
) -> Result<T, RawError> {
    let path = join_key(base, key);
    match value {
        Some(v) => Ok(v),
        None if cx.given(&path) => {
            Err(cx.err(&path, format!("expected {expected}, found nothing")))
        }
        None => Err(cx.missing(base, key, why)),
    }
}

/// Refuses a summary for an outcome that is not bounded, at the summary's first key.
fn summary_needs_bounded(cx: &Ctx, base: &str, outcome: &Outcome) -> Result<(), RawError> {
    if outcome.kind == OutcomeKind::Bounded {
        return Ok(());
    }
    let path = first_key(cx, base, Form::Summary).unwrap_or_else(|| join_key(base, "n"));
    Err(cx
        .key_err(&path, "a summary (`n`, `mean`, `sd`) describes bounded values, but this outcome is binary")
        .hint("for a binary outcome give `trials` and `events`; for measured values set outcome.type: bounded and declare its range"))
}

/// Checks n, mean and sd written under `base` against the declared range.
fn summary(
    cx: &Ctx,
    base: &str,
    n: Option<u64>,
    mean: Option<f64>,
    sd: Option<f64>,
    range: (f64, f64),
) -> Result<SummaryStats, RawError> {
    const WHY: &str = "a summary needs `n`, `mean` and `sd`";
    let sd_hint = "sd is the sample standard deviation (n − 1 in the denominator), in data units";
    let n = required(cx, base, "n", n, "a whole number", WHY)?;
    let mean = required(cx, base, "mean", mean, "a number", WHY)?;
    let sd = required(cx, base, "sd", sd, "a number", WHY).map_err(|e| e.hint(sd_hint))?;
    if n < 2 {
        return Err(cx
            .err(&join_key(base, "n"), format!("a summary needs n of at least 2, found {n}: a sample standard deviation takes two values or more"))
            .hint("n is the number of values summarised"));
    }
    let (low, high) = range;
    if mean < low || mean > high {
        return Err(cx.err(
            &join_key(base, "mean"),
            format!("the mean must lie inside the outcome range [{low}, {high}], found {mean}"),
        ));
    }
    if sd < 0.0 {
        return Err(cx
            .err(
                &join_key(base, "sd"),
                format!("a standard deviation cannot be negative, found {sd}"),
            )
            .hint(sd_hint));
    }
    // Means and sds are usually written rounded: allow half a unit in the last digit written,
    // so that a summary of values that do lie in the range is not refused for its rounding. A
    // whole number written without a decimal point is taken as exact.
    // The sd's own allowance is capped by the largest sd any mean allows, so that a number
    // written with a large exponent (`1e300`) is not waved through as imprecise.
    let m = cx.half_unit(&join_key(base, "mean"));
    let widest = max_sample_sd(n, low, high, range);
    let allowed = max_sample_sd(n, (mean - m).max(low), (mean + m).min(high), range)
        + cx.half_unit(&join_key(base, "sd")).min(widest);
    if sd > allowed {
        let most = max_sample_sd(n, mean, mean, range);
        let e = cx.err(
            &join_key(base, "sd"),
            format!(
                "no {n} values in [{low}, {high}] with mean {mean} have a standard deviation of {sd}; the largest possible is {}",
                significant(most, 6)
            ),
        );
        // Far above the bound, yet its square root would fit: most likely the variance.
        return Err(if sd > 1.0 && sd > 2.0 * allowed && sd.sqrt() <= allowed {
            e.hint(format!(
                "{sd} may be the variance; the standard deviation is its square root, {}",
                significant(sd.sqrt(), 6)
            ))
        } else {
            e.hint(format!(
                "{sd_hint}; check that the values are in the units of the range"
            ))
        });
    }
    Ok(SummaryStats { n, mean, sd })
}

/// The largest sample standard deviation (n − 1 in the denominator) that n values in
/// [low, high] can have when their mean lies in [mean_low, mean_high] ⊆ [low, high].
///
/// Derivation. Rescale to u = (x − low) / w with w = high − low, so u ∈ [0, 1], and let
/// S = Σu = n·p, p the rescaled mean. Then (n − 1)·s² / w² = Σu² − S²/n, a convex function of
/// u, so over the polytope {u ∈ [0, 1]ⁿ, Σu = S} its maximum is at a vertex. A vertex has at
/// most one coordinate strictly between 0 and 1 (two free coordinates could move in opposite
/// directions), so it is k = ⌊S⌋ ones, one value r = S − k and zeros, with
/// Σu² = k + r². Hence
///
///   f(S) = k + r² − S²/n = S(n − S)/n − r(1 − r),   s_max = w·√(f(S) / (n − 1)).
///
/// The first term is the familiar bound n·p(1 − p)/(n − 1) on the variance; the second is what
/// the one value in the middle costs, and vanishes when n·p is a whole number.
///
/// Over an interval of S: on each [j, j + 1], f is a quadratic in S with leading coefficient
/// 1 − 1/n > 0, so its maximum is at an end of the piece; f(j) = j(n − j)/n is concave in j.
/// The maximum over [S₁, S₂] is therefore at S₁, at S₂, or at the whole number in [S₁, S₂]
/// nearest n/2.
pub(crate) fn max_sample_sd(n: u64, mean_low: f64, mean_high: f64, range: (f64, f64)) -> f64 {
    let (low, high) = range;
    let w = high - low;
    if n < 2 || w.is_nan() || w <= 0.0 {
        return 0.0;
    }
    let nf = n as f64;
    let total = |m: f64| (nf * ((m - low) / w)).clamp(0.0, nf);
    let f = |s: f64| {
        let r = s - s.floor();
        (s * (1.0 - s / nf) - r * (1.0 - r)).max(0.0)
    };
    let (s1, s2) = (total(mean_low), total(mean_high));
    let (s1, s2) = if s1 <= s2 { (s1, s2) } else { (s2, s1) };
    let mut best = f(s1).max(f(s2));
    let (first, last) = (s1.ceil(), s2.floor());
    if first <= last {
        let j = (nf / 2.0).floor().clamp(first, last);
        for j in [j, (j + 1.0).min(last)] {
            best = best.max(j * (1.0 - j / nf));
        }
    }
    w * (best / (nf - 1.0)).sqrt()
}

/// `x` with `digits` significant digits, for messages.
fn significant(x: f64, digits: usize) -> String {
    if x == 0.0 || !x.is_finite() {
        return format!("{x}");
    }
    let magnitude = x.abs().log10().floor() as i64;
    let decimals = (digits as i64 - 1 - magnitude).clamp(0, 20) as usize;
    let text = format!("{x:.decimals$}");
    if text.contains('.') {
        text.trim_end_matches('0').trim_end_matches('.').to_owned()
    } else {
        text
    }
}

fn data(cx: &Ctx, raw: RawData, outcome: &Outcome) -> Result<Data, RawError> {
    // Each form given, placed at its first key as written.
    let mut forms: Vec<(Mark, &str, String)> = Vec::new();
    for form in [Form::Counts, Form::Summary] {
        if let Some(path) = first_key(cx, "data", form) {
            forms.push((cx.key_at(&path), form.words(), path));
        }
    }
    for (path, name) in [("data.arms", "`arms`"), ("data.file", "`file`")] {
        if cx.given(path) {
            forms.push((cx.key_at(path), name, path.to_owned()));
        }
    }
    forms.sort();
    match forms.as_slice() {
        [] => {
            let example = match outcome.kind {
                OutcomeKind::Binary => "for example `trials: 4600` and `events: 12`",
                OutcomeKind::Bounded => {
                    "for example `file: values.csv`, or the summary `n: 400`, `mean: 1.12` and `sd: 0.21`"
                }
            };
            return Err(cx
                .err(
                    "data",
                    "`data` must give exactly one of: `trials` and `events`, `arms`, `file`, or a summary `n`, `mean` and `sd`",
                )
                .hint(example));
        }
        [_] => {}
        [(_, first, _), (_, second, path), ..] => {
            let counts_and_summary = [first, second]
                .iter()
                .all(|w| **w == Form::Counts.words() || **w == Form::Summary.words());
            return Err(cx
                .key_err(
                    path,
                    format!(
                        "`data` gives both {first} and {second}; it must give exactly one form"
                    ),
                )
                .hint(if counts_and_summary {
                    COUNTS_OR_SUMMARY
                } else {
                    "keep the form that holds the data of this study and remove the other"
                }));
        }
    }
    let source = if first_key(cx, "data", Form::Counts).is_some() {
        const WHY: &str = "inline counts need both `trials` and `events`";
        let trials = required(cx, "data", "trials", raw.trials, "a whole number", WHY)?;
        let events = required(cx, "data", "events", raw.events, "a whole number", WHY)?;
        counts(cx, "data", trials, events)?;
        DataSource::Counts { trials, events }
    } else if first_key(cx, "data", Form::Summary).is_some() {
        summary_needs_bounded(cx, "data", outcome)?;
        let range = outcome.range.unwrap_or((0.0, 1.0));
        DataSource::Summary(summary(cx, "data", raw.n, raw.mean, raw.sd, range)?)
    } else if cx.given("data.arms") {
        arms(cx, raw.arms.unwrap_or_default(), outcome)?
    } else {
        let file = match raw.file {
            Some(f) => cx.required_text("data.file", f)?,
            None => {
                return Err(cx.err(
                    "data.file",
                    "expected the path of a data file, found nothing",
                ));
            }
        };
        DataSource::File(PathBuf::from(file))
    };
    if !matches!(source, DataSource::File(_)) {
        for key in ["column", "arm_column", "cluster_column", "order_column"] {
            let path = join_key("data", key);
            if cx.given(&path) {
                return Err(cx
                    .key_err(
                        &path,
                        format!("`{key}` applies only to data read from a `file`"),
                    )
                    .hint("inline counts and summaries need no columns; remove it"));
            }
        }
    }
    let column = |key: &str, value: Option<String>| {
        value
            .map(|v| cx.required_text(&join_key("data", key), v))
            .transpose()
    };
    Ok(Data {
        column: column("column", raw.column)?,
        arm_column: column("arm_column", raw.arm_column)?,
        cluster_column: column("cluster_column", raw.cluster_column)?,
        order_column: column("order_column", raw.order_column)?,
        source,
    })
}

/// `data.arms`: every arm written in one form, counts or summary.
fn arms(cx: &Ctx, arms: Vec<RawArm>, outcome: &Outcome) -> Result<DataSource, RawError> {
    let example = match outcome.kind {
        OutcomeKind::Binary => "for example arms: [{name: A, trials: 100, events: 1}]",
        OutcomeKind::Bounded => "for example arms: [{name: A, n: 40, mean: 1.2, sd: 0.3}]",
    };
    if arms.is_empty() {
        return Err(cx
            .err("data.arms", "`arms` must list at least one arm")
            .hint(example));
    }
    let mut seen: BTreeMap<String, usize> = BTreeMap::new();
    let mut counted = Vec::new();
    let mut summarised = Vec::new();
    let mut first_form = None;
    for (i, arm) in arms.into_iter().enumerate() {
        let base = join_index("data.arms", i);
        let name_path = join_key(&base, "name");
        let name = cx.required_text(&name_path, arm.name)?;
        if let Some(first) = seen.get(&name) {
            return Err(cx
                .err(
                    &name_path,
                    format!(
                        "arm name `{}` is already used by data.arms[{first}]",
                        shorten(&name)
                    ),
                )
                .hint("each arm needs its own name"));
        }
        seen.insert(name.clone(), i);
        let counts_at = first_key(cx, &base, Form::Counts);
        let summary_at = first_key(cx, &base, Form::Summary);
        let form = match (&counts_at, &summary_at) {
            (Some(c), Some(s)) => {
                let later = if cx.key_at(c) > cx.key_at(s) { c } else { s };
                return Err(cx
                    .key_err(later, "this arm gives both counts (`trials`, `events`) and a summary (`n`, `mean`, `sd`); an arm gives one of them")
                    .hint(COUNTS_OR_SUMMARY));
            }
            (None, Some(_)) => Form::Summary,
            (Some(_), None) => Form::Counts,
            (None, None) => {
                return Err(match outcome.kind {
                    OutcomeKind::Binary => cx
                        .missing(&base, "trials", "each arm gives `trials` and `events`")
                        .hint("each arm is written {name: A, trials: 100, events: 1}"),
                    OutcomeKind::Bounded => cx
                        .missing(
                            &base,
                            "n",
                            "each arm gives `n`, `mean` and `sd` (or `trials` and `events`)",
                        )
                        .hint("each arm is written {name: A, n: 40, mean: 1.2, sd: 0.3}"),
                });
            }
        };
        if form == Form::Summary {
            summary_needs_bounded(cx, &base, outcome)?;
        }
        match first_form {
            None => first_form = Some(form),
            Some(f) if f != form => {
                let at = counts_at.or(summary_at).unwrap_or_else(|| base.clone());
                return Err(cx
                    .key_err(&at, format!("data.arms[0] gives {} but this arm gives {}; all arms are given the same way", f.words(), form.words()))
                    .hint(COUNTS_OR_SUMMARY));
            }
            Some(_) => {}
        }
        match form {
            Form::Counts => {
                const WHY: &str = "inline counts need both `trials` and `events`";
                let hint = "each arm is written {name: A, trials: 100, events: 1}";
                let trials = required(cx, &base, "trials", arm.trials, "a whole number", WHY)
                    .map_err(|e| e.hint(hint))?;
                let events = required(cx, &base, "events", arm.events, "a whole number", WHY)
                    .map_err(|e| e.hint(hint))?;
                counts(cx, &base, trials, events)?;
                counted.push(ArmCounts {
                    name,
                    trials,
                    events,
                });
            }
            Form::Summary => {
                let range = outcome.range.unwrap_or((0.0, 1.0));
                let summary = summary(cx, &base, arm.n, arm.mean, arm.sd, range)?;
                summarised.push(ArmSummary { name, summary });
            }
        }
    }
    Ok(match first_form {
        Some(Form::Summary) => DataSource::ArmSummaries(summarised),
        _ => DataSource::Arms(counted),
    })
}

fn model_name(model: DependenceModel) -> &'static str {
    match model {
        DependenceModel::Independent => "independent",
        DependenceModel::Clustered => "clustered",
        DependenceModel::Martingale => "martingale",
        DependenceModel::MDependent => "m-dependent",
    }
}

fn dependence(cx: &Ctx, raw: Option<RawDependence>, data: &Data) -> Result<Dependence, RawError> {
    let (model, m, rationale) = match raw {
        Some(d) => (
            d.model.unwrap_or(DependenceModel::Independent),
            d.m,
            Ctx::optional_text(d.rationale),
        ),
        None => (DependenceModel::Independent, None, None),
    };
    match (model, m) {
        (DependenceModel::MDependent, None) => {
            return Err(cx
                .missing("dependence", "m", "an m-dependent model needs `m`, how many neighbouring trials each trial may depend on")
                .hint("for example m: 2"));
        }
        (DependenceModel::MDependent, Some(0)) => {
            return Err(cx
                .err("dependence.m", "m must be at least 1")
                .hint("m = 0 means independent trials: write model: independent"));
        }
        (DependenceModel::MDependent, Some(_)) | (_, None) => {}
        (other, Some(_)) => {
            return Err(cx
                .key_err(
                    "dependence.m",
                    format!(
                        "`m` applies only to model: m-dependent, and the model is {}",
                        model_name(other)
                    ),
                )
                .hint("remove m, or set model: m-dependent"));
        }
    }
    if model == DependenceModel::Clustered {
        if !matches!(data.source, DataSource::File(_)) {
            return Err(cx
                .err("dependence.model", "clustered dependence needs one row per trial with its cluster, which inline counts do not have")
                .hint("give the data as `data.file` with `data.cluster_column`"));
        }
        if data.cluster_column.is_none() {
            return Err(cx.missing(
                "data",
                "cluster_column",
                "dependence.model is clustered, so each row must name its cluster",
            ));
        }
    } else if data.cluster_column.is_some() {
        return Err(cx
            .key_err(
                "data.cluster_column",
                format!(
                    "`cluster_column` is given but dependence.model is {}",
                    model_name(model)
                ),
            )
            .hint("set dependence.model: clustered, or remove cluster_column"));
    }
    Ok(Dependence {
        model,
        m,
        rationale,
    })
}

/// Σ with Neumaier compensation (DESIGN.md §11: sums of reals are compensated).
fn compensated_sum(values: &[f64]) -> f64 {
    let (mut sum, mut c) = (0.0f64, 0.0f64);
    for &v in values {
        let t = sum + v;
        c += if sum.abs() >= v.abs() {
            (sum - t) + v
        } else {
            (v - t) + sum
        };
        sum = t;
    }
    sum + c
}

fn looks(cx: &Ctx, raw: Option<RawLooks>) -> Result<Looks, RawError> {
    let Some(raw) = raw else {
        return Ok(Looks {
            mode: LookMode::Planned,
            planned: 1,
            spending: Spending::Equal,
            ledger: None,
        });
    };
    let mode = raw.mode.unwrap_or(LookMode::Planned);
    let ledger = cx.path("looks.ledger", raw.ledger)?;
    if mode == LookMode::Anytime {
        for key in ["planned", "spending"] {
            let path = join_key("looks", key);
            if cx.given(&path) {
                return Err(cx
                    .key_err(&path, format!("`{key}` applies only to mode: planned; anytime methods need no look spending"))
                    .hint("remove it, or set mode: planned"));
            }
        }
        return Ok(Looks {
            mode,
            planned: 1,
            spending: Spending::Equal,
            ledger,
        });
    }
    let planned = raw.planned.unwrap_or(1);
    if planned == 0 {
        return Err(cx.err("looks.planned", "at least 1 look must be planned"));
    }
    let spending = match raw.spending {
        None | Some(RawSpending::Equal) => Spending::Equal,
        Some(RawSpending::Weights(w)) => {
            if w.len() != planned as usize {
                let why = if cx.given("looks.planned") {
                    String::new()
                } else {
                    " (the default)".to_owned()
                };
                return Err(cx
                    .err("looks.spending", format!("{} weight(s) given for {planned} planned look(s){why}; give one weight per planned look", w.len()))
                    .hint(format!("set looks.planned: {}, or give {planned} weight(s)", w.len().max(1))));
            }
            for (i, &v) in w.iter().enumerate() {
                if v <= 0.0 {
                    return Err(cx.err(
                        &join_index("looks.spending", i),
                        format!("a spending weight must be positive, found {v}"),
                    ));
                }
            }
            let total = compensated_sum(&w);
            if !total.is_finite() {
                return Err(cx.err(
                    "looks.spending",
                    "the spending weights are too large to add up",
                ));
            }
            Spending::Weights(w.iter().map(|v| v / total).collect())
        }
    };
    Ok(Looks {
        mode,
        planned,
        spending,
        ledger,
    })
}

fn method(cx: &Ctx, raw: Option<RawMethod>) -> Result<MethodChoice, RawError> {
    let Some(raw) = raw else {
        return Ok(MethodChoice {
            primary: "auto".to_owned(),
            compare: Vec::new(),
        });
    };
    let primary = match raw.primary {
        Some(p) => cx.required_text("method.primary", p)?,
        None => "auto".to_owned(),
    };
    let mut compare = Vec::new();
    for (i, id) in raw.compare.unwrap_or_default().into_iter().enumerate() {
        let path = join_index("method.compare", i);
        let id = cx.required_text(&path, id)?;
        if let Some(j) = compare.iter().position(|c| c == &id) {
            return Err(cx.err(
                &path,
                format!(
                    "method `{}` is already listed at method.compare[{j}]",
                    shorten(&id)
                ),
            ));
        }
        compare.push(id);
    }
    Ok(MethodChoice { primary, compare })
}

fn open_unit(
    cx: &Ctx,
    path: &str,
    value: Option<f64>,
    what: &str,
) -> Result<Option<f64>, RawError> {
    match value {
        Some(v) if v <= 0.0 || v >= 1.0 => {
            let e = cx.err(
                path,
                format!("{what} must lie strictly between 0 and 1, found {v}"),
            );
            Err(if v > 1.0 && v < 100.0 {
                e.hint(format!(
                    "a probability is a fraction: did you mean {}?",
                    v / 100.0
                ))
            } else {
                e
            })
        }
        other => Ok(other),
    }
}

fn plan(cx: &Ctx, raw: RawPlan, outcome: &Outcome) -> Result<Plan, RawError> {
    let assumed_rate = match outcome.range {
        None => open_unit(
            cx,
            "plan.assumed_rate",
            raw.assumed_rate,
            "the assumed rate",
        )?,
        Some((low, high)) => match raw.assumed_rate {
            Some(v) if v < low || v > high => {
                return Err(cx.err("plan.assumed_rate", format!("the assumed mean must lie inside the outcome range [{low}, {high}], found {v}")));
            }
            other => other,
        },
    };
    let assumed_sd = match (outcome.range, raw.assumed_sd) {
        (_, None) => None,
        (None, Some(_)) => {
            return Err(cx
                .key_err("plan.assumed_sd", "`assumed_sd` applies only to bounded outcomes; a binary outcome's spread follows from its rate")
                .hint("remove it"));
        }
        (Some((low, high)), Some(sd)) => {
            // No distribution on [a, b] has a standard deviation above (b − a) / 2.
            let most = (high - low) / 2.0;
            if sd <= 0.0 || sd > most {
                return Err(cx.err("plan.assumed_sd", format!("the assumed standard deviation must be above 0 and at most {most} (half the range), found {sd}")));
            }
            Some(sd)
        }
    };
    let pass_probability = open_unit(
        cx,
        "plan.pass_probability",
        raw.pass_probability,
        "the pass probability",
    )?;
    let allowed_events = raw.allowed_events.unwrap_or_default();
    if outcome.kind == OutcomeKind::Bounded && cx.given("plan.allowed_events") {
        return Err(cx
            .key_err(
                "plan.allowed_events",
                "`allowed_events` applies only to binary outcomes",
            )
            .hint("remove it"));
    }
    for (i, k) in allowed_events.iter().enumerate() {
        if let Some(j) = allowed_events[..i].iter().position(|x| x == k) {
            return Err(cx.err(
                &join_index("plan.allowed_events", i),
                format!("{k} is already listed at plan.allowed_events[{j}]"),
            ));
        }
    }
    Ok(Plan {
        assumed_rate,
        assumed_sd,
        pass_probability,
        allowed_events,
        registered: Ctx::optional_text(raw.registered),
    })
}

fn attestations(
    cx: &Ctx,
    raw: Option<BTreeMap<String, RawAttestation>>,
) -> Result<BTreeMap<String, Attestation>, RawError> {
    let mut out = BTreeMap::new();
    for (id, a) in raw.unwrap_or_default() {
        let base = join_key("attestations", &id);
        let by = cx.required_text(&join_key(&base, "by"), a.by.0)?;
        let date = cx.date(&join_key(&base, "date"), a.date)?;
        out.insert(
            id,
            Attestation {
                by,
                date,
                note: Ctx::optional_text(a.note),
            },
        );
    }
    Ok(out)
}

fn signatures(cx: &Ctx, raw: Option<Vec<RawSignature>>) -> Result<Vec<Signature>, RawError> {
    let mut out = Vec::new();
    for (i, s) in raw.unwrap_or_default().into_iter().enumerate() {
        let base = join_index("signatures", i);
        out.push(Signature {
            role: cx.required_text(&join_key(&base, "role"), s.role.0)?,
            name: Ctx::optional_text(s.name),
            meaning: cx.required_text(&join_key(&base, "meaning"), s.meaning.0)?,
        });
    }
    Ok(out)
}

fn report(cx: &Ctx, raw: Option<RawReport>) -> Result<ReportOptions, RawError> {
    let Some(raw) = raw else {
        return Ok(ReportOptions {
            template: None,
            embed_data: EmbedData::Auto,
        });
    };
    let template = match raw.template {
        Some(t) => Some(cx.required_text("report.template", t)?).filter(|t| t != "default"),
        None => None,
    };
    const PATH: &str = "report.embed_data";
    let embed_data = match raw.embed_data {
        None => EmbedData::Auto,
        Some(Scalar(text)) => {
            let plain = cx.style(PATH) == Style::Plain;
            match (text.as_str(), yaml12_bool(&text)) {
                ("auto", _) => EmbedData::Auto,
                (_, Some(b)) if plain => {
                    if b {
                        EmbedData::Always
                    } else {
                        EmbedData::Never
                    }
                }
                (t, _) if plain && number::is_yaml11_bool(t) => {
                    return Err(cx
                        .err(PATH, format!("`{t}` is a boolean only in YAML 1.1; a study spec is read as YAML 1.2, where it is text"))
                        .hint("write true or false"));
                }
                (t, _) => {
                    let e = cx.err(
                        PATH,
                        format!("expected auto, true or false, found `{}`", shorten(t)),
                    );
                    return Err(if yaml12_bool(t).is_some() {
                        e.hint("write true or false without quotes")
                    } else {
                        e
                    });
                }
            }
        }
    };
    Ok(ReportOptions {
        template,
        embed_data,
    })
}

#[cfg(test)]
mod tests {
    use super::max_sample_sd;

    fn at(n: u64, mean: f64, range: (f64, f64)) -> f64 {
        max_sample_sd(n, mean, mean, range)
    }

    #[test]
    fn closed_forms() {
        // Two values at the ends of [0, 1]: s² = 2·(½)² / 1 (arithmetic).
        assert!((at(2, 0.5, (0.0, 1.0)) - 0.5f64.sqrt()).abs() < 1e-15);
        // k ones among n 0/1 values: s² = k(n − k) / (n(n − 1)) (textbook identity for binary
        // data, common practice); n = 10, k = 3 gives 21/90.
        assert!((at(10, 0.3, (0.0, 1.0)) - (21.0f64 / 90.0).sqrt()).abs() < 1e-15);
        // {6, 2, 2, 2} in [2, 6]: mean 3, squared deviations 9 + 1 + 1 + 1 = 12, s² = 4
        // (hand arithmetic).
        assert!((at(4, 3.0, (2.0, 6.0)) - 2.0).abs() < 1e-14);
        // n = 3, mean ½ in [0, 1]: the extreme set is {0, ½, 1}, s² = (¼ + 0 + ¼)/2 = ¼ (hand
        // arithmetic), below n·p(1 − p)/(n − 1) = 0.375, the bound without the middle value.
        assert!((at(3, 0.5, (0.0, 1.0)) - 0.5).abs() < 1e-15);
        // A mean at an end of the range leaves no spread (all values equal that end).
        assert_eq!(at(50, 0.0, (0.0, 1.0)), 0.0);
        assert_eq!(at(50, 2.5, (0.0, 2.5)), 0.0);
    }

    /// Brute force: every n-tuple on a grid of step 1/g in [0, 1]. The extreme configuration
    /// (ones, one remainder, zeros) lies on the grid whenever the sum does, so the largest
    /// grid variance for each sum is the true maximum there.
    #[test]
    fn matches_brute_force_on_a_grid() {
        for (n, g) in [(2usize, 40u32), (3, 20), (4, 10), (5, 6)] {
            let points = g as usize + 1;
            let mut best = vec![0.0f64; n * g as usize + 1];
            let mut idx = vec![0usize; n];
            loop {
                let xs: Vec<f64> = idx.iter().map(|&i| i as f64 / f64::from(g)).collect();
                let sum: usize = idx.iter().sum();
                let mean = xs.iter().sum::<f64>() / n as f64;
                let ss: f64 = xs.iter().map(|x| (x - mean) * (x - mean)).sum();
                let s = (ss / (n as f64 - 1.0)).sqrt();
                best[sum] = best[sum].max(s);
                let mut k = 0;
                while k < n {
                    idx[k] += 1;
                    if idx[k] < points {
                        break;
                    }
                    idx[k] = 0;
                    k += 1;
                }
                if k == n {
                    break;
                }
            }
            for (sum, &b) in best.iter().enumerate() {
                let mean = sum as f64 / (n as f64 * f64::from(g));
                let formula = at(n as u64, mean, (0.0, 1.0));
                assert!(
                    (formula - b).abs() < 1e-12,
                    "n={n} mean={mean}: {formula} vs {b}"
                );
            }
        }
    }

    /// Over an interval of means the bound is the largest of the pointwise bounds.
    #[test]
    fn interval_is_the_pointwise_maximum() {
        for (n, lo, hi) in [
            (7u64, 0.31, 0.39),
            (7, 0.40, 0.62),
            (1000, 0.0, 0.0013),
            (2, 0.1, 0.9),
        ] {
            let over = max_sample_sd(n, lo, hi, (0.0, 1.0));
            let mut sampled = 0.0f64;
            for i in 0..=20_000 {
                let m = lo + (hi - lo) * f64::from(i) / 20_000.0;
                sampled = sampled.max(at(n, m, (0.0, 1.0)));
            }
            assert!(over >= sampled - 1e-15, "n={n}: {over} < {sampled}");
            // f has a kink of slope about −1 (in S) at each whole S, which a grid of means
            // misses by up to a step: hence the loose upper tolerance.
            assert!(
                over <= sampled * (1.0 + 1e-4),
                "n={n}: {over} far above {sampled}"
            );
        }
    }
}
