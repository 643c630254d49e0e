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

#[test]
fn ospa2_matches_scipy_assignment_whole_and_sliding() {
    let file: File = read("ospa2_cases.json");
    assert!(file.cases.len() > 100);
    let mut windows = 0;
    for (k, case) in file.cases.iter().enumerate() {
        let dim = case
            .truth
            .values()
            .chain(case.estimate.values())
            .flat_map(|points| points.iter().map(|(_, s)| s.len()))
            .next()
            .unwrap_or(1);
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
