//! Parsing one row's text values against CONTRACT §1. A breach names the
//! contract column and a reason that says what is allowed; the value itself
//! is kept beside it, so reasons group cleanly in `check`.

use crate::domain::PitchResult;
use crate::domain::levels::Hand;

/// A row's values that passed every rule.
pub struct ParsedRow<'a> {
    pub game: &'a str,
    pub date: i32,
    pub season: i32,
    pub pitcher: &'a str,
    pub throws: Hand,
    pub batter: &'a str,
    pub bats: Hand,
    pub inning: u16,
    pub outs: u8,
    pub balls: u8,
    pub strikes: u8,
    pub bases: [bool; 3],
    pub pitch_type: &'a str,
    pub pa: Option<u32>,
    pub pitch_no: Option<u32>,
    pub score_diff: Option<i32>,
    pub result: Option<PitchResult>,
    pub speed: Option<f32>,
    pub side: Option<f32>,
    pub height: Option<f32>,
    pub team: Option<&'a str>,
}

/// (contract column, offending value, reason)
pub type Breach<'a> = (&'static str, Option<&'a str>, String);

fn int_in<'a>(v: &'a str, col: &'static str, lo: i64, hi: i64) -> Result<i64, Breach<'a>> {
    // Whole numbers stored as floats ("3.0", as Parquet files with nulls
    // often hold them) are accepted; "3.5" is not.
    let n: i64 = match v.parse::<i64>() {
        Ok(n) => n,
        Err(_) => match v.parse::<f64>() {
            Ok(x) if x.is_finite() && x.fract() == 0.0 && x.abs() < 9e15 => x as i64,
            _ => return Err((col, Some(v), "is not a whole number".to_string())),
        },
    };
    if n < lo || n > hi {
        let range = if hi >= i64::from(u32::MAX) { format!("at least {lo}") } else { format!("in {lo}..{hi}") };
        return Err((col, Some(v), format!("is outside the allowed range (must be {range})")));
    }
    Ok(n)
}

/// A whole number in `lo..=hi` ("3.0" reads as 3), or `None`.
pub fn whole_number(v: &str, lo: i64, hi: i64) -> Option<i64> {
    int_in(v.trim(), "", lo, hi).ok()
}

/// The letter of a hand written out: `Left`, `LHP`, `lh`, `LHB` (any
/// case) is `L`; the same for `R`.
pub fn spelled_hand(v: &str) -> Option<char> {
    match v.trim().to_ascii_lowercase().as_str() {
        "left" | "lhp" | "lh" | "lhb" => Some('L'),
        "right" | "rhp" | "rh" | "rhb" => Some('R'),
        _ => None,
    }
}

fn hand<'a>(v: &'a str, col: &'static str) -> Result<Hand, Breach<'a>> {
    Hand::parse(v).ok_or_else(|| {
        // A roster's "S" (or "B") for a switch hitter says nothing of the
        // side he stood in for this plate appearance, which the factor needs.
        let switch = col == "bats" && matches!(v.to_ascii_uppercase().as_str(), "S" | "B" | "SWITCH" | "BOTH");
        // A hand written out ("Left", "RHP", "rh") names its letter.
        let spelled = spelled_hand(v);
        let reason = if switch {
            "is a switch hitter's mark (S, B, switch or both); write the side he batted from in this plate appearance, L or R".to_string()
        } else if let Some(letter) = spelled {
            format!("is not L or R; write the hand as its letter ({letter})")
        } else {
            "is not L or R".to_string()
        };
        (col, Some(v), reason)
    })
}

/// `0/1`, `true/false`, `yes/no`, case-insensitive; also `t/f` (how
/// PostgreSQL's `psql --csv` writes a boolean column) and `1.0/0.0` (a 0/1
/// column stored as floats, as exports with missing values often hold it).
pub fn parse_bool(v: &str) -> Option<bool> {
    match v.to_ascii_lowercase().as_str() {
        "1" | "true" | "yes" | "t" | "1.0" => Some(true),
        "0" | "false" | "no" | "f" | "0.0" => Some(false),
        _ => None,
    }
}

/// Days from 1970-01-01 of a proleptic Gregorian date
/// (H. Hinnant, "chrono-Compatible Low-Level Date Algorithms", days_from_civil).
pub fn days_from_civil(y: i32, m: u32, d: u32) -> i32 {
    let y = if m <= 2 { y - 1 } else { y };
    let era = if y >= 0 { y } else { y - 399 } / 400;
    let yoe = (y - era * 400) as u32;
    let mp = (m + 9) % 12;
    let doy = (153 * mp + 2) / 5 + d - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    era * 146_097 + doe as i32 - 719_468
}

/// The inverse of [`days_from_civil`] (same source, civil_from_days).
pub fn civil_from_days(z: i32) -> (i32, u32, u32) {
    let z = z + 719_468;
    let era = if z >= 0 { z } else { z - 146_096 } / 146_097;
    let doe = (z - era * 146_097) as u32;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let y = yoe as i32 + era * 400;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = doy - (153 * mp + 2) / 5 + 1;
    let m = if mp < 10 { mp + 3 } else { mp - 9 };
    (if m <= 2 { y + 1 } else { y }, m, d)
}

/// `YYYY-MM-DD` as written in reports.
pub fn format_date(days: i32) -> String {
    let (y, m, d) = civil_from_days(days);
    format!("{y:04}-{m:02}-{d:02}")
}

/// Parse a strict `YYYY-MM-DD` date into (days since epoch, year).
pub fn parse_date(v: &str) -> Option<(i32, i32)> {
    let b = v.as_bytes();
    if b.len() != 10 || b[4] != b'-' || b[7] != b'-' {
        return None;
    }
    let y: i32 = v[0..4].parse().ok()?;
    let m: u32 = v[5..7].parse().ok()?;
    let d: u32 = v[8..10].parse().ok()?;
    if !(1..=12).contains(&m) || d == 0 {
        return None;
    }
    let leap = (y % 4 == 0 && y % 100 != 0) || y % 400 == 0;
    let dim = [31, if leap { 29 } else { 28 }, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31][m as usize - 1];
    if d > dim {
        return None;
    }
    Some((days_from_civil(y, m, d), y))
}

fn number<'a>(v: Option<&'a str>, col: &'static str, lo: f32, hi: f32) -> Result<Option<f32>, Breach<'a>> {
    match v {
        None => Ok(None),
        Some(s) => {
            let x: f32 = s.parse().map_err(|_| (col, Some(s), "is not a number".to_string()))?;
            if !x.is_finite() || x < lo || x > hi {
                return Err((col, Some(s), format!("is outside the plausible range {lo}..{hi}")));
            }
            Ok(Some(x))
        }
    }
}

/// A value of one column, checked by that column's rule (see [`parse_cell`]).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Cell {
    /// A name (game, pitcher, batter, pitch type, team): any text.
    Text,
    Int(i64),
    /// Days since 1970-01-01 and the year.
    Date(i32, i32),
    Hand(Hand),
    Bool(bool),
    Result(PitchResult),
    Num(f32),
}

/// The longest text value accepted (a name, an id or a pitch label): an
/// absurd value is refused with its line rather than carried into every
/// table and chart of the report.
pub const MAX_TEXT_CHARS: usize = 200;

/// A name, id or label: printable text of at most [`MAX_TEXT_CHARS`]
/// characters. Control characters (a terminal escape, say) are refused: the
/// name would otherwise reach the terminal, the CSV files and the charts.
fn text_cell(v: &str) -> Result<Cell, String> {
    if v.chars().any(char::is_control) {
        return Err("holds a control character; remove it".to_string());
    }
    if v.chars().count() > MAX_TEXT_CHARS {
        return Err(format!("is longer than {MAX_TEXT_CHARS} characters"));
    }
    Ok(Cell::Text)
}

/// Whether a value may be shown as a name: not a missing-value marker and
/// accepted as a name (no control character, at most [`MAX_TEXT_CHARS`]).
pub fn showable_name(v: &str) -> bool {
    !missing_marker(v) && text_cell(v).is_ok()
}

/// The inning number of a value that writes the half in too ("Top 3",
/// "bot 7", "3T", "B9", "▲3"), as some play-by-play exports do.
fn inning_with_half(v: &str) -> Option<u32> {
    inning_and_half(v).map(|(n, _)| n)
}

/// The inning number and whether it is the top half, of a value that
/// writes the half in too ("Top 3", "bot 7", "3T", "B9", "▲3").
pub fn inning_and_half(v: &str) -> Option<(u32, bool)> {
    let lower = v.trim().to_lowercase();
    let digits: String = lower.chars().filter(char::is_ascii_digit).collect();
    let rest: String = lower.chars().filter(|c| !c.is_ascii_digit() && !c.is_whitespace() && *c != '.' && *c != '-').collect();
    let top = half_word(&rest)?;
    let n: u32 = digits.parse().ok()?;
    (1..=99).contains(&n).then_some((n, top))
}

/// An inning's half written as a word, lower case and without spaces:
/// `Some(true)` for the top (`top`, `t`, `tp`, `tophalf`, `▲`, `↑`),
/// `Some(false)` for the bottom (`bottom`, `bot`, `b`, `btm`,
/// `bottomhalf`, `▼`, `↓`). The one list for a `half` column
/// (`derive`) and an inning written with its half ([`inning_and_half`]).
pub fn half_word(w: &str) -> Option<bool> {
    match w {
        "top" | "t" | "tp" | "tophalf" | "▲" | "↑" => Some(true),
        "bottom" | "bot" | "b" | "btm" | "bottomhalf" | "▼" | "↓" => Some(false),
        _ => None,
    }
}

/// Whether a value is a missing-value marker: `NA`, `N/A`, `#N/A`,
/// `NaN`, `null`, `None` as R, pandas, spreadsheets and databases write
/// them (all in one case, so a name such as "Na" is not one), or
/// punctuation alone (`-`, `?`). In an optional column it is an empty cell;
/// in a required one a reason that says so.
pub fn missing_marker(v: &str) -> bool {
    const MARKERS: [&str; 7] = ["na", "n/a", "#n/a", "nan", "null", "none", "<na>"];
    let v = v.trim();
    let one_case = v == v.to_lowercase() || v == v.to_uppercase() || v == "NaN" || v == "None" || v == "Null";
    (one_case && MARKERS.contains(&v.to_lowercase().as_str())) || crate::domain::labels::loose_name(v).is_empty()
}

/// `pa` (column 15) or `pitch_no` (16) of a file that numbers them from 0:
/// read one higher, so the contract's numbering from 1 holds.
pub fn parse_counted_from_zero(column: usize, v: &str) -> Result<Cell, String> {
    let col = if column == 15 { "pa" } else { "pitch_no" };
    int_in(v, col, 0, i64::from(u32::MAX) - 1).map(|n| Cell::Int(n + 1)).map_err(|b| b.2)
}

/// A `result` value's check: a contract result through the config's
/// `[result_groups]`, or a value whose rows are set aside (a pitchout
/// written in `result`), which reads as any result since its row is left
/// out; else refused with the fix.
pub fn parse_result(v: &str, input: &crate::settings::InputParams) -> Result<Cell, String> {
    input
        .result_of(v)
        .or_else(|| input.result_set_aside_as(v).map(|_| PitchResult::Other))
        .map(Cell::Result)
        .ok_or_else(|| unknown_result(v))
}

/// Why a `result` value is refused, with the fix: a log's own outcome
/// codes ("foul_tip", "ball_in_dirt") are each listed under the contract
/// result they count as, which only the club can say. Said once per
/// distinct value, so `check` counts each value's rows.
pub fn unknown_result(v: &str) -> String {
    let shown: String = v.chars().take(40).collect();
    // A one-letter code (B, S, X, as some exports write a pitch's outcome)
    // lumps called strikes, swings and fouls together: no group splits it.
    if shown.chars().count() == 1 && shown.chars().all(|c| c.is_ascii_alphabetic()) {
        return format!(
            "\"{shown}\" is a one-letter outcome code, which does not tell a called strike from a swinging strike or a foul; export the pitch's detailed outcome (ball, called_strike, swinging_strike, foul, in_play, hit_by_pitch, other), or list each code under the result it counts as in [result_groups]"
        );
    }
    format!(
        "\"{shown}\" is not one of ball, called_strike, swinging_strike, foul, in_play, hit_by_pitch, other; if it counts as one of them, list it under that one in [result_groups] in the config (as ball = [\"{shown}\"] would for a ball)"
    )
}

/// A date written as a timestamp at midnight (`2025-04-03 00:00:00`,
/// `2025-04-03T00:00:00.000Z`, as databases and some exports write a date
/// column) is that date; any other value comes back as it is. A time of day
/// other than midnight stays refused (in UTC it can be the next day).
fn midnight_dropped(v: &str) -> &str {
    if v.len() <= 11 || !v.is_char_boundary(10) || !v.is_char_boundary(11) {
        return v;
    }
    let (day, sep, time) = (&v[..10], &v[10..11], &v[11..]);
    let midnight = time.starts_with("00") && time.chars().all(|c| matches!(c, '0' | ':' | '.' | 'Z' | '+'));
    if (sep == "T" || sep == " ") && midnight {
        day
    } else {
        v
    }
}

/// Checks one non-empty value of contract column `column` (an index into
/// REQUIRED_COLUMNS then OPTIONAL_COLUMNS) against its rule; the error is
/// the reason. A value's check does not depend on its row, so a column's
/// distinct values are each checked once.
pub fn parse_cell(column: usize, v: &str) -> Result<Cell, String> {
    let int = |col, lo, hi| int_in(v, col, lo, hi).map(Cell::Int).map_err(|b| b.2);
    match column {
        0 | 2 | 4 | 13 | 22 => text_cell(v),
        1 => match parse_date(midnight_dropped(v)) {
            // The same plausible years as the `season` column: a year 0 or
            // 9999 would otherwise become a season of its own.
            Some((_, y)) if !(1800..=3000).contains(&y) => Err("has a year outside the plausible 1800..3000".to_string()),
            Some((d, y)) => Ok(Cell::Date(d, y)),
            // A date and time, or a date with slashes, says how to fix it;
            // neither is read as a day (a time in UTC can be the next day).
            None if v.len() > 10 && v.is_char_boundary(10) && parse_date(&v[..10]).is_some() => {
                Err("is a date and time, not a calendar date; write the game's date alone, YYYY-MM-DD".to_string())
            }
            None if v.contains('/') => Err("is written with slashes; write dates as YYYY-MM-DD (month and day order cannot be guessed)".to_string()),
            // Eight digits are a date without its dashes; a whole number
            // of five digits is a spreadsheet's day number (days since
            // 1899-12-30: 45,748 is 2025-04-01, checked with Python's
            // datetime).
            None if v.len() == 8 && v.bytes().all(|b| b.is_ascii_digit()) && parse_date(&format!("{}-{}-{}", &v[..4], &v[4..6], &v[6..])).is_some() => {
                Err("is a date without its dashes; write it YYYY-MM-DD".to_string())
            }
            None if v.parse::<u32>().is_ok_and(|n| (20_000..=80_000).contains(&n)) => {
                Err("is a number, like a spreadsheet's day number; format the column as dates written YYYY-MM-DD before exporting".to_string())
            }
            None => Err("is not a calendar date written YYYY-MM-DD".to_string()),
        },
        3 => hand(v, "throws").map(Cell::Hand).map_err(|b| b.2),
        5 => hand(v, "bats").map(Cell::Hand).map_err(|b| b.2),
        6 => int("inning", 1, 99).map_err(|e| {
            // Said once for all innings, so `check` groups them as one reason.
            if inning_with_half(v).is_some() {
                "is an inning with its half written in (as \"Top 3\" or \"3B\"); write the inning number alone".to_string()
            } else {
                e
            }
        }),
        7 => int("outs", 0, 2),
        8 => int("balls", 0, 3),
        9 => int("strikes", 0, 2),
        10..=12 => parse_bool(v).map(Cell::Bool).ok_or_else(|| {
            // A whole number above 1 is a runner's id (a convention of some
            // exports: the runner on the base, or empty): said so, not read.
            if v.parse::<u64>().is_ok_and(|n| n > 1) {
                "is a number, not 0/1: if it is the runner's id, write 1 where a runner is on the base and 0 where none is".to_string()
            } else if v.contains(' ') || v.chars().count() > 5 {
                // A name ("Wren Alder", "aldew001"), not a mistyped yes/no.
                "is text, not 0/1: if it is the runner's name or id, write 1 where a runner is on the base and 0 where none is".to_string()
            } else {
                "is not 0/1, true/false, yes/no or t/f".to_string()
            }
        }),
        14 => int("season", 1800, 3000).map_err(|e| {
            // A winter league's season written as its span ("2025-26").
            let b = v.as_bytes();
            let span = b.len() >= 6 && b[..4].iter().all(u8::is_ascii_digit) && matches!(b[4], b'-' | b'/') && b[5..].iter().all(u8::is_ascii_digit);
            if span {
                "is a span of years; write one year per season (the year the season is counted under, the same for all its games)".to_string()
            } else {
                e
            }
        }),
        15 => int("pa", 1, i64::from(u32::MAX)),
        16 => int("pitch_no", 1, i64::from(u32::MAX)),
        17 => int("score_diff", -200, 200),
        18 => PitchResult::parse(v).map(Cell::Result).ok_or_else(|| unknown_result(v)),
        19 => number(Some(v), "speed_mph", 0.0, 125.0).map(|x| Cell::Num(x.unwrap_or(0.0))).map_err(|b| b.2),
        20 => number(Some(v), "loc_side_ft", -20.0, 20.0).map(|x| Cell::Num(x.unwrap_or(0.0))).map_err(|b| b.2),
        21 => number(Some(v), "loc_height_ft", -10.0, 20.0).map(|x| Cell::Num(x.unwrap_or(0.0))).map_err(|b| b.2),
        _ => Ok(Cell::Text),
    }
}

/// One row's value of a column: its text and its check, or `None` when empty.
pub type Value<'a, 'c> = Option<(&'a str, &'c Result<Cell, String>)>;

/// The checked value of a column every pitch needs.
fn needed<'a, 'c>(v: Value<'a, 'c>, col: &'static str) -> Result<(&'a str, Cell), Breach<'a>> {
    match v {
        // An empty base column means no runner in some exports (which write
        // the runner's id where there is one): the fix is named.
        None if col.starts_with("on_") => Err((col, None, "is empty; every pitch needs a value here (write 0 where no runner is on the base)".to_string())),
        None => Err((col, None, "is empty; every pitch needs a value here".to_string())),
        Some((s, Err(reason))) => Err((col, Some(s), reason.clone())),
        Some((s, Ok(c))) => Ok((s, *c)),
    }
}

/// The checked value of an optional column, `None` when empty.
fn optional<'a>(v: Value<'a, '_>, col: &'static str) -> Result<Option<Cell>, Breach<'a>> {
    match v {
        None => Ok(None),
        Some((s, Err(reason))) => Err((col, Some(s), reason.clone())),
        Some((_, Ok(c))) => Ok(Some(*c)),
    }
}

fn as_int(c: Cell) -> i64 {
    match c {
        Cell::Int(n) => n,
        _ => unreachable!("an integer column"),
    }
}

fn as_hand(c: Cell) -> Hand {
    match c {
        Cell::Hand(h) => h,
        _ => unreachable!("a hand column"),
    }
}

fn as_bool(c: Cell) -> bool {
    match c {
        Cell::Bool(b) => b,
        _ => unreachable!("a base column"),
    }
}

fn as_num(c: Option<Cell>) -> Option<f32> {
    c.map(|c| match c {
        Cell::Num(x) => x,
        _ => unreachable!("a number column"),
    })
}

/// Parse the values of one row, given in the order of REQUIRED_COLUMNS then
/// OPTIONAL_COLUMNS (absent optional columns are `None`), each with its
/// column's check ([`parse_cell`]). The first breach in column order is
/// reported.
pub fn parse_row<'a>(v: &[Value<'a, '_>], has_pa: bool, has_pitch_no: bool) -> Result<ParsedRow<'a>, Breach<'a>> {
    let (game, _) = needed(v[0], "game")?;
    let (date, year) = match needed(v[1], "date")?.1 {
        Cell::Date(d, y) => (d, y),
        _ => unreachable!("the date column"),
    };
    let (pitcher, _) = needed(v[2], "pitcher")?;
    let throws = as_hand(needed(v[3], "throws")?.1);
    let (batter, _) = needed(v[4], "batter")?;
    let bats = as_hand(needed(v[5], "bats")?.1);
    let inning = as_int(needed(v[6], "inning")?.1) as u16;
    let outs = as_int(needed(v[7], "outs")?.1) as u8;
    let balls = as_int(needed(v[8], "balls")?.1) as u8;
    let strikes = as_int(needed(v[9], "strikes")?.1) as u8;
    let bases = [
        as_bool(needed(v[10], "on_first")?.1),
        as_bool(needed(v[11], "on_second")?.1),
        as_bool(needed(v[12], "on_third")?.1),
    ];
    let (pitch_type, _) = needed(v[13], "pitch_type")?;
    let season = optional(v[14], "season")?.map_or(year, |c| as_int(c) as i32);
    // When the file has pa / pitch_no, every row needs them: a row without
    // would sort to the front of its game and break the plate appearance.
    let pa = match (optional(v[15], "pa")?, has_pa) {
        (Some(c), _) => Some(as_int(c) as u32),
        (None, true) => return Err(("pa", None, "is empty; the file has a pa column, so every pitch needs one".to_string())),
        (None, false) => None,
    };
    let pitch_no = match (optional(v[16], "pitch_no")?, has_pitch_no) {
        (Some(c), _) => Some(as_int(c) as u32),
        (None, true) => {
            return Err(("pitch_no", None, "is empty; the file has a pitch_no column, so every pitch needs one".to_string()))
        }
        (None, false) => None,
    };
    let score_diff = optional(v[17], "score_diff")?.map(|c| as_int(c) as i32);
    let result = optional(v[18], "result")?.map(|c| match c {
        Cell::Result(r) => r,
        _ => unreachable!("the result column"),
    });
    let speed = as_num(optional(v[19], "speed_mph")?);
    let side = as_num(optional(v[20], "loc_side_ft")?);
    let height = as_num(optional(v[21], "loc_height_ft")?);
    let team = v[22].map(|(s, _)| s);
    Ok(ParsedRow {
        game,
        date,
        season,
        pitcher,
        throws,
        batter,
        bats,
        inning,
        outs,
        balls,
        strikes,
        bases,
        pitch_type,
        pa,
        pitch_no,
        score_diff,
        result,
        speed,
        side,
        height,
        team,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    // Day numbers checked against the Unix epoch convention (1970-01-01 is
    // day 0; 2000-03-01 is day 11017, common practice / POSIX time / 86400).
    #[test]
    fn dates_round_trip() {
        assert_eq!(days_from_civil(1970, 1, 1), 0);
        assert_eq!(days_from_civil(2000, 3, 1), 11_017);
        assert_eq!(format_date(days_from_civil(2024, 2, 29)), "2024-02-29");
        assert!(parse_date("2025-02-29").is_none());
        assert!(parse_date("2024-02-29").is_some());
        assert!(parse_date("2025-13-01").is_none());
        assert!(parse_date("2025/04/01").is_none());
        assert!(parse_date("25-04-01").is_none());
        for d in [-1000, 0, 365, 20_000, 20_500] {
            let s = format_date(d);
            assert_eq!(parse_date(&s).unwrap().0, d);
        }
    }

    #[test]
    fn text_cells_are_printable_and_bounded() {
        assert!(parse_cell(2, "Oren Vasquell").is_ok());
        assert!(parse_cell(2, "Evil\u{1b}[31mName").unwrap_err().contains("control character"));
        assert!(parse_cell(13, &"x".repeat(MAX_TEXT_CHARS + 1)).unwrap_err().contains("longer than"));
        assert!(parse_cell(13, &"é".repeat(MAX_TEXT_CHARS)).is_ok());
    }

    #[test]
    fn implausible_years_are_refused() {
        for v in ["0000-01-01", "9999-12-31", "1799-12-31", "3001-01-01"] {
            assert!(parse_cell(1, v).unwrap_err().contains("1800..3000"), "{v}");
        }
        assert!(parse_cell(1, "-001-01-01").is_err());
        assert!(parse_cell(1, "1800-01-01").is_ok() && parse_cell(1, "3000-12-31").is_ok());
    }

    /// One list of half spellings: a half column's word and an inning
    /// written with its half read the same, in any case and spacing.
    #[test]
    fn a_half_reads_the_same_alone_and_beside_its_inning() {
        for (w, top) in [("Top", true), ("T", true), ("top half", true), ("▲", true), ("Bot", false), ("BOTTOM", false), ("btm", false), ("bottom half", false), ("▼", false)] {
            let word: String = w.to_lowercase().split_whitespace().collect();
            assert_eq!(half_word(&word), Some(top), "{w}");
            assert_eq!(inning_and_half(&format!("{w} 7")), Some((7, top)), "{w}");
        }
        for w in ["middle", "1", "", "topbottom"] {
            assert_eq!(half_word(w), None, "{w}");
            assert_eq!(inning_and_half(&format!("{w} 7")), None, "{w}");
        }
    }

    /// An inning written with its half is refused with the fix named (one
    /// reason for every inning); other bad innings keep the plain reason.
    #[test]
    fn an_inning_with_its_half_names_the_number() {
        for (v, n) in [("Top 3", 3), ("bot 7", 7), ("3T", 3), ("B9", 9), ("Bottom 10", 10), ("▲ 2", 2)] {
            assert_eq!(inning_with_half(v), Some(n), "{v}");
            let e = parse_cell(6, v).unwrap_err();
            assert!(e.starts_with("is an inning with its half written in") && e.ends_with("write the inning number alone"), "{v}: {e}");
        }
        for v in ["3rd", "x", "Top", "Top 0"] {
            assert!(!parse_cell(6, v).unwrap_err().contains("its half"), "{v}");
        }
        assert!(parse_cell(6, "3").is_ok());
    }

    /// A roster's switch-hitter letter is refused with the fix in the
    /// reason; other bad hands keep the plain reason.
    #[test]
    fn a_switch_hitters_letter_names_the_fix() {
        for v in ["S", "s", "B", "Switch", "both"] {
            assert!(parse_cell(5, v).unwrap_err().starts_with("is a switch hitter's mark"), "{v}");
        }
        assert_eq!(parse_cell(5, "X").unwrap_err(), "is not L or R");
        assert_eq!(parse_cell(3, "S").unwrap_err(), "is not L or R", "a pitcher's hand");
        assert!(parse_cell(5, "l").is_ok());
    }

    #[test]
    fn dates_written_another_way_are_refused_with_the_fix() {
        assert_eq!(parse_cell(1, "20250403").unwrap_err(), "is a date without its dashes; write it YYYY-MM-DD");
        assert!(parse_cell(1, "45748").unwrap_err().contains("spreadsheet's day number"));
        assert_eq!(parse_cell(1, "20251399").unwrap_err(), "is not a calendar date written YYYY-MM-DD");
        assert_eq!(parse_cell(1, "7").unwrap_err(), "is not a calendar date written YYYY-MM-DD");
    }

    #[test]
    fn a_hand_written_out_is_refused_with_its_letter() {
        assert_eq!(hand("Left", "throws").unwrap_err().2, "is not L or R; write the hand as its letter (L)");
        assert_eq!(hand("RHP", "throws").unwrap_err().2, "is not L or R; write the hand as its letter (R)");
        assert_eq!(hand("x", "bats").unwrap_err().2, "is not L or R");
        assert!(hand("l", "bats").is_ok() && hand("R", "throws").is_ok());
    }

    #[test]
    fn booleans_accept_contract_spellings() {
        for s in ["1", "true", "TRUE", "Yes", "t", "1.0"] {
            assert_eq!(parse_bool(s), Some(true), "{s}");
        }
        for s in ["0", "false", "No", "F", "0.0"] {
            assert_eq!(parse_bool(s), Some(false), "{s}");
        }
        for s in ["2", "y", "0.5", "1.00", "tru"] {
            assert_eq!(parse_bool(s), None, "{s}");
        }
        // A base column holding runners' ids is refused with the fix named;
        // other refusals keep the plain reason.
        assert!(parse_cell(10, "608070").unwrap_err().contains("if it is the runner's id, write 1"));
        assert!(parse_cell(11, "2").unwrap_err().contains("runner's id"));
        assert_eq!(parse_cell(12, "y").unwrap_err(), "is not 0/1, true/false, yes/no or t/f");
        assert!(parse_cell(14, "2025-26").unwrap_err().starts_with("is a span of years"));
        assert!(parse_cell(14, "2025/2026").unwrap_err().starts_with("is a span of years"));
        assert_eq!(parse_cell(14, "20x5").unwrap_err(), "is not a whole number");
        // A date stored as a timestamp at midnight is that date; another
        // time of day is refused.
        for v in ["2025-04-03 00:00:00", "2025-04-03T00:00:00.000Z", "2025-04-03T00:00", "2025-04-03 00:00:00+00:00"] {
            assert!(matches!(parse_cell(1, v), Ok(Cell::Date(d, 2025)) if d == days_from_civil(2025, 4, 3)), "{v}");
        }
        for v in ["2025-04-03 19:05:00", "2025-04-03T00:30:00", "2025-04-03 00:00:01", "2025-04-03x00"] {
            assert!(parse_cell(1, v).is_err(), "{v}");
        }
        assert!(parse_cell(10, "Wren Alder").unwrap_err().contains("if it is the runner's name or id, write 1"));
        assert!(parse_cell(12, "aldew001").unwrap_err().contains("runner's name or id"));
        assert_eq!(parse_cell(11, "maybe").unwrap_err(), "is not 0/1, true/false, yes/no or t/f");
    }

    #[test]
    fn missing_markers_are_the_usual_spellings() {
        for v in ["NA", "N/A", "#N/A", "NaN", "nan", "null", "NULL", "None", "none", "<NA>", "-", "?", "--"] {
            assert!(missing_marker(v), "{v}");
        }
        for v in ["0", "-1", "-0.5", "ball", "Nash", "n", "NAS", "Na", "nA"] {
            assert!(!missing_marker(v), "{v}");
        }
    }
}
