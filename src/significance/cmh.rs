//! The Cochran–Mantel–Haenszel test of a 2×2 association across strata
//! (Mantel & Haenszel 1959, JNCI 22:719; Cochran 1954, Biometrics 10:417):
//! is a pitch type thrown more (or less) in a situation than the strata's
//! own shares predict? Each stratum is a 2×2 table: in the situation or not
//! × this type or not. With the strata's margins fixed, the count `x` of
//! the type in the situation has mean Σ n·K/N and variance
//! Σ n(N−n)K(N−K) / (N²(N−1)) (hypergeometric, summed over independent
//! strata). The statistic with continuity correction is
//! (|x − E| − ½)² / V, as in statsmodels' `StratifiedTable.test_null_odds`
//! (checked in tests/stats_reference.rs against statsmodels and against
//! R's documented rabbits example).
//!
//! Many sparse strata are fine (that is the test's design): a stratum of
//! one pitch carries no information (x = E, V = 0) and is skipped.

use statrs::distribution::{ContinuousCDF, Normal};

/// Running sums of the test over strata.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Cmh {
    /// Pitches of the type in the situation, summed over strata.
    pub x: f64,
    /// Their expectation under no association within strata.
    pub expected: f64,
    pub variance: f64,
}

impl Cmh {
    /// Add a stratum of `big_n` pitches, `big_k` of the type, `n_in` in the
    /// situation, `x` of those of the type.
    #[inline]
    pub fn add(&mut self, x: u64, n_in: u64, big_k: u64, big_n: u64) {
        if big_n < 2 {
            return;
        }
        let (x, n, k, nn) = (x as f64, n_in as f64, big_k as f64, big_n as f64);
        self.x += x;
        self.expected += n * k / nn;
        self.variance += n * (nn - n) * k * (nn - k) / (nn * nn * (nn - 1.0));
    }

    /// Sums over independent strata add.
    pub fn merge(&mut self, o: &Cmh) {
        self.x += o.x;
        self.expected += o.expected;
        self.variance += o.variance;
    }

    /// The continuity-corrected statistic (|x − E| − ½)² / V (chi-square
    /// with one degree of freedom under the null); 0 with no information.
    pub fn chi2(&self) -> f64 {
        if self.variance <= 0.0 {
            return 0.0;
        }
        let d = (self.x - self.expected).abs() - 0.5;
        d * d / self.variance
    }

    /// Two-sided p-value of `chi2`.
    pub fn p_two_sided(&self) -> f64 {
        if self.variance <= 0.0 {
            return 1.0;
        }
        2.0 * upper_normal(self.chi2().sqrt())
    }

    /// One-sided p-value for "more of the type in the situation than the
    /// strata predict": P(Z ≥ (x − E − ½)/√V). It is half the two-sided
    /// p-value when x − E ≥ ½.
    pub fn p_more(&self) -> f64 {
        if self.variance <= 0.0 {
            return 1.0;
        }
        upper_normal((self.x - self.expected - 0.5) / self.variance.sqrt())
    }

    /// One-sided p-value for "less of the type in the situation".
    pub fn p_less(&self) -> f64 {
        if self.variance <= 0.0 {
            return 1.0;
        }
        upper_normal((self.expected - self.x - 0.5) / self.variance.sqrt())
    }
}

/// P(Z ≥ z) for a standard normal Z, accurate in the far tail (statrs'
/// survival function, not 1 − cdf).
fn upper_normal(z: f64) -> f64 {
    Normal::new(0.0, 1.0).expect("a standard normal").sf(z).clamp(0.0, 1.0)
}
