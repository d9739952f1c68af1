//! Running an experiment: every (feature set, training size, seed)
//! combination trained and scored on the test file, in parallel.
//!
//! For each seed one random order of the training sentences is drawn;
//! the subset of size `n` is its first `n` sentences, so subsets are
//! nested across sizes and shared by every feature set, and comparisons
//! between feature sets are paired. Every run is a deterministic
//! function of its combination, so the results (all but the timings) do
//! not depend on the number of threads or the order runs finish in.

use std::borrow::Cow;
use std::collections::HashSet;
use std::time::Instant;

use anyhow::{Context, Result};
use lexiclade_cluster::{
    cluster, cluster_refined, expand_inputs, ClusterOutput, ClusterParams,
    Counts, ExchangeParams, TokenOptions,
};
use lexiclade_features::{Extractor, FeatureConfig, Paths};
use lexiclade_tagger::{
    columns::{Column, ColumnSpec},
    eval::Evaluator,
    pipeline::{Labeled, TagBuffers, TaggerModel, TrainParams},
    scheme::{chunks, Scheme},
};
use rand::seq::SliceRandom;
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rayon::prelude::*;

use super::config::Experiment;
use super::stats::{Counts as SentenceCounts, Metric};
use crate::labeled::LabeledFile;

/// The data and clusters of an experiment, loaded once.
pub struct Prepared {
    /// Training sentences.
    pub train: Vec<Labeled>,
    /// Development sentences.
    pub dev: Vec<Labeled>,
    /// Test sentences.
    pub test: Vec<Labeled>,
    /// The scheme of the labels.
    pub scheme: Scheme,
    /// Cluster paths per feature set: its own directory's, else the
    /// experiment's, else none.
    pub paths: Vec<Option<Paths>>,
    /// Feature configs, one per feature set, with overrides applied.
    pub configs: Vec<FeatureConfig>,
    /// The clusters of named cluster sets per feature set: those its
    /// config has and the experiment or the feature set gives.
    pub sets: Vec<Vec<(String, Paths)>>,
    /// Per feature set, the index in every sentence's `columns` of each
    /// input column its config reads (sentences hold the union of the
    /// columns of every feature set).
    pub column_maps: Vec<Vec<usize>>,
}

/// One combination and what it gave.
#[derive(Clone, Debug, PartialEq)]
pub struct RunResult {
    /// The feature set's index in the experiment.
    pub features: usize,
    /// Training sentences used.
    pub train_sentences: usize,
    /// The seed (subset and shuffling).
    pub seed: u64,
    /// `None` on success, else the error.
    pub error: Option<String>,
    /// The best development score.
    pub dev_score: f64,
    /// The test score: F1 for chunk schemes, token accuracy otherwise.
    pub test_score: f64,
    /// Test token accuracy.
    pub test_accuracy: f64,
    /// Test accuracy on tokens unseen in this run's training subset.
    pub test_oov_accuracy: f64,
    /// Share of test tokens with a cluster path (0 without clusters).
    pub path_coverage: f64,
    /// The epoch whose weights were kept.
    pub best_epoch: usize,
    /// Wall seconds of training (the only field that varies between
    /// runs of the same combination).
    pub train_seconds: f64,
    /// Per test sentence, the counts the significance test needs.
    pub sentences: Vec<SentenceCounts>,
}

/// Reads the data, learns or reads the clusters and builds the feature
/// configs; `notice` hears what is being done.
pub fn prepare(
    exp: &Experiment,
    notice: &mut dyn FnMut(&str),
) -> Result<Prepared> {
    let spec = ColumnSpec {
        token: Column::new(exp.data.token_column)
            .context("data.token_column is 0")?,
        label: Column::new(exp.data.label_column)
            .context("data.label_column is 0")?,
    };
    let configs = exp
        .features
        .iter()
        .map(|f| {
            let mut config = FeatureConfig::read(&f.config)?;
            if let Some(p) = &f.prefixes {
                config.clusters.prefix_lengths = p.clone();
            }
            if let Some(w) = f.whole_path {
                config.clusters.whole_path = w;
            }
            config
                .clone()
                .check()
                .with_context(|| format!("feature set {:?}", f.name))?;
            Ok(config)
        })
        .collect::<Result<Vec<_>>>()?;
    // The union of the input columns every feature set reads.
    let mut union: Vec<(i64, &str)> = Vec::new();
    let column_maps: Vec<Vec<usize>> = configs
        .iter()
        .map(|c| {
            c.columns
                .iter()
                .map(|col| {
                    match union.iter().position(|u| u.0 == col.column) {
                        Some(k) => k,
                        None => {
                            union.push((col.column, col.name.as_str()));
                            union.len() - 1
                        }
                    }
                })
                .collect()
        })
        .collect();
    let train = LabeledFile::read(&exp.data.train, &spec, &union)?;
    let dev = LabeledFile::read(&exp.data.dev, &spec, &union)?;
    let test = LabeledFile::read(&exp.data.test, &spec, &union)?;
    for mixed in [&train, &dev, &test].iter().filter_map(|f| f.mixed.as_ref())
    {
        notice(&format!("warning: {mixed}"));
    }
    let given = match &exp.data.scheme {
        Some(s) => {
            Some(s.parse().map_err(|e| anyhow::anyhow!("data.scheme: {e}"))?)
        }
        None => None,
    };
    let choice = crate::labeled::choose_scheme(given, &train, &[&dev, &test])?;
    for warning in &choice.warnings {
        notice(&format!("warning: {warning}"));
    }
    let scheme = choice.scheme;
    let (train, dev, test) = (train.sentences, dev.sentences, test.sentences);
    let paths = match &exp.clusters {
        None => None,
        Some(c) => Some(match &c.dir {
            Some(dir) => Paths::read(dir)?,
            None => {
                notice(&format!(
                    "clustering {} into {} classes",
                    display(&c.raw),
                    c.classes
                ));
                let sources = expand_inputs(&c.raw)?;
                let options = TokenOptions {
                    tokenize: c.tokenize,
                    lowercase: c.lowercase,
                    ..TokenOptions::default()
                };
                let counts = Counts::from_sources(
                    &sources,
                    options,
                    c.min_count,
                    &mut |_| {},
                )?;
                let params = ClusterParams { classes: c.classes };
                let hierarchy = if c.exchange_passes == 0 {
                    cluster(&counts, &params, &mut |_| {})?
                } else {
                    let exchange = ExchangeParams {
                        max_passes: c.exchange_passes,
                        ..ExchangeParams::default()
                    };
                    cluster_refined(
                        &counts,
                        &params,
                        &exchange,
                        &mut |_| {},
                        &mut |_| {},
                    )?
                    .0
                };
                let table =
                    ClusterOutput { counts: &counts, hierarchy: &hierarchy }
                        .table(crate::VERSION);
                Paths::from_table(&table)
            }
        }),
    };
    let paths = exp
        .features
        .iter()
        .map(|f| match &f.clusters {
            Some(dir) => Ok(Some(
                Paths::read(dir)
                    .with_context(|| format!("feature set {:?}", f.name))?,
            )),
            None => Ok(paths.clone()),
        })
        .collect::<Result<Vec<_>>>()?;
    // Found before any run rather than by every run.
    for ((f, config), paths) in exp.features.iter().zip(&configs).zip(&paths) {
        if config.clusters.enabled == Some(true) && paths.is_none() {
            anyhow::bail!(
                "{}: sets clusters.enabled = true, but feature set {:?} has \
                 no clusters (give the experiment a [clusters] table or the \
                 set a clusters directory)",
                f.config.display(),
                f.name
            );
        }
    }
    let mut read_sets: Vec<(std::path::PathBuf, Paths)> = Vec::new();
    let mut sets = Vec::new();
    for (f, config) in exp.features.iter().zip(&configs) {
        let mut mine = Vec::new();
        for set in &config.cluster_sets {
            let dir = f
                .cluster_sets
                .get(&set.name)
                .or_else(|| exp.cluster_sets.get(&set.name));
            let Some(dir) = dir else { continue };
            let p = match read_sets.iter().find(|(d, _)| d == dir) {
                Some((_, p)) => p.clone(),
                None => {
                    let p = Paths::read(dir).with_context(|| {
                        format!("feature set {:?}", f.name)
                    })?;
                    read_sets.push((dir.clone(), p.clone()));
                    p
                }
            };
            mine.push((set.name.clone(), p));
        }
        sets.push(mine);
    }
    Ok(Prepared {
        train,
        dev,
        test,
        scheme,
        paths,
        configs,
        sets,
        column_maps,
    })
}

fn display(paths: &[std::path::PathBuf]) -> String {
    paths
        .iter()
        .map(|p| p.display().to_string())
        .collect::<Vec<_>>()
        .join(", ")
}

/// A combination to run.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Combination {
    /// The feature set's index.
    pub features: usize,
    /// Training sentences.
    pub size: usize,
    /// The seed.
    pub seed: u64,
}

/// Every combination, sizes ascending, the whole training set last.
pub fn combinations(exp: &Experiment, train_len: usize) -> Vec<Combination> {
    let mut sizes: Vec<usize> = exp
        .training
        .sizes
        .iter()
        .copied()
        .filter(|&n| n < train_len)
        .collect();
    if exp.training.all || sizes.is_empty() {
        sizes.push(train_len);
    }
    sizes.sort_unstable();
    sizes.dedup();
    let mut out = Vec::new();
    for features in 0..exp.features.len() {
        for &size in &sizes {
            for &seed in &exp.training.seeds {
                out.push(Combination { features, size, seed });
            }
        }
    }
    out
}

/// Runs every combination, in parallel when `parallel`; `done` is
/// called after each run (in the order they finish). Results come back
/// in the order of [`combinations`].
pub fn run(
    exp: &Experiment,
    data: &Prepared,
    parallel: bool,
    done: &(dyn Fn(&RunResult) + Sync),
) -> Vec<RunResult> {
    let combos = combinations(exp, data.train.len());
    let one = |c: &Combination| {
        let result = run_one(exp, data, *c);
        done(&result);
        result
    };
    if parallel {
        combos.par_iter().map(one).collect()
    } else {
        combos.iter().map(one).collect()
    }
}

/// The training subset of `size` sentences for `seed`.
pub fn subset(train: &[Labeled], size: usize, seed: u64) -> Vec<Labeled> {
    let mut order: Vec<usize> = (0..train.len()).collect();
    order.shuffle(&mut ChaCha8Rng::seed_from_u64(seed ^ 0x5eed_5eed));
    let mut chosen: Vec<usize> = order.into_iter().take(size).collect();
    // Keep the file order inside the subset: only membership is random.
    chosen.sort_unstable();
    chosen.into_iter().map(|k| train[k].clone()).collect()
}

fn run_one(exp: &Experiment, data: &Prepared, c: Combination) -> RunResult {
    let mut result = RunResult {
        features: c.features,
        train_sentences: c.size,
        seed: c.seed,
        error: None,
        dev_score: 0.0,
        test_score: 0.0,
        test_accuracy: 0.0,
        test_oov_accuracy: 0.0,
        path_coverage: 0.0,
        best_epoch: 0,
        train_seconds: 0.0,
        sentences: Vec::new(),
    };
    if let Err(e) = run_into(exp, data, c, &mut result) {
        result.error = Some(format!("{e:#}").replace('\n', " "));
    }
    result
}

fn run_into<'a>(
    exp: &Experiment,
    data: &'a Prepared,
    c: Combination,
    out: &mut RunResult,
) -> Result<()> {
    let map = &data.column_maps[c.features];
    let own_columns = |s: &mut Labeled| {
        s.columns = map.iter().map(|&k| s.columns[k].clone()).collect();
    };
    // The sentences as they are when they hold just this set's columns.
    let width = data.train.first().map_or(0, |s| s.columns.len());
    let same = map.iter().copied().eq(0..width);
    let own = |sentences: &'a [Labeled]| -> Cow<'a, [Labeled]> {
        if same {
            Cow::Borrowed(sentences)
        } else {
            let mut mine = sentences.to_vec();
            mine.iter_mut().for_each(own_columns);
            Cow::Owned(mine)
        }
    };
    let mut train = subset(&data.train, c.size, c.seed);
    if !same {
        train.iter_mut().for_each(own_columns);
    }
    let dev = own(&data.dev);
    let test = own(&data.test);
    let config = data.configs[c.features].clone().check()?;
    let uses_clusters = config.clusters.enabled != Some(false);
    let paths =
        if uses_clusters { data.paths[c.features].clone() } else { None };
    let extractor =
        Extractor::with_sets(config, paths, data.sets[c.features].clone())?;
    let params = TrainParams {
        epochs: exp.training.epochs,
        seed: c.seed,
        prune: exp.training.prune,
        scheme: Some(data.scheme),
        refit: exp.training.refit,
    };
    let started = Instant::now();
    let mut dev_best = 0.0f64;
    let model = TaggerModel::train(
        &train,
        Some(&dev),
        extractor,
        &params,
        &mut |_, _| {},
        &mut |r| dev_best = dev_best.max(r.dev_score.unwrap_or(0.0)),
    )?;
    out.train_seconds = started.elapsed().as_secs_f64();
    out.dev_score = dev_best;
    out.best_epoch = model.best_epoch;

    // The words the model was trained on: a refit trains on dev too.
    let dev: &[Labeled] = if exp.training.refit { &data.dev } else { &[] };
    let known: HashSet<&str> = train
        .iter()
        .chain(dev)
        .flat_map(|s| s.tokens.iter().map(String::as_str))
        .collect();
    let model_paths = model.extractor.paths();
    let is_known = |w: &str| known.contains(w);
    let has_path = |w: &str| model_paths.is_some_and(|p| p.path(w).is_some());
    let mut evaluator = Evaluator::new(data.scheme).known_words(&is_known);
    if model_paths.is_some() {
        evaluator = evaluator.clustered_words(&has_path);
    }
    let mut work = TagBuffers::default();
    for s in test.iter() {
        let columns = s.column_slices();
        let predicted = model.tag_with(&s.tokens, &columns, &mut work);
        evaluator.add(&s.tokens, &s.labels, &predicted)?;
        out.sentences.push(sentence_counts(
            data.scheme,
            &s.labels,
            &predicted,
        ));
    }
    let report = evaluator.report();
    out.test_accuracy = report.token_accuracy;
    out.test_score =
        report.overall.as_ref().map_or(report.token_accuracy, |o| o.f1);
    out.test_oov_accuracy = report.oov_accuracy.unwrap_or(0.0);
    out.path_coverage = report.clustered_share.unwrap_or(0.0);
    Ok(())
}

/// The metric of the experiment's scheme.
pub fn metric(scheme: Scheme) -> Metric {
    if scheme.has_chunks() {
        Metric::F1
    } else {
        Metric::Accuracy
    }
}

/// One sentence's counts: matching, predicted and gold chunks for chunk
/// schemes, correct tokens and tokens otherwise.
pub fn sentence_counts(
    scheme: Scheme,
    gold: &[String],
    predicted: &[String],
) -> SentenceCounts {
    if scheme.has_chunks() {
        let g = chunks(gold);
        let p = chunks(predicted);
        let correct = p.iter().filter(|c| g.contains(c)).count() as u64;
        SentenceCounts {
            correct,
            predicted: p.len() as u64,
            gold: g.len() as u64,
        }
    } else {
        let correct =
            gold.iter().zip(predicted).filter(|(g, p)| g == p).count() as u64;
        SentenceCounts {
            correct,
            predicted: predicted.len() as u64,
            gold: gold.len() as u64,
        }
    }
}
