//! Output of the coverage audit (`switchyard audit`). Schemas: `specs/formats.md`.

use std::io::Write;

use serde::Serialize;

use super::{
    count, fixed, input_time, printable, with_class, write_run_header, write_table, Exactness,
    InputInfo,
};
use crate::assignment::audit::{EstimateAudit, TruthAudit};
use crate::trajectory::Step;
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
    /// Estimates, in input order, or by false cost (`tracks_by_cost`).
    pub estimates: &'a [EstimateAudit],
    /// Whether the solution is integral or exact (`integral`, `lp_total`, `exact_total`,
    /// `exact`).
    #[serde(flatten)]
    pub exactness: Exactness<'a>,
    /// Truths ranked by cost (else by switches).
    #[serde(skip)]
    pub by_cost: bool,
    /// Tracks listed by false cost, highest first (else in input order).
    #[serde(skip)]
    pub tracks_by_cost: bool,
}

/// JSON: one object (see [`AuditDocument`]).
pub fn write_json<W: Write>(out: &mut W, document: &AuditDocument) -> std::io::Result<()> {
    serde_json::to_writer_pretty(&mut *out, document)?;
    writeln!(out)
}

/// CSV: one row per span,
/// `side,object,rank,kind,first,last,steps,partner,mean_error,object_cost,object_share`. Truth
/// rows (kind `covered` or `missed`) come first, ranked; then estimate rows (kind `following`
/// or `false`). `partner` is the covering estimate or the truth followed; `mean_error` only for
/// covered spans; `rank` only for truths; `object_cost` and `object_share` are the object's
/// cost (a truth's total, a track's false cost) and its share of the total, on each of its rows.
pub fn write_csv<W: Write>(out: &mut W, document: &AuditDocument) -> std::io::Result<()> {
    let mut writer = csv::Writer::from_writer(&mut *out);
    let time_step = document.inputs.time_step;
    let mut header = vec!["side", "object", "rank", "kind", "first", "last"];
    if time_step.is_some() {
        header.extend(["first_time", "last_time"]);
    }
    header.extend([
        "steps",
        "partner",
        "mean_error",
        "object_cost",
        "object_share",
    ]);
    writer.write_record(&header)?;
    for t in document.truths {
        let rank = t.rank.to_string();
        let (cost, share) = (t.costs.total.to_string(), t.costs.share.to_string());
        let row = SpanRow {
            side: "truth",
            object: &t.truth,
            rank: &rank,
            cost: &cost,
            share: &share,
            time_step,
        };
        let mut spans: Vec<(Step, Vec<String>)> = Vec::new();
        for s in &t.covered {
            let error = s.mean_error.to_string();
            spans.push(row.cells("covered", s.first, s.last, s.steps, &s.estimate, &error));
        }
        for s in &t.missed {
            spans.push(row.cells("missed", s.first, s.last, s.steps, "", ""));
        }
        write_sorted(&mut writer, spans)?;
    }
    for e in document.estimates {
        let (cost, share) = (e.costs.false_.to_string(), e.costs.share.to_string());
        let row = SpanRow {
            side: "estimate",
            object: &e.estimate,
            rank: "",
            cost: &cost,
            share: &share,
            time_step,
        };
        let mut spans: Vec<(Step, Vec<String>)> = Vec::new();
        for s in &e.following {
            spans.push(row.cells("following", s.first, s.last, s.steps, &s.truth, ""));
        }
        for s in &e.false_spans {
            spans.push(row.cells("false", s.first, s.last, s.steps, "", ""));
        }
        write_sorted(&mut writer, spans)?;
    }
    writer.flush()
}

/// The columns shared by every span of one object in the CSV output.
struct SpanRow<'a> {
    side: &'a str,
    object: &'a str,
    rank: &'a str,
    cost: &'a str,
    share: &'a str,
    time_step: Option<f64>,
}

impl SpanRow<'_> {
    fn cells(
        &self,
        kind: &str,
        first: Step,
        last: Step,
        steps: usize,
        partner: &str,
        error: &str,
    ) -> (Step, Vec<String>) {
        let mut cells = [
            self.side,
            self.object,
            self.rank,
            kind,
            &first.to_string(),
            &last.to_string(),
        ]
        .map(str::to_string)
        .to_vec();
        if let Some(dt) = self.time_step {
            cells.push(input_time(first, dt).to_string());
            cells.push(input_time(last, dt).to_string());
        }
        cells.extend(
            [&steps.to_string(), partner, error, self.cost, self.share].map(|c| c.to_string()),
        );
        (first, cells)
    }
}

/// Writes one object's spans in time order.
fn write_sorted<W: Write>(
    writer: &mut csv::Writer<W>,
    mut spans: Vec<(Step, Vec<String>)>,
) -> std::io::Result<()> {
    spans.sort_by_key(|(first, _)| *first);
    for (_, row) in spans {
        writer.write_record(&row)?;
    }
    Ok(())
}

/// Text: a ranked table of truths with their spans, then the estimates in brief.
pub fn write_text<W: Write>(out: &mut W, document: &AuditDocument) -> std::io::Result<()> {
    write_run_header(out, "Coverage audit", document.params, document.inputs)?;
    writeln!(out)?;
    writeln!(
        out,
        "{}",
        if document.by_cost {
            "Truths, worst first (highest cost in d^p: localisation + missed + switching):"
        } else {
            "Truths, worst first (most switches, then longest missed span):"
        }
    )?;
    let rows: Vec<Vec<String>> = document
        .truths
        .iter()
        .map(|t| {
            vec![
                t.rank.to_string(),
                with_class(&t.truth, t.class.as_deref()),
                count(t.switches),
                t.longest_missed.to_string(),
                format!("{}/{}", t.covered_steps, t.present_steps),
                t.estimates.to_string(),
                fixed(t.costs.total, 2),
                percent(t.costs.share),
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
            "cost d^p",
            "share",
        ],
        &rows,
    )?;
    for t in document.truths {
        writeln!(out)?;
        let truth = with_class(&t.truth, t.class.as_deref());
        writeln!(out, "{} (rank {}):", printable(&truth), t.rank)?;
        let mut lines: Vec<(i64, String)> = Vec::new();
        let times = |first: Step, last: Step| match document.inputs.time_step {
            Some(dt) => format!(
                "  (time {} to {})",
                input_time(first, dt),
                input_time(last, dt)
            ),
            None => String::new(),
        };
        for s in &t.covered {
            lines.push((
                s.first,
                format!(
                    "  {:>6} .. {:<6} {:>5} {}  covered by {}  mean error {}{}",
                    s.first,
                    s.last,
                    s.steps,
                    steps_word(s.steps),
                    printable(&s.estimate),
                    fixed(s.mean_error, 3),
                    times(s.first, s.last)
                ),
            ));
        }
        for s in &t.missed {
            lines.push((
                s.first,
                format!(
                    "  {:>6} .. {:<6} {:>5} {}  missed{}",
                    s.first,
                    s.last,
                    s.steps,
                    steps_word(s.steps),
                    times(s.first, s.last)
                ),
            ));
        }
        lines.sort_by_key(|(first, _)| *first);
        for (_, line) in lines {
            writeln!(out, "{line}")?;
        }
    }
    writeln!(out)?;
    writeln!(
        out,
        "{}",
        if document.tracks_by_cost {
            "Tracks, highest false cost first:"
        } else {
            "Tracks:"
        }
    )?;
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
                with_class(&e.estimate, e.class.as_deref()),
                e.present_steps.to_string(),
                e.false_steps.to_string(),
                fixed(e.costs.false_, 2),
                percent(e.costs.share),
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
        &[
            "track",
            "present",
            "false",
            "false d^p",
            "share",
            "truths",
            "followed",
        ],
        &rows,
    )?;
    writeln!(out)?;
    document.exactness.write_text(out)
}

/// A share as a percentage with one decimal.
fn percent(share: f64) -> String {
    format!("{:.1}%", 100.0 * share)
}

/// "step " or "steps", padded to one width so the span lines stay aligned.
fn steps_word(n: usize) -> &'static str {
    if n == 1 {
        "step "
    } else {
        "steps"
    }
}
