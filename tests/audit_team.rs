//! `--team`: a club's own staff audited out of the league's log. The
//! pitchers chosen are checked against a hand count over the simulated
//! realistic league's own CSV text (who threw a pitch for the club in the
//! latest season), traded pitchers included.

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};
use std::sync::OnceLock;
use tellscope::simulate::write::{sim_frame, write_frame};
use tellscope::settings::{ConfigFile, Overrides, Settings};
use tellscope::simulate::{simulate, Scenario};

const CLUB: &str = "Team 01";

fn league_csv() -> &'static PathBuf {
    static P: OnceLock<PathBuf> = OnceLock::new();
    P.get_or_init(|| {
        let text = std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/scenarios/realistic_league.toml")).unwrap();
        let dir = std::env::temp_dir().join(format!("tellscope-team-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let path = dir.join("league.csv");
        write_frame(&mut sim_frame(&simulate(&Scenario::from_toml_str(&text).unwrap(), 1)).unwrap(), &path).unwrap();
        path
    })
}

fn settings(team: Option<&str>, pitchers: Vec<String>) -> Settings {
    Settings::resolve(
        &ConfigFile::default(),
        &Overrides { permutations: Some(9), compare_permutations: Some(19), team: team.map(str::to_string), pitchers, ..Overrides::default() },
    )
    .unwrap()
}

/// Per pitcher, the (season, club) pairs he threw for, from the CSV text.
fn hand_count() -> BTreeMap<String, BTreeSet<(i32, String)>> {
    let text = std::fs::read_to_string(league_csv()).unwrap();
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let col = |n: &str| header.iter().position(|h| *h == n).unwrap();
    let (pc, sc, tc) = (col("pitcher"), col("season"), col("team"));
    let mut out: BTreeMap<String, BTreeSet<(i32, String)>> = BTreeMap::new();
    for l in lines {
        let f: Vec<&str> = l.split(',').collect();
        out.entry(f[pc].to_string()).or_default().insert((f[sc].parse().unwrap(), f[tc].to_string()));
    }
    out
}

#[test]
fn team_audits_exactly_the_clubs_pitchers_of_the_latest_season() {
    let by_pitcher = hand_count();
    let latest = by_pitcher.values().flatten().map(|x| x.0).max().unwrap();
    let staff: BTreeSet<String> =
        by_pitcher.iter().filter(|(_, s)| s.contains(&(latest, CLUB.to_string()))).map(|(p, _)| p.clone()).collect();
    let traded: Vec<&String> = staff.iter().filter(|p| by_pitcher[*p].iter().any(|(_, t)| t != CLUB)).collect();
    assert!(staff.len() >= 14 && !traded.is_empty(), "the scenario gives the club a staff and a traded pitcher: {} / {}", staff.len(), traded.len());

    let s = settings(Some(CLUB), Vec::new());
    let ing = tellscope::ingest::load(league_csv(), &s.input).unwrap();
    let chosen: BTreeSet<String> =
        tellscope::audit::selected_pitchers(&ing.log, &s).unwrap().iter().map(|&p| ing.log.pitchers[p as usize].clone()).collect();
    assert_eq!(chosen, staff);

    // A traded pitcher: all his pitches are used, by club and season, and
    // the report says where they came from.
    let who = traded[0].clone();
    let a = tellscope::audit::run(league_csv(), &settings(Some(CLUB), vec![who.clone()]), false).unwrap();
    assert_eq!(a.summary.pitchers.len(), 1);
    let p = &a.summary.pitchers[0];
    let clubs: BTreeSet<(i32, String)> = p.pitches_by_team.iter().map(|t| (t.season, t.team.clone())).collect();
    assert_eq!(clubs, by_pitcher[&who]);
    assert_eq!(p.pitches_by_team.iter().map(|t| t.pitches).sum::<usize>(), p.pitches_by_season.values().sum::<usize>());
    let other = by_pitcher[&who].iter().find(|(_, t)| t != CLUB).unwrap().1.clone();
    assert!(p.cautions.iter().any(|c| c.contains(&other) && c.contains("All of them are used")), "{:?}", p.cautions);
    assert!(a.summary.notes.iter().any(|n| n.starts_with(&format!("--team {CLUB}"))));
}

/// The pitcher (column `pc`) with the most rows of the CSV `text` that
/// `keep` takes, the first by name on a tie.
fn busiest(text: &str, pc: usize, keep: impl Fn(&[&str]) -> bool) -> String {
    let mut n: BTreeMap<String, usize> = BTreeMap::new();
    for l in text.lines().skip(1) {
        let f: Vec<&str> = l.split(',').collect();
        if keep(&f) {
            *n.entry(f[pc].to_string()).or_default() += 1;
        }
    }
    n.iter().max_by_key(|(p, k)| (**k, std::cmp::Reverse((*p).clone()))).unwrap().0.clone()
}

/// A pitcher traded away during the latest season (his later rows
/// rewritten to another club) is still the club's, marked as gone: the
/// club of his latest pitch, in `now_with`, his caution and the staff
/// table. A pitcher traded in is not marked.
#[test]
fn a_pitcher_traded_away_is_marked_with_his_new_club() {
    let text = std::fs::read_to_string(league_csv()).unwrap();
    let header: Vec<&str> = text.lines().next().unwrap().split(',').collect();
    let col = |n: &str| header.iter().position(|h| *h == n).unwrap();
    let (pc, dc, tc) = (col("pitcher"), col("date"), col("team"));
    // The club's busiest 2026 pitcher leaves for Team 03 on 1 July.
    let who = busiest(&text, pc, |f| f[tc] == CLUB && f[dc].starts_with("2026"));
    let moved: Vec<String> = text
        .lines()
        .map(|l| {
            let mut f: Vec<&str> = l.split(',').collect();
            if f.len() == header.len() && f[pc] == who && f[dc] >= "2026-07-01" {
                f[tc] = "Team 03";
            }
            f.join(",")
        })
        .collect();
    let path = league_csv().with_file_name("traded-away.csv");
    std::fs::write(&path, moved.join("\n") + "\n").unwrap();
    let a = tellscope::audit::run(&path, &settings(Some(CLUB), vec![who.clone()]), false).unwrap();
    let p = &a.summary.pitchers[0];
    assert_eq!(p.now_with.as_deref(), Some("Team 03"));
    assert!(p.cautions.iter().any(|c| c.contains("His latest pitches were for Team 03: he has left Team 01.")), "{:?}", p.cautions);
    use tellscope::report::export::{Exporter, Table};
    let mut printed: Vec<tellscope::report::ReportFile> = Vec::new();
    Table { report: &path }.export(&a, &mut printed).unwrap();
    let table = String::from_utf8(printed[0].bytes.clone()).unwrap();
    assert!(table.lines().any(|l| l.starts_with(&who) && l.ends_with("now with Team 03")), "{table}");
    // compare --team says it in his caution too.
    use tellscope::compare::{self, period::PeriodSpec, Request};
    let request = Request { before: PeriodSpec::parse("--before", "2025").unwrap(), after: PeriodSpec::parse("--after", "2026").unwrap() };
    let c = compare::run(&path, &settings(Some(CLUB), vec![who.clone()]), &request, false).unwrap();
    assert!(c.summary.pitchers[0].cautions.iter().any(|x| x.contains("His latest pitches were for Team 03: he has left Team 01.")), "{:?}", c.summary.pitchers[0].cautions);

    // Untouched, he is not marked; nor is a pitcher traded in.
    let by_pitcher = hand_count();
    let traded_in = by_pitcher.iter().find(|(_, s)| s.contains(&(2026, CLUB.to_string())) && s.iter().any(|(_, t)| t != CLUB)).unwrap().0.clone();
    let a = tellscope::audit::run(league_csv(), &settings(Some(CLUB), vec![who, traded_in]), false).unwrap();
    assert!(a.summary.pitchers.iter().all(|p| p.now_with.is_none()));
}

#[test]
fn an_unknown_club_or_a_log_without_clubs_is_a_usage_error() {
    let s = settings(Some("Team 99"), Vec::new());
    let ing = tellscope::ingest::load(league_csv(), &s.input).unwrap();
    let e = tellscope::audit::selected_pitchers(&ing.log, &s).unwrap_err();
    assert_eq!(e.exit_code(), 2);
    assert!(e.to_string().contains("Team 99") && e.to_string().contains("Team 01"), "{e}");
    // A club written in another case is named.
    let s = settings(Some("team 01"), Vec::new());
    let e = tellscope::audit::selected_pitchers(&ing.log, &s).unwrap_err();
    assert_eq!(e.exit_code(), 2);
    assert!(e.to_string().ends_with("the log has \"Team 01\""), "{e}");
    // A `team` column left empty names that, not an empty list of clubs.
    let mut blank = ing.log.clone();
    blank.team = blank.team.map(|t| vec![None; t.len()]);
    blank.teams.clear();
    let e = tellscope::audit::selected_pitchers(&blank, &settings(Some(CLUB), Vec::new())).unwrap_err();
    assert_eq!(e.exit_code(), 2);
    assert!(e.to_string().contains("the log's `team` column is empty in"), "{e}");
    // The typed Parquet fixture has no `team` column.
    let typed = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/logs/typed.parquet");
    let s = settings(Some(CLUB), Vec::new());
    let ing = tellscope::ingest::load(&typed, &s.input).unwrap();
    let e = tellscope::audit::selected_pitchers(&ing.log, &s).unwrap_err();
    assert_eq!(e.exit_code(), 2);
    assert!(e.to_string().contains("no `team` column"), "{e}");
}

/// The league's share in a sheet cell, worked out from the CSV text: among
/// the other pitchers of his throwing hand with the pitch at least 5% of
/// their pitches that season, its share of their pitches in the cell
/// (count × batter side).
#[test]
fn league_shares_equal_a_hand_count() {
    let s = settings(Some(CLUB), Vec::new());
    let a = tellscope::audit::run(league_csv(), &s, false).unwrap();
    let p = a.summary.pitchers.iter().find(|p| p.is_ok()).unwrap();
    let season = p.sheet_season.unwrap();
    let text = std::fs::read_to_string(league_csv()).unwrap();
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let col = |n: &str| header.iter().position(|h| *h == n).unwrap();
    let (pc, sc, th, bt, bc, kc, ty) = (col("pitcher"), col("season"), col("throws"), col("bats"), col("balls"), col("strikes"), col("pitch_type"));
    let rows: Vec<Vec<&str>> = lines.map(|l| l.split(',').collect()).filter(|f: &Vec<&str>| f[sc].parse::<i32>().unwrap() == season && f[th] == p.throws).collect();
    // Each pitcher's season mix, for his arsenal.
    let mut mix: BTreeMap<&str, BTreeMap<&str, usize>> = BTreeMap::new();
    for f in &rows {
        *mix.entry(f[pc]).or_default().entry(f[ty]).or_default() += 1;
    }
    let throws_it = |who: &str, pitch: &str| {
        let m = &mix[who];
        let n: usize = m.values().sum();
        m.get(pitch).copied().unwrap_or(0) as f64 >= 0.05 * n as f64
    };
    let mut checked = 0;
    for c in p.sheet.iter().filter(|c| c.league_share.is_some()).take(6) {
        let (balls, strikes) = (&c.count[..1], &c.count[2..]);
        let in_cell: Vec<&Vec<&str>> = rows
            .iter()
            .filter(|f| f[pc] != p.pitcher && f[bc] == balls && f[kc] == strikes && f[bt] == c.bats && throws_it(f[pc], &c.top_pitch))
            .collect();
        let of_type = in_cell.iter().filter(|f| f[ty] == c.top_pitch).count();
        assert_eq!(c.league_n, Some(in_cell.len() as u64), "{} {} {}", p.pitcher, c.count, c.bats);
        assert!((c.league_share.unwrap() - of_type as f64 / in_cell.len() as f64).abs() < 1e-12);
        checked += 1;
    }
    assert!(checked >= 3);
}

/// A pitcher with a count habit far beyond the league's (the demo's Oren
/// Vasquell: the slider at 0-2 and 1-2) is marked above the yardstick in
/// those cells; one with nothing planted (Rafe Dunmore) is not.
#[test]
fn a_count_habit_beyond_the_yardstick_is_marked() {
    let log = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data/demo-log.csv");
    let a = tellscope::audit::run(&log, &settings(None, Vec::new()), false).unwrap();
    assert_eq!(a.summary.yardstick, "staff");
    let who = |n: &str| a.summary.pitchers.iter().find(|p| p.pitcher == n).unwrap();
    let marked: Vec<(String, String, String)> =
        who("Oren Vasquell").sheet.iter().filter(|c| c.above_league).map(|c| (c.count.clone(), c.bats.clone(), c.top_pitch.clone())).collect();
    for want in [("0-2", "L"), ("1-2", "L")] {
        assert!(marked.iter().any(|m| (m.0.as_str(), m.1.as_str(), m.2.as_str()) == (want.0, want.1, "slider")), "{marked:?}");
    }
    assert!(marked.iter().all(|m| m.2 == "slider" && (m.0 == "0-2" || m.0 == "1-2")), "{marked:?}");
    assert!(who("Rafe Dunmore").sheet.iter().all(|c| !c.above_league));
    let l = who("Oren Vasquell").league_percentile.as_ref().unwrap();
    assert!(l.among >= 10 && (0.0..=100.0).contains(&l.bits));
}

/// A flagged tell's league share, worked out from the CSV text: over every
/// season of the file, among the other pitchers of his throwing hand with
/// the pitch at least 5% of their pitches that season, its share of their
/// pitches in the tell's situation (a count, or platoon same/opposite).
#[test]
fn tell_league_shares_equal_a_hand_count() {
    let a = tellscope::audit::run(league_csv(), &settings(Some(CLUB), Vec::new()), false).unwrap();
    let text = std::fs::read_to_string(league_csv()).unwrap();
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let col = |n: &str| header.iter().position(|h| *h == n).unwrap();
    let (pc, sc, th, bt, bc, kc, ty) = (col("pitcher"), col("season"), col("throws"), col("bats"), col("balls"), col("strikes"), col("pitch_type"));
    let rows: Vec<Vec<&str>> = lines.map(|l| l.split(',').collect()).collect();
    let mut mix: BTreeMap<(&str, &str), BTreeMap<&str, usize>> = BTreeMap::new();
    for f in &rows {
        *mix.entry((f[pc], f[sc])).or_default().entry(f[ty]).or_default() += 1;
    }
    let has = |who: &str, season: &str, pitch: &str| {
        let m = &mix[&(who, season)];
        let n: usize = m.values().sum();
        m.get(pitch).copied().unwrap_or(0) as f64 >= 0.05 * n as f64
    };
    let mut checked = 0;
    for p in a.summary.pitchers.iter().filter(|p| p.is_ok()) {
        for t in p.tells.iter().filter(|t| t.situation.len() == 1) {
            let (f, level) = t.situation.iter().next().unwrap();
            let holds = |r: &Vec<&str>| match f.name() {
                "count" => format!("{}-{}", r[bc], r[kc]) == *level,
                "platoon" => (r[bt] == r[th]) == (level == "same"),
                _ => false,
            };
            if !matches!(f.name(), "count" | "platoon") {
                continue;
            }
            let inside: Vec<&Vec<&str>> =
                rows.iter().filter(|r| r[pc] != p.pitcher && r[th] == p.throws && has(r[pc], r[sc], &t.pitch_type) && holds(r)).collect();
            let of_type = inside.iter().filter(|r| r[ty] == t.pitch_type).count();
            assert_eq!(t.league_n, Some(inside.len() as u64), "{} {:?} {}", p.pitcher, t.situation, t.pitch_type);
            assert!((t.league_share.unwrap() - of_type as f64 / inside.len() as f64).abs() < 1e-12);
            checked += 1;
            if checked >= 4 {
                return;
            }
        }
    }
    assert!(checked >= 1, "no count or platoon tell to check");
}

/// `compare --team`: the club's pitchers of the latest season, and a traded
/// pitcher's caution says where his pitches came from.
#[test]
fn compare_with_a_team_says_where_a_traded_pitchers_pitches_came_from() {
    use tellscope::compare::{self, period::PeriodSpec, Request};
    let by_pitcher = hand_count();
    let staff: BTreeSet<String> =
        by_pitcher.iter().filter(|(_, s)| s.contains(&(2026, CLUB.to_string()))).map(|(p, _)| p.clone()).collect();
    let request = Request { before: PeriodSpec::parse("--before", "2025").unwrap(), after: PeriodSpec::parse("--after", "2026").unwrap(), };
    let c = compare::run(league_csv(), &settings(Some(CLUB), Vec::new()), &request, false).unwrap();
    let compared: BTreeSet<String> = c.summary.pitchers.iter().map(|p| p.pitcher.clone()).collect();
    assert_eq!(compared, staff);
    let traded = c.summary.pitchers.iter().find(|p| p.is_ok() && by_pitcher[&p.pitcher].iter().any(|(_, t)| t != CLUB)).expect("a traded pitcher compared");
    assert!(traded.cautions.iter().any(|x| x.starts_with(&format!("Not all his pitches were for {CLUB}"))), "{:?}", traded.cautions);
}

/// A pitcher the log lists with both hands: the yardstick of his sheet is
/// the other pitchers' pitches of his usual hand, so only his pitches in
/// that hand's table come off it. Some of a right-hander's 2026 rows
/// relabelled left-handed must leave each cell's league share what it is
/// when those rows are not in the log at all (the others' pitches are the
/// same in both); taking all his pitches off the table, as before, gave
/// other shares. On the plain-staff demo (one club: the staff is the
/// yardstick).
#[test]
fn a_pitcher_listed_with_both_hands_keeps_the_others_as_his_yardstick() {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/plain-staff/demo-log.csv");
    let text = std::fs::read_to_string(&path).unwrap();
    let header: Vec<&str> = text.lines().next().unwrap().split(',').collect();
    let col = |n: &str| header.iter().position(|h| *h == n).unwrap();
    let (pc, tc, sc) = (col("pitcher"), col("throws"), col("season"));
    // The right-hander with the most 2026 pitches; every tenth of them
    // relabelled left-handed, or left out.
    let who = busiest(&text, pc, |f| f[tc] == "R" && f[sc] == "2026");
    let (mut flipped, mut dropped) = (vec![header.join(",")], vec![header.join(",")]);
    let mut k = 0;
    for l in text.lines().skip(1) {
        let mut f: Vec<&str> = l.split(',').collect();
        if f[pc] == who && f[sc] == "2026" {
            k += 1;
            if k % 10 == 0 {
                f[tc] = "L";
                flipped.push(f.join(","));
                continue;
            }
        }
        flipped.push(f.join(","));
        dropped.push(f.join(","));
    }
    let dir = std::env::temp_dir().join(format!("tellscope-hands-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let s = settings(None, vec![who.clone()]);
    let run = |name: &str, lines: &[String]| {
        let p = dir.join(name);
        std::fs::write(&p, lines.join("\n") + "\n").unwrap();
        tellscope::audit::run(&p, &s, false).unwrap().summary.pitchers.into_iter().next().unwrap()
    };
    let (a, b) = (run("flipped.csv", &flipped), run("dropped.csv", &dropped));
    assert!(a.cautions.iter().any(|c| c.contains("both hands")), "{:?}", a.cautions);
    let (sa, sb) = (a.sheet, b.sheet);
    let mut compared = 0;
    for (x, y) in sa.iter().zip(&sb) {
        if x.top_pitch == y.top_pitch && x.league_share.is_some() {
            assert_eq!(x.league_share, y.league_share, "{} {} {}", x.count, x.bats, x.top_pitch);
            compared += 1;
        }
    }
    assert!(compared >= 12, "{compared} cells compared");
    std::fs::remove_dir_all(&dir).ok();
}
