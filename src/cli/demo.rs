//! `tellscope demo`
//!
//! Runs the bundled demo end to end: simulates the invented club of
//! `demo-data/scenario.toml` (seed of `demo-data/README.md`), checks that
//! the result equals the committed `demo-data/demo-log.csv`, audits it
//! into `reports/demo`, and compares 2025 with 2026 into
//! `reports/demo-compare` (beside the audit's folder).

use std::path::{Path, PathBuf};
use tellscope::audit;
use tellscope::domain::defaults::{AUDIT_PERMUTATIONS, COMPARE_PERMUTATIONS};
use tellscope::simulate::write::{sim_frame, write_frame};
use tellscope::report::{self, Exporter, Stdout, Table};
use tellscope::settings::{ConfigFile, Overrides, Settings};
use tellscope::simulate::simulate;
use tellscope::Result;

/// The demo's seed (stated in demo-data/README.md).
pub const DEMO_SEED: u64 = 2026;

/// The demo's scenario, built in, for a run outside the project folder (an
/// installed binary): the same text as `demo-data/scenario.toml`.
const BUILT_IN_SCENARIO: &str = include_str!("../../demo-data/scenario.toml");

#[derive(clap::Args, Debug)]
pub struct Args {
    /// Folder holding scenario.toml and the committed demo log.
    #[arg(long, value_name = "DIR", default_value = "demo-data")]
    pub data: PathBuf,
    /// Report folder.
    #[arg(long, value_name = "DIR", default_value = "reports/demo")]
    pub out: PathBuf,
    #[arg(
        long,
        value_name = "N",
        help = format!("Permutations per pitcher (default {AUDIT_PERMUTATIONS} for the audit, {COMPARE_PERMUTATIONS} label swaps for the comparison)")
    )]
    pub permutations: Option<usize>,
}

pub fn run(args: Args) -> Result<()> {
    let scenario_path = args.data.join("scenario.toml");
    let scenario = if scenario_path.exists() {
        super::simulate::load_scenario(&scenario_path)?
    } else {
        // Outside the project folder the built-in scenario is simulated and
        // its log written to the data folder, made here.
        std::fs::create_dir_all(&args.data).map_err(|e| tellscope::Error::io(&args.data, "create the demo's data folder", e))?;
        eprintln!("note: {} is not here; the demo's built-in scenario is used and its log written to {}", scenario_path.display(), args.data.display());
        tellscope::simulate::Scenario::from_toml_str(BUILT_IN_SCENARIO).map_err(|e| tellscope::Error::Internal(format!("the built-in demo scenario: {e}")))?
    };
    let sim = simulate(&scenario, DEMO_SEED);
    let mut df = sim_frame(&sim)?;
    let log_path = args.data.join("demo-log.csv");
    for path in [log_path.clone(), args.data.join("demo-log.parquet")] {
        let ext = path.extension().and_then(|e| e.to_str()).unwrap_or("csv").to_string();
        let fresh = std::env::temp_dir().join(format!("tellscope-demo-{}.{ext}", std::process::id()));
        write_frame(&mut df, &fresh)?;
        if !files_equal(&fresh, &path) {
            // A missing or stale copy is rewritten, and the user is told.
            write_frame(&mut df, &path)?;
            eprintln!("note: {} was missing or differed from the simulator's output; rewrote it", path.display());
        }
        let _ = std::fs::remove_file(&fresh);
    }
    println!("demo log: {} ({} pitches, {} pitchers, {} games)", log_path.display(), sim.rows.len(), sim.pitchers.len(), sim.games.len());
    let cfg_path = args.data.join("demo-config.toml");
    let cfg = if cfg_path.exists() { ConfigFile::load(&cfg_path)? } else { ConfigFile::default() };
    let settings = Settings::resolve(&cfg, &Overrides { permutations: args.permutations, ..Overrides::default() })?;
    let a = audit::run(&log_path, &settings, true)?;
    report::write_audit_report(&args.out, &a)?;
    Table { report: &args.out }.export(&a, &mut Stdout)?;
    super::compare::run_demo(&log_path, &cfg, &args.out, args.permutations)
}

fn files_equal(a: &Path, b: &Path) -> bool {
    match (std::fs::read(a), std::fs::read(b)) {
        (Ok(x), Ok(y)) => x == y,
        _ => false,
    }
}

