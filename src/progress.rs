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
