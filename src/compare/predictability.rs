//! Predictability in each period and its change.
//!
//! Each period is scored on its own with the audit's machinery: the
//! pitcher's games of the period, in date order, are split into blocks
//! (forward-chaining, `[audit] forward_blocks`), each later block is scored
//! by priors and a tree fitted on the blocks before it, and held-out lift
//! and bits gained come from `evaluate`. So a period's figure answers "how
//! well could his pitch be guessed from the situation, using only what he
//! had shown earlier in that period".
//!
//! * Interval of the change: a percentile bootstrap resampling whole games
//!   (`significance::resample::cluster_bootstrap`), each period's games
//!   resampled on their own (the two-sample bootstrap; Efron & Tibshirani
//!   1993, "An Introduction to the Bootstrap", 8.3), the fitted models held
//!   fixed: it is the uncertainty of the held-out scoring, not of the fit.
//! * Test of the change: a label-swap permutation test. Under the null that
//!   both periods come from the same pitcher, which period a game belongs
//!   to is exchangeable; each permutation deals his games to the two
//!   periods at random (same numbers of games as observed), refits both
//!   periods from scratch and takes the difference again. Two-sided: |after
//!   − before| against the same for the shuffles, with the Besag–Clifford
//!   stopping rule of the audit and p as in `significance::permutation_p`.

use super::stream;
use crate::error::Result;
use crate::evaluate::fit::{argmax, fit_and_score, statistic, Stat, Workspace};
use crate::evaluate::split::Plan;
use crate::evaluate::task::PitcherTask;
use crate::evaluate::{self, HeldOut};
use crate::ingest::PitchLog;
use crate::settings::Settings;
use crate::significance::permutation_p::SequentialPermutation;
use crate::significance::resample::{cluster_bootstrap, quantile_sorted, BootstrapInterval};
use crate::significance::Interval;
use crate::situations::Situations;
use rand::Rng;
use rayon::prelude::*;
use std::collections::BTreeMap;

/// One game's held-out pitches, summed.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct GameScore {
    pub n: f64,
    /// Σ log2(model / prior) at the pitch thrown.
    pub bits: f64,
    pub model_right: f64,
    pub prior_right: f64,
}

/// Bits gained per pitch and lift of a set of games (NaN when undefined).
pub fn figures_of(games: &[&GameScore]) -> (f64, f64) {
    let s = games.iter().fold(GameScore::default(), |a, g| GameScore {
        n: a.n + g.n,
        bits: a.bits + g.bits,
        model_right: a.model_right + g.model_right,
        prior_right: a.prior_right + g.prior_right,
    });
    let bits = if s.n > 0.0 { s.bits / s.n } else { f64::NAN };
    let lift = if s.prior_right > 0.0 { (s.model_right - s.prior_right) / s.prior_right } else { f64::NAN };
    (bits, lift)
}

/// One period's fit of one pitcher.
#[derive(Debug, Clone)]
pub struct PeriodFit {
    pub task: PitcherTask,
    pub figures: HeldOut,
    /// The permutation statistic (`[audit] statistic`) of the fit, with the
    /// audit's unpruned-tree tie-breaker.
    pub statistic: Stat,
    /// Held-out pitches of a type not yet seen in their fold's training.
    pub unseen: usize,
    /// Held-out games in game-id order.
    pub games: Vec<GameScore>,
}

/// The pitcher's task over `rows` (global, log order), forward-chained
/// within those rows' games.
pub fn build_task(log: &PitchLog, sit: &Situations, pitcher: u32, rows: &[u32], blocks: usize, label: &str) -> Result<PitcherTask> {
    let plan = Plan::forward_chaining(log, rows, blocks, label)?;
    Ok(PitcherTask::build(log, sit, &plan.local(log, rows), pitcher, rows.to_vec()))
}

/// Fit and score a task. With `per_game` the held-out figures and each
/// game's sums are kept; without, only the statistic is (a refit).
pub fn fit(task: &PitcherTask, settings: &Settings, per_game: bool) -> (HeldOut, Stat, usize, Vec<GameScore>) {
    let mut ws = Workspace::new(task);
    let scored = fit_and_score(task, &task.labels, settings, &mut ws, per_game);
    let figures = evaluate::overall(&scored, &task.labels);
    let stat = statistic(&scored, settings.statistic);
    let mut games = Vec::new();
    if per_game {
        let mut by_game: BTreeMap<u32, GameScore> = BTreeMap::new();
        for (i, &r) in scored.rows.iter().enumerate() {
            let y = task.labels[r as usize] as usize;
            let (m, p) = (scored.model_row(i), scored.prior_row(i));
            let g = by_game.entry(task.game[r as usize]).or_default();
            g.n += 1.0;
            g.bits += (m[y] / p[y]).log2();
            g.model_right += (argmax(m) == y) as u8 as f64;
            g.prior_right += (argmax(p) == y) as u8 as f64;
        }
        games = by_game.into_values().collect();
    }
    (figures, stat, scored.unseen, games)
}

pub fn fit_period(task: PitcherTask, settings: &Settings) -> PeriodFit {
    let (figures, statistic, unseen, games) = fit(&task, settings, true);
    PeriodFit { task, figures, statistic, unseen, games }
}

/// A period's bootstrap: the interval of its bits gained and every
/// resample's (bits, lift), in resample order.
#[derive(Debug, Clone)]
pub struct Resampled {
    pub bits: BootstrapInterval,
    pub draws: Vec<(f64, f64)>,
}

/// Resample a period's games `resamples` times with `seed`.
pub fn resample_period(games: &[GameScore], resamples: usize, seed: u64) -> Option<Resampled> {
    let mut seen: Vec<(f64, f64)> = Vec::with_capacity(resamples + 1);
    let bits = cluster_bootstrap(
        games,
        |draw| {
            let v = figures_of(draw);
            seen.push(v);
            v.0
        },
        resamples,
        0.95,
        seed,
    )?;
    // cluster_bootstrap evaluates the statistic on the original games first,
    // then once per resample in order: keep the resamples.
    debug_assert_eq!(seen.len(), resamples + 1);
    let draws = seen.split_off(1);
    Some(Resampled { bits, draws })
}

/// 95% percentile interval of `after − before` from paired resamples of two
/// independent bootstraps (`pick` chooses bits or lift); resamples where
/// either side is undefined are left out.
pub fn difference_interval(before: &Resampled, after: &Resampled, pick: fn(&(f64, f64)) -> f64) -> Option<Interval> {
    let mut d: Vec<f64> = before
        .draws
        .iter()
        .zip(&after.draws)
        .map(|(b, a)| pick(a) - pick(b))
        .filter(|x| x.is_finite())
        .collect();
    if d.is_empty() {
        return None;
    }
    d.sort_by(f64::total_cmp);
    Some(Interval { low: quantile_sorted(&d, 0.025), high: quantile_sorted(&d, 0.975) })
}

/// Outcome of the label-swap test.
#[derive(Debug, Clone, PartialEq)]
pub struct SwapResult {
    pub p: f64,
    pub permutations: usize,
    pub stopped_early: bool,
}

/// Shuffles are run in parallel batches of this size, then read in order
/// for the stopping rule (so the result does not depend on thread count).
const BATCH: usize = 16;

/// `after − before`, both parts of the statistic, as magnitudes: the
/// label-swap test is two-sided.
pub fn abs_difference(before: Stat, after: Stat) -> Stat {
    Stat { primary: (after.primary - before.primary).abs(), secondary: (after.secondary - before.secondary).abs() }
}

/// Label-swap permutation test of `observed` = |statistic(after) −
/// statistic(before)| (see [`abs_difference`]) for one pitcher.
#[allow(clippy::too_many_arguments)]
pub fn label_swap_test(
    log: &PitchLog,
    sit: &Situations,
    pitcher: u32,
    name: &str,
    rows_before: &[u32],
    rows_after: &[u32],
    observed: Stat,
    settings: &Settings,
    permutations: usize,
    progress: &(dyn Fn(u64) + Sync),
) -> SwapResult {
    let mut pooled: Vec<u32> = rows_before.iter().chain(rows_after).copied().collect();
    pooled.sort_unstable();
    let mut games: Vec<(i32, u32)> = pooled.iter().map(|&r| (log.date[r as usize], log.game[r as usize])).collect();
    games.sort_unstable();
    games.dedup();
    let n_before_games = {
        let mut g: Vec<u32> = rows_before.iter().map(|&r| log.game[r as usize]).collect();
        g.sort_unstable();
        g.dedup();
        g.len()
    };
    let game_index: BTreeMap<u32, usize> = games.iter().enumerate().map(|(i, &(_, g))| (g, i)).collect();
    let row_game: Vec<usize> = pooled.iter().map(|&r| game_index[&log.game[r as usize]]).collect();
    let blocks = settings.forward_blocks;
    let one = |j: usize| -> Option<Stat> {
        let mut rng = stream(settings.seed, name, "label-swap", j as u64);
        let mut in_before: Vec<bool> = (0..games.len()).map(|i| i < n_before_games).collect();
        for i in (1..in_before.len()).rev() {
            let k = rng.random_range(0..=i);
            in_before.swap(i, k);
        }
        let (mut rb, mut ra) = (Vec::new(), Vec::new());
        for (&r, &g) in pooled.iter().zip(&row_game) {
            if in_before[g] {
                rb.push(r)
            } else {
                ra.push(r)
            }
        }
        let stat = |rows: &[u32]| -> Option<Stat> {
            let t = build_task(log, sit, pitcher, rows, blocks, "shuffled period").ok()?;
            Some(fit(&t, settings, false).1)
        };
        Some(abs_difference(stat(&rb)?, stat(&ra)?))
    };
    let m = permutations;
    // As in audit::permute: each null value is fed to the stopping rule as
    // 1 (reaches the observed pair) or 0, against 0.5.
    let mut seq = SequentialPermutation::new(0.5, m, settings.stop_after_exceedances);
    let mut start = 0;
    while start < m && !seq.is_done() {
        let end = (start + BATCH).min(m);
        let null: Vec<Option<Stat>> = (start..end).into_par_iter().map(one).collect();
        for s in null {
            if seq.is_done() {
                break;
            }
            // A shuffle that cannot be scored counts as reaching the
            // observed value, the conservative choice.
            seq.push(if s.map(|s| s.reaches(&observed)).unwrap_or(true) { 1.0 } else { 0.0 });
        }
        progress((end - start) as u64);
        start = end;
    }
    SwapResult { p: seq.p_value(), permutations: seq.permutations_run(), stopped_early: seq.stopped_early() }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn figures_of_games() {
        let g = [
            GameScore { n: 10.0, bits: 1.0, model_right: 6.0, prior_right: 5.0 },
            GameScore { n: 30.0, bits: 1.0, model_right: 14.0, prior_right: 15.0 },
        ];
        let (bits, lift) = figures_of(&g.iter().collect::<Vec<_>>());
        assert!((bits - 2.0 / 40.0).abs() < 1e-15);
        assert!((lift - 0.0).abs() < 1e-15);
    }
}
