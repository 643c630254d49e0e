//! Comparing trackers over many sequences and Monte Carlo runs: every (tracker, case,
//! setting) scored on its own and in parallel, then aggregated, ranked, and each tracker set
//! against the best with a paired bootstrap interval; optionally a grid of settings (a sweep)
//! and per-step Monte Carlo summaries.
//!
//! - [`dataset`]: the trackers, sequences and runs, read from grouped files or a manifest;
//! - [`plan`]: which (setting, tracker, case) to score, scored in parallel in a fixed order
//!   ([`evaluate`]), so every sum below is the same bits whatever the number of threads;
//! - [`ranking`]: the aggregate of each tracker over the cases and the ranks;
//! - [`verdict`]: each tracker against the best, with [`bootstrap`]'s interval;
//! - [`montecarlo`]: per-step GOSPA over the runs of each sequence;
//! - here: the options, and [`aggregate`], which puts an evaluation together: one from
//!   [`evaluate`], or case scores computed elsewhere ([`Evaluation::from_scores`]).

pub mod bootstrap;
pub mod dataset;
pub mod montecarlo;
pub mod plan;
pub mod ranking;
pub mod verdict;

use serde::Serialize;

pub use self::bootstrap::{BootstrapOptions, Interval};
pub use self::dataset::{Case, CaseKey, ClassDatasets, Dataset, TrackerData};
pub use self::montecarlo::StepsOverRuns;
pub use self::plan::{evaluate, job_count, settings_grid, CaseScore, Evaluation, Ospa2Parts};
use self::ranking::rank_trackers;
pub use self::ranking::{
    rank, summarize, ClassRanking, SequenceResult, SettingResult, Summary, TrackerResult,
};
pub use self::verdict::{PairedDifference, Verdict};
use crate::distance::Distance;
use crate::error::Result;
use crate::trajectory::Window;
use crate::trajectory_metric::{SolveOptions, TrajectoryParams};

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
    /// How the scores are aggregated.
    pub aggregate: AggregateOptions,
    /// Also compute per-step GOSPA over runs.
    pub monte_carlo: bool,
    /// Also compute OSPA(2) over each case's whole window, at each setting's cut-off and order.
    pub ospa2: bool,
}

/// What ranks the trackers and what the bootstrap compares.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum RankBy {
    /// The trajectory metric d of each case: long cases weigh more, as d^p sums over steps.
    #[default]
    Metric,
    /// d^p per step of each case (d^p / steps): cases of different lengths weigh alike.
    PerStep,
}

impl RankBy {
    /// The name in JSON.
    pub fn name(self) -> &'static str {
        match self {
            RankBy::Metric => "metric",
            RankBy::PerStep => "per_step",
        }
    }
}

/// How case scores are aggregated into a comparison.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct AggregateOptions {
    /// The bootstrap.
    pub bootstrap: BootstrapOptions,
    /// What the bootstrap resamples.
    pub resample_by: ResampleBy,
    /// What ranks the trackers and what the bootstrap compares.
    pub rank_by: RankBy,
}

/// Everything a comparison reports.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Comparison {
    /// The bootstrap options used.
    pub bootstrap: BootstrapOptions,
    /// What ranks the trackers and what the bootstrap compares.
    pub rank_by: RankBy,
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
    /// Every (setting, tracker, case) score: by setting, then tracker (in the order given),
    /// then case (sorted).
    pub cases: Vec<CaseResult>,
}

/// One (setting, tracker, case) score, for those who run their own statistics.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CaseResult {
    /// The setting.
    #[serde(flatten)]
    pub params: TrajectoryParams,
    /// The tracker.
    pub tracker: String,
    /// The sequence ("" without sequences).
    pub sequence: String,
    /// The run ("" without runs).
    pub run: String,
    /// With classes, the class the row scores, or all classes together; `None` (and no key in
    /// JSON) without classes.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub class: Option<RowClass>,
    /// The score: d, d^p, the parts and counts, integrality, steps.
    #[serde(flatten)]
    pub score: CaseScore,
    /// d^p / steps ([`CaseScore::per_step`]).
    pub per_step: f64,
}

/// Which part of a case a row with classes scores.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum RowClass {
    /// One class.
    Class(String),
    /// All classes together (the sum over the classes).
    All,
}

impl RowClass {
    /// The class's name, or `None` for all classes.
    pub fn name(&self) -> Option<&str> {
        match self {
            RowClass::Class(name) => Some(name),
            RowClass::All => None,
        }
    }
}

impl Serialize for RowClass {
    /// A class as its name, all classes as null.
    fn serialize<S: serde::Serializer>(
        &self,
        serializer: S,
    ) -> std::result::Result<S::Ok, S::Error> {
        self.name().serialize(serializer)
    }
}

/// Aggregates an evaluation (from [`evaluate`], or from scores computed elsewhere through
/// [`Evaluation::from_scores`]): rankings per setting (and per sequence), paired bootstrap
/// differences with the best, ranking stability over the settings, and the Monte Carlo
/// summaries when they were computed.
///
/// # Errors
/// Invalid bootstrap options.
pub fn aggregate(evaluation: &Evaluation, options: &AggregateOptions) -> Result<Comparison> {
    options.bootstrap.validate()?;
    let sequences = evaluation.sequences();
    let resample_by = match options.resample_by {
        ResampleBy::Auto if sequences.len() >= 2 => ResampleBy::Sequence,
        ResampleBy::Auto => ResampleBy::Run,
        other => other,
    };
    let cases = evaluation.cases().len();
    let units: Vec<std::ops::Range<usize>> = match resample_by {
        ResampleBy::Sequence => sequences.iter().map(|(_, r)| r.clone()).collect(),
        _ => (0..cases).map(|c| c..c + 1).collect(),
    };
    let mut settings = Vec::with_capacity(evaluation.settings().len());
    for (index, params) in evaluation.settings().iter().enumerate() {
        let trackers = rank_trackers(
            evaluation,
            index,
            0..cases,
            options.rank_by,
            Some((&options.bootstrap, &units)),
        )?;
        let per_sequence = sequences
            .iter()
            .map(|(name, range)| {
                Ok(SequenceResult {
                    sequence: name.clone(),
                    trackers: rank_trackers(
                        evaluation,
                        index,
                        range.clone(),
                        options.rank_by,
                        None,
                    )?,
                })
            })
            .collect::<Result<_>>()?;
        settings.push(SettingResult {
            params: *params,
            trackers,
            sequences: per_sequence,
            classes: Vec::new(),
        });
    }
    let names = evaluation.trackers();
    let first = settings[0].ranks(names);
    let ranking_stable = settings.iter().all(|s| s.ranks(names) == first);
    let mut rows = Vec::with_capacity(settings.len() * names.len() * cases);
    for (index, params) in evaluation.settings().iter().enumerate() {
        for (t, tracker) in names.iter().enumerate() {
            for (c, key) in evaluation.cases().iter().enumerate() {
                let score = *evaluation.score(index, t, c);
                rows.push(CaseResult {
                    params: *params,
                    tracker: tracker.clone(),
                    sequence: key.sequence.clone(),
                    run: key.run.clone(),
                    class: None,
                    score,
                    per_step: score.per_step(),
                });
            }
        }
    }
    Ok(Comparison {
        bootstrap: options.bootstrap,
        rank_by: options.rank_by,
        resample_by,
        resampling_units: units.len(),
        settings,
        ranking_stable,
        monte_carlo: montecarlo::over_runs(evaluation),
        cases: rows,
    })
}

/// A comparison with classes: each class's dataset (from [`Dataset::from_columns_by_class`]
/// or [`Dataset::from_manifest_by_class`], all with the same cases) evaluated on its own, the
/// classes added up case by case ([`Evaluation::over_classes`]) and that total aggregated as
/// without classes (rankings, bootstrap, Monte Carlo summaries); then each setting gets the
/// ranking within each class over the cases where the class occurs (in the truth or in some
/// tracker's estimate), and each case's rows become one per class occurring in it followed by
/// the row for all classes.
///
/// # Errors
/// As [`evaluate`] and [`aggregate`]; no class.
pub fn run_by_class(
    classes: &[(String, Dataset)],
    distance: &Distance,
    options: &CompareOptions,
    progress: &(dyn Fn() + Sync),
) -> Result<Comparison> {
    let evaluations = classes
        .iter()
        .map(|(_, data)| evaluate(data, distance, options, progress))
        .collect::<Result<Vec<_>>>()?;
    let Some((_, first)) = classes.first() else {
        return Err(crate::error::Error::Mismatch(
            "there is no class to evaluate".into(),
        ));
    };
    let (trackers, cases) = (first.trackers().len(), first.cases().len());
    let mut windows = Vec::with_capacity(trackers * cases);
    for t in 0..trackers {
        for c in 0..cases {
            let each = classes.iter().map(|(_, data)| {
                Window::covering(data.truth_of(c), &data.trackers()[t].estimates[c])
            });
            windows.push(each.flatten().reduce(|a, b| Window {
                first: a.first.min(b.first),
                last: a.last.max(b.last),
            }));
        }
    }
    let total = Evaluation::over_classes(&evaluations, &windows)?;
    let mut comparison = aggregate(&total, &options.aggregate)?;
    // The cases where each class occurs.
    let occurs: Vec<Vec<bool>> = classes
        .iter()
        .map(|(_, data)| {
            (0..cases)
                .map(|c| {
                    !data.truth_of(c).is_empty()
                        || data.trackers().iter().any(|t| !t.estimates[c].is_empty())
                })
                .collect()
        })
        .collect();
    for (index, setting) in comparison.settings.iter_mut().enumerate() {
        for ((name, _), (evaluation, occurs)) in classes.iter().zip(evaluations.iter().zip(&occurs))
        {
            let cases = (0..occurs.len()).filter(|&c| occurs[c]);
            setting.classes.push(ClassRanking {
                class: name.clone(),
                cases: cases.clone().count(),
                trackers: rank_trackers(evaluation, index, cases, options.aggregate.rank_by, None)?,
            });
        }
    }
    // Each total row, preceded by the rows of the classes occurring in its case.
    let totals = std::mem::take(&mut comparison.cases);
    for (row, total) in totals.into_iter().enumerate() {
        let case = row % cases;
        let tracker = row / cases % trackers;
        let setting = row / cases / trackers;
        for ((name, _), (evaluation, occurs)) in classes.iter().zip(evaluations.iter().zip(&occurs))
        {
            if occurs[case] {
                let score = *evaluation.score(setting, tracker, case);
                comparison.cases.push(CaseResult {
                    class: Some(RowClass::Class(name.clone())),
                    score,
                    per_step: score.per_step(),
                    ..total.clone()
                });
            }
        }
        comparison.cases.push(CaseResult {
            class: Some(RowClass::All),
            ..total
        });
    }
    Ok(comparison)
}

/// [`evaluate`] then [`aggregate`].
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
    aggregate(&evaluation, &options.aggregate)
}
