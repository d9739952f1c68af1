//! The subcommands, one file each: a private `Args` type parsed by clap
//! and a `run` function that does the work through the libraries.

pub mod ablate;
pub mod bench;
pub mod cluster;
pub mod count;
pub mod demo;
pub mod eval;
pub mod featurize;
pub mod show;
pub mod tag;
pub mod train;

/// Warns on standard error, unless `quiet`, when a column file mixes
/// rows with and without a tab in a way that matters: it was split on
/// spaces and tabs, and some row would have split otherwise on tabs
/// alone (a token holding a space, an empty cell). The lines of both are
/// named.
pub fn warn_mixed(file: &lexiclade_tagger::columns::ColumnFile, quiet: bool) {
    if let Some(warning) = file.mixed_warning() {
        if !quiet {
            eprintln!("lexiclade: warning: {warning}");
        }
    }
}

/// Marks a failure of lexiclade itself rather than of its input: the
/// command exits with code 1 instead of 2.
#[derive(Debug)]
pub struct Internal(pub String);

impl std::fmt::Display for Internal {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "internal error: {}", self.0)
    }
}

impl std::error::Error for Internal {}

pub use lexiclade::{default_threads, MAX_THREADS};

/// The `--threads` value, or the default: refused unless between 1 and
/// [`MAX_THREADS`].
pub fn threads(given: Option<usize>) -> anyhow::Result<usize> {
    match given {
        None => Ok(default_threads()),
        Some(n) if (1..=MAX_THREADS).contains(&n) => Ok(n),
        Some(n) => anyhow::bail!(
            "--threads must be between 1 and {MAX_THREADS}, got {n}"
        ),
    }
}

/// Runs `work` on a pool of `threads` rayon workers.
pub fn with_threads<T: Send>(
    threads: usize,
    work: impl FnOnce() -> T + Send,
) -> anyhow::Result<T> {
    let pool =
        rayon::ThreadPoolBuilder::new().num_threads(threads).build().map_err(
            |e| Internal(format!("cannot start {threads} threads: {e}")),
        )?;
    Ok(pool.install(work))
}

/// The `--clusters` arguments of `train` and `featurize`: `DIR` for the
/// config's `[clusters]`, `NAME=DIR` for its cluster set `NAME`. An
/// argument is `NAME=DIR` when the text before its first `=` is a valid
/// set name and the whole argument is not an existing directory.
pub struct ClusterDirs {
    /// The directory of `[clusters]`.
    pub main: Option<std::path::PathBuf>,
    /// The directory of each named set, in the order given.
    pub sets: Vec<(String, std::path::PathBuf)>,
}

impl ClusterDirs {
    /// Sorts the arguments; two plain directories or one name twice is
    /// an error.
    pub fn parse(args: &[std::path::PathBuf]) -> anyhow::Result<ClusterDirs> {
        let mut dirs = ClusterDirs { main: None, sets: Vec::new() };
        for arg in args {
            let text = arg.to_string_lossy();
            let named = text.split_once('=').filter(|(name, _)| {
                !arg.is_dir()
                    && lexiclade_features::config::check_name(name).is_ok()
            });
            match named {
                Some((name, dir)) => {
                    if dirs.sets.iter().any(|(n, _)| n == name) {
                        anyhow::bail!("--clusters {name}=DIR is given twice");
                    }
                    dirs.sets.push((name.to_string(), dir.into()));
                }
                None if dirs.main.is_some() => anyhow::bail!(
                    "--clusters DIR is given twice (name the further \
                     sets: --clusters NAME=DIR, NAME from the config's \
                     [[cluster_sets]])"
                ),
                None => dirs.main = Some(arg.clone()),
            }
        }
        Ok(dirs)
    }

    /// Every directory, for the overlap check of outputs.
    pub fn all(&self) -> Vec<std::path::PathBuf> {
        self.main
            .iter()
            .cloned()
            .chain(self.sets.iter().map(|s| s.1.clone()))
            .collect()
    }

    /// Reads the directories and builds the extractor of `config`; a
    /// notice goes to `notice` for each directory the config turns off.
    pub fn extractor(
        &self,
        config: lexiclade_features::CheckedConfig,
        config_name: &str,
        notice: &mut dyn FnMut(String),
    ) -> anyhow::Result<lexiclade_features::Extractor> {
        use anyhow::Context;
        use lexiclade_features::{Extractor, Paths};
        let main = match (&self.main, config.clusters.enabled) {
            (Some(dir), Some(false)) => {
                notice(format!(
                    "{config_name} sets clusters.enabled = false; \
                     --clusters {} is not used",
                    dir.display()
                ));
                None
            }
            (Some(dir), _) => Some(Paths::read(dir)?),
            (None, Some(true)) => anyhow::bail!(
                "{config_name}: sets clusters.enabled = true, so --clusters \
                 DIR is needed (the -no-clusters configs are the baselines \
                 without clusters)"
            ),
            (None, _) => None,
        };
        let mut sets = Vec::new();
        for (name, dir) in &self.sets {
            let set = config.cluster_sets.iter().find(|s| &s.name == name);
            match set {
                None => anyhow::bail!(
                    "--clusters {name}={}: {config_name} has no cluster set \
                     {name:?} in [[cluster_sets]]",
                    dir.display()
                ),
                Some(s) if s.enabled == Some(false) => notice(format!(
                    "{config_name} sets enabled = false for cluster set \
                     {name:?}; --clusters {name}={} is not used",
                    dir.display()
                )),
                Some(_) => sets.push((name.clone(), Paths::read(dir)?)),
            }
        }
        Extractor::with_sets(config, main, sets)
            .with_context(|| config_name.to_string())
    }
}
