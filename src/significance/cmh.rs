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

    /// Add a stratum whose pitches carry their own null chances `p` of the
    /// type (from [`OffsetStratum`]) instead of one shared share: `x` of
    /// the `in_situation` pitches are of the type. The expectation is
    /// their Σ p and the variance their share of the stratum's efficient
    /// information, f · (a − a²/W) with a = Σ p(1 − p) over the pitches in
    /// the situation, W over the stratum and f = N/(N − 1) for its N
    /// pitches with a chance strictly between 0 and 1. With every chance
    /// equal (K/N) this is [`Cmh::add`]'s hypergeometric mean and variance.
    pub fn add_offset(&mut self, x: u64, in_situation: &[usize], stratum: &OffsetStratum) {
        if stratum.informative == 0 {
            return;
        }
        let (mut e, mut a) = (0.0, 0.0);
        for &i in in_situation {
            let p = stratum.p[i];
            e += p;
            a += p * (1.0 - p);
        }
        self.x += x as f64;
        self.expected += e;
        self.variance += stratum.finite * (a - a * a / stratum.info);
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

/// One stratum (a game) of the offset form of the test: each pitch has his
/// own odds of the type from elsewhere (his share of it in the pitch's
/// count and batter side, the sheet), and the stratum its own level, so a
/// pitch's null chance is p = expit(α + ln(e/(1 − e))) with α set so that
/// the chances add up to the stratum's count of the type. This is the
/// score test of logistic regression with a fixed intercept per stratum
/// and the sheet's log-odds as an offset (checked against statsmodels'
/// GLM `score_test` in tests/stats_reference.rs), with the finite-stratum
/// factor N/(N − 1) that makes it the Mantel–Haenszel test when every
/// pitch has the same odds. A game's pitches are compared only with each
/// other (his outing's own mix is the stratum's level), while the count
/// and side habits enter as odds rather than as strata of their own: a
/// reliever's outing of 15 pitches spread over 24 count × side cells left
/// most cells with one pitch, which carries no information.
#[derive(Debug, Clone, Default)]
pub struct OffsetStratum {
    /// Each pitch's null chance of the type, in the order given.
    pub p: Vec<f64>,
    /// Σ p(1 − p) over the stratum.
    pub info: f64,
    /// N/(N − 1) for the N pitches with a chance strictly between 0 and 1.
    pub finite: f64,
    /// Those N when the stratum carries information (two or more, the
    /// type among them and not all of them), else 0.
    pub informative: usize,
}

impl OffsetStratum {
    /// Fit the stratum: `expected[i]` is pitch i's share of the type from
    /// elsewhere (0 and 1 allowed: such a pitch is certain and carries no
    /// information), `is_type[i]` whether it is of the type.
    pub fn fit(&mut self, expected: &[f64], is_type: &[bool]) {
        assert_eq!(expected.len(), is_type.len());
        // Every pitch at its own outcome until fitted: a certain pitch
        // stays there, and so does every pitch of a stratum with nothing
        // to fit.
        self.p.clear();
        self.p.extend(is_type.iter().map(|&y| y as u8 as f64));
        let free: Vec<usize> = (0..expected.len()).filter(|&i| expected[i] > 0.0 && expected[i] < 1.0).collect();
        let n = free.len();
        let k = free.iter().filter(|&&i| is_type[i]).count();
        self.info = 0.0;
        self.finite = 0.0;
        self.informative = 0;
        if n < 2 || k == 0 || k == n {
            return;
        }
        // Each free pitch's odds e/(1 − e); a chance is A·r/(1 + A·r) for
        // the stratum's factor A = exp(α), so no logarithm or exponential is
        // taken per pitch.
        let odds: Vec<f64> = free.iter().map(|&i| expected[i] / (1.0 - expected[i])).collect();
        let a = stratum_factor(&odds, k as f64);
        let mut info = 0.0;
        for (&i, &r) in free.iter().zip(&odds) {
            let ar = a * r;
            let q = ar / (1.0 + ar);
            self.p[i] = q;
            info += q * (1.0 - q);
        }
        self.info = info;
        self.finite = n as f64 / (n as f64 - 1.0);
        self.informative = n;
    }
}

/// The factor A = exp(α) with Σ A·r_i/(1 + A·r_i) = k (0 < k < n) for odds
/// r_i: Newton's method on α kept inside a bracket that bisection narrows,
/// to a relative tolerance of 1e-12.
fn stratum_factor(odds: &[f64], k: f64) -> f64 {
    let f = |a: f64| -> (f64, f64) {
        let big = a.exp();
        let (mut s, mut d) = (0.0, 0.0);
        for &r in odds {
            let ar = big * r;
            let q = ar / (1.0 + ar);
            s += q;
            d += q * (1.0 - q);
        }
        (s - k, d)
    };
    let (lo_r, hi_r) = odds.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), &r| (l.min(r), h.max(r)));
    let n = odds.len() as f64;
    // Every chance below k/n at the low end, above it at the high end.
    let target = (k / n / (1.0 - k / n)).ln();
    let (mut lo, mut hi) = (target - hi_r.ln() - 1.0, target - lo_r.ln() + 1.0);
    let mut a = target - (odds.iter().sum::<f64>() / n).ln();
    for _ in 0..200 {
        let (g, d) = f(a);
        if g.abs() <= 1e-12 * n {
            break;
        }
        if g > 0.0 {
            hi = a;
        } else {
            lo = a;
        }
        let step = if d > 0.0 { a - g / d } else { f64::NAN };
        a = if step > lo && step < hi { step } else { 0.5 * (lo + hi) };
        if hi - lo <= 1e-14 * (1.0 + a.abs()) {
            break;
        }
    }
    a.exp()
}

/// P(Z ≥ z) for a standard normal Z, accurate in the far tail (statrs'
/// survival function, not 1 − cdf).
fn upper_normal(z: f64) -> f64 {
    Normal::new(0.0, 1.0).expect("a standard normal").sf(z).clamp(0.0, 1.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// With the same share on every pitch of a stratum the offset form is
    /// the Mantel–Haenszel test itself (whose sums are checked against
    /// statsmodels in tests/stats_reference.rs): the same expectation and
    /// hypergeometric variance, stratum by stratum.
    #[test]
    fn equal_odds_give_the_mantel_haenszel_sums() {
        // (pitches, of the type, in the situation, of the type there)
        let strata = [(12, 5, 4, 3), (2, 1, 1, 1), (30, 9, 17, 4), (7, 3, 2, 0)];
        let (mut classic, mut offset) = (Cmh::default(), Cmh::default());
        let mut fit = OffsetStratum::default();
        for (share, (n, k, m, x)) in [0.3, 0.5, 0.21, 0.9].into_iter().zip(strata) {
            classic.add(x, m, k, n);
            let is_type: Vec<bool> = (0..n as usize).map(|i| i < k as usize).collect();
            let members: Vec<usize> = (0..m as usize).map(|j| if j < x as usize { j } else { k as usize + j }).collect();
            fit.fit(&vec![share; n as usize], &is_type);
            offset.add_offset(x, &members, &fit);
        }
        assert!((classic.x - offset.x).abs() < 1e-12);
        assert!((classic.expected - offset.expected).abs() < 1e-9, "{} {}", classic.expected, offset.expected);
        assert!((classic.variance - offset.variance).abs() < 1e-9, "{} {}", classic.variance, offset.variance);
    }

    /// A pitch whose share is 0 or 1 (his only pitch in that count and
    /// side, or one never thrown there) is certain: it carries nothing, and
    /// the stratum is fitted on the others.
    #[test]
    fn certain_pitches_carry_nothing() {
        let mut fit = OffsetStratum::default();
        fit.fit(&[0.4, 1.0, 0.0, 0.4, 0.4], &[true, true, false, false, false]);
        assert_eq!((fit.p[1], fit.p[2]), (1.0, 0.0));
        assert_eq!(fit.informative, 3);
        assert!((fit.p[0] - 1.0 / 3.0).abs() < 1e-12 && (fit.p[3] - 1.0 / 3.0).abs() < 1e-12);
        let mut t = Cmh::default();
        t.add_offset(1, &[1, 2], &fit);
        assert!((t.x - t.expected).abs() < 1e-12 && t.variance.abs() < 1e-12);
        // Only certain pitches, or the type on every free one: no information.
        fit.fit(&[1.0, 0.0, 0.3], &[true, false, true]);
        assert_eq!(fit.informative, 0);
        fit.fit(&[0.2, 0.7, 0.0], &[true, true, false]);
        assert_eq!(fit.informative, 0);
    }
}
