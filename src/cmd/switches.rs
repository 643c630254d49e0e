//! `switchyard switches`: every identity switch, from the truths' side and the tracks' side.

use clap::Args;

use switchyard::assignment::switches::switch_kinds;
use switchyard::evaluate::Request;
use switchyard::report::switches::{write_csv_timed, write_json, write_text, SwitchesDocument};
use switchyard::report::{Exactness, TimedEvents};

use super::config::evaluate_trajectory;
use super::options::TrajectoryArgs;
use super::output::{Format, OutputArgs};

/// Options of `switches`.
#[derive(Args, Debug)]
pub struct SwitchesArgs {
    #[command(flatten)]
    metric: TrajectoryArgs,
    /// Output format.
    #[arg(long, short = 'f', value_enum, default_value_t = Format::Text)]
    format: Format,
    #[command(flatten)]
    output: OutputArgs,
}

pub fn run(args: &SwitchesArgs) -> anyhow::Result<()> {
    let request = Request {
        switches: true,
        jumps: true,
        ..Request::default()
    };
    let (inputs, evaluation) = evaluate_trajectory(&args.metric, &args.output, request)?;
    let result = evaluation.score.as_ref().expect("the score was asked for");
    let switches = evaluation.switches.as_deref().unwrap_or_default();
    let jumps = evaluation.jumps.as_deref().unwrap_or_default();
    let info = inputs.info();
    let document = SwitchesDocument {
        params: &result.params,
        inputs: &info,
        switching: result.parts.switching,
        switch_count: result.parts.switch_count,
        kinds: switch_kinds(switches, &inputs.estimate.set),
        switches: TimedEvents::new(switches, inputs.time_step),
        jumps: TimedEvents::new(jumps, inputs.time_step),
        exactness: Exactness::new(result),
    };
    args.output.emit(|out| {
        match args.format {
            Format::Text => write_text(out, &document)?,
            Format::Csv => write_csv_timed(out, switches, jumps, inputs.time_step)?,
            Format::Json => write_json(out, &document)?,
        }
        Ok(())
    })
}
