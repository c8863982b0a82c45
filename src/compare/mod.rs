//! Compare: change in each pitcher between two periods (`--before A
//! --after B`, seasons or date ranges), for a club's development staff.
//!
//! Per pitcher, with the run's tests in two Benjamini–Hochberg families
//! (the predictability tests; everything else):
//!
//! * mix shift, overall and per count: the pitch mix in each period, a test
//!   of equal mixes (G-test, or a Monte Carlo permutation of the period
//!   labels when expected counts are small) and the total variation
//!   distance as the effect size ([`mix`]);
//! * new and dropped pitches: a type at or above `[compare]
//!   new_pitch_share` of his pitches in one period and below
//!   `absent_share` in the other, with a 2 × 2 test of its share (his mix
//!   shifts are then tested on the pitches he kept);
//! * predictability: held-out lift and bits gained in each period, each
//!   cross-fitted over its own games, the change tested by a studentised
//!   label-swap permutation test whose refitted deals also give its
//!   interval, and the before model's transfer to the after games
//!   ([`predictability`]);
//! * tells that appeared, disappeared or held ([`tells_change`]), not
//!   tests themselves: a tell about one count carries that count's test.
//!
//! Pitchers below the audit's minimum samples in either period are listed
//! as insufficient data, with no figures.

pub mod mix;
pub mod period;
mod pitcher;
pub mod predictability;
pub mod summary;
pub mod tells_change;
pub mod wording;

use crate::audit::summary::{Input, Tool};
use crate::error::Result;
use crate::ingest::{self, Ingested, PitchLog, Rejected, SourceInfo};
use crate::settings::Settings;
use crate::significance::{fdr, Interval};

/// The BH family of the predictability tests (`family` of a change).
pub const PREDICTABILITY_FAMILY: &str = "predictability";
/// The BH family of every other test of a comparison.
pub const MIX_FAMILY: &str = "mix and pitches";
/// The BH family of the location shifts (where each pitch type goes).
pub const LOCATION_FAMILY: &str = "location";
use crate::domain::levels::COUNTS;
use crate::situations::{self, Situations};
use period::{Period, PeriodSpec};
use predictability::{PeriodFit, Resampled};
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rayon::prelude::*;
use sha2::{Digest, Sha256};
use std::collections::{BTreeMap, BTreeSet};
use std::path::Path;
use summary::*;
use tells_change::TellChange;


/// What to compare.
#[derive(Debug, Clone)]
pub struct Request {
    pub before: PeriodSpec,
    pub after: PeriodSpec,
}

/// Everything a comparison produces.
pub struct Comparison {
    pub summary: CompareSummary,
    pub rejected: Vec<Rejected>,
    /// Rows whose pitch label is not the pitcher's choice (`set_aside.csv`).
    pub set_aside: Vec<Rejected>,
}

/// The random stream of one use (`purpose`) of one pitcher, number `j`:
/// keyed by (seed, pitcher name, purpose), so results do not depend on
/// thread count or on which other pitchers are compared (as in
/// `audit::permute`).
pub fn stream(seed: u64, pitcher: &str, purpose: &str, j: u64) -> ChaCha8Rng {
    let mut rng = ChaCha8Rng::from_seed(key(seed, pitcher, purpose));
    rng.set_stream(j);
    rng
}

fn key(seed: u64, pitcher: &str, purpose: &str) -> [u8; 32] {
    let mut h = Sha256::new();
    h.update(b"tellscope compare v1");
    h.update(seed.to_le_bytes());
    h.update((pitcher.len() as u64).to_le_bytes());
    h.update(pitcher.as_bytes());
    h.update(purpose.as_bytes());
    h.finalize().into()
}

/// A u64 seed for routines that take one (the bootstrap).
fn seed64(seed: u64, pitcher: &str, purpose: &str) -> u64 {
    let k = key(seed, pitcher, purpose);
    u64::from_le_bytes(k[..8].try_into().expect("8 bytes"))
}

/// Compare the log at `path`.
pub fn run(path: &Path, settings: &Settings, request: &Request, show_progress: bool) -> Result<Comparison> {
    let timer = crate::progress::Timer::start();
    let Ingested { log, rejected, set_aside, source } = ingest::load(path, &settings.input)?;
    let (before, after) = period::resolve(&log, &request.before, &request.after)?;
    let sit = situations::build(&log);
    timer.lap("compare: ingest and situations");
    compare_log(&log, &sit, before, after, ingest::LeftOut { rejected, set_aside }, source, settings, show_progress)
}


/// A prepared pitcher, borrowed: (pitcher, rows before/after, fits).
type Ready<'a> = (u32, &'a [Vec<u32>; 2], &'a [PeriodFit; 2]);

/// A pitcher ready to compare, or why not.
enum Prepared {
    Ready { pitcher: u32, rows: [Vec<u32>; 2], fits: Box<[PeriodFit; 2]> },
    Short { pitcher: u32, rows: [Vec<u32>; 2], why: String },
}

/// The distinct games of `rows`, ascending.
fn game_ids(log: &PitchLog, rows: &[u32]) -> Vec<u32> {
    let mut games: Vec<u32> = rows.iter().map(|&r| log.game[r as usize]).collect();
    games.sort_unstable();
    games.dedup();
    games
}

fn games_of(log: &PitchLog, rows: &[u32]) -> usize {
    game_ids(log, rows).len()
}

fn prepare(log: &PitchLog, sit: &Situations, p: u32, rows: [Vec<u32>; 2], labels: [&str; 2], settings: &Settings) -> Prepared {
    let mut fits = Vec::new();
    for (rows_k, label) in rows.iter().zip(labels) {
        if rows_k.is_empty() {
            return Prepared::Short { pitcher: p, why: format!("He did not pitch in {label}."), rows };
        }
        let task = match predictability::build_task(log, sit, p, rows_k, settings.audit.forward_blocks(), label) {
            Ok(t) => t,
            Err(_) => {
                return Prepared::Short {
                    pitcher: p,
                    why: format!(
                        "Only {} games in {label}, fewer than the {} blocks of games that scoring a period needs.",
                        games_of(log, rows_k),
                        settings.audit.forward_blocks()
                    ),
                    rows,
                }
            }
        };
        fits.push(task);
    }
    let a = fits.pop().expect("two periods");
    let b = fits.pop().expect("two periods");
    let fit = |t, k: usize| predictability::fit_period(log, sit, t, settings, labels[k]);
    let fitted = match (fit(b, 0), fit(a, 1)) {
        (Ok(fb), Ok(fa)) => [fb, fa],
        (Err(e), _) | (_, Err(e)) => return Prepared::Short { pitcher: p, why: format!("{e}."), rows },
    };
    for (f, label) in fitted.iter().zip(labels) {
        if f.cross.n_train < settings.audit.min_train_pitches() || f.cross.figures.n < settings.audit.min_test_pitches() {
            return Prepared::Short {
                pitcher: p,
                why: format!(
                    "Only {} pitches in {label}: each part of the period would be guessed by a model fitted on about {} of his other pitches there; at least {} to train on and {} to score are needed in each period before any figure is shown.",
                    crate::domain::numbers::fmt_n(f.task.rows.len()),
                    crate::domain::numbers::fmt_n(f.cross.n_train),
                    crate::domain::numbers::fmt_n(settings.audit.min_train_pitches()),
                    crate::domain::numbers::fmt_n(settings.audit.min_test_pitches())
                ),
                rows,
            };
        }
    }
    Prepared::Ready { pitcher: p, rows, fits: Box::new(fitted) }
}

/// A period's figures for the report, the interval widened to hold the
/// estimate (a percentile interval can miss it in a very skewed resample;
/// the report never shows an estimate outside its own interval).
fn period_figures(label: &str, fit: &PeriodFit, res: Option<&Resampled>) -> PeriodFigures {
    let f = &fit.cross.figures;
    let b = f.bits_gained;
    let iv = res.map(|r| r.bits.interval).unwrap_or(Interval { low: b, high: b });
    PeriodFigures {
        label: label.to_string(),
        pitches: fit.task.rows.len(),
        n_train: fit.cross.n_train,
        n_test: f.n,
        prior_accuracy: f.prior_accuracy,
        model_accuracy: f.model_accuracy,
        lift: f.lift,
        bits_gained: b,
        bits_interval: Interval { low: iv.low.min(b), high: iv.high.max(b) },
        n_unseen_type: fit.cross.unseen,
    }
}

/// One period's counts per pitch type (indices into `types`) of a
/// pitcher's `rows`, overall and per count, and the same game by game (his
/// games in id order), which the mix tests shuffle between the periods
/// ([`mix::mix_test_by_games`]).
struct Tallies {
    all: Vec<u64>,
    /// `by[count]`.
    by: Vec<Vec<u64>>,
    /// `games_all[game]`.
    games_all: Vec<Vec<u64>>,
    /// `games_by[count][game]`.
    games_by: Vec<Vec<Vec<u64>>>,
}

fn tallies(log: &PitchLog, rows: &[u32], types: &[u16]) -> Tallies {
    let k = types.len();
    let games = game_ids(log, rows);
    let mut t = Tallies {
        all: vec![0; k],
        by: vec![vec![0; k]; COUNTS.len()],
        games_all: vec![vec![0; k]; games.len()],
        games_by: vec![vec![vec![0; k]; games.len()]; COUNTS.len()],
    };
    for &r in rows {
        let r = r as usize;
        let g = games.binary_search(&log.game[r]).expect("his game");
        let ty = types.binary_search(&log.pitch_type[r]).expect("his type");
        let count = log.balls[r] as usize * 3 + log.strikes[r] as usize;
        t.all[ty] += 1;
        t.by[count][ty] += 1;
        t.games_all[g][ty] += 1;
        t.games_by[count][g][ty] += 1;
    }
    t
}

fn mix_map(names: &[String], types: &[u16], c: &[u64]) -> BTreeMap<String, f64> {
    let s = mix::shares(c);
    types.iter().zip(s).filter(|(_, x)| *x > 0.0).map(|(&t, x)| (names[t as usize].clone(), x)).collect()
}

fn top(names: &[String], types: &[u16], c: &[u64]) -> (Option<String>, Option<f64>) {
    let n: u64 = c.iter().sum();
    if n == 0 {
        return (None, None);
    }
    // Most thrown; ties go to the first in label order.
    let (i, &m) = c.iter().enumerate().fold((0, &0u64), |best, (i, x)| if *x > *best.1 { (i, x) } else { best });
    (Some(names[types[i] as usize].clone()), Some(m as f64 / n as f64))
}

#[allow(clippy::too_many_arguments)]
fn blank(kind: &str, situation: BTreeMap<String, String>, before: f64, after: f64, effect: f64, measure: &str, n: [usize; 2], t: Option<&mix::MixTest>) -> Change {
    Change {
        kind: kind.into(),
        situation,
        pitch_type: None,
        direction: None,
        among: None,
        before,
        after,
        effect,
        effect_measure: measure.into(),
        n_before: n[0],
        n_after: n[1],
        interval: None,
        test: t.map(|t| t.test.as_str().to_string()).unwrap_or_else(|| "none".into()),
        statistic: t.map(|t| t.statistic),
        dof: t.map(|t| t.dof),
        permutations: t.and_then(|t| t.permutations),
        p: t.map(|t| t.p),
        q: None,
        significant: false,
        mix_before: None,
        mix_after: None,
        baseline_before: None,
        baseline_after: None,
        tell_q_before: None,
        tell_q_after: None,
        family: MIX_FAMILY.into(),
        region: None,
        text: String::new(),
    }
}

/// The mix changes of one pitcher (before BH): new and dropped pitches,
/// the overall mix, each count.
///
/// With a new or dropped pitch, the overall and per-count tests are run on
/// the pitches he threw in both periods: the new pitch is tested on its own,
/// and testing it again in every count would only repeat that finding
/// (and, in one BH family, a dozen repeats of one true change would lower
/// the bar for every other test of the run).
fn mix_changes(
    names: &[String],
    name: &str,
    types: &[u16],
    tallied: [&Tallies; 2],
    settings: &Settings,
) -> (Vec<Change>, Vec<CountChange>) {
    let all = tallied.map(|t| t.all.as_slice());
    let seed = settings.audit.seed();
    let mut out = Vec::new();
    let (sb, sa) = (mix::shares(all[0]), mix::shares(all[1]));
    let nb: u64 = all[0].iter().sum();
    let na: u64 = all[1].iter().sum();
    let mut arsenal: BTreeSet<usize> = BTreeSet::new();
    for i in 0..types.len() {
        let t = &names[types[i] as usize];
        if let Some(new) = mix::new_or_dropped(sb[i], sa[i], settings.compare.new_pitch_share(), settings.compare.absent_share()) {
            let mut rng = stream(seed, name, &format!("arsenal {t}"), 0);
            // Each game: this pitch and the rest.
            let split = |t: &Tallies| -> Vec<Vec<u64>> { t.games_all.iter().map(|c| vec![c[i], c.iter().sum::<u64>() - c[i]]).collect() };
            let test = mix::mix_test_by_games(&split(tallied[0]), &split(tallied[1]), &mut rng, settings.audit.stop_after_exceedances());
            let kind = if new { "new_pitch" } else { "dropped_pitch" };
            let mut c = blank(kind, BTreeMap::new(), sb[i], sa[i], sa[i] - sb[i], "share_difference", [nb as usize, na as usize], Some(&test));
            c.pitch_type = Some(t.clone());
            out.push(c);
            arsenal.insert(i);
        }
    }
    // The types the mix tests run on.
    let kept: Vec<usize> = (0..types.len()).filter(|i| !arsenal.contains(i)).collect();
    let kt: Vec<u16> = kept.iter().map(|&i| types[i]).collect();
    let among = (!arsenal.is_empty()).then(|| "kept pitches".to_string());
    let shift = |label: Option<&str>, b: &[u64], a: &[u64], cell: [&[Vec<u64>]; 2], rng: &mut ChaCha8Rng| -> Change {
        let b: Vec<u64> = kept.iter().map(|&i| b[i]).collect();
        let a: Vec<u64> = kept.iter().map(|&i| a[i]).collect();
        let only_kept = |gs: &[Vec<u64>]| -> Vec<Vec<u64>> { gs.iter().map(|g| kept.iter().map(|&i| g[i]).collect()).collect() };
        let test = mix::mix_test_by_games(&only_kept(cell[0]), &only_kept(cell[1]), rng, settings.audit.stop_after_exceedances());
        let i = mix::biggest_mover(&b, &a);
        let (xb, xa) = (mix::shares(&b), mix::shares(&a));
        let mut situation = BTreeMap::new();
        if let Some(l) = label {
            situation.insert("count".to_string(), l.to_string());
        }
        let n = [b.iter().sum::<u64>() as usize, a.iter().sum::<u64>() as usize];
        let mut c = blank("mix_shift", situation, xb[i], xa[i], test.tvd, "total_variation", n, Some(&test));
        c.pitch_type = Some(names[kt[i] as usize].clone());
        c.among = among.clone();
        c.mix_before = Some(mix_map(names, &kt, &b));
        c.mix_after = Some(mix_map(names, &kt, &a));
        c
    };
    if kept.len() >= 2 {
        out.push(shift(None, all[0], all[1], [&tallied[0].games_all, &tallied[1].games_all], &mut stream(seed, name, "mix overall", 0)));
    }
    let mut counts = Vec::new();
    for (ci, label) in COUNTS.iter().enumerate() {
        let (b, a) = (&tallied[0].by[ci], &tallied[1].by[ci]);
        let n = [b.iter().sum::<u64>() as usize, a.iter().sum::<u64>() as usize];
        let nk = |c: &[u64]| kept.iter().map(|&i| c[i]).sum::<u64>() as usize;
        let tested = kept.len() >= 2 && nk(b) >= settings.tells.min_n() && nk(a) >= settings.tells.min_n();
        if tested {
            out.push(shift(Some(label), b, a, [&tallied[0].games_by[ci], &tallied[1].games_by[ci]], &mut stream(seed, name, &format!("mix count {label}"), 0)));
        }
        let (tpb, tsb) = top(names, types, b);
        let (tpa, tsa) = top(names, types, a);
        counts.push(CountChange {
            count: label.to_string(),
            n_before: n[0],
            n_after: n[1],
            top_pitch_before: tpb,
            top_share_before: tsb,
            top_pitch_after: tpa,
            top_share_after: tsa,
            mix_before: mix_map(names, types, b),
            mix_after: mix_map(names, types, a),
            tested,
        });
    }
    (out, counts)
}

/// Located pitches of a type each period needs before its region mix is
/// compared.
const LOCATION_MIN_PITCHES: u64 = 50;

/// Where each of his pitch types goes, before against after: the region
/// mix of the type's located pitches in each period, tested as the pitch
/// mixes are (G-test, or Monte Carlo with sparse cells), effect the total
/// variation distance; `before`/`after` are the share of the region that
/// moved most.
fn location_changes(names: &[String], regions: &[u16], log: &PitchLog, name: &str, types: &[u16], rows: &[Vec<u32>; 2], settings: &Settings) -> Vec<Change> {
    use crate::situations::regions::{Region, REGIONS};
    // One pass per period: located pitches by (his type, region), and by
    // (his type, game, region) for the test, which shuffles whole games.
    let count = |rows: &[u32]| {
        let games = game_ids(log, rows);
        let mut c = vec![[0u64; REGIONS]; types.len()];
        let mut by_game = vec![vec![[0u64; REGIONS]; games.len()]; types.len()];
        for &r in rows {
            let r = r as usize;
            if regions[r] != crate::tells::NO_LABEL {
                let t = types.binary_search(&log.pitch_type[r]).expect("his types hold every pitch of his");
                let g = games.binary_search(&log.game[r]).expect("his game");
                c[t][regions[r] as usize] += 1;
                by_game[t][g][regions[r] as usize] += 1;
            }
        }
        (c, by_game)
    };
    let ((before, games_b), (after, games_a)) = (count(&rows[0]), count(&rows[1]));
    let mut out = Vec::new();
    for (ti, &t) in types.iter().enumerate() {
        let (b, a) = (&before[ti], &after[ti]);
        let (nb, na) = (b.iter().sum::<u64>(), a.iter().sum::<u64>());
        if nb < LOCATION_MIN_PITCHES || na < LOCATION_MIN_PITCHES {
            continue;
        }
        // Regions he used in either period.
        let used: Vec<usize> = (0..REGIONS).filter(|&i| b[i] + a[i] > 0).collect();
        if used.len() < 2 {
            continue;
        }
        let bu: Vec<u64> = used.iter().map(|&i| b[i]).collect();
        let au: Vec<u64> = used.iter().map(|&i| a[i]).collect();
        let t_name = &names[t as usize];
        let mut rng = stream(settings.audit.seed(), name, &format!("location {t_name}"), 0);
        let only_used = |gs: &[[u64; REGIONS]]| -> Vec<Vec<u64>> { gs.iter().map(|g| used.iter().map(|&i| g[i]).collect()).collect() };
        let test = mix::mix_test_by_games(&only_used(&games_b[ti]), &only_used(&games_a[ti]), &mut rng, settings.audit.stop_after_exceedances());
        let i = mix::biggest_mover(&bu, &au);
        let (sb, sa) = (mix::shares(&bu), mix::shares(&au));
        let mut c = blank("location_shift", BTreeMap::new(), sb[i], sa[i], test.tvd, "total_variation", [nb as usize, na as usize], Some(&test));
        c.pitch_type = Some(t_name.clone());
        c.region = Some(Region::ALL[used[i]].name().to_string());
        c.family = LOCATION_FAMILY.into();
        let map = |x: &[f64]| used.iter().zip(x).map(|(&r, &v)| (Region::ALL[r].name().to_string(), v)).collect();
        c.mix_before = Some(map(&sb));
        c.mix_after = Some(map(&sa));
        out.push(c);
    }
    out
}

fn tell_change(c: &TellChange) -> Change {
    let situation: BTreeMap<String, String> = c.situation.iter().map(|(f, l)| (f.name().to_string(), l.clone())).collect();
    let mut x = blank(
        c.status.as_str(),
        situation,
        c.before.share,
        c.after.share,
        c.after.share - c.before.share,
        "share_difference",
        [c.before.n, c.after.n],
        None,
    );
    x.pitch_type = Some(c.pitch_type.clone());
    x.direction = Some(c.direction.as_str().to_string());
    x.baseline_before = Some(c.before.baseline_share);
    x.baseline_after = Some(c.after.baseline_share);
    x.tell_q_before = c.before.q_value;
    x.tell_q_after = c.after.q_value;
    x
}

/// Compare an already loaded log: prepare each pitcher's periods, run the
/// resamples and label-swap tests, gather every change, then one set of
/// Benjamini–Hochberg families over the run.
#[allow(clippy::too_many_arguments)]
pub fn compare_log(
    log: &PitchLog,
    sit: &Situations,
    before: Period,
    after: Period,
    left_out: ingest::LeftOut,
    source: SourceInfo,
    settings: &Settings,
    show_progress: bool,
) -> Result<Comparison> {
    let timer = crate::progress::Timer::start();
    let permutations = settings.compare.permutations();
    let labels = [before.label.as_str(), after.label.as_str()];
    let rows_of = period_rows(log, &before, &after);
    // Pitchers who pitched in neither period are left out unless asked for.
    let chosen: Vec<u32> = crate::audit::selected_pitchers(log, settings)?
        .into_iter()
        .filter(|&p| !settings.audit.pitchers().is_empty() || !rows_of[p as usize][0].is_empty() || !rows_of[p as usize][1].is_empty())
        .collect();
    let prepared: Vec<Prepared> =
        chosen.par_iter().map(|&p| prepare(log, sit, p, rows_of[p as usize].clone(), labels, settings)).collect();
    timer.lap("compare: periods' fits");
    let ready: Vec<Ready> = prepared
        .iter()
        .filter_map(|x| match x {
            Prepared::Ready { pitcher, rows, fits } => Some((*pitcher, rows, &**fits)),
            Prepared::Short { .. } => None,
        })
        .collect();
    // Bootstraps of each period's held-out games.
    let resampled: Vec<[Option<Resampled>; 2]> = ready
        .par_iter()
        .map(|(p, _, fits)| {
            let name = &log.pitchers[*p as usize];
            [0, 1].map(|k| predictability::resample_period(&fits[k].cross.games, settings.compare.bootstrap(), seed64(settings.audit.seed(), name, &format!("bootstrap {k}"))))
        })
        .collect();
    timer.lap("compare: bootstraps");
    let swaps = swap_tests(log, sit, &ready, settings, permutations, show_progress, &timer);
    let per_season = per_season_figures(log, sit, &ready, settings);
    timer.lap("compare: per-season figures");
    // Tells of each period, looked up per pitcher below.
    let tasks_b: Vec<crate::evaluate::task::PitcherTask> = ready.iter().map(|r| r.2[0].task.clone()).collect();
    let tasks_a: Vec<crate::evaluate::task::PitcherTask> = ready.iter().map(|r| r.2[1].task.clone()).collect();
    let tells_b = tells_change::period_tells(log, sit, &before.rows, &tasks_b, settings);
    let tells_a = tells_change::period_tells(log, sit, &after.rows, &tasks_a, settings);
    timer.lap("compare: tells");
    let run = pitcher::Run {
        log,
        sit,
        labels,
        settings,
        tells: [crate::tells::ByPitcher::new(&tells_b), crate::tells::ByPitcher::new(&tells_a)],
        // Where each pitch goes, when the log has locations.
        regions: crate::audit::location::row_regions(log),
    };
    // Every change of every pitcher (each ready pitcher's place among the
    // ready ones indexes his tests), then the BH families.
    let ready_at: Vec<usize> = prepared
        .iter()
        .scan(0usize, |next, x| {
            let i = *next;
            *next += matches!(x, Prepared::Ready { .. }) as usize;
            Some(i)
        })
        .collect();
    let mut pitchers: Vec<PitcherChanges> = prepared
        .par_iter()
        .zip(&ready_at)
        .map(|(x, &i)| match x {
            Prepared::Short { pitcher, rows, why } => pitcher::short(log, *pitcher, rows, why),
            Prepared::Ready { pitcher, rows, fits } => {
                pitcher::ready(&run, *pitcher, rows, fits, &resampled[i], &swaps[i], per_season[i].clone())
            }
        })
        .collect();
    drop(run);
    timer.lap("compare: changes");
    let (tests, significant) = apply_families(&mut pitchers, labels, settings);
    let notes = compare_notes(log, sit, &source, &before, &after, &pitchers, permutations, settings);
    let summary = CompareSummary {
        tool: Tool::this(),
        input: Input::of(&source, log),
        settings: CompareSettingsOut::of(settings, permutations),
        periods: Periods { before, after },
        evaluation: CompareEvaluation {
            scheme: "cross-fitted".into(),
            blocks: settings.audit.forward_blocks(),
            description: format!(
                "Each period is scored on its own: a pitcher's games in the period, in date order, are dealt to {} groups, and each group is guessed by a model fitted on his other games of the period, so every game is scored by a model that did not see it. His tells in each period are found on its earlier games and checked on its last ones.",
                settings.audit.forward_blocks()
            ),
        },
        notes,
        tests,
        significant,
        pitchers,
    };
    Ok(Comparison { summary, rejected: left_out.rejected, set_aside: left_out.set_aside })
}

/// Each pitcher's rows in the before and the after period.
fn period_rows(log: &PitchLog, before: &Period, after: &Period) -> Vec<[Vec<u32>; 2]> {
    let mut rows_of: Vec<[Vec<u32>; 2]> = vec![[Vec::new(), Vec::new()]; log.pitchers.len()];
    for i in 0..log.len() {
        let p = log.pitcher[i] as usize;
        if before.rows[i] {
            rows_of[p][0].push(i as u32);
        } else if after.rows[i] {
            rows_of[p][1].push(i as u32);
        }
    }
    rows_of
}

/// Each ready pitcher's label-swap test of his predictability change, and
/// his before model's transfer to the after games. A pilot of each
/// pitcher's first deals (up to `PILOT`, until one reaches his change)
/// says how many clear changes the run holds,
/// to size each pitcher's early decision from the others' (as the audit's
/// whole-model test does); his own test then goes on from his pilot's
/// deals.
fn swap_tests(
    log: &PitchLog,
    sit: &Situations,
    ready: &[Ready],
    settings: &Settings,
    permutations: usize,
    show_progress: bool,
    timer: &crate::progress::Timer,
) -> Vec<(predictability::SwapResult, Option<f64>)> {
    use crate::audit::permute::{pilot_sizes, Member, Pilot};
    let bar = crate::progress::bar((ready.len() * permutations) as u64, "label swaps", show_progress);
    let tick = |n: u64| bar.inc(n);
    let deals: Vec<predictability::Deals> = ready
        .iter()
        .map(|(p, rows, fits)| {
            let name = log.pitchers[*p as usize].as_str();
            predictability::Deals::new(log, sit, *p, name, &rows[0], &rows[1], [&fits[0].cross, &fits[1].cross], settings)
        })
        .collect();
    let pilots: Vec<Pilot<predictability::Deal>> = deals.par_iter().map(|d| d.pilot(permutations)).collect();
    timer.lap("compare: label-swap pilots");
    let sizes = pilot_sizes(&pilots, settings.audit.fdr());
    let members = pilots.into_iter().zip(sizes).map(|(pilot, m1)| Member { known: pilot.nulls, decide_at: Some(m1) }).collect();
    let tests = predictability::swap_tests(&deals, members, permutations, settings, &tick);
    let transfers: Vec<Option<f64>> = ready.par_iter().map(|(p, rows, _)| predictability::transfer(log, sit, *p, &rows[0], &rows[1], settings)).collect();
    let swaps = tests.into_iter().zip(transfers).collect();
    bar.finish_and_clear();
    timer.lap("compare: label-swap tests");
    swaps
}

/// Each ready pitcher's figures season by season, when the log has more
/// than two seasons (none otherwise).
fn per_season_figures(log: &PitchLog, sit: &Situations, ready: &[Ready], settings: &Settings) -> Vec<Vec<PeriodFigures>> {
    let seasons = log.seasons();
    if seasons.len() <= 2 {
        return vec![Vec::new(); ready.len()];
    }
    // Each pitcher's rows, in log order, from one pass over the log.
    let mut rows_of: Vec<Vec<u32>> = vec![Vec::new(); log.pitchers.len()];
    for r in 0..log.len() {
        rows_of[log.pitcher[r] as usize].push(r as u32);
    }
    ready
        .par_iter()
        .map(|(p, _, _)| {
            let name = &log.pitchers[*p as usize];
            let mut out = Vec::new();
            for &s in &seasons {
                let rows: Vec<u32> = rows_of[*p as usize].iter().copied().filter(|&r| log.season[r as usize] == s).collect();
                let label = s.to_string();
                let Ok(task) = predictability::build_task(log, sit, *p, &rows, settings.audit.forward_blocks(), &label) else { continue };
                let Ok(fit) = predictability::fit_period(log, sit, task, settings, &label) else { continue };
                if fit.cross.n_train < settings.audit.min_train_pitches() || fit.cross.figures.n < settings.audit.min_test_pitches() {
                    continue;
                }
                let res = predictability::resample_period(&fit.cross.games, settings.compare.bootstrap(), seed64(settings.audit.seed(), name, &format!("bootstrap season {s}")));
                out.push(period_figures(&label, &fit, res.as_ref()));
            }
            out
        })
        .collect()
}

/// Three Benjamini–Hochberg families: the predictability tests (one per
/// pitcher) on their own, so many mix cells never bury them; the location
/// shifts, so a pitcher's many pitch types and regions never lower the bar
/// of the mix tests, nor theirs it; every other test (mixes, count by
/// count, new and dropped pitches). Then each change's words and each
/// pitcher's summary lines. Returns (tests, significant changes).
fn apply_families(pitchers: &mut [PitcherChanges], labels: [&str; 2], settings: &Settings) -> (usize, usize) {
    let family_of = |c: &Change| match c.family.as_str() {
        PREDICTABILITY_FAMILY => 0,
        LOCATION_FAMILY => 2,
        _ => 1,
    };
    let mut family_q: [std::vec::IntoIter<f64>; 3] = [0, 1, 2].map(|f| {
        let ps: Vec<f64> = pitchers
            .iter()
            .flat_map(|p| p.changes.iter().filter(|c| c.is_test() && family_of(c) == f).map(|c| c.p.unwrap_or(1.0).clamp(0.0, 1.0)))
            .collect();
        fdr::bh_q_values(&ps).into_iter()
    });
    let tests = pitchers.iter().map(|p| p.changes.iter().filter(|c| c.is_test()).count()).sum();
    for p in pitchers.iter_mut() {
        for c in p.changes.iter_mut().filter(|c| c.is_test()) {
            let q = family_q[family_of(c)].next().expect("one q per test");
            c.q = Some(q);
            c.significant = q <= settings.audit.fdr();
        }
        // A tell about a single count takes its count's mix-shift test.
        let count_tests: BTreeMap<String, (Option<f64>, Option<f64>, bool)> = p
            .changes
            .iter()
            .filter(|c| c.kind == "mix_shift")
            .filter_map(|c| c.situation.get("count").map(|k| (k.clone(), (c.p, c.q, c.significant))))
            .collect();
        for c in p.changes.iter_mut().filter(|c| !c.is_test()) {
            if c.situation.len() == 1 {
                if let Some((pv, qv, sig)) = c.situation.get("count").and_then(|k| count_tests.get(k)) {
                    c.test = format!("mix_shift count {}", c.situation["count"]);
                    c.p = *pv;
                    c.q = *qv;
                    c.significant = *sig;
                }
            }
        }
        for c in p.changes.iter_mut() {
            c.text = wording::change_text(c, labels[0], labels[1]);
        }
        if let Some(pr) = p.predictability.as_mut() {
            if let Some(c) = p.changes.iter().find(|c| c.kind == "predictability") {
                pr.q = c.q.unwrap_or(1.0);
            }
        }
        p.significant_changes = p.changes.iter().filter(|c| c.is_test() && c.significant).count();
        if p.is_ok() {
            p.summary_lines = wording::summary_lines(p, labels[0], labels[1], settings.audit.fdr());
            p.headline = wording::headline(p);
        }
    }
    let significant = pitchers.iter().map(|p| p.significant_changes).sum();
    (tests, significant)
}

/// The comparison's notes: its input, periods given in reverse order, and
/// too few label swaps for any predictability change to pass.
#[allow(clippy::too_many_arguments)]
fn compare_notes(
    log: &crate::ingest::PitchLog,
    sit: &Situations,
    source: &SourceInfo,
    before: &Period,
    after: &Period,
    pitchers: &[PitcherChanges],
    permutations: usize,
    settings: &Settings,
) -> Vec<String> {
    let mut notes = crate::audit::input_notes(log, sit, source, "left out of the tells");
    if before.first_date > after.first_date {
        notes.push(format!(
            "--before {} is later than --after {}: every \"rose\" and \"fell\" reads from the first to the second as given.",
            before.label, after.label
        ));
    }
    // The predictability changes form their own BH family (one test per
    // pitcher), so their bar is that family's.
    let tested: Vec<(&str, &crate::compare::summary::Predictability)> =
        pitchers.iter().filter_map(|p| p.predictability.as_ref().map(|pr| (p.pitcher.as_str(), pr))).collect();
    let family: Vec<crate::significance::budget::Outcome> = tested
        .iter()
        .map(|(_, pr)| crate::significance::budget::Outcome { p: pr.p, reached_none: pr.reached_none, decided_early: pr.decided_early, q: pr.q })
        .collect();
    let names: Vec<&str> = tested.iter().map(|(n, _)| *n).collect();
    // Changes no swap reached, left unflagged by the swaps' budget.
    if permutations == 0 && !family.is_empty() {
        notes.push(format!(
            "No label-swap test was run (`--permutations 0`): every predictability change's p- and q-value reads 1 and none is flagged, whatever its size. Run with `--permutations {}` to test them.",
            crate::domain::defaults::COMPARE_PERMUTATIONS
        ));
    } else if let Some(u) = crate::significance::budget::unresolved(&family, settings.audit.fdr()) {
        notes.push(crate::audit::wording::unresolved_note(
            "The predictability-change test",
            "label swap",
            &u,
            &names,
            u.enough_permutations(settings.audit.fdr(), permutations),
        ));
    } else if !family.is_empty() {
        // No change at the floor, but the floor itself may lie above the
        // bar one more flagged change would have to clear: BH rejects the
        // (R+1)-th smallest p-value when it is at most fdr·(R+1)/m.
        let flagged = family.iter().filter(|o| o.q <= settings.audit.fdr()).count();
        let cut = settings.audit.fdr() * (flagged as f64 + 1.0) / family.len() as f64;
        let minimum_p = 1.0 / (permutations as f64 + 1.0);
        if minimum_p > cut {
            let enough = crate::significance::budget::enough_for(cut / 2.0, permutations);
            notes.push(format!(
                "With {permutations} label swaps per pitcher the smallest p-value a predictability change can reach is {minimum_p:.4}, above the bar for one more of them to pass (about {cut:.4} among {} predictability tests): no further predictability change could pass. Run with --permutations {enough} or more to test it.",
                family.len()
            ));
        }
    }
    notes
}
