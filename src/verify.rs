//! `surety verify`: recheck a report or results file against its own evidence.
//!
//! A report carries its spec and results.json (and, when small, its data files) as
//! attachments. Verification re-hashes every input, recomputes the analysis with this version
//! of surety on the recorded date, and compares the result byte for byte with the recorded one;
//! for a PDF it also re-renders the report and compares the bytes. Every comparison is one
//! [`Check`]; the files themselves are never modified.

use crate::analysis::model::Analysis;
use crate::error::Error;
use crate::provenance::{DateSource, ReportDate, sha256_hex};
use crate::report;
use crate::study::{self, DateRule};
use serde_json::Value;
use std::fs;
use std::path::{Path, PathBuf};

/// The outcome of one comparison.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Check {
    /// What was compared, in a few words.
    pub what: String,
    /// Whether the recorded and the recomputed values agree.
    pub agrees: bool,
    /// The values compared, or the difference found.
    pub detail: String,
}

/// Every check made on one file, in order.
#[derive(Debug, Clone, Default)]
pub struct Verification {
    /// The checks, in the order they were made.
    pub checks: Vec<Check>,
}

impl Verification {
    /// True when every check agrees (and at least one was made).
    pub fn agrees(&self) -> bool {
        !self.checks.is_empty() && self.checks.iter().all(|c| c.agrees)
    }

    fn push(&mut self, what: &str, agrees: bool, detail: impl Into<String>) -> bool {
        self.checks.push(Check {
            what: what.to_string(),
            agrees,
            detail: detail.into(),
        });
        agrees
    }
}

/// Where the inputs of a recorded result are looked for.
struct Sources {
    /// The folder given with `--data-dir`: searched first, so that the files there are the ones
    /// checked even when the report carries copies.
    preferred: Option<PathBuf>,
    /// Files attached to the PDF (name, bytes).
    attached: Vec<(String, Vec<u8>)>,
    /// Folders searched, in order, for files not attached.
    dirs: Vec<PathBuf>,
}

impl Sources {
    /// The bytes of the input recorded as `path`, and where they were found.
    fn find(&self, path: &str) -> Option<(Vec<u8>, String)> {
        let name = Path::new(path)
            .file_name()
            .map(|n| n.to_string_lossy().to_string())
            .unwrap_or_else(|| path.to_string());
        if let Some(dir) = &self.preferred {
            let candidate = dir.join(path);
            if let Ok(bytes) = fs::read(&candidate) {
                return Some((bytes, candidate.display().to_string()));
            }
        }
        if let Some((_, bytes)) = self.attached.iter().find(|(n, _)| *n == name) {
            return Some((bytes.clone(), "attached to the report".to_string()));
        }
        for dir in &self.dirs {
            let candidate = dir.join(path);
            if let Ok(bytes) = fs::read(&candidate) {
                return Some((bytes, candidate.display().to_string()));
            }
        }
        None
    }
}

fn short(hash: &str) -> &str {
    hash.get(..12).unwrap_or(hash)
}

/// Verify `file` (a report.pdf or a results.json). The spec and data files are looked for in
/// `data_dir` first, then among the report's attachments, then in the file's folder and its
/// parent.
///
/// Returns `Err` only when `file` itself cannot be read; every other problem is a failed check.
pub fn verify(file: &Path, data_dir: Option<&Path>) -> Result<Verification, Error> {
    let bytes = fs::read(file).map_err(|source| Error::Read {
        path: file.display().to_string(),
        source,
    })?;
    let mut v = Verification::default();
    let mut dirs: Vec<PathBuf> = Vec::new();
    let folder = file.parent().unwrap_or_else(|| Path::new("")).to_path_buf();
    dirs.push(folder.clone());
    if let Some(parent) = folder.parent() {
        dirs.push(parent.to_path_buf());
    }
    let is_pdf = bytes.starts_with(b"%PDF-");
    let (results_bytes, attached) = if is_pdf {
        let attached = match report::extract::attachments(&bytes) {
            Ok(a) => a,
            Err(e) => {
                v.push(
                    "PDF structure",
                    false,
                    format!("cannot read the report: {e}"),
                );
                return Ok(v);
            }
        };
        let Some((_, results)) = attached.iter().find(|(n, _)| n == "results.json") else {
            v.push(
                "PDF structure",
                false,
                "the report carries no results.json attachment",
            );
            return Ok(v);
        };
        let names: Vec<&str> = attached.iter().map(|(n, _)| n.as_str()).collect();
        v.push(
            "PDF structure",
            true,
            format!("attachments: {}", names.join(", ")),
        );
        (results.clone(), attached)
    } else {
        (bytes.clone(), Vec::new())
    };
    let sources = Sources {
        preferred: data_dir.map(Path::to_path_buf),
        attached,
        dirs,
    };

    let recorded: Analysis = match serde_json::from_slice(&results_bytes) {
        Ok(a) => a,
        Err(e) => {
            v.push(
                "results document",
                false,
                format!("not a surety results document: {e}"),
            );
            return Ok(v);
        }
    };
    let digest = report::json::canonical_digest(&recorded);
    v.push(
        "results digest",
        digest == recorded.provenance.results_sha256,
        if digest == recorded.provenance.results_sha256 {
            format!("sha256 {} matches the content", short(&digest))
        } else {
            format!(
                "recorded {}, content hashes to {}: the results were edited after they were made",
                short(&recorded.provenance.results_sha256),
                short(&digest)
            )
        },
    );

    let spec_path = recorded.provenance.spec.path.clone();
    // The report attaches the spec under its own name, or spec-<name> if that is results.json.
    let spec_found = sources.find(&spec_path).or_else(|| {
        sources
            .attached
            .iter()
            .find(|(n, _)| *n == format!("spec-{spec_path}"))
            .map(|(_, b)| (b.clone(), "attached to the report".to_string()))
    });
    let Some((spec_bytes, spec_where)) = spec_found else {
        v.push(
            "spec",
            false,
            format!("{spec_path} was not found (give its folder with --data-dir)"),
        );
        return Ok(v);
    };
    let spec_hash = sha256_hex(&spec_bytes);
    let spec_ok = spec_hash == recorded.provenance.spec.sha256;
    v.push(
        "spec",
        spec_ok,
        if spec_ok {
            format!("{spec_path} ({spec_where}) sha256 {}", short(&spec_hash))
        } else {
            format!(
                "{spec_path} ({spec_where}) hashes to {}, recorded {}: the spec was edited",
                short(&spec_hash),
                short(&recorded.provenance.spec.sha256)
            )
        },
    );

    let mut inputs_ok = true;
    for input in &recorded.provenance.inputs {
        match sources.find(&input.path) {
            None => {
                inputs_ok = false;
                v.push(
                    "input",
                    false,
                    format!(
                        "{} was not found (give its folder with --data-dir)",
                        input.path
                    ),
                );
            }
            Some((b, found)) => {
                let h = sha256_hex(&b);
                let ok = h == input.sha256;
                inputs_ok &= ok;
                v.push(
                    "input",
                    ok,
                    if ok {
                        format!("{} ({found}) sha256 {}", input.path, short(&h))
                    } else {
                        format!(
                            "{} ({found}) hashes to {}, recorded {}: the data changed",
                            input.path,
                            short(&h),
                            short(&input.sha256)
                        )
                    },
                );
            }
        }
    }

    let ours = env!("CARGO_PKG_VERSION");
    if recorded.tool.version != ours {
        v.push(
            "tool version",
            true,
            format!(
                "recorded with surety {}, rechecked with surety {ours}: numbers may differ",
                recorded.tool.version
            ),
        );
    }

    let Some(date) = recorded_date(&recorded) else {
        v.push(
            "report date",
            false,
            format!("`{}` is not a recorded date", recorded.study.date),
        );
        return Ok(v);
    };
    // Recompute from the bytes that were checked above, in a scratch folder of our own so that
    // relative paths resolve to exactly those bytes.
    let recomputed = match recompute(&recorded, &spec_bytes, &sources, date) {
        Ok(r) => r,
        Err(e) => {
            v.push("recomputation", false, format!("the analysis failed: {e}"));
            return Ok(v);
        }
    };
    let same = recomputed.results_json == results_bytes;
    let detail = if same {
        "the recomputed results are identical, byte for byte".to_string()
    } else {
        let diffs = differences(&results_bytes, &recomputed.results_json);
        if diffs.is_empty() {
            "same values, but the file's bytes differ from the canonical form".to_string()
        } else {
            diffs.join("; ")
        }
    };
    v.push("recomputed results", same, detail);
    let _ = inputs_ok && spec_ok;

    if is_pdf {
        let ok = recomputed.pdf == bytes;
        v.push(
            "report bytes",
            ok,
            if ok {
                format!(
                    "the report re-renders byte for byte (sha256 {})",
                    short(&sha256_hex(&bytes))
                )
            } else {
                format!(
                    "the re-rendered report hashes to {}, this file to {}",
                    short(&sha256_hex(&recomputed.pdf)),
                    short(&sha256_hex(&bytes))
                )
            },
        );
    }
    Ok(v)
}

/// The report date a result was made with.
fn recorded_date(a: &Analysis) -> Option<ReportDate> {
    let mut parts = a.study.date.splitn(3, '-');
    let year: i32 = parts.next()?.parse().ok()?;
    let month: u8 = parts.next()?.parse().ok()?;
    let day: u8 = parts.next()?.parse().ok()?;
    let source = match a.study.date_source.as_str() {
        "spec" => DateSource::Spec,
        "SOURCE_DATE_EPOCH" => DateSource::SourceDateEpoch,
        "clock" => DateSource::Clock,
        _ => return None,
    };
    Some(ReportDate {
        year,
        month,
        day,
        source,
    })
}

/// Run the recorded study again on the located bytes.
fn recompute(
    recorded: &Analysis,
    spec_bytes: &[u8],
    sources: &Sources,
    date: ReportDate,
) -> Result<study::Artifacts, Error> {
    let scratch = tempdir()?;
    let result = (|| {
        // Inputs named with `..` must still land inside the scratch folder: put the spec that
        // many folders deep. Absolute paths cannot be recreated safely and are refused.
        let mut depth = 0;
        for input in &recorded.provenance.inputs {
            let p = Path::new(&input.path);
            if p.is_absolute() {
                return Err(Error::Usage(format!(
                    "the input {} is recorded with an absolute path",
                    input.path
                )));
            }
            let ups = p
                .components()
                .filter(|c| matches!(c, std::path::Component::ParentDir))
                .count();
            depth = depth.max(ups);
        }
        let mut base = scratch.clone();
        for i in 0..depth {
            base.push(format!("d{i}"));
        }
        let spec_name = Path::new(&recorded.provenance.spec.path)
            .file_name()
            .map(|n| n.to_string_lossy().to_string())
            .unwrap_or_else(|| "study.yaml".to_string());
        let spec_path = base.join(&spec_name);
        write(&spec_path, spec_bytes)?;
        for input in &recorded.provenance.inputs {
            if let Some((bytes, _)) = sources.find(&input.path) {
                write(&base.join(&input.path), &bytes)?;
            }
        }
        let (spec, bytes) = study::load_spec(&spec_path)?;
        if let Some(t) = spec.report.template.as_deref().filter(|t| *t != "default")
            && !Path::new(t).is_absolute()
            && let Some((bytes, _)) = sources.find(t)
        {
            write(&base.join(t), &bytes)?;
        }
        let mut prepared = study::analyse_loaded(
            spec,
            bytes,
            Path::new(&spec_name),
            &spec_name,
            &base,
            study::Occasion {
                date: DateRule::Fixed(date),
                looks: study::LookSource::Recorded(
                    crate::analysis::looks::LookContext::of_results(recorded),
                ),
            },
            &mut |_, _| {},
        )?;
        study::render(&mut prepared)
    })();
    let _ = fs::remove_dir_all(&scratch);
    result
}

fn write(path: &Path, bytes: &[u8]) -> Result<(), Error> {
    let to_err = |source| Error::Write {
        path: path.display().to_string(),
        source,
    };
    if let Some(parent) = path.parent() {
        fs::create_dir_all(parent).map_err(to_err)?;
    }
    fs::write(path, bytes).map_err(to_err)
}

fn tempdir() -> Result<PathBuf, Error> {
    let base = std::env::temp_dir();
    for attempt in 0..100u32 {
        let dir = base.join(format!("surety-verify-{}-{attempt}", std::process::id()));
        if fs::create_dir(&dir).is_ok() {
            return Ok(dir);
        }
    }
    Err(Error::Write {
        path: base.display().to_string(),
        source: std::io::Error::other("cannot create a scratch folder"),
    })
}

/// The JSON paths whose values differ between two results documents (at most a few).
fn differences(recorded: &[u8], recomputed: &[u8]) -> Vec<String> {
    let (Ok(a), Ok(b)) = (
        serde_json::from_slice::<Value>(recorded),
        serde_json::from_slice::<Value>(recomputed),
    ) else {
        return vec!["the recorded results could not be compared".to_string()];
    };
    let mut out = Vec::new();
    diff("", &a, &b, &mut out);
    // The verdict and the primary bounds first: they are what a reader must see.
    let rank = |d: &String| {
        if d.contains("verdict") {
            0
        } else if d.contains(".primary.") && !d.contains(".display.") {
            1
        } else if d.contains(".display.") || d.contains(".curve.") {
            3
        } else {
            2
        }
    };
    out.sort_by_key(rank);
    let total = out.len();
    out.truncate(6);
    if total > out.len() {
        out.push(format!("and {} more differences", total - out.len()));
    }
    out
}

fn diff(path: &str, a: &Value, b: &Value, out: &mut Vec<String>) {
    match (a, b) {
        (Value::Object(x), Value::Object(y)) => {
            for (k, va) in x {
                let p = if path.is_empty() {
                    k.clone()
                } else {
                    format!("{path}.{k}")
                };
                match y.get(k) {
                    Some(vb) => diff(&p, va, vb, out),
                    None => out.push(format!("{p}: recorded, not recomputed")),
                }
            }
            for k in y.keys().filter(|k| !x.contains_key(*k)) {
                let p = if path.is_empty() {
                    k.clone()
                } else {
                    format!("{path}.{k}")
                };
                out.push(format!("{p}: recomputed, not recorded"));
            }
        }
        (Value::Array(x), Value::Array(y)) if x.len() == y.len() => {
            for (i, (va, vb)) in x.iter().zip(y).enumerate() {
                diff(&format!("{path}[{i}]"), va, vb, out);
            }
        }
        _ if a != b => out.push(format!(
            "{path}: recorded {}, recomputed {}",
            clip(a),
            clip(b)
        )),
        _ => {}
    }
}

fn clip(v: &Value) -> String {
    let s = v.to_string();
    if s.chars().count() > 60 {
        format!("{}…", s.chars().take(60).collect::<String>())
    } else {
        s
    }
}
