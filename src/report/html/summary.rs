//! The summary: the parameters, then a table with one column per tracker (the metric, its
//! parts with their shares, the counts), the lowest value of each row in bold when several
//! trackers are compared, and a bar chart of each tracker's parts on one scale.

use std::fmt::Write;

use super::style::{self, Style, FALSE, INK, LOCALISATION, MISSED, SWITCHING};
use super::svg::{self, esc, n, Scale};
use super::{plural, Report, TrackerResults, RIGHT, WIDTH};
use crate::assignment::switches::switch_kinds;

fn unit(report: &Report) -> String {
    report
        .units
        .clone()
        .filter(|u| !u.trim().is_empty())
        .unwrap_or_else(|| "state units".to_string())
}

/// A table row: a heading and one cell per tracker, `Some(value)` when it takes part in the
/// "lowest is bold" comparison.
struct Row {
    heading: String,
    cells: Vec<(String, Option<f64>)>,
    group: bool,
    file: bool,
}

fn row(
    heading: &str,
    report: &Report,
    cell: impl Fn(&TrackerResults) -> (String, Option<f64>),
) -> Row {
    Row {
        heading: heading.to_string(),
        cells: report.trackers.iter().map(cell).collect(),
        group: false,
        file: false,
    }
}

fn share(part: f64, total: f64, decimals: usize) -> String {
    if total > 0.0 {
        format!(
            "{}<span class=\"share\">{}%</span>",
            svg::value(part, decimals),
            svg::value(100.0 * part / total, 1)
        )
    } else {
        svg::value(part, decimals)
    }
}

/// Decimals for values on the scale of `unit` (the cut-off, or its p-th power): three
/// significant digits of it, between 0 and 6 decimals.
fn decimals_for(unit: f64) -> usize {
    if unit > 0.0 && unit.is_finite() {
        (2.0 - unit.log10().floor()).clamp(0.0, 6.0) as usize
    } else {
        2
    }
}

/// Writes the summary section.
pub(super) fn section(out: &mut String, report: &Report) {
    out.push_str("<section id=\"summary\">\n<h2>Summary</h2>\n");
    let unit = unit(report);
    let Some(first) = report.trackers.first() else {
        out.push_str("<p class=\"note\">No tracker to show.</p>\n</section>\n");
        return;
    };
    let params = first.score.params;
    let same_params = report.trackers.iter().all(|t| t.score.params == params);
    let window = report
        .trackers
        .iter()
        .filter_map(|t| t.score.window)
        .reduce(|a, b| crate::trajectory::Window {
            first: a.first.min(b.first),
            last: a.last.max(b.last),
        });
    out.push_str("<dl class=\"params\">\n");
    let mut item = |term: &str, value: String| {
        let _ = writeln!(out, "<dt>{term}</dt><dd>{value}</dd>");
    };
    let u = esc(&unit);
    if same_params {
        item(
            "cut-off c",
            format!(
                "{} {u} — the most one object can cost at one step",
                params.cutoff
            ),
        );
        item("order p", params.order.to_string());
        item(
            "switching penalty γ",
            format!(
                "{} {u} — a full switch costs γ<sup>p</sup>, a half switch half that",
                params.switch_penalty
            ),
        );
        if !crate::trajectory_metric::is_even_share(&params.missed_share) {
            item(
                "missed share S",
                format!(
                    "{} — a missed object-step costs S c<sup>p</sup> = {}, a false one \
                     (1 − S) c<sup>p</sup> = {}",
                    params.missed_share,
                    crate::report::cost_param(params.missed_cost()),
                    crate::report::cost_param(params.false_cost())
                ),
            );
        }
    } else {
        item(
            "parameters",
            "differ between trackers: see the table".to_string(),
        );
    }
    item("base distance", esc(&report.distance));
    item(
        "state",
        format!("{} ({u})", esc(&report.state_columns.join(", "))),
    );
    item(
        "ground truth",
        format!(
            "<code>{}</code>, {} object{}",
            esc(&report.truth_source),
            report.truth.len(),
            plural(report.truth.len())
        ),
    );
    let times = |first: i64, last: i64| match &report.time {
        Some(time) => format!(
            ", time {} to {}",
            esc(&time.time_text(first)),
            esc(&time.time_text(last))
        ),
        None => String::new(),
    };
    if let Some(w) = window {
        item(
            "window",
            format!(
                "steps {} to {} ({} steps{})",
                w.first,
                w.last,
                w.len(),
                times(w.first, w.last)
            ),
        );
    }
    if report.view.is_some() {
        let shown = match super::shown_window(report) {
            Some(w) => format!(
                "steps {} to {} ({} steps{}) — the charts and top views below; this summary \
                 covers the whole window",
                w.first,
                w.last,
                w.len(),
                times(w.first, w.last)
            ),
            None => "no step of the inputs".to_string(),
        };
        item("shown", shown);
    }
    let classes = super::by_class::classes(report);
    if !classes.is_empty() {
        item(
            "classes",
            format!(
                "{} — objects matched only within their class (<a href=\"#by-class\">by \
                 class</a>)",
                esc(&classes.join(", "))
            ),
        );
    }
    item(
        "LP engine",
        format!(
            "{} (trajectory GOSPA solved as a linear program)",
            esc(&report.engine)
        ),
    );
    out.push_str("</dl>\n");

    let p1 = report.trackers.iter().all(|t| t.score.params.order == 1.0);
    // One number of decimals per kind of value, so that columns line up.
    let smallest =
        |f: fn(&TrackerResults) -> f64| report.trackers.iter().map(f).fold(f64::INFINITY, f64::min);
    let dec = decimals_for(smallest(|t| t.score.params.cutoff));
    let dec_p = decimals_for(smallest(|t| t.score.params.cutoff_power()));
    let power_unit = if p1 {
        u.clone()
    } else {
        format!("{u}<sup>p</sup>")
    };
    let mut rows: Vec<Row> = Vec::new();
    // Values normalised per step compare only over one window: a tracker whose output reaches
    // beyond the others' spreads its cost over more steps.
    let same_window = report
        .trackers
        .iter()
        .all(|t| t.score.window == first.score.window);
    let per_window = |value: f64| same_window.then_some(value);
    rows.push(Row {
        file: true,
        ..row("estimate file", report, |t| (esc(&t.source), None))
    });
    rows.push(row("tracks", report, |t| {
        (t.estimate.len().to_string(), None)
    }));
    if !same_params {
        rows.push(row("c, p, γ", report, |t| {
            let p = t.score.params;
            (
                format!("{}, {}, {}", p.cutoff, p.order, p.switch_penalty),
                None,
            )
        }));
    }
    rows.push(Row {
        group: true,
        ..row(&format!("trajectory GOSPA d ({u})"), report, |t| {
            (svg::value(t.score.metric, dec), Some(t.score.metric))
        })
    });
    if !p1 {
        rows.push(row(&format!("d<sup>p</sup> ({power_unit})"), report, |t| {
            (svg::value(t.score.total, dec_p), Some(t.score.total))
        }));
    }
    rows.push(row(
        &format!("per step, (d<sup>p</sup> / steps)<sup>1/p</sup> ({u})"),
        report,
        |t| {
            (
                svg::value(t.score.per_step, dec),
                per_window(t.score.per_step),
            )
        },
    ));
    rows.push(Row {
        group: true,
        ..row(&format!("localisation ({power_unit})"), report, |t| {
            (
                share(t.score.parts.localization, t.score.total, dec_p),
                Some(t.score.parts.localization),
            )
        })
    });
    rows.push(row(&format!("missed ({power_unit})"), report, |t| {
        (
            share(t.score.parts.missed, t.score.total, dec_p),
            Some(t.score.parts.missed),
        )
    }));
    rows.push(row(&format!("false ({power_unit})"), report, |t| {
        (
            share(t.score.parts.false_, t.score.total, dec_p),
            Some(t.score.parts.false_),
        )
    }));
    rows.push(row(&format!("switching ({power_unit})"), report, |t| {
        (
            share(t.score.parts.switching, t.score.total, dec_p),
            Some(t.score.parts.switching),
        )
    }));
    rows.push(Row {
        group: true,
        ..row("missed object-steps", report, |t| {
            (
                svg::value(
                    t.score.parts.missed_count,
                    count_decimals(t.score.parts.missed_count),
                ),
                Some(t.score.parts.missed_count),
            )
        })
    });
    rows.push(row("false object-steps", report, |t| {
        (
            svg::value(
                t.score.parts.false_count,
                count_decimals(t.score.parts.false_count),
            ),
            Some(t.score.parts.false_count),
        )
    }));
    rows.push(row("switches (full = 1, half = 0.5)", report, |t| {
        (
            svg::value(
                t.score.parts.switch_count,
                count_decimals(t.score.parts.switch_count),
            ),
            Some(t.score.parts.switch_count),
        )
    }));
    rows.push(row("switch events: full / half", report, |t| {
        let full = t
            .switches
            .iter()
            .filter(|e| e.from.is_some() && e.to.is_some())
            .count();
        (format!("{full} / {}", t.switches.len() - full), None)
    }));
    // The full events in plain words: a swap is two of them (two truths exchange tracks).
    rows.push(row(
        "swaps / breaks / hand-overs (swap: two truths exchange tracks; break: a track ends and another takes over)",
        report,
        |t| {
            let kinds = switch_kinds(&t.switches, &t.estimate);
            (
                format!("{} / {} / {}", kinds.swaps, kinds.breaks, kinds.handovers),
                None,
            )
        },
    ));
    rows.push(row("true objects with a switch", report, |t| {
        let count = t.audit.truths.iter().filter(|a| a.switches > 0.0).count();
        (count.to_string(), Some(count as f64))
    }));
    rows.push(row("true objects never covered", report, |t| {
        let count = t
            .audit
            .truths
            .iter()
            .filter(|a| a.covered_steps == 0)
            .count();
        (count.to_string(), Some(count as f64))
    }));
    rows.push(Row {
        group: true,
        ..row(&format!("mean per-step GOSPA ({u})"), report, |t| {
            (
                svg::value(t.steps.summary.mean, dec),
                per_window(t.steps.summary.mean),
            )
        })
    });
    if report.trackers.iter().all(|t| t.ospa2.is_some()) {
        rows.push(row(
            &format!("OSPA(2), normalised 0 to c ({u})"),
            report,
            |t| {
                let value = t.ospa2.as_ref().map_or(0.0, |o| o.value);
                (svg::value(value, dec), Some(value))
            },
        ));
    }
    rows.push(row("d is the exact metric", report, |t| {
        let text = match &t.score.exact {
            Some(exact) if exact.proven => "yes: proven by integer programs".to_string(),
            Some(exact) => format!(
                "not proven: d<sup>p</sup> lies in [{}, {}]",
                esc(&svg::short(exact.lower)),
                esc(&svg::short(exact.upper))
            ),
            None if t.score.integral => "yes: the LP optimum is integral".to_string(),
            None => "no: d is the LP's lower bound".to_string(),
        };
        (text, None)
    }));
    rows.push(row("proof", report, |t| {
        (
            esc(&crate::report::certificate_line(&t.score.certificate)),
            None,
        )
    }));

    // With a window shown, two values over that window alone, so that the charts' stretch can
    // be compared between trackers too (the rest of the table stays whole).
    if let (Some(_), Some(shown)) = (report.view, super::shown_window(report)) {
        let within = format!("steps {} to {}", shown.first, shown.last);
        rows.push(Row {
            group: true,
            ..row(
                &format!("mean per-step GOSPA over the {within} shown ({u})"),
                report,
                |t| {
                    let sum: f64 = t
                        .steps
                        .occupied
                        .iter()
                        .filter(|s| s.time >= shown.first && s.time <= shown.last)
                        .map(|s| s.gospa)
                        .sum();
                    let mean = sum / shown.len() as f64;
                    (svg::value(mean, dec), Some(mean))
                },
            )
        });
        rows.push(row(
            &format!("switch events over the {within} shown"),
            report,
            |t| {
                let count = t
                    .switches
                    .iter()
                    .filter(|e| e.time >= shown.first && e.time <= shown.last)
                    .count();
                (count.to_string(), Some(count as f64))
            },
        ));
    }
    out.push_str("<table class=\"summary\">\n<thead><tr><th scope=\"col\"></th>");
    for (index, tracker) in report.trackers.iter().enumerate() {
        let _ = write!(
            out,
            "<th scope=\"col\"><a href=\"#k{}\">{}</a></th>",
            index + 1,
            esc(&tracker.name)
        );
    }
    out.push_str("</tr></thead>\n<tbody>\n");
    let compare = report.trackers.len() > 1;
    for r in &rows {
        let lowest = r
            .cells
            .iter()
            .filter_map(|c| c.1)
            .fold(f64::INFINITY, f64::min);
        let _ = write!(
            out,
            "<tr{}><th scope=\"row\">{}</th>",
            if r.group { " class=\"group\"" } else { "" },
            r.heading
        );
        for (text, number) in &r.cells {
            let best = compare
                && number.is_some_and(|v| (v - lowest).abs() <= 1e-9 * lowest.abs().max(1.0));
            let class = match (best, r.file) {
                (true, _) => " class=\"best\"",
                (false, true) => " class=\"file\"",
                _ => "",
            };
            let _ = write!(out, "<td{class}>{text}</td>");
        }
        out.push_str("</tr>\n");
    }
    out.push_str("</tbody>\n</table>\n");
    let mut table_note = String::from(
        "The four parts add up to d<sup>p</sup>; their shares of it are in grey. Object-steps \
         count one object at one step.",
    );
    if compare {
        table_note.push_str(" In each row that compares, the lowest value is in bold.");
    }
    let _ = writeln!(out, "<p class=\"table-note\">{table_note}</p>");
    super::by_class::table(out, report, (dec, dec_p), (&u, &power_unit));
    parts_chart(out, report, &unit, p1);
    out.push_str("</section>\n");
}

fn count_decimals(value: f64) -> usize {
    if (value - value.round()).abs() < 1e-9 {
        0
    } else {
        2
    }
}

/// One horizontal bar per tracker: d^p split into its four parts, on one scale.
fn parts_chart(out: &mut String, report: &Report, unit: &str, p1: bool) {
    let names = report
        .trackers
        .iter()
        .map(|t| t.name.chars().count())
        .max()
        .unwrap_or(1);
    let left = (svg::text_width(names) + 20.0).clamp(70.0, 260.0);
    let bar_h = 20.0;
    let row_h = 30.0;
    let top = 30.0;
    let rows = report.trackers.len() as f64;
    let axis_y = top + rows * row_h;
    let height = axis_y + 44.0;
    let peak = report
        .trackers
        .iter()
        .map(|t| t.score.total)
        .fold(0.0, f64::max);
    let step = svg::tick_step(if peak > 0.0 { peak } else { 1.0 }, 6);
    let end = ((peak / step).ceil() * step).max(step);
    let x = Scale::new(0.0, end, left, WIDTH - RIGHT - 90.0);
    let prefix = "sum";
    let parts: [(&str, Style); 4] = [
        ("localisation", LOCALISATION),
        ("missed", MISSED),
        ("false", FALSE),
        ("switching", SWITCHING),
    ];
    let styles: Vec<Style> = parts.iter().map(|p| p.1).collect();
    let _ = write!(
        out,
        "<figure class=\"chart parts\"><figcaption><h3>The metric's parts</h3><p>Each bar is one \
         tracker's d<sup>p</sup>, split into its parts; shorter is better.</p></figcaption>\n\
         <svg class=\"parts-chart\" viewBox=\"0 0 {w} {h}\" width=\"{w}\" height=\"{h}\" role=\"img\" \
         aria-label=\"Trajectory GOSPA of each tracker split into its parts\">",
        w = n(WIDTH),
        h = n(height)
    );
    out.push_str(&style::defs(prefix, &styles));
    let mut lx = left;
    out.push_str("<g class=\"legend\">");
    for (name, s) in &parts {
        let _ = write!(
            out,
            "<rect x=\"{}\" y=\"4\" width=\"13\" height=\"13\" fill=\"{}\" stroke=\"{INK}\" stroke-width=\"0.6\"/>",
            n(lx),
            s.fill(prefix)
        );
        svg::text(out, lx + 18.0, 14.0, "start", "", name);
        lx += 18.0 + svg::text_width(name.chars().count()) + 22.0;
    }
    out.push_str("</g>");
    let decimals = svg::tick_decimals(step);
    for value in svg::ticks(0.0, end, step) {
        let px = x.at(value);
        let _ = write!(
            out,
            "<line x1=\"{p}\" x2=\"{p}\" y1=\"{}\" y2=\"{}\" stroke=\"#e4e7eb\"/>",
            n(top - 4.0),
            n(axis_y),
            p = n(px)
        );
        svg::text(
            out,
            px,
            axis_y + 14.0,
            "middle",
            "tick",
            &svg::value(value, decimals),
        );
    }
    let _ = write!(
        out,
        "<line x1=\"{l}\" x2=\"{l}\" y1=\"{}\" y2=\"{}\" stroke=\"{INK}\"/>",
        n(top - 4.0),
        n(axis_y),
        l = n(left)
    );
    let label = if p1 {
        format!("trajectory GOSPA d ({})", esc(unit))
    } else {
        format!(
            "d<tspan baseline-shift=\"super\" font-size=\"8\">p</tspan> ({}<tspan baseline-shift=\"super\" font-size=\"8\">p</tspan>)",
            esc(unit)
        )
    };
    let _ = write!(
        out,
        "<text class=\"axis-label\" x=\"{}\" y=\"{}\" text-anchor=\"middle\">{label}</text>",
        n((left + WIDTH - RIGHT - 90.0) / 2.0),
        n(axis_y + 34.0)
    );
    for (r, tracker) in report.trackers.iter().enumerate() {
        let y = top + r as f64 * row_h + (row_h - bar_h) / 2.0;
        svg::text(out, left - 8.0, y + 14.0, "end", "", &tracker.name);
        let score = &tracker.score;
        let values = [
            score.parts.localization,
            score.parts.missed,
            score.parts.false_,
            score.parts.switching,
        ];
        let mut start = 0.0;
        for ((name, s), v) in parts.iter().zip(values) {
            if v <= 0.0 {
                continue;
            }
            let x0 = x.at(start);
            let x1 = x.at(start + v);
            let title = format!(
                "{}: {name} {} ({}% of d^p)",
                tracker.name,
                svg::short(v),
                svg::value(
                    if score.total > 0.0 {
                        100.0 * v / score.total
                    } else {
                        0.0
                    },
                    1
                )
            );
            let _ = write!(
                out,
                "<rect class=\"part {name}\" x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"{}\" stroke=\"#ffffff\" stroke-width=\"0.8\"><title>{}</title></rect>",
                n(x0),
                n(y),
                n((x1 - x0).max(0.5)),
                n(bar_h),
                s.fill(prefix),
                esc(&title)
            );
            start += v;
        }
        svg::text(
            out,
            x.at(start) + 6.0,
            y + 14.0,
            "start",
            "",
            &svg::short(score.total),
        );
    }
    out.push_str("</svg></figure>\n");
}
