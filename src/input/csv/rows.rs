//! The data rows: each row's id, step and state read from its fields, the points gathered by
//! object, and the objects turned into trajectories.

use std::cell::{Cell, RefCell};
use std::io::Read;
use std::rc::Rc;

use indexmap::IndexMap;

use super::header::{find_columns, Columns};
use super::lines::{
    ragged, read_error, Budgeted, LineIndex, LineTracked, READ_BUFFER, RECORD_BUDGET,
};
use super::CsvLayout;
use crate::error::{Error, Location, Result};
use crate::trajectory::{Step, Trajectory, TrajectorySet};

/// The largest magnitude accepted for a step index: beyond it, steps are no longer exact
/// integers in floating point.
const MAX_STEP: f64 = 9_007_199_254_740_992.0; // 2^53

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

/// Reads a step from a trimmed time field: an integer step index, or with `time_step` a decimal
/// timestamp rounded to the nearest step.
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

/// The points of one object in reading order: their steps, the lines they were read from (for
/// messages), their states, `dim` values each, and, when the input has a class column, the
/// class of each point (an index into the classes met so far; empty otherwise).
#[derive(Default)]
pub(crate) struct ObjectPoints {
    pub(crate) steps: Vec<Step>,
    pub(crate) lines: Vec<u64>,
    pub(crate) states: Vec<f64>,
    pub(crate) classes: Vec<u32>,
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

    /// The current row's class, read from the field at `position`.
    ///
    /// # Errors
    /// A class that is empty or not UTF-8.
    pub(crate) fn class(&self, position: usize) -> Result<&str> {
        let class = std::str::from_utf8(self.field(position))
            .map_err(|_| Error::input(self.at(position), "the class is not valid UTF-8"))?;
        if class.is_empty() {
            return Err(Error::input(
                self.at(position),
                "the class is empty (every row needs one when a class column is given)",
            ));
        }
        Ok(class)
    }

    /// Turns the objects read into a set, with the class of each point of each trajectory in
    /// step order (empty lists when no classes were read); two rows of one object at one step
    /// are an error naming the second row's line and the time column.
    pub(crate) fn finish_set_with_classes(
        &self,
        objects: ObjectMap,
    ) -> Result<(TrajectorySet, Vec<Vec<u32>>)> {
        let dim = self.columns.state.len();
        let time_name = self.layout.time_column.as_str();
        let mut trajectories = Vec::with_capacity(objects.len());
        let mut classes = Vec::with_capacity(objects.len());
        for (id, points) in objects {
            let (trajectory, point_classes) =
                finish_object(id, dim, points).map_err(|(line, message)| {
                    Error::input(
                        Location::line(self.source, line)
                            .with_column(self.columns.time + 1, time_name),
                        message,
                    )
                })?;
            trajectories.push(trajectory);
            classes.push(point_classes);
        }
        Ok((TrajectorySet::new(dim, trajectories)?, classes))
    }
}

/// Sorts an object's points by step and rejects two points at one step; the points' classes
/// (if any) come back in the same order.
pub(crate) fn finish_object(
    id: String,
    dim: usize,
    points: ObjectPoints,
) -> std::result::Result<(Trajectory, Vec<u32>), (u64, String)> {
    let sorted = points.steps.windows(2).all(|w| w[0] < w[1]);
    let (steps, lines, states, classes) = if sorted {
        (points.steps, points.lines, points.states, points.classes)
    } else {
        let mut order: Vec<usize> = (0..points.steps.len()).collect();
        order.sort_by_key(|&i| (points.steps[i], points.lines[i]));
        let steps: Vec<Step> = order.iter().map(|&i| points.steps[i]).collect();
        let lines: Vec<u64> = order.iter().map(|&i| points.lines[i]).collect();
        let mut states = Vec::with_capacity(points.states.len());
        for &i in &order {
            states.extend_from_slice(&points.states[i * dim..(i + 1) * dim]);
        }
        let classes = if points.classes.is_empty() {
            Vec::new()
        } else {
            order.iter().map(|&i| points.classes[i]).collect()
        };
        (steps, lines, states, classes)
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
    Ok((
        Trajectory::from_checked_parts(id, dim, steps, states),
        classes,
    ))
}
