//! `tellscope check` and `tellscope simulate` through the binary: what check
//! prints, the exit codes of CONTRACT §3 (0 done, 2 bad arguments or
//! config, 3 unusable data), one-line errors on stderr, and a simulated
//! log that is the same byte for byte for the same seed.

mod common;

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_tellscope"))
}

fn fixture(rel: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures").join(rel)
}

fn scratch(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("tellscope-cli-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

fn run(args: &[&str]) -> Output {
    bin().args(args).output().expect("the binary runs")
}

fn code(o: &Output) -> i32 {
    o.status.code().expect("exited, not killed")
}

fn stdout(o: &Output) -> String {
    String::from_utf8(o.stdout.clone()).unwrap()
}

fn stderr(o: &Output) -> String {
    String::from_utf8(o.stderr.clone()).unwrap()
}

fn check(file: &Path, extra: &[&str]) -> Output {
    let mut args = vec!["check", file.to_str().unwrap()];
    args.extend_from_slice(extra);
    run(&args)
}

/// The line of `out` that starts (after indentation) with `label`.
fn line_of<'a>(out: &'a str, label: &str) -> &'a str {
    out.lines()
        .find(|l| l.trim_start().starts_with(label))
        .unwrap_or_else(|| panic!("no line starting with {label:?} in:\n{out}"))
}

fn value_of(out: &str, label: &str) -> String {
    line_of(out, label).trim_start()[label.len()..].trim().to_string()
}

#[test]
fn check_of_a_good_file_exits_0_and_describes_it() {
    let o = check(&fixture("logs/good.csv"), &[]);
    let out = stdout(&o);
    assert_eq!(code(&o), 0, "stderr: {}", stderr(&o));
    assert_eq!(value_of(&out, "rows read"), "6");
    assert_eq!(value_of(&out, "rows rejected"), "0");
    assert_eq!(value_of(&out, "seasons"), "2025, 2026");
    assert_eq!(value_of(&out, "pitchers"), "2");
    assert!(line_of(&out, "Juno Vale").contains(" 2 pitches"), "{out}");
    assert!(line_of(&out, "Wren Alder").contains(" 4 pitches"), "{out}");
    assert_eq!(value_of(&out, "pitch types"), "5");
    for t in ["changeup", "curveball", "fastball", "sinker", "slider"] {
        line_of(&out, t);
    }
    // fastball: 2 of 6 pitches.
    assert!(line_of(&out, "fastball").contains("33.3%"), "{out}");
    let present = value_of(&out, "optional columns present:");
    assert_eq!(present, "pa, pitch_no, score_diff, result, speed_mph, team");
    assert!(o.stderr.is_empty(), "nothing on stderr: {}", stderr(&o));
    // Two seasons: nothing is older than the models learn from.
    assert!(!out.contains("history_seasons"), "{out}");
}

/// `check` of a log of more seasons than the audit's models learn from says
/// so: the good log's rows moved back two years make a log of 2023-2026.
#[test]
fn check_of_a_long_log_says_how_far_back_the_models_learn() {
    let dir = scratch("long-log");
    let text = std::fs::read_to_string(fixture("logs/good.csv")).unwrap();
    let mut lines = text.lines();
    let mut long = format!("{}\n", lines.next().unwrap());
    for l in lines.filter(|l| !l.is_empty()) {
        long.push_str(&format!("{l}\n{}\n", l.replace("2025-", "2023-").replace("2026-", "2024-").replace(",2025,", ",2023,").replace(",2026,", ",2024,")));
    }
    let path = dir.join("long.csv");
    std::fs::write(&path, long).unwrap();
    let o = check(&path, &[]);
    let out = stdout(&o);
    assert_eq!(code(&o), 0, "stderr: {}", stderr(&o));
    assert_eq!(value_of(&out, "seasons"), "2023, 2024, 2025, 2026");
    assert!(
        out.contains("note: 4 seasons: the audit's models learn from each pitcher's scored season and the season before it (older ones only while those hold fewer than 300 pitches; [audit] history_seasons)"),
        "{out}"
    );
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn check_groups_rejection_reasons_with_counts_and_lines() {
    let o = check(&fixture("logs/bad_rows.csv"), &[]);
    let out = stdout(&o);
    assert_eq!(code(&o), 0, "rejected rows alone do not fail check: {}", stderr(&o));
    assert_eq!(value_of(&out, "rows read"), "20");
    assert_eq!(value_of(&out, "rows rejected"), "16");
    // Two rows with balls = 4 (lines 6 and 20) share one reason line.
    let balls: Vec<&str> = out.lines().filter(|l| l.contains("balls")).collect();
    assert_eq!(balls.len(), 1, "one grouped line for balls:\n{out}");
    let l = balls[0];
    assert!(l.trim_start().starts_with('2'), "count 2 first: {l}");
    assert!(l.contains("6, 20"), "lists the lines: {l}");
    // Two bad dates, each with its own reason: no such day (line 11) and
    // slashes (line 12), which says how to write it.
    let dates: Vec<&str> = out.lines().filter(|l| l.contains("date")).collect();
    assert_eq!(dates.len(), 2, "{out}");
    assert!(dates.iter().any(|l| l.contains("1 × date: is not a calendar date written YYYY-MM-DD (line 11)")), "{out}");
    assert!(dates.iter().any(|l| l.contains("1 × date: is written with slashes") && l.contains("(line 12)")), "{out}");
    // A single breach is listed with count 1 and its line.
    let throws = line_of(&out, "1 ×");
    assert!(throws.contains("line"), "{throws}");
    for col in ["throws", "bats", "strikes", "outs", "inning", "pitch_type", "batter", "on_first", "result", "speed_mph", "pa:"] {
        assert!(out.lines().any(|l| l.contains('×') && l.contains(col)), "a reason line for {col}:\n{out}");
    }
}

#[test]
fn a_missing_column_exits_3_with_one_line_naming_file_and_column() {
    let o = check(&fixture("logs/missing_column.csv"), &[]);
    assert_eq!(code(&o), 3);
    let err = stderr(&o);
    assert_eq!(err.trim_end().lines().count(), 1, "one line: {err}");
    assert!(err.contains("missing_column.csv") && err.contains("pitch_type"), "{err}");
}

/// A header that differs from a column's name only in case, spaces or
/// punctuation is read as that column, with a note naming it. Two such
/// headers for one column are read as neither: the error names one, so
/// the user sees what to rename.
#[test]
fn a_near_miss_header_is_read_and_two_are_named() {
    let dir = scratch("near-miss");
    let good = std::fs::read_to_string(fixture("logs/good.csv")).unwrap();
    let (header, rest) = good.split_once('\n').unwrap();
    let p = dir.join("near.csv");
    std::fs::write(&p, format!("{}\n{rest}", header.replace("pitch_type", "Pitch Type").replacen("game", "GAME", 1))).unwrap();
    let o = check(&p, &[]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let out = stdout(&o);
    assert!(out.contains(r#"note: 2 headers read as the names they match but for case, spaces or punctuation: "GAME" as `game`; "Pitch Type" as `pitch_type`"#), "{out}");
    // Two near misses of one name: neither is read.
    let lines: Vec<String> = good.lines().skip(1).map(|l| format!("{l},x")).collect();
    let p2 = dir.join("two.csv");
    std::fs::write(&p2, format!("{},PITCH TYPE\n{}\n", header.replace("pitch_type", "Pitch_Type"), lines.join("\n"))).unwrap();
    let o = check(&p2, &[]);
    assert_eq!(code(&o), 3);
    let err = stderr(&o);
    assert_eq!(err.trim_end().lines().count(), 1, "one line: {err}");
    assert!(err.contains(r#"pitch_type (the header has "Pitch_Type")"#), "{err}");
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn unusable_files_exit_3() {
    let dir = scratch("unusable");
    let empty = dir.join("empty.csv");
    std::fs::write(&empty, "").unwrap();
    let header_only = dir.join("header_only.csv");
    std::fs::write(
        &header_only,
        "game,date,pitcher,throws,batter,bats,inning,outs,balls,strikes,on_first,on_second,on_third,pitch_type\n",
    )
    .unwrap();
    for p in [empty, header_only, dir.join("no_such_file.csv")] {
        let o = check(&p, &[]);
        assert_eq!(code(&o), 3, "{}: {}", p.display(), stderr(&o));
        let err = stderr(&o);
        assert_eq!(err.trim_end().lines().count(), 1, "one line: {err}");
        assert!(err.contains(p.file_name().unwrap().to_str().unwrap()), "names the file: {err}");
    }
    std::fs::remove_dir_all(&dir).ok();
}

/// A log written with semicolons or tabs (a spreadsheet's export in many
/// locales), or in another encoding than UTF-8, is named as such, not as a
/// file missing its columns or an unreadable one.
#[test]
fn another_separator_is_named() {
    let dir = scratch("separator");
    let good = std::fs::read_to_string(fixture("logs/good.csv")).unwrap();
    for (sep, name) in [(";", "semicolons"), ("\t", "tabs")] {
        let p = dir.join(format!("{name}.csv"));
        std::fs::write(&p, good.replace(',', sep)).unwrap();
        let o = check(&p, &[]);
        assert_eq!(code(&o), 3, "{}", stderr(&o));
        let err = stderr(&o);
        assert_eq!(err.trim_end().lines().count(), 1, "one line: {err}");
        assert!(err.contains(&format!("{name}.csv: the header is separated by {name}, not commas")), "{err}");
    }
    // Other encodings: UTF-16 with its byte-order mark (a spreadsheet's
    // "Unicode text"), and Latin-1 (an accent in a name is not UTF-8).
    let utf16: Vec<u8> = [0xFF, 0xFE].into_iter().chain(good.encode_utf16().flat_map(|u| u.to_le_bytes())).collect();
    let latin1: Vec<u8> = good.replacen("Wren Alder", "Wr\u{e9}n Alder", 1).chars().map(|c| c as u8).collect();
    for (name, bytes, says) in [("utf16", utf16, "the file is UTF-16 text"), ("latin1", latin1, "the file is not UTF-8 text")] {
        let p = dir.join(format!("{name}.csv"));
        std::fs::write(&p, bytes).unwrap();
        let o = check(&p, &[]);
        assert_eq!(code(&o), 3, "{}", stderr(&o));
        let err = stderr(&o);
        assert_eq!(err.trim_end().lines().count(), 1, "one line: {err}");
        assert!(err.contains(&format!("{name}.csv: {says}")) && err.contains("UTF-8"), "{err}");
    }
    std::fs::remove_dir_all(&dir).ok();
}

/// `--pitcher` naming no pitcher of the log is a usage error (exit 2); one
/// written in another case, spacing or word order is answered with the
/// log's spelling.
#[test]
fn an_unknown_pitcher_exits_2_naming_a_near_spelling() {
    let log = fixture("logs/good.csv");
    let out = scratch("unknown-pitcher");
    for (name, says) in [("wren  ALDER", r#"the log has "Wren Alder""#), ("Alder, Wren", r#"the log has "Wren Alder""#), ("Nobody Atall", "run `tellscope check` to list the pitchers")] {
        let o = run(&["audit", log.to_str().unwrap(), "--pitcher", name, "--out", out.to_str().unwrap()]);
        assert_eq!(code(&o), 2, "{}", stderr(&o));
        let err = stderr(&o);
        assert_eq!(err.trim_end().lines().count(), 1, "one line: {err}");
        assert!(err.contains(&format!("--pitcher \"{name}\" is not in the log; {says}")), "{err}");
    }
    std::fs::remove_dir_all(&out).ok();
}

#[test]
fn an_unknown_flag_exits_2() {
    let o = check(&fixture("logs/good.csv"), &["--no-such-flag"]);
    assert_eq!(code(&o), 2, "{}", stderr(&o));
    let o = run(&["no-such-command"]);
    assert_eq!(code(&o), 2, "{}", stderr(&o));
}

#[test]
fn a_bad_config_value_exits_2() {
    let dir = scratch("config");
    let cases = [
        ("fdr.toml", "[audit]\nfdr = 1.5\n"),
        ("key.toml", "[audit]\nno_such_key = 1\n"),
        ("column.toml", "[columns]\ncatcher = \"Catcher Name\"\n"),
        ("syntax.toml", "[columns\n"),
    ];
    for (name, text) in cases {
        let c = dir.join(name);
        std::fs::write(&c, text).unwrap();
        let o = check(&fixture("logs/good.csv"), &["--config", c.to_str().unwrap()]);
        assert_eq!(code(&o), 2, "{name}: {}", stderr(&o));
        let err = stderr(&o);
        assert_eq!(err.trim_end().lines().count(), 1, "{name}: one line: {err}");
    }
    let o = check(&fixture("logs/good.csv"), &["--config", dir.join("absent.toml").to_str().unwrap()]);
    assert_eq!(code(&o), 2, "a missing config file: {}", stderr(&o));
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn a_columns_config_reads_own_header_names() {
    let dir = scratch("mapped");
    let c = dir.join("columns.toml");
    std::fs::write(
        &c,
        "[columns]\ngame = \"Game ID\"\ndate = \"Game Date\"\npitcher = \"Pitcher Name\"\nthrows = \"P Hand\"\n\
         batter = \"Batter Name\"\nbats = \"B Side\"\ninning = \"Inn\"\nouts = \"Outs Before\"\nballs = \"B\"\n\
         strikes = \"S\"\non_first = \"R1\"\non_second = \"R2\"\non_third = \"R3\"\npitch_type = \"PT\"\n",
    )
    .unwrap();
    let o = check(&fixture("logs/own_headers.csv"), &["--config", c.to_str().unwrap()]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    assert_eq!(value_of(&stdout(&o), "rows read"), "6");
    assert_eq!(value_of(&stdout(&o), "rows rejected"), "0");
    std::fs::remove_dir_all(&dir).ok();
}

/// A file whose header has none of the contract's names (its own names,
/// no mapping given) gets the one-line missing-columns error, not a crash.
#[test]
fn own_header_names_without_a_mapping_name_the_missing_columns() {
    let o = check(&fixture("logs/own_headers.csv"), &[]);
    assert_eq!(code(&o), 3, "{}", stderr(&o));
    let err = stderr(&o);
    assert_eq!(err.trim_end().lines().count(), 1, "{err}");
    assert!(err.contains("own_headers.csv") && err.contains("pitch_type") && err.contains("[columns]"), "{err}");
}

#[test]
fn strict_exits_3_on_a_rejected_row() {
    let o = check(&fixture("logs/bad_rows.csv"), &["--strict"]);
    assert_eq!(code(&o), 3);
    let err = stderr(&o);
    assert_eq!(err.trim_end().lines().count(), 1, "{err}");
    assert!(err.contains("bad_rows.csv"), "{err}");
    // The good file passes under --strict.
    assert_eq!(code(&check(&fixture("logs/good.csv"), &["--strict"])), 0);
}

fn simulate_to(out: &Path, seed: &str) -> Output {
    let scenario = fixture("scenarios/tiny.toml");
    run(&["simulate", scenario.to_str().unwrap(), "--out", out.to_str().unwrap(), "--seed", seed])
}

#[test]
fn simulate_is_byte_identical_for_a_seed_and_check_agrees_on_rows() {
    let dir = scratch("simulate");
    let a = dir.join("a.csv");
    let b = dir.join("b.csv");
    let c = dir.join("c.csv");
    for (p, seed) in [(&a, "11"), (&b, "11"), (&c, "12")] {
        let o = simulate_to(p, seed);
        assert_eq!(code(&o), 0, "{}", stderr(&o));
    }
    let (ta, tb, tc) = (std::fs::read(&a).unwrap(), std::fs::read(&b).unwrap(), std::fs::read(&c).unwrap());
    assert!(ta == tb, "same seed, same bytes");
    assert!(ta != tc, "another seed, another log");

    let lines = String::from_utf8(ta).unwrap().lines().count() - 1;
    let o = check(&a, &[]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let out = stdout(&o);
    assert_eq!(value_of(&out, "rows read"), lines.to_string());
    assert_eq!(value_of(&out, "rows rejected"), "0");
    // The tiny scenario: four pitchers over two seasons.
    assert_eq!(value_of(&out, "pitchers"), "4");
    assert_eq!(value_of(&out, "seasons"), "2025, 2026");
    // simulate's own summary line counts the same pitches.
    let o = simulate_to(&a, "11");
    assert!(stdout(&o).contains(&format!("wrote {lines} pitches")), "{}", stdout(&o));
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn a_bad_scenario_exits_2() {
    let dir = scratch("bad-scenario");
    let s = dir.join("bad.toml");
    std::fs::write(&s, "[club]\nname = \"Nobody\"\n[[season]]\nyear = \"soon\"\n").unwrap();
    let o = run(&["simulate", s.to_str().unwrap(), "--out", dir.join("x.csv").to_str().unwrap()]);
    assert_eq!(code(&o), 2, "{}", stderr(&o));
    assert!(!dir.join("x.csv").exists());
    std::fs::remove_dir_all(&dir).ok();
}

/// Nothing lost: a log with no valid row fails with exit 3, and its
/// rejected rows are still kept, with a short page saying why.
#[test]
fn an_unusable_log_still_keeps_its_rejected_rows() {
    let dir = scratch("unusable-kept");
    let log = dir.join("allbad.csv");
    std::fs::write(
        &log,
        "game,date,pitcher,throws,batter,bats,inning,outs,balls,strikes,on_first,on_second,on_third,pitch_type\nG1,2025-04-03,A,X,B,L,1,0,0,0,0,0,0,fastball\nG1,2025-04-03,A,R,B,L,1,0,5,0,0,0,0,fastball\n",
    )
    .unwrap();
    let out = dir.join("report");
    let o = run(&["audit", log.to_str().unwrap(), "--out", out.to_str().unwrap()]);
    assert_eq!(code(&o), 3, "{}", stderr(&o));
    let rejected = std::fs::read_to_string(out.join("rejected.csv")).unwrap();
    assert_eq!(rejected.lines().count(), 3, "{rejected}");
    assert!(rejected.contains("2,throws,X,") && rejected.contains("3,balls,5,"));
    assert!(std::fs::read_to_string(out.join("index.html")).unwrap().contains("No audit was possible"));
    // A comparison of the same log keeps them too.
    let out = dir.join("compare");
    let o = run(&["compare", log.to_str().unwrap(), "--before", "2024", "--after", "2025", "--out", out.to_str().unwrap()]);
    assert_eq!(code(&o), 3, "{}", stderr(&o));
    let rejected = std::fs::read_to_string(out.join("rejected.csv")).unwrap();
    assert!(rejected.contains("2,throws,X,") && rejected.contains("3,balls,5,"), "{rejected}");
    assert!(std::fs::read_to_string(out.join("index.html")).unwrap().contains("No comparison was possible"));
}

/// Rows set aside as not the pitcher's choice go to set_aside.csv, in an
/// audit's report and a comparison's, and when nothing else is left the
/// run fails (exit 3) keeping them there; `check` lists them apart from
/// the rejected rows and exits 0.
#[test]
fn rows_set_aside_are_kept_in_set_aside_csv() {
    let dir = scratch("set-aside");
    let mut text = std::fs::read_to_string(fixture("logs/good.csv")).unwrap();
    let first = text.lines().nth(1).unwrap().to_string();
    let header = text.lines().next().unwrap().to_string();
    let pt = header.split(',').position(|h| h == "pitch_type").unwrap();
    let with = |label: &str| first.split(',').enumerate().map(|(i, v)| if i == pt { label } else { v }).collect::<Vec<_>>().join(",");
    text += &format!("{}\n{}\n", with("PO"), with("Intentional Ball"));
    let n_lines = text.lines().count() as u64;
    let log = dir.join("with-pitchouts.csv");
    std::fs::write(&log, &text).unwrap();

    let o = check(&log, &["--strict"]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    assert_eq!(value_of(&stdout(&o), "rows rejected"), "0");
    assert!(value_of(&stdout(&o), "rows set aside").starts_with("2 (not the pitcher's choice of pitch)"), "{}", stdout(&o));

    for (cmd, extra) in [("audit", vec!["--permutations", "0"]), ("compare", vec!["--before", "2025", "--after", "2026", "--permutations", "0"])] {
        let out = dir.join(cmd);
        let mut args = vec![cmd, log.to_str().unwrap(), "--out", out.to_str().unwrap()];
        args.extend(extra);
        let o = run(&args);
        let aside = std::fs::read_to_string(out.join("set_aside.csv")).unwrap_or_else(|e| panic!("{cmd}: {e}; {}", stderr(&o)));
        let lines: Vec<&str> = aside.lines().collect();
        assert_eq!(lines[0], "line,column,value,reason", "{cmd}");
        assert!(lines[1].starts_with(&format!("{},pitch_type,PO,", n_lines - 1)) && lines[2].starts_with(&format!("{n_lines},pitch_type,Intentional Ball,")), "{cmd}: {aside}");
    }

    let all = dir.join("all-aside.csv");
    std::fs::write(&all, format!("{header}\n{}\n{}\n", with("PO"), with("UN"))).unwrap();
    let out = dir.join("failed");
    let o = run(&["audit", all.to_str().unwrap(), "--out", out.to_str().unwrap()]);
    assert_eq!(code(&o), 3, "{}", stderr(&o));
    assert!(stderr(&o).contains("set aside"), "{}", stderr(&o));
    assert_eq!(std::fs::read_to_string(out.join("set_aside.csv")).unwrap().lines().count(), 3);
    std::fs::remove_dir_all(&dir).ok();
}

/// A setting's error names the config file and the key, and NaN is no
/// number a setting accepts (exit 2).
#[test]
fn a_bad_setting_names_the_config_file_and_key() {
    let dir = scratch("badcfg");
    let cfg = dir.join("club.toml");
    std::fs::write(&cfg, "[model]\nsplit_alpha = nan\n").unwrap();
    let log = fixture("logs/good.csv");
    let o = run(&["audit", log.to_str().unwrap(), "--config", cfg.to_str().unwrap(), "--out", dir.join("r").to_str().unwrap()]);
    assert_eq!(code(&o), 2, "{}", stderr(&o));
    let e = stderr(&o);
    assert!(e.contains("club.toml") && e.contains("[model] split_alpha"), "{e}");
}

/// A device or a folder given as the log is refused at once (exit 3)
/// instead of being read forever. A hang fails the test after a minute
/// (a bound on waiting, not a speed check).
#[test]
fn a_device_or_a_folder_is_refused_not_read_forever() {
    for path in ["/dev/zero", env!("CARGO_MANIFEST_DIR")] {
        if !Path::new(path).exists() {
            continue;
        }
        let mut child = bin().args(["check", path]).stdout(std::process::Stdio::null()).stderr(std::process::Stdio::piped()).spawn().unwrap();
        let mut status = None;
        for _ in 0..600 {
            if let Some(s) = child.try_wait().unwrap() {
                status = Some(s);
                break;
            }
            std::thread::sleep(std::time::Duration::from_millis(100));
        }
        let Some(status) = status else {
            child.kill().ok();
            panic!("check {path} did not end");
        };
        assert_eq!(status.code(), Some(3), "check {path}");
    }
}

/// A query's output piped in: `cat log.csv | tellscope audit - --out R`
/// writes the same report, file for file and byte for byte, as `tellscope
/// audit log.csv --out R2`, but for the input's name (`stdin`); without
/// `--out` it goes to `reports/stdin`; `check -` reads stdin too, a
/// Parquet file piped in is read as Parquet, and an error names `stdin`,
/// not a temporary file.
#[test]
fn a_log_piped_to_standard_input_gives_the_same_report() {
    use std::io::Write;
    use std::process::Stdio;
    let dir = scratch("stdin");
    let log = fixture("plain-staff/demo-log.csv");
    let text = std::fs::read(&log).unwrap();
    let piped = |args: &[&str], input: &[u8], cwd: &Path| -> Output {
        let mut child = bin().args(args).current_dir(cwd).stdin(Stdio::piped()).stdout(Stdio::piped()).stderr(Stdio::piped()).spawn().unwrap();
        child.stdin.take().unwrap().write_all(input).unwrap();
        child.wait_with_output().unwrap()
    };
    let a = piped(&["audit", "-", "--out", dir.join("piped").to_str().unwrap(), "--permutations", "19"], &text, &dir);
    assert_eq!(code(&a), 0, "{}", stderr(&a));
    let b = run(&["audit", log.to_str().unwrap(), "--out", dir.join("file").to_str().unwrap(), "--permutations", "19"]);
    assert_eq!(code(&b), 0);
    let shown = log.display().to_string();
    let (fa, fb) = (common::report_files(&dir.join("piped")), common::report_files(&dir.join("file")));
    assert_eq!(fa.len(), fb.len());
    for ((na, ba), (nb, bb)) in fa.iter().zip(&fb) {
        assert_eq!(na, nb);
        if na == "summary.json" {
            let b_named = String::from_utf8(bb.clone()).unwrap().replace(&shown, "stdin");
            assert_eq!(String::from_utf8(ba.clone()).unwrap(), b_named, "summary.json differs beyond the input's name");
        } else if na != "index.html" {
            assert!(ba == bb, "{na} differs");
        }
    }
    let s: serde_json::Value = serde_json::from_slice(&std::fs::read(dir.join("piped/summary.json")).unwrap()).unwrap();
    assert_eq!(s["input"]["path"], "stdin");
    // Without --out: reports/stdin under the working folder.
    let c = piped(&["audit", "-", "--permutations", "9"], &text, &dir);
    assert_eq!(code(&c), 0, "{}", stderr(&c));
    assert!(dir.join("reports/stdin/summary.json").exists());
    // check - and an error on stdin.
    let d = piped(&["check", "-"], &text, &dir);
    assert_eq!(code(&d), 0);
    assert!(stdout(&d).starts_with("stdin\n") && stdout(&d).contains("rows kept      39424"), "{}", stdout(&d));
    let e = piped(&["check", "-"], b"game,date\nG1,2025-04-03\n", &dir);
    assert_eq!(code(&e), 3);
    assert!(stderr(&e).starts_with("tellscope: stdin: required columns"), "{}", stderr(&e));
    // A Parquet file piped in is known by its signature and read as the
    // same file on disk is; a damaged one is an input error naming stdin.
    let pq = fixture("logs/typed.parquet");
    let f = piped(&["check", "-"], &std::fs::read(&pq).unwrap(), &dir);
    let g = run(&["check", pq.to_str().unwrap()]);
    assert_eq!((code(&f), code(&g)), (0, 0), "{}", stderr(&f));
    assert_eq!(stdout(&f), stdout(&g).replacen(&pq.display().to_string(), "stdin", 1));
    let h = piped(&["check", "-"], b"PAR1 and then nothing a Parquet file holds", &dir);
    assert_eq!(code(&h), 3);
    assert!(stderr(&h).starts_with("tellscope: stdin: could not be read as Parquet"), "{}", stderr(&h));
    std::fs::remove_dir_all(&dir).ok();
}

/// Each command's help names the defaults a run without flags uses: the
/// settings resolved from no config and no flag.
#[test]
fn help_names_the_defaults_a_run_uses() {
    use tellscope::settings::{ConfigFile, Overrides, Settings};
    let s = Settings::resolve(&ConfigFile::default(), &Overrides::default()).unwrap();
    let help = |cmd: &str| {
        let o = run(&[cmd, "--help"]);
        assert_eq!(code(&o), 0, "{cmd} --help");
        stdout(&o)
    };
    let audit = help("audit");
    assert!(audit.contains(&format!("(default {})", s.audit.permutations())), "{audit}");
    assert!(audit.contains(&format!("(default {})", s.audit.fdr())), "{audit}");
    let compare = help("compare");
    assert!(compare.contains(&format!("(default {},", s.compare.permutations())), "{compare}");
    assert!(compare.contains(&format!("(default {})", s.audit.fdr())), "{compare}");
    let demo = help("demo");
    let both = format!("default {} for the audit, {} label swaps", s.audit.permutations(), s.compare.permutations());
    assert!(demo.contains(&both), "{demo}");
}

/// `check` of a log with no valid row still lists why its rows were
/// rejected (grouped, with lines) before failing with exit 3, and a date
/// written with its time or with slashes says how to write it.
#[test]
fn check_of_an_unusable_log_lists_its_reasons() {
    let dir = scratch("check-unusable");
    let log = dir.join("dates.csv");
    std::fs::write(
        &log,
        "game,date,pitcher,throws,batter,bats,inning,outs,balls,strikes,on_first,on_second,on_third,pitch_type\n\
         G1,2025-04-03T19:05:00,A,R,B,L,1,0,0,0,0,0,0,fastball\n\
         G1,2025-04-03 19:05,A,R,B,L,1,0,1,0,0,0,0,fastball\n\
         G2,4/5/2025,A,R,B,L,1,0,0,0,0,0,0,slider\n",
    )
    .unwrap();
    let o = run(&["check", log.to_str().unwrap()]);
    assert_eq!(code(&o), 3, "{}", stderr(&o));
    let out = stdout(&o);
    assert!(out.contains("rows rejected  3"), "{out}");
    assert!(out.contains("2 × date: is a date and time, not a calendar date; write the game's date alone, YYYY-MM-DD (lines 2, 3)"), "{out}");
    assert!(out.contains("1 × date: is written with slashes; write dates as YYYY-MM-DD"), "{out}");
    assert!(stderr(&o).contains("no valid row among 3 read"), "{}", stderr(&o));
    std::fs::remove_dir_all(&dir).ok();
}

/// `tellscope demo` outside the project folder (an installed binary) runs
/// the built-in scenario: it writes the same demo log as the committed one
/// into `demo-data` there, says so, and writes both reports.
#[test]
fn the_demo_runs_outside_the_project_folder() {
    let dir = scratch("demo-elsewhere");
    let o = bin().args(["demo", "--permutations", "9"]).current_dir(&dir).output().unwrap();
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    assert!(stderr(&o).contains("the demo's built-in scenario is used"), "{}", stderr(&o));
    let committed = std::fs::read(Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data/demo-log.csv")).unwrap();
    assert_eq!(std::fs::read(dir.join("demo-data/demo-log.csv")).unwrap(), committed, "the same log as the committed one");
    for report in ["reports/demo/index.html", "reports/demo-compare/index.html"] {
        assert!(dir.join(report).exists(), "{report}");
    }
    std::fs::remove_dir_all(&dir).ok();
}
