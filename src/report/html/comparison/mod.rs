//! The comparison page: one self-contained HTML page (inline CSS and SVG, no script, no
//! external reference) drawn from a [`Comparison`], written by `switchyard compare --page`.
//! Contents and rules: `specs/compare.md` (section "The page").
//!
//! The page holds the ranking table (every setting, each tracker's mean and RMS of d, its mean
//! d^p per step, and its difference to the best with the bootstrap interval and verdict); with
//! a sweep, charts of each tracker's mean d (and of the ranked quantity when it is d^p per
//! step) against each swept parameter ([`sweep`]); with Monte Carlo runs, per sequence, each
//! tracker's per-step GOSPA over the runs, mean and RMS, on a time axis ([`runs`]).
//!
//! Every drawn value also sits in a `data-` attribute with the shortest text that reads back
//! exactly (as compare's JSON writes numbers), so that a test or a script reads the page's
//! numbers without parsing the drawing. The same comparison gives the same bytes.

mod runs;
mod sweep;

use std::fmt::Write;

use super::svg::{self, esc};
use super::time_axis::TimeScale;
use super::Limits;
use crate::compare::{Comparison, ResampleBy, SettingResult};
use crate::report::compare::CompareInputs;
use crate::trajectory_metric::TrajectoryParams;

/// What the comparison page shows besides the comparison itself.
#[derive(Clone, Debug)]
pub struct ComparisonPage<'a> {
    /// The page title.
    pub title: String,
    /// The comparison drawn.
    pub comparison: &'a Comparison,
    /// Where the data came from.
    pub inputs: &'a CompareInputs,
    /// How steps read as time on the Monte Carlo charts; `None` shows step indices.
    pub time: Option<TimeScale>,
}

impl ComparisonPage<'_> {
    /// The trackers' names in the order given (the order their line styles follow).
    fn tracker_names(&self) -> Vec<String> {
        if !self.inputs.trackers.is_empty() {
            return self
                .inputs
                .trackers
                .iter()
                .map(|t| t.name.clone())
                .collect();
        }
        let mut names: Vec<String> = Vec::new();
        for setting in &self.comparison.settings {
            for t in &setting.trackers {
                if !names.contains(&t.tracker) {
                    names.push(t.tracker.clone());
                }
            }
        }
        names
    }

    /// The index of a tracker in [`ComparisonPage::tracker_names`] (its style).
    fn style_index(&self, names: &[String], tracker: &str) -> usize {
        names.iter().position(|n| n == tracker).unwrap_or(0)
    }
}

/// A number in a `data-` attribute: the shortest text that reads back as the same double.
pub(crate) fn exact(value: f64) -> String {
    format!("{value}")
}

/// `c = 10, p = 1, γ = 10` for people, with `, missed share S = 0.8` when the share is not 1/2
/// (specs/missed-share.md).
pub(crate) fn setting_words(params: &TrajectoryParams) -> String {
    let mut words = format!(
        "c = {}, p = {}, γ = {}",
        exact(params.cutoff),
        exact(params.order),
        exact(params.switch_penalty)
    );
    if !crate::trajectory_metric::is_even_share(&params.missed_share) {
        words.push_str(&format!(
            ", missed share S = {}",
            exact(params.missed_share)
        ));
    }
    words
}

/// The `data-` attributes naming a setting.
fn setting_attributes(params: &TrajectoryParams) -> String {
    format!(
        "data-cutoff=\"{}\" data-order=\"{}\" data-switch-penalty=\"{}\"",
        exact(params.cutoff),
        exact(params.order),
        exact(params.switch_penalty)
    )
}

/// Renders the comparison page. Deterministic: the same page and limits give the same string.
/// Memory and size follow the trackers, settings and sequences, not the time window: the Monte
/// Carlo charts draw at most [`Limits::max_time_bins`] columns each, from the occupied steps.
pub fn render_comparison(page: &ComparisonPage, limits: &Limits) -> String {
    let mut out = super::page_head(&page.title, EXTRA_CSS);
    let has_sweep = sweep::has_charts(page.comparison);
    let has_runs = !page.comparison.monte_carlo.is_empty();
    header(&mut out, page, has_sweep, has_runs);
    out.push_str("<main>\n");
    ranking_section(&mut out, page);
    if has_sweep {
        sweep::section(&mut out, page);
    }
    if has_runs {
        runs::section(&mut out, page, limits);
    }
    out.push_str("</main>\n");
    let _ = writeln!(
        out,
        "<footer><p>Made by switchyard {}. Everything on this page is inline; it needs no \
         network. Hover over a mark for its details. Each tracker keeps one colour and dash \
         pattern on every chart (the Okabe–Ito set for colour-vision deficiency).</p></footer>",
        env!("CARGO_PKG_VERSION")
    );
    out.push_str("</body>\n</html>\n");
    out
}

/// Styles only this page uses.
const EXTRA_CSS: &str = "table.ranking td.verdict-worse { color: #a33b00; }
table.summary td.name, table.summary th.name, table.ranking th.setting { text-align: left; }
.panels { display: grid; gap: 6px 14px; }
";

fn header(out: &mut String, page: &ComparisonPage, has_sweep: bool, has_runs: bool) {
    let comparison = page.comparison;
    let inputs = page.inputs;
    let _ = writeln!(out, "<header>\n<h1>{}</h1>", esc(&page.title));
    let source = match (&inputs.truth, &inputs.manifest) {
        (Some(truth), _) => format!("Ground truth <code>{}</code>", esc(truth)),
        (None, Some(manifest)) => format!("Manifest <code>{}</code>", esc(manifest)),
        (None, None) => "The data".to_string(),
    };
    let trackers = page.tracker_names().len();
    let settings = comparison.settings.len();
    let _ = writeln!(
        out,
        "<p class=\"lede\">{source}: {} sequence{}, {} case{} (sequence and run). {trackers} \
         tracker{} compared with trajectory GOSPA at {settings} setting{}.</p>",
        inputs.sequences,
        super::plural(inputs.sequences),
        inputs.cases,
        super::plural(inputs.cases),
        super::plural(trackers),
        super::plural(settings),
    );
    // One missed share serves every setting (`compare --missed-share`).
    if let Some(first) = comparison.settings.first() {
        let share = first.params.missed_share;
        if !crate::trajectory_metric::is_even_share(&share) {
            let _ = writeln!(
                out,
                "<p>Missed share S = {}: a missed object-step costs S c<sup>p</sup>, a false one \
                 (1 − S) c<sup>p</sup>.</p>",
                exact(share)
            );
        }
    }
    out.push_str("<nav aria-label=\"Contents\"><ol>\n<li><a href=\"#ranking\">Ranking</a></li>\n");
    if has_sweep {
        out.push_str("<li><a href=\"#sweep\">Across settings</a></li>\n");
    }
    if has_runs {
        out.push_str("<li><a href=\"#runs\">Over time, over the runs</a></li>\n");
    }
    out.push_str("</ol></nav>\n</header>\n");
}

/// The name of the ranked quantity, for people.
fn ranked_words(comparison: &Comparison) -> &'static str {
    match comparison.rank_by {
        crate::compare::RankBy::Metric => "mean d",
        crate::compare::RankBy::PerStep => "mean d<sup>p</sup> per step",
    }
}

fn ranking_section(out: &mut String, page: &ComparisonPage) {
    let comparison = page.comparison;
    let boot = &comparison.bootstrap;
    let unit = match comparison.resample_by {
        ResampleBy::Sequence => "sequences",
        _ => "cases (sequence, run)",
    };
    out.push_str("<section id=\"ranking\">\n<h2>Ranking</h2>\n");
    let _ = writeln!(
        out,
        "<p class=\"table-note\">Ranked by {} over the cases, smallest first. Each tracker is set \
         against the best of its setting: the mean over the cases of its difference in {}, and \
         the {}% paired bootstrap interval of that difference ({} resamples of the {} {unit}, \
         seed {}). <em>worse</em>: the whole interval lies above 0; <em>indistinguishable</em>: \
         it holds 0; <em>undetermined</em>: fewer than two units to resample.</p>",
        ranked_words(comparison),
        ranked_words(comparison).trim_start_matches("mean "),
        exact(boot.confidence * 100.0),
        boot.resamples,
        comparison.resampling_units,
        boot.seed
    );
    if comparison.settings.len() > 1 {
        let _ = writeln!(
            out,
            "<p class=\"table-note\" data-ranking-stable=\"{}\">{}</p>",
            comparison.ranking_stable,
            if comparison.ranking_stable {
                "Every setting ranks the trackers the same."
            } else {
                "<strong>The ranking changes with the setting</strong>: read the table by \
                 setting, or the charts below."
            }
        );
    }
    let _ = writeln!(
        out,
        "<table class=\"summary ranking\">\n<thead><tr><th scope=\"col\">Rank</th>\
         <th scope=\"col\" class=\"name\">Tracker</th><th scope=\"col\">Mean d</th><th scope=\"col\">RMS d</th>\
         <th scope=\"col\">Mean d<sup>p</sup> per step</th>\
         <th scope=\"col\">Difference in {} to the best</th><th scope=\"col\">Interval</th>\
         <th scope=\"col\">Verdict</th></tr></thead>\n<tbody>",
        ranked_words(comparison).trim_start_matches("mean ")
    );
    for setting in &comparison.settings {
        ranking_rows(out, setting, comparison.settings.len() > 1);
    }
    out.push_str("</tbody></table>\n</section>\n");
}

fn ranking_rows(out: &mut String, setting: &SettingResult, with_heading: bool) {
    let params = &setting.params;
    if with_heading {
        let _ = writeln!(
            out,
            "<tr class=\"group\"><th scope=\"rowgroup\" colspan=\"8\" class=\"setting\">{}</th></tr>",
            esc(&setting_words(params))
        );
    }
    for t in &setting.trackers {
        let s = &t.summary;
        let (difference, interval, verdict, attributes) = match &t.difference {
            None => (
                "best".to_string(),
                "–".to_string(),
                String::new(),
                String::new(),
            ),
            Some(d) => {
                let (interval, bounds) = match &d.interval {
                    Some(i) => (
                        format!("[{}, {}]", svg::short(i.lower), svg::short(i.upper)),
                        format!(
                            " data-lower=\"{}\" data-upper=\"{}\"",
                            exact(i.lower),
                            exact(i.upper)
                        ),
                    ),
                    None => ("–".to_string(), String::new()),
                };
                (
                    format!("+{}", svg::short(d.mean)).replace("+-", "−"),
                    interval,
                    d.verdict.name().to_string(),
                    format!(
                        " data-difference=\"{}\"{bounds} data-verdict=\"{}\"",
                        exact(d.mean),
                        d.verdict.name()
                    ),
                )
            }
        };
        let _ = writeln!(
            out,
            "<tr class=\"ranking-row\" {} data-tracker=\"{}\" data-rank=\"{}\" \
             data-metric-mean=\"{}\" data-metric-rms=\"{}\" data-per-step-mean=\"{}\"{attributes}>\
             <td>{}</td><td class=\"name\">{}</td><td{}>{}</td><td>{}</td><td>{}</td><td>{}</td>\
             <td>{}</td><td class=\"verdict-{verdict}\">{}</td></tr>",
            setting_attributes(params),
            esc(&t.tracker),
            t.rank,
            exact(s.metric_mean),
            exact(s.metric_rms),
            exact(s.per_step_mean),
            t.rank,
            esc(&t.tracker),
            if t.rank == 1 { " class=\"best\"" } else { "" },
            svg::short(s.metric_mean),
            svg::short(s.metric_rms),
            svg::short(s.per_step_mean),
            difference,
            interval,
            verdict
        );
    }
}
