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
//!
//! The reader is in three parts beside this file: `header` finds the columns the layout names,
//! `rows` turns each data row into a point of its object and the objects into trajectories, and
//! `lines` keeps the physical line of each row, holds one row to [`MAX_RECORD_BYTES`], and
//! builds the messages that point at a line.

mod header;
mod lines;
mod rows;

use std::fs::File;
use std::io::{self, Read};

use indexmap::IndexMap;

use crate::classes::PointClasses;
use crate::distance::Distance;
use crate::error::{Error, Location, Result};
use crate::trajectory::{Step, TrajectorySet};

pub(crate) use self::header::optional_column;
pub(crate) use self::lines::LineIndex;
pub(crate) use self::rows::{ObjectMap, ObjectPoints, Rows};

/// The longest row accepted, in bytes (1 MiB): a longer one is an error rather than a buffer
/// that grows with the file (a file with no line ends, or a quote that is never closed).
pub const MAX_RECORD_BYTES: u64 = 1 << 20;

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
    with_path(path, |reader, source| read_csv(reader, source, layout))
}

/// Reads a CSV file with a class column, or standard input when `path` is `-`.
///
/// # Errors
/// The file cannot be opened or read, or its content is not valid (see [`read_classed_csv`]).
pub fn read_classed_csv_path(
    path: &str,
    layout: &CsvLayout,
    class_column: &str,
) -> Result<ClassedFile> {
    with_path(path, |reader, source| {
        read_classed_csv(reader, source, layout, class_column)
    })
}

/// Opens `path` (standard input for `-`) and hands it to `read` with the name messages use.
fn with_path<T>(path: &str, read: impl FnOnce(&mut dyn Read, &str) -> Result<T>) -> Result<T> {
    if path == "-" {
        return read(&mut io::stdin().lock(), "<stdin>");
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
    read(&mut io::BufReader::with_capacity(1 << 16, file), path)
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

/// Reads trajectories from CSV text. `source` names the input in messages.
///
/// # Errors
/// Every problem names `source`, and the line and column where it applies: no header or a
/// missing column, a ragged row, invalid UTF-8, an empty id, a time that is not a step, a state
/// value that is not a finite number or that the layout's distance cannot read, two rows of one
/// id at one step.
pub fn read_csv<R: Read>(reader: R, source: &str, layout: &CsvLayout) -> Result<TrajectoryFile> {
    Ok(read_rows(reader, source, layout, None)?.0)
}

/// A trajectory file read with a class on every row.
#[derive(Clone, Debug)]
pub struct ClassedFile {
    /// The file, each id one trajectory whatever the classes of its rows.
    pub file: TrajectoryFile,
    /// The class of each point of each trajectory.
    pub classes: PointClasses,
}

/// Reads trajectories from CSV text whose column `class_column` gives each row's class (a
/// trimmed, non-empty text). An id whose rows carry several classes stays one trajectory
/// here; [`PointClasses::split`] cuts it into one piece per class. `source` names the input
/// in messages.
///
/// # Errors
/// Everything [`read_csv`] reports, and: a class column that is also the time, the id or a
/// state column, that the header lacks or names twice, a class that is empty or not UTF-8;
/// each names the file, and the line and column where it applies.
pub fn read_classed_csv<R: Read>(
    reader: R,
    source: &str,
    layout: &CsvLayout,
    class_column: &str,
) -> Result<ClassedFile> {
    let (file, classes) = read_rows(reader, source, layout, Some(class_column))?;
    Ok(ClassedFile {
        file,
        classes: classes.unwrap_or_default(),
    })
}

/// The reading behind [`read_csv`] and [`read_classed_csv`]: with a class column, the class
/// of every point too.
fn read_rows<R: Read>(
    reader: R,
    source: &str,
    layout: &CsvLayout,
    class_column: Option<&str>,
) -> Result<(TrajectoryFile, Option<PointClasses>)> {
    let mut rows = Rows::open(reader, source, layout)?;
    let class_position = match class_column {
        Some(name) => Some(class_position(&rows, layout, source, name)?),
        None => None,
    };
    let mut class_names = ClassNames::default();
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
        match class_position {
            Some(position) => class_names.push_point(&rows, position, step, &mut objects[index])?,
            None => rows.push_point(step, &mut objects[index])?,
        }
    }
    let (set, point_classes) = rows.finish_set_with_classes(objects)?;
    let classes = class_position
        .map(|_| PointClasses::new(class_names.into_names(), point_classes))
        .transpose()?;
    let file = TrajectoryFile {
        source: source.to_string(),
        state_columns: rows.columns.names,
        set,
    };
    Ok((file, classes))
}

/// The class names met while reading a file, in order of first appearance.
#[derive(Default)]
pub(crate) struct ClassNames {
    names: IndexMap<String, (), rustc_hash::FxBuildHasher>,
}

impl ClassNames {
    /// Pushes the current row's point to `points` with its class, read from the field at
    /// `position`.
    ///
    /// # Errors
    /// As [`Rows::push_point`] and [`Rows::class`]; more than 2^32 classes.
    pub(crate) fn push_point<R: Read>(
        &mut self,
        rows: &Rows<R>,
        position: usize,
        step: Step,
        points: &mut ObjectPoints,
    ) -> Result<()> {
        let class = rows.class(position)?;
        let class = match self.names.get_index_of(class) {
            Some(class) => class,
            None => self.names.insert_full(class.to_string(), ()).0,
        };
        let class = u32::try_from(class)
            .map_err(|_| Error::input(rows.at(position), "more than 2^32 classes in one file"))?;
        // Pushed after the point so that a point refused leaves no class behind.
        rows.push_point(step, points)?;
        points.classes.push(class);
        Ok(())
    }

    /// The names, in order of first appearance.
    pub(crate) fn into_names(self) -> Vec<String> {
        self.names.into_keys().collect()
    }
}

/// Where the class column is in the header.
///
/// # Errors
/// A class column that is also the time, the id or a state column, that the header lacks, or
/// that it names twice.
pub(crate) fn class_position<R: Read>(
    rows: &Rows<R>,
    layout: &CsvLayout,
    source: &str,
    name: &str,
) -> Result<usize> {
    if name.trim().is_empty() {
        return Err(Error::Parameter("the class column needs a name".into()));
    }
    if name == layout.time_column
        || name == layout.id_column
        || rows.columns.names.iter().any(|n| n == name)
    {
        return Err(Error::Parameter(format!(
            "the class column {name:?} is also the time, the id or a state column"
        )));
    }
    optional_column(&rows.names, name, source)?.ok_or_else(|| {
        Error::input(
            Location::line(source, 1),
            format!("the header has no class column {name:?}"),
        )
    })
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
