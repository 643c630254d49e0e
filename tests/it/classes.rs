//! Object classes through the real binary (`--class-column`): matching only within a class, a
//! track whose label flips cut into pieces, results per class and for all classes, the class
//! errors, and the identity that makes the score with classes a metric: the sum over classes
//! equals trajectory GOSPA (and per-step GOSPA) of the whole scene with a base distance of at
//! least c between classes (`specs/classes.md`).
//!
//! Hand values follow the definitions of GOSPA (Rahmathullah, García-Fernández, Svensson,
//! FUSION 2017) and trajectory GOSPA (García-Fernández, Rahmathullah, Svensson, IEEE Trans.
//! Signal Processing 68:3917-3928, 2020): an unassigned object costs c^p / 2 per step present,
//! a full switch gamma^p, a half switch gamma^p / 2.

use std::path::{Path, PathBuf};

use assert_cmd::Command;
use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use serde_json::Value;
use tempfile::TempDir;

use crate::cli::{number, run};

const TOLERANCE: f64 = 1e-9;

/// Writes `text` into `dir` as `name` and returns its path.
fn file(dir: &TempDir, name: &str, text: &str) -> PathBuf {
    let path = dir.path().join(name);
    std::fs::write(&path, text).unwrap();
    path
}

fn json(args: &[&str]) -> Value {
    serde_json::from_slice(&run(args)).unwrap()
}

fn path(p: &Path) -> &str {
    p.to_str().unwrap()
}

fn close(actual: f64, expected: f64, what: &str) {
    assert!(
        (actual - expected).abs() <= TOLERANCE * expected.abs().max(1.0),
        "{what}: {actual} but {expected} was expected"
    );
}

#[test]
fn a_pair_of_two_classes_is_never_assigned() {
    // A car at x = 0 and a pedestrian track on it, steps 1 and 2; c = 2, p = 1.
    // Without classes: a perfect match, d^p = 0. With classes: the car is missed at both steps
    // (2 x c^p/2 = 2) and the track is false at both (2): d^p = 4 (GOSPA definition).
    let dir = tempfile::tempdir().unwrap();
    let truth = file(
        &dir,
        "t.csv",
        "time,id,x,y,kind\n1,a,0,0,car\n2,a,0,0,car\n",
    );
    let estimate = file(
        &dir,
        "e.csv",
        "time,id,x,y,kind\n1,p,0,0,pedestrian\n2,p,0,0,pedestrian\n",
    );
    let base = [
        "--truth",
        path(&truth),
        "--estimate",
        path(&estimate),
        "-c",
        "2",
        "-f",
        "json",
    ];
    let blind = json(&[&["score"], &base[..]].concat());
    close(number(&blind, "total"), 0.0, "without classes");
    let classed = json(&[&["score"], &base[..], &["--class-column", "kind"]].concat());
    close(number(&classed, "total"), 4.0, "all classes");
    close(number(&classed, "missed"), 2.0, "all classes, missed");
    close(number(&classed, "false"), 2.0, "all classes, false");
    let car = &classed["classes"]["car"];
    close(number(car, "total"), 2.0, "car");
    close(number(car, "missed"), 2.0, "car, missed");
    assert_eq!(car["inputs"]["truth_objects"], 1);
    assert_eq!(car["inputs"]["estimate_tracks"], 0);
    let pedestrian = &classed["classes"]["pedestrian"];
    close(number(pedestrian, "false"), 2.0, "pedestrian, false");
    // Per-step GOSPA^p at each step: one missed and one false point, c^p/2 + c^p/2 = 2.
    let steps = json(&[&["steps"], &base[..], &["--class-column", "kind"]].concat());
    for step in steps["steps"].as_array().unwrap() {
        close(number(step, "gospa"), 2.0, "per-step GOSPA with classes");
        close(number(step, "missed"), 1.0, "per-step missed part");
    }
    let car_steps = steps["classes"]["car"]["steps"].as_array().unwrap();
    assert_eq!(car_steps.len(), 2);
    close(number(&car_steps[0], "gospa"), 1.0, "car's per-step GOSPA");
}

#[test]
fn a_track_whose_label_flips_is_cut_into_one_piece_per_class() {
    // A car at x = 0 over steps 1..4; its track is labelled car at steps 1-2 and van at 3-4.
    // c = 2, p = 1, gamma = 1. Car class: the truth keeps the car piece assigned (a pair with
    // one side absent costs c^p/2, like a missed step, and no switch): missed 2 x 1 = 2. Van
    // class: the van piece is false at 2 steps: 2. All classes: 4. Without classes the track
    // follows the car exactly: 0.
    let dir = tempfile::tempdir().unwrap();
    let truth = file(
        &dir,
        "t.csv",
        "time,id,x,y,kind\n1,a,0,0,car\n2,a,0,0,car\n3,a,0,0,car\n4,a,0,0,car\n",
    );
    let estimate = file(
        &dir,
        "e.csv",
        "time,id,x,y,kind\n1,p,0,0,car\n2,p,0,0,car\n3,p,0,0,van\n4,p,0,0,van\n",
    );
    let args = [
        "score",
        "--truth",
        path(&truth),
        "--estimate",
        path(&estimate),
        "-c",
        "2",
        "-g",
        "1",
        "-f",
        "json",
        "--class-column",
        "kind",
    ];
    let output = Command::cargo_bin("switchyard")
        .unwrap()
        .args(args)
        .output()
        .unwrap();
    assert!(output.status.success());
    let stderr = String::from_utf8(output.stderr).unwrap();
    assert!(
        stderr.contains("e.csv: 1 track carries more than one class"),
        "{stderr}"
    );
    let classed: Value = serde_json::from_slice(&output.stdout).unwrap();
    close(number(&classed, "total"), 4.0, "all classes");
    close(number(&classed, "switching"), 0.0, "all classes, switching");
    close(
        number(&classed["classes"]["car"], "missed"),
        2.0,
        "car, missed",
    );
    close(
        number(&classed["classes"]["van"], "false"),
        2.0,
        "van, false",
    );
    let van = &classed["classes"]["van"];
    assert_eq!(van["inputs"]["estimate_tracks"], 1);
    assert_eq!(van["window"]["first"], 3);
}

#[test]
fn switches_and_audit_come_per_class_and_together() {
    // Cars: the identity swap of `specs/metric.md`'s check values: truths a at 0 and b at 10
    // over steps 1..4, tracks p (0, 0, 10, 10) and q (10, 10, 0, 0); c = 5, p = 1, gamma = 1:
    // d^p = 2 gamma = 2, two full switches at step 3. Pedestrians: a truth m at x = 0 over
    // steps 1..4 with no pedestrian track: missed 4 x c^p/2 = 10. All classes: 12.
    let dir = tempfile::tempdir().unwrap();
    let mut truth = String::from("time,id,x,y,kind\n");
    let mut estimate = truth.clone();
    for step in 1..=4 {
        let swapped = step >= 3;
        truth.push_str(&format!(
            "{step},a,0,0,car\n{step},b,10,0,car\n{step},m,0,0,pedestrian\n"
        ));
        let (p, q) = if swapped { (10, 0) } else { (0, 10) };
        estimate.push_str(&format!("{step},p,{p},0,car\n{step},q,{q},0,car\n"));
    }
    let truth = file(&dir, "t.csv", &truth);
    let estimate = file(&dir, "e.csv", &estimate);
    let base = [
        "--truth",
        path(&truth),
        "--estimate",
        path(&estimate),
        "-c",
        "5",
        "-g",
        "1",
        "--class-column",
        "kind",
    ];
    let switches = json(&[&["switches"], &base[..], &["-f", "json"]].concat());
    close(
        number(&switches, "switch_count"),
        2.0,
        "all classes, switches",
    );
    close(
        number(&switches["classes"]["car"], "switching"),
        2.0,
        "car, switching",
    );
    close(
        number(&switches["classes"]["pedestrian"], "switch_count"),
        0.0,
        "pedestrians",
    );
    let events = switches["switches"].as_array().unwrap();
    assert_eq!(events.len(), 2);
    assert!(events.iter().all(|e| e["time"] == 3 && e["class"] == "car"));
    // A class's own document is as without classes: its events name no class.
    let car_events = switches["classes"]["car"]["switches"].as_array().unwrap();
    assert!(car_events.iter().all(|e| e.get("class").is_none()));
    let audit = json(&[&["audit"], &base[..], &["-f", "json"]].concat());
    let truths = audit["truths"].as_array().unwrap();
    assert_eq!(truths.len(), 3);
    // Ranked worst first by switches: the two cars (one full switch each), then the pedestrian.
    assert_eq!(
        (truths[2]["truth"].as_str(), truths[2]["class"].as_str()),
        (Some("m"), Some("pedestrian"))
    );
    // The objects' costs add up to the total, so the shares of all classes add up to 1
    // (`specs/formats.md`, per-object costs): m carries 10 of 12.
    close(
        number(&truths[2]["costs"], "share"),
        10.0 / 12.0,
        "pedestrian's share",
    );
    let car_truths = audit["classes"]["car"]["truths"].as_array().unwrap();
    close(
        number(&car_truths[0]["costs"], "share"),
        0.5,
        "a car's share of its class",
    );
    // Text: a section per class, then all classes with the class table.
    let text = String::from_utf8(run(&[&["score"], &base[..]].concat())).unwrap();
    for heading in [
        "Class car\n=========",
        "Class pedestrian",
        "All classes (2 classes)",
    ] {
        assert!(text.contains(heading), "{heading:?} missing in\n{text}");
    }
    let all_row = text.lines().last().unwrap();
    let cells: Vec<&str> = all_row.split_whitespace().collect();
    assert_eq!(cells[..4], ["all", "3", "2", "12.0000"], "{all_row}");
    // CSV: a class column, one row per class, then all classes with an empty class.
    let csv = String::from_utf8(run(&[&["score"], &base[..], &["-f", "csv"]].concat())).unwrap();
    let rows: Vec<Vec<&str>> = csv.lines().map(|l| l.split(',').collect()).collect();
    assert_eq!(rows[0][..3], ["class", "metric", "total"]);
    assert_eq!(rows.len(), 4);
    assert_eq!(
        (rows[1][0], rows[2][0], rows[3][0]),
        ("car", "pedestrian", "")
    );
    close(
        rows[3][2].parse().unwrap(),
        12.0,
        "CSV total of all classes",
    );
    close(
        rows[2][2].parse().unwrap(),
        10.0,
        "CSV total of the pedestrians",
    );
    // Switches as CSV: the class's rows under its name, no rows for all classes (the classes'
    // rows are the whole). A full switch costs gamma^p = 1.
    let csv = run(&[&["switches"], &base[..], &["-f", "csv"]].concat());
    let csv = String::from_utf8(csv).unwrap();
    let lines: Vec<&str> = csv.lines().collect();
    assert_eq!(lines[0], "class,side,time,object,from,to,weight,cost");
    assert_eq!(lines.len(), 5, "{csv}");
    assert!(lines.contains(&"car,truth,3,a,p,q,1,1"), "{csv}");
    assert!(
        lines[1..].iter().all(|line| line.starts_with("car,")),
        "{csv}"
    );
    // Steps as CSV: each class's window, then the whole window with an empty class; the cars
    // are matched exactly (0) and the pedestrian is missed at every step (c^p/2 = 2.5).
    // (steps takes no switching penalty: the base arguments without `-g 1`.)
    let steps_args = [&base[..6], &base[8..]].concat();
    let csv = run(&[&["steps"], &steps_args[..], &["-f", "csv"]].concat());
    let csv = String::from_utf8(csv).unwrap();
    let rows: Vec<Vec<&str>> = csv.lines().map(|l| l.split(',').collect()).collect();
    assert_eq!(rows[0][..3], ["class", "time", "gospa"]);
    assert_eq!(rows.len(), 1 + 4 + 4 + 4, "{csv}");
    for (k, row) in rows[1..].iter().enumerate() {
        let (class, expected) = match k / 4 {
            0 => ("car", 0.0),
            1 => ("pedestrian", 2.5),
            _ => ("", 2.5),
        };
        assert_eq!(row[0], class, "{csv}");
        close(row[2].parse().unwrap(), expected, "per-step GOSPA in CSV");
    }
}

/// One seeded scene with `classes` classes: truths and tracks on random walks with gaps, each
/// row's class that of its object except for a few flipped track labels. Returns the CSV text
/// with a `kind` column, and the same scene for the class-blind reading: each piece under its
/// own id (`id#class`) and a state column `k` placing class number n at n x `spacing`.
fn scene(rng: &mut ChaCha8Rng, classes: usize, spacing: f64, tracks: bool) -> (String, String) {
    let (mut classed, mut blind) = (
        String::from("time,id,x,y,kind\n"),
        String::from("time,id,x,y,k\n"),
    );
    let objects = rng.random_range(2..7);
    for object in 0..objects {
        let class = rng.random_range(0..classes);
        let first = rng.random_range(0..6);
        let length = rng.random_range(1..10);
        let (mut x, mut y) = (rng.random_range(0.0..4.0), rng.random_range(0.0..4.0));
        for step in first..first + length {
            x += rng.random_range(-1.0..1.0);
            y += rng.random_range(-1.0..1.0);
            if rng.random_range(0.0..1.0) < 0.15 {
                continue; // a gap
            }
            let label = if tracks && rng.random_range(0.0..1.0) < 0.2 {
                rng.random_range(0..classes)
            } else {
                class
            };
            classed.push_str(&format!("{step},o{object},{x},{y},c{label}\n"));
            let k = label as f64 * spacing;
            blind.push_str(&format!("{step},o{object}#{label},{x},{y},{k}\n"));
        }
    }
    (classed, blind)
}

#[test]
fn the_sum_over_classes_is_the_whole_scene_with_a_distance_of_c_between_classes() {
    // specs/classes.md: with a base distance of at least c between classes, no cross-class
    // pair is worth assigning and trajectory GOSPA^p (and per-step GOSPA^p) of the whole scene
    // is the sum over classes. The whole scene is scored here without classes, each class
    // moved along an extra state column by 10 c, so that two classes are at least 10 c apart.
    let dir = tempfile::tempdir().unwrap();
    let mut rng = ChaCha8Rng::seed_from_u64(16);
    let mut classes_mattered = 0;
    for case in 0..12 {
        let (cutoff, order, gamma) = [(2.0, 1.0, 1.0), (3.0, 2.0, 2.0), (1.5, 1.0, 3.0)][case % 3];
        let spacing = 10.0 * cutoff;
        let (truth, truth_blind) = scene(&mut rng, 3, spacing, false);
        let (estimate, estimate_blind) = scene(&mut rng, 3, spacing, true);
        let t = file(&dir, &format!("t{case}.csv"), &truth);
        let e = file(&dir, &format!("e{case}.csv"), &estimate);
        let tb = file(&dir, &format!("tb{case}.csv"), &truth_blind);
        let eb = file(&dir, &format!("eb{case}.csv"), &estimate_blind);
        let (c, p, g) = (cutoff.to_string(), order.to_string(), gamma.to_string());
        let params = [
            "-c",
            c.as_str(),
            "-p",
            p.as_str(),
            "-g",
            g.as_str(),
            "-f",
            "json",
        ];
        let classed_args = [
            "--truth",
            path(&t),
            "--estimate",
            path(&e),
            "--class-column",
            "kind",
        ];
        let blind_args = [
            "--truth",
            path(&tb),
            "--estimate",
            path(&eb),
            "--state-columns",
            "x,y,k",
        ];
        let classed = json(&[&["score"], &classed_args[..], &params[..]].concat());
        let blind = json(&[&["score"], &blind_args[..], &params[..]].concat());
        let whole = number(&blind, "total");
        close(
            number(&classed, "total"),
            whole,
            &format!("case {case}: d^p"),
        );
        let sum: f64 = classed["classes"]
            .as_object()
            .unwrap()
            .values()
            .map(|class| number(class, "total"))
            .sum();
        close(
            sum,
            whole,
            &format!("case {case}: the classes' d^p added up"),
        );
        close(
            number(&classed, "metric"),
            number(&blind, "metric"),
            &format!("case {case}: d"),
        );
        // The classes matter: ignoring them (every pair may match) often gives less.
        let ignored = ["--truth", path(&t), "--estimate", path(&e)];
        let ignored = json(&[&["score"], &ignored[..], &params[..]].concat());
        if number(&ignored, "total") < whole - 1e-6 {
            classes_mattered += 1;
        }
        // Per-step GOSPA (alpha = 2) at every step of the window.
        let steps_params = ["-c", c.as_str(), "-p", p.as_str(), "-f", "json"];
        let classed = json(&[&["steps"], &classed_args[..], &steps_params[..]].concat());
        let blind = json(&[&["steps"], &blind_args[..], &steps_params[..]].concat());
        let (a, b) = (
            classed["steps"].as_array().unwrap(),
            blind["steps"].as_array().unwrap(),
        );
        assert_eq!(a.len(), b.len(), "case {case}: steps");
        for (x, y) in a.iter().zip(b) {
            assert_eq!(x["time"], y["time"]);
            close(
                number(x, "gospa"),
                number(y, "gospa"),
                &format!("case {case}: step"),
            );
            assert_eq!(x["missed_count"], y["missed_count"], "case {case}");
        }
    }
    assert!(
        classes_mattered >= 4,
        "only {classes_mattered} scenes of 12 depend on the classes"
    );
}

#[test]
fn class_errors_name_file_line_and_column() {
    let dir = tempfile::tempdir().unwrap();
    let good = file(&dir, "good.csv", "time,id,x,y,kind\n1,a,0,0,car\n");
    // Each case: the truth file, the class column, and what the message must hold.
    let empty = file(
        &dir,
        "empty.csv",
        "time,id,x,y,kind\n1,a,0,0,car\n2,a,0,0,  \n",
    );
    let twice = file(
        &dir,
        "twice.csv",
        "time,id,x,y,kind,kind\n1,a,0,0,car,car\n",
    );
    let cases = [
        (
            &empty,
            "kind",
            "empty.csv, line 3, column 5 (\"kind\"): the class is empty",
        ),
        (
            &good,
            "type",
            "good.csv, line 1: the header has no class column \"type\"",
        ),
        (&twice, "kind", "twice.csv, line 1, column 6 (\"kind\")"),
        (&good, "x", "also the time, the id or a state column"),
    ];
    for (truth, column, expected) in cases {
        let output = Command::cargo_bin("switchyard")
            .unwrap()
            .args(["score", "--truth", path(truth), "--estimate", path(&good)])
            .args(["-c", "2", "--class-column", column])
            .output()
            .unwrap();
        assert_eq!(output.status.code(), Some(1), "{column}");
        assert!(output.stdout.is_empty());
        let message = String::from_utf8(output.stderr).unwrap();
        assert!(message.contains(expected), "{message}");
    }
    // Per-step values add up over classes only with alpha = 2 (specs/classes.md).
    let output = Command::cargo_bin("switchyard")
        .unwrap()
        .args([
            "steps",
            "--truth",
            path(&good),
            "--estimate",
            path(&good),
            "-c",
            "2",
        ])
        .args(["--alpha", "1", "--class-column", "kind"])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&output.stderr).contains("alpha = 2"));
    // compare and report have no class column yet: clap refuses the option (exit 2).
    for command in ["compare", "report"] {
        let output = Command::cargo_bin("switchyard")
            .unwrap()
            .args([command, "--class-column", "kind"])
            .output()
            .unwrap();
        assert_eq!(output.status.code(), Some(2), "{command}");
    }
}
