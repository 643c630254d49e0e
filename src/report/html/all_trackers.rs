//! All trackers over time: every tracker's per-step GOSPA (the sum of its parts) as one line on
//! a shared time axis and y scale, and under it a strip per tracker counting its switches per
//! stretch of time, so that where one tracker does worse than another reads at a glance. Uses
//! the columns and switch bins of the errors charts, so the numbers agree with them.

use std::fmt::Write;

use super::over_time::{self, badge, bins, events_in, switch_bin_size, switch_bins};
use super::style::{Style, INK};
use super::svg::{self, esc, n, Scale};
use super::{Context, RIGHT, WIDTH};

pub(super) const LEGEND_ROW_H: f64 = 18.0;
const PLOT_H: f64 = 210.0;
const STRIP_H: f64 = 16.0;

/// The line style of the tracker with this index (its colour, then a dash pattern once the
/// colours run out).
pub(super) fn tracker_style(index: usize) -> Style {
    Style::from_index(index)
}

/// Writes the section; `context` is the first tracker's (its window, margins and limits are
/// shared by all).
pub(super) fn section(out: &mut String, context: &Context, has_window: bool) {
    let report = context.report;
    let what = if report.trackers.iter().all(|t| t.score.params.order == 1.0) {
        "GOSPA"
    } else {
        "GOSPA<sup>p</sup>"
    };
    let stretch = if has_window {
        let size = switch_bin_size(context, over_time::bin_size(context));
        format!("{size} step{}", super::plural(size))
    } else {
        "time".to_string()
    };
    let _ = writeln!(
        out,
        "<section id=\"all\">\n<h2>All trackers over time</h2>\n<figure class=\"chart all\">\
         <figcaption><p>Each tracker's {what} at each step (the top of its stack in its errors \
         chart below) as one line on a shared scale: lower is better. Under the plot, one strip \
         per tracker counts its identity switches per stretch of {stretch} (dark: all full; \
         white: all half; grey: both); hover over a count for the switches in it.</p></figcaption>"
    );
    if has_window {
        let (svg, notes) = chart(context);
        out.push_str(&svg);
        out.push('\n');
        for note in notes {
            let _ = writeln!(out, "<p class=\"note\">{note}</p>");
        }
    } else {
        let _ = writeln!(
            out,
            "<p class=\"note\">{}</p>",
            super::nothing_to_draw(report)
        );
    }
    out.push_str("</figure>\n</section>\n");
}

/// The legend of the tracker lines from the left margin, wrapping: one row holds as many names
/// as fit. Returns it and the index of its last row.
pub(super) fn legend(context: &Context) -> (String, usize) {
    let left = context.left;
    let mut legend = String::new();
    let (mut lx, mut row) = (left, 0usize);
    for (index, tracker) in context.report.trackers.iter().enumerate() {
        let width = 30.0 + svg::text_width(tracker.name.chars().count()) + 22.0;
        if lx + width > WIDTH - RIGHT && lx > left {
            lx = left;
            row += 1;
        }
        let ly = 10.0 + row as f64 * LEGEND_ROW_H;
        let _ = write!(
            legend,
            "<line x1=\"{}\" x2=\"{}\" y1=\"{y}\" y2=\"{y}\" {}/>",
            n(lx),
            n(lx + 24.0),
            tracker_style(index).stroke(2.2),
            y = n(ly)
        );
        svg::text(&mut legend, lx + 30.0, ly + 4.0, "start", "", &tracker.name);
        lx += width;
    }
    (legend, row)
}

fn chart(context: &Context) -> (String, Vec<String>) {
    let report = context.report;
    let window = context.window;
    let size = over_time::bin_size(context);
    let mut notes = Vec::new();
    if size > 1 {
        notes.push(format!(
            "{} steps are more than this chart draws one by one: each line shows the mean per \
             step over bins of {size} steps.",
            window.len()
        ));
    }
    let columns: Vec<Vec<over_time::Bin>> = report
        .trackers
        .iter()
        .map(|t| bins(t, window, size))
        .collect();
    let totals: Vec<Vec<f64>> = columns
        .iter()
        .map(|bins| bins.iter().map(|b| b.parts.iter().sum()).collect())
        .collect();
    let peak = totals.iter().flatten().copied().fold(0.0, f64::max);
    let y_step = svg::tick_step(if peak > 0.0 { peak } else { 1.0 }, 4);
    let y_top = ((peak / y_step).ceil() * y_step).max(y_step);
    let switch_size = switch_bin_size(context, size);

    let left = context.left;
    let x = context.time_scale();
    let (legend, row) = legend(context);
    let plot_top = 8.0 + (row + 1) as f64 * LEGEND_ROW_H;
    let plot_bottom = plot_top + PLOT_H;
    let y = Scale::new(0.0, y_top, plot_bottom, plot_top);
    let strips_top = plot_bottom + 6.0;
    let strips_bottom = strips_top + report.trackers.len() as f64 * STRIP_H;
    let height = strips_bottom + 42.0;

    let mut out = String::new();
    let _ = write!(
        out,
        "<svg class=\"all-trackers-chart\" viewBox=\"0 0 {w} {h}\" width=\"{w}\" height=\"{h}\" role=\"img\" \
         aria-label=\"Per-step GOSPA of every tracker on one time axis, with switch counts\">",
        w = n(WIDTH),
        h = n(height)
    );
    let _ = write!(out, "<g class=\"legend\">{legend}</g>");

    over_time::y_axis(&mut out, context, &y, y_top, y_step);

    // One line per tracker, the first drawn last so that it stays on top.
    out.push_str("<g class=\"lines\" fill=\"none\" stroke-linejoin=\"round\">");
    for (index, tracker) in report.trackers.iter().enumerate().rev() {
        let mean = over_time::mean_per_step(&columns[index], &totals[index], window.len());
        let _ = write!(
            out,
            "<path class=\"tracker-line\" data-tracker=\"{}\" d=\"{}\" {} stroke-opacity=\"0.9\"><title>{}</title></path>",
            esc(&tracker.name),
            over_time::step_line(&columns[index], &totals[index], &x, &y),
            tracker_style(index).stroke(1.5),
            esc(&format!(
                "{}: mean per step {} over {}",
                tracker.name,
                svg::short(mean),
                context.span_text(window.first, window.last)
            ))
        );
    }
    out.push_str("</g>");

    // Time axis below the strips, the plot's own base line above them.
    let _ = write!(
        out,
        "<line x1=\"{}\" x2=\"{}\" y1=\"{b}\" y2=\"{b}\" stroke=\"{INK}\"/>",
        n(left),
        n(WIDTH - RIGHT),
        b = n(plot_bottom)
    );
    out.push_str("<g class=\"axis x\">");
    context.time_axis(&mut out, strips_bottom + 2.0, strips_bottom + 16.0, 1.0);
    context.time_axis_title(&mut out, strips_bottom + 34.0);
    out.push_str("</g>");

    // A strip of switch badges per tracker.
    for (index, tracker) in report.trackers.iter().enumerate() {
        let top = strips_top + index as f64 * STRIP_H;
        let events = events_in(&tracker.switches, window);
        let _ = write!(
            out,
            "<g class=\"switch-strip\" data-tracker=\"{}\" data-events=\"{}\">",
            esc(&tracker.name),
            events.len()
        );
        if index % 2 == 0 {
            over_time::row_band(&mut out, context, top, STRIP_H);
        }
        svg::text(
            &mut out,
            left - 6.0,
            top + 12.0,
            "end",
            "row-label",
            &tracker.name,
        );
        // Each tracker's switch tooltips read with its own context (its track ids).
        let own = Context {
            prefix: String::new(),
            left,
            window,
            unit: context.unit.clone(),
            order: tracker.score.params.order,
            report,
            tracker,
            styles: Vec::new(),
            limits: context.limits,
        };
        for bin in switch_bins(&events, window, switch_size) {
            badge(&mut out, &own, &bin, &x, top + 2.0);
        }
        out.push_str("</g>");
    }
    out.push_str("</svg>");
    (out, notes)
}
