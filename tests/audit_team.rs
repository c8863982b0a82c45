//! `--team`: a club's own staff audited out of the league's log. The
//! pitchers chosen are checked against a hand count over the simulated
//! realistic league's own CSV text (who threw a pitch for the club in the
//! latest season), traded pitchers included.

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};
use std::sync::OnceLock;
use tellscope::ingest::write::{sim_frame, write_frame};
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
        &Overrides { permutations: Some(9), team: team.map(str::to_string), pitchers, ..Overrides::default() },
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
    let ing = tellscope::ingest::load(league_csv(), &s).unwrap();
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

#[test]
fn an_unknown_club_or_a_log_without_clubs_is_a_usage_error() {
    let s = settings(Some("Team 99"), Vec::new());
    let ing = tellscope::ingest::load(league_csv(), &s).unwrap();
    let e = tellscope::audit::selected_pitchers(&ing.log, &s).unwrap_err();
    assert_eq!(e.exit_code(), 2);
    assert!(e.to_string().contains("Team 99") && e.to_string().contains("Team 01"), "{e}");
    // The typed Parquet fixture has no `team` column.
    let typed = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/logs/typed.parquet");
    let s = settings(Some(CLUB), Vec::new());
    let ing = tellscope::ingest::load(&typed, &s).unwrap();
    let e = tellscope::audit::selected_pitchers(&ing.log, &s).unwrap_err();
    assert_eq!(e.exit_code(), 2);
    assert!(e.to_string().contains("no `team` column"), "{e}");
}
