//! `tellscope audit FILE [--config C] [--out DIR] [--pitcher P]... [--test-season Y]
//!                  [--permutations N] [--seed S] [--fdr Q] [--strict] [--json]`
//!
//! The predictability audit. Writes the report folder (default
//! `reports/<input file stem>`) whole or not at all, and prints a compact
//! staff table with the top tells (or, with --json, summary.json).

use super::{LogArgs, RunArgs};
use std::path::{Path, PathBuf};
use tellscope::audit;
use tellscope::report::{self, Exporter, Stdout, Table};
use tellscope::domain::defaults::AUDIT_PERMUTATIONS;
use tellscope::settings::Overrides;
use tellscope::Result;

#[derive(clap::Args, Debug)]
pub struct Args {
    #[command(flatten)]
    pub log: LogArgs,
    /// Report folder (default reports/<input file stem>).
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    #[command(flatten)]
    pub run: RunArgs,
    /// Score this season from the ones before it (default: each pitcher's
    /// latest season, block by block from his games before it).
    #[arg(long, value_name = "Y")]
    pub test_season: Option<i32>,
    // Help texts that name a default are built from the default itself.
    #[arg(long, value_name = "N", help = format!("Permutations per pitcher for the model test (default {AUDIT_PERMUTATIONS})"))]
    pub permutations: Option<usize>,
}

pub fn default_out(file: &Path) -> PathBuf {
    if file.as_os_str() == "-" {
        return PathBuf::from("reports").join("stdin");
    }
    let stem = file.file_stem().and_then(|s| s.to_str()).unwrap_or("audit");
    PathBuf::from("reports").join(report::safe_stem(stem))
}

pub fn run(args: Args) -> Result<()> {
    let settings = args.log.settings(Overrides { permutations: args.permutations, test_season: args.test_season, ..args.run.overrides() })?;
    let out = args.out.clone().unwrap_or_else(|| default_out(&args.log.file));
    let input = args.log.input()?;
    let audit = match audit::run(&input.path, &settings, !args.run.json) {
        Ok(mut a) => {
            a.summary.input.path = input.shown();
            a
        }
        Err(e) => return Err(input.failed(e, &settings, &out, "audit")),
    };
    let t = tellscope::progress::Timer::start();
    report::write_audit_report(&out, &audit)?;
    t.lap("report");
    if args.run.json {
        report::Json.export(&audit, &mut Stdout)
    } else {
        Table { report: &out }.export(&audit, &mut Stdout)
    }
}

