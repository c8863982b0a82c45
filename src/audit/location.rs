//! Where he throws it: for each audited pitcher and each pitch type he
//! throws often enough, how well the plate region (situations::regions) of
//! the pitch can be guessed from the situation, held out, against his plain
//! region mix for that pitch type; a permutation test of it; and location
//! tells (a situation in which a pitch goes to one region far more, or
//! less, than elsewhere).
//!
//! It reuses the pitch-type machinery with other labels: a pitcher's pitches
//! of one type, with their region as the label, form a task of their own
//! ([`PitcherTask::subset`]) with his folds, blocks, games and situation
//! features; the same fit scores it, against the same kind of prior (his
//! region mix for that type on the training rows). The figures of his types
//! are pooled: bits gained per located pitch over all of them.
//!
//! The permutation test shuffles regions within pitcher × pitch type ×
//! season block (each sub-task's own strata) and refits every type, so his
//! mix of spots for each pitch, and any drift of it over the season, is
//! kept in the null. Tells are the pitch-type tells' tests (tells::find_in)
//! run per pitch type on region labels: sheet tells (count and batter side)
//! by Fisher's exact test, tells beyond the sheet by the stratified CMH
//! test, found on discovery rows and checked held out, with their own
//! false-discovery families.

use super::permute::{self, shuffle_within, PermutationResult};
use crate::evaluate::fit::{self, argmax, Stat, StatTotals, Workspace};
use crate::evaluate::task::PitcherTask;
use crate::ingest::PitchLog;
use crate::settings::Settings;
use crate::significance::fdr;
use crate::situations::regions::{count_group, region_of, CountGroup, Region, REGIONS};
use crate::situations::Situations;
use crate::tells::{self, Labels, TellTest, NO_LABEL};
use rand_chacha::ChaCha8Rng;
use rayon::prelude::*;
use serde::Serialize;
use std::collections::BTreeMap;

/// Each log row's region code, `NO_LABEL` where the log has no location for
/// it; `None` when the log has no location columns at all.
pub fn row_regions(log: &PitchLog) -> Option<Vec<u16>> {
    let (side, height) = (log.loc_side_ft.as_ref()?, log.loc_height_ft.as_ref()?);
    Some(
        (0..log.len())
            .map(|r| match (side[r], height[r]) {
                (Some(s), Some(h)) => region_of(s as f64, h as f64, log.bats[r]).code() as u16,
                _ => NO_LABEL,
            })
            .collect(),
    )
}

/// The region names, in code order (the label set of location tasks).
pub fn region_names() -> Vec<String> {
    Region::ALL.iter().map(|r| r.name().to_string()).collect()
}

/// One pitch type's location task.
pub struct TypePart {
    /// Global pitch type index.
    pub pitch_type: u16,
    pub task: PitcherTask,
}

/// A pitcher's location tasks.
pub struct PitcherLocation {
    pub parts: Vec<TypePart>,
    /// Pitch types left out: (global type, located pitches it has).
    pub left_out: Vec<(u16, usize)>,
}

impl PitcherLocation {
    /// Split a pitcher's task by pitch type, with regions as labels; a type
    /// enters with enough located pitches to learn from and to score.
    pub fn build(task: &PitcherTask, regions: &[u16], settings: &Settings) -> PitcherLocation {
        let mut parts = Vec::new();
        let mut left_out = Vec::new();
        for (cls, &gtype) in task.class_types.iter().enumerate() {
            let keep: Vec<u32> = (0..task.rows.len() as u32)
                .filter(|&i| task.labels[i as usize] as usize == cls && regions[task.rows[i as usize] as usize] != NO_LABEL)
                .collect();
            let mut present: Vec<u16> = keep.iter().map(|&i| regions[task.rows[i as usize] as usize]).collect();
            present.sort_unstable();
            present.dedup();
            let labels: Vec<u8> =
                keep.iter().map(|&i| present.binary_search(&regions[task.rows[i as usize] as usize]).unwrap() as u8).collect();
            let n = keep.len();
            let sub = task.subset(&keep, labels, present);
            if present_enough(&sub, settings) {
                parts.push(TypePart { pitch_type: gtype, task: sub });
            } else {
                left_out.push((gtype, n));
            }
        }
        PitcherLocation { parts, left_out }
    }

    pub fn has_figures(&self) -> bool {
        !self.parts.is_empty()
    }
}

fn present_enough(sub: &PitcherTask, settings: &Settings) -> bool {
    sub.n_classes >= 2 && sub.n_train() >= settings.location.min_train() && sub.n_test() >= settings.location.min_test()
}

/// Held-out figures of one fit of every type.
#[derive(Debug, Clone, Default)]
struct Pooled {
    totals: StatTotals,
    /// Held-out pitches the model and the prior guessed right.
    model_right: usize,
    prior_right: usize,
    scored: usize,
    by_type: Vec<(u16, StatTotals, usize, usize, usize)>,
}

fn observe(loc: &PitcherLocation, settings: &Settings) -> Pooled {
    let mut out = Pooled::default();
    for part in &loc.parts {
        let t = &part.task;
        let mut ws = Workspace::new(t);
        let scored = fit::observe(t, &t.labels, settings, &mut ws);
        let (mut m, mut p) = (0, 0);
        for (i, &r) in scored.rows.iter().enumerate() {
            let y = t.labels[r as usize] as usize;
            m += (argmax(scored.model_row(i)) == y) as usize;
            p += (argmax(scored.prior_row(i)) == y) as usize;
        }
        out.totals.add(&scored.totals);
        out.model_right += m;
        out.prior_right += p;
        out.scored += scored.rows.len();
        out.by_type.push((part.pitch_type, scored.totals, scored.rows.len(), m, p));
    }
    out
}

/// The RNG of location permutation `j` of a pitcher.
fn location_rng(seed: u64, pitcher: &str, j: u64) -> ChaCha8Rng {
    permute::keyed_rng(b"tellscope location v1", seed, pitcher, j)
}

/// A location test's reusable state: per type, its fit workspace and labels.
pub type Scratch = Vec<(Workspace, Vec<u8>)>;

/// A pitcher's location scratch (one per worker).
pub fn scratch(loc: &PitcherLocation) -> Scratch {
    loc.parts.iter().map(|p| (Workspace::new(&p.task), p.task.labels.clone())).collect()
}

/// Permutation `j`: every type's regions shuffled within its blocks by one
/// stream (types in order), every type refitted, the pooled statistic.
pub fn null_statistic(loc: &PitcherLocation, name: &str, settings: &Settings, j: u64, s: &mut Scratch) -> Stat {
    let mut rng = location_rng(settings.audit.seed(), name, j);
    let mut total = StatTotals::default();
    for (part, (ws, labels)) in loc.parts.iter().zip(s.iter_mut()) {
        labels.copy_from_slice(&part.task.labels);
        shuffle_within(labels, &part.task.strata, &mut rng);
        let scored = fit::refit(&part.task, labels, settings, ws);
        total.add(&scored.totals);
    }
    total.bits_stat()
}

fn pilot(loc: &PitcherLocation, name: &str, observed: Stat, settings: &Settings) -> permute::Pilot {
    permute::pilot(scratch(loc), permute::pilot_len(settings.audit.permutations()), |j, s| null_statistic(loc, name, settings, j, s), |v| {
        v.reaches(&observed)
    })
}

/// A pitcher's location figures (`location` in summary.json).
#[derive(Debug, Clone, Serialize)]
pub struct LocationFigures {
    /// Held-out bits per located pitch the situational model of his region
    /// gains over his plain region mix of each pitch type.
    pub bits_gained: f64,
    pub p_value: f64,
    pub q_value: f64,
    /// Held-out located pitches scored.
    pub n: usize,
    pub significant: bool,
    pub permutations: usize,
    /// No permutation reached the observed statistic.
    #[serde(skip)]
    pub reached_none: bool,
    /// Stopped as a clear effect, at the early decision's size.
    pub decided_early: bool,
    /// Stopped once no outcome of its remaining permutations could get it
    /// flagged among the location tests: its p-value is that of the
    /// permutations drawn, an estimate.
    pub ruled_out: bool,
    /// Held-out guess-right rate of the situational model's region, and of
    /// always guessing each pitch type's most used region.
    pub model_accuracy: f64,
    pub prior_accuracy: f64,
    pub by_type: Vec<LocationType>,
    /// Pitch types with too few located pitches for figures.
    pub left_out: Vec<LeftOutType>,
}

#[derive(Debug, Clone, Serialize)]
pub struct LocationType {
    pub pitch_type: String,
    pub n: usize,
    pub bits_gained: f64,
    pub model_accuracy: f64,
    pub prior_accuracy: f64,
}

#[derive(Debug, Clone, Serialize)]
pub struct LeftOutType {
    pub pitch_type: String,
    pub located_pitches: usize,
}

/// A location tell (`location_tells` in summary.json).
#[derive(Debug, Clone, Serialize)]
pub struct LocationTell {
    #[serde(serialize_with = "crate::tells::ser_situation")]
    pub situation: tells::Situation,
    pub pitch_type: String,
    pub region: String,
    pub direction: tells::Direction,
    pub layer: tells::Layer,
    pub n: usize,
    pub share: f64,
    pub baseline_share: f64,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub expected_share: Option<f64>,
    pub p_value: f64,
    pub q_value: f64,
    pub held_out_n: usize,
    pub held_out_share: Option<f64>,
    pub verdict: tells::Verdict,
    /// The tell in a sentence.
    pub text: String,
}

impl LocationTell {
    pub fn of(t: &TellTest, checked_on: &str) -> LocationTell {
        LocationTell {
            situation: t.situation.clone(),
            pitch_type: t.pitch_type.clone(),
            region: t.region.clone().unwrap_or_default(),
            direction: t.direction,
            layer: t.layer,
            n: t.n,
            share: t.share,
            baseline_share: t.baseline_share,
            expected_share: t.expected_share,
            p_value: t.p_value,
            q_value: t.q_value,
            held_out_n: t.held_out_n,
            held_out_share: t.held_out_share,
            verdict: t.verdict,
            text: super::wording::location_sentence(t, checked_on),
        }
    }
}

/// Where each pitch type goes by count group, for the chart: shares of
/// the 13 regions, in code order, with the pitches they rest on.
#[derive(Debug, Clone, Serialize)]
pub struct RegionMix {
    pub pitch_type: String,
    pub count_group: String,
    pub n: usize,
    pub shares: BTreeMap<String, f64>,
}

/// Everything the location stage gives the audit.
pub struct LocationAudit {
    /// Per audited pitcher (the audit's order): his figures, when any type
    /// had enough located pitches.
    pub figures: Vec<Option<LocationFigures>>,
    /// Per audited pitcher: where each pitch type goes by count group.
    pub mixes: Vec<Vec<RegionMix>>,
    /// Every location tell test (flagged or not), `region` set.
    pub tests: Vec<TellTest>,
    /// No location columns in the log.
    pub missing: bool,
}

/// The location stage over the audited pitchers' tasks.
pub fn audit(
    log: &PitchLog,
    sit: &Situations,
    discovery: &[bool],
    tasks: &[&PitcherTask],
    settings: &Settings,
    progress: &(dyn Fn(u64) + Sync),
) -> LocationAudit {
    let Some(regions) = row_regions(log) else {
        return LocationAudit { figures: tasks.iter().map(|_| None).collect(), mixes: tasks.iter().map(|_| Vec::new()).collect(), tests: Vec::new(), missing: true };
    };
    let names = region_names();
    let timer = crate::progress::Timer::start();
    let locs: Vec<PitcherLocation> = tasks.par_iter().map(|t| PitcherLocation::build(t, &regions, settings)).collect();
    let observed: Vec<Pooled> = locs.par_iter().map(|l| observe(l, settings)).collect();
    timer.lap("location: tasks and observed fits");
    let with: Vec<usize> = (0..locs.len()).filter(|&i| locs[i].has_figures()).collect();
    let pilots: Vec<permute::Pilot> =
        with.par_iter().map(|&i| pilot(&locs[i], &tasks[i].name, observed[i].totals.bits_stat(), settings)).collect();
    let sizes = permute::pilot_sizes(&pilots, settings.audit.fdr());
    timer.lap("location: pilots");
    // One BH family: a test that can no longer be flagged in it stops.
    let stats: Vec<Stat> = with.iter().map(|&i| observed[i].totals.bits_stat()).collect();
    let members = pilots.into_iter().zip(sizes).map(|(pilot, m1)| permute::Member { known: pilot.nulls, decide_at: Some(m1) }).collect();
    let perms: Vec<PermutationResult> = permute::drive_family(&stats, members, settings, progress, |w| scratch(&locs[with[w]]), |w, j, s| {
        let i = with[w];
        null_statistic(&locs[i], &tasks[i].name, settings, j, s)
    });
    timer.lap("location: permutation tests");
    let q = fdr::bh_q_values(&perms.iter().map(|p| p.p_value).collect::<Vec<_>>());
    let mut figures: Vec<Option<LocationFigures>> = tasks.iter().map(|_| None).collect();
    for (w, &i) in with.iter().enumerate() {
        let o = &observed[i];
        let n = o.totals.n;
        let scored = o.scored.max(1) as f64;
        figures[i] = Some(LocationFigures {
            bits_gained: o.totals.bits_stat().primary,
            p_value: perms[w].p_value,
            q_value: q[w],
            n,
            significant: q[w] <= settings.audit.fdr(),
            permutations: perms[w].permutations,
            reached_none: perms[w].reached_none,
            decided_early: perms[w].decided_early,
            ruled_out: perms[w].ruled_out,
            model_accuracy: o.model_right as f64 / scored,
            prior_accuracy: o.prior_right as f64 / scored,
            by_type: o
                .by_type
                .iter()
                .map(|(t, tot, sc, m, p)| LocationType {
                    pitch_type: log.pitch_types[*t as usize].clone(),
                    n: tot.n,
                    bits_gained: tot.bits_stat().primary,
                    model_accuracy: *m as f64 / (*sc).max(1) as f64,
                    prior_accuracy: *p as f64 / (*sc).max(1) as f64,
                })
                .collect(),
            left_out: left_out(log, &locs[i]),
        });
    }
    let tests = location_tests(log, sit, discovery, &locs, &regions, &names, settings);
    timer.lap("location: tells");
    let mixes = tasks.iter().map(|t| region_mixes(log, t, &regions)).collect();
    LocationAudit { figures, mixes, tests, missing: false }
}

fn left_out(log: &PitchLog, loc: &PitcherLocation) -> Vec<LeftOutType> {
    loc.left_out.iter().map(|&(t, n)| LeftOutType { pitch_type: log.pitch_types[t as usize].clone(), located_pitches: n }).collect()
}

/// The pitch-type tells' tests run on regions, one pitch type at a time
/// (the staff's shares are of that type's pitches), then one
/// false-discovery control over all of them. Single factors only, and only
/// "more often there": with thirteen regions, every pair and both
/// directions would make millions of tests on a league (memory), while a
/// coach reads a location tell as "in this situation it goes there".
fn location_tests(
    log: &PitchLog,
    sit: &Situations,
    discovery: &[bool],
    locs: &[PitcherLocation],
    regions: &[u16],
    names: &[String],
    settings: &Settings,
) -> Vec<TellTest> {
    let mut types: Vec<u16> = locs.iter().flat_map(|l| l.parts.iter().map(|p| p.pitch_type)).collect();
    types.sort_unstable();
    types.dedup();
    // Per type: every test's (layer, pitcher, p) for the false-discovery
    // control, and in full only those that could be flagged (q ≥ p, so a
    // test with p above fdr never is): a league's location tests run to
    // millions, too many to keep whole.
    let pitcher_of: std::collections::HashMap<&str, u32> = locs.iter().flat_map(|l| l.parts.first()).map(|p| (p.task.name.as_str(), p.task.pitcher)).collect();
    type Compact = (tells::Layer, u32, f64);
    let per_type: Vec<(Vec<Compact>, Vec<(usize, TellTest)>)> = types
        .par_iter()
        .map(|&t| {
            let of_row: Vec<u16> = (0..log.len()).map(|r| if log.pitch_type[r] == t { regions[r] } else { NO_LABEL }).collect();
            let tasks: Vec<&PitcherTask> = locs.iter().flat_map(|l| l.parts.iter()).filter(|p| p.pitch_type == t).map(|p| &p.task).collect();
            let found = tells::find_in(log, sit, discovery, &tasks, settings, &Labels { of_row: &of_row, names, pairs: false, less: false });
            let compact: Vec<Compact> = found.iter().map(|f| (f.layer, pitcher_of[f.pitcher.as_str()], f.p_value)).collect();
            let kept = found
                .into_iter()
                .enumerate()
                .filter(|(_, f)| f.p_value <= settings.audit.fdr())
                .map(|(i, mut f)| {
                    f.region = Some(std::mem::replace(&mut f.pitch_type, log.pitch_types[t as usize].clone()));
                    (i, f)
                })
                .collect();
            (compact, kept)
        })
        .collect();
    // Global positions of each type's tests, then each layer's control.
    let mut all: Vec<Compact> = Vec::new();
    let mut kept: Vec<(usize, TellTest)> = Vec::new();
    for (compact, k) in per_type {
        let base = all.len();
        kept.extend(k.into_iter().map(|(i, f)| (base + i, f)));
        all.extend(compact);
    }
    let mut q = vec![1.0; all.len()];
    let mut family_q = vec![1.0; all.len()];
    for layer in [tells::Layer::Sheet, tells::Layer::Beyond] {
        let at: Vec<usize> = (0..all.len()).filter(|&i| all[i].0 == layer).collect();
        let keys: Vec<u32> = at.iter().map(|&i| all[i].1).collect();
        let p: Vec<f64> = at.iter().map(|&i| all[i].2).collect();
        let (lq, lf) = tells::fdr_q_values(&keys, &p, settings);
        for ((&i, a), b) in at.iter().zip(lq).zip(lf) {
            q[i] = a;
            family_q[i] = b;
        }
    }
    // Sheet tests first, then beyond, each in test order (as tells::finish).
    kept.sort_by_key(|(i, f)| (f.layer != tells::Layer::Sheet, *i));
    let mut tests: Vec<TellTest> = kept
        .into_iter()
        .map(|(i, mut f)| {
            f.q_value = q[i];
            f.family_q = family_q[i];
            f
        })
        .collect();
    tells::flag(&mut tests, settings);
    tests
}

/// Where each of his pitch types goes, by count group (all his located
/// pitches).
fn region_mixes(log: &PitchLog, task: &PitcherTask, regions: &[u16]) -> Vec<RegionMix> {
    // One pass: counts by (his class, count group, region).
    let groups = CountGroup::ALL.len();
    let mut c = vec![[0usize; REGIONS]; task.n_classes * groups];
    for (i, &r) in task.rows.iter().enumerate() {
        let r = r as usize;
        if regions[r] != NO_LABEL {
            let g = count_group(log.balls[r], log.strikes[r]) as usize;
            c[task.labels[i] as usize * groups + g][regions[r] as usize] += 1;
        }
    }
    let mut out = Vec::new();
    for (cls, &t) in task.class_types.iter().enumerate() {
        for (gi, g) in CountGroup::ALL.iter().enumerate() {
            let c = &c[cls * groups + gi];
            let n: usize = c.iter().sum();
            if n == 0 {
                continue;
            }
            out.push(RegionMix {
                pitch_type: log.pitch_types[t as usize].clone(),
                count_group: g.name().into(),
                n,
                shares: Region::ALL.iter().map(|r| (r.name().to_string(), c[r.code() as usize] as f64 / n as f64)).collect(),
            });
        }
    }
    out
}

/// Why a pitcher has no location figures, in words (None when he has them).
pub fn note(figures: &Option<LocationFigures>, missing: bool, settings: &Settings) -> Option<String> {
    if figures.is_some() {
        return None;
    }
    Some(if missing {
        "No location figures: the log has no location columns to use (see the notes).".to_string()
    } else {
        format!(
            "No location figures: no pitch type of his has {} located pitches to learn from and {} to score.",
            crate::domain::numbers::fmt_n(settings.location.min_train()), crate::domain::numbers::fmt_n(settings.location.min_test())
        )
    })
}
