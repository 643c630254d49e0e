//! `switchyard steps`: per-step GOSPA over time.

use clap::Args;

use switchyard::evaluate::Request;
use switchyard::per_step::GospaParams;
use switchyard::report::steps;

use super::config::evaluate_single;
use super::options::InputArgs;
use super::output::{Format, OutputArgs};

/// Options of `steps`.
#[derive(Args, Debug)]
pub struct StepsArgs {
    #[command(flatten)]
    input: InputArgs,
    /// Cut-off c > 0: the most one object can cost at one step.
    #[arg(long, short = 'c', value_name = "C")]
    cutoff: f64,
    /// Order p >= 1.
    #[arg(long, short = 'p', value_name = "P", default_value_t = 1.0)]
    order: f64,
    /// alpha in (0, 2]; the parts are given only for 2.
    #[arg(long, value_name = "A", default_value_t = 2.0)]
    alpha: f64,
    /// Output format.
    #[arg(long, short = 'f', value_enum, default_value_t = Format::Text)]
    format: Format,
    #[command(flatten)]
    output: OutputArgs,
}

pub fn run(args: &StepsArgs) -> anyhow::Result<()> {
    args.output.check(args.input.paths())?;
    let params = GospaParams::new(args.cutoff, args.order, args.alpha)?;
    let inputs = args.input.read(args.cutoff)?;
    let evaluation = evaluate_single(&inputs, &Request::steps(params), &|_| {})?;
    let series = evaluation.steps.expect("the steps were asked for");
    let info = inputs.info();
    args.output.emit(|out| {
        match args.format {
            Format::Text => steps::write_text(out, &series, &params, &info)?,
            Format::Csv => steps::write_csv_timed(out, &series, inputs.time_step)?,
            Format::Json => steps::write_json(out, &series, &params, &info)?,
        }
        Ok(())
    })
}
