//! Word → cluster path look-ups for feature extraction, built from a
//! cluster directory read back and small enough to embed in a model.
//!
//! A [`Paths`] keeps every clustered word once, sorted by its bytes,
//! with the id of its class's path, and every distinct path once: a
//! vocabulary of V words in C classes costs the words' bytes plus about
//! 20 bytes per word and the C paths. A look-up is a binary search,
//! O(L log V) for words of L bytes. A hash map would answer in O(L) but
//! serialise in no fixed order; model files must not change between runs
//! of the same training, so the sorted list won.
//!
//! The clusters may have been learned from text put in NFC and from
//! lowercased text; the look-up then normalises the word the same way the
//! counter did (NFC first, then the Unicode lowercase mapping of the whole
//! word; see [`lexiclade_cluster::normalize`]), so `The` finds the path of
//! `the`, `ΣΟΦΟΣ` that of `σοφος`, and a decomposed `café` that of the
//! composed one.

use std::{collections::HashMap, path::Path};

use lexiclade_cluster::{normalize::normalize, ClusterTable};
use serde::{Deserialize, Serialize};

use crate::error::Result;

/// The cluster path of every clustered word.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(try_from = "RawPaths")]
pub struct Paths {
    /// Whether the clusters were learned from lowercased text.
    lowercase: bool,
    /// Whether the clusters were learned from tokenised raw text.
    tokenize: bool,
    /// Each word with the index of its path in `paths`, sorted by the
    /// word's bytes, no word twice.
    words: Vec<(Box<str>, u32)>,
    /// The distinct paths, in the order their first word appears in the
    /// cluster table.
    paths: Vec<Box<str>>,
    /// Whether the clusters were learned from text put in NFC.
    nfc: bool,
}

impl Paths {
    /// The paths of a cluster table, with the `lowercase` and `tokenize`
    /// flags of its summary. A word listed twice keeps its first row.
    pub fn from_table(table: &ClusterTable) -> Paths {
        let mut ids: HashMap<&str, u32> = HashMap::new();
        let mut paths: Vec<Box<str>> = Vec::new();
        let mut words: Vec<(Box<str>, u32)> = table
            .entries
            .iter()
            .map(|e| {
                let id = *ids.entry(e.path.as_str()).or_insert_with(|| {
                    paths.push(e.path.as_str().into());
                    paths.len() as u32 - 1
                });
                (e.word.as_str().into(), id)
            })
            .collect();
        // The stable sort keeps the first row of a repeated word first.
        words.sort_by(|a, b| a.0.cmp(&b.0));
        words.dedup_by(|later, first| later.0 == first.0);
        Paths {
            lowercase: table.summary.lowercase,
            tokenize: table.summary.tokenize,
            words,
            paths,
            nfc: table.summary.nfc,
        }
    }

    /// Reads the cluster directory `dir` (its `summary.json` and
    /// `clusters.tsv`).
    pub fn read(dir: &Path) -> Result<Paths> {
        Ok(Paths::from_table(&ClusterTable::read(dir)?))
    }

    /// The path of `word`'s class, or `None` if it was not clustered.
    /// Allocates only when normalising changes `word` (or may, for
    /// lowercasing); [`Paths::path_with`] reuses a buffer instead.
    pub fn path(&self, word: &str) -> Option<&str> {
        let mut scratch = String::new();
        self.id_with(word, &mut scratch).map(|id| self.path_of_id(id))
    }

    /// [`Paths::path`], lowercasing into `scratch` when needed instead of
    /// allocating.
    pub fn path_with(&self, word: &str, scratch: &mut String) -> Option<&str> {
        self.id_with(word, scratch).map(|id| self.path_of_id(id))
    }

    /// The id of `word`'s path, lowercasing into `scratch` when needed.
    pub(crate) fn id_with(
        &self,
        word: &str,
        scratch: &mut String,
    ) -> Option<u32> {
        let key = normalize(word, self.nfc, self.lowercase, scratch);
        self.id_of(key)
    }

    fn id_of(&self, key: &str) -> Option<u32> {
        self.words
            .binary_search_by(|(w, _)| w.as_ref().cmp(key))
            .ok()
            .map(|i| self.words[i].1)
    }

    /// The path with id `id`.
    pub(crate) fn path_of_id(&self, id: u32) -> &str {
        &self.paths[id as usize]
    }

    /// Whether the clusters were learned from lowercased text, so that
    /// look-ups lowercase.
    pub fn lowercase(&self) -> bool {
        self.lowercase
    }

    /// Whether the clusters were learned from text put in NFC, so that
    /// look-ups put words in NFC.
    pub fn nfc(&self) -> bool {
        self.nfc
    }

    /// Whether the clusters were learned from raw text split by the
    /// cluster tokeniser rather than from tokens as they were.
    pub fn tokenize(&self) -> bool {
        self.tokenize
    }

    /// The number of words with a path.
    pub fn len(&self) -> usize {
        self.words.len()
    }

    /// Whether no word has a path.
    pub fn is_empty(&self) -> bool {
        self.words.is_empty()
    }

    /// The number of distinct paths (the flat classes).
    pub fn classes(&self) -> usize {
        self.paths.len()
    }
}

pub(crate) use lexiclade_cluster::normalize::{
    lowercase_into, needs_lowercasing,
};

/// The serialised form, checked before it becomes a [`Paths`].
#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawPaths {
    lowercase: bool,
    tokenize: bool,
    words: Vec<(Box<str>, u32)>,
    paths: Vec<Box<str>>,
    /// Absent in JSON from before the option: false.
    #[serde(default)]
    nfc: bool,
}

impl TryFrom<RawPaths> for Paths {
    type Error = String;

    fn try_from(raw: RawPaths) -> Result<Paths, String> {
        if let Some(pair) = raw.words.windows(2).find(|p| p[0].0 >= p[1].0) {
            return Err(format!(
                "words out of order or repeated at {:?}",
                pair[1].0
            ));
        }
        if let Some((w, id)) =
            raw.words.iter().find(|(_, id)| *id as usize >= raw.paths.len())
        {
            return Err(format!("word {w:?} has path id {id}, out of range"));
        }
        if let Some(p) = raw
            .paths
            .iter()
            .find(|p| !p.bytes().all(|b| b == b'0' || b == b'1'))
        {
            return Err(format!("path {p:?} is not made of 0s and 1s"));
        }
        Ok(Paths {
            lowercase: raw.lowercase,
            tokenize: raw.tokenize,
            words: raw.words,
            paths: raw.paths,
            nfc: raw.nfc,
        })
    }
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;
    use lexiclade_cluster::output::{Summary, WordEntry, FORMAT_VERSION};
    use rand::{Rng, SeedableRng};
    use rand_chacha::ChaCha8Rng;

    /// A cluster table of `rows` (word, path), with the given flags.
    pub(crate) fn table(
        rows: &[(&str, &str)],
        lowercase: bool,
        tokenize: bool,
    ) -> ClusterTable {
        let entries: Vec<WordEntry> = rows
            .iter()
            .enumerate()
            .map(|(i, &(word, path))| WordEntry {
                word: word.to_string(),
                path: path.to_string(),
                class: 0,
                count: (rows.len() - i) as u64,
            })
            .collect();
        ClusterTable {
            summary: Summary {
                format_version: FORMAT_VERSION,
                tokens: 100,
                sentences: 10,
                types: entries.len() as u64,
                clustered_types: entries.len() as u64,
                classes: 2,
                min_count: 1,
                lowercase,
                tokenize,
                nfc: false,
                ami_bits: 0.5,
                version: "test".to_string(),
                exchange: None,
            },
            entries,
        }
    }

    #[test]
    fn looks_up_every_word_and_nothing_else() {
        let t = table(
            &[("the", "00"), ("cat", "0110"), ("dog", "0110"), ("ran", "1")],
            false,
            true,
        );
        let p = Paths::from_table(&t);
        assert_eq!(p.len(), 4);
        assert_eq!(p.classes(), 3);
        assert!(!p.lowercase() && p.tokenize());
        assert_eq!(p.path("the"), Some("00"));
        assert_eq!(p.path("cat"), Some("0110"));
        assert_eq!(p.path("dog"), Some("0110"));
        assert_eq!(p.path("ran"), Some("1"));
        assert_eq!(p.path("The"), None);
        assert_eq!(p.path("bird"), None);
        assert_eq!(p.path(""), None);
    }

    #[test]
    fn lowercased_clusters_lowercase_the_look_up() {
        let rows = [("the", "0"), ("über", "10"), ("straße", "11")];
        let p = Paths::from_table(&table(&rows, true, false));
        let mut scratch = String::new();
        for w in ["the", "The", "THE"] {
            assert_eq!(p.path(w), Some("0"), "{w}");
            assert_eq!(p.path_with(w, &mut scratch), Some("0"), "{w}");
        }
        assert_eq!(p.path("Über"), Some("10"));
        assert_eq!(p.path("STRAßE"), Some("11"));
        // The whole word is lowercased, as the counter does: a final
        // capital sigma finds the word with ς.
        let greek = [("σοφος", "0")];
        let p = Paths::from_table(&table(&greek, true, false));
        assert_eq!(p.path("ΣΟΦΟΣ"), Some("0"));
        assert_eq!(p.path_with("ΣΟΦΟΣ", &mut scratch), Some("0"));
        let rows = [("the", "0"), ("über", "10"), ("straße", "11")];
        // Without the flag, case matters.
        let p = Paths::from_table(&table(&rows, false, false));
        assert_eq!(p.path("The"), None);
        assert_eq!(p.path_with("Über", &mut scratch), None);
    }

    #[test]
    fn nfc_clusters_put_the_look_up_in_nfc() {
        let composed = [("caf\u{e9}", "0"), ("CAF\u{c9}", "1")];
        let mut t = table(&composed, false, false);
        t.summary.nfc = true;
        let p = Paths::from_table(&t);
        assert!(p.nfc());
        let mut scratch = String::new();
        assert_eq!(p.path("cafe\u{301}"), Some("0"));
        assert_eq!(p.path_with("CAFE\u{301}", &mut scratch), Some("1"));
        // NFC then lowercasing, as the counter does.
        t.summary.lowercase = true;
        let p = Paths::from_table(&t);
        assert_eq!(p.path("CAFE\u{301}"), Some("0"));
        // Without the flag the two spellings are two words.
        let p = Paths::from_table(&table(&composed, false, false));
        assert_eq!(p.path("cafe\u{301}"), None);
        assert_eq!(p.path("caf\u{e9}"), Some("0"));
    }

    #[test]
    fn a_repeated_word_keeps_its_first_row() {
        let p = Paths::from_table(&table(
            &[("a", "0"), ("b", "10"), ("a", "11")],
            false,
            false,
        ));
        assert_eq!(p.len(), 2);
        assert_eq!(p.path("a"), Some("0"));
    }

    #[test]
    fn bad_serialised_forms_are_refused() {
        let good = r#"{"lowercase":false,"tokenize":false,
            "words":[["a",0],["b",1]],"paths":["0","1"]}"#;
        serde_json::from_str::<Paths>(good).unwrap();
        for bad in [
            good.replace("[\"a\",0],[\"b\",1]", "[\"b\",1],[\"a\",0]"),
            good.replace("[\"b\",1]", "[\"b\",2]"),
            good.replace("\"1\"]", "\"12\"]"),
            good.replace("\"tokenize\"", "\"tokenise\""),
        ] {
            assert!(serde_json::from_str::<Paths>(&bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn prop_serde_json_round_trip() {
        let mut rng = ChaCha8Rng::seed_from_u64(7);
        let alphabet: Vec<char> = "abcAZé中 \"\\\t'-_1".chars().collect();
        for _ in 0..200 {
            let n = rng.random_range(0..30);
            let classes = rng.random_range(1..6);
            let class_paths: Vec<String> = (0..classes)
                .map(|_| {
                    let len = rng.random_range(0..12);
                    (0..len)
                        .map(|_| if rng.random_bool(0.5) { '1' } else { '0' })
                        .collect()
                })
                .collect();
            let rows: Vec<(String, String)> = (0..n)
                .map(|_| {
                    let len = rng.random_range(1..6);
                    let word: String = (0..len)
                        .map(|_| alphabet[rng.random_range(0..alphabet.len())])
                        .collect();
                    let path =
                        class_paths[rng.random_range(0..classes)].clone();
                    (word, path)
                })
                .collect();
            let borrowed: Vec<(&str, &str)> =
                rows.iter().map(|(w, p)| (w.as_str(), p.as_str())).collect();
            let lowercase = rng.random_bool(0.5);
            let p = Paths::from_table(&table(&borrowed, lowercase, false));
            let json = serde_json::to_string(&p).unwrap();
            let back: Paths = serde_json::from_str(&json).unwrap();
            assert_eq!(back, p);
            for (w, _) in &rows {
                assert_eq!(back.path(w), p.path(w));
                // Every word finds the path of its first row.
                let first = rows.iter().find(|(v, _)| v == w).unwrap();
                if !lowercase {
                    assert_eq!(p.path(w), Some(first.1.as_str()));
                }
            }
        }
    }
}
