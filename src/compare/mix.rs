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
//!   night, so a real log varies more than that (overdispersion) and
//!   these p-values are then too small. `compare` therefore uses
//!   [`mix_test_by_games`], which shuffles whole games between the periods;
//!   these two remain as its one-pitch-per-game case and its references.
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
    /// Whole games shuffled between the periods, G as the statistic
    /// ([`mix_test_by_games`]).
    GamePermutationG,
}

impl TestKind {
    pub fn as_str(self) -> &'static str {
        match self {
            TestKind::GTest => "g_test",
            TestKind::MonteCarloG => "monte_carlo_g",
            TestKind::LabelSwapPermutation => "label_swap_permutation",
            TestKind::GamePermutationG => "game_permutation_g",
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

/// G of the 2 × K table with rows `b` and `a`, summed as `table_test`
/// sums it (the first row's columns with a pitch, then the second's), so
/// it is `table_test`'s G to the last bit without its allocations.
fn g_two_rows(b: &[u64], a: &[u64]) -> f64 {
    let nb: u64 = b.iter().sum();
    let na: u64 = a.iter().sum();
    let n = (nb + na) as f64;
    let mut g = 0.0;
    for (row, total) in [(b, nb), (a, na)] {
        for (j, &o) in row.iter().enumerate() {
            let col = b[j] + a[j];
            if col > 0 {
                g += g_term(o as f64, total as f64 * col as f64 / n);
            }
        }
    }
    g
}

/// Test equal mixes in the two periods with each period's pitches in
/// games: `before[g]` and `after[g]` are one game's counts per pitch type
/// (same order). Pitches of one game share its opponent and the
/// pitcher's feel that night, so his mix wobbles from outing to outing and
/// a test that treats pitches as independent finds "changes" that are only
/// that wobble (on simulated staffs with no change and outing wobble, 28
/// of 48 overall mix tests had p ≤ 0.05; this test, 1). Here whole games are
/// shuffled between the periods: under "the same mix in both periods"
/// his outings are exchangeable, wobble and all. The statistic is the
/// pooled table's G; a permutation deals the games with pitches in the cell
/// to the periods at random, as many to each as it had (given which games
/// have any, the deal is uniform under the null, so the test is exact up to
/// Monte Carlo error), and the shuffles stop once `stop_after` of them
/// reach the observed G (Besag & Clifford 1991) or after
/// [`MONTE_CARLO_PERMUTATIONS`]. With one pitch per game it is the
/// pitch-level test ([`mix_test`]'s Monte Carlo version).
pub fn mix_test_by_games(before: &[Vec<u64>], after: &[Vec<u64>], rng: &mut ChaCha8Rng, stop_after: usize) -> MixTest {
    let k = before.iter().chain(after).map(|g| g.len()).max().unwrap_or(0);
    assert!(before.iter().chain(after).all(|g| g.len() == k), "one count per pitch type in every game");
    let sum = |games: &[&Vec<u64>]| {
        let mut t = vec![0u64; k];
        for g in games {
            t.iter_mut().zip(g.iter()).for_each(|(t, &x)| *t += x);
        }
        t
    };
    fn with_pitches(games: &[Vec<u64>]) -> Vec<&Vec<u64>> {
        games.iter().filter(|g| g.iter().any(|&x| x > 0)).collect()
    }
    let (gb, ga) = (with_pitches(before), with_pitches(after));
    let (b, a) = (sum(&gb), sum(&ga));
    let as_f = |v: &[u64]| v.iter().map(|&x| x as f64).collect::<Vec<_>>();
    let tvd = total_variation(&as_f(&b), &as_f(&a)).unwrap_or(0.0);
    let observed = g_two_rows(&b, &a);
    // `table_test`'s degrees of freedom: its rows and columns with a pitch.
    let rows = (!gb.is_empty()) as usize + (!ga.is_empty()) as usize;
    let columns = b.iter().zip(&a).filter(|(x, y)| *x + *y > 0).count();
    let dof = rows.saturating_sub(1) * columns.saturating_sub(1);
    if dof == 0 {
        return MixTest { test: TestKind::GamePermutationG, statistic: observed, dof, p: 1.0, permutations: Some(0), tvd };
    }
    let mut games: Vec<&Vec<u64>> = gb.iter().chain(&ga).copied().collect();
    let total: Vec<u64> = b.iter().zip(&a).map(|(x, y)| x + y).collect();
    let n_before = gb.len();
    let (mut pb, mut pa) = (vec![0u64; k], vec![0u64; k]);
    let mut seq = SequentialPermutation::new(observed, MONTE_CARLO_PERMUTATIONS, stop_after);
    while !seq.is_done() {
        // A uniform deal of n_before games to "before": the first n_before
        // places of a partial Fisher–Yates shuffle.
        pb.iter_mut().for_each(|x| *x = 0);
        for i in 0..n_before {
            let j = rng.random_range(i..games.len());
            games.swap(i, j);
            pb.iter_mut().zip(games[i].iter()).for_each(|(t, &x)| *t += x);
        }
        pa.iter_mut().zip(&total).zip(&pb).for_each(|((a, &t), &b)| *a = t - b);
        seq.push(g_two_rows(&pb, &pa));
    }
    MixTest { test: TestKind::GamePermutationG, statistic: observed, dof, p: seq.p_value(), permutations: Some(seq.permutations_run()), tvd }
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

    /// The game test's G is `table_test`'s (itself checked against scipy's
    /// `chi2_contingency`, lambda_="log-likelihood", in
    /// tests/stats_reference.rs) to the last bit, and so are its degrees of
    /// freedom.
    #[test]
    fn the_game_tests_g_is_the_table_tests() {
        for (b, a) in [(vec![50u64, 30, 20], vec![40u64, 35, 25]), (vec![9, 0, 1], vec![1, 8, 1]), (vec![7, 0, 0, 3], vec![2, 0, 5, 1])] {
            assert_eq!(g_two_rows(&b, &a), g_of(&b, &a).statistic, "{b:?} {a:?}");
            // One pitch per game: the game test's table is this one.
            let games = |row: &[u64]| -> Vec<Vec<u64>> {
                row.iter().enumerate().flat_map(|(t, &n)| (0..n).map(move |_| (0..row.len()).map(|j| (j == t) as u64).collect())).collect()
            };
            let t = mix_test_by_games(&games(&b), &games(&a), &mut ChaCha8Rng::seed_from_u64(1), 10);
            assert_eq!((t.statistic, t.dof), (g_of(&b, &a).statistic, g_of(&b, &a).dof), "{b:?} {a:?}");
        }
    }

    /// One pitch per game: the deal of games is a deal of pitches, so a
    /// sharp shift is found; the same games on both sides find nothing.
    #[test]
    fn the_game_test_finds_a_shift_and_stops_on_none() {
        let one = |t: usize| { let mut v = vec![0u64; 2]; v[t] = 1; v };
        let before: Vec<Vec<u64>> = (0..40).map(|i| one((i % 10 == 0) as usize)).collect();
        let after: Vec<Vec<u64>> = (0..40).map(|i| one((i % 10 != 0) as usize)).collect();
        let t = mix_test_by_games(&before, &after, &mut ChaCha8Rng::seed_from_u64(2), 10);
        assert_eq!(t.test, TestKind::GamePermutationG);
        assert!(t.p < 0.001, "{}", t.p);
        let same = mix_test_by_games(&before, &before, &mut ChaCha8Rng::seed_from_u64(2), 10);
        assert_eq!((same.p, same.permutations), (1.0, Some(10)));
    }

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
