//! Permutation refits per second, one thread, under the audit's own rolling
//! evaluation: for three pitchers of a log (by default the demo's two
//! starters and a reliever; with `TELLSCOPE_REFIT_LOG` set, that log's
//! pitchers with the most, the median and the fewest pitches among those
//! with at least 1,000), the task is built once and then every refit
//! shuffles the labels and reruns the whole fit (priors, tree, held-out
//! scoring) through the audit's own `permute::null_statistic`, for the
//! whole-model test and the beyond-the-sheet test. Best of five rounds of
//! 200 refits. Prints figures; asserts nothing about time.
//!
//!     cargo bench --bench refit
//!     TELLSCOPE_REFIT_LOG=/var/tmp/tellscope-bench/realistic-league.csv cargo bench --bench refit
//!     TELLSCOPE_REFIT_ONLY=where cargo bench --bench refit   # one kind (whole, beyond or where), for a profiler

use std::path::{Path, PathBuf};
use std::time::Instant;

use tellscope::audit::permute::{null_statistic, Null};
use tellscope::evaluate::split::PitcherPlan;
use tellscope::evaluate::task::PitcherTask;
use tellscope::settings::{ConfigFile, Overrides, Settings};

const REFITS: usize = 200;
const ROUNDS: usize = 5;

fn main() {
    let custom = std::env::var_os("TELLSCOPE_REFIT_LOG").map(PathBuf::from);
    let only = std::env::var("TELLSCOPE_REFIT_ONLY").ok();
    let wanted = |kind: &str| only.as_deref().is_none_or(|o| o == kind);
    let log_path = custom.clone().unwrap_or_else(|| Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data/demo-log.csv"));
    let settings = Settings::resolve(&ConfigFile::default(), &Overrides::default()).unwrap();
    let ing = tellscope::ingest::load(&log_path, &settings.input).unwrap();
    let log = &ing.log;
    let sit = tellscope::situations::build(log);
    let mut by_pitcher: Vec<Vec<u32>> = vec![Vec::new(); log.pitchers.len()];
    for i in 0..log.len() as u32 {
        by_pitcher[log.pitcher[i as usize] as usize].push(i);
    }
    let names: Vec<String> = if custom.is_some() {
        let mut big: Vec<usize> = (0..by_pitcher.len()).filter(|&p| by_pitcher[p].len() >= 1000).collect();
        big.sort_by_key(|&p| (std::cmp::Reverse(by_pitcher[p].len()), p));
        [0, big.len() / 2, big.len().saturating_sub(1)].iter().filter_map(|&i| big.get(i)).map(|&p| log.pitchers[p].clone()).collect()
    } else {
        ["Oren Vasquell", "Teodor Brimley", "Jory Kestenbaum"].iter().map(|s| s.to_string()).collect()
    };
    for name in names {
        let p = log.pitchers.iter().position(|x| *x == name).unwrap();
        let rows = by_pitcher[p].clone();
        let plan = PitcherPlan::rolling(log, &rows, settings.audit.forward_blocks(), settings.audit.min_train_pitches(), settings.audit.min_test_pitches());
        let task = PitcherTask::build(log, &sit, &plan, p as u32, rows);
        for null in [Null::Situation, Null::BeyondSheet] {
            if !wanted(if null == Null::Situation { "whole" } else { "beyond" }) {
                continue;
            }
            let mut ws = null.workspace(&task);
            let mut labels = task.labels.clone();
            let mut best = f64::INFINITY;
            let mut check = 0.0;
            for _ in 0..ROUNDS {
                let t = Instant::now();
                for j in 0..REFITS {
                    check += null_statistic(null, &task, &settings, j as u64, &mut ws, &mut labels).secondary;
                }
                best = best.min(t.elapsed().as_secs_f64());
            }
            println!(
                "{name:<20} {:<7} {:>5} training, {:>5} held-out pitches, {} classes: {:7.1} us per refit, {:6.0} refits/s (checksum {check:.3})",
                if null == Null::Situation { "whole" } else { "beyond" },
                task.n_train(),
                task.n_test(),
                task.n_classes,
                1e6 * best / REFITS as f64,
                REFITS as f64 / best
            );
        }
        // Where he throws it: every pitch type's region task refitted.
        if let (true, Some(regions)) = (wanted("where"), tellscope::audit::location::row_regions(log)) {
            use tellscope::audit::location::{null_statistic, scratch, PitcherLocation};
            let loc = PitcherLocation::build(&task, &regions, &settings);
            if loc.has_figures() {
                let mut s = scratch(&loc);
                let mut best = f64::INFINITY;
                let mut check = 0.0;
                for _ in 0..ROUNDS {
                    let t = Instant::now();
                    for j in 0..REFITS {
                        check += null_statistic(&loc, &name, &settings, j as u64, &mut s).secondary;
                    }
                    best = best.min(t.elapsed().as_secs_f64());
                }
                let rows: usize = loc.parts.iter().map(|p| p.task.n_train()).sum();
                println!(
                    "{name:<20} {:<7} {:>5} training pitches over {} types: {:7.1} us per refit, {:6.0} refits/s (checksum {check:.3})",
                    "where",
                    rows,
                    loc.parts.len(),
                    1e6 * best / REFITS as f64,
                    REFITS as f64 / best
                );
            }
        }
    }
}
