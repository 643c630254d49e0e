//! `switchyard steps`: per-step GOSPA over time.

use std::io::Write;

use clap::Args;

use switchyard::evaluate::Request;
use switchyard::ospa2::Ospa2Params;
use switchyard::per_step::GospaParams;
use switchyard::report::classes::class_info;
use switchyard::report::steps::{self, Ospa2Steps};

use super::by_class::{self, Part};
use super::config::evaluate_inputs;
use super::options::{InputArgs, ShareArgs};
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
    #[command(flatten)]
    share: ShareArgs,
    /// Output format.
    #[arg(long, short = 'f', value_enum, default_value_t = Format::Text)]
    format: Format,
    /// Also give, at each step, OSPA(2) with the same cut-off and order over the sliding window
    /// of steps ending there (the OSPA metric on trajectories cut to the window, normalised to
    /// [0, c]; specs/ospa2.md). Not with --class-column.
    #[arg(long)]
    ospa2: bool,
    /// The width of the sliding window of --ospa2, in steps [default: 1].
    #[arg(long, value_name = "STEPS", requires = "ospa2",
          value_parser = clap::value_parser!(u32).range(1..))]
    ospa2_window: Option<u32>,
    #[command(flatten)]
    output: OutputArgs,
}

pub fn run(args: &StepsArgs) -> anyhow::Result<()> {
    args.output.check(args.input.paths())?;
    let params = GospaParams::new(args.cutoff, args.order, args.alpha)?
        .with_missed_share(args.share.missed_share)?;
    let ospa2 = if args.ospa2 {
        if args.input.class_column.is_some() {
            anyhow::bail!(
                "--ospa2 does not go with --class-column: OSPA(2) is normalised by the number of \
                 trajectories, so its values do not add up over classes; run steps --ospa2 on \
                 each class's rows instead"
            );
        }
        Some(Ospa2Params::new(args.cutoff, args.order)?)
    } else {
        None
    };
    let width = args.ospa2_window.unwrap_or(1) as usize;
    let inputs = args.input.read(args.cutoff)?;
    let request = Request {
        ospa2,
        ospa2_window: ospa2.map(|_| width),
        ..Request::steps(params)
    };
    let (evaluation, classes) = evaluate_inputs(&inputs, &request, &|_| {})?;
    let sliding = Ospa2Steps::of(&request, &evaluation);
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
        let sliding = sliding.as_ref();
        match format {
            Format::Text => steps::write_text_with(&mut out, series, &params, &info, sliding)?,
            Format::Csv => steps::write_csv_with(&mut out, series, inputs.time_step, sliding)?,
            Format::Json => steps::write_json_with(&mut out, series, &params, &info, sliding)?,
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
