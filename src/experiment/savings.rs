//! The label saving: how many labeled sentences cluster features are
//! worth.
//!
//! A system with cluster features trained on `n` sentences scores some
//! `s`. Reading the baseline's learning curve backwards gives the number
//! of sentences `n_b` the baseline needs to score `s` too; the ratio
//! `n_b / n` says how many times more labeled data the features stand
//! in for (2 means "as good as twice the data").
//!
//! # The reading
//!
//! The curve is a handful of points (training size, mean score) and is
//! read as follows.
//!
//! 1. Points are sorted by size. Points whose size is not a positive
//!    finite number, or whose score is not finite, are dropped: a log
//!    size must exist.
//! 2. Scores are replaced by their running maximum over increasing size.
//!    A mean curve can dip from noise, and a dip would let a target be
//!    "reached" twice; the running maximum asks when the baseline has
//!    first shown that score at some size no larger.
//! 3. Between two neighbouring points the curve is taken as linear in
//!    `ln n`, the shape learning curves roughly have on a log axis, so a
//!    target halfway in score between sizes 250 and 1000 reads as 500,
//!    their geometric mean.
//! 4. A target at or below the first point's score reads as the first
//!    size. The curve says nothing about smaller sizes and extrapolating
//!    a learning curve downwards is unreliable, so `n_b` is then an upper
//!    bound. When the feature system was measured at one of the curve's
//!    own sizes (`n` at least the first size), the ratio is then at most
//!    1, that is no saving is claimed.
//! 5. A target above the whole curve is [`Saving::BeyondLargest`]: the
//!    baseline needs more than the largest size measured, and how much
//!    more is not guessed.
//!
//! The cost is one sort of the points.

use std::fmt;

/// How many labeled sentences the baseline needs to reach a score.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Saving {
    /// This many sentences, read off the curve; fractional, since it
    /// comes from interpolation.
    Sentences(f64),
    /// More than the curve's largest size: the baseline never reached the
    /// score.
    BeyondLargest {
        /// The largest training size on the curve (0 for an empty
        /// curve).
        largest: f64,
    },
}

impl Saving {
    /// The saving ratio `n_b / n` for a system trained on `n` sentences,
    /// or `None` if the baseline's need is beyond the curve or `n` is not
    /// positive.
    pub fn ratio(self, n: f64) -> Option<f64> {
        match self {
            Saving::Sentences(needed) if n > 0.0 => Some(needed / n),
            _ => None,
        }
    }
}

impl fmt::Display for Saving {
    /// A whole number of sentences (`1234`), or `> 5000` beyond a largest
    /// size of 5000.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Saving::Sentences(needed) => write!(f, "{needed:.0}"),
            Saving::BeyondLargest { largest } => write!(f, "> {largest:.0}"),
        }
    }
}

/// How many labeled sentences the baseline needs to reach `target`,
/// according to its mean learning curve `curve` of (training sentences,
/// mean score) points in any order. See the [module docs](self) for how
/// the curve is read.
pub fn baseline_needs(curve: &[(f64, f64)], target: f64) -> Saving {
    let mut points: Vec<(f64, f64)> = curve
        .iter()
        .copied()
        .filter(|&(n, s)| n.is_finite() && n > 0.0 && s.is_finite())
        .collect();
    points.sort_by(|x, y| x.0.total_cmp(&y.0));
    let mut best = f64::NEG_INFINITY;
    for point in &mut points {
        best = best.max(point.1);
        point.1 = best;
    }
    let Some(&(first_n, first_score)) = points.first() else {
        return Saving::BeyondLargest { largest: 0.0 };
    };
    if target <= first_score {
        return Saving::Sentences(first_n);
    }
    // The first point that reaches the target; the one before it is
    // below the target, so the score step between them is positive.
    let Some(i) = points.iter().position(|&(_, s)| s >= target) else {
        let largest = points.last().map_or(0.0, |p| p.0);
        return Saving::BeyondLargest { largest };
    };
    let (lo_n, lo_s) = points[i - 1];
    let (hi_n, hi_s) = points[i];
    if hi_s == target {
        // An exact hit, returned as is rather than through exp(ln n).
        return Saving::Sentences(hi_n);
    }
    let t = (target - lo_s) / (hi_s - lo_s);
    let log_n = lo_n.ln() + t * (hi_n.ln() - lo_n.ln());
    Saving::Sentences(log_n.exp())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sentences(saving: Saving) -> f64 {
        match saving {
            Saving::Sentences(n) => n,
            other => panic!("expected a number of sentences, got {other:?}"),
        }
    }

    /// Scores chosen as short binary fractions, so that "halfway" is
    /// exactly t = 0.5.
    const CURVE: [(f64, f64); 4] =
        [(100.0, 0.5), (250.0, 0.625), (1000.0, 0.75), (5000.0, 0.875)];

    #[test]
    fn exact_hit_at_a_point() {
        assert_eq!(baseline_needs(&CURVE, 0.75), Saving::Sentences(1000.0));
        assert_eq!(baseline_needs(&CURVE, 0.875), Saving::Sentences(5000.0));
    }

    #[test]
    fn halfway_in_score_is_the_geometric_mean_in_size() {
        // Halfway from 0.625 (250) to 0.75 (1000) is 0.6875, read at
        // exp((ln 250 + ln 1000) / 2) = sqrt(250 · 1000) = 500.
        let needed = sentences(baseline_needs(&CURVE, 0.6875));
        assert!((needed - 500.0).abs() < 1e-9, "{needed}");
        // A quarter of the way: 250 · 4^(1/4) = 250 · sqrt(2).
        let needed = sentences(baseline_needs(&CURVE, 0.65625));
        assert!((needed - 250.0 * 2f64.sqrt()).abs() < 1e-9, "{needed}");
    }

    #[test]
    fn unsorted_points_are_sorted_first() {
        let shuffled = [CURVE[2], CURVE[0], CURVE[3], CURVE[1]];
        assert_eq!(
            baseline_needs(&shuffled, 0.6875),
            baseline_needs(&CURVE, 0.6875)
        );
    }

    #[test]
    fn beyond_the_largest_size() {
        let saving = baseline_needs(&CURVE, 0.9);
        assert_eq!(saving, Saving::BeyondLargest { largest: 5000.0 });
        assert_eq!(saving.to_string(), "> 5000");
        assert_eq!(saving.ratio(1000.0), None);
        assert_eq!(
            baseline_needs(&[], 0.5),
            Saving::BeyondLargest { largest: 0.0 }
        );
    }

    #[test]
    fn at_or_below_the_first_point_is_the_first_size() {
        assert_eq!(baseline_needs(&CURVE, 0.5), Saving::Sentences(100.0));
        assert_eq!(baseline_needs(&CURVE, 0.1), Saving::Sentences(100.0));
    }

    #[test]
    fn a_dip_is_removed_by_the_running_maximum() {
        // The mean score dips at 400. Running maximum: 0.70, 0.80, 0.80,
        // 0.90.
        let curve =
            [(100.0, 0.70), (200.0, 0.80), (400.0, 0.75), (800.0, 0.90)];
        // 0.85 is halfway from the 0.80 held at 400 to 0.90 at 800:
        // sqrt(400 · 800). Read from the raw dip it would be two thirds
        // of the way from 0.75, 400 · 2^(2/3) ≈ 635.
        let needed = sentences(baseline_needs(&curve, 0.85));
        assert!((needed - (400.0f64 * 800.0).sqrt()).abs() < 1e-6, "{needed}");
        // 0.77 was first reached between 100 and 200 (t = 0.7), not in
        // the second crossing between 400 and 800: 100 · 2^0.7.
        let needed = sentences(baseline_needs(&curve, 0.77));
        assert!((needed - 100.0 * 2f64.powf(0.7)).abs() < 1e-6, "{needed}");
        // 0.80 is hit exactly at 200; the plateau does not move it.
        assert_eq!(baseline_needs(&curve, 0.80), Saving::Sentences(200.0));
    }

    #[test]
    fn bad_points_are_dropped() {
        let curve =
            [(0.0, 0.9), (f64::NAN, 0.9), (100.0, f64::NAN), (100.0, 0.5)];
        assert_eq!(
            baseline_needs(&curve, 0.6),
            Saving::BeyondLargest { largest: 100.0 }
        );
    }

    #[test]
    fn ratio_and_display() {
        let saving = Saving::Sentences(1234.4);
        assert_eq!(saving.to_string(), "1234");
        assert_eq!(Saving::Sentences(499.6).to_string(), "500");
        assert_eq!(saving.ratio(617.2), Some(2.0));
        assert_eq!(saving.ratio(0.0), None);
    }
}
