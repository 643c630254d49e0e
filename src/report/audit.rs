//! Output of the coverage audit (`switchyard audit`). Schemas: `specs/formats.md`.

use std::io::Write;

use serde::Serialize;

use super::{fixed, write_table, Exactness, InputInfo};
use crate::audit::{EstimateAudit, TruthAudit};
use crate::trajectory_metric::TrajectoryParams;

/// The `audit` JSON document.
#[derive(Serialize)]
pub struct AuditDocument<'a> {
    /// The parameters.
    pub params: &'a TrajectoryParams,
    /// The inputs.
    pub inputs: &'a InputInfo,
    /// Truths, worst first (only the first N with `--top N`).
    pub truths: &'a [TruthAudit],
    /// Estimates, in input order.
    pub estimates: &'a [EstimateAudit],
    /// Whether the solution is integral or exact (`integral`, `lp_total`, `exact_total`,
    /// `exact`).
    #[serde(flatten)]
    pub exactness: Exactness<'a>,
}

/// JSON: one object (see [`AuditDocument`]).
pub fn write_json<W: Write>(out: &mut W, document: &AuditDocument) -> std::io::Result<()> {
    serde_json::to_writer_pretty(&mut *out, document)?;
    writeln!(out)
}

/// CSV: one row per span, `side,object,rank,kind,first,last,steps,partner,mean_error`. Truth
/// rows (kind `covered` or `missed`) come first, ranked; then estimate rows (kind `following`
/// or `false`). `partner` is the covering estimate or the truth followed; `mean_error` only for
/// covered spans; `rank` only for truths.
pub fn write_csv<W: Write>(out: &mut W, document: &AuditDocument) -> std::io::Result<()> {
    let mut writer = csv::Writer::from_writer(&mut *out);
    writer.write_record([
        "side",
        "object",
        "rank",
        "kind",
        "first",
        "last",
        "steps",
        "partner",
        "mean_error",
    ])?;
    for t in document.truths {
        let mut spans: Vec<[String; 9]> = Vec::new();
        for s in &t.covered {
            spans.push([
                "truth".into(),
                t.truth.clone(),
                t.rank.to_string(),
                "covered".into(),
                s.first.to_string(),
                s.last.to_string(),
                s.steps.to_string(),
                s.estimate.clone(),
                s.mean_error.to_string(),
            ]);
        }
        for s in &t.missed {
            spans.push([
                "truth".into(),
                t.truth.clone(),
                t.rank.to_string(),
                "missed".into(),
                s.first.to_string(),
                s.last.to_string(),
                s.steps.to_string(),
                String::new(),
                String::new(),
            ]);
        }
        spans.sort_by_key(|row| row[4].parse::<i64>().unwrap_or(0));
        for row in spans {
            writer.write_record(&row)?;
        }
    }
    for e in document.estimates {
        let mut spans: Vec<[String; 9]> = Vec::new();
        for s in &e.following {
            spans.push([
                "estimate".into(),
                e.estimate.clone(),
                String::new(),
                "following".into(),
                s.first.to_string(),
                s.last.to_string(),
                s.steps.to_string(),
                s.truth.clone(),
                String::new(),
            ]);
        }
        for s in &e.false_spans {
            spans.push([
                "estimate".into(),
                e.estimate.clone(),
                String::new(),
                "false".into(),
                s.first.to_string(),
                s.last.to_string(),
                s.steps.to_string(),
                String::new(),
                String::new(),
            ]);
        }
        spans.sort_by_key(|row| row[4].parse::<i64>().unwrap_or(0));
        for row in spans {
            writer.write_record(&row)?;
        }
    }
    writer.flush()
}

/// Text: a ranked table of truths with their spans, then the estimates in brief.
pub fn write_text<W: Write>(out: &mut W, document: &AuditDocument) -> std::io::Result<()> {
    let p = document.params;
    writeln!(
        out,
        "Coverage audit   cut-off c = {}   order p = {}   switching penalty gamma = {}   distance: {}",
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
        "Truths, worst first (most switches, then longest missed span):"
    )?;
    let rows: Vec<Vec<String>> = document
        .truths
        .iter()
        .map(|t| {
            vec![
                t.rank.to_string(),
                t.truth.clone(),
                fixed(t.switches, 1),
                t.longest_missed.to_string(),
                format!("{}/{}", t.covered_steps, t.present_steps),
                t.estimates.to_string(),
            ]
        })
        .collect();
    write_table(
        out,
        &[
            "rank",
            "truth",
            "switches",
            "longest missed",
            "covered/present",
            "tracks",
        ],
        &rows,
    )?;
    for t in document.truths {
        writeln!(out)?;
        writeln!(out, "{} (rank {}):", t.truth, t.rank)?;
        let mut lines: Vec<(i64, String)> = Vec::new();
        for s in &t.covered {
            lines.push((
                s.first,
                format!(
                    "  {:>6} .. {:<6} {:>5} steps  covered by {}  mean error {}",
                    s.first,
                    s.last,
                    s.steps,
                    s.estimate,
                    fixed(s.mean_error, 3)
                ),
            ));
        }
        for s in &t.missed {
            lines.push((
                s.first,
                format!(
                    "  {:>6} .. {:<6} {:>5} steps  missed",
                    s.first, s.last, s.steps
                ),
            ));
        }
        lines.sort_by_key(|(first, _)| *first);
        for (_, line) in lines {
            writeln!(out, "{line}")?;
        }
    }
    writeln!(out)?;
    writeln!(out, "Tracks:")?;
    let rows: Vec<Vec<String>> = document
        .estimates
        .iter()
        .map(|e| {
            let followed: Vec<String> = e
                .following
                .iter()
                .map(|s| format!("{} {}..{}", s.truth, s.first, s.last))
                .collect();
            vec![
                e.estimate.clone(),
                e.present_steps.to_string(),
                e.false_steps.to_string(),
                e.truths.to_string(),
                if followed.is_empty() {
                    "-".into()
                } else {
                    followed.join(", ")
                },
            ]
        })
        .collect();
    write_table(
        out,
        &["track", "present", "false", "truths", "followed"],
        &rows,
    )?;
    writeln!(out)?;
    document.exactness.write_text(out)
}
