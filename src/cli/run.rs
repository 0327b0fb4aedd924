//! `surety run`: compute the guarantee and write the report.

use crate::analysis::model::Verdict;
use crate::error::Error;
use crate::{output, report, study};
use std::path::PathBuf;

/// Arguments of `surety run`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The study spec (YAML).
    pub spec: PathBuf,
    /// Output folder [default: <spec stem>-report/ beside the spec].
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    /// Print the results JSON on stdout (and nothing else there).
    #[arg(long)]
    pub json: bool,
    /// Exit with status 1 when the verdict is not pass.
    #[arg(long)]
    pub gate: bool,
    /// Set the study's ledger aside (kept under a new name) and start a new one with this run
    /// as look 1; the report says so.
    #[arg(long, conflicts_with = "no_ledger")]
    pub new_ledger: bool,
    /// Leave the ledger alone: for exploration only, the report says "not a registered look".
    #[arg(long)]
    pub no_ledger: bool,
}

/// Run the study and write its artifacts.
pub fn run(args: Args) -> Result<i32, Error> {
    let mut bar = super::progress::ProgressBar::new("reading the data");
    let env = super::environment();
    let time = crate::provenance::utc_timestamp(env.now_unix_seconds);
    let ledger = if args.no_ledger {
        study::LedgerUse::Skip
    } else if args.new_ledger {
        study::LedgerUse::StartNew { time }
    } else {
        study::LedgerUse::Record { time }
    };
    // A first look creates its ledger only when it is recorded; if a parallel run created it
    // in the meantime, this run's look number is stale and the whole run is done again.
    let mut attempt = 0;
    let (prepared, artifacts) = loop {
        attempt += 1;
        let prepared = study::prepare(&args.spec, &env, ledger.clone(), &mut |d, t| {
            bar.update(d, t)
        });
        bar.finish();
        let mut prepared = prepared?;
        let artifacts = study::render(&mut prepared)?;
        match study::record_look(&mut prepared) {
            Err(Error::Ledger { error, .. })
                if error.kind == crate::ledger::LedgerErrorKind::Changed && attempt < 8 =>
            {
                continue;
            }
            Err(e) => return Err(e),
            Ok(()) => break (prepared, artifacts),
        }
    };
    let out = args
        .out
        .clone()
        .unwrap_or_else(|| study::default_out_dir(&args.spec));
    output::write_all(
        &out,
        &[
            ("results.json", &artifacts.results_json),
            ("report.pdf", &artifacts.pdf),
        ],
    )?;
    // Criteria that moved after registration are flagged on stderr as well as in the report.
    for c in &prepared.analysis.checklist {
        if c.id == "criteria-registered"
            && c.status == "open"
            && let Some(e) = &c.evidence
            && e.starts_with("the claim or plan changed")
        {
            eprintln!("warning: {e}");
        }
    }
    let wrote = format!(
        "wrote {} and {}\n",
        out.join("report.pdf").display(),
        out.join("results.json").display()
    );
    if args.json {
        super::print_stdout(&String::from_utf8_lossy(&artifacts.results_json));
        eprint!("{}", report::summary::summary(&prepared.analysis));
        eprint!("{wrote}");
    } else {
        let mut text = report::summary::summary(&prepared.analysis);
        text.push('\n');
        text.push_str(&wrote);
        super::print_stdout(&text);
    }
    let code = if args.gate && prepared.analysis.verdict != Verdict::Pass {
        1
    } else {
        0
    };
    Ok(code)
}
