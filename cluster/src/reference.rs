//! A slow, obviously correct twin of [`crate::algorithm::cluster`], for
//! tests: every candidate merge is scored by recomputing the AMI of the
//! resulting partition from scratch with the textbook formula.
//!
//! It follows the same frequency window and the same near-tie rule
//! ([`near_tie`], in nats with a scale of one nat) and numbers nodes the
//! same way, so on any corpus it must make the same merges. Its cost is
//! `O(V · C² · (B + C²))` for `B` distinct bigrams: use it on small
//! corpora only.
//!
//! [`reference_tree`] and [`reference_exchange`] are the twins of the
//! refinement ([`crate::refine`], [`crate::exchange`]) in the same way.

use crate::algorithm::{near_tie, Merge};
use crate::ami::{ami_nats, bits};
use crate::counts::Counts;
use crate::exchange::MIN_MOVE_GAIN_BITS;

/// The merges the greedy method makes on `counts` with `classes`
/// classes, all `V − 1` of them.
pub fn reference_merges(counts: &Counts, classes: usize) -> Vec<Merge> {
    let words = counts.len();
    let classes = classes.min(words);
    // Each class: (node number, member words).
    let mut parts: Vec<(u32, Vec<u32>)> =
        (0..classes).map(|w| (w as u32, vec![w as u32])).collect();
    let mut merges = Vec::new();
    let mut next_word = classes;
    let mut present: Vec<bool> = (0..words).map(|w| w < classes).collect();
    while parts.len() > 1 {
        if next_word < words {
            parts.push((next_word as u32, vec![next_word as u32]));
            present[next_word] = true;
            next_word += 1;
        }
        let node = (words + merges.len()) as u32;
        let (merged, merge) = best_merge(counts, &parts, 0, &present, node);
        parts = merged;
        merges.push(merge);
    }
    merges
}

/// `parts` with parts `x` and `y` replaced by their union, placed last.
fn merged_parts(
    parts: &[(u32, Vec<u32>)],
    x: usize,
    y: usize,
) -> Vec<(u32, Vec<u32>)> {
    let mut out: Vec<(u32, Vec<u32>)> = parts
        .iter()
        .enumerate()
        .filter(|&(k, _)| k != x && k != y)
        .map(|(_, p)| p.clone())
        .collect();
    let mut union = parts[x].1.clone();
    union.extend(&parts[y].1);
    out.push((u32::MAX, union));
    out
}

/// The AMI in nats of a partition of the first `clustered` words, over
/// the bigrams whose two words are both among them.
pub fn partition_ami(
    counts: &Counts,
    parts: &[(u32, Vec<u32>)],
    clustered: usize,
) -> f64 {
    let present: Vec<bool> =
        (0..counts.len()).map(|w| w < clustered).collect();
    present_ami(counts, parts, &present)
}

/// The AMI in nats of a partition of the words marked `present`, over
/// the bigrams whose two words are both present.
pub fn present_ami(
    counts: &Counts,
    parts: &[(u32, Vec<u32>)],
    present: &[bool],
) -> f64 {
    let k = parts.len();
    let mut class_of = vec![usize::MAX; counts.len()];
    for (c, (_, members)) in parts.iter().enumerate() {
        for &w in members {
            class_of[w as usize] = c;
        }
    }
    let mut table = vec![0u64; k * k];
    for &(l, r, c) in &counts.bigrams {
        let (l, r) = (l as usize, r as usize);
        if present[l] && present[r] {
            table[class_of[l] * k + class_of[r]] += c;
        }
    }
    ami_nats(&table, k)
}

/// The best merge among the parts from `first` on (the parts before
/// are context and never merge), by the near-tie rule; returns the
/// merged parts (the union last, numbered `node`) and the merge.
fn best_merge(
    counts: &Counts,
    parts: &[(u32, Vec<u32>)],
    first: usize,
    present: &[bool],
    node: u32,
) -> (Vec<(u32, Vec<u32>)>, Merge) {
    let before = present_ami(counts, parts, present);
    let mut candidates = Vec::new();
    for x in first..parts.len() {
        for y in x + 1..parts.len() {
            let merged = merged_parts(parts, x, y);
            let loss = before - present_ami(counts, &merged, present);
            candidates.push((loss, x, y));
        }
    }
    let min = candidates.iter().map(|c| c.0).fold(f64::INFINITY, f64::min);
    let (_, x, y) = candidates
        .iter()
        .filter(|c| near_tie(min, c.0, 1.0))
        .min_by_key(|c| {
            let (a, b) = (parts[c.1].0, parts[c.2].0);
            (a.min(b), a.max(b))
        })
        .copied()
        .expect("at least one candidate");
    let (a, b) = (parts[x].0, parts[y].0);
    let mut merged = merged_parts(parts, x, y);
    merged.last_mut().expect("merged part").0 = node;
    let ami_bits = bits(present_ami(counts, &merged, present));
    (merged, Merge { child0: a.min(b), child1: a.max(b), ami_bits })
}

/// The tree [`crate::refine`] builds over the flat partition `class_of`
/// (classes numbered by most frequent word) when every class's subtree
/// is rebuilt: per class, its words join by rank with the other classes
/// as context, the first `min(m, C)` as parts of their own and each
/// further one followed by one merge; then the final merges over the
/// classes. All `V − 1` merges.
pub fn reference_tree(
    counts: &Counts,
    class_of: &[u32],
    classes: usize,
) -> Vec<Merge> {
    let words = counts.len();
    let mut members = vec![Vec::new(); classes];
    for (w, &c) in class_of.iter().enumerate() {
        members[c as usize].push(w as u32);
    }
    let mut merges = Vec::new();
    let mut roots = Vec::new();
    for (k, list) in members.iter().enumerate() {
        if list.len() == 1 {
            roots.push(list[0]);
            continue;
        }
        let mut parts: Vec<(u32, Vec<u32>)> = members
            .iter()
            .enumerate()
            .filter(|&(c, _)| c != k)
            .map(|(_, m)| (u32::MAX, m.clone()))
            .collect();
        let context = parts.len();
        let mut present = vec![true; words];
        for &w in list {
            present[w as usize] = false;
        }
        let width = list.len().min(classes);
        for &w in &list[..width] {
            present[w as usize] = true;
            parts.push((w, vec![w]));
        }
        let mut next = width;
        while parts.len() - context > 1 || next < list.len() {
            if next < list.len() {
                let w = list[next];
                present[w as usize] = true;
                parts.push((w, vec![w]));
                next += 1;
            }
            let node = (words + merges.len()) as u32;
            let (merged, merge) =
                best_merge(counts, &parts, context, &present, node);
            parts = merged;
            merges.push(merge);
        }
        roots.push(parts[context].0);
    }
    let present = vec![true; words];
    let mut parts: Vec<(u32, Vec<u32>)> =
        roots.iter().copied().zip(members).collect();
    while parts.len() > 1 {
        let node = (words + merges.len()) as u32;
        let (merged, merge) = best_merge(counts, &parts, 0, &present, node);
        parts = merged;
        merges.push(merge);
    }
    merges
}

/// The exchange passes of [`crate::exchange`] by brute force: each
/// word, by rank, is tried in every class and the AMI recomputed from
/// scratch each time. Changes `class_of` in place and returns the moves
/// as `(pass, word, from, to)`.
pub fn reference_exchange(
    counts: &Counts,
    class_of: &mut [u32],
    classes: usize,
    max_passes: u32,
    min_pass_gain_bits: f64,
) -> Vec<(u32, u32, u32, u32)> {
    let words = counts.len();
    let present = vec![true; words];
    let ami = |class_of: &[u32]| {
        let mut parts: Vec<(u32, Vec<u32>)> =
            (0..classes).map(|c| (c as u32, Vec::new())).collect();
        for (w, &c) in class_of.iter().enumerate() {
            parts[c as usize].1.push(w as u32);
        }
        present_ami(counts, &parts, &present)
    };
    let mut size = vec![0usize; classes];
    for &c in class_of.iter() {
        size[c as usize] += 1;
    }
    let mut moves = Vec::new();
    for pass in 1..=max_passes {
        let start = ami(class_of);
        let mut moved = 0;
        for w in 0..words {
            let a = class_of[w];
            if size[a as usize] == 1 {
                continue;
            }
            let scores: Vec<f64> = (0..classes as u32)
                .map(|b| {
                    class_of[w] = b;
                    ami(class_of)
                })
                .collect();
            class_of[w] = a;
            let best =
                scores.iter().copied().fold(f64::NEG_INFINITY, f64::max);
            let tied = |b: usize| near_tie(-best, -scores[b], 1.0);
            let to = if tied(a as usize) {
                a as usize
            } else {
                (0..classes).find(|&b| tied(b)).expect("a best class")
            };
            let gain_bits = bits(scores[to] - scores[a as usize]);
            if to != a as usize && gain_bits > MIN_MOVE_GAIN_BITS {
                class_of[w] = to as u32;
                size[a as usize] -= 1;
                size[to] += 1;
                moved += 1;
                moves.push((pass, w as u32, a, to as u32));
            }
        }
        if moved == 0 || bits(ami(class_of) - start) <= min_pass_gain_bits {
            break;
        }
    }
    moves
}
