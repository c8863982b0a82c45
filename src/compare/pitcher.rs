//! One pitcher's changes between the two periods: either the counts and
//! why he cannot be compared, or every change with its test (before the
//! run's false-discovery control fills q-values and words).

use super::predictability::{PeriodFit, Resampled, SwapResult};
use super::summary::*;
use super::{
    blank, games_of, location_changes, mix, mix_changes, mix_map, period_figures, tallies, tell_change, tells_change,
    PREDICTABILITY_FAMILY,
};
use crate::ingest::PitchLog;
use crate::settings::Settings;
use crate::significance::Interval;
use crate::situations::Situations;
use crate::tells::ByPitcher;
use std::collections::BTreeMap;

/// What every compared pitcher reads from the run.
pub(super) struct Run<'a> {
    pub log: &'a PitchLog,
    pub sit: &'a Situations,
    pub labels: [&'a str; 2],
    pub settings: &'a Settings,
    /// Each period's tell tests, by pitcher.
    pub tells: [ByPitcher<'a>; 2],
    /// Each row's plate region, when the log has locations.
    pub regions: Option<Vec<u16>>,
}

/// A pitcher below the minimum samples in a period.
pub(super) fn short(log: &PitchLog, pitcher: u32, rows: &[Vec<u32>; 2], why: &str) -> PitcherChanges {
    let any = rows[0].first().or(rows[1].first());
    PitcherChanges {
        pitcher: log.pitchers[pitcher as usize].clone(),
        pitcher_id: log.pitcher_id(pitcher),
        throws: any.map(|&r| log.throws[r as usize].as_str().to_string()).unwrap_or_default(),
        status: "insufficient data".into(),
        n_before: rows[0].len(),
        n_after: rows[1].len(),
        games_before: games_of(log, &rows[0]),
        games_after: games_of(log, &rows[1]),
        mix_before: None,
        mix_after: None,
        mix_shift: None,
        predictability: None,
        seasons: Vec::new(),
        counts: Vec::new(),
        changes: Vec::new(),
        significant_changes: 0,
        headline: "insufficient data".into(),
        summary_lines: Vec::new(),
        cautions: vec![why.to_string()],
    }
}

/// A pitcher with both periods fitted: his mix, location, predictability
/// and tell changes.
pub(super) fn ready(
    run: &Run,
    pitcher: u32,
    rows: &[Vec<u32>; 2],
    fits: &[PeriodFit; 2],
    resampled: &[Option<Resampled>; 2],
    swap: &(SwapResult, Option<f64>),
    seasons: Vec<PeriodFigures>,
) -> PitcherChanges {
    let Run { log, sit, labels, settings, .. } = *run;
    let names = &log.pitch_types;
    let name = log.pitchers[pitcher as usize].clone();
    let mut types: Vec<u16> = rows[0].iter().chain(&rows[1]).map(|&r| log.pitch_type[r as usize]).collect();
    types.sort_unstable();
    types.dedup();
    let (tb, ta) = (tallies(log, &rows[0], &types), tallies(log, &rows[1], &types));
    let (all_b, all_a) = (&tb.all, &ta.all);
    let (mut changes, counts) = mix_changes(names, &name, &types, [&tb, &ta], settings);
    if let Some(regions) = &run.regions {
        changes.extend(location_changes(names, regions, log, &name, &types, rows, settings));
    }
    let fb = period_figures(labels[0], &fits[0], resampled[0].as_ref());
    let fa = period_figures(labels[1], &fits[1], resampled[1].as_ref());
    let bits_diff = fa.bits_gained - fb.bits_gained;
    let (swap, transfer) = swap;
    let bits_iv = Interval { low: swap.bits_interval.low.min(bits_diff), high: swap.bits_interval.high.max(bits_diff) };
    let mut pc = blank("predictability", BTreeMap::new(), fb.bits_gained, fa.bits_gained, bits_diff, "bits_difference", [fb.n_test, fa.n_test], None);
    pc.interval = Some(bits_iv);
    pc.test = mix::TestKind::LabelSwapPermutation.as_str().into();
    pc.statistic = Some(swap.t);
    pc.permutations = Some(swap.permutations);
    pc.p = Some(swap.p);
    pc.family = PREDICTABILITY_FAMILY.into();
    changes.push(pc);
    for t in tells_change::changes(log, sit, &name, &rows[0], &rows[1], run.tells[0].of(&name), run.tells[1].of(&name)) {
        changes.push(tell_change(&t));
    }
    let cautions = cautions_of(log, rows, [&fb, &fa], labels, settings);
    PitcherChanges {
        pitcher: name,
        pitcher_id: log.pitcher_id(pitcher),
        throws: log.throws[rows[0][0] as usize].as_str().to_string(),
        status: "ok".into(),
        n_before: rows[0].len(),
        n_after: rows[1].len(),
        games_before: games_of(log, &rows[0]),
        games_after: games_of(log, &rows[1]),
        mix_before: Some(mix_map(names, &types, all_b)),
        mix_after: Some(mix_map(names, &types, all_a)),
        mix_shift: crate::significance::resample::total_variation(
            &all_b.iter().map(|&x| x as f64).collect::<Vec<_>>(),
            &all_a.iter().map(|&x| x as f64).collect::<Vec<_>>(),
        ),
        predictability: Some(Predictability {
            before: fb,
            after: fa,
            bits_difference: bits_diff,
            bits_difference_interval: bits_iv,
            lift_difference: fits[1].cross.figures.lift - fits[0].cross.figures.lift,
            lift_difference_interval: swap.lift_interval,
            p: swap.p,
            q: 1.0,
            permutations: swap.permutations,
            stopped_early: swap.stopped_early,
            reached_none: swap.reached_none,
            decided_early: swap.decided_early,
            ruled_out: swap.ruled_out,
            studentised_statistic: swap.t,
            transfer_bits: *transfer,
            family: PREDICTABILITY_FAMILY.into(),
        }),
        seasons,
        counts,
        changes,
        significant_changes: 0,
        headline: String::new(),
        summary_lines: Vec::new(),
        cautions,
    }
}

/// What could mislead in his comparison: pitches for other clubs (with
/// --team), few held-out pitches, pitches of types new within a period.
fn cautions_of(log: &PitchLog, rows: &[Vec<u32>; 2], figures: [&PeriodFigures; 2], labels: [&str; 2], settings: &Settings) -> Vec<String> {
    let mut cautions = Vec::new();
    // With --team: where his pitches of each season came from, when not
    // all for the club.
    if let Some(team) = &settings.audit.team() {
        let by_team = crate::audit::pitches_by_team(log, rows[0].iter().chain(&rows[1]));
        if let Some(w) = crate::audit::wording::elsewhere_sentence(team, &by_team) {
            let gone = crate::audit::left_sentence(crate::audit::now_with(log, rows[0].iter().chain(&rows[1]), team).as_ref(), team);
            cautions.push(format!("{w}{gone} All of them are compared, since they are all his habits; a change of club can change how he pitches."));
        }
    }
    for (f, label) in figures.into_iter().zip(labels) {
        if f.n_test < 300 {
            cautions.push(format!(
                "Only {} held-out pitches in {label}: his predictability there rests on few pitches and can swing by chance.",
                f.n_test
            ));
        }
        if f.n_unseen_type > 0 {
            cautions.push(format!(
                "In {label}, {} held-out pitches were of a type he had not yet thrown earlier in the period; neither guess could know it, so they are left out of his predictability there.",
                f.n_unseen_type
            ));
        }
    }
    cautions
}
