//! The structured averaged perceptron (Collins 2002) with first-order
//! label transitions and Viterbi decoding.
//!
//! # Model
//!
//! A token's score for label `y` is the sum of the weights `(f, y)` of
//! its features `f`; a label sequence scores the sum of its tokens'
//! scores and of the transition weights `(y_{i−1}, y_i)`, with a start
//! and an end label. Decoding finds the best sequence among those the
//! tag scheme allows ([`Constraints`]), restricted where a token has a
//! candidate list (a tag dictionary).
//!
//! # Training
//!
//! For each sentence, decode with the current weights; where the output
//! differs from the gold sequence, add 1 to the gold features and
//! transitions and subtract 1 from the predicted ones. The returned
//! weights are the average of the weights after every sentence, computed
//! lazily: each weight keeps its running sum and the time of its last
//! change, and the sum is brought up to date only when the weight
//! changes or the average is read. Weights are integers during training,
//! so the averages are exact.
//!
//! # Layout
//!
//! Weights are stored sparsely, per feature a short list of the labels it
//! has been updated for. Most features co-occur with one or two labels,
//! so scoring a token costs the number of (feature, label) pairs it
//! touches rather than features × labels, which matters with 175 POS
//! tags. The averaged weights keep these lists one after another in one
//! buffer (compressed rows), which a model file fills in a few long
//! copies.

/// A sentence as feature ids per token (compressed rows) and, for
/// training, gold label ids.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Instance {
    /// Feature ids of all tokens, token after token.
    pub features: Vec<u32>,
    /// Token `i`'s features are `features[starts[i]..starts[i + 1]]`.
    pub starts: Vec<u32>,
    /// Gold label ids, one per token (empty when tagging).
    pub labels: Vec<u32>,
    /// Per token, the index of its candidate list in the
    /// [`Candidates`] given to the decoder, or [`ANY_LABEL`]. Empty means
    /// any label everywhere.
    pub candidates: Vec<u32>,
}

/// A token without a candidate list: every label is possible.
pub const ANY_LABEL: u32 = u32::MAX;

/// Candidate label lists that instances point into.
pub type Candidates = [Vec<u32>];

impl Instance {
    /// The number of tokens.
    pub fn len(&self) -> usize {
        self.starts.len().saturating_sub(1)
    }

    /// Whether there are no tokens.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// Token `i`'s feature ids.
    pub fn token(&self, i: usize) -> &[u32] {
        &self.features[self.starts[i] as usize..self.starts[i + 1] as usize]
    }

    /// Builds an instance from per-token feature lists.
    pub fn from_tokens(tokens: &[Vec<u32>], labels: Vec<u32>) -> Instance {
        let mut features = Vec::new();
        let mut starts = vec![0u32];
        for t in tokens {
            features.extend_from_slice(t);
            starts.push(features.len() as u32);
        }
        Instance { features, starts, labels, candidates: Vec::new() }
    }
}

/// Which label sequences decoding may produce: allowed transitions,
/// starts and ends (from the tag scheme).
#[derive(Clone, Debug, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Constraints {
    labels: usize,
    /// `allowed[prev * labels + next]`.
    allowed: Vec<bool>,
    may_start: Vec<bool>,
    may_end: Vec<bool>,
}

impl Constraints {
    /// No constraint at all.
    pub fn none(labels: usize) -> Constraints {
        Constraints {
            labels,
            allowed: vec![true; labels * labels],
            may_start: vec![true; labels],
            may_end: vec![true; labels],
        }
    }

    /// Constraints from predicates on label ids.
    pub fn from_fn(
        labels: usize,
        allowed: impl Fn(Option<usize>, usize) -> bool,
        may_end: impl Fn(usize) -> bool,
    ) -> Constraints {
        let mut table = vec![false; labels * labels];
        for p in 0..labels {
            for n in 0..labels {
                table[p * labels + n] = allowed(Some(p), n);
            }
        }
        Constraints {
            labels,
            allowed: table,
            may_start: (0..labels).map(|n| allowed(None, n)).collect(),
            may_end: (0..labels).map(may_end).collect(),
        }
    }

    /// Checks that the tables fit `labels` labels.
    pub fn check(&self, labels: usize) -> Result<(), String> {
        let ok = self.labels == labels
            && self.allowed.len() == labels * labels
            && self.may_start.len() == labels
            && self.may_end.len() == labels;
        if ok {
            Ok(())
        } else {
            Err("scheme constraints of the wrong size".into())
        }
    }

    /// Whether `prev → next` is allowed.
    pub fn allows(&self, prev: usize, next: usize) -> bool {
        self.allowed[prev * self.labels + next]
    }
}

/// Decoding weights: per feature the labels it has a weight for, and a
/// dense transition table with a start row and an end column.
///
/// The rows lie one after another in one buffer, so a model of millions
/// of features loads as a few buffers rather than one allocation per
/// feature. They are kept in whichever of two layouts takes less memory:
/// compressed rows (an offset per feature and its `(label, weight)`
/// entries), or, with few labels, a dense row of every label's weight per
/// feature. The dense layout reads one place in memory per feature
/// instead of two, which matters when the tables are far larger than the
/// processor's caches; its zeros change no score.
#[derive(Clone, Debug, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(into = "RawWeights", try_from = "RawWeights")]
pub struct Weights {
    labels: usize,
    rows: Rows,
    /// `(labels + 1)²`: row `labels` is the start, column `labels` the
    /// end.
    transitions: Vec<f32>,
}

/// The two layouts of the feature weights.
#[derive(Clone, Debug, PartialEq)]
enum Rows {
    /// Feature `f`'s entries are `entries[ends[f - 1]..ends[f]]` (from 0
    /// for `f = 0`), `(label, weight)` sorted by label.
    Sparse { ends: Vec<u64>, entries: Vec<(u32, f32)> },
    /// Feature `f`'s weight for label `y` is `values[f * labels + y]`.
    Dense { features: usize, values: Vec<f32> },
}

/// How [`Weights`] are written: the row lengths, then the labels and
/// the weights of all rows' nonzero entries as little-endian bytes (read
/// in one go instead of one number at a time).
#[derive(serde::Serialize, serde::Deserialize)]
struct RawWeights {
    labels: usize,
    lengths: Vec<u32>,
    entry_labels: Bytes,
    entry_weights: Bytes,
    transitions: Vec<f32>,
}

impl From<Weights> for RawWeights {
    fn from(w: Weights) -> RawWeights {
        let mut lengths = Vec::with_capacity(w.features());
        let (mut entry_labels, mut entry_weights) = (Vec::new(), Vec::new());
        for f in 0..w.features() {
            let mut len = 0;
            w.for_each_entry(f, |y, weight| {
                entry_labels.extend(y.to_le_bytes());
                entry_weights.extend(weight.to_le_bytes());
                len += 1;
            });
            lengths.push(len);
        }
        RawWeights {
            labels: w.labels,
            lengths,
            entry_labels: Bytes(entry_labels),
            entry_weights: Bytes(entry_weights),
            transitions: w.transitions,
        }
    }
}

impl TryFrom<RawWeights> for Weights {
    type Error = String;

    /// Checks that the parts fit together and that every entry names a
    /// label and holds a finite weight; [`Weights::check`] checks them
    /// against the model.
    fn try_from(raw: RawWeights) -> Result<Weights, String> {
        let n = raw.entry_labels.0.len();
        if n % 4 != 0 || raw.entry_weights.0.len() != n {
            return Err("weight entries of unequal lengths".into());
        }
        let total: u64 = raw.lengths.iter().map(|&len| u64::from(len)).sum();
        if total != (n / 4) as u64 {
            return Err("row lengths do not add up to the entries".into());
        }
        let word = |b: &[u8]| <[u8; 4]>::try_from(b).expect("4 bytes");
        let entries: Vec<(u32, f32)> = raw
            .entry_labels
            .0
            .chunks_exact(4)
            .zip(raw.entry_weights.0.chunks_exact(4))
            .map(|(y, w)| {
                (u32::from_le_bytes(word(y)), f32::from_le_bytes(word(w)))
            })
            .collect();
        if entries
            .iter()
            .any(|&(y, w)| y as usize >= raw.labels || !w.is_finite())
        {
            return Err("a weight for a label that does not exist".into());
        }
        let mut end = 0;
        let ends = raw
            .lengths
            .iter()
            .map(|&len| {
                end += u64::from(len);
                end
            })
            .collect();
        Ok(Weights::from_flat(raw.labels, ends, entries, raw.transitions))
    }
}

/// A byte string that serialises as one (postcard writes its length and
/// copies it), not as a list of numbers.
struct Bytes(Vec<u8>);

impl serde::Serialize for Bytes {
    fn serialize<S: serde::Serializer>(
        &self,
        s: S,
    ) -> Result<S::Ok, S::Error> {
        s.serialize_bytes(&self.0)
    }
}

impl<'de> serde::Deserialize<'de> for Bytes {
    fn deserialize<D: serde::Deserializer<'de>>(
        d: D,
    ) -> Result<Bytes, D::Error> {
        struct Visit;
        impl<'de> serde::de::Visitor<'de> for Visit {
            type Value = Bytes;
            fn expecting(
                &self,
                f: &mut std::fmt::Formatter,
            ) -> std::fmt::Result {
                f.write_str("a byte string")
            }
            fn visit_bytes<E>(self, v: &[u8]) -> Result<Bytes, E> {
                Ok(Bytes(v.to_vec()))
            }
            fn visit_byte_buf<E>(self, v: Vec<u8>) -> Result<Bytes, E> {
                Ok(Bytes(v))
            }
            fn visit_seq<A: serde::de::SeqAccess<'de>>(
                self,
                mut seq: A,
            ) -> Result<Bytes, A::Error> {
                let mut v = Vec::new();
                while let Some(b) = seq.next_element()? {
                    v.push(b);
                }
                Ok(Bytes(v))
            }
        }
        d.deserialize_bytes(Visit)
    }
}

impl Weights {
    /// Weights from one `(label, weight)` list per feature (each sorted
    /// by label, every label below `labels`) and the transition table.
    pub fn from_rows(
        labels: usize,
        rows: impl IntoIterator<Item = impl IntoIterator<Item = (u32, f32)>>,
        transitions: Vec<f32>,
    ) -> Weights {
        let mut ends = Vec::new();
        let mut entries = Vec::new();
        for row in rows {
            entries.extend(row);
            ends.push(entries.len() as u64);
        }
        Weights::from_flat(labels, ends, entries, transitions)
    }

    /// [`Weights::from_rows`] with the rows one after another: row `f`
    /// is `entries[ends[f - 1]..ends[f]]`.
    ///
    /// # Panics
    ///
    /// If an entry's label is not below `labels` or `ends` does not
    /// rise to the number of entries.
    fn from_flat(
        labels: usize,
        ends: Vec<u64>,
        entries: Vec<(u32, f32)>,
        transitions: Vec<f32>,
    ) -> Weights {
        assert!(
            entries.iter().all(|&(y, _)| (y as usize) < labels),
            "a weight for a label that does not exist"
        );
        assert!(
            ends.is_sorted()
                && ends.last().map_or(0, |&e| e as usize) == entries.len(),
            "row ends that do not fit the entries"
        );
        // Bytes per feature: a dense row against an offset and the
        // entries.
        let features = ends.len();
        let dense = 4 * labels * features;
        let sparse = 8 * features + 8 * entries.len();
        Weights::laid_out(labels, ends, entries, transitions, dense <= sparse)
    }

    /// [`Weights::from_flat`] in the layout chosen by `dense`.
    fn laid_out(
        labels: usize,
        ends: Vec<u64>,
        entries: Vec<(u32, f32)>,
        transitions: Vec<f32>,
        dense: bool,
    ) -> Weights {
        let features = ends.len();
        let rows = if dense {
            let mut values = vec![0.0; labels * features];
            let mut start = 0;
            for (f, &end) in ends.iter().enumerate() {
                for &(y, w) in &entries[start..end as usize] {
                    values[f * labels + y as usize] = w;
                }
                start = end as usize;
            }
            Rows::Dense { features, values }
        } else {
            Rows::Sparse { ends, entries }
        };
        Weights { labels, rows, transitions }
    }

    /// The number of labels.
    pub fn labels(&self) -> usize {
        self.labels
    }

    /// The number of features.
    pub fn features(&self) -> usize {
        match &self.rows {
            Rows::Sparse { ends, .. } => ends.len(),
            Rows::Dense { features, .. } => *features,
        }
    }

    /// The number of nonzero (feature, label) weights.
    pub fn nonzero(&self) -> usize {
        match &self.rows {
            Rows::Sparse { entries, .. } => entries.len(),
            Rows::Dense { values, .. } => {
                values.iter().filter(|&&w| w != 0.0).count()
            }
        }
    }

    /// Calls `visit(label, weight)` for feature `f`'s nonzero weights,
    /// labels in increasing order; nothing beyond the table.
    fn for_each_entry(&self, f: usize, mut visit: impl FnMut(u32, f32)) {
        match &self.rows {
            Rows::Sparse { ends, entries } => {
                let Some(&end) = ends.get(f) else { return };
                let start = if f == 0 { 0 } else { ends[f - 1] };
                for &(y, w) in &entries[start as usize..end as usize] {
                    visit(y, w);
                }
            }
            Rows::Dense { features, values } => {
                if f >= *features {
                    return;
                }
                let row = &values[f * self.labels..(f + 1) * self.labels];
                for (y, &w) in row.iter().enumerate() {
                    if w != 0.0 {
                        visit(y as u32, w);
                    }
                }
            }
        }
    }

    /// Whether feature `f` has a nonzero weight for some label.
    pub fn has_weights(&self, f: usize) -> bool {
        let mut any = false;
        self.for_each_entry(f, |_, _| any = true);
        any
    }

    /// The weights of the features `kept` (ids in increasing order), which
    /// become features `0..kept.len()` in that order.
    pub fn select(&self, kept: &[u32]) -> Weights {
        let rows = kept.iter().map(|&f| {
            let mut row = Vec::new();
            self.for_each_entry(f as usize, |y, w| row.push((y, w)));
            row
        });
        Weights::from_rows(self.labels, rows, self.transitions.clone())
    }

    /// These weights with the rows of the features `clear` picks emptied.
    #[cfg(test)]
    pub(crate) fn cleared(&self, clear: impl Fn(usize) -> bool) -> Weights {
        let rows = (0..self.features()).map(|f| {
            let mut row = Vec::new();
            if !clear(f) {
                self.for_each_entry(f, |y, w| row.push((y, w)));
            }
            row
        });
        Weights::from_rows(self.labels, rows, self.transitions.clone())
    }

    /// Adds the weights of `features` to `scores` (one per label).
    #[inline]
    fn add_scores(&self, features: &[u32], scores: &mut [f64]) {
        match &self.rows {
            Rows::Sparse { ends, entries } => {
                for &f in features {
                    let f = f as usize;
                    let Some(&end) = ends.get(f) else { continue };
                    let start = if f == 0 { 0 } else { ends[f - 1] };
                    for &(y, w) in &entries[start as usize..end as usize] {
                        scores[y as usize] += f64::from(w);
                    }
                }
            }
            Rows::Dense { features: n, values } => {
                let labels = self.labels;
                let scores = &mut scores[..labels];
                for &f in features {
                    let f = f as usize;
                    if f >= *n {
                        continue;
                    }
                    let row = &values[f * labels..][..labels];
                    for y in 0..labels {
                        scores[y] += f64::from(row[y]);
                    }
                }
            }
        }
    }

    /// Checks that the tables fit `labels` labels and `features`
    /// features, as a model read from a file must.
    pub fn check(&self, labels: usize, features: usize) -> Result<(), String> {
        if self.labels != labels {
            return Err(format!(
                "weights for {} labels, model has {labels}",
                self.labels
            ));
        }
        if self.features() > features {
            return Err(format!(
                "weights for {} features, model has {features}",
                self.features()
            ));
        }
        if self.transitions.len() != (labels + 1) * (labels + 1) {
            return Err("transition table of the wrong size".into());
        }
        Ok(())
    }

    fn transition(&self, prev: usize, next: usize) -> f64 {
        f64::from(self.transitions[prev * (self.labels + 1) + next])
    }

    /// The best allowed label sequence for `x`.
    pub fn decode(
        &self,
        x: &Instance,
        rules: &Constraints,
        lists: &Candidates,
        buf: &mut Decoding,
    ) -> Vec<u32> {
        buf.emissions.clear();
        buf.emissions.resize(x.len() * self.labels, 0.0);
        for i in 0..x.len() {
            let scores =
                &mut buf.emissions[i * self.labels..(i + 1) * self.labels];
            self.add_scores(x.token(i), scores);
        }
        let (emissions, lattice) = (&buf.emissions, &mut buf.lattice);
        viterbi(x, self.labels, emissions, rules, lists, lattice, |p, n| {
            self.transition(p, n)
        })
    }
}

/// Reusable buffers for decoding.
#[derive(Default)]
pub struct Decoding {
    emissions: Vec<f64>,
    lattice: Lattice,
}

#[derive(Default)]
struct Lattice {
    score: Vec<f64>,
    back: Vec<u32>,
    all: Vec<u32>,
}

/// Viterbi over candidate labels; `transition(prev, next)` with
/// `prev = labels` for the start and `next = labels` for the end. Ties go
/// to the smaller label id, so the result is deterministic.
fn viterbi(
    x: &Instance,
    labels: usize,
    emissions: &[f64],
    rules: &Constraints,
    lists: &Candidates,
    lat: &mut Lattice,
    transition: impl Fn(usize, usize) -> f64,
) -> Vec<u32> {
    let n = x.len();
    if n == 0 {
        return Vec::new();
    }
    if lat.all.len() != labels {
        lat.all = (0..labels as u32).collect();
    }
    let all = &lat.all[..];
    let mut cands: Vec<&[u32]> = (0..n)
        .map(|i| match x.candidates.get(i) {
            Some(&c) if c != ANY_LABEL => lists[c as usize].as_slice(),
            _ => all,
        })
        .collect();
    lat.score.clear();
    lat.score.resize(n * labels, f64::NEG_INFINITY);
    lat.back.clear();
    lat.back.resize(n * labels, u32::MAX);
    // A candidate list can clash with the scheme (a word seen only as
    // I-X after one seen only as O): then its position is filled again
    // with every label, so one clash never spoils the whole sentence.
    let start = |cands: &[u32], score: &mut [f64]| {
        let mut any = false;
        for &y in cands {
            let y = y as usize;
            if rules.may_start[y] {
                score[y] = transition(labels, y) + emissions[y];
                any = true;
            }
        }
        any
    };
    if !start(cands[0], &mut lat.score[..labels]) {
        cands[0] = all;
        start(all, &mut lat.score[..labels]);
    }
    for i in 1..n {
        let (done, rest) = lat.score.split_at_mut(i * labels);
        let prev = &done[(i - 1) * labels..];
        let here = &mut rest[..labels];
        let back = &mut lat.back[i * labels..(i + 1) * labels];
        let mut step = |here_cands: &[u32], here: &mut [f64]| {
            let mut any = false;
            for &y in here_cands {
                let y = y as usize;
                let mut best = f64::NEG_INFINITY;
                let mut arg = u32::MAX;
                for &p in cands[i - 1] {
                    let p = p as usize;
                    if prev[p] == f64::NEG_INFINITY || !rules.allows(p, y) {
                        continue;
                    }
                    let s = prev[p] + transition(p, y);
                    if s > best {
                        best = s;
                        arg = p as u32;
                    }
                }
                if arg != u32::MAX {
                    here[y] = best + emissions[i * labels + y];
                    back[y] = arg;
                    any = true;
                }
            }
            any
        };
        if !step(cands[i], here) {
            step(all, here);
            cands[i] = all;
        }
    }
    let ends = |cands: &[u32], score: &[f64]| {
        cands.iter().any(|&y| {
            score[y as usize] > f64::NEG_INFINITY && rules.may_end[y as usize]
        })
    };
    if !ends(cands[n - 1], &lat.score[(n - 1) * labels..]) {
        cands[n - 1] = all;
    }
    let last = &lat.score[(n - 1) * labels..];
    let mut best = f64::NEG_INFINITY;
    let mut arg = None;
    for &y in cands[n - 1] {
        let y = y as usize;
        if last[y] == f64::NEG_INFINITY || !rules.may_end[y] {
            continue;
        }
        let s = last[y] + transition(y, labels);
        if s > best {
            best = s;
            arg = Some(y);
        }
    }
    // With no allowed path (candidates that clash with the scheme),
    // fall back to the best path ignoring the end rule, then to label 0.
    let mut y = match arg {
        Some(y) => y,
        None => (0..labels)
            .filter(|&y| last[y] > f64::NEG_INFINITY)
            .max_by(|&a, &b| last[a].total_cmp(&last[b]).then(b.cmp(&a)))
            .unwrap_or(0),
    };
    let mut out = vec![0u32; n];
    for i in (0..n).rev() {
        out[i] = y as u32;
        if i > 0 {
            let b = lat.back[i * labels + y];
            y = if b == u32::MAX { 0 } else { b as usize };
        }
    }
    out
}

/// One weight being trained: the current value, its running sum over
/// time, and when it last changed.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
struct Lazy {
    value: i32,
    sum: i64,
    stamp: u32,
}

impl Lazy {
    fn add(&mut self, delta: i32, now: u32) {
        self.sum += i64::from(self.value) * i64::from(now - self.stamp);
        self.stamp = now;
        self.value += delta;
    }

    fn average(&self, now: u32) -> f64 {
        let sum =
            self.sum + i64::from(self.value) * i64::from(now - self.stamp);
        sum as f64 / f64::from(now.max(1))
    }
}

/// The training state: current weights with lazy running sums.
pub struct Trainer {
    labels: usize,
    rows: Vec<Vec<(u32, Lazy)>>,
    transitions: Vec<Lazy>,
    /// Sentences seen: the clock of the running sums.
    now: u32,
    buf: Decoding,
}

impl Trainer {
    /// A trainer for `features` feature ids and `labels` labels.
    pub fn new(features: usize, labels: usize) -> Trainer {
        Trainer {
            labels,
            rows: vec![Vec::new(); features],
            transitions: vec![Lazy::default(); (labels + 1) * (labels + 1)],
            now: 0,
            buf: Decoding::default(),
        }
    }

    /// Decodes `x` with the current weights.
    pub fn predict(
        &mut self,
        x: &Instance,
        rules: &Constraints,
        lists: &Candidates,
    ) -> Vec<u32> {
        let labels = self.labels;
        let buf = &mut self.buf;
        buf.emissions.clear();
        buf.emissions.resize(x.len() * labels, 0.0);
        for i in 0..x.len() {
            let scores = &mut buf.emissions[i * labels..(i + 1) * labels];
            for &f in x.token(i) {
                for &(y, w) in &self.rows[f as usize] {
                    scores[y as usize] += f64::from(w.value);
                }
            }
        }
        let trans = &self.transitions;
        let (emissions, lattice) = (&buf.emissions, &mut buf.lattice);
        viterbi(x, labels, emissions, rules, lists, lattice, |p, n| {
            f64::from(trans[p * (labels + 1) + n].value)
        })
    }

    /// Trains on one sentence: decodes it and, where the output differs
    /// from the gold labels, moves the weights towards gold. Returns the
    /// number of tokens decoded wrongly.
    pub fn learn(
        &mut self,
        x: &Instance,
        rules: &Constraints,
        lists: &Candidates,
    ) -> usize {
        self.now += 1;
        let predicted = self.predict(x, rules, lists);
        let gold = &x.labels;
        let wrong = predicted.iter().zip(gold).filter(|(p, g)| p != g).count();
        if wrong > 0 {
            // The update is applied at the time this sentence ends, so
            // the sum counts the old value for every earlier sentence.
            let now = self.now - 1;
            for i in 0..x.len() {
                let (g, p) = (gold[i], predicted[i]);
                if g != p {
                    for &f in x.token(i) {
                        self.bump(f, g, 1, now);
                        self.bump(f, p, -1, now);
                    }
                }
            }
            let l = self.labels;
            let pair = |seq: &[u32], i: usize| -> (usize, usize) {
                let prev = if i == 0 { l } else { seq[i - 1] as usize };
                let next = if i == seq.len() { l } else { seq[i] as usize };
                (prev, next)
            };
            for i in 0..=x.len() {
                let (g, p) = (pair(gold, i), pair(&predicted, i));
                if g != p {
                    self.transitions[g.0 * (l + 1) + g.1].add(1, now);
                    self.transitions[p.0 * (l + 1) + p.1].add(-1, now);
                }
            }
        }
        wrong
    }

    fn bump(&mut self, feature: u32, label: u32, delta: i32, now: u32) {
        let row = &mut self.rows[feature as usize];
        match row.binary_search_by_key(&label, |e| e.0) {
            Ok(k) => row[k].1.add(delta, now),
            Err(k) => {
                let mut w = Lazy { value: 0, sum: 0, stamp: now };
                w.add(delta, now);
                row.insert(k, (label, w));
            }
        }
    }

    /// The average of the weights over every sentence seen so far.
    pub fn averaged(&self) -> Weights {
        let now = self.now;
        let rows = self.rows.iter().map(|row| {
            row.iter()
                .map(|&(y, w)| (y, w.average(now) as f32))
                .filter(|&(_, w)| w != 0.0)
        });
        let transitions =
            self.transitions.iter().map(|w| w.average(now) as f32).collect();
        Weights::from_rows(self.labels, rows, transitions)
    }

    /// The current (not averaged) weights.
    pub fn current(&self) -> Weights {
        let rows = self.rows.iter().map(|row| {
            row.iter()
                .filter(|(_, w)| w.value != 0)
                .map(|&(y, w)| (y, w.value as f32))
        });
        let transitions =
            self.transitions.iter().map(|w| w.value as f32).collect();
        Weights::from_rows(self.labels, rows, transitions)
    }

    /// The average weights computed the slow way, for tests: `sums` must
    /// have been filled by [`Trainer::accumulate`] after every sentence.
    pub fn naive_average(&self, sums: &NaiveSums) -> Weights {
        let t = f64::from(self.now.max(1));
        let rows = sums.rows.iter().map(|row| {
            row.iter()
                .map(|&(y, s)| (y, (s as f64 / t) as f32))
                .filter(|&(_, w)| w != 0.0)
        });
        let transitions =
            sums.transitions.iter().map(|&s| (s as f64 / t) as f32).collect();
        Weights::from_rows(self.labels, rows, transitions)
    }

    /// Adds every current weight to `sums`: the obviously correct way to
    /// average, for tests.
    pub fn accumulate(&self, sums: &mut NaiveSums) {
        if sums.rows.len() < self.rows.len() {
            sums.rows.resize(self.rows.len(), Vec::new());
            sums.transitions.resize(self.transitions.len(), 0);
        }
        for (row, sum) in self.rows.iter().zip(&mut sums.rows) {
            for &(y, w) in row {
                match sum.binary_search_by_key(&y, |e| e.0) {
                    Ok(k) => sum[k].1 += i64::from(w.value),
                    Err(k) => sum.insert(k, (y, i64::from(w.value))),
                }
            }
        }
        for (w, s) in self.transitions.iter().zip(&mut sums.transitions) {
            *s += i64::from(w.value);
        }
    }
}

/// Running sums of every weight after every sentence (the naive average).
#[derive(Default)]
pub struct NaiveSums {
    rows: Vec<Vec<(u32, i64)>>,
    transitions: Vec<i64>,
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A toy task: label = feature id mod 3, with transitions mattering
    /// for ambiguous feature 9.
    fn toy() -> Vec<Instance> {
        let mut out = Vec::new();
        for k in 0..30u32 {
            let toks: Vec<Vec<u32>> =
                (0..5).map(|i| vec![(k + i) % 9, 9 + ((k + i) % 2)]).collect();
            let labels = (0..5).map(|i| (k + i) % 9 % 3).collect();
            out.push(Instance::from_tokens(&toks, labels));
        }
        out
    }

    #[test]
    fn lazy_average_equals_naive_average() {
        let data = toy();
        let rules = Constraints::none(3);
        let mut t = Trainer::new(11, 3);
        let mut sums = NaiveSums::default();
        for _ in 0..3 {
            for x in &data {
                t.learn(x, &rules, &[]);
                t.accumulate(&mut sums);
            }
        }
        assert_eq!(t.averaged(), t.naive_average(&sums));
        assert_ne!(t.averaged(), t.current());
    }

    /// Both layouts of the weights (chosen by size) give the same
    /// scores, decodes, entries and file bytes.
    #[test]
    fn dense_and_sparse_rows_agree() {
        let data = toy();
        let rules = Constraints::none(3);
        let mut t = Trainer::new(11, 3);
        for x in &data[..7] {
            t.learn(x, &rules, &[]);
        }
        let w = t.averaged();
        let layout = |dense: bool| {
            let raw = RawWeights::from(w.clone());
            let mut ends = Vec::new();
            let mut end = 0;
            for &len in &raw.lengths {
                end += u64::from(len);
                ends.push(end);
            }
            let mut entries = Vec::new();
            for f in 0..w.features() {
                w.for_each_entry(f, |y, v| entries.push((y, v)));
            }
            Weights::laid_out(3, ends, entries, raw.transitions, dense)
        };
        let (dense, sparse) = (layout(true), layout(false));
        assert!(matches!(dense.rows, Rows::Dense { .. }));
        assert!(matches!(sparse.rows, Rows::Sparse { .. }));
        assert_eq!(dense.nonzero(), sparse.nonzero());
        assert!(sparse.nonzero() > 0);
        assert_eq!(
            postcard::to_stdvec(&dense).unwrap(),
            postcard::to_stdvec(&sparse).unwrap()
        );
        let mut buf = Decoding::default();
        for x in &data {
            for i in 0..x.len() {
                let (mut a, mut b) = (vec![0.0; 3], vec![0.0; 3]);
                // A feature id beyond the table counts for nothing.
                let mut ids = x.token(i).to_vec();
                ids.push(99);
                dense.add_scores(&ids, &mut a);
                sparse.add_scores(&ids, &mut b);
                assert_eq!(a, b);
            }
            assert_eq!(
                dense.decode(x, &rules, &[], &mut buf),
                sparse.decode(x, &rules, &[], &mut buf)
            );
        }
    }

    #[test]
    fn separable_task_is_learned_perfectly() {
        let data = toy();
        let rules = Constraints::none(3);
        let mut t = Trainer::new(11, 3);
        for _ in 0..10 {
            for x in &data {
                t.learn(x, &rules, &[]);
            }
        }
        let w = t.averaged();
        let mut buf = Decoding::default();
        for x in &data {
            assert_eq!(w.decode(x, &rules, &[], &mut buf), x.labels);
        }
    }

    #[test]
    fn constraints_are_respected_and_candidates_restrict() {
        // Label 1 may never follow label 0; emissions prefer 0 then 1.
        let rules = Constraints::from_fn(
            2,
            |p, n| !(p == Some(0) && n == 1),
            |_| true,
        );
        let w = Weights::from_rows(
            2,
            [vec![(0, 5.0)], vec![(1, 5.0)]],
            vec![0.0; 9],
        );
        let x = Instance::from_tokens(&[vec![0], vec![1]], vec![]);
        let mut buf = Decoding::default();
        let got = w.decode(&x, &rules, &[], &mut buf);
        assert_ne!(got, vec![0, 1]);
        let free = w.decode(&x, &Constraints::none(2), &[], &mut buf);
        assert_eq!(free, vec![0, 1]);
        let mut pruned = x.clone();
        pruned.candidates = vec![0, ANY_LABEL];
        let lists = [vec![1]];
        let got = w.decode(&pruned, &Constraints::none(2), &lists, &mut buf);
        assert_eq!(got, vec![1, 1]);
    }

    #[test]
    fn a_candidate_list_that_clashes_with_the_scheme_is_ignored() {
        // Labels O = 0, B = 1, I = 2 (IOB2: I only after B or I). Token 0
        // is pinned to O, token 1 to I: no allowed path. Token 1 then
        // takes any label; token 2 keeps its emission preference.
        let allowed = |p: Option<usize>, n: usize| {
            n != 2 || matches!(p, Some(1) | Some(2))
        };
        let rules = Constraints::from_fn(3, allowed, |_| true);
        let w = Weights::from_rows(
            3,
            [vec![(0, 1.0)], vec![(2, 1.0)], vec![(1, 3.0)]],
            vec![0.0; 16],
        );
        let x = Instance {
            candidates: vec![0, 1, ANY_LABEL],
            ..Instance::from_tokens(&[vec![0], vec![1], vec![2]], vec![])
        };
        let lists = [vec![0], vec![2]];
        let got = w.decode(&x, &rules, &lists, &mut Decoding::default());
        assert_eq!(got[0], 0);
        assert_ne!(got[1], 2, "I after O is not allowed");
        assert_eq!(got[2], 1, "the rest of the sentence is decoded normally");
    }

    #[test]
    fn pruned_decoding_equals_full_when_pruning_keeps_the_best() {
        let data = toy();
        let rules = Constraints::none(3);
        let mut t = Trainer::new(11, 3);
        for x in &data {
            t.learn(x, &rules, &[]);
        }
        let w = t.averaged();
        let mut buf = Decoding::default();
        for x in &data {
            let full = w.decode(x, &rules, &[], &mut buf);
            let mut pruned = x.clone();
            // Keep the full output's label and one other per token.
            let lists: Vec<Vec<u32>> = full
                .iter()
                .map(|&y| vec![y.min((y + 1) % 3), y.max((y + 1) % 3)])
                .collect();
            pruned.candidates = (0..full.len() as u32).collect();
            assert_eq!(w.decode(&pruned, &rules, &lists, &mut buf), full);
        }
    }
}
