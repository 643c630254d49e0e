//! Planning and running a comparison's work: the settings of a sweep, one job per (setting,
//! tracker, case) and, for the Monte Carlo summaries, per (cut-off and order, tracker, case),
//! in a fixed order (settings, then trackers, then cases); the jobs run in parallel with rayon
//! and are collected in that order, so what follows sums them in the same order whatever the
//! number of threads.

use rayon::prelude::*;
use serde::Serialize;

use super::dataset::{self, CaseKey, Dataset};
use super::{CompareOptions, RankBy};
use crate::classes::sum_steps;
use crate::distance::{root, Distance};
use crate::error::{Error, Result};
use crate::ospa2::{Ospa2, Ospa2Params, Ospa2Score};
use crate::per_step::{occupied_steps, GospaParams, OccupiedSteps};
use crate::trajectory::Window;
use crate::trajectory_metric::{score_with, Parts, TrajectoryParams, TrajectoryScore};

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

/// OSPA(2) over a case's whole window (M. Beard, B.-T. Vo, B.-N. Vo, "A solution for
/// large-scale multi-object tracking", IEEE Trans. Signal Processing 68:2754-2769, 2020;
/// [`crate::ospa2`]), at the setting's cut-off and order: the value and its two parts in p-th
/// power units, as `score --ospa2` gives them; or their means over cases in a summary.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize)]
pub struct Ospa2Parts {
    /// OSPA(2), between 0 and c.
    pub value: f64,
    /// The part of OSPA(2)^p from the pairs closer than c.
    pub paired_power: f64,
    /// The part of OSPA(2)^p from the trajectories left without a partner closer than c.
    pub unpaired_power: f64,
}

impl From<&Ospa2Score> for Ospa2Parts {
    fn from(s: &Ospa2Score) -> Self {
        Ospa2Parts {
            value: s.value,
            paired_power: s.paired_power,
            unpaired_power: s.unpaired_power,
        }
    }
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
    /// OSPA(2) over the window, when asked for (`--ospa2`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub ospa2: Option<Ospa2Parts>,
}

impl CaseScore {
    /// d^p per step of the window: d^p / steps (0 for an empty window, where d^p is 0), in
    /// p-th power units; a long and a short case weigh alike in a mean of it.
    pub fn per_step(&self) -> f64 {
        if self.steps == 0 {
            0.0
        } else {
            self.total / self.steps as f64
        }
    }

    /// The value that ranks and is compared: d, or d^p per step.
    pub fn ranked(&self, by: RankBy) -> f64 {
        match by {
            RankBy::Metric => self.metric,
            RankBy::PerStep => self.per_step(),
        }
    }
}

impl CaseScore {
    /// The score of several classes together, as `specs/classes.md` adds them up (and
    /// [`crate::classes::sum_scores`] does for whole scores): d^p, the parts and the counts
    /// are sums in the order given, d = (sum of d^p)^(1/p) at order `order`; integral and
    /// proven when every class's is; `steps` the steps of the window of all classes together.
    pub fn over_classes(scores: &[&CaseScore], order: f64, steps: usize) -> CaseScore {
        let total = scores.iter().fold(0.0, |sum, s| sum + s.total);
        let mut parts = Parts::default();
        for score in scores {
            parts += score.parts;
        }
        CaseScore {
            metric: root(total, order),
            total,
            parts,
            integral: scores.iter().all(|s| s.integral),
            proven: scores.iter().all(|s| s.proven),
            steps,
            // Normalised: OSPA(2) does not add up over classes.
            ospa2: None,
        }
    }
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
            ospa2: None,
        }
    }
}

/// The raw results: every (setting, tracker, case) score, in job order, with the names of the
/// trackers and the cases' keys (sorted); what [`super::aggregate`] needs, whether the scores
/// were computed by [`evaluate`] or elsewhere ([`Evaluation::from_scores`]).
#[derive(Clone, Debug)]
pub struct Evaluation {
    settings: Vec<TrajectoryParams>,
    step_params: Vec<GospaParams>,
    trackers: Vec<String>,
    cases: Vec<CaseKey>,
    scores: Vec<CaseScore>,
    series: Vec<OccupiedSteps>,
}

impl Evaluation {
    /// An evaluation from case scores computed elsewhere (a loop, or the workers of a
    /// distributed engine): `scores[(setting x trackers + tracker) x cases + case]` for the
    /// cases in the order given; the cases are sorted here as [`Dataset`] sorts them, their
    /// scores following. No per-step GOSPA, so no Monte Carlo summaries.
    ///
    /// # Errors
    /// No setting, tracker or case; scores not covering every (setting, tracker, case) once;
    /// two cases with one key.
    pub fn from_scores(
        settings: Vec<TrajectoryParams>,
        trackers: Vec<String>,
        cases: Vec<CaseKey>,
        scores: Vec<CaseScore>,
    ) -> Result<Self> {
        if settings.is_empty() || trackers.is_empty() || cases.is_empty() {
            return Err(Error::Mismatch(
                "there is nothing to compare: give at least one score".into(),
            ));
        }
        if scores.len() != settings.len() * trackers.len() * cases.len() {
            return Err(Error::Mismatch(
                "the scores do not cover every (setting, tracker, case)".into(),
            ));
        }
        let mut order: Vec<usize> = (0..cases.len()).collect();
        order.sort_by(|&a, &b| cases[a].cmp(&cases[b]));
        if let Some(pair) = order.windows(2).find(|w| cases[w[0]] == cases[w[1]]) {
            let key = &cases[pair[0]];
            return Err(Error::Mismatch(format!(
                "two scores of one tracker for sequence {:?}, run {:?}",
                key.sequence, key.run
            )));
        }
        let sorted_scores = scores
            .chunks(cases.len())
            .flat_map(|row| order.iter().map(move |&c| row[c]))
            .collect();
        let sorted_cases = order.iter().map(|&c| cases[c].clone()).collect();
        Ok(Evaluation {
            settings,
            step_params: Vec::new(),
            trackers,
            cases: sorted_cases,
            scores: sorted_scores,
            series: Vec::new(),
        })
    }

    /// All classes together from the evaluations of each class (from [`evaluate`] on each
    /// class's [`Dataset`], all with the same settings, trackers and cases): every score is
    /// [`CaseScore::over_classes`] of the classes' scores, in the order given, and every
    /// per-step series the classes' series added up ([`sum_steps`]). `windows[tracker x cases
    /// + case]` is the window of all classes together of that tracker and case.
    ///
    /// # Errors
    /// No class; classes evaluated on other settings, trackers or cases; windows not covering
    /// every (tracker, case); per-step sums that overflow.
    pub fn over_classes(classes: &[Evaluation], windows: &[Option<Window>]) -> Result<Self> {
        let Some(first) = classes.first() else {
            return Err(Error::Mismatch("there is no class to add up".into()));
        };
        let (trackers, cases) = (first.trackers.len(), first.cases.len());
        if classes.iter().any(|c| {
            c.settings != first.settings
                || c.step_params != first.step_params
                || c.trackers != first.trackers
                || c.cases != first.cases
        }) || windows.len() != trackers * cases
        {
            return Err(Error::Mismatch(
                "the classes were evaluated on other settings, trackers or cases".into(),
            ));
        }
        let steps_of = |t: usize, c: usize| windows[t * cases + c].map_or(0, |w| w.len());
        let mut scores = Vec::with_capacity(first.scores.len());
        for (setting, params) in first.settings.iter().enumerate() {
            for t in 0..trackers {
                for c in 0..cases {
                    let each: Vec<&CaseScore> =
                        classes.iter().map(|k| k.score(setting, t, c)).collect();
                    scores.push(CaseScore::over_classes(&each, params.order, steps_of(t, c)));
                }
            }
        }
        let mut series = Vec::with_capacity(first.series.len());
        for (index, params) in first.step_params.iter().enumerate() {
            for t in 0..trackers {
                for c in 0..cases {
                    let each: Vec<&OccupiedSteps> =
                        classes.iter().map(|k| k.series(index, t, c)).collect();
                    series.push(sum_steps(&each, windows[t * cases + c], params)?);
                }
            }
        }
        Ok(Evaluation {
            settings: first.settings.clone(),
            step_params: first.step_params.clone(),
            trackers: first.trackers.clone(),
            cases: first.cases.clone(),
            scores,
            series,
        })
    }

    /// The score of `tracker` on `case` at setting `setting`.
    pub fn score(&self, setting: usize, tracker: usize, case: usize) -> &CaseScore {
        &self.scores[(setting * self.trackers.len() + tracker) * self.cases.len() + case]
    }

    /// The settings evaluated.
    pub fn settings(&self) -> &[TrajectoryParams] {
        &self.settings
    }

    /// The trackers' names, in the order given.
    pub fn trackers(&self) -> &[String] {
        &self.trackers
    }

    /// The cases' keys, sorted.
    pub fn cases(&self) -> &[CaseKey] {
        &self.cases
    }

    /// The sequences, each with the range of its cases in [`Evaluation::cases`].
    pub fn sequences(&self) -> Vec<(String, std::ops::Range<usize>)> {
        dataset::sequences(&self.cases)
    }

    /// The per-step parameters (distinct cut-off and order pairs of the settings, alpha 2);
    /// empty unless the Monte Carlo summaries were asked for.
    pub fn step_params(&self) -> &[GospaParams] {
        &self.step_params
    }

    /// The per-step GOSPA of `tracker` on `case` for `step_params()[index]`, kept at the
    /// occupied steps.
    pub fn series(&self, index: usize, tracker: usize, case: usize) -> &OccupiedSteps {
        &self.series[(index * self.trackers.len() + tracker) * self.cases.len() + case]
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
    Ospa2 {
        params: usize,
        tracker: usize,
        case: usize,
    },
}

enum Outcome {
    Trajectory(CaseScore),
    Steps(OccupiedSteps),
    Ospa2(Ospa2Parts),
}

/// The distinct (cut-off, order) pairs of the settings, in order of first appearance, as
/// per-step parameters with alpha = 2.
fn step_params(settings: &[TrajectoryParams]) -> Result<Vec<GospaParams>> {
    let mut result: Vec<GospaParams> = Vec::new();
    for s in settings {
        if !result
            .iter()
            .any(|g| g.cutoff == s.cutoff && g.order == s.order && g.missed_share == s.missed_share)
        {
            result.push(GospaParams::beside(s)?);
        }
    }
    Ok(result)
}

/// The distinct (cut-off, order) pairs of the settings, in order of first appearance, as
/// OSPA(2) parameters (OSPA(2) depends on nothing else, so a sweep of the switching penalty
/// computes it once), and for each setting the index of its pair.
fn ospa2_params(settings: &[TrajectoryParams]) -> Result<(Vec<Ospa2Params>, Vec<usize>)> {
    let mut params: Vec<Ospa2Params> = Vec::new();
    let mut of_setting = Vec::with_capacity(settings.len());
    for s in settings {
        let index = match params
            .iter()
            .position(|o| o.cutoff == s.cutoff && o.order == s.order)
        {
            Some(index) => index,
            None => {
                params.push(Ospa2Params::new(s.cutoff, s.order)?);
                params.len() - 1
            }
        };
        of_setting.push(index);
    }
    Ok((params, of_setting))
}

/// A job from its (setting or parameters, tracker, case).
type MakeJob = fn(usize, usize, usize) -> Job;

/// The jobs: every (setting, tracker, case) trajectory score, then the per-step series for
/// each of `steps` parameters, then OSPA(2) for each of `ospa2` parameters.
fn plan(dataset: &Dataset, options: &CompareOptions, steps: usize, ospa2: usize) -> Vec<Job> {
    let trackers = dataset.trackers().len();
    let cases = dataset.cases().len();
    let kinds: [(usize, MakeJob); 3] = [
        (options.settings.len(), |setting, tracker, case| {
            Job::Trajectory {
                setting,
                tracker,
                case,
            }
        }),
        (steps, |params, tracker, case| Job::Steps {
            params,
            tracker,
            case,
        }),
        (ospa2, |params, tracker, case| Job::Ospa2 {
            params,
            tracker,
            case,
        }),
    ];
    let mut jobs = Vec::with_capacity((options.settings.len() + steps + ospa2) * trackers * cases);
    for (count, job) in kinds {
        for index in 0..count {
            for tracker in 0..trackers {
                jobs.extend((0..cases).map(|case| job(index, tracker, case)));
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
    let ospa2 = if options.ospa2 {
        ospa2_params(&options.settings).map_or(0, |(p, _)| p.len())
    } else {
        0
    };
    (options.settings.len() + steps + ospa2) * dataset.trackers().len() * dataset.cases().len()
}

/// Carries which tracker and case failed with the error.
fn in_case(error: Error, tracker: &str, key: &CaseKey) -> Error {
    Error::InCase {
        tracker: tracker.to_string(),
        case: dataset::describe(key),
        error: Box::new(error),
    }
}

/// Scores every (setting, tracker, case) in parallel; `progress` is called once per finished
/// job, from any thread.
///
/// # Errors
/// Invalid settings or options, a distance that does not fit the data; a failure in a case
/// (the first in job order) as [`Error::InCase`], naming the tracker and the case.
pub fn evaluate(
    dataset: &Dataset,
    distance: &Distance,
    options: &CompareOptions,
    progress: &(dyn Fn() + Sync),
) -> Result<Evaluation> {
    if options.settings.is_empty() {
        return Err(Error::Parameter("there is no setting to evaluate".into()));
    }
    options.aggregate.bootstrap.validate()?;
    for s in &options.settings {
        distance.validate(dataset.dim(), s.cutoff)?;
    }
    let step_params = if options.monte_carlo {
        step_params(&options.settings)?
    } else {
        Vec::new()
    };
    let (ospa2_params, ospa2_of_setting) = if options.ospa2 {
        ospa2_params(&options.settings)?
    } else {
        (Vec::new(), Vec::new())
    };
    let jobs = plan(dataset, options, step_params.len(), ospa2_params.len());
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
                    let (truth, estimate) = (dataset.truth_of(case), &t.estimates[case]);
                    let params = &options.settings[setting];
                    score_with(truth, estimate, params, distance, &options.solve)
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
                Job::Ospa2 {
                    params,
                    tracker,
                    case,
                } => {
                    let t = &dataset.trackers()[tracker];
                    let (truth, estimate) = (dataset.truth_of(case), &t.estimates[case]);
                    Ospa2::new(truth, estimate, ospa2_params[params], distance)
                        .map(|metric| Outcome::Ospa2(Ospa2Parts::from(&metric.whole())))
                        .map_err(|e| in_case(e, &t.name, &dataset.cases()[case].key))
                }
            };
            progress();
            outcome
        })
        .collect();
    let mut scores = Vec::with_capacity(jobs.len());
    let mut series = Vec::new();
    let mut ospa2 = Vec::new();
    for outcome in outcomes {
        match outcome? {
            Outcome::Trajectory(score) => scores.push(score),
            Outcome::Steps(s) => series.push(s),
            Outcome::Ospa2(o) => ospa2.push(o),
        }
    }
    // Each score takes the OSPA(2) of its setting's (cut-off, order), in the jobs' order:
    // (parameters, tracker, case) as scores are (setting, tracker, case).
    if options.ospa2 {
        let per_setting = dataset.trackers().len() * dataset.cases().len();
        for (index, score) in scores.iter_mut().enumerate() {
            let (setting, within) = (index / per_setting, index % per_setting);
            score.ospa2 = Some(ospa2[ospa2_of_setting[setting] * per_setting + within]);
        }
    }
    Ok(Evaluation {
        settings: options.settings.clone(),
        step_params,
        trackers: dataset.trackers().iter().map(|t| t.name.clone()).collect(),
        cases: dataset.cases().iter().map(|c| c.key.clone()).collect(),
        scores,
        series,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

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
    fn scores_from_elsewhere_are_sorted_with_their_cases() {
        let score = |metric: f64| CaseScore {
            metric,
            total: metric,
            parts: Parts::default(),
            integral: true,
            proven: true,
            steps: 1,
            ospa2: None,
        };
        let settings = vec![TrajectoryParams::new(2.0, 1.0, 2.0).unwrap()];
        // Runs "10" and "9" of one sequence: as integers 9 comes first (the order `Dataset`
        // sorts cases in), and each score follows its case.
        let cases = vec![CaseKey::new("s", "10"), CaseKey::new("s", "9")];
        let scores = vec![score(10.0), score(9.0), score(20.0), score(19.0)];
        let trackers = vec!["a".to_string(), "b".to_string()];
        let evaluation =
            Evaluation::from_scores(settings.clone(), trackers.clone(), cases, scores).unwrap();
        assert_eq!(evaluation.cases()[0], CaseKey::new("s", "9"));
        assert_eq!(evaluation.score(0, 0, 0).metric, 9.0);
        assert_eq!(evaluation.score(0, 1, 1).metric, 20.0);
        assert_eq!(evaluation.sequences(), [("s".to_string(), 0..2)]);
        // The same key twice, a score missing, nothing at all: refused.
        let twice = vec![CaseKey::new("s", "1"), CaseKey::new("s", "1")];
        let four = vec![score(1.0); 4];
        assert!(Evaluation::from_scores(settings.clone(), trackers.clone(), twice, four).is_err());
        let one = vec![CaseKey::new("s", "1")];
        assert!(
            Evaluation::from_scores(settings.clone(), trackers, one, vec![score(1.0)]).is_err()
        );
        assert!(Evaluation::from_scores(settings, Vec::new(), Vec::new(), Vec::new()).is_err());
    }
}
