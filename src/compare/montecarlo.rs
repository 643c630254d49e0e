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
//! ((1/R) sum d_r^2)^(1/2).

use serde::Serialize;

use crate::per_step::StepSeries;
use crate::trajectory::Step;

/// Per-step GOSPA at one step, over runs.
#[derive(Clone, Debug, PartialEq, Serialize)]
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
    #[serde(rename = "false")]
    pub false_: f64,
    /// Mean number of truths missed.
    pub missed_count: f64,
    /// Mean number of false estimates.
    pub false_count: f64,
}

/// Mean and root mean square of values: ((1/n) sum v, ((1/n) sum v^2)^(1/2)); (0, 0) when
/// there are none.
pub fn mean_and_rms(values: impl IntoIterator<Item = f64>) -> (f64, f64) {
    let (mut n, mut sum, mut squares) = (0usize, 0.0, 0.0);
    for v in values {
        n += 1;
        sum += v;
        squares += v * v;
    }
    if n == 0 {
        (0.0, 0.0)
    } else {
        (sum / n as f64, (squares / n as f64).sqrt())
    }
}

/// Per-step GOSPA over runs, for every step from the first to the last of any run's window.
/// The series must have been computed with alpha = 2 (their parts are then present; a missing
/// part counts as 0).
pub fn steps_over_runs(runs: &[&StepSeries]) -> Vec<StepOverRuns> {
    let windows: Vec<_> = runs.iter().filter_map(|s| s.window).collect();
    let (Some(first), Some(last)) = (
        windows.iter().map(|w| w.first).min(),
        windows.iter().map(|w| w.last).max(),
    ) else {
        return Vec::new();
    };
    let count = runs.len();
    let length = (last - first + 1) as usize;
    let mut sums = vec![[0.0f64; 7]; length];
    for series in runs {
        let Some(window) = series.window else {
            continue;
        };
        let offset = (window.first - first) as usize;
        for (k, step) in series.steps.iter().enumerate() {
            let slot = &mut sums[offset + k];
            slot[0] += step.gospa;
            slot[1] += step.gospa * step.gospa;
            slot[2] += step.localization.unwrap_or(0.0);
            slot[3] += step.missed.unwrap_or(0.0);
            slot[4] += step.false_.unwrap_or(0.0);
            slot[5] += step.missed_count as f64;
            slot[6] += step.false_count as f64;
        }
    }
    let n = count as f64;
    sums.iter()
        .enumerate()
        .map(|(k, s)| StepOverRuns {
            time: first + k as Step,
            runs: count,
            mean: s[0] / n,
            rms: (s[1] / n).sqrt(),
            localization: s[2] / n,
            missed: s[3] / n,
            false_: s[4] / n,
            missed_count: s[5] / n,
            false_count: s[6] / n,
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::distance::Distance;
    use crate::per_step::{per_step, GospaParams};
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
        let one = per_step(&set(&[(1, 0.0), (2, 0.0)]), &set(&[(1, 1.0)]), &params, &d).unwrap();
        let two = per_step(&set(&[(2, 0.0)]), &set(&[(2, 0.0)]), &params, &d).unwrap();
        let steps = steps_over_runs(&[&one, &two]);
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
}
