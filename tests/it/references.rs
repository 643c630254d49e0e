//! Checks against values computed outside the project by general-purpose libraries:
//! `tests/data/reference/*.json`, written by the scripts in `tests/reference/` (see the README
//! there). CI regenerates them and compares; these tests read the committed files, so
//! `cargo test` needs no Python.
//!
//! - Per-step GOSPA from its definition (Rahmathullah, García-Fernández, Svensson, FUSION 2017)
//!   with scipy.optimize.linear_sum_assignment.
//! - Trajectory GOSPA (García-Fernández, Rahmathullah, Svensson, IEEE TSP 2020): the full,
//!   unreduced LP solved by scipy.optimize.linprog (HiGHS), and the integral optimum by
//!   scipy.optimize.milp.

use approx::assert_relative_eq;
use serde::Deserialize;
use switchyard::distance::Distance;
use switchyard::per_step::{gospa_between, GospaParams};
use switchyard::trajectory::{Step, Trajectory, TrajectorySet};
use switchyard::trajectory_metric::{score, score_with, Engine, SolveOptions, TrajectoryParams};

#[derive(Deserialize)]
struct PerStepFile {
    cases: Vec<PerStepCase>,
}

#[derive(Deserialize)]
struct PerStepCase {
    cutoff: f64,
    order: f64,
    alpha: f64,
    truth: Vec<Vec<f64>>,
    estimate: Vec<Vec<f64>>,
    power: f64,
    localization: Option<f64>,
    missed: Option<f64>,
    #[serde(rename = "false")]
    false_: Option<f64>,
    missed_count: Option<usize>,
    false_count: Option<usize>,
}

pub(crate) fn read<T: for<'de> Deserialize<'de>>(name: &str) -> T {
    let path = format!("{}/tests/data/reference/{name}", env!("CARGO_MANIFEST_DIR"));
    serde_json::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap()
}

#[test]
fn per_step_gospa_matches_scipy_assignment() {
    let file: PerStepFile = read("per_step_cases.json");
    assert!(file.cases.len() >= 300);
    for (n, case) in file.cases.iter().enumerate() {
        let params = GospaParams::new(case.cutoff, case.order, case.alpha).unwrap();
        let x: Vec<&[f64]> = case.truth.iter().map(Vec::as_slice).collect();
        let y: Vec<&[f64]> = case.estimate.iter().map(Vec::as_slice).collect();
        let s = gospa_between(&x, &y, &params, &Distance::default());
        let tolerance = 1e-9 * case.power.abs().max(1e-9);
        assert!(
            (s.power - case.power).abs() <= tolerance,
            "case {n}: {} vs scipy {}",
            s.power,
            case.power
        );
        if case.alpha == 2.0 {
            // The parts are unique here: the random cases have no ties.
            assert_relative_eq!(
                s.localization.unwrap(),
                case.localization.unwrap(),
                epsilon = 1e-12,
                max_relative = 1e-9
            );
            assert_relative_eq!(
                s.missed.unwrap(),
                case.missed.unwrap(),
                epsilon = 1e-12,
                max_relative = 1e-9
            );
            assert_relative_eq!(
                s.false_.unwrap(),
                case.false_.unwrap(),
                epsilon = 1e-12,
                max_relative = 1e-9
            );
            assert_eq!(
                (Some(s.missed_count), Some(s.false_count)),
                (case.missed_count, case.false_count),
                "case {n}"
            );
        } else {
            assert!(s.localization.is_none());
        }
    }
}

#[derive(Deserialize)]
pub(crate) struct TrajectoryFile {
    pub(crate) cases: Vec<TrajectoryCase>,
}

/// One scene of tests/data/reference/trajectory_cases.json with its scipy values.
#[derive(Deserialize)]
pub(crate) struct TrajectoryCase {
    pub(crate) cutoff: f64,
    pub(crate) order: f64,
    pub(crate) switch_penalty: f64,
    pub(crate) truth: std::collections::BTreeMap<String, Vec<(Step, Vec<f64>)>>,
    pub(crate) estimate: std::collections::BTreeMap<String, Vec<(Step, Vec<f64>)>>,
    pub(crate) lp_total: f64,
    pub(crate) exact_total: f64,
    pub(crate) steps: usize,
}

pub(crate) fn to_set(
    objects: &std::collections::BTreeMap<String, Vec<(Step, Vec<f64>)>>,
    dim: usize,
) -> TrajectorySet {
    TrajectorySet::new(
        dim,
        objects
            .iter()
            .map(|(id, points)| Trajectory::new(id.clone(), dim, points.clone()).unwrap())
            .collect(),
    )
    .unwrap()
}

pub(crate) fn dimension(case: &TrajectoryCase) -> usize {
    case.truth
        .values()
        .chain(case.estimate.values())
        .flat_map(|points| points.iter().map(|(_, s)| s.len()))
        .next()
        .unwrap_or(1)
}

#[test]
fn trajectory_lp_matches_scipy_highs_on_the_full_model() {
    let file: TrajectoryFile = read("trajectory_cases.json");
    assert!(file.cases.len() >= 50);
    let mut fractional = 0;
    for (n, case) in file.cases.iter().enumerate() {
        let dim = dimension(case);
        let params = TrajectoryParams::new(case.cutoff, case.order, case.switch_penalty).unwrap();
        let (x, y) = (to_set(&case.truth, dim), to_set(&case.estimate, dim));
        let s = score(&x, &y, &params, &Distance::default()).unwrap();
        if Engine::Highs.available() {
            // Built with `--features highs` (as CI does): both engines give the same value.
            let options = SolveOptions {
                engine: Engine::Microlp,
                ..SolveOptions::default()
            };
            let m = score_with(&x, &y, &params, &Distance::default(), &options).unwrap();
            assert!(
                (m.total - s.total).abs() <= 1e-7 * s.total.max(1.0),
                "case {n}: HiGHS {} vs microlp {}",
                s.total,
                m.total
            );
        }
        assert_eq!(s.steps, case.steps, "case {n}");
        assert!(
            (s.total - case.lp_total).abs() <= 1e-6 * case.lp_total.max(1.0),
            "case {n}: {} vs HiGHS {}",
            s.total,
            case.lp_total
        );
        // The LP relaxation is a lower bound of the integral optimum, equal when integral.
        assert!(
            s.total <= case.exact_total + 1e-6 * case.exact_total.max(1.0),
            "case {n}"
        );
        if s.integral {
            assert!(
                (s.total - case.exact_total).abs() <= 1e-6 * case.exact_total.max(1.0),
                "case {n}: integral LP {} vs exact {}",
                s.total,
                case.exact_total
            );
        } else {
            fractional += 1;
        }
    }
    eprintln!(
        "{fractional} of {} reference scenes have a fractional LP optimum",
        file.cases.len()
    );
}

#[test]
fn switch_events_account_for_fractional_solutions() {
    // On the reference scenes whose LP optimum is fractional (found by the scripts' seed
    // search), the events must still add up: costs to the switching part, moved weight to the
    // total weight change.
    let file: TrajectoryFile = read("trajectory_cases.json");
    let mut fractional = 0;
    for case in &file.cases {
        let dim = dimension(case);
        let (x, y) = (to_set(&case.truth, dim), to_set(&case.estimate, dim));
        let params = TrajectoryParams::new(case.cutoff, case.order, case.switch_penalty).unwrap();
        let s = score(&x, &y, &params, &Distance::default()).unwrap();
        if s.integral {
            continue;
        }
        fractional += 1;
        let events =
            switchyard::assignment::switches::switch_events(&s.assignment, &x, &y, &params);
        let cost: f64 = events.iter().map(|e| e.cost).sum();
        assert_relative_eq!(cost, s.parts.switching, epsilon = 1e-9, max_relative = 1e-9);
        let moved: f64 = events
            .iter()
            .map(|e| if e.from.is_some() && e.to.is_some() { 2.0 } else { 1.0 } * e.weight)
            .sum();
        assert_relative_eq!(
            moved,
            2.0 * s.parts.switch_count,
            epsilon = 1e-9,
            max_relative = 1e-9
        );
    }
    assert!(
        fractional >= 3,
        "expected fractional reference scenes, found {fractional}"
    );
}
