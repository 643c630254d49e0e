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

use serde::Deserialize;

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
}

impl ManifestEntry {
    /// An error about this entry, naming the manifest and the line or the entry number.
    pub fn error(&self, message: impl std::fmt::Display) -> Error {
        if self.location.line.is_some() {
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

/// A string or an integer in a JSON manifest.
#[derive(Deserialize)]
#[serde(untagged)]
enum Name {
    Text(String),
    Number(i64),
}

impl Name {
    fn text(self) -> String {
        match self {
            Name::Text(text) => text.trim().to_string(),
            Name::Number(number) => number.to_string(),
        }
    }
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct JsonEntry {
    tracker: String,
    sequence: Name,
    #[serde(default)]
    run: Option<Name>,
    truth: String,
    estimate: String,
}

/// Reads a JSON manifest from bytes; relative paths are joined to `base`.
///
/// # Errors
/// Invalid JSON or an entry of the wrong form (naming the line and column), an empty required
/// value (naming the entry).
pub fn read_manifest_json(text: &[u8], source: &str, base: &Path) -> Result<Manifest> {
    let raw: Vec<JsonEntry> = serde_json::from_slice(text).map_err(|error| {
        Error::input(
            Location::line(source, error.line() as u64),
            format!(
                "column {}: {} (a JSON manifest is an array of objects with the keys tracker, \
                 sequence, truth, estimate and optionally run)",
                error.column(),
                strip_position(&error)
            ),
        )
    })?;
    let mut entries = Vec::with_capacity(raw.len());
    for (index, item) in raw.into_iter().enumerate() {
        let entry = index + 1;
        let location = Location::file(source);
        let required = |key: &str, value: String| -> Result<String> {
            let value = value.trim().to_string();
            if value.is_empty() {
                return Err(Error::input(
                    location.clone(),
                    format!("entry {entry}: the value of {key:?} is empty"),
                ));
            }
            Ok(value)
        };
        entries.push(ManifestEntry {
            tracker: required("tracker", item.tracker)?,
            sequence: required("sequence", item.sequence.text())?,
            run: item.run.map(Name::text).unwrap_or_default(),
            truth: resolve(base, &required("truth", item.truth)?),
            estimate: resolve(base, &required("estimate", item.estimate)?),
            location: location.clone(),
            entry,
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
    fn json_manifest_reads_numbers_and_reports_positions() {
        let text = br#"[{"tracker": "A", "sequence": 3, "run": 7, "truth": "t.csv", "estimate": "a.csv"}]"#;
        let manifest = read_manifest_json(text, "m.json", Path::new("d")).unwrap();
        assert_eq!(manifest.entries[0].sequence, "3");
        assert_eq!(manifest.entries[0].run, "7");
        assert_eq!(manifest.entries[0].truth, Path::new("d/t.csv"));
        let error = read_manifest_json(b"[\n {\"tracker\": \"A\"}\n]", "m.json", Path::new(""))
            .unwrap_err();
        assert!(
            error.to_string().starts_with("m.json, line 2: column"),
            "{error}"
        );
        let text = br#"[{"tracker": " ", "sequence": "s", "truth": "t", "estimate": "e"}]"#;
        let error = read_manifest_json(text, "m.json", Path::new("")).unwrap_err();
        assert_eq!(
            error.to_string(),
            "m.json: entry 1: the value of \"tracker\" is empty"
        );
    }
}
