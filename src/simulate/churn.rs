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
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    rng.set_stream(CHURN_STREAM);
    // Arsenal changes of the pitchers generated with the teams.
    let first_generated_pitcher = specs
        .iter()
        .position(|(_, t)| *t >= first_generated)
        .unwrap_or(specs.len());
    for i in first_generated_pitcher..specs.len() {
        arsenal_changes(&mut rng, scenario, league, &mut specs[i].0);
    }
    let generated_teams = first_generated..teams.len();
    let mut churn = Churn { scenario, league, rng, names, specs, stints, teams, generated_teams };
    for si in 0..scenario.seasons.len() {
        churn.turnover(si);
        churn.injuries(si);
        churn.call_ups(si);
        churn.trades(si);
    }
}

/// The league's moves season by season, on one random stream.
struct Churn<'a> {
    scenario: &'a Scenario,
    league: &'a League,
    rng: ChaCha8Rng,
    names: &'a mut NameMaker,
    specs: &'a mut Vec<(PitcherSpec, usize)>,
    stints: &'a mut Vec<Vec<Stint>>,
    teams: &'a mut [Team],
    generated_teams: std::ops::Range<usize>,
}

impl Churn<'_> {
    /// The day number of game `k` of season `si`.
    fn day(&self, si: usize, k: u32) -> i64 {
        self.scenario.seasons[si].game_date(k).to_days()
    }

    /// The first and last day of season `si`.
    fn span(&self, si: usize) -> (i64, i64) {
        (self.day(si, 0), self.day(si, self.scenario.seasons[si].games - 1))
    }

    /// Whether `p` is on `team`'s staff the whole of season `si`.
    fn full_season(&self, si: usize, p: usize, team: usize) -> bool {
        let (first, last) = self.span(si);
        self.stints[p].iter().any(|s| s.team == team && s.from == first && s.until == last)
    }

    /// A new generated pitcher joining `team` in `role` for `stint`.
    fn add(&mut self, team: usize, role: Role, stint: Vec<Stint>) {
        let c = &self.league.churn;
        let mut spec = generated_pitcher(&mut self.rng, self.names, role, self.league.planted_share, c.full_arsenal);
        arsenal_changes(&mut self.rng, self.scenario, self.league, &mut spec);
        let idx = self.specs.len() as u32;
        self.specs.push((spec, team));
        self.stints.push(stint);
        match role {
            Role::Starter => self.teams[team].starters.push(idx),
            Role::Reliever => self.teams[team].relievers.push(idx),
        }
    }

    /// Turnover: a share of the team's pitchers leave before this season,
    /// each replaced by a newcomer in the same role.
    fn turnover(&mut self, si: usize) {
        let rate = self.league.churn.turnover;
        if si == 0 || rate <= 0.0 {
            return;
        }
        let (first, _) = self.span(si);
        let seasons = &self.scenario.seasons;
        for team in self.generated_teams.clone() {
            let members: Vec<(u32, Role)> = self.teams[team]
                .starters
                .iter()
                .map(|&p| (p, Role::Starter))
                .chain(self.teams[team].relievers.iter().map(|&p| (p, Role::Reliever)))
                .collect();
            for (p, role) in members {
                if !self.full_season(si, p as usize, team) || !self.rng.random_bool(rate) {
                    continue;
                }
                self.stints[p as usize].retain(|s| s.until < first);
                let later: Vec<Stint> = (si..seasons.len())
                    .map(|sj| Stint { team, from: self.day(sj, 0), until: self.day(sj, seasons[sj].games - 1) })
                    .collect();
                self.add(team, role, later);
            }
        }
    }

    /// Injuries: a starter's season ends early; a call-up starter takes his
    /// turn from the next game to the season's end.
    fn injuries(&mut self, si: usize) {
        let rate = self.league.churn.injuries;
        if rate <= 0.0 {
            return;
        }
        let (first, last) = self.span(si);
        let games = self.scenario.seasons[si].games;
        for team in self.generated_teams.clone() {
            for p in self.teams[team].starters.clone() {
                if !self.full_season(si, p as usize, team) || !self.rng.random_bool(rate) {
                    continue;
                }
                let g = self.rng.random_range((games / 5).max(1)..=(games * 4 / 5).max(1));
                if g >= games {
                    continue;
                }
                let until = self.day(si, g - 1);
                for s in self.stints[p as usize].iter_mut().filter(|s| s.from == first && s.team == team) {
                    s.until = until;
                }
                let stint = vec![Stint { team, from: self.day(si, g), until: last }];
                self.add(team, Role::Starter, stint);
            }
        }
    }

    /// Call-ups: relievers on the staff for two weeks to three months.
    fn call_ups(&mut self, si: usize) {
        let games = self.scenario.seasons[si].games;
        for team in self.generated_teams.clone() {
            for _ in 0..self.league.churn.call_ups {
                let len = self.rng.random_range(20..=90u32).min(games);
                let start = self.rng.random_range(0..=games - len);
                let stint = vec![Stint { team, from: self.day(si, start), until: self.day(si, start + len - 1) }];
                self.add(team, Role::Reliever, stint);
            }
        }
    }

    /// A full-season pitcher of `team` in `role` not yet moved, at random.
    fn pick(&mut self, si: usize, team: usize, role: Role, moved: &[bool]) -> Option<u32> {
        let list = match role {
            Role::Starter => &self.teams[team].starters,
            Role::Reliever => &self.teams[team].relievers,
        };
        let ok: Vec<u32> = list
            .iter()
            .copied()
            .filter(|&p| (p as usize) < moved.len() && !moved[p as usize] && self.full_season(si, p as usize, team))
            .collect();
        (!ok.is_empty()).then(|| ok[self.rng.random_range(0..ok.len())])
    }

    /// Trades: same-role pairs of full-season pitchers swapped between two
    /// clubs on a mid-season date; each stays with his new club.
    fn trades(&mut self, si: usize) {
        let rate = self.league.churn.trades;
        if rate <= 0.0 || self.generated_teams.len() < 2 {
            return;
        }
        let (first, last) = self.span(si);
        let games = self.scenario.seasons[si].games;
        let on: usize = (0..self.specs.len())
            .filter(|&p| self.stints[p].iter().any(|s| s.until >= first && s.from <= last))
            .count();
        let pairs = (rate * on as f64 / 2.0).round() as usize;
        let mut moved: Vec<bool> = vec![false; self.specs.len()];
        for _ in 0..pairs {
            let a = self.rng.random_range(self.generated_teams.clone());
            let b = self.rng.random_range(self.generated_teams.clone());
            if a == b {
                continue;
            }
            let role = if self.rng.random_bool(0.4) { Role::Starter } else { Role::Reliever };
            let x = self.pick(si, a, role, &moved);
            let y = self.pick(si, b, role, &moved);
            let (Some(x), Some(y)) = (x, y) else {
                continue;
            };
            let g = self.rng.random_range(games * 7 / 20..=(games * 3 / 4).max(games * 7 / 20));
            if g == 0 || g >= games {
                continue;
            }
            let until = self.day(si, g - 1);
            let from_day = self.day(si, g);
            for (p, from, to) in [(x, a, b), (y, b, a)] {
                moved[p as usize] = true;
                let st = &mut self.stints[p as usize];
                for s in st.iter_mut() {
                    if s.team == from && s.from == first {
                        s.until = until;
                    } else if s.team == from && s.from > last {
                        s.team = to; // later seasons with the new club
                    }
                }
                st.push(Stint { team: to, from: from_day, until: last });
                st.sort_by_key(|s| s.from);
                let list = match role {
                    Role::Starter => &mut self.teams[to].starters,
                    Role::Reliever => &mut self.teams[to].relievers,
                };
                if !list.contains(&p) {
                    list.push(p);
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
