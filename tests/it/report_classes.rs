//! `switchyard report --class-column`: the per-class table and the per-class charts.
//!
//! Hand values follow the definitions of GOSPA (Rahmathullah, García-Fernández, Svensson,
//! FUSION 2017) and trajectory GOSPA (García-Fernández, Rahmathullah, Svensson, IEEE Trans.
//! Signal Processing 68:3917-3928, 2020): an unassigned object costs c^p / 2 per step present.
//! On the demo data with classes, the page's numbers are checked against `score` and `steps`
//! with the same `--class-column` (their JSON). The page is parsed as XML by roxmltree and
//! drawn by headless Chromium.

use std::path::{Path, PathBuf};

use assert_cmd::Command;
use roxmltree::Node;
use serde_json::Value;

use super::report::{chromium, demo, parse, run_chromium, with_class};

const TOLERANCE: f64 = 1e-9;

fn close(actual: f64, expected: f64, what: &str) {
    assert!(
        (actual - expected).abs() <= TOLERANCE * expected.abs().max(1.0),
        "{what}: {actual} but {expected} was expected"
    );
}

fn report(args: &[&str]) -> String {
    let output = Command::cargo_bin("switchyard")
        .unwrap()
        .arg("report")
        .args(args)
        .output()
        .unwrap();
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    String::from_utf8(output.stdout).unwrap()
}

/// The value of the by-class table for `tracker` (its column index), `class` ("" for all
/// classes together) and `key`.
fn cell(root: Node, tracker: usize, class: &str, key: &str) -> f64 {
    let row = with_class(root, "class-row")
        .into_iter()
        .find(|r| r.attribute("data-class") == Some(class) && r.attribute("data-key") == Some(key))
        .unwrap_or_else(|| panic!("no row {class}/{key}"));
    let cells: Vec<Node> = row.children().filter(|c| c.has_tag_name("td")).collect();
    cells[tracker]
        .attribute("data-value")
        .unwrap()
        .parse()
        .unwrap()
}

/// The per-bin values of the class line of `tracker` in `class`.
fn class_line(root: Node, class: &str, tracker: &str) -> Vec<f64> {
    let line = with_class(root, "class-line")
        .into_iter()
        .find(|l| {
            l.attribute("data-class") == Some(class) && l.attribute("data-tracker") == Some(tracker)
        })
        .unwrap_or_else(|| panic!("no line {class}/{tracker}"));
    assert_eq!(line.attribute("data-bin"), Some("1"));
    line.attribute("data-values")
        .unwrap()
        .split(' ')
        .map(|v| v.parse().unwrap())
        .collect()
}

/// The report of the scene of [`classes_by_hand`] (c = 2, class column `kind`), the car's
/// class named `car_class`.
fn hand_scene_report(car_class: &str) -> String {
    let dir = tempfile::tempdir().unwrap();
    let truth = dir.path().join("t.csv");
    let estimate = dir.path().join("e.csv");
    std::fs::write(
        &truth,
        format!(
            "time,id,x,y,kind\n1,car,0,0,{car_class}\n2,car,0,0,{car_class}\n\
             1,walker,10,0,pedestrian\n2,walker,10,0,pedestrian\n"
        ),
    )
    .unwrap();
    std::fs::write(
        &estimate,
        "time,id,x,y,kind\n1,p,0,0,pedestrian\n2,p,0,0,pedestrian\n1,q,10.3,0,pedestrian\n\
         2,q,10.3,0,pedestrian\n",
    )
    .unwrap();
    report(&[
        "--truth",
        truth.to_str().unwrap(),
        "--estimate",
        &format!("one={}", estimate.display()),
        "-c",
        "2",
        "--class-column",
        "kind",
    ])
}

#[test]
fn classes_by_hand() {
    // c = 2, p = 1. A car at x = 0 and a pedestrian at x = 10, steps 1 and 2. Track p sits on
    // the car but is labelled pedestrian; track q follows the pedestrian 0.3 away.
    // Class car: the car is missed at both steps: d = 2 x c^p/2 = 2 (missed 2).
    // Class pedestrian: q matches the pedestrian (localisation 2 x 0.3 = 0.6) and p is false at
    // both steps (2): d = 2.6.
    // All classes: d^p adds up: 4.6 (without classes p would match the car: d = 0.6).
    // Per step (alpha = 2, p = 1): car 1 at each step; pedestrian 0.3 + 1 = 1.3.
    let page = hand_scene_report("car");
    let doc = parse(&page);
    let root = doc.root_element();
    close(cell(root, 0, "car", "metric"), 2.0, "car d");
    close(cell(root, 0, "car", "missed"), 2.0, "car missed");
    close(
        cell(root, 0, "car", "localisation"),
        0.0,
        "car localisation",
    );
    close(cell(root, 0, "pedestrian", "metric"), 2.6, "pedestrian d");
    close(
        cell(root, 0, "pedestrian", "localisation"),
        0.6,
        "pedestrian loc",
    );
    close(
        cell(root, 0, "pedestrian", "false"),
        2.0,
        "pedestrian false",
    );
    close(cell(root, 0, "", "metric"), 4.6, "all classes d");
    close(cell(root, 0, "", "missed"), 2.0, "all classes missed");
    // The one summary table above says the same total.
    assert!(page.contains("<td>4.60</td>") || page.contains(">4.60<"));
    let car = class_line(root, "car", "one");
    let walker = class_line(root, "pedestrian", "one");
    assert_eq!((car.len(), walker.len()), (2, 2));
    for k in 0..2 {
        close(car[k], 1.0, "car per step");
        close(walker[k], 1.3, "pedestrian per step");
    }
    assert_eq!(with_class(root, "class-chart").len(), 2);
    // The identity chart has a row per class piece, naming its class: the missed car ranks
    // first (2 missed steps; the pedestrian is covered throughout).
    let rows: Vec<(Option<&str>, Option<&str>)> = with_class(root, "identity-row")
        .iter()
        .map(|r| (r.attribute("data-truth"), r.attribute("data-class")))
        .collect();
    assert_eq!(
        rows,
        [
            (Some("car"), Some("car")),
            (Some("walker"), Some("pedestrian"))
        ]
    );
    assert!(page.contains(">walker (pedestrian)</text>"));
    assert!(page.contains("<dt>classes</dt><dd>car, pedestrian — "));
}

/// A class may be named like the table's total row: the by-hand scene above with the car's
/// class called "all classes" still gives that class its own d (2, as above) and the total its
/// own (4.6), each on its own row.
#[test]
fn a_class_named_like_the_total_keeps_its_own_row() {
    let page = hand_scene_report("all classes");
    let doc = parse(&page);
    let root = doc.root_element();
    close(cell(root, 0, "all classes", "metric"), 2.0, "class d");
    close(cell(root, 0, "pedestrian", "metric"), 2.6, "pedestrian d");
    close(cell(root, 0, "", "metric"), 4.6, "all classes together");
}

/// The demo data with a class per row: `north` above y = 300 m, `south` below, so that labels
/// flip as boats cross the middle (tracks are cut into pieces).
fn classed_demo(dir: &Path, name: &str) -> PathBuf {
    let text = std::fs::read_to_string(demo(name)).unwrap();
    let mut out = String::new();
    for (k, line) in text.lines().enumerate() {
        if k == 0 {
            out.push_str(&format!("{line},half\n"));
            continue;
        }
        let y: f64 = line.split(',').nth(3).unwrap().parse().unwrap();
        let class = if y > 300.0 { "north" } else { "south" };
        out.push_str(&format!("{line},{class}\n"));
    }
    let path = dir.join(name);
    std::fs::write(&path, out).unwrap();
    path
}

fn json(command: &str, truth: &Path, estimate: &Path) -> Value {
    let output = Command::cargo_bin("switchyard")
        .unwrap()
        .arg(command)
        .arg("--truth")
        .arg(truth)
        .arg("--estimate")
        .arg(estimate)
        .args(["-c", "20", "--class-column", "half", "--format", "json"])
        .output()
        .unwrap();
    assert!(output.status.success());
    serde_json::from_slice(&output.stdout).unwrap()
}

#[test]
fn demo_classes_equal_score_and_steps() {
    let dir = tempfile::tempdir().unwrap();
    let truth = classed_demo(dir.path(), "truth.csv");
    let trackers = ["tracker-swaps.csv", "tracker-fragments.csv"];
    let estimates: Vec<PathBuf> = trackers
        .iter()
        .map(|t| classed_demo(dir.path(), t))
        .collect();
    let page = report(&[
        "--truth",
        truth.to_str().unwrap(),
        "--estimate",
        &format!("swaps={}", estimates[0].display()),
        "--estimate",
        &format!("fragments={}", estimates[1].display()),
        "-c",
        "20",
        "--class-column",
        "half",
    ]);
    let doc = parse(&page);
    let root = doc.root_element();
    for (index, (name, estimate)) in ["swaps", "fragments"].iter().zip(&estimates).enumerate() {
        let score = json("score", &truth, estimate);
        for (class, expected) in [
            ("north", &score["classes"]["north"]),
            ("south", &score["classes"]["south"]),
            ("", &score),
        ] {
            for (key, field) in [
                ("metric", "metric"),
                ("localisation", "localisation"),
                ("missed", "missed"),
                ("false", "false"),
                ("switching", "switching"),
            ] {
                close(
                    cell(root, index, class, key),
                    expected[field].as_f64().unwrap(),
                    &format!("{name} {class} {key}"),
                );
            }
        }
        // Per step (300 steps: one column each), as `steps` gives each class (alpha = 2,
        // p = 1: GOSPA is the sum of its parts).
        let steps = json("steps", &truth, estimate);
        for class in ["north", "south"] {
            let line = class_line(root, class, name);
            let expected = steps["classes"][class]["steps"].as_array().unwrap();
            assert_eq!(line.len(), expected.len());
            for (value, step) in line.iter().zip(expected) {
                close(*value, step["gospa"].as_f64().unwrap(), "per step");
            }
        }
    }
    // Chromium's parser sees the same per-class charts and rows.
    let Some(binary) = chromium() else {
        if std::env::var_os("CI").is_some() {
            panic!("chromium is not installed; CI must install Debian's chromium package");
        }
        return;
    };
    let file = dir.path().join("page.html");
    std::fs::write(&file, &page).unwrap();
    let dom = run_chromium(
        &binary,
        &dir.path().join("profile-dom"),
        &[
            "--dump-dom".to_string(),
            format!("file://{}", file.display()),
        ],
    );
    let dom = String::from_utf8(dom).unwrap();
    assert_eq!(dom.matches("class=\"class-chart\"").count(), 2);
    assert_eq!(dom.matches("class=\"class-line\"").count(), 2 * 2);
    assert_eq!(dom.matches("class=\"class-row").count(), 3 * 5);
}

#[test]
fn class_errors_are_refused_clearly() {
    let dir = tempfile::tempdir().unwrap();
    let truth = classed_demo(dir.path(), "truth.csv");
    let estimate = demo("tracker-swaps.csv");
    // The estimate has no column "half": an error naming the file and the column, exit 1.
    let output = Command::cargo_bin("switchyard")
        .unwrap()
        .arg("report")
        .arg("--truth")
        .arg(&truth)
        .args([
            "--estimate",
            &estimate,
            "-c",
            "20",
            "--class-column",
            "half",
        ])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(1));
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(
        stderr.contains("tracker-swaps.csv") && stderr.contains("half"),
        "{stderr}"
    );
    // OSPA(2) is not given per class: the command line is refused (exit 2).
    let output = Command::cargo_bin("switchyard")
        .unwrap()
        .arg("report")
        .arg("--truth")
        .arg(&truth)
        .args([
            "--estimate",
            &estimate,
            "-c",
            "20",
            "--class-column",
            "half",
        ])
        .arg("--ospa2")
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(2));
}
