//! The crate-wide error type.
//!
//! Each layer has its own error enum (for example [`crate::io::ReadError`],
//! [`crate::units::UnitError`]); [`enum@Error`] wraps them so that the binary can
//! print every failure the same way: `tauwise: error: <path>:<line>: <what>`.

use thiserror::Error;

/// Any failure of a tauwise library call.
#[derive(Debug, Error)]
pub enum Error {
    /// A value with a unit could not be parsed.
    #[error(transparent)]
    Unit(#[from] crate::units::UnitError),
    /// An input file could not be read or did not hold what was expected.
    #[error(transparent)]
    Read(#[from] crate::io::ReadError),
    /// An output could not be written.
    #[error(transparent)]
    Write(#[from] crate::io::WriteError),
    /// Options that cannot go together, or one that needs another.
    #[error(transparent)]
    Option(#[from] OptionError),
    /// The arguments of a computation are invalid (τ0 ≤ 0, unknown estimator, …).
    #[error("{0}")]
    Invalid(String),
    /// The data do not allow the requested computation (too short, all gaps, …).
    #[error("{0}")]
    Insufficient(String),
}

/// Options of a call that do not fit together (`--lf` without `--carrier`,
/// `--y0-sigma` without `--y0`): the option, and what it needs.
#[derive(Debug, Error, Clone, PartialEq)]
#[error("{option}: {problem}")]
pub struct OptionError {
    /// The option as written on the command line (`--carrier`).
    pub option: String,
    /// What is wrong and what would do.
    pub problem: String,
}

/// Result alias used throughout the library.
pub type Result<T, E = Error> = std::result::Result<T, E>;

impl Error {
    /// Shorthand for [`Error::Invalid`].
    pub fn invalid(msg: impl Into<String>) -> Self {
        Error::Invalid(msg.into())
    }
    /// Shorthand for [`Error::Option`].
    pub fn option(option: impl Into<String>, problem: impl Into<String>) -> Self {
        Error::Option(OptionError {
            option: option.into(),
            problem: problem.into(),
        })
    }
    /// Whether the error is in what was asked (an option value or a
    /// combination of options) rather than in the data: the binary exits
    /// with status 2 for these, 1 for the others.
    pub fn is_bad_request(&self) -> bool {
        matches!(self, Error::Unit(_) | Error::Option(_))
    }
    /// Shorthand for [`Error::Insufficient`].
    pub fn insufficient(msg: impl Into<String>) -> Self {
        Error::Insufficient(msg.into())
    }
}
