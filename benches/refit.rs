//! Permutation refits per second on the demo staff, one thread: for each
//! of three demo pitchers (two starters, one reliever), the task is built
//! once and then every refit shuffles the labels within seasons and reruns
//! the whole fit (priors, tree, held-out scoring) through the audit's own
//! `permute::permuted_statistic`. Best of five rounds of 200 refits. Prints
//! figures; asserts nothing about time.
//!
//!     cargo bench --bench refit

use std::path::Path;
use std::time::Instant;

use tellscope::audit::permute::permuted_statistic;
use tellscope::evaluate::fit::Workspace;
use tellscope::evaluate::split::Plan;
use tellscope::evaluate::task::PitcherTask;
use tellscope::settings::{ConfigFile, Overrides, Settings};

const REFITS: usize = 200;
const ROUNDS: usize = 5;

fn main() {
    let log_path = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data/demo-log.csv");
    let settings = Settings::resolve(&ConfigFile::default(), &Overrides::default()).unwrap();
    let ing = tellscope::ingest::load(&log_path, &settings).unwrap();
    let sit = tellscope::situations::build(&ing.log);
    let plan = Plan::new(&ing.log, None, settings.forward_blocks).unwrap();
    for name in ["Oren Vasquell", "Teodor Brimley", "Jory Kestenbaum"] {
        let p = ing.log.pitchers.iter().position(|x| x == name).unwrap() as u32;
        let rows: Vec<u32> = (0..ing.log.len() as u32).filter(|&i| ing.log.pitcher[i as usize] == p).collect();
        let task = PitcherTask::build(&ing.log, &sit, &plan.local(&ing.log, &rows), p, rows);
        let mut ws = Workspace::new(&task);
        let mut labels = task.labels.clone();
        let mut best = f64::INFINITY;
        let mut check = 0.0;
        for _ in 0..ROUNDS {
            let t = Instant::now();
            for j in 0..REFITS {
                check += permuted_statistic(&task, &settings, j as u64, &mut ws, &mut labels).secondary;
            }
            best = best.min(t.elapsed().as_secs_f64());
        }
        println!(
            "{name:<18} {:>5} training, {:>5} held-out pitches, {} classes: {:7.1} us per refit, {:6.0} refits/s (checksum {check:.3})",
            task.n_train(),
            task.n_test(),
            task.n_classes,
            1e6 * best / REFITS as f64,
            REFITS as f64 / best
        );
    }
}
