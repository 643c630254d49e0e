//! Times the whole trajectory-metric pipeline on the generator's benchmark scenes and prints the
//! LP sizes: `cargo run --release --example scale -- small|medium|large [seed] [engine]`.
//! Memory: run it under `/usr/bin/time -v` and read "Maximum resident set size".

use std::time::Instant;

use switchyard::distance::Distance;
use switchyard::synth::{generate_scene, ScenePreset};
use switchyard::trajectory_metric::{score_with, Engine, SolveOptions, TrajectoryParams};

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let preset = match args.get(1).map(String::as_str).unwrap_or("small") {
        "small" => ScenePreset::Small,
        "medium" => ScenePreset::Medium,
        "large" => ScenePreset::Large,
        other => panic!("unknown preset {other}"),
    };
    let seed: u64 = args.get(2).map_or(1, |s| s.parse().unwrap());
    let engine = match args.get(3).map(String::as_str).unwrap_or("microlp") {
        "highs" => Engine::Highs,
        _ => Engine::Microlp,
    };
    let started = Instant::now();
    let (truth, estimate) = generate_scene(preset, seed);
    let generated = started.elapsed();
    let params = TrajectoryParams::new(10.0, 1.0, 10.0).unwrap();
    let options = SolveOptions {
        engine,
        ..SolveOptions::default()
    };
    let started = Instant::now();
    let score = score_with(&truth, &estimate, &params, &Distance::default(), &options).unwrap();
    let solved = started.elapsed();
    println!(
        "{preset:?} seed {seed}: {} truths, {} tracks, {} + {} object-steps, generated in {:.3} s",
        truth.len(),
        estimate.len(),
        truth.object_steps(),
        estimate.object_steps(),
        generated.as_secs_f64()
    );
    println!(
        "engine {}: scored in {:.3} s; d^p = {:.6}, integral {}, switches {}",
        engine.name(),
        solved.as_secs_f64(),
        score.total,
        score.integral,
        score.switch_count
    );
    println!("{:?}", score.stats);
}
