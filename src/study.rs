//! One study from file to artifacts: read the spec, analyse it, render results.json and the
//! PDF in memory. Writing the files is left to the caller, so nothing is written unless
//! everything succeeded.

use crate::analysis::{self, Context, model::Analysis};
use crate::error::Error;
use crate::provenance::{self, ReportDate, sha256_hex};
use crate::report;
use crate::spec::{self, Location, Spec, SpecError};
use std::fs;
use std::path::{Path, PathBuf};

/// What the process environment contributes: read at the edge, passed in.
#[derive(Debug, Clone, Default)]
pub struct Environment {
    /// The value of SOURCE_DATE_EPOCH, if set.
    pub source_date_epoch: Option<String>,
    /// The clock, in seconds since 1970-01-01 UTC (used only when no other date is given).
    pub now_unix_seconds: i64,
}

/// A loaded and analysed study, before rendering.
#[derive(Debug, Clone)]
pub struct Prepared {
    /// The validated spec.
    pub spec: Spec,
    /// The spec's bytes, exactly as read.
    pub spec_bytes: Vec<u8>,
    /// Path of the spec as given on the command line.
    pub spec_path: PathBuf,
    /// A user template's text, when the spec names one.
    pub template: Option<String>,
    /// The results.
    pub analysis: Analysis,
    /// Data files to attach to the report (path as recorded, bytes), per `report.embed_data`.
    pub embedded: Vec<(String, Vec<u8>)>,
}

/// The rendered outputs of a study.
#[derive(Debug, Clone)]
pub struct Artifacts {
    /// Bytes of results.json.
    pub results_json: Vec<u8>,
    /// Bytes of report.pdf.
    pub pdf: Vec<u8>,
}

/// The default output folder: `<spec stem>-report/` beside the spec.
pub fn default_out_dir(spec_path: &Path) -> PathBuf {
    let stem = spec_path
        .file_stem()
        .map(|s| s.to_string_lossy().to_string())
        .unwrap_or_else(|| "study".to_string());
    spec_path
        .parent()
        .unwrap_or_else(|| Path::new(""))
        .join(format!("{stem}-report"))
}

fn decode(path: &Path, bytes: &[u8]) -> Result<String, SpecError> {
    String::from_utf8(bytes.to_vec()).map_err(|e| {
        let valid = &bytes[..e.utf8_error().valid_up_to()];
        let line = valid.iter().filter(|b| **b == b'\n').count() + 1;
        let column = String::from_utf8_lossy(valid)
            .rsplit('\n')
            .next()
            .map(|l| l.chars().count() + 1)
            .unwrap_or(1);
        SpecError {
            location: Some(Location {
                file: path.display().to_string(),
                line,
                column,
            }),
            key: None,
            message: "the spec is not valid UTF-8 text".to_string(),
            hint: Some("save the file as UTF-8".to_string()),
        }
    })
}

/// Read and validate a spec file without analysing it.
pub fn load_spec(path: &Path) -> Result<(Spec, Vec<u8>), Error> {
    let bytes = fs::read(path).map_err(|source| Error::Read {
        path: path.display().to_string(),
        source,
    })?;
    let text = decode(path, &bytes)?;
    let spec = spec::parse(&path.display().to_string(), &text)?;
    Ok((spec, bytes))
}

/// How the report date is found.
#[derive(Debug, Clone)]
pub enum DateRule {
    /// From the spec, else SOURCE_DATE_EPOCH, else the clock (a new run).
    Resolve(Environment),
    /// The date a recorded result used (a recomputation by `surety verify`).
    Fixed(ReportDate),
}

/// Load, validate and analyse the study at `path`.
pub fn prepare(
    path: &Path,
    env: &Environment,
    progress: &mut dyn FnMut(u64, u64),
) -> Result<Prepared, Error> {
    let (spec, spec_bytes) = load_spec(path)?;
    let spec_name = path
        .file_name()
        .map(|n| n.to_string_lossy().to_string())
        .unwrap_or_else(|| "study.yaml".to_string());
    let base = path.parent().unwrap_or_else(|| Path::new("")).to_path_buf();
    analyse_loaded(
        spec,
        spec_bytes,
        path,
        &spec_name,
        &base,
        &DateRule::Resolve(env.clone()),
        progress,
    )
}

/// Analyse a spec already read: `base` is the folder its relative paths (template, data
/// files) are resolved against.
pub fn analyse_loaded(
    spec: Spec,
    spec_bytes: Vec<u8>,
    spec_path: &Path,
    spec_name: &str,
    base: &Path,
    date_rule: &DateRule,
    progress: &mut dyn FnMut(u64, u64),
) -> Result<Prepared, Error> {
    let template = match &spec.report.template {
        None => None,
        Some(t) if t == "default" => None,
        Some(t) => {
            let template_path = base.join(t);
            let text = fs::read_to_string(&template_path).map_err(|e| {
                Error::Spec(spec.error_at(
                    "report.template",
                    format!("cannot read the template {}: {e}", template_path.display()),
                    Some("paths are relative to the spec file".to_string()),
                ))
            })?;
            Some(text)
        }
    };
    let template_text = template.as_deref().unwrap_or(report::default_template());
    let date = match date_rule {
        DateRule::Resolve(env) => provenance::resolve_date(
            spec.study.date.as_ref().map(|d| (d.year, d.month, d.day)),
            env.source_date_epoch.as_deref(),
            env.now_unix_seconds,
        )?,
        DateRule::Fixed(date) => *date,
    };
    let ctx = Context {
        date,
        spec_name: spec_name.to_string(),
        spec_sha256: sha256_hex(&spec_bytes),
        template_sha256: report::template_sha256(template_text),
        fonts_sha256: report::fonts_sha256(),
        looks: analysis::looks::LookContext::unregistered(),
    };
    let data = load_data(&spec, base, progress)?;
    let analysis = analysis::analyse(&spec, &data, &ctx)?;
    let embedded = embedded_data(&spec, base, &data)?;
    Ok(Prepared {
        spec,
        spec_bytes,
        spec_path: spec_path.to_path_buf(),
        template,
        analysis,
        embedded,
    })
}

/// Data files at most this large in all are embedded under `embed_data: auto`.
pub const EMBED_AUTO_LIMIT: u64 = 4 * 1024 * 1024;

/// The data files to attach to the report. Their bytes are read again and checked against the
/// digest taken while analysing, so the attachment is exactly the data the numbers came from.
fn embedded_data(
    spec: &Spec,
    base: &Path,
    data: &crate::data::Dataset,
) -> Result<Vec<(String, Vec<u8>)>, Error> {
    let total: u64 = data.inputs.iter().map(|f| f.bytes).sum();
    let wanted = match spec.report.embed_data {
        spec::EmbedData::Always => true,
        spec::EmbedData::Never => false,
        spec::EmbedData::Auto => total <= EMBED_AUTO_LIMIT,
    };
    if !wanted {
        return Ok(Vec::new());
    }
    let mut out = Vec::new();
    for f in &data.inputs {
        let path = base.join(&f.path);
        let bytes = fs::read(&path).map_err(|source| Error::Read {
            path: path.display().to_string(),
            source,
        })?;
        if sha256_hex(&bytes) != f.sha256 {
            return Err(Error::Usage(format!(
                "{} changed while it was being analysed; run again",
                path.display()
            )));
        }
        out.push((f.path.clone(), bytes));
    }
    Ok(out)
}

/// The study's data: inline in the spec, or read from the file it names (relative to `base`).
/// The ordered stream of values is kept only when a selected method needs it.
fn load_data(
    spec: &Spec,
    base: &Path,
    progress: &mut dyn FnMut(u64, u64),
) -> Result<crate::data::Dataset, Error> {
    if let Some(d) = crate::data::inline(spec) {
        return Ok(d);
    }
    if spec.data.column.is_none() {
        return Err(Error::Spec(spec.error_at(
            "data.file",
            "a data file needs `data.column`, the column holding each trial's outcome",
            Some("for example column: drop_m".to_string()),
        )));
    }
    let keep = analysis::select_methods(spec)
        .map(|s| {
            std::iter::once(s.primary).chain(s.compare).any(|m| {
                m.bounded
                    .is_some_and(|b| b.needs == crate::bounds::Needs::Observations)
            })
        })
        .unwrap_or(false);
    match crate::data::read(spec, base, keep, progress) {
        Some(Ok(d)) => Ok(d),
        Some(Err(e)) => Err(Error::Data(e)),
        None => Ok(crate::data::Dataset::default()),
    }
}

/// Render results.json and the PDF report, in memory.
pub fn render(prepared: &mut Prepared) -> Result<Artifacts, Error> {
    let results_json = report::json::results_json(&mut prepared.analysis);
    let spec_name = prepared.analysis.provenance.spec.path.clone();
    let pdf = report::render_pdf(&report::ReportInputs {
        analysis: &prepared.analysis,
        results_json: &results_json,
        spec_name: &spec_name,
        spec_bytes: &prepared.spec_bytes,
        template: prepared.template.as_deref(),
        data_files: &prepared.embedded,
    })?;
    Ok(Artifacts { results_json, pdf })
}

/// A study's plan and the digest of its acceptance criteria.
#[derive(Debug, Clone)]
pub struct Planned {
    /// The validated spec.
    pub spec: Spec,
    /// The spec's bytes, exactly as read (attached to the plan report).
    pub spec_bytes: Vec<u8>,
    /// The plan.
    pub plan: crate::plan::PlanResults,
    /// SHA-256 of the claim and plan sections, to be kept as `plan.registered`.
    pub criteria_sha256: String,
}

/// Load a spec and plan its study; data already collected (inline or in its file) feed the
/// trials still needed.
pub fn plan(path: &Path, progress: &mut dyn FnMut(u64, u64)) -> Result<Planned, Error> {
    let (spec, spec_bytes) = load_spec(path)?;
    let base = path.parent().unwrap_or_else(|| Path::new("")).to_path_buf();
    let data = load_data(&spec, &base, progress)?;
    let plan = crate::plan::from_spec::plan(&spec, Some(&data))?;
    let criteria_sha256 = provenance::criteria_sha256(&spec);
    Ok(Planned {
        spec,
        spec_bytes,
        plan,
        criteria_sha256,
    })
}
