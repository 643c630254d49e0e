//! The compiled half of the Python package `switchyard`: a thin layer that builds the two
//! trajectory sets (from CSV files with the library's own reader, or from columns the Python
//! layer has already split into plain arrays), runs one of the commands built on the library,
//! and hands back the same JSON document the command line writes (built from the same serde
//! structs).

mod aggregate;

use std::collections::HashMap;
use std::panic::{catch_unwind, AssertUnwindSafe};
use std::time::Duration;

use pyo3::create_exception;
use pyo3::exceptions::{PyException, PyMemoryError, PyValueError};
use pyo3::prelude::*;
use pyo3::types::{PyBytes, PyString};

use switchyard::assignment::switches::{switch_kinds, SwitchKinds};
use switchyard::classes::{evaluate_by_class, PointClasses};
use switchyard::distance::{BoxLayout, Distance};
use switchyard::evaluate::{evaluate, Evaluation, Request};
use switchyard::input::{read_classed_csv_path, read_csv_path, CsvLayout, TrajectoryFile};
use switchyard::ospa2::Ospa2Params;
use switchyard::per_step::GospaParams;
use switchyard::report::audit::AuditDocument;
use switchyard::report::classes::{class_info, write_json_with_classes};
use switchyard::report::ospa2::Ospa2Document;
use switchyard::report::score::ScoreDocument;
use switchyard::report::steps::Ospa2Steps;
use switchyard::report::switches::SwitchesDocument;
use switchyard::report::{steps, Exactness, InputInfo, TimedEvents};
use switchyard::trajectory::{Step, Trajectory, TrajectorySet};
use switchyard::trajectory_metric::{Engine, ExactBudget, SolveOptions, TrajectoryParams};
use switchyard::Error;

create_exception!(
    _switchyard,
    InternalError,
    PyException,
    "A failure inside switchyard that is not the caller's input: please report it."
);

/// The largest step magnitude accepted from a decimal time: beyond it a double no longer holds
/// every integer (the CSV reader's limit too).
const MAX_STEP: f64 = 9_007_199_254_740_992.0; // 2^53

/// The times of a table: integer steps, or numbers (decimal timestamps, or integers held as
/// floating point) to turn into steps.
enum Times {
    Steps(Vec<i64>),
    Numbers(Vec<f64>),
}

/// A table the Python layer has split into plain columns: one row per object per step.
struct Table {
    /// What messages call it (`truth`, `estimate`, or the name the caller gave).
    source: String,
    time_column: String,
    id_column: String,
    state_columns: Vec<String>,
    ids: Vec<String>,
    times: Times,
    /// Row-major: row r's state is `states[r * dim..(r + 1) * dim]`.
    states: Vec<f64>,
    /// With a class column: its name and each row's class as text.
    classes: Option<(String, Vec<String>)>,
}

/// One input: a CSV file, or a table.
enum Input {
    Path(String),
    Table(Table),
}

/// Reads native-endian 8-byte values.
fn words<T>(bytes: &[u8], from: fn([u8; 8]) -> T) -> Vec<T> {
    bytes
        .chunks_exact(8)
        .map(|chunk| from(chunk.try_into().expect("chunks of 8 bytes")))
        .collect()
}

/// An input as the Python layer passes it: a path (str), or the tuple `(source, time column,
/// id column, state columns, ids, times as bytes, times are integers, states as bytes, classes)`
/// where classes is None or `(class column, each row's class as text)`.
fn extract_input(value: &Bound<'_, PyAny>) -> PyResult<Input> {
    if value.is_instance_of::<PyString>() {
        return Ok(Input::Path(value.extract()?));
    }
    type Parts<'py> = (
        String,
        String,
        String,
        Vec<String>,
        Vec<String>,
        Bound<'py, PyBytes>,
        bool,
        Bound<'py, PyBytes>,
        Option<(String, Vec<String>)>,
    );
    let (source, time_column, id_column, state_columns, ids, times, integer_times, states, classes): Parts =
        value.extract()?;
    let rows = ids.len();
    let dim = state_columns.len();
    let (times, states) = (times.as_bytes(), states.as_bytes());
    let class_rows = classes.as_ref().map_or(rows, |(_, labels)| labels.len());
    if times.len() != rows * 8 || states.len() != rows * dim * 8 || class_rows != rows {
        return Err(InternalError::new_err(format!(
            "{source}: columns of different lengths reached the compiled module"
        )));
    }
    let times = if integer_times {
        Times::Steps(words(times, i64::from_ne_bytes))
    } else {
        Times::Numbers(words(times, f64::from_ne_bytes))
    };
    Ok(Input::Table(Table {
        source,
        time_column,
        id_column,
        state_columns,
        ids,
        times,
        states: words(states, f64::from_ne_bytes),
        classes,
    }))
}

/// Everything a command takes besides its inputs: the metric, how to solve it, the distance,
/// and how CSV files are read. Read from a dict whose keys are the field names.
#[derive(FromPyObject)]
#[pyo3(from_item_all)]
struct Options {
    cutoff: f64,
    order: f64,
    switch_penalty: Option<f64>,
    alpha: f64,
    missed_share: f64,
    engine: String,
    exact: bool,
    exact_seconds: Option<f64>,
    exact_nodes: Option<u64>,
    memory_budget: Option<u64>,
    top: Option<usize>,
    distance: String,
    weights: Option<Vec<f64>>,
    box_layout: Option<String>,
    time_column: String,
    id_column: String,
    state_columns: Option<Vec<String>>,
    time_step: Option<f64>,
    delimiter: String,
    ospa2: bool,
    ospa2_window: Option<usize>,
    class_column: Option<String>,
}

/// An error about one cell of a table: its source, row (counting from 0) and column.
fn cell_error(source: &str, row: usize, column: &str, message: impl std::fmt::Display) -> Error {
    Error::Mismatch(format!("{source}: row {row}, column {column:?}: {message}"))
}

/// The step of a time given as a number: `round(time / time_step)`, or the time itself when it
/// is an integer and no time step is given (as the CSV reader does).
fn number_step(time: f64, time_step: Option<f64>) -> Result<Step, String> {
    if !time.is_finite() {
        return Err(format!(
            "expected a finite time, found {time} (NaN and infinite values are not accepted)"
        ));
    }
    let step = match time_step {
        Some(dt) => (time / dt).round(),
        None if time.fract() != 0.0 => {
            return Err(format!(
                "the time {time} is not an integer step; give a time step (time_step=) for \
                 decimal timestamps"
            ))
        }
        None => time,
    };
    if step.abs() > MAX_STEP {
        return Err(format!(
            "the time {time} gives step {step:e}, beyond the supported range of +-2^53"
        ));
    }
    Ok(step as Step)
}

/// Builds the trajectory set of a table, trajectories in order of first appearance (as the
/// CSV reader orders them), checking each row as the reader checks each line: an id, a time
/// that is a step, finite state values the distance can read, one row per object and step.
fn table_file(
    table: Table,
    time_step: Option<f64>,
    distance: &Distance,
) -> switchyard::Result<(TrajectoryFile, Option<PointClasses>)> {
    if let Some(dt) = time_step {
        if !(dt.is_finite() && dt > 0.0) {
            return Err(Error::Parameter(format!(
                "the time step must be a positive number, got {dt}"
            )));
        }
    }
    let Table {
        source,
        time_column,
        id_column,
        state_columns,
        ids,
        times,
        states,
        classes,
    } = table;
    let dim = state_columns.len();
    if let Some((name, _)) = &classes {
        if name == &time_column || name == &id_column || state_columns.contains(name) {
            return Err(Error::Parameter(format!(
                "the class column {name:?} is also the time, the id or a state column"
            )));
        }
    }
    // With classes: the class names in order of first appearance, and each row's class.
    let mut class_names: Vec<String> = Vec::new();
    let mut class_index: HashMap<&str, u32> = HashMap::new();
    let mut row_classes: Vec<u32> = Vec::with_capacity(classes.as_ref().map_or(0, |c| c.1.len()));
    let mut index: HashMap<&str, usize> = HashMap::new();
    // Per object: its id, then (step, row) of each point.
    let mut objects: Vec<(&str, Vec<(Step, usize)>)> = Vec::new();
    for (row, id) in ids.iter().enumerate() {
        if id.is_empty() {
            return Err(cell_error(
                &source,
                row,
                &id_column,
                "the id is empty or missing",
            ));
        }
        let step = match &times {
            Times::Steps(steps) if time_step.is_none() => {
                let step = steps[row];
                if step.unsigned_abs() > MAX_STEP as u64 {
                    Err(format!(
                        "the time {step} is beyond the supported range of +-2^53"
                    ))
                } else {
                    Ok(step)
                }
            }
            Times::Steps(steps) => number_step(steps[row] as f64, time_step),
            Times::Numbers(numbers) => number_step(numbers[row], time_step),
        }
        .map_err(|message| cell_error(&source, row, &time_column, message))?;
        let state = &states[row * dim..(row + 1) * dim];
        if let Some(k) = state.iter().position(|v| !v.is_finite()) {
            let message = format!(
                "expected a finite number, found {} (NaN and infinite values are not accepted)",
                state[k]
            );
            return Err(cell_error(&source, row, &state_columns[k], message));
        }
        if let Err((k, message)) = distance.check_state(state) {
            return Err(cell_error(&source, row, &state_columns[k], message));
        }
        if let Some((name, labels)) = &classes {
            let label = labels[row].trim();
            if label.is_empty() {
                return Err(cell_error(
                    &source,
                    row,
                    name,
                    "the class is empty or missing",
                ));
            }
            let class = *class_index.entry(label).or_insert_with(|| {
                class_names.push(label.to_string());
                (class_names.len() - 1) as u32
            });
            row_classes.push(class);
        }
        let object = *index.entry(id.as_str()).or_insert_with(|| {
            objects.push((id.as_str(), Vec::new()));
            objects.len() - 1
        });
        objects[object].1.push((step, row));
    }
    let mut trajectories = Vec::with_capacity(objects.len());
    let mut point_classes = Vec::with_capacity(objects.len());
    for (id, mut points) in objects {
        points.sort_unstable();
        if let Some(pair) = points.windows(2).find(|pair| pair[0].0 == pair[1].0) {
            let ((step, first), (_, second)) = (pair[0], pair[1]);
            return Err(cell_error(
                &source,
                second,
                &time_column,
                format!("id {id:?} has a second row at step {step} (the first is row {first})"),
            ));
        }
        if classes.is_some() {
            point_classes.push(points.iter().map(|&(_, row)| row_classes[row]).collect());
        }
        let points = points
            .into_iter()
            .map(|(step, row)| (step, states[row * dim..(row + 1) * dim].to_vec()))
            .collect();
        trajectories.push(Trajectory::new(id, dim, points)?);
    }
    let classes = match classes {
        Some(_) => Some(PointClasses::new(class_names, point_classes)?),
        None => None,
    };
    let file = TrajectoryFile {
        source,
        state_columns,
        set: TrajectorySet::new(dim, trajectories)?,
    };
    Ok((file, classes))
}

/// The base distance the options name, refusing options that do not go together.
fn build_distance(options: &Options) -> switchyard::Result<Distance> {
    let name = options.distance.as_str();
    let weights = options.weights.clone();
    if weights.is_some() && matches!(name, "iou" | "geodesic") {
        return Err(Error::Parameter(format!(
            "weights apply to the euclidean, manhattan and chebyshev distances, not to {name}"
        )));
    }
    if options.box_layout.is_some() && name != "iou" {
        return Err(Error::Parameter(format!(
            "box_layout applies to the iou distance, not to {name}"
        )));
    }
    let layout = match options.box_layout.as_deref() {
        None | Some("corner-size") => BoxLayout::CornerSize,
        Some("corners") => BoxLayout::Corners,
        Some("centre-size" | "center-size") => BoxLayout::CentreSize,
        Some(other) => {
            return Err(Error::Parameter(format!(
                "unknown box layout {other:?}: give corner-size, corners or centre-size"
            )))
        }
    };
    Ok(match name {
        "euclidean" => Distance::Euclidean { weights },
        "manhattan" => Distance::Manhattan { weights },
        "chebyshev" => Distance::Chebyshev { weights },
        "iou" => Distance::Iou(layout),
        "geodesic" => Distance::Geodesic,
        other => {
            return Err(Error::Parameter(format!(
                "unknown distance {other:?}: give euclidean, manhattan, chebyshev, iou or geodesic"
            )))
        }
    })
}

/// Reads or builds both inputs and checks that they can be compared with the distance at this
/// cut-off.
/// With `class_column`, also the class of every point of each (as the command line's
/// `--class-column`).
#[allow(clippy::type_complexity)]
fn read_inputs(
    truth: Input,
    estimate: Input,
    options: &Options,
) -> switchyard::Result<(
    TrajectoryFile,
    TrajectoryFile,
    Distance,
    Option<(PointClasses, PointClasses)>,
)> {
    let distance = build_distance(options)?;
    distance.check_cutoff(options.cutoff)?;
    if let Some(columns) = &options.state_columns {
        distance.check_dimension(columns.len())?;
    }
    let delimiter = match options.delimiter.as_str() {
        "tab" | "\t" => b'\t',
        text if text.len() == 1 && text.is_ascii() => text.as_bytes()[0],
        text => {
            return Err(Error::Parameter(format!(
                "the delimiter must be one ASCII character or `tab`, got {text:?}"
            )))
        }
    };
    let layout = CsvLayout {
        time_column: options.time_column.clone(),
        id_column: options.id_column.clone(),
        state_columns: options.state_columns.clone(),
        time_step: options.time_step,
        delimiter,
        distance: Some(distance.clone()),
    };
    let class_column = options.class_column.as_deref();
    let read = |input: Input| match (input, class_column) {
        (Input::Path(path), None) => Ok((read_csv_path(&path, &layout)?, None)),
        (Input::Path(path), Some(column)) => {
            let classed = read_classed_csv_path(&path, &layout, column)?;
            Ok((classed.file, Some(classed.classes)))
        }
        (Input::Table(table), _) => table_file(table, options.time_step, &distance),
    };
    let (truth, truth_classes) = read(truth)?;
    let (estimate, estimate_classes) = read(estimate)?;
    truth.check_comparable(&estimate)?;
    distance.validate(truth.set.dim(), options.cutoff)?;
    let classes = match (truth_classes, estimate_classes) {
        (Some(t), Some(e)) => Some((t, e)),
        _ => None,
    };
    Ok((truth, estimate, distance, classes))
}

/// How to solve: the engine by its name (`auto` is the command line's default), the exact
/// metric with its budget or the LP only, and the memory budget in bytes.
fn solve_options(options: &Options) -> switchyard::Result<SolveOptions> {
    let engine = match options.engine.as_str() {
        "auto" => Engine::default(),
        name => [Engine::Lagrangian, Engine::Microlp, Engine::Highs]
            .into_iter()
            .find(|known| known.name() == name)
            .ok_or_else(|| {
                Error::Parameter(format!(
                    "unknown engine {name:?}: give auto, lagrangian, microlp or highs"
                ))
            })?,
    };
    let budget = match (options.exact_seconds, options.exact_nodes) {
        (Some(_), Some(_)) => {
            return Err(Error::Parameter(
                "give at most one of exact_seconds and exact_nodes".into(),
            ))
        }
        (Some(seconds), None) => {
            ExactBudget::Seconds(Duration::try_from_secs_f64(seconds).map_err(|_| {
                Error::Parameter(format!(
                    "exact_seconds must be a number >= 0 and below 10^19, got {seconds}"
                ))
            })?)
        }
        (None, Some(nodes)) => ExactBudget::Nodes(nodes),
        (None, None) => ExactBudget::Unlimited,
    };
    if !options.exact && budget != ExactBudget::Unlimited {
        return Err(Error::Parameter(
            "exact_seconds and exact_nodes apply only with exact=True".into(),
        ));
    }
    let defaults = SolveOptions::default();
    Ok(SolveOptions {
        engine,
        exact: options.exact.then_some(budget),
        memory_budget: options.memory_budget.unwrap_or(defaults.memory_budget),
        ..defaults
    })
}

/// OSPA(2) with the metric's cut-off and order when `ospa2` is asked for, and the width of its
/// sliding window (`steps` only; 1 unless given), refusing a window without `ospa2=True`, as the
/// command line does.
fn ospa2_options(options: &Options) -> switchyard::Result<(Option<Ospa2Params>, usize)> {
    let width = match options.ospa2_window {
        Some(_) if !options.ospa2 => {
            return Err(Error::Parameter(
                "ospa2_window applies only with ospa2=True".into(),
            ))
        }
        Some(width) if width == 0 || width > u32::MAX as usize => {
            return Err(Error::Parameter(format!(
                "ospa2_window must be a whole number of steps from 1 to 2^32 - 1, got {width}"
            )))
        }
        Some(width) => width,
        None => 1,
    };
    let params = if options.ospa2 {
        Some(Ospa2Params::new(options.cutoff, options.order)?)
    } else {
        None
    };
    Ok((params, width))
}

/// Runs a command; returns its JSON document and the notes the command line would print on
/// standard error. With `class_column`, as the command line's `--class-column`: the document of
/// all classes together with a `classes` object holding each class's document.
fn run_command(
    command: &str,
    truth: Input,
    estimate: Input,
    options: &Options,
) -> switchyard::Result<(String, Vec<String>)> {
    let (ospa2, width) = ospa2_options(options)?;
    let request = if command == "steps" {
        let params = GospaParams::new(options.cutoff, options.order, options.alpha)?
            .with_missed_share(options.missed_share)?;
        Request {
            ospa2,
            ospa2_window: ospa2.map(|_| width),
            ..Request::steps(params)
        }
    } else {
        if !matches!(command, "score" | "switches" | "audit") {
            return Err(Error::Parameter(format!("unknown command {command:?}")));
        }
        if ospa2.is_some() && command != "score" {
            return Err(Error::Parameter(format!(
                "ospa2 applies to score and steps, not to {command}"
            )));
        }
        let solve = solve_options(options)?;
        let params = TrajectoryParams::new(
            options.cutoff,
            options.order,
            options.switch_penalty.unwrap_or(options.cutoff),
        )?
        .with_missed_share(options.missed_share)?;
        // The command line's own evaluation: the LP once, the events and the audit read from it.
        Request {
            trajectory: Some(params),
            solve,
            switches: true,
            jumps: command != "audit",
            audit: command == "audit",
            ospa2,
            ..Request::default()
        }
    };
    if ospa2.is_some() && options.class_column.is_some() {
        return Err(Error::Parameter(
            "ospa2 does not go with class_column: OSPA(2) is normalised by the number of \
             trajectories, so its values do not add up over classes"
                .into(),
        ));
    }
    let (truth, estimate, distance, classes) = read_inputs(truth, estimate, options)?;
    let info = InputInfo::new(&truth, &estimate, &distance).with_time_step(options.time_step);
    let Some((truth_classes, estimate_classes)) = classes else {
        let evaluation = evaluate(&truth.set, &[&estimate.set], &distance, &request, &|_| {})?
            .pop()
            .expect("one estimate was evaluated");
        let kinds = evaluation
            .switches
            .as_deref()
            .map(|switches| switch_kinds(switches, &estimate.set));
        let names = (&truth.set, &estimate.set);
        let text = document(command, &request, &evaluation, &info, kinds, names, options)?;
        let notes = evaluation.score.map(|s| s.notes).unwrap_or_default();
        return Ok((text, notes));
    };
    let mut notes = Vec::new();
    for (file, classes, one, many) in [
        (&truth, &truth_classes, "truth carries", "truths carry"),
        (
            &estimate,
            &estimate_classes,
            "track carries",
            "tracks carry",
        ),
    ] {
        notes.extend(switchyard::report::classes::mixed_note(
            &file.source,
            classes.mixed(),
            one,
            many,
        ));
    }
    let by_class = evaluate_by_class(
        (&truth.set, &truth_classes),
        (&estimate.set, &estimate_classes),
        &distance,
        &request,
        &|_| {},
    )?;
    let mut documents = Vec::with_capacity(by_class.classes.len());
    let mut all_kinds = SwitchKinds::default();
    for class in &by_class.classes {
        let scene = &class.scene;
        let kinds = class
            .evaluation
            .switches
            .as_deref()
            .map(|switches| switch_kinds(switches, &scene.estimate));
        all_kinds = all_kinds + kinds.unwrap_or_default();
        let info = class_info(&info, scene);
        let names = (&scene.truth, &scene.estimate);
        let text = document(
            command,
            &request,
            &class.evaluation,
            &info,
            kinds,
            names,
            options,
        )?;
        documents.push((scene.class.clone(), text.into_bytes()));
    }
    let kinds = by_class.overall.switches.as_ref().map(|_| all_kinds);
    let names = (&truth.set, &estimate.set);
    let overall = document(
        command,
        &request,
        &by_class.overall,
        &info,
        kinds,
        names,
        options,
    )?;
    let mut text = Vec::new();
    write_json_with_classes(&mut text, overall.as_bytes(), &documents)
        .map_err(|error| Error::Solver(format!("the document with classes: {error}")))?;
    notes.extend(by_class.overall.score.map(|s| s.notes).unwrap_or_default());
    Ok((
        String::from_utf8(text).expect("serde_json writes UTF-8"),
        notes,
    ))
}

/// The JSON document of `command` on one evaluation (one class, or the whole scene): `kinds`
/// are the switches' kinds, `names` the truth and estimate sets that name the pairs of
/// OSPA(2).
fn document(
    command: &str,
    request: &Request,
    evaluation: &Evaluation,
    info: &InputInfo,
    kinds: Option<SwitchKinds>,
    names: (&TrajectorySet, &TrajectorySet),
    options: &Options,
) -> switchyard::Result<String> {
    let json = |document: Result<String, serde_json::Error>| {
        document.map_err(|error| Error::Solver(format!("a document did not serialise: {error}")))
    };
    if command == "steps" {
        let params = request.steps.as_ref().expect("the steps were asked for");
        let series = evaluation.steps.as_ref().expect("the steps were asked for");
        let sliding = Ospa2Steps::of(request, evaluation);
        let mut text = Vec::new();
        steps::write_json_with(&mut text, series, params, info, sliding.as_ref())
            .map_err(|error| Error::Solver(format!("the steps document: {error}")))?;
        return Ok(String::from_utf8(text).expect("serde_json writes UTF-8"));
    }
    let result = evaluation.score.as_ref().expect("the score was asked for");
    let switches = evaluation.switches.as_deref().unwrap_or_default();
    let jumps = evaluation.jumps.as_deref().unwrap_or_default();
    match command {
        "score" => {
            let engine = request.solve.engine.name();
            let mut document = ScoreDocument::new(result, info, engine, switches, jumps);
            if let (Some(value), Some(params)) = (&evaluation.ospa2, &request.ospa2) {
                let second = Ospa2Document::new(value, params, names.0, names.1);
                document = document.with_ospa2(second);
            }
            json(serde_json::to_string(&document))
        }
        "switches" => json(serde_json::to_string(&SwitchesDocument {
            params: &result.params,
            inputs: info,
            switching: result.parts.switching,
            switch_count: result.parts.switch_count,
            kinds: kinds.unwrap_or_default(),
            switches: TimedEvents::new(switches, options.time_step),
            jumps: TimedEvents::new(jumps, options.time_step),
            exactness: Exactness::new(result),
        })),
        _ => {
            let mut report = evaluation.audit.clone().expect("the audit was asked for");
            if let Some(top) = options.top {
                // As `audit --top N`: the N worst truths and the N costliest tracks.
                report.rank_tracks_by_cost();
                report.keep(top);
            }
            json(serde_json::to_string(&AuditDocument {
                params: &result.params,
                inputs: info,
                truths: &report.truths,
                estimates: &report.estimates,
                exactness: Exactness::new(result),
                by_cost: false,
                tracks_by_cost: options.top.is_some(),
            }))
        }
    }
}

/// Runs `command` (`score`, `switches`, `audit` or `steps`) on two inputs (each a CSV path or a
/// table tuple, see `extract_input`) with the options dict; returns the command line's JSON
/// document as text and the notes it would print. The work runs without the GIL. Bad input
/// raises ValueError with the command line's message (or the table's source, row and column);
/// a memory budget too small MemoryError; a solver failure or a panic InternalError.
#[pyfunction]
fn run(
    py: Python<'_>,
    command: &str,
    truth: &Bound<'_, PyAny>,
    estimate: &Bound<'_, PyAny>,
    options: Options,
) -> PyResult<(String, Vec<String>)> {
    let truth = extract_input(truth)?;
    let estimate = extract_input(estimate)?;
    released(py, &format!("running {command}"), || {
        run_command(command, truth, estimate, &options)
    })
}

/// Aggregates case scores computed elsewhere into the document of `switchyard compare
/// --format json` (see `aggregate::Scores` for the dict's keys); the bootstrap runs without
/// the GIL. Errors as [`run`].
#[pyfunction]
fn compare_scores(py: Python<'_>, scores: aggregate::Scores) -> PyResult<String> {
    released(py, "comparing", || aggregate::comparison_document(scores))
}

/// Runs `work` without the GIL, turning its error into a Python exception and a panic into
/// InternalError, so the interpreter never goes down with it.
fn released<T: Send>(
    py: Python<'_>,
    what: &str,
    work: impl FnOnce() -> switchyard::Result<T> + Send,
) -> PyResult<T> {
    match py.detach(|| catch_unwind(AssertUnwindSafe(work))) {
        Ok(Ok(output)) => Ok(output),
        Ok(Err(error)) => Err(to_python_error(&error)),
        Err(_) => Err(InternalError::new_err(format!(
            "switchyard panicked while {what}: please report it"
        ))),
    }
}

/// The Python exception for a library error: the caller's input or parameters are a
/// ValueError, a memory budget too small a MemoryError, a solver failure an InternalError;
/// the message is the command line's.
fn to_python_error(error: &Error) -> PyErr {
    let message = error.to_string();
    match error {
        Error::Solver(_) => InternalError::new_err(message),
        Error::Budget(_) => PyMemoryError::new_err(message),
        _ => PyValueError::new_err(message),
    }
}

/// The compiled module `switchyard._switchyard`.
#[pymodule]
fn _switchyard(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(run, m)?)?;
    m.add_function(wrap_pyfunction!(compare_scores, m)?)?;
    m.add("InternalError", m.py().get_type::<InternalError>())?;
    Ok(())
}
