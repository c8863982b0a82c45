//! One file per command; each opens with its usage text and calls the
//! library. This module only defines the command line and dispatches.

mod audit;
mod check;
mod compare;
mod demo;
mod simulate;

use clap::{Parser, Subcommand};
use std::path::PathBuf;
use tellscope::settings::{ConfigFile, Overrides, Settings};
use tellscope::Result;

#[derive(Parser, Debug)]
#[command(name = "tellscope", version, about = "How predictable is each pitcher's next pitch from the game situation?")]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Subcommand, Debug)]
pub enum Command {
    /// Validate a pitch log: rows read and rejected (with reasons), pitchers, seasons, pitch types.
    Check(check::Args),
    /// The predictability audit: held-out lift and bits per pitcher, permutation tests, tells; writes a report.
    Audit(audit::Args),
    /// Change in each pitcher between two periods (seasons or date ranges): mix, new pitches, predictability, tells.
    Compare(compare::Args),
    /// Write a synthetic pitch log from a scenario file.
    Simulate(simulate::Args),
    /// Run the bundled demo end to end: the audit into reports/demo and the 2025-2026 comparison into reports/demo-compare.
    Demo(demo::Args),
}

/// Options every command that reads a log shares.
#[derive(clap::Args, Debug, Clone)]
pub struct LogArgs {
    /// The pitch log, CSV or Parquet.
    pub file: PathBuf,
    /// A TOML config file ([columns], [pitch_groups], [audit], [model], [tells]).
    #[arg(long, value_name = "C")]
    pub config: Option<PathBuf>,
    /// Treat any rejected row as a failure (exit 3).
    #[arg(long)]
    pub strict: bool,
}

impl LogArgs {
    pub fn settings(&self, o: Overrides) -> Result<Settings> {
        let cfg = match &self.config {
            Some(p) => ConfigFile::load(p)?,
            None => ConfigFile::default(),
        };
        // A setting's error names its key (`[audit] fdr = ...`); with a
        // config file it also names the file the key is in.
        Settings::resolve(&cfg, &Overrides { strict: self.strict, ..o }).map_err(|e| match (&self.config, e) {
            (Some(p), tellscope::Error::Usage(m)) if m.starts_with('[') => tellscope::Error::Usage(format!("{}: {m}", p.display())),
            (_, e) => e,
        })
    }
}

pub fn run(cli: Cli) -> Result<()> {
    match cli.command {
        Command::Check(a) => check::run(a),
        Command::Audit(a) => audit::run(a),
        Command::Compare(a) => compare::run(a),
        Command::Simulate(a) => simulate::run(a),
        Command::Demo(a) => demo::run(a),
    }
}
