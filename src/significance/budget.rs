//! Whether a family's permutation budget let its false-discovery control
//! work. A test none of whose permutations reached the observed statistic
//! has the least p-value its permutations allow (1/(B + 1) after B). With
//! m tests at once, Benjamini–Hochberg passes a p-value p only as the k-th
//! smallest with p <= fdr · k / m, so p needs at least k = ⌈p · m / fdr⌉
//! tests at or below it (Benjamini & Hochberg 1995, the step-up rule). On a
//! league-wide run (hundreds of tests) that can exceed the number of strong
//! effects there are: a pitcher whose every shuffle fell short is then left
//! unflagged because the run drew too few permutations, not because the
//! data showed nothing. The report says so instead of staying silent.

/// Tests of a family that reached the least p-value their permutations
/// allow and were not flagged.
#[derive(Debug, Clone, PartialEq)]
pub struct Unresolved {
    /// Tests in the family.
    pub tests: usize,
    /// Of them, at the least p-value their permutations allow and not flagged.
    pub at_floor: usize,
    /// The smallest p-value among those.
    pub p: f64,
    /// The fewest tests with a p-value that small for Benjamini–Hochberg to
    /// flag it: ⌈p · tests / fdr⌉.
    pub needed: usize,
    /// Of the tests at the floor, those decided early (stopped at a size
    /// the other tests' pilots set, below the budget): more permutations
    /// would not change them.
    pub decided_early: usize,
    /// Where the tests at the floor stand in the family, in order.
    pub which: Vec<usize>,
}

/// One test of a family as [`unresolved`] reads it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Outcome {
    pub p: f64,
    /// No permutation reached the observed statistic.
    pub reached_none: bool,
    /// Stopped at the early decision's size.
    pub decided_early: bool,
    pub q: f64,
}

impl Unresolved {
    /// A budget above `current` whose least p-value lets the tests at the
    /// floor pass Benjamini–Hochberg by themselves with room to spare (at
    /// most half of fdr · at_floor / tests), by [`enough_for`].
    pub fn enough_permutations(&self, fdr: f64, current: usize) -> usize {
        enough_for(fdr * self.at_floor as f64 / self.tests.max(1) as f64 / 2.0, current)
    }
}

/// The budget to suggest for a least p-value of at most `bar`: the least
/// of 999, 1,999, 4,999, 9,999, 19,999, 49,999 and 99,999 above `current`
/// whose least p-value 1/(n + 1) is at most `bar`, else the largest.
pub fn enough_for(bar: f64, current: usize) -> usize {
    [999, 1999, 4999, 9999, 19_999, 49_999, 99_999]
        .into_iter()
        .filter(|&n| n > current)
        .find(|&n| 1.0 / (n as f64 + 1.0) <= bar)
        .unwrap_or(99_999)
}

/// The family's unresolved tests, if any: `tests` holds each test's
/// outcome, `fdr` the bar of the q-values.
pub fn unresolved(tests: &[Outcome], fdr: f64) -> Option<Unresolved> {
    let which: Vec<usize> = (0..tests.len()).filter(|&i| tests[i].reached_none && tests[i].q > fdr).collect();
    let p = which.iter().map(|&i| tests[i].p).reduce(f64::min)?;
    let needed = (p * tests.len() as f64 / fdr).ceil().max(1.0) as usize;
    let decided_early = which.iter().filter(|&&i| tests[i].decided_early).count();
    Some(Unresolved { tests: tests.len(), at_floor: which.len(), p, needed, decided_early, which })
}

/// The highest bar Benjamini–Hochberg can still set in a family whose
/// tests' p-values are bounded below by `lower` (a finished test's bound is
/// its p-value): fdr · R / m, with R the rejections BH makes on the bounds
/// themselves. BH's rejections only fall as p-values rise (the step-up
/// rule counts, for each r, the p-values at or below fdr · r / m), so
/// whatever p-values at or above the bounds the family ends with, it makes
/// at most R rejections, and a test whose bound lies above fdr · R / m is
/// not among them. The same holds for the other tests' flags: for r ≤ R
/// such a test never counts, whether it ends at its full run's p-value or
/// at any other value above its bound, so stopping it changes no flag and
/// no flagged test's q-value (our derivation from the step-up rule of
/// Benjamini & Hochberg 1995; checked against the project's BH below).
pub fn best_bar(lower: &[f64], fdr: f64) -> f64 {
    let m = lower.len();
    let rejections = crate::significance::fdr::bh_q_values(lower).into_iter().filter(|&q| q <= fdr).count();
    if m == 0 {
        return 0.0;
    }
    fdr * rejections as f64 / m as f64
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::significance::fdr::bh_q_values;

    /// `needed` is the least count of equal p-values that Benjamini–Hochberg
    /// flags, checked against the project's BH q-values (themselves checked
    /// against statsmodels' `multipletests(method="fdr_bh")` in
    /// tests/stats_reference.rs): a family of 668 tests whose k strongest
    /// reach p = 1/941 and whose others sit at 0.5.
    #[test]
    fn needed_is_where_bh_starts_to_flag() {
        let (m, p, fdr) = (668, 1.0 / 941.0, 0.05);
        let family = |k: usize| -> Vec<f64> { (0..m).map(|i| if i < k { p } else { 0.5 }).collect() };
        let with = |k: usize| -> Vec<Outcome> {
            let ps = family(k);
            let q = bh_q_values(&ps);
            ps.iter().zip(&q).enumerate().map(|(i, (&p, &q))| Outcome { p, reached_none: i < k, decided_early: i == 0, q }).collect()
        };
        let u = unresolved(&with(9), fdr).expect("nine strong tests, none flagged");
        assert_eq!((u.tests, u.at_floor, u.p, u.decided_early), (m, 9, p, 1));
        assert_eq!(u.which, (0..9).collect::<Vec<_>>());
        // 668 / 941 / 0.05 = 14.2: fourteen are not enough, fifteen are.
        assert_eq!(u.needed, 15);
        assert!(bh_q_values(&family(u.needed - 1))[0] > fdr);
        assert!(bh_q_values(&family(u.needed))[0] <= fdr);
        assert_eq!(unresolved(&with(u.needed), fdr), None, "flagged tests are resolved");
        // Nine at p = 1/(n + 1) pass BH alone once 1/(n + 1) <= 0.05 × 9 / 668
        // (n >= 1484); with room to spare (half that), n >= 2968: 4,999.
        assert_eq!(u.enough_permutations(fdr, 999), 4999);
        assert_eq!(u.enough_permutations(fdr, 4999), 9999);
        // Below the default budget the ladder starts at 999 (1/1000 is at
        // most 0.001); above its top it stays there.
        assert_eq!(enough_for(0.001, 200), 999);
        assert_eq!(enough_for(0.001, 999), 1999);
        assert_eq!(enough_for(1e-9, 999), 99_999);
    }

    /// A test with an exceedance, however small its p-value, is not at the
    /// floor; a family without floor tests has nothing unresolved.
    #[test]
    fn only_tests_no_permutation_reached() {
        let test = |p: f64, q: f64| Outcome { p, reached_none: false, decided_early: false, q };
        assert_eq!(unresolved(&[test(0.002, 0.3), test(0.4, 0.4)], 0.05), None);
        assert_eq!(unresolved(&[], 0.05), None);
    }

    /// `best_bar` against the project's BH (checked against statsmodels in
    /// tests/stats_reference.rs): in random families, any test whose bound
    /// lies above the bar is never flagged, whatever p-values at or above
    /// the bounds the family ends with, and the flags of the others are
    /// the same whether such a test ends at one such value or another.
    #[test]
    fn a_test_above_the_best_bar_is_never_flagged() {
        use rand::{Rng, SeedableRng};
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(7);
        let fdr = 0.05;
        let mut above = 0;
        for _ in 0..2000 {
            let m = rng.random_range(1..60);
            // Bounds as a family's exceedances allow: (b + 1)/1000, some
            // tests with strong effects (b = 0).
            let lower: Vec<f64> = (0..m).map(|_| (rng.random_range(0..120usize).saturating_sub(10) as f64 + 1.0) / 1000.0).collect();
            let bar = best_bar(&lower, fdr);
            let out: Vec<bool> = lower.iter().map(|&l| l > bar * (1.0 + 1e-9)).collect();
            above += out.iter().filter(|&&o| o).count();
            for _ in 0..5 {
                // Two endings: every test at or above its bound; the tests
                // above the bar moved elsewhere above theirs.
                let end: Vec<f64> = lower.iter().map(|&l| (l + rng.random::<f64>() * rng.random::<f64>() * 0.05).min(1.0)).collect();
                let moved: Vec<f64> = end.iter().zip(&lower).zip(&out).map(|((&e, &l), &o)| if o { (l + rng.random::<f64>() * 0.2).min(1.0) } else { e }).collect();
                let (qe, qm) = (bh_q_values(&end), bh_q_values(&moved));
                for i in 0..m {
                    if out[i] {
                        assert!(qe[i] > fdr && qm[i] > fdr, "a test above the bar was flagged");
                    } else {
                        assert_eq!(qe[i] <= fdr, qm[i] <= fdr, "another test's flag moved");
                        if qe[i] <= fdr {
                            assert_eq!(qe[i], qm[i], "a flagged test's q-value moved");
                        }
                    }
                }
            }
        }
        assert!(above > 1000, "the families should put many tests above the bar ({above})");
        assert_eq!(best_bar(&[], fdr), 0.0);
        // By hand: bounds 0.001, 0.002, 0.5 among three tests at 0.05:
        // BH rejects the first two (0.001 ≤ 0.0167, 0.002 ≤ 0.0333), so the
        // bar is 0.05 × 2/3.
        assert!((best_bar(&[0.001, 0.002, 0.5], fdr) - 0.05 * 2.0 / 3.0).abs() < 1e-15);
    }
}
