//! Progress on stderr, drawn only when stderr is a terminal.

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use std::io::IsTerminal;

/// A bar of `total` steps, hidden unless `show` and stderr is a terminal.
pub fn bar(total: u64, what: &str, show: bool) -> ProgressBar {
    if !show || !std::io::stderr().is_terminal() || total == 0 {
        return ProgressBar::hidden();
    }
    let bar = ProgressBar::with_draw_target(Some(total), ProgressDrawTarget::stderr());
    bar.set_style(
        ProgressStyle::with_template("{msg} {bar:40} {pos}/{len} ({eta} left)")
            .unwrap_or_else(|_| ProgressStyle::default_bar()),
    );
    bar.set_message(what.to_string());
    bar
}

/// Stage timings on stderr when TELLSCOPE_PROFILE is set (for the bench
/// script; never part of the output files).
pub struct Timer {
    start: std::cell::Cell<std::time::Instant>,
    cpu: std::cell::Cell<f64>,
    on: bool,
}

/// CPU seconds (user and system, all threads) used by the process so far.
fn cpu_seconds() -> f64 {
    // SAFETY: getrusage only writes the struct it is given.
    let mut u: libc::rusage = unsafe { std::mem::zeroed() };
    if unsafe { libc::getrusage(libc::RUSAGE_SELF, &mut u) } != 0 {
        return 0.0;
    }
    let t = |v: libc::timeval| v.tv_sec as f64 + v.tv_usec as f64 * 1e-6;
    t(u.ru_utime) + t(u.ru_stime)
}

impl Timer {
    pub fn start() -> Timer {
        let on = std::env::var_os("TELLSCOPE_PROFILE").is_some();
        Timer { start: std::cell::Cell::new(std::time::Instant::now()), cpu: std::cell::Cell::new(if on { cpu_seconds() } else { 0.0 }), on }
    }

    /// Print the time since the last lap under `what`.
    pub fn lap(&self, what: &str) {
        if self.on {
            let now = std::time::Instant::now();
            // Peak and current resident memory so far (Linux /proc).
            let status = std::fs::read_to_string("/proc/self/status").unwrap_or_default();
            let field = |k: &str| {
                status.lines().find(|l| l.starts_with(k)).and_then(|l| l.split_whitespace().nth(1)).and_then(|v| v.parse::<u64>().ok()).unwrap_or(0) / 1024
            };
            let cpu = cpu_seconds();
            eprintln!(
                "profile: {what:<28} {:>8.3} s   cpu {:>7.3} s   rss {:>6} MiB   peak {:>6} MiB",
                (now - self.start.get()).as_secs_f64(),
                cpu - self.cpu.get(),
                field("VmRSS:"),
                field("VmHWM:")
            );
            self.start.set(now);
            self.cpu.set(cpu);
        }
    }
}
