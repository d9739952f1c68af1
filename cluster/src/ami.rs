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

/// `g(x) = x ln x` for integer counts, from a table for small counts.
pub struct NLogN {
    table: Vec<f64>,
}

/// Counts below this are looked up; the table takes 512 KiB, which stays
/// in the second-level cache next to the pair tables.
const TABLE_SIZE: usize = 1 << 16;

impl Default for NLogN {
    fn default() -> Self {
        NLogN::new()
    }
}

impl NLogN {
    /// Builds the table.
    pub fn new() -> NLogN {
        let table = (0..TABLE_SIZE).map(|n| nlogn(n as f64)).collect();
        NLogN { table }
    }

    /// `n ln n`, `0` for `n = 0`.
    #[inline(always)]
    pub fn g(&self, n: u64) -> f64 {
        match self.table.get(n as usize) {
            Some(&v) => v,
            None => nlogn(n as f64),
        }
    }

    /// `g(p) + g(q) − g(p + q)`: minus the change in `F` when two cells
    /// holding `p` and `q` become one. Exactly zero when `p` or `q` is.
    #[inline(always)]
    pub fn phi(&self, p: u64, q: u64) -> f64 {
        self.g(p) + self.g(q) - self.g(p + q)
    }
}

#[inline(always)]
fn nlogn(x: f64) -> f64 {
    if x == 0.0 {
        0.0
    } else {
        x * x.ln()
    }
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
        let g = NLogN::new();
        let (mut l, mut r, mut f) = ([0u64; 3], [0u64; 3], 0.0);
        for a in 0..3 {
            for b in 0..3 {
                l[a] += counts[a * 3 + b];
                r[b] += counts[a * 3 + b];
                f += g.g(counts[a * 3 + b]);
            }
        }
        f -= l.iter().chain(&r).map(|&x| g.g(x)).sum::<f64>();
        let n: u64 = l.iter().sum();
        let via_f = f / n as f64 + (n as f64).ln();
        assert!((via_f - ami_nats(&counts, 3)).abs() < 1e-14);
    }

    #[test]
    fn table_and_direct_agree() {
        let g = NLogN::new();
        for n in [0u64, 1, 2, 65_535, 65_536, 1 << 40] {
            assert_eq!(g.g(n), nlogn(n as f64));
        }
        assert_eq!(g.phi(0, 17), 0.0);
        assert_eq!(g.phi(1 << 20, 0), 0.0);
    }
}
