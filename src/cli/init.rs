//! `surety init`: write an annotated starter spec.

use crate::error::Error;
use crate::output;
use std::path::PathBuf;

/// The annotated starter spec for binary outcomes; it runs as it is.
pub const STARTER_BINARY: &str = include_str!("../../templates/init-binary.yaml");

/// The annotated starter spec for bounded outcomes; it runs as it is.
pub const STARTER_BOUNDED: &str = include_str!("../../templates/init-bounded.yaml");

/// File name of the schema the starter specs point editors to, written beside them.
pub const SCHEMA_FILE: &str = "surety-study.schema.json";

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

/// Write the starter spec, and the schema it names beside it for editors.
pub fn run(args: Args) -> Result<i32, Error> {
    let text = match args.outcome {
        OutcomeArg::Binary => STARTER_BINARY,
        OutcomeArg::Bounded => STARTER_BOUNDED,
    };
    output::write_new(&args.file, text.as_bytes(), args.force)?;
    let mut schema = serde_json::to_string_pretty(&crate::spec::schema()).unwrap_or_default();
    schema.push('\n');
    let schema_path = args
        .file
        .parent()
        .map(|p| p.join(SCHEMA_FILE))
        .unwrap_or_else(|| PathBuf::from(SCHEMA_FILE));
    // The schema is generated, but a file of that name may be somebody's: replace it only
    // when it is ours already (same text) or when asked to.
    let schema_note = match std::fs::read_to_string(&schema_path) {
        Ok(existing) if existing == schema => String::new(),
        Ok(_) if !args.force => format!(
            "kept the existing {} (pass --force to replace it with this version's schema)\n",
            schema_path.display()
        ),
        _ => {
            output::write_new(&schema_path, schema.as_bytes(), true)?;
            format!(
                "wrote {} (the spec's JSON Schema, for editors)\n",
                schema_path.display()
            )
        }
    };
    super::print_stdout(&format!(
        "wrote {f}\n{schema_note}edit it, then: surety check {f} && surety run {f}\n",
        f = args.file.display()
    ));
    Ok(0)
}
