//! The exchange algorithm (Kneser and Ney 1993, "Improved clustering
//! techniques for class-based statistical language modelling"; Martin,
//! Liermann and Ney 1998, "Algorithms for bigram and trigram word
//! clustering"): single words move between the classes of a flat
//! partition whenever the move raises the AMI.
//!
//! # Objective
//!
//! The same as the greedy method's ([`crate::algorithm`]): at the fixed
//! bigram total `N`, the AMI is `F / N + ln N` with
//! `F = Σ g(n(a,b)) − Σ g(l(a)) − Σ g(r(b))`, over all bigrams of the
//! clustered words.
//!
//! # One move
//!
//! Word `w`, in class `a`, has `R(c)` bigrams `(w, x)` and `L(c)` bigrams
//! `(x, w)` with words `x ≠ w` of class `c`, `s` bigrams `(w, w)` and
//! marginals `l_w`, `r_w`. Taking `w` out of `a` subtracts these from
//! row and column `a`; putting it into class `b` then changes `F` by
//!
//! ```text
//! Δ(b) = Σ_{c≠b} [g(n(b,c) + R(c)) − g(n(b,c))]
//!      + Σ_{c≠b} [g(n(c,b) + L(c)) − g(n(c,b))]
//!      + g(n(b,b) + R(b) + L(b) + s) − g(n(b,b))
//!      − [g(l(b) + l_w) − g(l(b))] − [g(r(b) + r_w) − g(r(b))]
//! ```
//!
//! against a baseline common to every `b`, so the move to `b` gains
//! `Δ(b) − Δ(a)`. Only classes `c` where `w` has bigrams contribute to the
//! sums, each as one pass over a contiguous column or row of the class
//! table: a move costs `O(k · C)` for `k` neighbouring classes, a pass
//! `O(C · Σ_w k_w)`, bounded by `O(C · B)` for `B` distinct bigrams.
//!
//! # Rules
//!
//! Words are visited by rank (most frequent first), every pass. A word
//! moves to the class of largest `Δ` when that raises the AMI by more than
//! [`MIN_MOVE_GAIN_BITS`] (a floor for rounding, not a tuning knob); among
//! near-tied targets ([`crate::algorithm::near_tie`]) it stays if it can,
//! else takes the smallest class number. The only member of a class never
//! moves, so there stay `C` classes. Passes stop after a pass without a
//! move, after a pass that raised the AMI by at most
//! [`ExchangeParams::min_pass_gain_bits`], or after
//! [`ExchangeParams::max_passes`].
//!
//! # Parallelism
//!
//! None: each move depends on the one before. The sums vectorise (see
//! the `kernels` module), so a pass is bound by memory bandwidth over the
//! class table.

use std::time::Instant;

use ndarray::Array2;
use serde::{Deserialize, Serialize};

use crate::algorithm::{near_tie, Neighbours};
use crate::ami::{bits, g};
use crate::error::{Error, Result};
use crate::kernels;
use crate::window::row_of;

/// The smallest AMI gain, in bits, for which a word moves: far above the
/// rounding of `Δ` (about `1e-14` bits at a billion bigrams) and far
/// below any gain that matters.
pub const MIN_MOVE_GAIN_BITS: f64 = 1e-10;

/// The default of [`ExchangeParams::min_pass_gain_bits`].
pub const DEFAULT_MIN_PASS_GAIN_BITS: f64 = 1e-4;

/// Parameters of the exchange passes.
#[derive(Clone, Debug, PartialEq)]
pub struct ExchangeParams {
    /// The most passes over the vocabulary (at least 1).
    pub max_passes: u32,
    /// Stop after a pass that raised the AMI by at most this many bits
    /// (default [`DEFAULT_MIN_PASS_GAIN_BITS`]; at least 0).
    pub min_pass_gain_bits: f64,
}

impl Default for ExchangeParams {
    fn default() -> Self {
        ExchangeParams {
            max_passes: 10,
            min_pass_gain_bits: DEFAULT_MIN_PASS_GAIN_BITS,
        }
    }
}

impl ExchangeParams {
    /// Checks the parameters.
    pub fn check(&self) -> Result<()> {
        if self.max_passes == 0 {
            return Err(Error::InvalidParam {
                name: "max_passes",
                reason: "0 passes: leave the exchange out instead".into(),
            });
        }
        if !(self.min_pass_gain_bits >= 0.0
            && self.min_pass_gain_bits.is_finite())
        {
            return Err(Error::InvalidParam {
                name: "min_pass_gain_bits",
                reason: format!(
                    "{} is not a finite number of at least 0",
                    self.min_pass_gain_bits
                ),
            });
        }
        Ok(())
    }
}

/// What a refinement did, as recorded in `summary.json`: nothing here
/// depends on timing or threads.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ExchangeSummary {
    /// [`ExchangeParams::max_passes`].
    pub max_passes: u32,
    /// [`ExchangeParams::min_pass_gain_bits`].
    pub min_pass_gain_bits: f64,
    /// Passes run.
    pub passes_run: u32,
    /// Moves made, over all passes.
    pub moves: u64,
    /// Words whose class changed (once however often they moved).
    pub words_moved: u64,
    /// Classes whose subtree was rebuilt.
    pub classes_rebuilt: u64,
    /// The AMI in bits of the window phase's classes, before the passes.
    pub ami_before_bits: f64,
}

/// One accepted move.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Move {
    /// The pass, from 1.
    pub pass: u32,
    /// The word, by rank.
    pub word: u32,
    /// Its class before the move.
    pub from: u32,
    /// Its class after the move.
    pub to: u32,
    /// The AMI in bits after the move.
    pub ami_bits: f64,
}

/// What one pass did.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Pass {
    /// Words moved.
    pub moves: u64,
    /// The AMI in bits at the end of the pass, computed afresh from the
    /// class table.
    pub ami_bits: f64,
    /// Wall-clock seconds.
    pub seconds: f64,
}

/// Hooks called while the passes run.
pub struct Observer<'a> {
    /// After every accepted move.
    pub on_move: &'a mut dyn FnMut(&Move),
    /// Now and then within a pass: `(pass, words visited in it)`.
    pub on_visit: &'a mut dyn FnMut(u32, u64),
}

/// The class table of a flat partition and its marginals, with `g` of
/// every entry, kept as words move.
struct Table {
    c: usize,
    /// `n[[a, b]]`: bigrams from class `a` to class `b`.
    n: Array2<f64>,
    /// The transpose of `n`.
    nt: Array2<f64>,
    gn: Array2<f64>,
    gnt: Array2<f64>,
    left: Vec<f64>,
    right: Vec<f64>,
    gl: Vec<f64>,
    gr: Vec<f64>,
    total: f64,
}

impl Table {
    fn new(graph: &Neighbours, class_of: &[u32], c: usize) -> Table {
        let mut n = Array2::zeros((c, c));
        for w in 0..class_of.len() {
            let a = class_of[w] as usize;
            for &(x, count) in graph.right_of(w) {
                n[[a, class_of[x as usize] as usize]] += count as f64;
            }
        }
        let mut t = Table {
            c,
            nt: Array2::zeros((c, c)),
            gn: Array2::zeros((c, c)),
            gnt: Array2::zeros((c, c)),
            n,
            left: vec![0.0; c],
            right: vec![0.0; c],
            gl: vec![0.0; c],
            gr: vec![0.0; c],
            total: 0.0,
        };
        for a in 0..c {
            for b in 0..c {
                let v = t.n[[a, b]];
                t.nt[[b, a]] = v;
                t.left[a] += v;
                t.right[b] += v;
                t.total += v;
            }
        }
        let g_of = |x: &Array2<f64>, out: &mut Array2<f64>| {
            kernels::g_of(
                x.as_slice().expect("standard layout"),
                out.as_slice_mut().expect("standard layout"),
            );
        };
        g_of(&t.n, &mut t.gn);
        g_of(&t.nt, &mut t.gnt);
        kernels::g_of(&t.left, &mut t.gl);
        kernels::g_of(&t.right, &mut t.gr);
        t
    }

    /// `F`, summed afresh.
    fn objective(&self) -> f64 {
        self.gn.iter().sum::<f64>()
            - self.gl.iter().sum::<f64>()
            - self.gr.iter().sum::<f64>()
    }

    fn ami_bits(&self, f: f64) -> f64 {
        if self.total == 0.0 {
            0.0
        } else {
            bits(f / self.total + self.total.ln())
        }
    }

    fn add_cell(&mut self, a: usize, b: usize, v: f64) {
        let x = self.n[[a, b]] + v;
        self.n[[a, b]] = x;
        self.nt[[b, a]] = x;
        self.gn[[a, b]] = g(x);
        self.gnt[[b, a]] = g(x);
    }

    /// Adds (`sign` 1) or removes (`sign` −1) word `w`'s bigrams to or
    /// from class `a`.
    fn shift(&mut self, w: &WordBigrams, a: usize, sign: f64) {
        for &c in &w.right_classes {
            self.add_cell(a, c, sign * w.right[c]);
        }
        for &c in &w.left_classes {
            self.add_cell(c, a, sign * w.left[c]);
        }
        if w.itself != 0.0 {
            self.add_cell(a, a, sign * w.itself);
        }
        // `left` is a class's row sum: w as the left word of a bigram.
        self.left[a] += sign * w.right_total;
        self.right[a] += sign * w.left_total;
        self.gl[a] = g(self.left[a]);
        self.gr[a] = g(self.right[a]);
    }

    /// `Δ(b)` for every class `b`, with `w` out of the table.
    fn gains(&self, w: &WordBigrams, out: &mut [f64], scratch: &mut [f64]) {
        let c = self.c;
        out.fill(0.0);
        for &k in &w.right_classes {
            // Cells (b, k) for every b: column k of n.
            let col = row_of(&self.nt, k);
            let gcol = row_of(&self.gnt, k);
            kernels::add_cell_growth(w.right[k], col, gcol, out);
        }
        for &k in &w.left_classes {
            let row = row_of(&self.n, k);
            let grow = row_of(&self.gn, k);
            kernels::add_cell_growth(w.left[k], row, grow, out);
        }
        scratch.fill(0.0);
        kernels::add_cell_growth(w.right_total, &self.left, &self.gl, scratch);
        kernels::add_cell_growth(w.left_total, &self.right, &self.gr, scratch);
        for (o, m) in out.iter_mut().zip(scratch.iter()) {
            *o -= m;
        }
        // The cell (b, b): the sums above added R(b) and L(b) to it
        // separately; it takes R(b) + L(b) + s at once.
        let mut fix = |b: usize| {
            let d = self.n[[b, b]];
            let gd = self.gn[[b, b]];
            let (rb, lb) = (w.right[b], w.left[b]);
            let mut v = g(d + rb + lb + w.itself) - gd;
            if rb != 0.0 {
                v -= g(d + rb) - gd;
            }
            if lb != 0.0 {
                v -= g(d + lb) - gd;
            }
            out[b] += v;
        };
        if w.itself != 0.0 {
            (0..c).for_each(&mut fix);
        } else {
            // Each class where w has bigrams, once.
            w.right_classes.iter().for_each(|&b| fix(b));
            w.left_classes
                .iter()
                .filter(|&&b| w.right[b] == 0.0)
                .for_each(|&b| fix(b));
        }
    }
}

/// One word's bigrams grouped by the class of the other word.
struct WordBigrams {
    /// `right[c]`: bigrams `(w, x)`, `x ≠ w` in class `c` (dense).
    right: Vec<f64>,
    left: Vec<f64>,
    right_classes: Vec<usize>,
    left_classes: Vec<usize>,
    itself: f64,
    /// All bigrams `(w, ·)`, `(w, w)` included: `w`'s left marginal.
    right_total: f64,
    /// All bigrams `(·, w)`.
    left_total: f64,
}

impl WordBigrams {
    fn new(c: usize) -> WordBigrams {
        WordBigrams {
            right: vec![0.0; c],
            left: vec![0.0; c],
            right_classes: Vec::new(),
            left_classes: Vec::new(),
            itself: 0.0,
            right_total: 0.0,
            left_total: 0.0,
        }
    }

    fn gather(&mut self, graph: &Neighbours, class_of: &[u32], w: usize) {
        for &k in &self.right_classes {
            self.right[k] = 0.0;
        }
        for &k in &self.left_classes {
            self.left[k] = 0.0;
        }
        self.right_classes.clear();
        self.left_classes.clear();
        self.itself = 0.0;
        self.right_total = 0.0;
        self.left_total = 0.0;
        // Counts are positive (`Counts` drops bigrams at 0), so a class
        // is listed once, when its first bigram comes.
        for &(x, count) in graph.right_of(w) {
            let count = count as f64;
            self.right_total += count;
            if x as usize == w {
                self.itself = count;
                continue;
            }
            let k = class_of[x as usize] as usize;
            if self.right[k] == 0.0 {
                self.right_classes.push(k);
            }
            self.right[k] += count;
        }
        for &(x, count) in graph.left_of(w) {
            let count = count as f64;
            self.left_total += count;
            if x as usize == w {
                continue;
            }
            let k = class_of[x as usize] as usize;
            if self.left[k] == 0.0 {
                self.left_classes.push(k);
            }
            self.left[k] += count;
        }
    }
}

/// Runs exchange passes over the flat partition `class_of` (`classes`
/// classes, each with at least one word) of the words in `graph`,
/// changing it in place. Returns one [`Pass`] per pass run.
pub(crate) fn exchange(
    graph: &Neighbours,
    class_of: &mut [u32],
    classes: usize,
    params: &ExchangeParams,
    observer: &mut Observer,
) -> Vec<Pass> {
    let c = classes;
    let mut table = Table::new(graph, class_of, c);
    let mut size = vec![0u64; c];
    for &a in class_of.iter() {
        size[a as usize] += 1;
    }
    let mut f = table.objective();
    let threshold = MIN_MOVE_GAIN_BITS * std::f64::consts::LN_2 * table.total;
    let mut word = WordBigrams::new(c);
    let (mut gain, mut scratch) = (vec![0.0; c], vec![0.0; c]);
    let mut passes = Vec::new();
    for pass in 1..=params.max_passes {
        let started = Instant::now();
        let ami_start = table.ami_bits(f);
        let mut moves = 0;
        for w in 0..class_of.len() {
            if w % 1024 == 0 {
                (observer.on_visit)(pass, w as u64);
            }
            let a = class_of[w] as usize;
            if size[a] == 1 {
                continue;
            }
            word.gather(graph, class_of, w);
            if word.right_total == 0.0 && word.left_total == 0.0 {
                continue;
            }
            table.shift(&word, a, -1.0);
            table.gains(&word, &mut gain, &mut scratch);
            let best = gain.iter().copied().fold(f64::NEG_INFINITY, f64::max);
            let scale = table.total.max(1.0);
            let tied = |b: usize| near_tie(-best, -gain[b], scale);
            let to = if tied(a) {
                a
            } else {
                (0..c).find(|&b| tied(b)).expect("the best class is tied")
            };
            let gained = gain[to] - gain[a];
            let to = if to != a && gained > threshold { to } else { a };
            table.shift(&word, to, 1.0);
            if to != a {
                f += gained;
                size[a] -= 1;
                size[to] += 1;
                class_of[w] = to as u32;
                moves += 1;
                (observer.on_move)(&Move {
                    pass,
                    word: w as u32,
                    from: a as u32,
                    to: to as u32,
                    ami_bits: table.ami_bits(f),
                });
            }
        }
        (observer.on_visit)(pass, class_of.len() as u64);
        // Sum afresh so that rounding does not build up over passes.
        f = table.objective();
        let ami_end = table.ami_bits(f);
        passes.push(Pass {
            moves,
            ami_bits: ami_end,
            seconds: started.elapsed().as_secs_f64(),
        });
        if moves == 0 || ami_end - ami_start <= params.min_pass_gain_bits {
            break;
        }
    }
    passes
}
