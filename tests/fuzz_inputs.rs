//! The fuzzing harness: random edits of a CSV log, of a Parquet log and of
//! a settings file. Whatever the bytes, tellscope answers with a result or
//! an input error (exit 2 or 3) naming what is wrong — never a panic, never
//! an internal error. proptest shrinks a failure to a small case and keeps
//! it in `tests/fuzz_inputs.proptest-regressions`, replayed first on every
//! run (a case that aborts the process, as an unbounded allocation does,
//! cannot be kept that way: `tests/fixtures/fuzz/hunt_aborts.py` hunts
//! those with the binary); damaged files found by hand are kept under `tests/fixtures/fuzz/`
//! and replayed by `known_damaged_files_are_input_errors`.
//!
//! Budget: `FUZZ_CASES` cases per property (default 256, so CI spends well
//! under a minute here); set it higher for a longer hunt, e.g.
//! `FUZZ_CASES=5000 cargo test --release --test fuzz_inputs`.

use proptest::prelude::*;
use proptest::sample::Index;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicUsize, Ordering};
use tellscope::error::Error;
use tellscope::settings::{ConfigFile, Overrides, Settings};

fn fixture(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/fuzz").join(name)
}

fn cases() -> u32 {
    std::env::var("FUZZ_CASES").ok().and_then(|v| v.parse().ok()).unwrap_or(256)
}

fn config() -> ProptestConfig {
    ProptestConfig {
        cases: cases(),
        max_shrink_iters: 2000,
        // Tests run with the package folder as the working directory.
        failure_persistence: Some(Box::new(proptest::test_runner::FileFailurePersistence::Direct("tests/fuzz_inputs.proptest-regressions"))),
        ..ProptestConfig::default()
    }
}

/// Settings that let the small seed log reach every stage (models,
/// permutation tests, tells, cost), cheaply.
fn small_settings() -> Settings {
    let cfg: ConfigFile = toml::from_str("[audit]\npermutations = 9\nmin_train_pitches = 50\nmin_test_pitches = 20\n").unwrap();
    Settings::resolve(&cfg, &Overrides::default()).unwrap()
}

/// A fresh file path per case (cases may run on several test threads).
fn scratch(ext: &str) -> PathBuf {
    static N: AtomicUsize = AtomicUsize::new(0);
    let dir = std::env::temp_dir().join(format!("tellscope-fuzz-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    dir.join(format!("case-{}.{ext}", N.fetch_add(1, Ordering::SeqCst)))
}

/// One edit of a byte string.
#[derive(Debug, Clone)]
enum Edit {
    /// Overwrite a byte.
    Set(Index, u8),
    /// Insert a snippet a hostile or broken export might hold.
    Insert(Index, &'static str),
    /// Delete up to 64 bytes.
    Delete(Index, usize),
    /// Cut the file here.
    Truncate(Index),
}

const SNIPPETS: [&str; 22] = [
    ",", "\"", "\n", "\r\n", "\0", ",,,,", "\"\"", "=HYPERLINK(\"x\")", "9999-12-31", "0000-00-00", "NaN", "-1",
    "inf", "1e308", "\u{feff}", "\u{1b}[31m", "é", "18446744073709551616", "pitch_type", "\n\n\n", ",\"a\nb\",", "2025-02-30",
];

fn edit() -> impl Strategy<Value = Edit> {
    prop_oneof![
        4 => (any::<Index>(), any::<u8>()).prop_map(|(i, b)| Edit::Set(i, b)),
        4 => (any::<Index>(), prop::sample::select(&SNIPPETS[..])).prop_map(|(i, s)| Edit::Insert(i, s)),
        2 => (any::<Index>(), 1usize..64).prop_map(|(i, n)| Edit::Delete(i, n)),
        1 => any::<Index>().prop_map(Edit::Truncate),
    ]
}

fn apply(mut bytes: Vec<u8>, edits: &[Edit]) -> Vec<u8> {
    for e in edits {
        if bytes.is_empty() {
            break;
        }
        match e {
            Edit::Set(i, b) => {
                let at = i.index(bytes.len());
                bytes[at] = *b;
            }
            Edit::Insert(i, s) => {
                let at = i.index(bytes.len() + 1);
                bytes.splice(at..at, s.bytes());
            }
            Edit::Delete(i, n) => {
                let at = i.index(bytes.len());
                let end = (at + n).min(bytes.len());
                bytes.drain(at..end);
            }
            Edit::Truncate(i) => {
                let at = i.index(bytes.len());
                bytes.truncate(at);
            }
        }
    }
    bytes
}

/// The audit of `bytes` written as a file: a report, or an input error.
fn audit_bytes(bytes: &[u8], ext: &str) -> Result<(), String> {
    let path = scratch(ext);
    std::fs::write(&path, bytes).unwrap();
    let settings = small_settings();
    let run = std::panic::catch_unwind(|| tellscope::audit::run(&path, &settings, false));
    let _ = std::fs::remove_file(&path);
    match run {
        Err(_) => Err("panicked".into()),
        Ok(Ok(_)) => Ok(()),
        Ok(Err(e @ (Error::Data(_) | Error::Usage(_)))) => {
            let m = e.to_string();
            if m.contains('\n') {
                Err(format!("a multi-line message: {m:?}"))
            } else {
                Ok(())
            }
        }
        Ok(Err(e)) => Err(format!("exit {}: {e}", e.exit_code())),
    }
}

proptest! {
    #![proptest_config(config())]

    #[test]
    fn edited_csv_logs_give_a_report_or_an_input_error(edits in prop::collection::vec(edit(), 1..10)) {
        let bytes = apply(std::fs::read(fixture("seed.csv")).unwrap(), &edits);
        if let Err(why) = audit_bytes(&bytes, "csv") {
            prop_assert!(false, "{why}");
        }
    }

    /// The seed with the half written into `inning` and each club's runs
    /// and name in place of `score_diff` and `team` (worked out by
    /// `ingest::derive`; `make_seed_halves.py`).
    #[test]
    fn edited_logs_with_halves_give_a_report_or_an_input_error(edits in prop::collection::vec(edit(), 1..10)) {
        let bytes = apply(std::fs::read(fixture("seed-halves.csv")).unwrap(), &edits);
        if let Err(why) = audit_bytes(&bytes, "csv") {
            prop_assert!(false, "{why}");
        }
    }

    #[test]
    fn edited_parquet_logs_give_a_report_or_an_input_error(edits in prop::collection::vec(edit(), 1..6)) {
        let bytes = apply(std::fs::read(fixture("seed.parquet")).unwrap(), &edits);
        if let Err(why) = audit_bytes(&bytes, "parquet") {
            prop_assert!(false, "{why}");
        }
    }

    /// Any value in any setting: refused with exit 2 naming the key, or
    /// accepted and then run on the seed log without an internal error.
    #[test]
    fn any_setting_is_refused_or_runs(key in prop::sample::select(&KEYS[..]), value in prop::sample::select(&VALUES[..])) {
        let (section, name) = key;
        let text = format!("[{section}]\n{name} = {value}\n");
        let cfg = match toml::from_str::<ConfigFile>(&text) {
            Ok(c) => c,
            Err(_) => return Ok(()), // a type the key cannot hold: the loader's message (exit 2)
        };
        let base: ConfigFile = toml::from_str("[audit]\npermutations = 9\nmin_train_pitches = 50\nmin_test_pitches = 20\n").unwrap();
        let cfg = merge(base, cfg);
        match Settings::resolve(&cfg, &Overrides::default()) {
            Err(e) => prop_assert_eq!(e.exit_code(), 2, "{}", e),
            Ok(s) => {
                // Few permutations keep the run short; the value itself
                // was valid (it resolved above).
                let few = Overrides { permutations: Some(s.audit.permutations().min(19)), ..Overrides::default() };
                let s = Settings::resolve(&cfg, &few).unwrap();
                let log = fixture("seed.csv");
                let run = std::panic::catch_unwind(|| tellscope::audit::run(&log, &s, false));
                match run {
                    Err(_) => prop_assert!(false, "{text}: panicked"),
                    Ok(Err(e)) => prop_assert!(e.exit_code() != 1, "{text}: {e}"),
                    Ok(Ok(_)) => {}
                }
            }
        }
    }
}

/// The fuzzed key over the small-log base (the fuzzed section wins).
fn merge(base: ConfigFile, f: ConfigFile) -> ConfigFile {
    let mut out = f;
    if out.audit.permutations.is_none() {
        out.audit.permutations = base.audit.permutations;
    }
    if out.audit.min_train_pitches.is_none() {
        out.audit.min_train_pitches = base.audit.min_train_pitches;
    }
    if out.audit.min_test_pitches.is_none() {
        out.audit.min_test_pitches = base.audit.min_test_pitches;
    }
    out
}

const KEYS: [(&str, &str); 24] = [
    ("audit", "seed"),
    ("audit", "permutations"),
    ("audit", "fdr"),
    ("audit", "statistic"),
    ("audit", "stop_after_exceedances"),
    ("audit", "min_train_pitches"),
    ("audit", "min_test_pitches"),
    ("audit", "forward_blocks"),
    ("audit", "new_type_share"),
    ("model", "max_depth"),
    ("model", "min_samples_leaf"),
    ("model", "min_samples_split"),
    ("model", "min_impurity_decrease"),
    ("model", "split_alpha"),
    ("model", "leaf_smoothing"),
    ("model", "prior_blend"),
    ("model", "prior_strength"),
    ("model", "min_type_pitches"),
    ("tells", "min_effect"),
    ("tells", "min_n"),
    ("tells", "pairs"),
    ("tells", "fdr_method"),
    ("compare", "new_pitch_share"),
    ("compare", "absent_share"),
];

const VALUES: [&str; 22] = [
    "0", "1", "2", "-1", "3", "1000000", "18446744073709551615", "0.0", "0.5", "1.0", "1.5", "-0.5", "nan", "inf", "-inf",
    "1e-300", "\"auto\"", "\"bits\"", "\"pooled\"", "\"\"", "[[\"count\", \"bats\"]]", "[[\"count\", \"count\"]]",
];

/// Damaged files found by hand or by earlier hunts: each is an input
/// error (exit 3) naming the file, never a panic.
#[test]
fn known_damaged_files_are_input_errors() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/fuzz");
    let mut seen = 0;
    for entry in std::fs::read_dir(&dir).unwrap() {
        let path = entry.unwrap().path();
        let name = path.file_name().unwrap().to_string_lossy().to_string();
        if !(name.starts_with("footer-") || name.starts_with("damaged-")) {
            continue;
        }
        seen += 1;
        let settings = small_settings();
        let run = std::panic::catch_unwind(|| tellscope::audit::run(&path, &settings, false));
        let e = match run {
            Err(_) => panic!("{name}: panicked"),
            Ok(Ok(_)) => panic!("{name}: read as a good log"),
            Ok(Err(e)) => e,
        };
        assert_eq!(e.exit_code(), 3, "{name}: {e}");
        assert!(e.to_string().contains(&name), "{name}: the message does not name the file: {e}");
    }
    assert!(seen >= 2);
}

/// A Parquet export's own types (date32, timestamps, 8-bit integers,
/// booleans, decimals) read as the same log as the CSV they came from.
#[test]
fn a_typed_parquet_export_reads_as_its_csv() {
    let s = small_settings();
    let csv = tellscope::ingest::load(&fixture("seed.csv"), &s.input).unwrap();
    for name in ["seed.parquet", "stamped.parquet"] {
        let pq = tellscope::ingest::load(&fixture(name), &s.input).unwrap_or_else(|e| panic!("{name}: {e}"));
        assert_eq!(pq.log.len(), csv.log.len(), "{name}");
        assert_eq!(pq.log.date, csv.log.date, "{name}: dates");
        assert_eq!(pq.log.balls, csv.log.balls, "{name}: balls");
        assert_eq!(pq.log.on_first, csv.log.on_first, "{name}: on_first");
        assert_eq!(pq.log.pitch_type, csv.log.pitch_type, "{name}: pitch types");
    }
}
