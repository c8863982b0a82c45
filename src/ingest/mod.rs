//! Ingest: read a pitch log, map its columns, validate every row against
//! CONTRACT §1, keep rejected rows with their reasons, and order the rest by
//! date, game, plate appearance and pitch number.

pub mod parse;
pub mod read;
pub mod write;

use crate::error::{Error, Result};
use crate::settings::{Settings, OPTIONAL_COLUMNS, REQUIRED_COLUMNS};
use crate::situations::levels::Hand;
use parse::*;
use read::{Format, RawTable};
use serde::Serialize;
use sha2::{Digest, Sha256};
use std::collections::{BTreeMap, BTreeSet, HashMap};
use std::path::{Path, PathBuf};

/// The outcome of a pitch (optional column `result`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum PitchResult {
    Ball,
    CalledStrike,
    SwingingStrike,
    Foul,
    InPlay,
    HitByPitch,
    Other,
}

impl PitchResult {
    pub const ALL: [PitchResult; 7] = [
        PitchResult::Ball,
        PitchResult::CalledStrike,
        PitchResult::SwingingStrike,
        PitchResult::Foul,
        PitchResult::InPlay,
        PitchResult::HitByPitch,
        PitchResult::Other,
    ];

    pub fn as_str(self) -> &'static str {
        match self {
            PitchResult::Ball => "ball",
            PitchResult::CalledStrike => "called_strike",
            PitchResult::SwingingStrike => "swinging_strike",
            PitchResult::Foul => "foul",
            PitchResult::InPlay => "in_play",
            PitchResult::HitByPitch => "hit_by_pitch",
            PitchResult::Other => "other",
        }
    }

    pub fn parse(s: &str) -> Option<PitchResult> {
        let s = s.trim().to_ascii_lowercase();
        PitchResult::ALL.iter().copied().find(|r| r.as_str() == s)
    }
}

/// One rejected input row: where, which column, the value and why.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct Rejected {
    /// 1-based CSV line (header = line 1) or 0-based Parquet row index.
    pub line: u64,
    pub column: String,
    pub value: String,
    pub reason: String,
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
}

/// A validated pitch log, one entry per kept pitch, ordered by date, game,
/// plate appearance and pitch number. Strings are interned into tables and
/// rows hold compact indices, so a large log stays small in memory.
#[derive(Debug, Clone, Default)]
pub struct PitchLog {
    pub games: Vec<String>,
    pub pitchers: Vec<String>,
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
}

/// A log and what was set aside while reading it.
#[derive(Debug, Clone)]
pub struct Ingested {
    pub log: PitchLog,
    pub rejected: Vec<Rejected>,
    pub source: SourceInfo,
}

impl PitchLog {
    pub fn len(&self) -> usize {
        self.game.len()
    }

    pub fn is_empty(&self) -> bool {
        self.game.is_empty()
    }

    pub fn seasons(&self) -> Vec<i32> {
        let set: BTreeSet<i32> = self.season.iter().copied().collect();
        set.into_iter().collect()
    }
}

/// Interns strings into a table, giving each a stable index in first-seen
/// order; `finish` re-sorts the table and returns the old→new mapping so
/// indices do not depend on file order.
#[derive(Default)]
struct Interner {
    index: HashMap<String, u32>,
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

/// Read, validate and order a pitch log.
pub fn load(path: &Path, settings: &Settings) -> Result<Ingested> {
    let wanted: Vec<String> = REQUIRED_COLUMNS
        .iter()
        .chain(OPTIONAL_COLUMNS.iter())
        .map(|c| settings.file_column(c).to_string())
        .collect();
    let table = read::read_table(path, &wanted)?;
    let missing: Vec<String> = REQUIRED_COLUMNS
        .iter()
        .filter(|c| table.column(settings.file_column(c)).is_none())
        .map(|c| {
            let f = settings.file_column(c);
            if f == *c { c.to_string() } else { format!("{c} (mapped to \"{f}\")") }
        })
        .collect();
    if !missing.is_empty() {
        return Err(Error::Data(format!(
            "{}: required column{} {} missing from the header; add {} or map {} to the file's own header with a [columns] table in the config",
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
    let (log, rejected, blank) = validate(&table, settings);
    let present: Vec<String> = OPTIONAL_COLUMNS
        .iter()
        .filter(|c| table.column(settings.file_column(c)).is_some())
        .map(|c| c.to_string())
        .collect();
    let absent: Vec<String> = OPTIONAL_COLUMNS
        .iter()
        .filter(|c| table.column(settings.file_column(c)).is_none())
        .map(|c| c.to_string())
        .collect();
    let source = SourceInfo {
        path: path.to_path_buf(),
        format: table.format,
        rows_read: table.n_rows - blank,
        rows_rejected: rejected.len(),
        sha256: sha256_of(path)?,
        optional_present: present,
        optional_missing: absent,
    };
    if log.is_empty() {
        let why = rejected
            .first()
            .map(|r| format!(" (first: {} {} column {}: {})", table.format.locator(), r.line, r.column, r.reason))
            .unwrap_or_default();
        return Err(Error::Data(format!(
            "{}: no valid row among {} read{why}; run `tellscope check` on it to see every reason",
            path.display(),
            table.n_rows
        )));
    }
    if settings.strict && !rejected.is_empty() {
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
    Ok(Ingested { log, rejected, source })
}

/// One valid row before ordering and interning is finished.
struct Row {
    game: u32,
    date: i32,
    season: i32,
    pitcher: u32,
    throws: Hand,
    batter: u32,
    bats: Hand,
    inning: u16,
    outs: u8,
    balls: u8,
    strikes: u8,
    bases: [bool; 3],
    pitch_type: u32,
    pa: u32,
    pitch_no: u32,
    score_diff: Option<i32>,
    result: Option<PitchResult>,
    speed: Option<f32>,
    side: Option<f32>,
    height: Option<f32>,
    team: Option<u32>,
    file_index: u32,
}

fn validate(table: &RawTable, settings: &Settings) -> (PitchLog, Vec<Rejected>, usize) {
    let col = |c: &str| table.column(settings.file_column(c));
    let req: Vec<&polars::prelude::StringChunked> =
        REQUIRED_COLUMNS.iter().map(|c| col(c).expect("checked above")).collect();
    let [c_game, c_date, c_pitcher, c_throws, c_batter, c_bats, c_inning, c_outs, c_balls, c_strikes, c_on1, c_on2, c_on3, c_type] =
        req.as_slice()
    else {
        unreachable!()
    };
    let c_season = col("season");
    let c_pa = col("pa");
    let c_pitch_no = col("pitch_no");
    let c_score = col("score_diff");
    let c_result = col("result");
    let c_speed = col("speed_mph");
    let c_side = col("loc_side_ft");
    let c_height = col("loc_height_ft");
    let c_team = col("team");

    let mut games = Interner::default();
    let mut pitchers = Interner::default();
    let mut batters = Interner::default();
    let mut types = Interner::default();
    let mut teams = Interner::default();
    let mut rows: Vec<Row> = Vec::with_capacity(table.n_rows);
    let mut rejected = Vec::new();

    // Iterate all columns in lockstep.
    let mut its: Vec<Box<dyn Iterator<Item = Option<&str>>>> = Vec::new();
    for c in [c_game, c_date, c_pitcher, c_throws, c_batter, c_bats, c_inning, c_outs, c_balls, c_strikes, c_on1, c_on2, c_on3, c_type] {
        its.push(Box::new(c.iter()));
    }
    let opt_cols = [c_season, c_pa, c_pitch_no, c_score, c_result, c_speed, c_side, c_height, c_team];
    for c in opt_cols {
        match c {
            Some(c) => its.push(Box::new(c.iter())),
            None => its.push(Box::new(std::iter::repeat(None))),
        }
    }
    let mut vals: Vec<Option<&str>> = vec![None; its.len()];
    let mut blank = 0usize;
    for i in 0..table.n_rows {
        for (v, it) in vals.iter_mut().zip(its.iter_mut()) {
            *v = it.next().flatten().map(str::trim).filter(|s| !s.is_empty());
        }
        let line = table.location(i);
        if vals.iter().all(Option::is_none) {
            blank += 1;
            continue; // a blank line is not a pitch
        }
        match parse_row(&vals, c_pa.is_some(), c_pitch_no.is_some()) {
            Ok(p) => {
                let pitch_type = settings.pitch_group(p.pitch_type);
                rows.push(Row {
                    game: games.get(p.game),
                    date: p.date,
                    season: p.season,
                    pitcher: pitchers.get(p.pitcher),
                    throws: p.throws,
                    batter: batters.get(p.batter),
                    bats: p.bats,
                    inning: p.inning,
                    outs: p.outs,
                    balls: p.balls,
                    strikes: p.strikes,
                    bases: p.bases,
                    pitch_type: types.get(pitch_type),
                    pa: p.pa.unwrap_or(0),
                    pitch_no: p.pitch_no.unwrap_or(0),
                    score_diff: p.score_diff,
                    result: p.result,
                    speed: p.speed,
                    side: p.side,
                    height: p.height,
                    team: p.team.map(|t| teams.get(t)),
                    file_index: i as u32,
                });
            }
            Err((column, value, reason)) => rejected.push(Rejected {
                line,
                column: column.to_string(),
                value: value.unwrap_or("").to_string(),
                reason,
            }),
        }
    }

    let (game_names, game_map) = games.finish();
    let (pitcher_names, pitcher_map) = pitchers.finish();
    let (batter_names, batter_map) = batters.finish();
    let (type_names, type_map) = types.finish();
    let (team_names, team_map) = teams.finish();

    // CONTRACT §1: order by date, game, pa, pitch_no; file order within a
    // game when pa/pitch_no are absent (they are then 0 for every row, so
    // the file index decides).
    rows.sort_by(|a, b| {
        (a.date, game_map[a.game as usize], a.pa, a.pitch_no, a.file_index)
            .cmp(&(b.date, game_map[b.game as usize], b.pa, b.pitch_no, b.file_index))
    });

    let n = rows.len();
    let mut log = PitchLog {
        games: game_names,
        pitchers: pitcher_names,
        batters: batter_names,
        pitch_types: type_names,
        teams: team_names,
        ..PitchLog::default()
    };
    log.game.reserve(n);
    for r in &rows {
        log.game.push(game_map[r.game as usize]);
        log.date.push(r.date);
        log.season.push(r.season);
        log.pitcher.push(pitcher_map[r.pitcher as usize]);
        log.throws.push(r.throws);
        log.batter.push(batter_map[r.batter as usize]);
        log.bats.push(r.bats);
        log.inning.push(r.inning);
        log.outs.push(r.outs);
        log.balls.push(r.balls);
        log.strikes.push(r.strikes);
        log.on_first.push(r.bases[0]);
        log.on_second.push(r.bases[1]);
        log.on_third.push(r.bases[2]);
        log.pitch_type.push(type_map[r.pitch_type as usize] as u16);
        log.source_line.push(table.location(r.file_index as usize));
    }
    if c_pa.is_some() {
        log.pa = Some(rows.iter().map(|r| r.pa).collect());
    }
    if c_pitch_no.is_some() {
        log.pitch_no = Some(rows.iter().map(|r| r.pitch_no).collect());
    }
    if c_score.is_some() {
        log.score_diff = Some(rows.iter().map(|r| r.score_diff).collect());
    }
    if c_result.is_some() {
        log.result = Some(rows.iter().map(|r| r.result).collect());
    }
    if c_speed.is_some() {
        log.speed_mph = Some(rows.iter().map(|r| r.speed).collect());
    }
    if c_side.is_some() {
        log.loc_side_ft = Some(rows.iter().map(|r| r.side).collect());
    }
    if c_height.is_some() {
        log.loc_height_ft = Some(rows.iter().map(|r| r.height).collect());
    }
    if c_team.is_some() {
        log.team = Some(rows.iter().map(|r| r.team.map(|t| team_map[t as usize])).collect());
    }
    (log, rejected, blank)
}

/// Counts of rejection reasons for a summary: reason → (count, first lines).
pub fn group_rejections(rejected: &[Rejected], keep_lines: usize) -> Vec<(String, usize, Vec<u64>)> {
    let mut map: BTreeMap<String, (usize, Vec<u64>)> = BTreeMap::new();
    for r in rejected {
        let key = format!("{}: {}", r.column, generic_reason(&r.reason));
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
