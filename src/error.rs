//! Errors carry their context (file, line, column) and map onto the exit
//! codes of CONTRACT §3. Library code returns them; only the binary prints.

use std::fmt;

/// What went wrong, in one sentence a user can act on.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Error {
    /// Bad arguments or a bad config file: exit 2.
    Usage(String),
    /// Unusable data (missing required column, no valid rows, rejected rows
    /// under `--strict`): exit 3.
    Data(String),
    /// Reading or writing failed: exit 1.
    Io(String),
    /// A bug: exit 1.
    Internal(String),
}

impl Error {
    pub fn exit_code(&self) -> i32 {
        match self {
            Error::Usage(_) => 2,
            Error::Data(_) => 3,
            Error::Io(_) | Error::Internal(_) => 1,
        }
    }

    pub fn io(path: &std::path::Path, what: &str, e: impl fmt::Display) -> Error {
        Error::Io(format!("{}: could not {what}: {e}", path.display()))
    }
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Error::Usage(m) | Error::Data(m) | Error::Io(m) | Error::Internal(m) => f.write_str(m),
        }
    }
}

impl std::error::Error for Error {}

pub type Result<T> = std::result::Result<T, Error>;
