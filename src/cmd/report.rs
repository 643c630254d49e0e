//! `switchyard report`: one self-contained HTML page with the summary, errors over time, the
//! identity chart and a top view, for one tracker or several side by side.

use std::io::Write;

use clap::Args;

use switchyard::evaluate::{evaluate, Request};
use switchyard::report::html::{render, Limits, Report, TrackerResults};

use super::config::{check_trackers, read_files};
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
    let files: Vec<&str> = args
        .estimate
        .iter()
        .map(|named| named.file.as_str())
        .collect();
    args.output
        .check(std::iter::once(args.truth.as_str()).chain(files.iter().copied()))?;
    let (truth, estimates, distance) = read_files(
        &args.truth,
        &files,
        &args.csv,
        &args.distance,
        params.cutoff,
    )?;
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
