//! `switchyard report`: one self-contained HTML page with the summary, errors over time, the
//! identity chart and a top view, for one tracker or several side by side.

use std::io::Write;

use clap::Args;

use switchyard::evaluate::{evaluate, Request};
use switchyard::input::read_csv_path;
use switchyard::report::html::{render, Limits, Report, TrackerResults};

use super::config::check_trackers;
use super::options::{CsvOptions, DistanceOptions, MetricArgs, NamedFile};
use super::output::OutputArgs;

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
    estimate: Vec<NamedFile>,
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
    check_trackers(&args.truth, &args.estimate)?;
    let files = args.estimate.iter().map(|estimate| estimate.file.as_str());
    args.output
        .check(std::iter::once(args.truth.as_str()).chain(files))?;
    let distance = args.distance.build(&args.csv)?;
    let layout = args.csv.layout(&distance);
    let truth = read_csv_path(&args.truth, &layout)?;
    distance.validate(truth.set.dim(), params.cutoff)?;
    let mut estimates = Vec::with_capacity(args.estimate.len());
    for named in &args.estimate {
        let estimate = read_csv_path(&named.file, &layout)?;
        truth.check_comparable(&estimate)?;
        estimates.push(estimate);
    }
    // The page shows no jumps: everything else is evaluated.
    let request = Request {
        jumps: false,
        ..Request::everything(params, args.metric.solve_options())?
    };
    let sets: Vec<_> = estimates.iter().map(|estimate| &estimate.set).collect();
    let evaluations = evaluate(&truth.set, &sets, &distance, &request, &|_| {})?;
    let trackers = args
        .estimate
        .iter()
        .zip(estimates)
        .zip(evaluations)
        .map(|((named, estimate), evaluation)| {
            TrackerResults::new(
                named.name.clone(),
                estimate.source,
                estimate.set,
                evaluation,
            )
        })
        .collect::<switchyard::Result<Vec<_>>>()?;
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
