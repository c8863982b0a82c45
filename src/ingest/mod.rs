//! Ingest: read a pitch log, map its columns, validate every row against
//! CONTRACT §1, keep rejected rows with their reasons, and order the rest by
//! date, game, plate appearance and pitch number.

pub mod derive;
pub mod names;
pub mod parse;
pub mod read;
pub mod units;
pub mod unreadable;

use crate::error::{Error, Result};
use crate::domain::columns::{NAME_COLUMNS, OPTIONAL_COLUMNS, REQUIRED_COLUMNS, SOURCE_COLUMNS};
use crate::settings::InputParams;
use crate::domain::levels::Hand;
use crate::domain::PitchResult;
use parse::*;
use read::{Format, RawTable};
use serde::Serialize;
use sha2::{Digest, Sha256};
use std::collections::{BTreeMap, BTreeSet, HashMap, HashSet};
use std::path::{Path, PathBuf};

/// One rejected input row: where, which column, the value and why.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct Rejected {
    /// 1-based CSV line (header = line 1) or 0-based Parquet row index.
    pub line: u64,
    /// A contract column, or `(whole row)` (never allocated per row).
    pub column: std::borrow::Cow<'static, str>,
    pub value: String,
    /// Why; a fixed reason is shared, not copied per row (a log of
    /// millions of copied rows keeps millions of these).
    pub reason: std::borrow::Cow<'static, str>,
}

/// A rejected value as kept in rejected.csv: whole up to 200 characters,
/// else its first 200 and its length; control characters shown escaped.
fn clip_value(v: &str) -> String {
    let n = v.chars().count();
    let shown: String = v.chars().take(200).flat_map(|c| if c.is_control() { c.escape_default().collect::<Vec<_>>() } else { vec![c] }).collect();
    if n > 200 {
        format!("{shown}… ({n} characters)")
    } else {
        shown
    }
}

/// Facts about the file that was read.
#[derive(Debug, Clone, Serialize)]
pub struct SourceInfo {
    pub path: PathBuf,
    #[serde(skip)]
    pub format: Format,
    pub rows_read: usize,
    pub rows_rejected: usize,
    pub sha256: String,
    /// Optional contract columns found in the file.
    pub optional_present: Vec<String>,
    /// Optional contract columns absent from the file.
    pub optional_missing: Vec<String>,
    /// Optional columns the file has but in other units than the
    /// contract's, or taken from the other side, set aside whole
    /// ([`units::misread_units`], [`units::score_from_the_other_side`]).
    pub optional_set_aside: Vec<units::SetAside>,
    /// Rows whose pitch label is not the pitcher's choice of pitch
    /// (`[set_aside] pitch_labels`), left out of the log and kept in
    /// `Ingested::set_aside`.
    pub rows_set_aside: usize,
    /// Those rows by label, most first.
    pub pitch_labels_set_aside: Vec<LabelSetAside>,
    /// The rejected rows' commonest reasons (column and reason), most rows
    /// first, at most three: what the run's note names.
    pub rejected_reasons: Vec<RejectedReason>,
    /// Contract columns the file lacks, worked out from the inning's half
    /// and each club's runs or name ([`derive::work_out`]).
    pub worked_out: Vec<derive::WorkedOut>,
    /// Notes on columns read another way to work them out: an inning
    /// written with its half, a half that cannot be read.
    pub derive_notes: Vec<String>,
}

/// One reason rows were rejected, with how many.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct RejectedReason {
    pub column: String,
    pub reason: String,
    pub rows: usize,
}

/// The commonest reasons among rejected rows, most rows first (then by
/// column and reason), at most `n`.
fn commonest_reasons(rows: &[Rejected], n: usize) -> Vec<RejectedReason> {
    let mut by: BTreeMap<(&str, &str), usize> = BTreeMap::new();
    for r in rows {
        *by.entry((r.column.as_ref(), r.reason.as_ref())).or_default() += 1;
    }
    let mut out: Vec<RejectedReason> =
        by.into_iter().map(|((c, reason), rows)| RejectedReason { column: c.to_string(), reason: reason.to_string(), rows }).collect();
    out.sort_by(|a, b| b.rows.cmp(&a.rows).then_with(|| (&a.column, &a.reason).cmp(&(&b.column, &b.reason))));
    out.truncate(n);
    out
}

/// One pitch label whose rows were set aside: how many, and what it is.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct LabelSetAside {
    pub label: String,
    pub pitches: usize,
    pub what: String,
}

impl SourceInfo {
    /// The labels set aside in words, most pitches first: `"PO" (a
    /// pitchout) 178, "IN" (an intentional ball) 134`.
    pub fn labels_set_aside_text(&self) -> String {
        self.pitch_labels_set_aside
            .iter()
            .map(|l| format!("\"{}\" ({}) {}", l.label, l.what, crate::domain::numbers::fmt_n(l.pitches)))
            .collect::<Vec<_>>()
            .join(", ")
    }
}

/// A validated pitch log, one entry per kept pitch, ordered by date, game,
/// plate appearance and pitch number. Strings are interned into tables and
/// rows hold compact indices, so a large log stays small in memory.
#[derive(Debug, Clone, Default)]
pub struct PitchLog {
    pub games: Vec<String>,
    /// Each pitcher as shown: his `pitcher` value, or with a
    /// `pitcher_name` column his name (`names::labels`).
    pub pitchers: Vec<String>,
    /// With a `pitcher_name` column that names them: each pitcher's
    /// `pitcher` value (his id), beside `pitchers`; empty otherwise.
    pub pitcher_ids: Vec<String>,
    pub batters: Vec<String>,
    /// Pitch labels after `[pitch_groups]`, sorted.
    pub pitch_types: Vec<String>,
    pub teams: Vec<String>,

    pub game: Vec<u32>,
    /// Days since 1970-01-01.
    pub date: Vec<i32>,
    pub season: Vec<i32>,
    pub pitcher: Vec<u32>,
    pub throws: Vec<Hand>,
    pub batter: Vec<u32>,
    pub bats: Vec<Hand>,
    pub inning: Vec<u16>,
    pub outs: Vec<u8>,
    pub balls: Vec<u8>,
    pub strikes: Vec<u8>,
    pub on_first: Vec<bool>,
    pub on_second: Vec<bool>,
    pub on_third: Vec<bool>,
    pub pitch_type: Vec<u16>,
    /// Where each kept row came from (line or row index, as in `Rejected`).
    pub source_line: Vec<u64>,

    pub pa: Option<Vec<u32>>,
    pub pitch_no: Option<Vec<u32>>,
    pub score_diff: Option<Vec<Option<i32>>>,
    pub result: Option<Vec<Option<PitchResult>>>,
    pub speed_mph: Option<Vec<Option<f32>>>,
    pub loc_side_ft: Option<Vec<Option<f32>>>,
    pub loc_height_ft: Option<Vec<Option<f32>>>,
    pub team: Option<Vec<Option<u32>>>,
    /// When `pa` is not numbered through the game (per team, per inning),
    /// why, in words: the rows were then kept in file order within each
    /// game. Also the note on game ids numbered per club, with or without
    /// `pa` (`ids_per_club`).
    pub pa_numbering: Option<String>,
    /// `pa` or `pitch_no` numbered from 0 in the file, read as from 1: a
    /// note when they are.
    pub counted_from_zero: Option<String>,
    /// Base columns written as the runner's id (empty where no runner is),
    /// read as occupied where filled: a note when they are.
    pub runner_ids: Option<String>,
    /// Pitchers shown by `pitcher_name`: the note on how
    /// (`names::note`).
    pub pitcher_naming: Option<String>,
    /// Game ids met on more than one date, each date read as a game of its
    /// own: a note when there are.
    pub games_on_two_dates: Option<String>,
}

/// The rows a run leaves out: those breaking the contract, and those set
/// aside as not the pitcher's choice of pitch.
#[derive(Debug, Clone, Default)]
pub struct LeftOut {
    pub rejected: Vec<Rejected>,
    pub set_aside: Vec<Rejected>,
}

/// A log and what was set aside while reading it.
#[derive(Debug, Clone)]
pub struct Ingested {
    pub log: PitchLog,
    pub rejected: Vec<Rejected>,
    /// Rows whose pitch label is not the pitcher's choice of pitch, with the
    /// reason (kept as rejected rows are, but not a breach of the contract).
    pub set_aside: Vec<Rejected>,
    pub source: SourceInfo,
}

impl PitchLog {
    pub fn len(&self) -> usize {
        self.game.len()
    }

    pub fn is_empty(&self) -> bool {
        self.game.is_empty()
    }

    /// Pitcher `p`'s `pitcher` value when he is shown by name
    /// (`pitcher_name`), else `None`.
    pub fn pitcher_id(&self, p: u32) -> Option<String> {
        self.pitcher_ids.get(p as usize).cloned()
    }

    pub fn seasons(&self) -> Vec<i32> {
        let set: BTreeSet<i32> = self.season.iter().copied().collect();
        set.into_iter().collect()
    }

    /// Notes on pitch labels and pitcher names that differ only in case,
    /// spaces, punctuation or word order ("Slider" and "slider", "Wren
    /// Alder" and "Alder, Wren"): they are read as
    /// different pitches or pitchers, which a typing slip in the log makes
    /// look like a new pitch or a newcomer. One sentence per kind, without
    /// a final stop; empty when there are none.
    pub fn near_duplicate_names(&self) -> Vec<String> {
        // Names sharing either key ([`loose_name`], [`word_key`]) form a
        // group: each name joins the group of the first name with its key.
        let groups = |names: &[String]| -> Vec<Vec<String>> {
            let mut group_of: Vec<usize> = (0..names.len()).collect();
            let mut first: BTreeMap<(u8, String), usize> = BTreeMap::new();
            for (i, n) in names.iter().enumerate() {
                for key in [(0, loose_name(n)), (1, word_key(n))] {
                    match first.get(&key) {
                        Some(&j) => {
                            // Merge i's group into j's (the lower index leads).
                            let (a, b) = (group_of[j].min(group_of[i]), group_of[j].max(group_of[i]));
                            group_of.iter_mut().filter(|g| **g == b).for_each(|g| *g = a);
                        }
                        None => {
                            first.insert(key, i);
                        }
                    }
                }
            }
            let mut by_group: BTreeMap<usize, Vec<String>> = BTreeMap::new();
            for (i, n) in names.iter().enumerate() {
                by_group.entry(group_of[i]).or_default().push(n.clone());
            }
            by_group.into_values().filter(|g| g.len() > 1).collect()
        };
        let listed = |gs: &[Vec<String>]| {
            first_three(gs.iter().map(|g| g.iter().map(|n| format!("\"{n}\"")).collect::<Vec<_>>().join(" and ")))
        };
        let mut notes = Vec::new();
        let types = groups(&self.pitch_types);
        if !types.is_empty() {
            notes.push(format!(
                "pitch labels that differ only in case, spaces, punctuation or word order are read as different pitches: {}; if they are one pitch, merge them with a [pitch_groups] table in the config",
                listed(&types)
            ));
        }
        let pitchers = groups(&self.pitchers);
        if !pitchers.is_empty() {
            notes.push(format!(
                "pitcher names that differ only in case, spaces, punctuation or word order are read as different pitchers: {}; if they are one pitcher, correct the spelling in the log",
                listed(&pitchers)
            ));
        }
        notes
    }

    /// When the count columns hold the count after each pitch rather than
    /// before it (a feed's convention the contract does not use), why, in
    /// words: every plate appearance starts at 0-0, so with `pitch_no` the
    /// first pitches tell. Read as written, every pitch would sit one count
    /// late (and the last of each plate appearance at 4 balls or 3 strikes,
    /// rejected), so every count tell would be wrong. Needs 20 first
    /// pitches; a log of the contract's counts has them all at 0-0, so a
    /// minority there is taken as the other convention (or wrong counts).
    pub fn count_after_the_pitch(&self) -> Option<String> {
        let pitch_no = self.pitch_no.as_ref()?;
        let (mut first, mut at_zero) = (0usize, 0usize);
        for r in 0..self.len() {
            if pitch_no[r] == 1 {
                first += 1;
                at_zero += usize::from(self.balls[r] == 0 && self.strikes[r] == 0);
            }
        }
        (first >= 20 && 2 * at_zero < first).then(|| {
            format!(
                "only {} of {} plate appearances' first pitches (pitch_no 1) are at 0-0, where every plate appearance starts: the balls and strikes columns look like the count after each pitch; give the count before it",
                crate::domain::numbers::fmt_n(at_zero),
                crate::domain::numbers::fmt_n(first)
            )
        })
    }

    /// When the `outs` column holds the outs after each pitch rather than
    /// before it, why, in words. Outs before the pitch stay the same through
    /// a plate appearance (but for a runner out on the bases, now and then);
    /// after the pitch they rise on the last pitch of every plate appearance
    /// that ends in an out, about two in three. With `pa`, a quarter or more
    /// of the plate appearances of two pitches or more (20 at least) whose
    /// outs change is taken as the other convention. Read as written, every
    /// out-ending pitch would sit one out late and the inning's last one at
    /// 3 outs, rejected.
    pub fn outs_after_the_pitch(&self) -> Option<String> {
        let pa = self.pa.as_ref()?;
        // A plate appearance is (game, pa, pitcher, inning): a log numbering
        // plate appearances per team holds two of each number in a game, the
        // two clubs' pitchers', and one numbering them per inning one in
        // every inning. Per one: its first outs, pitches, changed.
        let mut seen: HashMap<(u32, u32, u32, u16), (u8, u32, bool)> = HashMap::new();
        for r in 0..self.len() {
            let e = seen.entry((self.game[r], pa[r], self.pitcher[r], self.inning[r])).or_insert((self.outs[r], 0, false));
            e.1 += 1;
            e.2 |= e.0 != self.outs[r];
        }
        let (mut multi, mut changed) = (0usize, 0usize);
        for &(_, n, c) in seen.values() {
            if n >= 2 {
                multi += 1;
                changed += usize::from(c);
            }
        }
        (multi >= 20 && 4 * changed >= multi).then(|| {
            format!(
                "the outs change within {} of {} plate appearances of two pitches or more, where outs before each pitch stay the same through a plate appearance: the outs column looks like the outs after each pitch; give the outs before it",
                crate::domain::numbers::fmt_n(changed),
                crate::domain::numbers::fmt_n(multi)
            )
        })
    }

    /// A note on pitchers the log lists for two clubs on one date: a man
    /// pitches for one club a day, so two pitchers share the name there (a
    /// league's log keyed by name, two men of one name in it) or the rows
    /// are wrong. Read as written, they are one pitcher with both men's
    /// pitches. One sentence without a final stop; empty without a `team`
    /// column or when no name is.
    pub fn names_on_two_clubs_in_a_day(&self) -> Vec<String> {
        let Some(team) = &self.team else { return Vec::new() };
        // Rows are in date order: each date's pitchers and their first club.
        let mut today: HashMap<u32, u32> = HashMap::new();
        let mut date = None;
        let mut found: BTreeMap<u32, (i32, u32, u32)> = BTreeMap::new();
        for r in 0..self.len() {
            if date != Some(self.date[r]) {
                date = Some(self.date[r]);
                today.clear();
            }
            let Some(t) = team[r] else { continue };
            let first = *today.entry(self.pitcher[r]).or_insert(t);
            if first != t {
                found.entry(self.pitcher[r]).or_insert((self.date[r], first, t));
            }
        }
        if found.is_empty() {
            return Vec::new();
        }
        let shown = first_three(found.iter().map(|(&p, &(d, a, b))| {
            format!("\"{}\" ({}: {} and {})", self.pitchers[p as usize], parse::format_date(d), self.teams[a as usize], self.teams[b as usize])
        }));
        vec![format!(
            "pitcher names the log lists for two clubs on the same day, so two pitchers may share the name: {shown}; they are read as one pitcher with both men's pitches, so give each his own id in `pitcher`"
        )]
    }

    /// A note for a log without a `season` column whose games run across
    /// the turn of a year (a winter league's season, November to February):
    /// seasons then default to the calendar year, which cuts that season in
    /// two. Play on both sides of a 1 January within 30 days of it says so.
    /// One sentence without a final stop, or `None`.
    pub fn season_across_new_year(&self) -> Option<String> {
        let dates: BTreeSet<i32> = self.date.iter().copied().collect();
        let crossed: Vec<i32> = self
            .seasons()
            .windows(2)
            .filter(|w| w[1] == w[0] + 1)
            .map(|w| w[1])
            .filter(|&y| {
                let new_year = parse::days_from_civil(y, 1, 1);
                dates.range(new_year - 30..new_year).next().is_some() && dates.range(new_year..new_year + 30).next().is_some()
            })
            .collect();
        let y = *crossed.first()?;
        Some(format!(
            "the log has no season column and its games run across the turn of the year ({} to {}): seasons default to the calendar year, which cuts a season played over the winter in two; add a season column (its year for every game of it) and run again",
            parse::format_date(*dates.range(..parse::days_from_civil(y, 1, 1)).next_back()?),
            parse::format_date(*dates.range(parse::days_from_civil(y, 1, 1)..).next()?)
        ))
    }

    /// Pairs of consecutive rows of one game, pitcher and batter whose
    /// count rises by one, and those whose count falls by one: (rises,
    /// falls). Within a plate appearance the count only rises (or holds, on
    /// a two-strike foul); it falls only from one plate appearance to the
    /// next (rules of the count, common practice).
    pub fn count_moves(&self) -> (usize, usize) {
        let (mut rises, mut falls) = (0usize, 0usize);
        for i in 1..self.len() {
            if self.game[i] == self.game[i - 1] && self.pitcher[i] == self.pitcher[i - 1] && self.batter[i] == self.batter[i - 1] {
                let (a, b) = (self.balls[i - 1] + self.strikes[i - 1], self.balls[i] + self.strikes[i]);
                rises += (b == a + 1) as usize;
                falls += (b + 1 == a) as usize;
            }
        }
        (rises, falls)
    }

    /// Whether the log, in its reading order, lists each game's pitches
    /// last to first (a file sorted backward, without `pa` and `pitch_no`
    /// to set it right): the count falls between consecutive pitches to
    /// one batter at least 100 times and four times as often as it rises.
    /// `Some((rises, falls))` when it does.
    pub fn runs_backward(&self) -> Option<(usize, usize)> {
        let (rises, falls) = self.count_moves();
        (falls >= 100 && falls > 4 * rises).then_some((rises, falls))
    }

    /// A note on pitch labels the log seems to rename between two seasons:
    /// at least three pitchers (of at least 100 pitches in both) who threw
    /// none of a label in one season (under 1%) throw it on at least 5% of
    /// the next, each in place of the same old label
    /// ([`crate::domain::labels::took_the_place_of`]). A tracking system
    /// that renames a pitch does it for everyone at once; one pitcher's new
    /// pitch is his changed-arsenal caution. One sentence per rename,
    /// without a final stop.
    pub fn renamed_labels(&self) -> Vec<String> {
        use crate::domain::defaults::{COMPARE_ABSENT_SHARE, COMPARE_NEW_PITCH_SHARE};
        const MIN_PITCHES: usize = 100;
        const MIN_PITCHERS: usize = 3;
        // A share of the pitchers who threw the old label: in a league a few
        // pitchers swap the same two pitches every winter (4 of 600 a
        // changeup for a splitter in the simulated realistic league).
        const MIN_SHARE: f64 = 0.2;
        // Pitch counts by (pitcher, season), rows of one outing hitting the
        // same entry one after another.
        let mut at: HashMap<(u32, i32), usize> = HashMap::new();
        let mut tables: Vec<Vec<usize>> = Vec::new();
        let mut last: Option<((u32, i32), usize)> = None;
        for r in 0..self.len() {
            let key = (self.pitcher[r], self.season[r]);
            let i = match last {
                Some((k, i)) if k == key => i,
                _ => *at.entry(key).or_insert_with(|| {
                    tables.push(vec![0; self.pitch_types.len()]);
                    tables.len() - 1
                }),
            };
            last = Some((key, i));
            tables[i][self.pitch_type[r] as usize] += 1;
        }
        let counts: BTreeMap<(u32, i32), &Vec<usize>> = at.into_iter().map(|(k, i)| (k, &tables[i])).collect();
        let mix = |c: &[usize]| -> BTreeMap<String, f64> {
            let n: usize = c.iter().sum();
            c.iter().enumerate().filter(|(_, &k)| k > 0).map(|(t, &k)| (self.pitch_types[t].clone(), k as f64 / n as f64)).collect()
        };
        // (season, old label, new label) -> pitchers; (season, old label) ->
        // pitchers who threw it (at least 5%) the season before.
        let mut renames: BTreeMap<(i32, String, String), Vec<u32>> = BTreeMap::new();
        let mut threw: BTreeMap<(i32, String), usize> = BTreeMap::new();
        for (&(p, s0), c0) in &counts {
            let Some(&c1) = counts.get(&(p, s0 + 1)) else { continue };
            if c0.iter().sum::<usize>() < MIN_PITCHES || c1.iter().sum::<usize>() < MIN_PITCHES {
                continue;
            }
            let (before, after) = (mix(c0.as_slice()), mix(c1.as_slice()));
            for (t, &b) in &before {
                if b >= COMPARE_NEW_PITCH_SHARE {
                    *threw.entry((s0 + 1, t.clone())).or_default() += 1;
                }
            }
            for (new, &share) in &after {
                if share < COMPARE_NEW_PITCH_SHARE || before.get(new).copied().unwrap_or(0.0) >= COMPARE_ABSENT_SHARE {
                    continue;
                }
                if let Some((old, _, _)) = crate::domain::labels::took_the_place_of(&before, &after, new, COMPARE_NEW_PITCH_SHARE) {
                    renames.entry((s0 + 1, old.to_string(), new.clone())).or_default().push(p);
                }
            }
        }
        // The renames that pass, by season: (old, new, pitchers, of).
        let mut by_season: BTreeMap<i32, Vec<(String, String, Vec<u32>, usize)>> = BTreeMap::new();
        for ((season, old, new), who) in renames {
            let (n, of) = (who.len(), threw.get(&(season, old.clone())).copied().unwrap_or(0));
            if n >= MIN_PITCHERS && (n as f64) >= MIN_SHARE * of as f64 {
                by_season.entry(season).or_default().push((old, new, who, of));
            }
        }
        by_season
            .into_iter()
            .map(|(season, renames)| {
                if let [(old, new, who, of)] = renames.as_slice() {
                    let n = who.len();
                    let names = first_three(who.iter().map(|&p| self.pitchers[p as usize].clone()).collect::<Vec<_>>().into_iter());
                    return format!(
                        "in {season} the log writes \"{new}\", a label they did not use the season before, for {n} of the {of} pitchers who threw \"{old}\" then, each in place of his \"{old}\" ({names}): that looks like the tracking system renaming the pitch, not {n} arsenal changes at once; if it is, merge the two with [pitch_groups] ({}) and run again, since until then each of them is read as having changed his arsenal, which skews his figures",
                        group_line(old, new)
                    );
                }
                // A tracking system that renames its labels wholesale (codes
                // for names, a new capitalisation): one note, every pair.
                let pairs = renames
                    .iter()
                    .enumerate()
                    .map(|(i, (old, new, who, of))| {
                        let whom = if i == 0 { format!("{} of the {of} pitchers who threw it", who.len()) } else { format!("{} of {of}", who.len()) };
                        format!("\"{new}\" in place of \"{old}\" for {whom}")
                    })
                    .collect::<Vec<_>>()
                    .join(", ");
                let groups = renames.iter().map(|(old, new, _, _)| group_line(old, new)).collect::<Vec<_>>().join(", ");
                format!(
                    "in {season} the log writes {} labels it did not use the season before: {pairs}; that looks like the tracking system renaming its labels, not arsenal changes; if it is, merge each pair with [pitch_groups] ({groups}) and run again, since until then each of those pitchers is read as having changed his arsenal, which skews his figures",
                    renames.len()
                )
            })
            .collect()
    }
}

/// A `[pitch_groups]` line merging `new` into `old`, the key quoted when
/// it is not a bare TOML key (letters, digits, `_` and `-` only).
fn group_line(old: &str, new: &str) -> String {
    let bare = !old.is_empty() && old.chars().all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-');
    let quoted = |t: &str| format!("{t:?}");
    let key = if bare { old.to_string() } else { quoted(old) };
    format!("{key} = [{}, {}]", quoted(old), quoted(new))
}

/// The log's notes for `check` and a run's notes (each a sentence without
/// a final stop): names that differ only loosely, a name on two clubs in a
/// day, labels renamed between seasons, `pa` numbered per team or inning,
/// and a season across the new year when the file has no `season` column.
pub fn log_notes(log: &PitchLog, source: &SourceInfo) -> Vec<String> {
    let mut notes: Vec<String> = source.derive_notes.clone();
    notes.extend(source.worked_out.iter().map(|w| w.note.clone()));
    notes.extend(log.near_duplicate_names());
    notes.extend(log.names_on_two_clubs_in_a_day());
    notes.extend(log.renamed_labels());
    notes.extend(log.pa_numbering.clone());
    notes.extend(log.counted_from_zero.clone());
    notes.extend(log.runner_ids.clone());
    notes.extend(log.pitcher_naming.clone());
    notes.extend(log.games_on_two_dates.clone());
    if source.optional_missing.iter().any(|c| c == "season") {
        notes.extend(log.season_across_new_year());
    }
    notes
}

/// The first three of a note's items, joined by "; ", and how many more.
fn first_three(items: impl ExactSizeIterator<Item = String>) -> String {
    let n = items.len();
    let shown: Vec<String> = items.take(3).collect();
    let more = if n > 3 { format!(" (and {} more)", n - 3) } else { String::new() };
    format!("{}{more}", shown.join("; "))
}

/// A name as a loose key (see [`crate::domain::labels::loose_name`]). For
/// hints and notes, and for matching the labels set aside: names are
/// always read as written.
pub use crate::domain::labels::loose_name;

/// A name's words, lower-cased and sorted, so a name written last name
/// first ("Alder, Wren") shares it with the same name written first name
/// first ("Wren Alder"). For hints and notes only.
pub fn word_key(name: &str) -> String {
    let mut words: Vec<String> =
        name.split(|c: char| !c.is_alphanumeric()).filter(|w| !w.is_empty()).map(|w| w.to_lowercase()).collect();
    words.sort_unstable();
    words.join(" ")
}

/// Whether two names are the same but for case, spaces, punctuation or
/// word order ([`loose_name`], [`word_key`]).
pub fn same_loose_name(a: &str, b: &str) -> bool {
    loose_name(a) == loose_name(b) || word_key(a) == word_key(b)
}

/// Interns strings into a table, giving each a stable index in first-seen
/// order; `finish` re-sorts the table and returns the old→new mapping so
/// indices do not depend on file order.
#[derive(Default)]
struct Interner {
    // polars' hash map (a fast non-cryptographic hasher): interning is
    // done per row.
    index: polars::prelude::PlHashMap<String, u32>,
    names: Vec<String>,
}

impl Interner {
    fn get(&mut self, s: &str) -> u32 {
        if let Some(&i) = self.index.get(s) {
            return i;
        }
        let i = self.names.len() as u32;
        self.index.insert(s.to_string(), i);
        self.names.push(s.to_string());
        i
    }

    /// Sorted names and the map from first-seen index to sorted index.
    fn finish(self) -> (Vec<String>, Vec<u32>) {
        let mut order: Vec<u32> = (0..self.names.len() as u32).collect();
        order.sort_by(|&a, &b| self.names[a as usize].cmp(&self.names[b as usize]));
        let mut remap = vec![0u32; self.names.len()];
        for (new, &old) in order.iter().enumerate() {
            remap[old as usize] = new as u32;
        }
        let names = order.iter().map(|&i| self.names[i as usize].clone()).collect();
        (names, remap)
    }
}

fn sha256_of(path: &Path) -> Result<String> {
    use std::io::Read;
    let mut f = std::fs::File::open(path).map_err(|e| Error::io(path, "open the file", e))?;
    let mut hasher = Sha256::new();
    let mut buf = vec![0u8; 1 << 20];
    loop {
        let n = f.read(&mut buf).map_err(|e| Error::io(path, "read the file", e))?;
        if n == 0 {
            break;
        }
        hasher.update(&buf[..n]);
    }
    Ok(hasher.finalize().iter().map(|b| format!("{b:02x}")).collect())
}

/// The rows of `path` the contract rejects, and those set aside as not
/// the pitcher's choice, with their reasons, even when the log as a whole
/// is unusable (no valid row, `--strict`): so a failed run can still keep
/// them. An error only when the file cannot be read.
pub fn rows_left_out(path: &Path, input: &InputParams) -> Result<LeftOut> {
    load_checked(path, &input.lenient(), false).map(|i| LeftOut { rejected: i.rejected, set_aside: i.set_aside })
}

/// Read, validate and order a pitch log.
pub fn load(path: &Path, input: &InputParams) -> Result<Ingested> {
    load_checked(path, input, true)
}

/// `load`, with or without the checks that turn an unusable log into an
/// error.
fn load_checked(path: &Path, input: &InputParams, checked: bool) -> Result<Ingested> {
    // Only a regular file is read: a device (/dev/zero) or a pipe would
    // never end, or block before the first byte.
    if let Ok(meta) = std::fs::metadata(path) {
        if !meta.is_file() {
            let what = if meta.is_dir() { "a folder" } else { "not a regular file (a device or a pipe)" };
            return Err(Error::Data(format!(
                "{}: is {what}; save the pitch log to a CSV or Parquet file and give its path",
                path.display()
            )));
        }
    }
    let wanted: Vec<String> = REQUIRED_COLUMNS
        .iter()
        .chain(OPTIONAL_COLUMNS.iter())
        .chain(SOURCE_COLUMNS.iter())
        .chain(NAME_COLUMNS.iter())
        .map(|c| input.file_column(c).to_string())
        .collect();
    // The file's checksum is computed while polars reads it.
    let (table, sha) = rayon::join(|| read::read_table(path, &wanted), || sha256_of(path));
    let mut table = table?;
    // Columns the file writes another way are read (a date of time stamps,
    // hands written out, an inning with its half, balls and strikes as one
    // count), and a score difference or club it lacks is worked out from
    // the inning's half and each club's runs and name, when it has those.
    let (worked_out, mut derive_notes) = derive::work_out(&mut table, input);
    let missing: Vec<String> = REQUIRED_COLUMNS
        .iter()
        .filter(|c| table.column(input.file_column(c)).is_none())
        .map(|c| {
            let f = input.file_column(c);
            // A header that differs only in case, spaces or punctuation is
            // named, so the fix is plain (names must match exactly).
            let near = table.header.iter().find(|h| same_loose_name(h, f));
            match (f == *c, near) {
                (true, None) => c.to_string(),
                (true, Some(h)) => format!("{c} (the header has \"{h}\")"),
                (false, None) => format!("{c} (mapped to \"{f}\")"),
                (false, Some(h)) => format!("{c} (mapped to \"{f}\"; the header has \"{h}\")"),
            }
        })
        .collect();
    // A header read as one column holding semicolons or tabs is a file
    // written with another separator (a spreadsheet's export in many
    // locales), not a file missing its columns.
    let separator = table.header.iter().find_map(|h| [(';', "semicolons"), ('\t', "tabs")].into_iter().find(|(c, _)| h.contains(*c)));
    if let (false, Some((_, name))) = (missing.is_empty(), separator) {
        return Err(Error::Data(format!(
            "{}: the header is separated by {name}, not commas; export the log as comma-separated CSV (or Parquet)",
            path.display()
        )));
    }
    if !missing.is_empty() {
        // A column the file has in another form that could not be read
        // (a count not written balls-strikes) says so too.
        let why = derive_notes
            .iter()
            .find(|n| REQUIRED_COLUMNS.iter().any(|c| missing.iter().any(|m| m.starts_with(c)) && n.starts_with(&format!("`{c}`"))))
            .map(|n| format!(" ({n})"))
            .unwrap_or_default();
        return Err(Error::Data(format!(
            "{}: required column{} {} missing from the header{why}; add {} or map {} to the file's own header with a [columns] table in the config",
            path.display(),
            if missing.len() > 1 { "s" } else { "" },
            missing.join(", "),
            if missing.len() > 1 { "them" } else { "it" },
            if missing.len() > 1 { "them" } else { "it" },
        )));
    }
    let mut seen_header = std::collections::BTreeSet::new();
    for h in &table.header {
        if !seen_header.insert(h.as_str()) && wanted.contains(h) {
            return Err(Error::Data(format!(
                "{}: column \"{h}\" appears twice in the header; rename or drop one of them",
                path.display()
            )));
        }
    }
    if table.n_rows == 0 {
        return Err(Error::Data(format!(
            "{}: the file has a header but no pitches; export at least one row",
            path.display()
        )));
    }

    if !table.renamed.is_empty() {
        let each = table.renamed.iter().map(|(h, w)| format!("\"{h}\" as `{w}`")).collect::<Vec<_>>();
        let n = each.len();
        derive_notes.insert(
            0,
            format!(
                "{} header{} read as the name{} {} but for case, spaces or punctuation: {}",
                n,
                if n == 1 { "" } else { "s" },
                if n == 1 { "" } else { "s" },
                if n == 1 { "it matches" } else { "they match" },
                first_three(each.into_iter())
            ),
        );
    }
    // A measurement column in other units is set aside whole, as if the
    // file had none, before any row is read.
    let mut set_aside = units::misread_units(&table, input);
    let file_names: Vec<&str> = set_aside.iter().flat_map(|s| &s.columns).map(|c| input.file_column(c)).collect();
    table.columns.retain(|(name, _)| !file_names.contains(&name.as_str()));
    // So is an optional column most of whose values cannot be read (one
    // written in another format, its rows otherwise all rejected).
    let unreadable = unreadable::unreadable_columns(&table, input);
    let file_names: Vec<&str> = unreadable.iter().flat_map(|s| &s.columns).map(|c| input.file_column(c)).collect();
    table.columns.retain(|(name, _)| !file_names.contains(&name.as_str()));
    set_aside.extend(unreadable);
    let (mut log, rejected, aside_rows, blank) = validate(&table, input);
    // A score difference taken from the other side is set aside too: its
    // "ahead" would read as "behind".
    let mut worked_out = worked_out;
    if let Some(reason) = units::score_from_the_other_side(&log) {
        log.score_diff = None;
        if worked_out.iter().any(|w| w.column == "score_diff") {
            // Worked out from the half, the score says the half is given
            // from the other side, and so is any club worked out with it.
            let (score, reason) = derive::from_the_other_side(&reason, &worked_out);
            if score.iter().any(|c| c == "team") {
                log.team = None;
            }
            worked_out.retain(|w| !score.contains(&w.column));
            set_aside.push(units::SetAside { columns: score, reason });
        } else {
            set_aside.push(units::SetAside { columns: vec!["score_diff".into()], reason });
        }
    }
    let aside = |c: &str| set_aside.iter().any(|s| s.columns.iter().any(|x| x == c));
    let present: Vec<String> = OPTIONAL_COLUMNS
        .iter()
        .filter(|c| table.column(input.file_column(c)).is_some() && !aside(c))
        .map(|c| c.to_string())
        .collect();
    let absent: Vec<String> = OPTIONAL_COLUMNS
        .iter()
        .filter(|c| table.column(input.file_column(c)).is_none() && !aside(c))
        .map(|c| c.to_string())
        .collect();
    let source = SourceInfo {
        path: path.to_path_buf(),
        format: table.format,
        rows_read: table.n_rows - blank,
        rows_rejected: rejected.len(),
        sha256: sha?,
        optional_present: present,
        optional_missing: absent,
        optional_set_aside: set_aside,
        rows_set_aside: aside_rows.len(),
        pitch_labels_set_aside: labels_set_aside(&aside_rows, input),
        rejected_reasons: commonest_reasons(&rejected, 3),
        worked_out,
        derive_notes,
    };
    if !checked {
        return Ok(Ingested { log, rejected, set_aside: aside_rows, source });
    }
    if log.is_empty() && !aside_rows.is_empty() && rejected.is_empty() {
        return Err(Error::Data(format!(
            "{}: every row's pitch label is set aside as not the pitcher's choice of pitch ({}); if these labels are pitches, list them in [pitch_groups] or set [set_aside] pitch_labels in the config",
            path.display(),
            source.labels_set_aside_text()
        )));
    }
    if log.is_empty() {
        let why = rejected
            .first()
            .map(|r| format!(" (first: {} {} column {}: {})", table.format.locator(), r.line, r.column, r.reason))
            .unwrap_or_default();
        return Err(Error::Data(format!(
            "{}: no valid row among {} read{why}; `tellscope check` lists every reason",
            path.display(),
            table.n_rows
        )));
    }
    if let Some(why) = log.count_after_the_pitch().or_else(|| log.outs_after_the_pitch()) {
        return Err(Error::Data(format!("{}: {why}", path.display())));
    }
    if input.strict() && !rejected.is_empty() {
        let r = &rejected[0];
        return Err(Error::Data(format!(
            "{}: {} row{} rejected under --strict (first: {} {}, column {}: {}); fix the rows or drop --strict",
            path.display(),
            rejected.len(),
            if rejected.len() > 1 { "s" } else { "" },
            table.format.locator(),
            r.line,
            r.column,
            r.reason
        )));
    }
    Ok(Ingested { log, rejected, set_aside: aside_rows, source })
}

/// The set-aside rows counted by label, most first (then by label).
fn labels_set_aside(rows: &[Rejected], input: &InputParams) -> Vec<LabelSetAside> {
    let mut by: BTreeMap<&str, usize> = BTreeMap::new();
    for r in rows {
        *by.entry(r.value.as_str()).or_default() += 1;
    }
    let mut out: Vec<LabelSetAside> = by
        .into_iter()
        .map(|(label, pitches)| LabelSetAside {
            label: label.to_string(),
            pitches,
            what: input.set_aside_as(label).unwrap_or_default().to_string(),
        })
        .collect();
    out.sort_by(|a, b| b.pitches.cmp(&a.pitches).then(a.label.cmp(&b.label)));
    out
}

/// The check of an empty cell in a base column of runner ids.
static NO_RUNNER: std::result::Result<parse::Cell, String> = Ok(parse::Cell::Bool(false));

/// Validate every row straight into the log's columns (file order), then
/// order them: one column at a time is permuted, so no row-sized copy of the
/// whole log is ever made.
fn validate(table: &RawTable, input: &InputParams) -> (PitchLog, Vec<Rejected>, Vec<Rejected>, usize) {
    use rayon::prelude::*;
    let col = |c: &str| table.column(input.file_column(c));
    let cols: Vec<Option<&read::TextColumn>> =
        REQUIRED_COLUMNS.iter().chain(OPTIONAL_COLUMNS.iter()).map(|c| col(c)).collect();
    let has = |c: &str| col(c).is_some();
    let (has_pa, has_pitch_no) = (has("pa"), has("pitch_no"));

    let mut games = Interner::default();
    let mut pitchers = Interner::default();
    let mut batters = Interner::default();
    let mut types = Interner::default();
    let mut teams = Interner::default();
    let mut rejected = Vec::new();
    let mut aside = Vec::new();
    let mut blank = 0usize;
    let cap = table.n_rows;
    let mut log = PitchLog {
        game: Vec::with_capacity(cap),
        date: Vec::with_capacity(cap),
        season: Vec::with_capacity(cap),
        pitcher: Vec::with_capacity(cap),
        throws: Vec::with_capacity(cap),
        batter: Vec::with_capacity(cap),
        bats: Vec::with_capacity(cap),
        inning: Vec::with_capacity(cap),
        outs: Vec::with_capacity(cap),
        balls: Vec::with_capacity(cap),
        strikes: Vec::with_capacity(cap),
        on_first: Vec::with_capacity(cap),
        on_second: Vec::with_capacity(cap),
        on_third: Vec::with_capacity(cap),
        pitch_type: Vec::with_capacity(cap),
        source_line: Vec::with_capacity(cap),
        ..PitchLog::default()
    };
    // Optional columns are only gathered when the file has them.
    let want = |c: &str| if has(c) { cap } else { 0 };
    let mut pa = Vec::with_capacity(cap);
    let mut pitch_no = Vec::with_capacity(cap);
    let mut score = Vec::with_capacity(want("score_diff"));
    let mut result = Vec::with_capacity(want("result"));
    let mut speed = Vec::with_capacity(want("speed_mph"));
    let mut side = Vec::with_capacity(want("loc_side_ft"));
    let mut height = Vec::with_capacity(want("loc_height_ft"));
    let mut team = Vec::with_capacity(want("team"));
    // A pitcher's shown name (`pitcher_name`), per kept row.
    let name_col = col("pitcher_name");
    let mut shown: Vec<Option<u32>> = Vec::with_capacity(if name_col.is_some() { cap } else { 0 });
    // Each name is checked once: a missing-value marker is no name, and
    // so is a value that would be refused as a name (a control
    // character, or too long), which is counted for the note.
    let showable: Vec<bool> = name_col.map_or_else(Vec::new, |c| c.dict.iter().map(|v| parse::showable_name(v)).collect());
    let refused_names = name_col.map_or(0, |c| c.dict.iter().zip(&showable).filter(|(v, ok)| !**ok && !parse::missing_marker(v)).count());
    // Rows are parsed in parallel a chunk at a time (memory stays bounded),
    // then taken in file order: the result does not depend on threads.
    const CHUNK: usize = 1 << 15;
    // `pa` and `pitch_no` numbered from 0 (as a program counting from 0
    // writes them) hold nothing below 0, and about as many rows at 0 as at 1
    // (every plate appearance, or every game, has its 0): every number is
    // read one higher, the same order, rather than each first pitch
    // rejected. A stray 0 in a column numbered from 1 is rejected as ever.
    let from_zero = |ci: usize| {
        cols[ci].is_some_and(|c| {
            let n = |v: &String| v.trim().parse::<f64>().ok();
            if !c.dict.iter().all(|v| n(v).is_none_or(|x| x >= 0.0)) {
                return false;
            }
            let code_of = |x: f64| c.dict.iter().position(|v| n(v) == Some(x));
            let Some(zero) = code_of(0.0) else { return false };
            let uses = c.uses();
            let (at0, at1) = (uses[zero], code_of(1.0).map_or(0, |one| uses[one]));
            at0 >= 2 && 2 * at0 >= at1
        })
    };
    let zero_based = [from_zero(15), from_zero(16)];
    // A base column that holds the runner on the base (his id or name, or
    // 1) and is empty where none is, as many play-by-play exports write
    // it: no value says "no runner" (0, false, no), and either at least two
    // distinct values are not 0/1 at all (ids) or only "yes" values and
    // empty cells are there. Read whole, filled is a runner and empty is
    // none; a column mixing ids with 0/1 keeps its rows' reasons.
    let runner_ids: [bool; 3] = std::array::from_fn(|k| {
        cols[10 + k].is_some_and(|c| {
            let plain = |v: &&String| !parse::missing_marker(v);
            let no_false = c.dict.iter().filter(plain).all(|v| parse::parse_bool(v) != Some(false));
            let ids = c.dict.iter().filter(plain).filter(|v| parse::parse_bool(v).is_none() && parse::parse_cell(0, v).is_ok()).count();
            let yes_only = c.dict.iter().filter(plain).all(|v| parse::parse_bool(v) == Some(true));
            let empty = || (0..table.n_rows).any(|i| c.code(i).is_none_or(|code| parse::missing_marker(&c.dict[code])));
            no_false && (ids >= 2 || (yes_only && c.dict.iter().any(|v| plain(&v)) && empty()))
        })
    });
    // Each result value is looked up once: a pitchout or an intentional
    // ball written in `result` (its pitch label a pitch type) is the
    // bench's call, its row set aside below whatever its result.
    let aside_result: Vec<Option<&str>> =
        cols[18].map_or_else(Vec::new, |c| c.dict.iter().map(|v| if input.result_of(v).is_some() { None } else { input.result_set_aside_as(v) }).collect());
    // Each column's distinct values are checked once; rows look them up.
    let checks: Vec<Vec<std::result::Result<parse::Cell, String>>> = cols
        .par_iter()
        .enumerate()
        .map(|(ci, c)| {
            c.map_or_else(Vec::new, |c| {
                c.dict
                    .iter()
                    .map(|v| match ci {
                        // A base column of runner ids: any name is a runner,
                        // a missing-value marker ("NA") an empty base.
                        10..=12 if runner_ids[ci - 10] => match parse::missing_marker(v) {
                            true => Ok(parse::Cell::Bool(false)),
                            false => parse::parse_cell(0, v).map(|_| parse::Cell::Bool(true)),
                        },
                        // A required column's missing-value marker ("NA")
                        // is said to be one; a pitch label is read as
                        // written (an unknown pitch, set aside).
                        _ if ci < REQUIRED_COLUMNS.len() && ci != 13 && parse::missing_marker(v) => {
                            Err(format!("is \"{v}\", a missing value; every pitch needs a value here"))
                        }
                        // `pa` and `pitch_no` (columns 15 and 16) numbered from 0.
                        15 | 16 if zero_based[ci - 15] => parse::parse_counted_from_zero(ci, v),
                        // `result` (column 18: the fifth optional one)
                        // through the config's [result_groups]; a value set
                        // aside parses as any result (its row is left out).
                        18 => parse::parse_result(v, input),
                        _ => parse::parse_cell(ci, v),
                    })
                    .collect()
            })
        })
        .collect();
    // An optional column's missing-value markers ("NA", "null", "-": how R
    // and databases write a missing value) are empty cells.
    let missing: Vec<Vec<bool>> = cols
        .iter()
        .enumerate()
        .map(|(ci, c)| c.map_or_else(Vec::new, |c| c.dict.iter().map(|v| ci >= REQUIRED_COLUMNS.len() && parse::missing_marker(v)).collect()))
        .collect();
    let parse_at = |i: usize| {
        let mut vals: [parse::Value; REQUIRED_COLUMNS.len() + OPTIONAL_COLUMNS.len()] = [None; REQUIRED_COLUMNS.len() + OPTIONAL_COLUMNS.len()];
        for (((v, c), check), missing) in vals.iter_mut().zip(&cols).zip(&checks).zip(&missing) {
            *v = c.and_then(|c| c.code(i).filter(|&code| !missing[code]).map(|code| (c.dict[code].as_str(), &check[code])));
        }
        // In a base column of runner ids an empty cell is an empty base.
        for (k, _) in runner_ids.iter().enumerate().filter(|(_, &ids)| ids) {
            vals[10 + k] = vals[10 + k].or(Some(("", &NO_RUNNER)));
        }
        if let Ok(k) = table.ragged.binary_search_by_key(&i, |r| r.0) {
            // Too few or too many fields: its values would land in the wrong
            // columns, so the row is rejected whole.
            return Parsed::Breach((
                "(whole row)",
                None,
                format!(
                    "has {} fields where the header has {} (a missing or extra comma); quote values holding commas or fix the row",
                    table.ragged[k].1, table.width
                ),
            ));
        }
        if vals.iter().all(Option::is_none) {
            return Parsed::Blank; // a blank line is not a pitch
        }
        match parse_row(&vals, has_pa, has_pitch_no) {
            Ok(p) => Parsed::Row(p),
            Err(b) => Parsed::Breach(b),
        }
    };
    // Names are interned once per distinct value (first seen in a kept
    // row, in file order, as interning row by row would).
    let cache = |c: Option<&read::TextColumn>| vec![u32::MAX; c.map_or(0, |c| c.dict.len())];
    let (mut game_ids, mut pitcher_ids, mut batter_ids, mut type_ids, mut team_ids) =
        (cache(cols[0]), cache(cols[2]), cache(cols[4]), cache(cols[13]), cache(cols[22]));
    let code = |ci: usize, i: usize| cols[ci].and_then(|c| c.code(i));
    // Each pitch label is looked up once: why its rows are set aside, if
    // they are (not the pitcher's choice of pitch).
    let aside_as: Vec<Option<&str>> = cols[13].map_or_else(Vec::new, |c| c.dict.iter().map(|v| input.set_aside_as(v)).collect());
    for start in (0..table.n_rows).step_by(CHUNK) {
        let end = (start + CHUNK).min(table.n_rows);
        let parsed: Vec<Parsed> = (start..end).into_par_iter().map(parse_at).collect();
        for (i, parsed) in (start..end).zip(parsed) {
            match parsed {
                Parsed::Blank => blank += 1,
                Parsed::Row(p) if code(13, i).and_then(|c| aside_as[c]).is_some() => {
                    let what = code(13, i).and_then(|c| aside_as[c]).unwrap_or_default();
                    let label = clip_value(p.pitch_type);
                    aside.push(Rejected {
                        line: table.location(i),
                        column: "pitch_type".into(),
                        reason: format!("\"{label}\" is {what}, not the pitcher's choice of pitch: set aside ([set_aside] pitch_labels in the config)").into(),
                        value: label,
                    });
                }
                Parsed::Row(_) if code(18, i).and_then(|c| aside_result[c]).is_some() => {
                    let c = code(18, i).expect("a result value");
                    let value = clip_value(&cols[18].expect("the result column").dict[c]);
                    aside.push(Rejected {
                        line: table.location(i),
                        column: "result".into(),
                        reason: format!("the result \"{value}\" is {}, not the pitcher's choice of pitch: set aside ([set_aside] pitch_labels in the config)", aside_result[c].unwrap_or_default()).into(),
                        value,
                    });
                }
                Parsed::Row(p) => {
                    log.game.push(intern(&mut game_ids, code(0, i), |t| t.get(p.game), &mut games));
                    log.date.push(p.date);
                    log.season.push(p.season);
                    log.pitcher.push(intern(&mut pitcher_ids, code(2, i), |t| t.get(p.pitcher), &mut pitchers));
                    log.throws.push(p.throws);
                    log.batter.push(intern(&mut batter_ids, code(4, i), |t| t.get(p.batter), &mut batters));
                    log.bats.push(p.bats);
                    log.inning.push(p.inning);
                    log.outs.push(p.outs);
                    log.balls.push(p.balls);
                    log.strikes.push(p.strikes);
                    log.on_first.push(p.bases[0]);
                    log.on_second.push(p.bases[1]);
                    log.on_third.push(p.bases[2]);
                    log.pitch_type
                        .push(intern(&mut type_ids, code(13, i), |t| t.get(input.pitch_group(p.pitch_type)), &mut types) as u16);
                    log.source_line.push(table.location(i));
                    pa.push(p.pa.unwrap_or(0));
                    pitch_no.push(p.pitch_no.unwrap_or(0));
                    if score.capacity() > 0 {
                        score.push(p.score_diff);
                    }
                    if result.capacity() > 0 {
                        result.push(p.result);
                    }
                    if speed.capacity() > 0 {
                        speed.push(p.speed);
                    }
                    if side.capacity() > 0 {
                        side.push(p.side);
                    }
                    if height.capacity() > 0 {
                        height.push(p.height);
                    }
                    if team.capacity() > 0 {
                        team.push(p.team.map(|t| intern(&mut team_ids, code(22, i), |tab| tab.get(t), &mut teams)));
                    }
                    if let Some(c) = name_col {
                        shown.push(c.code(i).filter(|&k| showable[k]).map(|k| k as u32));
                    }
                }
                Parsed::Breach((column, value, reason)) => rejected.push(Rejected {
                    line: table.location(i),
                    column: column.into(),
                    // A rejected value is kept, but an absurdly long one only
                    // in part (with its length), so rejected.csv stays small.
                    value: clip_value(value.unwrap_or("")),
                    reason: reason.into(),
                }),
            }
        }
    }

    // Pitchers shown by name: the interner's names become the labels
    // (sorted as such), their ids kept beside them.
    let pitcher_ids = match name_col {
        Some(c) => {
            let named = names::tally(&log.pitcher, pitchers.names.len(), &shown, &c.dict);
            let ids = std::mem::take(&mut pitchers.names);
            pitchers.names = names::labels(&ids, &named.name);
            log.pitcher_naming = names::note(&ids, &named, &pitchers.names, refused_names);
            Some(ids)
        }
        None => None,
    };
    let pitcher_map = finish_names(&mut log, &mut team, [games, pitchers, batters, types, teams]);
    if let (Some(ids), true) = (pitcher_ids, log.pitcher_naming.is_some()) {
        let mut sorted = vec![String::new(); ids.len()];
        for (old, id) in ids.into_iter().enumerate() {
            sorted[pitcher_map[old] as usize] = id;
        }
        log.pitcher_ids = sorted;
    }

    let optional = Optional { pa, pitch_no, score, result, speed, side, height, team };
    let repeats = order_rows(&mut log, optional, |c| has(c), table.format.locator());
    log.games_on_two_dates = split_games_by_date(&mut log);
    let bases: Vec<String> = ["on_first", "on_second", "on_third"].into_iter().zip(runner_ids).filter(|(_, r)| *r).map(|(c, _)| format!("`{c}`")).collect();
    if !bases.is_empty() {
        log.runner_ids = Some(format!(
            "{} {} the runner on the base (an id, a name or 1) and {} empty where none is, never 0: a filled cell is read as a runner there and an empty one as none",
            match bases.len() {
                1 => bases[0].clone(),
                n => format!("{} and {}", bases[..n - 1].join(", "), bases[n - 1]),
            },
            if bases.len() == 1 { "holds" } else { "hold" },
            if bases.len() == 1 { "is" } else { "are" }
        ));
    }
    let named: Vec<&str> = ["pa", "pitch_no"].into_iter().zip(zero_based).filter(|(_, z)| *z).map(|(c, _)| c).collect();
    if !named.is_empty() {
        log.counted_from_zero = Some(format!(
            "{} {} from 0 in this file, where the contract counts from 1: each number is read one higher (the order is the same)",
            named.iter().map(|c| format!("`{c}`")).collect::<Vec<_>>().join(" and "),
            if named.len() == 1 { "counts" } else { "count" }
        ));
    }
    if !repeats.is_empty() {
        rejected.extend(repeats);
        // rejected.csv lists rows in file order.
        rejected.sort_by_key(|r| r.line);
    }
    (log, rejected, aside, blank)
}

/// A game id met on more than one date (a log numbering its games afresh
/// each season, say) names a game per date: each later date's rows get a
/// game of their own, named `id (YYYY-MM-DD)`, so no game (an outing, a
/// fold, a stratum of the tests) spans two days or two seasons. A log
/// whose ids are unique, as the contract asks, is left as it is. Rows are
/// in date order, so an id's first date keeps it.
/// Returns a note when any id was split: how many, with the first one's
/// dates (a game suspended and finished another day is read as two games,
/// its times through the order starting again in the second).
fn split_games_by_date(log: &mut PitchLog) -> Option<String> {
    let mut first_date: Vec<Option<i32>> = vec![None; log.games.len()];
    let mut later: BTreeMap<(u32, i32), u32> = BTreeMap::new();
    let n_ids = log.games.len();
    for i in 0..log.len() {
        let (g, d) = (log.game[i], log.date[i]);
        match first_date[g as usize] {
            None => first_date[g as usize] = Some(d),
            Some(f) if f == d => {}
            Some(_) => {
                let games = &mut log.games;
                log.game[i] = *later.entry((g, d)).or_insert_with(|| {
                    games.push(format!("{} ({})", games[g as usize], parse::format_date(d)));
                    (games.len() - 1) as u32
                });
            }
        }
    }
    let split: BTreeSet<u32> = later.keys().map(|&(g, _)| g).collect();
    let &first = split.iter().next()?;
    let dates: Vec<String> = std::iter::once(first_date[first as usize]?)
        .chain(later.keys().filter(|&&(g, _)| g == first).map(|&(_, d)| d))
        .map(parse::format_date)
        .collect();
    Some(format!(
        "{} of the {} game ids {} used on more than one date (\"{}\" on {}): each date's rows are read as a game of its own, so a game suspended and finished another day counts as two, its times through the order starting again; if ids are numbered afresh each season, nothing is lost",
        crate::domain::numbers::fmt_n(split.len()),
        crate::domain::numbers::fmt_n(n_ids),
        if split.len() == 1 { "is" } else { "are" },
        log.games[first as usize],
        dates.join(" and ")
    ))
}

/// The games (date, game) whose `pa` is not numbered through the game, and
/// a note on them: a plate appearance lies in one inning and is pitched to
/// by one club, so a number whose rows span two innings, or two clubs with
/// a `team` column, is a number used again (per team, per inning). A game
/// with a tenth of its numbers so, and at least two, is taken as numbered
/// that way; numbered through the game, a plate appearance spans two
/// innings only when the third out falls on the bases during it. A number
/// holding two pitchers facing two batters is used again too (numbered per
/// pitcher: each reliever's batters faced counted from 1), and one such
/// number is enough: a plate appearance changes pitcher (a reliever
/// mid-count) or batter (a pinch hitter) but never both.
fn pa_not_through_the_game(log: &PitchLog, optional: &Optional) -> (HashSet<(i32, u32)>, Option<String>) {
    // Per number: its first row's inning, club, pitcher and batter; used
    // again (another inning or club); two pitchers facing two batters.
    let mut first: HashMap<(i32, u32, u32), (u16, Option<u32>, u32, u32, bool, bool)> = HashMap::new();
    for i in 0..log.len() {
        let team = optional.team.get(i).copied().flatten();
        let e = first
            .entry((log.date[i], log.game[i], optional.pa[i]))
            .or_insert((log.inning[i], team, log.pitcher[i], log.batter[i], false, false));
        e.4 |= e.0 != log.inning[i] || matches!((e.1, team), (Some(a), Some(b)) if a != b);
        e.5 |= e.2 != log.pitcher[i] && e.3 != log.batter[i];
    }
    // Per game: numbers, numbers used again, numbers of two pitchers to
    // two batters.
    let mut games: HashMap<(i32, u32), (usize, usize, usize)> = HashMap::new();
    for (&(d, g, _), e) in &first {
        let c = games.entry((d, g)).or_default();
        c.0 += 1;
        c.1 += usize::from(e.4);
        c.2 += usize::from(e.5);
    }
    let not_through: HashSet<(i32, u32)> =
        games.iter().filter(|(_, &(n, r, two))| (r >= 2 && 10 * r >= n) || two > 0).map(|(&k, _)| k).collect();
    let note = (!not_through.is_empty()).then(|| {
        format!(
            "in {} of the {} games, `pa` numbers hold pitches of two innings, two clubs or two pitchers to two batters, so it is numbered per team, per inning or per pitcher there rather than through the game: those games' rows are kept in the file's order (give the file in game order, or number pa through the game)",
            crate::domain::numbers::fmt_n(not_through.len()),
            crate::domain::numbers::fmt_n(games.len())
        )
    });
    (not_through, note)
}

/// A note when game ids are numbered per club (each club's nth game), not
/// per game: a game has two clubs, so an id holding the pitchers of more
/// than two on one day is not one game. Needs `team`; with `pa`, the same
/// ids also show as `pa` collisions, which this note then explains.
fn ids_per_club(log: &PitchLog, optional: &Optional) -> Option<String> {
    let mut clubs: HashMap<(i32, u32), HashSet<u32>> = HashMap::new();
    let mut last = None;
    for i in 0..log.len() {
        let Some(t) = optional.team.get(i).copied().flatten() else { continue };
        // Rows of one game and club come in runs: one insert per run.
        let here = (log.date[i], log.game[i], t);
        if last != Some(here) {
            clubs.entry((here.0, here.1)).or_default().insert(t);
            last = Some(here);
        }
    }
    let crowded: Vec<(usize, (i32, u32))> = clubs.iter().filter(|(_, c)| c.len() > 2).map(|(&k, c)| (c.len(), k)).collect();
    let &(most, (date, game)) = crowded.iter().max()?;
    Some(format!(
        "in {} of the {} games, one game id holds pitchers of more than two clubs on one day (\"{}\" on {} holds {most}): the ids look numbered per club (each club's nth game), not per game; each pitcher's outings are read in the file's order, but give each game an id of its own",
        crate::domain::numbers::fmt_n(crowded.len()),
        crate::domain::numbers::fmt_n(clubs.len()),
        log.games[game as usize],
        parse::format_date(date)
    ))
}

/// A pitcher's outing logged twice, which the row-by-row rule
/// ([`order_rows`]) cannot see: a game under a second id on the same date
/// (two clubs' exports of one game merged, say), or the same game's rows
/// again under its own id in a log without `pa` and `pitch_no` (a log
/// appended to itself). A copy repeats the outing pitch for pitch, every
/// value of every row (batter, inning, outs, count, bases, pitch type, and
/// the score, result, speed and location where the file has them); two
/// real outings of at least 10 pitches never do. Once one outing of 10
/// pitches or more gives a copied game away, every outing of that game
/// repeating its original is a copy too (a reliever's three pitches among
/// them). The copy later in the file is dropped from `order` (in date, game
/// order) and returned as rejected, so no pitch counts twice in a test.
fn drop_copied_games(log: &PitchLog, optional: &Optional, numbered: bool, order: &mut Vec<u32>, locator: &str) -> Vec<Rejected> {
    const LONG: usize = 10;
    const TWICE_IN_GAME: &str = "repeats, pitch for pitch, the pitcher's earlier pitches in this game (every value of each row): the game's rows are logged twice; remove the copy";
    const UNDER_TWO_IDS: &str = "repeats, pitch for pitch, the same pitcher's outing in another game on the same date (every value but the game id): one game logged twice under two ids; remove the copy";
    // Everything the row says of the pitch (the optional columns the file
    // has included: a copy repeats its speed and location to the digit).
    let pitch = |i: u32| {
        let i = i as usize;
        let sit = (log.batter[i], log.bats[i], log.inning[i], log.outs[i], log.balls[i], log.strikes[i], log.on_first[i], log.on_second[i], log.on_third[i]);
        let got = |v: &Vec<Option<f32>>| v.get(i).copied().flatten().map(f32::to_bits);
        let more = (optional.score.get(i).copied().flatten(), optional.result.get(i).copied().flatten(), got(&optional.speed), got(&optional.side), got(&optional.height));
        (sit, log.pitch_type[i], more)
    };
    let same = |a: &[u32], b: &[u32]| a.len() == b.len() && a.iter().zip(b).all(|(&x, &y)| pitch(x) == pitch(y));
    // Each copied row with its note: which outing it copies, and how.
    let mut copies: Vec<(u32, u32)> = Vec::new();
    let mut notes: Vec<(String, &'static str)> = Vec::new();
    let mut start = 0;
    while start < order.len() {
        let date = log.date[order[start] as usize];
        let end = start + order[start..].iter().take_while(|&&i| log.date[i as usize] == date).count();
        // Each (pitcher, game) outing of the day, in order, and each game's
        // first line in the file.
        let mut outings: BTreeMap<(u32, u32), Vec<u32>> = BTreeMap::new();
        let mut first_line: HashMap<u32, u64> = HashMap::new();
        for &i in &order[start..end] {
            let (p, g) = (log.pitcher[i as usize], log.game[i as usize]);
            outings.entry((p, g)).or_default().push(i);
            let line = first_line.entry(g).or_insert(u64::MAX);
            *line = (*line).min(log.source_line[i as usize]);
        }
        // The same game's rows twice over: found through one long outing,
        // then every outing of that game that is its first half twice.
        let twice = |rows: &[u32]| rows.len() % 2 == 0 && same(&rows[..rows.len() / 2], &rows[rows.len() / 2..]);
        // (A numbered log's copy repeats its pa and pitch_no too, and the row
        // rule has dropped it.)
        let doubled: BTreeSet<u32> = if numbered {
            BTreeSet::new()
        } else {
            outings.iter().filter(|(_, rows)| rows.len() >= 2 * LONG && twice(rows)).map(|((_, g), _)| *g).collect()
        };
        for ((p, g), rows) in &outings {
            let half = rows.len() / 2;
            if doubled.contains(g) && !rows.is_empty() && twice(rows) {
                let value = format!(
                    "game {}, {} (first copy at {locator} {})",
                    log.games[*g as usize], log.pitchers[*p as usize], log.source_line[rows[0] as usize]
                );
                notes.push((clip_value(&value), TWICE_IN_GAME));
                copies.extend(rows[half..].iter().map(|&i| (i, notes.len() as u32 - 1)));
            }
        }
        // A game under a second id: found through one long outing, then
        // every outing of the copy that repeats one of the original's.
        let mut pairs: BTreeSet<(u32, u32)> = BTreeSet::new();
        let by_pitcher: Vec<(&(u32, u32), &Vec<u32>)> = outings.iter().collect();
        for (a, ((p, g1), r1)) in by_pitcher.iter().enumerate() {
            for ((q, g2), r2) in &by_pitcher[a + 1..] {
                if q != p {
                    break;
                }
                if r1.len() >= LONG && same(r1, r2) {
                    let (orig, copy) = if first_line[g1] <= first_line[g2] { (*g1, *g2) } else { (*g2, *g1) };
                    pairs.insert((orig, copy));
                }
            }
        }
        for &(orig, copy) in &pairs {
            for ((p, g), rows) in &outings {
                if *g != copy {
                    continue;
                }
                if let Some(o) = outings.get(&(*p, orig)).filter(|o| same(o, rows)) {
                    let value = format!(
                        "game {}, {} (first copy: game {}, {locator} {})",
                        log.games[copy as usize], log.pitchers[*p as usize], log.games[orig as usize], log.source_line[o[0] as usize]
                    );
                    notes.push((clip_value(&value), UNDER_TWO_IDS));
                    copies.extend(rows.iter().map(|&i| (i, notes.len() as u32 - 1)));
                }
            }
        }
        start = end;
    }
    if copies.is_empty() {
        return Vec::new();
    }
    // A row is dropped once (its first note), and the rest kept in order.
    copies.sort_unstable();
    copies.dedup_by_key(|c| c.0);
    let mut dropped = vec![false; log.len()];
    copies.iter().for_each(|&(i, _)| dropped[i as usize] = true);
    order.retain(|&i| !dropped[i as usize]);
    let mut out: Vec<Rejected> = copies
        .into_iter()
        .map(|(i, n)| Rejected {
            line: log.source_line[i as usize],
            column: "(whole row)".into(),
            value: notes[n as usize].0.clone(),
            reason: notes[n as usize].1.into(),
        })
        .collect();
    out.sort_by_key(|r| r.line);
    out
}

/// A parsed row of the input, in file order.
enum Parsed<'a> {
    Blank,
    Row(parse::ParsedRow<'a>),
    Breach(parse::Breach<'a>),
}

/// The interned id of a kept row's value (code `code` of its column),
/// named through `name` the first time the value is met.
fn intern(ids: &mut [u32], code: Option<usize>, name: impl FnOnce(&mut Interner) -> u32, interner: &mut Interner) -> u32 {
    let code = code.expect("a kept row has this value");
    if ids[code] == u32::MAX {
        ids[code] = name(interner);
    }
    ids[code]
}

/// The optional columns as gathered in file order (empty when absent;
/// `pa` and `pitch_no` are 0 where absent).
struct Optional {
    pa: Vec<u32>,
    pitch_no: Vec<u32>,
    score: Vec<Option<i32>>,
    result: Vec<Option<PitchResult>>,
    speed: Vec<Option<f32>>,
    side: Vec<Option<f32>>,
    height: Vec<Option<f32>>,
    team: Vec<Option<u32>>,
}

/// The names of games, pitchers, batters, pitch types and clubs in their
/// sorted order, and every row's ids moved to it; returns the pitchers'
/// map from first-seen to sorted index.
fn finish_names(log: &mut PitchLog, team: &mut [Option<u32>], interners: [Interner; 5]) -> Vec<u32> {
    let [games, pitchers, batters, types, teams] = interners;
    let (game_names, game_map) = games.finish();
    let (pitcher_names, pitcher_map) = pitchers.finish();
    let (batter_names, batter_map) = batters.finish();
    let (type_names, type_map) = types.finish();
    let (team_names, team_map) = teams.finish();
    log.game.iter_mut().for_each(|g| *g = game_map[*g as usize]);
    log.pitcher.iter_mut().for_each(|g| *g = pitcher_map[*g as usize]);
    log.batter.iter_mut().for_each(|g| *g = batter_map[*g as usize]);
    log.pitch_type.iter_mut().for_each(|g| *g = type_map[*g as usize] as u16);
    team.iter_mut().for_each(|t| *t = t.map(|t| team_map[t as usize]));
    log.games = game_names;
    log.pitchers = pitcher_names;
    log.batters = batter_names;
    log.pitch_types = type_names;
    log.teams = team_names;
    pitcher_map
}

/// Order the rows (CONTRACT §1): by date, game, pa, pitch_no. With both
/// `pa` and `pitch_no` in the file, a row repeating an earlier row's date,
/// game, pa and pitch_no, pitcher, batter, count, outs and pitch type is a
/// pitch logged twice (a log appended to itself, say): the later copy in
/// the file is dropped and returned as rejected, so no pitch counts twice
/// in a test.
fn order_rows(log: &mut PitchLog, optional: Optional, has: impl Fn(&str) -> bool, locator: &str) -> Vec<Rejected> {
    // CONTRACT §1: order by date, game, pa, pitch_no; file order within a
    // game when pa/pitch_no are absent (they are then 0 for every row, so
    // the file position decides), or when pa is absent and pitch_no is
    // numbered within each plate appearance. The sort is stable.
    let mut order: Vec<u32> = (0..log.game.len() as u32).collect();
    // A `pa` numbered per team or per inning repeats its numbers within a
    // game: ordered by it, the halves and innings would interleave, so the
    // rows keep their file order within each game instead.
    let (not_through, note) = if has("pa") { pa_not_through_the_game(log, &optional) } else { (HashSet::new(), None) };
    // Ids numbered per club explain `pa` collisions too: said instead.
    log.pa_numbering = ids_per_club(log, &optional).or(note);
    let through = |i: usize| not_through.is_empty() || !not_through.contains(&(log.date[i], log.game[i]));
    // Without `pa`, a `pitch_no` numbered within each plate appearance (as
    // the contract has it) cannot order a game's rows: sorted by it, every
    // plate appearance's first pitch would come first. It orders them only
    // when it runs through each game (no number twice in a game), else the
    // file's order stands.
    let by_pitch_no = has("pa") || {
        let mut seen = HashSet::new();
        (0..log.len()).all(|i| seen.insert((log.date[i], log.game[i], optional.pitch_no[i])))
    };
    let key = |i: u32| {
        let i = i as usize;
        if through(i) {
            (log.date[i], log.game[i], optional.pa[i], if by_pitch_no { optional.pitch_no[i] } else { 0 })
        } else {
            (log.date[i], log.game[i], 0, 0)
        }
    };
    order.sort_by_key(|&i| key(i));
    let mut repeats = Vec::new();
    if has("pa") && has("pitch_no") {
        // What the pitch was: a copy agrees on all of it. Rows that share
        // a place but not the pitch (a log numbering plate appearances per
        // team, say) are two pitches, and are kept as they are.
        let pitch = |i: u32| {
            let i = i as usize;
            let bases = (log.on_first[i], log.on_second[i], log.on_third[i]);
            (log.pitcher[i], log.batter[i], log.inning[i], bases, log.balls[i], log.strikes[i], log.outs[i], log.pitch_type[i])
        };
        // The kept rows of a place (date, game, pa, pitch_no): the current
        // one in place order, or each place's in file order.
        let place_of = |i: u32| {
            let i = i as usize;
            (log.date[i], log.game[i], optional.pa[i], optional.pitch_no[i])
        };
        let mut current: Vec<u32> = Vec::new();
        let mut by_place: HashMap<(i32, u32, u32, u32), Vec<u32>> = HashMap::new();
        order.retain(|&i| {
            let place = if through(i as usize) {
                if current.first().is_some_and(|&f| place_of(f) != place_of(i)) {
                    current.clear();
                }
                &mut current
            } else {
                by_place.entry(place_of(i)).or_default()
            };
            match place.iter().find(|&&f| pitch(f) == pitch(i)) {
                Some(&f) => {
                    let (game, pa, no) = (&log.games[log.game[i as usize] as usize], optional.pa[i as usize], optional.pitch_no[i as usize]);
                    repeats.push(Rejected {
                        line: log.source_line[i as usize],
                        column: "(whole row)".into(),
                        value: clip_value(&format!("game {game}, pa {pa}, pitch_no {no} (first at {locator} {})", log.source_line[f as usize])),
                        reason: "repeats an earlier row's pitch: the same game, pa, pitch_no, pitcher, batter, inning, bases, count, outs and pitch type (a pitch logged twice); remove the copy".into(),
                    });
                    false
                }
                None => {
                    place.push(i);
                    true
                }
            }
        });
    }
    repeats.extend(drop_copied_games(log, &optional, has("pa") || has("pitch_no"), &mut order, locator));
    fn reorder<T: Copy>(v: &mut Vec<T>, order: &[u32]) {
        *v = order.iter().map(|&i| v[i as usize]).collect();
    }
    reorder(&mut log.game, &order);
    reorder(&mut log.date, &order);
    reorder(&mut log.season, &order);
    reorder(&mut log.pitcher, &order);
    reorder(&mut log.throws, &order);
    reorder(&mut log.batter, &order);
    reorder(&mut log.bats, &order);
    reorder(&mut log.inning, &order);
    reorder(&mut log.outs, &order);
    reorder(&mut log.balls, &order);
    reorder(&mut log.strikes, &order);
    reorder(&mut log.on_first, &order);
    reorder(&mut log.on_second, &order);
    reorder(&mut log.on_third, &order);
    reorder(&mut log.pitch_type, &order);
    reorder(&mut log.source_line, &order);
    fn opt<T: Copy>(present: bool, mut v: Vec<T>, order: &[u32]) -> Option<Vec<T>> {
        if present {
            reorder(&mut v, order);
            Some(v)
        } else {
            None
        }
    }
    let Optional { pa, pitch_no, score, result, speed, side, height, team } = optional;
    log.pa = opt(has("pa"), pa, &order);
    log.pitch_no = opt(has("pitch_no"), pitch_no, &order);
    log.score_diff = opt(has("score_diff"), score, &order);
    log.result = opt(has("result"), result, &order);
    log.speed_mph = opt(has("speed_mph"), speed, &order);
    log.loc_side_ft = opt(has("loc_side_ft"), side, &order);
    log.loc_height_ft = opt(has("loc_height_ft"), height, &order);
    log.team = opt(has("team"), team, &order);
    repeats
}

/// Counts of rejection reasons for a summary: reason → (count, first lines).
pub fn group_rejections(rejected: &[Rejected], keep_lines: usize) -> Vec<(String, usize, Vec<u64>)> {
    let mut map: BTreeMap<String, (usize, Vec<u64>)> = BTreeMap::new();
    for r in rejected {
        // Reasons are written without the value, so they group as they are.
        let key = format!("{}: {}", r.column, r.reason);
        let e = map.entry(key).or_default();
        e.0 += 1;
        if e.1.len() < keep_lines {
            e.1.push(r.line);
        }
    }
    let mut out: Vec<(String, usize, Vec<u64>)> = map.into_iter().map(|(k, (c, l))| (k, c, l)).collect();
    out.sort_by(|a, b| b.1.cmp(&a.1).then(a.0.cmp(&b.0)));
    out
}
