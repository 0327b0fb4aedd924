//! The one error type of reading outcome files, and its single rendering.

use std::fmt;

/// Where in an outcome file a problem was found.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Place {
    /// A CSV or TSV file: the physical line (1-based; the header is line 1, and a quoted field
    /// that spans lines moves every later line number on) and, when the problem concerns one
    /// field, its 1-based index in the row.
    Line { line: u64, column: Option<u32> },
    /// A Parquet file: the data row, counted from 1 (row 1 is the first row of the file).
    Row { row: u64 },
}

impl Place {
    /// The line or row number, for ordering problems and listing where they recur.
    pub fn position(&self) -> u64 {
        match *self {
            Place::Line { line, .. } => line,
            Place::Row { row } => row,
        }
    }

    /// "line" or "row", whichever [`position`](Self::position) counts.
    pub(crate) fn noun(&self) -> &'static str {
        match self {
            Place::Line { .. } => "line",
            Place::Row { .. } => "row",
        }
    }
}

/// What kind of problem a [`Problem`] is, for callers that act on it (tests, exit codes).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum ProblemKind {
    /// A value outside the declared range (values are never clipped).
    OutOfRange,
    /// NaN or an infinity, written as such or too large for a double.
    NotFinite,
    /// A Parquet integer that has no exact double-precision value.
    Inexact,
    /// An empty cell in a column that is read.
    EmptyCell,
    /// A null in a Parquet column that is read.
    NullValue,
    /// Text that is not a number where a number is needed.
    NotANumber,
    /// A binary outcome that is neither 0 nor 1.
    NotBinary,
    /// `true`/`false`-like text where a binary outcome (0 or 1) is needed in CSV/TSV.
    BooleanText,
    /// A row of an arm that the spec does not name.
    UnknownArm,
    /// An arm that the spec names but that has no rows.
    MissingArm,
    /// A row whose number of fields differs from the header's.
    RaggedRow,
    /// A blank line after the header.
    BlankLine,
    /// A closing quote followed by something other than a delimiter or the end of the line.
    BadQuote,
    /// A quoted field that is never closed.
    UnclosedQuote,
    /// Bytes that are not UTF-8 where text (a column or arm name) is needed.
    InvalidText,
    /// The first line is blank, so no column has a name.
    BlankHeader,
    /// A column named in the spec does not exist.
    MissingColumn,
    /// A column named in the spec occurs more than once.
    DuplicateColumn,
    /// A column's stored type cannot hold what is asked of it.
    UnsupportedType,
    /// The file has no bytes.
    EmptyFile,
    /// The file has a header (or schema) but no data rows.
    NoDataRows,
    /// The file is not a readable Parquet file.
    BadParquet,
    /// The file name does not end in .csv, .tsv or .parquet.
    UnsupportedExtension,
    /// The file could not be opened or read.
    Unreadable,
    /// The read options contradict themselves (declared range, one column used twice).
    BadOptions,
}

/// One problem found in an outcome file. Problems of one kind in one column are reported once,
/// with how often they occur and where the first few are.
#[derive(Debug, Clone, PartialEq)]
pub struct Problem {
    /// What kind of problem this is.
    pub kind: ProblemKind,
    /// Where it (first) occurs; `None` for problems of the file or the options as a whole.
    pub place: Option<Place>,
    /// How many rows (or cells) have it; 1 for problems of the file as a whole.
    pub count: u64,
    /// What is wrong, naming the column and, when it recurs, the count and first lines.
    pub message: String,
    /// What to do about it, when that can be told.
    pub hint: Option<String>,
}

/// Why an outcome file was refused. Nothing in the file was clipped or skipped: the whole file
/// is refused, and every kind of problem found in it is listed, the earliest first.
#[derive(Debug, Clone, PartialEq)]
pub struct DataError {
    /// The file as the spec wrote it.
    pub file: String,
    /// At least one problem, ordered by where it first occurs.
    pub problems: Vec<Problem>,
}

impl DataError {
    /// A refusal with a single problem.
    pub(crate) fn one(
        file: &str,
        kind: ProblemKind,
        place: Option<Place>,
        message: impl Into<String>,
    ) -> Self {
        DataError {
            file: file.to_owned(),
            problems: vec![Problem {
                kind,
                place,
                count: 1,
                message: message.into(),
                hint: None,
            }],
        }
    }

    /// The same refusal with a hint on its (single or first) problem.
    #[must_use]
    pub(crate) fn with_hint(mut self, hint: impl Into<String>) -> Self {
        if let Some(p) = self.problems.first_mut() {
            p.hint = Some(hint.into());
        }
        self
    }

    /// The kind of the first problem.
    pub fn kind(&self) -> ProblemKind {
        self.problems
            .first()
            .map_or(ProblemKind::Unreadable, |p| p.kind)
    }
}

impl fmt::Display for DataError {
    /// One line per problem, `file:line:column: message` for CSV/TSV (`file:line: message` when
    /// the problem concerns the whole line), `file: row N: message` for Parquet, `file: message`
    /// for the file as a whole; a hint follows its problem on a line of its own, `  hint: ...`.
    /// This is the only rendering, so the CLI, the tests and the docs agree.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        for (i, p) in self.problems.iter().enumerate() {
            if i > 0 {
                f.write_str("\n")?;
            }
            f.write_str(&self.file)?;
            match p.place {
                Some(Place::Line {
                    line,
                    column: Some(c),
                }) => write!(f, ":{line}:{c}: ")?,
                Some(Place::Line { line, column: None }) => write!(f, ":{line}: ")?,
                Some(Place::Row { row }) => write!(f, ": row {row}: ")?,
                None => f.write_str(": ")?,
            }
            f.write_str(&p.message)?;
            if let Some(hint) = &p.hint {
                write!(f, "\n  hint: {hint}")?;
            }
        }
        Ok(())
    }
}

impl std::error::Error for DataError {}

/// `cell` as it appears in a message: in backticks, control characters escaped, cut after 40
/// characters so one absurd cell cannot flood the terminal.
pub(crate) fn quote_cell(cell: &[u8]) -> String {
    let text = String::from_utf8_lossy(cell);
    let mut out = String::from("`");
    for (i, c) in text.chars().enumerate() {
        if i == 40 {
            out.push('…');
            break;
        }
        if c.is_control() {
            out.extend(c.escape_debug());
        } else {
            out.push(c);
        }
    }
    out.push('`');
    out
}
