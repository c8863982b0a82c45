//! The committed demo logs are exactly what the simulator makes from their
//! scenarios and seed, and hold what their answer keys say: the realistic
//! demo club (demo-data/README.md) and the plain staff of the first release
//! (tests/fixtures/plain-staff/README.md), kept as the audit's regression
//! fixture.

use std::path::Path;
use tellscope::simulate::write::{sim_frame, write_frame};
use tellscope::settings::{ConfigFile, Overrides, Settings};
use tellscope::simulate::{simulate, Scenario};

const DEMO_SEED: u64 = 2026; // stated in demo-data/README.md and src/cli/demo.rs

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

fn reproduces(folder: &str) {
    let text = std::fs::read_to_string(root().join(folder).join("scenario.toml")).unwrap();
    let sim = simulate(&Scenario::from_toml_str(&text).unwrap(), DEMO_SEED);
    let dir = std::env::temp_dir().join(format!("tellscope-demo-bytes-{}-{}", folder.replace('/', "-"), std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    for name in ["demo-log.csv", "demo-log.parquet"] {
        let fresh = dir.join(name);
        write_frame(&mut sim_frame(&sim).unwrap(), &fresh).unwrap();
        let committed = std::fs::read(root().join(folder).join(name)).unwrap();
        assert!(std::fs::read(&fresh).unwrap() == committed, "{folder}/{name} differs from the simulator's output");
    }
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn simulate_reproduces_the_committed_demo_log_byte_for_byte() {
    reproduces("demo-data");
}

#[test]
fn simulate_reproduces_the_committed_plain_staff_log_byte_for_byte() {
    reproduces("tests/fixtures/plain-staff");
}

/// demo-data/README.md: 20 pitchers over two seasons of 162 games; who
/// pitched when; Wes Halloran's trace cutter of 2025 becoming a fifth of his
/// pitches in 2026; Ulric Penhallow's slider written two ways in 2026.
#[test]
fn the_realistic_demo_log_holds_what_its_answer_key_says() {
    let s = Settings::resolve(&ConfigFile::default(), &Overrides::default()).unwrap();
    let csv = tellscope::ingest::load(&root().join("demo-data/demo-log.csv"), &s.input).unwrap();
    let pq = tellscope::ingest::load(&root().join("demo-data/demo-log.parquet"), &s.input).unwrap();
    let log = &csv.log;
    assert_eq!(csv.rejected.len(), 0);
    assert_eq!(log.len(), pq.log.len());
    assert_eq!(log.pitch_type, pq.log.pitch_type);
    assert_eq!(log.seasons(), vec![2025, 2026]);
    assert_eq!(log.pitchers.len(), 20);
    let mut games: Vec<u32> = log.game.clone();
    games.sort_unstable();
    games.dedup();
    assert_eq!(games.len(), 324, "162 games in each of two seasons");
    let rows_of = |name: &str, season: i32| -> Vec<usize> {
        let p = log.pitchers.iter().position(|p| p == name).unwrap_or_else(|| panic!("{name}")) as u32;
        (0..log.len()).filter(|&i| log.pitcher[i] == p && log.season[i] == season).collect()
    };
    let share = |rows: &[usize], label: &str| {
        let t = log.pitch_types.iter().position(|t| t == label).unwrap() as u16;
        rows.iter().filter(|&&i| log.pitch_type[i] == t).count() as f64 / rows.len() as f64
    };
    // One season only: Ardmore, Greaves, Farrant (2025); Castellane, Rennick, Talbot (2026).
    for name in ["Pell Ardmore", "Linus Greaves", "Hob Farrant"] {
        assert!(!rows_of(name, 2025).is_empty() && rows_of(name, 2026).is_empty(), "{name}");
    }
    for name in ["Ned Castellane", "Kit Rennick", "Emory Talbot"] {
        assert!(rows_of(name, 2025).is_empty() && !rows_of(name, 2026).is_empty(), "{name}");
    }
    // Halloran: a trace cutter (scenario share 0.5%) then 22%; binomial
    // 3-sigma bands around the planted shares.
    let (h25, h26) = (rows_of("Wes Halloran", 2025), rows_of("Wes Halloran", 2026));
    assert!(share(&h25, "cutter") < 0.01, "2025 cutter share {}", share(&h25, "cutter"));
    assert!((share(&h26, "cutter") - 0.22).abs() < 3.0 * (0.22f64 * 0.78 / h26.len() as f64).sqrt(), "2026 cutter share {}", share(&h26, "cutter"));
    // Penhallow: no sweeper in 2025; in 2026 his slider is half "sweeper".
    let (p25, p26) = (rows_of("Ulric Penhallow", 2025), rows_of("Ulric Penhallow", 2026));
    assert_eq!(share(&p25, "sweeper"), 0.0);
    let (sl, sw) = (share(&p26, "slider"), share(&p26, "sweeper"));
    assert!(sl > 0.05 && sw > 0.05, "slider {sl} sweeper {sw}");
    // Acquired 2025-07-28 / traded away 2025-07-27: the dates bound their games.
    let date_of = |i: usize| log.date[i];
    let deadline = tellscope::simulate::Date::parse("2025-07-28").unwrap().to_days() as i32;
    assert!(rows_of("Callum Ashgrove", 2025).iter().all(|&i| date_of(i) >= deadline));
    assert!(rows_of("Pell Ardmore", 2025).iter().all(|&i| date_of(i) < deadline));
}

#[test]
fn the_plain_staff_log_holds_what_its_answer_key_says() {
    let s = Settings::resolve(&ConfigFile::default(), &Overrides::default()).unwrap();
    let csv = tellscope::ingest::load(&root().join("tests/fixtures/plain-staff/demo-log.csv"), &s.input).unwrap();
    let pq = tellscope::ingest::load(&root().join("tests/fixtures/plain-staff/demo-log.parquet"), &s.input).unwrap();
    let log = &csv.log;
    assert_eq!(csv.rejected.len(), 0);
    assert_eq!(log.len(), pq.log.len());
    assert_eq!(log.pitch_type, pq.log.pitch_type);
    assert_eq!(log.seasons(), vec![2025, 2026]);
    assert_eq!(log.pitchers.len(), 12);
    let mut games: Vec<u32> = log.game.clone();
    games.sort_unstable();
    games.dedup();
    assert_eq!(games.len(), 260, "130 games in each of two seasons");
    // Wes Halloran adds a cutter in 2026 and never threw one in 2025.
    let wes = log.pitchers.iter().position(|p| p == "Wes Halloran").unwrap() as u32;
    let cutter = log.pitch_types.iter().position(|t| t == "cutter").unwrap() as u16;
    let by_season = |season: i32| {
        let rows: Vec<usize> = (0..log.len()).filter(|&i| log.pitcher[i] == wes && log.season[i] == season).collect();
        rows.iter().filter(|&&i| log.pitch_type[i] == cutter).count() as f64 / rows.len() as f64
    };
    assert_eq!(by_season(2025), 0.0);
    assert!((by_season(2026) - 0.25).abs() < 0.04, "cutter share {}", by_season(2026));
}
