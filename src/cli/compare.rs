//! `tellscope compare FILE --before A --after B [--config C] [--out DIR]
//!                    [--pitcher P]... [--permutations N] [--seed S] [--fdr Q]
//!                    [--strict] [--json]`
//!
//! Change in each pitcher between two periods, each a season of the log
//! (`2025`) or a date range `YYYY-MM-DD..YYYY-MM-DD` (both days included).
//! Writes the report folder (default `reports/<input file stem>-compare`)
//! whole or not at all, and prints a staff table with each pitcher's
//! changes (or, with --json, summary.json).

use super::LogArgs;
use std::path::{Path, PathBuf};
use tellscope::compare::{self, period::PeriodSpec, Comparison, Request};
use tellscope::report;
use tellscope::domain::defaults::{COMPARE_PERMUTATIONS, FDR};
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
    /// Compare only this pitcher (repeatable).
    #[arg(long = "pitcher", value_name = "P")]
    pub pitchers: Vec<String>,
    /// Compare the pitchers who pitched for club T in the log's latest
    /// season; every other pitcher in the log is the league.
    #[arg(long, value_name = "T")]
    pub team: Option<String>,
    // Help texts that name a default are built from the default itself.
    #[arg(
        long,
        value_name = "N",
        help = format!("Label swaps per pitcher for the predictability change (default {COMPARE_PERMUTATIONS}, `[compare] permutations`)")
    )]
    pub permutations: Option<usize>,
    /// Random seed; the same seed gives the same report, byte for byte.
    #[arg(long, value_name = "S")]
    pub seed: Option<u64>,
    #[arg(long, value_name = "Q", help = format!("False discovery rate within each family of tests (default {FDR})"))]
    pub fdr: Option<f64>,
    /// Print summary.json to stdout instead of the table.
    #[arg(long)]
    pub json: bool,
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
    let settings = args.log.settings(Overrides {
        seed: args.seed,
        compare_permutations: args.permutations,
        fdr: args.fdr,
        pitchers: args.pitchers.clone(),
        team: args.team.clone(),
        ..Overrides::default()
    })?;
    let out = args.out.clone().unwrap_or_else(|| default_out(&args.log.file));
    let request = Request { before, after };
    let input = args.log.input()?;
    let mut cmp = compare::run(&input.path, &settings, &request, !args.json).map_err(|e| input.name_errors(e))?;
    cmp.summary.input.path = input.shown();
    report::write_all(&out, &report::compare::compare_files(&cmp)?)?;
    if args.json {
        print!("{}", report::compare::summary_json(&cmp.summary)?);
    } else {
        print_table(&cmp, &out);
    }
    Ok(())
}

/// The staff table and each pitcher's summary lines.
pub fn print_table(cmp: &Comparison, out: &Path) {
    let s = &cmp.summary;
    let (b, a) = (&s.periods.before, &s.periods.after);
    println!(
        "{} ({} pitches in {} games) vs {} ({} pitches in {} games); {} tests, {} significant at FDR {}",
        b.label, b.pitches, b.games, a.label, a.pitches, a.games, s.tests, s.significant, s.settings.fdr
    );
    println!();
    println!("{:<22} {:>7} {:>7} {:>6} {:>7} {:>8} {:>8} {:>7} {:>7}", "pitcher", "before", "after", "shift", "q", "bits B", "bits A", "q", "changes");
    let qt = |q: f64| if q < 0.001 { "<0.001".to_string() } else { format!("{q:.3}") };
    for p in s.pitchers.iter().filter(|p| p.is_ok()) {
        let mix_q = p
            .changes
            .iter()
            .filter(|c| c.kind == "new_pitch" || c.kind == "dropped_pitch" || (c.kind == "mix_shift" && c.situation.is_empty()))
            .filter_map(|c| c.q)
            .fold(f64::NAN, f64::min);
        let pr = p.predictability.as_ref();
        println!(
            "{:<22} {:>7} {:>7} {:>6.0} {:>7} {:>+8.3} {:>+8.3} {:>7} {:>7}",
            p.pitcher.chars().take(22).collect::<String>(),
            p.n_before,
            p.n_after,
            100.0 * p.mix_shift.unwrap_or(0.0),
            if mix_q.is_nan() { String::new() } else { qt(mix_q) },
            pr.map(|x| x.before.bits_gained).unwrap_or(0.0),
            pr.map(|x| x.after.bits_gained).unwrap_or(0.0),
            pr.map(|x| qt(x.q)).unwrap_or_default(),
            p.significant_changes
        );
    }
    for p in s.pitchers.iter().filter(|p| !p.is_ok()) {
        println!("{:<22} {:>7} {:>7}  insufficient data", p.pitcher.chars().take(22).collect::<String>(), p.n_before, p.n_after);
    }
    println!("  shift: pitches in every 100 that changed type (total variation of the whole mix), q: its strongest test (overall mix, new or dropped pitch)");
    println!("  bits: held-out bits gained per pitch in each period, q: the label-swap test of their difference");
    for p in s.pitchers.iter().filter(|p| p.is_ok() && p.significant_changes > 0) {
        println!();
        println!("{}:", p.pitcher);
        for l in &p.summary_lines {
            println!("  - {l}");
        }
    }
    println!();
    println!("Report: {}", out.join("index.html").display());
}

/// The demo's comparison, 2025 against 2026, into `<audit folder>-compare`
/// (`reports/demo-compare` by default); called at the end of `tellscope demo`.
pub fn run_demo(log_path: &Path, cfg: &ConfigFile, audit_out: &Path, permutations: Option<usize>) -> Result<()> {
    let settings = Settings::resolve(cfg, &Overrides { compare_permutations: permutations, ..Overrides::default() })?;
    let request = Request { before: PeriodSpec::Season(2025), after: PeriodSpec::Season(2026) };
    let cmp = compare::run(log_path, &settings, &request, true)?;
    let name = audit_out.file_name().and_then(|n| n.to_str()).unwrap_or("demo");
    let out = audit_out.with_file_name(format!("{name}-compare"));
    report::write_all(&out, &report::compare::compare_files(&cmp)?)?;
    println!();
    print_table(&cmp, &out);
    Ok(())
}
