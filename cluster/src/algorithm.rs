//! The greedy class-bigram clustering of Brown et al. (1992) with the
//! frequency window, and the incremental merge-loss bookkeeping that
//! makes each step cheap.
//!
//! # Objective
//!
//! Classes are merged greedily, each time the pair whose merge loses the
//! least average mutual information (AMI, see [`crate::ami`]) between the
//! classes of adjacent words. With `C` classes wanted and `V` words ranked
//! by count, the `C` most frequent words start as classes; each further
//! word becomes a class of its own and the best of the `C + 1` possible
//! merges follows; after the last word, `C − 1` more merges build a binary
//! tree over the `C` classes. While words remain to be added, the AMI is
//! that of the bigrams whose two words are both clustered already, with
//! marginals taken from those same bigrams.
//!
//! # Bookkeeping
//!
//! At a fixed bigram total `N` the AMI is `F / N + ln N` with
//! `F = Σ g(n(a,b)) − Σ g(l(a)) − Σ g(r(b))` and `g(x) = x ln x`. The loss
//! of merging classes `a` and `b`, in units of `F`, is
//! `L(a,b) = A(a,b) − M(a,b)` where
//!
//! * `A(a,b) = Σ_{x∉{a,b}} [φ(n(a,x), n(b,x)) + φ(n(x,a), n(x,b))] +
//!   block(a,b)` collects the cells that fuse, with
//!   `φ(p,q) = g(p) + g(q) − g(p+q)` and `block` the four cells among `a`
//!   and `b` becoming one;
//! * `M(a,b) = φ(l(a), l(b)) + φ(r(a), r(b))` is the marginals' part.
//!
//! The table of `L` over all pairs is kept up to date instead of being
//! recomputed:
//!
//! * **Merging `i` and `j`** leaves every other class's marginals alone,
//!   so `M(a,b)` stays; `A(a,b)` changes only in the terms `x = i, j`,
//!   which become one term `x = i ∪ j`. That change is zero unless `a` or
//!   `b` has a bigram with `i` and `a` or `b` has one with `j` (in the same
//!   direction), so only the pairs touching the smaller of the two
//!   neighbour sets are visited. The merged class's own row is derived
//!   from the row of `i` (or of `j`, whichever has more neighbours),
//!   correcting only the terms where the other one has bigrams.
//! * **Adding a word** `w` as a new class adds one term `x = w` to
//!   `A(a,b)`, nonzero only when both `a` and `b` are neighbours of `w`,
//!   and changes the marginals of `w`'s neighbours, hence `M` of the pairs
//!   touching them. The new class's row is summed over `w`'s neighbours.
//!
//! So a step costs `O(k · C)`, `k` being the number of neighbouring
//! classes of the smaller side, which is at most `C`: a run is
//! `O(V · C²)` at worst and far less on text, where rare words have few
//! neighbours. The best pair is found from each row's minimum, which is
//! maintained as entries change, so the search is `O(C)`.
//!
//! # Ties
//!
//! Losses `L₁ ≤ L₂` are near-tied when `L₂ − L₁ ≤ 1e-12 · max(|L₁|, |L₂|,
//! N)`: relative to the larger loss, or to one nat of AMI when both are
//! smaller than that ([`near_tie`]). Among the pairs near-tied with the
//! smallest loss, the merge taken is the one whose smaller node number is
//! smallest, then whose larger node number is smallest. Node numbers: the
//! word of rank `r` is node `r`; merge step `t` (from 0) creates node
//! `V + t`. The brute-force twin in [`crate::reference`] uses the same
//! rule.
//!
//! # Parallelism
//!
//! The rows of the pair table are updated in parallel (rayon) once a step
//! is large enough to pay for it; every entry is computed by the same
//! formula whichever thread computes it, and a pair shared by two updated
//! rows is computed in each with an expression symmetric in its operands,
//! so results are bit-identical for any number of threads.

use rayon::prelude::*;

use crate::ami::{ami_nats, bits, NLogN};
use crate::counts::Counts;
use crate::error::{Error, Result};

/// Relative width of a near-tie between two losses; see [`near_tie`].
pub const TIE_RELATIVE: f64 = 1e-12;

/// Whether `loss` is near-tied with the smallest loss `min`: within
/// [`TIE_RELATIVE`] of the larger of `|min|`, `|loss|` and `scale`.
/// In units of `F` the scale is the bigram total `N`; in nats of AMI it
/// is 1.
pub fn near_tie(min: f64, loss: f64, scale: f64) -> bool {
    loss - min <= TIE_RELATIVE * min.abs().max(loss.abs()).max(scale)
}

/// Parameters of a clustering run.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ClusterParams {
    /// The number of classes `C` (default 1000). At least 2; lowered to
    /// the number of words when there are fewer.
    pub classes: usize,
}

impl Default for ClusterParams {
    fn default() -> Self {
        ClusterParams { classes: 1000 }
    }
}

impl ClusterParams {
    /// Checks the parameters against the counts to be clustered and
    /// returns the number of classes to use.
    pub fn check(&self, counts: &Counts) -> Result<usize> {
        if self.classes < 2 {
            return Err(Error::InvalidParam {
                name: "classes",
                reason: format!("{} is below 2", self.classes),
            });
        }
        if counts.len() < 2 {
            return Err(Error::InvalidParam {
                name: "classes",
                reason: format!(
                    "clustering needs at least 2 distinct words, got {}",
                    counts.len()
                ),
            });
        }
        Ok(self.classes.min(counts.len()))
    }
}

/// One merge: two nodes become node `V + step`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Merge {
    /// The child with the smaller node number; it is bit `0` in paths.
    pub child0: u32,
    /// The child with the larger node number; it is bit `1` in paths.
    pub child1: u32,
    /// The AMI in bits right after the merge (over the bigrams of the
    /// words clustered by then).
    pub ami_bits: f64,
}

/// Progress of a run, reported after every step.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Progress {
    /// Words that are part of a class by now.
    pub words_added: u64,
    /// All words to be clustered.
    pub words_total: u64,
    /// Merges done.
    pub merges_done: u64,
    /// All merges of the run, `V − 1`.
    pub merges_total: u64,
}

/// The result of a run over a ranked vocabulary of `V` words.
#[derive(Clone, Debug, PartialEq)]
pub struct Hierarchy {
    /// The number of classes `C` used.
    pub classes: usize,
    /// All `V − 1` merges in order: first the window phase, then the
    /// `C − 1` merges over the classes.
    pub merges: Vec<Merge>,
    /// Each word's class (by rank) in the flat partition that exists
    /// after the last word's merge; classes are numbered `0..C` by the
    /// rank of their most frequent word.
    pub class_of: Vec<u32>,
    /// Each class's path: its bit string from the root of the tree the
    /// final merges build (`0` for `child0`, `1` for `child1`).
    pub class_paths: Vec<String>,
    /// The AMI in bits of the flat partition over all bigrams of the
    /// clustered words, computed afresh from the counts.
    pub ami_bits: f64,
}

impl Hierarchy {
    /// A word's path, by rank.
    pub fn path_of(&self, word: usize) -> &str {
        &self.class_paths[self.class_of[word] as usize]
    }
}

/// Clusters `counts` into `params.classes` classes; `progress` is called
/// after every step.
pub fn cluster(
    counts: &Counts,
    params: &ClusterParams,
    progress: &mut dyn FnMut(Progress),
) -> Result<Hierarchy> {
    let classes = params.check(counts)?;
    let words = counts.len();
    let graph = Neighbours::new(counts);
    let mut window = Window::new(classes + 1, words);
    let mut merges = Vec::with_capacity(words - 1);
    let mut report = |merges_done: usize, words_added: usize| {
        progress(Progress {
            words_added: words_added as u64,
            words_total: words as u64,
            merges_done: merges_done as u64,
            merges_total: words as u64 - 1,
        })
    };
    for word in 0..classes {
        window.add_word(&graph, word, word);
    }
    let mut free = classes;
    for word in classes..words {
        window.add_word(&graph, word, free);
        let (merge, freed) = window.merge_best(words + merges.len());
        merges.push(merge);
        free = freed;
        report(merges.len(), word + 1);
    }
    let class_of = window.flat_classes(words);
    let class_nodes: Vec<u32> = window.class_nodes_by_class(&class_of);
    while window.active_count() > 1 {
        let (merge, _) = window.merge_best(words + merges.len());
        merges.push(merge);
        report(merges.len(), words);
    }
    let class_paths = paths(words, &merges, &class_nodes);
    let ami_bits = bits(flat_ami(counts, &class_of, classes));
    Ok(Hierarchy { classes, merges, class_of, class_paths, ami_bits })
}

/// The AMI in nats of a flat partition over all bigrams of `counts`.
pub fn flat_ami(counts: &Counts, class_of: &[u32], classes: usize) -> f64 {
    let mut table = vec![0u64; classes * classes];
    for &(l, r, c) in &counts.bigrams {
        let (a, b) = (class_of[l as usize], class_of[r as usize]);
        table[a as usize * classes + b as usize] += c;
    }
    ami_nats(&table, classes)
}

/// Each class's path from the tree that the merges after the window
/// phase build over `class_nodes`.
fn paths(words: usize, merges: &[Merge], class_nodes: &[u32]) -> Vec<String> {
    let classes = class_nodes.len();
    let first_final = merges.len() + 1 - classes;
    // Children of each node created by a final merge.
    let children: Vec<(u32, u32)> =
        merges[first_final..].iter().map(|m| (m.child0, m.child1)).collect();
    let root = (words + merges.len() - 1) as u32;
    let mut path_of_node = std::collections::HashMap::new();
    let mut stack = vec![(root, String::new())];
    while let Some((node, path)) = stack.pop() {
        let index = node as usize;
        if index >= words + first_final {
            let (c0, c1) = children[index - words - first_final];
            stack.push((c1, format!("{path}1")));
            stack.push((c0, format!("{path}0")));
        } else {
            path_of_node.insert(node, path);
        }
    }
    class_nodes
        .iter()
        .map(|node| path_of_node.remove(node).unwrap_or_default())
        .collect()
}

/// The bigrams of each word, by neighbour rank, in compressed rows.
struct Neighbours {
    out_start: Vec<usize>,
    out: Vec<(u32, u64)>,
    in_start: Vec<usize>,
    inc: Vec<(u32, u64)>,
}

impl Neighbours {
    fn new(counts: &Counts) -> Neighbours {
        let words = counts.len();
        let mut out_start = vec![0usize; words + 1];
        let mut in_start = vec![0usize; words + 1];
        for &(l, r, _) in &counts.bigrams {
            out_start[l as usize + 1] += 1;
            in_start[r as usize + 1] += 1;
        }
        for w in 0..words {
            out_start[w + 1] += out_start[w];
            in_start[w + 1] += in_start[w];
        }
        // Bigrams are sorted by (left, right), so the out-rows come out
        // sorted by neighbour; the in-rows are filled in left order,
        // which sorts them too.
        let out = counts.bigrams.iter().map(|&(_, r, c)| (r, c)).collect();
        let mut inc = vec![(0u32, 0u64); counts.bigrams.len()];
        let mut fill = in_start.clone();
        for &(l, r, c) in &counts.bigrams {
            inc[fill[r as usize]] = (l, c);
            fill[r as usize] += 1;
        }
        Neighbours { out_start, out, in_start, inc }
    }

    /// Bigrams `(word, x)` as `(x, count)`, by `x`.
    fn right_of(&self, word: usize) -> &[(u32, u64)] {
        &self.out[self.out_start[word]..self.out_start[word + 1]]
    }

    /// Bigrams `(x, word)` as `(x, count)`, by `x`.
    fn left_of(&self, word: usize) -> &[(u32, u64)] {
        &self.inc[self.in_start[word]..self.in_start[word + 1]]
    }
}

/// Work below this many pair updates is done on one thread: a rayon
/// call costs a few microseconds, as much as this many updates.
const PARALLEL_MIN_PAIRS: usize = 1 << 15;

/// The classes in the window: `cap` slots, dense tables indexed by slot.
struct Window {
    cap: usize,
    g: NLogN,
    /// `n[a * cap + b]`: bigrams from class `a` to class `b`.
    n: Vec<u64>,
    /// The transpose of `n`, so that columns are contiguous too.
    nt: Vec<u64>,
    left: Vec<u64>,
    right: Vec<u64>,
    /// The pair losses in units of `F`; symmetric, `INFINITY` on the
    /// diagonal and for inactive slots.
    loss: Vec<f64>,
    best_val: Vec<f64>,
    best_idx: Vec<usize>,
    dirty: Vec<bool>,
    active: Vec<bool>,
    node: Vec<u32>,
    members: Vec<Vec<u32>>,
    slot_of_word: Vec<u32>,
    total: u64,
    f: f64,
    /// Scratch: which slots take part in the current update.
    mark: Vec<bool>,
}

impl Window {
    fn new(cap: usize, words: usize) -> Window {
        Window {
            cap,
            g: NLogN::new(),
            n: vec![0; cap * cap],
            nt: vec![0; cap * cap],
            left: vec![0; cap],
            right: vec![0; cap],
            loss: vec![f64::INFINITY; cap * cap],
            best_val: vec![f64::INFINITY; cap],
            best_idx: vec![0; cap],
            dirty: vec![false; cap],
            active: vec![false; cap],
            node: vec![0; cap],
            members: vec![Vec::new(); cap],
            slot_of_word: vec![u32::MAX; words],
            total: 0,
            f: 0.0,
            mark: vec![false; cap],
        }
    }

    fn active_count(&self) -> usize {
        self.active.iter().filter(|&&a| a).count()
    }

    fn active_slots(&self) -> Vec<usize> {
        (0..self.cap).filter(|&a| self.active[a]).collect()
    }

    fn ami_bits(&self) -> f64 {
        if self.total == 0 {
            0.0
        } else {
            let n = self.total as f64;
            bits(self.f / n + n.ln())
        }
    }

    /// `M(a,b)` from the given marginals.
    fn marg(&self, la: u64, lb: u64, ra: u64, rb: u64) -> f64 {
        self.g.phi(la, lb) + self.g.phi(ra, rb)
    }

    /// The four cells among `a` and `b` becoming one.
    fn block(&self, aa: u64, ab: u64, ba: u64, bb: u64) -> f64 {
        let g = &self.g;
        g.g(aa) + g.g(ab) + g.g(ba) + g.g(bb) - g.g(aa + ab + ba + bb)
    }

    /// Adds word `word` as a new class in the free slot `s`.
    fn add_word(&mut self, graph: &Neighbours, word: usize, s: usize) {
        let cap = self.cap;
        let mut self_count = 0;
        let mut touched: Vec<usize> = Vec::new();
        for &(x, c) in graph.right_of(word) {
            let x = x as usize;
            if x > word {
                break;
            }
            if x == word {
                self_count = c;
                continue;
            }
            let a = self.slot_of_word[x] as usize;
            self.n[s * cap + a] += c;
            self.nt[a * cap + s] += c;
            if !self.mark[a] {
                self.mark[a] = true;
                touched.push(a);
            }
        }
        for &(x, c) in graph.left_of(word) {
            let x = x as usize;
            if x >= word {
                break;
            }
            let a = self.slot_of_word[x] as usize;
            self.n[a * cap + s] += c;
            self.nt[s * cap + a] += c;
            if !self.mark[a] {
                self.mark[a] = true;
                touched.push(a);
            }
        }
        self.n[s * cap + s] += self_count;
        self.nt[s * cap + s] += self_count;
        touched.sort_unstable();
        let d = touched;

        // Marginals, the objective and the bigram total.
        let old: Vec<(u64, u64)> =
            d.iter().map(|&a| (self.left[a], self.right[a])).collect();
        let mut f_delta = self.g.g(self_count);
        let mut row_sum = self_count;
        let mut col_sum = self_count;
        for (k, &a) in d.iter().enumerate() {
            let to = self.n[a * cap + s];
            let from = self.n[s * cap + a];
            row_sum += from;
            col_sum += to;
            f_delta += self.g.g(to) + self.g.g(from);
            self.left[a] += to;
            self.right[a] += from;
            let (lo, ro) = old[k];
            f_delta -= self.g.g(self.left[a]) - self.g.g(lo);
            f_delta -= self.g.g(self.right[a]) - self.g.g(ro);
        }
        self.left[s] = row_sum;
        self.right[s] = col_sum;
        f_delta -= self.g.g(row_sum) + self.g.g(col_sum);
        self.f += f_delta;
        self.total += row_sum + col_sum - self_count;
        self.slot_of_word[word] = s as u32;
        self.active[s] = true;
        self.node[s] = word as u32;
        self.members[s] = vec![word as u32];

        // Rows of the neighbours: the new term x = s and their changed
        // marginals. `old_of` gives every slot's marginals before the add.
        let mut old_left = self.left.clone();
        let mut old_right = self.right.clone();
        for (k, &a) in d.iter().enumerate() {
            old_left[a] = old[k].0;
            old_right[a] = old[k].1;
        }
        let active = self.active_slots();
        let mut loss = std::mem::take(&mut self.loss);
        {
            let this = &*self;
            let row_update = |a: usize, row: &mut [f64]| {
                let (as_, sa) = (this.n[a * cap + s], this.n[s * cap + a]);
                for &b in &active {
                    if b == a || b == s {
                        continue;
                    }
                    let (bs, sb) = (this.n[b * cap + s], this.n[s * cap + b]);
                    let m_old = this.marg(
                        old_left[a],
                        old_left[b],
                        old_right[a],
                        old_right[b],
                    );
                    let m_new = this.marg(
                        this.left[a],
                        this.left[b],
                        this.right[a],
                        this.right[b],
                    );
                    let delta =
                        this.g.phi(as_, bs) + this.g.phi(sa, sb) + m_old
                            - m_new;
                    row[b] += delta;
                }
            };
            let work = d.len() * active.len();
            update_rows(&mut loss, cap, &this.mark, work, row_update);
        }
        self.loss = loss;

        // The new class's row, summed over its neighbours.
        let mut new_row = vec![f64::INFINITY; cap];
        for &b in &active {
            if b == s {
                continue;
            }
            let mut a_sb = 0.0;
            for &x in &d {
                if x == b {
                    continue;
                }
                a_sb += self.g.phi(self.n[s * cap + x], self.n[b * cap + x])
                    + self.g.phi(self.n[x * cap + s], self.n[x * cap + b]);
            }
            a_sb += self.block(
                self.n[s * cap + s],
                self.n[s * cap + b],
                self.n[b * cap + s],
                self.n[b * cap + b],
            );
            new_row[b] = a_sb
                - self.marg(
                    self.left[s],
                    self.left[b],
                    self.right[s],
                    self.right[b],
                );
        }
        self.loss[s * cap..(s + 1) * cap].copy_from_slice(&new_row);
        self.loss[s * cap + s] = f64::INFINITY;
        self.mirror_and_track(&d, &[s], &[], &active);
        for &a in &d {
            self.mark[a] = false;
        }
    }

    /// Copies the updated rows `rows` (marked in `self.mark`) and the
    /// new rows `fresh` into the columns of every other active row, and
    /// keeps each row's minimum; `gone` are slots just made inactive.
    fn mirror_and_track(
        &mut self,
        rows: &[usize],
        fresh: &[usize],
        gone: &[usize],
        active: &[usize],
    ) {
        let cap = self.cap;
        for &b in active {
            if fresh.contains(&b) {
                continue;
            }
            let copied = if self.mark[b] { &[][..] } else { rows };
            for &a in copied.iter().chain(fresh) {
                let v = self.loss[a * cap + b];
                self.loss[b * cap + a] = v;
                self.touch(b, a, v);
            }
            for &a in gone {
                self.loss[b * cap + a] = f64::INFINITY;
                if self.best_idx[b] == a {
                    self.dirty[b] = true;
                }
            }
        }
        for &a in rows.iter().chain(fresh) {
            self.dirty[a] = true;
        }
        for a in 0..cap {
            if self.dirty[a] {
                self.rescan(a);
            }
        }
    }

    /// Records that entry `(b, a)` is now `v`, keeping row `b`'s minimum
    /// or marking the row for a rescan.
    fn touch(&mut self, b: usize, a: usize, v: f64) {
        if self.dirty[b] {
            return;
        }
        if a == self.best_idx[b] {
            if v <= self.best_val[b] {
                self.best_val[b] = v;
            } else {
                self.dirty[b] = true;
            }
        } else if v < self.best_val[b] {
            self.best_val[b] = v;
            self.best_idx[b] = a;
        }
    }

    fn rescan(&mut self, a: usize) {
        let row = &self.loss[a * self.cap..(a + 1) * self.cap];
        let (mut best, mut idx) = (f64::INFINITY, 0);
        for (b, &v) in row.iter().enumerate() {
            if v < best {
                best = v;
                idx = b;
            }
        }
        self.best_val[a] = best;
        self.best_idx[a] = idx;
        self.dirty[a] = false;
    }

    /// The pair to merge next, by the rule in the module docs.
    fn best_pair(&self) -> (usize, usize) {
        let scale = self.total.max(1) as f64;
        let min = (0..self.cap)
            .filter(|&a| self.active[a])
            .map(|a| self.best_val[a])
            .fold(f64::INFINITY, f64::min);
        let p = (0..self.cap)
            .filter(|&a| {
                self.active[a] && near_tie(min, self.best_val[a], scale)
            })
            .min_by_key(|&a| self.node[a])
            .expect("at least two active classes");
        let row = &self.loss[p * self.cap..(p + 1) * self.cap];
        let q = (0..self.cap)
            .filter(|&b| {
                self.active[b] && b != p && near_tie(min, row[b], scale)
            })
            .min_by_key(|&b| self.node[b])
            .expect("the row holding the minimum has a near-tied entry");
        (p, q)
    }

    /// Makes the best merge; the merged class gets node number `node`.
    /// Returns the merge and the slot it freed.
    fn merge_best(&mut self, node: usize) -> (Merge, usize) {
        let (i, j) = self.best_pair();
        let cap = self.cap;
        let lost = self.loss[i * cap + j];
        let active: Vec<usize> = self
            .active_slots()
            .into_iter()
            .filter(|&a| a != i && a != j)
            .collect();

        // Neighbour sets of i and j, without i and j themselves.
        let support = |table: &[u64], c: usize| -> Vec<usize> {
            active
                .iter()
                .copied()
                .filter(|&a| table[c * cap + a] > 0)
                .collect()
        };
        let (ti, tj) = (support(&self.nt, i), support(&self.nt, j));
        let (si, sj) = (support(&self.n, i), support(&self.n, j));
        let t_small = if ti.len() <= tj.len() { &ti } else { &tj };
        let s_small = if si.len() <= sj.len() { &si } else { &sj };
        let mut rows: Vec<usize> =
            t_small.iter().chain(s_small).copied().collect();
        rows.sort_unstable();
        rows.dedup();
        for &a in &rows {
            self.mark[a] = true;
        }

        // 1. Pairs of other classes: terms x = i and x = j become one.
        let mut loss = std::mem::take(&mut self.loss);
        {
            let this = &*self;
            let row_update = |a: usize, row: &mut [f64]| {
                let (ai, aj) = (this.n[a * cap + i], this.n[a * cap + j]);
                let (ia, ja) = (this.n[i * cap + a], this.n[j * cap + a]);
                let g = &this.g;
                for &b in &active {
                    if b == a {
                        continue;
                    }
                    let mut delta = 0.0;
                    if ai | aj != 0 {
                        let (bi, bj) =
                            (this.nt[i * cap + b], this.nt[j * cap + b]);
                        if bi | bj != 0 {
                            delta += g.phi(ai + aj, bi + bj)
                                - g.phi(ai, bi)
                                - g.phi(aj, bj);
                        }
                    }
                    if ia | ja != 0 {
                        let (ib, jb) =
                            (this.n[i * cap + b], this.n[j * cap + b]);
                        if ib | jb != 0 {
                            delta += g.phi(ia + ja, ib + jb)
                                - g.phi(ia, ib)
                                - g.phi(ja, jb);
                        }
                    }
                    row[b] += delta;
                }
            };
            let work = rows.len() * active.len();
            update_rows(&mut loss, cap, &this.mark, work, row_update);
        }
        self.loss = loss;

        // 2. The merged class's row, derived from the row of the side
        // with more neighbours (`k`), correcting where the other (`o`)
        // has bigrams.
        let (k, o, so, to) = if si.len() + ti.len() >= sj.len() + tj.len() {
            (i, j, &sj, &tj)
        } else {
            (j, i, &si, &ti)
        };
        let new_row: Vec<f64> = {
            let this = &*self;
            let n = |a: usize, b: usize| this.n[a * cap + b];
            let g = &this.g;
            let (lm, rm) =
                (this.left[i] + this.left[j], this.right[i] + this.right[j]);
            let mm = n(i, i) + n(i, j) + n(j, i) + n(j, j);
            let entry = |b: usize| -> f64 {
                let a_old = this.loss[k * cap + b]
                    + this.marg(
                        this.left[k],
                        this.left[b],
                        this.right[k],
                        this.right[b],
                    );
                let mut sum = 0.0;
                for &x in so {
                    if x != b {
                        sum += g.phi(n(k, x) + n(o, x), n(b, x))
                            - g.phi(n(k, x), n(b, x));
                    }
                }
                for &x in to {
                    if x != b {
                        sum += g.phi(n(x, k) + n(x, o), n(x, b))
                            - g.phi(n(x, k), n(x, b));
                    }
                }
                let cross = g.phi(n(k, o), n(b, o)) + g.phi(n(o, k), n(o, b));
                let old_block = this.block(n(k, k), n(k, b), n(b, k), n(b, b));
                let new_block = this.block(
                    mm,
                    n(i, b) + n(j, b),
                    n(b, i) + n(b, j),
                    n(b, b),
                );
                let a_new = a_old + sum - cross - old_block + new_block;
                a_new - this.marg(lm, this.left[b], rm, this.right[b])
            };
            if active.len() * (so.len() + to.len() + 1) >= PARALLEL_MIN_PAIRS {
                active.par_iter().map(|&b| entry(b)).collect()
            } else {
                active.iter().map(|&b| entry(b)).collect()
            }
        };

        // 3. Merge the counts into the slot with more words.
        let (keep, gone) = if self.members[i].len() >= self.members[j].len() {
            (i, j)
        } else {
            (j, i)
        };
        for x in 0..cap {
            let v = self.n[gone * cap + x];
            self.n[keep * cap + x] += v;
        }
        for x in 0..cap {
            let v = self.n[x * cap + gone];
            self.n[x * cap + keep] += v;
        }
        for x in 0..cap {
            self.n[gone * cap + x] = 0;
            self.n[x * cap + gone] = 0;
        }
        for a in 0..cap {
            for b in [keep, gone] {
                self.nt[b * cap + a] = self.n[a * cap + b];
                self.nt[a * cap + b] = self.n[b * cap + a];
            }
        }
        self.left[keep] += self.left[gone];
        self.right[keep] += self.right[gone];
        self.left[gone] = 0;
        self.right[gone] = 0;
        self.f -= lost;
        let moved = std::mem::take(&mut self.members[gone]);
        for &w in &moved {
            self.slot_of_word[w as usize] = keep as u32;
        }
        self.members[keep].extend(moved);
        let (c0, c1) = {
            let (x, y) = (self.node[i], self.node[j]);
            (x.min(y), x.max(y))
        };
        self.node[keep] = node as u32;
        self.active[gone] = false;

        // 4. Install the new row and retire the freed slot.
        for x in 0..cap {
            self.loss[keep * cap + x] = f64::INFINITY;
            self.loss[gone * cap + x] = f64::INFINITY;
        }
        for (&b, &v) in active.iter().zip(&new_row) {
            self.loss[keep * cap + b] = v;
        }
        self.best_val[gone] = f64::INFINITY;
        self.dirty[gone] = false;
        self.mirror_and_track(&rows, &[keep], &[gone], &active);
        for &a in &rows {
            self.mark[a] = false;
        }
        let merge =
            Merge { child0: c0, child1: c1, ami_bits: self.ami_bits() };
        (merge, gone)
    }

    /// Each word's flat class, numbered by the rank of its most frequent
    /// word; words not clustered yet are not expected.
    fn flat_classes(&self, words: usize) -> Vec<u32> {
        let mut slots: Vec<(u32, usize)> = (0..self.cap)
            .filter(|&a| self.active[a])
            .map(|a| {
                (*self.members[a].iter().min().expect("a class has words"), a)
            })
            .collect();
        slots.sort_unstable();
        let mut class_of = vec![0u32; words];
        for (class, &(_, slot)) in slots.iter().enumerate() {
            for &w in &self.members[slot] {
                class_of[w as usize] = class as u32;
            }
        }
        class_of
    }

    /// The node number of each flat class.
    fn class_nodes_by_class(&self, class_of: &[u32]) -> Vec<u32> {
        let mut nodes = vec![0u32; self.active_count()];
        for a in 0..self.cap {
            if self.active[a] {
                let w = self.members[a][0] as usize;
                nodes[class_of[w] as usize] = self.node[a];
            }
        }
        nodes
    }
}

/// Runs `update` on every row of `table` whose slot is marked, in
/// parallel when `work` (pair updates) is large enough.
fn update_rows<F>(
    table: &mut [f64],
    cap: usize,
    mark: &[bool],
    work: usize,
    update: F,
) where
    F: Fn(usize, &mut [f64]) + Sync,
{
    if work >= PARALLEL_MIN_PAIRS {
        table
            .par_chunks_mut(cap)
            .enumerate()
            .filter(|(a, _)| mark[*a])
            .for_each(|(a, row)| update(a, row));
    } else {
        for (a, row) in table.chunks_mut(cap).enumerate() {
            if mark[a] {
                update(a, row);
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::reference::{partition_ami, reference_merges};
    use rand::{Rng, SeedableRng};
    use rand_chacha::ChaCha8Rng;

    /// A random corpus: `lines` lines of Zipf-like tokens over `types`
    /// words, with some sticky structure so that merges differ in loss.
    fn random_corpus(seed: u64, types: usize, lines: usize) -> String {
        let mut rng = ChaCha8Rng::seed_from_u64(seed);
        let mut text = String::new();
        for _ in 0..lines {
            let len = rng.random_range(1..12);
            let mut prev = rng.random_range(0..types);
            for k in 0..len {
                let w = if rng.random_bool(0.3) {
                    (prev * 7 + 3) % types
                } else {
                    // Skewed: small ids are frequent.
                    let u: f64 = rng.random();
                    ((u * u * u) * types as f64) as usize
                };
                if k > 0 {
                    text.push(' ');
                }
                text.push_str(&format!("w{w}"));
                prev = w;
            }
            text.push('\n');
        }
        text
    }

    fn check_twin(text: &str, classes: usize) {
        let counts = Counts::from_text(text, Default::default(), 1);
        let fast =
            cluster(&counts, &ClusterParams { classes }, &mut |_| {}).unwrap();
        let slow = reference_merges(&counts, classes);
        assert_eq!(fast.merges.len(), counts.len() - 1);
        assert_eq!(slow.len(), fast.merges.len());
        for (step, (f, s)) in fast.merges.iter().zip(&slow).enumerate() {
            assert_eq!(
                (f.child0, f.child1),
                (s.child0, s.child1),
                "merge {step} differs (V = {}, C = {classes})",
                counts.len()
            );
            assert!(
                (f.ami_bits - s.ami_bits).abs() < 1e-9,
                "AMI after merge {step}: {} vs {}",
                f.ami_bits,
                s.ami_bits
            );
        }
    }

    #[test]
    fn fast_bookkeeping_matches_brute_force_on_small_corpora() {
        let cases = if cfg!(debug_assertions) { 6 } else { 40 };
        for seed in 0..cases {
            let mut rng = ChaCha8Rng::seed_from_u64(1000 + seed);
            let types = rng.random_range(
                30..=if cfg!(debug_assertions) { 60 } else { 150 },
            );
            let lines = rng.random_range(types / 2..types * 3);
            let classes = rng.random_range(2..=12);
            check_twin(&random_corpus(seed, types, lines), classes);
        }
    }

    #[test]
    fn ties_follow_the_node_rule() {
        // Every word is seen once, in a line of its own: all losses are
        // zero, so the smallest node numbers merge first.
        let counts = Counts::from_text("a\nb\nc\nd\n", Default::default(), 1);
        let tree =
            cluster(&counts, &ClusterParams { classes: 2 }, &mut |_| {})
                .unwrap();
        let pairs: Vec<_> =
            tree.merges.iter().map(|m| (m.child0, m.child1)).collect();
        // Window: word 2 joins {0, 1} and (0, 1) merge into node 4; word 3
        // joins and (2, 3) are the smallest numbers; then (4, 5).
        assert_eq!(pairs, vec![(0, 1), (2, 3), (4, 5)]);
        check_twin("a\nb\nc\nd\n", 2);
    }

    #[test]
    fn each_merge_removes_one_class_and_paths_are_prefix_free() {
        let text = random_corpus(7, 80, 200);
        let counts = Counts::from_text(&text, Default::default(), 1);
        let tree =
            cluster(&counts, &ClusterParams { classes: 9 }, &mut |_| {})
                .unwrap();
        assert_eq!(tree.classes, 9);
        let mut seen = std::collections::HashSet::new();
        for m in &tree.merges {
            assert!(m.child0 < m.child1);
            assert!(seen.insert(m.child0) && seen.insert(m.child1));
        }
        let mut paths = tree.class_paths.clone();
        paths.sort();
        for pair in paths.windows(2) {
            assert!(!pair[1].starts_with(&pair[0]), "{pair:?}");
        }
        let classes: std::collections::BTreeSet<_> =
            tree.class_of.iter().collect();
        assert_eq!(classes.len(), 9);
        // Classes are numbered by their most frequent word.
        let mut first_rank = vec![usize::MAX; 9];
        for (rank, &c) in tree.class_of.iter().enumerate() {
            first_rank[c as usize] = first_rank[c as usize].min(rank);
        }
        assert!(first_rank.windows(2).all(|w| w[0] < w[1]));
    }

    #[test]
    fn reported_ami_matches_a_fresh_computation() {
        let text = random_corpus(11, 60, 150);
        let counts = Counts::from_text(&text, Default::default(), 1);
        let tree =
            cluster(&counts, &ClusterParams { classes: 6 }, &mut |_| {})
                .unwrap();
        let parts: Vec<(u32, Vec<u32>)> = (0..6)
            .map(|c| {
                let members = (0..counts.len() as u32)
                    .filter(|&w| tree.class_of[w as usize] == c)
                    .collect();
                (c, members)
            })
            .collect();
        let fresh = bits(partition_ami(&counts, &parts, counts.len()));
        assert!((tree.ami_bits - fresh).abs() < 1e-12);
        let last_window = &tree.merges[counts.len() - 6 - 1];
        assert!((last_window.ami_bits - fresh).abs() < 1e-9);
    }

    #[test]
    fn rejects_too_few_classes_or_words() {
        let counts = Counts::from_text("a b a", Default::default(), 1);
        let err = cluster(&counts, &ClusterParams { classes: 1 }, &mut |_| {});
        assert!(err.unwrap_err().to_string().contains("below 2"));
        let one = Counts::from_text("a a a", Default::default(), 1);
        let err = cluster(&one, &ClusterParams { classes: 2 }, &mut |_| {});
        assert!(err.unwrap_err().to_string().contains("at least 2"));
    }
}
