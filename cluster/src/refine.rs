//! Clustering with exchange refinement: the window phase of
//! [`crate::algorithm`], then exchange passes ([`crate::exchange`]) over
//! its `C` flat classes, then a tree rebuilt over the refined classes.
//!
//! # The rebuilt tree
//!
//! Paths must stay prefix-free and agree with the refined classes, so
//! the tree is rebuilt in two layers:
//!
//! * **Inside each class.** A class whose members the exchange left as
//!   they were keeps its subtree from the window phase. A class that
//!   gained or lost words gets a new subtree, built by the same greedy
//!   method restricted to its own members: the other `C − 1` classes stay
//!   whole as context (they count in the AMI but never merge), the
//!   class's words join by rank, the first `min(m, C)` as classes of
//!   their own and each further one followed by one merge, and merging
//!   goes on until one node holds them all. Every merge is scored by the
//!   AMI over the bigrams of the words present, as in the window phase.
//! * **Over the classes.** The `C − 1` final merges are made afresh over
//!   the refined classes, with the same rule, each class being the root
//!   of its subtree.
//!
//! `merges.tsv` then records, class by class (in class order), the
//! merges of each subtree, then the final merges; nodes are numbered as
//! always (words `0..V` by rank, merge step `t` makes node `V + t`), so
//! the file is a tree over all words whose top `C − 1` merges give the
//! paths. Its `ami_bits` column is the AMI the merge was scored with:
//! from the window phase for a kept subtree, from the class's rebuild
//! for a new one (over the other classes' words and the class's words
//! added by then), and over all bigrams for the final merges.
//!
//! # Cost
//!
//! Rebuilding a class of `m` words costs one window of `C + min(m, C)`
//! slots: `O(C²)` to set up plus `O(m · k · C)` for the merges, `k`
//! neighbouring classes per word; all rebuilds together `O(C³ + V·k·C)`.
//! Measured (README): 0.8 to 1.3 times the window phase's time; a review
//! measured 1.5 times at `C = 800` on 750 k tokens where nearly every
//! class changed (the `O(C³)` set-up; one window reused between classes
//! would save most of it, not done).

use std::time::Instant;

use crate::algorithm::{
    finish, flat_ami, flat_classes, report, window_phase, ClusterParams,
    Hierarchy, Merge, Neighbours, Progress, Stage,
};
use crate::ami::bits;
use crate::counts::Counts;
use crate::error::Result;
use crate::exchange::{
    exchange, ExchangeParams, ExchangeSummary, Move, Observer, Pass,
};
use crate::window::{NewWord, Window};

/// What the refinement did.
#[derive(Clone, Debug, PartialEq)]
pub struct RefineReport {
    /// The AMI in bits of the window phase's flat classes.
    pub ami_before_bits: f64,
    /// The AMI in bits after the exchange (equal to the hierarchy's).
    pub ami_after_bits: f64,
    /// One entry per exchange pass run.
    pub passes: Vec<Pass>,
    /// Words whose class changed (counted once however often they moved).
    pub words_moved: u64,
    /// Classes whose subtree was rebuilt.
    pub classes_rebuilt: u64,
    /// Seconds in the window phase.
    pub window_seconds: f64,
    /// Seconds in the exchange passes.
    pub exchange_seconds: f64,
    /// Seconds rebuilding the tree.
    pub rebuild_seconds: f64,
}

/// Clusters `counts` like [`crate::cluster`], with exchange passes after
/// the window phase. `on_move` sees every accepted move (class numbers
/// are those of the window phase's flat classes, numbered by their most
/// frequent word); `progress` is called as in [`crate::cluster`], with
/// [`Stage`] telling the stages apart.
pub fn cluster_refined(
    counts: &Counts,
    params: &ClusterParams,
    exchange_params: &ExchangeParams,
    progress: &mut dyn FnMut(Progress),
    on_move: &mut dyn FnMut(&Move),
) -> Result<(Hierarchy, RefineReport)> {
    let classes = params.check(counts)?;
    exchange_params.check()?;
    let words = counts.len();
    let graph = Neighbours::new(counts);
    let started = Instant::now();
    let mut window_merges = Vec::with_capacity(words - classes);
    let window = window_phase(&graph, classes, &mut window_merges, progress);
    let old_class_of = flat_classes(&window, words);
    let mut old_nodes = vec![0u32; classes];
    for (slot, node) in window.classes() {
        let first = window.members(slot)[0] as usize;
        old_nodes[old_class_of[first] as usize] = node;
    }
    drop(window);
    let ami_before_bits = bits(flat_ami(counts, &old_class_of, classes));
    let window_seconds = started.elapsed().as_secs_f64();

    let started = Instant::now();
    let mut class_of = old_class_of.clone();
    let mut on_visit = |pass: u32, visited: u64| {
        report(
            progress,
            Stage::Exchange { pass },
            words - classes,
            visited as usize,
            words,
        )
    };
    let passes = exchange(
        &graph,
        &mut class_of,
        classes,
        exchange_params,
        &mut Observer { on_move, on_visit: &mut on_visit },
    );
    let exchange_seconds = started.elapsed().as_secs_f64();
    let words_moved =
        class_of.iter().zip(&old_class_of).filter(|(a, b)| a != b).count();

    let started = Instant::now();
    let class_of = renumber(&class_of, classes);
    let kept = KeptSubtrees {
        merges: &window_merges,
        class_of: &old_class_of,
        roots: &old_nodes,
    };
    let (mut hierarchy, classes_rebuilt) =
        build_tree(counts, &graph, class_of, classes, Some(&kept), progress);
    let rebuild_seconds = started.elapsed().as_secs_f64();
    hierarchy.exchange = Some(ExchangeSummary {
        max_passes: exchange_params.max_passes,
        min_pass_gain_bits: exchange_params.min_pass_gain_bits,
        passes_run: passes.len() as u32,
        moves: passes.iter().map(|p| p.moves).sum(),
        words_moved: words_moved as u64,
        classes_rebuilt,
        ami_before_bits,
    });
    let report = RefineReport {
        ami_before_bits,
        ami_after_bits: hierarchy.ami_bits,
        passes,
        words_moved: words_moved as u64,
        classes_rebuilt,
        window_seconds,
        exchange_seconds,
        rebuild_seconds,
    };
    Ok((hierarchy, report))
}

/// Class numbers by the rank of each class's most frequent word.
fn renumber(class_of: &[u32], classes: usize) -> Vec<u32> {
    let mut new_number = vec![u32::MAX; classes];
    let mut next = 0;
    for &c in class_of {
        if new_number[c as usize] == u32::MAX {
            new_number[c as usize] = next;
            next += 1;
        }
    }
    class_of.iter().map(|&c| new_number[c as usize]).collect()
}

/// The window phase's subtrees, to keep for classes the exchange left
/// alone.
pub(crate) struct KeptSubtrees<'a> {
    /// The window phase's merges (nodes numbered from `V`).
    pub merges: &'a [Merge],
    /// The window phase's flat classes.
    pub class_of: &'a [u32],
    /// The root node of each of those classes.
    pub roots: &'a [u32],
}

/// Builds the whole tree over the flat partition `class_of` (numbered by
/// most frequent word): a subtree per class, kept from `kept` where the
/// class is unchanged and rebuilt otherwise, then the final merges.
/// Returns the hierarchy and the number of subtrees rebuilt.
pub(crate) fn build_tree(
    counts: &Counts,
    graph: &Neighbours,
    class_of: Vec<u32>,
    classes: usize,
    kept: Option<&KeptSubtrees>,
    progress: &mut dyn FnMut(Progress),
) -> (Hierarchy, u64) {
    let words = counts.len();
    let mut members = vec![Vec::new(); classes];
    for (w, &c) in class_of.iter().enumerate() {
        members[c as usize].push(w as u32);
    }
    let table = class_table(graph, &class_of, classes);
    let mut merges = Vec::with_capacity(words - 1);
    let mut roots = Vec::with_capacity(classes);
    let mut rebuilt = 0;
    let old_sizes = kept.map(|kept| {
        let mut sizes = vec![0usize; kept.roots.len()];
        for &c in kept.class_of {
            sizes[c as usize] += 1;
        }
        sizes
    });
    for (k, list) in members.iter().enumerate() {
        let old = kept.zip(old_sizes.as_deref()).and_then(|(kept, sizes)| {
            unchanged(kept.class_of, sizes, list).map(|old| (kept, old))
        });
        let root = match old {
            Some((kept, old_class)) => {
                copy_subtree(kept, old_class, words, &mut merges)
            }
            None => {
                if list.len() > 1 {
                    rebuilt += 1;
                }
                let builder = Subtree {
                    graph,
                    class_of: &class_of,
                    table: &table,
                    classes,
                    class: k,
                };
                builder.build(list, words, &mut merges)
            }
        };
        roots.push(root);
        report(progress, Stage::Rebuilding, merges.len(), words, words);
    }
    // The final merges over the classes.
    let mut window = Window::new(classes + 1, 2 * words);
    let (mut right, mut left) = (Vec::new(), Vec::new());
    for c in 0..classes {
        right.clear();
        left.clear();
        for x in 0..c {
            let (cx, xc) = (table[c * classes + x], table[x * classes + c]);
            if cx != 0.0 {
                right.push((x, cx));
            }
            if xc != 0.0 {
                left.push((x, xc));
            }
        }
        let itself = table[c * classes + c];
        window.add_word(
            roots[c],
            c,
            &NewWord { right: &right, left: &left, itself },
        );
    }
    let hierarchy =
        finish(counts, window, merges, class_of, &roots, &mut |merges_done| {
            report(progress, Stage::Rebuilding, merges_done, words, words)
        });
    (hierarchy, rebuilt)
}

/// The `C × C` class table over all bigrams.
fn class_table(graph: &Neighbours, class_of: &[u32], c: usize) -> Vec<f64> {
    let mut table = vec![0.0; c * c];
    for (w, &a) in class_of.iter().enumerate() {
        for &(x, count) in graph.right_of(w) {
            table[a as usize * c + class_of[x as usize] as usize] +=
                count as f64;
        }
    }
    table
}

/// The old class (`old_of`, with `old_sizes`) holding exactly the words
/// `list`, if there is one.
fn unchanged(
    old_of: &[u32],
    old_sizes: &[usize],
    list: &[u32],
) -> Option<u32> {
    let old = old_of[list[0] as usize];
    let same = old_sizes[old as usize] == list.len()
        && list.iter().all(|&w| old_of[w as usize] == old);
    same.then_some(old)
}

/// Appends the window phase's subtree of old class `old`, renumbered,
/// to `merges`; returns its root's new node number.
fn copy_subtree(
    kept: &KeptSubtrees,
    old: u32,
    words: usize,
    merges: &mut Vec<Merge>,
) -> u32 {
    let root = kept.roots[old as usize];
    if (root as usize) < words {
        return root;
    }
    // The internal nodes under the root, in the order they were made.
    let mut inside = Vec::new();
    let mut stack = vec![root];
    while let Some(node) = stack.pop() {
        if (node as usize) >= words {
            inside.push(node);
            let m = &kept.merges[node as usize - words];
            stack.push(m.child0);
            stack.push(m.child1);
        }
    }
    inside.sort_unstable();
    let mut renamed = std::collections::HashMap::new();
    let rename = |node: u32, renamed: &std::collections::HashMap<u32, u32>| {
        if (node as usize) < words {
            node
        } else {
            renamed[&node]
        }
    };
    for node in inside {
        let m = kept.merges[node as usize - words];
        let (a, b) = (rename(m.child0, &renamed), rename(m.child1, &renamed));
        renamed.insert(node, (words + merges.len()) as u32);
        merges.push(Merge {
            child0: a.min(b),
            child1: a.max(b),
            ami_bits: m.ami_bits,
        });
    }
    renamed[&root]
}

/// Rebuilds the subtree of one class by greedy merging of its members,
/// the other classes as context.
struct Subtree<'a> {
    graph: &'a Neighbours,
    class_of: &'a [u32],
    /// The class table over all bigrams.
    table: &'a [f64],
    classes: usize,
    class: usize,
}

impl Subtree<'_> {
    /// The context slot of another class.
    fn slot_of_class(&self, c: usize) -> usize {
        if c < self.class {
            c
        } else {
            c - 1
        }
    }

    /// Appends the merges of the subtree over `list` (the class's words
    /// by rank) to `merges` and returns its root's node number.
    fn build(
        &self,
        list: &[u32],
        words: usize,
        merges: &mut Vec<Merge>,
    ) -> u32 {
        if list.len() == 1 {
            return list[0];
        }
        let (c, k) = (self.classes, self.class);
        let context = c - 1;
        let mut ctx = Vec::with_capacity(context * context);
        for a in (0..c).filter(|&a| a != k) {
            for b in (0..c).filter(|&b| b != k) {
                ctx.push(self.table[a * c + b]);
            }
        }
        let width = list.len().min(c);
        let cap = context + width + usize::from(list.len() > width);
        let mut window = Window::with_context(cap, words, context, &ctx);
        let (mut right, mut left) = (Vec::new(), Vec::new());
        let mut add = |window: &mut Window, w: u32, slot: usize| {
            right.clear();
            left.clear();
            let mut itself = 0.0;
            let w_us = w as usize;
            for &(x, count) in self.graph.right_of(w_us) {
                let count = count as f64;
                match self.place(window, x, w) {
                    Place::Itself => itself = count,
                    Place::Slot(s) => right.push((s, count)),
                    Place::Absent => {}
                }
            }
            for &(x, count) in self.graph.left_of(w_us) {
                if let Place::Slot(s) = self.place(window, x, w) {
                    left.push((s, count as f64));
                }
            }
            let bigrams = NewWord { right: &right, left: &left, itself };
            window.add_word(w, slot, &bigrams);
        };
        for (i, &w) in list[..width].iter().enumerate() {
            add(&mut window, w, context + i);
        }
        let mut free = context + width;
        for &w in &list[width..] {
            add(&mut window, w, free);
            let (merge, freed) =
                window.merge_best((words + merges.len()) as u32);
            merges.push(merge);
            free = freed;
        }
        while window.mergeable_count() > 1 {
            let (merge, _) = window.merge_best((words + merges.len()) as u32);
            merges.push(merge);
        }
        merges
            .last()
            .map(|_| (words + merges.len() - 1) as u32)
            .expect("merged")
    }

    /// Where the other word `x` of a bigram of `w` sits in the window.
    fn place(&self, window: &Window, x: u32, w: u32) -> Place {
        if x == w {
            return Place::Itself;
        }
        let cx = self.class_of[x as usize] as usize;
        if cx != self.class {
            Place::Slot(self.slot_of_class(cx))
        } else if x < w {
            // The class's words join by rank: x is in already.
            Place::Slot(window.slot_of(x))
        } else {
            Place::Absent
        }
    }
}

enum Place {
    Itself,
    Slot(usize),
    Absent,
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::reference::{
        partition_ami, reference_exchange, reference_tree,
    };
    use rand::{Rng, SeedableRng};
    use rand_chacha::ChaCha8Rng;

    fn corpus(seed: u64, types: usize, lines: usize) -> Counts {
        let text = crate::algorithm::tests::random_corpus(seed, types, lines);
        Counts::from_text(&text, Default::default(), 1)
    }

    /// A random partition into `classes` non-empty classes, numbered by
    /// most frequent word.
    fn partition(seed: u64, words: usize, classes: usize) -> Vec<u32> {
        let mut rng = ChaCha8Rng::seed_from_u64(seed);
        let mut class_of: Vec<u32> = (0..words)
            .map(|w| {
                if w < classes {
                    w as u32
                } else {
                    rng.random_range(0..classes as u32)
                }
            })
            .collect();
        class_of = renumber(&class_of, classes);
        class_of
    }

    fn parts_of(class_of: &[u32], classes: usize) -> Vec<(u32, Vec<u32>)> {
        let mut parts: Vec<(u32, Vec<u32>)> =
            (0..classes).map(|c| (c as u32, Vec::new())).collect();
        for (w, &c) in class_of.iter().enumerate() {
            parts[c as usize].1.push(w as u32);
        }
        parts
    }

    #[test]
    fn rebuilt_tree_matches_brute_force() {
        let cases = if cfg!(debug_assertions) { 4 } else { 25 };
        for seed in 0..cases {
            let mut rng = ChaCha8Rng::seed_from_u64(500 + seed);
            let types = rng.random_range(12..40);
            let counts = corpus(seed, types, types * 2);
            let classes = rng.random_range(2..=6.min(counts.len()));
            let class_of = partition(seed, counts.len(), classes);
            let graph = Neighbours::new(&counts);
            let (fast, rebuilt) = build_tree(
                &counts,
                &graph,
                class_of.clone(),
                classes,
                None,
                &mut |_| {},
            );
            let slow = reference_tree(&counts, &class_of, classes);
            crate::algorithm::tests::assert_same_merges(
                &fast.merges,
                &slow,
                counts.len(),
                &format!("seed {seed}"),
            );
            let multi = parts_of(&class_of, classes)
                .iter()
                .filter(|p| p.1.len() > 1)
                .count();
            assert_eq!(rebuilt as usize, multi);
        }
    }

    #[test]
    fn exchange_matches_brute_force_and_every_move_raises_the_ami() {
        let cases = if cfg!(debug_assertions) { 4 } else { 25 };
        for seed in 0..cases {
            let mut rng = ChaCha8Rng::seed_from_u64(900 + seed);
            let types = rng.random_range(15..45);
            let counts = corpus(100 + seed, types, types * 3);
            let classes = rng.random_range(2..=7.min(counts.len()));
            let start = partition(seed, counts.len(), classes);
            let graph = Neighbours::new(&counts);
            let mut fast = start.clone();
            let mut moves = Vec::new();
            let params =
                ExchangeParams { max_passes: 5, min_pass_gain_bits: 0.0 };
            let passes = exchange(
                &graph,
                &mut fast,
                classes,
                &params,
                &mut Observer {
                    on_move: &mut |m| moves.push(*m),
                    on_visit: &mut |_, _| {},
                },
            );
            let mut slow = start.clone();
            let slow_moves =
                reference_exchange(&counts, &mut slow, classes, 5, 0.0);
            let fast_moves: Vec<_> =
                moves.iter().map(|m| (m.pass, m.word, m.from, m.to)).collect();
            assert_eq!(fast_moves, slow_moves, "seed {seed}");
            assert_eq!(fast, slow);
            // Replay: each move raises the brute-force AMI, which is the
            // one reported.
            let mut replay = start.clone();
            let n = counts.len();
            let mut before =
                bits(partition_ami(&counts, &parts_of(&replay, classes), n));
            for m in &moves {
                assert_eq!(replay[m.word as usize], m.from);
                replay[m.word as usize] = m.to;
                let after = bits(partition_ami(
                    &counts,
                    &parts_of(&replay, classes),
                    n,
                ));
                assert!(after > before, "seed {seed}: {m:?} lowers the AMI");
                assert!((after - m.ami_bits).abs() < 1e-9, "{after} vs {m:?}");
                before = after;
            }
            let last = passes.last().expect("a pass");
            assert!((last.ami_bits - before).abs() < 1e-9);
            assert_eq!(
                passes.iter().map(|p| p.moves).sum::<u64>(),
                moves.len() as u64
            );
        }
    }

    #[test]
    fn refined_hierarchy_is_a_tree_that_agrees_with_its_classes() {
        let counts = corpus(3, 120, 400);
        let classes = 8;
        let mut moves = 0;
        let (tree, report) = cluster_refined(
            &counts,
            &ClusterParams { classes },
            &ExchangeParams::default(),
            &mut |_| {},
            &mut |_| moves += 1,
        )
        .unwrap();
        assert!(moves > 0, "the corpus should leave room to improve");
        assert!(report.ami_after_bits > report.ami_before_bits);
        assert!(report.words_moved > 0 && report.classes_rebuilt > 0);
        let words = counts.len();
        assert_eq!(tree.merges.len(), words - 1);
        // Each node is a child once; children come before parents.
        let mut seen = vec![false; 2 * words - 1];
        for (step, m) in tree.merges.iter().enumerate() {
            for child in [m.child0, m.child1] {
                assert!((child as usize) < words + step);
                assert!(!seen[child as usize]);
                seen[child as usize] = true;
            }
        }
        // Paths: prefix-free, one per class, shared by its words.
        let mut paths = tree.class_paths.clone();
        paths.sort();
        paths.dedup();
        assert_eq!(paths.len(), classes);
        for pair in paths.windows(2) {
            assert!(!pair[1].starts_with(&pair[0]));
        }
        // The leaves under each class's path are exactly its words.
        let mut leaves: Vec<Vec<u32>> = (0..words as u32)
            .map(|w| vec![w])
            .chain(std::iter::repeat_n(Vec::new(), words - 1))
            .collect();
        for (step, m) in tree.merges.iter().enumerate() {
            let mut both = leaves[m.child0 as usize].clone();
            both.extend(leaves[m.child1 as usize].clone());
            both.sort_unstable();
            leaves[words + step] = both;
        }
        let final_start = words - classes;
        let class_roots: Vec<u32> = tree.merges[final_start..]
            .iter()
            .flat_map(|m| [m.child0, m.child1])
            .filter(|&c| (c as usize) < words + final_start)
            .collect();
        assert_eq!(class_roots.len(), classes);
        for root in class_roots {
            let under = &leaves[root as usize];
            let class = tree.class_of[under[0] as usize];
            let members: Vec<u32> = (0..words as u32)
                .filter(|&w| tree.class_of[w as usize] == class)
                .collect();
            assert_eq!(under, &members);
        }
        let fresh = bits(partition_ami(
            &counts,
            &parts_of(&tree.class_of, classes),
            words,
        ));
        assert!((tree.ami_bits - fresh).abs() < 1e-12);
    }

    #[test]
    fn kept_subtrees_are_the_window_phase_ones() {
        // One pass: some classes keep their words, and their subtrees
        // must be copied intact.
        let counts = corpus(8, 90, 300);
        let classes = 10;
        let plain =
            crate::cluster(&counts, &ClusterParams { classes }, &mut |_| {})
                .unwrap();
        let (tree, report) = cluster_refined(
            &counts,
            &ClusterParams { classes },
            &ExchangeParams { max_passes: 1, min_pass_gain_bits: 0.0 },
            &mut |_| {},
            &mut |_| {},
        )
        .unwrap();
        assert!(report.classes_rebuilt < classes as u64);
        let words = counts.len();
        // Internal merges of each unchanged class: the same multiset of
        // (leaf set of child0, leaf set of child1) as in the plain run.
        let splits = |merges: &[Merge]| {
            let mut leaves: Vec<Vec<u32>> =
                (0..words as u32).map(|w| vec![w]).collect();
            let mut out = Vec::new();
            for m in merges {
                let (a, b) =
                    (&leaves[m.child0 as usize], &leaves[m.child1 as usize]);
                let mut pair = [a.clone(), b.clone()];
                pair.sort();
                out.push(pair.clone());
                let mut both = pair.concat();
                both.sort_unstable();
                leaves.push(both);
            }
            out
        };
        let plain_splits = splits(&plain.merges[..words - classes]);
        let refined_splits = splits(&tree.merges[..words - classes]);
        let members_of = |class_of: &[u32], c: u32| -> Vec<u32> {
            (0..words as u32).filter(|&w| class_of[w as usize] == c).collect()
        };
        let plain_classes: Vec<Vec<u32>> = (0..classes as u32)
            .map(|c| members_of(&plain.class_of, c))
            .collect();
        let (mut kept, mut multi) = (0, 0);
        for c in 0..classes as u32 {
            let members = members_of(&tree.class_of, c);
            if members.len() < 2 {
                continue;
            }
            multi += 1;
            if !plain_classes.contains(&members) {
                continue;
            }
            kept += 1;
            let inside = |s: &[Vec<u32>; 2]| {
                s.iter().flatten().all(|w| members.contains(w))
            };
            let mut a: Vec<_> =
                plain_splits.iter().filter(|s| inside(s)).collect();
            let mut b: Vec<_> =
                refined_splits.iter().filter(|s| inside(s)).collect();
            a.sort();
            b.sort();
            assert_eq!(a.len() + 1, members.len(), "class {c}");
            assert_eq!(a, b, "class {c}: its subtree changed");
        }
        assert!(kept > 0, "no class kept its words");
        assert_eq!(kept, multi - report.classes_rebuilt, "{report:?}");
    }

    /// Count files may hold bigrams of count 0; they change nothing, so
    /// the exchange must give the same result with and without them
    /// (they once made a class count twice in a word's bigrams).
    #[test]
    fn zero_count_bigrams_change_nothing() {
        let text = crate::algorithm::tests::random_corpus(21, 60, 200);
        let counts = Counts::from_text(&text, Default::default(), 1);
        let mut file = Vec::new();
        crate::count_file::write(&counts, &mut file).unwrap();
        let file = String::from_utf8(file).unwrap();
        // A bigram at count 0 from each of a few words to every word,
        // before the trailer: each of those words then meets zeros before
        // real bigrams of the same class.
        let (body, trailer) = file.rsplit_once("meta\trecords").unwrap();
        let mut extra = String::new();
        for a in &counts.words[..8] {
            for b in &counts.words {
                extra.push_str(&format!("bigram\t{a}\t{b}\t0\n"));
            }
        }
        let added = 8 * counts.words.len();
        let padded = format!("{body}{extra}meta\trecords{trailer}");
        let padded = padded.replacen(
            &format!(
                "meta\trecords\t{}\t",
                counts.words.len() + counts.bigrams.len()
            ),
            &format!(
                "meta\trecords\t{}\t",
                counts.words.len() + counts.bigrams.len() + added
            ),
            1,
        );
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("c.tsv");
        std::fs::write(&path, padded).unwrap();
        let read =
            crate::count_file::read_all(&[path.as_path()]).unwrap().finish(1);
        // Dropped on reading, so that no stage has to skip them.
        assert_eq!(read.bigrams, counts.bigrams);
        let run = |c: &Counts| {
            cluster_refined(
                c,
                &ClusterParams { classes: 6 },
                &ExchangeParams::default(),
                &mut |_| {},
                &mut |_| {},
            )
            .unwrap()
        };
        let ((a, ra), (b, rb)) = (run(&counts), run(&read));
        assert!(ra.words_moved > 0);
        assert_eq!(a.class_of, b.class_of);
        assert_eq!(ra.passes.len(), rb.passes.len());
        assert!((a.ami_bits - b.ami_bits).abs() < 1e-12);
        assert!((rb.ami_after_bits - b.ami_bits).abs() < 1e-12);
    }
}
