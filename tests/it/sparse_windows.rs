//! Long windows with few objects, through the real binary: the values over a window of millions
//! of empty steps, and the shape of each output (CSV and JSON one row per step, text one line
//! per long empty run). Memory and time are measured by hand (`DEVELOPERS.md`), not here.
//!
//! The scene ("two rows"): one truth A at (0, 0) and one estimate B, both present only at the
//! first and last step of the window; B is 1 from A at the first step and 5 at the last. With
//! cut-off c = 10 both steps assign A to B (1 < c and 5 < c), so by the GOSPA definition
//! (Rahmathullah, García-Fernández, Svensson, FUSION 2017) the per-step values are 1 and 5 and
//! every other step, with no object, is 0.

use serde_json::Value;

use crate::cli::number;

/// Writes the two-row scene over steps 0 to `last` and returns (folder, truth, estimate).
fn scene(last: i64) -> (tempfile::TempDir, String, String) {
    let dir = tempfile::tempdir().unwrap();
    let truth = dir.path().join("truth.csv");
    let estimate = dir.path().join("estimate.csv");
    std::fs::write(&truth, format!("time,id,x,y\n0,A,0,0\n{last},A,0,0\n")).unwrap();
    std::fs::write(&estimate, format!("time,id,x,y\n0,B,1,0\n{last},B,5,0\n")).unwrap();
    let path = |p: std::path::PathBuf| p.to_str().unwrap().to_string();
    (dir, path(truth), path(estimate))
}

/// `COMMAND` on the scene with c = 10 and the `extra` options; its standard output.
fn run_on(command: &str, truth: &str, estimate: &str, extra: &[&str]) -> String {
    let mut args = vec![
        command,
        "--truth",
        truth,
        "--estimate",
        estimate,
        "--cutoff",
        "10",
    ];
    args.extend_from_slice(extra);
    String::from_utf8(crate::cli::run(&args)).unwrap()
}

#[test]
fn json_keeps_one_entry_per_step_and_exact_window_totals() {
    let steps = 100_000;
    let (_dir, truth, estimate) = scene(steps - 1);
    for (order, sum, root_mean_power) in [
        // p = 1: sum 1 + 5 = 6; root-mean-p = mean = 6 / steps (hand arithmetic).
        ("1", 6.0, 6.0 / steps as f64),
        // p = 2: sum of values 6; root-mean-p = sqrt((1^2 + 5^2) / steps) = sqrt(26 / steps).
        ("2", 6.0, (26.0 / steps as f64).sqrt()),
    ] {
        let doc: Value = serde_json::from_str(&run_on(
            "steps",
            &truth,
            &estimate,
            &["--order", order, "--format", "json"],
        ))
        .unwrap();
        let rows = doc["steps"].as_array().unwrap();
        assert_eq!(
            rows.len(),
            steps as usize,
            "one entry per step of the window"
        );
        assert_eq!(rows[0]["time"], 0);
        assert!((number(&rows[0], "gospa") - 1.0).abs() < 1e-12);
        assert!((number(&rows[steps as usize - 1], "gospa") - 5.0).abs() < 1e-12);
        // An empty step: GOSPA 0, parts 0 (alpha = 2), no object.
        let empty = &rows[12_345];
        assert_eq!(empty["time"], 12_345);
        for key in ["gospa", "localization", "missed", "false"] {
            assert_eq!(number(empty, key), 0.0, "{key}");
        }
        assert_eq!(empty["truth_count"], 0);
        assert_eq!(empty["estimate_count"], 0);
        let summary = &doc["summary"];
        assert_eq!(summary["steps"], steps);
        assert!((number(summary, "sum") - sum).abs() < 1e-12);
        // The mean counts the empty steps: 6 / steps.
        assert!((number(summary, "mean") - 6.0 / steps as f64).abs() < 1e-18);
        assert!((number(summary, "root_mean_power") - root_mean_power).abs() < 1e-15);
        // Localisation parts in p-th power units: 1^p + 5^p.
        let localization = if order == "1" { 6.0 } else { 26.0 };
        assert!((number(summary, "localization") - localization).abs() < 1e-12);
        assert_eq!(number(summary, "missed"), 0.0);
    }
}

#[test]
fn csv_streams_one_row_per_step_with_the_empty_steps_as_zero_rows() {
    let steps = 200_000;
    let (_dir, truth, estimate) = scene(steps - 1);
    let csv = run_on("steps", &truth, &estimate, &["--format", "csv"]);
    let lines: Vec<&str> = csv.lines().collect();
    assert_eq!(
        lines.len(),
        1 + steps as usize,
        "a header and one row per step"
    );
    // Step 0: d = 1 assigned (1 < c = 10); 1 truth, 1 estimate.
    assert_eq!(lines[1], "0,1,1,0,0,0,0,1,1");
    assert_eq!(lines[2], "1,0,0,0,0,0,0,0,0");
    assert_eq!(
        lines[steps as usize - 1],
        format!("{},0,0,0,0,0,0,0,0", steps - 2)
    );
    assert_eq!(
        lines[steps as usize],
        format!("{},5,5,0,0,0,0,1,1", steps - 1)
    );
    let gospa_sum: f64 = lines[1..]
        .iter()
        .map(|line| line.split(',').nth(1).unwrap().parse::<f64>().unwrap())
        .sum();
    assert!((gospa_sum - 6.0).abs() < 1e-12, "1 + 5 = {gospa_sum}");
}

#[test]
fn text_puts_a_long_empty_run_on_one_line_at_the_longest_window() {
    // The longest window accepted: 50,000,000 steps (0 to 49,999,999).
    let (_dir, truth, estimate) = scene(49_999_999);
    let text = run_on("steps", &truth, &estimate, &[]);
    let lines: Vec<&str> = text.lines().collect();
    let header = lines
        .iter()
        .position(|l| l.trim_start().starts_with("step"))
        .unwrap();
    assert!(lines[header + 1].trim_start().starts_with("0  "), "{text}");
    assert_eq!(lines[header + 2], "steps 1 to 49999998: no objects");
    assert!(
        lines[header + 3].trim_start().starts_with("49999999  "),
        "{text}"
    );
    assert_eq!(lines[header + 4], "");
    assert!(text.contains("50000000 steps, 0 to 49999999"), "{text}");
    // Sum 1 + 5 = 6 (hand arithmetic); the mean 6 / 5e7 rounds to 0.0000 at four decimals.
    assert!(text.contains("mean 0.0000"), "{text}");
    assert!(text.contains("sum 6.0000"), "{text}");
}

#[test]
fn a_short_empty_run_keeps_its_rows_in_text() {
    // Steps 0 to 9: the empty run 1 to 8 is eight steps, under the ten that make one line.
    let (_dir, truth, estimate) = scene(9);
    let text = run_on("steps", &truth, &estimate, &[]);
    assert!(!text.contains("no objects"), "{text}");
    let rows = text
        .lines()
        .filter(|l| l.trim_start().starts_with(|c: char| c.is_ascii_digit()) && l.contains('/'))
        .count();
    assert_eq!(rows, 10, "{text}");
}

#[test]
fn score_and_report_over_the_longest_window_count_only_the_two_steps() {
    let (dir, truth, estimate) = scene(49_999_999);
    let doc: Value =
        serde_json::from_str(&run_on("score", &truth, &estimate, &["--format", "json"])).unwrap();
    // A is assigned to B at both steps: localisation 1 + 5 = 6 (p = 1), nothing missed or
    // false, and no switch (the trajectory GOSPA definition: a pair held over the gap costs
    // nothing, as neither object is present).
    assert!((number(&doc, "total") - 6.0).abs() < 1e-9, "{doc}");
    let report = dir.path().join("report.html");
    run_on(
        "report",
        &truth,
        &estimate,
        &["--output", report.to_str().unwrap()],
    );
    let html = std::fs::read_to_string(&report).unwrap();
    // 50,000,000 steps over at most 800 columns: bins of 62,500 steps (Limits::default).
    assert!(html.contains("bins of 62500 steps"), "no binning note");
}

/// The Monte Carlo scene over steps 0 to `LONG` (5,000,000 steps; a dense series of one f64 per
/// step would be 40 MB for each tracker and run), with c = 10, p = 1, and the switching penalty
/// gamma = c (the command's default). One truth A at (0, 0), present at steps 0 and `LONG`,
/// shared by both runs. Tracker T: run 1 has B at (1, 0) at step 0 and (5, 0) at `LONG`; run 2
/// has B at (3, 0) at step 0 only, and C at (0, 0) at `MIDDLE` only (when A is absent).
/// Tracker U: A itself in both runs.
const LONG: i64 = 4_999_999;
const MIDDLE: i64 = 2_500_000;

fn monte_carlo_scene() -> (tempfile::TempDir, String, String, String) {
    let dir = tempfile::tempdir().unwrap();
    let write = |name: &str, text: String| {
        let path = dir.path().join(name);
        std::fs::write(&path, text).unwrap();
        path.to_str().unwrap().to_string()
    };
    let truth = write("truth.csv", format!("time,id,x,y\n0,A,0,0\n{LONG},A,0,0\n"));
    let t = write(
        "t.csv",
        format!("run,time,id,x,y\n1,0,B,1,0\n1,{LONG},B,5,0\n2,0,B,3,0\n2,{MIDDLE},C,0,0\n"),
    );
    let u = write(
        "u.csv",
        format!("run,time,id,x,y\n1,0,A,0,0\n1,{LONG},A,0,0\n2,0,A,0,0\n2,{LONG},A,0,0\n"),
    );
    (dir, truth, t, u)
}

#[test]
fn compare_over_a_long_window_scores_only_the_occupied_steps() {
    // Trajectory GOSPA (García-Fernández, Rahmathullah, Svensson, IEEE TSP 2020), p = 1:
    // a pair with both present costs min(d, c), an object present alone c/2 = 5, a step with
    // neither 0, and keeping one assignment throughout costs no switch.
    // T run 1: A with B at d = 1 and d = 5 -> d = 6 (localisation 6).
    // T run 2: A with B at d = 3 (leaving both unassigned would cost 10), A alone at LONG (5,
    //   missed), C alone at MIDDLE (5, false) -> d = 13.
    // U: exact in both runs -> d = 0.
    let (_dir, truth, t, u) = monte_carlo_scene();
    let doc: Value = serde_json::from_slice(&crate::cli::run(&[
        "compare",
        "--truth",
        &truth,
        "--estimate",
        &format!("T={t}"),
        "--estimate",
        &format!("U={u}"),
        "--cutoff",
        "10",
        "--format",
        "json",
    ]))
    .unwrap();
    let trackers = &doc["settings"][0]["trackers"];
    assert_eq!(trackers[0]["tracker"], "U");
    assert_eq!(number(&trackers[0], "metric_mean"), 0.0);
    let row = &trackers[1];
    assert_eq!(row["tracker"], "T");
    assert_eq!(row["rank"], 2);
    // Over the two runs: mean (6 + 13) / 2 = 9.5, RMS sqrt((36 + 169) / 2) = sqrt(102.5);
    // parts as means: localisation (6 + 3) / 2, missed (0 + 5) / 2, false (0 + 5) / 2; counts
    // as totals: one missed and one false object-step.
    for (key, expected) in [
        ("metric_mean", 9.5),
        ("metric_rms", 102.5f64.sqrt()),
        ("total_mean", 9.5),
        ("localization", 4.5),
        ("missed", 2.5),
        ("false", 2.5),
        ("switching", 0.0),
        ("missed_count", 1.0),
        ("false_count", 1.0),
        ("switch_count", 0.0),
    ] {
        assert!(
            (number(row, key) - expected).abs() < 1e-9,
            "{key}: {} against {expected}",
            row[key]
        );
    }
    // The paired differences with U are 6 and 13, so every resampled mean is 6, 9.5 or 13: the
    // interval lies within [6, 13], above 0.
    let difference = &row["difference"];
    assert!((number(difference, "mean") - 9.5).abs() < 1e-9);
    assert!(number(difference, "lower") >= 6.0 - 1e-9);
    assert!(number(difference, "upper") <= 13.0 + 1e-9);
    assert_eq!(difference["verdict"], "worse");
}

#[test]
fn monte_carlo_over_a_long_window_writes_every_step_from_the_occupied_ones() {
    // Per-step GOSPA (Rahmathullah, García-Fernández, Svensson, FUSION 2017), c = 10, p = 1:
    // an assigned pair costs d, an object alone c/2 = 5; averaged over the two runs (mean,
    // root mean square, parts and counts), with a step where a run has no object counting 0.
    // Tracker T:
    // - step 0: G = 1 and 3 -> mean 2, RMS sqrt((1 + 9) / 2) = sqrt 5, localisation 2;
    // - MIDDLE: G = 0 and 5 (C false) -> mean 2.5, RMS sqrt(25 / 2), false 2.5, false count 1/2;
    // - LONG: G = 5 (d = 5) and 5 (A missed) -> mean 5, RMS 5, localisation 2.5, missed 2.5,
    //   missed count 1/2;
    // - every other step: no object in either run -> all 0.
    let (dir, truth, t, _) = monte_carlo_scene();
    let out = dir.path().join("steps.csv");
    crate::cli::run(&[
        "compare",
        "--truth",
        &truth,
        "--estimate",
        &format!("T={t}"),
        "--cutoff",
        "10",
        "--monte-carlo",
        "--format",
        "csv",
        "--output",
        out.to_str().unwrap(),
    ]);
    use std::io::BufRead;
    let mut lines = std::io::BufReader::new(std::fs::File::open(&out).unwrap()).lines();
    assert_eq!(
        lines.next().unwrap().unwrap(),
        "cutoff,order,sequence,tracker,time,runs,mean,rms,localisation,missed,false,missed_count,false_count"
    );
    // Columns from `runs` on: runs, mean, rms, localisation, missed, false, missed count, false
    // count.
    let occupied = [
        (0, [2.0, 2.0, 5f64.sqrt(), 2.0, 0.0, 0.0, 0.0, 0.0]),
        (MIDDLE, [2.0, 2.5, 12.5f64.sqrt(), 0.0, 0.0, 2.5, 0.0, 0.5]),
        (LONG, [2.0, 5.0, 5.0, 2.5, 2.5, 0.0, 0.5, 0.0]),
    ];
    let mut rows = 0i64;
    for (time, line) in (0..).zip(lines) {
        let line = line.unwrap();
        rows += 1;
        let fields: Vec<&str> = line.split(',').collect();
        assert_eq!(fields[..4], ["10", "1", "", "T"], "{line}");
        assert_eq!(fields[4], time.to_string(), "{line}");
        match occupied.iter().find(|(at, _)| *at == time) {
            Some((_, expected)) => {
                for (field, expected) in fields[5..].iter().zip(expected) {
                    let value: f64 = field.parse().unwrap();
                    assert!((value - expected).abs() < 1e-12, "step {time}: {line}");
                }
            }
            None => assert_eq!(
                fields[5..],
                ["2", "0", "0", "0", "0", "0", "0", "0"],
                "{line}"
            ),
        }
    }
    assert_eq!(rows, LONG + 1, "one row per step of the window");
}
