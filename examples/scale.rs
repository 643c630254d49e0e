//! Times the whole trajectory-metric pipeline on the generator's benchmark scenes and prints the
//! sizes, the certificate and where the time goes:
//!
//! `cargo run --release --example scale -- SCENE [seed] [engine] [cutoff] [gamma]`
//!
//! SCENE is `small`, `medium`, `large`, `STEPSxOBJECTS` (for example `10000x100`: that many
//! steps with about that many objects a step, the large preset's density and tracker) or
//! `dense` or `dense-unrelated` (300 truths and 300 tracks in a unit square for 200 steps: with the default cut-off
//! every pair is a candidate at every step, the worst case for any engine; in the second the
//! tracks move independently of the truths); engine
//! is `lagrangian` (the default), `microlp` or `highs`; cutoff defaults to 10 and gamma to the
//! cut-off. Memory: run it under `/usr/bin/time -v` and read "Maximum resident set size".

use std::time::Instant;

use switchyard::distance::Distance;
use switchyard::synth::{generate_truth, imitate_tracker, SceneConfig, ScenePreset, TrackerConfig};
use switchyard::trajectory::{Trajectory, TrajectorySet};
use switchyard::trajectory_metric::{score_with, Engine, SolveOptions, TrajectoryParams};

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let scene = args.get(1).map_or("small", String::as_str);
    let (config, tracker) = match scene {
        "small" | "dense" | "dense-unrelated" => preset(ScenePreset::Small),
        "medium" => preset(ScenePreset::Medium),
        "large" => preset(ScenePreset::Large),
        other => {
            let (steps, objects) = other
                .split_once('x')
                .and_then(|(s, o)| Some((s.parse().ok()?, o.parse().ok()?)))
                .unwrap_or_else(|| panic!("unknown scene {other}: small, medium, large or NxM"));
            (
                SceneConfig::spaced(steps, objects),
                TrackerConfig::preset(ScenePreset::Large),
            )
        }
    };
    let seed: u64 = args.get(2).map_or(1, |s| s.parse().expect("a seed"));
    let engine = match args.get(3).map_or("lagrangian", String::as_str) {
        "highs" => Engine::Highs,
        "microlp" => Engine::Microlp,
        _ => Engine::Lagrangian,
    };
    let cutoff: f64 = args.get(4).map_or(10.0, |s| s.parse().expect("a cut-off"));
    let gamma: f64 = args.get(5).map_or(cutoff, |s| s.parse().expect("a gamma"));
    let started = Instant::now();
    let (truth, estimate) = if scene == "dense" || scene == "dense-unrelated" {
        dense(seed, scene == "dense-unrelated")
    } else {
        let truth = generate_truth(&config, seed).expect("a valid scene");
        let estimate = imitate_tracker(&truth, &tracker, seed).expect("a valid tracker");
        (truth, estimate)
    };
    let generated = started.elapsed();
    let params = TrajectoryParams::new(cutoff, 1.0, gamma).expect("valid parameters");
    let options = SolveOptions {
        engine,
        ..SolveOptions::default()
    };
    let started = Instant::now();
    let score =
        score_with(&truth, &estimate, &params, &Distance::default(), &options).expect("a score");
    let solved = started.elapsed();
    println!(
        "{scene} seed {seed}: {} truths, {} tracks, {} + {} object-steps, generated in {:.3} s",
        truth.len(),
        estimate.len(),
        truth.object_steps(),
        estimate.object_steps(),
        generated.as_secs_f64()
    );
    println!(
        "engine {} (c = {cutoff}, gamma = {gamma}): scored in {:.3} s; d^p = {:.6}, integral {}, switches {}",
        engine.name(),
        solved.as_secs_f64(),
        score.total,
        score.integral,
        score.parts.switch_count
    );
    let s = &score.stats;
    println!(
        "time: pairs {:.3} s, shortest paths {:.3} s, repair {:.3} s, simplex {:.3} s \
         (engine seconds are summed over groups solved in parallel)",
        s.pairs_seconds, s.paths_seconds, s.repair_seconds, s.simplex_seconds
    );
    println!("{:?}", score.certificate);
    println!(
        "pairs {}, groups {}, cells {}, LP groups {}, LP variables {}",
        s.candidate_pairs, s.components, s.cells, s.lp_components, s.variables
    );
    for note in &score.notes {
        println!("note: {note}");
    }
}

fn preset(preset: ScenePreset) -> (SceneConfig, TrackerConfig) {
    (SceneConfig::preset(preset), TrackerConfig::preset(preset))
}

/// 300 truths and 300 tracks jumping about the unit square for 200 steps, each track near its
/// truth (or, `unrelated`, anywhere): every truth is within any cut-off above 1.5 of every
/// track at every step.
fn dense(seed: u64, unrelated: bool) -> (TrajectorySet, TrajectorySet) {
    use rand::{RngExt, SeedableRng};
    let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(seed);
    let mut truths = Vec::new();
    let mut tracks = Vec::new();
    for object in 0..300 {
        let mut truth = Vec::new();
        let mut track = Vec::new();
        for step in 0..200 {
            let (x, y): (f64, f64) = (rng.random(), rng.random());
            let noise: (f64, f64) = (rng.random::<f64>() * 0.05, rng.random::<f64>() * 0.05);
            truth.push((step, vec![x, y]));
            if unrelated {
                track.push((step, vec![rng.random::<f64>(), rng.random::<f64>()]));
            } else {
                track.push((step, vec![(x + noise.0).min(1.0), (y + noise.1).min(1.0)]));
            }
        }
        truths.push(Trajectory::new(format!("t{object}"), 2, truth).expect("a trajectory"));
        tracks.push(Trajectory::new(format!("e{object}"), 2, track).expect("a trajectory"));
    }
    (
        TrajectorySet::new(2, truths).expect("a set"),
        TrajectorySet::new(2, tracks).expect("a set"),
    )
}
