//! What happens to his pitches (when the log has `result`), and the cost of
//! a tell: does the tell's pitch fare worse for him in the tell's
//! situation than the same pitch does in comparable spots?
//!
//! Definitions (common practice): a **swing** is a swinging strike, a foul
//! or a ball in play; the **whiff rate** is swinging strikes per swing; the
//! **called-plus-swinging-strike rate** (CSW) is called and swinging strikes
//! per pitch; the **ball rate** and **in-play rate** are per pitch.
//!
//! Comparable spots: for a situation without a count, his own pitches of the
//! same type outside the situation, stratified by count (the count moves
//! every rate, so each count is compared with itself and the strata pooled,
//! Cochran–Mantel–Haenszel). A situation that fixes the count cannot be
//! compared with his other counts, so there the reference is the rest of
//! the log's pitchers throwing the same pitch type in the same situation
//! (same count and, for a pair, the same other level): the league's or
//! staff's count effect applied to his pitch, as an indirect
//! standardisation would. The test is one-sided on the whiff rate (the
//! rate a hitter sitting on the pitch changes most); CSW and in-play rates
//! are shown beside their expectations, standardised the same way. One
//! Benjamini–Hochberg family holds the run's cost tests. These are
//! associations in past games: the log never says what the hitter was
//! sitting on.

use crate::evaluate::task::PitcherTask;
use crate::ingest::{PitchLog, PitchResult};
use crate::significance::{cmh::Cmh, fdr};
use crate::situations::{levels::Factor, Situations};
use crate::tells::TellTest;
use serde::Serialize;
use std::collections::HashMap;

/// Outcome counts of a set of pitches.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Outcomes {
    pub pitches: u64,
    pub swings: u64,
    pub whiffs: u64,
    pub csw: u64,
    pub balls: u64,
    pub in_play: u64,
}

impl Outcomes {
    #[inline]
    pub fn add(&mut self, r: PitchResult) {
        self.pitches += 1;
        match r {
            PitchResult::SwingingStrike => {
                self.swings += 1;
                self.whiffs += 1;
                self.csw += 1;
            }
            PitchResult::CalledStrike => self.csw += 1,
            PitchResult::Foul => self.swings += 1,
            PitchResult::InPlay => {
                self.swings += 1;
                self.in_play += 1;
            }
            PitchResult::Ball => self.balls += 1,
            PitchResult::HitByPitch | PitchResult::Other => {}
        }
    }

    fn sub(&self, o: &Outcomes) -> Outcomes {
        Outcomes {
            pitches: self.pitches - o.pitches,
            swings: self.swings - o.swings,
            whiffs: self.whiffs - o.whiffs,
            csw: self.csw - o.csw,
            balls: self.balls - o.balls,
            in_play: self.in_play - o.in_play,
        }
    }

    pub fn whiff_rate(&self) -> f64 {
        ratio(self.whiffs, self.swings)
    }
    pub fn csw_rate(&self) -> f64 {
        ratio(self.csw, self.pitches)
    }
    pub fn in_play_rate(&self) -> f64 {
        ratio(self.in_play, self.pitches)
    }
    pub fn ball_rate(&self) -> f64 {
        ratio(self.balls, self.pitches)
    }
}

fn ratio(a: u64, b: u64) -> f64 {
    if b == 0 {
        0.0
    } else {
        a as f64 / b as f64
    }
}

/// The cost of one tell (CONTRACT: `cost` on a tell).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TellCost {
    /// Pitches of the tell's type in the tell's situation, and swings at them.
    pub n: u64,
    pub swings: u64,
    pub whiff_rate: f64,
    pub expected_whiff_rate: f64,
    /// 95% interval of whiff_rate − expected_whiff_rate (normal
    /// approximation with the stratified variance).
    pub whiff_diff_low: f64,
    pub whiff_diff_high: f64,
    pub csw_rate: f64,
    pub expected_csw_rate: f64,
    pub in_play_rate: f64,
    pub expected_in_play_rate: f64,
    /// One-sided: fewer whiffs than expected.
    pub p_value: f64,
    pub q_value: f64,
    /// The pitch fares significantly worse for him there (q ≤ fdr, fewer
    /// whiffs than expected).
    pub costly: bool,
    /// `"his other counts"`-style reference, in words.
    pub compared_with: String,
}

/// Level codes of a situation, per factor column.
fn codes_of(sit: &Situations, situation: &crate::tells::Situation) -> Option<Vec<(usize, u8)>> {
    situation
        .iter()
        .map(|(f, level)| {
            let i = sit.factors.iter().position(|c| c.factor == *f)?;
            let code = sit.factors[i].levels.iter().position(|l| l == level)? as u8;
            Some((i, code))
        })
        .collect()
}

#[inline]
fn holds(sit: &Situations, codes: &[(usize, u8)], row: usize) -> bool {
    codes.iter().all(|&(i, c)| sit.factors[i].codes[row] == c)
}

/// Fill `cost` on every flagged tell of `tests` (nothing without a
/// `result` column), then one BH family over them.
pub fn cost_of_tells(log: &PitchLog, sit: &Situations, tasks: &[&PitcherTask], tests: &mut [TellTest], fdr_level: f64) {
    let Some(results) = log.result.as_ref() else { return };
    let task_of: HashMap<&str, &PitcherTask> = tasks.iter().map(|t| (t.name.as_str(), *t)).collect();
    let count_col = sit.factors.iter().position(|c| c.factor == Factor::Count);
    // The log-wide reference for tells that fix the count: outcomes of every
    // pitcher's pitches by (situation, type), gathered in one pass.
    let mut wanted: HashMap<(Vec<(usize, u8)>, u16), Outcomes> = HashMap::new();
    for t in tests.iter().filter(|t| t.flagged && t.situation.contains_key(&Factor::Count)) {
        if let (Some(codes), Some(ty)) = (codes_of(sit, &t.situation), log.pitch_types.iter().position(|p| *p == t.pitch_type)) {
            wanted.insert((codes, ty as u16), Outcomes::default());
        }
    }
    if !wanted.is_empty() {
        let mut shapes: Vec<Vec<usize>> = wanted.keys().map(|(c, _)| c.iter().map(|x| x.0).collect()).collect();
        shapes.sort();
        shapes.dedup();
        for r in 0..log.len() {
            let Some(res) = results[r] else { continue };
            for shape in &shapes {
                let codes: Vec<(usize, u8)> = shape.iter().map(|&i| (i, sit.factors[i].codes[r])).collect();
                if let Some(o) = wanted.get_mut(&(codes, log.pitch_type[r])) {
                    o.add(res);
                }
            }
        }
    }
    let mut tested: Vec<usize> = Vec::new();
    for (ti, t) in tests.iter_mut().enumerate() {
        if !t.flagged {
            continue;
        }
        let (Some(task), Some(codes)) = (task_of.get(t.pitcher.as_str()), codes_of(sit, &t.situation)) else { continue };
        let Some(ty) = log.pitch_types.iter().position(|p| *p == t.pitch_type).map(|x| x as u16) else { continue };
        // His pitches of the type, in and out of the situation, by count.
        let mut inside = [Outcomes::default(); 12];
        let mut outside = [Outcomes::default(); 12];
        for &r in &task.rows {
            let r = r as usize;
            if log.pitch_type[r] != ty {
                continue;
            }
            let Some(res) = results[r] else { continue };
            let c = (log.balls[r] * 3 + log.strikes[r]) as usize;
            if holds(sit, &codes, r) {
                inside[c].add(res);
            } else {
                outside[c].add(res);
            }
        }
        let mine: Outcomes = inside.iter().fold(Outcomes::default(), |a, o| Outcomes {
            pitches: a.pitches + o.pitches,
            swings: a.swings + o.swings,
            whiffs: a.whiffs + o.whiffs,
            csw: a.csw + o.csw,
            balls: a.balls + o.balls,
            in_play: a.in_play + o.in_play,
        });
        if mine.pitches == 0 {
            continue;
        }
        let fixes_count = count_col.is_some_and(|cc| codes.iter().any(|&(i, _)| i == cc));
        let (whiff, csw, in_play, compared_with) = if fixes_count {
            // Everyone's pitches of this type in the situation, less his own.
            let all = wanted.get(&(codes.clone(), ty)).copied().unwrap_or_default();
            let others = all.sub(&mine);
            let mut w = Cmh::default();
            w.add(mine.whiffs, mine.swings, all.whiffs, all.swings);
            (
                (w, others.whiff_rate()),
                others.csw_rate(),
                others.in_play_rate(),
                format!("the rest of the log's {}s in the same situation", t.pitch_type),
            )
        } else {
            // His own pitches of the type elsewhere, count by count.
            let (mut w, mut e_csw, mut e_play) = (Cmh::default(), 0.0, 0.0);
            for c in 0..12 {
                let (a, b) = (&inside[c], &outside[c]);
                let swings = a.swings + b.swings;
                w.add(a.whiffs, a.swings, a.whiffs + b.whiffs, swings);
                if a.pitches > 0 {
                    let p = (a.pitches + b.pitches) as f64;
                    e_csw += a.pitches as f64 * (a.csw + b.csw) as f64 / p;
                    e_play += a.pitches as f64 * (a.in_play + b.in_play) as f64 / p;
                }
            }
            let expected_whiff = if mine.swings > 0 { w.expected / mine.swings as f64 } else { 0.0 };
            (
                (w, expected_whiff),
                e_csw / mine.pitches as f64,
                e_play / mine.pitches as f64,
                format!("his {}s outside the situation in the same counts", t.pitch_type),
            )
        };
        let (w, expected_whiff) = whiff;
        let n_sw = mine.swings.max(1) as f64;
        let half = 1.96 * w.variance.sqrt() / n_sw;
        let diff = mine.whiff_rate() - expected_whiff;
        t.cost = Some(TellCost {
            n: mine.pitches,
            swings: mine.swings,
            whiff_rate: mine.whiff_rate(),
            expected_whiff_rate: expected_whiff,
            whiff_diff_low: diff - half,
            whiff_diff_high: diff + half,
            csw_rate: mine.csw_rate(),
            expected_csw_rate: csw,
            in_play_rate: mine.in_play_rate(),
            expected_in_play_rate: in_play,
            p_value: w.p_less(),
            q_value: 1.0,
            costly: false,
            compared_with,
        });
        tested.push(ti);
    }
    let p: Vec<f64> = tested.iter().map(|&i| tests[i].cost.as_ref().unwrap().p_value).collect();
    for (&i, q) in tested.iter().zip(fdr::bh_q_values(&p)) {
        let c = tests[i].cost.as_mut().unwrap();
        c.q_value = q;
        c.costly = q <= fdr_level && c.whiff_rate < c.expected_whiff_rate;
    }
}
