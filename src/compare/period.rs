//! The two periods of a comparison: `--before A --after B`, each a season
//! of the log (`2025`) or an inclusive date range `YYYY-MM-DD..YYYY-MM-DD`.
//!
//! Parsing happens in two steps. [`PeriodSpec::parse`] checks the text alone
//! (malformed range, from after to); [`resolve`] checks it against the log
//! (a season the log does not hold, a range with no pitch in it, two
//! periods that overlap). Every failure is a usage error (exit 2) naming
//! the option and what to write instead.

use crate::error::{Error, Result};
use crate::ingest::parse::{format_date, parse_date};
use crate::ingest::PitchLog;
use serde::Serialize;

/// What the user asked for, before looking at the log.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum PeriodSpec {
    Season(i32),
    /// Days since 1970-01-01, both ends included; `text` is the range as given.
    Dates { from: i32, to: i32, text: String },
}

const EXAMPLE: &str = "a season such as 2025 or a date range such as 2025-04-01..2025-06-30";

impl PeriodSpec {
    /// Parse the value of option `option` (`--before` or `--after`).
    pub fn parse(option: &str, text: &str) -> Result<PeriodSpec> {
        let t = text.trim();
        if t.is_empty() {
            return Err(Error::Usage(format!("{option} is empty; give {EXAMPLE}")));
        }
        if let Some((a, b)) = t.split_once("..") {
            let (a, b) = (a.trim(), b.trim());
            let date = |s: &str, end: &str| -> Result<i32> {
                parse_date(s).map(|(d, _)| d).ok_or_else(|| {
                    Error::Usage(format!(
                        "{option} \"{t}\": the {end} date \"{s}\" is not a calendar date written YYYY-MM-DD; give {EXAMPLE}"
                    ))
                })
            };
            let from = date(a, "first")?;
            let to = date(b, "second")?;
            if from > to {
                return Err(Error::Usage(format!(
                    "{option} \"{t}\" runs backwards ({a} is after {b}); write the earlier date first, e.g. {b}..{a}"
                )));
            }
            return Ok(PeriodSpec::Dates { from, to, text: format!("{a}..{b}") });
        }
        if t.len() == 4 && t.bytes().all(|c| c.is_ascii_digit()) {
            return Ok(PeriodSpec::Season(t.parse().expect("four digits")));
        }
        Err(Error::Usage(format!("{option} \"{t}\" is neither a season nor a date range; give {EXAMPLE}")))
    }

    /// The label reports use: "2025", or the date range as given.
    pub fn label(&self) -> String {
        match self {
            PeriodSpec::Season(s) => s.to_string(),
            PeriodSpec::Dates { text, .. } => text.clone(),
        }
    }

    /// Does row `i` of the log fall in the period?
    pub fn contains(&self, log: &PitchLog, i: usize) -> bool {
        match self {
            PeriodSpec::Season(s) => log.season[i] == *s,
            PeriodSpec::Dates { from, to, .. } => (*from..=*to).contains(&log.date[i]),
        }
    }
}

/// A period resolved against the log.
#[derive(Debug, Clone, Serialize)]
pub struct Period {
    pub label: String,
    /// `season` or `dates`.
    pub kind: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub season: Option<i32>,
    /// The range as asked for (dates only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub requested: Option<String>,
    /// First and last game dates with a pitch in the period.
    pub first_date: String,
    pub last_date: String,
    pub pitches: usize,
    pub games: usize,
    /// Seasons the period's pitches belong to.
    pub seasons: Vec<i32>,
    #[serde(skip)]
    pub spec: Option<PeriodSpec>,
    /// Per log row: in the period.
    #[serde(skip)]
    pub rows: Vec<bool>,
}

fn resolve_one(log: &PitchLog, option: &str, spec: &PeriodSpec) -> Result<Period> {
    let seasons = log.seasons();
    if let PeriodSpec::Season(s) = spec {
        if !seasons.contains(s) {
            return Err(Error::Usage(format!(
                "{option} {s} is not a season in the log (seasons: {}); pick one of those or give a date range FROM..TO",
                seasons.iter().map(|s| s.to_string()).collect::<Vec<_>>().join(", ")
            )));
        }
    }
    let rows: Vec<bool> = (0..log.len()).map(|i| spec.contains(log, i)).collect();
    let idx: Vec<usize> = (0..log.len()).filter(|&i| rows[i]).collect();
    if idx.is_empty() {
        let (lo, hi) = (log.date.iter().min().copied().unwrap_or(0), log.date.iter().max().copied().unwrap_or(0));
        return Err(Error::Usage(format!(
            "{option} {} holds no pitch of the log, whose games run from {} to {}; choose dates inside that span",
            spec.label(),
            format_date(lo),
            format_date(hi)
        )));
    }
    let mut games: Vec<u32> = idx.iter().map(|&i| log.game[i]).collect();
    games.sort_unstable();
    games.dedup();
    let mut in_seasons: Vec<i32> = idx.iter().map(|&i| log.season[i]).collect();
    in_seasons.sort_unstable();
    in_seasons.dedup();
    let first = idx.iter().map(|&i| log.date[i]).min().unwrap();
    let last = idx.iter().map(|&i| log.date[i]).max().unwrap();
    Ok(Period {
        label: spec.label(),
        kind: match spec {
            PeriodSpec::Season(_) => "season".into(),
            PeriodSpec::Dates { .. } => "dates".into(),
        },
        season: match spec {
            PeriodSpec::Season(s) => Some(*s),
            PeriodSpec::Dates { .. } => None,
        },
        requested: match spec {
            PeriodSpec::Season(_) => None,
            PeriodSpec::Dates { text, .. } => Some(text.clone()),
        },
        first_date: format_date(first),
        last_date: format_date(last),
        pitches: idx.len(),
        games: games.len(),
        seasons: in_seasons,
        spec: Some(spec.clone()),
        rows,
    })
}

/// Check both periods against the log: each must hold pitches, and they
/// must not overlap (two seasons: not the same one; two ranges: no common
/// day; a season and a range: no pitch in both).
pub fn resolve(log: &PitchLog, before: &PeriodSpec, after: &PeriodSpec) -> Result<(Period, Period)> {
    let b = resolve_one(log, "--before", before)?;
    let a = resolve_one(log, "--after", after)?;
    let overlap = match (before, after) {
        (PeriodSpec::Season(x), PeriodSpec::Season(y)) => x == y,
        (PeriodSpec::Dates { from: f1, to: t1, .. }, PeriodSpec::Dates { from: f2, to: t2, .. }) => f1 <= t2 && f2 <= t1,
        _ => b.rows.iter().zip(&a.rows).any(|(x, y)| *x && *y),
    };
    if overlap {
        return Err(Error::Usage(format!(
            "--before {} and --after {} overlap; choose two periods with no day in common",
            before.label(),
            after.label()
        )));
    }
    Ok((b, a))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_seasons_and_ranges() {
        assert_eq!(PeriodSpec::parse("--before", "2025").unwrap(), PeriodSpec::Season(2025));
        let r = PeriodSpec::parse("--after", " 2025-04-01..2025-06-30 ").unwrap();
        assert_eq!(r.label(), "2025-04-01..2025-06-30");
        let one_day = PeriodSpec::parse("--after", "2025-04-01..2025-04-01").unwrap();
        assert!(matches!(one_day, PeriodSpec::Dates { from, to, .. } if from == to));
    }

    #[test]
    fn bad_text_is_a_usage_error_naming_the_option() {
        for (text, needle) in [
            ("2025-06-30..2025-04-01", "runs backwards"),
            ("2025-02-30..2025-04-01", "not a calendar date"),
            ("2025-04-01..", "not a calendar date"),
            ("25", "neither a season"),
            ("last year", "neither a season"),
            ("", "empty"),
        ] {
            let e = PeriodSpec::parse("--before", text).unwrap_err();
            assert_eq!(e.exit_code(), 2, "{text}");
            let m = e.to_string();
            assert!(m.contains("--before") && m.contains(needle), "{text}: {m}");
        }
    }
}
