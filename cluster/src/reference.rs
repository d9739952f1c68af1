//! A slow, obviously correct twin of [`crate::algorithm::cluster`], for
//! tests: every candidate merge is scored by recomputing the AMI of the
//! resulting partition from scratch with the textbook formula.
//!
//! It follows the same frequency window and the same near-tie rule
//! ([`near_tie`], in nats with a scale of one nat) and numbers nodes the
//! same way, so on any corpus it must make the same merges. Its cost is
//! `O(V · C² · (B + C²))` for `B` distinct bigrams: use it on small
//! corpora only.

use crate::algorithm::{near_tie, Merge};
use crate::ami::{ami_nats, bits};
use crate::counts::Counts;

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
    while parts.len() > 1 {
        if next_word < words {
            parts.push((next_word as u32, vec![next_word as u32]));
            next_word += 1;
        }
        let clustered = next_word;
        let before = partition_ami(counts, &parts, clustered);
        let mut candidates = Vec::new();
        for x in 0..parts.len() {
            for y in x + 1..parts.len() {
                let merged = merged_parts(&parts, x, y);
                let loss = before - partition_ami(counts, &merged, clustered);
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
        parts = merged_parts(&parts, x, y);
        let node = (words + merges.len()) as u32;
        parts.last_mut().expect("merged part").0 = node;
        let ami_bits = bits(partition_ami(counts, &parts, clustered));
        merges.push(Merge { child0: a.min(b), child1: a.max(b), ami_bits });
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
        if l < clustered && r < clustered {
            table[class_of[l] * k + class_of[r]] += c;
        }
    }
    ami_nats(&table, k)
}
