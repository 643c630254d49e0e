//! Output of per-step GOSPA (`switchyard steps`). Schemas: `specs/formats.md`.
//!
//! The writers take the occupied steps only and make the empty ones as they write, so a long
//! window with few objects costs time to write but no memory: CSV and JSON keep one row per step
//! of the window; text puts each run of [`EMPTY_RUN_LINE`] or more empty steps on one line.

use std::io::Write;

use serde::Serialize;

use super::{csv_number, fixed, fixed_or_dash, param, write_table, InputInfo};
use crate::per_step::{GospaParams, OccupiedSteps, StepScore, StepSummary, Stretch};
use crate::trajectory::Step;
use crate::trajectory::Window;

#[derive(Serialize)]
struct StepsDocument<'a> {
    params: &'a GospaParams,
    inputs: &'a InputInfo,
    window: Option<Window>,
    /// Always empty here: the entries are written in its place (see [`write_json`]).
    steps: [StepScore; 0],
    summary: &'a StepSummary,
}

/// Text: a run of at least this many steps with no object is written as one line.
pub const EMPTY_RUN_LINE: Step = 10;

/// Where the `steps` array sits in the pretty-printed document: its key is at the top level
/// (two spaces in), and a JSON string holds no raw newline, so the match is unique.
const EMPTY_STEPS: &str = "\n  \"steps\": []";

/// One entry of `steps` as serde_json's pretty printer writes it inside the array (its lines
/// four spaces further in than at the top level), with `input_time` after `time` when a step
/// size is given.
fn entry(score: &StepScore, time_step: Option<f64>) -> std::io::Result<String> {
    let text = serde_json::to_string_pretty(score)?.replace('\n', "\n    ");
    Ok(match time_step {
        Some(dt) => {
            // `time` is the first key: its line ends at the first ",\n".
            let at = text
                .find(",\n")
                .expect("a step has more keys than its time");
            let value = serde_json::to_string(&super::input_time(score.time, dt))?;
            format!(
                "{},\n      \"input_time\": {value}{}",
                &text[..at],
                &text[at..]
            )
        }
        None => text,
    })
}

/// JSON: `params`, `inputs`, `window`, `steps` and `summary`. The document around `steps` is
/// printed by serde_json; the entries of `steps` are written in its array, one per step, the
/// empty steps from one entry printed per run with only the time changed, so the bytes are
/// those of printing every entry and nothing is held per step.
pub fn write_json<W: Write>(
    out: &mut W,
    series: &OccupiedSteps,
    params: &GospaParams,
    inputs: &InputInfo,
) -> std::io::Result<()> {
    let document = StepsDocument {
        params,
        inputs,
        window: series.window,
        steps: [],
        summary: &series.summary,
    };
    let text = serde_json::to_string_pretty(&document)?;
    let at = text
        .find(EMPTY_STEPS)
        .expect("the document has a steps key")
        + EMPTY_STEPS.len()
        - 1;
    let mut out = std::io::BufWriter::with_capacity(1 << 16, out);
    out.write_all(&text.as_bytes()[..at])?;
    let mut separator: &[u8] = b"\n    ";
    for stretch in series.stretches() {
        match stretch {
            Stretch::Occupied(score) => {
                out.write_all(separator)?;
                out.write_all(entry(score, inputs.time_step)?.as_bytes())?;
            }
            Stretch::Empty { first, last } => {
                // Time is the first key: the entry is `head`, the time, (the input time,)
                // `tail`.
                let template = entry(&series.empty_step(0), None)?;
                let split = template.find("\"time\": 0").expect("time comes first") + 8;
                let (head, tail) = (&template[..split], &template[split + 1..]);
                for time in first..=last {
                    out.write_all(separator)?;
                    out.write_all(head.as_bytes())?;
                    write_step(&mut out, time)?;
                    if let Some(dt) = inputs.time_step {
                        let value = serde_json::to_string(&super::input_time(time, dt))?;
                        write!(out, ",\n      \"input_time\": {value}")?;
                    }
                    out.write_all(tail.as_bytes())?;
                }
            }
        }
        separator = b",\n    ";
    }
    if series.window.is_some() {
        out.write_all(b"\n  ")?;
    }
    out.write_all(&text.as_bytes()[at..])?;
    writeln!(out)?;
    out.flush()
}

/// CSV: one row per step of the window, empty steps included. The rows of a run of empty steps
/// differ only in their time, so the rest of the row is formatted once per run.
pub fn write_csv<W: Write>(out: &mut W, series: &OccupiedSteps) -> std::io::Result<()> {
    write_csv_timed(out, series, None)
}

/// [`write_csv`], with an `input_time` column after `time` (the step in the input's time
/// units) when a step size is given.
pub fn write_csv_timed<W: Write>(
    out: &mut W,
    series: &OccupiedSteps,
    time_step: Option<f64>,
) -> std::io::Result<()> {
    let mut out = std::io::BufWriter::with_capacity(1 << 16, out);
    let timed = if time_step.is_some() {
        ",input_time"
    } else {
        ""
    };
    writeln!(
        out,
        "time{timed},gospa,localisation,missed,false,missed_count,false_count,truth_count,\
         estimate_count"
    )?;
    let write_time = |out: &mut std::io::BufWriter<&mut W>, time: Step| -> std::io::Result<()> {
        write_step(out, time)?;
        if let Some(dt) = time_step {
            write!(out, ",{}", super::input_time(time, dt))?;
        }
        Ok(())
    };
    let after_time = |s: &StepScore| {
        format!(
            ",{},{},{},{},{},{},{},{}\n",
            s.gospa,
            csv_number(s.localization),
            csv_number(s.missed),
            csv_number(s.false_),
            s.missed_count,
            s.false_count,
            s.truth_count,
            s.estimate_count
        )
    };
    for stretch in series.stretches() {
        match stretch {
            Stretch::Occupied(s) => {
                write_time(&mut out, s.time)?;
                out.write_all(after_time(s).as_bytes())?;
            }
            Stretch::Empty { first, last } => {
                let rest = after_time(&series.empty_step(first));
                for time in first..=last {
                    write_time(&mut out, time)?;
                    out.write_all(rest.as_bytes())?;
                }
            }
        }
    }
    out.flush()
}

/// Writes a step in decimal, as `Display` does, without the formatting machinery (it is called
/// once per row of a long window).
pub(crate) fn write_step(out: &mut impl Write, step: Step) -> std::io::Result<()> {
    let mut digits = [0u8; 20];
    let mut at = digits.len();
    let mut rest = step.unsigned_abs();
    loop {
        at -= 1;
        digits[at] = b'0' + (rest % 10) as u8;
        rest /= 10;
        if rest == 0 {
            break;
        }
    }
    if step < 0 {
        out.write_all(b"-")?;
    }
    out.write_all(&digits[at..])
}

/// Text: a header, an aligned table (runs of [`EMPTY_RUN_LINE`] or more empty steps on one
/// line each), and a summary.
pub fn write_text<W: Write>(
    out: &mut W,
    series: &OccupiedSteps,
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
    let row = |s: &StepScore| {
        let mut cells = vec![s.time.to_string()];
        if let Some(time) = inputs.input_time(s.time) {
            cells.push(time.to_string());
        }
        cells.extend([
            fixed(s.gospa, 4),
            fixed_or_dash(s.localization, 4),
            fixed_or_dash(s.missed, 4),
            fixed_or_dash(s.false_, 4),
            format!("{}/{}", s.missed_count, s.truth_count),
            format!("{}/{}", s.false_count, s.estimate_count),
        ]);
        cells
    };
    // Rows for the occupied steps and short empty runs; each long run is a line written before
    // the row at its position.
    let mut rows: Vec<Vec<String>> = Vec::new();
    let mut runs: Vec<(usize, String)> = Vec::new();
    for stretch in series.stretches() {
        match stretch {
            Stretch::Occupied(s) => rows.push(row(s)),
            Stretch::Empty { first, last } if last - first + 1 >= EMPTY_RUN_LINE => {
                runs.push((rows.len(), format!("steps {first} to {last}: no objects")));
            }
            Stretch::Empty { first, last } => {
                rows.extend((first..=last).map(|time| row(&series.empty_step(time))));
            }
        }
    }
    let mut header = vec!["step"];
    if inputs.time_step.is_some() {
        header.push("time");
    }
    header.extend([
        "GOSPA",
        "localisation^p",
        "missed^p",
        "false^p",
        "missed/truths",
        "false/tracks",
    ]);
    if runs.is_empty() {
        write_table(out, &header, &rows)?;
    } else {
        let mut table = Vec::new();
        write_table(&mut table, &header, &rows)?;
        let mut runs = runs.into_iter().peekable();
        // Line 0 is the header, line k + 1 the k-th row.
        for (line, text) in table.split_inclusive(|&b| b == b'\n').enumerate() {
            while let Some((_, run)) = runs.next_if(|(at, _)| *at + 1 == line) {
                writeln!(out, "{run}")?;
            }
            out.write_all(text)?;
        }
        for (_, run) in runs {
            writeln!(out, "{run}")?;
        }
    }
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

#[cfg(test)]
mod tests {
    use super::write_step;

    #[test]
    fn steps_are_written_as_display_writes_them() {
        // The reference is Rust's own `Display` for i64.
        for step in [
            i64::MIN,
            -1_000_000,
            -10,
            -9,
            -1,
            0,
            1,
            9,
            10,
            49_999_999,
            i64::MAX,
        ] {
            let mut out = Vec::new();
            write_step(&mut out, step).unwrap();
            assert_eq!(String::from_utf8(out).unwrap(), step.to_string());
        }
    }
}
