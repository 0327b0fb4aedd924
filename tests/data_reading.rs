//! Reading outcome files (src/data/): summaries agree with an independent reading of the same
//! fixtures, every refusal is located and worded exactly, nothing is ever clipped or skipped.
//!
//! Sources of the expected values:
//! - summaries, SHA-256, byte and row counts: tests/reference/data_summaries.json, written by
//!   tests/reference/data_reference.py, which reads the fixtures with Python's csv module and
//!   pyarrow and sums with math.fsum (correctly rounded) and hashlib;
//! - clusters, their order and sums, and the arm of cluster means a clustered spec is analysed
//!   on: tests/reference/cluster_summaries.json, written by the same script;
//! - line and field numbers in refusals: counted in the fixture files under
//!   tests/data/outcomes/errors/ (the header is line 1, fields count from 1);
//! - message wording: the formats documented on `DataError`'s Display and in src/data/tally.rs.

use std::path::PathBuf;

use proptest::prelude::*;
use serde_json::Value;
use surety::bounds::Summary;
use surety::data::{
    DataError, FileData as Dataset, Nominal, ProblemKind, ReadOptions, ValueKind, Values, read_file,
};
use surety::stats::sum::NeumaierSum;

fn fixture(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data/outcomes")
        .join(name)
}

const DROPS: ValueKind = ValueKind::Bounded {
    low: 0.0,
    high: 2.5,
};

fn opts<'a>(
    column: &'a str,
    arm_column: Option<&'a str>,
    order_column: Option<&'a str>,
    kind: ValueKind,
) -> ReadOptions<'a> {
    ReadOptions {
        column,
        arm_column,
        order_column,
        cluster_column: None,
        kind,
        keep_observations: true,
        expected_arms: None,
    }
}

fn read(name: &str, opts: &ReadOptions) -> Result<Dataset, DataError> {
    read_file(name, &fixture(name), opts, &mut |_, _| {})
}

fn refusal(name: &str, opts: &ReadOptions) -> DataError {
    match read(name, opts) {
        Ok(d) => panic!("expected {name} to be refused, got {d:?}"),
        Err(e) => e,
    }
}

fn message(name: &str, opts: &ReadOptions) -> String {
    refusal(name, opts).to_string()
}

// ------------------------------------------------------------------ agreement with the reference

fn close(got: f64, want: f64, what: &str) {
    // Neumaier summation is within a couple of ulps of the correctly rounded sum (math.fsum).
    let tol = 4.0 * f64::EPSILON * want.abs().max(f64::MIN_POSITIVE);
    assert!(
        (got - want).abs() <= tol,
        "{what}: got {got:e}, want {want:e}"
    );
}

fn f(v: &Value) -> f64 {
    v.as_f64().expect("a number")
}

#[test]
fn summaries_agree_with_an_independent_reading() {
    let text = include_str!("reference/data_summaries.json");
    let reference: Value = serde_json::from_str(text).expect("valid JSON");
    let cases = reference["cases"].as_array().expect("cases");
    assert_eq!(cases.len(), 16);
    for case in cases {
        let name = case["name"].as_str().unwrap();
        let file = case["file"].as_str().unwrap();
        let range = case["range"].as_array().unwrap();
        let kind = match case["kind"].as_str().unwrap() {
            "binary" => ValueKind::Binary,
            _ => ValueKind::Bounded {
                low: f(&range[0]),
                high: f(&range[1]),
            },
        };
        let o = opts(
            case["column"].as_str().unwrap(),
            case["arm_column"].as_str(),
            case["order_column"].as_str(),
            kind,
        );
        let d = read(file, &o).unwrap_or_else(|e| panic!("{name}: {e}"));
        assert_eq!(d.input.path, file);
        assert_eq!(d.input.sha256, case["sha256"].as_str().unwrap(), "{name}");
        assert_eq!(d.input.bytes, case["bytes"].as_u64().unwrap(), "{name}");
        assert_eq!(d.input.rows, case["rows"].as_u64().unwrap(), "{name}");
        let arms = case["arms"].as_array().unwrap();
        assert_eq!(d.arms.len(), arms.len(), "{name}");
        for (got, want) in d.arms.iter().zip(arms) {
            let what = format!("{name}/{}", got.name);
            assert_eq!(got.name, want["name"].as_str().unwrap(), "{what}");
            let s = &got.summary;
            assert_eq!(s.n, want["n"].as_u64().unwrap(), "{what}");
            assert_eq!(got.events, want["events"].as_u64(), "{what}");
            assert_eq!(got.clusters, None, "{what}: no cluster column");
            close(s.sum, f(&want["sum"]), &format!("{what} sum"));
            close(s.sum_sq, f(&want["sum_sq"]), &format!("{what} sum_sq"));
            assert_eq!(s.min, f(&want["min"]), "{what}");
            assert_eq!(s.max, f(&want["max"]), "{what}");
            let (above, below) = s.split.expect("split sums from raw data");
            close(above, f(&want["split"][0]), &format!("{what} above"));
            close(below, f(&want["split"][1]), &format!("{what} below"));
            let hist: Vec<u64> = want["histogram"]
                .as_array()
                .unwrap()
                .iter()
                .map(|v| v.as_u64().unwrap())
                .collect();
            assert_eq!(got.histogram, hist, "{what}");
            assert_eq!(got.raw_min, f(&want["raw_min"]), "{what}");
            assert_eq!(got.raw_max, f(&want["raw_max"]), "{what}");
            let obs: Vec<f64> = want["observations"]
                .as_array()
                .unwrap()
                .iter()
                .map(f)
                .collect();
            assert_eq!(got.observations.as_deref(), Some(&obs[..]), "{what}");
        }
        // Without observations the summaries are the same, bit for bit.
        let lean = ReadOptions {
            keep_observations: false,
            ..o
        };
        let d2 = read(file, &lean).unwrap();
        for (a, b) in d.arms.iter().zip(&d2.arms) {
            assert_eq!(a.summary, b.summary, "{name}");
            assert_eq!(b.observations, None, "{name}");
        }
    }
}

#[test]
fn csv_and_tsv_of_the_same_rows_read_the_same() {
    // drops.tsv is drops.csv with tabs and CRLF (tests/reference/data_reference.py reads both).
    let o = opts("drop_m", Some("build"), Some("cycle"), DROPS);
    let a = read("drops.csv", &o).unwrap();
    let b = read("drops.tsv", &o).unwrap();
    assert_eq!(a.arms, b.arms);
    assert_ne!(a.input.sha256, b.input.sha256);
}

#[test]
fn order_column_sorts_stably_within_each_arm() {
    // drops.csv, arm fw-4.2.0: (cycle, drop_m) rows (7, 0.12) (1, 0) (4, 2.5) (2, 0.75)
    // (4, 1.25) (10, 0.0625); by cycle, ties at 4 in row order: 0, 0.75, 2.5, 1.25, 0.12, 0.0625.
    let d = read(
        "drops.csv",
        &opts("drop_m", Some("build"), Some("cycle"), DROPS),
    )
    .unwrap();
    let arm = &d.arms[0];
    assert_eq!(arm.name, "fw-4.2.0");
    let want: Vec<f64> = [0.0, 0.75, 2.5, 1.25, 0.12, 0.0625]
        .iter()
        .map(|x| x / 2.5)
        .collect();
    assert_eq!(arm.observations.as_deref(), Some(&want[..]));
}

#[test]
fn arms_follow_the_spec_order_when_it_names_them() {
    let expected = vec!["fw-4.2.1".to_owned(), "fw-4.2.0".to_owned()];
    let o = ReadOptions {
        expected_arms: Some(&expected),
        ..opts("drop_m", Some("build"), None, DROPS)
    };
    let d = read("drops.csv", &o).unwrap();
    let names: Vec<&str> = d.arms.iter().map(|a| a.name.as_str()).collect();
    assert_eq!(names, ["fw-4.2.1", "fw-4.2.0"]);
}

#[test]
fn binary_counts_are_exact() {
    // binary.csv: north rows 0 1 0 0 1 0 (2 events of 6), south rows 0 1 1 0 (2 of 4).
    let d = read(
        "binary.csv",
        &opts("failed", Some("site"), None, ValueKind::Binary),
    )
    .unwrap();
    let got: Vec<(&str, u64, Option<u64>)> = d
        .arms
        .iter()
        .map(|a| (a.name.as_str(), a.summary.n, a.events))
        .collect();
    assert_eq!(got, [("north", 6, Some(2)), ("south", 4, Some(2))]);
    assert_eq!(d.arms[0].summary.sum, 2.0);
    // 0 goes to the first bin, 1 to the last (bins over the declared range [0, 1]).
    assert_eq!(d.arms[0].histogram[0], 4);
    assert_eq!(d.arms[0].histogram[39], 2);
}

#[test]
fn quoted_fields_keep_their_text() {
    // quoted.csv: the arm `"fw ""beta"""` is `fw "beta"`; a quoted value with blanks, `"  2 "`,
    // is the number 2; a note spans two lines; the last record has no line break.
    let d = read("quoted.csv", &opts("drop_m", Some("build"), None, DROPS)).unwrap();
    let names: Vec<&str> = d.arms.iter().map(|a| a.name.as_str()).collect();
    assert_eq!(names, ["fw-4.2.0", "fw \"beta\""]);
    assert_eq!(d.arms[0].raw_max, 2.0);
    assert_eq!(d.input.rows, 5);
}

#[test]
fn progress_reaches_the_total() {
    let mut calls = Vec::new();
    let o = opts("drop_m", None, None, DROPS);
    let d = read_file(
        "drops.csv",
        &fixture("drops.csv"),
        &o,
        &mut |done, total| calls.push((done, total)),
    )
    .unwrap();
    assert_eq!(calls.last(), Some(&(d.input.bytes, d.input.bytes)));
}

// ------------------------------------------------------------------ refusals, CSV and TSV

const RANGE_HINT: &str = "  hint: the range is part of the claim, fixed before the data are seen; values outside it are refused, never clipped";
const BLANK_HINT: &str = "  hint: every row is one trial and needs a value; rows are never skipped";

#[test]
fn values_outside_the_range_are_counted_and_located() {
    // out_of_range.csv: 2.6 on line 3, -0.1 on line 6, 3.75 on line 9, all in field 2.
    let o = opts("drop_m", Some("build"), Some("cycle"), DROPS);
    let e = refusal("errors/out_of_range.csv", &o);
    assert_eq!(e.kind(), ProblemKind::OutOfRange);
    assert_eq!(e.problems[0].count, 3);
    assert_eq!(
        e.to_string(),
        format!(
            "errors/out_of_range.csv:3:2: 3 values outside the declared range [0, 2.5] in column \
             `drop_m`: lines 3, 6, 9; the first is `2.6`\n{RANGE_HINT}"
        )
    );
}

#[test]
fn many_problems_list_the_first_five_lines() {
    // many_out_of_range.csv: 2.51 (line 3), 9 (4), -1 (6), 10 (7), 2.6 (9), -0.01 (10).
    let o = opts("drop_m", None, None, DROPS);
    assert_eq!(
        message("errors/many_out_of_range.csv", &o),
        format!(
            "errors/many_out_of_range.csv:3:1: 6 values outside the declared range [0, 2.5] in \
             column `drop_m`: lines 3, 4, 6, 7, 9, …; the first is `2.51`\n{RANGE_HINT}"
        )
    );
}

#[test]
fn a_single_value_outside_the_range_is_located_after_a_multiline_field() {
    // multiline.csv: the note of line 2 runs to line 4, so 7.5 is on physical line 6.
    let o = opts("drop_m", Some("build"), None, DROPS);
    assert_eq!(
        message("errors/multiline.csv", &o),
        format!(
            "errors/multiline.csv:6:2: value `7.5` is outside the declared range [0, 2.5] in \
             column `drop_m`\n{RANGE_HINT}"
        )
    );
}

#[test]
fn nan_and_infinities_are_refused() {
    // not_finite.csv: NaN (line 3), inf (5), -Infinity (6), 1e400 overflows (7).
    let o = opts("drop_m", None, None, DROPS);
    assert_eq!(
        message("errors/not_finite.csv", &o),
        "errors/not_finite.csv:3:1: 4 values in column `drop_m` that are not finite numbers: \
         lines 3, 5, 6, 7; the first is `NaN`"
    );
}

#[test]
fn empty_cells_are_refused_per_column() {
    // empty_cell.csv: no drop_m on line 4 (field 2), no build on line 6 (field 1).
    let o = opts("drop_m", Some("build"), Some("cycle"), DROPS);
    assert_eq!(
        message("errors/empty_cell.csv", &o),
        format!(
            "errors/empty_cell.csv:4:2: empty cell in column `drop_m`\n{BLANK_HINT}\n\
             errors/empty_cell.csv:6:1: empty cell in column `build`\n{BLANK_HINT}"
        )
    );
}

#[test]
fn text_is_not_a_number_and_a_decimal_comma_gets_a_hint() {
    // not_a_number.csv: `"1,5"` on line 3, `abc` on line 4, both field 2.
    let o = opts("drop_m", Some("build"), None, DROPS);
    assert_eq!(
        message("errors/not_a_number.csv", &o),
        "errors/not_a_number.csv:3:2: 2 cells in column `drop_m` that are not numbers: lines \
         3, 4; the first is `1,5`\n  hint: write decimals with a point (`1.5`, not `1,5`)"
    );
}

#[test]
fn ragged_rows_are_refused() {
    // ragged.csv: line 3 has 2 fields (field 3 missing), line 5 has 4.
    let o = opts("drop_m", Some("build"), Some("cycle"), DROPS);
    assert_eq!(
        message("errors/ragged.csv", &o),
        "errors/ragged.csv:3:3: 2 rows whose number of fields differs from the header's 3: \
         lines 3, 5; the first has 2\n  hint: a field that contains the delimiter, a double \
         quote or a line break must be enclosed in double quotes"
    );
}

#[test]
fn blank_lines_are_not_skipped() {
    // blank_line.csv: lines 3 and 5 are empty (the file ends with a blank line).
    let o = opts("drop_m", None, None, DROPS);
    assert_eq!(
        message("errors/blank_line.csv", &o),
        "errors/blank_line.csv:3: 2 blank lines: lines 3, 5\n  hint: every line after the \
         header is one trial; blank lines are not skipped"
    );
}

#[test]
fn binary_cells_must_be_0_or_1() {
    let o = opts("failed", Some("site"), None, ValueKind::Binary);
    // bool_text.csv: TRUE on line 3, false on line 4.
    assert_eq!(
        message("errors/bool_text.csv", &o),
        "errors/bool_text.csv:3:2: 2 cells in column `failed` holding text instead of 0 or 1: \
         lines 3, 4; the first is `TRUE`\n  hint: CSV and TSV carry no types, so binary \
         outcomes are read only as 0 and 1: write 1 for an event and 0 otherwise"
    );
    // not_binary.csv: 2 on line 3, 1.0 on line 4.
    assert_eq!(
        message("errors/not_binary.csv", &o),
        "errors/not_binary.csv:3:2: 2 cells in column `failed` that are neither 0 nor 1: \
         lines 3, 4; the first is `2`\n  hint: a binary outcome is 1 for an event and 0 \
         otherwise"
    );
}

#[test]
fn quoting_errors_are_located() {
    let o = opts("drop_m", Some("build"), None, DROPS);
    // unclosed.csv: the quote opening field 1 of line 3 is never closed.
    assert_eq!(
        message("errors/unclosed.csv", &o),
        "errors/unclosed.csv:3:1: this quoted field is never closed: the file ends inside it\n  \
         hint: every field that starts with `\"` needs a closing `\"`"
    );
    // unclosed_late.csv: 3 is out of range on line 2, the quote on line 3 is never closed;
    // both are reported.
    assert_eq!(
        message(
            "errors/unclosed_late.csv",
            &opts("drop_m", None, None, DROPS)
        ),
        format!(
            "errors/unclosed_late.csv:2:1: value `3` is outside the declared range [0, 2.5] in \
             column `drop_m`\n{RANGE_HINT}\nerrors/unclosed_late.csv:3:1: this quoted field is \
             never closed: the file ends inside it\n  hint: every field that starts with `\"` \
             needs a closing `\"`"
        )
    );
    // bad_quote.csv: `"fw-4.2.0"x` on line 2.
    assert_eq!(
        message("errors/bad_quote.csv", &o),
        "errors/bad_quote.csv:2:1: text after a closing quote in column `build`\n  hint: a \
         double quote inside a quoted field is written twice: `\"a \"\"b\"\" c\"`"
    );
}

#[test]
fn columns_must_exist_once() {
    let o = opts("drop_mm", Some("build"), None, DROPS);
    assert_eq!(
        message("drops.csv", &o),
        "drops.csv:1: no column named `drop_mm`; the header names `build`, `drop_m`, `cycle`\n  \
         hint: did you mean `drop_m`?"
    );
    // duplicate.csv: the header is `build,drop_m,drop_m`.
    assert_eq!(
        message("errors/duplicate.csv", &opts("drop_m", None, None, DROPS)),
        "errors/duplicate.csv:1:3: column `drop_m` appears 2 times in the header (fields 2 and \
         3), so which one to read is ambiguous\n  hint: rename the columns so that each name \
         occurs once"
    );
    // semicolons.csv: `build;drop_m` is one column for a comma-separated reader.
    assert_eq!(
        message("errors/semicolons.csv", &opts("drop_m", None, None, DROPS)),
        "errors/semicolons.csv:1: no column named `drop_m`; the header names `build;drop_m`\n  \
         hint: the header contains `;`: surety reads commas in .csv files and tabs in .tsv \
         files; save the file with one of those"
    );
}

#[test]
fn arms_must_be_those_the_spec_names() {
    // drops.csv: fw-4.2.1 rows are on lines 3, 6, 8, 9, 11 and 13.
    let only = vec!["fw-4.2.0".to_owned()];
    let o = ReadOptions {
        expected_arms: Some(&only),
        ..opts("drop_m", Some("build"), None, DROPS)
    };
    assert_eq!(
        message("drops.csv", &o),
        "drops.csv:3:1: 6 rows in column `build` of arms the spec does not name (`fw-4.2.1`): \
         lines 3, 6, 8, 9, 11, …\n  hint: the spec names `fw-4.2.0`"
    );
    // A misspelt arm in the spec: the arm without rows is the suggestion.
    let typo = vec!["fw-4.2.0".to_owned(), "fw-4.2.01".to_owned()];
    let o = ReadOptions {
        expected_arms: Some(&typo),
        ..o
    };
    assert_eq!(
        message("drops.csv", &o),
        "drops.csv:3:1: 6 rows in column `build` of arms the spec does not name (`fw-4.2.1`): \
         lines 3, 6, 8, 9, 11, …\n  hint: the spec names `fw-4.2.0`, `fw-4.2.01`; did you mean \
         `fw-4.2.01`?\ndrops.csv: arm `fw-4.2.01` named in the spec has no rows in column `build`"
    );
    let extra = vec![
        "fw-4.2.0".to_owned(),
        "fw-4.2.1".to_owned(),
        "fw-4.3.0".to_owned(),
    ];
    let o = ReadOptions {
        expected_arms: Some(&extra),
        ..o
    };
    let e = refusal("drops.csv", &o);
    assert_eq!(e.kind(), ProblemKind::MissingArm);
    assert_eq!(
        e.to_string(),
        "drops.csv: arm `fw-4.3.0` named in the spec has no rows in column `build`"
    );
}

#[test]
fn empty_files_and_headers_are_refused() {
    let o = opts("drop_m", None, None, DROPS);
    let empty = "  hint: an outcome file starts with a header line naming the columns, then one \
                 row per trial";
    assert_eq!(
        message("errors/empty.csv", &o),
        format!("errors/empty.csv: the file is empty\n{empty}")
    );
    assert_eq!(
        message("errors/bom_only.csv", &o),
        format!("errors/bom_only.csv: the file is empty\n{empty}")
    );
    assert_eq!(
        message("errors/header_only.csv", &o),
        "errors/header_only.csv:1: the file has a header line but no data rows"
    );
    assert_eq!(
        message("errors/blank_header.csv", &o),
        "errors/blank_header.csv:1: the first line is blank\n  hint: the first line must name \
         the columns, e.g. `build,drop_m,cycle`"
    );
}

#[test]
fn arm_names_must_be_text() {
    // bad_utf8.csv: byte 0xFF in the arm of line 3.
    let o = opts("drop_m", Some("build"), None, DROPS);
    assert_eq!(
        message("errors/bad_utf8.csv", &o),
        "errors/bad_utf8.csv:3:1: cell in column `build` is not UTF-8 text\n  hint: save the \
         file with UTF-8 encoding"
    );
}

#[test]
fn order_values_must_be_numbers() {
    // bad_order.csv: `n/a` on line 3 and nothing on line 4, field 3.
    let o = opts("drop_m", Some("build"), Some("cycle"), DROPS);
    assert_eq!(
        message("errors/bad_order.csv", &o),
        format!(
            "errors/bad_order.csv:3:3: `n/a` in column `cycle` is not a number\n\
             errors/bad_order.csv:4:3: empty cell in column `cycle`\n{BLANK_HINT}"
        )
    );
}

#[test]
fn every_kind_of_problem_is_listed_in_file_order() {
    // mixed.tsv: 3 is out of range on line 3, line 4 has no value, line 5 has 3 fields.
    let o = opts("drop_m", Some("build"), None, DROPS);
    assert_eq!(
        message("errors/mixed.tsv", &o),
        format!(
            "errors/mixed.tsv:3:2: value `3` is outside the declared range [0, 2.5] in column \
             `drop_m`\n{RANGE_HINT}\nerrors/mixed.tsv:4:2: empty cell in column `drop_m`\n\
             {BLANK_HINT}\nerrors/mixed.tsv:5:3: this row has 3 fields but the header has 2\n  \
             hint: a field that contains the delimiter, a double quote or a line break must be \
             enclosed in double quotes"
        )
    );
}

#[test]
fn file_types_and_options_are_checked_first() {
    let o = opts("drop_m", None, None, DROPS);
    assert_eq!(
        message("drops.xlsx", &o),
        "drops.xlsx: unsupported file type `.xlsx`; surety reads .csv, .tsv and .parquet \
         files\n  hint: export the sheet as CSV (one row per trial)"
    );
    let e = refusal("errors/no_such_file.csv", &o);
    assert_eq!(e.kind(), ProblemKind::Unreadable);
    assert!(
        e.to_string()
            .starts_with("errors/no_such_file.csv: cannot read the file: "),
        "{e}"
    );
    let flat = opts(
        "drop_m",
        None,
        None,
        ValueKind::Bounded {
            low: 1.0,
            high: 1.0,
        },
    );
    assert_eq!(
        message("drops.csv", &flat),
        "drops.csv: the declared range [1, 1] is not a finite interval with low < high"
    );
    assert_eq!(
        message("drops.csv", &opts("drop_m", Some("drop_m"), None, DROPS)),
        "drops.csv: `column` and `arm_column` both name column `drop_m`; each must be a \
         different column"
    );
}

// ------------------------------------------------------------------ Parquet

#[test]
fn parquet_refusals_name_rows() {
    // nulls.parquet (tests/reference/data_reference.py): drop_m is null in rows 3 and 6,
    // build in row 5.
    let o = opts("drop_m", Some("build"), None, DROPS);
    assert_eq!(
        message("errors/nulls.parquet", &o),
        format!(
            "errors/nulls.parquet: row 3: 2 null values in column `drop_m`: rows 3, 6\n\
             {BLANK_HINT}\nerrors/nulls.parquet: row 5: null value in column `build`\n{BLANK_HINT}"
        )
    );
    // out_of_range.parquet: 2.6, -0.5 and 3 in rows 2, 4 and 6.
    assert_eq!(
        message(
            "errors/out_of_range.parquet",
            &opts("drop_m", None, None, DROPS)
        ),
        format!(
            "errors/out_of_range.parquet: row 2: 3 values outside the declared range [0, 2.5] \
             in column `drop_m`: rows 2, 4, 6; the first is `2.6`\n{RANGE_HINT}"
        )
    );
    // binary.parquet: unit holds 101.. 106, 201.. 204.
    assert_eq!(
        message(
            "binary.parquet",
            &opts("unit", None, None, ValueKind::Binary)
        ),
        "binary.parquet: row 1: 10 cells in column `unit` that are neither 0 nor 1: rows 1, 2, \
         3, 4, 5, …; the first is `101`\n  hint: a binary outcome is 1 for an event and 0 \
         otherwise"
    );
}

#[test]
fn parquet_column_types_are_checked() {
    let o = |c| opts(c, None, None, DROPS);
    assert_eq!(
        message("types.parquet", &o("price")),
        "types.parquet: column `price` has type FIXED_LEN_BYTE_ARRAY (DECIMAL(9, 2)); bounded \
         outcomes need a DOUBLE, FLOAT or plain integer column"
    );
    assert_eq!(
        message("types.parquet", &o("label")),
        "types.parquet: column `label` has type BYTE_ARRAY (STRING); bounded outcomes need a \
         DOUBLE, FLOAT or plain integer column"
    );
    assert_eq!(
        message(
            "binary.parquet",
            &opts("score", None, None, ValueKind::Binary)
        ),
        "binary.parquet: column `score` has type DOUBLE; binary outcomes need a BOOLEAN column \
         or an integer column holding 0 and 1"
    );
    assert_eq!(
        message(
            "binary.parquet",
            &opts("failed_x", None, None, ValueKind::Binary)
        ),
        "binary.parquet: no column named `failed_x`; the file has `site`, `site_id`, `failed`, \
         `failed_i`, `unit`, `score`\n  hint: did you mean `failed_i`?"
    );
    assert_eq!(
        message("errors/nested.parquet", &o("drop_m")),
        "errors/nested.parquet: column `drop_m` is nested or repeated; surety reads flat \
         columns, one value per row"
    );
    assert_eq!(
        message("errors/no_rows.parquet", &o("drop_m")),
        "errors/no_rows.parquet: the file has no rows"
    );
}

#[test]
fn parquet_codecs_outside_the_build_are_named() {
    // brotli.parquet: drops.parquet's table written with Brotli (data_reference.py).
    let o = opts("drop_m", None, None, DROPS);
    assert_eq!(
        message("errors/brotli.parquet", &o),
        "errors/brotli.parquet: column `drop_m` is compressed with Brotli, which surety does not \
         decode\n  hint: write the file with zstd, snappy, gzip, lz4 or no compression"
    );
}

#[test]
fn damaged_parquet_files_are_refused() {
    let o = opts("drop_m", None, None, DROPS);
    for name in ["errors/truncated.parquet", "errors/not_parquet.parquet"] {
        let e = refusal(name, &o);
        assert_eq!(e.kind(), ProblemKind::BadParquet, "{e}");
        assert!(
            e.to_string()
                .starts_with(&format!("{name}: not a readable Parquet file: ")),
            "{e}"
        );
    }
}

// ------------------------------------------------------------------ cluster columns

/// The read options of a case of tests/reference/cluster_summaries.json.
fn cluster_case_opts(case: &Value) -> ReadOptions<'_> {
    let range = case["range"].as_array().unwrap();
    let kind = match case["kind"].as_str().unwrap() {
        "binary" => ValueKind::Binary,
        _ => ValueKind::Bounded {
            low: f(&range[0]),
            high: f(&range[1]),
        },
    };
    ReadOptions {
        cluster_column: case["cluster_column"].as_str(),
        ..opts(
            case["column"].as_str().unwrap(),
            case["arm_column"].as_str(),
            case["order_column"].as_str(),
            kind,
        )
    }
}

fn cluster_cases() -> Vec<Value> {
    let text = include_str!("reference/cluster_summaries.json");
    let reference: Value = serde_json::from_str(text).expect("valid JSON");
    reference["cases"].as_array().expect("cases").clone()
}

#[test]
fn cluster_totals_agree_with_an_independent_reading() {
    // Expected clusters, their order, n and math.fsum sums: tests/reference/cluster_summaries.json.
    let cases = cluster_cases();
    assert_eq!(cases.len(), 8);
    for case in &cases {
        let name = case["name"].as_str().unwrap();
        let o = cluster_case_opts(case);
        let d = read(case["file"].as_str().unwrap(), &o).unwrap_or_else(|e| panic!("{name}: {e}"));
        let arms = case["arms"].as_array().unwrap();
        assert_eq!(d.arms.len(), arms.len(), "{name}");
        for (got, want) in d.arms.iter().zip(arms) {
            let what = format!("{name}/{}", got.name);
            assert_eq!(got.name, want["name"].as_str().unwrap(), "{what}");
            assert_eq!(got.summary.n, want["trials"].as_u64().unwrap(), "{what}");
            assert_eq!(got.events, want["events"].as_u64(), "{what}");
            let clusters = got.clusters.as_ref().expect("a cluster column was read");
            let expected = want["clusters"].as_array().unwrap();
            let names: Vec<&str> = clusters.iter().map(|c| c.name.as_str()).collect();
            let want_names: Vec<&str> = expected
                .iter()
                .map(|c| c["name"].as_str().unwrap())
                .collect();
            assert_eq!(names, want_names, "{what}");
            for (c, w) in clusters.iter().zip(expected) {
                assert_eq!(c.n, w["n"].as_u64().unwrap(), "{what}/{}", c.name);
                close(c.sum, f(&w["sum"]), &format!("{what}/{} sum", c.name));
            }
            // The clusters partition the arm's trials.
            assert_eq!(clusters.iter().map(|c| c.n).sum::<u64>(), got.summary.n);
        }
        // Cluster totals do not depend on keeping the observations.
        let lean = ReadOptions {
            keep_observations: false,
            ..o
        };
        let d2 = read(case["file"].as_str().unwrap(), &lean).unwrap();
        for (a, b) in d.arms.iter().zip(&d2.arms) {
            assert_eq!(a.clusters, b.clusters, "{name}");
            assert_eq!(a.summary, b.summary, "{name}");
        }
    }
}

#[test]
fn clusters_are_per_arm_and_in_trial_order() {
    // clustered.csv, counted by hand: fixture F-07 has rows on lines 2, 4 and 11 for line L1
    // (gap 0.85, 0.40, 0.0) and on lines 5 and 9 for line L2 (2.25, 4.0); range [0, 4].
    let range = ValueKind::Bounded {
        low: 0.0,
        high: 4.0,
    };
    let o = ReadOptions {
        cluster_column: Some("fixture"),
        ..opts("gap_mm", Some("line"), None, range)
    };
    let d = read("clustered.csv", &o).unwrap();
    let l1 = d.arms[0].clusters.as_ref().unwrap();
    let l2 = d.arms[1].clusters.as_ref().unwrap();
    assert_eq!((l1[0].name.as_str(), l1[0].n), ("F-07", 3));
    assert_eq!(l1[0].sum, (0.85 + 0.40 + 0.0) / 4.0);
    assert_eq!((l2[0].name.as_str(), l2[0].n), ("F-07", 2));
    assert_eq!(l2[0].sum, (2.25 + 4.0) / 4.0);
    // A quoted name keeps its comma.
    assert_eq!(l1[1].name, "F-12, bay 2");
    // By row order of first appearance: L1 F-07, F-12…, F-03; L2 F-07, G-01, H-22.
    let names = |cs: &[surety::data::ClusterTotal]| -> Vec<String> {
        cs.iter().map(|c| c.name.clone()).collect()
    };
    assert_eq!(names(l1), ["F-07", "F-12, bay 2", "F-03"]);
    assert_eq!(names(l2), ["F-07", "G-01", "H-22"]);
    // By cycle: F-03 has cycle 0, F-07 cycle 1, F-12 cycle 2. In L2, G-01 and F-07 both
    // start at cycle 2; G-01's cycle-2 row (line 7) comes before F-07's (line 9), so the
    // stable trial order puts G-01 first.
    let ordered = ReadOptions {
        order_column: Some("cycle"),
        ..o
    };
    let d = read("clustered.csv", &ordered).unwrap();
    assert_eq!(
        names(d.arms[0].clusters.as_ref().unwrap()),
        ["F-03", "F-07", "F-12, bay 2"]
    );
    assert_eq!(
        names(d.arms[1].clusters.as_ref().unwrap()),
        ["G-01", "F-07", "H-22"]
    );
    // Without a cluster column there are no clusters.
    let plain = read("clustered.csv", &opts("gap_mm", Some("line"), None, range)).unwrap();
    assert!(plain.arms.iter().all(|a| a.clusters.is_none()));
}

#[test]
fn cluster_cells_are_checked_and_located() {
    let range = ValueKind::Bounded {
        low: 0.0,
        high: 4.0,
    };
    // empty_cluster.csv: the fixture (field 2) is empty on line 3, blanks on line 5 and a
    // quoted empty string on line 6.
    let o = ReadOptions {
        cluster_column: Some("fixture"),
        ..opts("gap_mm", Some("line"), None, range)
    };
    let e = refusal("errors/empty_cluster.csv", &o);
    assert_eq!(e.kind(), ProblemKind::EmptyCell);
    assert_eq!(
        e.to_string(),
        format!(
            "errors/empty_cluster.csv:3:2: 3 empty cells in column `fixture`: lines 3, 5, 6\n\
             {BLANK_HINT}"
        )
    );
    // bad_utf8.csv: `fw-\xFF` in field 1 of line 3, read here as the cluster.
    let o = ReadOptions {
        cluster_column: Some("build"),
        ..opts("drop_m", None, None, DROPS)
    };
    assert_eq!(
        message("errors/bad_utf8.csv", &o),
        "errors/bad_utf8.csv:3:1: cell in column `build` is not UTF-8 text\n  hint: save the \
         file with UTF-8 encoding"
    );
    // cluster_nulls.parquet (tests/reference/data_reference.py): fixture is null in row 2
    // and the empty string in row 4.
    let o = ReadOptions {
        cluster_column: Some("fixture"),
        ..opts("gap_mm", None, None, range)
    };
    assert_eq!(
        message("errors/cluster_nulls.parquet", &o),
        format!(
            "errors/cluster_nulls.parquet: row 2: null value in column `fixture`\n{BLANK_HINT}\n\
             errors/cluster_nulls.parquet: row 4: empty cell in column `fixture`\n{BLANK_HINT}"
        )
    );
}

#[test]
fn cluster_columns_must_exist_be_distinct_and_have_a_usable_type() {
    let range = ValueKind::Bounded {
        low: 0.0,
        high: 4.0,
    };
    let with = |cluster| ReadOptions {
        cluster_column: Some(cluster),
        ..opts("gap_mm", Some("line"), Some("cycle"), range)
    };
    assert_eq!(
        message("clustered.csv", &with("fixtrue")),
        "clustered.csv:1: no column named `fixtrue`; the header names `line`, `fixture`, \
         `cycle`, `gap_mm`, `leak`\n  hint: did you mean `fixture`?"
    );
    assert_eq!(
        message("clustered.parquet", &with("fixtrue")),
        "clustered.parquet: no column named `fixtrue`; the file has `line`, `fixture`, \
         `fixture_no`, `fixture_raw`, `night`, `cycle`, `gap_mm`, `leak`\n  hint: did you mean \
         `fixture`?"
    );
    for (column, key) in [
        ("gap_mm", "column"),
        ("line", "arm_column"),
        ("cycle", "order_column"),
    ] {
        let e = refusal("clustered.csv", &with(column));
        assert_eq!(e.kind(), ProblemKind::BadOptions);
        assert_eq!(
            e.to_string(),
            format!(
                "clustered.csv: `{key}` and `cluster_column` both name column `{column}`; each \
                 must be a different column"
            )
        );
    }
    // A floating-point column does not name clusters (its values need not compare exactly).
    let o = ReadOptions {
        cluster_column: Some("gap_mm"),
        ..opts("leak", None, None, ValueKind::Binary)
    };
    assert_eq!(
        message("clustered.parquet", &o),
        "clustered.parquet: column `gap_mm` has type DOUBLE; a cluster column holds strings, \
         byte arrays, integers or booleans"
    );
}

/// A clustered study spec reading `case`'s file, written for this test.
fn clustered_spec(case: &Value) -> String {
    let outcome = match case["kind"].as_str().unwrap() {
        "binary" => "  type: binary\n  event: leak\n".to_owned(),
        _ => {
            let r = case["range"].as_array().unwrap();
            format!(
                "  type: bounded\n  range: [{}, {}]\n  unit: mm\n",
                r[0], r[1]
            )
        }
    };
    let mut data = format!(
        "  file: {}\n  column: {}\n  cluster_column: {}\n",
        case["file"].as_str().unwrap(),
        case["column"].as_str().unwrap(),
        case["cluster_column"].as_str().unwrap()
    );
    for key in ["arm_column", "order_column"] {
        if let Some(c) = case[key].as_str() {
            data.push_str(&format!("  {key}: {c}\n"));
        }
    }
    format!(
        "surety: 1\nstudy:\n  id: T-1\n  title: Seal gaps by fixture\n  owner: Test\n\
         claim:\n  quantity: mean gap\n  side: upper\n  limit: 0.5\n  confidence: 0.95\n\
         outcome:\n{outcome}data:\n{data}dependence:\n  model: clustered\n"
    )
}

#[test]
fn a_clustered_spec_is_analysed_on_cluster_means() {
    // Expected cluster means, their summary and histogram, and the nominal counts:
    // tests/reference/cluster_summaries.json (math.fsum per cluster, divided by its n).
    let base = fixture("");
    for case in &cluster_cases() {
        let name = case["name"].as_str().unwrap();
        let text = clustered_spec(case);
        let spec = surety::spec::parse("clustered.yaml", &text)
            .unwrap_or_else(|e| panic!("{name}: {e}\n{text}"));
        let d = surety::data::read(&spec, &base, true, &mut |_, _| {})
            .expect("the spec names a file")
            .unwrap_or_else(|e| panic!("{name}: {e}"));
        let arms = case["arms"].as_array().unwrap();
        assert_eq!(d.arms.len(), arms.len(), "{name}");
        for (got, want) in d.arms.iter().zip(arms) {
            let what = format!("{name}/{}", got.name);
            let clusters = want["clusters"].as_array().unwrap().len() as u64;
            assert_eq!(got.n, clusters, "{what}");
            assert_eq!(
                got.nominal,
                Some(Nominal {
                    trials: want["trials"].as_u64().unwrap(),
                    events: want["events"].as_u64(),
                    clusters,
                    smallest_cluster: want["smallest_cluster"].as_u64().unwrap(),
                    largest_cluster: want["largest_cluster"].as_u64().unwrap(),
                }),
                "{what}"
            );
            let Values::Bounded(b) = &got.values else {
                panic!("{what}: cluster means are bounded values")
            };
            let s = &b.summary;
            let m = &want["mean_summary"];
            assert_eq!(s.n, m["n"].as_u64().unwrap(), "{what}");
            close(s.sum, f(&m["sum"]), &format!("{what} sum"));
            close(s.sum_sq, f(&m["sum_sq"]), &format!("{what} sum_sq"));
            close(s.min, f(&m["min"]), &format!("{what} min"));
            close(s.max, f(&m["max"]), &format!("{what} max"));
            let (above, below) = s.split.expect("split sums");
            close(above, f(&m["split"][0]), &format!("{what} above"));
            close(below, f(&m["split"][1]), &format!("{what} below"));
            let means = b.observations.as_ref().expect("kept");
            let want_means = want["means"].as_array().unwrap();
            assert_eq!(means.len(), want_means.len(), "{what}");
            for (g, w) in means.iter().zip(want_means) {
                close(*g, f(w), &format!("{what} mean"));
            }
            let hist: Vec<u64> = want["histogram"]
                .as_array()
                .unwrap()
                .iter()
                .map(|v| v.as_u64().unwrap())
                .collect();
            assert_eq!(b.histogram.as_ref(), Some(&hist), "{what}");
            assert_eq!(b.stated_sd, None, "{what}");
        }
        // Without observations: the same summary, no stream.
        let lean = surety::data::read(&spec, &base, false, &mut |_, _| {})
            .unwrap()
            .unwrap();
        for (a, b) in d.arms.iter().zip(&lean.arms) {
            let (Values::Bounded(x), Values::Bounded(y)) = (&a.values, &b.values) else {
                panic!("{name}: bounded values expected")
            };
            assert_eq!(x.summary, y.summary, "{name}");
            assert_eq!(y.observations, None, "{name}");
        }
        assert_eq!(d.inputs[0].rows, 12, "{name}: rows are nominal trials");
    }
}

#[test]
fn an_independent_spec_keeps_the_trials() {
    // The same file as a_clustered_spec_is_analysed_on_cluster_means without the clustered
    // model: binary counts per arm, no nominal block (events counted in clustered.csv: L1 has
    // leaks on lines 3 and 6, L2 on lines 5, 9 and 13).
    let case = &cluster_cases()[3];
    assert_eq!(case["name"], "csv_clusters_binary");
    let text = clustered_spec(case)
        .replace("  cluster_column: fixture\n", "")
        .replace("model: clustered", "model: independent");
    let spec = surety::spec::parse("independent.yaml", &text).unwrap();
    let d = surety::data::read(&spec, &fixture(""), false, &mut |_, _| {})
        .unwrap()
        .unwrap();
    let got: Vec<(u64, Option<u64>, bool)> = d
        .arms
        .iter()
        .map(|a| match a.values {
            Values::Counts { events } => (a.n, Some(events), a.nominal.is_some()),
            Values::Bounded(_) => (a.n, None, a.nominal.is_some()),
        })
        .collect();
    assert_eq!(got, [(7, Some(2), false), (5, Some(3), false)]);
}

// ------------------------------------------------------------------ properties

/// What a reader must produce for `xs` in [low, high]: the summary computed directly from the
/// definition (rescale, compensated sums, min, max, split at 1/2), in the same order.
fn direct(xs: &[f64], low: f64, high: f64) -> Summary {
    let us: Vec<f64> = xs.iter().map(|x| (x - low) / (high - low)).collect();
    let sum: NeumaierSum = us.iter().copied().collect();
    let sum_sq: NeumaierSum = us.iter().map(|u| u * u).collect();
    let above: NeumaierSum = us.iter().map(|u| (u - 0.5).max(0.0)).collect();
    let below: NeumaierSum = us.iter().map(|u| (0.5 - u).max(0.0)).collect();
    Summary {
        n: us.len() as u64,
        sum: sum.value(),
        sum_sq: sum_sq.value(),
        min: us.iter().copied().fold(f64::INFINITY, f64::min),
        max: us.iter().copied().fold(f64::NEG_INFINITY, f64::max),
        split: Some((above.value(), below.value())),
    }
}

/// One value as a CSV cell in one of the ways a person or a tool might write it.
fn cell(x: f64, style: u8) -> String {
    match style % 5 {
        0 => format!("{x}"),
        1 => format!("{x:e}"),
        2 => format!("\"{x}\""),
        3 => format!(" {x} "),
        _ => format!("{x:?}"),
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]

    /// Values written as CSV (any of several spellings, LF or CRLF, with an arm column) and read
    /// back give, per arm, exactly the summary computed directly from the values.
    #[test]
    fn csv_round_trip_gives_the_direct_summary(
        low in -1e3f64..1e3,
        width in 1e-3f64..1e3,
        rows in prop::collection::vec((0.0f64..=1.0, 0u8..5, 0u8..3), 1..300),
        crlf in any::<bool>(),
    ) {
        let high = low + width;
        let eol = if crlf { "\r\n" } else { "\n" };
        let mut text = format!("arm,value{eol}");
        let mut per_arm: Vec<Vec<f64>> = vec![Vec::new(); 3];
        let mut order: Vec<usize> = Vec::new();
        for &(t, style, arm) in &rows {
            let x = (low + t * (high - low)).clamp(low, high);
            text.push_str(&format!("arm-{arm},{}{eol}", cell(x, style)));
            per_arm[arm as usize].push(x);
            if !order.contains(&(arm as usize)) {
                order.push(arm as usize);
            }
        }
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("values.csv");
        std::fs::write(&path, &text).unwrap();
        let o = ReadOptions {
            column: "value",
            arm_column: Some("arm"),
            order_column: None,
            cluster_column: None,
            kind: ValueKind::Bounded { low, high },
            keep_observations: true,
            expected_arms: None,
        };
        let d = read_file("values.csv", &path, &o, &mut |_, _| {}).unwrap();
        prop_assert_eq!(d.arms.len(), order.len());
        for (arm, i) in d.arms.iter().zip(&order) {
            prop_assert_eq!(&arm.name, &format!("arm-{i}"));
            prop_assert_eq!(arm.summary, direct(&per_arm[*i], low, high));
            let us: Vec<f64> = per_arm[*i].iter().map(|x| (x - low) / (high - low)).collect();
            prop_assert_eq!(arm.observations.as_deref(), Some(&us[..]));
        }
    }

    /// One-column files take the run-at-a-time path; it must agree with the definition too,
    /// including across a bad line, which must be located on its physical line.
    #[test]
    fn one_column_files_give_the_direct_summary(
        ts in prop::collection::vec((0.0f64..=1.0, 0u8..5), 1..2000),
        bad in prop::option::of(0usize..2000),
    ) {
        let (low, high) = (-0.5, 2.0);
        let xs: Vec<f64> = ts.iter().map(|&(t, _)| (low + t * (high - low)).clamp(low, high)).collect();
        let mut text = String::from("v\n");
        let bad = bad.map(|b| b % xs.len());
        for (i, (&x, &(_, style))) in xs.iter().zip(&ts).enumerate() {
            if Some(i) == bad {
                text.push_str("2.5\n");
            } else {
                text.push_str(&format!("{}\n", cell(x, style)));
            }
        }
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("v.csv");
        std::fs::write(&path, &text).unwrap();
        let o = ReadOptions {
            column: "v",
            arm_column: None,
            order_column: None,
            cluster_column: None,
            kind: ValueKind::Bounded { low, high },
            keep_observations: false,
            expected_arms: None,
        };
        match (read_file("v.csv", &path, &o, &mut |_, _| {}), bad) {
            (Ok(d), None) => prop_assert_eq!(d.arms[0].summary, direct(&xs, low, high)),
            (Err(e), Some(b)) => prop_assert_eq!(
                e.to_string(),
                format!("v.csv:{}:1: value `2.5` is outside the declared range [-0.5, 2] in column `v`\n{RANGE_HINT}", b + 2)
            ),
            (got, b) => prop_assert!(false, "bad line {:?}, got {:?}", b, got),
        }
    }
}

/// A fixed pseudo-random sequence (a 64-bit LCG, Knuth's MMIX constants), for big inputs.
fn lcg(state: &mut u64) -> u64 {
    *state = state
        .wrapping_mul(6_364_136_223_846_793_005)
        .wrapping_add(1_442_695_040_888_963_407);
    *state >> 11
}

#[test]
fn records_that_cross_read_buffers_are_whole() {
    // About 24 MB, so records, quoted fields with line breaks and escaped quotes, and CRLF
    // endings fall across the reader's 8 MiB steps in every state.
    let mut state = 7u64;
    let mut text = String::from("arm,value,note\r\n");
    let mut per_arm: Vec<Vec<f64>> = vec![Vec::new(); 3];
    let mut lines = 1u64;
    while text.len() < 24_000_000 {
        let arm = (lcg(&mut state) % 3) as usize;
        let x = (lcg(&mut state) % 2_500_001) as f64 / 1e6;
        let note = match lcg(&mut state) % 7 {
            0 => "\"two\r\nlines, \"\"quoted\"\"\"".to_owned(),
            1 => String::new(),
            _ => "plain note".to_owned(),
        };
        lines += 1 + u64::from(note.contains('\n'));
        text.push_str(&format!("\"arm {arm}\",{x},{note}\r\n"));
        per_arm[arm].push(x);
    }
    // One bad value at the very end, to check the line count across all the steps.
    text.push_str("\"arm 0\",2.6,end\r\n");
    lines += 1;
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("big.csv");
    std::fs::write(&path, &text).unwrap();
    let mut o = opts("value", Some("arm"), None, DROPS);
    let e = read_file("big.csv", &path, &o, &mut |_, _| {}).unwrap_err();
    assert_eq!(
        e.to_string(),
        format!(
            "big.csv:{lines}:2: value `2.6` is outside the declared range [0, 2.5] in column `value`\n{RANGE_HINT}"
        )
    );
    // Without the bad row the file reads, and each arm is exactly the direct summary.
    text.truncate(text.len() - "\"arm 0\",2.6,end\r\n".len());
    std::fs::write(&path, &text).unwrap();
    o.keep_observations = true;
    let d = read_file("big.csv", &path, &o, &mut |_, _| {}).unwrap();
    assert_eq!(d.input.bytes, text.len() as u64);
    for arm in &d.arms {
        let i: usize = arm.name.trim_start_matches("arm ").parse().unwrap();
        assert_eq!(arm.summary, direct(&per_arm[i], 0.0, 2.5), "{}", arm.name);
        let us: Vec<f64> = per_arm[i].iter().map(|x| x / 2.5).collect();
        assert_eq!(arm.observations.as_deref(), Some(&us[..]));
    }
}

#[test]
fn one_column_files_are_located_across_read_buffers() {
    // 2.5 million lines of 9 bytes (22.5 MB); line 2,000,001 holds 9, outside [0, 2.5].
    let mut text = String::from("drop_m\n");
    let mut state = 11u64;
    for i in 0..2_500_000u64 {
        if i == 1_999_999 {
            text.push_str("9.000000\n");
            continue;
        }
        let micro = lcg(&mut state) % 2_500_001;
        text.push_str(&format!("{}.{:06}\n", micro / 1_000_000, micro % 1_000_000));
    }
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("one.csv");
    std::fs::write(&path, &text).unwrap();
    let o = ReadOptions {
        keep_observations: false,
        ..opts("drop_m", None, None, DROPS)
    };
    assert_eq!(
        read_file("one.csv", &path, &o, &mut |_, _| {})
            .unwrap_err()
            .to_string(),
        format!(
            "one.csv:2000001:1: value `9.000000` is outside the declared range [0, 2.5] in column `drop_m`\n{RANGE_HINT}"
        )
    );
}

// ------------------------------------------------------------------ progress bar

mod progress {
    use std::time::{Duration, Instant};
    use surety::cli::progress::{ProgressBar, render};

    #[test]
    fn the_bar_shows_the_fraction_done() {
        // 45 of 100 MB: 4 of 10 cells (rounded down, so the bar is never ahead of the read).
        assert_eq!(
            render("reading picks.csv", 45_000_000, 100_000_000, 10, false),
            "reading picks.csv [####------]  45%  45.0 / 100.0 MB"
        );
        assert_eq!(
            render("r", 1, 1, 4, true),
            "r [\u{1b}[36m####\u{1b}[0m] 100%  0.0 / 0.0 MB"
        );
        // An empty file reads as complete.
        assert_eq!(render("r", 0, 0, 2, false), "r [##] 100%  0.0 / 0.0 MB");
    }

    #[test]
    fn redraws_are_throttled_and_the_line_is_cleared() {
        let mut bar = ProgressBar::to_writer(Vec::new(), "r", true, false);
        let t0 = Instant::now();
        bar.update_at(1, 4, t0); // within the first quarter second: not drawn
        assert!(bar.writer().is_empty());
        bar.update_at(2, 4, t0 + Duration::from_millis(300));
        bar.update_at(3, 4, t0 + Duration::from_millis(350)); // 50 ms later: skipped
        bar.update_at(4, 4, t0 + Duration::from_millis(410));
        bar.finish();
        let text = String::from_utf8(bar.writer().clone()).unwrap();
        let frames: Vec<&str> = text.split('\r').filter(|s| !s.is_empty()).collect();
        assert_eq!(frames.len(), 3, "{text:?}");
        assert!(frames[0].contains(" 50%"), "{text:?}");
        assert!(frames[1].contains("100%"), "{text:?}");
        assert_eq!(frames[2], "\u{1b}[2K");
    }

    #[test]
    fn a_bar_that_is_off_writes_nothing() {
        let mut bar = ProgressBar::to_writer(Vec::new(), "r", false, true);
        bar.update_at(2, 4, Instant::now() + Duration::from_secs(1));
        bar.finish();
        assert!(bar.writer().is_empty());
    }
}
