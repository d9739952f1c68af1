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
    if let Some(mixed) = file.mixed.filter(|m| m.differs.is_some()) {
        if !quiet {
            eprintln!("lexiclade: warning: {}: {mixed}", file.path.display());
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

/// The default number of worker threads: what the machine offers, at
/// most 8 (the pair updates stop scaling beyond that).
pub fn default_threads() -> usize {
    std::thread::available_parallelism().map_or(1, |n| n.get()).min(8)
}

/// The most worker threads `--threads` accepts: far beyond what the
/// parallel loops can use, low enough that a typo cannot make thousands
/// of threads and their stacks.
pub const MAX_THREADS: usize = 1024;

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
