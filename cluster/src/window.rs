//! The state of the frequency window and its incremental pair-loss
//! bookkeeping; [`crate::algorithm`] explains the formulas.
//!
//! Layout: dense row-major `cap × cap` tables indexed by slot, counts
//! held as `f64` (exact integers below 2^53) so that the hot loops run
//! over contiguous `f64` slices and vectorise, `n ln n` included (see
//! [`crate::ami::ln`]). The count table is kept together with its
//! transpose, so that both a class's row and its column are contiguous.

use rayon::prelude::*;

use crate::algorithm::{near_tie, Merge};
use crate::ami::{bits, g};
use crate::kernels;

/// Below this many pair updates a step runs on one thread: a rayon call
/// costs a few microseconds, about as much as this many updates.
const PARALLEL_MIN_PAIRS: usize = 1 << 14;

/// The classes in the window.
pub(crate) struct Window {
    cap: usize,
    /// `n[a * cap + b]`: bigrams from class `a` to class `b`.
    n: Vec<f64>,
    /// The transpose of `n`.
    nt: Vec<f64>,
    left: Vec<f64>,
    right: Vec<f64>,
    /// The pair losses in units of `F`; symmetric, `INFINITY` on the
    /// diagonal and for inactive slots.
    loss: Vec<f64>,
    best_val: Vec<f64>,
    best_idx: Vec<usize>,
    active: Vec<bool>,
    node: Vec<u32>,
    members: Vec<Vec<u32>>,
    slot_of_word: Vec<u32>,
    total: f64,
    f: f64,
    /// Scratch: the rows updated in the current step.
    mark: Vec<bool>,
}

/// The bigrams of a word being added, by the slot of the other word.
pub(crate) struct NewWord<'a> {
    /// `(slot, count)` of bigrams (word, x), x clustered already.
    pub right: &'a [(usize, f64)],
    /// `(slot, count)` of bigrams (x, word), x clustered already.
    pub left: &'a [(usize, f64)],
    /// The count of the bigram (word, word).
    pub itself: f64,
}

impl Window {
    pub(crate) fn new(cap: usize, words: usize) -> Window {
        Window {
            cap,
            n: vec![0.0; cap * cap],
            nt: vec![0.0; cap * cap],
            left: vec![0.0; cap],
            right: vec![0.0; cap],
            loss: vec![f64::INFINITY; cap * cap],
            best_val: vec![f64::INFINITY; cap],
            best_idx: vec![0; cap],
            active: vec![false; cap],
            node: vec![0; cap],
            members: vec![Vec::new(); cap],
            slot_of_word: vec![u32::MAX; words],
            total: 0.0,
            f: 0.0,
            mark: vec![false; cap],
        }
    }

    pub(crate) fn active_count(&self) -> usize {
        self.active.iter().filter(|&&a| a).count()
    }

    /// The slot of the class holding `word`, which must be clustered.
    pub(crate) fn slot_of(&self, word: u32) -> usize {
        self.slot_of_word[word as usize] as usize
    }

    /// The members (word ranks) of the class in `slot`.
    pub(crate) fn members(&self, slot: usize) -> &[u32] {
        &self.members[slot]
    }

    /// The active slots with their node numbers.
    pub(crate) fn classes(&self) -> impl Iterator<Item = (usize, u32)> + '_ {
        (0..self.cap).filter(|&a| self.active[a]).map(|a| (a, self.node[a]))
    }

    fn active_slots(&self) -> Vec<usize> {
        (0..self.cap).filter(|&a| self.active[a]).collect()
    }

    fn ami_bits(&self) -> f64 {
        if self.total == 0.0 {
            0.0
        } else {
            bits(self.f / self.total + self.total.ln())
        }
    }

    /// Adds word `word` (node `word`) as a new class in the free slot `s`.
    pub(crate) fn add_word(&mut self, word: u32, s: usize, bigrams: &NewWord) {
        let cap = self.cap;
        for &(a, c) in bigrams.right {
            self.n[s * cap + a] += c;
            self.nt[a * cap + s] += c;
        }
        for &(a, c) in bigrams.left {
            self.n[a * cap + s] += c;
            self.nt[s * cap + a] += c;
        }
        self.n[s * cap + s] = bigrams.itself;
        self.nt[s * cap + s] = bigrams.itself;
        let mut d: Vec<usize> = bigrams
            .right
            .iter()
            .chain(bigrams.left)
            .map(|&(a, _)| a)
            .collect();
        d.sort_unstable();
        d.dedup();

        // Marginals, the objective and the bigram total.
        let (old_left, old_right) = (self.left.clone(), self.right.clone());
        let itself = bigrams.itself;
        let mut f_delta = g(itself);
        let (mut row_sum, mut col_sum) = (itself, itself);
        for &a in &d {
            let (to, from) = (self.n[a * cap + s], self.n[s * cap + a]);
            row_sum += from;
            col_sum += to;
            f_delta += g(to) + g(from);
            self.left[a] += to;
            self.right[a] += from;
            f_delta -= g(self.left[a]) - g(old_left[a]);
            f_delta -= g(self.right[a]) - g(old_right[a]);
        }
        self.left[s] = row_sum;
        self.right[s] = col_sum;
        f_delta -= g(row_sum) + g(col_sum);
        self.f += f_delta;
        self.total += row_sum + col_sum - itself;
        self.active[s] = true;
        self.node[s] = word;
        self.members[s] = vec![word];
        self.slot_of_word[word as usize] = s as u32;

        // Rows of the neighbours: the new term x = s, and the change of
        // their marginals (and of their partners' where both changed).
        let col_s = &self.nt[s * cap..(s + 1) * cap];
        let row_s = &self.n[s * cap..(s + 1) * cap];
        let gv = |x: &[f64]| {
            let mut out = vec![0.0; x.len()];
            kernels::g_of(x, &mut out);
            out
        };
        let (g_col_s, g_row_s) = (gv(col_s), gv(row_s));
        let (g_ol, g_or) = (gv(&old_left), gv(&old_right));
        let (g_nl, g_nr) = (gv(&self.left), gv(&self.right));
        let (new_left, new_right) = (&self.left, &self.right);
        let update = |a: usize, row: &mut [f64]| {
            let (ol, nl) = (old_left[a], new_left[a]);
            kernels::add_phi_change(
                ol, g_ol[a], &old_left, &g_ol, nl, g_nl[a], new_left, &g_nl,
                row,
            );
            let (or, nr) = (old_right[a], new_right[a]);
            kernels::add_phi_change(
                or, g_or[a], &old_right, &g_or, nr, g_nr[a], new_right, &g_nr,
                row,
            );
            if col_s[a] != 0.0 {
                kernels::add_phi(col_s[a], g_col_s[a], col_s, &g_col_s, row);
            }
            if row_s[a] != 0.0 {
                kernels::add_phi(row_s[a], g_row_s[a], row_s, &g_row_s, row);
            }
        };
        for &a in &d {
            self.mark[a] = true;
        }
        let mut loss = std::mem::take(&mut self.loss);
        update_rows(&mut loss, cap, &self.mark, d.len() * cap, update);
        self.loss = loss;

        // The new class's row, summed over its neighbours.
        let active = self.active_slots();
        let mut new_row = vec![0.0; cap];
        let mut term = vec![0.0; cap];
        for &x in &d {
            let (sx, xs) = (self.n[s * cap + x], self.n[x * cap + s]);
            let col_x = &self.nt[x * cap..(x + 1) * cap];
            let row_x = &self.n[x * cap..(x + 1) * cap];
            term.fill(0.0);
            kernels::add_phi_pair(sx, col_x, xs, row_x, &mut term);
            term[x] = 0.0;
            for (acc, t) in new_row.iter_mut().zip(&term) {
                *acc += t;
            }
        }
        let n = |a: usize, b: usize| self.n[a * cap + b];
        for &b in &active {
            let block = block(n(s, s), n(s, b), n(b, s), n(b, b));
            let marg = phi2(self.left[s], self.left[b])
                + phi2(self.right[s], self.right[b]);
            new_row[b] += block - marg;
        }
        for (b, v) in new_row.iter_mut().enumerate() {
            if !self.active[b] || b == s {
                *v = f64::INFINITY;
            }
        }
        self.loss[s * cap..(s + 1) * cap].copy_from_slice(&new_row);
        self.finish_step(&d, s, None, &active);
    }

    /// Copies the updated rows (marked) and the fresh row into the
    /// columns of the other rows, keeps every row's minimum and clears
    /// the marks; `gone` is a slot just made inactive.
    fn finish_step(
        &mut self,
        rows: &[usize],
        fresh: usize,
        gone: Option<usize>,
        active: &[usize],
    ) {
        let cap = self.cap;
        // Column minima of the updated rows, for the rows not updated.
        let mut col_min = vec![f64::INFINITY; cap];
        let mut col_arg = vec![usize::MAX; cap];
        for &a in rows.iter().chain([&fresh]) {
            let row = &self.loss[a * cap..(a + 1) * cap];
            for b in 0..cap {
                if row[b] < col_min[b] {
                    col_min[b] = row[b];
                    col_arg[b] = a;
                }
            }
        }
        for &a in rows {
            for b in 0..cap {
                if !self.mark[b] && b != fresh {
                    self.loss[b * cap + a] = self.loss[a * cap + b];
                }
            }
        }
        for b in 0..cap {
            if b != fresh {
                self.loss[b * cap + fresh] = self.loss[fresh * cap + b];
            }
        }
        if let Some(gone) = gone {
            for b in 0..cap {
                self.loss[b * cap + gone] = f64::INFINITY;
                self.loss[gone * cap + b] = f64::INFINITY;
            }
            self.best_val[gone] = f64::INFINITY;
        }
        for &b in active {
            if self.mark[b] || b == fresh {
                continue;
            }
            let old_idx = self.best_idx[b];
            let old_val = self.best_val[b];
            let changed = self.mark[old_idx]
                || old_idx == fresh
                || Some(old_idx) == gone;
            if !changed {
                if col_min[b] < old_val {
                    self.best_val[b] = col_min[b];
                    self.best_idx[b] = col_arg[b];
                }
                continue;
            }
            let now = self.loss[b * cap + old_idx];
            if now <= old_val {
                // Still the smallest; a smaller updated entry may beat it.
                if col_min[b] < now {
                    self.best_val[b] = col_min[b];
                    self.best_idx[b] = col_arg[b];
                } else {
                    self.best_val[b] = now;
                }
            } else if col_min[b] <= old_val {
                // Entries not updated are all at least the old minimum.
                self.best_val[b] = col_min[b];
                self.best_idx[b] = col_arg[b];
            } else {
                self.rescan(b);
            }
        }
        for &a in rows.iter().chain([&fresh]) {
            self.rescan(a);
            self.mark[a] = false;
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
    }

    /// The pair to merge next, by the rule in [`crate::algorithm`].
    fn best_pair(&self) -> (usize, usize) {
        let scale = self.total.max(1.0);
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
    pub(crate) fn merge_best(&mut self, node: u32) -> (Merge, usize) {
        let (i, j) = self.best_pair();
        let cap = self.cap;
        let lost = self.loss[i * cap + j];
        let active: Vec<usize> = self
            .active_slots()
            .into_iter()
            .filter(|&a| a != i && a != j)
            .collect();
        let support = |table: &[f64], c: usize| -> Vec<usize> {
            active
                .iter()
                .copied()
                .filter(|&a| table[c * cap + a] != 0.0)
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

        // 1. Pairs of other classes: the terms x = i and x = j become one.
        for &a in &rows {
            self.mark[a] = true;
        }
        {
            let (col_i, col_j) = (
                &self.nt[i * cap..(i + 1) * cap],
                &self.nt[j * cap..(j + 1) * cap],
            );
            let (row_i, row_j) = (
                &self.n[i * cap..(i + 1) * cap],
                &self.n[j * cap..(j + 1) * cap],
            );
            let col = Fusion::new(col_i, col_j);
            let row = Fusion::new(row_i, row_j);
            let update = |a: usize, out: &mut [f64]| {
                col.apply(col_i[a], col_j[a], out);
                row.apply(row_i[a], row_j[a], out);
            };
            let mut loss = std::mem::take(&mut self.loss);
            update_rows(&mut loss, cap, &self.mark, rows.len() * cap, update);
            self.loss = loss;
        }

        // 2. The merged class's row, derived from the row of the side
        // with more neighbours (`k`), correcting where the other (`o`)
        // has bigrams.
        let (k, o, so, to) = if si.len() + ti.len() >= sj.len() + tj.len() {
            (i, j, &sj, &tj)
        } else {
            (j, i, &si, &ti)
        };
        let mut new_row = vec![0.0; cap];
        let mut term = vec![0.0; cap];
        // Terms x in the row support of o: cells (k, x), (o, x) fuse.
        for (&x, from_rows) in
            so.iter().map(|x| (x, true)).chain(to.iter().map(|x| (x, false)))
        {
            let (kx, ox, others) = if from_rows {
                (self.n[k * cap + x], self.n[o * cap + x], self.nt_row(x))
            } else {
                (self.n[x * cap + k], self.n[x * cap + o], self.n_row(x))
            };
            term.fill(0.0);
            kernels::add_growth(kx, ox, others, &mut term);
            term[x] = 0.0;
            for (acc, t) in new_row.iter_mut().zip(&term) {
                *acc += t;
            }
        }
        {
            let n = |a: usize, b: usize| self.n[a * cap + b];
            let (lm, rm) =
                (self.left[i] + self.left[j], self.right[i] + self.right[j]);
            let mm = n(i, i) + n(i, j) + n(j, i) + n(j, j);
            for &b in &active {
                let (lb, rb) = (self.left[b], self.right[b]);
                let a_old = self.loss[k * cap + b]
                    + phi2(self.left[k], lb)
                    + phi2(self.right[k], rb);
                let cross = phi2(n(k, o), n(b, o)) + phi2(n(o, k), n(o, b));
                let old_block = block(n(k, k), n(k, b), n(b, k), n(b, b));
                let new_block =
                    block(mm, n(i, b) + n(j, b), n(b, i) + n(b, j), n(b, b));
                let a_new = a_old + new_row[b] - cross - old_block + new_block;
                new_row[b] = a_new - phi2(lm, lb) - phi2(rm, rb);
            }
        }

        // 3. Merge the counts into the slot with more words.
        let (keep, gone) = if self.members[i].len() >= self.members[j].len() {
            (i, j)
        } else {
            (j, i)
        };
        let corner = self.n[keep * cap + keep]
            + self.n[keep * cap + gone]
            + self.n[gone * cap + keep]
            + self.n[gone * cap + gone];
        for x in 0..cap {
            if x != keep && x != gone {
                self.n[keep * cap + x] += self.n[gone * cap + x];
                self.n[x * cap + keep] += self.n[x * cap + gone];
            }
        }
        self.n[keep * cap + keep] = corner;
        for x in 0..cap {
            self.n[gone * cap + x] = 0.0;
            self.n[x * cap + gone] = 0.0;
        }
        for x in 0..cap {
            self.nt[x * cap + keep] = self.n[keep * cap + x];
            self.nt[keep * cap + x] = self.n[x * cap + keep];
            self.nt[x * cap + gone] = 0.0;
            self.nt[gone * cap + x] = 0.0;
        }
        self.left[keep] += self.left[gone];
        self.right[keep] += self.right[gone];
        self.left[gone] = 0.0;
        self.right[gone] = 0.0;
        self.f -= lost;
        let moved = std::mem::take(&mut self.members[gone]);
        for &w in &moved {
            self.slot_of_word[w as usize] = keep as u32;
        }
        self.members[keep].extend(moved);
        let (x, y) = (self.node[i], self.node[j]);
        self.node[keep] = node;
        self.active[gone] = false;

        // 4. Install the new row and retire the freed slot.
        for v in &mut self.loss[keep * cap..(keep + 1) * cap] {
            *v = f64::INFINITY;
        }
        for &b in &active {
            self.loss[keep * cap + b] = new_row[b];
        }
        self.finish_step(&rows, keep, Some(gone), &active);
        let merge = Merge {
            child0: x.min(y),
            child1: x.max(y),
            ami_bits: self.ami_bits(),
        };
        (merge, gone)
    }

    fn n_row(&self, a: usize) -> &[f64] {
        &self.n[a * self.cap..(a + 1) * self.cap]
    }

    fn nt_row(&self, a: usize) -> &[f64] {
        &self.nt[a * self.cap..(a + 1) * self.cap]
    }
}

/// The change of `A(a, b)` over all `b` when the cells of two classes
/// `i` and `j` at `b` fuse (along rows or along columns): with
/// `p = (n(a,i), n(a,j))` and `q = (n(b,i), n(b,j))`,
/// `φ(p_i + p_j, q_i + q_j) − φ(p_i, q_i) − φ(p_j, q_j)`, with the parts
/// that depend on `b` alone computed once.
struct Fusion<'a> {
    qi: &'a [f64],
    qj: &'a [f64],
    q_sum: Vec<f64>,
    g_qi: Vec<f64>,
    g_qj: Vec<f64>,
    g_q_sum: Vec<f64>,
}

impl<'a> Fusion<'a> {
    fn new(qi: &'a [f64], qj: &'a [f64]) -> Fusion<'a> {
        let q_sum: Vec<f64> = qi.iter().zip(qj).map(|(x, y)| x + y).collect();
        let gv = |x: &[f64]| {
            let mut out = vec![0.0; x.len()];
            kernels::g_of(x, &mut out);
            out
        };
        Fusion {
            qi,
            qj,
            g_qi: gv(qi),
            g_qj: gv(qj),
            g_q_sum: gv(&q_sum),
            q_sum,
        }
    }

    /// Adds the change for row `a`, whose cells are `pi`, `pj`, to `out`.
    fn apply(&self, pi: f64, pj: f64, out: &mut [f64]) {
        if pi == 0.0 && pj == 0.0 {
            return;
        }
        kernels::add_fusion(
            pi,
            pj,
            self.qi,
            self.qj,
            &self.q_sum,
            &self.g_qi,
            &self.g_qj,
            &self.g_q_sum,
            out,
        );
    }
}

/// `φ(p, q) = g(p) + g(q) − g(p + q)`.
fn phi2(p: f64, q: f64) -> f64 {
    g(p) + g(q) - g(p + q)
}

/// The four cells among two classes becoming one.
fn block(aa: f64, ab: f64, ba: f64, bb: f64) -> f64 {
    g(aa) + g(ab) + g(ba) + g(bb) - g(aa + ab + ba + bb)
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
    if work >= PARALLEL_MIN_PAIRS && rayon::current_num_threads() > 1 {
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
