//! Coverage audit: how each true object was covered over time, and what each estimated track
//! followed, read from the trajectory LP's weights.
//!
//! A truth present at a step is **covered** there by the estimate whose pair is close at that
//! step with the largest weight, if that weight is at least 1/2 (ties go to the estimate listed
//! first). In an integral solution that is exactly the assigned estimate. Spans are maximal
//! runs of the object's own present steps with one covering estimate (or none: a missed span);
//! steps at which the object is absent neither break nor extend a span's count.
//!
//! Truths are ranked worst first: most switches (full = 1, half = 0.5), then the longest missed
//! span (in present steps), then the most missed steps, then input order ([`Audit::rank_by_cost`]
//! ranks them by their cost instead).
//!
//! **Costs per object.** Trajectory GOSPA^p splits exactly over the objects: a truth carries the
//! localisation of its pairs (Σ weight x d^p over its close steps), its missed part (c^p / 2 per
//! present step times the weight not assigned) and the switching of its pairs (gamma^p / 2 per
//! unit of weight change of each of its pairs); a track carries its false part (c^p / 2 per
//! present step times the weight not assigned). With a missed share S (specs/missed-share.md)
//! the missed part is S c^p and the false part (1 - S) c^p per step. The truths' costs and the
//! tracks' false costs add up to the total; each object's share is its cost over the total.

use serde::Serialize;

use crate::assignment::switches::SwitchEvent;
use crate::distance::root;
use crate::trajectory::{Step, TrajectorySet};
use crate::trajectory_metric::TrajectoryScore;

/// A run of steps during which one estimate covered a truth.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CoverSpan {
    /// First covered step.
    pub first: Step,
    /// Last covered step.
    pub last: Step,
    /// Present steps in the span.
    pub steps: usize,
    /// The covering estimate.
    pub estimate: String,
    /// Mean distance between truth and estimate over the span (not raised to p).
    pub mean_error: f64,
}

/// A run of present steps with no coverage (for a truth: missed; for an estimate: false).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct GapSpan {
    /// First step.
    pub first: Step,
    /// Last step.
    pub last: Step,
    /// Present steps in the span.
    pub steps: usize,
}

/// What one truth costs in trajectory GOSPA^p (p-th power units).
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize)]
pub struct TruthCosts {
    /// Σ weight x d^p over its pairs' close steps.
    #[serde(rename = "localisation")]
    pub localization: f64,
    /// The missed cost (c^p / 2, or S c^p with a missed share S) per present step, times the
    /// weight not assigned there.
    pub missed: f64,
    /// gamma^p / 2 per unit of weight change of its pairs.
    pub switching: f64,
    /// The three together.
    pub total: f64,
    /// `total` over the scene's total (0 when that is 0).
    pub share: f64,
}

/// What one track costs in trajectory GOSPA^p, and the localisation of its pairs (already in
/// the truths' costs, given for information).
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize)]
pub struct TrackCosts {
    /// The false cost (c^p / 2, or (1 - S) c^p with a missed share S) per present step, times
    /// the weight not assigned there: its cost.
    #[serde(rename = "false")]
    pub false_: f64,
    /// `false` over the scene's total (0 when that is 0).
    pub share: f64,
    /// Σ weight x d^p over its pairs' close steps (counted with the truths).
    #[serde(rename = "localisation")]
    pub localization: f64,
}

/// How one truth was covered.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct TruthAudit {
    /// 1 for the worst-handled truth.
    pub rank: usize,
    /// The truth's id.
    pub truth: String,
    /// Steps at which it is present.
    pub present_steps: usize,
    /// Present steps covered by some estimate.
    pub covered_steps: usize,
    /// Present steps not covered.
    pub missed_steps: usize,
    /// Present steps in its longest missed span.
    pub longest_missed: usize,
    /// Distinct estimates that covered it.
    pub estimates: usize,
    /// Its switches: full = 1, half = 0.5 (weighted by the weight moved).
    pub switches: f64,
    /// Coverage spans in time order.
    pub covered: Vec<CoverSpan>,
    /// Missed spans in time order.
    pub missed: Vec<GapSpan>,
    /// What it costs.
    pub costs: TruthCosts,
    /// The object class, in the list of all classes together (`--class-column`); absent
    /// otherwise.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub class: Option<String>,
}

/// A run of steps during which an estimate followed one truth.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct FollowSpan {
    /// First step.
    pub first: Step,
    /// Last step.
    pub last: Step,
    /// Present steps in the span.
    pub steps: usize,
    /// The truth followed.
    pub truth: String,
}

/// What one estimate followed.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct EstimateAudit {
    /// The estimate's id.
    pub estimate: String,
    /// Steps at which it is present.
    pub present_steps: usize,
    /// Present steps at which it follows no truth.
    pub false_steps: usize,
    /// Distinct truths it followed.
    pub truths: usize,
    /// Spans following one truth, in time order.
    pub following: Vec<FollowSpan>,
    /// Spans following nothing, in time order.
    pub false_spans: Vec<GapSpan>,
    /// What it costs.
    pub costs: TrackCosts,
    /// The object class, in the list of all classes together (`--class-column`); absent
    /// otherwise.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub class: Option<String>,
}

/// The audit of a whole scene.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Audit {
    /// Truths, worst first.
    pub truths: Vec<TruthAudit>,
    /// Estimates, in input order.
    pub estimates: Vec<EstimateAudit>,
}

impl Audit {
    /// Ranks the truths by their cost, highest first (ties: the switch ranking), and the
    /// tracks by their false cost, highest first (ties: their localisation, then input order).
    pub fn rank_by_cost(&mut self) {
        self.truths.sort_by(|a, b| {
            b.costs
                .total
                .total_cmp(&a.costs.total)
                .then(a.rank.cmp(&b.rank))
        });
        for (k, truth) in self.truths.iter_mut().enumerate() {
            truth.rank = k + 1;
        }
        self.rank_tracks_by_cost();
    }

    /// Orders the tracks by their false cost, highest first (ties: their localisation, then
    /// input order).
    pub fn rank_tracks_by_cost(&mut self) {
        self.estimates.sort_by(|a, b| {
            b.costs
                .false_
                .total_cmp(&a.costs.false_)
                .then(b.costs.localization.total_cmp(&a.costs.localization))
        });
    }

    /// Keeps the first `n` truths and the first `n` tracks.
    pub fn keep(&mut self, n: usize) {
        self.truths.truncate(n);
        self.estimates.truncate(n);
    }
}

/// Ranks truths worst first by their switches, then the longest missed span, then the most
/// missed steps, then their order in `truths`.
fn rank_by_switches(mut truths: Vec<TruthAudit>) -> Vec<TruthAudit> {
    // A stable sort keeps the input order among ties.
    truths.sort_by(|x, y| {
        y.switches
            .total_cmp(&x.switches)
            .then(y.longest_missed.cmp(&x.longest_missed))
            .then(y.missed_steps.cmp(&x.missed_steps))
    });
    for (rank, entry) in truths.iter_mut().enumerate() {
        entry.rank = rank + 1;
    }
    truths
}

impl Audit {
    /// The audits of a scene's disjoint parts (its classes, each with its name) as one: each
    /// object tagged with its part's name, the truths ranked together by the switch ranking
    /// (ties in the order of `parts`), the tracks in the order of `parts`, each object's share
    /// taken of `total`, the d^p of the whole scene.
    pub fn combine(parts: Vec<(String, Audit)>, total: f64) -> Audit {
        let share = |cost: f64| if total > 0.0 { cost / total } else { 0.0 };
        let mut truths = Vec::new();
        let mut estimates = Vec::new();
        for (class, part) in parts {
            let mut part_truths = part.truths;
            part_truths.sort_by_key(|t| t.rank);
            for truth in &mut part_truths {
                truth.class = Some(class.clone());
            }
            truths.extend(part_truths);
            estimates.extend(part.estimates.into_iter().map(|estimate| EstimateAudit {
                class: Some(class.clone()),
                ..estimate
            }));
        }
        for truth in &mut truths {
            truth.costs.share = share(truth.costs.total);
        }
        for estimate in &mut estimates {
            estimate.costs.share = share(estimate.costs.false_);
        }
        Audit {
            truths: rank_by_switches(truths),
            estimates,
        }
    }
}

/// Builds the audit from a score and its switch events. O(pairs' close steps + points).
pub fn audit(
    score: &TrajectoryScore,
    truth: &TrajectorySet,
    estimate: &TrajectorySet,
    switches: &[SwitchEvent],
) -> Audit {
    let order = score.params.order;
    let (truth_costs, track_costs) = costs(score, truth, estimate);
    // For each truth, the best covering (step, estimate, weight, distance) per close step.
    let mut cover: Vec<Vec<(Step, usize, f64, f64)>> = vec![Vec::new(); truth.len()];
    for pair in &score.assignment.pairs {
        for close in &pair.close {
            let weight = pair.weight_at(close.step);
            if weight >= 0.5 {
                cover[pair.truth].push((
                    close.step,
                    pair.estimate,
                    weight,
                    root(close.cost, order),
                ));
            }
        }
    }
    // Each truth's switches, full 1 and half 0.5, weighted: one pass over the events.
    let mut switch_totals: std::collections::HashMap<&str, f64> = Default::default();
    for e in switches {
        let units = if e.from.is_some() && e.to.is_some() {
            e.weight
        } else {
            e.weight / 2.0
        };
        *switch_totals.entry(e.truth.as_str()).or_default() += units;
    }
    let mut followed: Vec<Vec<(Step, usize)>> = vec![Vec::new(); estimate.len()];
    let mut truths = Vec::with_capacity(truth.len());
    for (i, trajectory) in truth.trajectories().iter().enumerate() {
        let entries = &mut cover[i];
        entries.sort_by(|a, b| a.0.cmp(&b.0).then(b.2.total_cmp(&a.2)).then(a.1.cmp(&b.1)));
        entries.dedup_by_key(|e| e.0);
        let mut covered: Vec<CoverSpan> = Vec::new();
        let mut missed: Vec<GapSpan> = Vec::new();
        let mut used: Vec<usize> = Vec::new();
        let mut errors: Vec<f64> = Vec::new();
        let mut next = 0;
        let mut last_state: Option<Option<usize>> = None;
        for &step in trajectory.steps() {
            while next < entries.len() && entries[next].0 < step {
                next += 1;
            }
            let state = match entries.get(next) {
                Some(&(s, j, _, d)) if s == step => Some((j, d)),
                _ => None,
            };
            let key = state.map(|(j, _)| j);
            match (state, last_state == Some(key)) {
                (Some((j, d)), true) => {
                    let span = covered.last_mut().expect("a span is open");
                    span.last = step;
                    span.steps += 1;
                    errors.push(d);
                    followed[j].push((step, i));
                }
                (Some((j, d)), false) => {
                    close_errors(&mut covered, &mut errors);
                    covered.push(CoverSpan {
                        first: step,
                        last: step,
                        steps: 1,
                        estimate: estimate.get(j).id().to_string(),
                        mean_error: 0.0,
                    });
                    errors.push(d);
                    if !used.contains(&j) {
                        used.push(j);
                    }
                    followed[j].push((step, i));
                }
                (None, true) => {
                    let span = missed.last_mut().expect("a span is open");
                    span.last = step;
                    span.steps += 1;
                }
                (None, false) => {
                    close_errors(&mut covered, &mut errors);
                    missed.push(GapSpan {
                        first: step,
                        last: step,
                        steps: 1,
                    });
                }
            }
            last_state = Some(key);
        }
        close_errors(&mut covered, &mut errors);
        let covered_steps: usize = covered.iter().map(|s| s.steps).sum();
        let switch_total = switch_totals.get(trajectory.id()).copied().unwrap_or(0.0);
        truths.push(TruthAudit {
            rank: 0,
            truth: trajectory.id().to_string(),
            present_steps: trajectory.len(),
            covered_steps,
            missed_steps: trajectory.len() - covered_steps,
            longest_missed: missed.iter().map(|s| s.steps).max().unwrap_or(0),
            estimates: used.len(),
            switches: switch_total,
            covered,
            missed,
            costs: truth_costs[i],
            class: None,
        });
    }
    let truths = rank_by_switches(truths);
    let estimates = estimate
        .trajectories()
        .iter()
        .enumerate()
        .map(|(j, trajectory)| EstimateAudit {
            costs: track_costs[j],
            ..estimate_audit(trajectory, &mut followed[j], truth)
        })
        .collect();
    Audit { truths, estimates }
}

/// Each truth's and each track's cost (module doc), in input order.
fn costs(
    score: &TrajectoryScore,
    truth: &TrajectorySet,
    estimate: &TrajectorySet,
) -> (Vec<TruthCosts>, Vec<TrackCosts>) {
    let missed_cost = score.params.missed_cost();
    let false_cost = score.params.false_cost();
    let switch_cost = score.params.switch_cost();
    let mut truths = vec![TruthCosts::default(); truth.len()];
    let mut tracks = vec![TrackCosts::default(); estimate.len()];
    let mut truth_assigned = vec![0.0; truth.len()];
    let mut track_assigned = vec![0.0; estimate.len()];
    for pair in &score.assignment.pairs {
        let mut localization = 0.0;
        let mut assigned = 0.0;
        for close in &pair.close {
            let weight = pair.weight_at(close.step);
            localization += weight * close.cost;
            assigned += weight;
        }
        truths[pair.truth].localization += localization;
        truths[pair.truth].switching += switch_cost * score.assignment.variation(pair);
        truth_assigned[pair.truth] += assigned;
        tracks[pair.estimate].localization += localization;
        track_assigned[pair.estimate] += assigned;
    }
    let share = |cost: f64| {
        if score.total > 0.0 {
            cost / score.total
        } else {
            0.0
        }
    };
    for (i, costs) in truths.iter_mut().enumerate() {
        costs.missed = missed_cost * (truth.get(i).len() as f64 - truth_assigned[i]).max(0.0);
        costs.total = costs.localization + costs.missed + costs.switching;
        costs.share = share(costs.total);
    }
    for (j, costs) in tracks.iter_mut().enumerate() {
        costs.false_ = false_cost * (estimate.get(j).len() as f64 - track_assigned[j]).max(0.0);
        costs.share = share(costs.false_);
    }
    (truths, tracks)
}

fn close_errors(covered: &mut [CoverSpan], errors: &mut Vec<f64>) {
    if let Some(span) = covered.last_mut() {
        if !errors.is_empty() {
            span.mean_error = errors.iter().sum::<f64>() / errors.len() as f64;
        }
    }
    errors.clear();
}

fn estimate_audit(
    trajectory: &crate::trajectory::Trajectory,
    followed: &mut [(Step, usize)],
    truth: &TrajectorySet,
) -> EstimateAudit {
    followed.sort_unstable();
    let mut following: Vec<FollowSpan> = Vec::new();
    let mut false_spans: Vec<GapSpan> = Vec::new();
    let mut truths: Vec<usize> = Vec::new();
    let mut next = 0;
    let mut last_state: Option<Option<usize>> = None;
    for &step in trajectory.steps() {
        while next < followed.len() && followed[next].0 < step {
            next += 1;
        }
        let state = match followed.get(next) {
            Some(&(s, i)) if s == step => Some(i),
            _ => None,
        };
        let continues = last_state == Some(state);
        match state {
            Some(_) if continues => {
                let span = following.last_mut().expect("a span is open");
                span.last = step;
                span.steps += 1;
            }
            Some(i) => {
                following.push(FollowSpan {
                    first: step,
                    last: step,
                    steps: 1,
                    truth: truth.get(i).id().to_string(),
                });
                if !truths.contains(&i) {
                    truths.push(i);
                }
            }
            None if continues => {
                let span = false_spans.last_mut().expect("a span is open");
                span.last = step;
                span.steps += 1;
            }
            None => false_spans.push(GapSpan {
                first: step,
                last: step,
                steps: 1,
            }),
        }
        last_state = Some(state);
    }
    EstimateAudit {
        estimate: trajectory.id().to_string(),
        present_steps: trajectory.len(),
        false_steps: false_spans.iter().map(|s| s.steps).sum(),
        truths: truths.len(),
        following,
        false_spans,
        costs: TrackCosts::default(),
        class: None,
    }
}
