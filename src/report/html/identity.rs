//! The identity chart: one row per true object, worst covered first (the audit's ranking), on
//! the shared time axis. A thin grey line shows where the object is present; a bar in the
//! covering track's style spans each covered run, with the track's id written on it when it
//! fits; a dashed orange box marks each missed run; a black tick marks each switch, dashed for a
//! half switch. Every mark has a tooltip naming object, track and steps. Above
//! [`Limits::max_identity_rows`](super::Limits) objects only the worst are drawn; switches of one
//! object that fall on the same pixel share a tick that counts them.

use std::collections::HashMap;
use std::fmt::Write;

use super::over_time::describe;
use super::style::{self, Style, INK, MISSED};
use super::svg::{self, esc, n};
use super::{plural, Context, Figure, WIDTH};
use crate::assignment::switches::SwitchEvent;
use crate::trajectory::{Step, Window};

const ROW_H: f64 = 17.0;
const BAR_H: f64 = 11.0;
const LEGEND_H: f64 = 24.0;
const AXIS_H: f64 = 20.0;

/// The figure's caption.
pub(super) fn caption(context: &Context) -> String {
    let _ = context;
    "One row per true object, the worst covered first (most switches, then the longest missed \
     run, then the most missed steps). A bar shows which estimated track covered the object \
     and when, in that track's colour and texture, with the track's id on it where it fits; \
     the thin grey line shows where the object was present, so a gap in the bars is a missed \
     run (dashed orange box). A black tick marks a switch (dashed: a half switch). Hover for \
     the details."
        .to_string()
}

fn runs(steps: &[Step]) -> Vec<(Step, Step)> {
    let mut out: Vec<(Step, Step)> = Vec::new();
    for &s in steps {
        match out.last_mut() {
            Some(run) if run.1 + 1 == s => run.1 = s,
            _ => out.push((s, s)),
        }
    }
    out
}

/// The part of `first..=last` within the window, if any.
fn clip(first: Step, last: Step, window: Window) -> Option<(Step, Step)> {
    let (first, last) = (first.max(window.first), last.min(window.last));
    (first <= last).then_some((first, last))
}

/// True when the trajectory is present at some step of `window`.
fn present_in(steps: &[Step], window: Window) -> bool {
    let index = steps.partition_point(|&s| s < window.first);
    index < steps.len() && steps[index] <= window.last
}

/// Draws the chart.
pub(super) fn chart(context: &Context) -> Figure {
    let mut notes = Vec::new();
    let tracker = context.tracker;
    let window = context.window;
    let truth_index: HashMap<&str, usize> = context
        .report
        .truth
        .trajectories()
        .iter()
        .enumerate()
        .map(|(i, t)| (t.id(), i))
        .collect();
    // Only the objects present within the steps shown, in the audit's order.
    let truths: Vec<_> = tracker
        .audit
        .truths
        .iter()
        .filter(|t| {
            truth_index
                .get(t.truth.as_str())
                .is_some_and(|&i| present_in(context.report.truth.get(i).steps(), window))
        })
        .collect();
    let limit = context.limits.max_identity_rows.max(1);
    let shown = truths.len().min(limit);
    if truths.len() > limit {
        notes.push(format!(
            "{} true objects are more than this chart draws: it shows the {shown} worst covered; \
             the other {} follow the same ranking in <code>switchyard audit</code>.",
            truths.len(),
            truths.len() - shown
        ));
    }
    // With classes, one true object may have a row per class: events go to the row of their
    // class.
    let mut events: HashMap<(&str, Option<&str>), Vec<&SwitchEvent>> = HashMap::new();
    for event in &tracker.switches {
        if event.time >= window.first && event.time <= window.last {
            events
                .entry((event.truth.as_str(), event.class.as_deref()))
                .or_default()
                .push(event);
        }
    }

    let left = context.left;
    let x = context.time_scale();
    let rows_top = LEGEND_H + AXIS_H;
    let rows_bottom = rows_top + shown as f64 * ROW_H;
    let height = rows_bottom + AXIS_H + 26.0;
    let prefix = format!("{}-i", context.prefix);
    let sample = [
        Style::from_index(4),
        Style::from_index(8),
        Style::from_index(16),
    ];
    let used: Vec<Style> = context.styles.iter().copied().chain(sample).collect();

    let mut out = String::new();
    let _ = write!(
        out,
        "<svg class=\"identity-chart\" viewBox=\"0 0 {w} {h}\" width=\"{w}\" height=\"{h}\" role=\"img\" \
         aria-label=\"Which track of {name} covered each true object over time\">",
        w = n(WIDTH),
        h = n(height),
        name = esc(&tracker.name)
    );
    out.push_str(&style::defs(&prefix, &used));

    // Legend.
    let mut lx = left;
    out.push_str("<g class=\"legend\">");
    for (k, s) in sample.iter().enumerate() {
        let _ = write!(
            out,
            "<rect x=\"{}\" y=\"5\" width=\"10\" height=\"11\" fill=\"{}\" stroke=\"#ffffff\" stroke-width=\"0.6\"/>",
            n(lx + k as f64 * 10.0),
            s.fill(&prefix)
        );
    }
    svg::text(&mut out, lx + 36.0, 15.0, "start", "", "covered by a track");
    lx += 36.0 + svg::text_width(18) + 22.0;
    let _ = write!(
        out,
        "<line x1=\"{}\" x2=\"{}\" y1=\"10.5\" y2=\"10.5\" stroke=\"#8b939c\" stroke-width=\"1.6\"/>",
        n(lx),
        n(lx + 26.0)
    );
    svg::text(&mut out, lx + 32.0, 15.0, "start", "", "present");
    lx += 32.0 + svg::text_width(7) + 22.0;
    let _ = write!(
        out,
        "<rect x=\"{}\" y=\"6\" width=\"26\" height=\"9\" fill=\"none\" stroke=\"{}\" stroke-width=\"1.3\" stroke-dasharray=\"3 2\"/>",
        n(lx),
        MISSED.hex()
    );
    svg::text(&mut out, lx + 32.0, 15.0, "start", "", "missed");
    lx += 32.0 + svg::text_width(6) + 22.0;
    let _ = write!(
        out,
        "<line x1=\"{a}\" x2=\"{a}\" y1=\"3\" y2=\"18\" stroke=\"{INK}\" stroke-width=\"2.2\"/>",
        a = n(lx + 3.0)
    );
    svg::text(&mut out, lx + 10.0, 15.0, "start", "", "full switch");
    lx += 10.0 + svg::text_width(11) + 22.0;
    let _ = write!(
        out,
        "<line x1=\"{a}\" x2=\"{a}\" y1=\"3\" y2=\"18\" stroke=\"{INK}\" stroke-width=\"2.2\" stroke-dasharray=\"3 2\"/>",
        a = n(lx + 3.0)
    );
    svg::text(&mut out, lx + 10.0, 15.0, "start", "", "half switch");
    out.push_str("</g>");

    // Axes and grid.
    out.push_str("<g class=\"axis x\">");
    context.time_axis(&mut out, rows_top - 2.0, rows_top - 8.0, -1.0);
    context.time_axis(&mut out, rows_bottom + 2.0, rows_bottom + 16.0, 1.0);
    context.time_axis_title(&mut out, rows_bottom + AXIS_H + 18.0);
    let _ = write!(
        out,
        "<text class=\"axis-label\" transform=\"rotate(-90)\" x=\"{}\" y=\"13\" text-anchor=\"middle\">true object (worst first)</text>",
        n(-(rows_top + rows_bottom) / 2.0)
    );
    out.push_str("</g>");

    let mut merged = 0usize;
    let _ = write!(out, "<g class=\"rows\" data-rows=\"{shown}\">");
    for (r, truth) in truths.iter().take(shown).enumerate() {
        let top = rows_top + r as f64 * ROW_H;
        let mid = top + ROW_H / 2.0;
        let _ = write!(
            out,
            "<g class=\"identity-row\" data-truth=\"{}\" data-rank=\"{}\"{}>",
            esc(&truth.truth),
            truth.rank,
            truth
                .class
                .as_ref()
                .map_or(String::new(), |c| format!(" data-class=\"{}\"", esc(c)))
        );
        let label = match &truth.class {
            Some(class) => format!("{} ({class})", truth.truth),
            None => truth.truth.clone(),
        };
        if r % 2 == 0 {
            super::over_time::row_band(&mut out, context, top, ROW_H);
        }
        let switches_text = svg::value(truth.switches, 1);
        let row_title = format!(
            "{} — rank {}: {} switch{} (full = 1, half = 0.5); {} of {} present steps missed \
             (longest run {}); covered by {} track{}",
            label,
            truth.rank,
            switches_text,
            if truth.switches == 1.0 { "" } else { "es" },
            truth.missed_steps,
            truth.present_steps,
            truth.longest_missed,
            truth.estimates,
            plural(truth.estimates)
        );
        let _ = write!(
            out,
            "<text class=\"row-label\" x=\"{}\" y=\"{}\" text-anchor=\"end\"><title>{}</title>{}</text>",
            n(left - 6.0),
            n(mid + 4.0),
            esc(&row_title),
            esc(&label)
        );
        // Presence.
        // With classes a row is one class's piece of the object: its presence is the span of
        // its covered and missed runs (the whole object's would show the other class's steps).
        let presence = match (&truth.class, truth_index.get(truth.truth.as_str())) {
            (Some(_), _) => {
                let mut spans: Vec<(Step, Step)> = truth
                    .covered
                    .iter()
                    .map(|s| (s.first, s.last))
                    .chain(truth.missed.iter().map(|s| (s.first, s.last)))
                    .collect();
                spans.sort_unstable();
                Some(spans)
            }
            (None, Some(&index)) => Some(runs(context.report.truth.get(index).steps())),
            (None, None) => None,
        };
        if let Some(presence) = presence {
            let mut d = String::new();
            for (first, last) in presence {
                let Some((first, last)) = clip(first, last, window) else {
                    continue;
                };
                let _ = write!(
                    d,
                    "M{} {}H{}",
                    n(x.at(first as f64 - 0.5)),
                    n(mid),
                    n(x.at(last as f64 + 0.5))
                );
            }
            if !d.is_empty() {
                let _ = write!(
                    out,
                    "<path class=\"presence\" d=\"{d}\" stroke=\"#8b939c\" stroke-width=\"1.6\" fill=\"none\"/>"
                );
            }
        }
        // Missed runs.
        for span in &truth.missed {
            let Some((first, last)) = clip(span.first, span.last, window) else {
                continue;
            };
            let x0 = x.at(first as f64 - 0.5);
            let x1 = x.at(last as f64 + 0.5);
            let _ = write!(
                out,
                "<rect class=\"missed\" x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"#ffffff\" fill-opacity=\"0.01\" stroke=\"{}\" stroke-width=\"1.3\" stroke-dasharray=\"3 2\"><title>{}</title></rect>",
                n(x0),
                n(mid - BAR_H / 2.0 + 1.5),
                n((x1 - x0).max(1.0)),
                n(BAR_H - 3.0),
                MISSED.hex(),
                esc(&format!(
                    "{} missed, {} ({} present step{})",
                    truth.truth,
                    context.span_text(span.first, span.last),
                    span.steps,
                    plural(span.steps)
                ))
            );
        }
        // Covered runs. A track's id is written where it fits, once per 90 px of its runs
        // in a row, so a run broken by short misses is not labelled at every piece.
        let mut labelled: Option<(&str, f64)> = None;
        for span in &truth.covered {
            let Some((first, last)) = clip(span.first, span.last, window) else {
                continue;
            };
            let x0 = x.at(first as f64 - 0.5);
            let x1 = x.at(last as f64 + 0.5);
            let style = context.style_of(&span.estimate);
            let title = format!(
                "{} covered by track {}, {} ({} present step{}), mean distance {}",
                truth.truth,
                span.estimate,
                context.span_text(span.first, span.last),
                span.steps,
                plural(span.steps),
                context.with_unit(span.mean_error)
            );
            let _ = write!(
                out,
                "<rect class=\"covered\" data-track=\"{}\" x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"{}\" stroke=\"#ffffff\" stroke-width=\"0.6\"><title>{}</title></rect>",
                esc(&span.estimate),
                n(x0),
                n(mid - BAR_H / 2.0),
                n((x1 - x0).max(0.8)),
                n(BAR_H),
                style.fill(&prefix),
                esc(&title)
            );
            let repeat = labelled.is_some_and(|(id, at)| id == span.estimate && x0 - at < 90.0);
            if !repeat && x1 - x0 >= svg::text_width(span.estimate.chars().count()) * 0.85 + 8.0 {
                labelled = Some((span.estimate.as_str(), x0));
                svg::text(
                    &mut out,
                    (x0 + x1) / 2.0,
                    mid + 3.2,
                    "middle",
                    "bar-label",
                    &span.estimate,
                );
            }
        }
        // Switch ticks: one per event, or one per pixel where they crowd.
        let mine: &[&SwitchEvent] = events
            .get(&(truth.truth.as_str(), truth.class.as_deref()))
            .map_or(&[], |v| v.as_slice());
        let mut k = 0;
        while k < mine.len() {
            let px = x.at(mine[k].time as f64 - 0.5);
            let mut end = k + 1;
            while end < mine.len() && (x.at(mine[end].time as f64 - 0.5) - px).abs() < 1.0 {
                end += 1;
            }
            let group = &mine[k..end];
            let full = group.iter().all(|e| e.from.is_some() && e.to.is_some());
            let title = if group.len() == 1 {
                describe(group[0], context)
            } else {
                merged += group.len();
                let lines: Vec<String> = group.iter().map(|e| describe(e, context)).collect();
                format!("{} switches here:\n{}", group.len(), lines.join("\n"))
            };
            let dash = if full {
                ""
            } else {
                " stroke-dasharray=\"3 2\""
            };
            let _ = write!(
                out,
                "<g class=\"switch-mark\" data-events=\"{}\" data-step=\"{}\" data-truth=\"{}\"><title>{}</title>\
                 <path d=\"M{p} {a}V{b}\" stroke=\"#ffffff\" stroke-width=\"4.4\"/>\
                 <path d=\"M{p} {a}V{b}\" stroke=\"{INK}\" stroke-width=\"2.2\"{dash}/></g>",
                group.len(),
                group[0].time,
                esc(&truth.truth),
                esc(&title),
                p = n(px),
                a = n(top + 1.0),
                b = n(top + ROW_H - 1.0)
            );
            k = end;
        }
        out.push_str("</g>");
    }
    out.push_str("</g></svg>");
    if merged > 0 {
        notes.push(format!(
            "Where one object's switches fall on the same pixel they share one tick ({merged} \
             switches in all); its tooltip lists them."
        ));
    }
    Figure { svg: out, notes }
}
