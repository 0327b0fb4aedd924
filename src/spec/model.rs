//! The study spec, format 1, as typed values (DESIGN.md §5). A `Spec` only exists once every
//! rule of the format has been checked, so later stages can rely on the invariants stated here.

use std::collections::BTreeMap;
use std::path::PathBuf;

use serde::{Deserialize, Serialize};

pub use super::date::{Date, DateError};
use super::error::{Location, Mark, SpecError};

/// A checked study spec.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Spec {
    /// Format version, the key `surety`; always 1.
    pub format: u32,
    /// `study:` — what the document is about.
    pub study: Study,
    /// `claim:` — what is guaranteed.
    pub claim: Claim,
    /// `outcome:` — what one trial yields.
    pub outcome: Outcome,
    /// `data:` — where the outcomes come from.
    pub data: Data,
    /// Default: independent trials.
    pub dependence: Dependence,
    /// Default: one planned look, equal spending, default ledger.
    pub looks: Looks,
    /// Default: primary `auto`, no comparison methods.
    pub method: MethodChoice,
    /// `plan:` — sample-size planning inputs; `None` when the section is absent.
    pub plan: Option<Plan>,
    /// Assumption id → who confirms it; ids are checked against the catalogue later.
    pub attestations: BTreeMap<String, Attestation>,
    /// Signature blocks, in the order written.
    pub signatures: Vec<Signature>,
    /// `report:` — how the PDF is made.
    pub report: ReportOptions,
    #[serde(skip)]
    pub(crate) source: String,
    #[serde(skip)]
    pub(crate) places: BTreeMap<String, Place>,
}

/// Where one key and its value were written (1-based line, column).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) struct Place {
    pub key: Option<Mark>,
    pub value: Mark,
}

impl Spec {
    /// The source name the spec was read from (the path given to `load`, or the name given to
    /// `parse`).
    pub fn source_name(&self) -> &str {
        &self.source
    }

    /// Where the value at a dotted key path was written: `claim.confidence`,
    /// `data.arms[1].events`, `attestations.identical-conditions.by`; `""` is the whole
    /// document. `None` for a path that was not in the file (a default).
    pub fn locate(&self, key_path: &str) -> Option<Location> {
        self.places.get(key_path).map(|p| p.value.at(&self.source))
    }

    /// Where the key of a dotted key path was written (for list elements, where the element
    /// starts). `None` for a path that was not in the file.
    pub fn locate_key(&self, key_path: &str) -> Option<Location> {
        self.places
            .get(key_path)
            .map(|p| p.key.unwrap_or(p.value).at(&self.source))
    }

    /// An error about the value at `key_path`, placed where it was written. For a path that was
    /// not in the file (a default), the error is placed at the nearest enclosing key that was,
    /// so every error from a loaded spec has a location.
    pub fn error_at(
        &self,
        key_path: &str,
        message: impl Into<String>,
        hint: Option<String>,
    ) -> SpecError {
        let mut path = key_path;
        let location = loop {
            if let Some(l) = self.locate(path) {
                break Some(l);
            }
            match path.rfind(['.', '[']) {
                Some(i) => path = &path[..i],
                None if !path.is_empty() => path = "",
                None => break None,
            }
        };
        SpecError {
            location,
            key: Some(key_path.to_owned()),
            message: message.into(),
            hint,
        }
    }

    /// Every dotted key path that was read from the file, in sorted order.
    pub fn key_paths(&self) -> impl Iterator<Item = &str> {
        self.places
            .keys()
            .map(String::as_str)
            .filter(|k| !k.is_empty())
    }
}

/// `study:` — what the document is about.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Study {
    /// Document id, printed on every page; non-empty text.
    pub id: String,
    /// Non-empty.
    pub title: String,
    /// Team or person responsible.
    pub owner: Option<String>,
    /// The requirement the claim demonstrates, as the author writes it.
    pub requirement: Option<String>,
    /// Date of the study; when absent, later stages use SOURCE_DATE_EPOCH or today.
    pub date: Option<Date>,
    /// Free text, printed in the report.
    pub description: Option<String>,
}

/// `claim:` — what is to be guaranteed.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Claim {
    /// What the rate or mean is of, in words.
    pub quantity: String,
    /// Which side of the true value is bounded.
    pub side: Side,
    /// Finite; inside (0, 1) for a binary outcome, strictly inside `outcome.range` for a
    /// bounded one.
    pub limit: f64,
    /// The confidence 1 − δ as a fraction in [0.5, 1), for display and JSON.
    pub confidence: f64,
    /// δ = 1 − confidence, computed exactly from the decimal digits as written and rounded once
    /// to f64; in (0, 0.5]. This, not `confidence`, is what every calculation uses.
    pub delta: f64,
    /// The confidence exactly as written in the spec (`0.95`, `95%`), for printing.
    pub confidence_text: String,
    /// The confidence in percent, from its decimal digits without float arithmetic (`99.9`).
    pub confidence_percent: String,
    /// Default `each`.
    pub scope: Scope,
}

/// Which side of the true value the claim bounds.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Side {
    /// "The true rate is at most the limit."
    Upper,
    /// "The true rate is at least the limit."
    Lower,
    /// Both bounds.
    TwoSided,
}

/// How a claim about several arms is read.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Scope {
    /// Each arm separately.
    Each,
    /// All arms simultaneously.
    All,
    /// Select the best arm, then certify it.
    Best,
}

/// `outcome:` — what one trial yields.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Outcome {
    /// Key `type`.
    pub kind: OutcomeKind,
    /// Binary only: what a 1 means.
    pub event: Option<String>,
    /// Bounded only, and then always present: the declared range [a, b], finite, a < b.
    pub range: Option<(f64, f64)>,
    /// Bounded only: unit of the values.
    pub unit: Option<String>,
}

/// The kind of outcome a trial yields.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum OutcomeKind {
    /// 0 or 1.
    Binary,
    /// A value in a declared range.
    Bounded,
}

/// `data:` — where the outcomes come from.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Data {
    /// Which of the forms was given.
    pub source: DataSource,
    /// Column holding the outcome (file only).
    pub column: Option<String>,
    /// Column naming the arm of each row (file only).
    pub arm_column: Option<String>,
    /// Column naming the cluster of each row (file only; required iff dependence is clustered).
    pub cluster_column: Option<String>,
    /// Column giving the order of trials (file only).
    pub order_column: Option<String>,
}

/// Exactly one of the forms of `data`.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum DataSource {
    /// Inline counts of one arm: trials ≥ 1, events ≤ trials.
    Counts {
        /// ≥ 1.
        trials: u64,
        /// ≤ trials.
        events: u64,
    },
    /// Inline counts per arm: at least one arm, names unique and non-empty.
    Arms(Vec<ArmCounts>),
    /// A data file, relative to the spec file, as written.
    File(PathBuf),
    /// A summary of the bounded values of one arm (bounded outcomes only).
    Summary(SummaryStats),
    /// A summary per arm (bounded outcomes only): at least one arm, names unique and non-empty.
    ArmSummaries(Vec<ArmSummary>),
}

/// Inline counts of one arm.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct ArmCounts {
    /// Non-empty, unique among arms.
    pub name: String,
    /// ≥ 1.
    pub trials: u64,
    /// ≤ trials.
    pub events: u64,
}

/// n, mean and sample standard deviation of bounded values, in data units, as the spec gives
/// them. Checked to be possible for n values inside `outcome.range`, up to the rounding of the
/// digits written.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SummaryStats {
    /// Number of values, ≥ 2.
    pub n: u64,
    /// Their mean, inside `outcome.range`.
    pub mean: f64,
    /// Their sample standard deviation (n − 1 in the denominator), finite and ≥ 0.
    pub sd: f64,
}

/// A summary of one arm's bounded values.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ArmSummary {
    /// Non-empty, unique among arms.
    pub name: String,
    /// n, mean and sd of this arm.
    #[serde(flatten)]
    pub summary: SummaryStats,
}

/// `dependence:` — how trials may depend on each other.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Dependence {
    /// Default `independent`.
    pub model: DependenceModel,
    /// Present, and ≥ 1, iff the model is m-dependent.
    pub m: Option<u64>,
    /// Printed in the assumption checklist.
    pub rationale: Option<String>,
}

/// The dependence model between trials.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum DependenceModel {
    /// Trials are independent.
    Independent,
    /// Trials fall into clusters (`data.cluster_column`) that may be dependent.
    Clustered,
    /// Outcomes may depend on earlier ones in run order, as martingale methods allow.
    Martingale,
    /// Each trial may depend on its `m` neighbours (`m-dependent`).
    MDependent,
}

/// `looks:` — how often the data are analysed over the study's life.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Looks {
    /// Default `planned`.
    pub mode: LookMode,
    /// Number of planned looks, ≥ 1 (1 in anytime mode).
    pub planned: u32,
    /// Default `equal`.
    pub spending: Spending,
    /// Ledger file relative to the spec, as written; `None`: `<spec stem>.ledger.jsonl`.
    pub ledger: Option<PathBuf>,
}

/// When looks are allowed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum LookMode {
    /// Fixed-n methods share δ over `planned` looks.
    Planned,
    /// Anytime-valid methods; no spending.
    Anytime,
}

/// How δ is shared over planned looks.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Spending {
    /// Each of the planned looks gets δ / planned.
    Equal,
    /// One weight per planned look, each positive and finite, normalised to sum to 1.
    Weights(Vec<f64>),
}

impl Looks {
    /// The share of δ that look `look` (1-based) may spend; the shares of looks 1..=planned sum
    /// to 1 (up to rounding). `None` for a look beyond the plan, or for anytime mode, where
    /// nothing is spent.
    pub fn share(&self, look: u32) -> Option<f64> {
        if self.mode == LookMode::Anytime || look == 0 || look > self.planned {
            return None;
        }
        match &self.spending {
            Spending::Equal => Some(1.0 / f64::from(self.planned)),
            Spending::Weights(w) => w.get(look as usize - 1).copied(),
        }
    }
}

/// `method:` — which bound is the guarantee, and which are shown beside it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MethodChoice {
    /// `auto` or a method id; ids are checked against the catalogue later.
    pub primary: String,
    /// Methods shown beside the primary, for information only; in the order written.
    pub compare: Vec<String>,
}

/// `plan:` — inputs of sample-size planning.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Plan {
    /// Binary: the rate believed true, in (0, 1). Bounded: the assumed mean, inside the range.
    pub assumed_rate: Option<f64>,
    /// Bounded only: assumed standard deviation, > 0 and at most half the range's width.
    pub assumed_sd: Option<f64>,
    /// Wanted chance of passing at the assumed value, in (0, 1).
    pub pass_probability: Option<f64>,
    /// Binary only: numbers of events a demonstration plan may allow; distinct.
    pub allowed_events: Vec<u64>,
    /// Reference to where the plan was registered before testing, as written.
    pub registered: Option<String>,
}

/// Who confirms one assumption.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Attestation {
    /// Non-empty.
    pub by: String,
    /// When it was confirmed.
    pub date: Option<Date>,
    /// Free text.
    pub note: Option<String>,
}

/// A signature block printed in the report (name, date/time and meaning, as 21 CFR 11.50
/// describes; the signing itself happens outside the tool).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Signature {
    /// Non-empty, e.g. Author, Reviewer, Approver.
    pub role: String,
    /// Printed name; may be left blank for signing on paper.
    pub name: Option<String>,
    /// Non-empty, e.g. authored, reviewed, approved.
    pub meaning: String,
}

/// `report:` — how the PDF is made.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ReportOptions {
    /// Path of a `.typ.j2` template, relative to the spec; `None`: the built-in template
    /// (written `default` or left out).
    pub template: Option<String>,
    /// Default `auto`.
    pub embed_data: EmbedData,
}

/// Whether data files are embedded in the PDF; written `auto`, `true` or `false`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum EmbedData {
    /// When they are small.
    Auto,
    /// `true`.
    Always,
    /// `false`.
    Never,
}

impl Serialize for EmbedData {
    /// As written in the spec: `"auto"`, `true` or `false`.
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        match self {
            EmbedData::Auto => serializer.serialize_str("auto"),
            EmbedData::Always => serializer.serialize_bool(true),
            EmbedData::Never => serializer.serialize_bool(false),
        }
    }
}
