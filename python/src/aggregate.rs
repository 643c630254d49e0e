//! Aggregating case scores computed elsewhere (on Dask, Ray or Spark workers, or in a loop)
//! into the comparison `switchyard compare` reports: the Python values become a
//! `compare::Evaluation` (`Evaluation::from_scores`), which `compare::aggregate` puts together
//! exactly as the command does, written by `report::compare::write_json`.

use pyo3::FromPyObject;

use switchyard::compare::dataset::CaseKey;
use switchyard::compare::{
    aggregate, AggregateOptions, BootstrapOptions, CaseScore, Evaluation, RankBy, ResampleBy,
};
use switchyard::report::compare::{write_json, CompareInputs, Sections, TrackerSource};
use switchyard::trajectory_metric::{Parts, TrajectoryParams};
use switchyard::{Error, Result};

/// One case score as the Python layer passes it: `(metric, total, localization, missed, false,
/// switching, missed_count, false_count, switch_count, integral, proven, steps)`.
pub type ScoreTuple = (
    f64,
    f64,
    f64,
    f64,
    f64,
    f64,
    f64,
    f64,
    f64,
    bool,
    bool,
    usize,
);

/// Everything the aggregation needs: the settings `(cut-off, order, switching penalty, missed
/// share)`, the trackers and the cases `(sequence, run)` (in any order: sorted here as `compare`
/// sorts them), `scores[setting][tracker][case]`, and the options. Read from a dict whose keys are the field
/// names.
#[derive(FromPyObject)]
#[pyo3(from_item_all)]
pub struct Scores {
    pub settings: Vec<(f64, f64, f64, f64)>,
    pub trackers: Vec<String>,
    pub cases: Vec<(String, String)>,
    pub scores: Vec<Vec<Vec<ScoreTuple>>>,
    /// The bootstrap: resamples, seed and confidence, as `compare`'s options.
    pub resamples: usize,
    pub seed: u64,
    pub confidence: f64,
    pub resample_by: String,
    pub per_sequence: bool,
    /// "metric" or "per_step": what ranks the trackers.
    pub rank_by: String,
    /// Also list every case score.
    pub per_case: bool,
    /// `inputs` of the document: truth, manifest, the trackers' estimate names, distance, engine.
    pub truth: Option<String>,
    pub manifest: Option<String>,
    pub estimates: Vec<Option<String>>,
    pub distance: String,
    pub engine: String,
}

fn case_score(s: &ScoreTuple) -> CaseScore {
    CaseScore {
        metric: s.0,
        total: s.1,
        parts: Parts {
            localization: s.2,
            missed: s.3,
            false_: s.4,
            switching: s.5,
            missed_count: s.6,
            false_count: s.7,
            switch_count: s.8,
        },
        integral: s.9,
        proven: s.10,
        steps: s.11,
        ospa2: None,
    }
}

/// The comparison document (JSON text) of the scores: the settings, trackers and cases become
/// a `compare::Evaluation`, which `compare::aggregate` puts together as the command does.
///
/// # Errors
/// Bad options, no tracker or case, two cases with one key, scores of the wrong shape.
pub fn comparison_document(input: Scores) -> Result<String> {
    let bootstrap = BootstrapOptions {
        resamples: input.resamples,
        seed: input.seed,
        confidence: input.confidence,
    };
    let resample_by = match input.resample_by.as_str() {
        "auto" => ResampleBy::Auto,
        "run" => ResampleBy::Run,
        "sequence" => ResampleBy::Sequence,
        other => {
            return Err(Error::Parameter(format!(
                "unknown resampling {other:?}: give auto, sequence or run"
            )))
        }
    };
    let rank_by = match input.rank_by.as_str() {
        "metric" => RankBy::Metric,
        "per_step" => RankBy::PerStep,
        other => {
            return Err(Error::Parameter(format!(
                "unknown ranking {other:?}: give metric or per_step"
            )))
        }
    };
    let (trackers, cases) = (input.trackers.len(), input.cases.len());
    let shaped = input.scores.len() == input.settings.len()
        && input
            .scores
            .iter()
            .all(|s| s.len() == trackers && s.iter().all(|t| t.len() == cases));
    if !shaped {
        return Err(Error::Mismatch(
            "the scores do not cover every (setting, tracker, case)".into(),
        ));
    }
    let settings = input
        .settings
        .iter()
        .map(|&(cutoff, order, penalty, share)| {
            TrajectoryParams::new(cutoff, order, penalty)?.with_missed_share(share)
        })
        .collect::<Result<_>>()?;
    let keys = input
        .cases
        .iter()
        .map(|(sequence, run)| CaseKey::new(sequence, run))
        .collect();
    let scores = input
        .scores
        .iter()
        .flatten()
        .flatten()
        .map(case_score)
        .collect();
    let evaluation = Evaluation::from_scores(settings, input.trackers.clone(), keys, scores)?;
    let comparison = aggregate(
        &evaluation,
        &AggregateOptions {
            bootstrap,
            resample_by,
            rank_by,
        },
    )?;
    let inputs = CompareInputs {
        truth: input.truth,
        manifest: input.manifest,
        trackers: input
            .trackers
            .iter()
            .zip(input.estimates)
            .map(|(name, estimate)| TrackerSource {
                name: name.clone(),
                estimate,
            })
            .collect(),
        sequences: evaluation.sequences().len(),
        cases,
        distance: input.distance,
        engine: input.engine,
        // The step size only labels the Monte Carlo per-step summaries, which scores computed
        // elsewhere do not have.
        time_step: None,
        classes: None,
    };
    let sections = Sections {
        per_sequence: input.per_sequence,
        monte_carlo: false,
        per_case: input.per_case,
    };
    let mut text = Vec::new();
    write_json(&mut text, &comparison, &inputs, sections)
        .map_err(|error| Error::Solver(format!("the comparison document: {error}")))?;
    Ok(String::from_utf8(text).expect("serde_json writes UTF-8"))
}
