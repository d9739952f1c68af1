//! Turning a sentence into the features of each token, as strings or as
//! ids of a frozen [`FeatureIndex`].
//!
//! # Feature strings
//!
//! Every feature is a template key followed by `=` and a value, or by
//! `:` and a marker, or is a bare flag. Keys never hold `=` or `:`, so
//! the text up to the first of them names the template and no two
//! templates can produce the same string. Offsets are written `[-2]`,
//! `[0]`, `[+1]`.
//!
//! | template | features |
//! |---|---|
//! | always | `bias` |
//! | `lexical.word` | `w=The` |
//! | `lexical.lowercase` | `lw=the` |
//! | `lexical.char_prefixes` | `pre1=T`, `pre2=Th`, … |
//! | `lexical.char_suffixes` | `suf1=e`, `suf2=he`, … |
//! | `lexical.shape` | `shape=Xx` |
//! | `lexical.case_flags` | `initcap`, `allcaps`, `hascap`, `mixedcap` |
//! | `lexical.char_flags` | `hasdigit`, `alldigits`, `hashyphen`, `allpunct` |
//! | `lexical.neighbours` | `w[-1]=cat`, `w[-2]:start`, `w[+1]:end` |
//! | `clusters` prefixes | `p4[0]=0110`, `p4[+1]=10` |
//! | `clusters.whole_path` | `path[-1]=011010` |
//! | `clusters`, no path | `path[0]:none` |
//! | `clusters`, outside | `path[-1]:start`, `path[+1]:end` |
//! | `cluster_sets` | `lc.p4[0]=0110`, `lc.path[0]=0110101`, `lc.path[+1]:none` |
//! | `columns` window | `pos[-1]=DT`, `pos[-2]:start` |
//! | `columns` n-grams | `pos[-1,0]=DT\|NN`, `pos[0,+1]=NN\|\end` |
//! | `conjunctions` | `wp=the\|DT`, `pp=\start\|0110`, `wpath=zebra\|\none` |
//!
//! In joined values (n-grams and conjunctions) a `|` or `\` inside a
//! value is escaped by a `\`, a position beyond the sentence is `\start`
//! or `\end` (with boundary markers off, the feature is not emitted),
//! and a word without a path is `\none`; no escaped value can be any of
//! these. The features of cluster sets, columns and conjunctions follow
//! those of `[clusters]`, in the config's order.
//!
//! Features of one token come in the order of that table, each at most
//! once. Character prefixes and suffixes count Unicode scalar values, up
//! to the whole word. A path prefix longer than the path is the whole
//! path. The markers `:start` and `:end` stand for window positions
//! before the first token and after the last when
//! [`FeatureConfig::boundary_markers`] is on; otherwise those positions
//! emit nothing. A word without a path emits the one feature
//! `path[OFFSET]:none` at each window position instead of its prefixes.
//!
//! # Cost
//!
//! Extraction writes each feature into one reused string and hands it to
//! a sink, so a sentence costs no heap allocation once the caller's
//! buffer has grown to fit; each word's path is looked up once per
//! sentence however wide the window.
//!
//! [`FeatureConfig::boundary_markers`]: crate::FeatureConfig::boundary_markers

use serde::{Deserialize, Serialize};

use crate::config::{Atom, AtomKind, CheckedConfig, FeatureConfig};
use crate::error::{Error, Result};
use crate::index::FeatureIndex;
use crate::memo::Memo;
use crate::paths::{lowercase_into, needs_lowercasing, Paths};

/// Extracts the features of every token of a sentence.
///
/// Built once from a checked config and the clusters, then shared: it is
/// immutable, `Send` and `Sync`, and each thread brings its own buffer.
/// It serialises as its config and paths, so a model file can embed it,
/// and deserialising checks both again.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(try_from = "RawExtractor")]
pub struct Extractor {
    config: CheckedConfig,
    /// The clusters, if cluster features are on.
    paths: Option<Paths>,
    /// The clusters of each `cluster_sets` entry, where it is on.
    sets: Vec<Option<Paths>>,
    /// The conjunctions parsed, those of sets that are off left out.
    #[serde(skip)]
    plan: Plan,
}

/// What the extractor works out of its config once.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
struct Plan {
    /// Each conjunction that emits: its name, its parts, and whether it
    /// has few distinct values (no part reads the word itself).
    conjunctions: Vec<(String, Vec<Atom>, bool)>,
    /// The templates of the columns and conjunctions, in the order they
    /// emit.
    extras: Vec<Extra>,
}

/// One template of the input columns or the conjunctions.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Extra {
    /// `columns[k]` at offset `off`.
    Window { k: usize, off: i32 },
    /// `columns[k]`'s n-gram `g`.
    Gram { k: usize, g: usize },
    /// The plan's conjunction `c`.
    Conj { c: usize },
}

impl Extra {
    /// Whether the template has few distinct values (reads no word).
    fn small(self, plan: &Plan) -> bool {
        match self {
            Extra::Conj { c } => plan.conjunctions[c].2,
            _ => true,
        }
    }
}

impl Extractor {
    /// An extractor for `config`, with cluster features from `paths`
    /// unless the config turns them off (`clusters.enabled = false`, and
    /// then `paths` is dropped).
    ///
    /// # Errors
    ///
    /// [`Error::ClustersRequired`] if the config sets `clusters.enabled =
    /// true` and `paths` is `None`.
    pub fn new(
        config: CheckedConfig,
        paths: Option<Paths>,
    ) -> Result<Extractor> {
        Extractor::with_sets(config, paths, Vec::new())
    }

    /// [`Extractor::new`] with the clusters of the config's
    /// `[[cluster_sets]]` by name. A set left out has no features unless
    /// it sets `enabled = true`, a set that sets `enabled = false` drops
    /// its clusters.
    ///
    /// # Errors
    ///
    /// [`Error::ClustersRequired`] as for `new`,
    /// [`Error::SetRequired`] for a set with `enabled = true` not given,
    /// and [`Error::UnknownSet`] for a name the config has no set of (or
    /// a name given twice).
    pub fn with_sets(
        config: CheckedConfig,
        paths: Option<Paths>,
        sets: Vec<(String, Paths)>,
    ) -> Result<Extractor> {
        let mut by_set: Vec<Option<Paths>> =
            vec![None; config.cluster_sets.len()];
        for (name, p) in sets {
            let k = config.cluster_sets.iter().position(|s| s.name == name);
            match k {
                Some(k) if by_set[k].is_none() => by_set[k] = Some(p),
                _ => return Err(Error::UnknownSet { name }),
            }
        }
        Extractor::from_parts(config, paths, by_set)
    }

    fn from_parts(
        config: CheckedConfig,
        paths: Option<Paths>,
        sets: Vec<Option<Paths>>,
    ) -> Result<Extractor> {
        let paths = match (config.clusters.enabled, paths) {
            (Some(false), _) => None,
            (Some(true), None) => return Err(Error::ClustersRequired),
            (_, paths) => paths,
        };
        if sets.len() != config.cluster_sets.len() {
            return Err(Error::InvalidField {
                field: "cluster_sets".into(),
                reason: format!(
                    "clusters for {} sets, but the config has {}",
                    sets.len(),
                    config.cluster_sets.len()
                ),
            });
        }

        let mut on = Vec::new();
        for (set, p) in config.cluster_sets.iter().zip(sets) {
            on.push(match (set.enabled, p) {
                (Some(false), _) => None,
                (Some(true), None) => {
                    return Err(Error::SetRequired { name: set.name.clone() })
                }
                (_, p) => p,
            });
        }
        let mut plan = Plan::default();
        for c in &config.conjunctions {
            let atoms = c
                .parts
                .iter()
                .map(|part| config.parse_atom(part))
                .collect::<std::result::Result<Vec<Atom>, String>>()
                .map_err(|reason| Error::InvalidField {
                    field: "conjunctions".into(),
                    reason,
                })?;
            let available = atoms.iter().all(|a| match a.kind {
                AtomKind::Path { set: 0, .. } => paths.is_some(),
                AtomKind::Path { set, .. } => on[set - 1].is_some(),
                _ => true,
            });
            if available {
                let small = atoms.iter().all(|a| {
                    matches!(
                        a.kind,
                        AtomKind::Column(_)
                            | AtomKind::Path { .. }
                            | AtomKind::Shape
                    )
                });
                plan.conjunctions.push((c.name.clone(), atoms, small));
            }
        }
        for (k, c) in config.columns.iter().enumerate() {
            plan.extras
                .extend(c.window.iter().map(|&off| Extra::Window { k, off }));
            plan.extras
                .extend((0..c.ngrams.len()).map(|g| Extra::Gram { k, g }));
        }
        plan.extras
            .extend((0..plan.conjunctions.len()).map(|c| Extra::Conj { c }));
        Ok(Extractor { config, paths, sets: on, plan })
    }

    /// The input columns the features read, as written in the config
    /// (1-based, negative from the end), in the order the `columns`
    /// argument of the extraction calls lists their values.
    pub fn columns(&self) -> Vec<i64> {
        self.config.get().columns.iter().map(|c| c.column).collect()
    }

    /// The names of the cluster sets whose clusters are in use, with
    /// their clusters.
    pub fn cluster_sets(&self) -> impl Iterator<Item = (&str, &Paths)> {
        self.config
            .get()
            .cluster_sets
            .iter()
            .zip(&self.sets)
            .filter_map(|(s, p)| Some((s.name.as_str(), p.as_ref()?)))
    }

    /// The config.
    pub fn config(&self) -> &FeatureConfig {
        self.config.get()
    }

    /// The clusters, if cluster features are on.
    pub fn paths(&self) -> Option<&Paths> {
        self.paths.as_ref()
    }

    /// Whether cluster features are emitted.
    pub fn uses_clusters(&self) -> bool {
        self.paths.is_some()
    }

    /// Fills `out` with the features of every token of `tokens`, replacing
    /// what it held.
    ///
    /// # Panics
    ///
    /// If the config reads input columns ([`Extractor::columns`]): use
    /// [`Extractor::extract_with`].
    pub fn extract<S: AsRef<str>>(&self, tokens: &[S], out: &mut Features) {
        self.extract_with(tokens, &[], out);
    }

    /// [`Extractor::extract`] for a sentence with input columns:
    /// `columns[k]` holds the values of the column
    /// [`Extractor::columns`] lists `k`th, one per token.
    ///
    /// # Panics
    ///
    /// If `columns` lacks a column the config reads or a list is not as
    /// long as `tokens`.
    pub fn extract_with<S: AsRef<str>>(
        &self,
        tokens: &[S],
        columns: &[&[S]],
        out: &mut Features,
    ) {
        let Features { text, ends, token_ends, scratch } = out;
        text.clear();
        ends.clear();
        token_ends.clear();
        let mut sink = |i: usize, feature: &str| {
            while token_ends.len() < i {
                token_ends.push(ends.len());
            }
            text.push_str(feature);
            ends.push(text.len());
        };
        self.walk(tokens, columns, scratch, &mut sink, true);
        while token_ends.len() < tokens.len() {
            token_ends.push(ends.len());
        }
    }

    /// Fills `out` with the ids in `index` of the features of every token
    /// of `tokens`, replacing what it held. Features not in the index are
    /// skipped. This is the call of the tagger's inner loop.
    ///
    /// # Panics
    ///
    /// As [`Extractor::extract_with`].
    pub fn extract_ids<S: AsRef<str>>(
        &self,
        index: &FeatureIndex,
        tokens: &[S],
        columns: &[&[S]],
        out: &mut FeatureIds,
    ) {
        let FeatureIds { ids, starts, scratch } = out;
        ids.clear();
        starts.clear();
        starts.push(0);
        let mut sink = |i: usize, feature: &str| {
            while starts.len() <= i {
                starts.push(ids.len());
            }
            if let Some(id) = index.get(feature) {
                ids.push(id);
            }
        };
        self.walk(tokens, columns, scratch, &mut sink, true);
        while starts.len() <= tokens.len() {
            starts.push(ids.len());
        }
    }

    /// [`Extractor::extract_ids`] with a cache of each word's feature ids
    /// kept across sentences, for tagging: every feature is a function of
    /// one word and its offset (or of an offset alone, beyond the
    /// sentence), so each distinct word's strings are built and looked up
    /// once. The ids are the same as `extract_ids` gives, per token, but
    /// not in the same order.
    ///
    /// The features of input columns and conjunctions depend on several
    /// positions; their ids are cached by the template and the values it
    /// joins (each token's word and each column value get a number), so
    /// each distinct combination is built and looked up once. Those of
    /// further cluster sets are cached by their strings. A conjunction
    /// that joins a word whose `w=` feature the index lacks is not
    /// looked up at all: `index` must be one built from this extractor's
    /// features, where such a word was never a training token, and keep
    /// every feature [`Extractor::needs_feature`] names if it drops any
    /// (as a model's does).
    ///
    /// # Panics
    ///
    /// As [`Extractor::extract_with`].
    pub fn extract_ids_cached<S: AsRef<str>>(
        &self,
        index: &FeatureIndex,
        tokens: &[S],
        columns: &[&[S]],
        out: &mut FeatureIds,
        cache: &mut IdCache,
    ) {
        if cache.words.len() > IdCache::LIMIT {
            // The template cache keys on word numbers: it goes too.
            cache.words.clear();
            cache.entries.clear();
            cache.templates.clear();
            cache.small_templates.clear();
        }
        if cache.extras.len() > IdCache::LIMIT {
            cache.extras.clear();
        }
        let config = self.config.get();
        let lex = &config.lexical;
        let neighbour_offsets: &[i32] =
            if lex.neighbours { &lex.neighbour_offsets } else { &[] };
        let window: &[i32] =
            if self.paths.is_some() { &config.clusters.window } else { &[] };
        if cache.markers.is_empty() {
            cache.markers = self.marker_ids(index, neighbour_offsets, window);
        }
        // Each token's number in the cache, looked up once.
        cache.sentence.clear();
        for t in tokens {
            let word = t.as_ref();
            let k = match cache.words.get(word) {
                Some(&k) => k,
                None => {
                    let entry = self.word_entry(
                        index,
                        word,
                        neighbour_offsets,
                        &mut out.scratch,
                    );
                    if !window.is_empty() {
                        let at = entry.path_id.map_or(0, |id| id as usize + 1);
                        if cache.by_path.len() <= at {
                            cache.by_path.resize(at + 1, Vec::new());
                        }
                        if cache.by_path[at].is_empty() {
                            cache.by_path[at] =
                                self.path_entry(index, entry.path_id, window);
                        }
                    }
                    cache.entries.push(entry);
                    let k = (cache.entries.len() - 1) as u32;
                    cache.words.insert(word.into(), k);
                    k
                }
            };
            cache.sentence.push(k);
        }
        let extra = self.has_extras();
        if extra {
            self.check_columns(tokens.len(), columns);
            // The paths of `[clusters]` come from the word cache; those
            // of further sets are looked up.
            let s = &mut out.scratch;
            s.path_ids.clear();
            if self.paths.is_some() {
                s.path_ids.extend(
                    cache
                        .sentence
                        .iter()
                        .map(|&k| cache.entries[k as usize].path_id),
                );
            }
            self.lookup_set_paths(tokens, s);
            if cache.codes.len() > IdCache::LIMIT
                || cache.templates.len() > 8 * IdCache::LIMIT
            {
                cache.codes.clear();
                cache.templates.clear();
                cache.small_templates.clear();
            }
            // A code for every column value (after the tokens' numbers).
            let IdCache { codes, sentence, .. } = &mut *cache;
            let mut intern = |value: &str| match codes.get(value) {
                Some(&c) => c,
                None => {
                    let c = codes.len() as u32;
                    codes.insert(value.into(), c);
                    c
                }
            };
            let wanted = self.config.get().columns.len();
            for values in &columns[..wanted] {
                for v in values.iter() {
                    sentence.push(intern(v.as_ref()));
                }
            }
        }
        let FeatureIds { ids, starts, scratch } = out;
        ids.clear();
        starts.clear();
        starts.push(0);
        let n = tokens.len();
        let markers = config.boundary_markers;
        let word = |j: usize| &cache.entries[cache.sentence[j] as usize];
        for i in 0..n {
            ids.extend_from_slice(&word(i).local);
            for (k, &off) in neighbour_offsets.iter().enumerate() {
                match position(i, off, n) {
                    Ok(j) => ids.extend(word(j).neighbour[k]),
                    Err(edge) if markers => ids
                        .extend(cache.markers[k][usize::from(edge == "end")]),
                    Err(_) => {}
                }
            }
            for (k, &off) in window.iter().enumerate() {
                match position(i, off, n) {
                    Ok(j) => {
                        let at =
                            word(j).path_id.map_or(0, |id| id as usize + 1);
                        ids.extend_from_slice(&cache.by_path[at][k])
                    }
                    Err(edge) if markers => ids.extend(
                        cache.markers[neighbour_offsets.len() + k]
                            [usize::from(edge == "end")],
                    ),
                    Err(_) => {}
                }
            }
            if extra {
                let Scratch { feature, key, path_ids, set_ids } = scratch;
                let found = (&path_ids[..], &set_ids[..]);
                // The cluster sets' features, through the string cache.
                self.set_features(i, n, found, feature, &mut |_, f, _| {
                    let id = match cache.extras.get(f) {
                        Some(&id) => id,
                        None => {
                            let id = index.get(f);
                            cache.extras.insert(f.into(), id);
                            id
                        }
                    };
                    ids.extend(id);
                });
                // The columns and conjunctions, by the codes of the values
                // they join: the same codes give the same feature.
                let code = &cache.sentence;
                let at = |off: i32, column: Option<usize>| match position(
                    i, off, n,
                ) {
                    Ok(j) => code[column.map_or(0, |k| k + 1) * n + j],
                    Err("start") => START_CODE,
                    Err(_) => END_CODE,
                };
                for (t, &e) in self.plan.extras.iter().enumerate() {
                    let mut key3 = [UNUSED_CODE; 3];
                    let mut unseen = false;
                    match e {
                        Extra::Window { k, off } => key3[0] = at(off, Some(k)),
                        Extra::Gram { k, g } => {
                            let gram = &config.columns[k].ngrams[g];
                            for (x, &off) in gram.iter().enumerate() {
                                key3[x] = at(off, Some(k));
                            }
                        }
                        Extra::Conj { c } => {
                            for (x, atom) in
                                self.plan.conjunctions[c].1.iter().enumerate()
                            {
                                let column = match atom.kind {
                                    AtomKind::Column(k) => Some(k),
                                    _ => None,
                                };
                                key3[x] = at(atom.offset, column);
                                // A word the index has no `w=` feature
                                // of was never a training token, so no
                                // conjunction that joins it can be in
                                // the index (its count is at most that
                                // word's): skip the look-up.
                                if matches!(atom.kind, AtomKind::Word) {
                                    if let Ok(j) = position(i, atom.offset, n)
                                    {
                                        unseen |= !word(j).seen;
                                    }
                                }
                            }
                        }
                    }
                    if unseen {
                        continue;
                    }
                    // Templates that read no word have few values: their
                    // own small table stays in the processor's caches.
                    let table = if e.small(&self.plan) {
                        &mut cache.small_templates
                    } else {
                        &mut cache.templates
                    };
                    let [a, b, c] = key3;
                    let id =
                        table.get_or_insert_with([t as u32, a, b, c], || {
                            let emits = self.write_extra(
                                e, i, tokens, columns, found, feature, key,
                            );
                            if emits {
                                index.get(feature)
                            } else {
                                None
                            }
                        });
                    ids.extend(id);
                }
            }
            starts.push(ids.len());
        }
    }

    /// Whether an index for this extractor must hold `feature` even when
    /// the model gives it no weight: the word feature (`w=`) of each
    /// training word, whose presence tells the cached extraction that a
    /// conjunction joining the word can be in the index at all. Every
    /// other feature without a weight may be dropped from a model's index
    /// without changing a single score.
    pub fn needs_feature(&self, feature: &str) -> bool {
        self.config.get().lexical.word && is_word_feature(feature)
    }

    /// Whether the config has features beyond those of single words.
    fn has_extras(&self) -> bool {
        let c = self.config.get();
        self.sets.iter().any(Option::is_some)
            || !c.columns.is_empty()
            || !self.plan.conjunctions.is_empty()
    }

    /// The ids of the edge markers: per neighbour offset, then per path
    /// window offset, the `start` and `end` marker.
    fn marker_ids(
        &self,
        index: &FeatureIndex,
        neighbour_offsets: &[i32],
        window: &[i32],
    ) -> Vec<[Option<u32>; 2]> {
        let mut f = String::new();
        let mut id = |template: &str, off: i32, edge: &str| {
            f.clear();
            f.push_str(template);
            f.push('[');
            push_offset(off, &mut f);
            f.push_str("]:");
            f.push_str(edge);
            index.get(&f)
        };
        let mut out = Vec::new();
        for &off in neighbour_offsets {
            out.push([id("w", off, "start"), id("w", off, "end")]);
        }
        for &off in window {
            out.push([id("path", off, "start"), id("path", off, "end")]);
        }
        // Never empty, so the cache knows it has been filled.
        out.push([None, None]);
        out
    }

    /// One word's ids: its own features, what it gives a token at each
    /// neighbour offset, and its path id (see [`Extractor::path_entry`]).
    fn word_entry(
        &self,
        index: &FeatureIndex,
        word: &str,
        neighbour_offsets: &[i32],
        scratch: &mut Scratch,
    ) -> WordIds {
        let mut local = Vec::new();
        // Without `lexical.word` nothing tells whether the word was a
        // training token: count it as seen.
        let mut seen = !self.config.get().lexical.word;
        // The word alone as a sentence: its features without brackets
        // are the ones that depend on it alone.
        let mut sink = |_: usize, feature: &str| {
            let contextual = feature.starts_with("w[")
                || feature.starts_with("path[")
                || (feature.starts_with('p')
                    && feature[1..].starts_with(|c: char| c.is_ascii_digit()));
            if !contextual {
                let id = index.get(feature);
                if is_word_feature(feature) {
                    seen |= id.is_some();
                }
                local.extend(id);
            }
        };
        let none: &[&[&str]] = &[];
        self.walk(&[word], none, scratch, &mut sink, false);
        let mut f = String::new();
        let neighbour = neighbour_offsets
            .iter()
            .map(|&off| {
                f.clear();
                f.push_str("w[");
                push_offset(off, &mut f);
                f.push_str("]=");
                f.push_str(word);
                index.get(&f)
            })
            .collect();
        // The walk looked the word's path up.
        let path_id = scratch.path_ids.first().copied().flatten();
        WordIds { local, neighbour, path_id, seen }
    }

    /// The ids a word with path `id` (`None`: a word without one) gives a
    /// token at each path window offset: they depend on the path alone,
    /// so they are worked out once per path rather than once per word.
    fn path_entry(
        &self,
        index: &FeatureIndex,
        id: Option<u32>,
        window: &[i32],
    ) -> Vec<Vec<u32>> {
        let Some(paths) = &self.paths else { return Vec::new() };
        let c = &self.config.get().clusters;
        let mut f = String::new();
        let mut out = Vec::with_capacity(window.len());
        for &off in window {
            let mut ids = Vec::new();
            match id {
                None => {
                    f.clear();
                    f.push_str("path[");
                    push_offset(off, &mut f);
                    f.push_str("]:none");
                    ids.extend(index.get(&f));
                }
                Some(id) => {
                    let path = paths.path_of_id(id);
                    for &len in &c.prefix_lengths {
                        f.clear();
                        f.push('p');
                        push_number(len, &mut f);
                        f.push('[');
                        push_offset(off, &mut f);
                        f.push_str("]=");
                        f.push_str(&path[..len.min(path.len())]);
                        ids.extend(index.get(&f));
                    }
                    if c.whole_path {
                        f.clear();
                        f.push_str("path[");
                        push_offset(off, &mut f);
                        f.push_str("]=");
                        f.push_str(path);
                        ids.extend(index.get(&f));
                    }
                }
            }
            out.push(ids);
        }
        out
    }

    /// Calls `sink(token_index, feature)` for every feature of every
    /// token, tokens in order. The feature string is only lent: copy or
    /// intern it to keep it.
    ///
    /// # Panics
    ///
    /// As [`Extractor::extract_with`].
    pub fn for_each_feature<S: AsRef<str>>(
        &self,
        tokens: &[S],
        columns: &[&[S]],
        scratch: &mut Scratch,
        mut sink: impl FnMut(usize, &str),
    ) {
        self.walk(tokens, columns, scratch, &mut sink, true);
    }

    /// Looks up the path of every token in every cluster set that is on.
    fn lookup_paths<S: AsRef<str>>(&self, tokens: &[S], s: &mut Scratch) {
        s.path_ids.clear();
        if let Some(paths) = &self.paths {
            for t in tokens {
                let id = paths.id_with(t.as_ref(), &mut s.key);
                s.path_ids.push(id);
            }
        }
        self.lookup_set_paths(tokens, s);
    }

    /// Looks up the path of every token in every further cluster set
    /// that is on.
    fn lookup_set_paths<S: AsRef<str>>(&self, tokens: &[S], s: &mut Scratch) {
        s.set_ids.clear();
        for paths in self.sets.iter().flatten() {
            for t in tokens {
                let id = paths.id_with(t.as_ref(), &mut s.key);
                s.set_ids.push(id);
            }
        }
    }

    /// Every feature of every token in order; with `extra` false, only
    /// those of the words and `[clusters]` (the word-cached part).
    fn walk<S: AsRef<str>>(
        &self,
        tokens: &[S],
        columns: &[&[S]],
        s: &mut Scratch,
        sink: &mut dyn FnMut(usize, &str),
        extra: bool,
    ) {
        let config = self.config.get();
        let lex = &config.lexical;
        let markers = config.boundary_markers;
        let n = tokens.len();
        if extra {
            self.check_columns(n, columns);
        }
        self.lookup_paths(tokens, s);
        let f = &mut s.feature;
        for (i, token) in tokens.iter().enumerate() {
            let word = token.as_ref();
            sink(i, "bias");
            if lex.word {
                f.clear();
                f.push_str("w=");
                f.push_str(word);
                sink(i, f);
            }
            if lex.lowercase {
                f.clear();
                f.push_str("lw=");
                if needs_lowercasing(word) {
                    lowercase_into(word, &mut s.key);
                    f.push_str(&s.key);
                } else {
                    f.push_str(word);
                }
                sink(i, f);
            }
            if lex.char_prefixes {
                let ends = word.char_indices().map(|(k, c)| k + c.len_utf8());
                for (k, end) in ends.take(lex.char_prefix_max).enumerate() {
                    f.clear();
                    f.push_str("pre");
                    push_number(k + 1, f);
                    f.push('=');
                    f.push_str(&word[..end]);
                    sink(i, f);
                }
            }
            if lex.char_suffixes {
                let starts = word.char_indices().rev().map(|(k, _)| k);
                for (k, start) in starts.take(lex.char_suffix_max).enumerate()
                {
                    f.clear();
                    f.push_str("suf");
                    push_number(k + 1, f);
                    f.push('=');
                    f.push_str(&word[start..]);
                    sink(i, f);
                }
            }
            if lex.shape {
                f.clear();
                f.push_str("shape=");
                push_shape(word, f);
                sink(i, f);
            }
            if lex.case_flags {
                let flags = case_flags(word);
                for (on, name) in flags.iter().zip(CASE_FLAGS) {
                    if *on {
                        sink(i, name);
                    }
                }
            }
            if lex.char_flags {
                let flags = char_flags(word);
                for (on, name) in flags.iter().zip(CHAR_FLAGS) {
                    if *on {
                        sink(i, name);
                    }
                }
            }
            if lex.neighbours {
                for &off in &lex.neighbour_offsets {
                    let at = position(i, off, n);
                    if at.is_err() && !markers {
                        continue;
                    }
                    f.clear();
                    f.push_str("w[");
                    push_offset(off, f);
                    match at {
                        Ok(j) => {
                            f.push_str("]=");
                            f.push_str(tokens[j].as_ref());
                        }
                        Err(marker) => {
                            f.push_str("]:");
                            f.push_str(marker);
                        }
                    }
                    sink(i, f);
                }
            }
            if let Some(paths) = &self.paths {
                let c = &config.clusters;
                for &off in &c.window {
                    let at = position(i, off, n);
                    let id = match at {
                        Ok(j) => s.path_ids[j],
                        Err(_) if !markers => continue,
                        Err(_) => None,
                    };
                    let Some(id) = id else {
                        f.clear();
                        f.push_str("path[");
                        push_offset(off, f);
                        f.push_str("]:");
                        f.push_str(at.err().unwrap_or("none"));
                        sink(i, f);
                        continue;
                    };
                    let path = paths.path_of_id(id);
                    for &len in &c.prefix_lengths {
                        f.clear();
                        f.push('p');
                        push_number(len, f);
                        f.push('[');
                        push_offset(off, f);
                        f.push_str("]=");
                        // Paths are ASCII 0s and 1s: any cut is a boundary.
                        f.push_str(&path[..len.min(path.len())]);
                        sink(i, f);
                    }
                    if c.whole_path {
                        f.clear();
                        f.push_str("path[");
                        push_offset(off, f);
                        f.push_str("]=");
                        f.push_str(path);
                        sink(i, f);
                    }
                }
            }
            if extra {
                let ids = (&s.path_ids[..], &s.set_ids[..]);
                self.extra_features(
                    i,
                    tokens,
                    columns,
                    ids,
                    f,
                    &mut s.key,
                    &mut |i, f, _| sink(i, f),
                );
            }
        }
    }

    /// Panics unless `columns` holds one list of `n` values per
    /// [`Extractor::columns`] entry.
    fn check_columns<S: AsRef<str>>(&self, n: usize, columns: &[&[S]]) {
        let want = self.config.get().columns.len();
        assert!(
            columns.len() >= want
                && columns[..want].iter().all(|c| c.len() == n),
            "the extractor reads {want} input columns of {n} values"
        );
    }

    /// The features of token `i` of a sentence of `n` from the cluster
    /// sets.
    fn set_features(
        &self,
        i: usize,
        n: usize,
        ids: (&[Option<u32>], &[Option<u32>]),
        f: &mut String,
        sink: &mut dyn FnMut(usize, &str, bool),
    ) {
        let config = self.config.get();
        let markers = config.boundary_markers;
        let set_ids = ids.1;
        let mut on = 0;
        for (set, paths) in config.cluster_sets.iter().zip(&self.sets) {
            let Some(paths) = paths else { continue };
            let ids = &set_ids[on * n..(on + 1) * n];
            on += 1;
            for &off in &set.window {
                let at = position(i, off, n);
                let id = match at {
                    Ok(j) => ids[j],
                    Err(_) if !markers => continue,
                    Err(_) => None,
                };
                let Some(id) = id else {
                    f.clear();
                    f.push_str(&set.name);
                    f.push_str(".path[");
                    push_offset(off, f);
                    f.push_str("]:");
                    f.push_str(at.err().unwrap_or("none"));
                    sink(i, f, true);
                    continue;
                };
                let path = paths.path_of_id(id);
                for &len in &set.prefix_lengths {
                    f.clear();
                    f.push_str(&set.name);
                    f.push_str(".p");
                    push_number(len, f);
                    f.push('[');
                    push_offset(off, f);
                    f.push_str("]=");
                    f.push_str(&path[..len.min(path.len())]);
                    sink(i, f, true);
                }
                if set.whole_path {
                    f.clear();
                    f.push_str(&set.name);
                    f.push_str(".path[");
                    push_offset(off, f);
                    f.push_str("]=");
                    f.push_str(path);
                    sink(i, f, true);
                }
            }
        }
    }

    /// The features of token `i` from the cluster sets, the input
    /// columns and the conjunctions. `ids` are the path ids of
    /// [`Extractor::lookup_paths`]. `sink` also hears whether the
    /// feature has few distinct values (it reads no word).
    #[allow(clippy::too_many_arguments)]
    fn extra_features<S: AsRef<str>>(
        &self,
        i: usize,
        tokens: &[S],
        columns: &[&[S]],
        ids: (&[Option<u32>], &[Option<u32>]),
        f: &mut String,
        key: &mut String,
        sink: &mut dyn FnMut(usize, &str, bool),
    ) {
        self.set_features(i, tokens.len(), ids, f, sink);
        for &e in &self.plan.extras {
            if self.write_extra(e, i, tokens, columns, ids, f, key) {
                sink(i, f, e.small(&self.plan));
            }
        }
    }

    /// Writes the feature of template `e` for token `i` into `f`; false
    /// when it emits nothing there.
    #[allow(clippy::too_many_arguments)]
    fn write_extra<S: AsRef<str>>(
        &self,
        e: Extra,
        i: usize,
        tokens: &[S],
        columns: &[&[S]],
        ids: (&[Option<u32>], &[Option<u32>]),
        f: &mut String,
        key: &mut String,
    ) -> bool {
        let config = self.config.get();
        let markers = config.boundary_markers;
        let n = tokens.len();
        let (path_ids, set_ids) = ids;
        match e {
            Extra::Window { k, off } => {
                let c = &config.columns[k];
                let values = columns[k];
                let at = position(i, off, n);
                if at.is_err() && !markers {
                    return false;
                }
                f.clear();
                f.push_str(&c.name);
                f.push('[');
                push_offset(off, f);
                match at {
                    Ok(j) => {
                        f.push_str("]=");
                        f.push_str(values[j].as_ref());
                    }
                    Err(edge) => {
                        f.push_str("]:");
                        f.push_str(edge);
                    }
                }
            }
            Extra::Gram { k, g } => {
                let c = &config.columns[k];
                let gram = &c.ngrams[g];
                let values = columns[k];
                f.clear();
                f.push_str(&c.name);
                f.push('[');
                for (g, &off) in gram.iter().enumerate() {
                    if g > 0 {
                        f.push(',');
                    }
                    push_offset(off, f);
                }
                f.push_str("]=");
                for (g, &off) in gram.iter().enumerate() {
                    if g > 0 {
                        f.push('|');
                    }
                    match position(i, off, n) {
                        Ok(j) => push_escaped(values[j].as_ref(), f),
                        Err(_) if !markers => return false,
                        Err(edge) => push_edge(edge, f),
                    }
                }
            }
            Extra::Conj { c } => {
                let (name, atoms, _) = &self.plan.conjunctions[c];
                f.clear();
                f.push_str(name);
                f.push('=');
                for (g, atom) in atoms.iter().enumerate() {
                    if g > 0 {
                        f.push('|');
                    }
                    let j = match position(i, atom.offset, n) {
                        Ok(j) => j,
                        Err(_) if !markers => return false,
                        Err(edge) => {
                            push_edge(edge, f);
                            continue;
                        }
                    };
                    let word = tokens[j].as_ref();
                    match atom.kind {
                        AtomKind::Word => push_escaped(word, f),
                        AtomKind::Lower => {
                            if needs_lowercasing(word) {
                                lowercase_into(word, key);
                                push_escaped(key, f);
                            } else {
                                push_escaped(word, f);
                            }
                        }
                        AtomKind::Shape => {
                            key.clear();
                            push_shape(word, key);
                            push_escaped(key, f);
                        }
                        AtomKind::Prefix(len) => {
                            let end = word
                                .char_indices()
                                .nth(len)
                                .map_or(word.len(), |(b, _)| b);
                            push_escaped(&word[..end], f);
                        }
                        AtomKind::Suffix(len) => {
                            let start = word
                                .char_indices()
                                .rev()
                                .nth(len - 1)
                                .map_or(0, |(b, _)| b);
                            push_escaped(&word[start..], f);
                        }
                        AtomKind::Column(k) => {
                            push_escaped(columns[k][j].as_ref(), f)
                        }
                        AtomKind::Path { set, bits } => {
                            let (paths, id) = if set == 0 {
                                (self.paths.as_ref(), path_ids.get(j).copied())
                            } else {
                                let on = self.sets[..set - 1]
                                    .iter()
                                    .filter(|p| p.is_some())
                                    .count();
                                let id = set_ids.get(on * n + j).copied();
                                (self.sets[set - 1].as_ref(), id)
                            };
                            // The plan keeps only conjunctions whose sets
                            // are on.
                            let (Some(paths), Some(id)) = (paths, id) else {
                                return false;
                            };
                            match id {
                                None => f.push_str("\\none"),
                                Some(id) => {
                                    let path = paths.path_of_id(id);
                                    let len = bits.unwrap_or(path.len());
                                    f.push_str(&path[..len.min(path.len())]);
                                }
                            }
                        }
                    }
                }
            }
        }
        true
    }
}

/// Whether `feature` is a word's own feature (`w=WORD`).
fn is_word_feature(feature: &str) -> bool {
    feature.starts_with("w=")
}

/// Appends `value` with `\` and `|` escaped by a backslash, so that
/// joined values can be told apart.
fn push_escaped(value: &str, f: &mut String) {
    if value.contains(['\\', '|']) {
        for c in value.chars() {
            if c == '\\' || c == '|' {
                f.push('\\');
            }
            f.push(c);
        }
    } else {
        f.push_str(value);
    }
}

/// Appends the marker of a position beyond the sentence in a joined
/// value: `\start` or `\end`, which no escaped value can be.
fn push_edge(edge: &str, f: &mut String) {
    f.push('\\');
    f.push_str(edge);
}

/// Feature ids of words, kept across sentences by
/// [`Extractor::extract_ids_cached`]. Belongs to one extractor and one
/// index: use a new cache for another model.
#[derive(Clone, Debug, Default)]
pub struct IdCache {
    /// Each word's number in `entries`.
    words: rustc_hash::FxHashMap<Box<str>, u32>,
    entries: Vec<WordIds>,
    /// Per path id + 1 (0: no path), the ids a token gets at each path
    /// window offset from a word with that path; empty until needed.
    by_path: Vec<Vec<Vec<u32>>>,
    markers: Vec<[Option<u32>; 2]>,
    /// The ids of the features of cluster sets, columns and
    /// conjunctions seen so far: a POS tag or tag pair recurs on every
    /// few tokens, and this small table stays in the processor's caches
    /// where the whole index does not.
    extras: rustc_hash::FxHashMap<Box<str>, Option<u32>>,
    /// A code for each column value seen.
    codes: rustc_hash::FxHashMap<Box<str>, u32>,
    /// The id of each column or conjunction template (its number in the
    /// plan) for the codes of the values it joins.
    templates: Memo,
    /// The same for the templates that read no word (column windows and
    /// n-grams, conjunctions of columns, shapes and paths): they recur
    /// on every few tokens, and apart from the word templates' many
    /// entries their table stays small enough for the processor's
    /// caches.
    small_templates: Memo,
    /// The codes of the current sentence: its tokens' numbers in
    /// `entries`, then the codes of each column's values.
    sentence: Vec<u32>,
}

/// The codes of a position before the sentence, after it, and of a part
/// a template does not have.
const START_CODE: u32 = u32::MAX;
const END_CODE: u32 = u32::MAX - 1;
const UNUSED_CODE: u32 = u32::MAX - 2;

impl IdCache {
    /// Words kept before the cache starts afresh (bounds its memory).
    pub const LIMIT: usize = 200_000;

    /// An empty cache.
    pub fn new() -> IdCache {
        IdCache::default()
    }
}

#[derive(Clone, Debug, Default)]
struct WordIds {
    local: Vec<u32>,
    neighbour: Vec<Option<u32>>,
    /// The word's path in `[clusters]`, if they are on and have it.
    path_id: Option<u32>,
    /// Whether the index has the word's `w=` feature, or
    /// `lexical.word` is off.
    seen: bool,
}

/// The token at offset `off` from `i` in a sentence of `n`, or the
/// marker of the edge it falls beyond.
fn position(i: usize, off: i32, n: usize) -> Result<usize, &'static str> {
    let j = i as i64 + i64::from(off);
    if j < 0 {
        Err("start")
    } else if j >= n as i64 {
        Err("end")
    } else {
        Ok(j as usize)
    }
}

/// Writes `-2`, `0` or `+1`.
fn push_offset(off: i32, f: &mut String) {
    if off > 0 {
        f.push('+');
    } else if off < 0 {
        f.push('-');
    }
    push_number(off.unsigned_abs() as usize, f);
}

/// Appends `n` in decimal: what `write!` does, without the formatting
/// machinery, which cost several per cent of tagging.
fn push_number(n: usize, f: &mut String) {
    let mut digits = [0u8; 20];
    let mut k = digits.len();
    let mut n = n;
    loop {
        k -= 1;
        digits[k] = b'0' + (n % 10) as u8;
        n /= 10;
        if n == 0 {
            break;
        }
    }
    for &d in &digits[k..] {
        f.push(char::from(d));
    }
}

/// Appends the shape class of `word`: capitals `X`, lowercase letters
/// `x`, letters without case `a`, digits `d`, anything else itself, runs
/// of one class collapsed.
fn push_shape(word: &str, f: &mut String) {
    let mut last = None;
    for c in word.chars() {
        let class = if c.is_uppercase() {
            'X'
        } else if c.is_lowercase() {
            'x'
        } else if c.is_alphabetic() {
            'a'
        } else if c.is_numeric() {
            'd'
        } else {
            c
        };
        if last != Some(class) {
            f.push(class);
            last = Some(class);
        }
    }
}

const CASE_FLAGS: [&str; 4] = ["initcap", "allcaps", "hascap", "mixedcap"];

/// Which of [`CASE_FLAGS`] hold for `word`.
fn case_flags(word: &str) -> [bool; 4] {
    let initcap = word.chars().next().is_some_and(char::is_uppercase);
    let has_upper = word.chars().any(char::is_uppercase);
    let has_lower = word.chars().any(char::is_lowercase);
    let later_upper = word.chars().skip(1).any(char::is_uppercase);
    [initcap, has_upper && !has_lower, has_upper, has_lower && later_upper]
}

const CHAR_FLAGS: [&str; 4] =
    ["hasdigit", "alldigits", "hashyphen", "allpunct"];

/// Which of [`CHAR_FLAGS`] hold for `word`.
fn char_flags(word: &str) -> [bool; 4] {
    let nonempty = !word.is_empty();
    let has_digit = word.chars().any(char::is_numeric);
    let all_digits = nonempty && word.chars().all(char::is_numeric);
    // ASCII hyphen-minus, Unicode hyphen and non-breaking hyphen.
    let hyphen = word.contains(['-', '\u{2010}', '\u{2011}']);
    let all_punct = nonempty && word.chars().all(|c| !c.is_alphanumeric());
    [has_digit, all_digits, hyphen, all_punct]
}

/// Reusable space for one extraction: the feature being written, a
/// lowercased word, and the path of each token of the sentence.
#[derive(Clone, Debug, Default)]
pub struct Scratch {
    feature: String,
    key: String,
    path_ids: Vec<Option<u32>>,
    /// The path ids in each cluster set that is on, set after set.
    set_ids: Vec<Option<u32>>,
}

/// The features of every token of one sentence, as strings, filled by
/// [`Extractor::extract`]. Reuse one across sentences: it keeps its
/// capacity.
#[derive(Clone, Debug, Default)]
pub struct Features {
    /// Every feature, one after another.
    text: String,
    /// The end offset in `text` of each feature.
    ends: Vec<usize>,
    /// For each token, the index in `ends` after its last feature.
    token_ends: Vec<usize>,
    scratch: Scratch,
}

impl Features {
    /// An empty buffer.
    pub fn new() -> Features {
        Features::default()
    }

    /// The number of tokens.
    pub fn len(&self) -> usize {
        self.token_ends.len()
    }

    /// Whether the sentence had no tokens.
    pub fn is_empty(&self) -> bool {
        self.token_ends.is_empty()
    }

    /// The features of token `i`, in order.
    ///
    /// # Panics
    ///
    /// If `i` is not below [`Features::len`].
    pub fn token(&self, i: usize) -> TokenFeatures<'_> {
        let first = if i == 0 { 0 } else { self.token_ends[i - 1] };
        let last = self.token_ends[i];
        let start = if first == 0 { 0 } else { self.ends[first - 1] };
        TokenFeatures {
            text: &self.text,
            ends: &self.ends[first..last],
            start,
        }
    }

    /// The features of each token in turn.
    pub fn iter(&self) -> impl ExactSizeIterator<Item = TokenFeatures<'_>> {
        (0..self.len()).map(|i| self.token(i))
    }
}

/// The features of one token, borrowed from [`Features`].
#[derive(Clone, Debug)]
pub struct TokenFeatures<'a> {
    text: &'a str,
    ends: &'a [usize],
    start: usize,
}

impl<'a> Iterator for TokenFeatures<'a> {
    type Item = &'a str;

    fn next(&mut self) -> Option<&'a str> {
        let (&end, rest) = self.ends.split_first()?;
        let feature = &self.text[self.start..end];
        self.start = end;
        self.ends = rest;
        Some(feature)
    }

    fn size_hint(&self) -> (usize, Option<usize>) {
        (self.ends.len(), Some(self.ends.len()))
    }
}

impl ExactSizeIterator for TokenFeatures<'_> {}

/// The feature ids of every token of one sentence, in compressed sparse
/// rows, filled by [`Extractor::extract_ids`]. Reuse one across
/// sentences: it keeps its capacity.
#[derive(Clone, Debug, Default)]
pub struct FeatureIds {
    ids: Vec<u32>,
    /// `starts[i]..starts[i + 1]` are token `i`'s ids; one more entry
    /// than tokens (or none before the first extraction).
    starts: Vec<usize>,
    scratch: Scratch,
}

impl FeatureIds {
    /// An empty buffer.
    pub fn new() -> FeatureIds {
        FeatureIds::default()
    }

    /// The number of tokens.
    pub fn len(&self) -> usize {
        self.starts.len().saturating_sub(1)
    }

    /// Whether the sentence had no tokens.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// The ids of token `i`'s features, in extraction order.
    ///
    /// # Panics
    ///
    /// If `i` is not below [`FeatureIds::len`].
    pub fn token(&self, i: usize) -> &[u32] {
        &self.ids[self.starts[i]..self.starts[i + 1]]
    }

    /// Every id of the sentence, token after token.
    pub fn ids(&self) -> &[u32] {
        &self.ids
    }

    /// Where each token's ids start in [`FeatureIds::ids`], and at the end
    /// the total: `len() + 1` entries.
    pub fn starts(&self) -> &[usize] {
        &self.starts
    }
}

/// The serialised form of an [`Extractor`], checked again on the way in.
#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawExtractor {
    config: CheckedConfig,
    paths: Option<Paths>,
    sets: Vec<Option<Paths>>,
}

impl TryFrom<RawExtractor> for Extractor {
    type Error = Error;

    fn try_from(raw: RawExtractor) -> Result<Extractor> {
        Extractor::from_parts(raw.config, raw.paths, raw.sets)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::paths::tests::table;

    /// Only the templates named, with window and lengths as given.
    fn config(edit: impl FnOnce(&mut FeatureConfig)) -> CheckedConfig {
        let mut c = FeatureConfig::default();
        let l = &mut c.lexical;
        l.word = false;
        l.lowercase = false;
        l.char_prefixes = false;
        l.char_suffixes = false;
        l.shape = false;
        l.case_flags = false;
        l.char_flags = false;
        l.neighbours = false;
        edit(&mut c);
        c.check().unwrap()
    }

    fn features(e: &Extractor, tokens: &[&str]) -> Vec<Vec<String>> {
        let mut out = Features::new();
        e.extract(tokens, &mut out);
        assert_eq!(out.len(), tokens.len());
        out.iter().map(|t| t.map(String::from).collect()).collect()
    }

    fn paths(lowercase: bool) -> Paths {
        Paths::from_table(&table(
            &[("the", "0010"), ("cat", "011010"), ("sat", "1"), ("é", "0111")],
            lowercase,
            false,
        ))
    }

    #[test]
    fn default_lexical_features_of_a_short_sentence() {
        let mut c = FeatureConfig::default();
        c.clusters.enabled = Some(false);
        let e =
            Extractor::new(c.check().unwrap(), Some(paths(false))).unwrap();
        assert!(!e.uses_clusters());
        let got = features(&e, &["The", "U.S.", "sat-in", "42"]);
        let want: [&[&str]; 4] = [
            &[
                "bias",
                "w=The",
                "lw=the",
                "pre1=T",
                "pre2=Th",
                "pre3=The",
                "suf1=e",
                "suf2=he",
                "suf3=The",
                "shape=Xx",
                "initcap",
                "hascap",
                "w[-2]:start",
                "w[-1]:start",
                "w[+1]=U.S.",
                "w[+2]=sat-in",
            ],
            &[
                "bias",
                "w=U.S.",
                "lw=u.s.",
                "pre1=U",
                "pre2=U.",
                "pre3=U.S",
                "pre4=U.S.",
                "suf1=.",
                "suf2=S.",
                "suf3=.S.",
                "suf4=U.S.",
                "shape=X.X.",
                "initcap",
                "allcaps",
                "hascap",
                "w[-2]:start",
                "w[-1]=The",
                "w[+1]=sat-in",
                "w[+2]=42",
            ],
            &[
                "bias",
                "w=sat-in",
                "lw=sat-in",
                "pre1=s",
                "pre2=sa",
                "pre3=sat",
                "pre4=sat-",
                "suf1=n",
                "suf2=in",
                "suf3=-in",
                "suf4=t-in",
                "shape=x-x",
                "hashyphen",
                "w[-2]=The",
                "w[-1]=U.S.",
                "w[+1]=42",
                "w[+2]:end",
            ],
            &[
                "bias",
                "w=42",
                "lw=42",
                "pre1=4",
                "pre2=42",
                "suf1=2",
                "suf2=42",
                "shape=d",
                "hasdigit",
                "alldigits",
                "w[-2]=U.S.",
                "w[-1]=sat-in",
                "w[+1]:end",
                "w[+2]:end",
            ],
        ];
        assert_eq!(got, want);
    }

    #[test]
    fn cluster_features_with_and_without_paths() {
        let c = config(|c| {
            c.clusters.prefix_lengths = vec![2, 4, 8];
            c.clusters.whole_path = true;
            c.clusters.window = vec![-1, 0, 1];
        });
        let e = Extractor::new(c, Some(paths(false))).unwrap();
        assert!(e.uses_clusters());
        let got = features(&e, &["the", "cat", "purred"]);
        let want: [&[&str]; 3] = [
            &[
                "bias",
                "path[-1]:start",
                "p2[0]=00",
                "p4[0]=0010",
                "p8[0]=0010",
                "path[0]=0010",
                "p2[+1]=01",
                "p4[+1]=0110",
                "p8[+1]=011010",
                "path[+1]=011010",
            ],
            &[
                "bias",
                "p2[-1]=00",
                "p4[-1]=0010",
                "p8[-1]=0010",
                "path[-1]=0010",
                "p2[0]=01",
                "p4[0]=0110",
                "p8[0]=011010",
                "path[0]=011010",
                "path[+1]:none",
            ],
            &[
                "bias",
                "p2[-1]=01",
                "p4[-1]=0110",
                "p8[-1]=011010",
                "path[-1]=011010",
                "path[0]:none",
                "path[+1]:end",
            ],
        ];
        assert_eq!(got, want);
    }

    #[test]
    fn a_prefix_longer_than_the_path_is_the_whole_path() {
        let c = config(|c| {
            c.clusters.prefix_lengths = vec![1, 20];
            c.clusters.window = vec![0];
        });
        let e = Extractor::new(c, Some(paths(false))).unwrap();
        assert_eq!(
            features(&e, &["sat", "cat"]),
            [
                ["bias", "p1[0]=1", "p20[0]=1"],
                ["bias", "p1[0]=0", "p20[0]=011010"]
            ]
        );
    }

    #[test]
    fn out_of_range_positions_without_markers_emit_nothing() {
        let c = config(|c| {
            c.boundary_markers = false;
            c.lexical.neighbours = true;
            c.lexical.neighbour_offsets = vec![-5, 1];
            c.clusters.prefix_lengths = vec![3];
            c.clusters.window = vec![-2, 5];
        });
        let e = Extractor::new(c, Some(paths(false))).unwrap();
        assert_eq!(
            features(&e, &["the", "cat", "sat"]),
            [
                vec!["bias", "w[+1]=cat"],
                vec!["bias", "w[+1]=sat"],
                vec!["bias", "p3[-2]=001"],
            ]
        );
        // A window far outside a one-word sentence, markers on.
        let c = config(|c| {
            c.lexical.neighbours = true;
            c.lexical.neighbour_offsets = vec![-5, 5];
            c.clusters.prefix_lengths = vec![3];
            c.clusters.window = vec![-5, 5];
        });
        let e = Extractor::new(c, Some(paths(false))).unwrap();
        assert_eq!(
            features(&e, &["cat"]),
            [[
                "bias",
                "w[-5]:start",
                "w[+5]:end",
                "path[-5]:start",
                "path[+5]:end"
            ]]
        );
    }

    #[test]
    fn unicode_words() {
        let mut c = FeatureConfig::default();
        c.lexical.neighbours = false;
        c.clusters.prefix_lengths = vec![2];
        c.clusters.window = vec![0];
        let e =
            Extractor::new(c.check().unwrap(), Some(paths(false))).unwrap();
        let got = features(&e, &["Élan", "北京", "é", "…", "İ"]);
        let want: [&[&str]; 5] = [
            &[
                "bias",
                "w=Élan",
                "lw=élan",
                "pre1=É",
                "pre2=Él",
                "pre3=Éla",
                "pre4=Élan",
                "suf1=n",
                "suf2=an",
                "suf3=lan",
                "suf4=Élan",
                "shape=Xx",
                "initcap",
                "hascap",
                "path[0]:none",
            ],
            &[
                "bias",
                "w=北京",
                "lw=北京",
                "pre1=北",
                "pre2=北京",
                "suf1=京",
                "suf2=北京",
                "shape=a",
                "path[0]:none",
            ],
            &[
                "bias", "w=é", "lw=é", "pre1=é", "suf1=é", "shape=x",
                "p2[0]=01",
            ],
            &[
                "bias",
                "w=…",
                "lw=…",
                "pre1=…",
                "suf1=…",
                "shape=…",
                "allpunct",
                "path[0]:none",
            ],
            // Capital I with dot lowercases to two characters.
            &[
                "bias",
                "w=İ",
                "lw=i\u{307}",
                "pre1=İ",
                "suf1=İ",
                "shape=X",
                "initcap",
                "allcaps",
                "hascap",
                "path[0]:none",
            ],
        ];
        assert_eq!(got, want);
    }

    #[test]
    fn numbers_and_offsets_are_written_as_format_writes_them() {
        for n in [0, 1, 9, 10, 99, 100, 12345, usize::MAX] {
            let mut f = String::from("x");
            push_number(n, &mut f);
            assert_eq!(f, format!("x{n}"));
        }
        for off in [-5, -1, 0, 1, 5, i32::MIN, i32::MAX] {
            let mut f = String::new();
            push_offset(off, &mut f);
            let want =
                if off > 0 { format!("+{off}") } else { format!("{off}") };
            assert_eq!(f, want);
        }
    }

    #[test]
    fn shapes_and_flags() {
        let shape = |w: &str| {
            let mut f = String::new();
            push_shape(w, &mut f);
            f
        };
        assert_eq!(shape("McDonald's"), "XxXx'x");
        assert_eq!(shape("iPhone"), "xXx");
        assert_eq!(shape("1,000.50"), "d,d.d");
        assert_eq!(shape("..."), ".");
        assert_eq!(shape("A-1"), "X-d");
        assert_eq!(shape(""), "");
        assert_eq!(case_flags("McDonald"), [true, false, true, true]);
        assert_eq!(case_flags("iPhone"), [false, false, true, true]);
        assert_eq!(case_flags("USA"), [true, true, true, false]);
        assert_eq!(case_flags("the"), [false; 4]);
        assert_eq!(case_flags("123"), [false; 4]);
        assert_eq!(char_flags("B-52"), [true, false, true, false]);
        assert_eq!(char_flags("2024"), [true, true, false, false]);
        assert_eq!(char_flags("--"), [false, false, true, true]);
        assert_eq!(char_flags("\u{2010}"), [false, false, true, true]);
        assert_eq!(char_flags("$"), [false, false, false, true]);
        assert_eq!(char_flags(""), [false; 4]);
    }

    #[test]
    fn lowercased_clusters_find_capitalised_words() {
        let c = config(|c| {
            c.clusters.prefix_lengths = vec![4];
            c.clusters.window = vec![0];
        });
        let lower = Extractor::new(c.clone(), Some(paths(true))).unwrap();
        let exact = Extractor::new(c, Some(paths(false))).unwrap();
        let tokens = ["The", "CAT", "É"];
        assert_eq!(
            features(&lower, &tokens),
            [
                ["bias", "p4[0]=0010"],
                ["bias", "p4[0]=0110"],
                ["bias", "p4[0]=0111"]
            ]
        );
        assert_eq!(features(&exact, &tokens), [["bias", "path[0]:none"]; 3]);
    }

    #[test]
    fn cluster_switch() {
        let on = config(|c| c.clusters.enabled = Some(true));
        assert!(matches!(
            Extractor::new(on.clone(), None),
            Err(Error::ClustersRequired)
        ));
        assert!(Extractor::new(on, Some(paths(false)))
            .unwrap()
            .uses_clusters());
        let auto = config(|_| {});
        assert!(!Extractor::new(auto.clone(), None).unwrap().uses_clusters());
        assert!(Extractor::new(auto, Some(paths(false)))
            .unwrap()
            .uses_clusters());
        let off = config(|c| c.clusters.enabled = Some(false));
        let e = Extractor::new(off, Some(paths(false))).unwrap();
        assert!(!e.uses_clusters() && e.paths().is_none());
        assert_eq!(features(&e, &["the"]), [["bias"]]);
    }

    #[test]
    fn empty_sentence_and_buffer_reuse() {
        let e =
            Extractor::new(FeatureConfig::default().check().unwrap(), None)
                .unwrap();
        let mut out = Features::new();
        e.extract(&["a", "b", "c"], &mut out);
        assert_eq!(out.len(), 3);
        e.extract::<&str>(&[], &mut out);
        assert!(out.is_empty());
        e.extract(&[String::from("x")], &mut out);
        assert_eq!(out.len(), 1);
        assert_eq!(out.token(0).next(), Some("bias"));
        assert!(out.token(0).any(|f| f == "w=x"));
        let mut ids = FeatureIds::new();
        assert!(ids.is_empty());
        let index = FeatureIndex::from_sentences(&e, [["x"]]);
        e.extract_ids(&index, &[] as &[&str], &[], &mut ids);
        assert!(ids.is_empty() && ids.starts() == [0]);
    }

    #[test]
    fn ids_follow_the_strings_and_skip_unknown_features() {
        let c = config(|c| {
            c.lexical.word = true;
            c.clusters.prefix_lengths = vec![2];
            c.clusters.window = vec![0];
        });
        let e = Extractor::new(c, Some(paths(false))).unwrap();
        let index = FeatureIndex::from_sentences(&e, [["the", "cat"]]);
        let mut ids = FeatureIds::new();
        e.extract_ids(&index, &["cat", "dog", "the"], &[], &mut ids);
        let names = index.names();
        let named: Vec<Vec<&str>> = (0..ids.len())
            .map(|i| {
                ids.token(i).iter().map(|&id| names[id as usize]).collect()
            })
            .collect();
        assert_eq!(
            named,
            [
                vec!["bias", "w=cat", "p2[0]=01"],
                vec!["bias"],
                vec!["bias", "w=the", "p2[0]=00"],
            ]
        );
        assert_eq!(ids.starts(), [0, 3, 4, 7]);
        assert_eq!(ids.ids().len(), 7);
    }

    #[test]
    fn for_each_feature_visits_what_extract_stores() {
        let e = Extractor::new(
            FeatureConfig::default().check().unwrap(),
            Some(paths(true)),
        )
        .unwrap();
        let tokens = ["The", "cat", "sat", "on", "the", "mat", "."];
        let mut seen: Vec<Vec<String>> = vec![Vec::new(); tokens.len()];
        let mut scratch = Scratch::default();
        e.for_each_feature(&tokens, &[], &mut scratch, |i, f| {
            seen[i].push(f.to_string())
        });
        assert_eq!(seen, features(&e, &tokens));
    }

    #[test]
    fn no_feature_repeats_within_a_token() {
        let mut c = FeatureConfig::default();
        c.clusters.whole_path = true;
        c.clusters.window = vec![-2, -1, 0, 1, 2];
        let e = Extractor::new(c.check().unwrap(), Some(paths(true))).unwrap();
        let tokens = ["A", "the", "McCat", "--", "é", "sat", "X-1", "."];
        for (i, token) in features(&e, &tokens).iter().enumerate() {
            let mut sorted = token.clone();
            sorted.sort();
            sorted.dedup();
            assert_eq!(sorted.len(), token.len(), "token {i}: {token:?}");
            // Keys stop at the first `=` or `:`; the bias and flags have
            // neither.
            for f in token {
                let key = f.split(['=', ':']).next().unwrap();
                assert!(!key.is_empty() && !key.contains(' '), "{f}");
            }
        }
    }

    /// The cached ids are the uncached ones, token by token (as
    /// multisets), with and without paths and edge markers, for words
    /// seen and unseen in the index.
    #[test]
    fn cached_ids_equal_uncached_ids() {
        let sentences: [&[&str]; 4] = [
            &["The", "cat", "sat", "on", "the", "mat", "."],
            &["é", "cat"],
            &["zebra"],
            &["the", "the", "sat", "unknown-word", "cat", "sat", "é"],
        ];
        for markers in [true, false] {
            for with_paths in [true, false] {
                let mut c = FeatureConfig {
                    boundary_markers: markers,
                    ..FeatureConfig::default()
                };
                c.clusters.whole_path = true;
                let e = Extractor::new(
                    c.check().unwrap(),
                    with_paths.then(|| paths(true)),
                )
                .unwrap();
                // An index from the first two sentences only, so that the
                // others have features it does not know.
                let index = FeatureIndex::from_sentences(&e, &sentences[..2]);
                let mut cache = IdCache::new();
                let (mut plain, mut cached) =
                    (FeatureIds::new(), FeatureIds::new());
                for round in 0..2 {
                    for s in sentences {
                        e.extract_ids(&index, s, &[], &mut plain);
                        e.extract_ids_cached(
                            &index,
                            s,
                            &[],
                            &mut cached,
                            &mut cache,
                        );
                        assert_eq!(plain.len(), cached.len());
                        for i in 0..s.len() {
                            let mut a = plain.token(i).to_vec();
                            let mut b = cached.token(i).to_vec();
                            a.sort_unstable();
                            b.sort_unstable();
                            assert_eq!(a, b, "{s:?} token {i}, round {round}, markers {markers}, paths {with_paths}");
                        }
                    }
                }
            }
        }
    }

    #[test]
    fn extractor_serde_round_trip_checks_again() {
        let c = config(|c| c.clusters.enabled = Some(true));
        let e = Extractor::new(c, Some(paths(true))).unwrap();
        let json = serde_json::to_string(&e).unwrap();
        let back: Extractor = serde_json::from_str(&json).unwrap();
        assert_eq!(back, e);
        let without = json.replace(
            &format!(
                ",\"paths\":{}",
                serde_json::to_string(&paths(true)).unwrap()
            ),
            ",\"paths\":null",
        );
        assert_ne!(without, json);
        let err = serde_json::from_str::<Extractor>(&without).unwrap_err();
        assert!(err.to_string().contains("clusters.enabled"), "{err}");
    }

    #[test]
    fn extractors_and_buffers_can_cross_threads() {
        fn shared<T: Send + Sync>() {}
        shared::<Extractor>();
        shared::<Paths>();
        shared::<FeatureIndex>();
        shared::<Features>();
        shared::<FeatureIds>();
    }

    fn features_with(
        e: &Extractor,
        tokens: &[&str],
        columns: &[&[&str]],
    ) -> Vec<Vec<String>> {
        let mut out = Features::new();
        e.extract_with(tokens, columns, &mut out);
        out.iter().map(|t| t.map(String::from).collect()).collect()
    }

    /// A config with only the extras of `toml` (no lexical templates, no
    /// `[clusters]` features unless `toml` turns them on).
    fn extras(toml: &str) -> CheckedConfig {
        let mut c = FeatureConfig::from_toml(toml).unwrap();
        let l = &mut c.lexical;
        (l.word, l.lowercase, l.char_prefixes, l.char_suffixes) =
            (false, false, false, false);
        (l.shape, l.case_flags, l.char_flags, l.neighbours) =
            (false, false, false, false);
        c.check().unwrap()
    }

    #[test]
    fn column_windows_and_ngrams() {
        let c = extras(
            "[[columns]]\nname = \"pos\"\ncolumn = 2\nwindow = [-1, 0]\n\
             ngrams = [[-1, 0], [0, 1, 2]]\n",
        );
        let e = Extractor::new(c, None).unwrap();
        assert_eq!(e.columns(), [2]);
        let tags = ["DT", "N|N", "V\\"];
        let got = features_with(&e, &["the", "cat", "sat"], &[&tags]);
        let want: [&[&str]; 3] = [
            &[
                "bias",
                "pos[-1]:start",
                "pos[0]=DT",
                "pos[-1,0]=\\start|DT",
                "pos[0,+1,+2]=DT|N\\|N|V\\\\",
            ],
            &[
                "bias",
                "pos[-1]=DT",
                "pos[0]=N|N",
                "pos[-1,0]=DT|N\\|N",
                "pos[0,+1,+2]=N\\|N|V\\\\|\\end",
            ],
            &[
                "bias",
                "pos[-1]=N|N",
                "pos[0]=V\\",
                "pos[-1,0]=N\\|N|V\\\\",
                "pos[0,+1,+2]=V\\\\|\\end|\\end",
            ],
        ];
        assert_eq!(got, want);
        // Without markers, a window or n-gram beyond the sentence emits
        // nothing.
        let c = extras(
            "boundary_markers = false\n[[columns]]\nname = \"pos\"\n\
             column = -1\nwindow = [-1]\nngrams = [[0, 1]]\n",
        );
        let e = Extractor::new(c, None).unwrap();
        let got = features_with(&e, &["a", "b"], &[&["X", "Y"]]);
        assert_eq!(
            got,
            [vec!["bias", "pos[0,+1]=X|Y"], vec!["bias", "pos[-1]=X"]]
        );
    }

    #[test]
    fn conjunctions_of_every_kind() {
        let c = extras(
            "[clusters]\nprefix_lengths = [2]\nwindow = [0]\nenabled = true\n\
             [[columns]]\nname = \"pos\"\ncolumn = 2\nwindow = []\nngrams = [[0, 1]]\n\
             [[conjunctions]]\nname = \"wp\"\nparts = [\"word\", \"pos\"]\n\
             [[conjunctions]]\nname = \"lx\"\nparts = [\"lower[-1]\", \"shape[+1]\"]\n\
             [[conjunctions]]\nname = \"ax\"\nparts = [\"pre2\", \"suf2\", \"path\"]\n\
             [[conjunctions]]\nname = \"pp\"\nparts = [\"p2[-1]\", \"p3\"]\n",
        );
        let e = Extractor::new(c, Some(paths(false))).unwrap();
        let got =
            features_with(&e, &["The", "cat", "zebra"], &[&["D|T", "N", "N"]]);
        let want: [&[&str]; 3] = [
            &[
                "bias",
                "path[0]:none",
                "pos[0,+1]=D\\|T|N",
                "wp=The|D\\|T",
                "lx=\\start|x",
                "ax=Th|he|\\none",
                "pp=\\start|\\none",
            ],
            &[
                "bias",
                "p2[0]=01",
                "pos[0,+1]=N|N",
                "wp=cat|N",
                "lx=the|x",
                "ax=ca|at|011010",
                "pp=\\none|011",
            ],
            &[
                "bias",
                "path[0]:none",
                "pos[0,+1]=N|\\end",
                "wp=zebra|N",
                "lx=cat|\\end",
                "ax=ze|ra|\\none",
                "pp=01|\\none",
            ],
        ];
        assert_eq!(got, want);
        // Without clusters the conjunctions of paths emit nothing.
        let c = extras(
            "[[conjunctions]]\nname = \"pp\"\nparts = [\"p2[-1]\", \"word\"]\n\
             [[conjunctions]]\nname = \"ww\"\nparts = [\"word[-1]\", \"word\"]\n",
        );
        let e = Extractor::new(c, None).unwrap();
        assert_eq!(
            features(&e, &["a", "b"]),
            [["bias", "ww=\\start|a"], ["bias", "ww=a|b"]]
        );
    }

    #[test]
    fn cluster_sets_have_their_own_prefixes_and_windows() {
        let toml = "[clusters]\nprefix_lengths = [2]\nwindow = [0]\n\
                    [[cluster_sets]]\nname = \"lc\"\nprefix_lengths = [1, 3]\n\
                    whole_path = true\nwindow = [1]\n\
                    [[conjunctions]]\nname = \"both\"\nparts = [\"p2\", \"lc.path\"]\n";
        let e = Extractor::with_sets(
            extras(toml),
            Some(paths(false)),
            vec![("lc".into(), paths(true))],
        )
        .unwrap();
        assert_eq!(e.cluster_sets().map(|s| s.0).collect::<Vec<_>>(), ["lc"]);
        let got = features(&e, &["The", "cat"]);
        let want: [&[&str]; 2] = [
            &[
                "bias",
                "path[0]:none",
                "lc.p1[+1]=0",
                "lc.p3[+1]=011",
                "lc.path[+1]=011010",
                "both=\\none|0010",
            ],
            &["bias", "p2[0]=01", "lc.path[+1]:end", "both=01|011010"],
        ];
        assert_eq!(got, want);
        // The set left out: no features of it, and no conjunction using it.
        let e = Extractor::new(extras(toml), Some(paths(false))).unwrap();
        assert_eq!(features(&e, &["cat"]), [["bias", "p2[0]=01"]]);
        // Unknown names and required sets.
        let err = Extractor::with_sets(
            extras(toml),
            None,
            vec![("uc".into(), paths(true))],
        )
        .unwrap_err();
        assert!(matches!(err, Error::UnknownSet { .. }), "{err:?}");
        let required =
            toml.replace("name = \"lc\"", "name = \"lc\"\nenabled = true");
        let err = Extractor::new(extras(&required), None).unwrap_err();
        assert!(err.to_string().contains("--clusters lc=DIR"), "{err}");
        // Serialised with every set, and checked again on the way in.
        let e = Extractor::with_sets(
            extras(&required),
            None,
            vec![("lc".into(), paths(true))],
        )
        .unwrap();
        let json = serde_json::to_string(&e).unwrap();
        let back: Extractor = serde_json::from_str(&json).unwrap();
        assert_eq!(back, e);
        assert_eq!(
            features(&back, &["The", "cat"]),
            features(&e, &["The", "cat"])
        );
    }

    /// The cached ids equal the uncached ones with every extra on.
    #[test]
    fn cached_ids_with_extras() {
        let toml = "[clusters]\nprefix_lengths = [2]\n\
                    [[cluster_sets]]\nname = \"lc\"\nprefix_lengths = [1]\n\
                    [[columns]]\nname = \"pos\"\ncolumn = 2\nwindow = [-1, 0, 1]\n\
                    ngrams = [[-1, 0]]\n\
                    [[conjunctions]]\nname = \"wp\"\nparts = [\"word\", \"pos[1]\"]\n\
                    [[conjunctions]]\nname = \"pl\"\nparts = [\"lc.p1[-1]\", \"p2\"]\n";
        for markers in [true, false] {
            let mut c = FeatureConfig::from_toml(toml).unwrap();
            c.clusters.whole_path = true;
            c.boundary_markers = markers;
            let e = Extractor::with_sets(
                c.check().unwrap(),
                Some(paths(false)),
                vec![("lc".into(), paths(true))],
            )
            .unwrap();
            let sentences: [(&[&str], &[&str]); 3] = [
                (&["The", "cat", "sat"], &["D", "N", "V"]),
                (&["é", "cat"], &["X", "N"]),
                (&["the", "zebra", "sat", "cat"], &["D", "N", "V", "Y"]),
            ];
            let mut builder = crate::FeatureIndexBuilder::new();
            let mut buf = Features::new();
            for (tokens, tags) in &sentences[..2] {
                e.extract_with(tokens, &[*tags], &mut buf);
                builder.add(&buf);
            }
            let index = builder.build(1);
            let mut cache = IdCache::new();
            let (mut plain, mut cached) =
                (FeatureIds::new(), FeatureIds::new());
            for (tokens, tags) in sentences.iter().chain(&sentences) {
                let (tokens, tags) = (*tokens, *tags);
                e.extract_ids(&index, tokens, &[tags], &mut plain);
                e.extract_ids_cached(
                    &index,
                    tokens,
                    &[tags],
                    &mut cached,
                    &mut cache,
                );
                for i in 0..tokens.len() {
                    let mut a = plain.token(i).to_vec();
                    let mut b = cached.token(i).to_vec();
                    a.sort_unstable();
                    b.sort_unstable();
                    assert_eq!(
                        a, b,
                        "{tokens:?} token {i}, markers {markers}"
                    );
                }
            }
        }
    }

    /// The cached ids (word cache, path ids taken from it, the template
    /// tables of word and of non-word templates) equal the ids of the
    /// plain string path, token by token, on random sentences with the
    /// shipped chunking config, for words and tag sequences seen and
    /// unseen in the index.
    #[test]
    fn cached_ids_equal_plain_ids_on_random_sentences() {
        use rand::{Rng, SeedableRng};
        let toml = include_str!("../../configs/chunk.toml");
        let c = FeatureConfig::from_toml(toml).unwrap().check().unwrap();
        let e = Extractor::new(c, Some(paths(true))).unwrap();
        let vocabulary = [
            "the", "The", "cat", "sat", "é", "zebra", "a|b", "x\\y", "on",
            ".", "gnu", "Q|r",
        ];
        let tagset = ["DT", "NN", "V|B", "IN", "\\", "."];
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(3);
        // The last two words only after the sentences of the index: words
        // that were never training tokens.
        let sentences: Vec<(Vec<&str>, Vec<&str>)> = (0..300)
            .map(|k| {
                let n = rng.random_range(1..9);
                let words = if k < 40 { 10 } else { 12 };
                let words = (0..n)
                    .map(|_| vocabulary[rng.random_range(0..words)])
                    .collect();
                let tags = (0..n)
                    .map(|_| tagset[rng.random_range(0..tagset.len())])
                    .collect();
                (words, tags)
            })
            .collect();
        let mut builder = crate::FeatureIndexBuilder::new();
        let mut buf = Features::new();
        for (tokens, tags) in &sentences[..40] {
            e.extract_with(tokens, &[tags], &mut buf);
            builder.add(&buf);
        }
        let index = builder.build(1);
        let mut cache = IdCache::new();
        let (mut plain, mut cached) = (FeatureIds::new(), FeatureIds::new());
        let mut found = 0;
        for (round, (tokens, tags)) in
            sentences.iter().chain(&sentences).enumerate()
        {
            e.extract_ids(&index, tokens, &[tags], &mut plain);
            e.extract_ids_cached(
                &index,
                tokens,
                &[tags],
                &mut cached,
                &mut cache,
            );
            assert_eq!(plain.len(), cached.len());
            for i in 0..tokens.len() {
                let mut a = plain.token(i).to_vec();
                let mut b = cached.token(i).to_vec();
                a.sort_unstable();
                b.sort_unstable();
                assert_eq!(a, b, "{tokens:?} {tags:?} token {i}, {round}");
                found += a.len();
            }
        }
        // The sentences do reach the index's features.
        assert!(found > 10 * sentences.len(), "{found}");
    }

    #[test]
    #[should_panic(expected = "input columns")]
    fn a_missing_column_list_is_a_caller_bug() {
        let c = extras("[[columns]]\nname = \"pos\"\ncolumn = 2\n");
        let e = Extractor::new(c, None).unwrap();
        features(&e, &["a"]);
    }
}
