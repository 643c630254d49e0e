//! Monte Carlo summaries: per-step GOSPA and the trajectory metric over the runs of a scenario.
//!
//! Convention followed (common practice in tracking papers that evaluate with GOSPA): the
//! per-step GOSPA of each run is averaged over the runs step by step, both as a mean and as a
//! root mean square, and its localisation, missed and false parts are averaged over the runs in
//! p-th power units. The GOSPA paper (A. S. Rahmathullah, Á. F. García-Fernández, L. Svensson,
//! "Generalized optimal sub-pattern assignment metric", FUSION 2017, section on random finite
//! sets) shows that the mean GOSPA and the root mean square GOSPA over random sets are metrics
//! themselves; averaging over Monte Carlo runs estimates them.
//!
//! For runs r = 1..R and step k, with G_rk the per-step GOSPA (alpha = 2) of run r at k:
//!
//! - mean_k = (1/R) sum_r G_rk;
//! - rms_k = ((1/R) sum_r G_rk^2)^(1/2);
//! - localisation_k = (1/R) sum_r L_rk, likewise missed and false (p-th power units: with
//!   p = 2 they add up to rms_k^2, with p = 1 to mean_k);
//! - missed and false object counts: their means over the runs.
//!
//! A step outside a run's window has no object in either set there: it counts as 0 for that
//! run. For the trajectory metric d_r of each run: mean (1/R) sum d_r and RMS
//! ((1/R) sum d_r^2)^(1/2). Every mean and RMS here comes from [`mean_and_rms`], finite for
//! finite values however large.

use serde::Serialize;

use crate::per_step::PartKeys;

use super::plan::Evaluation;
use crate::per_step::{every_step, stretches, OccupiedSteps, StepScore, Stretch};
use crate::trajectory::{Step, Window};

/// Per-step GOSPA at one step, over runs.
#[derive(Clone, Debug, PartialEq)]
pub struct StepOverRuns {
    /// The step.
    pub time: Step,
    /// The number of runs R.
    pub runs: usize,
    /// Mean of GOSPA over the runs.
    pub mean: f64,
    /// Root mean square of GOSPA over the runs.
    pub rms: f64,
    /// Mean localisation part (p-th power units).
    pub localization: f64,
    /// Mean missed part (p-th power units).
    pub missed: f64,
    /// Mean false part (p-th power units).
    pub false_: f64,
    /// Mean number of truths missed.
    pub missed_count: f64,
    /// Mean number of false estimates.
    pub false_count: f64,
}

/// How [`StepOverRuns`] is written: its fields in order, the localisation part under
/// `localisation` and, for one release, also under its earlier key `localization`.
#[derive(Serialize)]
struct StepOverRunsKeys<'a> {
    time: &'a Step,
    #[serde(skip_serializing_if = "Option::is_none")]
    input_time: Option<f64>,
    runs: &'a usize,
    mean: &'a f64,
    rms: &'a f64,
    #[serde(flatten)]
    parts: PartKeys<'a, f64>,
    missed_count: &'a f64,
    false_count: &'a f64,
}

impl StepOverRuns {
    /// The keys as written, with `input_time` after `time` when it is given.
    fn keys(&self, input_time: Option<f64>) -> StepOverRunsKeys<'_> {
        StepOverRunsKeys {
            time: &self.time,
            input_time,
            runs: &self.runs,
            mean: &self.mean,
            rms: &self.rms,
            parts: PartKeys::new(&self.localization, &self.missed, &self.false_),
            missed_count: &self.missed_count,
            false_count: &self.false_count,
        }
    }
}

impl Serialize for StepOverRuns {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        self.keys(None).serialize(serializer)
    }
}

/// A step over runs with its time in the input's units (`input_time`, written after `time`),
/// when the input gave a step size.
#[derive(Clone, Debug, PartialEq)]
pub struct TimedStepOverRuns {
    /// The step's values.
    pub step: StepOverRuns,
    /// The step in the input's time units, if a step size was given.
    pub input_time: Option<f64>,
}

impl Serialize for TimedStepOverRuns {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        self.step.keys(self.input_time).serialize(serializer)
    }
}

/// Mean and root mean square of values: ((1/n) sum v, ((1/n) sum v^2)^(1/2)); (0, 0) when
/// there are none.
pub fn mean_and_rms(values: impl IntoIterator<Item = f64>) -> (f64, f64) {
    let values: Vec<f64> = values.into_iter().collect();
    if values.is_empty() {
        return (0.0, 0.0);
    }
    mean_and_rms_among(&values, values.len())
}

/// [`mean_and_rms`] of `values` and `n - values.len()` zeros (n >= values.len(), n > 0): the
/// sums run over `values` alone from +0.0, which the zeros would leave unchanged, so the result
/// is the same bits as with the zeros listed.
fn mean_and_rms_among(values: &[f64], n: usize) -> (f64, f64) {
    let n = n as f64;
    let (sum, squares) = values
        .iter()
        .fold((0.0, 0.0), |(sum, squares), v| (sum + v, squares + v * v));
    let (mut mean, mut rms) = (sum / n, (squares / n).sqrt());
    // Values above about 1.3e154 overflow their squares (and near the largest double, their
    // sum): then both are computed on the values divided by the largest of them, as C's
    // `hypot` does, so that finite values never give an infinite mean or RMS.
    if !(sum.is_finite() && squares.is_finite()) {
        let largest = values.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        if largest.is_finite() && largest > 0.0 {
            let scaled = values.iter().map(|v| v / largest);
            let (sum, squares) = scaled.fold((0.0, 0.0), |(s, q), v| (s + v, q + v * v));
            mean = sum / n * largest;
            rms = (squares / n).sqrt() * largest;
        }
    }
    (mean, rms)
}

/// Per-step GOSPA over runs, kept at the steps where some run has an object: memory follows the
/// points, not the window. Every other step of the window has every value 0 (each run adds 0
/// there), and [`OccupiedOverRuns::iter`] makes those steps as it goes. Serialized as the list
/// of every step of the window.
#[derive(Clone, Debug, PartialEq)]
pub struct OccupiedOverRuns {
    /// From the first to the last step of any run's window; `None` when every run is empty.
    pub window: Option<Window>,
    /// The number of runs R.
    pub runs: usize,
    /// One entry per step where some run has an object, in time order.
    pub occupied: Vec<StepOverRuns>,
}

impl OccupiedOverRuns {
    /// The summary of a step where no run has an object: every value 0.
    pub fn empty_step(&self, time: Step) -> StepOverRuns {
        StepOverRuns {
            time,
            runs: self.runs,
            mean: 0.0,
            rms: 0.0,
            localization: 0.0,
            missed: 0.0,
            false_: 0.0,
            missed_count: 0.0,
            false_count: 0.0,
        }
    }

    /// The window in order: each occupied step, and each maximal run of empty steps as one
    /// item. O(occupied steps) items.
    pub fn stretches(&self) -> impl Iterator<Item = Stretch<'_, StepOverRuns>> + '_ {
        stretches(self.window, &self.occupied, |step| step.time)
    }

    /// Every step of the window in time order, empty ones made on the fly (nothing is held).
    pub fn iter(&self) -> impl Iterator<Item = StepOverRuns> + '_ {
        every_step(self.stretches(), |time| self.empty_step(time))
    }

    /// The number of steps in the window.
    pub fn len(&self) -> usize {
        self.window.map_or(0, |w| w.len())
    }

    /// True when the window is empty (every run is empty).
    pub fn is_empty(&self) -> bool {
        self.window.is_none()
    }
}

impl Serialize for OccupiedOverRuns {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        serializer.collect_seq(self.iter())
    }
}

/// Per-step GOSPA over runs, for every step from the first to the last of any run's window,
/// computed at the steps where some run has an object. The series must have been computed with
/// alpha = 2 (their parts are then present; a missing part counts as 0).
///
/// At each such step the runs are summed in run order from +0.0, the runs without an object
/// there left out: they would add +0.0, which leaves a sum that started at +0.0 unchanged, so the
/// values are the same bits as summing every run at every step.
pub fn steps_over_runs(runs: &[&OccupiedSteps]) -> OccupiedOverRuns {
    let windows: Vec<Window> = runs.iter().filter_map(|s| s.window).collect();
    let window = match (
        windows.iter().map(|w| w.first).min(),
        windows.iter().map(|w| w.last).max(),
    ) {
        (Some(first), Some(last)) => Some(Window { first, last }),
        _ => None,
    };
    // Every run's occupied steps, by time; the sort is stable, so each time keeps run order.
    let mut entries: Vec<&StepScore> = runs.iter().flat_map(|s| &s.occupied).collect();
    entries.sort_by_key(|step| step.time);
    let n = runs.len() as f64;
    let occupied = entries
        .chunk_by(|a, b| a.time == b.time)
        .map(|at| {
            let gospa: Vec<f64> = at.iter().map(|step| step.gospa).collect();
            let (mean, rms) = mean_and_rms_among(&gospa, runs.len());
            let mut sums = [0.0f64; 5];
            for step in at {
                sums[0] += step.localization.unwrap_or(0.0);
                sums[1] += step.missed.unwrap_or(0.0);
                sums[2] += step.false_.unwrap_or(0.0);
                sums[3] += step.missed_count as f64;
                sums[4] += step.false_count as f64;
            }
            StepOverRuns {
                time: at[0].time,
                runs: runs.len(),
                mean,
                rms,
                localization: sums[0] / n,
                missed: sums[1] / n,
                false_: sums[2] / n,
                missed_count: sums[3] / n,
                false_count: sums[4] / n,
            }
        })
        .collect();
    OccupiedOverRuns {
        window,
        runs: runs.len(),
        occupied,
    }
}

/// Per-step GOSPA over the runs of one sequence, for one tracker and one (cut-off, order).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct StepsOverRuns {
    /// The cut-off.
    pub cutoff: f64,
    /// The order.
    pub order: f64,
    /// The sequence.
    pub sequence: String,
    /// The tracker.
    pub tracker: String,
    /// The number of runs.
    pub runs: usize,
    /// Every step of the window, held at the steps where some run has an object.
    pub steps: OccupiedOverRuns,
}

/// The per-step summaries over the runs of each sequence: by (cut-off, order), then sequence,
/// then tracker; empty unless the evaluation computed per-step GOSPA.
pub fn over_runs(evaluation: &Evaluation) -> Vec<StepsOverRuns> {
    let sequences = evaluation.sequences();
    let mut blocks = Vec::new();
    for (index, params) in evaluation.step_params().iter().enumerate() {
        for (sequence, range) in &sequences {
            for (t, tracker) in evaluation.trackers().iter().enumerate() {
                let runs: Vec<&OccupiedSteps> = range
                    .clone()
                    .map(|c| evaluation.series(index, t, c))
                    .collect();
                blocks.push(StepsOverRuns {
                    cutoff: params.cutoff,
                    order: params.order,
                    sequence: sequence.clone(),
                    tracker: tracker.clone(),
                    runs: runs.len(),
                    steps: steps_over_runs(&runs),
                });
            }
        }
    }
    blocks
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::distance::Distance;
    use crate::per_step::{occupied_steps, GospaParams};
    use crate::trajectory::{Trajectory, TrajectorySet};

    fn set(points: &[(Step, f64)]) -> TrajectorySet {
        let points = points.iter().map(|&(k, x)| (k, vec![x])).collect();
        TrajectorySet::new(1, vec![Trajectory::new("a", 1, points).unwrap()]).unwrap()
    }

    #[test]
    fn mean_and_rms_by_hand() {
        // 3 and 4: mean 3.5, RMS sqrt((9 + 16) / 2) = sqrt(12.5).
        let (mean, rms) = mean_and_rms([3.0, 4.0]);
        assert!((mean - 3.5).abs() < 1e-12);
        assert!((rms - 12.5f64.sqrt()).abs() < 1e-12);
        assert_eq!(mean_and_rms([]), (0.0, 0.0));
        // Values whose squares overflow a double (IEEE 754: above about 1.34e154): 1e200 and
        // 1e200 have mean and RMS 1e200 (the definition), not infinity; so do two values near
        // the largest double, whose sum overflows.
        let (mean, rms) = mean_and_rms([1e200, 1e200]);
        assert!((mean / 1e200 - 1.0).abs() < 1e-15 && (rms / 1e200 - 1.0).abs() < 1e-15);
        let big = f64::MAX / 1.5;
        let (mean, rms) = mean_and_rms([big, big]);
        assert!((mean / big - 1.0).abs() < 1e-15 && (rms / big - 1.0).abs() < 1e-15);
        // 3e200 and 4e200: RMS sqrt(12.5) x 1e200.
        let (_, rms) = mean_and_rms([3e200, 4e200]);
        assert!((rms / (12.5f64.sqrt() * 1e200) - 1.0).abs() < 1e-14);
    }

    #[test]
    fn steps_over_runs_by_hand() {
        // c = 2, p = 2: a missed object costs c^p / 2 = 2, so GOSPA = sqrt(2) at such a step.
        // Run 1: truth at steps 1, 2 at 0; estimate at step 1 off by 1 -> G = 1 (loc 1), then
        // missed at step 2 -> G = sqrt(2) (missed 2).
        // Run 2: truth at step 2 only, estimate exact -> window is step 2 alone, G = 0; step 1
        // lies outside its window and counts 0.
        let params = GospaParams::new(2.0, 2.0, 2.0).unwrap();
        let d = Distance::default();
        let one =
            occupied_steps(&set(&[(1, 0.0), (2, 0.0)]), &set(&[(1, 1.0)]), &params, &d).unwrap();
        let two = occupied_steps(&set(&[(2, 0.0)]), &set(&[(2, 0.0)]), &params, &d).unwrap();
        let steps: Vec<StepOverRuns> = steps_over_runs(&[&one, &two]).iter().collect();
        assert_eq!(steps.len(), 2);
        // Step 1: values 1 and 0 -> mean 0.5, RMS sqrt(1/2); localisation (1 + 0) / 2.
        assert_eq!(steps[0].time, 1);
        assert!((steps[0].mean - 0.5).abs() < 1e-12);
        assert!((steps[0].rms - 0.5f64.sqrt()).abs() < 1e-12);
        assert!((steps[0].localization - 0.5).abs() < 1e-12);
        // Step 2: values sqrt(2) and 0 -> mean sqrt(2)/2, RMS sqrt(2/2) = 1; missed 2/2 = 1;
        // with p = 2 the parts add up to RMS^2 = 1.
        assert!((steps[1].mean - 2f64.sqrt() / 2.0).abs() < 1e-12);
        assert!((steps[1].rms - 1.0).abs() < 1e-12);
        assert!((steps[1].missed - 1.0).abs() < 1e-12);
        assert!((steps[1].missed_count - 0.5).abs() < 1e-12);
        let parts = steps[1].localization + steps[1].missed + steps[1].false_;
        assert!((parts - steps[1].rms.powi(2)).abs() < 1e-12);
    }

    #[test]
    fn steps_between_occupied_ones_are_zero_and_not_held() {
        // c = 2, p = 2 (GOSPA definition: a missed object costs c^p / 2 = 2, GOSPA sqrt 2).
        // Run 1: truth at 0 at steps 1 and 4, estimate at step 1 off by 1 -> G = 1 at step 1,
        // missed at step 4 -> G = sqrt 2. Run 2: truth and exact estimate at step 6 -> G = 0.
        // The window over both runs is 1 to 6; steps 2, 3 and 5 have no object in any run.
        let params = GospaParams::new(2.0, 2.0, 2.0).unwrap();
        let d = Distance::default();
        let one =
            occupied_steps(&set(&[(1, 0.0), (4, 0.0)]), &set(&[(1, 1.0)]), &params, &d).unwrap();
        let two = occupied_steps(&set(&[(6, 0.0)]), &set(&[(6, 0.0)]), &params, &d).unwrap();
        let over = steps_over_runs(&[&one, &two]);
        assert_eq!(over.len(), 6);
        let held: Vec<Step> = over.occupied.iter().map(|s| s.time).collect();
        assert_eq!(held, [1, 4, 6]);
        let steps: Vec<StepOverRuns> = over.iter().collect();
        let times: Vec<Step> = steps.iter().map(|s| s.time).collect();
        assert_eq!(times, [1, 2, 3, 4, 5, 6]);
        // Step 1: values 1 and 0 -> mean 1/2; step 4: sqrt 2 and 0 -> mean sqrt(2)/2, missed
        // 2/2 = 1; step 6: 0 and 0.
        assert!((steps[0].mean - 0.5).abs() < 1e-12);
        assert!((steps[3].mean - 2f64.sqrt() / 2.0).abs() < 1e-12);
        assert!((steps[3].missed - 1.0).abs() < 1e-12);
        assert_eq!(steps[5].mean, 0.0);
        for s in [&steps[1], &steps[2], &steps[4]] {
            assert_eq!(s.runs, 2);
            let values = [s.mean, s.rms, s.localization, s.missed, s.false_];
            assert!(values.iter().all(|&v| v == 0.0), "{s:?}");
            assert_eq!((s.missed_count, s.false_count), (0.0, 0.0));
        }
        // Serialized as every step of the window.
        let json = serde_json::to_value(&over).unwrap();
        assert_eq!(json.as_array().unwrap().len(), 6);
        assert_eq!(json[4]["time"], 5);
        assert_eq!(json[4]["mean"], 0.0);
    }
}
