//! The Lagrangian engine: the trajectory LP of one component solved by one shortest path per
//! truth, with certified lower and upper bounds.
//!
//! The LP couples the truths only through the capacity of each estimate at each step (at most
//! one unit of weight). Pricing those rows with multipliers mu >= 0 (Lagrangian relaxation;
//! A. M. Geoffrion, "Lagrangean relaxation for integer programming", Mathematical Programming
//! Study 2, 1974) leaves one independent problem per truth: its weights over time, with the
//! switching term, are a unit flow through time over the states "unassigned" and "held by
//! estimate j" (the switching term is the earth mover's cost on a star), so its optimum is a
//! shortest path and integral. Hence for every mu >= 0
//!
//! ```text
//! L(mu) = sum over truths of SP_i(mu) - sum over (estimate, step) of mu  <=  LP optimum,
//! ```
//!
//! and the best L(mu) equals the LP optimum. The multipliers are raised by projected
//! subgradient steps with Polyak's step length (B. T. Polyak, "Minimization of unsmooth
//! functionals", USSR Computational Mathematics and Mathematical Physics 9, 1969). Upper bounds
//! come from feasible integral assignments: the truths' paths when they happen not to share an
//! estimate, or a greedy repair that routes the truths one after another around the cells
//! already taken. Each upper bound is measured from its weights by the caller's cost function,
//! never from the multipliers. When upper minus lower bound is within the tolerance, the
//! assignment is the LP optimum and, being integral, the exact metric too. Proofs:
//! specs/trajectory-lp.md, section "The Lagrangian engine".
//!
//! Only a pair's window (its first to last close step) needs one cell per step. Before the
//! window the only useful way to hold the estimate is a *head* from the window's first step
//! (no entry charge, since no switch is counted before the first step); after it, a *tail* to
//! the last step. Heads and tails pay the prices of the steps they cover. Per estimate, the
//! steps between its pairs' windows are merged into one *slot* each (one price for the run: no
//! cell lies there, and every head or tail covers such a run whole), so memory follows the
//! pairs' windows, not the evaluation window.

use std::time::{Duration, Instant};

use rayon::prelude::*;

use super::pairs::{CandidatePair, CloseStep};
use super::{PairAssignment, WeightSpan};
use crate::trajectory::{Step, Window};

/// Back-pointer codes of a cell: the state at the step before.
const FROM_SAME: u32 = 0;
const FROM_NONE: u32 = 1;
const FROM_HEAD: u32 = 2;
/// `FROM_OTHER + q`: from the truth's pair `q` (local index).
const FROM_OTHER: u32 = 3;

/// How long the engine may iterate on one component.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Settings {
    /// Subgradient iterations at most.
    pub max_iterations: usize,
    /// Greedy repair every this many iterations.
    pub repair_every: usize,
    /// Cell updates (cells x iterations) at most: a component with very many cells gets
    /// fewer iterations (at least `min_iterations`), so that a scene where every pair is a
    /// candidate at every step ends in bounded time. A count, not a clock: the result does not
    /// depend on the machine's speed.
    pub max_work: u64,
    /// Iterations every component may have, whatever its size.
    pub min_iterations: usize,
    /// Plain subgradient steps before the steps are deflected (see `solve`).
    pub deflect_after: usize,
}

impl Default for Settings {
    fn default() -> Self {
        Settings {
            max_iterations: 500,
            repair_every: 10,
            max_work: 1_000_000_000,
            min_iterations: 30,
            deflect_after: 100,
        }
    }
}

/// What the engine found for one component.
#[derive(Clone, Debug)]
pub struct Outcome {
    /// The best feasible integral assignment found, one entry per member pair (member order).
    pub pairs: Vec<PairAssignment>,
    /// Its cost in gain form (an upper bound of the component's LP and exact optimum).
    pub upper: f64,
    /// The best Lagrangian bound (a lower bound of the LP optimum).
    pub lower: f64,
    /// Subgradient iterations run.
    pub iterations: usize,
    /// Whether upper - lower is within the tolerance.
    pub certified: bool,
    /// Time in the shortest paths (all truths, all iterations).
    pub paths_time: Duration,
    /// Time in the greedy repairs.
    pub repair_time: Duration,
    /// Truth-step cells of the shortest-path model.
    pub cells: usize,
    /// When not certified: for each member pair, its Lagrangian reduced cost at the best
    /// prices (how much more than its truth's shortest path the cheapest path through the pair
    /// costs). A pair used by an integral assignment cheaper than `upper` has a reduced cost
    /// below `upper - lower`. Empty when certified.
    pub reduced_costs: Vec<f64>,
    /// The component's all-unassigned cost, against which the tolerance is read.
    pub scale: f64,
}

/// Whether an upper bound `upper` and a lower bound `lower` (gain form) of a component whose
/// all-unassigned cost is `scale` prove its value: their difference is at most 1e-9 of the
/// component's d^p (`scale + upper`), or at most the rounding of sums of that size (8 units in
/// the last place of `scale`) when the value is so small beside `scale` that the gain form
/// cannot tell more.
pub fn proves(lower: f64, upper: f64, scale: f64) -> bool {
    upper - lower <= tolerance(upper, scale)
}

/// The largest gap [`proves`] accepts.
fn tolerance(upper: f64, scale: f64) -> f64 {
    (TOLERANCE * (scale + upper).max(0.0)).max(8.0 * f64::EPSILON * scale)
}

/// The relative tolerance of a proof.
const TOLERANCE: f64 = 1e-9;

/// How much of the previous direction a deflected step keeps when the new subgradient turns
/// against it (the factor `tau` of the deflected direction; measured on the scale scenes:
/// 0.5 certified the long crowded ones in fewer iterations than 1 or 1.5 and kept the LP bound
/// of the fractional ones as close as plain steps).
const DEFLECTION: f64 = 0.5;

/// One pair in the engine's layout.
#[derive(Clone, Copy, Debug)]
struct Pair {
    /// Index in the component's member list.
    member: u32,
    estimate: u32,
    first: Step,
    last: Step,
    /// Slot of `first` in the estimate's slots (cells follow one per step).
    slot_first: u32,
    /// Offset of the pair's first cell in `gains`.
    offset: usize,
}

impl Pair {
    fn slot_last(&self) -> u32 {
        self.slot_first + (self.last - self.first) as u32
    }
}

/// A maximal run of a path in one pair, with its head or tail.
#[derive(Clone, Copy, Debug, PartialEq)]
struct Run {
    /// Engine pair index.
    pair: u32,
    first: Step,
    last: Step,
    head: bool,
    tail: bool,
}

/// The component in the engine's layout.
struct Model {
    window: Window,
    switch_cost: f64,
    pairs: Vec<Pair>,
    /// Per truth: its pairs' range in `pairs` (sorted by first step).
    truths: Vec<std::ops::Range<usize>>,
    /// Gain (d^p - c^p at close steps, else 0) per cell.
    gains: Vec<f64>,
    /// Per estimate: its range in the flat slot arrays.
    estimates: Vec<std::ops::Range<usize>>,
    /// Steps covered by each slot.
    slot_len: Vec<f64>,
}

/// Which cells, heads and tails earlier truths took (the greedy repair).
struct Taken {
    cell: Vec<bool>,
    /// Per estimate: slots below this are held by a head.
    head_end: Vec<u32>,
    /// Per estimate: slots from this on are held by a tail.
    tail_start: Vec<u32>,
    /// Per estimate: lowest and highest cell slot taken (u32::MAX / none when none).
    min_cell: Vec<u32>,
    max_cell: Vec<Option<u32>>,
}

impl Taken {
    /// Whether the cell of `pair` at `step` is held by an earlier cell, head or tail.
    fn blocks(&self, model: &Model, pair: &Pair, step: Step) -> bool {
        let e = pair.estimate as usize;
        let s = pair.slot_first + (step - pair.first) as u32;
        s < self.head_end[e] || s >= self.tail_start[e] || self.cell[model.slot(pair, step)]
    }

    /// Whether a head of `pair` (its estimate's slots before the pair's window) is free.
    fn allows_head(&self, pair: &Pair) -> bool {
        let e = pair.estimate as usize;
        self.head_end[e] == 0
            && self.min_cell[e] >= pair.slot_first
            && self.tail_start[e] >= pair.slot_first
    }

    /// Whether a tail of `pair` (its estimate's slots after the pair's window) is free.
    fn allows_tail(&self, model: &Model, pair: &Pair) -> bool {
        let e = pair.estimate as usize;
        let after = pair.slot_last() + 1;
        let slots = model.estimates[e].len() as u32;
        self.tail_start[e] == slots
            && self.max_cell[e].is_none_or(|m| m < after)
            && self.head_end[e] <= after
    }

    /// Whether a path avoids everything taken: every cell, head and tail of it is free.
    fn fits(&self, model: &Model, runs: &[Run]) -> bool {
        runs.iter().all(|run| {
            let pair = &model.pairs[run.pair as usize];
            (!run.head || self.allows_head(pair))
                && (!run.tail || self.allows_tail(model, pair))
                && (run.first..=run.last).all(|step| !self.blocks(model, pair, step))
        })
    }
}

/// Reusable buffers of one truth's dynamic program.
#[derive(Default)]
struct Scratch {
    /// When set, the value of every cell (the cheapest path prefix ending there, the cell
    /// included) is kept in `recorded`, by the cell's place among the truth's cells.
    record: bool,
    recorded: Vec<f64>,
    back: Vec<u32>,
    values: Vec<f64>,
    previous: Vec<u32>,
    current: Vec<u32>,
    none_from: Vec<(Step, u32)>,
}

impl Model {
    fn new(
        pairs: &[CandidatePair],
        members: &[usize],
        window: Window,
        cutoff_power: f64,
        switch_cost: f64,
    ) -> Model {
        // Local numbering of truths and estimates, in increasing order of their set index.
        let mut truth_ids: Vec<usize> = members.iter().map(|&m| pairs[m].truth).collect();
        truth_ids.sort_unstable();
        truth_ids.dedup();
        let mut estimate_ids: Vec<usize> = members.iter().map(|&m| pairs[m].estimate).collect();
        estimate_ids.sort_unstable();
        estimate_ids.dedup();
        let local = |ids: &[usize], id: usize| ids.binary_search(&id).expect("member id") as u32;

        // Slots per estimate: one per step of the union of its pairs' windows, one per run
        // of steps between (and before and after) them.
        let mut windows: Vec<Vec<(Step, Step)>> = vec![Vec::new(); estimate_ids.len()];
        for &m in members {
            let pair = &pairs[m];
            windows[local(&estimate_ids, pair.estimate) as usize].push(pair.active_span());
        }
        let mut slot_first_step: Vec<Vec<Step>> = Vec::with_capacity(estimate_ids.len());
        let mut estimates = Vec::with_capacity(estimate_ids.len());
        let mut slot_len = Vec::new();
        for spans in &mut windows {
            spans.sort_unstable();
            let mut starts: Vec<Step> = Vec::new();
            let mut cursor = window.first;
            let mut index = 0;
            while index < spans.len() {
                let (first, mut last) = spans[index];
                while index + 1 < spans.len() && spans[index + 1].0 <= last + 1 {
                    index += 1;
                    last = last.max(spans[index].1);
                }
                if first > cursor {
                    starts.push(cursor);
                }
                starts.extend(first..=last);
                cursor = last + 1;
                index += 1;
            }
            if cursor <= window.last {
                starts.push(cursor);
            }
            let begin = slot_len.len();
            for (s, &start) in starts.iter().enumerate() {
                let end = starts.get(s + 1).copied().unwrap_or(window.last + 1);
                slot_len.push((end - start) as f64);
            }
            estimates.push(begin..slot_len.len());
            slot_first_step.push(starts);
        }

        let mut order: Vec<usize> = (0..members.len()).collect();
        order.sort_by_key(|&l| {
            let pair = &pairs[members[l]];
            (
                local(&truth_ids, pair.truth),
                pair.active_span().0,
                local(&estimate_ids, pair.estimate),
            )
        });
        let mut engine_pairs = Vec::with_capacity(members.len());
        let mut truths = vec![0..0; truth_ids.len()];
        let mut gains = Vec::new();
        for &l in &order {
            let pair = &pairs[members[l]];
            let (first, last) = pair.active_span();
            let estimate = local(&estimate_ids, pair.estimate);
            let starts = &slot_first_step[estimate as usize];
            let slot_first = starts.partition_point(|&s| s <= first) - 1;
            let offset = gains.len();
            gains.resize(offset + (last - first + 1) as usize, 0.0);
            for close in &pair.close {
                gains[offset + (close.step - first) as usize] = close.cost - cutoff_power;
            }
            let t = local(&truth_ids, pair.truth) as usize;
            if truths[t].is_empty() {
                truths[t] = engine_pairs.len()..engine_pairs.len();
            }
            truths[t].end = engine_pairs.len() + 1;
            engine_pairs.push(Pair {
                member: l as u32,
                estimate,
                first,
                last,
                slot_first: slot_first as u32,
                offset,
            });
        }
        Model {
            window,
            switch_cost,
            pairs: engine_pairs,
            truths,
            gains,
            estimates,
            slot_len,
        }
    }

    /// The same component with time reversed (step k becomes -k): heads become tails, and
    /// each estimate's slots come in the opposite order.
    fn reversed(
        pairs: &[CandidatePair],
        members: &[usize],
        window: Window,
        cutoff_power: f64,
        switch_cost: f64,
    ) -> Model {
        let mirrored: Vec<CandidatePair> = members
            .iter()
            .map(|&m| CandidatePair {
                truth: pairs[m].truth,
                estimate: pairs[m].estimate,
                close: pairs[m]
                    .close
                    .iter()
                    .rev()
                    .map(|c| CloseStep {
                        step: -c.step,
                        cost: c.cost,
                    })
                    .collect(),
            })
            .collect();
        let all: Vec<usize> = (0..mirrored.len()).collect();
        let window = Window {
            first: -window.last,
            last: -window.first,
        };
        Model::new(&mirrored, &all, window, cutoff_power, switch_cost)
    }

    fn slot(&self, pair: &Pair, step: Step) -> usize {
        self.estimates[pair.estimate as usize].start
            + pair.slot_first as usize
            + (step - pair.first) as usize
    }

    /// The price of a head (`head`) or tail of a pair: the sum of its estimate's prices before
    /// the pair's window or after it.
    fn hold_price(&self, prefix: &[f64], pair: &Pair, head: bool) -> f64 {
        let e = pair.estimate as usize;
        let range = &self.estimates[e];
        // The estimate's running sums start at `range.start + e` (one more entry than slots).
        let base = range.start + e;
        if head {
            prefix[base + pair.slot_first as usize]
        } else {
            prefix[base + range.len()] - prefix[base + pair.slot_last() as usize + 1]
        }
    }

    /// The cheapest path of truth `t` under prices `mu` (with `prefix` their running sums times
    /// the slot lengths), avoiding what `taken` holds. Returns its priced cost and its runs.
    fn shortest_path(
        &self,
        t: usize,
        mu: &[f64],
        prefix: &[f64],
        taken: Option<&Taken>,
        scratch: &mut Scratch,
    ) -> (f64, Vec<Run>) {
        let range = self.truths[t].clone();
        if range.is_empty() {
            return (0.0, Vec::new());
        }
        let lambda = self.switch_cost;
        let pairs = &self.pairs[range.clone()];
        let base_offset = pairs[0].offset;
        let last_pair = &pairs[pairs.len() - 1];
        let cells =
            last_pair.offset + (last_pair.last - last_pair.first + 1) as usize - base_offset;
        scratch.back.clear();
        scratch.back.resize(cells, FROM_SAME);
        if scratch.record {
            scratch.recorded.clear();
            scratch.recorded.resize(cells, f64::INFINITY);
        }
        scratch.values.clear();
        scratch.values.resize(pairs.len(), f64::INFINITY);
        scratch.previous.clear();
        scratch.current.clear();
        scratch.none_from.clear();

        let blocked =
            |pair: &Pair, step: Step| taken.is_some_and(|taken| taken.blocks(self, pair, step));
        let head_allowed = |pair: &Pair| taken.is_none_or(|taken| taken.allows_head(pair));
        let tail_allowed = |pair: &Pair| taken.is_none_or(|taken| taken.allows_tail(self, pair));

        let mut none = 0.0f64;
        let mut tail_best = (f64::INFINITY, u32::MAX);
        let mut next_start = 0usize;
        let mut step: Step = 0;
        loop {
            // `previous` holds the pairs with a value at `step`.
            let next = if scratch.previous.is_empty() {
                match pairs.get(next_start) {
                    Some(pair) => pair.first,
                    None => break,
                }
            } else {
                step + 1
            };
            // The two best states at the step before.
            let mut best = (f64::INFINITY, u32::MAX);
            let mut second = (f64::INFINITY, u32::MAX);
            for &q in &scratch.previous {
                let value = scratch.values[q as usize];
                if value < best.0 {
                    second = best;
                    best = (value, q);
                } else if value < second.0 {
                    second = (value, q);
                }
            }
            let none_before = none;
            if best.0 + lambda < none {
                none = best.0 + lambda;
                scratch.none_from.push((next, best.1));
            }
            step = next;
            scratch.current.clear();
            // Pairs that go on from the step before.
            for index in 0..scratch.previous.len() {
                let q = scratch.previous[index];
                let pair = &pairs[q as usize];
                if pair.last < step {
                    continue;
                }
                scratch.current.push(q);
                let position = (step - pair.first) as usize;
                if blocked(pair, step) {
                    scratch.values[q as usize] = f64::INFINITY;
                    continue;
                }
                let other = if q == best.1 { second } else { best };
                let mut value = scratch.values[q as usize];
                let mut from = FROM_SAME;
                if none_before + lambda < value {
                    value = none_before + lambda;
                    from = FROM_NONE;
                }
                if other.0 + 2.0 * lambda < value {
                    value = other.0 + 2.0 * lambda;
                    from = FROM_OTHER + other.1;
                }
                scratch.back[pair.offset - base_offset + position] = from;
                let value = value + self.gains[pair.offset + position] + mu[self.slot(pair, step)];
                scratch.values[q as usize] = value;
                if scratch.record {
                    scratch.recorded[pair.offset - base_offset + position] = value;
                }
            }
            // Pairs whose window starts here.
            while let Some(pair) = pairs.get(next_start).filter(|p| p.first == step) {
                let q = next_start as u32;
                next_start += 1;
                scratch.current.push(q);
                if blocked(pair, step) {
                    scratch.values[q as usize] = f64::INFINITY;
                    continue;
                }
                let mut value = none_before + lambda;
                let mut from = FROM_NONE;
                if best.0 + 2.0 * lambda < value {
                    value = best.0 + 2.0 * lambda;
                    from = FROM_OTHER + best.1;
                }
                if head_allowed(pair) {
                    let head = self.hold_price(prefix, pair, true);
                    if head < value {
                        value = head;
                        from = FROM_HEAD;
                    }
                }
                scratch.back[pair.offset - base_offset] = from;
                let value = value + self.gains[pair.offset] + mu[self.slot(pair, step)];
                scratch.values[q as usize] = value;
                if scratch.record {
                    scratch.recorded[pair.offset - base_offset] = value;
                }
            }
            // Tails from pairs whose window ends here.
            for &q in &scratch.current {
                let pair = &pairs[q as usize];
                if pair.last == step && tail_allowed(pair) {
                    let value = scratch.values[q as usize] + self.hold_price(prefix, pair, false);
                    if value < tail_best.0 {
                        tail_best = (value, q);
                    }
                }
            }
            std::mem::swap(&mut scratch.previous, &mut scratch.current);
        }

        // Read the path back.
        let mut runs: Vec<Run> = Vec::new();
        let (total, mut state) = if tail_best.0 < none {
            (
                tail_best.0,
                Some((tail_best.1, pairs[tail_best.1 as usize].last)),
            )
        } else {
            (none, self.none_origin(&scratch.none_from, Step::MAX))
        };
        let mut tail = state.is_some() && tail_best.0 < none;
        while let Some((q, k)) = state {
            let pair = &pairs[q as usize];
            match runs.last_mut() {
                Some(run) if run.pair == range.start as u32 + q && run.first == k + 1 => {
                    run.first = k
                }
                _ => runs.push(Run {
                    pair: range.start as u32 + q,
                    first: k,
                    last: k,
                    head: false,
                    tail: std::mem::take(&mut tail),
                }),
            }
            let from = scratch.back[pair.offset - base_offset + (k - pair.first) as usize];
            state = match from {
                FROM_SAME => Some((q, k - 1)),
                FROM_NONE => self.none_origin(&scratch.none_from, k - 1),
                FROM_HEAD => {
                    runs.last_mut().expect("a run").head = true;
                    None
                }
                other => Some((other - FROM_OTHER, k - 1)),
            };
        }
        runs.reverse();
        (total, runs)
    }

    /// Where the "unassigned" state at `step` came from: the pair left at the step before the
    /// last improvement at or before `step`, or nothing (unassigned since the start).
    fn none_origin(&self, none_from: &[(Step, u32)], step: Step) -> Option<(u32, Step)> {
        let index = none_from.partition_point(|&(s, _)| s <= step);
        index
            .checked_sub(1)
            .map(|i| (none_from[i].1, none_from[i].0 - 1))
    }

    /// Adds each run's slots (cells, head, tail) to `count`, and to `over` each slot whose count
    /// reaches 2.
    fn occupy(&self, runs: &[Run], count: &mut [i32], over: &mut Vec<usize>) {
        for run in runs {
            let pair = &self.pairs[run.pair as usize];
            let range = &self.estimates[pair.estimate as usize];
            let first = if run.head {
                range.start
            } else {
                self.slot(pair, run.first)
            };
            let last = if run.tail {
                range.end - 1
            } else {
                self.slot(pair, run.last)
            };
            for (s, c) in count[first..=last].iter_mut().enumerate() {
                *c += 1;
                if *c == 2 {
                    over.push(first + s);
                }
            }
        }
    }

    /// Marks a chosen path as taken.
    fn take(&self, runs: &[Run], taken: &mut Taken) {
        for run in runs {
            let pair = &self.pairs[run.pair as usize];
            let e = pair.estimate as usize;
            let local_first = pair.slot_first + (run.first - pair.first) as u32;
            let local_last = pair.slot_first + (run.last - pair.first) as u32;
            for step in run.first..=run.last {
                taken.cell[self.slot(pair, step)] = true;
            }
            taken.min_cell[e] = taken.min_cell[e].min(local_first);
            taken.max_cell[e] = Some(taken.max_cell[e].map_or(local_last, |m| m.max(local_last)));
            if run.head {
                taken.head_end[e] = pair.slot_first;
            }
            if run.tail {
                taken.tail_start[e] = pair.slot_last() + 1;
            }
        }
    }

    /// The weights of a set of paths, one entry per member pair.
    fn assignment(
        &self,
        paths: &[Vec<Run>],
        source: &[CandidatePair],
        members: &[usize],
    ) -> Vec<PairAssignment> {
        let mut spans: Vec<Vec<WeightSpan>> = vec![Vec::new(); members.len()];
        for run in paths.iter().flatten() {
            let pair = &self.pairs[run.pair as usize];
            spans[pair.member as usize].push(WeightSpan {
                first: if run.head {
                    self.window.first
                } else {
                    run.first
                },
                last: if run.tail { self.window.last } else { run.last },
                weight: 1.0,
            });
        }
        members
            .iter()
            .zip(spans)
            .map(|(&m, mut spans)| {
                spans.sort_by_key(|s| s.first);
                PairAssignment {
                    truth: source[m].truth,
                    estimate: source[m].estimate,
                    spans,
                    close: source[m].close.clone(),
                }
            })
            .collect()
    }

    /// The value of every cell under prices `mu` (the cheapest path prefix of its truth ending
    /// there, the cell included), and every truth's shortest path cost.
    fn cell_values(&self, mu: &[f64]) -> (Vec<f64>, Vec<f64>) {
        let prefix = self.prefix(mu);
        let mut values = vec![f64::INFINITY; self.gains.len()];
        let mut paths = Vec::with_capacity(self.truths.len());
        let mut scratch = Scratch {
            record: true,
            ..Scratch::default()
        };
        for (t, range) in self.truths.iter().enumerate() {
            let (cost, _) = self.shortest_path(t, mu, &prefix, None, &mut scratch);
            paths.push(cost);
            if let Some(first) = self.pairs.get(range.start).filter(|_| !range.is_empty()) {
                values[first.offset..first.offset + scratch.recorded.len()]
                    .copy_from_slice(&scratch.recorded);
            }
        }
        (values, paths)
    }

    /// For each member pair, how much more than its truth's shortest path the cheapest path
    /// through the pair costs under prices `mu` (a Lagrangian reduced cost, >= 0). `reversed`
    /// is the same component with time reversed: a path's suffix from a cell is a prefix there.
    fn reduced_costs(&self, reversed: &Model, mu: &[f64]) -> Vec<f64> {
        // Slots mirror each other estimate by estimate.
        let mut mirrored = vec![0.0; mu.len()];
        for (forward, backward) in self.estimates.iter().zip(&reversed.estimates) {
            for (s, slot) in forward.clone().enumerate() {
                mirrored[backward.end - 1 - s] = mu[slot];
            }
        }
        let (ahead, shortest) = self.cell_values(mu);
        let (behind, _) = reversed.cell_values(&mirrored);
        let mut place = vec![0usize; self.pairs.len()];
        for (index, pair) in reversed.pairs.iter().enumerate() {
            place[pair.member as usize] = index;
        }
        let mut reduced = vec![f64::INFINITY; self.pairs.len()];
        for (t, range) in self.truths.iter().enumerate() {
            for pair in &self.pairs[range.clone()] {
                let back = &reversed.pairs[place[pair.member as usize]];
                let mut best = f64::INFINITY;
                for step in pair.first..=pair.last {
                    let position = (step - pair.first) as usize;
                    let cell = self.gains[pair.offset + position] + mu[self.slot(pair, step)];
                    let through = ahead[pair.offset + position]
                        + behind[back.offset + (pair.last - step) as usize]
                        - cell;
                    best = best.min(through);
                }
                reduced[pair.member as usize] = (best - shortest[t]).max(0.0);
            }
        }
        reduced
    }

    /// Per estimate, the running sums of its prices times the slot lengths, from 0 before its
    /// first slot. Each estimate's sums depend on its own prices only, so a truth's shortest
    /// path depends on the prices of its own estimates only (what lets `solve` keep the paths
    /// of truths whose estimates' prices did not change).
    fn prefix(&self, mu: &[f64]) -> Vec<f64> {
        let mut prefix = vec![0.0; mu.len() + self.estimates.len()];
        for e in 0..self.estimates.len() {
            self.refresh_prefix(mu, &mut prefix, e);
        }
        prefix
    }

    /// Recomputes estimate `e`'s running sums in `prefix` (see [`Model::prefix`]).
    fn refresh_prefix(&self, mu: &[f64], prefix: &mut [f64], e: usize) {
        let range = self.estimates[e].clone();
        let base = range.start + e;
        let mut sum = 0.0;
        prefix[base] = 0.0;
        for (s, (m, len)) in mu[range.clone()]
            .iter()
            .zip(&self.slot_len[range])
            .enumerate()
        {
            sum += m * len;
            prefix[base + s + 1] = sum;
        }
    }

    /// Whether truth `t` has a pair of an estimate marked in `changed`.
    fn touches(&self, t: usize, changed: &[bool]) -> bool {
        self.pairs[self.truths[t].clone()]
            .iter()
            .any(|pair| changed[pair.estimate as usize])
    }

    /// Routes the truths one after another in `order`, each around what the earlier ones took.
    ///
    /// `shortest`, when given, holds every truth's shortest path under the same prices without
    /// the blocking: a truth whose path there avoids what the earlier ones took keeps it (it
    /// is cheapest among all its paths, so among the free ones too), without a new search.
    fn repair(
        &self,
        order: &[usize],
        mu: &[f64],
        prefix: &[f64],
        shortest: Option<&[Vec<Run>]>,
    ) -> Vec<Vec<Run>> {
        let mut taken = Taken {
            cell: vec![false; self.slot_len.len()],
            head_end: vec![0; self.estimates.len()],
            tail_start: self.estimates.iter().map(|r| r.len() as u32).collect(),
            min_cell: vec![u32::MAX; self.estimates.len()],
            max_cell: vec![None; self.estimates.len()],
        };
        let mut scratch = Scratch::default();
        let mut paths = vec![Vec::new(); self.truths.len()];
        for &t in order {
            let runs = match shortest {
                Some(paths) if taken.fits(self, &paths[t]) => paths[t].clone(),
                _ => {
                    self.shortest_path(t, mu, prefix, Some(&taken), &mut scratch)
                        .1
                }
            };
            self.take(&runs, &mut taken);
            paths[t] = runs;
        }
        paths
    }
}

/// One component as the engine sees it.
#[derive(Clone, Copy, Debug)]
pub struct Problem<'a> {
    /// Every candidate pair.
    pub pairs: &'a [CandidatePair],
    /// The component's pairs: indices into `pairs`.
    pub members: &'a [usize],
    /// The evaluation window.
    pub window: Window,
    /// c^p.
    pub cutoff_power: f64,
    /// gamma^p / 2: the cost of one unit of weight change.
    pub switch_cost: f64,
    /// The component's all-unassigned cost (c^p / 2 times its object-steps), the size of its
    /// d^p, against which the tolerance is read.
    pub scale: f64,
}

/// Solves one component. `cost` measures an assignment's cost in gain form from its weights;
/// `progress` is told the iterations done.
pub fn solve(
    problem: &Problem,
    settings: &Settings,
    cost: &(dyn Fn(&[PairAssignment]) -> f64 + Sync),
    progress: &(dyn Fn(usize) + Sync),
) -> Outcome {
    let Problem {
        pairs,
        members,
        window,
        cutoff_power,
        switch_cost,
        scale,
    } = *problem;
    let model = Model::new(pairs, members, window, cutoff_power, switch_cost);
    let slots = model.slot_len.len();
    let mut mu = vec![0.0; slots];
    let mut paths_time = Duration::ZERO;
    let mut repair_time = Duration::ZERO;
    let tolerance = |upper: f64| tolerance(upper, scale);

    let started = Instant::now();
    let prefix = model.prefix(&mu);
    let index_order: Vec<usize> = (0..model.truths.len()).collect();
    let mut best_paths = model.repair(&index_order, &mu, &prefix, None);
    let mut best_pairs = model.assignment(&best_paths, pairs, members);
    let mut upper = cost(&best_pairs);
    repair_time += started.elapsed();

    let mut lower = f64::NEG_INFINITY;
    // The prices of the best bound, as its priced slots (every other price is 0).
    let mut best_mu: Vec<(usize, f64)> = Vec::new();
    let mut theta: f64 = 1.0;
    let mut stalled = 0;
    // Bounds of the current round of iterations: the step grows when they rose every time and
    // shrinks when they zig-zagged without a better bound.
    let mut rising = 0usize;
    let mut previous_bound = f64::NEG_INFINITY;
    let mut iterations = 0;
    let mut count = vec![0i32; slots];
    // The deflected direction of the last step (0 off the rows it moved).
    let mut direction = vec![0.0f64; slots];
    // The truths' latest shortest paths and their priced costs, and which estimates' prices
    // moved since (all, before the first iteration).
    let mut paths: Vec<Vec<Run>> = vec![Vec::new(); model.truths.len()];
    let mut path_costs = vec![0.0; model.truths.len()];
    let mut changed = vec![true; model.estimates.len()];
    let mut prefix = vec![0.0; slots + model.estimates.len()];
    // Slots over capacity, slots priced (mu > 0), both (this step's and the last), in slot order.
    let mut over: Vec<usize> = Vec::new();
    let mut priced_slots: Vec<usize> = Vec::new();
    let mut active: Vec<usize> = Vec::new();
    let mut previous_active: Vec<usize> = Vec::new();
    let mut slot_estimate = vec![0u32; slots];
    for (e, range) in model.estimates.iter().enumerate() {
        slot_estimate[range.clone()].fill(e as u32);
    }
    let cells = model.gains.len().max(1) as u64;
    let allowed = settings
        .max_iterations
        .min((settings.max_work / cells).max(settings.min_iterations as u64) as usize);
    while iterations < allowed {
        iterations += 1;
        let started = Instant::now();
        for (e, &moved) in changed.iter().enumerate() {
            if moved {
                model.refresh_prefix(&mu, &mut prefix, e);
            }
        }
        // Only the truths with an estimate whose prices moved: the others' shortest paths
        // read the same prices as at their last solve, so they are kept as they are.
        let stale: Vec<usize> = (0..model.truths.len())
            .filter(|&t| model.touches(t, &changed))
            .collect();
        let fresh: Vec<(f64, Vec<Run>)> = stale
            .par_iter()
            .map_init(Scratch::default, |scratch, &t| {
                model.shortest_path(t, &mu, &prefix, None, scratch)
            })
            .collect();
        for (&t, (value, runs)) in stale.iter().zip(fresh) {
            path_costs[t] = value;
            paths[t] = runs;
        }
        changed.iter_mut().for_each(|c| *c = false);
        paths_time += started.elapsed();
        // Sums over the priced slots only, in slot order: the same sums as over every slot, whose
        // other terms are 0.
        let priced: f64 = priced_slots
            .iter()
            .map(|&s| mu[s] * model.slot_len[s])
            .sum();
        let bound = path_costs.iter().sum::<f64>() - priced;
        if bound > lower {
            if bound > lower + tolerance(upper) {
                stalled = 0;
            }
            lower = bound;
            best_mu.clear();
            best_mu.extend(priced_slots.iter().map(|&s| (s, mu[s])));
        } else {
            stalled += 1;
        }
        if bound > previous_bound {
            rising += 1;
        } else {
            rising = 0;
        }
        previous_bound = bound;
        count.iter_mut().for_each(|c| *c = 0);
        over.clear();
        for runs in &paths {
            model.occupy(runs, &mut count, &mut over);
        }
        if over.is_empty() {
            let assignment = model.assignment(&paths, pairs, members);
            let value = cost(&assignment);
            if value < upper {
                upper = value;
                best_pairs = assignment;
                best_paths = paths.clone();
            }
        }
        if upper - lower > tolerance(upper) && iterations % settings.repair_every.max(1) == 0 {
            let started = Instant::now();
            let mut by_value: Vec<usize> = (0..model.truths.len()).collect();
            // Truths that gain most first, then in index order.
            let values: Vec<f64> = paths
                .iter()
                .map(|runs| {
                    runs.iter()
                        .map(|r| {
                            let p = &model.pairs[r.pair as usize];
                            (r.first..=r.last)
                                .map(|k| model.gains[p.offset + (k - p.first) as usize])
                                .sum::<f64>()
                        })
                        .sum()
                })
                .collect();
            by_value.sort_by(|&a, &b| values[a].total_cmp(&values[b]).then(a.cmp(&b)));
            // The two orders at once; the first is preferred on a tie, as when run in turn.
            let route = |order: &[usize]| {
                let repaired = model.repair(order, &mu, &prefix, Some(&paths));
                let assignment = model.assignment(&repaired, pairs, members);
                let value = cost(&assignment);
                (repaired, assignment, value)
            };
            let (first, second) = rayon::join(|| route(&by_value), || route(&index_order));
            for (repaired, assignment, value) in [first, second] {
                if value < upper {
                    upper = value;
                    best_pairs = assignment;
                    best_paths = repaired;
                }
            }
            repair_time += started.elapsed();
        }
        progress(iterations);
        if upper - lower <= tolerance(upper) {
            break;
        }
        if stalled >= 20 {
            theta /= 2.0;
            stalled = 0;
            if theta < 1e-7 {
                break;
            }
        } else if rising >= 10 {
            // Ten better bounds in a row: the steps are short of the optimum; lengthen them.
            theta = (theta * 1.5).min(2.0);
            rising = 0;
        }
        // Projected Polyak step on the rows that are over capacity or priced (`active`, in slot
        // order; every other slot keeps its price 0 and its direction 0).
        over.sort_unstable();
        previous_active.clone_from(&active);
        active.clear();
        let (mut i, mut j) = (0, 0);
        while i < priced_slots.len() || j < over.len() {
            let next = match (priced_slots.get(i), over.get(j)) {
                (Some(&p), Some(&o)) => p.min(o),
                (Some(&p), None) => p,
                (None, Some(&o)) => o,
                (None, None) => unreachable!(),
            };
            i += usize::from(priced_slots.get(i) == Some(&next));
            j += usize::from(over.get(j) == Some(&next));
            active.push(next);
        }
        let mut norm = 0.0;
        for &s in &active {
            let g = (count[s] - 1) as f64;
            norm += model.slot_len[s] * g * g;
        }
        if norm == 0.0 {
            // Every row within capacity and every priced row full: the paths are feasible and
            // complementary, so their cost equals the bound.
            break;
        }
        // Deflected direction: d = g + beta d_previous, where the new subgradient turns back
        // against the previous direction (P. M. Camerini, L. Fratta, F. Maffioli, "On improving
        // relaxation methods by modified gradient techniques", Mathematical Programming Study 3,
        // 1975). It damps the zig-zag of plain steps on long crowded
        // components; only after `deflect_after` plain steps, which most components never reach.
        for &s in &previous_active {
            if count[s] <= 1 && mu[s] <= 0.0 {
                direction[s] = 0.0;
            }
        }
        let mut gd = 0.0;
        let mut dd = 0.0;
        for &s in &active {
            let g = (count[s] - 1) as f64;
            gd += model.slot_len[s] * g * direction[s];
            dd += model.slot_len[s] * direction[s] * direction[s];
        }
        let beta = if iterations > settings.deflect_after && gd < 0.0 && dd > 0.0 {
            -DEFLECTION * gd / dd
        } else {
            0.0
        };
        let mut dnorm = 0.0;
        for &s in &active {
            direction[s] = (count[s] - 1) as f64 + beta * direction[s];
            dnorm += model.slot_len[s] * direction[s] * direction[s];
        }
        if dnorm == 0.0 {
            // The two cancel exactly: a plain step.
            for &s in &active {
                direction[s] = (count[s] - 1) as f64;
            }
            dnorm = norm;
        }
        let length = theta * (upper - bound).max(tolerance(upper)) / dnorm;
        priced_slots.clear();
        for &s in &active {
            let moved = (mu[s] + length * direction[s]).max(0.0);
            changed[slot_estimate[s] as usize] |= moved != mu[s];
            mu[s] = moved;
            if moved > 0.0 {
                priced_slots.push(s);
            }
        }
    }
    drop(best_paths);
    let certified = upper - lower <= tolerance(upper);
    let reduced_costs = if certified {
        Vec::new()
    } else {
        let reversed = Model::reversed(pairs, members, window, cutoff_power, switch_cost);
        let mut prices = vec![0.0; slots];
        for &(s, m) in &best_mu {
            prices[s] = m;
        }
        model.reduced_costs(&reversed, &prices)
    };
    Outcome {
        scale,
        reduced_costs,
        pairs: best_pairs,
        upper,
        lower: lower.min(upper),
        iterations,
        certified,
        paths_time,
        repair_time,
        cells: model.gains.len(),
    }
}

/// Cells of a component's shortest-path model: the steps of every member pair's window.
pub fn cells(pairs: &[CandidatePair], members: &[usize]) -> usize {
    members
        .iter()
        .map(|&m| {
            let (first, last) = pairs[m].active_span();
            (last - first + 1) as usize
        })
        .sum()
}
