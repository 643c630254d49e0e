//! The top view: true paths (wide grey, labelled at their start) and estimated tracks (thin, in
//! the track's colour and dash pattern, as in the identity chart) in the plane of the first two
//! state columns, one unit the same length on both axes; a ring marks where each switch
//! happened (dashed for a half switch). Only the steps of the window shown are drawn; above
//! [`Limits::max_top_objects`](super::Limits) true objects, only those with a switch there and
//! the tracks that covered them. Above `max_top_points` points, one step in k is drawn (the ends
//! of each run always); above `max_switch_marks` switches, rings that fall in one small cell are
//! merged and count their switches.

use std::collections::BTreeMap;
use std::fmt::Write;

use super::over_time::describe;
use super::style::{self, INK};
use super::svg::{self, esc, n, Scale};
use super::{Context, Figure, RIGHT, WIDTH};
use crate::assignment::switches::SwitchEvent;
use crate::trajectory::{Step, Trajectory, Window};

const LEFT: f64 = 64.0;
const TOP: f64 = 30.0;
const BOTTOM: f64 = 46.0;
const MAX_PLOT_H: f64 = 620.0;
const CELL: f64 = 14.0;

/// The figure's caption.
pub(super) fn caption(context: &Context) -> String {
    let columns = &context.report.state_columns;
    if columns.len() < 2 {
        return "A map of the paths needs states of two or more dimensions.".to_string();
    }
    format!(
        "The paths seen from above ({} across, {} up, in {}). True paths are wide grey lines \
         labelled at their start; each estimated track is a thin line in its colour and dash \
         pattern from the identity chart. A ring marks where a switch happened (dashed: a half \
         switch).",
        esc(&columns[0]),
        esc(&columns[1]),
        esc(&context.unit)
    )
}

/// The points of a trajectory within the window.
fn points_in(trajectory: &Trajectory, window: Window) -> impl Iterator<Item = (Step, &[f64])> {
    trajectory
        .points()
        .skip_while(move |&(s, _)| s < window.first)
        .take_while(move |&(s, _)| s <= window.last)
}

/// Runs of consecutive steps of a trajectory within the window, thinned to every `k`-th step
/// of the window (the ends of each run kept), as point lists in the plane of the first two
/// coordinates.
fn thinned_runs(trajectory: &Trajectory, k: usize, window: Window) -> Vec<Vec<(Step, f64, f64)>> {
    let mut runs: Vec<Vec<(Step, f64, f64)>> = Vec::new();
    let steps = trajectory.steps();
    let origin = window.first;
    let mut start = steps.partition_point(|&s| s < window.first);
    let stop = steps.partition_point(|&s| s <= window.last);
    while start < stop {
        let mut end = start + 1;
        while end < stop && steps[end] == steps[end - 1] + 1 {
            end += 1;
        }
        let mut run = Vec::new();
        for (index, &step) in steps.iter().enumerate().take(end).skip(start) {
            let keep = index == start || index + 1 == end || (step - origin) % k as Step == 0;
            if keep {
                let state = trajectory.state(index);
                run.push((step, state[0], state[1]));
            }
        }
        runs.push(run);
        start = end;
    }
    runs
}

/// The true objects and the tracks (with their index) the view draws: those with a point in
/// the window; above [`Limits::max_top_objects`](super::Limits) true objects, only those with a
/// switch in the window (worst ranked first, at most that many) and the tracks that covered
/// them there. What is left out is said in `notes`.
fn selection<'a>(
    context: &Context<'a>,
    notes: &mut Vec<String>,
) -> (Vec<&'a Trajectory>, Vec<(usize, &'a Trajectory)>) {
    let window = context.window;
    let report = context.report;
    let tracker = context.tracker;
    let present = |t: &Trajectory| points_in(t, window).next().is_some();
    let truths: Vec<&Trajectory> = report
        .truth
        .trajectories()
        .iter()
        .filter(|t| present(t))
        .collect();
    let estimates: Vec<(usize, &Trajectory)> = tracker
        .estimate
        .trajectories()
        .iter()
        .enumerate()
        .filter(|(_, t)| present(t))
        .collect();
    let limit = context.limits.max_top_objects.max(1);
    if truths.len() <= limit {
        return (truths, estimates);
    }
    // The audit ranks the worst covered first; keep those with a switch in the window.
    let switched = |id: &str| {
        tracker
            .switches
            .iter()
            .any(|e| e.truth == id && e.time >= window.first && e.time <= window.last)
    };
    let chosen: Vec<&str> = tracker
        .audit
        .truths
        .iter()
        .filter(|a| switched(&a.truth))
        .take(limit)
        .map(|a| a.truth.as_str())
        .collect();
    let mut covering: Vec<&str> = tracker
        .audit
        .truths
        .iter()
        .filter(|a| chosen.contains(&a.truth.as_str()))
        .flat_map(|a| a.covered.iter())
        .filter(|span| span.first <= window.last && span.last >= window.first)
        .map(|span| span.estimate.as_str())
        .collect();
    covering.sort_unstable();
    covering.dedup();
    notes.push(format!(
        "{} true objects are too many to follow in one view: it draws only the {} with a switch \
         {}(the worst covered first), and the {} track{} that covered them.{}",
        truths.len(),
        chosen.len(),
        if report.view.is_some() {
            "within the steps shown "
        } else {
            ""
        },
        covering.len(),
        super::plural(covering.len()),
        if report.view.is_none() {
            " A shorter stretch of steps (<code>--from</code>, <code>--to</code>) untangles \
             long paths."
        } else {
            ""
        }
    ));
    (
        truths
            .into_iter()
            .filter(|t| chosen.contains(&t.id()))
            .collect(),
        estimates
            .into_iter()
            .filter(|(_, t)| covering.binary_search(&t.id()).is_ok())
            .collect(),
    )
}

/// The truth's position at `step`, or at its nearest present step.
fn position_at(trajectory: &Trajectory, step: Step) -> Option<(f64, f64)> {
    let steps = trajectory.steps();
    if steps.is_empty() {
        return None;
    }
    let index = steps.partition_point(|&s| s < step);
    let chosen = if index >= steps.len() {
        steps.len() - 1
    } else if steps[index] == step || index == 0 {
        index
    } else if step - steps[index - 1] <= steps[index] - step {
        index - 1
    } else {
        index
    };
    let state = trajectory.state(chosen);
    Some((state[0], state[1]))
}

fn points(run: &[(Step, f64, f64)], x: &Scale, y: &Scale) -> String {
    let mut text = String::new();
    for (k, &(_, px, py)) in run.iter().enumerate() {
        if k > 0 {
            text.push(' ');
        }
        let _ = write!(text, "{},{}", n(x.at(px)), n(y.at(py)));
    }
    text
}

/// Draws the chart.
pub(super) fn chart(context: &Context) -> Figure {
    let mut notes = Vec::new();
    let report = context.report;
    let tracker = context.tracker;
    let dim = report.truth.dim();
    if dim < 2 || report.state_columns.len() < 2 {
        notes.push("The states have one dimension: there is no top view.".to_string());
        return Figure {
            svg: String::new(),
            notes,
        };
    }
    if dim > 2 {
        notes.push(format!(
            "The states have {dim} dimensions: the top view shows the first two, {} and {}.",
            esc(&report.state_columns[0]),
            esc(&report.state_columns[1])
        ));
    }
    let window = context.window;
    let (truths, estimates) = selection(context, &mut notes);
    let all = truths
        .iter()
        .copied()
        .chain(estimates.iter().map(|&(_, t)| t));
    let (mut x0, mut x1, mut y0, mut y1) = (
        f64::INFINITY,
        f64::NEG_INFINITY,
        f64::INFINITY,
        f64::NEG_INFINITY,
    );
    let mut total = 0usize;
    for trajectory in all {
        for (_, state) in points_in(trajectory, window) {
            x0 = x0.min(state[0]);
            x1 = x1.max(state[0]);
            y0 = y0.min(state[1]);
            y1 = y1.max(state[1]);
            total += 1;
        }
    }
    if total == 0 {
        notes.push("No positions to draw.".to_string());
        return Figure {
            svg: String::new(),
            notes,
        };
    }
    let k = total.div_ceil(context.limits.max_top_points.max(1)).max(1);
    if k > 1 {
        notes.push(format!(
            "{total} positions are more than this view draws: it draws one step in {k} of each \
             path, and the first and last step of each unbroken run."
        ));
    }
    let span = (x1 - x0).max(y1 - y0);
    let span = if span > 0.0 && span.is_finite() {
        span
    } else {
        1.0
    };
    let pad = span * 0.03;
    let (x0, x1, y0, y1) = (x0 - pad, x1 + pad, y0 - pad, y1 + pad);
    let (dx, dy) = ((x1 - x0).max(pad), (y1 - y0).max(pad));
    let avail_w = WIDTH - LEFT - RIGHT;
    let scale = (avail_w / dx).min(MAX_PLOT_H / dy);
    let (plot_w, plot_h) = (dx * scale, dy * scale);
    let plot_left = LEFT + (avail_w - plot_w) / 2.0;
    let x = Scale::new(x0, x1, plot_left, plot_left + plot_w);
    let y = Scale::new(y0, y1, TOP + plot_h, TOP);
    let height = TOP + plot_h + BOTTOM;

    let mut out = String::new();
    let _ = write!(
        out,
        "<svg class=\"top-view\" viewBox=\"0 0 {w} {h}\" width=\"{w}\" height=\"{h}\" role=\"img\" \
         aria-label=\"True and estimated paths of {name} seen from above, with switch locations\">",
        w = n(WIDTH),
        h = n(height),
        name = esc(&tracker.name)
    );

    // Legend.
    out.push_str("<g class=\"legend\">");
    let lx = plot_left;
    let _ = write!(
        out,
        "<line x1=\"{}\" x2=\"{}\" y1=\"10\" y2=\"10\" stroke=\"#5b6470\" stroke-opacity=\"0.45\" stroke-width=\"5\" stroke-linecap=\"round\"/>",
        n(lx),
        n(lx + 24.0)
    );
    svg::text(&mut out, lx + 32.0, 14.0, "start", "", "true path");
    let lx = lx + 32.0 + svg::text_width(9) + 22.0;
    for (i, style_index) in [4usize, 8, 16].iter().enumerate() {
        let s = style::Style::from_index(*style_index);
        let _ = write!(
            out,
            "<line x1=\"{}\" x2=\"{}\" y1=\"{y}\" y2=\"{y}\" {}/>",
            n(lx),
            n(lx + 24.0),
            s.stroke(1.6),
            y = n(5.0 + i as f64 * 5.0)
        );
    }
    svg::text(
        &mut out,
        lx + 32.0,
        14.0,
        "start",
        "",
        "estimated tracks (style as in the identity chart)",
    );
    let lx = lx + 32.0 + svg::text_width(49) + 22.0;
    let _ = write!(
        out,
        "<circle cx=\"{}\" cy=\"10\" r=\"5.5\" fill=\"#ffffff\" fill-opacity=\"0.6\" stroke=\"{INK}\" stroke-width=\"1.8\"/>",
        n(lx + 6.0)
    );
    svg::text(&mut out, lx + 18.0, 14.0, "start", "", "switch");
    out.push_str("</g>");

    // Grid and axes, one tick spacing for both.
    let step = svg::tick_step(dx.max(dy), 8);
    let decimals = svg::tick_decimals(step);
    out.push_str("<g class=\"axis\">");
    let _ = write!(
        out,
        "<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"#fbfcfd\" stroke=\"{INK}\" stroke-width=\"0.8\"/>",
        n(plot_left),
        n(TOP),
        n(plot_w),
        n(plot_h)
    );
    for value in svg::ticks(x0, x1, step) {
        let px = x.at(value);
        let _ = write!(
            out,
            "<line x1=\"{p}\" x2=\"{p}\" y1=\"{}\" y2=\"{}\" stroke=\"#e4e7eb\"/>",
            n(TOP),
            n(TOP + plot_h),
            p = n(px)
        );
        svg::text(
            &mut out,
            px,
            TOP + plot_h + 14.0,
            "middle",
            "tick",
            &svg::value(value, decimals),
        );
    }
    for value in svg::ticks(y0, y1, step) {
        let py = y.at(value);
        let _ = write!(
            out,
            "<line x1=\"{}\" x2=\"{}\" y1=\"{p}\" y2=\"{p}\" stroke=\"#e4e7eb\"/>",
            n(plot_left),
            n(plot_left + plot_w),
            p = n(py)
        );
        svg::text(
            &mut out,
            plot_left - 5.0,
            py + 4.0,
            "end",
            "tick",
            &svg::value(value, decimals),
        );
    }
    let unit = &context.unit;
    svg::text(
        &mut out,
        plot_left + plot_w / 2.0,
        TOP + plot_h + 34.0,
        "middle",
        "axis-label",
        &format!("{} ({unit})", report.state_columns[0]),
    );
    let _ = write!(
        out,
        "<text class=\"axis-label\" transform=\"rotate(-90)\" x=\"{}\" y=\"{}\" text-anchor=\"middle\">{}</text>",
        n(-(TOP + plot_h / 2.0)),
        n(plot_left - 44.0),
        esc(&format!("{} ({unit})", report.state_columns[1]))
    );
    out.push_str("</g>");

    // True paths.
    out.push_str("<g class=\"truth-paths\" fill=\"none\" stroke=\"#5b6470\" stroke-opacity=\"0.45\" stroke-width=\"5\" stroke-linejoin=\"round\" stroke-linecap=\"round\">");
    for &trajectory in &truths {
        let span = trajectory.span().unwrap_or((0, 0));
        let _ = write!(
            out,
            "<g class=\"truth-path\" data-truth=\"{}\"><title>{}</title>",
            esc(trajectory.id()),
            esc(&format!(
                "true object {}, {}",
                trajectory.id(),
                context.span_text(span.0, span.1)
            ))
        );
        for run in thinned_runs(trajectory, k, window) {
            if run.len() == 1 {
                let _ = write!(
                    out,
                    "<circle cx=\"{}\" cy=\"{}\" r=\"2.5\" fill=\"#5b6470\" stroke=\"none\"/>",
                    n(x.at(run[0].1)),
                    n(y.at(run[0].2))
                );
            } else {
                let _ = write!(out, "<polyline points=\"{}\"/>", points(&run, &x, &y));
            }
        }
        out.push_str("</g>");
    }
    out.push_str("</g>");

    // Estimated tracks.
    out.push_str("<g class=\"tracks\" fill=\"none\" stroke-linejoin=\"round\">");
    for &(j, trajectory) in &estimates {
        let span = trajectory.span().unwrap_or((0, 0));
        let style = context.styles[j];
        let _ = write!(
            out,
            "<g class=\"track\" data-track=\"{}\" {} stroke-opacity=\"0.9\"><title>{}</title>",
            esc(trajectory.id()),
            style.stroke(1.3),
            esc(&format!(
                "track {}, {} ({})",
                trajectory.id(),
                context.span_text(span.0, span.1),
                style.describe()
            ))
        );
        for run in thinned_runs(trajectory, k, window) {
            if run.len() == 1 {
                let _ = write!(
                    out,
                    "<circle cx=\"{}\" cy=\"{}\" r=\"1.6\" fill=\"{}\" stroke=\"none\"/>",
                    n(x.at(run[0].1)),
                    n(y.at(run[0].2)),
                    style.hex()
                );
            } else {
                let _ = write!(out, "<polyline points=\"{}\"/>", points(&run, &x, &y));
            }
        }
        out.push_str("</g>");
    }
    out.push_str("</g>");

    // Labels at the start of each true path.
    if truths.len() <= context.limits.max_path_labels {
        out.push_str("<g class=\"path-labels\">");
        for &trajectory in &truths {
            if let Some((_, state)) = points_in(trajectory, window).next() {
                let (px, py) = (x.at(state[0]), y.at(state[1]));
                let _ = write!(
                    out,
                    "<circle cx=\"{}\" cy=\"{}\" r=\"2.6\" fill=\"{INK}\"/>",
                    n(px),
                    n(py)
                );
                svg::text(
                    &mut out,
                    px + 5.0,
                    py - 5.0,
                    "start",
                    "path-label",
                    trajectory.id(),
                );
            }
        }
        out.push_str("</g>");
    } else {
        notes.push(format!(
            "{} true paths are too many to label; hover over a path for its id.",
            truths.len()
        ));
    }

    // Switch locations.
    let switches: Vec<&SwitchEvent> = tracker
        .switches
        .iter()
        .filter(|e| e.time >= window.first && e.time <= window.last)
        .filter(|e| truths.iter().any(|t| t.id() == e.truth))
        .collect();
    let merge = switches.len() > context.limits.max_switch_marks.max(1);
    let mut cells: BTreeMap<(i64, i64), Vec<usize>> = BTreeMap::new();
    let mut located: Vec<(usize, f64, f64)> = Vec::new();
    for (e, event) in switches.iter().enumerate() {
        let Some(trajectory) = truths.iter().find(|t| t.id() == event.truth) else {
            continue;
        };
        let Some((sx, sy)) = position_at(trajectory, event.time) else {
            continue;
        };
        let (px, py) = (x.at(sx), y.at(sy));
        if merge {
            cells
                .entry(((px / CELL).floor() as i64, (py / CELL).floor() as i64))
                .or_default()
                .push(located.len());
        }
        located.push((e, px, py));
    }
    let _ = write!(
        out,
        "<g class=\"switch-marks\" data-events=\"{}\" fill=\"#ffffff\" fill-opacity=\"0.6\" stroke=\"{INK}\" stroke-width=\"1.8\">",
        switches.len()
    );
    let ring = |out: &mut String, px: f64, py: f64, count: usize, full: bool, title: &str| {
        let dash = if full {
            ""
        } else {
            " stroke-dasharray=\"2.5 2\""
        };
        let _ = write!(
            out,
            "<circle class=\"switch-mark\" data-events=\"{count}\" cx=\"{}\" cy=\"{}\" r=\"{}\"{dash}><title>{}</title></circle>",
            n(px),
            n(py),
            if count > 1 { "7" } else { "5.5" },
            esc(title)
        );
    };
    if merge {
        notes.push(format!(
            "{} switches are more than this view marks one by one: switches within {} pixels of \
             each other share one larger ring, and its tooltip counts them.",
            switches.len(),
            CELL
        ));
        for members in cells.values() {
            let (sum_x, sum_y) = members.iter().fold((0.0, 0.0), |acc, &m| {
                (acc.0 + located[m].1, acc.1 + located[m].2)
            });
            let count = members.len() as f64;
            let events: Vec<_> = members.iter().map(|&m| &switches[located[m].0]).collect();
            let full = events.iter().all(|e| e.from.is_some() && e.to.is_some());
            let title = if events.len() == 1 {
                describe(events[0], context)
            } else {
                let first = events.iter().map(|e| e.time).min().unwrap_or(0);
                let last = events.iter().map(|e| e.time).max().unwrap_or(0);
                format!(
                    "{} switches here, {}",
                    events.len(),
                    if first == last {
                        format!("step {first}")
                    } else {
                        format!("steps {first}–{last}")
                    }
                )
            };
            ring(
                &mut out,
                sum_x / count,
                sum_y / count,
                members.len(),
                full,
                &title,
            );
        }
    } else {
        for &(e, px, py) in &located {
            let event = switches[e];
            ring(
                &mut out,
                px,
                py,
                1,
                event.from.is_some() && event.to.is_some(),
                &describe(event, context),
            );
        }
    }
    out.push_str("</g></svg>");
    Figure { svg: out, notes }
}
