//! Contract columns worked out from the columns a log has instead. Many
//! exports carry the inning's half with each club's runs and name rather
//! than the pitcher's own score difference and club: `half` (`top` or
//! `bottom`), `home_score` and `away_score` (runs before the pitch),
//! `home_team` and `away_team`. The home club pitches in the top of an
//! inning and bats in the bottom, so
//! * `score_diff` is `home_score − away_score` in the top half and
//!   `away_score − home_score` in the bottom;
//! * `team` is `home_team` in the top half and `away_team` in the bottom.
//!
//! A `date` column of time stamps is read as calendar dates, a game
//! stamped across midnight keeping its first day; hands written out
//! (`Right`, `LHP`) are read as their letters; a `count` column written
//! `B-S` gives `balls` and `strikes` to a file that has neither.
//!
//! An `inning` column that writes the half in ("Top 3", "3B") is read as
//! the inning's number, its half standing in for a `half` column.
//!
//! A contract column the file has is always read as it is; these are
//! worked out only for one it lacks, and the run says so. A row whose half
//! or score cannot be read gets no value there (a missing value of an
//! optional column, never a guess), and the note counts such rows. A half
//! column mostly written another way (`1`/`2`, say) works nothing out and
//! says why. The worked-out `score_diff` then meets the same check as one
//! read from the file (`units::score_from_the_other_side`): a half given
//! from the other side would make the batting side's runs rise under the
//! pitcher, and the column is set aside.

use super::parse;
use super::read::{RawTable, TextColumn};
use crate::domain::numbers::fmt_n;
use crate::settings::InputParams;
use serde::Serialize;
use std::collections::HashMap;

/// A contract column worked out from others.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WorkedOut {
    /// Its contract name.
    pub column: String,
    /// The (contract-side) names of the columns it came from.
    pub from: Vec<String>,
    /// Rows left without a value: a half or a source value missing or
    /// unreadable.
    pub rows_without: usize,
    /// The run's note, a sentence without a final stop.
    pub note: String,
}

#[derive(Clone, Copy, PartialEq, Eq, Hash)]
enum Half {
    Top,
    Bottom,
}

fn half_of(v: &str) -> Option<Half> {
    let word: String = v.to_lowercase().split_whitespace().collect();
    parse::half_word(&word).map(|top| if top { Half::Top } else { Half::Bottom })
}

/// A new column's dictionary, its values in the order first met.
#[derive(Default)]
struct Dict {
    values: Vec<String>,
    index: HashMap<String, u32>,
}

impl Dict {
    fn code(&mut self, v: &str) -> u32 {
        if let Some(&c) = self.index.get(v) {
            return c;
        }
        self.values.push(v.to_string());
        let c = self.values.len() as u32 - 1;
        self.index.insert(v.to_string(), c);
        c
    }

    /// The column with `codes` (one per row, `None` empty).
    fn column(self, codes: impl ExactSizeIterator<Item = Option<u32>>) -> TextColumn {
        TextColumn::from_codes(self.values, codes)
    }
}

/// The rows of `col` whose value `written` marks (one per dictionary
/// value), and its filled rows.
fn rows_written(col: &TextColumn, written: impl IntoIterator<Item = bool>) -> (usize, usize) {
    let uses = col.uses();
    let so: usize = uses.iter().zip(written).filter(|(_, w)| *w).map(|(n, _)| n).sum();
    (so, uses.iter().sum())
}

/// Whether the values `written` marks (one per dictionary value) fill
/// most of `col`'s filled rows, and at least `MIN_SPLIT`: a column written
/// another way throughout, not a few stray values.
fn most_rows(col: &TextColumn, written: &[bool]) -> bool {
    if !written.contains(&true) {
        return false;
    }
    let (so, filled) = rows_written(col, written.iter().copied());
    so >= MIN_SPLIT && 2 * so > filled
}

/// `col` with each value replaced by `text` of it: the new column, with
/// every row's code through one new dictionary.
fn recoded(col: &TextColumn, n: usize, text: impl Fn(&str) -> String) -> TextColumn {
    let mut dict = Dict::default();
    let to: Vec<u32> = col.dict.iter().map(|v| dict.code(&text(v))).collect();
    dict.column((0..n).map(|r| col.code(r).map(|c| to[c])))
}

/// Works out `score_diff` and `team` for a table that lacks them and has
/// their sources, adding them to `table` under the names the validator
/// reads (`input.file_column`). Returns what was worked out, and a note
/// when the file's half cannot be read.
pub fn work_out(table: &mut RawTable, input: &InputParams) -> (Vec<WorkedOut>, Vec<String>) {
    let mut notes: Vec<String> = date_by_first_pitch(table, input).into_iter().collect();
    notes.extend(["throws", "bats"].into_iter().filter_map(|c| hands_by_letter(table, input, c)));
    notes.extend(balls_and_strikes(table, input));
    let split = split_inning(table, input);
    // How the notes name the half: a column of the file, or the inning's.
    let half_label = match &split {
        Some((_, true)) => format!("the half written in `{}`", input.file_column("inning")),
        _ => format!("`{}`", input.file_column("half")),
    };
    notes.extend(split.map(|(note, _)| note));
    let name = |c: &str| input.file_column(c).to_string();
    let has = |t: &RawTable, c: &str| t.column(input.file_column(c)).is_some();
    let want_score = !has(table, "score_diff") && has(table, "home_score") && has(table, "away_score");
    let want_team = !has(table, "team") && has(table, "home_team") && has(table, "away_team");
    if !(want_score || want_team) {
        return (Vec::new(), notes);
    }
    // What would be worked out, and from which of each club's columns.
    let both = want_score && want_team;
    let (what, from) = match (want_score, want_team) {
        (true, true) => ("`score_diff` and `team`", "each club's runs and name"),
        (true, false) => ("`score_diff`", "each club's runs"),
        _ => ("`team`", "each club's name"),
    };
    let Some(half_col) = table.column(input.file_column("half")) else {
        // Each club's runs or name, but nothing saying which club pitches.
        notes.push(format!(
            "{what} {} not in the file, which has {from} but not the inning's half: add a `{}` column (top or bottom) to have {} worked out",
            if both { "are" } else { "is" },
            name("half"),
            if both { "them" } else { "it" }
        ));
        return (Vec::new(), notes);
    };
    // The half's values, each read once.
    let halves: Vec<Option<Half>> = half_col.dict.iter().map(|v| half_of(v)).collect();
    let uses = half_col.uses();
    let filled: usize = uses.iter().zip(&half_col.dict).filter(|(_, v)| !parse::missing_marker(v)).map(|(n, _)| n).sum();
    let bad: Vec<(usize, &str)> = uses
        .iter()
        .zip(&half_col.dict)
        .zip(&halves)
        .filter(|((_, v), h)| h.is_none() && !parse::missing_marker(v))
        .map(|((&n, v), _)| (n, v.as_str()))
        .collect();
    let n_bad: usize = bad.iter().map(|(n, _)| n).sum();
    let what = format!("{what} {}", if both { "were" } else { "was" });
    if filled == 0 || 2 * n_bad > filled {
        let commonest = bad.iter().max_by_key(|(n, v)| (*n, std::cmp::Reverse(*v))).map(|(_, v)| *v).unwrap_or("");
        let note = if filled == 0 {
            format!("{what} not worked out from `{}`: the column is empty", name("half"))
        } else {
            format!(
                "{what} not worked out from `{}`: its values are not top or bottom (\"{commonest}\" in {} rows); write the inning's half as top or bottom",
                name("half"),
                fmt_n(bad.iter().find(|(_, v)| *v == commonest).map_or(0, |(n, _)| *n))
            )
        };
        notes.push(note);
        return (Vec::new(), notes);
    }
    let n = table.n_rows;
    let half_at: Vec<Option<Half>> = (0..n).map(|r| half_col.code(r).and_then(|c| halves[c])).collect();
    let mut out = Vec::new();
    if want_score {
        let (home, away) = (table.column(&name("home_score")).unwrap(), table.column(&name("away_score")).unwrap());
        let runs = |c: &TextColumn| -> Vec<Option<i64>> { c.dict.iter().map(|v| parse::whole_number(v, 0, 200)).collect() };
        let (home_runs, away_runs) = (runs(home), runs(away));
        let mut dict = Dict::default();
        let mut without = 0usize;
        let codes: Vec<Option<u32>> = (0..n)
            .map(|r| {
                let h = home.code(r).and_then(|c| home_runs[c]);
                let a = away.code(r).and_then(|c| away_runs[c]);
                let diff = match (half_at[r], h, a) {
                    (Some(Half::Top), Some(h), Some(a)) => h - a,
                    (Some(Half::Bottom), Some(h), Some(a)) => a - h,
                    _ => {
                        without += 1;
                        return None;
                    }
                };
                Some(dict.code(&diff.to_string()))
            })
            .collect();
        table.columns.push((name("score_diff"), dict.column(codes.into_iter())));
        let from = vec!["half".to_string(), "home_score".into(), "away_score".into()];
        out.push(worked_out("score_diff", from, without, n, input, &half_label, "the home club's runs minus the visitors' in the top of an inning, the visitors' minus the home club's in the bottom"));
    }
    if want_team {
        let (home, away) = (table.column(&name("home_team")).unwrap(), table.column(&name("away_team")).unwrap());
        // One dictionary for both clubs' names.
        let mut dict = Dict::default();
        let (mut home_code, mut away_code) = (vec![None; home.dict.len()], vec![None; away.dict.len()]);
        let mut without = 0usize;
        let mut codes: Vec<Option<u32>> = Vec::with_capacity(n);
        for (r, half) in half_at.iter().enumerate() {
            let (col, cache) = match half {
                Some(Half::Top) => (home, &mut home_code),
                Some(Half::Bottom) => (away, &mut away_code),
                None => {
                    without += 1;
                    codes.push(None);
                    continue;
                }
            };
            let code = col.code(r).filter(|&c| !parse::missing_marker(&col.dict[c])).map(|c| *cache[c].get_or_insert_with(|| dict.code(&col.dict[c])));
            without += usize::from(code.is_none());
            codes.push(code);
        }
        table.columns.push((name("team"), dict.column(codes.into_iter())));
        let from = vec!["half".to_string(), "home_team".into(), "away_team".into()];
        out.push(worked_out("team", from, without, n, input, &half_label, "the home club in the top of an inning, the visitors in the bottom"));
    }
    (out, notes)
}

/// An `inning` column that writes each inning with its half ("Top 3",
/// "3B", "▲3"), as some play-by-play exports do, in most of its filled
/// values (at least `MIN_SPLIT`): read as the inning's number, and, when the
/// file has no `half` column, its half becomes one (for the score and club
/// above). Values written otherwise keep their own reading (a plain number
/// is read; anything else is rejected with its row). Returns the note, and
/// whether the half became a column.
fn split_inning(table: &mut RawTable, input: &InputParams) -> Option<(String, bool)> {
    let name = input.file_column("inning").to_string();
    let col = table.column(&name)?;
    let read: Vec<Option<(u32, bool)>> = col.dict.iter().map(|v| parse::inning_and_half(v)).collect();
    if !most_rows(col, &read.iter().map(Option::is_some).collect::<Vec<_>>()) {
        return None;
    }
    let n = table.n_rows;
    let innings = recoded(col, n, |v| parse::inning_and_half(v).map_or_else(|| v.to_string(), |(i, _)| i.to_string()));
    let add_half = table.column(input.file_column("half")).is_none();
    let halves = add_half.then(|| {
        let half_dict = vec!["top".to_string(), "bottom".to_string()];
        TextColumn::from_codes(half_dict, (0..n).map(|r| col.code(r).and_then(|c| read[c]).map(|(_, top)| u32::from(!top))))
    });
    let example = col.dict.iter().zip(&read).find(|(_, r)| r.is_some()).map(|(v, _)| v.clone()).unwrap_or_default();
    let slot = table.columns.iter().position(|(c, _)| *c == name).expect("the inning column is there");
    table.columns[slot].1 = innings;
    if let Some(h) = halves {
        table.columns.push((input.file_column("half").to_string(), h));
    }
    Some((format!("`{name}` writes each inning with its half (\"{example}\"): read as the inning's number"), add_half))
}

/// A hand column (`throws` or `bats`) that writes hands out (`Right`,
/// `LHP`) in most of its filled values, at least `MIN_SPLIT`: each is read
/// as its letter. A hand is a hand however it is spelled; a switch
/// hitter's `S` is not one and stays rejected with its row, as do stray
/// spellings among letters. Returns the note.
fn hands_by_letter(table: &mut RawTable, input: &InputParams, contract: &str) -> Option<String> {
    let name = input.file_column(contract).to_string();
    let slot = table.columns.iter().position(|(c, _)| *c == name)?;
    let col = &mut table.columns[slot].1;
    let letters: Vec<Option<char>> = col.dict.iter().map(|v| parse::spelled_hand(v)).collect();
    if !most_rows(col, &letters.iter().map(Option::is_some).collect::<Vec<_>>()) {
        return None;
    }
    // Values only change their text: two spellings of one hand keep two
    // dictionary entries, both read as the same letter.
    let example = col.dict.iter().zip(&letters).find(|(_, l)| l.is_some()).map(|(v, _)| v.clone()).unwrap_or_default();
    for (v, l) in col.dict.iter_mut().zip(&letters) {
        if let Some(l) = l {
            *v = l.to_string();
        }
    }
    Some(format!("`{name}` writes each hand out (\"{example}\"): read as its letter, L or R"))
}

/// `balls` and `strikes` from a `count` column written `B-S` ("1-2"), for
/// a file that has neither: each value split at its dash (the two parts are
/// then checked as `balls` and `strikes` are, so a "4-1" is a rejected row
/// with its reason). A `count` most of whose filled values are not so
/// written works nothing out and says so. Returns the note.
fn balls_and_strikes(table: &mut RawTable, input: &InputParams) -> Option<String> {
    let has = |t: &RawTable, c: &str| t.column(input.file_column(c)).is_some();
    if has(table, "balls") || has(table, "strikes") {
        return None;
    }
    let col = table.column(input.file_column("count"))?;
    let count_name = input.file_column("count");
    let (written, filled) = rows_written(col, col.dict.iter().map(|v| count_parts(v).is_some()));
    if filled == 0 || 2 * written <= filled {
        return Some(format!(
            "`balls` and `strikes` are not in the file, and `{count_name}` is not written balls-strikes (as \"1-2\") in most rows, so they were not worked out from it"
        ));
    }
    // Each side: the part, or the whole value where it has no dash
    // (rejected as balls and strikes are).
    let n = table.n_rows;
    let side = |first: bool| recoded(col, n, |v| count_parts(v).map_or(v, |(b, s)| if first { b } else { s }).to_string());
    let (balls, strikes) = (side(true), side(false));
    let note = format!("`balls` and `strikes` are not in the file and were read from `{count_name}` (balls-strikes, as \"1-2\")");
    table.columns.push((input.file_column("balls").to_string(), balls));
    table.columns.push((input.file_column("strikes").to_string(), strikes));
    Some(note)
}

/// A count written balls-strikes ("1-2"): its two parts, digits each.
fn count_parts(v: &str) -> Option<(&str, &str)> {
    v.split_once('-').filter(|(b, s)| !b.is_empty() && !s.is_empty() && b.bytes().chain(s.bytes()).all(|c| c.is_ascii_digit()))
}

/// Fewer values written another way (innings with their half, hands
/// written out) than this decide nothing: their rows are rejected with the
/// fix, as a few stray values are.
const MIN_SPLIT: usize = 20;

fn worked_out(column: &str, from: Vec<String>, without: usize, n: usize, input: &InputParams, half: &str, rule: &str) -> WorkedOut {
    let names: Vec<String> = from.iter().map(|c| if c == "half" { half.to_string() } else { format!("`{}`", input.file_column(c)) }).collect();
    let rows = if without == 0 {
        String::new()
    } else {
        format!("; {} of {} rows have none, their half or {} missing or unreadable", fmt_n(without), fmt_n(n), if column == "team" { "club" } else { "score" })
    };
    let note = format!(
        "`{column}` is not in the file and was worked out from {}, {} and {}: {rule}{rows}",
        names[0], names[1], names[2]
    );
    WorkedOut { column: column.to_string(), from, rows_without: without, note }
}

/// The columns to set aside, and why, when a worked-out `score_diff` rises
/// under the pitcher (`units::score_from_the_other_side` gave `reason`):
/// the half is read the other way round from the file's meaning, so a club
/// worked out from it names the batting club and goes too.
pub fn from_the_other_side(reason: &str, worked_out: &[WorkedOut]) -> (Vec<String>, String) {
    let team = worked_out.iter().any(|w| w.column == "team");
    let columns: Vec<String> = worked_out.iter().map(|w| w.column.clone()).filter(|c| c == "score_diff" || (team && c == "team")).collect();
    // The check's own finding, without its fix (which is for a file's own
    // `score_diff`).
    let finding = reason.split(": it looks like").next().unwrap_or(reason);
    let why = format!(
        "{finding}: worked out from the inning's half, {} as if the home club pitched in the top of an inning; if the file's half names the pitching club's half, or the home club bats first, give the half the batting club is in",
        if team { "the score and the club read" } else { "the score reads" }
    );
    (columns, why)
}

/// A date-and-time value written `YYYY-MM-DD`, then `T` or a space and a
/// time ("2025-04-03T19:05:32-07:00"): its calendar date as written, that
/// date's day number and the hour.
fn stamp(v: &str) -> Option<(&str, i32, u32)> {
    let b = v.as_bytes();
    if !(b.len() >= 13 && v.is_char_boundary(10) && matches!(b[10], b'T' | b' ') && b[11].is_ascii_digit() && b[12].is_ascii_digit()) {
        return None;
    }
    let (day, _) = parse::parse_date(&v[..10])?;
    let hour = u32::from(b[11] - b'0') * 10 + u32::from(b[12] - b'0');
    (hour < 24).then_some((&v[..10], day, hour))
}

/// A `date` column that holds each pitch's date and time of day (a
/// tracking system's stamp) in most of its filled values, at least
/// `MIN_SPLIT`, or in all of them: read as its calendar date, as written. A game that runs
/// across midnight in the stamps' clock (UTC, say, for an evening game)
/// keeps its first day: a pitch stamped before 06:00 of a game that has
/// pitches stamped after 12:00 the day before takes that day, rather than
/// splitting the game in two. (A game id used again on another day, well
/// apart in the clock, stays a game of its own.) Values written otherwise
/// keep their own reading. Returns the note.
fn date_by_first_pitch(table: &mut RawTable, input: &InputParams) -> Option<String> {
    let name = input.file_column("date").to_string();
    let col = table.column(&name)?;
    let stamps: Vec<Option<(&str, i32, u32)>> = col.dict.iter().map(|v| stamp(v)).collect();
    // A column of stamps alone (a Parquet timestamp column's, say) is read
    // however few its rows.
    let written: Vec<bool> = stamps.iter().map(Option::is_some).collect();
    let only_stamps = !written.is_empty() && !written.contains(&false);
    if !(only_stamps || most_rows(col, &written)) {
        return None;
    }
    // The new dictionary: calendar dates, and the other values as written.
    let mut dict = Dict::default();
    let own: Vec<u32> = col.dict.iter().zip(&stamps).map(|(v, d)| dict.code(d.map_or(v.as_str(), |d| d.0))).collect();
    // Each game's latest hour on each day it has stamps, by (game code, day).
    let n = table.n_rows;
    let game = table.column(input.file_column("game"));
    let mut late: HashMap<(usize, i32), (u32, u32)> = HashMap::new();
    for r in 0..n {
        let (Some(c), Some(g)) = (col.code(r), game.and_then(|g| g.code(r))) else { continue };
        if let Some((_, day, hour)) = stamps[c] {
            let e = late.entry((g, day)).or_insert((hour, own[c]));
            e.0 = e.0.max(hour);
        }
    }
    let mut moved = 0usize;
    let codes: Vec<Option<u32>> = (0..n)
        .map(|r| {
            let c = col.code(r)?;
            let before = match (stamps[c], game.and_then(|g| g.code(r))) {
                (Some((_, day, hour)), Some(g)) if hour < 6 => late.get(&(g, day - 1)).filter(|(h, _)| *h >= 12).map(|&(_, code)| code),
                _ => None,
            };
            moved += usize::from(before.is_some());
            Some(before.unwrap_or(own[c]))
        })
        .collect();
    let example = col.dict.iter().zip(&stamps).find(|(_, d)| d.is_some()).map(|(v, _)| v.clone()).unwrap_or_default();
    let dates = dict.column(codes.into_iter());
    let slot = table.columns.iter().position(|(c, _)| *c == name).expect("the date column is there");
    table.columns[slot].1 = dates;
    let moved = if moved == 0 {
        String::new()
    } else {
        format!("; {} pitches stamped after midnight in games begun the evening before keep their game's date", fmt_n(moved))
    };
    Some(format!("`{name}` holds each pitch's time of day (\"{example}\"): read as its calendar date as written{moved}"))
}
