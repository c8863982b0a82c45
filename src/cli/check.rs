//! `tellscope check FILE [--config C] [--strict]`
//!
//! Validates a pitch log and prints what it holds: rows read and rejected
//! (reasons grouped, with counts and the first line numbers), pitchers with
//! their pitch counts, seasons, pitch types and the optional columns found.
//! Exit 3 when the log is unusable (or has rejected rows under --strict).

use super::LogArgs;
use std::collections::BTreeMap;
use tellscope::ingest::{self, group_rejections};
use tellscope::settings::Overrides;
use tellscope::situations;
use tellscope::Result;

#[derive(clap::Args, Debug)]
pub struct Args {
    #[command(flatten)]
    pub log: LogArgs,
}

pub fn run(args: Args) -> Result<()> {
    let settings = args.log.settings(Overrides::default())?;
    let input = args.log.input()?;
    let shown = if input.is_stdin() { "stdin".to_string() } else { input.path.display().to_string() };
    let ing = match ingest::load(&input.path, &settings.input) {
        Ok(ing) => ing,
        Err(e) => {
            // An unusable log (no valid row, --strict): still list why its
            // rows were rejected, then fail.
            if let Ok(ingest::LeftOut { rejected, set_aside }) = ingest::rows_left_out(&input.path, &settings.input) {
                if !rejected.is_empty() || !set_aside.is_empty() {
                    let loc = ingest::read::Format::of(&input.path).locator();
                    println!("{shown}");
                    println!("  rows rejected  {}", rejected.len());
                    print_rejections(&rejected, loc);
                    if !set_aside.is_empty() {
                        println!("  rows set aside {} (not the pitcher's choice of pitch)", set_aside.len());
                        print_rejections(&set_aside, loc);
                    }
                }
            }
            return Err(input.name_errors(e));
        }
    };
    let log = &ing.log;
    let src = &ing.source;
    let loc = src.format.locator();
    println!("{shown}");
    println!("  rows read      {}", src.rows_read);
    println!("  rows kept      {}", log.len());
    println!("  rows rejected  {}", src.rows_rejected);
    print_rejections(&ing.rejected, loc);
    if src.rows_set_aside > 0 {
        println!("  rows set aside {} (not the pitcher's choice of pitch)", src.rows_set_aside);
        print_rejections(&ing.set_aside, loc);
    }
    let seasons = log.seasons();
    let mut per_season: BTreeMap<i32, (usize, std::collections::BTreeSet<u32>)> = BTreeMap::new();
    for i in 0..log.len() {
        let e = per_season.entry(log.season[i]).or_default();
        e.0 += 1;
        e.1.insert(log.game[i]);
    }
    println!("  seasons        {}", seasons.iter().map(|s| s.to_string()).collect::<Vec<_>>().join(", "));
    for (s, (n, g)) in &per_season {
        println!("    {s}: {n} pitch{} in {} game{}", if *n == 1 { "" } else { "es" }, g.len(), if g.len() == 1 { "" } else { "s" });
    }
    let mut type_counts = vec![0usize; log.pitch_types.len()];
    for &t in &log.pitch_type {
        type_counts[t as usize] += 1;
    }
    println!("  pitch types    {}", log.pitch_types.len());
    for (t, n) in log.pitch_types.iter().zip(&type_counts) {
        println!("    {t:<14} {n:>8}  {:>5.1}%", 100.0 * *n as f64 / log.len() as f64);
    }
    let mut per_pitcher: Vec<(usize, BTreeMap<i32, usize>, &str)> =
        log.pitchers.iter().map(|p| (0, BTreeMap::new(), p.as_str())).collect();
    for i in 0..log.len() {
        let e = &mut per_pitcher[log.pitcher[i] as usize];
        e.0 += 1;
        *e.1.entry(log.season[i]).or_default() += 1;
    }
    println!("  pitchers       {}", log.pitchers.len());
    for (n, by_season, name) in &per_pitcher {
        let s: Vec<String> = by_season.iter().map(|(y, c)| format!("{y}: {c}")).collect();
        println!("    {name:<24} {n:>7} pitch{} ({})", if *n == 1 { "" } else { "es" }, s.join(", "));
    }
    println!(
        "  optional columns present: {}",
        if src.optional_present.is_empty() { "none".to_string() } else { src.optional_present.join(", ") }
    );
    if !src.optional_missing.is_empty() {
        println!("  optional columns absent:  {}", src.optional_missing.join(", "));
    }
    for a in &src.optional_set_aside {
        println!("  optional columns set aside: {} ({})", a.columns.join(", "), a.reason);
    }
    let sit = situations::build(log);
    for (f, why) in &sit.dropped {
        println!("  note: factor {f} is not available: {why}");
    }
    for n in sit.notes.iter().chain(&ingest::log_notes(log, src)) {
        println!("  note: {n}");
    }
    // More seasons than the audit's models learn from.
    let history = settings.audit.history_seasons();
    if seasons.len() > history + 1 {
        println!(
            "  note: {} seasons: the audit's models learn from each pitcher's scored season and the {} before it (older ones only while those hold fewer than {} pitches; [audit] history_seasons)",
            seasons.len(),
            if history == 1 { "season".to_string() } else { format!("{history} seasons") },
            settings.audit.min_train_pitches()
        );
    }
    Ok(())
}

/// The rejected rows' reasons, grouped, with counts and their first lines.
fn print_rejections(rejected: &[ingest::Rejected], loc: &str) {
    for (reason, n, lines) in group_rejections(rejected, 5) {
        let l: Vec<String> = lines.iter().map(|l| l.to_string()).collect();
        println!("    {n:>6} × {reason} ({loc}{} {}{})", if n > 1 { "s" } else { "" }, l.join(", "), if n > lines.len() { ", ..." } else { "" });
    }
}
