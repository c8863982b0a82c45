//! The game model: our staff pitches every half-inning of the opponent's
//! offense; our own offense is a per-inning run distribution, so the score
//! moves both ways.
//!
//! Every probability here is common practice (round figures of the trade,
//! chosen so a season looks like a season: about 3.9 pitches per plate
//! appearance, a strikeout in a fifth to a quarter of them, a walk in about
//! one in twelve), not fitted to any data. Pitch outcomes depend on the
//! count only, never on the pitch type, so the planted truth is exactly
//! what the scenario says and a pitcher with no rule is a true null.
//!
//! Staff use: a five-man (or however many starters) rotation; a starter
//! goes until a pitch limit drawn per start (about 99, sd 6) or until he has
//! allowed five to seven runs; relievers take an inning each (sometimes
//! two in the middle innings), with a rest rule carried from game to game
//! (not after pitching both of the last two games, nor after 30 pitches
//! the day before). The first-listed reliever closes: he takes the ninth
//! or later with a lead of 0 to 3 runs when rested. From the tenth inning
//! each half starts with a runner on second (common practice since 2020).

use super::flight;
use super::roster::{Roster, SeasonPlan, Team, NO_PREV};
use super::scenario::{Outcomes, Scenario};
use super::{SimGame, SimPitch};
use crate::domain::PitchResult;
use crate::domain::levels::{
    bases_index, count_index, inning_index, platoon_index, score_index, times_through_index, Hand,
};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

/// Per-pitch probabilities by count (index [`count_index`]): ball, called
/// strike, swinging strike, foul, in play. Common practice in shape: more
/// takes for a strike at 3-0, more chases and waste pitches at 0-2, more
/// contact at full counts. Rows need not sum to 1 (normalised on use).
const BY_COUNT: [[f64; 5]; 12] = [
    [0.360, 0.275, 0.055, 0.170, 0.140], // 0-0
    [0.370, 0.150, 0.105, 0.215, 0.160], // 0-1
    [0.430, 0.060, 0.115, 0.240, 0.155], // 0-2
    [0.350, 0.205, 0.080, 0.195, 0.170], // 1-0
    [0.345, 0.145, 0.100, 0.225, 0.185], // 1-1
    [0.370, 0.065, 0.120, 0.265, 0.180], // 1-2
    [0.335, 0.215, 0.065, 0.195, 0.190], // 2-0
    [0.325, 0.150, 0.095, 0.235, 0.195], // 2-1
    [0.320, 0.070, 0.120, 0.285, 0.205], // 2-2
    [0.330, 0.540, 0.020, 0.060, 0.050], // 3-0
    [0.315, 0.210, 0.080, 0.210, 0.185], // 3-1
    [0.205, 0.070, 0.120, 0.345, 0.260], // 3-2
];

/// The league table: each kind of [`BY_COUNT`] scaled by these factors
/// (ball, called strike, swinging strike, foul, in play) so a season's
/// shares come out near a real league's (common practice, measured on a
/// real league log: ball 35.5%, called strike 16.4%, swinging strike 12.2%,
/// foul 18.1%, in play 17.4%, hit by pitch 0.3%). The factors were found
/// by solving the count chain for those shares (tests/simulate_facts.rs
/// checks the shares on simulated logs).
const LEAGUE_SCALE: [f64; 5] = [1.0, 0.94, 1.34, 0.82, 1.0];

/// Hit by pitch, per pitch (about 1 in 100 plate appearances; common practice).
const HBP: f64 = 0.0028;

/// Our runs in one half-inning: 0, 1, 2, ... (about 4.2 a game; common practice).
const OUR_RUNS: [f64; 7] = [0.745, 0.135, 0.065, 0.032, 0.014, 0.006, 0.003];

/// A game stops after this inning even if tied (never reached in practice).
const LAST_INNING: u8 = 30;

/// Play one team's games of one season, in order.
pub(crate) fn play_team_season(
    scenario: &Scenario,
    roster: &Roster,
    season_index: usize,
    team_index: usize,
    first_game: u32,
    seed: u64,
) -> (Vec<SimGame>, Vec<SimPitch>) {
    let season = &scenario.seasons[season_index];
    let team = &roster.teams[team_index];
    let outcomes = scenario
        .habits
        .as_ref()
        .map_or(Outcomes::Simple, |h| h.outcomes);
    let mut rotation = 0usize;
    // Pitches by each reliever in the last game and the one before.
    let mut rest = vec![[0u32; 2]; team.relievers.len()];
    let mut games = Vec::with_capacity(season.games as usize);
    let mut rows = Vec::with_capacity(season.games as usize * 160);
    for k in 0..season.games {
        let game = first_game + k;
        // One stream per game: the game's draws do not depend on how many
        // draws any other game made.
        let mut rng = ChaCha8Rng::seed_from_u64(seed);
        rng.set_stream(game as u64);
        // Where pitches go draws from a stream of its own, so placing them
        // changes nothing else in the log.
        let mut loc_rng = ChaCha8Rng::seed_from_u64(seed ^ LOCATION_SALT);
        loc_rng.set_stream(game as u64);
        let id = match &team.code {
            None => format!("G{}-{:03}", season.year, k + 1),
            Some(code) => format!("G{}-{}-{:03}", season.year, code, k + 1),
        };
        let date = season.game_date(k);
        let day = date.to_days();
        games.push(SimGame {
            id,
            date: date.to_string(),
            season: season.year,
            team: team.name.clone(),
        });
        // The next starter of the rotation on the staff today (the listed
        // order; with everyone on the staff, game k's starter is k mod n).
        let n = team.starters.len();
        let starter = (0..n)
            .map(|j| (rotation + j) % n)
            .find(|&j| roster.on_team(team.starters[j], team_index, day))
            .map(|j| {
                rotation = j + 1;
                team.starters[j]
            })
            // Validation keeps a starter on every club's staff; a league
            // team without one opens with a reliever.
            .or_else(|| {
                team.relievers
                    .iter()
                    .copied()
                    .find(|&p| roster.on_team(p, team_index, day))
            })
            .unwrap_or(team.starters[k as usize % n]);
        let on_staff: Vec<bool> = team
            .relievers
            .iter()
            .map(|&p| p != starter && roster.on_team(p, team_index, day))
            .collect();
        let mut g = Game::new(
            &mut rng,
            roster,
            team,
            season_index,
            game,
            starter,
            &rest,
            &mut rows,
            loc_rng,
        );
        g.on_staff = on_staff;
        g.outcomes = outcomes;
        g.season_t = k as f64 / (season.games.max(2) - 1) as f64;
        g.play(&mut rng, k % 2 == 0);
        let pitched = g.finish();
        for (r, p) in rest.iter_mut().zip(pitched) {
            *r = [p, r[0]];
        }
    }
    (games, rows)
}

/// The pitcher on the mound and his outing so far.
struct Arm {
    pitcher: u32,
    /// His place in the bullpen, for a reliever.
    bullpen_slot: Option<usize>,
    pitches: u32,
    runs: u32,
    /// Pulled once he reaches this many pitches.
    limit: u32,
    /// Pulled once he has allowed this many runs.
    shell: u32,
    /// Half-innings he has pitched in.
    halves: u32,
    /// Plate appearances against each lineup slot, this outing.
    times: [u8; 9],
    /// This outing's wobble factor by label (empty without wobble).
    wobble: Vec<(String, f64)>,
}

impl Arm {
    fn starter(rng: &mut ChaCha8Rng, pitcher: u32) -> Arm {
        let limit = (99.0 + 6.0 * flight::normal(rng))
            .round()
            .clamp(84.0, 114.0) as u32;
        let shell = rng.random_range(5..=7);
        Arm {
            pitcher,
            bullpen_slot: None,
            pitches: 0,
            runs: 0,
            limit,
            shell,
            halves: 0,
            times: [0; 9],
            wobble: Vec::new(),
        }
    }

    fn reliever(rng: &mut ChaCha8Rng, pitcher: u32, slot: usize) -> Arm {
        let limit = rng.random_range(28..=40);
        Arm {
            pitcher,
            bullpen_slot: Some(slot),
            pitches: 0,
            runs: 0,
            limit,
            shell: 3,
            halves: 0,
            times: [0; 9],
            wobble: Vec::new(),
        }
    }
}

enum PaEnd {
    Strikeout,
    Walk,
    HitByPitch,
    InPlay,
}

struct Game<'a> {
    roster: &'a Roster,
    team: &'a Team,
    season: usize,
    game: u32,
    rest: &'a [[u32; 2]],
    rows: &'a mut Vec<SimPitch>,
    lineup: [u32; 9],
    next_slot: usize,
    our: i32,
    their: i32,
    pa: u16,
    arm: Arm,
    /// Pitches by each reliever this game (0: did not pitch).
    bullpen_pitches: Vec<u32>,
    used: Vec<bool>,
    /// Relievers on the staff today (by bullpen slot).
    on_staff: Vec<bool>,
    outcomes: Outcomes,
    /// How far into the season this game is (0 first game, 1 last).
    season_t: f64,
    /// The game's stream for where pitches go.
    loc_rng: ChaCha8Rng,
}

/// Salt of the location streams' seed (the bytes of "location").
const LOCATION_SALT: u64 = 0x6c6f_6361_7469_6f6e;

impl<'a> Game<'a> {
    #[allow(clippy::too_many_arguments)]
    fn new(
        rng: &mut ChaCha8Rng,
        roster: &'a Roster,
        team: &'a Team,
        season: usize,
        game: u32,
        starter: u32,
        rest: &'a [[u32; 2]],
        rows: &'a mut Vec<SimPitch>,
        loc_rng: ChaCha8Rng,
    ) -> Game<'a> {
        // Nine distinct batters from the pool, drawn by rejection (the pool
        // is much larger than nine, so this is quick).
        let pool = roster.batters.len() as u32;
        let mut lineup = [0u32; 9];
        let mut filled = 0;
        while filled < 9 {
            let b = rng.random_range(0..pool);
            if !lineup[..filled].contains(&b) {
                lineup[filled] = b;
                filled += 1;
            }
        }
        let mut arm = Arm::starter(rng, starter);
        arm.wobble = outing_wobble(rng, roster, starter, season);
        let n = team.relievers.len();
        Game {
            roster,
            team,
            season,
            game,
            rest,
            rows,
            lineup,
            next_slot: 0,
            our: 0,
            their: 0,
            pa: 0,
            arm,
            bullpen_pitches: vec![0; n],
            used: vec![false; n],
            on_staff: vec![true; n],
            outcomes: Outcomes::Simple,
            season_t: 0.0,
            loc_rng,
        }
    }

    /// `home`: we pitch the top halves and bat last.
    fn play(&mut self, rng: &mut ChaCha8Rng, home: bool) {
        for inning in 1..=LAST_INNING {
            if home {
                self.pitch_half(rng, inning, false);
                if inning >= 9 && self.our > self.their {
                    break; // the bottom of the inning is not needed
                }
                self.our += our_runs(rng);
                if inning >= 9 && self.our != self.their {
                    break;
                }
            } else {
                self.our += our_runs(rng);
                if inning >= 9 && self.their > self.our {
                    break;
                }
                // From the ninth, the home side's half ends as soon as it leads.
                self.pitch_half(rng, inning, inning >= 9);
                if inning >= 9 && self.our != self.their {
                    break;
                }
            }
        }
    }

    /// Pitches by each reliever this game.
    fn finish(mut self) -> Vec<u32> {
        self.close_outing();
        self.bullpen_pitches
    }

    fn close_outing(&mut self) {
        if let Some(slot) = self.arm.bullpen_slot {
            self.bullpen_pitches[slot] += self.arm.pitches;
        }
    }

    fn lead(&self) -> i32 {
        self.our - self.their
    }

    /// The closer's spot: ninth or later, ahead by up to three or tied.
    fn closer_spot(&self, inning: u8) -> bool {
        inning >= 9 && (0..=3).contains(&self.lead())
    }

    fn fresh(&self, slot: usize) -> bool {
        let [last, before] = self.rest[slot];
        let pitched_twice = last > 0 && before > 0;
        let worked_hard = last >= 30;
        self.on_staff[slot] && !(self.used[slot] || pitched_twice || worked_hard)
    }

    /// The closer: the first-listed reliever on the staff today.
    fn closer(&self) -> usize {
        self.on_staff.iter().position(|&x| x).unwrap_or(0)
    }

    fn bring_reliever(&mut self, rng: &mut ChaCha8Rng, inning: u8) {
        let n = self.team.relievers.len();
        let closer = self.closer();
        let slot = if self.closer_spot(inning) && self.fresh(closer) {
            Some(closer)
        } else {
            let fresh: Vec<usize> = (0..n).filter(|&s| s != closer && self.fresh(s)).collect();
            let pool = if fresh.is_empty() {
                // Everyone tired: anyone on the staff not yet used this game.
                (0..n).filter(|&s| self.on_staff[s] && !self.used[s]).collect()
            } else {
                fresh
            };
            if pool.is_empty() {
                None
            } else {
                Some(pool[rng.random_range(0..pool.len())])
            }
        };
        if let Some(slot) = slot {
            self.close_outing();
            self.used[slot] = true;
            self.arm = Arm::reliever(rng, self.team.relievers[slot], slot);
            self.arm.wobble = outing_wobble(rng, self.roster, self.arm.pitcher, self.season);
        }
    }

    fn at_inning_start(&mut self, rng: &mut ChaCha8Rng, inning: u8) {
        if self.arm.halves == 0 {
            return; // the starter's first inning
        }
        let closer = self.closer();
        let is_closer = self.arm.bullpen_slot == Some(closer);
        let closer_due = self.closer_spot(inning) && !is_closer && self.fresh(closer);
        let pull = if self.arm.bullpen_slot.is_none() {
            // A starter near his limit does not begin another inning.
            closer_due || self.arm.pitches + 12 >= self.arm.limit || self.arm.runs >= self.arm.shell
        } else {
            let stay_chance = if inning <= 7 { 0.35 } else { 0.10 };
            let stays = !is_closer && self.arm.pitches < 20 && rng.random::<f64>() < stay_chance;
            closer_due || !stays
        };
        if pull {
            self.bring_reliever(rng, inning);
        }
    }

    fn between_batters(&mut self, rng: &mut ChaCha8Rng, inning: u8) {
        if self.arm.pitches >= self.arm.limit || self.arm.runs >= self.arm.shell {
            self.bring_reliever(rng, inning);
        }
    }

    fn pitch_half(&mut self, rng: &mut ChaCha8Rng, inning: u8, walk_off: bool) {
        let mut outs = 0u8;
        let mut bases = [false, inning >= 10, false];
        self.at_inning_start(rng, inning);
        let mut first = true;
        while outs < 3 {
            if walk_off && self.their > self.our {
                break;
            }
            if !first {
                self.between_batters(rng, inning);
            }
            first = false;
            self.plate_appearance(rng, inning, &mut outs, &mut bases);
        }
        self.arm.halves += 1;
    }

    fn plate_appearance(
        &mut self,
        rng: &mut ChaCha8Rng,
        inning: u8,
        outs: &mut u8,
        bases: &mut [bool; 3],
    ) {
        let roster = self.roster;
        let slot = self.next_slot;
        self.next_slot = (slot + 1) % 9;
        let batter = self.lineup[slot];
        self.arm.times[slot] = self.arm.times[slot].saturating_add(1);
        let pitcher = self.arm.pitcher;
        let throws = roster.pitchers[pitcher as usize].throws;
        let bats = roster.batters[batter as usize].bats.against(throws);
        let plan: &SeasonPlan = &roster.plans[pitcher as usize][self.season];
        let velo = roster.velo_offset[pitcher as usize];
        self.pa += 1;

        // Situation codes in `Factor::ALL` order: count, bats, platoon,
        // bases, outs, prev_pitch, times_through, inning, score.
        let mut situation = [
            0,
            (bats == Hand::R) as u8,
            platoon_index(throws, bats) as u8,
            bases_index(bases[0], bases[1], bases[2]) as u8,
            *outs,
            NO_PREV,
            times_through_index(self.arm.times[slot] as u32) as u8,
            inning_index(inning as u32) as u8,
            score_index(self.lead()) as u8,
        ];
        let score_diff = self.lead().clamp(i16::MIN as i32, i16::MAX as i32) as i16;
        let (mut balls, mut strikes, mut pitch_no) = (0u8, 0u8, 0u8);
        let end = loop {
            pitch_no = pitch_no.saturating_add(1);
            situation[0] = count_index(balls, strikes) as u8;
            let pitch_type = choose_pitch(rng, plan, &situation, self.season_t, &self.arm.wobble, &roster.pitch_types);
            // A planted cost: the first rule that holds decides, and only
            // when its own pitch came.
            let cost = plan
                .rules
                .iter()
                .find(|r| r.holds(&situation))
                .filter(|r| r.throw == pitch_type)
                .map_or(0.0, |r| r.cost);
            let result = draw_result(rng, balls, strikes, self.outcomes, cost);
            // How the log writes it (a relabelled or split pitch); one more
            // draw only for a split, so other logs are unchanged.
            let written = match &plan.written[pitch_type as usize] {
                None => pitch_type,
                Some(cdf) => cdf.sample(rng.random::<f64>()),
            };
            // The old placement's draws are kept (so speeds and every later
            // draw of the game stay as they were); where the pitch goes is
            // drawn from the game's location stream.
            let (speed, _, _) = flight::draw(
                rng,
                &roster.profiles[pitch_type as usize],
                velo,
                throws,
                bats,
                result,
            );
            let spot = plan.spots.iter().find(|s| s.holds(&situation, pitch_type)).map(|s| (s.region, s.rate));
            let zone = plan.zone_share[situation[0] as usize];
            let (side, height) = flight::place(&mut self.loc_rng, &roster.aims[pitch_type as usize], zone, spot, bats);
            self.rows.push(SimPitch {
                game: self.game,
                pitcher,
                batter,
                speed_mph: speed,
                loc_side_ft: side,
                loc_height_ft: height,
                pa: self.pa,
                pitch_type: written,
                score_diff,
                bats,
                inning,
                outs: *outs,
                balls,
                strikes,
                on_first: bases[0],
                on_second: bases[1],
                on_third: bases[2],
                pitch_no,
                result,
            });
            self.arm.pitches += 1;
            situation[5] = pitch_type as u8;
            match result {
                PitchResult::Ball => {
                    balls += 1;
                    if balls == 4 {
                        break PaEnd::Walk;
                    }
                }
                PitchResult::CalledStrike | PitchResult::SwingingStrike => {
                    strikes += 1;
                    if strikes == 3 {
                        break PaEnd::Strikeout;
                    }
                }
                // A foul with two strikes leaves the count alone.
                PitchResult::Foul => strikes = (strikes + 1).min(2),
                PitchResult::InPlay => break PaEnd::InPlay,
                // The engine never draws `other`.
                PitchResult::HitByPitch | PitchResult::Other => break PaEnd::HitByPitch,
            }
        };
        let runs = match end {
            PaEnd::Strikeout => {
                *outs += 1;
                0
            }
            PaEnd::Walk | PaEnd::HitByPitch => force_advance(bases),
            PaEnd::InPlay => ball_in_play(rng, outs, bases),
        };
        self.their += runs as i32;
        self.arm.runs += runs;
    }
}

/// The planted rules first (the first that holds decides), else the mix
/// (with shared habits, the mix of this count and platoon).
/// An outing's own mix: each weight of his season mix times
/// exp(wobble · Z), Z standard normal; nothing drawn for a pitcher without
/// wobble, so other logs are unchanged.
fn outing_wobble(rng: &mut ChaCha8Rng, roster: &Roster, pitcher: u32, season: usize) -> Vec<(String, f64)> {
    let Some((spec, _, year)) = roster.plans[pitcher as usize][season].drift.as_ref() else {
        return Vec::new();
    };
    if spec.outing_wobble == 0.0 {
        return Vec::new();
    }
    spec.mix_in(*year)
        .into_iter()
        .map(|(l, _)| (l, (spec.outing_wobble * flight::normal(rng)).exp()))
        .collect()
}

/// A drifting pitcher draws from the mix of this point of the season.
#[inline]
fn choose_pitch(rng: &mut ChaCha8Rng, plan: &SeasonPlan, situation: &[u8; 9], t: f64, wobble: &[(String, f64)], types: &[String]) -> u16 {
    let (count, platoon) = (situation[0], situation[2]);
    for rule in &plan.rules {
        if rule.holds(situation) {
            return if rng.random::<f64>() < rule.rate {
                rule.throw
            } else {
                SeasonPlan::slot(&rule.rest, count, platoon).sample(rng.random::<f64>())
            };
        }
    }
    if plan.drift.is_some() {
        let code = |l: &str| types.iter().position(|x| x == l).expect("a label of the roster") as u16;
        if let Some(table) = plan.drift_table(t, wobble, count, platoon, &code) {
            return table.sample(rng.random::<f64>());
        }
    }
    SeasonPlan::slot(&plan.mix, count, platoon).sample(rng.random::<f64>())
}

/// `cost`: the share of the swinging-strike chance turned into balls in play
/// (a pitch batters sit on); no extra draw, so logs without costs are
/// unchanged.
fn draw_result(rng: &mut ChaCha8Rng, balls: u8, strikes: u8, outcomes: Outcomes, cost: f64) -> PitchResult {
    let u = rng.random::<f64>();
    if u < HBP {
        return PitchResult::HitByPitch;
    }
    let mut row = BY_COUNT[count_index(balls, strikes)];
    if outcomes == Outcomes::League {
        for (p, f) in row.iter_mut().zip(LEAGUE_SCALE) {
            *p *= f;
        }
    }
    if cost > 0.0 {
        let moved = row[2] * cost;
        row[2] -= moved;
        row[4] += moved;
    }
    let row = &row;
    let mut v = (u - HBP) / (1.0 - HBP) * row.iter().sum::<f64>();
    const KINDS: [PitchResult; 5] = [
        PitchResult::Ball,
        PitchResult::CalledStrike,
        PitchResult::SwingingStrike,
        PitchResult::Foul,
        PitchResult::InPlay,
    ];
    for (p, kind) in row.iter().zip(KINDS) {
        if v < *p {
            return kind;
        }
        v -= p;
    }
    PitchResult::InPlay
}

fn our_runs(rng: &mut ChaCha8Rng) -> i32 {
    let mut u = rng.random::<f64>() * OUR_RUNS.iter().sum::<f64>();
    for (runs, p) in OUR_RUNS.iter().enumerate() {
        if u < *p {
            return runs as i32;
        }
        u -= p;
    }
    0
}

/// Walk or hit batsman: the batter to first, forced runners move up.
fn force_advance(bases: &mut [bool; 3]) -> u32 {
    let mut runs = 0;
    if bases[0] {
        if bases[1] {
            if bases[2] {
                runs = 1;
            }
            bases[2] = true;
        }
        bases[1] = true;
    }
    bases[0] = true;
    runs
}

/// A ball in play: outs about two in three, then singles, doubles, a few
/// triples and homers (common practice in shape). Runners move plausibly;
/// no run scores on a play that makes the third out.
fn ball_in_play(rng: &mut ChaCha8Rng, outs: &mut u8, bases: &mut [bool; 3]) -> u32 {
    let u = rng.random::<f64>();
    let on = |b: &[bool; 3]| b.iter().filter(|&&x| x).count() as u32;
    let mut runs = 0;
    if u < 0.665 {
        let kind = rng.random::<f64>();
        if kind < 0.45 {
            // Ground ball: sometimes a double play, else runners often move up.
            if bases[0] && *outs < 2 && rng.random::<f64>() < 0.25 {
                *outs += 2;
                bases[0] = false;
                if *outs < 3 {
                    runs += bases[2] as u32;
                    bases[2] = bases[1];
                    bases[1] = false;
                }
            } else {
                *outs += 1;
                if *outs < 3 && rng.random::<f64>() < 0.6 {
                    runs += bases[2] as u32;
                    bases[2] = bases[1];
                    bases[1] = bases[0];
                    bases[0] = false;
                }
            }
        } else if kind < 0.80 {
            // Fly ball: a runner on third often tags and scores.
            *outs += 1;
            if *outs < 3 && bases[2] && rng.random::<f64>() < 0.55 {
                runs += 1;
                bases[2] = false;
            }
            if *outs < 3 && bases[1] && !bases[2] && rng.random::<f64>() < 0.25 {
                bases[1] = false;
                bases[2] = true;
            }
        } else {
            *outs += 1; // line drive or pop-up caught: nobody moves
        }
    } else if u < 0.88 {
        // Single.
        let mut next = [true, false, false];
        runs += bases[2] as u32;
        if bases[1] {
            if rng.random::<f64>() < 0.6 {
                runs += 1;
            } else {
                next[2] = true;
            }
        }
        if bases[0] {
            if !next[2] && rng.random::<f64>() < 0.25 {
                next[2] = true;
            } else {
                next[1] = true;
            }
        }
        *bases = next;
    } else if u < 0.95 {
        // Double.
        let mut next = [false, true, false];
        runs += bases[2] as u32 + bases[1] as u32;
        if bases[0] {
            if rng.random::<f64>() < 0.4 {
                runs += 1;
            } else {
                next[2] = true;
            }
        }
        *bases = next;
    } else if u < 0.957 {
        runs += on(bases);
        *bases = [false, false, true];
    } else {
        runs += on(bases) + 1;
        *bases = [false; 3];
    }
    if *outs >= 3 {
        0
    } else {
        runs
    }
}
