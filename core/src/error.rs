//! The one error type of gapwise-core, with a kind per failure class.

use std::fmt;

/// What went wrong, as a class a caller can match on.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[non_exhaustive]
pub enum ErrorKind {
    /// Text could not be read as a number, unit or quantity.
    Parse,
    /// Two quantities of different dimensions were combined, or a value has the wrong dimension.
    Dimension,
    /// A value is outside the range a formula or a table covers (never extrapolated).
    OutOfRange,
    /// A value is meaningless here: NaN, infinite, zero or negative where that makes no sense,
    /// or inconsistent with another input.
    InvalidSpec,
    /// The inputs are each valid, but no design satisfies them together.
    Infeasible,
    /// A parameter name (map key, series name, option) is not known.
    UnknownParameter,
    /// A required parameter is missing.
    MissingParameter,
    /// A script hit a sandbox limit (operations, time, size, depth).
    Limit,
}

/// An error from a gapwise calculation: a kind and a lowercase message that names the
/// parameter, its value with unit, and what was expected.
#[derive(Debug, Clone, PartialEq)]
pub struct Error {
    kind: ErrorKind,
    message: String,
}

/// Result alias used across gapwise-core.
pub type Result<T, E = Error> = std::result::Result<T, E>;

impl Error {
    /// Builds an error of the given kind with a message.
    #[cold]
    pub fn new(kind: ErrorKind, message: impl Into<String>) -> Self {
        Self {
            kind,
            message: message.into(),
        }
    }
    /// A parse error.
    #[cold]
    pub fn parse(message: impl Into<String>) -> Self {
        Self::new(ErrorKind::Parse, message)
    }
    /// A dimension error.
    #[cold]
    pub fn dimension(message: impl Into<String>) -> Self {
        Self::new(ErrorKind::Dimension, message)
    }
    /// An out-of-range error.
    #[cold]
    pub fn out_of_range(message: impl Into<String>) -> Self {
        Self::new(ErrorKind::OutOfRange, message)
    }
    /// An invalid-specification error.
    #[cold]
    pub fn invalid(message: impl Into<String>) -> Self {
        Self::new(ErrorKind::InvalidSpec, message)
    }
    /// An infeasible-design error.
    #[cold]
    pub fn infeasible(message: impl Into<String>) -> Self {
        Self::new(ErrorKind::Infeasible, message)
    }
    /// An unknown-parameter error.
    #[cold]
    pub fn unknown(message: impl Into<String>) -> Self {
        Self::new(ErrorKind::UnknownParameter, message)
    }
    /// A missing-parameter error.
    #[cold]
    pub fn missing(message: impl Into<String>) -> Self {
        Self::new(ErrorKind::MissingParameter, message)
    }
    /// The class of the error.
    pub fn kind(&self) -> ErrorKind {
        self.kind
    }
    /// The message, lowercase, without a trailing period.
    pub fn message(&self) -> &str {
        &self.message
    }
    /// Prefixes the message with a context such as the function name.
    #[must_use]
    pub fn context(mut self, context: &str) -> Self {
        self.message = format!("{context}: {}", self.message);
        self
    }
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.message)
    }
}

impl std::error::Error for Error {}
