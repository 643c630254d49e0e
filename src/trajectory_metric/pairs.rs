//! Candidate pairs and their components.
//!
//! A (truth, estimate) pair is a candidate when the two are closer than the cut-off at some step
//! where both are present ("close"). Every other pair can be fixed to zero weight: it never gains
//! anything and only uses capacity and adds switches (proof in specs/trajectory-lp.md). The
//! candidate pairs form a bipartite graph between truths and estimates; its connected
//! components are independent linear programs.

use pathfinding::undirected::connected_components::separate_components;

use crate::distance::{power, Distance, Gate};
use crate::trajectory::{Frames, Step, TrajectorySet, Window};

/// One step at which a pair is close.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CloseStep {
    /// The step.
    pub step: Step,
    /// d^p at that step (d < c).
    pub cost: f64,
}

/// A truth-estimate pair that is close at one step or more.
#[derive(Clone, Debug, PartialEq)]
pub struct CandidatePair {
    /// Truth index in its set.
    pub truth: usize,
    /// Estimate index in its set.
    pub estimate: usize,
    /// The steps at which the two are close, increasing.
    pub close: Vec<CloseStep>,
}

impl CandidatePair {
    /// The first and last close step.
    pub fn active_span(&self) -> (Step, Step) {
        (self.close[0].step, self.close[self.close.len() - 1].step)
    }
}

/// Every candidate pair of two sets over a window, sorted by (truth, estimate).
/// O(sum over steps of truths x estimates present) distance evaluations.
pub fn candidate_pairs(
    truth: &TrajectorySet,
    estimate: &TrajectorySet,
    window: Window,
    cutoff: f64,
    order: f64,
    distance: &Distance,
) -> Vec<CandidatePair> {
    let mut events: Vec<(u32, u32, Step, f64)> = Vec::new();
    for_each_close_step(
        truth,
        estimate,
        window,
        cutoff,
        distance,
        |i, j, step, d| events.push((i, j, step, power(d, order))),
    );
    events.sort_unstable_by_key(|a| (a.0, a.1, a.2));
    let mut pairs: Vec<CandidatePair> = Vec::new();
    for (i, j, step, cost) in events {
        match pairs.last_mut() {
            Some(pair) if pair.truth == i as usize && pair.estimate == j as usize => {
                pair.close.push(CloseStep { step, cost });
            }
            _ => pairs.push(CandidatePair {
                truth: i as usize,
                estimate: j as usize,
                close: vec![CloseStep { step, cost }],
            }),
        }
    }
    pairs
}

/// Calls `found(truth, estimate, step, d)` for every truth and estimate closer than the cut-off
/// at a step where both are present, step by step.
pub fn for_each_close_step(
    truth: &TrajectorySet,
    estimate: &TrajectorySet,
    window: Window,
    cutoff: f64,
    distance: &Distance,
    mut found: impl FnMut(u32, u32, Step, f64),
) {
    let truth_frames = Frames::new(truth, window);
    let estimate_frames = Frames::new(estimate, window);
    let mut gate = Gate::default();
    // Only the steps where some object is present: the window may be far longer than the data.
    for (step, xs, ys) in truth_frames.occupied_with(&estimate_frames) {
        if xs.is_empty() || ys.is_empty() {
            continue;
        }
        gate.close_pairs(
            (xs.len(), |i| {
                truth.get(xs[i].object as usize).state(xs[i].point as usize)
            }),
            (ys.len(), |j| {
                estimate
                    .get(ys[j].object as usize)
                    .state(ys[j].point as usize)
            }),
            cutoff,
            distance,
            |i, j, d| found(xs[i].object, ys[j].object, step, d),
        );
    }
}

/// A node of the pair graph.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
enum Node {
    Truth(usize),
    Estimate(usize),
}

/// Splits pairs into connected components of the truth-estimate graph. Each component lists
/// the indices of its pairs, increasing; components are ordered by their first pair.
pub fn components(pairs: &[CandidatePair]) -> Vec<Vec<usize>> {
    let groups: Vec<Vec<Node>> = pairs
        .iter()
        .map(|p| vec![Node::Truth(p.truth), Node::Estimate(p.estimate)])
        .collect();
    let (_, group_component) = separate_components(&groups);
    // Renumber components by their first pair so the order does not depend on hashing.
    let mut renumber = std::collections::HashMap::new();
    let mut result: Vec<Vec<usize>> = Vec::new();
    for (pair, &component) in group_component.iter().enumerate() {
        let index = *renumber.entry(component).or_insert_with(|| {
            result.push(Vec::new());
            result.len() - 1
        });
        result[index].push(pair);
    }
    result
}

/// The most close steps the candidate pairs can hold: truths times estimates present, summed
/// over the steps at which both sets have objects. O(points), no distance computed.
pub fn most_close_steps(truth: &TrajectorySet, estimate: &TrajectorySet, window: Window) -> usize {
    let mut counts: rustc_hash::FxHashMap<Step, (usize, usize)> = Default::default();
    for trajectory in truth.trajectories() {
        for &step in trajectory.steps() {
            if window.first <= step && step <= window.last {
                counts.entry(step).or_default().0 += 1;
            }
        }
    }
    for trajectory in estimate.trajectories() {
        for &step in trajectory.steps() {
            if let Some(count) = counts.get_mut(&step) {
                count.1 += 1;
            }
        }
    }
    counts.values().fold(0usize, |sum, &(x, y)| {
        sum.saturating_add(x.saturating_mul(y))
    })
}
