//! Report: every output file is rendered from the audit's one results value
//! into memory first, then written under temporary names and renamed into
//! place, so an interrupted run never leaves a half-written report.

pub mod charts;
pub mod compare;
pub mod csv;
pub mod export;
pub mod figures;
pub mod html;
pub mod json;
pub mod table;

use crate::audit::Audit;
use crate::error::{Error, Result};
pub use export::{Csv, Exporter, Html, Json, Sink, Stdout, Table};
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
    // Bounded, so "<chart>-<stem>-<n>.svg" stays far below file-name limits.
    let s: String = s.trim_matches('_').chars().take(80).collect();
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

/// A report being written. Every file goes, as soon as it is rendered (so
/// a large report is never held in memory whole), into a staging folder
/// beside the report folder; `commit` then swaps the staging folder in for
/// the old report in one step (on Linux an atomic exchange of the two
/// folders, `renameat2` with `RENAME_EXCHANGE`; elsewhere two renames), and
/// removes the old one. A kill at any moment leaves the old report or the
/// new one, never a mix, and never files of pitchers no longer in the log.
/// Dropped uncommitted (a failed run, Ctrl-C caught by the binary), it
/// removes its staging folder.
pub struct Staging {
    dir: PathBuf,
    tmp: PathBuf,
    committed: bool,
    /// This staging removes `tmp` when dropped uncommitted.
    owner: bool,
}

/// The staging folder of a report folder `dir`, for this process.
fn staging_of(dir: &Path) -> PathBuf {
    let name = dir.file_name().and_then(|n| n.to_str()).unwrap_or("report");
    let parent = dir.parent().filter(|p| !p.as_os_str().is_empty()).unwrap_or(Path::new("."));
    parent.join(format!(".{name}.tellscope-new-{}", std::process::id()))
}

/// Files a tellscope report folder holds at its top level.
const REPORT_FILES: [&str; 9] = ["index.html", "summary.json", "tells.csv", "counts.csv", "outcomes.csv", "rejected.csv", "set_aside.csv", "changes.csv", "charts"];

/// Staging folders of this process not yet committed or removed: what an
/// interrupt (Ctrl-C, SIGTERM) removes before the process exits. The lock
/// is also held across a commit's swap, so an interrupt lands before the
/// swap or after it, never inside.
static IN_FLIGHT: std::sync::Mutex<Vec<PathBuf>> = std::sync::Mutex::new(Vec::new());

fn in_flight() -> std::sync::MutexGuard<'static, Vec<PathBuf>> {
    IN_FLIGHT.lock().unwrap_or_else(|e| e.into_inner())
}

/// Called on an interrupt: remove every staging folder of this process
/// (the old reports stay as they were), and hold the lock so no commit
/// starts before the process exits. Returns how many were removed.
pub fn abandon_stagings() -> usize {
    let mut g = in_flight();
    let n = g.len();
    for p in g.drain(..) {
        let _ = std::fs::remove_dir_all(p);
    }
    std::mem::forget(g);
    n
}

impl Staging {
    pub fn new(dir: &Path) -> Staging {
        let tmp = staging_of(dir);
        let mut g = in_flight();
        if !g.contains(&tmp) {
            g.push(tmp.clone());
        }
        Staging { dir: dir.to_path_buf(), tmp, committed: false, owner: true }
    }

    /// Paths must be relative and free of `..`, so nothing is written
    /// outside the report folder.
    fn target(&self, rel: &Path) -> Result<PathBuf> {
        if rel.is_absolute() || rel.components().any(|c| !matches!(c, std::path::Component::Normal(_))) {
            return Err(Error::Internal(format!("refusing to write {} outside the report folder", rel.display())));
        }
        Ok(self.tmp.join(rel))
    }

    /// Stage a file written by `write` (e.g. a CSV streamed in chunks).
    pub fn add_with(&mut self, rel: impl AsRef<Path>, write: impl FnOnce(&mut std::io::BufWriter<std::fs::File>) -> Result<()>) -> Result<()> {
        let target = self.target(rel.as_ref())?;
        let parent = target.parent().unwrap_or(&self.tmp).to_path_buf();
        // Created under the lock an interrupt takes, so a staging folder it
        // has removed is never made again.
        let file = {
            let g = in_flight();
            if !g.contains(&self.tmp) {
                return Err(Error::Internal("the report was abandoned".into()));
            }
            std::fs::create_dir_all(&parent).map_err(|e| Error::io(&parent, "create the report folder", e))?;
            std::fs::File::create(&target).map_err(|e| Error::io(&target, "write", e))?
        };
        let mut w = std::io::BufWriter::new(file);
        write(&mut w)?;
        use std::io::Write;
        w.flush().map_err(|e| Error::io(&target, "write", e))?;
        Ok(())
    }

    pub fn add(&mut self, rel: impl AsRef<Path>, bytes: &[u8]) -> Result<()> {
        let rel = rel.as_ref().to_path_buf();
        self.add_with(&rel, |w| {
            use std::io::Write;
            w.write_all(bytes).map_err(|e| Error::io(&rel, "write", e))
        })
    }

    /// Takes over `other`'s staged files (a staging of the same report
    /// folder: its files are already in the same staging folder).
    pub fn absorb(&mut self, mut other: Staging) {
        debug_assert_eq!(self.tmp, other.tmp);
        other.owner = false;
    }

    /// Swap the staged report in for the old one.
    pub fn commit(mut self) -> Result<()> {
        let mut g = in_flight();
        let r = self.swap_into_place();
        g.retain(|p| *p != self.tmp);
        drop(g);
        r?;
        self.committed = true;
        remove_stale_stagings(&self.dir);
        Ok(())
    }

    fn swap_into_place(&mut self) -> Result<()> {
        std::fs::create_dir_all(&self.tmp).map_err(|e| Error::io(&self.tmp, "create the report folder", e))?;
        let dir = self.dir.clone();
        match std::fs::symlink_metadata(&dir) {
            Err(_) => {
                if let Some(parent) = dir.parent().filter(|p| !p.as_os_str().is_empty()) {
                    std::fs::create_dir_all(parent).map_err(|e| Error::io(parent, "create the report folder", e))?;
                }
                std::fs::rename(&self.tmp, &dir).map_err(|e| Error::io(&dir, "move the report into place", e))?;
            }
            Ok(m) if !m.is_dir() => {
                return Err(Error::Usage(format!("--out {}: a file of that name exists; choose a folder name", dir.display())));
            }
            Ok(_) => {
                // Never replace a folder that holds anything but a report.
                let foreign: Vec<String> = std::fs::read_dir(&dir)
                    .map_err(|e| Error::io(&dir, "read the report folder", e))?
                    .filter_map(|e| e.ok())
                    .map(|e| e.file_name().to_string_lossy().to_string())
                    .filter(|n| !REPORT_FILES.contains(&n.as_str()) && !n.starts_with('.'))
                    .collect();
                if !foreign.is_empty() {
                    return Err(Error::Usage(format!(
                        "--out {}: the folder holds files that are not part of a tellscope report ({}); choose a new or empty folder",
                        dir.display(),
                        foreign.iter().take(3).cloned().collect::<Vec<_>>().join(", ")
                    )));
                }
                swap_in(&self.tmp, &dir)?;
                // The old report now sits at the staging path.
                let _ = std::fs::remove_dir_all(&self.tmp);
            }
        }
        Ok(())
    }
}

/// Staging folders of earlier runs on `dir` that were killed before they
/// could clean up (their process ids differ from ours).
fn remove_stale_stagings(dir: &Path) {
    let Some(name) = dir.file_name().and_then(|n| n.to_str()) else { return };
    let parent = dir.parent().filter(|p| !p.as_os_str().is_empty()).unwrap_or(Path::new("."));
    let prefix = format!(".{name}.tellscope-new-");
    let Ok(entries) = std::fs::read_dir(parent) else { return };
    for e in entries.filter_map(|e| e.ok()) {
        let n = e.file_name().to_string_lossy().to_string();
        if n.starts_with(&prefix) && e.path() != staging_of(dir) {
            let _ = std::fs::remove_dir_all(e.path());
        }
    }
}

/// Put `new` at `dir` and the old `dir` at `new`, atomically where the
/// system can (Linux: `renameat2(RENAME_EXCHANGE)`).
fn swap_in(new: &Path, dir: &Path) -> Result<()> {
    #[cfg(target_os = "linux")]
    {
        use std::ffi::CString;
        use std::os::unix::ffi::OsStrExt;
        let a = CString::new(new.as_os_str().as_bytes()).map_err(|_| Error::Internal("a path holds a NUL byte".into()))?;
        let b = CString::new(dir.as_os_str().as_bytes()).map_err(|_| Error::Internal("a path holds a NUL byte".into()))?;
        // SAFETY: both are valid NUL-terminated paths for the call's duration.
        let r = unsafe { libc::renameat2(libc::AT_FDCWD, a.as_ptr(), libc::AT_FDCWD, b.as_ptr(), libc::RENAME_EXCHANGE) };
        if r == 0 {
            return Ok(());
        }
    }
    // Elsewhere (or a file system without the exchange): old aside, new in.
    let aside = new.with_extension("old");
    std::fs::rename(dir, &aside).map_err(|e| Error::io(dir, "move the old report aside", e))?;
    std::fs::rename(new, dir).map_err(|e| Error::io(dir, "move the report into place", e))?;
    std::fs::rename(&aside, new).map_err(|e| Error::io(new, "remove the old report", e))?;
    Ok(())
}

impl Drop for Staging {
    fn drop(&mut self) {
        if self.owner && !self.committed {
            let mut g = in_flight();
            let _ = std::fs::remove_dir_all(&self.tmp);
            g.retain(|p| *p != self.tmp);
        }
    }
}

/// When a run cannot go on (no valid row, `--strict`): a report folder of
/// its own holding `rejected.csv` (every rejected row, line, column, value,
/// reason) and a short `index.html` saying why, so nothing is lost.
/// `what` names the run that failed (`audit`, `comparison`).
pub fn write_failed_report(dir: &Path, what: &str, why: &str, rejected: &[crate::ingest::Rejected], set_aside: &[crate::ingest::Rejected]) -> Result<()> {
    let mut st = Staging::new(dir);
    st.add("rejected.csv", &csv::rejected_csv(rejected)?)?;
    let aside = if set_aside.is_empty() {
        String::new()
    } else {
        st.add("set_aside.csv", &csv::rejected_csv(set_aside)?)?;
        format!(
            "<p>{} rows were set aside as not the pitcher's choice of pitch (pitchouts, intentional balls, unknown types and the like); each is listed in <a href=\"set_aside.csv\">set_aside.csv</a>.</p>",
            set_aside.len()
        )
    };
    let page = format!(
        "<!DOCTYPE html><html lang=\"en\"><head><meta charset=\"utf-8\"><title>tellscope: no {what}</title></head><body style=\"font-family:sans-serif;max-width:50rem;margin:2rem auto\"><h1>No {what} was possible</h1><p>{}</p><p>{} rows were rejected; each is listed with its line, column, value and reason in <a href=\"rejected.csv\">rejected.csv</a>. Fix them (or the export) and run the {what} again.</p>{aside}</body></html>\n",
        charts::escape_xml(why),
        rejected.len()
    );
    st.add("index.html", page.as_bytes())?;
    st.commit()
}

/// Above this many pitchers, index.html inlines the charts of only this
/// many: the pitchers with a significant model or a flagged tell, most
/// flagged tells first, then most bits gained (every chart is still written
/// under charts/). A league-wide page then stays light enough to open: on a
/// real league nearly every pitcher's model is significant, and inlining
/// them all made a page of about 100 MB.
pub const INLINE_ALL_CHARTS_UP_TO: usize = 60;

/// The pitchers whose charts index.html inlines (see
/// [`INLINE_ALL_CHARTS_UP_TO`]).
pub fn inlined_pitchers(s: &crate::audit::summary::Summary) -> std::collections::BTreeSet<&str> {
    let ok: Vec<&crate::audit::summary::PitcherSummary> = s.pitchers.iter().filter(|p| p.is_ok()).collect();
    if ok.len() <= INLINE_ALL_CHARTS_UP_TO {
        return s.pitchers.iter().map(|p| p.pitcher.as_str()).collect();
    }
    let mut shown: Vec<&crate::audit::summary::PitcherSummary> =
        ok.into_iter().filter(|p| p.significant == Some(true) || !p.tells.is_empty()).collect();
    // His own flagged tells, as the staff table counts them (not the
    // narrower ones inside another).
    let own = |p: &crate::audit::summary::PitcherSummary| p.tells.iter().filter(|t| t.within.is_none()).count();
    shown.sort_by(|a, b| {
        own(b)
            .cmp(&own(a))
            .then(b.bits_gained.unwrap_or(f64::NEG_INFINITY).total_cmp(&a.bits_gained.unwrap_or(f64::NEG_INFINITY)))
            .then(a.pitcher.cmp(&b.pitcher))
    });
    shown.truncate(INLINE_ALL_CHARTS_UP_TO);
    shown.into_iter().map(|p| p.pitcher.as_str()).collect()
}

/// Render and write an audit's report folder.
pub fn write_audit_report(dir: &Path, audit: &Audit) -> Result<()> {
    export::write_report(dir, audit, &Html, &[&Json, &Csv])
}

impl Exporter<Audit> for Json {
    fn export(&self, audit: &Audit, sink: &mut dyn Sink) -> Result<()> {
        sink.put("summary.json", json::summary_json(&audit.summary)?.as_bytes())
    }
}

impl Exporter<Audit> for Csv {
    fn export(&self, audit: &Audit, sink: &mut dyn Sink) -> Result<()> {
        let ids = csv::pitcher_ids(audit.summary.pitchers.iter().map(|p| (p.pitcher.as_str(), p.pitcher_id.as_deref())));
        sink.put_with("tells.csv", &mut |mut w| csv::write_tells_csv(&audit.tests, &ids, &mut w))?;
        sink.put("counts.csv", &csv::counts_csv(&audit.summary, &ids)?)?;
        if !audit.outcomes.is_empty() {
            sink.put("outcomes.csv", &csv::outcomes_csv(&audit.outcomes, &ids)?)?;
        }
        if !audit.set_aside.is_empty() {
            sink.put("set_aside.csv", &csv::rejected_csv(&audit.set_aside)?)?;
        }
        sink.put("rejected.csv", &csv::rejected_csv(&audit.rejected)?)
    }
}

impl Exporter<Audit> for Html {
    fn export(&self, audit: &Audit, sink: &mut dyn Sink) -> Result<()> {
        let s = &audit.summary;
        let names: Vec<String> = s.pitchers.iter().map(|p| p.pitcher.clone()).collect();
        let stems: std::collections::BTreeMap<String, String> = names.iter().cloned().zip(unique_stems(&names)).collect();
        let ok = s.pitchers.iter().filter(|p| p.is_ok()).count();
        let shown = inlined_pitchers(s);
        let inline = |pitcher: &str| shown.contains(pitcher);
        let mut svgs = html::ChartSvgs::default();
        figures::for_each_chart(s, &stems, |pitcher, chart| {
            sink.put(&format!("charts/{}.svg", chart.name), chart.svg.as_bytes())?;
            sink.put(&format!("charts/{}.png", chart.name), &chart.png)?;
            match pitcher {
                None if chart.name == "called-outcomes" => svgs.called = Some(chart.svg),
                None if chart.name == "staff-league-rank" => svgs.league = Some(chart.svg),
                None => svgs.staff = Some(chart.svg),
                Some(p) if inline(p) && chart.name.starts_with("where-it-goes-") => {
                    svgs.location.insert(p.to_string(), chart.svg);
                }
                Some(p) if inline(p) => svgs.per_pitcher.entry(p.to_string()).or_default().push(chart.svg),
                Some(_) => {}
            }
            Ok(())
        })?;
        svgs.omitted = ok > INLINE_ALL_CHARTS_UP_TO;
        svgs.shown = shown.len();
        sink.put("index.html", html::render(s, &audit.tests, &svgs, &stems)?.as_bytes())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn write_all(dir: &Path, files: &[ReportFile]) -> Result<()> {
        let mut st = Staging::new(dir);
        for f in files {
            st.add(&f.path, &f.bytes)?;
        }
        st.commit()
    }

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

