//! Throughput of `compare`: 200 sequences of 100 steps with about 20 objects a step, scored
//! for 3 imaginary trackers (600 trajectory-metric evaluations), on every available core.
//!
//! Run with `cargo bench --bench compare`. The whole data set is timed once and its throughput
//! printed (evaluations and object-steps per second; object-steps count the truth and the
//! estimate points, each case's truth once per tracker); criterion then samples the first 20
//! sequences. The cases are cases of the general generator (`SceneConfig::spaced`), each tracker
//! from the styles of the small preset with its clutter scaled to 20 objects.

use criterion::{criterion_group, criterion_main, Criterion, Throughput};

use switchyard::compare::{
    evaluate, run, AggregateOptions, BootstrapOptions, Case, CaseKey, CompareOptions, Dataset,
    RankBy, ResampleBy, TrackerData,
};
use switchyard::distance::Distance;
use switchyard::synth::{generate_truth, imitate_tracker, SceneConfig, TrackerConfig};
use switchyard::synth::{ScenePreset, TrackerStyle};
use switchyard::trajectory_metric::{SolveOptions, TrajectoryParams};

const SEQUENCES: usize = 200;
const STEPS: usize = 100;
const OBJECTS: f64 = 20.0;

/// 200 seeded sequences and the three tracker styles of the general presets on each.
fn dataset() -> Dataset {
    let scene = SceneConfig::spaced(STEPS, OBJECTS);
    let styles = [
        ("mixed", TrackerStyle::Mixed),
        ("swaps", TrackerStyle::Swaps),
        ("fragments", TrackerStyle::Fragments),
    ];
    let mut truths = Vec::with_capacity(SEQUENCES);
    let mut cases = Vec::with_capacity(SEQUENCES);
    let mut trackers: Vec<TrackerData> = styles
        .iter()
        .map(|(name, _)| TrackerData {
            name: name.to_string(),
            estimates: Vec::with_capacity(SEQUENCES),
        })
        .collect();
    for sequence in 0..SEQUENCES {
        let seed = 1_000 + sequence as u64;
        let truth = generate_truth(&scene, seed).expect("valid scene");
        for (t, (_, style)) in styles.iter().enumerate() {
            let mut config = TrackerConfig::styled(ScenePreset::Small, *style);
            // The general trackers scale clutter with the object count.
            config.clutter_rate = config.clutter_rate / 8.0 * OBJECTS;
            let estimate =
                imitate_tracker(&truth, &config, seed * 10 + t as u64).expect("valid tracker");
            trackers[t].estimates.push(estimate);
        }
        cases.push(Case {
            key: CaseKey::new(sequence.to_string(), ""),
            truth: truths.len(),
        });
        truths.push(truth);
    }
    Dataset::new(truths, cases, trackers).expect("consistent data")
}

fn bench(c: &mut Criterion) {
    let data = dataset();
    let options = CompareOptions {
        settings: vec![TrajectoryParams::new(10.0, 1.0, 10.0).unwrap()],
        solve: SolveOptions::default(),
        aggregate: AggregateOptions {
            bootstrap: BootstrapOptions::default(),
            resample_by: ResampleBy::Auto,
            rank_by: RankBy::Metric,
        },
        monte_carlo: false,
        ospa2: false,
    };
    // The full data set, timed once: one pass takes about a minute, too long to sample.
    let evaluations = data.cases().len() * data.trackers().len();
    let started = std::time::Instant::now();
    let comparison = run(&data, &Distance::default(), &options, &|| {}).unwrap();
    let seconds = started.elapsed().as_secs_f64();
    println!(
        "{SEQUENCES} sequences x {STEPS} steps x about {OBJECTS} objects, {} trackers, {} threads: \
         {evaluations} evaluations and {} object-steps in {seconds:.2} s (with the ranking and \
         10,000 bootstrap resamples): {:.1} evaluations/s, {:.0} object-steps/s; ranking {}",
        data.trackers().len(),
        rayon::current_num_threads(),
        data.object_steps(),
        evaluations as f64 / seconds,
        data.object_steps() as f64 / seconds,
        comparison.settings[0]
            .trackers
            .iter()
            .map(|t| t.tracker.as_str())
            .collect::<Vec<_>>()
            .join(" < ")
    );
    // Sampled: the first 20 sequences (60 evaluations).
    let subset = Dataset::new(
        data.truths()[..20].to_vec(),
        data.cases()[..20].to_vec(),
        data.trackers()
            .iter()
            .map(|t| TrackerData {
                name: t.name.clone(),
                estimates: t.estimates[..20].to_vec(),
            })
            .collect(),
    )
    .unwrap();
    let mut group = c.benchmark_group("compare");
    group.sample_size(10);
    group.measurement_time(std::time::Duration::from_secs(60));
    group.throughput(Throughput::Elements(60));
    group.bench_function("evaluate_20x100x20_3_trackers", |b| {
        b.iter(|| evaluate(&subset, &Distance::default(), &options, &|| {}).unwrap())
    });
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
