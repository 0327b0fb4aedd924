//! `surety init`: write an annotated starter spec.

use crate::error::Error;
use crate::output;
use std::path::PathBuf;

/// The annotated starter spec for binary outcomes; it runs as it is.
pub const STARTER_BINARY: &str = include_str!("../../templates/init-binary.yaml");

/// Kind of outcome the starter spec is for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum OutcomeArg {
    /// Events counted in trials (pass/fail).
    Binary,
    /// Values in a declared range.
    Bounded,
}

/// Arguments of `surety init`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Where to write the spec.
    pub file: PathBuf,
    /// Kind of outcome.
    #[arg(long, value_enum, default_value = "binary")]
    pub outcome: OutcomeArg,
    /// Overwrite the file if it exists.
    #[arg(long)]
    pub force: bool,
}

/// Write the starter spec.
pub fn run(args: Args) -> Result<i32, Error> {
    if args.outcome == OutcomeArg::Bounded {
        return Err(Error::Usage(
            "bounded outcomes are not analysed by this version of surety; use --outcome binary"
                .to_string(),
        ));
    }
    output::write_new(&args.file, STARTER_BINARY.as_bytes(), args.force)?;
    super::print_stdout(&format!(
        "wrote {f}\nedit it, then: surety check {f} && surety run {f}\n",
        f = args.file.display()
    ));
    Ok(0)
}
