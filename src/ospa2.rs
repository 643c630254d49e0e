//! OSPA(2): the OSPA metric on sets of trajectories, with a time-averaged distance between two
//! trajectories, over the whole window or over a sliding window; a second opinion beside
//! trajectory GOSPA.
//!
//! Source: M. Beard, B.-T. Vo, B.-N. Vo, "A solution for large-scale multi-object tracking",
//! IEEE Trans. Signal Processing 68:2754-2769, 2020 (section on performance evaluation).
//!
//! Within a window W of steps, let D_x be the steps of W where trajectory x has a state. The
//! distance between two trajectories is the mean, over the steps where either exists, of the
//! OSPA distance between the one-point (or empty) sets they form at that step:
//!
//! d(x, y) = (1 / |D_x ∪ D_y|) Σ_{t ∈ D_x ∪ D_y} e_t,   e_t = min(c, d(x_t, y_t)) when both
//! exist at t, c when only one does;
//!
//! so d(x, y) <= c, and d(x, y) < c exactly when the two are closer than c at some shared step.
//! With the truth trajectories present in W (m of them) and the estimate trajectories present
//! (n), N = max(m, n), OSPA(2) of order p is
//!
//! OSPA(2)^p = (1 / N) (min over one-to-one pairings of the smaller set into the larger of
//! Σ d(x, y)^p + c^p |m - n|),   and 0 when both sets are empty.
//!
//! A pairing at distance c costs what leaving both unpaired costs, so the optimum pairs only
//! trajectories closer than c, minimising Σ (d^p - c^p) over them: a partial matching on the
//! sparse graph of close pairs ([`crate::matching`]), whose memory follows the close pairs. Unlike trajectory
//! GOSPA it is normalised (between 0 and c), each truth follows at most one track over the
//! whole window, and a track switch shows only as a worse distance.

use serde::Serialize;

use crate::distance::{power, root, Distance, Gate};
use crate::error::Result;
use crate::matching::sparse_partial_matching;
use crate::per_step::check_cutoff_order;
use crate::trajectory::{Frames, Step, Trajectory, TrajectorySet, Window};

/// The parameters of OSPA(2): the cut-off c of both the inner and the outer OSPA, and the
/// order p of the outer one (the inner one compares sets of at most one point, where the order
/// does not matter).
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Ospa2Params {
    /// The cut-off c > 0.
    pub cutoff: f64,
    /// The order p >= 1.
    pub order: f64,
}

impl Ospa2Params {
    /// Checked parameters.
    ///
    /// # Errors
    /// A cut-off that is not positive and finite, an order below 1, or c^p out of range.
    pub fn new(cutoff: f64, order: f64) -> Result<Self> {
        check_cutoff_order(cutoff, order)?;
        Ok(Ospa2Params { cutoff, order })
    }
}

/// A truth and an estimate trajectory paired by OSPA(2), closer than the cut-off.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Ospa2Pair {
    /// Index of the truth trajectory in its set.
    pub truth: usize,
    /// Index of the estimate trajectory in its set.
    pub estimate: usize,
    /// Their time-averaged distance, below c.
    pub distance: f64,
}

/// OSPA(2) over one window, with the pairs behind it.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Ospa2Score {
    /// OSPA(2), between 0 and c.
    pub value: f64,
    /// The part of OSPA(2)^p from the pairs closer than c: Σ d(x, y)^p / N.
    pub paired_power: f64,
    /// The part of OSPA(2)^p from the rest: c^p (N - pairs) / N, the trajectories of the larger
    /// set left without a partner closer than c.
    pub unpaired_power: f64,
    /// Truth trajectories with a state in the window (m).
    pub truths: usize,
    /// Estimate trajectories with a state in the window (n).
    pub estimates: usize,
    /// The pairs closer than c, sorted by truth.
    pub pairs: Vec<Ospa2Pair>,
}

/// OSPA(2) of the sliding windows ending at each step of `first_end..=last_end`, which all
/// hold the same states (no step with a state enters or leaves them), so they score the same;
/// without the pairs: what a per-step series keeps.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Ospa2Window {
    /// The first step whose window this is.
    pub first_end: Step,
    /// The last step whose window this is.
    pub last_end: Step,
    /// OSPA(2), between 0 and c.
    pub value: f64,
    /// The part of OSPA(2)^p from the pairs closer than c.
    pub paired_power: f64,
    /// The part of OSPA(2)^p from the trajectories left without a partner closer than c.
    pub unpaired_power: f64,
    /// The number of pairs closer than c.
    pub pairs: usize,
    /// Truth trajectories with a state in the window (m).
    pub truths: usize,
    /// Estimate trajectories with a state in the window (n).
    pub estimates: usize,
}

impl Ospa2Window {
    /// The summary of `score`, the OSPA(2) of the windows ending at `first_end..=last_end`.
    pub fn new(first_end: Step, last_end: Step, score: &Ospa2Score) -> Self {
        Ospa2Window {
            first_end,
            last_end,
            value: score.value,
            paired_power: score.paired_power,
            unpaired_power: score.unpaired_power,
            pairs: score.pairs.len(),
            truths: score.truths,
            estimates: score.estimates,
        }
    }
}

/// OSPA(2) of one truth and one estimate set, ready to be evaluated over any window. Keeps the
/// point pairs closer than c (with their steps), so memory follows the close points, not the
/// window.
pub struct Ospa2<'a> {
    truth: &'a TrajectorySet,
    estimate: &'a TrajectorySet,
    params: Ospa2Params,
    window: Option<Window>,
    /// The truth's and the estimate's objects by step.
    frames: (Frames, Frames),
    /// `(step, truth, estimate, c - d)` for every point pair closer than c, by step.
    close: Vec<(Step, u32, u32, f64)>,
}

/// The number of steps of `trajectory` inside `window`.
fn steps_in(trajectory: &Trajectory, window: Window) -> usize {
    let steps = trajectory.steps();
    let start = steps.partition_point(|&s| s < window.first);
    let end = steps.partition_point(|&s| s <= window.last);
    end - start
}

/// The number of steps where both trajectories have a state, inside `window`.
fn shared_steps(a: &Trajectory, b: &Trajectory, window: Window) -> usize {
    let clip = |steps: &[Step]| {
        let start = steps.partition_point(|&s| s < window.first);
        let end = steps.partition_point(|&s| s <= window.last);
        (start, end)
    };
    let (a_steps, b_steps) = (a.steps(), b.steps());
    let ((mut i, a_end), (mut j, b_end)) = (clip(a_steps), clip(b_steps));
    let mut shared = 0;
    while i < a_end && j < b_end {
        match a_steps[i].cmp(&b_steps[j]) {
            std::cmp::Ordering::Less => i += 1,
            std::cmp::Ordering::Greater => j += 1,
            std::cmp::Ordering::Equal => {
                shared += 1;
                i += 1;
                j += 1;
            }
        }
    }
    shared
}

impl<'a> Ospa2<'a> {
    /// Finds the point pairs closer than c at every step.
    ///
    /// # Errors
    /// States of different dimensions, or a distance that does not fit the states or the
    /// cut-off.
    pub fn new(
        truth: &'a TrajectorySet,
        estimate: &'a TrajectorySet,
        params: Ospa2Params,
        distance: &Distance,
    ) -> Result<Self> {
        let window = crate::trajectory::evaluation_window(truth, estimate)?;
        distance.check_inputs(truth, estimate, params.cutoff)?;
        let mut close = Vec::new();
        let frames = match window {
            Some(window) => (Frames::new(truth, window), Frames::new(estimate, window)),
            None => {
                let nothing = Window { first: 0, last: 0 };
                (Frames::new(truth, nothing), Frames::new(estimate, nothing))
            }
        };
        if window.is_some() {
            let (xs, ys) = (&frames.0, &frames.1);
            let mut gate = Gate::default();
            for (step, at_x, at_y) in xs.occupied_with(ys) {
                let first = |i: usize| {
                    let p = at_x[i];
                    truth.get(p.object as usize).state(p.point as usize)
                };
                let second = |j: usize| {
                    let p = at_y[j];
                    estimate.get(p.object as usize).state(p.point as usize)
                };
                let start = close.len();
                gate.close_pairs(
                    (at_x.len(), first),
                    (at_y.len(), second),
                    params.cutoff,
                    distance,
                    |i, j, d| close.push((step, at_x[i].object, at_y[j].object, params.cutoff - d)),
                );
                // The gate reports in no set order; sums must not depend on it.
                close[start..].sort_unstable_by_key(|&(_, i, j, _)| (i, j));
            }
        }
        Ok(Ospa2 {
            truth,
            estimate,
            params,
            window,
            frames,
            close,
        })
    }

    /// The window covering both sets, or `None` when both are empty.
    pub fn window(&self) -> Option<Window> {
        self.window
    }

    /// OSPA(2) over the whole covering window (0 when both sets are empty).
    pub fn whole(&self) -> Ospa2Score {
        match self.window {
            Some(window) => self.over(window),
            None => self.score(0, 0, Vec::new()),
        }
    }

    /// OSPA(2) over the steps of `window` only: trajectories are cut to it, and those with no
    /// state in it are left out.
    pub fn over(&self, window: Window) -> Ospa2Score {
        // The trajectories with a state in the window, by index: O(points in the window).
        let present = |frames: &Frames| -> Vec<u32> {
            let steps = frames.occupied();
            let from = steps.partition_point(|&s| s < window.first);
            let to = steps.partition_point(|&s| s <= window.last);
            let mut objects: Vec<u32> = (from..to)
                .flat_map(|k| frames.occupant(k).iter().map(|p| p.object))
                .collect();
            objects.sort_unstable();
            objects.dedup();
            objects
        };
        let (truths, estimates) = (present(&self.frames.0), present(&self.frames.1));
        let local = |objects: &[u32], object: u32| {
            objects
                .binary_search(&object)
                .expect("a close point lies in the window")
        };
        // Sum of c - d over the close steps of each pair, in (truth, estimate) order.
        let start = self.close.partition_point(|c| c.0 < window.first);
        let end = self.close.partition_point(|c| c.0 <= window.last);
        let mut savings: Vec<(u32, u32, f64)> = self.close[start..end]
            .iter()
            .map(|&(_, i, j, saving)| (i, j, saving))
            .collect();
        savings.sort_by_key(|&(i, j, _)| (i, j));
        let c = self.params.cutoff;
        let cp = power(c, self.params.order);
        // (local truth, local estimate, d^p - c^p, d^p) for each pair closer than c.
        let mut candidates: Vec<(usize, usize, f64)> = Vec::new();
        let mut powers: Vec<f64> = Vec::new();
        for group in savings.chunk_by(|a, b| (a.0, a.1) == (b.0, b.1)) {
            let (i, j) = (group[0].0, group[0].1);
            let saved: f64 = group.iter().fold(0.0, |sum, g| sum + g.2);
            let (x, y) = (self.truth.get(i as usize), self.estimate.get(j as usize));
            let union = steps_in(x, window) + steps_in(y, window) - shared_steps(x, y, window);
            let d = (c - saved / union as f64).max(0.0);
            if d < c {
                let dp = power(d, self.params.order);
                candidates.push((local(&truths, i), local(&estimates, j), dp - cp));
                powers.push(dp);
            }
        }
        // The matching may pair (a, b) only through an edge listed once, so its d^p is found
        // by binary search on the sorted candidates.
        let pairs = sparse_partial_matching(truths.len(), estimates.len(), &candidates)
            .into_iter()
            .map(|(a, b)| {
                let k = candidates
                    .binary_search_by(|e| (e.0, e.1).cmp(&(a, b)))
                    .expect("a matched pair is a candidate");
                Ospa2Pair {
                    truth: truths[a] as usize,
                    estimate: estimates[b] as usize,
                    distance: root(powers[k], self.params.order),
                }
            })
            .collect();
        self.score(truths.len(), estimates.len(), pairs)
    }

    fn score(&self, m: usize, n: usize, mut pairs: Vec<Ospa2Pair>) -> Ospa2Score {
        pairs.sort_by_key(|p| (p.truth, p.estimate));
        let big = m.max(n);
        let p = self.params.order;
        let (paired_power, unpaired_power) = if big == 0 {
            (0.0, 0.0)
        } else {
            let sum = pairs
                .iter()
                .fold(0.0, |s, pair| s + power(pair.distance, p));
            let cp = power(self.params.cutoff, p);
            (
                sum / big as f64,
                cp * (big - pairs.len()) as f64 / big as f64,
            )
        };
        Ospa2Score {
            value: root(paired_power + unpaired_power, p).min(self.params.cutoff),
            paired_power,
            unpaired_power,
            truths: m,
            estimates: n,
            pairs,
        }
    }

    /// OSPA(2) over a sliding window of `width` steps ending at each step `k` of the covering
    /// window ([k - width + 1, k], cut at the window's first step), for every `k` whose window
    /// holds a state of either set (a window with none scores 0 and is left out). One entry per
    /// window end, each with its pairs: the ends after a state number up to `width`, so a wide
    /// window makes a long list; [`Ospa2::sliding_windows`] gives the same values in runs,
    /// and its size follows the data. `width` 0 is treated as 1.
    pub fn sliding(&self, width: usize) -> Vec<(Step, Ospa2Score)> {
        let mut out = Vec::new();
        for (first_end, last_end, score) in self.sliding_runs(width) {
            out.extend((first_end..=last_end).map(|k| (k, score.clone())));
        }
        out
    }

    /// [`Ospa2::sliding`] in runs of window ends whose windows hold the same states, without
    /// the pairs: one [`Ospa2Window`] per run, in time order (what `switchyard steps --ospa2`
    /// writes). At most two runs per step with a state, however wide the window: memory follows
    /// the data.
    pub fn sliding_windows(&self, width: usize) -> Vec<Ospa2Window> {
        self.sliding_runs(width)
            .into_iter()
            .map(|(first, last, score)| Ospa2Window::new(first, last, &score))
            .collect()
    }

    /// The runs `(first end, last end, score)` of the sliding windows that hold a state. The
    /// states in [k - width + 1, k] change only where k reaches a step with a state (it enters)
    /// or passes one by `width` (it leaves), so each run is scored once, and the windows of one
    /// run, holding the same points, score the same to the bit.
    fn sliding_runs(&self, width: usize) -> Vec<(Step, Step, Ospa2Score)> {
        let Some(whole) = self.window else {
            return Vec::new();
        };
        // A window wider than any step range holds the same as the widest a step can hold.
        let width = width.clamp(1, Step::MAX as usize) as Step;
        let mut occupied: Vec<Step> = self
            .truth
            .trajectories()
            .iter()
            .chain(self.estimate.trajectories())
            .flat_map(|t| t.steps().iter().copied())
            .collect();
        occupied.sort_unstable();
        occupied.dedup();
        let mut changes: Vec<Step> = occupied
            .iter()
            .flat_map(|&s| [s, s.saturating_add(width)])
            .filter(|&k| k <= whole.last)
            .collect();
        changes.sort_unstable();
        changes.dedup();
        let mut out = Vec::new();
        for (n, &from) in changes.iter().enumerate() {
            let to = changes.get(n + 1).map_or(whole.last, |&next| next - 1);
            let first = from.saturating_sub(width - 1).max(whole.first);
            let holds = occupied
                .get(occupied.partition_point(|&s| s < first))
                .is_some_and(|&s| s <= from);
            if holds {
                let window = Window { first, last: from };
                out.push((from, to, self.over(window)));
            }
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn set(objects: &[(&str, &[(Step, f64)])]) -> TrajectorySet {
        let trajectories = objects
            .iter()
            .map(|(id, points)| {
                Trajectory::new(*id, 1, points.iter().map(|&(s, x)| (s, vec![x])).collect())
                    .unwrap()
            })
            .collect();
        TrajectorySet::new(1, trajectories).unwrap()
    }

    // Hand-derived from the definition in the module doc (Beard, Vo, Vo 2020): c = 2, p = 1.
    // Truth a at steps 1-4 on x = 0; track p at steps 1-2 on x = 0.5 and 3-4 at x = 5 (beyond
    // c), track q at steps 3-4 on x = 0.
    // d(a, p) = (0.5 + 0.5 + 2 + 2) / 4 = 1.25; d(a, q) = (2 + 2 + 0 + 0) / 4 = 1.
    // m = 1, n = 2: best pairing a-q, OSPA(2) = (1 + 2) / 2 = 1.5.
    #[test]
    fn hand_case_pairs_the_closer_track() {
        let truth = set(&[("a", &[(1, 0.0), (2, 0.0), (3, 0.0), (4, 0.0)])]);
        let estimate = set(&[
            ("p", &[(1, 0.5), (2, 0.5), (3, 5.0), (4, 5.0)]),
            ("q", &[(3, 0.0), (4, 0.0)]),
        ]);
        let params = Ospa2Params::new(2.0, 1.0).unwrap();
        let metric = Ospa2::new(&truth, &estimate, params, &Distance::default()).unwrap();
        let score = metric.whole();
        assert!((score.value - 1.5).abs() < 1e-12);
        assert_eq!(score.pairs.len(), 1);
        assert_eq!((score.pairs[0].truth, score.pairs[0].estimate), (0, 1));
        assert!((score.pairs[0].distance - 1.0).abs() < 1e-12);
        assert!((score.paired_power - 0.5).abs() < 1e-12);
        assert!((score.unpaired_power - 1.0).abs() < 1e-12);
        // Window [1, 2]: q is absent, d(a, p) = 0.5, m = n = 1: OSPA(2) = 0.5.
        let early = metric.over(Window { first: 1, last: 2 });
        assert!((early.value - 0.5).abs() < 1e-12);
        assert_eq!((early.truths, early.estimates), (1, 1));
        // Sliding width 1 at step 3: d(a, p) = 2, d(a, q) = 0: pairs a-q, OSPA(2) = (0 + 2)/2 = 1.
        let sliding = metric.sliding(1);
        assert_eq!(sliding.len(), 4);
        assert_eq!(sliding[2].0, 3);
        assert!((sliding[2].1.value - 1.0).abs() < 1e-12);
    }

    // Hand-derived (definition above), c = 2, p = 1, a window of 10^6 steps: truth a on x = 0 at
    // steps 1 and 1000, track p at x = 1 at step 1. The windows ending at 1..999 hold step 1
    // only: d(a, p) = 1, OSPA(2) 1; the one ending at 1000 holds both: d(a, p) = (1 + 2) / 2 =
    // 1.5. Two runs, however wide the window, and `sliding` lists every end.
    #[test]
    fn wide_windows_come_in_runs() {
        let truth = set(&[("a", &[(1, 0.0), (1000, 0.0)])]);
        let estimate = set(&[("p", &[(1, 1.0)])]);
        let params = Ospa2Params::new(2.0, 1.0).unwrap();
        let metric = Ospa2::new(&truth, &estimate, params, &Distance::default()).unwrap();
        let runs = metric.sliding_windows(1_000_000);
        assert_eq!(runs.len(), 2);
        assert_eq!((runs[0].first_end, runs[0].last_end), (1, 999));
        assert!((runs[0].value - 1.0).abs() < 1e-12);
        assert_eq!((runs[1].first_end, runs[1].last_end), (1000, 1000));
        assert!((runs[1].value - 1.5).abs() < 1e-12);
        let every = metric.sliding(1_000_000);
        assert_eq!(every.len(), 1000);
        assert!((every[500].1.value - 1.0).abs() < 1e-12);
        // Width 3: ends 1 to 3 see step 1 (value 1); ends 4 to 997 see nothing (left out); ends
        // 1000 sees a alone (value c = 2).
        // The widest window a width can give: the same two runs.
        assert_eq!(metric.sliding_windows(usize::MAX), runs);
        let runs = metric.sliding_windows(3);
        let ends: Vec<(Step, Step)> = runs.iter().map(|r| (r.first_end, r.last_end)).collect();
        assert_eq!(ends, [(1, 3), (1000, 1000)]);
        assert!((runs[1].value - 2.0).abs() < 1e-12);
    }

    // Both empty: 0 (definition); one empty: c (every trajectory of the other is unpaired).
    #[test]
    fn empty_sets() {
        let empty = TrajectorySet::empty(1);
        let one = set(&[("a", &[(1, 0.0)])]);
        let params = Ospa2Params::new(3.0, 2.0).unwrap();
        let both = Ospa2::new(&empty, &empty, params, &Distance::default()).unwrap();
        assert_eq!(both.whole().value, 0.0);
        assert!(both.sliding(5).is_empty());
        let missed = Ospa2::new(&one, &empty, params, &Distance::default()).unwrap();
        assert!((missed.whole().value - 3.0).abs() < 1e-12);
    }
}
