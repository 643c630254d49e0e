//! Bad and unusual input through the real binary: each case checks the exit code and the exact
//! message (file, line, column), and each accepted form checks a number worked out by hand from
//! the definition of GOSPA (Rahmathullah, García-Fernández, Svensson, FUSION 2017): with
//! alpha = 2, GOSPA^p = sum of d^p over assigned pairs + (c^p / 2)(missed + false).
//!
//! Exit codes: 0 success, 1 bad input or parameters, 2 a command line that does not parse.

use std::path::{Path, PathBuf};

use assert_cmd::Command;
use tempfile::TempDir;

/// A folder of input files; commands run inside it so that messages name the bare file names.
pub(crate) struct Files {
    dir: TempDir,
}

impl Files {
    pub(crate) fn new() -> Self {
        Files {
            dir: tempfile::tempdir().unwrap(),
        }
    }

    pub(crate) fn write(&self, name: &str, bytes: impl AsRef<[u8]>) -> PathBuf {
        let path = self.dir.path().join(name);
        std::fs::write(&path, bytes).unwrap();
        path
    }

    pub(crate) fn path(&self) -> &Path {
        self.dir.path()
    }

    /// Runs `switchyard args` in the folder; returns (exit code, stdout, stderr).
    pub(crate) fn run(&self, args: &[&str]) -> (i32, String, String) {
        let output = Command::cargo_bin("switchyard")
            .unwrap()
            .current_dir(self.path())
            .args(args)
            .output()
            .unwrap();
        (
            output
                .status
                .code()
                .expect("exited, not killed by a signal"),
            String::from_utf8(output.stdout).unwrap(),
            String::from_utf8_lossy(&output.stderr).into_owned(),
        )
    }

    /// Runs a command that must fail with `code` and exactly `message` on standard error.
    pub(crate) fn fails(&self, args: &[&str], code: i32, message: &str) {
        let (status, stdout, stderr) = self.run(args);
        assert_eq!(
            (status, stderr.as_str()),
            (code, format!("switchyard: error: {message}\n").as_str()),
            "args {args:?}"
        );
        assert!(stdout.is_empty(), "nothing on standard output: {stdout}");
    }

    /// Runs `steps --format csv` with cut-off `cutoff` and returns the gospa column.
    fn gospa(&self, truth: &str, estimate: &str, cutoff: &str) -> Vec<f64> {
        let (status, stdout, stderr) = self.run(&[
            "steps",
            "--truth",
            truth,
            "--estimate",
            estimate,
            "--cutoff",
            cutoff,
            "--format",
            "csv",
        ]);
        assert_eq!(status, 0, "{stderr}");
        let mut lines = stdout.lines();
        assert!(lines.next().unwrap().starts_with("time,gospa,"));
        lines
            .map(|line| line.split(',').nth(1).unwrap().parse().unwrap())
            .collect()
    }

    /// Runs `score --format json` and returns the document.
    fn score(&self, args: &[&str]) -> serde_json::Value {
        let mut all = vec!["score", "--format", "json"];
        all.extend_from_slice(args);
        let (status, stdout, stderr) = self.run(&all);
        assert_eq!(status, 0, "{stderr}");
        serde_json::from_str(&stdout).unwrap()
    }
}

/// The estimate file most cases compare against: one object at x = 0.5 then x = 1 (y = 0).
const ESTIMATE: &str = "time,id,x,y\n0,e,0.5,0\n1,e,1,0\n";

/// The truth in plain form: one object at the origin then at x = 1. Against [`ESTIMATE`] with
/// c = 2, p = 1: step 0 assigns at distance 0.5 (GOSPA 0.5), step 1 at distance 0.
const TRUTH: &str = "time,id,x,y\n0,a,0,0\n1,a,1,0\n";

fn steps<'a>(truth: &'a str, cutoff: &'a str) -> Vec<&'a str> {
    vec![
        "steps",
        "--truth",
        truth,
        "--estimate",
        "estimate.csv",
        "--cutoff",
        cutoff,
    ]
}

fn files_with_estimate() -> Files {
    let files = Files::new();
    files.write("estimate.csv", ESTIMATE);
    files
}

fn close(got: &[f64], expected: &[f64]) {
    assert_eq!(got.len(), expected.len(), "{got:?} vs {expected:?}");
    for (g, e) in got.iter().zip(expected) {
        assert!(
            (g - e).abs() <= 1e-12 * e.abs().max(1.0),
            "{got:?} vs {expected:?}"
        );
    }
}

#[test]
fn plain_input_gives_the_hand_values() {
    let files = files_with_estimate();
    files.write("truth.csv", TRUTH);
    close(&files.gospa("truth.csv", "estimate.csv", "2"), &[0.5, 0.0]);
}

#[test]
fn another_delimiter_is_named_and_read_when_given() {
    let files = files_with_estimate();
    files.write("semicolon.csv", TRUTH.replace(',', ";"));
    files.fails(
        &steps("semicolon.csv", "2"),
        1,
        r#"semicolon.csv, line 1: the header has no column "time" (it has one column, "time;id;x;y"); the file seems to be delimited by ';', not ','"#,
    );
    files.write("tab.csv", TRUTH.replace(',', "\t"));
    files.fails(
        &steps("tab.csv", "2"),
        1,
        r#"tab.csv, line 1: the header has no column "time" (it has one column, "time\tid\tx\ty"); the file seems to be delimited by '\t', not ','"#,
    );
    // With the delimiter given, both read (the estimate too, so it is converted as well).
    files.write("estimate-semicolon.csv", ESTIMATE.replace(',', ";"));
    files.write("estimate-tab.csv", ESTIMATE.replace(',', "\t"));
    for (truth, estimate, delimiter) in [
        ("semicolon.csv", "estimate-semicolon.csv", ";"),
        ("tab.csv", "estimate-tab.csv", "tab"),
    ] {
        let (status, stdout, stderr) = files.run(&[
            "steps",
            "--truth",
            truth,
            "--estimate",
            estimate,
            "--cutoff",
            "2",
            "--delimiter",
            delimiter,
            "--format",
            "csv",
        ]);
        assert_eq!(status, 0, "{stderr}");
        assert!(stdout.contains("\n0,0.5,0.5,0,0,"), "{stdout}");
    }
}

#[test]
fn a_byte_order_mark_crlf_and_quoted_fields_are_accepted() {
    let files = files_with_estimate();
    files.write("bom.csv", format!("\u{feff}{TRUTH}"));
    files.write("crlf.csv", TRUTH.replace('\n', "\r\n"));
    files.write("cr.csv", TRUTH.replace('\n', "\r"));
    files.write(
        "quoted.csv",
        "\"time\",\"id\",\"x\",\"y\"\n\"0\",\"a\",\"0\",\"0\"\n\"1\",\"a\",\"1\",\"0\"\n",
    );
    files.write(
        "all.csv",
        "\u{feff}\"time\",id,\"x\",y\r\n\r\n0,\"a\",0,\"0\"\r\n  \r\n1,a,\"1\",0\r\n",
    );
    for name in ["bom.csv", "crlf.csv", "cr.csv", "quoted.csv", "all.csv"] {
        close(&files.gospa(name, "estimate.csv", "2"), &[0.5, 0.0]);
    }
    // A quoted id may hold the delimiter, a doubled quote and a line end (RFC 4180); it is
    // one id, so one object: against the estimate, the same values as above.
    files.write(
        "odd-id.csv",
        "time,id,x,y\n0,\"a,\"\"b\"\"\nc\",0,0\n1,\"a,\"\"b\"\"\nc\",1,0\n",
    );
    close(&files.gospa("odd-id.csv", "estimate.csv", "2"), &[0.5, 0.0]);
    // Line numbers count physical lines: CRLF files and quoted line ends included.
    files.write("crlf-bad.csv", "time,id,x,y\r\n0,a,0,0\r\n1,a,oops,0\r\n");
    files.fails(
        &steps("crlf-bad.csv", "2"),
        1,
        r#"crlf-bad.csv, line 3, column 3 ("x"): expected a number, found "oops""#,
    );
    files.write("cr-bad.csv", "time,id,x,y\r0,a,0,0\r\r1,a,oops,0\r");
    files.fails(
        &steps("cr-bad.csv", "2"),
        1,
        r#"cr-bad.csv, line 4, column 3 ("x"): expected a number, found "oops""#,
    );
    files.write(
        "blank-lines-bad.csv",
        "\u{feff}time,id,x,y\r\n\r\n0,a,0,0\n\n\n1,a,oops,0\n",
    );
    files.fails(
        &steps("blank-lines-bad.csv", "2"),
        1,
        r#"blank-lines-bad.csv, line 6, column 3 ("x"): expected a number, found "oops""#,
    );
    files.write(
        "multi-line-bad.csv",
        "time,id,x,y\n0,\"a\nb\",0,0\n1,a,oops,0\n",
    );
    files.fails(
        &steps("multi-line-bad.csv", "2"),
        1,
        r#"multi-line-bad.csv, line 4, column 3 ("x"): expected a number, found "oops""#,
    );
}

#[test]
fn a_quote_never_closed_is_named() {
    let files = files_with_estimate();
    files.write(
        "open-quote.csv",
        "time,id,x,y\n0,a,0,0\n1,\"a,1,0\n2,a,2,0\n",
    );
    files.fails(
        &steps("open-quote.csv", "2"),
        1,
        "open-quote.csv, line 3: a quoted field opened on this line is not closed before the end of the file",
    );
}

#[test]
fn missing_columns_and_ragged_rows() {
    let files = files_with_estimate();
    files.write("no-y.csv", "time,id,x\n0,a,0\n");
    files.fails(
        &steps("no-y.csv", "2"),
        1,
        r#"no-y.csv, line 1: the header has no column "y" (it has: time, id, x)"#,
    );
    files.write("no-id.csv", "time,x,y\n0,0,0\n");
    files.fails(
        &steps("no-id.csv", "2"),
        1,
        r#"no-id.csv, line 1: the header has no column "id" (it has: time, x, y)"#,
    );
    files.write("short-row.csv", "time,id,x,y\n0,a,0,0\n1,a,1\n");
    files.fails(
        &steps("short-row.csv", "2"),
        1,
        r#"short-row.csv, line 3, column 4 ("y"): the row ends after 3 fields but the header has 4"#,
    );
    files.write("long-row.csv", "time,id,x,y\n0,a,0,0,7\n");
    files.fails(
        &steps("long-row.csv", "2"),
        1,
        "long-row.csv, line 2: the row has 5 fields but the header has 4",
    );
    files.write("twice.csv", "time,id,x,y,x\n0,a,0,0,0\n");
    files.fails(
        &steps("twice.csv", "2"),
        1,
        r#"twice.csv, line 1, column 5 ("x"): the header names the column "x" twice"#,
    );
}

#[test]
fn numbers_that_are_not_finite_or_not_numbers() {
    let files = files_with_estimate();
    let cases = [
        (
            "NaN",
            r#"expected a finite number, found "NaN" (NaN and infinite values are not accepted)"#,
        ),
        (
            "inf",
            r#"expected a finite number, found "inf" (NaN and infinite values are not accepted)"#,
        ),
        (
            "-infinity",
            r#"expected a finite number, found "-infinity" (NaN and infinite values are not accepted)"#,
        ),
        ("", "expected a number, found an empty field"),
        ("\"  \"", "expected a number, found an empty field"),
        ("1,5e0", "the row has 5 fields but the header has 4"),
        ("0x10", r#"expected a number, found "0x10""#),
        (
            "1e400",
            "the number 1e400 is out of range (the largest is about 1.8e308)",
        ),
        (
            "-1e309",
            "the number -1e309 is out of range (the largest is about 1.8e308)",
        ),
    ];
    for (value, message) in cases {
        files.write("bad.csv", format!("time,id,x,y\n0,a,0,0\n1,a,{value},0\n"));
        let location = if message.starts_with("the row has") {
            "bad.csv, line 3".to_string()
        } else {
            r#"bad.csv, line 3, column 3 ("x")"#.to_string()
        };
        files.fails(&steps("bad.csv", "2"), 1, &format!("{location}: {message}"));
    }
}

#[test]
fn huge_and_denormal_values_give_exact_distances() {
    let files = Files::new();
    // Equal huge states: distance 0, so step 0 costs nothing.
    files.write("huge.csv", "time,id,x,y\n0,a,1e308,-1e308\n");
    close(&files.gospa("huge.csv", "huge.csv", "2"), &[0.0]);
    // Opposite huge states: the difference 2e308 exceeds the largest double, so the distance
    // is beyond any cut-off: one missed and one false, c/2 + c/2 = 2.
    files.write("minus-huge.csv", "time,id,x,y\n0,b,-1e308,-1e308\n");
    close(&files.gospa("huge.csv", "minus-huge.csv", "2"), &[2.0]);
    // A distance of 1e200 (its square overflows) under a cut-off of 1e300: assigned at
    // exactly 1e200, not counted as c.
    files.write("origin.csv", "time,id,x,y\n0,a,0,0\n");
    files.write("far.csv", "time,id,x,y\n0,b,6e199,8e199\n");
    close(&files.gospa("origin.csv", "far.csv", "1e300"), &[1e200]);
    // The smallest denormal, 2^-1074 = 4.94e-324 (IEEE 754 binary64), apart in x and in y:
    // the distance is sqrt(2) x 2^-1074, which rounds to 2^-1074 (the next denormal,
    // 2 x 2^-1074, is farther from 1.414 x 2^-1074). Its square underflows, so only a scaled
    // computation finds it.
    let tiny = f64::from_bits(1);
    files.write("tiny.csv", "time,id,x,y\n0,b,4.9e-324,5e-324\n");
    let got = files.gospa("origin.csv", "tiny.csv", "1e-300");
    assert_eq!(got, [tiny]);
}

#[test]
fn duplicate_id_and_step_names_both_lines() {
    let files = files_with_estimate();
    files.write(
        "dup.csv",
        "time,id,x,y\n0,a,0,0\n1,a,1,0\n1,b,0,0\n1,a,2,0\n",
    );
    files.fails(
        &steps("dup.csv", "2"),
        1,
        r#"dup.csv, line 5, column 1 ("time"): id "a" has a second row at step 1 (the first is on line 3)"#,
    );
    // `1` and `1.0` are the same step.
    files.write("dup-decimal.csv", "time,id,x,y\n1.0,a,0,0\n1,a,1,0\n");
    files.fails(
        &steps("dup-decimal.csv", "2"),
        1,
        r#"dup-decimal.csv, line 3, column 1 ("time"): id "a" has a second row at step 1 (the first is on line 2)"#,
    );
}

#[test]
fn steps_negative_decimal_fractional_and_out_of_range() {
    let files = files_with_estimate();
    // Negative steps are integers: the window runs from -1 to 1; at -1 the truth is missed
    // (c/2 = 1), at 0 and 1 as in the plain case. `0.0` reads as step 0, `1e0` as step 1.
    files.write(
        "negative.csv",
        "time,id,x,y\n-1,a,0,0\n0.0,a,0,0\n1e0,a,1,0\n",
    );
    close(
        &files.gospa("negative.csv", "estimate.csv", "2"),
        &[1.0, 0.5, 0.0],
    );
    files.write("fraction.csv", "time,id,x,y\n0,a,0,0\n2.5,a,0,0\n");
    files.fails(
        &steps("fraction.csv", "2"),
        1,
        r#"fraction.csv, line 3, column 1 ("time"): the time 2.5 is not an integer step; give a step size with --time-step for decimal timestamps"#,
    );
    // With a step size the same file reads: 2.5 / 0.5 = step 5.
    let (status, _, stderr) = files.run(&[
        "steps",
        "--truth",
        "fraction.csv",
        "--estimate",
        "fraction.csv",
        "--cutoff",
        "2",
        "--time-step",
        "0.5",
    ]);
    assert_eq!(status, 0, "{stderr}");
    files.write("word.csv", "time,id,x,y\nnoon,a,0,0\n");
    files.fails(
        &steps("word.csv", "2"),
        1,
        r#"word.csv, line 2, column 1 ("time"): expected a number, found "noon""#,
    );
    files.write("far-step.csv", "time,id,x,y\n1e20,a,0,0\n");
    files.fails(
        &steps("far-step.csv", "2"),
        1,
        r#"far-step.csv, line 2, column 1 ("time"): the time 1e20 gives step 1e20, beyond the supported range of +-2^53"#,
    );
    files.write("long-window.csv", "time,id,x,y\n0,a,0,0\n60000000,a,0,0\n");
    files.fails(
        &steps("long-window.csv", "2"),
        1,
        "the steps run from 0 to 60000000: 60000001 steps, more than the 50000000 supported (is the time step right?)",
    );
}

#[test]
fn state_dimensions_must_agree() {
    let files = files_with_estimate();
    files.write("xyz.csv", "time,id,x,y,z\n0,a,0,0,0\n");
    files.fails(
        &steps("xyz.csv", "2"),
        1,
        "xyz.csv has 3 state columns (x,y,z) but estimate.csv has 2 (x,y); both files need the same state dimensions",
    );
}

#[test]
fn ids_differing_only_by_surrounding_spaces_are_one_id() {
    let files = files_with_estimate();
    // " a" and "a\t" are the id "a": one object, so one track through the scene and no
    // switch. Trajectory GOSPA: localisation 0.5 + 0, nothing missed, false or switched.
    files.write("spaces.csv", "time,id,x,y\n0, a ,0,0\n1,a\t,1,0\n");
    let score = files.score(&[
        "--truth",
        "spaces.csv",
        "--estimate",
        "estimate.csv",
        "--cutoff",
        "2",
    ]);
    assert_eq!(score["inputs"]["truth_objects"], 1);
    let total = score["total"].as_f64().unwrap();
    assert!((total - 0.5).abs() < 1e-12, "{score}");
    assert_eq!(score["switching"].as_f64(), Some(0.0));
    files.write("spaces-dup.csv", "time,id,x,y\n0, a ,0,0\n0,a,1,0\n");
    files.fails(
        &steps("spaces-dup.csv", "2"),
        1,
        r#"spaces-dup.csv, line 3, column 1 ("time"): id "a" has a second row at step 0 (the first is on line 2)"#,
    );
    files.write("blank-id.csv", "time,id,x,y\n0,  ,0,0\n");
    files.fails(
        &steps("blank-id.csv", "2"),
        1,
        r#"blank-id.csv, line 2, column 2 ("id"): the id is empty"#,
    );
}

#[test]
fn empty_files_directories_and_unreadable_paths() {
    let files = files_with_estimate();
    files.write("empty.csv", "");
    let no_header = r#"line 1: no header row: the file is empty (expected a header naming the columns "time" and "id")"#;
    files.fails(
        &steps("empty.csv", "2"),
        1,
        &format!("empty.csv, {no_header}"),
    );
    files.write("blank.csv", "\n \r\n\n");
    files.fails(
        &steps("blank.csv", "2"),
        1,
        &format!("blank.csv, {no_header}"),
    );
    // A header and no rows is an empty set: against the estimate, two false objects at step 0
    // and step 1 cost c/2 = 1 each.
    files.write("header-only.csv", "time,id,x,y\n");
    close(
        &files.gospa("header-only.csv", "estimate.csv", "2"),
        &[1.0, 1.0],
    );
    std::fs::create_dir(files.path().join("folder.csv")).unwrap();
    files.fails(
        &steps("folder.csv", "2"),
        1,
        "folder.csv: is a directory, expected a CSV file",
    );
    files.fails(
        &steps("missing.csv", "2"),
        1,
        "missing.csv: No such file or directory (os error 2)",
    );
    // A path that goes through a file as if it were a folder cannot be opened, whoever runs.
    files.write("truth.csv", TRUTH);
    files.fails(
        &steps("truth.csv/inner.csv", "2"),
        1,
        "truth.csv/inner.csv: Not a directory (os error 20)",
    );
    // A file without read permission: refused unless the tests run with the privilege to
    // read anyway (as root), which the test finds out by trying.
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        let locked = files.write("locked.csv", TRUTH);
        std::fs::set_permissions(&locked, std::fs::Permissions::from_mode(0o000)).unwrap();
        if std::fs::read(&locked).is_err() {
            files.fails(
                &steps("locked.csv", "2"),
                1,
                "locked.csv: Permission denied (os error 13)",
            );
        }
    }
}

/// A file that opens but whose reading fails: the process's own memory image read from its
/// start, where nothing is mapped, fails with EIO (Linux proc(5)). This is the read error of a
/// failing disk, which chmod cannot give to root.
#[cfg(target_os = "linux")]
#[test]
fn a_read_error_after_opening_is_reported() {
    let files = files_with_estimate();
    files.fails(
        &steps("/proc/self/mem", "2"),
        1,
        "/proc/self/mem: Input/output error (os error 5)",
    );
}

#[test]
fn invalid_utf8() {
    let files = files_with_estimate();
    files.write("id.csv", b"time,id,x,y\n0,a\xff,0,0\n");
    files.fails(
        &steps("id.csv", "2"),
        1,
        r#"id.csv, line 2, column 2 ("id"): the id is not valid UTF-8"#,
    );
    files.write("number.csv", b"time,id,x,y\n0,a,0,\xff\n");
    files.fails(
        &steps("number.csv", "2"),
        1,
        r#"number.csv, line 2, column 4 ("y"): expected a number, found bytes that are not valid UTF-8"#,
    );
    files.write("header.csv", b"time,id,\xffx,y\n0,a,0,0\n");
    files.fails(
        &steps("header.csv", "2"),
        1,
        "header.csv, line 1: the header has no column \"x\" (it has: time, id, \u{fffd}x, y); the name in column 3 is not valid UTF-8",
    );
    // Bytes that are not UTF-8 in a column that is not read do not matter.
    files.write(
        "ignored.csv",
        b"time,id,note,x,y\n0,a,caf\xe9,0,0\n1,a,,1,0\n",
    );
    close(
        &files.gospa("ignored.csv", "estimate.csv", "2"),
        &[0.5, 0.0],
    );
}

#[test]
fn a_row_longer_than_a_mebibyte_is_refused_without_reading_the_rest() {
    let files = files_with_estimate();
    let mut text = String::from("time,id,x,y\n0,a,0,0\n1,a,");
    text.push_str(&"1".repeat(3 << 20));
    text.push_str(",0\n");
    files.write("long.csv", text);
    files.fails(
        &steps("long.csv", "2"),
        1,
        "long.csv, line 3: the row starting here is longer than 1 MiB (is a line end or a closing quote missing?)",
    );
}

#[test]
fn parameters_out_of_range() {
    let files = files_with_estimate();
    files.write("truth.csv", TRUTH);
    let base = ["--truth", "truth.csv", "--estimate", "estimate.csv"];
    let check = |command: &str, extra: &[&str], message: &str| {
        let mut args = vec![command];
        args.extend_from_slice(&base);
        args.extend_from_slice(extra);
        files.fails(&args, 1, &format!("invalid parameter: {message}"));
    };
    for command in ["steps", "score"] {
        for cutoff in ["0", "-1", "NaN", "inf"] {
            check(
                command,
                &[&format!("--cutoff={cutoff}")],
                &format!("the cut-off must be a positive finite number, got {cutoff}"),
            );
        }
        for order in ["0.5", "0", "NaN"] {
            check(
                command,
                &["--cutoff", "2", "--order", order],
                &format!("the order must be a finite number >= 1, got {order}"),
            );
        }
        check(
            command,
            &["--cutoff", "1e200", "--order", "2"],
            &format!("the cut-off {} raised to the order 2 overflows", 1e200),
        );
        check(
            command,
            &["--cutoff", "1e-200", "--order", "2"],
            &format!(
                "the cut-off {} raised to the order 2 underflows (below 2.2e-308)",
                1e-200
            ),
        );
        check(
            command,
            &["--cutoff", "2", "--time-step", "0"],
            "the time step must be a positive number, got 0",
        );
        check(
            command,
            &["--cutoff", "2", "--delimiter", "::"],
            r#"the delimiter must be one ASCII character or `tab`, got "::""#,
        );
    }
    for penalty in ["-1", "NaN", "inf"] {
        check(
            "score",
            &["--cutoff", "2", &format!("--switch-penalty={penalty}")],
            &format!("the switching penalty must be a finite number >= 0, got {penalty}"),
        );
    }
    for alpha in ["0", "2.5", "-1", "NaN"] {
        check(
            "steps",
            &["--cutoff", "2", &format!("--alpha={alpha}")],
            &format!("alpha must lie in (0, 2], got {alpha}"),
        );
    }
}

#[test]
fn a_cutoff_too_large_for_the_inputs_is_refused() {
    let files = Files::new();
    // At c = 1e308 (p = 1), five truths and one track at step 0: one pair is assigned, the
    // other four truths cost c/2 each, 2e308 in all, beyond the largest double (1.8e308), so
    // no value could be written; the trajectory bound c/2 x 6 object-steps overflows too.
    files.write(
        "truth.csv",
        "time,id,x,y\n0,a,0,0\n0,b,10,0\n0,c,20,0\n0,d,30,0\n0,e,40,0\n",
    );
    files.write("estimate.csv", "time,id,x,y\n0,e,50,0\n");
    let args = |command| {
        vec![
            command,
            "--truth",
            "truth.csv",
            "--estimate",
            "estimate.csv",
            "--cutoff",
            "1e308",
        ]
    };
    // Messages write numbers in Rust's plain decimal form.
    let c = format!("{}", 1e308);
    files.fails(
        &args("score"),
        1,
        &format!("invalid parameter: the cut-off {c} is too large for these inputs: c^p / 2 times the 6 object-steps overflows"),
    );
    files.fails(
        &args("steps"),
        1,
        &format!("invalid parameter: the cut-off {c} is too large for these inputs: the sums over the steps overflow"),
    );
}

#[test]
fn a_command_line_that_does_not_parse_exits_with_2() {
    let files = files_with_estimate();
    let (status, stdout, stderr) = files.run(&[
        "steps",
        "--truth",
        "estimate.csv",
        "--estimate",
        "estimate.csv",
        "--cutoff",
        "two",
    ]);
    assert_eq!(status, 2);
    assert!(stdout.is_empty());
    assert!(
        stderr.contains("invalid value 'two' for '--cutoff <C>'"),
        "{stderr}"
    );
    let (status, _, _) = files.run(&["steps", "--no-such-option"]);
    assert_eq!(status, 2);
}

#[test]
fn a_failed_run_leaves_an_existing_output_file_untouched() {
    let files = files_with_estimate();
    files.write("bad.csv", "time,id,x,y\n0,a,zero,0\n");
    let out = files.write("out.csv", "previous result\n");
    let (status, _, stderr) = files.run(&[
        "steps",
        "--truth",
        "bad.csv",
        "--estimate",
        "estimate.csv",
        "--cutoff",
        "2",
        "--output",
        "out.csv",
    ]);
    assert_eq!(status, 1, "{stderr}");
    assert_eq!(std::fs::read_to_string(&out).unwrap(), "previous result\n");
    // No temporary file is left beside it.
    let names: Vec<_> = std::fs::read_dir(files.path())
        .unwrap()
        .map(|entry| entry.unwrap().file_name().into_string().unwrap())
        .collect();
    let mut sorted = names.clone();
    sorted.sort();
    assert_eq!(sorted, ["bad.csv", "estimate.csv", "out.csv"]);
}
