//! Byte-for-byte snapshots of every command's output on the demonstration data: text, CSV and
//! JSON of `score`, `steps`, `switches`, `audit` and `compare` (runs, sweeps, per sequence,
//! Monte Carlo, and its page), the HTML report and a `synth` scene.
//!
//! The expected files under `tests/snapshots/` are what the tool printed when they were written
//! (their numbers are checked independently by `references.rs`, `metric_cases.rs` and the
//! rest); these tests guard the output contracts through refactoring, so a change of a single
//! byte shows up here. After an intended change of output, rewrite them with
//! `SWITCHYARD_BLESS=1 cargo test --test it snapshots` and read the diff before committing.

use std::path::{Path, PathBuf};

use assert_cmd::Command;

/// One snapshot: its file name under `tests/snapshots/` and the command's arguments, with paths
/// relative to the package root (the command runs there, so no machine path reaches the output).
const CASES: &[(&str, &[&str])] = &[
    (
        "score.txt",
        &[
            "score",
            "--truth",
            "demo-data/truth.csv",
            "--estimate",
            "demo-data/tracker-swaps.csv",
            "--cutoff",
            "20",
        ],
    ),
    (
        "score.json",
        &[
            "score",
            "--truth",
            "demo-data/truth.csv",
            "--estimate",
            "demo-data/tracker-swaps.csv",
            "--cutoff",
            "20",
            "--format",
            "json",
        ],
    ),
    (
        "score.csv",
        &[
            "score",
            "--truth",
            "demo-data/truth.csv",
            "--estimate",
            "demo-data/tracker-fragments.csv",
            "--cutoff",
            "20",
            "--format",
            "csv",
        ],
    ),
    (
        "score-order2.txt",
        &[
            "score",
            "--truth",
            "demo-data/truth.csv",
            "--estimate",
            "demo-data/tracker-fragments.csv",
            "--cutoff",
            "20",
            "--order",
            "2",
            "--switch-penalty",
            "5",
        ],
    ),
    (
        "score-exact.json",
        &[
            "score",
            "--truth",
            "demo-data/truth.csv",
            "--estimate",
            "demo-data/tracker-fragments.csv",
            "--cutoff",
            "10",
            "--exact",
            "--format",
            "json",
        ],
    ),
    (
        "score-manhattan.txt",
        &[
            "score",
            "--truth",
            "demo-data/truth.csv",
            "--estimate",
            "demo-data/tracker-swaps.csv",
            "--cutoff",
            "30",
            "--distance",
            "manhattan",
            "--weights",
            "1,2",
        ],
    ),
    (
        "steps.txt",
        &[
            "steps",
            "--truth",
            "demo-data/truth.csv",
            "--estimate",
            "demo-data/tracker-fragments.csv",
            "--cutoff",
            "20",
        ],
    ),
    (
        "steps.csv",
        &[
            "steps",
            "--truth",
            "demo-data/truth.csv",
            "--estimate",
            "demo-data/tracker-fragments.csv",
            "--cutoff",
            "20",
            "--format",
            "csv",
        ],
    ),
    (
        "steps.json",
        &[
            "steps",
            "--truth",
            "demo-data/truth.csv",
            "--estimate",
            "demo-data/tracker-swaps.csv",
            "--cutoff",
            "20",
            "--format",
            "json",
        ],
    ),
    (
        "switches.txt",
        &[
            "switches",
            "--truth",
            "demo-data/truth.csv",
            "--estimate",
            "demo-data/tracker-swaps.csv",
            "--cutoff",
            "20",
        ],
    ),
    (
        "switches.csv",
        &[
            "switches",
            "--truth",
            "demo-data/truth.csv",
            "--estimate",
            "demo-data/tracker-swaps.csv",
            "--cutoff",
            "20",
            "--format",
            "csv",
        ],
    ),
    (
        "switches.json",
        &[
            "switches",
            "--truth",
            "demo-data/truth.csv",
            "--estimate",
            "demo-data/tracker-fragments.csv",
            "--cutoff",
            "20",
            "--format",
            "json",
        ],
    ),
    (
        "audit.txt",
        &[
            "audit",
            "--truth",
            "demo-data/truth.csv",
            "--estimate",
            "demo-data/tracker-fragments.csv",
            "--cutoff",
            "20",
            "--top",
            "5",
        ],
    ),
    (
        "audit.csv",
        &[
            "audit",
            "--truth",
            "demo-data/truth.csv",
            "--estimate",
            "demo-data/tracker-fragments.csv",
            "--cutoff",
            "20",
            "--format",
            "csv",
        ],
    ),
    (
        "audit.json",
        &[
            "audit",
            "--truth",
            "demo-data/truth.csv",
            "--estimate",
            "demo-data/tracker-swaps.csv",
            "--cutoff",
            "20",
            "--format",
            "json",
        ],
    ),
    (
        "compare.txt",
        &[
            "compare",
            "--truth",
            "demo-data/truth.csv",
            "--estimate",
            "swaps=demo-data/runs/tracker-swaps.csv",
            "--estimate",
            "fragments=demo-data/runs/tracker-fragments.csv",
            "--cutoff",
            "10,20,40",
        ],
    ),
    (
        "compare.json",
        &[
            "compare",
            "--truth",
            "demo-data/truth.csv",
            "--estimate",
            "swaps=demo-data/runs/tracker-swaps.csv",
            "--estimate",
            "fragments=demo-data/runs/tracker-fragments.csv",
            "--cutoff",
            "20",
            "--switch-penalty",
            "5,20",
            "--format",
            "json",
        ],
    ),
    (
        "compare.csv",
        &[
            "compare",
            "--truth",
            "demo-data/truth.csv",
            "--estimate",
            "swaps=demo-data/runs/tracker-swaps.csv",
            "--estimate",
            "fragments=demo-data/runs/tracker-fragments.csv",
            "--cutoff",
            "10,20",
            "--format",
            "csv",
        ],
    ),
    (
        "compare-sequences.txt",
        &[
            "compare",
            "--truth",
            "tests/data/sequences/truth.csv",
            "--estimate",
            "swaps=tests/data/sequences/swaps.csv",
            "--estimate",
            "fragments=tests/data/sequences/fragments.csv",
            "--cutoff",
            "20",
            "--per-sequence",
        ],
    ),
    (
        "compare-sequences.json",
        &[
            "compare",
            "--truth",
            "tests/data/sequences/truth.csv",
            "--estimate",
            "swaps=tests/data/sequences/swaps.csv",
            "--estimate",
            "fragments=tests/data/sequences/fragments.csv",
            "--cutoff",
            "20",
            "--per-sequence",
            "--format",
            "json",
        ],
    ),
    (
        "compare-sequences.csv",
        &[
            "compare",
            "--truth",
            "tests/data/sequences/truth.csv",
            "--estimate",
            "swaps=tests/data/sequences/swaps.csv",
            "--estimate",
            "fragments=tests/data/sequences/fragments.csv",
            "--cutoff",
            "20",
            "--per-sequence",
            "--format",
            "csv",
        ],
    ),
    (
        "compare-cases.csv",
        &[
            "compare",
            "--truth",
            "tests/data/sequences/truth.csv",
            "--estimate",
            "swaps=tests/data/sequences/swaps.csv",
            "--estimate",
            "fragments=tests/data/sequences/fragments.csv",
            "--cutoff",
            "20",
            "--order",
            "1,2",
            "--per-case",
            "--format",
            "csv",
        ],
    ),
    (
        "compare-cases.json",
        &[
            "compare",
            "--truth",
            "tests/data/sequences/truth.csv",
            "--estimate",
            "swaps=tests/data/sequences/swaps.csv",
            "--estimate",
            "fragments=tests/data/sequences/fragments.csv",
            "--cutoff",
            "20",
            "--per-case",
            "--rank-by",
            "per-step",
            "--format",
            "json",
        ],
    ),
    (
        "compare-cases.txt",
        &[
            "compare",
            "--truth",
            "tests/data/sequences/truth.csv",
            "--estimate",
            "swaps=tests/data/sequences/swaps.csv",
            "--estimate",
            "fragments=tests/data/sequences/fragments.csv",
            "--cutoff",
            "20",
            "--order",
            "2",
            "--per-case",
        ],
    ),
    (
        "compare-runs.txt",
        &[
            "compare",
            "--truth",
            "demo-data/truth.csv",
            "--estimate",
            "swaps=demo-data/runs/tracker-swaps.csv",
            "--estimate",
            "fragments=demo-data/runs/tracker-fragments.csv",
            "--cutoff",
            "20",
            "--monte-carlo",
        ],
    ),
    (
        "compare-runs.csv",
        &[
            "compare",
            "--truth",
            "demo-data/truth.csv",
            "--estimate",
            "swaps=demo-data/runs/tracker-swaps.csv",
            "--estimate",
            "fragments=demo-data/runs/tracker-fragments.csv",
            "--cutoff",
            "20",
            "--monte-carlo",
            "--format",
            "csv",
        ],
    ),
    (
        "compare-runs.json",
        &[
            "compare",
            "--truth",
            "demo-data/truth.csv",
            "--estimate",
            "swaps=demo-data/runs/tracker-swaps.csv",
            "--estimate",
            "fragments=demo-data/runs/tracker-fragments.csv",
            "--cutoff",
            "20",
            "--monte-carlo",
            "--format",
            "json",
        ],
    ),
    (
        "compare-page.html",
        &[
            "compare",
            "--truth",
            "demo-data/truth.csv",
            "--estimate",
            "swaps=demo-data/runs/tracker-swaps.csv",
            "--estimate",
            "fragments=demo-data/runs/tracker-fragments.csv",
            "--cutoff",
            "10,20",
            "--monte-carlo",
            "--bootstrap-resamples",
            "1000",
            "--output",
            "/dev/null",
            "--page",
            "/dev/stdout",
        ],
    ),
    (
        "report.html",
        &[
            "report",
            "--truth",
            "demo-data/truth.csv",
            "--estimate",
            "swaps=demo-data/tracker-swaps.csv",
            "--estimate",
            "fragments=demo-data/tracker-fragments.csv",
            "--cutoff",
            "20",
            "--units",
            "m",
        ],
    ),
    (
        "synth-truth.csv",
        &[
            "synth",
            "--preset",
            "small",
            "--tracker",
            "mixed",
            "--seed",
            "7",
            "--truth-out",
            "/dev/stdout",
        ],
    ),
];

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

fn snapshot_path(name: &str) -> PathBuf {
    root().join("tests/snapshots").join(name)
}

/// Runs one case from the package root and returns its standard output.
fn output_of(args: &[&str]) -> Vec<u8> {
    let output = Command::cargo_bin("switchyard")
        .unwrap()
        .current_dir(root())
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

/// The first differing line, for a readable failure instead of two walls of bytes.
fn first_difference(expected: &[u8], actual: &[u8]) -> String {
    let expected = String::from_utf8_lossy(expected);
    let actual = String::from_utf8_lossy(actual);
    for (number, (e, a)) in expected.lines().zip(actual.lines()).enumerate() {
        if e != a {
            return format!("line {}:\n  expected: {e}\n  actual:   {a}", number + 1);
        }
    }
    format!(
        "one output is a prefix of the other ({} vs {} lines)",
        expected.lines().count(),
        actual.lines().count()
    )
}

#[test]
fn every_output_matches_its_snapshot() {
    let bless = std::env::var_os("SWITCHYARD_BLESS").is_some();
    let mut failures = Vec::new();
    for (name, args) in CASES {
        let actual = output_of(args);
        let path = snapshot_path(name);
        if bless {
            std::fs::create_dir_all(path.parent().unwrap()).unwrap();
            std::fs::write(&path, &actual).unwrap();
            continue;
        }
        let expected = std::fs::read(&path).unwrap_or_else(|e| {
            panic!("{}: {e} (write it with SWITCHYARD_BLESS=1)", path.display())
        });
        if expected != actual {
            failures.push(format!("{name}: {}", first_difference(&expected, &actual)));
        }
    }
    assert!(
        failures.is_empty(),
        "outputs changed:\n{}",
        failures.join("\n")
    );
}

/// Every snapshot file belongs to a case, so a renamed case cannot leave a stale file behind
/// that nothing checks.
#[test]
fn every_snapshot_file_has_a_case() {
    let listed: Vec<&str> = CASES.iter().map(|(name, _)| *name).collect();
    for entry in std::fs::read_dir(root().join("tests/snapshots")).unwrap() {
        let name = entry.unwrap().file_name().into_string().unwrap();
        assert!(
            listed.contains(&name.as_str()),
            "tests/snapshots/{name} has no case"
        );
    }
}
