//! Scores of a tagger on a test set, and the tests that say whether two
//! taggers really differ.
//!
//! A test set is scored sentence by sentence into [`Counts`]; a whole
//! system's score is the [`Metric`] of the summed counts, not a mean of
//! per-sentence scores, so long sentences weigh what their chunks or
//! tokens weigh. Two systems run on the same test set give two paired
//! lists of counts, one entry per sentence.
//!
//! # Significance
//!
//! [`approximate_randomization`] is the paired approximate randomization
//! test (E. W. Noreen, *Computer-Intensive Methods for Testing
//! Hypotheses*, 1989; its use for comparing NLP systems is discussed by
//! S. Riezler and J. T. Maxwell, "On some pitfalls in automatic evaluation
//! and significance testing for MT", 2005). Under the null hypothesis the
//! two systems are interchangeable, so which of a sentence's two outputs
//! is called "A" is a coin toss. The test statistic is the absolute
//! difference of the two scores, which makes the test two-sided. Each
//! round tosses one fair coin per sentence, swaps the two systems' counts
//! where it lands heads, and recomputes the statistic; with `r` of `R`
//! rounds at least as extreme as the observed statistic the p-value is
//! `(r + 1) / (R + 1)`, which counts the observed assignment as one of
//! the rounds and so is never 0. [`exact_randomization`] is its exact
//! twin: it enumerates every swap pattern instead of sampling them.
//!
//! Comparisons of floats allow [`TOLERANCE`]: a shuffled statistic counts
//! as "at least as extreme" when it is no more than that below the
//! observed one, so patterns that give the observed statistic in exact
//! arithmetic are not lost to rounding.
//!
//! [`holm`] corrects a family of p-values for multiple comparisons, and
//! [`mean_sd`] summarises repeated runs.
//!
//! # Cost
//!
//! Swapping sentence `i` moves `a_i − b_i` from one system's totals to
//! the other's, and a sentence where both systems have the same counts
//! cannot change anything. So the approximate test keeps only the `k`
//! sentences that differ, keeps running totals in integers, and costs
//! `O(R · k)` additions with no allocation per round: 10,000 rounds over
//! 1,300 sentences are about 13 million branch-free updates, a few tens
//! of milliseconds in a release build. It runs on one thread: splitting
//! the rounds would make the result depend on how the random stream is
//! divided, and the test is already far cheaper than the tagger runs it
//! compares. The exact test costs `O(2^k · k)` and refuses `k` above
//! [`EXACT_LIMIT`].
//!
//! # Determinism
//!
//! The random stream is ChaCha8 seeded from the caller's seed. Each round
//! draws one `u64` per 64 differing sentences (in test-set order) and
//! reads its bits from the least significant up, a set bit meaning
//! "swap". Totals are integers, so the statistic of a pattern is the same
//! on every platform.

use std::{fmt, ops};

use rand::{RngCore, SeedableRng};
use rand_chacha::ChaCha8Rng;

/// Slack allowed when a shuffled statistic is compared with the observed
/// one: a statistic counts as at least as extreme when it is
/// `>= observed - TOLERANCE`.
pub const TOLERANCE: f64 = 1e-12;

/// The most differing sentences [`exact_randomization`] will enumerate
/// (`2^20` patterns, about a million).
pub const EXACT_LIMIT: usize = 20;

/// What one sentence contributes to a score.
///
/// For chunk F1, `correct` is the number of predicted chunks that match a
/// gold chunk exactly, `predicted` the number of predicted chunks and
/// `gold` the number of gold chunks. For token accuracy, `correct` is the
/// number of tokens tagged right and `gold` the number of tokens;
/// `predicted` is not used (set it to the token count too, or leave it
/// 0).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash)]
pub struct Counts {
    /// Chunks (or tokens) the system got right.
    pub correct: u64,
    /// Chunks the system predicted.
    pub predicted: u64,
    /// Chunks in the gold standard, or tokens for accuracy.
    pub gold: u64,
}

impl ops::Add for Counts {
    type Output = Counts;

    fn add(self, other: Counts) -> Counts {
        Counts {
            correct: self.correct + other.correct,
            predicted: self.predicted + other.predicted,
            gold: self.gold + other.gold,
        }
    }
}

impl ops::AddAssign for Counts {
    fn add_assign(&mut self, other: Counts) {
        *self = *self + other;
    }
}

impl std::iter::Sum for Counts {
    fn sum<I: Iterator<Item = Counts>>(iter: I) -> Counts {
        iter.fold(Counts::default(), |acc, c| acc + c)
    }
}

impl<'a> std::iter::Sum<&'a Counts> for Counts {
    fn sum<I: Iterator<Item = &'a Counts>>(iter: I) -> Counts {
        iter.copied().sum()
    }
}

/// How summed [`Counts`] become one score.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Metric {
    /// Chunk F1, `2 · correct / (predicted + gold)`; 0 when the system
    /// predicted nothing and there was nothing to find. This is the
    /// harmonic mean of precision `correct / predicted` and recall
    /// `correct / gold`, written so that neither needs its own guard
    /// against a zero denominator.
    F1,
    /// Token accuracy, `correct / gold` with `gold` the token count; 0
    /// for an empty test set.
    Accuracy,
}

impl Metric {
    /// The score of already summed counts.
    pub fn value(self, totals: Counts) -> f64 {
        let (numerator, denominator) = match self {
            Metric::F1 => (
                2.0 * totals.correct as f64,
                (totals.predicted + totals.gold) as f64,
            ),
            Metric::Accuracy => (totals.correct as f64, totals.gold as f64),
        };
        if denominator == 0.0 {
            0.0
        } else {
            numerator / denominator
        }
    }

    /// The test statistic: the absolute difference of two systems'
    /// scores.
    fn statistic(self, a: Counts, b: Counts) -> f64 {
        (self.value(a) - self.value(b)).abs()
    }
}

/// The score of a whole test set: `metric` of the sum of the
/// per-sentence counts.
pub fn score(metric: Metric, counts: &[Counts]) -> f64 {
    metric.value(counts.iter().sum())
}

/// The two-sided p-value of the paired approximate randomization test
/// that systems `a` and `b` score the same under `metric`.
///
/// `a[i]` and `b[i]` are the two systems' counts on sentence `i`. Each of
/// the `rounds` rounds swaps every sentence's pair with probability 1/2
/// and recomputes `|score(a) − score(b)|`; with `r` rounds at least the
/// observed difference (less [`TOLERANCE`]) the result is
/// `(r + 1) / (rounds + 1)`, in `(0, 1]`. Identical systems get exactly
/// 1, and so does `rounds == 0`. The same inputs and `seed` give the same
/// p-value, and so do `a` and `b` exchanged. See the
/// [module docs](self) for the method, its cost and the random stream.
///
/// # Panics
///
/// If `a` and `b` differ in length: they must be scores of the same test
/// set, so a mismatch is a bug in the caller, not bad input.
pub fn approximate_randomization(
    a: &[Counts],
    b: &[Counts],
    metric: Metric,
    rounds: usize,
    seed: u64,
) -> f64 {
    let paired = Paired::new(a, b);
    let observed = metric.statistic(paired.total_a, paired.total_b);
    let threshold = observed - TOLERANCE;
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut at_least = 0u64;
    for _ in 0..rounds {
        // System A's totals after this round's swaps; B's are what is
        // left of the grand total. Every true intermediate and final
        // value is a sum of counts, so wrapping arithmetic gives it
        // exactly even though a single difference may be "negative".
        let mut swapped = paired.total_a;
        for block in paired.differences.chunks(64) {
            let mut bits = rng.next_u64();
            for d in block {
                let mask = 0u64.wrapping_sub(bits & 1);
                bits >>= 1;
                swapped.correct =
                    swapped.correct.wrapping_sub(d.correct & mask);
                swapped.predicted =
                    swapped.predicted.wrapping_sub(d.predicted & mask);
                swapped.gold = swapped.gold.wrapping_sub(d.gold & mask);
            }
        }
        let other = paired.grand.minus(swapped);
        if metric.statistic(swapped, other) >= threshold {
            at_least += 1;
        }
    }
    (at_least + 1) as f64 / (rounds as f64 + 1.0)
}

/// The p-value of the same test as [`approximate_randomization`], found
/// by enumerating all `2^k` swap patterns of the `k` sentences where `a`
/// and `b` differ: the share of patterns, the identity among them, whose
/// statistic is at least the observed one (less [`TOLERANCE`]). It is
/// therefore at least `2^-k`, and exactly 1 for identical systems.
///
/// Each pattern's totals are summed afresh, with no running update, so
/// this is an independent check of the fast test as well as its exact
/// value.
///
/// # Errors
///
/// [`TooManyDifferences`] when `k` exceeds [`EXACT_LIMIT`].
///
/// # Panics
///
/// If `a` and `b` differ in length, as for
/// [`approximate_randomization`].
pub fn exact_randomization(
    a: &[Counts],
    b: &[Counts],
    metric: Metric,
) -> Result<f64, TooManyDifferences> {
    assert_eq!(a.len(), b.len(), "paired counts of different lengths");
    let differing: Vec<(Counts, Counts)> = a
        .iter()
        .zip(b)
        .filter(|(x, y)| x != y)
        .map(|(x, y)| (*x, *y))
        .collect();
    let k = differing.len();
    if k > EXACT_LIMIT {
        return Err(TooManyDifferences { differing: k, limit: EXACT_LIMIT });
    }
    let common: Counts =
        a.iter().zip(b).filter(|(x, y)| x == y).map(|(x, _)| *x).sum();
    let total_a = common + differing.iter().map(|(x, _)| *x).sum();
    let total_b = common + differing.iter().map(|(_, y)| *y).sum();
    let threshold = metric.statistic(total_a, total_b) - TOLERANCE;
    let patterns = 1u64 << k;
    let mut at_least = 0u64;
    for pattern in 0..patterns {
        let (mut sum_a, mut sum_b) = (common, common);
        for (i, (x, y)) in differing.iter().enumerate() {
            if pattern >> i & 1 == 1 {
                sum_a += *y;
                sum_b += *x;
            } else {
                sum_a += *x;
                sum_b += *y;
            }
        }
        if metric.statistic(sum_a, sum_b) >= threshold {
            at_least += 1;
        }
    }
    Ok(at_least as f64 / patterns as f64)
}

/// [`exact_randomization`] was asked to enumerate more swap patterns
/// than it will.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct TooManyDifferences {
    /// Sentences where the two systems differ.
    pub differing: usize,
    /// The most the exact test accepts ([`EXACT_LIMIT`]).
    pub limit: usize,
}

impl fmt::Display for TooManyDifferences {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "the exact randomization test takes at most {} differing \
             sentences, got {}",
            self.limit, self.differing
        )
    }
}

impl std::error::Error for TooManyDifferences {}

/// The two systems' counts reduced to what the approximate test needs.
struct Paired {
    /// System A's totals with nothing swapped.
    total_a: Counts,
    /// System B's totals with nothing swapped.
    total_b: Counts,
    /// Both systems' totals together; no swap changes them.
    grand: Counts,
    /// `a_i − b_i` (wrapping) for each sentence where the two differ, in
    /// test-set order.
    differences: Vec<Counts>,
}

impl Paired {
    fn new(a: &[Counts], b: &[Counts]) -> Paired {
        assert_eq!(a.len(), b.len(), "paired counts of different lengths");
        let total_a: Counts = a.iter().sum();
        let total_b: Counts = b.iter().sum();
        let differences = a
            .iter()
            .zip(b)
            .filter(|(x, y)| x != y)
            .map(|(x, y)| x.minus(*y))
            .collect();
        Paired { total_a, total_b, grand: total_a + total_b, differences }
    }
}

impl Counts {
    /// Field-wise wrapping difference.
    fn minus(self, other: Counts) -> Counts {
        Counts {
            correct: self.correct.wrapping_sub(other.correct),
            predicted: self.predicted.wrapping_sub(other.predicted),
            gold: self.gold.wrapping_sub(other.gold),
        }
    }
}

/// One p-value after [`holm`]'s correction.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct HolmResult {
    /// The adjusted p-value, in `[0, 1]`: reject at level `alpha` exactly
    /// when it is at most `alpha` (up to rounding).
    pub adjusted: f64,
    /// Whether the hypothesis is rejected at the family-wise level
    /// `alpha`.
    pub significant: bool,
}

/// Holm's step-down correction of `m` p-values for a family-wise error
/// rate of `alpha` (S. Holm, "A simple sequentially rejective multiple
/// test procedure", 1979).
///
/// With the p-values sorted ascending as `p_(1) ≤ … ≤ p_(m)`, hypothesis
/// `(i)` is rejected while `p_(i) ≤ alpha / (m − i + 1)` holds for it and
/// for every one before it; the first failure stops the procedure. The
/// adjusted p-value is `max over j ≤ i of min(1, (m − j + 1) · p_(j))`.
/// Results come back in the order of `p_values`; ties keep their input
/// order. A NaN p-value is taken as 1 (no evidence). The cost is one
/// sort.
pub fn holm(p_values: &[f64], alpha: f64) -> Vec<HolmResult> {
    let m = p_values.len();
    let clean: Vec<f64> =
        p_values.iter().map(|p| if p.is_nan() { 1.0 } else { *p }).collect();
    let mut order: Vec<usize> = (0..m).collect();
    order.sort_by(|&i, &j| clean[i].total_cmp(&clean[j]));
    let mut results =
        vec![HolmResult { adjusted: 1.0, significant: false }; m];
    let mut running_max = 0.0f64;
    let mut still_rejecting = true;
    for (rank, &index) in order.iter().enumerate() {
        let p = clean[index];
        // `rank` is 0-based, so `m − i + 1` for 1-based `i` is `m − rank`.
        let remaining = (m - rank) as f64;
        running_max = running_max.max((remaining * p).min(1.0));
        still_rejecting = still_rejecting && p <= alpha / remaining;
        results[index] =
            HolmResult { adjusted: running_max, significant: still_rejecting };
    }
    results
}

/// The mean and the sample standard deviation (divisor `n − 1`) of `xs`.
///
/// The deviation is 0 for fewer than two values, and the mean of no
/// values is NaN. Two passes: the mean first, then the squared
/// deviations from it, which avoids the cancellation of the
/// sum-of-squares formula.
pub fn mean_sd(xs: &[f64]) -> (f64, f64) {
    let n = xs.len();
    if n == 0 {
        return (f64::NAN, 0.0);
    }
    let mean = xs.iter().sum::<f64>() / n as f64;
    if n < 2 {
        return (mean, 0.0);
    }
    let squares: f64 = xs.iter().map(|x| (x - mean) * (x - mean)).sum();
    (mean, (squares / (n - 1) as f64).sqrt())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn f1(correct: u64, predicted: u64, gold: u64) -> Counts {
        Counts { correct, predicted, gold }
    }

    fn acc(correct: u64, tokens: u64) -> Counts {
        Counts { correct, predicted: tokens, gold: tokens }
    }

    fn close(x: f64, y: f64) -> bool {
        (x - y).abs() < 1e-12
    }

    #[test]
    fn f1_and_accuracy_by_hand() {
        // Two sentences: 2 of 3 predicted chunks right against 4 gold,
        // then 1 of 1 against 1. Totals 3 correct, 4 predicted, 5 gold:
        // precision 3/4, recall 3/5, harmonic mean
        // 2 · 0.75 · 0.6 / 1.35 = 2/3 = 2 · 3 / (4 + 5).
        let counts = [f1(2, 3, 4), f1(1, 1, 1)];
        assert_eq!(counts.iter().sum::<Counts>(), f1(3, 4, 5));
        assert!(close(score(Metric::F1, &counts), 2.0 / 3.0));
        let (p, r) = (3.0 / 4.0, 3.0 / 5.0);
        assert!(close(score(Metric::F1, &counts), 2.0 * p * r / (p + r)));
        // 7 of 10 tokens, then 5 of 10: 12 of 20.
        let tokens = [acc(7, 10), acc(5, 10)];
        assert!(close(score(Metric::Accuracy, &tokens), 0.6));
        // Nothing predicted and nothing to find; an empty test set.
        assert_eq!(score(Metric::F1, &[f1(0, 0, 0)]), 0.0);
        assert_eq!(score(Metric::F1, &[]), 0.0);
        assert_eq!(score(Metric::Accuracy, &[]), 0.0);
        // Predicted chunks but none gold: precision 0, F1 0.
        assert_eq!(score(Metric::F1, &[f1(0, 3, 0)]), 0.0);
    }

    #[test]
    fn identical_systems_give_p_one() {
        let a = [f1(2, 3, 4), f1(0, 1, 2), f1(5, 5, 5), f1(1, 2, 1)];
        for metric in [Metric::F1, Metric::Accuracy] {
            assert_eq!(
                approximate_randomization(&a, &a, metric, 1000, 7),
                1.0
            );
            assert_eq!(exact_randomization(&a, &a, metric), Ok(1.0));
        }
        assert_eq!(
            approximate_randomization(&[], &[], Metric::F1, 10, 7),
            1.0
        );
        // No rounds: only the observed assignment, p = 1/1.
        let b = [f1(0, 3, 4), f1(0, 1, 2), f1(0, 5, 5), f1(0, 2, 1)];
        assert_eq!(approximate_randomization(&a, &b, Metric::F1, 0, 7), 1.0);
    }

    #[test]
    fn exact_test_by_hand() {
        // Accuracy over three sentences of 10 tokens; A gets 9, 6, 10
        // right and B 7, 5, 10. The third sentence is the same for both
        // and cannot matter. Observed: |25/30 − 22/30| = 3/30.
        // Swap patterns of the first two sentences:
        //   none:    A 9+6+10 = 25, B 22  -> 3/30  counts
        //   first:   A 7+6+10 = 23, B 24  -> 1/30
        //   second:  A 9+5+10 = 24, B 23  -> 1/30
        //   both:    A 7+5+10 = 22, B 25  -> 3/30  counts
        // so p = 2/4.
        let a = [acc(9, 10), acc(6, 10), acc(10, 10)];
        let b = [acc(7, 10), acc(5, 10), acc(10, 10)];
        assert_eq!(exact_randomization(&a, &b, Metric::Accuracy), Ok(0.5));
        assert_eq!(exact_randomization(&b, &a, Metric::Accuracy), Ok(0.5));
    }

    #[test]
    fn exact_test_refuses_too_many_differences() {
        let a = vec![acc(1, 2); EXACT_LIMIT + 1];
        let b = vec![acc(2, 2); EXACT_LIMIT + 1];
        let err = exact_randomization(&a, &b, Metric::Accuracy).unwrap_err();
        assert_eq!(
            err,
            TooManyDifferences {
                differing: EXACT_LIMIT + 1,
                limit: EXACT_LIMIT
            }
        );
        assert!(err.to_string().contains("at most 20"));
    }

    /// Ten differing sentences (and two the systems agree on) with a
    /// modest F1 difference, so that the exact p is far from 0 and 1.
    fn ten_differing() -> (Vec<Counts>, Vec<Counts>) {
        let a = vec![
            f1(3, 4, 4),
            f1(2, 3, 3),
            f1(1, 2, 2),
            f1(4, 5, 5),
            f1(0, 1, 1),
            f1(2, 2, 3),
            f1(5, 6, 6),
            f1(1, 1, 2),
            f1(3, 3, 3),
            f1(2, 4, 3),
            f1(4, 4, 4),
            f1(1, 1, 1),
        ];
        let b = vec![
            f1(2, 4, 4),
            f1(3, 3, 3),
            f1(0, 2, 2),
            f1(3, 4, 5),
            f1(1, 1, 1),
            f1(1, 3, 3),
            f1(4, 6, 6),
            f1(2, 2, 2),
            f1(2, 3, 3),
            f1(1, 3, 3),
            f1(4, 4, 4),
            f1(1, 1, 1),
        ];
        (a, b)
    }

    #[test]
    fn approximate_matches_exact() {
        let (a, b) = ten_differing();
        let differing = a.iter().zip(&b).filter(|(x, y)| x != y).count();
        assert_eq!(differing, 10);
        let exact = exact_randomization(&a, &b, Metric::F1).unwrap();
        assert!(exact > 0.05 && exact < 0.95, "exact p = {exact}");
        const ROUNDS: usize = 20_000;
        let approx = approximate_randomization(&a, &b, Metric::F1, ROUNDS, 42);
        // The number of rounds at least as extreme is binomial with
        // success probability `exact`, so its share has standard error
        // sqrt(p (1 − p) / R) (under 0.0036 for R = 20,000). The `+ 1`s
        // of (r + 1) / (R + 1) shift it by at most 1 / (R + 1) more.
        let se = (exact * (1.0 - exact) / ROUNDS as f64).sqrt();
        let bound = 4.0 * se + 1.0 / (ROUNDS as f64 + 1.0);
        assert!(
            (approx - exact).abs() <= bound,
            "approximate p = {approx}, exact p = {exact}, bound {bound}"
        );
    }

    #[test]
    fn approximate_is_seeded_and_symmetric() {
        let (a, b) = ten_differing();
        let p = approximate_randomization(&a, &b, Metric::F1, 2000, 3);
        assert_eq!(approximate_randomization(&a, &b, Metric::F1, 2000, 3), p);
        // Exchanging the systems leaves every round's statistic alone.
        assert_eq!(approximate_randomization(&b, &a, Metric::F1, 2000, 3), p);
        assert!(p > 0.0 && p <= 1.0);
    }

    #[test]
    fn more_than_64_differing_sentences_use_several_words() {
        // 70 differing sentences cross the 64-per-draw boundary; the
        // difference is large, so no pattern matches it and the p-value
        // is the floor 1 / (R + 1) however the bits are read.
        let a = vec![acc(10, 10); 70];
        let b = vec![acc(4, 10); 70];
        let p = approximate_randomization(&a, &b, Metric::Accuracy, 999, 1);
        assert_eq!(p, 1.0 / 1000.0);
    }

    #[test]
    fn clear_difference_gives_small_p() {
        // A tags 95% of each sentence's 20 tokens right, B 70%, on 100
        // sentences. Only swapping all or none of them (2 patterns in
        // 2^100) reaches the observed 0.25, so no sampled round does and
        // p is the floor 1 / (R + 1).
        let a = vec![acc(19, 20); 100];
        let b = vec![acc(14, 20); 100];
        const ROUNDS: usize = 5000;
        let p =
            approximate_randomization(&a, &b, Metric::Accuracy, ROUNDS, 11);
        assert_eq!(p, 1.0 / (ROUNDS as f64 + 1.0));
        assert!(p < 0.001);
    }

    #[test]
    fn holm_by_hand() {
        // p = [0.01, 0.04, 0.03, 0.005], alpha = 0.05, m = 4.
        // Sorted: 0.005 (#3), 0.01 (#0), 0.03 (#2), 0.04 (#1).
        // Multiplied by 4, 3, 2, 1: 0.02, 0.03, 0.06, 0.04.
        // Running maximum: 0.02, 0.03, 0.06, 0.06.
        // Step-down thresholds alpha / 4, 3, 2, 1:
        //   0.005 <= 0.0125 yes; 0.01 <= 0.0167 yes; 0.03 <= 0.025 no,
        //   so 0.03 and everything after it stand.
        // Back in input order: adjusted [0.03, 0.06, 0.06, 0.02],
        // significant [true, false, false, true].
        let results = holm(&[0.01, 0.04, 0.03, 0.005], 0.05);
        let adjusted: Vec<f64> = results.iter().map(|r| r.adjusted).collect();
        let significant: Vec<bool> =
            results.iter().map(|r| r.significant).collect();
        for (got, want) in adjusted.iter().zip([0.03, 0.06, 0.06, 0.02]) {
            assert!(close(*got, want), "{adjusted:?}");
        }
        assert_eq!(significant, [true, false, false, true]);
    }

    #[test]
    fn holm_caps_at_one_and_stops_at_first_failure() {
        // p = [0.6, 0.2, 0.9], alpha = 0.05, m = 3. Sorted 0.2, 0.6, 0.9
        // times 3, 2, 1: 0.6, 1.2 -> 1, 0.9; running maximum 0.6, 1, 1.
        // 0.2 > 0.05 / 3, so nothing is rejected.
        let results = holm(&[0.6, 0.2, 0.9], 0.05);
        let adjusted: Vec<f64> = results.iter().map(|r| r.adjusted).collect();
        for (got, want) in adjusted.iter().zip([1.0, 0.6, 1.0]) {
            assert!(close(*got, want), "{adjusted:?}");
        }
        assert!(results.iter().all(|r| !r.significant));
        // Once one fails, later ones stand even if they would pass their
        // own threshold: sorted 0.001, 0.03, 0.04; 0.001 <= 0.05 / 3
        // passes, 0.03 > 0.05 / 2 fails, so 0.04 stands although
        // 0.04 <= 0.05 / 1. Adjusted: 0.003, 0.06, max(0.06, 0.04).
        let results = holm(&[0.04, 0.001, 0.03], 0.05);
        let significant: Vec<bool> =
            results.iter().map(|r| r.significant).collect();
        assert_eq!(significant, [false, true, false]);
        let adjusted: Vec<f64> = results.iter().map(|r| r.adjusted).collect();
        for (got, want) in adjusted.iter().zip([0.06, 0.003, 0.06]) {
            assert!(close(*got, want), "{adjusted:?}");
        }
        assert!(holm(&[], 0.05).is_empty());
        let nan = holm(&[f64::NAN, 0.001], 0.05);
        assert_eq!(nan[0], HolmResult { adjusted: 1.0, significant: false });
        assert!(nan[1].significant);
    }

    #[test]
    fn mean_sd_by_hand() {
        // Mean 40 / 8 = 5; squared deviations 9 1 1 1 0 0 4 16 sum to 32;
        // sample variance 32 / 7.
        let (mean, sd) = mean_sd(&[2.0, 4.0, 4.0, 4.0, 5.0, 5.0, 7.0, 9.0]);
        assert!(close(mean, 5.0));
        assert!(close(sd, (32.0f64 / 7.0).sqrt()));
        assert_eq!(mean_sd(&[3.5]), (3.5, 0.0));
        let (mean, sd) = mean_sd(&[]);
        assert!(mean.is_nan());
        assert_eq!(sd, 0.0);
    }
}
