//! `lexiclade.Features`: the feature strings a config gives each token.

use std::path::PathBuf;

use lexiclade_features::{
    CheckedConfig, Extractor, FeatureConfig, Features as Buffers, Paths,
};
use pyo3::{prelude::*, types::PyDict};

use crate::{
    clusters::Clusters,
    errors::{to_py, value_error},
};

/// The checked feature config at `path`, or the built-in defaults (which
/// equal `configs/ner.toml`); errors name the file as the command does.
pub fn read_config(path: Option<&PathBuf>) -> PyResult<CheckedConfig> {
    let config = match path {
        Some(path) => FeatureConfig::read(path).map_err(to_py)?,
        None => FeatureConfig::default(),
    };
    config.check().map_err(|e| {
        let what = match path {
            Some(p) => p.display().to_string(),
            None => "default config".into(),
        };
        to_py(anyhow::Error::new(e).context(what))
    })
}

/// The paths of `clusters`: a `Clusters` object, a cluster directory, or
/// `None`.
pub fn cluster_paths(
    clusters: Option<&Bound<'_, PyAny>>,
) -> PyResult<Option<Paths>> {
    let Some(clusters) = clusters else {
        return Ok(None);
    };
    if let Ok(learned) = clusters.cast::<Clusters>() {
        return Ok(Some(learned.get().paths().clone()));
    }
    let dir: PathBuf = clusters.extract().map_err(|_| {
        pyo3::exceptions::PyTypeError::new_err(
            "clusters must be a lexiclade.Clusters or the path of a cluster \
             directory",
        )
    })?;
    Paths::read(&dir).map(Some).map_err(to_py)
}

/// The extractor for a config and its clusters, as the command builds it
/// from `--config` and `--clusters [NAME=]DIR`: `clusters` the main set,
/// `cluster_sets` the config's `[[cluster_sets]]` by name (each a
/// `Clusters` or a cluster directory).
pub fn make_extractor(
    config: Option<&PathBuf>,
    clusters: Option<&Bound<'_, PyAny>>,
    cluster_sets: Option<&Bound<'_, PyDict>>,
) -> PyResult<Extractor> {
    let name =
        config.map_or("default config".into(), |p| p.display().to_string());
    let checked = read_config(config)?;
    let paths = match (checked.clusters.enabled, clusters) {
        (Some(false), _) => None,
        (Some(true), None) => {
            return Err(value_error(format!(
                "{name}: sets clusters.enabled = true, so clusters are \
                 needed (the -no-clusters configs are the baselines \
                 without clusters)"
            )))
        }
        (_, clusters) => cluster_paths(clusters)?,
    };
    let mut sets = Vec::new();
    if let Some(dict) = cluster_sets {
        for (key, value) in dict.iter() {
            let key: String = key.extract()?;
            if let Some(p) = cluster_paths(Some(&value))? {
                sets.push((key, p));
            }
        }
    }
    Extractor::with_sets(checked, paths, sets)
        .map_err(|e| to_py(anyhow::Error::new(e).context(name)))
}

/// Refuses input columns that do not match what `extractor` reads.
pub fn check_columns(
    extractor: &Extractor,
    tokens: usize,
    columns: &[Vec<String>],
) -> PyResult<()> {
    let wanted = extractor.columns().len();
    if columns.len() != wanted {
        return Err(value_error(format!(
            "the config reads {wanted} input column{}, but {} were given",
            if wanted == 1 { "" } else { "s" },
            columns.len()
        )));
    }
    if let Some(c) = columns.iter().find(|c| c.len() != tokens) {
        return Err(value_error(format!(
            "an input column has {} values for {tokens} tokens",
            c.len()
        )));
    }
    Ok(())
}

/// The features of each token of a sentence under a feature config, as
/// `lexiclade featurize` writes them.
///
/// `config` is the path of a feature config (TOML, see `configs/`; an
/// unknown key is an error) or `None` for the built-in defaults, which
/// equal `configs/ner.toml`. `clusters` (a `Clusters`, or the path of a
/// cluster directory) gives the cluster path features; it is required
/// when the config sets `clusters.enabled = true` and unused when it sets
/// false; when the config leaves the key out, cluster features are on
/// exactly when `clusters` is given.
#[pyclass(module = "lexiclade", frozen)]
pub struct Features {
    extractor: Extractor,
}

#[pymethods]
impl Features {
    #[new]
    #[pyo3(signature = (config=None, *, clusters=None, cluster_sets=None))]
    fn new(
        config: Option<PathBuf>,
        clusters: Option<&Bound<'_, PyAny>>,
        cluster_sets: Option<&Bound<'_, PyDict>>,
    ) -> PyResult<Features> {
        let extractor =
            make_extractor(config.as_ref(), clusters, cluster_sets)?;
        Ok(Features { extractor })
    }

    /// The features of every token of `tokens` (a list of strings): one
    /// list of feature strings per token, such as `w=Paris`, `w[-1]=in`,
    /// `p4[0]=0110` (a 4-bit prefix of the word's cluster path) or
    /// `w[-2]:start`. When the config reads input columns
    /// (`[[columns]]`), `columns` gives their values: one list per
    /// column, in the order of `Features.columns`, each as long as
    /// `tokens`.
    #[pyo3(signature = (tokens, columns=None))]
    fn sentence(
        &self,
        tokens: Vec<String>,
        columns: Option<Vec<Vec<String>>>,
    ) -> PyResult<Vec<Vec<String>>> {
        let columns = columns.unwrap_or_default();
        check_columns(&self.extractor, tokens.len(), &columns)?;
        let slices: Vec<&[String]> =
            columns.iter().map(Vec::as_slice).collect();
        let mut buffers = Buffers::new();
        self.extractor.extract_with(&tokens, &slices, &mut buffers);
        Ok(buffers.iter().map(|t| t.map(str::to_string).collect()).collect())
    }

    /// The input columns the config reads, as `(column, name)` pairs:
    /// the column numbered as `train --token-column` (1-based, negative
    /// from the end) and the `[[columns]]` entry's name.
    #[getter]
    fn columns(&self) -> Vec<(i64, String)> {
        lexiclade_tagger::pipeline::column_names(&self.extractor)
            .into_iter()
            .map(|(c, n)| (c, n.to_string()))
            .collect()
    }

    /// `sentence` for each of `sentences`, a list of token lists.
    fn sentences(
        &self,
        py: Python<'_>,
        sentences: Vec<Vec<String>>,
    ) -> PyResult<Vec<Vec<Vec<String>>>> {
        if !self.extractor.columns().is_empty() {
            return Err(value_error(
                "the config reads input columns; give them to \
                 sentence(tokens, columns) one sentence at a time",
            ));
        }
        Ok(py.detach(|| {
            let mut buffers = Buffers::new();
            sentences
                .iter()
                .map(|tokens| {
                    self.extractor.extract(tokens, &mut buffers);
                    buffers
                        .iter()
                        .map(|t| t.map(str::to_string).collect())
                        .collect()
                })
                .collect()
        }))
    }

    /// The config as TOML, defaults filled in.
    #[getter]
    fn config(&self) -> String {
        self.extractor.config().to_toml()
    }

    /// Whether cluster path features are emitted.
    #[getter]
    fn uses_clusters(&self) -> bool {
        self.extractor.uses_clusters()
    }

    fn __repr__(&self) -> String {
        format!(
            "<lexiclade.Features: {} cluster features>",
            if self.extractor.uses_clusters() { "with" } else { "without" }
        )
    }
}
