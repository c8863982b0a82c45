//! Writing a pitch log in the contract's format (CSV, or Parquet by
//! extension) with polars: the simulator's output goes through here.

use crate::error::{Error, Result};
use crate::simulate::SimLog;
use polars::prelude::*;
use std::path::Path;

/// The log as a polars frame with the contract's column names.
pub fn sim_frame(log: &SimLog) -> Result<DataFrame> {
    let r = &log.rows;
    let n = r.len();
    let s = |f: &dyn Fn(&crate::simulate::SimPitch) -> String| -> Vec<String> { r.iter().map(f).collect() };
    let cols = vec![
        Column::new("game".into(), s(&|p| log.games[p.game as usize].id.clone())),
        Column::new("date".into(), s(&|p| log.games[p.game as usize].date.clone())),
        Column::new("season".into(), r.iter().map(|p| log.games[p.game as usize].season).collect::<Vec<i32>>()),
        Column::new("team".into(), s(&|p| log.games[p.game as usize].team.clone())),
        Column::new("pitcher".into(), s(&|p| log.pitchers[p.pitcher as usize].name.clone())),
        Column::new("throws".into(), s(&|p| log.pitchers[p.pitcher as usize].throws.as_str().to_string())),
        Column::new("batter".into(), s(&|p| log.batters[p.batter as usize].name.clone())),
        Column::new("bats".into(), s(&|p| p.bats.as_str().to_string())),
        Column::new("pa".into(), r.iter().map(|p| p.pa as u32).collect::<Vec<u32>>()),
        Column::new("pitch_no".into(), r.iter().map(|p| p.pitch_no as u32).collect::<Vec<u32>>()),
        Column::new("inning".into(), r.iter().map(|p| p.inning as u32).collect::<Vec<u32>>()),
        Column::new("outs".into(), r.iter().map(|p| p.outs as u32).collect::<Vec<u32>>()),
        Column::new("balls".into(), r.iter().map(|p| p.balls as u32).collect::<Vec<u32>>()),
        Column::new("strikes".into(), r.iter().map(|p| p.strikes as u32).collect::<Vec<u32>>()),
        Column::new("on_first".into(), r.iter().map(|p| p.on_first as u32).collect::<Vec<u32>>()),
        Column::new("on_second".into(), r.iter().map(|p| p.on_second as u32).collect::<Vec<u32>>()),
        Column::new("on_third".into(), r.iter().map(|p| p.on_third as u32).collect::<Vec<u32>>()),
        Column::new("score_diff".into(), r.iter().map(|p| p.score_diff as i32).collect::<Vec<i32>>()),
        Column::new("pitch_type".into(), s(&|p| log.pitch_types[p.pitch_type as usize].clone())),
        Column::new("result".into(), s(&|p| p.result.as_str().to_string())),
        // Rounded to a tenth of a mph and a hundredth of a foot: the
        // precision a tracking feed reports, and stable text across platforms.
        Column::new("speed_mph".into(), r.iter().map(|p| (p.speed_mph as f64 * 10.0).round() / 10.0).collect::<Vec<f64>>()),
        Column::new("loc_side_ft".into(), r.iter().map(|p| (p.loc_side_ft as f64 * 100.0).round() / 100.0).collect::<Vec<f64>>()),
        Column::new("loc_height_ft".into(), r.iter().map(|p| (p.loc_height_ft as f64 * 100.0).round() / 100.0).collect::<Vec<f64>>()),
    ];
    DataFrame::new(n, cols).map_err(|e| Error::Internal(format!("building the log frame: {e}")))
}

/// Write a frame as CSV or Parquet (by extension), atomically.
pub fn write_frame(df: &mut DataFrame, path: &Path) -> Result<()> {
    if let Some(parent) = path.parent().filter(|p| !p.as_os_str().is_empty()) {
        std::fs::create_dir_all(parent).map_err(|e| Error::io(parent, "create the folder", e))?;
    }
    let tmp = path.with_extension(format!("partial-{}", std::process::id()));
    let file = std::fs::File::create(&tmp).map_err(|e| Error::io(&tmp, "create", e))?;
    let res = match crate::ingest::read::Format::by_name(path) {
        crate::ingest::read::Format::Csv => CsvWriter::new(file).include_header(true).finish(df),
        crate::ingest::read::Format::Parquet => ParquetWriter::new(file)
            .with_compression(ParquetCompression::Zstd(None))
            .with_statistics(StatisticsOptions::empty())
            .finish(df)
            .map(|_| ()),
    };
    res.map_err(|e| Error::io(path, "write the log", e))?;
    std::fs::rename(&tmp, path).map_err(|e| Error::io(path, "rename into place", e))
}
