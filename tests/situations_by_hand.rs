//! The factor levels of CONTRACT §2, worked out by hand for a small
//! hand-written log (tests/fixtures/logs/situations.csv) and compared with
//! `tellscope::situations::build`, row by row and factor by factor.
//!
//! The log: two games of an invented club, two pitchers (Ash Pell, right-
//! handed; Dale Moss, left-handed), two batters (Bo Drum bats left; Cy Fenn
//! bats right), 28 pitches. Game H-0501: Ash starts, Dale relieves him in
//! the middle of plate appearance 5 (count 0-2), the game goes to the 10th.
//! Game H-0502: Dale starts, Ash relieves him between plate appearances.
//! One `score_diff` cell is empty (line 13).
//!
//! The rules used below, all common practice (the rules of the count, of the
//! bases and of outs, as the contract spells them):
//! - count is balls-strikes before the pitch;
//! - platoon is `same` when the batter hits from the pitcher's throwing side;
//! - bases lists first, second, third, a dash for an empty base;
//! - prev_pitch is the previous pitch of the same plate appearance by the
//!   same pitcher, `none` on the first pitch of a plate appearance and on a
//!   reliever's first pitch (he did not throw the previous one);
//! - times_through counts this batter's plate appearances against this
//!   pitcher in this game, this one included, 3 and more as `3+`; a reliever
//!   entering mid-PA is facing the batter for the first time;
//! - inning thirds 1-3, 4-6, 7-9 and extra innings 10+;
//! - score from the pitcher's side: behind < 0, tied = 0, ahead > 0.

use std::path::{Path, PathBuf};
use tellscope::ingest::{self, PitchLog};
use tellscope::settings::{ConfigFile, Overrides, Settings};
use tellscope::domain::levels::Factor;
use tellscope::situations::{self, Situations};

fn fixture(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/logs").join(name)
}

fn scratch(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("tellscope-situations-{}-{name}", std::process::id()));
    std::fs::create_dir_all(&d).unwrap();
    d
}

fn settings() -> Settings {
    Settings::resolve(&ConfigFile::default(), &Overrides::default()).unwrap()
}

fn load(path: &Path) -> PitchLog {
    ingest::load(path, &settings().input).unwrap_or_else(|e| panic!("{}: {e}", path.display())).log
}

/// The fixture without the named columns (the file has no quoted cells).
fn without_columns(drop: &[&str], dir: &Path) -> PathBuf {
    let text = std::fs::read_to_string(fixture("situations.csv")).unwrap();
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let keep: Vec<usize> = (0..header.len()).filter(|&i| !drop.contains(&header[i])).collect();
    assert_eq!(keep.len(), header.len() - drop.len(), "every dropped column is in the fixture");
    let mut out = String::new();
    for line in std::iter::once(header.join(",").as_str()).chain(lines) {
        let cells: Vec<&str> = line.split(',').collect();
        let kept: Vec<&str> = keep.iter().map(|&i| cells[i]).collect();
        out.push_str(&kept.join(","));
        out.push('\n');
    }
    let path = dir.join(format!("situations-without-{}.csv", drop.join("-")));
    std::fs::write(&path, out).unwrap();
    path
}

/// Hand-worked levels, one row per pitch in log order (which is file order:
/// the fixture is already ordered), CSV line first.
/// Columns: line, count, bats, platoon, bases, outs, prev_pitch,
/// times_through, inning, score.
#[rustfmt::skip]
const EXPECTED: [(u64, &str, &str, &str, &str, &str, &str, &str, &str, &str); 28] = [
    // Game H-0501. PA 1: Ash (R) vs Bo (L), nobody on, none out, 0-0 game.
    (2,  "0-0", "L", "opposite", "---", "0", "none",      "1",  "1-3", "tied"),
    (3,  "0-1", "L", "opposite", "---", "0", "fastball",  "1",  "1-3", "tied"),
    (4,  "1-1", "L", "opposite", "---", "0", "slider",    "1",  "1-3", "tied"),
    // PA 2: Ash vs Cy (R): same side; runner on first, one out.
    (5,  "0-0", "R", "same",     "1--", "1", "none",      "1",  "1-3", "tied"),
    (6,  "1-0", "R", "same",     "1--", "1", "changeup",  "1",  "1-3", "tied"),
    // PA 3: Bo's 2nd time against Ash; 4th inning; second and third; down 1.
    (7,  "0-0", "L", "opposite", "-23", "2", "none",      "2",  "4-6", "behind"),
    // PA 4: Cy's 2nd time against Ash; first and third; up 2.
    (8,  "0-0", "R", "same",     "1-3", "0", "none",      "2",  "4-6", "ahead"),
    // PA 5: Bo's 3rd time against Ash; bases loaded, 7th inning.
    (9,  "0-0", "L", "opposite", "123", "1", "none",      "3+", "7-9", "ahead"),
    (10, "0-1", "L", "opposite", "123", "1", "fastball",  "3+", "7-9", "ahead"),
    // Dale (L) relieves at 0-2: his first pitch has no previous pitch of his
    // own, Bo is facing him for the first time, and L vs L is `same`.
    (11, "0-2", "L", "same",     "123", "1", "none",      "1",  "7-9", "ahead"),
    (12, "1-2", "L", "same",     "123", "1", "curveball", "1",  "7-9", "ahead"),
    // PA 6: Dale vs Cy; first and second, two out; line 13's score is empty,
    // so its level is unknown (a missing value, not a level of the factor).
    (13, "0-0", "R", "opposite", "12-", "2", "none",      "1",  "7-9", "unknown"),
    (14, "0-1", "R", "opposite", "12-", "2", "slider",    "1",  "7-9", "ahead"),
    // PA 7: 10th inning, runner on third; Bo's 2nd time against Dale (the
    // relief appearance in PA 5 was the 1st); down 3.
    (15, "0-0", "L", "same",     "--3", "0", "none",      "2",  "10+", "behind"),
    (16, "1-0", "L", "same",     "--3", "0", "curveball", "2",  "10+", "behind"),
    // Game H-0502: the counts of times through start again in a new game.
    // PA 1: Dale starts against Bo.
    (17, "0-0", "L", "same",     "---", "0", "none",      "1",  "1-3", "tied"),
    (18, "0-1", "L", "same",     "---", "0", "fastball",  "1",  "1-3", "tied"),
    // PA 2: Dale vs Cy, up 1.
    (19, "0-0", "R", "opposite", "---", "1", "none",      "1",  "1-3", "ahead"),
    // PA 3: Ash relieves between plate appearances; Ash vs Bo is a 1st time
    // in this game although they met three times the day before.
    (20, "0-0", "L", "opposite", "1--", "2", "none",      "1",  "1-3", "ahead"),
    (21, "0-1", "L", "opposite", "1--", "2", "slider",    "1",  "1-3", "ahead"),
    (22, "0-2", "L", "opposite", "1--", "2", "slider",    "1",  "1-3", "ahead"),
    (23, "1-2", "L", "opposite", "1--", "2", "fastball",  "1",  "1-3", "ahead"),
    // PA 4: Ash vs Cy in the 9th, runner on second, tied; full count reached.
    (24, "0-0", "R", "same",     "-2-", "0", "none",      "1",  "7-9", "tied"),
    (25, "1-0", "R", "same",     "-2-", "0", "fastball",  "1",  "7-9", "tied"),
    (26, "2-0", "R", "same",     "-2-", "0", "fastball",  "1",  "7-9", "tied"),
    (27, "3-0", "R", "same",     "-2-", "0", "fastball",  "1",  "7-9", "tied"),
    (28, "3-1", "R", "same",     "-2-", "0", "slider",    "1",  "7-9", "tied"),
    (29, "3-2", "R", "same",     "-2-", "0", "slider",    "1",  "7-9", "tied"),
];

/// Plate appearances as numbered in the fixture's `pa` column, made unique
/// across the log: 7 in game H-0501, 4 in H-0502.
const PA_ID_WITH_PA: [u32; 28] = [0, 0, 0, 1, 1, 2, 3, 4, 4, 4, 4, 5, 5, 6, 6, 7, 7, 8, 9, 9, 9, 9, 10, 10, 10, 10, 10, 10];

/// Without `pa`, the pitching change on line 11 opens a plate appearance
/// (src/situations/mod.rs documents the inference), so PA 5 is split.
const PA_ID_WITHOUT_PA: [u32; 28] = [0, 0, 0, 1, 1, 2, 3, 4, 4, 5, 5, 6, 6, 7, 7, 8, 8, 9, 10, 10, 10, 10, 11, 11, 11, 11, 11, 11];

fn level(sit: &Situations, f: Factor, i: usize) -> String {
    let col = sit.get(f).unwrap_or_else(|| panic!("factor {f} was built"));
    col.level(col.codes[i]).to_string()
}

/// Compare every factor of every row with the hand-worked table; `score`
/// only when the log has the column.
fn assert_levels(log: &PitchLog, sit: &Situations, with_score: bool) {
    assert_eq!(log.len(), EXPECTED.len());
    for (i, e) in EXPECTED.iter().enumerate() {
        let (line, count, bats, platoon, bases, outs, prev, times, inning, score) = *e;
        assert_eq!(log.source_line[i], line, "row {i} comes from line {line}");
        let mut want = vec![
            (Factor::Count, count),
            (Factor::Bats, bats),
            (Factor::Platoon, platoon),
            (Factor::Bases, bases),
            (Factor::Outs, outs),
            (Factor::PrevPitch, prev),
            (Factor::TimesThrough, times),
            (Factor::Inning, inning),
        ];
        if with_score {
            want.push((Factor::Score, score));
        }
        for (f, w) in want {
            assert_eq!(level(sit, f, i), w, "line {line}: factor {f}");
        }
    }
}

#[test]
fn levels_with_pa_column_match_the_hand_worked_table() {
    let log = load(&fixture("situations.csv"));
    let sit = situations::build(&log);
    assert_levels(&log, &sit, true);
    assert_eq!(sit.pa_id, PA_ID_WITH_PA);
    assert!(sit.dropped.is_empty(), "nothing dropped: {:?}", sit.dropped);
    assert!(sit.notes.is_empty(), "no caveat when pa is given: {:?}", sit.notes);
}

#[test]
fn levels_without_pa_are_inferred_the_same_way() {
    let dir = scratch("no-pa");
    let path = without_columns(&["pa", "pitch_no"], &dir);
    let log = load(&path);
    assert!(log.pa.is_none() && log.pitch_no.is_none());
    let sit = situations::build(&log);
    assert_levels(&log, &sit, true);
    assert_eq!(sit.pa_id, PA_ID_WITHOUT_PA);
    assert!(
        sit.notes.iter().any(|n| n.contains("pa") && n.contains("inferred")),
        "the inference is noted: {:?}",
        sit.notes
    );
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn score_is_dropped_with_a_reason_when_score_diff_is_absent() {
    let dir = scratch("no-score");
    let path = without_columns(&["score_diff"], &dir);
    let log = load(&path);
    assert!(log.score_diff.is_none());
    let sit = situations::build(&log);
    assert!(!sit.has(Factor::Score), "no score factor without score_diff");
    let (_, why) = sit
        .dropped
        .iter()
        .find(|(f, _)| *f == Factor::Score)
        .expect("score is listed as dropped");
    assert!(why.contains("score_diff"), "the reason names the missing column: {why}");
    // Every other factor is still there, with the same levels.
    assert_levels(&log, &sit, false);
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn level_tables_are_the_contract_spellings() {
    let log = load(&fixture("situations.csv"));
    let sit = situations::build(&log);
    let levels = |f: Factor| sit.get(f).unwrap().levels.clone();
    assert_eq!(levels(Factor::Bats), ["L", "R"]);
    assert_eq!(levels(Factor::Platoon), ["same", "opposite"]);
    assert_eq!(levels(Factor::Bases), ["---", "1--", "-2-", "--3", "12-", "1-3", "-23", "123"]);
    assert_eq!(levels(Factor::Outs), ["0", "1", "2"]);
    assert_eq!(levels(Factor::TimesThrough), ["1", "2", "3+"]);
    assert_eq!(levels(Factor::Inning), ["1-3", "4-6", "7-9", "10+"]);
    assert_eq!(levels(Factor::Score), ["behind", "tied", "ahead"]);
    // prev_pitch: `none` and the log's own labels.
    assert_eq!(levels(Factor::PrevPitch), ["none", "changeup", "curveball", "fastball", "slider"]);
    assert_eq!(levels(Factor::Count).len(), 12);
}

/// Without `pa`, a 0-0 count opens a plate appearance even when the batter
/// and pitcher stay the same (rules of the count, common practice: every
/// pitch moves the count or ends the plate appearance, so 0-0 comes only
/// first). The log has a gap: two of Bo's plate appearances against Ash
/// follow each other (the ones between were not recorded).
#[test]
fn a_zero_zero_count_opens_a_plate_appearance_without_pa() {
    let dir = scratch("gap");
    let path = dir.join("gap.csv");
    std::fs::write(
        &path,
        "game,date,pitcher,throws,batter,bats,inning,outs,balls,strikes,on_first,on_second,on_third,pitch_type\n\
         H-0601,2025-06-01,Ash Pell,R,Bo Drum,L,1,0,0,0,0,0,0,fastball\n\
         H-0601,2025-06-01,Ash Pell,R,Bo Drum,L,1,0,0,1,0,0,0,slider\n\
         H-0601,2025-06-01,Ash Pell,R,Bo Drum,L,4,1,0,0,0,0,0,changeup\n\
         H-0601,2025-06-01,Ash Pell,R,Bo Drum,L,4,1,1,0,0,0,0,fastball\n",
    )
    .unwrap();
    let log = load(&path);
    let sit = situations::build(&log);
    let prev: Vec<String> = (0..4).map(|i| level(&sit, Factor::PrevPitch, i)).collect();
    let times: Vec<String> = (0..4).map(|i| level(&sit, Factor::TimesThrough, i)).collect();
    assert_eq!(prev, ["none", "fastball", "none", "changeup"]);
    assert_eq!(times, ["1", "1", "2", "2"]);
    assert_eq!(sit.pa_id, [0, 0, 1, 1]);
    std::fs::remove_dir_all(&dir).ok();
}

/// A pitch whose previous pitch of the plate appearance is missing from
/// the log has `prev_pitch` unknown, not the pitch before the gap. In the
/// fixture: line 3 (PA 1's slider, 0-1) set aside as a pitchout, so line 4
/// (1-1) follows a gap; line 5 (PA 2's first pitch) rejected, so line 6,
/// the first pitch left of PA 2 and past 0-0, follows one. Line 11, the
/// reliever's first pitch at 0-2, still reads `none`; every other row
/// reads as in the full log. The same without `pa` and `pitch_no`, from
/// the count alone (a pitch adds one ball or one strike, or a foul keeps
/// two strikes: rules of the count).
#[test]
fn a_pitch_after_one_missing_from_the_log_has_an_unknown_previous_pitch() {
    let dir = scratch("gaps");
    let text = std::fs::read_to_string(fixture("situations.csv")).unwrap();
    let full = load(&fixture("situations.csv"));
    let full_sit = situations::build(&full);
    let prev_of = |log: &PitchLog, sit: &Situations| -> Vec<(u64, String)> {
        (0..log.len()).map(|i| (log.source_line[i], level(sit, Factor::PrevPitch, i))).collect()
    };
    let full_prev = prev_of(&full, &full_sit);
    let edited: Vec<String> = text
        .lines()
        .enumerate()
        .map(|(k, l)| match k + 1 {
            3 => l.replace(",slider,", ",PO,"),
            5 => l.replacen(",1,1,0,", ",0,1,0,", 1), // inning 0: rejected
            _ => l.to_string(),
        })
        .collect();
    assert_ne!(edited[4], text.lines().nth(4).unwrap(), "line 5 was broken");
    for (tag, drop) in [("with-pa", &[][..]), ("no-pa", &["pa", "pitch_no"][..])] {
        let d = dir.join(tag);
        std::fs::create_dir_all(&d).unwrap();
        let path = d.join("gaps.csv");
        std::fs::write(&path, edited.join("\n") + "\n").unwrap();
        let path = if drop.is_empty() {
            path
        } else {
            // The edited file without the columns (no quoted cells).
            let t = std::fs::read_to_string(&path).unwrap();
            let header: Vec<&str> = t.lines().next().unwrap().split(',').collect();
            let keep: Vec<usize> = (0..header.len()).filter(|&i| !drop.contains(&header[i])).collect();
            let out: Vec<String> = t.lines().map(|l| {
                let c: Vec<&str> = l.split(',').collect();
                keep.iter().map(|&i| c[i]).collect::<Vec<_>>().join(",")
            }).collect();
            let p = d.join("gaps-no-pa.csv");
            std::fs::write(&p, out.join("\n") + "\n").unwrap();
            p
        };
        let ing = ingest::load(&path, &settings().input).unwrap();
        assert_eq!((ing.set_aside.len(), ing.rejected.len()), (1, 1), "{tag}");
        let sit = situations::build(&ing.log);
        for (line, prev) in prev_of(&ing.log, &sit) {
            let want = match line {
                4 | 6 => "unknown".to_string(),
                _ => full_prev.iter().find(|(l, _)| *l == line).unwrap().1.clone(),
            };
            assert_eq!(prev, want, "{tag}: line {line}");
        }
        assert_eq!(full_prev.iter().find(|(l, _)| *l == 11).unwrap().1, "none", "the reliever's first pitch");
        assert!(sit.notes.iter().any(|n| n.starts_with("2 pitches come right after a pitch of the same plate appearance that is missing")), "{tag}: {:?}", sit.notes);
    }
    assert!(!full_sit.notes.iter().any(|n| n.contains("missing from the log")), "{:?}", full_sit.notes);
    std::fs::remove_dir_all(&dir).ok();
}
