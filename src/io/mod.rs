//! Input and output: readers for time series (text, `.npy` and raw binary), L(f) tables
//! and DUT files, the writer of records that read back as they were, and the
//! atomic writer every output goes through.
//!
//! Text inputs: lines in [`text`], fields and numbers in [`fields`], where
//! the data start in [`layout`], units in headers in [`header_units`].

use std::path::PathBuf;
use thiserror::Error;

pub mod binary;
pub mod dut;
pub mod fields;
pub mod filter_set;
pub mod header_units;
pub mod layout;
pub mod lf_table;
pub mod npy;
pub mod output_paths;
pub mod parallel;
pub mod record_file;
pub mod series;
mod spacings;
pub mod text;
pub mod wrap;
pub mod write;

pub use write::remove_pending_temp_files;
pub use write::write_atomic;
pub use write::write_atomic_with;

/// Why an input was refused, for callers that act on the kind of failure
/// (the message says the rest).
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "kebab-case")]
#[non_exhaustive]
pub enum ReadCause {
    /// The file could not be opened or read: missing, a directory, no
    /// permission, an I/O failure.
    Access,
    /// Not text tauwise reads: not UTF-8 (UTF-16, binary), a line too long.
    Encoding,
    /// Larger than tauwise reads for this kind of file.
    TooLarge,
    /// The content is not what was expected: no readings, a field that is
    /// not a number, a unit that disagrees, stamps that do not fit τ0, …
    Content,
    /// A DUT file against its schema: an unknown key, a wrong type, a value
    /// that does not parse, a reference to a name or file that is not there.
    Schema,
}

/// An input could not be read, or did not hold what was expected.
///
/// Printed as `<path>:<line>: <expected>` (line omitted when not known).
#[derive(Debug, Error)]
#[error("{}{}: {expected}", path.display(), line.map(|l| format!(":{l}")).unwrap_or_default())]
pub struct ReadError {
    /// The file (`-` for standard input).
    pub path: PathBuf,
    /// 1-based line number, when the problem is on a line.
    pub line: Option<u64>,
    /// 1-based column (field) number, when the problem is in a field.
    pub column: Option<usize>,
    /// What was found and what was expected.
    pub expected: String,
    /// The kind of failure.
    pub cause: ReadCause,
}

impl ReadError {
    /// An error about the file as a whole (cause: [`ReadCause::Content`]).
    pub fn file(path: impl Into<PathBuf>, expected: impl Into<String>) -> Self {
        Self {
            path: path.into(),
            line: None,
            column: None,
            expected: expected.into(),
            cause: ReadCause::Content,
        }
    }

    /// An error on one line (cause: [`ReadCause::Content`]).
    pub fn at(path: impl Into<PathBuf>, line: u64, expected: impl Into<String>) -> Self {
        Self {
            path: path.into(),
            line: Some(line),
            column: None,
            expected: expected.into(),
            cause: ReadCause::Content,
        }
    }

    /// The same error with its cause.
    pub fn because(self, cause: ReadCause) -> Self {
        Self { cause, ..self }
    }
}

/// An output could not be written.
#[derive(Debug, Error)]
#[error("{}: could not write: {source}", path.display())]
pub struct WriteError {
    /// The target file.
    pub path: PathBuf,
    /// The underlying failure.
    #[source]
    pub source: std::io::Error,
}
