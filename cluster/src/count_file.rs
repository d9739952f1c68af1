//! Count files: word and within-line bigram counts as an interchange, so
//! that a corpus can be counted where it lives (in shards, by any engine)
//! and only the counts travel to the machine that clusters them.
//!
//! # Format
//!
//! Plain, unquoted, tab-separated text, UTF-8, one record per line, with
//! the header line `kind first second count` (tab-separated). Each record has exactly four
//! fields:
//!
//! | `kind` | `first` | `second` | `count` |
//! |---|---|---|---|
//! | `meta` | `format_version` | `1` | empty |
//! | `meta` | `tokenize` | `true` or `false` | empty |
//! | `meta` | `lowercase` | `true` or `false` | empty |
//! | `meta` | `nfc` | `true` or `false` | empty |
//! | `total` | `tokens` or `sentences` | empty | the total |
//! | `word` | the word | empty | its count |
//! | `bigram` | the left word | the right word | its count |
//!
//! `lexiclade count` writes the four `meta` records first, then the
//! totals, the words (most frequent first) and the bigrams, unfiltered,
//! and last `meta records N` (tab-separated) with the number of `word` and `bigram`
//! records, so that a file cut short is noticed: a file with a
//! `format_version` record must end with it.
//! Every record but the words of the bigrams is optional in a file
//! written by another engine (the plain form): without `meta` records a
//! file counts as format 1 with `tokenize`, `lowercase` and `nfc` false; when no
//! file has a total, `tokens` is the sum of the word counts and
//! `sentences` the tokens minus the bigrams. Several records for one word
//! or bigram add up, and so do several files. Words cannot contain tabs or
//! line breaks (tokens are split at spaces and tabs, lines at `\n`).
//!
//! # Consistency
//!
//! The sums over all files must be counts some text could give, or they
//! are refused naming a file and line: every bigram's words have a `word`
//! record and a count above 0; a bigram's count is at most either word's;
//! the bigrams with a word on the left (and those with it on the right)
//! add up to at most its count; `total tokens` is the sum of the word
//! counts and `total sentences` the tokens minus the bigrams. The checks
//! run after summing, so shards may split words and bigrams between
//! files; see [`read_all`] for which record a fault names.

use std::io::{BufRead, BufReader, Write};
use std::path::Path;

use crate::counts::{Counter, Counts, TokenOptions};
use crate::error::{Error, Result};

/// The version of the count-file format.
pub const FORMAT_VERSION: u32 = 1;

/// The header line.
pub const HEADER: &str = "kind\tfirst\tsecond\tcount";

/// Writes `counts` (which should be unfiltered: minimum count 1) as a
/// count file.
pub fn write(counts: &Counts, out: &mut dyn Write) -> std::io::Result<()> {
    writeln!(out, "{HEADER}")?;
    writeln!(out, "meta\tformat_version\t{FORMAT_VERSION}\t")?;
    writeln!(out, "meta\ttokenize\t{}\t", counts.options.tokenize)?;
    writeln!(out, "meta\tlowercase\t{}\t", counts.options.lowercase)?;
    writeln!(out, "meta\tnfc\t{}\t", counts.options.nfc)?;
    writeln!(out, "total\ttokens\t\t{}", counts.tokens)?;
    writeln!(out, "total\tsentences\t\t{}", counts.sentences)?;
    for (word, count) in counts.words.iter().zip(&counts.counts) {
        writeln!(out, "word\t{word}\t\t{count}")?;
    }
    for &(l, r, c) in &counts.bigrams {
        let (l, r) = (&counts.words[l as usize], &counts.words[r as usize]);
        writeln!(out, "bigram\t{l}\t{r}\t{c}")?;
    }
    let records = counts.words.len() + counts.bigrams.len();
    writeln!(out, "meta\trecords\t{records}\t")
}

/// Reads count files and sums them into one counter. Files whose
/// tokenising or lowercasing flags differ are refused, and so are sums
/// that no text could give, naming a record: a faulty bigram's first
/// record with a positive count; for a word whose bigrams add up past its
/// count, its last `word` record; for a total, its last record, in the
/// last file that has one (a sum over files belongs to no one record).
pub fn read_all(paths: &[&Path]) -> Result<Counter> {
    let mut counter: Option<Counter> = None;
    let mut first: Option<&Path> = None;
    let mut given = Given::default();
    for &path in paths {
        let file =
            std::fs::File::open(path).map_err(|e| Error::io(path, e))?;
        let options =
            read_into(path, BufReader::new(file), &mut counter, &mut given)?;
        match first {
            None => first = Some(path),
            Some(f) => {
                let had = counter.as_ref().map(Counter::options);
                if had != Some(options) {
                    return Err(Error::malformed(
                        path,
                        None,
                        format!(
                            "counted with other flags than {} ({})",
                            f.display(),
                            describe(options)
                        ),
                    ));
                }
            }
        }
    }
    let mut counter = counter
        .ok_or_else(|| Error::EmptyInput { what: "no count files".into() })?;
    if let Err(fault) = check(&counter, &given) {
        let (path, line) = locate(paths, &fault.record)?;
        return Err(Error::malformed(path, line, fault.reason));
    }
    fill_totals(&mut counter, &given);
    Ok(counter)
}

/// What the files read so far gave besides counts: which words have a
/// `word` record (by id) and whether any file has each total.
#[derive(Debug, Default)]
struct Given {
    listed: Vec<bool>,
    tokens: bool,
    sentences: bool,
}

/// A record, to be found again in the files for an error message.
#[derive(Clone, Debug, PartialEq, Eq)]
enum Record {
    /// The last `word` record of this word.
    Word(String),
    /// The first `bigram` record of this pair with a positive count.
    Bigram(String, String),
    /// The last `total` record of this kind.
    Total(&'static str),
}

/// A sum no text gives, and the record to name.
#[derive(Debug)]
struct Fault {
    record: Record,
    reason: String,
}

/// Checks the summed counts of all files against what text gives, in
/// this order (the first fault is reported):
///
/// 1. every word of a bigram has a `word` record;
/// 2. a word of count 0 is in no bigram;
/// 3. no bigram's count is above the count of either of its words;
/// 4. for every word w, the bigrams with w on the left add up to at most
///    count(w), and so do those with w on the right: each bigram is two
///    adjacent tokens of one line, so w's occurrences cover them (a line's
///    last token starts no bigram, its first ends none);
/// 5. `total tokens`, when some file has it, equals the sum of the word
///    counts: every token is an occurrence of a word;
/// 6. `total sentences`, when some file has it, equals the tokens minus
///    the bigrams: a line of n tokens has n − 1 bigrams.
///
/// Faults of a bigram name its first record with a positive count; those
/// of a word's sums name its last `word` record; those of a total name
/// the last record of that total, in the last file that has one (a sum
/// over several files belongs to no one record). Bigram records of count
/// 0 count for nothing. Among several faulty bigrams or words the one
/// named is the first by the words' bytes, so the message does not
/// depend on hash order.
fn check(counter: &Counter, given: &Given) -> std::result::Result<(), Fault> {
    let counts = counter.word_counts();
    let word = |id: u32| counter.word(id).to_string();
    let bigram = |l: u32, r: u32| Record::Bigram(word(l), word(r));
    let listed = |id: u32| given.listed.get(id as usize) == Some(&true);
    let mut left = vec![0u64; counts.len()];
    let mut right = vec![0u64; counts.len()];
    // The faulty bigram with the smallest words, with its fault's rank
    // (1 to 3) so that an earlier kind wins.
    let mut worst: Option<(u8, &str, &str, String)> = None;
    for (l, r, c) in counter.bigram_counts() {
        if c == 0 {
            continue;
        }
        left[l as usize] += c;
        right[r as usize] += c;
        let (cl, cr) = (counts[l as usize], counts[r as usize]);
        let fault = if let Some(w) = [l, r].into_iter().find(|&w| !listed(w)) {
            Some((
                1,
                format!("bigram of {:?}, which has no word record", word(w)),
            ))
        } else if let Some(w) =
            [l, r].into_iter().find(|&w| counts[w as usize] == 0)
        {
            Some((
                2,
                format!("bigram of {:?}, whose word count is 0", word(w)),
            ))
        } else if c > cl.min(cr) {
            let w = if c > cl { l } else { r };
            Some((
                3,
                format!(
                    "bigram count {c} is above the count of {:?} ({})",
                    word(w),
                    counts[w as usize]
                ),
            ))
        } else {
            None
        };
        if let Some((rank, reason)) = fault {
            let key = (rank, counter.word(l), counter.word(r));
            if worst.as_ref().is_none_or(|w| key < (w.0, w.1, w.2)) {
                worst = Some((rank, key.1, key.2, reason));
            }
        }
    }
    if let Some((_, l, r, reason)) = worst {
        let (l, r) =
            (counter.id(l).expect("a word"), counter.id(r).expect("a word"));
        return Err(Fault { record: bigram(l, r), reason });
    }
    let mut sums: Option<(&str, String)> = None;
    for (id, &count) in counts.iter().enumerate() {
        let (id, w) = (id as u32, counter.word(id as u32));
        for (side, sum) in
            [("left", left[id as usize]), ("right", right[id as usize])]
        {
            if sum > count && sums.as_ref().is_none_or(|s| w < s.0) {
                sums = Some((
                    w,
                    format!(
                        "word {w:?} has count {count}, but the bigrams with it \
                         on the {side} add up to {sum}"
                    ),
                ));
            }
        }
    }
    if let Some((w, reason)) = sums {
        return Err(Fault { record: Record::Word(w.to_string()), reason });
    }
    let words: u64 = counts.iter().sum();
    let bigrams: u64 = left.iter().sum();
    let (tokens, sentences) = counter.totals();
    if given.tokens && tokens != words {
        return Err(Fault {
            record: Record::Total("tokens"),
            reason: format!(
                "total tokens {tokens} (summed over the files) is not the sum \
                 of the word counts ({words})"
            ),
        });
    }
    let tokens = if given.tokens { tokens } else { words };
    if given.sentences && tokens.checked_sub(sentences) != Some(bigrams) {
        return Err(Fault {
            record: Record::Total("sentences"),
            reason: format!(
                "total sentences {sentences} (summed over the files) does not \
                 fit {tokens} tokens with {bigrams} within-line bigrams \
                 (a line of n tokens has n - 1 bigrams, so {} sentences)",
                tokens - bigrams
            ),
        });
    }
    Ok(())
}

/// Fills the totals no file gave from the counts: the tokens are the sum
/// of the word counts, the sentences the tokens minus the bigrams.
fn fill_totals(counter: &mut Counter, given: &Given) {
    let words: u64 = counter.word_counts().iter().sum();
    let bigrams: u64 = counter.bigram_counts().map(|b| b.2).sum();
    // Within the exact range: both sums were checked when added.
    if !given.tokens {
        let added = counter.add_totals(words, 0);
        debug_assert!(added);
    }
    if !given.sentences {
        let tokens = counter.totals().0;
        let added = counter.add_totals(0, tokens.saturating_sub(bigrams));
        debug_assert!(added);
    }
}

/// Finds `record` in the files again (they were read whole once, so
/// they parse): the file and line to name; the last file without a line
/// if it is not there.
fn locate<'a>(
    paths: &[&'a Path],
    record: &Record,
) -> Result<(&'a Path, Option<u64>)> {
    let mut found: Option<(&Path, u64)> = None;
    for &path in paths {
        let file =
            std::fs::File::open(path).map_err(|e| Error::io(path, e))?;
        for (index, line) in BufReader::new(file).split(b'\n').enumerate() {
            let line = line.map_err(|e| Error::io(path, e))?;
            let line = line.strip_suffix(b"\r").unwrap_or(&line);
            let Ok(line) = std::str::from_utf8(line) else { continue };
            let fields: Vec<&str> = line.split('\t').collect();
            let [kind, first, second, count] = fields[..] else { continue };
            let hit = match record {
                Record::Word(w) => kind == "word" && first == w,
                Record::Bigram(l, r) => {
                    kind == "bigram"
                        && first == l
                        && second == r
                        && count.parse::<u64>().is_ok_and(|c| c > 0)
                }
                Record::Total(t) => kind == "total" && first == *t,
            };
            if hit {
                found = Some((path, index as u64 + 1));
                if matches!(record, Record::Bigram(..)) {
                    return Ok((path, found.map(|f| f.1)));
                }
            }
        }
    }
    Ok(match found {
        Some((path, line)) => (path, Some(line)),
        None => (paths.last().copied().unwrap_or(Path::new("-")), None),
    })
}

fn describe(o: TokenOptions) -> String {
    format!(
        "tokenize {}, lowercase {}, nfc {}",
        o.tokenize, o.lowercase, o.nfc
    )
}

/// Reads one count file into `counter` (created with the file's flags
/// when `None`); returns the file's flags.
fn read_into(
    path: &Path,
    reader: impl BufRead,
    counter: &mut Option<Counter>,
    given: &mut Given,
) -> Result<TokenOptions> {
    let mut options = TokenOptions::default();
    let mut records = Vec::new();
    let mut seen_header = false;
    let mut versioned = false;
    // The `records` trailer: its line and the count it claims.
    let mut trailer: Option<(u64, usize)> = None;
    for (index, line) in reader.split(b'\n').enumerate() {
        let number = index as u64 + 1;
        let line = line.map_err(|e| Error::io(path, e))?;
        let line = line.strip_suffix(b"\r").unwrap_or(&line);
        let line = std::str::from_utf8(line).map_err(|_| {
            Error::InvalidUtf8 { path: path.into(), line: number }
        })?;
        let line = if number == 1 {
            line.strip_prefix('\u{feff}').unwrap_or(line)
        } else {
            line
        };
        if !seen_header {
            if line != HEADER {
                return Err(Error::malformed(
                    path,
                    Some(number),
                    format!("expected the header {HEADER:?}"),
                ));
            }
            seen_header = true;
            continue;
        }
        if line.is_empty() {
            continue;
        }
        let bad = |reason: &str| {
            Error::malformed(path, Some(number), reason.to_string())
        };
        if trailer.is_some() {
            return Err(bad("a record after the records trailer"));
        }
        let fields: Vec<&str> = line.split('\t').collect();
        let [kind, first, second, count] = fields[..] else {
            return Err(bad(
                "expected 4 tab-separated fields: kind, first, second, count",
            ));
        };
        let number_of = |s: &str| {
            s.parse::<u64>()
                .map_err(|_| bad("the count is not a whole number"))
        };
        match kind {
            "meta" => {
                let flag = |v: &str| match v {
                    "true" => Ok(true),
                    "false" => Ok(false),
                    _ => Err(bad("a flag must be true or false")),
                };
                match first {
                    "records" => {
                        let n = second
                            .parse()
                            .map_err(|_| bad("bad records count"))?;
                        trailer = Some((number, n));
                    }
                    "format_version" => {
                        versioned = true;
                        let got: u32 = second
                            .parse()
                            .map_err(|_| bad("bad format_version"))?;
                        if got != FORMAT_VERSION {
                            return Err(Error::Version {
                                path: path.into(),
                                expected: FORMAT_VERSION,
                                got,
                            });
                        }
                    }
                    "tokenize" => options.tokenize = flag(second)?,
                    "lowercase" => options.lowercase = flag(second)?,
                    "nfc" => options.nfc = flag(second)?,
                    _ => return Err(bad("unknown meta record")),
                }
            }
            "total" | "word" | "bigram" => {
                if first.is_empty() {
                    return Err(bad("the first field is empty"));
                }
                records.push((
                    kind.as_bytes()[0],
                    first.to_string(),
                    second.to_string(),
                    number_of(count)?,
                    number,
                ));
            }
            _ => return Err(bad("kind must be meta, total, word or bigram")),
        }
    }
    if !seen_header {
        return Err(Error::malformed(
            path,
            None,
            "empty file, expected a header",
        ));
    }
    let listed = records.iter().filter(|r| r.0 != b't').count();
    match trailer {
        Some((line, n)) if n != listed => {
            return Err(Error::malformed(
                path,
                Some(line),
                format!("the file says {n} records, but it holds {listed}"),
            ))
        }
        None if versioned => {
            return Err(Error::malformed(
                path,
                None,
                "truncated count file (no records trailer at the end)",
            ))
        }
        _ => {}
    }
    let counter = counter.get_or_insert_with(|| Counter::new(options));
    if counter.options() != options {
        // Reported by the caller, which knows the other file's name.
        return Ok(options);
    }
    for (kind, first, second, count, line) in records {
        let added = match kind {
            b't' => match first.as_str() {
                "tokens" => {
                    given.tokens = true;
                    counter.add_totals(count, 0)
                }
                "sentences" => {
                    given.sentences = true;
                    counter.add_totals(0, count)
                }
                _ => {
                    return Err(Error::malformed(
                        path,
                        Some(line),
                        format!("unknown total {first:?}"),
                    ))
                }
            },
            b'w' => {
                let added = counter.add_word_count(&first, count);
                if let Some(id) = counter.id(&first) {
                    let id = id as usize;
                    if given.listed.len() <= id {
                        given.listed.resize(id + 1, false);
                    }
                    given.listed[id] = true;
                }
                added
            }
            _ => counter.add_bigram_count(&first, &second, count),
        };
        if !added {
            return Err(Error::malformed(
                path,
                Some(line),
                "the counts add up past 2^53, more than this build can \
                 cluster exactly",
            ));
        }
    }
    Ok(options)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn round_trip(text: &str, opts: TokenOptions) -> (Counts, Counts) {
        let counts = Counts::from_text(text, opts, 1);
        let mut bytes = Vec::new();
        write(&counts, &mut bytes).unwrap();
        let mut counter = None;
        read_into(
            Path::new("c"),
            &bytes[..],
            &mut counter,
            &mut Given::default(),
        )
        .unwrap();
        (counts, counter.unwrap().finish(1))
    }

    #[test]
    fn write_then_read_gives_the_same_counts() {
        let (a, mut b) = round_trip(
            "the cat sat\nthe dog sat\n\na cat\n",
            TokenOptions::default(),
        );
        // Bytes of text read is the one thing a count file cannot know.
        b.bytes = a.bytes;
        assert_eq!(a, b);
        let opts = TokenOptions { tokenize: true, lowercase: true, nfc: true };
        let (a, b) = round_trip("Hi there, @ann!\nhi", opts);
        assert_eq!(a.words, b.words);
        assert_eq!(b.options, opts);
        let nfc = TokenOptions { nfc: true, ..TokenOptions::default() };
        let (_, b) = round_trip("cafe\u{301}", nfc);
        assert_eq!((b.options, b.words), (nfc, vec!["caf\u{e9}".to_string()]));
    }

    #[test]
    fn the_plain_form_needs_only_the_header() {
        let text = "kind\tfirst\tsecond\tcount\nword\ta\t\t3\nword\tb\t\t1\nbigram\ta\tb\t1\n\
                    bigram\ta\ta\t1\nword\ta\t\t1\n";
        let mut counter = None;
        read_into(
            Path::new("p"),
            text.as_bytes(),
            &mut counter,
            &mut Given::default(),
        )
        .unwrap();
        let c = counter.unwrap().finish(1);
        assert_eq!(c.words, vec!["a", "b"]);
        assert_eq!(c.counts, vec![4, 1]);
        assert_eq!(c.bigrams, vec![(0, 0, 1), (0, 1, 1)]);
    }

    #[test]
    fn malformed_files_name_the_line() {
        let read = |text: &str| {
            let mut counter = None;
            read_into(
                Path::new("f"),
                text.as_bytes(),
                &mut counter,
                &mut Given::default(),
            )
            .unwrap_err()
            .to_string()
        };
        assert!(read("word\ta\t\t1\n").contains("f:1: expected the header"));
        assert!(read("kind\tfirst\tsecond\tcount\nword\ta\t1\n")
            .contains("f:2: expected 4"));
        assert!(read("kind\tfirst\tsecond\tcount\nword\ta\t\tx\n")
            .contains("f:2: the count"));
        assert!(read(
            "kind\tfirst\tsecond\tcount\nmeta\tformat_version\t2\t\n"
        )
        .contains("version 2"));
        assert!(read("").contains("empty file"));
        let full = "kind\tfirst\tsecond\tcount\nmeta\tformat_version\t1\t\nword\ta\t\t1\n";
        assert!(read(full).contains("truncated count file"));
        let more = format!("{full}meta\trecords\t2\t\n");
        assert!(read(&more).contains("says 2 records, but it holds 1"));
        let bad_utf8 = b"kind\tfirst\tsecond\tcount\nword\t\xff\t\t1\n";
        let mut counter = None;
        let err = read_into(
            Path::new("f"),
            &bad_utf8[..],
            &mut counter,
            &mut Given::default(),
        )
        .unwrap_err();
        assert_eq!(err.to_string(), "f:2: invalid UTF-8");
    }

    /// Writes each text as a count file `a`, `b`... in a temporary
    /// directory and reads them all; the error with the directory cut
    /// from the path.
    fn read_files(texts: &[&str]) -> std::result::Result<Counts, String> {
        let dir = tempfile::tempdir().unwrap();
        let paths: Vec<std::path::PathBuf> = texts
            .iter()
            .enumerate()
            .map(|(k, text)| {
                let path =
                    dir.path().join(((b'a' + k as u8) as char).to_string());
                std::fs::write(&path, format!("{HEADER}\n{text}")).unwrap();
                path
            })
            .collect();
        let refs: Vec<&Path> = paths.iter().map(|p| p.as_path()).collect();
        let prefix = format!("{}/", dir.path().display());
        read_all(&refs)
            .map(|c| c.finish(1))
            .map_err(|e| e.to_string().replace(&prefix, ""))
    }

    #[test]
    fn counts_no_text_could_give_are_refused_with_the_record() {
        let cases = [
            // A bigram above its words' counts.
            (
                "word\ta\t\t3\nword\tb\t\t2\nbigram\ta\tb\t50\n",
                "a:4: bigram count 50 is above the count of \"a\" (3)",
            ),
            (
                "word\ta\t\t3\nword\tb\t\t2\nbigram\ta\tb\t3\n",
                "a:4: bigram count 3 is above the count of \"b\" (2)",
            ),
            // Bigrams of unlisted words, of zero-count words.
            (
                "word\ta\t\t3\nbigram\ta\ta\t1\nbigram\ta\tz\t1\n",
                "a:4: bigram of \"z\", which has no word record",
            ),
            (
                "word\ta\t\t3\nword\tz\t\t0\nbigram\tz\ta\t1\n",
                "a:4: bigram of \"z\", whose word count is 0",
            ),
            // Sums past a word's count, on either side.
            (
                "word\ta\t\t2\nword\tb\t\t5\nword\tc\t\t5\n\
                 bigram\ta\tb\t2\nbigram\ta\tc\t1\n",
                "a:2: word \"a\" has count 2, but the bigrams with it on the \
                 left add up to 3",
            ),
            (
                "word\ta\t\t5\nword\tb\t\t5\nword\tc\t\t2\n\
                 bigram\ta\tc\t2\nbigram\tb\tc\t1\n",
                "a:4: word \"c\" has count 2, but the bigrams with it on the \
                 right add up to 3",
            ),
            // Totals.
            (
                "total\ttokens\t\t5\nword\ta\t\t42104\n",
                "a:2: total tokens 5 (summed over the files) is not the sum \
                 of the word counts (42104)",
            ),
            (
                "total\tsentences\t\t1\nword\ta\t\t3\nbigram\ta\ta\t1\n",
                "a:2: total sentences 1 (summed over the files) does not fit 3 \
                 tokens with 1 within-line bigrams (a line of n tokens has \
                 n - 1 bigrams, so 2 sentences)",
            ),
        ];
        for (text, want) in cases {
            assert_eq!(read_files(&[text]).unwrap_err(), want, "{text}");
        }
        // A zero bigram is nothing; a zero word without bigrams is fine.
        let ok =
            read_files(&["word\ta\t\t1\nword\tz\t\t0\nbigram\tq\ta\t0\n"]);
        assert_eq!(ok.unwrap().words, vec!["a"]);
    }

    #[test]
    fn files_are_checked_after_summing() {
        // Words in one shard, bigrams in another: consistent together.
        let words = "total\ttokens\t\t4\nword\ta\t\t2\nword\tb\t\t2\n";
        let bigrams = "total\tsentences\t\t2\nbigram\ta\tb\t2\n";
        let c = read_files(&[words, bigrams]).unwrap();
        assert_eq!((c.tokens, c.sentences, c.bigram_total()), (4, 2, 2));
        // Each file's totals fit its own words, the sum too.
        let one = "total\ttokens\t\t2\ntotal\tsentences\t\t1\nword\ta\t\t1\n\
                   word\tb\t\t1\nbigram\ta\tb\t1\n";
        let c = read_files(&[one, one]).unwrap();
        assert_eq!((c.tokens, c.sentences), (4, 2));
        // A sum over files is named at the last file's record.
        let short = "total\ttokens\t\t2\nword\ta\t\t1\nword\tb\t\t1\n";
        assert_eq!(
            read_files(&[short, "total\ttokens\t\t2\n"]).unwrap_err(),
            "b:2: total tokens 4 (summed over the files) is not the sum of \
             the word counts (2)"
        );
        // Without totals they are filled in from the counts.
        let c = read_files(&["word\ta\t\t3\nbigram\ta\ta\t1\n"]).unwrap();
        assert_eq!((c.tokens, c.sentences), (3, 2));
    }

    proptest! {
        /// What `write` writes for any text passes every check.
        #[test]
        fn written_counts_are_consistent(
            lines in proptest::collection::vec("[abc ]{0,8}", 0..8)
        ) {
            let text = lines.join("\n");
            let counts = Counts::from_text(&text, TokenOptions::default(), 1);
            let mut bytes = Vec::new();
            write(&counts, &mut bytes).unwrap();
            let body = String::from_utf8(bytes).unwrap();
            let body = body.strip_prefix(HEADER).unwrap().trim_start();
            let read = read_files(&[body, body]);
            prop_assert!(read.is_ok(), "{:?}", read);
            let read = read.unwrap();
            prop_assert_eq!(read.tokens, 2 * counts.tokens);
            prop_assert_eq!(read.sentences, 2 * counts.sentences);
        }
    }

    #[test]
    fn sums_past_the_exact_range_are_refused() {
        let big = format!(
            "kind\tfirst\tsecond\tcount\nword\ta\t\t{}\nword\tb\t\t{}\n",
            u64::MAX,
            u64::MAX
        );
        let mut counter = None;
        let err = read_into(
            Path::new("f"),
            big.as_bytes(),
            &mut counter,
            &mut Given::default(),
        )
        .unwrap_err()
        .to_string();
        assert!(err.starts_with("f:2: the counts add up past 2^53"), "{err}");
        let edge = format!(
            "kind\tfirst\tsecond\tcount\nbigram\ta\tb\t{}\n\
             bigram\tb\ta\t1\n",
            crate::counts::MAX_ADDED_TOTAL
        );
        let mut counter = None;
        let err = read_into(
            Path::new("f"),
            edge.as_bytes(),
            &mut counter,
            &mut Given::default(),
        )
        .unwrap_err()
        .to_string();
        assert!(err.starts_with("f:3: the counts add up"), "{err}");
    }

    use proptest::prelude::*;

    /// One line of a count file: mostly well-formed records with
    /// arbitrary words and counts (huge ones included), some noise.
    fn record() -> impl Strategy<Value = String> {
        let kind = prop_oneof![
            Just("word"),
            Just("bigram"),
            Just("total"),
            Just("meta"),
            Just("other")
        ];
        let field = "[ab\u{e9}\t]{0,3}";
        let count = prop_oneof![
            any::<u64>().prop_map(|c| c.to_string()),
            (0u64..5).prop_map(|c| c.to_string()),
            "[0-9x-]{0,3}"
        ];
        (kind, field, field, count)
            .prop_map(|(k, a, b, c)| format!("{k}\t{a}\t{b}\t{c}"))
    }

    /// `Ok` or a one-line error naming the file; never a panic.
    fn check(
        bytes: &[u8],
    ) -> std::result::Result<Option<Counts>, TestCaseError> {
        let mut counter = None;
        match read_into(
            Path::new("p"),
            bytes,
            &mut counter,
            &mut Given::default(),
        ) {
            Ok(_) => Ok(counter.map(|c| c.finish(1))),
            Err(e) => {
                let msg = e.to_string();
                prop_assert!(msg.starts_with('p'), "{}", msg);
                prop_assert!(!msg.contains('\n'), "{}", msg);
                Ok(None)
            }
        }
    }

    proptest! {
        #[test]
        fn any_bytes_parse_or_fail_cleanly(
            bytes in proptest::collection::vec(any::<u8>(), 0..300)
        ) {
            check(&bytes)?;
            let mut headed = HEADER.as_bytes().to_vec();
            headed.push(b'\n');
            headed.extend(&bytes);
            check(&headed)?;
        }

        #[test]
        fn arbitrary_records_parse_or_fail_cleanly(
            lines in proptest::collection::vec(record(), 0..12)
        ) {
            let text = format!("{HEADER}\n{}\n", lines.join("\n"));
            if let Some(counts) = check(text.as_bytes())? {
                prop_assert!(counts.counts.iter().sum::<u64>()
                    <= crate::counts::MAX_ADDED_TOTAL);
            }
        }

        /// A written file cut anywhere is refused, or reads back whole
        /// (only the final line break was cut), or empty (only the header
        /// is left, which is a valid plain-form file).
        #[test]
        fn a_cut_file_is_refused(cut in 0usize..1000) {
            let counts = Counts::from_text(
                "the cat sat\nthe dog ran\n", TokenOptions::default(), 1);
            let mut bytes = Vec::new();
            write(&counts, &mut bytes).unwrap();
            let cut = cut % bytes.len();
            if let Some(read) = check(&bytes[..cut])? {
                if cut <= HEADER.len() + 1 {
                    // Only the header is left: an empty plain-form file.
                    prop_assert!(read.words.is_empty());
                    return Ok(());
                }
                prop_assert_eq!(cut, bytes.len() - 1);
                prop_assert_eq!(&read.words, &counts.words);
                prop_assert_eq!(&read.bigrams, &counts.bigrams);
            }
        }
    }
}
