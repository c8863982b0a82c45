//! The sheet: a pitcher's mix by count × batter side, as any opponent
//! charts it from his latest season's games. Everything on it is already
//! given away; the audit shows how much and where, and looks for tells
//! beyond it.

use crate::evaluate::task::PitcherTask;
use crate::priors::{self, GroupCounts, UsagePrior};
use crate::settings::Settings;
use crate::significance::{fdr, hypergeom, wilson};
use crate::domain::levels::COUNTS;
use serde::Serialize;
use std::collections::BTreeMap;

/// One cell of the sheet.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SheetCell {
    pub count: String,
    /// The batter's side, `L` or `R`.
    pub bats: String,
    pub n: usize,
    pub top_pitch: String,
    /// Raw share of the top pitch in the cell, with its Wilson 95% interval.
    pub top_share: f64,
    pub top_share_low: f64,
    pub top_share_high: f64,
    /// The cell's mix, shrunk toward his season mix (empirical-Bayes
    /// Dirichlet strength over the 24 cells), so a thin cell leans on his
    /// overall mix.
    pub mix: BTreeMap<String, f64>,
    /// His share of the top pitch over the whole season.
    pub season_share: f64,
    /// The cell leans on the top pitch: its interval lies above his season
    /// share of it, and its share stands out from the rest of his season
    /// once his 24 cells are tested together (`lean_q` at most the run's
    /// fdr).
    pub leans: bool,
    /// The q-value of the cell's lean: a one-sided exact test of the top
    /// pitch's count in the cell against the rest of his season
    /// (hypergeometric, as Fisher's), times his pitch types for picking
    /// the top one (Bonferroni), Benjamini–Hochberg over his cells with at
    /// least `[tells] min_n` pitches; absent for a thinner cell.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub lean_q: Option<f64>,
    /// Pitches a hitter sitting on the top pitch in this cell guesses right
    /// beyond what the season share gives: (top_share − season_share) × n.
    pub given_away: f64,
    /// The share of his top pitch in this cell among the other pitchers of
    /// his throwing hand who throw that pitch (at least 5% of their pitches)
    /// in the same season (`league`), and the pitches it rests on; absent
    /// when nobody else pitched there.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub league_share: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub league_n: Option<u64>,
    /// What he would throw in this cell with the league's count and side
    /// habit for this pitch: his season share of it times the league's
    /// cell share over its season share (indirect standardisation), so a
    /// pitcher is not "above the league" for throwing more of a pitch
    /// everywhere.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub league_expected_share: Option<f64>,
    /// Well above the league: at least `tell_min_n` pitches, the lower end
    /// of his share's Wilson interval at level 1 − fdr / (24 × his pitch
    /// types) (Bonferroni over the cells and the pick of the top pitch)
    /// above the upper end of the expectation's (the league's cell share's
    /// Wilson 95% interval carried the same way), and his share at least
    /// `[tells] min_effect` above `league_expected_share`.
    pub above_league: bool,
}

/// The sheet of his latest season in the task's rows, cells in count order,
/// left-handed batters first; the season.
pub fn sheet(
    task: &PitcherTask,
    season_of_row: impl Fn(usize) -> i32,
    hand_of_row: impl Fn(usize) -> crate::domain::levels::Hand,
    names: &[String],
    settings: &Settings,
    league: (&crate::league::LeagueCells, crate::domain::levels::Hand),
) -> (Vec<SheetCell>, i32) {
    let k = task.n_classes;
    let latest = (0..task.rows.len()).map(&season_of_row).max().unwrap_or(0);
    let mut g = GroupCounts::new(24, k);
    // His pitches the league's table of his hand holds (all of them, but
    // for a pitcher the log also lists with the other hand): what comes
    // off it so the yardstick is the others'.
    let mut in_table = GroupCounts::new(24, k);
    for i in (0..task.rows.len()).filter(|&i| season_of_row(i) == latest) {
        g.add(task.cell[i] as usize, task.labels[i] as usize);
        if hand_of_row(i) == league.1 {
            in_table.add(task.cell[i] as usize, task.labels[i] as usize);
        }
    }
    let table_season = in_table.class_totals();
    let table_n: u64 = table_season.iter().map(|&c| c as u64).sum();
    let season = UsagePrior::from_counts(g.class_totals());
    let n_season: u32 = season.counts.iter().sum();
    let raw_share = |cls: usize| season.counts[cls] as f64 / n_season.max(1) as f64;
    let s = priors::strength(&g, &season.probs, settings.tree.prior_strength());
    let mut cells: Vec<SheetCell> = Vec::new();
    // (cell, p-value of its lean) of the cells with enough pitches.
    let mut lean_p: Vec<(usize, f64)> = Vec::new();
    // His share's interval widened for the 24 cells and his pitch types
    // looked at together (Bonferroni), so that chance alone puts a cell
    // above the league on at most one pitcher in 1/fdr (a 95% interval in
    // each of 24 cells did on one in seven). (An fdr so small that the
    // level rounds to 1 is held just below.)
    let alpha = (settings.audit.fdr() / (COUNTS.len() * 2 * k) as f64).max(1e-12);
    for (c, count) in COUNTS.iter().enumerate() {
        for (side, bats) in ["L", "R"].iter().enumerate() {
            let cell = c * 2 + side;
            let n = g.totals[cell] as usize;
            let row = &g.counts[cell * k..(cell + 1) * k];
            let top = (0..k).fold(0, |b, j| if row[j] > row[b] { j } else { b });
            let top_share = if n > 0 { row[top] as f64 / n as f64 } else { 0.0 };
            let ci = wilson::wilson_95(row[top] as u64, n as u64);
            let season_share = raw_share(top);
            // Chance alone makes a few of 24 cells lean; the cell's test
            // joins its pitcher's family below.
            let tested = n >= settings.tells.min_n();
            if tested {
                let p = hypergeom::upper_tail(row[top] as u64, n_season as u64, season.counts[top] as u64, n as u64);
                lean_p.push((cells.len(), (k as f64 * p).min(1.0)));
            }
            let leans = tested && ci.low > season_share;
            let counted = season_share >= crate::league::ARSENAL_SHARE;
            let his_season = (table_season[top] as u64, table_n);
            let his_cell = (in_table.counts[cell * k + top] as u64, in_table.totals[cell] as u64);
            let other = league.0.share_without(league.1, latest, cell, task.class_types[top] as usize, his_cell, his_season, counted);
            let expected = other.map(|o| o.expected_for(season_share));
            // The league's own uncertainty: the top of its cell share's
            // Wilson 95% interval, carried the same way.
            let expected_high = other.map(|o| {
                let hi = wilson::wilson_95((o.share * o.n as f64).round() as u64, o.n).high;
                (season_share * hi / o.season_share).min(1.0)
            });
            let together = wilson::wilson_interval(row[top] as u64, n as u64, 1.0 - alpha);
            let above_league = match (expected, expected_high) {
                (Some(e), Some(h)) => tested && together.low > h && top_share - e >= settings.tells.min_effect(),
                _ => false,
            };
            cells.push(SheetCell {
                count: count.to_string(),
                bats: bats.to_string(),
                n,
                top_pitch: names[task.class_types[top] as usize].clone(),
                top_share,
                top_share_low: ci.low,
                top_share_high: ci.high,
                mix: (0..k)
                    .map(|j| (names[task.class_types[j] as usize].clone(), g.shrunk(cell, j, &season.probs, s)))
                    .collect(),
                season_share,
                leans,
                lean_q: None,
                given_away: if leans { (top_share - season_share) * n as f64 } else { 0.0 },
                league_share: other.map(|x| x.share),
                league_n: other.map(|x| x.n),
                league_expected_share: expected,
                above_league,
            });
        }
    }
    let q = fdr::bh_q_values(&lean_p.iter().map(|&(_, p)| p).collect::<Vec<_>>());
    for (&(i, _), &q) in lean_p.iter().zip(&q) {
        let c = &mut cells[i];
        c.lean_q = Some(q);
        if q > settings.audit.fdr() {
            c.leans = false;
            c.given_away = 0.0;
        }
    }
    (cells, latest)
}

/// The sheet cell in a coach's words: "3-1 vs left-handed batters: fastball
/// 88% (n = 41; 52% of his pitches all season)".
pub fn cell_phrase(c: &SheetCell) -> String {
    let side = if c.bats == "L" { "left-handed" } else { "right-handed" };
    format!(
        "{} vs {side} batters: {} {} (n = {}; {} of his pitches all season)",
        c.count,
        c.top_pitch,
        crate::domain::numbers::pct(c.top_share),
        crate::domain::numbers::fmt_n(c.n),
        crate::domain::numbers::pct(c.season_share)
    )
}
