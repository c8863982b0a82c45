//! Held-out schemes. Models are always scored on games they were not
//! fitted on, and later than every game they were fitted on.

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
        }
    }
}
