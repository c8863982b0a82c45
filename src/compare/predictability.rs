//! Predictability in each period and its change.
//!
//! * **Each period's figure** is cross-fitted over its own games: the
//!   pitcher's games of the period, in date order, are dealt to
//!   `[audit] forward_blocks` folds by rank (game i to fold i mod k), and
//!   each fold is scored by priors and a tree fitted on his other games of
//!   the period. Every game is scored by a model that did not see it, so the
//!   figure rests on all his pitches there.
//! * **Test of the change**: a label-swap permutation test of a
//!   studentised statistic, T = (b_after − b_before) / sqrt(v_after +
//!   v_before), b a period's bits gained per pitch and v its game-clustered
//!   variance (the ratio estimator's, games as clusters). Games are dealt
//!   at random to the two periods (the observed numbers of games; each
//!   period keeps its games in date order), both periods are cross-fitted
//!   again from scratch, and T is taken again. Studentising makes the test
//!   valid for "the same predictability" rather than "every game is
//!   exchangeable" (Chung & Romano 2013, "Exact and asymptotically robust
//!   permutation tests", Annals of Statistics 41, 484–507). Two-sided
//!   (|T|), since compare asks whether he changed either way; the
//!   Besag–Clifford stopping rule of the audit and p as in
//!   `significance::permutation_p`.
//! * **Interval of the change**: the observed difference ± the 95% point
//!   of |difference| over the same refitted deals (a permutation interval
//!   under a shift model; Ernst 2004, "Permutation methods: a basis for
//!   exact inference", Statistical Science 19, 676–685, §4), so the refit's
//!   noise is in it.
//! * **Transfer**: the before-period model (fitted on all his before
//!   games) scored on the after games, its situational tilt carried onto
//!   his after mix, against that mix: do last period's tendencies still
//!   tell anything?

use super::stream;
use crate::audit::permute::Pilot;
use crate::error::Result;
use crate::evaluate::fit::{self, argmax, Workspace};
use crate::evaluate::split::{PitcherPlan, Plan};
use crate::evaluate::task::PitcherTask;
use crate::evaluate::HeldOut;
use crate::ingest::PitchLog;
use crate::settings::Settings;
use crate::significance::resample::{cluster_bootstrap, BootstrapInterval};
use crate::significance::Interval;
use crate::situations::Situations;
use rand::Rng;
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

/// One period's fit of one pitcher: the forward-chained task its tells
/// are found and checked on, and its cross-fitted predictability.
#[derive(Debug, Clone)]
pub struct PeriodFit {
    pub task: PitcherTask,
    pub cross: CrossFitted,
}

/// The pitcher's task over `rows` (global, log order), forward-chained
/// within those rows' games (tells are found on its earlier blocks and
/// checked on its last).
pub fn build_task(log: &PitchLog, sit: &Situations, pitcher: u32, rows: &[u32], blocks: usize, label: &str) -> Result<PitcherTask> {
    let plan = Plan::forward_chaining(log, rows, blocks, label)?;
    Ok(PitcherTask::build(log, sit, &plan.local(log, rows), pitcher, rows.to_vec()))
}

/// A period's fit: `task` kept for its tells, predictability cross-fitted.
pub fn fit_period(log: &PitchLog, sit: &Situations, task: PitcherTask, settings: &Settings, label: &str) -> Result<PeriodFit> {
    let cross = cross_fit(log, sit, task.pitcher, &task.rows, settings, label)?;
    Ok(PeriodFit { task, cross })
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

/// Outcome of the label-swap test.
#[derive(Debug, Clone, PartialEq)]
pub struct SwapResult {
    pub p: f64,
    pub permutations: usize,
    pub stopped_early: bool,
    /// No label swap reached the observed change.
    pub reached_none: bool,
    /// Stopped at the early decision's size.
    pub decided_early: bool,
    /// Stopped once no outcome of its remaining deals could get it flagged
    /// among the predictability changes: its p-value is that of the deals
    /// drawn, an estimate.
    pub ruled_out: bool,
    /// Observed studentised statistic.
    pub t: f64,
    /// 95% interval of the bits and lift differences (see the module).
    pub bits_interval: Interval,
    pub lift_interval: Option<Interval>,
}

/// A period scored by cross-fitting (see the module).
#[derive(Debug, Clone)]
pub struct CrossFitted {
    pub figures: HeldOut,
    /// Game-clustered variance of `figures.bits_gained`.
    pub bits_var: f64,
    /// Scored pitches of a type unseen in their fold's training.
    pub unseen: usize,
    /// Pitches that trained each fold, on average.
    pub n_train: usize,
    /// Every game's sums, in game-id order.
    pub games: Vec<GameScore>,
}

/// Bits per pitch of a set of games and its variance, games as clusters:
/// the ratio estimator r = Σbits/Σn with variance G/(G−1) Σ(bits_g −
/// r n_g)² / (Σn)² (Cochran 1977, "Sampling Techniques", 6.9, with the
/// usual small-sample factor).
pub fn bits_and_variance(games: &[GameScore]) -> (f64, f64) {
    let n: f64 = games.iter().map(|g| g.n).sum();
    if n <= 0.0 {
        return (f64::NAN, f64::NAN);
    }
    let r = games.iter().map(|g| g.bits).sum::<f64>() / n;
    let k = games.len() as f64;
    if k < 2.0 {
        return (r, 0.0);
    }
    let ss: f64 = games.iter().map(|g| (g.bits - r * g.n).powi(2)).sum();
    (r, k / (k - 1.0) * ss / (n * n))
}

/// The studentised difference of two periods (0 when neither varies).
pub fn studentised(before: &CrossFitted, after: &CrossFitted) -> f64 {
    let d = after.figures.bits_gained - before.figures.bits_gained;
    let se = (before.bits_var + after.bits_var).sqrt();
    if se > 0.0 && d.is_finite() {
        d / se
    } else {
        0.0
    }
}

/// Cross-fit one pitcher's `rows` (global, log order) in `folds` folds.
pub fn cross_fit(log: &PitchLog, sit: &Situations, pitcher: u32, rows: &[u32], settings: &Settings, label: &str) -> Result<CrossFitted> {
    let folds = settings.audit.forward_blocks();
    let plan = PitcherPlan::cross_fit(log, rows, folds, label)?;
    let task = PitcherTask::build(log, sit, &plan, pitcher, rows.to_vec());
    let n_train: usize = task.folds.iter().map(|f| f.train.len()).sum();
    let (unseen, games) = fit_games(&task, settings);
    let s = games.iter().fold(GameScore::default(), |a, g| GameScore {
        n: a.n + g.n,
        bits: a.bits + g.bits,
        model_right: a.model_right + g.model_right,
        prior_right: a.prior_right + g.prior_right,
    });
    let (bits, bits_var) = bits_and_variance(&games);
    let ratio = |a: f64, b: f64| if b > 0.0 { a / b } else { f64::NAN };
    let figures = HeldOut {
        n: s.n as usize,
        prior_accuracy: ratio(s.prior_right, s.n),
        model_accuracy: ratio(s.model_right, s.n),
        lift: ratio(s.model_right - s.prior_right, s.prior_right),
        bits_gained: bits,
    };
    Ok(CrossFitted { figures, bits_var, unseen, n_train: n_train / folds, games })
}

/// Fit and score a task: its scored pitches of types new to him, and each
/// game's sums in game-id order.
fn fit_games(task: &PitcherTask, settings: &Settings) -> (usize, Vec<GameScore>) {
    let mut ws = Workspace::new(task);
    let scored = fit::score_rows(task, &task.labels, settings, &mut ws);
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
    (scored.unseen, by_game.into_values().collect())
}

/// One label-swap deal's (T, bits difference, lift difference); `None`
/// when a dealt period cannot be cross-fitted.
pub type Deal = Option<(f64, f64, f64)>;

/// One pitcher's label swaps: his pooled games, the observed figures, and
/// deal `j` on demand (see the module).
pub struct Deals<'a> {
    log: &'a PitchLog,
    sit: &'a Situations,
    pitcher: u32,
    name: &'a str,
    settings: &'a Settings,
    pooled: Vec<u32>,
    /// Each pooled row's game, as an index into the pooled games.
    row_game: Vec<usize>,
    n_games: usize,
    n_before_games: usize,
    t_obs: f64,
    d_obs: f64,
    l_obs: f64,
}

impl<'a> Deals<'a> {
    #[allow(clippy::too_many_arguments)]
    pub fn new(
        log: &'a PitchLog,
        sit: &'a Situations,
        pitcher: u32,
        name: &'a str,
        rows_before: &[u32],
        rows_after: &[u32],
        observed: [&CrossFitted; 2],
        settings: &'a Settings,
    ) -> Deals<'a> {
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
        Deals {
            log,
            sit,
            pitcher,
            name,
            settings,
            pooled,
            row_game,
            n_games: games.len(),
            n_before_games,
            t_obs: studentised(observed[0], observed[1]),
            d_obs: observed[1].figures.bits_gained - observed[0].figures.bits_gained,
            l_obs: observed[1].figures.lift - observed[0].figures.lift,
        }
    }

    /// Deal `j`: games dealt at random to the two periods (the observed
    /// numbers of games) by the deal's own stream, both cross-fitted again.
    pub fn deal(&self, j: u64) -> Deal {
        let mut rng = stream(self.settings.audit.seed(), self.name, "label-swap", j);
        let mut in_before: Vec<bool> = (0..self.n_games).map(|i| i < self.n_before_games).collect();
        for i in (1..in_before.len()).rev() {
            let k = rng.random_range(0..=i);
            in_before.swap(i, k);
        }
        let (mut rb, mut ra) = (Vec::new(), Vec::new());
        for (&r, &g) in self.pooled.iter().zip(&self.row_game) {
            if in_before[g] {
                rb.push(r)
            } else {
                ra.push(r)
            }
        }
        let b = cross_fit(self.log, self.sit, self.pitcher, &rb, self.settings, "shuffled period").ok()?;
        let a = cross_fit(self.log, self.sit, self.pitcher, &ra, self.settings, "shuffled period").ok()?;
        Some((studentised(&b, &a), a.figures.bits_gained - b.figures.bits_gained, a.figures.lift - b.figures.lift))
    }

    /// Does a deal reach the observed |T|? A deal that cannot be scored
    /// counts as reaching it, the conservative choice.
    fn reaches(&self, d: &Deal) -> bool {
        match d {
            Some((t, _, _)) => t.abs() >= self.t_obs.abs() * (1.0 - 1e-9),
            None => true,
        }
    }

    /// The pilot: the test's first deals, up to `PILOT` of at most
    /// `permutations`, until one reaches the observed change; and whether
    /// none did (the audit's pilot, `permute::pilot`). Its deals are handed
    /// to [`Deals::test`], so none is drawn twice; the pilot only sizes the
    /// other pitchers' early decisions.
    pub fn pilot(&self, permutations: usize) -> Pilot<Deal> {
        crate::audit::permute::pilot((), crate::audit::permute::pilot_len(permutations), |j, _| self.deal(j), |d| self.reaches(d))
    }

    /// The label-swap result of a run of deals: its p-value, and the
    /// interval of the change from the same deals.
    fn result(&self, run: crate::significance::driver::Sequential<Deal>) -> SwapResult {
        let (mut spread_bits, mut spread_lift) = (Vec::new(), Vec::new());
        for &(_, d, l) in run.nulls.iter().flatten() {
            spread_bits.push(d.abs());
            if l.is_finite() {
                spread_lift.push(l.abs());
            }
        }
        let half = |mut v: Vec<f64>| -> Option<f64> {
            if v.is_empty() {
                return None;
            }
            v.sort_by(f64::total_cmp);
            // The ceil(0.95 (m + 1))-th smallest, capped at the largest.
            let k = ((0.95 * (v.len() + 1) as f64).ceil() as usize).clamp(1, v.len());
            Some(v[k - 1])
        };
        let bits_half = half(spread_bits).unwrap_or(0.0);
        let l_obs = self.l_obs;
        let lift_interval = half(spread_lift).filter(|_| l_obs.is_finite()).map(|h| Interval { low: l_obs - h, high: l_obs + h });
        SwapResult {
            p: run.p_value,
            permutations: run.permutations,
            stopped_early: run.stopped_early,
            reached_none: run.reached_none,
            decided_early: run.decided_early,
            ruled_out: run.ruled_out,
            t: self.t_obs,
            bits_interval: Interval { low: self.d_obs - bits_half, high: self.d_obs + bits_half },
            lift_interval,
        }
    }
}

/// The label-swap permutation tests of one Benjamini–Hochberg family (the
/// predictability changes, one per pitcher), run together: each at most
/// `permutations` deals, the first ones from its pilot, decided early for
/// a clear change after its `decide_at` deals (sized by the other pitchers'
/// pilots, as in the audit); a test that can no longer be flagged in the
/// family stops (`significance::driver::drive_family`). Each test's
/// interval of the change comes from its own deals.
pub fn swap_tests(deals: &[Deals], members: Vec<crate::significance::driver::Member<Deal>>, permutations: usize, settings: &Settings, progress: &(dyn Fn(u64) + Sync)) -> Vec<SwapResult> {
    let runs = crate::significance::driver::drive_family(
        deals,
        members,
        permutations,
        settings.audit.stop_after_exceedances(),
        Some(settings.audit.fdr()),
        progress,
        |_| (),
        |d, j, _| d.deal(j),
        |d, v| d.reaches(v),
    );
    deals.iter().zip(runs).map(|(d, run)| d.result(run)).collect()
}

/// Last period's tendencies on this period's games: the before model
/// (priors and tree fitted on every before game) scores the after games,
/// its probabilities carried onto his after mix (each type's probability
/// times after share / before share, renormalised), against that mix as
/// the plain guess. Bits per pitch; `None` when no after game can be
/// scored (every after pitch of a type new to him is left out).
pub fn transfer(log: &PitchLog, sit: &Situations, pitcher: u32, rows_before: &[u32], rows_after: &[u32], settings: &Settings) -> Option<f64> {
    let mut rows: Vec<u32> = rows_before.iter().chain(rows_after).copied().collect();
    rows.sort_unstable();
    let after: Vec<bool> = rows.iter().map(|r| rows_after.binary_search(r).is_ok()).collect();
    let plan = PitcherPlan::train_then_score(log, &rows, &after, "the before period", "the after period");
    let task = PitcherTask::build(log, sit, &plan, pitcher, rows.clone());
    let mut ws = Workspace::new(&task);
    let scored = fit::observe(&task, &task.labels, settings, &mut ws);
    let k = task.n_classes;
    // His counts of each class before (training rows) and after (scored).
    // A type he did not throw before cannot be guessed by the before
    // model: its pitches are left out (as `unseen` in the audit), and both
    // guesses share out only the types he threw before, so a new pitch
    // never shows as a gain or a loss.
    let (mut before, mut after) = (vec![0.0; k], vec![0.0; k]);
    let mut is_after = vec![false; task.labels.len()];
    for &i in &task.held_out {
        is_after[i as usize] = true;
    }
    for (i, &y) in task.labels.iter().enumerate() {
        if is_after[i] {
            after[y as usize] += 1.0;
        } else {
            before[y as usize] += 1.0;
        }
    }
    let seen: Vec<bool> = before.iter().map(|&b| b > 0.0).collect();
    // Add-one smoothing over the seen types, so no type is impossible.
    let (tb, ta): (f64, f64) = (0..k).filter(|&c| seen[c]).fold((0.0, 0.0), |(x, y), c| (x + before[c] + 1.0, y + after[c] + 1.0));
    let share_after = |c: usize| (after[c] + 1.0) / ta;
    let tilt: Vec<f64> = (0..k).map(|c| if seen[c] { share_after(c) / ((before[c] + 1.0) / tb) } else { 0.0 }).collect();
    let (mut bits, mut n) = (0.0, 0.0);
    for (i, &r) in scored.rows.iter().enumerate() {
        let y = task.labels[r as usize] as usize;
        if !seen[y] {
            continue;
        }
        let m = scored.model_row(i);
        let z: f64 = (0..k).map(|c| m[c] * tilt[c]).sum();
        if z <= 0.0 {
            continue;
        }
        bits += ((m[y] * tilt[y] / z) / share_after(y)).log2();
        n += 1.0;
    }
    (n > 0.0).then(|| bits / n)
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
