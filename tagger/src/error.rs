//! The one error type of this crate: what can go wrong reading column
//! files, parsing tag schemes and columns, and evaluating labels, each
//! naming the file and line it concerns where there is one.

use std::{fmt, io, path::PathBuf};

use crate::columns::MixedLines;

/// Everything that can go wrong in this crate.
#[derive(Debug)]
#[non_exhaustive]
pub enum Error {
    /// A file could not be opened, read or written.
    Io {
        /// The file concerned (`-` for standard input).
        path: PathBuf,
        /// The underlying failure.
        source: io::Error,
    },
    /// A line of an input file is not valid UTF-8.
    InvalidUtf8 {
        /// The file concerned.
        path: PathBuf,
        /// The 1-based line number.
        line: u64,
    },
    /// A row of a column file has another number of columns than the
    /// first row of its sentence.
    ColumnCount {
        /// The file concerned.
        path: PathBuf,
        /// The 1-based line number of the offending row.
        line: u64,
        /// The 1-based line number of the sentence's first row.
        first_line: u64,
        /// The number of columns of the sentence's first row.
        expected: usize,
        /// The number of columns of the offending row.
        got: usize,
        /// Set when the file mixes rows with and without a tab, so that
        /// it was split on whitespace: the lines that show it.
        mixed: Option<MixedLines>,
    },
    /// A label cell is empty (a tab-separated file can hold empty
    /// cells).
    EmptyLabel {
        /// The file concerned.
        path: PathBuf,
        /// The 1-based line number of the row.
        line: u64,
        /// The label column as the user gave it.
        column: isize,
    },
    /// A column was asked for that a row does not have.
    NoColumn {
        /// The file concerned.
        path: PathBuf,
        /// The 1-based line number of the row.
        line: u64,
        /// The column asked for, as the user gave it (1-based, negative
        /// counting from the end).
        column: isize,
        /// The number of columns the row has.
        width: usize,
    },
    /// The token and the label column of a labeled file are the same
    /// column of a row (a one-column file, say).
    SameColumn {
        /// The file concerned.
        path: PathBuf,
        /// The 1-based line number of the sentence's first row.
        line: u64,
        /// The token column as given.
        token: isize,
        /// The label column as given.
        label: isize,
        /// The number of columns of the row.
        width: usize,
    },
    /// A row lacks an input column that the features read.
    FeatureColumn {
        /// The file concerned.
        path: PathBuf,
        /// The 1-based line number of the row.
        line: u64,
        /// The column, as the feature config names it.
        column: isize,
        /// The name of the `[[columns]]` entry that reads it.
        name: String,
        /// The number of columns the row has.
        width: usize,
    },
    /// A feature config reads the label column as a feature.
    LabelAsFeature {
        /// The file concerned.
        path: PathBuf,
        /// The 1-based line number of the row.
        line: u64,
        /// The column, as the feature config names it.
        column: isize,
        /// The name of the `[[columns]]` entry that reads it.
        name: String,
    },
    /// A column file holds no token row at all.
    Empty {
        /// The file concerned.
        path: PathBuf,
    },
    /// A tag scheme name is not one this crate knows.
    UnknownScheme {
        /// The name given.
        name: String,
    },
    /// A parameter or argument is outside its allowed range.
    InvalidParam {
        /// The parameter's name as the library spells it.
        name: &'static str,
        /// Why the value was refused.
        reason: String,
    },
    /// A model file cannot be used: another magic, another format
    /// version, truncated, or a wrong checksum.
    Model {
        /// The file concerned.
        path: PathBuf,
        /// What is wrong.
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
}

fn plural(n: usize) -> &'static str {
    if n == 1 {
        ""
    } else {
        "s"
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
            Error::ColumnCount {
                path,
                line,
                first_line,
                expected,
                got,
                mixed,
            } => {
                write!(
                    f,
                    "{}:{}: {} column{}, but the sentence's first row \
                     (line {}) has {}",
                    path.display(),
                    line,
                    got,
                    plural(*got),
                    first_line,
                    expected
                )?;
                if let Some(m) = mixed {
                    let m = MixedLines { differs: None, ..*m };
                    write!(f, " ({m})")?;
                }
                Ok(())
            }
            Error::EmptyLabel { path, line, column } => write!(
                f,
                "{}:{}: the label (column {}) is empty",
                path.display(),
                line,
                column
            ),
            Error::NoColumn { path, line, column, width } => write!(
                f,
                "{}:{}: there is no column {} in a row of {} column{}",
                path.display(),
                line,
                column,
                width,
                plural(*width)
            ),
            Error::SameColumn { path, line, width: 1, .. } => write!(
                f,
                "{}:{}: a row of 1 column: training needs a label column \
                 besides the token column",
                path.display(),
                line
            ),
            Error::SameColumn { path, line, token, label, width } => {
                write!(
                    f,
                    "{}:{}: the token column ({}) and the label column ({}) \
                     are the same column of a row of {} columns: training \
                     needs a label column besides the token column",
                    path.display(),
                    line,
                    token,
                    label,
                    width
                )
            }
            Error::FeatureColumn { path, line, column, name, width } => {
                write!(
                    f,
                    "{}:{}: the features read column {} ({}), but the row \
                     has {} column{}",
                    path.display(),
                    line,
                    column,
                    name,
                    width,
                    plural(*width)
                )
            }
            Error::LabelAsFeature { path, line, column, name } => write!(
                f,
                "{}:{}: column {} is the label column here; the features \
                 may not read it ({})",
                path.display(),
                line,
                column,
                name
            ),
            Error::Empty { path } => {
                write!(f, "{}: no token rows", path.display())
            }
            Error::UnknownScheme { name } => write!(
                f,
                "unknown tag scheme {name:?} (expected iob1, iob2, bio, \
                 iobes or none)"
            ),
            Error::InvalidParam { name, reason } => {
                write!(f, "invalid {name}: {reason}")
            }
            Error::Model { path, reason } => {
                write!(f, "{}: {}", path.display(), reason)
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

#[cfg(test)]
mod tests {
    use super::*;
    use std::error::Error as _;

    #[test]
    fn io_shows_the_path_and_keeps_the_cause_as_source() {
        let err = Error::io(
            "a.conll",
            io::Error::new(io::ErrorKind::NotFound, "gone"),
        );
        assert_eq!(err.to_string(), "a.conll");
        assert_eq!(err.source().unwrap().to_string(), "gone");
    }

    #[test]
    fn messages_are_one_line_with_file_and_line() {
        let err = Error::ColumnCount {
            path: "t.conll".into(),
            line: 7,
            first_line: 5,
            expected: 3,
            got: 2,
            mixed: None,
        };
        assert_eq!(
            err.to_string(),
            "t.conll:7: 2 columns, but the sentence's first row (line 5) \
             has 3"
        );
        let err = Error::ColumnCount {
            path: "t.conll".into(),
            line: 7,
            first_line: 5,
            expected: 3,
            got: 2,
            mixed: Some(MixedLines {
                without_tab: 7,
                with_tab: 5,
                differs: None,
            }),
        };
        assert_eq!(
            err.to_string(),
            "t.conll:7: 2 columns, but the sentence's first row (line 5) \
             has 3 (columns split on spaces and tabs because line 7 has no \
             tab while line 5 has one)"
        );
        let err = Error::NoColumn {
            path: "t.conll".into(),
            line: 1,
            column: -2,
            width: 1,
        };
        assert_eq!(
            err.to_string(),
            "t.conll:1: there is no column -2 in a row of 1 column"
        );
        assert!(err.source().is_none());
    }
}
