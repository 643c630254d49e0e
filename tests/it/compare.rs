//! `switchyard compare`: aggregation checked by hand, the bootstrap on cases with a known
//! answer, thread-count independence, the sweep on the demonstration data, and the manifest and
//! the group columns giving the same numbers for the same data.

use std::fmt::Write as _;
use std::path::{Path, PathBuf};

use assert_cmd::Command;
use serde_json::Value;
use switchyard::compare::bootstrap::{percentile_interval, BootstrapOptions, Unit};
use switchyard::input::write_csv;
use switchyard::synth::{
    generate_truth, imitate_tracker, SceneConfig, ScenePreset, TrackerConfig, TrackerStyle,
};
use switchyard::trajectory::TrajectorySet;

fn switchyard() -> Command {
    Command::cargo_bin("switchyard").unwrap()
}

/// Runs the binary; returns standard output, failing the test on a non-zero exit.
fn run_ok(args: &[&str]) -> Vec<u8> {
    let output = switchyard().args(args).output().unwrap();
    assert!(
        output.status.success(),
        "switchyard {args:?} failed: {}",
        String::from_utf8_lossy(&output.stderr)
    );
    output.stdout
}

fn json(args: &[&str]) -> Value {
    serde_json::from_slice(&run_ok(args)).unwrap()
}

fn write(dir: &Path, name: &str, text: &str) -> String {
    let path = dir.join(name);
    std::fs::write(&path, text).unwrap();
    path.to_str().unwrap().to_string()
}

fn close(actual: &Value, expected: f64) {
    let actual = actual
        .as_f64()
        .unwrap_or_else(|| panic!("{actual} is not a number"));
    assert!(
        (actual - expected).abs() < 1e-9,
        "{actual} differs from {expected}"
    );
}

/// The tiny scene of the hand computation, with sequence columns; c = 2, p = 1, gamma = 2.
///
/// Sequence s1: a truth at x = 0 at steps 0 and 1. Tracker A follows it at x = 0.5 (d = 0.5 +
/// 0.5 = 1, all localisation); tracker B reports nothing (2 missed object-steps at c/2 = 1 each:
/// d = 2).
/// Sequence s2: a truth at x = 0 at step 0. A reports x = 1 (d = 1, localisation); B reports
/// x = 5, beyond c (1 missed and 1 false at 1 each: d = 2).
fn hand_scene(dir: &Path) -> (String, String, String) {
    let truth = write(
        dir,
        "truth.csv",
        "sequence,time,id,x\ns1,0,a,0\ns1,1,a,0\ns2,0,b,0\n",
    );
    let a = write(
        dir,
        "a.csv",
        "sequence,time,id,x\ns1,0,p,0.5\ns1,1,p,0.5\ns2,0,q,1\n",
    );
    let b = write(dir, "b.csv", "sequence,time,id,x\ns2,0,r,5\n");
    (truth, a, b)
}

#[test]
fn aggregation_matches_the_hand_computation() {
    let dir = tempfile::tempdir().unwrap();
    let (truth, a, b) = hand_scene(dir.path());
    let document = json(&[
        "compare",
        "--truth",
        &truth,
        "--estimate",
        &format!("B={b}"),
        "--estimate",
        &format!("A={a}"),
        "--state-columns",
        "x",
        "--cutoff",
        "2",
        "--per-sequence",
        "--format",
        "json",
    ]);
    assert_eq!(document["inputs"]["sequences"], 2);
    assert_eq!(document["inputs"]["cases"], 2);
    let setting = &document["settings"][0];
    assert_eq!(setting["ranking"], "A < B");
    let best = &setting["trackers"][0];
    assert_eq!(best["tracker"], "A");
    assert_eq!(best["rank"], 1);
    // A: d = 1 and 1: mean 1, RMS sqrt((1 + 1) / 2) = 1; localisation mean (1 + 1) / 2 = 1.
    close(&best["metric_mean"], 1.0);
    close(&best["metric_rms"], 1.0);
    close(&best["localization"], 1.0);
    close(&best["missed"], 0.0);
    assert!(best["difference"].is_null());
    let worse = &setting["trackers"][1];
    assert_eq!(worse["tracker"], "B");
    // B: d = 2 and 2: mean 2, RMS 2; missed (2 + 1) / 2 = 1.5, false (0 + 1) / 2 = 0.5 (they
    // add up to the mean d^p 2); 3 missed and 1 false object-steps in total.
    close(&worse["metric_mean"], 2.0);
    close(&worse["metric_rms"], 2.0);
    close(&worse["total_mean"], 2.0);
    close(&worse["missed"], 1.5);
    close(&worse["false"], 0.5);
    close(&worse["missed_count"], 3.0);
    close(&worse["false_count"], 1.0);
    close(&worse["switch_count"], 0.0);
    // B - A per sequence: 2 - 1 = 1 and 2 - 1 = 1. Every resample of two equal differences has
    // mean 1, so the percentile interval is [1, 1], above 0.
    let difference = &worse["difference"];
    assert_eq!(difference["against"], "A");
    close(&difference["mean"], 1.0);
    close(&difference["lower"], 1.0);
    close(&difference["upper"], 1.0);
    assert_eq!(difference["verdict"], "worse");
    assert_eq!(document["bootstrap"]["resample_by"], "sequence");
    assert_eq!(document["bootstrap"]["units"], 2);
    // Per sequence: s1 alone gives A 1 and B 2.
    let s1 = &setting["sequences"][0];
    assert_eq!(s1["sequence"], "s1");
    close(&s1["trackers"][0]["metric_mean"], 1.0);
    close(&s1["trackers"][1]["metric_mean"], 2.0);
    close(&s1["trackers"][1]["missed"], 2.0);
}

#[test]
fn case_rows_and_the_per_step_ranking_match_the_hand_computation() {
    // hand_scene: s1 spans steps 0 and 1 (2 steps), s2 step 0 (1 step); A's d is 1 on both,
    // B's 2 on both (p = 1, so d^p = d). Per step (d^p / steps): A 1/2 and 1/1, B 2/2 and 2/1.
    let dir = tempfile::tempdir().unwrap();
    let (truth, a, b) = hand_scene(dir.path());
    let base = [
        "compare",
        "--truth",
        &truth,
        "--estimate",
        &format!("B={b}"),
        "--estimate",
        &format!("A={a}"),
        "--state-columns",
        "x",
        "--cutoff",
        "2",
        "--per-case",
        "--rank-by",
        "per-step",
    ];
    let document = json(&[&base[..], &["--format", "json"]].concat());
    assert_eq!(document["rank_by"], "per_step");
    let cases = document["cases"].as_array().unwrap();
    // One row per (setting, tracker, case): trackers in the order given, cases sorted.
    let keys: Vec<(&str, &str, u64)> = cases
        .iter()
        .map(|c| {
            (
                c["tracker"].as_str().unwrap(),
                c["sequence"].as_str().unwrap(),
                c["steps"].as_u64().unwrap(),
            )
        })
        .collect();
    assert_eq!(
        keys,
        [
            ("B", "s1", 2),
            ("B", "s2", 1),
            ("A", "s1", 2),
            ("A", "s2", 1)
        ]
    );
    for (row, d, per_step) in [(0, 2.0, 1.0), (1, 2.0, 2.0), (2, 1.0, 0.5), (3, 1.0, 1.0)] {
        close(&cases[row]["metric"], d);
        close(&cases[row]["total"], d);
        close(&cases[row]["per_step"], per_step);
        close(&cases[row]["cutoff"], 2.0);
    }
    // B on s2: 1 missed and 1 false object-step at c^p / 2 = 1 each (hand_scene's note).
    close(&cases[1]["missed_count"], 1.0);
    close(&cases[1]["false_count"], 1.0);
    close(&cases[1]["missed"], 1.0);
    assert_eq!(cases[1]["run"], "");
    // Means per step: A (0.5 + 1) / 2 = 0.75, B (1 + 2) / 2 = 1.5; B - A per sequence 0.5 and
    // 1, mean 0.75. Resamples of two sequences hold {0.5, 0.5}, {0.5, 1} or {1, 1} with
    // probabilities 1/4, 1/2, 1/4, so the 2.5% and 97.5% quantiles of 10,000 resamples fall
    // among the 0.5s and the 1s: the interval is [0.5, 1].
    let setting = &document["settings"][0];
    assert_eq!(setting["ranking"], "A < B");
    close(&setting["trackers"][0]["per_step_mean"], 0.75);
    close(&setting["trackers"][1]["per_step_mean"], 1.5);
    let difference = &setting["trackers"][1]["difference"];
    close(&difference["mean"], 0.75);
    close(&difference["lower"], 0.5);
    close(&difference["upper"], 1.0);
    // The CSV holds the same rows, in the same order.
    let csv = String::from_utf8(run_ok(&[&base[..], &["--format", "csv"]].concat())).unwrap();
    let lines: Vec<&str> = csv.lines().collect();
    assert_eq!(
        lines[0],
        "cutoff,order,switch_penalty,tracker,sequence,run,metric,total,localisation,missed,false,\
         switching,missed_count,false_count,switch_count,integral,steps,per_step"
    );
    assert_eq!(lines[2], "2,1,2,B,s2,,2,2,0,1,1,0,1,1,0,true,1,2");
    assert_eq!(lines.len(), 5);
}

#[test]
fn one_case_says_no_interval_can_be_formed_and_text_fits_100_columns() {
    let dir = tempfile::tempdir().unwrap();
    let (truth, a, b) = hand_scene(dir.path());
    // Sequence s1 alone: one case, so the bootstrap has one unit (common practice: a
    // percentile interval needs at least two units to vary).
    let one = |path: &str, name: &str| {
        let text = std::fs::read_to_string(path).unwrap();
        let kept: String = text
            .lines()
            .filter(|l| !l.starts_with("s2"))
            .map(|l| format!("{l}\n"))
            .collect();
        write(dir.path(), name, &kept)
    };
    let (truth, a, b) = (one(&truth, "t1.csv"), one(&a, "a1.csv"), one(&b, "b1.csv"));
    let text = String::from_utf8(run_ok(&[
        "compare",
        "--truth",
        &truth,
        "--estimate",
        &format!("A={a}"),
        "--estimate",
        &format!("B={b}"),
        "--state-columns",
        "x",
        "--cutoff",
        "2",
    ]))
    .unwrap();
    assert!(
        text.contains("one run only: no interval can be formed."),
        "{text}"
    );
    assert!(!text.contains("apart"), "{text}");
    // At p = 1, mean d^p is mean d: one column only.
    let header = |text: &str| -> Vec<String> {
        text.lines()
            .filter(|l| l.starts_with("rank"))
            .map(String::from)
            .collect()
    };
    assert!(
        header(&text).iter().all(|h| !h.contains("mean d^p")),
        "{text}"
    );
    // The demonstration data's sweep with every section: every line within 100 columns except
    // the line naming the input files.
    let text = String::from_utf8(run_ok(&[
        "compare",
        "--truth",
        "demo-data/truth.csv",
        "--estimate",
        "swaps=demo-data/runs/tracker-swaps.csv",
        "--estimate",
        "fragments=demo-data/runs/tracker-fragments.csv",
        "--cutoff",
        "10,40",
        "--order",
        "1,2",
        "--per-sequence",
        "--per-case",
    ]))
    .unwrap();
    for line in text.lines().filter(|l| !l.starts_with("trackers  ")) {
        assert!(
            line.chars().count() <= 100,
            "{} columns: {line}",
            line.len()
        );
    }
    // At p = 2 mean d^p is its own column.
    assert!(
        header(&text).iter().any(|h| h.contains("mean d^p")),
        "{text}"
    );
}

#[test]
fn monte_carlo_steps_match_the_hand_computation() {
    // One sequence, a truth shared by two runs (the truth has no run column): an object at x = 0
    // at steps 0 and 1. c = 2, p = 2, so a missed object costs c^p / 2 = 2 and GOSPA = sqrt(2).
    // Run 1: the track is at x = 1 at step 0 (GOSPA 1, localisation 1), absent at step 1
    // (GOSPA sqrt 2, missed 2). Run 2: exact at both steps (GOSPA 0).
    let dir = tempfile::tempdir().unwrap();
    let truth = write(dir.path(), "t.csv", "time,id,x\n0,a,0\n1,a,0\n");
    let estimate = write(
        dir.path(),
        "e.csv",
        "run,time,id,x\n1,0,p,1\n2,0,p,0\n2,1,p,0\n",
    );
    let text = run_ok(&[
        "compare",
        "--truth",
        &truth,
        "--estimate",
        &format!("T={estimate}"),
        "--state-columns",
        "x",
        "--cutoff",
        "2",
        "--order",
        "2",
        "--monte-carlo",
        "--format",
        "csv",
    ]);
    let text = String::from_utf8(text).unwrap();
    let rows: Vec<Vec<f64>> = text
        .lines()
        .skip(1)
        .map(|line| {
            line.split(',')
                .enumerate()
                .filter(|(i, _)| ![2, 3].contains(i))
                .map(|(_, v)| v.parse().unwrap())
                .collect()
        })
        .collect();
    assert!(text.starts_with(
        "cutoff,order,sequence,tracker,time,runs,mean,rms,localisation,missed,false,missed_count,false_count\n"
    ));
    assert_eq!(rows.len(), 2);
    // Columns left: cutoff, order, time, runs, mean, rms, localisation, missed, false, missed
    // count, false count.
    // Step 0: values 1 and 0 -> mean 1/2, RMS sqrt(1/2), localisation 1/2.
    let expected0 = [
        2.0,
        2.0,
        0.0,
        2.0,
        0.5,
        0.5f64.sqrt(),
        0.5,
        0.0,
        0.0,
        0.0,
        0.0,
    ];
    // Step 1: values sqrt 2 and 0 -> mean sqrt(2)/2, RMS 1, missed 1, missed count 1/2.
    let expected1 = [
        2.0,
        2.0,
        1.0,
        2.0,
        2f64.sqrt() / 2.0,
        1.0,
        0.0,
        1.0,
        0.0,
        0.5,
        0.0,
    ];
    for (row, expected) in rows.iter().zip([expected0, expected1]) {
        for (a, e) in row.iter().zip(expected) {
            assert!((a - e).abs() < 1e-12, "{row:?} vs {expected:?}");
        }
    }
}

#[test]
fn bootstrap_interval_equals_the_exact_quantiles_of_the_resampling_distribution() {
    // Differences 0, 1, 2, 10: the 4^4 = 256 equally likely resamples give the exact
    // distribution of the resampled mean, enumerated here from the definition. Its 2.5% and
    // 97.5% quantiles fall strictly inside flat steps of the distribution function (checked
    // below), so with 100,000 resamples the percentile interval equals them exactly.
    // (scipy.stats.bootstrap(method='percentile') gives the same (0.5, 7.75) on these values.)
    let values = [0.0, 1.0, 2.0, 10.0];
    let mut means = Vec::with_capacity(256);
    for a in values {
        for b in values {
            for c in values {
                for d in values {
                    means.push((a + b + c + d) / 4.0);
                }
            }
        }
    }
    means.sort_by(f64::total_cmp);
    let cdf = |x: f64| means.iter().filter(|&&m| m <= x).count() as f64 / 256.0;
    let quantile = |q: f64| *means.iter().find(|&&m| cdf(m) >= q).unwrap();
    let (low, high) = (quantile(0.025), quantile(0.975));
    assert_eq!((low, high), (0.5, 7.75));
    // The levels are well inside the steps: P(mean < 0.5) = 5/256, P(mean <= 0.5) = 15/256;
    // P(mean < 7.75) = 247/256, P(mean <= 7.75) = 251/256.
    assert!(cdf(0.25) < 0.02 && cdf(0.5) > 0.05);
    assert!(cdf(7.5) < 0.966 && cdf(7.75) > 0.98);
    let units: Vec<Unit> = values.iter().map(|&sum| Unit { sum, count: 1 }).collect();
    let options = BootstrapOptions {
        resamples: 100_000,
        seed: 7,
        confidence: 0.95,
    };
    let interval = percentile_interval(&units, &options).unwrap();
    assert!((interval.lower - low).abs() < 1e-12, "{interval:?}");
    assert!((interval.upper - high).abs() < 1e-12, "{interval:?}");
}

#[test]
fn bootstrap_interval_is_close_to_the_normal_interval_for_a_large_sample() {
    // For the mean of many independent values the bootstrap distribution is close to normal,
    // so the percentile interval approaches mean +- 1.96 s / sqrt(n) (Efron & Tibshirani 1993,
    // ch. 13). Values: 400 fixed pseudo-random numbers in [0, 1).
    let n = 400;
    let mut state: u64 = 12345;
    let values: Vec<f64> = (0..n)
        .map(|_| {
            // A linear congruential generator (Knuth's MMIX constants): only a fixed sample.
            state = state
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (state >> 11) as f64 / (1u64 << 53) as f64
        })
        .collect();
    let mean = values.iter().sum::<f64>() / n as f64;
    let variance = values.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / n as f64;
    let half = 1.959964 * (variance / n as f64).sqrt();
    let units: Vec<Unit> = values.iter().map(|&sum| Unit { sum, count: 1 }).collect();
    let interval = percentile_interval(&units, &BootstrapOptions::default()).unwrap();
    // Each end within 10% of the half-width: the bootstrap's Monte Carlo error with 10,000
    // resamples is about 2%, the remaining skewness of the mean of uniforms is nil.
    assert!(
        (interval.lower - (mean - half)).abs() < 0.1 * half,
        "{interval:?}"
    );
    assert!(
        (interval.upper - (mean + half)).abs() < 0.1 * half,
        "{interval:?}"
    );
}

/// Scenes for the multi-sequence tests: `sequences` seeded truths of 40 steps and 5 objects,
/// each followed in `runs` runs by two trackers (mixed faults and swaps-only faults).
struct Scenes {
    truths: Vec<TrajectorySet>,
    /// [tracker][sequence][run]
    estimates: Vec<Vec<Vec<TrajectorySet>>>,
}

const NAMES: [&str; 2] = ["mixed", "swapper"];

fn scenes(sequences: usize, runs: usize) -> Scenes {
    let scene = SceneConfig::spaced(40, 5.0);
    let configs = [
        TrackerConfig::styled(ScenePreset::Small, TrackerStyle::Mixed),
        TrackerConfig::styled(ScenePreset::Small, TrackerStyle::Swaps),
    ];
    let truths: Vec<TrajectorySet> = (0..sequences)
        .map(|s| generate_truth(&scene, 100 + s as u64).unwrap())
        .collect();
    let estimates = configs
        .iter()
        .enumerate()
        .map(|(t, config)| {
            truths
                .iter()
                .enumerate()
                .map(|(s, truth)| {
                    (0..runs)
                        .map(|r| {
                            let seed = 1_000 * t as u64 + 10 * s as u64 + r as u64;
                            imitate_tracker(truth, config, seed).unwrap()
                        })
                        .collect()
                })
                .collect()
        })
        .collect();
    Scenes { truths, estimates }
}

/// Appends the rows of a set with leading group values.
fn grouped_rows(out: &mut String, groups: &[&str], set: &TrajectorySet) {
    for trajectory in set.trajectories() {
        for (step, state) in trajectory.points() {
            for g in groups {
                write!(out, "{g},").unwrap();
            }
            writeln!(out, "{step},{},{},{}", trajectory.id(), state[0], state[1]).unwrap();
        }
    }
}

/// Writes the scenes as grouped files (truth per sequence, estimates per sequence and run);
/// returns the truth and the estimate arguments.
fn write_grouped(dir: &Path, scenes: &Scenes) -> (String, Vec<String>) {
    let mut truth = String::from("sequence,time,id,x,y\n");
    for (s, set) in scenes.truths.iter().enumerate() {
        grouped_rows(&mut truth, &[&format!("seq{s}")], set);
    }
    let truth = write(dir, "truth.csv", &truth);
    let mut estimates = Vec::new();
    for (t, per_sequence) in scenes.estimates.iter().enumerate() {
        let mut text = String::from("sequence,run,time,id,x,y\n");
        // Rows in reverse order of runs: the cases are sorted whatever the file order.
        for (s, runs) in per_sequence.iter().enumerate().rev() {
            for (r, set) in runs.iter().enumerate().rev() {
                grouped_rows(&mut text, &[&format!("seq{s}"), &(r + 1).to_string()], set);
            }
        }
        let path = write(dir, &format!("{}.csv", NAMES[t]), &text);
        estimates.push(format!("{}={path}", NAMES[t]));
    }
    (truth, estimates)
}

/// Writes one file per truth and per (tracker, sequence, run) and a manifest listing them
/// (relative paths); returns the manifest's path.
fn write_manifest(dir: &Path, scenes: &Scenes, json: bool) -> PathBuf {
    let files = dir.join("files");
    std::fs::create_dir_all(&files).unwrap();
    let save = |name: &str, set: &TrajectorySet| {
        let mut bytes = Vec::new();
        write_csv(set, &["x", "y"], &mut bytes).unwrap();
        std::fs::write(files.join(name), bytes).unwrap();
    };
    let mut csv = String::from("tracker,sequence,run,truth,estimate\n");
    let mut entries = Vec::new();
    for (s, truth) in scenes.truths.iter().enumerate() {
        save(&format!("truth{s}.csv"), truth);
    }
    for (t, per_sequence) in scenes.estimates.iter().enumerate() {
        for (s, runs) in per_sequence.iter().enumerate() {
            for (r, set) in runs.iter().enumerate() {
                let name = format!("{}-{s}-{}.csv", NAMES[t], r + 1);
                save(&name, set);
                writeln!(
                    csv,
                    "{},seq{s},{},files/truth{s}.csv,files/{name}",
                    NAMES[t],
                    r + 1
                )
                .unwrap();
                entries.push(serde_json::json!({
                    "tracker": NAMES[t],
                    "sequence": format!("seq{s}"),
                    "run": r + 1,
                    "truth": format!("files/truth{s}.csv"),
                    "estimate": format!("files/{name}"),
                }));
            }
        }
    }
    if json {
        let path = dir.join("manifest.json");
        std::fs::write(&path, serde_json::to_string_pretty(&entries).unwrap()).unwrap();
        path
    } else {
        let path = dir.join("manifest.csv");
        std::fs::write(&path, csv).unwrap();
        path
    }
}

fn compare_args<'a>(truth: &'a str, estimates: &'a [String], rest: &[&'a str]) -> Vec<&'a str> {
    let mut args = vec!["compare", "--truth", truth];
    for e in estimates {
        args.push("--estimate");
        args.push(e);
    }
    args.extend_from_slice(rest);
    args
}

#[test]
fn manifest_and_group_columns_give_the_same_numbers() {
    let dir = tempfile::tempdir().unwrap();
    let data = scenes(3, 2);
    let (truth, estimates) = write_grouped(dir.path(), &data);
    let csv_manifest = write_manifest(dir.path(), &data, false);
    let json_manifest = write_manifest(dir.path(), &data, true);
    for rest in [
        &["--cutoff", "10", "--format", "csv"][..],
        &["--cutoff", "10", "--per-sequence", "--format", "csv"][..],
        &["--cutoff", "10", "--monte-carlo", "--format", "csv"][..],
    ] {
        let by_columns = run_ok(&compare_args(&truth, &estimates, rest));
        for manifest in [&csv_manifest, &json_manifest] {
            let mut args = vec!["compare", "--manifest", manifest.to_str().unwrap()];
            args.extend_from_slice(rest);
            let by_manifest = run_ok(&args);
            assert_eq!(
                String::from_utf8_lossy(&by_columns),
                String::from_utf8_lossy(&by_manifest),
                "{rest:?} with {}",
                manifest.display()
            );
        }
        // 3 sequences x 2 runs x 2 trackers: the ranking has 2 rows, the per-sequence table 6.
        let lines = String::from_utf8_lossy(&by_columns).lines().count();
        match rest[2] {
            "--per-sequence" => assert_eq!(lines, 1 + 6),
            "--format" => assert_eq!(lines, 1 + 2),
            // Per-step rows: 2 trackers x 3 sequences x 40 steps.
            _ => assert_eq!(lines, 1 + 2 * 3 * 40),
        }
    }
}

#[test]
fn output_does_not_depend_on_the_thread_count() {
    let dir = tempfile::tempdir().unwrap();
    let data = scenes(4, 3);
    let (truth, estimates) = write_grouped(dir.path(), &data);
    let rest = [
        "--cutoff",
        "5,10",
        "--per-sequence",
        "--monte-carlo",
        "--bootstrap-resamples",
        "2000",
        "--format",
        "json",
    ];
    // The output of `args` with each number of threads.
    let with_threads = |args: &[&str], counts: &[&str]| -> Vec<Vec<u8>> {
        counts
            .iter()
            .map(|threads| {
                let output = switchyard()
                    .env("RAYON_NUM_THREADS", threads)
                    .args(args)
                    .output()
                    .unwrap();
                assert!(output.status.success());
                output.stdout
            })
            .collect()
    };
    let args = compare_args(&truth, &estimates, &rest);
    let outputs = with_threads(&args, &["1", "2", "3"]);
    assert!(!outputs[0].is_empty());
    assert_eq!(outputs[0], outputs[1], "1 thread vs 2");
    assert_eq!(outputs[0], outputs[2], "1 thread vs 3");

    // With classes (a class column whose label depends on the step, so tracks are cut too).
    let classed = |path: &str| {
        let text = std::fs::read_to_string(path).unwrap();
        let mut lines = text.lines();
        let header = lines.next().unwrap();
        let time = header.split(',').position(|c| c == "time").unwrap();
        let mut out = format!("{header},kind\n");
        for line in lines {
            let step: i64 = line.split(',').nth(time).unwrap().parse().unwrap();
            let kind = if step % 3 == 0 { "b" } else { "a" };
            writeln!(out, "{line},{kind}").unwrap();
        }
        std::fs::write(path, out).unwrap();
    };
    classed(&truth);
    for estimate in &estimates {
        classed(estimate.split_once('=').unwrap().1);
    }
    let mut rest = rest.to_vec();
    rest.extend(["--class-column", "kind", "--per-case"]);
    let args = compare_args(&truth, &estimates, &rest);
    let outputs = with_threads(&args, &["1", "3"]);
    assert!(String::from_utf8_lossy(&outputs[0]).contains("\"classes\""));
    assert_eq!(outputs[0], outputs[1], "with classes, 1 thread vs 3");
}

#[test]
fn identical_trackers_tie_and_a_perfect_tracker_is_clearly_better() {
    let dir = tempfile::tempdir().unwrap();
    let data = scenes(12, 1);
    let (truth, mut estimates) = write_grouped(dir.path(), &data);
    // A copy of "mixed" under another name, and a perfect tracker (the truth itself).
    let mixed_file = estimates[0].split_once('=').unwrap().1.to_string();
    estimates.push(format!("twin={mixed_file}"));
    let mut perfect = String::from("sequence,run,time,id,x,y\n");
    for (s, set) in data.truths.iter().enumerate() {
        grouped_rows(&mut perfect, &[&format!("seq{s}"), "1"], set);
    }
    estimates.push(format!(
        "perfect={}",
        write(dir.path(), "perfect.csv", &perfect)
    ));
    let document = json(&compare_args(
        &truth,
        &estimates,
        &["--cutoff", "10", "--format", "json"],
    ));
    let trackers = document["settings"][0]["trackers"].as_array().unwrap();
    let find = |name: &str| trackers.iter().find(|t| t["tracker"] == name).unwrap();
    // The perfect tracker scores d = 0 everywhere and ranks first alone.
    assert_eq!(trackers[0]["tracker"], "perfect");
    close(&trackers[0]["metric_mean"], 0.0);
    // mixed and its twin: the same numbers and one shared rank. Each is compared with the
    // perfect tracker and is clearly worse: every difference is positive, so the whole
    // interval is.
    let (mixed, twin) = (find("mixed"), find("twin"));
    assert_eq!(mixed["rank"], twin["rank"]);
    assert_eq!(mixed["metric_mean"], twin["metric_mean"]);
    for t in [mixed, twin] {
        let difference = &t["difference"];
        assert!(difference["lower"].as_f64().unwrap() > 0.0);
        assert_eq!(difference["verdict"], "worse");
    }
    // mixed and its twin alone: they tie at rank 1; the twin's differences are all 0, so its
    // interval is [0, 0], which contains 0, and the plain statement says the data cannot tell
    // them apart.
    let estimates = vec![estimates[0].clone(), format!("twin={mixed_file}")];
    let document = json(&compare_args(
        &truth,
        &estimates,
        &["--cutoff", "10", "--format", "json"],
    ));
    let twin = document["settings"][0]["trackers"]
        .as_array()
        .unwrap()
        .iter()
        .find(|t| t["tracker"] == "twin")
        .unwrap()
        .clone();
    assert_eq!(twin["rank"], 1);
    close(&twin["difference"]["lower"], 0.0);
    close(&twin["difference"]["upper"], 0.0);
    assert_eq!(twin["difference"]["verdict"], "indistinguishable");
    let text = String::from_utf8(run_ok(&compare_args(
        &truth,
        &estimates,
        &["--cutoff", "10"],
    )))
    .unwrap();
    assert!(
        text.lines().any(|l| l.trim_start().starts_with("twin")
            && l.ends_with("not told apart from mixed: the interval contains 0.")),
        "{text}"
    );
}

#[test]
fn sweep_on_the_demo_data_matches_score_at_every_setting() {
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data");
    let truth = demo.join("truth.csv");
    let swaps = demo.join("tracker-swaps.csv");
    let fragments = demo.join("tracker-fragments.csv");
    let (truth, swaps, fragments) = (
        truth.to_str().unwrap(),
        swaps.to_str().unwrap(),
        fragments.to_str().unwrap(),
    );
    let document = json(&[
        "compare",
        "--truth",
        truth,
        "--estimate",
        &format!("swaps={swaps}"),
        "--estimate",
        &format!("fragments={fragments}"),
        "--cutoff",
        "10,20",
        "--switch-penalty",
        "5,40",
        "--format",
        "json",
    ]);
    let settings = document["settings"].as_array().unwrap();
    let grid: Vec<(f64, f64)> = settings
        .iter()
        .map(|s| {
            (
                s["cutoff"].as_f64().unwrap(),
                s["switch_penalty"].as_f64().unwrap(),
            )
        })
        .collect();
    assert_eq!(grid, [(10.0, 5.0), (10.0, 40.0), (20.0, 5.0), (20.0, 40.0)]);
    let mut rankings = Vec::new();
    for setting in settings {
        let (c, g) = (
            setting["cutoff"].to_string(),
            setting["switch_penalty"].to_string(),
        );
        for t in setting["trackers"].as_array().unwrap() {
            let file = if t["tracker"] == "swaps" {
                swaps
            } else {
                fragments
            };
            // The same evaluation through `score`: one case, so the mean is the score itself.
            let score = json(&[
                "score",
                "--truth",
                truth,
                "--estimate",
                file,
                "--cutoff",
                &c,
                "--switch-penalty",
                &g,
                "--format",
                "json",
            ]);
            assert_eq!(
                t["metric_mean"], score["metric"],
                "{c} {g} {}",
                t["tracker"]
            );
            assert_eq!(t["switching"], score["switching"]);
            assert_eq!(t["switch_count"], score["switch_count"]);
            // One sequence with one run: no interval.
            if !t["difference"].is_null() {
                assert_eq!(t["difference"]["verdict"], "undetermined");
                assert!(t["difference"]["lower"].is_null());
            }
        }
        rankings.push(setting["ranking"].as_str().unwrap().to_string());
    }
    let stable = rankings.iter().all(|r| *r == rankings[0]);
    assert_eq!(document["ranking_stable"], stable);
    // The demo's tracker A (swaps) keeps whole tracks; B breaks them and adds false tracks:
    // B costs more at every one of these settings (demo-data/README.md).
    assert!(
        rankings.iter().all(|r| r == "swaps < fragments"),
        "{rankings:?}"
    );
}

#[test]
fn bad_input_names_file_line_and_column() {
    let dir = tempfile::tempdir().unwrap();
    let truth = write(dir.path(), "t.csv", "sequence,time,id,x,y\ns1,0,a,0,0\n");
    let bad = write(
        dir.path(),
        "e.csv",
        "sequence,time,id,x,y\ns1,0,p,0,0\n,1,p,0,0\n",
    );
    let unknown = write(
        dir.path(),
        "u.csv",
        "sequence,time,id,x,y\ns1,0,p,0,0\ns9,0,p,0,0\n",
    );
    let output = switchyard()
        .args([
            "compare",
            "--truth",
            &truth,
            "--estimate",
            &bad,
            "--cutoff",
            "5",
        ])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(1));
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(
        stderr.contains("e.csv, line 3, column 1 (\"sequence\"): the group value is empty"),
        "{stderr}"
    );
    let output = switchyard()
        .args([
            "compare",
            "--truth",
            &truth,
            "--estimate",
            &unknown,
            "--cutoff",
            "5",
        ])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(1));
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(
        stderr.contains("u.csv, line 3: sequence \"s9\" is not in the truth"),
        "{stderr}"
    );
    // A manifest in which a tracker lacks a case.
    let manifest = write(
        dir.path(),
        "m.csv",
        "tracker,sequence,truth,estimate\nA,s1,t.csv,e.csv\nA,s2,t.csv,e.csv\nB,s1,t.csv,e.csv\n",
    );
    let output = switchyard()
        .args(["compare", "--manifest", &manifest, "--cutoff", "5"])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(1));
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(
        stderr.contains("tracker \"B\" has no entry for sequence \"s2\" (line 3 lists it)"),
        "{stderr}"
    );
    // Two trackers with one name, and csv asked for two tables.
    let output = switchyard()
        .args([
            "compare",
            "--truth",
            &truth,
            "--estimate",
            &format!("A={bad}"),
            "--estimate",
            &format!("A={unknown}"),
            "--cutoff",
            "5",
        ])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(1));
    let output = switchyard()
        .args([
            "compare",
            "--truth",
            &truth,
            "--estimate",
            &unknown,
            "--cutoff",
            "5",
            "--per-sequence",
            "--monte-carlo",
            "--format",
            "csv",
        ])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(1));
}

/// A huge cut-off gives a huge but finite d, and its RMS over cases is that d, not infinity
/// (IEEE 754: squares of values above about 1.34e154 overflow; the RMS of equal values is the
/// value, by definition). Truth a at steps 1-2, track p at step 1 only: one missed object-step,
/// d = c^p / 2 = 5e199 at c = 1e200, p = 1.
#[test]
fn a_huge_metric_has_a_finite_rms() {
    let dir = tempfile::tempdir().unwrap();
    let truth = write(dir.path(), "t.csv", "time,id,x\n1,a,0\n2,a,0\n");
    let estimate = write(dir.path(), "e.csv", "time,id,x\n1,p,0\n");
    let doc = json(&[
        "compare",
        "--truth",
        &truth,
        "--estimate",
        &format!("A={estimate}"),
        "--estimate",
        &format!("B={truth}"),
        "--state-columns",
        "x",
        "-c",
        "1e200",
        "-f",
        "json",
    ]);
    let trackers = doc["settings"][0]["trackers"].as_array().unwrap();
    let a = trackers.iter().find(|t| t["tracker"] == "A").unwrap();
    let (mean, rms) = (
        a["metric_mean"].as_f64().unwrap(),
        a["metric_rms"].as_f64().unwrap(),
    );
    assert!((mean / 5e199 - 1.0).abs() < 1e-12, "{mean}");
    assert!((rms / 5e199 - 1.0).abs() < 1e-12, "{rms}");
}

/// With --time-step the Monte Carlo per-step summaries give each step's time in the input's
/// units beside the step, as `switchyard steps` does: text column `time`, CSV column
/// `input_time` and JSON key `input_time` after the step. The expected times are the ones the
/// input file itself holds (0.3 and 0.6, read as steps 3 and 6 with DT = 0.1), and the empty
/// steps between them read 0.4 and 0.5 (step x DT to DT's decimals, as `steps` gives them:
/// checked against its CSV on the same files).
#[test]
fn monte_carlo_steps_carry_the_input_time() {
    let dir = tempfile::tempdir().unwrap();
    let truth = write(dir.path(), "t.csv", "time,id,x\n0.3,a,0\n0.6,a,0\n");
    let estimate = write(
        dir.path(),
        "e.csv",
        "run,time,id,x\n1,0.3,p,1\n2,0.3,p,0\n2,0.6,p,0\n",
    );
    let named = format!("T={estimate}");
    let args = |format: &'static str| {
        vec![
            "compare",
            "--truth",
            &truth,
            "--estimate",
            &named,
            "--state-columns",
            "x",
            "--cutoff",
            "2",
            "--monte-carlo",
            "--time-step",
            "0.1",
            "--format",
            format,
        ]
    };
    let csv = String::from_utf8(run_ok(&args("csv"))).unwrap();
    let mut lines = csv.lines();
    assert_eq!(
        lines.next().unwrap(),
        "cutoff,order,sequence,tracker,time,input_time,runs,mean,rms,localisation,missed,false,missed_count,false_count"
    );
    let cells: Vec<Vec<&str>> = lines.map(|l| l.split(',').collect()).collect();
    let steps: Vec<&str> = cells.iter().map(|c| c[4]).collect();
    let times: Vec<&str> = cells.iter().map(|c| c[5]).collect();
    assert_eq!(steps, ["3", "4", "5", "6"]);
    assert_eq!(times, ["0.3", "0.4", "0.5", "0.6"]);
    // The same times as `switchyard steps` writes for run 2 on its own.
    let run2 = write(dir.path(), "r2.csv", "time,id,x\n0.3,p,0\n0.6,p,0\n");
    let steps_csv = String::from_utf8(run_ok(&[
        "steps",
        "--truth",
        &truth,
        "--estimate",
        &run2,
        "--state-columns",
        "x",
        "--cutoff",
        "2",
        "--time-step",
        "0.1",
        "--format",
        "csv",
    ]))
    .unwrap();
    let steps_times: Vec<&str> = steps_csv
        .lines()
        .skip(1)
        .map(|l| l.split(',').nth(1).unwrap())
        .collect();
    assert_eq!(steps_times, times);
    // Step 3: GOSPA 1 (run 1, off by 1) and 0 (run 2): mean 1/2, the values unchanged by the
    // extra column.
    assert!((cells[0][7].parse::<f64>().unwrap() - 0.5).abs() < 1e-12);

    let doc: Value = serde_json::from_slice(&run_ok(&args("json"))).unwrap();
    assert_eq!(doc["inputs"]["time_step"], 0.1);
    let entries = doc["monte_carlo"][0]["steps"].as_array().unwrap();
    let json_times: Vec<f64> = entries
        .iter()
        .map(|e| e["input_time"].as_f64().unwrap())
        .collect();
    assert_eq!(json_times, [0.3, 0.4, 0.5, 0.6]);
    // input_time follows time, as in `steps`.
    let text = String::from_utf8(run_ok(&args("json"))).unwrap();
    assert!(
        text.contains("\"time\": 4,\n          \"input_time\": 0.4,"),
        "{text}"
    );
    close(&entries[0]["mean"], 0.5);

    let text = String::from_utf8(run_ok(&args("text"))).unwrap();
    let at = text.find("Per-step GOSPA over runs").unwrap();
    let mut table = text[at..].lines().skip(1);
    let header: Vec<&str> = table.next().unwrap().split_whitespace().collect();
    assert_eq!(&header[..3], ["step", "time", "mean"]);
    let rows: Vec<Vec<&str>> = table.map(|l| l.split_whitespace().collect()).collect();
    let text_times: Vec<&str> = rows.iter().map(|r| r[1]).collect();
    assert_eq!(text_times, ["0.3", "0.4", "0.5", "0.6"]);

    // Without --time-step (integer steps in the files) the column is absent.
    let truth = write(dir.path(), "ti.csv", "time,id,x\n3,a,0\n6,a,0\n");
    let estimate = write(
        dir.path(),
        "ei.csv",
        "run,time,id,x\n1,3,p,1\n2,3,p,0\n2,6,p,0\n",
    );
    let csv = String::from_utf8(run_ok(&[
        "compare",
        "--truth",
        &truth,
        "--estimate",
        &format!("T={estimate}"),
        "--state-columns",
        "x",
        "--cutoff",
        "2",
        "--monte-carlo",
        "--format",
        "csv",
    ]))
    .unwrap();
    assert!(
        csv.starts_with("cutoff,order,sequence,tracker,time,runs,"),
        "{csv}"
    );
}

/// The per-step RMS over runs of a huge but finite GOSPA is finite: with c = 1e200 and p = 1 a
/// missed object costs GOSPA (c^p / 2)^(1/p) = 5e199 (alpha = 2, GOSPA definition). Run 1
/// misses the truth at step 2, run 2 follows it: the values 5e199 and 0 have mean 2.5e199 and
/// RMS 5e199 / sqrt(2) (definitions of mean and RMS), where squaring 5e199 overflows a double
/// (IEEE 754: above about 1.34e154).
#[test]
fn a_huge_per_step_gospa_has_a_finite_rms_over_runs() {
    let dir = tempfile::tempdir().unwrap();
    let truth = write(dir.path(), "t.csv", "time,id,x\n1,a,0\n2,a,0\n");
    let estimate = write(
        dir.path(),
        "e.csv",
        "run,time,id,x\n1,1,p,0\n2,1,p,0\n2,2,p,0\n",
    );
    let doc = json(&[
        "compare",
        "--truth",
        &truth,
        "--estimate",
        &format!("A={estimate}"),
        "--state-columns",
        "x",
        "-c",
        "1e200",
        "--monte-carlo",
        "-f",
        "json",
    ]);
    let step = &doc["monte_carlo"][0]["steps"][1];
    assert_eq!(step["time"], 2);
    let (mean, rms) = (
        step["mean"].as_f64().unwrap(),
        step["rms"].as_f64().unwrap(),
    );
    assert!((mean / 2.5e199 - 1.0).abs() < 1e-12, "{mean}");
    assert!((rms / (5e199 / 2f64.sqrt()) - 1.0).abs() < 1e-12, "{rms}");
}

/// The rows of one sequence of a file whose first column is the sequence, as a file without
/// that column (header included).
fn sequence_rows(path: &str, sequence: &str) -> String {
    let text = std::fs::read_to_string(path).unwrap();
    let mut lines = text.lines();
    let header = lines.next().unwrap();
    let mut out = format!("{}\n", header.split_once(',').unwrap().1);
    for line in lines {
        if let Some(rest) = line.strip_prefix(&format!("{sequence},")) {
            writeln!(out, "{rest}").unwrap();
        }
    }
    out
}

/// The scene of the class checks, c = 2 (a missed or false object-step costs c^p / 2), with a
/// class column `kind`.
///
/// Sequence s1: a car at x = 0 and a pedestrian at x = 10, steps 0 and 1. Tracker A follows the
/// car at x = 0.5 (localisation 0.5 a step) and the pedestrian exactly. Tracker B reports a
/// track at the car's place but labelled pedestrian: within classes the car is missed at both
/// steps, and in the pedestrian class that track is 10 from the pedestrian, beyond c, so the
/// pedestrian is missed and the track false at both steps.
/// Sequence s2: a car at x = 0 at step 0 only (no pedestrian in any file): A reports x = 1, B
/// x = 0.5.
fn class_scene(dir: &Path) -> (String, String, String) {
    let truth = write(
        dir,
        "truth.csv",
        "sequence,time,id,x,kind\ns1,0,a,0,car\ns1,1,a,0,car\ns1,0,b,10,ped\ns1,1,b,10,ped\n\
         s2,0,a,0,car\n",
    );
    let a = write(
        dir,
        "a.csv",
        "sequence,time,id,x,kind\ns1,0,p,0.5,car\ns1,1,p,0.5,car\ns1,0,q,10,ped\ns1,1,q,10,ped\n\
         s2,0,p,1,car\n",
    );
    let b = write(
        dir,
        "b.csv",
        "sequence,time,id,x,kind\ns1,0,r,0,ped\ns1,1,r,0,ped\ns2,0,r,0.5,car\n",
    );
    (truth, a, b)
}

/// With --class-column the trackers are ranked by the total over the classes,
/// d = (sum of each class's d^p)^(1/p) (`specs/classes.md`: trajectory GOSPA with an infinite
/// distance between classes adds up over classes in d^p), and each class is ranked over the
/// cases where it occurs. Hand values from the GOSPA costs (`class_scene`), and each case's
/// total checked against `switchyard score --class-column` on that case alone.
#[test]
fn classes_rank_by_the_total_and_within_each_class() {
    let dir = tempfile::tempdir().unwrap();
    let (truth, a, b) = class_scene(dir.path());
    let (named_a, named_b) = (format!("A={a}"), format!("B={b}"));
    let args = [
        "compare",
        "--truth",
        &truth,
        "--estimate",
        &named_a,
        "--estimate",
        &named_b,
        "--state-columns",
        "x",
        "--cutoff",
        "2",
        "--order",
        "1,2",
        "--class-column",
        "kind",
        "--per-case",
        "--format",
        "json",
    ];
    let doc = json(&args);
    assert_eq!(doc["inputs"]["classes"], serde_json::json!(["car", "ped"]));
    // p = 1. A: car d 0.5 + 0.5 = 1 in s1 and 1 in s2, pedestrian 0: totals 1 and 1, mean 1.
    // B: s1 car 2 missed steps (2), pedestrian 2 missed and 2 false (4): total 6; s2 car 0.5:
    // total 0.5; mean (6 + 0.5) / 2 = 3.25.
    let p1 = &doc["settings"][0];
    assert_eq!(p1["ranking"], "A < B");
    close(&p1["trackers"][0]["metric_mean"], 1.0);
    close(&p1["trackers"][1]["metric_mean"], 3.25);
    // The bootstrap on the total: differences B - A per sequence 6 - 1 = 5 and 0.5 - 1 = -0.5.
    close(&p1["trackers"][1]["difference"]["mean"], 2.25);
    // Per class: car over both sequences, A (1 + 1) / 2 = 1, B (2 + 0.5) / 2 = 1.25; the
    // pedestrian class occurs in s1 only: A 0, B 4 over one case.
    let classes = p1["classes"].as_array().unwrap();
    assert_eq!(classes.len(), 2);
    assert_eq!(
        (&classes[0]["class"], &classes[0]["cases"]),
        (&"car".into(), &2.into())
    );
    close(&classes[0]["trackers"][0]["metric_mean"], 1.0);
    close(&classes[0]["trackers"][1]["metric_mean"], 1.25);
    assert_eq!(classes[0]["trackers"][1]["tracker"], "B");
    assert_eq!(
        (&classes[1]["class"], &classes[1]["cases"]),
        (&"ped".into(), &1.into())
    );
    close(&classes[1]["trackers"][0]["metric_mean"], 0.0);
    close(&classes[1]["trackers"][1]["metric_mean"], 4.0);
    close(&classes[1]["trackers"][1]["missed_count"], 2.0);
    // p = 2: a missed or false step costs c^2 / 2 = 2. B on s1: car 2 x 2 = 4, pedestrian 4 x 2
    // = 8, d = sqrt(12); on s2 car 0.5^2 = 0.25, d = 0.5. A on s1: car 2 x 0.25 = 0.5, d =
    // sqrt(0.5); on s2 d = 1.
    let p2 = &doc["settings"][1];
    let b2 = p2["trackers"].as_array().unwrap();
    let b2 = b2.iter().find(|t| t["tracker"] == "B").unwrap();
    close(&b2["metric_mean"], (12f64.sqrt() + 0.5) / 2.0);
    close(&b2["total_mean"], (12.0 + 0.25) / 2.0);
    let a2 = &p2["trackers"][0];
    close(&a2["metric_mean"], (0.5f64.sqrt() + 1.0) / 2.0);

    // Rows: per setting, tracker and case, one row per class occurring in the case, then one
    // for all classes (class null). s2 has no pedestrian row.
    let rows = doc["cases"].as_array().unwrap();
    let p1_a: Vec<(&str, Value)> = rows
        .iter()
        .filter(|r| r["order"] == 1.0 && r["tracker"] == "A")
        .map(|r| (r["sequence"].as_str().unwrap(), r["class"].clone()))
        .collect();
    assert_eq!(
        p1_a,
        [
            ("s1", "car".into()),
            ("s1", "ped".into()),
            ("s1", Value::Null),
            ("s2", "car".into()),
            ("s2", Value::Null)
        ]
    );
    // Each case's rows against `switchyard score --class-column` on that case's rows alone.
    let cases = [
        (
            "s1",
            "time,id,x,kind\n0,a,0,car\n1,a,0,car\n0,b,10,ped\n1,b,10,ped\n",
            "time,id,x,kind\n0,r,0,ped\n1,r,0,ped\n",
        ),
        (
            "s2",
            "time,id,x,kind\n0,a,0,car\n",
            "time,id,x,kind\n0,r,0.5,car\n",
        ),
    ];
    for order in ["1", "2"] {
        for (sequence, truth_rows, b_rows) in cases {
            let t = write(dir.path(), "case-truth.csv", truth_rows);
            let e = write(dir.path(), "case-b.csv", b_rows);
            let score = json(&[
                "score",
                "--truth",
                &t,
                "--estimate",
                &e,
                "--state-columns",
                "x",
                "--cutoff",
                "2",
                "--order",
                order,
                "--class-column",
                "kind",
                "--format",
                "json",
            ]);
            let p: f64 = order.parse().unwrap();
            let mine: Vec<&Value> = rows
                .iter()
                .filter(|r| r["order"] == p && r["tracker"] == "B" && r["sequence"] == sequence)
                .collect();
            let all = mine.iter().find(|r| r["class"].is_null()).unwrap();
            close(&all["metric"], score["metric"].as_f64().unwrap());
            close(&all["total"], score["total"].as_f64().unwrap());
            close(
                &all["missed_count"],
                score["missed_count"].as_f64().unwrap(),
            );
            for row in mine.iter().filter(|r| !r["class"].is_null()) {
                let class = row["class"].as_str().unwrap();
                close(
                    &row["metric"],
                    score["classes"][class]["metric"].as_f64().unwrap(),
                );
            }
        }
    }

    // CSV: the class column after run, empty on the rows for all classes.
    let mut csv_args = args.to_vec();
    let at = csv_args.iter().position(|&a| a == "1,2").unwrap();
    csv_args[at] = "1";
    *csv_args.last_mut().unwrap() = "csv";
    let csv = String::from_utf8(run_ok(&csv_args)).unwrap();
    let lines: Vec<&str> = csv.lines().collect();
    assert!(lines[0].starts_with("cutoff,order,switch_penalty,tracker,sequence,run,class,metric,"));
    assert!(lines[3].starts_with("2,1,2,A,s1,,,1,1,"), "{csv}");
    assert!(lines[7].starts_with("2,1,2,B,s1,,ped,4,4,"), "{csv}");
    assert_eq!(lines.len(), 11);
}

/// With classes, the Monte Carlo per-step values are those of all classes together: each step's
/// GOSPA^p is the sum over the classes (alpha = 2, `specs/classes.md`), so with one run the
/// per-step mean is `switchyard steps --class-column`'s value for all classes. s1 of
/// `class_scene`, tracker B: car missed (1) plus pedestrian missed and false (1 + 1) = 3 at p = 1.
#[test]
fn classes_monte_carlo_steps_equal_the_steps_of_all_classes() {
    let dir = tempfile::tempdir().unwrap();
    let (truth, _, b) = class_scene(dir.path());
    let doc = json(&[
        "compare",
        "--truth",
        &truth,
        "--estimate",
        &format!("B={b}"),
        "--state-columns",
        "x",
        "--cutoff",
        "2",
        "--class-column",
        "kind",
        "--monte-carlo",
        "--format",
        "json",
    ]);
    let block = &doc["monte_carlo"][0];
    assert_eq!(block["sequence"], "s1");
    let t = write(
        dir.path(),
        "s1.csv",
        "time,id,x,kind\n0,a,0,car\n1,a,0,car\n0,b,10,ped\n1,b,10,ped\n",
    );
    let e = write(
        dir.path(),
        "s1b.csv",
        "time,id,x,kind\n0,r,0,ped\n1,r,0,ped\n",
    );
    let steps = String::from_utf8(run_ok(&[
        "steps",
        "--truth",
        &t,
        "--estimate",
        &e,
        "--state-columns",
        "x",
        "--cutoff",
        "2",
        "--class-column",
        "kind",
        "--format",
        "csv",
    ]))
    .unwrap();
    let all: Vec<f64> = steps
        .lines()
        .filter(|l| l.starts_with(','))
        .map(|l| l.split(',').nth(2).unwrap().parse().unwrap())
        .collect();
    assert_eq!(all.len(), 2);
    for (k, expected) in all.iter().enumerate() {
        close(&block["steps"][k]["mean"], *expected);
        close(&block["steps"][k]["mean"], 3.0);
    }
}

/// The same classed data given by group columns or by a manifest gives the same bytes.
#[test]
fn classes_read_by_manifest_and_by_group_columns_agree() {
    let dir = tempfile::tempdir().unwrap();
    let (truth, a, b) = class_scene(dir.path());
    let split = |file: &str, sequence: &str| sequence_rows(file, sequence);
    let mut manifest = String::from("tracker,sequence,truth,estimate\n");
    for sequence in ["s1", "s2"] {
        let t = write(
            dir.path(),
            &format!("t-{sequence}.csv"),
            &split(&truth, sequence),
        );
        for (name, file) in [("A", &a), ("B", &b)] {
            let e = write(
                dir.path(),
                &format!("{name}-{sequence}.csv"),
                &split(file, sequence),
            );
            writeln!(manifest, "{name},{sequence},{t},{e}").unwrap();
        }
    }
    let manifest = write(dir.path(), "m.csv", &manifest);
    let common = [
        "--state-columns",
        "x",
        "--cutoff",
        "2",
        "--class-column",
        "kind",
        "--per-case",
        "--format",
        "csv",
    ];
    let mut by_columns = vec!["compare", "--truth", &truth];
    let (named_a, named_b) = (format!("A={a}"), format!("B={b}"));
    by_columns.extend(["--estimate", &named_a, "--estimate", &named_b]);
    by_columns.extend(common);
    let mut by_manifest = vec!["compare", "--manifest", &manifest];
    by_manifest.extend(common);
    let from_columns = run_ok(&by_columns);
    assert_eq!(from_columns, run_ok(&by_manifest));
    assert!(String::from_utf8(from_columns)
        .unwrap()
        .contains(",B,s1,,ped,4,4,"));
}

/// `compare --ospa2`: each case's OSPA(2) (M. Beard, B.-T. Vo, B.-N. Vo, "A solution for
/// large-scale multi-object tracking", IEEE Trans. Signal Processing 68, 2020) is the one
/// `switchyard score --ospa2` gives on that case at the setting's cut-off and order, and each
/// tracker's summary holds the mean of those over the cases. Checked at four settings of a sweep,
/// on `hand_scene`, plus hand values at c = 2, p = 1: A on s1 follows the truth at 0.5 (mean
/// distance 0.5, one truth, one track: OSPA(2) 0.5), on s2 at 1 (1); B reports nothing on s1
/// (one truth unpaired: c = 2) and x = 5, beyond c, on s2 (2). Means: A 0.75, B 2.
#[test]
fn ospa2_per_case_equals_score_and_the_summary_is_its_mean() {
    let dir = tempfile::tempdir().unwrap();
    let (truth, a, b) = hand_scene(dir.path());
    let (named_a, named_b) = (format!("A={a}"), format!("B={b}"));
    let doc = json(&[
        "compare",
        "--truth",
        &truth,
        "--estimate",
        &named_a,
        "--estimate",
        &named_b,
        "--state-columns",
        "x",
        "--cutoff",
        "2,3",
        "--order",
        "1,2",
        // Two penalties: OSPA(2) does not depend on gamma, and each (c, p) is computed once
        // for the settings that share it.
        "--switch-penalty",
        "1,5",
        "--ospa2",
        "--per-case",
        "--format",
        "json",
    ]);
    let first = &doc["settings"][0];
    assert_eq!(
        (first["cutoff"].as_f64(), first["order"].as_f64()),
        (Some(2.0), Some(1.0))
    );
    close(&first["trackers"][0]["ospa2"]["value"], 0.75);
    close(&first["trackers"][1]["ospa2"]["value"], 2.0);
    close(&first["trackers"][1]["ospa2"]["unpaired_power"], 2.0);
    close(&first["trackers"][0]["ospa2"]["paired_power"], 0.75);
    // The ranking stays by d (A 1 < B 2 here).
    assert_eq!(first["ranking"], "A < B");
    let rows = doc["cases"].as_array().unwrap();
    assert_eq!(rows.len(), 8 * 2 * 2);
    for setting in doc["settings"].as_array().unwrap() {
        let (c, p) = (
            setting["cutoff"].as_f64().unwrap(),
            setting["order"].as_f64().unwrap(),
        );
        for tracker in setting["trackers"].as_array().unwrap() {
            let name = tracker["tracker"].as_str().unwrap();
            let file = if name == "A" { &a } else { &b };
            let mine: Vec<&Value> = rows
                .iter()
                .filter(|r| {
                    r["cutoff"] == c
                        && r["order"] == p
                        && r["switch_penalty"] == setting["switch_penalty"]
                        && r["tracker"] == name
                })
                .collect();
            assert_eq!(mine.len(), 2);
            let mut sums = [0.0; 3];
            for row in &mine {
                let sequence = row["sequence"].as_str().unwrap();
                let one =
                    |path: &str, out: &str| write(dir.path(), out, &sequence_rows(path, sequence));
                let (t, e) = (one(&truth, "one-truth.csv"), one(file, "one-estimate.csv"));
                let score = json(&[
                    "score",
                    "--truth",
                    &t,
                    "--estimate",
                    &e,
                    "--state-columns",
                    "x",
                    "--cutoff",
                    &c.to_string(),
                    "--order",
                    &p.to_string(),
                    "--ospa2",
                    "--format",
                    "json",
                ]);
                for (k, key) in ["value", "paired_power", "unpaired_power"]
                    .iter()
                    .enumerate()
                {
                    let expected = score["ospa2"][key].as_f64().unwrap();
                    close(&row["ospa2"][key], expected);
                    sums[k] += expected;
                }
            }
            for (k, key) in ["value", "paired_power", "unpaired_power"]
                .iter()
                .enumerate()
            {
                close(&tracker["ospa2"][key], sums[k] / 2.0);
            }
        }
    }
    // Refused with classes: OSPA(2) does not add up over classes.
    let output = switchyard()
        .args([
            "compare",
            "--truth",
            &truth,
            "--estimate",
            &named_a,
            "--state-columns",
            "x",
            "--cutoff",
            "2",
            "--ospa2",
            "--class-column",
            "x",
        ])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&output.stderr).contains("OSPA(2) is normalised"));
}

/// With --ospa2 the CSV tables end with the columns ospa2, ospa2_paired_power and
/// ospa2_unpaired_power and the text tables with OSPA(2); the values are those of the JSON
/// (`hand_scene`, c = 2: A's mean 0.75, B's 2, as derived above).
#[test]
fn ospa2_columns_in_csv_and_text() {
    let dir = tempfile::tempdir().unwrap();
    let (truth, a, b) = hand_scene(dir.path());
    let (named_a, named_b) = (format!("A={a}"), format!("B={b}"));
    let run = |extra: &[&str]| {
        let mut args = vec![
            "compare",
            "--truth",
            &truth,
            "--estimate",
            &named_a,
            "--estimate",
            &named_b,
            "--state-columns",
            "x",
            "--cutoff",
            "2",
            "--ospa2",
        ];
        args.extend(extra);
        String::from_utf8(run_ok(&args)).unwrap()
    };
    let csv = run(&["--format", "csv"]);
    let lines: Vec<&str> = csv.lines().collect();
    assert!(lines[0].ends_with(",verdict,ospa2,ospa2_paired_power,ospa2_unpaired_power"));
    assert!(lines[1].ends_with(",0.75,0.75,0"), "{csv}");
    assert!(lines[2].ends_with(",2,0,2"), "{csv}");
    let cases = run(&["--format", "csv", "--per-case"]);
    assert!(cases
        .lines()
        .next()
        .unwrap()
        .ends_with(",per_step,ospa2,ospa2_paired_power,ospa2_unpaired_power"));
    // A on s1: 0.5, all of it paired.
    assert!(
        cases.lines().nth(1).unwrap().ends_with(",0.5,0.5,0"),
        "{cases}"
    );
    let text = run(&[]);
    let header = text
        .lines()
        .find(|l| l.trim_start().starts_with("rank"))
        .unwrap();
    assert!(header.ends_with("OSPA(2)"), "{header}");
    let a_row = text
        .lines()
        .find(|l| l.trim_start().starts_with("1 "))
        .unwrap();
    assert!(a_row.ends_with("0.7500"), "{a_row}");
}

/// Bad class input names the file, the line and the column, exits 1 and never panics: an empty
/// class, a file without the class column, a class column that is also the sequence column, and
/// a manifest whose files have no row (no class at all).
#[test]
fn bad_class_input_names_file_line_and_column() {
    let dir = tempfile::tempdir().unwrap();
    let (truth, _, _) = class_scene(dir.path());
    let fails = |args: &[&str]| -> String {
        let output = switchyard().args(args).output().unwrap();
        assert_eq!(output.status.code(), Some(1), "{args:?}");
        String::from_utf8(output.stderr).unwrap()
    };
    let compare = |estimate: &str, column: &str| -> String {
        let named = format!("B={estimate}");
        fails(&[
            "compare",
            "--truth",
            &truth,
            "--estimate",
            &named,
            "--state-columns",
            "x",
            "--cutoff",
            "2",
            "--class-column",
            column,
        ])
    };
    let empty = write(
        dir.path(),
        "empty-class.csv",
        "sequence,time,id,x,kind\ns1,0,r,0,ped\ns1,1,r,0,\n",
    );
    let message = compare(&empty, "kind");
    assert!(
        message.contains("empty-class.csv, line 3, column 5 (\"kind\"): the class is empty"),
        "{message}"
    );
    let without = write(dir.path(), "no-class.csv", "sequence,time,id,x\ns1,0,r,0\n");
    let message = compare(&without, "kind");
    assert!(
        message.contains("no-class.csv, line 1: the header has no class column \"kind\""),
        "{message}"
    );
    let message = compare(&without, "sequence");
    assert!(
        message.contains("also a sequence or run column"),
        "{message}"
    );
    let header_only = write(dir.path(), "h.csv", "time,id,x,kind\n");
    let manifest = write(
        dir.path(),
        "m.csv",
        &format!("tracker,sequence,truth,estimate\nA,s,{header_only},{header_only}\n"),
    );
    let message = fails(&[
        "compare",
        "--manifest",
        &manifest,
        "--state-columns",
        "x",
        "--cutoff",
        "2",
        "--class-column",
        "kind",
    ]);
    assert!(
        message.contains("m.csv: no file the manifest lists has a row"),
        "{message}"
    );
}

/// A track whose label flips is cut into one piece per class (`specs/classes.md`): a car truth
/// at x = 0 at steps 0 and 1, a track on it labelled car at step 0 and pedestrian at step 1.
/// At c = 2, p = 1 the car piece matches at step 0 (0), the car is missed at step 1 (c/2 = 1)
/// and the pedestrian piece is false there (1): d = 2, where without classes it is 0. The
/// command notes the cut track on standard error.
#[test]
fn a_track_whose_label_flips_is_cut_by_class() {
    let dir = tempfile::tempdir().unwrap();
    let truth = write(
        dir.path(),
        "t.csv",
        "time,id,x,kind\n0,a,0,car\n1,a,0,car\n",
    );
    let estimate = write(
        dir.path(),
        "e.csv",
        "time,id,x,kind\n0,r,0,car\n1,r,0,ped\n",
    );
    let named = format!("A={estimate}");
    let args = [
        "compare",
        "--truth",
        &truth,
        "--estimate",
        &named,
        "--state-columns",
        "x",
        "--cutoff",
        "2",
        "--format",
        "json",
    ];
    let plain = json(&args);
    close(&plain["settings"][0]["trackers"][0]["metric_mean"], 0.0);
    let mut classed = args.to_vec();
    classed.extend(["--class-column", "kind"]);
    let output = switchyard().args(&classed).output().unwrap();
    assert!(output.status.success());
    let doc: Value = serde_json::from_slice(&output.stdout).unwrap();
    let a = &doc["settings"][0]["trackers"][0];
    close(&a["metric_mean"], 2.0);
    close(&a["missed_count"], 1.0);
    close(&a["false_count"], 1.0);
    let note = String::from_utf8(output.stderr).unwrap();
    assert!(
        note.contains("e.csv: 1 trajectory carries more than one class"),
        "{note}"
    );
}

/// A class named like the text's all-classes marker `(all)` is quoted on its case rows, so the
/// two rows stay apart. One truth at x = 0 and one track at x = 0.5 for 2 steps, c = 2, p = 1:
/// d = 2 x 0.5 = 1 (trajectory GOSPA by hand), for the class and for all classes alike.
#[test]
fn a_class_named_like_the_marker_is_quoted_in_text() {
    let dir = tempfile::tempdir().unwrap();
    let truth = dir.path().join("t.csv");
    let estimate = dir.path().join("e.csv");
    std::fs::write(&truth, "time,id,x,y,kind\n1,a,0,0,(all)\n2,a,0,0,(all)\n").unwrap();
    std::fs::write(
        &estimate,
        "time,id,x,y,kind\n1,p,0.5,0,(all)\n2,p,0.5,0,(all)\n",
    )
    .unwrap();
    let output = switchyard()
        .args(["compare", "--truth"])
        .arg(&truth)
        .arg("--estimate")
        .arg(format!("one={}", estimate.display()))
        .args(["-c", "2", "--class-column", "kind", "--per-case"])
        .output()
        .unwrap();
    assert!(output.status.success());
    let text = String::from_utf8(output.stdout).unwrap();
    let rows: Vec<Vec<&str>> = text
        .lines()
        .skip_while(|l| !l.starts_with("Case scores"))
        .filter(|l| l.trim_start().starts_with('-'))
        .map(|l| l.split_whitespace().collect())
        .collect();
    assert_eq!(
        rows,
        [
            ["-", "-", "\"(all)\"", "one", "2", "1.0000", "0.5000"],
            ["-", "-", "(all)", "one", "2", "1.0000", "0.5000"]
        ]
    );
}
