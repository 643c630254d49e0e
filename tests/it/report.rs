//! The HTML report (`switchyard report`, `switchyard::report::html`).
//!
//! Structure: the page is parsed as XML by roxmltree (an independent parser; the page is
//! written to be well-formed XML as well as HTML) and its marks are counted against a small
//! hand-built scene whose switches and ranking follow from the metric's definition by hand
//! arithmetic, written next to the assertions. Rendering: headless Chromium (Debian's
//! `chromium`) draws the demo report; its screenshot is decoded by the `png` crate, and its
//! own HTML parser's DOM is compared with the XML parser's view.

use std::path::{Path, PathBuf};
use std::process::{Command as Process, Stdio};
use std::time::{Duration, Instant};

use assert_cmd::Command;
use roxmltree::{Document, Node, ParsingOptions};
use switchyard::distance::Distance;
use switchyard::evaluate::{evaluate, Request};
use switchyard::report::html::{render, Limits, Report, TrackerResults};
use switchyard::trajectory::{Step, Trajectory, TrajectorySet};
use switchyard::trajectory_metric::{SolveOptions, TrajectoryParams};

/// A two-dimensional trajectory: `(step, x, y)` points.
fn path(id: &str, points: &[(Step, f64, f64)]) -> Trajectory {
    Trajectory::new(
        id,
        2,
        points.iter().map(|&(t, x, y)| (t, vec![x, y])).collect(),
    )
    .unwrap()
}

/// A straight run along y = `y` from step `first` to `last`, x = step.
fn run(first: Step, last: Step, y: f64) -> Vec<(Step, f64, f64)> {
    (first..=last).map(|t| (t, t as f64, y)).collect()
}

/// The hand-built scene. Cut-off c = 2, order p = 1, switching penalty gamma = 2, euclidean.
///
/// Truths over steps 0..=9: `A` along y = 0, `B` along y = 10, `C` along y = 20 for steps
/// 0..=4, `D<&>"` (an id that needs escaping) along y = 30 for all steps.
/// Tracks: `p` on A for 0..=4 then on B for 5..=9; `q` on B then on A (a swap at step 5); `r`
/// on C for 0..=1, nothing at step 2, `s` on C for 3..=4; `u` on D throughout, 0.5 away.
///
/// By hand, from the definition of trajectory GOSPA (c^p / 2 = 1 per missed or false
/// object-step, gamma^p = 2 per full switch): keeping A on p after step 5 would cost a missed A
/// and a false p at each of 5 steps (10) against one switch (2), so A passes p -> q at step 5
/// and B passes q -> p at step 5. C: keeping r leaves C missed and s false at steps 3 and 4
/// (4) against one switch (2) plus the unavoidable miss at step 2; so C passes r -> s, reported
/// at step 3 where s takes over. Three full switches; C also has one missed step.
fn scene() -> (TrajectorySet, TrajectorySet) {
    let truth = TrajectorySet::new(
        2,
        vec![
            path("A", &run(0, 9, 0.0)),
            path("B", &run(0, 9, 10.0)),
            path("C", &run(0, 4, 20.0)),
            path("D<&>\"", &run(0, 9, 30.0)),
        ],
    )
    .unwrap();
    let mut p = run(0, 4, 0.3);
    p.extend(run(5, 9, 10.3));
    let mut q = run(0, 4, 10.3);
    q.extend(run(5, 9, 0.3));
    let estimate = TrajectorySet::new(
        2,
        vec![
            path("p", &p),
            path("q", &q),
            path("r", &run(0, 1, 20.3)),
            path("s", &run(3, 4, 20.3)),
            path("u", &run(0, 9, 30.5)),
        ],
    )
    .unwrap();
    (truth, estimate)
}

fn report_of(trackers: Vec<(&str, TrajectorySet)>, truth: TrajectorySet) -> Report {
    let params = TrajectoryParams::new(2.0, 1.0, 2.0).unwrap();
    let trackers = trackers
        .into_iter()
        .map(|(name, estimate)| {
            let request = Request::everything(params, SolveOptions::default()).unwrap();
            let evaluation = evaluate(
                &truth,
                &[&estimate],
                &Distance::default(),
                &request,
                &|_| {},
            )
            .unwrap()
            .remove(0);
            TrackerResults::new(name, format!("{name}.csv"), estimate, evaluation).unwrap()
        })
        .collect();
    Report {
        title: "Hand-built scene".to_string(),
        truth,
        truth_source: "truth.csv".to_string(),
        state_columns: vec!["x".to_string(), "y".to_string()],
        units: Some("m".to_string()),
        distance: "euclidean".to_string(),
        engine: "microlp".to_string(),
        trackers,
        view: None,
        time: None,
    }
}

/// Parses the page as XML; the `<!DOCTYPE html>` line is a DTD to roxmltree, so allow it.
pub(crate) fn parse(html: &str) -> Document<'_> {
    let options = ParsingOptions {
        allow_dtd: true,
        ..ParsingOptions::default()
    };
    Document::parse_with_options(html, options).expect("the page is well-formed XML")
}

fn has_class(node: &Node, class: &str) -> bool {
    node.attribute("class")
        .is_some_and(|c| c.split_whitespace().any(|word| word == class))
}

pub(crate) fn with_class<'a, 'input>(root: Node<'a, 'input>, class: &str) -> Vec<Node<'a, 'input>> {
    root.descendants().filter(|n| has_class(n, class)).collect()
}

fn one_with_class<'a, 'input>(root: Node<'a, 'input>, class: &str) -> Node<'a, 'input> {
    let found = with_class(root, class);
    assert_eq!(found.len(), 1, "expected one element of class {class}");
    found[0]
}

/// The text of a node's `<title>` child (an SVG tooltip).
fn title_of(node: &Node) -> String {
    node.children()
        .find(|c| c.has_tag_name("title"))
        .and_then(|t| t.text())
        .unwrap_or_default()
        .to_string()
}

fn events(root: Node) -> usize {
    with_class(root, "switch-mark")
        .iter()
        .map(|m| {
            m.attribute("data-events")
                .unwrap()
                .parse::<usize>()
                .unwrap()
        })
        .sum()
}

#[test]
fn page_has_one_switch_mark_per_switch_and_one_row_per_truth_worst_first() {
    let (truth, estimate) = scene();
    let report = report_of(vec![("alpha", estimate)], truth);
    let html = render(&report, &Limits::default());
    // Well-formed XML, checked by an independent parser.
    let doc = parse(&html);
    let root = doc.root_element();
    assert!(root.has_tag_name("html"));

    // Switches by hand (see `scene`): (step, truth) = (5, A), (5, B), (3, C), all full.
    let mut expected = vec![
        (3, "C".to_string()),
        (5, "A".to_string()),
        (5, "B".to_string()),
    ];
    expected.sort();
    // The errors chart: A's and B's switches share step 5, so their triangles would touch
    // and the switches are counted per stretch of steps instead. The plot is 960 - 18 - 64 =
    // 878 px wide for 10 steps, so a stretch of one step (87.8 px) already holds a badge:
    // one badge at step 3 counting 1 switch (C) and one at step 5 counting 2 (A and B).
    let errors = one_with_class(root, "errors-chart");
    let badges: Vec<(i64, i64, usize)> = with_class(errors, "switch-mark")
        .iter()
        .map(|m| {
            (
                m.attribute("data-first").unwrap().parse().unwrap(),
                m.attribute("data-last").unwrap().parse().unwrap(),
                m.attribute("data-events").unwrap().parse().unwrap(),
            )
        })
        .collect();
    assert_eq!(badges, [(3, 3, 1), (5, 5, 2)]);
    // The chart of all trackers counts the same switches in the same stretches.
    let all = one_with_class(root, "all-trackers-chart");
    assert_eq!(events(all), 3);
    assert_eq!(with_class(all, "switch-mark").len(), 2);
    for chart in ["identity-chart", "top-view"] {
        let svg = one_with_class(root, chart);
        let marks = with_class(svg, "switch-mark");
        assert_eq!(marks.len(), 3, "{chart}: one mark per switch");
        assert!(marks
            .iter()
            .all(|m| m.attribute("data-events") == Some("1")));
        for mark in &marks {
            let title = title_of(mark);
            assert!(title.contains("full switch"), "{chart}: {title}");
        }
        if chart != "top-view" {
            let mut seen: Vec<(i64, String)> = marks
                .iter()
                .map(|m| {
                    (
                        m.attribute("data-step").unwrap().parse().unwrap(),
                        m.attribute("data-truth").unwrap().to_string(),
                    )
                })
                .collect();
            seen.sort();
            assert_eq!(seen, expected, "{chart}");
        }
    }
    // The swap's tooltips name object, both tracks and the step.
    let identity = one_with_class(root, "identity-chart");
    let titles: Vec<String> = with_class(identity, "switch-mark")
        .iter()
        .map(title_of)
        .collect();
    assert!(titles
        .iter()
        .any(|t| t.starts_with("A: step 5, track p → q")));
    assert!(titles
        .iter()
        .any(|t| t.starts_with("B: step 5, track q → p")));
    assert!(titles
        .iter()
        .any(|t| t.starts_with("C: step 3, track r → s")));

    // One row per truth, worst first. By the audit's rule (most switches, then the longest
    // missed run, then input order): A, B and C have one switch each, C also a missed run of 1
    // step, D none: C, A, B, D.
    let rows = with_class(identity, "identity-row");
    let order: Vec<&str> = rows
        .iter()
        .map(|r| r.attribute("data-truth").unwrap())
        .collect();
    assert_eq!(order, ["C", "A", "B", "D<&>\""]);
    let ranks: Vec<&str> = rows
        .iter()
        .map(|r| r.attribute("data-rank").unwrap())
        .collect();
    assert_eq!(ranks, ["1", "2", "3", "4"]);

    // Covered spans, by hand: A p 0-4, q 5-9; B q 0-4, p 5-9; C r 0-1, s 3-4; D u 0-9.
    let mut covered: Vec<String> = with_class(identity, "covered")
        .iter()
        .map(title_of)
        .collect();
    covered.sort();
    let mut wanted = [
        "A covered by track p, steps 0–4",
        "A covered by track q, steps 5–9",
        "B covered by track p, steps 5–9",
        "B covered by track q, steps 0–4",
        "C covered by track r, steps 0–1",
        "C covered by track s, steps 3–4",
        "D<&>\" covered by track u, steps 0–9",
    ];
    wanted.sort();
    assert_eq!(covered.len(), wanted.len());
    for (title, prefix) in covered.iter().zip(wanted) {
        assert!(
            title.starts_with(prefix),
            "{title:?} should start {prefix:?}"
        );
    }
    // C was missed at step 2 only.
    let missed: Vec<String> = with_class(identity, "missed")
        .iter()
        .map(title_of)
        .collect();
    assert_eq!(missed, ["C missed, step 2 (1 present step)"]);

    // The top view draws every true path and every track.
    let top = one_with_class(root, "top-view");
    assert_eq!(with_class(top, "truth-path").len(), 4);
    assert_eq!(with_class(top, "track").len(), 5);
    // Notes appear only for what was thinned or grouped: here the switches of the errors
    // chart only.
    let notes = with_class(root, "note");
    assert_eq!(notes.len(), 1);
    assert!(notes[0]
        .text()
        .unwrap_or_default()
        .starts_with("Switches that would crowd are counted per stretch of 1 step:"));
}

#[test]
fn page_is_self_contained() {
    let (truth, estimate) = scene();
    let html = render(
        &report_of(vec![("alpha", estimate)], truth),
        &Limits::default(),
    );
    let doc = parse(&html);
    let lower = html.to_lowercase();
    // No network: no URL scheme, no protocol-relative reference, no external resource tags.
    for forbidden in [
        "http:", "https:", "ftp:", "//", "<script", "<link", "<img", "<iframe", "@import",
    ] {
        assert!(
            !lower.contains(forbidden),
            "the page contains {forbidden:?}"
        );
    }
    for node in doc.descendants() {
        assert!(
            node.attribute("src").is_none(),
            "src= on <{}>",
            node.tag_name().name()
        );
        for attribute in ["href", "xlink:href"] {
            if let Some(target) = node.attribute(attribute) {
                assert!(
                    target.starts_with('#'),
                    "{attribute}={target:?} is not in the page"
                );
            }
        }
    }
    // Every url(...) points inside the page.
    for (index, _) in lower.match_indices("url(") {
        assert_eq!(
            &lower[index + 4..index + 5],
            "#",
            "external url() at byte {index}"
        );
    }
    // Every internal reference resolves.
    let ids: Vec<&str> = doc
        .descendants()
        .filter_map(|n| n.attribute("id"))
        .collect();
    for (index, _) in html.match_indices("url(#") {
        let rest = &html[index + 5..];
        let id = &rest[..rest.find(')').unwrap()];
        assert!(ids.contains(&id), "url(#{id}) has no target");
    }
    // A print stylesheet.
    assert!(html.contains("@media print"));
}

#[test]
fn several_trackers_sit_side_by_side_and_bytes_repeat() {
    let (truth, estimate) = scene();
    let (_, second) = scene();
    // The second tracker lacks track `s` (so C is also missed at steps 3 and 4).
    let second = TrajectorySet::new(
        2,
        second
            .trajectories()
            .iter()
            .filter(|t| t.id() != "s")
            .cloned()
            .collect(),
    )
    .unwrap();
    let report = report_of(vec![("alpha", estimate), ("beta", second)], truth);
    let html = render(&report, &Limits::default());
    assert_eq!(
        html,
        render(&report, &Limits::default()),
        "same input, same bytes"
    );
    let doc = parse(&html);
    let table = one_with_class(doc.root_element(), "summary");
    let header: Vec<String> = table
        .descendants()
        .find(|n| n.has_tag_name("thead"))
        .unwrap()
        .descendants()
        .filter(|n| n.has_tag_name("th"))
        .map(|th| {
            th.descendants()
                .filter(|t| t.is_text())
                .filter_map(|t| t.text())
                .collect::<String>()
        })
        .collect();
    assert_eq!(header, ["", "alpha", "beta"]);
    // Each tracker has its own three charts.
    let sections = with_class(doc.root_element(), "tracker");
    assert_eq!(sections.len(), 2);
    for section in sections {
        for chart in ["errors-chart", "identity-chart", "top-view"] {
            one_with_class(section, chart);
        }
    }
    // beta, by hand: C keeps r after step 1. A pair whose two members are both absent costs
    // nothing and an unchanged pairing costs no switch, so C's only cost is a missed object at
    // steps 2, 3 and 4; its one change would cost gamma^p / 2 = 1 for nothing. So beta has the
    // swap's two switches only, and its rows rank A, B (one switch each), then C (no switch, a
    // missed run of 3), then D.
    let beta = with_class(doc.root_element(), "tracker")[1];
    let identity = one_with_class(beta, "identity-chart");
    let marked: Vec<&str> = with_class(identity, "switch-mark")
        .iter()
        .map(|m| m.attribute("data-truth").unwrap())
        .collect();
    assert_eq!(marked, ["A", "B"]);
    let rows: Vec<&str> = with_class(identity, "identity-row")
        .iter()
        .map(|r| r.attribute("data-truth").unwrap())
        .collect();
    assert_eq!(rows, ["A", "B", "C", "D<&>\""]);
    let missed: Vec<String> = with_class(identity, "missed")
        .iter()
        .map(title_of)
        .collect();
    assert_eq!(missed, ["C missed, steps 2–4 (3 present steps)"]);
}

#[test]
fn large_scenes_are_thinned_and_the_page_says_so() {
    let (truth, estimate) = scene();
    let report = report_of(vec![("alpha", estimate)], truth);
    let limits = Limits {
        max_time_bins: 4,
        max_identity_rows: 2,
        max_top_points: 20,
        max_switch_marks: 2,
        max_path_labels: 1,
        max_top_objects: 2,
    };
    let html = render(&report, &limits);
    let doc = parse(&html);
    let root = doc.root_element();
    let notes: Vec<String> = with_class(root, "note")
        .iter()
        .map(|n| {
            n.descendants()
                .filter(|t| t.is_text())
                .filter_map(|t| t.text())
                .collect()
        })
        .collect();
    let said = |words: &str| notes.iter().any(|n| n.contains(words));
    // 10 steps in at most 4 bins: bins of ceil(10 / 4) = 3 steps.
    assert!(said("grouped in bins of 3 steps"), "{notes:?}");
    assert!(said("it shows the 2 worst covered"), "{notes:?}");
    // The objects drawn (see below) hold A 10 + C 5 + p 10 + q 10 + r 2 + s 2 = 39 points,
    // over a limit of 20: one step in ceil(39 / 20) = 2 is drawn.
    assert!(
        said("39 positions are more than this view draws: it draws one step in 2"),
        "{notes:?}"
    );
    assert!(said("too many to label"), "{notes:?}");
    // Three switches over a limit of 2: grouped marks that still count all three.
    let errors = one_with_class(root, "errors-chart");
    assert!(with_class(errors, "switch-mark").len() < 3);
    assert_eq!(events(errors), 3);
    // Four true objects over a limit of 2: the top view draws the two worst ranked with a
    // switch (C, then A), their switches (one each) and the tracks that covered them (p and
    // q for A, r and s for C).
    assert!(
        said(
            "4 true objects are too many to follow in one view: it draws only the 2 with a switch"
        ),
        "{notes:?}"
    );
    let top = one_with_class(root, "top-view");
    let drawn: Vec<&str> = with_class(top, "truth-path")
        .iter()
        .map(|p| p.attribute("data-truth").unwrap())
        .collect();
    assert_eq!(drawn, ["A", "C"]);
    let tracks: Vec<&str> = with_class(top, "track")
        .iter()
        .map(|p| p.attribute("data-track").unwrap())
        .collect();
    assert_eq!(tracks, ["p", "q", "r", "s"]);
    assert_eq!(events(top), 2);
    // Rows: the two worst only, still worst first.
    let identity = one_with_class(root, "identity-chart");
    let rows: Vec<&str> = with_class(identity, "identity-row")
        .iter()
        .map(|r| r.attribute("data-truth").unwrap())
        .collect();
    assert_eq!(rows, ["C", "A"]);
    // The errors chart draws one column per bin: 4 bins of 3, 3, 3 and 1 steps, so each part's
    // outline has 4 horizontal runs on top.
    let total = with_class(errors, "total")[0].attribute("d").unwrap();
    assert_eq!(total.matches('H').count(), 4);
}

pub(crate) fn demo(name: &str) -> String {
    format!("{}/demo-data/{name}", env!("CARGO_MANIFEST_DIR"))
}

/// Writes the demo report to `out` through `--out`.
fn demo_report(out: &Path) {
    let output = demo_command()
        .args([
            "--units",
            "m",
            "--title",
            "Harbour radar, two trackers",
            "--out",
        ])
        .arg(out)
        .output()
        .unwrap();
    assert!(
        output.status.success(),
        "report failed: {}",
        String::from_utf8_lossy(&output.stderr)
    );
}

#[test]
fn report_command_writes_the_page_and_refuses_bad_input() {
    let dir = tempfile::tempdir().unwrap();
    let page = dir.path().join("report.html");
    demo_report(&page);
    let html = std::fs::read_to_string(&page).unwrap();
    let doc = parse(&html);
    // The swapping tracker's 12 switches (as `switchyard switches` lists them, see cli.rs)
    // appear once in each of its three charts: counted in badges in the errors chart (its
    // swaps put two switches at one step), one mark each in the others.
    let swaps = with_class(doc.root_element(), "tracker")[0];
    assert_eq!(swaps.attribute("data-tracker"), Some("swaps"));
    assert_eq!(events(one_with_class(swaps, "errors-chart")), 12);
    for chart in ["identity-chart", "top-view"] {
        assert_eq!(
            with_class(one_with_class(swaps, chart), "switch-mark").len(),
            12
        );
    }
    // The top view: 28 boats are more than 20, so it draws only those with a switch (the
    // objects `switchyard switches` names) and says so.
    let mut switched: Vec<String> = demo_switches("tracker-swaps.csv")
        .into_iter()
        .map(|(_, object)| object)
        .collect();
    switched.sort();
    switched.dedup();
    let top = one_with_class(swaps, "top-view");
    let mut drawn: Vec<String> = with_class(top, "truth-path")
        .iter()
        .map(|p| p.attribute("data-truth").unwrap().to_string())
        .collect();
    drawn.sort();
    assert_eq!(drawn, switched);
    assert!(html.contains(&format!(
        "28 true objects are too many to follow in one view: it draws only the {} with a switch",
        switched.len()
    )));
    // 28 boats, one row each.
    assert_eq!(
        with_class(one_with_class(swaps, "identity-chart"), "identity-row").len(),
        28
    );
    // Same bytes again.
    let again = dir.path().join("again.html");
    demo_report(&again);
    assert_eq!(
        std::fs::read(&page).unwrap(),
        std::fs::read(&again).unwrap()
    );

    // Two trackers with one name: a clear error, exit code 1, no file.
    let truth = demo("truth.csv");
    let swaps_file = demo("tracker-swaps.csv");
    let bad = dir.path().join("bad.html");
    let output = Command::cargo_bin("switchyard")
        .unwrap()
        .args(["report", "--truth", &truth, "--estimate", &swaps_file])
        .args(["--estimate", &swaps_file, "-c", "20", "--out"])
        .arg(&bad)
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&output.stderr).contains("two trackers are named"));
    assert!(!bad.exists());
    // A missing file: exit code 1 and its name in the message.
    let output = Command::cargo_bin("switchyard")
        .unwrap()
        .args([
            "report",
            "--truth",
            &truth,
            "--estimate",
            "nowhere.csv",
            "-c",
            "20",
        ])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&output.stderr).contains("nowhere.csv"));
    // No estimate at all: a command line that does not parse, exit code 2.
    let output = Command::cargo_bin("switchyard")
        .unwrap()
        .args(["report", "--truth", &truth, "-c", "20"])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(2));
}

/// Debian's Chromium, if installed.
pub(crate) fn chromium() -> Option<PathBuf> {
    let paths = std::env::var_os("PATH")?;
    std::env::split_paths(&paths)
        .map(|dir| dir.join("chromium"))
        .find(|candidate| candidate.is_file())
}

/// Runs Chromium headless with networking features off; returns its standard output. A run
/// that has not ended after a generous while is stopped so that a broken browser cannot hang
/// the suite (nothing here measures speed).
pub(crate) fn run_chromium(binary: &Path, profile: &Path, args: &[String]) -> Vec<u8> {
    let mut child = Process::new(binary)
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-quic",
            "--no-first-run",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--disable-extensions",
            "--hide-scrollbars",
        ])
        .arg(format!("--user-data-dir={}", profile.display()))
        .args(args)
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::null())
        .spawn()
        .expect("chromium starts");
    let stdout = child.stdout.take().unwrap();
    let reader = std::thread::spawn(move || {
        let mut stdout = stdout;
        let mut bytes = Vec::new();
        std::io::Read::read_to_end(&mut stdout, &mut bytes).unwrap();
        bytes
    });
    let started = Instant::now();
    loop {
        if let Some(status) = child.try_wait().unwrap() {
            assert!(status.success(), "chromium failed: {status}");
            break;
        }
        if started.elapsed() > Duration::from_secs(300) {
            let _ = child.kill();
            panic!("chromium did not finish");
        }
        std::thread::sleep(Duration::from_millis(100));
    }
    reader.join().unwrap()
}

/// Chromium's screenshot of the page at `url` in a window of `size`, as (red, green, blue) per
/// pixel, decoded by the png crate; checks that it has the window's size.
pub(crate) fn screenshot(
    binary: &Path,
    dir: &Path,
    url: &str,
    size: (u32, u32),
) -> Vec<(u8, u8, u8)> {
    let png_path = dir.join("screenshot.png");
    run_chromium(
        binary,
        &dir.join("profile-shot"),
        &[
            format!("--screenshot={}", png_path.display()),
            format!("--window-size={},{}", size.0, size.1),
            url.to_string(),
        ],
    );
    let decoder = png::Decoder::new(std::io::BufReader::new(
        std::fs::File::open(&png_path).unwrap(),
    ));
    let mut reader = decoder.read_info().unwrap();
    let mut pixels = vec![0; reader.output_buffer_size().unwrap()];
    let info = reader.next_frame(&mut pixels).unwrap();
    assert_eq!((info.width, info.height), size);
    let channels = info.color_type.samples();
    assert!(channels >= 3, "{:?}", info.color_type);
    pixels[..info.buffer_size()]
        .chunks(channels)
        .map(|p| (p[0], p[1], p[2]))
        .collect()
}

#[test]
fn demo_report_renders_in_headless_chromium() {
    let Some(binary) = chromium() else {
        if std::env::var_os("CI").is_some() {
            panic!("chromium is not installed; CI must install Debian's chromium package");
        }
        eprintln!("note: chromium is not installed; the browser test is skipped");
        return;
    };
    let dir = tempfile::tempdir().unwrap();
    let page = dir.path().join("report.html");
    demo_report(&page);
    let url = format!("file://{}", page.display());
    // The screenshot has the window's size and is not blank (decoded by the png crate).
    let pixels = screenshot(&binary, dir.path(), &url, (1280, 2000));
    let mut colours = std::collections::HashSet::new();
    let (mut ink, mut blue) = (0usize, 0usize);
    for &(r, g, b) in &pixels {
        colours.insert((r, g, b));
        if (r, g, b) != (255, 255, 255) {
            ink += 1;
        }
        // The localisation part's blue, #0072B2 (Okabe & Ito), fills the summary's bars.
        if r < 20 && (100..=125).contains(&g) && (165..=190).contains(&b) {
            blue += 1;
        }
    }
    let total = pixels.len();
    assert!(
        ink * 20 > total,
        "only {ink} of {total} pixels are not white"
    );
    assert!(colours.len() > 100, "only {} colours", colours.len());
    assert!(blue > 1000, "only {blue} pixels of the localisation blue");

    // Chromium's own HTML parser sees the same marks as the XML parser.
    let dom = run_chromium(
        &binary,
        &dir.path().join("profile-dom"),
        &["--dump-dom".to_string(), url],
    );
    let dom = String::from_utf8(dom).unwrap();
    let html = std::fs::read_to_string(&page).unwrap();
    let doc = parse(&html);
    let marks = with_class(doc.root_element(), "switch-mark").len();
    let rows = with_class(doc.root_element(), "identity-row").len();
    // swaps: 12 switches, fragments: 62 (as `switchyard switches` lists them), one mark each
    // in the identity charts and top views, counted in badges elsewhere.
    let root = doc.root_element();
    for chart in ["identity-chart", "top-view"] {
        let found: usize = with_class(root, chart)
            .iter()
            .map(|c| with_class(*c, "switch-mark").len())
            .sum();
        assert_eq!(found, 12 + 62, "{chart}");
    }
    assert_eq!(events(one_with_class(root, "all-trackers-chart")), 12 + 62);
    assert_eq!(rows, 2 * 28);
    // A badge's class is "switch-mark badge".
    assert_eq!(
        dom.matches("class=\"switch-mark\"").count()
            + dom.matches("class=\"switch-mark badge\"").count(),
        marks
    );
    assert_eq!(dom.matches("class=\"identity-row\"").count(), rows);
}

/// `switchyard report` on the demo data's two trackers with c = 20.
fn demo_command() -> Command {
    let mut command = Command::cargo_bin("switchyard").unwrap();
    command.args([
        "report",
        "--truth",
        &demo("truth.csv"),
        "--estimate",
        &format!("swaps={}", demo("tracker-swaps.csv")),
        "--estimate",
        &format!("fragments={}", demo("tracker-fragments.csv")),
        "--cutoff",
        "20",
    ]);
    command
}

/// Runs `switchyard report` on the demo data with extra options; returns the page.
fn demo_page(extra: &[&str]) -> String {
    page_of(demo_command().args(extra).output().unwrap())
}

/// The page a successful run wrote to standard output.
fn page_of(output: std::process::Output) -> String {
    assert!(
        output.status.success(),
        "report failed: {}",
        String::from_utf8_lossy(&output.stderr)
    );
    String::from_utf8(output.stdout).unwrap()
}

/// The switch steps of one demo tracker as `switchyard switches --format csv` lists them.
fn demo_switch_steps(file: &str) -> Vec<i64> {
    demo_switches(file)
        .into_iter()
        .map(|(step, _)| step)
        .collect()
}

/// `(step, true object)` of each switch of one demo tracker, as `switchyard switches --format
/// csv` lists them.
fn demo_switches(file: &str) -> Vec<(i64, String)> {
    let output = Command::cargo_bin("switchyard")
        .unwrap()
        .args(["switches", "--truth", &demo("truth.csv"), "--estimate"])
        .arg(demo(file))
        .args(["--cutoff", "20", "--format", "csv"])
        .output()
        .unwrap();
    assert!(output.status.success());
    String::from_utf8(output.stdout)
        .unwrap()
        .lines()
        .skip(1)
        .filter(|line| line.starts_with("truth,"))
        .map(|line| {
            let fields: Vec<&str> = line.split(',').collect();
            (fields[1].parse().unwrap(), fields[2].to_string())
        })
        .collect()
}

/// `(data-first, data-last, data-events)` of every switch badge under `node`.
fn badges(node: Node) -> Vec<(i64, i64, usize)> {
    with_class(node, "badge")
        .iter()
        .map(|m| {
            (
                m.attribute("data-first").unwrap().parse().unwrap(),
                m.attribute("data-last").unwrap().parse().unwrap(),
                m.attribute("data-events").unwrap().parse().unwrap(),
            )
        })
        .collect()
}

/// The texts of the tick labels on the time axis of a chart (`g.axis.x`).
fn time_ticks(chart: Node) -> Vec<(f64, String)> {
    let axis = chart
        .descendants()
        .find(|n| has_class(n, "axis") && has_class(n, "x"))
        .unwrap();
    with_class(axis, "tick")
        .iter()
        .map(|t| {
            (
                t.attribute("x").unwrap().parse().unwrap(),
                t.text().unwrap().to_string(),
            )
        })
        .collect()
}

#[test]
fn switch_badges_count_the_switches_of_their_stretch() {
    let html = demo_page(&[]);
    let doc = parse(&html);
    let root = doc.root_element();
    let all = one_with_class(root, "all-trackers-chart");
    for (index, (name, file)) in [
        ("swaps", "tracker-swaps.csv"),
        ("fragments", "tracker-fragments.csv"),
    ]
    .into_iter()
    .enumerate()
    {
        let steps = demo_switch_steps(file);
        let section = with_class(root, "tracker")[index];
        assert_eq!(section.attribute("data-tracker"), Some(name));
        let errors = one_with_class(section, "errors-chart");
        let found = badges(errors);
        // The demo spans steps 0..=299 on a plot of 960 - 18 - 86 = 856 px (the left margin
        // holds "fragments"): 2.85 px a step, so a stretch of at least 22 px takes
        // ceil(22 / 2.85) = 8 steps, which holds any one-digit badge (6.4 + 6 px, 2 px air).
        assert!(!found.is_empty());
        let mut covered = 0;
        for &(first, last, count) in &found {
            assert_eq!(first % 8, 0, "{name}: stretches start at multiples of 8");
            assert_eq!(last, (first + 7).min(299), "{name}");
            assert!(count < 10, "{name}: a one-digit count");
            let inside = steps.iter().filter(|&&s| s >= first && s <= last).count();
            assert_eq!(count, inside, "{name}: steps {first}-{last}");
            covered += count;
        }
        // Every switch is in exactly one badge.
        assert_eq!(covered, steps.len(), "{name}");
        // The strip of the chart of all trackers holds the same badges.
        let strip = with_class(all, "switch-strip")[index];
        assert_eq!(strip.attribute("data-tracker"), Some(name));
        assert_eq!(badges(strip), found, "{name}");
        // Badges never overlap: each ends before the next begins.
        let boxes: Vec<(f64, f64)> = with_class(errors, "badge")
            .iter()
            .map(|b| {
                let rect = b.children().find(|c| c.has_tag_name("rect")).unwrap();
                let x: f64 = rect.attribute("x").unwrap().parse().unwrap();
                let w: f64 = rect.attribute("width").unwrap().parse().unwrap();
                (x, x + w)
            })
            .collect();
        for pair in boxes.windows(2) {
            assert!(pair[0].1 < pair[1].0, "{name}: {pair:?} overlap");
        }
    }
}

#[test]
fn one_chart_holds_every_trackers_per_step_gospa() {
    let html = demo_page(&[]);
    let doc = parse(&html);
    let root = doc.root_element();
    let all = one_with_class(root, "all-trackers-chart");
    let lines = with_class(all, "tracker-line");
    // Drawn last to first, so that the first tracker is on top.
    let names: Vec<&str> = lines
        .iter()
        .map(|l| l.attribute("data-tracker").unwrap())
        .collect();
    assert_eq!(names, ["fragments", "swaps"]);
    // Each line's mean over the window is the summary's mean per-step GOSPA (p = 1): 49.5 m
    // for swaps and 73.5 m for fragments, as the summary table shows (snapshot report.html).
    let table = one_with_class(root, "summary");
    let row = table
        .descendants()
        .filter(|n| n.has_tag_name("tr"))
        .find(|tr| {
            tr.descendants().any(|t| {
                t.text()
                    .is_some_and(|x| x.starts_with("mean per-step GOSPA"))
            })
        })
        .unwrap();
    let cells: Vec<f64> = row
        .children()
        .filter(|c| c.has_tag_name("td"))
        .map(|td| td.text().unwrap().parse().unwrap())
        .collect();
    for (line, expected) in lines.iter().rev().zip(cells) {
        let title = title_of(line);
        let mean: f64 = title
            .split("mean per step ")
            .nth(1)
            .unwrap()
            .split(' ')
            .next()
            .unwrap()
            .parse()
            .unwrap();
        assert!((mean - expected).abs() <= 0.06, "{title} vs {expected}");
    }
    // The line is one column per step: 300 horizontal runs for steps 0..=299.
    assert_eq!(lines[0].attribute("d").unwrap().matches('H').count(), 300);
}

/// The ids of the true objects present at a step of `first..=last` in the demo truth file.
fn demo_truths_within(first: i64, last: i64) -> Vec<String> {
    let text = std::fs::read_to_string(demo("truth.csv")).unwrap();
    let mut ids: Vec<String> = text
        .lines()
        .skip(1)
        .filter_map(|line| {
            let mut fields = line.split(',');
            let time: i64 = fields.next()?.parse().ok()?;
            let id = fields.next()?;
            (time >= first && time <= last).then(|| id.to_string())
        })
        .collect();
    ids.sort();
    ids.dedup();
    ids
}

#[test]
fn a_window_limits_every_chart_but_not_the_summary() {
    let whole = demo_page(&[]);
    let html = demo_page(&["--from", "100", "--to", "149"]);
    let doc = parse(&html);
    let root = doc.root_element();
    // The summary is over the whole scene: its table is unchanged, but for two rows added at
    // its end for the window.
    let table = |page: &str| {
        let start = page.find("<table class=\"summary\">").unwrap();
        let end = page.find("</tbody>").unwrap();
        page[start..end].to_string()
    };
    let (windowed, whole_table) = (table(&html), table(&whole));
    assert!(windowed.starts_with(&whole_table));
    // Those rows: the switch events within steps 100 to 149 (counted from `switchyard
    // switches`), and the mean per-step GOSPA there.
    let added = &windowed[whole_table.len()..];
    let swaps_inside = demo_switch_steps("tracker-swaps.csv")
        .into_iter()
        .filter(|s| (100..=149).contains(s))
        .count();
    let fragments_inside = demo_switch_steps("tracker-fragments.csv")
        .into_iter()
        .filter(|s| (100..=149).contains(s))
        .count();
    assert!(
        added.contains(&format!(
            "switch events over the steps 100 to 149 shown</th><td{}>{swaps_inside}</td>",
            if swaps_inside <= fragments_inside {
                " class=\"best\""
            } else {
                ""
            }
        )),
        "{added}"
    );
    // The mean over the window: `switchyard steps` gives per-step GOSPA at every step of the
    // demo (all 300 have objects); its mean over the 50 steps, to the page's one decimal.
    let output = Command::cargo_bin("switchyard")
        .unwrap()
        .args(["steps", "--truth", &demo("truth.csv"), "--estimate"])
        .arg(demo("tracker-swaps.csv"))
        .args(["--cutoff", "20", "--format", "csv"])
        .output()
        .unwrap();
    let steps = String::from_utf8(output.stdout).unwrap();
    let sum: f64 = steps
        .lines()
        .skip(1)
        .map(|line| line.split(',').collect::<Vec<_>>())
        .filter(|f| (100..=149).contains(&f[0].parse::<i64>().unwrap()))
        .map(|f| f[1].parse::<f64>().unwrap())
        .sum();
    let row = &added[added
        .find("mean per-step GOSPA over the steps 100 to 149 shown")
        .unwrap()..];
    let cell = &row[row.find("<td").unwrap()..];
    let value: f64 = cell[cell.find('>').unwrap() + 1..cell.find("</td>").unwrap()]
        .parse()
        .unwrap();
    assert!(
        (value - sum / 50.0).abs() <= 0.05 + 1e-9,
        "{value} vs {}",
        sum / 50.0
    );
    let present = demo_truths_within(100, 149);
    for (index, file) in ["tracker-swaps.csv", "tracker-fragments.csv"]
        .into_iter()
        .enumerate()
    {
        let inside = demo_switch_steps(file)
            .into_iter()
            .filter(|s| (100..=149).contains(s))
            .count();
        let section = with_class(root, "tracker")[index];
        // Errors chart: 50 columns, ticks from 100 to at most 149, the switches of the window.
        let errors = one_with_class(section, "errors-chart");
        let total = with_class(errors, "total")[0].attribute("d").unwrap();
        assert_eq!(total.matches('H').count(), 50);
        let ticks: Vec<String> = time_ticks(errors).into_iter().map(|t| t.1).collect();
        assert_eq!(ticks.first().map(String::as_str), Some("100"));
        assert!(ticks
            .iter()
            .all(|t| (100..=149).contains(&t.parse::<i64>().unwrap())));
        assert_eq!(events(errors), inside);
        // Identity chart: one row per object present in the window, switch ticks inside it.
        let identity = one_with_class(section, "identity-chart");
        let mut rows: Vec<String> = with_class(identity, "identity-row")
            .iter()
            .map(|r| r.attribute("data-truth").unwrap().to_string())
            .collect();
        rows.sort();
        assert_eq!(rows, present);
        assert_eq!(events(identity), inside);
        for mark in with_class(identity, "switch-mark") {
            let step: i64 = mark.attribute("data-step").unwrap().parse().unwrap();
            assert!((100..=149).contains(&step));
        }
        // Top view: the objects present in the window and the window's switches.
        let top = one_with_class(section, "top-view");
        let mut paths: Vec<String> = with_class(top, "truth-path")
            .iter()
            .map(|p| p.attribute("data-truth").unwrap().to_string())
            .collect();
        paths.sort();
        assert_eq!(paths, present);
        assert_eq!(events(top), inside);
    }
    assert!(html.contains("<dt>shown</dt><dd>steps 100 to 149 (50 steps)"));

    // Bad windows: a clear message and exit code 1.
    for (args, words) in [
        (
            &["--from", "150", "--to", "100"][..],
            "--from must not come after --to",
        ),
        (
            &["--from", "400"][..],
            "no step of the inputs lies within --from/--to",
        ),
        (&["--to", "2.5"][..], "--to 2.5 is not a whole step"),
    ] {
        let output = Command::cargo_bin("switchyard")
            .unwrap()
            .args(["report", "--truth", &demo("truth.csv"), "--estimate"])
            .arg(demo("tracker-swaps.csv"))
            .args(["--cutoff", "20"])
            .args(args)
            .output()
            .unwrap();
        assert_eq!(output.status.code(), Some(1), "{args:?}");
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert!(stderr.contains(words), "{args:?}: {stderr}");
        assert!(output.stdout.is_empty());
    }
}

#[test]
fn time_axes_speak_the_inputs_time_unit() {
    // The demo files with the times written in seconds, one step every 0.5 s.
    let dir = tempfile::tempdir().unwrap();
    let in_seconds = |file: &str| {
        let text = std::fs::read_to_string(demo(file)).unwrap();
        let mut out = String::new();
        for (k, line) in text.lines().enumerate() {
            if k == 0 {
                out.push_str(line);
            } else {
                let (time, rest) = line.split_once(',').unwrap();
                let step: i64 = time.parse().unwrap();
                out.push_str(&format!("{},{rest}", step as f64 * 0.5));
            }
            out.push('\n');
        }
        let path = dir.path().join(file);
        std::fs::write(&path, out).unwrap();
        path.display().to_string()
    };
    let truth = in_seconds("truth.csv");
    let swaps = format!("swaps={}", in_seconds("tracker-swaps.csv"));
    let fragments = format!("fragments={}", in_seconds("tracker-fragments.csv"));
    let run = |extra: &[&str]| {
        let output = Command::cargo_bin("switchyard")
            .unwrap()
            .args(["report", "--truth", &truth, "--estimate", &swaps])
            .args(["--estimate", &fragments, "--cutoff", "20"])
            .args(["--time-step", "0.5"])
            .args(extra)
            .output()
            .unwrap();
        page_of(output)
    };
    let html = run(&["--time-unit", "s"]);
    let steps_html = demo_page(&[]);
    let doc = parse(&html);
    let steps_doc = parse(&steps_html);
    let errors = one_with_class(with_class(doc.root_element(), "tracker")[0], "errors-chart");
    // Steps 0..=299 at 0.5 s are 0 to 149.5 s: nice ticks every 20 s (149.5 / 10 = 14.95,
    // rounded up to 20), labelled 0, 20, ..., 140 and titled "time (s)".
    let ticks = time_ticks(errors);
    let labels: Vec<&str> = ticks.iter().map(|t| t.1.as_str()).collect();
    assert_eq!(labels, ["0", "20", "40", "60", "80", "100", "120", "140"]);
    assert!(errors
        .descendants()
        .any(|n| has_class(&n, "axis-label") && n.text() == Some("time (s)")));
    // time = step x 0.5 s: the tick at 100 s sits where the step axis of the same scene puts
    // step 200 (both pages have the same margins: the same tracker names).
    let steps_ticks = time_ticks(one_with_class(
        with_class(steps_doc.root_element(), "tracker")[0],
        "errors-chart",
    ));
    let x_of = |ticks: &[(f64, String)], label: &str| {
        ticks.iter().find(|t| t.1 == label).map(|t| t.0).unwrap()
    };
    let seconds = x_of(&ticks, "100");
    let steps = x_of(&steps_ticks, "200");
    assert!((seconds - steps).abs() <= 0.1, "{seconds} vs {steps}");
    // Tooltips give the step and its time: the swapping tracker's first switch is at step 38
    // (as `switchyard switches` lists it), 19 s.
    let first = demo_switch_steps("tracker-swaps.csv")[0];
    let identity = one_with_class(
        with_class(doc.root_element(), "tracker")[0],
        "identity-chart",
    );
    let wanted = format!("step {first} (t = {} s)", first as f64 * 0.5);
    assert!(
        with_class(identity, "switch-mark")
            .iter()
            .any(|m| title_of(m).contains(&wanted)),
        "{wanted}"
    );
    // The window is given in the same unit: 50 s to 74.5 s is steps 100 to 149.
    let windowed = run(&["--time-unit", "s", "--from", "50", "--to", "74.5"]);
    assert!(
        windowed.contains("<dt>shown</dt><dd>steps 100 to 149 (50 steps, time 50.0 s to 74.5 s)")
    );
    // Without a step size there is no time to give a unit to: a usage error.
    let output = Command::cargo_bin("switchyard")
        .unwrap()
        .args(["report", "--truth", &demo("truth.csv"), "--estimate"])
        .arg(demo("tracker-swaps.csv"))
        .args(["--cutoff", "20", "--time-unit", "s"])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(2));
}
