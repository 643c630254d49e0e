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
//! components solved independently (in parallel). The default engine ([`lagrangian`]) solves a
//! component by one shortest path per truth under Lagrangian prices and proves its answer by a
//! lower and an upper bound that meet; a component it does not prove is event-compressed and
//! handed to a simplex engine ([`solve`]) when its LP fits the memory budget, and reported with
//! its bounds otherwise. Every score carries its [`Certificate`].
//!
//! With [`SolveOptions::exact`], components whose LP optimum is fractional are solved again as
//! integer programs ([`exact`]), and the score reports the exact metric with its certificate.
//!
//! Beside the engines, three files hold the steps of a score: `component` solves one component
//! (closed form, Lagrangian engine, pricing fallback, simplex engine), `decode` turns the solved
//! weights into the assignment, its parts and the certificate, and `result` holds the types a
//! score returns (re-exported here).

pub mod checks;
mod component;
mod decode;
pub mod exact;
pub mod lagrangian;
pub mod model;
pub mod pairs;
mod result;
pub mod solve;

use std::time::Instant;

use rayon::prelude::*;
use serde::Serialize;

use self::component::{solve_component, solve_fractional, ComponentSolution};
use self::decode::{certify, finish, with_exact, with_missed_share};
pub use self::exact::ExactBudget;
use self::model::Reduction;
use self::pairs::{candidate_pairs, components, CandidatePair};
pub use self::result::{
    Assignment, Certificate, ExactSummary, PairAssignment, Parts, SolveStats, TrajectoryScore,
    WeightSpan,
};
pub use self::solve::Engine;
use crate::distance::{power, Distance};
use crate::error::{Error, Result};
use crate::per_step::check_cutoff_order;
use crate::trajectory::{evaluation_window, TrajectorySet, Window};

/// The default memory budget of one score: 4 GiB, which fits a laptop.
pub const DEFAULT_MEMORY_BUDGET: u64 = 4 << 30;
/// Bytes the Lagrangian engine needs per cell (gain, price, occupancy, back-pointer) and per
/// close step of a candidate pair, with a margin.
const BYTES_PER_CELL: u64 = 48;

/// The parameters of trajectory GOSPA.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct TrajectoryParams {
    /// Cut-off c > 0.
    pub cutoff: f64,
    /// Order p >= 1.
    pub order: f64,
    /// Switching penalty gamma >= 0: a full switch costs gamma^p, a half switch gamma^p / 2.
    pub switch_penalty: f64,
    /// The share S in (0, 1) of c^p that a missed object-step costs; a false one costs the
    /// rest, (1 - S) c^p ([`TrajectoryParams::with_missed_share`], specs/missed-share.md).
    /// Written only when it is not 1/2, so that standard outputs keep their keys.
    #[serde(skip_serializing_if = "is_even_share")]
    pub missed_share: f64,
}

/// The default share of c^p a missed object-step costs: 1/2, as in GOSPA and trajectory GOSPA.
pub const EVEN_SHARE: f64 = 0.5;

/// Whether a missed share is the standard 1/2 (then it is not written).
pub(crate) fn is_even_share(share: &f64) -> bool {
    *share == EVEN_SHARE
}

/// Checks a missed share: a finite number strictly between 0 and 1.
pub(crate) fn check_missed_share(share: f64) -> Result<()> {
    if share.is_finite() && share > 0.0 && share < 1.0 {
        Ok(())
    } else {
        Err(Error::Parameter(format!(
            "the missed share must be a number strictly between 0 and 1 (a missed object-step \
             costs that share of c^p, a false one the rest), got {share}"
        )))
    }
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
            missed_share: EVEN_SHARE,
        })
    }

    /// The same parameters with a missed object-step costing `share` c^p and a false one
    /// (1 - share) c^p (1/2 each by default). The best assignments do not change: the score
    /// moves by the constant (share - 1/2) c^p (truth object-steps - estimate object-steps)
    /// (specs/missed-share.md).
    ///
    /// # Errors
    /// A share that is not a finite number strictly between 0 and 1.
    pub fn with_missed_share(self, share: f64) -> Result<Self> {
        check_missed_share(share)?;
        Ok(TrajectoryParams {
            missed_share: share,
            ..self
        })
    }

    /// The cost of one missed object-step: S c^p (c^p / 2 by default).
    pub fn missed_cost(&self) -> f64 {
        self.missed_share * self.cutoff_power()
    }

    /// The cost of one false object-step: (1 - S) c^p (c^p / 2 by default).
    pub fn false_cost(&self) -> f64 {
        (1.0 - self.missed_share) * self.cutoff_power()
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
    /// Bytes the solve may use for its models ([`DEFAULT_MEMORY_BUDGET`]): a simplex fallback
    /// that would need more is not started (the component is reported with its bounds), and a
    /// problem whose candidate pairs alone would need more is refused before they are built.
    pub memory_budget: u64,
    /// Subgradient iterations of the Lagrangian engine per component, at most.
    pub max_iterations: usize,
    /// Plain subgradient steps of the Lagrangian engine before it deflects them.
    pub deflect_after: usize,
}

impl Default for SolveOptions {
    fn default() -> Self {
        SolveOptions {
            engine: Engine::default(),
            reduction: Reduction::Events,
            split_components: true,
            keep_far_pairs: false,
            exact: None,
            memory_budget: DEFAULT_MEMORY_BUDGET,
            max_iterations: lagrangian::Settings::default().max_iterations,
            deflect_after: lagrangian::Settings::default().deflect_after,
        }
    }
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

/// What a long solve reports as it goes (for a progress display; the library never prints).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Progress {
    /// The components are known: how many need an engine, and the cells of the largest.
    Started {
        /// Components that need an engine (not a lone pair).
        components: usize,
    },
    /// One more subgradient iteration on a component with this many cells.
    Iteration {
        /// Cells of the component.
        cells: usize,
        /// Iterations done on it.
        iteration: usize,
    },
    /// A component is solved.
    ComponentDone,
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
    score_with_progress(truth, estimate, params, distance, options, &|_| {})
}

/// [`score_with`], telling `progress` how the solve goes.
///
/// # Errors
/// As [`score_with`]; also a problem whose candidate pairs would not fit the memory budget.
pub fn score_with_progress(
    truth: &TrajectorySet,
    estimate: &TrajectorySet,
    params: &TrajectoryParams,
    distance: &Distance,
    options: &SolveOptions,
    progress: &(dyn Fn(Progress) + Sync),
) -> Result<TrajectoryScore> {
    if options.keep_far_pairs && options.reduction == Reduction::Events {
        return Err(Error::Parameter(
            "far pairs can be kept only without event compression".into(),
        ));
    }
    if !options.engine.available() {
        return Err(Error::Parameter(format!(
            "this build has no {} engine; build one with `cargo build --release --features {}` \
             (needs cmake, a C++ compiler and libclang), or use --engine lagrangian",
            options.engine.name(),
            options.engine.name()
        )));
    }
    let window = evaluation_window(truth, estimate)?;
    distance.check_inputs(truth, estimate, params.cutoff)?;
    let Some(window) = window else {
        let empty = finish(params, None, Vec::new(), 0.0, SolveStats::default(), 0, 0);
        let empty = certify(empty, &[], 0.0);
        let empty = with_exact(empty, Vec::new(), options, params, (0, 0));
        return Ok(with_missed_share(empty, params));
    };
    let started = Instant::now();
    check_pair_budget(
        truth,
        estimate,
        window,
        params,
        distance,
        options.memory_budget,
    )?;
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
    let pairs_seconds = started.elapsed().as_secs_f64();
    progress(Progress::Started {
        components: groups.iter().filter(|g| g.len() > 1).count(),
    });
    let sets = (truth, estimate);
    let solved: Vec<ComponentSolution> = groups
        .par_iter()
        .map(|members| {
            let solution =
                solve_component(&pairs, members, window, params, options, sets, progress);
            if members.len() > 1 {
                progress(Progress::ComponentDone);
            }
            solution
        })
        .collect::<Result<_>>()?;
    let mut stats = SolveStats {
        candidate_pairs: candidate_count,
        components: groups.len(),
        pairs_seconds,
        ..SolveStats::default()
    };
    let mut objective = 0.0;
    let mut lower = 0.0;
    let mut assignments = Vec::with_capacity(pairs.len());
    let mut fractional = Vec::new();
    let mut methods = Vec::with_capacity(solved.len());
    let mut notes = Vec::new();
    for component in solved {
        fractional.extend(component.fractional);
        objective += component.objective;
        lower += component.lower;
        methods.push((component.method, component.iterations));
        notes.extend(component.note);
        let s = component.stats;
        stats.add_solve(&s);
        stats.largest_variables = stats.largest_variables.max(s.variables);
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
    let constant = params.cutoff_power() / 2.0 * (truth_points + estimate_points) as f64;
    let bounds = checks::bounds(truth, estimate, params, distance)?;
    let mut result = certify(result, &methods, (constant + lower).max(bounds.lower));
    result.notes = notes;
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
            lower: bounds.lower.max(score.certificate.lower.min(lp_total)),
            upper: bounds.upper,
            held: bounds.held,
        };
        checks::check_integral(&score, &bounds)?;
    }
    Ok(with_missed_share(score, params))
}

/// Refuses, before they are built, candidate pairs that could not fit the memory budget. When
/// the most close steps there can be (truths times estimates present, summed over the steps)
/// would not fit, the close steps are counted exactly first, without storing them.
fn check_pair_budget(
    truth: &TrajectorySet,
    estimate: &TrajectorySet,
    window: Window,
    params: &TrajectoryParams,
    distance: &Distance,
    budget: u64,
) -> Result<()> {
    let fits = |count: usize| (count as u64).saturating_mul(BYTES_PER_CELL) <= budget;
    if fits(pairs::most_close_steps(truth, estimate, window)) {
        return Ok(());
    }
    let mut close = 0usize;
    pairs::for_each_close_step(
        truth,
        estimate,
        window,
        params.cutoff,
        distance,
        |_, _, _, _| close += 1,
    );
    if fits(close) {
        return Ok(());
    }
    Err(Error::Budget(format!(
        "{close} truth-estimate pairs are within the cut-off {} at one step or another \
         (counted once per step), which would need about {} of memory, over the budget of {}; \
         choose a smaller cut-off (one near the errors a track may have while following an \
         object), split the scene into shorter windows, or raise --memory-budget",
        params.cutoff,
        bytes(close as u64 * BYTES_PER_CELL),
        bytes(budget)
    )))
}

/// A byte count for people, in the binary units `--memory-budget` takes, to three significant
/// figures: "3.21 GiB", "184 KiB", "512 bytes" (so that a need and a budget never print alike
/// when they differ).
fn bytes(count: u64) -> String {
    let (value, unit) = match count {
        0..1024 => return format!("{count} bytes"),
        1024..0x10_0000 => (count as f64 / 1024.0, "KiB"),
        0x10_0000..0x4000_0000 => (count as f64 / 1_048_576.0, "MiB"),
        _ => (count as f64 / 1_073_741_824.0, "GiB"),
    };
    let decimals = if value >= 100.0 {
        0
    } else if value >= 10.0 {
        1
    } else {
        2
    };
    format!("{value:.decimals$} {unit}")
}
