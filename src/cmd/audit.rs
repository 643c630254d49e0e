//! `switchyard audit`: how each true object was covered, worst first, and what each track
//! followed.

use clap::Args;

use switchyard::audit::audit;
use switchyard::report::audit::{write_csv, write_json, write_text, AuditDocument};
use switchyard::report::{Exactness, InputInfo};
use switchyard::switches::switch_events;

use super::score::compute;
use super::{Format, OutputArgs, TrajectoryArgs};

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
    args.output.check(args.metric.input.paths())?;
    let (inputs, result) = compute(&args.metric)?;
    let (truth, estimate) = (&inputs.truth.set, &inputs.estimate.set);
    let switches = switch_events(&result.assignment, truth, estimate, &result.params);
    let mut report = audit(&result, truth, estimate, &switches);
    if let Some(top) = args.top {
        report.truths.truncate(top);
    }
    let info = InputInfo::new(&inputs.truth, &inputs.estimate, &inputs.distance);
    let document = AuditDocument {
        params: &result.params,
        inputs: &info,
        truths: &report.truths,
        estimates: &report.estimates,
        exactness: Exactness::new(&result),
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
