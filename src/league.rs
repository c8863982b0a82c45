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
use crate::domain::levels::{Hand, HandTally};
use crate::situations::Situations;
use crate::tells::TellTest;
use rayon::prelude::*;
use std::collections::{HashMap, HashSet};

/// Cells of the sheet: count × batter side.
pub const CELLS: usize = 24;

/// The sheet cell of a row (`levels::sheet_cell`, as `PitcherTask::cell`).
#[inline]
fn cell_of(log: &PitchLog, r: usize) -> usize {
    crate::domain::levels::sheet_cell(log.balls[r], log.strikes[r], log.bats[r])
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
    /// Each pitcher's arsenal per season ([`arsenals`]).
    arsenal: HashMap<(u32, i32), Vec<u16>>,
}

impl LeagueCells {
    pub fn build(log: &PitchLog) -> LeagueCells {
        let n_types = log.pitch_types.len();
        let arsenal = arsenals(log);
        let mut counts: HashMap<(Hand, i32, u16), Vec<u64>> = HashMap::new();
        for r in 0..log.len() {
            let at = cell_of(log, r) * n_types + log.pitch_type[r] as usize;
            for &t in &arsenal[&(log.pitcher[r], log.season[r])] {
                counts.entry((log.throws[r], log.season[r], t)).or_insert_with(|| vec![0; CELLS * n_types])[at] += 1;
            }
        }
        LeagueCells { n_types, counts, arsenal }
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
        // His own counts come off the table of his usual hand; a pitcher the
    // log lists with both hands has some of them in the other table, so
    // what is left can hold fewer pitches than pitches of the type: no
    // yardstick then.
    (total > 0 && season_type > 0 && of_type <= total && season_type <= season_total).then(|| CellNorm {
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

/// Each pitcher's arsenal per season: the types at least `ARSENAL_SHARE`
/// of his pitches that season.
pub fn arsenals(log: &PitchLog) -> HashMap<(u32, i32), Vec<u16>> {
    let n_types = log.pitch_types.len();
    let mut thrown: HashMap<(u32, i32), Vec<u64>> = HashMap::new();
    for r in 0..log.len() {
        thrown.entry((log.pitcher[r], log.season[r])).or_insert_with(|| vec![0; n_types])[log.pitch_type[r] as usize] += 1;
    }
    thrown
        .into_iter()
        .map(|(k, v)| {
            let n: u64 = v.iter().sum();
            (k, (0..n_types).filter(|&t| v[t] > 0 && v[t] as f64 >= ARSENAL_SHARE * n as f64).map(|t| t as u16).collect())
        })
        .collect()
}

/// Fill `league_share` on every flagged tell of `tests`: the tell pitch's
/// share in the tell's situation (all seasons of the file) among the other
/// pitchers of the tell pitcher's throwing hand who have the pitch in their
/// arsenal that season. One pass over the file for every tell (in chunks
/// of rows in parallel); each tell pitcher's own pitches are counted apart
/// and taken out.
pub fn tell_shares(log: &PitchLog, sit: &Situations, league: &LeagueCells, tests: &mut [TellTest]) {
    let pitcher_of: HashMap<&str, u32> = log.pitchers.iter().enumerate().map(|(i, p)| (p.as_str(), i as u32)).collect();
    let type_of: HashMap<&str, u16> = log.pitch_types.iter().enumerate().map(|(i, t)| (t.as_str(), i as u16)).collect();
    let n_types = log.pitch_types.len();
    // Each pitcher's usual hand (the audit's rule: most of his pitches).
    let mut seen: Vec<Option<HandTally>> = vec![None; log.pitchers.len()];
    for r in 0..log.len() {
        match &mut seen[log.pitcher[r] as usize] {
            Some(t) => t.add(log.throws[r]),
            slot @ None => *slot = Some(HandTally::new(log.throws[r])),
        }
    }
    let hand_of: Vec<Option<Hand>> = seen.iter().map(|s| s.map(|t| t.usual())).collect();
    // A situation's shape (its factor columns, at most two); within a
    // shape, a cell is its level codes, the hand and the type, numbered
    // densely (a factor's unknown code is one more level, which no tell
    // asks for).
    let mut shapes: Vec<Shape> = Vec::new();
    // Each wanted cell's slot (`n_slots` of them), each (slot, tell
    // pitcher) pair's place among the own counts (his own pitches are taken
    // out), and each tell's slot and place.
    let mut n_slots = 0usize;
    let mut own_at: HashMap<(u32, u32), usize> = HashMap::new();
    let mut key_of: Vec<Option<(u32, usize)>> = vec![None; tests.len()];
    for (i, t) in tests.iter().enumerate().filter(|(_, t)| t.flagged) {
        let (Some(&p), Some(&ty)) = (
            pitcher_of.get(t.pitcher.as_str()),
            type_of.get(t.pitch_type.as_str()),
        ) else {
            continue;
        };
        let Some(parts) = sit.level_codes(&t.situation) else {
            continue;
        };
        if parts.is_empty() || parts.len() > 2 {
            continue;
        }
        let Some(hand) = hand_of[p as usize] else {
            continue;
        };
        let columns: Vec<usize> = parts.iter().map(|x| x.0).collect();
        let si = match shapes.iter().position(|s| s.columns == columns) {
            Some(i) => i,
            None => {
                shapes.push(Shape::new(sit, columns, n_types));
                shapes.len() - 1
            }
        };
        let codes: Vec<u8> = parts.iter().map(|x| x.1).collect();
        let shape = &mut shapes[si];
        let cell = shape.cell(&codes, hand, ty);
        if shape.slot[cell] == NO_SLOT {
            shape.slot[cell] = n_slots as u32;
            n_slots += 1;
        }
        let slot = shape.slot[cell];
        let n_own = own_at.len();
        let own = *own_at.entry((slot, p)).or_insert(n_own);
        key_of[i] = Some((slot, own));
    }
    if n_slots == 0 {
        return;
    }
    let tell_pitcher: HashSet<u32> = own_at.keys().map(|&(_, p)| p).collect();
    let arsenal = &league.arsenal;
    // League (n, of type) per slot, and each tell pitcher's own: integer
    // sums over chunks of rows, so the same at any thread count.
    let counts = |range: std::ops::Range<usize>| -> (Vec<[u64; 2]>, Vec<[u64; 2]>) {
        let mut league = vec![[0u64; 2]; n_slots];
        let mut own = vec![[0u64; 2]; own_at.len()];
        for r in range {
            let (p, hand, y) = (log.pitcher[r], log.throws[r], log.pitch_type[r]);
            let Some(ars) = arsenal.get(&(p, log.season[r])) else {
                continue;
            };
            let mine = tell_pitcher.contains(&p);
            for shape in &shapes {
                let base = shape.row_base(sit, r, hand);
                for &t in ars {
                    let slot = shape.slot[base + t as usize];
                    if slot == NO_SLOT {
                        continue;
                    }
                    let hit = (y == t) as u64;
                    let e = &mut league[slot as usize];
                    e[0] += 1;
                    e[1] += hit;
                    if mine {
                        if let Some(&o) = own_at.get(&(slot, p)) {
                            own[o][0] += 1;
                            own[o][1] += hit;
                        }
                    }
                }
            }
        }
        (league, own)
    };
    let add = |mut a: (Vec<[u64; 2]>, Vec<[u64; 2]>), b: (Vec<[u64; 2]>, Vec<[u64; 2]>)| {
        for (x, y) in a.0.iter_mut().zip(&b.0).chain(a.1.iter_mut().zip(&b.1)) {
            x[0] += y[0];
            x[1] += y[1];
        }
        a
    };
    const CHUNK: usize = 1 << 16;
    let (league, own) = (0..log.len().div_ceil(CHUNK))
        .into_par_iter()
        .map(|c| counts(c * CHUNK..((c + 1) * CHUNK).min(log.len())))
        .reduce(
            || (vec![[0u64; 2]; n_slots], vec![[0u64; 2]; own_at.len()]),
            add,
        );
    for (t, k) in tests.iter_mut().zip(key_of) {
        let Some((slot, o)) = k else { continue };
        let [n, x] = league[slot as usize];
        let [on, ox] = own[o];
        let (n, x) = (n - on, x - ox);
        if n > 0 {
            t.league_share = Some(x as f64 / n as f64);
            t.league_n = Some(n);
        }
    }
}

/// A wanted cell's absence from a [`Shape`]'s table.
const NO_SLOT: u32 = u32::MAX;

/// The cells of one situation shape (one or two factor columns), numbered
/// densely: level codes (a factor's unknown code as one more level), then
/// the hand, then the pitch type.
struct Shape {
    columns: Vec<usize>,
    /// Levels of each column, its unknown level included.
    levels: Vec<usize>,
    n_types: usize,
    /// Each cell's slot among the wanted ones, or `NO_SLOT`.
    slot: Vec<u32>,
}

impl Shape {
    fn new(sit: &Situations, columns: Vec<usize>, n_types: usize) -> Shape {
        let levels: Vec<usize> = columns
            .iter()
            .map(|&c| sit.factors[c].levels.len() + 1)
            .collect();
        let cells = levels.iter().product::<usize>() * 2 * n_types;
        Shape {
            columns,
            levels,
            n_types,
            slot: vec![NO_SLOT; cells],
        }
    }

    fn level(&self, i: usize, code: u8) -> usize {
        (code as usize).min(self.levels[i] - 1)
    }

    fn base(&self, codes: impl Iterator<Item = u8>, hand: Hand) -> usize {
        let at = codes
            .enumerate()
            .fold(0, |a, (i, c)| a * self.levels[i] + self.level(i, c));
        (at * 2 + (hand == Hand::R) as usize) * self.n_types
    }

    fn cell(&self, codes: &[u8], hand: Hand, ty: u16) -> usize {
        self.base(codes.iter().copied(), hand) + ty as usize
    }

    /// Row `r`'s first cell (type 0) under this shape.
    fn row_base(&self, sit: &Situations, r: usize, hand: Hand) -> usize {
        self.base(self.columns.iter().map(|&c| sit.factors[c].codes[r]), hand)
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

    /// Worked by hand: the table of right-handers holds, in cell 0, 10
    /// pitches of type 0 among 30; a pitcher whose own 6 of 8 there come
    /// off leaves 4 of 22 (share 4/22). A pitcher also listed left-handed,
    /// whose cell counts are not all in this table, can take off more than
    /// it holds: 2 of type 0 among 25 would leave 8 of the type among 5
    /// pitches, and 12 of 12 more of the type than there are. No yardstick
    /// then, never a share above 1 (a fuzzed log found the first).
    #[test]
    fn his_own_pitches_come_off_the_table() {
        let n_types = 2;
        let mut v = vec![0u64; CELLS * n_types];
        (v[0], v[1]) = (10, 20);
        let cells = LeagueCells { n_types, counts: HashMap::from([((Hand::R, 2025, 0u16), v)]), arsenal: HashMap::new() };
        let c = cells.share_without(Hand::R, 2025, 0, 0, (6, 8), (6, 8), true).unwrap();
        assert_eq!((c.share, c.n), (4.0 / 22.0, 22));
        // More of the type than pitches left: no yardstick.
        assert!(cells.share_without(Hand::R, 2025, 0, 0, (2, 25), (0, 0), true).is_none());
        assert!(cells.share_without(Hand::R, 2025, 0, 0, (12, 12), (0, 0), true).is_none());
    }
}
