//! `switchyard audit`: how each true object was covered, worst first, and what each track
//! followed.

use clap::Args;

use switchyard::evaluate::Request;
use switchyard::report::audit::{write_csv, write_json, write_text, AuditDocument};
use switchyard::report::Exactness;

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
    let (inputs, mut evaluation) = evaluate_trajectory(&args.metric, &args.output, request)?;
    let mut report = evaluation.audit.take().expect("the audit was asked for");
    let result = evaluation
        .score
        .as_ref()
        .expect("the audit needs the score");
    if args.rank_by == RankBy::Cost {
        report.rank_by_cost();
    }
    if let Some(top) = args.top {
        report.rank_tracks_by_cost();
        report.keep(top);
    }
    let info = inputs.info();
    let document = AuditDocument {
        params: &result.params,
        inputs: &info,
        truths: &report.truths,
        estimates: &report.estimates,
        exactness: Exactness::new(result),
        by_cost: args.rank_by == RankBy::Cost,
        tracks_by_cost: args.rank_by == RankBy::Cost || args.top.is_some(),
    };
    args.output.emit(|out| {
        match args.format {
            Format::Text => write_text(out, &document)?,
            Format::Csv => write_csv(out, &document)?,
            Format::Json => write_json(out, &document)?,
        }
        Ok(())
    })
}
