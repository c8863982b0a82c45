//! `tellscope simulate SCENARIO --out FILE [--seed S]`
//!
//! Writes a synthetic pitch log (CSV, or Parquet when FILE ends in
//! .parquet) from a TOML scenario of invented pitchers with planted
//! tendencies. The same scenario and seed give the same file, byte for byte.

use std::path::PathBuf;
use tellscope::simulate::write::{sim_frame, write_frame};
use tellscope::simulate::{simulate, Scenario};
use tellscope::{Error, Result};

#[derive(clap::Args, Debug)]
pub struct Args {
    /// The scenario file (TOML).
    pub scenario: PathBuf,
    /// Where to write the log (.csv or .parquet).
    #[arg(long, value_name = "FILE")]
    pub out: PathBuf,
    /// Random seed (default 1).
    #[arg(long, value_name = "S", default_value_t = 1)]
    pub seed: u64,
}

pub fn load_scenario(path: &std::path::Path) -> Result<Scenario> {
    let text = std::fs::read_to_string(path)
        .map_err(|e| Error::Usage(format!("{}: cannot read the scenario ({e}); check the path", path.display())))?;
    Scenario::from_toml_str(&text).map_err(|e| Error::Usage(format!("{}: {e}", path.display())))
}

pub fn run(args: Args) -> Result<()> {
    let scenario = load_scenario(&args.scenario)?;
    let log = simulate(&scenario, args.seed);
    let mut df = sim_frame(&log)?;
    write_frame(&mut df, &args.out)?;
    println!("wrote {} pitches by {} pitchers in {} games to {}", log.rows.len(), log.pitchers.len(), log.games.len(), args.out.display());
    Ok(())
}
