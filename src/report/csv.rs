//! The report's CSV files, written with polars from the results value.

use crate::audit::summary::Summary;
use crate::error::{Error, Result};
use crate::ingest::Rejected;
use crate::tells::{situation_label, TellTest};
use polars::prelude::*;

/// A growing table of named columns.
#[derive(Default)]
pub struct Table {
    cols: Vec<Column>,
}

/// A text cell a spreadsheet would run as a formula (it starts with `=`,
/// `+`, `-`, `@`, a tab or a carriage return) gets a leading apostrophe,
/// the common neutralisation (OWASP, "CSV injection"): spreadsheets show
/// the text and do not evaluate it. So a situation level such as `---`
/// (bases empty) reads `'---` in the CSV files.
pub fn neutralise(cell: String) -> String {
    match cell.chars().next() {
        Some('=' | '+' | '-' | '@' | '\t' | '\r') => format!("'{cell}"),
        _ => cell,
    }
}

impl Table {
    pub fn str(mut self, name: &str, v: Vec<String>) -> Self {
        let v: Vec<String> = v.into_iter().map(neutralise).collect();
        self.cols.push(Column::new(name.into(), v));
        self
    }
    pub fn opt_str(mut self, name: &str, v: Vec<Option<String>>) -> Self {
        let v: Vec<Option<String>> = v.into_iter().map(|c| c.map(neutralise)).collect();
        self.cols.push(Column::new(name.into(), v));
        self
    }
    pub fn u64(mut self, name: &str, v: Vec<u64>) -> Self {
        self.cols.push(Column::new(name.into(), v));
        self
    }
    pub fn f64(mut self, name: &str, v: Vec<f64>) -> Self {
        self.cols.push(Column::new(name.into(), v));
        self
    }
    pub fn opt_f64(mut self, name: &str, v: Vec<Option<f64>>) -> Self {
        self.cols.push(Column::new(name.into(), v));
        self
    }
    pub fn bool(mut self, name: &str, v: Vec<bool>) -> Self {
        self.cols.push(Column::new(name.into(), v));
        self
    }

    /// CSV text: header row, comma separated, missing values empty, floats
    /// at 6 decimals so files diff cleanly across runs.
    pub fn to_csv(self, height: usize) -> Result<Vec<u8>> {
        let mut df = DataFrame::new(height, self.cols).map_err(|e| Error::Internal(format!("csv table: {e}")))?;
        let mut buf = Vec::new();
        CsvWriter::new(&mut buf)
            .include_header(true)
            .with_float_precision(Some(6))
            .finish(&mut df)
            .map_err(|e| Error::Internal(format!("csv write: {e}")))?;
        Ok(buf)
    }
}

/// Write tells.csv in chunks of rows, so a league's hundreds of thousands
/// of tests never sit in memory as one table.
pub fn write_tells_csv(tests: &[TellTest], ids: &PitcherIds, w: &mut impl std::io::Write) -> Result<()> {
    const CHUNK: usize = 50_000;
    if tests.is_empty() {
        return w.write_all(&tells_csv(tests, ids)?).map_err(|e| Error::Io(format!("tells.csv: {e}")));
    }
    for (i, chunk) in tests.chunks(CHUNK).enumerate() {
        let bytes = tells_csv(chunk, ids)?;
        let body = if i == 0 {
            &bytes[..]
        } else {
            // Drop the header line of later chunks.
            let at = bytes.iter().position(|&b| b == b'\n').map(|p| p + 1).unwrap_or(bytes.len());
            &bytes[at..]
        };
        w.write_all(body).map_err(|e| Error::Io(format!("tells.csv: {e}")))?;
    }
    Ok(())
}

/// Each pitcher's id by his shown name: empty unless the log names its
/// pitchers in `pitcher_name` (then the files carry a `pitcher_id` column
/// after `pitcher`).
pub type PitcherIds = std::collections::BTreeMap<String, String>;

/// The ids of a run's pitchers shown by name, from each pitcher's shown
/// name and id (an audit's or a comparison's summaries).
pub fn pitcher_ids<'a>(pitchers: impl IntoIterator<Item = (&'a str, Option<&'a str>)>) -> PitcherIds {
    pitchers.into_iter().filter_map(|(shown, id)| Some((shown.to_string(), id?.to_string()))).collect()
}

impl Table {
    /// The `pitcher_id` column of rows of `pitchers`, when there are ids.
    pub fn ids<'a>(self, ids: &PitcherIds, pitchers: impl Iterator<Item = &'a str>) -> Self {
        if ids.is_empty() {
            return self;
        }
        self.str("pitcher_id", pitchers.map(|p| ids.get(p).cloned().unwrap_or_default()).collect())
    }
}

pub fn tells_csv(tests: &[TellTest], ids: &PitcherIds) -> Result<Vec<u8>> {
    let f = |i: usize| -> (Vec<Option<String>>, Vec<Option<String>>) {
        tests
            .iter()
            .map(|t| {
                let e = t.situation.iter().nth(i);
                (e.map(|(f, _)| f.name().to_string()), e.map(|(_, l)| l.clone()))
            })
            .unzip()
    };
    let (f1, l1) = f(0);
    let (f2, l2) = f(1);
    Table::default()
        .str("pitcher", tests.iter().map(|t| t.pitcher.clone()).collect())
        .ids(ids, tests.iter().map(|t| t.pitcher.as_str()))
        .str("situation", tests.iter().map(|t| situation_label(&t.situation)).collect())
        .opt_str("factor_1", f1)
        .opt_str("level_1", l1)
        .opt_str("factor_2", f2)
        .opt_str("level_2", l2)
        .str("pitch_type", tests.iter().map(|t| t.pitch_type.clone()).collect())
        .str("direction", tests.iter().map(|t| t.direction.as_str().to_string()).collect())
        .u64("n", tests.iter().map(|t| t.n as u64).collect())
        .u64("pitches_of_type", tests.iter().map(|t| t.k as u64).collect())
        .f64("share", tests.iter().map(|t| t.share).collect())
        .f64("share_low_95", tests.iter().map(|t| t.share_low).collect())
        .f64("share_high_95", tests.iter().map(|t| t.share_high).collect())
        .f64("baseline_share", tests.iter().map(|t| t.baseline_share).collect())
        .u64("baseline_n", tests.iter().map(|t| t.baseline_n as u64).collect())
        .f64("staff_share", tests.iter().map(|t| t.staff_share).collect())
        .f64("p_value", tests.iter().map(|t| t.p_value).collect())
        .f64("q_value", tests.iter().map(|t| t.q_value).collect())
        .u64("held_out_n", tests.iter().map(|t| t.held_out_n as u64).collect())
        .opt_f64("held_out_share", tests.iter().map(|t| t.held_out_share).collect())
        .bool("flagged", tests.iter().map(|t| t.flagged).collect())
        .opt_str("within", tests.iter().map(|t| t.within.as_ref().map(situation_label)).collect())
        .str("layer", tests.iter().map(|t| t.layer.as_str().to_string()).collect())
        .opt_f64("expected_share", tests.iter().map(|t| t.expected_share).collect())
        .opt_f64("held_out_low_95", tests.iter().map(|t| t.held_out_low).collect())
        .opt_f64("held_out_high_95", tests.iter().map(|t| t.held_out_high).collect())
        .opt_f64("held_out_expected_share", tests.iter().map(|t| t.held_out_expected_share).collect())
        .opt_f64("league_share", tests.iter().map(|t| t.league_share).collect())
        .str(
            "held_out_verdict",
            tests
                .iter()
                .map(|t| match t.verdict {
                    crate::tells::Verdict::Held => "held",
                    crate::tells::Verdict::Faded => "faded",
                    crate::tells::Verdict::TooFew => "too few to tell",
                })
                .map(str::to_string)
                .collect(),
        )
        .opt_str("restates", tests.iter().map(|t| t.restates.as_ref().map(situation_label)).collect())
        .opt_f64("restates_share", tests.iter().map(|t| t.restates_share).collect())
        .to_csv(tests.len())
}

pub fn counts_csv(summary: &Summary, ids: &PitcherIds) -> Result<Vec<u8>> {
    let rows: Vec<(&str, &crate::audit::summary::CountSummary)> = summary
        .pitchers
        .iter()
        .flat_map(|p| p.counts.iter().map(move |c| (p.pitcher.as_str(), c)))
        .collect();
    Table::default()
        .str("pitcher", rows.iter().map(|r| r.0.to_string()).collect())
        .ids(ids, rows.iter().map(|r| r.0))
        .str("count", rows.iter().map(|r| r.1.count.clone()).collect())
        .u64("n", rows.iter().map(|r| r.1.n as u64).collect())
        .f64("prior_accuracy", rows.iter().map(|r| r.1.prior_accuracy).collect())
        .f64("model_accuracy", rows.iter().map(|r| r.1.model_accuracy).collect())
        .f64("lift", rows.iter().map(|r| r.1.lift).collect())
        .f64("bits_gained", rows.iter().map(|r| r.1.bits_gained).collect())
        .str("top_pitch", rows.iter().map(|r| r.1.top_pitch.clone()).collect())
        .f64("top_share", rows.iter().map(|r| r.1.top_share).collect())
        .f64("top_share_low_95", rows.iter().map(|r| r.1.top_share_low).collect())
        .f64("top_share_high_95", rows.iter().map(|r| r.1.top_share_high).collect())
        .u64("discovery_n", rows.iter().map(|r| r.1.discovery_n as u64).collect())
        .str("discovery_top_pitch", rows.iter().map(|r| r.1.discovery_top_pitch.clone()).collect())
        .f64("discovery_top_share", rows.iter().map(|r| r.1.discovery_top_share).collect())
        .opt_f64("q_value", rows.iter().map(|r| r.1.q_value).collect())
        .bool("more_predictable", rows.iter().map(|r| r.1.more_predictable).collect())
        .to_csv(rows.len())
}

/// One row per audited pitcher, pitch type and situation level (`all`
/// first): pitches, swings and each outcome rate with its Wilson 95%
/// interval.
pub fn outcomes_csv(rows: &[crate::outcomes::SituationOutcomes], ids: &PitcherIds) -> Result<Vec<u8>> {
    let rate = |t: Table, name: &str, f: &dyn Fn(&crate::outcomes::SituationOutcomes) -> crate::outcomes::Rate| {
        t.f64(name, rows.iter().map(|r| f(r).rate).collect())
            .f64(&format!("{name}_low_95"), rows.iter().map(|r| f(r).low).collect())
            .f64(&format!("{name}_high_95"), rows.iter().map(|r| f(r).high).collect())
    };
    let t = Table::default()
        .str("pitcher", rows.iter().map(|r| r.pitcher.clone()).collect())
        .ids(ids, rows.iter().map(|r| r.pitcher.as_str()))
        .str("pitch_type", rows.iter().map(|r| r.pitch_type.clone()).collect())
        .str("factor", rows.iter().map(|r| r.factor.clone()).collect())
        .str("level", rows.iter().map(|r| r.level.clone()).collect())
        .u64("pitches", rows.iter().map(|r| r.pitches).collect())
        .u64("swings", rows.iter().map(|r| r.swings).collect());
    let t = rate(t, "whiff_rate", &|r| r.whiff);
    let t = rate(t, "csw_rate", &|r| r.csw);
    let t = rate(t, "ball_rate", &|r| r.ball);
    let t = rate(t, "in_play_rate", &|r| r.in_play);
    t.to_csv(rows.len())
}

pub fn rejected_csv(rejected: &[Rejected]) -> Result<Vec<u8>> {
    Table::default()
        .u64("line", rejected.iter().map(|r| r.line).collect())
        .str("column", rejected.iter().map(|r| r.column.to_string()).collect())
        .str("value", rejected.iter().map(|r| r.value.clone()).collect())
        .str("reason", rejected.iter().map(|r| r.reason.to_string()).collect())
        .to_csv(rejected.len())
}

#[cfg(test)]
mod tests {
    use super::*;

    // Cells that spreadsheets run as formulas (OWASP's list: = + - @ tab
    // CR) are prefixed with an apostrophe; others are left alone.
    #[test]
    fn formula_cells_are_neutralised() {
        for bad in ["=HYPERLINK(\"x\")", "+1", "-2+3", "@SUM(A1)", "\tx", "\rx"] {
            assert_eq!(neutralise(bad.to_string()), format!("'{bad}"));
        }
        for ok in ["fastball", "0-2", "", "'quoted"] {
            assert_eq!(neutralise(ok.to_string()), ok);
        }
        let csv = Table::default().str("pitcher", vec!["=cmd".into()]).to_csv(1).unwrap();
        assert_eq!(String::from_utf8(csv).unwrap(), "pitcher\n'=cmd\n");
    }
}
