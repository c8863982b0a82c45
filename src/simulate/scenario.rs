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
//! # The keys below are optional; each defaults to "off" (today's fixed staffs).
//! arsenal = "full"                  # "small" (2-4 pitch types, the default) or
//!                                   # "full" (3-6 types used at least 3%, mostly 4)
//! turnover = 0.33                   # share of a team's pitchers replaced between seasons
//! trades = 0.11                     # share of pitcher-seasons split between two clubs
//!                                   # (same-role pairs swapped on a mid-season date)
//! call_ups = 5                      # relievers per team-season called up for 2-12 weeks
//! injuries = 0.2                    # share of starter-seasons cut short, a call-up
//!                                   # starter taking the turn from the next day
//! adds = 0.22                       # share of pitchers adding a pitch between seasons
//!                                   # (5-20% after; some threw it under 1% before)
//! drops = 0.12                      # share of pitchers dropping a pitch between seasons
//! drift = 0.25                      # sd of the log-normal change of each mix weight
//!                                   # between seasons
//!
//! [habits]                          # optional: habits every pitcher shares
//! fastballs = ["fastball", "sinker"]            # labels that count as fastballs
//! fastball_share = { "0-0" = 0.52, "3-0" = 0.90 }  # the league's fastball share by
//!                                   # count; counts not listed keep their default
//! platoon = { slider = 0.28 }       # log tilt of a label toward same-side batters
//!                                   # (negative: toward opposite-side); unlisted
//!                                   # labels keep their default tilt
//! outcomes = "league"               # "league": ball/strike/foul/in-play shares of a
//!                                   # real league; "simple": the engine's plain table
//! zone_share = { "0-2" = 0.32 }     # share of pitches aimed inside the zone by count;
//!                                   # counts not listed keep their default
//!
//! [[pitcher]]                       # the club's own pitchers, any number
//! name = "Oren Vasquell"
//! throws = "R"                      # L or R
//! role = "starter"                  # starter or reliever
//! mix = { fastball = 55, slider = 25, changeup = 20 }   # weights, normalised to 1
//! seasons = [2026]                  # optional: the seasons he pitches for the club
//! joins = "2025-07-15"              # optional: first day he is on the staff
//! leaves = "2026-06-30"             # optional: last day he is on the staff
//! habits = false                    # optional: leave him out of the shared habits
//! drift = 0.20                      # optional: his most used pitch gains this much
//!                                   # share from each season's first game to its
//!                                   # last (his listed mix at mid-season; the rest
//!                                   # scaled to fit; pitches no rule decides)
//! outing_wobble = 0.4               # optional: each outing draws its own mix, every
//!                                   # weight times exp(N(0, wobble²)) (pitches no
//!                                   # rule decides)
//!
//!   [[pitcher.change]]              # a change of his mix from a season on
//!   season = 2026
//!   add = { cutter = 0.25 }         # a new pitch at that share; the others keep
//!                                   # their proportions in the remaining 0.75
//!   # mix = { fastball = 50, slider = 50 }   # or: a whole new mix
//!   # drop = ["curveball"]          # pitches he stops throwing (others renormalised)
//!   # relabel = { slider = "sweeper" }        # the log writes his slider as "sweeper"
//!   # split = { slider = { sweeper = 0.5 } }  # half his sliders are written "sweeper"
//!
//!   [[pitcher.rule]]                # a planted tell
//!   when = { count = ["0-2", "1-2"] }        # the situation (several keys: all must hold)
//!   throw = "slider"
//!   rate = 0.80                     # P(slider | situation); 0.0 plants an avoidance
//!   from = 2025                     # optional: first season the rule holds
//!   until = 2026                    # optional: last season the rule holds
//!   cost = 0.6                      # optional: batters hit the rule's pitch harder
//!                                   # in its situation: its swinging-strike chance
//!                                   # cut by this share, the rest put in play
//!
//!   [[pitcher.spot]]                # a planted location: where a pitch goes
//!   when = { count = ["0-2", "1-2"] }        # optional: the situation (left out: always,
//!                                   # a habit of the pitch rather than a tell)
//!   pitch = "slider"
//!   region = "chase low"            # a plate region (situations::regions), e.g.
//!                                   # "down and away", "up and in", "chase low"
//!   rate = 0.8                      # that pitch goes there this often when the
//!                                   # situation holds; otherwise it is placed as usual
//!   from = 2025                     # optional, as for rules
//!   until = 2026
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
//! are normalised to shares. `add` may name a pitch he threw at under 1% (a
//! trace pitch becoming a real one); it then takes the new share. `relabel`
//! and `split` change only how the log writes a pitch: mixes, rules and
//! `prev_pitch` conditions keep using the scenario's own label.
//!
//! Shared habits (`[habits]`). With the table present, every pitcher (but
//! those with `habits = false`) leans the way real pitchers do: his
//! fastball share moves with the count, on the logit scale, by the league's
//! move (the logit of `fastball_share` at that count minus the logit of its
//! average over a typical spread of counts), his fastballs and other
//! pitches each keeping their proportions; then each label is tilted by
//! `exp(+t)` against same-side batters and `exp(-t)` against opposite-side
//! batters and the mix renormalised. A rule still decides its situation
//! exactly as above; when it holds, the rest of the pitch is drawn from the
//! habit-adjusted mix. "Nothing planted" then means: only the shared
//! habits. The defaults are facts of the trade (common practice, measured
//! on a real league log, no published source): fastballs 52% of pitches at
//! 0-0, 40% at 0-2 and 1-2, 61% at 2-0, 68% at 3-1, 90% at 3-0 (the other
//! counts interpolated by us); sliders and sinkers about 21% and 20% of
//! pitches to same-side batters against 12% and 12% to opposite-side ones,
//! changeups and four-seams the other way.
//!
//! Staff changes. `seasons`, `joins` and `leaves` say when a pitcher is on
//! the club: a starter takes his turn in the rotation (the listed order,
//! skipping those not on the staff that day), a reliever is in the bullpen.
//! Every game date must find at least one starter and one reliever on the
//! staff.

use crate::domain::levels::{Factor, Hand, COUNTS, NO_PREV_PITCH};
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
    pub churn: LeagueChurn,
}

/// How much of the league's turnover a generated league carries.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct LeagueChurn {
    /// Generated pitchers carry 3-6 pitch types instead of 2-4.
    pub full_arsenal: bool,
    pub turnover: f64,
    pub trades: f64,
    pub call_ups: u32,
    pub injuries: f64,
    pub adds: f64,
    pub drops: f64,
    pub drift: f64,
}

/// Pitch outcome table of the engine.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Outcomes {
    /// The engine's plain per-count table (about 22% fouls, 9% whiffs).
    Simple,
    /// Rescaled to a real league's shares: ball 35.5%, called strike 16.4%,
    /// swinging strike 12.2%, foul 18.1%, in play 17.4%, hit by pitch 0.3%.
    League,
}

/// Habits every pitcher shares (see the module documentation).
#[derive(Debug, Clone, PartialEq)]
pub struct Habits {
    pub fastballs: Vec<String>,
    /// The league's fastball share at each count, by `count_index`.
    pub fastball_share: [f64; 12],
    /// Log tilt toward same-side batters, by label; unlisted labels 0.
    pub platoon: BTreeMap<String, f64>,
    pub outcomes: Outcomes,
    /// Share of pitches aimed inside the zone at each count, by `count_index`.
    pub zone_share: [f64; 12],
}

/// Default share of pitches aimed inside the zone by count, `count_index`
/// order. 32% at 0-2 and 62% at 3-1 are facts of the trade measured on a
/// real staff's log (common practice, no published source); the other
/// counts are our interpolations (fewer strikes ahead in the count, more
/// behind). Without `[habits]` every count aims at the zone 48% of the time.
pub const DEFAULT_ZONE_SHARE: [f64; 12] =
    [0.50, 0.43, 0.32, 0.54, 0.47, 0.37, 0.58, 0.53, 0.43, 0.64, 0.62, 0.54];

/// The zone share at every count without shared habits.
pub const PLAIN_ZONE_SHARE: f64 = 0.48;

/// Default fastball share by count, `count_index` order (0-0, 0-1, 0-2,
/// 1-0, ...). 0-0, 0-2, 1-2, 2-0, 3-0 and 3-1 are facts of the trade
/// measured on a real league log (common practice, no published source);
/// 0-1, 1-0, 1-1, 2-1, 2-2 and 3-2 are our interpolations between them.
pub const DEFAULT_FASTBALL_SHARE: [f64; 12] =
    [0.52, 0.45, 0.40, 0.57, 0.47, 0.40, 0.61, 0.55, 0.45, 0.90, 0.68, 0.56];

/// Typical share of pitches thrown at each count, `count_index` order
/// (common practice, round figures): the weights of the league's average
/// fastball share, the point a pitcher's listed mix is read at.
pub const TYPICAL_COUNT_SHARE: [f64; 12] =
    [0.26, 0.13, 0.06, 0.10, 0.10, 0.09, 0.04, 0.05, 0.07, 0.01, 0.02, 0.05];

/// Default platoon tilts (log scale, + toward same-side batters): sliders
/// and sinkers about 1.7 times as often to same-side batters as to
/// opposite-side ones (21% vs 12%, 20% vs 12%; common practice, measured on
/// a real league log), changeups, splitters and four-seams the other way.
pub const DEFAULT_PLATOON_TILT: [(&str, f64); 8] = [
    ("slider", 0.28),
    ("sweeper", 0.35),
    ("sinker", 0.30),
    ("cutter", 0.08),
    ("curveball", 0.0),
    ("fastball", -0.12),
    ("splitter", -0.35),
    ("changeup", -0.45),
];

impl Habits {
    pub fn defaults() -> Habits {
        Habits {
            fastballs: vec!["fastball".into(), "sinker".into()],
            fastball_share: DEFAULT_FASTBALL_SHARE,
            platoon: DEFAULT_PLATOON_TILT
                .iter()
                .map(|(l, t)| (l.to_string(), *t))
                .collect(),
            outcomes: Outcomes::League,
            zone_share: DEFAULT_ZONE_SHARE,
        }
    }

    /// The league's average fastball share over a typical spread of counts.
    pub fn average_fastball_share(&self) -> f64 {
        let w: f64 = TYPICAL_COUNT_SHARE.iter().sum();
        self.fastball_share
            .iter()
            .zip(TYPICAL_COUNT_SHARE)
            .map(|(f, c)| f * c)
            .sum::<f64>()
            / w
    }

    /// His mix at count `count` (a `count_index`) against a batter on the
    /// same side (`same`) or the opposite one: the count's fastball move,
    /// then the platoon tilt, renormalised. Labels keep the mix's order.
    pub fn apply(&self, mix: &Mix, count: usize, same: bool) -> Mix {
        let logit = |p: f64| (p / (1.0 - p)).ln();
        let f0: f64 = mix
            .iter()
            .filter(|(l, _)| self.fastballs.contains(l))
            .map(|(_, s)| s)
            .sum();
        let (fast_scale, other_scale) = if f0 > 0.0 && f0 < 1.0 {
            let z = logit(f0) + logit(self.fastball_share[count])
                - logit(self.average_fastball_share());
            let f = 1.0 / (1.0 + (-z).exp());
            (f / f0, (1.0 - f) / (1.0 - f0))
        } else {
            (1.0, 1.0)
        };
        let sign = if same { 1.0 } else { -1.0 };
        let tilted: Vec<(String, f64)> = mix
            .iter()
            .map(|(l, s)| {
                let scale = if self.fastballs.contains(l) {
                    fast_scale
                } else {
                    other_scale
                };
                let t = self.platoon.get(l).copied().unwrap_or(0.0);
                (l.clone(), s * scale * (sign * t).exp())
            })
            .collect();
        let total: f64 = tilted.iter().map(|(_, w)| w).sum();
        tilted.into_iter().map(|(l, w)| (l, w / total)).collect()
    }
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
    /// Pitches he stops throwing; the rest renormalised.
    Drop(Vec<String>),
    /// No change of the mix (only of how the log writes it).
    Keep,
}

/// How the log writes one of his pitches: written labels with their
/// shares (one label at share 1 for a relabel).
pub type Written = BTreeMap<String, Vec<(String, f64)>>;

/// A change of how the log writes his pitches, from `season` on.
#[derive(Debug, Clone, PartialEq)]
pub struct LabelChange {
    pub season: i32,
    pub written: Written,
}

/// A planted location (`[[pitcher.spot]]`): when its situation holds (an
/// empty `when` always does) and `pitch` comes, it goes to `region` with
/// probability `rate` (placed uniformly in the region's box); otherwise it
/// is placed as any other pitch of its type, which may land there too.
#[derive(Debug, Clone, PartialEq)]
pub struct Spot {
    pub when: BTreeMap<Factor, Vec<String>>,
    pub pitch: String,
    pub region: crate::situations::regions::Region,
    pub rate: f64,
    pub from: Option<i32>,
    pub until: Option<i32>,
}

impl Spot {
    pub fn active_in(&self, year: i32) -> bool {
        self.from.is_none_or(|f| year >= f) && self.until.is_none_or(|u| year <= u)
    }
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
    /// When the rule's situation holds and its pitch comes, batters hit it
    /// harder: its swinging-strike chance is cut by this share, the rest
    /// becoming balls in play (0: the pitch fares as any other).
    pub cost: f64,
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
    /// Planted locations, in the order listed (the first that holds decides).
    pub spots: Vec<Spot>,
    /// Sorted by season.
    pub label_changes: Vec<LabelChange>,
    /// The seasons he pitches for the club (`None`: all).
    pub seasons: Option<Vec<i32>>,
    /// First and last day on the staff.
    pub joins: Option<Date>,
    pub leaves: Option<Date>,
    /// Whether the shared habits apply to him.
    pub habits: bool,
    /// Share his most used pitch gains from a season's first game to its last.
    pub drift: f64,
    /// Log-scale sd of each weight's outing-to-outing wobble.
    pub outing_wobble: f64,
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
                    // A trace pitch taking a real share leaves the mix first.
                    let rest: Vec<(String, f64)> = mix
                        .iter()
                        .filter(|(l, _)| !added.iter().any(|(a, _)| a == l))
                        .cloned()
                        .collect();
                    let total: f64 = rest.iter().map(|(_, s)| s).sum();
                    let mut next: Vec<(String, f64)> = rest
                        .iter()
                        .map(|(l, s)| (l.clone(), s / total * kept))
                        .collect();
                    next.extend(added.iter().cloned());
                    next
                }
                MixChangeKind::Drop(dropped) => mix
                    .iter()
                    .filter(|(l, _)| !dropped.contains(l))
                    .cloned()
                    .collect(),
                MixChangeKind::Keep => mix,
            };
            mix = normalise(mix);
        }
        mix
    }

    /// His mix in season `year` at fraction `t` (0 first game, 1 last) of
    /// the season: with `drift`, his most used pitch's share moves from
    /// `share − drift/2` to `share + drift/2`, the others scaled to fit.
    pub fn mix_at(&self, year: i32, t: f64) -> Mix {
        let mix = self.mix_in(year);
        if self.drift == 0.0 {
            return mix;
        }
        let top = (0..mix.len()).fold(0, |b, i| if mix[i].1 > mix[b].1 { i } else { b });
        let s0 = mix[top].1;
        let st = s0 + self.drift * (t - 0.5);
        mix.iter()
            .enumerate()
            .map(|(i, (l, s))| (l.clone(), if i == top { st } else { s * (1.0 - st) / (1.0 - s0) }))
            .collect()
    }

    /// Every label he throws in some season.
    pub fn labels(&self, seasons: &[Season]) -> BTreeSet<String> {
        seasons
            .iter()
            .flat_map(|s| self.mix_in(s.year).into_iter().map(|(l, _)| l))
            .collect()
    }

    /// How the log writes his pitches in season `year` (pitches not listed
    /// are written as they are).
    pub fn written_in(&self, year: i32) -> Written {
        let mut out = Written::new();
        for c in self.label_changes.iter().filter(|c| c.season <= year) {
            for (k, v) in &c.written {
                out.insert(k.clone(), v.clone());
            }
        }
        out
    }

    /// Every label the log writes for him in some season.
    pub fn written_labels(&self, seasons: &[Season]) -> BTreeSet<String> {
        let mut out = BTreeSet::new();
        for s in seasons {
            let written = self.written_in(s.year);
            for (l, _) in self.mix_in(s.year) {
                match written.get(&l) {
                    Some(ws) => out.extend(ws.iter().map(|(w, _)| w.clone())),
                    None => {
                        out.insert(l);
                    }
                }
            }
        }
        out
    }

    /// A plain pitcher: on the club every season, shared habits on.
    pub fn plain(name: String, throws: Hand, role: Role, mix: Mix) -> PitcherSpec {
        PitcherSpec {
            name,
            throws,
            role,
            mix,
            changes: Vec::new(),
            rules: Vec::new(),
            spots: Vec::new(),
            label_changes: Vec::new(),
            seasons: None,
            joins: None,
            leaves: None,
            habits: true,
            drift: 0.0,
            outing_wobble: 0.0,
        }
    }

    /// Whether he is on the club on day `day` (days since 1970) of season
    /// `year`.
    pub fn on_staff(&self, year: i32, day: i64) -> bool {
        self.seasons.as_ref().is_none_or(|s| s.contains(&year))
            && self.joins.is_none_or(|d| day >= d.to_days())
            && self.leaves.is_none_or(|d| day <= d.to_days())
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
    pub habits: Option<Habits>,
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
    habits: Option<RawHabits>,
    #[serde(default)]
    pitcher: Vec<RawPitcher>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawHabits {
    fastballs: Option<Vec<String>>,
    fastball_share: Option<BTreeMap<String, f64>>,
    platoon: Option<BTreeMap<String, f64>>,
    outcomes: Option<String>,
    zone_share: Option<BTreeMap<String, f64>>,
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
    arsenal: Option<String>,
    #[serde(default)]
    turnover: f64,
    #[serde(default)]
    trades: f64,
    #[serde(default)]
    call_ups: u32,
    #[serde(default)]
    injuries: f64,
    #[serde(default)]
    adds: f64,
    #[serde(default)]
    drops: f64,
    #[serde(default)]
    drift: f64,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawPitcher {
    name: String,
    throws: String,
    role: String,
    mix: BTreeMap<String, f64>,
    seasons: Option<Vec<i32>>,
    joins: Option<String>,
    leaves: Option<String>,
    habits: Option<bool>,
    #[serde(default)]
    drift: f64,
    #[serde(default)]
    outing_wobble: f64,
    #[serde(default)]
    change: Vec<RawChange>,
    #[serde(default)]
    rule: Vec<RawRule>,
    #[serde(default)]
    spot: Vec<RawSpot>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSpot {
    #[serde(default)]
    when: BTreeMap<String, RawLevels>,
    pitch: String,
    region: String,
    rate: f64,
    from: Option<i32>,
    until: Option<i32>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawChange {
    season: i32,
    mix: Option<BTreeMap<String, f64>>,
    add: Option<BTreeMap<String, f64>>,
    drop: Option<Vec<String>>,
    relabel: Option<BTreeMap<String, String>>,
    split: Option<BTreeMap<String, BTreeMap<String, f64>>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawRule {
    when: BTreeMap<String, RawLevels>,
    throw: String,
    rate: f64,
    from: Option<i32>,
    until: Option<i32>,
    #[serde(default)]
    cost: f64,
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
    let seasons = validate_seasons(&raw.season)?;
    let years: Vec<i32> = seasons.iter().map(|s| s.year).collect();

    let batters = validate_batters(&raw.batters)?;

    let league = match &raw.league {
        None => None,
        Some(l) => Some(validate_league(l)?),
    };

    let habits = match &raw.habits {
        None => None,
        Some(h) => Some(validate_habits(h)?),
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

    check_staffed(&club, &seasons, &pitchers)?;

    let scenario = Scenario {
        club,
        seasons,
        batters,
        league,
        habits,
        pitchers,
    };
    let mut labels: BTreeSet<String> = scenario
        .pitchers
        .iter()
        .flat_map(|p| {
            let mut l = p.labels(&scenario.seasons);
            l.extend(p.written_labels(&scenario.seasons));
            l
        })
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

/// The `[[season]]` tables, in year order.
fn validate_seasons(raw: &[RawSeason]) -> Result<Vec<Season>, String> {
    let mut seasons = Vec::new();
    for s in raw {
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
    seasons.sort_by_key(|s| s.year);
    Ok(seasons)
}

/// The `[batters]` table: the pool and its sides.
fn validate_batters(b: &RawBatters) -> Result<BatterPool, String> {
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
    Ok(BatterPool {
        size: b.pool,
        left: b.left,
        right: b.right,
        switch: b.switch,
    })
}

/// The `[league]` table: clubs, staffs and the churn between seasons.
fn validate_league(l: &RawLeague) -> Result<League, String> {
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
    for (key, v) in [
        ("turnover", l.turnover),
        ("trades", l.trades),
        ("injuries", l.injuries),
        ("adds", l.adds),
        ("drops", l.drops),
    ] {
        if !(v.is_finite() && (0.0..=1.0).contains(&v)) {
            return Err(format!(
                "scenario [league]: {key} = {v} must be a share in 0..1"
            ));
        }
    }
    if !(l.drift.is_finite() && (0.0..=2.0).contains(&l.drift)) {
        return Err(format!(
            "scenario [league]: drift = {} must lie in 0..2 (a log-scale sd)",
            l.drift
        ));
    }
    if l.call_ups > 40 {
        return Err(format!(
            "scenario [league]: call_ups = {} must lie in 0..40",
            l.call_ups
        ));
    }
    let full_arsenal = match l.arsenal.as_deref().map(str::trim) {
        None | Some("small") => false,
        Some("full") => true,
        Some(other) => {
            return Err(format!(
                "scenario [league]: arsenal = \"{other}\"; write \"small\" or \"full\""
            ))
        }
    };
    Ok(League {
        teams: l.teams,
        starters: l.starters,
        relievers: l.relievers,
        planted_share: l.planted_share,
        churn: LeagueChurn {
            full_arsenal,
            turnover: l.turnover,
            trades: l.trades,
            call_ups: l.call_ups,
            injuries: l.injuries,
            adds: l.adds,
            drops: l.drops,
            drift: l.drift,
        },
    })
}

fn validate_habits(h: &RawHabits) -> Result<Habits, String> {
    let at = "scenario [habits]";
    let mut habits = Habits::defaults();
    if let Some(f) = &h.fastballs {
        for l in f {
            check_text(&format!("{at} fastballs label"), l)?;
        }
        habits.fastballs = f.clone();
    }
    if let Some(shares) = &h.fastball_share {
        for (count, &v) in shares {
            let i = COUNTS.iter().position(|c| *c == count.trim()).ok_or_else(|| {
                format!(
                    "{at}: fastball_share.\"{count}\" is not a count; use one of {}",
                    COUNTS.join(", ")
                )
            })?;
            if !(v.is_finite() && v > 0.0 && v < 1.0) {
                return Err(format!(
                    "{at}: fastball_share.\"{count}\" = {v} must be a share strictly between 0 and 1"
                ));
            }
            habits.fastball_share[i] = v;
        }
    }
    if let Some(tilts) = &h.platoon {
        for (label, &t) in tilts {
            check_text(&format!("{at} platoon label"), label)?;
            if !(t.is_finite() && t.abs() <= 3.0) {
                return Err(format!(
                    "{at}: platoon.{label} = {t} must be a log tilt in -3..3"
                ));
            }
            habits.platoon.insert(label.clone(), t);
        }
    }
    if let Some(shares) = &h.zone_share {
        for (count, &v) in shares {
            let i = COUNTS.iter().position(|c| *c == count.trim()).ok_or_else(|| {
                format!("{at}: zone_share.\"{count}\" is not a count; use one of {}", COUNTS.join(", "))
            })?;
            if !(v.is_finite() && (0.0..=1.0).contains(&v)) {
                return Err(format!("{at}: zone_share.\"{count}\" = {v} must be a share in 0..1"));
            }
            habits.zone_share[i] = v;
        }
    }
    habits.outcomes = match h.outcomes.as_deref().map(str::trim) {
        None | Some("league") => Outcomes::League,
        Some("simple") => Outcomes::Simple,
        Some(other) => {
            return Err(format!(
                "{at}: outcomes = \"{other}\"; write \"league\" or \"simple\""
            ))
        }
    };
    Ok(habits)
}

/// A rule's or spot's `when`: each key a factor of CONTRACT §2, each value
/// levels of it (`prev_pitch`: `none` or one of his `labels`).
fn parse_when(rat: &str, raw: &BTreeMap<String, RawLevels>, labels: &BTreeSet<String>) -> Result<BTreeMap<Factor, Vec<String>>, String> {
    let mut when = BTreeMap::new();
    for (key, value) in raw {
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
    Ok(when)
}

/// Every game date must find a starter and a reliever of the club on the staff.
fn check_staffed(club: &str, seasons: &[Season], pitchers: &[PitcherSpec]) -> Result<(), String> {
    if pitchers.is_empty() {
        return Ok(());
    }
    for season in seasons {
        for k in 0..season.games {
            let date = season.game_date(k);
            let day = date.to_days();
            for role in [Role::Starter, Role::Reliever] {
                if !pitchers
                    .iter()
                    .any(|p| p.role == role && p.on_staff(season.year, day))
                {
                    return Err(format!(
                        "scenario: on {date} the club ({club}) has no {} on the staff; \
                         widen a pitcher's seasons, joins or leaves",
                        role.as_str()
                    ));
                }
            }
        }
    }
    Ok(())
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

    let (changes, label_changes) = parse_changes(&at, &p.change, years)?;

    let day = |key: &str, text: &Option<String>| -> Result<Option<Date>, String> {
        match text {
            None => Ok(None),
            Some(t) => Date::parse(t.trim()).map(Some).ok_or_else(|| {
                format!("{at}: {key} = \"{t}\" is not a date; write it as YYYY-MM-DD")
            }),
        }
    };
    let joins = day("joins", &p.joins)?;
    let leaves = day("leaves", &p.leaves)?;
    if let (Some(j), Some(l)) = (joins, leaves) {
        if j > l {
            return Err(format!("{at}: joins = {j} is after leaves = {l}; swap them"));
        }
    }
    if let Some(ss) = &p.seasons {
        if ss.is_empty() {
            return Err(format!("{at}: `seasons` is empty; list the seasons he pitches for the club"));
        }
        for y in ss {
            if !years.contains(y) {
                return Err(format!(
                    "{at}: seasons lists {y}, not a [[season]] of the scenario ({years:?}); use one of them"
                ));
            }
        }
    }
    let mut spec = PitcherSpec {
        name: name.clone(),
        throws,
        role,
        mix,
        changes,
        rules: Vec::new(),
        spots: Vec::new(),
        label_changes,
        seasons: p.seasons.clone(),
        joins,
        leaves,
        habits: p.habits.unwrap_or(true),
        drift: p.drift,
        outing_wobble: p.outing_wobble,
    };
    if !(p.outing_wobble.is_finite() && (0.0..=2.0).contains(&p.outing_wobble)) {
        return Err(format!("{at}: outing_wobble = {} must lie in 0..2 (a log-scale sd)", p.outing_wobble));
    }
    if !(p.drift.is_finite() && p.drift.abs() < 1.0) {
        return Err(format!("{at}: drift = {} must lie strictly between -1 and 1", p.drift));
    }
    for s in seasons.iter().filter(|_| p.drift != 0.0) {
        let mix = spec.mix_in(s.year);
        let top = mix.iter().map(|m| m.1).fold(0.0, f64::max);
        if top + p.drift.abs() / 2.0 >= 1.0 || top - p.drift.abs() / 2.0 <= 0.0 {
            return Err(format!(
                "{at}: drift = {} takes his top pitch's {} share ({top:.2}) outside 0..1 within the season; use a smaller drift",
                p.drift, s.year
            ));
        }
    }
    if !seasons.iter().any(|s| {
        (0..s.games).any(|k| spec.on_staff(s.year, s.game_date(k).to_days()))
    }) {
        return Err(format!(
            "{at}: seasons, joins and leaves leave no game he could pitch in; widen them"
        ));
    }
    check_changes(&at, &spec)?;
    let labels = spec.labels(seasons);

    for (i, r) in p.rule.iter().enumerate() {
        let rule = parse_rule(&at, i, r, &spec, seasons, years, &labels)?;
        spec.rules.push(rule);
    }
    for (i, r) in p.spot.iter().enumerate() {
        spec.spots.push(parse_spot(&at, i, r, years, &labels)?);
    }
    Ok(spec)
}

/// A pitcher's `[[pitcher.change]]` tables: mix changes and label changes
/// (relabels, splits), each in season order.
fn parse_changes(at: &str, raw: &[RawChange], years: &[i32]) -> Result<(Vec<MixChange>, Vec<LabelChange>), String> {
    let mut changes: Vec<MixChange> = Vec::new();
    let mut label_changes: Vec<LabelChange> = Vec::new();
    for c in raw {
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
        if c.drop.is_some() && (c.mix.is_some() || c.add.is_some()) {
            return Err(format!(
                "{cat}: write `drop` in a change of its own season, or fold it into `mix = {{...}}`"
            ));
        }
        let kind = match (&c.mix, &c.add) {
            (None, None) => match &c.drop {
                Some(d) if !d.is_empty() => {
                    MixChangeKind::Drop(d.iter().map(|l| l.trim().to_string()).collect())
                }
                Some(_) => return Err(format!("{cat}: `drop` is empty; name the pitch he stops throwing")),
                None if c.relabel.is_some() || c.split.is_some() => MixChangeKind::Keep,
                None => {
                    return Err(format!(
                        "{cat}: the change changes nothing; write `mix`, `add`, `drop`, `relabel` or `split`"
                    ))
                }
            },
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
        let mut written = Written::new();
        for (from, to) in c.relabel.iter().flatten() {
            check_text(&format!("{cat} relabel"), to)?;
            written.insert(from.trim().to_string(), vec![(to.clone(), 1.0)]);
        }
        for (from, parts) in c.split.iter().flatten() {
            let total: f64 = parts.values().sum();
            if parts.is_empty()
                || parts.values().any(|v| !(v.is_finite() && *v > 0.0))
                || total >= 1.0
            {
                return Err(format!(
                    "{cat}: split.{from}: give each new label a share above 0, together below 1 \
                     (the rest keeps the label \"{from}\")"
                ));
            }
            if written.contains_key(from.trim()) {
                return Err(format!("{cat}: \"{from}\" is both relabelled and split; keep one"));
            }
            let mut ws = vec![(from.trim().to_string(), 1.0 - total)];
            for (to, share) in parts {
                check_text(&format!("{cat} split"), to)?;
                ws.push((to.clone(), *share));
            }
            written.insert(from.trim().to_string(), ws);
        }
        if !written.is_empty() {
            label_changes.push(LabelChange {
                season: c.season,
                written,
            });
        }
        changes.push(MixChange {
            season: c.season,
            kind,
        });
    }
    changes.sort_by_key(|c| c.season);
    label_changes.sort_by_key(|c| c.season);
    Ok((changes, label_changes))
}

/// An added pitch must be new in that season (or a trace pitch, under 1%,
/// becoming a real one); a dropped or relabelled one must be his.
fn check_changes(at: &str, spec: &PitcherSpec) -> Result<(), String> {
    for c in &spec.changes {
        let before = spec.mix_in(c.season - 1);
        match &c.kind {
            MixChangeKind::Add(added) => {
                for (label, _) in added {
                    if before.iter().any(|(l, s)| l == label && *s >= 0.01) {
                        return Err(format!(
                            "{at}, change for season {}: add.{label}: he already throws it; \
                             use `mix = {{...}}` to change its weight",
                            c.season
                        ));
                    }
                }
            }
            MixChangeKind::Drop(dropped) => {
                for label in dropped {
                    if !before.iter().any(|(l, _)| l == label) {
                        return Err(format!(
                            "{at}, change for season {}: drop: he does not throw \"{label}\" before then",
                            c.season
                        ));
                    }
                }
                if before.len() <= dropped.len() {
                    return Err(format!(
                        "{at}, change for season {}: drop leaves him no pitch; keep one",
                        c.season
                    ));
                }
            }
            _ => {}
        }
    }
    for c in &spec.label_changes {
        let mix = spec.mix_in(c.season);
        for label in c.written.keys() {
            if !mix.iter().any(|(l, _)| l == label) {
                return Err(format!(
                    "{at}, change for season {}: relabel/split of \"{label}\", which he does not throw then",
                    c.season
                ));
            }
        }
    }
    Ok(())
}

/// One `[[pitcher.rule]]`, checked against his mix in every season it holds.
fn parse_rule(
    at: &str,
    i: usize,
    r: &RawRule,
    spec: &PitcherSpec,
    seasons: &[Season],
    years: &[i32],
    labels: &BTreeSet<String>,
) -> Result<Rule, String> {
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
    let when = parse_when(&rat, &r.when, labels)?;
    if !(r.cost.is_finite() && (0.0..=1.0).contains(&r.cost)) {
        return Err(format!("{rat}: cost = {} must be a share in 0..1", r.cost));
    }
    let rule = Rule {
        when,
        throw: throw.clone(),
        rate: r.rate,
        from: r.from,
        until: r.until,
        cost: r.cost,
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
    Ok(rule)
}

/// One `[[pitcher.spot]]`: a planted location.
fn parse_spot(at: &str, i: usize, r: &RawSpot, years: &[i32], labels: &BTreeSet<String>) -> Result<Spot, String> {
    let sat = format!("{at}, spot {} (pitch = \"{}\")", i + 1, r.pitch);
    let pitch = r.pitch.trim().to_string();
    if !(r.rate.is_finite() && (0.0..=1.0).contains(&r.rate)) {
        return Err(format!("{sat}: rate = {} must be a probability in 0..1", r.rate));
    }
    let region = crate::situations::regions::Region::from_name(r.region.trim()).ok_or_else(|| {
        let names: Vec<&str> = crate::situations::regions::Region::ALL.iter().map(|g| g.name()).collect();
        format!("{sat}: region = \"{}\" is not a region; use one of {}", r.region, names.join(", "))
    })?;
    if !labels.contains(&pitch) {
        return Err(format!("{sat}: \"{pitch}\" is not one of his pitches; add it to his mix or fix the label"));
    }
    for (key, y) in [("from", r.from), ("until", r.until)] {
        if let Some(y) = y {
            if !years.contains(&y) {
                return Err(format!("{sat}: {key} = {y} is not a [[season]] of the scenario ({years:?}); use one of them"));
            }
        }
    }
    let when = parse_when(&sat, &r.when, labels)?;
    Ok(Spot { when, pitch, region, rate: r.rate, from: r.from, until: r.until })
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

    // Worked by hand (python3 arithmetic, in the commit that added it):
    // the typical-count average of the default table is 0.5017347; a
    // pitcher throwing fastballs half the time then throws them
    // logistic(0 + logit(0.90) - logit(0.5017347)) = 0.8993738 at 3-0, and
    // against a same-side batter (fastball x exp(-0.12), slider x
    // exp(+0.28), renormalised) 0.8569623 fastballs, 0.1430377 sliders.
    #[test]
    fn habits_move_the_mix_by_count_and_platoon() {
        let h = Habits::defaults();
        assert!((h.average_fastball_share() - 0.501_734_7).abs() < 1e-6);
        let mix = normalise(vec![("fastball".into(), 1.0), ("slider".into(), 1.0)]);
        let count_3_0 = 9;
        let same = h.apply(&mix, count_3_0, true);
        assert!((same[0].1 - 0.856_962_3).abs() < 1e-6, "{same:?}");
        assert!((same[1].1 - 0.143_037_7).abs() < 1e-6, "{same:?}");
        // With no fastball in the mix the count leaves it alone; labels
        // without a tilt do not move with the batter's side either.
        let no_fb = normalise(vec![("curveball".into(), 1.0), ("knuckler".into(), 1.0)]);
        assert_eq!(h.apply(&no_fb, count_3_0, true), no_fb);
    }

    #[test]
    fn trace_pitch_becomes_real_and_a_drop_renormalises() {
        let mut spec = PitcherSpec::plain(
            "x".into(),
            Hand::R,
            Role::Starter,
            normalise(vec![("fastball".into(), 59.5), ("slider".into(), 40.0), ("cutter".into(), 0.5)]),
        );
        spec.changes = vec![
            MixChange { season: 2026, kind: MixChangeKind::Add(vec![("cutter".into(), 0.2)]) },
            MixChange { season: 2027, kind: MixChangeKind::Drop(vec!["slider".into()]) },
        ];
        let m26 = spec.mix_in(2026);
        let share = |m: &Mix, l: &str| m.iter().find(|x| x.0 == l).map_or(0.0, |x| x.1);
        assert!((share(&m26, "cutter") - 0.2).abs() < 1e-12);
        // The others keep their proportions (59.5 : 40) in the remaining 0.8.
        assert!((share(&m26, "fastball") - 0.8 * 59.5 / 99.5).abs() < 1e-12);
        let m27 = spec.mix_in(2027);
        assert_eq!(m27.len(), 2);
        assert!((share(&m27, "cutter") - 0.2 / (0.2 + 0.8 * 59.5 / 99.5)).abs() < 1e-12);
    }

    #[test]
    fn add_keeps_proportions() {
        let mut spec = PitcherSpec::plain(
            "x".into(),
            Hand::R,
            Role::Starter,
            normalise(vec![("fastball".into(), 60.0), ("slider".into(), 40.0)]),
        );
        spec.changes = vec![MixChange {
            season: 2026,
            kind: MixChangeKind::Add(vec![("cutter".into(), 0.25)]),
        }];
        let m = spec.mix_in(2026);
        assert_eq!(
            m.iter().map(|(l, _)| l.as_str()).collect::<Vec<_>>(),
            ["fastball", "cutter", "slider"]
        );
        assert!((m[0].1 - 0.45).abs() < 1e-12 && (m[1].1 - 0.25).abs() < 1e-12);
        assert!((spec.mix_in(2025)[0].1 - 0.6).abs() < 1e-12);
    }
}
