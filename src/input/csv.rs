//! The CSV reader: one row per object per step, with a header row.
//!
//! Columns are found by name; others are ignored. By default the time column is `time`, the id
//! column `id` and the state columns `x,y` (and `z` when the header has it). Integer times are
//! step indices; decimal timestamps need a step size, and then step = round(t / step size).
//! Fields are trimmed of surrounding white space; quoted fields, CRLF line ends and a UTF-8
//! byte-order mark are accepted. Rows of one id may come in any order. The reader streams:
//! memory grows with the number of points kept, not with the size of the text.

use std::fs::File;
use std::io::{self, Read};

use indexmap::IndexMap;

use crate::error::{Error, Location, Result};
use crate::trajectory::{Step, Trajectory, TrajectorySet};

/// The largest magnitude accepted for a step index: beyond it, steps are no longer exact
/// integers in floating point.
const MAX_STEP: f64 = 9_007_199_254_740_992.0; // 2^53

/// Which columns hold what, and how times become steps.
#[derive(Clone, Debug, PartialEq)]
pub struct CsvLayout {
    /// Name of the time column.
    pub time_column: String,
    /// Name of the id column.
    pub id_column: String,
    /// Names of the state columns, or `None` for `x,y` plus `z` when the header has it.
    pub state_columns: Option<Vec<String>>,
    /// Step size for decimal timestamps; `None` when times are integer step indices.
    pub time_step: Option<f64>,
    /// The field delimiter (a comma by default).
    pub delimiter: u8,
}

impl Default for CsvLayout {
    fn default() -> Self {
        CsvLayout {
            time_column: "time".into(),
            id_column: "id".into(),
            state_columns: None,
            time_step: None,
            delimiter: b',',
        }
    }
}

/// A trajectory set read from a file, with the names of its state columns.
#[derive(Clone, Debug)]
pub struct TrajectoryFile {
    /// The file as the user named it.
    pub source: String,
    /// The state columns, in state order.
    pub state_columns: Vec<String>,
    /// The trajectories, in order of first appearance in the file.
    pub set: TrajectorySet,
}

impl TrajectoryFile {
    /// Checks that two files can be compared: the same state columns.
    ///
    /// # Errors
    /// A different number of state columns.
    pub fn check_comparable(&self, other: &TrajectoryFile) -> Result<()> {
        if self.state_columns.len() != other.state_columns.len() {
            return Err(Error::Mismatch(format!(
                "{} has {} state columns ({}) but {} has {} ({}); both files need the same state dimensions",
                self.source,
                self.state_columns.len(),
                self.state_columns.join(","),
                other.source,
                other.state_columns.len(),
                other.state_columns.join(","),
            )));
        }
        Ok(())
    }
}

/// Reads a CSV file, or standard input when `path` is `-`.
///
/// # Errors
/// The file cannot be opened or read, or its content is not valid (see [`read_csv`]).
pub fn read_csv_path(path: &str, layout: &CsvLayout) -> Result<TrajectoryFile> {
    if path == "-" {
        return read_csv(io::stdin().lock(), "<stdin>", layout);
    }
    let io_error = |error| Error::Io {
        source_name: path.to_string(),
        error,
    };
    let metadata = std::fs::metadata(path).map_err(io_error)?;
    if metadata.is_dir() {
        return Err(Error::input(
            Location::file(path),
            "is a directory, expected a CSV file",
        ));
    }
    let file = File::open(path).map_err(io_error)?;
    read_csv(io::BufReader::with_capacity(1 << 16, file), path, layout)
}

struct Columns {
    time: usize,
    id: usize,
    state: Vec<usize>,
    names: Vec<String>,
    header_len: usize,
}

fn find_columns(header: &csv::ByteRecord, source: &str, layout: &CsvLayout) -> Result<Columns> {
    let names: Vec<String> = header
        .iter()
        .map(|field| String::from_utf8_lossy(field).trim().to_string())
        .collect();
    if names.is_empty() || (names.len() == 1 && names[0].is_empty()) {
        return Err(Error::input(
            Location::line(source, 1),
            format!(
                "no header row: the file is empty (expected a header naming the columns {:?} and {:?})",
                layout.time_column, layout.id_column
            ),
        ));
    }
    let find = |wanted: &str| names.iter().position(|name| name == wanted);
    let missing = |wanted: &str| {
        Error::input(
            Location::line(source, 1),
            format!(
                "the header has no column {wanted:?} (it has: {})",
                names.join(", ")
            ),
        )
    };
    let time = find(&layout.time_column).ok_or_else(|| missing(&layout.time_column))?;
    let id = find(&layout.id_column).ok_or_else(|| missing(&layout.id_column))?;
    let state_names: Vec<String> = match &layout.state_columns {
        Some(columns) => columns.clone(),
        None => {
            let mut default = vec!["x".to_string(), "y".to_string()];
            if find("z").is_some() {
                default.push("z".to_string());
            }
            default
        }
    };
    let mut state = Vec::with_capacity(state_names.len());
    for name in &state_names {
        state.push(find(name).ok_or_else(|| missing(name))?);
    }
    let used = [layout.time_column.as_str(), layout.id_column.as_str()]
        .into_iter()
        .chain(state_names.iter().map(String::as_str));
    for wanted in used {
        if let Some(second) = names
            .iter()
            .enumerate()
            .filter(|(_, n)| *n == wanted)
            .nth(1)
        {
            return Err(Error::input(
                Location::line(source, 1).with_column(second.0 + 1, wanted),
                format!("the header names the column {wanted:?} twice"),
            ));
        }
    }
    Ok(Columns {
        time,
        id,
        state,
        names: state_names,
        header_len: names.len(),
    })
}

/// Parses a finite number from a trimmed field.
fn parse_number(field: &[u8]) -> std::result::Result<f64, String> {
    let text = std::str::from_utf8(field).map_err(|_| "invalid UTF-8".to_string())?;
    if text.is_empty() {
        return Err("expected a number, found an empty field".into());
    }
    match text.parse::<f64>() {
        Ok(value) if value.is_finite() => Ok(value),
        Ok(_) => Err(format!(
            "expected a finite number, found {text:?} (NaN and infinite values are not accepted)"
        )),
        Err(_) => Err(format!("expected a number, found {text:?}")),
    }
}

fn parse_step(field: &[u8], time_step: Option<f64>) -> std::result::Result<Step, String> {
    if time_step.is_none() {
        if let Ok(text) = std::str::from_utf8(field) {
            if let Ok(step) = text.parse::<i64>() {
                if (step as f64).abs() <= MAX_STEP {
                    return Ok(step);
                }
            }
        }
    }
    let value = parse_number(field)?;
    let text = String::from_utf8_lossy(field);
    let step = match time_step {
        None => {
            if value.fract() != 0.0 {
                return Err(format!(
                    "the time {text} is not an integer step; give a step size for decimal timestamps"
                ));
            }
            value
        }
        Some(dt) => (value / dt).round(),
    };
    if step.abs() > MAX_STEP {
        return Err(format!(
            "the time {text} gives step {step:e}, beyond the supported range of +-2^53"
        ));
    }
    Ok(step as Step)
}

#[derive(Default)]
struct ObjectPoints {
    steps: Vec<Step>,
    lines: Vec<u64>,
    states: Vec<f64>,
}

/// Reads trajectories from CSV text. `source` names the input in messages.
///
/// # Errors
/// Every problem names `source`, and the line and column where it applies: no header or a
/// missing column, a ragged row, invalid UTF-8, an empty id, a time that is not a step, a state
/// value that is not a finite number, two rows of one id at one step.
pub fn read_csv<R: Read>(reader: R, source: &str, layout: &CsvLayout) -> Result<TrajectoryFile> {
    if let Some(dt) = layout.time_step {
        if !(dt.is_finite() && dt > 0.0) {
            return Err(Error::Parameter(format!(
                "the time step must be a positive number, got {dt}"
            )));
        }
    }
    let mut reader = csv::ReaderBuilder::new()
        .delimiter(layout.delimiter)
        .has_headers(true)
        .flexible(true)
        .trim(csv::Trim::All)
        .from_reader(reader);
    let header = reader
        .byte_headers()
        .map_err(|e| csv_error(e, source))?
        .clone();
    let columns = find_columns(&header, source, layout)?;
    let dim = columns.state.len();
    let mut objects: IndexMap<String, ObjectPoints> = IndexMap::new();
    let mut record = csv::ByteRecord::new();
    let mut last_id: Option<usize> = None;
    while reader
        .read_byte_record(&mut record)
        .map_err(|e| csv_error(e, source))?
    {
        let line = record.position().map_or(0, |p| p.line());
        if record.len() != columns.header_len {
            if record.len() == 1 && record.get(0) == Some(b"") {
                continue; // a blank line
            }
            return Err(Error::input(
                Location::line(source, line),
                format!(
                    "the row has {} fields but the header has {}",
                    record.len(),
                    columns.header_len
                ),
            ));
        }
        let at = |position: usize| {
            let name = String::from_utf8_lossy(&header[position])
                .trim()
                .to_string();
            Location::line(source, line).with_column(position + 1, &name)
        };
        let id_field = &record[columns.id];
        let id = std::str::from_utf8(id_field)
            .map_err(|_| Error::input(at(columns.id), "the id is not valid UTF-8"))?;
        if id.is_empty() {
            return Err(Error::input(at(columns.id), "the id is empty"));
        }
        let step = parse_step(&record[columns.time], layout.time_step)
            .map_err(|message| Error::input(at(columns.time), message))?;
        let index = match last_id {
            Some(index) if objects.get_index(index).map(|(k, _)| k.as_str()) == Some(id) => index,
            _ => match objects.get_index_of(id) {
                Some(index) => index,
                None => {
                    objects
                        .insert_full(id.to_string(), ObjectPoints::default())
                        .0
                }
            },
        };
        last_id = Some(index);
        let points = &mut objects[index];
        points.steps.push(step);
        points.lines.push(line);
        for &position in &columns.state {
            let value = parse_number(&record[position])
                .map_err(|message| Error::input(at(position), message))?;
            points.states.push(value);
        }
    }
    let time_name = layout.time_column.as_str();
    let mut trajectories = Vec::with_capacity(objects.len());
    for (id, points) in objects {
        trajectories.push(finish_object(id, dim, points).map_err(|(line, message)| {
            Error::input(
                Location::line(source, line).with_column(columns.time + 1, time_name),
                message,
            )
        })?);
    }
    let set = TrajectorySet::new(dim, trajectories)?;
    Ok(TrajectoryFile {
        source: source.to_string(),
        state_columns: columns.names,
        set,
    })
}

/// Sorts an object's points by step and rejects two points at one step.
fn finish_object(
    id: String,
    dim: usize,
    points: ObjectPoints,
) -> std::result::Result<Trajectory, (u64, String)> {
    let sorted = points.steps.windows(2).all(|w| w[0] < w[1]);
    let (steps, lines, states) = if sorted {
        (points.steps, points.lines, points.states)
    } else {
        let mut order: Vec<usize> = (0..points.steps.len()).collect();
        order.sort_by_key(|&i| (points.steps[i], points.lines[i]));
        let steps: Vec<Step> = order.iter().map(|&i| points.steps[i]).collect();
        let lines: Vec<u64> = order.iter().map(|&i| points.lines[i]).collect();
        let mut states = Vec::with_capacity(points.states.len());
        for &i in &order {
            states.extend_from_slice(&points.states[i * dim..(i + 1) * dim]);
        }
        (steps, lines, states)
    };
    if let Some(k) = (1..steps.len()).find(|&k| steps[k] == steps[k - 1]) {
        return Err((
            lines[k],
            format!(
                "id {id:?} has a second row at step {} (the first is on line {})",
                steps[k],
                lines[k - 1]
            ),
        ));
    }
    Ok(Trajectory::from_checked_parts(id, dim, steps, states))
}

fn csv_error(error: csv::Error, source: &str) -> Error {
    let line = error.position().map(|p| p.line());
    let location = match line {
        Some(line) => Location::line(source, line),
        None => Location::file(source),
    };
    match error.into_kind() {
        csv::ErrorKind::Io(error) => Error::Io {
            source_name: source.to_string(),
            error,
        },
        csv::ErrorKind::Utf8 { err, .. } => {
            Error::input(location, format!("invalid UTF-8 ({err})"))
        }
        other => Error::input(location, format!("malformed CSV: {other:?}")),
    }
}

/// Writes a trajectory set as CSV with the columns `time`, `id` and `state_columns`, rows
/// ordered by step, then by the set's order. The reader reads it back to the same set.
///
/// # Errors
/// A failed write, or state column names that do not match the set's dimension.
pub fn write_csv<W: std::io::Write>(
    set: &TrajectorySet,
    state_columns: &[&str],
    writer: W,
) -> Result<()> {
    if state_columns.len() != set.dim() {
        return Err(Error::Mismatch(format!(
            "{} state column names for states of {} values",
            state_columns.len(),
            set.dim()
        )));
    }
    let io_error = |error: csv::Error| Error::Io {
        source_name: "output".into(),
        error: error.into(),
    };
    let mut out = csv::Writer::from_writer(writer);
    let mut header = vec!["time", "id"];
    header.extend_from_slice(state_columns);
    out.write_record(&header).map_err(io_error)?;
    let mut rows: Vec<(Step, usize, usize)> = Vec::with_capacity(set.object_steps());
    for (object, trajectory) in set.trajectories().iter().enumerate() {
        for (point, &step) in trajectory.steps().iter().enumerate() {
            rows.push((step, object, point));
        }
    }
    rows.sort_unstable();
    let mut record = Vec::with_capacity(2 + set.dim());
    for (step, object, point) in rows {
        let trajectory = set.get(object);
        record.clear();
        record.push(step.to_string());
        record.push(trajectory.id().to_string());
        record.extend(trajectory.state(point).iter().map(|v| v.to_string()));
        out.write_record(&record).map_err(io_error)?;
    }
    out.flush().map_err(|error| Error::Io {
        source_name: "output".into(),
        error,
    })?;
    Ok(())
}
