//! Output of per-step GOSPA (`switchyard steps`). Schemas: `specs/formats.md`.

use std::io::Write;

use serde::Serialize;

use super::{csv_number, fixed, fixed_or_dash, param, write_table, InputInfo};
use crate::per_step::{GospaParams, StepScore, StepSeries, StepSummary};
use crate::trajectory::Window;

#[derive(Serialize)]
struct StepsDocument<'a> {
    params: &'a GospaParams,
    inputs: &'a InputInfo,
    window: Option<Window>,
    steps: &'a [StepScore],
    summary: &'a StepSummary,
}

/// JSON: `params`, `inputs`, `window`, `steps` and `summary`.
pub fn write_json<W: Write>(
    out: &mut W,
    series: &StepSeries,
    params: &GospaParams,
    inputs: &InputInfo,
) -> std::io::Result<()> {
    let document = StepsDocument {
        params,
        inputs,
        window: series.window,
        steps: &series.steps,
        summary: &series.summary,
    };
    serde_json::to_writer_pretty(&mut *out, &document)?;
    writeln!(out)
}

/// CSV: one row per step.
pub fn write_csv<W: Write>(out: &mut W, series: &StepSeries) -> std::io::Result<()> {
    writeln!(
        out,
        "time,gospa,localization,missed,false,missed_count,false_count,truth_count,estimate_count"
    )?;
    for s in &series.steps {
        writeln!(
            out,
            "{},{},{},{},{},{},{},{},{}",
            s.time,
            s.gospa,
            csv_number(s.localization),
            csv_number(s.missed),
            csv_number(s.false_),
            s.missed_count,
            s.false_count,
            s.truth_count,
            s.estimate_count
        )?;
    }
    Ok(())
}

/// Text: a header, an aligned table, and a summary.
pub fn write_text<W: Write>(
    out: &mut W,
    series: &StepSeries,
    params: &GospaParams,
    inputs: &InputInfo,
) -> std::io::Result<()> {
    writeln!(
        out,
        "Per-step GOSPA   cut-off c = {}   order p = {}   alpha = {}   distance: {}",
        param(params.cutoff),
        param(params.order),
        param(params.alpha),
        inputs.distance
    )?;
    writeln!(out, "{}", inputs.lines("truth    ", "estimate "))?;
    let rows: Vec<Vec<String>> = series
        .steps
        .iter()
        .map(|s| {
            vec![
                s.time.to_string(),
                fixed(s.gospa, 4),
                fixed_or_dash(s.localization, 4),
                fixed_or_dash(s.missed, 4),
                fixed_or_dash(s.false_, 4),
                format!("{}/{}", s.missed_count, s.truth_count),
                format!("{}/{}", s.false_count, s.estimate_count),
            ]
        })
        .collect();
    write_table(
        out,
        &[
            "step",
            "GOSPA",
            "localisation^p",
            "missed^p",
            "false^p",
            "missed/truths",
            "false/tracks",
        ],
        &rows,
    )?;
    let m = &series.summary;
    writeln!(out)?;
    match series.window {
        Some(w) => writeln!(
            out,
            "{}, {} to {}",
            super::plural(m.steps, "step", "steps"),
            w.first,
            w.last
        )?,
        None => writeln!(out, "no steps: both inputs are empty")?,
    }
    writeln!(
        out,
        "GOSPA per step: mean {}   root-mean-p {}   sum {}",
        fixed(m.mean, 4),
        fixed(m.root_mean_power, 4),
        fixed(m.sum, 4)
    )?;
    writeln!(
        out,
        "parts summed (p-th power units): localisation {}   missed {}   false {}",
        fixed_or_dash(m.localization, 4),
        fixed_or_dash(m.missed, 4),
        fixed_or_dash(m.false_, 4)
    )?;
    writeln!(
        out,
        "object-steps: {} missed, {} false",
        m.missed_count, m.false_count
    )
}
