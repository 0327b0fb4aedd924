//! One study from file to artifacts: read the spec, analyse it, render results.json and the
//! PDF in memory. Writing the files is left to the caller, so nothing is written unless
//! everything succeeded.

use crate::analysis::{self, Context, model::Analysis};
use crate::error::Error;
use crate::provenance::{self, sha256_hex};
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

/// Load, validate and analyse the study at `path`.
pub fn prepare(path: &Path, env: &Environment) -> Result<Prepared, Error> {
    let (spec, spec_bytes) = load_spec(path)?;
    let template = match &spec.report.template {
        None => None,
        Some(t) if t == "default" => None,
        Some(t) => {
            let template_path = path.parent().unwrap_or_else(|| Path::new("")).join(t);
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
    let date = provenance::resolve_date(
        spec.study.date.as_ref().map(|d| (d.year, d.month, d.day)),
        env.source_date_epoch.as_deref(),
        env.now_unix_seconds,
    )?;
    let spec_name = path
        .file_name()
        .map(|n| n.to_string_lossy().to_string())
        .unwrap_or_else(|| "study.yaml".to_string());
    let ctx = Context {
        date,
        spec_name,
        spec_sha256: sha256_hex(&spec_bytes),
        template_sha256: report::template_sha256(template_text),
        fonts_sha256: report::fonts_sha256(),
    };
    let data = match crate::data::inline(&spec) {
        Some(d) => d,
        None => {
            return Err(Error::Spec(spec.error_at(
                "data.file",
                "reading trials from a data file is not supported yet",
                None,
            )));
        }
    };
    let analysis = analysis::analyse(&spec, &data, &ctx)?;
    Ok(Prepared {
        spec,
        spec_bytes,
        spec_path: path.to_path_buf(),
        template,
        analysis,
    })
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
    })?;
    Ok(Artifacts { results_json, pdf })
}
