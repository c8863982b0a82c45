//! The scenario file: who pitches, what they throw, and what is planted.
//!
//! A scenario is TOML. Every table and key is listed below; an unknown key
//! is an error (so a typo never silently drops a planted tell).
//!
//! ```toml
//! [club]
//! name = "Tollgate Lamplighters"   # the staff's team name (`team` column)
//!
//! [[season]]                        # one table per season, any order
//! year = 2025
//! games = 130                       # games per team in that season
//! start = "2025-04-03"              # date of the first game; six games, then an off day
//!
//! [batters]                         # the pool opponents' lineups are drawn from
//! pool = 240                        # number of batters (at least 9)
//! left = 0.38                       # shares of left, right and switch hitters,
//! right = 0.52                      # adding up to 1; a switch hitter bats from
//! switch = 0.10                     # the side opposite the pitcher's hand
//!
//! [league]                          # optional: more teams with generated staffs
//! teams = 30                        # number of generated teams
//! starters = 5                      # per generated team
//! relievers = 21                    # per generated team (the first one closes)
//! planted_share = 0.1               # share of generated pitchers given one random rule
//!
//! [[pitcher]]                       # the club's own pitchers, any number
//! name = "Oren Vasquell"
//! throws = "R"                      # L or R
//! role = "starter"                  # starter or reliever
//! mix = { fastball = 55, slider = 25, changeup = 20 }   # weights, normalised to 1
//!
//!   [[pitcher.change]]              # a change of his mix from a season on
//!   season = 2026
//!   add = { cutter = 0.25 }         # a new pitch at that share; the others keep
//!                                   # their proportions in the remaining 0.75
//!   # mix = { fastball = 50, slider = 50 }   # or: a whole new mix
//!
//!   [[pitcher.rule]]                # a planted tell
//!   when = { count = ["0-2", "1-2"] }        # the situation (several keys: all must hold)
//!   throw = "slider"
//!   rate = 0.80                     # P(slider | situation); 0.0 plants an avoidance
//!   from = 2025                     # optional: first season the rule holds
//!   until = 2026                    # optional: last season the rule holds
//! ```
//!
//! Condition keys and their levels are those of the data contract (§2):
//! `count` (`"0-2"`), `bats` (`"L"`), `platoon` (`"same"`, `"opposite"`),
//! `bases` (`"---"`, `"1--"`, ..., `"123"`), `outs` (`"0"`..`"2"`),
//! `prev_pitch` (one of his pitch labels, or `"none"` for the first pitch of
//! a plate appearance), `times_through` (`"1"`, `"2"`, `"3+"`), `inning`
//! (`"1-3"`, `"4-6"`, `"7-9"`, `"10+"`), `score` (`"behind"`, `"tied"`,
//! `"ahead"`, from the pitcher's side). A value is one level or a list of
//! levels (any of them); small integers may be written bare (`outs = 2`).
//!
//! Semantics of a rule. When its situation holds, the pitch is `throw` with
//! probability `rate`; otherwise it is drawn from his season mix with
//! `throw` removed and the rest renormalised. So the share of `throw` in that
//! situation is exactly `rate` in expectation, whatever his mix. Rules are
//! tried in the order listed and the first whose situation holds decides the
//! pitch; later rules only see the situations earlier ones leave. A pitcher
//! with no rule draws every pitch independently from his season mix: a true
//! null for the situation tests.
//!
//! Season changes apply from their season on, in season order (a change in
//! 2026 also holds in 2027). Mix weights may be any positive numbers; they
//! are normalised to shares.

use crate::situations::levels::{Factor, Hand, NO_PREV_PITCH};
use serde::Deserialize;
use std::collections::{BTreeMap, BTreeSet};
use std::fmt;

/// The plain pitch labels, in the order tables and mixes list them. Other
/// labels are allowed and sort after these, alphabetically.
pub const PLAIN_LABELS: [&str; 7] = [
    "fastball",
    "sinker",
    "cutter",
    "slider",
    "curveball",
    "changeup",
    "splitter",
];

/// At most this many distinct pitch labels in one scenario (the engine keeps
/// a pitch-type set in a 64-bit mask, one bit reserved for `none`).
pub const MAX_PITCH_TYPES: usize = 63;

/// A pitcher's job on the staff.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Role {
    Starter,
    Reliever,
}

impl Role {
    pub fn as_str(self) -> &'static str {
        match self {
            Role::Starter => "starter",
            Role::Reliever => "reliever",
        }
    }
}

/// A calendar date (proleptic Gregorian).
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct Date {
    pub year: i32,
    pub month: u32,
    pub day: u32,
}

impl Date {
    /// `YYYY-MM-DD`, nothing else.
    pub fn parse(text: &str) -> Option<Date> {
        let b = text.as_bytes();
        if b.len() != 10 || b[4] != b'-' || b[7] != b'-' {
            return None;
        }
        let digits = |r: std::ops::Range<usize>| -> Option<u32> {
            let s = &text[r];
            if s.bytes().all(|c| c.is_ascii_digit()) {
                s.parse().ok()
            } else {
                None
            }
        };
        let (year, month, day) = (digits(0..4)? as i32, digits(5..7)?, digits(8..10)?);
        if !(1..=12).contains(&month) || day < 1 || day > days_in_month(year, month) {
            return None;
        }
        Some(Date { year, month, day })
    }

    /// Days since 1970-01-01. Algorithm `days_from_civil` of H. Hinnant,
    /// "chrono-Compatible Low-Level Date Algorithms" (public domain).
    pub fn to_days(self) -> i64 {
        let y = self.year as i64 - if self.month <= 2 { 1 } else { 0 };
        let era = y.div_euclid(400);
        let yoe = y - era * 400;
        let m = self.month as i64;
        let doy = (153 * (m + if m > 2 { -3 } else { 9 }) + 2) / 5 + self.day as i64 - 1;
        let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
        era * 146_097 + doe - 719_468
    }

    /// Inverse of [`Date::to_days`] (Hinnant's `civil_from_days`).
    pub fn from_days(days: i64) -> Date {
        let z = days + 719_468;
        let era = z.div_euclid(146_097);
        let doe = z - era * 146_097;
        let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
        let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
        let mp = (5 * doy + 2) / 153;
        let day = (doy - (153 * mp + 2) / 5 + 1) as u32;
        let month = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
        let year = (yoe + era * 400 + if month <= 2 { 1 } else { 0 }) as i32;
        Date { year, month, day }
    }

    pub fn add_days(self, n: i64) -> Date {
        Date::from_days(self.to_days() + n)
    }
}

impl fmt::Display for Date {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{:04}-{:02}-{:02}", self.year, self.month, self.day)
    }
}

fn days_in_month(year: i32, month: u32) -> u32 {
    let leap = (year % 4 == 0 && year % 100 != 0) || year % 400 == 0;
    match month {
        2 if leap => 29,
        2 => 28,
        4 | 6 | 9 | 11 => 30,
        _ => 31,
    }
}

/// One season of the schedule.
#[derive(Debug, Clone, PartialEq)]
pub struct Season {
    pub year: i32,
    /// Games per team.
    pub games: u32,
    pub start: Date,
}

impl Season {
    /// Date of game `k` (0-based): six games, then an off day.
    pub fn game_date(&self, k: u32) -> Date {
        self.start.add_days(k as i64 + k as i64 / 6)
    }
}

/// The pool opponents' lineups are drawn from.
#[derive(Debug, Clone, PartialEq)]
pub struct BatterPool {
    pub size: u32,
    pub left: f64,
    pub right: f64,
    pub switch: f64,
}

/// Generated teams beside the club.
#[derive(Debug, Clone, PartialEq)]
pub struct League {
    pub teams: u32,
    pub starters: u32,
    pub relievers: u32,
    /// Share of generated pitchers given one random rule (the rest are nulls).
    pub planted_share: f64,
}

/// Shares by pitch label, adding up to 1, in label order ([`label_order`]);
/// no zero shares.
pub type Mix = Vec<(String, f64)>;

/// A change of a pitcher's mix, holding from `season` on.
#[derive(Debug, Clone, PartialEq)]
pub struct MixChange {
    pub season: i32,
    pub kind: MixChangeKind,
}

#[derive(Debug, Clone, PartialEq)]
pub enum MixChangeKind {
    /// A whole new mix.
    Replace(Mix),
    /// New pitches at these shares; the old ones keep their proportions in
    /// what is left.
    Add(Vec<(String, f64)>),
}

/// A planted tell (see the module documentation for its semantics).
#[derive(Debug, Clone, PartialEq)]
pub struct Rule {
    /// Factor -> the levels any of which satisfies it; all factors must hold.
    pub when: BTreeMap<Factor, Vec<String>>,
    pub throw: String,
    pub rate: f64,
    /// First season the rule holds (inclusive); `None`: from the first.
    pub from: Option<i32>,
    /// Last season the rule holds (inclusive); `None`: to the last.
    pub until: Option<i32>,
}

impl Rule {
    pub fn active_in(&self, year: i32) -> bool {
        self.from.is_none_or(|f| year >= f) && self.until.is_none_or(|u| year <= u)
    }

    /// Whether the situation holds, given each factor's level.
    pub fn holds(&self, level_of: impl Fn(Factor) -> String) -> bool {
        self.when
            .iter()
            .all(|(factor, levels)| levels.contains(&level_of(*factor)))
    }
}

/// One pitcher as the scenario describes him.
#[derive(Debug, Clone, PartialEq)]
pub struct PitcherSpec {
    pub name: String,
    pub throws: Hand,
    pub role: Role,
    /// His mix in the first season (before any change).
    pub mix: Mix,
    /// Sorted by season.
    pub changes: Vec<MixChange>,
    /// In the order listed: the first rule whose situation holds decides.
    pub rules: Vec<Rule>,
}

impl PitcherSpec {
    /// His mix in season `year`: the base mix with every change up to and
    /// including `year` applied in season order.
    pub fn mix_in(&self, year: i32) -> Mix {
        let mut mix = self.mix.clone();
        for change in self.changes.iter().filter(|c| c.season <= year) {
            mix = match &change.kind {
                MixChangeKind::Replace(new) => new.clone(),
                MixChangeKind::Add(added) => {
                    let kept: f64 = 1.0 - added.iter().map(|(_, s)| s).sum::<f64>();
                    let mut next: Vec<(String, f64)> =
                        mix.iter().map(|(l, s)| (l.clone(), s * kept)).collect();
                    next.extend(added.iter().cloned());
                    next
                }
            };
            mix = normalise(mix);
        }
        mix
    }

    /// Every label he throws in some season.
    pub fn labels(&self, seasons: &[Season]) -> BTreeSet<String> {
        seasons
            .iter()
            .flat_map(|s| self.mix_in(s.year).into_iter().map(|(l, _)| l))
            .collect()
    }
}

/// A validated scenario. Build it with [`Scenario::from_toml_str`]; every
/// field then holds a checked value.
#[derive(Debug, Clone, PartialEq)]
pub struct Scenario {
    pub club: String,
    /// Sorted by year.
    pub seasons: Vec<Season>,
    pub batters: BatterPool,
    pub league: Option<League>,
    pub pitchers: Vec<PitcherSpec>,
}

/// Sort key of a pitch label: the plain labels first in their order, then
/// the others alphabetically.
pub fn label_order(label: &str) -> (usize, String) {
    let rank = PLAIN_LABELS
        .iter()
        .position(|p| *p == label)
        .unwrap_or(PLAIN_LABELS.len());
    (rank, label.to_string())
}

/// Drop zero weights, scale to shares, sort by label order.
pub(crate) fn normalise(mix: Vec<(String, f64)>) -> Mix {
    let total: f64 = mix.iter().map(|(_, w)| w).sum();
    let mut out: Mix = mix
        .into_iter()
        .filter(|(_, w)| *w > 0.0)
        .map(|(l, w)| (l, w / total))
        .collect();
    out.sort_by_key(|a| label_order(&a.0));
    out
}

// ---------------------------------------------------------------------------
// The file as written. Hands and roles are read as text so the error can
// name the pitcher.

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawScenario {
    club: RawClub,
    #[serde(default)]
    season: Vec<RawSeason>,
    batters: RawBatters,
    league: Option<RawLeague>,
    #[serde(default)]
    pitcher: Vec<RawPitcher>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawClub {
    name: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSeason {
    year: i32,
    games: u32,
    start: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawBatters {
    pool: u32,
    left: f64,
    right: f64,
    switch: f64,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawLeague {
    teams: u32,
    starters: u32,
    relievers: u32,
    #[serde(default)]
    planted_share: f64,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawPitcher {
    name: String,
    throws: String,
    role: String,
    mix: BTreeMap<String, f64>,
    #[serde(default)]
    change: Vec<RawChange>,
    #[serde(default)]
    rule: Vec<RawRule>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawChange {
    season: i32,
    mix: Option<BTreeMap<String, f64>>,
    add: Option<BTreeMap<String, f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawRule {
    when: BTreeMap<String, RawLevels>,
    throw: String,
    rate: f64,
    from: Option<i32>,
    until: Option<i32>,
}

#[derive(Deserialize)]
#[serde(
    untagged,
    expecting = "a situation value: a level such as \"0-2\", or a list of levels such as [\"0-2\", \"1-2\"]"
)]
enum RawLevels {
    One(RawLevel),
    Many(Vec<RawLevel>),
}

#[derive(Deserialize)]
#[serde(untagged)]
enum RawLevel {
    Text(String),
    Number(i64),
}

impl RawLevel {
    fn text(&self) -> String {
        match self {
            RawLevel::Text(s) => s.trim().to_string(),
            RawLevel::Number(n) => n.to_string(),
        }
    }
}

impl Scenario {
    /// Parse and validate a scenario. The error is one sentence naming the
    /// table, pitcher or key at fault and what to write instead.
    pub fn from_toml_str(text: &str) -> Result<Scenario, String> {
        let raw: RawScenario = toml::from_str(text).map_err(|e| {
            // One line, naming the line of the file (the parser's own text
            // spreads over several with a source excerpt).
            let message = e.message().trim_end().replace('\n', " ");
            match e.span() {
                Some(span) => {
                    let line = text[..span.start.min(text.len())].matches('\n').count() + 1;
                    format!("scenario line {line}: {message}")
                }
                None => format!("scenario: {message}"),
            }
        })?;
        validate(raw)
    }

    /// The club's starters and relievers (indices into `pitchers`).
    pub fn club_staff(&self) -> (Vec<usize>, Vec<usize>) {
        let of = |role| {
            (0..self.pitchers.len())
                .filter(|&i| self.pitchers[i].role == role)
                .collect()
        };
        (of(Role::Starter), of(Role::Reliever))
    }
}

fn validate(raw: RawScenario) -> Result<Scenario, String> {
    let club = raw.club.name.trim().to_string();
    if club.is_empty() {
        return Err("scenario [club]: `name` is empty; give the club a name".into());
    }
    check_text("[club] name", &club)?;

    if raw.season.is_empty() {
        return Err("scenario: no [[season]] table; add one with year, games and start".into());
    }
    let mut seasons = Vec::new();
    for s in &raw.season {
        let at = format!("scenario [[season]] year = {}", s.year);
        if !(1900..=2999).contains(&s.year) {
            return Err(format!("{at}: the year must lie in 1900..2999"));
        }
        if !(1..=999).contains(&s.games) {
            return Err(format!("{at}: games = {} must lie in 1..999", s.games));
        }
        let start = Date::parse(s.start.trim()).ok_or_else(|| {
            format!(
                "{at}: start = \"{}\" is not a date; write it as YYYY-MM-DD",
                s.start
            )
        })?;
        if start.year != s.year {
            return Err(format!(
                "{at}: start = \"{start}\" lies in another year; start the season in {}",
                s.year
            ));
        }
        let season = Season {
            year: s.year,
            games: s.games,
            start,
        };
        let last = season.game_date(s.games - 1);
        if last.year != s.year {
            return Err(format!(
                "{at}: {} games from {start} (six games, then an off day) run to {last}, past the \
                 year's end; start earlier or play fewer games",
                s.games
            ));
        }
        if seasons.iter().any(|x: &Season| x.year == s.year) {
            return Err(format!(
                "{at}: the season is listed twice; keep one table per year"
            ));
        }
        seasons.push(season);
    }
    seasons.sort_by_key(|s| s.year);
    let years: Vec<i32> = seasons.iter().map(|s| s.year).collect();

    let b = &raw.batters;
    if b.pool < 9 {
        return Err(format!(
            "scenario [batters]: pool = {} is too small for a lineup; use at least 9",
            b.pool
        ));
    }
    for (key, v) in [("left", b.left), ("right", b.right), ("switch", b.switch)] {
        if !(v.is_finite() && (0.0..=1.0).contains(&v)) {
            return Err(format!(
                "scenario [batters]: {key} = {v} must be a share in 0..1"
            ));
        }
    }
    let total = b.left + b.right + b.switch;
    if (total - 1.0).abs() > 1e-6 {
        return Err(format!(
            "scenario [batters]: left + right + switch = {total}; they must add up to 1"
        ));
    }
    let batters = BatterPool {
        size: b.pool,
        left: b.left,
        right: b.right,
        switch: b.switch,
    };

    let league = match &raw.league {
        None => None,
        Some(l) => {
            if !(1..=99).contains(&l.teams) {
                return Err(format!(
                    "scenario [league]: teams = {} must lie in 1..99",
                    l.teams
                ));
            }
            if !(1..=20).contains(&l.starters) {
                return Err(format!(
                    "scenario [league]: starters = {} must lie in 1..20",
                    l.starters
                ));
            }
            if !(1..=40).contains(&l.relievers) {
                return Err(format!(
                    "scenario [league]: relievers = {} must lie in 1..40",
                    l.relievers
                ));
            }
            if !(l.planted_share.is_finite() && (0.0..=1.0).contains(&l.planted_share)) {
                return Err(format!(
                    "scenario [league]: planted_share = {} must be a share in 0..1",
                    l.planted_share
                ));
            }
            Some(League {
                teams: l.teams,
                starters: l.starters,
                relievers: l.relievers,
                planted_share: l.planted_share,
            })
        }
    };

    let mut pitchers: Vec<PitcherSpec> = Vec::new();
    for p in &raw.pitcher {
        let spec = validate_pitcher(p, &seasons, &years)?;
        if pitchers.iter().any(|q| q.name == spec.name) {
            return Err(format!(
                "scenario: pitcher \"{}\" is listed twice; give each pitcher his own name",
                spec.name
            ));
        }
        pitchers.push(spec);
    }
    if pitchers.is_empty() && league.is_none() {
        return Err("scenario: no pitchers; add [[pitcher]] tables or a [league] table".into());
    }
    if !pitchers.is_empty() {
        let has = |r| pitchers.iter().any(|p| p.role == r);
        if !has(Role::Starter) || !has(Role::Reliever) {
            return Err(format!(
                "scenario: the club ({club}) needs at least one starter and one reliever; \
                 set role = \"starter\" or \"reliever\" accordingly"
            ));
        }
    }

    let scenario = Scenario {
        club,
        seasons,
        batters,
        league,
        pitchers,
    };
    let mut labels: BTreeSet<String> = scenario
        .pitchers
        .iter()
        .flat_map(|p| p.labels(&scenario.seasons))
        .collect();
    if scenario.league.is_some() {
        labels.extend(PLAIN_LABELS.iter().map(|s| s.to_string()));
    }
    if labels.len() > MAX_PITCH_TYPES {
        return Err(format!(
            "scenario: {} distinct pitch labels; use at most {MAX_PITCH_TYPES}",
            labels.len()
        ));
    }
    Ok(scenario)
}

/// Labels and names go into CSV cells: keep them plain.
fn check_text(what: &str, text: &str) -> Result<(), String> {
    if text.is_empty() {
        return Err(format!("scenario: {what} is empty"));
    }
    if text.chars().any(|c| c == ',' || c == '"' || c.is_control()) || text.trim() != text {
        return Err(format!(
            "scenario: {what} \"{text}\" holds a comma, quote, control character or outer space; \
             use plain text"
        ));
    }
    Ok(())
}

fn parse_mix(at: &str, key: &str, raw: &BTreeMap<String, f64>) -> Result<Mix, String> {
    if raw.is_empty() {
        return Err(format!(
            "{at}: `{key}` is empty; list at least one pitch with its weight"
        ));
    }
    let mut out = Vec::new();
    for (label, &w) in raw {
        check_text(&format!("{at} pitch label"), label)?;
        if !(w.is_finite() && w > 0.0) {
            return Err(format!(
                "{at}: {key}.{label} = {w}; a weight must be a positive number (leave the pitch out instead of 0)"
            ));
        }
        out.push((label.clone(), w));
    }
    Ok(normalise(out))
}

fn validate_pitcher(
    p: &RawPitcher,
    seasons: &[Season],
    years: &[i32],
) -> Result<PitcherSpec, String> {
    let name = p.name.trim().to_string();
    check_text("pitcher name", &name)?;
    let at = format!("scenario pitcher \"{name}\"");
    let throws = Hand::parse(&p.throws)
        .ok_or_else(|| format!("{at}: throws = \"{}\"; write \"L\" or \"R\"", p.throws))?;
    let role = match p.role.trim() {
        "starter" => Role::Starter,
        "reliever" => Role::Reliever,
        other => {
            return Err(format!(
                "{at}: role = \"{other}\"; write \"starter\" or \"reliever\""
            ))
        }
    };
    let mix = parse_mix(&at, "mix", &p.mix)?;

    let mut changes: Vec<MixChange> = Vec::new();
    for c in &p.change {
        let cat = format!("{at}, change for season {}", c.season);
        if !years.contains(&c.season) {
            return Err(format!(
                "{cat}: {} is not a [[season]] of the scenario ({years:?}); use one of them",
                c.season
            ));
        }
        if changes.iter().any(|x| x.season == c.season) {
            return Err(format!(
                "{cat}: two changes in one season; merge them into one table"
            ));
        }
        let kind = match (&c.mix, &c.add) {
            (Some(m), None) => MixChangeKind::Replace(parse_mix(&cat, "mix", m)?),
            (None, Some(a)) => {
                if a.is_empty() {
                    return Err(format!("{cat}: `add` is empty; list the new pitch and its share"));
                }
                let mut added = Vec::new();
                for (label, &s) in a {
                    check_text(&format!("{cat} pitch label"), label)?;
                    if !(s.is_finite() && s > 0.0 && s < 1.0) {
                        return Err(format!(
                            "{cat}: add.{label} = {s}; the new pitch's share must lie strictly between 0 and 1"
                        ));
                    }
                    added.push((label.clone(), s));
                }
                let total: f64 = added.iter().map(|(_, s)| s).sum();
                if total >= 1.0 {
                    return Err(format!(
                        "{cat}: the added shares sum to {total}; leave room for his other pitches (below 1)"
                    ));
                }
                MixChangeKind::Add(added)
            }
            _ => {
                return Err(format!(
                    "{cat}: write exactly one of `mix = {{...}}` (a new mix) or `add = {{...}}` (new pitches)"
                ))
            }
        };
        changes.push(MixChange {
            season: c.season,
            kind,
        });
    }
    changes.sort_by_key(|c| c.season);

    let mut spec = PitcherSpec {
        name: name.clone(),
        throws,
        role,
        mix,
        changes,
        rules: Vec::new(),
    };
    // An added pitch must be new in that season.
    for c in &spec.changes {
        if let MixChangeKind::Add(added) = &c.kind {
            let before = spec.mix_in(c.season - 1);
            for (label, _) in added {
                if before.iter().any(|(l, _)| l == label) {
                    return Err(format!(
                        "{at}, change for season {}: add.{label}: he already throws it; \
                         use `mix = {{...}}` to change its weight",
                        c.season
                    ));
                }
            }
        }
    }
    let labels = spec.labels(seasons);

    for (i, r) in p.rule.iter().enumerate() {
        let rat = format!("{at}, rule {} (throw = \"{}\")", i + 1, r.throw);
        let throw = r.throw.trim().to_string();
        if !(r.rate.is_finite() && (0.0..=1.0).contains(&r.rate)) {
            return Err(format!(
                "{rat}: rate = {} must be a probability in 0..1",
                r.rate
            ));
        }
        for (key, y) in [("from", r.from), ("until", r.until)] {
            if let Some(y) = y {
                if !years.contains(&y) {
                    return Err(format!(
                        "{rat}: {key} = {y} is not a [[season]] of the scenario ({years:?}); use one of them"
                    ));
                }
            }
        }
        if let (Some(f), Some(u)) = (r.from, r.until) {
            if f > u {
                return Err(format!("{rat}: from = {f} is after until = {u}; swap them"));
            }
        }
        if r.when.is_empty() {
            return Err(format!(
                "{rat}: `when` is empty; name the situation, e.g. when = {{ count = \"0-2\" }}"
            ));
        }
        let mut when = BTreeMap::new();
        for (key, value) in &r.when {
            let factor = Factor::from_name(key.trim()).ok_or_else(|| {
                let names: Vec<&str> = Factor::ALL.iter().map(|f| f.name()).collect();
                format!(
                    "{rat}: unknown situation key `{key}`; use one of {}",
                    names.join(", ")
                )
            })?;
            let levels: Vec<String> = match value {
                RawLevels::One(v) => vec![v.text()],
                RawLevels::Many(vs) => vs.iter().map(|v| v.text()).collect(),
            };
            if levels.is_empty() {
                return Err(format!("{rat}: `{key}` lists no level; give at least one"));
            }
            for level in &levels {
                let ok = if factor == Factor::PrevPitch {
                    level == NO_PREV_PITCH || labels.contains(level)
                } else {
                    factor.fixed_levels().contains(&level.as_str())
                };
                if !ok {
                    let allowed: Vec<String> = if factor == Factor::PrevPitch {
                        std::iter::once(NO_PREV_PITCH.to_string())
                            .chain(labels.iter().cloned())
                            .collect()
                    } else {
                        factor
                            .fixed_levels()
                            .iter()
                            .map(|s| s.to_string())
                            .collect()
                    };
                    return Err(format!(
                        "{rat}: {key} = \"{level}\" is not a level; use one of {}",
                        allowed.join(", ")
                    ));
                }
            }
            let mut levels = levels;
            levels.sort();
            levels.dedup();
            when.insert(factor, levels);
        }
        let rule = Rule {
            when,
            throw: throw.clone(),
            rate: r.rate,
            from: r.from,
            until: r.until,
        };
        let mut active_any = false;
        for s in seasons.iter().filter(|s| rule.active_in(s.year)) {
            active_any = true;
            let mix = spec.mix_in(s.year);
            let names: Vec<&str> = mix.iter().map(|(l, _)| l.as_str()).collect();
            if !mix.iter().any(|(l, _)| *l == throw) {
                return Err(format!(
                    "{rat}: \"{throw}\" is not in his {} mix ({}); add it to his mix or fix the label",
                    s.year,
                    names.join(", ")
                ));
            }
            if r.rate < 1.0 && mix.len() < 2 {
                return Err(format!(
                    "{rat}: his {} mix holds only \"{throw}\", so nothing is left to throw the rest \
                     of the time; add a pitch or set rate = 1",
                    s.year
                ));
            }
        }
        if !active_any {
            return Err(format!(
                "{rat}: from/until leave no season in which it holds"
            ));
        }
        spec.rules.push(rule);
    }
    Ok(spec)
}

#[cfg(test)]
mod tests {
    use super::*;

    // Day numbers of the Unix epoch calendar (POSIX time / 86400), checked
    // against `date -u -d 2025-04-03 +%s` / 86400 = 20181.
    #[test]
    fn dates_round_trip() {
        assert_eq!(Date::parse("1970-01-01").unwrap().to_days(), 0);
        assert_eq!(Date::parse("2025-04-03").unwrap().to_days(), 20181);
        assert_eq!(Date::from_days(20181).to_string(), "2025-04-03");
        assert_eq!(
            Date::parse("2024-02-29").unwrap().add_days(1).to_string(),
            "2024-03-01"
        );
        assert!(Date::parse("2025-02-29").is_none());
        assert!(Date::parse("2025-4-03").is_none());
        for d in -800_000..800_000i64 {
            if d % 997 == 0 {
                assert_eq!(Date::from_days(d).to_days(), d);
            }
        }
    }

    #[test]
    fn add_keeps_proportions() {
        let spec = PitcherSpec {
            name: "x".into(),
            throws: Hand::R,
            role: Role::Starter,
            mix: normalise(vec![("fastball".into(), 60.0), ("slider".into(), 40.0)]),
            changes: vec![MixChange {
                season: 2026,
                kind: MixChangeKind::Add(vec![("cutter".into(), 0.25)]),
            }],
            rules: vec![],
        };
        let m = spec.mix_in(2026);
        assert_eq!(
            m.iter().map(|(l, _)| l.as_str()).collect::<Vec<_>>(),
            ["fastball", "cutter", "slider"]
        );
        assert!((m[0].1 - 0.45).abs() < 1e-12 && (m[1].1 - 0.25).abs() < 1e-12);
        assert!((spec.mix_in(2025)[0].1 - 0.6).abs() < 1e-12);
    }
}
