//! The statistics of `compare` on cases worked by hand: the total
//! variation distance, the two-sample game bootstrap of a change in bits
//! gained, and the Monte Carlo mix test against the exact conditional test
//! enumerated here. (The G-test and chi-square statistics and p-values
//! themselves are checked against scipy.stats.chi2_contingency in
//! tests/stats_reference.rs.)

use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use tellscope::compare::mix::{mix_test, TestKind, MONTE_CARLO_PERMUTATIONS};
use tellscope::compare::predictability::{figures_of, resample_period, GameScore};
use tellscope::significance::contingency::{table_test, TableStatistic};
use tellscope::significance::resample::total_variation;

#[test]
fn total_variation_by_hand() {
    // ½ Σ |p − q| (Levin, Peres & Wilmer, "Markov Chains and Mixing Times",
    // Prop. 4.2). Shares 0.59, 0.24, 0.17 against 0.49, 0.31, 0.20:
    // ½ (0.10 + 0.07 + 0.03) = 0.10 — ten of every 100 pitches change type.
    let d = total_variation(&[59.0, 24.0, 17.0], &[49.0, 31.0, 20.0]).unwrap();
    assert!((d - 0.10).abs() < 1e-12, "{d}");
    // The mix test reports the same distance from counts of unequal totals:
    // 118/200 = 0.59 ... against 49/100 ...
    let t = mix_test(&[118, 48, 34], &[49, 31, 20], &mut ChaCha8Rng::seed_from_u64(1), 10);
    assert!((t.tvd - 0.10).abs() < 1e-12, "{}", t.tvd);
    // A new pitch at 25%, the rest scaled down: exactly the new share.
    let d = total_variation(&[55.0, 25.0, 20.0, 0.0], &[41.25, 18.75, 15.0, 25.0]).unwrap();
    assert!((d - 0.25).abs() < 1e-12, "{d}");
}

fn game(n: f64, bits: f64, model_right: f64, prior_right: f64) -> GameScore {
    GameScore { n, bits, model_right, prior_right }
}

#[test]
fn period_bootstrap_by_hand() {
    // A period's figure is resampled with the models held fixed (its
    // scoring noise). Before: three games of 0.1 bits per pitch, so every
    // resample of them gives 0.1. After: a game of 10 pitches with 2 bits (0.2 per pitch) and
    // one of 30 with 12 (0.4 per pitch). Drawing two games with replacement:
    // both the first (1/4) → 2/20 = 0.2; both the second (1/4) → 24/60 =
    // 0.4; one of each (1/2) → 14/40 = 0.35 (bits pooled over pitches, not
    // averaged over games). So after − before is 0.1, 0.25 or 0.3 with
    // probabilities 1/4, 1/2, 1/4, and its 2.5% and 97.5% percentiles are
    // 0.1 and 0.3 (each end holds a quarter of the resamples); the estimate
    // on the games as observed is 14/40 − 0.1 = 0.25.
    let before = [game(10.0, 1.0, 5.0, 5.0), game(20.0, 2.0, 10.0, 10.0), game(5.0, 0.5, 2.0, 2.0)];
    let after = [game(10.0, 2.0, 6.0, 5.0), game(30.0, 12.0, 18.0, 15.0)];
    let b = resample_period(&before, 2000, 7).unwrap();
    let a = resample_period(&after, 2000, 8).unwrap();
    assert!((b.bits.estimate - 0.1).abs() < 1e-12);
    assert!((b.bits.interval.low - 0.1).abs() < 1e-12 && (b.bits.interval.high - 0.1).abs() < 1e-12);
    assert!((a.bits.estimate - 0.35).abs() < 1e-12);
    assert!((a.bits.interval.low - 0.2).abs() < 1e-12 && (a.bits.interval.high - 0.4).abs() < 1e-12, "{:?}", a.bits.interval);
    // The middle value turns up about half the time.
    let mid = a.draws.iter().filter(|x| (x.0 - 0.35).abs() < 1e-12).count() as f64 / a.draws.len() as f64;
    assert!((mid - 0.5).abs() < 0.05, "{mid}");
    // Lift, (model right − prior right) / prior right, pooled the same way:
    // after 1/5 (first game twice), 3/15 = 1/5 (second twice) or 4/20 = 1/5
    // (one of each) — always 0.2.
    assert!(a.draws.iter().all(|x| (x.1 - 0.2).abs() < 1e-12));
    assert_eq!(figures_of(&after.iter().collect::<Vec<_>>()), (14.0 / 40.0, 0.2));
    // Same seed, same interval; another seed, the same here (by hand).
    assert_eq!(resample_period(&after, 2000, 8).unwrap().draws, a.draws);
}

fn ln_choose(n: u64, k: u64) -> f64 {
    (1..=k).map(|i| ((n - k + i) as f64).ln() - (i as f64).ln()).sum()
}

/// The exact conditional p-value of the G statistic for a 2 × K table with
/// both margins fixed: every "before" row with the observed row total and
/// column totals, weighted by its multivariate hypergeometric probability
/// Π C(c_j, x_j) / C(N, n) (the Freeman–Halton test, with G as the ordering
/// statistic; Freeman & Halton 1951, Biometrika 38, 141–149 (from memory)).
fn exact_p(before: &[u64], after: &[u64]) -> f64 {
    let cols: Vec<u64> = before.iter().zip(after).map(|(b, a)| b + a).collect();
    let n: u64 = before.iter().sum();
    let total: u64 = cols.iter().sum();
    let g = |b: &[u64]| {
        let a: Vec<u64> = cols.iter().zip(b).map(|(c, x)| c - x).collect();
        table_test(&[b.to_vec(), a], TableStatistic::LogLikelihoodRatio, false).unwrap().statistic
    };
    let observed = g(before);
    let mut p = 0.0;
    let mut x = vec![0u64; cols.len()];
    // Odometer over 0..=c_j for each column.
    loop {
        if x.iter().sum::<u64>() == n {
            let lp: f64 = x.iter().zip(&cols).map(|(&k, &c)| ln_choose(c, k)).sum::<f64>() - ln_choose(total, n);
            if g(&x) >= observed - 1e-9 {
                p += lp.exp();
            }
        }
        let mut j = 0;
        loop {
            if j == x.len() {
                return p;
            }
            if x[j] < cols[j] {
                x[j] += 1;
                break;
            }
            x[j] = 0;
            j += 1;
        }
    }
}

#[test]
fn monte_carlo_mix_test_matches_the_exact_conditional_test() {
    for (before, after) in [(vec![5u64, 1, 0], vec![1u64, 3, 3]), (vec![4, 2, 2, 0], vec![1, 1, 3, 4]), (vec![3, 3, 1], vec![2, 4, 2])] {
        // Without an early stop (more exceedances asked for than shuffles).
        let t = mix_test(&before, &after, &mut ChaCha8Rng::seed_from_u64(3), MONTE_CARLO_PERMUTATIONS + 1);
        assert_eq!(t.test, TestKind::MonteCarloG, "{before:?} {after:?} should be too sparse for the chi-square");
        assert_eq!(t.permutations, Some(MONTE_CARLO_PERMUTATIONS));
        let exact = exact_p(&before, &after);
        // Monte Carlo error of (b + 1)/(m + 1): four binomial standard errors.
        let m = MONTE_CARLO_PERMUTATIONS as f64;
        let tol = 4.0 * (exact * (1.0 - exact) / m).sqrt() + 2.0 / m;
        assert!((t.p - exact).abs() <= tol, "{before:?} {after:?}: Monte Carlo {} vs exact {exact}", t.p);
    }
}

/// With the early stop the tool runs (h = 10 exceedances), p = h / l, where
/// l, the shuffles run, is h plus the failures before the h-th success of
/// Bernoulli(exact p) draws: a negative binomial (statrs
/// `NegativeBinomial`, failures before r successes). l must lie between
/// its 0.05% and 99.95% points, so each table misses the band less than
/// 0.1% of the time; the tables' exact p (enumerated above) are large
/// enough that running out of shuffles first is negligible.
#[test]
fn monte_carlo_mix_test_with_early_stop_stays_in_its_band() {
    use statrs::distribution::{DiscreteCDF, NegativeBinomial};
    let h = 10usize;
    for (before, after) in [(vec![5u64, 1, 0], vec![1u64, 3, 3]), (vec![4, 2, 2, 0], vec![1, 1, 3, 4]), (vec![3, 3, 1], vec![2, 4, 2])] {
        let exact = exact_p(&before, &after);
        assert!(exact >= 0.01, "{before:?} {after:?}: exact p {exact} too small for this band");
        let t = mix_test(&before, &after, &mut ChaCha8Rng::seed_from_u64(5), h);
        let l = t.permutations.expect("a Monte Carlo test");
        let failures = NegativeBinomial::new(h as f64, exact).unwrap();
        let (lo, hi) = (h as u64 + failures.inverse_cdf(0.0005), h as u64 + failures.inverse_cdf(0.9995));
        assert!((lo..=hi).contains(&(l as u64)), "{before:?} {after:?}: {l} shuffles, band {lo}..={hi} (exact p {exact})");
        assert_eq!(t.p, h as f64 / l as f64);
    }
}

#[test]
fn the_asymptotic_test_is_the_scipy_checked_g_test() {
    // Large counts: the p-value is table_test's G-test (no continuity
    // correction), the one checked against scipy.stats.chi2_contingency(
    // ..., correction=False, lambda_="log-likelihood") in stats_reference.rs.
    let (b, a) = ([300u64, 200, 100], [250u64, 250, 150]);
    let t = mix_test(&b, &a, &mut ChaCha8Rng::seed_from_u64(1), 10);
    let r = table_test(&[b, a], TableStatistic::LogLikelihoodRatio, false).unwrap();
    assert_eq!(t.test, TestKind::GTest);
    assert_eq!((t.statistic, t.p, t.dof), (r.statistic, r.p_value, 2));
}

#[test]
fn forward_chaining_within_a_period_by_hand() {
    use tellscope::evaluate::split::Plan;
    use tellscope::ingest::PitchLog;
    // Twelve pitches: games 0..6 on days 0..6, two pitches each, across two
    // seasons (the plan ignores seasons). Listed: games 1..6 only (game 0
    // is another period), so six games dealt into three blocks of two by
    // date: {1, 2}, {3, 4}, {5, 6}.
    let game: Vec<u32> = (0..12).map(|i| i / 2).collect();
    let log = PitchLog {
        date: game.iter().map(|&g| 100 + g as i32).collect(),
        season: game.iter().map(|&g| if g < 4 { 2025 } else { 2026 }).collect(),
        game: game.clone(),
        ..PitchLog::default()
    };
    let rows: Vec<u32> = (2..12).collect();
    let plan = Plan::forward_chaining(&log, &rows, 3, "test period").unwrap();
    assert_eq!(plan.n_folds, 2);
    for (r, &g) in game.iter().enumerate() {
        // Block of the game (None outside the period).
        let b = match g {
            1 | 2 => Some(0),
            3 | 4 => Some(1),
            5 | 6 => Some(2),
            _ => None,
        };
        // Fold f trains on blocks 0..=f and scores block f + 1.
        assert_eq!(plan.test_fold[r], b.and_then(|b: u8| b.checked_sub(1)), "row {r}");
        assert_eq!(plan.trains(r, 0), b == Some(0), "row {r}");
        assert_eq!(plan.trains(r, 1), matches!(b, Some(0) | Some(1)), "row {r}");
        assert_eq!(plan.held_out[r], b == Some(2));
    }
    // Fewer games than blocks is an error, not a plan.
    assert!(Plan::forward_chaining(&log, &rows[..4], 3, "short").is_err());
}

/// compare's game-by-game mix test against scipy's exact permutation test
/// (tests/fixtures/stats/game_permutation.json, made by
/// make_game_permutation_fixture.py with scipy.stats.permutation_test,
/// every deal of the games enumerated): the same G, and without an early
/// stop a Monte Carlo p within four binomial standard errors (+ 2/m) of
/// the exact one.
#[test]
fn game_mix_test_matches_scipys_exact_permutation_test() {
    use tellscope::compare::mix::mix_test_by_games;
    let text = std::fs::read_to_string(std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/stats/game_permutation.json")).unwrap();
    let json: serde_json::Value = serde_json::from_str(&text).unwrap();
    let games = |v: &serde_json::Value| -> Vec<Vec<u64>> {
        v.as_array().unwrap().iter().map(|g| g.as_array().unwrap().iter().map(|x| x.as_u64().unwrap()).collect()).collect()
    };
    let cases = json["cases"].as_array().unwrap();
    assert_eq!(cases.len(), 3);
    for c in cases {
        let (before, after) = (games(&c["before"]), games(&c["after"]));
        let (g, exact) = (c["g"].as_f64().unwrap(), c["p_exact"].as_f64().unwrap());
        let t = mix_test_by_games(&before, &after, &mut ChaCha8Rng::seed_from_u64(11), MONTE_CARLO_PERMUTATIONS + 1);
        assert_eq!(t.test, TestKind::GamePermutationG);
        assert!((t.statistic - g).abs() <= 1e-9 * g.max(1.0), "G {} vs scipy {g}", t.statistic);
        assert_eq!(t.permutations, Some(MONTE_CARLO_PERMUTATIONS));
        let m = MONTE_CARLO_PERMUTATIONS as f64;
        let tol = 4.0 * (exact * (1.0 - exact) / m).sqrt() + 2.0 / m;
        assert!((t.p - exact).abs() <= tol, "{before:?} {after:?}: Monte Carlo {} vs exact {exact}", t.p);
    }
}
