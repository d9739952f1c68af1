//! `lexiclade.Tagger` and `lexiclade.score`: training, applying and
//! saving a tagger, and chunk scoring.

use std::path::PathBuf;

use lexiclade::atomic::AtomicFile;
use lexiclade::labeled::{choose_scheme, LabeledFile};
use lexiclade_tagger::{
    columns::{Column, ColumnSpec},
    eval::Evaluator,
    pipeline::{column_names, Labeled, TagBuffers, TaggerModel, TrainParams},
    scheme::Scheme,
};
use pyo3::{exceptions::PyTypeError, prelude::*};

use crate::{
    errors::{interruptible, output_error, to_py, value_error, Stop},
    features::{check_columns, make_extractor},
};

fn column(name: &str, index: isize) -> PyResult<Column> {
    Column::new(index).ok_or_else(|| {
        value_error(format!(
            "{name} must not be 0 (1 is the first column, -1 the last)"
        ))
    })
}

fn scheme(name: Option<&str>) -> PyResult<Option<Scheme>> {
    name.map(|s| s.parse::<Scheme>().map_err(to_py)).transpose()
}

/// Labeled sentences, from a column file or from memory.
enum Data {
    /// A column file, read as `lexiclade train` reads it (its lines kept
    /// for the scheme checks' messages).
    File(LabeledFile),
    /// `(tokens, labels)` pairs given by the caller.
    Pairs(Vec<Labeled>),
}

impl Data {
    fn sentences(self) -> Vec<Labeled> {
        match self {
            Data::File(f) => f.sentences,
            Data::Pairs(p) => p,
        }
    }
}

/// Labeled sentences: a column file's path, or a list of
/// `(tokens, labels)` pairs.
fn labeled(
    data: &Bound<'_, PyAny>,
    spec: &ColumnSpec,
    features: &[(i64, &str)],
    what: &str,
) -> PyResult<Data> {
    if let Ok(path) = data.extract::<PathBuf>() {
        let py = data.py();
        return py
            .detach(|| LabeledFile::read(&path, spec, features))
            .map(Data::File)
            .map_err(to_py);
    }
    let pairs: Vec<(Vec<String>, Vec<String>)> =
        data.extract().map_err(|_| {
            PyTypeError::new_err(format!(
                "{what} must be the path of a column file or a list of \
                 (tokens, labels) pairs"
            ))
        })?;
    pairs
        .into_iter()
        .enumerate()
        .map(|(k, (tokens, labels))| {
            if tokens.is_empty() {
                return Err(value_error(format!(
                    "{what}: sentence {} has no tokens",
                    k + 1
                )));
            }
            if tokens.len() != labels.len() {
                return Err(value_error(format!(
                    "{what}: sentence {}: {} tokens and {} labels",
                    k + 1,
                    tokens.len(),
                    labels.len()
                )));
            }
            if !features.is_empty() {
                return Err(value_error(format!(
                    "{what}: the config reads input columns ({}), which \
                     (tokens, labels) pairs do not have; give a column file",
                    features[0].1
                )));
            }
            Ok(Labeled { tokens, labels, columns: Vec::new() })
        })
        .collect::<PyResult<Vec<_>>>()
        .map(Data::Pairs)
}

/// The scheme `lexiclade train` would use for these files, its warnings
/// raised as `UserWarning`s.
fn warn_choice(
    py: Python<'_>,
    given: Option<Scheme>,
    train: &LabeledFile,
    others: &[&LabeledFile],
) -> PyResult<Scheme> {
    let choice = choose_scheme(given, train, others).map_err(to_py)?;
    let category = py.get_type::<pyo3::exceptions::PyUserWarning>();
    for warning in &choice.warnings {
        let text = std::ffi::CString::new(warning.as_str())
            .unwrap_or_else(|_| c"invalid labels".into());
        PyErr::warn(py, category.as_any(), &text, 1)?;
    }
    Ok(choice.scheme)
}

/// A trained tagger: a structured averaged perceptron (Collins 2002) with
/// constrained Viterbi decoding, as `lexiclade train` makes it, holding
/// its feature config and the cluster path of every clustered word.
///
/// Make one with `Tagger.train(...)` or `Tagger.load(path)`; `tag` labels
/// sentences; `save` writes the model file the command writes.
#[pyclass(module = "lexiclade", frozen)]
pub struct Tagger {
    model: TaggerModel,
}

#[pymethods]
impl Tagger {
    /// Train a tagger, as `lexiclade train` does: the same data, config,
    /// clusters, epochs and seed give the same model, byte for byte.
    ///
    /// `train` and `dev` are column files (one token a line with its
    /// columns, a blank line between sentences; `.gz` files are
    /// decompressed) or lists of `(tokens, labels)` pairs. With `dev`,
    /// the epoch that scores best on it is kept, otherwise the last.
    /// `config` is a feature config (default: the built-in one, equal to
    /// `configs/ner.toml`); `clusters` a `Clusters` or a cluster
    /// directory; `cluster_sets` a dict from the names of the config's
    /// `[[cluster_sets]]` to a `Clusters` or directory each. A config
    /// that reads input columns (`[[columns]]`) needs column files. `epochs` passes over the data, shuffled by `seed`;
    /// `prune=False` lets frequent words take any label; `scheme` (iob1,
    /// iob2/bio, iobes, none) is detected from the labels when `None`;
    /// `token_column` and `label_column` are 1-based, negative from the
    /// end. `refit=True` (needs `dev`) chooses the epoch count on `dev`,
    /// then trains afresh on train+dev for that many epochs with the same
    /// seed, as `train --refit` does.
    ///
    /// Column files get the command's checks: a label column apart from
    /// the token column, and a `scheme` the labels do not contradict;
    /// labels invalid in their scheme (a stray `I-X` chunk start, say)
    /// give a `UserWarning` naming the first.
    ///
    /// Runs with the interpreter released; Ctrl-C stops it with
    /// `KeyboardInterrupt`.
    #[staticmethod]
    #[pyo3(signature = (train, dev=None, *, config=None, clusters=None, epochs=10, seed=1, prune=true, scheme=None, token_column=1, label_column=-1, refit=false, cluster_sets=None))]
    #[allow(clippy::too_many_arguments)]
    fn train(
        py: Python<'_>,
        train: &Bound<'_, PyAny>,
        dev: Option<&Bound<'_, PyAny>>,
        config: Option<PathBuf>,
        clusters: Option<&Bound<'_, PyAny>>,
        epochs: usize,
        seed: u64,
        prune: bool,
        scheme: Option<&str>,
        token_column: isize,
        label_column: isize,
        refit: bool,
        cluster_sets: Option<&Bound<'_, pyo3::types::PyDict>>,
    ) -> PyResult<Tagger> {
        let spec = ColumnSpec {
            token: column("token_column", token_column)?,
            label: column("label_column", label_column)?,
        };
        let scheme = self::scheme(scheme)?;
        let extractor =
            make_extractor(config.as_ref(), clusters, cluster_sets)?;
        let features = column_names(&extractor);
        let train = labeled(train, &spec, &features, "train")?;
        let dev =
            dev.map(|d| labeled(d, &spec, &features, "dev")).transpose()?;
        if refit && dev.is_none() {
            return Err(value_error(
                "refit=True needs dev: the epoch count to refit with is \
                 chosen on the development data",
            ));
        }
        if epochs == 0 {
            return Err(value_error("epochs must be at least 1"));
        }
        // Files get the command's scheme choice (checked, with its
        // warnings); pairs the given or detected scheme.
        let scheme = match (&train, &dev) {
            (Data::File(t), None) => Some(warn_choice(py, scheme, t, &[])?),
            (Data::File(t), Some(Data::File(d))) => {
                Some(warn_choice(py, scheme, t, &[d])?)
            }
            _ => scheme,
        };
        let train = train.sentences();
        let dev = dev.map(Data::sentences);
        let params = TrainParams { epochs, seed, prune, scheme, refit };
        let mut model = interruptible(py, |stop: &Stop| {
            TaggerModel::train(
                &train,
                dev.as_deref(),
                extractor,
                &params,
                &mut |_, _| stop.check(),
                &mut |_| stop.check(),
            )
        })?
        .map_err(to_py)?;
        model.version = lexiclade::VERSION.to_string();
        Ok(Tagger { model })
    }

    /// Read a model file written by `lexiclade train` or `save`.
    #[staticmethod]
    fn load(py: Python<'_>, path: PathBuf) -> PyResult<Tagger> {
        py.detach(|| TaggerModel::load(&path))
            .map(|model| Tagger { model })
            .map_err(to_py)
    }

    /// Write the model file, byte for byte as `lexiclade train` writes it
    /// for the same training. The file appears whole or not at all; an
    /// existing one is refused with `FileExistsError` unless `force`.
    #[pyo3(signature = (path, *, force=false))]
    fn save(
        &self,
        py: Python<'_>,
        path: PathBuf,
        force: bool,
    ) -> PyResult<()> {
        py.detach(|| {
            let mut file =
                AtomicFile::create(&path, force).map_err(output_error)?;
            let bytes = lexiclade_tagger::model::encode(&self.model);
            file.writer()
                .write_all(&bytes)
                .map_err(|e| to_py(anyhow::Error::new(e)))?;
            file.commit().map_err(to_py)
        })
    }

    /// The labels of each sentence of `sentences` (a list of token
    /// lists), in the training data's scheme. A model whose config reads
    /// input columns needs `columns`: for each sentence, one list of
    /// values per column (in the order of `Tagger.columns`), each as
    /// long as the sentence.
    #[pyo3(signature = (sentences, columns=None))]
    fn tag(
        &self,
        py: Python<'_>,
        sentences: Vec<Vec<String>>,
        columns: Option<Vec<Vec<Vec<String>>>>,
    ) -> PyResult<Vec<Vec<String>>> {
        let wanted = self.model.extractor.columns().len();
        let columns = match columns {
            Some(c) if c.len() != sentences.len() => {
                return Err(value_error(format!(
                    "{} sentences but input columns for {}",
                    sentences.len(),
                    c.len()
                )))
            }
            Some(c) => c,
            None if wanted > 0 => {
                return Err(value_error(format!(
                    "the model reads {wanted} input column{} as features \
                     ({}); give them as columns=",
                    if wanted == 1 { "" } else { "s" },
                    self.model.columns()[0].1
                )))
            }
            None => vec![Vec::new(); sentences.len()],
        };
        for (s, c) in sentences.iter().zip(&columns) {
            check_columns(&self.model.extractor, s.len(), c)?;
        }
        Ok(py.detach(|| {
            let mut work = TagBuffers::default();
            sentences
                .iter()
                .zip(&columns)
                .map(|(s, c)| {
                    let slices: Vec<&[String]> =
                        c.iter().map(Vec::as_slice).collect();
                    self.model.tag_with(s, &slices, &mut work)
                })
                .collect()
        }))
    }

    /// The input columns the model reads, as `(column, name)` pairs
    /// (1-based, negative from the end, as at training).
    #[getter]
    fn columns(&self) -> Vec<(i64, String)> {
        self.model
            .columns()
            .into_iter()
            .map(|(c, n)| (c, n.to_string()))
            .collect()
    }

    /// The labels the tagger knows, in its training data's scheme (for
    /// IOBES decoding, the decoder's own labels).
    #[getter]
    fn labels(&self) -> Vec<String> {
        self.model.labels.clone()
    }

    /// The tag scheme of the training labels.
    #[getter]
    fn scheme(&self) -> String {
        self.model.scheme.to_string()
    }

    /// The epoch whose weights were kept (1-based).
    #[getter]
    fn best_epoch(&self) -> usize {
        self.model.best_epoch
    }

    /// The number of features the model kept.
    #[getter]
    fn feature_count(&self) -> usize {
        self.model.features.len()
    }

    /// Whether the model uses cluster path features.
    #[getter]
    fn uses_clusters(&self) -> bool {
        self.model.extractor.uses_clusters()
    }

    fn __repr__(&self) -> String {
        format!(
            "<lexiclade.Tagger: {} labels ({}), {} features, best epoch {}>",
            self.model.labels.len(),
            self.model.scheme,
            self.model.features.len(),
            self.model.best_epoch
        )
    }
}

/// Score predicted labels against gold labels chunk by chunk, as
/// `lexiclade eval --json` does: the same dict, with `scheme`,
/// `sentences`, `tokens`, `gold_chunks`, `predicted_chunks`,
/// `correct_chunks`, `overall` and `per_type` (precision, recall, f1,
/// support, predicted, correct; fractions, not percentages) and
/// `token_accuracy`.
///
/// `gold` and `pred` are lists of label lists, one per sentence, of equal
/// lengths. `scheme` (iob1, iob2/bio, iobes, none) is detected from the
/// gold labels when `None`. A chunk counts as correct only with exactly
/// the gold boundaries and type; chunks are read with the CoNLL-2000
/// evaluation's rules in every scheme.
#[pyfunction]
#[pyo3(signature = (gold, pred, scheme=None))]
pub fn score<'py>(
    py: Python<'py>,
    gold: Vec<Vec<String>>,
    pred: Vec<Vec<String>>,
    scheme: Option<&str>,
) -> PyResult<Bound<'py, PyAny>> {
    if gold.len() != pred.len() {
        return Err(value_error(format!(
            "{} gold sentences but {} predicted ones",
            gold.len(),
            pred.len()
        )));
    }
    let scheme =
        self::scheme(scheme)?.unwrap_or_else(|| Scheme::detect(gold.iter()));
    let mut eval = Evaluator::new(scheme);
    for (k, (g, p)) in gold.iter().zip(&pred).enumerate() {
        eval.add_labels(g, p).map_err(|e| {
            to_py(anyhow::Error::new(e).context(format!("sentence {}", k + 1)))
        })?;
    }
    let text = serde_json::to_string(&eval.report())
        .map_err(|e| value_error(e.to_string()))?;
    py.import("json")?.call_method1("loads", (text,))
}
