//! `surety methods`: the catalogue and its validity table.

use crate::bounds::{ASSUMPTIONS, CATALOGUE};
use crate::error::Error;
use std::fmt::Write;

/// Arguments of `surety methods`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Print the catalogue as JSON.
    #[arg(long)]
    pub json: bool,
}

fn join<T: serde::Serialize>(items: &[T]) -> String {
    items
        .iter()
        .map(|i| {
            serde_json::to_value(i)
                .ok()
                .and_then(|v| v.as_str().map(str::to_string))
                .unwrap_or_default()
        })
        .collect::<Vec<_>>()
        .join(", ")
}

/// Print the catalogue.
pub fn run(args: Args) -> Result<i32, Error> {
    if args.json {
        let doc = serde_json::json!({
            "format": "surety-methods/1",
            "methods": CATALOGUE,
            "assumptions": ASSUMPTIONS,
        });
        let mut text = serde_json::to_string_pretty(&doc).unwrap_or_default();
        text.push('\n');
        super::print_stdout(&text);
        return Ok(0);
    }
    let mut out = String::new();
    for m in CATALOGUE {
        let _ = writeln!(out, "{:<12} {}", m.id, m.name);
        let _ = writeln!(out, "{:<12} outcomes: {}", "", join(m.outcomes));
        let _ = writeln!(out, "{:<12} dependence: {}", "", join(m.dependence));
        let _ = writeln!(out, "{:<12} guarantee: {}", "", m.guarantee.id());
        let _ = writeln!(out, "{:<12} assumptions: {}", "", m.assumptions.join(", "));
        let _ = writeln!(out, "{:<12} {}", "", m.citation);
        let _ = writeln!(out);
    }
    let _ = writeln!(
        out,
        "auto: binary outcomes with one planned look use `exact`."
    );
    super::print_stdout(&out);
    Ok(0)
}
