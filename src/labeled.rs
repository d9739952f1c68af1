//! Labeled column files for training and experiments: the tokens and
//! labels of every sentence (from two distinct columns), the line of
//! every token, and the tag scheme checked against the labels, so that
//! a warning or a refusal can name the file and line.

use std::path::{Path, PathBuf};

use anyhow::{anyhow, Result};
use lexiclade_tagger::{
    columns::{read_columns, ColumnSpec},
    pipeline::Labeled,
    scheme::{Detection, Detector, Scheme, Site},
};

/// A labeled column file in memory.
#[derive(Clone, Debug)]
pub struct LabeledFile {
    /// The file as the caller named it.
    pub path: PathBuf,
    /// The sentences, in file order.
    pub sentences: Vec<Labeled>,
    /// A warning naming a row that would split otherwise on tabs alone,
    /// in a file whose rows mix tabs and spaces (for the caller to print
    /// unless asked to be quiet).
    pub mixed: Option<String>,
    /// The 1-based line of each token, sentence by sentence.
    lines: Vec<Vec<u64>>,
}

impl LabeledFile {
    /// Reads `path` with the token and label columns of `spec` and the
    /// values of the feature columns `features` (column and entry name, as
    /// [`column_names`](lexiclade_tagger::pipeline::column_names) gives
    /// them); refused when token and label are the same column of a row
    /// (one-column files too), or when a feature column is missing or is
    /// the label column.
    pub fn read(
        path: &Path,
        spec: &ColumnSpec,
        features: &[(i64, &str)],
    ) -> Result<LabeledFile> {
        let file = read_columns(path)?;
        let mut sentences = Vec::with_capacity(file.sentences.len());
        let mut lines = Vec::with_capacity(file.sentences.len());
        for s in &file.sentences {
            sentences.push(Labeled::read(s, spec, features)?);
            lines.push(s.lines().to_vec());
        }
        let mixed = file.mixed_warning();
        Ok(LabeledFile { path: path.to_path_buf(), sentences, mixed, lines })
    }

    /// The line of a token.
    pub fn line(&self, site: Site) -> u64 {
        self.lines[site.sentence][site.token]
    }

    /// The scheme detector after all of this file's labels.
    fn detector(&self) -> Detector {
        Detector::of(self.sentences.iter().map(|s| &s.labels))
    }

    /// The warning for labels invalid under the detected or given scheme.
    fn warning(&self, detection: &Detection) -> Option<String> {
        let invalid = detection.invalid.as_ref()?;
        let n = invalid.count;
        Some(format!(
            "{}:{}: {} is invalid in {} ({} such label{} in the file; \
             chunks are read with the CoNLL rules, as eval reads them)",
            self.path.display(),
            self.line(invalid.site),
            invalid.what,
            detection.scheme,
            n,
            if n == 1 { "" } else { "s" }
        ))
    }
}

/// The scheme of a training file and the warnings about its labels.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SchemeChoice {
    /// The given scheme, or the one detected from the training labels.
    pub scheme: Scheme,
    /// One line per file with labels invalid under `scheme` (a few stray
    /// `I-X` chunk starts in IOB2, say), naming the first of them; for
    /// the caller to print unless asked to be quiet.
    pub warnings: Vec<String>,
}

/// The scheme of `train`: `given` if the labels do not contradict it,
/// else refused naming the first contradicting line; detected when not
/// given (see [`Detector`]). Each of `others` (development and test
/// files) is checked against that scheme the same way.
pub fn choose_scheme(
    given: Option<Scheme>,
    train: &LabeledFile,
    others: &[&LabeledFile],
) -> Result<SchemeChoice> {
    let detector = train.detector();
    let detection = match given {
        Some(given) => check(train, &detector, given)?,
        None => detector.detection(),
    };
    let scheme = detection.scheme;
    let mut warnings: Vec<String> =
        train.warning(&detection).into_iter().collect();
    for file in others {
        let detection = check(file, &file.detector(), scheme)?;
        warnings.extend(file.warning(&detection));
    }
    Ok(SchemeChoice { scheme, warnings })
}

fn check(
    file: &LabeledFile,
    detector: &Detector,
    scheme: Scheme,
) -> Result<Detection> {
    detector.check(scheme).map_err(|c| {
        anyhow!("{}:{}: {c}", file.path.display(), file.line(c.first.site))
    })
}
