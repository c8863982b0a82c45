//! Optional columns written in a language the contract does not speak.
//! A `result` column of one-letter codes (`B`, `S`, `X`), a `pa` written
//! as text, a score written as "2-1": read row by row, every row would be
//! rejected for a column the audit of pitch selection does not even need,
//! and a log that is fine for its main job would give "no valid row". When
//! most of an optional column's filled values cannot be read, the column is
//! not a few bad rows but another format: it is set aside whole, as if the
//! file had none, the run says why (the commonest value and its fix), and
//! every row is kept. A column with a few bad values keeps them rejected
//! row by row, as the contract says. Nothing is guessed: a value is either
//! read as the contract says or the whole column is left out.

use super::parse;
use super::read::RawTable;
use super::units::SetAside;
use crate::domain::columns::{OPTIONAL_COLUMNS, REQUIRED_COLUMNS};
use crate::domain::numbers::fmt_n;
use crate::settings::InputParams;

/// Fewer unreadable values than this decide nothing (their rows are
/// rejected as usual).
const MIN_UNREADABLE: usize = 20;

/// Whether a non-empty value of optional column `name` (contract index
/// `ci`) can be read, and why not. `pa` and `pitch_no` may count from 0
/// (read one higher later); `result` goes through `[result_groups]` and
/// the results set aside.
fn reading(ci: usize, name: &str, v: &str, input: &InputParams) -> Result<(), String> {
    match name {
        "result" => parse::parse_result(v, input).map(|_| ()),
        "pa" | "pitch_no" => parse::parse_cell(ci, v).or_else(|e| parse::parse_counted_from_zero(ci, v).map_err(|_| e)).map(|_| ()),
        _ => parse::parse_cell(ci, v).map(|_| ()),
    }
}

/// The optional columns of `table` (those it still has) most of whose
/// filled values cannot be read: more than half of them, and at least
/// `MIN_UNREADABLE` rows. The two location columns go together. `season`
/// is never set aside: the calendar year it would fall back to cuts a
/// winter league's season in two, and every scheme is built on seasons,
/// so its rows are rejected with the fix instead.
pub fn unreadable_columns(table: &RawTable, input: &InputParams) -> Vec<SetAside> {
    let mut out: Vec<SetAside> = Vec::new();
    for (k, &name) in OPTIONAL_COLUMNS.iter().enumerate().filter(|(_, &n)| n != "season") {
        let ci = REQUIRED_COLUMNS.len() + k;
        let Some(col) = table.column(input.file_column(name)) else { continue };
        let why: Vec<Option<String>> = col
            .dict
            .iter()
            .map(|v| if parse::missing_marker(v) { None } else { reading(ci, name, v, input).err() })
            .collect();
        let bad_values = why.iter().any(Option::is_some);
        if !bad_values {
            continue;
        }
        let uses = col.uses();
        let filled: usize = uses.iter().zip(&col.dict).filter(|(_, v)| !parse::missing_marker(v)).map(|(n, _)| n).sum();
        let bad: usize = uses.iter().zip(&why).filter(|(_, w)| w.is_some()).map(|(n, _)| n).sum();
        if bad < MIN_UNREADABLE || 2 * bad <= filled {
            continue;
        }
        // The commonest unreadable value, its rows and its reason (the
        // first in the file's dictionary among equals).
        let (top, _) = why
            .iter()
            .zip(&uses)
            .enumerate()
            .filter(|(_, (w, _))| w.is_some())
            .fold((0usize, 0usize), |(best, n), (i, (_, &u))| if u > n { (i, u) } else { (best, n) });
        let shown: String = col.dict[top].chars().take(40).collect();
        let why = why[top].as_deref().unwrap_or_default();
        let reason = format!(
            "`{name}` cannot be read in {} of its {} filled rows (the commonest value, \"{shown}\" in {} rows, {}); fix the column and run again (the rest of the log is read without it)",
            fmt_n(bad),
            fmt_n(filled),
            fmt_n(uses[top]),
            why.strip_prefix(&format!("\"{shown}\" ")).unwrap_or(why),
        );
        let columns: Vec<String> = if name.starts_with("loc_") { vec!["loc_side_ft".into(), "loc_height_ft".into()] } else { vec![name.into()] };
        match out.iter_mut().find(|s| s.columns == columns) {
            Some(s) => s.reason = format!("{}; {reason}", s.reason),
            None => out.push(SetAside { columns, reason }),
        }
    }
    out
}
