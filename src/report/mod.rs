//! Report: every output file is rendered from the audit's one results value
//! into memory first, then written under temporary names and renamed into
//! place, so an interrupted run never leaves a half-written report.

pub mod charts;
pub mod compare;
pub mod csv;
pub mod figures;
pub mod html;
pub mod json;

use crate::error::{Error, Result};
use std::path::{Path, PathBuf};

/// One file of a report, relative to the report folder.
pub struct ReportFile {
    pub path: PathBuf,
    pub bytes: Vec<u8>,
}

impl ReportFile {
    pub fn new(path: impl Into<PathBuf>, bytes: impl Into<Vec<u8>>) -> Self {
        ReportFile { path: path.into(), bytes: bytes.into() }
    }
}

/// A name safe for a file: letters, digits, `-` and `_` kept, everything
/// else (path separators, dots, spaces, markup) turned into `_`, never empty
/// and never starting with a dot. Collisions are resolved by the caller.
pub fn safe_stem(name: &str) -> String {
    let mut s: String = name
        .chars()
        .map(|c| if c.is_ascii_alphanumeric() || c == '-' || c == '_' { c.to_ascii_lowercase() } else { '_' })
        .collect();
    while s.contains("__") {
        s = s.replace("__", "_");
    }
    let s = s.trim_matches('_').to_string();
    if s.is_empty() {
        "pitcher".to_string()
    } else {
        s
    }
}

/// Unique safe stems for a list of names, in order: a repeated stem gets
/// `-2`, `-3`, ...
pub fn unique_stems(names: &[String]) -> Vec<String> {
    let mut seen = std::collections::BTreeMap::<String, usize>::new();
    names
        .iter()
        .map(|n| {
            let base = safe_stem(n);
            let c = seen.entry(base.clone()).or_insert(0);
            *c += 1;
            if *c == 1 {
                base
            } else {
                format!("{base}-{c}")
            }
        })
        .collect()
}

/// Write all files under `dir`: first every file to a temporary sibling
/// name, then rename each into place. Paths must be relative and free of
/// `..` (checked), so nothing is written outside `dir`.
pub fn write_all(dir: &Path, files: &[ReportFile]) -> Result<()> {
    for f in files {
        if f.path.is_absolute() || f.path.components().any(|c| !matches!(c, std::path::Component::Normal(_))) {
            return Err(Error::Internal(format!("refusing to write {} outside the report folder", f.path.display())));
        }
    }
    let mut staged = Vec::new();
    for f in files {
        let target = dir.join(&f.path);
        let parent = target.parent().unwrap_or(dir);
        std::fs::create_dir_all(parent).map_err(|e| Error::io(parent, "create the report folder", e))?;
        let name = target.file_name().and_then(|n| n.to_str()).unwrap_or("file");
        let tmp = parent.join(format!(".{name}.partial-{}", std::process::id()));
        std::fs::write(&tmp, &f.bytes).map_err(|e| Error::io(&tmp, "write", e))?;
        staged.push((tmp, target));
    }
    for (tmp, target) in staged {
        std::fs::rename(&tmp, &target).map_err(|e| Error::io(&target, "rename into place", e))?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn stems_are_safe_and_unique() {
        assert_eq!(safe_stem("../../x"), "x");
        assert_eq!(safe_stem("<script>alert(1)</script>"), "script_alert_1_script");
        assert_eq!(safe_stem("..."), "pitcher");
        assert_eq!(safe_stem("Ada Quill"), "ada_quill");
        let u = unique_stems(&["A b".into(), "a_b".into(), "a/b".into()]);
        assert_eq!(u, vec!["a_b", "a_b-2", "a_b-3"]);
    }

    #[test]
    fn nothing_is_written_outside_the_folder() {
        let dir = std::env::temp_dir().join(format!("tellscope-wa-{}", std::process::id()));
        let bad = [ReportFile::new("../escape.txt", "x")];
        assert!(write_all(&dir, &bad).is_err());
        let good = [ReportFile::new("a/b.txt", "hello")];
        write_all(&dir, &good).unwrap();
        assert_eq!(std::fs::read_to_string(dir.join("a/b.txt")).unwrap(), "hello");
        assert!(!dir.parent().unwrap().join("escape.txt").exists());
        std::fs::remove_dir_all(&dir).unwrap();
    }
}

/// Every file of an audit report, rendered from the one results value.
pub fn audit_files(audit: &crate::audit::Audit) -> Result<Vec<ReportFile>> {
    let s = &audit.summary;
    let names: Vec<String> = s.pitchers.iter().map(|p| p.pitcher.clone()).collect();
    let stems: std::collections::BTreeMap<String, String> =
        names.iter().cloned().zip(unique_stems(&names)).collect();
    let mut files = Vec::new();
    let built = figures::audit_charts(s, &stems)?;
    let mut svgs = html::ChartSvgs::default();
    for c in &built.staff {
        svgs.staff = Some(c.svg.clone());
    }
    for (pitcher, list) in &built.per_pitcher {
        svgs.per_pitcher.insert(pitcher.clone(), list.iter().map(|c| c.svg.clone()).collect());
    }
    for c in built.staff.iter().chain(built.per_pitcher.values().flatten()) {
        files.push(ReportFile::new(format!("charts/{}.svg", c.name), c.svg.clone()));
        files.push(ReportFile::new(format!("charts/{}.png", c.name), c.png.clone()));
    }
    files.push(ReportFile::new("index.html", html::render(s, &audit.tests, &svgs, &stems)?));
    files.push(ReportFile::new("summary.json", json::summary_json(s)?));
    files.push(ReportFile::new("tells.csv", csv::tells_csv(&audit.tests)?));
    files.push(ReportFile::new("counts.csv", csv::counts_csv(s)?));
    files.push(ReportFile::new("rejected.csv", csv::rejected_csv(&audit.rejected)?));
    Ok(files)
}
