//! `switchyard report`: one self-contained HTML page with the summary, errors over time, the
//! identity chart and a top view, for one tracker or several side by side.

use std::io::Write;

use anyhow::bail;
use clap::Args;

use switchyard::input::read_csv_path;
use switchyard::report::html::{render, Limits, Report, TrackerResults};

use super::compare::tracker_name;
use super::{CsvOptions, DistanceOptions, MetricArgs, OutputArgs};

/// Options of `report`.
#[derive(Args, Debug)]
pub struct ReportArgs {
    /// Ground-truth CSV file (`-` for standard input).
    #[arg(long, value_name = "FILE")]
    truth: String,
    /// One tracker's output: NAME=FILE, or FILE alone (named after the file without its
    /// extension). Repeat for each tracker: each gets its own charts and a column in the
    /// summary.
    #[arg(long, value_name = "NAME=FILE", required = true)]
    estimate: Vec<String>,
    #[command(flatten)]
    csv: CsvOptions,
    #[command(flatten)]
    distance: DistanceOptions,
    #[command(flatten)]
    metric: MetricArgs,
    /// Unit of the state values, written on the axes (for example `m`).
    #[arg(long, value_name = "UNIT")]
    units: Option<String>,
    /// Title of the page.
    #[arg(long, value_name = "TEXT", default_value = "Tracker report")]
    title: String,
    #[command(flatten)]
    output: OutputArgs,
}

pub fn run(args: &ReportArgs) -> anyhow::Result<()> {
    let params = args.metric.params()?;
    let mut named: Vec<(String, String)> = Vec::with_capacity(args.estimate.len());
    for value in &args.estimate {
        let (name, file) = tracker_name(value)?;
        if named.iter().any(|(other, _)| *other == name) {
            bail!("invalid parameter: two trackers are named {name:?}; name them with NAME=FILE");
        }
        named.push((name, file));
    }
    let inputs = || std::iter::once(&args.truth).chain(named.iter().map(|(_, file)| file));
    args.output.check(inputs())?;
    let stdin_readers = inputs().filter(|file| *file == "-").count();
    if stdin_readers > 1 {
        bail!("invalid parameter: only one input can read standard input");
    }
    let distance = args.distance.build(&args.csv)?;
    let mut layout = args.csv.layout()?;
    layout.distance = Some(distance.clone());
    let truth = read_csv_path(&args.truth, &layout)?;
    distance.validate(truth.set.dim(), params.cutoff)?;
    let options = args.metric.solve_options();
    let mut trackers = Vec::with_capacity(named.len());
    for (name, file) in named {
        let estimate = read_csv_path(&file, &layout)?;
        truth.check_comparable(&estimate)?;
        trackers.push(TrackerResults::compute(
            name,
            estimate.source,
            &truth.set,
            estimate.set,
            &params,
            &distance,
            &options,
        )?);
    }
    let report = Report {
        title: args.title.clone(),
        truth: truth.set,
        truth_source: truth.source,
        state_columns: truth.state_columns,
        units: args.units.clone().filter(|u| !u.trim().is_empty()),
        distance: distance.name().to_string(),
        engine: args.metric.engine_name().to_string(),
        trackers,
    };
    let page = render(&report, &Limits::default());
    args.output.emit(|out| {
        out.write_all(page.as_bytes())?;
        Ok(())
    })
}
