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

pub mod checks;
pub mod exact;
pub mod lagrangian;
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
/// The default memory budget of one score: 4 GiB, which fits a laptop.
pub const DEFAULT_MEMORY_BUDGET: u64 = 4 << 30;
/// Bytes a simplex engine needs per variable of the compressed LP, with a margin (measured:
/// about 1.8 kB for microlp and 2.3 kB for HiGHS on the large benchmark scene).
const BYTES_PER_LP_VARIABLE: u64 = 3000;
/// The largest LP (in variables) the Lagrangian engine hands to microlp as a fallback, and to
/// HiGHS: microlp needs about 6 s for 60,000 variables and minutes beyond (measured on this
/// LP family), HiGHS about 5 s for 300,000. A count, so that results do not depend on the
/// machine's speed; `--engine microlp` or `--engine highs` solve every group whatever its size.
const FALLBACK_VARIABLES: [(Engine, usize); 2] =
    [(Engine::Microlp, 60_000), (Engine::Highs, 1_500_000)];

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
    /// Cells of the Lagrangian engine's shortest-path model (truth-steps in pairs' windows).
    pub cells: usize,
    /// Seconds spent finding the candidate pairs and components (not serialised: output must
    /// not depend on the machine's speed).
    #[serde(skip)]
    pub pairs_seconds: f64,
    /// Seconds in the Lagrangian engine's shortest paths, summed over components.
    #[serde(skip)]
    pub paths_seconds: f64,
    /// Seconds in the Lagrangian engine's greedy repairs, summed over components.
    #[serde(skip)]
    pub repair_seconds: f64,
    /// Seconds in simplex solves, summed over components.
    #[serde(skip)]
    pub simplex_seconds: f64,
}

/// How a component was solved.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Method {
    /// A lone pair: full weight throughout, optimal by inspection.
    ClosedForm,
    /// The Lagrangian bounds met.
    Lagrangian,
    /// A simplex engine solved its LP.
    Simplex,
    /// Not proven: only bounds.
    Bounded,
}

/// The proof behind a score: bounds of the LP optimum and how each component was solved.
///
/// `lower <= LP optimum <= upper = total`. When `proven`, `upper - lower` is within the
/// tolerance (1e-9 of the value) and `total` is the LP optimum; a proven integral assignment is
/// also the exact metric.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize)]
pub struct Certificate {
    /// True when every component's value is proven optimal.
    pub proven: bool,
    /// A proven lower bound of the LP optimum, d^p.
    pub lower: f64,
    /// d^p of the assignment reported (the total): an upper bound of the LP optimum and, when
    /// the assignment is integral, of the exact metric.
    pub upper: f64,
    /// (upper - lower) / upper, 0 when upper is 0.
    pub gap: f64,
    /// Components solved in closed form (a lone pair).
    pub closed_form: usize,
    /// Components proven by the Lagrangian engine's bounds.
    pub lagrangian: usize,
    /// Components solved by a simplex engine.
    pub simplex: usize,
    /// Components not proven: reported with bounds only.
    pub bounded: usize,
    /// Subgradient iterations, the most any component needed.
    pub iterations: usize,
}

/// The four parts of trajectory GOSPA's d^p and the counts behind them: one struct wherever a
/// score is reported (a single case, or aggregated over cases; the aggregate's documentation
/// says whether it holds means or sums).
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize)]
pub struct Parts {
    /// Localisation part (p-th power units).
    pub localization: f64,
    /// Missed part.
    pub missed: f64,
    /// False part.
    #[serde(rename = "false")]
    pub false_: f64,
    /// Switching part.
    pub switching: f64,
    /// Truth object-steps not assigned (fractional when the LP is).
    pub missed_count: f64,
    /// Estimate object-steps not assigned.
    pub false_count: f64,
    /// Full switches count 1, half switches 0.5.
    pub switch_count: f64,
}

impl Parts {
    /// d^p: the sum of the four parts.
    pub fn sum(&self) -> f64 {
        self.localization + self.missed + self.false_ + self.switching
    }
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
    /// The four parts of d^p and the counts behind them.
    #[serde(flatten)]
    pub parts: Parts,
    /// True when every weight of the assignment reported is 0 or 1 and its value is proven
    /// optimal ([`Certificate::proven`]): then the LP value is also the exact (assignment)
    /// metric. With [`SolveOptions::exact`] the weights reported are integral
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
    /// The bounds that prove the value, and how each component was solved.
    pub certificate: Certificate,
    /// Notes for the user about components that could not be proven (why, and what to do).
    #[serde(skip)]
    pub notes: Vec<String>,
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
    /// A proven lower bound of the component's LP optimum (gain form).
    lower: f64,
    method: Method,
    iterations: usize,
    note: Option<String>,
    stats: SolveStats,
    /// With [`SolveOptions::exact`], the parts of the component whose LP optimum is
    /// fractional, kept for the integer pass.
    fractional: Vec<Fractional>,
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
        return Ok(with_exact(empty, Vec::new(), options, params, (0, 0)));
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
        stats.lp_components += s.lp_components;
        stats.variables += s.variables;
        stats.constraints += s.constraints;
        stats.nonzeros += s.nonzeros;
        stats.largest_variables = stats.largest_variables.max(s.variables);
        stats.cells += s.cells;
        stats.paths_seconds += s.paths_seconds;
        stats.repair_seconds += s.repair_seconds;
        stats.simplex_seconds += s.simplex_seconds;
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
    Ok(score)
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

/// Fills in the certificate of an LP score from how its components were solved and the proven
/// lower bound of its d^p; an assignment is integral only when it is also proven.
fn certify(mut score: TrajectoryScore, methods: &[(Method, usize)], lower: f64) -> TrajectoryScore {
    let count = |m: Method| methods.iter().filter(|(method, _)| *method == m).count();
    let bounded = count(Method::Bounded);
    let upper = score.total;
    let lower = lower.min(upper);
    score.certificate = Certificate {
        proven: bounded == 0,
        lower,
        upper,
        gap: if upper > 0.0 {
            (upper - lower) / upper
        } else {
            0.0
        },
        closed_form: count(Method::ClosedForm),
        lagrangian: count(Method::Lagrangian),
        simplex: count(Method::Simplex),
        bounded,
        iterations: methods.iter().map(|m| m.1).max().unwrap_or(0),
    };
    score.integral &= bounded == 0;
    score
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

fn solve_component(
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
