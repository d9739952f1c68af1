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
}

impl Default for FeatureConfig {
    fn default() -> FeatureConfig {
        FeatureConfig {
            min_count: 1,
            iobes: true,
            boundary_markers: true,
            clusters: ClusterFeatures::default(),
            lexical: LexicalFeatures::default(),
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

impl FeatureConfig {
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
        let c = &self.clusters;
        let clusters_on = c.enabled != Some(false);
        if let Some(&bad) = c.prefix_lengths.iter().find(|&&n| n == 0) {
            return Err(Error::invalid(
                "clusters.prefix_lengths",
                format!("each length must be at least 1, got {bad}"),
            ));
        }
        no_repeats("clusters.prefix_lengths", &c.prefix_lengths)?;
        if clusters_on && c.prefix_lengths.is_empty() && !c.whole_path {
            return Err(Error::invalid(
                "clusters.prefix_lengths",
                "empty, and whole_path is false: no cluster feature is \
                 left (set clusters.enabled = false to turn them off)"
                    .to_string(),
            ));
        }
        offsets_in_range(
            "clusters.window",
            &c.window,
            -MAX_OFFSET..=MAX_OFFSET,
        )?;
        no_repeats("clusters.window", &c.window)?;
        if clusters_on && c.window.is_empty() {
            return Err(Error::invalid(
                "clusters.window",
                "empty: no cluster feature is left (set clusters.enabled \
                 = false to turn them off)"
                    .to_string(),
            ));
        }
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
        Ok(CheckedConfig(self))
    }
}

fn offsets_in_range(
    field: &'static str,
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
    field: &'static str,
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
        ] {
            shipped(name).check().unwrap_or_else(|e| panic!("{name}: {e}"));
        }
    }

    #[test]
    fn shipped_baselines_differ_only_in_cluster_use() {
        for (with, without) in [
            ("ner.toml", "ner-no-clusters.toml"),
            ("pos.toml", "pos-no-clusters.toml"),
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
    fn rejected(edit: impl FnOnce(&mut FeatureConfig)) -> &'static str {
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
}
