//! Comparing trackers over many sequences and Monte Carlo runs: every (tracker, case,
//! setting) scored on its own and in parallel, then aggregated, ranked, and each tracker set
//! against the best with a paired bootstrap interval; optionally a grid of settings (a sweep)
//! and per-step Monte Carlo summaries.
//!
//! The work is a list of jobs in a fixed order (settings, then trackers, then cases), run with
//! rayon and collected in that order; every sum is then taken sequentially in that order, so
//! the results are the same bits whatever the number of threads.
//!
//! Aggregation over the cases of a tracker (formulas in `specs/compare.md`): the mean and the
//! root mean square of the trajectory metric d, the mean of d^p and of each of its four parts
//! (p-th power units), and the totals of the missed and false object-steps and of the switches.
//! Trackers are ranked by the mean of d, smallest first; exactly equal means share a rank and
//! keep the order the trackers were given in.

pub mod bootstrap;
pub mod dataset;
pub mod montecarlo;

use rayon::prelude::*;
use serde::Serialize;

pub use self::bootstrap::{BootstrapOptions, Interval};
pub use self::dataset::{Case, CaseKey, Dataset, TrackerData};
use self::montecarlo::{mean_and_rms, steps_over_runs, OccupiedOverRuns};
use crate::distance::Distance;
use crate::error::{Error, Result};
use crate::per_step::{occupied_steps, GospaParams, OccupiedSteps};
use crate::trajectory_metric::{
    score_with, Parts, SolveOptions, TrajectoryParams, TrajectoryScore,
};

/// What the bootstrap resamples.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum ResampleBy {
    /// Sequences when there are two or more, runs otherwise.
    Auto,
    /// Whole sequences with all their runs (a cluster bootstrap).
    Sequence,
    /// Cases, each (sequence, run) on its own.
    Run,
}

/// Everything a comparison needs besides the data.
#[derive(Clone, Debug, PartialEq)]
pub struct CompareOptions {
    /// The settings to evaluate (one, or the grid of a sweep), in output order.
    pub settings: Vec<TrajectoryParams>,
    /// How the LP is solved.
    pub solve: SolveOptions,
    /// The bootstrap.
    pub bootstrap: BootstrapOptions,
    /// What the bootstrap resamples.
    pub resample_by: ResampleBy,
    /// Also compute per-step GOSPA over runs.
    pub monte_carlo: bool,
}

/// The settings of a sweep: every order, then every cut-off, then every switching penalty
/// (the penalty defaults to each cut-off when `penalties` is `None`).
///
/// # Errors
/// An empty list, a value listed twice, or a setting outside the metric's range.
pub fn settings_grid(
    cutoffs: &[f64],
    orders: &[f64],
    penalties: Option<&[f64]>,
) -> Result<Vec<TrajectoryParams>> {
    let check = |name: &str, values: &[f64]| -> Result<()> {
        if values.is_empty() {
            return Err(Error::Parameter(format!("the list of {name} is empty")));
        }
        for (i, v) in values.iter().enumerate() {
            if values[..i].contains(v) {
                return Err(Error::Parameter(format!("the {name} {v} is listed twice")));
            }
        }
        Ok(())
    };
    check("cut-offs", cutoffs)?;
    check("orders", orders)?;
    if let Some(penalties) = penalties {
        check("switching penalties", penalties)?;
    }
    let mut settings = Vec::new();
    for &order in orders {
        for &cutoff in cutoffs {
            match penalties {
                Some(penalties) => {
                    for &gamma in penalties {
                        settings.push(TrajectoryParams::new(cutoff, order, gamma)?);
                    }
                }
                None => settings.push(TrajectoryParams::new(cutoff, order, cutoff)?),
            }
        }
    }
    Ok(settings)
}

/// The trajectory metric of one (tracker, case, setting), without the LP's weights.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct CaseScore {
    /// d.
    pub metric: f64,
    /// d^p.
    pub total: f64,
    /// The parts and counts.
    #[serde(flatten)]
    pub parts: Parts,
    /// True when the LP optimum is integral.
    pub integral: bool,
    /// True when the value is proven optimal (see [`crate::trajectory_metric::Certificate`]).
    #[serde(skip)]
    pub proven: bool,
    /// Steps in the window.
    pub steps: usize,
}

impl From<&TrajectoryScore> for CaseScore {
    fn from(s: &TrajectoryScore) -> Self {
        CaseScore {
            metric: s.metric,
            total: s.total,
            parts: s.parts,
            integral: s.integral,
            proven: s.certificate.proven,
            steps: s.steps,
        }
    }
}

/// The raw results: every job's score, in job order.
#[derive(Clone, Debug)]
pub struct Evaluation {
    settings: Vec<TrajectoryParams>,
    step_params: Vec<GospaParams>,
    trackers: usize,
    cases: usize,
    scores: Vec<CaseScore>,
    series: Vec<OccupiedSteps>,
}

impl Evaluation {
    /// The score of `tracker` on `case` at setting `setting`.
    pub fn score(&self, setting: usize, tracker: usize, case: usize) -> &CaseScore {
        &self.scores[(setting * self.trackers + tracker) * self.cases + case]
    }

    /// The settings evaluated.
    pub fn settings(&self) -> &[TrajectoryParams] {
        &self.settings
    }

    /// The per-step parameters (distinct cut-off and order pairs of the settings, alpha 2);
    /// empty unless the Monte Carlo summaries were asked for.
    pub fn step_params(&self) -> &[GospaParams] {
        &self.step_params
    }

    /// The per-step GOSPA of `tracker` on `case` for `step_params()[index]`, kept at the
    /// occupied steps.
    pub fn series(&self, index: usize, tracker: usize, case: usize) -> &OccupiedSteps {
        &self.series[(index * self.trackers + tracker) * self.cases + case]
    }
}

/// One unit of work.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Job {
    Trajectory {
        setting: usize,
        tracker: usize,
        case: usize,
    },
    Steps {
        params: usize,
        tracker: usize,
        case: usize,
    },
}

enum Outcome {
    Trajectory(CaseScore),
    Steps(OccupiedSteps),
}

/// The distinct (cut-off, order) pairs of the settings, in order of first appearance, as
/// per-step parameters with alpha = 2.
fn step_params(settings: &[TrajectoryParams]) -> Result<Vec<GospaParams>> {
    let mut result: Vec<GospaParams> = Vec::new();
    for s in settings {
        if !result
            .iter()
            .any(|g| g.cutoff == s.cutoff && g.order == s.order)
        {
            result.push(GospaParams::new(s.cutoff, s.order, 2.0)?);
        }
    }
    Ok(result)
}

fn plan(dataset: &Dataset, options: &CompareOptions, steps: usize) -> Vec<Job> {
    let trackers = dataset.trackers().len();
    let cases = dataset.cases().len();
    let mut jobs = Vec::with_capacity((options.settings.len() + steps) * trackers * cases);
    for setting in 0..options.settings.len() {
        for tracker in 0..trackers {
            for case in 0..cases {
                jobs.push(Job::Trajectory {
                    setting,
                    tracker,
                    case,
                });
            }
        }
    }
    for params in 0..steps {
        for tracker in 0..trackers {
            for case in 0..cases {
                jobs.push(Job::Steps {
                    params,
                    tracker,
                    case,
                });
            }
        }
    }
    jobs
}

/// The number of jobs [`evaluate`] runs (for a progress display).
pub fn job_count(dataset: &Dataset, options: &CompareOptions) -> usize {
    let steps = if options.monte_carlo {
        step_params(&options.settings).map_or(0, |p| p.len())
    } else {
        0
    };
    (options.settings.len() + steps) * dataset.trackers().len() * dataset.cases().len()
}

/// Adds which tracker and case failed to an error that does not already name a file.
fn in_case(error: Error, tracker: &str, key: &CaseKey) -> Error {
    let at = format!("tracker {tracker:?}, {}", dataset::describe(key));
    match error {
        Error::Parameter(m) => Error::Parameter(format!("{at}: {m}")),
        Error::Mismatch(m) => Error::Mismatch(format!("{at}: {m}")),
        Error::Solver(m) => Error::Solver(format!("{at}: {m}")),
        other => other,
    }
}

/// Scores every (setting, tracker, case) in parallel; `progress` is called once per finished
/// job, from any thread.
///
/// # Errors
/// Invalid settings or options, a distance that does not fit the data, an LP failure (the first
/// in job order, naming the tracker and case).
pub fn evaluate(
    dataset: &Dataset,
    distance: &Distance,
    options: &CompareOptions,
    progress: &(dyn Fn() + Sync),
) -> Result<Evaluation> {
    if options.settings.is_empty() {
        return Err(Error::Parameter("there is no setting to evaluate".into()));
    }
    options.bootstrap.validate()?;
    for s in &options.settings {
        distance.validate(dataset.dim(), s.cutoff)?;
    }
    let step_params = if options.monte_carlo {
        step_params(&options.settings)?
    } else {
        Vec::new()
    };
    let jobs = plan(dataset, options, step_params.len());
    let outcomes: Vec<Result<Outcome>> = jobs
        .par_iter()
        .map(|job| {
            let outcome = match *job {
                Job::Trajectory {
                    setting,
                    tracker,
                    case,
                } => {
                    let t = &dataset.trackers()[tracker];
                    score_with(
                        dataset.truth_of(case),
                        &t.estimates[case],
                        &options.settings[setting],
                        distance,
                        &options.solve,
                    )
                    .map(|s| Outcome::Trajectory(CaseScore::from(&s)))
                    .map_err(|e| in_case(e, &t.name, &dataset.cases()[case].key))
                }
                Job::Steps {
                    params,
                    tracker,
                    case,
                } => {
                    let t = &dataset.trackers()[tracker];
                    occupied_steps(
                        dataset.truth_of(case),
                        &t.estimates[case],
                        &step_params[params],
                        distance,
                    )
                    .map(Outcome::Steps)
                    .map_err(|e| in_case(e, &t.name, &dataset.cases()[case].key))
                }
            };
            progress();
            outcome
        })
        .collect();
    let mut scores = Vec::with_capacity(jobs.len());
    let mut series = Vec::new();
    for outcome in outcomes {
        match outcome? {
            Outcome::Trajectory(score) => scores.push(score),
            Outcome::Steps(s) => series.push(s),
        }
    }
    Ok(Evaluation {
        settings: options.settings.clone(),
        step_params,
        trackers: dataset.trackers().len(),
        cases: dataset.cases().len(),
        scores,
        series,
    })
}

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
    /// The four parts as means over the cases; the counts (missed and false object-steps,
    /// switches) as sums over the cases.
    #[serde(flatten)]
    pub parts: Parts,
    /// Cases whose LP optimum is fractional (d is then a lower bound of the exact metric).
    pub fractional_cases: usize,
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
        unproven_cases: scores.iter().filter(|s| !s.proven).count(),
    }
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

/// What the bootstrap says of a tracker against the best.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Verdict {
    /// The whole interval lies above zero: the tracker is worse than the best.
    Worse,
    /// The whole interval lies below zero (possible only when the ranking and the interval
    /// disagree on a skewed sample).
    Better,
    /// The interval contains zero: the data cannot tell the two apart.
    Indistinguishable,
    /// Fewer than two resampling units: no interval.
    Undetermined,
}

impl Verdict {
    /// The verdict's name in CSV and JSON.
    pub fn name(self) -> &'static str {
        match self {
            Verdict::Worse => "worse",
            Verdict::Better => "better",
            Verdict::Indistinguishable => "indistinguishable",
            Verdict::Undetermined => "undetermined",
        }
    }
}

/// A tracker against the best: the mean difference of d per case and its interval.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct PairedDifference {
    /// The best tracker's name.
    pub against: String,
    /// Mean over cases of d(tracker) - d(best).
    pub mean: f64,
    /// The percentile bootstrap interval; `None` with fewer than two resampling units.
    pub interval: Option<Interval>,
    /// What the interval says.
    pub verdict: Verdict,
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

/// Everything a comparison reports.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Comparison {
    /// The bootstrap options used.
    pub bootstrap: BootstrapOptions,
    /// What was resampled (never `Auto`).
    pub resample_by: ResampleBy,
    /// The number of resampling units.
    pub resampling_units: usize,
    /// One result per setting, in the order of the settings.
    pub settings: Vec<SettingResult>,
    /// True when every setting ranks the trackers the same.
    pub ranking_stable: bool,
    /// Per-step summaries over runs (empty unless asked for), by (cut-off, order), then
    /// sequence, then tracker.
    pub monte_carlo: Vec<StepsOverRuns>,
}

/// Ranks trackers on a set of cases and, when `bootstrap` is given, compares each with the
/// best on `units` (ranges of case positions within `cases`).
fn rank_trackers(
    dataset: &Dataset,
    evaluation: &Evaluation,
    setting: usize,
    cases: std::ops::Range<usize>,
    bootstrap: Option<(&BootstrapOptions, &[std::ops::Range<usize>])>,
) -> Result<Vec<TrackerResult>> {
    let trackers = dataset.trackers();
    let summaries: Vec<Summary> = (0..trackers.len())
        .map(|t| summarize(cases.clone().map(|c| evaluation.score(setting, t, c))))
        .collect();
    let means: Vec<f64> = summaries.iter().map(|s| s.metric_mean).collect();
    let (order, ranks) = rank(&means);
    let best = order[0];
    let mut result = Vec::with_capacity(trackers.len());
    for &t in &order {
        let difference = match bootstrap {
            Some((options, units)) if t != best => {
                let units: Vec<bootstrap::Unit> = units
                    .iter()
                    .map(|range| bootstrap::Unit {
                        sum: range
                            .clone()
                            .map(|c| {
                                evaluation.score(setting, t, c).metric
                                    - evaluation.score(setting, best, c).metric
                            })
                            .sum(),
                        count: range.len(),
                    })
                    .collect();
                let mean = bootstrap::mean_per_case(&units);
                let (interval, verdict) = if units.len() < 2 {
                    (None, Verdict::Undetermined)
                } else {
                    let interval = bootstrap::percentile_interval(&units, options)?;
                    let verdict = if interval.lower > 0.0 {
                        Verdict::Worse
                    } else if interval.upper < 0.0 {
                        Verdict::Better
                    } else {
                        Verdict::Indistinguishable
                    };
                    (Some(interval), verdict)
                };
                Some(PairedDifference {
                    against: trackers[best].name.clone(),
                    mean,
                    interval,
                    verdict,
                })
            }
            _ => None,
        };
        result.push(TrackerResult {
            rank: ranks[t],
            tracker: trackers[t].name.clone(),
            summary: summaries[t],
            difference,
        });
    }
    Ok(result)
}

/// Aggregates an evaluation: rankings per setting (and per sequence), paired bootstrap
/// differences with the best, ranking stability over the settings, and the Monte Carlo
/// summaries when they were computed.
///
/// # Errors
/// Invalid bootstrap options; an evaluation made from another dataset.
pub fn compare(
    dataset: &Dataset,
    evaluation: &Evaluation,
    options: &CompareOptions,
) -> Result<Comparison> {
    options.bootstrap.validate()?;
    if evaluation.trackers != dataset.trackers().len() || evaluation.cases != dataset.cases().len()
    {
        return Err(Error::Mismatch(
            "the evaluation was made from other data".into(),
        ));
    }
    let sequences = dataset.sequences();
    let resample_by = match options.resample_by {
        ResampleBy::Auto if sequences.len() >= 2 => ResampleBy::Sequence,
        ResampleBy::Auto => ResampleBy::Run,
        other => other,
    };
    let units: Vec<std::ops::Range<usize>> = match resample_by {
        ResampleBy::Sequence => sequences.iter().map(|(_, r)| r.clone()).collect(),
        _ => (0..dataset.cases().len()).map(|c| c..c + 1).collect(),
    };
    let all = 0..dataset.cases().len();
    let mut settings = Vec::with_capacity(evaluation.settings.len());
    for (index, params) in evaluation.settings.iter().enumerate() {
        let trackers = rank_trackers(
            dataset,
            evaluation,
            index,
            all.clone(),
            Some((&options.bootstrap, &units)),
        )?;
        let per_sequence = sequences
            .iter()
            .map(|(name, range)| {
                Ok(SequenceResult {
                    sequence: name.clone(),
                    trackers: rank_trackers(dataset, evaluation, index, range.clone(), None)?,
                })
            })
            .collect::<Result<_>>()?;
        settings.push(SettingResult {
            params: *params,
            trackers,
            sequences: per_sequence,
        });
    }
    let names: Vec<String> = dataset.trackers().iter().map(|t| t.name.clone()).collect();
    let first = settings[0].ranks(&names);
    let ranking_stable = settings.iter().all(|s| s.ranks(&names) == first);
    let mut monte_carlo = Vec::new();
    for (index, params) in evaluation.step_params.iter().enumerate() {
        for (sequence, range) in &sequences {
            for (t, tracker) in dataset.trackers().iter().enumerate() {
                let runs: Vec<&OccupiedSteps> = range
                    .clone()
                    .map(|c| evaluation.series(index, t, c))
                    .collect();
                monte_carlo.push(StepsOverRuns {
                    cutoff: params.cutoff,
                    order: params.order,
                    sequence: sequence.clone(),
                    tracker: tracker.name.clone(),
                    runs: runs.len(),
                    steps: steps_over_runs(&runs),
                });
            }
        }
    }
    Ok(Comparison {
        bootstrap: options.bootstrap,
        resample_by,
        resampling_units: units.len(),
        settings,
        ranking_stable,
        monte_carlo,
    })
}

/// [`evaluate`] then [`compare`].
///
/// # Errors
/// As both.
pub fn run(
    dataset: &Dataset,
    distance: &Distance,
    options: &CompareOptions,
    progress: &(dyn Fn() + Sync),
) -> Result<Comparison> {
    let evaluation = evaluate(dataset, distance, options, progress)?;
    compare(dataset, &evaluation, options)
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
    fn grid_runs_order_then_cutoff_then_penalty() {
        let grid = settings_grid(&[2.0, 5.0], &[1.0], Some(&[1.0, 4.0])).unwrap();
        let triples: Vec<(f64, f64, f64)> = grid
            .iter()
            .map(|p| (p.cutoff, p.order, p.switch_penalty))
            .collect();
        assert_eq!(
            triples,
            [
                (2.0, 1.0, 1.0),
                (2.0, 1.0, 4.0),
                (5.0, 1.0, 1.0),
                (5.0, 1.0, 4.0)
            ]
        );
        // Without penalties, each cut-off is its own penalty.
        let grid = settings_grid(&[3.0], &[1.0, 2.0], None).unwrap();
        assert_eq!(grid[1].switch_penalty, 3.0);
        assert_eq!(grid[1].order, 2.0);
        assert!(settings_grid(&[2.0, 2.0], &[1.0], None).is_err());
        assert!(settings_grid(&[], &[1.0], None).is_err());
        assert!(settings_grid(&[-1.0], &[1.0], None).is_err());
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
