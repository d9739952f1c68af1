//! The native module of the `lexiclade` Python package: thin bindings of
//! the cluster, feature and tagger libraries. Every result comes from the
//! same library calls the command makes; this crate only converts
//! arguments and results, releases the interpreter during long work, lets
//! Ctrl-C stop it, and turns errors into Python exceptions carrying the
//! command's one-line messages.

use pyo3::prelude::*;

mod clusters;
mod errors;
mod features;
mod tagger;

/// Word clusters, cluster-path features, an averaged-perceptron tagger
/// and chunk scoring, from the lexiclade libraries.
#[pymodule]
fn _native(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add("__version__", lexiclade::VERSION)?;
    m.add_class::<clusters::Clusters>()?;
    m.add_class::<features::Features>()?;
    m.add_class::<tagger::Tagger>()?;
    m.add_function(wrap_pyfunction!(tagger::score, m)?)?;
    Ok(())
}
