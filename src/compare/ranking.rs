//! Ranking trackers on a set of cases. Aggregation over the cases of a tracker (formulas in
//! `specs/compare.md`): the mean and the root mean square of the trajectory metric d, the mean
//! of d^p and of each of its four parts (p-th power units), and the totals of the missed and
//! false object-steps and of the switches, and the mean of d^p per step. Trackers are ranked by
//! the mean of d (or of d^p per step, [`RankBy`]), smallest first; exactly equal means share a
//! rank and keep the order the trackers were given in.

use std::ops::Range;

use serde::Serialize;

use super::bootstrap::BootstrapOptions;
use super::montecarlo::mean_and_rms;
use super::plan::{CaseScore, Evaluation, Ospa2Parts};
use super::verdict::{paired_difference, PairedDifference};
use super::RankBy;
use crate::error::Result;
use crate::trajectory_metric::{Parts, TrajectoryParams};

/// A tracker's results over a set of cases.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Summary {
    /// The number of cases.
    pub cases: usize,
    /// Mean of d over the cases.
    pub metric_mean: f64,
    /// Root mean square of d over the cases.
    pub metric_rms: f64,
    /// Mean of d^p over the cases (the sum of the four mean parts).
    pub total_mean: f64,
    /// Mean over the cases of d^p / steps ([`CaseScore::per_step`]).
    pub per_step_mean: f64,
    /// The four parts as means over the cases; the counts (missed and false object-steps,
    /// switches) as sums over the cases.
    #[serde(flatten)]
    pub parts: Parts,
    /// Cases whose LP optimum is fractional (d is then a lower bound of the exact metric).
    pub fractional_cases: usize,
    /// The means over the cases of OSPA(2) and of its two parts, when every case has it.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub ospa2: Option<Ospa2Parts>,
    /// Cases whose value is not proven optimal (reported with bounds; the scores' notes say
    /// why). Not written to the outputs: the command warns instead.
    #[serde(skip)]
    pub unproven_cases: usize,
}

/// Aggregates case scores: means of d, d^p and the parts, RMS of d, totals of the counts.
pub fn summarize<'a>(scores: impl IntoIterator<Item = &'a CaseScore>) -> Summary {
    let scores: Vec<&CaseScore> = scores.into_iter().collect();
    let n = scores.len();
    let mean = |f: fn(&CaseScore) -> f64| {
        if n == 0 {
            0.0
        } else {
            scores.iter().map(|s| f(s)).sum::<f64>() / n as f64
        }
    };
    let sum = |f: fn(&CaseScore) -> f64| scores.iter().map(|s| f(s)).sum::<f64>();
    let (metric_mean, metric_rms) = mean_and_rms(scores.iter().map(|s| s.metric));
    Summary {
        cases: n,
        metric_mean,
        metric_rms,
        total_mean: mean(|s| s.total),
        per_step_mean: mean(CaseScore::per_step),
        parts: Parts {
            localization: mean(|s| s.parts.localization),
            missed: mean(|s| s.parts.missed),
            false_: mean(|s| s.parts.false_),
            switching: mean(|s| s.parts.switching),
            missed_count: sum(|s| s.parts.missed_count),
            false_count: sum(|s| s.parts.false_count),
            switch_count: sum(|s| s.parts.switch_count),
        },
        fractional_cases: scores.iter().filter(|s| s.proven && !s.integral).count(),
        ospa2: ospa2_means(&scores),
        unproven_cases: scores.iter().filter(|s| !s.proven).count(),
    }
}

/// The means of OSPA(2) and its parts over the scores (summed in order), when every score has
/// it and there is at least one.
fn ospa2_means(scores: &[&CaseScore]) -> Option<Ospa2Parts> {
    let values: Vec<Ospa2Parts> = scores.iter().map(|s| s.ospa2).collect::<Option<_>>()?;
    if values.is_empty() {
        return None;
    }
    let n = values.len() as f64;
    let mean = |f: fn(&Ospa2Parts) -> f64| values.iter().map(f).sum::<f64>() / n;
    Some(Ospa2Parts {
        value: mean(|o| o.value),
        paired_power: mean(|o| o.paired_power),
        unpaired_power: mean(|o| o.unpaired_power),
    })
}

/// Competition ranks of values, smallest first: exactly equal values share a rank and the next
/// rank skips (1, 1, 3). Returns the order (indices, ties in index order) and the rank of each
/// index.
pub fn rank(values: &[f64]) -> (Vec<usize>, Vec<usize>) {
    let mut order: Vec<usize> = (0..values.len()).collect();
    order.sort_by(|&a, &b| values[a].total_cmp(&values[b]).then(a.cmp(&b)));
    let mut ranks = vec![0; values.len()];
    for (position, &index) in order.iter().enumerate() {
        ranks[index] = if position > 0 && values[order[position - 1]] == values[index] {
            ranks[order[position - 1]]
        } else {
            position + 1
        };
    }
    (order, ranks)
}

/// One tracker's line in a ranking.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct TrackerResult {
    /// Competition rank, 1 for the best.
    pub rank: usize,
    /// The tracker's name.
    pub tracker: String,
    /// The aggregate over the cases.
    pub summary: Summary,
    /// The comparison with the best; `None` for the best itself.
    pub difference: Option<PairedDifference>,
}

/// One sequence's ranking.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SequenceResult {
    /// The sequence.
    pub sequence: String,
    /// The trackers over the sequence's runs, best first.
    pub trackers: Vec<TrackerResult>,
}

/// The results at one setting.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SettingResult {
    /// The setting.
    pub params: TrajectoryParams,
    /// The trackers over every case, best first.
    pub trackers: Vec<TrackerResult>,
    /// The same per sequence (without differences), in sequence order.
    pub sequences: Vec<SequenceResult>,
    /// With classes, the ranking within each class (without differences), in byte order of the
    /// names; empty without classes.
    pub classes: Vec<ClassRanking>,
}

/// One class's ranking: each tracker over the cases where the class occurs.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ClassRanking {
    /// The class.
    pub class: String,
    /// The cases where the class occurs: in the truth or in some tracker's estimate.
    pub cases: usize,
    /// The trackers over those cases, best first.
    pub trackers: Vec<TrackerResult>,
}

impl SettingResult {
    /// The rank of each tracker, in the order the trackers were given.
    pub fn ranks(&self, names: &[String]) -> Vec<usize> {
        names
            .iter()
            .map(|name| {
                self.trackers
                    .iter()
                    .find(|t| &t.tracker == name)
                    .map_or(0, |t| t.rank)
            })
            .collect()
    }
}

/// Ranks trackers on a set of cases and, when `bootstrap` is given, compares each with the
/// best on `units` (ranges of case positions within `cases`).
pub(super) fn rank_trackers(
    evaluation: &Evaluation,
    setting: usize,
    cases: impl Iterator<Item = usize> + Clone,
    rank_by: RankBy,
    bootstrap: Option<(&BootstrapOptions, &[Range<usize>])>,
) -> Result<Vec<TrackerResult>> {
    let trackers = evaluation.trackers();
    let summaries: Vec<Summary> = (0..trackers.len())
        .map(|t| summarize(cases.clone().map(|c| evaluation.score(setting, t, c))))
        .collect();
    let means: Vec<f64> = summaries
        .iter()
        .map(|s| match rank_by {
            RankBy::Metric => s.metric_mean,
            RankBy::PerStep => s.per_step_mean,
        })
        .collect();
    let (order, ranks) = rank(&means);
    let best = (order[0], trackers[order[0]].as_str());
    let mut result = Vec::with_capacity(trackers.len());
    for &t in &order {
        let difference = match bootstrap {
            Some((options, units)) if t != best.0 => Some(paired_difference(
                evaluation, setting, t, best, units, rank_by, options,
            )?),
            _ => None,
        };
        result.push(TrackerResult {
            rank: ranks[t],
            tracker: trackers[t].clone(),
            summary: summaries[t],
            difference,
        });
    }
    Ok(result)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn competition_ranks_share_ties() {
        let (order, ranks) = rank(&[3.0, 1.0, 3.0, 0.5]);
        assert_eq!(order, [3, 1, 0, 2]);
        assert_eq!(ranks, [3, 2, 3, 1]);
    }

    #[test]
    fn summary_by_hand() {
        let case = |metric: f64, switch_count: f64, integral: bool| CaseScore {
            metric,
            total: metric,
            parts: Parts {
                localization: metric / 2.0,
                missed: metric / 2.0,
                missed_count: 1.0,
                switch_count,
                ..Parts::default()
            },
            integral,
            proven: true,
            steps: 3,
            ospa2: None,
        };
        // d = 3 and 4: mean 3.5, RMS sqrt(12.5); localisation mean (1.5 + 2) / 2 = 1.75;
        // switches 1 + 0.5 = 1.5 in total; one fractional case.
        let a = case(3.0, 1.0, true);
        let b = case(4.0, 0.5, false);
        let s = summarize([&a, &b]);
        assert_eq!(s.cases, 2);
        assert!((s.metric_mean - 3.5).abs() < 1e-12);
        assert!((s.metric_rms - 12.5f64.sqrt()).abs() < 1e-12);
        assert!((s.parts.localization - 1.75).abs() < 1e-12);
        assert!((s.parts.switch_count - 1.5).abs() < 1e-12);
        assert!((s.parts.missed_count - 2.0).abs() < 1e-12);
        assert_eq!(s.fractional_cases, 1);
    }
}
