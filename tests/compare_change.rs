//! Season-to-season change in predictability, over simulated repeats of
//! one club (tests/fixtures/scenarios/habit_change_staff.toml): four
//! pitchers drop a strong habit after the first season, four keep the same
//! strong habit in both, eight have nothing planted. The pass rules are 99%
//! binomial bands (tests/common), so a correct procedure fails them less
//! than 1% of the time.

mod common;

use common::{assert_uniform, band};
use std::path::{Path, PathBuf};
use tellscope::compare::{self, period::PeriodSpec, Request};
use tellscope::simulate::write::{sim_frame, write_frame};
use tellscope::settings::{ConfigFile, Overrides, Settings};
use tellscope::simulate::{simulate, Scenario};

const REPEATS: u64 = 9;

fn log_of(seed: u64) -> PathBuf {
    let text = std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/scenarios/habit_change_staff.toml")).unwrap();
    let dir = std::env::temp_dir().join(format!("tellscope-change-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join(format!("change-{seed}.csv"));
    let sim = simulate(&Scenario::from_toml_str(&text).unwrap(), seed);
    write_frame(&mut sim_frame(&sim).unwrap(), &path).unwrap();
    path
}

/// (pitcher, p, q, interval excludes 0) of every compared pitcher, over
/// the repeats.
fn repeats() -> Vec<(String, f64, f64, bool)> {
    let mut out = Vec::new();
    for seed in 1..=REPEATS {
        let path = log_of(500 + seed);
        let settings = Settings::resolve(&ConfigFile::default(), &Overrides { seed: Some(600 + seed), compare_permutations: Some(199), ..Overrides::default() }).unwrap();
        let request = Request {
            before: PeriodSpec::parse("--before", "2025").unwrap(),
            after: PeriodSpec::parse("--after", "2026").unwrap(),
        };
        let c = compare::run(&path, &settings, &request, false).unwrap();
        for p in &c.summary.pitchers {
            let pr = p.predictability.as_ref().unwrap_or_else(|| panic!("{} was not compared: {:?}", p.pitcher, p.cautions));
            let iv = pr.bits_difference_interval;
            out.push((p.pitcher.clone(), pr.p, pr.q, iv.low > 0.0 || iv.high < 0.0));
        }
        std::fs::remove_file(&path).ok();
    }
    out
}

/// Power: a pitcher who drops a strong habit is flagged (q ≤ 0.05 in the
/// predictability family) in at least 80% of repeats — the count must not
/// fall below the 99% band of Binomial(n, 0.8). Null pitchers (the same
/// habit in both seasons, or none): uniform p-values, and their intervals
/// of the change exclude 0 about 5% of the time (99% band of Binomial(n,
/// 0.05)).
#[test]
fn dropped_habits_are_found_and_steady_pitchers_are_quiet() {
    let all = repeats();
    let droppers: Vec<&(String, f64, f64, bool)> = all.iter().filter(|r| r.0.starts_with("Dropper")).collect();
    let nulls: Vec<&(String, f64, f64, bool)> = all.iter().filter(|r| !r.0.starts_with("Dropper")).collect();
    assert_eq!(droppers.len() as u64, 4 * REPEATS);
    let flagged = droppers.iter().filter(|r| r.2 <= 0.05).count() as u64;
    let n = droppers.len() as u64;
    let (lo, _) = band(n, 0.8);
    let iv = tellscope::significance::wilson::wilson_95(flagged, n);
    assert!(
        flagged >= lo,
        "power: {flagged} of {n} dropped habits flagged ({:.0}%, 95% interval {:.0}% to {:.0}%); at 80% power the 99% band starts at {lo}",
        100.0 * flagged as f64 / n as f64,
        100.0 * iv.low,
        100.0 * iv.high
    );
    let p: Vec<f64> = nulls.iter().map(|r| r.1).collect();
    assert_uniform("pitchers without a change", &p);
    let excluded = nulls.iter().filter(|r| r.3).count() as u64;
    let (lo, hi) = band(nulls.len() as u64, 0.05);
    assert!((lo..=hi).contains(&excluded), "{excluded} of {} null intervals exclude 0; 99% band {lo}..={hi}", nulls.len());
    let false_flags = nulls.iter().filter(|r| r.2 <= 0.05).count() as u64;
    let (_, hi) = band(nulls.len() as u64, 0.05);
    assert!(false_flags <= hi, "{false_flags} of {} pitchers without a change flagged", nulls.len());
}

/// Outing wobble is not a change of mix: a staff whose outings each draw
/// their own mix around his usual one, the same in both seasons
/// (tests/fixtures/scenarios/wobble_staff.toml), over 20 simulated
/// repeats. Each pitcher's overall mix test must give uniform p-values (the
/// counts at or below 0.05 and 0.5 in their 99% binomial bands), and runs
/// with any flagged mix, pitch or location change stay within the 99%
/// band of fdr = 0.05 (under the global null BH's false-discovery rate is
/// its chance of any rejection; Benjamini & Hochberg 1995). Tests that
/// count pitches as independent draws gave p ≤ 0.05 in 28 of 48 such
/// tests.
#[test]
fn outing_wobble_is_not_a_change_of_mix() {
    let text = std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/scenarios/wobble_staff.toml")).unwrap();
    let scenario = Scenario::from_toml_str(&text).unwrap();
    let dir = std::env::temp_dir().join(format!("tellscope-wobble-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let (mut p, mut runs, mut with_change) = (Vec::new(), 0u64, 0u64);
    for seed in 1..=20u64 {
        let path = dir.join(format!("wobble-{seed}.csv"));
        write_frame(&mut sim_frame(&simulate(&scenario, 700 + seed)).unwrap(), &path).unwrap();
        let settings = Settings::resolve(&ConfigFile::default(), &Overrides { seed: Some(800 + seed), compare_permutations: Some(19), ..Overrides::default() }).unwrap();
        let request = Request { before: PeriodSpec::parse("--before", "2025").unwrap(), after: PeriodSpec::parse("--after", "2026").unwrap() };
        let c = compare::run(&path, &settings, &request, false).unwrap();
        runs += 1;
        let mix_like = |k: &str| matches!(k, "mix_shift" | "new_pitch" | "dropped_pitch" | "location_shift");
        with_change += c.summary.pitchers.iter().any(|x| x.changes.iter().any(|ch| mix_like(&ch.kind) && ch.significant)) as u64;
        for x in &c.summary.pitchers {
            p.extend(x.changes.iter().filter(|ch| ch.kind == "mix_shift" && ch.situation.is_empty()).filter_map(|ch| ch.p));
        }
        std::fs::remove_file(&path).ok();
    }
    assert_uniform("overall mix under outing wobble", &p);
    let (_, hi) = band(runs, 0.05);
    assert!(with_change <= hi, "{with_change} of {runs} wobbling staffs had a flagged mix, pitch or location change (99% band at most {hi})");
}
