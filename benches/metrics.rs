//! Benchmarks on seeded synthetic scenes (`switchyard::synth`):
//! - per-step GOSPA throughput, 10,000 steps x about 50 objects, with and without CSV parsing
//!   (one thread: both paths are single-threaded);
//! - the trajectory LP, whole pipeline, on the small (200 steps, ~8 objects a step) and medium
//!   (500 steps, ~15 objects a step) scenes, c = 10, p = 1, gamma = 10, with the default engine
//!   (and HiGHS when built with `--features highs`).
//!
//! The large scene takes too long for repeated sampling; `examples/scale.rs` times it once.

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion, Throughput};
use switchyard::distance::Distance;
use switchyard::input::{read_csv, write_csv, CsvLayout};
use switchyard::per_step::{per_step, GospaParams};
use switchyard::synth::{
    generate_scene, generate_truth, imitate_tracker, SceneConfig, ScenePreset, TrackerConfig,
};
use switchyard::trajectory_metric::{score_with, Engine, SolveOptions, TrajectoryParams};

fn per_step_throughput(c: &mut Criterion) {
    let truth = generate_truth(&SceneConfig::spaced(10_000, 50.0), 1).unwrap();
    let estimate = imitate_tracker(&truth, &TrackerConfig::preset(ScenePreset::Large), 2).unwrap();
    let points = (truth.object_steps() + estimate.object_steps()) as u64;
    let mut truth_csv = Vec::new();
    write_csv(&truth, &["x", "y"], &mut truth_csv).unwrap();
    let mut estimate_csv = Vec::new();
    write_csv(&estimate, &["x", "y"], &mut estimate_csv).unwrap();
    let params = GospaParams::new(10.0, 1.0, 2.0).unwrap();
    let distance = Distance::default();
    let mut group = c.benchmark_group("per_step_10000x50");
    group.sample_size(10);
    group.throughput(Throughput::Elements(points));
    group.bench_function("metric_only", |b| {
        b.iter(|| per_step(&truth, &estimate, &params, &distance).unwrap())
    });
    group.bench_function("with_csv_parsing", |b| {
        b.iter(|| {
            let layout = CsvLayout::default();
            let x = read_csv(truth_csv.as_slice(), "truth", &layout).unwrap();
            let y = read_csv(estimate_csv.as_slice(), "estimate", &layout).unwrap();
            per_step(&x.set, &y.set, &params, &distance).unwrap()
        })
    });
    group.finish();
}

fn trajectory_lp(c: &mut Criterion) {
    let params = TrajectoryParams::new(10.0, 1.0, 10.0).unwrap();
    let distance = Distance::default();
    let mut group = c.benchmark_group("trajectory_lp");
    group.sample_size(10);
    let engines: &[Engine] = if Engine::Highs.available() {
        &[Engine::Lagrangian, Engine::Microlp, Engine::Highs]
    } else {
        &[Engine::Lagrangian, Engine::Microlp]
    };
    for (name, preset) in [
        ("small", ScenePreset::Small),
        ("medium", ScenePreset::Medium),
        ("large", ScenePreset::Large),
    ] {
        let (truth, estimate) = generate_scene(preset, 1);
        for &engine in engines {
            if name == "large" && engine == Engine::Microlp {
                // Over two minutes a solve: measured once with the scale example instead.
                continue;
            }
            let options = SolveOptions {
                engine,
                ..SolveOptions::default()
            };
            group.bench_with_input(
                BenchmarkId::new(name, engine.name()),
                &options,
                |b, options| {
                    b.iter(|| score_with(&truth, &estimate, &params, &distance, options).unwrap())
                },
            );
        }
    }
    group.finish();
}

criterion_group!(benches, per_step_throughput, trajectory_lp);
criterion_main!(benches);
