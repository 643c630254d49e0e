//! Trajectory GOSPA through its linear-program relaxation.
//!
//! Source: Á. F. García-Fernández, A. S. Rahmathullah, L. Svensson, "A metric on the space of
//! finite sets of trajectories for evaluation of multi-target tracking algorithms", IEEE Trans.
//! Signal Processing 68:3917-3928, 2020 (arXiv:1605.01177). The exact metric minimises over
//! per-step assignments the localisation, missed and false costs plus gamma^p / 2 per unit of
//! assignment change; its LP relaxation (weights in [0, 1]) is itself a metric, a lower bound
//! of the exact one, and equal to it whenever the optimum found is integral.
//!
//! The LP is solved after exact reductions ([`pairs`], [`model`]; proofs in
//! specs/trajectory-lp.md): pairs never close are fixed to zero, the rest split into connected
//! components solved independently (in parallel), and each component is event-compressed.
//!
//! With [`SolveOptions::exact`], components whose LP optimum is fractional are solved again as
//! integer programs ([`exact`]), and the score reports the exact metric with its certificate.

pub mod checks;
pub mod exact;
pub mod model;
pub mod pairs;
pub mod solve;

use std::time::Instant;

use rayon::prelude::*;
use serde::Serialize;

pub use self::exact::ExactBudget;
use self::model::{build, ComponentModel, Reduction, Segment};
use self::pairs::{candidate_pairs, components, CandidatePair, CloseStep};
pub use self::solve::Engine;
use crate::distance::{power, root, Distance};
use crate::error::{Error, Result};
use crate::per_step::check_cutoff_order;
use crate::trajectory::{evaluation_window, Step, TrajectorySet, Window};

/// Weights this close to 0 or 1 are read as exactly 0 or 1.
const SNAP: f64 = 1e-9;
/// A solution is integral when every weight is this close to 0 or 1.
const INTEGRAL_TOLERANCE: f64 = 1e-6;

/// The parameters of trajectory GOSPA.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct TrajectoryParams {
    /// Cut-off c > 0.
    pub cutoff: f64,
    /// Order p >= 1.
    pub order: f64,
    /// Switching penalty gamma >= 0: a full switch costs gamma^p, a half switch gamma^p / 2.
    pub switch_penalty: f64,
}

impl TrajectoryParams {
    /// Checks and builds the parameters.
    ///
    /// # Errors
    /// A cut-off that is not positive and finite, an order below 1, a negative or non-finite
    /// switching penalty.
    pub fn new(cutoff: f64, order: f64, switch_penalty: f64) -> Result<Self> {
        check_cutoff_order(cutoff, order)?;
        if !(switch_penalty.is_finite() && switch_penalty >= 0.0) {
            return Err(Error::Parameter(format!(
                "the switching penalty must be a finite number >= 0, got {switch_penalty}"
            )));
        }
        if switch_penalty > 0.0 && power(switch_penalty, order) < f64::MIN_POSITIVE {
            return Err(Error::Parameter(format!(
                "the switching penalty {switch_penalty} raised to the order {order} underflows; \
                 use 0 for no penalty"
            )));
        }
        if !power(switch_penalty, order).is_finite() {
            return Err(Error::Parameter(format!(
                "the switching penalty {switch_penalty} raised to the order {order} overflows"
            )));
        }
        Ok(TrajectoryParams {
            cutoff,
            order,
            switch_penalty,
        })
    }

    /// c^p.
    pub fn cutoff_power(&self) -> f64 {
        power(self.cutoff, self.order)
    }

    /// gamma^p / 2: the cost of one unit of weight change of one pair.
    pub fn switch_cost(&self) -> f64 {
        power(self.switch_penalty, self.order) / 2.0
    }
}

/// How the LP is built and solved. The defaults are the fastest exact choice.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct SolveOptions {
    /// The LP engine.
    pub engine: Engine,
    /// How far each component is reduced.
    pub reduction: Reduction,
    /// Split candidate pairs into connected components (otherwise one LP for all).
    pub split_components: bool,
    /// Keep every truth-estimate pair, close or not (only with [`Reduction::PerStep`] or
    /// [`Reduction::ActiveSteps`]; for checking the reductions).
    pub keep_far_pairs: bool,
    /// Compute the exact (integral) metric within this budget: components whose LP optimum is
    /// fractional are solved again as integer programs. `None`: the LP only.
    pub exact: Option<ExactBudget>,
}

impl Default for SolveOptions {
    fn default() -> Self {
        SolveOptions {
            engine: Engine::default(),
            reduction: Reduction::Events,
            split_components: true,
            keep_far_pairs: false,
            exact: None,
        }
    }
}

/// A maximal run of steps over which a pair carries one non-zero weight.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct WeightSpan {
    /// First step.
    pub first: Step,
    /// Last step.
    pub last: Step,
    /// The weight, in (0, 1].
    pub weight: f64,
}

/// The weights of one truth-estimate pair over the window.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct PairAssignment {
    /// Truth index.
    pub truth: usize,
    /// Estimate index.
    pub estimate: usize,
    /// Runs of non-zero weight, increasing and disjoint; zero elsewhere.
    pub spans: Vec<WeightSpan>,
    /// The steps at which the pair is close, with d^p.
    #[serde(skip)]
    pub close: Vec<CloseStep>,
}

impl PairAssignment {
    /// The weight at `step`. O(log spans).
    pub fn weight_at(&self, step: Step) -> f64 {
        let index = self.spans.partition_point(|s| s.last < step);
        match self.spans.get(index) {
            Some(span) if span.first <= step => span.weight,
            _ => 0.0,
        }
    }

    /// Total weight change over the window (each unit costs gamma^p / 2).
    pub fn variation(&self) -> f64 {
        let mut total = 0.0;
        let mut previous: Option<&WeightSpan> = None;
        for span in &self.spans {
            match previous {
                Some(p) if p.last + 1 == span.first => total += (span.weight - p.weight).abs(),
                Some(p) => total += p.weight + span.weight,
                // The weight before the first span is 0 only if the span starts after the window
                // start; the caller knows the window, see `Assignment::variation`.
                None => {}
            }
            previous = Some(span);
        }
        total
    }
}

/// The LP solution: per-step weights of every candidate pair, piecewise constant.
#[derive(Clone, Debug, Default, PartialEq, Serialize)]
pub struct Assignment {
    /// The window, `None` when both sets are empty.
    pub window: Option<Window>,
    /// Candidate pairs, sorted by (truth, estimate).
    pub pairs: Vec<PairAssignment>,
}

impl Assignment {
    /// Total weight change of a pair over the window, counting a start after the window's first
    /// step and an end before its last as changes from and to zero.
    pub fn variation(&self, pair: &PairAssignment) -> f64 {
        let Some(window) = self.window else {
            return 0.0;
        };
        let mut total = pair.variation();
        if let Some(first) = pair.spans.first() {
            if first.first > window.first {
                total += first.weight;
            }
        }
        if let Some(last) = pair.spans.last() {
            if last.last < window.last {
                total += last.weight;
            }
        }
        total
    }
}

/// Size of the LPs solved.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize)]
pub struct SolveStats {
    /// Candidate pairs (close at one step or more).
    pub candidate_pairs: usize,
    /// Connected components of the candidate pairs.
    pub components: usize,
    /// Components that needed an LP (the others have a closed form).
    pub lp_components: usize,
    /// LP variables over all components.
    pub variables: usize,
    /// LP constraint rows over all components.
    pub constraints: usize,
    /// Non-zero constraint coefficients.
    pub nonzeros: usize,
    /// Variables of the largest component.
    pub largest_variables: usize,
}

/// Trajectory GOSPA and its parts.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct TrajectoryScore {
    /// The parameters.
    pub params: TrajectoryParams,
    /// The window evaluated.
    pub window: Option<Window>,
    /// Steps in the window.
    pub steps: usize,
    /// d: the metric.
    pub metric: f64,
    /// d^p: the sum of the four parts.
    pub total: f64,
    /// (d^p / steps)^(1/p): the metric normalised per step.
    pub per_step: f64,
    /// Localisation part (p-th power units).
    pub localization: f64,
    /// Missed part.
    pub missed: f64,
    /// False part.
    pub false_: f64,
    /// Switching part.
    pub switching: f64,
    /// Truth object-steps not assigned (fractional when the LP is).
    pub missed_count: f64,
    /// Estimate object-steps not assigned.
    pub false_count: f64,
    /// Full switches count 1, half switches 0.5.
    pub switch_count: f64,
    /// True when every weight of the LP optimum is 0 or 1: then the LP value is also the exact
    /// (assignment) metric. With [`SolveOptions::exact`] the weights reported are integral
    /// whatever this says.
    pub integral: bool,
    /// The LP's optimal objective plus the constant, as the engine reported it.
    pub lp_objective: f64,
    /// d^p of the LP relaxation (equal to `total` unless the exact metric was computed from a
    /// fractional LP optimum).
    pub lp_total: f64,
    /// d^p of the exact metric, when it was asked for and proven (then equal to `total`).
    pub exact_total: Option<f64>,
    /// How the exact metric was computed, when it was asked for.
    pub exact: Option<ExactSummary>,
    /// LP sizes.
    pub stats: SolveStats,
    /// The per-step weights.
    #[serde(skip)]
    pub assignment: Assignment,
}

/// The certificate of an exact computation ([`SolveOptions::exact`]).
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct ExactSummary {
    /// True when `total` is proven to be the exact metric (`lower == upper`).
    pub proven: bool,
    /// A proven lower bound of the exact d^p: the LP value, raised by the integer searches.
    pub lower: f64,
    /// d^p of the integral solution reported (`total`): an upper bound of the exact d^p.
    pub upper: f64,
    /// Components whose LP optimum was fractional, solved as integer programs.
    pub components: usize,
    /// Of those, the components whose search the budget stopped before a proof.
    pub unproven_components: usize,
    /// Branch-and-bound nodes solved over all components (0 when the engine does not report
    /// them).
    pub nodes: u64,
    /// The budget given.
    pub budget: ExactBudget,
}

/// Trajectory GOSPA with the default solve options.
///
/// # Errors
/// Sets of different dimensions, a window too long, a distance that does not fit the states or
/// the cut-off ([`Distance::check_inputs`]), an LP engine failure.
pub fn score(
    truth: &TrajectorySet,
    estimate: &TrajectorySet,
    params: &TrajectoryParams,
    distance: &Distance,
) -> Result<TrajectoryScore> {
    score_with(truth, estimate, params, distance, &SolveOptions::default())
}

struct ComponentSolution {
    pairs: Vec<PairAssignment>,
    objective: f64,
    stats: SolveStats,
    /// With [`SolveOptions::exact`], a component whose LP optimum is fractional, kept for the
    /// integer pass.
    fractional: Option<Fractional>,
}

/// What the integer pass needs of a component with a fractional LP optimum.
struct Fractional {
    members: Vec<usize>,
    model: ComponentModel,
    values: Vec<f64>,
    objective: f64,
}

/// A component's integral solution and how far it is from proven.
struct ExactComponent {
    pairs: Vec<PairAssignment>,
    /// Upper bound (the solution's objective) minus the proven lower bound, >= 0.
    gap: f64,
    proven: bool,
    nodes: u64,
}

/// Trajectory GOSPA with chosen solve options.
///
/// # Errors
/// As [`score`], and options that do not go together.
pub fn score_with(
    truth: &TrajectorySet,
    estimate: &TrajectorySet,
    params: &TrajectoryParams,
    distance: &Distance,
    options: &SolveOptions,
) -> Result<TrajectoryScore> {
    if options.keep_far_pairs && options.reduction == Reduction::Events {
        return Err(Error::Parameter(
            "far pairs can be kept only without event compression".into(),
        ));
    }
    if !options.engine.available() {
        return Err(Error::Parameter(format!(
            "this build has no {} engine",
            options.engine.name()
        )));
    }
    let window = evaluation_window(truth, estimate)?;
    distance.check_inputs(truth, estimate, params.cutoff)?;
    let Some(window) = window else {
        let empty = finish(params, None, Vec::new(), 0.0, SolveStats::default(), 0, 0);
        return Ok(with_exact(empty, Vec::new(), options, params, (0, 0)));
    };
    let mut pairs = candidate_pairs(
        truth,
        estimate,
        window,
        params.cutoff,
        params.order,
        distance,
    );
    let candidate_count = pairs.len();
    if options.keep_far_pairs {
        let mut all = Vec::with_capacity(truth.len() * estimate.len());
        let mut close = pairs.into_iter().peekable();
        for i in 0..truth.len() {
            for j in 0..estimate.len() {
                match close.next_if(|p| p.truth == i && p.estimate == j) {
                    Some(pair) => all.push(pair),
                    None => all.push(CandidatePair {
                        truth: i,
                        estimate: j,
                        close: Vec::new(),
                    }),
                }
            }
        }
        pairs = all;
    }
    let groups = if options.split_components {
        components(&pairs)
    } else if pairs.is_empty() {
        Vec::new()
    } else {
        vec![(0..pairs.len()).collect()]
    };
    let solved: Vec<ComponentSolution> = groups
        .par_iter()
        .map(|members| solve_component(&pairs, members, window, params, options))
        .collect::<Result<_>>()?;
    let mut stats = SolveStats {
        candidate_pairs: candidate_count,
        components: groups.len(),
        ..SolveStats::default()
    };
    let mut objective = 0.0;
    let mut assignments = Vec::with_capacity(pairs.len());
    let mut fractional = Vec::new();
    for component in solved {
        fractional.extend(component.fractional);
        objective += component.objective;
        stats.lp_components += component.stats.lp_components;
        stats.variables += component.stats.variables;
        stats.constraints += component.stats.constraints;
        stats.nonzeros += component.stats.nonzeros;
        stats.largest_variables = stats.largest_variables.max(component.stats.variables);
        assignments.extend(component.pairs);
    }
    assignments.sort_by_key(|p| (p.truth, p.estimate));
    let truth_points = truth.object_steps();
    let estimate_points = estimate.object_steps();
    let result = finish(
        params,
        Some(window),
        assignments,
        objective,
        stats,
        truth_points,
        estimate_points,
    );
    let bounds = checks::bounds(truth, estimate, params, distance)?;
    checks::check_consistency(&result, &bounds)?;
    // The integer pass, on the components whose LP optimum is fractional, in parallel; a time
    // budget counts from here.
    let exact_parts = match options.exact {
        Some(budget) => {
            let limit = exact::Limit::new(budget, Instant::now());
            fractional
                .par_iter()
                .map(|f| solve_fractional(f, &pairs, window, params, options.engine, limit))
                .collect::<Result<Vec<_>>>()?
        }
        None => Vec::new(),
    };
    let points = (truth_points, estimate_points);
    let lp_total = result.total;
    let score = with_exact(result, exact_parts, options, params, points);
    if options.exact.is_some() {
        // The integral optimum can be no lower than the LP's.
        let bounds = checks::Bounds {
            lower: bounds.lower.max(lp_total),
            upper: bounds.upper,
            held: bounds.held,
        };
        checks::check_integral(&score, &bounds)?;
    }
    Ok(score)
}

/// Solves a component with a fractional LP optimum as an integer program.
fn solve_fractional(
    fractional: &Fractional,
    pairs: &[CandidatePair],
    window: Window,
    params: &TrajectoryParams,
    engine: Engine,
    limit: exact::Limit,
) -> Result<ExactComponent> {
    let Fractional {
        members,
        model,
        values,
        objective,
    } = fractional;
    let decode_all = |values: &[f64]| -> Vec<PairAssignment> {
        members
            .iter()
            .zip(&model.segments)
            .map(|(&m, segments)| decode(&pairs[m], segments, values))
            .collect()
    };
    let cost = |values: &[f64]| component_cost(&decode_all(values), window, params);
    let solution = exact::solve_integer(model, values, *objective, engine, limit, cost)?;
    Ok(ExactComponent {
        pairs: decode_all(&solution.values),
        gap: (solution.objective - solution.bound).max(0.0),
        proven: solution.proven,
        nodes: solution.nodes,
    })
}

/// With [`SolveOptions::exact`]: puts the integral weights of the components re-solved as
/// integer programs in place of their LP weights, recomputes the parts from them, and fills in
/// the LP value and the certificate. Without it, returns the LP score unchanged. `points` are
/// the truth and estimate object-steps.
fn with_exact(
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
        score
    };
    let lower = if unproven == 0 {
        score.total
    } else {
        (score.total - gap).clamp(score.lp_total.min(score.total), score.total)
    };
    score.exact_total = (unproven == 0).then_some(score.total);
    score.exact = Some(ExactSummary {
        proven: unproven == 0,
        lower,
        upper: score.total,
        components: count,
        unproven_components: unproven,
        nodes,
        budget,
    });
    score
}

fn solve_component(
    pairs: &[CandidatePair],
    members: &[usize],
    window: Window,
    params: &TrajectoryParams,
    options: &SolveOptions,
) -> Result<ComponentSolution> {
    let cutoff_power = params.cutoff_power();
    if members.len() == 1 && options.split_components {
        // A lone pair: full weight over the whole window is optimal (its gains are negative,
        // nothing competes, and a constant weight never switches).
        let pair = &pairs[members[0]];
        let objective = pair.close.iter().map(|c| c.cost - cutoff_power).sum();
        return Ok(ComponentSolution {
            pairs: vec![PairAssignment {
                truth: pair.truth,
                estimate: pair.estimate,
                spans: vec![WeightSpan {
                    first: window.first,
                    last: window.last,
                    weight: 1.0,
                }],
                close: pair.close.clone(),
            }],
            objective,
            stats: SolveStats::default(),
            fractional: None,
        });
    }
    let model = build(
        pairs,
        members,
        window,
        cutoff_power,
        params.switch_cost(),
        options.reduction,
    );
    let values = solve::solve(&model.program, options.engine)?;
    let objective = model
        .program
        .costs
        .iter()
        .zip(&values)
        .map(|(c, v)| c * v)
        .sum();
    let decoded: Vec<PairAssignment> = members
        .iter()
        .zip(&model.segments)
        .map(|(&m, segments)| decode(&pairs[m], segments, &values))
        .collect();
    let stats = SolveStats {
        lp_components: 1,
        variables: model.program.variables(),
        constraints: model.program.rows.len(),
        nonzeros: model.program.nonzeros(),
        ..SolveStats::default()
    };
    let fractional =
        (options.exact.is_some() && !decoded.iter().all(is_integral)).then(|| Fractional {
            members: members.to_vec(),
            model,
            values,
            objective,
        });
    Ok(ComponentSolution {
        pairs: decoded,
        fractional,
        objective,
        stats,
    })
}

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
fn component_cost(pairs: &[PairAssignment], window: Window, params: &TrajectoryParams) -> f64 {
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
fn is_integral(pair: &PairAssignment) -> bool {
    pair.spans
        .iter()
        .all(|s| (s.weight - 1.0).abs() < INTEGRAL_TOLERANCE || s.weight < INTEGRAL_TOLERANCE)
}

/// Reads a pair's segment values into maximal runs of equal non-zero weight.
fn decode(pair: &CandidatePair, segments: &[Segment], values: &[f64]) -> PairAssignment {
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
fn finish(
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
    let missed = half * missed_count;
    let false_ = half * false_count;
    let switching = params.switch_cost() * variation;
    let total = localization + missed + false_ + switching;
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
        localization,
        missed,
        false_,
        switching,
        missed_count,
        false_count,
        switch_count: variation / 2.0,
        integral,
        lp_objective: half * (truth_points + estimate_points) as f64 + objective,
        lp_total: total,
        exact_total: None,
        exact: None,
        stats,
        assignment,
    }
}
