//! `lexiclade.Clusters`: learning word clusters, reading and writing a
//! cluster directory, and questions about words and paths.

use std::path::{Path, PathBuf};

use lexiclade::atomic::AtomicDir;
use lexiclade_cluster::{
    cluster, cluster_refined, expand_inputs, ClusterOutput, ClusterParams,
    ClusterTable, Counter, Counts, ExchangeParams, Hierarchy, TokenOptions,
};
use lexiclade_features::Paths;
use pyo3::{
    exceptions::{PyTypeError, PyUserWarning},
    prelude::*,
    types::{PyDict, PyString},
};

use crate::errors::{
    display_list, interruptible, output_error, path_list, to_py, value_error,
    Stop,
};

/// The three files of a cluster directory, as `lexiclade cluster` writes
/// them.
const FILES: [&str; 3] = ["clusters.tsv", "merges.tsv", "summary.json"];

/// Where the files of a cluster directory come from on save.
enum Written {
    /// Learned here: written by the library's writer, as the command
    /// does. The counts keep no bigrams (the writer needs none).
    Learned { counts: Counts, hierarchy: Hierarchy },
    /// Read from a directory: its files, byte for byte, in [`FILES`]
    /// order.
    Read([Vec<u8>; 3]),
}

/// Word clusters: every clustered word with its class, its path in the
/// class hierarchy and its count, as in a directory written by
/// `lexiclade cluster`.
///
/// Make one with `Clusters.learn(...)` from text or `Clusters.load(dir)`
/// from a cluster directory; `save(dir)` writes the directory the command
/// writes. A path is a string of 0s and 1s from the root of the hierarchy;
/// words whose paths share a long prefix were merged late, and are alike.
#[pyclass(module = "lexiclade", frozen)]
pub struct Clusters {
    table: ClusterTable,
    /// Word → path look-ups as the features make them.
    paths: Paths,
    written: Written,
}

impl Clusters {
    /// The paths for feature extraction.
    pub fn paths(&self) -> &Paths {
        &self.paths
    }

    fn learned(mut counts: Counts, hierarchy: Hierarchy) -> Clusters {
        let table = ClusterOutput { counts: &counts, hierarchy: &hierarchy }
            .table(lexiclade::VERSION);
        counts.bigrams = Vec::new();
        let paths = Paths::from_table(&table);
        Clusters {
            table,
            paths,
            written: Written::Learned { counts, hierarchy },
        }
    }
}

/// Checks a count argument the way the command checks its flag.
fn at_least(name: &str, value: u64, least: u64) -> PyResult<()> {
    if value < least {
        return Err(value_error(format!(
            "{name} must be at least {least}, got {value}"
        )));
    }
    Ok(())
}

/// Counts lines given from Python: each string is one or more lines
/// (split at `\n`, a trailing `\r` dropped and a byte-order mark at the
/// very start, as files are read).
fn count_lines(
    py: Python<'_>,
    lines: &Bound<'_, PyAny>,
    options: TokenOptions,
    min_count: u64,
) -> PyResult<Counts> {
    let mut counter = Counter::new(options);
    let mut first = true;
    let mut add = |text: &str| {
        let text = match first {
            true => text.strip_prefix('\u{feff}').unwrap_or(text),
            false => text,
        };
        first = false;
        for line in text.split('\n') {
            counter.add_line(line.strip_suffix('\r').unwrap_or(line));
        }
    };
    if let Ok(text) = lines.cast::<PyString>() {
        add(&text.to_cow()?);
    } else {
        for (k, item) in lines.try_iter()?.enumerate() {
            let item = item?;
            let text = item.cast::<PyString>().map_err(|_| {
                PyTypeError::new_err(format!(
                    "lines must hold strings, item {k} is {}",
                    item.get_type()
                        .name()
                        .map_or("?".into(), |n| n.to_string())
                ))
            })?;
            add(&text.to_cow()?);
            if k % 4096 == 4095 {
                py.check_signals()?;
            }
        }
    }
    Ok(counter.finish(min_count))
}

#[pymethods]
impl Clusters {
    /// Learn word clusters (Brown et al. 1992, with a frequency window of
    /// `classes` classes) from text, as `lexiclade cluster` does.
    ///
    /// Give either `lines`, a string or an iterable of strings (each one
    /// a sentence; a string holding newlines is several), or `files`, a
    /// path or a list of paths to text files or directories (every file
    /// inside, in name order; `.gz` files are decompressed). Tokens are
    /// separated by spaces and tabs.
    ///
    /// Options, as the command's flags: `classes` the number of classes
    /// (at least 2; fewer words make fewer classes, with a `UserWarning`),
    /// `min_count` drops rarer words, `tokenize` splits raw text into
    /// words and punctuation, `lowercase` lowercases every token (the
    /// Unicode mapping of the whole word), `nfc` puts the text in Unicode
    /// normalisation form C first (so composed and decomposed spellings
    /// are one word), `threads` the worker threads (1 to 1,024; default:
    /// the cores, at most 8; the result is the same for any number). `exchange_passes` runs up to that many
    /// passes of the exchange algorithm (Kneser and Ney 1993) after the
    /// window phase, stopping after a pass that raised the AMI by at most
    /// `exchange_min_gain` bits (default 1e-4); 0, the default, leaves
    /// them out.
    ///
    /// Runs with the interpreter released (except while `lines` are read,
    /// which are Python objects); Ctrl-C stops it with
    /// `KeyboardInterrupt`. Raises `OSError` for a file that cannot be
    /// read, `ValueError` for bad text or options.
    #[staticmethod]
    #[pyo3(signature = (lines=None, *, files=None, classes=1000, min_count=1, tokenize=false, lowercase=false, nfc=false, threads=None, exchange_passes=0, exchange_min_gain=None))]
    #[allow(clippy::too_many_arguments)]
    fn learn(
        py: Python<'_>,
        lines: Option<&Bound<'_, PyAny>>,
        files: Option<&Bound<'_, PyAny>>,
        classes: usize,
        min_count: u64,
        tokenize: bool,
        lowercase: bool,
        nfc: bool,
        threads: Option<usize>,
        exchange_passes: u32,
        exchange_min_gain: Option<f64>,
    ) -> PyResult<Clusters> {
        at_least("classes", classes as u64, 2)?;
        let exchange = ExchangeParams {
            max_passes: exchange_passes,
            min_pass_gain_bits: exchange_min_gain.unwrap_or(
                lexiclade_cluster::exchange::DEFAULT_MIN_PASS_GAIN_BITS,
            ),
        };
        if exchange_passes > 0 && exchange.check().is_err() {
            return Err(value_error(format!(
                "exchange_min_gain must be a number of at least 0, got {}",
                exchange.min_pass_gain_bits
            )));
        }
        at_least("min_count", min_count, 1)?;
        let threads = threads.unwrap_or_else(lexiclade::default_threads);
        at_least("threads", threads as u64, 1)?;
        if threads > lexiclade::MAX_THREADS {
            return Err(value_error(format!(
                "threads must be between 1 and {}, got {threads}",
                lexiclade::MAX_THREADS
            )));
        }
        let options = TokenOptions { tokenize, lowercase, nfc };
        let (counts, what) = match (lines, files) {
            (Some(lines), None) => {
                let counts = count_lines(py, lines, options, min_count)?;
                (counts, "the lines given".to_string())
            }
            (None, Some(files)) => {
                let files = path_list(files)?;
                let sources = expand_inputs(&files).map_err(to_py)?;
                if sources.is_empty() {
                    return Err(value_error(format!(
                        "no input files found in {}",
                        display_list(&files)
                    )));
                }
                let counts = interruptible(py, |stop: &Stop| {
                    Counts::from_sources(
                        &sources,
                        options,
                        min_count,
                        &mut |_| stop.check(),
                    )
                })?
                .map_err(to_py)?;
                (counts, display_list(&files))
            }
            _ => {
                return Err(PyTypeError::new_err(
                    "give either lines or files, not both",
                ))
            }
        };
        if counts.len() < 2 {
            return Err(value_error(format!(
                "{what}: clustering needs at least 2 distinct words, found {}",
                counts.len()
            )));
        }
        if counts.len() < classes {
            // The command's notice, as a warning the caller can filter.
            let notice = format!(
                "classes {classes} lowered to {}, the number of clustered \
                 words",
                counts.len()
            );
            let notice = std::ffi::CString::new(notice)
                .map_err(|e| value_error(e.to_string()))?;
            let category = py.get_type::<PyUserWarning>();
            PyErr::warn(py, category.as_any(), &notice, 1)?;
        }
        let params = ClusterParams { classes };
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .map_err(|e| {
                value_error(format!("cannot start {threads} threads: {e}"))
            })?;
        let hierarchy = interruptible(py, |stop: &Stop| {
            pool.install(|| {
                let mut progress = |_| stop.check();
                if exchange_passes == 0 {
                    cluster(&counts, &params, &mut progress)
                } else {
                    cluster_refined(
                        &counts,
                        &params,
                        &exchange,
                        &mut progress,
                        &mut |_| stop.check(),
                    )
                    .map(|(hierarchy, _)| hierarchy)
                }
            })
        })?
        .map_err(to_py)?;
        Ok(Clusters::learned(counts, hierarchy))
    }

    /// Read a cluster directory written by `lexiclade cluster` (or by
    /// `save`): its `clusters.tsv`, `merges.tsv` and `summary.json`.
    #[staticmethod]
    fn load(py: Python<'_>, dir: PathBuf) -> PyResult<Clusters> {
        py.detach(|| {
            let table = ClusterTable::read(&dir).map_err(to_py)?;
            let mut files: [Vec<u8>; 3] = Default::default();
            for (bytes, name) in files.iter_mut().zip(FILES) {
                let path = dir.join(name);
                *bytes = std::fs::read(&path).map_err(|e| {
                    to_py(
                        anyhow::Error::new(e)
                            .context(path.display().to_string()),
                    )
                })?;
            }
            let paths = Paths::from_table(&table);
            Ok(Clusters { table, paths, written: Written::Read(files) })
        })
    }

    /// Write the cluster directory `dir`: `clusters.tsv`, `merges.tsv`
    /// and `summary.json`, byte for byte as `lexiclade cluster` writes
    /// them for the same input (the command's `timing.json`, which
    /// depends on the machine, is left out). The directory appears whole
    /// or not at all. An existing non-empty `dir` is refused with
    /// `FileExistsError` unless `force`.
    #[pyo3(signature = (dir, *, force=false))]
    fn save(&self, py: Python<'_>, dir: PathBuf, force: bool) -> PyResult<()> {
        py.detach(|| {
            let out = AtomicDir::create(&dir, force).map_err(output_error)?;
            out.fill(|target| write_files(&self.written, target))
                .map_err(to_py)?;
            out.commit().map_err(to_py)
        })
    }

    /// The path of `word`'s class, or `None` if it was not clustered. When
    /// the clusters were learned from lowercased text, the word is
    /// lowercased first, as the features do.
    fn path(&self, word: &str) -> Option<String> {
        self.paths.path(word).map(str::to_string)
    }

    /// The first `bits` bits of `word`'s path (the whole path when it is
    /// shorter), or `None` if the word was not clustered: the value of
    /// the prefix features.
    fn prefix(&self, word: &str, bits: usize) -> Option<String> {
        self.paths.path(word).map(|p| p[..bits.min(p.len())].to_string())
    }

    /// The words whose path starts with `prefix` (a string of 0s and 1s;
    /// `""` gives every word), the most frequent first.
    fn words(&self, prefix: &str) -> PyResult<Vec<String>> {
        if !prefix.bytes().all(|b| b == b'0' || b == b'1') {
            return Err(value_error(format!(
                "a path prefix is a string of 0s and 1s, got {prefix:?}"
            )));
        }
        Ok(self.rows(self.table.under_prefix(prefix)))
    }

    /// The `k` words closest to `word` in the hierarchy, as `lexiclade
    /// show` lists them: first the rest of its class, then the others by
    /// the length of the path prefix they share with it; ties by count.
    /// `word` is matched exactly; a word not clustered raises `KeyError`.
    #[pyo3(signature = (word, k=10))]
    fn nearest(&self, word: &str, k: usize) -> PyResult<Vec<String>> {
        let index = self.table.find(word).ok_or_else(|| {
            pyo3::exceptions::PyKeyError::new_err(word.to_string())
        })?;
        Ok(self.rows(self.table.nearest(index, k)))
    }

    /// Every clustered word as a dict with the keys `word`, `path`,
    /// `class` and `count`, by rank (count descending): the rows of
    /// `clusters.tsv`, in the records form DataFrame constructors take.
    fn to_records<'py>(
        &self,
        py: Python<'py>,
    ) -> PyResult<Vec<Bound<'py, PyDict>>> {
        self.table
            .entries
            .iter()
            .map(|e| {
                let row = PyDict::new(py);
                row.set_item("word", &e.word)?;
                row.set_item("path", &e.path)?;
                row.set_item("class", e.class)?;
                row.set_item("count", e.count)?;
                Ok(row)
            })
            .collect()
    }

    /// The contents of `summary.json` as a dict: sizes, options and the
    /// AMI.
    #[getter]
    fn summary<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
        let text = serde_json::to_string(&self.table.summary)
            .map_err(|e| value_error(e.to_string()))?;
        py.import("json")?.call_method1("loads", (text,))
    }

    /// The number of classes.
    #[getter]
    fn classes(&self) -> u64 {
        self.table.summary.classes
    }

    /// The average mutual information of adjacent classes, in bits.
    #[getter]
    fn ami_bits(&self) -> f64 {
        self.table.summary.ami_bits
    }

    /// Whether the text was lowercased before counting.
    #[getter]
    fn lowercase(&self) -> bool {
        self.table.summary.lowercase
    }

    /// Whether the text was put in Unicode normalisation form C before
    /// counting (look-ups then normalise words the same way).
    #[getter]
    fn nfc(&self) -> bool {
        self.table.summary.nfc
    }

    /// The number of clustered words.
    fn __len__(&self) -> usize {
        self.table.entries.len()
    }

    /// Whether `word` has a path (lowercased first as in `path`).
    fn __contains__(&self, word: &str) -> bool {
        self.paths.path(word).is_some()
    }

    fn __repr__(&self) -> String {
        format!(
            "<lexiclade.Clusters: {} words in {} classes, AMI {:.4} bits>",
            self.table.entries.len(),
            self.table.summary.classes,
            self.table.summary.ami_bits
        )
    }
}

impl Clusters {
    fn rows(&self, indices: Vec<usize>) -> Vec<String> {
        indices
            .into_iter()
            .map(|i| self.table.entries[i].word.clone())
            .collect()
    }
}

fn write_files(written: &Written, dir: &Path) -> anyhow::Result<()> {
    match written {
        Written::Learned { counts, hierarchy } => {
            ClusterOutput { counts, hierarchy }
                .write_dir(dir, lexiclade::VERSION)?;
        }
        Written::Read(files) => {
            for (bytes, name) in files.iter().zip(FILES) {
                let path = dir.join(name);
                std::fs::write(&path, bytes).map_err(|e| {
                    anyhow::Error::new(e).context(path.display().to_string())
                })?;
            }
        }
    }
    Ok(())
}
