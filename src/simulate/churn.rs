//! A generated league's churn: pitchers replaced between seasons, traded
//! in mid-season, called up for a few weeks, starters lost to injury, and
//! arsenals that move between seasons (a pitch added, one dropped, every
//! weight drifting). Each is off unless its `[league]` key is set.
//!
//! Shares are facts of the trade (common practice, measured on a real
//! two-season league log, no published source): of the pitchers with 300
//! pitches in a season about half reach it in both seasons, the rest arrive
//! in the second or leave after the first; about 1 pitcher-season in 9 is
//! split between two clubs; 22% of pitchers add a pitch between seasons
//! (5% or more after, under 1% before) and 12% drop one; the median total
//! variation of the mix between seasons is about 0.13.
//!
//! Every draw comes from the churn stream of the seed, so a scenario
//! without churn draws exactly what it drew before churn existed. The
//! club's own pitchers (team 0 when the scenario lists any) are never
//! touched: their stints and changes are the scenario's.

use super::flight;
use super::roster::{generated_pitcher, NameMaker, Stint, Team, CHURN_STREAM};
use super::scenario::{
    label_order, normalise, League, Mix, MixChange, MixChangeKind, PitcherSpec, Role, Scenario,
    PLAIN_LABELS,
};
use crate::domain::levels::Factor;
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

/// A trace pitch: under 1% of his pitches before he makes it a real one.
const TRACE_SHARE: f64 = 0.005;

#[allow(clippy::too_many_arguments)]
pub(crate) fn apply(
    scenario: &Scenario,
    league: &League,
    seed: u64,
    first_generated: usize,
    names: &mut NameMaker,
    specs: &mut Vec<(PitcherSpec, usize)>,
    stints: &mut Vec<Vec<Stint>>,
    teams: &mut [Team],
) {
    let c = &league.churn;
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    rng.set_stream(CHURN_STREAM);
    let seasons = &scenario.seasons;
    let day = |si: usize, k: u32| seasons[si].game_date(k).to_days();
    let generated_teams = first_generated..teams.len();

    // Arsenal changes of the pitchers generated with the teams.
    let first_generated_pitcher = specs
        .iter()
        .position(|(_, t)| *t >= first_generated)
        .unwrap_or(specs.len());
    for i in first_generated_pitcher..specs.len() {
        arsenal_changes(&mut rng, scenario, league, &mut specs[i].0);
    }

    let mut add = |rng: &mut ChaCha8Rng,
                   specs: &mut Vec<(PitcherSpec, usize)>,
                   stints: &mut Vec<Vec<Stint>>,
                   teams: &mut [Team],
                   team: usize,
                   role: Role,
                   stint: Vec<Stint>| {
        let mut spec = generated_pitcher(rng, names, role, league.planted_share, c.full_arsenal);
        arsenal_changes(rng, scenario, league, &mut spec);
        let idx = specs.len() as u32;
        specs.push((spec, team));
        stints.push(stint);
        match role {
            Role::Starter => teams[team].starters.push(idx),
            Role::Reliever => teams[team].relievers.push(idx),
        }
    };

    for si in 0..seasons.len() {
        let (first, last) = (day(si, 0), day(si, seasons[si].games - 1));
        let games = seasons[si].games;
        let full_season = |stints: &Vec<Vec<Stint>>, p: usize, team: usize| {
            stints[p]
                .iter()
                .any(|s| s.team == team && s.from == first && s.until == last)
        };

        // Turnover: a share of the team's pitchers leave before this season,
        // each replaced by a newcomer in the same role.
        if si > 0 && c.turnover > 0.0 {
            for team in generated_teams.clone() {
                let members: Vec<(u32, Role)> = teams[team]
                    .starters
                    .iter()
                    .map(|&p| (p, Role::Starter))
                    .chain(teams[team].relievers.iter().map(|&p| (p, Role::Reliever)))
                    .collect();
                for (p, role) in members {
                    if !full_season(stints, p as usize, team) || !rng.random_bool(c.turnover) {
                        continue;
                    }
                    stints[p as usize].retain(|s| s.until < first);
                    let later: Vec<Stint> = (si..seasons.len())
                        .map(|sj| Stint { team, from: day(sj, 0), until: day(sj, seasons[sj].games - 1) })
                        .collect();
                    add(&mut rng, specs, stints, teams, team, role, later);
                }
            }
        }

        // Injuries: a starter's season ends early; a call-up starter takes
        // his turn from the next game to the season's end.
        if c.injuries > 0.0 {
            for team in generated_teams.clone() {
                for p in teams[team].starters.clone() {
                    if !full_season(stints, p as usize, team) || !rng.random_bool(c.injuries) {
                        continue;
                    }
                    let g = rng.random_range((games / 5).max(1)..=(games * 4 / 5).max(1));
                    if g >= games {
                        continue;
                    }
                    for s in stints[p as usize].iter_mut().filter(|s| s.from == first && s.team == team) {
                        s.until = day(si, g - 1);
                    }
                    let stint = vec![Stint { team, from: day(si, g), until: last }];
                    add(&mut rng, specs, stints, teams, team, Role::Starter, stint);
                }
            }
        }

        // Call-ups: relievers on the staff for two weeks to three months.
        for team in generated_teams.clone() {
            for _ in 0..c.call_ups {
                let len = rng.random_range(20..=90u32).min(games);
                let start = rng.random_range(0..=games - len);
                let stint = vec![Stint { team, from: day(si, start), until: day(si, start + len - 1) }];
                add(&mut rng, specs, stints, teams, team, Role::Reliever, stint);
            }
        }

        // Trades: same-role pairs of full-season pitchers swapped between
        // two clubs on a mid-season date; each stays with his new club.
        if c.trades > 0.0 && generated_teams.len() >= 2 {
            let on: usize = (0..specs.len())
                .filter(|&p| stints[p].iter().any(|s| s.until >= first && s.from <= last))
                .count();
            let pairs = (c.trades * on as f64 / 2.0).round() as usize;
            let mut moved: Vec<bool> = vec![false; specs.len()];
            for _ in 0..pairs {
                let a = rng.random_range(generated_teams.clone());
                let b = rng.random_range(generated_teams.clone());
                if a == b {
                    continue;
                }
                let role = if rng.random_bool(0.4) { Role::Starter } else { Role::Reliever };
                let pick = |rng: &mut ChaCha8Rng, team: usize, moved: &[bool], stints: &Vec<Vec<Stint>>| {
                    let list = match role {
                        Role::Starter => &teams[team].starters,
                        Role::Reliever => &teams[team].relievers,
                    };
                    let ok: Vec<u32> = list
                        .iter()
                        .copied()
                        .filter(|&p| (p as usize) < moved.len() && !moved[p as usize] && full_season(stints, p as usize, team))
                        .collect();
                    (!ok.is_empty()).then(|| ok[rng.random_range(0..ok.len())])
                };
                let (Some(x), Some(y)) = (pick(&mut rng, a, &moved, stints), pick(&mut rng, b, &moved, stints)) else {
                    continue;
                };
                let g = rng.random_range(games * 7 / 20..=(games * 3 / 4).max(games * 7 / 20));
                if g == 0 || g >= games {
                    continue;
                }
                for (p, from, to) in [(x, a, b), (y, b, a)] {
                    moved[p as usize] = true;
                    let st = &mut stints[p as usize];
                    for s in st.iter_mut() {
                        if s.team == from && s.from == first {
                            s.until = day(si, g - 1);
                        } else if s.team == from && s.from > last {
                            s.team = to; // later seasons with the new club
                        }
                    }
                    st.push(Stint { team: to, from: day(si, g), until: last });
                    st.sort_by_key(|s| s.from);
                    let list = match role {
                        Role::Starter => &mut teams[to].starters,
                        Role::Reliever => &mut teams[to].relievers,
                    };
                    if !list.contains(&p) {
                        list.push(p);
                    }
                }
            }
        }
    }
}

/// Between consecutive seasons: every weight drifts (log-normal, sd
/// `drift`), and with their shares a pitch is added (at 5-20%; half the
/// time one he threw as a trace the season before) or one dropped (never
/// his most used, never one a planted rule names).
fn arsenal_changes(rng: &mut ChaCha8Rng, scenario: &Scenario, league: &League, spec: &mut PitcherSpec) {
    let c = &league.churn;
    if c.drift == 0.0 && c.adds == 0.0 && c.drops == 0.0 {
        return;
    }
    let named: Vec<String> = spec
        .rules
        .iter()
        .flat_map(|r| {
            let mut v = vec![r.throw.clone()];
            if let Some(l) = r.when.get(&Factor::PrevPitch) {
                v.extend(l.iter().cloned());
            }
            v
        })
        .collect();
    for si in 1..scenario.seasons.len() {
        let year = scenario.seasons[si].year;
        let before = spec.mix_in(year - 1);
        if c.drift > 0.0 {
            let drifted: Mix = normalise(
                before
                    .iter()
                    .map(|(l, s)| (l.clone(), s * (c.drift * flight::normal(rng)).exp()))
                    .collect(),
            );
            spec.changes.push(MixChange { season: year, kind: MixChangeKind::Replace(drifted) });
        }
        let u = rng.random::<f64>();
        if u < c.adds {
            let new: Vec<&str> = PLAIN_LABELS
                .iter()
                .copied()
                .filter(|l| !before.iter().any(|(b, s)| b == l && *s >= 0.01))
                .collect();
            if !new.is_empty() {
                let label = new[rng.random_range(0..new.len())].to_string();
                let share = ((0.05 + 0.15 * rng.random::<f64>()) * 100.0).round() / 100.0;
                if si == 1 && rng.random_bool(0.5) && !spec.mix.iter().any(|(l, _)| *l == label) {
                    let mut m = spec.mix.clone();
                    m.iter_mut().for_each(|(_, s)| *s *= 1.0 - TRACE_SHARE);
                    m.push((label.clone(), TRACE_SHARE));
                    m.sort_by_key(|a| label_order(&a.0));
                    spec.mix = m;
                }
                spec.changes.push(MixChange { season: year, kind: MixChangeKind::Add(vec![(label, share)]) });
            }
        } else if u < c.adds + c.drops {
            let now = spec.mix_in(year);
            if now.len() >= 3 {
                let top = now
                    .iter()
                    .max_by(|a, b| a.1.total_cmp(&b.1))
                    .map(|m| m.0.clone())
                    .unwrap_or_default();
                let can: Vec<String> = now
                    .iter()
                    .map(|(l, _)| l.clone())
                    .filter(|l| *l != top && !named.contains(l))
                    .collect();
                if !can.is_empty() {
                    let label = can[rng.random_range(0..can.len())].clone();
                    spec.changes.push(MixChange { season: year, kind: MixChangeKind::Drop(vec![label]) });
                }
            }
        }
    }
}
