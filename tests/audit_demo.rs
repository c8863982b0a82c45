//! The audit on the demo log against the demo's answer key
//! (tests/fixtures/plain-staff/README.md), and the audit's reproducibility and honesty
//! guarantees: no leakage from held-out labels, byte-identical output for the
//! same seed at any thread count.

use std::path::{Path, PathBuf};
use std::sync::OnceLock;
use tellscope::audit::{self, summary::PitcherSummary, Audit};
use tellscope::settings::{ConfigFile, Overrides, Settings};
use tellscope::domain::levels::Factor;
use tellscope::tells::Direction;

fn demo_log() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/plain-staff/demo-log.csv")
}

fn settings(permutations: usize) -> Settings {
    Settings::resolve(&ConfigFile::default(), &Overrides { permutations: Some(permutations), ..Overrides::default() }).unwrap()
}

/// One audit of the demo at 199 permutations, shared by the tests.
fn demo() -> &'static Audit {
    static A: OnceLock<Audit> = OnceLock::new();
    A.get_or_init(|| audit::run(&demo_log(), &settings(199), false).unwrap())
}

fn pitcher(name: &str) -> &'static PitcherSummary {
    demo().summary.pitchers.iter().find(|p| p.pitcher == name).unwrap_or_else(|| panic!("{name} missing"))
}

/// Pitchers with a tell planted in both seasons (answer key).
const PLANTED: [&str; 6] =
    ["Oren Vasquell", "Teodor Brimley", "Inigo Marchetti", "Jory Kestenbaum", "Anselm Drury", "Bram Sotheby"];
/// Pitchers with nothing planted (Wes Halloran only adds a pitch in 2026).
const NULL: [&str; 5] = ["Callum Ashgrove", "Rafe Dunmore", "Silas Wetherby", "Ulric Penhallow", "Wes Halloran"];

#[test]
fn planted_pitchers_gain_bits_and_pass_the_permutation_test() {
    for name in PLANTED {
        let p = pitcher(name);
        assert_eq!(p.status, "ok");
        assert!(p.bits_gained.unwrap() > 0.0, "{name}: bits {:?}", p.bits_gained);
        assert_eq!(p.significant, Some(true), "{name}: q {:?}", p.q_value);
    }
}

/// The margins are set from the sample size, not by trial: for bits, the
/// expected overfit L(K−1)/(2n ln 2) plus three standard errors of the
/// held-out mean; for lift, three McNemar standard errors of the paired
/// accuracy difference over the prior's accuracy (see README).
#[test]
fn null_pitchers_stay_within_their_sampling_margins() {
    for name in NULL {
        let p = pitcher(name);
        let bits = p.bits_gained.unwrap();
        let lift = p.lift.unwrap();
        assert!(bits.abs() <= p.bits_margin.unwrap(), "{name}: bits {bits} margin {:?}", p.bits_margin);
        assert!(lift.abs() <= p.lift_margin.unwrap() + 1e-12, "{name}: lift {lift} margin {:?}", p.lift_margin);
        assert_eq!(p.significant, Some(false), "{name}");
        assert!(p.tells.is_empty(), "{name} has flagged tells: {:?}", p.tells.iter().map(|t| &t.situation).collect::<Vec<_>>());
    }
}

fn has_tell(name: &str, factor: Factor, level: &str, pitch: &str, dir: Direction) -> bool {
    pitcher(name).tells.iter().any(|t| {
        t.situation.len() == 1
            && t.situation.get(&factor).map(String::as_str) == Some(level)
            && t.pitch_type == pitch
            && t.direction == dir
    })
}

#[test]
fn every_planted_tell_is_flagged() {
    use Direction::*;
    use Factor::*;
    assert!(has_tell("Oren Vasquell", Count, "0-2", "slider", More));
    assert!(has_tell("Oren Vasquell", Count, "1-2", "slider", More));
    assert!(has_tell("Teodor Brimley", Platoon, "same", "changeup", Less) || has_tell("Teodor Brimley", Platoon, "opposite", "changeup", More));
    assert!(has_tell("Inigo Marchetti", TimesThrough, "3+", "curveball", More));
    assert!(has_tell("Jory Kestenbaum", Bases, "1--", "sinker", More));
    assert!(has_tell("Anselm Drury", PrevPitch, "curveball", "fastball", More));
    // Planted on two outs with an opposite-side batter: the side half is a
    // sheet tell. The two-outs half is tested beyond the sheet, each game's
    // pitches only against each other; a reliever's outing of about 16
    // pitches holds few with two outs against an opposite-side batter, so
    // on this log (224 pitches in the situation) that test is weaker and
    // not required.
    assert!(has_tell("Bram Sotheby", Platoon, "opposite", "splitter", More));
    // The 2025 first-pitch fastball, found in training and seen not to hold.
    assert!(has_tell("Mateo Lindqvist", Count, "0-0", "fastball", More));
    let t = pitcher("Mateo Lindqvist")
        .tells
        .iter()
        .find(|t| t.situation.get(&Count).map(String::as_str) == Some("0-0") && t.pitch_type == "fastball")
        .unwrap();
    assert!(t.held_out_share.unwrap() < 0.6, "the 2026 drop to 50% shows held out");
}

/// Halloran's cutter is new in 2026 (a quarter of his pitches). Scored
/// rolling, it is new only to the first block of 2026 (about 480 pitches, a
/// quarter of them cutters: 60-200 with room for chance), and enters the
/// model once he has thrown it; season-forward, every 2026 cutter is new
/// (about 600).
#[test]
fn the_new_pitch_is_called_out() {
    let p = pitcher("Wes Halloran");
    let unseen = p.n_unseen_type.unwrap();
    assert!((60..=200).contains(&unseen), "{unseen} new-type pitches");
    assert!(p.cautions.iter().any(|c| c.contains("cutter")), "{:?}", p.cautions);
    let s = Settings::resolve(&ConfigFile::default(), &Overrides { permutations: Some(19), test_season: Some(2026), ..Overrides::default() }).unwrap();
    let a = audit::run(&demo_log(), &s, false).unwrap();
    let p = a.summary.pitchers.iter().find(|p| p.pitcher == "Wes Halloran").unwrap();
    assert_eq!(p.evaluation.scheme, "season-forward");
    assert!(p.n_unseen_type.unwrap() > 400);
}

#[test]
fn tells_csv_lists_every_test_and_summary_only_flagged() {
    let a = demo();
    assert_eq!(a.summary.tell_tests, a.tests.len());
    let flagged: usize = a.summary.pitchers.iter().map(|p| p.tells.len()).sum();
    assert_eq!(flagged, a.tests.iter().filter(|t| t.flagged).count());
    for t in &a.tests {
        assert_eq!(t.flagged, t.q_value <= 0.05 && t.effect() >= 0.10 && t.n >= 20);
        assert!(t.p_value > 0.0 && t.p_value <= 1.0 && t.q_value >= t.p_value.min(1.0) - 1e-12);
    }
    // Strongest first.
    for p in &a.summary.pitchers {
        for w in p.tells.windows(2) {
            assert!(w[0].strength() >= w[1].strength() - 1e-9);
        }
    }
}

fn summary_json(threads: usize, seed: u64) -> String {
    let pool = rayon::ThreadPoolBuilder::new().num_threads(threads).build().unwrap();
    let s = Settings::resolve(
        &ConfigFile::default(),
        &Overrides { permutations: Some(99), seed: Some(seed), ..Overrides::default() },
    )
    .unwrap();
    pool.install(|| {
        let a = audit::run(&demo_log(), &s, false).unwrap();
        tellscope::report::json::summary_json(&a.summary).unwrap()
    })
}

#[test]
fn same_seed_same_bytes_at_any_thread_count() {
    let one = summary_json(1, 7);
    let two = summary_json(2, 7);
    let again = summary_json(2, 7);
    assert_eq!(one, two);
    assert_eq!(two, again);
    assert_ne!(summary_json(2, 8), two, "a different seed draws different permutations");
}

/// A demo pitcher's task under the season-forward scheme (the latest
/// season held out).
fn season_forward_task(s: &Settings, name: &str) -> tellscope::evaluate::task::PitcherTask {
    use tellscope::evaluate::{split::Plan, task::PitcherTask};
    let ing = tellscope::ingest::load(&demo_log(), &s.input).unwrap();
    let sit = tellscope::situations::build(&ing.log);
    let plan = Plan::new(&ing.log, None, 5).unwrap();
    let p = ing.log.pitchers.iter().position(|x| x == name).unwrap() as u32;
    let rows: Vec<u32> = (0..ing.log.len() as u32).filter(|&i| ing.log.pitcher[i as usize] == p).collect();
    PitcherTask::build(&ing.log, &sit, &plan.local(&ing.log, &rows), p, rows)
}

#[test]
fn held_out_labels_never_shape_the_fit() {
    use rand::{seq::SliceRandom, SeedableRng};
    use tellscope::evaluate::{fit::observe, fit::Workspace};
    let s = settings(9);
    for name in ["Oren Vasquell", "Jory Kestenbaum"] {
        let task = season_forward_task(&s, name);
        let mut ws = Workspace::new(&task);
        let a = observe(&task, &task.labels, &s, &mut ws);
        // Shuffle the held-out season's labels only.
        let mut labels = task.labels.clone();
        let test: Vec<usize> = task.held_out.iter().map(|&i| i as usize).collect();
        let mut vals: Vec<u8> = test.iter().map(|&i| labels[i]).collect();
        vals.shuffle(&mut rand_chacha::ChaCha8Rng::seed_from_u64(1));
        for (i, v) in test.iter().zip(vals) {
            labels[*i] = v;
        }
        assert_ne!(labels, task.labels);
        let mut ws2 = Workspace::new(&task);
        let b = observe(&task, &labels, &s, &mut ws2);
        assert_eq!(a.trees, b.trees, "{name}: trees changed");
        assert_eq!(a.usage, b.usage, "{name}: usage prior changed");
        assert_eq!(a.strengths, b.strengths, "{name}: shrunk priors' strength changed");
        assert_eq!(a.model, b.model, "{name}: held-out probabilities changed");
    }
}

/// The three kinds of fit agree where they overlap: `score_rows` gives the
/// observed fit's held-out rows, probabilities and sums (without its trees),
/// and `refit` its sums, on the same labels and on shuffled ones.
#[test]
fn every_kind_of_fit_scores_alike() {
    use rand::{seq::SliceRandom, SeedableRng};
    use tellscope::evaluate::{fit, fit::Workspace};
    let s = settings(9);
    let task = season_forward_task(&s, "Oren Vasquell");
    let mut shuffled = task.labels.clone();
    shuffled.shuffle(&mut rand_chacha::ChaCha8Rng::seed_from_u64(3));
    for labels in [&task.labels, &shuffled] {
        let a = fit::observe(&task, labels, &s, &mut Workspace::new(&task));
        let b = fit::score_rows(&task, labels, &s, &mut Workspace::new(&task));
        let c = fit::refit(&task, labels, &s, &mut Workspace::new(&task));
        assert!(!a.rows.is_empty() && !a.trees.is_empty());
        assert_eq!((&a.rows, &a.model, &a.prior, a.unseen), (&b.rows, &b.model, &b.prior, b.unseen));
        assert!(b.trees.is_empty() && c.rows.is_empty() && c.model.is_empty());
        for t in [&b.totals, &c.totals] {
            assert_eq!((a.totals.n, a.totals.bits, a.totals.acc), (t.n, t.bits, t.acc));
        }
    }
}

/// Pitches that are not the pitcher's choice (a pitchout beside a pitch of
/// the plate appearance, intentional balls, unknown types) are set aside
/// before anything is learned: the audit of the demo with them added is the
/// audit of the demo, figure for figure, and the run says what it set
/// aside. Kept as pitches (`[set_aside] pitch_labels = []`), they would
/// become pitch types of their own.
#[test]
fn pitches_that_are_not_his_choice_leave_every_figure_unchanged() {
    let text = std::fs::read_to_string(demo_log()).unwrap();
    let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
    let header: Vec<&str> = lines[0].split(',').collect();
    let col = |name: &str| header.iter().position(|h| *h == name).unwrap();
    let (pt, pa, pitch_no, balls) = (col("pitch_type"), col("pa"), col("pitch_no"), col("balls"));
    let mut added = Vec::new();
    for (i, line) in lines.iter().enumerate().skip(1) {
        let mut f: Vec<String> = line.split(',').map(str::to_string).collect();
        if i % 97 == 0 {
            // A pitchout beside a pitch of the plate appearance.
            f[pt] = "PO".into();
            added.push(f.join(","));
        } else if i % 131 == 0 {
            f[pt] = "unknown".into();
            added.push(f.join(","));
        } else if i % 499 == 0 {
            // An intentional walk: a plate appearance of its own at the
            // game's end, four intentional balls.
            for b in 0..4 {
                let mut g = f.clone();
                g[pa] = "900".into();
                g[pitch_no] = (b + 1).to_string();
                g[balls] = b.to_string();
                g[col("strikes")] = "0".into();
                g[pt] = "Intentional Ball".into();
                added.push(g.join(","));
            }
        }
    }
    let n_added = added.len();
    lines.extend(added);
    let dir = std::env::temp_dir().join(format!("tellscope-set-aside-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("with-pitchouts.csv");
    std::fs::write(&path, lines.join("\n") + "\n").unwrap();

    let with = audit::run(&path, &settings(199), false).unwrap();
    let plain = demo();
    assert_eq!(with.summary.input.rows_set_aside, n_added);
    assert_eq!(with.set_aside.len(), n_added, "every set-aside row is kept for set_aside.csv");
    assert_eq!(with.summary.input.rows_kept, plain.summary.input.rows_kept);
    let labels: Vec<&str> = with.summary.input.pitch_labels_set_aside.iter().map(|l| l.label.as_str()).collect();
    assert_eq!(labels.len(), 3, "{labels:?}");
    for l in ["PO", "unknown", "Intentional Ball"] {
        assert!(labels.contains(&l), "{l} missing from {labels:?}");
    }
    assert!(with.summary.notes.iter().any(|n| n.contains("set aside") && n.contains("\"PO\" (a pitchout)")), "{:?}", with.summary.notes);
    let json = |a: &Audit| serde_json::to_string(&a.summary.pitchers).unwrap();
    assert!(json(&with) == json(plain), "the set-aside pitches changed a figure");

    // Kept as pitches, they become pitch types the model must guess.
    let cfg: ConfigFile = toml::from_str("[set_aside]\npitch_labels = []\n").unwrap();
    let keep = Settings::resolve(&cfg, &Overrides { permutations: Some(0), ..Overrides::default() }).unwrap();
    let ing = tellscope::ingest::load(&path, &keep.input).unwrap();
    assert!(ing.set_aside.is_empty());
    for l in ["PO", "unknown", "Intentional Ball"] {
        assert!(ing.log.pitch_types.iter().any(|t| t == l), "{l} kept as a pitch type");
    }
}
