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

/// What a method must be given, in words for the listing.
fn needs(m: &crate::bounds::Method) -> &'static str {
    use crate::bounds::Needs;
    match (m.counts.is_some(), m.bounded.map(|b| b.needs)) {
        (true, None) => "counts (events in trials)",
        (true, Some(_)) => "counts, or n and the mean of bounded values",
        (false, Some(Needs::Mean)) => "n and the mean",
        (false, Some(Needs::Moments)) => "n, mean and standard deviation (a summary will do)",
        (false, Some(Needs::Split)) => "the values one by one (a data file)",
        (false, Some(Needs::Observations)) => "every value in trial order (a data file)",
        (false, None) => "nothing this version can supply",
    }
}

/// Print the catalogue.
pub fn run(args: Args) -> Result<i32, Error> {
    if args.json {
        let methods: Vec<serde_json::Value> = CATALOGUE
            .iter()
            .map(|m| {
                let mut v = serde_json::to_value(m).unwrap_or_default();
                v["needs"] = serde_json::json!(needs(m));
                v
            })
            .collect();
        let doc = serde_json::json!({
            "format": "surety-methods/1",
            "methods": methods,
            "assumptions": ASSUMPTIONS,
        });
        let mut text = serde_json::to_string_pretty(&doc).unwrap_or_default();
        text.push('\n');
        super::print_stdout(&text);
        return Ok(0);
    }
    let mut out = String::new();
    for m in CATALOGUE {
        let _ = writeln!(out, "{:<22} {}", m.id, m.name);
        let _ = writeln!(out, "{:<22} outcomes: {}", "", join(m.outcomes));
        let _ = writeln!(out, "{:<22} needs: {}", "", needs(m));
        let _ = writeln!(out, "{:<22} dependence: {}", "", join(m.dependence));
        let _ = writeln!(out, "{:<22} guarantee: {}", "", m.guarantee.id());
        let _ = writeln!(out, "{:<22} assumptions: {}", "", m.assumptions.join(", "));
        let _ = writeln!(out, "{:<22} {}", "", m.citation);
        let _ = writeln!(out);
    }
    let _ = writeln!(
        out,
        "auto (decided from the spec alone): binary outcomes use `exact`; bounded outcomes \
         read from a data file use `betting`; bounded outcomes given as n, mean and sd use \
         `bernstein-empirical`."
    );
    super::print_stdout(&out);
    Ok(0)
}
