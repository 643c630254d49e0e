//! `switchyard switches`: every identity switch, from the truths' side and the tracks' side.

use clap::Args;

use switchyard::report::switches::{write_csv, write_json, write_text, SwitchesDocument};
use switchyard::report::{Exactness, InputInfo};
use switchyard::switches::{jump_events, switch_events};

use super::score::compute;
use super::{Format, OutputArgs, TrajectoryArgs};

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
    args.output.check(args.metric.input.paths())?;
    let (inputs, result) = compute(&args.metric)?;
    let (truth, estimate) = (&inputs.truth.set, &inputs.estimate.set);
    let switches = switch_events(&result.assignment, truth, estimate, &result.params);
    let jumps = jump_events(&result.assignment, truth, estimate, &result.params);
    let info = InputInfo::new(&inputs.truth, &inputs.estimate, &inputs.distance);
    let document = SwitchesDocument {
        params: &result.params,
        inputs: &info,
        switching: result.parts.switching,
        switch_count: result.parts.switch_count,
        switches: &switches,
        jumps: &jumps,
        exactness: Exactness::new(&result),
    };
    args.output.emit(|out| {
        match args.format {
            Format::Text => write_text(out, &document)?,
            Format::Csv => write_csv(out, &switches, &jumps)?,
            Format::Json => write_json(out, &document)?,
        }
        Ok(())
    })
}
