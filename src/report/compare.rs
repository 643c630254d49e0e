//! Output of tracker comparisons (`switchyard compare`): rankings with paired bootstrap
//! differences, per-sequence rankings, the ranking across a sweep, and per-step Monte Carlo
//! summaries. Schemas: `specs/compare.md`.

use std::io::Write;

use serde::Serialize;

use super::steps::write_step;
use super::{csv_number, fixed, input_time, param, plural, printable, write_table, TableLayout};
use crate::compare::montecarlo::{OccupiedOverRuns, StepOverRuns, TimedStepOverRuns};
use crate::compare::{
    CaseResult, Comparison, Ospa2Parts, RankBy, ResampleBy, SettingResult, StepsOverRuns, Summary,
    TrackerResult, Verdict,
};
use crate::per_step::Stretch;
use crate::trajectory_metric::{is_even_share, TrajectoryParams};

/// A tracker and where its estimates came from.
#[derive(Clone, Debug, Serialize)]
pub struct TrackerSource {
    /// The tracker's name.
    pub name: String,
    /// Its estimate file, or `None` when a manifest lists one file per case.
    pub estimate: Option<String>,
}

/// What was compared, shown at the top of every output.
#[derive(Clone, Debug, Serialize)]
pub struct CompareInputs {
    /// The truth file (column grouping), or `None` with a manifest.
    pub truth: Option<String>,
    /// The manifest, or `None` with column grouping.
    pub manifest: Option<String>,
    /// The trackers, in the order given.
    pub trackers: Vec<TrackerSource>,
    /// The number of sequences.
    pub sequences: usize,
    /// The number of cases (sequence, run).
    pub cases: usize,
    /// The base distance.
    pub distance: String,
    /// The LP engine.
    pub engine: String,
    /// `--time-step`: the step size in the input's time units; with it, the Monte Carlo
    /// per-step summaries give each step's time in those units (`input_time`) beside the step.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub time_step: Option<f64>,
    /// `--class-column`: the classes found, in byte order of the names; `None` without it.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub classes: Option<Vec<String>>,
}

/// Which parts a report holds besides the overall ranking.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Sections {
    /// The ranking of each sequence.
    pub per_sequence: bool,
    /// The per-step summaries over runs.
    pub monte_carlo: bool,
    /// Every (setting, tracker, case) score.
    pub per_case: bool,
}

fn resample_name(by: ResampleBy) -> &'static str {
    match by {
        ResampleBy::Sequence => "sequence",
        ResampleBy::Run => "run",
        ResampleBy::Auto => "auto",
    }
}

/// "A < B = C": the trackers best first, `=` between exact ties.
pub fn ranking_line(setting: &SettingResult) -> String {
    let mut text = String::new();
    for (i, t) in setting.trackers.iter().enumerate() {
        if i > 0 {
            let tied = setting.trackers[i - 1].rank == t.rank;
            text.push_str(if tied { " = " } else { " < " });
        }
        text.push_str(&printable(&t.tracker));
    }
    text
}

/// The plain statement for a tracker against the best, beside the tracker's row.
pub fn verdict_statement(against: &str, verdict: Verdict, by: ResampleBy) -> String {
    let against = printable(against);
    match verdict {
        Verdict::Worse => format!("worse than {against}: the interval lies above 0."),
        Verdict::Better => {
            format!("better than {against} by the interval, not by the mean: not reliably ranked.")
        }
        Verdict::Indistinguishable => {
            format!("not told apart from {against}: the interval contains 0.")
        }
        Verdict::Undetermined => {
            format!("one {} only: no interval can be formed.", resample_name(by))
        }
    }
}

fn settings_line(p: &TrajectoryParams) -> String {
    let mut line = format!(
        "cut-off c = {}   order p = {}   switching penalty gamma = {}",
        param(p.cutoff),
        param(p.order),
        param(p.switch_penalty)
    );
    if !is_even_share(&p.missed_share) {
        line.push_str(&format!(
            "   missed share S = {} (a missed object-step costs {}, a false one {})",
            param(p.missed_share),
            super::cost_param(p.missed_cost()),
            super::cost_param(p.false_cost())
        ));
    }
    line
}

/// Counts for one column of a text table, formatted one way: whole numbers when every count
/// in the column is whole, otherwise every count with three decimals.
fn count_column(values: &[f64]) -> Vec<String> {
    let whole = values.iter().all(|v| v.fract() == 0.0);
    values
        .iter()
        .map(|&v| if whole { fixed(v, 0) } else { fixed(v, 3) })
        .collect()
}

/// The two tables of summaries (each row led by `leads`, with `lead_header` above): the
/// values that rank (mean d, RMS d, mean d^p unless p = 1, where it is mean d, and mean d^p
/// per step) with the fractional cases, then the parts and the counts. Two narrow tables
/// rather than one wide one, so that each fits 100 columns.
fn summary_tables<W: Write>(
    out: &mut W,
    order: f64,
    lead_header: &[&str],
    leads: &[Vec<String>],
    summaries: &[&Summary],
) -> std::io::Result<()> {
    let show_total = order != 1.0;
    let mut header: Vec<&str> = lead_header.to_vec();
    header.extend(["mean d", "RMS d"]);
    if show_total {
        header.push("mean d^p");
    }
    header.extend(["d^p/step", "fractional"]);
    let show_ospa2 = summaries.iter().any(|s| s.ospa2.is_some());
    if show_ospa2 {
        header.push("OSPA(2)");
    }
    let rows: Vec<Vec<String>> = leads
        .iter()
        .zip(summaries)
        .map(|(lead, s)| {
            let mut row = lead.clone();
            row.extend([fixed(s.metric_mean, 4), fixed(s.metric_rms, 4)]);
            if show_total {
                row.push(fixed(s.total_mean, 4));
            }
            row.extend([fixed(s.per_step_mean, 4), s.fractional_cases.to_string()]);
            if show_ospa2 {
                row.push(ospa2_text(s.ospa2));
            }
            row
        })
        .collect();
    write_table(out, &header, &rows)?;
    writeln!(out)?;
    // The parts table names the rows without their rank and number of cases.
    let keep: Vec<usize> = (0..lead_header.len())
        .filter(|&i| !matches!(lead_header[i], "rank" | "cases" | "runs"))
        .collect();
    let mut header: Vec<&str> = keep.iter().map(|&i| lead_header[i]).collect();
    header.extend([
        "localisation",
        "missed",
        "false",
        "switching",
        "n missed",
        "n false",
        "switches",
    ]);
    let counts = |f: fn(&Summary) -> f64| {
        count_column(&summaries.iter().map(|s| f(s)).collect::<Vec<f64>>())
    };
    let missed = counts(|s| s.parts.missed_count);
    let false_ = counts(|s| s.parts.false_count);
    let switches = counts(|s| s.parts.switch_count);
    let rows: Vec<Vec<String>> = leads
        .iter()
        .zip(summaries)
        .enumerate()
        .map(|(i, (lead, s))| {
            let mut row: Vec<String> = keep.iter().map(|&k| lead[k].clone()).collect();
            row.extend([
                fixed(s.parts.localization, 4),
                fixed(s.parts.missed, 4),
                fixed(s.parts.false_, 4),
                fixed(s.parts.switching, 4),
                missed[i].clone(),
                false_[i].clone(),
                switches[i].clone(),
            ]);
            row
        })
        .collect();
    write_table(out, &header, &rows)
}

/// The two summary tables of rankings within groups (sequences, classes): each row led by the
/// group's name, the rank, the tracker and the number of cases; `names` holds the headers of
/// the group's column and of the cases' column.
fn grouped_tables<'a, W: Write>(
    out: &mut W,
    order: f64,
    names: [&str; 2],
    groups: impl Iterator<Item = (String, &'a Vec<TrackerResult>)>,
) -> std::io::Result<()> {
    let rows: Vec<(Vec<String>, &Summary)> = groups
        .flat_map(|(name, trackers)| {
            trackers.iter().map(move |t| {
                let lead = vec![
                    name.clone(),
                    t.rank.to_string(),
                    t.tracker.clone(),
                    t.summary.cases.to_string(),
                ];
                (lead, &t.summary)
            })
        })
        .collect();
    let (leads, summaries): (Vec<_>, Vec<_>) = rows.into_iter().unzip();
    summary_tables(
        out,
        order,
        &[names[0], "rank", "tracker", names[1]],
        &leads,
        &summaries,
    )
}

/// OSPA(2) for text (`-` when absent).
fn ospa2_text(value: Option<Ospa2Parts>) -> String {
    value.map_or_else(|| "-".into(), |o| fixed(o.value, 4))
}

/// The CSV columns of OSPA(2), after the others, when it was computed.
const OSPA2_CSV: &str = ",ospa2,ospa2_paired_power,ospa2_unpaired_power";

/// The OSPA(2) header columns when `present`.
fn ospa2_csv_header(present: bool) -> &'static str {
    if present {
        OSPA2_CSV
    } else {
        ""
    }
}

/// OSPA(2) and its parts as CSV cells after the others (nothing when absent).
fn ospa2_csv(value: Option<Ospa2Parts>) -> String {
    value.map_or_else(String::new, |o| {
        format!(",{},{},{}", o.value, o.paired_power, o.unpaired_power)
    })
}

/// Below this many resampling units the text warns that the intervals are rough.
const FEW_UNITS: usize = 10;

/// A table of right-aligned numbers followed by one left-aligned text column, indented.
fn write_table_with_text<W: Write>(
    out: &mut W,
    header: &[&str],
    rows: &[Vec<String>],
    text_header: &str,
    texts: &[String],
) -> std::io::Result<()> {
    let mut buffer = Vec::new();
    write_table(&mut buffer, header, rows)?;
    let table = String::from_utf8_lossy(&buffer);
    let texts = std::iter::once(text_header).chain(texts.iter().map(String::as_str));
    for (line, text) in table.lines().zip(texts) {
        writeln!(out, "  {line}  {text}")?;
    }
    Ok(())
}

/// Text: for each setting the ranking and the differences with the best, then (when asked)
/// the per-sequence rankings, the ranking across the settings, and the Monte Carlo tables.
pub fn write_text<W: Write>(
    out: &mut W,
    comparison: &Comparison,
    inputs: &CompareInputs,
    sections: Sections,
) -> std::io::Result<()> {
    writeln!(
        out,
        "Tracker comparison   {}, {}, {}   distance: {}   LP: {}",
        plural(inputs.trackers.len(), "tracker", "trackers"),
        plural(inputs.sequences, "sequence", "sequences"),
        plural(inputs.cases, "case", "cases"),
        inputs.distance,
        inputs.engine
    )?;
    if let Some(truth) = &inputs.truth {
        writeln!(out, "truth     {}", printable(truth))?;
    }
    if let Some(manifest) = &inputs.manifest {
        writeln!(out, "manifest  {}", printable(manifest))?;
    }
    let trackers: Vec<String> = inputs
        .trackers
        .iter()
        .map(|t| match &t.estimate {
            Some(file) => format!("{} ({})", printable(&t.name), printable(file)),
            None => printable(&t.name).into_owned(),
        })
        .collect();
    writeln!(out, "trackers  {}", trackers.join("; "))?;
    if let Some(classes) = &inputs.classes {
        let names: Vec<String> = classes.iter().map(|c| printable(c).into_owned()).collect();
        writeln!(out, "classes   {}", names.join(", "))?;
        writeln!(
            out,
            "Objects are matched within their class; d is the total over the classes,\n\
             (sum of each class's d^p)^(1/p). Each class is also ranked on its own, over the cases\n\
             where it occurs."
        )?;
    }
    writeln!(
        out,
        "d^p/step is the mean over the cases of d^p / steps, each case's cost per step (sequences\n\
         of different lengths weigh alike). Parts are means over the cases in p-th power units\n\
         (they add up to mean d^p). Counts are totals over the cases: n missed and n false count\n\
         object-steps (a truth missed, or an estimate unmatched, at one step), switches the\n\
         switches (a half switch counts 0.5). fractional counts the cases whose LP optimum is\n\
         fractional (d is then a lower bound of the exact metric).\n\
         Ranked by {}.",
        match comparison.rank_by {
            RankBy::Metric => "mean d",
            RankBy::PerStep => "d^p/step (--rank-by per-step)",
        }
    )?;
    if has_ospa2(comparison) {
        writeln!(
            out,
            "OSPA(2) is the mean over the cases of OSPA(2) (Beard, Vo, Vo, IEEE TSP 2020; normalised,\n\
             0 to c) at the setting's c and p, over each case's whole window; it does not rank."
        )?;
    }
    let total = comparison.settings.len();
    let b = &comparison.bootstrap;
    for (index, setting) in comparison.settings.iter().enumerate() {
        writeln!(out)?;
        if total > 1 {
            writeln!(
                out,
                "Setting {} of {total}: {}",
                index + 1,
                settings_line(&setting.params)
            )?;
        } else {
            writeln!(out, "{}", settings_line(&setting.params))?;
        }
        writeln!(out)?;
        let leads: Vec<Vec<String>> = setting
            .trackers
            .iter()
            .map(|t| {
                vec![
                    t.rank.to_string(),
                    t.tracker.clone(),
                    t.summary.cases.to_string(),
                ]
            })
            .collect();
        let summaries: Vec<&Summary> = setting.trackers.iter().map(|t| &t.summary).collect();
        summary_tables(
            out,
            setting.params.order,
            &["rank", "tracker", "cases"],
            &leads,
            &summaries,
        )?;
        let best = printable(&setting.trackers[0].tracker);
        if setting.trackers.len() > 1 {
            writeln!(out)?;
            let value = match comparison.rank_by {
                RankBy::Metric => "d",
                RankBy::PerStep => "d^p/step",
            };
            writeln!(
                out,
                "Against the best ({best}): mean over cases of {value}(tracker) - {value}({best}),\n\
                 {}% paired percentile bootstrap interval over {} ({} resamples, seed {}):",
                fixed(100.0 * b.confidence, 1)
                    .trim_end_matches('0')
                    .trim_end_matches('.'),
                plural(
                    comparison.resampling_units,
                    resample_name(comparison.resample_by),
                    &format!("{}s", resample_name(comparison.resample_by))
                ),
                b.resamples,
                b.seed
            )?;
            let pairs: Vec<(Vec<String>, String)> = setting
                .trackers
                .iter()
                .filter_map(|t| t.difference.as_ref().map(|d| (t, d)))
                .map(|(t, d)| {
                    let (lower, upper) = match d.interval {
                        Some(i) => (fixed(i.lower, 4), fixed(i.upper, 4)),
                        None => ("-".into(), "-".into()),
                    };
                    let statement =
                        verdict_statement(&d.against, d.verdict, comparison.resample_by);
                    (
                        vec![t.tracker.clone(), fixed(d.mean, 4), lower, upper],
                        statement,
                    )
                })
                .collect();
            let (cells, statements): (Vec<Vec<String>>, Vec<String>) = pairs.into_iter().unzip();
            write_table_with_text(
                out,
                &["tracker", "difference", "lower", "upper"],
                &cells,
                "verdict",
                &statements,
            )?;
            let units = comparison.resampling_units;
            if (2..FEW_UNITS).contains(&units) {
                let name = resample_name(comparison.resample_by);
                writeln!(
                    out,
                    "Only {units} {name}s: percentile intervals from so few tend to be too \
                     narrow; read them with care."
                )?;
            }
        }
        if !setting.classes.is_empty() {
            writeln!(out)?;
            writeln!(out, "Per class (over the cases where it occurs):")?;
            let groups = setting
                .classes
                .iter()
                .map(|k| (k.class.clone(), &k.trackers));
            grouped_tables(out, setting.params.order, ["class", "cases"], groups)?;
        }
        if sections.per_sequence {
            writeln!(out)?;
            writeln!(out, "Per sequence (over its runs):")?;
            let groups = setting
                .sequences
                .iter()
                .map(|s| (shown(&s.sequence), &s.trackers));
            grouped_tables(out, setting.params.order, ["sequence", "runs"], groups)?;
        }
    }
    if total > 1 {
        writeln!(out)?;
        writeln!(out, "Ranking across the {total} settings (best first):")?;
        let rows: Vec<Vec<String>> = comparison
            .settings
            .iter()
            .map(|s| {
                vec![
                    param(s.params.cutoff),
                    param(s.params.order),
                    param(s.params.switch_penalty),
                ]
            })
            .collect();
        let rankings: Vec<String> = comparison.settings.iter().map(ranking_line).collect();
        write_table_with_text(out, &["c", "p", "gamma"], &rows, "ranking", &rankings)?;
        if comparison.ranking_stable {
            writeln!(out, "The ranking is the same at every setting.")?;
        } else {
            writeln!(out, "The ranking changes across the settings.")?;
        }
    }
    if sections.monte_carlo {
        write_monte_carlo_text(out, comparison, inputs.time_step)?;
    }
    if sections.per_case {
        write_cases_text(out, comparison)?;
    }
    Ok(())
}

/// The case scores: d, d^p unless p = 1 (where it is d), and d^p per step; the parts are in
/// CSV and JSON.
fn write_cases_text<W: Write>(out: &mut W, comparison: &Comparison) -> std::io::Result<()> {
    writeln!(out)?;
    writeln!(
        out,
        "Case scores (parts and counts of each case: --format csv or json with --per-case):"
    )?;
    for setting in &comparison.settings {
        let p = &setting.params;
        let cases = comparison.cases.iter().filter(|c| c.params == *p);
        let show_total = p.order != 1.0;
        let with_classes = comparison.cases.iter().any(|c| c.class.is_some());
        let mut header = vec!["sequence", "run"];
        if with_classes {
            header.push("class");
        }
        header.extend(["tracker", "steps", "d"]);
        if show_total {
            header.push("d^p");
        }
        header.push("d^p/step");
        let show_ospa2 = has_ospa2(comparison);
        if show_ospa2 {
            header.push("OSPA(2)");
        }
        let rows: Vec<Vec<String>> = cases
            .map(|c| {
                let mut row = vec![shown(&c.sequence), shown(&c.run)];
                if let Some(class) = &c.class {
                    row.push(match class.name() {
                        // A class may be named like the marker: it is then quoted.
                        Some(ALL_CLASSES_TEXT) => format!("\"{ALL_CLASSES_TEXT}\""),
                        Some(name) => name.to_string(),
                        None => ALL_CLASSES_TEXT.to_string(),
                    });
                }
                row.extend([
                    c.tracker.clone(),
                    c.score.steps.to_string(),
                    fixed(c.score.metric, 4),
                ]);
                if show_total {
                    row.push(fixed(c.score.total, 4));
                }
                row.push(fixed(c.per_step, 4));
                if show_ospa2 {
                    row.push(ospa2_text(c.score.ospa2));
                }
                row
            })
            .collect();
        writeln!(out, "{}", settings_line(p))?;
        write_table(out, &header, &rows)?;
    }
    Ok(())
}

/// The class of the case rows for all classes together, in text (CSV leaves it empty, JSON
/// writes null); a class of that name is written in double quotes.
const ALL_CLASSES_TEXT: &str = "(all)";

/// A group value for text: `-` when empty.
fn shown(value: &str) -> String {
    if value.is_empty() {
        "-".into()
    } else {
        value.to_string()
    }
}

fn write_monte_carlo_text<W: Write>(
    out: &mut W,
    comparison: &Comparison,
    time_step: Option<f64>,
) -> std::io::Result<()> {
    writeln!(out)?;
    writeln!(
        out,
        "Monte Carlo: trajectory GOSPA over the runs of each sequence"
    )?;
    for setting in &comparison.settings {
        writeln!(out, "{}", settings_line(&setting.params))?;
        let rows: Vec<Vec<String>> = setting
            .sequences
            .iter()
            .flat_map(|s| {
                s.trackers.iter().map(move |t| {
                    vec![
                        shown(&s.sequence),
                        t.tracker.clone(),
                        t.summary.cases.to_string(),
                        fixed(t.summary.metric_mean, 4),
                        fixed(t.summary.metric_rms, 4),
                    ]
                })
            })
            .collect();
        write_table(
            out,
            &["sequence", "tracker", "runs", "mean d", "RMS d"],
            &rows,
        )?;
    }
    for block in &comparison.monte_carlo {
        write_steps_block(out, block, time_step)?;
    }
    Ok(())
}

/// One block of per-step summaries; with a step size, a `time` column (the step in the input's
/// time units) follows `step`, as in `switchyard steps`.
fn write_steps_block<W: Write>(
    out: &mut W,
    block: &StepsOverRuns,
    time_step: Option<f64>,
) -> std::io::Result<()> {
    writeln!(out)?;
    writeln!(
        out,
        "Per-step GOSPA over runs   cut-off c = {}   order p = {}   sequence {}   tracker {}   {}",
        param(block.cutoff),
        param(block.order),
        printable(&shown(&block.sequence)),
        printable(&block.tracker),
        plural(block.runs, "run", "runs")
    )?;
    let row = |s: &StepOverRuns| {
        let mut cells = vec![s.time.to_string()];
        if let Some(dt) = time_step {
            cells.push(input_time(s.time, dt).to_string());
        }
        cells.extend([
            fixed(s.mean, 4),
            fixed(s.rms, 4),
            fixed(s.localization, 4),
            fixed(s.missed, 4),
            fixed(s.false_, 4),
            fixed(s.missed_count, 3),
            fixed(s.false_count, 3),
        ]);
        cells
    };
    let mut header = vec!["step"];
    if time_step.is_some() {
        header.push("time");
    }
    header.extend([
        "mean",
        "RMS",
        "localisation^p",
        "missed^p",
        "false^p",
        "missed",
        "false",
    ]);
    // One row per step of the window, made as it is written: the rows of a run of empty steps
    // differ only in their time, whose widest text is at one end of the run.
    let steps = &block.steps;
    let mut layout = TableLayout::new(&header);
    for stretch in steps.stretches() {
        match stretch {
            Stretch::Occupied(s) => layout.fit(&row(s)),
            Stretch::Empty { first, last } => {
                layout.fit(&row(&steps.empty_step(first)));
                layout.fit(&row(&steps.empty_step(last)));
            }
        }
    }
    layout.write_row(out, &header)?;
    for stretch in steps.stretches() {
        match stretch {
            Stretch::Occupied(s) => layout.write_row(out, &row(s))?,
            Stretch::Empty { first, last } => {
                let mut cells = row(&steps.empty_step(first));
                for time in first..=last {
                    cells[0] = time.to_string();
                    if let Some(dt) = time_step {
                        cells[1] = input_time(time, dt).to_string();
                    }
                    layout.write_row(out, &cells)?;
                }
            }
        }
    }
    Ok(())
}

const SUMMARY_CSV: &str = "metric_mean,metric_rms,total_mean,per_step_mean,localisation,missed,false,switching,missed_count,false_count,switch_count,fractional_cases";

fn summary_csv(s: &Summary) -> String {
    [
        s.metric_mean,
        s.metric_rms,
        s.total_mean,
        s.per_step_mean,
        s.parts.localization,
        s.parts.missed,
        s.parts.false_,
        s.parts.switching,
        s.parts.missed_count,
        s.parts.false_count,
        s.parts.switch_count,
    ]
    .iter()
    .map(|v| v.to_string())
    .chain(std::iter::once(s.fractional_cases.to_string()))
    .collect::<Vec<_>>()
    .join(",")
}

/// Quotes a name for CSV when it needs it.
fn csv_text(value: &str) -> String {
    if value.contains([',', '"', '\n', '\r']) || value.trim() != value {
        format!("\"{}\"", value.replace('"', "\"\""))
    } else {
        value.to_string()
    }
}

/// True when the comparison computed OSPA(2).
fn has_ospa2(comparison: &Comparison) -> bool {
    comparison.cases.iter().any(|c| c.score.ospa2.is_some())
}

/// CSV: one row per (setting, tracker), best first within a setting.
pub fn write_csv<W: Write>(out: &mut W, comparison: &Comparison) -> std::io::Result<()> {
    writeln!(
        out,
        "cutoff,order,switch_penalty,rank,tracker,cases,{SUMMARY_CSV},against,difference,lower,upper,verdict{}",
        ospa2_csv_header(has_ospa2(comparison))
    )?;
    for setting in &comparison.settings {
        let p = &setting.params;
        for t in &setting.trackers {
            let (against, difference, lower, upper, verdict) = match &t.difference {
                Some(d) => (
                    csv_text(&d.against),
                    d.mean.to_string(),
                    csv_number(d.interval.map(|i| i.lower)),
                    csv_number(d.interval.map(|i| i.upper)),
                    d.verdict.name().to_string(),
                ),
                None => Default::default(),
            };
            writeln!(
                out,
                "{},{},{},{},{},{},{},{against},{difference},{lower},{upper},{verdict}{}",
                p.cutoff,
                p.order,
                p.switch_penalty,
                t.rank,
                csv_text(&t.tracker),
                t.summary.cases,
                summary_csv(&t.summary),
                ospa2_csv(t.summary.ospa2)
            )?;
        }
    }
    Ok(())
}

/// CSV: one row per (setting, sequence, tracker), best first within a sequence.
pub fn write_sequences_csv<W: Write>(out: &mut W, comparison: &Comparison) -> std::io::Result<()> {
    writeln!(
        out,
        "cutoff,order,switch_penalty,sequence,rank,tracker,runs,{SUMMARY_CSV}{}",
        ospa2_csv_header(has_ospa2(comparison))
    )?;
    for setting in &comparison.settings {
        let p = &setting.params;
        for s in &setting.sequences {
            for t in &s.trackers {
                writeln!(
                    out,
                    "{},{},{},{},{},{},{},{}{}",
                    p.cutoff,
                    p.order,
                    p.switch_penalty,
                    csv_text(&s.sequence),
                    t.rank,
                    csv_text(&t.tracker),
                    t.summary.cases,
                    summary_csv(&t.summary),
                    ospa2_csv(t.summary.ospa2)
                )?;
            }
        }
    }
    Ok(())
}

/// CSV: one row per (setting, tracker, sequence, run): the case's score and d^p per step; with
/// classes, a `class` column after `run` (empty on the rows for all classes).
pub fn write_cases_csv<W: Write>(out: &mut W, comparison: &Comparison) -> std::io::Result<()> {
    let with_classes = comparison.cases.iter().any(|c| c.class.is_some());
    writeln!(
        out,
        "cutoff,order,switch_penalty,tracker,sequence,run,{}metric,total,localisation,missed,false,switching,missed_count,false_count,switch_count,integral,steps,per_step{}",
        if with_classes { "class," } else { "" },
        ospa2_csv_header(has_ospa2(comparison))
    )?;
    for c in &comparison.cases {
        let (p, s) = (&c.params, &c.score);
        let class = match &c.class {
            Some(class) => format!("{},", csv_text(class.name().unwrap_or(""))),
            None => String::new(),
        };
        writeln!(
            out,
            "{},{},{},{},{},{},{class}{},{},{},{},{},{},{},{},{},{},{},{}{}",
            p.cutoff,
            p.order,
            p.switch_penalty,
            csv_text(&c.tracker),
            csv_text(&c.sequence),
            csv_text(&c.run),
            s.metric,
            s.total,
            s.parts.localization,
            s.parts.missed,
            s.parts.false_,
            s.parts.switching,
            s.parts.missed_count,
            s.parts.false_count,
            s.parts.switch_count,
            s.integral,
            s.steps,
            c.per_step,
            ospa2_csv(s.ospa2)
        )?;
    }
    Ok(())
}

/// CSV: one row per (cut-off and order, sequence, tracker, step) of the Monte Carlo summaries.
pub fn write_steps_csv<W: Write>(out: &mut W, comparison: &Comparison) -> std::io::Result<()> {
    write_steps_csv_timed(out, comparison, None)
}

/// [`write_steps_csv`], with an `input_time` column after `time` (the step in the input's time
/// units, as in `switchyard steps`) when a step size is given.
pub fn write_steps_csv_timed<W: Write>(
    out: &mut W,
    comparison: &Comparison,
    time_step: Option<f64>,
) -> std::io::Result<()> {
    let timed = if time_step.is_some() {
        ",input_time"
    } else {
        ""
    };
    writeln!(
        out,
        "cutoff,order,sequence,tracker,time{timed},runs,mean,rms,localisation,missed,false,missed_count,false_count"
    )?;
    for block in &comparison.monte_carlo {
        let before_time = format!(
            "{},{},{},{},",
            block.cutoff,
            block.order,
            csv_text(&block.sequence),
            csv_text(&block.tracker)
        );
        let after_time = |s: &StepOverRuns| {
            format!(
                ",{},{},{},{},{},{},{},{}\n",
                s.runs,
                s.mean,
                s.rms,
                s.localization,
                s.missed,
                s.false_,
                s.missed_count,
                s.false_count
            )
        };
        // The rows of a run of empty steps differ only in their time: the rest is formatted once.
        for stretch in block.steps.stretches() {
            let (first, last, rest) = match stretch {
                Stretch::Occupied(s) => (s.time, s.time, after_time(s)),
                Stretch::Empty { first, last } => {
                    (first, last, after_time(&block.steps.empty_step(first)))
                }
            };
            for time in first..=last {
                out.write_all(before_time.as_bytes())?;
                write_step(out, time)?;
                if let Some(dt) = time_step {
                    write!(out, ",{}", input_time(time, dt))?;
                }
                out.write_all(rest.as_bytes())?;
            }
        }
    }
    Ok(())
}

#[derive(Serialize)]
struct BootstrapDocument {
    method: &'static str,
    resamples: usize,
    seed: u64,
    confidence: f64,
    resample_by: &'static str,
    units: usize,
}

#[derive(Serialize)]
struct DifferenceDocument<'a> {
    against: &'a str,
    mean: f64,
    lower: Option<f64>,
    upper: Option<f64>,
    verdict: &'static str,
}

#[derive(Serialize)]
struct RowDocument<'a> {
    rank: usize,
    tracker: &'a str,
    #[serde(flatten)]
    summary: &'a Summary,
    difference: Option<DifferenceDocument<'a>>,
}

#[derive(Serialize)]
struct SequenceDocument<'a> {
    sequence: &'a str,
    trackers: Vec<RowDocument<'a>>,
}

#[derive(Serialize)]
struct ClassDocument<'a> {
    class: &'a str,
    cases: usize,
    trackers: Vec<RowDocument<'a>>,
}

#[derive(Serialize)]
struct SettingDocument<'a> {
    cutoff: f64,
    order: f64,
    switch_penalty: f64,
    #[serde(skip_serializing_if = "is_even_share")]
    missed_share: f64,
    ranking: String,
    trackers: Vec<RowDocument<'a>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    sequences: Option<Vec<SequenceDocument<'a>>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    classes: Option<Vec<ClassDocument<'a>>>,
}

#[derive(Serialize)]
struct CompareDocument<'a> {
    inputs: &'a CompareInputs,
    rank_by: &'static str,
    bootstrap: BootstrapDocument,
    settings: Vec<SettingDocument<'a>>,
    ranking_stable: bool,
    #[serde(skip_serializing_if = "Option::is_none")]
    monte_carlo: Option<Vec<MonteCarloDocument<'a>>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    cases: Option<&'a [CaseResult]>,
}

/// A block of per-step summaries over runs as JSON: [`StepsOverRuns`]'s keys, each step with
/// `input_time` after `time` when a step size was given.
#[derive(Serialize)]
struct MonteCarloDocument<'a> {
    cutoff: f64,
    order: f64,
    sequence: &'a str,
    tracker: &'a str,
    runs: usize,
    steps: TimedSteps<'a>,
}

/// Every step of a block, made as it is written.
struct TimedSteps<'a> {
    steps: &'a OccupiedOverRuns,
    time_step: Option<f64>,
}

impl Serialize for TimedSteps<'_> {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        serializer.collect_seq(self.steps.iter().map(|step| TimedStepOverRuns {
            input_time: self.time_step.map(|dt| input_time(step.time, dt)),
            step,
        }))
    }
}

fn rows(trackers: &[TrackerResult]) -> Vec<RowDocument<'_>> {
    trackers
        .iter()
        .map(|t| RowDocument {
            rank: t.rank,
            tracker: &t.tracker,
            summary: &t.summary,
            difference: t.difference.as_ref().map(|d| DifferenceDocument {
                against: &d.against,
                mean: d.mean,
                lower: d.interval.map(|i| i.lower),
                upper: d.interval.map(|i| i.upper),
                verdict: d.verdict.name(),
            }),
        })
        .collect()
}

/// JSON: one document with `inputs`, `bootstrap`, `settings` (each with its ranking, and its
/// per-sequence rankings when asked), `ranking_stable`, and `monte_carlo` when asked.
pub fn write_json<W: Write>(
    out: &mut W,
    comparison: &Comparison,
    inputs: &CompareInputs,
    sections: Sections,
) -> std::io::Result<()> {
    let document = CompareDocument {
        inputs,
        rank_by: comparison.rank_by.name(),
        bootstrap: BootstrapDocument {
            method: "paired percentile bootstrap",
            resamples: comparison.bootstrap.resamples,
            seed: comparison.bootstrap.seed,
            confidence: comparison.bootstrap.confidence,
            resample_by: resample_name(comparison.resample_by),
            units: comparison.resampling_units,
        },
        settings: comparison
            .settings
            .iter()
            .map(|s| SettingDocument {
                cutoff: s.params.cutoff,
                order: s.params.order,
                switch_penalty: s.params.switch_penalty,
                missed_share: s.params.missed_share,
                ranking: ranking_line(s),
                trackers: rows(&s.trackers),
                sequences: sections.per_sequence.then(|| {
                    s.sequences
                        .iter()
                        .map(|q| SequenceDocument {
                            sequence: &q.sequence,
                            trackers: rows(&q.trackers),
                        })
                        .collect()
                }),
                classes: (!s.classes.is_empty()).then(|| {
                    s.classes
                        .iter()
                        .map(|k| ClassDocument {
                            class: &k.class,
                            cases: k.cases,
                            trackers: rows(&k.trackers),
                        })
                        .collect()
                }),
            })
            .collect(),
        ranking_stable: comparison.ranking_stable,
        monte_carlo: sections.monte_carlo.then(|| {
            comparison
                .monte_carlo
                .iter()
                .map(|block| MonteCarloDocument {
                    cutoff: block.cutoff,
                    order: block.order,
                    sequence: &block.sequence,
                    tracker: &block.tracker,
                    runs: block.runs,
                    steps: TimedSteps {
                        steps: &block.steps,
                        time_step: inputs.time_step,
                    },
                })
                .collect()
        }),
        cases: sections.per_case.then_some(comparison.cases.as_slice()),
    };
    serde_json::to_writer_pretty(&mut *out, &document)?;
    writeln!(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn csv_text_quotes_only_when_needed() {
        assert_eq!(csv_text("plain"), "plain");
        assert_eq!(csv_text("a,b"), "\"a,b\"");
        assert_eq!(csv_text("say \"x\""), "\"say \"\"x\"\"\"");
    }
}
