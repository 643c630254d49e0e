//! `switchyard compare --page`: the comparison page.
//!
//! The numbers the page embeds (`data-` attributes) are checked against compare's own JSON
//! written by the same run (one comparison, two writers: they must agree to the last bit, as
//! both write the shortest text that reads back as the same double); a long, sparse scene is
//! checked by hand from the GOSPA definition; the page is parsed as XML by roxmltree and drawn
//! by headless Chromium (Debian's `chromium`), whose DOM must hold the same charts.

use std::path::Path;

use assert_cmd::Command;
use roxmltree::Node;
use serde_json::Value;

use super::report::{chromium, demo, parse, run_chromium, screenshot, with_class};

/// `switchyard compare` on the demo's eight Monte Carlo runs of two trackers.
fn demo_compare(extra: &[&str]) -> Command {
    let mut command = Command::cargo_bin("switchyard").unwrap();
    command
        .args(["compare", "--truth", &demo("truth.csv"), "--estimate"])
        .arg(format!("swaps={}", demo("runs/tracker-swaps.csv")))
        .arg("--estimate")
        .arg(format!("fragments={}", demo("runs/tracker-fragments.csv")))
        .args(["--bootstrap-resamples", "300"])
        .args(extra);
    command
}

/// Runs compare with `--format json` and `--page`; returns the JSON and the page.
fn json_and_page(dir: &Path, extra: &[&str]) -> (Value, String) {
    let page = dir.join("page.html");
    let output = demo_compare(extra)
        .args(["--format", "json", "--page"])
        .arg(&page)
        .output()
        .unwrap();
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    let json: Value = serde_json::from_slice(&output.stdout).unwrap();
    (json, std::fs::read_to_string(&page).unwrap())
}

fn number(node: &Node, name: &str) -> f64 {
    node.attribute(name)
        .unwrap_or_else(|| panic!("no {name}"))
        .parse()
        .unwrap()
}

/// Equal within 1e-12 relative: both writers print the shortest text of the same doubles, but
/// serde_json (without its float_roundtrip feature) may read a double an ulp or so off.
fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-12 * a.abs().max(b.abs()).max(1.0)
}

#[test]
fn page_numbers_equal_the_json_of_the_same_run() {
    let dir = tempfile::tempdir().unwrap();
    let (json, html) = json_and_page(
        dir.path(),
        &[
            "-c",
            "10,20,40",
            "-p",
            "1,2",
            "--monte-carlo",
            "--rank-by",
            "per-step",
        ],
    );
    let doc = parse(&html);
    let root = doc.root_element();
    // The ranking table: one row per (setting, tracker), every number as in the JSON.
    let rows = with_class(root, "ranking-row");
    let settings = json["settings"].as_array().unwrap();
    assert_eq!(settings.len(), 6);
    assert_eq!(rows.len(), 6 * 2);
    let mut row = rows.iter();
    for setting in settings {
        for tracker in setting["trackers"].as_array().unwrap() {
            let node = row.next().unwrap();
            assert_eq!(node.attribute("data-tracker"), tracker["tracker"].as_str());
            assert_eq!(
                number(node, "data-cutoff"),
                setting["cutoff"].as_f64().unwrap()
            );
            assert_eq!(
                number(node, "data-order"),
                setting["order"].as_f64().unwrap()
            );
            assert_eq!(number(node, "data-rank"), tracker["rank"].as_f64().unwrap());
            for (attribute, key) in [
                ("data-metric-mean", "metric_mean"),
                ("data-metric-rms", "metric_rms"),
                ("data-per-step-mean", "per_step_mean"),
            ] {
                assert!(close(
                    number(node, attribute),
                    tracker[key].as_f64().unwrap()
                ));
            }
            let difference = &tracker["difference"];
            if difference.is_null() {
                assert!(node.attribute("data-difference").is_none());
            } else {
                for (attribute, key) in [
                    ("data-difference", "mean"),
                    ("data-lower", "lower"),
                    ("data-upper", "upper"),
                ] {
                    assert!(close(
                        number(node, attribute),
                        difference[key].as_f64().unwrap()
                    ));
                }
                assert_eq!(
                    node.attribute("data-verdict"),
                    difference["verdict"].as_str()
                );
            }
        }
    }
    // The sweep: cut-off (gamma = c) and order vary. Against the cut-off: one panel per order
    // (2), against the order: one per cut-off (3); each chart twice (mean d, and d^p per step
    // as --rank-by per-step ranks by it). Every setting's point of every tracker, in each.
    let charts = with_class(root, "sweep-chart");
    assert_eq!(charts.len(), 4);
    let figures: Vec<(String, String)> = root
        .descendants()
        .filter(|n| n.attribute("data-parameter").is_some())
        .map(|n| {
            (
                n.attribute("data-parameter").unwrap().to_string(),
                n.attribute("data-quantity").unwrap().to_string(),
            )
        })
        .collect();
    let expected = [
        ("cut-off", "metric-mean"),
        ("cut-off", "per-step-mean"),
        ("order", "metric-mean"),
        ("order", "per-step-mean"),
    ];
    assert_eq!(
        figures,
        expected.map(|(a, b)| (a.to_string(), b.to_string()))
    );
    let panels: Vec<usize> = charts
        .iter()
        .map(|c| with_class(*c, "sweep-panel").len())
        .collect();
    assert_eq!(panels, [2, 2, 3, 3]);
    for (chart, (_, quantity)) in charts.iter().zip(expected) {
        let points = with_class(*chart, "sweep-point");
        assert_eq!(points.len(), 6 * 2);
        for point in points {
            let setting = settings
                .iter()
                .find(|s| {
                    s["cutoff"].as_f64() == point.attribute("data-cutoff").map(to_f64)
                        && s["order"].as_f64() == point.attribute("data-order").map(to_f64)
                })
                .unwrap();
            let tracker = setting["trackers"]
                .as_array()
                .unwrap()
                .iter()
                .find(|t| t["tracker"].as_str() == point.attribute("data-tracker"))
                .unwrap();
            let key = if quantity == "metric-mean" {
                "metric_mean"
            } else {
                "per_step_mean"
            };
            assert!(close(
                number(&point, "data-value"),
                tracker[key].as_f64().unwrap()
            ));
        }
    }
    // Monte Carlo: one chart per (cut-off, order) and sequence, one line per tracker, holding
    // the per-step mean and RMS over the runs of every step (300 steps: no binning).
    let blocks = json["monte_carlo"].as_array().unwrap();
    let lines = with_class(root, "runs-line");
    assert_eq!(with_class(root, "runs-chart").len(), 6);
    assert_eq!(lines.len(), blocks.len());
    for block in blocks {
        let line = lines
            .iter()
            .find(|l| {
                l.attribute("data-tracker") == block["tracker"].as_str()
                    && l.attribute("data-cutoff").map(to_f64) == block["cutoff"].as_f64()
                    && l.attribute("data-order").map(to_f64) == block["order"].as_f64()
                    && l.attribute("data-sequence") == block["sequence"].as_str()
            })
            .unwrap();
        assert_eq!(line.attribute("data-bin"), Some("1"));
        let steps = block["steps"].as_array().unwrap();
        let list = |name: &str| -> Vec<f64> {
            line.attribute(name)
                .unwrap()
                .split(' ')
                .map(to_f64)
                .collect()
        };
        let (mean, rms) = (list("data-mean"), list("data-rms"));
        assert_eq!(mean.len(), steps.len());
        for (k, step) in steps.iter().enumerate() {
            assert!(close(mean[k], step["mean"].as_f64().unwrap()));
            assert!(close(rms[k], step["rms"].as_f64().unwrap()));
        }
    }
}

fn to_f64(text: &str) -> f64 {
    text.parse().unwrap()
}

#[test]
fn a_penalty_list_is_a_parameter_of_its_own() {
    // -c 10,20 -g 5,10: four settings; against the cut-off one panel per penalty, against the
    // penalty one per cut-off; no Monte Carlo section without --monte-carlo.
    let dir = tempfile::tempdir().unwrap();
    let (_, html) = json_and_page(dir.path(), &["-c", "10,20", "-g", "5,10"]);
    // Same input, same bytes, whatever the number of threads.
    let again = dir.path().join("again.html");
    let output = demo_compare(&["-c", "10,20", "-g", "5,10", "--page"])
        .arg(&again)
        .env("RAYON_NUM_THREADS", "1")
        .output()
        .unwrap();
    assert!(output.status.success());
    assert_eq!(std::fs::read_to_string(&again).unwrap(), html);
    let doc = parse(&html);
    let root = doc.root_element();
    let labels: Vec<Vec<String>> = with_class(root, "sweep-chart")
        .iter()
        .map(|chart| {
            with_class(*chart, "sweep-panel")
                .iter()
                .map(|p| p.attribute("data-panel").unwrap().to_string())
                .collect()
        })
        .collect();
    assert_eq!(
        labels,
        [
            vec!["γ = 5".to_string(), "γ = 10".to_string()],
            vec!["c = 10".to_string(), "c = 20".to_string()],
        ]
    );
    assert!(with_class(root, "runs-chart").is_empty());
    // The order keeps one value: the headings say so, the panels do not repeat it.
    assert!(html.contains("Mean d against cut-off c, at p = 1</h3>"));
    assert_eq!(with_class(root, "ranking-row").len(), 4 * 2);
}

#[test]
fn a_long_sparse_scene_is_binned_from_its_occupied_steps() {
    // c = 2, p = 1. Truth T at x = 0 at steps 0 and 3,000,000; run 1 tracks it exactly at both,
    // run 2 only at 3,000,000. GOSPA definition: a missed object costs c^p / 2 = 1, so at step
    // 0 run 1 scores 0 and run 2 scores 1: mean over the runs 1/2, RMS sqrt(1/2); every other
    // step scores 0. The window has 3,000,001 steps: at most 800 columns, so bins of
    // ceil(3,000,001 / 800) = 3,751 steps, 800 of them; the first shows the mean per step of
    // its 3,751 steps: (1/2) / 3,751 and sqrt(1/2) / 3,751; all the others 0.
    let dir = tempfile::tempdir().unwrap();
    let truth = dir.path().join("truth.csv");
    let estimate = dir.path().join("runs.csv");
    std::fs::write(&truth, "time,id,x,y\n0,T,0,0\n3000000,T,0,0\n").unwrap();
    std::fs::write(
        &estimate,
        "run,time,id,x,y\n1,0,E,0,0\n1,3000000,E,0,0\n2,3000000,E,0,0\n",
    )
    .unwrap();
    let page = dir.path().join("page.html");
    let output = Command::cargo_bin("switchyard")
        .unwrap()
        .arg("compare")
        .arg("--truth")
        .arg(&truth)
        .arg("--estimate")
        .arg(format!("t={}", estimate.display()))
        .args([
            "-c",
            "2",
            "--monte-carlo",
            "--bootstrap-resamples",
            "10",
            "--page",
        ])
        .arg(&page)
        .output()
        .unwrap();
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    let html = std::fs::read_to_string(&page).unwrap();
    // Size follows the bins, not the window (each of 800 bins costs tens of bytes).
    assert!(html.len() < 200_000, "{} bytes", html.len());
    let doc = parse(&html);
    let lines = with_class(doc.root_element(), "runs-line");
    assert_eq!(lines.len(), 1);
    let line = lines[0];
    assert_eq!(line.attribute("data-bin"), Some("3751"));
    assert_eq!(line.attribute("data-first"), Some("0"));
    assert_eq!(line.attribute("data-last"), Some("3000000"));
    let mean: Vec<f64> = line
        .attribute("data-mean")
        .unwrap()
        .split(' ')
        .map(to_f64)
        .collect();
    let rms: Vec<f64> = line
        .attribute("data-rms")
        .unwrap()
        .split(' ')
        .map(to_f64)
        .collect();
    assert_eq!((mean.len(), rms.len()), (800, 800));
    assert!((mean[0] - 0.5 / 3751.0).abs() < 1e-15);
    assert!((rms[0] - 0.5f64.sqrt() / 3751.0).abs() < 1e-15);
    assert!(mean[1..].iter().chain(&rms[1..]).all(|&v| v == 0.0));
    assert!(html.contains("bins of 3751 steps"));
    // The table under the chart: the highest mean over the runs, 1/2 at step 0 (by hand above),
    // and the mean per step of the mean over the whole window, (1/2) / 3,000,001 = 0.000.
    assert!(html.contains("<td>0.500 at step 0</td>"), "no highest mean");
}

#[test]
fn the_page_never_replaces_an_input_nor_the_other_output() {
    let dir = tempfile::tempdir().unwrap();
    // A copy of the truth as the page: refused before any work, the copy left as it was.
    let truth = dir.path().join("truth.csv");
    std::fs::copy(demo("truth.csv"), &truth).unwrap();
    let before = std::fs::read(&truth).unwrap();
    let output = Command::cargo_bin("switchyard")
        .unwrap()
        .arg("compare")
        .arg("--truth")
        .arg(&truth)
        .arg("--estimate")
        .arg(format!("swaps={}", demo("tracker-swaps.csv")))
        .args(["-c", "20", "--page"])
        .arg(&truth)
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&output.stderr).contains("refusing to overwrite an input"));
    assert_eq!(std::fs::read(&truth).unwrap(), before);
    // The page and --output naming one file: refused.
    let both = dir.path().join("both.txt");
    let output = demo_compare(&["-c", "20", "--output"])
        .arg(&both)
        .arg("--page")
        .arg(&both)
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&output.stderr).contains("also the output file"));
    assert!(!both.exists());
    // `--page -` is standard output (common practice for command-line tools), where the
    // comparison goes too unless --output names a file: refused, nothing written.
    let output = demo_compare(&["-c", "20", "--page", "-"]).output().unwrap();
    assert_eq!(output.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&output.stderr).contains("both go to standard output"));
    assert!(output.stdout.is_empty());
    // A run that fails on its input leaves no page.
    let bad = dir.path().join("bad.csv");
    std::fs::write(&bad, "time,id,x,y\n0,E1,1,nan\n").unwrap();
    let page = dir.path().join("page.html");
    let output = Command::cargo_bin("switchyard")
        .unwrap()
        .args(["compare", "--truth", &demo("truth.csv"), "--estimate"])
        .arg(&bad)
        .args(["-c", "20", "--page"])
        .arg(&page)
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(1));
    assert!(!page.exists());
    assert!(std::fs::read_dir(dir.path()).unwrap().count() == 2);
}

#[test]
fn the_page_renders_in_headless_chromium() {
    let Some(binary) = chromium() else {
        if std::env::var_os("CI").is_some() {
            panic!("chromium is not installed; CI must install Debian's chromium package");
        }
        eprintln!("note: chromium is not installed; the browser test is skipped");
        return;
    };
    let dir = tempfile::tempdir().unwrap();
    let (json, html) = json_and_page(dir.path(), &["-c", "10,20", "--monte-carlo"]);
    let page = dir.path().join("page.html");
    let url = format!("file://{}", page.display());
    // The screenshot is not blank and carries both trackers' colours (Okabe & Ito orange
    // #E69F00 and sky blue #56B4E9, the first two line styles).
    let (mut orange, mut sky) = (0usize, 0usize);
    for (r, g, b) in screenshot(&binary, dir.path(), &url, (1280, 2400)) {
        let (r, g, b) = (r as i32, g as i32, b as i32);
        let near = |(cr, cg, cb): (i32, i32, i32)| {
            (r - cr).abs() <= 12 && (g - cg).abs() <= 12 && (b - cb).abs() <= 12
        };
        orange += near((0xE6, 0x9F, 0x00)) as usize;
        sky += near((0x56, 0xB4, 0xE9)) as usize;
    }
    assert!(orange > 300 && sky > 300, "orange {orange}, sky blue {sky}");
    // Chromium's own HTML parser sees the charts and the values the XML parser sees.
    let dom = run_chromium(
        &binary,
        &dir.path().join("profile-dom"),
        &["--dump-dom".to_string(), url],
    );
    let dom = String::from_utf8(dom).unwrap();
    assert_eq!(dom.matches("class=\"sweep-chart\"").count(), 1);
    assert_eq!(dom.matches("class=\"sweep-point\"").count(), 2 * 2);
    assert_eq!(dom.matches("class=\"runs-chart\"").count(), 2);
    assert_eq!(dom.matches("class=\"ranking-row\"").count(), 2 * 2);
    let doc = parse(&html);
    for point in with_class(doc.root_element(), "sweep-point") {
        let value = point.attribute("data-value").unwrap();
        assert!(dom.contains(&format!("data-value=\"{value}\"")), "{value}");
    }
    // The best at c = 20 as the JSON says, drawn with its mean d (serde_json reads doubles to
    // within an ulp or so, hence the tolerance).
    let best = &json["settings"][1]["trackers"][0];
    let point = with_class(doc.root_element(), "sweep-point")
        .into_iter()
        .find(|p| {
            p.attribute("data-cutoff") == Some("20")
                && p.attribute("data-tracker") == best["tracker"].as_str()
        })
        .unwrap();
    assert!(close(
        number(&point, "data-value"),
        best["metric_mean"].as_f64().unwrap()
    ));
}

/// With `--time-step` and `--time-unit` the Monte Carlo charts read time in the input's units:
/// the demo's integer times read with a step of 0.5 become steps 0, 2, 4, ..., and the axis
/// shows time = step x 0.5 again, titled with the unit; without the unit the title is "time".
#[test]
fn the_time_unit_titles_the_monte_carlo_axis() {
    let dir = tempfile::tempdir().unwrap();
    let titled = |extra: &[&str]| {
        let (_, html) = json_and_page(dir.path(), extra);
        let doc = parse(&html);
        doc.descendants()
            .filter(|n| n.attribute("class") == Some("axis-label"))
            .filter_map(|n| n.text().map(str::to_string))
            .filter(|t| t.starts_with("time") || t == "step")
            .collect::<Vec<_>>()
    };
    let base = ["-c", "20", "--monte-carlo", "--time-step", "0.5"];
    let with_unit = titled(&[&base[..], &["--time-unit", "s"]].concat());
    assert_eq!(with_unit, ["time (s)"]);
    assert_eq!(titled(&base), ["time"]);
    // Without --page the unit has nowhere to go: a command-line error (exit 2).
    let output = demo_compare(&["-c", "20", "--time-step", "0.5", "--time-unit", "s"])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(2));
}
