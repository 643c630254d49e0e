//! Output of identity switches (`switchyard switches`). Schemas: `specs/formats.md`.

use std::io::Write;

use serde::Serialize;

use super::{fixed, write_table, Exactness, InputInfo};
use crate::switches::{JumpEvent, SwitchEvent};
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
    /// Switches seen from the truths.
    pub switches: &'a [SwitchEvent],
    /// Jumps seen from the estimates.
    pub jumps: &'a [JumpEvent],
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
    let mut writer = csv::Writer::from_writer(&mut *out);
    let rows = switches
        .iter()
        .map(|e| ("truth", e.time, &e.truth, &e.from, &e.to, e.weight, e.cost))
        .chain(jumps.iter().map(|e| {
            (
                "estimate",
                e.time,
                &e.estimate,
                &e.from,
                &e.to,
                e.weight,
                e.cost,
            )
        }));
    writer.write_record(["side", "time", "object", "from", "to", "weight", "cost"])?;
    for (side, time, object, from, to, weight, cost) in rows {
        writer.write_record([
            side.to_string(),
            time.to_string(),
            object.clone(),
            id(from).to_string(),
            id(to).to_string(),
            weight.to_string(),
            cost.to_string(),
        ])?;
    }
    writer.flush()
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
    let p = document.params;
    writeln!(
        out,
        "Identity switches   cut-off c = {}   order p = {}   switching penalty gamma = {}   distance: {}",
        p.cutoff, p.order, p.switch_penalty, document.inputs.distance
    )?;
    writeln!(
        out,
        "truth     {} ({} objects)\nestimate  {} ({} tracks)\n",
        document.inputs.truth,
        document.inputs.truth_objects,
        document.inputs.estimate,
        document.inputs.estimate_tracks
    )?;
    writeln!(
        out,
        "Truths passing between tracks ({}):",
        document.switches.len()
    )?;
    if document.switches.is_empty() {
        writeln!(out, "  none")?;
    } else {
        let rows: Vec<Vec<String>> = document
            .switches
            .iter()
            .map(|e| {
                vec![
                    e.time.to_string(),
                    e.truth.clone(),
                    label(&e.from),
                    "->".to_string(),
                    label(&e.to),
                    kind(&e.from, &e.to).to_string(),
                    fixed(e.weight, 3),
                    fixed(e.cost, 4),
                ]
            })
            .collect();
        write_table(
            out,
            &["step", "truth", "from", "", "to", "kind", "weight", "cost"],
            &rows,
        )?;
    }
    writeln!(out)?;
    writeln!(
        out,
        "Tracks passing between truths ({}):",
        document.jumps.len()
    )?;
    if document.jumps.is_empty() {
        writeln!(out, "  none")?;
    } else {
        let rows: Vec<Vec<String>> = document
            .jumps
            .iter()
            .map(|e| {
                vec![
                    e.time.to_string(),
                    e.estimate.clone(),
                    label(&e.from),
                    "->".to_string(),
                    label(&e.to),
                    kind(&e.from, &e.to).to_string(),
                    fixed(e.weight, 3),
                    fixed(e.cost, 4),
                ]
            })
            .collect();
        write_table(
            out,
            &["step", "track", "from", "", "to", "kind", "weight", "cost"],
            &rows,
        )?;
    }
    writeln!(out)?;
    writeln!(
        out,
        "switching part {} = {} switches (full = 1, half = 0.5) x gamma^p",
        fixed(document.switching, 4),
        fixed(document.switch_count, 3)
    )?;
    document.exactness.write_text(out)
}
