//! Questions asked of a cluster table read back: where a word is, which
//! words sit closest to it in the hierarchy, which words lie under a
//! path prefix, and how big each class is.
//!
//! Closeness is the length of the shared path prefix: two words whose
//! class paths agree on their first `n` bits were joined `n` levels below
//! the root. Every answer is a list of indices into
//! [`ClusterTable::entries`], so the caller reads the rows without
//! copying them. Nothing here keeps state between calls; each call scans
//! the table once.

use std::{cmp::Reverse, collections::HashMap};

use crate::output::{ClusterTable, WordEntry};

/// One flat class of a table and the words in it.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ClassGroup<'a> {
    /// The class number.
    pub class: u32,
    /// The class's path, as written for its most frequent word.
    pub path: &'a str,
    /// The indices of its words, in table order (count descending).
    pub members: Vec<usize>,
}

impl ClusterTable {
    /// The index of `word` in [`ClusterTable::entries`], or `None` if it
    /// was not clustered. A linear scan: for many look-ups build the map
    /// of [`ClusterTable::lookup`] once instead.
    pub fn find(&self, word: &str) -> Option<usize> {
        self.entries.iter().position(|e| e.word == word)
    }

    /// A map from each word to its index in [`ClusterTable::entries`],
    /// borrowing the words.
    pub fn lookup(&self) -> HashMap<&str, usize> {
        self.entries
            .iter()
            .enumerate()
            .map(|(i, e)| (e.word.as_str(), i))
            .collect()
    }

    /// The `k` words closest to the word at `word_index` in the hierarchy,
    /// the word itself excluded: first the other words of its class, then
    /// the rest by the length of the path prefix they share with it,
    /// longest first. Ties go to the higher count, then to the earlier
    /// row. Fewer than `k` come back when the table is smaller.
    ///
    /// Costs O(V·L) for V words with paths of at most L bits, plus
    /// O(k log k) to order the k chosen.
    ///
    /// # Panics
    ///
    /// If `word_index` is not an index of [`ClusterTable::entries`].
    pub fn nearest(&self, word_index: usize, k: usize) -> Vec<usize> {
        let me = &self.entries[word_index];
        // Smaller keys come first.
        let mut keyed: Vec<_> = self
            .entries
            .iter()
            .enumerate()
            .filter(|&(i, _)| i != word_index)
            .map(|(i, e)| {
                let shared = shared_prefix(&me.path, &e.path);
                (e.class != me.class, Reverse(shared), Reverse(e.count), i)
            })
            .collect();
        if k < keyed.len() {
            // Partition around the k-th key in linear time; only the
            // chosen k are then sorted.
            if k > 0 {
                keyed.select_nth_unstable(k - 1);
            }
            keyed.truncate(k);
        }
        keyed.sort_unstable();
        keyed.into_iter().map(|(.., i)| i).collect()
    }

    /// The words whose path starts with `prefix`, by count descending and
    /// then in table order. The empty prefix gives every word; a prefix
    /// that no path starts with, including one with characters other than
    /// `0` and `1`, gives none.
    pub fn under_prefix(&self, prefix: &str) -> Vec<usize> {
        let mut found: Vec<usize> = (0..self.entries.len())
            .filter(|&i| self.entries[i].path.starts_with(prefix))
            .collect();
        // Rows are already by count; the stable sort keeps it so for a
        // table that was written by hand in another order.
        found.sort_by_key(|&i| Reverse(self.entries[i].count));
        found
    }

    /// Every flat class with its words, the classes with the most words
    /// first, ties by the row of their most frequent word.
    pub fn classes(&self) -> Vec<ClassGroup<'_>> {
        let mut slot: HashMap<u32, usize> = HashMap::new();
        let mut groups: Vec<ClassGroup<'_>> = Vec::new();
        for (i, e) in self.entries.iter().enumerate() {
            let g = *slot.entry(e.class).or_insert_with(|| {
                groups.push(ClassGroup {
                    class: e.class,
                    path: &e.path,
                    members: Vec::new(),
                });
                groups.len() - 1
            });
            groups[g].members.push(i);
        }
        // Groups were opened in row order, so the stable sort breaks ties
        // by each class's first row.
        groups.sort_by_key(|g| Reverse(g.members.len()));
        groups
    }
}

impl ClusterTable {
    /// A table made in memory from `(word, path, class, count)` rows in
    /// rank order, with a summary derived from them (tokens = the sum of
    /// the counts; no sentences or AMI known). For building examples and
    /// tests without a cluster directory.
    pub fn from_rows(rows: &[(&str, &str, u32, u64)]) -> ClusterTable {
        let entries: Vec<WordEntry> = rows
            .iter()
            .map(|&(word, path, class, count)| WordEntry {
                word: word.to_string(),
                path: path.to_string(),
                class,
                count,
            })
            .collect();
        let classes =
            entries.iter().map(|e| e.class).max().map_or(0, |c| c + 1);
        ClusterTable {
            summary: crate::output::Summary {
                format_version: crate::output::FORMAT_VERSION,
                tokens: entries.iter().map(|e| e.count).sum(),
                sentences: 0,
                types: entries.len() as u64,
                clustered_types: entries.len() as u64,
                classes: u64::from(classes),
                min_count: 1,
                lowercase: false,
                tokenize: false,
                nfc: false,
                ami_bits: 0.0,
                version: String::new(),
                exchange: None,
            },
            entries,
        }
    }
}

/// The number of leading bits two paths share.
pub fn shared_prefix(a: &str, b: &str) -> usize {
    a.bytes().zip(b.bytes()).take_while(|(x, y)| x == y).count()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Eight words in four classes:
    ///
    /// ```text
    /// class 0  00   the a
    /// class 1  01   cat dog bird
    /// class 2  10   sat ran
    /// class 3  11   slowly
    /// ```
    fn table() -> ClusterTable {
        let rows = [
            ("the", "00", 0, 50),
            ("a", "00", 0, 40),
            ("sat", "10", 2, 30),
            ("cat", "01", 1, 20),
            ("slowly", "11", 3, 20),
            ("dog", "01", 1, 10),
            ("ran", "10", 2, 10),
            ("bird", "01", 1, 10),
        ];
        ClusterTable::from_rows(&rows)
    }

    fn words(t: &ClusterTable, indices: &[usize]) -> Vec<String> {
        indices.iter().map(|&i| t.entries[i].word.clone()).collect()
    }

    #[test]
    fn find_and_lookup_agree() {
        let t = table();
        assert_eq!(t.find("the"), Some(0));
        assert_eq!(t.find("bird"), Some(7));
        assert_eq!(t.find("Bird"), None);
        let map = t.lookup();
        assert_eq!(map.len(), 8);
        for (i, e) in t.entries.iter().enumerate() {
            assert_eq!(map[e.word.as_str()], i);
            assert_eq!(t.find(&e.word), Some(i));
        }
    }

    #[test]
    fn nearest_puts_class_mates_first_then_ties_by_count() {
        let t = table();
        let dog = t.find("dog").unwrap();
        // cat and bird share class 1 (count 20, then 10); the 0-side
        // (the, a) shares one bit, by count; the 1-side shares nothing, by
        // count.
        assert_eq!(
            words(&t, &t.nearest(dog, 10)),
            ["cat", "bird", "the", "a", "sat", "slowly", "ran"]
        );
        assert_eq!(words(&t, &t.nearest(dog, 3)), ["cat", "bird", "the"]);
        let slowly = t.find("slowly").unwrap();
        // sat and ran share "1"; of the rest, dog and bird tie on count
        // 10 and go by row.
        assert_eq!(
            words(&t, &t.nearest(slowly, 10)),
            ["sat", "ran", "the", "a", "cat", "dog", "bird"]
        );
        let bird = t.find("bird").unwrap();
        assert_eq!(words(&t, &t.nearest(bird, 2)), ["cat", "dog"]);
        assert!(t.nearest(bird, 0).is_empty());
    }

    #[test]
    fn nearest_never_returns_the_word_and_matches_a_full_sort() {
        let t = table();
        for i in 0..t.entries.len() {
            let all = t.nearest(i, usize::MAX);
            assert_eq!(all.len(), t.entries.len() - 1);
            assert!(!all.contains(&i));
            for k in 0..=all.len() {
                assert_eq!(t.nearest(i, k), all[..k], "word {i}, k {k}");
            }
        }
    }

    #[test]
    fn class_mates_come_first_even_when_paths_disagree() {
        // A table whose class numbers and paths disagree still lists the
        // class-mates first, as documented: "a" shares no bit with "the"
        // but comes before cat, whose path is the same as the's.
        let mut t = table();
        t.entries[0].path = "01".to_string();
        t.entries[1].path = "11".to_string();
        let the = t.find("the").unwrap();
        assert_eq!(words(&t, &t.nearest(the, 2)), ["a", "cat"]);
    }

    #[test]
    fn under_prefix_lists_by_count() {
        let t = table();
        assert_eq!(words(&t, &t.under_prefix("01")), ["cat", "dog", "bird"]);
        assert_eq!(words(&t, &t.under_prefix("1")), ["sat", "slowly", "ran"]);
        assert!(t.under_prefix("001").is_empty());
        assert!(t.under_prefix("2").is_empty());
        assert_eq!(t.under_prefix(""), (0..8).collect::<Vec<_>>());
    }

    #[test]
    fn under_prefix_sorts_a_table_out_of_order() {
        let mut t = table();
        t.entries.swap(3, 5); // dog (10) now before cat (20)
        assert_eq!(words(&t, &t.under_prefix("01")), ["cat", "dog", "bird"]);
    }

    #[test]
    fn classes_by_size_then_first_row() {
        let t = table();
        let got: Vec<_> = t
            .classes()
            .into_iter()
            .map(|g| (g.class, g.path, words(&t, &g.members)))
            .collect();
        let want = [
            (1, "01", vec!["cat", "dog", "bird"]),
            (0, "00", vec!["the", "a"]),
            (2, "10", vec!["sat", "ran"]),
            (3, "11", vec!["slowly"]),
        ];
        assert_eq!(got.len(), want.len());
        for (g, w) in got.iter().zip(&want) {
            assert_eq!((g.0, g.1), (w.0, w.1));
            assert_eq!(g.2, w.2);
        }
    }

    #[test]
    fn shared_prefix_counts_leading_bits() {
        assert_eq!(shared_prefix("0110", "0111"), 3);
        assert_eq!(shared_prefix("0110", "011"), 3);
        assert_eq!(shared_prefix("", "1"), 0);
        assert_eq!(shared_prefix("10", "01"), 0);
    }
}
