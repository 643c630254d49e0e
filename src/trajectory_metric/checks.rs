//! Consistency checks on a solved trajectory GOSPA: a result that fails one is refused, not
//! printed.
//!
//! Three facts must hold for every optimum of the LP relaxation, whatever the engine did:
//! - the four parts add up to the total, and the total equals the engine's own objective (plus
//!   the constant `(c^p / 2)(truth + estimate object-steps)`);
//! - the total is at most that constant, the cost of leaving every object-step unassigned
//!   (a feasible solution, so no optimum costs more);
//! - the total is at most the cost of holding each step's own best assignment (per-step GOSPA
//!   at every step plus the switches between those assignments), another feasible solution.
//!   This one is compared with the relative tolerance only: it catches an engine that could not
//!   resolve costs far below the cut-off (a cut-off many orders of magnitude above the errors),
//!   where a tolerance scaled by c^p would let a wrong optimum through;
//! - the total is at least the sum over the steps of GOSPA^p with alpha = 2: at each step the
//!   LP weights form a fractional matching, whose cheapest cost is that step's GOSPA^p (the
//!   bipartite matching polytope has integral vertices), and the switching part is >= 0. This
//!   is the metric with switching penalty 0, as in the source of the metric (García-Fernández,
//!   Rahmathullah, Svensson, IEEE Trans. Signal Processing 68, 2020, section IV).
//!
//! Each comparison allows `SCALE_TOLERANCE` times the upper bound (the size of the terms that
//! are summed, so the reach of rounding) plus `RELATIVE_TOLERANCE` times the values compared.

use super::TrajectoryScore;
use crate::distance::Distance;
use crate::error::{Error, Result};
use crate::per_step::{for_each_step, GospaParams};
use crate::trajectory::TrajectorySet;

use super::TrajectoryParams;

/// Allowed difference, relative to the values compared.
pub const RELATIVE_TOLERANCE: f64 = 1e-6;
/// Allowed difference, relative to the upper bound (the all-unassigned cost).
pub const SCALE_TOLERANCE: f64 = 1e-9;

/// The range a trajectory GOSPA total must lie in, in p-th power units.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Bounds {
    /// Sum over the steps of GOSPA^p with alpha = 2 (the metric with switching penalty 0).
    pub lower: f64,
    /// `(c^p / 2)(truth + estimate object-steps)`: every object-step unassigned.
    pub upper: f64,
    /// The cost of holding each step's own best assignment: `lower` plus gamma^p / 2 per change
    /// of an assigned pair between consecutive steps.
    pub held: f64,
}

/// Computes the bounds of a pair of sets. O(one per-step GOSPA pass).
///
/// # Errors
/// An upper bound that overflows (a cut-off too large for the inputs), or an error of the
/// per-step pass.
pub fn bounds(
    truth: &TrajectorySet,
    estimate: &TrajectorySet,
    params: &TrajectoryParams,
    distance: &Distance,
) -> Result<Bounds> {
    let points = truth.object_steps() + estimate.object_steps();
    let upper = params.cutoff_power() / 2.0 * points as f64;
    if !upper.is_finite() {
        return Err(Error::Parameter(format!(
            "the cut-off {} is too large for these inputs: c^p / 2 times the {points} object-steps overflows",
            params.cutoff
        )));
    }
    let gospa = GospaParams::new(params.cutoff, params.order, 2.0)?;
    // One streaming pass: nothing per step is kept but the previous step's assigned pairs.
    let mut lower = 0.0;
    let mut changes = 0usize;
    let mut first = true;
    let mut previous_step = 0;
    let mut previous: Vec<(u32, u32)> = Vec::new();
    let mut current: Vec<(u32, u32)> = Vec::new();
    // Steps with no object are skipped by the pass: they assign nothing, so a gap before this
    // step drops every previous pair and then adds every current one.
    for_each_step(truth, estimate, &gospa, distance, |step, score, xs, ys| {
        lower += score.power;
        current.clear();
        current.extend(
            score
                .pairs
                .iter()
                .map(|&(i, j)| (xs[i].object, ys[j].object)),
        );
        current.sort_unstable();
        // The first step's assignment is free: only changes between steps are charged.
        if !first {
            changes += if step == previous_step + 1 {
                symmetric_difference(&previous, &current)
            } else {
                previous.len() + current.len()
            };
        }
        first = false;
        previous_step = step;
        std::mem::swap(&mut previous, &mut current);
    })?;
    let held = lower + params.switch_cost() * changes as f64;
    Ok(Bounds { lower, upper, held })
}

/// The number of pairs in one sorted list and not the other.
fn symmetric_difference(a: &[(u32, u32)], b: &[(u32, u32)]) -> usize {
    let (mut i, mut j, mut count) = (0, 0, 0);
    while i < a.len() && j < b.len() {
        match a[i].cmp(&b[j]) {
            std::cmp::Ordering::Less => (i, count) = (i + 1, count + 1),
            std::cmp::Ordering::Greater => (j, count) = (j + 1, count + 1),
            std::cmp::Ordering::Equal => (i, j) = (i + 1, j + 1),
        }
    }
    count + (a.len() - i) + (b.len() - j)
}

/// Checks a result against its bounds and itself; a pure function of its arguments.
///
/// # Errors
/// [`Error::Solver`] naming the first check that fails and by how much: a value that is not
/// finite, a negative part, parts that do not add up to the total, a total that differs from
/// the engine's objective, a total above the upper or below the lower bound.
pub fn check_consistency(score: &TrajectoryScore, bounds: &Bounds) -> Result<()> {
    check_against(score, bounds, Some(score.lp_objective), true)
}

/// The same checks for a result whose total is not an LP engine's objective (the exact metric,
/// assembled from integer solutions): everything but the comparison with the engine.
///
/// # Errors
/// As [`check_consistency`].
pub fn check_integral(score: &TrajectoryScore, bounds: &Bounds) -> Result<()> {
    // A search stopped by its budget reports an incumbent, an upper bound that may well cost
    // more than the held assignment: that comparison holds only for a proven optimum.
    let proven = score.exact.as_ref().is_none_or(|exact| exact.proven);
    check_against(score, bounds, None, proven)
}

fn check_against(
    score: &TrajectoryScore,
    bounds: &Bounds,
    objective: Option<f64>,
    optimal: bool,
) -> Result<()> {
    let fail = |what: String| Err(Error::Solver(format!("consistency check failed: {what}")));
    let parts = [
        ("localisation", score.parts.localization),
        ("missed", score.parts.missed),
        ("false", score.parts.false_),
        ("switching", score.parts.switching),
    ];
    let values = parts
        .iter()
        .copied()
        .chain([("total", score.total)])
        .chain(objective.map(|value| ("LP objective", value)));
    for (name, value) in
        values.chain([("lower bound", bounds.lower), ("upper bound", bounds.upper)])
    {
        if !value.is_finite() {
            return fail(format!("the {name} is {value}, not a finite number"));
        }
    }
    let tolerance = |a: f64, b: f64| {
        SCALE_TOLERANCE * bounds.upper.abs() + RELATIVE_TOLERANCE * a.abs().max(b.abs())
    };
    for (name, value) in parts {
        if value < -tolerance(value, 0.0) {
            return fail(format!("the {name} part is negative ({value:e})"));
        }
    }
    let sum = parts.iter().fold(0.0, |sum, (_, value)| sum + value);
    let gap = (sum - score.total).abs();
    if gap > tolerance(sum, score.total) {
        return fail(format!(
            "the parts add up to {sum} but the total is {}: off by {gap:e} (tolerance {:e})",
            score.total,
            tolerance(sum, score.total)
        ));
    }
    if let Some(objective) = objective {
        let gap = (objective - score.total).abs();
        if gap > tolerance(objective, score.total) {
            return fail(format!(
                "the total {} differs from the engine's objective {objective} by {gap:e} (tolerance {:e})",
                score.total,
                tolerance(objective, score.total)
            ));
        }
    }
    let excess = score.total - bounds.upper;
    if excess > tolerance(score.total, bounds.upper) {
        return fail(format!(
            "the total {} exceeds the all-unassigned bound {} by {excess:e} (tolerance {:e})",
            score.total,
            bounds.upper,
            tolerance(score.total, bounds.upper)
        ));
    }
    let excess = score.total - bounds.held;
    if optimal && excess > RELATIVE_TOLERANCE * score.total.abs().max(bounds.held.abs()) {
        return fail(format!(
            "the total {} exceeds by {excess:e} the cost {} of holding each step's own best \
             assignment, so the LP engine missed the optimum; this happens when the cut-off is \
             many orders of magnitude larger than the distances and the switching penalty \
             (choose a cut-off nearer the errors a track may have while following an object)",
            score.total, bounds.held
        ));
    }
    let shortfall = bounds.lower - score.total;
    if shortfall > tolerance(score.total, bounds.lower) {
        return fail(format!(
            "the total {} lies below the per-step lower bound {} by {shortfall:e} (tolerance {:e})",
            score.total,
            bounds.lower,
            tolerance(score.total, bounds.lower)
        ));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::trajectory::Trajectory;
    use crate::trajectory_metric::score;

    fn set(objects: &[(&str, &[(i64, f64)])]) -> TrajectorySet {
        TrajectorySet::new(
            1,
            objects
                .iter()
                .map(|(id, points)| {
                    Trajectory::new(*id, 1, points.iter().map(|&(t, x)| (t, vec![x])).collect())
                        .unwrap()
                })
                .collect(),
        )
        .unwrap()
    }

    /// Two truths, two estimates that swap between them half way: the LP has a real component.
    fn solved() -> (TrajectoryScore, Bounds) {
        let truth = set(&[
            ("a", &[(0, 0.0), (1, 0.0), (2, 0.0), (3, 0.0)]),
            ("b", &[(0, 5.0), (1, 5.0), (2, 5.0), (3, 5.0)]),
        ]);
        let estimate = set(&[
            ("p", &[(0, 0.5), (1, 0.5), (2, 5.5), (3, 5.5)]),
            ("q", &[(0, 5.5), (1, 5.5), (2, 0.5), (3, 0.5)]),
        ]);
        let params = TrajectoryParams::new(2.0, 1.0, 1.0).unwrap();
        let distance = Distance::default();
        let result = score(&truth, &estimate, &params, &distance).unwrap();
        let bounds = bounds(&truth, &estimate, &params, &distance).unwrap();
        (result, bounds)
    }

    #[test]
    fn bounds_of_a_hand_scene() {
        let (result, bounds) = solved();
        // By hand, from the definitions of GOSPA and trajectory GOSPA (c = 2, p = 1,
        // gamma = 1): each step assigns both truths at distance 0.5, so the lower bound is
        // 4 steps x 2 x 0.5 = 4; the upper bound is (c^p / 2)(8 + 8) = 16. Following the swap
        // changes the weight of each of the four pairs once, at gamma^p / 2 = 0.5 a unit: 2,
        // so the total is 4 + 2 = 6. Leaving steps 2 and 3 unassigned instead costs
        // 2 x 4 x c^p / 2 = 8 there, more than the 2 + 2 of following the swap.
        assert!((bounds.lower - 4.0).abs() < 1e-12, "{bounds:?}");
        assert!((bounds.upper - 16.0).abs() < 1e-12, "{bounds:?}");
        assert!((result.total - 6.0).abs() < 1e-9, "{}", result.total);
        // Holding each step's own assignment follows the swap too: 4 + 4 changes x 0.5 = 6.
        assert!((bounds.held - 6.0).abs() < 1e-12, "{bounds:?}");
        check_consistency(&result, &bounds).unwrap();
    }

    #[test]
    fn held_bound_counts_the_changes_across_steps_with_no_object() {
        // By hand, from the definitions (c = 10, p = 1, gamma = 10): truth a and estimate p
        // are present at steps 0 and 1,000,000 only, 1 then 5 apart, so the lower bound is
        // 1 + 5 = 6. Holding each step's own assignment drops the pair at step 1 (no object)
        // and takes it again at the last step: 2 changes x gamma^p / 2 = 10, so held = 16.
        let truth = set(&[("a", &[(0, 0.0), (1_000_000, 0.0)])]);
        let estimate = set(&[("p", &[(0, 1.0), (1_000_000, 5.0)])]);
        let params = TrajectoryParams::new(10.0, 1.0, 10.0).unwrap();
        let bounds = bounds(&truth, &estimate, &params, &Distance::default()).unwrap();
        assert!((bounds.lower - 6.0).abs() < 1e-12, "{bounds:?}");
        assert!((bounds.held - 16.0).abs() < 1e-12, "{bounds:?}");
        // Step 1 follows step 0 at once: the pair is held, no change, held = lower = 6.
        let truth = set(&[("a", &[(0, 0.0), (1, 0.0)])]);
        let estimate = set(&[("p", &[(0, 1.0), (1, 5.0)])]);
        let bounds = crate::trajectory_metric::checks::bounds(
            &truth,
            &estimate,
            &params,
            &Distance::default(),
        )
        .unwrap();
        assert!((bounds.held - 6.0).abs() < 1e-12, "{bounds:?}");
    }

    #[test]
    fn a_total_above_the_held_assignment_fails() {
        // A doctored solution that pays more than an available feasible one: all parts raised
        // together so that only the held-assignment check can object.
        let (mut result, bounds) = solved();
        result.parts.localization += 1.0;
        result.total += 1.0;
        result.lp_objective += 1.0;
        let text = message(check_consistency(&result, &bounds));
        assert!(
            text.contains("holding each step's own best assignment"),
            "{text}"
        );
    }

    fn message(result: Result<()>) -> String {
        match result {
            Err(Error::Solver(message)) => message,
            other => panic!("expected a solver error, got {other:?}"),
        }
    }

    #[test]
    fn a_doctored_total_fails_the_sum_of_parts() {
        let (mut result, bounds) = solved();
        result.total += 0.01;
        let text = message(check_consistency(&result, &bounds));
        assert!(text.contains("the parts add up to 6"), "{text}");
    }

    #[test]
    fn a_doctored_objective_fails() {
        let (mut result, bounds) = solved();
        result.lp_objective -= 0.5;
        let text = message(check_consistency(&result, &bounds));
        assert!(
            text.contains("differs from the engine's objective 5.5"),
            "{text}"
        );
    }

    #[test]
    fn a_total_below_the_per_step_bound_fails() {
        let (mut result, bounds) = solved();
        // A solver that dropped the localisation and switching costs: parts still add up.
        result.parts.localization = 0.0;
        result.parts.switching = 1.0;
        result.total = result.parts.missed + result.parts.false_ + 1.0;
        result.lp_objective = result.total;
        let text = message(check_consistency(&result, &bounds));
        assert!(text.contains("below the per-step lower bound 4"), "{text}");
    }

    #[test]
    fn a_total_above_the_unassigned_bound_fails() {
        let (mut result, bounds) = solved();
        result.parts.switching += 20.0;
        result.total += 20.0;
        result.lp_objective += 20.0;
        let text = message(check_consistency(&result, &bounds));
        assert!(
            text.contains("exceeds the all-unassigned bound 16"),
            "{text}"
        );
    }

    #[test]
    fn a_value_that_is_not_finite_fails() {
        let (mut result, bounds) = solved();
        result.parts.missed = f64::NAN;
        let text = message(check_consistency(&result, &bounds));
        assert!(text.contains("the missed is NaN"), "{text}");
        let (mut result, bounds) = solved();
        result.parts.false_ = -0.5;
        result.total -= 0.5;
        result.lp_objective -= 0.5;
        let text = message(check_consistency(&result, &bounds));
        assert!(text.contains("the false part is negative"), "{text}");
    }

    #[test]
    fn rounding_within_the_tolerance_passes() {
        let (mut result, bounds) = solved();
        // Far below 1e-9 x the upper bound 16.
        result.total += 1e-12;
        check_consistency(&result, &bounds).unwrap();
    }
}
