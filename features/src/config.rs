//! The feature config: which templates an [`Extractor`] emits, read
//! from TOML and checked once.
//!
//! A config file has two top-level keys, `min_count` and `iobes`, the
//! switch `boundary_markers`, and two tables, `[clusters]` for the
//! features of cluster paths and `[lexical]` for the features of the
//! words themselves. Every key may be left out and takes the default
//! documented on its field; a key this build does not know is an error
//! that names it, so a misspelt switch cannot be silently ignored.
//!
//! [`FeatureConfig`] is the plain deserialised form;
//! [`FeatureConfig::check`] validates it into a [`CheckedConfig`], which
//! is what the extractor takes. A checked config serialises as the plain one and
//! checks again when deserialised, so a model file that embeds it cannot
//! smuggle in a bad value.
//!
//! [`Extractor`]: crate::Extractor

use std::{ops::RangeInclusive, path::Path};

use serde::{Deserialize, Serialize};

use crate::error::{Error, Result};

/// The offsets a window may reach, left and right of the current token.
pub const MAX_OFFSET: i32 = 5;

/// The most `lexical.char_prefix_max` and `lexical.char_suffix_max` may
/// be. An affix of 10 characters is already longer than most words (so
/// longer ones mostly repeat the `w=` feature), and the bound keeps the
/// affix features of any token, however long (a 4,000-character URL),
/// at no more than 2 × 10 strings of at most 10 characters: without it a
/// token of n characters gave n prefixes of up to n characters, O(n²)
/// bytes. Taggers of the trade use affixes of up to 4 to 6 characters
/// (common practice; no source).
pub const MAX_AFFIX_LENGTH: usize = 10;

/// A feature config as written in a TOML file, before it is checked.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct FeatureConfig {
    /// Features seen fewer than this many times in the training
    /// sentences are dropped from the feature index. At least 1.
    /// Default: 1 (keep everything).
    pub min_count: u64,
    /// Whether the tagger trains on IOBES labels internally (converting
    /// IOB input and converting back on output). This crate only carries
    /// the switch. Default: true; POS configs set it to false.
    pub iobes: bool,
    /// Whether a window position before the first token or after the
    /// last emits a marker feature (`w[-2]:start`, `path[+1]:end`).
    /// Without them, such positions emit nothing. Applies to the
    /// neighbouring words and to the path window. Default: true.
    pub boundary_markers: bool,
    /// Features of the words' cluster paths.
    pub clusters: ClusterFeatures,
    /// Features of the words themselves.
    pub lexical: LexicalFeatures,
    /// Further cluster sets (`[[cluster_sets]]`), each with its own
    /// name, prefix lengths and window; their features are those of
    /// `[clusters]` with the set's name and a dot before them
    /// (`lower.p4[0]=0110`). Default: none.
    pub cluster_sets: Vec<ClusterSet>,
    /// Input columns other than the token and the label as features
    /// (`[[columns]]`). Default: none.
    pub columns: Vec<ColumnFeatures>,
    /// Features that join two or three atomic values into one
    /// (`[[conjunctions]]`). Default: none.
    pub conjunctions: Vec<Conjunction>,
}

impl Default for FeatureConfig {
    fn default() -> FeatureConfig {
        FeatureConfig {
            min_count: 1,
            iobes: true,
            boundary_markers: true,
            clusters: ClusterFeatures::default(),
            lexical: LexicalFeatures::default(),
            cluster_sets: Vec::new(),
            columns: Vec::new(),
            conjunctions: Vec::new(),
        }
    }
}

/// The `[clusters]` table: features from the bit-string path of each
/// word's class in the cluster hierarchy.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct ClusterFeatures {
    /// `true` requires clusters (setting up an extractor without them is
    /// an error), `false` turns cluster features off even when clusters
    /// are given, and leaving the key out uses them exactly when they
    /// are given. Default: left out.
    pub enabled: Option<bool>,
    /// The path prefix lengths, in bits, each a feature at every window
    /// position. A length beyond a path's length takes the whole path.
    /// Each at least 1, no repeats. Default: `[4, 6, 10, 20]`.
    pub prefix_lengths: Vec<usize>,
    /// Also emit the whole path at every window position. Default: false.
    pub whole_path: bool,
    /// The window: offsets from the current token whose paths are
    /// features, each within −5..=5, no repeats. Default: `[-1, 0, 1]`.
    pub window: Vec<i32>,
}

impl Default for ClusterFeatures {
    fn default() -> ClusterFeatures {
        ClusterFeatures {
            enabled: None,
            prefix_lengths: vec![4, 6, 10, 20],
            whole_path: false,
            window: vec![-1, 0, 1],
        }
    }
}

/// The `[lexical]` table: features of the words' spelling and of the
/// neighbouring words. Every template has its own switch.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct LexicalFeatures {
    /// The word as written (`w=`). Default: true.
    pub word: bool,
    /// The word lowercased (`lw=`). Default: true.
    pub lowercase: bool,
    /// The word's first 1, 2, … characters (`pre1=` …). Default: true.
    pub char_prefixes: bool,
    /// The longest character prefix emitted. At least 1, at most
    /// [`MAX_AFFIX_LENGTH`] (10). Default: 4.
    pub char_prefix_max: usize,
    /// The word's last 1, 2, … characters (`suf1=` …). Default: true.
    pub char_suffixes: bool,
    /// The longest character suffix emitted. At least 1, at most
    /// [`MAX_AFFIX_LENGTH`] (10). Default: 4.
    pub char_suffix_max: usize,
    /// The word's shape class (`shape=`): capitals become `X`, lowercase
    /// letters `x`, other letters `a`, digits `d`, anything else stays,
    /// and runs of one class collapse (`McDonald's` → `XxXx'x`).
    /// Default: true.
    pub shape: bool,
    /// Capitalisation flags: `initcap` (first character a capital),
    /// `allcaps` (letters, none lowercase), `hascap` (some capital),
    /// `mixedcap` (a capital after the first character and a lowercase
    /// letter). Default: true.
    pub case_flags: bool,
    /// Character-class flags: `hasdigit`, `alldigits`, `hashyphen`,
    /// `allpunct` (every character punctuation). Default: true.
    pub char_flags: bool,
    /// The neighbouring words at [`LexicalFeatures::neighbour_offsets`]
    /// (`w[-1]=` …). Default: true.
    pub neighbours: bool,
    /// The offsets of the neighbouring words, each within −5..=5, not 0
    /// (that is the word itself), no repeats. Default: `[-2, -1, 1, 2]`.
    pub neighbour_offsets: Vec<i32>,
}

impl Default for LexicalFeatures {
    fn default() -> LexicalFeatures {
        LexicalFeatures {
            word: true,
            lowercase: true,
            char_prefixes: true,
            char_prefix_max: 4,
            char_suffixes: true,
            char_suffix_max: 4,
            shape: true,
            case_flags: true,
            char_flags: true,
            neighbours: true,
            neighbour_offsets: vec![-2, -1, 1, 2],
        }
    }
}

/// One `[[cluster_sets]]` entry: a further set of clusters, given to
/// the tools as `--clusters NAME=DIR`, with the keys of `[clusters]`.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ClusterSet {
    /// The set's name: the part before the dot of its features and the
    /// name that supplies its directory. Required; see [`check_name`]
    /// for the allowed names.
    pub name: String,
    /// As `clusters.enabled`, for this set. Default: left out.
    #[serde(default)]
    pub enabled: Option<bool>,
    /// As `clusters.prefix_lengths`. Default: `[4, 6, 10, 20]`.
    #[serde(default = "default_prefix_lengths")]
    pub prefix_lengths: Vec<usize>,
    /// As `clusters.whole_path`. Default: false.
    #[serde(default)]
    pub whole_path: bool,
    /// As `clusters.window`. Default: `[-1, 0, 1]`.
    #[serde(default = "default_window")]
    pub window: Vec<i32>,
}

impl ClusterSet {
    /// The set's keys as a `[clusters]` table.
    pub fn as_clusters(&self) -> ClusterFeatures {
        ClusterFeatures {
            enabled: self.enabled,
            prefix_lengths: self.prefix_lengths.clone(),
            whole_path: self.whole_path,
            window: self.window.clone(),
        }
    }
}

fn default_prefix_lengths() -> Vec<usize> {
    ClusterFeatures::default().prefix_lengths
}

fn default_window() -> Vec<i32> {
    ClusterFeatures::default().window
}

/// One `[[columns]]` entry: an input column (a part-of-speech tag, a
/// chunk tag, a predicted label) whose values are features.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ColumnFeatures {
    /// The features' key (`pos[-1]=DT`) and the name conjunctions use.
    /// Required; see [`check_name`].
    pub name: String,
    /// The column, 1-based, negative counting from the end (`-1` is the
    /// last), as the tools' `--token-column`. Required, not 0; it may
    /// not be the label column.
    pub column: i64,
    /// Offsets whose value is a feature of the current token
    /// (`pos[-1]=DT`), each within −5..=5, no repeats. Default: `[0]`.
    #[serde(default = "zero_window")]
    pub window: Vec<i32>,
    /// Runs of adjacent offsets whose values joined are a feature
    /// (`[-1, 0]` gives `pos[-1,0]=DT|NN`): each 2 or 3 consecutive
    /// ascending offsets within −5..=5, no repeats. Default: none.
    #[serde(default)]
    pub ngrams: Vec<Vec<i32>>,
}

fn zero_window() -> Vec<i32> {
    vec![0]
}

/// One `[[conjunctions]]` entry: two or three atomic values of tokens
/// joined into one feature (`NAME=value|value`).
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Conjunction {
    /// The feature's key. Required; see [`check_name`].
    pub name: String,
    /// Two or three parts, each `KIND[OFFSET]` (the offset may be left
    /// out for 0): `word`, `lower`, `shape`, `preN`, `sufN` (the first
    /// or last N characters), `pN` (the N-bit prefix of the path in
    /// `[clusters]`), `path` (the whole path), `SET.pN` and `SET.path`
    /// (a cluster set's), or the name of a `[[columns]]` entry; offsets
    /// within −5..=5.
    pub parts: Vec<String>,
}

/// Where a conjunction part takes its value from.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum AtomKind {
    /// The word as written.
    Word,
    /// The word lowercased.
    Lower,
    /// The word's shape class.
    Shape,
    /// The word's first N characters.
    Prefix(usize),
    /// The word's last N characters.
    Suffix(usize),
    /// The N-bit prefix of a path (`None` length: the whole path) in the
    /// cluster set with this index: 0 is `[clusters]`, `k` is
    /// `cluster_sets[k - 1]`.
    Path {
        /// The set: 0 for `[clusters]`, `k` for `cluster_sets[k - 1]`.
        set: usize,
        /// The prefix length in bits, or `None` for the whole path.
        bits: Option<usize>,
    },
    /// The value of the `[[columns]]` entry with this index.
    Column(usize),
}

/// A conjunction part, parsed.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Atom {
    /// Where the value comes from.
    pub kind: AtomKind,
    /// The offset from the current token.
    pub offset: i32,
}

/// The keys of the built-in templates and conjunction kinds, which a
/// name may not take.
const RESERVED: &[&str] = &[
    "bias",
    "w",
    "lw",
    "shape",
    "path",
    "word",
    "lower",
    "initcap",
    "allcaps",
    "hascap",
    "mixedcap",
    "hasdigit",
    "alldigits",
    "hashyphen",
    "allpunct",
];

/// Checks a name of a cluster set, a column or a conjunction: an ASCII
/// letter, then letters, digits, `_` or `-`; at most 32 characters; not
/// a built-in key (`w`, `lw`, `shape`, `path`, `word`, `lower`, `bias`,
/// the flags) and not `p`, `pre` or `suf` followed by digits, so that no
/// two templates can give the same feature string.
pub fn check_name(name: &str) -> std::result::Result<(), String> {
    let mut chars = name.chars();
    if !chars.next().is_some_and(|c| c.is_ascii_alphabetic())
        || !chars.all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-')
        || name.len() > 32
    {
        return Err(format!(
            "{name:?}: a name is an ASCII letter, then up to 31 letters, \
             digits, _ or -"
        ));
    }
    let numbered = ["pre", "suf", "p"].iter().any(|k| {
        name.strip_prefix(k).is_some_and(|rest| {
            !rest.is_empty() && rest.bytes().all(|b| b.is_ascii_digit())
        })
    });
    if RESERVED.contains(&name) || numbered {
        return Err(format!("{name:?} is the key of a built-in feature"));
    }
    Ok(())
}

impl FeatureConfig {
    /// Parses a conjunction part such as `pos[-1]`, `word`, `p4[+1]` or
    /// `lc.p6[0]` against this config's columns and cluster sets.
    pub fn parse_atom(&self, part: &str) -> std::result::Result<Atom, String> {
        let (kind, offset) = match part.split_once('[') {
            None => (part, 0),
            Some((kind, rest)) => {
                let Some(off) = rest.strip_suffix(']') else {
                    return Err(format!("{part:?}: expected KIND[OFFSET]"));
                };
                let off = off.strip_prefix('+').unwrap_or(off);
                let off: i32 = off.parse().map_err(|_| {
                    format!("{part:?}: the offset is not an integer")
                })?;
                (kind, off)
            }
        };
        if !(-MAX_OFFSET..=MAX_OFFSET).contains(&offset) {
            return Err(format!(
                "{part:?}: offset {offset} is outside {}..={MAX_OFFSET}",
                -MAX_OFFSET
            ));
        }
        let number = |rest: &str| -> Option<usize> {
            if rest.is_empty() || !rest.bytes().all(|b| b.is_ascii_digit()) {
                return None;
            }
            rest.parse().ok().filter(|&n| n >= 1)
        };
        let path_atom = |set: usize, what: &str| -> Option<AtomKind> {
            if what == "path" {
                return Some(AtomKind::Path { set, bits: None });
            }
            let bits = number(what.strip_prefix('p')?)?;
            Some(AtomKind::Path { set, bits: Some(bits) })
        };
        let kind = if let Some((set, what)) = kind.split_once('.') {
            let k = self
                .cluster_sets
                .iter()
                .position(|s| s.name == set)
                .ok_or_else(|| {
                    format!("{part:?}: there is no cluster set {set:?}")
                })?;
            path_atom(k + 1, what).ok_or_else(|| {
                format!("{part:?}: a cluster set gives pN or path")
            })?
        } else if kind == "word" {
            AtomKind::Word
        } else if kind == "lower" {
            AtomKind::Lower
        } else if kind == "shape" {
            AtomKind::Shape
        } else if let Some(k) =
            self.columns.iter().position(|c| c.name == kind)
        {
            AtomKind::Column(k)
        } else if let Some(n) = kind.strip_prefix("pre").and_then(number) {
            AtomKind::Prefix(n)
        } else if let Some(n) = kind.strip_prefix("suf").and_then(number) {
            AtomKind::Suffix(n)
        } else if let Some(atom) = path_atom(0, kind) {
            atom
        } else {
            return Err(format!(
                "{part:?}: unknown feature {kind:?} (word, lower, shape, \
                 preN, sufN, pN, path, SET.pN, SET.path or a [[columns]] \
                 name)"
            ));
        };
        Ok(Atom { kind, offset })
    }

    /// Parses a config from TOML text. Unknown keys, values of the wrong
    /// type and TOML syntax errors are [`Error::Parse`] with the line.
    pub fn from_toml(text: &str) -> Result<FeatureConfig> {
        toml::from_str(text).map_err(|e| parse_error(None, text, &e))
    }

    /// Reads and parses the config file at `path`; errors name it.
    pub fn read(path: &Path) -> Result<FeatureConfig> {
        let text = std::fs::read_to_string(path).map_err(|e| {
            if e.kind() == std::io::ErrorKind::InvalidData {
                Error::Parse {
                    path: Some(path.to_path_buf()),
                    line: None,
                    message: "not valid UTF-8".to_string(),
                }
            } else {
                Error::Io { path: path.to_path_buf(), source: e }
            }
        })?;
        toml::from_str(&text).map_err(|e| parse_error(Some(path), &text, &e))
    }

    /// The config as TOML text, every key written out.
    pub fn to_toml(&self) -> String {
        // Plain structs of numbers, booleans and lists always serialise.
        toml::to_string(self).unwrap_or_default()
    }

    /// Validates every field, returning the checked config or an
    /// [`Error::InvalidField`] naming the first bad one.
    pub fn check(self) -> Result<CheckedConfig> {
        if self.min_count == 0 {
            return Err(Error::invalid(
                "min_count",
                "must be at least 1, got 0".to_string(),
            ));
        }
        check_cluster_keys("clusters", &self.clusters)?;
        let l = &self.lexical;
        if l.char_prefix_max == 0 {
            return Err(Error::invalid(
                "lexical.char_prefix_max",
                "must be at least 1, got 0 (set lexical.char_prefixes = \
                 false to turn them off)"
                    .to_string(),
            ));
        }
        if l.char_suffix_max == 0 {
            return Err(Error::invalid(
                "lexical.char_suffix_max",
                "must be at least 1, got 0 (set lexical.char_suffixes = \
                 false to turn them off)"
                    .to_string(),
            ));
        }
        for (key, max) in [
            ("lexical.char_prefix_max", l.char_prefix_max),
            ("lexical.char_suffix_max", l.char_suffix_max),
        ] {
            if max > MAX_AFFIX_LENGTH {
                return Err(Error::invalid(
                    key,
                    format!(
                        "must be at most {MAX_AFFIX_LENGTH}, got {max} (longer \
                         affixes mostly repeat the word itself)"
                    ),
                ));
            }
        }
        offsets_in_range(
            "lexical.neighbour_offsets",
            &l.neighbour_offsets,
            -MAX_OFFSET..=MAX_OFFSET,
        )?;
        if l.neighbour_offsets.contains(&0) {
            return Err(Error::invalid(
                "lexical.neighbour_offsets",
                "0 is the word itself (see lexical.word)".to_string(),
            ));
        }
        no_repeats("lexical.neighbour_offsets", &l.neighbour_offsets)?;
        self.check_extras()?;
        Ok(CheckedConfig(self))
    }

    /// Checks `[[cluster_sets]]`, `[[columns]]` and `[[conjunctions]]`.
    fn check_extras<'a>(&'a self) -> Result<()> {
        let mut names: Vec<&str> = Vec::new();
        let mut new_name = |key: String, value: &'a str| -> Result<()> {
            check_name(value).map_err(|r| Error::invalid(key.clone(), r))?;
            if names.contains(&value) {
                return Err(Error::invalid(
                    key,
                    format!(
                        "{value:?} is already the name of another cluster \
                         set, column or conjunction"
                    ),
                ));
            }
            names.push(value);
            Ok(())
        };
        for (k, set) in self.cluster_sets.iter().enumerate() {
            let key = format!("cluster_sets[{k}]");
            new_name(format!("{key}.name"), &set.name)?;
            check_cluster_keys(&key, &set.as_clusters())?;
        }
        let mut columns: Vec<i64> = Vec::new();
        for (k, c) in self.columns.iter().enumerate() {
            let key = format!("columns[{k}]");
            new_name(format!("{key}.name"), &c.name)?;
            if c.column == 0 {
                return Err(Error::invalid(
                    format!("{key}.column"),
                    "0 is no column (1 is the first, -1 the last)".into(),
                ));
            }
            if columns.contains(&c.column) {
                return Err(Error::invalid(
                    format!("{key}.column"),
                    format!("column {} is read by another entry", c.column),
                ));
            }
            columns.push(c.column);
            let window = format!("{key}.window");
            offsets_in_range(&window, &c.window, -MAX_OFFSET..=MAX_OFFSET)?;
            no_repeats(&window, &c.window)?;
            let ngrams = format!("{key}.ngrams");
            for (j, g) in c.ngrams.iter().enumerate() {
                offsets_in_range(&ngrams, g, -MAX_OFFSET..=MAX_OFFSET)?;
                if !(2..=3).contains(&g.len())
                    || g.windows(2).any(|w| w[1] != w[0] + 1)
                {
                    return Err(Error::invalid(
                        ngrams,
                        format!(
                            "{g:?}: an n-gram is 2 or 3 consecutive \
                             ascending offsets, such as [-1, 0]"
                        ),
                    ));
                }
                if c.ngrams[..j].contains(g) {
                    return Err(Error::invalid(
                        ngrams,
                        format!("{g:?} appears twice"),
                    ));
                }
            }
            if c.window.is_empty() && c.ngrams.is_empty() {
                return Err(Error::invalid(
                    window,
                    "empty, and there are no ngrams: the column gives no \
                     feature"
                        .into(),
                ));
            }
        }
        for (k, c) in self.conjunctions.iter().enumerate() {
            let key = format!("conjunctions[{k}]");
            new_name(format!("{key}.name"), &c.name)?;
            let parts = format!("{key}.parts");
            if !(2..=3).contains(&c.parts.len()) {
                return Err(Error::invalid(
                    parts,
                    format!(
                        "{} parts: a conjunction joins 2 or 3",
                        c.parts.len()
                    ),
                ));
            }
            let mut atoms = Vec::new();
            for part in &c.parts {
                let atom = self
                    .parse_atom(part)
                    .map_err(|r| Error::invalid(parts.clone(), r))?;
                if atoms.contains(&atom) {
                    return Err(Error::invalid(
                        parts,
                        format!("{part:?} appears twice"),
                    ));
                }
                atoms.push(atom);
            }
        }
        Ok(())
    }
}

/// Checks the keys of a `[clusters]` table or a cluster set; `table`
/// names it in errors.
fn check_cluster_keys(table: &str, c: &ClusterFeatures) -> Result<()> {
    let key = |k: &str| format!("{table}.{k}");
    let clusters_on = c.enabled != Some(false);
    if let Some(&bad) = c.prefix_lengths.iter().find(|&&n| n == 0) {
        return Err(Error::invalid(
            key("prefix_lengths"),
            format!("each length must be at least 1, got {bad}"),
        ));
    }
    no_repeats(&key("prefix_lengths"), &c.prefix_lengths)?;
    if clusters_on && c.prefix_lengths.is_empty() && !c.whole_path {
        return Err(Error::invalid(
            key("prefix_lengths"),
            format!(
                "empty, and whole_path is false: no cluster feature \
                     is left (set {table}.enabled = false to turn them off)"
            ),
        ));
    }
    offsets_in_range(&key("window"), &c.window, -MAX_OFFSET..=MAX_OFFSET)?;
    no_repeats(&key("window"), &c.window)?;
    if clusters_on && c.window.is_empty() {
        return Err(Error::invalid(
            key("window"),
            format!(
                "empty: no cluster feature is left (set \
                     {table}.enabled = false to turn them off)"
            ),
        ));
    }
    Ok(())
}

fn offsets_in_range(
    field: &str,
    offsets: &[i32],
    range: RangeInclusive<i32>,
) -> Result<()> {
    match offsets.iter().find(|o| !range.contains(o)) {
        Some(bad) => Err(Error::invalid(
            field,
            format!(
                "offset {bad} is outside {}..={}",
                range.start(),
                range.end()
            ),
        )),
        None => Ok(()),
    }
}

fn no_repeats<T: PartialEq + std::fmt::Display>(
    field: &str,
    values: &[T],
) -> Result<()> {
    for (i, v) in values.iter().enumerate() {
        if values[..i].contains(v) {
            return Err(Error::invalid(field, format!("{v} appears twice")));
        }
    }
    Ok(())
}

fn parse_error(path: Option<&Path>, text: &str, e: &toml::de::Error) -> Error {
    let line = e.span().map(|span| {
        let start = span.start.min(text.len());
        text.as_bytes()[..start].iter().filter(|&&b| b == b'\n').count() as u64
            + 1
    });
    Error::Parse {
        path: path.map(Path::to_path_buf),
        line,
        message: e.message().trim_end().replace('\n', " "),
    }
}

/// A [`FeatureConfig`] that passed [`FeatureConfig::check`].
///
/// It serialises as the plain config, and deserialising checks it again.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(into = "FeatureConfig", try_from = "FeatureConfig")]
pub struct CheckedConfig(FeatureConfig);

impl CheckedConfig {
    /// The checked values.
    pub fn get(&self) -> &FeatureConfig {
        &self.0
    }

    /// The plain config back.
    pub fn into_inner(self) -> FeatureConfig {
        self.0
    }
}

impl std::ops::Deref for CheckedConfig {
    type Target = FeatureConfig;

    fn deref(&self) -> &FeatureConfig {
        &self.0
    }
}

impl From<CheckedConfig> for FeatureConfig {
    fn from(c: CheckedConfig) -> FeatureConfig {
        c.0
    }
}

impl TryFrom<FeatureConfig> for CheckedConfig {
    type Error = Error;

    fn try_from(c: FeatureConfig) -> Result<CheckedConfig> {
        c.check()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn shipped(name: &str) -> FeatureConfig {
        let path = Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("../configs")
            .join(name);
        FeatureConfig::read(&path).unwrap_or_else(|e| panic!("{e}"))
    }

    #[test]
    fn a_very_long_token_gets_boundedly_many_and_short_features() {
        let mut config = FeatureConfig::default();
        config.lexical.char_prefix_max = MAX_AFFIX_LENGTH;
        config.lexical.char_suffix_max = MAX_AFFIX_LENGTH;
        let err = {
            let mut c = config.clone();
            c.lexical.char_prefix_max = MAX_AFFIX_LENGTH + 1;
            c.check().unwrap_err().to_string()
        };
        assert!(err.contains("must be at most 10, got 11"), "{err}");
        let extractor =
            crate::Extractor::new(config.check().unwrap(), None).unwrap();
        let features = |token: &str| {
            let mut out = crate::Features::new();
            extractor.extract(&[token], &mut out);
            out.token(0).map(String::from).collect::<Vec<String>>()
        };
        let long = "é".repeat(4000);
        let (short, long) = (features(&"é".repeat(12)), features(&long));
        assert_eq!(short.len(), long.len(), "{long:?}");
        let affix_bytes: usize = long
            .iter()
            .filter(|f| f.starts_with("pre") || f.starts_with("suf"))
            .map(String::len)
            .sum();
        // 20 affixes of at most 10 two-byte characters and their names.
        assert!(
            affix_bytes <= 2 * MAX_AFFIX_LENGTH * (6 + 2 * MAX_AFFIX_LENGTH)
        );
    }

    #[test]
    fn every_shipped_config_loads_and_checks() {
        for name in [
            "ner.toml",
            "ner-no-clusters.toml",
            "pos.toml",
            "pos-no-clusters.toml",
            "chunk.toml",
            "chunk-no-clusters.toml",
        ] {
            shipped(name).check().unwrap_or_else(|e| panic!("{name}: {e}"));
        }
    }

    #[test]
    fn shipped_baselines_differ_only_in_cluster_use() {
        for (with, without) in [
            ("ner.toml", "ner-no-clusters.toml"),
            ("pos.toml", "pos-no-clusters.toml"),
            ("chunk.toml", "chunk-no-clusters.toml"),
        ] {
            let with = shipped(with);
            let mut without = shipped(without);
            assert_eq!(with.clusters.enabled, Some(true));
            assert_eq!(without.clusters.enabled, Some(false));
            without.clusters = with.clusters.clone();
            assert_eq!(with, without);
        }
        assert!(shipped("ner.toml").iobes);
        assert!(!shipped("pos.toml").iobes);
    }

    #[test]
    fn the_ner_config_spells_out_the_defaults() {
        let mut ner = shipped("ner.toml");
        assert_eq!(ner.clusters.enabled, Some(true));
        ner.clusters.enabled = None;
        assert_eq!(ner, FeatureConfig::default());
    }

    #[test]
    fn an_empty_file_is_the_default() {
        assert_eq!(
            FeatureConfig::from_toml("").unwrap(),
            FeatureConfig::default()
        );
        FeatureConfig::default().check().unwrap();
    }

    #[test]
    fn unknown_keys_are_rejected_by_name() {
        let e = FeatureConfig::from_toml("min_count = 2\nmin_cuont = 3\n")
            .unwrap_err();
        let message = e.to_string();
        assert!(message.contains("min_cuont"), "{message}");
        assert!(message.starts_with("2: "), "{message}");
        assert!(!message.contains('\n'), "{message}");

        let e = FeatureConfig::from_toml("[lexical]\nshapes = false\n")
            .unwrap_err();
        assert!(e.to_string().contains("shapes"), "{e}");
        let e = FeatureConfig::from_toml("[cluster]\n").unwrap_err();
        assert!(e.to_string().contains("cluster"), "{e}");
    }

    #[test]
    fn wrong_types_are_parse_errors_with_the_line() {
        let e = FeatureConfig::from_toml(
            "[clusters]\nwhole_path = true\nprefix_lengths = [-4]\n",
        )
        .unwrap_err();
        assert!(matches!(e, Error::Parse { line: Some(3), .. }), "{e:?}");
        let e = FeatureConfig::from_toml("iobes = \"yes\"\n").unwrap_err();
        assert!(matches!(e, Error::Parse { line: Some(1), .. }), "{e:?}");
        let e = FeatureConfig::from_toml("iobes = \n").unwrap_err();
        assert!(matches!(e, Error::Parse { .. }), "{e:?}");
    }

    #[test]
    fn read_names_the_file() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("bad.toml");
        std::fs::write(&path, "[lexical]\nword = true\nwrod = 1\n").unwrap();
        let message = FeatureConfig::read(&path).unwrap_err().to_string();
        assert!(message.contains("bad.toml:3: "), "{message}");
        assert!(message.contains("wrod"), "{message}");
        std::fs::write(&path, b"min_count = 1 # \xff\n").unwrap();
        let message = FeatureConfig::read(&path).unwrap_err().to_string();
        assert!(message.contains("bad.toml: not valid UTF-8"), "{message}");
        let missing = dir.path().join("missing.toml");
        let e = FeatureConfig::read(&missing).unwrap_err();
        assert!(matches!(e, Error::Io { .. }), "{e:?}");
    }

    /// Applies `edit` to the default config and returns the field that
    /// `check` refuses.
    fn rejected(edit: impl FnOnce(&mut FeatureConfig)) -> String {
        let mut c = FeatureConfig::default();
        edit(&mut c);
        match c.check() {
            Err(Error::InvalidField { field, .. }) => field,
            other => panic!("expected a refused field, got {other:?}"),
        }
    }

    #[test]
    fn check_names_each_bad_field() {
        assert_eq!(rejected(|c| c.min_count = 0), "min_count");
        assert_eq!(
            rejected(|c| c.clusters.prefix_lengths = vec![4, 0]),
            "clusters.prefix_lengths"
        );
        assert_eq!(
            rejected(|c| c.clusters.prefix_lengths = vec![4, 4]),
            "clusters.prefix_lengths"
        );
        assert_eq!(
            rejected(|c| c.clusters.prefix_lengths.clear()),
            "clusters.prefix_lengths"
        );
        assert_eq!(
            rejected(|c| c.clusters.window = vec![-6, 0]),
            "clusters.window"
        );
        assert_eq!(
            rejected(|c| c.clusters.window = vec![6]),
            "clusters.window"
        );
        assert_eq!(
            rejected(|c| c.clusters.window = vec![1, 1]),
            "clusters.window"
        );
        assert_eq!(rejected(|c| c.clusters.window.clear()), "clusters.window");
        assert_eq!(
            rejected(|c| c.lexical.char_prefix_max = 0),
            "lexical.char_prefix_max"
        );
        assert_eq!(
            rejected(|c| c.lexical.char_suffix_max = 0),
            "lexical.char_suffix_max"
        );
        assert_eq!(
            rejected(|c| c.lexical.char_prefix_max = MAX_AFFIX_LENGTH + 1),
            "lexical.char_prefix_max"
        );
        assert_eq!(
            rejected(|c| c.lexical.char_suffix_max = 4000),
            "lexical.char_suffix_max"
        );
        assert_eq!(
            rejected(|c| c.lexical.neighbour_offsets = vec![-5, 0]),
            "lexical.neighbour_offsets"
        );
        assert_eq!(
            rejected(|c| c.lexical.neighbour_offsets = vec![-7]),
            "lexical.neighbour_offsets"
        );
        assert_eq!(
            rejected(|c| c.lexical.neighbour_offsets = vec![2, 2]),
            "lexical.neighbour_offsets"
        );
    }

    #[test]
    fn check_accepts_the_edges() {
        let mut c = FeatureConfig::default();
        c.clusters.window = vec![-5, 5];
        c.lexical.neighbour_offsets = vec![-5, 5];
        c.clusters.prefix_lengths = vec![1];
        c.lexical.char_prefix_max = 1;
        c.lexical.char_suffix_max = 1;
        c.check().unwrap();
        // With clusters off, empty cluster lists are fine.
        let mut c = FeatureConfig::default();
        c.clusters.enabled = Some(false);
        c.clusters.prefix_lengths.clear();
        c.clusters.window.clear();
        c.check().unwrap();
        // The whole path alone is a cluster feature.
        let mut c = FeatureConfig::default();
        c.clusters.prefix_lengths.clear();
        c.clusters.whole_path = true;
        c.check().unwrap();
    }

    #[test]
    fn the_message_names_field_and_value() {
        let mut c = FeatureConfig::default();
        c.clusters.window = vec![0, 9];
        let message = c.check().unwrap_err().to_string();
        assert_eq!(
            message,
            "invalid clusters.window: offset 9 is outside -5..=5"
        );
    }

    #[test]
    fn toml_round_trip_and_checked_serde() {
        let mut c = FeatureConfig::default();
        c.clusters.enabled = Some(true);
        c.lexical.neighbour_offsets = vec![-1, 3];
        c.min_count = 3;
        let text = c.to_toml();
        assert_eq!(FeatureConfig::from_toml(&text).unwrap(), c);

        let checked = c.clone().check().unwrap();
        let json = serde_json::to_string(&checked).unwrap();
        let back: CheckedConfig = serde_json::from_str(&json).unwrap();
        assert_eq!(back, checked);
        let bad = json.replace("\"min_count\":3", "\"min_count\":0");
        assert_ne!(bad, json);
        let e = serde_json::from_str::<CheckedConfig>(&bad).unwrap_err();
        assert!(e.to_string().contains("min_count"), "{e}");
    }

    const EXTRAS: &str = r#"
        [[cluster_sets]]
        name = "lc"
        prefix_lengths = [2]
        window = [0]
        [[columns]]
        name = "pos"
        column = 2
        window = [-1, 0]
        ngrams = [[-1, 0], [-1, 0, 1]]
        [[conjunctions]]
        name = "wp"
        parts = ["word", "pos[-1]"]
        [[conjunctions]]
        name = "pc"
        parts = ["p4[-1]", "lc.p2[+1]", "suf3"]
    "#;

    #[test]
    fn extras_parse_and_check() {
        let c = FeatureConfig::from_toml(EXTRAS).unwrap();
        assert_eq!(c.columns[0].column, 2);
        assert_eq!(c.columns[0].ngrams, vec![vec![-1, 0], vec![-1, 0, 1]]);
        assert_eq!(c.cluster_sets[0].prefix_lengths, vec![2]);
        assert_eq!(c.cluster_sets[0].as_clusters().window, vec![0]);
        let atoms: Vec<Atom> = c.conjunctions[1]
            .parts
            .iter()
            .map(|p| c.parse_atom(p).unwrap())
            .collect();
        assert_eq!(
            atoms,
            [
                Atom {
                    kind: AtomKind::Path { set: 0, bits: Some(4) },
                    offset: -1
                },
                Atom {
                    kind: AtomKind::Path { set: 1, bits: Some(2) },
                    offset: 1
                },
                Atom { kind: AtomKind::Suffix(3), offset: 0 },
            ]
        );
        assert_eq!(
            c.parse_atom("pos[-1]").unwrap(),
            Atom { kind: AtomKind::Column(0), offset: -1 }
        );
        c.clone().check().unwrap();
        // Defaults of a column entry: the value at offset 0, no n-grams.
        let c = FeatureConfig::from_toml(
            "[[columns]]\nname = \"tag\"\ncolumn = -2\n",
        )
        .unwrap();
        assert_eq!(
            (c.columns[0].window.clone(), c.columns[0].ngrams.len()),
            (vec![0], 0)
        );
        // The TOML round trip keeps them.
        let c = FeatureConfig::from_toml(EXTRAS).unwrap();
        assert_eq!(FeatureConfig::from_toml(&c.to_toml()).unwrap(), c);
    }

    #[test]
    fn unknown_keys_in_the_new_tables_are_refused() {
        for (table, key) in [
            ("[[columns]]\nname = \"a\"\ncolumn = 2\n", "colum"),
            ("[[cluster_sets]]\nname = \"a\"\n", "prefixes"),
            ("[[conjunctions]]\nname = \"a\"\nparts = []\n", "part"),
        ] {
            let text = format!("{table}{key} = 1\n");
            let e = FeatureConfig::from_toml(&text).unwrap_err().to_string();
            assert!(e.contains(key), "{e}");
        }
        // name and column are required.
        let e = FeatureConfig::from_toml("[[columns]]\ncolumn = 2\n")
            .unwrap_err()
            .to_string();
        assert!(e.contains("name"), "{e}");
    }

    /// The refused field of `EXTRAS` with `from` replaced by `to`.
    fn extras_rejected(from: &str, to: &str) -> (String, String) {
        let text = EXTRAS.replacen(from, to, 1);
        assert_ne!(text, EXTRAS, "{from:?} not in the fixture");
        match FeatureConfig::from_toml(&text).unwrap().check() {
            Err(Error::InvalidField { field, reason }) => (field, reason),
            other => panic!("expected a refused field, got {other:?}"),
        }
    }

    #[test]
    fn check_names_each_bad_extra() {
        let cases = [
            (
                "\"word\", \"pos[-1]\"",
                "\"word\", \"tag[-1]\"",
                "conjunctions[0].parts",
                "unknown feature \"tag\"",
            ),
            (
                "\"lc.p2[+1]\"",
                "\"upper.p2[+1]\"",
                "conjunctions[1].parts",
                "no cluster set \"upper\"",
            ),
            ("\"suf3\"", "\"suf3[7]\"", "conjunctions[1].parts", "outside"),
            (
                "\"suf3\"",
                "\"suf0\"",
                "conjunctions[1].parts",
                "unknown feature",
            ),
            (
                "\"word\", \"pos[-1]\"",
                "\"word\"",
                "conjunctions[0].parts",
                "2 or 3",
            ),
            (
                "\"word\", \"pos[-1]\"",
                "\"word\", \"word[0]\"",
                "conjunctions[0].parts",
                "twice",
            ),
            (
                "column = 2",
                "column = 0",
                "columns[0].column",
                "0 is no column",
            ),
            (
                "window = [-1, 0]",
                "window = [-1, 9]",
                "columns[0].window",
                "outside",
            ),
            (
                "window = [-1, 0]\n        ngrams = [[-1, 0], [-1, 0, 1]]",
                "window = []",
                "columns[0].window",
                "no feature",
            ),
            (
                "[[-1, 0], [-1, 0, 1]]",
                "[[-1, 1]]",
                "columns[0].ngrams",
                "consecutive",
            ),
            (
                "[[-1, 0], [-1, 0, 1]]",
                "[[0]]",
                "columns[0].ngrams",
                "consecutive",
            ),
            (
                "[[-1, 0], [-1, 0, 1]]",
                "[[0, 1], [0, 1]]",
                "columns[0].ngrams",
                "twice",
            ),
            ("name = \"pos\"", "name = \"lc\"", "columns[0].name", "already"),
            ("name = \"pos\"", "name = \"p4\"", "columns[0].name", "built-in"),
            ("name = \"pos\"", "name = \"w\"", "columns[0].name", "built-in"),
            (
                "name = \"pos\"",
                "name = \"pos tag\"",
                "columns[0].name",
                "a name is",
            ),
            (
                "name = \"wp\"",
                "name = \"pos\"",
                "conjunctions[0].name",
                "already",
            ),
            (
                "prefix_lengths = [2]",
                "prefix_lengths = [0]",
                "cluster_sets[0].prefix_lengths",
                "at least 1",
            ),
            (
                "window = [0]",
                "window = []",
                "cluster_sets[0].window",
                "cluster_sets[0].enabled",
            ),
        ];
        for (from, to, field, reason) in cases {
            let got = extras_rejected(from, to);
            assert_eq!(got.0, field, "{to}: {}", got.1);
            assert!(got.1.contains(reason), "{to}: {}", got.1);
        }
    }

    #[test]
    fn names_are_checked() {
        for good in ["pos", "chunk-tag", "x2", "pre", "p", "Upos"] {
            check_name(good).unwrap();
        }
        for bad in [
            "",
            "2x",
            "a.b",
            "a=b",
            "a:b",
            "a[b",
            "w",
            "lw",
            "path",
            "p12",
            "pre3",
            "suf1",
            "bias",
            "initcap",
            &"x".repeat(33),
        ] {
            assert!(check_name(bad).is_err(), "{bad:?}");
        }
    }
}
