//! Study specs, format 1: reading `study.yaml` into a checked [`Spec`], with every refusal placed
//! at file:line:column (DESIGN.md §5).
//!
//! Reading happens in four steps, each refusing what the next would get wrong:
//! 1. `yaml`: UTF-8 text → one YAML 1.2 document as a tree of marked nodes (no tags, no
//!    duplicate keys, a mapping at the top);
//! 2. the format check: `surety: 1`;
//! 3. `de`: serde fills the spec as written (`raw`): unknown, missing and mistyped keys;
//! 4. `validate`: the meaning: ranges, exactly-one-of rules, keys that depend on other keys.
//!
//! Only [`load`] touches the file system. [`schema`] describes the same format as a JSON Schema.

pub(crate) mod confidence;
mod date;
mod de;
mod error;
mod model;
mod number;
mod raw;
mod schema;
pub(crate) mod suggest;
mod validate;
mod yaml;

use std::cell::RefCell;
use std::path::Path;

pub use error::{Location, SpecError};
pub use model::*;
pub use schema::{SCHEMA_ID, schema};

use error::{Mark, RawError};

/// Reads and checks the spec at `path`. Messages name the file as `path` is written.
pub fn load(path: &Path) -> Result<Spec, SpecError> {
    let name = path.display().to_string();
    let bytes = std::fs::read(path).map_err(|e| {
        SpecError::new(
            None,
            None,
            format!("cannot read the study spec {name}: {e}"),
        )
    })?;
    parse_bytes(&name, &bytes)
}

/// Checks a spec held in memory as bytes; refuses text that is not UTF-8, placing the first
/// bad byte.
pub fn parse_bytes(source_name: &str, bytes: &[u8]) -> Result<Spec, SpecError> {
    match std::str::from_utf8(bytes) {
        Ok(text) => parse(source_name, text),
        Err(e) => Err(not_utf8(bytes, e.valid_up_to()).into_spec_error(source_name)),
    }
}

/// Checks a spec held in memory. `source_name` is used in messages and locations. Pure.
pub fn parse(source_name: &str, text: &str) -> Result<Spec, SpecError> {
    read(source_name, text).map_err(|e| e.into_spec_error(source_name))
}

fn read(source_name: &str, text: &str) -> Result<Spec, RawError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let root = yaml::parse_document(text)?;
    check_format(&root)?;
    let trace = RefCell::new(de::Trace::new());
    let raw: raw::RawSpec = de::from_node(&root, &trace).map_err(with_missing_hint)?;
    validate::build(raw, &trace.into_inner(), source_name)
}

fn not_utf8(bytes: &[u8], valid_up_to: usize) -> RawError {
    let before = String::from_utf8_lossy(&bytes[..valid_up_to]);
    let line = before.matches('\n').count() + 1;
    let col = before.rsplit('\n').next().map_or(0, |l| l.chars().count()) + 1;
    let byte = bytes.get(valid_up_to).copied().unwrap_or_default();
    let e = RawError::new(
        Mark { line, col },
        None,
        format!("the file is not UTF-8 text: byte 0x{byte:02X} does not fit here"),
    );
    if bytes.starts_with(&[0xFF, 0xFE]) || bytes.starts_with(&[0xFE, 0xFF]) {
        e.hint("the file looks like UTF-16; save it as UTF-8")
    } else {
        e.hint("save the file as UTF-8 (a Latin-1 or Windows-1252 file shows this error at its first accented letter)")
    }
}

/// The key `surety` tells a study spec from any other YAML file, and its format version.
/// Checked before anything else so that a foreign file gets this message, not a list of
/// unknown keys.
fn check_format(root: &yaml::Node) -> Result<(), RawError> {
    let Some((_, value)) = root.get("surety") else {
        return Err(RawError::new(
            root.mark,
            Some("surety".to_owned()),
            "this file is not a surety study spec: it has no `surety` key",
        )
        .hint("a study spec starts with the line `surety: 1`, the format version"));
    };
    let plain = matches!(
        &value.value,
        yaml::Value::Scalar {
            style: yaml::Style::Plain,
            ..
        }
    );
    match value.scalar_text().filter(|_| plain && !value.is_null()).map(number::parse_integer) {
        Some(Ok((false, 1))) => Ok(()),
        Some(Ok((false, n))) => Err(RawError::new(value.mark, Some("surety".to_owned()), format!("format {n} is not known to this version of surety, which reads format 1"))
            .hint("use the surety version that wrote this spec, or rewrite it in format 1")),
        _ => Err(RawError::new(
            value.mark,
            Some("surety".to_owned()),
            format!("this file is not a surety study spec: `surety` must be the format version 1, found {}", value.describe()),
        )
        .hint("write `surety: 1`")),
    }
}

/// What to write for a required key that is missing, by its path (list indices dropped).
fn with_missing_hint(e: RawError) -> RawError {
    if e.hint.is_some() {
        return e;
    }
    let key = e.key.as_deref().unwrap_or_default();
    if !matches!(e.pending, error::Pending::Missing(_)) {
        // A section written as a single value: say how the section is written.
        let section = match key {
            "data" => {
                "`data` is a mapping: write `trials:` and `events:`, `arms:`, or `file:` indented under it (or `n:`, `mean:` and `sd:` for a summary of bounded values)"
            }
            "study" | "claim" | "outcome" | "dependence" | "looks" | "method" | "plan"
            | "report" | "attestations" => {
                "this section is a mapping: write its keys indented under it, one per line"
            }
            _ => return e,
        };
        return if e.message.starts_with("expected a mapping") {
            e.hint(section)
        } else {
            e
        };
    }
    let mut path: String = key
        .split('[')
        .map(|part| part.split_once(']').map_or(part, |(_, rest)| rest))
        .collect();
    if let Some(field) = path
        .strip_prefix("attestations.")
        .and_then(|rest| rest.rsplit_once('.'))
        .map(|(_, f)| f.to_owned())
    {
        path = format!("attestations.{field}");
    }
    let hint = match path.as_str() {
        "study" => {
            "every spec names its study, for example study: {id: VER-0001, title: Seal leak rate}"
        }
        "study.id" => "the document id printed on every page, for example id: VER-0001",
        "study.title" => "a one-line title, printed on every page",
        "claim" => "the claim says what is guaranteed: quantity, side, limit and confidence",
        "claim.quantity" => {
            "what the rate is of, in words, for example quantity: leak rate per seal"
        }
        "claim.side" => {
            "upper (the true rate is at most the limit), lower (at least the limit) or two-sided"
        }
        "claim.limit" => "the limit the bound is compared with, for example limit: 0.01 for 1 %",
        "claim.confidence" => "for example confidence: 0.95 or confidence: \"95%\"",
        "outcome" => "what one trial yields, for example outcome: {type: binary, event: leak}",
        "outcome.type" => {
            "binary (each trial passes or fails) or bounded (a value in a declared range)"
        }
        "data" => {
            "give `trials` and `events`, a list of `arms`, a `file`, or (bounded values) `n`, `mean` and `sd`"
        }
        "data.arms.name" => {
            "each arm is written {name: A, trials: 100, events: 1}, or for bounded values {name: A, n: 40, mean: 1.2, sd: 0.3}"
        }
        "attestations.by" => "who confirms the assumption, for example by: Test lead",
        "signatures.role" | "signatures.meaning" => {
            "each signature is written {role: Author, name: ..., meaning: authored}"
        }
        _ => return e,
    };
    e.hint(hint)
}
