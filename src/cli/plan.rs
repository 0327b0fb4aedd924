//! `surety plan`: sample sizes and operating characteristics before (or during) a campaign.

use crate::error::Error;
use crate::{output, provenance, report, study};
use std::path::PathBuf;

/// Arguments of `surety plan`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The study spec (YAML).
    pub spec: PathBuf,
    /// Write plan.json and the plan report plan.pdf into this folder.
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    /// Print the plan JSON on stdout (and nothing else there).
    #[arg(long)]
    pub json: bool,
}

/// Plan the study, print the tables, and write the plan files when asked.
pub fn run(args: Args) -> Result<i32, Error> {
    let mut bar = super::progress::ProgressBar::new("reading the data");
    let planned = study::plan(&args.spec, &mut |d, t| bar.update(d, t));
    bar.finish();
    let planned = planned?;
    let mut json = serde_json::to_vec_pretty(&planned.plan).unwrap_or_default();
    json.push(b'\n');
    let text =
        report::plan_summary::summary(&planned.spec, &planned.plan, &planned.criteria_sha256);
    if let Some(out) = &args.out {
        let env = super::environment();
        let date = provenance::resolve_date(
            planned
                .spec
                .study
                .date
                .as_ref()
                .map(|d| (d.year, d.month, d.day)),
            env.source_date_epoch.as_deref(),
            env.now_unix_seconds,
        )?;
        let spec_name = args
            .spec
            .file_name()
            .map(|n| n.to_string_lossy().to_string())
            .unwrap_or_else(|| "study.yaml".to_string());
        let pdf = report::render_plan_pdf(&report::PlanInputs {
            spec: &planned.spec,
            plan: &planned.plan,
            plan_json: &json,
            criteria_sha256: &planned.criteria_sha256,
            spec_name: &spec_name,
            spec_bytes: &planned.spec_bytes,
            date,
        })?;
        output::write_all(out, &[("plan.json", &json), ("plan.pdf", &pdf)])?;
    }
    if args.json {
        super::print_stdout(&String::from_utf8_lossy(&json));
        eprint!("{text}");
    } else {
        super::print_stdout(&text);
    }
    if let Some(out) = &args.out {
        eprintln!(
            "wrote {} and {}",
            out.join("plan.pdf").display(),
            out.join("plan.json").display()
        );
    }
    Ok(0)
}
