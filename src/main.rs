//! The `surety` binary: parse arguments, call the library, map errors to exit codes.

use clap::Parser;

fn main() {
    let cli = surety::cli::Cli::parse();
    let code = match surety::cli::dispatch(cli) {
        Ok(code) => code,
        Err(e) => {
            eprintln!("error: {e}");
            e.exit_code()
        }
    };
    std::process::exit(code);
}
