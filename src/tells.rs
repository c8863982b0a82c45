//! Situation tells: for each pitcher, each situation (one factor level, or a
//! combination of two) and each of his pitch types, is his share of that
//! pitch in the situation different from his share outside it?
//!
//! Tells are found on the discovery rows (the training part of the
//! evaluation) and checked on the held-out rows, in two layers:
//!
//! - **sheet** tells (situations of count and batter side only: what every
//!   opponent charts): a one-sided Fisher exact test (hypergeometric tail)
//!   of his share there against his share elsewhere;
//! - **beyond** tells (any other situation): a one-sided stratified test
//!   with each game a stratum and each pitch weighted by his sheet's odds of
//!   the type in its count and batter side (`significance::cmh::OffsetStratum`),
//!   so the tell must add to what his sheet already predicts for those very
//!   pitches (`expected_share`) and cannot be an outing's own mix (a game's
//!   pitches are compared only with each other). A situation that hardly
//!   changes within an outing (the score or the inning for a reliever) has
//!   little to compare within a game, so such a tell must be strong to pass.
//!
//! Each layer has its own false-discovery control (see `control_fdr`).

use crate::evaluate::task::PitcherTask;
use crate::ingest::PitchLog;
use crate::settings::Settings;
use crate::significance::{fdr, hypergeom, wilson};

use crate::domain::levels::Factor;
use crate::situations::{Situations, UNKNOWN};
use serde::Serialize;
use std::collections::BTreeMap;

/// Which way the share moves in the situation.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, PartialOrd, Ord)]
#[serde(rename_all = "snake_case")]
pub enum Direction {
    More,
    Less,
}

impl Direction {
    pub fn as_str(self) -> &'static str {
        match self {
            Direction::More => "more",
            Direction::Less => "less",
        }
    }
}

/// Which layer a tell belongs to.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, PartialOrd, Ord, Hash)]
#[serde(rename_all = "snake_case")]
pub enum Layer {
    /// Count and batter side only: a cell of the sheet every opponent keeps.
    Sheet,
    /// Beyond the sheet: what only a good analyst would find.
    Beyond,
}

impl Layer {
    pub fn as_str(self) -> &'static str {
        match self {
            Layer::Sheet => "sheet",
            Layer::Beyond => "beyond",
        }
    }

    /// The layer of a situation built from `factors`.
    pub fn of(factors: &[Factor]) -> Layer {
        if factors.iter().all(|f| matches!(f, Factor::Count | Factor::Bats | Factor::Platoon)) {
            Layer::Sheet
        } else {
            Layer::Beyond
        }
    }
}

/// Whether the held-out pitches bear a tell out.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Verdict {
    /// The held-out share's 95% interval lies on the tell's side of what he
    /// does otherwise (beyond tells: of what his sheet predicts).
    Held,
    /// The interval excludes the discovery share and reaches back to his
    /// usual rate.
    Faded,
    /// Too few held-out pitches for the interval to say either.
    TooFew,
}

/// A situation: one or two (factor, level) pairs, in factor order.
pub type Situation = BTreeMap<Factor, String>;

/// One tested (situation, pitch type, direction).
#[derive(Debug, Clone, Serialize)]
pub struct TellTest {
    pub pitcher: String,
    #[serde(serialize_with = "ser_situation")]
    pub situation: Situation,
    pub pitch_type: String,
    pub direction: Direction,
    /// Discovery pitches in the situation, and of this type among them.
    pub n: usize,
    pub k: usize,
    pub share: f64,
    pub share_low: f64,
    pub share_high: f64,
    /// His share of the type outside the situation (discovery rows).
    pub baseline_share: f64,
    pub baseline_n: usize,
    /// The whole staff's share of the type in the same situation.
    pub staff_share: f64,
    pub p_value: f64,
    pub q_value: f64,
    pub held_out_n: usize,
    pub held_out_share: Option<f64>,
    /// His held-out share outside the situation (for "did it hold").
    pub held_out_baseline_share: Option<f64>,
    pub flagged: bool,
    /// q-value of "this pitcher has some tell" (his family, Simes + BH).
    pub family_q: f64,
    /// For a two-factor tell: the flagged one-factor tell it barely
    /// narrows (shares within the minimum effect), if any.
    #[serde(serialize_with = "ser_opt_situation")]
    pub within: Option<Situation>,
    /// For a one-factor tell beyond the sheet: the stronger flagged one
    /// (same pitch, same way) whose situation holds most of this one's
    /// pitches, and that share ([`mark_restatements`]): the same pitches
    /// told again, as innings 7-9 for a starter who reaches them only the
    /// third time through the order.
    #[serde(serialize_with = "ser_opt_situation", skip_serializing_if = "Option::is_none")]
    pub restates: Option<Situation>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub restates_share: Option<f64>,
    pub layer: Layer,
    /// Beyond tells: the share his sheet (his mix by count × batter side on
    /// the discovery rows) predicts for the very pitches in the situation.
    pub expected_share: Option<f64>,
    /// Wilson 95% interval of the held-out share.
    pub held_out_low: Option<f64>,
    pub held_out_high: Option<f64>,
    /// What the held-out pitches would show with no tell: his held-out share
    /// elsewhere (sheet tells), or what his held-out sheet predicts for them
    /// (beyond tells).
    pub held_out_expected_share: Option<f64>,
    pub verdict: Verdict,
    /// Does the tell cost him? Filled for flagged tells when the log has
    /// `result` (crate::outcomes).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub cost: Option<TellCost>,
    /// Flagged tells: the pitch's share in the same situation among the
    /// other pitchers of his throwing hand who have it (`league`), and the
    /// pitches it rests on.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub league_share: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub league_n: Option<u64>,
    /// Location tells (crate::location): the plate region whose share
    /// moves; `pitch_type` is then the pitch thrown there.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub region: Option<String>,
}

impl TellTest {
    /// Pitches the tell gives away: the shift times the pitches in the
    /// situation (how many more a hitter sitting on it would guess right).
    pub fn strength(&self) -> f64 {
        self.effect() * self.n as f64
    }

    /// share − what he does otherwise (sheet tells: his share elsewhere;
    /// beyond tells: what his sheet predicts), signed so a tell's effect is
    /// positive.
    pub fn effect(&self) -> f64 {
        let base = self.reference_share();
        match self.direction {
            Direction::More => self.share - base,
            Direction::Less => base - self.share,
        }
    }

    /// Pitches the tell gives away as it stands in the held-out games: as
    /// [`Self::strength`], with [`Self::effect_now`].
    pub fn strength_now(&self) -> f64 {
        self.effect_now() * self.n as f64
    }

    /// The effect as it stands in the held-out games: the training effect
    /// while it held (or too few pitches say), and for a tell that faded
    /// its held-out shift over what the held-out pitches would show with no
    /// tell, signed as [`Self::effect`] and at least 0.
    pub fn effect_now(&self) -> f64 {
        match (self.verdict, self.held_out_share, self.held_out_reference()) {
            (Verdict::Faded, Some(h), Some(e)) => match self.direction {
                Direction::More => h - e,
                Direction::Less => e - h,
            }
            .max(0.0),
            _ => self.effect(),
        }
    }

    /// He threw none of the tell's pitch in the held-out games, in the
    /// situation or out of it: the pitch is gone from his arsenal there.
    pub fn pitch_gone(&self) -> bool {
        self.held_out_n > 0 && self.held_out_share == Some(0.0) && self.held_out_reference() == Some(0.0)
    }

    /// What the tell is measured against in the held-out games: his sheet's
    /// prediction there (beyond tells), his share elsewhere (sheet tells).
    fn held_out_reference(&self) -> Option<f64> {
        self.held_out_expected_share.or(self.held_out_baseline_share)
    }

    /// The share a tell is measured against.
    pub fn reference_share(&self) -> f64 {
        match self.layer {
            Layer::Sheet => self.baseline_share,
            Layer::Beyond => self.expected_share.unwrap_or(self.baseline_share),
        }
    }
}

/// The verdict of the held-out pitches on a tell: held when the held-out
/// share's Wilson 95% interval lies wholly on the tell's side of the
/// held-out reference, faded when it lies wholly on the other side of the
/// discovery share and reaches the reference, else too few to tell.
pub fn verdict(direction: Direction, share: f64, k: u64, n: u64, reference: Option<f64>) -> Verdict {
    let Some(reference) = reference.filter(|_| n > 0) else { return Verdict::TooFew };
    let ci = wilson::wilson_95(k, n);
    match direction {
        Direction::More if ci.low > reference => Verdict::Held,
        Direction::Less if ci.high < reference => Verdict::Held,
        Direction::More if ci.high < share && ci.low <= reference => Verdict::Faded,
        Direction::Less if ci.low > share && ci.high >= reference => Verdict::Faded,
        _ => Verdict::TooFew,
    }
}

pub fn ser_situation<S: serde::Serializer>(s: &Situation, ser: S) -> Result<S::Ok, S::Error> {
    use serde::ser::SerializeMap;
    let mut m = ser.serialize_map(Some(s.len()))?;
    for (f, l) in s {
        m.serialize_entry(f.name(), l)?;
    }
    m.end()
}

fn ser_opt_situation<S: serde::Serializer>(s: &Option<Situation>, ser: S) -> Result<S::Ok, S::Error> {
    match s {
        None => ser.serialize_none(),
        Some(s) => ser_situation(s, ser),
    }
}

/// Situation in words for tables: `count 3-1, platoon same`.
pub fn situation_label(s: &Situation) -> String {
    s.iter().map(|(f, l)| format!("{} {}", f.name(), l)).collect::<Vec<_>>().join(", ")
}

/// The situations a run tests: every single factor (but `bats`, which for a
/// one-handed pitcher is the same split as `platoon`), then the pairs.
fn definitions(sit: &Situations, settings: &Settings) -> Vec<Vec<Factor>> {
    let mut defs: Vec<Vec<Factor>> = Vec::new();
    for fc in &sit.factors {
        if fc.factor == Factor::Bats && sit.has(Factor::Platoon) {
            continue;
        }
        defs.push(vec![fc.factor]);
    }
    for &(a, b) in settings.tells.pairs() {
        if sit.has(a) && sit.has(b) {
            defs.push(vec![a, b]);
        }
    }
    defs
}

/// Key of a row under a definition, or None when a level is unknown.
#[inline]
fn key(cols: &[&crate::situations::FactorColumn], row: usize) -> Option<usize> {
    let mut k = 0usize;
    for c in cols {
        let code = c.codes[row];
        if code == UNKNOWN {
            return None;
        }
        k = k * c.levels.len() + code as usize;
    }
    Some(k)
}

fn key_situation(cols: &[&crate::situations::FactorColumn], mut k: usize) -> Situation {
    let mut out = Situation::new();
    for c in cols.iter().rev() {
        let n = c.levels.len();
        out.insert(c.factor, c.levels[k % n].clone());
        k /= n;
    }
    out
}

/// What the tasks' labels are: each log row's label in the run's label set
/// (for the staff's shares; `NO_LABEL` for a row outside it) and the set's
/// names. A task's `class_types` index this set.
pub struct Labels<'a> {
    pub of_row: &'a [u16],
    pub names: &'a [String],
    /// Test the configured pairs of factors too (else single factors only).
    pub pairs: bool,
    /// Test "less" as well as "more" (else only a label thrown more).
    pub less: bool,
}

/// A row outside the label set.
pub const NO_LABEL: u16 = u16::MAX;

impl<'a> Labels<'a> {
    /// Pitch types, the audit's labels.
    pub fn pitch_types(log: &'a PitchLog) -> Labels<'a> {
        Labels { of_row: &log.pitch_type, names: &log.pitch_types, pairs: true, less: true }
    }
}

/// Run every tell test for the given pitchers (tasks), then the
/// false-discovery control of each layer.
pub fn find(log: &PitchLog, sit: &Situations, discovery: &[bool], tasks: &[&PitcherTask], settings: &Settings) -> Vec<TellTest> {
    let tests = find_in(log, sit, discovery, tasks, settings, &Labels::pitch_types(log));
    let mut tests = finish(tests, settings);
    mark_restatements(&mut tests, sit, tasks);
    tests
}

/// The share of a tell's pitches that must lie in a stronger tell's
/// situation for it to be that tell told again (a judgement: four in five).
pub const RESTATES_SHARE: f64 = 0.8;

/// Marks each flagged one-factor tell beyond the sheet most of whose
/// discovery pitches (at least [`RESTATES_SHARE`]) lie in the situation of
/// a stronger flagged one-factor tell beyond the sheet of the same
/// pitcher, pitch type and direction (stronger: more pitches given away,
/// as [`flagged_sorted`] orders them). Two such situations overlap in the
/// game itself (a starter's innings 7-9 are his third time through the
/// order), and the log cannot say which one he keys on: the report names
/// the stronger and says the other holds mostly the same pitches.
pub fn mark_restatements(tests: &mut [TellTest], sit: &Situations, tasks: &[&PitcherTask]) {
    let single_beyond = |t: &TellTest| t.flagged && t.layer == Layer::Beyond && t.situation.len() == 1 && t.within.is_none();
    let mut by_pitcher: BTreeMap<String, Vec<usize>> = BTreeMap::new();
    for (i, t) in tests.iter().enumerate().filter(|(_, t)| single_beyond(t)) {
        by_pitcher.entry(t.pitcher.clone()).or_default().push(i);
    }
    for task in tasks {
        let Some(mine) = by_pitcher.get(&task.name) else { continue };
        if mine.len() < 2 {
            continue;
        }
        let mut order = mine.clone();
        order.sort_by(|&i, &j| stronger_first(&tests[i], &tests[j]));
        // Each tell's situation on his discovery pitches.
        let inside: Vec<Vec<bool>> = order
            .iter()
            .map(|&i| {
                let codes = sit.level_codes(&tests[i].situation).unwrap_or_default();
                task.discovery.iter().map(|&d| sit.holds(&codes, task.rows[d as usize] as usize)).collect()
            })
            .collect();
        for (b, &j) in order.iter().enumerate() {
            let n_b = inside[b].iter().filter(|&&x| x).count();
            if n_b == 0 {
                continue;
            }
            for (a, &i) in order[..b].iter().enumerate() {
                let (ta, tb) = (&tests[i], &tests[j]);
                if ta.restates.is_some() || ta.pitch_type != tb.pitch_type || ta.direction != tb.direction || ta.situation == tb.situation {
                    continue;
                }
                let both = inside[a].iter().zip(&inside[b]).filter(|(x, y)| **x && **y).count();
                let share = both as f64 / n_b as f64;
                if share >= RESTATES_SHARE {
                    let s = tests[i].situation.clone();
                    tests[j].restates = Some(s);
                    tests[j].restates_share = Some(share);
                    break;
                }
            }
        }
    }
}

/// Every tell test of the tasks, whose labels are `labels`, unflagged
/// (q-values left at 1): [`finish`] controls the false discoveries.
pub fn find_in(
    log: &PitchLog,
    sit: &Situations,
    discovery: &[bool],
    tasks: &[&PitcherTask],
    settings: &Settings,
    labels: &Labels,
) -> Vec<TellTest> {
    let mut defs = definitions(sit, settings);
    if !labels.pairs {
        defs.retain(|d| d.len() == 1);
    }
    let n_types = labels.names.len();
    // Staff: the pitcher's team when the log has one, else the whole log.
    let team_of_row = |r: usize| -> u32 { log.team.as_ref().and_then(|t| t[r]).map(|t| t + 1).unwrap_or(0) };
    let n_teams = log.teams.len() + 1;
    let mut tests: Vec<TellTest> = Vec::new();
    for def in &defs {
        let cols: Vec<&crate::situations::FactorColumn> = def.iter().map(|f| sit.get(*f).unwrap()).collect();
        let n_keys: usize = cols.iter().map(|c| c.levels.len()).product();
        // Staff counts per (team, key, type) over discovery rows of all pitchers.
        let mut staff = vec![0u32; n_teams * n_keys * n_types];
        let mut staff_n = vec![0u32; n_teams * n_keys];
        for r in 0..log.len() {
            if !discovery[r] {
                continue;
            }
            let label = labels.of_row[r];
            if label == NO_LABEL {
                continue;
            }
            if let Some(k) = key(&cols, r) {
                let t = team_of_row(r) as usize;
                staff[(t * n_keys + k) * n_types + label as usize] += 1;
                staff_n[t * n_keys + k] += 1;
            }
        }
        let binary = def.len() == 1 && cols[0].levels.len() == 2;
        let layer = Layer::of(def);
        for task in tasks {
            if layer == Layer::Beyond {
                beyond_tests(labels, &cols, task, settings, &mut tests, &staff, &staff_n, n_keys, team_of_row);
                continue;
            }
            let kc = task.n_classes;
            let mut disc = vec![0u32; n_keys * kc];
            let mut disc_n = vec![0u32; n_keys];
            let mut total = vec![0u32; kc];
            for &i in &task.discovery {
                let r = task.rows[i as usize] as usize;
                let y = task.labels[i as usize] as usize;
                total[y] += 1;
                if let Some(k) = key(&cols, r) {
                    disc[k * kc + y] += 1;
                    disc_n[k] += 1;
                }
            }
            let big_n: u32 = total.iter().sum();
            let mut held = vec![0u32; n_keys * kc];
            let mut held_n = vec![0u32; n_keys];
            let mut held_total = vec![0u32; kc];
            for &i in &task.held_out {
                let r = task.rows[i as usize] as usize;
                let y = task.labels[i as usize] as usize;
                held_total[y] += 1;
                if let Some(k) = key(&cols, r) {
                    held[k * kc + y] += 1;
                    held_n[k] += 1;
                }
            }
            let held_all: u32 = held_total.iter().sum();
            let team = task.rows.first().map(|&r| team_of_row(r as usize)).unwrap_or(0) as usize;
            for k in 0..n_keys {
                let n = disc_n[k];
                if (n as usize) < settings.tells.min_n() || big_n - n < settings.tells.min_n() as u32 {
                    continue;
                }
                for cls in 0..kc {
                    let big_k = total[cls];
                    if big_k == 0 {
                        continue;
                    }
                    let x = disc[k * kc + cls];
                    let gtype = task.class_types[cls] as usize;
                    let staff_share = |key: usize| staff_share(&staff, &staff_n, n_keys, n_types, team, key, gtype);
                    let (hn, hk) = (held_n[k], held[k * kc + cls]);
                    let (hout, hkout) = (held_all - hn, held_total[cls] - hk);
                    for dir in [Direction::More, Direction::Less] {
                        if (binary || !labels.less) && dir == Direction::Less {
                            continue; // the other level's "more" is the same test
                        }
                        // Fisher's exact test as a hypergeometric tail: of the
                        // big_n discovery pitches, big_k are this type; draw
                        // the n in the situation.
                        let p = match dir {
                            Direction::More => hypergeom::upper_tail(x as u64, big_n as u64, big_k as u64, n as u64),
                            Direction::Less => hypergeom::lower_tail(x as u64, big_n as u64, big_k as u64, n as u64),
                        };
                        // The situation's side and the rest: (pitches, of this
                        // type) on discovery and on held-out rows.
                        let mut at = (k, dir, (n, x), (big_n - n, big_k - x), (hn, hk), (hout, hkout));
                        // A two-level factor's "more at A" is "less at B"; it is
                        // told the way a coach would say it: as an avoidance when
                        // he throws the pitch at under half the rate at B.
                        if binary && labels.less && ((big_k - x) as f64 / (big_n - n) as f64) < 0.5 * (x as f64 / n as f64) {
                            at = (1 - k, Direction::Less, at.3, at.2, at.5, at.4);
                        }
                        let (key, direction, (n_in, k_in), (n_out, k_out), (h_in, hk_in), (h_out, hk_out)) = at;
                        let ci = wilson::wilson_95(k_in as u64, n_in as u64);
                        let held_ref = (h_out > 0).then(|| hk_out as f64 / h_out as f64);
                        let hci = (h_in > 0).then(|| wilson::wilson_95(hk_in as u64, h_in as u64));
                        tests.push(TellTest {
                            pitcher: task.name.clone(),
                            situation: key_situation(&cols, key),
                            pitch_type: labels.names[gtype].clone(),
                            direction,
                            n: n_in as usize,
                            k: k_in as usize,
                            share: k_in as f64 / n_in as f64,
                            share_low: ci.low,
                            share_high: ci.high,
                            baseline_share: k_out as f64 / n_out as f64,
                            baseline_n: n_out as usize,
                            staff_share: staff_share(key),
                            p_value: p.clamp(0.0, 1.0),
                            q_value: 1.0,
                            held_out_n: h_in as usize,
                            held_out_share: (h_in > 0).then(|| hk_in as f64 / h_in as f64),
                            held_out_baseline_share: (h_out > 0).then(|| hk_out as f64 / h_out as f64),
                            flagged: false,
                            family_q: 1.0,
                            within: None,
                            restates: None,
                            restates_share: None,
                            layer: Layer::Sheet,
                            expected_share: None,
                            held_out_low: hci.map(|c| c.low),
                            held_out_high: hci.map(|c| c.high),
                            held_out_expected_share: held_ref,
                            verdict: verdict(direction, k_in as f64 / n_in as f64, hk_in as u64, h_in as u64, held_ref),
                            cost: None,
                            league_share: None,
                            league_n: None,
                            region: None,
                        });
                    }
                }
            }
        }
    }
    tests
}

/// The false-discovery control of a run's tell tests: each layer is its
/// own family (the sheet's many count and side tests never lower, or raise,
/// the bar for a tell beyond the sheet); then the flags and narrowings.
pub fn finish(tests: Vec<TellTest>, settings: &Settings) -> Vec<TellTest> {
    let (mut sheet, mut beyond): (Vec<TellTest>, Vec<TellTest>) = tests.into_iter().partition(|t| t.layer == Layer::Sheet);
    control_fdr(&mut sheet, settings);
    control_fdr(&mut beyond, settings);
    let mut tests = sheet;
    tests.extend(beyond);
    flag(&mut tests, settings);
    tests
}

/// Flag the tests whose q-values are set: q ≤ fdr and an effect of at
/// least the minimum; then mark the narrowings.
pub fn flag(tests: &mut [TellTest], settings: &Settings) {
    for t in tests.iter_mut() {
        t.flagged = t.q_value <= settings.audit.fdr() && t.effect() >= settings.tells.min_effect();
    }
    mark_narrowings(tests, settings.tells.min_effect());
}

/// The staff's share of pitch type `gtype` in situation `key` (discovery
/// rows of his team, `[team][key][type]` counts), 0 with no pitches there.
fn staff_share(staff: &[u32], staff_n: &[u32], n_keys: usize, n_types: usize, team: usize, key: usize, gtype: usize) -> f64 {
    let sn = staff_n[team * n_keys + key];
    if sn > 0 {
        staff[(team * n_keys + key) * n_types + gtype] as f64 / sn as f64
    } else {
        0.0
    }
}

/// A beyond tell's tests for one pitcher and one situation definition: the
/// one-sided stratified test over his discovery pitches, game by game, each
/// pitch weighted by his sheet's odds of the type in its count and side
/// (`BeyondTallies`; a game's pitches lie wholly on the discovery or the
/// held-out side).
#[allow(clippy::too_many_arguments)]
fn beyond_tests(
    labels: &Labels,
    cols: &[&crate::situations::FactorColumn],
    task: &PitcherTask,
    settings: &Settings,
    tests: &mut Vec<TellTest>,
    staff: &[u32],
    staff_n: &[u32],
    n_keys: usize,
    team_of_row: impl Fn(usize) -> u32,
) {
    let kc = task.n_classes;
    let names = labels.names;
    let n_types = names.len();
    let BeyondTallies { cmh, disc, disc_n, expected, held, held_n, held_expected, total, held_total } =
        BeyondTallies::count(cols, task, n_keys);
    let big_n: u32 = total.iter().sum();
    let held_all: u32 = held_total.iter().sum();
    let team = task.rows.first().map(|&r| team_of_row(r as usize)).unwrap_or(0) as usize;
    for k in 0..n_keys {
        let n = disc_n[k];
        if (n as usize) < settings.tells.min_n() || big_n - n < settings.tells.min_n() as u32 {
            continue;
        }
        for cls in 0..kc {
            let big_k = total[cls];
            if big_k == 0 {
                continue;
            }
            let x = disc[k * kc + cls];
            let gtype = task.class_types[cls] as usize;
            let staff_share = staff_share(staff, staff_n, n_keys, n_types, team, k, gtype);
            let (hn, hk) = (held_n[k], held[k * kc + cls]);
            let t = &cmh[k * kc + cls];
            let share = x as f64 / n as f64;
            let exp = expected[k * kc + cls] / n as f64;
            let held_exp = (hn > 0).then(|| held_expected[k * kc + cls] / hn as f64);
            let hci = (hn > 0).then(|| wilson::wilson_95(hk as u64, hn as u64));
            let ci = wilson::wilson_95(x as u64, n as u64);
            let (n_out, k_out) = (big_n - n, big_k - x);
            let (h_out, hk_out) = (held_all - hn, held_total[cls] - hk);
            for direction in [Direction::More, Direction::Less] {
                if !labels.less && direction == Direction::Less {
                    continue;
                }
                let p = match direction {
                    Direction::More => t.p_more(),
                    Direction::Less => t.p_less(),
                };
                tests.push(TellTest {
                    pitcher: task.name.clone(),
                    situation: key_situation(cols, k),
                    pitch_type: names[gtype].clone(),
                    direction,
                    n: n as usize,
                    k: x as usize,
                    share,
                    share_low: ci.low,
                    share_high: ci.high,
                    baseline_share: k_out as f64 / n_out as f64,
                    baseline_n: n_out as usize,
                    staff_share,
                    p_value: p.clamp(0.0, 1.0),
                    q_value: 1.0,
                    held_out_n: hn as usize,
                    held_out_share: (hn > 0).then(|| hk as f64 / hn as f64),
                    held_out_baseline_share: (h_out > 0).then(|| hk_out as f64 / h_out as f64),
                    flagged: false,
                    family_q: 1.0,
                    within: None,
                    restates: None,
                    restates_share: None,
                    layer: Layer::Beyond,
                    expected_share: Some(exp),
                    held_out_low: hci.map(|c| c.low),
                    held_out_high: hci.map(|c| c.high),
                    held_out_expected_share: held_exp,
                    verdict: verdict(direction, share, hk as u64, hn as u64, held_exp),
                    cost: None,
                    league_share: None,
                    league_n: None,
                    region: None,
                });
            }
        }
    }
}

/// A pitcher's beyond-the-sheet tallies per situation key and type: the
/// discovery rows' test sums over games (each pitch's null chance from his
/// discovery sheet's share of the type in its count and side, and the
/// game's own count of the type: `cmh::OffsetStratum`; a reliever's outing
/// of 15 pitches spread over 24 count × side cells, as strata of their own,
/// left most cells with a single pitch, which carries nothing), counts and
/// sheet-expected counts, and the held-out rows' counts and sheet-expected
/// counts (each side's sheet from its own rows).
struct BeyondTallies {
    cmh: Vec<crate::significance::cmh::Cmh>,
    disc: Vec<u32>,
    disc_n: Vec<u32>,
    expected: Vec<f64>,
    held: Vec<u32>,
    held_n: Vec<u32>,
    held_expected: Vec<f64>,
    total: Vec<u32>,
    held_total: Vec<u32>,
}

impl BeyondTallies {
    fn count(cols: &[&crate::situations::FactorColumn], task: &PitcherTask, n_keys: usize) -> BeyondTallies {
        let kc = task.n_classes;
        let mut is_disc = vec![false; task.rows.len()];
        for &i in &task.discovery {
            is_disc[i as usize] = true;
        }
        let mut is_held = vec![false; task.rows.len()];
        for &i in &task.held_out {
            is_held[i as usize] = true;
        }
        // The sheet of each side: his shares by count × batter side on the
        // discovery rows and on the held-out rows.
        let sheet_of = |on: &[bool]| {
            let mut c = vec![0u32; 24 * kc];
            let mut n = [0u32; 24];
            for (i, &yes) in on.iter().enumerate() {
                if yes {
                    c[task.cell[i] as usize * kc + task.labels[i] as usize] += 1;
                    n[task.cell[i] as usize] += 1;
                }
            }
            (0..24 * kc).map(|j| if n[j / kc] > 0 { c[j] as f64 / n[j / kc] as f64 } else { 0.0 }).collect::<Vec<f64>>()
        };
        let (sheet_d, sheet_h) = (sheet_of(&is_disc), sheet_of(&is_held));
        let mut cmh = vec![crate::significance::cmh::Cmh::default(); n_keys * kc];
        let mut disc = vec![0u32; n_keys * kc];
        let mut disc_n = vec![0u32; n_keys];
        let mut expected = vec![0.0f64; n_keys * kc];
        let mut held = vec![0u32; n_keys * kc];
        let mut held_n = vec![0u32; n_keys];
        let mut held_expected = vec![0.0f64; n_keys * kc];
        let mut total = vec![0u32; kc];
        let mut held_total = vec![0u32; kc];
        for &i in &task.held_out {
            let i = i as usize;
            let y = task.labels[i] as usize;
            held_total[y] += 1;
            if let Some(k) = key(cols, task.rows[i] as usize) {
                held[k * kc + y] += 1;
                held_n[k] += 1;
                for c in 0..kc {
                    held_expected[k * kc + c] += sheet_h[task.cell[i] as usize * kc + c];
                }
            }
        }
        // The discovery rows game by game: each game is a stratum, each
        // pitch weighted by his sheet's odds of the type in its count and
        // side (`cmh::OffsetStratum`).
        let mut by_game: Vec<(u32, u32)> = task.discovery.iter().map(|&i| (task.game[i as usize], i)).collect();
        by_game.sort_unstable();
        let mut fitted = vec![crate::significance::cmh::OffsetStratum::default(); kc];
        let (mut shares, mut is_type): (Vec<f64>, Vec<bool>) = (Vec::new(), Vec::new());
        let mut in_game: Vec<(usize, usize)> = Vec::new();
        let mut members: Vec<usize> = Vec::new();
        for game in by_game.chunk_by(|a, b| a.0 == b.0) {
            let rows: Vec<usize> = game.iter().map(|&(_, i)| i as usize).collect();
            for (c, fit) in fitted.iter_mut().enumerate() {
                shares.clear();
                is_type.clear();
                for &i in &rows {
                    shares.push(sheet_d[task.cell[i] as usize * kc + c]);
                    is_type.push(task.labels[i] as usize == c);
                }
                fit.fit(&shares, &is_type);
            }
            // The game's pitches by key (their place in the game kept).
            in_game.clear();
            for (at, &i) in rows.iter().enumerate() {
                let y = task.labels[i] as usize;
                total[y] += 1;
                if let Some(k) = key(cols, task.rows[i] as usize) {
                    in_game.push((k, at));
                    disc[k * kc + y] += 1;
                    disc_n[k] += 1;
                    for c in 0..kc {
                        expected[k * kc + c] += sheet_d[task.cell[i] as usize * kc + c];
                    }
                }
            }
            in_game.sort_unstable();
            for run in in_game.chunk_by(|a, b| a.0 == b.0) {
                let k = run[0].0;
                members.clear();
                members.extend(run.iter().map(|&(_, at)| at));
                for (c, fit) in fitted.iter().enumerate() {
                    let x = members.iter().filter(|&&at| task.labels[rows[at]] as usize == c).count() as u64;
                    cmh[k * kc + c].add_offset(x, &members, fit);
                }
            }
        }
        BeyondTallies { cmh, disc, disc_n, expected, held, held_n, held_expected, total, held_total }
    }
}

/// Simes' (1986) combined p-value of a family: min_i m·p_(i)/i. Valid for
/// independent or positively dependent tests (Sarkar 1998), as overlapping
/// situations of one pitcher are.
pub fn simes(p: &[f64]) -> f64 {
    let mut v = p.to_vec();
    v.sort_by(f64::total_cmp);
    let m = v.len() as f64;
    v.iter().enumerate().map(|(i, &x)| m * x / (i + 1) as f64).fold(1.0, f64::min)
}

/// The run's false-discovery control over every tell test.
///
/// `hierarchical` (default), after Benjamini & Bogomolov (2014), "Selective
/// inference on multiple families of hypotheses", JRSS B 76: each pitcher's
/// tests are a family; a family's Simes p-value asks "does this pitcher
/// have any tell at all?"; BH over pitchers selects R of M; within a
/// selected pitcher BH runs at level q·R/M. A tell's reported q-value is its
/// within-pitcher BH q-value times M/R, so "flagged" is "q ≤ fdr"; for a
/// pitcher not selected it is raised to at least his family's q, so it is
/// never flagged. This keeps one true tell-rich pitcher from lowering the
/// bar for everybody else, which pooled BH does.
///
/// `pooled`: plain Benjamini–Hochberg over all tests of the run.
fn control_fdr(tests: &mut [TellTest], settings: &Settings) {
    let keys: Vec<&str> = tests.iter().map(|t| t.pitcher.as_str()).collect();
    let p: Vec<f64> = tests.iter().map(|t| t.p_value).collect();
    let (q, family_q) = fdr_q_values(&keys, &p, settings);
    for ((t, q), f) in tests.iter_mut().zip(q).zip(family_q) {
        t.q_value = q;
        t.family_q = f;
    }
}

/// The q-values of [`control_fdr`] for tests of pitchers `keys` with
/// p-values `p`: each test's q-value and its pitcher family's q-value.
/// Only the p-values and who they belong to matter, so a caller may keep
/// its tests in any compact form.
pub fn fdr_q_values<K: Ord + Clone>(keys: &[K], p: &[f64], settings: &Settings) -> (Vec<f64>, Vec<f64>) {
    let n = p.len();
    if n == 0 {
        return (Vec::new(), Vec::new());
    }
    if settings.tells.fdr_method() == crate::settings::FdrMethod::Pooled {
        let q = fdr::bh_q_values(p);
        return (q.clone(), q);
    }
    let mut families: BTreeMap<K, Vec<usize>> = BTreeMap::new();
    for (i, k) in keys.iter().enumerate() {
        families.entry(k.clone()).or_default().push(i);
    }
    let fam: Vec<&Vec<usize>> = families.values().collect();
    let fam_p: Vec<f64> = fam.iter().map(|idx| simes(&idx.iter().map(|&i| p[i]).collect::<Vec<_>>())).collect();
    let fam_q = fdr::bh_q_values(&fam_p);
    let m = fam.len() as f64;
    let r = fam_q.iter().filter(|&&q| q <= settings.audit.fdr()).count().max(1) as f64;
    let (mut q_out, mut f_out) = (vec![1.0; n], vec![1.0; n]);
    for (f, idx) in fam.iter().enumerate() {
        let within = fdr::bh_q_values(&idx.iter().map(|&i| p[i]).collect::<Vec<_>>());
        let selected = fam_q[f] <= settings.audit.fdr();
        for (&i, w) in idx.iter().zip(within) {
            let mut q = (w * m / r).min(1.0);
            if !selected {
                q = q.max(fam_q[f]);
            }
            q_out[i] = q;
            f_out[i] = fam_q[f];
        }
    }
    (q_out, f_out)
}

/// A flagged two-factor tell whose share is within `min_effect` of a flagged
/// one-factor tell (same pitcher, type, direction) on one of its levels adds
/// little: mark it as within that one.
fn mark_narrowings(tests: &mut [TellTest], min_effect: f64) {
    // Two situations that pick out exactly the same pitches (0-0 counts and
    // the first pitch of a plate appearance) are one tell: keep the first.
    let mut seen: BTreeMap<(String, String, Option<String>, Direction, usize, usize, usize, u64), Situation> = BTreeMap::new();
    for t in tests.iter_mut().filter(|t| t.flagged) {
        let key = (t.pitcher.clone(), t.pitch_type.clone(), t.region.clone(), t.direction, t.n, t.k, t.held_out_n, t.baseline_share.to_bits());
        match seen.get(&key) {
            Some(first) if *first != t.situation => t.within = Some(first.clone()),
            Some(_) => {}
            None => {
                seen.insert(key, t.situation.clone());
            }
        }
    }
    let mut singles: BTreeMap<(String, String, Option<String>, Direction, Factor, String), f64> = BTreeMap::new();
    for t in tests.iter().filter(|t| t.flagged && t.situation.len() == 1) {
        let (f, l) = t.situation.iter().next().unwrap();
        singles.insert((t.pitcher.clone(), t.pitch_type.clone(), t.region.clone(), t.direction, *f, l.clone()), t.share);
    }
    for t in tests.iter_mut().filter(|t| t.flagged && t.situation.len() == 2 && t.within.is_none()) {
        for (f, l) in &t.situation {
            if let Some(&s) = singles.get(&(t.pitcher.clone(), t.pitch_type.clone(), t.region.clone(), t.direction, *f, l.clone())) {
                if (t.share - s).abs() < min_effect {
                    let mut one = Situation::new();
                    one.insert(*f, l.clone());
                    t.within = Some(one);
                    break;
                }
            }
        }
    }
}

/// Each pitcher's tests, in their order in the list they came from, grouped
/// once so that per-pitcher work never scans a league's tests for each.
pub struct ByPitcher<'a>(std::collections::HashMap<&'a str, Vec<&'a TellTest>>);

impl<'a> ByPitcher<'a> {
    pub fn new(tests: &'a [TellTest]) -> Self {
        let mut map: std::collections::HashMap<&str, Vec<&TellTest>> = std::collections::HashMap::new();
        for t in tests {
            map.entry(t.pitcher.as_str()).or_default().push(t);
        }
        ByPitcher(map)
    }

    /// The tests of `pitcher` (none if he has none).
    pub fn of(&self, pitcher: &str) -> &[&'a TellTest] {
        self.0.get(pitcher).map_or(&[], |v| &v[..])
    }
}

/// A pitcher's flagged tells (from his own tests, [`ByPitcher::of`]),
/// strongest first: the most pitches given away, i.e. the shift times the
/// pitches in the situation, (share − baseline) × n; then the smallest q.
pub fn flagged_sorted<'a>(his: &[&'a TellTest]) -> Vec<&'a TellTest> {
    let mut v: Vec<&TellTest> = his.iter().copied().filter(|t| t.flagged).collect();
    v.sort_by(|a, b| stronger_first(a, b));
    v
}

/// The order of [`flagged_sorted`]: more pitches given away first, then
/// the smaller q-value, then by situation and pitch type.
fn stronger_first(a: &TellTest, b: &TellTest) -> std::cmp::Ordering {
    (b.effect() * b.n as f64)
        .partial_cmp(&(a.effect() * a.n as f64))
        .unwrap()
        .then(a.q_value.partial_cmp(&b.q_value).unwrap())
        .then(situation_label(&a.situation).cmp(&situation_label(&b.situation)))
        .then(a.pitch_type.cmp(&b.pitch_type))
}
/// The cost of one tell (CONTRACT: `cost` on a tell).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TellCost {
    /// Pitches of the tell's type in the tell's situation, and swings at them.
    pub n: u64,
    pub swings: u64,
    pub whiff_rate: f64,
    pub expected_whiff_rate: f64,
    /// 95% interval of the whiff rate minus the expected one (stratified
    /// Wald interval, `Standardised`). The whiff rate is over all his swings
    /// at the tell's pitch there; the expectation and interval rest on the
    /// counts where comparable swings exist.
    pub whiff_diff_low: f64,
    pub whiff_diff_high: f64,
    pub csw_rate: f64,
    pub expected_csw_rate: f64,
    pub in_play_rate: f64,
    pub expected_in_play_rate: f64,
    /// One-sided: fewer whiffs than expected.
    pub p_value: f64,
    pub q_value: f64,
    /// The pitch fares significantly worse for him there (q ≤ fdr, fewer
    /// whiffs than expected).
    pub costly: bool,
    /// `"his other counts"`-style reference, in words.
    pub compared_with: String,
}


#[cfg(test)]
mod tests {
    use super::*;

    /// A sheet tell of his slider against same-side batters: 41% there
    /// (n = 259) against 23% elsewhere in his training games.
    fn slider_tell(held_in: f64, held_elsewhere: f64, verdict: Verdict) -> TellTest {
        TellTest {
            pitcher: "P".into(),
            situation: [(Factor::Platoon, "same".to_string())].into_iter().collect(),
            pitch_type: "slider".into(),
            direction: Direction::More,
            n: 259,
            k: 106,
            share: 106.0 / 259.0,
            share_low: 0.35,
            share_high: 0.47,
            baseline_share: 0.23,
            baseline_n: 493,
            staff_share: 0.2,
            p_value: 1e-6,
            q_value: 1e-4,
            held_out_n: 356,
            held_out_share: Some(held_in),
            held_out_baseline_share: Some(held_elsewhere),
            flagged: true,
            family_q: 1e-4,
            within: None,
            restates: None,
            restates_share: None,
            layer: Layer::Sheet,
            expected_share: None,
            held_out_low: None,
            held_out_high: None,
            held_out_expected_share: None,
            verdict,
            cost: None,
            league_share: None,
            league_n: None,
            region: None,
        }
    }

    /// A faded sheet tell counts what is left of it over his held-out share
    /// elsewhere (worked by hand: 30% against 25% leaves 5 points), as a
    /// beyond tell counts it over his held-out sheet; one that held keeps
    /// its training effect (41% − 23%). A pitch he threw nowhere in the
    /// held-out games is gone, and nothing of the tell is left.
    #[test]
    fn a_faded_sheet_tell_counts_what_is_left_of_it() {
        let faded = slider_tell(0.30, 0.25, Verdict::Faded);
        assert!((faded.effect_now() - 0.05).abs() < 1e-12, "{}", faded.effect_now());
        assert!(!faded.pitch_gone());
        let held = slider_tell(0.40, 0.22, Verdict::Held);
        assert!((held.effect_now() - (106.0 / 259.0 - 0.23)).abs() < 1e-12);
        let gone = slider_tell(0.0, 0.0, Verdict::Faded);
        assert!(gone.pitch_gone() && gone.effect_now() == 0.0);
        // Thrown elsewhere but not in the situation: faded, not gone.
        assert!(!slider_tell(0.0, 0.2, Verdict::Faded).pitch_gone());
    }
}
