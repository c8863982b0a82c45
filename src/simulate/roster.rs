//! Who plays: the club's staff, generated league staffs, the batter pool,
//! and each pitcher's season plan compiled for fast pitch choice.

use super::flight::{self, PitchProfile};
use super::scenario::{label_order, normalise, Habits, Mix, PitcherSpec, Role, Rule, Scenario, Season};
use super::{BatSide, PlantedTell, SeasonMix, SimBatter, SimPitcher};
use crate::domain::levels::{Factor, Hand, NO_PREV_PITCH};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use std::collections::{BTreeMap, BTreeSet};

/// The roster stream; game streams are numbered from 0 by game index.
const ROSTER_STREAM: u64 = u64::MAX;
/// The stream of a league's churn (turnover, trades, call-ups, injuries,
/// arsenal changes): its own, so a scenario without churn draws exactly
/// what it drew before churn existed.
pub(crate) const CHURN_STREAM: u64 = u64::MAX - 1;

/// A spell of a pitcher with one team: days since 1970, inclusive.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Stint {
    pub team: usize,
    pub from: i64,
    pub until: i64,
}

/// Code of "no previous pitch" in the `prev_pitch` slot of a situation.
pub(crate) const NO_PREV: u8 = 63;

pub(crate) struct Team {
    /// Shown in the `team` column.
    pub name: String,
    /// In game ids when there is more than one team (`T07`).
    pub code: Option<String>,
    /// The rotation, in order.
    pub starters: Vec<u32>,
    /// The first one closes.
    pub relievers: Vec<u32>,
}

/// Shares laid out for inverse-transform sampling.
#[derive(Debug, Clone)]
pub(crate) struct Cdf {
    types: Vec<u16>,
    cum: Vec<f64>,
}

impl Cdf {
    fn new(mix: &[(u16, f64)]) -> Cdf {
        let total: f64 = mix.iter().map(|(_, s)| s).sum();
        let mut acc = 0.0;
        let mut types = Vec::new();
        let mut cum = Vec::new();
        for &(t, s) in mix.iter().filter(|(_, s)| *s > 0.0) {
            acc += s / total;
            types.push(t);
            cum.push(acc);
        }
        // Guard against rounding: the last bucket closes at exactly 1.
        *cum.last_mut().expect("a mix holds a pitch") = 1.0;
        Cdf { types, cum }
    }

    /// `u` uniform on [0, 1).
    pub fn sample(&self, u: f64) -> u16 {
        let i = self
            .cum
            .iter()
            .position(|&c| u < c)
            .unwrap_or(self.cum.len() - 1);
        self.types[i]
    }
}

/// A rule compiled to bit masks: bit `code` of `masks[f]` is set when level
/// `code` of factor `f` (position in [`Factor::ALL`]) satisfies it.
#[derive(Debug, Clone)]
pub(crate) struct CompiledRule {
    masks: [u64; 9],
    pub throw: u16,
    pub rate: f64,
    /// The season mix without `throw`, renormalised (by count x platoon
    /// with shared habits, as [`SeasonPlan::mix`]).
    pub rest: Vec<Cdf>,
    pub cost: f64,
}

impl CompiledRule {
    #[inline]
    pub fn holds(&self, situation: &[u8; 9]) -> bool {
        self.masks
            .iter()
            .zip(situation)
            .all(|(m, &c)| m >> c & 1 == 1)
    }
}

/// A planted location compiled to bit masks (as [`CompiledRule`]).
#[derive(Debug, Clone)]
pub(crate) struct CompiledSpot {
    masks: [u64; 9],
    pub pitch: u16,
    pub region: crate::situations::regions::Region,
    pub rate: f64,
}

impl CompiledSpot {
    #[inline]
    pub fn holds(&self, situation: &[u8; 9], pitch: u16) -> bool {
        pitch == self.pitch && self.masks.iter().zip(situation).all(|(m, &c)| m >> c & 1 == 1)
    }
}

/// What a pitcher throws in one season.
#[derive(Debug, Clone)]
pub(crate) struct SeasonPlan {
    /// One table, or 24 with shared habits: by count x platoon
    /// ([`SeasonPlan::slot`]).
    pub mix: Vec<Cdf>,
    pub rules: Vec<CompiledRule>,
    /// Where his pitches go: planted locations, and the share aimed inside
    /// the zone by count (`count_index`).
    pub spots: Vec<CompiledSpot>,
    pub zone_share: [f64; 12],
    /// How the log writes each pitch type (by type code), where it differs
    /// from the type itself.
    pub written: Vec<Option<Cdf>>,
    /// A pitcher whose mix drifts through the season or wobbles from
    /// outing to outing: his spec and the habits he follows, to work out
    /// the mix of each game.
    pub drift: Option<(PitcherSpec, Option<Habits>, i32)>,
}

impl SeasonPlan {
    /// The drifting mix's table at fraction `t` of the season, each weight
    /// times this outing's wobble factor (by label).
    pub fn drift_table(&self, t: f64, wobble: &[(String, f64)], count: u8, platoon: u8, code: &dyn Fn(&str) -> u16) -> Option<Cdf> {
        let (spec, habits, year) = self.drift.as_ref()?;
        let mut mix = spec.mix_at(*year, t);
        if !wobble.is_empty() {
            for (l, w) in mix.iter_mut() {
                *w *= wobble.iter().find(|x| x.0 == *l).map_or(1.0, |x| x.1);
            }
            let total: f64 = mix.iter().map(|x| x.1).sum();
            mix.iter_mut().for_each(|x| x.1 /= total);
        }
        let mix = match habits {
            Some(h) => h.apply(&mix, count as usize, platoon == 0),
            None => mix,
        };
        let coded: Vec<(u16, f64)> = mix.iter().map(|(l, s)| (code(l), *s)).collect();
        Some(Cdf::new(&coded))
    }

    /// The table for this count (`count_index`) and platoon (`platoon_index`).
    #[inline]
    pub fn slot(tables: &[Cdf], count: u8, platoon: u8) -> &Cdf {
        if tables.len() == 1 {
            &tables[0]
        } else {
            &tables[count as usize * 2 + platoon as usize]
        }
    }
}

/// The tables of a season mix: one without habits, else one per count x
/// platoon (same side first, as `platoon_index`).
fn habit_tables(mix: &Mix, habits: Option<&Habits>, code: &dyn Fn(&str) -> u16) -> Vec<Cdf> {
    let coded = |m: &Mix| -> Vec<(u16, f64)> { m.iter().map(|(l, s)| (code(l), *s)).collect() };
    match habits {
        None => vec![Cdf::new(&coded(mix))],
        Some(h) => (0..12)
            .flat_map(|c| [true, false].map(|same| Cdf::new(&coded(&h.apply(mix, c, same)))))
            .collect(),
    }
}

pub(crate) struct Roster {
    pub pitchers: Vec<SimPitcher>,
    /// `plans[pitcher][season index]`.
    pub plans: Vec<Vec<SeasonPlan>>,
    /// Pitcher's velocity above or below the type's average, mph.
    pub velo_offset: Vec<f32>,
    pub teams: Vec<Team>,
    pub batters: Vec<SimBatter>,
    pub pitch_types: Vec<String>,
    pub profiles: Vec<PitchProfile>,
    /// Where each pitch type is aimed (by type code).
    pub aims: Vec<flight::Aim>,
    pub planted: Vec<PlantedTell>,
    /// When each pitcher is on which team.
    pub stints: Vec<Vec<Stint>>,
}

impl Roster {
    /// Whether `pitcher` is on `team`'s staff on `day`.
    #[inline]
    pub fn on_team(&self, pitcher: u32, team: usize, day: i64) -> bool {
        self.stints[pitcher as usize]
            .iter()
            .any(|s| s.team == team && s.from <= day && day <= s.until)
    }
}

pub(crate) fn build(scenario: &Scenario, seed: u64) -> Roster {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    rng.set_stream(ROSTER_STREAM);
    let mut names = NameMaker::default();

    let mut specs: Vec<(PitcherSpec, usize)> = Vec::new();
    let mut teams = Vec::new();
    let several = scenario.league.is_some();
    if !scenario.pitchers.is_empty() {
        let (starters, relievers) = scenario.club_staff();
        teams.push(Team {
            name: scenario.club.clone(),
            code: None,
            starters: starters.iter().map(|&i| i as u32).collect(),
            relievers: relievers.iter().map(|&i| i as u32).collect(),
        });
        for p in &scenario.pitchers {
            names.reserve(&p.name);
            specs.push((p.clone(), 0));
        }
    }
    // Club pitchers' stints from their seasons, joins and leaves.
    let mut stints: Vec<Vec<Stint>> = specs
        .iter()
        .map(|(p, team)| club_stints(scenario, p, *team))
        .collect();
    if let Some(league) = &scenario.league {
        league_staffs(scenario, league, &mut rng, &mut names, &mut specs, &mut stints, &mut teams);
    }
    if several {
        for (i, team) in teams.iter_mut().enumerate() {
            team.code = Some(format!("T{:02}", i + 1));
        }
    }
    if let Some(league) = &scenario.league {
        let first_generated = usize::from(!scenario.pitchers.is_empty());
        super::churn::apply(
            scenario,
            league,
            seed,
            first_generated,
            &mut names,
            &mut specs,
            &mut stints,
            &mut teams,
        );
    }

    let labels: BTreeSet<(usize, String)> = specs
        .iter()
        .flat_map(|(s, _)| {
            let mut l = s.labels(&scenario.seasons);
            l.extend(s.written_labels(&scenario.seasons));
            l
        })
        .map(|l| label_order(&l))
        .collect();
    let pitch_types: Vec<String> = labels.into_iter().map(|(_, l)| l).collect();
    let type_index = |label: &str| pitch_types.iter().position(|t| t == label).unwrap() as u16;

    let mut pitchers = Vec::new();
    let mut plans = Vec::new();
    let mut velo_offset = Vec::new();
    let mut planted = Vec::new();
    for (pi, (spec, team)) in specs.iter().enumerate() {
        let mut mixes = Vec::new();
        let mut season_plans = Vec::new();
        let habits = scenario.habits.as_ref().filter(|_| spec.habits);
        for season in &scenario.seasons {
            let (plan, mix) = season_plan(spec, season, habits, &pitch_types, &type_index, pi, &stints[pi], &mut planted);
            season_plans.push(plan);
            mixes.push(mix);
        }
        plans.push(season_plans);
        // Spread of pitchers' velocity around the type average (common
        // practice: a staff's fastballs span roughly 89-98 mph).
        velo_offset.push((flight::normal(&mut rng) * 1.6) as f32);
        pitchers.push(SimPitcher {
            name: spec.name.clone(),
            throws: spec.throws,
            team: teams[stints[pi]
                .iter()
                .min_by_key(|s| s.from)
                .map_or(*team, |s| s.team)]
            .name
            .clone(),
            role: spec.role,
            mixes,
        });
    }

    let batters = batter_pool(&scenario.batters, &mut rng, &mut names);

    let profiles = pitch_types.iter().map(|l| flight::profile(l)).collect();
    let aims = pitch_types.iter().map(|l| flight::aim(l)).collect();
    Roster {
        pitchers,
        plans,
        velo_offset,
        teams,
        batters,
        pitch_types,
        profiles,
        aims,
        planted,
        stints,
    }
}

/// The league's generated clubs: each club's starters and relievers, with
/// their stints.
fn league_staffs(
    scenario: &Scenario,
    league: &super::scenario::League,
    rng: &mut ChaCha8Rng,
    names: &mut NameMaker,
    specs: &mut Vec<(PitcherSpec, usize)>,
    stints: &mut Vec<Vec<Stint>>,
    teams: &mut Vec<Team>,
) {
    for _ in 0..league.teams {
        let team = teams.len();
        let mut starters = Vec::new();
        let mut relievers = Vec::new();
        for k in 0..league.starters + league.relievers {
            let role = if k < league.starters {
                Role::Starter
            } else {
                Role::Reliever
            };
            let spec = generated_pitcher(
                rng,
                names,
                role,
                league.planted_share,
                league.churn.full_arsenal,
            );
            let idx = specs.len() as u32;
            if role == Role::Starter {
                starters.push(idx)
            } else {
                relievers.push(idx)
            }
            stints.push(club_stints(scenario, &spec, team));
            specs.push((spec, team));
        }
        teams.push(Team {
            // Numbered like the team's code (T01, ...), the club first.
            name: format!("Team {:02}", team + 1),
            code: None,
            starters,
            relievers,
        });
    }
}

/// A pitcher's plan for one season (his mix as habit tables, compiled
/// rules and spots, label changes, drift), and his mix; his planted tells
/// of the season go to `planted` when he pitched in it.
#[allow(clippy::too_many_arguments)]
fn season_plan(
    spec: &PitcherSpec,
    season: &Season,
    habits: Option<&Habits>,
    pitch_types: &[String],
    type_index: &dyn Fn(&str) -> u16,
    pi: usize,
    stints: &[Stint],
    planted: &mut Vec<PlantedTell>,
) -> (SeasonPlan, SeasonMix) {
    let mix = spec.mix_in(season.year);
    let mut rules = Vec::new();
    for rule in spec.rules.iter().filter(|r| r.active_in(season.year)) {
        let throw = type_index(&rule.throw);
        let rest: Mix = mix.iter().filter(|(l, _)| *l != rule.throw).cloned().collect();
        // With rate 1 the rest is never drawn; keep a valid table anyway.
        let rest = if rest.is_empty() {
            vec![(rule.throw.clone(), 1.0)]
        } else {
            rest
        };
        rules.push(CompiledRule {
            masks: masks(rule, &type_index),
            throw,
            rate: rule.rate,
            rest: habit_tables(&rest, habits, &type_index),
            cost: rule.cost,
        });
        // The planted truth lists only seasons he pitched in.
        let (first, last) = (
            season.game_date(0).to_days(),
            season.game_date(season.games - 1).to_days(),
        );
        if !stints.iter().any(|s| s.from <= last && s.until >= first) {
            continue;
        }
        planted.push(PlantedTell {
            pitcher: pi as u32,
            season: season.year,
            when: rule.when.clone(),
            throw: rule.throw.clone(),
            rate: rule.rate,
            base_share: mix
                .iter()
                .find(|(l, _)| *l == rule.throw)
                .map_or(0.0, |m| m.1),
        });
    }
    let mut written: Vec<Option<Cdf>> = vec![None; pitch_types.len()];
    for (from, to) in spec.written_in(season.year) {
        let coded: Vec<(u16, f64)> = to.iter().map(|(l, s)| (type_index(l), *s)).collect();
        written[type_index(&from) as usize] = Some(Cdf::new(&coded));
    }
    let spots = spec
        .spots
        .iter()
        .filter(|s| s.active_in(season.year))
        .map(|s| CompiledSpot { masks: masks_of(&s.when, &type_index), pitch: type_index(&s.pitch), region: s.region, rate: s.rate })
        .collect();
    let plan = SeasonPlan {
        mix: habit_tables(&mix, habits, &type_index),
        rules,
        spots,
        zone_share: habits.map_or([super::scenario::PLAIN_ZONE_SHARE; 12], |h| h.zone_share),
        written,
        drift: (spec.drift != 0.0 || spec.outing_wobble > 0.0).then(|| (spec.clone(), habits.cloned(), season.year)),
    };
    (plan, SeasonMix { season: season.year, mix })
}

/// The batters: the pool's sides shuffled (so sides are not tied to name
/// order), each with a made-up name.
fn batter_pool(pool: &super::scenario::BatterPool, rng: &mut ChaCha8Rng, names: &mut NameMaker) -> Vec<SimBatter> {
    let n = pool.size as usize;
    let n_left = (pool.left * n as f64).round() as usize;
    let n_switch = ((pool.switch * n as f64).round() as usize).min(n - n_left.min(n));
    let mut sides: Vec<BatSide> = (0..n)
        .map(|i| {
            if i < n_left {
                BatSide::L
            } else if i < n_left + n_switch {
                BatSide::Switch
            } else {
                BatSide::R
            }
        })
        .collect();
    // Fisher-Yates, so sides are not tied to name order.
    for i in (1..n).rev() {
        let j = rng.random_range(0..=i);
        sides.swap(i, j);
    }
    sides
        .into_iter()
        .map(|bats| SimBatter {
            name: names.make(rng),
            bats,
        })
        .collect()
}

/// A club pitcher's stints on `team`: each season he is on the staff, from
/// the later of the season's first game and `joins` to the earlier of its
/// last game and `leaves`.
pub(crate) fn club_stints(scenario: &Scenario, spec: &PitcherSpec, team: usize) -> Vec<Stint> {
    let mut out = Vec::new();
    for season in &scenario.seasons {
        let days: Vec<i64> = (0..season.games)
            .map(|k| season.game_date(k).to_days())
            .filter(|&d| spec.on_staff(season.year, d))
            .collect();
        if let (Some(&from), Some(&until)) = (days.first(), days.last()) {
            out.push(Stint { team, from, until });
        }
    }
    out
}

fn masks(rule: &Rule, type_index: &dyn Fn(&str) -> u16) -> [u64; 9] {
    masks_of(&rule.when, type_index)
}

fn masks_of(when: &std::collections::BTreeMap<Factor, Vec<String>>, type_index: &dyn Fn(&str) -> u16) -> [u64; 9] {
    let mut masks = [u64::MAX; 9];
    for (factor, levels) in when {
        let slot = Factor::ALL.iter().position(|f| f == factor).unwrap();
        let mut m = 0u64;
        for level in levels {
            let code = if *factor == Factor::PrevPitch {
                if level == NO_PREV_PITCH {
                    NO_PREV as u64
                } else {
                    type_index(level) as u64
                }
            } else {
                factor
                    .fixed_levels()
                    .iter()
                    .position(|l| l == level)
                    .unwrap() as u64
            };
            m |= 1 << code;
        }
        masks[slot] = m;
    }
    masks
}

// ---------------------------------------------------------------------------
// Generated league pitchers.

/// Pitch-mix archetypes of generated pitchers (invented, common practice in
/// shape: starters carry three or four pitches, relievers two or three).
const STARTER_MIXES: [&[(&str, f64)]; 4] = [
    &[
        ("fastball", 0.50),
        ("slider", 0.20),
        ("curveball", 0.12),
        ("changeup", 0.18),
    ],
    &[
        ("sinker", 0.45),
        ("slider", 0.25),
        ("changeup", 0.18),
        ("cutter", 0.12),
    ],
    &[
        ("fastball", 0.48),
        ("splitter", 0.22),
        ("slider", 0.18),
        ("curveball", 0.12),
    ],
    &[
        ("fastball", 0.40),
        ("cutter", 0.25),
        ("curveball", 0.20),
        ("changeup", 0.15),
    ],
];
const RELIEVER_MIXES: [&[(&str, f64)]; 4] = [
    &[("fastball", 0.60), ("slider", 0.40)],
    &[("sinker", 0.55), ("slider", 0.30), ("changeup", 0.15)],
    &[("fastball", 0.55), ("splitter", 0.45)],
    &[("cutter", 0.50), ("curveball", 0.30), ("fastball", 0.20)],
];

/// Archetypes of a full arsenal (invented, common practice in shape: a
/// pitcher-season has 3-6 pitch types used at least 3% of the time, most
/// often 4; fastball and sinker together about half of all pitches).
const FULL_STARTER_MIXES: [&[(&str, f64)]; 6] = [
    &[("fastball", 0.44), ("sinker", 0.10), ("slider", 0.20), ("curveball", 0.10), ("changeup", 0.16)],
    &[("sinker", 0.48), ("cutter", 0.12), ("slider", 0.24), ("changeup", 0.16)],
    &[("fastball", 0.52), ("slider", 0.22), ("curveball", 0.12), ("changeup", 0.14)],
    &[("fastball", 0.46), ("splitter", 0.20), ("slider", 0.18), ("cutter", 0.10), ("curveball", 0.06)],
    &[("fastball", 0.36), ("sinker", 0.18), ("cutter", 0.16), ("curveball", 0.16), ("changeup", 0.14)],
    &[("sinker", 0.54), ("slider", 0.26), ("changeup", 0.20)],
];
const FULL_RELIEVER_MIXES: [&[(&str, f64)]; 6] = [
    &[("fastball", 0.58), ("slider", 0.32), ("changeup", 0.10)],
    &[("sinker", 0.50), ("slider", 0.28), ("changeup", 0.12), ("fastball", 0.10)],
    &[("fastball", 0.56), ("splitter", 0.28), ("slider", 0.16)],
    &[("cutter", 0.34), ("curveball", 0.22), ("fastball", 0.34), ("changeup", 0.10)],
    &[("fastball", 0.52), ("slider", 0.24), ("curveball", 0.12), ("changeup", 0.12)],
    &[("sinker", 0.54), ("sweeper", 0.30), ("changeup", 0.16)],
];

/// Situations a random rule may key on: factor and the levels that make it
/// hold. Each is common enough to give a few hundred pitches a season.
const RANDOM_SITUATIONS: [(Factor, &[&str]); 14] = [
    (Factor::Count, &["0-2", "1-2"]),
    (Factor::Count, &["0-0"]),
    (Factor::Count, &["2-0", "3-0", "3-1", "2-1"]),
    (Factor::Count, &["2-2", "3-2"]),
    (Factor::Platoon, &["same"]),
    (Factor::Platoon, &["opposite"]),
    (Factor::Bases, &["1--", "12-", "1-3", "123"]),
    (Factor::Bases, &["---"]),
    (Factor::TimesThrough, &["3+"]),
    (Factor::Outs, &["2"]),
    (Factor::Inning, &["1-3"]),
    (Factor::Score, &["behind"]),
    (Factor::Score, &["ahead"]),
    (Factor::PrevPitch, &[]), // levels: one of his own pitches, chosen below
];

pub(crate) fn generated_pitcher(
    rng: &mut ChaCha8Rng,
    names: &mut NameMaker,
    role: Role,
    planted_share: f64,
    full_arsenal: bool,
) -> PitcherSpec {
    // About seven pitchers in ten throw right-handed (common practice).
    let throws = if rng.random_bool(0.72) {
        Hand::R
    } else {
        Hand::L
    };
    let shapes: &[&[(&str, f64)]] = match (role, full_arsenal) {
        (Role::Starter, false) => &STARTER_MIXES,
        (Role::Reliever, false) => &RELIEVER_MIXES,
        (Role::Starter, true) => &FULL_STARTER_MIXES,
        (Role::Reliever, true) => &FULL_RELIEVER_MIXES,
    };
    let shape = shapes[rng.random_range(0..shapes.len())];
    // Jitter each weight by a log-normal factor so no two mixes are alike,
    // rounded to whole percent for a readable answer key.
    let jittered: Vec<(String, f64)> = shape
        .iter()
        .map(|(l, w)| {
            let f = (0.25 * flight::normal(rng)).exp();
            (l.to_string(), (w * f * 100.0).round().max(2.0))
        })
        .collect();
    let mix: Mix = normalise(jittered);
    let mut rules = Vec::new();
    if rng.random::<f64>() < planted_share {
        let (factor, levels) = RANDOM_SITUATIONS[rng.random_range(0..RANDOM_SITUATIONS.len())];
        let levels: Vec<String> = if factor == Factor::PrevPitch {
            vec![mix[rng.random_range(0..mix.len())].0.clone()]
        } else {
            levels.iter().map(|s| s.to_string()).collect()
        };
        let (throw, share) = mix[rng.random_range(0..mix.len())].clone();
        // A shift of 0.3 in the share, toward the middle: large enough to
        // be found in a season of a few hundred situation pitches.
        let rate = if share < 0.5 {
            share + 0.3
        } else {
            share - 0.3
        };
        let rate = (rate * 100.0).round() / 100.0;
        rules.push(Rule {
            when: BTreeMap::from([(factor, levels)]),
            throw,
            rate,
            from: None,
            until: None,
            cost: 0.0,
        });
    }
    let mut spec = PitcherSpec::plain(names.make(rng), throws, role, mix);
    spec.rules = rules;
    spec
}

/// Invented names from syllables, never repeated within a scenario.
#[derive(Default)]
pub(crate) struct NameMaker {
    taken: BTreeSet<String>,
}

const FIRST: [&str; 40] = [
    "Abel", "Bram", "Cato", "Dov", "Emrys", "Fitz", "Gideon", "Hale", "Ivo", "Jory", "Kip",
    "Lionel", "Milo", "Nash", "Orrin", "Pax", "Quill", "Rufus", "Soren", "Tobin", "Ulric", "Vance",
    "Wendell", "Yorick", "Zane", "Ansel", "Birk", "Cyrus", "Dashiell", "Eamon", "Fenn", "Garrick",
    "Hollis", "Idris", "Jonah", "Keir", "Lorne", "Marek", "Niall", "Oskar",
];
const SYL_A: [&str; 24] = [
    "Bar", "Cal", "Dun", "Fen", "Gar", "Hal", "Kes", "Lor", "Mar", "Nor", "Pel", "Quen", "Ros",
    "Sel", "Tam", "Vor", "Wex", "Yar", "Brin", "Cor", "Dras", "Grel", "Hask", "Jor",
];
const SYL_B: [&str; 8] = ["a", "e", "i", "o", "", "an", "er", "in"];
const SYL_C: [&str; 16] = [
    "by", "croft", "dale", "ford", "gan", "holt", "ley", "mont", "ner", "ridge", "sen", "ton",
    "vik", "well", "wick", "ster",
];

impl NameMaker {
    fn reserve(&mut self, name: &str) {
        self.taken.insert(name.to_string());
    }

    pub(crate) fn make(&mut self, rng: &mut ChaCha8Rng) -> String {
        loop {
            let pick = |rng: &mut ChaCha8Rng, list: &[&str]| {
                list[rng.random_range(0..list.len())].to_string()
            };
            let name = format!(
                "{} {}{}{}",
                pick(rng, &FIRST),
                pick(rng, &SYL_A),
                pick(rng, &SYL_B),
                pick(rng, &SYL_C)
            );
            if self.taken.insert(name.clone()) {
                return name;
            }
        }
    }
}
