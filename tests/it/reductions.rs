//! The exact reductions against the unreduced LP, and the metric's axioms, on seeded random
//! scenes (proptest with a fixed seed).
//!
//! References: the unreduced LP is the trajectory GOSPA LP relaxation of García-Fernández,
//! Rahmathullah and Svensson (IEEE TSP 2020) written per pair and step; with switching penalty
//! 0 it separates into per-step GOSPA problems (Rahmathullah et al., FUSION 2017), summed over
//! steps. That the LP relaxation is a metric is proved in the same TSP paper.

use approx::assert_relative_eq;
use proptest::prelude::*;
use switchyard::distance::Distance;
use switchyard::per_step::{per_step, GospaParams};
use switchyard::trajectory::{Trajectory, TrajectorySet};
use switchyard::trajectory_metric::model::Reduction;
use switchyard::trajectory_metric::{score, score_with, SolveOptions, TrajectoryParams};

use crate::support::{random_set, seeded};

fn params() -> impl Strategy<Value = TrajectoryParams> {
    (
        prop::sample::select(vec![0.8, 1.0, 2.0, 3.0]),
        prop::sample::select(vec![1.0, 2.0]),
        prop::sample::select(vec![0.0, 0.3, 1.0, 2.5, 6.0]),
    )
        .prop_map(|(c, p, g)| TrajectoryParams::new(c, p, g).unwrap())
}

fn total(
    x: &TrajectorySet,
    y: &TrajectorySet,
    params: &TrajectoryParams,
    options: SolveOptions,
) -> f64 {
    let s = score_with(x, y, params, &Distance::default(), &options).unwrap();
    // The parts, recomputed from the decoded weights, must add up to the LP's own optimum.
    assert_relative_eq!(s.total, s.lp_objective, epsilon = 1e-7, max_relative = 1e-9);
    s.total
}

proptest! {
    #![proptest_config(seeded(300, 20261201))]

    #[test]
    fn every_reduction_gives_the_unreduced_value(
        x in random_set("t", 4, 12, 1),
        y in random_set("e", 6, 12, 1),
        params in params(),
    ) {
        let unreduced = total(&x, &y, &params, SolveOptions {
            reduction: Reduction::PerStep,
            split_components: false,
            keep_far_pairs: true,
            ..SolveOptions::default()
        });
        let close_pairs = total(&x, &y, &params, SolveOptions {
            reduction: Reduction::PerStep,
            split_components: false,
            ..SolveOptions::default()
        });
        let components = total(&x, &y, &params, SolveOptions {
            reduction: Reduction::PerStep,
            ..SolveOptions::default()
        });
        let active_steps = total(&x, &y, &params, SolveOptions {
            reduction: Reduction::ActiveSteps,
            ..SolveOptions::default()
        });
        let events = total(&x, &y, &params, SolveOptions::default());
        for value in [close_pairs, components, active_steps, events] {
            prop_assert!((value - unreduced).abs() <= 1e-6 * unreduced.max(1.0),
                "reduced {value} vs unreduced {unreduced}");
        }
    }

    #[test]
    fn without_switching_penalty_the_lp_is_the_sum_of_per_step_gospa(
        x in random_set("t", 4, 10, 2),
        y in random_set("e", 5, 10, 2),
        c in prop::sample::select(vec![1.0, 2.0, 4.0]),
        p in prop::sample::select(vec![1.0, 2.0, 3.0]),
    ) {
        let trajectory = score(&x, &y, &TrajectoryParams::new(c, p, 0.0).unwrap(), &Distance::default()).unwrap();
        let steps = per_step(&x, &y, &GospaParams::new(c, p, 2.0).unwrap(), &Distance::default()).unwrap();
        let sum: f64 = steps.steps.iter().map(|s| s.gospa.powf(p)).sum();
        prop_assert!((trajectory.total - sum).abs() <= 1e-7 * sum.max(1.0), "{} vs {}", trajectory.total, sum);
    }

    #[test]
    fn distance_to_itself_is_zero_and_symmetric(
        x in random_set("t", 4, 10, 2),
        y in random_set("e", 4, 10, 2),
        params in params(),
    ) {
        let d = Distance::default();
        let same = score(&x, &x, &params, &d).unwrap();
        prop_assert_eq!(same.total, 0.0);
        let xy = score(&x, &y, &params, &d).unwrap().metric;
        let yx = score(&y, &x, &params, &d).unwrap().metric;
        prop_assert!((xy - yx).abs() <= 1e-7 * xy.max(1.0));
        if x != y && !(x.is_empty() && y.is_empty()) {
            // A set that differs only in its ids is at distance zero: the metric sees states.
            let relabelled = TrajectorySet::new(x.dim(), x.trajectories().iter().map(|t| {
                Trajectory::new(format!("e{}", t.id()), t.dim(), t.points().map(|(k, s)| (k, s.to_vec())).collect()).unwrap()
            }).collect()).unwrap();
            prop_assert_eq!(score(&x, &relabelled, &params, &d).unwrap().total, 0.0);
            // Sets of trajectories that differ (ids aside) are at a positive distance when
            // gamma > 0 (with gamma = 0 it is only a pseudometric).
            let shape = |set: &TrajectorySet| {
                let mut all: Vec<Vec<(i64, Vec<f64>)>> = set.trajectories().iter()
                    .map(|t| t.points().map(|(k, s)| (k, s.to_vec())).collect())
                    .collect();
                all.sort_by(|a, b| a.partial_cmp(b).unwrap());
                all
            };
            if params.switch_penalty > 0.0 && shape(&x) != shape(&y) {
                prop_assert!(xy > 0.0, "distinct sets at distance {xy}");
            }
        }
    }

    #[test]
    fn triangle_inequality(
        x in random_set("a", 3, 8, 1),
        y in random_set("b", 3, 8, 1),
        z in random_set("c", 3, 8, 1),
        params in params(),
    ) {
        prop_assume!(params.switch_penalty > 0.0);
        let d = Distance::default();
        let xz = score(&x, &z, &params, &d).unwrap().metric;
        let xy = score(&x, &y, &params, &d).unwrap().metric;
        let yz = score(&y, &z, &params, &d).unwrap().metric;
        prop_assert!(xz <= xy + yz + 1e-7 * (1.0 + xz), "{xz} > {xy} + {yz}");
    }

    #[test]
    fn relabelling_and_reordering_change_nothing(
        x in random_set("t", 4, 10, 2),
        y in random_set("e", 5, 10, 2),
        params in params(),
    ) {
        let d = Distance::default();
        let base = score(&x, &y, &params, &d).unwrap();
        let reversed = |set: &TrajectorySet, prefix: &str| TrajectorySet::new(
            set.dim(),
            set.trajectories().iter().rev().enumerate().map(|(n, t)| {
                Trajectory::new(format!("{prefix}{n}"), t.dim(), t.points().map(|(k, s)| (k, s.to_vec())).collect()).unwrap()
            }).collect(),
        ).unwrap();
        let other = score(&reversed(&x, "r"), &reversed(&y, "s"), &params, &d).unwrap();
        prop_assert!((base.total - other.total).abs() <= 1e-7 * base.total.max(1.0));
    }
}
