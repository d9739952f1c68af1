//! The state of the frequency window and its incremental pair-loss
//! bookkeeping; [`crate::algorithm`] explains the formulas.
//!
//! Layout: dense row-major `cap × cap` tables (`ndarray::Array2`)
//! indexed by slot, the row kernels run on their rows as slices, counts
//! held as `f64` (exact integers below 2^53) so that the hot loops run
//! over contiguous `f64` slices and vectorise, `n ln n` included (see
//! [`crate::ami::ln`]). The count table is kept together with its
//! transpose, so that both a class's row and its column are contiguous.

use ndarray::Array2;
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
    /// `n[[a, b]]`: bigrams from class `a` to class `b`.
    n: Array2<f64>,
    /// The transpose of `n`.
    nt: Array2<f64>,
    left: Vec<f64>,
    right: Vec<f64>,
    /// The pair losses in units of `F`; symmetric, `INFINITY` on the
    /// diagonal and for inactive slots.
    loss: Array2<f64>,
    best_val: Vec<f64>,
    best_idx: Vec<usize>,
    active: Vec<bool>,
    /// Context classes: they count in the objective but never merge, so
    /// their pair losses stay `INFINITY` (see [`Window::with_context`]).
    frozen: Vec<bool>,
    node: Vec<u32>,
    members: Vec<Vec<u32>>,
    slot_of_word: Vec<u32>,
    total: f64,
    f: f64,
    /// Scratch: the rows updated in the current step.
    mark: Vec<bool>,
    /// The slot of the word added last, while its column is left out of
    /// the row minima (see [`Window::finish_step`]).
    newest: Option<usize>,
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
            n: Array2::zeros((cap, cap)),
            nt: Array2::zeros((cap, cap)),
            left: vec![0.0; cap],
            right: vec![0.0; cap],
            loss: Array2::from_elem((cap, cap), f64::INFINITY),
            best_val: vec![f64::INFINITY; cap],
            best_idx: vec![0; cap],
            active: vec![false; cap],
            frozen: vec![false; cap],
            node: vec![0; cap],
            members: vec![Vec::new(); cap],
            slot_of_word: vec![u32::MAX; words],
            total: 0.0,
            f: 0.0,
            mark: vec![false; cap],
            newest: None,
        }
    }

    /// A window whose slots `0..k` hold context classes with the class
    /// table `table` (`k × k`, row-major) among them: they count in the
    /// AMI but never merge. Words added later merge only among
    /// themselves, each merge still scored by the AMI of everything in
    /// the window.
    pub(crate) fn with_context(
        cap: usize,
        words: usize,
        k: usize,
        table: &[f64],
    ) -> Window {
        assert!(k < cap && table.len() == k * k);
        let mut w = Window::new(cap, words);
        for a in 0..k {
            for b in 0..k {
                let v = table[a * k + b];
                w.n[[a, b]] = v;
                w.nt[[b, a]] = v;
                w.left[a] += v;
                w.right[b] += v;
                w.total += v;
                w.f += g(v);
            }
            w.active[a] = true;
            w.frozen[a] = true;
            w.node[a] = u32::MAX;
        }
        for a in 0..k {
            w.f -= g(w.left[a]) + g(w.right[a]);
        }
        w
    }

    pub(crate) fn active_count(&self) -> usize {
        self.active.iter().filter(|&&a| a).count()
    }

    /// Active classes that may still merge (not context).
    pub(crate) fn mergeable_count(&self) -> usize {
        (0..self.cap).filter(|&a| self.active[a] && !self.frozen[a]).count()
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
        // Words added without a merge in between (the first C) each
        // become an ordinary column before the next one comes.
        self.fold_newest();
        let cap = self.cap;
        for &(a, c) in bigrams.right {
            self.n[[s, a]] += c;
            self.nt[[a, s]] += c;
        }
        for &(a, c) in bigrams.left {
            self.n[[a, s]] += c;
            self.nt[[s, a]] += c;
        }
        self.n[[s, s]] = bigrams.itself;
        self.nt[[s, s]] = bigrams.itself;
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
            let (to, from) = (self.n[[a, s]], self.n[[s, a]]);
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
        let col_s = row_of(&self.nt, s);
        let row_s = row_of(&self.n, s);
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
        // Context rows hold only INFINITY: nothing to update there.
        let rows: Vec<usize> =
            d.iter().copied().filter(|&a| !self.frozen[a]).collect();
        for &a in &rows {
            self.mark[a] = true;
        }
        let mut loss = std::mem::take(&mut self.loss);
        update_rows(&mut loss, cap, &self.mark, rows.len() * cap, update);
        self.loss = loss;

        // The new class's row, summed over its neighbours.
        let active = self.active_slots();
        let mut new_row = vec![0.0; cap];
        {
            let (n, nt) = (&self.n, &self.nt);
            for_columns(&mut new_row, d.len(), |range, acc| {
                for &x in &d {
                    let (sx, xs) = (n[[s, x]], n[[x, s]]);
                    let col_x = &row_of(nt, x)[range.clone()];
                    let row_x = &row_of(n, x)[range.clone()];
                    without(acc, &range, x, |acc| {
                        kernels::add_phi_pair(sx, col_x, xs, row_x, acc)
                    });
                }
            });
        }
        let diag = self.diagonal();
        kernels::add_block_minus_marginals(
            self.n[[s, s]],
            row_of(&self.n, s),
            row_of(&self.nt, s),
            &diag,
            self.left[s],
            &self.left,
            self.right[s],
            &self.right,
            &mut new_row,
        );
        for (b, v) in new_row.iter_mut().enumerate() {
            if !self.active[b] || b == s || self.frozen[b] {
                *v = f64::INFINITY;
            }
        }
        row_of_mut(&mut self.loss, s).copy_from_slice(&new_row);
        self.newest = Some(s);
        self.finish_step(&rows, s, None, &active);
        #[cfg(debug_assertions)]
        self.check_minima("add");
    }

    /// Copies the updated rows (marked) and the fresh row into the
    /// columns of the other rows, keeps every row's minimum and clears
    /// the marks; `gone` is a slot just made inactive.
    ///
    /// Row minima leave out the column of [`Window::newest`]: a word
    /// just added is a cheap merge partner for almost every class, so
    /// its column would be the minimum of nearly every row, and merging
    /// it away would force a rescan of them all. [`Window::best_pair`]
    /// looks at its row instead.
    fn finish_step(
        &mut self,
        rows: &[usize],
        fresh: usize,
        gone: Option<usize>,
        active: &[usize],
    ) {
        let cap = self.cap;
        let skip = self.newest;
        // Column minima of the updated rows, for the rows not updated.
        let mut col_min = vec![f64::INFINITY; cap];
        let mut col_arg = vec![u64::MAX; cap];
        for &a in rows.iter().chain([&fresh]) {
            if Some(a) != skip {
                let row = row_of(&self.loss, a);
                kernels::fold_col_min(
                    row,
                    a as u64,
                    &mut col_min,
                    &mut col_arg,
                );
            }
        }
        for &a in rows {
            for b in 0..cap {
                if !self.mark[b] && b != fresh {
                    self.loss[[b, a]] = self.loss[[a, b]];
                }
            }
        }
        for b in 0..cap {
            if b != fresh {
                self.loss[[b, fresh]] = self.loss[[fresh, b]];
            }
        }
        if let Some(gone) = gone {
            for b in 0..cap {
                self.loss[[b, gone]] = f64::INFINITY;
                self.loss[[gone, b]] = f64::INFINITY;
            }
            self.best_val[gone] = f64::INFINITY;
        }
        let mut rescan: Vec<usize> = rows.to_vec();
        rescan.push(fresh);
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
                    self.best_idx[b] = col_arg[b] as usize;
                }
                continue;
            }
            let now = self.loss[[b, old_idx]];
            if now <= old_val {
                // Still the smallest; a smaller updated entry may beat it.
                if col_min[b] < now {
                    self.best_val[b] = col_min[b];
                    self.best_idx[b] = col_arg[b] as usize;
                } else {
                    self.best_val[b] = now;
                }
            } else if col_min[b] <= old_val {
                // Entries not updated are all at least the old minimum.
                self.best_val[b] = col_min[b];
                self.best_idx[b] = col_arg[b] as usize;
            } else {
                rescan.push(b);
            }
        }
        self.rescan_all(&rescan);
        for &a in rows {
            self.mark[a] = false;
        }
    }

    #[cfg(debug_assertions)]
    fn check_minima(&self, when: &str) {
        for a in 0..self.cap {
            if !self.active[a] {
                continue;
            }
            let row = row_of(&self.loss, a);
            let want = match self.newest {
                Some(z) if z != a => kernels::row_min_without(row, z).0,
                _ => kernels::row_min(row).0,
            };
            assert_eq!(
                want, self.best_val[a],
                "row {a} after {when}, newest {:?}",
                self.newest
            );
        }
    }

    /// Takes the column of the newest word back into the row minima.
    fn fold_newest(&mut self) {
        let Some(z) = self.newest.take() else { return };
        if !self.active[z] {
            return;
        }
        let cap = self.cap;
        for b in 0..cap {
            let v = self.loss[[b, z]];
            if self.active[b] && v < self.best_val[b] {
                self.best_val[b] = v;
                self.best_idx[b] = z;
            }
        }
    }

    /// Rescans rows, in parallel when there are enough; the minima leave
    /// out the newest word's column, except in its own row.
    fn rescan_all(&mut self, rows: &[usize]) {
        let cap = self.cap;
        let (loss, skip) = (&self.loss, self.newest);
        let scan = |&a: &usize| {
            let row = row_of(loss, a);
            match skip {
                Some(z) if z != a => kernels::row_min_without(row, z),
                _ => kernels::row_min(row),
            }
        };
        let found: Vec<(f64, usize)> = if rows.len() * cap
            >= PARALLEL_MIN_PAIRS
            && rayon::current_num_threads() > 1
        {
            rows.par_iter().map(scan).collect()
        } else {
            rows.iter().map(scan).collect()
        };
        for (&a, (v, idx)) in rows.iter().zip(found) {
            self.best_val[a] = v;
            self.best_idx[a] = idx;
        }
    }

    /// The cells `(b, b)`.
    fn diagonal(&self) -> Vec<f64> {
        (0..self.cap).map(|b| self.n[[b, b]]).collect()
    }

    /// The pair to merge next, by the rule in [`crate::algorithm`].
    fn best_pair(&self) -> (usize, usize) {
        let cap = self.cap;
        let scale = self.total.max(1.0);
        // Row minima leave out the newest word's column; its own row
        // holds those pairs.
        let newest_row = self.newest.map(|z| row_of(&self.loss, z));
        let min = (0..cap)
            .filter(|&a| self.active[a])
            .map(|a| self.best_val[a])
            .fold(f64::INFINITY, f64::min);
        let has_tie = |a: usize| {
            near_tie(min, self.best_val[a], scale)
                || newest_row.is_some_and(|row| near_tie(min, row[a], scale))
        };
        let p = (0..cap)
            .filter(|&a| self.active[a] && has_tie(a))
            .min_by_key(|&a| self.node[a])
            .expect("at least two active classes");
        let row = row_of(&self.loss, p);
        let q = (0..cap)
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
        match self.newest {
            // The newest word is merged away: its column never entered a
            // row minimum, so nothing is to be taken back.
            Some(z) if z == i || z == j => self.newest = None,
            _ => {
                self.fold_newest();
                #[cfg(debug_assertions)]
                self.check_minima("fold");
            }
        }
        let cap = self.cap;
        let lost = self.loss[[i, j]];
        let active: Vec<usize> = self
            .active_slots()
            .into_iter()
            .filter(|&a| a != i && a != j)
            .collect();
        let support = |table: &Array2<f64>, c: usize| -> Vec<usize> {
            active.iter().copied().filter(|&a| table[[c, a]] != 0.0).collect()
        };
        let (ti, tj) = (support(&self.nt, i), support(&self.nt, j));
        let (si, sj) = (support(&self.n, i), support(&self.n, j));
        let t_small = if ti.len() <= tj.len() { &ti } else { &tj };
        let s_small = if si.len() <= sj.len() { &si } else { &sj };
        let mut rows: Vec<usize> = t_small
            .iter()
            .chain(s_small)
            .copied()
            .filter(|&a| !self.frozen[a])
            .collect();
        rows.sort_unstable();
        rows.dedup();

        // 1. Pairs of other classes: the terms x = i and x = j become one.
        for &a in &rows {
            self.mark[a] = true;
        }
        {
            let (col_i, col_j) = (row_of(&self.nt, i), row_of(&self.nt, j));
            let (row_i, row_j) = (row_of(&self.n, i), row_of(&self.n, j));
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
        {
            let (n, nt) = (&self.n, &self.nt);
            // Terms x where o has bigrams: its cells with x fuse into k's.
            let terms: Vec<(usize, f64, f64, &[f64])> = so
                .iter()
                .map(|&x| (x, n[[k, x]], n[[o, x]], row_of(nt, x)))
                .chain(
                    to.iter()
                        .map(|&x| (x, n[[x, k]], n[[x, o]], row_of(n, x))),
                )
                .collect();
            for_columns(&mut new_row, terms.len(), |range, acc| {
                for &(x, kx, ox, others) in &terms {
                    let others = &others[range.clone()];
                    without(acc, &range, x, |acc| {
                        kernels::add_growth(kx, ox, others, acc)
                    });
                }
            });
        }
        {
            let n = |a: usize, b: usize| self.n[[a, b]];
            kernels::finish_merged_row(
                row_of(&self.loss, k),
                &self.left,
                &self.right,
                row_of(&self.n, k),
                row_of(&self.nt, k),
                row_of(&self.n, o),
                row_of(&self.nt, o),
                &self.diagonal(),
                [self.left[k], self.right[k]],
                [n(k, o), n(o, k)],
                [n(k, k), n(i, i) + n(i, j) + n(j, i) + n(j, j)],
                [self.left[i] + self.left[j], self.right[i] + self.right[j]],
                &mut new_row,
            );
        }

        // 3. Merge the counts into the slot with more words.
        let (keep, gone) = if self.members[i].len() >= self.members[j].len() {
            (i, j)
        } else {
            (j, i)
        };
        let corner = self.n[[keep, keep]]
            + self.n[[keep, gone]]
            + self.n[[gone, keep]]
            + self.n[[gone, gone]];
        for x in 0..cap {
            if x != keep && x != gone {
                self.n[[keep, x]] += self.n[[gone, x]];
                self.n[[x, keep]] += self.n[[x, gone]];
            }
        }
        self.n[[keep, keep]] = corner;
        for x in 0..cap {
            self.n[[gone, x]] = 0.0;
            self.n[[x, gone]] = 0.0;
        }
        for x in 0..cap {
            self.nt[[x, keep]] = self.n[[keep, x]];
            self.nt[[keep, x]] = self.n[[x, keep]];
            self.nt[[x, gone]] = 0.0;
            self.nt[[gone, x]] = 0.0;
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
        for v in row_of_mut(&mut self.loss, keep) {
            *v = f64::INFINITY;
        }
        for &b in &active {
            if !self.frozen[b] {
                self.loss[[keep, b]] = new_row[b];
            }
        }
        self.finish_step(&rows, keep, Some(gone), &active);
        #[cfg(debug_assertions)]
        self.check_minima("merge");
        let merge = Merge {
            child0: x.min(y),
            child1: x.max(y),
            ami_bits: self.ami_bits(),
        };
        (merge, gone)
    }
}

/// Row `a` of a table, as a slice for the row kernels.
pub(crate) fn row_of(table: &Array2<f64>, a: usize) -> &[f64] {
    table.row(a).to_slice().expect("rows of a standard-layout table")
}

/// Row `a` of a table, as a mutable slice.
pub(crate) fn row_of_mut(table: &mut Array2<f64>, a: usize) -> &mut [f64] {
    table.row_mut(a).into_slice().expect("rows of a standard-layout table")
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

/// Runs `fill` on column chunks of `row`, in parallel when `terms`
/// (each a pass over the row) make enough work; every column sees the
/// terms in the same order either way.
fn for_columns<F>(row: &mut [f64], terms: usize, fill: F)
where
    F: Fn(std::ops::Range<usize>, &mut [f64]) + Sync,
{
    const CHUNK: usize = 256;
    if terms * row.len() >= PARALLEL_MIN_PAIRS
        && rayon::current_num_threads() > 1
    {
        row.par_chunks_mut(CHUNK).enumerate().for_each(|(k, acc)| {
            let start = k * CHUNK;
            fill(start..start + acc.len(), acc)
        });
    } else {
        let len = row.len();
        fill(0..len, row);
    }
}

/// Runs `add` on `acc` (the columns `range` of a row) but leaves column
/// `x` as it was: a class is not its own neighbour.
fn without(
    acc: &mut [f64],
    range: &std::ops::Range<usize>,
    x: usize,
    add: impl FnOnce(&mut [f64]),
) {
    let kept = range.contains(&x).then(|| acc[x - range.start]);
    add(acc);
    if let Some(v) = kept {
        acc[x - range.start] = v;
    }
}

/// Runs `update` on every row of `table` whose slot is marked, in
/// parallel when `work` (pair updates) is large enough.
fn update_rows<F>(
    table: &mut Array2<f64>,
    cap: usize,
    mark: &[bool],
    work: usize,
    update: F,
) where
    F: Fn(usize, &mut [f64]) + Sync,
{
    let table = table.as_slice_mut().expect("a standard-layout table");
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
