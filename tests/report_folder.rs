//! A report folder is replaced whole: the new report is written beside it
//! and swapped in, so an old folder never keeps files of an earlier run
//! (a pitcher's charts after he left the log), a folder holding anything
//! else is never replaced, and a file in the way is a usage error.

mod common;

use std::path::{Path, PathBuf};
use tellscope::audit;
use tellscope::settings::{ConfigFile, Overrides, Settings};

fn settings() -> Settings {
    Settings::resolve(&ConfigFile::default(), &Overrides { permutations: Some(9), ..Overrides::default() }).unwrap()
}

/// A scratch folder of its own, emptied.
fn scratch(tag: &str) -> PathBuf {
    let root = std::env::temp_dir().join(format!("tellscope-{tag}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&root);
    std::fs::create_dir_all(&root).unwrap();
    root
}

/// The binary auditing the demo into `out` with `perms` permutations.
#[cfg(unix)]
fn spawn_audit(out: &Path, perms: &str) -> std::process::Child {
    use std::process::{Command, Stdio};
    let log = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data/demo-log.csv");
    Command::new(env!("CARGO_BIN_EXE_tellscope"))
        .args(["audit", log.to_str().unwrap(), "--out", out.to_str().unwrap(), "--permutations", perms])
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap()
}

/// Wait until `child` has begun writing its report beside `root/report`
/// (its staging folder exists) or has ended; its process id.
#[cfg(unix)]
fn wait_for_staging(child: &mut std::process::Child, root: &Path) -> i32 {
    let pid = child.id() as i32;
    let staging = root.join(format!(".report.tellscope-new-{pid}"));
    let start = std::time::Instant::now();
    while !staging.exists() && child.try_wait().unwrap().is_none() && start.elapsed().as_secs() < 120 {
        std::thread::sleep(std::time::Duration::from_millis(1));
    }
    pid
}

/// Dot-named entries beside the report folder (staging folders).
fn left_beside(root: &Path) -> Vec<String> {
    std::fs::read_dir(root).unwrap().map(|e| e.unwrap().file_name().to_string_lossy().to_string()).filter(|n| n.starts_with('.')).collect()
}

/// The plain staff audited and its report written to `<scratch>/report`:
/// (scratch folder, report folder, audit).
fn plain_staff_report(tag: &str) -> (PathBuf, PathBuf, audit::Audit) {
    let root = scratch(tag);
    let out = root.join("report");
    let log = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/plain-staff/demo-log.csv");
    let a = audit::run(&log, &settings(), false).unwrap();
    tellscope::report::write_audit_report(&out, &a).unwrap();
    (root, out, a)
}

#[test]
fn a_report_folder_is_replaced_whole() {
    let (root, out, a) = plain_staff_report("folder");
    // A chart of a pitcher no longer in the log, left by an earlier run.
    std::fs::write(out.join("charts/sheet-left-gone_pitcher.svg"), "<svg/>").unwrap();
    tellscope::report::write_audit_report(&out, &a).unwrap();
    assert!(!out.join("charts/sheet-left-gone_pitcher.svg").exists(), "an old chart survived the new report");
    assert!(out.join("index.html").exists() && out.join("summary.json").exists());
    // Nothing is left beside the folder.
    let beside: Vec<String> = std::fs::read_dir(&root).unwrap().map(|e| e.unwrap().file_name().to_string_lossy().to_string()).collect();
    assert_eq!(beside, vec!["report".to_string()], "{beside:?}");
    // A folder holding other files is not replaced.
    let mine = root.join("mine");
    std::fs::create_dir_all(&mine).unwrap();
    std::fs::write(mine.join("notes.txt"), "keep me").unwrap();
    let e = tellscope::report::write_audit_report(&mine, &a).unwrap_err();
    assert_eq!(e.exit_code(), 2, "{e}");
    assert!(e.to_string().contains("notes.txt"), "{e}");
    assert_eq!(std::fs::read_to_string(mine.join("notes.txt")).unwrap(), "keep me");
    // A file where the folder should go: a usage error.
    let file = root.join("a-file");
    std::fs::write(&file, "x").unwrap();
    assert_eq!(tellscope::report::write_audit_report(&file, &a).unwrap_err().exit_code(), 2);
    assert!(left_beside(&root).is_empty(), "staging left behind: {:?}", left_beside(&root));
    std::fs::remove_dir_all(&root).ok();
}

/// Ctrl-C while the report is being written: the process exits 130, the
/// old report is untouched byte for byte and no staging folder is left.
/// Signalled as soon as the staging folder appears (and, in case the run
/// wins the race, the finished report must then be whole instead).
#[cfg(unix)]
#[test]
fn an_interrupted_audit_leaves_the_old_report_and_no_staging() {
    let root = scratch("interrupt");
    let out = root.join("report");
    assert!(spawn_audit(&out, "9").wait().unwrap().success());
    let old = common::report_files(&out);
    let mut interrupted = 0;
    for _ in 0..3 {
        let mut child = spawn_audit(&out, "19");
        let pid = wait_for_staging(&mut child, &root);
        // SAFETY: sends a signal to our own child process.
        unsafe { libc::kill(pid, libc::SIGINT) };
        let status = child.wait().unwrap();
        assert!(left_beside(&root).is_empty(), "staging left behind: {:?}", left_beside(&root));
        if status.code() == Some(130) {
            interrupted += 1;
            assert!(common::report_files(&out) == old, "the old report changed");
        } else {
            assert!(status.success(), "{status:?}");
            // The run won the race: its report is whole.
            let s: serde_json::Value = serde_json::from_slice(&std::fs::read(out.join("summary.json")).unwrap()).unwrap();
            assert_eq!(s["settings"]["permutations"], 19);
            return;
        }
    }
    assert!(interrupted > 0);
    std::fs::remove_dir_all(&root).ok();
}

/// Killed outright (SIGKILL, nothing can be caught) while the report is
/// written: the old report is untouched byte for byte — the new one only
/// ever replaces it in one exchange of folders — and the next run removes
/// the dead run's staging folder.
#[cfg(unix)]
#[test]
fn a_killed_audit_never_leaves_a_mixed_report() {
    let root = scratch("kill");
    let out = root.join("report");
    assert!(spawn_audit(&out, "9").wait().unwrap().success());
    let old = common::report_files(&out);
    for delay_ms in [0u64, 5, 20] {
        let mut child = spawn_audit(&out, "19");
        let pid = wait_for_staging(&mut child, &root);
        std::thread::sleep(std::time::Duration::from_millis(delay_ms));
        // SAFETY: sends a signal to our own child process.
        unsafe { libc::kill(pid, libc::SIGKILL) };
        let status = child.wait().unwrap();
        if status.success() {
            // The run finished first: its report is whole.
            let page = String::from_utf8(std::fs::read(out.join("index.html")).unwrap()).unwrap();
            assert!(page.contains("</html>"));
            return;
        }
        assert!(common::report_files(&out) == old, "killed after {delay_ms} ms: the old report was changed");
    }
    // The next run cleans up what the killed ones left beside the folder.
    assert!(spawn_audit(&out, "9").wait().unwrap().success());
    assert!(left_beside(&root).is_empty(), "stale staging left: {:?}", left_beside(&root));
    std::fs::remove_dir_all(&root).ok();
}

/// Every file under `dir`, by its path within it.
fn files_under(dir: &Path) -> std::collections::BTreeMap<String, Vec<u8>> {
    let mut out = std::collections::BTreeMap::new();
    let mut stack = vec![dir.to_path_buf()];
    while let Some(d) = stack.pop() {
        for e in std::fs::read_dir(&d).unwrap() {
            let p = e.unwrap().path();
            if p.is_dir() {
                stack.push(p);
            } else {
                out.insert(p.strip_prefix(dir).unwrap().to_string_lossy().replace('\\', "/"), std::fs::read(&p).unwrap());
            }
        }
    }
    out
}

/// The exporters put the same files into memory as into the folder, each
/// once: the folder is nothing but the JSON, CSV and page exporters' output.
#[test]
fn the_folder_is_its_exporters_output() {
    use tellscope::report::{export::report_files, Csv, Html, Json};
    let (root, out, a) = plain_staff_report("exporters");
    let written = files_under(&out);
    let files = report_files(&a, &[&Html, &Json, &Csv]).unwrap();
    let in_memory: std::collections::BTreeMap<String, Vec<u8>> =
        files.iter().map(|f| (f.path.to_string_lossy().to_string(), f.bytes.clone())).collect();
    assert_eq!(in_memory.len(), files.len(), "a file was put twice");
    assert_eq!(written.keys().collect::<Vec<_>>(), in_memory.keys().collect::<Vec<_>>());
    for (name, bytes) in &written {
        assert!(in_memory[name] == *bytes, "{name} differs");
    }
    for name in ["index.html", "summary.json", "tells.csv", "counts.csv", "rejected.csv"] {
        assert!(written.contains_key(name), "{name} missing");
    }
    assert!(written.keys().any(|k| k.starts_with("charts/") && k.ends_with(".png")));
    // The JSON exporter's one output is summary.json, and --json prints it.
    let mut json = Vec::new();
    tellscope::report::Exporter::export(&Json, &a, &mut json).unwrap();
    assert_eq!(json.len(), 1);
    assert_eq!(json[0].bytes, written["summary.json"]);
    std::fs::remove_dir_all(&root).ok();
}

/// A large staff's page inlines the charts of at most
/// `INLINE_ALL_CHARTS_UP_TO` pitchers: those with a significant model or a
/// flagged tell, most flagged tells first, then most bits gained; a club's
/// staff (the demo) has every chart inline. The staff is the demo's
/// pitchers eight times over under new names.
#[test]
fn a_large_staffs_page_inlines_the_charts_of_a_few_pitchers() {
    use tellscope::report::{inlined_pitchers, INLINE_ALL_CHARTS_UP_TO};
    let log = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data/demo-log.csv");
    let mut a = audit::run(&log, &settings(), false).unwrap();
    assert_eq!(inlined_pitchers(&a.summary).len(), a.summary.pitchers.len());
    let club = a.summary.pitchers.clone();
    for copy in 2..=8 {
        for p in &club {
            let mut q = p.clone();
            q.pitcher = format!("{} {copy}", p.pitcher);
            a.summary.pitchers.push(q);
        }
    }
    let ok: Vec<_> = a.summary.pitchers.iter().filter(|p| p.is_ok()).collect();
    assert!(ok.len() > INLINE_ALL_CHARTS_UP_TO);
    let shown = inlined_pitchers(&a.summary);
    let eligible: Vec<_> = ok.iter().filter(|p| p.significant == Some(true) || !p.tells.is_empty()).collect();
    assert!(eligible.len() > INLINE_ALL_CHARTS_UP_TO, "{} pitchers with a significant model or a flagged tell", eligible.len());
    assert_eq!(shown.len(), INLINE_ALL_CHARTS_UP_TO);
    // Nobody left out has more flagged tells, or as many and more bits, than
    // anybody shown.
    // Flagged tells as the staff table counts them: his own, not the
    // narrower ones inside another.
    let key = |p: &tellscope::audit::summary::PitcherSummary| (p.tells.iter().filter(|t| t.within.is_none()).count(), p.bits_gained.unwrap_or(f64::NEG_INFINITY));
    let least_shown = eligible.iter().filter(|p| shown.contains(p.pitcher.as_str())).map(|p| key(p)).min_by(|a, b| a.0.cmp(&b.0).then(a.1.total_cmp(&b.1))).unwrap();
    for p in eligible.iter().filter(|p| !shown.contains(p.pitcher.as_str())) {
        let k = key(p);
        assert!(k.0 < least_shown.0 || (k.0 == least_shown.0 && k.1 <= least_shown.1), "{} left out: {k:?} against {least_shown:?}", p.pitcher);
    }
    // The page shows those charts only, and says so.
    let root = scratch("large-staff");
    let out = root.join("report");
    tellscope::report::write_audit_report(&out, &a).unwrap();
    let page = std::fs::read_to_string(out.join("index.html")).unwrap();
    assert!(page.contains(&format!("the charts of {} pitchers only", shown.len())), "the page says how many pitchers' charts it shows");
    let charts = std::fs::read_dir(out.join("charts")).unwrap().count();
    assert!(page.matches("<svg").count() < charts / 2, "{} inline charts of {charts} files", page.matches("<svg").count());
}

/// A log keyed by pitcher id with a `pitcher_name` column: the report's
/// files carry each pitcher's id as `pitcher_id` beside his name, the page
/// shows the names, and every figure is the one the same log keyed by
/// name gives (the shuffles are keyed by the name shown).
#[test]
fn a_log_keyed_by_id_shows_names_and_keeps_each_id() {
    use tellscope::report::{export::report_files, Csv, Html, Json};
    let root = scratch("pitcher-ids");
    let plain_log = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/plain-staff/demo-log.csv");
    let text = std::fs::read_to_string(&plain_log).unwrap();
    let mut lines = text.lines();
    let head = lines.next().unwrap();
    let at = head.split(',').position(|h| h == "pitcher").unwrap();
    let mut names: Vec<String> = Vec::new();
    let mut body = Vec::new();
    for line in lines {
        let mut c: Vec<String> = line.split(',').map(str::to_string).collect();
        let name = c[at].clone();
        let i = names.iter().position(|n| *n == name).unwrap_or_else(|| {
            names.push(name.clone());
            names.len() - 1
        });
        c[at] = format!("{}", 700_000 + 13 * i);
        c.push(name);
        body.push(c.join(","));
    }
    let keyed = root.join("keyed.csv");
    std::fs::write(&keyed, format!("{head},pitcher_name\n{}\n", body.join("\n"))).unwrap();
    let by_name = audit::run(&plain_log, &settings(), false).unwrap();
    let by_id = audit::run(&keyed, &settings(), false).unwrap();
    let id_of = |name: &str| format!("{}", 700_000 + 13 * names.iter().position(|n| n == name).unwrap());

    // The same pitchers and figures; each id kept beside his name.
    assert_eq!(by_id.summary.pitchers.len(), by_name.summary.pitchers.len());
    for (a, b) in by_id.summary.pitchers.iter().zip(&by_name.summary.pitchers) {
        assert_eq!(a.pitcher, b.pitcher);
        assert_eq!(a.pitcher_id.as_deref(), Some(id_of(&a.pitcher).as_str()));
        assert_eq!(b.pitcher_id, None);
        let (mut a, b) = (serde_json::to_value(a).unwrap(), serde_json::to_value(b).unwrap());
        a.as_object_mut().unwrap().remove("pitcher_id");
        assert_eq!(a, b, "the same figures");
    }
    let files = |a: &audit::Audit| -> std::collections::BTreeMap<String, Vec<u8>> {
        report_files(a, &[&Html, &Json, &Csv]).unwrap().into_iter().map(|f| (f.path.to_string_lossy().to_string(), f.bytes)).collect()
    };
    let (with_ids, plain) = (files(&by_id), files(&by_name));
    for csv in ["tells.csv", "counts.csv"] {
        let text = String::from_utf8(with_ids[csv].clone()).unwrap();
        let mut rows = text.lines();
        assert!(rows.next().unwrap().starts_with("pitcher,pitcher_id,"), "{csv}");
        let mut n = 0;
        for row in rows {
            let c: Vec<&str> = row.splitn(3, ',').collect();
            assert_eq!(c[1], id_of(c[0]), "{csv}: {row}");
            n += 1;
        }
        assert!(n > 0, "{csv} has rows");
        // Without the id column the file is the plain log's, byte for byte.
        let dropped: Vec<String> = text.lines().map(|l| {
            let c: Vec<&str> = l.splitn(3, ',').collect();
            format!("{},{}", c[0], c[2])
        }).collect();
        assert_eq!(format!("{}\n", dropped.join("\n")), String::from_utf8(plain[csv].clone()).unwrap(), "{csv}");
    }
    let page = String::from_utf8(with_ids["index.html"].clone()).unwrap();
    assert!(page.contains(&format!("{} (", names[0])), "the page shows the names");
    assert!(page.contains("shown by `pitcher_name`"), "the note on names");
    std::fs::remove_dir_all(&root).ok();
}
