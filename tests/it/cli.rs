//! The commands `steps`, `score`, `switches` and `audit` through the real binary on the demo
//! data: output contracts (JSON keys, CSV rows), internal consistency, and the same bytes on
//! every run. Values checked against the library are independent of the printing path only;
//! the metric itself is checked in `references.rs` and `metric_cases.rs`.

use assert_cmd::Command;
use serde_json::Value;

fn demo(name: &str) -> String {
    format!("{}/demo-data/{name}", env!("CARGO_MANIFEST_DIR"))
}

/// `COMMAND --truth T --estimate E --cutoff 20 --format F`: the demo's suggested cut-off.
fn demo_args(command: &str, truth: &str, estimate: &str, format: &str) -> Vec<String> {
    [
        command,
        "--truth",
        truth,
        "--estimate",
        estimate,
        "--cutoff",
        "20",
        "--format",
        format,
    ]
    .map(String::from)
    .to_vec()
}

/// Runs the binary, asserts success, returns standard output.
pub(crate) fn run<S: AsRef<std::ffi::OsStr> + std::fmt::Debug>(args: &[S]) -> Vec<u8> {
    let output = Command::cargo_bin("switchyard")
        .unwrap()
        .args(args)
        .output()
        .unwrap();
    assert!(
        output.status.success(),
        "switchyard {args:?} failed: {}",
        String::from_utf8_lossy(&output.stderr)
    );
    output.stdout
}

fn json<S: AsRef<std::ffi::OsStr> + std::fmt::Debug>(args: &[S]) -> Value {
    serde_json::from_slice(&run(args)).unwrap()
}

/// The number at `key`, or a panic naming it.
pub(crate) fn number(value: &Value, key: &str) -> f64 {
    value[key]
        .as_f64()
        .unwrap_or_else(|| panic!("{key} is not a number in {value}"))
}

#[test]
fn score_json_keeps_its_contract_and_its_parts_add_up() {
    let (truth, estimate) = (demo("truth.csv"), demo("tracker-fragments.csv"));
    let doc = json(&demo_args("score", &truth, &estimate, "json"));
    for key in [
        "metric",
        "total",
        "per_step",
        "steps",
        "localization",
        "missed",
        "false",
        "switching",
        "missed_count",
        "false_count",
        "switch_count",
        "integral",
        "params",
        "switches",
        "jumps",
        "inputs",
        "window",
        "engine",
        "lp",
        "lp_total",
        "exact_total",
        "exact",
    ] {
        assert!(doc.get(key).is_some(), "missing key {key}");
    }
    for key in ["cutoff", "order", "switch_penalty"] {
        assert!(doc["params"].get(key).is_some(), "missing params.{key}");
    }
    // The default switching penalty is the cut-off (specs/metric.md).
    assert_eq!(number(&doc["params"], "switch_penalty"), 20.0);
    let parts = ["localization", "missed", "false", "switching"]
        .iter()
        .map(|k| number(&doc, k))
        .sum::<f64>();
    let total = number(&doc, "total");
    assert!((parts - total).abs() <= 1e-9 * total);
    // d^p with p = 1, per step = total / steps; missed part = (c/2) x missed object-steps.
    assert!((number(&doc, "metric") - total).abs() <= 1e-9 * total);
    assert!((number(&doc, "per_step") - total / number(&doc, "steps")).abs() <= 1e-9 * total);
    assert!((number(&doc, "missed") - 10.0 * number(&doc, "missed_count")).abs() <= 1e-9 * total);
    let event_cost: f64 = doc["switches"]
        .as_array()
        .unwrap()
        .iter()
        .map(|e| number(e, "cost"))
        .sum();
    assert!((event_cost - number(&doc, "switching")).abs() <= 1e-9 * total.max(1.0));
    for event in doc["switches"].as_array().unwrap() {
        let keys: Vec<&str> = event
            .as_object()
            .unwrap()
            .keys()
            .map(String::as_str)
            .collect();
        assert_eq!(keys, vec!["cost", "from", "time", "to", "truth", "weight"]);
    }
}

#[test]
fn switches_on_the_swapping_tracker_are_the_generated_swaps() {
    // The demo tracker "swaps" keeps whole tracks and only exchanges boats between two tracks
    // when two boats pass close (demo-data/README.md). So every switch is full and has a mirror
    // image at the same step: truth a passes from track p to q while truth b passes from q to p.
    let (truth, estimate) = (demo("truth.csv"), demo("tracker-swaps.csv"));
    let doc = json(&demo_args("switches", &truth, &estimate, "json"));
    let switches = doc["switches"].as_array().unwrap();
    assert!(!switches.is_empty() && switches.len().is_multiple_of(2));
    assert!(switches
        .iter()
        .all(|e| e["from"].is_string() && e["to"].is_string() && e["weight"] == 1.0));
    for e in switches {
        let mirrored = switches.iter().any(|m| {
            m["time"] == e["time"]
                && m["truth"] != e["truth"]
                && m["from"] == e["to"]
                && m["to"] == e["from"]
        });
        assert!(mirrored, "no mirror image for {e}");
    }
    assert_eq!(number(&doc, "switch_count"), switches.len() as f64);
    let n = switches.len();
    let csv = String::from_utf8(run(&demo_args("switches", &truth, &estimate, "csv"))).unwrap();
    assert_eq!(
        csv.lines().next(),
        Some("side,time,object,from,to,weight,cost")
    );
    assert_eq!(csv.lines().count(), 1 + 2 * n);
}

#[test]
fn audit_ranks_worst_first_and_top_limits_the_list() {
    let (truth, estimate) = (demo("truth.csv"), demo("tracker-fragments.csv"));
    let doc = json(&[
        "audit",
        "--truth",
        &truth,
        "--estimate",
        &estimate,
        "--cutoff",
        "20",
        "--format",
        "json",
        "--top",
        "5",
    ]);
    let truths = doc["truths"].as_array().unwrap();
    assert_eq!(truths.len(), 5);
    for pair in truths.windows(2) {
        let key = |t: &Value| (number(t, "switches"), t["longest_missed"].as_u64().unwrap());
        let (a, b) = (key(&pair[0]), key(&pair[1]));
        assert!(
            a.0 > b.0 || (a.0 == b.0 && a.1 >= b.1),
            "not worst first: {a:?} then {b:?}"
        );
    }
    for t in truths {
        let covered: u64 = t["covered"]
            .as_array()
            .unwrap()
            .iter()
            .map(|s| s["steps"].as_u64().unwrap())
            .sum();
        let missed: u64 = t["missed"]
            .as_array()
            .unwrap()
            .iter()
            .map(|s| s["steps"].as_u64().unwrap())
            .sum();
        assert_eq!(covered + missed, t["present_steps"].as_u64().unwrap());
    }
}

#[test]
fn steps_csv_has_one_row_per_step_of_the_window() {
    let (truth, estimate) = (demo("truth.csv"), demo("tracker-swaps.csv"));
    let csv = String::from_utf8(run(&demo_args("steps", &truth, &estimate, "csv"))).unwrap();
    // The demo covers scans 0 to 299 (demo-data/README.md).
    assert_eq!(csv.lines().count(), 1 + 300);
    let doc = json(&demo_args("steps", &truth, &estimate, "json"));
    let steps = doc["steps"].as_array().unwrap();
    for key in [
        "time",
        "gospa",
        "localization",
        "missed",
        "false",
        "missed_count",
        "false_count",
    ] {
        assert!(steps[0].get(key).is_some(), "missing steps[].{key}");
    }
    // Each step's parts add up to gospa^p (p = 1).
    for s in steps {
        let parts = number(s, "localization") + number(s, "missed") + number(s, "false");
        assert!((parts - number(s, "gospa")).abs() <= 1e-9 * parts.max(1.0));
    }
}

#[test]
fn same_input_same_bytes_whatever_the_thread_count() {
    let (truth, estimate) = (demo("truth.csv"), demo("tracker-fragments.csv"));
    let args = [
        "score",
        "--truth",
        &truth,
        "--estimate",
        &estimate,
        "--cutoff",
        "20",
        "--format",
        "json",
    ];
    let outputs: Vec<Vec<u8>> = ["1", "2", "1"]
        .iter()
        .map(|threads| {
            Command::cargo_bin("switchyard")
                .unwrap()
                .env("RAYON_NUM_THREADS", threads)
                .args(args)
                .output()
                .unwrap()
                .stdout
        })
        .collect();
    assert!(!outputs[0].is_empty());
    assert_eq!(outputs[0], outputs[1]);
    assert_eq!(outputs[0], outputs[2]);
}

#[test]
fn audit_csv_lists_every_span_of_the_json() {
    let (truth, estimate) = (demo("truth.csv"), demo("tracker-fragments.csv"));
    let base = [
        "audit",
        "--truth",
        &truth,
        "--estimate",
        &estimate,
        "--cutoff",
        "20",
    ];
    let doc = json(&[&base[..], &["--format", "json"]].concat());
    let spans = |items: &Value, keys: [&str; 2]| -> usize {
        items
            .as_array()
            .unwrap()
            .iter()
            .map(|t| {
                keys.iter()
                    .map(|k| t[*k].as_array().unwrap().len())
                    .sum::<usize>()
            })
            .sum()
    };
    let expected = spans(&doc["truths"], ["covered", "missed"])
        + spans(&doc["estimates"], ["following", "false_spans"]);
    let csv = String::from_utf8(run(&[&base[..], &["--format", "csv"]].concat())).unwrap();
    let mut lines = csv.lines();
    assert_eq!(
        lines.next(),
        Some("side,object,rank,kind,first,last,steps,partner,mean_error,object_cost,object_share")
    );
    assert_eq!(lines.count(), expected);
}

#[test]
fn standard_input_reads_one_of_the_two_inputs() {
    let (truth, estimate) = (demo("truth.csv"), demo("tracker-swaps.csv"));
    let from_files = run(&demo_args("steps", &truth, &estimate, "csv"));
    let output = Command::cargo_bin("switchyard")
        .unwrap()
        .args([
            "steps",
            "--truth",
            "-",
            "--estimate",
            &estimate,
            "--cutoff",
            "20",
            "--format",
            "csv",
        ])
        .write_stdin(std::fs::read(&truth).unwrap())
        .output()
        .unwrap();
    assert!(output.status.success());
    assert_eq!(output.stdout, from_files);
    let both = Command::cargo_bin("switchyard")
        .unwrap()
        .args(["steps", "--truth", "-", "--estimate", "-", "--cutoff", "20"])
        .output()
        .unwrap();
    assert_eq!(both.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&both.stderr).contains("only one of --truth and --estimate"));
}

/// `audit --rank-by cost --top 3` on the demo data: three truths and three tracks, truths in
/// falling cost, tracks in falling false cost, and (without --top) the objects' costs add up to
/// the total, since trajectory GOSPA's parts split over the objects they are counted on
/// (`src/assignment/audit.rs`).
#[test]
fn audit_ranks_by_cost_and_top_limits_tracks_too() {
    // The values at `list[*].costs.key` of a document.
    let costs = |doc: &Value, list: &str, key: &str| -> Vec<f64> {
        doc[list]
            .as_array()
            .unwrap()
            .iter()
            .map(|o| o["costs"][key].as_f64().unwrap())
            .collect()
    };
    let mut args = demo_args(
        "audit",
        &demo("truth.csv"),
        &demo("tracker-fragments.csv"),
        "json",
    );
    let all: Value = serde_json::from_slice(&run(&args)).unwrap();
    let truths: f64 = costs(&all, "truths", "total").iter().sum();
    let tracks: f64 = costs(&all, "estimates", "false").iter().sum();
    let total = all["lp_total"].as_f64().unwrap();
    assert!((truths + tracks - total).abs() <= 1e-9 * total);
    args.extend(["--rank-by", "cost", "--top", "3"].map(String::from));
    let top: Value = serde_json::from_slice(&run(&args)).unwrap();
    let truth_costs = costs(&top, "truths", "total");
    assert_eq!(truth_costs.len(), 3);
    assert!(
        truth_costs.windows(2).all(|w| w[0] >= w[1]),
        "{truth_costs:?}"
    );
    let highest = costs(&all, "truths", "total")
        .into_iter()
        .fold(0.0, f64::max);
    assert_eq!(truth_costs[0], highest);
    let false_costs = costs(&top, "estimates", "false");
    assert_eq!(false_costs.len(), 3);
    assert!(
        false_costs.windows(2).all(|w| w[0] >= w[1]),
        "{false_costs:?}"
    );
    let ranks: Vec<u64> = top["truths"]
        .as_array()
        .unwrap()
        .iter()
        .map(|t| t["rank"].as_u64().unwrap())
        .collect();
    assert_eq!(ranks, vec![1, 2, 3]);
}

/// With `--time-step 0.1`, outputs give each step's time in the input's units beside the step
/// index: time = step x step size (common practice for sampled data; the step is
/// round(time / step size), `specs/formats.md`), so the row written 0.30000001 reads 0.3. Hand
/// scene: truth a at x = 0 on times 0 to 0.4; track p at 0.5 on 0 and 0.1, track q at 0 from
/// 0.2: one switch p -> q at step 2 (time 0.2).
#[test]
fn time_step_gives_times_in_the_input_units() {
    let dir = tempfile::tempdir().unwrap();
    let truth = dir.path().join("t.csv");
    let estimate = dir.path().join("e.csv");
    std::fs::write(
        &truth,
        "time,id,x\n0,a,0\n0.1,a,0\n0.2,a,0\n0.30000001,a,0\n0.4,a,0\n",
    )
    .unwrap();
    std::fs::write(
        &estimate,
        "time,id,x\n0,p,0.5\n0.1,p,0.5\n0.2,q,0\n0.3,q,0\n0.4,q,0\n",
    )
    .unwrap();
    let args = |command: &str, format: &str| -> Vec<String> {
        let mut args: Vec<String> = [command, "--truth"].map(String::from).to_vec();
        args.push(truth.to_str().unwrap().into());
        args.push("--estimate".into());
        args.push(estimate.to_str().unwrap().into());
        args.extend(
            [
                "--state-columns",
                "x",
                "-c",
                "2",
                "--time-step",
                "0.1",
                "-f",
                format,
            ]
            .map(String::from),
        );
        args
    };
    let csv = String::from_utf8(run(&args("steps", "csv"))).unwrap();
    let rows: Vec<Vec<&str>> = csv.lines().map(|l| l.split(',').collect()).collect();
    assert_eq!(&rows[0][..3], &["time", "input_time", "gospa"]);
    let times: Vec<(&str, &str)> = rows[1..].iter().map(|r| (r[0], r[1])).collect();
    assert_eq!(
        times,
        vec![
            ("0", "0"),
            ("1", "0.1"),
            ("2", "0.2"),
            ("3", "0.3"),
            ("4", "0.4")
        ]
    );
    let json: Value = serde_json::from_slice(&run(&args("switches", "json"))).unwrap();
    assert_eq!(json["inputs"]["time_step"], 0.1);
    assert_eq!(json["switches"][0]["time"], 2);
    assert_eq!(json["switches"][0]["input_time"], 0.2);
    let audit = String::from_utf8(run(&args("audit", "csv"))).unwrap();
    let mut lines = audit.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let first_time = header.iter().position(|h| *h == "first_time").unwrap();
    let last_time = header.iter().position(|h| *h == "last_time").unwrap();
    let spans: Vec<(String, String)> = lines
        .filter(|l| l.starts_with("truth,"))
        .map(|l| {
            let cells: Vec<&str> = l.split(',').collect();
            (cells[first_time].to_string(), cells[last_time].to_string())
        })
        .collect();
    assert_eq!(
        spans,
        vec![("0".into(), "0.1".into()), ("0.2".into(), "0.4".into())]
    );
}

/// One spelling, localisation, in every output; JSON keeps the earlier key `localization`
/// beside it for one release (`specs/formats.md`), with the same value.
#[test]
fn localisation_is_spelt_one_way_and_the_old_json_key_stays_for_now() {
    let (truth, estimate) = (demo("truth.csv"), demo("tracker-swaps.csv"));
    let score: Value =
        serde_json::from_slice(&run(&demo_args("score", &truth, &estimate, "json"))).unwrap();
    assert_eq!(score["localisation"], score["localization"]);
    assert!(score["localisation"].as_f64().unwrap() > 0.0);
    let steps: Value =
        serde_json::from_slice(&run(&demo_args("steps", &truth, &estimate, "json"))).unwrap();
    for step in steps["steps"].as_array().unwrap() {
        assert_eq!(step["localisation"], step["localization"]);
    }
    assert_eq!(
        steps["summary"]["localisation"],
        steps["summary"]["localization"]
    );
    for command in ["score", "steps"] {
        let csv = String::from_utf8(run(&demo_args(command, &truth, &estimate, "csv"))).unwrap();
        let header = csv.lines().next().unwrap();
        assert!(header.split(',').any(|c| c == "localisation"), "{header}");
        assert!(!header.contains("localization"), "{header}");
    }
}
