//! The visual report: one self-contained HTML page (inline CSS and SVG, no script, no external
//! reference) built from result structs. Contents and rules: `specs/report.md`.
//!
//! The page opens with a summary (parameters, then the metric, its parts and counts, one column
//! per tracker, and a bar chart of the parts) and a chart of every tracker's per-step GOSPA on
//! one time axis, followed by a section per tracker with three charts on that axis: errors over
//! time (per-step GOSPA stacked by its parts, switch events marked, counted per stretch of steps
//! where they would crowd), the identity chart (a row per true object, worst covered first,
//! spans coloured by the covering track) and, for states of two or more dimensions, a top view
//! of true and estimated paths with switch locations. [`Report::view`] restricts every chart to
//! a window of steps (the summary stays whole) and [`Report::time`] labels the time axes in the
//! input's time unit. What is too large to draw one mark per item is thinned or grouped
//! ([`Limits`]), and the page says so beside the chart.
//!
//! The markup is also well-formed XML (every element closed, no named entities), so it can be
//! checked with an XML parser; the same result structs give the same bytes.

mod all_trackers;
mod by_class;
mod comparison;
mod identity;
mod over_time;
mod style;
mod summary;
mod svg;
mod time_axis;
mod topview;

use std::fmt::Write;

use crate::assignment::audit::Audit;
use crate::assignment::switches::SwitchEvent;
use crate::error::{Error, Result};
use crate::evaluate::Evaluation;
use crate::per_step::OccupiedSteps;
use crate::trajectory::{TrajectorySet, Window};
use crate::trajectory_metric::TrajectoryScore;

pub use self::comparison::{render_comparison, ComparisonPage};
use self::style::Style;
use self::svg::esc;
pub use self::time_axis::TimeScale;

/// Everything the report shows about one tracker.
#[derive(Clone, Debug)]
pub struct TrackerResults {
    /// A short name for headings and table columns.
    pub name: String,
    /// The estimate file as the user named it.
    pub source: String,
    /// The tracker's output.
    pub estimate: TrajectorySet,
    /// Trajectory GOSPA with its parts and assignment.
    pub score: TrajectoryScore,
    /// Per-step GOSPA (alpha = 2, same cut-off and order) with its parts, at the steps where an
    /// object is present (the charts bin time, so nothing is kept per empty step).
    pub steps: OccupiedSteps,
    /// The switches seen from the true objects.
    pub switches: Vec<SwitchEvent>,
    /// How each true object was covered, worst first.
    pub audit: Audit,
    /// OSPA(2) with the same cut-off and order, when it was evaluated: a second opinion.
    pub ospa2: Option<crate::ospa2::Ospa2Score>,
    /// With classes, each class's results (in byte order of the class names); the fields
    /// above are then those of all classes together. Empty without classes.
    pub classes: Vec<ClassResults>,
}

/// One class's results for one tracker, from
/// [`evaluate_by_class`](crate::classes::evaluate_by_class).
#[derive(Clone, Debug)]
pub struct ClassResults {
    /// The class.
    pub class: String,
    /// Trajectory GOSPA of the class's scene.
    pub score: TrajectoryScore,
    /// Per-step GOSPA of the class's scene (alpha = 2), at its occupied steps.
    pub steps: OccupiedSteps,
}

impl TrackerResults {
    /// One tracker's results for the page, from its evaluation: the report needs the score,
    /// the per-step values (alpha = 2), the switch events and the audit
    /// ([`Request::everything`](crate::evaluate::Request::everything) asks for them).
    ///
    /// # Errors
    /// [`Error::Parameter`] when the evaluation lacks one of them.
    pub fn new(
        name: impl Into<String>,
        source: impl Into<String>,
        estimate: TrajectorySet,
        evaluation: Evaluation,
    ) -> Result<Self> {
        let Evaluation {
            score: Some(score),
            steps: Some(steps),
            switches: Some(switches),
            audit: Some(audit),
            ospa2,
            ..
        } = evaluation
        else {
            return Err(Error::Parameter(
                "the report shows trajectory GOSPA, per-step GOSPA, the switches and the audit: \
                 evaluate them all"
                    .into(),
            ));
        };
        Ok(TrackerResults {
            name: name.into(),
            source: source.into(),
            estimate,
            score,
            steps,
            switches,
            audit,
            ospa2,
            classes: Vec::new(),
        })
    }

    /// One tracker's results with classes, from
    /// [`evaluate_by_class`](crate::classes::evaluate_by_class): all classes together as in
    /// [`TrackerResults::new`], and each class's score and per-step values.
    ///
    /// # Errors
    /// As [`TrackerResults::new`], for all classes together or for a class.
    pub fn with_classes(
        name: impl Into<String>,
        source: impl Into<String>,
        estimate: TrajectorySet,
        by_class: crate::classes::ByClass,
    ) -> Result<Self> {
        let classes = by_class
            .classes
            .into_iter()
            .map(|c| {
                let (Some(score), Some(steps)) = (c.evaluation.score, c.evaluation.steps) else {
                    return Err(Error::Parameter(
                        "the report shows each class's trajectory GOSPA and per-step GOSPA: \
                         evaluate them"
                            .into(),
                    ));
                };
                Ok(ClassResults {
                    class: c.scene.class,
                    score,
                    steps,
                })
            })
            .collect::<Result<Vec<_>>>()?;
        Ok(TrackerResults {
            classes,
            ..TrackerResults::new(name, source, estimate, by_class.overall)?
        })
    }
}

/// The whole page's content.
#[derive(Clone, Debug)]
pub struct Report {
    /// The page title.
    pub title: String,
    /// The ground truth.
    pub truth: TrajectorySet,
    /// The truth file as the user named it.
    pub truth_source: String,
    /// Names of the state columns, in state order.
    pub state_columns: Vec<String>,
    /// The unit of the state values (for example `m`), shown on axes; `None` when unknown.
    pub units: Option<String>,
    /// The base distance's name.
    pub distance: String,
    /// The LP engine's name.
    pub engine: String,
    /// One entry per tracker, in the order given.
    pub trackers: Vec<TrackerResults>,
    /// The steps the time charts and the top view show (both ends included), `None` for the
    /// whole scene. The summary always covers the whole scene.
    pub view: Option<Window>,
    /// How steps read as time on the axes and in tooltips; `None` shows step indices.
    pub time: Option<TimeScale>,
}

/// Sizes above which a chart thins or groups its marks (and says so on the page).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Limits {
    /// Errors over time: at most this many columns; longer windows are grouped into bins of
    /// whole steps, each showing the mean per step.
    pub max_time_bins: usize,
    /// Identity chart: at most this many rows (the worst-covered objects).
    pub max_identity_rows: usize,
    /// Top view: at most about this many points in all; above it one step in k is drawn.
    pub max_top_points: usize,
    /// Top view: at most this many switch rings; above it nearby switches share one ring that
    /// counts them. (The time charts count switches per stretch of steps whenever their marks
    /// would touch.)
    pub max_switch_marks: usize,
    /// Top view: label the start of at most this many true paths.
    pub max_path_labels: usize,
    /// Top view: above this many true objects in the window, only those with a switch in the
    /// window are drawn (the worst ranked first, at most this many), with the tracks that
    /// covered them.
    pub max_top_objects: usize,
}

impl Default for Limits {
    fn default() -> Self {
        Limits {
            max_time_bins: 800,
            max_identity_rows: 120,
            max_top_points: 40_000,
            max_switch_marks: 400,
            max_path_labels: 60,
            max_top_objects: 20,
        }
    }
}

/// Width of every chart, in CSS pixels (charts scale down with the page).
pub(crate) const WIDTH: f64 = 960.0;
/// Right margin of the time charts.
pub(crate) const RIGHT: f64 = 18.0;

/// What a chart returns: its SVG and the notes on what it thinned or grouped.
pub(crate) struct Figure {
    pub svg: String,
    pub notes: Vec<String>,
}

/// What the charts of one tracker share.
pub(crate) struct Context<'a> {
    /// Unique prefix for SVG ids in this section.
    pub prefix: String,
    /// Left margin of the time charts (room for row labels).
    pub left: f64,
    /// The steps shown, shared by every tracker's time charts and top view.
    pub window: Window,
    /// The unit label ("m", or "state units").
    pub unit: String,
    /// The order p.
    pub order: f64,
    /// The whole report.
    pub report: &'a Report,
    /// The tracker drawn.
    pub tracker: &'a TrackerResults,
    /// A style per estimate, by estimate index.
    pub styles: Vec<Style>,
    pub limits: &'a Limits,
}

impl Context<'_> {
    /// The time scale: step `s` occupies `[x(s - 0.5), x(s + 0.5)]`.
    pub fn time_scale(&self) -> svg::Scale {
        svg::Scale::new(
            self.window.first as f64 - 0.5,
            self.window.last as f64 + 0.5,
            self.left,
            WIDTH - RIGHT,
        )
    }

    /// The style of the estimate with this id.
    pub fn style_of(&self, estimate: &str) -> Style {
        self.tracker
            .estimate
            .trajectories()
            .iter()
            .position(|t| t.id() == estimate)
            .map_or(Style::from_index(0), |j| self.styles[j])
    }

    /// `value unit` for tooltips.
    pub fn with_unit(&self, v: f64) -> String {
        format!("{} {}", svg::short(v), self.unit)
    }
}

/// Renders the page. Deterministic: the same report and limits give the same string.
pub fn render(report: &Report, limits: &Limits) -> String {
    let mut out = page_head(&report.title, "");
    header(&mut out, report);
    out.push_str("<main>\n");
    summary::section(&mut out, report);
    let window = shown_window(report);
    // With classes, identity rows read "id (class)".
    let class_label = by_class::classes(report)
        .iter()
        .map(|c| c.chars().count() + 6)
        .max()
        .unwrap_or(0);
    let max_id = (report
        .truth
        .trajectories()
        .iter()
        .map(|t| t.id().chars().count())
        .max()
        .unwrap_or(1)
        + class_label)
        .max(
            report
                .trackers
                .iter()
                .map(|t| t.name.chars().count())
                .max()
                .unwrap_or(1),
        );
    let left = (svg::text_width(max_id) + 22.0).clamp(64.0, 220.0);
    let unit = report
        .units
        .clone()
        .filter(|u| !u.trim().is_empty())
        .unwrap_or_else(|| "state units".to_string());
    let contexts: Vec<Context> = report
        .trackers
        .iter()
        .enumerate()
        .map(|(index, tracker)| Context {
            prefix: format!("k{}", index + 1),
            left,
            window: window.unwrap_or(Window { first: 0, last: 0 }),
            unit: unit.clone(),
            order: tracker.score.params.order,
            report,
            tracker,
            styles: track_styles(tracker),
            limits,
        })
        .collect();
    if let Some(first) = contexts.first() {
        all_trackers::section(&mut out, first, window.is_some());
        by_class::section(&mut out, first, window.is_some());
    }
    for context in &contexts {
        tracker_section(&mut out, context, window.is_some());
    }
    out.push_str("</main>\n");
    footer(&mut out);
    out.push_str("</body>\n</html>\n");
    out
}

/// The page up to the opening of its body: the title, and the stylesheet with `extra_css`.
pub(crate) fn page_head(title: &str, extra_css: &str) -> String {
    let mut out = String::with_capacity(1 << 16);
    out.push_str("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\"/>\n");
    out.push_str(
        "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\"/>\n\
         <meta name=\"generator\" content=\"switchyard ",
    );
    out.push_str(env!("CARGO_PKG_VERSION"));
    out.push_str("\"/>\n");
    let _ = writeln!(out, "<title>{}</title>", esc(title));
    out.push_str("<style>\n");
    out.push_str(CSS);
    out.push_str(extra_css);
    out.push_str("</style>\n</head>\n<body>\n");
    out
}

/// The steps the charts show: the union of the trackers' windows (so that every time chart
/// shares one axis), cut to the requested view; `None` when nothing is left.
pub(super) fn shown_window(report: &Report) -> Option<Window> {
    let whole = shared_window(report)?;
    match report.view {
        None => Some(whole),
        Some(view) => {
            let first = whole.first.max(view.first);
            let last = whole.last.min(view.last);
            (first <= last).then_some(Window { first, last })
        }
    }
}

/// The union of the trackers' windows.
fn shared_window(report: &Report) -> Option<Window> {
    report
        .trackers
        .iter()
        .filter_map(|t| t.score.window.or(t.steps.window))
        .reduce(|a, b| Window {
            first: a.first.min(b.first),
            last: a.last.max(b.last),
        })
}

/// Styles per estimate: tracks that cover the same true object get different styles.
fn track_styles(tracker: &TrackerResults) -> Vec<Style> {
    let estimates = tracker.estimate.trajectories();
    let index_of = |id: &str| estimates.iter().position(|t| t.id() == id);
    let mut neighbours: Vec<Vec<usize>> = vec![Vec::new(); estimates.len()];
    for truth in &tracker.audit.truths {
        let mut covering: Vec<usize> = truth
            .covered
            .iter()
            .filter_map(|s| index_of(&s.estimate))
            .collect();
        covering.sort_unstable();
        covering.dedup();
        for &a in &covering {
            for &b in &covering {
                if a != b && !neighbours[a].contains(&b) {
                    neighbours[a].push(b);
                }
            }
        }
    }
    style::assign_styles(estimates.len(), &neighbours)
}

fn header(out: &mut String, report: &Report) {
    let _ = writeln!(out, "<header>\n<h1>{}</h1>", esc(&report.title));
    let objects = report.truth.len();
    let trackers = report.trackers.len();
    let _ = writeln!(
        out,
        "<p class=\"lede\">Ground truth <code>{}</code>: {} true object{}. {} tracker{} compared \
         with trajectory GOSPA.</p>",
        esc(&report.truth_source),
        objects,
        plural(objects),
        trackers,
        plural(trackers)
    );
    out.push_str(
        "<nav aria-label=\"Contents\"><ol>\n<li><a href=\"#summary\">Summary</a></li>\n\
         <li><a href=\"#all\">All trackers over time</a></li>\n",
    );
    if !by_class::classes(report).is_empty() {
        out.push_str("<li><a href=\"#classes\">Each class over time</a></li>\n");
    }
    for (index, tracker) in report.trackers.iter().enumerate() {
        let id = format!("k{}", index + 1);
        let _ = writeln!(
            out,
            "<li><a href=\"#{id}\">{}</a>: <a href=\"#{id}-errors\">errors over time</a> · \
             <a href=\"#{id}-identity\">identity chart</a> · <a href=\"#{id}-top\">top view</a></li>",
            esc(&tracker.name)
        );
    }
    out.push_str("</ol></nav>\n</header>\n");
}

fn tracker_section(out: &mut String, context: &Context, has_window: bool) {
    let tracker = context.tracker;
    let id = &context.prefix;
    let _ = writeln!(
        out,
        "<section class=\"tracker\" id=\"{id}\" data-tracker=\"{}\">\n<h2>{} <span class=\"source\">{}</span></h2>",
        esc(&tracker.name),
        esc(&tracker.name),
        esc(&tracker.source)
    );
    let figures: [(&str, &str, String, Option<Figure>); 3] = [
        (
            "errors",
            "Errors over time",
            over_time::caption(context),
            has_window.then(|| over_time::chart(context)),
        ),
        (
            "identity",
            "Identity chart",
            identity::caption(context),
            has_window.then(|| identity::chart(context)),
        ),
        (
            "top",
            "Top view",
            topview::caption(context),
            has_window.then(|| topview::chart(context)),
        ),
    ];
    for (kind, heading, caption, figure) in figures {
        let _ = writeln!(
            out,
            "<figure id=\"{id}-{kind}\" class=\"chart {kind}\">\n<figcaption><h3>{heading}</h3>\
             <p>{caption}</p></figcaption>"
        );
        match figure {
            Some(figure) => {
                out.push_str(&figure.svg);
                out.push('\n');
                for note in figure.notes {
                    let _ = writeln!(out, "<p class=\"note\">{note}</p>");
                }
            }
            None => out.push_str(&format!(
                "<p class=\"note\">{}</p>\n",
                nothing_to_draw(context.report)
            )),
        }
        out.push_str("</figure>\n");
    }
    out.push_str("</section>\n");
}

/// Why a chart is left out: no object at all, or none within the chosen steps.
pub(crate) fn nothing_to_draw(report: &Report) -> &'static str {
    if report.view.is_some() && shared_window(report).is_some() {
        "No step of the inputs lies within the chosen steps: nothing to draw."
    } else {
        "Both sets are empty: nothing to draw."
    }
}

fn footer(out: &mut String) {
    let _ = writeln!(
        out,
        "<footer><p>Made by switchyard {}. Everything on this page is inline; it needs no network. \
         Hover over a mark for its details. Colours: the Okabe–Ito set for colour-vision \
         deficiency, each also told apart by a texture or dash pattern.</p></footer>",
        env!("CARGO_PKG_VERSION")
    );
}

/// `"s"` unless `count` is 1.
pub(crate) fn plural(count: usize) -> &'static str {
    if count == 1 {
        ""
    } else {
        "s"
    }
}

/// The page's stylesheet: our own layout, a print stylesheet, no external fonts.
const CSS: &str = r#":root { --ink: #1d232b; --muted: #5b6470; --rule: #d5dae0; --wash: #f3f5f7; --accent: #1f4e79; }
* { box-sizing: border-box; }
html { background: #ffffff; }
body { margin: 0 auto; max-width: 1000px; padding: 24px 20px 40px; color: var(--ink);
  font: 15px/1.45 system-ui, "DejaVu Sans", "Liberation Sans", Arial, sans-serif; }
h1 { font-size: 26px; margin: 0 0 4px; letter-spacing: -0.01em; }
h2 { font-size: 20px; margin: 36px 0 8px; padding-top: 10px; border-top: 3px solid var(--ink); }
h2 .source { font: 13px ui-monospace, "DejaVu Sans Mono", monospace; color: var(--muted); font-weight: normal; margin-left: 8px; }
h3 { font-size: 16px; margin: 0 0 2px; }
a { color: var(--accent); }
code { font: 13px ui-monospace, "DejaVu Sans Mono", monospace; }
.lede { color: var(--muted); margin: 0 0 8px; }
nav ol { margin: 0; padding-left: 20px; color: var(--muted); font-size: 14px; }
figure { margin: 22px 0 0; }
figcaption p { margin: 0 0 6px; color: var(--muted); font-size: 13.5px; max-width: 74ch; }
svg { display: block; max-width: 100%; height: auto; font: 11px system-ui, "DejaVu Sans", "Liberation Sans", Arial, sans-serif; }
svg text { fill: var(--ink); }
svg .axis-label { font-size: 12px; font-weight: 600; }
svg .tick { fill: var(--muted); }
svg .row-label { font: 11px ui-monospace, "DejaVu Sans Mono", monospace; }
svg .bar-label { font-size: 9px; paint-order: stroke; stroke: #ffffff; stroke-width: 2.6px; stroke-linejoin: round; }
svg .path-label { font-size: 10px; font-weight: 600; paint-order: stroke; stroke: #ffffff; stroke-width: 3px; stroke-linejoin: round; }
.note { font-size: 13px; margin: 6px 0 0; padding: 4px 10px; border-left: 4px solid #E69F00; background: var(--wash); }
dl.params { display: grid; grid-template-columns: max-content 1fr; gap: 2px 16px; margin: 8px 0 14px; font-size: 14px; }
dl.params dt { color: var(--muted); }
dl.params dd { margin: 0; }
table.summary { border-collapse: collapse; font-size: 14px; margin: 6px 0 4px; }
table.summary th, table.summary td { padding: 3px 12px; border-bottom: 1px solid var(--rule); text-align: right; vertical-align: top; }
table.summary th[scope="row"] { text-align: left; font-weight: normal; color: var(--muted); }
table.summary thead th { border-bottom: 2px solid var(--ink); text-align: right; }
table.summary tbody tr.group td, table.summary tbody tr.group th { border-top: 2px solid var(--rule); }
table.summary td.best { font-weight: 700; }
table.summary td .share { color: var(--muted); font-size: 12px; margin-left: 6px; }
table.summary td.file { font: 12px ui-monospace, "DejaVu Sans Mono", monospace; max-width: 28ch; overflow-wrap: anywhere; }
.table-note { font-size: 12.5px; color: var(--muted); margin: 0 0 10px; }
footer { margin-top: 40px; padding-top: 8px; border-top: 1px solid var(--rule); color: var(--muted); font-size: 12.5px; }
@media print {
  body { max-width: none; padding: 0; font-size: 10pt; }
  nav { display: none; }
  a { color: inherit; text-decoration: none; }
  section.tracker { break-before: page; }
  figure, table, dl { break-inside: avoid; }
  h2, h3 { break-after: avoid; }
  .note { background: none; border-left-color: #000000; }
  * { print-color-adjust: exact; -webkit-print-color-adjust: exact; }
}
"#;
