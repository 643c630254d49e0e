//! `switchyard score`: trajectory GOSPA and its four parts.

use clap::Args;

use switchyard::report::{score, InputInfo};
use switchyard::switches::{jump_events, switch_events};
use switchyard::trajectory_metric::{score_with_progress, TrajectoryScore};

use super::{Format, Inputs, OutputArgs, TrajectoryArgs};

/// Options of `score`.
#[derive(Args, Debug)]
pub struct ScoreArgs {
    #[command(flatten)]
    metric: TrajectoryArgs,
    /// Output format (text, json, or csv: one row of the score and its parts).
    #[arg(long, short = 'f', value_enum, default_value_t = Format::Text)]
    format: Format,
    #[command(flatten)]
    output: OutputArgs,
}

/// Reads the inputs and solves the trajectory LP: shared by the commands built on it.
pub fn compute(args: &TrajectoryArgs) -> anyhow::Result<(Inputs, TrajectoryScore)> {
    let params = args.params()?;
    let inputs = args.input.read(params.cutoff)?;
    let result = score_with_progress(
        &inputs.truth.set,
        &inputs.estimate.set,
        &params,
        &inputs.distance,
        &args.metric.solve_options(),
        &super::solve_progress(),
    )?;
    for note in &result.notes {
        eprintln!("switchyard: note: {note}");
    }
    Ok((inputs, result))
}

pub fn run(args: &ScoreArgs) -> anyhow::Result<()> {
    args.output.check(args.metric.input.paths())?;
    let (inputs, result) = compute(&args.metric)?;
    let info = InputInfo::new(&inputs.truth, &inputs.estimate, &inputs.distance);
    let engine = args.metric.engine_name();
    args.output.emit(|out| {
        match args.format {
            Format::Json => {
                let (truth, estimate) = (&inputs.truth.set, &inputs.estimate.set);
                let switches = switch_events(&result.assignment, truth, estimate, &result.params);
                let jumps = jump_events(&result.assignment, truth, estimate, &result.params);
                let document = score::ScoreDocument::new(&result, &info, engine, &switches, &jumps);
                score::write_json(out, &document)?
            }
            Format::Csv => score::write_csv(out, &result)?,
            Format::Text => score::write_text(out, &result, &info, engine)?,
        }
        Ok(())
    })
}
