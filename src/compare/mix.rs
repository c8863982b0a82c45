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
//!   the Freeman–Halton test), G is recomputed on each shuffle, and the
//!   shuffles stop once h of them reach the observed G (Besag & Clifford
//!   1991, p = h / l after l shuffles) or after m, p = (b + 1) / (m + 1)
//!   (Phipson & Smyth 2010): a cell with nothing to find costs a few dozen
//!   shuffles, a clear shift the whole budget.
//! * Both treat each pitch as an independent draw from the period's mix.
//!   Pitches of one game share its opponent and the pitcher's feel that
//!   night, so a real log can vary more than that (overdispersion) and
//!   these p-values can then be too small; shuffling whole games between
//!   the periods would allow for it (see the label-swap test in
//!   `predictability`). The simulator draws pitches independently.
//! * Effect size: the total variation distance between the two mixes,
//!   ½ Σ |p_i − q_i|: the share of pitches that would have to change type
//!   to turn one mix into the other.

use crate::significance::contingency::{expected_counts_allow_asymptotic, g_term, table_test, TableStatistic};
use crate::significance::permutation_p::SequentialPermutation;
use crate::significance::resample::total_variation;
use rand::Rng;
use rand_chacha::ChaCha8Rng;
use serde::Serialize;

/// Most shuffles of the Monte Carlo mix test: enough that p can reach 1e-4
/// and pass a BH family of a few hundred tests. A cell with nothing to find
/// stops long before (Besag–Clifford).
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
    /// Shuffles run (Monte Carlo only; fewer than the most when stopped
    /// early).
    pub permutations: Option<usize>,
    /// Total variation distance between the two rows' shares.
    pub tvd: f64,
}

fn g_of(before: &[u64], after: &[u64]) -> crate::significance::contingency::TableTest {
    table_test(&[before, after], TableStatistic::LogLikelihoodRatio, false).expect("rows of equal length")
}

/// Test equal mixes in `before` and `after` (counts per pitch type, same
/// order). `rng` drives the Monte Carlo shuffles when they are needed; they
/// stop after `stop_after` of them reach the observed G (Besag–Clifford, as
/// every permutation test of the tool), or after
/// [`MONTE_CARLO_PERMUTATIONS`].
pub fn mix_test(before: &[u64], after: &[u64], rng: &mut ChaCha8Rng, stop_after: usize) -> MixTest {
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
    let total: Vec<u64> = before.iter().zip(after).map(|(b, a)| b + a).collect();
    let g_with_margins = MarginG::new(&total, n_before);
    // The first row of the current arrangement, kept up to date swap by
    // swap (a swap of a "before" and an "after" pitch moves one pitch of
    // each type), so no shuffle recounts the cell.
    let mut b_count = vec![0u64; before.len()];
    for &t in &types[..n_before as usize] {
        b_count[t] += 1;
    }
    let mut seq = SequentialPermutation::new(obs.statistic, MONTE_CARLO_PERMUTATIONS, stop_after);
    while !seq.is_done() {
        for i in (1..n).rev() {
            let j = rng.random_range(0..=i);
            if is_before[i] != is_before[j] {
                let (into, out) = if is_before[i] { (types[j], types[i]) } else { (types[i], types[j]) };
                b_count[into] += 1;
                b_count[out] -= 1;
                is_before.swap(i, j);
            }
        }
        seq.push(g_with_margins.g(&b_count));
    }
    MixTest {
        test: TestKind::MonteCarloG,
        statistic: obs.statistic,
        dof: obs.dof,
        p: seq.p_value(),
        permutations: Some(seq.permutations_run()),
        tvd,
    }
}

/// G of every 2 × K table with fixed margins (column totals `total`, the
/// first row's total `n_before`), from each cell's term tabled once per
/// possible count (`g_term`, `table_test`'s own), with e from the margins.
/// The terms are summed in `table_test`'s order (the first row's kept
/// columns, then the second's), so each value is `table_test`'s G to the
/// last bit, without its logarithms, expected counts and p-value per
/// shuffle.
struct MarginG {
    /// Columns with a pitch, ascending (`table_test` drops the others).
    kept: Vec<usize>,
    /// Per kept column: the first row's term for each count 0..=total.
    first: Vec<Vec<f64>>,
    /// Per kept column: the second row's term for each count 0..=total.
    second: Vec<Vec<f64>>,
}

impl MarginG {
    fn new(total: &[u64], n_before: u64) -> MarginG {
        let n: u64 = total.iter().sum();
        let kept: Vec<usize> = (0..total.len()).filter(|&j| total[j] > 0).collect();
        let row = |row_total: u64| -> Vec<Vec<f64>> {
            kept.iter()
                .map(|&j| {
                    let e = row_total as f64 * total[j] as f64 / n as f64;
                    (0..=total[j]).map(|o| g_term(o as f64, e)).collect()
                })
                .collect()
        };
        MarginG { first: row(n_before), second: row(n - n_before), kept }
    }

    /// G of the table whose first row is `b_count` (the second row is the
    /// column totals minus it).
    fn g(&self, b_count: &[u64]) -> f64 {
        let mut g = 0.0;
        for (terms, &j) in self.first.iter().zip(&self.kept) {
            g += terms[b_count[j] as usize];
        }
        for (terms, &j) in self.second.iter().zip(&self.kept) {
            g += terms[terms.len() - 1 - b_count[j] as usize];
        }
        g
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
        let t = mix_test(&[50, 30, 20], &[40, 35, 25], &mut rng, 10);
        assert_eq!(t.test, TestKind::GTest);
        assert_eq!(t.dof, 2);
        assert!((t.tvd - 0.10).abs() < 1e-12, "{}", t.tvd); // ½(0.10 + 0.05 + 0.05)
    }

    #[test]
    fn sparse_tables_use_monte_carlo_and_find_a_clear_shift() {
        let mut rng = ChaCha8Rng::seed_from_u64(1);
        // Expected counts below 5 in most cells: Cochran's rule says no.
        let t = mix_test(&[9, 0, 1], &[1, 8, 1], &mut rng, 10);
        assert_eq!(t.test, TestKind::MonteCarloG);
        assert!(t.p < 0.01, "{}", t.p);
        assert!(t.p >= 1.0 / (MONTE_CARLO_PERMUTATIONS as f64 + 1.0));
        // Every shuffle has G >= 0 = observed: the test stops after the
        // first 10, p = 10/10.
        let same = mix_test(&[3, 2, 1], &[3, 2, 1], &mut rng, 10);
        assert_eq!((same.p, same.permutations), (1.0, Some(10)));
    }

    /// With no early stop, the test is the plain Monte Carlo test of the
    /// module doc: every shuffle of the whole cell recounted and its G
    /// taken by `table_test`, p = (b + 1)/(m + 1) (Phipson & Smyth 2010).
    /// The swap-by-swap counts and the tabled G give the same p from the
    /// same stream.
    #[test]
    fn without_early_stop_it_is_the_plain_monte_carlo_test() {
        use crate::significance::permutation_p::{permutation_p_value, reaches};
        for (before, after) in [(vec![9u64, 0, 1, 4], vec![1u64, 8, 1, 0]), (vec![20, 3, 1], vec![14, 9, 0])] {
            let m = MONTE_CARLO_PERMUTATIONS;
            let t = mix_test(&before, &after, &mut ChaCha8Rng::seed_from_u64(7), m + 1);
            assert_eq!(t.test, TestKind::MonteCarloG);
            let mut rng = ChaCha8Rng::seed_from_u64(7);
            let mut types: Vec<usize> = Vec::new();
            for (ty, (&b, &a)) in before.iter().zip(&after).enumerate() {
                types.extend(std::iter::repeat_n(ty, (b + a) as usize));
            }
            let nb: u64 = before.iter().sum();
            let mut is_before: Vec<bool> = (0..types.len()).map(|i| (i as u64) < nb).collect();
            let total: Vec<u64> = before.iter().zip(&after).map(|(b, a)| b + a).collect();
            let obs = g_of(&before, &after).statistic;
            let mut exceed = 0;
            for _ in 0..m {
                for i in (1..types.len()).rev() {
                    let j = rng.random_range(0..=i);
                    is_before.swap(i, j);
                }
                let mut b = vec![0u64; total.len()];
                for (ty, &ib) in types.iter().zip(&is_before) {
                    b[*ty] += ib as u64;
                }
                let a: Vec<u64> = total.iter().zip(&b).map(|(t, x)| t - x).collect();
                exceed += reaches(g_of(&b, &a).statistic, obs) as usize;
            }
            assert_eq!((t.p, t.permutations), (permutation_p_value(exceed, m), Some(m)), "{before:?} {after:?}");
        }
    }

    /// The tabled G equals `table_test`'s to the last bit on every table
    /// with the margins of a few observed ones (columns with no pitch
    /// included), so the Monte Carlo test reads the same statistic.
    #[test]
    fn tabled_g_is_the_table_tests() {
        for (before, after) in [(vec![9u64, 0, 1], vec![1u64, 8, 1]), (vec![3, 0, 2, 7], vec![0, 0, 5, 1]), (vec![1, 1], vec![0, 4])] {
            let total: Vec<u64> = before.iter().zip(&after).map(|(b, a)| b + a).collect();
            let n_before: u64 = before.iter().sum();
            let m = MarginG::new(&total, n_before);
            // Every first row with these margins.
            let mut b = vec![0u64; total.len()];
            let mut seen = 0;
            loop {
                if b.iter().sum::<u64>() == n_before {
                    let a: Vec<u64> = total.iter().zip(&b).map(|(t, x)| t - x).collect();
                    assert_eq!(m.g(&b).to_bits(), g_of(&b, &a).statistic.to_bits(), "{b:?} {a:?}");
                    seen += 1;
                }
                let Some(j) = (0..b.len()).find(|&j| b[j] < total[j]) else { break };
                b[j] += 1;
                for x in &mut b[..j] {
                    *x = 0;
                }
            }
            assert!(seen > 1);
        }
    }

    #[test]
    fn new_and_dropped() {
        assert_eq!(new_or_dropped(0.0, 0.25, 0.05, 0.01), Some(true));
        assert_eq!(new_or_dropped(0.12, 0.005, 0.05, 0.01), Some(false));
        assert_eq!(new_or_dropped(0.02, 0.25, 0.05, 0.01), None);
        assert_eq!(new_or_dropped(0.0, 0.04, 0.05, 0.01), None);
    }
}
