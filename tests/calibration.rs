//! Calibration of the significance layer on simulated null staffs: pitchers
//! whose every pitch is drawn independently of the situation
//! (tests/fixtures/scenarios/null_staff.toml). Under that null the model
//! permutation p-values should be uniform, so about 5% fall below 0.05, and
//! the run's tell FDR control should flag nothing in at least 95% of runs
//! (BH-type control at q = 0.05 bounds the chance of any false flag under
//! the global null by 0.05; Benjamini & Hochberg 1995, Theorem 1).

mod common;

use common::band;
use tellscope::audit;
use tellscope::simulate::write::{sim_frame, write_frame};
use tellscope::settings::{ConfigFile, Overrides, Settings};
use tellscope::simulate::{simulate, Scenario};

const SEEDS: u64 = 40;

#[test]
fn null_staffs_give_uniform_model_p_values_and_no_tells() {
    let text = std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/tests/fixtures/scenarios/null_staff.toml")).unwrap();
    let scenario = Scenario::from_toml_str(&text).unwrap();
    let dir = std::env::temp_dir().join(format!("tellscope-calibration-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let mut p_values = Vec::new();
    let mut runs_with_a_tell = 0;
    for seed in 1..=SEEDS {
        let log = simulate(&scenario, 1000 + seed);
        let path = dir.join(format!("null-{seed}.csv"));
        write_frame(&mut sim_frame(&log).unwrap(), &path).unwrap();
        let s = Settings::resolve(&ConfigFile::default(), &Overrides { permutations: Some(999), seed: Some(5000 + seed), ..Overrides::default() }).unwrap();
        let a = audit::run(&path, &s, false).unwrap();
        for p in a.summary.pitchers.iter().filter(|p| p.is_ok()) {
            p_values.push(p.p_value.unwrap());
        }
        if a.summary.tells_flagged > 0 {
            runs_with_a_tell += 1;
        }
    }
    std::fs::remove_dir_all(&dir).ok();
    let n = p_values.len() as u64;
    let below = p_values.iter().filter(|&&p| p < 0.05).count() as u64;
    // Central 99% band of Binomial(n, 0.05) (statrs' binomial CDF).
    let (lo, hi) = band(n, 0.05);
    assert!(n >= 200, "only {n} null pitchers were audited");
    assert!((lo..=hi).contains(&below), "{below} of {n} model p-values below 0.05; 99% band {lo}..={hi}");
    let clean = (SEEDS - runs_with_a_tell) as f64 / SEEDS as f64;
    assert!(clean >= 0.95, "{runs_with_a_tell} of {SEEDS} null staffs had a flagged tell");
}

/// The early decision of `SequentialPermutation` (stop at m1 permutations
/// when none reaches the observed statistic, p = 1/(m1 + 1); otherwise
/// P0(S ∪ {p_BC ≤ its own}), `permutation_p::early_decision_p`) keeps
/// P(p ≤ α) ≤ α under the null. The null is simulated exactly: the
/// observed statistic and every permutation's are independent uniforms
/// (exchangeable, no ties). For each α (several below h/m1, where the
/// adjustment acts), the count of p ≤ α over the repeats must not exceed
/// the top of Binomial(n, α)'s band, and the decided share must sit in the
/// band of 1/(m1 + 1); the bands' tails are split (Bonferroni) so that a
/// valid procedure fails the whole test less than 1% of the time.
#[test]
fn an_early_decision_keeps_permutation_p_values_valid() {
    use rand::{Rng, SeedableRng};
    use tellscope::significance::permutation_p::SequentialPermutation;
    let (m, h, m1) = (999, 10, SequentialPermutation::decision_size(18, 0.05));
    assert_eq!(m1, 360);
    let reps = 20_000u64;
    let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(20261202);
    let mut ps = Vec::with_capacity(reps as usize);
    let mut decided = 0u64;
    for _ in 0..reps {
        let observed: f64 = rng.random();
        let mut s = SequentialPermutation::new(observed, m, h).with_early_decision(m1);
        while !s.push(rng.random::<f64>()) {}
        decided += s.decided_early() as u64;
        ps.push(s.p_value());
    }
    // Half of the 1% to the decided share (two tails), half to the alphas.
    let quantile = |p: f64, q: f64| common::quantile(reps, p, q);
    let delta = 1.0 / (m1 as f64 + 1.0);
    let (lo, hi) = (quantile(delta, 0.0025), quantile(delta, 0.9975));
    assert!((lo..=hi).contains(&decided), "{decided} decided early of {reps}; band {lo}..={hi}");
    let alphas = [delta, 0.005, 0.01, 0.02, 0.05, 0.2, 0.5];
    for alpha in alphas {
        let below = ps.iter().filter(|&&p| p <= alpha + 1e-12).count() as u64;
        let hi = quantile(alpha, 1.0 - 0.005 / alphas.len() as f64);
        assert!(below <= hi, "P(p <= {alpha}) = {below}/{reps}, above the band top {hi}");
    }
    assert!(ps.iter().all(|&p| p >= 1.0 / (m1 as f64 + 1.0) - 1e-15));
}
