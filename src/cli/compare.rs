//! `tellscope compare FILE --before A --after B [--config C] [--out DIR]
//!                    [--pitcher P]... [--permutations N] [--seed S] [--fdr Q]
//!                    [--strict] [--json]`
//!
//! Change in each pitcher between two periods, each a season of the log
//! (`2025`) or a date range `YYYY-MM-DD..YYYY-MM-DD` (both days included).
//! Writes the report folder (default `reports/<input file stem>-compare`)
//! whole or not at all, and prints a staff table with each pitcher's
//! changes (or, with --json, summary.json).

use super::{LogArgs, RunArgs};
use std::path::{Path, PathBuf};
use tellscope::compare::{self, period::PeriodSpec, Request};
use tellscope::report::{self, Exporter, Stdout, Table};
use tellscope::domain::defaults::COMPARE_PERMUTATIONS;
use tellscope::settings::{ConfigFile, Overrides, Settings};
use tellscope::Result;

#[derive(clap::Args, Debug)]
pub struct Args {
    #[command(flatten)]
    pub log: LogArgs,
    /// The earlier period: a season (2025) or a date range FROM..TO (2025-04-01..2025-06-30).
    #[arg(long, value_name = "A", allow_hyphen_values = true)]
    pub before: String,
    /// The later period, written the same way.
    #[arg(long, value_name = "B", allow_hyphen_values = true)]
    pub after: String,
    /// Report folder (default reports/<input file stem>-compare).
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    #[command(flatten)]
    pub run: RunArgs,
    // Help texts that name a default are built from the default itself.
    #[arg(
        long,
        value_name = "N",
        help = format!("Label swaps per pitcher for the predictability change (default {COMPARE_PERMUTATIONS}, `[compare] permutations`)")
    )]
    pub permutations: Option<usize>,
}

pub fn default_out(file: &Path) -> PathBuf {
    if file.as_os_str() == "-" {
        return PathBuf::from("reports").join("stdin-compare");
    }
    let stem = file.file_stem().and_then(|s| s.to_str()).unwrap_or("compare");
    PathBuf::from("reports").join(format!("{}-compare", report::safe_stem(stem)))
}

pub fn run(args: Args) -> Result<()> {
    // The periods' text is checked before the log is read.
    let before = PeriodSpec::parse("--before", &args.before)?;
    let after = PeriodSpec::parse("--after", &args.after)?;
    let settings = args.log.settings(Overrides { compare_permutations: args.permutations, ..args.run.overrides() })?;
    let out = args.out.clone().unwrap_or_else(|| default_out(&args.log.file));
    let request = Request { before, after };
    let input = args.log.input()?;
    let mut cmp = compare::run(&input.path, &settings, &request, !args.run.json).map_err(|e| input.failed(e, &settings, &out, "comparison"))?;
    cmp.summary.input.path = input.shown();
    let t = tellscope::progress::Timer::start();
    report::compare::write_compare_report(&out, &cmp)?;
    t.lap("report");
    if args.run.json {
        report::Json.export(&cmp, &mut Stdout)
    } else {
        Table { report: &out }.export(&cmp, &mut Stdout)
    }
}


/// The demo's comparison, 2025 against 2026, into `<audit folder>-compare`
/// (`reports/demo-compare` by default); called at the end of `tellscope demo`.
pub fn run_demo(log_path: &Path, cfg: &ConfigFile, audit_out: &Path, permutations: Option<usize>) -> Result<()> {
    let settings = Settings::resolve(cfg, &Overrides { compare_permutations: permutations, ..Overrides::default() })?;
    let request = Request { before: PeriodSpec::Season(2025), after: PeriodSpec::Season(2026) };
    let cmp = compare::run(log_path, &settings, &request, true)?;
    let name = audit_out.file_name().and_then(|n| n.to_str()).unwrap_or("demo");
    let out = audit_out.with_file_name(format!("{name}-compare"));
    report::compare::write_compare_report(&out, &cmp)?;
    println!();
    Table { report: &out }.export(&cmp, &mut Stdout)
}
