//! The settings files under `config/`: the documented defaults are exactly
//! the built-in ones (so the file cannot drift from the code), and the
//! example column mapping reads an invented export layout
//! (tests/fixtures/logs/example-export.csv, made by make_example_export.py)
//! as the same log as the contract-named copy of the same pitches.

use std::path::{Path, PathBuf};
use tellscope::settings::{ConfigFile, Overrides, Settings};

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

fn fixture(name: &str) -> PathBuf {
    root().join("tests/fixtures/logs").join(name)
}

#[test]
fn the_defaults_file_is_the_built_in_defaults() {
    let file = ConfigFile::load(&root().join("config/defaults.toml")).unwrap();
    let from_file = Settings::resolve(&file, &Overrides::default()).unwrap();
    let built_in = Settings::resolve(&ConfigFile::default(), &Overrides::default()).unwrap();
    assert_eq!(from_file, built_in);
    // Every section and key of the file is one the loader knows (it
    // refuses unknown keys), and each section is present.
    let text = std::fs::read_to_string(root().join("config/defaults.toml")).unwrap();
    for section in ["[audit]", "[model]", "[tells]", "[compare]", "[location]"] {
        assert!(text.contains(section), "{section} missing");
    }
}

#[test]
fn the_example_mapping_reads_an_export_as_the_contract_log() {
    let cfg = ConfigFile::load(&root().join("config/example-export.toml")).unwrap();
    let mapped = Settings::resolve(&cfg, &Overrides::default()).unwrap();
    let plain = Settings::resolve(&ConfigFile::default(), &Overrides::default()).unwrap();
    let export = tellscope::ingest::load(&fixture("example-export.csv"), &mapped.input).unwrap();
    let contract = tellscope::ingest::load(&fixture("example-contract.csv"), &plain.input).unwrap();
    assert!(export.rejected.is_empty() && contract.rejected.is_empty());
    let (a, b) = (&export.log, &contract.log);
    assert_eq!(a.len(), 2000);
    assert_eq!(a.len(), b.len());
    let names = |log: &tellscope::ingest::PitchLog, i: usize| {
        (log.pitchers[log.pitcher[i] as usize].clone(), log.pitch_types[log.pitch_type[i] as usize].clone(), log.date[i], log.balls[i], log.strikes[i], log.bats[i])
    };
    for i in 0..a.len() {
        assert_eq!(names(a, i), names(b, i), "row {i}");
    }
    // The two fastball codes were merged back into one label.
    assert!(a.pitch_types.iter().any(|t| t == "fastball") && !a.pitch_types.iter().any(|t| t == "FF" || t == "FT"));
}
