//! Splits the LP time of a generated scene into building and solving, per component:
//! `cargo run --release --example lp_breakdown -- small|medium|large [seed]`.

use std::time::Instant;

use switchyard::distance::Distance;
use switchyard::synth::{generate_scene, ScenePreset};
use switchyard::trajectory::Window;
use switchyard::trajectory_metric::model::{build, Reduction};
use switchyard::trajectory_metric::pairs::{candidate_pairs, components};
use switchyard::trajectory_metric::solve::solve;
use switchyard::trajectory_metric::Engine;

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let preset = match args.get(1).map(String::as_str).unwrap_or("small") {
        "medium" => ScenePreset::Medium,
        "large" => ScenePreset::Large,
        _ => ScenePreset::Small,
    };
    let seed: u64 = args.get(2).map_or(1, |s| s.parse().unwrap());
    let engine = if args.get(3).map(String::as_str) == Some("highs") {
        Engine::Highs
    } else {
        Engine::Microlp
    };
    let (truth, estimate) = generate_scene(preset, seed);
    let window = Window::covering(&truth, &estimate).unwrap();
    let t = Instant::now();
    let pairs = candidate_pairs(&truth, &estimate, window, 10.0, 1.0, &Distance::default());
    let groups = components(&pairs);
    println!("pairs + components: {:.3} s", t.elapsed().as_secs_f64());
    for members in groups.iter().filter(|m| m.len() > 1) {
        let t = Instant::now();
        let model = build(&pairs, members, window, 10.0, 5.0, Reduction::Events);
        let built = t.elapsed().as_secs_f64();
        let inactive = model
            .segments
            .iter()
            .flatten()
            .filter(|s| !s.active)
            .count();
        let single = model
            .segments
            .iter()
            .flatten()
            .filter(|s| s.active && s.first == s.last)
            .count();
        let runs = model
            .segments
            .iter()
            .flatten()
            .filter(|s| s.active && s.first < s.last)
            .count();
        let t = Instant::now();
        let values = solve(&model.program, engine).unwrap();
        let solved = t.elapsed().as_secs_f64();
        println!(
            "{} pairs: {} vars ({} head/tail, {} single steps, {} runs), {} rows, {} nonzeros; build {:.3} s, solve {:.3} s, {} values",
            members.len(), model.program.variables(), inactive, single, runs, model.program.rows.len(), model.program.nonzeros(), built, solved, values.len()
        );
    }
}
