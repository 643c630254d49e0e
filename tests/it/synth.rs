//! `switchyard synth`: the real binary writes scenes that read back to what the library
//! generates, the same bytes on every run, and the committed demonstration data.

use std::path::{Path, PathBuf};

use assert_cmd::Command;
use predicates::str::contains;
use switchyard::input::{read_csv_path, CsvLayout, TrajectoryFile};
use switchyard::synth::{generate_scene, ScenePreset};

fn synth() -> Command {
    Command::cargo_bin("switchyard").unwrap()
}

fn read(path: &Path) -> TrajectoryFile {
    read_csv_path(path.to_str().unwrap(), &CsvLayout::default()).unwrap()
}

/// Runs `synth` with `args` into a fresh folder; returns the folder and the two file paths.
fn run(args: &[&str]) -> (tempfile::TempDir, PathBuf, PathBuf) {
    let dir = tempfile::tempdir().unwrap();
    let truth = dir.path().join("truth.csv");
    let estimate = dir.path().join("estimate.csv");
    synth()
        .arg("synth")
        .args(args)
        .arg("--truth-out")
        .arg(&truth)
        .arg("--estimate-out")
        .arg(&estimate)
        .assert()
        .success();
    (dir, truth, estimate)
}

#[test]
fn writes_the_scene_the_library_generates() {
    let (_dir, truth_path, estimate_path) = run(&["--preset", "small", "--seed", "5"]);
    let truth = read(&truth_path);
    let estimate = read(&estimate_path);
    assert_eq!(truth.state_columns, ["x", "y"]);
    assert_eq!(estimate.state_columns, ["x", "y"]);
    // The command's seed drives both the scene and the tracker, as in `generate_scene`; the
    // files hold the shortest decimals that read back to the same numbers.
    let (expected_truth, expected_estimate) = generate_scene(ScenePreset::Small, 5);
    assert_eq!(truth.set, expected_truth);
    assert_eq!(estimate.set, expected_estimate);
    // The small preset: 200 steps of about 8 objects; its count is held within about one
    // object of the target, so allow 15%.
    let per_step = truth.set.object_steps() as f64 / 200.0;
    assert!((per_step - 8.0).abs() < 1.2, "{per_step} objects a step");
    assert_eq!(truth.set.get(0).id(), "T1");
    assert_eq!(estimate.set.get(0).id(), "E1");
}

#[test]
fn two_runs_give_the_same_bytes_and_another_seed_does_not() {
    let args = [
        "--preset",
        "medium",
        "--seed",
        "3",
        "--tracker",
        "fragments",
    ];
    let (_first_dir, first_truth, first_estimate) = run(&args);
    let (_again_dir, again_truth, again_estimate) = run(&args);
    let bytes = |path: &Path| std::fs::read(path).unwrap();
    assert_eq!(bytes(&first_truth), bytes(&again_truth));
    assert_eq!(bytes(&first_estimate), bytes(&again_estimate));
    let (_other_dir, other_truth, _) = run(&["--preset", "medium", "--seed", "4"]);
    assert_ne!(bytes(&first_truth), bytes(&other_truth));
}

#[test]
fn a_tracker_with_every_fault_off_reports_the_truth() {
    let (_dir, truth_path, estimate_path) = run(&[
        "--preset",
        "harbour",
        "--seed",
        "2",
        "--steps",
        "60",
        "--position-noise",
        "0",
        "--miss-probability",
        "0",
        "--clutter-rate",
        "0",
        "--swap-probability",
        "0",
        "--fragment-probability",
        "0",
        "--birth-delay",
        "0",
    ]);
    let truth = read(&truth_path).set;
    let estimate = read(&estimate_path).set;
    assert_eq!(truth.len(), estimate.len());
    assert_eq!(truth.span().unwrap().1, 59, "60 steps: 0 to 59");
    // Tracks start in the order of the truths, so E(k) follows T(k) point for point.
    for (object, track) in truth.trajectories().iter().zip(estimate.trajectories()) {
        assert_eq!(track.id().strip_prefix('E'), object.id().strip_prefix('T'));
        assert_eq!(track.steps(), object.steps());
        for index in 0..track.len() {
            assert_eq!(track.state(index), object.state(index));
        }
    }
}

#[test]
fn objects_per_step_override_sets_the_count() {
    let (_dir, truth_path, _) = run(&[
        "--preset",
        "small",
        "--seed",
        "1",
        "--objects-per-step",
        "20",
    ]);
    let truth = read(&truth_path).set;
    // 200 steps of about 20 objects, held within about one or two of the target: allow 15%.
    let per_step = truth.object_steps() as f64 / 200.0;
    assert!((per_step - 20.0).abs() < 3.0, "{per_step} objects a step");
}

#[test]
fn refuses_to_run_without_an_output_or_with_a_bad_setting() {
    synth()
        .args(["synth", "--preset", "small"])
        .assert()
        .code(1)
        .stderr(contains("--truth-out"));
    let dir = tempfile::tempdir().unwrap();
    let truth = dir.path().join("truth.csv");
    synth()
        .args(["synth", "--miss-probability", "1.5", "--truth-out"])
        .arg(&truth)
        .assert()
        .code(1)
        .stderr(contains("miss probability"));
    assert!(
        !truth.exists(),
        "no file is written when a setting is refused"
    );
}

#[test]
fn demo_data_equals_a_fresh_regeneration() {
    // The commands given in demo-data/README.md.
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data");
    let dir = tempfile::tempdir().unwrap();
    let out = |name: &str| dir.path().join(name);
    synth()
        .args([
            "synth",
            "--preset",
            "harbour",
            "--seed",
            "1",
            "--tracker",
            "swaps",
            "--tracker-seed",
            "11",
            "--truth-out",
        ])
        .arg(out("truth.csv"))
        .arg("--estimate-out")
        .arg(out("tracker-swaps.csv"))
        .assert()
        .success();
    synth()
        .args([
            "synth",
            "--preset",
            "harbour",
            "--seed",
            "1",
            "--tracker",
            "fragments",
            "--tracker-seed",
            "12",
            "--estimate-out",
        ])
        .arg(out("tracker-fragments.csv"))
        .assert()
        .success();
    for name in ["truth.csv", "tracker-swaps.csv", "tracker-fragments.csv"] {
        let committed = std::fs::read(demo.join(name)).unwrap();
        let fresh = std::fs::read(out(name)).unwrap();
        assert!(
            committed == fresh,
            "demo-data/{name} differs from a fresh regeneration"
        );
        // Small enough to ship: under 300 KB.
        assert!(committed.len() < 300_000, "demo-data/{name}");
    }
}

#[test]
fn monte_carlo_demo_equals_a_fresh_regeneration() {
    // demo-data/runs/make.sh documents how the Monte Carlo demo was made; running it again
    // with this build must give the committed bytes.
    let root = env!("CARGO_MANIFEST_DIR");
    let dir = tempfile::tempdir().unwrap();
    let status = std::process::Command::new("bash")
        .arg(format!("{root}/demo-data/runs/make.sh"))
        .arg(env!("CARGO_BIN_EXE_switchyard"))
        .arg(dir.path())
        .current_dir(root)
        .status()
        .unwrap();
    assert!(status.success());
    for tracker in ["swaps", "fragments"] {
        let name = format!("tracker-{tracker}.csv");
        let fresh = std::fs::read(dir.path().join(&name)).unwrap();
        let committed = std::fs::read(format!("{root}/demo-data/runs/{name}")).unwrap();
        assert!(
            fresh == committed,
            "{name} differs from a fresh regeneration"
        );
    }
}
