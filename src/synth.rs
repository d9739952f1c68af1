//! Seeded synthetic corpora for tests and benchmarks.
//!
//! Two generators write plain text, one sentence per line and tokens
//! separated by single spaces, straight to any [`Write`]: [`ZipfCorpus`]
//! gives a large vocabulary with a Zipfian frequency curve and some bigram
//! structure, for timing and scaling runs; [`PlantedCorpus`] samples a
//! known class bigram model, so a clustering of its text can be scored
//! against [`PlantedCorpus::truth`]. Nothing here is ever stored on disk by
//! the project: tests and benches regenerate the text from its parameters.
//!
//! # Determinism
//!
//! The same parameters give the same bytes on every platform. All
//! randomness comes from a ChaCha8 stream seeded from `seed`; integers are
//! drawn as `u64` so the width of `usize` never matters; and the only
//! floating-point operations used are the correctly rounded IEEE ones
//! (add, multiply, divide). In particular Zipf weights for an exponent
//! other than 1 come from a power function written here on those
//! operations, because the platform `powf` is not guaranteed to round the
//! same way everywhere.
//!
//! # Memory and cost
//!
//! [`ZipfCorpus`] keeps one `f64` per word type (400 kB for 50,000 types)
//! and draws each token by binary search over a cumulative table, so a
//! token costs `O(log V)`. [`PlantedCorpus`] keeps one `f64` per word of a
//! class and the successor lists of all classes. Output is gathered into a
//! 64 kB buffer, so an unbuffered writer is fine.

use std::io::{self, Write};

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

/// Size at which the line buffer is handed to the writer.
const FLUSH_AT: usize = 64 * 1024;

/// Number of preferred successors each word has in a [`ZipfCorpus`].
const ZIPF_SUCCESSORS: u64 = 8;

/// ChaCha stream that chooses the structure of a planted model.
const STRUCTURE_STREAM: u64 = 0;

/// ChaCha stream that samples the text of a planted corpus.
const TEXT_STREAM: u64 = 1;

/// A corpus whose word frequencies follow a Zipf law, with a Markov
/// component so that its bigrams carry structure for clustering to find.
///
/// Word types are identified by their Zipf rank `r` (0-based) and spelled
/// by [`ZipfCorpus::word`]. Each sentence starts with a word drawn from the
/// global Zipf distribution, where rank `r` has weight `1 / (r + 1)^s` for
/// `s` = [`exponent`](Self::exponent). Every later word is, with
/// probability one half, one of eight preferred successors of the word
/// before it, chosen uniformly; otherwise it is drawn from the global
/// distribution again. The successors of a rank are fixed by hashing the
/// seed, the rank and the successor's index into a Zipf-distributed rank,
/// so frequent words are frequent successors too; two of the eight may
/// coincide, which only makes that successor more likely.
///
/// Sentence lengths are uniform on `1..=2m - 1` for `m` =
/// [`mean_sentence_len`](Self::mean_sentence_len), which has mean `m`; the
/// last sentence is cut short so that exactly
/// [`tokens`](Self::tokens) tokens are written.
///
/// ```
/// use lexiclade::synth::ZipfCorpus;
///
/// # fn main() -> std::io::Result<()> {
/// let mut text = Vec::new();
/// ZipfCorpus::new(1000, 500, 7).write_to(&mut text)?;
/// let text = String::from_utf8(text).unwrap();
/// assert_eq!(text.split_whitespace().count(), 500);
/// # Ok(())
/// # }
/// ```
#[derive(Clone, Debug, PartialEq)]
pub struct ZipfCorpus {
    /// Number of word types that may occur, at least 1. Rare types may
    /// not appear in a short corpus.
    pub types: usize,
    /// Exact number of tokens written.
    pub tokens: u64,
    /// Zipf exponent, finite and at least 0. Default 1.0; 0 gives uniform
    /// frequencies.
    pub exponent: f64,
    /// Mean sentence length in tokens, at least 1. Default 20.
    pub mean_sentence_len: usize,
    /// Seed of every random choice.
    pub seed: u64,
}

impl ZipfCorpus {
    /// A corpus of `tokens` tokens over `types` word types, with the
    /// default exponent (1.0) and mean sentence length (20).
    pub fn new(types: usize, tokens: u64, seed: u64) -> Self {
        ZipfCorpus {
            types,
            tokens,
            exponent: 1.0,
            mean_sentence_len: 20,
            seed,
        }
    }

    /// The spelling of the word of Zipf rank `rank`: the letter `w`
    /// followed by `rank + 1` in bijective base 26 with digits `a` to `z`,
    /// so rank 0 is `wa`, rank 25 is `wz` and rank 26 is `waa`. Distinct
    /// ranks always give distinct words.
    pub fn word(&self, rank: usize) -> String {
        let mut buf = Vec::new();
        push_zipf_word(rank as u64, &mut buf);
        // Only ASCII letters were pushed.
        String::from_utf8(buf).expect("ASCII word")
    }

    /// Writes the corpus to `out`.
    ///
    /// # Errors
    ///
    /// An error of kind [`io::ErrorKind::InvalidInput`], before anything
    /// is written, if `types` or `mean_sentence_len` is 0 or `exponent` is
    /// negative or not finite; otherwise any error of `out`.
    pub fn write_to(&self, out: &mut dyn Write) -> io::Result<()> {
        self.check()?;
        let table = Cumulative::zipf(self.types, self.exponent);
        let mut rng = ChaCha8Rng::seed_from_u64(self.seed);
        let max_len = (self.mean_sentence_len as u64).saturating_mul(2) - 1;
        let mut sink = Sink::new(out);
        let mut left = self.tokens;
        while left > 0 {
            let len = rng.random_range(1..=max_len).min(left);
            let mut prev = table.sample(&mut rng);
            push_zipf_word(prev as u64, &mut sink.buf);
            for _ in 1..len {
                let next = if rng.random_bool(0.5) {
                    let k = rng.random_range(0..ZIPF_SUCCESSORS);
                    zipf_successor(&table, self.seed, prev, k)
                } else {
                    table.sample(&mut rng)
                };
                sink.buf.push(b' ');
                push_zipf_word(next as u64, &mut sink.buf);
                prev = next;
            }
            sink.end_line()?;
            left -= len;
        }
        sink.finish()
    }

    fn check(&self) -> io::Result<()> {
        if self.types == 0 {
            return Err(invalid("ZipfCorpus.types must be at least 1"));
        }
        if self.mean_sentence_len == 0 {
            return Err(invalid(
                "ZipfCorpus.mean_sentence_len must be at least 1",
            ));
        }
        if !(self.exponent.is_finite() && self.exponent >= 0.0) {
            return Err(invalid(
                "ZipfCorpus.exponent must be finite and non-negative",
            ));
        }
        Ok(())
    }
}

/// A corpus sampled from a known class bigram model, for scoring a
/// clustering against the classes that generated the text.
///
/// There are [`classes`](Self::classes) classes of
/// [`words_per_class`](Self::words_per_class) words each, spelled by
/// [`PlantedCorpus::word`]. Each class has
/// [`successors`](Self::successors) distinct preferred next classes,
/// chosen uniformly from all classes by the seed (a class may be among
/// its own successors); see [`PlantedCorpus::successor_table`]. A
/// sentence starts in a uniformly chosen class and each later class is
/// one of the preferred successors of the one before it, chosen
/// uniformly. Within its class a word is drawn Zipfian with exponent 1:
/// the word of index `i` has weight `1 / (i + 1)`.
///
/// Sentence lengths are uniform on `5..=25`; the last sentence is cut
/// short so that exactly [`tokens`](Self::tokens) tokens are written.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct PlantedCorpus {
    /// Number of classes, at least 1.
    pub classes: usize,
    /// Number of words in each class, at least 1.
    pub words_per_class: usize,
    /// Exact number of tokens written.
    pub tokens: u64,
    /// Preferred successors per class, from 1 to `classes`. Default 3.
    pub successors: usize,
    /// Seed of every random choice, both of the model and of the text.
    pub seed: u64,
}

impl PlantedCorpus {
    /// A corpus of `tokens` tokens over `classes` classes of
    /// `words_per_class` words, with the default of 3 successors.
    pub fn new(
        classes: usize,
        words_per_class: usize,
        tokens: u64,
        seed: u64,
    ) -> Self {
        PlantedCorpus { classes, words_per_class, tokens, successors: 3, seed }
    }

    /// The spelling of word `index` of class `class`: `c`, the class in
    /// decimal, `w`, the index in decimal, as in `c3w17`. Distinct pairs
    /// always give distinct words.
    pub fn word(&self, class: usize, index: usize) -> String {
        let mut buf = Vec::new();
        push_planted_word(class, index, &mut buf);
        // Only ASCII letters and digits were pushed.
        String::from_utf8(buf).expect("ASCII word")
    }

    /// Every word of the model with its planted class, class by class and
    /// by index within a class: `classes * words_per_class` pairs, each
    /// word once.
    pub fn truth(&self) -> Vec<(String, usize)> {
        let mut truth = Vec::with_capacity(
            self.classes.saturating_mul(self.words_per_class),
        );
        for class in 0..self.classes {
            for index in 0..self.words_per_class {
                truth.push((self.word(class, index), class));
            }
        }
        truth
    }

    /// The preferred successors of every class: entry `c` lists, in
    /// increasing order, the `successors` distinct classes that may follow
    /// class `c`.
    ///
    /// # Errors
    ///
    /// The same parameter errors as [`PlantedCorpus::write_to`].
    pub fn successor_table(&self) -> io::Result<Vec<Vec<usize>>> {
        self.check()?;
        let mut rng = ChaCha8Rng::seed_from_u64(self.seed);
        rng.set_stream(STRUCTURE_STREAM);
        // One partial Fisher-Yates shuffle per class. The pool need not be
        // reset between classes: a uniform partial shuffle of any
        // arrangement still draws a uniform set.
        let mut pool: Vec<usize> = (0..self.classes).collect();
        let mut table = Vec::with_capacity(self.classes);
        for _ in 0..self.classes {
            for i in 0..self.successors {
                let j = rng.random_range(i as u64..self.classes as u64);
                pool.swap(i, j as usize);
            }
            let mut row = pool[..self.successors].to_vec();
            row.sort_unstable();
            table.push(row);
        }
        Ok(table)
    }

    /// Writes the corpus to `out`.
    ///
    /// # Errors
    ///
    /// An error of kind [`io::ErrorKind::InvalidInput`], before anything
    /// is written, if `classes`, `words_per_class` or `successors` is 0 or
    /// `successors` exceeds `classes`; otherwise any error of `out`.
    pub fn write_to(&self, out: &mut dyn Write) -> io::Result<()> {
        let table = self.successor_table()?;
        let within = Cumulative::zipf(self.words_per_class, 1.0);
        let mut rng = ChaCha8Rng::seed_from_u64(self.seed);
        rng.set_stream(TEXT_STREAM);
        let mut sink = Sink::new(out);
        let mut left = self.tokens;
        while left > 0 {
            let len = rng.random_range(5..=25u64).min(left);
            let mut class = rng.random_range(0..self.classes as u64) as usize;
            push_planted_word(class, within.sample(&mut rng), &mut sink.buf);
            for _ in 1..len {
                let row = &table[class];
                class = row[rng.random_range(0..row.len() as u64) as usize];
                sink.buf.push(b' ');
                let index = within.sample(&mut rng);
                push_planted_word(class, index, &mut sink.buf);
            }
            sink.end_line()?;
            left -= len;
        }
        sink.finish()
    }

    fn check(&self) -> io::Result<()> {
        if self.classes == 0 {
            return Err(invalid("PlantedCorpus.classes must be at least 1"));
        }
        if self.words_per_class == 0 {
            return Err(invalid(
                "PlantedCorpus.words_per_class must be at least 1",
            ));
        }
        if self.successors == 0 || self.successors > self.classes {
            return Err(invalid(
                "PlantedCorpus.successors must be from 1 to classes",
            ));
        }
        Ok(())
    }
}

fn invalid(message: &'static str) -> io::Error {
    io::Error::new(io::ErrorKind::InvalidInput, message)
}

/// Gathers whole lines and hands them to the writer in large pieces.
struct Sink<'a> {
    out: &'a mut dyn Write,
    buf: Vec<u8>,
}

impl<'a> Sink<'a> {
    fn new(out: &'a mut dyn Write) -> Self {
        Sink { out, buf: Vec::with_capacity(FLUSH_AT + 1024) }
    }

    fn end_line(&mut self) -> io::Result<()> {
        self.buf.push(b'\n');
        if self.buf.len() >= FLUSH_AT {
            self.out.write_all(&self.buf)?;
            self.buf.clear();
        }
        Ok(())
    }

    fn finish(mut self) -> io::Result<()> {
        self.out.write_all(&self.buf)?;
        self.buf.clear();
        self.out.flush()
    }
}

/// A cumulative weight table sampled by binary search.
struct Cumulative {
    /// `cum[i]` is the sum of the weights of entries `0..=i`.
    cum: Vec<f64>,
    /// Largest index of positive weight: the clamp for a draw that rounds
    /// up to the total.
    last: usize,
}

impl Cumulative {
    /// Weights `1 / (i + 1)^exponent` for `i` in `0..n`, `n >= 1`.
    fn zipf(n: usize, exponent: f64) -> Self {
        let mut cum = Vec::with_capacity(n);
        let mut total = 0.0;
        for i in 0..n {
            total += 1.0 / det_pow((i + 1) as f64, exponent);
            cum.push(total);
        }
        // Entry 0 has weight 1, so the total is positive and `last` is
        // well defined; tail weights may underflow to 0 for huge
        // exponents, and those entries must never be drawn.
        let last = cum.partition_point(|&c| c < total);
        Cumulative { cum, last }
    }

    /// The entry whose interval holds `u * total`, for `u` in `[0, 1)`.
    fn index_of(&self, u: f64) -> usize {
        let target = u * self.cum[self.cum.len() - 1];
        self.cum.partition_point(|&c| c <= target).min(self.last)
    }

    fn sample(&self, rng: &mut ChaCha8Rng) -> usize {
        self.index_of(rng.random::<f64>())
    }
}

/// Successor `k` of rank `prev` in a Zipf corpus: a Zipf-distributed rank
/// fixed by the seed, `prev` and `k`.
fn zipf_successor(
    table: &Cumulative,
    seed: u64,
    prev: usize,
    k: u64,
) -> usize {
    let key = (prev as u64).wrapping_mul(ZIPF_SUCCESSORS).wrapping_add(k);
    let h = mix64(seed ^ mix64(key));
    // The top 53 bits as a uniform number in [0, 1).
    table.index_of((h >> 11) as f64 * (1.0 / (1u64 << 53) as f64))
}

/// The SplitMix64 finaliser: a fixed bijection on `u64` with good
/// avalanche.
fn mix64(mut z: u64) -> u64 {
    z = z.wrapping_add(0x9e37_79b9_7f4a_7c15);
    z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
    z ^ (z >> 31)
}

fn push_zipf_word(rank: u64, buf: &mut Vec<u8>) {
    buf.push(b'w');
    let start = buf.len();
    // Bijective base 26: no zero digit, so no two ranks share a spelling.
    let mut n = rank + 1;
    while n > 0 {
        n -= 1;
        buf.push(b'a' + (n % 26) as u8);
        n /= 26;
    }
    buf[start..].reverse();
}

fn push_planted_word(class: usize, index: usize, buf: &mut Vec<u8>) {
    buf.push(b'c');
    push_decimal(class as u64, buf);
    buf.push(b'w');
    push_decimal(index as u64, buf);
}

fn push_decimal(mut n: u64, buf: &mut Vec<u8>) {
    let start = buf.len();
    loop {
        buf.push(b'0' + (n % 10) as u8);
        n /= 10;
        if n == 0 {
            break;
        }
    }
    buf[start..].reverse();
}

/// `base^exponent` for `base >= 1`, computed with correctly rounded IEEE
/// operations only, so that it gives the same bits on every platform.
/// Exponents 0 and 1 are exact.
fn det_pow(base: f64, exponent: f64) -> f64 {
    if exponent == 0.0 {
        1.0
    } else if exponent == 1.0 {
        base
    } else {
        det_exp(exponent * det_ln(base))
    }
}

/// Natural logarithm of a positive normal `x`.
fn det_ln(x: f64) -> f64 {
    use std::f64::consts::{LN_2, SQRT_2};
    // x = m * 2^e with m in [1, 2), then moved to [sqrt(1/2), sqrt(2)].
    let bits = x.to_bits();
    let mut e = ((bits >> 52) & 0x7ff) as i64 - 1023;
    let mut m = f64::from_bits((bits & ((1u64 << 52) - 1)) | (1023u64 << 52));
    if m > SQRT_2 {
        m *= 0.5;
        e += 1;
    }
    // ln m = 2 atanh t with |t| <= 0.172, so t^2 <= 0.03 and 24 terms of
    // the series are far below one ulp.
    let t = (m - 1.0) / (m + 1.0);
    let t2 = t * t;
    let mut power = t;
    let mut series = 0.0;
    let mut odd = 1.0;
    for _ in 0..24 {
        series += power / odd;
        power *= t2;
        odd += 2.0;
    }
    e as f64 * LN_2 + 2.0 * series
}

/// `e^y`, with underflow to 0 and overflow to infinity.
fn det_exp(y: f64) -> f64 {
    use std::f64::consts::LN_2;
    if y < -746.0 {
        return 0.0;
    }
    if y > 710.0 {
        return f64::INFINITY;
    }
    // y = k ln 2 + r with |r| <= 0.35; 22 Taylor terms of e^r then reach
    // below one ulp.
    let k = (y / LN_2).round();
    let r = y - k * LN_2;
    let mut term = 1.0;
    let mut sum = 1.0;
    for i in 1..=22 {
        term *= r / i as f64;
        sum += term;
    }
    // Scale by 2^k in steps that stay normal, so that only the final
    // multiplication can round (into the subnormals).
    let mut k = k as i64;
    while k != 0 {
        let step = k.clamp(-1000, 1000);
        sum *= f64::from_bits(((step + 1023) as u64) << 52);
        k -= step;
    }
    sum
}

#[cfg(test)]
mod tests {
    use std::collections::{BTreeMap, BTreeSet};

    use super::*;

    fn zipf_text(corpus: &ZipfCorpus) -> String {
        let mut out = Vec::new();
        corpus.write_to(&mut out).unwrap();
        String::from_utf8(out).unwrap()
    }

    fn planted_text(corpus: &PlantedCorpus) -> String {
        let mut out = Vec::new();
        corpus.write_to(&mut out).unwrap();
        String::from_utf8(out).unwrap()
    }

    /// Checks the line format and returns the tokens of every line.
    fn lines(text: &str) -> Vec<Vec<&str>> {
        assert!(text.is_empty() || text.ends_with('\n'));
        text.lines()
            .map(|line| {
                let words: Vec<&str> = line.split(' ').collect();
                assert!(words.iter().all(|w| !w.is_empty()), "{line:?}");
                words
            })
            .collect()
    }

    #[test]
    fn zipf_is_deterministic() {
        let a = zipf_text(&ZipfCorpus::new(300, 2000, 11));
        let b = zipf_text(&ZipfCorpus::new(300, 2000, 11));
        let c = zipf_text(&ZipfCorpus::new(300, 2000, 12));
        assert_eq!(a, b);
        assert_ne!(a, c);
        let mut skewed = ZipfCorpus::new(300, 2000, 11);
        skewed.exponent = 1.3;
        assert_eq!(zipf_text(&skewed), zipf_text(&skewed));
        assert_ne!(zipf_text(&skewed), a);
    }

    #[test]
    fn zipf_writes_exact_token_count() {
        for (types, tokens, mean) in
            [(1, 0, 20), (1, 1, 20), (5, 7, 3), (300, 5000, 20), (40, 999, 1)]
        {
            let mut corpus = ZipfCorpus::new(types, tokens, 3);
            corpus.mean_sentence_len = mean;
            let text = zipf_text(&corpus);
            let count: usize = lines(&text).iter().map(Vec::len).sum();
            assert_eq!(count as u64, tokens, "{corpus:?}");
        }
    }

    #[test]
    fn zipf_line_lengths() {
        let mut corpus = ZipfCorpus::new(50, 300, 5);
        corpus.mean_sentence_len = 1;
        assert_eq!(lines(&zipf_text(&corpus)).len(), 300);

        let corpus = ZipfCorpus::new(200, 10_000, 5);
        let text = zipf_text(&corpus);
        let lines = lines(&text);
        // Lengths are uniform on 1..=39, mean 20: about 500 lines.
        assert!((450..=550).contains(&lines.len()), "{}", lines.len());
        assert!(lines.iter().all(|l| (1..=39).contains(&l.len())));
        let longest = lines.iter().map(Vec::len).max().unwrap();
        assert!(longest >= 35, "{longest}");
    }

    #[test]
    fn zipf_words_are_unique_per_rank() {
        let corpus = ZipfCorpus::new(10, 0, 0);
        assert_eq!(corpus.word(0), "wa");
        assert_eq!(corpus.word(25), "wz");
        assert_eq!(corpus.word(26), "waa");
        assert_eq!(corpus.word(701), "wzz");
        assert_eq!(corpus.word(702), "waaa");
        let words: BTreeSet<String> =
            (0..100_000).map(|r| corpus.word(r)).collect();
        assert_eq!(words.len(), 100_000);
    }

    #[test]
    fn zipf_uses_only_its_types_and_is_skewed() {
        let corpus = ZipfCorpus::new(100, 20_000, 9);
        let rank: BTreeMap<String, usize> =
            (0..100).map(|r| (corpus.word(r), r)).collect();
        let mut freq = [0u32; 100];
        for word in zipf_text(&corpus).split_whitespace() {
            freq[rank[word]] += 1;
        }
        // Weight of rank 0 over ranks 90..100 is about 10 to 1.
        let tail: u32 = freq[90..].iter().sum();
        assert!(freq[0] > 4 * tail, "{} vs {tail}", freq[0]);
        assert!(freq[0] > freq[1] && freq[1] > freq[9]);
    }

    #[test]
    fn zipf_bigrams_follow_successor_sets() {
        let corpus = ZipfCorpus::new(2000, 20_000, 4);
        let table = Cumulative::zipf(corpus.types, corpus.exponent);
        let total = table.cum[corpus.types - 1];
        let weight = |r: usize| {
            if r == 0 {
                table.cum[0]
            } else {
                table.cum[r] - table.cum[r - 1]
            }
        };
        let rank: BTreeMap<String, usize> =
            (0..corpus.types).map(|r| (corpus.word(r), r)).collect();
        let (mut hits, mut expected, mut bigrams) = (0.0, 0.0, 0.0);
        for line in lines(&zipf_text(&corpus)) {
            for pair in line.windows(2) {
                let (prev, next) = (rank[pair[0]], rank[pair[1]]);
                let set: BTreeSet<usize> = (0..ZIPF_SUCCESSORS)
                    .map(|k| zipf_successor(&table, corpus.seed, prev, k))
                    .collect();
                let mass: f64 = set.iter().map(|&r| weight(r)).sum();
                bigrams += 1.0;
                // Half the bigrams come from the successor set; a global
                // draw lands in it with the set's Zipf mass.
                expected += 0.5 + 0.5 * mass / total;
                if set.contains(&next) {
                    hits += 1.0;
                }
            }
        }
        let (share, want) = (hits / bigrams, expected / bigrams);
        assert!(want > 0.55, "{want}");
        assert!((share - want).abs() < 0.015, "{share} vs {want}");
    }

    #[test]
    fn zipf_rejects_bad_parameters() {
        let good = ZipfCorpus::new(10, 10, 1);
        let mut bad = vec![
            ZipfCorpus { types: 0, ..good.clone() },
            ZipfCorpus { mean_sentence_len: 0, ..good.clone() },
        ];
        for exponent in [-0.5, f64::NAN, f64::INFINITY] {
            bad.push(ZipfCorpus { exponent, ..good.clone() });
        }
        for corpus in bad {
            let mut out = Vec::new();
            let err = corpus.write_to(&mut out).unwrap_err();
            assert_eq!(err.kind(), io::ErrorKind::InvalidInput);
            assert!(out.is_empty());
        }
    }

    #[test]
    fn zipf_output_spans_many_flushes() {
        // Over 64 kB, so the buffer is handed over several times.
        let corpus = ZipfCorpus::new(5000, 40_000, 2);
        let text = zipf_text(&corpus);
        assert!(text.len() > 2 * FLUSH_AT, "{}", text.len());
        assert_eq!(text.split_whitespace().count(), 40_000);
    }

    #[test]
    fn planted_is_deterministic() {
        let a = planted_text(&PlantedCorpus::new(6, 10, 3000, 21));
        let b = planted_text(&PlantedCorpus::new(6, 10, 3000, 21));
        let c = planted_text(&PlantedCorpus::new(6, 10, 3000, 22));
        assert_eq!(a, b);
        assert_ne!(a, c);
    }

    #[test]
    fn planted_writes_exact_token_count() {
        for tokens in [0, 1, 4, 5, 26, 3001] {
            let corpus = PlantedCorpus::new(4, 5, tokens, 8);
            let text = planted_text(&corpus);
            let lines = lines(&text);
            let count: usize = lines.iter().map(Vec::len).sum();
            assert_eq!(count as u64, tokens);
            // Every line but the last has 5 to 25 tokens.
            if let Some((last, full)) = lines.split_last() {
                assert!(full.iter().all(|l| (5..=25).contains(&l.len())));
                assert!((1..=25).contains(&last.len()));
            }
        }
    }

    #[test]
    fn planted_words_and_truth() {
        let corpus = PlantedCorpus::new(7, 20, 0, 1);
        assert_eq!(corpus.word(3, 17), "c3w17");
        assert_eq!(corpus.word(0, 0), "c0w0");
        let truth = corpus.truth();
        assert_eq!(truth.len(), 140);
        assert_eq!(truth[0], ("c0w0".to_string(), 0));
        assert_eq!(truth[139], ("c6w19".to_string(), 6));
        let words: BTreeSet<&str> = truth.iter().map(|(w, _)| &**w).collect();
        assert_eq!(words.len(), 140);
        for class in 0..7 {
            assert_eq!(truth.iter().filter(|(_, c)| *c == class).count(), 20);
        }
        // Spellings stay distinct where digits could run together.
        assert_ne!(corpus.word(1, 11), corpus.word(11, 1));
    }

    #[test]
    fn planted_successor_table_is_well_formed() {
        let corpus =
            PlantedCorpus { successors: 4, ..PlantedCorpus::new(9, 2, 0, 5) };
        let table = corpus.successor_table().unwrap();
        assert_eq!(table.len(), 9);
        for row in &table {
            assert_eq!(row.len(), 4);
            assert!(row.windows(2).all(|p| p[0] < p[1]));
            assert!(row.iter().all(|&c| c < 9));
        }
        assert_eq!(table, corpus.successor_table().unwrap());
        let other = PlantedCorpus { seed: 6, ..corpus.clone() };
        assert_ne!(table, other.successor_table().unwrap());
        // With as many successors as classes every class follows every one.
        let full = PlantedCorpus { successors: 9, ..corpus };
        assert!(full
            .successor_table()
            .unwrap()
            .iter()
            .all(|row| *row == (0..9).collect::<Vec<_>>()));
    }

    #[test]
    fn planted_bigrams_follow_preferred_successors() {
        let corpus = PlantedCorpus::new(8, 12, 6000, 13);
        let table = corpus.successor_table().unwrap();
        let class: BTreeMap<String, usize> =
            corpus.truth().into_iter().collect();
        let mut seen = BTreeSet::new();
        for line in lines(&planted_text(&corpus)) {
            for pair in line.windows(2) {
                let (a, b) = (class[pair[0]], class[pair[1]]);
                assert!(table[a].contains(&b), "{} {}", pair[0], pair[1]);
                seen.insert((a, b));
            }
        }
        // Every preferred transition shows up in 6000 tokens.
        assert_eq!(seen.len(), 8 * 3);
    }

    #[test]
    fn planted_words_within_a_class_are_skewed() {
        let corpus = PlantedCorpus::new(3, 10, 8000, 3);
        let text = planted_text(&corpus);
        let count =
            |w: &str| text.split_whitespace().filter(|t| *t == w).count();
        // Weights 1 and 1/10 within class 0.
        assert!(count("c0w0") > 5 * count("c0w9"));
    }

    #[test]
    fn planted_rejects_bad_parameters() {
        let good = PlantedCorpus::new(3, 4, 10, 1);
        let bad = [
            PlantedCorpus { classes: 0, ..good.clone() },
            PlantedCorpus { words_per_class: 0, ..good.clone() },
            PlantedCorpus { successors: 0, ..good.clone() },
            PlantedCorpus { successors: 4, ..good.clone() },
        ];
        for corpus in bad {
            let mut out = Vec::new();
            let err = corpus.write_to(&mut out).unwrap_err();
            assert_eq!(err.kind(), io::ErrorKind::InvalidInput);
            assert!(out.is_empty());
            assert!(corpus.successor_table().is_err());
        }
    }

    #[test]
    fn det_pow_matches_the_platform_closely() {
        assert_eq!(det_pow(7.0, 1.0), 7.0);
        assert_eq!(det_pow(7.0, 0.0), 1.0);
        assert_eq!(det_pow(1.0, 2.5), 1.0);
        for base in [1.0, 2.0, 3.0, 10.0, 99.0, 12345.0, 1e9, 9.0e15] {
            for exponent in [0.25, 0.5, 0.9, 1.1, 1.5, 2.0, 3.7] {
                let got = det_pow(base, exponent);
                let want = f64::powf(base, exponent);
                let error = ((got - want) / want).abs();
                assert!(error < 1e-13, "{base}^{exponent}: {got} vs {want}");
            }
        }
        assert_eq!(det_exp(-800.0), 0.0);
        assert_eq!(det_exp(800.0), f64::INFINITY);
        let tiny = det_exp(-740.0);
        assert!(tiny > 0.0 && ((tiny - f64::exp(-740.0)) / tiny).abs() < 1e-9);
    }

    #[test]
    fn cumulative_never_draws_zero_weight_entries() {
        let table = Cumulative::zipf(50, 700.0);
        assert_eq!(table.index_of(0.0), 0);
        assert_eq!(table.index_of(0.999_999_999), table.last);
        assert!(table.last < 49);
    }

    #[test]
    fn corpora_are_send_and_sync() {
        fn assert_send_sync<T: Send + Sync>() {}
        assert_send_sync::<ZipfCorpus>();
        assert_send_sync::<PlantedCorpus>();
    }
}
