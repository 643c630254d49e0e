//! Numerical trust of trajectory GOSPA: scenes far from the origin, costs spanning many orders
//! of magnitude, and exact ties. Each result must pass the library's consistency checks (the
//! score would be an error otherwise) and equal a value derived independently: from the
//! definition of GOSPA (Rahmathullah, García-Fernández, Svensson, FUSION 2017) and the fact
//! that trajectory GOSPA with no switch in the optimum equals the sum over the steps of
//! GOSPA^p (García-Fernández, Rahmathullah, Svensson, IEEE Trans. Signal Processing 68, 2020),
//! or from the spacing of IEEE 754 doubles.

use switchyard::distance::Distance;
use switchyard::per_step::{per_step, GospaParams};
use switchyard::synth::{generate_scene, ScenePreset};
use switchyard::trajectory::{Trajectory, TrajectorySet};
use switchyard::trajectory_metric::checks::{bounds, check_consistency};
use switchyard::trajectory_metric::{score, TrajectoryParams, TrajectoryScore};

use crate::support::{line, lines};

/// The points of `set` before step 60 (a short scene keeps the debug build quick), every
/// state mapped by `f`.
fn map_states(set: &TrajectorySet, f: impl Fn(f64) -> f64) -> TrajectorySet {
    let trajectories = set
        .trajectories()
        .iter()
        .filter_map(|t| {
            let points: Vec<_> = t
                .points()
                .filter(|&(step, _)| step < 60)
                .map(|(step, state)| (step, state.iter().map(|&v| f(v)).collect()))
                .collect();
            (!points.is_empty()).then(|| Trajectory::new(t.id(), set.dim(), points).unwrap())
        })
        .collect();
    TrajectorySet::new(set.dim(), trajectories).unwrap()
}

fn solve(
    truth: &TrajectorySet,
    estimate: &TrajectorySet,
    c: f64,
    p: f64,
    g: f64,
) -> TrajectoryScore {
    let params = TrajectoryParams::new(c, p, g).unwrap();
    let result = score(truth, estimate, &params, &Distance::default()).unwrap();
    // The checks `score` ran, once more from the outside.
    let range = bounds(truth, estimate, &params, &Distance::default()).unwrap();
    check_consistency(&result, &range).unwrap();
    result
}

#[test]
fn a_scene_moved_by_1e12_on_an_exact_grid_scores_the_same() {
    // Coordinates on a grid of 1/8 stay exact when 1e12 is added: doubles in [2^39, 2^40)
    // are spaced 2^-13 apart (IEEE 754 binary64), and 1/8 is a multiple of that. So every
    // difference, distance and score is unchanged.
    let (truth, estimate) = generate_scene(ScenePreset::Small, 3);
    let grid = |v: f64| (v * 8.0).round() / 8.0;
    let (truth, estimate) = (map_states(&truth, grid), map_states(&estimate, grid));
    let shift = |v: f64| v + 1e12;
    let (far_truth, far_estimate) = (map_states(&truth, shift), map_states(&estimate, shift));
    for (p, g) in [(1.0, 20.0), (2.0, 10.0)] {
        let near = solve(&truth, &estimate, 20.0, p, g);
        let far = solve(&far_truth, &far_estimate, 20.0, p, g);
        assert!(near.total > 0.0);
        let tolerance = 1e-9 * near.total;
        assert!(
            (near.total - far.total).abs() <= tolerance,
            "{near:?} {far:?}"
        );
        assert!((near.parts.switching - far.parts.switching).abs() <= tolerance);
        assert!((near.parts.missed - far.parts.missed).abs() <= tolerance);
    }
}

#[test]
fn a_scene_moved_by_1e12_changes_by_at_most_the_rounding_of_its_inputs() {
    // Decimal coordinates (0.1 apart) round to the 2^-13 grid near 1e12: each coordinate moves
    // by at most 2^-14, each difference by at most 2^-13, so each 2-D distance by at most
    // sqrt(2) x 2^-13. With p = 1 an LP optimum moves by at most that times the weight it can
    // place, min(truth, estimate object-steps) (a bound on |(c1 - c2) . x| over the feasible
    // set); the cut-off and the unassigned costs do not move.
    let (truth, estimate) = generate_scene(ScenePreset::Small, 4);
    let (truth, estimate) = (map_states(&truth, |v| v), map_states(&estimate, |v| v));
    let shift = |v: f64| v + 1e12;
    let (far_truth, far_estimate) = (map_states(&truth, shift), map_states(&estimate, shift));
    let near = solve(&truth, &estimate, 20.0, 1.0, 20.0);
    let far = solve(&far_truth, &far_estimate, 20.0, 1.0, 20.0);
    let weight = truth.object_steps().min(estimate.object_steps()) as f64;
    let tolerance = 2f64.sqrt() * 2f64.powi(-13) * weight;
    let moved = (near.total - far.total).abs();
    assert!(moved <= tolerance, "moved {moved}, allowed {tolerance}");
}

#[test]
fn costs_from_1e_minus_12_to_1e10_in_one_component() {
    // Twelve truths 5e5 apart on a line and twelve estimates, estimate i at 10^(i-6) from
    // truth i (1e-6 to 1e5), for 5 steps; c = 1e6, p = 2, so costs run from 1e-12 to 1e10
    // beside c^p = 1e12. Each estimate is within c of three truths: one LP component. Any
    // other matching pays at least (4e5)^2 = 1.6e11 for a pair, more than all own pairs
    // together, so each step assigns estimate i to truth i, never switching: the total is
    // 5 x sum of 10^(2(i-6)) (alpha = 2 GOSPA with all assigned).
    let truths: Vec<_> = (0..12)
        .map(|i| line(&format!("t{i}"), 0, &[i as f64 * 5e5; 5]))
        .collect();
    let estimates: Vec<_> = (0..12)
        .map(|i| {
            let x = i as f64 * 5e5 + 10f64.powi(i - 6);
            line(&format!("e{i}"), 0, &[x; 5])
        })
        .collect();
    let (truth, estimate) = (lines(truths), lines(estimates));
    let result = solve(&truth, &estimate, 1e6, 2.0, 1e6);
    let expected: f64 = (0..12).map(|i| 5.0 * 10f64.powi(2 * (i - 6))).sum();
    // One group, solved by an engine (not in closed form).
    let proof = result.certificate;
    assert!(proof.lagrangian + proof.simplex == 1, "{proof:?}");
    assert!(
        (result.total - expected).abs() <= 1e-9 * expected,
        "{} vs {expected}",
        result.total
    );
    // The parts: everything is localisation; the others are zero up to 1e-9 x c^p.
    assert!((result.parts.localization - expected).abs() <= 1e-9 * expected);
    for part in [
        result.parts.missed,
        result.parts.false_,
        result.parts.switching,
    ] {
        assert!(part.abs() <= 1e-9 * 1e12, "{result:?}");
    }
    assert!(result.integral);
}

#[test]
fn the_smallest_costs_are_not_lost_beside_the_cutoff() {
    // The same construction with only tiny offsets (1e-6 to 1e-3, costs 1e-12 to 1e-6) and
    // c^p = 1e12: the total, 5 x sum of the squares, must still come out to 1e-9 relative.
    let truths: Vec<_> = (0..4)
        .map(|i| line(&format!("t{i}"), 0, &[i as f64 * 5e5; 5]))
        .collect();
    let estimates: Vec<_> = (0..4)
        .map(|i| {
            let x = i as f64 * 5e5 + 10f64.powi(i - 6);
            line(&format!("e{i}"), 0, &[x; 5])
        })
        .collect();
    let (truth, estimate) = (lines(truths), lines(estimates));
    let result = solve(&truth, &estimate, 1e6, 2.0, 1e6);
    // Each offset as the double the subtraction gives (i x 5e5 is exact; the sum rounds).
    let expected: f64 = (0..4)
        .map(|i| {
            let base = i as f64 * 5e5;
            let d = (base + 10f64.powi(i - 6)) - base;
            5.0 * d * d
        })
        .sum();
    assert!(
        (result.total - expected).abs() <= 1e-9 * expected,
        "{} vs {expected}",
        result.total
    );
}

#[test]
fn two_estimates_at_equal_distance_from_one_truth() {
    // One truth at 0, estimates at -1 and +1 for 10 steps, c = 4, p = 1: each step assigns
    // one at distance 1 and leaves the other false (c/2 = 2), GOSPA 3; keeping one estimate
    // throughout never switches, so the total is 30, whichever of the tied estimates is kept.
    let truth = lines(vec![line("t", 0, &[0.0; 10])]);
    let estimate = lines(vec![
        line("left", 0, &[-1.0; 10]),
        line("right", 0, &[1.0; 10]),
    ]);
    for g in [0.5, 4.0] {
        let result = solve(&truth, &estimate, 4.0, 1.0, g);
        assert!((result.total - 30.0).abs() < 1e-9, "{result:?}");
        assert!(result.parts.switching.abs() < 1e-9, "{result:?}");
        assert!((result.parts.false_ - 20.0).abs() < 1e-9, "{result:?}");
    }
    // Two truths at equal distance from one estimate: the same by symmetry (missed, not false).
    let result = solve(&estimate, &truth, 4.0, 1.0, 4.0);
    assert!((result.total - 30.0).abs() < 1e-9, "{result:?}");
    assert!((result.parts.missed - 20.0).abs() < 1e-9, "{result:?}");
}

#[test]
fn a_distance_equal_to_the_cutoff_costs_the_same_assigned_or_not() {
    // d = c exactly: assigning costs c^p, leaving both unassigned c^p / 2 + c^p / 2; either
    // way 2 per step at c = 2, p = 1, over 4 steps: 8.
    let truth = lines(vec![line("t", 0, &[0.0; 4])]);
    let estimate = lines(vec![line("e", 0, &[2.0; 4])]);
    let result = solve(&truth, &estimate, 2.0, 1.0, 2.0);
    assert!((result.total - 8.0).abs() < 1e-12, "{result:?}");
}

#[test]
fn near_ties_alternating_between_two_estimates() {
    // Estimates at 1 and 1 + 1e-12 around one truth at 0; which is nearer alternates each
    // step. Following the nearer one would switch every step (gamma^p = 4 a full switch);
    // keeping either costs at most 1e-12 more a step. So the total is within 10 x 1e-12 of
    // the per-step sum, 10 x (1 + c/2) = 30.
    let truth = lines(vec![line("t", 0, &[0.0; 10])]);
    let near: Vec<f64> = (0..10)
        .map(|k| if k % 2 == 0 { 1.0 } else { 1.0 + 1e-12 })
        .collect();
    let far: Vec<f64> = (0..10)
        .map(|k| if k % 2 == 0 { -1.0 - 1e-12 } else { -1.0 })
        .collect();
    let estimate = lines(vec![line("a", 0, &near), line("b", 0, &far)]);
    let result = solve(&truth, &estimate, 4.0, 1.0, 4.0);
    assert!((result.total - 30.0).abs() < 1e-9, "{result:?}");
    assert!(result.parts.switching.abs() < 1e-9, "{result:?}");
    // The per-step sum itself, from the per-step metric.
    let params = GospaParams::new(4.0, 1.0, 2.0).unwrap();
    let series = per_step(&truth, &estimate, &params, &Distance::default()).unwrap();
    assert!((series.summary.sum - 30.0).abs() < 1e-9);
}
