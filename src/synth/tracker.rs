//! The imitated tracker: a truth set turned into tracks with known faults (see
//! [`imitate_tracker`]).

use rand::RngExt;
use rand_distr::{Distribution, Exp1, StandardNormal};

use super::random::{
    draw_count, lifetime_steps, poisson, random_direction_in, step_forward, stream, STREAM_CLUTTER,
    STREAM_FRAGMENT, STREAM_MISS, STREAM_NOISE, STREAM_SWAP,
};
use super::values::{check_decimals, check_range, round, rounding_scale, MAX_RATE};
use crate::error::Result;
use crate::trajectory::{evaluation_window, Frames, Step, Trajectory, TrajectorySet};

/// How the imaginary tracker fails. Each fault is set on its own; zero turns it off.
#[derive(Clone, Debug, PartialEq)]
pub struct TrackerConfig {
    /// The standard deviation of the Gaussian error added to each coordinate.
    pub position_noise: f64,
    /// The probability that a track reports nothing at one step of its object (a gap).
    pub miss_probability: f64,
    /// The mean number of false tracks that start at each step (Poisson).
    pub clutter_rate: f64,
    /// The mean lifetime of a false track, in steps (exponential, at least one step).
    pub clutter_mean_lifetime: f64,
    /// False tracks start with a speed drawn uniformly between 0 and this, per step.
    pub clutter_speed: f64,
    /// The standard deviation of a false track's random acceleration on each axis.
    pub clutter_acceleration_std: f64,
    /// Two tracked objects this close or closer have come close (a close pass starts when they
    /// come this close after having been farther apart).
    pub swap_distance: f64,
    /// The probability that, at the start of a close pass, the two tracks exchange the objects
    /// they follow from then on.
    pub swap_probability: f64,
    /// The probability, at each step of an object after its first tracked one, that its track
    /// ends and continues under a new id.
    pub fragment_probability: f64,
    /// The number of steps an object is present before it gets a track.
    pub birth_delay: u32,
    /// Positions are rounded to this many decimals (`None`: not rounded; at most 9).
    pub decimals: Option<u32>,
}

impl TrackerConfig {
    /// A tracker without faults: its tracks are the truths, under other ids.
    pub fn perfect() -> Self {
        TrackerConfig {
            position_noise: 0.0,
            miss_probability: 0.0,
            clutter_rate: 0.0,
            clutter_mean_lifetime: 1.0,
            clutter_speed: 0.0,
            clutter_acceleration_std: 0.0,
            swap_distance: 0.0,
            swap_probability: 0.0,
            fragment_probability: 0.0,
            birth_delay: 0,
            decimals: None,
        }
    }

    /// Checks every field.
    ///
    /// # Errors
    /// [`Error::Parameter`](crate::Error::Parameter) naming the first field out of range.
    pub fn validate(&self) -> Result<()> {
        check_range("position noise", self.position_noise, 0.0, f64::MAX)?;
        check_range("miss probability", self.miss_probability, 0.0, 1.0)?;
        check_range("clutter rate", self.clutter_rate, 0.0, MAX_RATE)?;
        check_range(
            "clutter mean lifetime",
            self.clutter_mean_lifetime,
            1e-9,
            1e9,
        )?;
        check_range("clutter speed", self.clutter_speed, 0.0, f64::MAX)?;
        check_range(
            "clutter acceleration deviation",
            self.clutter_acceleration_std,
            0.0,
            f64::MAX,
        )?;
        check_range("swap distance", self.swap_distance, 0.0, f64::MAX)?;
        check_range("swap probability", self.swap_probability, 0.0, 1.0)?;
        check_range("fragment probability", self.fragment_probability, 0.0, 1.0)?;
        check_decimals(self.decimals)
    }
}

/// One track of the tracker's output in the making: its points so far.
struct Track {
    steps: Vec<Step>,
    states: Vec<f64>,
}

/// Starts a track with no points; returns its index.
fn new_track(tracks: &mut Vec<Track>) -> usize {
    tracks.push(Track {
        steps: Vec::new(),
        states: Vec::new(),
    });
    tracks.len() - 1
}

/// A false track while it lives.
struct Clutter {
    position: Vec<f64>,
    velocity: Vec<f64>,
    remaining: u64,
    track: usize,
}

/// Imitates a tracker on `truth`: returns tracks `E1`, `E2`, ... in order of first appearance,
/// with the faults of `config`, over the steps the truth spans. Works for any state dimension.
/// O(object steps + the sum over steps of (objects present)^2) when swaps are on, O(object
/// steps) otherwise.
///
/// Each object present is followed by one track from `birth_delay` steps after it appears;
/// at each later step its track may end and continue under a new id (fragmentation). When two
/// followed objects come within `swap_distance` after having been farther apart, their tracks
/// exchange the objects they follow with `swap_probability`. A track reports its object's
/// state plus Gaussian noise, or nothing with `miss_probability`. False tracks start uniformly
/// in the box that bounds the truth, move at a constant velocity disturbed by a random
/// acceleration, and live an exponential number of steps.
///
/// # Errors
/// [`Error::Parameter`](crate::Error::Parameter) when a field of `config` is out of range;
/// [`Error::Mismatch`](crate::Error::Mismatch) when the truth spans more than
/// [`MAX_WINDOW_STEPS`](crate::trajectory::MAX_WINDOW_STEPS) steps.
pub fn imitate_tracker(
    truth: &TrajectorySet,
    config: &TrackerConfig,
    seed: u64,
) -> Result<TrajectorySet> {
    config.validate()?;
    let dim = truth.dim();
    let Some(window) = evaluation_window(truth, truth)? else {
        return Ok(TrajectorySet::empty(dim));
    };
    let frames = Frames::new(truth, window);
    let scale = rounding_scale(config.decimals);
    let clutter_births = poisson(config.clutter_rate)?;
    let (lower, upper) = bounding_box(truth);
    let mut noise_rng = stream(seed, STREAM_NOISE);
    let mut miss_rng = stream(seed, STREAM_MISS);
    let mut clutter_rng = stream(seed, STREAM_CLUTTER);
    let mut swap_rng = stream(seed, STREAM_SWAP);
    let mut fragment_rng = stream(seed, STREAM_FRAGMENT);

    let mut tracks: Vec<Track> = Vec::new();
    let mut following: Vec<Option<usize>> = vec![None; truth.len()];
    let delay = Step::from(config.birth_delay);
    let swap_distance_squared = config.swap_distance * config.swap_distance;
    let mut covered: Vec<(usize, &[f64])> = Vec::new();
    let mut close_before: Vec<(usize, usize)> = Vec::new();
    let mut close_now: Vec<(usize, usize)> = Vec::new();
    let mut clutter: Vec<Clutter> = Vec::new();
    let mut noisy = vec![0.0; dim];

    for index in 0..window.len() {
        let step = window.first + index as Step;
        covered.clear();
        for presence in frames.at(index) {
            let object = presence.object as usize;
            let trajectory = truth.get(object);
            if step - trajectory.steps()[0] >= delay {
                covered.push((object, trajectory.state(presence.point as usize)));
            }
        }

        for &(object, _) in &covered {
            let fragment = match following[object] {
                None => true,
                Some(_) => fragment_rng.random::<f64>() < config.fragment_probability,
            };
            if fragment {
                following[object] = Some(new_track(&mut tracks));
            }
        }

        if config.swap_probability > 0.0 {
            close_now.clear();
            for (a, &(first, first_state)) in covered.iter().enumerate() {
                for &(second, second_state) in &covered[a + 1..] {
                    if squared_distance(first_state, second_state) <= swap_distance_squared {
                        close_now.push((first, second));
                    }
                }
            }
            // Pairs come out sorted, as `covered` is by increasing object index.
            for &(first, second) in &close_now {
                let starts = close_before.binary_search(&(first, second)).is_err();
                if starts && swap_rng.random::<f64>() < config.swap_probability {
                    following.swap(first, second);
                }
            }
            std::mem::swap(&mut close_before, &mut close_now);
        }

        for &(object, state) in &covered {
            let missed = miss_rng.random::<f64>() < config.miss_probability;
            for (out, &value) in noisy.iter_mut().zip(state) {
                let error: f64 = noise_rng.sample(StandardNormal);
                *out = round(value + config.position_noise * error, scale);
            }
            if !missed {
                let track = &mut tracks[following[object].expect("a covered object is followed")];
                track.steps.push(step);
                track.states.extend_from_slice(&noisy);
            }
        }

        for _ in 0..draw_count(&clutter_births, &mut clutter_rng) {
            let position = lower
                .iter()
                .zip(&upper)
                .map(|(&low, &high)| low + (high - low) * clutter_rng.random::<f64>())
                .collect();
            let speed = config.clutter_speed * clutter_rng.random::<f64>();
            let velocity = random_direction_in(dim, &mut clutter_rng)
                .into_iter()
                .map(|component| speed * component)
                .collect();
            let lifetime: f64 = Exp1.sample(&mut clutter_rng);
            clutter.push(Clutter {
                position,
                velocity,
                remaining: lifetime_steps(lifetime * config.clutter_mean_lifetime),
                track: new_track(&mut tracks),
            });
        }
        clutter.retain_mut(|false_track| {
            let track = &mut tracks[false_track.track];
            track.steps.push(step);
            track.states.extend(
                false_track
                    .position
                    .iter()
                    .map(|&value| round(value, scale)),
            );
            false_track.remaining -= 1;
            if false_track.remaining == 0 {
                return false;
            }
            step_forward(
                &mut false_track.position,
                &mut false_track.velocity,
                config.clutter_acceleration_std,
                &mut clutter_rng,
            );
            true
        });
    }

    // Tracks are created in step order, so a stable sort by first step keeps creation order
    // among tracks that appear at one step.
    let mut tracks: Vec<Track> = tracks.into_iter().filter(|t| !t.steps.is_empty()).collect();
    tracks.sort_by_key(|track| track.steps[0]);
    let trajectories = tracks
        .into_iter()
        .enumerate()
        .map(|(index, track)| {
            Trajectory::from_checked_parts(
                format!("E{}", index + 1),
                dim,
                track.steps,
                track.states,
            )
        })
        .collect();
    TrajectorySet::new(dim, trajectories)
}

/// The least and greatest value of each coordinate over all points of `set` (zeros when empty).
fn bounding_box(set: &TrajectorySet) -> (Vec<f64>, Vec<f64>) {
    let dim = set.dim();
    let mut lower = vec![f64::INFINITY; dim];
    let mut upper = vec![f64::NEG_INFINITY; dim];
    for trajectory in set.trajectories() {
        for (_, state) in trajectory.points() {
            for (axis, &value) in state.iter().enumerate() {
                lower[axis] = lower[axis].min(value);
                upper[axis] = upper[axis].max(value);
            }
        }
    }
    for axis in 0..dim {
        if lower[axis] > upper[axis] {
            lower[axis] = 0.0;
            upper[axis] = 0.0;
        }
    }
    (lower, upper)
}

fn squared_distance(a: &[f64], b: &[f64]) -> f64 {
    a.iter().zip(b).map(|(x, y)| (x - y) * (x - y)).sum()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::error::Error;
    use crate::synth::{generate_truth, SceneConfig, ScenePreset, TrackerStyle};

    type Points = Vec<(Step, Vec<f64>)>;

    fn points(trajectory: &Trajectory) -> Points {
        trajectory
            .points()
            .map(|(step, state)| (step, state.to_vec()))
            .collect()
    }

    fn all_points(set: &TrajectorySet) -> Vec<Points> {
        set.trajectories().iter().map(points).collect()
    }

    fn medium_truth() -> TrajectorySet {
        generate_truth(&SceneConfig::preset(ScenePreset::Medium), 3).unwrap()
    }

    /// Two objects crossing in an X: `T1` along (k, k) and `T2` along (k, 20 - k) for steps
    /// 0 to 20. They are |2k - 20| apart, within 2 at steps 9, 10 and 11 only.
    fn crossing() -> TrajectorySet {
        let line = |id: &str, y: fn(f64) -> f64| {
            let points = (0..=20)
                .map(|k| (k as Step, vec![k as f64, y(k as f64)]))
                .collect();
            Trajectory::new(id, 2, points).unwrap()
        };
        TrajectorySet::new(2, vec![line("T1", |x| x), line("T2", |x| 20.0 - x)]).unwrap()
    }

    #[test]
    fn perfect_tracker_reproduces_the_truth_under_other_ids() {
        let truth = medium_truth();
        let estimate = imitate_tracker(&truth, &TrackerConfig::perfect(), 1).unwrap();
        assert_eq!(estimate.len(), truth.len());
        // Tracks start in the truths' order, so E(k) follows T(k).
        for (index, (track, object)) in estimate
            .trajectories()
            .iter()
            .zip(truth.trajectories())
            .enumerate()
        {
            assert_eq!(track.id(), format!("E{}", index + 1));
            assert_eq!(points(track), points(object));
        }
    }

    #[test]
    fn missed_detections_leave_gaps_at_their_rate() {
        let truth = medium_truth();
        let config = TrackerConfig {
            miss_probability: 0.1,
            ..TrackerConfig::perfect()
        };
        let estimate = imitate_tracker(&truth, &config, 1).unwrap();
        // About 7,500 object steps: the kept fraction has a standard deviation of
        // sqrt(0.09 / 7500) = 0.0035; allow 0.02.
        let kept = estimate.object_steps() as f64 / truth.object_steps() as f64;
        assert!((kept - 0.9).abs() < 0.02, "{kept}");
        // Every reported point is a truth's point, and some tracks have gaps.
        let truth_points: std::collections::HashSet<String> = all_points(&truth)
            .iter()
            .flatten()
            .map(|p| format!("{p:?}"))
            .collect();
        let mut gaps = 0;
        for track in estimate.trajectories() {
            assert!(points(track)
                .iter()
                .all(|p| truth_points.contains(&format!("{p:?}"))));
            let (first, last) = track.span().unwrap();
            gaps += (last - first + 1) as usize - track.len();
        }
        assert!(gaps > 0);
    }

    #[test]
    fn position_noise_has_its_standard_deviation() {
        let truth = medium_truth();
        let config = TrackerConfig {
            position_noise: 2.0,
            ..TrackerConfig::perfect()
        };
        let estimate = imitate_tracker(&truth, &config, 1).unwrap();
        let mut errors = Vec::new();
        for (track, object) in estimate.trajectories().iter().zip(truth.trajectories()) {
            assert_eq!(track.steps(), object.steps());
            for index in 0..track.len() {
                for (a, b) in track.state(index).iter().zip(object.state(index)) {
                    errors.push(a - b);
                }
            }
        }
        // About 15,000 errors: the sample mean's standard deviation is 2 / sqrt(15000) = 0.016
        // and the sample deviation's 2 / sqrt(30000) = 0.012; allow 0.08 and 0.06 (5 sigma).
        let n = errors.len() as f64;
        let mean = errors.iter().sum::<f64>() / n;
        let deviation = (errors.iter().map(|e| (e - mean) * (e - mean)).sum::<f64>() / n).sqrt();
        assert!(mean.abs() < 0.08, "{mean}");
        assert!((deviation - 2.0).abs() < 0.06, "{deviation}");
    }

    #[test]
    fn clutter_adds_false_tracks_and_leaves_the_others_alone() {
        let truth = medium_truth();
        let clean = imitate_tracker(&truth, &TrackerConfig::perfect(), 1).unwrap();
        let config = TrackerConfig {
            clutter_rate: 0.5,
            clutter_mean_lifetime: 5.0,
            clutter_speed: 2.0,
            ..TrackerConfig::perfect()
        };
        let cluttered = imitate_tracker(&truth, &config, 1).unwrap();
        // 500 steps at 0.5 a step: 250 false tracks, Poisson with deviation 15.8; allow 50.
        let extra = cluttered.len() as f64 - clean.len() as f64;
        assert!((extra - 250.0).abs() < 50.0, "{extra}");
        // The tracks that follow truths are the same points as without clutter.
        let mut with: Vec<Points> = all_points(&cluttered);
        let without = all_points(&clean);
        with.retain(|track| without.contains(track));
        assert_eq!(with.len(), without.len());
        // False tracks start inside the box that bounds the truth.
        let (lower, upper) = bounding_box(&truth);
        for track in cluttered.trajectories() {
            let start = track.state(0);
            for axis in 0..2 {
                assert!(start[axis] >= lower[axis] - 1e-9 && start[axis] <= upper[axis] + 1e-9);
            }
        }
    }

    #[test]
    fn fragmentation_starts_new_ids_at_its_rate() {
        let truth = medium_truth();
        let always = TrackerConfig {
            fragment_probability: 1.0,
            ..TrackerConfig::perfect()
        };
        let estimate = imitate_tracker(&truth, &always, 1).unwrap();
        // Every step of every object starts a new track: one track per object step.
        assert_eq!(estimate.len(), truth.object_steps());
        assert!(estimate.trajectories().iter().all(|t| t.len() == 1));

        let some = TrackerConfig {
            fragment_probability: 0.02,
            ..TrackerConfig::perfect()
        };
        let estimate = imitate_tracker(&truth, &some, 1).unwrap();
        // Each object step after an object's first can break its track: expect 2% of them, a
        // binomial count of about 150 with deviation 12; allow 40.
        let chances = (truth.object_steps() - truth.len()) as f64;
        let breaks = (estimate.len() - truth.len()) as f64;
        assert!(
            (breaks - 0.02 * chances).abs() < 40.0,
            "{breaks} of {chances}"
        );
        assert_eq!(estimate.object_steps(), truth.object_steps());
    }

    #[test]
    fn birth_delay_hides_the_first_steps_of_each_object() {
        let truth = medium_truth();
        let config = TrackerConfig {
            birth_delay: 3,
            ..TrackerConfig::perfect()
        };
        let estimate = imitate_tracker(&truth, &config, 1).unwrap();
        let expected: Vec<Points> = all_points(&truth)
            .into_iter()
            .map(|mut p| p.split_off(p.len().min(3)))
            .filter(|p| !p.is_empty())
            .collect();
        let mut got = all_points(&estimate);
        let mut expected = expected;
        got.sort_by(|a, b| a.partial_cmp(b).unwrap());
        expected.sort_by(|a, b| a.partial_cmp(b).unwrap());
        assert_eq!(got, expected);
    }

    #[test]
    fn tracks_swap_once_where_two_objects_cross() {
        let truth = crossing();
        let config = TrackerConfig {
            swap_distance: 2.0,
            swap_probability: 1.0,
            ..TrackerConfig::perfect()
        };
        let estimate = imitate_tracker(&truth, &config, 1).unwrap();
        assert_eq!(estimate.len(), 2);
        // E1 follows T1 until the pass starts at step 9, then T2 to the end; the objects stay
        // close at steps 10 and 11 without a second swap.
        let e1 = estimate.get(0);
        assert_eq!(e1.id(), "E1");
        for (step, state) in e1.points() {
            let k = step as f64;
            let expected = if step < 9 { [k, k] } else { [k, 20.0 - k] };
            assert!((state[0] - expected[0]).abs() < 1e-12, "step {step}");
            assert!((state[1] - expected[1]).abs() < 1e-12, "step {step}");
        }
        // Without swaps the tracks are the truths.
        let no_swap = TrackerConfig {
            swap_probability: 0.0,
            ..config
        };
        let estimate = imitate_tracker(&truth, &no_swap, 1).unwrap();
        assert_eq!(all_points(&estimate), all_points(&truth));
    }

    #[test]
    fn the_swap_tracker_swaps_on_a_generated_scene() {
        let truth = medium_truth();
        let config = TrackerConfig {
            position_noise: 0.0,
            miss_probability: 0.0,
            birth_delay: 0,
            decimals: None,
            ..TrackerConfig::styled(ScenePreset::Medium, TrackerStyle::Swaps)
        };
        let estimate = imitate_tracker(&truth, &config, 1).unwrap();
        assert_eq!(estimate.len(), truth.len());
        // Without noise each point names its truth; a track whose points belong to two truths
        // has swapped.
        let owner: std::collections::HashMap<String, usize> = all_points(&truth)
            .iter()
            .enumerate()
            .flat_map(|(object, p)| p.iter().map(move |q| (format!("{q:?}"), object)))
            .collect();
        let swapped = all_points(&estimate)
            .iter()
            .filter(|track| {
                let first = owner[&format!("{:?}", track[0])];
                track.iter().any(|p| owner[&format!("{p:?}")] != first)
            })
            .count();
        assert!(swapped >= 1, "no track swapped");
    }

    #[test]
    fn out_of_range_tracker_settings_are_refused() {
        let truth = crossing();
        let trackers = [
            TrackerConfig {
                miss_probability: 1.5,
                ..TrackerConfig::perfect()
            },
            TrackerConfig {
                position_noise: -1.0,
                ..TrackerConfig::perfect()
            },
            TrackerConfig {
                clutter_mean_lifetime: 0.0,
                ..TrackerConfig::perfect()
            },
        ];
        for tracker in trackers {
            assert!(matches!(
                imitate_tracker(&truth, &tracker, 1),
                Err(Error::Parameter(_))
            ));
        }
    }
}
