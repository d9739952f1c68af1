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
//! about 40 bytes; the frozen index keeps the kept features once, one
//! after another, with 8 bytes of end offset and about 12 bytes of hash
//! table each.

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
        let mut index = FeatureIndex::with_capacity(kept.len());
        for (_, feature) in &kept {
            let fresh = index.push(feature);
            debug_assert!(fresh, "the builder counts each feature once");
        }
        index
    }
}

/// A frozen map from feature strings to ids `0..len()`.
///
/// Serialises as the features in id order, joined into one string, and
/// the length of each.
///
/// The features are kept one after another in one string, in id order,
/// and found through an open-addressing table (linear probing, at most
/// two thirds full) whose slots hold an id and 32 bits of the feature's
/// hash. A look-up hashes the key once and compares bytes only where
/// those bits match, so a feature that is absent usually costs one read
/// of the table; loading a model allocates three buffers, not one string
/// per feature.
#[derive(Clone, Debug, Default)]
pub struct FeatureIndex {
    /// Every feature, in id order, one after another.
    text: String,
    /// The end of each feature in `text`, by id.
    ends: Vec<usize>,
    /// The table: 0 for an empty slot, else the hash bits in the high
    /// half and the id + 1 in the low half. Any length (0 while the
    /// index is empty): the home slot is the hash scaled to it.
    slots: Vec<u64>,
}

/// The hash of a feature: FxHash of its bytes, spread by two
/// multiplications, one giving the home slot among `size` (its high
/// bits scaled to the table) and the other the bits kept in the slot
/// (so the two are not the same bits).
fn hash(feature: &str, size: usize) -> (usize, u64) {
    use std::hash::Hasher;
    let mut h = rustc_hash::FxHasher::default();
    h.write(feature.as_bytes());
    let h = h.finish();
    let spread = h.wrapping_mul(0x9E37_79B9_7F4A_7C15);
    let home = ((u128::from(spread) * size as u128) >> 64) as usize;
    let tag = h.wrapping_mul(0xD6E8_FEB8_6659_FD93) & 0xFFFF_FFFF_0000_0000;
    (home, tag)
}

/// The table size for `n` features: at most two thirds full.
fn table_size(n: usize) -> usize {
    (n + n / 2 + 1).max(8)
}

impl FeatureIndex {
    /// An empty index with room for `n` features without regrowing the
    /// table.
    fn with_capacity(n: usize) -> FeatureIndex {
        FeatureIndex {
            text: String::new(),
            ends: Vec::with_capacity(n),
            slots: vec![0; table_size(n)],
        }
    }

    /// The feature with id `id`.
    fn name(&self, id: usize) -> &str {
        let start = if id == 0 { 0 } else { self.ends[id - 1] };
        &self.text[start..self.ends[id]]
    }

    /// The slot where `feature` is, or the empty slot where it would go,
    /// and the slot value it has there.
    #[inline]
    fn find(&self, feature: &str) -> (usize, u64) {
        let size = self.slots.len();
        let (mut k, tag) = hash(feature, size);
        loop {
            let slot = self.slots[k];
            if slot == 0 {
                return (k, tag);
            }
            if slot & 0xFFFF_FFFF_0000_0000 == tag {
                let id = (slot & 0xFFFF_FFFF) as usize - 1;
                if self.name(id) == feature {
                    return (k, slot);
                }
            }
            k += 1;
            if k == size {
                k = 0;
            }
        }
    }

    /// Gives `feature` the next id; false (and nothing changes) if it
    /// already has one.
    fn push(&mut self, feature: &str) -> bool {
        if 3 * (self.ends.len() + 1) > 2 * self.slots.len() {
            self.grow();
        }
        let (k, value) = self.find(feature);
        if self.slots[k] != 0 {
            return false;
        }
        let id = self.ends.len();
        assert!(id < u32::MAX as usize, "at most 2^32 - 1 features");
        self.text.push_str(feature);
        self.ends.push(self.text.len());
        self.slots[k] = value | (id as u64 + 1);
        true
    }

    /// Doubles the table (or makes the first one).
    fn grow(&mut self) {
        let size = (self.slots.len() * 2).max(8);
        let fresh = self.rebuild(size);
        debug_assert!(fresh.is_none(), "the table held no repeats");
    }

    /// Makes a table of `size` slots (more than the features) for the
    /// features of `text` and `ends`; returns the id of a feature that
    /// repeats an earlier one, if any (the table is then not usable).
    ///
    /// Inserts in the order of the home slots, so that the writes sweep
    /// the table once instead of landing at random: loading a model with
    /// millions of features is several times faster. The order comes
    /// from a counting sort on the home slot's block of at most 4,096
    /// blocks: within a block the writes stay within a few kilobytes,
    /// which is as good as fully sorted and costs two passes instead of
    /// a sort.
    fn rebuild(&mut self, size: usize) -> Option<usize> {
        let n = self.ends.len();
        // Home slot and hash bits of each feature, read in id order (one
        // pass over the text).
        let hashed: Vec<(usize, u32)> = (0..n)
            .map(|id| {
                let (home, tag) = hash(self.name(id), size);
                (home, (tag >> 32) as u32)
            })
            .collect();
        let shift = (usize::BITS - size.leading_zeros()).saturating_sub(12);
        let blocks = (size >> shift) + 1;
        let mut starts = vec![0usize; blocks + 1];
        for &(home, _) in &hashed {
            starts[(home >> shift) + 1] += 1;
        }
        for b in 0..blocks {
            starts[b + 1] += starts[b];
        }
        // The whole entry moves, so that the writes below read it in
        // order rather than at random.
        let mut order = vec![(0usize, 0u32, 0u32); n];
        for (id, &(home, tag)) in hashed.iter().enumerate() {
            let b = home >> shift;
            order[starts[b]] = (home, tag, id as u32);
            starts[b] += 1;
        }
        drop(hashed);
        self.slots = vec![0; size];
        for (home, tag, id) in order {
            let value = (u64::from(tag) << 32) | (u64::from(id) + 1);
            let mut k = home;
            while self.slots[k] != 0 {
                let slot = self.slots[k];
                if slot >> 32 == u64::from(tag) {
                    let other = (slot & 0xFFFF_FFFF) as usize - 1;
                    if self.name(other) == self.name(id as usize) {
                        // The later of the two is the repeat.
                        return Some(other.max(id as usize));
                    }
                }
                k += 1;
                if k == size {
                    k = 0;
                }
            }
            self.slots[k] = value;
        }
        None
    }

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
    #[inline]
    pub fn get(&self, feature: &str) -> Option<u32> {
        if self.ends.is_empty() {
            return None;
        }
        let (_, slot) = self.find(feature);
        match slot & 0xFFFF_FFFF {
            0 => None,
            id => Some(id as u32 - 1),
        }
    }

    /// The features for which `keep(id, feature)` holds, with new ids in
    /// the same order, and the old id of each (`kept[new] = old`).
    pub fn retain(
        &self,
        mut keep: impl FnMut(u32, &str) -> bool,
    ) -> (FeatureIndex, Vec<u32>) {
        let kept: Vec<u32> = (0..self.ends.len() as u32)
            .filter(|&id| keep(id, self.name(id as usize)))
            .collect();
        let mut index = FeatureIndex::with_capacity(kept.len());
        for &id in &kept {
            let fresh = index.push(self.name(id as usize));
            debug_assert!(fresh, "an index holds each feature once");
        }
        (index, kept)
    }

    /// The number of features, which is one more than the largest id.
    pub fn len(&self) -> usize {
        self.ends.len()
    }

    /// Whether no feature was kept.
    pub fn is_empty(&self) -> bool {
        self.ends.is_empty()
    }

    /// Every feature, indexed by its id. Builds the list on each call.
    pub fn names(&self) -> Vec<&str> {
        (0..self.ends.len()).map(|id| self.name(id)).collect()
    }
}

/// Two indexes are equal when they give the same features the same ids
/// (the tables may differ in size).
impl PartialEq for FeatureIndex {
    fn eq(&self, other: &FeatureIndex) -> bool {
        self.ends == other.ends && self.text == other.text
    }
}

impl Eq for FeatureIndex {}

impl Serialize for FeatureIndex {
    fn serialize<Ser: Serializer>(
        &self,
        s: Ser,
    ) -> Result<Ser::Ok, Ser::Error> {
        let mut start = 0;
        let lengths: Vec<u32> = self
            .ends
            .iter()
            .map(|&end| {
                let len = end - start;
                start = end;
                u32::try_from(len).expect("a feature under 4 GiB")
            })
            .collect();
        RawIndex { text: self.text.as_str().into(), lengths }.serialize(s)
    }
}

impl<'de> Deserialize<'de> for FeatureIndex {
    fn deserialize<D: Deserializer<'de>>(
        d: D,
    ) -> Result<FeatureIndex, D::Error> {
        use serde::de::Error as _;
        let raw = RawIndex::deserialize(d)?;
        let text = raw.text.into_owned();
        if raw.lengths.len() >= u32::MAX as usize {
            return Err(D::Error::custom("more than 2^32 - 2 features"));
        }
        let mut ends = Vec::with_capacity(raw.lengths.len());
        let mut end = 0usize;
        for &len in &raw.lengths {
            end = end.saturating_add(len as usize);
            if end > text.len() || !text.is_char_boundary(end) {
                return Err(D::Error::custom(
                    "feature lengths that do not fit the features' text",
                ));
            }
            ends.push(end);
        }
        if end != text.len() {
            return Err(D::Error::custom(
                "feature lengths that do not fit the features' text",
            ));
        }
        let mut index = FeatureIndex { text, ends, slots: Vec::new() };
        let n = index.ends.len();
        if n > 0 {
            if let Some(id) = index.rebuild(table_size(n)) {
                let feature = index.name(id).to_string();
                let e = crate::Error::DuplicateFeature { feature };
                return Err(D::Error::custom(e));
            }
        }
        Ok(index)
    }
}

/// How a [`FeatureIndex`] is written: every feature in id order in one
/// string (checked as UTF-8 once, not once per feature), and the length
/// of each in bytes.
#[derive(Serialize, Deserialize)]
struct RawIndex<'a> {
    #[serde(borrow)]
    text: std::borrow::Cow<'a, str>,
    lengths: Vec<u32>,
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
    fn retain_keeps_the_order_and_maps_the_ids() {
        let index = FeatureIndex::from_sentences(&extractor(1), TRAIN);
        let (kept, old) = index.retain(|id, f| id == 0 || f.ends_with('d'));
        assert_eq!(kept.names(), ["bias", "w=d"]);
        assert_eq!(old, [0, 4]);
        assert_eq!(kept.get("w=d"), Some(1));
        assert_eq!(kept.get("w=a"), None);
        let (none, old) = index.retain(|_, _| false);
        assert!(none.is_empty() && old.is_empty());
        assert_eq!(none.get("bias"), None);
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
        assert_eq!(
            json,
            r#"{"text":"biasw=aw=bw=cw=dw=e","lengths":[4,3,3,3,3,3]}"#
        );
        let back: FeatureIndex = serde_json::from_str(&json).unwrap();
        assert_eq!(back, index);
        let e = serde_json::from_str::<FeatureIndex>(
            r#"{"text":"aba","lengths":[1,1,1]}"#,
        )
        .unwrap_err();
        assert!(e.to_string().contains("\"a\" twice"), "{e}");
        // Lengths that overrun the text, fall short of it, or cut a
        // character in two.
        for bad in [
            r#"{"text":"ab","lengths":[1,2]}"#,
            r#"{"text":"abc","lengths":[1,1]}"#,
            r#"{"text":"é","lengths":[1,1]}"#,
        ] {
            let e = serde_json::from_str::<FeatureIndex>(bad).unwrap_err();
            assert!(e.to_string().contains("do not fit"), "{bad}: {e}");
        }
    }

    /// The open-addressing table finds what a plain hash map finds, for
    /// random strings present and absent, through every regrowth of the
    /// table (from empty) and at the size a build chooses.
    #[test]
    fn table_lookups_equal_a_hash_map() {
        use rand::{Rng, SeedableRng};
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(7);
        let word = |rng: &mut rand_chacha::ChaCha8Rng| -> String {
            let len = rng.random_range(0..12);
            (0..len).map(|_| rng.random_range('a'..='f')).collect()
        };
        let mut grown = FeatureIndex::default();
        let mut plain: std::collections::HashMap<String, u32> =
            std::collections::HashMap::new();
        let mut order = Vec::new();
        for _ in 0..20_000 {
            let w = word(&mut rng);
            let fresh = !plain.contains_key(&w);
            assert_eq!(grown.push(&w), fresh, "{w:?}");
            if fresh {
                plain.insert(w.clone(), order.len() as u32);
                order.push(w);
            }
        }
        let mut built = FeatureIndexBuilder::new();
        for w in &order {
            built.add_feature(w);
        }
        let built = built.build(1);
        assert_eq!(built, grown);
        assert_eq!(grown.len(), order.len());
        assert_eq!(grown.names(), order);
        for _ in 0..20_000 {
            let w =
                word(&mut rng) + if rng.random_bool(0.5) { "" } else { "g" };
            let want = plain.get(&w).copied();
            assert_eq!(grown.get(&w), want, "{w:?}");
            assert_eq!(built.get(&w), want, "{w:?}");
        }
        assert_eq!(FeatureIndex::default().get(""), None);
        let json = serde_json::to_string(&grown).unwrap();
        let back: FeatureIndex = serde_json::from_str(&json).unwrap();
        assert_eq!(back, grown);
        assert!(order.iter().all(|w| back.get(w) == plain.get(w).copied()));
    }
}
