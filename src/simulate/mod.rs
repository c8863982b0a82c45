//! Scenario-driven synthetic pitch logs with planted truth.
//!
//! A [`Scenario`] (TOML, see [`scenario`]) names a club's pitchers, their
//! pitch mixes and the tells planted in them; [`simulate`] plays the
//! schedule and returns a [`SimLog`]: one row per pitch our staff throws,
//! plus the tables the rows index into and the planted truth
//! ([`SimLog::planted`]) the audit can be checked against.
//!
//! The game model is simple on purpose (see `engine`): outcome
//! probabilities depend on the count only, never on the pitch type, so a
//! pitcher with no rule chooses every pitch independently of the game
//! situation and is a true null for the situation tests.
//!
//! Determinism: each game draws from its own ChaCha8 stream (seed, game
//! index), rosters from a stream of their own; games of one team in one
//! season are played in order (bullpen rest carries from game to game),
//! team-seasons run in parallel. The log is the same at any thread count.

mod churn;
mod engine;
mod flight;
mod roster;
pub mod scenario;
pub mod write;

pub use scenario::{
    BatterPool, Date, Habits, LabelChange, League, LeagueChurn, Mix, MixChange, MixChangeKind,
    Outcomes, PitcherSpec, Role, Rule, Scenario, Season,
};

use crate::domain::levels::{Factor, Hand};
use crate::domain::PitchResult;
use std::collections::BTreeMap;

/// The side a batter hits from. A switch hitter bats from the side opposite
/// the pitcher's hand, so the row's `bats` is always `L` or `R`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum BatSide {
    L,
    R,
    Switch,
}

impl BatSide {
    /// The side he bats from against a pitcher throwing with `throws`.
    pub fn against(self, throws: Hand) -> Hand {
        match (self, throws) {
            (BatSide::L, _) => Hand::L,
            (BatSide::R, _) => Hand::R,
            (BatSide::Switch, Hand::L) => Hand::R,
            (BatSide::Switch, Hand::R) => Hand::L,
        }
    }

    /// `L`, `R` or `S`.
    pub fn as_str(self) -> &'static str {
        match self {
            BatSide::L => "L",
            BatSide::R => "R",
            BatSide::Switch => "S",
        }
    }
}

/// One game our staff pitched.
#[derive(Debug, Clone, PartialEq)]
pub struct SimGame {
    /// `G2025-001`; with a league, `G2025-T07-001` (team 7's game 1).
    pub id: String,
    /// `YYYY-MM-DD`.
    pub date: String,
    pub season: i32,
    /// The team whose staff pitched it (the `team` column).
    pub team: String,
}

/// A pitcher's mix in one season.
#[derive(Debug, Clone, PartialEq)]
pub struct SeasonMix {
    pub season: i32,
    pub mix: Mix,
}

#[derive(Debug, Clone, PartialEq)]
pub struct SimPitcher {
    pub name: String,
    pub throws: Hand,
    /// His first team in the log (a traded pitcher pitches for two: see
    /// each game's `team`).
    pub team: String,
    pub role: Role,
    /// His mix in every season of the scenario (the truth the base rates
    /// are drawn from).
    pub mixes: Vec<SeasonMix>,
}

#[derive(Debug, Clone, PartialEq)]
pub struct SimBatter {
    pub name: String,
    pub bats: BatSide,
}

/// A rule in force for one pitcher in one season: the planted truth.
/// Listed in the pitcher's rule order; where two overlap, the earlier
/// one decides.
#[derive(Debug, Clone, PartialEq)]
pub struct PlantedTell {
    pub pitcher: u32,
    pub season: i32,
    pub when: BTreeMap<Factor, Vec<String>>,
    pub throw: String,
    pub rate: f64,
    /// Share of `throw` in his mix that season (what he throws when no rule holds).
    pub base_share: f64,
}

/// One pitch, as the state stood before it was thrown. Indices point into
/// the tables of the [`SimLog`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SimPitch {
    pub game: u32,
    pub pitcher: u32,
    pub batter: u32,
    pub speed_mph: f32,
    /// Catcher's view: feet from the plate's centre line, positive to the
    /// catcher's right (the first-base side).
    pub loc_side_ft: f32,
    /// Feet above the ground.
    pub loc_height_ft: f32,
    /// Plate appearance number within the game, from 1.
    pub pa: u16,
    pub pitch_type: u16,
    /// Our runs minus the opponent's.
    pub score_diff: i16,
    pub bats: Hand,
    pub inning: u8,
    pub outs: u8,
    pub balls: u8,
    pub strikes: u8,
    pub on_first: bool,
    pub on_second: bool,
    pub on_third: bool,
    /// Pitch number within the plate appearance, from 1.
    pub pitch_no: u8,
    pub result: PitchResult,
}

/// A simulated pitch log.
#[derive(Debug, Clone, PartialEq)]
pub struct SimLog {
    pub games: Vec<SimGame>,
    pub pitchers: Vec<SimPitcher>,
    pub batters: Vec<SimBatter>,
    pub pitch_types: Vec<String>,
    /// In game, plate appearance, pitch order.
    pub rows: Vec<SimPitch>,
    /// Every rule in force, by pitcher and season.
    pub planted: Vec<PlantedTell>,
}

/// Play the scenario's schedule with `seed`. Same scenario and seed: the
/// same log, at any thread count.
pub fn simulate(scenario: &Scenario, seed: u64) -> SimLog {
    use rayon::prelude::*;

    let roster = roster::build(scenario, seed);
    // One unit per (season, team): its games are played in order because
    // bullpen rest carries from one game to the next.
    let mut units = Vec::new();
    let mut first_game = 0u32;
    for (si, season) in scenario.seasons.iter().enumerate() {
        for team in 0..roster.teams.len() {
            units.push((si, team, first_game));
            first_game += season.games;
        }
    }
    let played: Vec<(Vec<SimGame>, Vec<SimPitch>)> = units
        .par_iter()
        .map(|&(si, team, first)| {
            engine::play_team_season(scenario, &roster, si, team, first, seed)
        })
        .collect();

    let n_rows = played.iter().map(|(_, r)| r.len()).sum();
    let mut games = Vec::with_capacity(first_game as usize);
    let mut rows = Vec::with_capacity(n_rows);
    for (g, r) in played {
        games.extend(g);
        rows.extend(r);
    }
    SimLog {
        games,
        pitchers: roster.pitchers,
        batters: roster.batters,
        pitch_types: roster.pitch_types,
        rows,
        planted: roster.planted,
    }
}
