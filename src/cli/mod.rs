//! Command-line interface: argument structs and dispatch. Each subcommand's file parses its
//! arguments and calls the library; nothing is computed here.

pub mod check;
pub mod completions;
pub mod init;
pub mod methods;
pub mod plan;
pub mod progress;
pub mod run;
pub mod schema;
pub mod verify;

use crate::error::Error;
use clap::{Parser, Subcommand};
use std::io::Write;

/// Finite-sample, distribution-free guarantees on failure rates, from a YAML study spec to a
/// PDF report.
#[derive(Debug, Parser)]
#[command(name = "surety", version, about, long_about = None, propagate_version = true)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

/// The subcommands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Write an annotated starter spec that runs as it is.
    Init(init::Args),
    /// Validate a spec and list the assumptions the guarantee will rest on.
    Check(check::Args),
    /// Sample sizes, operating characteristics and trials still needed, from the spec's claim
    /// and plan section.
    Plan(plan::Args),
    /// Compute the guarantee and write <out>/report.pdf and <out>/results.json.
    Run(run::Args),
    /// Recheck a report.pdf or results.json: hashes, recomputed numbers, report bytes.
    Verify(verify::Args),
    /// List the method catalogue and what each method is valid for.
    Methods(methods::Args),
    /// Print the JSON Schema of the study spec (for editors that validate YAML as you type).
    Schema(schema::Args),
    /// Print a shell completion script.
    Completions(completions::Args),
}

/// Run the parsed command; the returned number is the process exit code.
pub fn dispatch(cli: Cli) -> Result<i32, Error> {
    match cli.command {
        Command::Init(args) => init::run(args),
        Command::Check(args) => check::run(args),
        Command::Plan(args) => plan::run(args),
        Command::Run(args) => run::run(args),
        Command::Verify(args) => verify::run(args),
        Command::Methods(args) => methods::run(args),
        Command::Schema(args) => schema::run(args),
        Command::Completions(args) => completions::run(args),
    }
}

/// Write to standard output; a closed pipe (e.g. `| head`) ends the output quietly.
pub(crate) fn print_stdout(text: &str) {
    let mut out = std::io::stdout().lock();
    let _ = out.write_all(text.as_bytes());
    let _ = out.flush();
}

/// The environment facts the library needs, read here at the edge.
pub(crate) fn environment() -> crate::study::Environment {
    let now = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map(|d| d.as_secs() as i64)
        .unwrap_or(0);
    crate::study::Environment {
        source_date_epoch: std::env::var("SOURCE_DATE_EPOCH").ok(),
        now_unix_seconds: now,
    }
}
