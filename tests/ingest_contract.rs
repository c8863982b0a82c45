//! Ingest against CONTRACT §1, through the library: every rejection reason
//! with its line and column, the failures that stop a run (with their exit
//! codes, §3), column mapping, pitch groups, CSV = Parquet, ordering and
//! optional columns.

use std::path::{Path, PathBuf};
use tellscope::simulate::write::{sim_frame, write_frame};
use tellscope::domain::PitchResult;
use tellscope::ingest::{self, Ingested, PitchLog};
use tellscope::settings::{ConfigFile, Overrides, Settings};
use tellscope::simulate::{simulate, Scenario};
use tellscope::domain::levels::Hand;
use tellscope::Error;

const HEADER: &str = "game,date,pitcher,throws,batter,bats,inning,outs,balls,strikes,on_first,on_second,on_third,pitch_type";

fn fixture(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/logs").join(name)
}

/// A fresh folder of this test's own under the system temp dir.
fn scratch(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("tellscope-ingest-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

fn defaults() -> Settings {
    Settings::resolve(&ConfigFile::default(), &Overrides::default()).unwrap()
}

fn with_config(toml_text: &str) -> Settings {
    let cfg: ConfigFile = toml::from_str(toml_text).expect("config parses");
    Settings::resolve(&cfg, &Overrides::default()).expect("config validates")
}

fn load(path: &Path) -> Ingested {
    ingest::load(path, &defaults().input).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

fn data_error(path: &Path, settings: &Settings) -> String {
    match ingest::load(path, &settings.input) {
        Err(e @ Error::Data(_)) => {
            assert_eq!(e.exit_code(), 3);
            e.to_string()
        }
        Err(e) => panic!("{}: expected a data error (exit 3), got {e:?}", path.display()),
        Ok(_) => panic!("{}: expected a data error (exit 3), the file was accepted", path.display()),
    }
}

fn names(table: &[String], idx: &[u32]) -> Vec<String> {
    idx.iter().map(|&i| table[i as usize].clone()).collect()
}

/// Every column of two logs, by value (string columns through their tables,
/// so two logs that intern differently still compare equal row by row).
fn assert_same_rows(a: &PitchLog, b: &PitchLog, compare_lines: bool) {
    assert_eq!(a.len(), b.len(), "row count");
    assert_eq!(names(&a.games, &a.game), names(&b.games, &b.game), "game");
    assert_eq!(a.date, b.date, "date");
    assert_eq!(a.season, b.season, "season");
    assert_eq!(names(&a.pitchers, &a.pitcher), names(&b.pitchers, &b.pitcher), "pitcher");
    assert_eq!(a.throws, b.throws, "throws");
    assert_eq!(names(&a.batters, &a.batter), names(&b.batters, &b.batter), "batter");
    assert_eq!(a.bats, b.bats, "bats");
    assert_eq!(a.inning, b.inning, "inning");
    assert_eq!(a.outs, b.outs, "outs");
    assert_eq!(a.balls, b.balls, "balls");
    assert_eq!(a.strikes, b.strikes, "strikes");
    assert_eq!(a.on_first, b.on_first, "on_first");
    assert_eq!(a.on_second, b.on_second, "on_second");
    assert_eq!(a.on_third, b.on_third, "on_third");
    let types = |l: &PitchLog| l.pitch_type.iter().map(|&t| l.pitch_types[t as usize].clone()).collect::<Vec<_>>();
    assert_eq!(types(a), types(b), "pitch_type");
    assert_eq!(a.pitch_types, b.pitch_types, "pitch label table");
    assert_eq!(a.pa, b.pa, "pa");
    assert_eq!(a.pitch_no, b.pitch_no, "pitch_no");
    assert_eq!(a.score_diff, b.score_diff, "score_diff");
    assert_eq!(a.result, b.result, "result");
    assert_eq!(a.speed_mph, b.speed_mph, "speed_mph");
    assert_eq!(a.loc_side_ft, b.loc_side_ft, "loc_side_ft");
    assert_eq!(a.loc_height_ft, b.loc_height_ft, "loc_height_ft");
    let teams = |l: &PitchLog| {
        l.team.as_ref().map(|t| t.iter().map(|x| x.map(|x| l.teams[x as usize].clone())).collect::<Vec<_>>())
    };
    assert_eq!(teams(a), teams(b), "team");
    if compare_lines {
        assert_eq!(a.source_line, b.source_line, "source_line");
    }
}

// ---------------------------------------------------------------- rejections

/// tests/fixtures/logs/bad_rows.csv: lines 2, 4, 19 and 21 are valid; every
/// other data line breaks exactly one rule of CONTRACT §1.
const BAD_LINES: [(u64, &str, &str); 16] = [
    (3, "throws", "X"),          // unknown hand
    (5, "bats", "S"),            // a switch hitter's row must say the side he hits from
    (6, "balls", "4"),           // four balls is a walk, never a count before a pitch
    (7, "strikes", "3"),
    (8, "outs", "3"),
    (9, "inning", "0"),
    (10, "inning", "2.5"),       // not a whole number
    (11, "date", "2025-02-30"),  // no such day
    (12, "date", "2025/04/01"),  // not written YYYY-MM-DD
    (13, "pitch_type", ""),      // empty
    (14, "batter", ""),          // an empty required cell
    (15, "on_first", "maybe"),
    (16, "result", "strike"),    // not one of the contract's outcomes
    (17, "speed_mph", "fast"),
    (18, "pa", "0"),             // pa counts from 1
    // (line 19 is valid: padded values, r/l, Yes/TRUE/no, " Foul ")
    (20, "balls", "4"),          // a second breach of the same kind
];

#[test]
fn every_breach_is_one_rejected_row_with_its_line_and_column() {
    let ing = load(&fixture("bad_rows.csv"));
    let want: Vec<(u64, &str, &str)> = BAD_LINES.to_vec();
    let got: Vec<(u64, &str, &str)> =
        ing.rejected.iter().map(|r| (r.line, r.column.as_ref(), r.value.as_str())).collect();
    assert_eq!(got, want, "one Rejected per bad line, in file order, naming the contract column");
    for r in &ing.rejected {
        assert!(!r.reason.trim().is_empty(), "line {} has a reason", r.line);
    }
    // The same breach gets the same reason, so reasons group.
    let balls: Vec<&str> = ing.rejected.iter().filter(|r| r.column == "balls").map(|r| r.reason.as_ref()).collect();
    assert_eq!(balls.len(), 2);
    assert_eq!(balls[0], balls[1]);
    assert_eq!(ing.source.rows_read, 20);
    assert_eq!(ing.source.rows_rejected, 16);
    // The commonest reasons, for the run's note: the two balls rows, then
    // the single ones by column.
    let top: Vec<(&str, usize)> = ing.source.rejected_reasons.iter().map(|r| (r.column.as_str(), r.rows)).collect();
    assert_eq!(top, [("balls", 2), ("bats", 1), ("batter", 1)]);
    assert_eq!(ing.source.rejected_reasons[0].reason, balls[0]);
    // The valid rows are kept, in pa / pitch_no order.
    assert_eq!(ing.log.len(), 4);
    assert_eq!(ing.log.source_line, [2, 4, 19, 21]);
}

#[test]
fn values_are_trimmed_and_case_insensitive() {
    let ing = load(&fixture("bad_rows.csv"));
    let log = &ing.log;
    // Line 19: " Wren Alder ",r,...,l,...,Yes,TRUE,no," slider ",...," Foul "
    let i = log.source_line.iter().position(|&l| l == 19).unwrap();
    assert_eq!(log.pitchers[log.pitcher[i] as usize], "Wren Alder");
    assert_eq!(log.pitchers.len(), 1, "the padded name is the same pitcher");
    assert_eq!(log.throws[i], Hand::R);
    assert_eq!(log.bats[i], Hand::L);
    assert_eq!((log.on_first[i], log.on_second[i], log.on_third[i]), (true, true, false));
    assert_eq!(log.pitch_types[log.pitch_type[i] as usize], "slider");
    assert_eq!(log.result.as_ref().unwrap()[i], Some(PitchResult::Foul));
    assert_eq!(log.score_diff.as_ref().unwrap()[i], Some(-2));
}

// ---------------------------------------------------------------- failures

#[test]
fn a_missing_required_column_is_a_data_error_naming_it() {
    let msg = data_error(&fixture("missing_column.csv"), &defaults());
    assert!(msg.contains("pitch_type"), "names the column: {msg}");
    assert!(msg.contains("missing_column.csv"), "names the file: {msg}");
}

#[test]
fn a_mapped_required_column_that_is_missing_names_both_names() {
    let s = with_config("[columns]\npitch_type = \"PT\"\n");
    let msg = data_error(&fixture("good.csv"), &s);
    assert!(msg.contains("pitch_type") && msg.contains("PT"), "{msg}");
}

#[test]
fn empty_header_only_and_nonexistent_files_are_data_errors() {
    let dir = scratch("unusable");
    let empty = write(&dir, "empty.csv", "");
    data_error(&empty, &defaults());
    let header_only = write(&dir, "header_only.csv", &format!("{HEADER}\n"));
    let msg = data_error(&header_only, &defaults());
    assert!(msg.contains("header_only.csv"), "{msg}");
    let msg = data_error(&dir.join("no_such_log.csv"), &defaults());
    assert!(msg.contains("no_such_log.csv"), "{msg}");
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn a_file_with_no_valid_row_is_a_data_error() {
    let dir = scratch("all-bad");
    let p = write(
        &dir,
        "all_bad.csv",
        &format!(
            "{HEADER}\n\
             G-0501,2025-05-01,Wren Alder,R,Moss Quill,L,1,0,4,0,0,0,0,fastball\n\
             G-0501,2025-05-01,Wren Alder,R,Moss Quill,L,0,0,0,1,0,0,0,slider\n"
        ),
    );
    let msg = data_error(&p, &defaults());
    assert!(msg.contains("all_bad.csv"), "{msg}");
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn strict_turns_one_rejected_row_into_a_data_error() {
    let dir = scratch("strict");
    let p = write(
        &dir,
        "one_bad.csv",
        &format!(
            "{HEADER}\n\
             G-0501,2025-05-01,Wren Alder,R,Moss Quill,L,1,0,0,0,0,0,0,fastball\n\
             G-0501,2025-05-01,Wren Alder,R,Moss Quill,L,1,0,0,3,0,0,0,slider\n\
             G-0501,2025-05-01,Wren Alder,R,Moss Quill,L,1,0,1,0,0,0,0,slider\n"
        ),
    );
    // Without --strict the bad row is set aside and the rest is used.
    let ing = load(&p);
    assert_eq!((ing.log.len(), ing.rejected.len()), (2, 1));
    let strict = Settings::resolve(&ConfigFile::default(), &Overrides { strict: true, ..Overrides::default() }).unwrap();
    let msg = data_error(&p, &strict);
    assert!(msg.contains("strikes") && msg.contains('3'), "names the first breach (line 3, strikes): {msg}");
    std::fs::remove_dir_all(&dir).ok();
}

// ---------------------------------------------------------------- config

#[test]
fn own_header_names_map_through_a_columns_table() {
    // Contract name = the file's own header name (CONTRACT §1).
    let s = with_config(
        r#"
[columns]
game = "Game ID"
date = "Game Date"
pitcher = "Pitcher Name"
throws = "P Hand"
batter = "Batter Name"
bats = "B Side"
inning = "Inn"
outs = "Outs Before"
balls = "B"
strikes = "S"
on_first = "R1"
on_second = "R2"
on_third = "R3"
pitch_type = "PT"
pa = "PA No"
pitch_no = "Pitch In PA"
score_diff = "Run Diff"
result = "Outcome"
speed_mph = "Velo"
team = "Club"
"#,
    );
    let own = ingest::load(&fixture("own_headers.csv"), &s.input).unwrap();
    let contract = load(&fixture("good.csv"));
    assert!(own.rejected.is_empty(), "{:?}", own.rejected);
    assert_same_rows(&own.log, &contract.log, true);
    assert_eq!(own.source.optional_present, contract.source.optional_present);
    assert_eq!(own.source.optional_missing, contract.source.optional_missing);
}

#[test]
fn a_columns_key_that_is_not_a_contract_column_is_a_usage_error() {
    let cfg: ConfigFile = toml::from_str("[columns]\ncatcher = \"Catcher Name\"\n").unwrap();
    let e = Settings::resolve(&cfg, &Overrides::default()).unwrap_err();
    assert!(matches!(e, Error::Usage(_)), "{e:?}");
    assert_eq!(e.exit_code(), 2);
    assert!(e.to_string().contains("catcher"), "{e}");
}

#[test]
fn pitch_groups_merge_labels() {
    let dir = scratch("groups");
    let p = write(
        &dir,
        "groups.csv",
        &format!(
            "{HEADER}\n\
             G-0501,2025-05-01,Wren Alder,R,Moss Quill,L,1,0,0,0,0,0,0,four-seam\n\
             G-0501,2025-05-01,Wren Alder,R,Moss Quill,L,1,0,0,1,0,0,0,two-seam\n\
             G-0501,2025-05-01,Wren Alder,R,Moss Quill,L,1,0,0,2,0,0,0,slider\n\
             G-0501,2025-05-01,Wren Alder,R,Tal Brook,R,1,1,0,0,0,0,0, two-seam \n\
             G-0501,2025-05-01,Wren Alder,R,Tal Brook,R,1,1,1,0,0,0,0,four-seam\n"
        ),
    );
    let ungrouped = load(&p).log;
    assert_eq!(ungrouped.pitch_types, ["four-seam", "slider", "two-seam"]);
    let s = with_config("[pitch_groups]\nfastball = [\"four-seam\", \"two-seam\"]\n");
    let log = ingest::load(&p, &s.input).unwrap().log;
    assert_eq!(log.pitch_types, ["fastball", "slider"]);
    let mut counts = vec![0; log.pitch_types.len()];
    for &t in &log.pitch_type {
        counts[t as usize] += 1;
    }
    assert_eq!(counts, [4, 1]);
    let per_row: Vec<&str> = log.pitch_type.iter().map(|&t| log.pitch_types[t as usize].as_str()).collect();
    assert_eq!(per_row, ["fastball", "fastball", "slider", "fastball", "fastball"]);
    std::fs::remove_dir_all(&dir).ok();
}

/// A log's own outcome codes: the seven contract results are read in any
/// case or spacing ("Called Strike"); another value ("foul_tip") rejects
/// its row with the fix named, per value, until [result_groups] lists it
/// under the result it counts as; a [result_groups] key that is not a
/// contract result, or a value under two results, is a usage error.
#[test]
fn result_values_of_the_logs_own_map_through_result_groups() {
    use tellscope::domain::result::PitchResult;
    let dir = scratch("result-groups");
    let row = |strikes: u8, result: &str| format!("G-0501,2025-05-01,Wren Alder,R,Moss Quill,L,1,0,0,{strikes},0,0,0,fastball,{result}");
    let p = write(
        &dir,
        "results.csv",
        &format!(
            "{HEADER},result\n{}\n{}\n{}\n{}\n",
            row(0, "Called Strike"),
            row(1, "foul_tip"),
            row(2, "dirt ball"),
            row(2, "IN-PLAY")
        ),
    );
    let plain = load(&p);
    assert_eq!(plain.log.len(), 2, "the contract's results in other spellings are kept");
    let kept: Vec<Option<PitchResult>> = plain.log.result.as_ref().unwrap().clone();
    assert_eq!(kept, [Some(PitchResult::CalledStrike), Some(PitchResult::InPlay)]);
    let reasons: Vec<(u64, &str)> = plain.rejected.iter().map(|r| (r.line, r.reason.as_ref())).collect();
    assert_eq!(reasons.len(), 2);
    assert_eq!(reasons[0].0, 3);
    assert!(reasons[0].1.starts_with("\"foul_tip\" is not one of ball,") && reasons[0].1.contains("[result_groups]"), "{}", reasons[0].1);
    assert!(reasons[1].1.contains("as ball = [\"dirt ball\"] would for a ball"), "{}", reasons[1].1);

    let s = with_config("[result_groups]\nswinging_strike = [\"Foul Tip\"]\nball = [\"Dirt-Ball\", \"ball_in_dirt\"]\n");
    let ing = ingest::load(&p, &s.input).unwrap();
    assert!(ing.rejected.is_empty());
    assert_eq!(
        ing.log.result.unwrap(),
        [Some(PitchResult::CalledStrike), Some(PitchResult::SwingingStrike), Some(PitchResult::Ball), Some(PitchResult::InPlay)]
    );

    let usage = |toml_text: &str| {
        let cfg: ConfigFile = toml::from_str(toml_text).unwrap();
        match Settings::resolve(&cfg, &Overrides::default()) {
            Err(e @ Error::Usage(_)) => e.to_string(),
            other => panic!("expected a usage error, got {other:?}"),
        }
    };
    assert!(usage("[result_groups]\nwhiff = [\"foul_tip\"]\n").contains("whiff: not a contract result"));
    assert!(usage("[result_groups]\nfoul = [\"foul_tip\"]\nswinging_strike = [\"foul tip\"]\n").contains("under both"));
    std::fs::remove_dir_all(&dir).ok();
}

/// Missing values as R, spreadsheets and databases write them (`NA`,
/// `null`, `-`): empty cells in optional columns, a reason that says so in
/// required ones. A pitchout or intentional ball written in `result` (its
/// pitch label a pitch type) sets its row aside, as the same label in
/// `pitch_type` does, unless [result_groups] lists it.
#[test]
fn missing_markers_and_pitchouts_in_result() {
    let dir = scratch("markers");
    let row = |balls: &str, strikes: u8, result: &str, speed: &str, score: &str| {
        format!("G-0501,2025-05-01,Wren Alder,R,Moss Quill,L,1,0,{balls},{strikes},0,0,0,fastball,{result},{speed},{score}")
    };
    let p = write(
        &dir,
        "markers.csv",
        &format!(
            "{HEADER},result,speed_mph,score_diff\n{}\n{}\n{}\n{}\n{}\n{}\n",
            row("0", 0, "NA", "NA", "NA"),
            row("0", 1, "ball", "null", "-"),
            row("1", 1, "pitchout", "91.0", "0"),
            row("1", 1, "Intentional_Ball", "80.0", "0"),
            row("NA", 1, "ball", "90.0", "0"),
            row("1", 2, "foul", "#N/A", "0"),
        ),
    );
    // A two-letter code in `result` is a result's own code, not a set-aside
    // label ("IN" may be in play): rejected as unknown, not set aside.
    let coded = write(&dir, "coded.csv", &format!("{HEADER},result,speed_mph,score_diff\n{}\n{}\n", row("0", 0, "IN", "90.0", "0"), row("0", 0, "ball", "90.0", "0")));
    let c = load(&coded);
    assert!(c.set_aside.is_empty() && c.rejected[0].reason.contains("[result_groups]"), "{:?}", c.rejected);
    let ing = load(&p);
    assert_eq!(ing.log.len(), 3, "{:?} {:?}", ing.rejected, ing.set_aside);
    assert_eq!(ing.log.result.as_ref().unwrap()[0], None, "NA is a missing result");
    assert!(ing.log.speed_mph.as_ref().unwrap().iter().all(Option::is_none), "NA, null and #N/A are missing speeds");
    assert_eq!(ing.log.score_diff.as_ref().unwrap()[..2], [None, None]);
    let r = one_rejection(&ing);
    assert_eq!((r.line, r.column.as_ref()), (6, "balls"));
    assert_eq!(r.reason, "is \"NA\", a missing value; every pitch needs a value here");
    let aside: Vec<(u64, &str, &str)> = ing.set_aside.iter().map(|r| (r.line, r.column.as_ref(), r.value.as_str())).collect();
    assert_eq!(aside, [(4, "result", "pitchout"), (5, "result", "Intentional_Ball")]);
    assert!(ing.set_aside[0].reason.starts_with("the result \"pitchout\" is a pitchout, not the pitcher's choice of pitch"), "{}", ing.set_aside[0].reason);
    assert!(ing.set_aside[1].reason.contains("is an intentional ball"), "{}", ing.set_aside[1].reason);
    // Listed in [result_groups], a value is a result like any other.
    let s = with_config("[result_groups]\nball = [\"pitchout\"]\n");
    let ing = ingest::load(&p, &s.input).unwrap();
    assert_eq!(ing.set_aside.len(), 1);
    assert_eq!(ing.log.len(), 4);
    std::fs::remove_dir_all(&dir).ok();
}

/// The position of column `name` in a CSV header line.
fn column(head: &str, name: &str) -> usize {
    head.split(',').position(|h| h == name).unwrap_or_else(|| panic!("no column {name} in {head}"))
}

/// The plain-staff demo's header and its first `n` rows.
fn plain_staff_lines(n: usize) -> (String, Vec<String>) {
    let demo = std::fs::read_to_string(fixture("../plain-staff/demo-log.csv")).unwrap();
    let mut lines = demo.lines();
    let head = lines.next().unwrap().to_string();
    (head, lines.take(n).map(str::to_string).collect())
}

/// The log's one rejected row (asserting it has exactly one).
fn one_rejection(ing: &Ingested) -> &ingest::Rejected {
    assert_eq!(ing.rejected.len(), 1, "{:?}", &ing.rejected[..ing.rejected.len().min(3)]);
    &ing.rejected[0]
}

/// A scratch folder `tag`, the plain-staff demo's header and first 3,000
/// rows, and those rows loaded as written: the yardstick a log written
/// another way must read the same as.
fn plain_case(tag: &str) -> (PathBuf, String, Vec<String>, Ingested) {
    let dir = scratch(tag);
    let (head, body) = plain_staff_lines(3000);
    let plain = load(&write(&dir, "plain.csv", &format!("{head}\n{}\n", body.join("\n"))));
    (dir, head, body, plain)
}

/// A CSV of `head` and `body` with `edit(row index, fields)` applied to
/// each row's fields.
fn rewritten(head: &str, body: &[String], mut edit: impl FnMut(usize, &mut Vec<String>)) -> String {
    let rows: Vec<String> = body
        .iter()
        .enumerate()
        .map(|(i, l)| {
            let mut c: Vec<String> = l.split(',').map(str::to_string).collect();
            edit(i, &mut c);
            c.join(",")
        })
        .collect();
    format!("{head}\n{}\n", rows.join("\n"))
}

/// `pa` and `pitch_no` numbered from 0 (as a program counting from 0
/// writes them) read as from 1, with a note, instead of every first pitch
/// rejected: the same rows in the same order as the file numbered from 1,
/// and the same situations. A file numbered from 1 gets no note.
#[test]
fn pa_and_pitch_no_counted_from_zero_read_as_from_one() {
    let dir = scratch("from-zero");
    let (head, body) = plain_staff_lines(3000);
    let (pa, no) = (column(&head, "pa"), column(&head, "pitch_no"));
    let shifted: Vec<String> = body
        .iter()
        .map(|l| {
            let mut c: Vec<String> = l.split(',').map(str::to_string).collect();
            for i in [pa, no] {
                c[i] = (c[i].parse::<u32>().unwrap() - 1).to_string();
            }
            c.join(",")
        })
        .collect();
    let one = load(&write(&dir, "one.csv", &format!("{head}\n{}\n", body.join("\n"))));
    let zero = load(&write(&dir, "zero.csv", &format!("{head}\n{}\n", shifted.join("\n"))));
    assert!(zero.rejected.is_empty());
    assert_same_rows(&one.log, &zero.log, true);
    assert_eq!(zero.log.pa, one.log.pa);
    assert_eq!(zero.log.pitch_no, one.log.pitch_no);
    let (s1, s0) = (tellscope::situations::build(&one.log), tellscope::situations::build(&zero.log));
    for (a, b) in s1.factors.iter().zip(&s0.factors) {
        assert_eq!(a.codes, b.codes, "{}", a.factor);
    }
    assert!(one.log.counted_from_zero.is_none());
    assert_eq!(
        zero.log.counted_from_zero.as_deref(),
        Some("`pa` and `pitch_no` count from 0 in this file, where the contract counts from 1: each number is read one higher (the order is the same)")
    );
    std::fs::remove_dir_all(&dir).ok();
}

/// An optional column written in another format (one-letter outcome
/// codes, locations written as words) is set aside whole, as if the file
/// had none, with the commonest value and its fix named: every row is kept
/// and read as from the same file without that column, where row by row
/// every one of them would have been rejected. A column with a few bad
/// values keeps them rejected row by row.
#[test]
fn an_optional_column_in_another_format_is_set_aside_whole() {
    let dir = scratch("unreadable");
    let (head, body) = plain_staff_lines(3000);
    let header: Vec<&str> = head.split(',').collect();
    let at = |c: &str| column(&head, c);
    let (result, side, height) = (at("result"), at("loc_side_ft"), at("loc_height_ft"));
    let rows: Vec<Vec<String>> = body.iter().map(|l| l.split(',').map(str::to_string).collect()).collect();
    let text = |rows: &[Vec<String>], keep: &dyn Fn(usize) -> bool| {
        let h: Vec<&str> = header.iter().enumerate().filter(|(i, _)| keep(*i)).map(|(_, h)| *h).collect();
        let body: Vec<String> =
            rows.iter().map(|r| r.iter().enumerate().filter(|(i, _)| keep(*i)).map(|(_, v)| v.as_str()).collect::<Vec<_>>().join(",")).collect();
        format!("{}\n{}\n", h.join(","), body.join("\n"))
    };
    // Outcomes as one-letter codes, heights as words.
    let letter = |r: &str| match r {
        "ball" | "hit_by_pitch" => "B",
        "in_play" => "X",
        _ => "S",
    };
    let mut coded = rows.clone();
    for r in &mut coded {
        r[result] = letter(&r[result]).to_string();
        r[height] = if r[height].parse::<f64>().unwrap() > 2.5 { "high".into() } else { "low".into() };
    }
    let ing = load(&write(&dir, "coded.csv", &text(&coded, &|_| true)));
    let without = load(&write(&dir, "without.csv", &text(&rows, &|i| ![result, side, height].contains(&i))));
    assert!(ing.rejected.is_empty(), "{:?}", &ing.rejected[..ing.rejected.len().min(3)]);
    assert_same_rows(&ing.log, &without.log, true);
    let aside: Vec<(Vec<String>, &str)> = ing.source.optional_set_aside.iter().map(|a| (a.columns.clone(), a.reason.as_str())).collect();
    assert_eq!(aside.len(), 2, "{aside:?}");
    assert_eq!(aside[0].0, ["result"]);
    let strikes = coded.iter().filter(|r| r[result] == "S").count();
    assert!(
        aside[0].1.starts_with(&format!("`result` cannot be read in 3,000 of its 3,000 filled rows (the commonest value, \"S\" in {} rows, is a one-letter outcome code", tellscope::domain::numbers::fmt_n(strikes))),
        "{}",
        aside[0].1
    );
    assert_eq!(aside[1].0, ["loc_side_ft", "loc_height_ft"]);
    assert!(aside[1].1.starts_with("`loc_height_ft` cannot be read in 3,000 of its 3,000 filled rows (the commonest value, \"") && aside[1].1.contains("is not a number"), "{}", aside[1].1);
    assert!(!ing.source.optional_present.iter().any(|c| c == "result" || c.starts_with("loc_")), "{:?}", ing.source.optional_present);

    // A season written as a span throughout is not set aside (the calendar
    // year would cut a winter season in two): its rows are rejected with
    // the fix.
    let season = at("season");
    let mut spans = rows.clone();
    for r in &mut spans {
        r[season] = format!("{}-{}", r[season], r[season][2..].parse::<u32>().unwrap() + 1);
    }
    let e = data_error(&write(&dir, "spans.csv", &text(&spans, &|_| true)), &defaults());
    assert!(e.contains("is a span of years"), "{e}");
    // A few bad values (one row in a hundred) are rows rejected, as ever.
    let mut few = rows.clone();
    for r in few.iter_mut().step_by(100) {
        r[result] = "S".into();
    }
    let ing = load(&write(&dir, "few.csv", &text(&few, &|_| true)));
    assert_eq!(ing.rejected.len(), 30);
    assert!(ing.rejected.iter().all(|r| r.column == "result"));
    assert!(ing.source.optional_set_aside.is_empty());
    std::fs::remove_dir_all(&dir).ok();
}

/// Base columns written as the runner on the base (his id, empty where no
/// runner is), as many play-by-play exports write them: read whole as
/// occupied where filled, with a note, the same rows as the 0/1 log. A
/// column mixing ids with 0 keeps its rows' reasons.
#[test]
fn base_columns_of_runner_ids_read_as_occupied_where_filled() {
    let dir = scratch("runner-ids");
    let (head, body) = plain_staff_lines(3000);
    let bases: Vec<usize> = ["on_first", "on_second", "on_third"].iter().map(|c| column(&head, c)).collect();
    let rewrite = |zero: &str| -> String {
        let rows: Vec<String> = body
            .iter()
            .enumerate()
            .map(|(i, l)| {
                let mut c: Vec<String> = l.split(',').map(str::to_string).collect();
                for (k, &b) in bases.iter().enumerate() {
                    c[b] = if c[b] == "1" { format!("{}", 660_000 + 37 * i + k) } else { zero.to_string() };
                }
                c.join(",")
            })
            .collect();
        format!("{head}\n{}\n", rows.join("\n"))
    };
    let plain = load(&write(&dir, "plain.csv", &format!("{head}\n{}\n", body.join("\n"))));
    let ids = load(&write(&dir, "ids.csv", &rewrite("")));
    // R's "NA" for an empty base reads the same.
    let na = load(&write(&dir, "na.csv", &rewrite("NA")));
    assert!(na.rejected.is_empty() && na.log.runner_ids.is_some(), "{:?}", &na.rejected[..na.rejected.len().min(2)]);
    assert_same_rows(&plain.log, &na.log, true);
    assert!(ids.rejected.is_empty(), "{:?}", &ids.rejected[..ids.rejected.len().min(3)]);
    assert_same_rows(&plain.log, &ids.log, true);
    assert!(plain.log.runner_ids.is_none());
    assert_eq!(
        ids.log.runner_ids.as_deref(),
        Some("`on_first`, `on_second` and `on_third` hold the runner on the base (an id, a name or 1) and are empty where none is, never 0: a filled cell is read as a runner there and an empty one as none")
    );
    // 1 where a runner is and nothing where none is: the same reading.
    let ones = load(&write(&dir, "ones.csv", &rewrite("").lines().map(|l| {
        let mut c: Vec<String> = l.split(',').map(str::to_string).collect();
        for &b in &bases {
            if c[b].starts_with("66") {
                c[b] = "1".into();
            }
        }
        c.join(",")
    }).collect::<Vec<_>>().join("\n")));
    assert!(ones.rejected.is_empty() && ones.log.runner_ids.is_some());
    assert_same_rows(&plain.log, &ones.log, true);
    // Ids where a runner is and 0 where none is: not one convention, so
    // each id's row is rejected with the fix, as before.
    let mixed = load(&write(&dir, "mixed.csv", &rewrite("0")));
    let occupied = plain.log.on_first.iter().filter(|&&b| b).count();
    assert!(mixed.log.runner_ids.is_none());
    assert!(mixed.rejected.len() >= occupied && mixed.rejected.iter().all(|r| r.reason.contains("if it is the runner's id")), "{:?}", &mixed.rejected[..2]);
    std::fs::remove_dir_all(&dir).ok();
}

/// A log with `pitch_no` (numbered within each plate appearance) but no
/// `pa`: the rows keep the file's order within each game, as without both.
/// Sorted by `pitch_no` alone, every plate appearance's first pitch came
/// first and most previous pitches read as after a gap. The same rows and
/// the same situations as the log with `pa`; a `pitch_no` running through
/// the game still orders shuffled rows.
#[test]
fn pitch_no_without_pa_keeps_the_file_order() {
    let dir = scratch("no-pa");
    let (head, body) = plain_staff_lines(3000);
    let (pa, no, game) = (column(&head, "pa"), column(&head, "pitch_no"), column(&head, "game"));
    let drop_pa = |l: &str| l.split(',').enumerate().filter(|(i, _)| *i != pa).map(|(_, v)| v).collect::<Vec<_>>().join(",");
    let with = load(&write(&dir, "with.csv", &format!("{head}\n{}\n", body.join("\n"))));
    let without = load(&write(&dir, "without.csv", &format!("{}\n{}\n", drop_pa(&head), body.iter().map(|l| drop_pa(l)).collect::<Vec<_>>().join("\n"))));
    assert!(without.log.pa.is_none() && without.rejected.is_empty());
    assert_eq!(without.log.source_line, with.log.source_line, "the file's order");
    let (a, b) = (tellscope::situations::build(&with.log), tellscope::situations::build(&without.log));
    for f in ["count", "prev_pitch", "times_through"] {
        let codes = |s: &tellscope::situations::Situations| s.factors.iter().find(|x| x.factor.name() == f).map(|x| x.codes.clone()).expect(f);
        assert_eq!(codes(&a), codes(&b), "{f}");
    }
    // Numbered through each game instead, it orders the game's rows even
    // when the file gives them backward.
    let mut running: Vec<String> = Vec::new();
    let mut n = std::collections::HashMap::new();
    for l in &body {
        let mut c: Vec<String> = l.split(',').map(str::to_string).collect();
        let k = n.entry(c[game].clone()).or_insert(0);
        *k += 1;
        c[no] = k.to_string();
        running.push(drop_pa(&c.join(",")));
    }
    let forward = load(&write(&dir, "running.csv", &format!("{}\n{}\n", drop_pa(&head), running.join("\n"))));
    running.reverse();
    let backward = load(&write(&dir, "backward.csv", &format!("{}\n{}\n", drop_pa(&head), running.join("\n"))));
    assert_same_rows(&forward.log, &backward.log, false);
    std::fs::remove_dir_all(&dir).ok();
}

/// Game ids numbered per club (each club's nth game): one id holds the
/// pitchers of more than two clubs on a day, which no game does. A note
/// says so (not the note on `pa` numbered per team, which the collisions
/// would otherwise read as); each pitcher's rows keep the file's order.
#[test]
fn game_ids_numbered_per_club_are_named() {
    let dir = scratch("per-club-ids");
    let mut text = format!("{HEADER},pa,pitch_no,team\n");
    for (club, pitcher) in [("Harbor Owls", "Wren Alder"), ("Mill Foxes", "Juno Vale"), ("Ridge Hawks", "Tam Ostrow")] {
        for (pa, batter) in [(1, "Moss Quill"), (2, "Tal Brook")] {
            for (k, (b, st)) in [(0, 0), (0, 1), (1, 1)].iter().enumerate() {
                text += &format!("1,2025-05-01,{pitcher},R,{batter} of {club},L,1,0,{b},{st},0,0,0,fastball,{pa},{},{club}\n", k + 1);
            }
        }
    }
    let ing = load(&write(&dir, "ids.csv", &text));
    assert_eq!(ing.log.len(), 18);
    let note = ing.log.pa_numbering.as_deref().expect("a note");
    assert!(note.starts_with("in 1 of the 1 games, one game id holds pitchers of more than two clubs on one day (\"1\" on 2025-05-01 holds 3)"), "{note}");
    // Each pitcher's rows in the file's order: his six pitches together.
    let by: Vec<&str> = ing.log.pitcher.iter().map(|&p| ing.log.pitchers[p as usize].as_str()).collect();
    assert_eq!(by, [["Wren Alder"; 6], ["Juno Vale"; 6], ["Tam Ostrow"; 6]].concat());
    // Without `pa` and `pitch_no` (no numbers to collide) the ids are
    // named all the same.
    let bare: String = text.lines().map(|l| {
        let mut c: Vec<&str> = l.split(',').collect();
        c.drain(14..16);
        c.join(",") + "\n"
    }).collect();
    let ing = load(&write(&dir, "bare.csv", &bare));
    assert!(ing.log.pa.is_none());
    let note = ing.log.pa_numbering.as_deref().expect("a note without pa");
    assert!(note.starts_with("in 1 of the 1 games, one game id holds pitchers of more than two clubs on one day"), "{note}");
    std::fs::remove_dir_all(&dir).ok();
}

// ---------------------------------------------------------------- formats

fn tiny_scenario() -> Scenario {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/scenarios/tiny.toml");
    Scenario::from_toml_str(&std::fs::read_to_string(&path).unwrap()).unwrap()
}

#[test]
fn csv_and_parquet_of_one_log_read_to_the_same_rows() {
    let dir = scratch("formats");
    let sim = simulate(&tiny_scenario(), 7);
    let mut df = sim_frame(&sim).unwrap();
    let csv = dir.join("tiny.csv");
    let pq = dir.join("tiny.parquet");
    write_frame(&mut df, &csv).unwrap();
    write_frame(&mut df, &pq).unwrap();
    let a = load(&csv);
    let b = load(&pq);
    assert!(a.rejected.is_empty() && b.rejected.is_empty());
    assert_eq!(a.log.len(), sim.rows.len());
    assert_same_rows(&a.log, &b.log, false);
    // CSV rows are located by line (header = line 1), Parquet rows by index.
    let shifted: Vec<u64> = b.log.source_line.iter().map(|l| l + 2).collect();
    assert_eq!(a.log.source_line, shifted);
    assert_eq!(a.source.optional_present, b.source.optional_present);
    assert_eq!(a.source.rows_read, b.source.rows_read);
    // A Parquet export saved under another name is read by its signature;
    // a file about to be written takes its format from its name alone.
    for name in ["parquet-named.csv", "parquet-without-extension"] {
        let p = dir.join(name);
        std::fs::copy(&pq, &p).unwrap();
        let c = load(&p);
        assert_same_rows(&c.log, &b.log, true);
        write_frame(&mut df, &p).unwrap();
    }
    assert!(std::fs::read_to_string(dir.join("parquet-named.csv")).unwrap().starts_with("game,"), "a .csv is written as CSV");
    // Headers written in capitals with spaces read as the contract's names,
    // in Parquet as in CSV.
    let names: Vec<String> = df.get_column_names().iter().map(|c| c.to_uppercase().replace('_', " ")).collect();
    df.set_column_names(&names.iter().map(|n| n.as_str()).collect::<Vec<_>>()).unwrap();
    let caps = dir.join("caps.parquet");
    write_frame(&mut df, &caps).unwrap();
    let c = load(&caps);
    assert_same_rows(&c.log, &b.log, true);
    assert!(c.source.derive_notes[0].contains("\"PITCH TYPE\" as `pitch_type`") || c.source.derive_notes[0].contains("(and "), "{:?}", c.source.derive_notes);
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn a_rejected_parquet_row_is_located_by_its_row_index() {
    let dir = scratch("parquet-bad");
    let mut sim = simulate(&tiny_scenario(), 7);
    // Row 5 (0-based) gets an impossible count.
    sim.rows[5].balls = 4;
    let mut df = sim_frame(&sim).unwrap();
    let pq = dir.join("bad.parquet");
    write_frame(&mut df, &pq).unwrap();
    let ing = load(&pq);
    let r = one_rejection(&ing);
    // The 0-based row index, as documented on `Rejected::line`.
    assert_eq!((r.line, r.column.as_ref(), r.value.as_str()), (5, "balls", "4"));
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn crlf_line_ends_read_like_lf() {
    let dir = scratch("crlf");
    let text = std::fs::read_to_string(fixture("good.csv")).unwrap();
    let p = write(&dir, "good_crlf.csv", &text.replace('\n', "\r\n"));
    let crlf = load(&p);
    let lf = load(&fixture("good.csv"));
    assert!(crlf.rejected.is_empty(), "{:?}", crlf.rejected);
    assert_same_rows(&crlf.log, &lf.log, true);
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn a_byte_order_mark_before_the_header_is_ignored() {
    // Spreadsheet programs often save UTF-8 with a leading BOM; the first
    // header name must still read as `game`.
    let dir = scratch("bom");
    let text = std::fs::read_to_string(fixture("good.csv")).unwrap();
    let p = write(&dir, "good_bom.csv", &format!("\u{feff}{text}"));
    let bom = load(&p);
    assert_same_rows(&bom.log, &load(&fixture("good.csv")).log, true);
    std::fs::remove_dir_all(&dir).ok();
}

/// A compressed CSV or a zip archive (a spreadsheet workbook) is refused
/// by its signature, naming what it is and how to unpack it, rather than
/// read as text that is not UTF-8 (or with the reader's own build hint).
#[test]
fn a_compressed_or_zipped_log_is_refused_with_the_tool_that_unpacks_it() {
    let dir = scratch("packed");
    let body = std::fs::read(fixture("good.csv")).unwrap();
    for (name, magic, says) in [
        ("log.csv.gz", &[0x1F, 0x8B, 0x08, 0x00][..], "gzip-compressed; decompress it first (gunzip -k FILE)"),
        ("log.csv.zst", &[0x28, 0xB5, 0x2F, 0xFD][..], "zstd-compressed"),
        ("log.csv.bz2", &b"BZh9"[..], "bzip2-compressed"),
        ("log.csv.xz", &[0xFD, b'7', b'z', b'X', b'Z', 0x00][..], "xz-compressed"),
        ("log.xlsx", &b"PK\x03\x04"[..], "a zip archive or a spreadsheet workbook"),
    ] {
        let p = dir.join(name);
        std::fs::write(&p, [magic, &body[..]].concat()).unwrap();
        let e = data_error(&p, &defaults());
        assert!(e.contains(says), "{name}: {e}");
    }
    std::fs::remove_dir_all(&dir).ok();
}

// ---------------------------------------------------------------- ordering

#[test]
fn shuffled_rows_come_back_ordered_by_date_game_pa_pitch_no() {
    let dir = scratch("order");
    // Each row's key is (date, game, pa, pitch_no); the pitch_type cell
    // carries the expected position so the order can be read back.
    // Game "Z-1" is on the earlier date, so date decides before the game
    // id; "B-2" and "C-2" share a date, so the game id decides between them.
    let rows = [
        ("2025-04-01", "Z-1", 1, 1),
        ("2025-04-01", "Z-1", 1, 2),
        ("2025-04-01", "Z-1", 2, 1),
        ("2025-04-01", "Z-1", 10, 1), // numeric, not text order: 10 after 2
        ("2025-04-02", "B-2", 1, 1),
        ("2025-04-02", "B-2", 1, 2),
        ("2025-04-02", "B-2", 1, 10),
        ("2025-04-02", "C-2", 1, 1),
        ("2025-04-03", "A-3", 1, 1),
    ];
    let line = |k: usize| {
        let (date, game, pa, no) = rows[k];
        format!("{game},{date},Wren Alder,R,Moss Quill,L,1,0,0,0,0,0,0,p{k},{pa},{no}\n")
    };
    // A fixed shuffle (no order of the file matches the sorted one).
    let shuffled = [6, 2, 8, 0, 5, 3, 7, 1, 4];
    let mut text = format!("{HEADER},pa,pitch_no\n");
    for &k in &shuffled {
        text.push_str(&line(k));
    }
    let p = write(&dir, "shuffled.csv", &text);
    let log = load(&p).log;
    let got: Vec<String> = log.pitch_type.iter().map(|&t| log.pitch_types[t as usize].clone()).collect();
    let want: Vec<String> = (0..rows.len()).map(|k| format!("p{k}")).collect();
    assert_eq!(got, want);
    // source_line still points at the line each row came from.
    for (i, t) in got.iter().enumerate() {
        let k: usize = t[1..].parse().unwrap();
        let file_pos = shuffled.iter().position(|&s| s == k).unwrap();
        assert_eq!(log.source_line[i], file_pos as u64 + 2, "row {i}");
    }
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn without_pa_file_order_within_a_game_is_kept() {
    let dir = scratch("file-order");
    // Two games interleaved in the file; the later game comes first. Within
    // each game the file order is the pitch order, whatever the counts say.
    let text = format!(
        "{HEADER}\n\
         G-LATE,2025-04-02,Wren Alder,R,Moss Quill,L,1,0,0,0,0,0,0,late-1\n\
         G-EARLY,2025-04-01,Wren Alder,R,Moss Quill,L,1,0,0,0,0,0,0,early-1\n\
         G-LATE,2025-04-02,Wren Alder,R,Moss Quill,L,1,0,2,2,0,0,0,late-2\n\
         G-EARLY,2025-04-01,Wren Alder,R,Moss Quill,L,1,0,0,1,0,0,0,early-2\n\
         G-LATE,2025-04-02,Wren Alder,R,Moss Quill,L,1,0,0,1,0,0,0,late-3\n\
         G-EARLY,2025-04-01,Wren Alder,R,Tal Brook,R,1,1,0,0,0,0,0,early-3\n"
    );
    let p = write(&dir, "no_pa.csv", &text);
    let log = load(&p).log;
    assert!(log.pa.is_none() && log.pitch_no.is_none());
    let got: Vec<&str> = log.pitch_type.iter().map(|&t| log.pitch_types[t as usize].as_str()).collect();
    assert_eq!(got, ["early-1", "early-2", "early-3", "late-1", "late-2", "late-3"]);
    assert_eq!(log.source_line, [3, 5, 7, 2, 4, 6]);
    std::fs::remove_dir_all(&dir).ok();
}

// ---------------------------------------------------------------- optional

#[test]
fn absent_optional_columns_are_listed_and_empty_cells_are_missing_values() {
    let good = load(&fixture("good.csv"));
    assert_eq!(good.source.optional_present, ["pa", "pitch_no", "score_diff", "result", "speed_mph", "team"]);
    assert_eq!(good.source.optional_missing, ["season", "loc_side_ft", "loc_height_ft"]);
    assert!(good.log.loc_side_ft.is_none() && good.log.loc_height_ft.is_none());
    // season defaults to the year of date (CONTRACT §1).
    assert_eq!(good.log.seasons(), [2025, 2026]);

    let dir = scratch("optional");
    let p = write(
        &dir,
        "sparse.csv",
        &format!(
            "{HEADER},score_diff,result,speed_mph,season\n\
             G-0501,2025-05-01,Wren Alder,R,Moss Quill,L,1,0,0,0,0,0,0,fastball,1,ball,91.5,2025\n\
             G-0501,2025-05-01,Wren Alder,R,Moss Quill,L,1,0,1,0,0,0,0,slider,,,,\n\
             G-0501,2025-05-01,Wren Alder,R,Moss Quill,L,1,0,2,0,0,0,0,slider, , , ,\n"
        ),
    );
    let ing = load(&p);
    assert!(ing.rejected.is_empty(), "empty optional cells are not rejections: {:?}", ing.rejected);
    let log = &ing.log;
    assert_eq!(log.len(), 3);
    assert_eq!(log.score_diff.as_deref(), Some(&[Some(1), None, None][..]));
    assert_eq!(log.result.as_deref(), Some(&[Some(PitchResult::Ball), None, None][..]));
    assert_eq!(log.speed_mph.as_deref(), Some(&[Some(91.5f32), None, None][..]));
    // An empty season cell falls back to the year of the date.
    assert_eq!(log.season, [2025, 2025, 2025]);
    assert_eq!(
        ing.source.optional_missing,
        ["pa", "pitch_no", "loc_side_ft", "loc_height_ft", "team"]
    );
    std::fs::remove_dir_all(&dir).ok();
}


/// Silent wrong data and injection (issue: nothing breaks, nothing is lost,
/// nothing is injected): a name holding a terminal escape, a 250-character
/// name and a date in year 9999 are each rejected with their line and
/// column; the good row is kept.
#[test]
fn control_characters_long_names_and_far_years_are_rejected_with_their_line() {
    let dir = scratch("hostile-cells");
    let long = "x".repeat(250);
    let text = format!(
        "{HEADER}\nG1,2025-04-03,Plain Arm,R,B1,L,1,0,0,0,0,0,0,fastball\nG1,2025-04-03,Evil\u{1b}[31mArm,R,B1,L,1,0,0,1,0,0,0,fastball\nG1,2025-04-03,{long},R,B1,L,1,0,0,2,0,0,0,fastball\nG2,9999-04-03,Plain Arm,R,B1,L,1,0,0,0,0,0,0,fastball\n"
    );
    let ing = load(&write(&dir, "hostile.csv", &text));
    assert_eq!(ing.log.len(), 1);
    let r: Vec<(u64, &str, &str)> = ing.rejected.iter().map(|r| (r.line, r.column.as_ref(), r.reason.as_ref())).collect();
    assert_eq!(r.len(), 3, "{r:?}");
    assert!(r.iter().any(|(l, c, why)| *l == 3 && *c == "pitcher" && why.contains("control character")), "{r:?}");
    assert!(r.iter().any(|(l, c, why)| *l == 4 && *c == "pitcher" && why.contains("longer than")), "{r:?}");
    assert!(r.iter().any(|(l, c, why)| *l == 5 && *c == "date" && why.contains("1800..3000")), "{r:?}");
    // The kept value of the long name is clipped, its length stated.
    let long_row = ing.rejected.iter().find(|r| r.line == 4).unwrap();
    assert!(long_row.value.contains("(250 characters)") && long_row.value.chars().count() < 230);
    assert!(!ing.rejected.iter().any(|r| r.value.contains('\u{1b}')));
    std::fs::remove_dir_all(&dir).ok();
}

/// A header naming a contract column twice is refused (exit 3), naming the
/// column and both positions, instead of being read first-wins.
#[test]
fn a_header_naming_a_column_twice_is_refused() {
    let dir = scratch("dup-header");
    let text = format!("{HEADER},pitch_type\nG1,2025-04-03,Plain Arm,R,B1,L,1,0,0,0,0,0,0,fastball,slider\n");
    let e = ingest::load(&write(&dir, "dup.csv", &text), &defaults().input).err().expect("refused");
    assert_eq!(e.exit_code(), 3);
    assert!(e.to_string().contains("pitch_type") && e.to_string().contains("twice"), "{e}");
    std::fs::remove_dir_all(&dir).ok();
}

/// A Parquet export's integer, unsigned, decimal and boolean column types
/// are read as the values they hold (tests/fixtures/logs/typed.parquet,
/// made by make_typed_parquet.py with pyarrow).
#[test]
fn parquet_integer_and_decimal_types_are_read() {
    let ing = load(&fixture("typed.parquet"));
    assert_eq!(ing.rejected.len(), 0, "{:?}", ing.rejected.iter().map(|r| &r.reason).collect::<Vec<_>>());
    assert_eq!(ing.log.len(), 3);
    let mut balls = ing.log.balls.clone();
    balls.sort_unstable();
    assert_eq!(balls, vec![0, 1, 2]);
    let mut outs = ing.log.outs.clone();
    outs.sort_unstable();
    assert_eq!(outs, vec![0, 1, 2]);
}

/// A Parquet `date` of time stamps with a zone is dated by the zone's
/// wall time (tests/fixtures/logs/zoned.parquet and unknown-zone.parquet,
/// made by make_zoned_parquet.py with pyarrow): 01:40 UTC on 4 April 2025
/// is 19:40 on 3 April in America/Denver (UTC−6 in daylight time; the
/// zone's rule, common knowledge), so the evening game keeps its own day.
/// A zone the time-zone database does not have is refused (exit 3),
/// naming it and the fix, not reported as a damaged file.
#[test]
fn parquet_stamps_in_a_zone_are_dated_by_its_wall_time() {
    let ing = load(&fixture("zoned.parquet"));
    assert!(ing.rejected.is_empty(), "{:?}", ing.rejected);
    let (day, _) = ingest::parse::parse_date("2025-04-03").unwrap();
    assert_eq!(ing.log.date, vec![day; 3]);
    let e = data_error(&fixture("unknown-zone.parquet"), &defaults());
    assert!(e.contains("\"Mars/Olympus\"") && e.contains("not in the time-zone database") && e.contains("UTC"), "{e}");
    assert!(!e.contains("damaged"), "{e}");
}

/// A row with a field missing or one too many is rejected whole, with its
/// line, never read with its values shifted into other columns; the rest of
/// the file is read.
#[test]
fn rows_with_too_few_or_too_many_fields_are_rejected_with_their_line() {
    let dir = scratch("ragged");
    // Line 3 lacks `inning` (every later value would shift left); line 4
    // has an extra field.
    let text = format!(
        "{HEADER}\nG1,2025-04-03,Plain Arm,R,B1,L,1,0,0,0,0,0,0,fastball\nG1,2025-04-03,Plain Arm,R,B1,L,0,0,1,0,0,0,slider\nG1,2025-04-03,Plain Arm,R,B1,L,1,0,0,2,0,0,0,fastball,extra\nG1,2025-04-03,Plain Arm,R,B1,L,1,1,0,0,0,0,0,slider\n"
    );
    let ing = load(&write(&dir, "ragged.csv", &text));
    assert_eq!(ing.log.len(), 2);
    let r: Vec<(u64, &str)> = ing.rejected.iter().map(|r| (r.line, r.reason.as_ref())).collect();
    assert_eq!(r.len(), 2, "{r:?}");
    assert!(r[0].0 == 3 && r[0].1.contains("13 fields where the header has 14"), "{r:?}");
    assert!(r[1].0 == 4 && r[1].1.contains("15 fields where the header has 14"), "{r:?}");
    std::fs::remove_dir_all(&dir).ok();
}

/// A pitch logged twice (the same date, game, pa and pitch_no, and the
/// same pitch there; a log appended to itself, say) counts once: the later
/// copy in the file is rejected, naming the line of the first, and the
/// rejected rows stay in file order. Two pitches sharing a place but not a
/// pitcher are both kept, and so are equal rows without pa and pitch_no
/// (a foul with two strikes repeats the count).
#[test]
fn a_pitch_logged_twice_counts_once() {
    let dir = scratch("repeats");
    let good = std::fs::read_to_string(fixture("good.csv")).unwrap();
    let (header, body) = good.split_once('\n').unwrap();
    let rows: Vec<&str> = body.lines().collect();
    // Rows 1 and 3 again at the end, and a row with a bad hand between;
    // then row 1's place (game, pa, pitch_no) with another pitcher, as a
    // log numbering plate appearances per team has: a pitch of its own.
    let bad = rows[0].replacen(",R,", ",X,", 1);
    let other = rows[0].replacen("Wren Alder", "Juno Vale", 1);
    let text = format!("{header}\n{body}{}\n{bad}\n{}\n{other}\n", rows[0], rows[2]);
    let ing = load(&write(&dir, "twice.csv", &text));
    assert_eq!(ing.log.len(), rows.len() + 1);
    let lines: Vec<u64> = ing.rejected.iter().map(|r| r.line).collect();
    let n = rows.len() as u64;
    assert_eq!(lines, [n + 2, n + 3, n + 4], "in file order");
    let repeats: Vec<&ingest::Rejected> = ing.rejected.iter().filter(|r| r.reason.contains("logged twice")).collect();
    assert_eq!(repeats.len(), 2);
    assert!(repeats[0].value.ends_with("(first at line 2)") && repeats[1].value.ends_with("(first at line 4)"), "{:?}", repeats);
    assert_eq!(ing.source.rows_rejected, 3);
    // The same rows without pa and pitch_no: nothing says they repeat.
    let strip = |line: &str| line.split(',').take(14).collect::<Vec<_>>().join(",");
    let plain: String = std::iter::once(HEADER.to_string()).chain(text.lines().skip(1).map(strip)).map(|l| l + "\n").collect();
    let ing = load(&write(&dir, "plain.csv", &plain));
    assert_eq!(ing.log.len(), rows.len() + 3);
    assert_eq!(ing.rejected.len(), 1, "only the bad hand");
    std::fs::remove_dir_all(&dir).ok();
}

/// A log of first pitches of a plate appearance (game, date, pitcher,
/// pitch type), every other required value the same.
fn pitches(rows: &[(&str, &str, &str, &str)]) -> String {
    let mut text = format!("{HEADER}\n");
    for (game, date, pitcher, pitch) in rows {
        text += &format!("{game},{date},{pitcher},R,Moss Quill,L,1,0,0,0,0,0,0,{pitch}\n");
    }
    text
}

/// A game id met on two dates (games numbered afresh each season) names
/// two games: the later date's rows get a game of their own, named with
/// its date, so no outing, fold or test stratum spans two seasons.
#[test]
fn a_game_id_on_two_dates_is_two_games() {
    let dir = scratch("game-ids");
    let text = pitches(&[
        ("G1", "2026-04-01", "Wren Alder", "slider"),
        ("G1", "2025-04-01", "Wren Alder", "fastball"),
        ("G1", "2025-04-01", "Wren Alder", "curveball"),
        ("G1", "2026-04-01", "Wren Alder", "fastball"),
        ("G2", "2025-04-02", "Wren Alder", "sinker"),
    ]);
    let ing = load(&write(&dir, "ids.csv", &text));
    let log = &ing.log;
    assert!(ing.rejected.is_empty());
    let named: Vec<(String, String)> = (0..log.len())
        .map(|i| (log.games[log.game[i] as usize].clone(), tellscope::ingest::parse::format_date(log.date[i])))
        .collect();
    let want = |g: &str, d: &str| (g.to_string(), d.to_string());
    assert_eq!(
        named,
        [
            want("G1", "2025-04-01"),
            want("G1", "2025-04-01"),
            want("G2", "2025-04-02"),
            want("G1 (2026-04-01)", "2026-04-01"),
            want("G1 (2026-04-01)", "2026-04-01"),
        ]
    );
    // A note says so, with the first such id's dates.
    assert_eq!(
        log.games_on_two_dates.as_deref(),
        Some("1 of the 2 game ids is used on more than one date (\"G1\" on 2025-04-01 and 2026-04-01): each date's rows are read as a game of its own, so a game suspended and finished another day counts as two, its times through the order starting again; if ids are numbered afresh each season, nothing is lost")
    );
    // A log whose ids are unique keeps its games as they are.
    let good = load(&fixture("good.csv"));
    assert!(good.log.games_on_two_dates.is_none());
    assert_eq!(good.log.games.len(), good.log.game.iter().collect::<std::collections::BTreeSet<_>>().len());
    assert!(good.log.games.iter().all(|g| !g.contains('(')));
    std::fs::remove_dir_all(&dir).ok();
}

/// Pitch labels and pitcher names that differ only in case, spaces,
/// punctuation or word order stay apart (the contract reads labels as written) but are
/// named in a note, with the fix: a typing slip would otherwise read as a
/// new pitch or a newcomer.
#[test]
fn names_differing_only_in_case_are_noted() {
    let dir = scratch("near-names");
    let text = pitches(&[
        ("G1", "2025-04-01", "Wren Alder", "slider"),
        ("G1", "2025-04-01", "wren  alder", "Slider"),
        ("G1", "2025-04-01", "Wren Alder", "four-seam"),
        ("G1", "2025-04-01", "Juno Vale", "Four Seam"),
        ("G1", "2025-04-01", "Vale Juno", "slider"),
        ("G1", "2025-04-01", "Juno Valerian", "slider"),
    ]);
    let ing = load(&write(&dir, "near.csv", &text));
    assert_eq!(ing.log.pitch_types.len(), 4, "labels are read as written");
    let notes = ing.log.near_duplicate_names();
    assert_eq!(notes.len(), 2, "{notes:?}");
    assert!(notes[0].starts_with("pitch labels that differ only in case") && notes[0].contains(r#""Four Seam" and "four-seam""#) && notes[0].contains(r#""Slider" and "slider""#), "{}", notes[0]);
    assert!(notes[0].ends_with("merge them with a [pitch_groups] table in the config"));
    assert!(notes[1].starts_with("pitcher names") && notes[1].contains(r#""Wren Alder" and "wren  alder""#), "{}", notes[1]);
    // A name written last name first is the same words in another order
    // (a quoted "Vale, Juno" alike: punctuation is not a word).
    assert!(notes[1].contains(r#""Juno Vale" and "Vale Juno""#) && !notes[1].contains("Valerian"), "{}", notes[1]);
    assert!(load(&fixture("good.csv")).log.near_duplicate_names().is_empty());
    std::fs::remove_dir_all(&dir).ok();
}

/// A pitcher the log lists for two clubs on one date is two men sharing a
/// name (or wrong rows): they stay one pitcher, as written, and a note
/// names him with the date and both clubs. The same name for one club in
/// two games of a day (a doubleheader) and for two clubs on two days (a
/// trade) is not noted.
#[test]
fn a_name_on_two_clubs_in_one_day_is_noted() {
    let dir = scratch("two-clubs");
    let row = |game: &str, date: &str, pitcher: &str, team: &str| {
        format!("{game},{date},{pitcher},R,Moss Quill,L,1,0,0,0,0,0,0,fastball,{team}\n")
    };
    let mut text = format!("{HEADER},team\n");
    for r in [
        row("G1", "2025-05-03", "Luis Varga", "Tinker Flats"),
        row("G2", "2025-05-03", "Luis Varga", "Harbor Lights"),
        row("G3", "2025-05-04", "Wren Alder", "Tinker Flats"),
        row("G4", "2025-05-04", "Wren Alder", "Tinker Flats"),
        row("G5", "2025-05-05", "Juno Vale", "Tinker Flats"),
        row("G6", "2025-05-06", "Juno Vale", "Harbor Lights"),
    ] {
        text += &r;
    }
    let ing = load(&write(&dir, "two-clubs.csv", &text));
    assert!(ing.rejected.is_empty());
    assert_eq!(ing.log.pitchers.len(), 3, "names are read as written");
    let notes = ing.log.names_on_two_clubs_in_a_day();
    assert_eq!(notes.len(), 1, "{notes:?}");
    assert!(notes[0].contains(r#""Luis Varga" (2025-05-03: Tinker Flats and Harbor Lights)"#), "{}", notes[0]);
    assert!(!notes[0].contains("Wren Alder") && !notes[0].contains("Juno Vale"), "{}", notes[0]);
    assert!(notes[0].ends_with("give each his own id in `pitcher`"), "{}", notes[0]);
    assert!(load(&fixture("good.csv")).log.names_on_two_clubs_in_a_day().is_empty());
    std::fs::remove_dir_all(&dir).ok();
}

/// A log whose rows carry these speeds and locations, one pitch each.
fn measured(rows: &[(f64, f64, f64)]) -> String {
    let mut text = format!("{HEADER},speed_mph,loc_side_ft,loc_height_ft\n");
    for (i, (speed, side, height)) in rows.iter().enumerate() {
        text += &format!("G{},2025-04-{:02},Wren Alder,R,Moss Quill,L,1,0,0,0,0,0,0,fastball,{speed},{side},{height}\n", i / 10, 1 + i / 10);
    }
    text
}

/// Measurement columns in other units than the contract's (speeds in
/// km/h, locations in inches or metres) are set aside whole, named with
/// their median and the conversion, and no row is rejected for them: read
/// row by row, a log in km/h lost 96% of its rows and one in inches 75%
/// (the pitches above 20 "feet"), and one in metres put every pitch in the
/// middle of the plate. The same values in the contract's units are kept,
/// and a single implausible value is still rejected with its row.
#[test]
fn measurement_columns_in_other_units_are_set_aside_whole() {
    let dir = scratch("units");
    // 40 pitches in feet and mph: speeds 84-95, sides -1.0..0.95, heights 1.5-3.45.
    let feet: Vec<(f64, f64, f64)> = (0..40).map(|i| (84.0 + (i % 12) as f64, -1.0 + 0.05 * i as f64, 1.5 + 0.05 * i as f64)).collect();
    let ing = load(&write(&dir, "feet.csv", &measured(&feet)));
    assert!(ing.rejected.is_empty() && ing.source.optional_set_aside.is_empty());
    assert!(ing.log.speed_mph.is_some() && ing.log.loc_height_ft.is_some());

    let kmh: Vec<_> = feet.iter().map(|&(v, s, h)| (v * 1.609, s, h)).collect();
    let ing = load(&write(&dir, "kmh.csv", &measured(&kmh)));
    assert!(ing.rejected.is_empty(), "no row is lost to the units");
    assert_eq!(ing.log.len(), 40);
    assert!(ing.log.speed_mph.is_none() && ing.log.loc_height_ft.is_some());
    let a = &ing.source.optional_set_aside;
    assert_eq!(a.len(), 1);
    assert_eq!(a[0].columns, vec!["speed_mph"]);
    assert!(a[0].reason.contains("looks like km/h; divide by 1.609"), "{}", a[0].reason);
    assert!(!ing.source.optional_missing.contains(&"speed_mph".to_string()), "set aside, not missing");

    let inches: Vec<_> = feet.iter().map(|&(v, s, h)| (v, s * 12.0, h * 12.0)).collect();
    let ing = load(&write(&dir, "inches.csv", &measured(&inches)));
    assert!(ing.rejected.is_empty());
    assert!(ing.log.loc_side_ft.is_none() && ing.log.loc_height_ft.is_none() && ing.log.speed_mph.is_some());
    let a = &ing.source.optional_set_aside;
    assert_eq!(a[0].columns, vec!["loc_side_ft", "loc_height_ft"]);
    assert!(a[0].reason.contains("look like inches (divide by 12)"), "{}", a[0].reason);

    let metres: Vec<_> = feet.iter().map(|&(v, s, h)| (v, s * 0.3048, h * 0.3048)).collect();
    let ing = load(&write(&dir, "metres.csv", &measured(&metres)));
    assert!(ing.log.loc_height_ft.is_none());
    assert!(ing.source.optional_set_aside[0].reason.contains("look like metres (multiply by 3.281)"));

    // One wild value among feet is a bad row, not a column in other units.
    let mut one_off = feet.clone();
    one_off[7].2 = 31.0;
    let ing = load(&write(&dir, "one-off.csv", &measured(&one_off)));
    assert!(ing.source.optional_set_aside.is_empty());
    assert_eq!(one_rejection(&ing).column, "loc_height_ft");

    // Too few values decide nothing: among 15 pitches, the 10 in km/h are
    // rejected row by row.
    let few: Vec<_> = kmh[..10].iter().chain(&feet[10..15]).copied().collect();
    let ing = load(&write(&dir, "few.csv", &measured(&few)));
    assert!(ing.source.optional_set_aside.is_empty());
    assert_eq!(ing.rejected.len(), 10);
    std::fs::remove_dir_all(&dir).ok();
}

/// A log whose count columns hold the count after each pitch (a feed's
/// convention, not the contract's) is refused with the reason and the fix:
/// every plate appearance starts at 0-0, and here its first pitches do not.
/// Read as written every pitch would sit one count late. The same plate
/// appearances with the count before each pitch read as usual.
#[test]
fn counts_after_the_pitch_are_refused() {
    let dir = scratch("count-after");
    let log = |after: bool| {
        let mut text = format!("{HEADER},pa,pitch_no\n");
        for pa in 1..=25 {
            // Two balls, then in play: before the pitch 0-0, 1-0, 2-0.
            for (k, balls) in [0, 1, 2].into_iter().enumerate() {
                let b = if after { (balls + 1).min(3) } else { balls };
                text += &format!("G1,2025-04-01,Wren Alder,R,Moss Quill,L,1,0,{b},0,0,0,0,fastball,{pa},{}\n", k + 1);
            }
        }
        text
    };
    let before = load(&write(&dir, "before.csv", &log(false)));
    assert_eq!(before.log.len(), 75);
    assert!(before.log.count_after_the_pitch().is_none());
    let err = data_error(&write(&dir, "after.csv", &log(true)), &defaults());
    assert!(
        err.contains("only 0 of 25 plate appearances' first pitches (pitch_no 1) are at 0-0") && err.ends_with("give the count before it"),
        "{err}"
    );
    std::fs::remove_dir_all(&dir).ok();
}

/// A log of two pitchers, each throwing 30 pitches in the first inning of
/// his game, with the score difference of each pitch.
fn scored(first: impl Fn(i32) -> i32, second: impl Fn(i32) -> i32) -> String {
    let mut text = format!("{HEADER},score_diff\n");
    for (game, pitcher, score) in [("G1", "Wren Alder", &first as &dyn Fn(i32) -> i32), ("G2", "Juno Vale", &second)] {
        for i in 0..30 {
            text += &format!("{game},2025-04-01,{pitcher},R,Moss Quill,L,1,0,0,0,0,0,0,fastball,{}\n", score(i));
        }
    }
    text
}

/// A score difference that rises while a pitcher is on the mound is not the
/// pitcher's team's runs minus the opponent's (only the batting side scores
/// then): taken from the batting side, or from one team throughout (the
/// home team's), it is set aside whole with the reason, since "ahead" would
/// read as "behind". The contract's column, which only falls there, is kept.
#[test]
fn a_score_difference_from_the_other_side_is_set_aside() {
    let dir = scratch("score-side");
    // A run every other pitch: 14 changes a pitcher.
    let falls = |i: i32| -(i / 2);
    let rises = |i: i32| i / 2;
    let ing = load(&write(&dir, "pitcher.csv", &scored(falls, falls)));
    assert!(ing.source.optional_set_aside.is_empty() && ing.log.score_diff.is_some());
    assert!(ing.source.optional_present.contains(&"score_diff".to_string()));

    let ing = load(&write(&dir, "batting.csv", &scored(rises, rises)));
    assert!(ing.rejected.is_empty() && ing.log.score_diff.is_none());
    assert!(!ing.source.optional_present.contains(&"score_diff".to_string()));
    let a = &ing.source.optional_set_aside;
    assert_eq!(a[0].columns, vec!["score_diff"]);
    assert!(a[0].reason.contains("in 28 of its 28 changes") && a[0].reason.contains("batting side's runs minus the pitcher's team's"), "{}", a[0].reason);

    let ing = load(&write(&dir, "home.csv", &scored(falls, rises)));
    let a = &ing.source.optional_set_aside;
    assert!(a[0].reason.contains("in 14 of its 28 changes") && a[0].reason.contains("one team's score throughout"), "{}", a[0].reason);
    std::fs::remove_dir_all(&dir).ok();
}

/// A file listing each game's pitches last to first, without `pa` and
/// `pitch_no` to set the order right: the count falls between consecutive
/// pitches to one batter where it should rise, so a note says the file
/// runs backward, and neither the score check (its changes read backward
/// too) nor the gap note (every pitch seems to follow a gap) misreads it.
/// The plain-staff demo, forward and backward.
#[test]
fn a_file_that_runs_backward_is_named() {
    let dir = scratch("backward");
    let (head, lines) = plain_staff_lines(3000);
    let header: Vec<&str> = head.split(',').collect();
    let keep: Vec<usize> = (0..header.len()).filter(|&i| header[i] != "pa" && header[i] != "pitch_no").collect();
    let cut = |l: &str| -> String {
        let c: Vec<&str> = l.split(',').collect();
        keep.iter().map(|&i| c[i]).collect::<Vec<_>>().join(",")
    };
    let body: Vec<String> = lines.iter().map(|l| cut(l)).collect();
    let head = cut(&header.join(","));
    let forward = write(&dir, "forward.csv", &format!("{head}\n{}\n", body.join("\n")));
    let backward = write(&dir, "backward.csv", &format!("{head}\n{}\n", body.iter().rev().cloned().collect::<Vec<_>>().join("\n")));
    let sit_notes = |p: &Path| {
        let ing = load(p);
        assert!(ing.source.optional_set_aside.is_empty(), "score_diff kept: {:?}", ing.source.optional_set_aside);
        tellscope::situations::build(&ing.log).notes
    };
    let notes = sit_notes(&backward);
    let note = notes.iter().find(|n| n.contains("the file seems to list each game's pitches last to first")).unwrap_or_else(|| panic!("{notes:?}"));
    assert!(note.starts_with("the count falls from one pitch to the next in ") && note.contains("add pa and pitch_no columns"), "{note}");
    assert!(!notes.iter().any(|n| n.contains("missing from the log")), "{notes:?}");
    let notes = sit_notes(&forward);
    assert!(!notes.iter().any(|n| n.contains("last to first") || n.contains("missing from the log")), "{notes:?}");
    std::fs::remove_dir_all(&dir).ok();
}

/// A log whose `outs` hold the outs after each pitch is refused with the
/// reason and the fix: outs before each pitch stay the same through a plate
/// appearance, and here they rise on its last pitch. A log numbering plate
/// appearances per team (both clubs' pitchers with the same numbers in a
/// game, at different outs) is read as usual.
#[test]
fn outs_after_the_pitch_are_refused() {
    let dir = scratch("outs-after");
    // 24 plate appearances of three pitches (0-0, 1-0, 1-1), each ending in
    // an out: outs 0, 1, 2 by turns before it.
    let log = |after: bool, per_team: bool| {
        let mut text = format!("{HEADER},pa,pitch_no\n");
        for pa in 1..=24u32 {
            let outs = (pa - 1) % 3;
            for (k, (b, s)) in [(0, 0), (1, 0), (1, 1)].into_iter().enumerate() {
                let o = if after && k == 2 { outs + 1 } else { outs };
                text += &format!("G1,2025-04-01,Wren Alder,R,Moss Quill,L,1,{o},{b},{s},0,0,0,fastball,{pa},{}\n", k + 1);
                if per_team {
                    // The other club's plate appearance of the same number.
                    text += &format!("G1,2025-04-01,Juno Vale,R,Birk Pell,L,1,{},{b},{s},0,0,0,slider,{pa},{}\n", 2 - outs, k + 1);
                }
            }
        }
        text
    };
    assert!(load(&write(&dir, "before.csv", &log(false, false))).log.outs_after_the_pitch().is_none());
    assert!(load(&write(&dir, "per-team.csv", &log(false, true))).log.outs_after_the_pitch().is_none());
    let err = data_error(&write(&dir, "after.csv", &log(true, false)), &defaults());
    assert!(err.contains("the outs change within 16 of 24 plate appearances") && err.ends_with("give the outs before it"), "{err}");
    std::fs::remove_dir_all(&dir).ok();
}

/// Labels that do not name a pitch the pitcher chose are set aside, not
/// rejected: listed with line and reason, counted by label, kept out of the
/// log, and no failure under --strict. A label in [pitch_groups] is a
/// pitch; `[set_aside] pitch_labels` replaces the list (`[]` sets none
/// aside); a row that also breaks the contract is rejected.
#[test]
fn labels_that_are_not_his_choice_are_set_aside_with_their_lines() {
    let dir = scratch("set-aside");
    let row = |label: &str| format!("g1,2025-04-01,P,R,B,L,1,0,0,0,0,0,0,{label}");
    let mut text = vec![HEADER.to_string()];
    for label in ["fastball", "PO", "slider", "Intentional Ball", "un", "?", "fastball", "pitch-out", "EP"] {
        text.push(row(label));
    }
    text.push("g1,2025-04-01,P,R,B,L,0,0,0,0,0,0,0,PO".into()); // inning 0: rejected
    let p = write(&dir, "labels.csv", &(text.join("\n") + "\n"));

    let ing = load(&p);
    let lines: Vec<u64> = ing.set_aside.iter().map(|r| r.line).collect();
    assert_eq!(lines, vec![3, 5, 6, 7, 9], "header is line 1");
    assert!(ing.set_aside.iter().all(|r| r.column == "pitch_type"));
    assert_eq!(ing.set_aside[1].value, "Intentional Ball");
    assert!(ing.set_aside[1].reason.contains("\"Intentional Ball\" is an intentional ball, not the pitcher's choice"), "{}", ing.set_aside[1].reason);
    assert!(ing.set_aside[3].reason.contains("an unknown pitch type"), "{}", ing.set_aside[3].reason);
    assert_eq!(ing.rejected.len(), 1, "the broken row is rejected, not set aside");
    assert_eq!(ing.rejected[0].line, 11);
    assert_eq!(ing.source.rows_set_aside, 5);
    let by: Vec<(String, usize)> = ing.source.pitch_labels_set_aside.iter().map(|l| (l.label.clone(), l.pitches)).collect();
    assert_eq!(by.len(), 5, "{by:?}");
    assert_eq!(ing.log.pitch_types, vec!["EP", "fastball", "slider"]);
    assert_eq!(ing.log.len(), 4);

    // --strict fails on rejected rows only.
    let only_aside = write(&dir, "aside-only.csv", &(text[..10].join("\n") + "\n"));
    let strict = Settings::resolve(&ConfigFile::default(), &Overrides { strict: true, ..Overrides::default() }).unwrap();
    assert_eq!(ingest::load(&only_aside, &strict.input).unwrap().source.rows_set_aside, 5);

    // A grouped label is a pitch; a list of one's own replaces the defaults.
    let grouped = with_config("[pitch_groups]\npitchout = [\"PO\"]\n");
    let ing = ingest::load(&only_aside, &grouped.input).unwrap();
    assert!(ing.log.pitch_types.contains(&"pitchout".to_string()));
    assert_eq!(ing.source.rows_set_aside, 4);
    let none = with_config("[set_aside]\npitch_labels = []\n");
    assert_eq!(ingest::load(&only_aside, &none.input).unwrap().source.rows_set_aside, 0);
    let own = with_config("[set_aside]\npitch_labels = [\"EP\", \"pitchout\"]\n");
    let ing = ingest::load(&only_aside, &own.input).unwrap();
    let reasons: Vec<&str> = ing.set_aside.iter().map(|r| r.reason.as_ref()).collect();
    assert_eq!(reasons.len(), 2, "{reasons:?}");
    assert!(reasons[0].contains("\"pitch-out\" is a pitchout"), "{reasons:?}");
    assert!(reasons[1].contains("\"EP\" is a label listed in [set_aside] pitch_labels, not the pitcher's choice"), "{reasons:?}");

    // Nothing left but set-aside rows: a data error naming the fix.
    let all = write(&dir, "all-aside.csv", &format!("{HEADER}\n{}\n{}\n", row("PO"), row("IN")));
    let msg = data_error(&all, &defaults());
    assert!(msg.contains("set aside") && msg.contains("[set_aside] pitch_labels"), "{msg}");
}

/// A staff of four starters over two seasons, `change` (a
/// `[[pitcher.change]]` body for 2026) given to the first `changed` of them.
fn staff_with_change(change: &str, changed: usize) -> String {
    let mut s = String::from(
        "[club]\nname = \"Rename Flats\"\n[[season]]\nyear = 2025\ngames = 40\nstart = \"2025-04-03\"\n[[season]]\nyear = 2026\ngames = 40\nstart = \"2026-04-02\"\n[batters]\npool = 30\nleft = 0.4\nright = 0.5\nswitch = 0.1\n",
    );
    for (i, name) in ["Arlo Fenwick", "Bastian Quill", "Corin Maddox", "Dorian Vell"].iter().enumerate() {
        s += &format!("[[pitcher]]\nname = \"{name}\"\nthrows = \"R\"\nrole = \"starter\"\nmix = {{ fastball = 50, slider = 30, changeup = 20 }}\n");
        if i < changed {
            s += &format!("  [[pitcher.change]]\n  season = 2026\n  {change}\n");
        }
    }
    s + "[[pitcher]]\nname = \"Emery Stroud\"\nthrows = \"L\"\nrole = \"reliever\"\nmix = { fastball = 60, slider = 40 }\n"
}

/// A label the log renames for several pitchers at once (the tracking
/// system's, not their arsenals) is named in a note with the fix; one or two
/// pitchers' change, or a pitch several of them add, is not. The pattern
/// (worked by hand in `domain::labels`): the new label takes the old one's
/// share nearly whole.
#[test]
fn a_label_renamed_for_several_pitchers_at_once_is_named_with_the_fix() {
    let note_of = |change: &str, changed: usize, seed: u64| -> Vec<String> {
        let sim = simulate(&Scenario::from_toml_str(&staff_with_change(change, changed)).unwrap(), seed);
        let dir = scratch(&format!("rename-{changed}-{seed}"));
        let p = dir.join("log.csv");
        write_frame(&mut sim_frame(&sim).unwrap(), &p).unwrap();
        load(&p).log.renamed_labels()
    };
    let renamed = note_of("relabel = { slider = \"sweeper\" }", 3, 1);
    assert_eq!(renamed.len(), 1, "{renamed:?}");
    assert!(renamed[0].starts_with("in 2026 the log writes \"sweeper\", a label they did not use the season before, for 3 of the 5 pitchers who threw \"slider\" then"), "{}", renamed[0]);
    assert!(renamed[0].contains("in place of his \"slider\"") && renamed[0].contains("slider = [\"slider\", \"sweeper\"]"), "{}", renamed[0]);
    let split = note_of("split = { slider = { sweeper = 0.5 } }", 4, 2);
    assert_eq!(split.len(), 1, "half of each slider written as sweeper: {split:?}");
    assert!(split[0].contains("for 4 of the 5 pitchers"), "{}", split[0]);
    assert!(note_of("relabel = { slider = \"sweeper\" }", 2, 3).is_empty(), "two pitchers are left to their own cautions");
    assert!(note_of("add = { cutter = 0.20 }", 4, 4).is_empty(), "an added pitch takes its share from all of his pitches");
    // A tracking system that writes every label anew (codes for names):
    // one note, each new label with the old one of its own share, not
    // with the fastball, the largest that went out.
    let codes = note_of("relabel = { fastball = \"FB\", slider = \"SL\", changeup = \"CH\" }", 4, 5);
    assert_eq!(codes.len(), 1, "{codes:?}");
    assert!(codes[0].starts_with("in 2026 the log writes 3 labels it did not use the season before: \"CH\" in place of \"changeup\" for 4 of the 4 pitchers who threw it, \"FB\" in place of \"fastball\" for 4 of 5, \"SL\" in place of \"slider\" for 4 of 5;"), "{}", codes[0]);
    assert!(codes[0].contains("(changeup = [\"changeup\", \"CH\"], fastball = [\"fastball\", \"FB\"], slider = [\"slider\", \"SL\"])"), "{}", codes[0]);
}

/// A game logged twice, which the row rule cannot see: under a second id on
/// the same date (two clubs' exports merged), or its rows again under its
/// own id in a log without pa and pitch_no (a log appended to itself). The
/// copies later in the file are rejected, every outing of them, the
/// reliever's short ones too, and what is kept is the log without them; a
/// doubleheader (two real games of one pitcher on one date) is kept whole.
#[test]
fn a_game_logged_twice_counts_once() {
    let dir = scratch("copied-games");
    let demo = std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/plain-staff/demo-log.csv")).unwrap();
    let lines: Vec<&str> = demo.lines().collect();
    let (header, body) = (lines[0], &lines[1..2001]);
    let game_of = |l: &str| l.split(',').next().unwrap().to_string();
    let plain = write(&dir, "plain.csv", &format!("{header}\n{}\n", body.join("\n")));
    let original = load(&plain);

    // Two games again under ids of their own.
    let copied: Vec<String> = body
        .iter()
        .filter(|l| ["G2025-003", "G2025-004"].contains(&game_of(l).as_str()))
        .map(|l| l.replacen("G2025-00", "AWAY-00", 1))
        .collect();
    assert!(copied.len() > 100, "{} rows copied", copied.len());
    let text = format!("{header}\n{}\n{}\n", body.join("\n"), copied.join("\n"));
    let ing = load(&write(&dir, "merged.csv", &text));
    assert_same_rows(&ing.log, &original.log, true);
    assert_eq!(ing.rejected.len(), copied.len(), "every copied row, short outings too");
    let first_copy = body.len() as u64 + 2;
    assert!(ing.rejected.iter().enumerate().all(|(k, r)| r.line == first_copy + k as u64), "the later rows, in file order");
    assert!(ing.rejected.iter().all(|r| r.reason.contains("one game logged twice under two ids") && r.value.contains("first copy: game G2025-00")), "{:?}", ing.rejected[0]);

    // A doubleheader: a later game of the same pitchers moved to the date
    // of an earlier one is two real games, kept whole.
    let date_of = |g: &str| body.iter().find(|l| game_of(l) == g).unwrap().split(',').nth(1).unwrap().to_string();
    let (d3, d4) = (date_of("G2025-003"), date_of("G2025-004"));
    let moved: Vec<String> = body.iter().map(|l| if game_of(l) == "G2025-008" { l.replacen(&date_of("G2025-008"), &d3, 1) } else { l.to_string() }).collect();
    assert_ne!(d3, d4);
    let ing = load(&write(&dir, "doubleheader.csv", &format!("{header}\n{}\n", moved.join("\n"))));
    assert!(ing.rejected.is_empty(), "{:?}", ing.rejected.first());
    assert_eq!(ing.log.len(), body.len());

    // The rows appended to themselves, without pa and pitch_no.
    let strip = |l: &str| {
        let f: Vec<&str> = l.split(',').collect();
        f.iter().enumerate().filter(|(i, _)| *i != 8 && *i != 9).map(|(_, v)| *v).collect::<Vec<_>>().join(",")
    };
    assert!(header.split(',').nth(8) == Some("pa") && header.split(',').nth(9) == Some("pitch_no"));
    let no_pa: Vec<String> = body.iter().map(|l| strip(l)).collect();
    let once = load(&write(&dir, "once.csv", &format!("{}\n{}\n", strip(header), no_pa.join("\n"))));
    let ing = load(&write(&dir, "appended.csv", &format!("{}\n{}\n{}\n", strip(header), no_pa.join("\n"), no_pa.join("\n"))));
    assert_same_rows(&ing.log, &once.log, true);
    assert_eq!(ing.rejected.len(), body.len());
    assert!(ing.rejected.iter().all(|r| r.line > body.len() as u64 + 1 && r.reason.contains("the game's rows are logged twice")));
    std::fs::remove_dir_all(&dir).ok();
}

/// A log without a season column whose games run across 1 January (a
/// winter league) is told that the calendar year cuts its season in two;
/// a summer league's log, whose seasons are apart, is not.
#[test]
fn a_season_across_the_new_year_is_noted() {
    let dir = scratch("winter");
    let winter = pitches(&[("W1", "2025-12-20", "Wren Alder", "fastball"), ("W2", "2026-01-10", "Wren Alder", "slider")]);
    let note = load(&write(&dir, "winter.csv", &winter)).log.season_across_new_year().expect("a note");
    assert!(note.contains("(2025-12-20 to 2026-01-10)") && note.contains("add a season column"), "{note}");
    let summer = pitches(&[("S1", "2025-09-28", "Wren Alder", "fastball"), ("S2", "2026-03-27", "Wren Alder", "slider")]);
    assert_eq!(load(&write(&dir, "summer.csv", &summer)).log.season_across_new_year(), None);
    std::fs::remove_dir_all(&dir).ok();
}

/// `pa` numbered per team (both clubs' pitchers in one game) or per
/// inning repeats its numbers within a game: ordered by it, the halves and
/// innings would interleave (and per inning, a leadoff batter's first pitch
/// in two innings read as one pitch logged twice). Such a game keeps its
/// file order, with a note, and reads exactly as the same game numbered
/// through: the same rows in the same order, the same situations.
#[test]
fn pa_numbered_per_team_or_per_inning_keeps_the_game_in_order() {
    let dir = scratch("pa-numbering");
    let demo = std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/plain-staff/demo-log.csv")).unwrap();
    let lines: Vec<&str> = demo.lines().collect();
    let header: Vec<&str> = lines[0].split(',').collect();
    let col = |n: &str| header.iter().position(|h| *h == n).unwrap();
    let (gi, di, ti, pi, ii, pti) = (col("game"), col("date"), col("team"), col("pa"), col("inning"), col("pitcher"));
    let rows: Vec<Vec<String>> = lines[1..].iter().map(|l| l.split(',').map(str::to_string).collect()).collect();
    // Two games on other dates become the other club's half of two games:
    // the same id and date, another club and other pitchers, after them in
    // the file.
    let mut games: Vec<String> = rows.iter().map(|r| r[gi].clone()).collect();
    games.dedup();
    let (home, away) = (&games[..2], &games[2..4]);
    let mut ours: Vec<Vec<String>> = rows.iter().filter(|r| home.contains(&r[gi])).cloned().collect();
    for (h, a) in home.iter().zip(away) {
        let date = rows.iter().find(|r| &r[gi] == h).unwrap()[di].clone();
        for r in rows.iter().filter(|r| &r[gi] == a) {
            let mut r = r.clone();
            r[gi] = h.clone();
            r[di] = date.clone();
            r[ti] = "Quarry Town Owls".into();
            r[pti] = format!("Owl {}", r[pti]);
            ours.push(r);
        }
    }
    // pa through the game (the other club's after), per team, per inning.
    let renumber = |how: &dyn Fn(&Vec<String>) -> (String, String)| -> String {
        let mut next: std::collections::HashMap<(String, String), u32> = Default::default();
        let mut seen: std::collections::HashMap<(String, String, String), u32> = Default::default();
        let mut text = lines[0].to_string() + "\n";
        for r in &ours {
            let (scope, tag) = how(r);
            let n = *seen.entry((r[gi].clone(), tag.clone(), r[pi].clone())).or_insert_with(|| {
                let c = next.entry((r[gi].clone(), scope)).or_insert(0);
                *c += 1;
                *c
            });
            let mut r = r.clone();
            r[pi] = n.to_string();
            text += &(r.join(",") + "\n");
        }
        text
    };
    let through = load(&write(&dir, "through.csv", &renumber(&|r| (String::new(), r[ti].clone()))));
    let per_team = load(&write(&dir, "per-team.csv", &renumber(&|r| (r[ti].clone(), r[ti].clone()))));
    let per_inning = load(&write(&dir, "per-inning.csv", &renumber(&|r| (format!("{} {}", r[ti], r[ii]), r[ti].clone()))));
    // Per pitcher (each man's batters faced from 1), with the clubs left
    // blank: only two pitchers facing two batters under one number show it.
    let blank_clubs = |text: String| -> String {
        text.lines().enumerate().map(|(k, l)| {
            let mut c: Vec<&str> = l.split(',').collect();
            if k > 0 {
                c[ti] = "";
            }
            c.join(",") + "\n"
        }).collect()
    };
    let per_pitcher = load(&write(&dir, "per-pitcher.csv", &blank_clubs(renumber(&|r| (r[pti].clone(), r[ti].clone())))));
    assert!(through.log.pa_numbering.is_none());
    let base = tellscope::situations::build(&through.log);
    for (what, ing) in [("per team", &per_team), ("per inning", &per_inning), ("per pitcher", &per_pitcher)] {
        let note = ing.log.pa_numbering.as_deref().unwrap_or_else(|| panic!("{what}: no note"));
        assert!(note.starts_with("in 2 of the 2 games, `pa` numbers hold pitches of two innings, two clubs or two pitchers to two batters"), "{what}: {note}");
        assert!(ing.rejected.is_empty(), "{what}: {:?}", ing.rejected.first());
        assert_eq!(ing.log.source_line, through.log.source_line, "{what}: the same rows in the same order");
        let sit = tellscope::situations::build(&ing.log);
        for (a, b) in base.factors.iter().zip(&sit.factors) {
            assert!(a.codes == b.codes, "{what}: factor {} differs", a.factor);
        }
    }
    std::fs::remove_dir_all(&dir).ok();
}

/// The plain-staff demo's rows with `score_diff` and `team` replaced by
/// the inning's half and each club's runs and name (`half_of` gives the
/// half written for the pitcher's club at home, then away), as many
/// exports write them; the club is at home in every other game.
fn halves_log(n: usize, half_of: (&str, &str)) -> String {
    let (head, body) = plain_staff_lines(n);
    let (score, team, game) = (column(&head, "score_diff"), column(&head, "team"), column(&head, "game"));
    let keep = |c: &[String]| -> Vec<String> { c.iter().enumerate().filter(|(i, _)| *i != score && *i != team).map(|(_, v)| v.clone()).collect() };
    let head_cols: Vec<String> = head.split(',').map(str::to_string).collect();
    let mut lines = vec![format!("{},half,home_team,away_team,home_score,away_score", keep(&head_cols).join(","))];
    let mut games: Vec<String> = Vec::new();
    for l in &body {
        let c: Vec<String> = l.split(',').map(str::to_string).collect();
        if !games.contains(&c[game]) {
            games.push(c[game].clone());
        }
        let at_home = games.len() % 2 == 1;
        let d: i64 = c[score].parse().unwrap();
        // Runs of the pitcher's club and of the other, both at least 0.
        let theirs = 3 + (-d).max(0);
        let ours = theirs + d;
        let row = if at_home {
            format!("{},{},{},Visitors,{ours},{theirs}", keep(&c).join(","), half_of.0, c[team])
        } else {
            format!("{},{},Hosts,{},{theirs},{ours}", keep(&c).join(","), half_of.1, c[team])
        };
        lines.push(row);
    }
    lines.join("\n") + "\n"
}

/// `score_diff` and `team` worked out from the inning's half and each
/// club's runs and name (the home club pitches in the top of an inning):
/// the same rows as the log that has them, with a note for each. Halves
/// written top/bottom or T/B read alike; a half column of other values
/// works nothing out and says why; a row whose half cannot be read keeps
/// its pitch with no score or club; a file with `score_diff` reads its own.
#[test]
fn score_and_club_worked_out_from_the_half_and_each_clubs_runs() {
    let (dir, head, body, plain) = plain_case("halves");
    assert!(plain.source.worked_out.is_empty());
    for (name, halves) in [("words.csv", ("top", "bottom")), ("letters.csv", ("T", "B"))] {
        let worked = load(&write(&dir, name, &halves_log(3000, halves)));
        assert!(worked.rejected.is_empty(), "{:?}", &worked.rejected[..worked.rejected.len().min(2)]);
        assert_same_rows(&plain.log, &worked.log, true);
        let cols: Vec<&str> = worked.source.worked_out.iter().map(|w| w.column.as_str()).collect();
        assert_eq!(cols, ["score_diff", "team"]);
        assert!(worked.source.worked_out.iter().all(|w| w.rows_without == 0));
        assert!(worked.source.optional_present.contains(&"score_diff".to_string()));
        let notes = tellscope::ingest::log_notes(&worked.log, &worked.source);
        assert!(notes.iter().any(|n| n.starts_with("`score_diff` is not in the file and was worked out from `half`, `home_score` and `away_score`")), "{notes:?}");
    }
    // Mapped through [columns] like any other column.
    let mapped_text = halves_log(3000, ("top", "bottom")).replacen(",half,", ",InningHalf,", 1);
    let mapped = tellscope::ingest::load(&write(&dir, "mapped.csv", &mapped_text), &with_config("[columns]\nhalf = \"InningHalf\"\n").input).unwrap();
    assert_same_rows(&plain.log, &mapped.log, true);
    // The half written into the inning ("Top 3", "3B"), with no half
    // column: the inning read as its number, the half worked out from it.
    for (top, bottom) in [("Top ", "Bot "), ("", "")] {
        let text = halves_log(3000, ("top", "bottom"));
        let head_line = text.lines().next().unwrap();
        let (inning, half) = (column(head_line, "inning"), column(head_line, "half"));
        let rows: Vec<String> = text
            .lines()
            .map(|l| {
                let mut c: Vec<String> = l.split(',').map(str::to_string).collect();
                if c[half] != "half" {
                    c[inning] = match (c[half].as_str(), top.is_empty()) {
                        ("top", false) => format!("{top}{}", c[inning]),
                        ("top", true) => format!("{}T", c[inning]),
                        (_, false) => format!("{bottom}{}", c[inning]),
                        (_, true) => format!("{}B", c[inning]),
                    };
                }
                c.remove(half);
                c.join(",")
            })
            .collect();
        let split = load(&write(&dir, "split.csv", &(rows.join("\n") + "\n")));
        assert!(split.rejected.is_empty(), "{:?}", &split.rejected[..split.rejected.len().min(2)]);
        assert_same_rows(&plain.log, &split.log, true);
        assert_eq!(split.source.worked_out.len(), 2);
        assert!(split.source.derive_notes[0].starts_with("`inning` writes each inning with its half"), "{:?}", split.source.derive_notes);
    }
    // Each club's runs and name but no half: nothing worked out, and the
    // note names the column to add.
    let text = halves_log(3000, ("top", "bottom"));
    let head_line = text.lines().next().unwrap();
    let half = column(head_line, "half");
    let no_half: Vec<String> = text.lines().map(|l| l.split(',').enumerate().filter(|(i, _)| *i != half).map(|(_, v)| v).collect::<Vec<_>>().join(",")).collect();
    let without = load(&write(&dir, "no-half.csv", &(no_half.join("\n") + "\n")));
    assert!(without.log.score_diff.is_none() && without.source.worked_out.is_empty());
    assert!(without.source.derive_notes.iter().any(|n| n.contains("but not the inning's half: add a `half` column")), "{:?}", without.source.derive_notes);
    // Halves numbered 1 and 2: nothing worked out, and the note says why.
    let numbered = load(&write(&dir, "numbered.csv", &halves_log(3000, ("1", "2"))));
    assert!(numbered.log.score_diff.is_none() && numbered.log.team.is_none());
    assert!(numbered.source.worked_out.is_empty());
    let why = &numbered.source.derive_notes[0];
    assert!(why.contains("not top or bottom") && why.contains("\"1\""), "{why}");
    // A few unreadable halves: those rows keep their pitch without a score
    // or club, counted in the note.
    let text = halves_log(3000, ("top", "bottom"));
    let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
    for i in [5, 77, 901] {
        lines[i] = lines[i].replacen(",top,", ",middle,", 1).replacen(",bottom,", ",middle,", 1);
    }
    let some = load(&write(&dir, "some.csv", &(lines.join("\n") + "\n")));
    assert!(some.rejected.is_empty());
    assert_eq!(some.log.len(), plain.log.len());
    assert!(some.source.worked_out.iter().all(|w| w.rows_without == 3), "{:?}", some.source.worked_out);
    let missing = some.log.score_diff.as_ref().unwrap().iter().filter(|s| s.is_none()).count();
    assert_eq!(missing, 3);
    // The half given the other way round (the pitching club's half): the
    // worked-out score rises under the pitcher, so it is set aside, and the
    // club worked out from the same half with it.
    let flipped = load(&write(&dir, "flipped.csv", &halves_log(3000, ("bottom", "top"))));
    assert!(flipped.log.score_diff.is_none() && flipped.log.team.is_none());
    let aside = &flipped.source.optional_set_aside;
    assert_eq!(aside.len(), 1, "{aside:?}");
    assert_eq!(aside[0].columns, ["score_diff", "team"]);
    assert!(aside[0].reason.contains("give the half the batting club is in"), "{}", aside[0].reason);
    assert!(flipped.source.worked_out.is_empty());
    // A file with `score_diff` and the sources reads its own column.
    let both_head = format!("{head},half,home_score,away_score");
    let both: Vec<String> = body.iter().map(|l| format!("{l},bottom,0,9")).collect();
    let own = load(&write(&dir, "both.csv", &format!("{both_head}\n{}\n", both.join("\n"))));
    assert!(own.source.worked_out.is_empty());
    assert_eq!(own.log.score_diff, plain.log.score_diff);
    std::fs::remove_dir_all(&dir).ok();
}

/// The day after `YYYY-MM-DD` (leap years by the Gregorian rule).
fn next_day(date: &str) -> String {
    let (y, m, d): (i32, usize, u32) = (date[..4].parse().unwrap(), date[5..7].parse().unwrap(), date[8..].parse().unwrap());
    let leap = (y % 4 == 0 && y % 100 != 0) || y % 400 == 0;
    let dim = [31, if leap { 29 } else { 28 }, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31][m - 1];
    let (y, m, d) = if d < dim { (y, m, d + 1) } else if m < 12 { (y, m + 1, 1) } else { (y + 1, 1, 1) };
    format!("{y:04}-{m:02}-{d:02}")
}

/// A `date` column of each pitch's date and time (a tracking stamp) is
/// read as its calendar date, with a note; a game stamped across midnight
/// (an evening game in UTC) keeps its first day rather than splitting in
/// two. The same rows as the log of plain dates, whether the stamps cross
/// midnight or not. A few stamps among plain dates are still rejected with
/// the fix.
#[test]
fn a_date_column_of_time_stamps_dates_each_game_by_its_first_pitch() {
    let (dir, head, body, plain) = plain_case("stamps");
    let (date, game) = (column(&head, "date"), column(&head, "game"));
    // Pitch j of a game stamped `start` minutes after midnight plus 20 s a pitch.
    let stamped = |start: u32, sep: char, zone: &str| -> String {
        let mut seen: Vec<(String, u32)> = Vec::new();
        rewritten(&head, &body, |_, c| {
            let j = match seen.iter_mut().find(|(g, _)| *g == c[game]) {
                Some((_, n)) => {
                    *n += 1;
                    *n
                }
                None => {
                    seen.push((c[game].clone(), 0));
                    0
                }
            };
            let secs = start * 60 + 20 * j;
            let (day, secs) = if secs >= 86_400 { (next_day(&c[date]), secs - 86_400) } else { (c[date].clone(), secs) };
            c[date] = format!("{day}{sep}{:02}:{:02}:{:02}{zone}", secs / 3600, secs / 60 % 60, secs % 60);
        })
    };
    // Begun at 23:10 UTC: every game's later pitches stamped the next day.
    let across = load(&write(&dir, "across.csv", &stamped(23 * 60 + 10, 'T', "Z")));
    assert!(across.rejected.is_empty(), "{:?}", &across.rejected[..across.rejected.len().min(2)]);
    assert_same_rows(&plain.log, &across.log, true);
    let note = across.source.derive_notes.iter().find(|n| n.starts_with("`date` holds each pitch's time of day")).expect("a note");
    assert!(note.contains("keep their game's date"), "{note}");
    assert!(across.log.games_on_two_dates.is_none());
    // Begun at 13:05 local time, with a space: the dates as written.
    let day = load(&write(&dir, "day.csv", &stamped(13 * 60 + 5, ' ', "")));
    assert_same_rows(&plain.log, &day.log, true);
    assert!(day.source.derive_notes.iter().any(|n| n.starts_with("`date` holds") && !n.contains("midnight")), "{:?}", day.source.derive_notes);
    // The same stamps stored as Parquet timestamps, without a zone and in
    // UTC: the same rows (before, each game across midnight split in two).
    // Stamps in a zone of their own are dated by its wall time: games begun
    // at 19:10 in Los Angeles or 20:30 at five hours behind UTC (the next
    // day in UTC, every pitch) keep the dates of the plain log. (A writer's
    // fixed offset "-05:00" is read by polars as the zone "Etc/GMT+5",
    // whose sign the time-zone database writes the other way.)
    use chrono::TimeZone as _;
    let la = |local: i64| {
        let naive = chrono::DateTime::from_timestamp(local, 0).unwrap().naive_utc();
        chrono_tz::America::Los_Angeles.from_local_datetime(&naive).single().unwrap().timestamp()
    };
    let cases: [(u32, Option<polars::prelude::TimeZone>, &dyn Fn(i64) -> i64); 4] = [
        (23 * 60 + 10, None, &|t| t),
        (23 * 60 + 10, Some(polars::prelude::TimeZone::UTC), &|t| t),
        // SAFETY (both): valid zone names, as polars' own checks would find.
        (19 * 60 + 10, Some(unsafe { polars::prelude::TimeZone::from_static("America/Los_Angeles") }), &la),
        (20 * 60 + 30, Some(unsafe { polars::prelude::TimeZone::from_static("Etc/GMT+5") }), &|t| t + 5 * 3600),
    ];
    for (start, zone, to_utc) in cases {
        use polars::prelude::*;
        let csv = write(&dir, "across-for-parquet.csv", &stamped(start, 'T', ""));
        let mut df = CsvReadOptions::default().with_infer_schema_length(Some(0)).try_into_reader_with_file_path(Some(csv.clone())).unwrap().finish().unwrap();
        // Each stamp as microseconds since 1970 (days from the crate's own
        // calendar, checked against Python's datetime in its tests).
        let micros: Vec<i64> = df
            .column("date")
            .unwrap()
            .str()
            .unwrap()
            .iter()
            .map(|v| {
                let v = v.unwrap();
                let (days, _) = ingest::parse::parse_date(&v[..10]).unwrap();
                let secs: i64 = v[11..13].parse::<i64>().unwrap() * 3600 + v[14..16].parse::<i64>().unwrap() * 60 + v[17..19].parse::<i64>().unwrap();
                to_utc(i64::from(days) * 86_400 + secs) * 1_000_000
            })
            .collect();
        let stamps = Series::new("date".into(), micros).cast(&DataType::Datetime(TimeUnit::Microseconds, zone.clone())).unwrap();
        df.with_column(stamps.into_column()).unwrap();
        let pq = dir.join("across.parquet");
        let mut file = std::fs::File::create(&pq).unwrap();
        ParquetWriter::new(&mut file).finish(&mut df).unwrap();
        let read = load(&pq);
        assert!(read.rejected.is_empty(), "{zone:?}: {:?}", &read.rejected[..read.rejected.len().min(2)]);
        assert_same_rows(&plain.log, &read.log, false);
        assert!(read.log.games_on_two_dates.is_none(), "{zone:?}");
    }
    // A few rows, every one stamped: read as their dates too.
    let few: Vec<String> = stamped(13 * 60 + 5, ' ', "").lines().take(6).map(str::to_string).collect();
    let short = load(&write(&dir, "short.csv", &(few.join("\n") + "\n")));
    assert!(short.rejected.is_empty() && short.log.len() == 5, "{:?}", short.rejected);
    assert_eq!(short.log.date, plain.log.date[..5]);
    // A stray stamp among plain dates is still a rejected row.
    let one = rewritten(&head, &body, |i, c| {
        if i == 10 {
            c[date] = format!("{}T19:05:00", c[date]);
        }
    });
    let stray = load(&write(&dir, "stray.csv", &one));
    let r = one_rejection(&stray);
    assert!(r.reason.contains("is a date and time"), "{}", r.reason);
    std::fs::remove_dir_all(&dir).ok();
}

/// Hands written out (`Right`, `LHP`, `lhb`) in most of a hand column's
/// rows are read as their letters, with a note: the same rows as the log of
/// letters. A switch hitter's `S` among them is still rejected with its
/// row, and a few spelled hands among letters keep their reason.
#[test]
fn hands_written_out_read_as_their_letters() {
    let (dir, head, body, plain) = plain_case("hands");
    let (throws, bats) = (column(&head, "throws"), column(&head, "bats"));
    let spell = |every: usize| -> String {
        rewritten(&head, &body, |i, c| {
            if i % every == 0 {
                c[throws] = if c[throws] == "R" { "Right".into() } else { "LHP".into() };
                c[bats] = if c[bats] == "R" { "rhb".into() } else { "Left".into() };
            }
        })
    };
    let spelled = load(&write(&dir, "spelled.csv", &spell(1)));
    assert!(spelled.rejected.is_empty(), "{:?}", &spelled.rejected[..spelled.rejected.len().min(2)]);
    assert_same_rows(&plain.log, &spelled.log, true);
    for c in ["throws", "bats"] {
        assert!(spelled.source.derive_notes.iter().any(|n| n.starts_with(&format!("`{c}` writes each hand out"))), "{:?}", spelled.source.derive_notes);
    }
    // A few spelled among letters: rejected with the letter named.
    let few = load(&write(&dir, "few.csv", &spell(500)));
    assert_eq!(few.rejected.len(), 6, "{:?}", few.rejected);
    assert!(few.rejected.iter().all(|r| r.reason.starts_with("is not L or R; write the hand as its letter")));
    // A switch hitter's mark stays a rejected row.
    let mut text = spell(1);
    text = text.replacen(",rhb,", ",S,", 1);
    let switch = load(&write(&dir, "switch.csv", &text));
    let r = one_rejection(&switch);
    assert!(r.reason.contains("switch hitter"), "{}", r.reason);
    std::fs::remove_dir_all(&dir).ok();
}

/// `balls` and `strikes` read from one `count` column written `B-S`, for a
/// file that has neither: the same rows as the log with both, and a note.
/// A count of four balls is a rejected row with the balls' reason; a count
/// written another way in most rows works nothing out, so the required
/// columns are missing and the error names them.
#[test]
fn balls_and_strikes_read_from_one_count_column() {
    let (dir, head, body, plain) = plain_case("count");
    let (balls, strikes) = (column(&head, "balls"), column(&head, "strikes"));
    let recount = |sep: &str, bad_row: Option<usize>| -> String {
        let keep = |c: &[String]| -> Vec<String> { c.iter().enumerate().filter(|(i, _)| *i != balls && *i != strikes).map(|(_, v)| v.clone()).collect() };
        let head_cols: Vec<String> = head.split(',').map(str::to_string).collect();
        let mut lines = vec![format!("{},count", keep(&head_cols).join(","))];
        for (i, l) in body.iter().enumerate() {
            let c: Vec<String> = l.split(',').map(str::to_string).collect();
            let count = if Some(i) == bad_row { "4-1".to_string() } else { format!("{}{sep}{}", c[balls], c[strikes]) };
            lines.push(format!("{},{count}", keep(&c).join(",")));
        }
        lines.join("\n") + "\n"
    };
    let counted = load(&write(&dir, "counted.csv", &recount("-", None)));
    assert!(counted.rejected.is_empty(), "{:?}", &counted.rejected[..counted.rejected.len().min(2)]);
    assert_same_rows(&plain.log, &counted.log, true);
    assert!(counted.source.derive_notes.iter().any(|n| n.starts_with("`balls` and `strikes` are not in the file and were read from `count`")), "{:?}", counted.source.derive_notes);
    let four = load(&write(&dir, "four.csv", &recount("-", Some(7))));
    let r = one_rejection(&four);
    assert_eq!((r.column.as_ref(), r.value.as_str()), ("balls", "4"));
    let other = write(&dir, "other.csv", &recount(" and ", None));
    let e = data_error(&other, &defaults());
    assert!(e.contains("required columns balls, strikes missing from the header (`balls` and `strikes` are not in the file, and `count` is not written balls-strikes"), "{e}");
    std::fs::remove_dir_all(&dir).ok();
}

/// A log keyed by pitcher id with the names in a column of their own
/// (`pitcher_name`, here under the file's own header through `[columns]`):
/// the same rows as the log keyed by name, each pitcher shown by his name
/// and his id kept beside it, and `--pitcher` takes either. Two ids under
/// one name stay two pitchers, each shown with his id; a pitcher written
/// under two names is shown by the one on most of his pitches.
#[test]
fn pitchers_keyed_by_id_are_shown_by_their_pitcher_name() {
    let (dir, head, body, plain) = plain_case("pitcher-names");
    let at = column(&head, "pitcher");
    let id_of = |name: &str| format!("6{:05}", plain.log.pitchers.iter().position(|p| p == name).unwrap() * 7 + 11);
    let keyed = |rename: &dyn Fn(usize, &str) -> String| -> String {
        let text = rewritten(&head, &body, |i, c| {
            let name = c[at].clone();
            c[at] = id_of(&name);
            c.push(rename(i, &name));
        });
        text.replacen(&head, &format!("{head},PitcherName"), 1)
    };
    let settings = with_config("[columns]\npitcher_name = \"PitcherName\"\n");
    let read = |name: &str, text: String| ingest::load(&write(&dir, name, &text), &settings.input).unwrap();

    let named = read("named.csv", keyed(&|_, n| n.to_string()));
    assert!(named.rejected.is_empty());
    assert_same_rows(&plain.log, &named.log, true);
    assert_eq!(named.log.pitchers, plain.log.pitchers);
    let ids: Vec<String> = plain.log.pitchers.iter().map(|p| id_of(p)).collect();
    assert_eq!(named.log.pitcher_ids, ids);
    let note = named.log.pitcher_naming.clone().expect("a note on the names");
    assert!(note.starts_with("Pitchers are told apart by `pitcher` and shown by `pitcher_name`"), "{note}");
    // `--pitcher` by name or by id picks the same pitcher.
    let pick = |who: &str| {
        let o = Overrides { pitchers: vec![who.to_string()], ..Overrides::default() };
        let s = Settings::resolve(&ConfigFile::default(), &o).unwrap();
        tellscope::audit::selected_pitchers(&named.log, &s).unwrap()
    };
    let first = plain.log.pitchers[0].clone();
    assert_eq!(pick(&first), vec![0]);
    assert_eq!(pick(&ids[0]), vec![0]);
    // Without the name column nothing changes: ids shown, none kept beside.
    let bare = load(&write(&dir, "bare.csv", &keyed(&|_, n| n.to_string()).replace(",PitcherName", ",other")));
    assert!(bare.log.pitcher_ids.is_empty() && bare.log.pitcher_naming.is_none());
    assert_eq!(bare.log.pitchers.iter().filter(|p| ids.contains(p)).count(), ids.len());

    // The second pitcher takes the first one's name; the first is written
    // under another name on his first row.
    let (a, b) = (plain.log.pitchers[0].clone(), plain.log.pitchers[1].clone());
    let first_row = body.iter().position(|l| l.split(',').nth(at) == Some(a.as_str())).unwrap();
    let shared = read(
        "shared.csv",
        keyed(&|i, n| if n == b { a.clone() } else if i == first_row { format!("{n} Jr") } else { n.to_string() }),
    );
    assert_eq!(shared.log.pitchers.len(), plain.log.pitchers.len(), "two ids under one name stay two pitchers");
    let both: Vec<String> = [&ids[0], &ids[1]].iter().map(|id| format!("{a} ({id})")).collect();
    for label in &both {
        assert!(shared.log.pitchers.contains(label), "{label} in {:?}", shared.log.pitchers);
    }
    let rows_of = |log: &PitchLog, label: &str| {
        let p = log.pitchers.iter().position(|q| q == label).unwrap() as u32;
        log.pitcher.iter().filter(|&&q| q == p).count()
    };
    let count_of = |name: &str| plain.log.pitcher.iter().filter(|&&q| plain.log.pitchers[q as usize] == name).count();
    assert_eq!(rows_of(&shared.log, &both[0]), count_of(&a));
    assert_eq!(rows_of(&shared.log, &both[1]), count_of(&b));
    let note = shared.log.pitcher_naming.clone().unwrap();
    assert!(note.contains(&format!("2 pitchers are shown with their id as each one's name is shared by another pitcher ({}; {})", both[0], both[1])), "{note}");
    assert!(note.contains(&format!("{} (also \"{a} Jr\" on 1 pitch)", both[0])), "{note}");

    // A name that would be refused as a name (a terminal escape) is not
    // shown: its pitcher is shown by his id, and the note counts it.
    let escaped = read("escaped.csv", keyed(&|_, n| if n == a { "Bad\u{1b}[31mName".to_string() } else { n.to_string() }));
    assert!(escaped.rejected.is_empty());
    assert!(escaped.log.pitchers.contains(&ids[0]), "{:?}", escaped.log.pitchers);
    assert!(escaped.log.pitchers.iter().all(|p| !p.contains('\u{1b}')));
    let note = escaped.log.pitcher_naming.clone().unwrap();
    assert!(note.contains("1 name in `pitcher_name` was not used, holding a control character or longer than 200 characters"), "{note}");
    assert!(note.contains(&format!("1 pitcher has no name in `pitcher_name` and is shown by id ({})", ids[0])), "{note}");
    std::fs::remove_dir_all(&dir).ok();
}
