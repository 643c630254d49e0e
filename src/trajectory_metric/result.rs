//! What a score returns: the score and its parts, the assignment behind it (weights of each
//! truth-estimate pair over the window), the certificate that proves it, and the sizes of the
//! programs solved.

use serde::Serialize;

use crate::per_step::PartKeys;

use super::exact::ExactBudget;
use super::pairs::CloseStep;
use super::TrajectoryParams;
use crate::trajectory::{Step, Window};

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

impl SolveStats {
    /// Adds the sizes and times of a solve of other groups: the LP counts and the seconds
    /// solving add up. The candidate pairs, the groups, the seconds finding them and the
    /// largest group are the caller's to combine.
    pub fn add_solve(&mut self, other: &SolveStats) {
        self.lp_components += other.lp_components;
        self.variables += other.variables;
        self.constraints += other.constraints;
        self.nonzeros += other.nonzeros;
        self.cells += other.cells;
        self.paths_seconds += other.paths_seconds;
        self.repair_seconds += other.repair_seconds;
        self.simplex_seconds += other.simplex_seconds;
    }
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

impl Certificate {
    /// The relative gap of two bounds: (upper - lower) / upper, 0 when upper is 0.
    pub fn relative_gap(lower: f64, upper: f64) -> f64 {
        if upper > 0.0 {
            (upper - lower).max(0.0) / upper
        } else {
            0.0
        }
    }
}

/// The four parts of trajectory GOSPA's d^p and the counts behind them: one struct wherever a
/// score is reported (a single case, or aggregated over cases; the aggregate's documentation
/// says whether it holds means or sums).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Parts {
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
}

/// How [`Parts`] is written: its fields in order, the localisation part under
/// `localisation` and, for one release, also under its earlier key `localization`.
#[derive(Serialize)]
struct PartsKeys<'a> {
    #[serde(flatten)]
    parts: PartKeys<'a, f64>,
    switching: &'a f64,
    missed_count: &'a f64,
    false_count: &'a f64,
    switch_count: &'a f64,
}

impl Serialize for Parts {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        PartsKeys {
            parts: PartKeys::new(&self.localization, &self.missed, &self.false_),
            switching: &self.switching,
            missed_count: &self.missed_count,
            false_count: &self.false_count,
            switch_count: &self.switch_count,
        }
        .serialize(serializer)
    }
}

impl std::ops::AddAssign for Parts {
    /// Adds another scene's parts and counts to these (scenes scored apart, such as classes).
    fn add_assign(&mut self, other: Parts) {
        self.localization += other.localization;
        self.missed += other.missed;
        self.false_ += other.false_;
        self.switching += other.switching;
        self.missed_count += other.missed_count;
        self.false_count += other.false_count;
        self.switch_count += other.switch_count;
    }
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
    /// metric. With [`SolveOptions::exact`](super::SolveOptions::exact) the weights reported
    /// are integral whatever this says.
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

/// The certificate of an exact computation ([`SolveOptions::exact`](super::SolveOptions::exact)).
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
