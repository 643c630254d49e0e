//! Messages and text output through the real binary: ids of any length print, control
//! characters never reach a terminal raw, numbers a double cannot hold are refused, and each
//! error says what is wrong in the user's words (exit code, message, nothing written).
//!
//! Exit codes: 0 success, 1 bad input or parameters.

use crate::bad_input::Files;

/// A two-step truth and a one-step estimate, ids given.
fn scene(files: &Files, truth_id: &str, estimate_id: &str) {
    files.write(
        "t.csv",
        format!("time,id,x,y\n1,{truth_id},0,0\n2,{truth_id},0,0\n"),
    );
    files.write("e.csv", format!("time,id,x,y\n1,{estimate_id},3,4\n"));
}

/// Runs `command --truth t.csv --estimate e.csv` and then `more` in the folder.
fn run_pair(files: &Files, command: &str, more: &[&str]) -> (i32, String, String) {
    let mut args = vec![command, "--truth", "t.csv", "--estimate", "e.csv"];
    args.extend_from_slice(more);
    files.run(&args)
}

/// `steps --truth t.csv --estimate e.csv -c 1` must fail with exit code 1 and `message`.
fn steps_fails(files: &Files, message: &str) {
    files.fails(
        &[
            "steps",
            "--truth",
            "t.csv",
            "--estimate",
            "e.csv",
            "-c",
            "1",
        ],
        1,
        message,
    );
}

#[test]
fn ids_of_any_length_print_in_every_text_table() {
    // 70,000 characters: beyond the 65,535 width the standard formatter accepts.
    let long = "a".repeat(70_000);
    let files = Files::new();
    scene(&files, &long, &format!("{long}b"));
    for command in ["audit", "switches", "score", "steps"] {
        let (code, stdout, stderr) = run_pair(&files, command, &["-c", "10"]);
        assert_eq!(code, 0, "{command}: {stderr}");
        if command == "audit" {
            assert!(stdout.contains(&long), "{command} prints the id");
        }
    }
    // compare: a tracker name and a sequence name of the same length, per sequence and Monte
    // Carlo tables.
    files.write(
        "m.csv",
        format!(
            "tracker,sequence,run,truth,estimate\n{long},{long}s,1,t.csv,e.csv\n{long},{long}s,2,t.csv,e.csv\n"
        ),
    );
    let (code, stdout, stderr) = files.run(&[
        "compare",
        "--manifest",
        "m.csv",
        "-c",
        "10",
        "--per-sequence",
        "--monte-carlo",
    ]);
    assert_eq!(code, 0, "{stderr}");
    assert!(stdout.contains(&format!("{long}s")));
}

#[test]
fn control_characters_in_ids_are_escaped_in_text() {
    // ESC [ 3 1 m is the ANSI (ECMA-48) sequence for a red foreground; U+202E is the
    // right-to-left override of the Unicode bidirectional algorithm (UAX #9); 0x7F is DEL.
    let files = Files::new();
    scene(&files, "t\u{1b}[31m", "e\u{202e}x\u{7f}");
    let (code, stdout, stderr) = run_pair(&files, "audit", &["-c", "10"]);
    assert_eq!(code, 0, "{stderr}");
    assert!(stdout.contains("t\\u{1b}[31m"), "{stdout}");
    assert!(stdout.contains("e\\u{202e}x\\u{7f}"), "{stdout}");
    assert!(
        !stdout.contains(['\u{1b}', '\u{202e}', '\u{7f}']),
        "no raw control character"
    );
}

#[test]
fn an_integer_time_a_double_cannot_hold_is_refused() {
    // 2^53 + 1 = 9007199254740993 is the smallest positive integer an IEEE 754 double cannot
    // hold (53-bit significand); read as a double it would become 2^53.
    let files = Files::new();
    files.write("t.csv", "time,id,x,y\n9007199254740993,a,0,0\n");
    files.write("e.csv", "time,id,x,y\n1,p,0,0\n");
    steps_fails(
        &files,
        "t.csv, line 2, column 1 (\"time\"): the time 9007199254740993 is beyond the supported \
         range of +-2^53 (9007199254740992): larger integers are not exact in floating point",
    );
    // Written with an exponent or a fraction the same integer is just as inexact.
    for text in ["9.007199254740993e15", "4503599627370496.5"] {
        files.write("t.csv", format!("time,id,x,y\n{text},a,0,0\n"));
        let (code, _, stderr) = run_pair(&files, "steps", &["-c", "1"]);
        assert_eq!(code, 1);
        assert!(
            stderr.contains(&format!(
                "the time {text} is too large to be read exactly as a step"
            )),
            "{stderr}"
        );
    }
    // 2^53 itself is exact and accepted; so is "40.000" (an integer with a zero fraction).
    for time in ["9007199254740992", "40.000"] {
        files.write("t.csv", format!("time,id,x,y\n{time},a,0,0\n"));
        files.write("e.csv", format!("time,id,x,y\n{time},p,0,0\n"));
        let (code, stdout, stderr) = run_pair(&files, "steps", &["-c", "1", "-f", "csv"]);
        assert_eq!(code, 0, "{stderr}");
        let step = time.trim_end_matches(".000");
        assert!(
            stdout
                .lines()
                .nth(1)
                .unwrap()
                .starts_with(&format!("{step},0,")),
            "{stdout}"
        );
    }
}

#[test]
fn synth_refuses_parameters_that_overflow_positions() {
    // 1e308 is within 2 of the largest double (about 1.8e308): a region that size, or noise
    // that large, overflows to infinity.
    let files = Files::new();
    for (option, message) in [
        ("--region-size", "the scene's region size and lifetime give a position that is not a finite number"),
        ("--position-noise", "the tracker's position noise and swap distance give a position that is not a finite number"),
    ] {
        let (code, stdout, stderr) = files.run(&[
            "synth",
            "--truth-out",
            "t.csv",
            "--estimate-out",
            "e.csv",
            option,
            "1e308",
        ]);
        assert_eq!(code, 1, "{option}");
        assert!(stderr.contains(message), "{stderr}");
        assert!(stdout.is_empty());
        assert!(!files.path().join("t.csv").exists(), "nothing written");
        assert!(!files.path().join("e.csv").exists(), "nothing written");
    }
}

#[test]
fn hidden_characters_in_header_names_are_shown_escaped() {
    let files = Files::new();
    files.write("e.csv", "time,id,x,y\n1,p,0,0\n");
    // A NUL inside "id", and a second byte-order mark (the first is the file's own).
    files.write("t.csv", b"time,i\0d,x,y\n1,a,0,0\n");
    steps_fails(
        &files,
        "t.csv, line 1: the header has no column \"id\" (it has: time, i\\0d, x, y)",
    );
    files.write("t.csv", "\u{feff}\u{feff}time,id,x,y\n1,a,0,0\n");
    steps_fails(
        &files,
        "t.csv, line 1: the header has no column \"time\" (it has: \\u{feff}time, id, x, y)",
    );
}

#[test]
fn a_file_that_is_not_csv_is_not_quoted() {
    let files = Files::new();
    files.write("t.csv", "time,id,x,y\n1,a,0,0\n");
    files.write("notes.txt", "private words on the first line\nmore\n");
    files.write(
        "m.csv",
        "tracker,sequence,truth,estimate\nA,s,t.csv,notes.txt\n",
    );
    let (code, stdout, stderr) = files.run(&["compare", "--manifest", "m.csv", "-c", "1"]);
    assert_eq!(code, 1);
    assert!(stdout.is_empty());
    assert!(!stderr.contains("private"), "{stderr}");
    assert!(
        stderr.contains("notes.txt, line 1: the header has no column \"time\", and the first line does not look like a CSV header (one field): is this a CSV file?"),
        "{stderr}"
    );
    assert!(
        stderr.contains("m.csv, line 2: the estimate file: "),
        "{stderr}"
    );
}

#[test]
fn manifest_errors_name_the_entry_the_key_and_the_line() {
    let files = Files::new();
    files.write(
        "m.json",
        "[\n {\"tracker\": \"A\", \"sequence\": \"s\", \"truth\": \"t.csv\", \"estimate\": \"e.csv\"},\n {\"tracker\": \"B\", \"sequence\": 1.5,\n  \"truth\": \"t.csv\", \"estimate\": \"e.csv\"}\n]\n",
    );
    files.fails(
        &["compare", "--manifest", "m.json", "-c", "1"],
        1,
        "m.json, line 3: entry 2: the value of \"sequence\" must be a string or an integer, found a decimal number",
    );
    files.write(
        "m.json",
        "[{\"tracker\": \"A\", \"sequence\": \"s\", \"truth\": \"t.csv\"}]",
    );
    files.fails(
        &["compare", "--manifest", "m.json", "-c", "1"],
        1,
        "m.json, line 1: entry 1: the key \"estimate\" is missing",
    );
    files.write("m.json", "[{\"tracker\": \"A\", \"sequence\": \"s\", \"truth\": \"t.csv\", \"estimate\": \"e.csv\", \"seq\": 1}]");
    files.fails(
        &["compare", "--manifest", "m.json", "-c", "1"],
        1,
        "m.json, line 1: entry 1: unknown key \"seq\" (the keys are tracker, sequence, truth, estimate and run)",
    );
    // A missing file names the manifest line that lists it.
    files.write("e.csv", "time,id,x,y\n1,p,0,0\n");
    files.write(
        "m.csv",
        "tracker,sequence,truth,estimate\nA,s,missing.csv,e.csv\n",
    );
    let (code, stdout, stderr) = files.run(&["compare", "--manifest", "m.csv", "-c", "1"]);
    assert_eq!(code, 1);
    assert!(stdout.is_empty());
    assert!(
        stderr.starts_with("switchyard: error: m.csv, line 2: the truth file: missing.csv: "),
        "{stderr}"
    );
}

#[test]
fn huge_parameters_print_in_scientific_notation_and_counts_agree_in_number() {
    let files = Files::new();
    scene(&files, "a", "p");
    let (code, stdout, stderr) = run_pair(&files, "score", &["-c", "1e300", "-g", "1e-300"]);
    assert_eq!(code, 0, "{stderr}");
    assert!(stdout.contains("cut-off c = 1e300"), "{stdout}");
    assert!(
        stdout.contains("switching penalty gamma = 1e-300"),
        "{stdout}"
    );
    assert!(stdout.contains("truth     t.csv (1 object)"), "{stdout}");
    assert!(stdout.contains("estimate  e.csv (1 track)"), "{stdout}");
    assert!(!stdout.contains("0000000000"), "no 300-digit number");
    // One step of one estimate: "1 step" where the window is one step long.
    files.write("t.csv", "time,id,x,y\n1,a,0,0\n");
    let (code, stdout, _) = run_pair(&files, "score", &["-c", "10"]);
    assert_eq!(code, 0);
    assert!(stdout.contains("steps     1 to 1 (1 step)"), "{stdout}");
}

#[test]
fn an_empty_file_name_is_a_parameter_error() {
    let files = Files::new();
    scene(&files, "a", "p");
    files.fails(
        &["score", "--truth", "", "--estimate", "e.csv", "-c", "1"],
        1,
        "invalid parameter: --truth is empty: give a CSV file, or - for standard input",
    );
    // compare reads its files through the grouped reader and the manifest reader.
    for args in [
        &["compare", "--truth", "", "--estimate", "A=e.csv", "-c", "1"][..],
        &["compare", "--manifest", "", "-c", "1"][..],
    ] {
        files.fails(
            args,
            1,
            "invalid parameter: an empty file name: give a CSV file, or - for standard input",
        );
    }
}

#[test]
fn score_writes_one_csv_row() {
    // Truth a at steps 1 and 2 at (0,0), truth b at step 2 at (100,0); track p at (3,4)
    // then (0,0). With c = 10, p = 1 (trajectory GOSPA, García-Fernández et al. 2020): a
    // follows p, localisation 5 + 0 = 5; b is beyond the cut-off of everything, missed once
    // at c^p / 2 = 5; no switch. Total 10 over 2 steps, per step 10 / 2 = 5.
    let files = Files::new();
    files.write("t.csv", "time,id,x,y\n1,a,0,0\n2,a,0,0\n2,b,100,0\n");
    files.write("e.csv", "time,id,x,y\n1,p,3,4\n2,p,0,0\n");
    let (code, stdout, stderr) = run_pair(&files, "score", &["-c", "10", "-g", "1", "-f", "csv"]);
    assert_eq!(code, 0, "{stderr}");
    let lines: Vec<&str> = stdout.lines().collect();
    assert_eq!(
        lines[0],
        "metric,total,per_step,steps,localisation,missed,false,switching,missed_count,false_count,switch_count,integral,exact_total"
    );
    assert_eq!(lines.len(), 2);
    let cells: Vec<&str> = lines[1].split(',').collect();
    let number = |k: usize| cells[k].parse::<f64>().unwrap();
    let expected = [10.0, 10.0, 5.0, 2.0, 5.0, 5.0, 0.0, 0.0, 1.0, 0.0, 0.0];
    for (k, want) in expected.iter().enumerate() {
        assert!((number(k) - want).abs() < 1e-9, "column {k}: {}", cells[k]);
    }
    assert_eq!(cells[11], "true");
}

#[test]
fn an_error_in_one_case_of_compare_names_the_tracker_and_the_case() {
    // c = 1.7e308, p = 1: an object-step left alone costs c/2 = 8.5e307, and the first case
    // (run 1) has 4 of them (three truth steps, one estimate step), 3.4e308 in all: beyond the
    // largest double, about 1.8e308 (IEEE 754 binary64), so the sum overflows.
    let files = Files::new();
    files.write("t.csv", "time,id,x,y\n0,a,0,0\n1,a,0,0\n2,a,0,0\n");
    files.write("e.csv", "run,time,id,x,y\n1,5,p,0,0\n2,5,p,0,0\n");
    let (code, stdout, stderr) = files.run(&[
        "compare",
        "--truth",
        "t.csv",
        "--estimate",
        "T=e.csv",
        "--cutoff",
        "1.7e308",
    ]);
    assert_eq!(code, 1, "{stderr}");
    assert!(stdout.is_empty(), "{stdout}");
    // The place goes after the kind of error and before what the metric said.
    assert!(
        stderr.starts_with(
            "switchyard: error: invalid parameter: tracker \"T\", run \"1\": the cut-off "
        ),
        "{stderr}"
    );
    assert!(
        stderr.ends_with(
            " is too large for these inputs: c^p / 2 times the 4 object-steps overflows\n"
        ),
        "{stderr}"
    );
}
