//! OSPA(2) (M. Beard, B.-T. Vo, B.-N. Vo, "A solution for large-scale multi-object tracking",
//! IEEE Trans. Signal Processing 68:2754-2769, 2020) against values computed outside the
//! project: `tests/data/reference/ospa2_cases.json`, written by
//! `tests/reference/ospa2_reference.py` from the definition with plain loops over the steps and
//! scipy.optimize.linear_sum_assignment (brute force for small sets).

use std::collections::BTreeMap;

use approx::assert_relative_eq;
use serde::Deserialize;
use switchyard::distance::Distance;
use switchyard::ospa2::{Ospa2, Ospa2Params};
use switchyard::trajectory::Step;

use crate::references::{read, to_set};

#[derive(Deserialize)]
struct File {
    cases: Vec<Case>,
}

#[derive(Deserialize)]
struct Case {
    cutoff: f64,
    order: f64,
    width: usize,
    truth: BTreeMap<String, Vec<(Step, Vec<f64>)>>,
    estimate: BTreeMap<String, Vec<(Step, Vec<f64>)>>,
    whole: f64,
    sliding: Vec<(Step, f64)>,
}

impl Case {
    /// The dimension of the states (1 when there are none).
    fn dimension(&self) -> usize {
        self.truth
            .values()
            .chain(self.estimate.values())
            .flat_map(|points| points.iter().map(|(_, s)| s.len()))
            .next()
            .unwrap_or(1)
    }
}

#[test]
fn ospa2_matches_scipy_assignment_whole_and_sliding() {
    let file: File = read("ospa2_cases.json");
    assert!(file.cases.len() > 100);
    let mut windows = 0;
    for (k, case) in file.cases.iter().enumerate() {
        let dim = case.dimension();
        let (truth, estimate) = (to_set(&case.truth, dim), to_set(&case.estimate, dim));
        let params = Ospa2Params::new(case.cutoff, case.order).unwrap();
        let metric = Ospa2::new(&truth, &estimate, params, &Distance::default()).unwrap();
        let whole = metric.whole();
        assert_relative_eq!(
            whole.value,
            case.whole,
            max_relative = 1e-9,
            epsilon = 1e-12
        );
        // The parts add up to the value's p-th power, and each pair is closer than c.
        assert_relative_eq!(
            whole.paired_power + whole.unpaired_power,
            whole.value.powf(case.order),
            max_relative = 1e-9,
            epsilon = 1e-12
        );
        assert!(whole.pairs.iter().all(|p| p.distance < case.cutoff));
        let sliding = metric.sliding(case.width);
        assert_eq!(
            sliding.iter().map(|s| s.0).collect::<Vec<_>>(),
            case.sliding.iter().map(|s| s.0).collect::<Vec<_>>(),
            "case {k}: the window ends"
        );
        for ((_, got), (step, want)) in sliding.iter().zip(&case.sliding) {
            assert_relative_eq!(got.value, *want, max_relative = 1e-9, epsilon = 1e-12);
            let _ = step;
            windows += 1;
        }
    }
    assert!(windows > 300);
}

/// `score --ospa2` through the real binary on the hand case of `src/ospa2.rs`, derived from the
/// definition (Beard, Vo, Vo 2020) with c = 2, p = 1: truth a on x = 0 at steps 1-4; track p at
/// x = 0.5 (steps 1-2) and x = 5 (steps 3-4), track q at x = 0 (steps 3-4).
/// d(a, p) = (0.5 + 0.5 + 2 + 2) / 4 = 1.25, d(a, q) = (2 + 2 + 0 + 0) / 4 = 1; one truth, two
/// tracks: OSPA(2) = (1 + 2) / 2 = 1.5, paired part 1/2, unpaired part 2/2.
#[test]
fn score_gives_ospa2_beside_trajectory_gospa() {
    let dir = tempfile::tempdir().unwrap();
    let truth = dir.path().join("truth.csv");
    let estimate = dir.path().join("estimate.csv");
    std::fs::write(&truth, "time,id,x\n1,a,0\n2,a,0\n3,a,0\n4,a,0\n").unwrap();
    std::fs::write(
        &estimate,
        "time,id,x\n1,p,0.5\n2,p,0.5\n3,p,5\n4,p,5\n3,q,0\n4,q,0\n",
    )
    .unwrap();
    let base = |format: &str| -> Vec<String> {
        let mut args: Vec<String> = ["score", "--truth"].map(String::from).to_vec();
        args.push(truth.to_str().unwrap().into());
        args.push("--estimate".into());
        args.push(estimate.to_str().unwrap().into());
        args.extend(["--state-columns", "x", "-c", "2", "--ospa2", "-f", format].map(String::from));
        args
    };
    let json: serde_json::Value = serde_json::from_slice(&crate::cli::run(&base("json"))).unwrap();
    let ospa2 = &json["ospa2"];
    assert_relative_eq!(ospa2["value"].as_f64().unwrap(), 1.5, epsilon = 1e-12);
    assert_relative_eq!(
        ospa2["paired_power"].as_f64().unwrap(),
        0.5,
        epsilon = 1e-12
    );
    assert_relative_eq!(
        ospa2["unpaired_power"].as_f64().unwrap(),
        1.0,
        epsilon = 1e-12
    );
    assert_eq!(ospa2["pairs"][0]["truth"], "a");
    assert_eq!(ospa2["pairs"][0]["estimate"], "q");
    assert_relative_eq!(
        ospa2["pairs"][0]["distance"].as_f64().unwrap(),
        1.0,
        epsilon = 1e-12
    );
    let csv = String::from_utf8(crate::cli::run(&base("csv"))).unwrap();
    let mut lines = csv.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let row: Vec<&str> = lines.next().unwrap().split(',').collect();
    let column = |name: &str| row[header.iter().position(|h| *h == name).unwrap()];
    assert_relative_eq!(
        column("ospa2").parse::<f64>().unwrap(),
        1.5,
        epsilon = 1e-12
    );
    assert_eq!(column("ospa2_pairs"), "1");
    let text = String::from_utf8(crate::cli::run(&base("text"))).unwrap();
    assert!(
        text.contains("OSPA(2), c = 2, p = 1 (normalised, 0 to c): 1.5000"),
        "{text}"
    );
    // Without --ospa2 the documents carry no such key or column.
    let mut plain = base("json");
    plain.retain(|a| a != "--ospa2");
    let json: serde_json::Value = serde_json::from_slice(&crate::cli::run(&plain)).unwrap();
    assert!(json.get("ospa2").is_none());
}

/// `report --ospa2`: each tracker's summary row shows the OSPA(2) that `score --ospa2` gives
/// (the metric itself is checked against scipy above), to the page's one decimal.
#[test]
fn report_shows_the_ospa2_of_score() {
    let demo = |name: &str| format!("{}/demo-data/{name}", env!("CARGO_MANIFEST_DIR"));
    let dir = tempfile::tempdir().unwrap();
    let page = dir.path().join("r.html");
    crate::cli::run(&[
        "report",
        "--truth",
        &demo("truth.csv"),
        "--estimate",
        &format!("swaps={}", demo("tracker-swaps.csv")),
        "--estimate",
        &format!("fragments={}", demo("tracker-fragments.csv")),
        "-c",
        "20",
        "--ospa2",
        "-o",
        page.to_str().unwrap(),
    ]);
    let html = std::fs::read_to_string(&page).unwrap();
    let at = html
        .find("OSPA(2), normalised 0 to c")
        .expect("the OSPA(2) row");
    let row = &html[at..at + html[at..].find("</tr>").unwrap()];
    let shown: Vec<f64> = row
        .split("<td")
        .skip(1)
        .map(|cell| {
            let text = &cell[cell.find('>').unwrap() + 1..cell.find("</td>").unwrap()];
            text.parse().unwrap()
        })
        .collect();
    for (k, file) in ["tracker-swaps.csv", "tracker-fragments.csv"]
        .iter()
        .enumerate()
    {
        let json: serde_json::Value = serde_json::from_slice(&crate::cli::run(&[
            "score",
            "--truth",
            &demo("truth.csv"),
            "--estimate",
            &demo(file),
            "-c",
            "20",
            "--ospa2",
            "-f",
            "json",
        ]))
        .unwrap();
        let value = json["ospa2"]["value"].as_f64().unwrap();
        assert!(
            (shown[k] - value).abs() <= 0.05 + 1e-12,
            "{} vs {value}",
            shown[k]
        );
    }
    // Without --ospa2 the row is absent (the pinned page of snapshots.rs is made without it).
    let pinned = format!("{}/tests/snapshots/report.html", env!("CARGO_MANIFEST_DIR"));
    assert!(!std::fs::read_to_string(pinned).unwrap().contains("OSPA(2)"));
}

/// Writes `{id: [(step, state)]}` as a CSV file with columns `time,id,s0,..` (`dim` of them).
fn write_scene(
    path: &std::path::Path,
    objects: &BTreeMap<String, Vec<(Step, Vec<f64>)>>,
    dim: usize,
) {
    let mut text = String::from("time,id");
    for k in 0..dim {
        text.push_str(&format!(",s{k}"));
    }
    text.push('\n');
    for (id, points) in objects {
        for (step, state) in points {
            text.push_str(&format!("{step},{id}"));
            for v in state {
                text.push_str(&format!(",{v}"));
            }
            text.push('\n');
        }
    }
    std::fs::write(path, text).unwrap();
}

/// `steps --ospa2 --ospa2-window W` through the real binary against the scipy reference
/// (`tests/reference/ospa2_reference.py`, Beard, Vo, Vo 2020): at each window end the reference
/// lists, the step's `ospa2` is the reference value; every other step of the window is null
/// (its window holds no state). The parts add up to `ospa2^p`.
#[test]
fn steps_column_matches_scipy_sliding_windows() {
    let file: File = read("ospa2_cases.json");
    let dir = tempfile::tempdir().unwrap();
    let (truth, estimate) = (dir.path().join("t.csv"), dir.path().join("e.csv"));
    let (mut windows, mut nulls) = (0, 0);
    for (k, case) in file.cases.iter().enumerate() {
        if case.truth.is_empty() && case.estimate.is_empty() {
            continue;
        }
        let dim = case.dimension();
        write_scene(&truth, &case.truth, dim);
        write_scene(&estimate, &case.estimate, dim);
        let columns: Vec<String> = (0..dim).map(|k| format!("s{k}")).collect();
        let json: serde_json::Value = serde_json::from_slice(&crate::cli::run(&[
            "steps",
            "--truth",
            truth.to_str().unwrap(),
            "--estimate",
            estimate.to_str().unwrap(),
            "--state-columns",
            &columns.join(","),
            "-c",
            &case.cutoff.to_string(),
            "-p",
            &case.order.to_string(),
            "--ospa2",
            "--ospa2-window",
            &case.width.to_string(),
            "-f",
            "json",
        ]))
        .unwrap();
        assert_eq!(json["ospa2"]["window"], case.width, "case {k}");
        let want: BTreeMap<Step, f64> = case.sliding.iter().copied().collect();
        for step in json["steps"].as_array().unwrap() {
            let time = step["time"].as_i64().unwrap();
            match want.get(&time) {
                Some(value) => {
                    let got = step["ospa2"].as_f64().unwrap();
                    assert_relative_eq!(got, *value, max_relative = 1e-9, epsilon = 1e-12);
                    let parts = step["ospa2_paired_power"].as_f64().unwrap()
                        + step["ospa2_unpaired_power"].as_f64().unwrap();
                    assert_relative_eq!(
                        parts,
                        got.powf(case.order),
                        max_relative = 1e-9,
                        epsilon = 1e-12
                    );
                    windows += 1;
                }
                None => {
                    assert!(step["ospa2"].is_null(), "case {k}, step {time}");
                    assert!(step["ospa2_pairs"].is_null(), "case {k}, step {time}");
                    nulls += 1;
                }
            }
        }
        // Every window end the reference lists is a step of the output.
        let listed = json["steps"]
            .as_array()
            .unwrap()
            .iter()
            .filter(|s| !s["ospa2"].is_null())
            .count();
        assert_eq!(listed, want.len(), "case {k}");
    }
    assert!(
        windows > 300 && nulls > 0,
        "{windows} windows, {nulls} nulls"
    );
}

/// The rows of a CSV scene (`time` first) with time in `[first, last]`.
fn cut(text: &str, first: Step, last: Step) -> String {
    let mut lines = text.lines();
    let mut out = format!("{}\n", lines.next().unwrap());
    for line in lines {
        let time: Step = line.split(',').next().unwrap().parse().unwrap();
        if (first..=last).contains(&time) {
            out.push_str(line);
            out.push('\n');
        }
    }
    out
}

/// Derived: OSPA(2) of the window [k - w + 1, k] is OSPA(2) of the trajectories cut to it (the
/// definition only looks at the steps within the window, Beard, Vo, Vo 2020), so the steps
/// column at k equals what `score --ospa2` gives on the inputs cut to that window, value and
/// parts; on the demo data, c = 20, p = 2, w = 10, at a few steps.
#[test]
fn steps_column_is_score_on_the_inputs_cut_to_the_window() {
    let demo = |name: &str| format!("{}/demo-data/{name}", env!("CARGO_MANIFEST_DIR"));
    let dir = tempfile::tempdir().unwrap();
    let width: Step = 10;
    let steps: serde_json::Value = serde_json::from_slice(&crate::cli::run(&[
        "steps",
        "--truth",
        &demo("truth.csv"),
        "--estimate",
        &demo("tracker-swaps.csv"),
        "-c",
        "20",
        "-p",
        "2",
        "--ospa2",
        "--ospa2-window",
        &width.to_string(),
        "-f",
        "json",
    ]))
    .unwrap();
    let rows = steps["steps"].as_array().unwrap();
    let first = steps["window"]["first"].as_i64().unwrap();
    let truth = std::fs::read_to_string(demo("truth.csv")).unwrap();
    let estimate = std::fs::read_to_string(demo("tracker-swaps.csv")).unwrap();
    let (t, e) = (dir.path().join("t.csv"), dir.path().join("e.csv"));
    for at in [0, 3, rows.len() / 3, rows.len() / 2, rows.len() - 1] {
        let row = &rows[at];
        let k = row["time"].as_i64().unwrap();
        let from = (k - width + 1).max(first);
        std::fs::write(&t, cut(&truth, from, k)).unwrap();
        std::fs::write(&e, cut(&estimate, from, k)).unwrap();
        let score: serde_json::Value = serde_json::from_slice(&crate::cli::run(&[
            "score",
            "--truth",
            t.to_str().unwrap(),
            "--estimate",
            e.to_str().unwrap(),
            "-c",
            "20",
            "-p",
            "2",
            "--ospa2",
            "-f",
            "json",
        ]))
        .unwrap();
        let whole = &score["ospa2"];
        for (mine, theirs) in [
            ("ospa2", "value"),
            ("ospa2_paired_power", "paired_power"),
            ("ospa2_unpaired_power", "unpaired_power"),
        ] {
            assert_relative_eq!(
                row[mine].as_f64().unwrap(),
                whole[theirs].as_f64().unwrap(),
                max_relative = 1e-9,
                epsilon = 1e-12
            );
        }
        assert_eq!(
            row["ospa2_pairs"].as_u64().unwrap() as usize,
            whole["pairs"].as_array().unwrap().len(),
            "step {k}"
        );
    }
}

/// `steps` on `t.csv` and `e.csv` with state column x and c = 2 (p = 1 by default).
const STEPS_ON_FILES: [&str; 9] = [
    "steps",
    "--truth",
    "t.csv",
    "--estimate",
    "e.csv",
    "--state-columns",
    "x",
    "-c",
    "2",
];

/// [`STEPS_ON_FILES`] with `--ospa2 --ospa2-window WIDTH -f FORMAT` in the folder of `files`;
/// returns standard output, asserting success.
fn steps_ospa2(files: &crate::bad_input::Files, width: &str, format: &str) -> String {
    let extra = ["--ospa2", "--ospa2-window", width, "-f", format];
    let (code, out, err) = files.run(&[&STEPS_ON_FILES[..], &extra].concat());
    assert_eq!(code, 0, "{err}");
    out
}

/// Hand-derived (Beard, Vo, Vo 2020, definition in `specs/ospa2.md`), c = 2, p = 1, through
/// every format. Scene 1 (the hand case of `src/ospa2.rs`): truth a on x = 0 at steps 1-4;
/// track p at x = 0.5 (steps 1-2) and x = 5 (steps 3-4), track q at x = 0 (steps 3-4).
/// Width 2:
///   step 1, window [1, 1]: d(a, p) = 0.5, m = n = 1: 0.5 (paired 0.5, unpaired 0);
///   step 2, window [1, 2]: d(a, p) = (0.5 + 0.5) / 2 = 0.5: 0.5;
///   step 3, window [2, 3]: d(a, p) = (0.5 + 2) / 2 = 1.25, d(a, q) = (2 + 0) / 2 = 1 (q is
///     absent at 2), m = 1, n = 2: a-q, (1 + 2) / 2 = 1.5 (paired 0.5, unpaired 1);
///   step 4, window [3, 4]: d(a, p) = 2, d(a, q) = 0: (0 + 2) / 2 = 1 (paired 0, unpaired 1).
#[test]
fn steps_ospa2_hand_case_in_every_format() {
    let files = crate::bad_input::Files::new();
    files.write("t.csv", "time,id,x\n1,a,0\n2,a,0\n3,a,0\n4,a,0\n");
    files.write(
        "e.csv",
        "time,id,x\n1,p,0.5\n2,p,0.5\n3,p,5\n4,p,5\n3,q,0\n4,q,0\n",
    );
    let want = [
        (1, 0.5, 0.5, 0.0, 1),
        (2, 0.5, 0.5, 0.0, 1),
        (3, 1.5, 0.5, 1.0, 1),
        (4, 1.0, 0.0, 1.0, 1),
    ];
    let json: serde_json::Value = serde_json::from_str(&steps_ospa2(&files, "2", "json")).unwrap();
    let csv = steps_ospa2(&files, "2", "csv");
    let mut lines = csv.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    assert_eq!(
        header[header.len() - 4..],
        [
            "ospa2",
            "ospa2_paired_power",
            "ospa2_unpaired_power",
            "ospa2_pairs"
        ]
    );
    let rows: Vec<Vec<&str>> = lines.map(|l| l.split(',').collect()).collect();
    for (k, &(time, value, paired, unpaired, pairs)) in want.iter().enumerate() {
        let step = &json["steps"][k];
        assert_eq!(step["time"], time);
        let row = &rows[k];
        let cell = |name: &str| row[header.iter().position(|h| *h == name).unwrap()];
        for (key, expected) in [
            ("ospa2", value),
            ("ospa2_paired_power", paired),
            ("ospa2_unpaired_power", unpaired),
        ] {
            assert_relative_eq!(step[key].as_f64().unwrap(), expected, epsilon = 1e-12);
            assert_relative_eq!(cell(key).parse::<f64>().unwrap(), expected, epsilon = 1e-12);
        }
        assert_eq!(step["ospa2_pairs"], pairs);
        assert_eq!(cell("ospa2_pairs"), pairs.to_string());
    }
    let text = steps_ospa2(&files, "2", "text");
    assert!(
        text.contains("over the 2 steps ending at each step"),
        "{text}"
    );
    let shown: Vec<&str> = text
        .lines()
        .filter(|l| l.trim_start().starts_with(|c: char| c.is_ascii_digit()))
        .take(4)
        .map(|l| l.split_whitespace().last().unwrap())
        .collect();
    assert_eq!(shown, ["0.5000", "0.5000", "1.5000", "1.0000"]);
}

/// Hand-derived, c = 2, p = 1, width 5: truth a on x = 0 at steps 1, 2 and 40; track p at
/// x = 1 (step 1) and x = 3 (step 2, beyond c).
///   step 1, window [1, 1]: d(a, p) = 1: 1;
///   steps 2 to 5, windows [1, 2] .. [1, 5]: d(a, p) = (1 + 2) / 2 = 1.5: 1.5;
///   step 6, window [2, 6]: d(a, p) = 2 = c, no pair: 2 (unpaired 2, no pair);
///   steps 7 to 39: no state in the window: null / empty / `-` (the text writes the run as one
///     line, and still one line with a window of 15, where steps 3 to 15 all show 1.5);
///   step 40, window [36, 40]: a alone: 2.
#[test]
fn steps_ospa2_through_an_empty_stretch() {
    let files = crate::bad_input::Files::new();
    files.write("t.csv", "time,id,x\n1,a,0\n2,a,0\n40,a,0\n");
    files.write("e.csv", "time,id,x\n1,p,1\n2,p,3\n");
    let run = |width: &str, format: &str| steps_ospa2(&files, width, format);
    let want = |time: Step| match time {
        1 => Some(1.0),
        2..=5 => Some(1.5),
        6 => Some(2.0),
        7..=39 => None,
        _ => Some(2.0),
    };
    let json: serde_json::Value = serde_json::from_str(&run("5", "json")).unwrap();
    let steps = json["steps"].as_array().unwrap();
    assert_eq!(steps.len(), 40);
    for step in steps {
        let time = step["time"].as_i64().unwrap();
        match want(time) {
            Some(value) => {
                assert_relative_eq!(step["ospa2"].as_f64().unwrap(), value, epsilon = 1e-12)
            }
            None => assert!(step["ospa2"].is_null(), "{step}"),
        }
    }
    assert_eq!(steps[5]["ospa2_pairs"], 0);
    assert_relative_eq!(
        steps[5]["ospa2_unpaired_power"].as_f64().unwrap(),
        2.0,
        epsilon = 1e-12
    );
    let csv = run("5", "csv");
    for line in csv.lines().skip(1) {
        let cells: Vec<&str> = line.split(',').collect();
        let time: Step = cells[0].parse().unwrap();
        let tail = &cells[cells.len() - 4..];
        match want(time) {
            Some(value) => {
                assert_relative_eq!(tail[0].parse::<f64>().unwrap(), value, epsilon = 1e-12)
            }
            None => assert_eq!(tail, ["", "", "", ""]),
        }
    }
    let text = run("5", "text");
    assert!(text.contains("\nsteps 7 to 39: no objects\n"), "{text}");
    let text = run("15", "text");
    assert!(
        text.contains("\nsteps 3 to 15: no objects, OSPA(2) 1.5000\n"),
        "{text}"
    );
}

/// `steps --ospa2` with classes is refused (OSPA(2) is normalised, so it does not add up over
/// classes; `specs/classes.md`), and `--ospa2-window` asks for `--ospa2` and a width of at
/// least one step.
#[test]
fn steps_ospa2_refusals() {
    let files = crate::bad_input::Files::new();
    files.write("t.csv", "time,id,x,k\n1,a,0,car\n");
    files.write("e.csv", "time,id,x,k\n1,p,1,car\n");
    let with = |extra: &[&'static str]| [&STEPS_ON_FILES[..], extra].concat();
    files.fails(
        &with(&["--ospa2", "--class-column", "k"]),
        1,
        "--ospa2 does not go with --class-column: OSPA(2) is normalised by the number of \
         trajectories, so its values do not add up over classes; run steps --ospa2 on each \
         class's rows instead",
    );
    let (code, _, err) = files.run(&with(&["--ospa2-window", "3"]));
    assert_eq!(code, 2);
    assert!(err.contains("--ospa2"), "{err}");
    let (code, _, err) = files.run(&with(&["--ospa2", "--ospa2-window", "0"]));
    assert_eq!(code, 2);
    assert!(err.contains("--ospa2-window"), "{err}");
}

/// Memory follows the data, not the window: 40,000,000 steps with objects at two of them.
/// The text output keeps the empty stretch on one line, with a narrow and with a wide window
/// (hand-derived, c = 2, p = 1; truth a on x = 0 at steps 1 and 40,000,000, track p at x = 1
/// at step 1). Width 3: steps 1 to 3 see only the pair at step 1, d = 1, value 1; the last step
/// sees a alone, 2. Width 40,000,000: every window starts at step 1, so steps 1 to 39,999,999
/// show 1 and the last step d(a, p) = (1 + 2) / 2 = 1.5.
#[test]
fn steps_ospa2_long_empty_stretch_stays_one_line() {
    let files = crate::bad_input::Files::new();
    files.write("t.csv", "time,id,x\n1,a,0\n40000000,a,0\n");
    files.write("e.csv", "time,id,x\n1,p,1\n");
    let run = |width: &str| steps_ospa2(&files, width, "text");
    // The last cell of the row of `step`.
    let value = |text: &str, step: &str| -> f64 {
        let row = text
            .lines()
            .find(|l| l.trim_start().starts_with(&format!("{step} ")))
            .unwrap();
        row.split_whitespace().last().unwrap().parse().unwrap()
    };
    let text = run("40000000");
    assert!(
        text.contains("\nsteps 2 to 39999999: no objects, OSPA(2) 1.0000\n"),
        "{text}"
    );
    assert_relative_eq!(value(&text, "1"), 1.0, epsilon = 1e-12);
    assert_relative_eq!(value(&text, "40000000"), 1.5, epsilon = 1e-12);
    let text = run("3");
    assert!(
        text.contains("\nsteps 4 to 39999999: no objects\n"),
        "{text}"
    );
    assert_relative_eq!(value(&text, "40000000"), 2.0, epsilon = 1e-12);
    for step in ["1", "2", "3"] {
        assert_relative_eq!(value(&text, step), 1.0, epsilon = 1e-12);
    }
}
