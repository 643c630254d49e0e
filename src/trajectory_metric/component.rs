//! One component of candidate pairs solved: a lone pair in closed form; otherwise the Lagrangian
//! engine, and for a component it does not prove the pricing fallback, then the simplex engine
//! on the whole component, as the options and the memory budget allow; with
//! [`SolveOptions::exact`], the integer pass on a component whose LP optimum is fractional.

use std::time::Instant;

use super::decode::{component_cost, decode, is_integral};
use super::model::{self, build, ComponentModel, Reduction};
use super::pairs::{components, CandidatePair};
use super::result::{PairAssignment, SolveStats, WeightSpan};
use super::BYTES_PER_CELL;
use super::{bytes, exact, lagrangian, solve, Engine, Progress, SolveOptions, TrajectoryParams};
use crate::error::{Error, Result};
use crate::trajectory::{TrajectorySet, Window};

/// Bytes a simplex engine needs per variable of the compressed LP, with a margin (measured:
/// about 1.8 kB for microlp and 2.3 kB for HiGHS on the large benchmark scene).
const BYTES_PER_LP_VARIABLE: u64 = 3000;
/// The largest LP (in variables) the Lagrangian engine hands to microlp as a fallback, and to
/// HiGHS: microlp needs about 6 s for 60,000 variables and minutes beyond (measured on this
/// LP family), HiGHS about 5 s for 300,000. A count, so that results do not depend on the
/// machine's speed; `--engine microlp` or `--engine highs` solve every group whatever its size.
const FALLBACK_VARIABLES: [(Engine, usize); 2] =
    [(Engine::Microlp, 60_000), (Engine::Highs, 1_500_000)];

/// How a component was solved.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) enum Method {
    /// A lone pair: full weight throughout, optimal by inspection.
    ClosedForm,
    /// The Lagrangian bounds met.
    Lagrangian,
    /// A simplex engine solved its LP.
    Simplex,
    /// Not proven: only bounds.
    Bounded,
}

pub(super) struct ComponentSolution {
    pub(super) pairs: Vec<PairAssignment>,
    pub(super) objective: f64,
    /// A proven lower bound of the component's LP optimum (gain form).
    pub(super) lower: f64,
    pub(super) method: Method,
    pub(super) iterations: usize,
    pub(super) note: Option<String>,
    pub(super) stats: SolveStats,
    /// With [`SolveOptions::exact`], the parts of the component whose LP optimum is
    /// fractional, kept for the integer pass.
    pub(super) fractional: Vec<Fractional>,
}

/// What the integer pass needs of a component with a fractional LP optimum.
pub(super) struct Fractional {
    members: Vec<usize>,
    model: ComponentModel,
    values: Vec<f64>,
    objective: f64,
}

/// A component's integral solution and how far it is from proven.
pub(super) struct ExactComponent {
    pub(super) pairs: Vec<PairAssignment>,
    /// Upper bound (the solution's objective) minus the proven lower bound, >= 0.
    pub(super) gap: f64,
    pub(super) proven: bool,
    pub(super) nodes: u64,
}

/// Solves a component with a fractional LP optimum as an integer program.
pub(super) fn solve_fractional(
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

/// Solves one component: a lone pair in closed form; otherwise the Lagrangian engine, the
/// pricing fallback ([`solve_restricted`]) for a component it does not prove, and the simplex
/// engine on the whole component, as the options and the memory budget allow.
pub(super) fn solve_component(
    pairs: &[CandidatePair],
    members: &[usize],
    window: Window,
    params: &TrajectoryParams,
    options: &SolveOptions,
    (truth, estimate): (&TrajectorySet, &TrajectorySet),
    progress: &(dyn Fn(Progress) + Sync),
) -> Result<ComponentSolution> {
    let cutoff_power = params.cutoff_power();
    if members.len() == 1 && options.split_components {
        return Ok(lone_pair(&pairs[members[0]], window, cutoff_power));
    }
    let cost = |assignment: &[PairAssignment]| component_cost(assignment, window, params);
    let mut found = None;
    let mut stats = SolveStats::default();
    // The Lagrangian engine works on the reduced problem (candidate pairs in components);
    // the options that check the reductions go to the simplex engine.
    let reduced = options.split_components
        && !options.keep_far_pairs
        && options.reduction == Reduction::Events;
    let cells = if reduced {
        lagrangian::cells(pairs, members)
    } else {
        0
    };
    let cells_fit = (cells as u64).saturating_mul(BYTES_PER_CELL) <= options.memory_budget;
    if options.engine == Engine::Lagrangian && reduced && cells_fit {
        let (truths, estimates) = component_objects(pairs, members);
        let points: usize = truths.iter().map(|&i| truth.get(i).len()).sum::<usize>()
            + estimates
                .iter()
                .map(|&j| estimate.get(j).len())
                .sum::<usize>();
        let scale = cutoff_power / 2.0 * points as f64;
        let settings = lagrangian::Settings {
            max_iterations: options.max_iterations,
            deflect_after: options.deflect_after,
            ..lagrangian::Settings::default()
        };
        let problem = lagrangian::Problem {
            pairs,
            members,
            window,
            cutoff_power,
            switch_cost: params.switch_cost(),
            scale,
        };
        let outcome = lagrangian::solve(&problem, &settings, &cost, &|iteration| {
            progress(Progress::Iteration { cells, iteration })
        });
        stats.cells = outcome.cells;
        stats.paths_seconds = outcome.paths_time.as_secs_f64();
        stats.repair_seconds = outcome.repair_time.as_secs_f64();
        if outcome.certified {
            return Ok(ComponentSolution {
                pairs: outcome.pairs,
                objective: outcome.upper,
                lower: outcome.lower,
                method: Method::Lagrangian,
                iterations: outcome.iterations,
                note: None,
                stats,
                fractional: Vec::new(),
            });
        }
        if let Some(mut solution) =
            solve_restricted(pairs, members, window, params, options, &outcome)?
        {
            solution.stats.cells = stats.cells;
            solution.stats.paths_seconds = stats.paths_seconds;
            solution.stats.repair_seconds = stats.repair_seconds;
            return Ok(solution);
        }
        let variables = model::event_variables(pairs, members, window, params.switch_cost());
        let need = (variables as u64).saturating_mul(BYTES_PER_LP_VARIABLE);
        if !fallback_fits(variables, options) {
            // When most pairs of the group are candidates, the cut-off is what makes it hard.
            let crowded = members.len() * 2 > truths.len() * estimates.len();
            let smaller = if crowded {
                "(most truths of the group come within the cut-off of most estimates: a \
                 smaller cut-off, near the errors a track may have while following an object, \
                 makes it small) "
            } else {
                ""
            };
            let engine = options.engine.simplex();
            let mut why = Vec::new();
            if need > options.memory_budget {
                why.push(format!(
                    "would need about {} for its {variables} LP variables, over the memory \
                     budget of {} (--memory-budget)",
                    bytes(need),
                    bytes(options.memory_budget)
                ));
            }
            if variables > fallback_limit(engine) {
                why.push(format!(
                    "has {variables} LP variables, more than the fallback gives the {} engine \
                     ({}: it would take minutes or more; choose it yourself with --engine {}{})",
                    engine.name(),
                    fallback_limit(engine),
                    engine.name(),
                    if engine == Engine::Microlp {
                        ", or build with `--features highs` for a faster one"
                    } else {
                        ""
                    }
                ));
            }
            let why = format!("{smaller}{}", why.join("; and it "));
            let note = format!(
                "a group of {} truths and {} estimates was not proven optimal after {} \
                 iterations: its d^p lies within {:.3e} above the LP optimum; its proof by the \
                 simplex engine {why}",
                truths.len(),
                estimates.len(),
                outcome.iterations,
                outcome.upper - outcome.lower,
            );
            return Ok(ComponentSolution {
                pairs: outcome.pairs,
                objective: outcome.upper,
                lower: outcome.lower,
                method: Method::Bounded,
                iterations: outcome.iterations,
                note: Some(note),
                stats,
                fractional: Vec::new(),
            });
        }
        found = Some(outcome);
    }
    if options.engine == Engine::Lagrangian && reduced && found.is_none() {
        // Too many cells for the Lagrangian engine: the simplex engine must fit instead.
        let variables = model::event_variables(pairs, members, window, params.switch_cost());
        if !fallback_fits(variables, options) {
            let (truths, estimates) = component_objects(pairs, members);
            return Err(Error::Budget(format!(
                "a group of {} truths and {} estimates spans {cells} truth-steps between the \
                 first and last steps its pairs are within the cut-off, about {} for the \
                 Lagrangian engine, and {variables} LP variables for the simplex engine, over \
                 the budget of {}; choose a smaller cut-off, split the scene into shorter \
                 windows, or raise --memory-budget",
                truths.len(),
                estimates.len(),
                bytes((cells as u64).saturating_mul(BYTES_PER_CELL)),
                bytes(options.memory_budget)
            )));
        }
    }
    let started = Instant::now();
    let simplex = simplex_component(pairs, members, window, params, options)?;
    let mut stats = SolveStats {
        simplex_seconds: started.elapsed().as_secs_f64(),
        ..simplex.stats
    };
    stats.cells = found.as_ref().map_or(0, |o| o.cells);
    let iterations = found.as_ref().map_or(0, |o| o.iterations);
    Ok(prefer_integral(
        ComponentSolution {
            pairs: simplex.pairs,
            objective: simplex.objective,
            lower: simplex.objective,
            method: Method::Simplex,
            iterations,
            note: None,
            stats,
            fractional: simplex.fractional.into_iter().collect(),
        },
        found,
    ))
}

/// A component of one pair: full weight over the whole window is optimal (its gains are
/// negative, nothing competes, and a constant weight never switches).
fn lone_pair(pair: &CandidatePair, window: Window, cutoff_power: f64) -> ComponentSolution {
    let objective = pair.close.iter().map(|c| c.cost - cutoff_power).sum();
    ComponentSolution {
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
        lower: objective,
        method: Method::ClosedForm,
        iterations: 0,
        note: None,
        stats: SolveStats::default(),
        fractional: Vec::new(),
    }
}

/// When the simplex optimum is fractional but the integral assignment the Lagrangian engine
/// found costs no more, that assignment is an optimum too, with unambiguous switches: report it.
fn prefer_integral(
    solution: ComponentSolution,
    found: Option<lagrangian::Outcome>,
) -> ComponentSolution {
    let integral = solution.pairs.iter().all(is_integral);
    match found {
        Some(outcome)
            if !integral
                && lagrangian::proves(solution.objective, outcome.upper, outcome.scale) =>
        {
            ComponentSolution {
                pairs: outcome.pairs,
                objective: outcome.upper,
                fractional: Vec::new(),
                ..solution
            }
        }
        _ => solution,
    }
}

/// A component's LP solved by the simplex engine.
struct SimplexSolution {
    pairs: Vec<PairAssignment>,
    objective: f64,
    stats: SolveStats,
    fractional: Option<Fractional>,
}

/// Builds the component's LP at the chosen reduction and solves it with the simplex engine.
fn simplex_component(
    pairs: &[CandidatePair],
    members: &[usize],
    window: Window,
    params: &TrajectoryParams,
    options: &SolveOptions,
) -> Result<SimplexSolution> {
    let model = build(
        pairs,
        members,
        window,
        params.cutoff_power(),
        params.switch_cost(),
        options.reduction,
    );
    let values = solve::solve(&model.program, options.engine)?;
    let objective: f64 = model
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
    let integral = decoded.iter().all(is_integral);
    let fractional = (options.exact.is_some() && !integral).then(|| Fractional {
        members: members.to_vec(),
        model,
        values,
        objective,
    });
    Ok(SimplexSolution {
        pairs: decoded,
        objective,
        stats,
        fractional,
    })
}

/// The pricing fallback for a component the Lagrangian engine did not prove: the LP restricted
/// to the pairs whose reduced cost at the best prices is small (and those the best assignment
/// uses) is split into its own components and solved by the simplex engine. Its optimum z is
/// a feasible point of the full LP, so LP <= z; with the Lagrangian bound L <= LP, z - L within
/// the tolerance proves z is the LP optimum. Thresholds of 1, 8 and 64 times the gap are tried;
/// `None` when none proves it, or when the restriction would keep every pair.
fn solve_restricted(
    pairs: &[CandidatePair],
    members: &[usize],
    window: Window,
    params: &TrajectoryParams,
    options: &SolveOptions,
    outcome: &lagrangian::Outcome,
) -> Result<Option<ComponentSolution>> {
    let gap = outcome.upper - outcome.lower;
    if outcome.reduced_costs.len() != members.len() || !gap.is_finite() {
        return Ok(None);
    }
    let used: Vec<bool> = outcome.pairs.iter().map(|p| !p.spans.is_empty()).collect();
    let mut previous = 0;
    for factor in [1.0, 8.0, 64.0] {
        let threshold = gap * factor;
        let keep: Vec<usize> = (0..members.len())
            .filter(|&l| used[l] || outcome.reduced_costs[l] <= threshold)
            .collect();
        if keep.len() == members.len() {
            return Ok(None);
        }
        if keep.len() == previous {
            continue;
        }
        previous = keep.len();
        let started = Instant::now();
        let kept: Vec<usize> = keep.iter().map(|&l| members[l]).collect();
        let subset: Vec<CandidatePair> = kept.iter().map(|&m| pairs[m].clone()).collect();
        let groups: Vec<Vec<usize>> = components(&subset)
            .into_iter()
            .map(|group| group.into_iter().map(|g| kept[g]).collect())
            .collect();
        let variables: usize = groups
            .iter()
            .filter(|g| g.len() > 1)
            .map(|g| model::event_variables(pairs, g, window, params.switch_cost()))
            .sum();
        if !fallback_fits(variables, options) {
            return Ok(None);
        }
        let mut solution = ComponentSolution {
            pairs: Vec::with_capacity(members.len()),
            objective: 0.0,
            lower: outcome.lower,
            method: Method::Simplex,
            iterations: outcome.iterations,
            note: None,
            stats: SolveStats::default(),
            fractional: Vec::new(),
        };
        for group in &groups {
            if group.len() == 1 {
                let lone = lone_pair(&pairs[group[0]], window, params.cutoff_power());
                solution.objective += lone.objective;
                solution.pairs.extend(lone.pairs);
                continue;
            }
            let simplex = simplex_component(pairs, group, window, params, options)?;
            solution.objective += simplex.objective;
            solution.pairs.extend(simplex.pairs);
            solution.fractional.extend(simplex.fractional);
            let s = simplex.stats;
            solution.stats.lp_components += 1;
            solution.stats.variables += s.variables;
            solution.stats.constraints += s.constraints;
            solution.stats.nonzeros += s.nonzeros;
        }
        solution.stats.simplex_seconds = started.elapsed().as_secs_f64();
        if !lagrangian::proves(outcome.lower, solution.objective, outcome.scale) {
            continue;
        }
        // Proven. The pairs left out carry no weight.
        for (l, &m) in members.iter().enumerate() {
            if !used[l] && outcome.reduced_costs[l] > threshold {
                solution.pairs.push(PairAssignment {
                    truth: pairs[m].truth,
                    estimate: pairs[m].estimate,
                    spans: Vec::new(),
                    close: pairs[m].close.clone(),
                });
            }
        }
        return Ok(Some(prefer_integral(solution, Some(outcome.clone()))));
    }
    Ok(None)
}

/// Whether an LP of this many variables may go to the fallback simplex engine: within the memory
/// budget and the engine's size limit ([`FALLBACK_VARIABLES`]).
fn fallback_fits(variables: usize, options: &SolveOptions) -> bool {
    variables <= fallback_limit(options.engine.simplex())
        && (variables as u64).saturating_mul(BYTES_PER_LP_VARIABLE) <= options.memory_budget
}

/// The most LP variables the fallback gives a simplex engine ([`FALLBACK_VARIABLES`]).
fn fallback_limit(engine: Engine) -> usize {
    FALLBACK_VARIABLES
        .iter()
        .find(|(e, _)| *e == engine)
        .map_or(usize::MAX, |(_, limit)| *limit)
}

/// The truths and estimates of a component, each once, increasing.
fn component_objects(pairs: &[CandidatePair], members: &[usize]) -> (Vec<usize>, Vec<usize>) {
    let mut truths: Vec<usize> = members.iter().map(|&m| pairs[m].truth).collect();
    let mut estimates: Vec<usize> = members.iter().map(|&m| pairs[m].estimate).collect();
    truths.sort_unstable();
    truths.dedup();
    estimates.sort_unstable();
    estimates.dedup();
    (truths, estimates)
}
