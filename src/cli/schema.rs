//! `surety schema`: the JSON Schema of the study spec, for editors and other tools.

use crate::error::Error;

/// Arguments of `surety schema` (none).
#[derive(Debug, clap::Args)]
pub struct Args {}

/// Print the schema (pretty JSON, stable key order).
pub fn run(_args: Args) -> Result<i32, Error> {
    let mut text = serde_json::to_string_pretty(&crate::spec::schema()).unwrap_or_default();
    text.push('\n');
    super::print_stdout(&text);
    Ok(0)
}
