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
//! | `total` | `tokens` or `sentences` | empty | the total |
//! | `word` | the word | empty | its count |
//! | `bigram` | the left word | the right word | its count |
//!
//! `lexiclade count` writes the three `meta` records first, then the
//! totals, the words (most frequent first) and the bigrams, unfiltered,
//! and last `meta records N` (tab-separated) with the number of `word` and `bigram`
//! records, so that a file cut short is noticed: a file with a
//! `format_version` record must end with it.
//! Every record is optional in a file written by another engine (the
//! plain form): without `meta` records a file counts as format 1 with
//! `tokenize` and `lowercase` false; missing totals count as 0; a bigram
//! whose words have no `word` record gives those words a count of 0, so
//! they are dropped by any minimum count. Several records for one word or
//! bigram add up, and so do several files. Words cannot contain tabs or
//! line breaks (tokens are split at spaces and tabs, lines at `\n`).

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
/// tokenising or lowercasing flags differ are refused.
pub fn read_all(paths: &[&Path]) -> Result<Counter> {
    let mut counter: Option<Counter> = None;
    let mut first: Option<&Path> = None;
    for &path in paths {
        let file =
            std::fs::File::open(path).map_err(|e| Error::io(path, e))?;
        let options = read_into(path, BufReader::new(file), &mut counter)?;
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
    counter.ok_or_else(|| Error::EmptyInput { what: "no count files".into() })
}

fn describe(o: TokenOptions) -> String {
    format!("tokenize {}, lowercase {}", o.tokenize, o.lowercase)
}

/// Reads one count file into `counter` (created with the file's flags
/// when `None`); returns the file's flags.
fn read_into(
    path: &Path,
    reader: impl BufRead,
    counter: &mut Option<Counter>,
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
                "tokens" => counter.add_totals(count, 0),
                "sentences" => counter.add_totals(0, count),
                _ => {
                    return Err(Error::malformed(
                        path,
                        Some(line),
                        format!("unknown total {first:?}"),
                    ))
                }
            },
            b'w' => counter.add_word_count(&first, count),
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
        read_into(Path::new("c"), &bytes[..], &mut counter).unwrap();
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
        let opts = TokenOptions { tokenize: true, lowercase: true };
        let (a, b) = round_trip("Hi there, @ann!\nhi", opts);
        assert_eq!(a.words, b.words);
        assert_eq!(b.options, opts);
    }

    #[test]
    fn the_plain_form_needs_only_the_header() {
        let text = "kind\tfirst\tsecond\tcount\nword\ta\t\t3\nword\tb\t\t1\nbigram\ta\tb\t1\n\
                    bigram\ta\ta\t1\nword\ta\t\t1\n";
        let mut counter = None;
        read_into(Path::new("p"), text.as_bytes(), &mut counter).unwrap();
        let c = counter.unwrap().finish(1);
        assert_eq!(c.words, vec!["a", "b"]);
        assert_eq!(c.counts, vec![4, 1]);
        assert_eq!(c.bigrams, vec![(0, 0, 1), (0, 1, 1)]);
    }

    #[test]
    fn malformed_files_name_the_line() {
        let read = |text: &str| {
            let mut counter = None;
            read_into(Path::new("f"), text.as_bytes(), &mut counter)
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
        let err = read_into(Path::new("f"), &bad_utf8[..], &mut counter)
            .unwrap_err();
        assert_eq!(err.to_string(), "f:2: invalid UTF-8");
    }

    #[test]
    fn sums_past_the_exact_range_are_refused() {
        let big = format!(
            "kind\tfirst\tsecond\tcount\nword\ta\t\t{}\nword\tb\t\t{}\n",
            u64::MAX,
            u64::MAX
        );
        let mut counter = None;
        let err = read_into(Path::new("f"), big.as_bytes(), &mut counter)
            .unwrap_err()
            .to_string();
        assert!(err.starts_with("f:2: the counts add up past 2^53"), "{err}");
        let edge = format!(
            "kind\tfirst\tsecond\tcount\nbigram\ta\tb\t{}\n\
             bigram\tb\ta\t1\n",
            crate::counts::MAX_ADDED_TOTAL
        );
        let mut counter = None;
        let err = read_into(Path::new("f"), edge.as_bytes(), &mut counter)
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
        match read_into(Path::new("p"), bytes, &mut counter) {
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
