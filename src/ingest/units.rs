//! Optional measurement columns written in other units than the contract's
//! (`speed_mph` in miles per hour, `loc_side_ft` and `loc_height_ft` in
//! feet). A whole column in km/h, inches, centimetres or metres is not a
//! few bad rows: read row by row, most of its values would fall outside the
//! plausible range and take their pitches with them (a log with speeds in
//! km/h lost 96% of its rows), or, in metres, every pitch would land in the
//! middle of the plate. Such a column is set aside whole, as if the file
//! did not have it, and the run says why and how to convert it; nothing is
//! guessed or converted. Single implausible values are still rejected row
//! by row. A `score_diff` taken from the other side (the batting team's,
//! or one team's throughout) is set aside the same way
//! ([`score_from_the_other_side`]): its "ahead" would read as "behind".
//!
//! The column's median decides: pitch speeds of any league lie far below
//! 110 mph (a median above it is km/h), pitches cross the plate about
//! 1.5 to 3.5 ft above the ground (a median height above 8 is inches or
//! centimetres, below 1 metres or another origin than the ground), and half
//! of all pitches cross within a foot or so of the plate's centre line (a
//! median distance above 4 is inches or centimetres). These are facts of
//! the trade (common practice, no published source).

use super::read::{RawTable, TextColumn};
use super::PitchLog;
use crate::settings::InputParams;
use serde::Serialize;

/// Fewer values than this decide nothing.
const MIN_VALUES: usize = 20;

/// Optional columns set aside for their units (or the side they are taken
/// from), and why.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SetAside {
    /// Contract names of the columns set aside (the two location columns go
    /// together: one without the other places no pitch).
    pub columns: Vec<String>,
    /// Why, and the fix, in words (no final stop).
    pub reason: String,
}

/// The optional measurement columns of `table` whose units are not the
/// contract's.
pub fn misread_units(table: &RawTable, input: &InputParams) -> Vec<SetAside> {
    let col = |c: &str| table.column(input.file_column(c));
    let mut out = Vec::new();
    if let Some(m) = col("speed_mph").and_then(|c| median(c, false)) {
        if m > 110.0 {
            out.push(SetAside {
                columns: vec!["speed_mph".into()],
                reason: format!(
                    "`speed_mph` has a median of {m:.0}, faster than any pitcher throws in miles per hour: it looks like km/h; divide by 1.609 to give miles per hour"
                ),
            });
        }
    }
    let (side, height) = (col("loc_side_ft"), col("loc_height_ft"));
    if let (Some(side), Some(height)) = (side, height) {
        let h = median(height, false);
        let s = median(side, true);
        let why = match (h, s) {
            (Some(h), _) if h > 8.0 => Some(format!(
                "`loc_height_ft` has a median of {h:.1}, where pitches cross the plate about 2.3 ft above the ground: the location columns look like inches (divide by 12) or centimetres (divide by 30.48)"
            )),
            (Some(h), _) if h < 1.0 => Some(format!(
                "`loc_height_ft` has a median of {h:.2}, where pitches cross the plate about 2.3 ft above the ground: the location columns look like metres (multiply by 3.281), or heights taken from another point than the ground"
            )),
            (_, Some(s)) if s > 4.0 => Some(format!(
                "`loc_side_ft` has a median distance of {s:.1} from the plate's centre line, where half of all pitches cross within about 0.7 ft of it: the location columns look like inches (divide by 12) or centimetres (divide by 30.48)"
            )),
            _ => None,
        };
        if let Some(reason) = why {
            out.push(SetAside { columns: vec!["loc_side_ft".into(), "loc_height_ft".into()], reason: format!("{reason}; give feet") });
        }
    }
    out
}

/// The median of a column's numeric values (of their absolute values with
/// `abs`), each row counted once; `None` with fewer than `MIN_VALUES`.
/// Values that are not numbers are passed over (their rows are rejected
/// later, or set aside with the column).
fn median(col: &TextColumn, abs: bool) -> Option<f64> {
    let uses = col.uses();
    let mut values: Vec<(f64, usize)> = col
        .dict
        .iter()
        .zip(&uses)
        .filter_map(|(v, &n)| v.parse::<f64>().ok().filter(|x| x.is_finite()).map(|x| (if abs { x.abs() } else { x }, n)))
        .filter(|&(_, n)| n > 0)
        .collect();
    let total: usize = values.iter().map(|v| v.1).sum();
    if total < MIN_VALUES {
        return None;
    }
    values.sort_by(|a, b| a.0.total_cmp(&b.0));
    // The lower median: the value at rank ⌈total / 2⌉.
    let mut seen = 0;
    values.into_iter().find(|&(_, n)| {
        seen += n;
        2 * seen >= total
    }).map(|v| v.0)
}

/// When `score_diff` is not the pitcher's team's runs minus the
/// opponent's, why, in words. While a pitcher is on the mound only the
/// batting side scores, so between two of his pitches in one inning the
/// contract's score difference can only fall: a column that rises there in
/// a quarter or more of its changes (20 at least) is taken from the batting
/// side (it only rises) or from one fixed team, the home team's say (it
/// rises and falls). Read as written, "ahead" would read as "behind".
pub fn score_from_the_other_side(log: &PitchLog) -> Option<String> {
    let score = log.score_diff.as_ref()?;
    let (mut up, mut down) = (0usize, 0usize);
    for r in 1..log.len() {
        let same = log.game[r] == log.game[r - 1] && log.pitcher[r] == log.pitcher[r - 1] && log.inning[r] == log.inning[r - 1];
        if let (true, Some(a), Some(b)) = (same, score[r - 1], score[r]) {
            up += usize::from(b > a);
            down += usize::from(b < a);
        }
    }
    // In a file that runs backward (each game's last pitch first) the
    // score's changes read the other way too.
    if log.runs_backward().is_some() {
        std::mem::swap(&mut up, &mut down);
    }
    let total = up + down;
    if total < 20 || 4 * up < total {
        return None;
    }
    let side = if 10 * up >= 9 * total {
        "it looks like the batting side's runs minus the pitcher's team's; give the pitcher's team's runs minus the opponent's (this column with its sign turned)"
    } else {
        "it looks like one team's score throughout (the home team's, say), not the pitcher's team's; give the pitcher's team's runs minus the opponent's"
    };
    Some(format!(
        "`score_diff` rises between two pitches of one pitcher in one inning in {} of its {} changes, where only the batting side can score: {side}",
        crate::domain::numbers::fmt_n(up),
        crate::domain::numbers::fmt_n(total)
    ))
}
