//! The preset scenes and trackers: the sizes the project benchmarks with and the harbour of
//! the demonstration data, each with trackers of three styles.

use super::scene::{generate_truth, SceneConfig};
use super::tracker::{imitate_tracker, TrackerConfig};
use crate::trajectory::TrajectorySet;

/// The mean distance between objects in the general presets: each object has a square of this
/// side to itself on average, so the region's side is this times the square root of the count.
pub const OBJECT_SPACING: f64 = 30.0;

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

#[cfg(test)]
mod tests {
    use super::*;

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
}
