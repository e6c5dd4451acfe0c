//! Progress bars: shown on a terminal, silent when stderr is not a TTY or with `--quiet`.

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use std::io::IsTerminal;

/// A bar over `total` units of work labelled `what`, or a hidden one.
pub fn bar(total: u64, what: &str, quiet: bool) -> ProgressBar {
    if quiet || !std::io::stderr().is_terminal() {
        return ProgressBar::with_draw_target(Some(total), ProgressDrawTarget::hidden());
    }
    let pb = ProgressBar::new(total);
    let style = ProgressStyle::with_template(
        "{prefix} [{bar:30}] {pos}/{len} units  {per_sec}  ETA {eta}  {msg}",
    )
    .unwrap_or_else(|_| ProgressStyle::default_bar())
    .progress_chars("=> ");
    pb.set_style(style);
    pb.set_prefix(what.to_string());
    pb
}
