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
    /// most half of fdr · at_floor / tests): the least of 1,999, 4,999,
    /// 9,999, 19,999, 49,999 and 99,999 that does, else the largest.
    pub fn enough_permutations(&self, fdr: f64, current: usize) -> usize {
        let bar = fdr * self.at_floor as f64 / self.tests.max(1) as f64 / 2.0;
        [1999, 4999, 9999, 19_999, 49_999, 99_999]
            .into_iter()
            .filter(|&n| n > current)
            .find(|&n| 1.0 / (n as f64 + 1.0) <= bar)
            .unwrap_or(99_999)
    }
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
    }

    /// A test with an exceedance, however small its p-value, is not at the
    /// floor; a family without floor tests has nothing unresolved.
    #[test]
    fn only_tests_no_permutation_reached() {
        let test = |p: f64, q: f64| Outcome { p, reached_none: false, decided_early: false, q };
        assert_eq!(unresolved(&[test(0.002, 0.3), test(0.4, 0.4)], 0.05), None);
        assert_eq!(unresolved(&[], 0.05), None);
    }
}
