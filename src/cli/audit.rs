//! `tellscope audit FILE [--config C] [--out DIR] [--pitcher P]... [--test-season Y]
//!                  [--permutations N] [--seed S] [--fdr Q] [--strict] [--json]`
//!
//! The predictability audit. Writes the report folder (default
//! `reports/<input file stem>`) whole or not at all, and prints a compact
//! staff table with the top tells (or, with --json, summary.json).

use super::LogArgs;
use std::path::{Path, PathBuf};
use tellscope::audit::{self, wording, Audit};
use tellscope::report;
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
        Err(e) => {
            let e = input.name_errors(e);
            // Unusable data: the rejected rows are still kept, with a short
            // page saying why (the run still fails with its exit code).
            if e.exit_code() == 3 {
                if let Ok(rejected) = tellscope::ingest::rejected_rows(&input.path, &settings.input) {
                    if !rejected.is_empty() && report::write_failed_report(&out, &e.to_string(), &rejected).is_ok() {
                        eprintln!("note: {} rejected rows and why are in {}", rejected.len(), out.join("rejected.csv").display());
                    }
                }
            }
            return Err(e);
        }
    };
    let t = tellscope::progress::Timer::start();
    report::write_audit_report(&out, &audit)?;
    t.lap("report");
    if args.json {
        print!("{}", report::json::summary_json(&audit.summary)?);
    } else {
        print_table(&audit, &out);
    }
    Ok(())
}

/// The compact staff table and the top tells.
pub fn print_table(audit: &Audit, out: &Path) {
    let s = &audit.summary;
    if s.evaluation.scheme == "rolling" {
        println!(
            "{} pitches ({} rejected); scored: {}; {} permutations, FDR {}",
            s.input.rows_kept, s.input.rows_rejected, s.evaluation.test, s.settings.permutations, s.settings.fdr
        );
    } else {
        println!(
            "{} pitches ({} rejected); trained on {}, held out {}; {} permutations, FDR {}",
            s.input.rows_kept, s.input.rows_rejected, s.evaluation.train, s.evaluation.test, s.settings.permutations, s.settings.fdr
        );
    }
    println!();
    println!("{:<22} {:>6} {:>6} {:>7} {:>7} {:>7} {:>7} {:>7} {:>6} {:>6}", "pitcher", "train", "test", "prior", "model", "lift", "bits", "q", "tells", "where");
    let mut rows: Vec<_> = s.pitchers.iter().filter(|p| p.is_ok()).collect();
    rows.sort_by(|a, b| b.bits_gained.partial_cmp(&a.bits_gained).unwrap().then(a.pitcher.cmp(&b.pitcher)));
    for p in rows {
        let g = |x: Option<f64>| x.unwrap_or(0.0);
        let name: String = p.pitcher.chars().take(22).collect();
        let line = format!(
            "{:<22} {:>6} {:>6} {:>6.1}% {:>6.1}% {:>+6.0}% {:>+7.3} {:>7} {:>6} {:>6}{}{}",
            name,
            p.n_train,
            p.n_test,
            100.0 * g(p.prior_accuracy),
            100.0 * g(p.model_accuracy),
            100.0 * g(p.lift),
            g(p.bits_gained),
            if g(p.q_value) < 0.001 { "<0.001".to_string() } else { format!("{:.3}", g(p.q_value)) },
            p.tells.iter().filter(|t| t.within.is_none()).count(),
            if p.location.is_some() { p.location_tells.len().to_string() } else { "-".to_string() },
            if p.significant == Some(true) { "  *" } else { "   " },
            if p.location.as_ref().is_some_and(|l| l.significant) { " +" } else { "" }
        );
        println!("{}", line.trim_end());
    }
    for p in s.pitchers.iter().filter(|p| !p.is_ok()) {
        println!("{:<22} {:>6} {:>6}  insufficient data", p.pitcher.chars().take(22).collect::<String>(), p.n_train, p.n_test);
    }
    println!("  * the situation predicts his pitch beyond his mix (q <= {})", s.settings.fdr);
    if s.pitchers.iter().any(|p| p.location.is_some()) {
        println!("  where: his location tells; + the situation predicts where a pitch goes beyond his usual spots for it (q <= {})", s.settings.fdr);
    }
    // Each pitcher's first headline finding, in table order.
    let mut heads: Vec<_> = s.pitchers.iter().filter(|p| p.is_ok() && !p.headline.is_empty()).collect();
    heads.sort_by(|a, b| b.bits_gained.partial_cmp(&a.bits_gained).unwrap().then(a.pitcher.cmp(&b.pitcher)));
    if !heads.is_empty() {
        println!();
        println!("Headlines (the most pitches given away; the report lists up to three per pitcher):");
        for p in heads {
            println!("  {}: {}", p.pitcher, p.headline[0]);
        }
    }
    // Tells beyond the sheet (count and side tells are the headlines' sheet cells).
    let mut top: Vec<_> = s
        .pitchers
        .iter()
        .flat_map(|p| p.tells.iter().filter(|t| t.within.is_none() && t.layer == tellscope::tells::Layer::Beyond))
        .collect();
    // Tells that held in the held-out games first, then the strongest.
    top.sort_by(|a, b| {
        let ha = wording::held(a) == Some(true);
        let hb = wording::held(b) == Some(true);
        hb.cmp(&ha).then(b.strength().partial_cmp(&a.strength()).unwrap()).then(a.pitcher.cmp(&b.pitcher))
    });
    if !top.is_empty() {
        println!();
        println!("Top tells beyond the sheet:");
        for t in top.iter().take(8) {
            let checked = s
                .pitchers
                .iter()
                .find(|p| p.pitcher == t.pitcher)
                .map_or(s.evaluation.tells_checked_on.as_str(), |p| p.evaluation.tells_checked_on.as_str());
            println!("  {}: {}", t.pitcher, wording::tell_sentence(t, checked));
        }
    }
    println!();
    println!("Report: {}", out.join("index.html").display());
}
