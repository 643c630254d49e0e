//! Object classes (cars, pedestrians, boats, cells ...): every point carries a class, matching
//! happens only within a class, and the results come per class and for all classes together.
//!
//! A class is attached to each point (each row of a CSV input). A trajectory whose points carry
//! several classes is cut into one piece per class, each keeping the trajectory's id
//! ([`PointClasses::split`]). Each class is then a scene of its own ([`class_scenes`]),
//! evaluated with [`evaluate`]; the results for all classes are the per-class values added up
//! ([`evaluate_by_class`]). That sum is trajectory GOSPA (and per-step GOSPA with alpha = 2) on
//! the pieces with a base distance that is infinite between classes, which is again a metric:
//! `specs/classes.md` gives the argument.

use indexmap::IndexMap;

use crate::assignment::audit::Audit;
use crate::distance::{root, Distance};
use crate::error::{Error, Result};
use crate::evaluate::{evaluate, Evaluation, Request};
use crate::per_step::{GospaParams, OccupiedSteps};
use crate::trajectory::{Trajectory, TrajectorySet, Window};
use crate::trajectory_metric::{
    Assignment, Certificate, ExactSummary, Progress, SolveStats, TrajectoryScore,
};

/// The class of every point of a set: the class names, and for each trajectory the index of
/// its points' classes in step order.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct PointClasses {
    names: Vec<String>,
    points: Vec<Vec<u32>>,
}

impl PointClasses {
    /// Classes from their names and, for each trajectory, the index into `names` of each of
    /// its points' classes, in step order.
    ///
    /// # Errors
    /// An empty or repeated class name, or an index beyond `names`.
    pub fn new(names: Vec<String>, points: Vec<Vec<u32>>) -> Result<Self> {
        let mut seen = std::collections::HashSet::with_capacity(names.len());
        for name in &names {
            if name.is_empty() || !seen.insert(name.as_str()) {
                return Err(Error::Mismatch(format!(
                    "the class name {name:?} is empty or given twice"
                )));
            }
        }
        if let Some(bad) = points
            .iter()
            .flatten()
            .find(|&&k| k as usize >= names.len())
        {
            return Err(Error::Mismatch(format!(
                "a point has class number {bad}, but there are {} classes",
                names.len()
            )));
        }
        Ok(PointClasses { names, points })
    }

    /// The class names, in order of first appearance.
    pub fn names(&self) -> &[String] {
        &self.names
    }

    /// How many trajectories carry points of more than one class (each is cut into pieces by
    /// [`PointClasses::split`]).
    pub fn mixed(&self) -> usize {
        self.points
            .iter()
            .filter(|classes| classes.windows(2).any(|w| w[0] != w[1]))
            .count()
    }

    /// Splits `set` by class: for each class, in byte order of the names, the set of the
    /// pieces of `set` in that class (a trajectory's points of that class, under its id, in
    /// the order of `set`). A class with no point is left out. O(points).
    ///
    /// # Errors
    /// Classes that do not fit the set (another number of trajectories, or of points).
    ///
    /// # Example
    /// ```
    /// use switchyard::classes::PointClasses;
    /// use switchyard::trajectory::{Trajectory, TrajectorySet};
    ///
    /// let track = Trajectory::new("7", 1, vec![(1, vec![0.0]), (2, vec![0.0]), (3, vec![0.0])]);
    /// let set = TrajectorySet::new(1, vec![track.unwrap()]).unwrap();
    /// // Seen as a car at steps 1 and 3, as a van at step 2.
    /// let classes = PointClasses::new(vec!["car".into(), "van".into()], vec![vec![0, 1, 0]]);
    /// let pieces = classes.unwrap().split(&set).unwrap();
    /// assert_eq!(pieces[0].0, "car");
    /// assert_eq!(pieces[0].1.get(0).steps(), &[1, 3]);
    /// assert_eq!((pieces[1].0.as_str(), pieces[1].1.get(0).id()), ("van", "7"));
    /// ```
    pub fn split(&self, set: &TrajectorySet) -> Result<Vec<(String, TrajectorySet)>> {
        if self.points.len() != set.len()
            || self
                .points
                .iter()
                .zip(set.trajectories())
                .any(|(classes, trajectory)| classes.len() != trajectory.len())
        {
            return Err(Error::Mismatch(
                "the classes do not fit the set: another number of trajectories or points".into(),
            ));
        }
        let dim = set.dim();
        let mut order: Vec<usize> = (0..self.names.len()).collect();
        order.sort_by(|&a, &b| self.names[a].cmp(&self.names[b]));
        let mut pieces: Vec<Vec<Trajectory>> = vec![Vec::new(); self.names.len()];
        for (trajectory, classes) in set.trajectories().iter().zip(&self.points) {
            let mut parts: IndexMap<u32, (Vec<i64>, Vec<f64>)> = IndexMap::new();
            for (point, &class) in classes.iter().enumerate() {
                let (steps, states) = parts.entry(class).or_default();
                steps.push(trajectory.steps()[point]);
                states.extend_from_slice(trajectory.state(point));
            }
            for (class, (steps, states)) in parts {
                pieces[class as usize].push(Trajectory::from_checked_parts(
                    trajectory.id().to_string(),
                    dim,
                    steps,
                    states,
                ));
            }
        }
        let mut pieces: Vec<Option<Vec<Trajectory>>> = pieces.into_iter().map(Some).collect();
        order
            .into_iter()
            .filter_map(|class| {
                let trajectories = pieces[class].take().unwrap_or_default();
                (!trajectories.is_empty()).then(|| {
                    TrajectorySet::new(dim, trajectories)
                        .map(|set| (self.names[class].clone(), set))
                })
            })
            .collect()
    }
}

/// One class's scene: the truth's and the estimate's pieces of that class.
#[derive(Clone, Debug)]
pub struct ClassScene {
    /// The class.
    pub class: String,
    /// The truth's pieces of this class (empty when the truth has none).
    pub truth: TrajectorySet,
    /// The estimate's pieces of this class (empty when the estimate has none).
    pub estimate: TrajectorySet,
}

/// The scenes of every class found in either input, in byte order of the class names: a
/// class only one side has gets an empty set on the other (its objects are all missed, or all
/// false).
///
/// # Errors
/// Classes that do not fit their set, or sets of different dimensions.
pub fn class_scenes(
    truth: (&TrajectorySet, &PointClasses),
    estimate: (&TrajectorySet, &PointClasses),
) -> Result<Vec<ClassScene>> {
    if truth.0.dim() != estimate.0.dim() {
        return Err(Error::Mismatch(format!(
            "the truth has states of {} values and the estimate of {}",
            truth.0.dim(),
            estimate.0.dim()
        )));
    }
    let dim = truth.0.dim();
    let mut scenes: std::collections::BTreeMap<String, ClassScene> = Default::default();
    let blank = |class: &str| ClassScene {
        class: class.to_string(),
        truth: TrajectorySet::empty(dim),
        estimate: TrajectorySet::empty(dim),
    };
    for (class, set) in truth.1.split(truth.0)? {
        scenes
            .entry(class.clone())
            .or_insert_with(|| blank(&class))
            .truth = set;
    }
    for (class, set) in estimate.1.split(estimate.0)? {
        scenes
            .entry(class.clone())
            .or_insert_with(|| blank(&class))
            .estimate = set;
    }
    Ok(scenes.into_values().collect())
}

/// One class's scene and what was computed on it.
#[derive(Clone, Debug)]
pub struct ClassEvaluation {
    /// The scene.
    pub scene: ClassScene,
    /// What [`evaluate`] computed on it.
    pub evaluation: Evaluation,
}

/// The results per class and for all classes together.
#[derive(Clone, Debug)]
pub struct ByClass {
    /// Each class, in byte order of the names.
    pub classes: Vec<ClassEvaluation>,
    /// All classes together, each part when asked for: the score ([`sum_scores`]) and the
    /// per-step values ([`sum_steps`]) added up over the classes; the switches and the jumps of
    /// every class in time order; the audits combined ([`Audit::combine`]), each share taken of
    /// the sum. Each event and audited object here names its class (`class`); in the classes'
    /// own evaluations it does not (they are as without classes).
    pub overall: Evaluation,
}

/// Evaluates each class's scene with [`evaluate`] as `request` asks, and adds the classes up.
/// A cross-class pair is never assigned.
///
/// # Errors
/// As [`class_scenes`] and [`evaluate`]; [`Error::Parameter`] for per-step GOSPA with alpha
/// other than 2 (its values do not add up over classes) and for OSPA(2) (a normalised
/// distance, not a sum).
pub fn evaluate_by_class(
    truth: (&TrajectorySet, &PointClasses),
    estimate: (&TrajectorySet, &PointClasses),
    distance: &Distance,
    request: &Request,
    progress: &(dyn Fn(Progress) + Sync),
) -> Result<ByClass> {
    if request.steps.is_some_and(|params| params.alpha != 2.0) {
        return Err(Error::Parameter(
            "with classes, per-step GOSPA needs alpha = 2: with another alpha a pair of \
             different classes would cost less matched than unmatched, and the classes would \
             not add up"
                .into(),
        ));
    }
    if request.ospa2.is_some() {
        return Err(Error::Parameter(
            "OSPA(2) is not given per class: it is normalised, so classes do not add up".into(),
        ));
    }
    // The whole window, held to the limit a scene without classes has.
    let window = crate::trajectory::evaluation_window(truth.0, estimate.0)?;
    let scenes = class_scenes(truth, estimate)?;
    let mut classes = Vec::with_capacity(scenes.len());
    for scene in scenes {
        let evaluation = evaluate(
            &scene.truth,
            &[&scene.estimate],
            distance,
            request,
            progress,
        )?
        .pop()
        .ok_or_else(|| Error::Parameter("no evaluation came back".into()))?;
        classes.push(ClassEvaluation { scene, evaluation });
    }
    let mut overall = Evaluation {
        score: match &request.trajectory {
            Some(_) => {
                let scores: Vec<&TrajectoryScore> = classes
                    .iter()
                    .filter_map(|c| c.evaluation.score.as_ref())
                    .collect();
                Some(sum_scores(&scores, window, request)?)
            }
            None => None,
        },
        steps: match &request.steps {
            Some(params) => {
                let steps: Vec<&OccupiedSteps> = classes
                    .iter()
                    .filter_map(|c| c.evaluation.steps.as_ref())
                    .collect();
                Some(sum_steps(&steps, window, params)?)
            }
            None => None,
        },
        switches: request.switches.then(|| {
            in_time_order(
                &classes,
                |c| c.evaluation.switches.as_deref(),
                |e| e.time,
                |e, class| e.class = Some(class.to_string()),
            )
        }),
        jumps: request.jumps.then(|| {
            in_time_order(
                &classes,
                |c| c.evaluation.jumps.as_deref(),
                |e| e.time,
                |e, class| e.class = Some(class.to_string()),
            )
        }),
        ..Evaluation::default()
    };
    if request.audit {
        let total = overall.score.as_ref().map_or(0.0, |s| s.total);
        let audits = classes
            .iter()
            .filter_map(|c| Some((c.scene.class.clone(), c.evaluation.audit.clone()?)))
            .collect();
        overall.audit = Some(Audit::combine(audits, total));
    }
    Ok(ByClass { classes, overall })
}

/// The events of every class in one list (`events` gives a class's), each tagged with its
/// class by `tag`, in time order (at one step, in class order).
fn in_time_order<T: Clone>(
    classes: &[ClassEvaluation],
    events: fn(&ClassEvaluation) -> Option<&[T]>,
    time: fn(&T) -> crate::trajectory::Step,
    tag: fn(&mut T, &str),
) -> Vec<T> {
    let mut all = Vec::new();
    for class in classes {
        for event in events(class).unwrap_or_default() {
            let mut event = event.clone();
            tag(&mut event, &class.scene.class);
            all.push(event);
        }
    }
    // A stable sort keeps the class order within a step.
    all.sort_by_key(time);
    all
}

/// Trajectory GOSPA over several classes from the classes' scores, all with the same
/// parameters: d^p, its parts, the counts, the LP values and the bounds are sums, d is
/// (sum of d^p)^(1/p), the per-step value is normalised by the steps of `window` (the window
/// of all classes together). The sum is proven (integral) when every class's score is; the
/// LP sizes add up. The sum carries no assignment (each class's score has its own).
///
/// # Errors
/// [`Error::Parameter`] for a request without trajectory parameters.
pub fn sum_scores(
    scores: &[&TrajectoryScore],
    window: Option<Window>,
    request: &Request,
) -> Result<TrajectoryScore> {
    let Some(params) = request.trajectory else {
        return Err(Error::Parameter(
            "adding classes up needs the trajectory parameters".into(),
        ));
    };
    let steps = window.map_or(0, |w| w.len());
    let add = |f: fn(&TrajectoryScore) -> f64| scores.iter().fold(0.0, |sum, s| sum + f(s));
    let total = add(|s| s.total);
    let mut parts = crate::trajectory_metric::Parts::default();
    let mut stats = SolveStats::default();
    let mut certificate = Certificate {
        proven: true,
        ..Certificate::default()
    };
    for score in scores {
        parts += score.parts;
        let s = &score.stats;
        stats.add_solve(s);
        stats.candidate_pairs += s.candidate_pairs;
        stats.components += s.components;
        stats.largest_variables = stats.largest_variables.max(s.largest_variables);
        stats.pairs_seconds += s.pairs_seconds;
        let c = &score.certificate;
        certificate.proven &= c.proven;
        certificate.lower += c.lower;
        certificate.upper += c.upper;
        certificate.closed_form += c.closed_form;
        certificate.lagrangian += c.lagrangian;
        certificate.simplex += c.simplex;
        certificate.bounded += c.bounded;
        certificate.iterations = certificate.iterations.max(c.iterations);
    }
    certificate.gap = Certificate::relative_gap(certificate.lower, certificate.upper);
    let exact = match request.solve.exact {
        Some(budget) => {
            let mut sum = ExactSummary {
                proven: true,
                lower: 0.0,
                upper: 0.0,
                components: 0,
                unproven_components: 0,
                nodes: 0,
                budget,
            };
            for e in scores.iter().filter_map(|s| s.exact.as_ref()) {
                sum.proven &= e.proven;
                sum.lower += e.lower;
                sum.upper += e.upper;
                sum.components += e.components;
                sum.unproven_components += e.unproven_components;
                sum.nodes += e.nodes;
            }
            Some(sum)
        }
        None => None,
    };
    let exact_total = match &exact {
        Some(e) if e.proven && scores.iter().all(|s| s.exact_total.is_some()) => Some(total),
        _ => None,
    };
    let normalised = if steps == 0 {
        0.0
    } else {
        total / steps as f64
    };
    Ok(TrajectoryScore {
        params,
        window,
        steps,
        metric: root(total, params.order),
        total,
        per_step: root(normalised, params.order),
        parts,
        integral: scores.iter().all(|s| s.integral),
        lp_objective: add(|s| s.lp_objective),
        lp_total: add(|s| s.lp_total),
        exact_total,
        exact,
        stats,
        certificate,
        notes: scores.iter().flat_map(|s| s.notes.clone()).collect(),
        assignment: Assignment {
            window,
            pairs: Vec::new(),
        },
    })
}

/// Per-step GOSPA (alpha = 2) over several classes from the classes' series: at each step the
/// GOSPA^p values, the parts and the counts add up, and GOSPA is the p-th root of the sum; the
/// totals are over the steps of `window` (the window of all classes together).
///
/// # Errors
/// [`Error::Parameter`] for alpha other than 2, or sums that overflow.
pub fn sum_steps(
    series: &[&OccupiedSteps],
    window: Option<Window>,
    params: &GospaParams,
) -> Result<OccupiedSteps> {
    if params.alpha != 2.0 {
        return Err(Error::Parameter(
            "per-step GOSPA adds up over classes only with alpha = 2".into(),
        ));
    }
    OccupiedSteps::sum(series, window, params)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn set(ids: &[(&str, &[i64])]) -> TrajectorySet {
        let trajectories = ids
            .iter()
            .map(|(id, steps)| {
                Trajectory::new(*id, 1, steps.iter().map(|&k| (k, vec![k as f64])).collect())
                    .unwrap()
            })
            .collect();
        TrajectorySet::new(1, trajectories).unwrap()
    }

    #[test]
    fn pieces_keep_the_id_the_steps_and_the_states_of_their_class() {
        let set = set(&[("a", &[1, 2, 3, 4]), ("b", &[2])]);
        let classes = PointClasses::new(
            vec!["van".into(), "car".into()],
            vec![vec![1, 0, 0, 1], vec![1]],
        )
        .unwrap();
        assert_eq!(classes.mixed(), 1);
        let pieces = classes.split(&set).unwrap();
        // Classes in byte order of their names, whatever their order of appearance.
        let names: Vec<&str> = pieces.iter().map(|(name, _)| name.as_str()).collect();
        assert_eq!(names, ["car", "van"]);
        let car = &pieces[0].1;
        assert_eq!((car.len(), car.get(0).id()), (2, "a"));
        assert_eq!(car.get(0).steps(), &[1, 4]);
        assert_eq!(car.get(0).state_at(4), Some(&[4.0][..]));
        assert_eq!(car.get(1).id(), "b");
        assert_eq!(pieces[1].1.get(0).steps(), &[2, 3]);
    }

    #[test]
    fn classes_that_do_not_fit_are_refused() {
        assert!(PointClasses::new(vec!["car".into(), "car".into()], vec![]).is_err());
        assert!(PointClasses::new(vec!["".into()], vec![]).is_err());
        assert!(PointClasses::new(vec!["car".into()], vec![vec![1]]).is_err());
        let classes = PointClasses::new(vec!["car".into()], vec![vec![0, 0]]).unwrap();
        assert!(classes.split(&set(&[("a", &[1])])).is_err());
    }
}
