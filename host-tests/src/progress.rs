//! Progress bars on stderr for the long parts of `deltakin report`.
//!
//! A bar is drawn only when stderr is a terminal; in CI logs, pipes and
//! tests it is hidden and costs one atomic add per item.

use std::io::IsTerminal;

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

/// Template of every bar: what runs, a bar, count, rate and time left.
const TEMPLATE: &str = "{msg:<28} [{bar:30}] {pos:>7}/{len:7} {per_sec:>12} eta {eta}";

/// A bar for `len` items labelled `what`, drawn on stderr when stderr is a
/// terminal and hidden otherwise.
#[must_use]
pub fn bar(len: usize, what: &str) -> ProgressBar {
    if !std::io::stderr().is_terminal() {
        return ProgressBar::hidden();
    }
    let style = ProgressStyle::with_template(TEMPLATE).unwrap_or_else(|_| ProgressStyle::default_bar());
    let bar = ProgressBar::with_draw_target(Some(len as u64), ProgressDrawTarget::stderr())
        .with_style(style.progress_chars("=> "));
    bar.set_message(what.to_owned());
    bar
}
