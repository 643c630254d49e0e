//! The evaluation entry point (`switchyard::evaluate`): several estimates in one call, each
//! given what the request asks for and nothing else.
//!
//! Expected values come from the definitions: per-step GOSPA (Rahmathullah, García-Fernández,
//! Svensson, FUSION 2017; with alpha = 2 a missed object costs c^p / 2 at its step) and
//! trajectory GOSPA (García-Fernández, Rahmathullah, Svensson, IEEE TSP 2020; a full switch
//! costs gamma^p, a half switch gamma^p / 2); each scene's arithmetic is in its comment.

use approx::assert_relative_eq;
use switchyard::distance::Distance;
use switchyard::evaluate::{evaluate, Request};
use switchyard::per_step::GospaParams;
use switchyard::trajectory::TrajectorySet;
use switchyard::trajectory_metric::{SolveOptions, TrajectoryParams};
use switchyard::Error;

use crate::support::{line, lines};

/// Truth a at 0 on steps 1-10; `broken`: track p covers 1-4, q covers 7-10; `whole`: track r
/// covers 1-10 exactly.
fn scene() -> (TrajectorySet, TrajectorySet, TrajectorySet) {
    let truth = lines(vec![line("a", 1, &[0.0; 10])]);
    let broken = lines(vec![line("p", 1, &[0.0; 4]), line("q", 7, &[0.0; 4])]);
    let whole = lines(vec![line("r", 1, &[0.0; 10])]);
    (truth, broken, whole)
}

#[test]
fn each_estimate_gets_everything_asked_for() {
    // c = 2, p = 1, gamma = 1. broken: steps 5-6 missed, c/2 each = 2, and one full switch
    // p -> q when q takes over at step 7, gamma = 1: d = 3. whole: d = 0, nothing to report.
    let (truth, broken, whole) = scene();
    let params = TrajectoryParams::new(2.0, 1.0, 1.0).unwrap();
    let request = Request::everything(params, SolveOptions::default()).unwrap();
    let results = evaluate(
        &truth,
        &[&broken, &whole],
        &Distance::default(),
        &request,
        &|_| {},
    )
    .unwrap();
    assert_eq!(results.len(), 2);

    let first = &results[0];
    let score = first.score.as_ref().unwrap();
    assert_relative_eq!(score.total, 3.0, max_relative = 1e-9);
    assert_relative_eq!(score.parts.missed, 2.0, max_relative = 1e-9);
    assert_relative_eq!(score.parts.switching, 1.0, max_relative = 1e-9);
    let switches = first.switches.as_ref().unwrap();
    assert_eq!(switches.len(), 1);
    assert_eq!(
        (
            switches[0].time,
            switches[0].from.as_deref(),
            switches[0].to.as_deref()
        ),
        (7, Some("p"), Some("q"))
    );
    assert_relative_eq!(switches[0].cost, 1.0, max_relative = 1e-9);
    // Seen from the tracks: p leaves a and q arrives, two half jumps of gamma / 2 each, which
    // add up to the same switching part.
    let jumps = first.jumps.as_ref().unwrap();
    assert_eq!(jumps.len(), 2);
    let jump_cost: f64 = jumps.iter().map(|jump| jump.cost).sum();
    assert_relative_eq!(jump_cost, 1.0, max_relative = 1e-9);
    // Per-step GOSPA (alpha = 2): c/2 = 1 at the two missed steps, 0 elsewhere.
    let steps: Vec<(i64, f64)> = first
        .steps
        .as_ref()
        .unwrap()
        .steps()
        .map(|step| (step.time, step.gospa))
        .collect();
    assert_eq!(steps.len(), 10);
    for (time, gospa) in steps {
        let expected = if time == 5 || time == 6 { 1.0 } else { 0.0 };
        assert!((gospa - expected).abs() < 1e-12, "step {time}: {gospa}");
    }
    let audit = first.audit.as_ref().unwrap();
    assert_eq!(
        (audit.truths[0].covered_steps, audit.truths[0].missed_steps),
        (8, 2)
    );
    assert_relative_eq!(audit.truths[0].switches, 1.0);

    let second = &results[1];
    assert!(second.score.as_ref().unwrap().total.abs() < 1e-12);
    assert_eq!(second.switches.as_ref().unwrap().len(), 0);
    assert_eq!(second.jumps.as_ref().unwrap().len(), 0);
    assert_eq!(second.audit.as_ref().unwrap().truths[0].missed_steps, 0);
}

#[test]
fn only_what_is_asked_for_comes_back() {
    let (truth, broken, _) = scene();
    let distance = Distance::default();
    // Per-step GOSPA alone: no LP solved, nothing read from it. c = 2, p = 1, alpha = 2: the
    // two missed steps cost c/2 = 1 each, 2 over the window.
    let steps = Request::steps(GospaParams::new(2.0, 1.0, 2.0).unwrap());
    let result = evaluate(&truth, &[&broken], &distance, &steps, &|_| {})
        .unwrap()
        .remove(0);
    assert!(result.score.is_none() && result.switches.is_none() && result.audit.is_none());
    let total: f64 = result.steps.unwrap().steps().map(|step| step.gospa).sum();
    assert_relative_eq!(total, 2.0, max_relative = 1e-12);
    // The audit alone: it counts the one full switch (1), though the switches are not returned.
    let params = TrajectoryParams::new(2.0, 1.0, 1.0).unwrap();
    let audit = Request {
        audit: true,
        ..Request::trajectory(params, SolveOptions::default())
    };
    let result = evaluate(&truth, &[&broken], &distance, &audit, &|_| {})
        .unwrap()
        .remove(0);
    assert!(result.switches.is_none() && result.jumps.is_none() && result.steps.is_none());
    assert_relative_eq!(result.audit.unwrap().truths[0].switches, 1.0);
    // Switches without trajectory parameters: refused, as a parameter error.
    let orphan = Request {
        switches: true,
        ..Request::default()
    };
    let error = evaluate(&truth, &[&broken], &distance, &orphan, &|_| {}).unwrap_err();
    assert!(matches!(error, Error::Parameter(_)), "{error}");
}
