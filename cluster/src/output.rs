//! The files of a cluster directory: writing a result and reading it
//! back.
//!
//! * `clusters.tsv`: header `word path class count` (tab-separated, as
//!   every row), then one row per
//!   clustered word by rank (count descending, then bytes ascending).
//! * `merges.tsv`: header `step child0 child1 parent ami_bits`, one row
//!   per merge; `parent` is `V + step`, words are nodes `0..V` by rank.
//! * `summary.json`: sizes, options, the AMI of the flat classes and
//!   [`FORMAT_VERSION`].
//!
//! Nothing in them depends on timing or on the number of threads.

use std::{
    fs::File,
    io::{BufRead, BufReader, BufWriter, Write},
    path::{Path, PathBuf},
};

use serde::{Deserialize, Serialize};

use crate::algorithm::Hierarchy;
use crate::counts::Counts;
use crate::error::{Error, Result};
use crate::exchange::ExchangeSummary;

/// The version of the cluster directory format this build writes and
/// reads.
pub const FORMAT_VERSION: u32 = 1;

/// The header line of `clusters.tsv`.
pub const CLUSTERS_HEADER: &str = "word\tpath\tclass\tcount";

/// The header line of `merges.tsv`.
pub const MERGES_HEADER: &str = "step\tchild0\tchild1\tparent\tami_bits";

/// The contents of `summary.json`.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Summary {
    /// [`FORMAT_VERSION`] of the writer.
    pub format_version: u32,
    /// Tokens read.
    pub tokens: u64,
    /// Lines with at least one token.
    pub sentences: u64,
    /// Distinct words read.
    pub types: u64,
    /// Words kept by the minimum count and clustered.
    pub clustered_types: u64,
    /// Classes in the flat partition.
    pub classes: u64,
    /// The minimum count applied.
    pub min_count: u64,
    /// Whether tokens were lowercased.
    pub lowercase: bool,
    /// Whether raw text was tokenised.
    pub tokenize: bool,
    /// Whether text was put in Unicode normalisation form C before it was
    /// split into tokens (absent in directories from before the option:
    /// false).
    #[serde(default)]
    pub nfc: bool,
    /// AMI in bits of the flat classes over all bigrams of clustered
    /// words.
    pub ami_bits: f64,
    /// The version of lexiclade that wrote the directory.
    pub version: String,
    /// What the exchange refinement did; absent when it did not run.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub exchange: Option<ExchangeSummary>,
}

/// A result ready to be written: the counts and the hierarchy learned
/// from them.
pub struct ClusterOutput<'a> {
    /// The counts clustered.
    pub counts: &'a Counts,
    /// The hierarchy learned.
    pub hierarchy: &'a Hierarchy,
}

impl ClusterOutput<'_> {
    /// The summary of this result; `version` names the writer.
    pub fn summary(&self, version: &str) -> Summary {
        let c = self.counts;
        Summary {
            format_version: FORMAT_VERSION,
            tokens: c.tokens,
            sentences: c.sentences,
            types: c.types,
            clustered_types: c.len() as u64,
            classes: self.hierarchy.classes as u64,
            min_count: c.min_count,
            lowercase: c.options.lowercase,
            tokenize: c.options.tokenize,
            nfc: c.options.nfc,
            ami_bits: self.hierarchy.ami_bits,
            version: version.to_string(),
            exchange: self.hierarchy.exchange.clone(),
        }
    }

    /// The result as a [`ClusterTable`], as if written and read back.
    pub fn table(&self, version: &str) -> ClusterTable {
        let h = self.hierarchy;
        let entries = self
            .counts
            .words
            .iter()
            .enumerate()
            .map(|(rank, word)| WordEntry {
                word: word.clone(),
                path: h.path_of(rank).to_string(),
                class: h.class_of[rank],
                count: self.counts.counts[rank],
            })
            .collect();
        ClusterTable { summary: self.summary(version), entries }
    }

    /// Writes `clusters.tsv`.
    pub fn write_clusters(&self, out: &mut dyn Write) -> std::io::Result<()> {
        writeln!(out, "{CLUSTERS_HEADER}")?;
        let h = self.hierarchy;
        for (rank, word) in self.counts.words.iter().enumerate() {
            writeln!(
                out,
                "{}\t{}\t{}\t{}",
                word,
                h.path_of(rank),
                h.class_of[rank],
                self.counts.counts[rank]
            )?;
        }
        Ok(())
    }

    /// Writes `merges.tsv`.
    pub fn write_merges(&self, out: &mut dyn Write) -> std::io::Result<()> {
        writeln!(out, "{MERGES_HEADER}")?;
        let words = self.counts.len();
        for (step, m) in self.hierarchy.merges.iter().enumerate() {
            writeln!(
                out,
                "{}\t{}\t{}\t{}\t{}",
                step,
                m.child0,
                m.child1,
                words + step,
                m.ami_bits
            )?;
        }
        Ok(())
    }

    /// Writes the three files into the existing directory `dir`.
    pub fn write_dir(&self, dir: &Path, version: &str) -> Result<()> {
        write_file(&dir.join("clusters.tsv"), |w| self.write_clusters(w))?;
        write_file(&dir.join("merges.tsv"), |w| self.write_merges(w))?;
        let summary = self.summary(version);
        write_file(&dir.join("summary.json"), |w| {
            serde_json::to_writer_pretty(&mut *w, &summary)?;
            writeln!(w)
        })
    }
}

fn write_file(
    path: &Path,
    body: impl FnOnce(&mut dyn Write) -> std::io::Result<()>,
) -> Result<()> {
    let file = File::create(path).map_err(|e| Error::io(path, e))?;
    let mut out = BufWriter::new(file);
    body(&mut out).map_err(|e| Error::io(path, e))?;
    out.flush().map_err(|e| Error::io(path, e))?;
    out.get_ref().sync_all().map_err(|e| Error::io(path, e))
}

/// One row of `clusters.tsv`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct WordEntry {
    /// The word.
    pub word: String,
    /// Its class's path.
    pub path: String,
    /// Its flat class.
    pub class: u32,
    /// Its count.
    pub count: u64,
}

/// A cluster directory read back.
#[derive(Clone, Debug, PartialEq)]
pub struct ClusterTable {
    /// The summary.
    pub summary: Summary,
    /// The words by rank.
    pub entries: Vec<WordEntry>,
}

impl ClusterTable {
    /// Reads `summary.json` and `clusters.tsv` from `dir`, checking the
    /// format version and every row.
    pub fn read(dir: &Path) -> Result<ClusterTable> {
        let summary = read_summary(&dir.join("summary.json"))?;
        let path = dir.join("clusters.tsv");
        let file = File::open(&path).map_err(|e| Error::io(&path, e))?;
        let mut entries = Vec::new();
        for (index, line) in BufReader::new(file).lines().enumerate() {
            let number = index as u64 + 1;
            let line = line.map_err(|e| {
                if e.kind() == std::io::ErrorKind::InvalidData {
                    Error::InvalidUtf8 { path: path.clone(), line: number }
                } else {
                    Error::io(&path, e)
                }
            })?;
            if index == 0 {
                if line != CLUSTERS_HEADER {
                    return Err(Error::malformed(
                        &path,
                        Some(1),
                        format!("expected the header {CLUSTERS_HEADER:?}"),
                    ));
                }
                continue;
            }
            entries.push(parse_row(&line).ok_or_else(|| {
                Error::malformed(
                    &path,
                    Some(number),
                    "expected four tab-separated fields: word, path of 0s \
                     and 1s, class number, count",
                )
            })?);
        }
        if entries.len() as u64 != summary.clustered_types {
            return Err(Error::malformed(
                &path,
                None,
                format!(
                    "{} words, but summary.json says {}",
                    entries.len(),
                    summary.clustered_types
                ),
            ));
        }
        check_paths(&path, &entries)?;
        Ok(ClusterTable { summary, entries })
    }
}

/// Checks what the class hierarchy needs of the paths: one path per
/// class, another for every other class, and no path a prefix of
/// another (a class is a leaf of the tree). Errors name the row.
fn check_paths(file: &Path, entries: &[WordEntry]) -> Result<()> {
    use std::collections::{btree_map, hash_map, BTreeMap, HashMap};
    let line = |row: usize| Some(row as u64 + 2);
    let mut by_class: HashMap<u32, (&str, usize)> = HashMap::new();
    let mut by_path: BTreeMap<&str, (u32, usize)> = BTreeMap::new();
    for (row, e) in entries.iter().enumerate() {
        match by_class.entry(e.class) {
            hash_map::Entry::Occupied(o) if o.get().0 != e.path => {
                return Err(Error::malformed(
                    file,
                    line(row),
                    format!(
                        "class {} has the path {} here but {} on line {}",
                        e.class,
                        shown(&e.path),
                        shown(o.get().0),
                        o.get().1 + 2
                    ),
                ));
            }
            hash_map::Entry::Occupied(_) => {}
            hash_map::Entry::Vacant(v) => {
                v.insert((&e.path, row));
            }
        }
        match by_path.entry(&e.path) {
            btree_map::Entry::Occupied(o) if o.get().0 != e.class => {
                return Err(Error::malformed(
                    file,
                    line(row),
                    format!(
                        "class {} has the path {} of class {} (line {}); \
                         class paths must differ",
                        e.class,
                        shown(&e.path),
                        o.get().0,
                        o.get().1 + 2
                    ),
                ));
            }
            btree_map::Entry::Occupied(_) => {}
            btree_map::Entry::Vacant(v) => {
                v.insert((e.class, row));
            }
        }
    }
    // In sorted order a path that is a prefix of others comes right
    // before one of them.
    let sorted: Vec<(&str, (u32, usize))> = by_path.into_iter().collect();
    for pair in sorted.windows(2) {
        let ((short, (_, at)), (long, (_, row))) = (pair[0], pair[1]);
        if long.starts_with(short) {
            return Err(Error::malformed(
                file,
                line(row),
                format!(
                    "class paths are not prefix-free: the path {} on \
                     line {} is a prefix of this row's {}",
                    shown(short),
                    at + 2,
                    shown(long)
                ),
            ));
        }
    }
    Ok(())
}

/// A path for a message: in full when short, else its start and length.
fn shown(path: &str) -> String {
    const MAX: usize = 40;
    if path.len() <= MAX {
        format!("{path:?}")
    } else {
        // Paths are checked to be 0s and 1s, so any cut is a boundary.
        format!("\"{}…\" ({} bits)", &path[..MAX - 8], path.len())
    }
}

fn parse_row(line: &str) -> Option<WordEntry> {
    let mut fields = line.split('\t');
    let word = fields.next().filter(|w| !w.is_empty())?.to_string();
    let path = fields.next()?.to_string();
    if !path.bytes().all(|b| b == b'0' || b == b'1') {
        return None;
    }
    let class = fields.next()?.parse().ok()?;
    let count = fields.next()?.parse().ok()?;
    if fields.next().is_some() {
        return None;
    }
    Some(WordEntry { word, path, class, count })
}

/// Reads and checks `summary.json`.
pub fn read_summary(path: &Path) -> Result<Summary> {
    let text =
        std::fs::read_to_string(path).map_err(|e| Error::io(path, e))?;
    #[derive(Deserialize)]
    struct VersionOnly {
        format_version: u32,
    }
    let version: VersionOnly = serde_json::from_str(&text).map_err(|e| {
        Error::malformed(path, Some(e.line() as u64), e.to_string())
    })?;
    if version.format_version != FORMAT_VERSION {
        return Err(Error::Version {
            path: PathBuf::from(path),
            expected: FORMAT_VERSION,
            got: version.format_version,
        });
    }
    serde_json::from_str(&text).map_err(|e| {
        Error::malformed(path, Some(e.line() as u64), e.to_string())
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A cluster directory with `rows` of (word, path, class, count).
    fn dir_with(rows: &[(&str, &str, u32, u64)]) -> tempfile::TempDir {
        let dir = tempfile::tempdir().unwrap();
        let table = ClusterTable::from_rows(rows);
        let mut summary = serde_json::to_value(&table.summary).unwrap();
        summary["clustered_types"] = rows.len().into();
        std::fs::write(dir.path().join("summary.json"), summary.to_string())
            .unwrap();
        let mut text = format!("{CLUSTERS_HEADER}\n");
        for (w, p, c, n) in rows {
            text += &format!("{w}\t{p}\t{c}\t{n}\n");
        }
        std::fs::write(dir.path().join("clusters.tsv"), text).unwrap();
        dir
    }

    #[test]
    fn paths_one_per_class_and_prefix_free() {
        let good = dir_with(&[
            ("a", "0", 0, 3),
            ("b", "10", 1, 2),
            ("c", "11", 2, 1),
        ]);
        assert!(ClusterTable::read(good.path()).is_ok());

        let long = "0".repeat(5_000);
        let bad = dir_with(&[
            ("a", "0", 0, 3),
            ("b", &long, 1, 2),
            ("c", "1", 2, 1),
        ]);
        let err = ClusterTable::read(bad.path()).unwrap_err().to_string();
        let file = bad.path().join("clusters.tsv").display().to_string();
        assert!(
            err.starts_with(&format!(
                "{file}:3: class paths are not prefix-free"
            )),
            "{err}"
        );
        assert!(err.contains("\"0\" on line 2"), "{err}");
        assert!(err.contains("(5000 bits)"), "{err}");
        assert!(err.len() < file.len() + 200, "{err}");

        let split = dir_with(&[("a", "0", 0, 3), ("b", "1", 0, 2)]);
        let err = ClusterTable::read(split.path()).unwrap_err().to_string();
        assert!(
            err.contains(
                ":3: class 0 has the path \"1\" here but \"0\" on line 2"
            ),
            "{err}"
        );

        let shared = dir_with(&[("a", "0", 0, 3), ("b", "0", 1, 2)]);
        let err = ClusterTable::read(shared.path()).unwrap_err().to_string();
        assert!(
            err.contains(":3: class 1 has the path \"0\" of class 0"),
            "{err}"
        );
    }
}
