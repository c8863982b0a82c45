//! The report as a coach opens it: the demo's index.html in headless
//! Chromium (Debian's package, installed by .ci/run) loads without console
//! errors and shows every chart; hostile pitcher names are shown as text and
//! never become markup or paths. Set TELLSCOPE_SKIP_BROWSER=1 to skip the
//! Chromium part on a machine without it (CI never sets it).

use std::path::{Path, PathBuf};
use std::process::Command;

fn bin() -> &'static str {
    env!("CARGO_BIN_EXE_tellscope")
}

fn temp(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("tellscope-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

fn chromium() -> Option<&'static str> {
    if std::env::var("TELLSCOPE_SKIP_BROWSER").is_ok() {
        return None;
    }
    for c in ["/usr/bin/chromium", "/usr/bin/chromium-browser"] {
        if Path::new(c).exists() {
            return Some(c);
        }
    }
    panic!("headless Chromium is needed for this test (apt-get install chromium), or set TELLSCOPE_SKIP_BROWSER=1");
}

/// Run headless Chromium on a local page with no network; returns
/// (dumped DOM, stderr log).
fn headless(page: &Path, profile: &Path, extra: &[String]) -> (String, String) {
    let url = format!("file://{}", page.canonicalize().unwrap().display());
    let out = Command::new(chromium().unwrap())
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-quic",
            "--no-first-run",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--disable-extensions",
            "--enable-logging=stderr",
            "--v=0",
        ])
        .arg(format!("--user-data-dir={}", profile.display()))
        .args(extra)
        .arg(&url)
        .output()
        .expect("chromium runs");
    (String::from_utf8_lossy(&out.stdout).into_owned(), String::from_utf8_lossy(&out.stderr).into_owned())
}

fn console_errors(log: &str) -> Vec<String> {
    log.lines()
        .filter(|l| l.contains(":CONSOLE") || l.contains("Uncaught"))
        .filter(|l| l.contains("ERROR") || l.contains("Uncaught") || l.contains("rror"))
        .map(str::to_string)
        .collect()
}

#[test]
fn the_demo_report_loads_cleanly_with_every_chart() {
    let dir = temp("browser");
    let out = dir.join("demo");
    let status = Command::new(bin())
        .args(["demo", "--out"])
        .arg(&out)
        .arg("--data")
        .arg(concat!(env!("CARGO_MANIFEST_DIR"), "/demo-data"))
        .args(["--permutations", "199"])
        .output()
        .unwrap();
    assert!(status.status.success(), "{}", String::from_utf8_lossy(&status.stderr));
    let summary: serde_json::Value = serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    let ok = summary["pitchers"].as_array().unwrap().iter().filter(|p| p["status"] == "ok").count();
    // Every chart file exists in both formats, and the PNG decodes.
    let mut svgs = 0;
    for e in std::fs::read_dir(out.join("charts")).unwrap() {
        let p = e.unwrap().path();
        if p.extension().and_then(|e| e.to_str()) == Some("svg") {
            svgs += 1;
            let png = p.with_extension("png");
            let img = image::open(&png).unwrap_or_else(|e| panic!("{}: {e}", png.display()));
            assert!(img.width() > 100 && img.height() > 100);
        }
    }
    // The staff chart, the league-rank chart (percentiles, on any staff of
    // two or more), with results the called-pitch outcomes chart, and five
    // per pitcher (the sheet's two panels, mix by count, where his pitches
    // go, the null).
    let staff_charts = 2 + if summary["staff_called_outcomes"].is_null() { 0 } else { 1 };
    assert_eq!(svgs, staff_charts + 5 * ok, "staff charts and five per pitcher");
    let html = std::fs::read_to_string(out.join("index.html")).unwrap();
    assert!(!html.contains("http://") || html.matches("http://").all(|_| html.contains("xmlns")), "no network resources");
    assert!(!html.contains("<link ") && !html.contains(" src=\""), "self-contained: no external files");

    if chromium().is_none() {
        return;
    }
    let (dom, log) = headless(&out.join("index.html"), &dir.join("profile"), &["--dump-dom".into()]);
    let errs = console_errors(&log);
    assert!(errs.is_empty(), "console errors: {errs:?}");
    assert!(dom.contains("Staff overview"));
    // Every chart is in the page and drawn.
    let drawn = dom.split("<svg").skip(1).filter(|s| s.contains("<rect") || s.contains("<path") || s.contains("<polyline")).count();
    assert!(drawn > 3 * ok, "{drawn} drawn charts in the page, expected {}", 1 + 3 * ok);
    let shot = out.join("screenshot.png");
    headless(&out.join("index.html"), &dir.join("profile2"), &[format!("--screenshot={}", shot.display()), "--window-size=1200,2400".into()]);
    let img = image::open(&shot).expect("screenshot written");
    assert_eq!((img.width(), img.height()), (1200, 2400));
    eprintln!("screenshot: {}", shot.display());
}

#[test]
fn hostile_pitcher_names_stay_text_and_inside_the_report() {
    let dir = temp("hostile");
    let log = dir.join("log.csv");
    let st = Command::new(bin())
        .args(["simulate", concat!(env!("CARGO_MANIFEST_DIR"), "/tests/fixtures/scenarios/tiny.toml"), "--seed", "3", "--out"])
        .arg(&log)
        .output()
        .unwrap();
    assert!(st.status.success());
    let text = std::fs::read_to_string(&log).unwrap();
    let text = text.replace("Tiny Starter A", "<script>alert(1)</script>").replace("Tiny Starter B", "../../x");
    std::fs::write(&log, text).unwrap();
    let out = dir.join("a").join("b").join("report");
    let st = Command::new(bin()).args(["audit"]).arg(&log).arg("--out").arg(&out).args(["--permutations", "19"]).output().unwrap();
    assert!(st.status.success(), "{}", String::from_utf8_lossy(&st.stderr));
    let html = std::fs::read_to_string(out.join("index.html")).unwrap();
    assert!(html.contains("&lt;script&gt;alert(1)&lt;&#x2f;script&gt;") || html.contains("&lt;script&gt;alert(1)&lt;/script&gt;"));
    assert!(!html.contains("<script>alert(1)"), "the name became markup");
    assert!(html.contains("..&#x2f;..&#x2f;x") || html.contains("../../x"));
    // Nothing was written outside the report folder.
    for bad in [dir.join("x"), dir.join("a").join("x"), dir.join("a").join("b").join("x")] {
        assert!(!bad.exists(), "{} was written", bad.display());
    }
    fn walk(p: &Path, out: &mut Vec<PathBuf>) {
        for e in std::fs::read_dir(p).unwrap() {
            let p = e.unwrap().path();
            if p.is_dir() {
                walk(&p, out);
            } else {
                out.push(p);
            }
        }
    }
    let mut files = Vec::new();
    walk(&out, &mut files);
    for f in &files {
        let name = f.file_name().unwrap().to_str().unwrap();
        assert!(!name.contains('<') && !name.contains('>') && !name.starts_with('.'), "unsafe file name {name}");
    }
    for f in files.iter().filter(|f| f.extension().and_then(|e| e.to_str()) == Some("svg")) {
        let svg = std::fs::read_to_string(f).unwrap();
        assert!(!svg.contains("<script"), "{} carries a script", f.display());
    }
    if chromium().is_none() {
        return;
    }
    let (dom, log) = headless(&out.join("index.html"), &dir.join("profile"), &["--dump-dom".into()]);
    assert!(console_errors(&log).is_empty(), "{:?}", console_errors(&log));
    // The DOM holds the name as text, not as a script element.
    assert!(dom.contains("&lt;script&gt;alert(1)&lt;/script&gt;"), "the name is shown as text");
    assert!(!dom.contains("<script>alert(1)"));
}
