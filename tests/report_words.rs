//! The words of the report agree with its numbers: every flagged tell's
//! sentence in index.html carries the share, n, baseline and held-out share
//! that summary.json gives for it, and the staff table the pitchers' figures.

use std::path::Path;
use tellscope::audit;
use tellscope::settings::{ConfigFile, Overrides, Settings};

/// A count as the page writes it, worked here by hand: 1180 → "1,180".
fn grouped(n: u64) -> String {
    let d = n.to_string();
    let mut out = String::new();
    for (i, c) in d.chars().enumerate() {
        if i > 0 && (d.len() - i).is_multiple_of(3) {
            out.push(',');
        }
        out.push(c);
    }
    out
}

fn pct(x: f64) -> String {
    format!("{:.0}%", 100.0 * x)
}

/// The page's text with tags dropped and entities decoded (enough for
/// minijinja's escaping).
fn text_of(html: &str) -> String {
    let mut out = String::new();
    let mut in_tag = false;
    for c in html.chars() {
        match c {
            '<' => in_tag = true,
            '>' => in_tag = false,
            _ if !in_tag => out.push(c),
            _ => {}
        }
    }
    out.replace("&lt;", "<").replace("&gt;", ">").replace("&#x27;", "'").replace("&#x2f;", "/").replace("&quot;", "\"").replace("&amp;", "&")
}

/// The audit of `log` (relative to the project) at 49 permutations, its
/// report written to a scratch folder `tag`: the audit, the folder and the
/// page's text.
fn audited_page(log: &str, tag: &str) -> (tellscope::audit::Audit, std::path::PathBuf, String) {
    let s = Settings::resolve(&ConfigFile::default(), &Overrides { permutations: Some(49), ..Overrides::default() }).unwrap();
    let a = audit::run(&Path::new(env!("CARGO_MANIFEST_DIR")).join(log), &s, false).unwrap();
    let dir = std::env::temp_dir().join(format!("tellscope-{tag}-{}", std::process::id()));
    tellscope::report::write_audit_report(&dir, &a).unwrap();
    let text = text_of(&std::fs::read_to_string(dir.join("index.html")).unwrap());
    (a, dir, text)
}

#[test]
fn tell_sentences_carry_the_summary_numbers() {
    let (_, dir, text) = audited_page("tests/fixtures/plain-staff/demo-log.csv", "words");
    let html = std::fs::read_to_string(dir.join("index.html")).unwrap();
    let json: serde_json::Value = serde_json::from_str(&std::fs::read_to_string(dir.join("summary.json")).unwrap()).unwrap();
    let mut checked = 0;
    for p in json["pitchers"].as_array().unwrap() {
        for t in p["tells"].as_array().unwrap() {
            if !t["within"].is_null() {
                continue; // narrower versions are listed in a fold, worded the same way
            }
            let n = grouped(t["n"].as_u64().unwrap());
            let share = pct(t["share"].as_f64().unwrap());
            let pitch = t["pitch_type"].as_str().unwrap();
            // A sheet tell is measured against his share elsewhere; a tell
            // beyond the sheet against what his sheet predicts.
            let reference = if t["layer"] == "beyond" {
                format!("would give {}", pct(t["expected_share"].as_f64().unwrap()))
            } else {
                format!("against {} otherwise", pct(t["baseline_share"].as_f64().unwrap()))
            };
            // The sentence holding this tell's pitch, n and reference share.
            let found = text.lines().any(|l| {
                let l = l.trim();
                l.contains(pitch)
                    && (l.contains(&format!("(n = {n})")) || l.contains(&format!("(0 of {n} pitches)")) || l.contains(&format!("(n = {n}),")))
                    && l.contains(&reference)
                    && (l.contains(&format!(" {share} of the time")) || t["k"].as_u64() == Some(0))
                    && match t["held_out_share"].as_f64() {
                        Some(h) => l.contains(&format!("{} (n = {}", pct(h), grouped(t["held_out_n"].as_u64().unwrap()))),
                        None => true,
                    }
            });
            assert!(found, "no sentence for {} {} {}", p["pitcher"], t["situation"], pitch);
            checked += 1;
        }
        if p["status"] == "ok" {
            // The staff table's flagged tells are his own tells on the sheet
            // and beyond it (not the narrower ones inside another), as the
            // terminal's table counts them.
            let own = p["tells"].as_array().unwrap().iter().filter(|t| t["within"].is_null()).count();
            let row = html
                .split("<tr")
                .find(|r| r.contains(&format!(">{}</a>", p["pitcher"].as_str().unwrap())) && r.contains("data-v"))
                .expect("a staff table row");
            let row = &row[..row.find("</tr>").expect("the row's end") + 5];
            assert!(row.ends_with(&format!("<td>{own}</td></tr>")), "{}: {row}", p["pitcher"]);
            // The per-pitcher summary line uses the same accuracies.
            let prior = pct(p["prior_accuracy"].as_f64().unwrap());
            let model = pct(p["model_accuracy"].as_f64().unwrap());
            assert!(
                text.contains(&format!("was right {prior} of the time; the situational model {model}")),
                "{}: summary line",
                p["pitcher"]
            );
        }
    }
    assert!(checked >= 10, "only {checked} tells checked");
    std::fs::remove_dir_all(&dir).ok();
}

/// The plain staff's log with `edit(column index of, row)` applied to each
/// data row, written to a scratch folder named after `tag`: returns the
/// folder, the log and the first row's pitcher.
fn edited_log(tag: &str, mut edit: impl FnMut(&dyn Fn(&str) -> usize, &mut Vec<String>)) -> (std::path::PathBuf, std::path::PathBuf, String) {
    let src = std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/plain-staff/demo-log.csv")).unwrap();
    let mut lines = src.lines();
    let header = lines.next().unwrap();
    let cols: Vec<&str> = header.split(',').collect();
    let at = |n: &str| cols.iter().position(|c| *c == n).unwrap();
    let mut first = None;
    let mut out = vec![header.to_string()];
    for line in lines {
        let mut r: Vec<String> = line.split(',').map(str::to_string).collect();
        assert_eq!(r.len(), cols.len(), "the fixture has no quoted commas");
        first.get_or_insert_with(|| r[at("pitcher")].clone());
        edit(&at, &mut r);
        out.push(r.join(","));
    }
    let dir = std::env::temp_dir().join(format!("tellscope-{tag}-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let log = dir.join("log.csv");
    std::fs::write(&log, out.join("\n") + "\n").unwrap();
    (dir, log, first.unwrap())
}

/// A pitcher the log lists with both throwing hands is shown with his usual
/// hand, and his section says so with both counts (counted here from the
/// CSV text).
#[test]
fn a_pitcher_listed_with_both_hands_is_said_so() {
    // The first row's pitcher: his games in order of first appearance,
    // every third one with the other hand.
    let (mut who, mut hand) = (None::<String>, String::new());
    let mut games: Vec<String> = Vec::new();
    let (mut usual, mut flipped) = (0usize, 0usize);
    let (dir, log, first) = edited_log("hands", |at, r| {
        let me = who.get_or_insert_with(|| {
            hand = r[at("throws")].clone();
            r[at("pitcher")].clone()
        });
        if r[at("pitcher")] != *me {
            return;
        }
        let game = &r[at("game")];
        if !games.contains(game) {
            games.push(game.clone());
        }
        if games.iter().position(|g| g == game).unwrap() % 3 == 2 {
            let t = at("throws");
            r[t] = if r[t] == "L" { "R".into() } else { "L".into() };
            flipped += 1;
        } else {
            usual += 1;
        }
    });
    assert!(flipped > 0 && usual > flipped);
    let s = Settings::resolve(&ConfigFile::default(), &Overrides { permutations: Some(9), pitchers: vec![first.clone()], ..Overrides::default() }).unwrap();
    let a = audit::run(&log, &s, false).unwrap();
    let p = a.summary.pitchers.iter().find(|p| p.pitcher == first).unwrap();
    assert_eq!(p.throws, hand);
    let (word, other) = if hand == "L" { ("left", "right") } else { ("right", "left") };
    let expected = format!("both hands ({} pitches {word}-handed, {} {other}-handed)", grouped(usual as u64), grouped(flipped as u64));
    assert!(p.cautions.iter().any(|c| c.contains(&expected)), "{:?} lacks {expected}", p.cautions);
    std::fs::remove_dir_all(&dir).ok();
}

/// A pitcher who throws one pitch on every scored pitch is told that his
/// near-zero figures do not make him hard to read; the others are not.
#[test]
fn a_one_pitch_pitcher_is_not_called_hard_to_read() {
    let mut who = None::<String>;
    let (dir, log, first) = edited_log("one-pitch", |at, r| {
        if r[at("pitcher")] == *who.get_or_insert_with(|| r[at("pitcher")].clone()) {
            r[at("pitch_type")] = "fastball".into();
        }
    });
    let s = Settings::resolve(&ConfigFile::default(), &Overrides { permutations: Some(9), ..Overrides::default() }).unwrap();
    let a = audit::run(&log, &s, false).unwrap();
    for p in a.summary.pitchers.iter().filter(|p| p.status == "ok") {
        let said = p.cautions.iter().any(|c| c.contains("on every pitch scored: a hitter knows what is coming every time"));
        assert_eq!(said, p.pitcher == first, "{}: {:?}", p.pitcher, p.cautions);
    }
    assert!(a.summary.pitchers.iter().any(|p| p.pitcher == first && p.status == "ok"));
    std::fs::remove_dir_all(&dir).ok();
}

/// A run asked for no shuffles says that no test was run, and never that
/// its pitchers "met no shuffle as strong as the real one" (a floor of
/// p = 1 that more shuffles could lower): the audit's three tests and
/// compare's label swaps alike.
#[test]
fn a_run_without_shuffles_says_no_test_was_run() {
    use tellscope::compare::{self, period::PeriodSpec, Request};
    let log = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/plain-staff/demo-log.csv");
    let s = Settings::resolve(&ConfigFile::default(), &Overrides { permutations: Some(0), compare_permutations: Some(0), ..Overrides::default() }).unwrap();
    let a = audit::run(&log, &s, false).unwrap();
    let scored: Vec<_> = a.summary.pitchers.iter().filter_map(|p| p.p_value).collect();
    assert!(!scored.is_empty() && scored.iter().all(|&p| p == 1.0), "{scored:?}");
    let notes = &a.summary.notes;
    assert!(notes.iter().any(|n| n.starts_with("No permutation test was run (`--permutations 0`)")), "{notes:#?}");
    assert!(!notes.iter().any(|n| n.contains("met no shuffle")), "{notes:#?}");
    let request = Request { before: PeriodSpec::parse("--before", "2025").unwrap(), after: PeriodSpec::parse("--after", "2026").unwrap() };
    let c = compare::run(&log, &s, &request, false).unwrap();
    assert!(c.summary.pitchers.iter().any(|p| p.predictability.is_some()), "some pitcher compared");
    let notes = &c.summary.notes;
    assert!(notes.iter().any(|n| n.starts_with("No label-swap test was run (`--permutations 0`)")), "{notes:#?}");
    assert!(!notes.iter().any(|n| n.contains("met no label swap") || n.contains("smallest p-value a predictability change can reach")), "{notes:#?}");
}

/// The tree's branches of a pitcher whose permutation test found nothing
/// carry a caution that they describe past pitches, and only those.
#[test]
fn branches_of_an_unflagged_pitcher_are_read_with_care() {
    let (a, dir, text) = audited_page("demo-data/demo-log.csv", "branches");
    let caution = "so read them as the shape of his past pitches, not as habits that hold";
    let want = a.summary.pitchers.iter().filter(|p| p.significant == Some(false) && !p.rules.is_empty()).count();
    assert!(want > 0, "the realistic demo has an unflagged pitcher with branches");
    assert_eq!(text.matches(caution).count(), want);
    std::fs::remove_dir_all(&dir).ok();
}

/// The page's table of pitchers without figures says the rule once and,
/// per pitcher, his pitches by season and which side he falls short on,
/// worked out here from summary.json's counts and the settings' minimums.
/// The bundled demo club has two such pitchers (demo-data/README.md).
#[test]
fn pitchers_without_figures_say_where_they_fall_short() {
    let (a, dir, text) = audited_page("demo-data/demo-log.csv", "short");
    let (min_train, min_test) = (a.summary.settings.min_train_pitches, a.summary.settings.min_test_pitches);
    assert!(text.contains(&format!(
        "No figure is shown for a pitcher the models could learn from fewer than {min_train} of his pitches, or score fewer than {min_test}"
    )));
    let short: Vec<_> = a.summary.pitchers.iter().filter(|p| !p.is_ok()).collect();
    assert!(!short.is_empty());
    for p in short {
        let seasons: Vec<String> = p.pitches_by_season.iter().map(|(y, n)| format!("{} in {y}", grouped(*n as u64))).collect();
        let side = match (p.n_train < min_train, p.n_test < min_test) {
            (true, true) => "too few to learn from and to score",
            (true, false) => "too few to learn from",
            (false, true) => "too few to score",
            (false, false) => panic!("{} has enough of both", p.pitcher),
        };
        let row = format!("{}{}{}{}: {side}.", p.pitcher, grouped(p.n_train as u64), grouped(p.n_test as u64), seasons.join(", "));
        assert!(text.contains(&row), "{row}");
    }
    std::fs::remove_dir_all(&dir).ok();
}
