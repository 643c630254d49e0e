//! The exact (assignment-based) trajectory GOSPA where the LP optimum is fractional.
//!
//! Source of the metric and of its LP relaxation: Á. F. García-Fernández, A. S. Rahmathullah,
//! L. Svensson, "A metric on the space of finite sets of trajectories for evaluation of
//! multi-target tracking algorithms", IEEE Trans. Signal Processing 68:3917-3928, 2020. The
//! exact metric is the same minimisation with every assignment weight 0 or 1.
//!
//! A component whose LP optimum is integral needs nothing more: that optimum is also the best
//! integral one. A component whose LP optimum is fractional is solved again as an integer
//! program by branch and bound, over the same (compressed) model with its segment variables
//! restricted to {0, 1}; the switch helpers stay continuous (at an optimum they measure an
//! integral change, so they are integral too). The compressed model has the same
//! integral optimum as the unreduced one because each reduction replaces weights by a minimum
//! or a maximum of weights (specs/trajectory-lp.md, section 8), which maps 0/1 weights to 0/1
//! weights.
//!
//! The search starts from an incumbent built from the LP solution: every weight rounded down,
//! which keeps every capacity constraint (so it is an assignment of the metric), then raised
//! greedily where that keeps every row and lowers the cost. The LP optimum is a lower bound.
//! With a budget that runs out, the best integral solution found (the start, or better) and
//! the best proven bound are returned, marked as not proven. Costs of integral solutions are
//! measured from their weights by the caller, never taken from the engine.

use std::time::{Duration, Instant};

use serde::Serialize;

use super::model::{ComponentModel, LinearProgram, Sense};
use super::solve::Engine;
use crate::error::{Error, Result};

/// How much work the integer programs may take.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum ExactBudget {
    /// Search until every component is proven optimal.
    #[default]
    Unlimited,
    /// Wall-clock time for the integer programs, counted from the end of the LP pass; the
    /// components solved in parallel share the deadline. Results that run out of it depend on
    /// the machine's speed.
    Seconds(Duration),
    /// Branch-and-bound nodes per component (the root relaxation does not count). Results do
    /// not depend on the machine's speed.
    Nodes(u64),
}

impl std::fmt::Display for ExactBudget {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            ExactBudget::Unlimited => write!(f, "no limit"),
            ExactBudget::Seconds(duration) => write!(f, "{}s", duration.as_secs_f64()),
            ExactBudget::Nodes(1) => write!(f, "1 node per group"),
            ExactBudget::Nodes(nodes) => write!(f, "{nodes} nodes per group"),
        }
    }
}

impl Serialize for ExactBudget {
    fn serialize<S: serde::Serializer>(
        &self,
        serializer: S,
    ) -> std::result::Result<S::Ok, S::Error> {
        use serde::ser::SerializeMap;
        match self {
            ExactBudget::Unlimited => serializer.serialize_str("unlimited"),
            ExactBudget::Seconds(duration) => {
                let mut map = serializer.serialize_map(Some(1))?;
                map.serialize_entry("seconds", &duration.as_secs_f64())?;
                map.end()
            }
            ExactBudget::Nodes(nodes) => {
                let mut map = serializer.serialize_map(Some(1))?;
                map.serialize_entry("nodes", nodes)?;
                map.end()
            }
        }
    }
}

/// The budget of one integer solve: a deadline shared by all components, or a node count.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Limit {
    pub deadline: Option<Instant>,
    pub nodes: Option<u64>,
}

impl Limit {
    /// The limit of a budget, with the clock started at `start`.
    pub fn new(budget: ExactBudget, start: Instant) -> Self {
        match budget {
            ExactBudget::Unlimited => Limit {
                deadline: None,
                nodes: None,
            },
            ExactBudget::Seconds(duration) => Limit {
                // A budget too large to add to the clock is no limit at all.
                deadline: start.checked_add(duration),
                nodes: None,
            },
            ExactBudget::Nodes(nodes) => Limit {
                deadline: None,
                nodes: Some(nodes),
            },
        }
    }

    fn remaining(&self) -> Option<Duration> {
        self.deadline
            .map(|deadline| deadline.saturating_duration_since(Instant::now()))
    }
}

/// The integral solution of one component.
#[derive(Clone, Debug)]
pub(crate) struct IntegerSolution {
    /// The segment variables' values, exactly 0 or 1 (other variables: unspecified).
    pub values: Vec<f64>,
    /// The component's cost at `values` (as measured by the caller's `cost`).
    pub objective: f64,
    /// A proven lower bound of the component's integral optimum, `<= objective`.
    pub bound: f64,
    /// True when `objective` is proven to be the integral optimum.
    pub proven: bool,
    /// Branch-and-bound nodes solved (0 when the engine does not report them).
    pub nodes: u64,
}

/// Which variables of a component's program are segment (assignment weight) variables.
pub(crate) fn segment_mask(model: &ComponentModel) -> Vec<bool> {
    let mut mask = vec![false; model.program.variables()];
    for segment in model.segments.iter().flatten() {
        mask[segment.var] = true;
    }
    mask
}

/// The rows each variable appears in.
fn rows_of(program: &LinearProgram) -> Vec<Vec<usize>> {
    let mut rows_of: Vec<Vec<usize>> = vec![Vec::new(); program.variables()];
    for (r, row) in program.rows.iter().enumerate() {
        for &(var, _) in &row.terms {
            rows_of[var].push(r);
        }
    }
    rows_of
}

/// The least value of a switch helper (a variable that is not a segment) that keeps its rows,
/// given the segment values: a helper only measures a weight change between segments and
/// costs gamma^p / 2 or more per unit, so the least feasible value is the optimal one.
/// Two link forms are recognised: a row `... - h <= rhs` (h bounds a change from above), and an
/// equality `b - a - up + down = 0` whose two helpers take the positive and negative parts of
/// `b - a`.
fn settle_helper(
    program: &LinearProgram,
    segment: &[bool],
    rows: &[usize],
    helper: usize,
    values: &[f64],
) -> f64 {
    let mut least: f64 = 0.0;
    for &r in rows {
        let row = &program.rows[r];
        let Some(&(_, own)) = row.terms.iter().find(|(var, _)| *var == helper) else {
            continue;
        };
        match row.sense {
            Sense::Equal => {
                let fixed: f64 = row
                    .terms
                    .iter()
                    .filter(|(var, _)| segment[*var])
                    .map(|&(var, coefficient)| coefficient * values[var])
                    .sum();
                least = least.max((row.rhs - fixed) / own);
            }
            Sense::AtMost if own < 0.0 => {
                let others: f64 = row
                    .terms
                    .iter()
                    .filter(|(var, _)| *var != helper)
                    .map(|&(var, coefficient)| coefficient * values[var])
                    .sum();
                least = least.max((others - row.rhs) / -own);
            }
            Sense::AtMost => {}
        }
    }
    least.min(program.upper[helper])
}

/// Sets every helper to its least feasible value ([`settle_helper`]).
fn set_helpers(
    program: &LinearProgram,
    segment: &[bool],
    rows_of: &[Vec<usize>],
    values: &mut [f64],
) {
    for helper in (0..values.len()).filter(|&v| !segment[v]) {
        values[helper] = 0.0;
    }
    for helper in (0..values.len()).filter(|&v| !segment[v]) {
        values[helper] = settle_helper(program, segment, &rows_of[helper], helper, values);
    }
}

/// Whether `values` keeps every row and bound of `program` within `tolerance`.
fn feasible(program: &LinearProgram, values: &[f64], tolerance: f64) -> bool {
    let bounds = values
        .iter()
        .zip(&program.upper)
        .all(|(&v, &upper)| v >= -tolerance && v <= upper + tolerance);
    bounds && program.rows.iter().all(|row| keeps(row, values, tolerance))
}

fn keeps(row: &super::model::Row, values: &[f64], tolerance: f64) -> bool {
    let lhs: f64 = row.terms.iter().map(|&(var, c)| c * values[var]).sum();
    match row.sense {
        Sense::AtMost => lhs <= row.rhs + tolerance,
        Sense::Equal => (lhs - row.rhs).abs() <= tolerance,
    }
}

/// The LP solution with every segment weight rounded down (weights within `1e-6` of 1 count
/// as 1) and the helpers recomputed. It keeps the capacity rows (non-negative coefficients on
/// segment variables, which only go down) and a rigid piece's row `rigid - active <= 0`
/// (rounding down is monotone); the link rows hold when [`set_helpers`] knows their form, which
/// the caller checks before handing it to the engine.
pub(crate) fn round_down(
    program: &LinearProgram,
    segment: &[bool],
    rows_of: &[Vec<usize>],
    lp: &[f64],
) -> Vec<f64> {
    let mut values: Vec<f64> = lp
        .iter()
        .zip(segment)
        .map(|(&v, &is_segment)| {
            if is_segment && v >= 1.0 - 1e-6 {
                1.0
            } else {
                0.0
            }
        })
        .collect();
    set_helpers(program, segment, rows_of, &mut values);
    values
}

/// Improves a feasible 0/1 solution greedily: each segment variable whose LP value was strictly
/// between 0 and 1, largest LP value first, is raised to 1 when that keeps every row and
/// lowers the objective (its helpers reset to their least values). O(sum over the candidates of
/// the rows they touch x row lengths).
pub(crate) fn raise_greedily(
    program: &LinearProgram,
    segment: &[bool],
    rows_of: &[Vec<usize>],
    lp: &[f64],
    values: &mut [f64],
) {
    let mut candidates: Vec<usize> = (0..lp.len())
        .filter(|&v| segment[v] && values[v] == 0.0 && lp[v] > 1e-6)
        .collect();
    candidates.sort_by(|&a, &b| lp[b].total_cmp(&lp[a]).then(a.cmp(&b)));
    for var in candidates {
        let mut helpers: Vec<usize> = rows_of[var]
            .iter()
            .flat_map(|&r| program.rows[r].terms.iter().map(|&(v, _)| v))
            .filter(|&v| !segment[v])
            .collect();
        helpers.sort_unstable();
        helpers.dedup();
        let mut saved: Vec<(usize, f64)> = vec![(var, values[var])];
        values[var] = 1.0;
        let mut delta = program.costs[var];
        for &helper in &helpers {
            saved.push((helper, values[helper]));
            let new = settle_helper(program, segment, &rows_of[helper], helper, values);
            delta += program.costs[helper] * (new - values[helper]);
            values[helper] = new;
        }
        let touched = std::iter::once(var).chain(helpers.iter().copied());
        let ok = delta < 0.0
            && touched
                .flat_map(|v| rows_of[v].iter())
                .all(|&r| keeps(&program.rows[r], values, 1e-9));
        if !ok {
            for &(v, old) in saved.iter().rev() {
                values[v] = old;
            }
        }
    }
}

/// Solves a component's program with its segment variables in {0, 1}, starting from the
/// rounded LP solution, within `limit`. `lp_values` and `lp_objective` are the component's LP
/// optimum (a lower bound). `cost` gives the cost of a 0/1 assignment of the segment variables
/// in the units of the program's objective, from the weights themselves (so it does not depend
/// on the values of the other variables).
///
/// # Errors
/// The engine fails, or returns a solution that does not pass the checks (not integral, not
/// feasible, below the LP bound, or a proven optimum worse than a known solution).
pub(crate) fn solve_integer(
    model: &ComponentModel,
    lp_values: &[f64],
    lp_objective: f64,
    engine: Engine,
    limit: Limit,
    cost: impl Fn(&[f64]) -> f64,
) -> Result<IntegerSolution> {
    let program = &model.program;
    let segment = segment_mask(model);
    let rows_of = rows_of(program);
    // The rounded start keeps every capacity constraint, so it is an integral assignment of the
    // metric whatever the model's other rows; it is handed to the engine as a warm start only
    // when its helpers could be completed into a feasible point of the program.
    let mut start = round_down(program, &segment, &rows_of, lp_values);
    let warm = feasible(program, &start, 1e-9);
    if warm {
        raise_greedily(program, &segment, &rows_of, lp_values, &mut start);
    }
    let found = match engine.simplex() {
        Engine::Lagrangian | Engine::Microlp => {
            microlp_search(program, &segment, warm.then_some(&start[..]), limit)?
        }
        Engine::Highs => highs_search(program, &segment, warm.then_some(&start[..]), limit)?,
    };
    let start_cost = cost(&start);
    let tolerance = scale(lp_objective);
    let mut best = (start, start_cost, false, found.bound, found.nodes);
    if let Some(mut values) = found.values {
        for (value, &is_segment) in values.iter_mut().zip(&segment) {
            if is_segment {
                let rounded = value.round();
                if (rounded - *value).abs() > 1e-6 || !(0.0..=1.0).contains(&rounded) {
                    return Err(Error::Solver(format!(
                        "the integer program returned a weight of {value}"
                    )));
                }
                *value = rounded;
            }
        }
        if !feasible(program, &values, 1e-5) {
            return Err(Error::Solver(
                "the integer program returned a solution that breaks a constraint".into(),
            ));
        }
        let found_cost = cost(&values);
        if found.proven && found_cost > start_cost + tolerance {
            return Err(Error::Solver(format!(
                "the integer program's proven optimum {found_cost} is worse than a known solution {start_cost}"
            )));
        }
        if found.proven || found_cost < start_cost {
            best = (values, found_cost, found.proven, found.bound, found.nodes);
        }
    }
    let (values, value, proven, engine_bound, nodes) = best;
    if value < lp_objective - tolerance {
        return Err(Error::Solver(format!(
            "the integer program's value {value} is below the LP optimum {lp_objective}"
        )));
    }
    let bound = if proven {
        value
    } else {
        engine_bound
            .map_or(lp_objective, |b| b.max(lp_objective))
            .min(value)
    };
    Ok(IntegerSolution {
        values,
        objective: value,
        bound,
        proven,
        nodes,
    })
}

/// Tolerance for comparing objectives of the size of `value`.
fn scale(value: f64) -> f64 {
    1e-7 * value.abs().max(1.0)
}

/// What an engine's branch and bound returned.
struct Found {
    /// Every variable's value, `None` when the search stopped before any incumbent.
    values: Option<Vec<f64>>,
    /// True when the values are proven optimal.
    proven: bool,
    /// The engine's best proven bound, when it reports one.
    bound: Option<f64>,
    nodes: u64,
}

/// Branch and bound with microlp, called directly: good_lp does not pass a node limit, nor
/// return the best bound or the outcome of a search interrupted before any incumbent.
fn microlp_search(
    program: &LinearProgram,
    segment: &[bool],
    start: Option<&[f64]>,
    limit: Limit,
) -> Result<Found> {
    use microlp::{ComparisonOp, OptimizationDirection, Problem, SolveOutcome, TerminationReason};
    let mut problem = Problem::new(OptimizationDirection::Minimize);
    let vars: Vec<microlp::Variable> = program
        .costs
        .iter()
        .zip(&program.upper)
        .zip(segment)
        .map(|((&cost, &upper), &is_segment)| {
            if is_segment {
                problem.add_binary_var(cost)
            } else {
                problem.add_var(cost, (0.0, upper))
            }
        })
        .collect();
    for row in &program.rows {
        let op = match row.sense {
            Sense::AtMost => ComparisonOp::Le,
            Sense::Equal => ComparisonOp::Eq,
        };
        let terms: Vec<(microlp::Variable, f64)> = row
            .terms
            .iter()
            .map(|&(var, coefficient)| (vars[var], coefficient))
            .collect();
        problem.add_constraint(terms, op, row.rhs);
    }
    let mut options = microlp::SolveOptions::default();
    options.time_limit = limit.remaining();
    options.node_limit = limit.nodes;
    options.warm_start =
        start.map(|start| vars.iter().copied().zip(start.iter().copied()).collect());
    let outcome = problem
        .solve_with(options)
        .map_err(|e| Error::Solver(format!("the integer program failed: {e}")))?;
    let stats = outcome.stats();
    match outcome {
        SolveOutcome::Solution(solution) => Ok(Found {
            values: Some(vars.iter().map(|&v| solution.var_value_raw(v)).collect()),
            proven: solution.termination_reason() == TerminationReason::ProvenOptimal,
            bound: stats.best_bound,
            nodes: stats.nodes_solved,
        }),
        // The budget ran out before any incumbent: the rounded start is kept.
        SolveOutcome::Interrupted(_) => Ok(Found {
            values: None,
            proven: false,
            bound: stats.best_bound,
            nodes: stats.nodes_solved,
        }),
    }
}

/// Branch and bound with HiGHS through good_lp. HiGHS reports no bound through good_lp, so the
/// LP optimum serves as the bound when the search stops early.
#[cfg(feature = "highs")]
fn highs_search(
    program: &LinearProgram,
    segment: &[bool],
    start: Option<&[f64]>,
    limit: Limit,
) -> Result<Found> {
    use good_lp::{
        variable, Expression, ProblemVariables, ResolutionError, Solution, SolutionStatus,
        SolverModel, Variable, WithInitialSolution,
    };
    let mut problem = ProblemVariables::new();
    let vars: Vec<Variable> = program
        .upper
        .iter()
        .zip(segment)
        .map(|(&upper, &is_segment)| {
            let definition = variable().min(0.0).max(upper);
            problem.add(if is_segment {
                definition.integer()
            } else {
                definition
            })
        })
        .collect();
    let mut objective = Expression::with_capacity(vars.len());
    for (&var, &cost) in vars.iter().zip(&program.costs) {
        if cost != 0.0 {
            objective.add_mul(cost, var);
        }
    }
    let mut model = problem
        .minimise(objective)
        .using(good_lp::highs)
        .set_option("threads", 1)
        .set_option("mip_rel_gap", 0.0)
        .set_option("mip_abs_gap", 0.0);
    if let Some(remaining) = limit.remaining() {
        model = model.set_option("time_limit", remaining.as_secs_f64());
    }
    if let Some(nodes) = limit.nodes {
        let nodes = i32::try_from(nodes).unwrap_or(i32::MAX);
        model = model.set_option("mip_max_nodes", nodes);
    }
    if let Some(start) = start {
        model = model.with_initial_solution(vars.iter().copied().zip(start.iter().copied()));
    }
    for row in &program.rows {
        let mut expression = Expression::with_capacity(row.terms.len());
        for &(var, coefficient) in &row.terms {
            expression.add_mul(coefficient, vars[var]);
        }
        model.add_constraint(match row.sense {
            Sense::AtMost => expression.leq(row.rhs),
            Sense::Equal => expression.eq(row.rhs),
        });
    }
    match model.solve() {
        Ok(solution) => Ok(Found {
            values: Some(vars.iter().map(|&v| solution.value(v)).collect()),
            proven: matches!(solution.status(), SolutionStatus::Optimal),
            bound: None,
            nodes: 0,
        }),
        Err(ResolutionError::Other("NoSolutionFound")) => Ok(Found {
            values: None,
            proven: false,
            bound: None,
            nodes: 0,
        }),
        Err(e) => Err(Error::Solver(format!("the integer program failed: {e}"))),
    }
}

#[cfg(not(feature = "highs"))]
fn highs_search(
    _program: &LinearProgram,
    _segment: &[bool],
    _start: Option<&[f64]>,
    _limit: Limit,
) -> Result<Found> {
    Err(Error::Parameter(
        "this build has no HiGHS engine; rebuild with `--features highs`".into(),
    ))
}
