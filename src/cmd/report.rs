//! `switchyard report`: one self-contained HTML page with the summary, errors over time, the
//! identity chart and a top view, for one tracker or several side by side.

use std::io::Write;

use clap::Args;

use switchyard::classes::evaluate_by_class;
use switchyard::evaluate::{evaluate, Request};
use switchyard::ospa2::Ospa2Params;
use switchyard::report::html::{render, Limits, Report, TimeScale, TrackerResults};
use switchyard::trajectory::{Step, Window};

use super::config::{check_trackers, note_mixed, read_classed_files, read_files};
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
    /// Show only the steps from this time on (in the time column's units: a step index, or a
    /// time with --time-step) in the time charts and the top view; the summary still covers
    /// the whole scene.
    #[arg(long, value_name = "TIME", allow_negative_numbers = true)]
    from: Option<f64>,
    /// Show only the steps up to this time (included); see --from.
    #[arg(long, value_name = "TIME", allow_negative_numbers = true)]
    to: Option<f64>,
    /// Unit of time written on the time axes (for example `s`); needs --time-step, with which
    /// the axes show time = step x step size instead of the step index.
    #[arg(long, value_name = "UNIT", requires = "time_step")]
    time_unit: Option<String>,
    /// Also give each tracker's OSPA(2) with the same cut-off and order in the summary: the
    /// OSPA metric on trajectories, normalised to [0, c], as a second opinion (specs/ospa2.md).
    #[arg(long)]
    ospa2: bool,
    /// Name of a column giving each row's class (car, pedestrian ...): objects are matched
    /// only within their class; the summary adds each class's d and parts beside all classes
    /// together, and a chart per class shows each tracker's per-step GOSPA in it. A track whose
    /// rows carry several classes is cut into one piece per class. Not with --ospa2.
    #[arg(long, value_name = "NAME", conflicts_with = "ospa2")]
    class_column: Option<String>,
    /// Title of the page.
    #[arg(long, value_name = "TEXT", default_value = "Tracker report")]
    title: String,
    #[command(flatten)]
    output: OutputArgs,
}

/// A `--from` / `--to` value as a step: a whole step index, or with a step size the nearest
/// step, as the reader turns times into steps.
fn step_of(option: &str, value: f64, time_step: Option<f64>) -> anyhow::Result<Step> {
    let step = match time_step {
        Some(dt) => (value / dt).round(),
        None if value.fract() != 0.0 => anyhow::bail!(
            "{option} {value} is not a whole step; give a step index, or a time together with \
             --time-step"
        ),
        None => value,
    };
    if !step.is_finite() || step.abs() > 9_007_199_254_740_992.0 {
        anyhow::bail!("{option} {value} is beyond the supported range of steps");
    }
    Ok(step as Step)
}

/// The steps to show, from `--from` and `--to` (`None` when neither is given).
fn view_of(args: &ReportArgs) -> anyhow::Result<Option<Window>> {
    if args.from.is_none() && args.to.is_none() {
        return Ok(None);
    }
    let dt = args.csv.time_step;
    let first = args
        .from
        .map(|v| step_of("--from", v, dt))
        .transpose()?
        .unwrap_or(Step::MIN / 2);
    let last = args
        .to
        .map(|v| step_of("--to", v, dt))
        .transpose()?
        .unwrap_or(Step::MAX / 2);
    if first > last {
        anyhow::bail!("--from must not come after --to (they give steps {first} and {last})");
    }
    Ok(Some(Window { first, last }))
}

pub fn run(args: &ReportArgs) -> anyhow::Result<()> {
    let params = args.metric.params()?;
    let view = view_of(args)?;
    check_trackers(&args.truth, &args.estimate)?;
    let files: Vec<&str> = args
        .estimate
        .iter()
        .map(|named| named.file.as_str())
        .collect();
    args.output
        .check(std::iter::once(args.truth.as_str()).chain(files.iter().copied()))?;
    let (truth, estimates, distance, classes) = match &args.class_column {
        None => {
            let (truth, estimates, distance) = read_files(
                &args.truth,
                &files,
                &args.csv,
                &args.distance,
                params.cutoff,
            )?;
            (truth, estimates, distance, None)
        }
        Some(column) => {
            let (truth, estimates, distance) = read_classed_files(
                &args.truth,
                &files,
                &args.csv,
                &args.distance,
                params.cutoff,
                column,
            )?;
            note_mixed(&truth.0, &truth.1, "truth carries", "truths carry");
            let (estimates, estimate_classes): (Vec<_>, Vec<_>) = estimates.into_iter().unzip();
            for (estimate, classes) in estimates.iter().zip(&estimate_classes) {
                note_mixed(estimate, classes, "track carries", "tracks carry");
            }
            (
                truth.0,
                estimates,
                distance,
                Some((truth.1, estimate_classes)),
            )
        }
    };
    if let Some(view) = view {
        let whole = estimates
            .iter()
            .filter_map(|e| Window::covering(&truth.set, &e.set))
            .reduce(|a, b| Window {
                first: a.first.min(b.first),
                last: a.last.max(b.last),
            });
        if let Some(whole) = whole {
            if view.first > whole.last || view.last < whole.first {
                anyhow::bail!(
                    "no step of the inputs lies within --from/--to; the inputs cover steps {} \
                     to {}",
                    whole.first,
                    whole.last
                );
            }
        }
    }
    // The page shows no jumps: everything else is evaluated.
    let request = Request {
        jumps: false,
        ospa2: if args.ospa2 {
            Some(Ospa2Params::new(params.cutoff, params.order)?)
        } else {
            None
        },
        ..Request::everything(params, args.metric.solve_options())?
    };
    let trackers = match &classes {
        None => {
            let sets: Vec<_> = estimates.iter().map(|estimate| &estimate.set).collect();
            let evaluations = evaluate(&truth.set, &sets, &distance, &request, &|_| {})?;
            args.estimate
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
                .collect::<switchyard::Result<Vec<_>>>()?
        }
        Some((truth_classes, estimate_classes)) => args
            .estimate
            .iter()
            .zip(estimates)
            .zip(estimate_classes)
            .map(|((named, estimate), classes)| {
                let by_class = evaluate_by_class(
                    (&truth.set, truth_classes),
                    (&estimate.set, classes),
                    &distance,
                    &request,
                    &|_| {},
                )?;
                TrackerResults::with_classes(
                    named.name.clone(),
                    estimate.source,
                    estimate.set,
                    by_class,
                )
            })
            .collect::<switchyard::Result<Vec<_>>>()?,
    };
    let report = Report {
        title: args.title.clone(),
        truth: truth.set,
        truth_source: truth.source,
        state_columns: truth.state_columns,
        units: args.units.clone().filter(|u| !u.trim().is_empty()),
        distance: distance.name().to_string(),
        engine: args.metric.engine_name().to_string(),
        trackers,
        view,
        time: args.csv.time_step.map(|step| TimeScale {
            step,
            unit: args.time_unit.clone().filter(|u| !u.trim().is_empty()),
        }),
    };
    let page = render(&report, &Limits::default());
    args.output.emit(|out| {
        out.write_all(page.as_bytes())?;
        Ok(())
    })
}
