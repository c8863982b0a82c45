//! The rolling evaluation: every pitcher with enough pitches is audited on
//! his latest season, each block of it scored by a model fitted on
//! everything of his before it; an added pitch does not wreck the headline;
//! the permutation test keeps a drifting mix in its null; no label of a
//! scored block ever shapes a model that scores it.
//!
//! Pass rules are binomial bands (statrs' binomial CDF) chosen so a correct
//! procedure fails them less than 1% of the time, or sampling margins of
//! three standard errors (see the README's "margins").

mod common;

use common::{assert_uniform, band};
use std::path::{Path, PathBuf};
use tellscope::audit;
use tellscope::simulate::write::{sim_frame, write_frame};
use tellscope::settings::{ConfigFile, Overrides, Settings};
use tellscope::simulate::{simulate, Scenario};

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

fn settings(permutations: usize) -> Settings {
    seeded(permutations, None)
}

fn seeded(permutations: usize, seed: Option<u64>) -> Settings {
    Settings::resolve(&ConfigFile::default(), &Overrides { permutations: Some(permutations), seed, ..Overrides::default() }).unwrap()
}

fn scenario(name: &str) -> String {
    std::fs::read_to_string(root().join("tests/fixtures/scenarios").join(name)).unwrap()
}

/// Simulate `text` with `seed` into a scratch CSV.
fn log_of(text: &str, seed: u64, tag: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("tellscope-rolling-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join(format!("{tag}-{seed}.csv"));
    let sim = simulate(&Scenario::from_toml_str(text).unwrap(), seed);
    write_frame(&mut sim_frame(&sim).unwrap(), &path).unwrap();
    path
}

/// demo-data/README.md: every pitcher of the realistic demo club with at
/// least the documented minimum has figures (the models learn from at least
/// 300 of his pitches and score at least 100), newcomers and mid-season
/// arrivals included; the one below it is listed with his pitch counts and
/// the reason.
#[test]
fn every_pitcher_with_the_minimum_is_audited_on_the_realistic_demo() {
    let a = audit::run(&root().join("demo-data/demo-log.csv"), &settings(9), false).unwrap();
    assert_eq!(a.summary.evaluation.scheme, "rolling");
    assert_eq!(a.summary.pitchers.len(), 20);
    for p in &a.summary.pitchers {
        let total: usize = p.pitches_by_season.values().sum();
        assert_eq!(p.evaluation.scheme, "rolling");
        let enough = p.n_train >= 300 && p.n_test >= 100;
        assert_eq!(p.is_ok(), enough, "{}: status {} with {} / {}", p.pitcher, p.status, p.n_train, p.n_test);
        // A pitcher with one season of 400 pitches or more clears the bar
        // (his last four blocks train on 4/5 of them and score 4/5).
        if total >= 400 {
            assert!(p.is_ok(), "{} ({total} pitches) has no figures", p.pitcher);
        }
        if !p.is_ok() {
            let reason = p.reason.as_deref().unwrap();
            assert!(reason.contains(&total.to_string()) && reason.contains("300"), "{reason}");
        }
    }
    for name in ["Ned Castellane", "Kit Rennick", "Linus Greaves", "Pell Ardmore", "Hob Farrant", "Callum Ashgrove"] {
        let p = a.summary.pitchers.iter().find(|p| p.pitcher == name).unwrap();
        assert!(p.is_ok(), "{name}: {:?}", p.reason);
    }
    // The newcomer's first block only trains; the rest of his season is scored.
    let c = a.summary.pitchers.iter().find(|p| p.pitcher == "Ned Castellane").unwrap();
    assert!(c.evaluation.scored.contains("his first") && c.evaluation.n_scored < 2912);
    let talbot = a.summary.pitchers.iter().find(|p| p.pitcher == "Emory Talbot").unwrap();
    assert!(!talbot.is_ok());
}

/// Pitchers with no situational habit who make a trace pitch a real one
/// between seasons (tests/fixtures/scenarios/added_pitch_staff.toml): under
/// the rolling scheme their bits gained lie within the sampling margin of 0.
/// The regression case: season-forward without the new-pitch rule and the
/// prior blend (the first release's fit) falls far below it.
#[test]
fn an_added_pitch_does_not_move_the_headline() {
    let path = log_of(&scenario("added_pitch_staff.toml"), 1, "added");
    let a = audit::run(&path, &settings(19), false).unwrap();
    let added: Vec<_> = a.summary.pitchers.iter().filter(|p| p.pitcher.starts_with("Added")).collect();
    assert_eq!(added.len(), 4);
    for p in &added {
        let (bits, margin) = (p.bits_gained.unwrap(), p.bits_margin.unwrap());
        assert!(bits.abs() <= margin, "{}: bits {bits:.4}, margin {margin:.4}", p.pitcher);
        assert!(p.arsenal_changes.iter().any(|c| c.change == "added"), "{}: no arsenal change flagged", p.pitcher);
    }
    let cfg: ConfigFile = toml::from_str("[audit]\nnew_type_share = 0.0\n[model]\nprior_blend = 0.0\n").unwrap();
    let old = Settings::resolve(&cfg, &Overrides { permutations: Some(19), test_season: Some(2026), ..Overrides::default() }).unwrap();
    let b = audit::run(&path, &old, false).unwrap();
    let far: Vec<&str> = b
        .summary
        .pitchers
        .iter()
        .filter(|p| p.pitcher.starts_with("Added") && p.bits_gained.unwrap() < -p.bits_margin.unwrap())
        .map(|p| p.pitcher.as_str())
        .collect();
    assert!(far.len() >= 2, "the first release's season-forward fit no longer shows the failure: {far:?}");
}

/// The history window (`[audit] history_seasons`, default 1; see
/// `split::recent_rows`): on a log of four seasons
/// (tests/fixtures/scenarios/long_history_staff.toml) the models learn from
/// the season before the scored one, and the two older seasons are left
/// out, counted and said so. A pitcher who replaced his fastball with a
/// sinker two seasons ago, with no situational habit, is then measured
/// against the mix he throws now: sinker every time, right on about 60% of
/// the scored pitches (a 99% binomial band), and bits gained within their
/// sampling margin of 0. The regression case, learning from every season
/// (`history_seasons = 10`), shows the failure: his plain mix is the
/// fastball he no longer throws, right on none of the scored pitches, and
/// his headline measures the arsenal change, far above the margin.
#[test]
fn older_seasons_are_left_out_so_an_old_arsenal_does_not_make_the_headline() {
    let path = log_of(&scenario("long_history_staff.toml"), 1, "history");
    let a = audit::run(&path, &settings(19), false).unwrap();
    assert_eq!(a.summary.pitchers.len(), 3);
    assert_eq!(a.summary.settings.history_seasons, 1, "the summary records the window");
    for p in &a.summary.pitchers {
        assert!(p.is_ok(), "{}: {}", p.pitcher, p.status);
        // Every season is still listed; 2023 and 2024 are left out.
        assert_eq!(p.pitches_by_season.keys().copied().collect::<Vec<i32>>(), vec![2023, 2024, 2025, 2026]);
        let older = p.evaluation.older_left_out.as_ref().expect("older seasons left out");
        assert_eq!((older.from, older.to), (2023, 2024));
        assert_eq!(older.pitches, p.pitches_by_season[&2023] + p.pitches_by_season[&2024]);
        // The models learn from 2025 and the earlier blocks of 2026 only.
        assert!(p.n_train < p.pitches_by_season[&2025] + p.pitches_by_season[&2026], "{}: {} trained on", p.pitcher, p.n_train);
        let words = audit::wording::evaluation_sentence(&p.evaluation);
        assert!(words.contains(&format!("his older games, of 2023-2024 ({} pitches), are left out", tellscope::domain::numbers::fmt_n(older.pitches))), "{words}");
        assert!(words.contains("scored by a model fitted on his games before it") && !words.contains("everything of his"), "{words}");
        let (bits, margin) = (p.bits_gained.unwrap(), p.bits_margin.unwrap());
        assert!(bits.abs() <= margin, "{}: bits {bits:.4}, margin {margin:.4}", p.pitcher);
    }
    // The run's notes say it once for the whole staff.
    let note = a.summary.notes.iter().find(|n| n.contains("history_seasons")).expect("a note on older seasons");
    assert!(note.contains("3 of the 3 pitchers here have older seasons left out"), "{note}");
    let changer = a.summary.pitchers.iter().find(|p| p.pitcher == "Long Changer").unwrap();
    assert_eq!(changer.prior_pitch.as_deref(), Some("sinker"));
    let n = changer.n_test as u64;
    let right = (changer.prior_accuracy.unwrap() * n as f64).round() as u64;
    let (lo, hi) = band(n, 0.6);
    assert!((lo..=hi).contains(&right), "sinker right on {right} of {n}, band {lo}..={hi}");

    let cfg: ConfigFile = toml::from_str("[audit]\nhistory_seasons = 10\n").unwrap();
    let every = Settings::resolve(&cfg, &Overrides { permutations: Some(19), ..Overrides::default() }).unwrap();
    let b = audit::run(&path, &every, false).unwrap();
    assert_eq!(b.summary.settings.history_seasons, 10);
    let old = b.summary.pitchers.iter().find(|p| p.pitcher == "Long Changer").unwrap();
    assert!(old.evaluation.older_left_out.is_none());
    assert!(!b.summary.notes.iter().any(|n| n.contains("history_seasons")));
    assert_eq!(old.prior_pitch.as_deref(), Some("fastball"));
    assert_eq!(old.prior_accuracy, Some(0.0));
    assert!(old.bits_gained.unwrap() > 3.0 * old.bits_margin.unwrap(), "learning from every season no longer shows the failure: bits {:?}", old.bits_gained);
}

/// Model p-values over `seeds` simulations of `text`, and the runs with a
/// flagged tell.
fn null_runs(text: &str, seeds: u64, tag: &str) -> (Vec<f64>, u64) {
    let mut p_values = Vec::new();
    let mut with_tell = 0;
    for seed in 1..=seeds {
        let path = log_of(text, 7000 + seed, tag);
        let s = seeded(999, Some(9000 + seed));
        let a = audit::run(&path, &s, false).unwrap();
        p_values.extend(a.summary.pitchers.iter().filter(|p| p.is_ok()).map(|p| p.p_value.unwrap()));
        with_tell += (a.summary.tells_flagged > 0) as u64;
        std::fs::remove_file(&path).ok();
    }
    (p_values, with_tell)
}

/// A realistic null staff (newcomers, a mid-season call-up, added pitches,
/// 4-5 types, a real league's results; no situational habit): uniform
/// model p-values under the rolling scheme, and at least 95% of runs with
/// no flagged tell (Benjamini & Hochberg 1995, Theorem 1: under the global
/// null BH at q = 0.05 flags anything with probability at most 0.05;
/// the 99% band of that count over 30 runs is at most 5 runs).
#[test]
fn realistic_null_staffs_give_uniform_p_values_under_the_rolling_scheme() {
    let seeds = 30;
    let (p, with_tell) = null_runs(&scenario("realistic_null_staff.toml"), seeds, "realnull");
    assert_uniform("realistic null staff", &p);
    let (_, hi) = band(seeds, 0.05);
    assert!(with_tell <= hi, "{with_tell} of {seeds} null staffs had a flagged tell (99% band at most {hi})");
}

/// A staff with no situational habit whose top pitch gains 20 points of
/// share from the first game of each season to the last: uniform p-values
/// with one season and with two (shuffles stay within season x block, so
/// the drift is part of the null).
#[test]
fn a_mix_that_drifts_through_the_season_is_not_a_tell() {
    let one = scenario("drift_staff.toml");
    let two = one.replacen(
        "[batters]",
        "[[season]]\nyear = 2026\ngames = 90\nstart = \"2026-04-02\"\n\n[batters]",
        1,
    );
    for (what, text) in [("one season", &one), ("two seasons", &two)] {
        let (p, _) = null_runs(text, 16, &what.replace(' ', "-"));
        assert_uniform(&format!("drifting staff, {what}"), &p);
    }
}

/// No leakage: shuffling the labels of the rows a fold scores leaves every
/// model that scores them (that fold's and the earlier folds') unchanged.
#[test]
fn a_scored_blocks_labels_never_shape_the_models_that_score_it() {
    use rand::{seq::SliceRandom, SeedableRng};
    use tellscope::evaluate::{fit::observe, fit::Workspace, split::PitcherPlan, task::PitcherTask};
    let s = settings(9);
    let ing = tellscope::ingest::load(&root().join("demo-data/demo-log.csv"), &s.input).unwrap();
    let sit = tellscope::situations::build(&ing.log);
    for name in ["Oren Vasquell", "Ned Castellane", "Jory Kestenbaum"] {
        let p = ing.log.pitchers.iter().position(|x| x == name).unwrap() as u32;
        let rows: Vec<u32> = (0..ing.log.len() as u32).filter(|&i| ing.log.pitcher[i as usize] == p).collect();
        let plan = PitcherPlan::rolling(&ing.log, &rows, 5, 300, 100);
        let task = PitcherTask::build(&ing.log, &sit, &plan, p, rows);
        let a = observe(&task, &task.labels, &s, &mut Workspace::new(&task));
        for f in 0..task.folds.len() {
            let mut labels = task.labels.clone();
            let test: Vec<usize> = task.folds[f].test.iter().map(|&i| i as usize).collect();
            let mut vals: Vec<u8> = test.iter().map(|&i| labels[i]).collect();
            vals.shuffle(&mut rand_chacha::ChaCha8Rng::seed_from_u64(f as u64));
            for (i, v) in test.iter().zip(vals) {
                labels[*i] = v;
            }
            let b = observe(&task, &labels, &s, &mut Workspace::new(&task));
            assert_eq!(a.trees[..=f], b.trees[..=f], "{name}: fold {f}'s labels changed a model that scores them");
            assert_eq!(a.usage[..=f], b.usage[..=f], "{name}: fold {f}'s labels changed a usage prior that scores them");
        }
        // And the folds are nested in time: each trains on every row the
        // fold before it trained on, plus the block that fold scored.
        for f in 1..task.folds.len() {
            let mut want: Vec<u32> = task.folds[f - 1].train.iter().chain(&task.folds[f - 1].test).copied().collect();
            want.sort_unstable();
            assert_eq!(task.folds[f].train, want, "{name}: fold {f}");
        }
    }
}

/// The beyond-the-sheet refits keep each fold's sheet and count prior from
/// their first fit (its shuffles, within game × count × batter side, leave
/// every game-fold part's counts by count and class as they are). Refits
/// that work both out afresh each time give the same statistics to the
/// last bit, for the pitchers of the demo with the most and fewest pitches
/// and a season-forward plan as well as the rolling one.
#[test]
fn beyond_the_sheet_refits_may_keep_the_count_prior() {
    use tellscope::audit::permute::{null_statistic, Null};
    use tellscope::evaluate::{split::Plan, split::PitcherPlan, task::PitcherTask};
    let s = settings(9);
    let ing = tellscope::ingest::load(&root().join("demo-data/demo-log.csv"), &s.input).unwrap();
    let sit = tellscope::situations::build(&ing.log);
    let forward = Plan::new(&ing.log, None, 5).unwrap();
    for name in ["Oren Vasquell", "Anselm Drury", "Hob Farrant"] {
        let p = ing.log.pitchers.iter().position(|x| x == name).unwrap() as u32;
        let rows: Vec<u32> = (0..ing.log.len() as u32).filter(|&i| ing.log.pitcher[i as usize] == p).collect();
        for plan in [PitcherPlan::rolling(&ing.log, &rows, 5, 300, 100), forward.local(&ing.log, &rows)] {
            let task = PitcherTask::build(&ing.log, &sit, &plan, p, rows.clone());
            let mut kept = Null::BeyondSheet.workspace(&task);
            assert!(kept.cells_fixed);
            let mut labels = task.labels.clone();
            for j in 0..12 {
                let a = null_statistic(Null::BeyondSheet, &task, &s, j, &mut kept, &mut labels);
                let mut fresh = Null::BeyondSheet.workspace(&task);
                fresh.cells_fixed = false;
                let b = null_statistic(Null::BeyondSheet, &task, &s, j, &mut fresh, &mut labels);
                assert_eq!((a.primary.to_bits(), a.secondary.to_bits()), (b.primary.to_bits(), b.secondary.to_bits()), "{name}, permutation {j}");
            }
        }
    }
}

/// A log exported early in a season (the demo cut on 2026-04-11): a
/// pitcher whose latest season is still short of the 100 scored pitches a
/// figure needs, with a season behind him, is scored on his last two
/// seasons together, and the words say why; his permutation strata are
/// season × block, so none spans two seasons or crosses from the rows a
/// model learns from to the rows it scores; the audit gives him figures.
/// A pitcher whose latest season is long enough keeps the one-season
/// window.
#[test]
fn a_short_latest_season_is_scored_with_the_season_before_it() {
    use tellscope::evaluate::split::PitcherPlan;
    let text = std::fs::read_to_string(root().join("demo-data/demo-log.csv")).unwrap();
    let (header, body) = text.split_once('\n').unwrap();
    let date_at = header.split(',').position(|c| c == "date").unwrap();
    let early: String = body.lines().filter(|l| l.split(',').nth(date_at).unwrap() < "2026-04-12").map(|l| format!("{l}\n")).collect();
    let dir = std::env::temp_dir().join(format!("tellscope-rolling-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("early.csv");
    std::fs::write(&path, format!("{header}\n{early}")).unwrap();
    let s = settings(19);
    let ing = tellscope::ingest::load(&path, &s.input).unwrap();
    let log = &ing.log;
    let rows_of = |name: &str| -> Vec<u32> {
        let p = log.pitchers.iter().position(|x| x == name).unwrap() as u32;
        (0..log.len() as u32).filter(|&i| log.pitcher[i as usize] == p).collect()
    };
    let drury = rows_of("Anselm Drury");
    let in_2026 = drury.iter().filter(|&&r| log.season[r as usize] == 2026).count();
    assert!(in_2026 > 0 && in_2026 < 100, "the cut leaves him short: {in_2026}");
    let plan = PitcherPlan::rolling(log, &drury, 5, 300, 100);
    let e = &plan.evaluation;
    assert!(e.n_scored >= 100, "{}", e.n_scored);
    assert!(e.scored.contains("games of 2025-2026") && e.scored.contains(&format!("2026 alone holds {in_2026}, under the 100")), "{}", e.scored);
    // Strata: one season each, and never both trained on and scored by one fold.
    let mut strata: std::collections::BTreeMap<u16, Vec<usize>> = Default::default();
    for (i, &st) in plan.stratum.iter().enumerate() {
        strata.entry(st).or_default().push(i);
    }
    for rows in strata.values() {
        let season = |i: usize| log.season[drury[i] as usize];
        assert!(rows.iter().all(|&i| season(i) == season(rows[0])), "a stratum spans two seasons");
        let fates: std::collections::BTreeSet<(Option<u8>, Option<u8>)> = rows.iter().map(|&i| (plan.test_fold[i], plan.train_from[i])).collect();
        assert_eq!(fates.len(), 1, "a stratum's rows differ in which folds learn from and score them");
    }
    // Vasquell's 2026 is long enough: the one-season window.
    let v = PitcherPlan::rolling(log, &rows_of("Oren Vasquell"), 5, 300, 100);
    assert!(v.evaluation.scored.contains("games of 2026 (") && !v.evaluation.scored.contains("alone holds"), "{}", v.evaluation.scored);
    // The audit gives Drury figures.
    let o = Overrides { permutations: Some(19), pitchers: vec!["Anselm Drury".into()], ..Overrides::default() };
    let a = audit::run(&path, &Settings::resolve(&ConfigFile::default(), &o).unwrap(), false).unwrap();
    assert!(a.summary.pitchers.iter().find(|p| p.pitcher == "Anselm Drury").unwrap().is_ok());
}

/// One pitcher whose slider the log writes as "sweeper" from 2026 gets the
/// rename hint in his changed-arsenal caution (`in_place_of`); one who adds
/// a cutter, or drops a pitch alone, does not.
#[test]
fn a_pitch_dropped_for_one_of_its_share_reads_as_a_possible_rename() {
    let mut text = String::from(
        "[club]\nname = \"Hint Hollow\"\n[[season]]\nyear = 2025\ngames = 40\nstart = \"2025-04-03\"\n[[season]]\nyear = 2026\ngames = 40\nstart = \"2026-04-02\"\n[batters]\npool = 30\nleft = 0.4\nright = 0.5\nswitch = 0.1\n",
    );
    for (name, role, change) in [
        ("Renn Calloway", "starter", "relabel = { slider = \"sweeper\" }"),
        ("Tam Ostrander", "starter", "add = { cutter = 0.25 }"),
        ("Ves Pollard", "starter", "drop = [\"changeup\"]"),
        ("Wynn Harrow", "reliever", ""),
    ] {
        text += &format!("[[pitcher]]\nname = \"{name}\"\nthrows = \"R\"\nrole = \"{role}\"\nmix = {{ fastball = 50, slider = 30, changeup = 20 }}\n");
        if !change.is_empty() {
            text += &format!("  [[pitcher.change]]\n  season = 2026\n  {change}\n");
        }
    }
    let a = audit::run(&log_of(&text, 3, "rename-hint"), &settings(0), false).unwrap();
    let p = |name: &str| a.summary.pitchers.iter().find(|p| p.pitcher == name).unwrap();
    let renamed = p("Renn Calloway");
    let added = renamed.arsenal_changes.iter().find(|c| c.change == "added").expect("the sweeper reads as added");
    assert_eq!(added.pitch_type, "sweeper");
    assert_eq!(added.in_place_of.as_ref().map(|r| r.pitch_type.as_str()), Some("slider"));
    assert!(renamed.cautions.iter().any(|c| c.contains("if the sweeper is his slider under a new name")), "{:?}", renamed.cautions);
    assert!(!renamed.cautions.iter().any(|c| c.starts_with("Changed arsenal: he dropped his slider")), "told once, in the added pitch's caution");
    for name in ["Tam Ostrander", "Ves Pollard"] {
        let q = p(name);
        assert!(!q.arsenal_changes.is_empty(), "{name}: a change");
        assert!(q.arsenal_changes.iter().all(|c| c.in_place_of.is_none()), "{name}: {:?}", q.arsenal_changes);
        assert!(!q.cautions.iter().any(|c| c.contains("under a new name")), "{name}");
    }
}

/// A former member of the staff (his latest season older than the log's)
/// is scored on his own last season and marked so: a caution in his
/// section and a run note naming exactly those pitchers, counted by hand
/// from `pitches_by_season`.
#[test]
fn pitchers_gone_before_the_latest_season_are_marked() {
    let a = audit::run(&root().join("demo-data/demo-log.csv"), &settings(9), false).unwrap();
    let latest = *a.summary.input.seasons.last().unwrap();
    let gone: Vec<&str> = a
        .summary
        .pitchers
        .iter()
        .filter(|p| p.is_ok() && *p.pitches_by_season.keys().next_back().unwrap() < latest)
        .map(|p| p.pitcher.as_str())
        .collect();
    assert!(!gone.is_empty(), "the demo has pitchers who left after 2025");
    for p in a.summary.pitchers.iter().filter(|p| p.is_ok()) {
        let marked = p.cautions.iter().any(|c| c.starts_with(&format!("He last pitched in {} in this log, which runs to {latest}", latest - 1)));
        assert_eq!(marked, gone.contains(&p.pitcher.as_str()), "{}: {:?}", p.pitcher, p.cautions);
    }
    let note = a.summary.notes.iter().find(|n| n.contains("last pitched before")).expect("a run note");
    assert!(note.starts_with(&format!("{} of the pitchers with figures last pitched before {latest}", gone.len())), "{note}");
    assert!(gone.iter().all(|g| note.contains(g)), "{note}");
}

/// A log taken early in a season (its latest season holds three games,
/// against 162 the season before): the pitchers who pitched the season
/// before but not yet in the new one are not called former members of the
/// staff; a note says they have most likely not pitched yet, and only
/// those gone a whole season longer get the former-staff note. Both lists
/// are counted by hand from `pitches_by_season`.
#[test]
fn early_in_a_season_pitchers_not_yet_used_are_not_called_former() {
    let text = std::fs::read_to_string(root().join("demo-data/demo-log.csv")).unwrap();
    let mut lines = text.lines();
    let head = lines.next().unwrap();
    let rows: Vec<&str> = lines.collect();
    let first_2026: Vec<&str> = {
        let mut g: Vec<&str> = Vec::new();
        for r in &rows {
            let id = r.split(',').next().unwrap();
            if id.starts_with("G2026") && !g.contains(&id) {
                g.push(id);
            }
        }
        g.truncate(3);
        g
    };
    // The first three games of 2026 again, as 2027's first three.
    let copies: Vec<String> = rows
        .iter()
        .filter(|r| first_2026.contains(&r.split(',').next().unwrap()))
        .map(|r| r.replacen("G2026", "G2027", 1).replacen("2026-", "2027-", 1).replacen(",2026,", ",2027,", 1))
        .collect();
    let dir = std::env::temp_dir().join(format!("tellscope-early-season-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("early.csv");
    std::fs::write(&path, format!("{head}\n{}\n{}\n", rows.join("\n"), copies.join("\n"))).unwrap();
    let a = audit::run(&path, &settings(9), false).unwrap();
    assert_eq!(a.summary.input.seasons, [2025, 2026, 2027]);
    let last = |p: &tellscope::audit::summary::PitcherSummary| *p.pitches_by_season.keys().next_back().unwrap();
    let ok: Vec<_> = a.summary.pitchers.iter().filter(|p| p.is_ok()).collect();
    let waiting: Vec<&str> = ok.iter().filter(|p| last(p) == 2026).map(|p| p.pitcher.as_str()).collect();
    let gone: Vec<&str> = ok.iter().filter(|p| last(p) < 2026).map(|p| p.pitcher.as_str()).collect();
    assert!(!waiting.is_empty() && !gone.is_empty(), "{waiting:?} {gone:?}");
    let note = |needle: &str| a.summary.notes.iter().find(|n| n.contains(needle)).cloned();
    let w = note("not pitched yet").expect("a note on pitchers not used yet");
    assert!(w.starts_with(&format!("{} of the pitchers with figures have not pitched in 2027", waiting.len())), "{w}");
    assert!(w.contains("the log holds only 3 games against 162 in 2026"), "{w}");
    assert!(waiting.iter().all(|n| w.contains(n)) && gone.iter().all(|n| !w.contains(n)), "{w}");
    let g = note("last pitched before").expect("the former-staff note");
    assert!(g.starts_with(&format!("{} of the pitchers with figures last pitched before 2026", gone.len())), "{g}");
    assert!(gone.iter().all(|n| g.contains(n)) && waiting.iter().all(|n| !g.contains(n)), "{g}");
    std::fs::remove_dir_all(&dir).ok();
}
