//! Training a tagger on labeled sentences and applying it: features,
//! label sets and schemes, the tag dictionary, epochs with a development
//! set, and the self-contained [`TaggerModel`].

use std::collections::{BTreeMap, HashMap};
use std::path::Path;
use std::sync::OnceLock;
use std::time::Instant;

use lexiclade_features::{
    Extractor, FeatureIds, FeatureIndex, FeatureIndexBuilder, Features,
    IdCache,
};
use rand::seq::SliceRandom;
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rustc_hash::FxHashMap;
use serde::{Deserialize, Serialize};

use crate::columns::{Column, ColumnSpec, Sentence};
use crate::error::{Error, Result};
use crate::eval::Evaluator;
use crate::model;
use crate::perceptron::{
    Constraints, Decoding, Instance, Trainer, Weights, ANY_LABEL,
};
use crate::scheme::{self, Scheme};

/// A labeled sentence: tokens, their labels and the input columns the
/// features read.
#[derive(Clone, Debug, PartialEq)]
pub struct Labeled {
    /// The tokens.
    pub tokens: Vec<String>,
    /// One label per token.
    pub labels: Vec<String>,
    /// The values of each input column the features read, in the order
    /// of [`Extractor::columns`], one per token; empty when they read
    /// none.
    pub columns: Vec<Vec<String>>,
}

impl Labeled {
    /// The sentence's tokens, labels and the values of the feature
    /// columns `features` (as [`Extractor::columns`] gives them, with
    /// the names of their `[[columns]]` entries).
    ///
    /// # Errors
    ///
    /// [`Error::NoColumn`] when a row lacks the token or label column,
    /// [`Error::SameColumn`] when they are one column of its rows,
    /// [`Error::FeatureColumn`] when it lacks a feature column and
    /// [`Error::LabelAsFeature`] when a feature column is the label
    /// column.
    pub fn read(
        sentence: &Sentence,
        spec: &ColumnSpec,
        features: &[(i64, &str)],
    ) -> Result<Labeled> {
        let (tokens, labels) = sentence.labeled(spec)?;
        let tokens = tokens.into_iter().map(String::from);
        let labels = labels.into_iter().map(String::from);
        let label = spec.label.resolve(sentence.width());
        let columns = feature_columns(sentence, features, label)?;
        Ok(Labeled {
            tokens: tokens.collect(),
            labels: labels.collect(),
            columns,
        })
    }

    /// The feature columns as the extractor takes them.
    pub fn column_slices(&self) -> Vec<&[String]> {
        self.columns.iter().map(Vec::as_slice).collect()
    }
}

/// The values of the feature columns `features` (column and entry name)
/// of `sentence`, one list per column; `label` is the 0-based label
/// column, which no feature may read.
///
/// # Errors
///
/// [`Error::FeatureColumn`] when a row lacks a column,
/// [`Error::LabelAsFeature`] when one is the label column.
pub fn feature_columns(
    sentence: &Sentence,
    features: &[(i64, &str)],
    label: Option<usize>,
) -> Result<Vec<Vec<String>>> {
    Ok(feature_column_indexes(sentence, features, label)?
        .into_iter()
        .map(|col| {
            (0..sentence.len())
                .map(|row| sentence.cell(row, col).to_string())
                .collect()
        })
        .collect())
}

/// [`feature_columns`], giving the 0-based position of each column in
/// the sentence's rows instead of the values.
///
/// # Errors
///
/// As [`feature_columns`].
pub fn feature_column_indexes(
    sentence: &Sentence,
    features: &[(i64, &str)],
    label: Option<usize>,
) -> Result<Vec<usize>> {
    let width = sentence.width();
    let line = sentence.lines()[0];
    features
        .iter()
        .map(|&(column, name)| {
            let index = column as isize;
            let resolved = Column::new(index).and_then(|c| c.resolve(width));
            let Some(col) = resolved else {
                return Err(Error::FeatureColumn {
                    path: sentence.path().to_path_buf(),
                    line,
                    column: index,
                    name: name.to_string(),
                    width,
                });
            };
            if Some(col) == label {
                return Err(Error::LabelAsFeature {
                    path: sentence.path().to_path_buf(),
                    line,
                    column: index,
                    name: name.to_string(),
                });
            }
            Ok(col)
        })
        .collect()
}

/// Training settings.
#[derive(Clone, Debug)]
pub struct TrainParams {
    /// Passes over the training sentences (default 10).
    pub epochs: usize,
    /// Seed of the shuffling before each epoch (default 1).
    pub seed: u64,
    /// Restrict the labels of frequent words to those seen with them in
    /// training (a tag dictionary; default on).
    pub prune: bool,
    /// The tag scheme of the labels; detected from the training labels
    /// when `None`.
    pub scheme: Option<Scheme>,
    /// Refit (default off; needs development sentences): after the epoch
    /// count is chosen on the development set, train afresh on the
    /// training sentences followed by the development sentences for that
    /// many epochs with the same seed, and keep that model. It equals a
    /// model trained without development data on the concatenation for
    /// that many epochs.
    pub refit: bool,
}

impl Default for TrainParams {
    fn default() -> Self {
        TrainParams {
            epochs: 10,
            seed: 1,
            prune: true,
            scheme: None,
            refit: false,
        }
    }
}

/// A word enters the tag dictionary when seen at least this often; its
/// candidate labels are those it was seen with. Rarer words may take any
/// label.
pub const DICTIONARY_MIN_COUNT: u32 = 10;

/// What one epoch did, for progress reports.
#[derive(Clone, Debug, PartialEq)]
pub struct EpochReport {
    /// 1-based epoch number.
    pub epoch: usize,
    /// Training tokens decoded per second in this epoch.
    pub tokens_per_second: f64,
    /// Training tokens decoded wrongly during the epoch.
    pub mistakes: usize,
    /// Score on the development sentences with the averaged weights
    /// (F1 for chunk schemes, token accuracy otherwise), if any.
    pub dev_score: Option<f64>,
    /// True for the epochs of the refit on training and development
    /// sentences (which have no development score).
    pub refit: bool,
}

/// Progress inside an epoch: sentences done of all.
pub type Progress<'a> = &'a mut dyn FnMut(usize, usize);

/// A trained tagger: everything needed to tag new text.
#[derive(Clone, Debug, Serialize, Deserialize)]
pub struct TaggerModel {
    /// The version of lexiclade that trained it.
    pub version: String,
    /// The feature config and the paths of every clustered word.
    pub extractor: Extractor,
    /// The kept features.
    pub features: FeatureIndex,
    /// The labels the decoder works with (IOBES when the config asks).
    pub labels: Vec<String>,
    /// The scheme of the training labels; output is written in it.
    pub scheme: Scheme,
    /// The scheme the decoder works in.
    pub internal: Scheme,
    /// The averaged weights of the best epoch.
    pub weights: Weights,
    /// Which label sequences the decoder may produce.
    pub rules: Constraints,
    /// Frequent words and the index of their candidate labels in
    /// `candidate_lists`; empty without pruning.
    /// The tagger reads it through a hash table made at the first
    /// sentence it tags: set it before that.
    pub dictionary: BTreeMap<String, u32>,
    /// `dictionary` as a hash table, for the look-up of every token.
    #[serde(skip)]
    dictionary_table: OnceLock<FxHashMap<Box<str>, u32>>,
    /// Distinct candidate label lists (ids, sorted).
    pub candidate_lists: Vec<Vec<u32>>,
    /// The epoch whose weights were kept (1-based).
    pub best_epoch: usize,
}

impl TaggerModel {
    /// Trains on `train` with the features of `extractor`, picking the
    /// epoch that scores best on `dev` (the last epoch without it). Every
    /// sentence must hold the columns the extractor reads. With
    /// [`TrainParams::refit`], then trains afresh on `train` followed by
    /// `dev` for the chosen number of epochs; the model's
    /// [`best_epoch`](TaggerModel::best_epoch) is that number either way.
    ///
    /// The refit starts from nothing (features, labels, tag dictionary
    /// and weights are all rebuilt from the joined sentences) with the
    /// same seed, so it is the same computation as training on a file
    /// holding the training and then the development sentences with
    /// `epochs` set to the chosen count and no development set, and gives
    /// the same model. Memory: the training and development sentences are
    /// copied once for the join.
    pub fn train(
        train: &[Labeled],
        dev: Option<&[Labeled]>,
        extractor: Extractor,
        params: &TrainParams,
        progress: Progress,
        epoch_done: &mut dyn FnMut(&EpochReport),
    ) -> Result<TaggerModel> {
        let mut model = if params.refit {
            Self::refit(train, dev, extractor, params, progress, epoch_done)?
        } else {
            Self::train_once(
                train, dev, extractor, params, false, progress, epoch_done,
            )?
        };
        model.drop_unweighted();
        Ok(model)
    }

    /// [`TaggerModel::train`] with [`TrainParams::refit`], before the
    /// features without weights are dropped.
    fn refit(
        train: &[Labeled],
        dev: Option<&[Labeled]>,
        extractor: Extractor,
        params: &TrainParams,
        progress: Progress,
        epoch_done: &mut dyn FnMut(&EpochReport),
    ) -> Result<TaggerModel> {
        let Some(dev) = dev else {
            return Err(Error::InvalidParam {
                name: "refit",
                reason: "refitting needs development sentences to choose \
                         the epoch count"
                    .into(),
            });
        };
        let chosen = Self::train_once(
            train,
            Some(dev),
            extractor.clone(),
            params,
            false,
            progress,
            epoch_done,
        )?
        .best_epoch;
        let joined: Vec<Labeled> = train.iter().chain(dev).cloned().collect();
        let again =
            TrainParams { epochs: chosen, refit: false, ..params.clone() };
        Self::train_once(
            &joined, None, extractor, &again, true, progress, epoch_done,
        )
    }

    /// One training run; `refit` only marks the epoch reports.
    #[allow(clippy::too_many_arguments)]
    fn train_once(
        train: &[Labeled],
        dev: Option<&[Labeled]>,
        extractor: Extractor,
        params: &TrainParams,
        refit: bool,
        progress: Progress,
        epoch_done: &mut dyn FnMut(&EpochReport),
    ) -> Result<TaggerModel> {
        if train.is_empty() {
            return Err(Error::InvalidParam {
                name: "train",
                reason: "no training sentences".into(),
            });
        }
        if params.epochs == 0 {
            return Err(Error::InvalidParam {
                name: "epochs",
                reason: "at least 1 epoch is needed".into(),
            });
        }
        let scheme = params.scheme.unwrap_or_else(|| {
            Scheme::detect(train.iter().map(|s| &s.labels))
        });
        let internal = if extractor.config().iobes && scheme.has_chunks() {
            Scheme::Iobes
        } else {
            scheme
        };
        let wanted = extractor.columns().len();
        let short = train.iter().chain(dev.into_iter().flatten());
        if short.clone().any(|s| s.columns.len() < wanted) {
            return Err(Error::InvalidParam {
                name: "train",
                reason: format!(
                    "the features read {wanted} input columns, but a \
                     sentence holds fewer"
                ),
            });
        }
        let mut builder = FeatureIndexBuilder::new();
        let mut buf = Features::new();
        for s in train {
            extractor.extract_with(&s.tokens, &s.column_slices(), &mut buf);
            builder.add(&buf);
        }
        let features = builder.build(extractor.config().min_count);

        // Labels in the decoder's scheme, numbered in sorted order.
        let converted: Vec<Vec<String>> = train
            .iter()
            .map(|s| scheme::convert(&s.labels, scheme, internal))
            .collect();
        let mut labels: Vec<String> =
            converted.iter().flatten().cloned().collect();
        labels.sort_unstable();
        labels.dedup();
        let label_id: HashMap<&str, u32> = labels
            .iter()
            .enumerate()
            .map(|(k, l)| (l.as_str(), k as u32))
            .collect();
        let rules = constraints(&labels, internal);

        let (dictionary, candidate_lists) = if params.prune {
            tag_dictionary(train, &converted, &label_id)
        } else {
            (BTreeMap::new(), Vec::new())
        };
        let gold: Vec<Vec<u32>> = converted
            .iter()
            .map(|s| s.iter().map(|l| label_id[l.as_str()]).collect())
            .collect();
        let mut model = TaggerModel {
            version: String::new(),
            extractor,
            features,
            labels,
            scheme,
            internal,
            weights: Trainer::new(0, 0).averaged(),
            rules,
            dictionary,
            dictionary_table: OnceLock::new(),
            candidate_lists,
            best_epoch: 0,
        };
        let mut ids = FeatureIds::new();
        let instances: Vec<Instance> = train
            .iter()
            .zip(gold)
            .map(|(s, gold)| {
                let columns = s.column_slices();
                let mut x =
                    model.instance(&s.tokens, &columns, &mut ids, None);
                x.labels = gold;
                x
            })
            .collect();

        let mut trainer =
            Trainer::new(model.features.len(), model.labels.len());
        let mut order: Vec<usize> = (0..instances.len()).collect();
        let mut rng = ChaCha8Rng::seed_from_u64(params.seed);
        let mut best: Option<(f64, Weights, usize)> = None;
        for epoch in 1..=params.epochs {
            order.shuffle(&mut rng);
            let started = Instant::now();
            let (mut mistakes, mut tokens) = (0, 0);
            for (done, &k) in order.iter().enumerate() {
                mistakes += trainer.learn(
                    &instances[k],
                    &model.rules,
                    &model.candidate_lists,
                );
                tokens += instances[k].len();
                if done % 256 == 0 {
                    progress(done, order.len());
                }
            }
            progress(order.len(), order.len());
            let seconds = started.elapsed().as_secs_f64().max(1e-9);
            model.weights = trainer.averaged();
            let dev_score = dev.map(|d| model.score(d)).transpose()?;
            epoch_done(&EpochReport {
                epoch,
                tokens_per_second: tokens as f64 / seconds,
                mistakes,
                dev_score,
                refit,
            });
            let score = dev_score.unwrap_or(epoch as f64);
            // Strictly better only: ties keep the earlier epoch.
            if best.as_ref().is_none_or(|b| score > b.0) {
                best = Some((score, model.weights.clone(), epoch));
            }
        }
        let (_, weights, epoch) = best.expect("at least one epoch");
        model.weights = weights;
        model.best_epoch = epoch;
        Ok(model)
    }

    /// Drops from the index every feature without a weight, except those
    /// the extractor needs ([`Extractor::needs_feature`]); no score
    /// changes. Most features of a rich config have none: a feature gets
    /// a weight only when a training mistake touches it, and an easy task
    /// makes few. With `configs/chunk.toml` on the 945,561 tokens of the
    /// Brown chunk walkthrough, 85 % of the 1.58 M features had none:
    /// dropping them makes the model file four times smaller, its loading
    /// six times faster, and keeps the index in the processor's caches
    /// while tagging.
    fn drop_unweighted(&mut self) {
        let (features, kept) = self.features.retain(|id, feature| {
            self.weights.has_weights(id as usize)
                || self.extractor.needs_feature(feature)
        });
        self.weights = self.weights.select(&kept);
        self.features = features;
    }

    /// The features and candidate labels of a sentence; with a cache
    /// when tagging.
    fn instance<S: AsRef<str>>(
        &self,
        tokens: &[S],
        columns: &[&[S]],
        ids: &mut FeatureIds,
        cache: Option<&mut IdCache>,
    ) -> Instance {
        match cache {
            Some(cache) => self.extractor.extract_ids_cached(
                &self.features,
                tokens,
                columns,
                ids,
                cache,
            ),
            None => self.extractor.extract_ids(
                &self.features,
                tokens,
                columns,
                ids,
            ),
        }
        let starts = ids.starts().iter().map(|&s| s as u32).collect();
        let candidates = if self.dictionary.is_empty() {
            Vec::new()
        } else {
            let table = self.dictionary_table.get_or_init(|| {
                self.dictionary
                    .iter()
                    .map(|(word, &k)| (word.as_str().into(), k))
                    .collect()
            });
            tokens
                .iter()
                .map(|t| table.get(t.as_ref()).copied().unwrap_or(ANY_LABEL))
                .collect()
        };
        Instance {
            features: ids.ids().to_vec(),
            starts,
            labels: Vec::new(),
            candidates,
        }
    }

    /// Tags one sentence; labels come in the training data's scheme.
    ///
    /// # Panics
    ///
    /// If the model reads input columns ([`TaggerModel::columns`]): use
    /// [`TaggerModel::tag_with`].
    pub fn tag<S: AsRef<str>>(
        &self,
        tokens: &[S],
        work: &mut TagBuffers,
    ) -> Vec<String> {
        self.tag_with(tokens, &[], work)
    }

    /// [`TaggerModel::tag`] for a sentence with the input columns the
    /// model reads: `columns[k]` holds the values of the column
    /// [`TaggerModel::columns`] lists `k`th.
    ///
    /// # Panics
    ///
    /// If `columns` lacks a column the model reads or a list is not as
    /// long as `tokens`.
    pub fn tag_with<S: AsRef<str>>(
        &self,
        tokens: &[S],
        columns: &[&[S]],
        work: &mut TagBuffers,
    ) -> Vec<String> {
        if tokens.is_empty() {
            return Vec::new();
        }
        let x = self.instance(
            tokens,
            columns,
            &mut work.ids,
            Some(&mut work.cache),
        );
        let ids = self.weights.decode(
            &x,
            &self.rules,
            &self.candidate_lists,
            &mut work.decoding,
        );
        let internal: Vec<&str> =
            ids.iter().map(|&y| self.labels[y as usize].as_str()).collect();
        scheme::convert(&internal, self.internal, self.scheme)
    }

    /// The development score of the current weights: chunk F1 for chunk
    /// schemes, token accuracy otherwise.
    pub fn score(&self, sentences: &[Labeled]) -> Result<f64> {
        let mut evaluator = Evaluator::new(self.scheme);
        let mut work = TagBuffers::default();
        for s in sentences {
            let columns = s.column_slices();
            let predicted = self.tag_with(&s.tokens, &columns, &mut work);
            evaluator.add_labels(&s.labels, &predicted)?;
        }
        let report = evaluator.report();
        Ok(match &report.overall {
            Some(overall) => overall.f1,
            None => report.token_accuracy,
        })
    }

    /// The input columns the features read, as the feature config names
    /// them (1-based, negative from the end), with the names of their
    /// `[[columns]]` entries; empty when they read only the tokens.
    pub fn columns(&self) -> Vec<(i64, &str)> {
        column_names(&self.extractor)
    }

    /// Writes the model to `path` (atomically).
    pub fn save(&self, path: &Path) -> Result<()> {
        model::save(self, path)
    }

    /// Reads a model written by [`TaggerModel::save`] and checks that
    /// its parts fit together (a file with a valid checksum can still be
    /// one that was altered on purpose or written by a broken build).
    pub fn load(path: &Path) -> Result<TaggerModel> {
        let model: TaggerModel = model::load(path)?;
        model.check().map_err(|reason| Error::Model {
            path: path.to_path_buf(),
            reason: format!("inconsistent model: {reason}"),
        })?;
        Ok(model)
    }

    fn check(&self) -> std::result::Result<(), String> {
        let labels = self.labels.len();
        if labels == 0 {
            return Err("no labels".into());
        }
        self.weights.check(labels, self.features.len())?;
        self.rules.check(labels)?;
        let lists = self.candidate_lists.len() as u32;
        if self.dictionary.values().any(|&k| k >= lists) {
            return Err("a tag-dictionary entry points nowhere".into());
        }
        if self.candidate_lists.iter().flatten().any(|&y| y as usize >= labels)
        {
            return Err("a candidate label that does not exist".into());
        }
        Ok(())
    }
}

/// Reusable buffers for [`TaggerModel::tag`], with a cache of feature ids
/// by word: use one per model.
#[derive(Default)]
pub struct TagBuffers {
    ids: FeatureIds,
    decoding: Decoding,
    /// Feature ids of words seen so far; belongs to one model.
    cache: IdCache,
}

/// The decoder's constraints for `labels` under `scheme`.
fn constraints(labels: &[String], scheme: Scheme) -> Constraints {
    Constraints::from_fn(
        labels.len(),
        |prev, next| {
            scheme::allowed(
                prev.map(|p| labels[p].as_str()),
                &labels[next],
                scheme,
            )
        },
        |last| scheme::may_end(&labels[last], scheme),
    )
}

/// Candidate labels of the words seen at least
/// [`DICTIONARY_MIN_COUNT`] times: the labels they were seen with, as
/// word → list index and the distinct lists.
fn tag_dictionary(
    train: &[Labeled],
    labels: &[Vec<String>],
    label_id: &HashMap<&str, u32>,
) -> (BTreeMap<String, u32>, Vec<Vec<u32>>) {
    let mut seen: HashMap<&str, (u32, Vec<u32>)> = HashMap::new();
    for (s, gold) in train.iter().zip(labels) {
        for (token, label) in s.tokens.iter().zip(gold) {
            let entry = seen.entry(token.as_str()).or_default();
            entry.0 += 1;
            let id = label_id[label.as_str()];
            if let Err(k) = entry.1.binary_search(&id) {
                entry.1.insert(k, id);
            }
        }
    }
    let mut frequent: Vec<(&str, Vec<u32>)> = seen
        .into_iter()
        .filter(|(_, (count, _))| *count >= DICTIONARY_MIN_COUNT)
        .map(|(word, (_, labels))| (word, labels))
        .collect();
    // Sorted, so that list numbers do not depend on hash order.
    frequent.sort_unstable();
    let mut lists: Vec<Vec<u32>> = Vec::new();
    let mut list_id: HashMap<Vec<u32>, u32> = HashMap::new();
    let mut dictionary = BTreeMap::new();
    for (word, labels) in frequent {
        let id = *list_id.entry(labels.clone()).or_insert_with(|| {
            lists.push(labels);
            lists.len() as u32 - 1
        });
        dictionary.insert(word.to_string(), id);
    }
    (dictionary, lists)
}

/// The input columns `extractor` reads, with the names of their
/// `[[columns]]` entries, as [`Labeled::read`] takes them.
pub fn column_names(extractor: &Extractor) -> Vec<(i64, &str)> {
    extractor
        .config()
        .columns
        .iter()
        .map(|c| (c.column, c.name.as_str()))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use lexiclade_features::FeatureConfig;

    fn data() -> Vec<Labeled> {
        let names = ["Ada", "Bram", "Corin", "Della"];
        let places = ["Tollmouth", "Fennick", "Saltmead"];
        (0..60)
            .map(|k| {
                let (n, p) = (names[k % 4], places[k % 3]);
                let tokens: Vec<String> =
                    ["skipper", n, "left", p, "at", "dawn"]
                        .map(String::from)
                        .into();
                let labels: Vec<String> =
                    ["O", "B-PER", "O", "B-LOC", "O", "O"]
                        .map(String::from)
                        .into();
                Labeled { tokens, labels, columns: Vec::new() }
            })
            .collect()
    }

    fn trained() -> TaggerModel {
        let config = FeatureConfig::default().check().unwrap();
        // Without the tag dictionary: every word here is frequent and
        // unambiguous, so pruning alone would tag it and nothing would be
        // learned.
        let params =
            TrainParams { epochs: 3, prune: false, ..TrainParams::default() };
        TaggerModel::train(
            &data(),
            None,
            Extractor::new(config, None).unwrap(),
            &params,
            &mut |_, _| {},
            &mut |_| {},
        )
        .unwrap()
    }

    #[test]
    fn save_load_tag_gives_identical_predictions() {
        let model = trained();
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("m.bin");
        model.save(&path).unwrap();
        let loaded = TaggerModel::load(&path).unwrap();
        let mut work = TagBuffers::default();
        for s in data().iter().take(10) {
            let a = model.tag(&s.tokens, &mut work);
            assert_eq!(a, loaded.tag(&s.tokens, &mut work));
            assert_eq!(a, s.labels, "a separable task is learned");
        }
        let unseen = ["skipper", "Zed", "left", "Nowhere"];
        assert_eq!(
            model.tag(&unseen, &mut work),
            loaded.tag(&unseen, &mut work)
        );
    }

    /// Dropping the features without weights changes no prediction: the
    /// twin of every model is the one that keeps them all. The config
    /// has an input column and conjunctions of words, whose look-ups the
    /// cached extraction skips for words it takes as unseen.
    #[test]
    fn dropping_unweighted_features_changes_no_prediction() {
        let config = FeatureConfig::from_toml(
            r#"
            [[columns]]
            name = "tag"
            column = 2
            window = [-1, 0, 1]
            ngrams = [[-1, 0]]
            [[conjunctions]]
            name = "wt"
            parts = ["word", "tag"]
            [[conjunctions]]
            name = "ww"
            parts = ["word[-1]", "word"]
            "#,
        )
        .unwrap()
        .check()
        .unwrap();
        let with_tags = |sentences: Vec<Labeled>| -> Vec<Labeled> {
            sentences
                .into_iter()
                .map(|mut s| {
                    let tags = s
                        .tokens
                        .iter()
                        .map(|t| format!("T{}", t.len() % 3))
                        .collect();
                    s.columns = vec![tags];
                    s
                })
                .collect()
        };
        // Rare lowercase words the model tags right without learning
        // anything from them: their features get no weight.
        let fillers = |from: usize, count: usize| -> Vec<Labeled> {
            (from..from + count)
                .map(|k| Labeled {
                    tokens: (0..4)
                        .map(|j| format!("f{}x", k * 4 + j))
                        .collect(),
                    labels: vec!["O".into(); 4],
                    columns: Vec::new(),
                })
                .collect()
        };
        let mut train = noisy(200, 1);
        train.extend(fillers(0, 100));
        let train = with_tags(train);
        let params =
            TrainParams { epochs: 2, prune: false, ..TrainParams::default() };
        let full = TaggerModel::train_once(
            &train,
            None,
            Extractor::new(config, None).unwrap(),
            &params,
            false,
            &mut |_, _| {},
            &mut |_| {},
        )
        .unwrap();
        // A word's own feature without a weight but a conjunction of it
        // with one (rare, but sums can cancel): here every word's.
        let mut full = full;
        let names = full.features.names();
        full.weights = full.weights.cleared(|f| names[f].starts_with("w="));
        let mut small = full.clone();
        small.drop_unweighted();
        assert!(small.features.len() < full.features.len());
        assert!(small.features.names().iter().all(|f| f.starts_with("w=")
            || small
                .weights
                .has_weights(small.features.get(f).unwrap() as usize)));
        // Training words, new words and new pairs, in new sentences.
        let mut test = noisy(60, 4);
        test.extend(fillers(90, 20));
        let mut test = with_tags(test);
        test.push(
            with_tags(vec![Labeled {
                tokens: ["Zed", "ran", "Ada", "qq", "by"]
                    .map(String::from)
                    .into(),
                labels: vec!["O".into(); 5],
                columns: Vec::new(),
            }])
            .remove(0),
        );
        // Each token gets the same weighted features from both, so
        // every score is the same.
        let weighted = |model: &TaggerModel,
                        work: &mut TagBuffers,
                        s: &Labeled| {
            let names = model.features.names();
            let x = model.instance(
                &s.tokens,
                &s.column_slices(),
                &mut work.ids,
                Some(&mut work.cache),
            );
            (0..x.len())
                .map(|i| {
                    let mut f: Vec<&str> = x
                        .token(i)
                        .iter()
                        .filter(|&&f| model.weights.has_weights(f as usize))
                        .map(|&f| names[f as usize])
                        .collect();
                    f.sort_unstable();
                    f.join(" ")
                })
                .collect::<Vec<_>>()
        };
        let (mut a, mut b) = (TagBuffers::default(), TagBuffers::default());
        let mut differ = 0;
        for s in &test {
            assert_eq!(
                weighted(&small, &mut a, s),
                weighted(&full, &mut b, s)
            );
            let columns = s.column_slices();
            let got = small.tag_with(&s.tokens, &columns, &mut a);
            assert_eq!(got, full.tag_with(&s.tokens, &columns, &mut b));
            differ += usize::from(got != s.labels);
        }
        assert!(differ < test.len(), "the model learned something");
    }

    #[test]
    fn the_saved_weights_are_averages() {
        // Averages of integer weights over many sentences are fractions;
        // the final weights during training are integers.
        let model = trained();
        let text = serde_json::to_string(&model.weights).unwrap();
        let fractional = text
            .split(|c: char| !(c.is_ascii_digit() || c == '.' || c == '-'))
            .filter_map(|t| t.parse::<f64>().ok())
            .any(|v| v.fract() != 0.0);
        assert!(
            fractional,
            "no fractional weight: not averaged: {}",
            &text[..300.min(text.len())]
        );
        assert_eq!(
            model.best_epoch, 3,
            "without dev data the last epoch is kept"
        );
    }

    #[test]
    fn an_inconsistent_model_with_a_valid_checksum_is_refused() {
        let mut model = trained();
        model.labels.pop();
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("m.bin");
        model.save(&path).unwrap();
        let err = TaggerModel::load(&path).unwrap_err().to_string();
        assert!(err.contains("inconsistent model"), "{err}");
    }

    /// Sentences whose labels depend on the word, with a few noisy ones
    /// so that the epochs differ on a development set.
    fn noisy(count: usize, salt: usize) -> Vec<Labeled> {
        let words = ["Ada", "ran", "to", "Fennick", "Bram", "sat", "by"];
        (0..count)
            .map(|k| {
                let tokens: Vec<String> = (0..5)
                    .map(|j| words[(k * 3 + j * (salt + 2)) % 7].to_string())
                    .collect();
                let labels = tokens
                    .iter()
                    .enumerate()
                    .map(|(j, t)| {
                        let upper = t.starts_with(char::is_uppercase);
                        if upper != ((k + j + salt) % 11 == 0) {
                            "B-X".to_string()
                        } else {
                            "O".to_string()
                        }
                    })
                    .collect();
                Labeled { tokens, labels, columns: Vec::new() }
            })
            .collect()
    }

    fn train_with(
        train: &[Labeled],
        dev: Option<&[Labeled]>,
        params: &TrainParams,
        reports: &mut Vec<EpochReport>,
    ) -> Result<TaggerModel> {
        let config = FeatureConfig::default().check().unwrap();
        TaggerModel::train(
            train,
            dev,
            Extractor::new(config, None).unwrap(),
            params,
            &mut |_, _| {},
            &mut |r| reports.push(r.clone()),
        )
    }

    #[test]
    fn refit_equals_training_on_the_joined_sentences() {
        let (train, dev) = (noisy(80, 1), noisy(40, 2));
        let params =
            TrainParams { epochs: 6, seed: 5, ..TrainParams::default() };
        let mut reports = Vec::new();
        let plain =
            train_with(&train, Some(&dev), &params, &mut reports).unwrap();
        assert!(reports.iter().all(|r| !r.refit && r.dev_score.is_some()));
        let refit_params = TrainParams { refit: true, ..params.clone() };
        let mut reports = Vec::new();
        let refit =
            train_with(&train, Some(&dev), &refit_params, &mut reports)
                .unwrap();
        let chosen = plain.best_epoch;
        assert_eq!(refit.best_epoch, chosen);
        // The dev epochs, then the refit's epochs without dev scores.
        assert_eq!(reports.len(), 6 + chosen);
        assert!(reports[6..].iter().all(|r| r.refit && r.dev_score.is_none()));
        assert_eq!(reports[6..].last().unwrap().epoch, chosen);

        let joined: Vec<Labeled> = train.iter().chain(&dev).cloned().collect();
        let by_hand_params = TrainParams { epochs: chosen, ..params.clone() };
        let by_hand =
            train_with(&joined, None, &by_hand_params, &mut Vec::new())
                .unwrap();
        assert!(
            model::encode(&refit) == model::encode(&by_hand),
            "refit differs from training on train+dev by hand"
        );
        assert!(
            model::encode(&refit) != model::encode(&plain),
            "refit gave the model trained on train only"
        );
    }

    #[test]
    fn refit_without_development_sentences_is_refused() {
        let params = TrainParams { refit: true, ..TrainParams::default() };
        let err = train_with(&noisy(10, 1), None, &params, &mut Vec::new())
            .unwrap_err();
        assert!(err.to_string().starts_with("invalid refit:"), "{err}");
    }

    #[test]
    fn iobes_inside_iob2_outside() {
        let model = trained();
        assert_eq!(
            (model.scheme, model.internal),
            (Scheme::Iob2, Scheme::Iobes)
        );
        assert!(model.labels.iter().any(|l| l == "S-PER"));
    }
}
