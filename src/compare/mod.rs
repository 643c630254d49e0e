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
pub use self::dataset::{Case, CaseKey, Dataset, TrackerData};
pub use self::montecarlo::StepsOverRuns;
pub use self::plan::{evaluate, job_count, settings_grid, CaseScore, Evaluation};
use self::ranking::rank_trackers;
pub use self::ranking::{rank, summarize, SequenceResult, SettingResult, Summary, TrackerResult};
pub use self::verdict::{PairedDifference, Verdict};
use crate::distance::Distance;
use crate::error::Result;
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
}

/// How case scores are aggregated into a comparison.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct AggregateOptions {
    /// The bootstrap.
    pub bootstrap: BootstrapOptions,
    /// What the bootstrap resamples.
    pub resample_by: ResampleBy,
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
            Some((&options.bootstrap, &units)),
        )?;
        let per_sequence = sequences
            .iter()
            .map(|(name, range)| {
                Ok(SequenceResult {
                    sequence: name.clone(),
                    trackers: rank_trackers(evaluation, index, range.clone(), None)?,
                })
            })
            .collect::<Result<_>>()?;
        settings.push(SettingResult {
            params: *params,
            trackers,
            sequences: per_sequence,
        });
    }
    let names = evaluation.trackers();
    let first = settings[0].ranks(names);
    let ranking_stable = settings.iter().all(|s| s.ranks(names) == first);
    Ok(Comparison {
        bootstrap: options.bootstrap,
        resample_by,
        resampling_units: units.len(),
        settings,
        ranking_stable,
        monte_carlo: montecarlo::over_runs(evaluation),
    })
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
