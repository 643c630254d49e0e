//! Per-step GOSPA: the generalized optimal sub-pattern assignment metric between the truth and
//! estimate sets of each step, with its localisation, missed and false parts.
//!
//! Source: A. S. Rahmathullah, Á. F. García-Fernández, L. Svensson, "Generalized optimal
//! sub-pattern assignment metric", FUSION 2017 (arXiv:1601.05585). For sets X (m points) and
//! Y (n points), cut-off c, order p and alpha in (0, 2]:
//!
//! GOSPA^p = min over assignments of the smaller set of sum min(d, c)^p + (c^p / alpha) |m - n|.
//!
//! In gain form, with g(x, y) = min(d, c)^p - c^p (negative only when d < c), this is
//! c^p min(m, n) + (c^p / alpha) |m - n| + (least sum of g over one-to-one pairings of close
//! points). Pairs at distance >= c never help, so they are gated out, and each connected group
//! of close points is solved on its own with the Jonker-Volgenant shortest augmenting path
//! algorithm (the `lsap` crate, the algorithm behind scipy's `linear_sum_assignment`).

use serde::Serialize;

use crate::distance::{power, root, Distance, Gate};
use crate::error::{Error, Result};
use crate::trajectory::{Frames, Presence, Step, TrajectorySet, Window};
use crate::trajectory_metric::{check_missed_share, is_even_share, TrajectoryParams, EVEN_SHARE};

/// The parameters of GOSPA.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct GospaParams {
    /// The cut-off c > 0: the most a single point can cost.
    pub cutoff: f64,
    /// The order p >= 1.
    pub order: f64,
    /// alpha in (0, 2]; 2 gives the localisation, missed and false split.
    pub alpha: f64,
    /// The share S in (0, 1) of c^p that a missed object costs; a false one costs the rest
    /// ([`GospaParams::with_missed_share`], specs/missed-share.md). Not 1/2 only with alpha = 2;
    /// written only when it is not 1/2.
    #[serde(skip_serializing_if = "is_even_share")]
    pub missed_share: f64,
}

impl GospaParams {
    /// Checks and builds the parameters.
    ///
    /// # Errors
    /// A cut-off that is not a positive finite number, an order below 1 or not finite, an alpha
    /// outside (0, 2].
    pub fn new(cutoff: f64, order: f64, alpha: f64) -> Result<Self> {
        check_cutoff_order(cutoff, order)?;
        if !(alpha > 0.0 && alpha <= 2.0) {
            return Err(Error::Parameter(format!(
                "alpha must lie in (0, 2], got {alpha}"
            )));
        }
        Ok(GospaParams {
            cutoff,
            order,
            alpha,
            missed_share: EVEN_SHARE,
        })
    }

    /// The same parameters with a missed object costing `share` c^p and a false one
    /// (1 - share) c^p at each step (1/2 each by default). The assignment at each step does not
    /// change: GOSPA^p moves by (share - 1/2) c^p (truths - estimates present)
    /// (specs/missed-share.md).
    ///
    /// # Errors
    /// A share that is not a finite number strictly between 0 and 1, or one other than 1/2
    /// with alpha other than 2 (the split into missed and false exists only for alpha = 2).
    pub fn with_missed_share(self, share: f64) -> Result<Self> {
        check_missed_share(share)?;
        if self.alpha != 2.0 && !is_even_share(&share) {
            return Err(Error::Parameter(format!(
                "a missed share other than 0.5 needs alpha = 2 (only then does GOSPA split into \
                 missed and false costs), got alpha {} with the share {share}",
                self.alpha
            )));
        }
        Ok(GospaParams {
            missed_share: share,
            ..self
        })
    }

    /// Per-step GOSPA beside trajectory GOSPA: the same cut-off, order and missed share, with
    /// alpha = 2.
    ///
    /// # Errors
    /// As [`GospaParams::new`].
    pub fn beside(params: &TrajectoryParams) -> Result<Self> {
        GospaParams::new(params.cutoff, params.order, 2.0)?.with_missed_share(params.missed_share)
    }

    /// The cost of one missed object at one step (alpha = 2): S c^p (c^p / 2 by default).
    pub fn missed_cost(&self) -> f64 {
        self.missed_share * self.cutoff_power()
    }

    /// The cost of one false object at one step (alpha = 2): (1 - S) c^p (c^p / 2 by default).
    pub fn false_cost(&self) -> f64 {
        (1.0 - self.missed_share) * self.cutoff_power()
    }

    /// c^p.
    pub fn cutoff_power(&self) -> f64 {
        power(self.cutoff, self.order)
    }
}

/// Checks a cut-off and an order, shared by every metric here.
pub(crate) fn check_cutoff_order(cutoff: f64, order: f64) -> Result<()> {
    if !(cutoff.is_finite() && cutoff > 0.0) {
        return Err(Error::Parameter(format!(
            "the cut-off must be a positive finite number, got {cutoff}"
        )));
    }
    if !(order.is_finite() && order >= 1.0) {
        return Err(Error::Parameter(format!(
            "the order must be a finite number >= 1, got {order}"
        )));
    }
    let cutoff_power = power(cutoff, order);
    if !cutoff_power.is_finite() {
        return Err(Error::Parameter(format!(
            "the cut-off {cutoff} raised to the order {order} overflows"
        )));
    }
    if cutoff_power < f64::MIN_POSITIVE {
        return Err(Error::Parameter(format!(
            "the cut-off {cutoff} raised to the order {order} underflows (below 2.2e-308)"
        )));
    }
    Ok(())
}

/// GOSPA between two sets of points, with the pairs that realise it.
#[derive(Clone, Debug, PartialEq)]
pub struct SetScore {
    /// GOSPA^p.
    pub power: f64,
    /// Sum of d^p over assigned pairs (alpha = 2 only, else `None`).
    pub localization: Option<f64>,
    /// The missed cost (S c^p, c^p / 2 by default) x missed count (alpha = 2 only).
    pub missed: Option<f64>,
    /// The false cost ((1 - S) c^p, c^p / 2 by default) x false count (alpha = 2 only).
    pub false_: Option<f64>,
    /// Truth points not assigned.
    pub missed_count: usize,
    /// Estimate points not assigned.
    pub false_count: usize,
    /// Assigned `(truth index, estimate index)` pairs, sorted; every pair is closer than c.
    pub pairs: Vec<(usize, usize)>,
}

/// Reusable buffers for solving many steps.
#[derive(Default)]
struct Workspace {
    gate: Gate,
    close: Vec<(u32, u32, f64)>,
    parent: Vec<u32>,
    group_of: Vec<u32>,
    rows: Vec<u32>,
    cols: Vec<u32>,
    local: Vec<u32>,
    matrix: Vec<f64>,
    costs: Vec<f64>,
    order: Vec<u32>,
}

fn find(parent: &mut [u32], mut a: u32) -> u32 {
    while parent[a as usize] != a {
        let up = parent[parent[a as usize] as usize];
        parent[a as usize] = up;
        a = up;
    }
    a
}

impl Workspace {
    /// Solves one set pair; `truth(i)` and `estimate(j)` give the states.
    fn solve<'a>(
        &mut self,
        m: usize,
        n: usize,
        truth: impl Fn(usize) -> &'a [f64],
        estimate: impl Fn(usize) -> &'a [f64],
        params: &GospaParams,
        distance: &Distance,
    ) -> SetScore {
        let cp = params.cutoff_power();
        self.close.clear();
        let close = &mut self.close;
        self.gate.close_pairs(
            (m, truth),
            (n, estimate),
            params.cutoff,
            distance,
            |i, j, d| {
                close.push((i as u32, j as u32, power(d, params.order)));
            },
        );
        // The gate finds pairs in no set order; the assignment's tie-breaks depend on it.
        self.close.sort_unstable_by_key(|&(i, j, _)| (i, j));
        let mut pairs: Vec<(usize, usize, f64)> = Vec::new();
        if !self.close.is_empty() {
            self.assign(m, n, cp, &mut pairs);
        }
        pairs.sort_by_key(|&(i, j, _)| (i, j));
        let gain: f64 = pairs.iter().map(|&(_, _, dp)| dp - cp).sum();
        let assigned = pairs.len();
        // Folded from +0.0: `Sum` for f64 starts from -0.0, which would print as "-0".
        let localization: f64 = pairs.iter().fold(0.0, |sum, &(_, _, dp)| sum + dp);
        let missed_count = m - assigned;
        let false_count = n - assigned;
        let (power, parts) = if params.alpha == 2.0 {
            // The assignment above does not depend on the missed share: with it, the missed
            // and false costs differ from c^p / 2 by opposite amounts, so GOSPA^p moves by
            // (S - 1/2) c^p (m - n) whatever is assigned (specs/missed-share.md).
            let missed = params.missed_cost() * missed_count as f64;
            let false_ = params.false_cost() * false_count as f64;
            (localization + missed + false_, Some((missed, false_)))
        } else {
            let value = cp * m.min(n) as f64 + cp / params.alpha * m.abs_diff(n) as f64 + gain;
            (value, None)
        };
        SetScore {
            power: power.max(0.0),
            localization: parts.map(|_| localization),
            missed: parts.map(|p| p.0),
            false_: parts.map(|p| p.1),
            missed_count,
            false_count,
            pairs: pairs.into_iter().map(|(i, j, _)| (i, j)).collect(),
        }
    }

    /// Splits the close pairs into connected groups and solves each with an assignment solver.
    fn assign(&mut self, m: usize, n: usize, cp: f64, pairs: &mut Vec<(usize, usize, f64)>) {
        let nodes = m + n;
        self.parent.clear();
        self.parent.extend(0..nodes as u32);
        for &(i, j, _) in &self.close {
            let a = find(&mut self.parent, i);
            let b = find(&mut self.parent, m as u32 + j);
            if a != b {
                self.parent[a.max(b) as usize] = a.min(b);
            }
        }
        // Group close pairs by their root, keeping a deterministic order.
        self.order.clear();
        self.order.extend(0..self.close.len() as u32);
        self.group_of.clear();
        for k in 0..self.close.len() {
            let root = find(&mut self.parent, self.close[k].0);
            self.group_of.push(root);
        }
        let group_of = &self.group_of;
        self.order.sort_by_key(|&k| (group_of[k as usize], k));
        let mut start = 0;
        while start < self.order.len() {
            let root = self.group_of[self.order[start] as usize];
            let mut end = start;
            while end < self.order.len() && self.group_of[self.order[end] as usize] == root {
                end += 1;
            }
            if end - start == 1 {
                let (i, j, dp) = self.close[self.order[start] as usize];
                pairs.push((i as usize, j as usize, dp));
            } else {
                self.solve_group(start, end, m, n, cp, pairs);
            }
            start = end;
        }
    }

    fn solve_group(
        &mut self,
        start: usize,
        end: usize,
        m: usize,
        n: usize,
        cp: f64,
        pairs: &mut Vec<(usize, usize, f64)>,
    ) {
        const NONE: u32 = u32::MAX;
        self.local.clear();
        self.local.resize(m + n, NONE);
        self.rows.clear();
        self.cols.clear();
        for &k in &self.order[start..end] {
            let (i, j, _) = self.close[k as usize];
            if self.local[i as usize] == NONE {
                self.local[i as usize] = self.rows.len() as u32;
                self.rows.push(i);
            }
            if self.local[m + j as usize] == NONE {
                self.local[m + j as usize] = self.cols.len() as u32;
                self.cols.push(j);
            }
        }
        let (r, c) = (self.rows.len(), self.cols.len());
        // d^p of each close pair of the group; NaN where the pair is not close.
        self.costs.clear();
        self.costs.resize(r * c, f64::NAN);
        for &k in &self.order[start..end] {
            let (i, j, dp) = self.close[k as usize];
            let (a, b) = (self.local[i as usize], self.local[m + j as usize]);
            self.costs[a as usize * c + b as usize] = dp;
        }
        // The gains d^p - c^p lose the low digits of d^p when c^p is much the larger. When c^p
        // exceeds min(r, c) times the largest d^p, one more assigned pair always gains more
        // than any rearrangement of d^p can, so the optimum is the matching with the most close
        // pairs and, among those, the least sum of d^p: solved exactly on d^p itself, with far
        // pairs priced above any such sum.
        let largest = self
            .costs
            .iter()
            .copied()
            .filter(|v| !v.is_nan())
            .fold(0.0, f64::max);
        let lexicographic = cp > r.min(c) as f64 * largest;
        let far = (r.min(c) as f64 + 1.0) * largest + 1.0;
        self.matrix.clear();
        self.matrix.extend(
            self.costs
                .iter()
                .map(|&dp| match (dp.is_nan(), lexicographic) {
                    (true, true) => far,
                    (true, false) => 0.0,
                    (false, true) => dp,
                    (false, false) => dp - cp,
                }),
        );
        let (row_ind, col_ind) =
            lsap::solve(r, c, &self.matrix, false).expect("finite costs always have an assignment");
        for (a, b) in row_ind.into_iter().zip(col_ind) {
            let dp = self.costs[a * c + b];
            let worth = if lexicographic {
                !dp.is_nan()
            } else {
                self.matrix[a * c + b] < 0.0
            };
            if worth {
                pairs.push((self.rows[a] as usize, self.cols[b] as usize, dp));
            }
        }
    }
}

/// GOSPA between two sets of points. O(m n) distances plus an assignment per close group.
///
/// # Example
/// ```
/// use switchyard::distance::Distance;
/// use switchyard::per_step::{gospa_between, GospaParams};
/// // Check value from the project's metric notes: c = 2, p = 1, X = {0, 10}, Y = {0.5, 20, 30}.
/// let params = GospaParams::new(2.0, 1.0, 2.0).unwrap();
/// let x: Vec<&[f64]> = vec![&[0.0], &[10.0]];
/// let y: Vec<&[f64]> = vec![&[0.5], &[20.0], &[30.0]];
/// let score = gospa_between(&x, &y, &params, &Distance::default());
/// assert!((score.power - 3.5).abs() < 1e-12);
/// ```
pub fn gospa_between(
    truth: &[&[f64]],
    estimate: &[&[f64]],
    params: &GospaParams,
    distance: &Distance,
) -> SetScore {
    Workspace::default().solve(
        truth.len(),
        estimate.len(),
        |i| truth[i],
        |j| estimate[j],
        params,
        distance,
    )
}

/// The localisation, missed and false keys as every JSON output writes them: the localisation
/// part under `localisation` and, for one release, also under its earlier key `localization`.
#[derive(Serialize)]
pub(crate) struct PartKeys<'a, T> {
    localisation: &'a T,
    localization: &'a T,
    missed: &'a T,
    #[serde(rename = "false")]
    false_: &'a T,
}

impl<'a, T> PartKeys<'a, T> {
    /// The keys of these three parts.
    pub(crate) fn new(localisation: &'a T, missed: &'a T, false_: &'a T) -> Self {
        PartKeys {
            localisation,
            localization: localisation,
            missed,
            false_,
        }
    }
}

/// One step's GOSPA and its parts.
#[derive(Clone, Debug, PartialEq)]
pub struct StepScore {
    /// The step.
    pub time: Step,
    /// GOSPA (not raised to p).
    pub gospa: f64,
    /// Localisation part, in p-th power units (alpha = 2 only).
    pub localization: Option<f64>,
    /// Missed part, in p-th power units (alpha = 2 only).
    pub missed: Option<f64>,
    /// False part, in p-th power units (alpha = 2 only).
    pub false_: Option<f64>,
    /// Truths present and not assigned.
    pub missed_count: usize,
    /// Estimates present and not assigned.
    pub false_count: usize,
    /// Truths present.
    pub truth_count: usize,
    /// Estimates present.
    pub estimate_count: usize,
}

/// How [`StepScore`] is written: its fields in order, the localisation part under
/// `localisation` and, for one release, also under its earlier key `localization`.
#[derive(Serialize)]
struct StepScoreKeys<'a> {
    time: &'a Step,
    gospa: &'a f64,
    #[serde(flatten)]
    parts: PartKeys<'a, Option<f64>>,
    missed_count: &'a usize,
    false_count: &'a usize,
    truth_count: &'a usize,
    estimate_count: &'a usize,
}

impl Serialize for StepScore {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        StepScoreKeys {
            time: &self.time,
            gospa: &self.gospa,
            parts: PartKeys::new(&self.localization, &self.missed, &self.false_),
            missed_count: &self.missed_count,
            false_count: &self.false_count,
            truth_count: &self.truth_count,
            estimate_count: &self.estimate_count,
        }
        .serialize(serializer)
    }
}

/// Totals over the window.
#[derive(Clone, Debug, PartialEq)]
pub struct StepSummary {
    /// Steps in the window.
    pub steps: usize,
    /// Sum of the per-step GOSPA values.
    pub sum: f64,
    /// Mean of the per-step GOSPA values.
    pub mean: f64,
    /// (mean of GOSPA^p)^(1/p): the root-mean-p of the values.
    pub root_mean_power: f64,
    /// Sum of the localisation parts (alpha = 2 only).
    pub localization: Option<f64>,
    /// Sum of the missed parts (alpha = 2 only).
    pub missed: Option<f64>,
    /// Sum of the false parts (alpha = 2 only).
    pub false_: Option<f64>,
    /// Sum of the missed counts.
    pub missed_count: usize,
    /// Sum of the false counts.
    pub false_count: usize,
}

/// How [`StepSummary`] is written: its fields in order, the localisation part under
/// `localisation` and, for one release, also under its earlier key `localization`.
#[derive(Serialize)]
struct StepSummaryKeys<'a> {
    steps: &'a usize,
    sum: &'a f64,
    mean: &'a f64,
    root_mean_power: &'a f64,
    #[serde(flatten)]
    parts: PartKeys<'a, Option<f64>>,
    missed_count: &'a usize,
    false_count: &'a usize,
}

impl Serialize for StepSummary {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        StepSummaryKeys {
            steps: &self.steps,
            sum: &self.sum,
            mean: &self.mean,
            root_mean_power: &self.root_mean_power,
            parts: PartKeys::new(&self.localization, &self.missed, &self.false_),
            missed_count: &self.missed_count,
            false_count: &self.false_count,
        }
        .serialize(serializer)
    }
}

/// Per-step GOSPA over a window.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct StepSeries {
    /// The window evaluated, `None` when both sets are empty.
    pub window: Option<Window>,
    /// One entry per step of the window.
    pub steps: Vec<StepScore>,
    /// Totals.
    pub summary: StepSummary,
}

/// Solves GOSPA at every step of the window covering both sets where any object is present, in
/// time order, handing each step's result to `visit(time, score, truths present, estimates
/// present)` without keeping it; the pairs in `score` index into those two lists. Steps with no
/// object are skipped: their GOSPA is 0 and they assign nothing. Returns the window.
///
/// # Errors
/// As [`per_step`].
pub(crate) fn for_each_step(
    truth: &TrajectorySet,
    estimate: &TrajectorySet,
    params: &GospaParams,
    distance: &Distance,
    mut visit: impl FnMut(Step, &SetScore, &[Presence], &[Presence]),
) -> Result<Option<Window>> {
    let window = crate::trajectory::evaluation_window(truth, estimate)?;
    distance.check_inputs(truth, estimate, params.cutoff)?;
    if let Some(window) = window {
        let truth_frames = Frames::new(truth, window);
        let estimate_frames = Frames::new(estimate, window);
        let mut workspace = Workspace::default();
        for (time, xs, ys) in truth_frames.occupied_with(&estimate_frames) {
            let score = workspace.solve(
                xs.len(),
                ys.len(),
                |i| truth.get(xs[i].object as usize).state(xs[i].point as usize),
                |j| {
                    estimate
                        .get(ys[j].object as usize)
                        .state(ys[j].point as usize)
                },
                params,
                distance,
            );
            visit(time, &score, xs, ys);
        }
    }
    Ok(window)
}

/// Per-step GOSPA kept only at the steps where an object is present: memory follows the points,
/// not the window. Every other step of the window has GOSPA 0, parts 0 (alpha = 2) and no
/// objects; [`OccupiedSteps::steps`] gives them all, one per step.
#[derive(Clone, Debug, PartialEq)]
pub struct OccupiedSteps {
    /// The window evaluated, `None` when both sets are empty.
    pub window: Option<Window>,
    /// One entry per step with at least one truth or estimate present, in time order.
    pub occupied: Vec<StepScore>,
    /// Totals over every step of the window (empty steps count as steps with GOSPA 0).
    pub summary: StepSummary,
    /// The score of a step with no object (its time set per step).
    empty: StepScore,
}

/// A stretch of the window: one step with objects, or a run of steps with none. `T` is what an
/// occupied step holds (a step's score, or a summary over runs).
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Stretch<'a, T = StepScore> {
    /// A step where an object is present.
    Occupied(&'a T),
    /// Every step from `first` to `last` (both included) has no object.
    Empty {
        /// The first empty step.
        first: Step,
        /// The last empty step.
        last: Step,
    },
}

impl OccupiedSteps {
    /// The score of a step with no object at `time`.
    pub fn empty_step(&self, time: Step) -> StepScore {
        StepScore {
            time,
            ..self.empty.clone()
        }
    }

    /// The window in order: each occupied step, and each maximal run of empty steps as one
    /// item. O(occupied steps) items.
    pub fn stretches(&self) -> impl Iterator<Item = Stretch<'_>> + '_ {
        stretches(self.window, &self.occupied, |score| score.time)
    }

    /// Every step of the window in time order, empty ones made on the fly (nothing is held).
    pub fn steps(&self) -> impl Iterator<Item = StepScore> + '_ {
        every_step(self.stretches(), |time| self.empty_step(time))
    }

    /// Several series of one scene's disjoint parts (the classes of a scene) added up step by
    /// step: at each step the GOSPA^p values, the parts and the counts are sums and GOSPA is the
    /// p-th root of the sum; the totals are over the steps of `window`, which must hold every
    /// series' window. Sums, so meant for alpha = 2 (the caller checks). O(occupied steps x
    /// log(series)).
    ///
    /// # Errors
    /// Sums that overflow, as [`occupied_steps`].
    pub fn sum(
        series: &[&OccupiedSteps],
        window: Option<Window>,
        params: &GospaParams,
    ) -> Result<OccupiedSteps> {
        let mut by_time: std::collections::BTreeMap<Step, (f64, StepScore)> = Default::default();
        let add = |a: Option<f64>, b: Option<f64>| a.zip(b).map(|(a, b)| a + b);
        for one in series {
            for s in &one.occupied {
                let (power_sum, sum) = by_time.entry(s.time).or_insert_with(|| {
                    (
                        0.0,
                        StepScore {
                            time: s.time,
                            gospa: 0.0,
                            localization: Some(0.0),
                            missed: Some(0.0),
                            false_: Some(0.0),
                            missed_count: 0,
                            false_count: 0,
                            truth_count: 0,
                            estimate_count: 0,
                        },
                    )
                });
                *power_sum += power(s.gospa, params.order);
                sum.localization = add(sum.localization, s.localization);
                sum.missed = add(sum.missed, s.missed);
                sum.false_ = add(sum.false_, s.false_);
                sum.missed_count += s.missed_count;
                sum.false_count += s.false_count;
                sum.truth_count += s.truth_count;
                sum.estimate_count += s.estimate_count;
            }
        }
        let occupied: Vec<StepScore> = by_time
            .into_values()
            .map(|(power_sum, score)| StepScore {
                gospa: root(power_sum, params.order),
                ..score
            })
            .collect();
        let empty = match series.first() {
            Some(first) => first.empty.clone(),
            None => StepScore {
                time: 0,
                gospa: 0.0,
                localization: None,
                missed: None,
                false_: None,
                missed_count: 0,
                false_count: 0,
                truth_count: 0,
                estimate_count: 0,
            },
        };
        finish(window, occupied, empty, params)
    }

    /// The series with one entry per step of the window (memory follows the window).
    pub fn into_series(self) -> StepSeries {
        StepSeries {
            window: self.window,
            steps: self.steps().collect(),
            summary: self.summary,
        }
    }
}

/// The stretches of `window` around `occupied` (entries at steps inside the window, strictly
/// increasing in `time`): each occupied entry, and each maximal run of steps without one as a
/// single item. O(occupied entries) items, nothing allocated.
pub fn stretches<'a, T>(
    window: Option<Window>,
    occupied: &'a [T],
    time: impl Fn(&T) -> Step + 'a,
) -> impl Iterator<Item = Stretch<'a, T>> + 'a {
    let end = window.map_or(0, |w| w.last + 1);
    let mut next = window.map_or(0, |w| w.first);
    let mut k = 0;
    std::iter::from_fn(move || {
        if next >= end {
            return None;
        }
        let stretch = match occupied.get(k) {
            Some(entry) if time(entry) == next => {
                k += 1;
                Stretch::Occupied(entry)
            }
            upcoming => {
                let last = upcoming.map_or(end - 1, |entry| time(entry) - 1);
                Stretch::Empty { first: next, last }
            }
        };
        next = match stretch {
            Stretch::Occupied(entry) => time(entry) + 1,
            Stretch::Empty { last, .. } => last + 1,
        };
        Some(stretch)
    })
}

/// One item per step of the stretches, in order: each occupied entry cloned, each empty step
/// made by `empty(time)` on the fly.
pub fn every_step<'a, T: Clone + 'a>(
    stretches: impl Iterator<Item = Stretch<'a, T>> + 'a,
    empty: impl Fn(Step) -> T + Clone + 'a,
) -> impl Iterator<Item = T> + 'a {
    stretches.flat_map(move |stretch| {
        let empty = empty.clone();
        let (first, last, occupied) = match stretch {
            Stretch::Occupied(entry) => (0, 0, Some(entry)),
            Stretch::Empty { first, last } => (first, last, None),
        };
        (first..=last).map(move |time| match occupied {
            Some(entry) => entry.clone(),
            None => empty(time),
        })
    })
}

/// Per-step GOSPA for every step of the window covering both sets, one entry per step. For long
/// windows with few objects use [`occupied_steps`], whose memory follows the points.
///
/// # Errors
/// Sets of different dimensions, a window too long to hold, a distance that does not fit the
/// states or the cut-off ([`Distance::check_inputs`]).
pub fn per_step(
    truth: &TrajectorySet,
    estimate: &TrajectorySet,
    params: &GospaParams,
    distance: &Distance,
) -> Result<StepSeries> {
    occupied_steps(truth, estimate, params, distance).map(OccupiedSteps::into_series)
}

/// Per-step GOSPA at the steps of the window where an object is present, with totals over the
/// whole window. O(points) memory.
///
/// # Errors
/// As [`per_step`].
pub fn occupied_steps(
    truth: &TrajectorySet,
    estimate: &TrajectorySet,
    params: &GospaParams,
    distance: &Distance,
) -> Result<OccupiedSteps> {
    let score = |time: Step, score: &SetScore, truths: usize, estimates: usize| StepScore {
        time,
        gospa: root(score.power, params.order),
        localization: score.localization,
        missed: score.missed,
        false_: score.false_,
        missed_count: score.missed_count,
        false_count: score.false_count,
        truth_count: truths,
        estimate_count: estimates,
    };
    let mut occupied = Vec::new();
    let window = for_each_step(truth, estimate, params, distance, |time, s, xs, ys| {
        occupied.push(score(time, s, xs.len(), ys.len()));
    })?;
    let nothing = Workspace::default().solve(0, 0, |_| &[], |_| &[], params, distance);
    let empty = score(0, &nothing, 0, 0);
    finish(window, occupied, empty, params)
}

/// The series of the occupied steps of `window`, with its totals.
///
/// # Errors
/// Sums that overflow.
fn finish(
    window: Option<Window>,
    occupied: Vec<StepScore>,
    empty: StepScore,
    params: &GospaParams,
) -> Result<OccupiedSteps> {
    let summary = summarise(&occupied, window.map_or(0, |w| w.len()), params);
    let parts = [summary.localization, summary.missed, summary.false_];
    if !(summary.sum.is_finite()
        && summary.root_mean_power.is_finite()
        && parts.iter().all(|part| part.is_none_or(f64::is_finite)))
    {
        return Err(Error::Parameter(format!(
            "the cut-off {} is too large for these inputs: the sums over the steps overflow",
            params.cutoff
        )));
    }
    Ok(OccupiedSteps {
        window,
        occupied,
        summary,
        empty,
    })
}

/// Totals over `count` steps of which `steps` are the occupied ones; the others add GOSPA 0 and
/// parts 0, and adding +0.0 to a sum that started at +0.0 leaves it unchanged, so leaving them
/// out gives the same bits as summing every step.
fn summarise(steps: &[StepScore], count: usize, params: &GospaParams) -> StepSummary {
    // Sums fold from +0.0 (`Sum` for f64 starts from -0.0, which would print as "-0").
    let sum: f64 = steps.iter().fold(0.0, |sum, s| sum + s.gospa);
    let power_sum: f64 = steps
        .iter()
        .fold(0.0, |sum, s| sum + power(s.gospa, params.order));
    let part = |f: fn(&StepScore) -> Option<f64>| -> Option<f64> {
        steps.iter().try_fold(0.0, |sum, s| f(s).map(|v| sum + v))
    };
    let divide = |x: f64| if count == 0 { 0.0 } else { x / count as f64 };
    let with_parts = params.alpha == 2.0;
    StepSummary {
        steps: count,
        sum,
        mean: divide(sum),
        root_mean_power: root(divide(power_sum), params.order),
        localization: if with_parts {
            part(|s| s.localization).or(Some(0.0))
        } else {
            None
        },
        missed: if with_parts {
            part(|s| s.missed).or(Some(0.0))
        } else {
            None
        },
        false_: if with_parts {
            part(|s| s.false_).or(Some(0.0))
        } else {
            None
        },
        missed_count: steps.iter().map(|s| s.missed_count).sum(),
        false_count: steps.iter().map(|s| s.false_count).sum(),
    }
}
