//! Progress bars for long work: drawn on stderr, only on a terminal.

use crate::options::Style;
use indicatif::{ProgressBar, ProgressStyle};

/// A bar of `len` steps, hidden unless stderr is a terminal.
pub fn bar(len: u64, message: &str, style: Style) -> ProgressBar {
    if !style.progress {
        return ProgressBar::hidden();
    }
    let template = if style.color {
        "{msg:>12.cyan} [{bar:32.cyan/blue}] {pos}/{len}"
    } else {
        "{msg:>12} [{bar:32}] {pos}/{len}"
    };
    let bar = ProgressBar::new(len);
    if let Ok(s) = ProgressStyle::with_template(template) {
        bar.set_style(s.progress_chars("=> "));
    }
    bar.set_message(message.to_string());
    bar
}

/// A bar of `len` steps that also shows the rate and the time left (for
/// sweeps of many members), hidden unless stderr is a terminal.
pub fn rate_bar(len: u64, message: &str, style: Style) -> ProgressBar {
    let bar = bar(len, message, style);
    if let Some(s) =
        ProgressStyle::with_template("{msg:>12} [{bar:32}] {pos}/{len} {per_sec} eta {eta}")
            .ok()
            .filter(|_| style.progress)
    {
        bar.set_style(s.progress_chars("=> "));
    }
    bar
}
