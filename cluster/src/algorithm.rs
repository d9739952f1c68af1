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

use crate::ami::{ami_nats, bits};
use crate::counts::Counts;
use crate::error::{Error, Result};
use crate::exchange::ExchangeSummary;
use crate::window::{NewWord, Window};

/// Relative width of a near-tie between two losses; see [`near_tie`].
pub const TIE_RELATIVE: f64 = 1e-12;

/// Whether `loss` is near-tied with the smallest loss `min`: within
/// [`TIE_RELATIVE`] of the larger of `|min|`, `|loss|` and `scale`.
/// In units of `F` the scale is the bigram total `N`; in nats of AMI it
/// is 1.
pub fn near_tie(min: f64, loss: f64, scale: f64) -> bool {
    loss.is_finite()
        && loss - min <= TIE_RELATIVE * min.abs().max(loss.abs()).max(scale)
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

/// The stage a run is in.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Stage {
    /// Merging: the window phase and, without exchange, the final merges.
    Merging,
    /// An exchange pass (from 1); `words_added` counts the words visited.
    Exchange {
        /// The pass, from 1.
        pass: u32,
    },
    /// Rebuilding the tree over the refined classes; `merges_done`
    /// counts its merges.
    Rebuilding,
}

/// Progress of a run, reported after every step.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Progress {
    /// The stage.
    pub stage: Stage,
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
    /// What the exchange refinement did, when it ran
    /// ([`crate::cluster_refined`]).
    pub exchange: Option<ExchangeSummary>,
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
    let mut merges = Vec::with_capacity(words - 1);
    let window = window_phase(&graph, classes, &mut merges, progress);
    let class_of = flat_classes(&window, words);
    let mut class_nodes = vec![0u32; classes];
    for (slot, node) in window.classes() {
        let first = window.members(slot)[0] as usize;
        class_nodes[class_of[first] as usize] = node;
    }
    Ok(finish(counts, window, merges, class_of, &class_nodes, &mut |done| {
        report(progress, Stage::Merging, done, words, words)
    }))
}

/// Merges the classes left in `window` (nodes `class_nodes`, by class)
/// down to one node, after `merges`, and returns the hierarchy over the
/// flat partition `class_of`; `done` hears the merge count after each.
pub(crate) fn finish(
    counts: &Counts,
    mut window: Window,
    mut merges: Vec<Merge>,
    class_of: Vec<u32>,
    class_nodes: &[u32],
    done: &mut dyn FnMut(usize),
) -> Hierarchy {
    let words = counts.len();
    while window.active_count() > 1 {
        let (merge, _) = window.merge_best((words + merges.len()) as u32);
        merges.push(merge);
        done(merges.len());
    }
    let classes = class_nodes.len();
    let class_paths = paths(words, &merges, class_nodes);
    let ami_bits = bits(flat_ami(counts, &class_of, classes));
    Hierarchy {
        classes,
        merges,
        class_of,
        class_paths,
        ami_bits,
        exchange: None,
    }
}

/// Reports progress: `merges_done` merges, `words_added` of `words`.
pub(crate) fn report(
    progress: &mut dyn FnMut(Progress),
    stage: Stage,
    merges_done: usize,
    words_added: usize,
    words: usize,
) {
    progress(Progress {
        stage,
        words_added: words_added as u64,
        words_total: words as u64,
        merges_done: merges_done as u64,
        merges_total: words as u64 - 1,
    })
}

/// The window phase: the `classes` most frequent words start as classes,
/// each further word joins and one merge follows. Pushes its `V − C`
/// merges onto `merges` and returns the window holding the `C` classes.
pub(crate) fn window_phase(
    graph: &Neighbours,
    classes: usize,
    merges: &mut Vec<Merge>,
    progress: &mut dyn FnMut(Progress),
) -> Window {
    let words = graph.len();
    let mut window = Window::new(classes + 1, words);
    let (mut right, mut left) = (Vec::new(), Vec::new());
    let mut add = |window: &mut Window, word: usize, slot: usize| {
        right.clear();
        left.clear();
        let mut itself = 0.0;
        for &(x, c) in graph.right_of(word) {
            match (x as usize).cmp(&word) {
                std::cmp::Ordering::Less => {
                    right.push((window.slot_of(x), c as f64))
                }
                std::cmp::Ordering::Equal => itself = c as f64,
                std::cmp::Ordering::Greater => break,
            }
        }
        for &(x, c) in graph.left_of(word) {
            if x as usize >= word {
                break;
            }
            left.push((window.slot_of(x), c as f64));
        }
        let bigrams = NewWord { right: &right, left: &left, itself };
        window.add_word(word as u32, slot, &bigrams);
    };
    for word in 0..classes {
        add(&mut window, word, word);
    }
    let mut free = classes;
    for word in classes..words {
        add(&mut window, word, free);
        let (merge, freed) = window.merge_best((words + merges.len()) as u32);
        merges.push(merge);
        free = freed;
        report(progress, Stage::Merging, merges.len(), word + 1, words);
    }
    window
}

/// Each word's flat class, numbered by the rank of its class's most
/// frequent word.
pub(crate) fn flat_classes(window: &Window, words: usize) -> Vec<u32> {
    let mut slots: Vec<(u32, usize)> = window
        .classes()
        .map(|(slot, _)| {
            let first =
                *window.members(slot).iter().min().expect("a class has words");
            (first, slot)
        })
        .collect();
    slots.sort_unstable();
    let mut class_of = vec![0u32; words];
    for (class, &(_, slot)) in slots.iter().enumerate() {
        for &w in window.members(slot) {
            class_of[w as usize] = class as u32;
        }
    }
    class_of
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
pub(crate) struct Neighbours {
    out_start: Vec<usize>,
    out: Vec<(u32, u64)>,
    in_start: Vec<usize>,
    inc: Vec<(u32, u64)>,
}

impl Neighbours {
    pub(crate) fn new(counts: &Counts) -> Neighbours {
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
    pub(crate) fn right_of(&self, word: usize) -> &[(u32, u64)] {
        &self.out[self.out_start[word]..self.out_start[word + 1]]
    }

    /// The number of words.
    pub(crate) fn len(&self) -> usize {
        self.out_start.len() - 1
    }

    /// Bigrams `(x, word)` as `(x, count)`, by `x`.
    pub(crate) fn left_of(&self, word: usize) -> &[(u32, u64)] {
        &self.inc[self.in_start[word]..self.in_start[word + 1]]
    }
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;
    use crate::reference::{partition_ami, reference_merges};
    use rand::{Rng, SeedableRng};
    use rand_chacha::ChaCha8Rng;

    /// A random corpus: `lines` lines of Zipf-like tokens over `types`
    /// words, with some sticky structure so that merges differ in loss.
    pub(crate) fn random_corpus(
        seed: u64,
        types: usize,
        lines: usize,
    ) -> String {
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
        let what = format!("V = {}, C = {classes}", counts.len());
        assert_same_merges(&fast.merges, &slow, counts.len(), &what);
    }

    /// The fast and the slow merges agree: all `V − 1`, the same pairs,
    /// the same AMI after each (within 1e-9 bits).
    pub(crate) fn assert_same_merges(
        fast: &[Merge],
        slow: &[Merge],
        words: usize,
        what: &str,
    ) {
        assert_eq!(fast.len(), words - 1, "{what}");
        assert_eq!(slow.len(), fast.len(), "{what}");
        for (step, (f, s)) in fast.iter().zip(slow).enumerate() {
            assert_eq!(
                (f.child0, f.child1),
                (s.child0, s.child1),
                "merge {step} differs ({what})"
            );
            assert!(
                (f.ami_bits - s.ami_bits).abs() < 1e-9,
                "AMI after merge {step}: {} vs {} ({what})",
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
        let mut first_rank = [usize::MAX; 9];
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
