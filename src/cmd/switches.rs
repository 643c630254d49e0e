//! `switchyard switches`: every identity switch, from the truths' side and the tracks' side.

use clap::Args;

use std::io::Write;

use switchyard::assignment::switches::{switch_kinds, SwitchKinds};
use switchyard::evaluate::Request;
use switchyard::report::classes::class_info;
use switchyard::report::switches::{write_csv_timed, write_json, write_text, SwitchesDocument};
use switchyard::report::{Exactness, TimedEvents};

use super::by_class::{self, class_table, Part};
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
    let (inputs, evaluation, classes) = evaluate_trajectory(&args.metric, &args.output, request)?;
    let info = inputs.info();
    let classes = classes.as_deref();
    let mut kinds: Vec<SwitchKinds> = classes
        .unwrap_or_default()
        .iter()
        .map(|c| {
            let switches = c.evaluation.switches.as_deref().unwrap_or_default();
            switch_kinds(switches, &c.scene.estimate)
        })
        .collect();
    kinds.push(match classes {
        Some(_) => kinds.iter().fold(SwitchKinds::default(), |sum, k| sum + *k),
        None => switch_kinds(
            evaluation.switches.as_deref().unwrap_or_default(),
            &inputs.estimate.set,
        ),
    });
    let render = |format: Format, mut out: &mut dyn Write, part: Part| -> anyhow::Result<()> {
        let (evaluation, info, kinds) = match part {
            Part::Class(k) => {
                let class = &classes.unwrap_or_default()[k];
                (&class.evaluation, class_info(&info, &class.scene), kinds[k])
            }
            Part::All => (&evaluation, info.clone(), kinds[kinds.len() - 1]),
        };
        let result = evaluation
            .score
            .as_ref()
            .ok_or_else(|| anyhow::anyhow!("the score was asked for"))?;
        let switches = evaluation.switches.as_deref().unwrap_or_default();
        let jumps = evaluation.jumps.as_deref().unwrap_or_default();
        let document = SwitchesDocument {
            params: &result.params,
            inputs: &info,
            switching: result.parts.switching,
            switch_count: result.parts.switch_count,
            kinds,
            switches: TimedEvents::new(switches, inputs.time_step),
            jumps: TimedEvents::new(jumps, inputs.time_step),
            exactness: Exactness::new(result),
        };
        match format {
            Format::Text => write_text(&mut out, &document)?,
            Format::Csv => write_csv_timed(&mut out, switches, jumps, inputs.time_step)?,
            Format::Json => write_json(&mut out, &document)?,
        }
        Ok(())
    };
    match classes {
        None => args.output.emit(|out| render(args.format, out, Part::All)),
        Some(classes) => {
            let table = |out: &mut dyn Write| class_table(out, classes, &evaluation);
            by_class::emit(&args.output, args.format, classes, false, &render, &table)
        }
    }
}
