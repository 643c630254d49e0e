//! `switchyard score`: trajectory GOSPA and its four parts.

use clap::Args;

use std::io::Write;

use switchyard::assignment::switches::{switch_kinds, SwitchKinds};
use switchyard::classes::ClassEvaluation;
use switchyard::evaluate::{Evaluation, Request};
use switchyard::ospa2::Ospa2Params;
use switchyard::report::classes::class_info;
use switchyard::report::ospa2::{self, Ospa2Document};
use switchyard::report::score;
use switchyard::report::InputInfo;
use switchyard::trajectory_metric::TrajectoryScore;

use super::by_class::{self, class_table, Part};
use super::config::{evaluate_trajectory, Inputs};
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
    /// Also give OSPA(2) with the same cut-off and order: the OSPA metric on trajectories with
    /// a time-averaged distance, normalised to [0, c], as a second opinion (specs/ospa2.md).
    #[arg(long)]
    ospa2: bool,
    #[command(flatten)]
    output: OutputArgs,
}

pub fn run(args: &ScoreArgs) -> anyhow::Result<()> {
    // The JSON document lists the switches and the jumps; the text sorts the switches into
    // kinds; CSV gives the score only.
    let events = args.format == Format::Json;
    let ospa2 = if args.ospa2 {
        let params = args.metric.params()?;
        Some(Ospa2Params::new(params.cutoff, params.order)?)
    } else {
        None
    };
    let request = Request {
        switches: args.format != Format::Csv,
        jumps: events,
        ospa2,
        ..Request::default()
    };
    let (inputs, evaluation, classes) = evaluate_trajectory(&args.metric, &args.output, request)?;
    if let Some(classes) = &classes {
        return write_by_class(args, &inputs, &evaluation, classes);
    }
    let result = evaluation.score.as_ref().expect("the score was asked for");
    let info = inputs.info();
    let engine = args.metric.engine_name();
    let second = match (&evaluation.ospa2, &ospa2) {
        (Some(value), Some(params)) => Some(Ospa2Document::new(
            value,
            params,
            &inputs.truth.set,
            &inputs.estimate.set,
        )),
        _ => None,
    };
    args.output.emit(|out| {
        match args.format {
            Format::Json => {
                let switches = evaluation.switches.as_deref().unwrap_or_default();
                let jumps = evaluation.jumps.as_deref().unwrap_or_default();
                let mut document =
                    score::ScoreDocument::new(result, &info, engine, switches, jumps);
                if let Some(second) = &second {
                    document = document.with_ospa2(second.clone());
                }
                score::write_json(out, &document)?
            }
            Format::Csv => score::write_csv_with(out, result, second.as_ref())?,
            Format::Text => {
                let switches = evaluation.switches.as_deref().unwrap_or_default();
                let kinds = switch_kinds(switches, &inputs.estimate.set);
                score::write_text(out, result, &info, engine, &kinds)?;
                if let Some(second) = &second {
                    ospa2::write_text(out, second)?;
                }
            }
        }
        Ok(())
    })
}

/// The output with classes: each class's score, then all classes together (`specs/formats.md`).
fn write_by_class(
    args: &ScoreArgs,
    inputs: &Inputs,
    overall: &Evaluation,
    classes: &[ClassEvaluation],
) -> anyhow::Result<()> {
    let info = inputs.info();
    let engine = args.metric.engine_name();
    let scores = classes
        .iter()
        .map(|c| c.evaluation.score.as_ref())
        .chain([overall.score.as_ref()])
        .collect::<Option<Vec<&TrajectoryScore>>>()
        .ok_or_else(|| anyhow::anyhow!("the score was asked for"))?;
    let mut kinds: Vec<SwitchKinds> = classes
        .iter()
        .map(|c| {
            let switches = c.evaluation.switches.as_deref().unwrap_or_default();
            switch_kinds(switches, &c.scene.estimate)
        })
        .collect();
    kinds.push(kinds.iter().fold(SwitchKinds::default(), |sum, k| sum + *k));
    let infos: Vec<InputInfo> = classes
        .iter()
        .map(|c| class_info(&info, &c.scene))
        .chain([info.clone()])
        .collect();
    let render = |format: Format, mut out: &mut dyn Write, part: Part| -> anyhow::Result<()> {
        let k = match part {
            Part::Class(k) => k,
            Part::All => classes.len(),
        };
        let evaluation = match part {
            Part::Class(k) => &classes[k].evaluation,
            Part::All => overall,
        };
        let (result, info) = (scores[k], &infos[k]);
        match format {
            Format::Json => {
                let switches = evaluation.switches.as_deref().unwrap_or_default();
                let jumps = evaluation.jumps.as_deref().unwrap_or_default();
                let document = score::ScoreDocument::new(result, info, engine, switches, jumps);
                score::write_json(&mut out, &document)?
            }
            Format::Csv => score::write_csv(&mut out, result)?,
            Format::Text => score::write_text(&mut out, result, info, engine, &kinds[k])?,
        }
        Ok(())
    };
    let table = |out: &mut dyn Write| class_table(out, classes, overall);
    by_class::emit(&args.output, args.format, classes, true, &render, &table)
}
