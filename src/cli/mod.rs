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

/// Options the audit and compare share: whom to run on, the seed, the
/// false discovery rate, and what to print.
#[derive(clap::Args, Debug, Clone)]
pub struct RunArgs {
    /// Only this pitcher (repeatable).
    #[arg(long = "pitcher", value_name = "P")]
    pub pitchers: Vec<String>,
    /// Only the pitchers who pitched for club T in the log's latest season
    /// (all their pitches); every other pitcher in the log is the league.
    #[arg(long, value_name = "T")]
    pub team: Option<String>,
    /// Random seed; the same seed gives the same report, byte for byte.
    #[arg(long, value_name = "S")]
    pub seed: Option<u64>,
    // A help text that names a default is built from the default itself.
    #[arg(long, value_name = "Q", help = format!("False discovery rate of every flag, within each family of tests (default {})", tellscope::domain::defaults::FDR))]
    pub fdr: Option<f64>,
    /// Print summary.json to stdout instead of the table.
    #[arg(long)]
    pub json: bool,
}

impl RunArgs {
    /// The flags as overrides of the config file.
    pub fn overrides(&self) -> Overrides {
        Overrides { seed: self.seed, fdr: self.fdr, pitchers: self.pitchers.clone(), team: self.team.clone(), ..Overrides::default() }
    }
}

/// Options every command that reads a log shares.
#[derive(clap::Args, Debug, Clone)]
pub struct LogArgs {
    /// The pitch log, CSV or Parquet; `-` reads standard input (a query's
    /// CSV output piped in, or a Parquet file, known by its signature).
    pub file: PathBuf,
    /// A TOML config file: [columns], [pitch_groups], [audit], [model], [tells], [location], [compare] (every key and its default: config/defaults.toml).
    #[arg(long, value_name = "C")]
    pub config: Option<PathBuf>,
    /// Treat any rejected row as a failure (exit 3).
    #[arg(long)]
    pub strict: bool,
}

/// The log a command reads: the file named, or standard input spooled to
/// a file of its own (removed when this is dropped), so a piped log is
/// read, checked and reported exactly as the same CSV on disk would be.
pub struct LogInput {
    pub path: PathBuf,
    spool: Option<PathBuf>,
}

impl LogInput {
    /// Whether the log came from standard input.
    pub fn is_stdin(&self) -> bool {
        self.spool.is_some()
    }

    /// `e` with the spool file's path shown as `stdin`.
    pub fn name_errors(&self, e: tellscope::Error) -> tellscope::Error {
        use tellscope::Error as E;
        if !self.is_stdin() {
            return e;
        }
        let p = self.path.display().to_string();
        let f = |m: String| m.replace(&p, "stdin");
        match e {
            E::Usage(m) => E::Usage(f(m)),
            E::Data(m) => E::Data(f(m)),
            E::Io(m) => E::Io(f(m)),
            E::Internal(m) => E::Internal(f(m)),
        }
    }

    /// A failed run's error, named as the user gave the log. When the data
    /// is unusable (exit 3) the rejected rows are still kept, with a short
    /// page saying why, in the report folder `out` (the run still fails).
    pub fn failed(&self, e: tellscope::Error, settings: &tellscope::settings::Settings, out: &std::path::Path, what: &str) -> tellscope::Error {
        let e = self.name_errors(e);
        if e.exit_code() == 3 {
            if let Ok(tellscope::ingest::LeftOut { rejected, set_aside }) = tellscope::ingest::rows_left_out(&self.path, &settings.input) {
                if (!rejected.is_empty() || !set_aside.is_empty())
                    && tellscope::report::write_failed_report(out, what, &e.to_string(), &rejected, &set_aside).is_ok()
                {
                    if !rejected.is_empty() {
                        eprintln!("note: {} rejected rows and why are in {}", rejected.len(), out.join("rejected.csv").display());
                    }
                    if !set_aside.is_empty() {
                        eprintln!("note: {} rows set aside and why are in {}", set_aside.len(), out.join("set_aside.csv").display());
                    }
                }
            }
        }
        e
    }

    /// The name to record as the input: `stdin` for standard input.
    pub fn shown(&self) -> String {
        if self.is_stdin() {
            "stdin".into()
        } else {
            self.path.display().to_string()
        }
    }
}

impl Drop for LogInput {
    fn drop(&mut self) {
        if let Some(d) = &self.spool {
            let _ = std::fs::remove_dir_all(d);
        }
    }
}

impl LogArgs {
    /// The log to read; `-` spools standard input first.
    pub fn input(&self) -> Result<LogInput> {
        if self.file.as_os_str() != "-" {
            return Ok(LogInput { path: self.file.clone(), spool: None });
        }
        let dir = std::env::temp_dir().join(format!("tellscope-stdin-{}", std::process::id()));
        std::fs::create_dir_all(&dir).map_err(|e| tellscope::Error::io(&dir, "create a folder for standard input", e))?;
        let spooled = dir.join("stdin.csv");
        // A Parquet file piped in is read as Parquet by its signature
        // (`ingest::read::Format::of`), whatever the spooled file's name.
        let input = LogInput { path: spooled.clone(), spool: Some(dir) };
        let mut file = std::fs::File::create(&spooled).map_err(|e| tellscope::Error::io(&spooled, "write standard input", e))?;
        std::io::copy(&mut std::io::stdin().lock(), &mut file)
            .map_err(|e| tellscope::Error::Io(format!("stdin: could not be read ({e})")))?;
        drop(file);
        Ok(input)
    }

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
