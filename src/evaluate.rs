//! The one entry point of an evaluation: a ground truth, one or more estimates, the parameters,
//! and what the caller wants back ([`Request`]); each thing is computed once and only when
//! asked for (or needed by something asked for), and comes back in an [`Evaluation`].
//!
//! The command line, the HTML report and the Python package all call [`evaluate`]; what they
//! do with the results (text, CSV, JSON, a page) is the business of [`report`](crate::report).

use crate::assignment::audit::{audit, Audit};
use crate::assignment::switches::{jump_events, switch_events, JumpEvent, SwitchEvent};
use crate::distance::Distance;
use crate::error::{Error, Result};
use crate::ospa2::{Ospa2, Ospa2Params, Ospa2Score, Ospa2Window};
use crate::per_step::{occupied_steps, GospaParams, OccupiedSteps};
use crate::trajectory::TrajectorySet;
use crate::trajectory_metric::{
    score_with_progress, Progress, SolveOptions, TrajectoryParams, TrajectoryScore,
};

/// What to compute for each estimate, and with which parameters.
#[derive(Clone, Debug, Default)]
pub struct Request {
    /// Trajectory GOSPA with these parameters: the score, its parts and the LP's assignment.
    /// The switch events, the jumps and the audit are read from that assignment, so they need
    /// it.
    pub trajectory: Option<TrajectoryParams>,
    /// How the trajectory LP is solved: the engine, `--exact` and its budget, the memory budget.
    pub solve: SolveOptions,
    /// Per-step GOSPA with these parameters, at the steps where an object is present.
    pub steps: Option<GospaParams>,
    /// Every identity switch, seen from the truths.
    pub switches: bool,
    /// Every jump of a track from one truth to another, seen from the estimates.
    pub jumps: bool,
    /// How each truth was covered over time, worst first, and what each track followed.
    pub audit: bool,
    /// OSPA(2) with these parameters, over the whole window.
    pub ospa2: Option<Ospa2Params>,
    /// OSPA(2) over a sliding window of this many steps, with the parameters of `ospa2`
    /// (needs them).
    pub ospa2_window: Option<usize>,
}

impl Request {
    /// Trajectory GOSPA only, solved as `solve` says.
    pub fn trajectory(params: TrajectoryParams, solve: SolveOptions) -> Self {
        Request {
            trajectory: Some(params),
            solve,
            ..Request::default()
        }
    }

    /// Per-step GOSPA only.
    pub fn steps(params: GospaParams) -> Self {
        Request {
            steps: Some(params),
            ..Request::default()
        }
    }

    /// Everything: trajectory GOSPA, per-step GOSPA with alpha = 2 and the same cut-off and
    /// order, the switch events, the jumps and the audit.
    ///
    /// # Errors
    /// As [`GospaParams::new`] (not with parameters [`TrajectoryParams::new`] accepted).
    pub fn everything(params: TrajectoryParams, solve: SolveOptions) -> Result<Self> {
        Ok(Request {
            steps: Some(GospaParams::beside(&params)?),
            switches: true,
            jumps: true,
            audit: true,
            ..Request::trajectory(params, solve)
        })
    }
}

/// What was computed for one estimate: each field is `Some` exactly when the [`Request`]
/// asked for it.
#[derive(Clone, Debug, Default)]
pub struct Evaluation {
    /// Trajectory GOSPA with its parts, its proof and the LP's assignment.
    pub score: Option<TrajectoryScore>,
    /// Per-step GOSPA with its parts, at the occupied steps.
    pub steps: Option<OccupiedSteps>,
    /// The switches seen from the truths, in time order.
    pub switches: Option<Vec<SwitchEvent>>,
    /// The jumps seen from the estimates, in time order.
    pub jumps: Option<Vec<JumpEvent>>,
    /// How each truth was covered, worst first.
    pub audit: Option<Audit>,
    /// OSPA(2) over the whole window, with its pairs.
    pub ospa2: Option<Ospa2Score>,
    /// OSPA(2) over the sliding window ending at each step whose window holds a state, in time
    /// order ([`Ospa2::sliding_windows`]).
    pub ospa2_sliding: Option<Vec<Ospa2Window>>,
}

/// Evaluates each of `estimates` against `truth` with the base distance `distance`, computing
/// what `request` asks for; `progress` hears how each trajectory LP solve goes (`&|_| {}` to
/// ignore it). The results come in the order of `estimates`.
///
/// Per estimate: the trajectory LP is solved once (when the score, the switches, the jumps or
/// the audit are asked for), per-step GOSPA is computed once, and the audit reuses the switch
/// events. The inputs are taken as they are: checking that they can be compared (same state
/// dimension, the distance's rules on the states and the cut-off) is the reader's work
/// ([`TrajectoryFile::check_comparable`](crate::input::TrajectoryFile::check_comparable),
/// [`Distance::validate`]).
///
/// # Errors
/// [`Error::Parameter`] when the switches, the jumps or the audit are asked for without
/// trajectory parameters; otherwise as [`score_with_progress`] and [`occupied_steps`]: sets of
/// different dimensions, a window too long, a scene over the memory budget, an LP engine
/// failure. The first estimate that fails stops the evaluation.
///
/// # Example
/// ```
/// use switchyard::distance::Distance;
/// use switchyard::evaluate::{evaluate, Request};
/// use switchyard::trajectory::{Trajectory, TrajectorySet};
/// use switchyard::trajectory_metric::{SolveOptions, TrajectoryParams};
///
/// let path = |id: &str, points: &[(i64, f64)]| {
///     let points = points.iter().map(|&(t, x)| (t, vec![x])).collect();
///     Trajectory::new(id, 1, points).unwrap()
/// };
/// let truth = TrajectorySet::new(1, vec![path("a", &[(1, 0.0), (2, 0.0), (3, 0.0)])]).unwrap();
/// // The object is followed by track p, then by track q: one identity switch at step 3.
/// let estimate = TrajectorySet::new(1, vec![
///     path("p", &[(1, 0.0), (2, 0.0)]),
///     path("q", &[(3, 0.0)]),
/// ]).unwrap();
/// let params = TrajectoryParams::new(2.0, 1.0, 1.0).unwrap();
/// let request = Request::everything(params, SolveOptions::default()).unwrap();
/// let results = evaluate(&truth, &[&estimate], &Distance::default(), &request, &|_| {}).unwrap();
/// let result = &results[0];
/// // Trajectory GOSPA by hand (c = 2, p = 1, gamma = 1): following p then q costs one full
/// // switch, gamma^p = 1; staying with p, absent at step 3, would cost c^p / 2 for the missed
/// // object and c^p / 2 for the false track q, 2 in all.
/// let score = result.score.as_ref().unwrap();
/// assert!((score.total - 1.0).abs() < 1e-9);
/// let switches = result.switches.as_ref().unwrap();
/// assert_eq!(switches.len(), 1);
/// assert_eq!((switches[0].time, switches[0].to.as_deref()), (3, Some("q")));
/// // Per-step GOSPA: every step is matched exactly.
/// assert!(result.steps.as_ref().unwrap().steps().all(|s| s.gospa.abs() < 1e-12));
/// ```
pub fn evaluate(
    truth: &TrajectorySet,
    estimates: &[&TrajectorySet],
    distance: &Distance,
    request: &Request,
    progress: &(dyn Fn(Progress) + Sync),
) -> Result<Vec<Evaluation>> {
    let trajectory = request.trajectory.as_ref();
    if trajectory.is_none() && (request.switches || request.jumps || request.audit) {
        return Err(Error::Parameter(
            "the switches, the jumps and the audit are read from trajectory GOSPA: give its \
             parameters"
                .into(),
        ));
    }
    if request.ospa2.is_none() && request.ospa2_window.is_some() {
        return Err(Error::Parameter(
            "the sliding OSPA(2) needs the OSPA(2) parameters".into(),
        ));
    }
    estimates
        .iter()
        .map(|estimate| evaluate_one(truth, estimate, distance, request, trajectory, progress))
        .collect()
}

/// [`evaluate`] for one estimate, with the trajectory parameters checked.
fn evaluate_one(
    truth: &TrajectorySet,
    estimate: &TrajectorySet,
    distance: &Distance,
    request: &Request,
    trajectory: Option<&TrajectoryParams>,
    progress: &(dyn Fn(Progress) + Sync),
) -> Result<Evaluation> {
    let score = match trajectory {
        Some(params) => Some(score_with_progress(
            truth,
            estimate,
            params,
            distance,
            &request.solve,
            progress,
        )?),
        None => None,
    };
    let steps = match &request.steps {
        Some(params) => Some(occupied_steps(truth, estimate, params, distance)?),
        None => None,
    };
    let (mut switches, mut jumps, mut coverage) = (None, None, None);
    if let Some(score) = &score {
        let (assignment, params) = (&score.assignment, &score.params);
        if request.switches || request.audit {
            switches = Some(switch_events(assignment, truth, estimate, params));
        }
        if request.jumps {
            jumps = Some(jump_events(assignment, truth, estimate, params));
        }
        if request.audit {
            let events = switches.as_deref().unwrap_or_default();
            coverage = Some(audit(score, truth, estimate, events));
        }
        if !request.switches {
            switches = None;
        }
    }
    let (mut ospa2, mut ospa2_sliding) = (None, None);
    if let Some(params) = request.ospa2 {
        let metric = Ospa2::new(truth, estimate, params, distance)?;
        ospa2 = Some(metric.whole());
        if let Some(width) = request.ospa2_window {
            ospa2_sliding = Some(metric.sliding_windows(width));
        }
    }
    Ok(Evaluation {
        score,
        steps,
        switches,
        jumps,
        audit: coverage,
        ospa2,
        ospa2_sliding,
    })
}
