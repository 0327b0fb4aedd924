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
    let data = data(&cx, raw.data)?;
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

fn data(cx: &Ctx, raw: RawData) -> Result<Data, RawError> {
    let counts_given = cx.given("data.trials") || cx.given("data.events");
    // Each form given, placed at its first key as written.
    let mut forms: Vec<(Mark, &str, &str)> = Vec::new();
    if counts_given {
        let first = ["data.trials", "data.events"]
            .into_iter()
            .filter(|p| cx.given(p))
            .min_by_key(|p| cx.key_at(p));
        let path = first.unwrap_or("data.trials");
        forms.push((
            cx.key_at(path),
            "inline counts (`trials` and `events`)",
            path,
        ));
    }
    for (path, name) in [("data.arms", "`arms`"), ("data.file", "`file`")] {
        if cx.given(path) {
            forms.push((cx.key_at(path), name, path));
        }
    }
    forms.sort();
    match forms.as_slice() {
        [] => {
            return Err(cx
                .err(
                    "data",
                    "`data` must give exactly one of: `trials` and `events`, `arms`, or `file`",
                )
                .hint("for example `trials: 4600` and `events: 12`"));
        }
        [_] => {}
        [(_, first, _), (_, second, path), ..] => {
            return Err(cx
                .key_err(
                    path,
                    format!(
                        "`data` gives both {first} and {second}; it must give exactly one form"
                    ),
                )
                .hint("keep the form that holds the data of this study and remove the other"));
        }
    }
    let source = if counts_given {
        let trials = match raw.trials {
            Some(t) => t,
            None if cx.given("data.trials") => {
                return Err(cx.err("data.trials", "expected a whole number, found nothing"));
            }
            None => {
                return Err(cx.missing(
                    "data",
                    "trials",
                    "inline counts need both `trials` and `events`",
                ));
            }
        };
        let events = match raw.events {
            Some(e) => e,
            None if cx.given("data.events") => {
                return Err(cx.err("data.events", "expected a whole number, found nothing"));
            }
            None => {
                return Err(cx.missing(
                    "data",
                    "events",
                    "inline counts need both `trials` and `events`",
                ));
            }
        };
        counts(cx, "data", trials, events)?;
        DataSource::Counts { trials, events }
    } else if cx.given("data.arms") {
        let arms = raw.arms.unwrap_or_default();
        if arms.is_empty() {
            return Err(cx
                .err("data.arms", "`arms` must list at least one arm")
                .hint("for example arms: [{name: A, trials: 100, events: 1}]"));
        }
        let mut seen: BTreeMap<String, usize> = BTreeMap::new();
        let mut out = Vec::with_capacity(arms.len());
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
            counts(cx, &base, arm.trials, arm.events)?;
            out.push(ArmCounts {
                name,
                trials: arm.trials,
                events: arm.events,
            });
        }
        DataSource::Arms(out)
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
                    .hint("inline counts need no columns; remove it"));
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
