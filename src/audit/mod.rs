//! The predictability audit: the whole pipeline from a pitch log to one
//! [`summary::Summary`] value (plus the full tell tests for `tells.csv`).

pub mod location;
pub mod permute;
mod pitcher;
pub mod sheet;
pub mod summary;
pub mod wording;

use crate::error::{Error, Result};
use crate::evaluate::fit::{self, argmax, statistic, Workspace};
use crate::evaluate::split::{self, PitcherPlan, Plan};
use crate::evaluate::task::PitcherTask;
use crate::evaluate::{self, HeldOut};
use crate::ingest::{self, Ingested, Rejected};
use crate::settings::Settings;
use crate::significance::{budget, fdr, wilson};
use crate::domain::levels::COUNTS;
use crate::situations::{self, Situations};
use crate::tells::{self, Direction, TellTest};
use rayon::prelude::*;
use std::collections::{BTreeMap, HashSet};
use std::path::Path;
use summary::*;

/// Everything an audit produces.
pub struct Audit {
    pub summary: Summary,
    pub tests: Vec<TellTest>,
    pub rejected: Vec<Rejected>,
    /// Rows whose pitch label is not the pitcher's choice (`set_aside.csv`).
    pub set_aside: Vec<Rejected>,
    /// Outcome figures per audited pitcher, pitch type and situation level
    /// (`outcomes.csv`; empty without a `result` column).
    pub outcomes: Vec<crate::outcomes::SituationOutcomes>,
}

/// Observed-fit results of one pitcher, before significance.
struct Observed {
    figures: HeldOut,
    counts: Vec<(&'static str, HeldOut)>,
    types: Vec<evaluate::TypeFigures>,
    scored: evaluate::fit::Scored,
    statistic: crate::evaluate::fit::Stat,
    /// The beyond-the-sheet test's statistic.
    beyond: crate::evaluate::fit::Stat,
    /// Held-out bits of the sheet over his plain mix, per pitch.
    sheet_bits: f64,
    sd_log_ratio: f64,
    /// Held-out pitches where exactly one of the two guesses was right.
    discordant: usize,
}

fn mix_of(names: &[String], task: &PitcherTask, rows: &[u32]) -> BTreeMap<String, f64> {
    let mut c = vec![0usize; task.n_classes];
    for &r in rows {
        c[task.labels[r as usize] as usize] += 1;
    }
    let n = rows.len().max(1) as f64;
    (0..task.n_classes).map(|k| (names[task.class_types[k] as usize].clone(), c[k] as f64 / n)).collect()
}

fn observe(task: &PitcherTask, settings: &Settings, names: &[String]) -> Observed {
    let mut ws = Workspace::new(task);
    let scored = fit::observe(task, &task.labels, settings, &mut ws);
    let figures = evaluate::overall(&scored, &task.labels);
    let counts = evaluate::per_count(task, &scored, &task.labels);
    let types = evaluate::per_type(task, &scored, &task.labels, names, settings.tree.min_type_pitches());
    let stat = statistic(&scored, settings.audit.statistic());
    let mut ss = 0.0;
    for (i, &r) in scored.rows.iter().enumerate() {
        let y = task.labels[r as usize] as usize;
        let d = (scored.model_row(i)[y] / scored.prior_row(i)[y]).log2() - figures.bits_gained;
        ss += d * d;
    }
    let discordant = scored
        .rows
        .iter()
        .enumerate()
        .filter(|(i, &r)| {
            let y = task.labels[r as usize] as usize;
            (argmax(scored.model_row(*i)) == y) != (argmax(scored.prior_row(*i)) == y)
        })
        .count();
    let sd = if scored.rows.len() > 1 { (ss / (scored.rows.len() - 1) as f64).sqrt() } else { 0.0 };
    let beyond = crate::evaluate::fit::beyond_statistic(&scored);
    let sheet_bits = if scored.totals.n > 0 { scored.totals.sheet_bits / scored.totals.n as f64 } else { 0.0 };
    Observed { figures, counts, types, scored, statistic: stat, beyond, sheet_bits, sd_log_ratio: sd, discordant }
}

/// Run the audit of the log at `path`.
pub fn run(path: &Path, settings: &Settings, show_progress: bool) -> Result<Audit> {
    let t = crate::progress::Timer::start();
    let Ingested { log, rejected, set_aside, source } = ingest::load(path, &settings.input)?;
    t.lap("ingest");
    let sit = situations::build(&log);
    t.lap("situations");
    let scheme = match settings.audit.test_season() {
        Some(test) => Evaluation::SeasonForward(Plan::season_forward(&log, test)?),
        None => Evaluation::Rolling { blocks: settings.audit.forward_blocks() },
    };
    audit_log(&log, &sit, &scheme, ingest::LeftOut { rejected, set_aside }, source, settings, show_progress)
}

/// How the audit scores its pitchers.
pub enum Evaluation {
    /// Every pitcher: his latest season in blocks, each scored from
    /// everything of his before it (the default).
    Rolling { blocks: usize },
    /// One plan for the whole log (`--test-season`).
    SeasonForward(Plan),
}

impl Evaluation {
    /// A pitcher's plan and the rows it covers: under the rolling scheme
    /// his recent seasons ([`split::recent_rows`]), otherwise all his rows.
    fn plan_for(&self, log: &ingest::PitchLog, rows: &[u32], settings: &Settings) -> (Vec<u32>, PitcherPlan) {
        match self {
            Evaluation::Rolling { blocks } => {
                let a = &settings.audit;
                let recent = split::recent_rows(log, rows, a.history_seasons(), a.min_train_pitches(), a.min_test_pitches());
                let plan = PitcherPlan::rolling_recent(log, &recent, *blocks, a.min_train_pitches(), a.min_test_pitches());
                (recent.rows, plan)
            }
            Evaluation::SeasonForward(plan) => (rows.to_vec(), plan.local(log, rows)),
        }
    }

    fn out(&self, settings: &Settings) -> EvaluationOut {
        match self {
            Evaluation::Rolling { blocks } => EvaluationOut {
                scheme: "rolling".into(),
                train: format!(
                    "for each pitcher, everything of his before each scored block back to {} (earlier blocks, and older seasons only while those hold fewer than {} pitches)",
                    split::history_words(settings.audit.history_seasons()),
                    crate::domain::numbers::fmt_n(settings.audit.min_train_pitches())
                ),
                test: format!("each pitcher's latest season in the log, split by date into up to {blocks} blocks, each scored by a model fitted on his pitches before it"),
                tells_checked_on: "each pitcher's latest season (the later half of it when he has no earlier season to find tells on)".into(),
            },
            Evaluation::SeasonForward(plan) => EvaluationOut {
                scheme: plan.scheme_name().into(),
                train: plan.train_label.clone(),
                test: plan.test_label.clone(),
                tells_checked_on: plan.tells_label.clone(),
            },
        }
    }
}

/// The report's notes about its input: factors left out (`left_out` says
/// of what), caveats on how factors were built, rejected rows.
pub fn input_notes(log: &ingest::PitchLog, sit: &Situations, source: &ingest::SourceInfo, left_out: &str) -> Vec<String> {
    let mut notes = Vec::new();
    for (f, why) in &sit.dropped {
        notes.push(format!("The {f} factor is {left_out}: {why}."));
    }
    for n in sit.notes.iter().chain(&ingest::log_notes(log, source)) {
        notes.push(format!("Note: {n}."));
    }
    for a in &source.optional_set_aside {
        let cols: Vec<String> = a.columns.iter().map(|c| format!("`{c}`")).collect();
        notes.push(format!(
            "The log's {} {} left out, as if the file had {}: {}.",
            cols.join(" and "),
            if cols.len() == 1 { "column is" } else { "columns are" },
            if cols.len() == 1 { "none" } else { "neither" },
            a.reason
        ));
    }
    if source.rows_set_aside > 0 {
        notes.push(format!(
            "{} of {} input rows were set aside because their pitch label (or result) says the pitch was not the pitcher's choice: {}. A model would learn the bench's calls and the tracker's gaps from them and read them as tells; they are listed in set_aside.csv (to keep a label as a pitch, list it in [pitch_groups] or set [set_aside] pitch_labels in the config).",
            crate::domain::numbers::fmt_n(source.rows_set_aside),
            crate::domain::numbers::fmt_n(source.rows_read),
            source.labels_set_aside_text()
        ));
    }
    if source.rows_rejected > 0 {
        use crate::domain::numbers::fmt_n;
        // Each reason's first clause; its fix is in rejected.csv and check.
        let most: Vec<String> = source
            .rejected_reasons
            .iter()
            .map(|r| format!("{} for `{}` ({})", fmt_n(r.rows), r.column, r.reason.split("; ").next().unwrap_or_default()))
            .collect();
        let more = if source.rejected_reasons.iter().map(|r| r.rows).sum::<usize>() < source.rows_rejected { ", and others" } else { "" };
        notes.push(format!(
            "{} of {} input rows broke the data contract and were left out: {}{more}. They are listed in rejected.csv, each with its reason and the fix (`tellscope check` groups them).",
            fmt_n(source.rows_rejected),
            fmt_n(source.rows_read),
            most.join("; ")
        ));
    }
    notes
}

/// The pitchers a run covers: all; those who pitched for `--team` in the
/// log's latest season; those named by `--pitcher` (among the team's, with
/// both). A name or club not in the log is a usage error.
pub fn selected_pitchers(log: &ingest::PitchLog, settings: &Settings) -> Result<Vec<u32>> {
    let mut out: Vec<u32> = match &settings.audit.team() {
        None => (0..log.pitchers.len() as u32).collect(),
        Some(team) => team_pitchers(log, team)?,
    };
    if !settings.audit.pitchers().is_empty() {
        let mut named = Vec::new();
        for p in settings.audit.pitchers() {
            // A pitcher shown by name is named by it or by his id.
            match log.pitchers.iter().position(|q| q == p).or_else(|| log.pitcher_ids.iter().position(|q| q == p)) {
                Some(i) if out.contains(&(i as u32)) => named.push(i as u32),
                Some(_) => {
                    return Err(Error::Usage(format!(
                        "--pitcher \"{p}\" did not pitch for {} in the log's latest season; leave out --team or name one of its pitchers",
                        settings.audit.team().unwrap_or("the club")
                    )))
                }
                None => {
                    // A name written in another case or spacing is named.
                    let near = log.pitchers.iter().find(|q| ingest::same_loose_name(q, p));
                    let hint = near.map_or_else(|| "run `tellscope check` to list the pitchers".to_string(), |q| format!("the log has \"{q}\""));
                    return Err(Error::Usage(format!("--pitcher \"{p}\" is not in the log; {hint}")));
                }
            }
        }
        out = named;
    }
    out.sort_unstable();
    out.dedup();
    Ok(out)
}

/// A pitcher's `rows` counted by season and club (empty without a `team`
/// column; a row without a club counts as `unknown`).
pub fn pitches_by_team<'a>(log: &ingest::PitchLog, rows: impl IntoIterator<Item = &'a u32>) -> Vec<TeamPitches> {
    let Some(teams) = log.team.as_ref() else { return Vec::new() };
    let mut by: BTreeMap<(i32, String), usize> = BTreeMap::new();
    for &r in rows {
        let club = teams[r as usize].map(|t| log.teams[t as usize].clone()).unwrap_or_else(|| "unknown".into());
        *by.entry((log.season[r as usize], club)).or_insert(0) += 1;
    }
    by.into_iter().map(|((season, team), pitches)| TeamPitches { season, team, pitches }).collect()
}

/// With `--team`: the club of the latest of his `rows` (the log is in date
/// order) when it is not `team`, a pitcher traded away.
pub fn now_with<'a>(log: &ingest::PitchLog, rows: impl IntoIterator<Item = &'a u32>, team: &str) -> Option<String> {
    let last = *rows.into_iter().max()? as usize;
    let club = log.team.as_ref()?[last].map(|t| log.teams[t as usize].clone())?;
    (club != team).then_some(club)
}

/// "His latest pitches were for C: he has left T." for a pitcher traded away.
pub fn left_sentence(now_with: Option<&String>, team: &str) -> String {
    now_with.map(|c| format!(" His latest pitches were for {c}: he has left {team}.")).unwrap_or_default()
}

/// Pitchers with a pitch for `team` in the log's latest season.
pub fn team_pitchers(log: &ingest::PitchLog, team: &str) -> Result<Vec<u32>> {
    let Some(teams) = log.team.as_ref() else {
        return Err(Error::Usage(format!(
            "--team \"{team}\": the log has no `team` column, so its pitchers' clubs are unknown; add the column (or map it with [columns]) or leave out --team"
        )));
    };
    let latest = log.season.iter().copied().max().unwrap_or(0);
    let Some(t) = log.teams.iter().position(|x| x == team).map(|t| t as u32) else {
        let mut known: Vec<&str> = (0..log.len())
            .filter(|&i| log.season[i] == latest)
            .filter_map(|i| teams[i].map(|t| log.teams[t as usize].as_str()))
            .collect();
        known.sort_unstable();
        known.dedup();
        // A club written in another case or spacing is named, as a
        // pitcher's name is.
        if let Some(near) = log.teams.iter().find(|q| ingest::same_loose_name(q, team)) {
            return Err(Error::Usage(format!("--team \"{team}\" is not in the log's `team` column; the log has \"{near}\"")));
        }
        if known.is_empty() {
            return Err(Error::Usage(format!(
                "--team \"{team}\": the log's `team` column is empty in {latest}, its latest season; fill in each pitch's club or leave out --team"
            )));
        }
        let shown: Vec<String> = known.iter().take(6).map(|k| format!("\"{k}\"")).collect();
        return Err(Error::Usage(format!(
            "--team \"{team}\" is not in the log's `team` column; clubs in {latest} include {}{}",
            shown.join(", "),
            if known.len() > 6 { ", ..." } else { "" }
        )));
    };
    let mut out: Vec<u32> = (0..log.len()).filter(|&i| log.season[i] == latest && teams[i] == Some(t)).map(|i| log.pitcher[i]).collect();
    out.sort_unstable();
    out.dedup();
    if out.is_empty() {
        return Err(Error::Usage(format!("--team \"{team}\" has no pitch in the log's latest season ({latest}); audit a club that played in it")));
    }
    Ok(out)
}

/// Audit the pitchers of an ordered log: plan every pitcher, run the tests
/// of those with enough pitches, then write each one's summary.
pub fn audit_log(
    log: &ingest::PitchLog,
    sit: &Situations,
    scheme: &Evaluation,
    left_out: ingest::LeftOut,
    source: ingest::SourceInfo,
    settings: &Settings,
    show_progress: bool,
) -> Result<Audit> {
    let chosen = selected_pitchers(log, settings)?;
    // Each pitcher scored on his own latest season: the log's latest, for
    // telling former members of a staff apart.
    let latest = match scheme {
        Evaluation::Rolling { .. } => log.season.iter().copied().max(),
        Evaluation::SeasonForward(_) => None,
    };
    let staff = Staff::plan(log, sit, scheme, &chosen, settings);
    let ok_tasks: Vec<&PitcherTask> = staff.tasks.iter().filter(|t| enough(t, settings)).collect();
    let tested = Tested::run(log, sit, &staff.discovery, &ok_tasks, settings, show_progress);
    let timer = crate::progress::Timer::start();
    let figures = staff.league_figures(log, sit, &chosen, &ok_tasks, &tested.observed, settings);
    timer.lap("league figures");
    let run = pitcher::Run {
        log,
        sit,
        tested: &tested,
        figures: &figures,
        tells: tells::ByPitcher::new(&tested.tests),
        location_tells: tells::ByPitcher::new(&tested.location.tests),
        settings,
    };
    let mut pitchers = Vec::new();
    let mut outcomes = Vec::new();
    let mut audited = 0usize;
    for task in &staff.tasks {
        let about = pitcher::About::of(log, task, &staff.all_rows_of[task.pitcher as usize], latest, settings);
        let result = if enough(task, settings) {
            audited += 1;
            pitcher::scored(&run, task, about, audited - 1)
        } else {
            pitcher::insufficient(task, about, settings)
        };
        let (summary, by_situation) = result.into_parts();
        pitchers.push(summary);
        outcomes.extend(by_situation);
    }
    timer.lap("pitcher summaries");
    let mut notes = run_notes(log, sit, &source, &chosen, tested.location.missing, settings);
    notes.extend(unresolved_notes(&tested, &ok_tasks, settings));
    notes.extend(older_seasons_note(&pitchers, settings));
    notes.extend(gone_notes(log, &pitchers, latest));
    let staff_called = crate::outcomes::staff_called(&pitchers.iter().filter_map(|p| p.called_outcomes.as_ref()).collect::<Vec<_>>());
    let yardstick = if club_count(log).unwrap_or(0) > 1 { "league" } else { "staff" };
    drop(run);
    let tests = tested.tests;
    let summary = Summary {
        tool: Tool::this(),
        input: Input::of(&source, log),
        settings: SettingsOut::of(settings),
        evaluation: scheme.out(settings),
        notes,
        staff_called_outcomes: staff_called,
        yardstick: yardstick.to_string(),
        tell_tests: tests.len(),
        tells_flagged: tests.iter().filter(|t| t.flagged).count(),
        pitchers,
    };
    Ok(Audit { summary, tests, rejected: left_out.rejected, set_aside: left_out.set_aside, outcomes })
}

/// The games of the log's latest season and of the season before, when
/// the latest holds under a quarter as many (a log taken early in a
/// season: most of the staff has not pitched in it yet).
fn young_season(log: &ingest::PitchLog, latest: i32) -> Option<(usize, usize)> {
    let mut games: [HashSet<u32>; 2] = Default::default();
    for (&season, &game) in log.season.iter().zip(&log.game) {
        if season == latest || season == latest - 1 {
            games[usize::from(season == latest)].insert(game);
        }
    }
    let (before, now) = (games[0].len(), games[1].len());
    (4 * now < before).then_some((now, before))
}

/// Notes on the pitchers scored on a season before the log's latest
/// (former members of a staff, in a club's log of several seasons): who
/// they are, so the staff table is not read as today's staff. Early in a
/// season (see [`young_season`]) those who pitched the season before have
/// most likely just not pitched yet: a note of their own says so, and only
/// those gone longer are called former.
fn gone_notes(log: &ingest::PitchLog, pitchers: &[PitcherSummary], latest: Option<i32>) -> Vec<String> {
    use crate::domain::numbers::fmt_n;
    let Some(latest) = latest else { return Vec::new() };
    let young = young_season(log, latest);
    let (mut waiting, mut gone): (Vec<&str>, Vec<&str>) = (Vec::new(), Vec::new());
    for p in pitchers.iter().filter(|p| p.is_ok()) {
        match summary::gone_since(&p.pitches_by_season, latest) {
            Some(his) if young.is_some() && his == latest - 1 => waiting.push(&p.pitcher),
            Some(_) => gone.push(&p.pitcher),
            None => {}
        }
    }
    let shown = |names: &[&str]| if names.len() > 5 { format!("{} and {} more", names[..5].join(", "), names.len() - 5) } else { names.join(", ") };
    let mut notes = Vec::new();
    if let (Some((now, before)), false) = (young, waiting.is_empty()) {
        notes.push(format!(
            "{} of the pitchers with figures have not pitched in {latest} ({}), of which the log holds only {} games against {} in {}: most likely they have not pitched yet this season. Each is scored on his {} season.",
            fmt_n(waiting.len()),
            shown(&waiting),
            fmt_n(now),
            fmt_n(before),
            latest - 1,
            latest - 1
        ));
    }
    if !gone.is_empty() {
        let before = if young.is_some() { latest - 1 } else { latest };
        let which = if young.is_some() { "the season before the log's latest" } else { "the log's latest season" };
        notes.push(format!(
            "{} of the pitchers with figures last pitched before {before}, {which} ({}): each is scored on his own latest season, so his figures describe him then (he may have left the staff, or been hurt all season).",
            fmt_n(gone.len()),
            shown(&gone)
        ));
    }
    notes
}

/// On a log of more seasons than the models learn from, how many of the
/// run's pitchers have older seasons left out ([`split::recent_rows`]).
fn older_seasons_note(pitchers: &[PitcherSummary], settings: &Settings) -> Option<String> {
    use crate::domain::numbers::fmt_n;
    let older: Vec<_> = pitchers.iter().filter_map(|p| p.evaluation.older_left_out.as_ref()).collect();
    if older.is_empty() {
        return None;
    }
    let pitches: usize = older.iter().map(|o| o.pitches).sum();
    Some(format!(
        "The models learn from each pitcher's scored season and {}, and from older seasons only while those hold fewer than {} pitches (`[audit] history_seasons`): {} of the {} pitchers here have older seasons left out ({} pitches in all), since habits and arsenals move between seasons and an opponent reads the recent ones. Each pitcher's section names his.",
        split::history_words(settings.audit.history_seasons()),
        fmt_n(settings.audit.min_train_pitches()),
        fmt_n(older.len()),
        fmt_n(pitchers.len()),
        fmt_n(pitches)
    ))
}

/// Enough pitches to learn from and to score for any figure.
fn enough(t: &PitcherTask, settings: &Settings) -> bool {
    t.n_train() >= settings.audit.min_train_pitches() && t.n_test() >= settings.audit.min_test_pitches()
}

/// Every pitcher of the log planned, and the chosen pitchers' tasks.
struct Staff {
    /// Per pitcher, every row of his in the log.
    all_rows_of: Vec<Vec<u32>>,
    /// Per pitcher, the rows his plan covers (his recent seasons under the
    /// rolling scheme).
    rows_of: Vec<Vec<u32>>,
    plans: Vec<Option<PitcherPlan>>,
    /// Per log row: a row tells are found on.
    discovery: Vec<bool>,
    tasks: Vec<PitcherTask>,
}

impl Staff {
    /// Every pitcher's plan (the tells' staff shares read all pitchers'
    /// discovery rows), then the chosen pitchers' tasks.
    fn plan(log: &ingest::PitchLog, sit: &Situations, scheme: &Evaluation, chosen: &[u32], settings: &Settings) -> Staff {
        let mut all_rows_of: Vec<Vec<u32>> = vec![Vec::new(); log.pitchers.len()];
        for i in 0..log.len() {
            all_rows_of[log.pitcher[i] as usize].push(i as u32);
        }
        let (rows_of, plans): (Vec<Vec<u32>>, Vec<Option<PitcherPlan>>) = all_rows_of
            .par_iter()
            .map(|rows| match rows.is_empty() {
                true => (Vec::new(), None),
                false => {
                    let (used, plan) = scheme.plan_for(log, rows, settings);
                    (used, Some(plan))
                }
            })
            .unzip();
        let mut discovery = vec![false; log.len()];
        for (rows, plan) in rows_of.iter().zip(&plans) {
            if let Some(plan) = plan {
                for (&r, &d) in rows.iter().zip(&plan.discovery) {
                    discovery[r as usize] = d;
                }
            }
        }
        let tasks: Vec<PitcherTask> = chosen
            .par_iter()
            .map(|&p| {
                let plan = plans[p as usize].as_ref().expect("a pitcher in the log has rows");
                PitcherTask::build(log, sit, plan, p, rows_of[p as usize].clone())
            })
            .collect();
        Staff { all_rows_of, rows_of, plans, discovery, tasks }
    }

    /// Every audited pitcher's observed (pitcher, bits gained, beyond the
    /// sheet) for percentiles; with --team, the league's other pitchers
    /// are fitted once, without permutations.
    fn league_figures(
        &self,
        log: &ingest::PitchLog,
        sit: &Situations,
        chosen: &[u32],
        ok_tasks: &[&PitcherTask],
        observed: &[Observed],
        settings: &Settings,
    ) -> Vec<(u32, f64, f64)> {
        let mut figures: Vec<(u32, f64, f64)> =
            ok_tasks.iter().zip(observed).map(|(t, o)| (t.pitcher, o.figures.bits_gained, o.figures.bits_gained - o.sheet_bits)).collect();
        if settings.audit.team().is_some() {
            let chosen_set: std::collections::HashSet<u32> = chosen.iter().copied().collect();
            let others: Vec<(u32, f64, f64)> = (0..log.pitchers.len() as u32)
                .into_par_iter()
                .filter(|p| !chosen_set.contains(p) && !self.rows_of[*p as usize].is_empty())
                .filter_map(|p| {
                    let plan = self.plans[p as usize].as_ref()?;
                    let t = PitcherTask::build(log, sit, plan, p, self.rows_of[p as usize].clone());
                    enough(&t, settings).then(|| {
                        let o = observe(&t, settings, &log.pitch_types);
                        (p, o.figures.bits_gained, o.figures.bits_gained - o.sheet_bits)
                    })
                })
                .collect();
            figures.extend(others);
        }
        figures
    }
}

/// The audited pitchers' tests, in the order of their tasks.
struct Tested {
    observed: Vec<Observed>,
    perms: Vec<permute::PermutationResult>,
    beyond_perms: Vec<permute::PermutationResult>,
    model_q: Vec<f64>,
    beyond_q: Vec<f64>,
    /// Every tell test, with costs and league shares filled.
    tests: Vec<TellTest>,
    location: location::LocationAudit,
    league_cells: crate::league::LeagueCells,
}

impl Tested {
    fn run(
        log: &ingest::PitchLog,
        sit: &Situations,
        discovery: &[bool],
        ok_tasks: &[&PitcherTask],
        settings: &Settings,
        show_progress: bool,
    ) -> Tested {
        let timer = crate::progress::Timer::start();
        timer.lap("pitcher tasks (features)");
        let observed: Vec<Observed> = ok_tasks.par_iter().map(|t| observe(t, settings, &log.pitch_types)).collect();
        timer.lap("observed fits");
        let total: u64 = (3 * ok_tasks.len() * settings.audit.permutations()) as u64;
        let bar = crate::progress::bar(total, "permutations", show_progress);
        let tick = |n: u64| bar.inc(n);
        // The tell tests do not depend on the permutation tests; they run
        // alongside them and fill the workers' idle moments.
        // Where he throws it (its own permutation and tell tests) does not
        // depend on them either: all three run together, so one stage's
        // last, largest pitchers never leave a worker idle.
        let ((perms, mut tests), location) = rayon::join(
            || {
                rayon::join(
                    || permutation_tests(ok_tasks, &observed, settings, &tick),
                    || tells::find(log, sit, discovery, ok_tasks, settings),
                )
            },
            || location::audit(log, sit, discovery, ok_tasks, settings, &tick),
        );
        bar.finish_and_clear();
        timer.lap("permutation, tell and location tests");
        let (perms, beyond_perms): (Vec<_>, Vec<_>) = perms.into_iter().unzip();
        crate::outcomes::cost_of_tells(log, sit, ok_tasks, &mut tests, settings.audit.fdr());
        timer.lap("cost of tells");
        // The league as the yardstick: counted once for the file, for the
        // tells' shares here and the sheet cells later.
        let league_cells = crate::league::LeagueCells::build(log);
        crate::league::tell_shares(log, sit, &league_cells, &mut tests);
        timer.lap("league yardstick");
        let model_q = fdr::bh_q_values(&perms.iter().map(|p| p.p_value).collect::<Vec<_>>());
        // The beyond-the-sheet p-values form their own family over pitchers.
        let beyond_q = fdr::bh_q_values(&beyond_perms.iter().map(|p| p.p_value).collect::<Vec<_>>());
        Tested { observed, perms, beyond_perms, model_q, beyond_q, tests, location, league_cells }
    }
}

/// Each audited pitcher's whole-model and beyond-the-sheet permutation
/// tests. Each test's early decision is sized from the other pitchers'
/// pilots of the same test (each test's BH family is the audited
/// pitchers): how many clear effects the run is likely to hold.
fn permutation_tests(
    ok_tasks: &[&PitcherTask],
    observed: &[Observed],
    settings: &Settings,
    tick: &(dyn Fn(u64) + Sync),
) -> Vec<(permute::PermutationResult, permute::PermutationResult)> {
    // Both tests' pilots, every pitcher's in parallel.
    let (pilots, beyond_pilots): (Vec<permute::Pilot>, Vec<permute::Pilot>) = ok_tasks
        .par_iter()
        .zip(observed.par_iter())
        .map(|(t, o)| {
            use permute::{pilot_of, Null};
            (pilot_of(Null::Situation, t, o.statistic, settings), pilot_of(Null::BeyondSheet, t, o.beyond, settings))
        })
        .unzip();
    let sizes = permute::pilot_sizes(&pilots, settings.audit.fdr());
    let beyond_observed: Vec<_> = observed.iter().map(|o| o.beyond).collect();
    // The two tests are independent: the beyond-the-sheet family's rounds
    // wait for their slowest pitcher, and the whole-model tests fill that wait.
    let (whole, beyond): (Vec<permute::PermutationResult>, _) = rayon::join(
        || {
            ok_tasks
                .par_iter()
                .zip(observed.par_iter())
                .zip(pilots.into_par_iter().zip(sizes.par_iter()))
                .map(|((t, o), (pilot, &m1))| permute::permutation_test(t, o.statistic, settings, Some(m1), pilot, tick))
                .collect()
        },
        || permute::beyond_tests(ok_tasks, &beyond_observed, beyond_pilots, settings, tick),
    );
    whole.into_iter().zip(beyond).collect()
}

/// How many clubs the log's `team` column names (None without one).
fn club_count(log: &ingest::PitchLog) -> Option<usize> {
    log.team.as_ref().map(|t| {
        let mut c: Vec<u32> = t.iter().flatten().copied().collect();
        c.sort_unstable();
        c.dedup();
        c.len()
    })
}

/// The run's notes: its input, its yardstick, the club audited, and what
/// missing columns leave out.
fn run_notes(
    log: &ingest::PitchLog,
    sit: &Situations,
    source: &ingest::SourceInfo,
    chosen: &[u32],
    no_location: bool,
    settings: &Settings,
) -> Vec<String> {
    let mut notes = input_notes(log, sit, source, "left out");
    if club_count(log).unwrap_or(0) <= 1 {
        notes.push(
            "The file holds one club's pitchers, so the yardstick is the staff, not the league: each pitcher's sheet cells and percentiles are compared with the rest of his own staff (a league's log, with `--team`, compares them with the league).".into(),
        );
    }
    if let Some(team) = &settings.audit.team() {
        let latest = log.season.iter().copied().max().unwrap_or(0);
        notes.push(format!(
            "--team {team}: {} who pitched for {team} in {latest} {}, with their pitches for every club (a traded pitcher's pitches for other clubs included, and said so); the log's other {} pitchers are the league.",
            if chosen.len() == 1 { "the one pitcher".to_string() } else { format!("the {} pitchers", chosen.len()) },
            if chosen.len() == 1 { "is audited" } else { "are audited" },
            log.pitchers.len() - chosen.len()
        ));
    }
    // Location columns set aside for their units are explained above.
    let set_aside = source.optional_set_aside.iter().any(|a| a.columns.iter().any(|c| c == "loc_height_ft"));
    if no_location && !set_aside {
        notes.push(
            "The log has no `loc_side_ft` and `loc_height_ft` columns, so where each pitch goes (location figures and location tells) cannot be shown; add them to see it.".into(),
        );
    }
    let result_set_aside = source.optional_set_aside.iter().any(|a| a.columns.iter().any(|c| c == "result"));
    if log.result.is_none() {
        let (has, fix) = if result_set_aside { ("no readable", "give it in the contract's terms") } else { ("no", "add `result`") };
        notes.push(format!(
            "The log has {has} `result` column, so whether a tell costs him (whiffs, called and swinging strikes, balls in play of the tell's pitch against comparable spots) cannot be shown; {fix} to see it."
        ));
    }
    let mine: Vec<bool> = {
        let mut m = vec![false; log.pitchers.len()];
        chosen.iter().for_each(|&p| m[p as usize] = true);
        m
    };
    if let (Some(side), Some(height)) = (&log.loc_side_ft, &log.loc_height_ft) {
        notes.extend(gaps_note(
            log,
            &mine,
            |r| side[r].is_none() || height[r].is_none(),
            ("location", "location figures and location tells rest on the located pitches alone", "where his pitches go (location figures and location tells) cannot be shown"),
        ));
    }
    if let Some(result) = &log.result {
        notes.extend(gaps_note(
            log,
            &mine,
            |r| result[r].is_none(),
            ("result", "whether a tell costs him rests on the pitches with one", "whether a tell costs him cannot be shown"),
        ));
    }
    notes
}

/// A note when an optional column is empty for a marked share of the run's
/// pitchers' pitches (tracking installed partway through a log's seasons,
/// a park without it): at least a twentieth of them, or a fifth of a
/// season's. `missing(row)`: the row has no value; `(what, so, none)`: the
/// value, in words; what then rests on fewer pitches; what cannot be shown
/// when no pitch has one.
fn gaps_note(log: &ingest::PitchLog, mine: &[bool], missing: impl Fn(usize) -> bool, (what, so, none): (&str, &str, &str)) -> Option<String> {
    let mut by: BTreeMap<i32, (usize, usize)> = BTreeMap::new();
    for r in 0..log.len() {
        if mine[log.pitcher[r] as usize] {
            let e = by.entry(log.season[r]).or_default();
            e.0 += missing(r) as usize;
            e.1 += 1;
        }
    }
    let (gaps, all) = by.values().fold((0, 0), |(g, a), &(m, n)| (g + m, a + n));
    let marked = by.values().any(|&(m, n)| 5 * m >= n);
    if gaps == 0 || !(20 * gaps >= all || marked) {
        return None;
    }
    use crate::domain::numbers::fmt_n;
    if gaps == all {
        return Some(format!("None of the audited pitchers' {} pitches has a {what} in the log, so {none}.", fmt_n(all)));
    }
    let seasons: Vec<String> = by.iter().map(|(y, &(m, n))| format!("{y}: {} of {}", fmt_n(m), fmt_n(n))).collect();
    Some(format!(
        "{} of the audited pitchers' {} pitches have no {what} in the log ({}), so {so}.",
        fmt_n(gaps),
        fmt_n(all),
        seasons.join("; ")
    ))
}

/// A note for each test family whose permutations were too few for its
/// false-discovery control to flag the pitchers no permutation reached
/// (`significance::budget`): on a league-wide run, hundreds of tests at once.
fn unresolved_notes(tested: &Tested, ok_tasks: &[&PitcherTask], settings: &Settings) -> Vec<String> {
    if settings.audit.permutations() == 0 {
        // Nothing was shuffled, so there is no floor to explain.
        return vec![format!(
            "No permutation test was run (`--permutations 0`): every p- and q-value reads 1 and no pitcher is flagged, whatever his figures. Run with `--permutations {}` to test them.",
            crate::domain::defaults::AUDIT_PERMUTATIONS
        )];
    }
    let fdr = settings.audit.fdr();
    // The whole-model and beyond-the-sheet families are the audited
    // pitchers in order; the location family those with location figures.
    let names: Vec<&str> = ok_tasks.iter().map(|t| t.name.as_str()).collect();
    let located: Vec<&str> = tested.location.figures.iter().zip(&names).filter(|(f, _)| f.is_some()).map(|(_, &n)| n).collect();
    let outcome = |p: &permute::PermutationResult, q: f64| budget::Outcome { p: p.p_value, reached_none: p.reached_none, decided_early: p.decided_early, q };
    let whole: Vec<budget::Outcome> = tested.perms.iter().zip(&tested.model_q).map(|(p, &q)| outcome(p, q)).collect();
    let beyond: Vec<budget::Outcome> = tested.beyond_perms.iter().zip(&tested.beyond_q).map(|(p, &q)| outcome(p, q)).collect();
    let location: Vec<budget::Outcome> = tested
        .location
        .figures
        .iter()
        .flatten()
        .map(|f| budget::Outcome { p: f.p_value, reached_none: f.reached_none, decided_early: f.decided_early, q: f.q_value })
        .collect();
    [("The whole-model test", whole, &names), ("The beyond-the-sheet test", beyond, &names), ("The location test (where his pitches go)", location, &located)]
        .into_iter()
        .filter_map(|(test, family, who)| {
            budget::unresolved(&family, fdr).map(|u| wording::unresolved_note(test, "shuffle", &u, who, u.enough_permutations(fdr, settings.audit.permutations())))
        })
        .collect()
}

/// At most three findings, most pitches given away a season first: the
/// sheet's cells where he leans on one pitch beyond his season share of it
/// (or, when none does, his flagged count and side tells),
/// and his flagged tells beyond the sheet (the shift over what the sheet
/// predicts, times the pitches in the situation a season; for a tell that
/// faded, its held-out shift).
fn headline(cells: &[sheet::SheetCell], flagged: &[&TellTest], checked_on: &str) -> Vec<String> {
    // (pitches given away a season, the words, the situation).
    let mut found: Vec<(f64, String, String)> = cells
        .iter()
        .filter(|c| c.leans)
        .map(|c| (c.given_away, sheet::cell_phrase(c), format!("cell {} {}", c.count, c.bats)))
        .collect();
    // With no cell standing out on its own, his flagged count or side
    // tells (each pooling many cells) say where his sheet gives pitches away.
    let sheet_too = found.is_empty();
    // A tell that faded in his held-out games gives away only what is left
    // of it there, so one that still holds comes first.
    // A tell that holds mostly the pitches of a stronger one tells them
    // again (`tells::mark_restatements`): the stronger one speaks for both.
    let per_season = |t: &TellTest| if t.held_out_n > 0 { t.held_out_n } else { t.n } as f64;
    // One habit, told once: beyond the sheet, more of a pitch at one level
    // of a factor and less of it at another (his sinker with a runner on
    // first, and not with the bases empty) are two sides of one habit, so
    // a "less" tell gives way to a "more" tell of the same pitch on the
    // same factors that still holds: the side a hitter can sit on.
    let listed: Vec<&TellTest> = flagged.iter().copied().filter(|t| t.within.is_none() && t.restates.is_none()).collect();
    let other_side = |t: &TellTest| {
        t.layer == tells::Layer::Beyond
            && t.direction == Direction::Less
            && listed.iter().any(|m| {
                m.layer == tells::Layer::Beyond
                    && m.direction == Direction::More
                    && m.pitch_type == t.pitch_type
                    && m.situation.keys().eq(t.situation.keys())
                    && m.effect_now() > 0.0
            })
    };
    for t in listed.iter().copied().filter(|t| !other_side(t)) {
        let per_season = per_season(t);
        let situation = format!("{:?}", t.situation);
        match t.layer {
            tells::Layer::Beyond => found.push((t.effect_now() * per_season, wording::beyond_short(t, checked_on), situation)),
            tells::Layer::Sheet if sheet_too => found.push((t.effect_now() * per_season, wording::sheet_short(t, checked_on), situation)),
            tells::Layer::Sheet => {}
        }
    }
    found.sort_by(|a, b| b.0.total_cmp(&a.0).then(a.1.cmp(&b.1)));
    // One finding per situation (his splitter down and his sinker up
    // against same-side batters are one thing to fix), so three lines name
    // up to three places.
    let mut seen = std::collections::BTreeSet::new();
    found.into_iter().filter(|f| seen.insert(f.2.clone())).take(3).map(|f| f.1).collect()
}

fn count_summaries(
    task: &PitcherTask,
    o: &Observed,
    his_tests: &[&TellTest],
    names: &[String],
    settings: &Settings,
) -> Vec<CountSummary> {
    let k = task.n_classes;
    let mut out = Vec::new();
    for (c, (label, fig)) in o.counts.iter().enumerate() {
        let mut held = vec![0usize; k];
        for &r in &o.scored.rows {
            if task.count[r as usize] as usize == c {
                held[task.labels[r as usize] as usize] += 1;
            }
        }
        let mut disc = vec![0usize; k];
        for &r in &task.discovery {
            if task.count[r as usize] as usize == c {
                disc[task.labels[r as usize] as usize] += 1;
            }
        }
        let hn: usize = held.iter().sum();
        let dn: usize = disc.iter().sum();
        let ht = argmax(&held.iter().map(|&x| x as f64).collect::<Vec<_>>());
        let dt = argmax(&disc.iter().map(|&x| x as f64).collect::<Vec<_>>());
        let ci = wilson::wilson_95(held[ht] as u64, hn as u64);
        let dtop = names[task.class_types[dt] as usize].clone();
        let test = his_tests.iter().find(|t| {
            t.direction == Direction::More
                && t.pitch_type == dtop
                && t.situation.len() == 1
                && t.situation.get(&crate::domain::levels::Factor::Count).map(String::as_str) == Some(COUNTS[c])
        });
        out.push(CountSummary {
            count: label.to_string(),
            n: hn,
            prior_accuracy: fig.prior_accuracy,
            model_accuracy: fig.model_accuracy,
            lift: fig.lift,
            bits_gained: fig.bits_gained,
            top_pitch: names[task.class_types[ht] as usize].clone(),
            top_share: if hn > 0 { held[ht] as f64 / hn as f64 } else { 0.0 },
            top_share_low: ci.low,
            top_share_high: ci.high,
            mix: (0..k)
                .filter(|&j| held[j] > 0)
                .map(|j| (names[task.class_types[j] as usize].clone(), held[j] as f64 / hn.max(1) as f64))
                .collect(),
            discovery_n: dn,
            discovery_top_pitch: dtop,
            discovery_top_share: if dn > 0 { disc[dt] as f64 / dn as f64 } else { 0.0 },
            q_value: test.map(|t| t.q_value),
            more_predictable: test.map(|t| t.flagged).unwrap_or(false),
        });
        let _ = settings;
    }
    out
}
