//! Held-out schemes. Models are always scored on games they were not
//! fitted on, and later than every game they were fitted on.

use crate::domain::numbers::fmt_n;
use crate::error::{Error, Result};
use crate::ingest::PitchLog;
use serde::Serialize;

/// How the log is split into training and held-out rows.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "scheme", rename_all = "kebab-case")]
pub enum Scheme {
    /// Train on every season before `test`, score on `test`.
    SeasonForward { train: Vec<i32>, test: i32 },
    /// One season: its games split by date into `blocks`; each block after
    /// the first is scored by a model fitted on the blocks before it.
    ForwardChaining { season: i32, blocks: usize },
    /// Per pitcher: his latest season's games split by date into `blocks`,
    /// each scored by a model fitted on everything of his before it
    /// (earlier seasons and earlier blocks).
    Rolling { blocks: usize },
}

/// One pitcher's evaluation, as `summary.json` and the report state it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PitcherEvaluation {
    pub scheme: &'static str,
    /// What the models learned from, in words.
    pub train: String,
    /// Which games and dates were scored, in words.
    pub scored: String,
    /// Pitches in the scored games (before any pitch new to him is left out).
    pub n_scored: usize,
    /// First and last date of the scored games (`YYYY-MM-DD`).
    pub scored_from: Option<String>,
    pub scored_to: Option<String>,
    /// Games scored.
    pub scored_games: usize,
    /// His older seasons the models leave out (rolling scheme, see
    /// [`recent_rows`]); absent when none are.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub older_left_out: Option<OlderLeftOut>,
    /// Where his tells are checked (his held-out rows), in words.
    pub tells_checked_on: String,
    /// `scored` with the scored dates beside its pitch count ("his 61
    /// games of 2026 (925 pitches, 2026-03-27 to 2026-09-26), in 5
    /// blocks ..."), when the words give one; otherwise the report puts the
    /// dates after them ([`PitcherEvaluation::date_span`]).
    #[serde(skip)]
    pub scored_dated: Option<String>,
}

/// Seasons of a pitcher older than the rolling scheme learns from.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct OlderLeftOut {
    /// First and last season left out.
    pub from: i32,
    pub to: i32,
    pub pitches: usize,
}

impl PitcherEvaluation {
    /// The scored games' dates in words: "2026-03-27 to 2026-09-26", one
    /// date for one day, empty with none.
    pub fn date_span(&self) -> String {
        match (&self.scored_from, &self.scored_to) {
            (Some(a), Some(b)) if a != b => format!("{a} to {b}"),
            (Some(a), _) => a.clone(),
            _ => String::new(),
        }
    }
}

/// A plan for one pitcher's rows (local indices, his rows in log order):
/// which fold scores each row, from which fold on it trains, the rows tells
/// are found on and checked on, and the permutation stratum of each row
/// (the unit within which his labels are exchangeable under the null).
#[derive(Debug, Clone)]
pub struct PitcherPlan {
    pub n_folds: usize,
    pub test_fold: Vec<Option<u8>>,
    /// Per row: the first fold whose training includes it (nested folds:
    /// a row trains that fold and every later one). Unused when
    /// `cross_fitted`.
    pub train_from: Vec<Option<u8>>,
    /// Cross-fitted folds: a row trains every fold but the one that
    /// scores it.
    pub cross_fitted: bool,
    pub discovery: Vec<bool>,
    pub held_out: Vec<bool>,
    /// Stratum of each row, numbered from 0.
    pub stratum: Vec<u16>,
    pub evaluation: PitcherEvaluation,
}

impl PitcherPlan {
    /// Does local row `i` train fold `f`?
    #[inline]
    pub fn trains(&self, i: usize, f: usize) -> bool {
        if self.cross_fitted {
            return matches!(self.test_fold[i], Some(t) if t as usize != f);
        }
        matches!(self.train_from[i], Some(b) if (b as usize) <= f)
    }

    /// `folds`-fold cross-fitting over one pitcher's `rows` (global, log
    /// order): his games, in date order, are dealt to folds by rank (game
    /// i to fold i mod folds, so every fold spans the whole period and a
    /// drifting mix is in every fold alike); each fold's games are scored
    /// by a model fitted on his other games of `rows`, so every game is
    /// scored by a model that did not see it. `compare` scores each period
    /// with it. Tells are never found on it (compare finds them on the
    /// forward-chained period); permutation strata are his seasons.
    pub fn cross_fit(log: &PitchLog, rows: &[u32], folds: usize, label: &str) -> Result<PitcherPlan> {
        let mut games: Vec<(i32, u32)> = rows.iter().map(|&r| (log.date[r as usize], log.game[r as usize])).collect();
        games.sort_unstable();
        games.dedup();
        if folds < 2 || games.len() < folds {
            return Err(Error::Data(format!("{label}: {} games, fewer than the {folds} folds cross-fitting needs", games.len())));
        }
        let at = |r: u32| (log.date[r as usize], log.game[r as usize]);
        let test_fold: Vec<Option<u8>> =
            rows.iter().map(|&r| Some((games.binary_search(&at(r)).expect("game listed above") % folds) as u8)).collect();
        let n = rows.len();
        let day = crate::ingest::parse::format_date;
        Ok(PitcherPlan {
            n_folds: folds,
            test_fold,
            train_from: vec![None; n],
            cross_fitted: true,
            discovery: vec![false; n],
            held_out: vec![true; n],
            stratum: season_strata(log, rows),
            evaluation: PitcherEvaluation {
                scheme: "cross-fitted",
                train: format!("his other games of {label}"),
                scored: format!("every game of {label}, each scored by a model fitted on his other games there ({folds} folds)"),
                n_scored: n,
                scored_from: games.first().map(|g| day(g.0)),
                scored_to: games.last().map(|g| day(g.0)),
                scored_games: games.len(),
                older_left_out: None,
                tells_checked_on: format!("no rows of {label} (tells are found on the forward-chained period)"),
                scored_dated: None,
            },
        })
    }

    /// One fold over one pitcher's `rows` (global, log order): the rows
    /// marked `scored` are scored (and his tells checked there) by a model
    /// fitted on all the others. Permutation strata are his seasons.
    pub fn train_then_score(log: &PitchLog, rows: &[u32], scored: &[bool], train: &str, test: &str) -> PitcherPlan {
        let mut scored_games = std::collections::BTreeSet::new();
        for (&r, _) in rows.iter().zip(scored).filter(|x| *x.1) {
            scored_games.insert((log.date[r as usize], log.game[r as usize]));
        }
        let day = crate::ingest::parse::format_date;
        PitcherPlan {
            n_folds: 1,
            test_fold: scored.iter().map(|&s| s.then_some(0)).collect(),
            train_from: scored.iter().map(|&s| (!s).then_some(0)).collect(),
            cross_fitted: false,
            discovery: scored.iter().map(|&s| !s).collect(),
            held_out: scored.to_vec(),
            stratum: season_strata(log, rows),
            evaluation: PitcherEvaluation {
                scheme: "train then score",
                train: train.to_string(),
                scored: test.to_string(),
                n_scored: scored.iter().filter(|&&s| s).count(),
                scored_from: scored_games.first().map(|g| day(g.0)),
                scored_to: scored_games.last().map(|g| day(g.0)),
                scored_games: scored_games.len(),
                older_left_out: None,
                tells_checked_on: test.to_string(),
                scored_dated: None,
            },
        }
    }

    /// The rolling scheme for one pitcher's `rows` (global indices, log
    /// order): his latest season's games, in date order, dealt into
    /// `blocks` consecutive blocks (fewer when he pitched fewer games); each
    /// block scored by a model fitted on all his pitches before it. With no
    /// earlier season the first block only trains. Tells are found on his
    /// earlier seasons when they hold `min_discovery` pitches, and checked
    /// on his latest season; otherwise found on the first half of the
    /// latest season's blocks and checked on the rest.
    ///
    /// A latest season holding fewer than `min_scored` pitches (a log
    /// exported in April, a call-up with a season behind him) is scored
    /// together with his season before it: the window of scored games is
    /// then his last two seasons, dealt into blocks the same way, and the
    /// words say so.
    ///
    /// Permutation strata are his earlier seasons (one each) and the
    /// window's blocks (one each, split by season in a two-season window):
    /// a null shuffle never moves a label across the line between what a
    /// model learns from and what it scores, so a mix that drifts during
    /// the season stays in the null.
    pub fn rolling(log: &PitchLog, rows: &[u32], blocks: usize, min_discovery: usize, min_scored: usize) -> PitcherPlan {
        Self::rolling_recent(log, &Recent { rows: rows.to_vec(), older: None }, blocks, min_discovery, min_scored)
    }

    /// [`PitcherPlan::rolling`] over the rows [`recent_rows`] keeps: its
    /// words and `older_left_out` say which older seasons are left out.
    pub fn rolling_recent(log: &PitchLog, recent: &Recent, blocks: usize, min_discovery: usize, min_scored: usize) -> PitcherPlan {
        let rows = &recent.rows[..];
        let n = rows.len();
        let (from, latest, in_latest) = scored_window(log, rows, min_scored);
        let window = if from < latest { format!("{from}-{latest}") } else { latest.to_string() };
        let two_seasons = from < latest;
        let mut games: Vec<(i32, u32)> = rows
            .iter()
            .filter(|&&r| log.season[r as usize] >= from)
            .map(|&r| (log.date[r as usize], log.game[r as usize]))
            .collect();
        games.sort_unstable();
        games.dedup();
        let n_games = games.len();
        let blocks = blocks.min(n_games).max(1);
        let block_of = |r: usize| -> u8 {
            let i = games.binary_search(&(log.date[r], log.game[r])).expect("a game of his scored window");
            (i * blocks / n_games) as u8
        };
        let mut earlier_seasons: Vec<i32> =
            rows.iter().map(|&r| log.season[r as usize]).filter(|&s| s < from).collect();
        earlier_seasons.sort_unstable();
        earlier_seasons.dedup();
        let n_earlier = rows.iter().filter(|&&r| log.season[r as usize] < from).count();
        // With earlier pitches, fold f scores block f; without, fold f
        // scores block f + 1 (the first block has nothing before it).
        let shift = usize::from(n_earlier == 0);
        let n_folds = blocks - shift;
        let last = (blocks - 1) as u8;
        let first_held = if n_earlier >= min_discovery { 0 } else { blocks.div_ceil(2) as u8 };
        let mut plan = PitcherPlan {
            n_folds,
            test_fold: vec![None; n],
            train_from: vec![None; n],
            cross_fitted: false,
            discovery: vec![false; n],
            held_out: vec![false; n],
            stratum: vec![0; n],
            evaluation: PitcherEvaluation {
                scheme: "rolling",
                train: String::new(),
                scored: String::new(),
                n_scored: 0,
                scored_from: None,
                scored_to: None,
                scored_dated: None,
                scored_games: 0,
                older_left_out: None,
                tells_checked_on: if first_held == 0 {
                    format!("his {window} games")
                } else {
                    format!("his later games of {window}")
                },
            },
        };
        let mut scored_games = std::collections::BTreeSet::new();
        for (i, &r) in rows.iter().enumerate() {
            let r = r as usize;
            if log.season[r] < from {
                plan.train_from[i] = Some(0);
                plan.discovery[i] = true;
                plan.stratum[i] = earlier_seasons.binary_search(&log.season[r]).unwrap() as u16;
                continue;
            }
            let b = block_of(r);
            // Season x block: a block spanning the two seasons of a
            // two-season window is two strata.
            let cell = if two_seasons { 2 * b as usize + usize::from(log.season[r] == latest) } else { b as usize };
            plan.stratum[i] = (earlier_seasons.len() + cell) as u16;
            // Block b trains every fold that scores a later block.
            if b < last {
                plan.train_from[i] = Some(b + 1 - shift as u8);
            }
            if b as usize >= shift {
                plan.test_fold[i] = Some(b - shift as u8);
                plan.evaluation.n_scored += 1;
                scored_games.insert((log.date[r], log.game[r]));
            }
            plan.discovery[i] = b < first_held;
            plan.held_out[i] = b >= first_held;
        }
        let day = crate::ingest::parse::format_date;
        plan.evaluation.scored_games = scored_games.len();
        plan.evaluation.scored_from = scored_games.first().map(|g| day(g.0));
        plan.evaluation.scored_to = scored_games.last().map(|g| day(g.0));
        let per_block = if n_folds > 1 { format!("in {n_folds} blocks by date, each") } else { "in one block".to_string() };
        // The words, with what goes in the pitch count's parentheses.
        // Why a two-season window: his latest season alone is short.
        let why = if two_seasons {
            format!("; {latest} alone holds {}, under the {} scored pitches a figure needs", fmt_n(in_latest), fmt_n(min_scored))
        } else {
            String::new()
        };
        let words = |pitches: &str| {
            if shift == 0 {
                // With older seasons left out, not "everything" before it.
                let basis = if recent.older.is_some() { "his games before it" } else { "everything of his before it" };
                format!(
                    "his {} games of {window} ({pitches}{why}), {per_block} scored by a model fitted on {basis}",
                    scored_games.len()
                )
            } else {
                let first = match n_games - scored_games.len() {
                    1 => "his first game".to_string(),
                    k => format!("his first {k} games"),
                };
                format!(
                    "his last {} of {n_games} games of {window} ({pitches}{why}), {per_block} scored by a model fitted on his games before it; {first} only trained the models",
                    scored_games.len()
                )
            }
        };
        let pitches = format!("{} pitches", fmt_n(plan.evaluation.n_scored));
        let dates = plan.evaluation.date_span();
        plan.evaluation.scored = words(&pitches);
        plan.evaluation.scored_dated = (!dates.is_empty()).then(|| words(&format!("{pitches}, {dates}")));
        plan.evaluation.older_left_out = recent.older.clone();
        plan.evaluation.train = match earlier_seasons.as_slice() {
            [] => format!("his earlier games of {window}"),
            [one] => format!("his {one} games ({} pitches) and his earlier games of {window}", fmt_n(n_earlier)),
            many => format!(
                "his games of {}-{} ({} pitches) and his earlier games of {window}",
                many[0],
                many[many.len() - 1],
                fmt_n(n_earlier)
            ),
        };
        plan
    }
}

/// A pitcher's scored window under the rolling scheme: (its first season,
/// his latest season, his pitches in the latest season). The window is his
/// latest season, or his last two when the latest holds fewer than
/// `min_scored` pitches and he has a season before it.
fn scored_window(log: &PitchLog, rows: &[u32], min_scored: usize) -> (i32, i32, usize) {
    let latest = rows.iter().map(|&r| log.season[r as usize]).max().unwrap_or(0);
    let in_latest = rows.iter().filter(|&&r| log.season[r as usize] == latest).count();
    let previous = rows.iter().map(|&r| log.season[r as usize]).filter(|&s| s < latest).max();
    match previous {
        Some(p) if in_latest < min_scored => (p, latest, in_latest),
        _ => (latest, latest, in_latest),
    }
}

/// A pitcher's rows the rolling scheme uses, and the older ones it leaves
/// out ([`recent_rows`]).
#[derive(Debug, Clone, PartialEq)]
pub struct Recent {
    /// His rows from the first season the models learn from on (log order).
    pub rows: Vec<u32>,
    /// Seasons left out as older; `None` when nothing is.
    pub older: Option<OlderLeftOut>,
}

/// How far back the rolling scheme's models learn, in words: "the season
/// he pitched before the scored one" (`history` 1), or "the 2 seasons he
/// pitched before the scored one".
pub fn history_words(history: usize) -> String {
    match history {
        1 => "the season he pitched before the scored one".to_string(),
        h => format!("the {h} seasons he pitched before the scored one"),
    }
}

/// The rows of a pitcher the rolling scheme learns from and scores: his
/// scored window (see [`PitcherPlan::rolling`]) and the `history` seasons
/// he pitched before it, and further seasons back, latest first, only
/// while those hold fewer than `min_train` pitches. Habits and arsenals
/// move between seasons, and an opponent scouting him now reads his recent
/// seasons, not his first ones: on a long log a veteran's oldest seasons
/// would otherwise outweigh his current ones in the models, his usage
/// prior and his tells. A log of two seasons keeps every row.
pub fn recent_rows(log: &PitchLog, rows: &[u32], history: usize, min_train: usize, min_scored: usize) -> Recent {
    let history = history.max(1);
    let (from, _, _) = scored_window(log, rows, min_scored);
    // His seasons before the window with their pitches, latest first.
    let mut before: Vec<(i32, usize)> = Vec::new();
    for &r in rows {
        let s = log.season[r as usize];
        if s < from {
            match before.iter_mut().find(|(y, _)| *y == s) {
                Some((_, c)) => *c += 1,
                None => before.push((s, 1)),
            }
        }
    }
    before.sort_unstable_by_key(|b| std::cmp::Reverse(b.0));
    let mut kept = 0;
    let mut pitches = 0;
    while kept < before.len() && (kept < history || pitches < min_train) {
        pitches += before[kept].1;
        kept += 1;
    }
    let older = &before[kept..];
    if older.is_empty() {
        return Recent { rows: rows.to_vec(), older: None };
    }
    // The oldest season kept (at least one is: `history` is at least 1).
    let first_kept = before[kept - 1].0;
    Recent {
        rows: rows.iter().copied().filter(|&r| log.season[r as usize] >= first_kept).collect(),
        older: Some(OlderLeftOut { from: older[older.len() - 1].0, to: older[0].0, pitches: older.iter().map(|o| o.1).sum() }),
    }
}

/// Which block (0-based) each row's game falls in, and the fold layout,
/// for the whole log. Rows outside the scheme get `None`.
#[derive(Debug, Clone)]
pub struct Plan {
    pub scheme: Scheme,
    /// Per row: the fold that scores it (`Some(f)` for a held-out row).
    pub test_fold: Vec<Option<u8>>,
    /// Per row: the first fold whose training includes it (`None`: never
    /// trains, e.g. rows of seasons after the test season).
    pub train_from: Vec<Option<u8>>,
    pub n_folds: usize,
    /// Rows used to find tells (discovery) and to check them (held-out).
    pub discovery: Vec<bool>,
    pub held_out: Vec<bool>,
    pub train_label: String,
    pub test_label: String,
    /// Where tells are checked (the held-out rows), in words.
    pub tells_label: String,
}

impl Plan {
    pub fn new(log: &PitchLog, test_season: Option<i32>, blocks: usize) -> Result<Plan> {
        let seasons = log.seasons();
        let n = log.len();
        if let Some(t) = test_season {
            if !seasons.contains(&t) {
                return Err(Error::Usage(format!(
                    "--test-season {t} is not in the log (seasons: {}); pick one of those",
                    seasons.iter().map(|s| s.to_string()).collect::<Vec<_>>().join(", ")
                )));
            }
        }
        let test = test_season.unwrap_or(*seasons.last().expect("non-empty log"));
        let earlier: Vec<i32> = seasons.iter().copied().filter(|&s| s < test).collect();
        if !earlier.is_empty() {
            let test_fold = log.season.iter().map(|&s| (s == test).then_some(0u8)).collect();
            let train_from = log.season.iter().map(|&s| (s < test).then_some(0u8)).collect();
            let discovery = log.season.iter().map(|&s| s < test).collect();
            let held_out = log.season.iter().map(|&s| s == test).collect();
            let train_label = match earlier.as_slice() {
                [one] => format!("season {one}"),
                many => format!("seasons {}-{}", many[0], many[many.len() - 1]),
            };
            return Ok(Plan {
                scheme: Scheme::SeasonForward { train: earlier, test },
                test_fold,
                train_from,
                n_folds: 1,
                discovery,
                held_out,
                train_label,
                test_label: format!("season {test}"),
                tells_label: format!("season {test}"),
            });
        }
        // Forward-chaining within the (only, or earliest chosen) season.
        let season = test;
        let mut games: Vec<(i32, u32)> = (0..n)
            .filter(|&i| log.season[i] == season)
            .map(|i| (log.date[i], log.game[i]))
            .collect();
        games.sort_unstable();
        games.dedup();
        let n_games = games.len();
        if n_games < blocks {
            return Err(Error::Data(format!(
                "season {season} has {n_games} games, fewer than the {blocks} blocks forward-chaining needs; add games or lower [audit] forward_blocks"
            )));
        }
        let mut block_of_game = std::collections::HashMap::new();
        for (i, &(_, g)) in games.iter().enumerate() {
            block_of_game.insert(g, (i * blocks / n_games) as u8);
        }
        let block: Vec<Option<u8>> =
            (0..n).map(|i| if log.season[i] == season { block_of_game.get(&log.game[i]).copied() } else { None }).collect();
        let last = (blocks - 1) as u8;
        // Fold f (0-based) scores block f+1 and trains on blocks 0..=f.
        let test_fold = block.iter().map(|b| b.and_then(|b| if b >= 1 { Some(b - 1) } else { None })).collect();
        // Fold f trains on blocks 0..=f, so block b trains every fold f >= b;
        // the last block is never trained on.
        let train_from = block.iter().map(|b| b.filter(|&b| b < last)).collect();
        let discovery = block.iter().map(|b| matches!(b, Some(b) if *b < last)).collect();
        let held_out = block.iter().map(|b| *b == Some(last)).collect();
        Ok(Plan {
            scheme: Scheme::ForwardChaining { season, blocks },
            test_fold,
            train_from,
            n_folds: blocks - 1,
            discovery,
            held_out,
            // Fold f trains on blocks 0..=f and scores block f + 1.
            train_label: format!("the earlier games of {season}"),
            test_label: format!("the later games of {season} ({} blocks of about {} games, each scored by the blocks before it)", blocks - 1, n_games / blocks),
            tells_label: format!("the last {} games of {season}", n_games - (blocks - 1) * n_games / blocks),
        })
    }

    /// Season-forward on `test`: train on every earlier season, score
    /// `test`. A season with no season before it cannot be scored this way
    /// (the audit's default rolling scheme can).
    pub fn season_forward(log: &PitchLog, test: i32) -> Result<Plan> {
        let seasons = log.seasons();
        if !seasons.contains(&test) {
            return Err(Error::Usage(format!(
                "--test-season {test} is not in the log (seasons: {}); pick one of those",
                seasons.iter().map(|s| s.to_string()).collect::<Vec<_>>().join(", ")
            )));
        }
        if !seasons.iter().any(|&s| s < test) {
            return Err(Error::Usage(format!(
                "--test-season {test} is the log's earliest season, so no earlier season can train on it; pick a later season or leave --test-season out for the rolling scheme"
            )));
        }
        Plan::new(log, Some(test), 2)
    }

    /// Forward-chaining over the games of the listed rows only (one
    /// pitcher's games in one period, say), whatever their seasons: those
    /// games, in date order, are dealt into `blocks` consecutive blocks of
    /// (nearly) equal size; fold f trains on blocks 0..=f and scores block
    /// f + 1, so every scored game is later than every game it was fitted
    /// on. Rows not listed are outside the scheme. `compare` scores each
    /// period on its own with this. `label` names the rows in the plan's
    /// train/test labels; the scheme's `season` is that of the first row.
    pub fn forward_chaining(log: &PitchLog, rows: &[u32], blocks: usize, label: &str) -> Result<Plan> {
        let n = log.len();
        let Some(&first) = rows.first() else {
            return Err(Error::Data(format!("{label}: no pitches to score")));
        };
        let mut games: Vec<(i32, u32)> = rows.iter().map(|&r| (log.date[r as usize], log.game[r as usize])).collect();
        games.sort_unstable();
        games.dedup();
        let n_games = games.len();
        if blocks < 2 || n_games < blocks {
            return Err(Error::Data(format!(
                "{label}: {n_games} games, fewer than the {blocks} blocks forward-chaining needs"
            )));
        }
        let block_of = |g: (i32, u32)| -> u8 {
            let i = games.binary_search(&g).expect("game listed above");
            (i * blocks / n_games) as u8
        };
        let last = (blocks - 1) as u8;
        let mut test_fold = vec![None; n];
        let mut train_from = vec![None; n];
        let mut discovery = vec![false; n];
        let mut held_out = vec![false; n];
        for &r in rows {
            let r = r as usize;
            let b = block_of((log.date[r], log.game[r]));
            test_fold[r] = if b >= 1 { Some(b - 1) } else { None };
            train_from[r] = if b < last { Some(b) } else { None };
            discovery[r] = b < last;
            held_out[r] = b == last;
        }
        Ok(Plan {
            scheme: Scheme::ForwardChaining { season: log.season[first as usize], blocks },
            test_fold,
            train_from,
            n_folds: blocks - 1,
            discovery,
            held_out,
            train_label: format!("the earlier games of {label}"),
            test_label: format!("the later games of {label} ({} blocks of about {} games, each scored by the blocks before it)", blocks - 1, n_games / blocks),
            tells_label: format!("the last {} games of {label}", n_games - (blocks - 1) * n_games / blocks),
        })
    }

    /// Does row `i` train fold `f`?
    #[inline]
    pub fn trains(&self, i: usize, f: usize) -> bool {
        matches!(self.train_from[i], Some(b) if (b as usize) <= f)
    }

    pub fn scheme_name(&self) -> &'static str {
        match self.scheme {
            Scheme::SeasonForward { .. } => "season-forward",
            Scheme::ForwardChaining { .. } => "forward-chaining",
            Scheme::Rolling { .. } => "rolling",
        }
    }

    /// This plan restricted to one pitcher's `rows` (global, log order);
    /// permutation strata are his seasons.
    pub fn local(&self, log: &PitchLog, rows: &[u32]) -> PitcherPlan {
        let at = |r: &u32| *r as usize;
        let mut scored_games = std::collections::BTreeSet::new();
        for r in rows.iter().map(at).filter(|&r| self.test_fold[r].is_some()) {
            scored_games.insert((log.date[r], log.game[r]));
        }
        let day = crate::ingest::parse::format_date;
        PitcherPlan {
            n_folds: self.n_folds,
            test_fold: rows.iter().map(|r| self.test_fold[at(r)]).collect(),
            train_from: rows.iter().map(|r| self.train_from[at(r)]).collect(),
            cross_fitted: false,
            discovery: rows.iter().map(|r| self.discovery[at(r)]).collect(),
            held_out: rows.iter().map(|r| self.held_out[at(r)]).collect(),
            stratum: season_strata(log, rows),
            evaluation: PitcherEvaluation {
                scheme: self.scheme_name(),
                train: self.train_label.clone(),
                scored: self.test_label.clone(),
                n_scored: rows.iter().filter(|r| self.test_fold[at(r)].is_some()).count(),
                scored_from: scored_games.first().map(|g| day(g.0)),
                scored_to: scored_games.last().map(|g| day(g.0)),
                scored_games: scored_games.len(),
                older_left_out: None,
                tells_checked_on: self.tells_label.clone(),
                scored_dated: None,
            },
        }
    }
}

/// Each row's permutation stratum when the strata are his seasons: the
/// index of the row's season among the seasons of `rows`.
fn season_strata(log: &PitchLog, rows: &[u32]) -> Vec<u16> {
    let mut seasons: Vec<i32> = rows.iter().map(|&r| log.season[r as usize]).collect();
    seasons.sort_unstable();
    seasons.dedup();
    rows.iter().map(|&r| seasons.binary_search(&log.season[r as usize]).expect("a season of his rows") as u16).collect()
}

#[cfg(test)]
mod tests {
    use super::{recent_rows, OlderLeftOut, PitcherPlan};
    use crate::ingest::parse::days_from_civil;
    use crate::ingest::PitchLog;

    /// A pitcher's rows by season: `counts[i]` pitches in season `2020 + i`,
    /// one game a season, in season order.
    fn seasons_log(counts: &[usize]) -> (PitchLog, Vec<u32>) {
        let (mut season, mut game, mut date) = (Vec::new(), Vec::new(), Vec::new());
        for (i, &c) in counts.iter().enumerate() {
            for _ in 0..c {
                season.push(2020 + i as i32);
                game.push(i as u32);
                date.push(days_from_civil(2020 + i as i32, 5, 1));
            }
        }
        let rows = (0..season.len() as u32).collect();
        (PitchLog { date, season, game, ..PitchLog::default() }, rows)
    }

    /// The history window, worked by hand: the scored season and the one
    /// before it are kept, older seasons are left out (first, last, pitches),
    /// and older seasons join, latest first, while the kept ones hold fewer
    /// than the minimum to learn from.
    #[test]
    fn the_models_learn_from_the_season_before_and_older_ones_only_when_short() {
        // 2020..2026, 400 a season: 2025 and 2026 kept, 2020-2024 left out.
        let (log, rows) = seasons_log(&[400; 7]);
        let r = recent_rows(&log, &rows, 1, 300, 100);
        assert_eq!(r.rows, (2000..2800).collect::<Vec<u32>>());
        assert_eq!(r.older, Some(OlderLeftOut { from: 2020, to: 2024, pitches: 2000 }));
        // Two seasons of history: 2024 kept too.
        let r = recent_rows(&log, &rows, 2, 300, 100);
        assert_eq!(r.older, Some(OlderLeftOut { from: 2020, to: 2023, pitches: 1600 }));
        // 2025 holds 100 (under 300): 2024 joins (100 + 150 = 250, still
        // under), then 2023 (650): 2020-2022 left out.
        let (log, rows) = seasons_log(&[50, 60, 70, 400, 150, 100, 500]);
        let r = recent_rows(&log, &rows, 1, 300, 100);
        assert_eq!(r.older, Some(OlderLeftOut { from: 2020, to: 2022, pitches: 180 }));
        assert_eq!(r.rows.len(), 400 + 150 + 100 + 500);
        // A short latest season (40, under 100) is scored with 2025: the
        // window is 2025-2026, and the season before it is 2024.
        let (log, rows) = seasons_log(&[500, 500, 500, 500, 500, 500, 40]);
        let r = recent_rows(&log, &rows, 1, 300, 100);
        assert_eq!(r.older, Some(OlderLeftOut { from: 2020, to: 2023, pitches: 2000 }));
        assert_eq!(r.rows.len(), 500 + 500 + 40);
        // Two seasons in all: nothing is left out, whatever the counts.
        for counts in [[400, 400], [10, 1000], [1000, 10]] {
            let (log, rows) = seasons_log(&counts);
            let r = recent_rows(&log, &rows, 1, 300, 100);
            assert_eq!((r.rows, r.older), (rows, None));
        }
        // Not enough anywhere: every season is kept.
        let (log, rows) = seasons_log(&[50, 50, 50, 50]);
        assert_eq!(recent_rows(&log, &rows, 1, 300, 100).older, None);
    }

    /// The rolling plan's words put the scored dates beside the scored
    /// pitches' count (worked by hand): a 2025 of 4 games and a 2026 of 10,
    /// two pitches each, on consecutive days from 1 April and 1 May; all of
    /// 2026 is scored.
    #[test]
    fn rolling_words_date_the_scored_pitches() {
        let (start_25, start_26) = (days_from_civil(2025, 4, 1), days_from_civil(2026, 5, 1));
        let game: Vec<u32> = (0..28).map(|i| i / 2).collect();
        let season: Vec<i32> = game.iter().map(|&g| if g < 4 { 2025 } else { 2026 }).collect();
        let date: Vec<i32> = game.iter().map(|&g| if g < 4 { start_25 + g as i32 } else { start_26 + g as i32 - 4 }).collect();
        let log = PitchLog { date, season, game, ..PitchLog::default() };
        let rows: Vec<u32> = (0..28).collect();
        let e = PitcherPlan::rolling(&log, &rows, 5, 0, 0).evaluation;
        assert_eq!(e.n_scored, 20);
        assert_eq!(e.date_span(), "2026-05-01 to 2026-05-10");
        assert!(e.scored.starts_with("his 10 games of 2026 (20 pitches), in 5 blocks by date"), "{}", e.scored);
        assert_eq!(e.scored_dated.as_deref(), Some(e.scored.replacen("(20 pitches)", "(20 pitches, 2026-05-01 to 2026-05-10)", 1).as_str()));
    }
}
