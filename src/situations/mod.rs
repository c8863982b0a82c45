//! Situations: every pitch of an ordered log turned into the factor levels of
//! CONTRACT §2. Codes are small integers per factor; [`UNKNOWN`] marks a row
//! whose source value is missing (an empty optional cell).
pub mod regions;

use crate::ingest::PitchLog;
use crate::domain::levels::*;
use serde::Serialize;
use std::collections::HashMap;

/// Code of a row whose level is unknown.
pub const UNKNOWN: u8 = u8::MAX;

/// One factor's levels and the code of every row.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FactorColumn {
    pub factor: Factor,
    pub levels: Vec<String>,
    #[serde(skip)]
    pub codes: Vec<u8>,
}

impl FactorColumn {
    pub fn level(&self, code: u8) -> &str {
        if code == UNKNOWN {
            "unknown"
        } else {
            &self.levels[code as usize]
        }
    }
}

/// The situation of every pitch, plus plate-appearance bookkeeping.
#[derive(Debug, Clone, Serialize)]
pub struct Situations {
    pub factors: Vec<FactorColumn>,
    /// Factors that could not be built, with the reason (a missing column).
    pub dropped: Vec<(Factor, String)>,
    /// Caveats about how a factor was built.
    pub notes: Vec<String>,
    /// A plate-appearance id per row, unique within the log.
    #[serde(skip)]
    pub pa_id: Vec<u32>,
}

impl Situations {
    pub fn get(&self, f: Factor) -> Option<&FactorColumn> {
        self.factors.iter().find(|c| c.factor == f)
    }

    pub fn has(&self, f: Factor) -> bool {
        self.get(f).is_some()
    }

    /// A situation's (factor column, level code) pairs; `None` when a
    /// factor or level is not among these situations'.
    pub fn level_codes<'a>(&self, situation: impl IntoIterator<Item = (&'a Factor, &'a String)>) -> Option<Vec<(usize, u8)>> {
        situation
            .into_iter()
            .map(|(f, level)| {
                let i = self.factors.iter().position(|c| c.factor == *f)?;
                Some((i, self.factors[i].levels.iter().position(|l| l == level)? as u8))
            })
            .collect()
    }

    /// Whether row `row` is in the situation of these (factor column,
    /// level code) pairs ([`Self::level_codes`]).
    #[inline]
    pub fn holds(&self, codes: &[(usize, u8)], row: usize) -> bool {
        codes.iter().all(|&(i, c)| self.factors[i].codes[row] == c)
    }
}

/// Whether the pitch before row `i` in its plate appearance is missing
/// from the log, so its `prev_pitch` cannot be known: within a plate
/// appearance and pitcher, `pitch_no` skips a number or the count moves
/// in a way no single pitch moves it (a pitch adds one ball or one strike,
/// or leaves a two-strike count as it is: a foul; rules of the count,
/// common practice); or the first pitch of a plate appearance, thrown by
/// the pitcher of the row before, is past 0-0 (a plate appearance starts
/// at 0-0; a reliever's first pitch may come later in one, with no pitch
/// of his own before it).
pub fn missing_before(log: &PitchLog, i: usize, first_of_pa: bool, new_pa: bool) -> bool {
    let count_moved = |j: usize| -> bool {
        let (b0, s0, b1, s1) = (log.balls[j - 1], log.strikes[j - 1], log.balls[j], log.strikes[j]);
        (b1 == b0 + 1 && s1 == s0) || (b1 == b0 && s1 == s0 + 1) || (b1 == b0 && s1 == s0 && s0 == 2)
    };
    if !first_of_pa {
        let skipped = log.pitch_no.as_ref().is_some_and(|p| p[i] != p[i - 1].wrapping_add(1));
        return skipped || !count_moved(i);
    }
    let same_pitcher = i > 0 && log.game[i] == log.game[i - 1] && log.pitcher[i] == log.pitcher[i - 1];
    new_pa && same_pitcher && (log.balls[i], log.strikes[i]) != (0, 0)
}

/// Build every factor from an ordered log.
///
/// Plate appearances: with a `pa` column a new one starts when `(game, pa)`
/// changes; without it, when the game, the batter or the pitcher changes, or
/// the count is back to 0-0 (a 0-0 count only opens a plate appearance,
/// since every pitch moves the count or ends the PA — rules of the count,
/// common practice). A pitching change inside a plate appearance restarts
/// `prev_pitch` at `none`, since the new pitcher did not throw the previous
/// pitch. A pitch whose previous pitch is missing from the log (rejected,
/// set aside, or never logged: [`missing_before`]) has `prev_pitch`
/// [`UNKNOWN`], not the pitch before the gap.
pub fn build(log: &PitchLog) -> Situations {
    let n = log.len();
    let mut pa_id = Vec::with_capacity(n);
    let mut prev = Vec::with_capacity(n);
    let mut times = Vec::with_capacity(n);
    let mut cur_pa: u32 = 0;
    // (pitcher, batter) -> PAs in the current game
    let mut seen: HashMap<(u32, u32), u32> = HashMap::new();
    let mut cur_times: u32 = 1;
    let mut gaps = 0usize;
    for i in 0..n {
        let new_game = i == 0 || log.game[i] != log.game[i - 1];
        if new_game {
            seen.clear();
        }
        let new_pa = new_game
            || match &log.pa {
                Some(pa) => pa[i] != pa[i - 1],
                None => {
                    log.batter[i] != log.batter[i - 1]
                        || log.pitcher[i] != log.pitcher[i - 1]
                        || (log.balls[i] == 0 && log.strikes[i] == 0)
                }
            };
        if new_pa {
            if i > 0 {
                cur_pa += 1;
            }
            let e = seen.entry((log.pitcher[i], log.batter[i])).or_insert(0);
            *e += 1;
            cur_times = *e;
        } else if log.pitcher[i] != log.pitcher[i - 1] {
            // A reliever entering mid-PA faces this batter for the first time
            // unless he already did in this game.
            let e = seen.entry((log.pitcher[i], log.batter[i])).or_insert(0);
            *e += 1;
            cur_times = *e;
        }
        pa_id.push(cur_pa);
        times.push(times_through_index(cur_times) as u8);
        let same_pa_same_pitcher = !new_pa && log.pitcher[i] == log.pitcher[i - 1];
        let first_of_pa = new_pa || log.pitcher[i] != log.pitcher[i - 1];
        prev.push(if missing_before(log, i, first_of_pa, new_pa) {
            gaps += 1;
            UNKNOWN
        } else if same_pa_same_pitcher {
            log.pitch_type[i - 1] as u8 + 1
        } else {
            0
        });
    }

    let fixed = |f: Factor| f.fixed_levels().iter().map(|s| s.to_string()).collect::<Vec<_>>();
    let mut factors = Vec::new();
    let mut dropped = Vec::new();
    factors.push(FactorColumn {
        factor: Factor::Count,
        levels: fixed(Factor::Count),
        codes: (0..n).map(|i| count_index(log.balls[i], log.strikes[i]) as u8).collect(),
    });
    factors.push(FactorColumn {
        factor: Factor::Bats,
        levels: fixed(Factor::Bats),
        codes: log.bats.iter().map(|h| (*h == Hand::R) as u8).collect(),
    });
    factors.push(FactorColumn {
        factor: Factor::Platoon,
        levels: fixed(Factor::Platoon),
        codes: (0..n).map(|i| platoon_index(log.throws[i], log.bats[i]) as u8).collect(),
    });
    factors.push(FactorColumn {
        factor: Factor::Bases,
        levels: fixed(Factor::Bases),
        codes: (0..n).map(|i| bases_index(log.on_first[i], log.on_second[i], log.on_third[i]) as u8).collect(),
    });
    factors.push(FactorColumn {
        factor: Factor::Outs,
        levels: fixed(Factor::Outs),
        codes: log.outs.clone(),
    });
    if log.pitch_types.len() < 255 {
        let mut levels = vec![NO_PREV_PITCH.to_string()];
        levels.extend(log.pitch_types.iter().cloned());
        factors.push(FactorColumn { factor: Factor::PrevPitch, levels, codes: prev });
    } else {
        dropped.push((Factor::PrevPitch, "more than 254 pitch labels; merge them with [pitch_groups]".into()));
    }
    factors.push(FactorColumn { factor: Factor::TimesThrough, levels: fixed(Factor::TimesThrough), codes: times });
    factors.push(FactorColumn {
        factor: Factor::Inning,
        levels: fixed(Factor::Inning),
        codes: log.inning.iter().map(|&i| inning_index(i as u32) as u8).collect(),
    });
    match &log.score_diff {
        Some(sd) => factors.push(FactorColumn {
            factor: Factor::Score,
            levels: fixed(Factor::Score),
            codes: sd.iter().map(|d| d.map(|d| score_index(d) as u8).unwrap_or(UNKNOWN)).collect(),
        }),
        None => dropped.push((Factor::Score, "the log has no score_diff column to use".into())),
    }
    let mut notes = Vec::new();
    if log.pa.is_none() {
        // Kept, but inferred; inference can be wrong on logs with gaps.
        notes.push("no pa column: plate appearances were inferred from batter changes and 0-0 counts".to_string());
    }
    let backward = log.runs_backward();
    if let Some((rises, falls)) = backward {
        notes.push(format!(
            "the count falls from one pitch to the next in {} of the log's pairs of consecutive pitches to one batter and rises in {}: the file seems to list each game's pitches last to first; write them in the order thrown, or add pa and pitch_no columns, since until then plate appearances, previous pitches and times through the order are read backward",
            crate::domain::numbers::fmt_n(falls),
            crate::domain::numbers::fmt_n(rises)
        ));
    }
    // Read backward, every pitch seems to follow a gap: the note above says why.
    if gaps > 0 && backward.is_none() {
        notes.push(format!(
            "{} pitches come right after a pitch of the same plate appearance that is missing from the log (rejected, set aside or never logged: the count or pitch_no skips), so their previous pitch is read as unknown rather than as the one before the gap",
            crate::domain::numbers::fmt_n(gaps)
        ));
    }
    Situations { factors, dropped, notes, pa_id }
}
