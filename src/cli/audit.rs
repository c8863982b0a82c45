//! `tellscope audit FILE [--config C] [--out DIR] [--pitcher P]... [--test-season Y]
//!                  [--permutations N] [--seed S] [--fdr Q] [--strict] [--json]`
//!
//! The predictability audit. Writes the report folder (default
//! `reports/<input file stem>`) whole or not at all, and prints a compact
//! staff table with the top tells (or, with --json, summary.json).

use super::LogArgs;
use std::path::{Path, PathBuf};
use tellscope::audit;
use tellscope::report::{self, Exporter, Stdout, Table};
use tellscope::domain::defaults::{AUDIT_PERMUTATIONS, FDR};
use tellscope::settings::Overrides;
use tellscope::Result;

#[derive(clap::Args, Debug, Clone)]
pub struct AuditOptions {
    /// Audit only this pitcher (repeatable).
    #[arg(long = "pitcher", value_name = "P")]
    pub pitchers: Vec<String>,
    /// Audit the pitchers who pitched for club T in the log's latest season
    /// (all their pitches); every other pitcher in the log is the league.
    #[arg(long, value_name = "T")]
    pub team: Option<String>,
    /// The held-out season (default: the latest).
    #[arg(long, value_name = "Y")]
    pub test_season: Option<i32>,
    // Help texts that name a default are built from the default itself.
    #[arg(long, value_name = "N", help = format!("Permutations per pitcher for the model test (default {AUDIT_PERMUTATIONS})"))]
    pub permutations: Option<usize>,
    /// Random seed; the same seed gives the same report, byte for byte.
    #[arg(long, value_name = "S")]
    pub seed: Option<u64>,
    #[arg(long, value_name = "Q", help = format!("False discovery rate for flagging (default {FDR})"))]
    pub fdr: Option<f64>,
}

impl AuditOptions {
    pub fn overrides(&self) -> Overrides {
        Overrides {
            seed: self.seed,
            permutations: self.permutations,
            fdr: self.fdr,
            test_season: self.test_season,
            pitchers: self.pitchers.clone(),
            team: self.team.clone(),
            ..Overrides::default()
        }
    }
}

#[derive(clap::Args, Debug)]
pub struct Args {
    #[command(flatten)]
    pub log: LogArgs,
    /// Report folder (default reports/<input file stem>).
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    #[command(flatten)]
    pub opts: AuditOptions,
    /// Print summary.json to stdout instead of the table.
    #[arg(long)]
    pub json: bool,
}

pub fn default_out(file: &Path) -> PathBuf {
    if file.as_os_str() == "-" {
        return PathBuf::from("reports").join("stdin");
    }
    let stem = file.file_stem().and_then(|s| s.to_str()).unwrap_or("audit");
    PathBuf::from("reports").join(report::safe_stem(stem))
}

pub fn run(args: Args) -> Result<()> {
    let settings = args.log.settings(args.opts.overrides())?;
    let out = args.out.clone().unwrap_or_else(|| default_out(&args.log.file));
    let input = args.log.input()?;
    let audit = match audit::run(&input.path, &settings, !args.json) {
        Ok(mut a) => {
            a.summary.input.path = input.shown();
            a
        }
        Err(e) => return Err(input.failed(e, &settings, &out, "audit")),
    };
    let t = tellscope::progress::Timer::start();
    report::write_audit_report(&out, &audit)?;
    t.lap("report");
    if args.json {
        report::Json.export(&audit, &mut Stdout)
    } else {
        Table { report: &out }.export(&audit, &mut Stdout)
    }
}

