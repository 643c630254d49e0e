//! Output of identity switches (`switchyard switches`). Schemas: `specs/formats.md`.

use std::io::Write;

use serde::Serialize;

use super::{
    fixed, input_time, with_class, write_run_header, write_table, Exactness, InputInfo, TimedEvents,
};
use crate::assignment::switches::{JumpEvent, SwitchEvent, SwitchKinds};
use crate::trajectory::Step;
use crate::trajectory_metric::TrajectoryParams;

/// The `switches` JSON document.
#[derive(Serialize)]
pub struct SwitchesDocument<'a> {
    /// The parameters.
    pub params: &'a TrajectoryParams,
    /// The inputs.
    pub inputs: &'a InputInfo,
    /// The switching part of the score (the events' costs add up to it).
    pub switching: f64,
    /// Full switches count 1, half switches 0.5.
    pub switch_count: f64,
    /// The truth-side events by kind: full, half, swaps, breaks, hand-overs.
    pub kinds: SwitchKinds,
    /// Switches seen from the truths.
    pub switches: TimedEvents<'a, SwitchEvent>,
    /// Jumps seen from the estimates.
    pub jumps: TimedEvents<'a, JumpEvent>,
    /// Whether the solution is integral or exact (`integral`, `lp_total`, `exact_total`,
    /// `exact`).
    #[serde(flatten)]
    pub exactness: Exactness<'a>,
}

/// JSON: one object (see [`SwitchesDocument`]).
pub fn write_json<W: Write>(out: &mut W, document: &SwitchesDocument) -> std::io::Result<()> {
    serde_json::to_writer_pretty(&mut *out, document)?;
    writeln!(out)
}

fn id(value: &Option<String>) -> &str {
    value.as_deref().unwrap_or("")
}

/// CSV: one row per event, truth side first: `side,time,object,from,to,weight,cost`. `side` is
/// `truth` (object is the truth, from/to estimates) or `estimate` (object is the estimate,
/// from/to truths); an empty from/to means unassigned.
pub fn write_csv<W: Write>(
    out: &mut W,
    switches: &[SwitchEvent],
    jumps: &[JumpEvent],
) -> std::io::Result<()> {
    write_csv_timed(out, switches, jumps, None)
}

/// [`write_csv`], with an `input_time` column after `time` (the step in the input's time
/// units) when a step size is given.
pub fn write_csv_timed<W: Write>(
    out: &mut W,
    switches: &[SwitchEvent],
    jumps: &[JumpEvent],
    time_step: Option<f64>,
) -> std::io::Result<()> {
    let mut writer = csv::Writer::from_writer(&mut *out);
    let mut header = vec!["side", "time"];
    if time_step.is_some() {
        header.push("input_time");
    }
    header.extend(["object", "from", "to", "weight", "cost"]);
    writer.write_record(&header)?;
    let (truth_rows, track_rows) = event_rows(switches, jumps);
    for row in truth_rows.iter().chain(&track_rows) {
        let mut cells = vec![row.side.to_string(), row.time.to_string()];
        if let Some(dt) = time_step {
            cells.push(input_time(row.time, dt).to_string());
        }
        cells.extend([
            row.object.to_string(),
            id(row.from).to_string(),
            id(row.to).to_string(),
            row.weight.to_string(),
            row.cost.to_string(),
        ]);
        writer.write_record(&cells)?;
    }
    writer.flush()
}

/// One event as the writers show it, from either side.
struct EventRow<'a> {
    side: &'static str,
    time: Step,
    object: &'a str,
    from: &'a Option<String>,
    to: &'a Option<String>,
    weight: f64,
    cost: f64,
    class: Option<&'a str>,
}

/// The truth-side and the track-side events as rows.
fn event_rows<'a>(
    switches: &'a [SwitchEvent],
    jumps: &'a [JumpEvent],
) -> (Vec<EventRow<'a>>, Vec<EventRow<'a>>) {
    let truth_rows = switches
        .iter()
        .map(|e| EventRow {
            side: "truth",
            time: e.time,
            object: &e.truth,
            from: &e.from,
            to: &e.to,
            weight: e.weight,
            cost: e.cost,
            class: e.class.as_deref(),
        })
        .collect();
    let track_rows = jumps
        .iter()
        .map(|e| EventRow {
            side: "estimate",
            time: e.time,
            object: &e.estimate,
            from: &e.from,
            to: &e.to,
            weight: e.weight,
            cost: e.cost,
            class: e.class.as_deref(),
        })
        .collect();
    (truth_rows, track_rows)
}

/// One titled table of events, or "none".
fn write_events<W: Write>(
    out: &mut W,
    title: &str,
    object: &str,
    rows: &[EventRow],
    time_step: Option<f64>,
) -> std::io::Result<()> {
    writeln!(out, "{title} ({}):", rows.len())?;
    if rows.is_empty() {
        return writeln!(out, "  none");
    }
    let cells: Vec<Vec<String>> = rows
        .iter()
        .map(|e| {
            let mut row = vec![e.time.to_string()];
            if let Some(dt) = time_step {
                row.push(input_time(e.time, dt).to_string());
            }
            row.extend([
                with_class(e.object, e.class),
                label(e.from),
                "->".to_string(),
                label(e.to),
                kind(e.from, e.to).to_string(),
                fixed(e.weight, 3),
                fixed(e.cost, 4),
            ]);
            row
        })
        .collect();
    let mut header = vec!["step"];
    if time_step.is_some() {
        header.push("time");
    }
    header.extend([object, "from", "", "to", "kind", "weight", "cost"]);
    write_table(out, &header, &cells)
}

fn label(value: &Option<String>) -> String {
    value.clone().unwrap_or_else(|| "(none)".to_string())
}

fn kind(from: &Option<String>, to: &Option<String>) -> &'static str {
    if from.is_some() && to.is_some() {
        "full"
    } else {
        "half"
    }
}

/// Text: the switches of the truths, then the jumps of the estimates.
pub fn write_text<W: Write>(out: &mut W, document: &SwitchesDocument) -> std::io::Result<()> {
    write_run_header(out, "Identity switches", document.params, document.inputs)?;
    writeln!(out)?;
    let (truth_rows, track_rows) = event_rows(document.switches.events, document.jumps.events);
    let dt = document.inputs.time_step;
    write_events(
        out,
        "Truths passing between tracks",
        "truth",
        &truth_rows,
        dt,
    )?;
    writeln!(out)?;
    write_events(
        out,
        "Tracks passing between truths",
        "track",
        &track_rows,
        dt,
    )?;
    writeln!(out)?;
    writeln!(
        out,
        "switching part {} = {} switches (full = 1, half = 0.5) x gamma^p",
        fixed(document.switching, 4),
        fixed(document.switch_count, 3)
    )?;
    writeln!(out, "{}", super::score::switch_reading(&document.kinds))?;
    document.exactness.write_text(out)
}
