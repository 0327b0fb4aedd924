//! `surety plan`: sample sizes and operating characteristics before (or during) a campaign.

use crate::error::Error;
use crate::{output, report, study};
use std::path::PathBuf;

/// Arguments of `surety plan`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The study spec (YAML).
    pub spec: PathBuf,
    /// Write plan.json (and the plan report) into this folder.
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    /// Print the plan JSON on stdout (and nothing else there).
    #[arg(long)]
    pub json: bool,
}

/// Plan the study, print the tables, and write the plan files when asked.
pub fn run(args: Args) -> Result<i32, Error> {
    let planned = study::plan(&args.spec)?;
    let mut json = serde_json::to_vec_pretty(&planned.plan).unwrap_or_default();
    json.push(b'\n');
    let text =
        report::plan_summary::summary(&planned.spec, &planned.plan, &planned.criteria_sha256);
    if let Some(out) = &args.out {
        output::write_all(out, &[("plan.json", &json)])?;
    }
    if args.json {
        super::print_stdout(&String::from_utf8_lossy(&json));
        eprint!("{text}");
    } else {
        super::print_stdout(&text);
    }
    if let Some(out) = &args.out {
        eprintln!("wrote {}", out.join("plan.json").display());
    }
    Ok(0)
}
