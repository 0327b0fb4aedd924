//! The results model, format 1: the single value that results.json, the PDF report and the
//! terminal summary are all rendered from, so that they can never disagree.
//!
//! Field names are a contract (DESIGN.md §6). Numbers are full-precision f64; every rounded
//! figure a person reads comes from the `display` strings, which round outwards (an upper bound
//! up, a lower bound down) so that printing can only make a statement more conservative.

use serde::{Deserialize, Serialize};

/// Identifier of this results format, written as `format` in results.json.
pub const RESULTS_FORMAT: &str = "surety-results/1";

/// The complete outcome of one look at a study.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Analysis {
    /// Always [`RESULTS_FORMAT`].
    pub format: String,
    /// The program that produced the results.
    pub tool: Tool,
    /// Who, what and when, as written in the spec.
    pub study: StudyInfo,
    /// What was to be guaranteed.
    pub claim: ClaimInfo,
    /// What one trial yields.
    pub outcome: OutcomeInfo,
    /// The overall verdict: `pass` only when the claim holds for the scope requested.
    pub verdict: Verdict,
    /// One sentence stating the guarantee, in plain words, built from the numbers below.
    pub statement: String,
    /// The decision rule and the risks it implies.
    pub decision_rule: DecisionRule,
    /// One entry per arm (a single unnamed arm is called `all`).
    pub arms: Vec<ArmResult>,
    /// Under scope `best`: the index in `arms` of the arm selected and certified.
    #[serde(default)]
    pub selected_arm: Option<usize>,
    /// Every division of the error budget, in order.
    pub adjustments: Adjustments,
    /// Catalogue entries of every method that appears in `arms`, primary first.
    pub methods: Vec<MethodInfo>,
    /// Every assumption of the primary method and dependence model, with its status.
    pub checklist: Vec<ChecklistItem>,
    /// Signature blocks requested by the spec, to be signed on paper or electronically.
    pub signatures: Vec<SignatureBlock>,
    /// Standing cautions printed with every result.
    pub cautions: Vec<String>,
    /// The sample-size rationale from the spec's `plan` section, when it has one.
    #[serde(default)]
    pub plan: Option<crate::plan::PlanResults>,
    /// Compare methods the data could not feed, or that the dependence model or look mode
    /// rules out, and why.
    #[serde(default)]
    pub omitted_methods: Vec<OmittedMethod>,
    /// The dependence model the bounds rest on.
    pub dependence: DependenceInfo,
    /// Where this look sits among the study's looks, and what the ledger says about them.
    pub looks: LooksInfo,
    /// Remarks about this particular analysis (for example a vacuous bound).
    pub warnings: Vec<String>,
    /// Hashes that bind this result to its inputs.
    pub provenance: Provenance,
}

/// Name, version and build of the program.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Tool {
    pub name: String,
    pub version: String,
}

/// The study block of the spec, echoed for the report header.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct StudyInfo {
    pub id: String,
    pub title: String,
    pub owner: Option<String>,
    pub requirement: Option<String>,
    /// ISO date of the report: `study.date`, else SOURCE_DATE_EPOCH, else today (UTC).
    pub date: String,
    /// Where `date` came from: `spec`, `SOURCE_DATE_EPOCH` or `clock`.
    pub date_source: String,
    pub description: Option<String>,
}

/// The claim as stated, with the error budget carried as δ.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct ClaimInfo {
    pub quantity: String,
    /// `upper`, `lower` or `two-sided`.
    pub side: String,
    pub limit: f64,
    /// The confidence as a number, read from its decimal text; computations use `delta`.
    pub confidence: f64,
    /// The confidence exactly as written in the spec (`0.95`, `"95%"`).
    pub confidence_text: String,
    /// The claim's error budget δ before any adjustment.
    pub delta: f64,
    /// `each`, `all` or `best`.
    pub scope: String,
    pub display: ClaimDisplay,
}

/// Printed forms of the claim's numbers.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct ClaimDisplay {
    pub limit: String,
    pub confidence: String,
    /// The claim's δ, rounded up.
    pub delta: String,
    /// The false-accept risk (δ) in percent, rounded up.
    pub false_accept_risk: String,
}

/// What a trial yields.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct OutcomeInfo {
    /// `binary` (0/1) or `bounded`.
    #[serde(rename = "type")]
    pub kind: String,
    /// What a 1 means, for binary outcomes.
    pub event: Option<String>,
    /// The declared range [a, b] of a bounded outcome.
    pub range: Option<[f64; 2]>,
    pub unit: Option<String>,
}

/// `pass`, `fail` or `inconclusive` (DESIGN.md §7).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Verdict {
    /// The primary bound meets the limit.
    Pass,
    /// The opposite bound at the same δ excludes the limit: the claim is demonstrably false.
    Fail,
    /// Neither: more data are needed.
    Inconclusive,
}

/// The rule that turns bounds into a verdict, and what it risks.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct DecisionRule {
    /// The rule in words.
    pub text: String,
    /// Probability of passing when the claim is false: at most the claim's δ.
    pub false_accept_risk: f64,
    /// What is known of the chance of not passing when the claim is true, in words.
    pub false_reject_note: String,
}

/// Results for one arm.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct ArmResult {
    pub name: String,
    /// Number of trials.
    pub n: u64,
    /// Number of events (binary outcomes).
    pub events: Option<u64>,
    /// Observed mean (events / n for binary outcomes).
    pub mean: f64,
    /// The δ each one-sided bound of this arm used, after every adjustment.
    pub delta: f64,
    pub primary: BoundResult,
    /// Bounds of the compare methods, for information only: never the guarantee.
    pub compare: Vec<BoundResult>,
    pub verdict: Verdict,
    /// The bound that decides the claim as a function of the number of trials (binary counts).
    pub curve: Option<Curve>,
    /// Spread and range of the values (bounded outcomes).
    pub values: Option<ValueSummary>,
    /// For clustered data: the trials behind the `n` cluster means.
    #[serde(default)]
    pub nominal: Option<NominalInfo>,
    /// For an anytime primary method on ordered data: its running bound over the trials.
    #[serde(default)]
    pub path: Option<BoundPath>,
    pub display: ArmDisplay,
}

/// Trials behind the cluster means of a clustered analysis.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct NominalInfo {
    /// Number of trials (rows) in the arm.
    pub trials: u64,
    /// Number of events among them (binary outcomes).
    pub events: Option<u64>,
    /// Number of clusters: the effective sample size.
    pub clusters: u64,
    pub smallest_cluster: u64,
    pub largest_cluster: u64,
    pub display: NominalDisplay,
}

/// Printed forms of [`NominalInfo`].
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct NominalDisplay {
    pub trials: String,
    pub clusters: String,
    /// Trials per cluster on average, to one decimal.
    pub per_cluster: String,
}

/// An anytime bound drawn over the cumulative number of trials, in data units.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct BoundPath {
    /// `upper` or `lower`: which bound is drawn.
    pub bound: String,
    /// `[trials, bound]`, the running bound after that many trials.
    pub points: Vec<[f64; 2]>,
    /// `[trials, bound]` at each recorded look of this arm, this look last.
    pub looks: Vec<[f64; 2]>,
}

/// The dependence model between trials, as declared and as applied.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct DependenceInfo {
    /// `independent`, `martingale`, `clustered` or `m-dependent`.
    pub model: String,
    /// The dependence distance (m-dependent only).
    pub m: Option<u64>,
    /// The spec's rationale for the model, as written.
    pub rationale: Option<String>,
    /// What the bounds are about under this model, in words.
    pub estimand: String,
    /// How the model entered the computation, in words.
    pub treatment: String,
}

/// The look this analysis is, the looks before it, and how δ was spent over them.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct LooksInfo {
    /// `planned` or `anytime`.
    pub mode: String,
    /// Number of planned looks.
    pub planned: u32,
    /// This look's number (a re-issue carries the number of the look it re-issues).
    pub look: u32,
    /// The ledger's part in this look.
    pub ledger: LedgerInfo,
    /// Every recorded look up to and including this one, oldest first.
    pub history: Vec<LookRecord>,
    /// The share of the claim's δ this look spent (0 for a method valid at any time).
    pub delta_spent: f64,
    /// δ spent by all looks up to and including this one.
    pub delta_spent_total: f64,
    /// How the bound of this look combines with earlier ones, in words.
    pub rule: String,
    pub display: LooksDisplay,
}

/// Printed forms of [`LooksInfo`].
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct LooksDisplay {
    pub delta_spent: String,
    pub delta_spent_total: String,
}

/// What the look ledger recorded about this look.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct LedgerInfo {
    /// `registered` (a new look was recorded), `re-issue` (the same inputs and claim as a look
    /// already recorded; nothing further spent) or `not-registered` (run with `--no-ledger`).
    pub status: String,
    /// The ledger's file name (beside the spec), when one was used.
    pub file: Option<String>,
    /// SHA-256 of the ledger's last line before this look: the chain this look extends.
    pub previous: Option<String>,
    /// Why a new ledger was started, when this look began one with `--new-ledger`.
    pub new_ledger: Option<String>,
}

/// One recorded look, as the ledger holds it.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct LookRecord {
    pub look: u32,
    /// When the look was recorded (RFC 3339, UTC); none for this look, which is dated by the
    /// report.
    pub time: Option<String>,
    /// Primary method id.
    pub method: String,
    /// `fixed-n` or `anytime`: the primary method's guarantee.
    pub guarantee: String,
    /// The budget this look's bounds were computed at, before any division by arms or sides.
    pub delta: f64,
    /// The part of the claim's δ this look used up (0 for a method valid at any time, and for a
    /// look that was not registered).
    pub spent: f64,
    pub verdict: Verdict,
    pub arms: Vec<LookArm>,
}

/// One arm at one look: its size and its own primary bounds (data units).
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct LookArm {
    pub name: String,
    pub n: u64,
    pub upper: Option<f64>,
    pub lower: Option<f64>,
}

/// Spread and range of one arm's bounded values, in data units.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct ValueSummary {
    /// Sample standard deviation (n − 1 in the denominator).
    pub sd: f64,
    /// Smallest and largest value, when the values were read one by one.
    pub min: Option<f64>,
    pub max: Option<f64>,
    /// Counts in equal bins over `range`, when the values were read one by one.
    pub histogram: Option<Vec<u64>>,
    /// The declared range [a, b].
    pub range: [f64; 2],
    pub display: ValueSummaryDisplay,
}

/// Printed forms of a value summary (nearest rounding: these guarantee nothing).
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct ValueSummaryDisplay {
    pub sd: String,
    pub min: Option<String>,
    pub max: Option<String>,
}

/// A compare method left out because the data could not feed it.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct OmittedMethod {
    pub method: String,
    pub reason: String,
}

/// Printed forms of an arm's numbers.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct ArmDisplay {
    pub mean: String,
    pub n: String,
    /// Number of events with thousands separators (binary outcomes).
    pub events: Option<String>,
    /// The arm's δ per bound, rounded up.
    pub delta: String,
}

/// One method's bounds on one arm.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct BoundResult {
    /// Catalogue id.
    pub method: String,
    /// Upper bound on the true value, when the claim's side needs one.
    pub upper: Option<f64>,
    /// Lower bound on the true value, when the claim's side or the verdict rule needs one.
    pub lower: Option<f64>,
    /// `fixed-n` or `anytime`.
    pub guarantee: String,
    /// Whether the bound equals the whole range and so says nothing.
    pub vacuous: bool,
    pub display: BoundDisplay,
}

/// Printed forms of a bound, rounded outwards.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct BoundDisplay {
    pub upper: Option<String>,
    pub lower: Option<String>,
}

/// The deciding bound against the number of trials, at the arm's δ.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Curve {
    /// `upper` or `lower`: which bound is drawn.
    pub bound: String,
    /// Bound when the observed rate is held as trials grow: `[trials, bound]`.
    pub at_observed_rate: Vec<[f64; 2]>,
    /// Bound when no further events occur as trials grow: `[trials, bound]`.
    pub no_further_events: Vec<[f64; 2]>,
    /// The observed point `[trials, bound]`.
    pub observed: [f64; 2],
}

/// Every division of the error budget (DESIGN.md §8).
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Adjustments {
    /// Number of arms sharing the budget (1 for scope `each`).
    pub arms: u64,
    pub looks_planned: u32,
    /// Which look this analysis is.
    pub look: u32,
    /// 2 for a two-sided claim with a method not built two-sided, else 1.
    pub sides: u32,
    /// The δ left for each one-sided bound.
    pub delta_per_bound: f64,
    /// Each division in order, with its reason.
    pub steps: Vec<AdjustmentStep>,
    /// `delta_per_bound`, rounded up.
    pub display_delta_per_bound: String,
}

/// One division of the error budget.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct AdjustmentStep {
    pub reason: String,
    pub divisor: f64,
    pub delta_after: f64,
    /// `delta_after`, rounded up.
    pub display_delta_after: String,
}

/// A method's catalogue entry, as shown in the method appendix.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct MethodInfo {
    pub id: String,
    pub name: String,
    /// `primary` or `compare`.
    pub role: String,
    pub citation: String,
    /// What the method guarantees, in words.
    pub statement: String,
    /// The bound as typst math markup (our own constant text, never user input).
    pub formula_typst: String,
    pub guarantee: String,
    pub assumptions: Vec<String>,
}

/// One assumption and its status.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct ChecklistItem {
    pub id: String,
    /// The assumption in words.
    pub text: String,
    /// `checked`, `attested` or `open`.
    pub status: String,
    /// What the data showed (checked) or the attestation note.
    pub evidence: Option<String>,
    pub by: Option<String>,
    pub date: Option<String>,
    /// What goes wrong if the assumption fails.
    pub consequence: String,
}

/// A signature block to be filled in.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct SignatureBlock {
    pub role: String,
    pub name: Option<String>,
    pub meaning: String,
}

/// Hashes binding the results to their inputs.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Provenance {
    pub spec: FileDigest,
    pub inputs: Vec<FileDigest>,
    pub tool_version: String,
    pub template_sha256: String,
    pub fonts_sha256: String,
    /// SHA-256 of the canonical results JSON with this field set to the empty string.
    pub results_sha256: String,
}

/// A file and its SHA-256.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct FileDigest {
    pub path: String,
    pub sha256: String,
    /// Size in bytes (data files).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub bytes: Option<u64>,
    /// Number of data rows (data files).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub rows: Option<u64>,
}
