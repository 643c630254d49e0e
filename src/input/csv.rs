//! The CSV reader: one row per object per step, with a header row.
//!
//! Columns are found by name; others are ignored. By default the time column is `time`, the id
//! column `id` and the state columns `x,y` (and `z` when the header has it). Integer times are
//! step indices; decimal timestamps need a step size, and then step = round(t / step size).
//! Fields are trimmed of surrounding white space; quoted fields, LF, CRLF and CR line ends and
//! a UTF-8 byte-order mark are accepted, and messages give physical line numbers whatever the
//! line ends (see `LineIndex`). Rows of one id may come in any order. The reader streams:
//! memory grows with the number of points kept, not with the size of the text, and one row may
//! hold at most [`MAX_RECORD_BYTES`].

use std::cell::{Cell, RefCell};
use std::collections::VecDeque;
use std::fs::File;
use std::io::{self, Read};
use std::rc::Rc;

use indexmap::IndexMap;

use crate::distance::Distance;
use crate::error::{Error, Location, Result};
use crate::trajectory::{Step, Trajectory, TrajectorySet};

/// The largest magnitude accepted for a step index: beyond it, steps are no longer exact
/// integers in floating point.
const MAX_STEP: f64 = 9_007_199_254_740_992.0; // 2^53

/// The longest row accepted, in bytes (1 MiB): a longer one is an error rather than a buffer
/// that grows with the file (a file with no line ends, or a quote that is never closed).
pub const MAX_RECORD_BYTES: u64 = 1 << 20;

/// The CSV parser's read buffer, in bytes.
pub(crate) const READ_BUFFER: usize = 1 << 16;

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
    /// The base distance the states are for, when known: each row's state is then checked
    /// with [`Distance::check_state`], and a value it cannot read (a box of negative width, a
    /// latitude beyond a pole) is an error naming the line and column.
    pub distance: Option<Distance>,
}

impl Default for CsvLayout {
    fn default() -> Self {
        CsvLayout {
            time_column: "time".into(),
            id_column: "id".into(),
            state_columns: None,
            time_step: None,
            delimiter: b',',
            distance: None,
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
    check_file_name(path)?;
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

/// Refuses an empty file name (the operating system's message for it, ": No such file", names
/// nothing).
pub(crate) fn check_file_name(path: &str) -> Result<()> {
    if path.is_empty() {
        return Err(Error::Parameter(
            "an empty file name: give a CSV file, or - for standard input".into(),
        ));
    }
    Ok(())
}

pub(crate) struct Columns {
    pub(crate) time: usize,
    pub(crate) id: usize,
    pub(crate) state: Vec<usize>,
    pub(crate) names: Vec<String>,
    pub(crate) header_len: usize,
}

pub(crate) fn find_columns(
    header: &csv::ByteRecord,
    source: &str,
    layout: &CsvLayout,
) -> Result<Columns> {
    let names: Vec<String> = header
        .iter()
        .map(|field| String::from_utf8_lossy(field).trim().to_string())
        .collect();
    let not_utf8: Vec<String> = header
        .iter()
        .enumerate()
        .filter(|(_, field)| std::str::from_utf8(field).is_err())
        .map(|(position, _)| (position + 1).to_string())
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
    let other_delimiter = [';', '\t', '|', ',']
        .into_iter()
        .find(|&c| names.len() == 1 && c != char::from(layout.delimiter) && names[0].contains(c));
    let missing = |wanted: &str| {
        if !looks_like_header(&names, other_delimiter.is_some()) {
            // Not a CSV header: its text is not quoted (an error must not print lines of
            // an arbitrary file).
            return Error::input(
                Location::line(source, 1),
                format!(
                    "the header has no column {wanted:?}, and the first line does not look like \
                     a CSV header ({}): is this a CSV file?",
                    if names.len() == 1 {
                        "one field".to_string()
                    } else {
                        format!("{} fields", names.len())
                    }
                ),
            );
        }
        let mut message = if names.len() == 1 {
            format!(
                "the header has no column {wanted:?} (it has one column, {:?})",
                names[0]
            )
        } else {
            let shown: Vec<_> = names
                .iter()
                .map(|name| crate::error::printable(name))
                .collect();
            format!(
                "the header has no column {wanted:?} (it has: {})",
                shown.join(", ")
            )
        };
        if let Some(other) = other_delimiter {
            message.push_str(&format!(
                "; the file seems to be delimited by {other:?}, not {:?}",
                char::from(layout.delimiter)
            ));
        }
        if !not_utf8.is_empty() {
            message.push_str(&format!(
                "; the name in column {} is not valid UTF-8",
                not_utf8.join(", ")
            ));
        }
        Error::input(Location::line(source, 1), message)
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

/// The longest header name quoted in a message; a longer one means the first line is not a
/// CSV header.
const MAX_QUOTED_NAME: usize = 64;

/// Whether a first line read as fields looks like a CSV header, so that its names may be
/// quoted in a message: several fields (or one holding another delimiter), none longer than
/// [`MAX_QUOTED_NAME`] characters, and at most one hidden or unreadable character per field
/// (a stray NUL or byte-order mark is shown escaped; binary data is not shown at all).
fn looks_like_header(names: &[String], other_delimiter: bool) -> bool {
    let odd = names
        .iter()
        .flat_map(|name| name.chars())
        .filter(|&c| {
            c == char::REPLACEMENT_CHARACTER || (c != '\t' && crate::error::is_hidden_char(c))
        })
        .count();
    (names.len() > 1 || other_delimiter)
        && names
            .iter()
            .all(|name| name.chars().count() <= MAX_QUOTED_NAME)
        && odd <= names.len()
}

/// Parses a finite number from a trimmed field.
pub(crate) fn parse_number(field: &[u8]) -> std::result::Result<f64, String> {
    let text = std::str::from_utf8(field)
        .map_err(|_| "expected a number, found bytes that are not valid UTF-8".to_string())?;
    if text.is_empty() {
        return Err("expected a number, found an empty field".into());
    }
    match text.parse::<f64>() {
        Ok(value) if value.is_finite() => Ok(value),
        Ok(value) if value.is_infinite() && !text.to_ascii_lowercase().contains("inf") => Err(
            format!("the number {text} is out of range (the largest is about 1.8e308)"),
        ),
        Ok(_) => Err(format!(
            "expected a finite number, found {text:?} (NaN and infinite values are not accepted)"
        )),
        Err(_) => Err(format!("expected a number, found {text:?}")),
    }
}

pub(crate) fn parse_step(
    field: &[u8],
    time_step: Option<f64>,
) -> std::result::Result<Step, String> {
    if time_step.is_none() {
        if let Some(step) = std::str::from_utf8(field).ok().and_then(integer_text) {
            // Beyond 2^53 a double no longer holds every integer: 2^53 + 1 would be read as
            // 2^53, a different step.
            if step.unsigned_abs() > MAX_STEP as u64 {
                return Err(format!(
                    "the time {step} is beyond the supported range of +-2^53 \
                     (9007199254740992): larger integers are not exact in floating point"
                ));
            }
            return Ok(step as Step);
        }
    }
    let value = parse_number(field)?;
    let text = String::from_utf8_lossy(field);
    let step = match time_step {
        None => {
            if value.fract() != 0.0 {
                return Err(format!(
                    "the time {text} is not an integer step; give a step size with --time-step \
                     for decimal timestamps"
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
    // From 2^52 on a double has no fraction bits: "4503599627370496.5" or
    // "9.007199254740993e15" would silently become a different integer.
    if time_step.is_none() && step.abs() >= MAX_STEP / 2.0 {
        return Err(format!(
            "the time {text} is too large to be read exactly as a step; write it as a plain \
             integer (at most 2^53 = 9007199254740992)"
        ));
    }
    Ok(step as Step)
}

/// An integer written in plain digits, with an optional sign and an optional fraction of
/// zeros ("12", "-3", "+7", "40.000"); `None` for anything else, or beyond `i64`.
fn integer_text(text: &str) -> Option<i64> {
    let (whole, fraction) = text.split_once('.').unwrap_or((text, ""));
    let digits = whole.strip_prefix(['-', '+']).unwrap_or(whole);
    if digits.is_empty()
        || !digits.bytes().all(|b| b.is_ascii_digit())
        || !fraction.bytes().all(|b| b == b'0')
    {
        return None;
    }
    whole.parse::<i64>().ok()
}

/// The objects read so far, by id, in order of first appearance. Ids are hashed with a fast
/// non-cryptographic hash: the reader looks one up for every row.
pub(crate) type ObjectMap = IndexMap<String, ObjectPoints, rustc_hash::FxBuildHasher>;

#[derive(Default)]
pub(crate) struct ObjectPoints {
    pub(crate) steps: Vec<Step>,
    pub(crate) lines: Vec<u64>,
    pub(crate) states: Vec<f64>,
}

/// Reads trajectories from CSV text. `source` names the input in messages.
///
/// # Errors
/// Every problem names `source`, and the line and column where it applies: no header or a
/// missing column, a ragged row, invalid UTF-8, an empty id, a time that is not a step, a state
/// value that is not a finite number or that the layout's distance cannot read, two rows of one
/// id at one step.
pub fn read_csv<R: Read>(reader: R, source: &str, layout: &CsvLayout) -> Result<TrajectoryFile> {
    let mut rows = Rows::open(reader, source, layout)?;
    let mut objects = ObjectMap::default();
    let mut last_id: Option<usize> = None;
    while rows.advance()? {
        let (id, step) = rows.id_and_step()?;
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
        rows.push_point(step, &mut objects[index])?;
    }
    let set = rows.finish_set(objects)?;
    Ok(TrajectoryFile {
        source: source.to_string(),
        state_columns: rows.columns.names,
        set,
    })
}

/// The data rows of a CSV input, read the way every reader here shares: the header and its
/// columns, physical line numbers, the row length budget, blank and ragged rows, and each row's
/// id, step and state. [`read_csv`] and the grouped reader differ only in where a row's point
/// goes.
pub(crate) struct Rows<'a, R: Read> {
    reader: csv::Reader<Budgeted<LineTracked<R>>>,
    budget: Rc<Cell<u64>>,
    lines: Rc<RefCell<LineIndex>>,
    layout: &'a CsvLayout,
    source: &'a str,
    /// The header row.
    pub(crate) header: csv::ByteRecord,
    /// The header's names, trimmed.
    pub(crate) names: Vec<String>,
    /// Where the columns the layout names are.
    pub(crate) columns: Columns,
    record: csv::ByteRecord,
    line: u64,
}

impl<'a, R: Read> Rows<'a, R> {
    /// Checks the layout, reads the header and finds the columns.
    pub(crate) fn open(reader: R, source: &'a str, layout: &'a CsvLayout) -> Result<Self> {
        if let Some(dt) = layout.time_step {
            if !(dt.is_finite() && dt > 0.0) {
                return Err(Error::Parameter(format!(
                    "the time step must be a positive number, got {dt}"
                )));
            }
        }
        let budget = Rc::new(Cell::new(RECORD_BUDGET));
        let lines = Rc::new(RefCell::new(LineIndex::new()));
        let mut reader = csv::ReaderBuilder::new()
            .delimiter(layout.delimiter)
            .has_headers(true)
            .flexible(true)
            .buffer_capacity(READ_BUFFER)
            .from_reader(Budgeted {
                inner: LineTracked {
                    inner: reader,
                    index: Rc::clone(&lines),
                },
                budget: Rc::clone(&budget),
            });
        let header = reader
            .byte_headers()
            .map_err(|e| read_error(e, source, 1))?
            .clone();
        let columns = find_columns(&header, source, layout)?;
        let names = header
            .iter()
            .map(|field| String::from_utf8_lossy(field).trim().to_string())
            .collect();
        Ok(Rows {
            reader,
            budget,
            lines,
            layout,
            source,
            header,
            names,
            columns,
            record: csv::ByteRecord::new(),
            line: 1,
        })
    }

    /// Moves to the next data row, skipping blank lines; false at the end of the input.
    ///
    /// # Errors
    /// A row longer than the budget, malformed CSV, or a row whose field count differs from the
    /// header's.
    pub(crate) fn advance(&mut self) -> Result<bool> {
        loop {
            let start = self.reader.position().byte();
            self.budget.set(RECORD_BUDGET);
            let more = self
                .reader
                .read_byte_record(&mut self.record)
                .map_err(|e| read_error(e, self.source, self.lines.borrow_mut().line_at(start)))?;
            if !more {
                return Ok(false);
            }
            self.line = self
                .lines
                .borrow_mut()
                .line_at(self.record.position().map_or(start, |p| p.byte()));
            if self.record.len() == self.columns.header_len {
                return Ok(true);
            }
            if self.record.len() == 1 && self.field(0).is_empty() {
                continue; // a blank line
            }
            // A quote left open swallows the rest of the file into one short row.
            let at_end = matches!(
                self.reader.read_byte_record(&mut csv::ByteRecord::new()),
                Ok(false)
            );
            return Err(ragged(
                &self.record,
                &self.header,
                &self.columns,
                self.source,
                self.line,
                at_end,
            ));
        }
    }

    /// The physical line of the current row.
    pub(crate) fn line(&self) -> u64 {
        self.line
    }

    /// The current row's field at `position` (trimmed).
    pub(crate) fn field(&self, position: usize) -> &[u8] {
        // Trimmed here rather than by the parser, which would copy every record to trim it.
        self.record[position].trim_ascii()
    }

    /// The location of a field of the current row.
    pub(crate) fn at(&self, position: usize) -> Location {
        Location::line(self.source, self.line).with_column(position + 1, &self.names[position])
    }

    /// The current row's id and step.
    ///
    /// # Errors
    /// An id that is empty or not UTF-8, a time that is not a step.
    pub(crate) fn id_and_step(&self) -> Result<(&str, Step)> {
        let id_column = self.columns.id;
        let id = std::str::from_utf8(self.field(id_column))
            .map_err(|_| Error::input(self.at(id_column), "the id is not valid UTF-8"))?;
        if id.is_empty() {
            return Err(Error::input(self.at(id_column), "the id is empty"));
        }
        let time_column = self.columns.time;
        let step = parse_step(self.field(time_column), self.layout.time_step)
            .map_err(|message| Error::input(self.at(time_column), message))?;
        Ok((id, step))
    }

    /// Adds the current row's point at `step` to an object.
    ///
    /// # Errors
    /// A state value that is not a finite number or that the layout's distance cannot read.
    pub(crate) fn push_point(&self, step: Step, points: &mut ObjectPoints) -> Result<()> {
        let dim = self.columns.state.len();
        for &position in &self.columns.state {
            let value = parse_number(self.field(position))
                .map_err(|message| Error::input(self.at(position), message))?;
            points.states.push(value);
        }
        if let Some(distance) = &self.layout.distance {
            let state = &points.states[points.states.len() - dim..];
            if let Err((index, message)) = distance.check_state(state) {
                let position = self.columns.state[index];
                points.states.truncate(points.states.len() - dim);
                return Err(Error::input(self.at(position), message));
            }
        }
        points.steps.push(step);
        points.lines.push(self.line);
        Ok(())
    }

    /// Turns the objects read into a set; two rows of one object at one step are an error
    /// naming the second row's line and the time column.
    pub(crate) fn finish_set(&self, objects: ObjectMap) -> Result<TrajectorySet> {
        let dim = self.columns.state.len();
        let time_name = self.layout.time_column.as_str();
        let mut trajectories = Vec::with_capacity(objects.len());
        for (id, points) in objects {
            trajectories.push(finish_object(id, dim, points).map_err(|(line, message)| {
                Error::input(
                    Location::line(self.source, line).with_column(self.columns.time + 1, time_name),
                    message,
                )
            })?);
        }
        TrajectorySet::new(dim, trajectories)
    }
}

/// Sorts an object's points by step and rejects two points at one step.
pub(crate) fn finish_object(
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

/// The bytes the parser may pull while reading one row: the row itself plus one buffer of
/// read-ahead.
pub(crate) const RECORD_BUDGET: u64 = MAX_RECORD_BYTES + READ_BUFFER as u64;

/// A reader that fails once more than the budget set before each row has been read.
pub(crate) struct Budgeted<R> {
    pub(crate) inner: R,
    pub(crate) budget: Rc<Cell<u64>>,
}

/// Line numbers of the rows the CSV parser returns, counted from the bytes it reads.
///
/// The parser's own line count is one short after each CRLF and never moves on CR-only line
/// ends, and the byte offset it gives a row is where it began to read for it: possibly at the
/// LF of the previous CRLF or before blank lines. So this index keeps the offset and line
/// number of each line holding something other than line ends, within the bytes read ahead
/// and not yet asked for; a row's line is that of the first such line at or after its offset.
/// CR, LF and CRLF each end a line.
pub(crate) struct LineIndex {
    /// Bytes seen so far.
    position: u64,
    /// The line number at `position`.
    line: u64,
    /// Nothing but line ends seen on the current line yet.
    at_line_start: bool,
    /// The last byte seen was a CR (a following LF ends no other line).
    after_cr: bool,
    /// (offset of the first byte, line number) of lines holding more than line ends.
    starts: VecDeque<(u64, u64)>,
}

impl LineIndex {
    /// An index at the start of a file.
    pub(crate) fn new() -> Self {
        LineIndex {
            position: 0,
            line: 1,
            at_line_start: true,
            after_cr: false,
            starts: VecDeque::new(),
        }
    }

    pub(crate) fn feed(&mut self, bytes: &[u8]) {
        let mut k = 0;
        while k < bytes.len() {
            if self.at_line_start {
                let byte = bytes[k];
                match byte {
                    b'\n' if self.after_cr => self.after_cr = false,
                    b'\n' | b'\r' => {
                        self.line += 1;
                        self.after_cr = byte == b'\r';
                    }
                    _ => {
                        self.starts.push_back((self.position + k as u64, self.line));
                        self.at_line_start = false;
                        self.after_cr = false;
                    }
                }
                if self.at_line_start {
                    k += 1;
                    continue;
                }
            }
            // Inside a line: jump to its end.
            match memchr::memchr2(b'\n', b'\r', &bytes[k..]) {
                None => k = bytes.len(),
                Some(offset) => {
                    let byte = bytes[k + offset];
                    self.line += 1;
                    self.at_line_start = true;
                    self.after_cr = byte == b'\r';
                    k += offset + 1;
                }
            }
        }
        self.position += bytes.len() as u64;
    }

    /// The line of the row the parser placed at byte `offset`. Offsets asked for must not
    /// decrease: the lines before are forgotten.
    pub(crate) fn line_at(&mut self, offset: u64) -> u64 {
        while self
            .starts
            .front()
            .is_some_and(|&(start, _)| start < offset)
        {
            self.starts.pop_front();
        }
        self.starts.front().map_or(self.line, |&(_, line)| line)
    }
}

/// A reader that feeds every byte it passes on to a [`LineIndex`].
pub(crate) struct LineTracked<R> {
    pub(crate) inner: R,
    pub(crate) index: Rc<RefCell<LineIndex>>,
}

impl<R: Read> Read for LineTracked<R> {
    fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
        let read = self.inner.read(buf)?;
        self.index.borrow_mut().feed(&buf[..read]);
        Ok(read)
    }
}

/// The error a [`Budgeted`] reader returns when a row exceeds its budget.
#[derive(Debug)]
struct RowTooLong;

impl std::fmt::Display for RowTooLong {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "row too long")
    }
}

impl std::error::Error for RowTooLong {}

impl<R: Read> Read for Budgeted<R> {
    fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
        let left = self.budget.get();
        if left == 0 && !buf.is_empty() {
            return Err(io::Error::new(io::ErrorKind::InvalidData, RowTooLong));
        }
        let take = buf.len().min(usize::try_from(left).unwrap_or(usize::MAX));
        let read = self.inner.read(&mut buf[..take])?;
        self.budget.set(left - read as u64);
        Ok(read)
    }
}

/// The error for a row whose field count differs from the header's.
pub(crate) fn ragged(
    record: &csv::ByteRecord,
    header: &csv::ByteRecord,
    columns: &Columns,
    source: &str,
    line: u64,
    at_end: bool,
) -> Error {
    let fields = record.len();
    let expected = columns.header_len;
    let location = Location::line(source, line);
    if at_end
        && record
            .iter()
            .next_back()
            .is_some_and(|f| f.contains(&b'\n'))
    {
        return Error::input(
            location,
            "a quoted field opened on this line is not closed before the end of the file",
        );
    }
    if fields < expected {
        let name = String::from_utf8_lossy(&header[fields]).trim().to_string();
        return Error::input(
            location.with_column(fields + 1, &name),
            format!("the row ends after {fields} fields but the header has {expected}"),
        );
    }
    Error::input(
        location,
        format!("the row has {fields} fields but the header has {expected}"),
    )
}

/// Maps an error met while reading the row that starts on `line`.
pub(crate) fn read_error(error: csv::Error, source: &str, line: u64) -> Error {
    if let csv::ErrorKind::Io(io_error) = error.kind() {
        if io_error
            .get_ref()
            .is_some_and(|inner| inner.is::<RowTooLong>())
        {
            return Error::input(
                Location::line(source, line),
                format!(
                    "the row starting here is longer than {} MiB (is a line end or a closing quote missing?)",
                    MAX_RECORD_BYTES >> 20
                ),
            );
        }
    }
    csv_error(error, source)
}

fn csv_error(error: csv::Error, source: &str) -> Error {
    let location = match error.position() {
        Some(position) => Location::line(source, position.line()),
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
