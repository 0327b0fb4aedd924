//! `surety verify`: recheck a report or results file against its own evidence.

use crate::error::Error;
use std::fmt::Write;
use std::path::PathBuf;

/// Arguments of `surety verify`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// A report.pdf (which carries its spec and results) or a results.json.
    pub file: PathBuf,
    /// Folder holding the spec and data files that are not attached to the report.
    #[arg(long, value_name = "DIR")]
    pub data_dir: Option<PathBuf>,
}

/// Print one line per check; exit 0 when all agree, 3 otherwise.
pub fn run(args: Args) -> Result<i32, Error> {
    let v = crate::verify::verify(&args.file, args.data_dir.as_deref())?;
    let mut out = String::new();
    let _ = writeln!(out, "verify {}", args.file.display());
    for c in &v.checks {
        let mark = if c.agrees { "ok      " } else { "MISMATCH" };
        let _ = writeln!(out, "  {mark}  {:<18} {}", c.what, c.detail);
    }
    let failed = v.checks.iter().filter(|c| !c.agrees).count();
    if v.agrees() {
        let _ = writeln!(out, "all {} checks agree", v.checks.len());
    } else {
        let _ = writeln!(
            out,
            "{failed} of {} checks found a difference",
            v.checks.len()
        );
    }
    super::print_stdout(&out);
    Ok(if v.agrees() { 0 } else { 3 })
}
