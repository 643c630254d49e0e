//! Outputs that never destroy: through the real binary, an output that is one of the inputs
//! (by another name, a link, standard input, a manifest) is refused; a read-only file, a folder
//! are refused; a symbolic link is written through, a FIFO and a character device are written
//! in place; a signal during a write leaves neither a temporary file nor a replaced target.
//!
//! Expected behaviour comes from POSIX file semantics (common practice for command-line tools:
//! a shell's `>` writes through links and into devices and FIFOs without replacing them) and
//! from the rules of this project (no output replaces an input, a device or a FIFO; nothing
//! half-written). Expected output bytes are the same command's standard output.

use std::fs;
use std::os::unix::fs::{FileTypeExt, MetadataExt, PermissionsExt};
use std::path::{Path, PathBuf};
use std::process::{Command as StdCommand, Output, Stdio};
use std::time::{Duration, Instant};

use assert_cmd::cargo::CommandCargoExt;
use assert_cmd::Command;

/// A list of arguments of mixed types (text and paths), as `&OsStr`.
macro_rules! args {
    ($($arg:expr),* $(,)?) => {
        [$(AsRef::<std::ffi::OsStr>::as_ref(&$arg)),*]
    };
}

fn demo(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("demo-data")
        .join(name)
}

/// A folder holding copies of the demo truth (`truth.csv`) and a tracker (`estimate.csv`).
fn folder_with_inputs() -> (tempfile::TempDir, PathBuf, PathBuf) {
    let dir = tempfile::tempdir().unwrap();
    let truth = dir.path().join("truth.csv");
    let estimate = dir.path().join("estimate.csv");
    fs::copy(demo("truth.csv"), &truth).unwrap();
    fs::copy(demo("tracker-swaps.csv"), &estimate).unwrap();
    (dir, truth, estimate)
}

fn switchyard(args: &[&std::ffi::OsStr]) -> Output {
    Command::cargo_bin("switchyard")
        .unwrap()
        .args(args)
        .output()
        .unwrap()
}

/// `COMMAND --truth T --estimate E -c 20` plus `extra`.
fn metric_args<'a>(
    command: &'a str,
    truth: &'a Path,
    estimate: &'a Path,
    extra: &[&'a std::ffi::OsStr],
) -> Vec<&'a std::ffi::OsStr> {
    let mut args: Vec<&std::ffi::OsStr> = vec![command.as_ref(), "--truth".as_ref()];
    args.extend([
        truth.as_os_str(),
        "--estimate".as_ref(),
        estimate.as_os_str(),
    ]);
    args.extend(["-c", "20"].map(std::ffi::OsStr::new));
    args.extend_from_slice(extra);
    args
}

/// The command failed with exit code 1 and a message containing `message`.
fn assert_refused(output: &Output, message: &str) {
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert_eq!(output.status.code(), Some(1), "stderr: {stderr}");
    assert!(
        stderr.contains(message),
        "expected {message:?} in: {stderr}"
    );
    assert!(output.stdout.is_empty(), "refusals print nothing on stdout");
}

/// The file at `path` still holds the demo file `name`, byte for byte.
fn assert_intact(path: &Path, name: &str) {
    assert_eq!(fs::read(path).unwrap(), fs::read(demo(name)).unwrap());
}

/// Files in `dir` whose names end in `.part` (the writer's temporary files).
fn temporary_files(dir: &Path) -> Vec<PathBuf> {
    fs::read_dir(dir)
        .unwrap()
        .map(|entry| entry.unwrap().path())
        .filter(|path| path.to_string_lossy().ends_with(".part"))
        .collect()
}

fn stdout_of(args: &[&std::ffi::OsStr]) -> Vec<u8> {
    let output = switchyard(args);
    assert!(output.status.success());
    output.stdout
}

#[test]
fn an_input_under_another_name_is_refused() {
    let (dir, truth, estimate) = folder_with_inputs();
    let dotted = dir.path().join(".").join("truth.csv");
    for command in ["steps", "score", "switches", "audit"] {
        let args = metric_args(command, &truth, &estimate, &args!["--output", dotted]);
        assert_refused(&switchyard(&args), "is the input");
        assert_intact(&truth, "truth.csv");
    }
    // `--out` is the same option.
    let args = metric_args("score", &truth, &estimate, &args!["--out", estimate]);
    assert_refused(&switchyard(&args), "is the input");
    assert_intact(&estimate, "tracker-swaps.csv");
}

#[test]
fn links_to_an_input_are_refused() {
    let (dir, truth, estimate) = folder_with_inputs();
    let symbolic = dir.path().join("symbolic.csv");
    std::os::unix::fs::symlink(&estimate, &symbolic).unwrap();
    let hard = dir.path().join("hard.csv");
    fs::hard_link(&truth, &hard).unwrap();
    for output in [&symbolic, &hard] {
        let args = metric_args("steps", &truth, &estimate, &args!["-o", output]);
        assert_refused(&switchyard(&args), "refusing to overwrite an input");
    }
    assert_intact(&truth, "truth.csv");
    assert_intact(&estimate, "tracker-swaps.csv");
    assert!(fs::symlink_metadata(&symbolic)
        .unwrap()
        .file_type()
        .is_symlink());
}

#[test]
fn standard_input_read_from_the_output_file_is_refused() {
    let (_dir, truth, estimate) = folder_with_inputs();
    // The file itself as standard input (not a pipe), as a shell's `<` gives it.
    let output = StdCommand::cargo_bin("switchyard")
        .unwrap()
        .args(["steps", "--truth", "-", "--estimate"])
        .arg(&estimate)
        .args(["-c", "20", "--output"])
        .arg(&truth)
        .stdin(fs::File::open(&truth).unwrap())
        .output()
        .unwrap();
    assert_refused(&output, "is the input standard input");
    assert_intact(&truth, "truth.csv");
}

#[test]
fn report_refuses_to_overwrite_an_estimate() {
    let (_dir, truth, estimate) = folder_with_inputs();
    let args = metric_args("report", &truth, &estimate, &args!["--out", estimate]);
    let output = switchyard(&args);
    assert_refused(&output, "is the input");
    assert_intact(&estimate, "tracker-swaps.csv");
}

#[test]
fn compare_refuses_its_manifest_and_every_file_it_names() {
    let (dir, truth, estimate) = folder_with_inputs();
    let manifest = dir.path().join("manifest.csv");
    let listing = "tracker,sequence,truth,estimate\nswaps,one,truth.csv,estimate.csv\n";
    fs::write(&manifest, listing).unwrap();
    for output in [&manifest, &truth, &estimate] {
        let result = switchyard(&args![
            "compare",
            "--manifest",
            manifest,
            "-c",
            "20",
            "--output",
            output
        ]);
        assert_refused(&result, "refusing to overwrite an input");
    }
    assert_eq!(fs::read_to_string(&manifest).unwrap(), listing);
    assert_intact(&truth, "truth.csv");
    assert_intact(&estimate, "tracker-swaps.csv");
    // Without a manifest, the truth and the estimates are the inputs.
    let args = metric_args("compare", &truth, &estimate, &args!["--output", truth]);
    let result = switchyard(&args);
    assert_refused(&result, "refusing to overwrite an input");
    assert_intact(&truth, "truth.csv");
}

#[test]
fn synth_refuses_two_names_for_one_file_and_writes_neither() {
    let dir = tempfile::tempdir().unwrap();
    let scene = dir.path().join("scene.csv");
    let dotted = dir.path().join(".").join("scene.csv");
    let result = switchyard(&args![
        "synth",
        "--truth-out",
        scene,
        "--estimate-out",
        dotted
    ]);
    assert_refused(&result, "name the same file");
    assert!(!scene.exists(), "nothing written");
    // An existing file and a link to it are one file too.
    fs::write(&scene, "kept\n").unwrap();
    let link = dir.path().join("link.csv");
    std::os::unix::fs::symlink(&scene, &link).unwrap();
    let result = switchyard(&args![
        "synth",
        "--truth-out",
        scene,
        "--estimate-out",
        link
    ]);
    assert_refused(&result, "name the same file");
    assert_eq!(fs::read_to_string(&scene).unwrap(), "kept\n");
}

/// Mode bits 0o444: no one may write. Root ignores permission bits when opening, so the
/// refusal must come from the bits themselves; this test holds for root and for other users.
#[test]
fn a_read_only_file_is_refused_and_kept() {
    let (dir, truth, estimate) = folder_with_inputs();
    let locked = dir.path().join("locked.txt");
    fs::write(&locked, "kept\n").unwrap();
    fs::set_permissions(&locked, fs::Permissions::from_mode(0o444)).unwrap();
    let args = metric_args("score", &truth, &estimate, &args!["--output", locked]);
    assert_refused(&switchyard(&args), "read-only");
    assert_eq!(fs::read_to_string(&locked).unwrap(), "kept\n");
    assert_eq!(fs::metadata(&locked).unwrap().mode() & 0o777, 0o444);
    assert!(temporary_files(dir.path()).is_empty());
    // synth checks both outputs before writing either.
    let scene = dir.path().join("scene.csv");
    let result = switchyard(&args![
        "synth",
        "--truth-out",
        scene,
        "--estimate-out",
        locked
    ]);
    assert_refused(&result, "read-only");
    assert!(!scene.exists(), "the truth was not written alone");
}

#[test]
fn a_folder_is_refused() {
    let (dir, truth, estimate) = folder_with_inputs();
    let folder = dir.path();
    let args = metric_args("steps", &truth, &estimate, &args!["--output", folder]);
    assert_refused(&switchyard(&args), "is a folder");
    assert!(temporary_files(dir.path()).is_empty());
}

#[test]
fn replacing_a_file_keeps_its_permissions() {
    let (dir, truth, estimate) = folder_with_inputs();
    let private = dir.path().join("private.txt");
    fs::write(&private, "old\n").unwrap();
    fs::set_permissions(&private, fs::Permissions::from_mode(0o600)).unwrap();
    let args = metric_args("steps", &truth, &estimate, &args!["--output", private]);
    assert!(switchyard(&args).status.success());
    let expected = stdout_of(&metric_args("steps", &truth, &estimate, &[]));
    assert_eq!(fs::read(&private).unwrap(), expected);
    assert_eq!(fs::metadata(&private).unwrap().mode() & 0o777, 0o600);
    assert!(temporary_files(dir.path()).is_empty());
}

#[test]
fn a_symbolic_link_is_written_through() {
    let (dir, truth, estimate) = folder_with_inputs();
    let elsewhere = tempfile::tempdir().unwrap();
    let target = elsewhere.path().join("result.txt");
    fs::write(&target, "old\n").unwrap();
    let link = dir.path().join("result-link.txt");
    std::os::unix::fs::symlink(&target, &link).unwrap();
    let args = metric_args("score", &truth, &estimate, &args!["--output", link]);
    let output = switchyard(&args);
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    let expected = stdout_of(&metric_args("score", &truth, &estimate, &[]));
    assert!(fs::symlink_metadata(&link)
        .unwrap()
        .file_type()
        .is_symlink());
    assert_eq!(fs::read(&target).unwrap(), expected);
    // The temporary file was made in the target's folder, and is gone.
    assert!(temporary_files(dir.path()).is_empty());
    assert!(temporary_files(elsewhere.path()).is_empty());
    // A dangling link creates its target, as a shell's `>` does.
    let missing = elsewhere.path().join("new.txt");
    let dangling = dir.path().join("dangling.txt");
    std::os::unix::fs::symlink(&missing, &dangling).unwrap();
    let args = metric_args("score", &truth, &estimate, &args!["--output", dangling]);
    assert!(switchyard(&args).status.success());
    assert!(fs::symlink_metadata(&dangling)
        .unwrap()
        .file_type()
        .is_symlink());
    assert_eq!(fs::read(&missing).unwrap(), expected);
}

#[test]
fn a_fifo_is_written_to_its_reader_not_replaced() {
    let (dir, truth, estimate) = folder_with_inputs();
    let fifo = dir.path().join("pipe");
    let made = StdCommand::new("mkfifo").arg(&fifo).status().unwrap();
    assert!(made.success(), "mkfifo failed");
    let reader = {
        let fifo = fifo.clone();
        // Opening a FIFO for reading waits for the writer; read to its end.
        std::thread::spawn(move || fs::read(fifo).unwrap())
    };
    let args = metric_args("steps", &truth, &estimate, &args!["--output", fifo]);
    let output = switchyard(&args);
    if !output.status.success() {
        // Release the reader, still waiting for a writer, before failing.
        drop(fs::OpenOptions::new().write(true).open(&fifo));
    }
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    let received = reader.join().unwrap();
    let expected = stdout_of(&metric_args("steps", &truth, &estimate, &[]));
    assert_eq!(received, expected);
    assert!(fs::symlink_metadata(&fifo).unwrap().file_type().is_fifo());
    assert!(temporary_files(dir.path()).is_empty());
}

/// Whether this process runs as root: a new file is owned by the effective user.
fn running_as_root() -> bool {
    let probe = tempfile::NamedTempFile::new().unwrap();
    probe.as_file().metadata().unwrap().uid() == 0
}

#[test]
fn the_null_device_stays_a_device() {
    let (dir, truth, estimate) = folder_with_inputs();
    let null = Path::new("/dev/null");
    assert!(fs::metadata(null).unwrap().file_type().is_char_device());
    // Through a link for any user; directly when root, who could otherwise replace it.
    let link = dir.path().join("null-link");
    std::os::unix::fs::symlink(null, &link).unwrap();
    let mut outputs = vec![link.clone()];
    if running_as_root() {
        outputs.push(null.to_path_buf());
    }
    for output in &outputs {
        let args = metric_args("score", &truth, &estimate, &args!["--output", output]);
        let result = switchyard(&args);
        assert!(
            result.status.success(),
            "{}",
            String::from_utf8_lossy(&result.stderr)
        );
        assert!(result.stdout.is_empty());
        assert!(fs::metadata(null).unwrap().file_type().is_char_device());
    }
    assert!(fs::symlink_metadata(&link)
        .unwrap()
        .file_type()
        .is_symlink());
    assert!(temporary_files(dir.path()).is_empty());
}

/// `/dev/stdout` is a link the system resolves itself (to a pipe here): written in place.
#[test]
fn dev_stdout_is_written_in_place() {
    let (_dir, truth, estimate) = folder_with_inputs();
    let args = metric_args(
        "steps",
        &truth,
        &estimate,
        &args!["--output", "/dev/stdout"],
    );
    let through_the_option = stdout_of(&args);
    let plain = stdout_of(&metric_args("steps", &truth, &estimate, &[]));
    assert!(!plain.is_empty());
    assert_eq!(through_the_option, plain);
}

/// `-` as an output name is standard output (common practice for command-line tools): the
/// bytes are those of the plain command, and no file named `-` appears.
#[test]
fn a_dash_is_standard_output_and_makes_no_file() {
    let (dir, truth, estimate) = folder_with_inputs();
    let plain = stdout_of(&metric_args("steps", &truth, &estimate, &[]));
    let output = Command::cargo_bin("switchyard")
        .unwrap()
        .current_dir(dir.path())
        .args(metric_args("steps", &truth, &estimate, &args!["-o", "-"]))
        .output()
        .unwrap();
    assert!(output.status.success());
    assert_eq!(output.stdout, plain);
    assert!(!dir.path().join("-").exists(), "no file named -");
    // synth: the truth to standard output, the estimate to a file.
    let estimate_out = dir.path().join("made.csv");
    let output = Command::cargo_bin("switchyard")
        .unwrap()
        .current_dir(dir.path())
        .args(args![
            "synth",
            "--steps",
            "5",
            "--truth-out",
            "-",
            "--estimate-out",
            estimate_out
        ])
        .output()
        .unwrap();
    assert!(output.status.success());
    assert!(String::from_utf8(output.stdout)
        .unwrap()
        .starts_with("time,id,x,y\n"));
    assert!(estimate_out.exists());
    assert!(!dir.path().join("-").exists(), "no file named -");
    // Both to standard output would interleave two tables: refused.
    let both = switchyard(&args!["synth", "--truth-out", "-", "--estimate-out", "-"]);
    assert_refused(&both, "name the same file");
}

/// Waits up to `limit` for `condition`, checking every 20 ms.
fn wait_for(limit: Duration, mut condition: impl FnMut() -> bool) -> bool {
    let start = Instant::now();
    while start.elapsed() < limit {
        if condition() {
            return true;
        }
        std::thread::sleep(Duration::from_millis(20));
    }
    false
}

#[test]
fn a_signal_during_a_write_removes_the_temporary_file() {
    use std::os::unix::process::ExitStatusExt;
    let dir = tempfile::tempdir().unwrap();
    let target = dir.path().join("scene.csv");
    fs::write(&target, "old\n").unwrap();
    // 60,000 steps of about 50 objects: about 80 MB of CSV, written for several seconds.
    let mut child = StdCommand::cargo_bin("switchyard")
        .unwrap()
        .args([
            "synth",
            "--preset",
            "large",
            "--steps",
            "60000",
            "--truth-out",
        ])
        .arg(&target)
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    // The temporary file appears once the scene is generated; wait until it has data.
    let writing = wait_for(Duration::from_secs(120), || {
        temporary_files(dir.path())
            .iter()
            .any(|path| fs::metadata(path).is_ok_and(|m| m.len() > 0))
    });
    let pid = rustix::process::Pid::from_child(&child);
    rustix::process::kill_process(pid, rustix::process::Signal::TERM).unwrap();
    let mut status = None;
    let ended = wait_for(Duration::from_secs(30), || {
        status = child.try_wait().unwrap();
        status.is_some()
    });
    if !ended {
        let _ = child.kill();
        let _ = child.wait();
    }
    assert!(writing, "the temporary file never appeared");
    assert!(ended, "the command did not end within 30 s of SIGTERM");
    // Ended by the signal itself (POSIX: the parent sees the terminating signal).
    assert_eq!(status.unwrap().signal(), Some(15));
    assert!(temporary_files(dir.path()).is_empty());
    assert_eq!(fs::read_to_string(&target).unwrap(), "old\n");
}
