//! Problems found while scanning a file, grouped by kind and column so that a file with a million
//! bad cells still gives a short message: how many, the first few lines, the first value.

use super::error::{Place, Problem, ProblemKind, quote_cell};
use crate::spec::suggest;

/// How many line (or row) numbers a repeated problem lists.
const LISTED: usize = 5;

/// One kind of problem in one column.
#[derive(Debug)]
struct Group {
    kind: ProblemKind,
    /// The column's name, when the problem concerns one column.
    column: Option<String>,
    count: u64,
    first: Place,
    positions: Vec<u64>,
    /// The first offending cell, as it will be shown (already quoted).
    first_text: String,
    /// Distinct offending texts (unknown arm names), at most [`LISTED`].
    names: Vec<String>,
}

/// What the messages need to know about the read.
#[derive(Debug, Default)]
pub(crate) struct Context<'a> {
    /// The declared range, for "outside the declared range [a, b]".
    pub range: Option<(f64, f64)>,
    /// The header's number of fields, for ragged rows.
    pub header_fields: usize,
    /// The arms the spec names.
    pub expected_arms: Option<&'a [String]>,
    /// The arms the spec names that have no rows: the likely meaning of a misspelt arm.
    pub arms_without_rows: &'a [&'a str],
}

/// Problems collected during one scan, grouped by (kind, column).
#[derive(Debug, Default)]
pub(crate) struct Tally {
    groups: Vec<Group>,
}

impl Tally {
    /// Records one problem. `text` is the offending cell; it is only copied for the first
    /// occurrence in its group (and, for unknown arms, for the first few distinct names).
    pub fn note(&mut self, kind: ProblemKind, column: Option<&str>, place: Place, text: &[u8]) {
        let pos = place.position();
        let found = self
            .groups
            .iter_mut()
            .find(|g| g.kind == kind && g.column.as_deref() == column);
        match found {
            Some(g) => {
                g.count += 1;
                if g.positions.len() < LISTED {
                    g.positions.push(pos);
                }
                if kind == ProblemKind::UnknownArm && g.names.len() < LISTED {
                    let name = quote_cell(text);
                    if !g.names.contains(&name) {
                        g.names.push(name);
                    }
                }
            }
            None => {
                let first_text = quote_cell(text);
                self.groups.push(Group {
                    kind,
                    column: column.map(str::to_owned),
                    count: 1,
                    first: place,
                    positions: vec![pos],
                    names: vec![first_text.clone()],
                    first_text,
                });
            }
        }
    }

    /// The problems, earliest first, with their messages.
    pub fn into_problems(self, ctx: &Context) -> Vec<Problem> {
        let mut problems: Vec<Problem> = self.groups.iter().map(|g| render(g, ctx)).collect();
        problems.sort_by_key(|p| p.place);
        problems
    }
}

/// `[0, 2.5]`.
pub(crate) fn range_text(low: f64, high: f64) -> String {
    format!("[{low}, {high}]")
}

fn render(g: &Group, ctx: &Context) -> Problem {
    let col = g
        .column
        .as_deref()
        .map(|c| format!(" in column `{c}`"))
        .unwrap_or_default();
    let noun = g.first.noun();
    let listed = {
        let mut s: Vec<String> = g.positions.iter().map(u64::to_string).collect();
        if g.count > g.positions.len() as u64 {
            s.push("…".to_owned());
        }
        format!(": {noun}s {}", s.join(", "))
    };
    let t = &g.first_text;
    let n = g.count;
    let one = n == 1;
    let range = ctx.range.map(|(a, b)| range_text(a, b)).unwrap_or_default();
    let blank_hint = "every row is one trial and needs a value; rows are never skipped";
    let (message, hint): (String, Option<String>) = match g.kind {
        ProblemKind::OutOfRange => (
            if one {
                format!("value {t} is outside the declared range {range}{col}")
            } else {
                format!(
                    "{n} values outside the declared range {range}{col}{listed}; the first is {t}"
                )
            },
            Some(
                "the range is part of the claim, fixed before the data are seen; values outside \
                 it are refused, never clipped"
                    .to_owned(),
            ),
        ),
        ProblemKind::NotFinite => (
            if one {
                format!("value {t}{col} is not a finite number")
            } else {
                format!("{n} values{col} that are not finite numbers{listed}; the first is {t}")
            },
            None,
        ),
        ProblemKind::Inexact => (
            if one {
                format!("integer {t}{col} has no exact double-precision value")
            } else {
                format!(
                    "{n} integers{col} without an exact double-precision value{listed}; the \
                     first is {t}"
                )
            },
            None,
        ),
        ProblemKind::EmptyCell => (
            if one {
                format!("empty cell{col}")
            } else {
                format!("{n} empty cells{col}{listed}")
            },
            Some(blank_hint.to_owned()),
        ),
        ProblemKind::NullValue => (
            if one {
                format!("null value{col}")
            } else {
                format!("{n} null values{col}{listed}")
            },
            Some(blank_hint.to_owned()),
        ),
        ProblemKind::NotANumber => (
            if one {
                format!("{t}{col} is not a number")
            } else {
                format!("{n} cells{col} that are not numbers{listed}; the first is {t}")
            },
            decimal_comma(t).then(|| "write decimals with a point (`1.5`, not `1,5`)".to_owned()),
        ),
        ProblemKind::NotBinary => (
            if one {
                format!("{t}{col} is not 0 or 1")
            } else {
                format!("{n} cells{col} that are neither 0 nor 1{listed}; the first is {t}")
            },
            Some("a binary outcome is 1 for an event and 0 otherwise".to_owned()),
        ),
        ProblemKind::BooleanText => (
            if one {
                format!("{t}{col} is text, not 0 or 1")
            } else {
                format!("{n} cells{col} holding text instead of 0 or 1{listed}; the first is {t}")
            },
            Some(
                "CSV and TSV carry no types, so binary outcomes are read only as 0 and 1: write 1 \
                 for an event and 0 otherwise"
                    .to_owned(),
            ),
        ),
        ProblemKind::UnknownArm => {
            let expected: Vec<&str> = ctx
                .expected_arms
                .unwrap_or_default()
                .iter()
                .map(String::as_str)
                .collect();
            let message = if one {
                format!("arm {t}{col} is not one of the arms the spec names")
            } else {
                format!(
                    "{n} rows{col} of arms the spec does not name ({}){listed}",
                    g.names.join(", ")
                )
            };
            let first = t.trim_matches('`');
            let hint = match suggest::closest(first, ctx.arms_without_rows) {
                Some(c) => format!(
                    "the spec names {}; did you mean `{c}`?",
                    suggest::list(&expected)
                ),
                None => format!("the spec names {}", suggest::list(&expected)),
            };
            (message, Some(hint))
        }
        ProblemKind::RaggedRow => {
            let h = ctx.header_fields;
            let k = t.trim_matches('`');
            (
                if one {
                    format!("this row has {k} fields but the header has {h}")
                } else {
                    format!(
                        "{n} rows whose number of fields differs from the header's {h}{listed}; \
                         the first has {k}"
                    )
                },
                Some(
                    "a field that contains the delimiter, a double quote or a line break must be \
                     enclosed in double quotes"
                        .to_owned(),
                ),
            )
        }
        ProblemKind::BlankLine => (
            if one {
                "blank line".to_owned()
            } else {
                format!("{n} blank lines{listed}")
            },
            Some(
                "every line after the header is one trial; blank lines are not skipped".to_owned(),
            ),
        ),
        ProblemKind::BadQuote => (
            if one {
                format!("text after a closing quote{col}")
            } else {
                format!("{n} fields{col} with text after a closing quote{listed}")
            },
            Some(
                "a double quote inside a quoted field is written twice: `\"a \"\"b\"\" c\"`"
                    .to_owned(),
            ),
        ),
        ProblemKind::InvalidText => (
            if one {
                format!("cell{col} is not UTF-8 text")
            } else {
                format!("{n} cells{col} that are not UTF-8 text{listed}")
            },
            Some("save the file with UTF-8 encoding".to_owned()),
        ),
        // Problems of the file as a whole are built directly, never tallied; should one be
        // tallied after all, it still renders as a plain statement.
        other => (format!("{other:?}{col}"), None),
    };
    Problem {
        kind: g.kind,
        place: Some(g.first),
        count: g.count,
        message,
        hint,
    }
}

/// Whether the quoted cell `t` reads as a number once a comma is taken for a decimal point.
fn decimal_comma(t: &str) -> bool {
    let inner = t.trim_matches('`').trim();
    inner.contains(',') && inner.replacen(',', ".", 1).parse::<f64>().is_ok()
}
