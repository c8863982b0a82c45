//! The committed demo log is exactly what the simulator makes from the
//! bundled scenario and seed, and holds what its answer key
//! (demo-data/README.md) says.

use std::path::Path;
use tellscope::ingest::write::{sim_frame, write_frame};
use tellscope::settings::{ConfigFile, Overrides, Settings};
use tellscope::simulate::{simulate, Scenario};

const DEMO_SEED: u64 = 2026; // stated in demo-data/README.md and src/cli/demo.rs

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

#[test]
fn simulate_reproduces_the_committed_demo_log_byte_for_byte() {
    let text = std::fs::read_to_string(root().join("demo-data/scenario.toml")).unwrap();
    let sim = simulate(&Scenario::from_toml_str(&text).unwrap(), DEMO_SEED);
    let dir = std::env::temp_dir().join(format!("tellscope-demo-bytes-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    for name in ["demo-log.csv", "demo-log.parquet"] {
        let fresh = dir.join(name);
        write_frame(&mut sim_frame(&sim).unwrap(), &fresh).unwrap();
        let committed = std::fs::read(root().join("demo-data").join(name)).unwrap();
        assert!(std::fs::read(&fresh).unwrap() == committed, "{name} differs from the simulator's output");
    }
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn the_demo_log_holds_what_the_answer_key_says() {
    let s = Settings::resolve(&ConfigFile::default(), &Overrides::default()).unwrap();
    let csv = tellscope::ingest::load(&root().join("demo-data/demo-log.csv"), &s).unwrap();
    let pq = tellscope::ingest::load(&root().join("demo-data/demo-log.parquet"), &s).unwrap();
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
