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
//! span (in present steps), then the most missed steps, then input order.

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
}

/// The audit of a whole scene.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Audit {
    /// Truths, worst first.
    pub truths: Vec<TruthAudit>,
    /// Estimates, in input order.
    pub estimates: Vec<EstimateAudit>,
}

/// Builds the audit from a score and its switch events. O(pairs' close steps + points).
pub fn audit(
    score: &TrajectoryScore,
    truth: &TrajectorySet,
    estimate: &TrajectorySet,
    switches: &[SwitchEvent],
) -> Audit {
    let order = score.params.order;
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
        });
    }
    let mut ranked: Vec<usize> = (0..truths.len()).collect();
    ranked.sort_by(|&a, &b| {
        let (x, y) = (&truths[a], &truths[b]);
        y.switches
            .total_cmp(&x.switches)
            .then(y.longest_missed.cmp(&x.longest_missed))
            .then(y.missed_steps.cmp(&x.missed_steps))
            .then(a.cmp(&b))
    });
    let mut truths: Vec<Option<TruthAudit>> = truths.into_iter().map(Some).collect();
    let truths: Vec<TruthAudit> = ranked
        .iter()
        .enumerate()
        .map(|(rank, &index)| {
            let mut entry = truths[index].take().expect("each truth ranked once");
            entry.rank = rank + 1;
            entry
        })
        .collect();
    let estimates = estimate
        .trajectories()
        .iter()
        .enumerate()
        .map(|(j, trajectory)| estimate_audit(trajectory, &mut followed[j], truth))
        .collect();
    Audit { truths, estimates }
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
    }
}
