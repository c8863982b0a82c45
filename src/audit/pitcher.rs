//! One pitcher's summary, from his task and the run's tests: either the
//! counts and the reason he has no figures, or his scored figures with
//! their margins, cautions, tells and location.

use super::summary::*;
use super::{count_summaries, headline, location, mix_of, pitches_by_team, sheet, wording, Tested};
use crate::domain::levels::{Hand, HandTally};
use crate::domain::numbers::fmt_n;
use crate::evaluate::task::PitcherTask;
use crate::evaluate::split::PitcherEvaluation;
use crate::ingest::PitchLog;
use crate::outcomes::SituationOutcomes;
use crate::settings::Settings;
use crate::situations::Situations;
use crate::tells;
use std::collections::{BTreeMap, BTreeSet};

/// What every pitcher's summary says, figures or not.
pub(super) struct About {
    /// His `pitcher` value when he is shown by name (`pitcher_name`).
    pitcher_id: Option<String>,
    throws: String,
    /// His usual throwing hand (`throws`).
    hand: Hand,
    pitches_by_season: BTreeMap<i32, usize>,
    pitches_by_team: Vec<TeamPitches>,
    /// With --team: the club of his latest pitch, when it is another.
    now_with: Option<String>,
    /// With --team: his pitches for other clubs, in words.
    team_caution: Option<String>,
    /// When the log lists him with both throwing hands, in words.
    hand_caution: Option<String>,
    /// When his latest season is older than the log's, in words.
    gone_caution: Option<String>,
}

impl About {
    /// `all_rows`: every row of his in the log (the task's rows leave out
    /// seasons older than the models learn from); `latest`: the log's
    /// latest season, when each pitcher is scored on his own latest one.
    pub(super) fn of(log: &PitchLog, task: &PitcherTask, all_rows: &[u32], latest: Option<i32>, settings: &Settings) -> About {
        // His usual hand; a pitcher listed with both hands is said so.
        let tally = HandTally::of(task.rows.iter().map(|&r| log.throws[r as usize])).expect("a task has rows");
        let usual = tally.usual();
        let throws = usual.as_str().to_string();
        let hand_caution = (tally.other > 0).then(|| {
            let (n_usual, n_other) = tally.split();
            let (hand, other_hand) = if usual == Hand::L { ("left", "right") } else { ("right", "left") };
            format!(
                "The log lists him throwing with both hands ({} pitches {hand}-handed, {} {other_hand}-handed): batter side and platoon are read pitch by pitch, and he is shown as a {hand}-handed pitcher. If he throws with one hand, check the log's `throws` column; if two pitchers share his name in the log, give each his own id in `pitcher`.",
                fmt_n(n_usual),
                fmt_n(n_other),
            )
        });
        let mut pitches_by_season = BTreeMap::new();
        for &r in all_rows {
            *pitches_by_season.entry(log.season[r as usize]).or_insert(0usize) += 1;
        }
        let pitches_by_team = match settings.audit.team() {
            Some(_) => pitches_by_team(log, &task.rows),
            None => Vec::new(),
        };
        let now_with = settings.audit.team().as_ref().and_then(|team| super::now_with(log, all_rows, team));
        let team_caution = settings.audit.team().as_ref().and_then(|team| {
            wording::elsewhere_sentence(team, &pitches_by_team).map(|w| {
                let gone = super::left_sentence(now_with.as_ref(), team);
                format!("{w}{gone} All of them are used here, since they are all his habits; how he pitched for another club may differ from how he pitches for this one.")
            })
        });
        // A pitcher gone from the log before its latest season (a former
        // member of the staff) is scored on his own last season.
        let gone_caution = latest.and_then(|latest| {
            super::summary::gone_since(&pitches_by_season, latest).map(|his| {
                format!("He last pitched in {his} in this log, which runs to {latest}: his figures describe him then, and a hitter facing him now may see a different pitcher.")
            })
        });
        let pitcher_id = log.pitcher_id(task.pitcher);
        About { pitcher_id, throws, hand: usual, pitches_by_season, pitches_by_team, now_with, team_caution, hand_caution, gone_caution }
    }
}

/// One pitcher's result: no figures, with his counts and the reason; or his
/// scored figures.
pub(super) enum PitcherResult {
    Insufficient(Box<Insufficient>),
    Scored(Box<Scored>),
}

/// A pitcher below the minimum sample.
pub(super) struct Insufficient {
    name: String,
    about: About,
    n_train: usize,
    n_test: usize,
    evaluation: PitcherEvaluation,
    /// Why he has no figures, in words.
    reason: String,
}

/// An audited pitcher: his summary and his outcome figures by situation.
pub(super) struct Scored {
    summary: PitcherSummary,
    by_situation: Vec<SituationOutcomes>,
}

impl PitcherResult {
    /// The pitcher's `summary.json` entry and the outcome rows he adds to
    /// `outcomes.csv` (none without figures).
    pub(super) fn into_parts(self) -> (PitcherSummary, Vec<SituationOutcomes>) {
        match self {
            PitcherResult::Insufficient(i) => (i.into_summary(), Vec::new()),
            PitcherResult::Scored(s) => (s.summary, s.by_situation),
        }
    }
}

/// A pitcher below the minimum sample: his counts and the reason.
pub(super) fn insufficient(task: &PitcherTask, about: About, settings: &Settings) -> PitcherResult {
    let reason = format!(
        "{} pitches in the log ({}); the models could learn from at most {} of them and score {}, and at least {} to learn from and {} to score are needed before any figure is shown",
        fmt_n(about.pitches_by_season.values().sum::<usize>()),
        about.pitches_by_season.iter().map(|(y, n)| format!("{} in {y}", fmt_n(*n))).collect::<Vec<_>>().join(", "),
        fmt_n(task.n_train()),
        fmt_n(task.n_test()),
        fmt_n(settings.audit.min_train_pitches()),
        fmt_n(settings.audit.min_test_pitches())
    );
    PitcherResult::Insufficient(Box::new(Insufficient {
        name: task.name.clone(),
        about,
        n_train: task.n_train(),
        n_test: task.n_test(),
        evaluation: task.evaluation.clone(),
        reason,
    }))
}

impl Insufficient {
    /// His entry: counts, evaluation and reason; every figure empty.
    fn into_summary(self: Box<Self>) -> PitcherSummary {
        let Insufficient { name, about, n_train, n_test, evaluation, reason } = *self;
        PitcherSummary {
            pitcher: name,
            pitcher_id: about.pitcher_id,
            throws: about.throws,
            status: "insufficient data".into(),
            n_train,
            n_test,
            pitches_by_season: about.pitches_by_season,
            pitches_by_team: about.pitches_by_team,
            now_with: about.now_with,
            evaluation,
            cautions: vec![format!("No figures: {reason}.")],
            reason: Some(reason),
            mix: None,
            test_mix: None,
            prior_pitch: None,
            prior_accuracy: None,
            model_accuracy: None,
            lift: None,
            bits_gained: None,
            bits_margin: None,
            lift_margin: None,
            p_value: None,
            q_value: None,
            permutations: None,
            stopped_early: None,
            decided_early: None,
            significant: None,
            observed_statistic: None,
            null_statistics: Vec::new(),
            counts: Vec::new(),
            types: Vec::new(),
            tells: Vec::new(),
            rules: Vec::new(),
            n_unseen_type: None,
            arsenal_changes: Vec::new(),
            called_outcomes: None,
            outcomes_by_type: Vec::new(),
            sheet: Vec::new(),
            sheet_season: None,
            sheet_bits: None,
            beyond_bits: None,
            league_percentile: None,
            beyond_p_value: None,
            beyond_q_value: None,
            beyond_permutations: None,
            beyond_significant: None,
            beyond_ruled_out: None,
            beyond_decided_early: None,
            headline: Vec::new(),
            tell_family_q: None,
            location: None,
            location_tells: Vec::new(),
            location_mix: Vec::new(),
            location_note: None,
        }
    }
}

/// What every audited pitcher's summary reads from the run.
pub(super) struct Run<'a> {
    pub log: &'a PitchLog,
    pub sit: &'a Situations,
    pub tested: &'a Tested,
    /// Every fitted pitcher's (pitcher, bits gained, beyond the sheet), for
    /// percentiles.
    pub figures: &'a [(u32, f64, f64)],
    pub tells: tells::ByPitcher<'a>,
    pub location_tells: tells::ByPitcher<'a>,
    pub settings: &'a Settings,
}

/// The result of the `at`-th audited pitcher: his summary and his outcome
/// figures by situation.
pub(super) fn scored(run: &Run, task: &PitcherTask, about: About, at: usize) -> PitcherResult {
    let Run { log, sit, tested, figures, settings, .. } = *run;
    let names = &log.pitch_types;
    let o = &tested.observed[at];
    let perm = &tested.perms[at];
    let q = tested.model_q[at];
    let bperm = &tested.beyond_perms[at];
    let bq = tested.beyond_q[at];
    let location_tells: Vec<location::LocationTell> = tells::flagged_sorted(run.location_tells.of(&task.name))
        .into_iter()
        .filter(|t| t.within.is_none())
        .map(|t| location::LocationTell::of(t, &task.evaluation.tells_checked_on))
        .collect();
    let loc_figures = tested.location.figures[at].clone();
    let location_note = location::note(&loc_figures, tested.location.missing, settings);
    let (sheet_cells, sheet_season) = sheet::sheet(
        task,
        |i| log.season[task.rows[i] as usize],
        |i| log.throws[task.rows[i] as usize],
        names,
        settings,
        (&tested.league_cells, about.hand),
    );
    let train_rows = &task.folds.last().unwrap().train;
    let mix = mix_of(names, task, train_rows);
    let test_mix = mix_of(names, task, &task.held_out);
    let usage = &o.scored.usage[o.scored.usage.len() - 1];
    let prior_pitch = names[task.class_types[usage.top] as usize].clone();
    let his = run.tells.of(&task.name);
    let flagged = tells::flagged_sorted(his);
    let counts = count_summaries(task, o, his, names, settings);
    let (margin, lift_margin) = margins(task, o);
    let arsenal_changes = arsenal_changes(task, names, &test_mix, settings);
    let mut cautions: Vec<String> = about.gone_caution.iter().chain(&about.team_caution).chain(&about.hand_caution).cloned().collect();
    cautions.extend(cautions_of(task, o, margin, &mix, &test_mix, &arsenal_changes));
    let rules = wording::rules(task, &o.scored, names);
    let headline = headline(&sheet_cells, &flagged, &task.evaluation.tells_checked_on);
    let called = crate::outcomes::called_outcomes(log, task, &o.scored, names);
    let bits = o.figures.bits_gained;
    let summary = PitcherSummary {
        pitcher: task.name.clone(),
        pitcher_id: about.pitcher_id,
        throws: about.throws,
        status: "ok".into(),
        n_train: task.n_train(),
        n_test: task.n_test(),
        pitches_by_season: about.pitches_by_season,
        pitches_by_team: about.pitches_by_team,
        now_with: about.now_with,
        evaluation: task.evaluation.clone(),
        reason: None,
        mix: Some(mix),
        test_mix: Some(test_mix),
        prior_pitch: Some(prior_pitch),
        prior_accuracy: Some(o.figures.prior_accuracy),
        model_accuracy: Some(o.figures.model_accuracy),
        lift: Some(o.figures.lift),
        bits_gained: Some(bits),
        bits_margin: Some(margin),
        lift_margin: Some(lift_margin),
        p_value: Some(perm.p_value),
        q_value: Some(q),
        permutations: Some(perm.permutations),
        stopped_early: Some(perm.stopped_early),
        decided_early: Some(perm.decided_early),
        significant: Some(q <= settings.audit.fdr()),
        observed_statistic: Some(perm.observed),
        null_statistics: perm.null.clone(),
        counts,
        types: o.types.clone(),
        tells: flagged.into_iter().cloned().collect(),
        rules,
        n_unseen_type: Some(o.scored.unseen),
        arsenal_changes,
        called_outcomes: called,
        outcomes_by_type: crate::outcomes::by_type(log, task, names),
        sheet: sheet_cells,
        sheet_season: Some(sheet_season),
        sheet_bits: Some(o.sheet_bits),
        beyond_bits: Some(bits - o.sheet_bits),
        league_percentile: league_percentile(figures, task.pitcher, bits, bits - o.sheet_bits),
        beyond_p_value: Some(bperm.p_value),
        beyond_q_value: Some(bq),
        beyond_permutations: Some(bperm.permutations),
        beyond_significant: Some(bq <= settings.audit.fdr()),
        beyond_ruled_out: Some(bperm.ruled_out),
        beyond_decided_early: Some(bperm.decided_early),
        headline,
        tell_family_q: his.first().map(|t| t.family_q),
        cautions,
        location: loc_figures,
        location_tells,
        location_mix: tested.location.mixes[at].clone(),
        location_note,
    };
    PitcherResult::Scored(Box::new(Scored { summary, by_situation: crate::outcomes::by_situation(log, sit, task, names) }))
}

/// Where his figures stand among every other fitted pitcher's.
fn league_percentile(figures: &[(u32, f64, f64)], p: u32, bits: f64, beyond: f64) -> Option<LeaguePercentile> {
    let others: Vec<&(u32, f64, f64)> = figures.iter().filter(|x| x.0 != p).collect();
    let b: Vec<f64> = others.iter().map(|x| x.1).collect();
    let y: Vec<f64> = others.iter().map(|x| x.2).collect();
    Some(LeaguePercentile {
        bits: crate::league::percentile_of_score(&b, bits)?,
        beyond_bits: crate::league::percentile_of_score(&y, beyond)?,
        among: others.len(),
    })
}

/// Margins of bits gained and of lift under no situational signal.
fn margins(task: &PitcherTask, o: &super::Observed) -> (f64, f64) {
    let n_leaves = o.scored.trees.iter().map(|t| t.n_leaves()).max().unwrap_or(1);
    // Bits: the expected overfit of L leaves × (K − 1) free shares fitted
    // on n training pitches, L(K−1)/(2n) nats per pitch (the asymptotic
    // chi-square of a likelihood ratio, as in Akaike's information
    // criterion), plus three standard errors of the held-out mean.
    let margin = (n_leaves as f64 * (task.n_classes as f64 - 1.0)) / (2.0 * task.n_train() as f64 * std::f64::consts::LN_2)
        + 3.0 * o.sd_log_ratio / (task.n_test() as f64).sqrt();
    // Lift: three standard errors of the difference of two paired
    // accuracies, sqrt(b + c) / n with b + c the discordant pitches (the
    // McNemar standard error; Agresti 2013, Categorical Data Analysis,
    // 10.1), relative to the prior's accuracy.
    let n_scored = o.scored.rows.len().max(1) as f64;
    let lift_margin = 3.0 * (o.discordant as f64).sqrt() / n_scored / o.figures.prior_accuracy.max(1e-9);
    (margin, lift_margin)
}

/// A changed arsenal: his mix where tells are found (earlier seasons, or
/// the first half of his only season) against where they are checked.
fn arsenal_changes(task: &PitcherTask, names: &[String], test_mix: &BTreeMap<String, f64>, settings: &Settings) -> Vec<ArsenalChange> {
    let found_mix = mix_of(names, task, &task.discovery);
    let mut changes = Vec::new();
    for t in found_mix.keys().chain(test_mix.keys()).collect::<BTreeSet<_>>() {
        let before = found_mix.get(t).copied().unwrap_or(0.0);
        let after = test_mix.get(t).copied().unwrap_or(0.0);
        if after >= settings.compare.new_pitch_share() && before < settings.compare.absent_share() {
            changes.push(ArsenalChange { pitch_type: t.clone(), change: "added".into(), before, after, in_place_of: None });
        } else if before >= settings.compare.new_pitch_share() && after < settings.compare.absent_share() {
            changes.push(ArsenalChange { pitch_type: t.clone(), change: "dropped".into(), before, after, in_place_of: None });
        }
    }
    // A pitch added as one of about its share (within 30%) was dropped may
    // be that pitch under a new name. One pitcher's mix drifts between
    // seasons, so a pitch merely giving way to a new one is not taken for
    // it (the run's note finds partial renames across pitchers). A dropped
    // label written the same but for case, spaces or punctuation is that
    // pitch whatever its share.
    let dropped: Vec<(String, f64, f64)> =
        changes.iter().filter(|c| c.change == "dropped").map(|c| (c.pitch_type.clone(), c.before, c.after)).collect();
    for c in changes.iter_mut().filter(|c| c.change == "added") {
        let key = crate::domain::labels::loose_name(&c.pitch_type);
        let same_name = |t: &str| crate::domain::labels::loose_name(t) == key;
        c.in_place_of = dropped
            .iter()
            .find(|(t, _, _)| same_name(t))
            .or_else(|| {
                dropped
                    .iter()
                    .filter(|(_, b, _)| (c.after - b).abs() <= 0.3 * b)
                    .min_by(|x, y| (c.after - x.1).abs().total_cmp(&(c.after - y.1).abs()))
            })
            .map(|(t, before, after)| ReplacedLabel { pitch_type: t.clone(), before: *before, after: *after });
    }
    changes
}

/// What could mislead in his figures, in words: few held-out pitches, a
/// changed arsenal or mix, a guess that did worse than his plain mix.
fn cautions_of(
    task: &PitcherTask,
    o: &super::Observed,
    margin: f64,
    mix: &BTreeMap<String, f64>,
    test_mix: &BTreeMap<String, f64>,
    arsenal_changes: &[ArsenalChange],
) -> Vec<String> {
    let mut cautions = Vec::new();
    if task.n_test() < 300 {
        cautions.push(format!(
            "Only {} held-out pitches: per-count figures rest on few pitches and can swing by chance.",
            task.n_test()
        ));
    }
    // A pitch he now "drops" because the log renamed it is told in the
    // added pitch's caution.
    let renamed_away = |old: &str| arsenal_changes.iter().any(|a| a.in_place_of.as_ref().is_some_and(|r| r.pitch_type == old));
    for c in arsenal_changes {
        let (what, t) = (&c.change, &c.pitch_type);
        if what == "dropped" && renamed_away(t) {
            continue;
        }
        cautions.push(if what == "added" {
            let renamed = c
                .in_place_of
                .as_ref()
                .map(|r| {
                    format!(
                        " It came in as his {old} went out ({:.0}% before, {:.1}% now): if the {t} is his {old} under a new name (the log writing his {old}s as \"{t}\"), merge the two with [pitch_groups] and run again.",
                        100.0 * r.before,
                        100.0 * r.after,
                        old = r.pitch_type
                    )
                })
                .unwrap_or_default();
            format!(
                "Changed arsenal: a {t} is {:.0}% of his pitches in {} but was {:.1}% before. Until he had thrown it in the games a model learned from, it was new to the models: {} pitches of types new to him are left out of his figures (counted, not scored); after that the {t} is scored like any other pitch. His tells found on the older games describe the old arsenal.{renamed}",
                100.0 * c.after,
                task.evaluation.tells_checked_on,
                100.0 * c.before,
                fmt_n(o.scored.unseen)
            )
        } else {
            format!(
                "Changed arsenal: he dropped his {t} ({:.0}% of pitches before, {:.1}% in {}); tells about it describe a pitch he no longer throws.",
                100.0 * c.before,
                100.0 * c.after,
                task.evaluation.tells_checked_on
            )
        });
    }
    let tvd: f64 = mix
        .keys()
        .chain(test_mix.keys())
        .collect::<BTreeSet<_>>()
        .iter()
        .map(|t| (mix.get(*t).copied().unwrap_or(0.0) - test_mix.get(*t).copied().unwrap_or(0.0)).abs())
        .sum::<f64>()
        / 2.0;
    if tvd >= 0.15 {
        cautions.push(format!(
            "His pitch mix changed between {} and {} (total variation {:.2}); a changed role or arsenal makes held-out figures less comparable. See `tellscope compare`.",
            task.evaluation.train, task.evaluation.scored, tvd
        ));
    }
    // One pitch on (nearly) every scored pitch: nothing is left to guess,
    // so a figure near zero does not mean he is hard to read.
    if let Some((t, &share)) = test_mix.iter().max_by(|a, b| a.1.total_cmp(b.1)).filter(|(_, &s)| s >= 0.99) {
        let (how_often, when) = if share >= 1.0 {
            ("every pitch scored".to_string(), "every time")
        } else {
            (format!("{} of the pitches scored", crate::domain::numbers::pct(share)), "nearly every time")
        };
        cautions.push(format!(
            "He threw his {t} on {how_often}: a hitter knows what is coming {when}, so there is little choice left for the situation to tell, and his figures and rank say nothing about how hard he is to read."
        ));
    }
    if o.figures.bits_gained < -margin {
        cautions.push(format!(
            "His situational guess did worse on {} than his plain pitch mix ({:+.3} bits per pitch): the tendencies learned from {} did not carry over. Something changed; see `tellscope compare`.",
            task.evaluation.scored, o.figures.bits_gained, task.evaluation.train
        ));
    }
    cautions
}
