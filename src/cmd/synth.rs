//! `switchyard synth`: writes a seeded synthetic ground truth and an imaginary tracker's output
//! as CSV files (`time,id,x,y`).

use std::path::PathBuf;

use clap::{Args, ValueEnum};

use switchyard::input::write_csv;
use switchyard::synth::{
    check_finite, generate_truth, imitate_tracker, SceneConfig, ScenePreset, TrackerConfig,
    TrackerStyle,
};
use switchyard::trajectory::TrajectorySet;
use switchyard::Error;

use super::output::{same_output, OutputArgs};

/// The scenes offered on the command line.
#[derive(ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum PresetName {
    /// 200 steps, about 8 objects a step, about 30 units apart.
    Small,
    /// 500 steps, about 15 objects a step.
    Medium,
    /// 2,000 steps, about 50 objects a step.
    Large,
    /// A harbour radar in metres, one step per 2 s scan: about 12 boats over 300 scans.
    Harbour,
}

/// The tracker faults offered on the command line.
#[derive(ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum StyleName {
    /// Some noise, misses, false tracks, swaps and fragments.
    Mixed,
    /// Whole tracks that exchange identities when objects pass close.
    Swaps,
    /// Fragmented tracks, more misses, and false tracks; no swaps.
    Fragments,
}

/// Options of `synth`.
#[derive(Args, Debug)]
pub struct SynthArgs {
    /// The scene.
    #[arg(long, value_enum, default_value_t = PresetName::Small)]
    preset: PresetName,
    /// The imaginary tracker's faults (the preset sets their sizes).
    #[arg(long, value_enum, default_value_t = StyleName::Mixed)]
    tracker: StyleName,
    /// Seed of the scene; the same seed and options give the same files, byte for byte.
    #[arg(long, value_name = "N", default_value_t = 1)]
    seed: u64,
    /// Seed of the tracker's faults [default: the scene's seed].
    #[arg(long, value_name = "N")]
    tracker_seed: Option<u64>,
    /// Write the ground truth to FILE (`-`: standard output).
    #[arg(long, value_name = "FILE")]
    truth_out: Option<PathBuf>,
    /// Write the tracker's output to FILE (`-`: standard output).
    #[arg(long, value_name = "FILE")]
    estimate_out: Option<PathBuf>,
    /// Number of steps.
    #[arg(long, value_name = "N")]
    steps: Option<usize>,
    /// Mean number of objects present at a step. Unless --region-size is given, the region is
    /// resized to keep the preset's density.
    #[arg(long, value_name = "X")]
    objects_per_step: Option<f64>,
    /// Side of the square region.
    #[arg(long, value_name = "X")]
    region_size: Option<f64>,
    /// Mean lifetime of an object, in steps.
    #[arg(long, value_name = "X")]
    mean_lifetime: Option<f64>,
    /// Standard deviation of the tracker's position error on each axis.
    #[arg(long, value_name = "X")]
    position_noise: Option<f64>,
    /// Probability that a track reports nothing at one step.
    #[arg(long, value_name = "P")]
    miss_probability: Option<f64>,
    /// Mean number of false tracks starting at each step.
    #[arg(long, value_name = "X")]
    clutter_rate: Option<f64>,
    /// Distance within which two objects have come close enough for their tracks to swap.
    #[arg(long, value_name = "X")]
    swap_distance: Option<f64>,
    /// Probability that two tracks swap their objects when those come close.
    #[arg(long, value_name = "P")]
    swap_probability: Option<f64>,
    /// Probability at each step that an object's track ends and continues under a new id.
    #[arg(long, value_name = "P")]
    fragment_probability: Option<f64>,
    /// Steps an object is present before it gets a track.
    #[arg(long, value_name = "N")]
    birth_delay: Option<u32>,
    /// Round positions to this many decimals (at most 9).
    #[arg(long, value_name = "N")]
    decimals: Option<u32>,
}

impl SynthArgs {
    /// The scene and tracker configurations: the preset's, with the options given over them.
    fn configs(&self) -> (SceneConfig, TrackerConfig) {
        let preset = match self.preset {
            PresetName::Small => ScenePreset::Small,
            PresetName::Medium => ScenePreset::Medium,
            PresetName::Large => ScenePreset::Large,
            PresetName::Harbour => ScenePreset::Harbour,
        };
        let style = match self.tracker {
            StyleName::Mixed => TrackerStyle::Mixed,
            StyleName::Swaps => TrackerStyle::Swaps,
            StyleName::Fragments => TrackerStyle::Fragments,
        };
        let mut scene = SceneConfig::preset(preset);
        let mut tracker = TrackerConfig::styled(preset, style);
        if let Some(steps) = self.steps {
            scene.steps = steps;
        }
        if let Some(objects) = self.objects_per_step {
            if scene.objects_per_step > 0.0 && objects > 0.0 {
                scene.region_size *= (objects / scene.objects_per_step).sqrt();
            }
            scene.objects_per_step = objects;
        }
        if let Some(size) = self.region_size {
            scene.region_size = size;
        }
        if let Some(lifetime) = self.mean_lifetime {
            scene.mean_lifetime = lifetime;
        }
        if let Some(decimals) = self.decimals {
            scene.decimals = Some(decimals);
            tracker.decimals = Some(decimals);
        }
        let overrides = [
            (self.position_noise, &mut tracker.position_noise),
            (self.miss_probability, &mut tracker.miss_probability),
            (self.clutter_rate, &mut tracker.clutter_rate),
            (self.swap_distance, &mut tracker.swap_distance),
            (self.swap_probability, &mut tracker.swap_probability),
            (self.fragment_probability, &mut tracker.fragment_probability),
        ];
        for (given, field) in overrides {
            if let Some(value) = given {
                *field = value;
            }
        }
        if let Some(delay) = self.birth_delay {
            tracker.birth_delay = delay;
        }
        (scene, tracker)
    }
}

pub fn run(args: &SynthArgs) -> anyhow::Result<()> {
    if args.truth_out.is_none() && args.estimate_out.is_none() {
        return Err(Error::Parameter("give --truth-out, --estimate-out or both".into()).into());
    }
    if let (Some(truth), Some(estimate)) = (&args.truth_out, &args.estimate_out) {
        if same_output(truth, estimate) {
            return Err(Error::Parameter(
                "--truth-out and --estimate-out name the same file".into(),
            )
            .into());
        }
    }
    // Both outputs are checked before either is written, so that neither is left alone.
    let outputs = [&args.truth_out, &args.estimate_out];
    for output in outputs.into_iter().flatten() {
        output_to(output).check(std::iter::empty::<&str>())?;
    }
    let (scene, tracker) = args.configs();
    // Check both before writing anything, so that a bad option leaves no file behind.
    scene.validate()?;
    tracker.validate()?;
    let truth = generate_truth(&scene, args.seed)?;
    check_finite(&truth, "the scene's region size and lifetime")?;
    // Both sets are made and checked before either is written.
    let estimate = match &args.estimate_out {
        Some(_) => {
            let seed = args.tracker_seed.unwrap_or(args.seed);
            let estimate = imitate_tracker(&truth, &tracker, seed)?;
            check_finite(&estimate, "the tracker's position noise and swap distance")?;
            Some(estimate)
        }
        None => None,
    };
    if let Some(path) = &args.truth_out {
        write_set(&truth, path)?;
    }
    if let (Some(path), Some(estimate)) = (&args.estimate_out, &estimate) {
        write_set(estimate, path)?;
    }
    Ok(())
}

/// Writes `set` as CSV to `path`; the file appears only when complete.
fn write_set(set: &TrajectorySet, path: &std::path::Path) -> anyhow::Result<()> {
    output_to(path).emit(|out| Ok(write_csv(set, &["x", "y"], out)?))
}

/// The output options for one file.
fn output_to(path: &std::path::Path) -> OutputArgs {
    OutputArgs {
        output: Some(path.to_path_buf()),
    }
}
