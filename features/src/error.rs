//! The one error type of this crate: a config that does not parse or
//! does not check, a cluster directory that cannot be read, or a feature
//! index that does not load.

use std::{fmt, io, path::PathBuf};

/// Everything that can go wrong while reading a feature config, checking
/// it, or setting up an extractor.
#[derive(Debug)]
#[non_exhaustive]
pub enum Error {
    /// A config file could not be opened or read.
    Io {
        /// The file concerned.
        path: PathBuf,
        /// The underlying failure.
        source: io::Error,
    },
    /// A config is not valid TOML, has an unknown key, or has a value of
    /// the wrong type.
    Parse {
        /// The file concerned, if the config came from a file.
        path: Option<PathBuf>,
        /// The 1-based line of the problem, where the parser knows it.
        line: Option<u64>,
        /// What is wrong, as the TOML parser words it (an unknown key is
        /// named in it).
        message: String,
    },
    /// A config value is outside its allowed range.
    InvalidField {
        /// The key as written in a config file, with its table, for
        /// example `clusters.prefix_lengths`.
        field: String,
        /// Why the value was refused.
        reason: String,
    },
    /// The config sets `clusters.enabled = true`, but no clusters were
    /// given to the extractor.
    ClustersRequired,
    /// A cluster set that sets `enabled = true` was not given clusters.
    SetRequired {
        /// The set's name.
        name: String,
    },
    /// Clusters were given for a set the config does not have, or twice.
    UnknownSet {
        /// The name given.
        name: String,
    },
    /// A cluster directory could not be read.
    Cluster(lexiclade_cluster::Error),
    /// A serialized feature index lists the same feature twice.
    DuplicateFeature {
        /// The feature.
        feature: String,
    },
}

impl Error {
    pub(crate) fn invalid(field: impl Into<String>, reason: String) -> Error {
        Error::InvalidField { field: field.into(), reason }
    }
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            // The cause is the source, so chains print it once.
            Error::Io { path, .. } => write!(f, "{}", path.display()),
            Error::Parse { path, line, message } => {
                if let Some(path) = path {
                    write!(f, "{}:", path.display())?;
                }
                if let Some(line) = line {
                    write!(f, "{line}:")?;
                }
                if path.is_some() || line.is_some() {
                    write!(f, " ")?;
                }
                write!(f, "{message}")
            }
            Error::InvalidField { field, reason } => {
                write!(f, "invalid {field}: {reason}")
            }
            Error::ClustersRequired => write!(
                f,
                "the config sets clusters.enabled = true, but no clusters \
                 were given"
            ),
            Error::SetRequired { name } => write!(
                f,
                "cluster set {name:?} sets enabled = true, but no clusters \
                 were given for it (--clusters {name}=DIR)"
            ),
            Error::UnknownSet { name } => write!(
                f,
                "clusters given for {name:?}, which is not a cluster set of \
                 the config or was given twice"
            ),
            // The cluster error names its file and line itself.
            Error::Cluster(e) => write!(f, "{e}"),
            Error::DuplicateFeature { feature } => {
                write!(f, "feature index lists {feature:?} twice")
            }
        }
    }
}

impl std::error::Error for Error {
    fn source(&self) -> Option<&(dyn std::error::Error + 'static)> {
        match self {
            Error::Io { source, .. } => Some(source),
            Error::Cluster(e) => e.source(),
            _ => None,
        }
    }
}

impl From<lexiclade_cluster::Error> for Error {
    fn from(e: lexiclade_cluster::Error) -> Error {
        Error::Cluster(e)
    }
}

/// The result type of this crate.
pub type Result<T, E = Error> = std::result::Result<T, E>;
