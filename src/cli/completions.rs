//! `surety completions`: shell completion scripts generated from the argument definitions.

use crate::error::Error;
use clap::CommandFactory;

/// Arguments of `surety completions`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The shell.
    #[arg(value_enum)]
    pub shell: clap_complete::Shell,
}

/// Print the script.
pub fn run(args: Args) -> Result<i32, Error> {
    let mut cmd = super::Cli::command();
    let mut buf = Vec::new();
    clap_complete::generate(args.shell, &mut cmd, "surety", &mut buf);
    super::print_stdout(&String::from_utf8_lossy(&buf));
    Ok(0)
}
