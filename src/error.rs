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

/// Decoders running under [`catch_decode`]: while any runs, a panic is an
/// expected sign of a damaged file, and the binary's last-resort panic
/// message stays quiet (the caller reports the file and column instead).
static DECODING: std::sync::atomic::AtomicUsize = std::sync::atomic::AtomicUsize::new(0);

/// Whether a panic now is a damaged file's, caught by [`catch_decode`].
pub fn panics_are_caught() -> bool {
    DECODING.load(std::sync::atomic::Ordering::SeqCst) > 0
}

/// Run a third-party decoder that may panic on a damaged file; a panic
/// becomes `Err(message)`.
pub fn catch_decode<T>(f: impl FnOnce() -> T) -> std::result::Result<T, String> {
    use std::sync::atomic::Ordering;
    DECODING.fetch_add(1, Ordering::SeqCst);
    let r = std::panic::catch_unwind(std::panic::AssertUnwindSafe(f));
    DECODING.fetch_sub(1, Ordering::SeqCst);
    r.map_err(|p| {
        p.downcast_ref::<&str>()
            .map(|s| s.to_string())
            .or_else(|| p.downcast_ref::<String>().cloned())
            .unwrap_or_else(|| "the decoder stopped".into())
    })
}
