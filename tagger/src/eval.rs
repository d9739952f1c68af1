//! Evaluation of predicted labels against gold labels: chunk-level
//! precision, recall and F1 per type and overall, token accuracy, and,
//! given the words of a training file, the accuracy on out-of-vocabulary
//! tokens.
//!
//! A predicted chunk counts as correct only when a gold chunk has exactly
//! its boundaries and its type. Chunks are read from both label columns
//! with the rules of [`crate::scheme`], which are those of the CoNLL-2000
//! evaluation; so the figures are the ones seqeval's default mode and the
//! CoNLL shared tasks report. Precision is correct / predicted chunks,
//! recall correct / gold chunks, both 0 when their denominator is 0, and
//! F1 their harmonic mean, 0 when both are 0. Overall figures are micro
//! averages: counts summed over types first.
//!
//! [`Evaluator`] takes one sentence at a time, so a caller can score
//! while it tags; [`Report`] is the result, serialisable to JSON and
//! printable as a table.

use std::{
    collections::{BTreeMap, HashMap},
    io,
};

use serde::{Deserialize, Serialize};

use crate::{
    error::{Error, Result},
    scheme::{chunks, Chunk, Scheme},
};

/// The `format_version` of the JSON form of [`Report`].
pub const FORMAT_VERSION: u32 = 1;

/// Chunk counts of one type.
#[derive(Clone, Copy, Debug, Default)]
struct Tally {
    gold: u64,
    predicted: u64,
    correct: u64,
}

/// A word predicate: is this word in some set?
pub type WordSet<'a> = &'a dyn Fn(&str) -> bool;

/// Accumulates the counts of an evaluation, sentence by sentence.
///
/// ```
/// use lexiclade_tagger::{eval::Evaluator, scheme::Scheme};
///
/// let mut eval = Evaluator::new(Scheme::Iob2);
/// eval.add_labels(&["B-PER", "I-PER", "O"], &["B-PER", "O", "O"])?;
/// let report = eval.report();
/// assert_eq!(report.overall.unwrap().f1, 0.0);
/// assert_eq!(report.token_accuracy, 2.0 / 3.0);
/// # Ok::<(), lexiclade_tagger::Error>(())
/// ```
pub struct Evaluator<'a> {
    scheme: Scheme,
    known: Option<WordSet<'a>>,
    clustered: Option<WordSet<'a>>,
    sentences: u64,
    tokens: u64,
    correct_tokens: u64,
    oov_tokens: u64,
    oov_correct: u64,
    clustered_tokens: u64,
    types: HashMap<String, Tally>,
}

impl<'a> Evaluator<'a> {
    /// An evaluation under `scheme`; with [`Scheme::None`] only token
    /// accuracy is computed.
    pub fn new(scheme: Scheme) -> Self {
        Evaluator {
            scheme,
            known: None,
            clustered: None,
            sentences: 0,
            tokens: 0,
            correct_tokens: 0,
            oov_tokens: 0,
            oov_correct: 0,
            clustered_tokens: 0,
            types: HashMap::new(),
        }
    }

    /// Reports the accuracy on tokens for which `known` is false (the
    /// words never seen in training) and their share of all tokens.
    pub fn known_words(mut self, known: WordSet<'a>) -> Self {
        self.known = Some(known);
        self
    }

    /// Reports the share of tokens for which `clustered` is true (the
    /// words that have a cluster path).
    pub fn clustered_words(mut self, clustered: WordSet<'a>) -> Self {
        self.clustered = Some(clustered);
        self
    }

    /// Adds one sentence: its tokens and its gold and predicted labels,
    /// all of one length.
    pub fn add<T, G, P>(
        &mut self,
        tokens: &[T],
        gold: &[G],
        predicted: &[P],
    ) -> Result<()>
    where
        T: AsRef<str>,
        G: AsRef<str>,
        P: AsRef<str>,
    {
        if tokens.len() != gold.len() || gold.len() != predicted.len() {
            return Err(Error::InvalidParam {
                name: "sentence",
                reason: format!(
                    "{} tokens, {} gold labels and {} predicted labels",
                    tokens.len(),
                    gold.len(),
                    predicted.len()
                ),
            });
        }
        for ((token, g), p) in tokens.iter().zip(gold).zip(predicted) {
            let token = token.as_ref();
            let correct = g.as_ref() == p.as_ref();
            if let Some(known) = self.known {
                if !known(token) {
                    self.oov_tokens += 1;
                    self.oov_correct += u64::from(correct);
                }
            }
            if let Some(clustered) = self.clustered {
                self.clustered_tokens += u64::from(clustered(token));
            }
        }
        self.add_counts(gold, predicted);
        Ok(())
    }

    /// Adds one sentence without its tokens: its gold and predicted
    /// labels, of one length. An error when word sets were given, since
    /// they need the tokens.
    pub fn add_labels<G, P>(
        &mut self,
        gold: &[G],
        predicted: &[P],
    ) -> Result<()>
    where
        G: AsRef<str>,
        P: AsRef<str>,
    {
        if self.known.is_some() || self.clustered.is_some() {
            return Err(Error::InvalidParam {
                name: "sentence",
                reason: "the word sets need the tokens".to_string(),
            });
        }
        if gold.len() != predicted.len() {
            return Err(Error::InvalidParam {
                name: "sentence",
                reason: format!(
                    "{} gold labels but {} predicted labels",
                    gold.len(),
                    predicted.len()
                ),
            });
        }
        self.add_counts(gold, predicted);
        Ok(())
    }

    fn add_counts<G: AsRef<str>, P: AsRef<str>>(
        &mut self,
        gold: &[G],
        predicted: &[P],
    ) {
        self.sentences += 1;
        self.tokens += gold.len() as u64;
        self.correct_tokens += gold
            .iter()
            .zip(predicted)
            .filter(|(g, p)| g.as_ref() == p.as_ref())
            .count() as u64;
        if !self.scheme.has_chunks() {
            return;
        }
        let gold = chunks(gold);
        let predicted = chunks(predicted);
        for chunk in &gold {
            bump(&mut self.types, chunk.kind, |t| t.gold += 1);
        }
        for chunk in &predicted {
            bump(&mut self.types, chunk.kind, |t| t.predicted += 1);
        }
        for chunk in matching(&gold, &predicted) {
            bump(&mut self.types, chunk.kind, |t| t.correct += 1);
        }
    }

    /// The figures of everything added so far.
    pub fn report(&self) -> Report {
        let chunked = self.scheme.has_chunks();
        let mut total = Tally::default();
        let mut per_type = BTreeMap::new();
        for (kind, tally) in &self.types {
            total.gold += tally.gold;
            total.predicted += tally.predicted;
            total.correct += tally.correct;
            per_type.insert(kind.clone(), Scores::from(*tally));
        }
        let known = self.known.is_some();
        Report {
            format_version: FORMAT_VERSION,
            scheme: self.scheme,
            sentences: self.sentences,
            tokens: self.tokens,
            gold_chunks: total.gold,
            predicted_chunks: total.predicted,
            correct_chunks: total.correct,
            overall: chunked.then(|| Scores::from(total)),
            per_type,
            token_accuracy: ratio(self.correct_tokens, self.tokens),
            oov_tokens: known.then_some(self.oov_tokens),
            oov_accuracy: known
                .then(|| ratio(self.oov_correct, self.oov_tokens)),
            oov_share: known.then(|| ratio(self.oov_tokens, self.tokens)),
            clustered_share: self
                .clustered
                .map(|_| ratio(self.clustered_tokens, self.tokens)),
        }
    }
}

/// Applies `f` to the tally of `kind`, adding the type when it is new
/// (one allocation per type, not per chunk).
fn bump(
    types: &mut HashMap<String, Tally>,
    kind: &str,
    f: impl FnOnce(&mut Tally),
) {
    match types.get_mut(kind) {
        Some(tally) => f(tally),
        None => {
            let mut tally = Tally::default();
            f(&mut tally);
            types.insert(kind.to_string(), tally);
        }
    }
}

/// The predicted chunks that equal a gold chunk. Both lists come from
/// [`chunks`], so each is in order and without overlaps, and one merge
/// pass finds the pairs with equal boundaries.
fn matching<'c, 'a>(
    gold: &'c [Chunk<'a>],
    predicted: &'c [Chunk<'a>],
) -> Vec<&'c Chunk<'a>> {
    let mut out = Vec::new();
    let (mut i, mut j) = (0, 0);
    while i < gold.len() && j < predicted.len() {
        let (g, p) = (&gold[i], &predicted[j]);
        match (g.start, g.end).cmp(&(p.start, p.end)) {
            std::cmp::Ordering::Less => i += 1,
            std::cmp::Ordering::Greater => j += 1,
            std::cmp::Ordering::Equal => {
                if g.kind == p.kind {
                    out.push(p);
                }
                i += 1;
                j += 1;
            }
        }
    }
    out
}

/// `n / d`, or 0 when `d` is 0.
fn ratio(n: u64, d: u64) -> f64 {
    if d == 0 {
        0.0
    } else {
        n as f64 / d as f64
    }
}

/// Precision, recall and F1 of one chunk type, or of all together, as
/// fractions in [0, 1], with the counts they come from.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct Scores {
    /// Correct / predicted chunks; 0 when none were predicted.
    pub precision: f64,
    /// Correct / gold chunks; 0 when there are none.
    pub recall: f64,
    /// The harmonic mean of precision and recall; 0 when both are 0.
    pub f1: f64,
    /// The number of gold chunks.
    pub support: u64,
    /// The number of predicted chunks.
    pub predicted: u64,
    /// The number of predicted chunks that equal a gold chunk.
    pub correct: u64,
}

impl From<Tally> for Scores {
    fn from(t: Tally) -> Scores {
        let precision = ratio(t.correct, t.predicted);
        let recall = ratio(t.correct, t.gold);
        let sum = precision + recall;
        let f1 = if sum == 0.0 { 0.0 } else { 2.0 * precision * recall / sum };
        Scores {
            precision,
            recall,
            f1,
            support: t.gold,
            predicted: t.predicted,
            correct: t.correct,
        }
    }
}

/// The result of an evaluation. Fractions are in [0, 1].
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Report {
    /// The version of this JSON layout, [`FORMAT_VERSION`].
    pub format_version: u32,
    /// The tag scheme the labels were read in.
    pub scheme: Scheme,
    /// The number of sentences.
    pub sentences: u64,
    /// The number of tokens.
    pub tokens: u64,
    /// The number of gold chunks.
    pub gold_chunks: u64,
    /// The number of predicted chunks.
    pub predicted_chunks: u64,
    /// The number of predicted chunks that equal a gold chunk.
    pub correct_chunks: u64,
    /// Scores over all chunks; absent under [`Scheme::None`].
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub overall: Option<Scores>,
    /// Scores of each chunk type found in the gold or the predicted
    /// labels, by type name; empty under [`Scheme::None`].
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub per_type: BTreeMap<String, Scores>,
    /// The share of tokens whose predicted label equals the gold one.
    pub token_accuracy: f64,
    /// The number of tokens whose word is not in the training words;
    /// present when those were given.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub oov_tokens: Option<u64>,
    /// Token accuracy on those tokens (0 when there are none).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub oov_accuracy: Option<f64>,
    /// Their share of all tokens.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub oov_share: Option<f64>,
    /// The share of tokens whose word has a cluster path; present when
    /// the clustered words were given.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub clustered_share: Option<f64>,
}

impl Report {
    /// Writes the report as an aligned table: a summary line, then (for
    /// chunk schemes) one row per type sorted by name and the overall
    /// row, then the token accuracies. Figures are percentages with two
    /// decimals.
    pub fn write_table<W: io::Write>(&self, mut out: W) -> io::Result<()> {
        writeln!(
            out,
            "scheme {}: {} sentences, {} tokens",
            self.scheme, self.sentences, self.tokens
        )?;
        if let Some(overall) = &self.overall {
            let width = self
                .per_type
                .keys()
                .map(|k| k.chars().count())
                .chain([4, 7])
                .max()
                .unwrap_or(7);
            writeln!(out)?;
            writeln!(
                out,
                "{:<width$}  {:>9}  {:>9}  {:>9}  {:>9}  {:>9}  {:>9}",
                "type",
                "precision",
                "recall",
                "f1",
                "support",
                "predicted",
                "correct"
            )?;
            let row = |out: &mut W, name: &str, s: &Scores| {
                writeln!(
                    out,
                    "{:<width$}  {:>9.2}  {:>9.2}  {:>9.2}  {:>9}  {:>9}  \
                     {:>9}",
                    name,
                    100.0 * s.precision,
                    100.0 * s.recall,
                    100.0 * s.f1,
                    s.support,
                    s.predicted,
                    s.correct
                )
            };
            for (name, scores) in &self.per_type {
                row(&mut out, name, scores)?;
            }
            row(&mut out, "overall", overall)?;
            writeln!(out)?;
        }
        writeln!(out, "token accuracy  {:6.2}%", 100.0 * self.token_accuracy)?;
        if let (Some(n), Some(acc), Some(share)) =
            (self.oov_tokens, self.oov_accuracy, self.oov_share)
        {
            writeln!(
                out,
                "OOV accuracy    {:6.2}%  ({} tokens, {:.2}% of all)",
                100.0 * acc,
                n,
                100.0 * share
            )?;
        }
        if let Some(share) = self.clustered_share {
            writeln!(
                out,
                "clustered       {:6.2}%  of tokens have a path",
                100.0 * share
            )?;
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn labels(s: &str) -> Vec<&str> {
        s.split_whitespace().collect()
    }

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() < 1e-12
    }

    /// Worked by hand. Gold chunks: PER 0..2, LOC 3..4 (sentence 1); ORG
    /// 0..1, PER 2..3 (sentence 2): PER 2, LOC 1, ORG 1. Predicted: PER
    /// 0..2 (correct), LOC 3..4 (correct); ORG 0..2 (wrong boundary),
    /// MISC 2..3 (wrong type): PER 1, LOC 1, ORG 1, MISC 1, 2 correct.
    #[test]
    fn precision_recall_f1_by_hand() {
        let mut eval = Evaluator::new(Scheme::Iob2);
        eval.add_labels(
            &labels("B-PER I-PER O B-LOC"),
            &labels("B-PER I-PER O B-LOC"),
        )
        .unwrap();
        eval.add_labels(
            &labels("B-ORG O B-PER"),
            &labels("B-ORG I-ORG B-MISC"),
        )
        .unwrap();
        let r = eval.report();
        assert_eq!((r.sentences, r.tokens), (2, 7));
        assert_eq!((r.gold_chunks, r.predicted_chunks), (4, 4));
        assert_eq!(r.correct_chunks, 2);
        let overall = r.overall.unwrap();
        assert!(close(overall.precision, 0.5));
        assert!(close(overall.recall, 0.5));
        assert!(close(overall.f1, 0.5));
        // 5 of 7 tokens: the last two of sentence 2 differ.
        assert!(close(r.token_accuracy, 5.0 / 7.0));
        let kinds: Vec<&str> = r.per_type.keys().map(String::as_str).collect();
        assert_eq!(kinds, ["LOC", "MISC", "ORG", "PER"]);
        let per = &r.per_type["PER"];
        assert!(close(per.precision, 1.0) && close(per.recall, 0.5));
        assert!(close(per.f1, 2.0 / 3.0));
        assert_eq!((per.support, per.predicted, per.correct), (2, 1, 1));
        // Only predicted: precision 0/1, recall 0/0 = 0, F1 0.
        let misc = &r.per_type["MISC"];
        assert_eq!((misc.precision, misc.recall, misc.f1), (0.0, 0.0, 0.0));
        assert_eq!(misc.support, 0);
        let org = &r.per_type["ORG"];
        assert_eq!((org.precision, org.recall, org.f1), (0.0, 0.0, 0.0));
        assert!(r.oov_accuracy.is_none() && r.clustered_share.is_none());
    }

    #[test]
    fn no_chunks_at_all_scores_zero_not_nan() {
        let mut eval = Evaluator::new(Scheme::Iob2);
        eval.add_labels(&["O", "O"], &["O", "O"]).unwrap();
        let r = eval.report();
        let overall = r.overall.unwrap();
        assert_eq!(
            (overall.precision, overall.recall, overall.f1),
            (0.0, 0.0, 0.0)
        );
        assert_eq!(r.token_accuracy, 1.0);
        assert!(Evaluator::new(Scheme::Iob2).report().token_accuracy == 0.0);
    }

    #[test]
    fn scheme_none_counts_tokens_only() {
        let mut eval = Evaluator::new(Scheme::None);
        eval.add_labels(&["B-X", "NN"], &["B-X", "VB"]).unwrap();
        let r = eval.report();
        assert!(r.overall.is_none() && r.per_type.is_empty());
        assert_eq!(r.token_accuracy, 0.5);
        let json = serde_json::to_value(&r).unwrap();
        assert!(json.get("overall").is_none());
        assert_eq!(json["scheme"], "none");
    }

    #[test]
    fn oov_and_clustered_shares() {
        let train = ["the", "cat"];
        let known = |w: &str| train.contains(&w);
        let clustered = |w: &str| w != "zyx";
        let mut eval = Evaluator::new(Scheme::Iob2)
            .known_words(&known)
            .clustered_words(&clustered);
        eval.add(
            &labels("the dog saw zyx"),
            &labels("O B-A O B-B"),
            &labels("O B-A O O"),
        )
        .unwrap();
        let r = eval.report();
        // OOV: dog (right), saw (right), zyx (wrong).
        assert_eq!(r.oov_tokens, Some(3));
        assert!(close(r.oov_accuracy.unwrap(), 2.0 / 3.0));
        assert!(close(r.oov_share.unwrap(), 0.75));
        assert!(close(r.clustered_share.unwrap(), 0.75));
        // The word sets need tokens.
        assert!(eval.add_labels(&["O"], &["O"]).is_err());
    }

    #[test]
    fn sentences_of_unequal_lengths_are_refused() {
        let mut eval = Evaluator::new(Scheme::Iob2);
        let err = eval.add(&["a", "b"], &["O", "O"], &["O"]).unwrap_err();
        assert_eq!(
            err.to_string(),
            "invalid sentence: 2 tokens, 2 gold labels and 1 predicted labels"
        );
        assert!(eval.add_labels(&["O"], &["O", "O"]).is_err());
    }

    #[test]
    fn json_has_the_documented_keys_and_reads_back() {
        let known = |w: &str| w == "a";
        let mut eval = Evaluator::new(Scheme::Iobes).known_words(&known);
        eval.add(&["a", "b"], &["S-X", "O"], &["S-X", "S-Y"]).unwrap();
        let r = eval.report();
        let json = serde_json::to_value(&r).unwrap();
        for key in [
            "format_version",
            "scheme",
            "sentences",
            "tokens",
            "gold_chunks",
            "predicted_chunks",
            "overall",
            "per_type",
            "token_accuracy",
            "oov_accuracy",
            "oov_share",
        ] {
            assert!(json.get(key).is_some(), "{key} missing from {json}");
        }
        assert_eq!(json["per_type"]["X"]["support"], 1);
        assert_eq!(json["per_type"]["Y"]["precision"], 0.0);
        assert_eq!(json["overall"]["precision"], 0.5);
        let back: Report = serde_json::from_value(json).unwrap();
        assert_eq!(back, r);
    }

    #[test]
    fn table_is_aligned_and_sorted() {
        let mut eval = Evaluator::new(Scheme::Iob2);
        eval.add_labels(
            &labels("B-PER I-PER O B-creative-work"),
            &labels("B-PER I-PER O B-LOC"),
        )
        .unwrap();
        let mut out = Vec::new();
        eval.report().write_table(&mut out).unwrap();
        let got = String::from_utf8(out).unwrap();
        let want = "\
scheme iob2: 1 sentences, 4 tokens

type           precision     recall         f1    support  predicted    correct
LOC                 0.00       0.00       0.00          0          1          0
PER               100.00     100.00     100.00          1          1          1
creative-work       0.00       0.00       0.00          1          0          0
overall            50.00      50.00      50.00          2          2          1

token accuracy   75.00%
";
        assert_eq!(got, want);
    }
}
