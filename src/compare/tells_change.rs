//! Tells that appeared, disappeared or held between the periods.
//!
//! The audit's tell search (`tells::find`, with its hierarchical false
//! discovery control) runs on each period on its own, every pitch of the
//! period used for discovery. Flagged tells are matched across periods by
//! (situation, pitch type, direction): flagged in both periods, it held;
//! only before, it disappeared; only after, it appeared. Narrower versions
//! of a flagged tell (`within`) are not listed on their own.
//!
//! The flags alone cannot say a tell changed: a real tell can miss the bar
//! in a period by chance. Nor can a test of "the same share in both
//! periods" run on the same pitches: the tell was chosen, among hundreds of
//! situations, because its share in one period was extreme, so such a test
//! would find a change far too often (the winner's curse; on the demo it
//! called three chance tells real changes). So tells are reported as they
//! are found, with each period's q-value, and a change is claimed only
//! through a test fixed in advance: a tell about a single count carries the
//! p and q of that count's mix-shift test. Other tells are listed, not
//! tested as changes.

use crate::evaluate::task::PitcherTask;
use crate::ingest::PitchLog;
use crate::settings::Settings;
use crate::situations::Situations;
use crate::tells::{self, situation_label, Direction, Situation, TellTest};
use serde::Serialize;
use std::collections::BTreeMap;

/// The tells of one period: every listed pitcher's rows are discovery rows.
pub fn period_tells(log: &PitchLog, sit: &Situations, in_period: &[bool], tasks: &[PitcherTask], settings: &Settings) -> Vec<TellTest> {
    let all: Vec<PitcherTask> = tasks
        .iter()
        .map(|t| {
            let mut t = t.clone();
            t.discovery = (0..t.rows.len() as u32).collect();
            t.held_out = Vec::new();
            t
        })
        .collect();
    let refs: Vec<&PitcherTask> = all.iter().collect();
    tells::find(log, sit, in_period, &refs, settings)
}

/// Whether the tell held, disappeared or appeared.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum TellStatus {
    Disappeared,
    Appeared,
    Held,
}

impl TellStatus {
    pub fn as_str(self) -> &'static str {
        match self {
            TellStatus::Disappeared => "tell_disappeared",
            TellStatus::Appeared => "tell_appeared",
            TellStatus::Held => "tell_held",
        }
    }
}

/// The situation's figures in one period.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TellSide {
    /// Pitches in the situation, and of the type among them.
    pub n: usize,
    pub k: usize,
    pub share: f64,
    /// His share of the type outside the situation.
    pub baseline_share: f64,
    pub flagged: bool,
    /// The tell's q-value in that period's search, when it was tested.
    pub q_value: Option<f64>,
}

#[derive(Debug, Clone)]
pub struct TellChange {
    pub status: TellStatus,
    pub situation: Situation,
    pub pitch_type: String,
    pub direction: Direction,
    pub before: TellSide,
    pub after: TellSide,
}

type Key = (String, String, Direction);

fn key(t: &TellTest) -> Key {
    (situation_label(&t.situation), t.pitch_type.clone(), t.direction)
}

/// (n, k, n outside, k outside) of `pitch_type` in `situation` over `rows`.
fn counts(log: &PitchLog, sit: &Situations, rows: &[u32], situation: &Situation, pitch_type: &str) -> (usize, usize, usize, usize) {
    let cols: Vec<(&crate::situations::FactorColumn, u8)> = situation
        .iter()
        .filter_map(|(f, l)| {
            let c = sit.get(*f)?;
            let code = c.levels.iter().position(|x| x == l)? as u8;
            Some((c, code))
        })
        .collect();
    let ty = log.pitch_types.iter().position(|t| t == pitch_type).map(|i| i as u16);
    let (mut n, mut k, mut no, mut ko) = (0, 0, 0, 0);
    for &r in rows {
        let r = r as usize;
        let is_type = Some(log.pitch_type[r]) == ty;
        if cols.len() == situation.len() && cols.iter().all(|(c, code)| c.codes[r] == *code) {
            n += 1;
            k += is_type as usize;
        } else {
            no += 1;
            ko += is_type as usize;
        }
    }
    (n, k, no, ko)
}

fn side(c: (usize, usize, usize, usize), t: Option<&TellTest>) -> TellSide {
    let (n, k, no, ko) = c;
    TellSide {
        n,
        k,
        share: if n > 0 { k as f64 / n as f64 } else { 0.0 },
        baseline_share: if no > 0 { ko as f64 / no as f64 } else { 0.0 },
        flagged: t.map(|t| t.flagged).unwrap_or(false),
        q_value: t.map(|t| t.q_value),
    }
}

/// Match one pitcher's flagged tells across the periods.
#[allow(clippy::too_many_arguments)]
pub fn changes(
    log: &PitchLog,
    sit: &Situations,
    name: &str,
    rows_before: &[u32],
    rows_after: &[u32],
    before: &[&TellTest],
    after: &[&TellTest],
) -> Vec<TellChange> {
    // His tests of each period (tells::ByPitcher::of); the filter keeps
    // the function right if given more.
    let mine = |v: &[&TellTest]| -> BTreeMap<Key, TellTest> {
        v.iter().filter(|t| t.pitcher == name).map(|t| (key(t), (*t).clone())).collect()
    };
    let (b, a) = (mine(before), mine(after));
    let main = |t: Option<&TellTest>| t.map(|t| t.flagged && t.within.is_none()).unwrap_or(false);
    let mut keys: Vec<&Key> = b.keys().chain(a.keys()).collect();
    keys.sort();
    keys.dedup();
    let mut out = Vec::new();
    for k in keys {
        let (tb, ta) = (b.get(k), a.get(k));
        if !main(tb) && !main(ta) {
            continue;
        }
        let any = tb.or(ta).expect("key from one side");
        let fb = tb.map(|t| t.flagged).unwrap_or(false);
        let fa = ta.map(|t| t.flagged).unwrap_or(false);
        let status = match (fb, fa) {
            (true, true) => TellStatus::Held,
            (true, false) => TellStatus::Disappeared,
            _ => TellStatus::Appeared,
        };
        let sb = side(counts(log, sit, rows_before, &any.situation, &any.pitch_type), tb);
        let sa = side(counts(log, sit, rows_after, &any.situation, &any.pitch_type), ta);
        out.push(TellChange {
            status,
            situation: any.situation.clone(),
            pitch_type: any.pitch_type.clone(),
            direction: any.direction,
            before: sb,
            after: sa,
        });
    }
    out.sort_by(|x, y| {
        x.status
            .cmp(&y.status)
            .then(situation_label(&x.situation).cmp(&situation_label(&y.situation)))
            .then(x.pitch_type.cmp(&y.pitch_type))
            .then(x.direction.cmp(&y.direction))
    });
    out
}
