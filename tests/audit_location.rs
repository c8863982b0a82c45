//! Where he throws it (issue: location tells). On invented staffs with no
//! shared habits, where a pitch goes depends on nothing but its type unless
//! planted (tests/fixtures/scenarios/location_staff.toml, null_staff.toml):
//! a planted spot in two-strike counts is found, held out and significant;
//! a pitch that goes to the same place in every situation is a habit, not
//! a tell; null pitchers stay quiet and their location p-values are
//! uniform (99% binomial bands, tests/common). Region edges are checked
//! by hand in src/situations/regions.rs (rule book plate width; zone
//! height 1.5-3.5 ft, common practice).

mod common;

use common::{assert_uniform, band};
use tellscope::audit;
use tellscope::simulate::write::{sim_frame, write_frame};
use tellscope::settings::{ConfigFile, Overrides, Settings};
use tellscope::simulate::{simulate, Scenario};

fn scenario(name: &str) -> Scenario {
    let text = std::fs::read_to_string(format!("{}/tests/fixtures/scenarios/{name}", env!("CARGO_MANIFEST_DIR"))).unwrap();
    Scenario::from_toml_str(&text).unwrap()
}

fn settings(permutations: usize, seed: u64) -> Settings {
    let o = Overrides { permutations: Some(permutations), compare_permutations: Some(permutations), seed: Some(seed), ..Overrides::default() };
    Settings::resolve(&ConfigFile::default(), &o).unwrap()
}

fn audit_of(scn: &Scenario, sim_seed: u64, s: &Settings, tag: &str) -> audit::Audit {
    let dir = std::env::temp_dir().join(format!("tellscope-location-{tag}-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join(format!("log-{sim_seed}.csv"));
    write_frame(&mut sim_frame(&simulate(scn, sim_seed)).unwrap(), &path).unwrap();
    let a = audit::run(&path, s, false).unwrap();
    std::fs::remove_dir_all(&dir).ok();
    a
}

#[test]
fn a_planted_spot_is_found_and_a_habit_is_not_a_tell() {
    let a = audit_of(&scenario("location_staff.toml"), 7, &settings(199, 11), "planted");
    let fdr = a.summary.settings.fdr;
    let by = |name: &str| a.summary.pitchers.iter().find(|p| p.pitcher == name).unwrap();

    let spot = by("Spot Slider");
    let loc = spot.location.as_ref().expect("location figures");
    assert!(loc.q_value <= fdr && loc.bits_gained > 0.0, "location q {} bits {}", loc.q_value, loc.bits_gained);
    let two_strikes = ["0-2", "1-2", "2-2", "3-2"];
    let found = spot.location_tells.iter().find(|t| {
        t.pitch_type == "slider"
            && t.region == "down and away"
            && t.direction == tellscope::tells::Direction::More
            && t.situation.get(&tellscope::domain::levels::Factor::Count).is_some_and(|c| two_strikes.contains(&c.as_str()))
    });
    let t = found.unwrap_or_else(|| panic!("no two-strike slider tell: {:?}", spot.location_tells.iter().map(|t| &t.text).collect::<Vec<_>>()));
    assert!(t.q_value <= fdr);
    // Held out: the later games bear it out (share well above elsewhere).
    assert_eq!(t.verdict, tellscope::tells::Verdict::Held, "{}", t.text);
    assert!(t.held_out_share.unwrap() > t.baseline_share + 0.2, "{}", t.text);
    // No flagged tell of his fastball, which has no spot.
    assert!(spot.location_tells.iter().all(|t| t.pitch_type == "slider"), "{:?}", spot.location_tells.iter().map(|t| &t.text).collect::<Vec<_>>());

    // His changeup goes low everywhere: a habit, so no situation differs.
    let low = by("Low Changeup");
    assert!(low.location.is_some());
    assert!(low.location_tells.iter().all(|t| t.pitch_type != "changeup"), "{:?}", low.location_tells.iter().map(|t| &t.text).collect::<Vec<_>>());
    let mix = low.location_mix.iter().find(|m| m.pitch_type == "changeup" && m.count_group == "even").unwrap();
    assert!(mix.shares["chase low"] > 0.6, "{:?}", mix.shares);
}

/// Null staffs: location p-values uniform over pitchers and seeds, and a
/// flagged location tell in no more runs than the band of the tell FDR's
/// bound allows (BH at q = 0.05 under the global null: P(any flag) ≤ 0.05;
/// Benjamini & Hochberg 1995, Theorem 1).
#[test]
fn null_staffs_are_quiet_and_their_location_p_values_uniform() {
    let scn = scenario("null_staff.toml");
    const SEEDS: u64 = 14;
    let mut p_values = Vec::new();
    let mut runs_with_a_tell = 0;
    for seed in 1..=SEEDS {
        let a = audit_of(&scn, 300 + seed, &settings(199, 900 + seed), "null");
        for p in a.summary.pitchers.iter() {
            if let Some(l) = &p.location {
                p_values.push(l.p_value);
            }
        }
        if a.summary.pitchers.iter().any(|p| !p.location_tells.is_empty()) {
            runs_with_a_tell += 1;
        }
    }
    assert_uniform("location p-values on null staffs", &p_values);
    let (_, hi) = band(SEEDS, 0.05);
    assert!(runs_with_a_tell <= hi, "{runs_with_a_tell} of {SEEDS} null staffs had a location tell (99% band top {hi})");
}

/// Without location columns everything else runs, and the report says what
/// location figures need; with them in inches they are set aside whole
/// (`ingest::units`), no row is lost, and the notes say how to convert.
#[test]
fn without_location_columns_the_audit_runs_and_says_so() {
    let scn = scenario("location_staff.toml");
    let dir = std::env::temp_dir().join(format!("tellscope-location-none-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let full = dir.join("full.csv");
    write_frame(&mut sim_frame(&simulate(&scn, 3)).unwrap(), &full).unwrap();
    let text = std::fs::read_to_string(&full).unwrap();
    let header: Vec<&str> = text.lines().next().unwrap().split(',').collect();
    let drop: Vec<usize> = header.iter().enumerate().filter(|(_, h)| h.starts_with("loc_")).map(|(i, _)| i).collect();
    assert_eq!(drop.len(), 2);
    let stripped: String = text
        .lines()
        .map(|l| l.split(',').enumerate().filter(|(i, _)| !drop.contains(i)).map(|(_, v)| v).collect::<Vec<_>>().join(",") + "\n")
        .collect();
    let path = dir.join("no-location.csv");
    std::fs::write(&path, stripped).unwrap();
    let a = audit::run(&path, &settings(19, 1), false).unwrap();
    // The same log with its locations in inches: the columns are set aside
    // whole (no row rejected), and the notes say why and how to convert.
    let inches: String = text
        .lines()
        .enumerate()
        .map(|(r, l)| {
            let cells: Vec<String> = l
                .split(',')
                .enumerate()
                .map(|(i, v)| match (r, drop.contains(&i), v.parse::<f64>()) {
                    (1.., true, Ok(x)) => format!("{:.2}", 12.0 * x),
                    _ => v.to_string(),
                })
                .collect();
            cells.join(",") + "\n"
        })
        .collect();
    let in_inches = dir.join("inches.csv");
    std::fs::write(&in_inches, inches).unwrap();
    let b = audit::run(&in_inches, &settings(19, 1), false).unwrap();
    std::fs::remove_dir_all(&dir).ok();
    assert_eq!(b.summary.input.rows_rejected, 0);
    assert_eq!(b.summary.input.rows_kept, a.summary.input.rows_kept);
    assert!(b.summary.pitchers.iter().all(|p| p.location.is_none()));
    assert!(b.summary.notes.iter().any(|n| n.contains("`loc_side_ft` and `loc_height_ft` columns are left out") && n.contains("look like inches (divide by 12)")), "{:?}", b.summary.notes);
    assert!(!b.summary.notes.iter().any(|n| n.contains("add them")), "a set-aside column is not called missing");
    let ok: Vec<_> = a.summary.pitchers.iter().filter(|p| p.is_ok()).collect();
    assert!(!ok.is_empty() && ok.iter().all(|p| p.bits_gained.is_some() && p.location.is_none() && p.location_tells.is_empty()));
    assert!(ok.iter().all(|p| p.location_note.as_deref().is_some_and(|n| n.contains("no location columns"))));
    assert!(a.summary.notes.iter().any(|n| n.contains("loc_side_ft") && n.contains("add them")));
}

/// Compare: a changeup that starts going away off the plate in 2026 is a
/// significant location shift of that pitch; pitchers whose spots did not
/// change have at most one among them (BH at 0.05 over about twenty null
/// tests: one false alarm is within what the control allows, two would
/// happen in well under 1% of runs).
#[test]
fn compare_finds_a_moved_pitch_and_only_that() {
    use tellscope::compare::{self, period::PeriodSpec, Request};
    let scn = scenario("location_staff.toml");
    let dir = std::env::temp_dir().join(format!("tellscope-location-compare-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("log.csv");
    write_frame(&mut sim_frame(&simulate(&scn, 21)).unwrap(), &path).unwrap();
    let request = Request {
        before: PeriodSpec::parse("--before", "2025").unwrap(),
        after: PeriodSpec::parse("--after", "2026").unwrap(),
    };
    let c = compare::run(&path, &settings(99, 5), &request, false).unwrap();
    std::fs::remove_dir_all(&dir).ok();
    let shifts: Vec<(&str, &tellscope::compare::summary::Change)> = c
        .summary
        .pitchers
        .iter()
        .flat_map(|p| p.changes.iter().filter(|c| c.kind == "location_shift").map(move |c| (p.pitcher.as_str(), c)))
        .collect();
    assert!(shifts.len() >= 10, "{} location tests", shifts.len());
    assert!(shifts.iter().all(|(_, c)| c.family == compare::LOCATION_FAMILY));
    let moved = shifts.iter().find(|(p, c)| *p == "Moved Changeup" && c.pitch_type.as_deref() == Some("changeup")).expect("his changeup compared");
    assert!(moved.1.significant && moved.1.region.as_deref() == Some("chase away") && moved.1.after > moved.1.before + 0.3, "{}", moved.1.text);
    let others: Vec<&str> = shifts.iter().filter(|(p, c)| c.significant && *p != "Moved Changeup").map(|(_, c)| c.text.as_str()).collect();
    assert!(others.len() <= 1, "{others:?}");
}

/// A log whose earlier season has no locations and no results (tracking
/// installed between seasons) says so in a run note, with the counts by
/// season, which are checked here against a count over the CSV text.
#[test]
fn a_season_without_locations_is_named_in_a_note() {
    let text = std::fs::read_to_string(format!("{}/tests/fixtures/plain-staff/demo-log.csv", env!("CARGO_MANIFEST_DIR"))).unwrap();
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let col = |n: &str| header.iter().position(|h| *h == n).unwrap();
    let (season, result, side, height) = (col("season"), col("result"), col("loc_side_ft"), col("loc_height_ft"));
    let mut out = vec![header.join(",")];
    let mut by: std::collections::BTreeMap<String, (usize, usize)> = Default::default();
    for l in lines {
        let mut f: Vec<&str> = l.split(',').collect();
        let e = by.entry(f[season].to_string()).or_default();
        e.1 += 1;
        if f[season] == "2025" {
            (f[result], f[side], f[height]) = ("", "", "");
            e.0 += 1;
        }
        out.push(f.join(","));
    }
    let dir = std::env::temp_dir().join(format!("tellscope-location-gaps-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("log.csv");
    std::fs::write(&path, out.join("\n") + "\n").unwrap();
    let a = audit::run(&path, &settings(19, 3), false).unwrap();
    let fmt = tellscope::domain::numbers::fmt_n;
    let (gaps, all): (usize, usize) = by.values().fold((0, 0), |(g, n), &(m, k)| (g + m, n + k));
    let seasons: Vec<String> = by.iter().map(|(y, &(m, n))| format!("{y}: {} of {}", fmt(m), fmt(n))).collect();
    let head = format!("{} of the audited pitchers' {} pitches have no location in the log ({})", fmt(gaps), fmt(all), seasons.join("; "));
    assert!(a.summary.notes.iter().any(|n| n.starts_with(&head)), "{head}\n{:?}", a.summary.notes);
    assert!(a.summary.notes.iter().any(|n| n.contains("have no result in the log") && n.contains("whether a tell costs him rests on the pitches with one")));
    // Every pitcher's located pitches are 2026's only.
    let located: usize = a.summary.pitchers.iter().filter_map(|p| p.location.as_ref()).map(|l| l.n).sum();
    assert!(located > 0 && located <= by["2026"].1);

    // With no result at all, the note says what cannot be shown.
    let none: Vec<String> = std::fs::read_to_string(&path).unwrap().lines().enumerate().map(|(k, l)| {
        let mut f: Vec<&str> = l.split(',').collect();
        if k > 0 {
            f[result] = "NA";
        }
        f.join(",")
    }).collect();
    std::fs::write(&path, none.join("\n") + "\n").unwrap();
    let a = audit::run(&path, &settings(19, 3), false).unwrap();
    let want = format!("None of the audited pitchers' {} pitches has a result in the log, so whether a tell costs him cannot be shown.", fmt(all));
    assert!(a.summary.notes.contains(&want), "{want}\n{:?}", a.summary.notes);
    std::fs::remove_dir_all(&dir).ok();

    // The plain log has no such note.
    let plain = audit::run(std::path::Path::new(&format!("{}/tests/fixtures/plain-staff/demo-log.csv", env!("CARGO_MANIFEST_DIR"))), &settings(19, 3), false).unwrap();
    assert!(!plain.summary.notes.iter().any(|n| n.contains("have no location") || n.contains("have no result")), "{:?}", plain.summary.notes);
}
