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
use tellscope::ingest::write::{sim_frame, write_frame};
use tellscope::settings::{ConfigFile, Overrides, Settings};
use tellscope::simulate::{simulate, Scenario};

const SEEDS: u64 = 40;

#[test]
fn null_staffs_give_uniform_model_p_values_and_no_tells() {
    let text = std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/tests/fixtures/scenarios/null_staff.toml")).unwrap();
    let scenario = Scenario::from_toml_str(&text).unwrap();
    let dir = std::env::temp_dir().join(format!("tellscope-calibration-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let settings =
        Settings::resolve(&ConfigFile::default(), &Overrides { permutations: Some(999), ..Overrides::default() }).unwrap();
    let mut p_values = Vec::new();
    let mut runs_with_a_tell = 0;
    for seed in 1..=SEEDS {
        let log = simulate(&scenario, 1000 + seed);
        let path = dir.join(format!("null-{seed}.csv"));
        write_frame(&mut sim_frame(&log).unwrap(), &path).unwrap();
        let s = Settings { seed: 5000 + seed, ..settings.clone() };
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
