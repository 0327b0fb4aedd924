//! Reading outcome files (CSV, TSV, Parquet; one row per trial) → per-arm summaries and, on request,
//! the ordered stream of observations.
//!
//! Every cell that is read is checked: a value outside the declared range, a NaN, an empty cell,
//! text where a number belongs, a row of an arm the spec does not name, a ragged row — any of
//! these refuses the whole file with a located [`DataError`]. Nothing is clipped or skipped. The
//! file is read once, in order, and its SHA-256 is computed from the same bytes that are parsed.

use std::path::Path;

use super::error::{DataError, ProblemKind};
use super::{FileInput, collect, delimited, parquet, source};
use crate::bounds::Summary;

/// Number of equal-width histogram bins over the declared range.
pub const HISTOGRAM_BINS: usize = 40;

/// What one trial yields.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum ValueKind {
    /// 0 (no event) or 1 (event). CSV/TSV cells must read exactly `0` or `1`; Parquet columns
    /// must be BOOLEAN, or integers holding only 0 and 1.
    Binary,
    /// A number in the declared range [low, high], in data units (ends included).
    Bounded { low: f64, high: f64 },
}

/// How to read an outcome file.
#[derive(Debug, Clone, Copy)]
pub struct ReadOptions<'a> {
    /// The column holding the outcome of each trial.
    pub column: &'a str,
    /// The column naming each row's arm; without it every row belongs to the arm `all`.
    pub arm_column: Option<&'a str>,
    /// The column giving the trials' order (numbers; Parquet also strings); observations are
    /// sorted by it, ties keeping row order. Without it, row order is trial order.
    pub order_column: Option<&'a str>,
    /// The column naming each row's cluster (fixture, lot, patient, ...): CSV/TSV text, or a
    /// Parquet string, byte-array, integer or boolean column. With it every arm also gets its
    /// per-cluster totals ([`ArmData::clusters`]); an empty or null cell is refused.
    pub cluster_column: Option<&'a str>,
    /// Binary or bounded outcomes.
    pub kind: ValueKind,
    /// Keep every observation (some methods need the stream); when false, memory use does not
    /// grow with the number of rows.
    pub keep_observations: bool,
    /// The arms the spec names: a row of any other arm is an error, and so is a named arm
    /// without rows. Arms are then returned in this order.
    pub expected_arms: Option<&'a [String]>,
}

/// Everything read for one arm.
#[derive(Debug, Clone, PartialEq)]
pub struct ArmData {
    /// The arm's value in the arm column, or `all` without an arm column.
    pub name: String,
    /// One-pass summary of the values rescaled to [0, 1] by the declared range; `n >= 1`.
    pub summary: Summary,
    /// Binary outcomes: the exact number of 1s.
    pub events: Option<u64>,
    /// The values rescaled to [0, 1], in trial order; only when asked for.
    pub observations: Option<Vec<f64>>,
    /// Counts in [`HISTOGRAM_BINS`] equal bins over the declared range; bin i holds values in
    /// [low + i·w, low + (i+1)·w) with w = (high − low)/40, the last bin also holds `high`.
    pub histogram: Vec<u64>,
    /// Smallest value, in data units.
    pub raw_min: f64,
    /// Largest value, in data units.
    pub raw_max: f64,
    /// Per-cluster totals, `Some` exactly when a cluster column was read. Clusters belong to
    /// one arm (the same name in two arms is two clusters) and are listed in trial order of
    /// their first trial; their `n` add up to `summary.n`.
    pub clusters: Option<Vec<ClusterTotal>>,
}

/// The trials of one cluster within one arm.
#[derive(Debug, Clone, PartialEq)]
pub struct ClusterTotal {
    /// The cluster's cell as text: CSV/TSV cells as read (trimmed unless quoted), Parquet
    /// integers in decimal, booleans as `true`/`false`, strings as text, and byte arrays
    /// without a string annotation as `0x` followed by their bytes in lower-case hex.
    pub name: String,
    /// Number of trials in the cluster; at least 1.
    pub n: u64,
    /// Compensated sum of the cluster's values rescaled to [0, 1]: within a few ulps of the
    /// exact sum, which lies in [0, `n`].
    pub sum: f64,
}

/// An outcome file, read and checked.
#[derive(Debug, Clone, PartialEq)]
pub struct FileData {
    /// The arms: in the spec's order when it names them, else in order of first appearance.
    pub arms: Vec<ArmData>,
    /// Where the data came from.
    pub input: FileInput,
}

/// The file formats surety reads, from the file name's extension (any case).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Format {
    /// Comma-separated, RFC 4180 quoting, first line names the columns.
    Csv,
    /// Tab-separated, same quoting rules, first line names the columns.
    Tsv,
    /// Apache Parquet.
    Parquet,
}

impl Format {
    /// The format for a file name, or the error naming the unsupported extension.
    pub fn of(file: &str, path: &Path) -> Result<Format, DataError> {
        let ext = path
            .extension()
            .map(|e| e.to_string_lossy().to_lowercase())
            .unwrap_or_default();
        match ext.as_str() {
            "csv" => Ok(Format::Csv),
            "tsv" => Ok(Format::Tsv),
            "parquet" => Ok(Format::Parquet),
            _ => {
                let what = if ext.is_empty() {
                    "the file name has no extension".to_owned()
                } else {
                    format!("unsupported file type `.{ext}`")
                };
                let hint = match ext.as_str() {
                    "xlsx" | "xls" | "ods" => "export the sheet as CSV (one row per trial)",
                    "txt" | "dat" => {
                        "rename the file to .csv (commas) or .tsv (tabs) to say how its fields are separated"
                    }
                    "gz" | "zip" | "zst" | "bz2" | "xz" => "decompress the file first",
                    _ => "outcome files have one row per trial, as .csv, .tsv or .parquet",
                };
                Err(DataError::one(
                    file,
                    ProblemKind::UnsupportedExtension,
                    None,
                    format!("{what}; surety reads .csv, .tsv and .parquet files"),
                )
                .with_hint(hint))
            }
        }
    }
}

/// Reads the outcome file at `resolved` (named `path_as_written` in messages and provenance)
/// in one pass, calling `progress(bytes_done, total)` every few megabytes. Either every row
/// passed every check and each arm is summarised, or the file is refused with every kind of
/// problem found, each located.
pub fn read_file(
    path_as_written: &str,
    resolved: &Path,
    opts: &ReadOptions,
    progress: &mut dyn FnMut(u64, u64),
) -> Result<FileData, DataError> {
    let format = Format::of(path_as_written, resolved)?;
    collect::check_options(path_as_written, opts)?;
    let (file, total) = source::open(path_as_written, resolved)?;
    if total == 0 {
        return Err(empty(path_as_written));
    }
    let (arms, digest, rows) = match format {
        Format::Csv => delimited::read(path_as_written, file, total, b',', opts, progress)?,
        Format::Tsv => delimited::read(path_as_written, file, total, b'\t', opts, progress)?,
        Format::Parquet => parquet::read(path_as_written, file, total, opts, progress)?,
    };
    Ok(FileData {
        arms,
        input: FileInput {
            path: path_as_written.to_owned(),
            sha256: digest.sha256,
            bytes: digest.bytes,
            rows,
        },
    })
}

pub(crate) fn empty(file: &str) -> DataError {
    DataError::one(file, ProblemKind::EmptyFile, None, "the file is empty").with_hint(
        "an outcome file starts with a header line naming the columns, then one row per trial",
    )
}
