//! The ground truth: objects born, moved and ended in a square region (see [`generate_truth`]).

use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Exp1};

use super::random::{
    draw_count, lifetime_steps, poisson, random_direction, step_forward, stream, STREAM_TRUTH,
};
use super::values::{
    check_count, check_decimals, check_positive, check_range, round, rounding_scale, MAX_RATE,
};
use crate::error::{Error, Result};
use crate::trajectory::{Step, Trajectory, TrajectorySet, MAX_WINDOW_STEPS};

/// The longest warm-up run before the first step.
const MAX_WARM_UP: usize = 20_000;

/// How many lives the pilot run simulates to measure the mean life of an object.
const PILOT_LIVES: usize = 2_000;

/// The pilot run's seed: fixed, so that the birth rate is a property of the configuration alone.
const PILOT_SEED: u64 = 0x5eed_5eed;

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

impl SceneConfig {
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
        step_forward(
            &mut self.position,
            &mut self.velocity,
            config.acceleration_std,
            rng,
        );
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::synth::ScenePreset;

    #[test]
    fn truth_stays_in_its_region_window_and_grid() {
        let config = SceneConfig::preset(ScenePreset::Medium);
        let truth = generate_truth(&config, 3).unwrap();
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
    fn out_of_range_scene_settings_are_refused() {
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
    }
}
