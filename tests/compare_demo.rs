//! `compare` on the demo log against its answer key (tests/fixtures/plain-staff/README.md,
//! "Changes between seasons"): the planted new pitch and the planted mix
//! shift are found, nobody else changes at the report's false discovery
//! rate; the report's files agree with summary.json; same seed, same bytes
//! at any thread count; small pitchers are insufficient data; a log with
//! more than two seasons gets per-season predictability.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::process::Command;
use std::sync::OnceLock;
use tellscope::compare::period::PeriodSpec;
use tellscope::compare::summary::{Change, PitcherChanges};
use tellscope::compare::mix::MONTE_CARLO_PERMUTATIONS;
use tellscope::compare::{self, Comparison, Request};
use tellscope::settings::{ConfigFile, Overrides, Settings};

fn demo_log() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/plain-staff/demo-log.csv")
}

fn settings(permutations: usize) -> Settings {
    Settings::resolve(&ConfigFile::default(), &Overrides { compare_permutations: Some(permutations), ..Overrides::default() }).unwrap()
}

fn request(before: PeriodSpec, after: PeriodSpec) -> Request {
    Request { before, after }
}

/// One comparison of the demo, 2025 against 2026, with few label swaps.
fn demo() -> &'static Comparison {
    static C: OnceLock<Comparison> = OnceLock::new();
    C.get_or_init(|| {
        compare::run(&demo_log(), &settings(99), &request(PeriodSpec::Season(2025), PeriodSpec::Season(2026)), false).unwrap()
    })
}

fn pitcher(name: &str) -> &'static PitcherChanges {
    demo().summary.pitchers.iter().find(|p| p.pitcher == name).unwrap_or_else(|| panic!("{name} missing"))
}

fn significant(p: &PitcherChanges) -> Vec<&Change> {
    p.changes.iter().filter(|c| c.is_test() && c.significant).collect()
}

fn describe(c: &[&Change]) -> Vec<String> {
    c.iter().map(|c| c.text.clone()).collect()
}

#[test]
fn every_pitcher_is_compared() {
    let s = &demo().summary;
    assert_eq!(s.pitchers.len(), 12);
    assert!(s.pitchers.iter().all(|p| p.is_ok()), "{:?}", s.pitchers.iter().filter(|p| !p.is_ok()).map(|p| &p.cautions).collect::<Vec<_>>());
    // One BH family: every test's q is at least its p, and the run counts
    // exactly the tests it reports.
    let tests: Vec<&Change> = s.pitchers.iter().flat_map(|p| p.changes.iter().filter(|c| c.is_test())).collect();
    assert_eq!(tests.len(), s.tests);
    assert!(tests.iter().all(|c| c.q.unwrap() >= c.p.unwrap() - 1e-15));
}

#[test]
fn the_planted_new_pitch_is_found() {
    // Answer key: Wes Halloran adds a cutter in 2026 at 0.25; none in 2025.
    let p = pitcher("Wes Halloran");
    let sig = significant(p);
    assert_eq!(sig.len(), 1, "{:?}", describe(&sig));
    let c = sig[0];
    assert_eq!((c.kind.as_str(), c.pitch_type.as_deref()), ("new_pitch", Some("cutter")));
    assert_eq!(c.before, 0.0);
    assert!((0.22..=0.28).contains(&c.after), "{}", c.after);
    // No deal of his games between the seasons reaches it: p is the
    // least the game-by-game test allows.
    assert_eq!(c.p, Some(1.0 / (MONTE_CARLO_PERMUTATIONS as f64 + 1.0)), "{}", c.text);
    assert!(c.q.unwrap() <= 0.01, "{}", c.text);
    assert!(p.summary_lines[0].starts_with("Added a cutter: 0% → 25% of pitches"), "{}", p.summary_lines[0]);
    // His other pitches keep their proportions (answer key), and his mix
    // tests are run on those pitches: none passes.
    let overall = p.changes.iter().find(|c| c.kind == "mix_shift" && c.situation.is_empty()).unwrap();
    assert_eq!(overall.among.as_deref(), Some("kept pitches"));
    assert!(!overall.significant);
    assert!((p.mix_shift.unwrap() - c.after).abs() < 0.02, "the whole mix moved by the new pitch's share");
}

#[test]
fn the_planted_mix_shift_is_found() {
    // Answer key: Mateo Lindqvist's 0-0 fastball share falls from 0.85 to
    // 0.50 (observed 0.878 and 0.462 at the demo's seed).
    let p = pitcher("Mateo Lindqvist");
    let c = p
        .changes
        .iter()
        .find(|c| c.kind == "mix_shift" && c.situation.get("count").map(String::as_str) == Some("0-0"))
        .expect("0-0 tested");
    assert!(c.significant, "{}", c.text);
    assert_eq!(c.pitch_type.as_deref(), Some("fastball"));
    assert!(c.before > 0.8 && c.after < 0.55, "{} → {}", c.before, c.after);
    assert!(c.effect > 0.3, "total variation {}", c.effect);
    // His 2025 tell there is gone, and it carries the count's test.
    let tell = p
        .changes
        .iter()
        .find(|t| t.kind == "tell_disappeared" && t.situation == c.situation && t.pitch_type.as_deref() == Some("fastball"))
        .expect("the 0-0 fastball tell is gone");
    assert!(tell.significant && tell.q == c.q);
    assert!(tell.tell_q_before.unwrap() <= 0.05 && tell.tell_q_after.unwrap_or(1.0) > 0.05);
    assert_eq!(c.p, Some(1.0 / (MONTE_CARLO_PERMUTATIONS as f64 + 1.0)), "no deal of his games reaches it: {}", c.text);
    let q = tellscope::domain::numbers::q_text(c.q.unwrap());
    assert!(p.summary_lines.iter().any(|l| l.starts_with("0-0 counts: fastball share fell from 88% to 46%") && l.contains(&q)), "{q}: {:?}", p.summary_lines);
    // Nothing else about him changed but what follows from it: his overall
    // mix (the 0-0 fastballs are a quarter of his pitches) and, possibly,
    // his predictability.
    for s in significant(p) {
        let ok = (s.kind == "mix_shift" && (s.situation.is_empty() || s.situation.get("count").map(String::as_str) == Some("0-0")))
            || s.kind == "predictability";
        assert!(ok, "unplanted change for Lindqvist: {}", s.text);
    }
}

#[test]
fn pitchers_with_no_planted_change_show_no_significant_change() {
    for p in &demo().summary.pitchers {
        if p.pitcher == "Wes Halloran" || p.pitcher == "Mateo Lindqvist" {
            continue;
        }
        let sig = significant(p);
        assert!(sig.is_empty(), "{}: {:?}", p.pitcher, describe(&sig));
        assert!(p.summary_lines[0].starts_with("No change between 2025 and 2026 passed the test"), "{}: {:?}", p.pitcher, p.summary_lines);
        // Their planted tells (answer key: all but Lindqvist's hold in both
        // seasons) are not reported as changes.
        assert!(p.changes.iter().filter(|c| c.kind.starts_with("tell_")).all(|c| !c.significant));
    }
    // Planted lasting tells show as held (answer key: count 0-2/1-2 slider,
    // previous pitch curveball → fastball).
    let held = |name: &str, factor: &str, level: &str, pitch: &str| {
        pitcher(name).changes.iter().any(|c| {
            c.kind == "tell_held" && c.situation.len() == 1 && c.situation.get(factor).map(String::as_str) == Some(level) && c.pitch_type.as_deref() == Some(pitch)
        })
    };
    assert!(held("Oren Vasquell", "count", "1-2", "slider"));
    assert!(held("Anselm Drury", "prev_pitch", "curveball", "fastball"));
}

fn run_bin(args: &[&str], threads: &str) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_tellscope")).args(args).env("RAYON_NUM_THREADS", threads).output().unwrap()
}

fn scratch(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("tellscope-compare-demo-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    d
}

fn files(dir: &Path) -> BTreeMap<String, Vec<u8>> {
    let mut out = BTreeMap::new();
    for sub in ["", "charts"] {
        for e in std::fs::read_dir(dir.join(sub)).unwrap() {
            let e = e.unwrap();
            if e.file_type().unwrap().is_file() {
                out.insert(format!("{sub}/{}", e.file_name().to_string_lossy()), std::fs::read(e.path()).unwrap());
            }
        }
    }
    out
}

fn unescape(html: &str) -> String {
    html.replace("&lt;", "<").replace("&gt;", ">").replace("&quot;", "\"").replace("&#x27;", "'").replace("&#39;", "'").replace("&amp;", "&")
}

#[test]
fn the_report_is_complete_agrees_with_summary_json_and_is_reproducible() {
    let (a, b) = (scratch("a"), scratch("b"));
    let log = demo_log();
    let args = |out: &Path| {
        vec![
            "compare".to_string(),
            log.to_str().unwrap().to_string(),
            "--before".into(),
            "2025".into(),
            "--after".into(),
            "2026".into(),
            "--permutations".into(),
            "30".into(),
            "--out".into(),
            out.to_str().unwrap().to_string(),
        ]
    };
    let oa = run_bin(&args(&a).iter().map(String::as_str).collect::<Vec<_>>(), "1");
    assert_eq!(oa.status.code(), Some(0), "{}", String::from_utf8_lossy(&oa.stderr));
    let ob = run_bin(&args(&b).iter().map(String::as_str).collect::<Vec<_>>(), "2");
    assert_eq!(ob.status.code(), Some(0));
    let (fa, fb) = (files(&a), files(&b));
    assert_eq!(fa.keys().collect::<Vec<_>>(), fb.keys().collect::<Vec<_>>());
    for (k, v) in &fa {
        assert!(v == &fb[k], "{k} differs between 1 and 2 threads");
    }
    for f in ["/index.html", "/summary.json", "/changes.csv", "/rejected.csv"] {
        assert!(fa.contains_key(f), "{f} missing");
    }
    let json: serde_json::Value = serde_json::from_slice(&fa["/summary.json"]).unwrap();
    let pitchers = json["pitchers"].as_array().unwrap();
    let html = unescape(&String::from_utf8(fa["/index.html"].clone()).unwrap());
    let csv = String::from_utf8(fa["/changes.csv"].clone()).unwrap();
    let mut n_changes = 0;
    for p in pitchers {
        let stem = p["pitcher"].as_str().unwrap().to_lowercase().replace(' ', "_");
        for kind in ["compare-top-share", "compare-mix-shift", "compare-predictability"] {
            for ext in ["svg", "png"] {
                assert!(fa.contains_key(&format!("charts/{kind}-{stem}.{ext}")), "{kind}-{stem}.{ext} missing");
            }
        }
        for line in p["summary_lines"].as_array().unwrap() {
            assert!(html.contains(line.as_str().unwrap()), "summary line not in the page: {line}");
        }
        for c in p["changes"].as_array().unwrap() {
            n_changes += 1;
            for key in ["type", "situation", "before", "after", "effect", "p", "q"] {
                assert!(c.get(key).is_some(), "change without {key}: {c}");
            }
            assert!(c["situation"].is_object());
        }
    }
    // One CSV row per change, plus the header.
    assert_eq!(csv.lines().count(), n_changes + 1);
    assert!(csv.starts_with("pitcher,type,situation,pitch_type,direction,before,after,effect,"));
    // The terminal table names the planted changes.
    let out = String::from_utf8_lossy(&oa.stdout);
    assert!(out.contains("Added a cutter: 0% → 25% of pitches"));
    assert!(out.contains("0-0 counts: fastball share fell from 88% to 46%"));
    for d in [a, b] {
        std::fs::remove_dir_all(d).ok();
    }
}

#[test]
fn pitchers_too_small_in_a_period_are_insufficient_data() {
    // The first two weeks of 2025: no reliever has 300 pitches to train on.
    let before = PeriodSpec::parse("--before", "2025-04-01..2025-04-16").unwrap();
    let c = compare::run(&demo_log(), &settings(9), &request(before, PeriodSpec::Season(2026)), false).unwrap();
    let p = c.summary.pitchers.iter().find(|p| p.pitcher == "Jory Kestenbaum").unwrap();
    assert_eq!(p.status, "insufficient data");
    assert!(p.changes.is_empty() && p.predictability.is_none() && p.mix_before.is_none() && p.counts.is_empty());
    assert!(p.cautions[0].contains("2025-04-01..2025-04-16"), "{:?}", p.cautions);
    // --pitcher narrows the run, and an unknown one is a usage error.
    let o = Overrides { compare_permutations: Some(9), pitchers: vec!["Nobody Atall".into()], ..Overrides::default() };
    let s = Settings::resolve(&ConfigFile::default(), &o).unwrap();
    let e = compare::run(&demo_log(), &s, &request(PeriodSpec::Season(2025), PeriodSpec::Season(2026)), false).err().unwrap();
    assert_eq!(e.exit_code(), 2);
}

#[test]
fn more_than_two_seasons_give_predictability_per_season() {
    // The demo scenario with a 2024 season in front.
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(root.join("tests/fixtures/plain-staff/scenario.toml")).unwrap();
    let text = text.replacen("[[season]]", "[[season]]\nyear = 2024\ngames = 130\nstart = \"2024-04-04\"\n\n[[season]]", 1);
    let scenario = tellscope::simulate::Scenario::from_toml_str(&text).unwrap();
    let sim = tellscope::simulate::simulate(&scenario, 7);
    let dir = scratch("seasons");
    std::fs::create_dir_all(&dir).unwrap();
    let log = dir.join("three.csv");
    tellscope::simulate::write::write_frame(&mut tellscope::simulate::write::sim_frame(&sim).unwrap(), &log).unwrap();
    let c = compare::run(&log, &settings(9), &request(PeriodSpec::Season(2024), PeriodSpec::Season(2026)), false).unwrap();
    assert_eq!(c.summary.input.seasons, vec![2024, 2025, 2026]);
    let p = c.summary.pitchers.iter().find(|p| p.pitcher == "Oren Vasquell").unwrap();
    let labels: Vec<&str> = p.seasons.iter().map(|s| s.label.as_str()).collect();
    assert_eq!(labels, ["2024", "2025", "2026"]);
    for s in &p.seasons {
        assert!(s.bits_interval.low <= s.bits_gained && s.bits_gained <= s.bits_interval.high);
        assert!(s.bits_gained > 0.0, "his planted count tell shows every season: {}", s.bits_gained);
    }
    // The period figures are the season figures of the same seasons.
    let pr = p.predictability.as_ref().unwrap();
    assert_eq!(pr.before.bits_gained, p.seasons[0].bits_gained);
    assert_eq!(pr.after.bits_gained, p.seasons[2].bits_gained);
    let files = tellscope::report::compare::compare_files(&c).unwrap();
    assert!(files.iter().any(|f| f.path.to_str() == Some("charts/compare-predictability-by-season-oren_vasquell.png")));
    std::fs::remove_dir_all(dir).ok();
}

/// With 19 label swaps the least p-value a predictability change can reach
/// is 1/20 = 0.05, above the bar of its own Benjamini–Hochberg family (one
/// test per compared pitcher; BH's step-up rule, Benjamini & Hochberg
/// 1995): the notes say so once, either as the changes no swap reached or
/// as the bar no further change can clear, counting that family's tests
/// and not every test of the run.
#[test]
fn too_few_swaps_are_noted_once_against_the_predictability_family() {
    let c = compare::run(&demo_log(), &settings(19), &request(PeriodSpec::Season(2025), PeriodSpec::Season(2026)), false).unwrap();
    let family = c.summary.pitchers.iter().filter(|p| p.predictability.is_some()).count();
    assert!(family >= 5, "only {family} pitchers compared");
    let notes: Vec<&String> = c.summary.notes.iter().filter(|n| n.contains("label swap")).collect();
    assert_eq!(notes.len(), 1, "{notes:?}");
    let note = notes[0];
    let counted = if note.starts_with("The predictability-change test") {
        format!("of the {family} pitchers tested")
    } else {
        format!("among {family} predictability tests")
    };
    assert!(note.contains(&counted), "{note}");
    assert!(!note.contains(&format!("among {} ", c.summary.tests)) || c.summary.tests == family, "{note}");
}
