//! A report folder is replaced whole: the new report is written beside it
//! and swapped in, so an old folder never keeps files of an earlier run
//! (a pitcher's charts after he left the log), a folder holding anything
//! else is never replaced, and a file in the way is a usage error.

use std::path::Path;
use tellscope::audit;
use tellscope::settings::{ConfigFile, Overrides, Settings};

fn settings() -> Settings {
    Settings::resolve(&ConfigFile::default(), &Overrides { permutations: Some(9), ..Overrides::default() }).unwrap()
}

#[test]
fn a_report_folder_is_replaced_whole() {
    let root = std::env::temp_dir().join(format!("tellscope-folder-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&root);
    std::fs::create_dir_all(&root).unwrap();
    let out = root.join("report");
    let log = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/plain-staff/demo-log.csv");
    let a = audit::run(&log, &settings(), false).unwrap();
    tellscope::report::write_audit_report(&out, &a).unwrap();
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
    let beside: Vec<String> = std::fs::read_dir(&root).unwrap().map(|e| e.unwrap().file_name().to_string_lossy().to_string()).filter(|n| n.starts_with('.')).collect();
    assert!(beside.is_empty(), "staging left behind: {beside:?}");
    std::fs::remove_dir_all(&root).ok();
}
