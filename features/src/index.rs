//! Feature strings to dense `u32` ids: counted over the training
//! sentences, filtered by the minimum count, then frozen.
//!
//! Ids follow the order in which features first appear in the training
//! sentences, so the same sentences in the same order always give the
//! same index, whatever the hash function. A feature seen fewer than
//! `min_count` times gets no id, and at tagging time a feature without
//! an id is skipped.
//!
//! Memory: while counting, each distinct feature costs its bytes plus
//! about 40 bytes; the frozen index keeps the kept features once, in a
//! hash map from string to id.

use std::collections::hash_map::Entry;

use rustc_hash::FxHashMap;
use serde::{Deserialize, Deserializer, Serialize, Serializer};

use crate::extract::{Extractor, Features};

/// Counts features over training sentences;
/// [`FeatureIndexBuilder::build`] freezes the result.
#[derive(Clone, Debug, Default)]
pub struct FeatureIndexBuilder {
    /// Each feature with the order of its first appearance and its count.
    seen: FxHashMap<Box<str>, (u32, u64)>,
}

impl FeatureIndexBuilder {
    /// An empty builder.
    pub fn new() -> FeatureIndexBuilder {
        FeatureIndexBuilder::default()
    }

    /// Counts every feature of every token of one sentence.
    pub fn add(&mut self, features: &Features) {
        for token in features.iter() {
            for feature in token {
                self.add_feature(feature);
            }
        }
    }

    /// Counts one occurrence of `feature`.
    pub fn add_feature(&mut self, feature: &str) {
        if let Some((_, count)) = self.seen.get_mut(feature) {
            *count += 1;
        } else {
            let order = self.seen.len() as u32;
            self.seen.insert(feature.into(), (order, 1));
        }
    }

    /// The number of distinct features counted so far.
    pub fn distinct(&self) -> usize {
        self.seen.len()
    }

    /// The frozen index of the features counted at least `min_count`
    /// times (0 counts as 1), numbered in order of first appearance.
    pub fn build(self, min_count: u64) -> FeatureIndex {
        let mut kept: Vec<(u32, Box<str>)> = self
            .seen
            .into_iter()
            .filter(|(_, (_, count))| *count >= min_count)
            .map(|(feature, (order, _))| (order, feature))
            .collect();
        kept.sort_unstable_by_key(|&(order, _)| order);
        let ids = kept
            .into_iter()
            .enumerate()
            .map(|(id, (_, feature))| (feature, id as u32))
            .collect();
        FeatureIndex { ids }
    }
}

/// A frozen map from feature strings to ids `0..len()`.
///
/// Serialises as the list of features in id order.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct FeatureIndex {
    ids: FxHashMap<Box<str>, u32>,
}

impl FeatureIndex {
    /// Counts the features of `sentences` with `extractor` and keeps
    /// those seen at least the config's `min_count` times.
    pub fn from_sentences<I, T, S>(extractor: &Extractor, sentences: I) -> Self
    where
        I: IntoIterator<Item = T>,
        T: AsRef<[S]>,
        S: AsRef<str>,
    {
        let mut builder = FeatureIndexBuilder::new();
        let mut buf = Features::new();
        for sentence in sentences {
            extractor.extract(sentence.as_ref(), &mut buf);
            builder.add(&buf);
        }
        builder.build(extractor.config().min_count)
    }

    /// The id of `feature`, or `None` if it was not kept.
    pub fn get(&self, feature: &str) -> Option<u32> {
        self.ids.get(feature).copied()
    }

    /// The number of features, which is one more than the largest id.
    pub fn len(&self) -> usize {
        self.ids.len()
    }

    /// Whether no feature was kept.
    pub fn is_empty(&self) -> bool {
        self.ids.is_empty()
    }

    /// Every feature, indexed by its id. Builds the list on each call.
    pub fn names(&self) -> Vec<&str> {
        let mut names = vec![""; self.ids.len()];
        for (feature, &id) in &self.ids {
            names[id as usize] = feature;
        }
        names
    }
}

impl Serialize for FeatureIndex {
    fn serialize<Ser: Serializer>(
        &self,
        s: Ser,
    ) -> Result<Ser::Ok, Ser::Error> {
        s.collect_seq(self.names())
    }
}

impl<'de> Deserialize<'de> for FeatureIndex {
    fn deserialize<D: Deserializer<'de>>(
        d: D,
    ) -> Result<FeatureIndex, D::Error> {
        let names = Vec::<Box<str>>::deserialize(d)?;
        let mut ids = FxHashMap::default();
        ids.reserve(names.len());
        for (id, feature) in names.into_iter().enumerate() {
            match ids.entry(feature) {
                Entry::Occupied(e) => {
                    let e = crate::Error::DuplicateFeature {
                        feature: e.key().to_string(),
                    };
                    return Err(serde::de::Error::custom(e));
                }
                Entry::Vacant(e) => {
                    e.insert(id as u32);
                }
            }
        }
        Ok(FeatureIndex { ids })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::config::FeatureConfig;

    fn extractor(min_count: u64) -> Extractor {
        let mut c = FeatureConfig { min_count, ..Default::default() };
        let l = &mut c.lexical;
        l.lowercase = false;
        l.char_prefixes = false;
        l.char_suffixes = false;
        l.shape = false;
        l.case_flags = false;
        l.char_flags = false;
        l.neighbours = false;
        Extractor::new(c.check().unwrap(), None).unwrap()
    }

    const TRAIN: [&[&str]; 3] =
        [&["a", "b", "a"], &["c", "a"], &["b", "d", "e", "b"]];

    #[test]
    fn min_count_keeps_features_seen_often_enough() {
        // Counts: bias 9, w=a 3, w=b 3, w=c 1, w=d 1, w=e 1.
        let index = FeatureIndex::from_sentences(&extractor(1), TRAIN);
        assert_eq!(index.names(), ["bias", "w=a", "w=b", "w=c", "w=d", "w=e"]);
        let index = FeatureIndex::from_sentences(&extractor(2), TRAIN);
        assert_eq!(index.names(), ["bias", "w=a", "w=b"]);
        assert_eq!(index.get("w=c"), None);
        let index = FeatureIndex::from_sentences(&extractor(3), TRAIN);
        assert_eq!(index.names(), ["bias", "w=a", "w=b"]);
        let index = FeatureIndex::from_sentences(&extractor(4), TRAIN);
        assert_eq!(index.names(), ["bias"]);
        assert_eq!(index.get("bias"), Some(0));
        let index = FeatureIndex::from_sentences(&extractor(10), TRAIN);
        assert!(index.is_empty());
    }

    #[test]
    fn ids_are_dense_in_first_seen_order() {
        let mut b = FeatureIndexBuilder::new();
        for f in ["z", "y", "z", "x", "y", "z", "w"] {
            b.add_feature(f);
        }
        assert_eq!(b.distinct(), 4);
        let index = b.build(2);
        assert_eq!(index.len(), 2);
        assert_eq!(index.get("z"), Some(0));
        assert_eq!(index.get("y"), Some(1));
        assert_eq!(index.get("x"), None);
    }

    #[test]
    fn unknown_features_are_skipped_at_tagging_time() {
        let e = extractor(2);
        let index = FeatureIndex::from_sentences(&e, TRAIN);
        let mut ids = crate::FeatureIds::new();
        e.extract_ids(&index, &["a", "c", "q"], &[], &mut ids);
        assert_eq!(ids.token(0), [0, 1]);
        assert_eq!(ids.token(1), [0]);
        assert_eq!(ids.token(2), [0]);
    }

    #[test]
    fn serde_round_trip_and_repeats_refused() {
        let index = FeatureIndex::from_sentences(&extractor(1), TRAIN);
        let json = serde_json::to_string(&index).unwrap();
        assert_eq!(json, r#"["bias","w=a","w=b","w=c","w=d","w=e"]"#);
        let back: FeatureIndex = serde_json::from_str(&json).unwrap();
        assert_eq!(back, index);
        let e = serde_json::from_str::<FeatureIndex>(r#"["a","b","a"]"#)
            .unwrap_err();
        assert!(e.to_string().contains("\"a\" twice"), "{e}");
    }
}
