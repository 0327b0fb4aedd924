//! The one error type of spec loading, and its single rendering.

use std::fmt;

use serde::Serialize;

/// A place in a spec file. Line and column are 1-based; the column counts characters, not bytes,
/// so it matches what an editor shows.
#[derive(Debug, Clone, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
pub struct Location {
    /// The source name given to [`parse`](super::parse), or the path given to [`load`](super::load).
    pub file: String,
    /// 1-based line.
    pub line: usize,
    /// 1-based column, in characters.
    pub column: usize,
}

impl fmt::Display for Location {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}:{}:{}", self.file, self.line, self.column)
    }
}

/// Why a spec was refused. Every error raised while reading a spec file carries a location;
/// only a file that could not be read at all has none.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct SpecError {
    /// Where the problem is. `None` only when the file could not be read.
    pub location: Option<Location>,
    /// Dotted key path of the offending key or value, e.g. `claim.confidence` or
    /// `data.arms[1].events`. `None` for problems of the file as a whole.
    pub key: Option<String>,
    /// What is wrong, and what was expected.
    pub message: String,
    /// What the author probably meant or should do, when that can be told.
    pub hint: Option<String>,
}

impl SpecError {
    /// An error at a place, with the key path it concerns (if any).
    pub fn new(
        location: Option<Location>,
        key: Option<String>,
        message: impl Into<String>,
    ) -> Self {
        SpecError {
            location,
            key,
            message: message.into(),
            hint: None,
        }
    }

    /// The same error with a hint attached (replacing any earlier hint).
    #[must_use]
    pub fn with_hint(mut self, hint: impl Into<String>) -> Self {
        self.hint = Some(hint.into());
        self
    }
}

impl fmt::Display for SpecError {
    /// `study.yaml:12:15: claim.confidence: <message>` and, when there is a hint, a second line
    /// `  hint: <hint>`. This is the only rendering, so the CLI, the tests and the docs agree.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if let Some(location) = &self.location {
            write!(f, "{location}: ")?;
        }
        if let Some(key) = &self.key {
            write!(f, "{key}: ")?;
        }
        f.write_str(&self.message)?;
        if let Some(hint) = &self.hint {
            write!(f, "\n  hint: {hint}")?;
        }
        Ok(())
    }
}

impl std::error::Error for SpecError {}

/// A 1-based position inside the text being parsed; becomes a [`Location`] once the source name
/// is attached.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Default)]
pub(crate) struct Mark {
    pub line: usize,
    pub col: usize,
}

impl Mark {
    pub(crate) fn at(self, file: &str) -> Location {
        Location {
            file: file.to_owned(),
            line: self.line,
            column: self.col,
        }
    }
}

/// An error before the source name is attached; what the node tree, the deserializer and the
/// validation produce internally.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct RawError {
    pub mark: Option<Mark>,
    pub key: Option<String>,
    pub message: String,
    pub hint: Option<String>,
    /// What serde reported before the node was known; resolved by `de::place`.
    pub pending: Pending,
}

/// Part of an error that can only be rendered once the node it concerns is known.
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum Pending {
    None,
    /// From serde's `missing_field`: the key is reported as `<mapping path>.<field>`.
    Missing(&'static str),
    /// From serde's `invalid_type`/`invalid_value`: what was expected. Once the node is known,
    /// the message becomes "expected X, found <the node as written>", so every type error reads
    /// the same whichever visitor raised it.
    Expected(String),
}

impl RawError {
    pub(crate) fn new(mark: Mark, key: Option<String>, message: impl Into<String>) -> Self {
        RawError {
            mark: Some(mark),
            key,
            message: message.into(),
            hint: None,
            pending: Pending::None,
        }
    }

    pub(crate) fn unplaced(message: impl Into<String>) -> Self {
        RawError {
            mark: None,
            key: None,
            message: message.into(),
            hint: None,
            pending: Pending::None,
        }
    }

    #[must_use]
    pub(crate) fn hint(mut self, hint: impl Into<String>) -> Self {
        self.hint = Some(hint.into());
        self
    }

    pub(crate) fn into_spec_error(self, file: &str) -> SpecError {
        SpecError {
            location: self.mark.map(|m| m.at(file)),
            key: self.key.filter(|k| !k.is_empty()),
            message: self.message,
            hint: self.hint,
        }
    }
}
