//! Seeded synthetic scenes: a ground truth of moving objects, and the output of an imaginary
//! tracker whose failure modes are set one by one.
//!
//! [`generate_truth`] moves objects in a square region with a nearly-constant-velocity model: a
//! small white-noise acceleration on each axis at each step. Objects are born at random steps (a
//! Poisson number per step) at uniformly random places away from the edges, and die after a
//! random lifetime (exponential) or when they leave the region. In a band along the edges,
//! objects heading out turn round at a bounded rate, keeping their speed, as boats turn away from
//! a quay; with no turning most objects soon leave. The birth rate is the rate that keeps the
//! mean number of objects per step at [`SceneConfig::objects_per_step`] (the target over a mean
//! life, measured on a pilot run), plus, when [`SceneConfig::relaxation_steps`] is set, a pull
//! towards the target that keeps each scene's count near it. The scene runs for a while before
//! its first step, so that it starts already populated.
//!
//! [`imitate_tracker`] turns a truth set into what a tracker with known faults would report:
//! position noise, missed detections (gaps), false tracks (clutter), identity swaps when two
//! objects pass close, fragmented tracks, and a delay before a new object gets a track.
//!
//! Everything is deterministic given the seed. The random numbers come from ChaCha8, whose
//! output for a seed is fixed across versions; each failure mode draws from a stream of its own,
//! so turning one mode on or off leaves the random choices of the others as they were. Positions
//! are rounded to a fixed number of decimals, which keeps files small and their bytes stable.
//!
//! Ids: truths are `T1`, `T2`, ... and estimated tracks `E1`, `E2`, ..., numbered in order of
//! first appearance.

use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Exp1, Poisson, StandardNormal};

use crate::error::{Error, Result};
use crate::trajectory::{
    evaluation_window, Frames, Step, Trajectory, TrajectorySet, MAX_WINDOW_STEPS,
};

/// The mean distance between objects in the general presets: each object has a square of this
/// side to itself on average, so the region's side is this times the square root of the count.
pub const OBJECT_SPACING: f64 = 30.0;

/// The largest rate accepted for births and clutter, per step: far beyond any useful scene, and
/// well inside what the Poisson sampler supports.
const MAX_RATE: f64 = 1e6;

/// The most decimals positions can be rounded to.
const MAX_DECIMALS: u32 = 9;

/// The longest warm-up run before the first step.
const MAX_WARM_UP: usize = 20_000;

/// How many lives the pilot run simulates to measure the mean life of an object.
const PILOT_LIVES: usize = 2_000;

/// The pilot run's seed: fixed, so that the birth rate is a property of the configuration alone.
const PILOT_SEED: u64 = 0x5eed_5eed;

/// The random stream of each part of the generator.
const STREAM_TRUTH: u64 = 0;
const STREAM_NOISE: u64 = 1;
const STREAM_MISS: u64 = 2;
const STREAM_CLUTTER: u64 = 3;
const STREAM_SWAP: u64 = 4;
const STREAM_FRAGMENT: u64 = 5;

/// The scene sizes the project benchmarks with, and the harbour of the demonstration data.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ScenePreset {
    /// 200 steps, about 8 objects a step.
    Small,
    /// 500 steps, about 15 objects a step.
    Medium,
    /// 2,000 steps, about 50 objects a step.
    Large,
    /// An imaginary harbour radar: metres, one step per 2 s scan, about 12 boats in a basin
    /// 600 m across, over 300 scans.
    Harbour,
}

/// Which faults the imaginary tracker of a preset shows most.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum TrackerStyle {
    /// A bit of everything: noise, misses, clutter, swaps and fragments.
    Mixed,
    /// Clean, whole tracks that exchange identities when objects pass close.
    Swaps,
    /// Tracks broken into fragments, more misses, and false tracks; no swaps.
    Fragments,
}

/// How the ground truth is generated. All lengths are in the units of the positions, all times
/// in steps.
#[derive(Clone, Debug, PartialEq)]
pub struct SceneConfig {
    /// The number of steps in the scene.
    pub steps: usize,
    /// The first step.
    pub first_step: Step,
    /// The mean number of objects present at a step.
    pub objects_per_step: f64,
    /// The side of the square region `[0, size] x [0, size]`.
    pub region_size: f64,
    /// The least speed at birth, per step.
    pub speed_min: f64,
    /// The greatest speed at birth, per step.
    pub speed_max: f64,
    /// The standard deviation of the random acceleration on each axis, per step squared.
    pub acceleration_std: f64,
    /// The mean of the exponential lifetime, in steps; an object can die sooner by leaving.
    pub mean_lifetime: f64,
    /// When set, the birth rate at each step also gets (target - present) / this, not below
    /// zero: the count of objects returns towards the target within about this many steps
    /// instead of wandering over a lifetime (at least 1). `None`: births at the steady rate only.
    pub relaxation_steps: Option<f64>,
    /// The width of the band along each edge in which objects turn away from the edge; objects
    /// are born outside it.
    pub wall_margin: f64,
    /// The most an object's heading turns in one step in that band, in radians (0 lets objects
    /// leave freely). It turns until it heads inwards at 45 degrees or more from the edge.
    pub wall_turn: f64,
    /// Positions are rounded to this many decimals (`None`: not rounded; at most 9).
    pub decimals: Option<u32>,
}

impl Default for SceneConfig {
    /// The small preset.
    fn default() -> Self {
        SceneConfig::preset(ScenePreset::Small)
    }
}

impl SceneConfig {
    /// The scene of a preset.
    pub fn preset(preset: ScenePreset) -> Self {
        match preset {
            ScenePreset::Small => SceneConfig::spaced(200, 8.0),
            ScenePreset::Medium => SceneConfig::spaced(500, 15.0),
            ScenePreset::Large => SceneConfig::spaced(2_000, 50.0),
            ScenePreset::Harbour => SceneConfig {
                steps: 300,
                first_step: 0,
                objects_per_step: 12.0,
                region_size: 600.0,
                // 1.5 to 4.5 m/s at one scan per 2 s.
                speed_min: 3.0,
                speed_max: 9.0,
                acceleration_std: 0.1,
                mean_lifetime: 200.0,
                relaxation_steps: Some(20.0),
                // Heading straight out at 10 m/scan, a boat goes at most one scan (10 m) plus a
                // turn's radius (10 / 0.25 = 40 m) into the band: it stays inside the 60 m.
                wall_margin: 60.0,
                wall_turn: 0.25,
                decimals: Some(1),
            },
        }
    }

    /// The general scene: `objects_per_step` objects about [`OBJECT_SPACING`] apart over
    /// `steps` steps, moving 1 to 3 units a step, living about 270 steps, kept inside the region
    /// by a 12-unit band along the edges.
    pub fn spaced(steps: usize, objects_per_step: f64) -> Self {
        SceneConfig {
            steps,
            first_step: 0,
            objects_per_step,
            region_size: OBJECT_SPACING * objects_per_step.max(1.0).sqrt(),
            speed_min: 1.0,
            speed_max: 3.0,
            acceleration_std: 0.03,
            mean_lifetime: 270.0,
            relaxation_steps: Some(20.0),
            // Heading straight out at 3.5 units a step, an object goes at most one step (3.5)
            // plus a turn's radius (3.5 / 0.5 = 7) into the band: it stays inside the 12 units.
            wall_margin: 12.0,
            wall_turn: 0.5,
            decimals: Some(3),
        }
    }

    /// Checks every field.
    ///
    /// # Errors
    /// [`Error::Parameter`] naming the first field out of range.
    pub fn validate(&self) -> Result<()> {
        check_count("steps", self.steps, MAX_WINDOW_STEPS)?;
        check_range("objects per step", self.objects_per_step, 0.0, MAX_RATE)?;
        check_positive("region size", self.region_size)?;
        check_range("least speed", self.speed_min, 0.0, f64::MAX)?;
        check_range("greatest speed", self.speed_max, self.speed_min, f64::MAX)?;
        check_range(
            "acceleration deviation",
            self.acceleration_std,
            0.0,
            f64::MAX,
        )?;
        check_range("mean lifetime", self.mean_lifetime, 1e-9, 1e9)?;
        if let Some(relaxation) = self.relaxation_steps {
            check_range("relaxation time", relaxation, 1.0, 1e9)?;
        }
        check_range("wall margin", self.wall_margin, 0.0, f64::MAX)?;
        check_range("wall turn", self.wall_turn, 0.0, std::f64::consts::PI)?;
        check_decimals(self.decimals)?;
        let warm_up = warm_up_steps(self) as Step;
        let fits = self
            .first_step
            .checked_sub(warm_up)
            .and(self.first_step.checked_add(self.steps as Step));
        if fits.is_none() {
            return Err(Error::Parameter(format!(
                "the steps from {} on do not fit in 64-bit integers",
                self.first_step
            )));
        }
        Ok(())
    }
}

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

impl Default for TrackerConfig {
    /// The tracker of the small preset.
    fn default() -> Self {
        TrackerConfig::preset(ScenePreset::Small)
    }
}

impl TrackerConfig {
    /// The tracker matching a scene preset, with a bit of every fault.
    pub fn preset(preset: ScenePreset) -> Self {
        TrackerConfig::styled(preset, TrackerStyle::Mixed)
    }

    /// The tracker matching a scene preset, with the faults of `style`.
    pub fn styled(preset: ScenePreset, style: TrackerStyle) -> Self {
        match preset {
            ScenePreset::Harbour => harbour_tracker(style),
            ScenePreset::Small | ScenePreset::Medium | ScenePreset::Large => {
                let objects = SceneConfig::preset(preset).objects_per_step;
                spaced_tracker(objects, style)
            }
        }
    }

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
    /// [`Error::Parameter`] naming the first field out of range.
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

/// The imaginary trackers of the general presets: noise 1.5, so that a cut-off of 10 separates
/// a poor estimate from a wrong one; false tracks in proportion to the region's area.
fn spaced_tracker(objects_per_step: f64, style: TrackerStyle) -> TrackerConfig {
    let clutter_per_object = 0.016;
    let base = TrackerConfig {
        position_noise: 1.5,
        miss_probability: 0.07,
        clutter_rate: clutter_per_object * objects_per_step,
        clutter_mean_lifetime: 10.0,
        clutter_speed: 3.0,
        clutter_acceleration_std: 0.1,
        swap_distance: 4.0,
        swap_probability: 0.3,
        fragment_probability: 0.01,
        birth_delay: 2,
        decimals: Some(3),
    };
    match style {
        TrackerStyle::Mixed => base,
        TrackerStyle::Swaps => TrackerConfig {
            miss_probability: 0.02,
            clutter_rate: 0.0,
            swap_probability: 0.6,
            fragment_probability: 0.0,
            ..base
        },
        TrackerStyle::Fragments => TrackerConfig {
            miss_probability: 0.1,
            clutter_rate: 1.5 * clutter_per_object * objects_per_step,
            swap_probability: 0.0,
            fragment_probability: 0.02,
            ..base
        },
    }
}

/// The imaginary harbour trackers, in metres and scans: noise of 3 to 4 m against boats that
/// come within 15 to 20 m of each other when they pass.
fn harbour_tracker(style: TrackerStyle) -> TrackerConfig {
    let base = TrackerConfig {
        position_noise: 4.0,
        miss_probability: 0.05,
        clutter_rate: 0.04,
        clutter_mean_lifetime: 6.0,
        clutter_speed: 6.0,
        clutter_acceleration_std: 1.0,
        swap_distance: 20.0,
        swap_probability: 0.4,
        fragment_probability: 0.008,
        birth_delay: 2,
        decimals: Some(1),
    };
    match style {
        TrackerStyle::Mixed => base,
        TrackerStyle::Swaps => TrackerConfig {
            position_noise: 3.0,
            miss_probability: 0.02,
            clutter_rate: 0.0,
            swap_distance: 15.0,
            swap_probability: 0.5,
            fragment_probability: 0.0,
            ..base
        },
        TrackerStyle::Fragments => TrackerConfig {
            miss_probability: 0.08,
            clutter_rate: 0.06,
            swap_probability: 0.0,
            fragment_probability: 0.015,
            birth_delay: 3,
            ..base
        },
    }
}

/// A truth and the output of the preset's mixed tracker on it, both from `seed`.
///
/// # Example
/// ```
/// use switchyard::synth::{generate_scene, ScenePreset};
///
/// let (truth, estimate) = generate_scene(ScenePreset::Small, 1);
/// assert_eq!(truth.get(0).id(), "T1");
/// assert_eq!(estimate.get(0).id(), "E1");
/// // About 8 objects a step over 200 steps.
/// let per_step = truth.object_steps() as f64 / 200.0;
/// assert!((per_step - 8.0).abs() < 3.0);
/// ```
pub fn generate_scene(preset: ScenePreset, seed: u64) -> (TrajectorySet, TrajectorySet) {
    let truth =
        generate_truth(&SceneConfig::preset(preset), seed).expect("the preset scenes are valid");
    let estimate = imitate_tracker(&truth, &TrackerConfig::preset(preset), seed)
        .expect("the preset trackers are valid");
    (truth, estimate)
}

/// A moving object (a truth or a false track) while it lives.
struct Mover {
    position: [f64; 2],
    velocity: [f64; 2],
    /// Steps left to live, counting the current one.
    remaining: u64,
    /// Its trajectory among those recorded, once it has a point.
    slot: Option<usize>,
}

impl Mover {
    fn born(config: &SceneConfig, rng: &mut ChaCha8Rng) -> Self {
        // Born clear of the walls, so that no object leaves at once.
        let inner = (config.region_size - 2.0 * config.wall_margin).max(0.0);
        let low = (config.region_size - inner) / 2.0;
        let position = [
            low + inner * rng.random::<f64>(),
            low + inner * rng.random::<f64>(),
        ];
        let speed = config.speed_min + (config.speed_max - config.speed_min) * rng.random::<f64>();
        let heading = random_direction(rng);
        let lifetime: f64 = Exp1.sample(rng);
        Mover {
            position,
            velocity: [speed * heading[0], speed * heading[1]],
            remaining: lifetime_steps(lifetime * config.mean_lifetime),
            slot: None,
        }
    }

    /// Moves one step; false when the object dies instead (its life is over or it left).
    fn advance(&mut self, config: &SceneConfig, rng: &mut ChaCha8Rng) -> bool {
        self.remaining -= 1;
        if self.remaining == 0 {
            return false;
        }
        for axis in 0..2 {
            let noise: f64 = rng.sample(StandardNormal);
            let acceleration = config.acceleration_std * noise;
            self.position[axis] += self.velocity[axis] + 0.5 * acceleration;
            self.velocity[axis] += acceleration;
        }
        if !self
            .position
            .iter()
            .all(|&at| (0.0..=config.region_size).contains(&at))
        {
            return false;
        }
        self.turn_from_walls(config);
        true
    }

    /// In the band along the edges, turns the heading by at most `wall_turn` towards the inward
    /// direction, until it points within 45 degrees of it. The speed is kept.
    fn turn_from_walls(&mut self, config: &SceneConfig) {
        let inward = self.position.map(|at| {
            let mut push: f64 = 0.0;
            if at < config.wall_margin {
                push += 1.0;
            }
            if at > config.region_size - config.wall_margin {
                push -= 1.0;
            }
            push
        });
        let inward_norm = inward[0].hypot(inward[1]);
        let speed = self.velocity[0].hypot(self.velocity[1]);
        if inward_norm == 0.0 || speed == 0.0 || config.wall_turn == 0.0 {
            return;
        }
        let along = (self.velocity[0] * inward[0] + self.velocity[1] * inward[1]) / inward_norm;
        if along >= speed * std::f64::consts::FRAC_1_SQRT_2 {
            return;
        }
        // Turn the shorter way round: anticlockwise when the inward direction lies to the left.
        let cross = self.velocity[0] * inward[1] - self.velocity[1] * inward[0];
        let angle = if cross >= 0.0 {
            config.wall_turn
        } else {
            -config.wall_turn
        };
        let (sin, cos) = angle.sin_cos();
        self.velocity = [
            cos * self.velocity[0] - sin * self.velocity[1],
            sin * self.velocity[0] + cos * self.velocity[1],
        ];
    }
}

/// Refuses a generated set with a coordinate that is not finite: parameters so large (a
/// region size or noise near the largest double) that positions overflow. `what` names the
/// set and the parameters that shape it, for the message.
///
/// # Errors
/// [`Error::Parameter`] naming the object and step of the first such coordinate.
pub fn check_finite(set: &TrajectorySet, what: &str) -> Result<()> {
    for trajectory in set.trajectories() {
        if let Some((step, _)) = trajectory
            .points()
            .find(|(_, state)| state.iter().any(|v| !v.is_finite()))
        {
            return Err(Error::Parameter(format!(
                "{what} give a position that is not a finite number ({:?} at step {step}); \
                 choose smaller values",
                trajectory.id()
            )));
        }
    }
    Ok(())
}

/// Generates a ground truth: trajectories `T1`, `T2`, ... of dimension 2, in order of first
/// appearance, present at steps `first_step .. first_step + steps`. O(total object steps).
///
/// # Errors
/// [`Error::Parameter`] when a field of `config` is out of range.
pub fn generate_truth(config: &SceneConfig, seed: u64) -> Result<TrajectorySet> {
    config.validate()?;
    let warm_up = warm_up_steps(config);
    let mean_life = mean_life(config, warm_up + config.steps);
    let steady_rate = config.objects_per_step / mean_life;
    let initial = poisson(config.objects_per_step)?;
    let scale = rounding_scale(config.decimals);
    let mut rng = stream(seed, STREAM_TRUTH);
    let start = config.first_step - warm_up as Step;
    let end = config.first_step + config.steps as Step;
    let mut alive: Vec<Mover> = Vec::new();
    let mut recorded: Vec<(Vec<Step>, Vec<f64>)> = Vec::new();
    for step in start..end {
        // The warm-up starts from a population of the target size, so it needs to run only
        // long enough for positions and ages to mix.
        let distribution = if step == start {
            initial
        } else {
            let pull = config.relaxation_steps.map_or(0.0, |relaxation| {
                (config.objects_per_step - alive.len() as f64) / relaxation
            });
            poisson((steady_rate + pull).max(0.0))?
        };
        for _ in 0..draw_count(&distribution, &mut rng) {
            alive.push(Mover::born(config, &mut rng));
        }
        alive.retain_mut(|mover| {
            if step >= config.first_step {
                let slot = *mover.slot.get_or_insert_with(|| {
                    recorded.push((Vec::new(), Vec::new()));
                    recorded.len() - 1
                });
                let (steps, states) = &mut recorded[slot];
                steps.push(step);
                states.extend(mover.position.iter().map(|&at| round(at, scale)));
            }
            mover.advance(config, &mut rng)
        });
    }
    let trajectories = recorded
        .into_iter()
        .enumerate()
        .map(|(index, (steps, states))| {
            Trajectory::from_checked_parts(format!("T{}", index + 1), 2, steps, states)
        })
        .collect();
    TrajectorySet::new(2, trajectories)
}

/// The steps run before the first one: twice the mean lifetime, so that the scene has settled.
fn warm_up_steps(config: &SceneConfig) -> usize {
    ((2.0 * config.mean_lifetime).ceil() as usize).min(MAX_WARM_UP)
}

/// The mean number of steps an object lives under `config`, measured on a fixed pilot run of
/// [`PILOT_LIVES`] objects, each followed for at most `horizon` steps. The mean number present
/// is the birth rate times this (Little's law), which sets the birth rate.
fn mean_life(config: &SceneConfig, horizon: usize) -> f64 {
    let mut rng = ChaCha8Rng::seed_from_u64(PILOT_SEED);
    let mut total = 0usize;
    for _ in 0..PILOT_LIVES {
        let mut mover = Mover::born(config, &mut rng);
        let mut life = 1;
        while life < horizon && mover.advance(config, &mut rng) {
            life += 1;
        }
        total += life;
    }
    total as f64 / PILOT_LIVES as f64
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
/// [`Error::Parameter`] when a field of `config` is out of range; [`Error::Mismatch`] when the
/// truth spans more than [`MAX_WINDOW_STEPS`] steps.
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
            for (at, speed) in false_track
                .position
                .iter_mut()
                .zip(false_track.velocity.iter_mut())
            {
                let noise: f64 = clutter_rng.sample(StandardNormal);
                let acceleration = config.clutter_acceleration_std * noise;
                *at += *speed + 0.5 * acceleration;
                *speed += acceleration;
            }
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

/// The random stream `stream` of `seed`.
fn stream(seed: u64, stream: u64) -> ChaCha8Rng {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    rng.set_stream(stream);
    rng
}

/// A Poisson distribution of mean `rate`, or `None` for a rate of zero.
fn poisson(rate: f64) -> Result<Option<Poisson<f64>>> {
    if rate <= 0.0 {
        return Ok(None);
    }
    Poisson::new(rate)
        .map(Some)
        .map_err(|error| Error::Parameter(format!("a rate of {rate} per step: {error}")))
}

/// A draw from `distribution`, or 0 when there is none (no draw is made then).
fn draw_count(distribution: &Option<Poisson<f64>>, rng: &mut ChaCha8Rng) -> u64 {
    distribution
        .as_ref()
        .map_or(0, |poisson| poisson.sample(rng) as u64)
}

/// A uniformly random unit vector in the plane.
fn random_direction(rng: &mut ChaCha8Rng) -> [f64; 2] {
    let direction = random_direction_in(2, rng);
    [direction[0], direction[1]]
}

/// A uniformly random unit vector in `dim` dimensions: a normalised Gaussian vector, which
/// needs only square roots (exactly rounded everywhere), not trigonometry.
fn random_direction_in(dim: usize, rng: &mut ChaCha8Rng) -> Vec<f64> {
    loop {
        let vector: Vec<f64> = (0..dim).map(|_| rng.sample(StandardNormal)).collect();
        let norm = vector.iter().map(|v| v * v).sum::<f64>().sqrt();
        if norm > 1e-12 {
            return vector.into_iter().map(|v| v / norm).collect();
        }
        if dim == 0 {
            return vector;
        }
    }
}

/// A lifetime in whole steps: `steps` rounded up, at least one.
fn lifetime_steps(steps: f64) -> u64 {
    (steps.ceil() as u64).max(1)
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

/// The factor that rounding to `decimals` multiplies by, if any.
fn rounding_scale(decimals: Option<u32>) -> Option<f64> {
    decimals.map(|d| 10f64.powi(d as i32))
}

/// `value` rounded to the grid of `scale` (a power of ten); rounding twice changes nothing.
fn round(value: f64, scale: Option<f64>) -> f64 {
    match scale {
        Some(scale) => (value * scale).round() / scale,
        None => value,
    }
}

fn check_range(name: &str, value: f64, low: f64, high: f64) -> Result<()> {
    if value.is_finite() && value >= low && value <= high {
        Ok(())
    } else {
        Err(Error::Parameter(format!(
            "the {name} must be between {low} and {high}, got {value}"
        )))
    }
}

fn check_positive(name: &str, value: f64) -> Result<()> {
    if value.is_finite() && value > 0.0 {
        Ok(())
    } else {
        Err(Error::Parameter(format!(
            "the {name} must be positive and finite, got {value}"
        )))
    }
}

fn check_count(name: &str, value: usize, high: usize) -> Result<()> {
    if value <= high {
        Ok(())
    } else {
        Err(Error::Parameter(format!(
            "the {name} must be at most {high}, got {value}"
        )))
    }
}

fn check_decimals(decimals: Option<u32>) -> Result<()> {
    match decimals {
        Some(d) if d > MAX_DECIMALS => Err(Error::Parameter(format!(
            "positions can be rounded to at most {MAX_DECIMALS} decimals, got {d}"
        ))),
        _ => Ok(()),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

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
    fn same_seed_gives_same_sets_and_other_seeds_differ() {
        for preset in [ScenePreset::Small, ScenePreset::Harbour] {
            let first = generate_scene(preset, 7);
            let again = generate_scene(preset, 7);
            assert_eq!(first, again);
            let other = generate_scene(preset, 8);
            assert_ne!(first.0, other.0);
            assert_ne!(first.1, other.1);
        }
        // Another tracker seed on the same truth gives another estimate.
        let (truth, estimate) = generate_scene(ScenePreset::Small, 7);
        let other = imitate_tracker(&truth, &TrackerConfig::preset(ScenePreset::Small), 8).unwrap();
        assert_ne!(estimate, other);
    }

    #[test]
    fn truth_stays_in_its_region_window_and_grid() {
        let config = SceneConfig::preset(ScenePreset::Medium);
        let truth = medium_truth();
        assert_eq!(truth.dim(), 2);
        for (index, trajectory) in truth.trajectories().iter().enumerate() {
            assert_eq!(trajectory.id(), format!("T{}", index + 1));
            // No gaps: one point at each step from birth to death.
            let (first, last) = trajectory.span().unwrap();
            assert_eq!(trajectory.len() as Step, last - first + 1);
            assert!(first >= 0 && last < config.steps as Step);
            for (_, state) in trajectory.points() {
                for &value in state {
                    assert!((0.0..=config.region_size).contains(&value));
                    // Rounded to 3 decimals: 1000 * value is an integer up to float error.
                    let scaled = value * 1000.0;
                    assert!((scaled - scaled.round()).abs() < 1e-6, "{value}");
                }
            }
        }
        // Ids come in order of first appearance.
        let firsts: Vec<Step> = truth.trajectories().iter().map(|t| t.steps()[0]).collect();
        assert!(firsts.windows(2).all(|pair| pair[0] <= pair[1]));
    }

    #[test]
    fn preset_scenes_keep_the_target_count() {
        // With the pull of 20 steps the count stays within about one object of the target
        // (its spread is about sqrt(target * 20 / life)); 15% off the target would be a fault.
        for (preset, target) in [(ScenePreset::Small, 8.0), (ScenePreset::Medium, 15.0)] {
            let config = SceneConfig::preset(preset);
            for seed in 1..=3 {
                let truth = generate_truth(&config, seed).unwrap();
                let per_step = truth.object_steps() as f64 / config.steps as f64;
                assert!(
                    (per_step - target).abs() < 0.15 * target,
                    "{preset:?} seed {seed}: {per_step} objects a step"
                );
            }
        }
    }

    #[test]
    fn steady_birth_rate_meets_the_target_without_the_pull() {
        // Short lives and a long scene: 2,000 steps of lives of about 10 give a mean count whose
        // standard deviation is about sqrt(target * 2 * 10 / 2000) = 0.32; allow 1.0 (3 sigma).
        let config = SceneConfig {
            steps: 2_000,
            mean_lifetime: 10.0,
            relaxation_steps: None,
            ..SceneConfig::spaced(2_000, 10.0)
        };
        for seed in 1..=2 {
            let truth = generate_truth(&config, seed).unwrap();
            let per_step = truth.object_steps() as f64 / 2_000.0;
            assert!((per_step - 10.0).abs() < 1.0, "seed {seed}: {per_step}");
        }
    }

    #[test]
    fn preset_track_counts_are_near_the_benchmark_sizes() {
        // The medium benchmark is meant to have about 45 truths and 250 tracks; allow a third
        // either way for the seed.
        let (truth, estimate) = generate_scene(ScenePreset::Medium, 1);
        assert!((30..=60).contains(&truth.len()), "{} truths", truth.len());
        assert!(
            (170..=330).contains(&estimate.len()),
            "{} tracks",
            estimate.len()
        );
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
    fn every_preset_is_valid_and_empty_inputs_give_empty_sets() {
        for preset in [
            ScenePreset::Small,
            ScenePreset::Medium,
            ScenePreset::Large,
            ScenePreset::Harbour,
        ] {
            SceneConfig::preset(preset).validate().unwrap();
            for style in [
                TrackerStyle::Mixed,
                TrackerStyle::Swaps,
                TrackerStyle::Fragments,
            ] {
                TrackerConfig::styled(preset, style).validate().unwrap();
            }
        }
        SceneConfig::default().validate().unwrap();
        TrackerConfig::default().validate().unwrap();
        let none = SceneConfig {
            objects_per_step: 0.0,
            ..SceneConfig::default()
        };
        let truth = generate_truth(&none, 1).unwrap();
        assert!(truth.is_empty());
        let estimate = imitate_tracker(&truth, &TrackerConfig::default(), 1).unwrap();
        assert!(estimate.is_empty());
    }

    #[test]
    fn out_of_range_settings_are_refused() {
        let scenes = [
            SceneConfig {
                region_size: 0.0,
                ..SceneConfig::default()
            },
            SceneConfig {
                speed_max: 0.5,
                ..SceneConfig::default()
            },
            SceneConfig {
                relaxation_steps: Some(0.5),
                ..SceneConfig::default()
            },
            SceneConfig {
                decimals: Some(12),
                ..SceneConfig::default()
            },
            SceneConfig {
                objects_per_step: f64::NAN,
                ..SceneConfig::default()
            },
        ];
        for scene in scenes {
            assert!(matches!(
                generate_truth(&scene, 1),
                Err(Error::Parameter(_))
            ));
        }
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
