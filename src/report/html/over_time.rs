//! Errors over time: per-step GOSPA^p stacked by its localisation, missed and false parts, with
//! every switch event marked under the time axis (full switches filled, half switches open).
//! Windows longer than [`Limits::max_time_bins`](super::Limits) are grouped into bins of whole
//! steps showing the mean per step; more switches than `max_switch_marks` share one mark per
//! group of steps.

use std::fmt::Write;

use super::style::{self, Style, FALSE, INK, LOCALISATION, MISSED};
use super::svg::{self, esc, n, Scale};
use super::{Context, Figure, RIGHT, WIDTH};
use crate::assignment::switches::SwitchEvent;
use crate::trajectory::Step;

const LEGEND_H: f64 = 26.0;
const PLOT_H: f64 = 190.0;
const LEVEL_H: f64 = 9.0;
const MAX_LEVELS: usize = 8;

/// The figure's caption.
pub(super) fn caption(context: &Context) -> String {
    let what = if context.order == 1.0 {
        "GOSPA at each step"
    } else {
        "GOSPA<sup>p</sup> at each step"
    };
    format!(
        "{what} (each step matched on its own, cut-off c = {c} {unit}), stacked by its parts: \
         localisation of matched objects, missed true objects and false estimates. Each \
         triangle under the time axis is an identity switch found by trajectory GOSPA: filled \
         for a full switch (from one track to another), open for a half switch (to or from no \
         track).",
        c = context.tracker.score.params.cutoff,
        unit = esc(&context.unit),
    )
}

/// A group of whole steps drawn as one column.
struct Bin {
    first: Step,
    last: Step,
    parts: [f64; 3],
}

fn bins(context: &Context, size: usize) -> Vec<Bin> {
    let window = context.window;
    let mut out: Vec<Bin> = Vec::new();
    let mut first = window.first;
    while first <= window.last {
        let last = (first + size as Step - 1).min(window.last);
        out.push(Bin {
            first,
            last,
            parts: [0.0; 3],
        });
        first = last + 1;
    }
    // Steps with no object add 0 to every part: only the occupied ones are visited.
    for step in &context.tracker.steps.occupied {
        if step.time < window.first || step.time > window.last {
            continue;
        }
        let bin = &mut out[((step.time - window.first) as usize) / size];
        bin.parts[0] += step.localization.unwrap_or(0.0);
        bin.parts[1] += step.missed.unwrap_or(0.0);
        bin.parts[2] += step.false_.unwrap_or(0.0);
    }
    for bin in &mut out {
        let count = (bin.last - bin.first + 1) as f64;
        for part in &mut bin.parts {
            *part /= count;
        }
    }
    out
}

/// One switch mark: events at one step (or one group of steps).
struct Mark<'a> {
    first: Step,
    last: Step,
    events: Vec<&'a SwitchEvent>,
}

fn marks<'a>(events: &'a [SwitchEvent], context: &Context, group: usize) -> Vec<Mark<'a>> {
    let mut out: Vec<Mark> = Vec::new();
    for event in events {
        if group <= 1 {
            out.push(Mark {
                first: event.time,
                last: event.time,
                events: vec![event],
            });
            continue;
        }
        let index = (event.time - context.window.first).max(0) / group as Step;
        let first = context.window.first + index * group as Step;
        match out.last_mut() {
            Some(mark) if mark.first == first => mark.events.push(event),
            _ => out.push(Mark {
                first,
                last: (first + group as Step - 1).min(context.window.last),
                events: vec![event],
            }),
        }
    }
    out
}

/// Describes one switch event for a tooltip.
pub(super) fn describe(event: &SwitchEvent, unit_cost: &str) -> String {
    let weight = if (event.weight - 1.0).abs() > 1e-9 {
        format!(", weight {}", svg::short(event.weight))
    } else {
        String::new()
    };
    match (&event.from, &event.to) {
        (Some(from), Some(to)) => format!(
            "{}: step {}, track {} → {} (full switch{weight}, cost {unit_cost})",
            event.truth, event.time, from, to
        ),
        (Some(from), None) => format!(
            "{}: step {}, loses track {} (half switch{weight}, cost {unit_cost})",
            event.truth, event.time, from
        ),
        (None, Some(to)) => format!(
            "{}: step {}, gains track {} (half switch{weight}, cost {unit_cost})",
            event.truth, event.time, to
        ),
        (None, None) => format!("{}: step {}", event.truth, event.time),
    }
}

/// Writes one legend entry: a swatch (or shape) and its label; returns the next x.
fn legend_item(out: &mut String, x: f64, swatch: &str, label: &str) -> f64 {
    out.push_str(swatch);
    svg::text(out, x + 18.0, 14.0, "start", "", label);
    x + 18.0 + svg::text_width(label.chars().count()) + 22.0
}

/// Draws the chart.
pub(super) fn chart(context: &Context) -> Figure {
    let mut notes = Vec::new();
    let limits = context.limits;
    let window = context.window;
    let steps = window.len();
    let size = steps.div_ceil(limits.max_time_bins.max(1)).max(1);
    if size > 1 {
        notes.push(format!(
            "{steps} steps are more than this chart draws one by one: they are grouped in bins \
             of {size} steps, each showing its mean per step."
        ));
    }
    let bins = bins(context, size);
    let totals: Vec<f64> = bins.iter().map(|b| b.parts.iter().sum()).collect();
    let peak = totals.iter().copied().fold(0.0, f64::max);
    let y_step = svg::tick_step(if peak > 0.0 { peak } else { 1.0 }, 4);
    let y_top = ((peak / y_step).ceil() * y_step).max(y_step);

    let switches = &context.tracker.switches;
    let group = if switches.len() > limits.max_switch_marks.max(1) {
        let group = size.max(steps.div_ceil(limits.max_switch_marks.max(1)));
        notes.push(format!(
            "{} switches are more than this chart marks one by one: each triangle stands for the \
             switches within a group of {group} steps, and its tooltip counts them.",
            switches.len()
        ));
        group
    } else {
        1
    };
    let marks = marks(switches, context, group);
    let mut levels_at: Vec<usize> = Vec::with_capacity(marks.len());
    let mut deepest = 1;
    for (k, mark) in marks.iter().enumerate() {
        let level = if k > 0 && marks[k - 1].first == mark.first {
            levels_at[k - 1] + 1
        } else {
            0
        };
        levels_at.push(level);
        deepest = deepest.max((level + 1).min(MAX_LEVELS));
    }

    let left = context.left;
    let x = context.time_scale();
    let plot_top = LEGEND_H + 8.0;
    let plot_bottom = plot_top + PLOT_H;
    let y = Scale::new(0.0, y_top, plot_bottom, plot_top);
    let rug_top = plot_bottom + 4.0;
    let rug_bottom = rug_top + deepest as f64 * LEVEL_H + 2.0;
    let height = rug_bottom + 40.0;
    let prefix = format!("{}-e", context.prefix);

    let mut out = String::new();
    let _ = write!(
        out,
        "<svg class=\"errors-chart\" viewBox=\"0 0 {w} {h}\" width=\"{w}\" height=\"{h}\" role=\"img\" \
         aria-label=\"Per-step GOSPA of {name} over time, stacked by parts, with switch marks\">",
        w = n(WIDTH),
        h = n(height),
        name = esc(&context.tracker.name)
    );
    out.push_str(&style::defs(&prefix, &[LOCALISATION, MISSED, FALSE]));

    // Legend.
    let swatch = |s: Style, x: f64| {
        format!(
            "<rect x=\"{}\" y=\"4\" width=\"13\" height=\"13\" fill=\"{}\" stroke=\"{INK}\" stroke-width=\"0.6\"/>",
            n(x),
            s.fill(&prefix)
        )
    };
    let mut lx = left;
    out.push_str("<g class=\"legend\">");
    lx = legend_item(&mut out, lx, &swatch(LOCALISATION, lx), "localisation");
    lx = legend_item(&mut out, lx, &swatch(MISSED, lx), "missed");
    lx = legend_item(&mut out, lx, &swatch(FALSE, lx), "false");
    let tri = |x: f64, filled: bool| {
        format!(
            "<path d=\"M{} 5l5 10h-10z\" fill=\"{}\" stroke=\"{INK}\" stroke-width=\"1.2\"/>",
            n(x + 6.5),
            if filled { INK } else { "#ffffff" }
        )
    };
    lx = legend_item(&mut out, lx, &tri(lx, true), "full switch");
    legend_item(&mut out, lx, &tri(lx, false), "half switch");
    out.push_str("</g>");

    // Grid and y axis.
    out.push_str("<g class=\"axis y\">");
    for value in svg::ticks(0.0, y_top, y_step) {
        let py = y.at(value);
        let _ = write!(
            out,
            "<line x1=\"{}\" x2=\"{}\" y1=\"{p}\" y2=\"{p}\" stroke=\"#e4e7eb\"/>",
            n(left),
            n(WIDTH - RIGHT),
            p = n(py)
        );
        svg::text(
            &mut out,
            left - 6.0,
            py + 4.0,
            "end",
            "tick",
            &svg::value(value, svg::tick_decimals(y_step)),
        );
    }
    let unit = esc(&context.unit);
    let mid = (plot_top + plot_bottom) / 2.0;
    let label = if context.order == 1.0 {
        format!("GOSPA per step ({unit})")
    } else {
        format!(
            "GOSPA<tspan baseline-shift=\"super\" font-size=\"8\">p</tspan> per step \
             ({unit}<tspan baseline-shift=\"super\" font-size=\"8\">p</tspan>)"
        )
    };
    let _ = write!(
        out,
        "<text class=\"axis-label\" transform=\"rotate(-90)\" x=\"{}\" y=\"13\" text-anchor=\"middle\">{label}</text></g>",
        n(-mid)
    );

    // Switch guides: a faint line through the plot where each switch takes effect (not when
    // switches are grouped: there would be too many to read).
    out.push_str("<g class=\"switch-guides\">");
    let mut last_guide = f64::NEG_INFINITY;
    for mark in marks.iter().filter(|_| group <= 1) {
        let gx = x.at(mark.first as f64 - 0.5);
        if (gx - last_guide).abs() < 0.5 {
            continue;
        }
        last_guide = gx;
        let _ = write!(
            out,
            "<line x1=\"{g}\" x2=\"{g}\" y1=\"{}\" y2=\"{}\" stroke=\"#8b939c\" stroke-width=\"0.8\" stroke-dasharray=\"3 3\"/>",
            n(plot_top),
            n(plot_bottom),
            g = n(gx)
        );
    }
    out.push_str("</g>");

    // Stacked parts.
    let names = ["localisation", "missed", "false"];
    let styles = [LOCALISATION, MISSED, FALSE];
    let mut lower = vec![0.0; bins.len()];
    for part in 0..3 {
        let upper: Vec<f64> = bins
            .iter()
            .zip(&lower)
            .map(|(b, l)| l + b.parts[part])
            .collect();
        let mut d = format!(
            "M{} {}",
            n(x.at(bins[0].first as f64 - 0.5)),
            n(y.at(upper[0]))
        );
        for (k, bin) in bins.iter().enumerate() {
            let _ = write!(d, "H{}", n(x.at(bin.last as f64 + 0.5)));
            if k + 1 < bins.len() {
                let _ = write!(d, "V{}", n(y.at(upper[k + 1])));
            }
        }
        let _ = write!(d, "V{}", n(y.at(lower[bins.len() - 1])));
        for k in (0..bins.len()).rev() {
            let _ = write!(d, "H{}", n(x.at(bins[k].first as f64 - 0.5)));
            if k > 0 {
                let _ = write!(d, "V{}", n(y.at(lower[k - 1])));
            }
        }
        d.push('Z');
        let sum: f64 = bins
            .iter()
            .map(|b| b.parts[part] * (b.last - b.first + 1) as f64)
            .sum();
        let _ = write!(
            out,
            "<path class=\"part {}\" d=\"{d}\" fill=\"{}\"><title>{}: {} summed over the window</title></path>",
            names[part],
            styles[part].fill(&prefix),
            names[part],
            esc(&svg::short(sum))
        );
        lower = upper;
    }
    // The total as a dark outline, so the profile reads without colour.
    let mut d = String::new();
    for (k, bin) in bins.iter().enumerate() {
        let top = y.at(totals[k]);
        if k == 0 {
            let _ = write!(d, "M{} {}", n(x.at(bin.first as f64 - 0.5)), n(top));
        } else {
            let _ = write!(d, "V{}", n(top));
        }
        let _ = write!(d, "H{}", n(x.at(bin.last as f64 + 0.5)));
    }
    let _ = write!(
        out,
        "<path class=\"total\" d=\"{d}\" fill=\"none\" stroke=\"{INK}\" stroke-width=\"0.9\"/>"
    );

    // X axis: ticks at step centres.
    let _ = write!(
        out,
        "<line x1=\"{}\" x2=\"{}\" y1=\"{b}\" y2=\"{b}\" stroke=\"{INK}\"/>",
        n(left),
        n(WIDTH - RIGHT),
        b = n(plot_bottom)
    );
    let x_step = svg::step_tick(steps as f64, 10);
    out.push_str("<g class=\"axis x\">");
    for value in svg::ticks(window.first as f64, window.last as f64, x_step as f64) {
        let px = x.at(value);
        let _ = write!(
            out,
            "<line x1=\"{p}\" x2=\"{p}\" y1=\"{}\" y2=\"{}\" stroke=\"{INK}\"/>",
            n(plot_bottom),
            n(plot_bottom + 3.0),
            p = n(px)
        );
        svg::text(
            &mut out,
            px,
            rug_bottom + 12.0,
            "middle",
            "tick",
            &svg::value(value, 0),
        );
    }
    let _ = write!(
        out,
        "<text class=\"axis-label\" x=\"{}\" y=\"{}\" text-anchor=\"middle\">step</text></g>",
        n((left + WIDTH - RIGHT) / 2.0),
        n(rug_bottom + 30.0)
    );

    // Switch marks.
    let cost = |e: &SwitchEvent| svg::short(e.cost);
    let _ = write!(
        out,
        "<g class=\"switch-marks\" data-events=\"{}\">",
        switches.len()
    );
    for (mark, &level) in marks.iter().zip(&levels_at) {
        let mx = x.at(mark.first as f64 - 0.5);
        let my = rug_top + level.min(MAX_LEVELS - 1) as f64 * LEVEL_H;
        let full = mark
            .events
            .iter()
            .all(|e| e.from.is_some() && e.to.is_some());
        let title = if mark.events.len() == 1 && group <= 1 {
            describe(mark.events[0], &cost(mark.events[0]))
        } else {
            let fulls = mark
                .events
                .iter()
                .filter(|e| e.from.is_some() && e.to.is_some())
                .count();
            format!(
                "steps {}–{}: {} switch{} ({} full, {} half)",
                mark.first,
                mark.last,
                mark.events.len(),
                if mark.events.len() == 1 { "" } else { "es" },
                fulls,
                mark.events.len() - fulls
            )
        };
        let data = if mark.events.len() == 1 {
            format!(
                " data-step=\"{}\" data-truth=\"{}\"",
                mark.events[0].time,
                esc(&mark.events[0].truth)
            )
        } else {
            String::new()
        };
        let _ = write!(
            out,
            "<path class=\"switch-mark\" data-events=\"{}\"{data} d=\"M{} {}l4 8h-8z\" fill=\"{}\" stroke=\"{INK}\" stroke-width=\"1.1\"><title>{}</title></path>",
            mark.events.len(),
            n(mx),
            n(my),
            if full { INK } else { "#ffffff" },
            esc(&title)
        );
    }
    out.push_str("</g></svg>");
    Figure { svg: out, notes }
}
