//! `switchyard audit`: how each true object was covered, worst first, and what each track
//! followed.

use clap::Args;

use switchyard::evaluate::Request;
use switchyard::report::audit::{write_csv, write_json, write_text, AuditDocument};
use switchyard::report::{Exactness, InputInfo};

use super::config::evaluate_trajectory;
use super::options::TrajectoryArgs;
use super::output::{Format, OutputArgs};

/// Options of `audit`.
#[derive(Args, Debug)]
pub struct AuditArgs {
    #[command(flatten)]
    metric: TrajectoryArgs,
    /// Show only the N worst-covered truths.
    #[arg(long, value_name = "N")]
    top: Option<usize>,
    /// Output format.
    #[arg(long, short = 'f', value_enum, default_value_t = Format::Text)]
    format: Format,
    #[command(flatten)]
    output: OutputArgs,
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
    if let Some(top) = args.top {
        report.truths.truncate(top);
    }
    let info = InputInfo::new(&inputs.truth, &inputs.estimate, &inputs.distance);
    let document = AuditDocument {
        params: &result.params,
        inputs: &info,
        truths: &report.truths,
        estimates: &report.estimates,
        exactness: Exactness::new(result),
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
