//! Resolved configuration: the raw options of [`super::options`] turned, in one place, into what
//! the library takes (the CSV layout, the base distance, the metric's parameters and solve
//! options), and the inputs read with the checks every command shares: at most one input on
//! standard input, no empty file name, distinct tracker names, inputs that can be compared.

use clap::ValueEnum;

use switchyard::classes::{evaluate_by_class, ClassEvaluation, PointClasses};
use switchyard::distance::Distance;
use switchyard::evaluate::{evaluate, Evaluation, Request};
use switchyard::input::{read_classed_csv_path, read_csv_path, CsvLayout, TrajectoryFile};
use switchyard::report::classes::mixed_note;
use switchyard::report::InputInfo;
use switchyard::trajectory_metric::{Engine, ExactBudget, SolveOptions, TrajectoryParams};
use switchyard::{Error, Result};

use super::options::{
    BoxKind, CsvOptions, DistanceKind, DistanceOptions, InputArgs, MetricArgs, NamedFile,
    TrajectoryArgs,
};
use super::output::OutputArgs;
use super::progress::solve_progress;

/// The two inputs of a command with one tracker, read and checked.
pub struct Inputs {
    pub truth: TrajectoryFile,
    pub estimate: TrajectoryFile,
    pub distance: Distance,
    /// `--time-step`: the step size in the input's time units.
    pub time_step: Option<f64>,
    /// With `--class-column`: the class of every point of the truth and of the estimate.
    pub classes: Option<(PointClasses, PointClasses)>,
}

impl Inputs {
    /// The inputs described for the outputs, with the step size when one was given.
    pub fn info(&self) -> InputInfo {
        InputInfo::new(&self.truth, &self.estimate, &self.distance).with_time_step(self.time_step)
    }
}

impl CsvOptions {
    /// The layout these options describe, each state checked for `distance` as it is read.
    pub fn layout(&self, distance: &Distance) -> CsvLayout {
        CsvLayout {
            time_column: self.time_column.clone(),
            id_column: self.id_column.clone(),
            state_columns: self.state_columns.clone(),
            time_step: self.time_step,
            delimiter: self.delimiter.0,
            distance: Some(distance.clone()),
        }
    }
}

impl DistanceOptions {
    /// The distance these options describe, with the options that do not go together refused:
    /// `--weights` other than with euclidean, manhattan or chebyshev, `--box` other than with
    /// iou, iou or geodesic without `--state-columns`, or with the wrong number of them. The
    /// caller still checks the cut-off and the data ([`Distance::validate`]; per row with
    /// [`CsvLayout::distance`]).
    pub fn build(&self, csv: &CsvOptions) -> Result<Distance> {
        let name = self
            .distance
            .to_possible_value()
            .map_or_else(String::new, |value| value.get_name().to_string());
        let weights = self.weights.clone();
        if weights.is_some() && matches!(self.distance, DistanceKind::Iou | DistanceKind::Geodesic)
        {
            return Err(Error::Parameter(format!(
                "--weights applies to the euclidean, manhattan and chebyshev distances, not to \
                 {name}"
            )));
        }
        if self.box_layout.is_some() && self.distance != DistanceKind::Iou {
            return Err(Error::Parameter(format!(
                "--box applies to the iou distance, not to {name}"
            )));
        }
        let distance = match self.distance {
            DistanceKind::Euclidean => Distance::Euclidean { weights },
            DistanceKind::Manhattan => Distance::Manhattan { weights },
            DistanceKind::Chebyshev => Distance::Chebyshev { weights },
            DistanceKind::Iou => {
                Distance::Iou(self.box_layout.unwrap_or(BoxKind::CornerSize).into())
            }
            DistanceKind::Geodesic => Distance::Geodesic,
        };
        match (&distance, &csv.state_columns) {
            (Distance::Iou(layout), None) => {
                return Err(Error::Parameter(format!(
                    "the iou distance needs --state-columns naming the box's 4 columns ({}) or 6 \
                     ({}) in the {} layout",
                    layout.columns(2),
                    layout.columns(3),
                    layout.name()
                )))
            }
            (Distance::Geodesic, None) => {
                return Err(Error::Parameter(
                    "the geodesic distance needs --state-columns naming the latitude and the \
                     longitude columns, in that order (for example --state-columns lat,lon)"
                        .into(),
                ))
            }
            (_, Some(columns)) => distance.check_dimension(columns.len())?,
            _ => {}
        }
        Ok(distance)
    }
}

impl InputArgs {
    /// The two input files as named (`-` for standard input), for [`OutputArgs::check`].
    pub fn paths(&self) -> [&str; 2] {
        [&self.truth, &self.estimate]
    }

    /// Reads both files and checks they can be compared with the chosen distance.
    pub fn read(&self, cutoff: f64) -> Result<Inputs> {
        if self.truth == "-" && self.estimate == "-" {
            return Err(Error::Parameter(
                "only one of --truth and --estimate can read standard input".into(),
            ));
        }
        for (option, path) in [("--truth", &self.truth), ("--estimate", &self.estimate)] {
            if path.is_empty() {
                return Err(Error::Parameter(format!(
                    "{option} is empty: give a CSV file, or - for standard input"
                )));
            }
        }
        let Some(class_column) = &self.class_column else {
            let (truth, mut estimates, distance) = read_files(
                &self.truth,
                &[&self.estimate],
                &self.csv,
                &self.distance,
                cutoff,
            )?;
            return Ok(Inputs {
                truth,
                estimate: estimates.pop().expect("one estimate was read"),
                distance,
                time_step: self.csv.time_step,
                classes: None,
            });
        };
        let (truth, mut estimates, distance) = read_classed_files(
            &self.truth,
            &[&self.estimate],
            &self.csv,
            &self.distance,
            cutoff,
            class_column,
        )?;
        let (estimate, estimate_classes) = estimates.pop().expect("one estimate was read");
        Ok(Inputs {
            truth: truth.0,
            estimate,
            distance,
            time_step: self.csv.time_step,
            classes: Some((truth.1, estimate_classes)),
        })
    }
}

/// Reads the truth and the estimates with the layout of `csv`, each state checked for the
/// distance of `distance` as it is read, and checks that they can be compared with it at
/// `cutoff` (same state dimension, the distance's rules): shared by every command that reads
/// whole CSV files.
pub fn read_files(
    truth: &str,
    estimates: &[&str],
    csv: &CsvOptions,
    distance: &DistanceOptions,
    cutoff: f64,
) -> Result<(TrajectoryFile, Vec<TrajectoryFile>, Distance)> {
    let (truth, estimates, distance) =
        read_with(truth, estimates, csv, distance, cutoff, |path, layout| {
            Ok((read_csv_path(path, layout)?, None))
        })?;
    let estimates = estimates.into_iter().map(|(file, _)| file).collect();
    Ok((truth.0, estimates, distance))
}

/// [`read_files`] that also reads each point's class from the column `class_column`.
pub fn read_classed_files(
    truth: &str,
    estimates: &[&str],
    csv: &CsvOptions,
    distance: &DistanceOptions,
    cutoff: f64,
    class_column: &str,
) -> Result<(ClassedFile, Vec<ClassedFile>, Distance)> {
    let (truth, estimates, distance) =
        read_with(truth, estimates, csv, distance, cutoff, |path, layout| {
            let classed = read_classed_csv_path(path, layout, class_column)?;
            Ok((classed.file, Some(classed.classes)))
        })?;
    let classed = |(file, classes): ReadFile| (file, classes.unwrap_or_default());
    Ok((
        classed(truth),
        estimates.into_iter().map(classed).collect(),
        distance,
    ))
}

/// A file read with the class of each point.
pub type ClassedFile = (TrajectoryFile, PointClasses);

/// Says on standard error how many trajectories of `file` carry more than one class (each is
/// then scored as one piece per class); `one` and `many` name them (`"track carries"`).
pub fn note_mixed(file: &TrajectoryFile, classes: &PointClasses, one: &str, many: &str) {
    if let Some(note) = mixed_note(&file.source, classes.mixed(), one, many) {
        eprintln!("switchyard: note: {note}");
    }
}

/// A file read, with the classes of its points when they were read.
type ReadFile = (TrajectoryFile, Option<PointClasses>);

/// [`read_files`] with the reader `read` (which may read classes too).
fn read_with(
    truth: &str,
    estimates: &[&str],
    csv: &CsvOptions,
    distance: &DistanceOptions,
    cutoff: f64,
    read: impl Fn(&str, &CsvLayout) -> Result<ReadFile>,
) -> Result<(ReadFile, Vec<ReadFile>, Distance)> {
    let distance = distance.build(csv)?;
    distance.check_cutoff(cutoff)?;
    let layout = csv.layout(&distance);
    let truth = read(truth, &layout)?;
    let estimates = estimates
        .iter()
        .map(|file| {
            let estimate = read(file, &layout)?;
            truth.0.check_comparable(&estimate.0)?;
            Ok(estimate)
        })
        .collect::<Result<Vec<_>>>()?;
    distance.validate(truth.0.set.dim(), cutoff)?;
    Ok((truth, estimates, distance))
}

impl TrajectoryArgs {
    /// The checked parameters; the switching penalty defaults to the cut-off.
    pub fn params(&self) -> Result<TrajectoryParams> {
        self.metric.params()
    }

    /// The engine's name for output.
    pub fn engine_name(&self) -> &'static str {
        self.metric.engine_name()
    }
}

impl MetricArgs {
    /// The checked parameters; the switching penalty defaults to the cut-off.
    pub fn params(&self) -> Result<TrajectoryParams> {
        TrajectoryParams::new(
            self.cutoff,
            self.order,
            self.switch_penalty.unwrap_or(self.cutoff),
        )?
        .with_missed_share(self.share.missed_share)
    }

    /// The exact-metric budget, when `--exact` is given.
    pub fn exact(&self) -> Option<ExactBudget> {
        self.exact
            .then(|| self.exact_budget.unwrap_or(ExactBudget::Unlimited))
    }

    /// The engine's name for output.
    pub fn engine_name(&self) -> &'static str {
        Engine::from(self.engine).name()
    }

    /// How the trajectory LP is solved.
    pub fn solve_options(&self) -> SolveOptions {
        SolveOptions {
            engine: self.engine.into(),
            exact: self.exact(),
            memory_budget: self.memory_budget,
            ..Default::default()
        }
    }
}

/// Checks the inputs of a command with several trackers before anything is read: distinct
/// tracker names, and at most one input (the truth or an estimate) on standard input.
pub fn check_trackers(truth: &str, estimates: &[NamedFile]) -> Result<()> {
    for (i, estimate) in estimates.iter().enumerate() {
        if estimates[..i]
            .iter()
            .any(|other| other.name == estimate.name)
        {
            return Err(Error::Parameter(format!(
                "two trackers are named {:?}; name them with NAME=FILE",
                estimate.name
            )));
        }
    }
    let stdin_readers = std::iter::once(truth)
        .chain(estimates.iter().map(|estimate| estimate.file.as_str()))
        .filter(|file| *file == "-")
        .count();
    if stdin_readers > 1 {
        return Err(Error::Parameter(
            "only one input can read standard input".into(),
        ));
    }
    Ok(())
}

/// Reads the inputs and evaluates them as `request` asks, with the trajectory parameters and
/// solve options of `args`: shared by the commands built on the trajectory LP. The solve's
/// progress shows on standard error when it is a terminal, and its notes are written there.
/// With classes, the evaluation is that of all classes together, and each class's comes
/// beside it.
pub fn evaluate_trajectory(
    args: &TrajectoryArgs,
    output: &OutputArgs,
    request: Request,
) -> anyhow::Result<(Inputs, Evaluation, Option<Vec<ClassEvaluation>>)> {
    output.check(args.input.paths())?;
    let params = args.params()?;
    let inputs = args.input.read(params.cutoff)?;
    let request = Request {
        trajectory: Some(params),
        solve: args.metric.solve_options(),
        ..request
    };
    let (evaluation, classes) = evaluate_inputs(&inputs, &request, &solve_progress())?;
    if let Some(score) = &evaluation.score {
        for note in &score.notes {
            eprintln!("switchyard: note: {note}");
        }
    }
    Ok((inputs, evaluation, classes))
}

/// [`evaluate`] on the one estimate of `inputs`; with classes, [`evaluate_by_class`]: the
/// evaluation of all classes together, and each class's. A track cut into pieces by class is
/// noted on standard error.
pub fn evaluate_inputs(
    inputs: &Inputs,
    request: &Request,
    progress: &(dyn Fn(switchyard::trajectory_metric::Progress) + Sync),
) -> Result<(Evaluation, Option<Vec<ClassEvaluation>>)> {
    let Some((truth_classes, estimate_classes)) = &inputs.classes else {
        return Ok((evaluate_single(inputs, request, progress)?, None));
    };
    for (file, classes, one, many) in [
        (
            &inputs.truth,
            truth_classes,
            "truth carries",
            "truths carry",
        ),
        (
            &inputs.estimate,
            estimate_classes,
            "track carries",
            "tracks carry",
        ),
    ] {
        note_mixed(file, classes, one, many);
    }
    let by_class = evaluate_by_class(
        (&inputs.truth.set, truth_classes),
        (&inputs.estimate.set, estimate_classes),
        &inputs.distance,
        request,
        progress,
    )?;
    Ok((by_class.overall, Some(by_class.classes)))
}

/// [`evaluate`] on the one estimate of `inputs`.
pub fn evaluate_single(
    inputs: &Inputs,
    request: &Request,
    progress: &(dyn Fn(switchyard::trajectory_metric::Progress) + Sync),
) -> Result<Evaluation> {
    let estimates = [&inputs.estimate.set];
    let mut results = evaluate(
        &inputs.truth.set,
        &estimates,
        &inputs.distance,
        request,
        progress,
    )?;
    Ok(results.pop().expect("one evaluation per estimate"))
}
