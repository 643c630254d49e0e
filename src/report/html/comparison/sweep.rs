//! Across settings: each tracker's mean d (and, when the ranking is by d^p per step, that too)
//! against each swept parameter, one line per tracker.
//!
//! Layout: one figure per swept parameter and quantity. The parameter runs along x; when other
//! parameters are swept too, the figure holds small multiples, one panel per combination of
//! their values, on one shared y scale, so that every setting of the grid is drawn and panels
//! compare by eye. (Holding the other parameters at one value would hide most of a grid; one
//! chart with a line per (tracker, other values) would tangle.) Without `--switch-penalty` the
//! penalty follows the cut-off: it is then no parameter of its own and the cut-off's axis says
//! so. The differences to the best and their bootstrap intervals are in the ranking table and
//! each point's tooltip rather than drawn as whiskers: they are differences to the best of each
//! setting, which may be another tracker at another setting, so whiskers on the means would
//! mislead.

use std::fmt::Write;

use super::super::all_trackers::tracker_style;
use super::super::style::INK;
use super::super::svg::{self, esc, n, Scale};
use super::super::WIDTH;
use super::{exact, setting_attributes, setting_words, ComparisonPage};
use crate::compare::{Comparison, RankBy, TrackerResult};
use crate::trajectory_metric::TrajectoryParams;

/// A parameter of the grid.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Parameter {
    Cutoff,
    Order,
    Penalty,
}

impl Parameter {
    fn of(self, params: &TrajectoryParams) -> f64 {
        match self {
            Parameter::Cutoff => params.cutoff,
            Parameter::Order => params.order,
            Parameter::Penalty => params.switch_penalty,
        }
    }

    fn symbol(self) -> &'static str {
        match self {
            Parameter::Cutoff => "c",
            Parameter::Order => "p",
            Parameter::Penalty => "γ",
        }
    }

    fn name(self) -> &'static str {
        match self {
            Parameter::Cutoff => "cut-off",
            Parameter::Order => "order",
            Parameter::Penalty => "switching-penalty",
        }
    }

    fn words(self, follows: bool) -> &'static str {
        match self {
            Parameter::Cutoff if follows => "cut-off c (and switching penalty γ = c)",
            Parameter::Cutoff => "cut-off c",
            Parameter::Order => "order p",
            Parameter::Penalty => "switching penalty γ",
        }
    }
}

/// What a chart draws per tracker.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Quantity {
    MetricMean,
    PerStepMean,
}

impl Quantity {
    fn of(self, tracker: &TrackerResult) -> f64 {
        match self {
            Quantity::MetricMean => tracker.summary.metric_mean,
            Quantity::PerStepMean => tracker.summary.per_step_mean,
        }
    }

    fn name(self) -> &'static str {
        match self {
            Quantity::MetricMean => "metric-mean",
            Quantity::PerStepMean => "per-step-mean",
        }
    }

    fn words(self) -> &'static str {
        match self {
            Quantity::MetricMean => "mean d",
            Quantity::PerStepMean => "mean d^p per step",
        }
    }
}

/// True when the penalty is the cut-off at every setting (no `--switch-penalty`).
fn penalty_follows(comparison: &Comparison) -> bool {
    comparison
        .settings
        .iter()
        .all(|s| s.params.switch_penalty == s.params.cutoff)
}

/// The parameters of their own (the penalty is none when it follows the cut-off), split into
/// those that take more than one value and those that keep one.
fn own_parameters(comparison: &Comparison) -> (Vec<Parameter>, Vec<Parameter>) {
    let follows = penalty_follows(comparison);
    [Parameter::Cutoff, Parameter::Order, Parameter::Penalty]
        .into_iter()
        .filter(|p| !(follows && *p == Parameter::Penalty))
        .partition(|p| {
            let first = p.of(&comparison.settings[0].params);
            comparison.settings.iter().any(|s| p.of(&s.params) != first)
        })
}

/// The parameters that take more than one value, each with the others that do.
fn swept(comparison: &Comparison) -> Vec<(Parameter, Vec<Parameter>)> {
    let (varying, _) = own_parameters(comparison);
    varying
        .iter()
        .map(|&p| (p, varying.iter().copied().filter(|&o| o != p).collect()))
        .collect()
}

/// The parameters that keep one value, in words (`p = 1, γ = 10`); "" when none does.
fn fixed_words(comparison: &Comparison) -> String {
    let (_, fixed) = own_parameters(comparison);
    fixed
        .iter()
        .map(|p| {
            format!(
                "{} = {}",
                p.symbol(),
                exact(p.of(&comparison.settings[0].params))
            )
        })
        .collect::<Vec<_>>()
        .join(", ")
}

/// One panel: the settings that share the values of the other parameters, sorted along x.
struct Panel {
    /// The other parameters' values, in words ("" when there are none).
    label: String,
    /// Indices into the comparison's settings, by increasing value of the swept parameter.
    settings: Vec<usize>,
}

/// The panels of the chart along `parameter`: one per combination of the `others`, in order of
/// first appearance, each with at least two settings.
fn panels(comparison: &Comparison, parameter: Parameter, others: &[Parameter]) -> Vec<Panel> {
    let mut keys: Vec<Vec<u64>> = Vec::new();
    let mut panels: Vec<Panel> = Vec::new();
    for (index, setting) in comparison.settings.iter().enumerate() {
        let key: Vec<u64> = others
            .iter()
            .map(|o| o.of(&setting.params).to_bits())
            .collect();
        match keys.iter().position(|k| *k == key) {
            Some(at) => panels[at].settings.push(index),
            None => {
                keys.push(key);
                let label = others
                    .iter()
                    .map(|o| format!("{} = {}", o.symbol(), exact(o.of(&setting.params))))
                    .collect::<Vec<_>>()
                    .join(", ");
                panels.push(Panel {
                    label,
                    settings: vec![index],
                });
            }
        }
    }
    for panel in &mut panels {
        panel.settings.sort_by(|&a, &b| {
            parameter
                .of(&comparison.settings[a].params)
                .total_cmp(&parameter.of(&comparison.settings[b].params))
        });
    }
    panels.retain(|p| p.settings.len() >= 2);
    panels
}

/// True when some parameter takes several values on settings that otherwise agree.
pub(super) fn has_charts(comparison: &Comparison) -> bool {
    comparison.settings.len() > 1
        && swept(comparison)
            .iter()
            .any(|(p, others)| !panels(comparison, *p, others).is_empty())
}

/// Writes the section.
pub(super) fn section(out: &mut String, page: &ComparisonPage) {
    let comparison = page.comparison;
    let follows = penalty_follows(comparison);
    let mut quantities = vec![Quantity::MetricMean];
    if comparison.rank_by == RankBy::PerStep {
        quantities.push(Quantity::PerStepMean);
    }
    out.push_str("<section id=\"sweep\">\n<h2>Across settings</h2>\n");
    let _ = writeln!(
        out,
        "<p class=\"table-note\">Each tracker's mean over the cases at each setting, one line per \
         tracker, lower is better. Where several parameters are swept, each chart puts one of \
         them along x and draws a panel for each combination of the others, all on one scale. \
         The larger point marks the best tracker of its setting; hover over a point for its rank \
         and its difference to the best with the bootstrap interval (also in the ranking \
         table).</p>"
    );
    let fixed = fixed_words(comparison);
    for (parameter, others) in swept(comparison) {
        let panels = panels(comparison, parameter, &others);
        if panels.is_empty() {
            continue;
        }
        for &quantity in &quantities {
            let _ = writeln!(
                out,
                "<figure class=\"chart sweep\" data-parameter=\"{}\" data-quantity=\"{}\">\
                 <figcaption><h3>{} against {}{}</h3></figcaption>",
                parameter.name(),
                quantity.name(),
                capitalised(quantity.words()),
                parameter.words(follows),
                match fixed.as_str() {
                    "" => String::new(),
                    words => format!(", at {words}"),
                }
            );
            if others.contains(&Parameter::Order) && panels.len() > 1 {
                out.push_str(
                    "<p class=\"table-note\">Each order p has its own y scale: d at another order \
                     is another measure.</p>\n",
                );
            }
            out.push_str(&chart(page, parameter, quantity, &panels, follows));
            out.push_str("\n</figure>\n");
        }
    }
    out.push_str("</section>\n");
}

fn capitalised(words: &str) -> String {
    let mut chars = words.chars();
    chars.next().map_or_else(String::new, |c| {
        c.to_uppercase().collect::<String>() + chars.as_str()
    })
}

const PANEL_H: f64 = 190.0;
const TOP: f64 = 22.0;
const BOTTOM: f64 = 44.0;
const LEFT: f64 = 62.0;
const GAP: f64 = 16.0;
const LEGEND_ROW_H: f64 = 18.0;

/// The chart: a legend, then the panels in rows of up to three.
fn chart(
    page: &ComparisonPage,
    parameter: Parameter,
    quantity: Quantity,
    panels: &[Panel],
    follows: bool,
) -> String {
    let comparison = page.comparison;
    let names = page.tracker_names();
    let columns = panels.len().min(3);
    let rows = panels.len().div_ceil(columns);
    let panel_w = (WIDTH - GAP * (columns as f64 - 1.0)) / columns as f64;

    // The legend wraps: one row holds as many names as fit.
    let mut legend = String::new();
    let (mut lx, mut legend_rows) = (LEFT, 0usize);
    for (index, name) in names.iter().enumerate() {
        let width = 30.0 + svg::text_width(name.chars().count()) + 22.0;
        if lx + width > WIDTH && lx > LEFT {
            lx = LEFT;
            legend_rows += 1;
        }
        let ly = 10.0 + legend_rows as f64 * LEGEND_ROW_H;
        let style = tracker_style(index);
        let _ = write!(
            legend,
            "<line x1=\"{}\" x2=\"{}\" y1=\"{y}\" y2=\"{y}\" {}/><circle cx=\"{}\" cy=\"{y}\" \
             r=\"3.5\" fill=\"{}\"/>",
            n(lx),
            n(lx + 24.0),
            style.stroke(2.0),
            n(lx + 12.0),
            style.hex(),
            y = n(ly)
        );
        svg::text(&mut legend, lx + 30.0, ly + 4.0, "start", "", name);
        lx += width;
    }
    let panels_top = 8.0 + (legend_rows + 1) as f64 * LEGEND_ROW_H;
    let row_h = TOP + PANEL_H + BOTTOM;
    let height = panels_top + rows as f64 * row_h;

    // One y scale for every panel, from 0; each panel its own when the panels differ in
    // order p, as d at another order is another measure (for p = 2 a root of squares, far below
    // d at p = 1 on the same data).
    let shared = panels.iter().all(|p| {
        let order = |s: &usize| comparison.settings[*s].params.order;
        p.settings
            .iter()
            .map(order)
            .eq(panels[0].settings.iter().map(order))
    });
    let peak_of = |settings: &[usize]| {
        settings
            .iter()
            .flat_map(|&s| {
                comparison.settings[s]
                    .trackers
                    .iter()
                    .map(|t| quantity.of(t))
            })
            .fold(0.0, f64::max)
    };
    let all: Vec<usize> = panels.iter().flat_map(|p| p.settings.clone()).collect();
    let scale_of = |panel: &Panel| {
        let peak = if shared {
            peak_of(&all)
        } else {
            peak_of(&panel.settings)
        };
        let y_step = svg::tick_step(if peak > 0.0 { peak } else { 1.0 }, 4);
        (((peak / y_step).ceil() * y_step).max(y_step), y_step)
    };

    let mut out = String::new();
    let _ = write!(
        out,
        "<svg class=\"sweep-chart\" viewBox=\"0 0 {w} {h}\" width=\"{w}\" height=\"{h}\" \
         role=\"img\" aria-label=\"{} of each tracker against the {}\">",
        quantity.words(),
        parameter.words(follows),
        w = n(WIDTH),
        h = n(height)
    );
    let _ = write!(out, "<g class=\"legend\">{legend}</g>");
    for (k, panel) in panels.iter().enumerate() {
        let x0 = (k % columns) as f64 * (panel_w + GAP);
        let y0 = panels_top + (k / columns) as f64 * row_h;
        draw_panel(
            &mut out,
            page,
            &names,
            parameter,
            quantity,
            panel,
            (x0, y0, panel_w),
            scale_of(panel),
            follows,
        );
    }
    out.push_str("</svg>");
    out
}

#[allow(clippy::too_many_arguments)]
fn draw_panel(
    out: &mut String,
    page: &ComparisonPage,
    names: &[String],
    parameter: Parameter,
    quantity: Quantity,
    panel: &Panel,
    (x0, y0, w): (f64, f64, f64),
    (y_top, y_step): (f64, f64),
    follows: bool,
) {
    let comparison = page.comparison;
    let settings: Vec<_> = panel
        .settings
        .iter()
        .map(|&s| &comparison.settings[s])
        .collect();
    let values: Vec<f64> = settings.iter().map(|s| parameter.of(&s.params)).collect();
    let (lo, hi) = (values[0], values[values.len() - 1]);
    let pad = (hi - lo) * 0.06;
    let (left, right) = (x0 + LEFT, x0 + w - 10.0);
    let (top, bottom) = (y0 + TOP, y0 + TOP + PANEL_H);
    let x = Scale::new(lo - pad, hi + pad, left, right);
    let y = Scale::new(0.0, y_top, bottom, top);
    let _ = write!(
        out,
        "<g class=\"sweep-panel\" data-panel=\"{}\">",
        esc(&panel.label)
    );
    if !panel.label.is_empty() {
        svg::text(
            out,
            (left + right) / 2.0,
            y0 + 14.0,
            "middle",
            "axis-label",
            &panel.label,
        );
    }
    svg::y_grid(out, &y, (y_top, y_step), left + 1.0, right);
    let _ = write!(
        out,
        "<line x1=\"{}\" x2=\"{}\" y1=\"{b}\" y2=\"{b}\" stroke=\"{INK}\"/>",
        n(left),
        n(right),
        b = n(bottom)
    );
    // x ticks at the swept values, leaving out labels that would touch.
    let mut last_label = f64::NEG_INFINITY;
    for &v in &values {
        let px = x.at(v);
        let _ = write!(
            out,
            "<line x1=\"{p}\" x2=\"{p}\" y1=\"{}\" y2=\"{}\" stroke=\"{INK}\"/>",
            n(bottom),
            n(bottom + 3.0),
            p = n(px)
        );
        let label = exact(v);
        if px - last_label >= svg::text_width(label.chars().count()) + 6.0 {
            svg::text(out, px, bottom + 15.0, "middle", "tick", &label);
            last_label = px;
        }
    }
    let axis = match parameter {
        Parameter::Cutoff if follows => "cut-off c (γ = c)",
        _ => parameter.words(false),
    };
    svg::text(
        out,
        (left + right) / 2.0,
        bottom + 32.0,
        "middle",
        "axis-label",
        axis,
    );
    let y_label = match quantity {
        Quantity::MetricMean => "mean d".to_string(),
        Quantity::PerStepMean => {
            "mean d<tspan baseline-shift=\"super\" font-size=\"8\">p</tspan> per step".to_string()
        }
    };
    let _ = write!(
        out,
        "<text class=\"axis-label\" transform=\"rotate(-90)\" x=\"{}\" y=\"{}\" \
         text-anchor=\"middle\">{y_label}</text>",
        n(-(top + bottom) / 2.0),
        n(x0 + 13.0)
    );
    // One line per tracker, the first given drawn last so that it stays on top.
    for (index, name) in names.iter().enumerate().rev() {
        let style = tracker_style(index);
        let points: Vec<(f64, &TrackerResult, usize)> = settings
            .iter()
            .enumerate()
            .filter_map(|(k, s)| {
                s.trackers
                    .iter()
                    .find(|t| &t.tracker == name)
                    .map(|t| (values[k], t, panel.settings[k]))
            })
            .collect();
        let mut d = String::new();
        for (k, (v, t, _)) in points.iter().enumerate() {
            let _ = write!(
                d,
                "{}{} {}",
                if k == 0 { "M" } else { "L" },
                n(x.at(*v)),
                n(y.at(quantity.of(t)))
            );
        }
        let _ = write!(
            out,
            "<g class=\"sweep-tracker\" data-tracker=\"{}\"><path d=\"{d}\" fill=\"none\" {}/>",
            esc(name),
            style.stroke(1.8)
        );
        for (v, t, setting) in &points {
            let value = quantity.of(t);
            let params = &comparison.settings[*setting].params;
            let _ = write!(
                out,
                "<circle class=\"sweep-point\" {} data-tracker=\"{}\" data-quantity=\"{}\" \
                 data-value=\"{}\" cx=\"{}\" cy=\"{}\" r=\"{}\" fill=\"{}\" stroke=\"#ffffff\" \
                 stroke-width=\"1\"><title>{}</title></circle>",
                setting_attributes(params),
                esc(name),
                quantity.name(),
                exact(value),
                n(x.at(*v)),
                n(y.at(value)),
                if t.rank == 1 { "5" } else { "3.5" },
                style.hex(),
                esc(&point_words(name, params, quantity, t, comparison.rank_by))
            );
        }
        out.push_str("</g>");
    }
    out.push_str("</g>");
}

/// A point's tooltip: the tracker, the setting, the value, the rank and the difference to the
/// best with its interval.
fn point_words(
    name: &str,
    params: &TrajectoryParams,
    quantity: Quantity,
    t: &TrackerResult,
    rank_by: RankBy,
) -> String {
    let mut words = format!(
        "{name} at {}: {} {} (rank {})",
        setting_words(params),
        quantity.words(),
        svg::short(quantity.of(t)),
        t.rank
    );
    match &t.difference {
        None => words.push_str(", the best"),
        Some(d) => {
            let ranked = match rank_by {
                RankBy::Metric => "d",
                RankBy::PerStep => "d^p per step",
            };
            let sign = if d.mean >= 0.0 { "+" } else { "" };
            let _ = write!(
                words,
                "; difference in {ranked} to the best ({}): {sign}{}",
                d.against,
                svg::short(d.mean)
            );
            if let Some(i) = &d.interval {
                let _ = write!(words, " [{}, {}]", svg::short(i.lower), svg::short(i.upper));
            }
            let _ = write!(words, ", {}", d.verdict.name());
        }
    }
    words
}
