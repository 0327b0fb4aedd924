//! The PDF report: results model in, PDF/A-3b bytes out.
//!
//! [`render_pdf`] is pure. It draws the plots, renders the template into `main.typ`, serves those
//! and the given results and spec bytes from memory to typst, and exports a PDF/A-3b file that
//! carries the spec and results.json as attachments. The same inputs give the same bytes: fonts
//! come from the binary, the date from the study, and the PDF identifier from the results digest.

use std::collections::HashMap;
use std::fmt;

use sha2::{Digest, Sha256};
use typst::diag::{Severity, SourceDiagnostic, Warned};
use typst::foundations::{Bytes, Datetime, Smart};
use typst::syntax::DiagSpan;
use typst::{World, WorldExt};
use typst_layout::PagedDocument;
use typst_pdf::{PdfOptions, PdfStandard, PdfStandards, Timestamp};

use super::fonts;
use super::plots;
use super::template::{
    self, ARMS_PLOT, LOOKS_JSON, TEMPLATE_NAME, compare_path, curve_path, histogram_path,
    looks_path, path_path,
};
use super::world::{ReportWorld, file_id};
use crate::analysis::model::Analysis;
use crate::provenance::hex;

pub use super::fonts::fonts_sha256;
pub use super::template::{default_template, template_sha256};

/// Everything a report is made from. The PDF depends on these values and nothing else.
#[derive(Debug, Clone, Copy)]
pub struct ReportInputs<'a> {
    /// The results model the report shows.
    pub analysis: &'a Analysis,
    /// The exact results.json bytes: read by the template and attached to the PDF.
    pub results_json: &'a [u8],
    /// The spec's file name (for example `study.yaml`); only its last path component is used.
    pub spec_name: &'a str,
    /// The spec's bytes, attached to the PDF unchanged.
    pub spec_bytes: &'a [u8],
    /// The text of a user template (`*.typ.j2`); `None` uses [`default_template`].
    pub template: Option<&'a str>,
    /// Data files to attach, as (path recorded in provenance, bytes); empty when not embedded.
    pub data_files: &'a [(String, Vec<u8>)],
}

/// Where in a generated or served file a diagnostic points (1-based line and column).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Location {
    /// Path inside the report's virtual project, for example `main.typ` or `data/results.json`.
    pub path: String,
    /// 1-based line.
    pub line: usize,
    /// 1-based column, counted in characters.
    pub column: usize,
}

impl fmt::Display for Location {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}:{}:{}", self.path, self.line, self.column)
    }
}

/// One message from typst, with its location when it has one.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Diagnostic {
    /// `true` for an error; `false` for a warning (which the report treats as an error too).
    pub is_error: bool,
    /// typst's message, unchanged.
    pub message: String,
    /// Where it points; `None` when typst gave no location.
    pub location: Option<Location>,
    /// typst's hints, in order.
    pub hints: Vec<String>,
}

impl fmt::Display for Diagnostic {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if !self.is_error {
            f.write_str("warning treated as an error: ")?;
        }
        f.write_str(&self.message)?;
        if let Some(loc) = &self.location {
            write!(f, " @ {loc}")?;
        }
        for hint in &self.hints {
            write!(f, " (hint: {hint})")?;
        }
        Ok(())
    }
}

/// Which step of typst failed.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Stage {
    /// Evaluating and laying out `main.typ`.
    Layout,
    /// Writing the PDF (this is where PDF/A rules are enforced).
    Export,
}

/// Why a report could not be made. Every variant says whether the fault is surety's own
/// (an internal error) or lies in something the user supplied.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum ReportError {
    /// minijinja could not turn the template into typst source.
    Template {
        /// `true` when the template is the user's, `false` for the built-in one (our bug).
        user: bool,
        /// minijinja's description of the problem.
        message: String,
        /// 1-based line in the template, when known.
        line: Option<usize>,
    },
    /// typst rejected the document. Warnings count as errors, so a report is never produced
    /// with a silently substituted font or similar degradation.
    Typst {
        /// Whether layout or PDF export failed.
        stage: Stage,
        /// `true` when the first diagnostic lies in a file surety generated from a built-in
        /// template (`main.typ`, `data/*`, `plots/*`), or has no location: a defect of surety.
        internal: bool,
        /// `true` when a user template produced `main.typ`.
        user_template: bool,
        /// Every error, then every warning, as typst reported them.
        diagnostics: Vec<Diagnostic>,
    },
    /// `study.date` is not an ISO calendar date (`YYYY-MM-DD`).
    Date(String),
    /// `results_json` does not describe the same analysis as `analysis`.
    Results(String),
    /// A plot could not be drawn or an embedded font is unusable: a defect of surety.
    Internal(String),
}

impl ReportError {
    /// Whether the fault lies in something the user supplied (their own template), rather than
    /// in surety itself.
    pub fn is_user_error(&self) -> bool {
        match self {
            ReportError::Template { user, .. } => *user,
            ReportError::Typst {
                internal,
                user_template,
                ..
            } => *user_template && !*internal,
            ReportError::Date(_) => true,
            ReportError::Results(_) | ReportError::Internal(_) => false,
        }
    }
}

impl fmt::Display for ReportError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ReportError::Template {
                user: false,
                message,
                line,
            } => {
                write!(f, "internal error in the report template: {message}")?;
                if let Some(line) = line {
                    write!(f, " @ {TEMPLATE_NAME}:{line}")?;
                }
                Ok(())
            }
            ReportError::Template {
                user: true,
                message,
                line,
            } => {
                write!(f, "error in the report template: {message}")?;
                if let Some(line) = line {
                    write!(f, " @ template line {line}")?;
                }
                Ok(())
            }
            ReportError::Typst {
                stage,
                internal,
                user_template,
                diagnostics,
            } => {
                let what = match stage {
                    Stage::Layout => "",
                    Stage::Export => " (PDF export)",
                };
                if *internal {
                    write!(f, "internal error in the report template{what}: ")?;
                } else if *user_template {
                    write!(
                        f,
                        "error in the report{what}, in main.typ as generated from the user template: "
                    )?;
                } else {
                    write!(f, "error in the report{what}: ")?;
                }
                match diagnostics.first() {
                    Some(first) => write!(f, "{first}")?,
                    None => f.write_str("typst failed without a message")?,
                }
                if diagnostics.len() > 1 {
                    write!(f, " (and {} more)", diagnostics.len() - 1)?;
                }
                Ok(())
            }
            ReportError::Date(d) => {
                write!(
                    f,
                    "report date {d:?} is not a calendar date of the form YYYY-MM-DD"
                )
            }
            ReportError::Results(why) => {
                write!(
                    f,
                    "results.json does not match the analysis being reported: {why}"
                )
            }
            ReportError::Internal(why) => {
                write!(f, "internal error while building the report: {why}")
            }
        }
    }
}

impl std::error::Error for ReportError {}

/// Paths of the served files. Fixed names keep typst's process-wide file-id table small.
const MAIN: &str = "main.typ";
const RESULTS: &str = "data/results.json";
const REPORT: &str = "data/report.json";

/// Renders the PDF report (PDF/A-3b, A4) for `inputs`.
///
/// Guarantees: the output depends only on `inputs` and the surety build (typst version, fonts,
/// template); two calls with equal inputs return identical bytes. No file, font, clock or
/// network of the host is consulted. User text is shown literally: it reaches typst as JSON
/// data and is never parsed as markup or template code.
pub fn render_pdf(inputs: &ReportInputs) -> Result<Vec<u8>, ReportError> {
    let a = inputs.analysis;
    check_results(a, inputs.results_json)?;
    let (year, month, day) = parse_date(&a.study.date)?;
    let today = Datetime::from_ymd(year, month, day)
        .ok_or_else(|| ReportError::Date(a.study.date.clone()))?;
    let midnight = Datetime::from_ymd_hms(year, month, day, 0, 0, 0)
        .ok_or_else(|| ReportError::Date(a.study.date.clone()))?;

    let user_template = inputs.template.is_some();
    let template_text = match inputs.template {
        Some(text) => text,
        None => default_template(),
    };
    let main = template::render_main(template_text, a).map_err(|e| ReportError::Template {
        user: user_template,
        message: e.message,
        line: e.line,
    })?;

    let plots = plots::render_plots(a).map_err(|e| ReportError::Internal(format!("plot: {e}")))?;
    // The sample-size rationale: the plan, its printed forms and its charts, when there is one.
    let plan_files = match &a.plan {
        None => None,
        Some(plan) => {
            let json = serde_json::to_vec_pretty(plan)
                .map_err(|e| ReportError::Internal(format!("plan: {e}")))?;
            let display = serde_json::to_vec_pretty(&super::plan_pdf::plan_display(
                plan,
                a.outcome.unit.as_deref(),
            ))
            .map_err(|e| ReportError::Internal(format!("plan display: {e}")))?;
            let charts = super::plan_plots::render_plan_plots(plan)
                .map_err(|e| ReportError::Internal(format!("plan plot: {e}")))?;
            Some((json, display, charts))
        }
    };
    let font_set = fonts::font_set().map_err(ReportError::Internal)?;

    let spec = SpecNames::new(inputs.spec_name);
    let data_names = data_attachment_names(inputs.data_files, &spec.attach);
    let data_json: Vec<_> = data_names
        .iter()
        .map(|(served, attach, recorded)| {
            serde_json::json!({"served": served, "attach": attach, "path": recorded})
        })
        .collect();
    let report_json = serde_json::json!({
        "spec": {"served": spec.served, "attach": spec.attach},
        "data": data_json,
        "render": {
            "template": if user_template { "user" } else { "default" },
            "template_sha256": template_sha256(template_text),
            "fonts_sha256": fonts_sha256(),
            "creator": creator(),
        },
    });
    let report_json = serde_json::to_vec_pretty(&report_json)
        .map_err(|e| ReportError::Internal(format!("report context: {e}")))?;

    let mut files: HashMap<_, Bytes> = HashMap::new();
    let mut put = |path: &str, bytes: Bytes| -> Result<(), ReportError> {
        files.insert(file_id(path).map_err(ReportError::Internal)?, bytes);
        Ok(())
    };
    put(MAIN, Bytes::from_string(main))?;
    put(RESULTS, Bytes::new(inputs.results_json.to_vec()))?;
    put(REPORT, Bytes::new(report_json))?;
    for (i, svg) in plots.curves.into_iter().enumerate() {
        put(&curve_path(i), Bytes::from_string(svg))?;
    }
    if let Some(svg) = plots.arms {
        put(ARMS_PLOT, Bytes::from_string(svg))?;
    }
    for (i, svg) in plots.compare.into_iter().enumerate() {
        put(&compare_path(i), Bytes::from_string(svg))?;
    }
    for (i, svg) in plots.histograms.into_iter().enumerate() {
        put(&histogram_path(i), Bytes::from_string(svg))?;
    }
    for (i, svg) in plots.looks.into_iter().enumerate() {
        put(&looks_path(i), Bytes::from_string(svg))?;
    }
    for (i, svg) in plots.paths.into_iter().enumerate() {
        put(&path_path(i), Bytes::from_string(svg))?;
    }
    let looks = serde_json::to_vec_pretty(&template::looks_display(a))
        .map_err(|e| ReportError::Internal(format!("looks: {e}")))?;
    put(LOOKS_JSON, Bytes::new(looks))?;
    put(&spec.served, Bytes::new(inputs.spec_bytes.to_vec()))?;
    if let Some((json, display, charts)) = plan_files {
        put(template::PLAN_JSON, Bytes::new(json))?;
        put(template::PLAN_DISPLAY_JSON, Bytes::new(display))?;
        if let Some(svg) = charts.oc {
            put(super::plan_plots::OC_PLOT, Bytes::from_string(svg))?;
        }
        if let Some(svg) = charts.sawtooth {
            put(super::plan_plots::SAW_PLOT, Bytes::from_string(svg))?;
        }
    }
    for ((served, _, _), (_, bytes)) in data_names.iter().zip(inputs.data_files) {
        put(served, Bytes::new(bytes.clone()))?;
    }

    let world = ReportWorld::new(
        file_id(MAIN).map_err(ReportError::Internal)?,
        files,
        font_set,
        today,
    );
    let result = compile_and_export(&world, a, inputs.results_json, midnight, user_template);
    // Keep the process-wide memo cache from growing without bound across many reports.
    typst::comemo::evict(10);
    result
}

fn compile_and_export(
    world: &ReportWorld,
    a: &Analysis,
    results_json: &[u8],
    midnight: Datetime,
    user_template: bool,
) -> Result<Vec<u8>, ReportError> {
    let Warned { output, warnings } = typst::compile::<PagedDocument>(world);
    let fail = |stage, errors: &[SourceDiagnostic]| {
        let diagnostics: Vec<Diagnostic> = errors
            .iter()
            .chain(warnings.iter())
            .map(|d| convert(world, d))
            .collect();
        let internal = match diagnostics.first().and_then(|d| d.location.as_ref()) {
            None => true,
            Some(loc) => is_generated(&loc.path, user_template),
        };
        ReportError::Typst {
            stage,
            internal,
            user_template,
            diagnostics,
        }
    };
    let document = match output {
        Ok(doc) if warnings.is_empty() => doc,
        Ok(_) => return Err(fail(Stage::Layout, &[])),
        Err(errors) => return Err(fail(Stage::Layout, &errors)),
    };

    let standards = PdfStandards::new(&[PdfStandard::A_3b])
        .map_err(|e| ReportError::Internal(format!("PDF/A-3b configuration: {e:?}")))?;
    let options = PdfOptions {
        ident: Smart::Custom(format!(
            "surety-results-{}",
            results_digest(a, results_json)
        )),
        creator: Smart::Custom(Some(creator())),
        timestamp: Some(Timestamp::new_utc(midnight)),
        standards,
        ..PdfOptions::default()
    };
    typst_pdf::pdf(&document, &options).map_err(|errors| {
        let diagnostics: Vec<Diagnostic> = errors.iter().map(|d| convert(world, d)).collect();
        let internal = match diagnostics.first().and_then(|d| d.location.as_ref()) {
            None => true,
            Some(loc) => is_generated(&loc.path, user_template),
        };
        ReportError::Typst {
            stage: Stage::Export,
            internal,
            user_template,
            diagnostics,
        }
    })
}

/// The `/Creator` of every report: the program, not the typesetting library.
pub(crate) fn creator() -> String {
    format!("surety {}", env!("CARGO_PKG_VERSION"))
}

/// The results digest that identifies the document: the one recorded in provenance, or, if a
/// caller left it empty, the digest of the results bytes being attached.
fn results_digest(a: &Analysis, results_json: &[u8]) -> String {
    let recorded = a.provenance.results_sha256.trim();
    if recorded.is_empty() {
        hex(&Sha256::digest(results_json))
    } else {
        recorded.to_owned()
    }
}

/// Whether a diagnostic in `path` is a defect of surety rather than of user input.
fn is_generated(path: &str, user_template: bool) -> bool {
    (path == MAIN && !user_template) || path.starts_with("data/") || path.starts_with("plots/")
}

/// For each data file: (path served to typst, attachment name, path recorded in provenance).
/// Attachment names are the files' own names, made unique against the spec and results.json.
fn data_attachment_names(
    files: &[(String, Vec<u8>)],
    spec_attach: &str,
) -> Vec<(String, String, String)> {
    let mut taken: Vec<String> = vec![spec_attach.to_owned(), "results.json".to_owned()];
    files
        .iter()
        .enumerate()
        .map(|(i, (recorded, _))| {
            let base = recorded.rsplit(['/', '\\']).next().unwrap_or("").trim();
            let clean: String = base
                .chars()
                .map(|c| if c.is_control() { '_' } else { c })
                .collect();
            let mut name = if clean.is_empty() || clean == "." || clean == ".." {
                format!("data-{}", i + 1)
            } else {
                clean
            };
            while taken.contains(&name) {
                name = format!("data-{name}");
            }
            taken.push(name.clone());
            (format!("inputs/{:02}", i + 1), name, recorded.clone())
        })
        .collect()
}

/// Names under which the spec is served to typst and attached to the PDF.
pub(crate) struct SpecNames {
    pub(crate) served: String,
    pub(crate) attach: String,
}

impl SpecNames {
    fn new(spec_name: &str) -> Self {
        Self::beside(spec_name, "results.json")
    }

    /// Only the spec's own file name is kept (no folders, no control characters), and it may
    /// not collide with `other`, the document's data attachment.
    pub(crate) fn beside(spec_name: &str, other: &str) -> Self {
        let base = spec_name.rsplit(['/', '\\']).next().unwrap_or("").trim();
        let clean: String = base
            .chars()
            .map(|c| if c.is_control() { '_' } else { c })
            .collect();
        let base = if clean.is_empty() || clean == "." || clean == ".." {
            "study.yaml".to_owned()
        } else {
            clean
        };
        let served = format!("spec/{base}");
        let served = if file_id(&served).is_ok() {
            served
        } else {
            "spec/study.yaml".to_owned()
        };
        let attach_base = served.trim_start_matches("spec/").to_owned();
        // Two attachments may not share one name.
        let attach = if attach_base == other {
            format!("spec-{attach_base}")
        } else {
            attach_base
        };
        Self { served, attach }
    }
}

fn parse_date(s: &str) -> Result<(i32, u8, u8), ReportError> {
    let bad = || ReportError::Date(s.to_owned());
    let b = s.as_bytes();
    if b.len() != 10 || b[4] != b'-' || b[7] != b'-' {
        return Err(bad());
    }
    let digits = |r: std::ops::Range<usize>| -> Result<u32, ReportError> {
        let part = &s[r];
        if part.bytes().all(|c| c.is_ascii_digit()) {
            part.parse().map_err(|_| bad())
        } else {
            Err(bad())
        }
    };
    let (y, m, d) = (digits(0..4)?, digits(5..7)?, digits(8..10)?);
    if !(1..=12).contains(&m) || !(1..=31).contains(&d) {
        return Err(bad());
    }
    Ok((y as i32, m as u8, d as u8))
}

/// The template indexes into results.json by the analysis' counts, so the two must agree.
fn check_results(a: &Analysis, results_json: &[u8]) -> Result<(), ReportError> {
    let value: serde_json::Value = serde_json::from_slice(results_json)
        .map_err(|e| ReportError::Results(format!("not valid JSON: {e}")))?;
    let len = |key: &str| value.get(key).and_then(|v| v.as_array()).map(|v| v.len());
    for (key, expected) in [
        ("arms", a.arms.len()),
        ("methods", a.methods.len()),
        ("checklist", a.checklist.len()),
        ("signatures", a.signatures.len()),
        ("warnings", a.warnings.len()),
    ] {
        match len(key) {
            Some(n) if n == expected => {}
            Some(n) => {
                return Err(ReportError::Results(format!(
                    "`{key}` has {n} entries, the analysis has {expected}"
                )));
            }
            None => {
                return Err(ReportError::Results(format!(
                    "`{key}` is missing or not a list"
                )));
            }
        }
    }
    Ok(())
}

/// A typst diagnostic as surety reports it, located in the served files.
pub(crate) fn convert(world: &ReportWorld, d: &SourceDiagnostic) -> Diagnostic {
    // Errors raised inside evaluated strings (the method formulas) have no file of their own;
    // the innermost call site that has one is the most useful place to point at.
    let location = locate(world, d.span).or_else(|| {
        d.trace
            .iter()
            .rev()
            .find_map(|t| locate(world, DiagSpan::from(t.span)))
    });
    Diagnostic {
        is_error: d.severity == Severity::Error,
        message: d.message.to_string(),
        location,
        hints: d.hints.iter().map(|h| h.v.to_string()).collect(),
    }
}

fn locate(world: &ReportWorld, span: DiagSpan) -> Option<Location> {
    let id = span.id()?;
    let range = world.range(span)?;
    let lines = world.file(id).ok()?.lines().ok()?;
    let (line, column) = lines.byte_to_line_column(range.start)?;
    Some(Location {
        path: id.vpath().get_without_slash().to_owned(),
        line: line + 1,
        column: column + 1,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn dates_must_be_iso_calendar_dates() {
        assert_eq!(parse_date("2026-11-30").unwrap(), (2026, 11, 30));
        for bad in [
            "2026-13-01",
            "2026-1-1",
            "30.11.2026",
            "2026-11-3x",
            "",
            "2026-11-00",
        ] {
            assert!(parse_date(bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn spec_names_keep_only_a_safe_file_name() {
        assert_eq!(
            SpecNames::new("examples/gripper/study.yaml").served,
            "spec/study.yaml"
        );
        assert_eq!(SpecNames::new("C:\\specs\\v1.yaml").attach, "v1.yaml");
        assert_eq!(SpecNames::new("..").served, "spec/study.yaml");
        assert_eq!(SpecNames::new("results.json").attach, "spec-results.json");
    }

    #[test]
    fn generated_files_are_ours_unless_the_template_is_the_users() {
        assert!(is_generated("main.typ", false));
        assert!(!is_generated("main.typ", true));
        assert!(is_generated("data/results.json", true));
        assert!(!is_generated("spec/study.yaml", false));
    }
}
