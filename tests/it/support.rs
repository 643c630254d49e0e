//! Helpers shared by the integration tests: building sets by hand and random scenes.

use proptest::prelude::*;
use proptest::test_runner::{Config, RngSeed};
use switchyard::trajectory::{Step, Trajectory, TrajectorySet};

/// An object as `(id, [(step, state)])`.
pub type Object = (String, Vec<(Step, Vec<f64>)>);

/// A one-dimensional trajectory present at `steps` with the given positions.
pub fn line(id: &str, first: Step, positions: &[f64]) -> Object {
    (
        id.to_string(),
        positions
            .iter()
            .enumerate()
            .map(|(k, &x)| (first + k as Step, vec![x]))
            .collect(),
    )
}

/// A set of one-dimensional trajectories from [`line`] results.
pub fn lines(objects: Vec<Object>) -> TrajectorySet {
    TrajectorySet::new(
        1,
        objects
            .into_iter()
            .map(|(id, points)| Trajectory::new(id, 1, points).unwrap())
            .collect(),
    )
    .unwrap()
}

/// A deterministic proptest configuration: the same cases on every run.
pub fn seeded(cases: u32, seed: u64) -> Config {
    Config {
        cases,
        rng_seed: RngSeed::Fixed(seed),
        failure_persistence: None,
        ..Config::default()
    }
}

/// A random set of small one- or two-dimensional trajectories with gaps, positions on a coarse
/// grid so that many pairs come within small cut-offs.
pub fn random_set(
    prefix: &'static str,
    max_objects: usize,
    steps: Step,
    dim: usize,
) -> impl Strategy<Value = TrajectorySet> {
    let object = (
        0..steps,
        1..=steps,
        proptest::collection::vec(
            (any::<bool>(), proptest::collection::vec(0i32..8, dim)),
            steps as usize,
        ),
    );
    proptest::collection::vec(object, 0..=max_objects).prop_map(move |objects| {
        let trajectories = objects
            .into_iter()
            .enumerate()
            .filter_map(|(n, (start, length, points))| {
                let points: Vec<(Step, Vec<f64>)> = (start..(start + length).min(steps))
                    .filter(|&k| points[k as usize].0 || k == start)
                    .map(|k| {
                        let coordinates = &points[k as usize].1;
                        (k, coordinates.iter().map(|&v| v as f64 * 0.75).collect())
                    })
                    .collect();
                (!points.is_empty())
                    .then(|| Trajectory::new(format!("{prefix}{n}"), dim, points).unwrap())
            })
            .collect();
        TrajectorySet::new(dim, trajectories).unwrap()
    })
}
