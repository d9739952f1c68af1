//! The one error type of this crate, with the file and line it concerns.

use std::{fmt, io, path::PathBuf};

/// Everything that can go wrong while reading text, clustering it or
/// reading a cluster result back.
#[derive(Debug)]
#[non_exhaustive]
pub enum Error {
    /// An input or output file could not be opened, read or written.
    Io {
        /// The file concerned (`-` for standard input).
        path: PathBuf,
        /// The underlying failure.
        source: io::Error,
    },
    /// A line of an input text is not valid UTF-8.
    InvalidUtf8 {
        /// The file concerned.
        path: PathBuf,
        /// The 1-based line number.
        line: u64,
    },
    /// The inputs held no token at all.
    EmptyInput {
        /// What was read, as the user named it.
        what: String,
    },
    /// A parameter is outside its allowed range.
    InvalidParam {
        /// The parameter's name as the library spells it.
        name: &'static str,
        /// Why the value was refused.
        reason: String,
    },
    /// A file written by this crate does not parse.
    Malformed {
        /// The file concerned.
        path: PathBuf,
        /// The 1-based line number, where one applies.
        line: Option<u64>,
        /// What is wrong.
        reason: String,
    },
    /// A file was written by another format version.
    Version {
        /// The file concerned.
        path: PathBuf,
        /// The version this build reads.
        expected: u32,
        /// The version the file declares.
        got: u32,
    },
}

impl Error {
    pub(crate) fn io(path: impl Into<PathBuf>, source: io::Error) -> Error {
        Error::Io { path: path.into(), source }
    }

    pub(crate) fn malformed(
        path: impl Into<PathBuf>,
        line: Option<u64>,
        reason: impl Into<String>,
    ) -> Error {
        Error::Malformed { path: path.into(), line, reason: reason.into() }
    }
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            // The cause is the source, so chains print it once.
            Error::Io { path, .. } => write!(f, "{}", path.display()),
            Error::InvalidUtf8 { path, line } => {
                write!(f, "{}:{}: invalid UTF-8", path.display(), line)
            }
            Error::EmptyInput { what } => {
                write!(f, "{what}: no tokens to cluster")
            }
            Error::InvalidParam { name, reason } => {
                write!(f, "invalid {name}: {reason}")
            }
            Error::Malformed { path, line: Some(line), reason } => {
                write!(f, "{}:{}: {}", path.display(), line, reason)
            }
            Error::Malformed { path, line: None, reason } => {
                write!(f, "{}: {}", path.display(), reason)
            }
            Error::Version { path, expected, got } => write!(
                f,
                "{}: format version {} is not supported (this build \
                 reads version {})",
                path.display(),
                got,
                expected
            ),
        }
    }
}

impl std::error::Error for Error {
    fn source(&self) -> Option<&(dyn std::error::Error + 'static)> {
        match self {
            Error::Io { source, .. } => Some(source),
            _ => None,
        }
    }
}

/// The result type of this crate.
pub type Result<T, E = Error> = std::result::Result<T, E>;
