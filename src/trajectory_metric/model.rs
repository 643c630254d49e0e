//! Builds the linear program of one component in "gain form", at a chosen level of reduction.
//!
//! Gain form: relative to leaving every object unassigned, a pair (i, j) weighted w at step k
//! changes the cost by w g_k(i, j), where g_k(i, j) = min(d, c)^p - c^p when both are present
//! and d < c, and 0 otherwise. The constraints are the same at every step: each truth and each
//! estimate carries a total weight of at most 1. Switches cost gamma^p / 2 per unit of weight
//! change. The derivations and proofs are in specs/trajectory-lp.md.
//!
//! A pair's weight over the window is a sequence of *segments*, each one LP variable held
//! constant over a run of steps. How the window is cut into segments is the reduction:
//! - [`Reduction::PerStep`]: one segment per step (the unreduced LP, or the LP on candidate
//!   pairs only);
//! - [`Reduction::ActiveSteps`]: one segment per step at which some pair of the component is
//!   close, held until the next such step;
//! - [`Reduction::Events`]: event compression: one segment per rigid piece of the pair (the
//!   head before its first close step, each valley between runs of close steps, the tail after
//!   its last), one per maximal run of close steps at which no other pair of the same truth or
//!   estimate is close, and one per remaining ("contested") close step.

use rustc_hash::FxHashMap;

use super::pairs::CandidatePair;
use crate::trajectory::{Step, Window};

/// How far the LP of a component is reduced. All give the same optimal value.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Reduction {
    /// One variable per pair and step.
    PerStep,
    /// One variable per pair and step at which some pair of the component is close.
    ActiveSteps,
    /// Event compression: rigid pieces, uncontested runs and contested steps.
    Events,
}

/// One run of steps over which a pair's weight is one LP variable.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Segment {
    /// First step of the run.
    pub first: Step,
    /// Last step of the run.
    pub last: Step,
    /// The LP variable.
    pub var: usize,
    /// False for a rigid piece (head, valley or tail: the pair is not close there).
    pub active: bool,
}

/// A comparison in a constraint row.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Sense {
    /// `terms <= rhs`
    AtMost,
    /// `terms == rhs`
    Equal,
}

/// One constraint: `sum coefficient x var (sense) rhs`.
#[derive(Clone, Debug, PartialEq)]
pub struct Row {
    /// `(variable, coefficient)` terms.
    pub terms: Vec<(usize, f64)>,
    /// `<=` or `==`.
    pub sense: Sense,
    /// Right-hand side.
    pub rhs: f64,
}

/// A linear program: minimise `costs . x` subject to `0 <= x <= upper` and the rows.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct LinearProgram {
    /// Objective coefficient of each variable.
    pub costs: Vec<f64>,
    /// Upper bound of each variable (the lower bound is 0).
    pub upper: Vec<f64>,
    /// Constraint rows.
    pub rows: Vec<Row>,
}

impl LinearProgram {
    fn add_var(&mut self, cost: f64, upper: f64) -> usize {
        self.costs.push(cost);
        self.upper.push(upper);
        self.costs.len() - 1
    }

    /// Number of variables.
    pub fn variables(&self) -> usize {
        self.costs.len()
    }

    /// Number of non-zero coefficients in the rows.
    pub fn nonzeros(&self) -> usize {
        self.rows.iter().map(|r| r.terms.len()).sum()
    }
}

/// The LP of one component and how to read its solution back.
#[derive(Clone, Debug)]
pub struct ComponentModel {
    /// The program.
    pub program: LinearProgram,
    /// For each pair of the component (in the order given), its segments in time order,
    /// covering the whole window.
    pub segments: Vec<Vec<Segment>>,
}

/// Builds the LP for the pairs `members` (indices into `pairs`) of one component.
/// `switch_cost` is gamma^p / 2 and `cutoff_power` is c^p.
pub fn build(
    pairs: &[CandidatePair],
    members: &[usize],
    window: Window,
    cutoff_power: f64,
    switch_cost: f64,
    reduction: Reduction,
) -> ComponentModel {
    let mut program = LinearProgram::default();
    let cuts: Vec<Vec<(Step, Step, bool)>> = match reduction {
        Reduction::PerStep => members
            .iter()
            .map(|_| (window.first..=window.last).map(|k| (k, k, true)).collect())
            .collect(),
        Reduction::ActiveSteps => {
            let mut steps: Vec<Step> = members
                .iter()
                .flat_map(|&m| pairs[m].close.iter().map(|c| c.step))
                .collect();
            steps.sort_unstable();
            steps.dedup();
            let runs: Vec<(Step, Step, bool)> = steps
                .iter()
                .enumerate()
                .map(|(t, &s)| {
                    let first = if t == 0 { window.first } else { s };
                    let last = steps.get(t + 1).map_or(window.last, |next| next - 1);
                    (first, last, true)
                })
                .collect();
            members.iter().map(|_| runs.clone()).collect()
        }
        Reduction::Events => event_cuts(pairs, members, window),
    };
    let mut segments = Vec::with_capacity(members.len());
    for (&m, pair_cuts) in members.iter().zip(&cuts) {
        let pair = &pairs[m];
        let mut close = pair.close.iter().peekable();
        let mut pair_segments = Vec::with_capacity(pair_cuts.len());
        for &(first, last, active) in pair_cuts {
            let mut gain = 0.0;
            while let Some(c) = close.next_if(|c| c.step <= last) {
                gain += c.cost - cutoff_power;
            }
            let var = program.add_var(gain, 1.0);
            pair_segments.push(Segment {
                first,
                last,
                var,
                active,
            });
        }
        if switch_cost > 0.0 {
            link_segments(&mut program, &pair_segments, switch_cost);
        }
        segments.push(pair_segments);
    }
    capacity_rows(&mut program, pairs, members, &segments, |p| p.truth);
    capacity_rows(&mut program, pairs, members, &segments, |p| p.estimate);
    ComponentModel { program, segments }
}

/// The number of variables [`build`] gives a component with event compression, without building
/// it: one per segment, and two helpers per pair of adjacent active segments when switches cost.
pub fn event_variables(
    pairs: &[CandidatePair],
    members: &[usize],
    window: Window,
    switch_cost: f64,
) -> usize {
    event_cuts(pairs, members, window)
        .iter()
        .map(|cuts| {
            let links = cuts.windows(2).filter(|w| w[0].2 && w[1].2).count();
            cuts.len() + if switch_cost > 0.0 { 2 * links } else { 0 }
        })
        .sum()
}

/// Charges weight changes between consecutive segments of one pair. Between two active
/// segments the change is free in sign (`|b - a| = up + down`); a rigid segment (head, valley,
/// tail) is never above its active neighbours, so its change is one-sided and needs no helper.
fn link_segments(program: &mut LinearProgram, segments: &[Segment], switch_cost: f64) {
    for pair in segments.windows(2) {
        let (a, b) = (pair[0], pair[1]);
        let (low, high) = match (a.active, b.active) {
            (true, true) => {
                let up = program.add_var(switch_cost, 1.0);
                let down = program.add_var(switch_cost, 1.0);
                program.rows.push(Row {
                    terms: vec![(b.var, 1.0), (a.var, -1.0), (up, -1.0), (down, 1.0)],
                    sense: Sense::Equal,
                    rhs: 0.0,
                });
                continue;
            }
            (false, true) => (a, b),
            (true, false) => (b, a),
            (false, false) => unreachable!("rigid segments are separated by close steps"),
        };
        // Cost (high - low), row low - high <= 0.
        program.costs[high.var] += switch_cost;
        program.costs[low.var] -= switch_cost;
        program.rows.push(Row {
            terms: vec![(low.var, 1.0), (high.var, -1.0)],
            sense: Sense::AtMost,
            rhs: 0.0,
        });
    }
}

/// Adds "total weight at most 1" rows for each truth (or each estimate) of the component, once
/// per run of steps over which all its pairs' variables are constant and at least one of its
/// pairs is active. A truth with a single pair needs none: the bounds already hold it.
fn capacity_rows(
    program: &mut LinearProgram,
    pairs: &[CandidatePair],
    members: &[usize],
    segments: &[Vec<Segment>],
    key: impl Fn(&CandidatePair) -> usize,
) {
    let mut order: Vec<usize> = (0..members.len()).collect();
    order.sort_by_key(|&local| (key(&pairs[members[local]]), local));
    let mut start = 0;
    while start < order.len() {
        let owner = key(&pairs[members[order[start]]]);
        let mut end = start;
        while end < order.len() && key(&pairs[members[order[end]]]) == owner {
            end += 1;
        }
        if end - start >= 2 {
            sweep_rows(program, &order[start..end], segments);
        }
        start = end;
    }
}

/// Sweeps time over the segments of the given pairs, emitting one row per elementary run.
fn sweep_rows(program: &mut LinearProgram, group: &[usize], segments: &[Vec<Segment>]) {
    let mut starts: Vec<(Step, usize)> = Vec::new();
    for (g, &local) in group.iter().enumerate() {
        for segment in &segments[local] {
            starts.push((segment.first, g));
        }
    }
    starts.sort_unstable();
    let mut current = vec![usize::MAX; group.len()];
    let mut active = 0usize;
    let mut t = 0;
    while t < starts.len() {
        let step = starts[t].0;
        while t < starts.len() && starts[t].0 == step {
            let g = starts[t].1;
            let next = current[g].wrapping_add(1);
            let pair_segments = &segments[group[g]];
            if current[g] != usize::MAX && pair_segments[current[g]].active {
                active -= 1;
            }
            if pair_segments[next].active {
                active += 1;
            }
            current[g] = next;
            t += 1;
        }
        if active > 0 {
            let terms = group
                .iter()
                .zip(&current)
                .map(|(&local, &s)| (segments[local][s].var, 1.0))
                .collect();
            program.rows.push(Row {
                terms,
                sense: Sense::AtMost,
                rhs: 1.0,
            });
        }
    }
}

/// Event compression: for each pair, its rigid pieces (head, valleys between runs of close
/// steps, tail) and, on its close steps, one segment per contested step (another pair of the
/// same truth or estimate is close at that step too) and one per maximal uncontested run.
fn event_cuts(
    pairs: &[CandidatePair],
    members: &[usize],
    window: Window,
) -> Vec<Vec<(Step, Step, bool)>> {
    // How many pairs of each truth and of each estimate are close at each step.
    let mut truth_steps: FxHashMap<(usize, Step), u32> = FxHashMap::default();
    let mut estimate_steps: FxHashMap<(usize, Step), u32> = FxHashMap::default();
    for &m in members {
        let pair = &pairs[m];
        for close in &pair.close {
            *truth_steps.entry((pair.truth, close.step)).or_default() += 1;
            *estimate_steps
                .entry((pair.estimate, close.step))
                .or_default() += 1;
        }
    }
    let mut result = Vec::with_capacity(members.len());
    for &m in members {
        let pair = &pairs[m];
        let contested = |step: Step| {
            truth_steps[&(pair.truth, step)] > 1 || estimate_steps[&(pair.estimate, step)] > 1
        };
        let (first, last) = pair.active_span();
        let mut cuts = Vec::new();
        if first > window.first {
            cuts.push((window.first, first - 1, false));
        }
        let close = &pair.close;
        let mut k = 0;
        while k < close.len() {
            // A block: a maximal run of consecutive close steps.
            let mut end = k;
            while end + 1 < close.len() && close[end + 1].step == close[end].step + 1 {
                end += 1;
            }
            let mut run_start: Option<Step> = None;
            for c in &close[k..=end] {
                if contested(c.step) {
                    if let Some(start) = run_start.take() {
                        cuts.push((start, c.step - 1, true));
                    }
                    cuts.push((c.step, c.step, true));
                } else if run_start.is_none() {
                    run_start = Some(c.step);
                }
            }
            if let Some(start) = run_start {
                cuts.push((start, close[end].step, true));
            }
            if end + 1 < close.len() {
                // A valley up to the next block.
                cuts.push((close[end].step + 1, close[end + 1].step - 1, false));
            }
            k = end + 1;
        }
        if last < window.last {
            cuts.push((last + 1, window.last, false));
        }
        result.push(cuts);
    }
    result
}
