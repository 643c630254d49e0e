//! `switchyard steps`: per-step GOSPA over time.

use std::io::Write;

use clap::Args;

use switchyard::evaluate::Request;
use switchyard::per_step::GospaParams;
use switchyard::report::classes::class_info;
use switchyard::report::steps;

use super::by_class::{self, Part};
use super::config::evaluate_inputs;
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
    let (evaluation, classes) = evaluate_inputs(&inputs, &Request::steps(params), &|_| {})?;
    let info = inputs.info();
    let classes = classes.as_deref();
    let render = |format: Format, mut out: &mut dyn Write, part: Part| -> anyhow::Result<()> {
        let (evaluation, info) = match part {
            Part::Class(k) => {
                let class = &classes.unwrap_or_default()[k];
                (&class.evaluation, class_info(&info, &class.scene))
            }
            Part::All => (&evaluation, info.clone()),
        };
        let series = evaluation
            .steps
            .as_ref()
            .ok_or_else(|| anyhow::anyhow!("the steps were asked for"))?;
        match format {
            Format::Text => steps::write_text(&mut out, series, &params, &info)?,
            Format::Csv => steps::write_csv_timed(&mut out, series, inputs.time_step)?,
            Format::Json => steps::write_json(&mut out, series, &params, &info)?,
        }
        Ok(())
    };
    match classes {
        None => args.output.emit(|out| render(args.format, out, Part::All)),
        Some(classes) => by_class::emit(&args.output, args.format, classes, true, &render, &|_| {
            Ok(())
        }),
    }
}
