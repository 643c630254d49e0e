//! `switchyard score`: trajectory GOSPA and its four parts.

use clap::Args;

use switchyard::evaluate::Request;
use switchyard::report::{score, InputInfo};

use super::config::evaluate_trajectory;
use super::options::TrajectoryArgs;
use super::output::{Format, OutputArgs};

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

pub fn run(args: &ScoreArgs) -> anyhow::Result<()> {
    // The JSON document lists the switches and the jumps; the other formats the score only.
    let events = args.format == Format::Json;
    let request = Request {
        switches: events,
        jumps: events,
        ..Request::default()
    };
    let (inputs, evaluation) = evaluate_trajectory(&args.metric, &args.output, request)?;
    let result = evaluation.score.as_ref().expect("the score was asked for");
    let info = InputInfo::new(&inputs.truth, &inputs.estimate, &inputs.distance);
    let engine = args.metric.engine_name();
    args.output.emit(|out| {
        match args.format {
            Format::Json => {
                let switches = evaluation.switches.as_deref().unwrap_or_default();
                let jumps = evaluation.jumps.as_deref().unwrap_or_default();
                let document = score::ScoreDocument::new(result, &info, engine, switches, jumps);
                score::write_json(out, &document)?
            }
            Format::Csv => score::write_csv(out, result)?,
            Format::Text => score::write_text(out, result, &info, engine)?,
        }
        Ok(())
    })
}
