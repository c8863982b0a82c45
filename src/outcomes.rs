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
//! are shown beside their expectations, standardised the same way. Two
//! Benjamini–Hochberg families hold the run's cost tests: the tells of a
//! pitch he throws more in the situation (what a hitter can sit on) and
//! those of a pitch he throws less there. These are
//! associations in past games: the log never says what the hitter was
//! sitting on.

use crate::evaluate::task::PitcherTask;
use crate::domain::PitchResult;
use crate::ingest::PitchLog;
use crate::significance::{cmh::Cmh, fdr};
use crate::domain::levels::Factor;
use crate::situations::Situations;
use crate::tells::{TellCost, TellTest};
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

    /// These counts with `o`'s added.
    pub fn plus(&self, o: &Outcomes) -> Outcomes {
        Outcomes {
            pitches: self.pitches + o.pitches,
            swings: self.swings + o.swings,
            whiffs: self.whiffs + o.whiffs,
            csw: self.csw + o.csw,
            balls: self.balls + o.balls,
            in_play: self.in_play + o.in_play,
        }
    }

    /// These counts with `o`'s (a part of them) taken away.
    pub fn sub(&self, o: &Outcomes) -> Outcomes {
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

/// Rate differences standardised to the first group's strata: over strata
/// s of (x1 of n1) against (x2 of n2), the first group's rate minus the
/// second group's rates weighted by the first group's n1_s (indirect
/// standardisation), with a Wald 95% interval from the strata's binomial
/// variances. Strata missing either group are skipped.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Standardised {
    n1: f64,
    x1: f64,
    expected: f64,
    var: f64,
}

impl Standardised {
    pub fn add(&mut self, x1: u64, n1: u64, x2: u64, n2: u64) {
        if n1 == 0 || n2 == 0 {
            return;
        }
        let (x1, n1, x2, n2) = (x1 as f64, n1 as f64, x2 as f64, n2 as f64);
        let (r1, r2) = (x1 / n1, x2 / n2);
        self.n1 += n1;
        self.x1 += x1;
        self.expected += n1 * r2;
        self.var += n1 * n1 * (r1 * (1.0 - r1) / n1 + r2 * (1.0 - r2) / n2);
    }

    pub fn rate(&self) -> f64 {
        if self.n1 > 0.0 { self.x1 / self.n1 } else { 0.0 }
    }

    /// Sums over independent strata add.
    pub fn merge(&mut self, o: &Standardised) {
        self.n1 += o.n1;
        self.x1 += o.x1;
        self.expected += o.expected;
        self.var += o.var;
    }

    pub fn expected_rate(&self) -> f64 {
        if self.n1 > 0.0 { self.expected / self.n1 } else { 0.0 }
    }

    /// (low, high) of rate − expected_rate.
    pub fn interval(&self) -> (f64, f64) {
        let d = self.rate() - self.expected_rate();
        // z = 1.959963984540054, the 97.5% normal quantile.
        let half = if self.n1 > 0.0 { 1.959_963_984_540_054 * self.var.sqrt() / self.n1 } else { 0.0 };
        (d - half, d + half)
    }
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
        if let (Some(codes), Some(ty)) = (sit.level_codes(&t.situation), log.pitch_types.iter().position(|p| *p == t.pitch_type)) {
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
        let (Some(task), Some(codes)) = (task_of.get(t.pitcher.as_str()), sit.level_codes(&t.situation)) else { continue };
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
            if sit.holds(&codes, r) {
                inside[c].add(res);
            } else {
                outside[c].add(res);
            }
        }
        let mine: Outcomes = inside.iter().fold(Outcomes::default(), |a, o| a.plus(o));
        if mine.pitches == 0 {
            continue;
        }
        let fixes_count = count_col.is_some_and(|cc| codes.iter().any(|&(i, _)| i == cc));
        // The test (Cmh, pooled margins) and the figures (standardised to
        // the tell's own pitches) over the same strata.
        let (mut w, mut sw, mut scsw, mut splay) = (Cmh::default(), Standardised::default(), Standardised::default(), Standardised::default());
        let compared_with = if fixes_count {
            // Everyone's pitches of this type in the situation, less his own.
            let all = wanted.get(&(codes.clone(), ty)).copied().unwrap_or_default();
            let o = all.sub(&mine);
            w.add(mine.whiffs, mine.swings, all.whiffs, all.swings);
            sw.add(mine.whiffs, mine.swings, o.whiffs, o.swings);
            scsw.add(mine.csw, mine.pitches, o.csw, o.pitches);
            splay.add(mine.in_play, mine.pitches, o.in_play, o.pitches);
            format!("the rest of the log's {}s in the same situation", t.pitch_type)
        } else {
            // His own pitches of the type elsewhere, count by count.
            for c in 0..12 {
                let (a, b) = (&inside[c], &outside[c]);
                w.add(a.whiffs, a.swings, a.whiffs + b.whiffs, a.swings + b.swings);
                sw.add(a.whiffs, a.swings, b.whiffs, b.swings);
                scsw.add(a.csw, a.pitches, b.csw, b.pitches);
                splay.add(a.in_play, a.pitches, b.in_play, b.pitches);
            }
            format!("his {}s outside the situation in the same counts", t.pitch_type)
        };
        let (low, high) = sw.interval();
        t.cost = Some(TellCost {
            n: mine.pitches,
            swings: mine.swings,
            whiff_rate: mine.whiff_rate(),
            expected_whiff_rate: sw.expected_rate(),
            whiff_diff_low: low,
            whiff_diff_high: high,
            csw_rate: mine.csw_rate(),
            expected_csw_rate: scsw.expected_rate(),
            in_play_rate: mine.in_play_rate(),
            expected_in_play_rate: splay.expected_rate(),
            p_value: w.p_less(),
            q_value: 1.0,
            costly: false,
            compared_with,
        });
        tested.push(ti);
    }
    // Two families: the pitches he leans on in a situation (what a hitter
    // can sit on: the question the cost asks), and the pitches he avoids
    // there (whether one fares worse when he does throw it). Pooled, the
    // avoided pitches, half of a run's flagged tells, halved the power for
    // the first question.
    for direction in [crate::tells::Direction::More, crate::tells::Direction::Less] {
        let family: Vec<usize> = tested.iter().copied().filter(|&i| tests[i].direction == direction).collect();
        let p: Vec<f64> = family.iter().map(|&i| tests[i].cost.as_ref().unwrap().p_value).collect();
        for (&i, q) in family.iter().zip(fdr::bh_q_values(&p)) {
            let c = tests[i].cost.as_mut().unwrap();
            c.q_value = q;
            c.costly = q <= fdr_level && c.whiff_rate < c.expected_whiff_rate;
        }
    }
}

/// Do his pitches fare worse when the held-out model called them? One
/// pitch type (or `"all"`): the whiff rate of swings at pitches the model
/// gave the highest probability ("called"), against what the same type got
/// in the same counts when the model guessed otherwise.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CalledFigure {
    pub pitch_type: String,
    /// Swings at called pitches, and at the others, in the counts where
    /// both occur (the only ones that compare anything).
    pub called_swings: u64,
    pub other_swings: u64,
    pub whiff_rate_called: f64,
    /// Standardised by count (and type, when pooled): the other swings'
    /// whiff rate in the same strata.
    pub expected_whiff_rate: f64,
    /// 95% interval of whiff_rate_called − expected_whiff_rate.
    pub diff_low: f64,
    pub diff_high: f64,
    /// One-sided: fewer whiffs when called.
    pub p_value: f64,
}

impl CalledFigure {
    fn from(pitch_type: String, w: &Cmh, st: &Standardised, called: u64, other: u64) -> CalledFigure {
        let (low, high) = st.interval();
        CalledFigure {
            pitch_type,
            called_swings: called,
            other_swings: other,
            whiff_rate_called: st.rate(),
            expected_whiff_rate: st.expected_rate(),
            diff_low: low,
            diff_high: high,
            p_value: w.p_less(),
        }
    }
}

/// A pitcher's held-out pitches called or not: per pitch type and pooled,
/// with the pooled test's sums for the staff figure.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CalledOutcomes {
    pub pooled: CalledFigure,
    pub by_type: Vec<CalledFigure>,
    #[serde(skip)]
    pub sums: (Cmh, Standardised, u64, u64),
}

/// For a scored fit: each held-out pitch is "called" when the model's most
/// likely pitch was the one thrown. Swings are compared count by count
/// (Cochran–Mantel–Haenszel over type × count strata when pooled). `None`
/// without a `result` column or without swings.
pub fn called_outcomes(log: &PitchLog, task: &PitcherTask, scored: &crate::evaluate::fit::Scored, names: &[String]) -> Option<CalledOutcomes> {
    let results = log.result.as_ref()?;
    let k = task.n_classes;
    // [type][count]: (called swings, called whiffs, other swings, other whiffs)
    let mut cells = vec![[0u64; 4]; k * 12];
    for (i, &r) in scored.rows.iter().enumerate() {
        let y = task.labels[r as usize] as usize;
        let Some(res) = results[task.rows[r as usize] as usize] else { continue };
        let swing = matches!(res, PitchResult::SwingingStrike | PitchResult::Foul | PitchResult::InPlay);
        if !swing {
            continue;
        }
        let whiff = (res == PitchResult::SwingingStrike) as u64;
        let called = crate::evaluate::fit::argmax(scored.model_row(i)) == y;
        let c = &mut cells[y * 12 + task.count[r as usize] as usize];
        if called {
            c[0] += 1;
            c[1] += whiff;
        } else {
            c[2] += 1;
            c[3] += whiff;
        }
    }
    let mut pooled = (Cmh::default(), Standardised::default(), 0u64, 0u64);
    let mut by_type = Vec::new();
    for y in 0..k {
        let mut w = Cmh::default();
        let mut st = Standardised::default();
        let (mut called, mut other) = (0, 0);
        // Only counts where some swings were called and some not compare
        // anything; the figure rests on those swings alone.
        for c in cells[y * 12..(y + 1) * 12].iter().filter(|c| c[0] > 0 && c[2] > 0) {
            w.add(c[1], c[0], c[1] + c[3], c[0] + c[2]);
            st.add(c[1], c[0], c[3], c[2]);
            called += c[0];
            other += c[2];
        }
        if called > 0 {
            by_type.push(CalledFigure::from(names[task.class_types[y] as usize].clone(), &w, &st, called, other));
        }
        pooled.0.merge(&w);
        pooled.1.merge(&st);
        pooled.2 += called;
        pooled.3 += other;
    }
    if pooled.2 == 0 {
        return None;
    }
    Some(CalledOutcomes { pooled: CalledFigure::from("all".into(), &pooled.0, &pooled.1, pooled.2, pooled.3), by_type, sums: pooled })
}

/// The staff's pooled figure: every pitcher's strata together.
pub fn staff_called(all: &[&CalledOutcomes]) -> Option<CalledFigure> {
    let (mut w, mut st) = (Cmh::default(), Standardised::default());
    let (mut called, mut other) = (0, 0);
    for c in all {
        w.merge(&c.sums.0);
        st.merge(&c.sums.1);
        called += c.sums.2;
        other += c.sums.3;
    }
    (called > 0).then(|| CalledFigure::from("all".into(), &w, &st, called, other))
}

/// Outcome figures of one pitch type of a pitcher (all his pitches in the
/// log with a result).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TypeOutcomes {
    pub pitch_type: String,
    pub pitches: u64,
    pub swings: u64,
    pub whiff_rate: f64,
    pub csw_rate: f64,
    pub ball_rate: f64,
    pub in_play_rate: f64,
    /// Wilson 95% intervals of the four rates above.
    pub whiff_rate_95: (f64, f64),
    pub csw_rate_95: (f64, f64),
    pub ball_rate_95: (f64, f64),
    pub in_play_rate_95: (f64, f64),
}

/// His outcome figures by pitch type (empty without a `result` column).
pub fn by_type(log: &PitchLog, task: &PitcherTask, names: &[String]) -> Vec<TypeOutcomes> {
    let Some(results) = log.result.as_ref() else { return Vec::new() };
    let mut o = vec![Outcomes::default(); task.n_classes];
    for (i, &r) in task.rows.iter().enumerate() {
        if let Some(res) = results[r as usize] {
            o[task.labels[i] as usize].add(res);
        }
    }
    o.iter()
        .enumerate()
        .filter(|(_, x)| x.pitches > 0)
        .map(|(c, x)| TypeOutcomes {
            pitch_type: names[task.class_types[c] as usize].clone(),
            pitches: x.pitches,
            swings: x.swings,
            whiff_rate: x.whiff_rate(),
            csw_rate: x.csw_rate(),
            ball_rate: x.ball_rate(),
            in_play_rate: x.in_play_rate(),
            whiff_rate_95: Rate::of(x.whiffs, x.swings).bounds(),
            csw_rate_95: Rate::of(x.csw, x.pitches).bounds(),
            ball_rate_95: Rate::of(x.balls, x.pitches).bounds(),
            in_play_rate_95: Rate::of(x.in_play, x.pitches).bounds(),
        })
        .collect()
}

/// A rate with its Wilson 95% interval (`significance::wilson`).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Rate {
    pub rate: f64,
    pub low: f64,
    pub high: f64,
}

impl Rate {
    pub fn of(k: u64, n: u64) -> Rate {
        let iv = crate::significance::wilson::wilson_95(k, n);
        Rate { rate: ratio(k, n), low: iv.low, high: iv.high }
    }

    pub fn bounds(&self) -> (f64, f64) {
        (self.low, self.high)
    }
}

/// His outcome figures for one pitch type in one situation (a level of one
/// factor, or `all` for every pitch of the type): `outcomes.csv`.
#[derive(Debug, Clone, PartialEq)]
pub struct SituationOutcomes {
    pub pitcher: String,
    pub pitch_type: String,
    /// Factor name, or `all`.
    pub factor: String,
    pub level: String,
    pub pitches: u64,
    pub swings: u64,
    pub whiff: Rate,
    pub csw: Rate,
    pub ball: Rate,
    pub in_play: Rate,
}

/// His outcome figures per pitch type and per level of every situation
/// factor (empty without a `result` column). Rows run type by type, `all`
/// first, then factor by factor in the situations' order, levels in their
/// order; cells without a pitch are left out.
pub fn by_situation(log: &PitchLog, sit: &Situations, task: &PitcherTask, names: &[String]) -> Vec<SituationOutcomes> {
    let Some(results) = log.result.as_ref() else { return Vec::new() };
    let k = task.n_classes;
    let mut all = vec![Outcomes::default(); k];
    let mut cells: Vec<Vec<Outcomes>> = sit.factors.iter().map(|f| vec![Outcomes::default(); k * f.levels.len()]).collect();
    for (i, &r) in task.rows.iter().enumerate() {
        let Some(res) = results[r as usize] else { continue };
        let c = task.labels[i] as usize;
        all[c].add(res);
        for (f, col) in sit.factors.iter().enumerate() {
            let code = col.codes[r as usize] as usize;
            if code < col.levels.len() {
                cells[f][c * col.levels.len() + code].add(res);
            }
        }
    }
    let mut rows = Vec::new();
    let row = |ty: &str, factor: &str, level: &str, o: &Outcomes| SituationOutcomes {
        pitcher: task.name.clone(),
        pitch_type: ty.to_string(),
        factor: factor.to_string(),
        level: level.to_string(),
        pitches: o.pitches,
        swings: o.swings,
        whiff: Rate::of(o.whiffs, o.swings),
        csw: Rate::of(o.csw, o.pitches),
        ball: Rate::of(o.balls, o.pitches),
        in_play: Rate::of(o.in_play, o.pitches),
    };
    for c in 0..k {
        if all[c].pitches == 0 {
            continue;
        }
        let ty = &names[task.class_types[c] as usize];
        rows.push(row(ty, "all", "all", &all[c]));
        for (f, col) in sit.factors.iter().enumerate() {
            for (l, level) in col.levels.iter().enumerate() {
                let o = &cells[f][c * col.levels.len() + l];
                if o.pitches > 0 {
                    rows.push(row(ty, col.factor.name(), level, o));
                }
            }
        }
    }
    rows
}
