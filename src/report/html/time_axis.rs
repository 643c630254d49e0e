//! The time axis shared by every time chart: step indices, or with a step size the time in the
//! input's own units (time = step x step size), and the words tooltips use for a step or a
//! span of steps.

use std::fmt::Write;

use super::style::INK;
use super::svg::{self, esc, n};
use super::{Context, RIGHT, WIDTH};
use crate::trajectory::{Step, Window};

/// How steps read as time on the page.
#[derive(Clone, Debug, PartialEq)]
pub struct TimeScale {
    /// The time between two steps, in the input's time unit (`--time-step`): step `s` is at
    /// time `s x step`.
    pub step: f64,
    /// The unit of time (for example `s`), written on axes; `None` when not given.
    pub unit: Option<String>,
}

impl TimeScale {
    /// Decimals that show a multiple of the step size exactly enough: the fewest (up to 6)
    /// with which the step size itself is written without rounding.
    fn decimals(&self) -> usize {
        (0..6)
            .find(|&d| {
                let scaled = self.step * 10f64.powi(d as i32);
                (scaled - scaled.round()).abs() <= 1e-9 * scaled.abs().max(1.0)
            })
            .unwrap_or(6)
    }

    /// The time of a step, with the unit: `"12.5 s"`.
    pub fn time_text(&self, step: Step) -> String {
        let value = svg::value(step as f64 * self.step, self.decimals());
        match &self.unit {
            Some(unit) => format!("{value} {unit}"),
            None => value,
        }
    }
}

/// A span of steps in words: `"steps 3–7"`, or `"steps 3–7 (t = 0.3–0.7 s)"`; one step reads
/// `"step 5"` or `"step 5 (t = 0.5 s)"`.
pub(crate) fn span_words(first: Step, last: Step, time: Option<&TimeScale>) -> String {
    match time {
        Some(time) if first == last => format!("step {first} (t = {})", time.time_text(first)),
        None if first == last => format!("step {first}"),
        Some(time) => {
            let start = svg::value(first as f64 * time.step, time.decimals());
            format!(
                "steps {first}–{last} (t = {start}–{})",
                time.time_text(last)
            )
        }
        None => format!("steps {first}–{last}"),
    }
}

/// The title of a time axis: `"step"`, `"time"` or `"time (s)"`.
pub(crate) fn axis_title(time: Option<&TimeScale>) -> String {
    match time {
        Some(TimeScale {
            unit: Some(unit), ..
        }) => format!("time ({})", esc(unit)),
        Some(_) => "time".to_string(),
        None => "step".to_string(),
    }
}

/// The tick positions (steps, possibly fractional) and labels of a time axis over `window`:
/// about ten nice values of the step index, or with a time scale of the time.
pub(crate) fn axis_ticks(window: Window, time: Option<&TimeScale>) -> Vec<(f64, String)> {
    match time {
        Some(time) if time.step > 0.0 => {
            let (t0, t1) = (
                window.first as f64 * time.step,
                window.last as f64 * time.step,
            );
            let tick = svg::tick_step((t1 - t0).max(time.step), 10);
            let decimals = svg::tick_decimals(tick);
            svg::ticks(t0, t1, tick)
                .into_iter()
                .map(|t| (t / time.step, svg::value(t, decimals)))
                .collect()
        }
        _ => {
            let tick = svg::step_tick(window.len() as f64, 10) as f64;
            svg::ticks(window.first as f64, window.last as f64, tick)
                .into_iter()
                .map(|s| (s, svg::value(s, 0)))
                .collect()
        }
    }
}

/// Draws a time axis over `window` mapped by `x` from pixel `left` to `right`: a line at
/// `y_line`, ticks pointing `tick_dir` (1 down, -1 up) and their labels at `y_text`.
#[allow(clippy::too_many_arguments)]
pub(crate) fn draw_axis(
    out: &mut String,
    window: Window,
    time: Option<&TimeScale>,
    x: &svg::Scale,
    (left, right): (f64, f64),
    y_line: f64,
    y_text: f64,
    tick_dir: f64,
) {
    let _ = write!(
        out,
        "<line x1=\"{}\" x2=\"{}\" y1=\"{y}\" y2=\"{y}\" stroke=\"{INK}\"/>",
        n(left),
        n(right),
        y = n(y_line)
    );
    for (at, label) in axis_ticks(window, time) {
        let px = x.at(at);
        let _ = write!(
            out,
            "<line x1=\"{p}\" x2=\"{p}\" y1=\"{}\" y2=\"{}\" stroke=\"{INK}\"/>",
            n(y_line),
            n(y_line + 3.0 * tick_dir),
            p = n(px)
        );
        svg::text(out, px, y_text, "middle", "tick", &label);
    }
}

impl Context<'_> {
    /// One step in words: `"step 5"`, or with a time scale `"step 5 (t = 0.5 s)"`.
    pub fn step_text(&self, step: Step) -> String {
        span_words(step, step, self.report.time.as_ref())
    }

    /// A span of steps in words: `"steps 3–7"`, or `"steps 3–7 (t = 0.3–0.7 s)"`.
    pub fn span_text(&self, first: Step, last: Step) -> String {
        span_words(first, last, self.report.time.as_ref())
    }

    /// The title of a time axis: `"step"`, `"time"` or `"time (s)"`.
    pub fn time_title(&self) -> String {
        axis_title(self.report.time.as_ref())
    }

    /// Draws a time axis: a line at `y_line` across the plot, ticks pointing `tick_dir` (1
    /// down, -1 up) and their labels at `y_text`.
    pub fn time_axis(&self, out: &mut String, y_line: f64, y_text: f64, tick_dir: f64) {
        draw_axis(
            out,
            self.window,
            self.report.time.as_ref(),
            &self.time_scale(),
            (self.left, WIDTH - RIGHT),
            y_line,
            y_text,
            tick_dir,
        );
    }

    /// Writes the time axis title centred under the plot at `y`.
    pub fn time_axis_title(&self, out: &mut String, y: f64) {
        let _ = write!(
            out,
            "<text class=\"axis-label\" x=\"{}\" y=\"{}\" text-anchor=\"middle\">{}</text>",
            n((self.left + WIDTH - RIGHT) / 2.0),
            n(y),
            self.time_title()
        );
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn times_keep_the_step_sizes_decimals() {
        let time = TimeScale {
            step: 0.1,
            unit: Some("s".to_string()),
        };
        // 3 x 0.1 is 0.30000000000000004 in floating point: written with one decimal.
        assert_eq!(time.time_text(3), "0.3 s");
        let time = TimeScale {
            step: 2.0,
            unit: None,
        };
        assert_eq!(time.time_text(150), "300");
        let time = TimeScale {
            step: 0.04,
            unit: None,
        };
        assert_eq!(time.time_text(-7), "-0.28");
    }
}
