//! Average mutual information (AMI) between the classes of adjacent
//! words, and the `n ln n` function every loss in this crate is built of.
//!
//! For bigram counts `n(a, b)` between classes, left marginals `l(a)`,
//! right marginals `r(b)` and total `N`, the AMI in nats is
//!
//! ```text
//! AMI = Σ_ab n(a,b)/N · ln( n(a,b) N / (l(a) r(b)) )
//!     = F / N + ln N,   F = Σ_ab g(n(a,b)) − Σ_a g(l(a)) − Σ_b g(r(b))
//! ```
//!
//! with `g(x) = x ln x` and `g(0) = 0` (Brown et al. 1992, eq. for the
//! average mutual information of a class bigram model; the split into
//! `F` is plain algebra). At a fixed `N` the loss of a merge can be
//! measured in `F`, which is a sum of `g` of integer counts: this is what
//! makes the incremental bookkeeping in [`crate::algorithm`] cheap.

/// `g(x) = x ln x` for a count held in an `f64` (exact below 2^53), with
/// `g(0) = 0`: built on [`ln`], so loops over it vectorise.
#[inline(always)]
pub fn g(x: f64) -> f64 {
    // ln(0) comes out finite (−1023 ln 2), so no branch is needed for 0.
    x * ln(x)
}

/// `g(p) + g(q) − g(p + q)`: minus the change in `F` when two cells
/// holding `p` and `q` become one. Exactly zero when `p` or `q` is.
#[inline(always)]
pub fn phi(p: f64, q: f64) -> f64 {
    g(p) + g(q) - g(p + q)
}

const SQRT_2: f64 = std::f64::consts::SQRT_2;
/// ln 2 split so that `e · LN2_HI` is exact for any binary exponent.
const LN2_HI: f64 = f64::from_bits(0x3fe6_2e42_fee0_0000);
const LN2_LO: f64 = f64::from_bits(0x3dea_39ef_3579_3c76);

/// The natural logarithm of a positive finite `x`, to within about two
/// units in the last place, written with plain IEEE operations only
/// (no table, no fused multiply-add, no branch), so that the compiler
/// vectorises loops that call it and the result is the same on every
/// machine and for every vector width.
///
/// Method: `x = 2^e · m` with `m` in `[√½, √2)`; with
/// `s = (m − 1)/(m + 1)`, `ln m = 2 atanh s = 2s Σ s^(2k)/(2k + 1)`, and
/// `|s| < 0.1716` makes eleven terms of the series enough for double
/// precision. For `x = 0` it returns `−1023 ln 2` (finite, so that
/// `0 · ln 0` is 0); subnormal inputs are not supported.
#[inline(always)]
pub fn ln(x: f64) -> f64 {
    let bits = x.to_bits();
    let exponent_field = bits >> 52;
    let m =
        f64::from_bits((bits & 0x000f_ffff_ffff_ffff) | 0x3ff0_0000_0000_0000);
    // The exponent as a float without an integer conversion: OR the
    // field into the mantissa of 2^52 and subtract.
    let e = f64::from_bits(0x4330_0000_0000_0000 | exponent_field)
        - (4_503_599_627_370_496.0 + 1023.0);
    let big = m > SQRT_2;
    let m = if big { m * 0.5 } else { m };
    let e = if big { e + 1.0 } else { e };
    let f = m - 1.0;
    let s = f / (2.0 + f);
    let z = s * s;
    let mut p = 1.0 / 23.0;
    for c in [21.0, 19.0, 17.0, 15.0, 13.0, 11.0, 9.0, 7.0, 5.0, 3.0] {
        p = p * z + 1.0 / c;
    }
    let ln_m = 2.0 * s + 2.0 * s * (z * p);
    e * LN2_HI + (e * LN2_LO + ln_m)
}

/// The AMI in nats of a dense table of class bigram counts
/// (`counts[a * k + b]` for `k` classes), by the textbook formula.
pub fn ami_nats(counts: &[u64], k: usize) -> f64 {
    assert_eq!(counts.len(), k * k, "a k × k table");
    let mut left = vec![0u64; k];
    let mut right = vec![0u64; k];
    for a in 0..k {
        for b in 0..k {
            left[a] += counts[a * k + b];
            right[b] += counts[a * k + b];
        }
    }
    let total: u64 = left.iter().sum();
    if total == 0 {
        return 0.0;
    }
    let n = total as f64;
    let mut sum = 0.0;
    for a in 0..k {
        for b in 0..k {
            let c = counts[a * k + b];
            if c > 0 {
                let c = c as f64;
                sum +=
                    c / n * (c * n / (left[a] as f64 * right[b] as f64)).ln();
            }
        }
    }
    sum
}

/// Nats to bits.
pub fn bits(nats: f64) -> f64 {
    nats / std::f64::consts::LN_2
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Worked by hand: the bigrams of "a b a b" are (a,b), (b,a), (a,b):
    /// n(a,b) = 2, n(b,a) = 1, l = (2, 1), r = (1, 2), N = 3, so
    /// AMI = 2/3 ln(2·3/(2·2)) + 1/3 ln(1·3/(1·1)) = 2/3 ln 1.5 + 1/3 ln 3.
    #[test]
    fn ami_of_a_hand_worked_table() {
        let got = ami_nats(&[0, 2, 1, 0], 2);
        let want = 2.0 / 3.0 * 1.5f64.ln() + 3.0f64.ln() / 3.0;
        assert!((got - want).abs() < 1e-15, "{got} vs {want}");
    }

    #[test]
    fn independent_classes_have_zero_ami() {
        // n(a,b) = l(a) r(b) / N for every cell.
        let got = ami_nats(&[1, 2, 2, 4], 2);
        assert!(got.abs() < 1e-15, "{got}");
    }

    #[test]
    fn f_form_equals_textbook_form() {
        let counts = [3u64, 0, 7, 1, 5, 2, 0, 4, 9];
        let (mut l, mut r, mut f) = ([0f64; 3], [0f64; 3], 0.0);
        for a in 0..3 {
            for b in 0..3 {
                let c = counts[a * 3 + b] as f64;
                l[a] += c;
                r[b] += c;
                f += g(c);
            }
        }
        f -= l.iter().chain(&r).map(|&x| g(x)).sum::<f64>();
        let n: f64 = l.iter().sum();
        let via_f = f / n + n.ln();
        assert!((via_f - ami_nats(&counts, 3)).abs() < 1e-14);
    }

    #[test]
    fn ln_is_within_two_ulps_of_the_library() {
        let mut worst = 0.0f64;
        let mut x = 1.0f64;
        while x < 9.0e15 {
            for y in [
                x,
                x + 1.0,
                x * 1.37,
                x * (SQRT_2 - 1e-9),
                x * (SQRT_2 + 1e-9),
            ] {
                let want = y.ln();
                let err = (ln(y) - want).abs()
                    / (want.abs().max(1e-300) * f64::EPSILON);
                if y != 1.0 {
                    worst = worst.max(err);
                }
            }
            x *= 1.093;
        }
        assert!(worst <= 2.0, "worst error {worst} ulp");
        assert_eq!(ln(1.0), 0.0);
        assert_eq!(g(0.0), 0.0);
        assert_eq!(phi(0.0, 17.0), 0.0);
        assert_eq!(phi(1048576.0, 0.0), 0.0);
    }
}
