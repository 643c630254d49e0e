//! Classes on the page (`report --class-column`): a table of each tracker's d and parts per
//! class beside all classes together, and one chart per class of every tracker's per-step
//! GOSPA in that class.
//!
//! Layout: small multiples, one chart per class under the chart of all classes together, on
//! the same time axis and one y scale shared by the classes, each tracker keeping its line
//! style. Per-class lines inside the one chart of all trackers would multiply its lines by the
//! classes and tangle; one chart per class keeps each as readable as the chart above it, and
//! the shared scale shows at a glance which class carries the cost. The tracker sections
//! below draw all classes together (their switch marks and audit rows name the class).

use std::fmt::Write;

use super::all_trackers::{legend, tracker_style, LEGEND_ROW_H};
use super::over_time::{self, bins_of, step_line, Bin};
use super::style::INK;
use super::svg::{self, esc, n, Scale};
use super::{Context, Report, TrackerResults, RIGHT, WIDTH};
use crate::trajectory_metric::TrajectoryScore;

const PLOT_H: f64 = 170.0;

/// The classes of every tracker, in byte order (a tracker lacking one had neither truth nor
/// estimate in it: its values there are 0).
pub(super) fn classes(report: &Report) -> Vec<String> {
    let mut names: Vec<String> = report
        .trackers
        .iter()
        .flat_map(|t| t.classes.iter().map(|c| c.class.clone()))
        .collect();
    names.sort();
    names.dedup();
    names
}

/// A row of the table: its key, its heading, its value and its decimals.
type TableRow = (&'static str, String, fn(&TrajectoryScore) -> f64, usize);

/// A tracker's score in `class`, `None` when it has none there (nothing of that class on
/// either side).
fn score_in<'a>(tracker: &'a TrackerResults, class: &str) -> Option<&'a TrajectoryScore> {
    tracker
        .classes
        .iter()
        .find(|c| c.class == class)
        .map(|c| &c.score)
}

/// The table of the summary: per class, each tracker's d (with its class's share of the total
/// d^p) and its four parts; then all classes together. Nothing without classes.
/// `units` are the unit of d and of the parts (its p-th power), as markup.
pub(super) fn table(
    out: &mut String,
    report: &Report,
    decimals: (usize, usize),
    (u, power_unit): (&str, &str),
) {
    let names = classes(report);
    if names.is_empty() {
        return;
    }
    let (dec, dec_p) = decimals;
    out.push_str(
        "<h3 id=\"by-class\">By class</h3>\n<table class=\"summary classes\">\n<thead><tr>\
         <th scope=\"col\">class</th><th scope=\"col\"></th>",
    );
    for tracker in &report.trackers {
        let _ = write!(out, "<th scope=\"col\">{}</th>", esc(&tracker.name));
    }
    out.push_str("</tr></thead>\n<tbody>\n");
    let compare = report.trackers.len() > 1;
    // `None` is all classes together: a class may have any name, "all classes" included.
    for class in names.iter().map(Some).chain([None]) {
        let scores: Vec<Option<&TrajectoryScore>> = report
            .trackers
            .iter()
            .map(|t| match class {
                Some(class) => score_in(t, class),
                None => Some(&t.score),
            })
            .collect();
        let rows: [TableRow; 5] = [
            ("metric", format!("d ({u})"), |s| s.metric, dec),
            (
                "localisation",
                format!("localisation ({power_unit})"),
                |s| s.parts.localization,
                dec_p,
            ),
            (
                "missed",
                format!("missed ({power_unit})"),
                |s| s.parts.missed,
                dec_p,
            ),
            (
                "false",
                format!("false ({power_unit})"),
                |s| s.parts.false_,
                dec_p,
            ),
            (
                "switching",
                format!("switching ({power_unit})"),
                |s| s.parts.switching,
                dec_p,
            ),
        ];
        for (k, (key, heading, value, decimals)) in rows.iter().enumerate() {
            let values: Vec<f64> = scores.iter().map(|s| s.map_or(0.0, value)).collect();
            let lowest = values.iter().copied().fold(f64::INFINITY, f64::min);
            let _ = write!(
                out,
                "<tr class=\"class-row{}\" data-class=\"{}\" data-key=\"{key}\">",
                if k == 0 { " group" } else { "" },
                esc(class.map_or("", String::as_str))
            );
            if k == 0 {
                let _ = write!(
                    out,
                    "<th scope=\"rowgroup\" rowspan=\"{}\">{}</th>",
                    rows.len(),
                    match class {
                        Some(class) => esc(class),
                        None => "<em>all classes</em>".to_string(),
                    }
                );
            }
            let _ = write!(out, "<th scope=\"row\">{heading}</th>");
            for (t, v) in report.trackers.iter().zip(&values) {
                let best = compare && (v - lowest).abs() <= 1e-9 * lowest.abs().max(1.0);
                let share = match (k, class) {
                    (0, Some(class)) if t.score.total > 0.0 => {
                        let part = scores_total(t, class);
                        format!(
                            "<span class=\"share\">{}%</span>",
                            svg::value(100.0 * part / t.score.total, 1)
                        )
                    }
                    _ => String::new(),
                };
                let _ = write!(
                    out,
                    "<td{} data-value=\"{}\">{}{share}</td>",
                    if best { " class=\"best\"" } else { "" },
                    super::comparison::exact(*v),
                    svg::value(*v, *decimals)
                );
            }
            out.push_str("</tr>\n");
        }
    }
    out.push_str("</tbody>\n</table>\n");
    let _ = writeln!(
        out,
        "<p class=\"table-note\">Objects are matched only within their class. Each class is \
         scored on its own; all classes together add up their d<sup>p</sup> and parts (d is the \
         p-th root of the sum). In grey, each class's share of the tracker's total \
         d<sup>p</sup>. A class a tracker has nothing of, on either side, counts 0.</p>"
    );
}

/// A tracker's d^p in `class` (0 when it has nothing there).
fn scores_total(tracker: &TrackerResults, class: &str) -> f64 {
    score_in(tracker, class).map_or(0.0, |s| s.total)
}

/// Writes the section of per-class charts (nothing without classes).
pub(super) fn section(out: &mut String, context: &Context, has_window: bool) {
    let report = context.report;
    let names = classes(report);
    if names.is_empty() {
        return;
    }
    let what = if context.order == 1.0 {
        "GOSPA"
    } else {
        "GOSPA<sup>p</sup>"
    };
    let _ = writeln!(
        out,
        "<section id=\"classes\">\n<h2>Each class over time</h2>\n<p class=\"table-note\">One \
         chart per class: each tracker's {what} at each step within that class, on the time axis \
         and line styles of the chart above and one scale for every class, so the class that \
         carries the cost stands out. At each step the classes' {what} add up to the total.</p>"
    );
    if !has_window {
        let _ = writeln!(
            out,
            "<p class=\"note\">{}</p>",
            super::nothing_to_draw(report)
        );
        out.push_str("</section>\n");
        return;
    }
    let window = context.window;
    let size = over_time::bin_size(context);
    // Per class, per tracker: the columns and their totals (zero for a tracker without it).
    let columns: Vec<Vec<(Vec<Bin>, Vec<f64>)>> = names
        .iter()
        .map(|class| {
            report
                .trackers
                .iter()
                .map(|t| {
                    let bins = match t.classes.iter().find(|c| &c.class == class) {
                        Some(c) => bins_of(&c.steps.occupied, window, size),
                        None => bins_of(&[], window, size),
                    };
                    let totals = bins.iter().map(|b| b.parts.iter().sum()).collect();
                    (bins, totals)
                })
                .collect()
        })
        .collect();
    let peak = columns
        .iter()
        .flatten()
        .flat_map(|(_, totals)| totals.iter().copied())
        .fold(0.0, f64::max);
    let y_step = svg::tick_step(if peak > 0.0 { peak } else { 1.0 }, 3);
    let y_top = ((peak / y_step).ceil() * y_step).max(y_step);
    let (legend_svg, legend_rows) = legend(context);
    let x = context.time_scale();
    for (class, series) in names.iter().zip(&columns) {
        let plot_top = 8.0 + (legend_rows + 1) as f64 * LEGEND_ROW_H;
        let plot_bottom = plot_top + PLOT_H;
        let height = plot_bottom + 42.0;
        let y = Scale::new(0.0, y_top, plot_bottom, plot_top);
        let _ = write!(
            out,
            "<figure class=\"chart class\" data-class=\"{}\"><figcaption><h3>Class {}</h3>\
             </figcaption><svg class=\"class-chart\" viewBox=\"0 0 {w} {h}\" width=\"{w}\" \
             height=\"{h}\" role=\"img\" aria-label=\"Per-step GOSPA of every tracker in class {}\">\
             <g class=\"legend\">{legend_svg}</g>",
            esc(class),
            esc(class),
            esc(class),
            w = n(WIDTH),
            h = n(height)
        );
        over_time::y_axis(out, context, &y, y_top, y_step);
        out.push_str("<g class=\"lines\" fill=\"none\" stroke-linejoin=\"round\">");
        for (index, tracker) in report.trackers.iter().enumerate().rev() {
            let (bins, totals) = &series[index];
            let mean = over_time::mean_per_step(bins, totals, window.len());
            let values = totals
                .iter()
                .map(|v| super::comparison::exact(*v))
                .collect::<Vec<_>>()
                .join(" ");
            let _ = write!(
                out,
                "<path class=\"class-line\" data-class=\"{}\" data-tracker=\"{}\" data-bin=\"{size}\" \
                 data-values=\"{values}\" d=\"{}\" {} stroke-opacity=\"0.9\"><title>{}</title></path>",
                esc(class),
                esc(&tracker.name),
                step_line(bins, totals, &x, &y),
                tracker_style(index).stroke(1.5),
                esc(&format!(
                    "{} in class {class}: mean per step {} over {}",
                    tracker.name,
                    svg::short(mean),
                    context.span_text(window.first, window.last)
                ))
            );
        }
        out.push_str("</g>");
        let _ = write!(
            out,
            "<g class=\"axis x\"><line x1=\"{}\" x2=\"{}\" y1=\"{b}\" y2=\"{b}\" stroke=\"{INK}\"/>",
            n(context.left),
            n(WIDTH - RIGHT),
            b = n(plot_bottom)
        );
        context.time_axis(out, plot_bottom, plot_bottom + 15.0, 1.0);
        context.time_axis_title(out, plot_bottom + 34.0);
        out.push_str("</g></svg></figure>\n");
    }
    if size > 1 {
        let _ = writeln!(
            out,
            "<p class=\"note\">{} steps are more than these charts draw one by one: each line \
             shows the mean per step over bins of {size} steps.</p>",
            window.len()
        );
    }
    out.push_str("</section>\n");
}
