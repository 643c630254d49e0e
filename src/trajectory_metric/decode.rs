//! From solved weights to a score: each pair's LP values read as runs of equal weight, the parts
//! and total computed from those weights (so that they add up exactly), the certificate filled
//! in from how the components were solved, and the integral weights of the exact pass put in
//! place of the LP's.

use super::component::{ExactComponent, Method};
use super::model::Segment;
use super::pairs::CandidatePair;
use super::result::{
    Assignment, Certificate, ExactSummary, PairAssignment, Parts, SolveStats, TrajectoryScore,
    WeightSpan,
};
use super::{SolveOptions, TrajectoryParams};
use crate::distance::root;
use crate::trajectory::Window;

/// Weights this close to 0 or 1 are read as exactly 0 or 1.
const SNAP: f64 = 1e-9;
/// A solution is integral when every weight is this close to 0 or 1.
const INTEGRAL_TOLERANCE: f64 = 1e-6;

/// Fills in the certificate of an LP score from how its components were solved and the proven
/// lower bound of its d^p; an assignment is integral only when it is also proven.
pub(super) fn certify(
    mut score: TrajectoryScore,
    methods: &[(Method, usize)],
    lower: f64,
) -> TrajectoryScore {
    let count = |m: Method| methods.iter().filter(|(method, _)| *method == m).count();
    let bounded = count(Method::Bounded);
    let upper = score.total;
    let lower = lower.min(upper);
    score.certificate = Certificate {
        proven: bounded == 0,
        lower,
        upper,
        gap: Certificate::relative_gap(lower, upper),
        closed_form: count(Method::ClosedForm),
        lagrangian: count(Method::Lagrangian),
        simplex: count(Method::Simplex),
        bounded,
        iterations: methods.iter().map(|m| m.1).max().unwrap_or(0),
    };
    score.integral &= bounded == 0;
    score
}

/// With [`SolveOptions::exact`]: puts the integral weights of the components re-solved as
/// integer programs in place of their LP weights, recomputes the parts from them, and fills in
/// the LP value and the certificate. Without it, returns the LP score unchanged. `points` are
/// the truth and estimate object-steps.
pub(super) fn with_exact(
    lp: TrajectoryScore,
    components: Vec<ExactComponent>,
    options: &SolveOptions,
    params: &TrajectoryParams,
    points: (usize, usize),
) -> TrajectoryScore {
    let Some(budget) = options.exact else {
        return lp;
    };
    let count = components.len();
    let unproven = components.iter().filter(|c| !c.proven).count();
    let gap: f64 = components.iter().map(|c| c.gap).sum();
    let nodes = components.iter().map(|c| c.nodes).sum();
    let mut score = if components.is_empty() {
        lp
    } else {
        let mut pairs = lp.assignment.pairs.clone();
        for pair in components.into_iter().flat_map(|c| c.pairs) {
            // Every pair of a component is a candidate pair of the LP score, sorted by key.
            if let Ok(index) =
                pairs.binary_search_by_key(&(pair.truth, pair.estimate), |p| (p.truth, p.estimate))
            {
                pairs[index] = pair;
            }
        }
        let mut score = finish(params, lp.window, pairs, 0.0, lp.stats, points.0, points.1);
        score.lp_objective = lp.lp_objective;
        score.lp_total = lp.total;
        score.integral = lp.integral;
        score.certificate = lp.certificate;
        score.notes = lp.notes;
        score
    };
    // Components reported with bounds only keep their LP gap in the exact metric's bounds.
    let bounded = score.certificate.bounded > 0;
    let proven = unproven == 0 && !bounded;
    let lower = if proven {
        score.total
    } else if bounded {
        let lp_gap = score.certificate.upper - score.certificate.lower;
        (score.total - gap - lp_gap).min(score.total)
    } else {
        (score.total - gap).clamp(score.lp_total.min(score.total), score.total)
    };
    score.exact_total = proven.then_some(score.total);
    score.exact = Some(ExactSummary {
        proven,
        lower,
        upper: score.total,
        components: count,
        unproven_components: unproven,
        nodes,
        budget,
    });
    score
}

/// A weight within [`SNAP`] of 0 or 1 read as exactly that; any other clamped to [0, 1].
fn snap(value: f64) -> f64 {
    if value.abs() < SNAP {
        0.0
    } else if (value - 1.0).abs() < SNAP {
        1.0
    } else {
        value.clamp(0.0, 1.0)
    }
}

/// The cost of a component's weights relative to leaving its objects unassigned (the units of
/// the LP objective): gains at close steps plus gamma^p / 2 per unit of weight change.
pub(super) fn component_cost(
    pairs: &[PairAssignment],
    window: Window,
    params: &TrajectoryParams,
) -> f64 {
    let cutoff_power = params.cutoff_power();
    let frame = Assignment {
        window: Some(window),
        pairs: Vec::new(),
    };
    pairs
        .iter()
        .map(|pair| {
            let gain: f64 = pair
                .close
                .iter()
                .map(|c| pair.weight_at(c.step) * (c.cost - cutoff_power))
                .sum();
            gain + params.switch_cost() * frame.variation(pair)
        })
        .sum()
}

/// Whether every weight of a pair is within [`INTEGRAL_TOLERANCE`] of 0 or 1.
pub(super) fn is_integral(pair: &PairAssignment) -> bool {
    pair.spans
        .iter()
        .all(|s| (s.weight - 1.0).abs() < INTEGRAL_TOLERANCE || s.weight < INTEGRAL_TOLERANCE)
}

/// Reads a pair's segment values into maximal runs of equal non-zero weight.
pub(super) fn decode(pair: &CandidatePair, segments: &[Segment], values: &[f64]) -> PairAssignment {
    let mut spans: Vec<WeightSpan> = Vec::new();
    for segment in segments {
        let weight = snap(values[segment.var]);
        if weight == 0.0 {
            continue;
        }
        match spans.last_mut() {
            Some(last) if last.last + 1 == segment.first && last.weight == weight => {
                last.last = segment.last;
            }
            _ => spans.push(WeightSpan {
                first: segment.first,
                last: segment.last,
                weight,
            }),
        }
    }
    PairAssignment {
        truth: pair.truth,
        estimate: pair.estimate,
        spans,
        close: pair.close.clone(),
    }
}

/// Computes the parts from the decoded weights, so that they add up to the total exactly.
pub(super) fn finish(
    params: &TrajectoryParams,
    window: Option<Window>,
    pairs: Vec<PairAssignment>,
    objective: f64,
    stats: SolveStats,
    truth_points: usize,
    estimate_points: usize,
) -> TrajectoryScore {
    let assignment = Assignment { window, pairs };
    let cutoff_power = params.cutoff_power();
    let half = cutoff_power / 2.0;
    let mut localization = 0.0;
    let mut assigned = 0.0;
    let mut variation = 0.0;
    let mut integral = true;
    for pair in &assignment.pairs {
        for close in &pair.close {
            let weight = pair.weight_at(close.step);
            localization += weight * close.cost;
            assigned += weight;
        }
        variation += assignment.variation(pair);
        integral &= is_integral(pair);
    }
    let missed_count = (truth_points as f64 - assigned).max(0.0);
    let false_count = (estimate_points as f64 - assigned).max(0.0);
    let parts = Parts {
        localization,
        missed: half * missed_count,
        false_: half * false_count,
        switching: params.switch_cost() * variation,
        missed_count,
        false_count,
        switch_count: variation / 2.0,
    };
    let total = parts.sum();
    let steps = window.map_or(0, |w| w.len());
    let per_step = if steps == 0 {
        0.0
    } else {
        root(total / steps as f64, params.order)
    };
    TrajectoryScore {
        params: *params,
        window,
        steps,
        metric: root(total, params.order),
        total,
        per_step,
        parts,
        integral,
        lp_objective: half * (truth_points + estimate_points) as f64 + objective,
        lp_total: total,
        exact_total: None,
        exact: None,
        stats,
        certificate: Certificate::default(),
        notes: Vec::new(),
        assignment,
    }
}

/// Prices the missed and false object-steps of a score solved with the standard costs (c^p / 2
/// each) at the parameters' costs, S c^p and (1 - S) c^p: the parts, the total and every bound
/// move by the same constant, (S - 1/2) c^p (truth - estimate object-steps), because every unit
/// of pair weight removes one missed and one false object-step (specs/missed-share.md). Done last,
/// so that the engines and their checks work in the standard units. Unchanged for S = 1/2.
pub(super) fn with_missed_share(
    mut score: TrajectoryScore,
    params: &TrajectoryParams,
) -> TrajectoryScore {
    if super::is_even_share(&params.missed_share) {
        return score;
    }
    let old_total = score.total;
    score.parts.missed = params.missed_cost() * score.parts.missed_count;
    score.parts.false_ = params.false_cost() * score.parts.false_count;
    let total = score.parts.sum();
    let shift = total - old_total;
    // A value equal to the total stays equal to it; a bound moves with it and stays within
    // [0, total] (d^p is never negative).
    let moved = |value: f64| {
        if value == old_total {
            total
        } else {
            (value + shift).max(0.0)
        }
    };
    score.total = total;
    score.metric = root(total, params.order);
    score.per_step = if score.steps == 0 {
        0.0
    } else {
        root(total / score.steps as f64, params.order)
    };
    score.lp_objective += shift;
    score.lp_total = moved(score.lp_total);
    score.exact_total = score.exact_total.map(moved);
    let certificate = &mut score.certificate;
    certificate.upper = moved(certificate.upper);
    certificate.lower = moved(certificate.lower).min(certificate.upper);
    certificate.gap = Certificate::relative_gap(certificate.lower, certificate.upper);
    if let Some(exact) = &mut score.exact {
        exact.upper = moved(exact.upper);
        exact.lower = moved(exact.lower).min(exact.upper);
    }
    score
}
