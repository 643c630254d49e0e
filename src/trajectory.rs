//! Trajectories and sets of trajectories: the data model every metric works on.
//!
//! A trajectory is an identified object with a state (a vector of `dim` numbers) at each of a
//! strictly increasing list of integer steps; gaps are allowed. A [`TrajectorySet`] holds
//! trajectories of one dimension with distinct ids. [`Frames`] is the per-step view: which
//! trajectories are present at each step of an evaluation [`Window`].

use crate::error::{Error, Result};

/// An integer time step.
pub type Step = i64;

/// One object's trajectory: its id and its states at strictly increasing steps.
#[derive(Clone, Debug, PartialEq)]
pub struct Trajectory {
    id: String,
    dim: usize,
    steps: Vec<Step>,
    states: Vec<f64>,
}

impl Trajectory {
    /// Builds a trajectory from `(step, state)` points in any order.
    ///
    /// # Errors
    /// An empty id, a state of the wrong length, a non-finite value, or two points at one step.
    pub fn new(id: impl Into<String>, dim: usize, points: Vec<(Step, Vec<f64>)>) -> Result<Self> {
        let id = id.into();
        if id.is_empty() {
            return Err(Error::Mismatch("a trajectory id is empty".into()));
        }
        let mut points = points;
        points.sort_by_key(|(step, _)| *step);
        let mut steps = Vec::with_capacity(points.len());
        let mut states = Vec::with_capacity(points.len() * dim);
        for (step, state) in points {
            if state.len() != dim {
                return Err(Error::Mismatch(format!(
                    "trajectory {id:?} has a state of {} values at step {step}, expected {dim}",
                    state.len()
                )));
            }
            if let Some(bad) = state.iter().find(|v| !v.is_finite()) {
                return Err(Error::Mismatch(format!(
                    "trajectory {id:?} has a non-finite value {bad} at step {step}"
                )));
            }
            if steps.last() == Some(&step) {
                return Err(Error::Mismatch(format!(
                    "trajectory {id:?} has two states at step {step}"
                )));
            }
            steps.push(step);
            states.extend_from_slice(&state);
        }
        Ok(Trajectory {
            id,
            dim,
            steps,
            states,
        })
    }

    /// Builds a trajectory from parts already checked by a reader: steps strictly increasing,
    /// `states.len() == steps.len() * dim`, every value finite, id not empty.
    pub(crate) fn from_checked_parts(
        id: String,
        dim: usize,
        steps: Vec<Step>,
        states: Vec<f64>,
    ) -> Self {
        debug_assert!(steps.windows(2).all(|w| w[0] < w[1]));
        debug_assert_eq!(states.len(), steps.len() * dim);
        Trajectory {
            id,
            dim,
            steps,
            states,
        }
    }

    /// The object's id.
    pub fn id(&self) -> &str {
        &self.id
    }

    /// The number of values in one state.
    pub fn dim(&self) -> usize {
        self.dim
    }

    /// The steps at which the object is present, strictly increasing.
    pub fn steps(&self) -> &[Step] {
        &self.steps
    }

    /// The number of steps at which the object is present.
    pub fn len(&self) -> usize {
        self.steps.len()
    }

    /// True when the object is present at no step.
    pub fn is_empty(&self) -> bool {
        self.steps.is_empty()
    }

    /// The state at the `index`-th step the object is present.
    pub fn state(&self, index: usize) -> &[f64] {
        &self.states[index * self.dim..(index + 1) * self.dim]
    }

    /// The state at `step`, if the object is present then. O(log n).
    pub fn state_at(&self, step: Step) -> Option<&[f64]> {
        self.steps
            .binary_search(&step)
            .ok()
            .map(|index| self.state(index))
    }

    /// `(step, state)` for every step the object is present.
    pub fn points(&self) -> impl Iterator<Item = (Step, &[f64])> + '_ {
        self.steps
            .iter()
            .enumerate()
            .map(move |(index, &step)| (step, self.state(index)))
    }

    /// The first and last step the object is present, if any.
    pub fn span(&self) -> Option<(Step, Step)> {
        Some((*self.steps.first()?, *self.steps.last()?))
    }
}

/// A set of trajectories with one state dimension and distinct ids, kept in the order given.
#[derive(Clone, Debug, PartialEq)]
pub struct TrajectorySet {
    dim: usize,
    trajectories: Vec<Trajectory>,
}

impl TrajectorySet {
    /// Builds a set, checking dimensions and that ids are distinct.
    ///
    /// # Errors
    /// A trajectory of another dimension, or two trajectories with one id.
    pub fn new(dim: usize, trajectories: Vec<Trajectory>) -> Result<Self> {
        let mut seen = std::collections::HashSet::with_capacity(trajectories.len());
        for trajectory in &trajectories {
            if trajectory.dim != dim {
                return Err(Error::Mismatch(format!(
                    "trajectory {:?} has dimension {}, the set {dim}",
                    trajectory.id, trajectory.dim
                )));
            }
            if !seen.insert(trajectory.id.as_str()) {
                return Err(Error::Mismatch(format!(
                    "two trajectories have the id {:?}",
                    trajectory.id
                )));
            }
        }
        Ok(TrajectorySet { dim, trajectories })
    }

    /// A set with no trajectories.
    pub fn empty(dim: usize) -> Self {
        TrajectorySet {
            dim,
            trajectories: Vec::new(),
        }
    }

    /// The number of values in one state.
    pub fn dim(&self) -> usize {
        self.dim
    }

    /// The number of trajectories.
    pub fn len(&self) -> usize {
        self.trajectories.len()
    }

    /// True when the set has no trajectory.
    pub fn is_empty(&self) -> bool {
        self.trajectories.is_empty()
    }

    /// The trajectories, in the order given.
    pub fn trajectories(&self) -> &[Trajectory] {
        &self.trajectories
    }

    /// The `index`-th trajectory.
    pub fn get(&self, index: usize) -> &Trajectory {
        &self.trajectories[index]
    }

    /// The total number of (object, step) points.
    pub fn object_steps(&self) -> usize {
        self.trajectories.iter().map(Trajectory::len).sum()
    }

    /// The first and last step at which any object is present.
    pub fn span(&self) -> Option<(Step, Step)> {
        self.trajectories
            .iter()
            .filter_map(Trajectory::span)
            .reduce(|a, b| (a.0.min(b.0), a.1.max(b.1)))
    }
}

/// The evaluation window: every integer step from `first` to `last`, both included.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize)]
pub struct Window {
    /// The first step evaluated.
    pub first: Step,
    /// The last step evaluated.
    pub last: Step,
}

impl Window {
    /// The window covering every step from the first to the last present in either set, or
    /// `None` when both sets are empty.
    pub fn covering(truth: &TrajectorySet, estimate: &TrajectorySet) -> Option<Window> {
        let span = match (truth.span(), estimate.span()) {
            (Some(a), Some(b)) => (a.0.min(b.0), a.1.max(b.1)),
            (Some(a), None) | (None, Some(a)) => a,
            (None, None) => return None,
        };
        Some(Window {
            first: span.0,
            last: span.1,
        })
    }

    /// The number of steps in the window.
    pub fn len(&self) -> usize {
        (self.last - self.first + 1) as usize
    }

    /// Always false: a window holds at least one step.
    pub fn is_empty(&self) -> bool {
        false
    }

    /// The position of `step` in the window (0 for `first`).
    pub fn index(&self, step: Step) -> usize {
        (step - self.first) as usize
    }
}

/// One object present at a step: which trajectory, and the position of the step in it.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Presence {
    /// Index of the trajectory in its set.
    pub object: u32,
    /// Index of the point within the trajectory.
    pub point: u32,
}

/// The objects of one set present at each step of a window. Only the steps where an object is
/// present are stored, so the memory follows the points, not the length of the window.
#[derive(Clone, Debug)]
pub struct Frames {
    window: Window,
    /// The steps with at least one object, increasing.
    steps: Vec<Step>,
    /// `members[offsets[k]..offsets[k + 1]]` are present at `steps[k]`.
    offsets: Vec<usize>,
    members: Vec<Presence>,
}

/// A window at most this many times longer than the points is indexed by counting (O(points +
/// steps), memory a few words a step); a longer, sparser one by sorting the points (O(points log
/// points)), so the memory never follows the window.
const DENSE_STEPS_PER_POINT: usize = 4;

impl Frames {
    /// Indexes `set` by step over `window`. Points outside the window are left out.
    pub fn new(set: &TrajectorySet, window: Window) -> Self {
        let inside = |step: Step| step >= window.first && step <= window.last;
        let points: usize = set
            .trajectories()
            .iter()
            .map(|t| t.steps().iter().filter(|&&s| inside(s)).count())
            .sum();
        let mut members = Vec::with_capacity(points);
        let mut steps = Vec::new();
        let mut offsets = Vec::new();
        if window.len() <= DENSE_STEPS_PER_POINT.saturating_mul(points.max(1)) {
            let mut counts = vec![0usize; window.len() + 1];
            for trajectory in set.trajectories() {
                for &step in trajectory.steps().iter().filter(|&&s| inside(s)) {
                    counts[window.index(step) + 1] += 1;
                }
            }
            for k in 0..window.len() {
                if counts[k + 1] > 0 {
                    steps.push(window.first + k as Step);
                    offsets.push(counts[k]);
                }
                counts[k + 1] += counts[k];
            }
            members.resize(
                points,
                Presence {
                    object: 0,
                    point: 0,
                },
            );
            let mut fill = counts;
            for (object, trajectory) in set.trajectories().iter().enumerate() {
                for (point, &step) in trajectory.steps().iter().enumerate() {
                    if inside(step) {
                        let slot = &mut fill[window.index(step)];
                        members[*slot] = Presence {
                            object: object as u32,
                            point: point as u32,
                        };
                        *slot += 1;
                    }
                }
            }
        } else {
            let mut keyed: Vec<(Step, Presence)> = Vec::with_capacity(points);
            for (object, trajectory) in set.trajectories().iter().enumerate() {
                for (point, &step) in trajectory.steps().iter().enumerate() {
                    if inside(step) {
                        let presence = Presence {
                            object: object as u32,
                            point: point as u32,
                        };
                        keyed.push((step, presence));
                    }
                }
            }
            // (step, object) is unique, so the unstable sort is deterministic.
            keyed.sort_unstable_by_key(|&(step, p)| (step, p.object));
            for (index, &(step, presence)) in keyed.iter().enumerate() {
                if steps.last() != Some(&step) {
                    steps.push(step);
                    offsets.push(index);
                }
                members.push(presence);
            }
        }
        offsets.push(points);
        Frames {
            window,
            steps,
            offsets,
            members,
        }
    }

    /// The window indexed.
    pub fn window(&self) -> Window {
        self.window
    }

    /// The objects present at the `index`-th step of the window, by increasing object index.
    /// O(log occupied steps).
    pub fn at(&self, index: usize) -> &[Presence] {
        match self
            .steps
            .binary_search(&(self.window.first + index as Step))
        {
            Ok(k) => self.occupant(k),
            Err(_) => &[],
        }
    }

    /// The steps with at least one object present, increasing.
    pub fn occupied(&self) -> &[Step] {
        &self.steps
    }

    /// The objects present at the `k`-th occupied step, by increasing object index.
    pub fn occupant(&self, k: usize) -> &[Presence] {
        &self.members[self.offsets[k]..self.offsets[k + 1]]
    }

    /// Every step with an object in `self` or `other` (two indexings of one window), in time
    /// order, with the objects of each present then (possibly none).
    pub fn occupied_with<'a>(
        &'a self,
        other: &'a Frames,
    ) -> impl Iterator<Item = (Step, &'a [Presence], &'a [Presence])> + 'a {
        let (mut a, mut b) = (0, 0);
        std::iter::from_fn(move || {
            let next_a = self.steps.get(a).copied();
            let next_b = other.steps.get(b).copied();
            let step = match (next_a, next_b) {
                (Some(x), Some(y)) => x.min(y),
                (Some(x), None) | (None, Some(x)) => x,
                (None, None) => return None,
            };
            let take = |frames: &'a Frames, next: Option<Step>, k: &mut usize| {
                if next == Some(step) {
                    *k += 1;
                    frames.occupant(*k - 1)
                } else {
                    &[]
                }
            };
            let xs = take(self, next_a, &mut a);
            let ys = take(other, next_b, &mut b);
            Some((step, xs, ys))
        })
    }
}

/// The longest window accepted, in steps. The metrics keep nothing per empty step, but `steps`
/// writes a CSV or JSON row for every step of the window, and such a window almost always comes
/// from a wrong step size.
pub const MAX_WINDOW_STEPS: usize = 50_000_000;

/// The evaluation window of two sets, after checking that they can be compared.
///
/// # Errors
/// Different state dimensions, or a window longer than [`MAX_WINDOW_STEPS`].
pub fn evaluation_window(
    truth: &TrajectorySet,
    estimate: &TrajectorySet,
) -> Result<Option<Window>> {
    if truth.dim() != estimate.dim() {
        return Err(Error::Mismatch(format!(
            "the truth has states of {} values and the estimate of {}",
            truth.dim(),
            estimate.dim()
        )));
    }
    let Some(window) = Window::covering(truth, estimate) else {
        return Ok(None);
    };
    let length = window.last as i128 - window.first as i128 + 1;
    if length > MAX_WINDOW_STEPS as i128 {
        return Err(Error::Mismatch(format!(
            "the steps run from {} to {}: {length} steps, more than the {MAX_WINDOW_STEPS} supported \
             (is the time step right?)",
            window.first, window.last
        )));
    }
    Ok(Some(window))
}

#[cfg(test)]
mod frames_tests {
    use super::*;

    fn set(objects: &[(&str, &[Step])]) -> TrajectorySet {
        let trajectories = objects
            .iter()
            .map(|(id, steps)| {
                Trajectory::new(*id, 1, steps.iter().map(|&s| (s, vec![s as f64])).collect())
                    .unwrap()
            })
            .collect();
        TrajectorySet::new(1, trajectories).unwrap()
    }

    /// Checks every step of the window against the definition: the objects whose trajectory
    /// has a state at that step, by increasing index, pointing at that state.
    fn check(set: &TrajectorySet, window: Window) {
        let frames = Frames::new(set, window);
        let mut occupied = Vec::new();
        for index in 0..window.len() {
            let step = window.first + index as Step;
            let expected: Vec<u32> = (0..set.len())
                .filter(|&k| set.get(k).state_at(step).is_some())
                .map(|k| k as u32)
                .collect();
            let found = frames.at(index);
            assert_eq!(
                found.iter().map(|p| p.object).collect::<Vec<_>>(),
                expected,
                "step {step}"
            );
            for p in found {
                let trajectory = set.get(p.object as usize);
                assert_eq!(trajectory.steps()[p.point as usize], step);
            }
            if !expected.is_empty() {
                occupied.push(step);
            }
        }
        assert_eq!(frames.occupied(), occupied.as_slice());
    }

    #[test]
    fn dense_and_sparse_indexing_agree_with_the_definition() {
        // 9 points over 12 steps: indexed by counting (12 <= 4 x 9).
        let dense = set(&[("a", &[0, 1, 2, 5]), ("b", &[1, 2, 11]), ("c", &[2, 9])]);
        check(&dense, Window { first: 0, last: 11 });
        // 5 points over 1,001 steps: indexed by sorting; ids given out of step order.
        let sparse = set(&[("b", &[500, 1_000]), ("a", &[0, 500]), ("c", &[999])]);
        check(
            &sparse,
            Window {
                first: 0,
                last: 1_000,
            },
        );
        // Points outside the window are left out, in both ways.
        check(
            &sparse,
            Window {
                first: 1,
                last: 999,
            },
        );
        check(&dense, Window { first: 2, last: 9 });
    }
}
