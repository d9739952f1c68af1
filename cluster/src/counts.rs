//! Counting words and within-line bigrams, and ranking the vocabulary.
//!
//! Memory grows with the number of distinct words and distinct bigrams,
//! never with the length of the text: lines are streamed through one
//! reused buffer and tokens are interned to ids as they are read.

use rustc_hash::FxHashMap;

use crate::error::{Error, Result};
use crate::normalize;
use crate::text::{split_tokens, LineReader, Source};
use crate::tokenize::tokenize;

/// How raw text is turned into tokens before counting.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct TokenOptions {
    /// Split raw text at Unicode word boundaries (see
    /// [`tokenize`]) instead of taking the
    /// tokens separated by spaces and tabs as they are. Default: off.
    pub tokenize: bool,
    /// Lowercase every token (the Unicode lowercase mapping of the whole
    /// token, final sigma included; see [`crate::normalize`]). Default:
    /// off.
    pub lowercase: bool,
    /// Put every line in Unicode normalisation form C before splitting it
    /// into tokens, so that composed and decomposed spellings of a word
    /// count as one. Default: off (they are two words).
    pub nfc: bool,
}

/// Streams text into word and bigram counts.
#[derive(Default)]
pub struct Counter {
    options: TokenOptions,
    ids: FxHashMap<Box<str>, u32>,
    words: Vec<Box<str>>,
    counts: Vec<u64>,
    bigrams: FxHashMap<u64, u64>,
    tokens: u64,
    sentences: u64,
    bytes: u64,
    /// Sums of the counts added from count files, kept below
    /// [`MAX_ADDED_TOTAL`].
    added_words: u64,
    added_bigrams: u64,
    scratch: Vec<u32>,
    lower: String,
    /// The current line in NFC, when `options.nfc` changes it.
    composed: String,
}

/// The most that the word counts, the bigram counts or a total added
/// from count files may sum to: 2^53, below which every count is exact as
/// the `f64` the clustering computes with (about 9·10^15, far beyond any
/// corpus). Larger sums are refused instead of wrapping or overflowing.
pub const MAX_ADDED_TOTAL: u64 = 1 << 53;

/// `sum + count` if it stays within [`MAX_ADDED_TOTAL`].
fn within_limit(sum: u64, count: u64) -> Option<u64> {
    sum.checked_add(count).filter(|&s| s <= MAX_ADDED_TOTAL)
}

impl Counter {
    /// A counter that tokenises as `options` say.
    pub fn new(options: TokenOptions) -> Counter {
        Counter { options, ..Counter::default() }
    }

    /// The bytes of text read so far, for progress reports.
    pub fn bytes_read(&self) -> u64 {
        self.bytes
    }

    /// Counts one line of text. A line without tokens is not a sentence.
    pub fn add_line(&mut self, line: &str) {
        self.bytes += line.len() as u64 + 1;
        if self.options.nfc && !normalize::is_nfc(line) {
            let mut composed = std::mem::take(&mut self.composed);
            normalize::nfc_into(line, &mut composed);
            self.add_tokens(&composed);
            self.composed = composed;
        } else {
            self.add_tokens(line);
        }
    }

    fn add_tokens(&mut self, line: &str) {
        let mut ids = std::mem::take(&mut self.scratch);
        ids.clear();
        if self.options.tokenize {
            let mut tokens = Vec::new();
            tokenize(line, &mut tokens);
            for token in tokens {
                ids.push(self.intern(token));
            }
        } else {
            for token in split_tokens(line) {
                ids.push(self.intern(token));
            }
        }
        if !ids.is_empty() {
            self.sentences += 1;
            self.tokens += ids.len() as u64;
            for pair in ids.windows(2) {
                let key = (u64::from(pair[0]) << 32) | u64::from(pair[1]);
                *self.bigrams.entry(key).or_insert(0) += 1;
            }
        }
        self.scratch = ids;
    }

    fn intern(&mut self, token: &str) -> u32 {
        let token =
            if self.options.lowercase && normalize::needs_lowercasing(token) {
                normalize::lowercase_into(token, &mut self.lower);
                self.lower.as_str()
            } else {
                token
            };
        let id =
            id_of(&mut self.ids, &mut self.words, &mut self.counts, token);
        self.counts[id as usize] += 1;
        id
    }

    /// The options tokens were read with.
    pub fn options(&self) -> TokenOptions {
        self.options
    }

    /// Adds `count` occurrences of `word`, taken as it is (already
    /// tokenised and lowercased as the options say): for counts read
    /// from a count file.
    ///
    /// Returns `false`, adding nothing, when the word counts added so far
    /// would sum past [`MAX_ADDED_TOTAL`].
    #[must_use]
    pub fn add_word_count(&mut self, word: &str, count: u64) -> bool {
        let Some(sum) = within_limit(self.added_words, count) else {
            return false;
        };
        self.added_words = sum;
        let id = id_of(&mut self.ids, &mut self.words, &mut self.counts, word);
        self.counts[id as usize] += count;
        true
    }

    /// Adds `count` occurrences of the bigram `(left, right)`; the words
    /// must be known, or they get a count of 0.
    ///
    /// Returns `false`, adding nothing, when the bigram counts added so
    /// far would sum past [`MAX_ADDED_TOTAL`].
    #[must_use]
    pub fn add_bigram_count(
        &mut self,
        left: &str,
        right: &str,
        count: u64,
    ) -> bool {
        let Some(sum) = within_limit(self.added_bigrams, count) else {
            return false;
        };
        self.added_bigrams = sum;
        let l = id_of(&mut self.ids, &mut self.words, &mut self.counts, left);
        let r = id_of(&mut self.ids, &mut self.words, &mut self.counts, right);
        let key = (u64::from(l) << 32) | u64::from(r);
        *self.bigrams.entry(key).or_insert(0) += count;
        true
    }

    /// The id of `word`, if it has one.
    pub(crate) fn id(&self, word: &str) -> Option<u32> {
        self.ids.get(word).copied()
    }

    /// The word with id `id`.
    pub(crate) fn word(&self, id: u32) -> &str {
        &self.words[id as usize]
    }

    /// Every word's count so far, by id.
    pub(crate) fn word_counts(&self) -> &[u64] {
        &self.counts
    }

    /// Every bigram so far, `(left id, right id, count)`, in no fixed
    /// order.
    pub(crate) fn bigram_counts(
        &self,
    ) -> impl Iterator<Item = (u32, u32, u64)> + '_ {
        self.bigrams.iter().map(|(&key, &count)| {
            ((key >> 32) as u32, (key & 0xFFFF_FFFF) as u32, count)
        })
    }

    /// The token and sentence totals so far.
    pub(crate) fn totals(&self) -> (u64, u64) {
        (self.tokens, self.sentences)
    }

    /// Adds token and sentence totals. Returns `false`, adding nothing,
    /// when either would pass [`MAX_ADDED_TOTAL`].
    #[must_use]
    pub fn add_totals(&mut self, tokens: u64, sentences: u64) -> bool {
        match (
            within_limit(self.tokens, tokens),
            within_limit(self.sentences, sentences),
        ) {
            (Some(t), Some(s)) => {
                (self.tokens, self.sentences) = (t, s);
                true
            }
            _ => false,
        }
    }

    /// Reads every line of `source`; `progress` is called now and then
    /// with the bytes read so far in all sources.
    pub fn add_source(
        &mut self,
        source: &Source,
        progress: &mut dyn FnMut(u64),
    ) -> Result<()> {
        let mut reader = LineReader::new(source.open()?, source.name());
        let mut next_report = self.bytes + (1 << 20);
        while let Some(line) = reader.next_line()? {
            self.add_line(line);
            if self.bytes >= next_report {
                progress(self.bytes);
                next_report = self.bytes + (1 << 20);
            }
        }
        progress(self.bytes);
        Ok(())
    }

    /// Ends counting: ranks the words and keeps those seen at least
    /// `min_count` times, with the bigrams between them.
    pub fn finish(self, min_count: u64) -> Counts {
        let types = self.words.len();
        let mut order: Vec<u32> = (0..types as u32).collect();
        order.sort_unstable_by(|&a, &b| {
            let (a, b) = (a as usize, b as usize);
            self.counts[b].cmp(&self.counts[a]).then_with(|| {
                self.words[a].as_bytes().cmp(self.words[b].as_bytes())
            })
        });
        let kept = order
            .iter()
            .take_while(|&&id| self.counts[id as usize] >= min_count)
            .count();
        let mut rank = vec![u32::MAX; types];
        for (r, &id) in order[..kept].iter().enumerate() {
            rank[id as usize] = r as u32;
        }
        let mut bigrams: Vec<(u32, u32, u64)> = self
            .bigrams
            .iter()
            .filter_map(|(&key, &count)| {
                let left = rank[(key >> 32) as usize];
                let right = rank[(key & 0xFFFF_FFFF) as usize];
                // A count file may list a bigram at 0: it is no bigram,
                // and every stage after this one may take counts as
                // positive.
                (left != u32::MAX && right != u32::MAX && count > 0)
                    .then_some((left, right, count))
            })
            .collect();
        bigrams.sort_unstable();
        let mut words = Vec::with_capacity(kept);
        let mut counts = Vec::with_capacity(kept);
        let mut all_words = self.words;
        for &id in &order[..kept] {
            words.push(std::mem::take(&mut all_words[id as usize]).into());
            counts.push(self.counts[id as usize]);
        }
        Counts {
            words,
            counts,
            bigrams,
            tokens: self.tokens,
            sentences: self.sentences,
            types: types as u64,
            min_count,
            options: self.options,
            bytes: self.bytes,
        }
    }
}

fn id_of(
    ids: &mut FxHashMap<Box<str>, u32>,
    words: &mut Vec<Box<str>>,
    counts: &mut Vec<u64>,
    token: &str,
) -> u32 {
    match ids.get(token) {
        Some(&id) => id,
        None => {
            let id = words.len() as u32;
            ids.insert(token.into(), id);
            words.push(token.into());
            counts.push(0);
            id
        }
    }
}

/// Word and bigram counts over a ranked vocabulary: words ordered by
/// count, descending, ties by their bytes, ascending; word ids are ranks.
#[derive(Clone, Debug, PartialEq)]
pub struct Counts {
    /// The kept words, by rank.
    pub words: Vec<String>,
    /// Each kept word's count.
    pub counts: Vec<u64>,
    /// Bigrams `(left rank, right rank, count)` between kept words,
    /// sorted, each pair once, every count at least 1.
    pub bigrams: Vec<(u32, u32, u64)>,
    /// Tokens read, before the minimum count is applied.
    pub tokens: u64,
    /// Lines with at least one token.
    pub sentences: u64,
    /// Distinct words read, before the minimum count is applied.
    pub types: u64,
    /// The minimum count that was applied.
    pub min_count: u64,
    /// How the text was tokenised.
    pub options: TokenOptions,
    /// Bytes of text read (after decompression), line ends included.
    pub bytes: u64,
}

impl Counts {
    /// Counts every line of `sources`.
    pub fn from_sources(
        sources: &[Source],
        options: TokenOptions,
        min_count: u64,
        progress: &mut dyn FnMut(u64),
    ) -> Result<Counts> {
        let mut counter = Counter::new(options);
        for source in sources {
            counter.add_source(source, progress)?;
        }
        if counter.tokens == 0 {
            let what = sources
                .iter()
                .map(|s| s.name().display().to_string())
                .collect::<Vec<_>>()
                .join(", ");
            return Err(Error::EmptyInput { what });
        }
        Ok(counter.finish(min_count))
    }

    /// Counts the lines of an in-memory text.
    pub fn from_text(
        text: &str,
        options: TokenOptions,
        min_count: u64,
    ) -> Counts {
        let mut counter = Counter::new(options);
        let text = text.strip_prefix('\u{feff}').unwrap_or(text);
        for line in text.lines() {
            counter.add_line(line);
        }
        counter.finish(min_count)
    }

    /// The number of kept words.
    pub fn len(&self) -> usize {
        self.words.len()
    }

    /// Whether no word was kept.
    pub fn is_empty(&self) -> bool {
        self.words.is_empty()
    }

    /// The total count of the kept bigrams.
    pub fn bigram_total(&self) -> u64 {
        self.bigrams.iter().map(|b| b.2).sum()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ranks_by_count_then_bytes_and_counts_within_lines() {
        let c =
            Counts::from_text("b a b\nc a\n\n  \nb", Default::default(), 1);
        assert_eq!(c.words, vec!["b", "a", "c"]);
        assert_eq!(c.counts, vec![3, 2, 1]);
        // b a, a b, c a: the line break between "a" and "b" is no bigram.
        assert_eq!(c.bigrams, vec![(0, 1, 1), (1, 0, 1), (2, 1, 1)]);
        assert_eq!((c.tokens, c.sentences, c.types), (6, 3, 3));
    }

    #[test]
    fn min_count_drops_words_and_their_bigrams() {
        let c = Counts::from_text("x y x z\ny x", Default::default(), 2);
        assert_eq!(c.words, vec!["x", "y"]);
        assert_eq!(c.bigrams, vec![(0, 1, 1), (1, 0, 2)]);
        assert_eq!(c.types, 3);
    }

    #[test]
    fn lowercase_merges_case_variants() {
        let opts = TokenOptions { lowercase: true, ..TokenOptions::default() };
        let c = Counts::from_text("The the THE Ärger ärger", opts, 1);
        assert_eq!(c.words, vec!["the", "ärger"]);
        assert_eq!(c.counts, vec![3, 2]);
    }

    #[test]
    fn lowercasing_takes_the_whole_word_final_sigma_included() {
        let opts = TokenOptions { lowercase: true, ..TokenOptions::default() };
        let c = Counts::from_text("ΣΟΦΟΣ σοφος ΣΟΦΌΣ", opts, 1);
        assert_eq!(c.words, vec!["σοφος", "σοφός"]);
        assert_eq!(c.counts, vec![2, 1]);
    }

    #[test]
    fn nfc_makes_composed_and_decomposed_spellings_one_word() {
        let text = "caf\u{e9} cafe\u{301}\ncafe\u{301}";
        let c = Counts::from_text(text, TokenOptions::default(), 1);
        assert_eq!(c.len(), 2, "without nfc they are two words");
        let opts = TokenOptions { nfc: true, ..TokenOptions::default() };
        let c = Counts::from_text(text, opts, 1);
        assert_eq!(c.words, vec!["caf\u{e9}"]);
        assert_eq!((c.counts[0], c.bigram_total()), (3, 1));
        // The bytes read are those of the text as it was.
        assert_eq!(c.bytes, text.len() as u64 + 1);
    }
}
