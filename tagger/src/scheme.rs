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
        Detector::of(sentences).scheme()
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

/// Where a label is: its sentence (0-based, in the order the sentences
/// were observed) and its token in the sentence (0-based). Callers that
/// know the file map it to a line.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub struct Site {
    /// The sentence.
    pub sentence: usize,
    /// The token in the sentence.
    pub token: usize,
}

/// Labels of one kind that a scheme does not allow: how many, and the
/// first of them with a short description (`I-PLACE after O`).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Finding {
    /// How many labels of this kind were seen.
    pub count: usize,
    /// The first of them.
    pub site: Site,
    /// The first of them in words, such as `I-PLACE after O` or `B-X
    /// followed by O`.
    pub what: String,
}

/// What [`Detector::detection`] and [`Detector::check`] found: the
/// scheme, and the labels that are invalid under it (read anyway, with
/// the chunk rules of the module docs), for a warning.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Detection {
    /// The scheme of the labels.
    pub scheme: Scheme,
    /// Labels invalid under `scheme`, if any: `I-X` chunk starts under
    /// IOB2; under IOBES every label a transition or an ending of IOBES
    /// does not allow (see [`allowed`] and [`may_end`]).
    pub invalid: Option<Finding>,
}

/// A scheme that the labels contradict: they hold a label the scheme
/// never has and read as another scheme.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Contradiction {
    /// The scheme that was given.
    pub given: Scheme,
    /// The scheme the labels read as.
    pub found: Scheme,
    /// The first contradicting label.
    pub first: Finding,
}

impl fmt::Display for Contradiction {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let why = match (self.given, self.found) {
            (_, Scheme::Iobes) => "E- and S- labels exist only in iobes",
            (Scheme::Iobes, _) => {
                "iobes starts every chunk with B- or S- and ends it with \
                 E- or S-"
            }
            (Scheme::Iob1, _) => {
                "iob1 has B-X only right after another X chunk"
            }
            _ => "iob2 starts every chunk with B-",
        };
        write!(
            f,
            "{} contradicts scheme {} ({why}; the labels read as {})",
            self.first.what, self.given, self.found
        )
    }
}

/// A count of labels of one kind and the first of them.
#[derive(Clone, Debug, Default)]
struct Tally {
    count: usize,
    first: Option<(Site, String)>,
}

impl Tally {
    fn add(&mut self, site: Site, what: impl FnOnce() -> String) {
        self.count += 1;
        if self.first.is_none() {
            self.first = Some((site, what()));
        }
    }

    fn finding(&self) -> Option<Finding> {
        let (site, what) = self.first.clone()?;
        Some(Finding { count: self.count, site, what })
    }
}

/// The label before a token, in words: `at a sentence start` or `after
/// O`.
fn after(prev: Option<&str>) -> String {
    match prev {
        None => "at a sentence start".to_string(),
        Some(p) => format!("after {p}"),
    }
}

/// Tells the scheme of gold labels, sentence by sentence:
///
/// 1. any `S-` or `E-` label: IOBES (IOB1 and IOB2 never have them);
/// 2. otherwise any `B-X` that does not directly follow a `B-X` or `I-X`
///    (at a sentence start, after an outside label, after another type):
///    IOB2, since IOB1 has `B-X` only between two X chunks;
/// 3. otherwise any `I-X` starting a chunk (at a sentence start, after an
///    outside label or after another type): IOB1;
/// 4. otherwise any `B-` or `I-` label: IOB2;
/// 5. otherwise none.
///
/// So a few stray `I-X` chunk starts in an IOB2 file (invalid in IOB2)
/// leave it IOB2; they are counted and reported in
/// [`Detection::invalid`]. A single `B-X` after `O` makes a file IOB2 even
/// when its other chunks start with `I-`: such a file is no valid IOB1
/// either, and the count of invalid `I-` starts in the warning shows it.
#[derive(Clone, Debug, Default)]
pub struct Detector {
    sentences: usize,
    /// `E-` and `S-` labels.
    end_or_single: Tally,
    /// `B-X` not directly after `B-X` or `I-X`.
    begin_start: Tally,
    /// `I-X` not directly after `B-X` or `I-X`.
    inside_start: Tally,
    /// Labels invalid under IOBES.
    iobes_invalid: Tally,
    begin_or_inside: bool,
}

impl Detector {
    /// A detector that has observed `sentences`.
    pub fn of<I, L, S>(sentences: I) -> Detector
    where
        I: IntoIterator<Item = L>,
        L: AsRef<[S]>,
        S: AsRef<str>,
    {
        let mut detector = Detector::default();
        for sentence in sentences {
            detector.observe(sentence.as_ref());
        }
        detector
    }

    /// Looks at one sentence's labels.
    pub fn observe<S: AsRef<str>>(&mut self, labels: &[S]) {
        let sentence = self.sentences;
        self.sentences += 1;
        let mut prev: Option<&str> = None;
        for (token, label) in labels.iter().enumerate() {
            let label = label.as_ref();
            let site = Site { sentence, token };
            let cur = split_label(label);
            let parsed_prev = prev.and_then(split_label);
            let continues = |kind: &str| {
                matches!(
                    parsed_prev,
                    Some((Prefix::Begin | Prefix::Inside, k)) if k == kind
                )
            };
            match cur {
                Some((Prefix::End | Prefix::Single, _)) => {
                    self.end_or_single.add(site, || label.to_string());
                }
                Some((Prefix::Inside, kind)) => {
                    self.begin_or_inside = true;
                    if !continues(kind) {
                        self.inside_start
                            .add(site, || format!("{label} {}", after(prev)));
                    }
                }
                Some((Prefix::Begin, kind)) => {
                    self.begin_or_inside = true;
                    if !continues(kind) {
                        self.begin_start
                            .add(site, || format!("{label} {}", after(prev)));
                    }
                }
                None => {}
            }
            if !allowed(prev, label, Scheme::Iobes) {
                // Name the label that is wrong: an open chunk that does not
                // go on is the previous label's fault, a chunk continued
                // from nothing this label's.
                match (parsed_prev, prev) {
                    (Some((Prefix::Begin | Prefix::Inside, _)), Some(p)) => {
                        let site = Site { sentence, token: token - 1 };
                        self.iobes_invalid
                            .add(site, || format!("{p} followed by {label}"));
                    }
                    _ => self
                        .iobes_invalid
                        .add(site, || format!("{label} {}", after(prev))),
                }
            }
            prev = Some(label);
        }
        if let Some(last) = prev.filter(|l| !may_end(l, Scheme::Iobes)) {
            let site = Site { sentence, token: labels.len() - 1 };
            self.iobes_invalid
                .add(site, || format!("{last} at the end of a sentence"));
        }
    }

    /// The scheme of everything observed so far.
    pub fn scheme(&self) -> Scheme {
        if self.end_or_single.count > 0 {
            Scheme::Iobes
        } else if self.begin_start.count > 0 {
            Scheme::Iob2
        } else if self.inside_start.count > 0 {
            Scheme::Iob1
        } else if self.begin_or_inside {
            Scheme::Iob2
        } else {
            Scheme::None
        }
    }

    /// The detected scheme and the labels invalid under it.
    pub fn detection(&self) -> Detection {
        self.under(self.scheme())
    }

    /// The labels invalid under `scheme`, which the labels do not
    /// contradict.
    fn under(&self, scheme: Scheme) -> Detection {
        let invalid = match scheme {
            Scheme::Iob2 => self.inside_start.finding(),
            Scheme::Iobes => self.iobes_invalid.finding(),
            Scheme::Iob1 | Scheme::None => None,
        };
        Detection { scheme, invalid }
    }

    /// Checks a scheme the user gave against the labels: refused when the
    /// labels read as another chunk scheme, with the first label that
    /// makes them ([`Contradiction`]); otherwise the given scheme with the
    /// labels invalid under it, as for a detected one. Pair by pair:
    ///
    /// - iob1 or iob2 given, labels with `E-` or `S-`: the first of them;
    /// - iob1 given, IOB2 labels: the first `B-X` not right after an X
    ///   chunk;
    /// - iob2 given, IOB1 labels: the first `I-X` chunk start (in IOB2
    ///   labels such starts are only counted, as in detection);
    /// - iobes given, IOB1 or IOB2 labels: the first label IOBES does not
    ///   allow where it stands (`B-X` followed by `O`, `I-X` after `O`,
    ///   `B-X` at a sentence end...);
    /// - none given, or labels without chunk labels: never refused.
    pub fn check(
        &self,
        given: Scheme,
    ) -> std::result::Result<Detection, Contradiction> {
        let found = self.scheme();
        if found == given || !given.has_chunks() || !found.has_chunks() {
            return Ok(self.under(given));
        }
        let tally = match (given, found) {
            (_, Scheme::Iobes) => &self.end_or_single,
            (Scheme::Iobes, _) => &self.iobes_invalid,
            (_, Scheme::Iob2) => &self.begin_start,
            _ => &self.inside_start,
        };
        match tally.finding() {
            Some(first) => Err(Contradiction { given, found, first }),
            // Unreachable by the rules of `scheme`, but a given scheme
            // with nothing against it is fine.
            None => Ok(self.under(given)),
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
        // IOB1 has B-X only right after an X chunk.
        assert_eq!(detect(&["I-X B-X I-X O I-Y"]), Scheme::Iob1);
        assert_eq!(detect(&["I-X I-Y B-Y"]), Scheme::Iob1);
        // Any B-X elsewhere means IOB2, whatever I- starts there are.
        assert_eq!(detect(&["B-X I-Y"]), Scheme::Iob2);
        assert_eq!(detect(&["B-X I-X", "O B-X", "O I-X"]), Scheme::Iob2);
        assert_eq!(detect(&["I-X O", "I-Y B-X"]), Scheme::Iob2);
        assert_eq!(detect(&["B-X I-X O B-Y"]), Scheme::Iob2);
        assert_eq!(detect(&["B-X B-X", "O"]), Scheme::Iob2);
        assert_eq!(detect(&["O O", "O"]), Scheme::None);
        assert_eq!(detect(&["DT NN VBZ"]), Scheme::None);
        assert_eq!(detect(&[]), Scheme::None);
        // The previous sentence does not carry over.
        assert_eq!(detect(&["I-X B-X", "B-X"]), Scheme::Iob2);
    }

    fn detector(sentences: &[&str]) -> Detector {
        Detector::of(sentences.iter().map(|s| labels(s)))
    }

    fn finding(
        count: usize,
        sentence: usize,
        token: usize,
        what: &str,
    ) -> Finding {
        Finding { count, site: Site { sentence, token }, what: what.into() }
    }

    #[test]
    fn stray_inside_starts_in_iob2_are_counted_with_the_first() {
        // One B-PLACE after O turned into I-PLACE, twice.
        let d = detector(&[
            "O B-PER O B-PLACE",
            "O B-PER I-PER O I-PLACE",
            "I-PLACE O",
            "B-PER O I-PLACE I-PLACE",
        ]);
        assert_eq!(
            d.detection(),
            Detection {
                scheme: Scheme::Iob2,
                invalid: Some(finding(3, 1, 4, "I-PLACE after O")),
            }
        );
        assert_eq!(d.check(Scheme::Iob2), Ok(d.detection()));
        // Clean IOB2 and IOB1 have nothing to warn about.
        let clean = detector(&["B-X I-X O B-Y", "O B-X B-X"]);
        assert_eq!(clean.detection().invalid, None);
        let iob1 = detector(&["I-X I-X B-X O I-Y"]);
        assert_eq!(
            iob1.detection(),
            Detection { scheme: Scheme::Iob1, invalid: None }
        );
        let start = detector(&["O", "I-Y O B-X"]);
        assert_eq!(
            start.detection().invalid,
            Some(finding(1, 1, 0, "I-Y at a sentence start"))
        );
        let other = detector(&["B-X I-Y"]);
        assert_eq!(
            other.detection().invalid,
            Some(finding(1, 0, 1, "I-Y after B-X"))
        );
    }

    #[test]
    fn labels_invalid_in_iobes_name_the_label_at_fault() {
        let d = detector(&["S-X B-Y E-Y", "B-X O", "O I-X E-X", "O B-Y"]);
        assert_eq!(
            d.detection(),
            Detection {
                scheme: Scheme::Iobes,
                invalid: Some(finding(3, 1, 0, "B-X followed by O")),
            }
        );
        let end = detector(&["O B-Y"]);
        assert_eq!(
            end.check(Scheme::Iobes).unwrap_err().first,
            finding(1, 0, 1, "B-Y at the end of a sentence")
        );
        let start = detector(&["O E-Y", "S-X"]);
        assert_eq!(
            start.detection().invalid,
            Some(finding(1, 0, 1, "E-Y after O"))
        );
    }

    /// `given` on `sentences`: the contradiction's found scheme and first
    /// label, as `found: what @ sentence.token`.
    fn contradiction(sentences: &[&str], given: Scheme) -> String {
        match detector(sentences).check(given) {
            Ok(d) => format!("ok {}", d.scheme),
            Err(c) => {
                assert_eq!(c.given, given);
                format!(
                    "{}: {} @ {}.{}",
                    c.found,
                    c.first.what,
                    c.first.site.sentence,
                    c.first.site.token
                )
            }
        }
    }

    #[test]
    fn every_contradicted_pair_of_schemes() {
        use Scheme::{Iob1, Iob2, Iobes};
        let iob1 = ["O I-X I-X", "I-Y B-Y O"];
        let iob2 = ["O O", "O B-X I-X O B-Y"];
        let iobes = ["O B-X E-X", "O S-Y O"];
        // IOB1 labels.
        assert_eq!(contradiction(&iob1, Iob1), "ok iob1");
        assert_eq!(contradiction(&iob1, Iob2), "iob1: I-X after O @ 0.1");
        assert_eq!(contradiction(&iob1, Iobes), "iob1: I-X after O @ 0.1");
        // IOB2 labels: B-X followed by O needs S-X in IOBES.
        assert_eq!(contradiction(&iob2, Iob2), "ok iob2");
        assert_eq!(contradiction(&iob2, Iob1), "iob2: B-X after O @ 1.1");
        assert_eq!(
            contradiction(&iob2, Iobes),
            "iob2: I-X followed by O @ 1.2"
        );
        assert_eq!(
            contradiction(&["B-X O"], Iobes),
            "iob2: B-X followed by O @ 0.0"
        );
        // IOBES labels.
        assert_eq!(contradiction(&iobes, Iobes), "ok iobes");
        assert_eq!(contradiction(&iobes, Iob1), "iobes: E-X @ 0.2");
        assert_eq!(contradiction(&iobes, Iob2), "iobes: E-X @ 0.2");
        // None given, or no chunk labels: nothing to contradict.
        for labels in [&iob1, &iob2, &iobes] {
            assert_eq!(contradiction(labels, Scheme::None), "ok none");
        }
        for given in [Iob1, Iob2, Iobes] {
            assert_eq!(
                contradiction(&["DT NN", "O"], given),
                format!("ok {given}")
            );
        }
        // A given scheme keeps its own warning.
        let stray = detector(&["O B-X", "O I-X"]).check(Iob2).unwrap();
        assert_eq!(stray.invalid, Some(finding(1, 1, 1, "I-X after O")));
        let err = detector(&iob2).check(Iobes).unwrap_err();
        assert_eq!(
            err.to_string(),
            "I-X followed by O contradicts scheme iobes (iobes starts every \
             chunk with B- or S- and ends it with E- or S-; the labels read \
             as iob2)"
        );
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
