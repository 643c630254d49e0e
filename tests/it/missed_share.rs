//! Different costs for missed and false objects (`--missed-share S`, specs/missed-share.md): a
//! missed object-step costs S c^p, a false one (1 - S) c^p, an assigned pair min(d, c)^p.
//!
//! Sources of the expected values:
//! - tests/data/reference/missed_share_cases.json, written by
//!   tests/reference/missed_share_reference.py: scipy's HiGHS on the full trajectory GOSPA LP
//!   (García-Fernández, Rahmathullah, Svensson, IEEE TSP 2020) with the separate costs written
//!   into the model, and scipy's linear_sum_assignment on per-step GOSPA's augmented matrix
//!   (Rahmathullah, García-Fernández, Svensson, FUSION 2017) with the same costs;
//! - hand derivations from those definitions, stated beside each check;
//! - the runs without the option (S = 1/2 must give the same bytes), and the shift
//!   (S - 1/2) c^p (truth - estimate object-steps) with the object-steps counted from the
//!   input files themselves.

use std::collections::BTreeMap;

use approx::assert_relative_eq;
use serde::Deserialize;
use serde_json::Value;
use switchyard::distance::Distance;
use switchyard::per_step::{occupied_steps, GospaParams};
use switchyard::trajectory::{Step, TrajectorySet};
use switchyard::trajectory_metric::{
    score, score_with, ExactBudget, SolveOptions, TrajectoryParams,
};

use crate::bad_input::Files;
use crate::cli::{number, run};
use crate::references::{read, to_set};
use crate::support::{line, lines};

#[derive(Deserialize)]
struct ReferenceParts {
    localisation: f64,
    missed: f64,
    #[serde(rename = "false")]
    false_: f64,
    switching: f64,
    missed_count: f64,
    false_count: f64,
}

#[derive(Deserialize)]
struct ShareCase {
    cutoff: f64,
    order: f64,
    switch_penalty: f64,
    missed_share: f64,
    truth: BTreeMap<String, Vec<(Step, Vec<f64>)>>,
    estimate: BTreeMap<String, Vec<(Step, Vec<f64>)>>,
    lp_total: f64,
    parts: Option<ReferenceParts>,
    steps: usize,
    per_step: Vec<(Step, f64)>,
}

#[derive(Deserialize)]
struct ShareFile {
    cases: Vec<ShareCase>,
}

fn sets(case: &ShareCase) -> (TrajectorySet, TrajectorySet) {
    let dim = case
        .truth
        .values()
        .chain(case.estimate.values())
        .flat_map(|points| points.iter().map(|(_, s)| s.len()))
        .next()
        .unwrap_or(1);
    (to_set(&case.truth, dim), to_set(&case.estimate, dim))
}

fn params(c: f64, p: f64, gamma: f64, share: f64) -> TrajectoryParams {
    TrajectoryParams::new(c, p, gamma)
        .unwrap()
        .with_missed_share(share)
        .unwrap()
}

/// The tolerance of the comparisons with scipy: 1e-6 relative (HiGHS's optimality tolerance
/// is about 1e-7; the reference values are re-evaluated from the rounded optimum).
fn near(actual: f64, expected: f64, what: &str) {
    assert!(
        (actual - expected).abs() <= 1e-6 * expected.abs().max(1.0),
        "{what}: {actual} but scipy gives {expected}"
    );
}

#[test]
fn trajectory_and_per_step_values_match_scipy_with_separate_costs() {
    let file: ShareFile = read("missed_share_cases.json");
    assert!(file.cases.len() >= 80);
    let mut with_parts = 0;
    for (n, case) in file.cases.iter().enumerate() {
        let (x, y) = sets(case);
        let p = params(
            case.cutoff,
            case.order,
            case.switch_penalty,
            case.missed_share,
        );
        let s = score(&x, &y, &p, &Distance::default()).unwrap();
        assert_eq!(s.steps, case.steps, "case {n}");
        near(s.total, case.lp_total, &format!("case {n}: d^p"));
        assert!(s.certificate.proven, "case {n}");
        near(
            s.certificate.lower,
            case.lp_total,
            &format!("case {n}: lower"),
        );
        near(
            s.certificate.upper,
            case.lp_total,
            &format!("case {n}: upper"),
        );
        if let Some(parts) = &case.parts {
            with_parts += 1;
            near(
                s.parts.localization,
                parts.localisation,
                &format!("case {n}: localisation"),
            );
            near(s.parts.missed, parts.missed, &format!("case {n}: missed"));
            near(s.parts.false_, parts.false_, &format!("case {n}: false"));
            near(
                s.parts.switching,
                parts.switching,
                &format!("case {n}: switching"),
            );
            near(
                s.parts.missed_count,
                parts.missed_count,
                &format!("case {n}: missed count"),
            );
            near(
                s.parts.false_count,
                parts.false_count,
                &format!("case {n}: false count"),
            );
        }
        let gospa = GospaParams::new(case.cutoff, case.order, 2.0)
            .unwrap()
            .with_missed_share(case.missed_share)
            .unwrap();
        let steps = occupied_steps(&x, &y, &gospa, &Distance::default()).unwrap();
        assert_eq!(steps.occupied.len(), case.per_step.len(), "case {n}");
        for (step, &(time, power)) in steps.occupied.iter().zip(&case.per_step) {
            assert_eq!(step.time, time, "case {n}");
            let parts = step.localization.unwrap() + step.missed.unwrap() + step.false_.unwrap();
            assert_relative_eq!(parts, power, epsilon = 1e-9, max_relative = 1e-9);
            assert_relative_eq!(
                step.gospa.powf(case.order),
                power,
                epsilon = 1e-9,
                max_relative = 1e-9
            );
        }
    }
    assert!(
        with_parts >= 70,
        "{with_parts} cases with their parts fixed"
    );
}

#[test]
fn one_truth_alone_and_one_track_alone() {
    // By hand (trajectory GOSPA with the separate costs): one truth over 4 steps and no
    // estimate, c = 2, p = 1, S = 0.75: 4 missed object-steps x 0.75 x 2 = 6 (missed 6, false 0).
    // The roles reversed (one track, no truth): 4 false object-steps x 0.25 x 2 = 2.
    let track = lines(vec![line("a", 0, &[0.0, 0.0, 0.0, 0.0])]);
    let empty = lines(Vec::new());
    let p = params(2.0, 1.0, 2.0, 0.75);
    let missed = score(&track, &empty, &p, &Distance::default()).unwrap();
    assert_relative_eq!(missed.total, 6.0, max_relative = 1e-12);
    assert_relative_eq!(missed.metric, 6.0, max_relative = 1e-12);
    assert_relative_eq!(missed.parts.missed, 6.0, max_relative = 1e-12);
    assert_eq!(missed.parts.false_, 0.0);
    let false_ = score(&empty, &track, &p, &Distance::default()).unwrap();
    assert_relative_eq!(false_.total, 2.0, max_relative = 1e-12);
    assert_relative_eq!(false_.parts.false_, 2.0, max_relative = 1e-12);
    assert_eq!(false_.parts.missed, 0.0);
    // Not symmetric when S != 1/2; swapping the roles is swapping S and 1 - S.
    let swapped = score(
        &empty,
        &track,
        &params(2.0, 1.0, 2.0, 0.25),
        &Distance::default(),
    )
    .unwrap();
    assert_relative_eq!(swapped.total, missed.total, max_relative = 1e-12);
}

#[test]
fn the_standard_share_changes_nothing() {
    // The derived check values of shared/design/metric.md are computed at S = 1/2: asking for
    // the share 0.5 explicitly gives the same score, field for field. The crossing scene: two
    // truths at 0 and 10 over steps 1-4, two tracks that swap them after step 2; c = 5, p = 1.
    let truth = lines(vec![line("t0", 1, &[0.0; 4]), line("t1", 1, &[10.0; 4])]);
    let estimate = lines(vec![
        line("e0", 1, &[0.0, 0.0, 10.0, 10.0]),
        line("e1", 1, &[10.0, 10.0, 0.0, 0.0]),
    ]);
    for (gamma, expected) in [(1.0, 2.0), (6.0, 12.0), (11.0, 20.0)] {
        let standard = TrajectoryParams::new(5.0, 1.0, gamma).unwrap();
        let a = score(&truth, &estimate, &standard, &Distance::default()).unwrap();
        let b = score(
            &truth,
            &estimate,
            &params(5.0, 1.0, gamma, 0.5),
            &Distance::default(),
        )
        .unwrap();
        assert_relative_eq!(a.total, expected, max_relative = 1e-9);
        // Everything written (the seconds spent are not), and the assignment.
        assert_eq!(
            serde_json::to_value(&a).unwrap(),
            serde_json::to_value(&b).unwrap()
        );
        assert_eq!(a.assignment, b.assignment);
    }
}

#[test]
fn the_exact_metric_and_its_bounds_move_with_the_share() {
    // The crowded scenes of the reference file have an LP optimum below the integral one; with
    // --exact, the integral value, its parts and every bound move by the same constant
    // (S - 1/2) c^p (truth - estimate object-steps) (specs/missed-share.md), the object-steps
    // counted from the sets.
    let file: ShareFile = read("missed_share_cases.json");
    let options = SolveOptions {
        exact: Some(ExactBudget::Unlimited),
        ..SolveOptions::default()
    };
    let mut checked = 0;
    for case in file.cases.iter().filter(|c| c.missed_share == 0.8) {
        let (x, y) = sets(case);
        let distance = Distance::default();
        let standard = TrajectoryParams::new(case.cutoff, case.order, case.switch_penalty).unwrap();
        let shared = standard.with_missed_share(0.8).unwrap();
        let a = score_with(&x, &y, &standard, &distance, &options).unwrap();
        let b = score_with(&x, &y, &shared, &distance, &options).unwrap();
        let shift =
            0.3 * standard.cutoff_power() * (x.object_steps() as f64 - y.object_steps() as f64);
        let close = |actual: f64, expected: f64| {
            assert!(
                (actual - expected).abs() <= 1e-9 * expected.abs().max(1.0),
                "{actual} vs {expected}"
            )
        };
        close(b.total, a.total + shift);
        close(b.lp_total, a.lp_total + shift);
        close(b.certificate.lower, a.certificate.lower + shift);
        close(b.certificate.upper, a.certificate.upper + shift);
        close(
            b.parts.missed,
            0.8 * standard.cutoff_power() * a.parts.missed_count,
        );
        close(
            b.parts.false_,
            0.2 * standard.cutoff_power() * a.parts.false_count,
        );
        assert_eq!(b.parts.localization, a.parts.localization);
        assert_eq!(b.parts.switching, a.parts.switching);
        let (ea, eb) = (a.exact.unwrap(), b.exact.unwrap());
        assert_eq!(ea.proven, eb.proven);
        close(eb.lower, ea.lower + shift);
        close(eb.upper, ea.upper + shift);
        if a.lp_total < a.total - 1e-9 {
            checked += 1;
        }
    }
    assert!(
        checked >= 2,
        "{checked} scenes with LP below the exact value"
    );
}

/// Writes two one-dimensional CSV files with a `kind` column: truths a (car, steps 1-5 at 0)
/// and b (pedestrian, steps 1-3 at 20); tracks p (car, steps 1-3 near a), q (pedestrian,
/// steps 2-6 near b, then away) and r (car, step 4 far off). Object-steps: cars 5 truth and
/// 4 estimate, pedestrians 3 truth and 5 estimate; all 8 truth and 9 estimate.
fn classed_scene(files: &Files) -> (String, String) {
    let truth = files.write(
        "t.csv",
        "time,id,x,kind\n1,a,0,car\n2,a,0,car\n3,a,0,car\n4,a,0,car\n5,a,0,car\n\
         1,b,20,pedestrian\n2,b,20,pedestrian\n3,b,20,pedestrian\n",
    );
    let estimate = files.write(
        "e.csv",
        "time,id,x,kind\n1,p,0.5,car\n2,p,0.5,car\n3,p,0.5,car\n\
         2,q,20.5,pedestrian\n3,q,20.5,pedestrian\n4,q,40,pedestrian\n5,q,40,pedestrian\n\
         6,q,40,pedestrian\n4,r,90,car\n",
    );
    (
        truth.to_str().unwrap().to_string(),
        estimate.to_str().unwrap().to_string(),
    )
}

#[test]
fn classes_add_up_with_the_share() {
    // With classes, d^p of all classes is the sum of the classes' (specs/classes.md); each
    // class moves by 0.3 c^p (its truth - estimate object-steps), so the sum moves by
    // 0.3 c^p (8 - 9) = -0.6 with c = 2, p = 1 (counts in `classed_scene`).
    let files = Files::new();
    let (truth, estimate) = classed_scene(&files);
    let base = [
        "score",
        "--truth",
        &truth,
        "--estimate",
        &estimate,
        "-c",
        "2",
        "--class-column",
        "kind",
        "--state-columns",
        "x",
        "-f",
        "json",
    ];
    let standard: Value = serde_json::from_slice(&run(&base)).unwrap();
    let shared: Value =
        serde_json::from_slice(&run(&[&base[..], &["--missed-share", "0.8"]].concat())).unwrap();
    let cut = 0.3 * 2.0;
    for (class, difference) in [("car", 5.0 - 4.0), ("pedestrian", 3.0 - 5.0)] {
        let a = number(&standard["classes"][class], "total");
        let b = number(&shared["classes"][class], "total");
        assert_relative_eq!(b, a + cut * difference, epsilon = 1e-9, max_relative = 1e-9);
    }
    let sum: f64 = ["car", "pedestrian"]
        .iter()
        .map(|class| number(&shared["classes"][class], "total"))
        .sum();
    assert_relative_eq!(
        number(&shared, "total"),
        sum,
        epsilon = 1e-9,
        max_relative = 1e-9
    );
    assert_relative_eq!(
        number(&shared, "total"),
        number(&standard, "total") + cut * (8.0 - 9.0),
        epsilon = 1e-9,
        max_relative = 1e-9
    );
}

fn demo(name: &str) -> String {
    format!("{}/demo-data/{name}", env!("CARGO_MANIFEST_DIR"))
}

#[test]
fn the_share_one_half_gives_the_bytes_of_the_run_without_it() {
    // S = 1/2 is trajectory GOSPA itself: every command's every format must be unchanged.
    let (truth, swaps, fragments) = (
        demo("truth.csv"),
        demo("tracker-swaps.csv"),
        demo("tracker-fragments.csv"),
    );
    let inputs = ["--truth", &truth, "--estimate", &swaps, "-c", "20"];
    let runs: Vec<Vec<&str>> = vec![
        [&["score"], &inputs[..], &["-f", "text"]].concat(),
        [&["score"], &inputs[..], &["-f", "json", "-p", "2"]].concat(),
        [&["score"], &inputs[..], &["-f", "csv"]].concat(),
        [&["steps"], &inputs[..], &["-f", "text"]].concat(),
        [&["steps"], &inputs[..], &["-f", "json"]].concat(),
        [&["steps"], &inputs[..], &["-f", "csv"]].concat(),
        [&["audit"], &inputs[..], &["-f", "json"]].concat(),
        [&["audit"], &inputs[..], &["-f", "text"]].concat(),
        [&["report"], &inputs[..], &["--estimate", &fragments]].concat(),
        [
            &["compare"],
            &inputs[..],
            &["--estimate", &fragments, "-f", "json"],
        ]
        .concat(),
        [
            &["compare"],
            &inputs[..],
            &["--estimate", &fragments, "--monte-carlo"],
        ]
        .concat(),
    ];
    for args in runs {
        let without = run(&args);
        let with = run(&[&args[..], &["--missed-share", "0.5"]].concat());
        assert!(
            without == with,
            "{args:?}: --missed-share 0.5 changed the output"
        );
    }
}

/// `command` on the demo's truth and its tracker with swaps, c = 20, with `extra` options.
fn on_demo(command: &str, extra: &[&str]) -> Vec<u8> {
    let (truth, swaps) = (demo("truth.csv"), demo("tracker-swaps.csv"));
    let inputs = ["--truth", &truth, "--estimate", &swaps, "-c", "20"];
    run(&[&[command], &inputs[..], extra].concat())
}

/// Object-steps of a CSV file: its rows after the header.
fn object_steps(path: &str) -> f64 {
    (std::fs::read_to_string(path).unwrap().lines().count() - 1) as f64
}

#[test]
fn score_moves_by_the_share_times_the_difference_in_object_steps() {
    // d^p at S = 0.8 = d^p at 1/2 + 0.3 c^p (N_X - N_Y) (specs/missed-share.md), with N_X and
    // N_Y the rows of the demo's files; c = 20, p = 1 and p = 2.
    let (truth, swaps) = (demo("truth.csv"), demo("tracker-swaps.csv"));
    let difference = object_steps(&truth) - object_steps(&swaps);
    assert!(difference != 0.0, "the demo's files differ in object-steps");
    for order in ["1", "2"] {
        let options = ["-p", order, "-f", "json"];
        let standard: Value = serde_json::from_slice(&on_demo("score", &options)).unwrap();
        let shared: Value = serde_json::from_slice(&on_demo(
            "score",
            &[&options[..], &["--missed-share", "0.8"]].concat(),
        ))
        .unwrap();
        let cutoff_power = 20f64.powf(order.parse().unwrap());
        let expected = number(&standard, "total") + 0.3 * cutoff_power * difference;
        assert_relative_eq!(number(&shared, "total"), expected, max_relative = 1e-12);
        assert_relative_eq!(
            number(&shared, "missed"),
            0.8 * cutoff_power * number(&standard, "missed_count"),
            max_relative = 1e-12
        );
        assert_relative_eq!(
            number(&shared, "false"),
            0.2 * cutoff_power * number(&standard, "false_count"),
            max_relative = 1e-12
        );
        assert_eq!(shared["params"]["missed_share"].as_f64(), Some(0.8));
        assert!(standard["params"].get("missed_share").is_none());
        assert_eq!(shared["missed_count"], standard["missed_count"]);
        assert_eq!(shared["false_count"], standard["false_count"]);
    }
}

#[test]
fn text_outputs_name_the_share_and_the_two_costs() {
    // c = 20, p = 1, S = 0.8: a missed object-step costs 16 and a false one 4.
    let line = "missed share S = 0.8: a missed object-step costs S c^p = 16, a false one \
                (1 - S) c^p = 4";
    for command in ["score", "steps", "audit"] {
        let text = String::from_utf8(on_demo(command, &["--missed-share", "0.8"])).unwrap();
        assert_eq!(text.lines().nth(1), Some(line), "{command}");
    }
}

#[test]
fn shares_outside_the_open_interval_are_refused() {
    let files = Files::new();
    let (truth, estimate) = classed_scene(&files);
    let message = |value: &str| {
        format!(
            "invalid parameter: the missed share must be a number strictly between 0 and 1 (a \
             missed object-step costs that share of c^p, a false one the rest), got {value}"
        )
    };
    // `command` on the scene with the options `extra`: exit code, standard output and error.
    let run_with = |command: &str, extra: &[&str]| {
        let inputs = ["--truth", &truth, "--estimate", &estimate, "-c", "2"];
        let args = [&[command], &inputs[..], &["--state-columns", "x"], extra].concat();
        (
            files.run(&args),
            args.iter().map(|a| a.to_string()).collect::<Vec<_>>(),
        )
    };
    for command in ["score", "steps", "audit", "report", "compare"] {
        for (value, shown) in [("0", "0"), ("1", "1"), ("-1", "-1"), ("nan", "NaN")] {
            let share = format!("--missed-share={value}");
            let ((code, stdout, stderr), args) = run_with(command, &[&share]);
            assert_eq!(
                (code, stderr),
                (1, format!("switchyard: error: {}\n", message(shown))),
                "{args:?}"
            );
            assert!(stdout.is_empty(), "{args:?}");
        }
    }
    let steps = |share: &str| run_with("steps", &["--alpha", "1", "--missed-share", share]).0;
    // alpha = 1 has no missed and false parts: only the standard share goes with it.
    assert_eq!(steps("0.5").0, 0);
    let (code, stdout, stderr) = steps("0.7");
    assert_eq!(code, 1);
    assert!(stdout.is_empty());
    assert_eq!(
        stderr,
        "switchyard: error: invalid parameter: a missed share other than 0.5 needs alpha = 2 \
         (only then does GOSPA split into missed and false costs), got alpha 1 with the share \
         0.7\n"
    );
}

#[test]
fn the_comparison_page_names_a_share_and_keeps_its_bytes_at_one_half() {
    let dir = tempfile::tempdir().unwrap();
    let fragments = demo("tracker-fragments.csv");
    let page = |name: &str, share: &[&str]| {
        let path = dir.path().join(name);
        let out = path.to_str().unwrap();
        let extra = [&["--estimate", &fragments, "--page", out][..], share].concat();
        on_demo("compare", &extra);
        std::fs::read_to_string(&path).unwrap()
    };
    let without = page("without.html", &[]);
    assert_eq!(page("half.html", &["--missed-share", "0.5"]), without);
    assert!(!without.contains("issed share"));
    let shared = page("shared.html", &["--missed-share", "0.8"]);
    assert!(shared.contains("<p>Missed share S = 0.8: a missed object-step costs S c<sup>p</sup>"));
}
