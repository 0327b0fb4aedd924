//! The program's error type, rendered once at the edge, and its mapping to exit codes
//! (DESIGN.md §4: 2 bad input, 4 internal error).

use crate::provenance::BadSourceDateEpoch;
use crate::report::pdf::ReportError;
use crate::spec::SpecError;
use std::fmt;

/// Anything that stops a command.
#[derive(Debug)]
pub enum Error {
    /// The spec is invalid or asks for something this version cannot do (located).
    Spec(SpecError),
    /// A data file holds something the spec does not allow (located in the file).
    Data(crate::data::DataError),
    /// SOURCE_DATE_EPOCH is malformed.
    Date(BadSourceDateEpoch),
    /// A command-line argument is unusable.
    Usage(String),
    /// An input file could not be read.
    Read {
        path: String,
        source: std::io::Error,
    },
    /// An output file could not be written; nothing was left behind.
    Write {
        path: String,
        source: std::io::Error,
    },
    /// The report could not be rendered.
    Report(ReportError),
    /// The study's look ledger is damaged or could not be updated (`path:line:column` when
    /// the problem is on one line).
    Ledger {
        path: String,
        error: crate::ledger::LedgerError,
    },
}

impl Error {
    /// Process exit code for this error.
    pub fn exit_code(&self) -> i32 {
        match self {
            Error::Spec(_)
            | Error::Data(_)
            | Error::Date(_)
            | Error::Usage(_)
            | Error::Read { .. } => 2,
            Error::Write { .. } | Error::Ledger { .. } => 2,
            Error::Report(e) if e.is_user_error() => 2,
            Error::Report(_) => 4,
        }
    }
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Error::Spec(e) => write!(f, "{e}"),
            Error::Data(e) => write!(f, "{e}"),
            Error::Date(e) => write!(f, "{e}"),
            Error::Usage(m) => write!(f, "{m}"),
            Error::Read { path, source } => write!(f, "cannot read {path}: {source}"),
            Error::Write { path, source } => {
                write!(f, "cannot write {path}: {source} (nothing was written)")
            }
            Error::Report(e) => write!(f, "{e}"),
            Error::Ledger { path, error } => {
                write!(f, "{path}")?;
                if let Some(line) = error.line {
                    write!(f, ":{line}")?;
                    if let Some(column) = error.column {
                        write!(f, ":{column}")?;
                    }
                }
                write!(f, ": {}", error.message)
            }
        }
    }
}

impl std::error::Error for Error {}

impl From<SpecError> for Error {
    fn from(e: SpecError) -> Self {
        Error::Spec(e)
    }
}

impl From<BadSourceDateEpoch> for Error {
    fn from(e: BadSourceDateEpoch) -> Self {
        Error::Date(e)
    }
}

impl From<ReportError> for Error {
    fn from(e: ReportError) -> Self {
        Error::Report(e)
    }
}
