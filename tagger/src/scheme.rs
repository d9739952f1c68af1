//! Tag schemes: how chunk labels mark where chunks begin and end, how to
//! tell the scheme of a file from its labels, how to read the chunks out
//! of a sentence's labels, how to rewrite labels from one scheme into
//! another, and which label transitions a scheme allows.
//!
//! A chunk label is a prefix letter, a hyphen and a type: `B-PER`,
//! `I-creative-work` (the type is everything after the first hyphen).
//! The prefixes are `B` (begin), `I` (inside), `E` (end) and `S` (single).
//! Every other label (`O`, `NN`, `PER` without a prefix) lies outside
//! any chunk.
//!
//! Chunks are read with the same start and end rules whatever the scheme,
//! those of the CoNLL-2000 shared task's evaluation (Tjong Kim Sang and
//! Buchholz 2000), which seqeval's default mode reproduces:
//!
//! - a chunk ends before a token when the previous token was `E-` or
//!   `S-`, when the new token is outside, `B-` or `S-`, or when its type
//!   differs from the previous token's;
//! - a chunk starts at `B-` and `S-`, at `I-` or `E-` after an outside
//!   label, after `E-` or `S-`, or after a label of another type.
//!
//! So `I-X` after `O` starts a chunk as in IOB1, and `B-PER I-LOC` is two
//! chunks. Chunks never cross sentences.

use std::{fmt, str::FromStr};

use serde::{Deserialize, Serialize};

use crate::error::{Error, Result};

/// A tag scheme.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Scheme {
    /// IOB1: `I-X` inside chunks and at their start; `B-X` only starts a
    /// chunk that directly follows another chunk of type X.
    Iob1,
    /// IOB2, also called BIO: every chunk starts with `B-X`, its other
    /// tokens are `I-X`.
    #[serde(alias = "bio")]
    Iob2,
    /// IOBES: `S-X` for a one-token chunk, otherwise `B-X`, `I-X`..., and
    /// `E-X` on the last token.
    Iobes,
    /// No chunks: the labels are plain tags (parts of speech, say), and
    /// only token accuracy applies.
    None,
}

impl Scheme {
    /// Whether labels of this scheme mark chunks.
    pub fn has_chunks(self) -> bool {
        self != Scheme::None
    }

    /// The scheme of gold labels, one slice per sentence; see
    /// [`Detector`] for the rules.
    pub fn detect<I, L, S>(sentences: I) -> Scheme
    where
        I: IntoIterator<Item = L>,
        L: AsRef<[S]>,
        S: AsRef<str>,
    {
        let mut detector = Detector::default();
        for sentence in sentences {
            detector.observe(sentence.as_ref());
        }
        detector.scheme()
    }
}

impl fmt::Display for Scheme {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            Scheme::Iob1 => "iob1",
            Scheme::Iob2 => "iob2",
            Scheme::Iobes => "iobes",
            Scheme::None => "none",
        })
    }
}

impl FromStr for Scheme {
    type Err = Error;

    /// Parses `iob1`, `iob2` (or `bio`), `iobes` or `none`, in any case.
    fn from_str(s: &str) -> Result<Scheme> {
        let all = [
            ("iob1", Scheme::Iob1),
            ("iob2", Scheme::Iob2),
            ("bio", Scheme::Iob2),
            ("iobes", Scheme::Iobes),
            ("none", Scheme::None),
        ];
        all.iter()
            .find(|(name, _)| name.eq_ignore_ascii_case(s))
            .map(|&(_, scheme)| scheme)
            .ok_or_else(|| Error::UnknownScheme { name: s.to_string() })
    }
}

/// The prefix of a chunk label.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Prefix {
    /// `B-`: begins a chunk.
    Begin,
    /// `I-`: inside a chunk (in IOB1 also its start).
    Inside,
    /// `E-`: the last token of a chunk.
    End,
    /// `S-`: a chunk of one token.
    Single,
}

/// Splits a chunk label into its prefix and type (`B-PER` into
/// `(Begin, "PER")`); `None` for a label outside chunks.
pub fn split_label(label: &str) -> Option<(Prefix, &str)> {
    let (prefix, kind) = label.split_once('-')?;
    let prefix = match prefix {
        "B" => Prefix::Begin,
        "I" => Prefix::Inside,
        "E" => Prefix::End,
        "S" => Prefix::Single,
        _ => return None,
    };
    Some((prefix, kind))
}

/// A chunk of a sentence: its type and its tokens `start..end` (0-based,
/// `end` exclusive).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct Chunk<'a> {
    /// The first token.
    pub start: usize,
    /// One past the last token.
    pub end: usize,
    /// The chunk type, borrowed from the label.
    pub kind: &'a str,
}

type Parsed<'a> = Option<(Prefix, &'a str)>;

/// Whether a chunk that is open after `prev` ends before `cur`.
fn ends(prev: Parsed<'_>, cur: Parsed<'_>) -> bool {
    let Some((prev_prefix, prev_kind)) = prev else { return false };
    if matches!(prev_prefix, Prefix::End | Prefix::Single) {
        return true;
    }
    match cur {
        None => true,
        Some((Prefix::Begin | Prefix::Single, _)) => true,
        Some((_, kind)) => kind != prev_kind,
    }
}

/// Whether a chunk starts at `cur`.
fn starts(prev: Parsed<'_>, cur: Parsed<'_>) -> bool {
    let Some((prefix, kind)) = cur else { return false };
    if matches!(prefix, Prefix::Begin | Prefix::Single) {
        return true;
    }
    match prev {
        None => true,
        Some((Prefix::End | Prefix::Single, _)) => true,
        Some((_, prev_kind)) => kind != prev_kind,
    }
}

/// The chunks of one sentence's labels, in order, by the rules in the
/// module docs. They never overlap, and every token with a chunk label
/// belongs to exactly one of them.
pub fn chunks<S: AsRef<str>>(labels: &[S]) -> Vec<Chunk<'_>> {
    let mut out = Vec::new();
    let mut open: Option<(usize, &str)> = None;
    let mut prev: Parsed<'_> = None;
    for (i, label) in labels.iter().enumerate() {
        let cur = split_label(label.as_ref());
        if ends(prev, cur) {
            // A chunk is open exactly when the previous label is a chunk
            // label, so `open` is set here.
            if let Some((start, kind)) = open.take() {
                out.push(Chunk { start, end: i, kind });
            }
        }
        if starts(prev, cur) {
            open = cur.map(|(_, kind)| (i, kind));
        }
        prev = cur;
    }
    if let Some((start, kind)) = open {
        out.push(Chunk { start, end: labels.len(), kind });
    }
    out
}

/// Tells the scheme of gold labels, sentence by sentence:
///
/// - any `S-` or `E-` label: IOBES;
/// - otherwise any `I-X` at a sentence start, after an outside label or
///   after a label of another type: IOB1;
/// - otherwise any `B-` or `I-` label: IOB2;
/// - otherwise none.
#[derive(Clone, Debug, Default)]
pub struct Detector {
    end_or_single: bool,
    iob1_start: bool,
    begin_or_inside: bool,
}

impl Detector {
    /// Looks at one sentence's labels.
    pub fn observe<S: AsRef<str>>(&mut self, labels: &[S]) {
        let mut prev: Parsed<'_> = None;
        for label in labels {
            let cur = split_label(label.as_ref());
            match cur {
                Some((Prefix::End | Prefix::Single, _)) => {
                    self.end_or_single = true;
                }
                Some((Prefix::Inside, kind)) => {
                    self.begin_or_inside = true;
                    if prev.is_none_or(|(_, prev_kind)| prev_kind != kind) {
                        self.iob1_start = true;
                    }
                }
                Some((Prefix::Begin, _)) => self.begin_or_inside = true,
                None => {}
            }
            prev = cur;
        }
    }

    /// The scheme of everything observed so far.
    pub fn scheme(&self) -> Scheme {
        if self.end_or_single {
            Scheme::Iobes
        } else if self.iob1_start {
            Scheme::Iob1
        } else if self.begin_or_inside {
            Scheme::Iob2
        } else {
            Scheme::None
        }
    }
}

/// Rewrites one sentence's labels from scheme `from` into scheme `to`:
/// the chunks are read (with the rules in the module docs) and written
/// out again in `to`, and labels outside chunks are kept. When either
/// scheme is [`Scheme::None`] the labels are returned unchanged.
///
/// On a valid sequence of IOB1 or IOB2 labels, going to IOBES and back
/// gives the labels again. An invalid sequence comes back repaired: IOB2
/// `O I-X` reads as a chunk and comes back as `O B-X`.
pub fn convert<S: AsRef<str>>(
    labels: &[S],
    from: Scheme,
    to: Scheme,
) -> Vec<String> {
    let mut out: Vec<String> =
        labels.iter().map(|l| l.as_ref().to_string()).collect();
    if !from.has_chunks() || !to.has_chunks() {
        return out;
    }
    let mut prev: Option<Chunk<'_>> = None;
    for chunk in chunks(labels) {
        for (i, slot) in out[chunk.start..chunk.end].iter_mut().enumerate() {
            let first = i == 0;
            let last = chunk.start + i + 1 == chunk.end;
            let prefix = match to {
                Scheme::Iob1 => {
                    let touches = prev.is_some_and(|p| {
                        p.end == chunk.start && p.kind == chunk.kind
                    });
                    if first && touches {
                        'B'
                    } else {
                        'I'
                    }
                }
                Scheme::Iob2 => {
                    if first {
                        'B'
                    } else {
                        'I'
                    }
                }
                Scheme::Iobes | Scheme::None => match (first, last) {
                    (true, true) => 'S',
                    (true, false) => 'B',
                    (false, true) => 'E',
                    (false, false) => 'I',
                },
            };
            slot.clear();
            slot.push(prefix);
            slot.push('-');
            slot.push_str(chunk.kind);
        }
        prev = Some(chunk);
    }
    out
}

/// Whether `next` may follow `prev` (`None` at the start of a sentence)
/// under `scheme`, for constrained decoding:
///
/// - IOBES: after `B-X` or `I-X` only `I-X` or `E-X`; elsewhere (at the
///   start, after `E-`, `S-` or an outside label) anything but `I-` and
///   `E-`;
/// - IOB2: `I-X` only after `B-X` or `I-X`; everything else anywhere;
/// - IOB1 and none: anything, since every IOB1 sequence reads as chunks
///   and a plain tag set has no structure.
pub fn allowed(prev: Option<&str>, next: &str, scheme: Scheme) -> bool {
    let prev = prev.and_then(split_label);
    let next = split_label(next);
    match scheme {
        Scheme::Iob1 | Scheme::None => true,
        Scheme::Iob2 => match next {
            Some((Prefix::Inside, kind)) => matches!(
                prev,
                Some((Prefix::Begin | Prefix::Inside, k)) if k == kind
            ),
            _ => true,
        },
        Scheme::Iobes => match prev {
            Some((Prefix::Begin | Prefix::Inside, prev_kind)) => matches!(
                next,
                Some((Prefix::Inside | Prefix::End, k)) if k == prev_kind
            ),
            _ => !matches!(next, Some((Prefix::Inside | Prefix::End, _))),
        },
    }
}

/// Whether `label` may be the last of a sentence under `scheme`: under
/// IOBES not `B-` or `I-` (the chunk would have no end); under the other
/// schemes anything.
pub fn may_end(label: &str, scheme: Scheme) -> bool {
    match scheme {
        Scheme::Iobes => !matches!(
            split_label(label),
            Some((Prefix::Begin | Prefix::Inside, _))
        ),
        _ => true,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The chunks of space-separated labels, written `TYPE start..end`.
    fn spans(labels: &str) -> String {
        let labels: Vec<&str> = labels.split_whitespace().collect();
        let spans: Vec<String> = chunks(&labels)
            .iter()
            .map(|c| format!("{} {}..{}", c.kind, c.start, c.end))
            .collect();
        spans.join(", ")
    }

    fn labels(s: &str) -> Vec<&str> {
        s.split_whitespace().collect()
    }

    fn detect(sentences: &[&str]) -> Scheme {
        Scheme::detect(sentences.iter().map(|s| labels(s)))
    }

    #[test]
    fn names_parse_and_print() {
        for scheme in [Scheme::Iob1, Scheme::Iob2, Scheme::Iobes, Scheme::None]
        {
            assert_eq!(scheme.to_string().parse::<Scheme>().unwrap(), scheme);
        }
        assert_eq!("bio".parse::<Scheme>().unwrap(), Scheme::Iob2);
        assert_eq!("IOBES".parse::<Scheme>().unwrap(), Scheme::Iobes);
        let err = "bilou".parse::<Scheme>().unwrap_err();
        assert_eq!(
            err.to_string(),
            "unknown tag scheme \"bilou\" (expected iob1, iob2, bio, iobes \
             or none)"
        );
        let json = serde_json::to_string(&Scheme::Iob2).unwrap();
        assert_eq!(json, "\"iob2\"");
        let back: Scheme = serde_json::from_str("\"bio\"").unwrap();
        assert_eq!(back, Scheme::Iob2);
    }

    #[test]
    fn labels_split_at_the_first_hyphen() {
        assert_eq!(split_label("B-PER"), Some((Prefix::Begin, "PER")));
        assert_eq!(
            split_label("I-creative-work"),
            Some((Prefix::Inside, "creative-work"))
        );
        assert_eq!(split_label("E-X"), Some((Prefix::End, "X")));
        assert_eq!(split_label("S-X"), Some((Prefix::Single, "X")));
        assert_eq!(split_label("O"), None);
        assert_eq!(split_label("PER"), None);
        assert_eq!(split_label("U-PER"), None);
        assert_eq!(split_label("-X-"), None);
    }

    #[test]
    fn detection() {
        assert_eq!(detect(&["O B-X E-X", "O"]), Scheme::Iobes);
        assert_eq!(detect(&["S-X O"]), Scheme::Iobes);
        // E-/S- wins even beside IOB1 starts.
        assert_eq!(detect(&["I-X O", "S-Y"]), Scheme::Iobes);
        assert_eq!(detect(&["I-X I-X O"]), Scheme::Iob1);
        assert_eq!(detect(&["O I-X"]), Scheme::Iob1);
        assert_eq!(detect(&["B-X I-Y"]), Scheme::Iob1);
        assert_eq!(detect(&["B-X I-X", "O B-X", "O I-X"]), Scheme::Iob1);
        assert_eq!(detect(&["B-X I-X O B-Y"]), Scheme::Iob2);
        assert_eq!(detect(&["B-X B-X", "O"]), Scheme::Iob2);
        assert_eq!(detect(&["O O", "O"]), Scheme::None);
        assert_eq!(detect(&["DT NN VBZ"]), Scheme::None);
        assert_eq!(detect(&[]), Scheme::None);
        // The previous sentence does not carry over.
        assert_eq!(detect(&["B-X", "I-X"]), Scheme::Iob1);
    }

    #[test]
    fn chunks_by_hand() {
        // IOB2.
        assert_eq!(spans("B-PER I-PER O B-LOC"), "PER 0..2, LOC 3..4");
        // IOB1: I- starts at the sentence start and after O; B- splits
        // two touching chunks of one type.
        assert_eq!(
            spans("I-PER I-PER B-PER O I-LOC"),
            "PER 0..2, PER 2..3, LOC 4..5"
        );
        // A type change inside a run makes two chunks.
        assert_eq!(spans("B-PER I-LOC"), "PER 0..1, LOC 1..2");
        assert_eq!(spans("I-PER I-LOC I-LOC"), "PER 0..1, LOC 1..3");
        // B-, S- and E- rules.
        assert_eq!(spans("B-X B-X"), "X 0..1, X 1..2");
        assert_eq!(spans("B-X E-X E-X"), "X 0..2, X 2..3");
        assert_eq!(spans("S-X I-X E-X"), "X 0..1, X 1..3");
        assert_eq!(spans("E-X I-X"), "X 0..1, X 1..2");
        assert_eq!(spans("O E-X"), "X 1..2");
        assert_eq!(
            spans("B-X I-X I-X E-X S-Y O B-Y E-Y"),
            "X 0..4, Y 4..5, Y 6..8"
        );
        // Sentence-final chunks close at the end.
        assert_eq!(spans("O O I-X"), "X 2..3");
        assert_eq!(spans("O B-X I-X"), "X 1..3");
        // Outside labels of any spelling, hyphenated types.
        assert_eq!(spans("O NN"), "");
        assert_eq!(
            spans("B-creative-work I-creative-work PER I-X"),
            "creative-work 0..2, X 3..4"
        );
        assert_eq!(spans(""), "");
    }

    /// Every sequence of up to `max_len` labels from `alphabet`.
    fn sequences(
        alphabet: &[&'static str],
        max_len: usize,
    ) -> Vec<Vec<&'static str>> {
        let mut all = vec![vec![]];
        let mut layer = vec![vec![]];
        for _ in 0..max_len {
            let mut next = Vec::new();
            for seq in &layer {
                for &label in alphabet {
                    let mut s: Vec<&str> = seq.clone();
                    s.push(label);
                    next.push(s);
                }
            }
            all.extend(next.iter().cloned());
            layer = next;
        }
        all
    }

    /// IOB1 validity: `B-X` only right after a token of an X chunk.
    fn valid_iob1(labels: &[&str]) -> bool {
        labels.iter().enumerate().all(|(i, l)| match split_label(l) {
            Some((Prefix::Begin, kind)) => {
                i > 0
                    && matches!(
                        split_label(labels[i - 1]),
                        Some((Prefix::Begin | Prefix::Inside, k)) if k == kind
                    )
            }
            Some((Prefix::Inside, _)) | None => true,
            Some(_) => false,
        })
    }

    /// Validity by [`allowed`] and [`may_end`], with only the scheme's own
    /// prefixes.
    fn valid(labels: &[&str], scheme: Scheme) -> bool {
        let own = |l: &str| match split_label(l) {
            Some((Prefix::End | Prefix::Single, _)) => scheme == Scheme::Iobes,
            _ => true,
        };
        labels.iter().all(|l| own(l))
            && labels.iter().enumerate().all(|(i, l)| {
                let prev = if i == 0 { None } else { Some(labels[i - 1]) };
                allowed(prev, l, scheme)
            })
            && labels.last().is_none_or(|l| may_end(l, scheme))
    }

    const IOB: [&str; 5] = ["O", "B-A", "I-A", "B-B", "I-B"];
    const ALL: [&str; 7] = ["O", "B-A", "I-A", "E-A", "S-A", "I-B", "S-B"];

    #[test]
    fn iob_to_iobes_and_back_is_the_identity_on_valid_sequences() {
        let mut checked = [0usize; 2];
        for seq in sequences(&IOB, 6) {
            for (k, scheme) in
                [Scheme::Iob1, Scheme::Iob2].into_iter().enumerate()
            {
                let ok = match scheme {
                    Scheme::Iob1 => valid_iob1(&seq),
                    _ => valid(&seq, scheme),
                };
                if !ok {
                    continue;
                }
                checked[k] += 1;
                let iobes = convert(&seq, scheme, Scheme::Iobes);
                let iobes: Vec<&str> =
                    iobes.iter().map(String::as_str).collect();
                assert!(valid(&iobes, Scheme::Iobes), "{seq:?} {iobes:?}");
                let back = convert(&iobes, Scheme::Iobes, scheme);
                assert_eq!(back, seq, "{scheme} via {iobes:?}");
            }
        }
        // Both schemes had many valid sequences to check.
        assert!(checked.iter().all(|&n| n > 500), "{checked:?}");
    }

    #[test]
    fn conversion_keeps_the_chunks_of_any_sequence() {
        for seq in sequences(&ALL, 5) {
            let want = chunks(&seq);
            for to in [Scheme::Iob1, Scheme::Iob2, Scheme::Iobes] {
                let got = convert(&seq, Scheme::Iob2, to);
                assert_eq!(chunks(&got), want, "{seq:?} to {to}: {got:?}");
                let strs: Vec<&str> = got.iter().map(String::as_str).collect();
                let ok = match to {
                    Scheme::Iob1 => valid_iob1(&strs),
                    _ => valid(&strs, to),
                };
                assert!(ok, "{seq:?} to {to} gave invalid {got:?}");
            }
        }
    }

    #[test]
    fn conversion_by_hand() {
        let iob1 = labels("I-PER I-PER B-PER O I-LOC");
        assert_eq!(
            convert(&iob1, Scheme::Iob1, Scheme::Iobes),
            labels("B-PER E-PER S-PER O S-LOC")
        );
        assert_eq!(
            convert(&iob1, Scheme::Iob1, Scheme::Iob2),
            labels("B-PER I-PER B-PER O B-LOC")
        );
        // Invalid IOB2 comes back repaired.
        assert_eq!(
            convert(&labels("O I-X I-X"), Scheme::Iob2, Scheme::Iob2),
            labels("O B-X I-X")
        );
        // Outside labels of other spellings are kept; scheme none is the
        // identity.
        assert_eq!(
            convert(&labels("NN B-X"), Scheme::Iob2, Scheme::Iobes),
            labels("NN S-X")
        );
        let tags = labels("DT NN I-X");
        assert_eq!(convert(&tags, Scheme::None, Scheme::Iobes), tags);
        assert_eq!(convert(&tags, Scheme::Iob1, Scheme::None), tags);
    }

    #[test]
    fn transitions() {
        use Scheme::{Iob1, Iob2, Iobes};
        assert!(allowed(Some("B-X"), "I-X", Iobes));
        assert!(allowed(Some("B-X"), "E-X", Iobes));
        assert!(!allowed(Some("B-X"), "O", Iobes));
        assert!(!allowed(Some("B-X"), "I-Y", Iobes));
        assert!(!allowed(Some("I-X"), "B-X", Iobes));
        assert!(!allowed(Some("I-X"), "S-X", Iobes));
        assert!(allowed(Some("E-X"), "B-Y", Iobes));
        assert!(allowed(Some("S-X"), "S-X", Iobes));
        assert!(!allowed(Some("S-X"), "I-X", Iobes));
        assert!(!allowed(None, "E-X", Iobes));
        assert!(!allowed(Some("O"), "I-X", Iobes));
        assert!(allowed(None, "O", Iobes));
        assert!(allowed(Some("B-X"), "I-X", Iob2));
        assert!(allowed(Some("I-X"), "I-X", Iob2));
        assert!(!allowed(Some("O"), "I-X", Iob2));
        assert!(!allowed(None, "I-X", Iob2));
        assert!(!allowed(Some("B-Y"), "I-X", Iob2));
        assert!(allowed(Some("O"), "B-X", Iob2));
        assert!(allowed(Some("I-X"), "B-X", Iob2));
        for (prev, next) in [(None, "I-X"), (Some("O"), "B-X")] {
            assert!(allowed(prev, next, Iob1));
            assert!(allowed(prev, next, Scheme::None));
        }
        assert!(!may_end("B-X", Iobes));
        assert!(!may_end("I-X", Iobes));
        assert!(may_end("E-X", Iobes));
        assert!(may_end("S-X", Iobes));
        assert!(may_end("O", Iobes));
        assert!(may_end("B-X", Iob2));
        assert!(may_end("I-X", Iob1));
    }
}
