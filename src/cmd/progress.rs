//! Progress displays on standard error, shown only when it is a terminal: the groups of a
//! trajectory LP solve, and the evaluations of a comparison.

use std::io::IsTerminal;

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

use switchyard::trajectory_metric::Progress;

/// A progress display on standard error for long solves, when it is a terminal: groups done,
/// and the iterations of the Lagrangian engine on the largest group under way.
pub fn solve_progress() -> impl Fn(Progress) + Sync {
    let bar = if std::io::stderr().is_terminal() {
        ProgressBar::with_draw_target(Some(0), ProgressDrawTarget::stderr())
    } else {
        ProgressBar::hidden()
    };
    bar.set_style(
        ProgressStyle::with_template("solving {bar:30} {pos}/{len} groups {msg} [{elapsed}]")
            .expect("a valid template"),
    );
    let largest = std::sync::atomic::AtomicUsize::new(0);
    move |event| match event {
        Progress::Started { components } => bar.set_length(components as u64),
        Progress::Iteration { cells, iteration } => {
            use std::sync::atomic::Ordering::Relaxed;
            if cells >= largest.load(Relaxed) {
                largest.store(cells, Relaxed);
                bar.set_message(format!("(largest: {cells} cells, iteration {iteration})"));
            }
        }
        Progress::ComponentDone => {
            bar.inc(1);
            if bar.position() >= bar.length().unwrap_or(0) {
                bar.finish_and_clear();
            }
        }
    }
}

/// A bar counting a comparison's evaluations on standard error when it is a terminal, hidden
/// otherwise.
pub fn evaluations_bar(length: usize) -> ProgressBar {
    if !std::io::stderr().is_terminal() {
        return ProgressBar::hidden();
    }
    let bar = ProgressBar::new(length as u64);
    if let Ok(style) = ProgressStyle::with_template(
        "{elapsed_precise} [{bar:40}] {pos}/{len} evaluations ({per_sec}, {eta} left)",
    ) {
        bar.set_style(style.progress_chars("=> "));
    }
    bar
}
