//! Who plays: the club's staff, generated league staffs, the batter pool,
//! and each pitcher's season plan compiled for fast pitch choice.

use super::flight::{self, PitchProfile};
use super::scenario::{label_order, normalise, Mix, PitcherSpec, Role, Rule, Scenario};
use super::{BatSide, PlantedTell, SeasonMix, SimBatter, SimPitcher};
use crate::situations::levels::{Factor, Hand, NO_PREV_PITCH};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use std::collections::{BTreeMap, BTreeSet};

/// The roster stream; game streams are numbered from 0 by game index.
const ROSTER_STREAM: u64 = u64::MAX;

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
    /// The season mix without `throw`, renormalised.
    pub rest: Cdf,
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

/// What a pitcher throws in one season.
#[derive(Debug, Clone)]
pub(crate) struct SeasonPlan {
    pub mix: Cdf,
    pub rules: Vec<CompiledRule>,
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
    pub planted: Vec<PlantedTell>,
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
    if let Some(league) = &scenario.league {
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
                let spec = generated_pitcher(&mut rng, &mut names, role, league.planted_share);
                let idx = specs.len() as u32;
                if role == Role::Starter {
                    starters.push(idx)
                } else {
                    relievers.push(idx)
                }
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
    if several {
        for (i, team) in teams.iter_mut().enumerate() {
            team.code = Some(format!("T{:02}", i + 1));
        }
    }

    let labels: BTreeSet<(usize, String)> = specs
        .iter()
        .flat_map(|(s, _)| s.labels(&scenario.seasons))
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
        for season in &scenario.seasons {
            let mix = spec.mix_in(season.year);
            let coded: Vec<(u16, f64)> = mix.iter().map(|(l, s)| (type_index(l), *s)).collect();
            let mut rules = Vec::new();
            for rule in spec.rules.iter().filter(|r| r.active_in(season.year)) {
                let throw = type_index(&rule.throw);
                let rest: Vec<(u16, f64)> =
                    coded.iter().copied().filter(|(t, _)| *t != throw).collect();
                // With rate 1 the rest is never drawn; keep a valid table anyway.
                let rest = if rest.is_empty() {
                    vec![(throw, 1.0)]
                } else {
                    rest
                };
                rules.push(CompiledRule {
                    masks: masks(rule, &type_index),
                    throw,
                    rate: rule.rate,
                    rest: Cdf::new(&rest),
                });
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
            season_plans.push(SeasonPlan {
                mix: Cdf::new(&coded),
                rules,
            });
            mixes.push(SeasonMix {
                season: season.year,
                mix,
            });
        }
        plans.push(season_plans);
        // Spread of pitchers' velocity around the type average (common
        // practice: a staff's fastballs span roughly 89-98 mph).
        velo_offset.push((flight::normal(&mut rng) * 1.6) as f32);
        pitchers.push(SimPitcher {
            name: spec.name.clone(),
            throws: spec.throws,
            team: teams[*team].name.clone(),
            role: spec.role,
            mixes,
        });
    }

    let pool = &scenario.batters;
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
    let batters = sides
        .into_iter()
        .map(|bats| SimBatter {
            name: names.make(&mut rng),
            bats,
        })
        .collect();

    let profiles = pitch_types.iter().map(|l| flight::profile(l)).collect();
    Roster {
        pitchers,
        plans,
        velo_offset,
        teams,
        batters,
        pitch_types,
        profiles,
        planted,
    }
}

fn masks(rule: &Rule, type_index: &dyn Fn(&str) -> u16) -> [u64; 9] {
    let mut masks = [u64::MAX; 9];
    for (factor, levels) in &rule.when {
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

fn generated_pitcher(
    rng: &mut ChaCha8Rng,
    names: &mut NameMaker,
    role: Role,
    planted_share: f64,
) -> PitcherSpec {
    // About seven pitchers in ten throw right-handed (common practice).
    let throws = if rng.random_bool(0.72) {
        Hand::R
    } else {
        Hand::L
    };
    let shapes: &[&[(&str, f64)]] = if role == Role::Starter {
        &STARTER_MIXES
    } else {
        &RELIEVER_MIXES
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
        });
    }
    PitcherSpec {
        name: names.make(rng),
        throws,
        role,
        mix,
        changes: Vec::new(),
        rules,
    }
}

/// Invented names from syllables, never repeated within a scenario.
#[derive(Default)]
struct NameMaker {
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

    fn make(&mut self, rng: &mut ChaCha8Rng) -> String {
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
