//! The compiled half of the Python package `switchyard`: a thin layer that reads the inputs
//! with the library's own CSV reader, scores them with the library, and hands back the same
//! JSON document the command line writes (built from the same serde structs).

use std::panic::{catch_unwind, AssertUnwindSafe};

use pyo3::create_exception;
use pyo3::exceptions::{PyException, PyMemoryError, PyValueError};
use pyo3::prelude::*;

use switchyard::distance::Distance;
use switchyard::input::{read_csv_path, CsvLayout, TrajectoryFile};
use switchyard::per_step::{occupied_steps, GospaParams};
use switchyard::report::{score::ScoreDocument, steps, InputInfo};
use switchyard::switches::{jump_events, switch_events};
use switchyard::trajectory_metric::{
    score_with, Engine, ExactBudget, SolveOptions, TrajectoryParams,
};

create_exception!(
    _switchyard,
    InternalError,
    PyException,
    "A failure inside switchyard that is not the caller's input: please report it."
);

/// Reads a truth and an estimate CSV file (default columns, Euclidean distance) and checks
/// that they can be compared at this cut-off.
fn read_inputs(
    truth: &str,
    estimate: &str,
    cutoff: f64,
) -> switchyard::Result<(TrajectoryFile, TrajectoryFile, Distance)> {
    let distance = Distance::default();
    distance.check_cutoff(cutoff)?;
    let layout = CsvLayout {
        distance: Some(distance.clone()),
        ..CsvLayout::default()
    };
    let truth = read_csv_path(truth, &layout)?;
    let estimate = read_csv_path(estimate, &layout)?;
    truth.check_comparable(&estimate)?;
    distance.validate(truth.set.dim(), cutoff)?;
    Ok((truth, estimate, distance))
}

/// Per-step GOSPA of two CSV files; returns the steps document as JSON text.
fn steps_document(
    truth: &str,
    estimate: &str,
    cutoff: f64,
    order: f64,
    alpha: f64,
) -> switchyard::Result<String> {
    let params = GospaParams::new(cutoff, order, alpha)?;
    let (truth, estimate, distance) = read_inputs(truth, estimate, cutoff)?;
    let series = occupied_steps(&truth.set, &estimate.set, &params, &distance)?;
    let info = InputInfo::new(&truth, &estimate, &distance);
    let mut json = Vec::new();
    steps::write_json(&mut json, &series, &params, &info).expect("writing to memory succeeds");
    Ok(String::from_utf8(json).expect("serde_json writes UTF-8"))
}

/// How to solve: the engine by its output name, the exact (integral) metric without a budget
/// or the LP only, and the memory budget in bytes (`None`: the library's default).
fn solve_options(
    engine: &str,
    exact: bool,
    memory_budget: Option<u64>,
) -> switchyard::Result<SolveOptions> {
    let engines = [Engine::Lagrangian, Engine::Microlp, Engine::Highs];
    let Some(engine) = engines.into_iter().find(|known| known.name() == engine) else {
        return Err(switchyard::Error::Parameter(format!(
            "unknown engine {engine:?}: give lagrangian, microlp or highs"
        )));
    };
    let defaults = SolveOptions::default();
    Ok(SolveOptions {
        engine,
        exact: exact.then_some(ExactBudget::Unlimited),
        memory_budget: memory_budget.unwrap_or(defaults.memory_budget),
        ..defaults
    })
}

/// Scores two CSV files; returns the score document as JSON text.
#[allow(clippy::too_many_arguments)]
fn score_document(
    truth: &str,
    estimate: &str,
    cutoff: f64,
    order: f64,
    switch_penalty: f64,
    engine: &str,
    exact: bool,
    memory_budget: Option<u64>,
) -> switchyard::Result<String> {
    let options = solve_options(engine, exact, memory_budget)?;
    let params = TrajectoryParams::new(cutoff, order, switch_penalty)?;
    let (truth, estimate, distance) = read_inputs(truth, estimate, cutoff)?;
    let result = score_with(&truth.set, &estimate.set, &params, &distance, &options)?;
    let (t, e) = (&truth.set, &estimate.set);
    let switches = switch_events(&result.assignment, t, e, &result.params);
    let jumps = jump_events(&result.assignment, t, e, &result.params);
    let info = InputInfo::new(&truth, &estimate, &distance);
    let document = ScoreDocument::new(&result, &info, options.engine.name(), &switches, &jumps);
    Ok(serde_json::to_string(&document).expect("a score document serialises"))
}

/// Scores the CSV files `truth` and `estimate`; returns the score document as JSON text.
/// Bad input raises ValueError with the command line's message; a panic raises InternalError.
#[pyfunction]
#[pyo3(signature = (truth, estimate, cutoff, order, switch_penalty, engine, exact, memory_budget))]
#[allow(clippy::too_many_arguments)]
fn score_paths(
    py: Python<'_>,
    truth: &str,
    estimate: &str,
    cutoff: f64,
    order: f64,
    switch_penalty: f64,
    engine: &str,
    exact: bool,
    memory_budget: Option<u64>,
) -> PyResult<String> {
    run_released(py, || {
        score_document(
            truth,
            estimate,
            cutoff,
            order,
            switch_penalty,
            engine,
            exact,
            memory_budget,
        )
    })
}

/// Per-step GOSPA (with `alpha`) of the CSV files `truth` and `estimate`; returns the steps
/// document as JSON text. Errors as [`score_paths`].
#[pyfunction]
#[pyo3(signature = (truth, estimate, cutoff, order, alpha))]
fn steps_paths(
    py: Python<'_>,
    truth: &str,
    estimate: &str,
    cutoff: f64,
    order: f64,
    alpha: f64,
) -> PyResult<String> {
    run_released(py, || steps_document(truth, estimate, cutoff, order, alpha))
}

/// Runs `work` without the GIL, turning its error into a Python exception and a panic into
/// InternalError, so the interpreter never goes down with it.
fn run_released<F>(py: Python<'_>, work: F) -> PyResult<String>
where
    F: FnOnce() -> switchyard::Result<String> + Send,
{
    match py.detach(|| catch_unwind(AssertUnwindSafe(work))) {
        Ok(Ok(json)) => Ok(json),
        Ok(Err(error)) => Err(to_python_error(&error)),
        Err(_) => Err(InternalError::new_err("switchyard panicked while scoring")),
    }
}

/// The Python exception for a library error: the caller's input or parameters are a
/// ValueError, a memory budget too small a MemoryError, a solver failure an InternalError;
/// the message is the command line's.
fn to_python_error(error: &switchyard::Error) -> PyErr {
    let message = error.to_string();
    match error {
        switchyard::Error::Solver(_) => InternalError::new_err(message),
        switchyard::Error::Budget(_) => PyMemoryError::new_err(message),
        _ => PyValueError::new_err(message),
    }
}

/// The compiled module `switchyard._switchyard`.
#[pymodule]
fn _switchyard(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(score_paths, m)?)?;
    m.add_function(wrap_pyfunction!(steps_paths, m)?)?;
    m.add("InternalError", m.py().get_type::<InternalError>())?;
    Ok(())
}
