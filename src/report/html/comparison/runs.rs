//! Over time, over the runs: per sequence (and per cut-off and order of a sweep), each
//! tracker's per-step GOSPA over the Monte Carlo runs as a line (the mean over the runs) with a
//! band up to the root mean square over the runs (RMS^2 = mean^2 + variance over the runs, so
//! the band's width shows how much the runs disagree), on one time axis and one y scale.
//!
//! Drawn from the occupied steps ([`OccupiedOverRuns::stretches`]): a window longer than
//! [`Limits::max_time_bins`] steps is grouped into bins of whole steps, each showing the mean
//! per step of the mean and of the RMS; steps where no run has an object add 0. Nothing is
//! held per step of the window, so a window of millions of steps costs as much as its occupied
//! steps and the bins.

use std::fmt::Write;

use super::super::all_trackers::tracker_style;
use super::super::over_time::{mean_per_step, step_line, Bin};
use super::super::style::INK;
use super::super::svg::{self, esc, n, Scale};
use super::super::time_axis::{axis_title, draw_axis, span_words, TimeScale};
use super::super::{Limits, RIGHT, WIDTH};
use super::{exact, ComparisonPage};
use crate::compare::montecarlo::{OccupiedOverRuns, StepOverRuns};
use crate::compare::StepsOverRuns;
use crate::per_step::Stretch;
use crate::trajectory::{Step, Window};

const LEFT: f64 = 70.0;
const PLOT_H: f64 = 220.0;
const LEGEND_ROW_H: f64 = 18.0;

/// Writes the section: one figure per (cut-off, order, sequence), in the order of the
/// comparison's Monte Carlo blocks.
pub(super) fn section(out: &mut String, page: &ComparisonPage, limits: &Limits) {
    let blocks = &page.comparison.monte_carlo;
    out.push_str("<section id=\"runs\">\n<h2>Over time, over the runs</h2>\n");
    let _ = writeln!(
        out,
        "<p class=\"table-note\">For each sequence, each tracker's per-step GOSPA (α = 2) over \
         the Monte Carlo runs: the line is the mean over the runs at each step, the band reaches \
         up to the root mean square over the runs (the wider the band, the more the runs \
         disagree). A step outside a run's window counts 0 for that run. Lower is better.</p>"
    );
    let several_settings = blocks
        .iter()
        .any(|b| (b.cutoff, b.order) != (blocks[0].cutoff, blocks[0].order));
    let mut start = 0;
    while start < blocks.len() {
        let key = |b: &StepsOverRuns| (b.cutoff.to_bits(), b.order.to_bits(), b.sequence.clone());
        let end = start
            + blocks[start..]
                .iter()
                .take_while(|b| key(b) == key(&blocks[start]))
                .count();
        figure(out, page, &blocks[start..end], several_settings, limits);
        start = end;
    }
    out.push_str("</section>\n");
}

/// The union of the blocks' windows.
fn shared_window(blocks: &[StepsOverRuns]) -> Option<Window> {
    blocks
        .iter()
        .filter_map(|b| b.steps.window)
        .reduce(|a, b| Window {
            first: a.first.min(b.first),
            last: a.last.max(b.last),
        })
}

/// The mean per step of the mean and of the RMS over bins of `size` steps of `window`, from the
/// occupied steps only.
fn binned(steps: &OccupiedOverRuns, window: Window, size: usize) -> (Vec<Bin>, Vec<f64>, Vec<f64>) {
    let mut bins: Vec<Bin> = Vec::new();
    let mut first = window.first;
    while first <= window.last {
        let last = first.saturating_add(size as Step - 1).min(window.last);
        bins.push(Bin {
            first,
            last,
            parts: [0.0; 3],
        });
        if last == Step::MAX {
            break;
        }
        first = last + 1;
    }
    let mut mean = vec![0.0; bins.len()];
    let mut rms = vec![0.0; bins.len()];
    for stretch in steps.stretches() {
        // An empty stretch adds 0 to every bin it crosses.
        if let Stretch::Occupied(step) = stretch {
            let at = ((step.time - window.first) as u64 / size as u64) as usize;
            mean[at] += step.mean;
            rms[at] += step.rms;
        }
    }
    for (k, bin) in bins.iter().enumerate() {
        let count = (bin.last - bin.first + 1) as f64;
        mean[k] /= count;
        rms[k] /= count;
    }
    (bins, mean, rms)
}

fn figure(
    out: &mut String,
    page: &ComparisonPage,
    blocks: &[StepsOverRuns],
    several_settings: bool,
    limits: &Limits,
) {
    let first = &blocks[0];
    let runs = blocks.iter().map(|b| b.runs).max().unwrap_or(0);
    let setting = format!("c = {}, p = {}", exact(first.cutoff), exact(first.order));
    let heading = match (first.sequence.is_empty(), several_settings) {
        (true, true) => setting,
        (true, false) => "All cases".to_string(),
        (false, true) => format!("Sequence {} at {setting}", first.sequence),
        (false, false) => format!("Sequence {}", first.sequence),
    };
    let _ = writeln!(
        out,
        "<figure class=\"chart runs\" data-sequence=\"{}\" data-cutoff=\"{}\" data-order=\"{}\">\
         <figcaption><h3>{}: {runs} run{}</h3></figcaption>",
        esc(&first.sequence),
        exact(first.cutoff),
        exact(first.order),
        esc(&heading),
        super::super::plural(runs)
    );
    let Some(window) = shared_window(blocks) else {
        out.push_str(
            "<p class=\"note\">No run of this sequence has an object: nothing to draw.</p>\n\
             </figure>\n",
        );
        return;
    };
    let size = window.len().div_ceil(limits.max_time_bins.max(1)).max(1);
    let series: Vec<(Vec<Bin>, Vec<f64>, Vec<f64>)> = blocks
        .iter()
        .map(|b| binned(&b.steps, window, size))
        .collect();
    let names = page.tracker_names();
    let time = page.time.as_ref();

    // The legend wraps: one row holds as many names as fit.
    let mut legend = String::new();
    let (mut lx, mut row) = (LEFT, 0usize);
    for block in blocks {
        let index = page.style_index(&names, &block.tracker);
        let width = 40.0 + svg::text_width(block.tracker.chars().count()) + 22.0;
        if lx + width > WIDTH - RIGHT && lx > LEFT {
            lx = LEFT;
            row += 1;
        }
        let ly = 10.0 + row as f64 * LEGEND_ROW_H;
        let style = tracker_style(index);
        let _ = write!(
            legend,
            "<rect x=\"{}\" y=\"{}\" width=\"32\" height=\"10\" fill=\"{}\" fill-opacity=\"0.3\"/>\
             <line x1=\"{}\" x2=\"{}\" y1=\"{y}\" y2=\"{y}\" {}/>",
            n(lx),
            n(ly - 5.0),
            style.hex(),
            n(lx),
            n(lx + 32.0),
            style.stroke(2.0),
            y = n(ly + 3.0)
        );
        svg::text(
            &mut legend,
            lx + 38.0,
            ly + 4.0,
            "start",
            "",
            &block.tracker,
        );
        lx += width;
    }
    let plot_top = 12.0 + (row + 1) as f64 * LEGEND_ROW_H;
    let plot_bottom = plot_top + PLOT_H;
    let height = plot_bottom + 44.0;
    let peak = series
        .iter()
        .flat_map(|(_, mean, rms)| mean.iter().chain(rms))
        .copied()
        .fold(0.0, f64::max);
    let y_step = svg::tick_step(if peak > 0.0 { peak } else { 1.0 }, 4);
    let y_top = ((peak / y_step).ceil() * y_step).max(y_step);
    let x = Scale::new(
        window.first as f64 - 0.5,
        window.last as f64 + 0.5,
        LEFT,
        WIDTH - RIGHT,
    );
    let y = Scale::new(0.0, y_top, plot_bottom, plot_top);

    let _ = write!(
        out,
        "<svg class=\"runs-chart\" viewBox=\"0 0 {w} {h}\" width=\"{w}\" height=\"{h}\" \
         role=\"img\" aria-label=\"Per-step GOSPA over the runs of each tracker: mean and RMS\">",
        w = n(WIDTH),
        h = n(height)
    );
    let _ = write!(out, "<g class=\"legend\">{legend}</g>");
    out.push_str("<g class=\"axis y\">");
    svg::y_grid(out, &y, (y_top, y_step), LEFT, WIDTH - RIGHT);
    let _ = write!(
        out,
        "<text class=\"axis-label\" transform=\"rotate(-90)\" x=\"{}\" y=\"13\" \
         text-anchor=\"middle\">GOSPA per step</text></g>",
        n(-(plot_top + plot_bottom) / 2.0)
    );

    // Bands first, then the lines over them; the first tracker given drawn last.
    for (block, (bins, mean, rms)) in blocks.iter().zip(&series).rev() {
        let style = tracker_style(page.style_index(&names, &block.tracker));
        let mut d = step_line(bins, rms, &x, &y);
        for k in (0..bins.len()).rev() {
            let _ = write!(
                d,
                "V{}H{}",
                n(y.at(mean[k])),
                n(x.at(bins[k].first as f64 - 0.5))
            );
        }
        d.push('Z');
        let _ = write!(
            out,
            "<path class=\"runs-band\" data-tracker=\"{}\" d=\"{d}\" fill=\"{}\" \
             fill-opacity=\"0.3\" stroke=\"none\"/>",
            esc(&block.tracker),
            style.hex()
        );
    }
    for (block, (bins, mean, rms)) in blocks.iter().zip(&series).rev() {
        let style = tracker_style(page.style_index(&names, &block.tracker));
        let whole_mean = mean_per_step(bins, mean, window.len());
        let whole_rms = mean_per_step(bins, rms, window.len());
        let list = |values: &[f64]| {
            values
                .iter()
                .map(|v| exact(*v))
                .collect::<Vec<_>>()
                .join(" ")
        };
        let _ = write!(
            out,
            "<path class=\"runs-line\" data-tracker=\"{}\" data-sequence=\"{}\" data-cutoff=\"{}\" \
             data-order=\"{}\" data-runs=\"{}\" data-first=\"{}\" \
             data-last=\"{}\" data-bin=\"{size}\" data-mean=\"{}\" data-rms=\"{}\" d=\"{}\" \
             fill=\"none\" {}><title>{}</title></path>",
            esc(&block.tracker),
            esc(&block.sequence),
            exact(block.cutoff),
            exact(block.order),
            block.runs,
            window.first,
            window.last,
            list(mean),
            list(rms),
            step_line(bins, mean, &x, &y),
            style.stroke(1.6),
            esc(&format!(
                "{}: over {}, per step: mean over the runs {}, RMS over the runs {}",
                block.tracker,
                span_words(window.first, window.last, time),
                svg::short(whole_mean),
                svg::short(whole_rms)
            ))
        );
    }
    let _ = write!(
        out,
        "<line x1=\"{}\" x2=\"{}\" y1=\"{b}\" y2=\"{b}\" stroke=\"{INK}\"/>",
        n(LEFT),
        n(WIDTH - RIGHT),
        b = n(plot_bottom)
    );
    out.push_str("<g class=\"axis x\">");
    draw_axis(
        out,
        window,
        time,
        &x,
        (LEFT, WIDTH - RIGHT),
        plot_bottom,
        plot_bottom + 15.0,
        1.0,
    );
    let _ = write!(
        out,
        "<text class=\"axis-label\" x=\"{}\" y=\"{}\" text-anchor=\"middle\">{}</text>",
        n((LEFT + WIDTH - RIGHT) / 2.0),
        n(plot_bottom + 34.0),
        axis_title(time)
    );
    out.push_str("</g></svg>\n");
    summary_table(out, blocks, &series, window, time);
    if size > 1 {
        let _ = writeln!(
            out,
            "<p class=\"note\">{} steps are more than this chart draws one by one: each line and \
             band shows the mean per step over bins of {size} steps.</p>",
            window.len()
        );
    }
    out.push_str("</figure>\n");
}

/// Under a chart, per tracker: the mean per step over the window of the mean and of the RMS
/// over the runs, and the step with the highest mean (the first, on a tie).
fn summary_table(
    out: &mut String,
    blocks: &[StepsOverRuns],
    series: &[(Vec<Bin>, Vec<f64>, Vec<f64>)],
    window: Window,
    time: Option<&TimeScale>,
) {
    out.push_str(
        "<table class=\"summary runs-summary\"><thead><tr><th scope=\"col\" class=\"name\">\
         Tracker</th><th scope=\"col\">Mean per step of the mean</th><th scope=\"col\">Mean per \
         step of the RMS</th><th scope=\"col\">Highest mean</th></tr></thead><tbody>",
    );
    for (block, (bins, mean, rms)) in blocks.iter().zip(series) {
        let peak = block
            .steps
            .occupied
            .iter()
            .fold(None::<&StepOverRuns>, |best, s| match best {
                Some(b) if b.mean >= s.mean => Some(b),
                _ => Some(s),
            });
        let peak = peak.map_or("–".to_string(), |s| {
            format!(
                "{} at {}",
                svg::short(s.mean),
                span_words(s.time, s.time, time)
            )
        });
        let _ = write!(
            out,
            "<tr><td class=\"name\">{}</td><td>{}</td><td>{}</td><td>{}</td></tr>",
            esc(&block.tracker),
            svg::short(mean_per_step(bins, mean, window.len())),
            svg::short(mean_per_step(bins, rms, window.len())),
            esc(&peak)
        );
    }
    out.push_str("</tbody></table>\n");
}

#[cfg(test)]
mod tests {
    use super::*;

    fn step(time: Step, mean: f64, rms: f64) -> StepOverRuns {
        StepOverRuns {
            time,
            runs: 2,
            mean,
            rms,
            localization: 0.0,
            missed: 0.0,
            false_: 0.0,
            missed_count: 0.0,
            false_count: 0.0,
        }
    }

    #[test]
    fn bins_hold_the_mean_per_step_of_their_steps() {
        // Window 1..=6 in bins of 4 steps: 1..=4 and 5..=6. Occupied: step 1 (mean 2, RMS 3)
        // and step 4 (mean 6, RMS 7); every other step counts 0. By hand: bin 1 has mean
        // (2 + 6) / 4 = 2 and RMS (3 + 7) / 4 = 2.5; bin 2 has 0 and 0.
        let steps = OccupiedOverRuns {
            window: Some(Window { first: 1, last: 6 }),
            runs: 2,
            occupied: vec![step(1, 2.0, 3.0), step(4, 6.0, 7.0)],
        };
        let (bins, mean, rms) = binned(&steps, Window { first: 1, last: 6 }, 4);
        let spans: Vec<(Step, Step)> = bins.iter().map(|b| (b.first, b.last)).collect();
        assert_eq!(spans, [(1, 4), (5, 6)]);
        assert!((mean[0] - 2.0).abs() < 1e-12 && (rms[0] - 2.5).abs() < 1e-12);
        assert_eq!((mean[1], rms[1]), (0.0, 0.0));
        // A window wider than the series' own (another tracker's): the bins cover it all.
        let (bins, mean, _) = binned(&steps, Window { first: -1, last: 6 }, 4);
        assert_eq!(bins.len(), 2);
        assert!((mean[0] - 0.5).abs() < 1e-12 && (mean[1] - 1.5).abs() < 1e-12);
    }
}
