//! `switchyard audit`: how each true object was covered, worst first, and what each track
//! followed.

use std::io::Write;

use clap::Args;

use switchyard::evaluate::{Evaluation, Request};
use switchyard::report::audit::{write_csv, write_json, write_text, AuditDocument};
use switchyard::report::classes::class_info;
use switchyard::report::{Exactness, InputInfo};

use super::by_class::{self, class_table, Part};
use super::config::evaluate_trajectory;
use super::options::TrajectoryArgs;
use super::output::{Format, OutputArgs};

/// Options of `audit`.
#[derive(Args, Debug)]
pub struct AuditArgs {
    #[command(flatten)]
    metric: TrajectoryArgs,
    /// Show only the N worst truths and the N tracks with the highest false cost.
    #[arg(long, value_name = "N")]
    top: Option<usize>,
    /// How truths are ranked, worst first: by switches (then the longest missed span) or by
    /// their cost in trajectory GOSPA^p (localisation + missed + switching); with cost, tracks
    /// are listed by their false cost too.
    #[arg(long, value_enum, default_value_t = RankBy::Switches)]
    rank_by: RankBy,
    /// Output format.
    #[arg(long, short = 'f', value_enum, default_value_t = Format::Text)]
    format: Format,
    #[command(flatten)]
    output: OutputArgs,
}

/// The ranking of `audit`.
#[derive(clap::ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum RankBy {
    /// Most switches first, then the longest missed span.
    Switches,
    /// Highest cost first.
    Cost,
}

pub fn run(args: &AuditArgs) -> anyhow::Result<()> {
    let request = Request {
        audit: true,
        ..Request::default()
    };
    let (inputs, evaluation, classes) = evaluate_trajectory(&args.metric, &args.output, request)?;
    let info = inputs.info();
    let classes = classes.as_deref();
    // Each class's evaluation, then all classes together (without classes, only that).
    let parts: Vec<(&Evaluation, InputInfo)> = classes
        .unwrap_or_default()
        .iter()
        .map(|c| (&c.evaluation, class_info(&info, &c.scene)))
        .chain([(&evaluation, info.clone())])
        .collect();
    let mut reports = Vec::with_capacity(parts.len());
    for (evaluation, _) in &parts {
        let mut report = evaluation
            .audit
            .clone()
            .ok_or_else(|| anyhow::anyhow!("the audit was asked for"))?;
        if args.rank_by == RankBy::Cost {
            report.rank_by_cost();
        }
        if let Some(top) = args.top {
            report.rank_tracks_by_cost();
            report.keep(top);
        }
        reports.push(report);
    }
    let render = |format: Format, mut out: &mut dyn Write, part: Part| -> anyhow::Result<()> {
        let k = match part {
            Part::Class(k) => k,
            Part::All => parts.len() - 1,
        };
        let ((evaluation, info), report) = (&parts[k], &reports[k]);
        let result = evaluation
            .score
            .as_ref()
            .ok_or_else(|| anyhow::anyhow!("the audit needs the score"))?;
        let document = AuditDocument {
            params: &result.params,
            inputs: info,
            truths: &report.truths,
            estimates: &report.estimates,
            exactness: Exactness::new(result),
            by_cost: args.rank_by == RankBy::Cost,
            tracks_by_cost: args.rank_by == RankBy::Cost || args.top.is_some(),
        };
        match format {
            Format::Text => write_text(&mut out, &document)?,
            Format::Csv => write_csv(&mut out, &document)?,
            Format::Json => write_json(&mut out, &document)?,
        }
        Ok(())
    };
    match classes {
        None => args.output.emit(|out| render(args.format, out, Part::All)),
        Some(classes) => {
            let table = |out: &mut dyn Write| class_table(out, classes, &evaluation);
            by_class::emit(&args.output, args.format, classes, false, &render, &table)
        }
    }
}
