//! Output of per-step GOSPA (`switchyard steps`). Schemas: `specs/formats.md`.
//!
//! The writers take the occupied steps only and make the empty ones as they write, so a long
//! window with few objects costs time to write but no memory: CSV and JSON keep one row per step
//! of the window; text puts each run of [`EMPTY_RUN_LINE`] or more empty steps on one line.
//!
//! With [`Ospa2Steps`] (`--ospa2`) each step also carries OSPA(2) over the sliding window
//! ending there (M. Beard, B.-T. Vo, B.-N. Vo, "A solution for large-scale multi-object
//! tracking", IEEE Trans. Signal Processing 68, 2020), or nothing where that window holds no
//! state. The windows come as the library lists them (only those holding a state) and are
//! read with a cursor as the steps are written, so an empty run stays one template.

use std::io::Write;

use serde::Serialize;

use super::{csv_number, fixed, fixed_or_dash, param, write_table, InputInfo};
use crate::evaluate::{Evaluation, Request};
use crate::ospa2::{Ospa2Params, Ospa2Window};
use crate::per_step::{GospaParams, OccupiedSteps, StepScore, StepSummary, Stretch};
use crate::trajectory::Step;
use crate::trajectory::Window;

#[derive(Serialize)]
struct StepsDocument<'a> {
    params: &'a GospaParams,
    #[serde(skip_serializing_if = "Option::is_none")]
    ospa2: Option<Ospa2Setting>,
    inputs: &'a InputInfo,
    window: Option<Window>,
    /// Always empty here: the entries are written in its place (see [`write_json`]).
    steps: [StepScore; 0],
    summary: &'a StepSummary,
}

/// The `ospa2` object of the document: the parameters and the width of the sliding window.
#[derive(Serialize)]
struct Ospa2Setting {
    cutoff: f64,
    order: f64,
    window: usize,
}

/// OSPA(2) beside per-step GOSPA: the sliding windows of
/// [`Ospa2::sliding_windows`](crate::ospa2::Ospa2::sliding_windows), each given at its last
/// step.
#[derive(Clone, Copy, Debug)]
pub struct Ospa2Steps<'a> {
    /// The cut-off and order.
    pub params: Ospa2Params,
    /// The width of the sliding window, in steps.
    pub width: usize,
    /// The windows holding a state, in time order of their last step.
    pub windows: &'a [Ospa2Window],
}

impl<'a> Ospa2Steps<'a> {
    /// The sliding windows of `evaluation`, when `request` asked for them (OSPA(2) and a
    /// window width).
    pub fn of(request: &Request, evaluation: &'a Evaluation) -> Option<Self> {
        match (
            request.ospa2,
            request.ospa2_window,
            &evaluation.ospa2_sliding,
        ) {
            (Some(params), Some(width), Some(windows)) => Some(Ospa2Steps {
                params,
                width,
                windows,
            }),
            _ => None,
        }
    }

    /// The index of the run of windows holding `time`, if its window holds a state. Times must
    /// come in increasing order; `cursor` (0 at first) remembers where the last one was found.
    fn at(&self, cursor: &mut usize, time: Step) -> Option<usize> {
        while self.windows.get(*cursor).is_some_and(|w| w.last_end < time) {
            *cursor += 1;
        }
        let window = self.windows.get(*cursor)?;
        (window.first_end <= time).then_some(*cursor)
    }

    /// The runs of windows ending within `[first, last]`, cut to it.
    fn within(&self, first: Step, last: Step) -> impl Iterator<Item = (Step, Step, &Ospa2Window)> {
        let from = self.windows.partition_point(|w| w.last_end < first);
        self.windows[from..]
            .iter()
            .take_while(move |w| w.first_end <= last)
            .map(move |w| (w.first_end.max(first), w.last_end.min(last), w))
    }
}

/// The keys `--ospa2` adds to a step, null where no window ends there.
#[derive(Serialize)]
struct Ospa2Keys {
    ospa2: Option<f64>,
    ospa2_paired_power: Option<f64>,
    ospa2_unpaired_power: Option<f64>,
    ospa2_pairs: Option<usize>,
}

impl Ospa2Keys {
    fn new(window: Option<&Ospa2Window>) -> Self {
        Ospa2Keys {
            ospa2: window.map(|w| w.value),
            ospa2_paired_power: window.map(|w| w.paired_power),
            ospa2_unpaired_power: window.map(|w| w.unpaired_power),
            ospa2_pairs: window.map(|w| w.pairs),
        }
    }
}

/// A step with the keys of `--ospa2` after its own.
#[derive(Serialize)]
struct StepWithOspa2<'a> {
    #[serde(flatten)]
    score: &'a StepScore,
    #[serde(flatten)]
    ospa2: Ospa2Keys,
}

/// The JSON entry of one step: its score, and the keys of `--ospa2` when asked for.
fn step_entry(
    score: &StepScore,
    ospa2: Option<Option<&Ospa2Window>>,
    time_step: Option<f64>,
) -> std::io::Result<String> {
    match ospa2 {
        None => entry(score, score.time, time_step),
        Some(window) => {
            let keys = StepWithOspa2 {
                score,
                ospa2: Ospa2Keys::new(window),
            };
            entry(&keys, score.time, time_step)
        }
    }
}

/// Text: a run of at least this many steps with no object is written as one line.
pub const EMPTY_RUN_LINE: Step = 10;

/// Where the `steps` array sits in the pretty-printed document: its key is at the top level
/// (two spaces in), and a JSON string holds no raw newline, so the match is unique.
const EMPTY_STEPS: &str = "\n  \"steps\": []";

/// One entry of `steps` as serde_json's pretty printer writes it inside the array (its lines
/// four spaces further in than at the top level), with `input_time` after `time` when a step
/// size is given.
fn entry(score: &impl Serialize, time: Step, time_step: Option<f64>) -> std::io::Result<String> {
    let text = serde_json::to_string_pretty(score)?.replace('\n', "\n    ");
    Ok(match time_step {
        Some(dt) => {
            // `time` is the first key: its line ends at the first ",\n".
            let at = text
                .find(",\n")
                .expect("a step has more keys than its time");
            let value = serde_json::to_string(&super::input_time(time, dt))?;
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
    write_json_with(out, series, params, inputs, None)
}

/// [`write_json`], with the `ospa2` object (parameters and window width) after `params` and
/// the keys `ospa2`, `ospa2_paired_power`, `ospa2_unpaired_power`, `ospa2_pairs` in each step
/// (null where no window holding a state ends) when `ospa2` is given.
pub fn write_json_with<W: Write>(
    out: &mut W,
    series: &OccupiedSteps,
    params: &GospaParams,
    inputs: &InputInfo,
    ospa2: Option<&Ospa2Steps>,
) -> std::io::Result<()> {
    let document = StepsDocument {
        params,
        ospa2: ospa2.map(|o| Ospa2Setting {
            cutoff: o.params.cutoff,
            order: o.params.order,
            window: o.width,
        }),
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
    let mut cursor = 0;
    // The run of windows at a step: `None` without `--ospa2`, `Some(None)` where no window
    // holding a state ends.
    let mut window_at = |time: Step| ospa2.map(|o| o.at(&mut cursor, time).map(|k| &o.windows[k]));
    // The template of the empty steps, remade only where the run of windows changes.
    let mut template: Option<(Option<Step>, String)> = None;
    for stretch in series.stretches() {
        match stretch {
            Stretch::Occupied(score) => {
                out.write_all(separator)?;
                let entry = step_entry(score, window_at(score.time), inputs.time_step)?;
                out.write_all(entry.as_bytes())?;
            }
            Stretch::Empty { first, last } => {
                for time in first..=last {
                    let window = window_at(time);
                    let key = window.flatten().map(|w| w.first_end);
                    if template.as_ref().is_none_or(|(k, _)| *k != key) {
                        let text = step_entry(&series.empty_step(0), window, None)?;
                        template = Some((key, text));
                    }
                    let text = &template.as_ref().expect("made above").1;
                    // Time is the first key: the entry is `head`, the time, (the input time,)
                    // `tail`.
                    let split = text.find("\"time\": 0").expect("time comes first") + 8;
                    let (head, tail) = (&text[..split], &text[split + 1..]);
                    out.write_all(separator)?;
                    separator = b",\n    ";
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
    write_csv_with(out, series, time_step, None)
}

/// [`write_csv_timed`], with the columns `ospa2`, `ospa2_paired_power`,
/// `ospa2_unpaired_power`, `ospa2_pairs` last (empty where no window holding a state ends)
/// when `ospa2` is given.
pub fn write_csv_with<W: Write>(
    out: &mut W,
    series: &OccupiedSteps,
    time_step: Option<f64>,
    ospa2: Option<&Ospa2Steps>,
) -> std::io::Result<()> {
    let mut out = std::io::BufWriter::with_capacity(1 << 16, out);
    let timed = if time_step.is_some() {
        ",input_time"
    } else {
        ""
    };
    let second = if ospa2.is_some() {
        ",ospa2,ospa2_paired_power,ospa2_unpaired_power,ospa2_pairs"
    } else {
        ""
    };
    writeln!(
        out,
        "time{timed},gospa,localisation,missed,false,missed_count,false_count,truth_count,\
         estimate_count{second}"
    )?;
    let write_time = |out: &mut std::io::BufWriter<&mut W>, time: Step| -> std::io::Result<()> {
        write_step(out, time)?;
        if let Some(dt) = time_step {
            write!(out, ",{}", super::input_time(time, dt))?;
        }
        Ok(())
    };
    // The cells after the time; `window` is `None` without `--ospa2`.
    let after_time = |s: &StepScore, window: Option<Option<&Ospa2Window>>| {
        let ospa2 = match window {
            None => String::new(),
            Some(None) => ",,,,".to_string(),
            Some(Some(w)) => format!(
                ",{},{},{},{}",
                w.value, w.paired_power, w.unpaired_power, w.pairs
            ),
        };
        format!(
            ",{},{},{},{},{},{},{},{}{ospa2}\n",
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
    let mut cursor = 0;
    let mut window_at = |time: Step| ospa2.map(|o| o.at(&mut cursor, time).map(|k| &o.windows[k]));
    for stretch in series.stretches() {
        match stretch {
            Stretch::Occupied(s) => {
                write_time(&mut out, s.time)?;
                out.write_all(after_time(s, window_at(s.time)).as_bytes())?;
            }
            Stretch::Empty { first, last } => {
                // The rest of the row is formatted once per run of windows.
                let empty = series.empty_step(first);
                let mut rest: Option<(Option<Step>, String)> = None;
                for time in first..=last {
                    let window = window_at(time);
                    let key = window.flatten().map(|w| w.first_end);
                    if rest.as_ref().is_none_or(|(k, _)| *k != key) {
                        rest = Some((key, after_time(&empty, window)));
                    }
                    write_time(&mut out, time)?;
                    out.write_all(rest.as_ref().expect("made above").1.as_bytes())?;
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
    write_text_with(out, series, params, inputs, None)
}

/// [`write_text`], with a last column `OSPA(2)` (`-` where no window holding a state ends) and
/// a line naming its window under the header when `ospa2` is given. A run of
/// [`EMPTY_RUN_LINE`] or more empty steps showing one OSPA(2) value is one line, with the value.
pub fn write_text_with<W: Write>(
    out: &mut W,
    series: &OccupiedSteps,
    params: &GospaParams,
    inputs: &InputInfo,
    ospa2: Option<&Ospa2Steps>,
) -> std::io::Result<()> {
    writeln!(
        out,
        "Per-step GOSPA   cut-off c = {}   order p = {}   alpha = {}   distance: {}",
        param(params.cutoff),
        param(params.order),
        param(params.alpha),
        inputs.distance
    )?;
    super::write_share_line(
        out,
        params.missed_share,
        params.missed_cost(),
        params.false_cost(),
    )?;
    if let Some(o) = ospa2 {
        writeln!(
            out,
            "OSPA(2)          cut-off c = {}   order p = {}   over the {} ending at each step \
             (normalised, 0 to c)",
            param(o.params.cutoff),
            param(o.params.order),
            super::plural(o.width, "step", "steps")
        )?;
    }
    writeln!(out, "{}", inputs.lines("truth    ", "estimate "))?;
    let row = |s: &StepScore, window: Option<&str>| {
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
        cells.extend(window.map(str::to_string));
        cells
    };
    let cell = |window: Option<&Ospa2Window>| fixed_or_dash(window.map(|w| w.value), 4);
    // Rows for the occupied steps and short empty runs; each long run is a line written before
    // the row at its position.
    let mut rows: Vec<Vec<String>> = Vec::new();
    let mut runs: Vec<(usize, String)> = Vec::new();
    let mut cursor = 0;
    for stretch in series.stretches() {
        match stretch {
            Stretch::Occupied(s) => {
                let shown = ospa2.map(|o| cell(o.at(&mut cursor, s.time).map(|k| &o.windows[k])));
                rows.push(row(s, shown.as_deref()));
            }
            Stretch::Empty { first, last } => {
                // Pieces of the run showing one OSPA(2) cell (or none without `--ospa2`).
                let pieces = match ospa2 {
                    None => vec![(first, last, None)],
                    Some(o) => shown_pieces(o, first, last, cell),
                };
                for (from, to, shown) in pieces {
                    if to - from + 1 >= EMPTY_RUN_LINE {
                        let line = match &shown {
                            Some(value) if value != "-" => {
                                format!("steps {from} to {to}: no objects, OSPA(2) {value}")
                            }
                            _ => format!("steps {from} to {to}: no objects"),
                        };
                        runs.push((rows.len(), line));
                    } else {
                        for time in from..=to {
                            rows.push(row(&series.empty_step(time), shown.as_deref()));
                        }
                    }
                }
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
    if ospa2.is_some() {
        header.push("OSPA(2)");
    }
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

/// The empty steps `first..=last` cut into pieces that show one OSPA(2) cell: the runs of
/// windows within the run of steps, consecutive ones showing the same cell merged, and the steps
/// between them (no window) as pieces of `-`. O(runs of windows in the run of steps).
fn shown_pieces(
    ospa2: &Ospa2Steps,
    first: Step,
    last: Step,
    cell: impl Fn(Option<&Ospa2Window>) -> String,
) -> Vec<(Step, Step, Option<String>)> {
    let mut pieces: Vec<(Step, Step, Option<String>)> = Vec::new();
    let mut push = |from: Step, to: Step, shown: String| match pieces.last_mut() {
        Some(piece) if piece.1 + 1 == from && piece.2.as_deref() == Some(shown.as_str()) => {
            piece.1 = to;
        }
        _ => pieces.push((from, to, Some(shown))),
    };
    let mut next = first;
    for (from, to, window) in ospa2.within(first, last) {
        if from > next {
            push(next, from - 1, cell(None));
        }
        push(from, to, cell(Some(window)));
        next = to + 1;
    }
    if next <= last {
        push(next, last, cell(None));
    }
    pieces
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
