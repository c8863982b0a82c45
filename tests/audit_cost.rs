//! Does a tell cost him? The realistic demo plants one tell that hitters
//! cash in (Anselm Drury's fastball after a curveball: batters sit on it,
//! fewer whiffs, more balls in play) and one that costs nothing (Inigo
//! Marchetti's curveball the third time through). The cost test is the
//! Cochran–Mantel–Haenszel test of tellscope::significance::cmh, checked
//! against statsmodels' StratifiedTable in tests/stats_reference.rs.

use std::path::{Path, PathBuf};
use std::sync::OnceLock;
use tellscope::audit::{self, Audit};
use tellscope::settings::{ConfigFile, Overrides, Settings};
use tellscope::domain::levels::Factor;

fn demo_log() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data/demo-log.csv")
}

fn settings() -> Settings {
    Settings::resolve(&ConfigFile::default(), &Overrides { permutations: Some(19), ..Overrides::default() }).unwrap()
}

fn demo() -> &'static Audit {
    static A: OnceLock<Audit> = OnceLock::new();
    A.get_or_init(|| audit::run(&demo_log(), &settings(), false).unwrap())
}

#[test]
fn the_tell_hitters_cash_in_is_costly_and_the_other_is_not() {
    let a = demo();
    let tell = |name: &str, f: Factor, level: &str, pitch: &str| {
        a.summary
            .pitchers
            .iter()
            .find(|p| p.pitcher == name)
            .unwrap()
            .tells
            .iter()
            .find(|t| t.situation.len() == 1 && t.situation.get(&f).map(String::as_str) == Some(level) && t.pitch_type == pitch)
            .unwrap_or_else(|| panic!("{name}: no {f} {level} {pitch} tell"))
    };
    let drury = tell("Anselm Drury", Factor::PrevPitch, "curveball", "fastball");
    let c = drury.cost.as_ref().expect("a cost with a result column");
    assert!(c.costly, "Drury's fastball after a curveball: {c:?}");
    assert!(c.whiff_rate < c.expected_whiff_rate && c.in_play_rate > c.expected_in_play_rate);
    assert!(c.whiff_diff_high < 0.0, "the interval of the difference excludes 0: {c:?}");
    let marchetti = tell("Inigo Marchetti", Factor::TimesThrough, "3+", "curveball");
    let c = marchetti.cost.as_ref().unwrap();
    assert!(!c.costly, "Marchetti's curveball third time through: {c:?}");
    assert!(c.whiff_diff_low <= 0.0 && 0.0 <= c.whiff_diff_high + 0.05);
    // Nobody else's flagged tell costs him: every other pitch fares by the
    // count alone in the simulator.
    for p in &a.summary.pitchers {
        for t in &p.tells {
            let costly = t.cost.as_ref().is_some_and(|c| c.costly);
            let is_drury = p.pitcher == "Anselm Drury" && t.pitch_type == "fastball" && t.situation.get(&Factor::PrevPitch).map(String::as_str) == Some("curveball");
            assert!(!costly || is_drury, "{} {:?} {} is called costly", p.pitcher, t.situation, t.pitch_type);
        }
    }
    // Predictability against outcomes: per pitcher (by type and pooled) and
    // for the staff, each with its interval around its difference.
    let staff = a.summary.staff_called_outcomes.as_ref().expect("a staff figure with results");
    let d = staff.whiff_rate_called - staff.expected_whiff_rate;
    assert!(staff.diff_low <= d && d <= staff.diff_high && staff.called_swings > 500);
    let with_figures = a.summary.pitchers.iter().filter_map(|p| p.called_outcomes.as_ref()).count();
    assert!(with_figures >= 10);
    for p in a.summary.pitchers.iter().filter_map(|p| p.called_outcomes.as_ref()) {
        for f in p.by_type.iter().chain(std::iter::once(&p.pooled)) {
            let d = f.whiff_rate_called - f.expected_whiff_rate;
            assert!(f.diff_low <= d + 1e-12 && d <= f.diff_high + 1e-12 && (0.0..=1.0).contains(&f.p_value));
        }
    }
    // The page says which tells cost and which do not.
    let dir = std::env::temp_dir().join(format!("tellscope-cost-{}", std::process::id()));
    tellscope::report::write_audit_report(&dir, a).unwrap();
    let html = std::fs::read_to_string(dir.join("index.html")).unwrap();
    assert!(html.contains("It costs him: his fastball right after a curveball"));
    assert!(html.contains("predictable, and it still works"));
    // A pitch he avoids is told as avoided (Drury's changeup right after a
    // curveball: 5% where his habits give 15%), and its 7 swings there are
    // too few to say what it costs him.
    assert!(
        html.contains("He throws his changeup less often right after a curveball: too few swings there to say whether it costs him (7 swings, fewer than 50)"),
        "the avoided changeup's advice"
    );
    assert!(!html.contains("predictable, and it may be costing him, but the evidence is thin (q = 1.000, 7 swings)"));
    std::fs::remove_dir_all(&dir).ok();
}

/// Without a `result` column the audit runs, says cost figures need it, and
/// nothing else changes.
#[test]
fn without_results_the_audit_is_the_same_but_for_cost() {
    let text = std::fs::read_to_string(demo_log()).unwrap();
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let at = header.iter().position(|h| *h == "result").unwrap();
    let keep = |l: &str| l.split(',').enumerate().filter(|(i, _)| *i != at).map(|(_, v)| v).collect::<Vec<_>>().join(",");
    let mut out = keep(&header.join(","));
    out.push('\n');
    for l in lines {
        out.push_str(&keep(l));
        out.push('\n');
    }
    let dir = std::env::temp_dir().join(format!("tellscope-noresult-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("demo-log.csv");
    std::fs::write(&path, out).unwrap();
    let b = audit::run(&path, &settings(), false).unwrap();
    let a = demo();
    assert!(b.summary.notes.iter().any(|n| n.contains("result")), "{:?}", b.summary.notes);
    assert_eq!(a.summary.pitchers.len(), b.summary.pitchers.len());
    for (x, y) in a.summary.pitchers.iter().zip(&b.summary.pitchers) {
        assert_eq!(x.pitcher, y.pitcher);
        assert_eq!(x.bits_gained, y.bits_gained);
        assert_eq!(x.p_value, y.p_value);
        assert_eq!(x.beyond_p_value, y.beyond_p_value);
        assert_eq!(x.tells.len(), y.tells.len());
        assert!(y.tells.iter().all(|t| t.cost.is_none()));
        assert!(y.called_outcomes.is_none());
    }
    assert!(b.summary.staff_called_outcomes.is_none());
    std::fs::remove_dir_all(&dir).ok();
}

/// Outcome figures per pitch type and situation: the `outcomes.csv` rows
/// against a hand count over the log's own text (a swing is a swinging
/// strike, a foul or a ball in play; the whiff rate is swinging strikes per
/// swing — common practice), with the Wilson interval of
/// tellscope::significance::wilson (checked against statsmodels in
/// tests/stats_reference.rs) around each rate.
#[test]
fn outcome_figures_by_situation_match_a_hand_count() {
    let a = demo();
    let text = std::fs::read_to_string(demo_log()).unwrap();
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let col = |n: &str| header.iter().position(|h| *h == n).unwrap();
    let (pc, ty, balls, strikes, res) = (col("pitcher"), col("pitch_type"), col("balls"), col("strikes"), col("result"));
    let (who, pitch) = ("Anselm Drury", "curveball");
    let (mut pitches, mut swings, mut whiffs, mut in_play, mut all) = (0u64, 0u64, 0u64, 0u64, 0u64);
    for l in lines {
        let f: Vec<&str> = l.split(',').collect();
        if f[pc] != who || f[ty] != pitch {
            continue;
        }
        all += 1;
        if f[balls] != "0" || f[strikes] != "2" {
            continue;
        }
        pitches += 1;
        match f[res] {
            "swinging_strike" => {
                swings += 1;
                whiffs += 1
            }
            "foul" => swings += 1,
            "in_play" => {
                swings += 1;
                in_play += 1
            }
            _ => {}
        }
    }
    assert!(pitches > 30, "the demo's {who} throws {pitch} at 0-2");
    let row = a
        .outcomes
        .iter()
        .find(|r| r.pitcher == who && r.pitch_type == pitch && r.factor == "count" && r.level == "0-2")
        .expect("a 0-2 row");
    assert_eq!((row.pitches, row.swings), (pitches, swings));
    assert!((row.whiff.rate - whiffs as f64 / swings as f64).abs() < 1e-12);
    assert!((row.in_play.rate - in_play as f64 / pitches as f64).abs() < 1e-12);
    assert!(row.whiff.low < row.whiff.rate && row.whiff.rate < row.whiff.high);
    let whole = a.outcomes.iter().find(|r| r.pitcher == who && r.pitch_type == pitch && r.factor == "all").unwrap();
    assert_eq!(whole.pitches, all);
    // Every level of a factor adds up to his pitches of the type.
    let count_total: u64 = a.outcomes.iter().filter(|r| r.pitcher == who && r.pitch_type == pitch && r.factor == "count").map(|r| r.pitches).sum();
    assert_eq!(count_total, all);
}

/// The cost tests form two Benjamini–Hochberg families (src/outcomes.rs):
/// tells of a pitch he throws more in the situation, and tells of one he
/// throws less. Each tell's cost q-value is BH over its own family only
/// (`fdr::bh_q_values`, checked against statsmodels' `multipletests` in
/// tests/stats_reference.rs); pooled, the more-tells' q-values would be
/// larger.
#[test]
fn cost_tests_are_two_families_by_direction() {
    use tellscope::significance::fdr;
    use tellscope::tells::Direction;
    let a = demo();
    // Every tell tested for cost (the flagged ones), location tells aside.
    let every: Vec<&tellscope::tells::TellTest> = a.tests.iter().filter(|t| t.cost.is_some()).collect();
    for direction in [Direction::More, Direction::Less] {
        let family: Vec<&tellscope::tells::TellTest> = every.iter().copied().filter(|t| t.direction == direction).collect();
        assert!(family.len() >= 20, "{} cost tests of {direction:?} tells", family.len());
        let p: Vec<f64> = family.iter().map(|t| t.cost.as_ref().unwrap().p_value).collect();
        for (t, q) in family.iter().zip(fdr::bh_q_values(&p)) {
            let got = t.cost.as_ref().unwrap().q_value;
            assert!((got - q).abs() <= 1e-12 * q.max(1e-300), "{} {:?} {}: q {got} against {q} in its family", t.pitcher, t.situation, t.pitch_type);
        }
    }
}
