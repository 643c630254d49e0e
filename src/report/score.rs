//! Output of trajectory GOSPA (`switchyard score`). Schemas: `specs/formats.md`.

use std::io::Write;

use serde::Serialize;

use super::ospa2::Ospa2Document;
use super::{
    certificate_line, count, fixed, plural, write_run_header, Exactness, InputInfo, TimedEvents,
};
use crate::assignment::switches::{JumpEvent, SwitchEvent, SwitchKinds};
use crate::trajectory::Window;
use crate::trajectory_metric::{Certificate, Parts, SolveStats, TrajectoryParams, TrajectoryScore};

/// The `score` JSON document. The top-level keys are a contract.
#[derive(Serialize)]
pub struct ScoreDocument<'a> {
    /// d.
    pub metric: f64,
    /// d^p.
    pub total: f64,
    /// (d^p / steps)^(1/p).
    pub per_step: f64,
    /// Steps in the window.
    pub steps: usize,
    /// The four parts and the counts behind them.
    #[serde(flatten)]
    pub parts: Parts,
    /// Whether the LP optimum is integral, the LP value, and the exact value with its
    /// certificate (`integral`, `lp_total`, `exact_total`, `exact`).
    #[serde(flatten)]
    pub exactness: Exactness<'a>,
    /// The parameters.
    pub params: &'a TrajectoryParams,
    /// The inputs.
    pub inputs: &'a InputInfo,
    /// The window.
    pub window: Option<Window>,
    /// The LP engine used.
    pub engine: &'a str,
    /// LP sizes.
    pub lp: &'a SolveStats,
    /// The bounds that prove the value and how each group was solved.
    pub certificate: &'a Certificate,
    /// Switches seen from the truths (keys: time, truth, from, to, weight, cost, and
    /// input_time with a step size).
    pub switches: TimedEvents<'a, SwitchEvent>,
    /// Jumps seen from the estimates (keys: time, estimate, from, to, weight, cost, and
    /// input_time with a step size).
    pub jumps: TimedEvents<'a, JumpEvent>,
    /// OSPA(2) beside it, when asked for (`--ospa2`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub ospa2: Option<Ospa2Document<'a>>,
}

impl<'a> ScoreDocument<'a> {
    /// The document for a score.
    pub fn new(
        score: &'a TrajectoryScore,
        inputs: &'a InputInfo,
        engine: &'a str,
        switches: &'a [SwitchEvent],
        jumps: &'a [JumpEvent],
    ) -> Self {
        ScoreDocument {
            metric: score.metric,
            total: score.total,
            per_step: score.per_step,
            steps: score.steps,
            parts: score.parts,
            exactness: Exactness::new(score),
            params: &score.params,
            inputs,
            window: score.window,
            engine,
            lp: &score.stats,
            certificate: &score.certificate,
            switches: TimedEvents::new(switches, inputs.time_step),
            jumps: TimedEvents::new(jumps, inputs.time_step),
            ospa2: None,
        }
    }

    /// The same document with OSPA(2) beside the score.
    pub fn with_ospa2(self, ospa2: Ospa2Document<'a>) -> Self {
        ScoreDocument {
            ospa2: Some(ospa2),
            ..self
        }
    }
}

/// JSON: one object (see [`ScoreDocument`]).
pub fn write_json<W: Write>(out: &mut W, document: &ScoreDocument) -> std::io::Result<()> {
    serde_json::to_writer_pretty(&mut *out, document)?;
    writeln!(out)
}

/// CSV: a header and one row, the score and its parts (columns in `specs/formats.md`).
pub fn write_csv<W: Write>(out: &mut W, score: &TrajectoryScore) -> std::io::Result<()> {
    write_csv_with(out, score, None)
}

/// [`write_csv`], with OSPA(2) and its pair count as two more columns when given.
pub fn write_csv_with<W: Write>(
    out: &mut W,
    score: &TrajectoryScore,
    ospa2: Option<&Ospa2Document>,
) -> std::io::Result<()> {
    let mut writer = csv::Writer::from_writer(&mut *out);
    let mut header = vec![
        "metric",
        "total",
        "per_step",
        "steps",
        "localisation",
        "missed",
        "false",
        "switching",
        "missed_count",
        "false_count",
        "switch_count",
        "integral",
        "exact_total",
    ];
    if ospa2.is_some() {
        header.extend(["ospa2", "ospa2_pairs"]);
    }
    writer.write_record(&header)?;
    let numbers = [
        score.metric,
        score.total,
        score.per_step,
        score.steps as f64,
        score.parts.localization,
        score.parts.missed,
        score.parts.false_,
        score.parts.switching,
        score.parts.missed_count,
        score.parts.false_count,
        score.parts.switch_count,
    ];
    let mut row: Vec<String> = numbers.iter().map(f64::to_string).collect();
    row.push(score.integral.to_string());
    row.push(super::csv_number(score.exact_total));
    if let Some(ospa2) = ospa2 {
        row.push(ospa2.value.to_string());
        row.push(ospa2.pairs.len().to_string());
    }
    writer.write_record(&row)?;
    writer.flush()
}

/// The switching row's note: the events by weight, plainly. In an integral solution every
/// event is a full switch (counted 1) or a half switch (to or from no track, counted 0.5).
fn switch_note(score: &TrajectoryScore, kinds: &SwitchKinds) -> String {
    if score.integral {
        format!(
            "{} full + {} half {} (a half counts 0.5)",
            kinds.full,
            kinds.half,
            if kinds.full + kinds.half == 1 {
                "switch"
            } else {
                "switches"
            }
        )
    } else {
        format!(
            "{} switches, weighted (fractional LP: full = 1, half = 0.5)",
            count(score.parts.switch_count)
        )
    }
}

/// Lines that say what the switch events are, so that "12 switches" is not read as 12 swaps:
/// the kinds, then what each kind means (no trailing newline).
pub fn switch_reading(kinds: &SwitchKinds) -> String {
    format!(
        "switches by kind: {} ({} full), {}, {}, {}\n  \
         (swap: two truths exchange tracks at one step; break: a track ends and another takes\n  \
         over; hand-over: the old track goes on; half: a truth gains or loses a track)",
        plural(kinds.swaps, "swap", "swaps"),
        2 * kinds.swaps,
        plural(kinds.breaks, "break", "breaks"),
        plural(kinds.handovers, "hand-over", "hand-overs"),
        plural(kinds.half, "half switch", "half switches"),
    )
}

/// Text: a compact summary.
pub fn write_text<W: Write>(
    out: &mut W,
    score: &TrajectoryScore,
    inputs: &InputInfo,
    engine: &str,
    kinds: &SwitchKinds,
) -> std::io::Result<()> {
    write_run_header(out, "Trajectory GOSPA", &score.params, inputs)?;
    match score.window {
        Some(w) => writeln!(
            out,
            "steps     {} to {} ({})",
            w.first,
            w.last,
            plural(score.steps, "step", "steps")
        )?,
        None => writeln!(out, "steps     none: both inputs are empty")?,
    }
    writeln!(out)?;
    writeln!(
        out,
        "  d = {}      d^p = {}      per step (d^p / steps)^(1/p) = {}",
        fixed(score.metric, 4),
        fixed(score.total, 4),
        fixed(score.per_step, 4)
    )?;
    writeln!(out)?;
    let share = |part: f64| {
        if score.total > 0.0 {
            format!("{:>5.1}%", 100.0 * part / score.total)
        } else {
            "    -".to_string()
        }
    };
    let width = [
        score.parts.localization,
        score.parts.missed,
        score.parts.false_,
        score.parts.switching,
    ]
    .iter()
    .map(|v| fixed(*v, 4).len())
    .max()
    .unwrap_or(1);
    let rows = [
        ("localisation", score.parts.localization, String::new()),
        (
            "missed",
            score.parts.missed,
            format!(
                "{} truth object-steps unassigned",
                count(score.parts.missed_count)
            ),
        ),
        (
            "false",
            score.parts.false_,
            format!(
                "{} estimate object-steps unassigned",
                count(score.parts.false_count)
            ),
        ),
        (
            "switching",
            score.parts.switching,
            switch_note(score, kinds),
        ),
    ];
    writeln!(out, "  {:<13} {:>width$}  {:>6}", "part", "d^p", "share")?;
    for (name, value, note) in rows {
        writeln!(
            out,
            "  {:<13} {:>width$}  {}   {}",
            name,
            fixed(value, 4),
            share(value),
            note
        )?;
    }
    if kinds.full + kinds.half > 0 {
        writeln!(out, "  {}", switch_reading(kinds))?;
    }
    writeln!(out)?;
    let s = &score.stats;
    if s.lp_components > 0 {
        writeln!(
            out,
            "LP ({engine}): {} in {}, {} solved as {} ({}, {})",
            plural(s.candidate_pairs, "candidate pair", "candidate pairs"),
            plural(s.components, "group", "groups"),
            s.lp_components,
            if s.lp_components == 1 { "an LP" } else { "LPs" },
            plural(s.variables, "variable", "variables"),
            plural(s.constraints, "row", "rows")
        )?;
    } else {
        writeln!(
            out,
            "LP ({engine}): {} in {}",
            plural(s.candidate_pairs, "candidate pair", "candidate pairs"),
            plural(s.components, "group", "groups"),
        )?;
    }
    writeln!(out, "{}", certificate_line(&score.certificate))?;
    Exactness::new(score).write_text(out)
}
