//! Aggregating case scores computed elsewhere (on Dask, Ray or Spark workers, or in a loop)
//! into the comparison `switchyard compare` reports: per setting the trackers' summaries
//! (`compare::summarize`), their ranking (`compare::rank`), paired bootstrap intervals against
//! the best (`compare::bootstrap`), the per-sequence rankings, and the JSON document of
//! `report::compare::write_json`.
//!
//! The library's `compare::compare` does the same from its private `Evaluation`; this file
//! follows it step for step (same order of sums, same generator seeds) so the documents are
//! equal bit for bit. A library entry point taking case scores would replace it.

use std::ops::Range;

use pyo3::FromPyObject;

use switchyard::compare::dataset::CaseKey;
use switchyard::compare::{
    bootstrap, rank, summarize, BootstrapOptions, CaseScore, Comparison, PairedDifference,
    ResampleBy, SequenceResult, SettingResult, TrackerResult, Verdict,
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

/// Everything the aggregation needs: the settings `(cut-off, order, switching penalty)`, the
/// trackers and the cases `(sequence, run)` (in any order: sorted here as `compare` sorts them),
/// `scores[setting][tracker][case]`, and the options. Read from a dict whose keys are the field
/// names.
#[derive(FromPyObject)]
#[pyo3(from_item_all)]
pub struct Scores {
    pub settings: Vec<(f64, f64, f64)>,
    pub trackers: Vec<String>,
    pub cases: Vec<(String, String)>,
    pub scores: Vec<Vec<Vec<ScoreTuple>>>,
    /// The bootstrap: resamples, seed and confidence, as `compare`'s options.
    pub resamples: usize,
    pub seed: u64,
    pub confidence: f64,
    pub resample_by: String,
    pub per_sequence: bool,
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
    }
}

/// The trackers of one setting over `cases`, ranked, each but the best with its paired
/// difference when `units` are given.
fn rank_trackers(
    names: &[String],
    scores: &[Vec<CaseScore>],
    cases: Range<usize>,
    bootstrap: Option<(&BootstrapOptions, &[Range<usize>])>,
) -> Result<Vec<TrackerResult>> {
    let summaries: Vec<_> = scores
        .iter()
        .map(|tracker| summarize(&tracker[cases.clone()]))
        .collect();
    let means: Vec<f64> = summaries.iter().map(|s| s.metric_mean).collect();
    let (order, ranks) = rank(&means);
    let best = order[0];
    let mut result = Vec::with_capacity(names.len());
    for &t in &order {
        let difference = match bootstrap {
            Some((options, units)) if t != best => {
                let units: Vec<bootstrap::Unit> = units
                    .iter()
                    .map(|range| bootstrap::Unit {
                        sum: range
                            .clone()
                            .map(|c| scores[t][c].metric - scores[best][c].metric)
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
                    against: names[best].clone(),
                    mean,
                    interval,
                    verdict,
                })
            }
            _ => None,
        };
        result.push(TrackerResult {
            rank: ranks[t],
            tracker: names[t].clone(),
            summary: summaries[t],
            difference,
        });
    }
    Ok(result)
}

/// The comparison document (JSON text) of the scores.
///
/// # Errors
/// Bad options, no tracker or case, two cases with one key, scores of the wrong shape.
pub fn comparison_document(input: Scores) -> Result<String> {
    let bootstrap = BootstrapOptions {
        resamples: input.resamples,
        seed: input.seed,
        confidence: input.confidence,
    };
    bootstrap.validate()?;
    let (trackers, cases) = (input.trackers.len(), input.cases.len());
    if trackers == 0 || cases == 0 || input.settings.is_empty() {
        return Err(Error::Mismatch(
            "there is nothing to compare: give at least one score".into(),
        ));
    }
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
    let keys: Vec<CaseKey> = input
        .cases
        .iter()
        .map(|(sequence, run)| CaseKey::new(sequence, run))
        .collect();
    let mut order: Vec<usize> = (0..cases).collect();
    order.sort_by(|&a, &b| keys[a].cmp(&keys[b]));
    if let Some(pair) = order.windows(2).find(|w| keys[w[0]] == keys[w[1]]) {
        let key = &keys[pair[0]];
        return Err(Error::Mismatch(format!(
            "two scores of one tracker for sequence {:?}, run {:?}",
            key.sequence, key.run
        )));
    }
    // Sequences: consecutive runs of sorted cases with one sequence name.
    let mut sequences: Vec<(String, Range<usize>)> = Vec::new();
    for (position, &case) in order.iter().enumerate() {
        match sequences.last_mut() {
            Some((name, range)) if *name == keys[case].sequence => range.end = position + 1,
            _ => sequences.push((keys[case].sequence.clone(), position..position + 1)),
        }
    }
    let resample_by = match input.resample_by.as_str() {
        "auto" if sequences.len() >= 2 => ResampleBy::Sequence,
        "auto" | "run" => ResampleBy::Run,
        "sequence" => ResampleBy::Sequence,
        other => {
            return Err(Error::Parameter(format!(
                "unknown resampling {other:?}: give auto, sequence or run"
            )))
        }
    };
    let units: Vec<Range<usize>> = match resample_by {
        ResampleBy::Sequence => sequences.iter().map(|(_, r)| r.clone()).collect(),
        _ => (0..cases).map(|c| c..c + 1).collect(),
    };
    let mut settings = Vec::with_capacity(input.settings.len());
    for (index, &(cutoff, order_p, penalty)) in input.settings.iter().enumerate() {
        let params = TrajectoryParams::new(cutoff, order_p, penalty)?;
        let scores: Vec<Vec<CaseScore>> = input.scores[index]
            .iter()
            .map(|tracker| order.iter().map(|&c| case_score(&tracker[c])).collect())
            .collect();
        let trackers = rank_trackers(
            &input.trackers,
            &scores,
            0..cases,
            Some((&bootstrap, &units)),
        )?;
        let per_sequence = sequences
            .iter()
            .map(|(name, range)| {
                Ok(SequenceResult {
                    sequence: name.clone(),
                    trackers: rank_trackers(&input.trackers, &scores, range.clone(), None)?,
                })
            })
            .collect::<Result<_>>()?;
        settings.push(SettingResult {
            params,
            trackers,
            sequences: per_sequence,
        });
    }
    let first = settings[0].ranks(&input.trackers);
    let ranking_stable = settings.iter().all(|s| s.ranks(&input.trackers) == first);
    let comparison = Comparison {
        bootstrap,
        resample_by,
        resampling_units: units.len(),
        settings,
        ranking_stable,
        monte_carlo: Vec::new(),
    };
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
        sequences: sequences.len(),
        cases,
        distance: input.distance,
        engine: input.engine,
    };
    let sections = Sections {
        per_sequence: input.per_sequence,
        monte_carlo: false,
    };
    let mut text = Vec::new();
    write_json(&mut text, &comparison, &inputs, sections)
        .map_err(|error| Error::Solver(format!("the comparison document: {error}")))?;
    Ok(String::from_utf8(text).expect("serde_json writes UTF-8"))
}
