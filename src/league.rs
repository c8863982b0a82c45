//! The league as the yardstick: how often pitchers of the same throwing
//! hand who throw a pitch throw it in each cell of the sheet (count × batter
//! side), counted once for the whole file, and where a pitcher's figures
//! rank among the league's.
//!
//! A pitcher's own pitches are taken out of the league's counts before his
//! cell is compared with them, so the yardstick is always the other
//! pitchers. With `--team` the other pitchers are the rest of the league;
//! when the file holds one club they are the rest of his staff, and the
//! audit's notes say so.

use crate::ingest::PitchLog;
use crate::situations::levels::Hand;
use std::collections::HashMap;

/// Cells of the sheet: count × batter side.
pub const CELLS: usize = 24;

/// The sheet cell of a row: `count · 2 + side` (side 0 left, 1 right), as
/// `PitcherTask::cell`.
#[inline]
pub fn cell_of(log: &PitchLog, r: usize) -> usize {
    (log.balls[r] as usize * 3 + log.strikes[r] as usize) * 2 + (log.bats[r] == Hand::R) as usize
}

/// A pitch is in a pitcher's arsenal for a season when it is at least this
/// share of his pitches that season: the league's share of a pitch in a
/// cell is taken among pitchers who throw it, so a pitcher is not "above the
/// league" only because few others have his pitch.
pub const ARSENAL_SHARE: f64 = 0.05;

/// Per (throwing hand, season, pitch type t): the pitch counts by cell and
/// type of every pitcher with t in his arsenal that season, for the whole
/// file.
#[derive(Debug, Clone)]
pub struct LeagueCells {
    n_types: usize,
    /// (hand, season, t) → CELLS × n_types counts.
    counts: HashMap<(Hand, i32, u16), Vec<u64>>,
}

impl LeagueCells {
    pub fn build(log: &PitchLog) -> LeagueCells {
        let n_types = log.pitch_types.len();
        // Each pitcher's pitches per season and type, for his arsenals.
        let mut thrown: HashMap<(u32, i32), Vec<u64>> = HashMap::new();
        for r in 0..log.len() {
            thrown.entry((log.pitcher[r], log.season[r])).or_insert_with(|| vec![0; n_types])[log.pitch_type[r] as usize] += 1;
        }
        let arsenal: HashMap<(u32, i32), Vec<u16>> = thrown
            .into_iter()
            .map(|(k, v)| {
                let n: u64 = v.iter().sum();
                (k, (0..n_types).filter(|&t| v[t] as f64 >= ARSENAL_SHARE * n as f64 && v[t] > 0).map(|t| t as u16).collect())
            })
            .collect();
        let mut counts: HashMap<(Hand, i32, u16), Vec<u64>> = HashMap::new();
        for r in 0..log.len() {
            let at = cell_of(log, r) * n_types + log.pitch_type[r] as usize;
            for &t in &arsenal[&(log.pitcher[r], log.season[r])] {
                counts.entry((log.throws[r], log.season[r], t)).or_insert_with(|| vec![0; CELLS * n_types])[at] += 1;
            }
        }
        LeagueCells { n_types, counts }
    }

    /// Pitch type `ty` in `cell` among pitchers throwing with `hand` who
    /// have `ty` in their arsenal in `season`: its share there and over
    /// their whole season, his own pitches taken out when `ty` is in his
    /// arsenal too (`his_counted`: his `(type, total)` in the cell and in
    /// the season); `None` when nobody else pitched there.
    pub fn share_without(&self, hand: Hand, season: i32, cell: usize, ty: usize, his_cell: (u64, u64), his_season: (u64, u64), his_counted: bool) -> Option<CellNorm> {
        let v = self.counts.get(&(hand, season, ty as u16))?;
        let row = &v[cell * self.n_types..(cell + 1) * self.n_types];
        let ((ct, cn), (st, sn)) = if his_counted { (his_cell, his_season) } else { ((0, 0), (0, 0)) };
        let total = row.iter().sum::<u64>().checked_sub(cn)?;
        let of_type = row[ty].checked_sub(ct)?;
        let season_total = v.iter().sum::<u64>().checked_sub(sn)?;
        let season_type = (0..CELLS).map(|c| v[c * self.n_types + ty]).sum::<u64>().checked_sub(st)?;
        (total > 0 && season_type > 0).then(|| CellNorm {
            share: of_type as f64 / total as f64,
            n: total,
            season_share: season_type as f64 / season_total as f64,
        })
    }
}

/// The yardstick's figures for one pitch type in one cell.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CellNorm {
    /// Its share of the others' pitches in the cell, and those pitches.
    pub share: f64,
    pub n: u64,
    /// Its share of the others' pitches over the season.
    pub season_share: f64,
}

impl CellNorm {
    /// What a pitcher throwing the pitch `his_season_share` of the time
    /// would throw in this cell with the others' count and side habit: his
    /// season share times their lean into the cell (indirect
    /// standardisation), at most 1.
    pub fn expected_for(&self, his_season_share: f64) -> f64 {
        (his_season_share * self.share / self.season_share).min(1.0)
    }
}

/// The percentile rank of `score` among `values`, as
/// `scipy.stats.percentileofscore(values, score, kind="rank")`: the mean of
/// the percentage of values below it and the percentage at or below it,
/// ties sharing the average rank. `None` for no values.
pub fn percentile_of_score(values: &[f64], score: f64) -> Option<f64> {
    if values.is_empty() {
        return None;
    }
    let left = values.iter().filter(|&&v| v < score).count();
    let right = values.iter().filter(|&&v| v <= score).count();
    let plus1 = (left < right) as usize;
    Some((left + right + plus1) as f64 * 50.0 / values.len() as f64)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A hand-worked case: among 10, 20, 20, 30 the score 20 has one value
    /// below and three at or below; ties share the average rank,
    /// (1 + 3 + 1) × 50 / 4 = 62.5. Values from scipy itself are checked in
    /// tests/stats_reference.rs.
    #[test]
    fn percentile_by_hand() {
        assert_eq!(percentile_of_score(&[10.0, 20.0, 20.0, 30.0], 20.0), Some(62.5));
        assert_eq!(percentile_of_score(&[10.0, 20.0], 5.0), Some(0.0));
        assert_eq!(percentile_of_score(&[10.0, 20.0], 25.0), Some(100.0));
        assert_eq!(percentile_of_score(&[], 1.0), None);
    }
}
