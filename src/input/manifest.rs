//! Manifests: files that list, for each tracker, sequence and run, the truth file and the
//! tracker's estimate file.
//!
//! Two forms, chosen by the file name: `.json` is JSON, anything else CSV.
//!
//! - CSV: a header row naming the columns `tracker`, `sequence`, `truth`, `estimate` and,
//!   optionally, `run`; one row per (tracker, sequence, run); other columns are ignored.
//! - JSON: an array of objects with the same keys (`run` optional; `sequence` and `run` may be
//!   strings or integers).
//!
//! Paths are relative to the manifest's folder unless absolute. Values are trimmed; `tracker`,
//! `sequence`, `truth` and `estimate` may not be empty; an empty or absent `run` means the
//! sequence has a single run. Errors name the manifest and the line and column (CSV) or the
//! entry (JSON).

use std::path::{Path, PathBuf};

use super::csv::LineIndex;
use crate::error::{Error, Location, Result};

/// One line of a manifest.
#[derive(Clone, Debug, PartialEq)]
pub struct ManifestEntry {
    /// The tracker's name.
    pub tracker: String,
    /// The sequence.
    pub sequence: String,
    /// The run, empty for a sequence with one run.
    pub run: String,
    /// The truth file, resolved against the manifest's folder.
    pub truth: PathBuf,
    /// The estimate file, resolved against the manifest's folder.
    pub estimate: PathBuf,
    /// Where the entry is: the manifest and its line (CSV) or the manifest alone (JSON).
    pub location: Location,
    /// The entry's position in the manifest, from 1.
    pub entry: usize,
    /// True when messages name the entry's position beside its line (JSON, where one line
    /// may hold several entries).
    pub numbered: bool,
}

impl ManifestEntry {
    /// An error about this entry, naming the manifest and the line or the entry number.
    pub fn error(&self, message: impl std::fmt::Display) -> Error {
        if !self.numbered {
            Error::input(self.location.clone(), message.to_string())
        } else {
            Error::input(
                self.location.clone(),
                format!("entry {}: {message}", self.entry),
            )
        }
    }
}

/// A manifest read and checked for form (not yet against the files it names).
#[derive(Clone, Debug, PartialEq)]
pub struct Manifest {
    /// The manifest as the user named it.
    pub source: String,
    /// The entries, in file order.
    pub entries: Vec<ManifestEntry>,
}

/// Reads a manifest: JSON when the name ends in `.json`, CSV otherwise.
///
/// # Errors
/// The file cannot be read, or is not a valid manifest.
pub fn read_manifest_path(path: &str) -> Result<Manifest> {
    super::csv::check_file_name(path)?;
    let text = std::fs::read(path).map_err(|error| Error::Io {
        source_name: path.to_string(),
        error,
    })?;
    let base = Path::new(path)
        .parent()
        .map(Path::to_path_buf)
        .unwrap_or_default();
    if path.to_ascii_lowercase().ends_with(".json") {
        read_manifest_json(&text, path, &base)
    } else {
        read_manifest_csv(&text, path, &base)
    }
}

fn resolve(base: &Path, value: &str) -> PathBuf {
    let path = Path::new(value);
    if path.is_absolute() {
        path.to_path_buf()
    } else {
        base.join(path)
    }
}

/// Reads a CSV manifest from bytes; relative paths are joined to `base`.
///
/// # Errors
/// Malformed CSV, a missing column, an empty required value; each names `source`, the line and
/// the column.
pub fn read_manifest_csv(text: &[u8], source: &str, base: &Path) -> Result<Manifest> {
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(true)
        .flexible(true)
        .trim(csv::Trim::All)
        .from_reader(text);
    let header = reader
        .byte_headers()
        .map_err(|e| csv_problem(e, source))?
        .clone();
    let names: Vec<String> = header
        .iter()
        .map(|f| String::from_utf8_lossy(f).trim().to_string())
        .collect();
    let find = |wanted: &str| -> Result<Option<usize>> {
        let mut found = names.iter().enumerate().filter(|(_, n)| *n == wanted);
        let first = found.next().map(|(i, _)| i);
        if let Some((second, _)) = found.next() {
            return Err(Error::input(
                Location::line(source, 1).with_column(second + 1, wanted),
                format!("the header names the column {wanted:?} twice"),
            ));
        }
        Ok(first)
    };
    let require = |wanted: &str| -> Result<usize> {
        find(wanted)?.ok_or_else(|| {
            Error::input(
                Location::line(source, 1),
                format!(
                    "a manifest needs the columns tracker, sequence, truth and estimate (and \
                     optionally run); the header has no column {wanted:?} (it has: {})",
                    names.join(", ")
                ),
            )
        })
    };
    let tracker = require("tracker")?;
    let sequence = require("sequence")?;
    let truth = require("truth")?;
    let estimate = require("estimate")?;
    let run = find("run")?;
    let mut entries = Vec::new();
    let mut record = csv::ByteRecord::new();
    // Physical line numbers whatever the line ends (the parser's own count is off after CRLF
    // and CR line ends).
    let mut lines = LineIndex::new();
    lines.feed(text);
    while reader
        .read_byte_record(&mut record)
        .map_err(|e| csv_problem(e, source))?
    {
        let line = lines.line_at(record.position().map_or(0, |p| p.byte()));
        if record.len() == 1 && record.get(0) == Some(b"") {
            continue;
        }
        if record.len() != names.len() {
            return Err(Error::input(
                Location::line(source, line),
                format!(
                    "the row has {} fields but the header has {}",
                    record.len(),
                    names.len()
                ),
            ));
        }
        let field = |position: usize, required: bool| -> Result<String> {
            let at = Location::line(source, line).with_column(position + 1, &names[position]);
            let value = std::str::from_utf8(&record[position])
                .map_err(|_| Error::input(at.clone(), "the value is not valid UTF-8"))?;
            if required && value.is_empty() {
                return Err(Error::input(at, "the value is empty"));
            }
            Ok(value.to_string())
        };
        entries.push(ManifestEntry {
            tracker: field(tracker, true)?,
            sequence: field(sequence, true)?,
            run: match run {
                Some(position) => field(position, false)?,
                None => String::new(),
            },
            truth: resolve(base, &field(truth, true)?),
            estimate: resolve(base, &field(estimate, true)?),
            location: Location::line(source, line),
            entry: entries.len() + 1,
            numbered: false,
        });
    }
    Ok(Manifest {
        source: source.to_string(),
        entries,
    })
}

fn csv_problem(error: csv::Error, source: &str) -> Error {
    let location = match error.position() {
        Some(position) => Location::line(source, position.line()),
        None => Location::file(source),
    };
    Error::input(location, format!("malformed CSV: {error}"))
}

/// The keys of a JSON manifest entry, required first.
const JSON_KEYS: [&str; 5] = ["tracker", "sequence", "truth", "estimate", "run"];

/// What a JSON value is, for messages.
fn json_kind(value: &serde_json::Value) -> &'static str {
    match value {
        serde_json::Value::Null => "null",
        serde_json::Value::Bool(_) => "a boolean",
        serde_json::Value::Number(n) if n.is_i64() || n.is_u64() => "an integer",
        serde_json::Value::Number(_) => "a decimal number",
        serde_json::Value::String(_) => "a string",
        serde_json::Value::Array(_) => "an array",
        serde_json::Value::Object(_) => "an object",
    }
}

/// The line on which each element of the top-level array begins (the text is valid JSON).
/// CR, LF and CRLF each end a line.
fn element_lines(text: &[u8]) -> Vec<u64> {
    let (mut lines, mut line, mut depth) = (Vec::new(), 1u64, 0usize);
    let (mut in_string, mut escaped, mut expecting) = (false, false, false);
    for (k, &byte) in text.iter().enumerate() {
        if byte == b'\n' || (byte == b'\r' && text.get(k + 1) != Some(&b'\n')) {
            line += 1;
        }
        if in_string {
            match byte {
                _ if escaped => escaped = false,
                b'\\' => escaped = true,
                b'"' => in_string = false,
                _ => {}
            }
            continue;
        }
        if byte.is_ascii_whitespace() {
            continue;
        }
        if depth == 1 && expecting && !matches!(byte, b']' | b',') {
            lines.push(line);
            expecting = false;
        }
        match byte {
            b'"' => in_string = true,
            b'[' | b'{' => {
                depth += 1;
                expecting = depth == 1;
            }
            b']' | b'}' => depth = depth.saturating_sub(1),
            b',' if depth == 1 => expecting = true,
            _ => {}
        }
    }
    lines
}

/// Reads a JSON manifest from bytes; relative paths are joined to `base`.
///
/// # Errors
/// Invalid JSON (naming the line and column); an entry that is not an object, lacks a key,
/// has an unknown key or a value of the wrong type or an empty value (naming the entry, its
/// line and the key).
pub fn read_manifest_json(text: &[u8], source: &str, base: &Path) -> Result<Manifest> {
    const FORM: &str = "a JSON manifest is an array of objects with the keys tracker, \
                        sequence, truth, estimate and optionally run";
    let value: serde_json::Value = serde_json::from_slice(text).map_err(|error| {
        Error::input(
            Location::line(source, error.line() as u64),
            format!(
                "column {}: {} ({FORM})",
                error.column(),
                strip_position(&error)
            ),
        )
    })?;
    let serde_json::Value::Array(items) = value else {
        return Err(Error::input(
            Location::file(source),
            format!("{FORM}; this file holds {}", json_kind(&value)),
        ));
    };
    let lines = element_lines(text);
    let mut entries = Vec::with_capacity(items.len());
    for (index, item) in items.into_iter().enumerate() {
        let entry = index + 1;
        let location = match lines.get(index) {
            Some(&line) => Location::line(source, line),
            None => Location::file(source),
        };
        let fail =
            |message: String| Error::input(location.clone(), format!("entry {entry}: {message}"));
        let serde_json::Value::Object(fields) = item else {
            return Err(fail(format!(
                "expected an object, found {} ({FORM})",
                json_kind(&item)
            )));
        };
        if let Some(key) = fields.keys().find(|key| !JSON_KEYS.contains(&key.as_str())) {
            return Err(fail(format!(
                "unknown key {} (the keys are tracker, sequence, truth, estimate and run)",
                crate::error::quoted(key)
            )));
        }
        // A value as text: strings always, integers where `numbers` allows them.
        let read = |key: &str, numbers: bool| -> Result<Option<String>> {
            match fields.get(key) {
                None | Some(serde_json::Value::Null) if key == "run" => Ok(None),
                None => Err(fail(format!("the key {key:?} is missing"))),
                Some(serde_json::Value::String(text)) => Ok(Some(text.trim().to_string())),
                Some(serde_json::Value::Number(n)) if numbers && (n.is_i64() || n.is_u64()) => {
                    Ok(Some(n.to_string()))
                }
                Some(other) => Err(fail(format!(
                    "the value of {key:?} must be {}, found {}",
                    if numbers {
                        "a string or an integer"
                    } else {
                        "a string"
                    },
                    json_kind(other)
                ))),
            }
        };
        let required = |key: &str, numbers: bool| -> Result<String> {
            let value = read(key, numbers)?.unwrap_or_default();
            if value.is_empty() {
                return Err(fail(format!("the value of {key:?} is empty")));
            }
            Ok(value)
        };
        entries.push(ManifestEntry {
            tracker: required("tracker", false)?,
            sequence: required("sequence", true)?,
            run: read("run", true)?.unwrap_or_default(),
            truth: resolve(base, &required("truth", false)?),
            estimate: resolve(base, &required("estimate", false)?),
            location: location.clone(),
            entry,
            numbered: true,
        });
    }
    Ok(Manifest {
        source: source.to_string(),
        entries,
    })
}

/// serde_json's message without its " at line L column C" tail (the location says it).
fn strip_position(error: &serde_json::Error) -> String {
    let text = error.to_string();
    match text.rfind(" at line ") {
        Some(cut) => text[..cut].to_string(),
        None => text,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn csv_manifest_resolves_paths_and_reads_runs() {
        let text = b"tracker,sequence,run,truth,estimate\nA,s1,1,t1.csv,/abs/a1.csv\nB,s1,,t1.csv,b1.csv\n";
        let manifest = read_manifest_csv(text, "m.csv", Path::new("data")).unwrap();
        let first = &manifest.entries[0];
        assert_eq!(
            (
                first.tracker.as_str(),
                first.sequence.as_str(),
                first.run.as_str()
            ),
            ("A", "s1", "1")
        );
        assert_eq!(first.truth, Path::new("data/t1.csv"));
        assert_eq!(first.estimate, Path::new("/abs/a1.csv"));
        assert_eq!(manifest.entries[1].run, "");
        assert_eq!(manifest.entries[1].location, Location::line("m.csv", 3));
    }

    #[test]
    fn csv_manifest_errors_name_line_and_column() {
        let text = b"tracker,sequence,truth,estimate\nA,s1,t.csv,\n";
        let error = read_manifest_csv(text, "m.csv", Path::new("")).unwrap_err();
        assert_eq!(
            error.to_string(),
            "m.csv, line 2, column 4 (\"estimate\"): the value is empty"
        );
        // The same empty value on physical line 3, after CRLF and after CR-only line ends.
        for text in [
            &b"tracker,sequence,truth,estimate\r\nA,s1,t.csv,a.csv\r\nB,s1,t.csv,\r\n"[..],
            &b"tracker,sequence,truth,estimate\rA,s1,t.csv,a.csv\rB,s1,t.csv,\r"[..],
        ] {
            let error = read_manifest_csv(text, "m.csv", Path::new("")).unwrap_err();
            assert_eq!(
                error.to_string(),
                "m.csv, line 3, column 4 (\"estimate\"): the value is empty"
            );
        }
        let error =
            read_manifest_csv(b"tracker,truth,estimate\n", "m.csv", Path::new("")).unwrap_err();
        assert!(
            error
                .to_string()
                .starts_with("m.csv, line 1: a manifest needs"),
            "{error}"
        );
    }

    #[test]
    fn json_entry_lines_follow_line_ends() {
        // Elements on lines 2, 2 and 5 (counting CRLF, LF and CR as one line end each), with
        // brackets, commas and escaped quotes inside strings that must not count.
        let text = b"[\r\n {\"a\": \"[,\\\"{\"}, 3,\n\r\n\r [1, 2]]";
        assert_eq!(element_lines(text), vec![2, 2, 5]);
    }

    #[test]
    fn json_manifest_reads_numbers_and_reports_positions() {
        let text = br#"[{"tracker": "A", "sequence": 3, "run": 7, "truth": "t.csv", "estimate": "a.csv"}]"#;
        let manifest = read_manifest_json(text, "m.json", Path::new("d")).unwrap();
        assert_eq!(manifest.entries[0].sequence, "3");
        assert_eq!(manifest.entries[0].run, "7");
        assert_eq!(manifest.entries[0].truth, Path::new("d/t.csv"));
        let error = read_manifest_json(b"[\n {\"tracker\": \"A\"}\n]", "m.json", Path::new(""))
            .unwrap_err();
        assert_eq!(
            error.to_string(),
            "m.json, line 2: entry 1: the key \"sequence\" is missing"
        );
        let error =
            read_manifest_json(b"[\n {\"tracker\": \"A\",\n", "m.json", Path::new("")).unwrap_err();
        assert!(
            error.to_string().starts_with("m.json, line 3: column"),
            "{error}"
        );
        let text = br#"[{"tracker": " ", "sequence": "s", "truth": "t", "estimate": "e"}]"#;
        let error = read_manifest_json(text, "m.json", Path::new("")).unwrap_err();
        assert_eq!(
            error.to_string(),
            "m.json, line 1: entry 1: the value of \"tracker\" is empty"
        );
    }
}
