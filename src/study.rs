//! One study from file to artifacts: read the spec, analyse it, render results.json and the
//! PDF in memory. Writing the files is left to the caller, so nothing is written unless
//! everything succeeded.

use crate::analysis::looks::LookContext;
use crate::analysis::model::{LedgerInfo, LookArm, LookRecord, Verdict};
use crate::analysis::{self, Context, model::Analysis};
use crate::error::Error;
use crate::ledger::{self, Entry, EntryKind, Ledger, LockedLedger};
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
#[derive(Debug)]
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
    /// The ledger line this run will append once its outputs exist, with the ledger held
    /// locked until then.
    pub pending: Option<PendingLook>,
    /// With [`LedgerUse::Peek`]: what the ledger holds and what a run would record.
    pub ledger_preview: Option<String>,
}

/// How a run treats the study's look ledger.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum LedgerUse {
    /// Verify the ledger and record this run as a look (or a re-issue of one).
    Record {
        /// When the run happens (RFC 3339, UTC), written on the ledger line.
        time: String,
    },
    /// `--new-ledger`: set the existing ledger aside, unread, and start a new one with this
    /// run as look 1.
    StartNew {
        /// When the run happens (RFC 3339, UTC).
        time: String,
    },
    /// Read and verify the ledger if there is one, but write nothing (`surety check`).
    Peek,
    /// `--no-ledger`: do not touch the ledger; the result is not a registered look.
    Skip,
}

/// When an analysis happens: its report date and the looks before it.
#[derive(Debug, Clone)]
pub struct Occasion {
    /// How the report date is found.
    pub date: DateRule,
    /// Where the earlier looks are known from.
    pub looks: LookSource,
}

/// Where the looks before this one are known from.
#[derive(Debug, Clone)]
pub enum LookSource {
    /// The study's ledger (a new run).
    Ledger(LedgerUse),
    /// The recorded results of a report (a recomputation by `surety verify`).
    Recorded(LookContext),
}

/// A ledger line waiting to be appended, and the lock that keeps other runs out until then.
#[derive(Debug)]
pub struct PendingLook {
    /// `None` while the ledger does not exist yet: it is created, and locked, only when the
    /// look is recorded, so that a run that fails leaves nothing behind.
    ledger: Option<LockedLedger>,
    path: PathBuf,
    state: Ledger,
    /// The first line of a new ledger, when this run starts one.
    new_ledger: Option<Entry>,
    /// The look or re-issue line, without its results digest.
    entry: Entry,
}

/// The ledger file of a study: `looks.ledger` relative to the spec, else
/// `<spec stem>.ledger.jsonl` beside it.
pub fn ledger_path(spec: &Spec, spec_path: &Path) -> PathBuf {
    let base = spec_path.parent().unwrap_or_else(|| Path::new(""));
    match &spec.looks.ledger {
        Some(p) => base.join(p),
        None => {
            let stem = spec_path
                .file_stem()
                .map(|s| s.to_string_lossy().to_string())
                .unwrap_or_else(|| "study".to_string());
            base.join(format!("{stem}.ledger.jsonl"))
        }
    }
}

fn ledger_error(path: &Path, mut error: ledger::LedgerError) -> Error {
    // The edge prints the location once, as path:line; the ledger's own message may start
    // with the path too.
    let prefix = format!("{}: ", path.display());
    if let Some(rest) = error.message.strip_prefix(&prefix) {
        error.message = rest.to_string();
    }
    Error::Ledger {
        path: path.display().to_string(),
        error,
    }
}

fn record_of(e: &Entry) -> LookRecord {
    LookRecord {
        look: e.look,
        time: Some(e.time.clone()),
        method: e.method.clone(),
        guarantee: e.guarantee.clone(),
        delta: e.delta,
        spent: e.delta_spent,
        verdict: match e.verdict.as_str() {
            "pass" => Verdict::Pass,
            "fail" => Verdict::Fail,
            _ => Verdict::Inconclusive,
        },
        arms: e
            .arms
            .iter()
            .map(|a| LookArm {
                name: a.name.clone(),
                n: a.n,
                upper: a.upper,
                lower: a.lower,
            })
            .collect(),
    }
}

/// The look context a verified ledger gives a run with look key `key`: a re-issue of the look
/// with that key, or the next look.
fn context_from(state: &Ledger, key: &str, file: &str, status_new: &str) -> LookContext {
    let looks = state.looks();
    // A first look extends no chain: it starts the ledger.
    let previous = (!state.entries.is_empty()).then(|| state.head());
    match state.find_key(key) {
        Some(e) => LookContext {
            look: e.look,
            earlier: looks
                .iter()
                .filter(|l| l.look < e.look)
                .map(|l| record_of(l))
                .collect(),
            ledger: LedgerInfo {
                status: "re-issue".to_string(),
                file: Some(file.to_string()),
                previous,
                new_ledger: None,
            },
        },
        None => LookContext {
            look: state.next_look(),
            earlier: looks.iter().map(|l| record_of(l)).collect(),
            ledger: LedgerInfo {
                status: status_new.to_string(),
                file: Some(file.to_string()),
                previous,
                new_ledger: None,
            },
        },
    }
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
    ledger_use: LedgerUse,
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
        Occasion {
            date: DateRule::Resolve(env.clone()),
            looks: LookSource::Ledger(ledger_use),
        },
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
    occasion: Occasion,
    progress: &mut dyn FnMut(u64, u64),
) -> Result<Prepared, Error> {
    let Occasion {
        date: date_rule,
        looks,
    } = occasion;
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
    let date = match &date_rule {
        DateRule::Resolve(env) => provenance::resolve_date(
            spec.study.date.as_ref().map(|d| (d.year, d.month, d.day)),
            env.source_date_epoch.as_deref(),
            env.now_unix_seconds,
        )?,
        DateRule::Fixed(date) => *date,
    };
    let data = load_data(&spec, base, progress)?;
    let primary = analysis::select_methods(&spec)?.primary;
    let key = provenance::look_key(&spec, primary.id, &data.inputs);
    let spec_sha256 = sha256_hex(&spec_bytes);
    let mut preview = None;
    let (look_context, pending) = match looks {
        LookSource::Recorded(c) => (c, None),
        LookSource::Ledger(u) => {
            let path = ledger_path(&spec, &base.join(spec_name));
            let file = path
                .file_name()
                .map(|f| f.to_string_lossy().to_string())
                .unwrap_or_default();
            match u {
                LedgerUse::Peek => {
                    let state = match fs::read(&path) {
                        Ok(bytes) => Ledger::parse(&bytes).map_err(|e| ledger_error(&path, e))?,
                        Err(e) if e.kind() == std::io::ErrorKind::NotFound => Ledger::default(),
                        Err(source) => {
                            return Err(Error::Read {
                                path: path.display().to_string(),
                                source,
                            });
                        }
                    };
                    let mut c = context_from(&state, &key, &file, "not-registered");
                    let looks = state.looks().len();
                    preview = Some(format!(
                        "{file}: {} look{} recorded, chain verified; `surety run` now would {}",
                        looks,
                        if looks == 1 { "" } else { "s" },
                        if c.ledger.status == "re-issue" {
                            format!("re-issue look {} (same inputs and claim)", c.look)
                        } else {
                            format!("record look {}", c.look)
                        }
                    ));
                    c.ledger.status = "not-registered".to_string();
                    (c, None)
                }
                LedgerUse::Record { ref time } | LedgerUse::StartNew { ref time } => {
                    let time = time.clone();
                    let start_new = matches!(u, LedgerUse::StartNew { .. });
                    // A first look creates nothing until it is recorded; an existing ledger is
                    // locked now and held until then, so that no other run can take the same
                    // look number.
                    let mut locked = if path.exists() {
                        Some(LockedLedger::open(&path).map_err(|e| ledger_error(&path, e))?)
                    } else {
                        None
                    };
                    // A new ledger does not read the old one: it may be the damaged file the
                    // user is leaving behind. It is set aside only when the look is recorded.
                    let state = match locked.as_mut() {
                        Some(l) if !start_new => l.read().map_err(|e| ledger_error(&path, e))?,
                        _ => Ledger::default(),
                    };
                    let mut c = context_from(&state, &key, &file, "registered");
                    let new_ledger = start_new.then(|| Entry {
                        format: ledger::LEDGER_FORMAT.to_string(),
                        seq: 0,
                        kind: EntryKind::NewLedger,
                        look: 0,
                        time: time.clone(),
                        key: String::new(),
                        spec_sha256: spec_sha256.clone(),
                        inputs: Vec::new(),
                        arms: Vec::new(),
                        method: String::new(),
                        guarantee: String::new(),
                        delta: 0.0,
                        verdict: String::new(),
                        delta_spent: 0.0,
                        results_sha256: String::new(),
                        note: Some("started with --new-ledger".to_string()),
                        prev: String::new(),
                        hash: String::new(),
                    });
                    if start_new {
                        c.ledger.new_ledger = Some(format!(
                            "this look started a new ledger (--new-ledger); any earlier {file} \
                             was kept beside it under another name"
                        ));
                    }
                    let kind = if c.ledger.status == "re-issue" {
                        EntryKind::ReIssue
                    } else {
                        EntryKind::Look
                    };
                    let entry = Entry {
                        format: ledger::LEDGER_FORMAT.to_string(),
                        seq: 0,
                        kind,
                        look: c.look,
                        time,
                        key: key.clone(),
                        spec_sha256: spec_sha256.clone(),
                        inputs: data
                            .inputs
                            .iter()
                            .map(|f| ledger::InputDigest {
                                path: f.path.clone(),
                                sha256: f.sha256.clone(),
                            })
                            .collect(),
                        arms: Vec::new(),
                        method: primary.id.to_string(),
                        guarantee: primary.guarantee.id().to_string(),
                        delta: 0.0,
                        verdict: String::new(),
                        delta_spent: 0.0,
                        results_sha256: String::new(),
                        note: None,
                        prev: String::new(),
                        hash: String::new(),
                    };
                    (
                        c,
                        Some(PendingLook {
                            ledger: locked,
                            path: path.clone(),
                            state,
                            new_ledger,
                            entry,
                        }),
                    )
                }
                LedgerUse::Skip => (LookContext::unregistered(), None),
            }
        }
    };
    let ctx = Context {
        date,
        spec_name: spec_name.to_string(),
        spec_sha256,
        template_sha256: report::template_sha256(template_text),
        fonts_sha256: report::fonts_sha256(),
        looks: look_context,
    };
    let analysis = analysis::analyse(&spec, &data, &ctx)?;
    let embedded = embedded_data(&spec, base, &data)?;
    Ok(Prepared {
        spec,
        spec_bytes,
        spec_path: spec_path.to_path_buf(),
        template,
        analysis,
        embedded,
        pending,
        ledger_preview: preview,
    })
}

/// Append this run's line to the ledger (after a new-ledger line, and after setting the old
/// file aside, when the run starts a new ledger), with the digest of the results it produced.
/// Call after [`render`] and before writing the outputs: a look is counted even if writing
/// them fails, and a rerun then re-issues it.
pub fn record_look(prepared: &mut Prepared) -> Result<(), Error> {
    let Some(p) = prepared.pending.as_mut() else {
        return Ok(());
    };
    let path = p.path.clone();
    let fresh = p.ledger.is_none();
    let mut locked = match p.ledger.take() {
        Some(l) => l,
        None => LockedLedger::open(&path).map_err(|e| ledger_error(&path, e))?,
    };
    if fresh {
        let now = locked.read().map_err(|e| ledger_error(&path, e))?;
        if !now.entries.is_empty() {
            return Err(ledger_error(
                &path,
                ledger::LedgerError {
                    line: None,
                    column: None,
                    kind: ledger::LedgerErrorKind::Changed,
                    message: "another run started this ledger while this one was running; \
                              nothing was recorded and no report was written. Run again"
                        .to_string(),
                },
            ));
        }
    }
    let look = &prepared.analysis.looks;
    let own = look.history.last();
    let mut entry = p.entry.clone();
    entry.results_sha256 = prepared.analysis.provenance.results_sha256.clone();
    entry.verdict = verdict_id(prepared.analysis.verdict).to_string();
    entry.delta = own.map_or(0.0, |o| o.delta);
    entry.delta_spent = if entry.kind == EntryKind::Look {
        look.delta_spent
    } else {
        0.0
    };
    entry.arms = prepared
        .analysis
        .arms
        .iter()
        .map(|a| {
            let mine = own.and_then(|o| o.arms.iter().find(|x| x.name == a.name));
            ledger::ArmLook {
                name: a.name.clone(),
                n: a.n,
                upper: mine.and_then(|m| m.upper),
                lower: mine.and_then(|m| m.lower),
                verdict: verdict_id(a.verdict).to_string(),
            }
        })
        .collect();
    if let Some(mut first) = p.new_ledger.take() {
        if let Some((old, sha)) = locked.set_aside().map_err(|e| ledger_error(&path, e))? {
            first.note = Some(format!(
                "started with --new-ledger; the previous ledger was kept as {} (SHA-256 {sha})",
                old.file_name()
                    .map(|f| f.to_string_lossy().to_string())
                    .unwrap_or_default()
            ));
        }
        p.state = Ledger::default();
        let (sealed, line) = p.state.seal(first);
        locked.append(&line).map_err(|e| ledger_error(&path, e))?;
        p.state.entries.push(sealed);
    }
    let (sealed, line) = p.state.seal(entry);
    locked.append(&line).map_err(|e| ledger_error(&path, e))?;
    p.state.entries.push(sealed);
    Ok(())
}

fn verdict_id(v: Verdict) -> &'static str {
    match v {
        Verdict::Pass => "pass",
        Verdict::Fail => "fail",
        Verdict::Inconclusive => "inconclusive",
    }
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
            // An anytime primary draws its bound along the trials, which needs the stream.
            s.primary.path.is_some() && s.primary.guarantee == crate::bounds::Guarantee::Anytime
                || std::iter::once(s.primary).chain(s.compare).any(|m| {
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
