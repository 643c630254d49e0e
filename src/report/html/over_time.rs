//! Errors over time: per-step GOSPA^p stacked by its localisation, missed and false parts, with
//! the switch events marked under the time axis. Windows longer than
//! [`Limits::max_time_bins`](super::Limits) are grouped into bins of whole steps showing the mean
//! per step. Switches get a triangle each (full filled, half open) while no two triangles
//! would touch; otherwise time is cut into switch bins wide enough for a label and each bin
//! that holds switches gets one badge with their count.

use std::fmt::Write;

use super::style::{self, Style, FALSE, INK, LOCALISATION, MISSED};
use super::svg::{self, esc, n, Scale};
use super::TrackerResults;
use super::{Context, Figure, RIGHT, WIDTH};
use crate::assignment::switches::SwitchEvent;
use crate::per_step::StepScore;
use crate::trajectory::{Step, Window};

const LEGEND_H: f64 = 26.0;
const PLOT_H: f64 = 190.0;
/// Width of a switch triangle, in pixels; triangles closer than this (and a little air) would
/// touch.
const TRIANGLE_W: f64 = 8.0;
/// Narrowest switch bin, in pixels: room for a badge holding a two-digit count and some air.
const BADGE_BIN_W: f64 = 22.0;
const BADGE_H: f64 = 12.0;

/// The figure's caption.
pub(super) fn caption(context: &Context) -> String {
    let what = if context.order == 1.0 {
        "GOSPA at each step"
    } else {
        "GOSPA<sup>p</sup> at each step"
    };
    format!(
        "{what} (each step matched on its own, cut-off c = {c} {unit}), stacked by its parts: \
         localisation of matched objects, missed true objects and false estimates. Under the \
         time axis, the identity switches found by trajectory GOSPA: a triangle per switch \
         (filled for a full switch, from one track to another; open for a half switch, to or \
         from no track) or, where they would crowd, one badge per stretch of time with the \
         number of switches in it (dark: all full; white: all half; grey: both).",
        c = context.tracker.score.params.cutoff,
        unit = esc(&context.unit),
    )
}

/// A group of whole steps drawn as one column.
pub(super) struct Bin {
    pub first: Step,
    pub last: Step,
    /// Mean per step of localisation, missed and false.
    pub parts: [f64; 3],
}

/// Steps per column of the time charts: 1, or more when the window is longer than
/// [`Limits::max_time_bins`](super::Limits).
pub(super) fn bin_size(context: &Context) -> usize {
    context
        .window
        .len()
        .div_ceil(context.limits.max_time_bins.max(1))
        .max(1)
}

/// One tracker's per-step parts over `window`, in columns of `size` steps.
pub(super) fn bins(tracker: &TrackerResults, window: Window, size: usize) -> Vec<Bin> {
    bins_of(&tracker.steps.occupied, window, size)
}

/// Per-step parts of one series over `window` (its occupied steps), in columns of `size` steps.
pub(super) fn bins_of(occupied: &[StepScore], window: Window, size: usize) -> Vec<Bin> {
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
    for step in occupied {
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

/// The switch events within the window, in time order (ties keep their input order).
pub(super) fn events_in(events: &[SwitchEvent], window: Window) -> Vec<&SwitchEvent> {
    let mut inside: Vec<&SwitchEvent> = events
        .iter()
        .filter(|e| e.time >= window.first && e.time <= window.last)
        .collect();
    inside.sort_by_key(|e| e.time);
    inside
}

/// True when two triangles, each drawn where its switch takes effect, would touch: two
/// switches at one step, or at steps closer than a triangle's width (plus 2 px of air).
pub(super) fn crowded(events: &[&SwitchEvent], x: &Scale) -> bool {
    events.windows(2).any(|pair| {
        (x.at(pair[1].time as f64) - x.at(pair[0].time as f64)).abs() < TRIANGLE_W + 2.0
    })
}

/// Steps per switch bin, shared by every tracker so that their counts line up: the fewest
/// whole columns of the chart that are at least [`BADGE_BIN_W`] pixels wide and hold the
/// widest badge any tracker needs there (with 2 px of air), so that badges never overlap.
pub(super) fn switch_bin_size(context: &Context, columns: usize) -> usize {
    let window = context.window;
    let plot = WIDTH - RIGHT - context.left;
    let per_step = plot / window.len() as f64;
    let events: Vec<Vec<&SwitchEvent>> = context
        .report
        .trackers
        .iter()
        .map(|t| events_in(&t.switches, window))
        .collect();
    let mut steps = ((BADGE_BIN_W / per_step).ceil().max(1.0) as usize).div_ceil(columns) * columns;
    while steps < window.len() {
        let widest = events
            .iter()
            .flat_map(|e| switch_bins(e, window, steps))
            .map(|bin| bin.events.len())
            .max()
            .unwrap_or(0);
        if badge_width(widest) + 2.0 <= steps as f64 * per_step {
            break;
        }
        steps += columns;
    }
    steps
}

/// Width of a badge holding `count`, in pixels.
fn badge_width(count: usize) -> f64 {
    svg::text_width(count.to_string().len()).max(6.0) + 6.0
}

/// Switches that share a bin of whole steps.
pub(super) struct SwitchBin<'a> {
    pub first: Step,
    pub last: Step,
    pub events: Vec<&'a SwitchEvent>,
}

/// The non-empty switch bins of `size` steps counted from the window's first step; `events`
/// in time order, all within the window.
pub(super) fn switch_bins<'a>(
    events: &[&'a SwitchEvent],
    window: Window,
    size: usize,
) -> Vec<SwitchBin<'a>> {
    let mut out: Vec<SwitchBin> = Vec::new();
    for &event in events {
        let first = window.first + (event.time - window.first) / size as Step * size as Step;
        match out.last_mut() {
            Some(bin) if bin.first == first => bin.events.push(event),
            _ => out.push(SwitchBin {
                first,
                last: (first + size as Step - 1).min(window.last),
                events: vec![event],
            }),
        }
    }
    out
}

/// Writes one badge for a switch bin: a rounded box centred on the bin with the count in it,
/// dark when all its switches are full, white when all are half, grey when mixed.
pub(super) fn badge(out: &mut String, context: &Context, bin: &SwitchBin, x: &Scale, top: f64) {
    let count = bin.events.len();
    let fulls = bin
        .events
        .iter()
        .filter(|e| e.from.is_some() && e.to.is_some())
        .count();
    let (fill, ink) = if fulls == count {
        (INK, "#ffffff")
    } else if fulls == 0 {
        ("#ffffff", INK)
    } else {
        ("#c3c9d0", INK)
    };
    let digits = count.to_string();
    let w = badge_width(count);
    // Centred on its stretch; a shorter last stretch keeps the badge from reaching back
    // over the one before.
    let start = x.at(bin.first as f64 - 0.5);
    let cx = ((start + x.at(bin.last as f64 + 0.5)) / 2.0).max(start + w / 2.0 + 1.0);
    let mut title = format!(
        "{}: {count} switch{} ({fulls} full, {} half)",
        context.span_text(bin.first, bin.last),
        if count == 1 { "" } else { "es" },
        count - fulls
    );
    const LISTED: usize = 12;
    for event in bin.events.iter().take(LISTED) {
        title.push('\n');
        title.push_str(&describe(event, context));
    }
    if count > LISTED {
        let _ = write!(title, "\n… and {} more", count - LISTED);
    }
    let single = if count == 1 {
        format!(
            " data-step=\"{}\" data-truth=\"{}\"",
            bin.events[0].time,
            esc(&bin.events[0].truth)
        )
    } else {
        String::new()
    };
    let _ = write!(
        out,
        "<g class=\"switch-mark badge\" data-events=\"{count}\" data-first=\"{}\" data-last=\"{}\"{single}>\
         <title>{}</title><rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" rx=\"3\" fill=\"{fill}\" stroke=\"{INK}\" stroke-width=\"1\"/>",
        bin.first,
        bin.last,
        esc(&title),
        n(cx - w / 2.0),
        n(top),
        n(w),
        n(BADGE_H),
    );
    let _ = write!(
        out,
        "<text x=\"{}\" y=\"{}\" text-anchor=\"middle\" font-size=\"9.5\" font-weight=\"600\" style=\"fill:{ink}\">{digits}</text></g>",
        n(cx),
        n(top + 9.2)
    );
}

/// Describes one switch event for a tooltip.
pub(super) fn describe(event: &SwitchEvent, context: &Context) -> String {
    let weight = if (event.weight - 1.0).abs() > 1e-9 {
        format!(", weight {}", svg::short(event.weight))
    } else {
        String::new()
    };
    let cost = svg::short(event.cost);
    let at = context.step_text(event.time);
    match (&event.from, &event.to) {
        (Some(from), Some(to)) => format!(
            "{}: {at}, track {} → {} (full switch{weight}, cost {cost})",
            event.truth, from, to
        ),
        (Some(from), None) => format!(
            "{}: {at}, loses track {} (half switch{weight}, cost {cost})",
            event.truth, from
        ),
        (None, Some(to)) => format!(
            "{}: {at}, gains track {} (half switch{weight}, cost {cost})",
            event.truth, to
        ),
        (None, None) => format!("{}: {at}", event.truth),
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
    let window = context.window;
    let steps = window.len();
    let size = bin_size(context);
    if size > 1 {
        notes.push(format!(
            "{steps} steps are more than this chart draws one by one: they are grouped in bins \
             of {size} steps, each showing its mean per step."
        ));
    }
    let bins = bins(context.tracker, window, size);
    let totals: Vec<f64> = bins.iter().map(|b| b.parts.iter().sum()).collect();
    let peak = totals.iter().copied().fold(0.0, f64::max);
    let y_step = svg::tick_step(if peak > 0.0 { peak } else { 1.0 }, 4);
    let y_top = ((peak / y_step).ceil() * y_step).max(y_step);

    let left = context.left;
    let x = context.time_scale();
    let events = events_in(&context.tracker.switches, window);
    let binned = crowded(&events, &x);
    let switch_size = switch_bin_size(context, size);
    let switch_bins = if binned {
        switch_bins(&events, window, switch_size)
    } else {
        Vec::new()
    };
    if binned {
        notes.push(format!(
            "Switches that would crowd are counted per stretch of {switch_size} step{}: each \
             badge holds the number of switches in its stretch, and its tooltip lists them.",
            super::plural(switch_size)
        ));
    }

    let plot_top = LEGEND_H + 8.0;
    let plot_bottom = plot_top + PLOT_H;
    let y = Scale::new(0.0, y_top, plot_bottom, plot_top);
    let rug_top = plot_bottom + 4.0;
    let rug_bottom = rug_top + BADGE_H + 2.0;
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
    if binned {
        let sample = format!(
            "<rect x=\"{}\" y=\"4\" width=\"13\" height=\"12\" rx=\"3\" fill=\"{INK}\"/>\
             <text x=\"{}\" y=\"13.2\" text-anchor=\"middle\" font-size=\"9.5\" font-weight=\"600\" style=\"fill:#ffffff\">n</text>",
            n(lx),
            n(lx + 6.5)
        );
        legend_item(&mut out, lx, &sample, "n switches in one stretch of time");
    } else {
        let tri = |x: f64, filled: bool| {
            format!(
                "<path d=\"M{} 5l5 10h-10z\" fill=\"{}\" stroke=\"{INK}\" stroke-width=\"1.2\"/>",
                n(x + 6.5),
                if filled { INK } else { "#ffffff" }
            )
        };
        lx = legend_item(&mut out, lx, &tri(lx, true), "full switch");
        legend_item(&mut out, lx, &tri(lx, false), "half switch");
    }
    out.push_str("</g>");

    y_axis(&mut out, context, &y, y_top, y_step);

    // Switch guides: a faint line through the plot where each switch takes effect, while
    // they are few enough to mark one by one.
    out.push_str("<g class=\"switch-guides\">");
    for event in events.iter().filter(|_| !binned) {
        let _ = write!(
            out,
            "<line x1=\"{g}\" x2=\"{g}\" y1=\"{}\" y2=\"{}\" stroke=\"#8b939c\" stroke-width=\"0.8\" stroke-dasharray=\"3 3\"/>",
            n(plot_top),
            n(plot_bottom),
            g = n(x.at(event.time as f64 - 0.5))
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
    let _ = write!(
        out,
        "<path class=\"total\" d=\"{}\" fill=\"none\" stroke=\"{INK}\" stroke-width=\"0.9\"/>",
        step_line(&bins, &totals, &x, &y)
    );

    // X axis: ticks at step centres (or at round times), labelled under the switch marks.
    out.push_str("<g class=\"axis x\">");
    context.time_axis(&mut out, plot_bottom, rug_bottom + 12.0, 1.0);
    context.time_axis_title(&mut out, rug_bottom + 30.0);
    out.push_str("</g>");

    // Switch marks.
    let _ = write!(
        out,
        "<g class=\"switch-marks\" data-events=\"{}\">",
        events.len()
    );
    if binned {
        for bin in &switch_bins {
            badge(&mut out, context, bin, &x, rug_top);
        }
    } else {
        for event in &events {
            let full = event.from.is_some() && event.to.is_some();
            let _ = write!(
                out,
                "<path class=\"switch-mark\" data-events=\"1\" data-step=\"{}\" data-truth=\"{}\" d=\"M{} {}l4 8h-8z\" fill=\"{}\" stroke=\"{INK}\" stroke-width=\"1.1\"><title>{}</title></path>",
                event.time,
                esc(&event.truth),
                n(x.at(event.time as f64 - 0.5)),
                n(rug_top),
                if full { INK } else { "#ffffff" },
                esc(&describe(event, context))
            );
        }
    }
    out.push_str("</g></svg>");
    Figure { svg: out, notes }
}

/// Draws the y axis of per-step GOSPA on scale `y` (0 to `y_top`, ticks every `y_step`): grid
/// lines across the plot, tick labels and the title.
pub(super) fn y_axis(out: &mut String, context: &Context, y: &Scale, y_top: f64, y_step: f64) {
    out.push_str("<g class=\"axis y\">");
    svg::y_grid(out, y, (y_top, y_step), context.left, WIDTH - RIGHT);
    let _ = write!(
        out,
        "<text class=\"axis-label\" transform=\"rotate(-90)\" x=\"{}\" y=\"13\" text-anchor=\"middle\">{}</text></g>",
        n(-(y.at(0.0) + y.at(y_top)) / 2.0),
        y_title(context)
    );
}

/// A light band behind every other row of a chart, from `top`, `height` high.
pub(super) fn row_band(out: &mut String, context: &Context, top: f64, height: f64) {
    let _ = write!(
        out,
        "<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"#f3f5f7\"/>",
        n(context.left),
        n(top),
        n(WIDTH - RIGHT - context.left),
        n(height)
    );
}

/// The y axis title: "GOSPA per step (unit)", or for p != 1 its p-th power.
pub(super) fn y_title(context: &Context) -> String {
    let unit = esc(&context.unit);
    if context.order == 1.0 {
        format!("GOSPA per step ({unit})")
    } else {
        format!(
            "GOSPA<tspan baseline-shift=\"super\" font-size=\"8\">p</tspan> per step \
             ({unit}<tspan baseline-shift=\"super\" font-size=\"8\">p</tspan>)"
        )
    }
}

/// The mean per step over the columns' steps of values given per column (each a mean per step
/// of its column): sum of value x steps of the column, over `steps`.
pub(super) fn mean_per_step(bins: &[Bin], values: &[f64], steps: usize) -> f64 {
    values
        .iter()
        .zip(bins)
        .fold(0.0, |acc, (v, b)| acc + v * (b.last - b.first + 1) as f64)
        / steps as f64
}

/// An outline that steps from column to column at the height of `values`.
pub(super) fn step_line(bins: &[Bin], values: &[f64], x: &Scale, y: &Scale) -> String {
    let mut d = String::new();
    for (k, bin) in bins.iter().enumerate() {
        let top = y.at(values[k]);
        if k == 0 {
            let _ = write!(d, "M{} {}", n(x.at(bin.first as f64 - 0.5)), n(top));
        } else {
            let _ = write!(d, "V{}", n(top));
        }
        let _ = write!(d, "H{}", n(x.at(bin.last as f64 + 0.5)));
    }
    d
}
