//! Tests of "the same mix in both periods" on a 2 × K table (periods ×
//! pitch types), and the effect size that goes with them.
//!
//! * Asymptotic: the G-test (log-likelihood ratio, scipy's
//!   `chi2_contingency(..., correction=False, lambda_="log-likelihood")`),
//!   used when Cochran's rule says the expected counts allow the chi-square
//!   approximation (`significance::contingency`).
//! * Otherwise a Monte Carlo permutation test: the period labels of the
//!   cell's pitches are shuffled (both margins fixed, so the null
//!   distribution is the exact conditional one; the Monte Carlo version of
//!   the Freeman–Halton test), G is recomputed on each shuffle and
//!   p = (b + 1) / (m + 1) (Phipson & Smyth 2010).
//! * Both treat each pitch as an independent draw from the period's mix.
//!   Pitches of one game share its opponent and the pitcher's feel that
//!   night, so a real log can vary more than that (overdispersion) and
//!   these p-values can then be too small; shuffling whole games between
//!   the periods would allow for it (see the label-swap test in
//!   `predictability`). The simulator draws pitches independently.
//! * Effect size: the total variation distance between the two mixes,
//!   ½ Σ |p_i − q_i|: the share of pitches that would have to change type
//!   to turn one mix into the other.

use crate::significance::contingency::{expected_counts_allow_asymptotic, table_test, TableStatistic};
use crate::significance::permutation_p::{permutation_p_value, reaches};
use crate::significance::resample::total_variation;
use rand::Rng;
use rand_chacha::ChaCha8Rng;
use serde::Serialize;

/// Shuffles of the Monte Carlo mix test. Cheap (a shuffle of one cell's
/// pitches), so large enough that p can reach 1e-4 and pass a BH family of
/// a few hundred tests.
pub const MONTE_CARLO_PERMUTATIONS: usize = 9_999;

/// Which test produced a p-value.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum TestKind {
    /// G-test against chi-square.
    GTest,
    /// Monte Carlo permutation of period labels, G as the statistic.
    MonteCarloG,
    /// Label-swap permutation of games between periods, model refitted.
    LabelSwapPermutation,
}

impl TestKind {
    pub fn as_str(self) -> &'static str {
        match self {
            TestKind::GTest => "g_test",
            TestKind::MonteCarloG => "monte_carlo_g",
            TestKind::LabelSwapPermutation => "label_swap_permutation",
        }
    }
}

/// Outcome of a 2 × K mix test.
#[derive(Debug, Clone, PartialEq)]
pub struct MixTest {
    pub test: TestKind,
    /// G on the observed table.
    pub statistic: f64,
    pub dof: usize,
    pub p: f64,
    /// Shuffles run (Monte Carlo only).
    pub permutations: Option<usize>,
    /// Total variation distance between the two rows' shares.
    pub tvd: f64,
}

fn g_of(before: &[u64], after: &[u64]) -> crate::significance::contingency::TableTest {
    table_test(&[before, after], TableStatistic::LogLikelihoodRatio, false).expect("rows of equal length")
}

/// Test equal mixes in `before` and `after` (counts per pitch type, same
/// order). `rng` drives the Monte Carlo shuffles when they are needed.
pub fn mix_test(before: &[u64], after: &[u64], rng: &mut ChaCha8Rng) -> MixTest {
    assert_eq!(before.len(), after.len());
    let as_f = |v: &[u64]| v.iter().map(|&x| x as f64).collect::<Vec<_>>();
    let tvd = total_variation(&as_f(before), &as_f(after)).unwrap_or(0.0);
    let obs = g_of(before, after);
    if obs.dof == 0 || expected_counts_allow_asymptotic(&obs.expected) {
        return MixTest { test: TestKind::GTest, statistic: obs.statistic, dof: obs.dof, p: obs.p_value, permutations: None, tvd };
    }
    // Pitches of the cell as type indices; the first n_before are labelled
    // "before". Shuffling the labels keeps both margins.
    let mut types: Vec<usize> = Vec::new();
    for (t, (&b, &a)) in before.iter().zip(after).enumerate() {
        types.extend(std::iter::repeat_n(t, (b + a) as usize));
    }
    let n_before: u64 = before.iter().sum();
    let n = types.len();
    let mut is_before: Vec<bool> = (0..n).map(|i| (i as u64) < n_before).collect();
    let k = before.len();
    let total: Vec<u64> = before.iter().zip(after).map(|(b, a)| b + a).collect();
    let mut b_count = vec![0u64; k];
    let mut a_count = vec![0u64; k];
    let mut exceed = 0usize;
    for _ in 0..MONTE_CARLO_PERMUTATIONS {
        for i in (1..n).rev() {
            let j = rng.random_range(0..=i);
            is_before.swap(i, j);
        }
        b_count.iter_mut().for_each(|c| *c = 0);
        for (t, &ib) in types.iter().zip(&is_before) {
            if ib {
                b_count[*t] += 1;
            }
        }
        for j in 0..k {
            a_count[j] = total[j] - b_count[j];
        }
        if reaches(g_of(&b_count, &a_count).statistic, obs.statistic) {
            exceed += 1;
        }
    }
    MixTest {
        test: TestKind::MonteCarloG,
        statistic: obs.statistic,
        dof: obs.dof,
        p: permutation_p_value(exceed, MONTE_CARLO_PERMUTATIONS),
        permutations: Some(MONTE_CARLO_PERMUTATIONS),
        tvd,
    }
}

/// Shares of a count vector (all zero: all zero).
pub fn shares(c: &[u64]) -> Vec<f64> {
    let n: u64 = c.iter().sum();
    c.iter().map(|&x| if n > 0 { x as f64 / n as f64 } else { 0.0 }).collect()
}

/// Index of the type whose share moved most (ties: the lower index).
pub fn biggest_mover(before: &[u64], after: &[u64]) -> usize {
    let (sb, sa) = (shares(before), shares(after));
    let mut best = 0;
    for i in 0..sb.len() {
        if (sa[i] - sb[i]).abs() > (sa[best] - sb[best]).abs() {
            best = i;
        }
    }
    best
}

/// A type thrown at `at_least` or more of the pitches in one period and
/// below `below` in the other: `Some(true)` new (in after), `Some(false)`
/// dropped, `None` neither.
pub fn new_or_dropped(share_before: f64, share_after: f64, at_least: f64, below: f64) -> Option<bool> {
    if share_after >= at_least && share_before < below {
        Some(true)
    } else if share_before >= at_least && share_after < below {
        Some(false)
    } else {
        None
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::SeedableRng;

    #[test]
    fn large_tables_use_the_g_test() {
        let mut rng = ChaCha8Rng::seed_from_u64(1);
        let t = mix_test(&[50, 30, 20], &[40, 35, 25], &mut rng);
        assert_eq!(t.test, TestKind::GTest);
        assert_eq!(t.dof, 2);
        assert!((t.tvd - 0.10).abs() < 1e-12, "{}", t.tvd); // ½(0.10 + 0.05 + 0.05)
    }

    #[test]
    fn sparse_tables_use_monte_carlo_and_find_a_clear_shift() {
        let mut rng = ChaCha8Rng::seed_from_u64(1);
        // Expected counts below 5 in most cells: Cochran's rule says no.
        let t = mix_test(&[9, 0, 1], &[1, 8, 1], &mut rng);
        assert_eq!(t.test, TestKind::MonteCarloG);
        assert!(t.p < 0.01, "{}", t.p);
        assert!(t.p >= 1.0 / (MONTE_CARLO_PERMUTATIONS as f64 + 1.0));
        let same = mix_test(&[3, 2, 1], &[3, 2, 1], &mut rng);
        assert_eq!(same.p, 1.0); // every shuffle has G >= 0 = observed
    }

    #[test]
    fn new_and_dropped() {
        assert_eq!(new_or_dropped(0.0, 0.25, 0.05, 0.01), Some(true));
        assert_eq!(new_or_dropped(0.12, 0.005, 0.05, 0.01), Some(false));
        assert_eq!(new_or_dropped(0.02, 0.25, 0.05, 0.01), None);
        assert_eq!(new_or_dropped(0.0, 0.04, 0.05, 0.01), None);
    }
}
