//! The experiment config of `lexiclade ablate`: a TOML file naming the
//! data, the clusters, the feature sets to compare, the training sizes,
//! the seeds and the epochs. Unknown keys are an error. Relative paths
//! are relative to the config file's directory.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use anyhow::{bail, Context, Result};
use serde::{Deserialize, Serialize};

/// A whole experiment.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Experiment {
    /// The labeled data.
    pub data: Data,
    /// The clusters the feature sets use.
    #[serde(default)]
    pub clusters: Option<Clusters>,
    /// Cluster directories by the name of a feature config's
    /// `[[cluster_sets]]` entry, for every feature set whose config has
    /// that set (`[cluster_sets]`, `lower = "dir"`). Default: none.
    #[serde(default)]
    pub cluster_sets: BTreeMap<String, PathBuf>,
    /// The feature sets to compare; the first is the baseline unless
    /// `training.baseline` names another.
    pub features: Vec<FeatureSet>,
    /// Sizes, seeds, epochs and the significance test.
    #[serde(default)]
    pub training: Training,
}

/// Train, development and test files.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Data {
    /// The training file (column format).
    pub train: PathBuf,
    /// The development file: picks the best epoch.
    pub dev: PathBuf,
    /// The test file: every reported score.
    pub test: PathBuf,
    /// The tag scheme (`iob1`, `iob2`, `iobes`, `none`); detected from
    /// the training labels when left out.
    #[serde(default)]
    pub scheme: Option<String>,
    /// The token column, 1-based, negative from the end (default 1).
    #[serde(default = "first")]
    pub token_column: isize,
    /// The label column (default −1, the last).
    #[serde(default = "last")]
    pub label_column: isize,
}

fn first() -> isize {
    1
}

fn last() -> isize {
    -1
}

/// Where the clusters come from: an existing cluster directory, or raw
/// text to cluster first.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Clusters {
    /// An existing cluster directory.
    #[serde(default)]
    pub dir: Option<PathBuf>,
    /// Raw text files or directories to cluster instead.
    #[serde(default)]
    pub raw: Vec<PathBuf>,
    /// Classes when clustering raw text (default 256).
    #[serde(default = "classes")]
    pub classes: usize,
    /// Minimum word count when clustering raw text (default 1).
    #[serde(default = "one")]
    pub min_count: u64,
    /// Tokenise the raw text (default false).
    #[serde(default)]
    pub tokenize: bool,
    /// Lowercase the raw text (default false).
    #[serde(default)]
    pub lowercase: bool,
    /// Exchange passes after the window phase when clustering raw text
    /// (as `cluster --exchange-passes`; default 0, none).
    #[serde(default)]
    pub exchange_passes: u32,
}

fn classes() -> usize {
    256
}

fn one() -> u64 {
    1
}

/// One feature set: a feature config, optionally with other cluster
/// prefix lengths.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FeatureSet {
    /// The name in tables and plots.
    pub name: String,
    /// The feature config (TOML) it starts from.
    pub config: PathBuf,
    /// Replaces the config's cluster prefix lengths.
    #[serde(default)]
    pub prefixes: Option<Vec<usize>>,
    /// Replaces the config's whole-path switch.
    #[serde(default)]
    pub whole_path: Option<bool>,
    /// A cluster directory for this feature set instead of the
    /// experiment's `[clusters]`: to compare clusterings (class counts,
    /// corpora, with and without exchange) under the same subsets.
    #[serde(default)]
    pub clusters: Option<PathBuf>,
    /// Cluster directories by set name for this feature set, added to
    /// (and replacing) the experiment's `cluster_sets`.
    #[serde(default)]
    pub cluster_sets: BTreeMap<String, PathBuf>,
}

/// Sizes, seeds, epochs and the test.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Training {
    /// Training-set sizes in sentences for the learning curve; each seed
    /// draws one subset per size, nested across sizes and shared by every
    /// feature set. Default: none.
    #[serde(default)]
    pub sizes: Vec<usize>,
    /// Also train on the whole training file (default true).
    #[serde(default = "yes")]
    pub all: bool,
    /// Seeds (default `[1, 2, 3]`).
    #[serde(default = "seeds")]
    pub seeds: Vec<u64>,
    /// Epochs per run (default 10).
    #[serde(default = "epochs")]
    pub epochs: usize,
    /// Rounds of the approximate randomization test (default 10,000).
    #[serde(default = "rounds")]
    pub rounds: usize,
    /// Significance level after Holm's correction (default 0.05).
    #[serde(default = "alpha")]
    pub alpha: f64,
    /// The baseline feature set's name (default: the first).
    #[serde(default)]
    pub baseline: Option<String>,
    /// Use the tag dictionary (default true). It restricts frequent
    /// words to the labels seen with them, which also means the weights
    /// of their features are no longer trained by them.
    #[serde(default = "yes")]
    pub prune: bool,
    /// Refit every run (default false): choose the epoch count on the
    /// development file, then train afresh on the run's training subset
    /// followed by the whole development file for that many epochs, as
    /// `train --refit` does. Every size of a learning curve then also
    /// trains on all of the development sentences.
    #[serde(default)]
    pub refit: bool,
}

fn yes() -> bool {
    true
}

fn seeds() -> Vec<u64> {
    vec![1, 2, 3]
}

fn epochs() -> usize {
    10
}

fn rounds() -> usize {
    10_000
}

fn alpha() -> f64 {
    0.05
}

impl Default for Training {
    fn default() -> Self {
        Training {
            sizes: Vec::new(),
            all: true,
            seeds: seeds(),
            epochs: epochs(),
            rounds: rounds(),
            alpha: alpha(),
            baseline: None,
            prune: true,
            refit: false,
        }
    }
}

impl Experiment {
    /// Reads and checks a config; relative paths become relative to the
    /// config file's directory.
    pub fn read(path: &Path) -> Result<Experiment> {
        let text = std::fs::read_to_string(path)
            .with_context(|| path.display().to_string())?;
        let mut exp: Experiment = toml::from_str(&text).map_err(|e| {
            anyhow::anyhow!("{}: {}", path.display(), one_line(&e.to_string()))
        })?;
        let base = path.parent().unwrap_or(Path::new(""));
        exp.resolve(base);
        exp.check().with_context(|| path.display().to_string())?;
        Ok(exp)
    }

    /// Makes relative paths relative to `base`.
    pub fn resolve(&mut self, base: &Path) {
        let fix = |p: &mut PathBuf| {
            if p.is_relative() {
                *p = base.join(&*p);
            }
        };
        fix(&mut self.data.train);
        fix(&mut self.data.dev);
        fix(&mut self.data.test);
        if let Some(c) = &mut self.clusters {
            if let Some(d) = &mut c.dir {
                fix(d);
            }
            c.raw.iter_mut().for_each(fix);
        }
        self.cluster_sets.values_mut().for_each(fix);
        for f in &mut self.features {
            fix(&mut f.config);
            if let Some(d) = &mut f.clusters {
                fix(d);
            }
            f.cluster_sets.values_mut().for_each(fix);
        }
    }

    /// Checks the values.
    pub fn check(&self) -> Result<()> {
        if self.features.is_empty() {
            bail!("no [[features]] to compare");
        }
        let mut names: Vec<&str> =
            self.features.iter().map(|f| f.name.as_str()).collect();
        names.sort_unstable();
        if names.windows(2).any(|w| w[0] == w[1]) {
            bail!("two feature sets share a name");
        }
        if let Some(b) = &self.training.baseline {
            if !self.features.iter().any(|f| &f.name == b) {
                bail!("training.baseline {b:?} is not a feature set");
            }
        }
        let t = &self.training;
        if t.seeds.is_empty() {
            bail!("training.seeds is empty");
        }
        let mut seeds = t.seeds.clone();
        seeds.sort_unstable();
        if seeds.windows(2).any(|w| w[0] == w[1]) {
            bail!("training.seeds has a seed twice");
        }
        if t.sizes.is_empty() && !t.all {
            bail!("no training size: give training.sizes or all = true");
        }
        if t.sizes.contains(&0) {
            bail!("training.sizes must be at least 1");
        }
        if t.epochs == 0 || t.rounds == 0 {
            bail!("training.epochs and training.rounds must be at least 1");
        }
        if !(t.alpha > 0.0 && t.alpha < 1.0) {
            bail!("training.alpha must be in (0, 1)");
        }
        if let Some(c) = &self.clusters {
            if c.dir.is_some() != c.raw.is_empty() {
                bail!("[clusters] needs exactly one of dir and raw");
            }
        }
        Ok(())
    }

    /// The index of the baseline feature set.
    pub fn baseline(&self) -> usize {
        match &self.training.baseline {
            Some(name) => {
                self.features.iter().position(|f| &f.name == name).unwrap_or(0)
            }
            None => 0,
        }
    }
}

fn one_line(s: &str) -> String {
    s.split_whitespace().collect::<Vec<_>>().join(" ")
}

#[cfg(test)]
mod tests {
    use super::*;

    const SMALL: &str = r#"
        [data]
        train = "t.conll"
        dev = "d.conll"
        test = "e.conll"
        [clusters]
        dir = "clusters"
        [[features]]
        name = "baseline"
        config = "ner-no-clusters.toml"
        [[features]]
        name = "prefix 4"
        config = "ner.toml"
        prefixes = [4]
        [training]
        sizes = [100, 200]
    "#;

    #[test]
    fn reads_defaults_and_resolves_paths() {
        let mut exp: Experiment = toml::from_str(SMALL).unwrap();
        exp.resolve(Path::new("base"));
        exp.check().unwrap();
        assert_eq!(exp.data.train, Path::new("base/t.conll"));
        assert_eq!(exp.training.seeds, vec![1, 2, 3]);
        assert_eq!((exp.training.epochs, exp.training.rounds), (10, 10_000));
        assert!(exp.training.all);
        assert!(!exp.training.refit, "refit is off by default");
        assert_eq!(exp.features[1].prefixes, Some(vec![4]));
        let on = SMALL.replace("sizes = [100, 200]", "refit = true");
        let exp: Experiment = toml::from_str(&on).unwrap();
        assert!(exp.training.refit);
        assert_eq!(exp.baseline(), 0);
    }

    #[test]
    fn unknown_keys_and_bad_values_are_refused() {
        let bad =
            SMALL.replace("sizes = [100, 200]", "sizes = [100]\nsize = 3");
        let err = toml::from_str::<Experiment>(&bad).unwrap_err().to_string();
        assert!(err.contains("size"), "{err}");
        let mut exp: Experiment = toml::from_str(SMALL).unwrap();
        exp.training.seeds.clear();
        assert!(exp.check().is_err());
        let mut exp: Experiment = toml::from_str(SMALL).unwrap();
        exp.features[1].name = "baseline".into();
        assert!(exp.check().unwrap_err().to_string().contains("share a name"));
    }

    #[test]
    fn shipped_experiment_configs_parse() {
        let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("configs");
        for name in ["ablate-prefixes.toml", "learning-curve.toml"] {
            let text = std::fs::read_to_string(dir.join(name)).unwrap();
            let exp: Experiment = toml::from_str(&text).unwrap();
            exp.check().unwrap();
            for f in &exp.features {
                assert!(
                    dir.join(&f.config).is_file()
                        || f.config.starts_with(".."),
                    "{:?}",
                    f.config
                );
            }
        }
    }
}
