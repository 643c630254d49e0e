//! Reading one CSV file that holds several sequences and Monte Carlo runs, told apart by group
//! columns.
//!
//! The file is read like any trajectory CSV ([`super::csv`]: same columns, same checks, same
//! messages), with up to two more columns: the sequence (default name `sequence`) and the run
//! (default name `run`). A group column is used when the header has it. Every row belongs to
//! the group named by its values; ids are independent between groups (the object `7` of
//! sequence `a` and the object `7` of sequence `b` are two objects). Group values are trimmed
//! strings and may not be empty. Groups are returned in the order of their first row.

use std::fs::File;
use std::io::{self, Read};

use indexmap::IndexMap;

use super::csv::{
    class_position, optional_column, ClassNames, CsvLayout, ObjectMap, ObjectPoints, Rows,
};
use crate::classes::PointClasses;
use crate::error::{Error, Location, Result};
use crate::trajectory::TrajectorySet;

/// The names of the group columns.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct GroupColumns {
    /// The column naming the sequence of each row.
    pub sequence: String,
    /// The column naming the Monte Carlo run of each row.
    pub run: String,
}

impl Default for GroupColumns {
    /// `sequence` and `run`.
    fn default() -> Self {
        GroupColumns {
            sequence: "sequence".into(),
            run: "run".into(),
        }
    }
}

/// The rows of one (sequence, run) group, as a trajectory set.
#[derive(Clone, Debug)]
pub struct Group {
    /// The sequence, empty when the file has no sequence column.
    pub sequence: String,
    /// The run, empty when the file has no run column.
    pub run: String,
    /// The line of the group's first row.
    pub first_line: u64,
    /// The group's trajectories, in order of first appearance.
    pub set: TrajectorySet,
    /// The class of each point of `set`, when the file was read with a class column.
    pub classes: Option<PointClasses>,
}

/// A file read with its groups.
#[derive(Clone, Debug)]
pub struct GroupedFile {
    /// The file as the user named it.
    pub source: String,
    /// The state columns, in state order.
    pub state_columns: Vec<String>,
    /// True when the header has the sequence column.
    pub has_sequence: bool,
    /// True when the header has the run column.
    pub has_run: bool,
    /// The groups, in order of their first row. A file with no rows has none.
    pub groups: Vec<Group>,
}

/// Reads a grouped CSV file, or standard input when `path` is `-`.
///
/// # Errors
/// The file cannot be opened or read, or its content is not valid (see [`read_grouped_csv`]).
pub fn read_grouped_csv_path(
    path: &str,
    layout: &CsvLayout,
    columns: &GroupColumns,
) -> Result<GroupedFile> {
    read_grouped_classed_csv_path(path, layout, columns, None)
}

/// [`read_grouped_csv_path`], with the class of every row from the column `class_column` when
/// it is given (each group then has its [`Group::classes`]).
///
/// # Errors
/// As [`read_grouped_csv_path`], and the class errors of
/// [`read_classed_csv`](super::read_classed_csv).
pub fn read_grouped_classed_csv_path(
    path: &str,
    layout: &CsvLayout,
    columns: &GroupColumns,
    class_column: Option<&str>,
) -> Result<GroupedFile> {
    if path == "-" {
        return read_grouped(io::stdin().lock(), "<stdin>", layout, columns, class_column);
    }
    super::csv::check_file_name(path)?;
    let io_error = |error| Error::Io {
        source_name: path.to_string(),
        error,
    };
    if std::fs::metadata(path).map_err(io_error)?.is_dir() {
        return Err(Error::input(
            Location::file(path),
            "is a directory, expected a CSV file",
        ));
    }
    let file = File::open(path).map_err(io_error)?;
    read_grouped(
        io::BufReader::with_capacity(1 << 16, file),
        path,
        layout,
        columns,
        class_column,
    )
}

/// The objects of one group while reading.
struct GroupPoints {
    first_line: u64,
    objects: ObjectMap,
}

/// Reads trajectories grouped by sequence and run from CSV text. `source` names the input in
/// messages.
///
/// # Errors
/// Everything [`read_csv`](super::csv::read_csv) reports, and: group column names that clash
/// with the other columns or appear twice in the header, an empty or non-UTF-8 group value;
/// each names the file, the line and the column.
pub fn read_grouped_csv<R: Read>(
    reader: R,
    source: &str,
    layout: &CsvLayout,
    groups: &GroupColumns,
) -> Result<GroupedFile> {
    read_grouped(reader, source, layout, groups, None)
}

/// [`read_grouped_csv`], with classes when `class_column` is given.
fn read_grouped<R: Read>(
    reader: R,
    source: &str,
    layout: &CsvLayout,
    groups: &GroupColumns,
    class_column: Option<&str>,
) -> Result<GroupedFile> {
    check_group_names(layout, groups)?;
    if let Some(name) = class_column {
        if name == groups.sequence || name == groups.run {
            return Err(Error::Parameter(format!(
                "the class column {name:?} is also a sequence or run column"
            )));
        }
    }
    let mut rows = Rows::open(reader, source, layout)?;
    // The state columns are known only now when they are the defaults (x, y and maybe z).
    for (what, name) in [("sequence", &groups.sequence), ("run", &groups.run)] {
        if rows.columns.names.contains(name) {
            return Err(Error::Parameter(format!(
                "the {what} column {name:?} is also a state column"
            )));
        }
    }
    let sequence_column = optional_column(&rows.names, &groups.sequence, source)?;
    let run_column = optional_column(&rows.names, &groups.run, source)?;
    let class_column = match class_column {
        Some(name) => Some(class_position(&rows, layout, source, name)?),
        None => None,
    };
    let mut class_names = ClassNames::default();
    let mut found: IndexMap<(String, String), GroupPoints> = IndexMap::new();
    let mut last: Option<(usize, usize)> = None;
    while rows.advance()? {
        let group_value = |position: Option<usize>| -> Result<&str> {
            let Some(position) = position else {
                return Ok("");
            };
            let value = std::str::from_utf8(rows.field(position)).map_err(|_| {
                Error::input(rows.at(position), "the group value is not valid UTF-8")
            })?;
            if value.is_empty() {
                return Err(Error::input(rows.at(position), "the group value is empty"));
            }
            Ok(value)
        };
        let sequence = group_value(sequence_column)?;
        let run = group_value(run_column)?;
        let (id, step) = rows.id_and_step()?;
        let group = match last {
            Some((group, _))
                if found
                    .get_index(group)
                    .is_some_and(|((s, r), _)| s == sequence && r == run) =>
            {
                group
            }
            _ => {
                last = None;
                let key = (sequence.to_string(), run.to_string());
                match found.get_index_of(&key) {
                    Some(group) => group,
                    None => {
                        let points = GroupPoints {
                            first_line: rows.line(),
                            objects: ObjectMap::default(),
                        };
                        found.insert_full(key, points).0
                    }
                }
            }
        };
        let objects = &mut found[group].objects;
        let index = match last {
            Some((g, index))
                if g == group && objects.get_index(index).map(|(k, _)| k.as_str()) == Some(id) =>
            {
                index
            }
            _ => match objects.get_index_of(id) {
                Some(index) => index,
                None => {
                    objects
                        .insert_full(id.to_string(), ObjectPoints::default())
                        .0
                }
            },
        };
        last = Some((group, index));
        match class_column {
            Some(position) => class_names.push_point(&rows, position, step, &mut objects[index])?,
            None => rows.push_point(step, &mut objects[index])?,
        }
    }
    let names = class_names.into_names();
    let mut result = Vec::with_capacity(found.len());
    for ((sequence, run), points) in found {
        let (set, point_classes) = rows.finish_set_with_classes(points.objects)?;
        let classes = class_column
            .map(|_| PointClasses::new(names.clone(), point_classes))
            .transpose()?;
        result.push(Group {
            sequence,
            run,
            first_line: points.first_line,
            set,
            classes,
        });
    }
    Ok(GroupedFile {
        source: source.to_string(),
        state_columns: rows.columns.names.clone(),
        has_sequence: sequence_column.is_some(),
        has_run: run_column.is_some(),
        groups: result,
    })
}

/// Refuses group column names that are empty, equal, or name a column already used.
fn check_group_names(layout: &CsvLayout, groups: &GroupColumns) -> Result<()> {
    for (what, name) in [("sequence", &groups.sequence), ("run", &groups.run)] {
        if name.trim().is_empty() {
            return Err(Error::Parameter(format!("the {what} column needs a name")));
        }
        let mut used = vec![&layout.time_column, &layout.id_column];
        if let Some(state) = &layout.state_columns {
            used.extend(state.iter());
        }
        if used.contains(&name) {
            return Err(Error::Parameter(format!(
                "the {what} column {name:?} is also the time, id or a state column"
            )));
        }
    }
    if groups.sequence == groups.run {
        return Err(Error::Parameter(format!(
            "the sequence and run columns have one name, {:?}",
            groups.sequence
        )));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn read(text: &str) -> Result<GroupedFile> {
        read_grouped_csv(
            text.as_bytes(),
            "g.csv",
            &CsvLayout::default(),
            &GroupColumns::default(),
        )
    }

    #[test]
    fn rows_split_by_sequence_and_run() {
        let file = read(
            "sequence,run,time,id,x,y\n\
             a,1,0,p,0,0\n\
             a,2,0,p,1,0\n\
             b,1,0,p,2,0\n\
             a,1,1,p,0,1\n",
        )
        .unwrap();
        assert!(file.has_sequence && file.has_run);
        let keys: Vec<(&str, &str, u64, usize)> = file
            .groups
            .iter()
            .map(|g| {
                (
                    g.sequence.as_str(),
                    g.run.as_str(),
                    g.first_line,
                    g.set.object_steps(),
                )
            })
            .collect();
        assert_eq!(keys, [("a", "1", 2, 2), ("a", "2", 3, 1), ("b", "1", 4, 1)]);
        // The same id in two groups is two objects.
        assert_eq!(file.groups[0].set.get(0).state_at(1), Some(&[0.0, 1.0][..]));
    }

    #[test]
    fn classes_are_read_per_group_and_split_by_class() {
        let text = "sequence,time,id,x,y,kind\n\
                    a,0,p,0,0,car\n\
                    b,0,p,1,0,van\n\
                    a,1,p,0,1,van\n";
        let file = read_grouped(
            text.as_bytes(),
            "g.csv",
            &CsvLayout::default(),
            &GroupColumns::default(),
            Some("kind"),
        )
        .unwrap();
        assert_eq!(file.groups.len(), 2);
        // Group a: p is a car at step 0 and a van at step 1, cut into two pieces.
        let a = file.groups[0].classes.as_ref().unwrap();
        assert_eq!(a.mixed(), 1);
        let pieces = a.split(&file.groups[0].set).unwrap();
        let steps: Vec<(&str, &[i64])> = pieces
            .iter()
            .map(|(class, set)| (class.as_str(), set.get(0).steps()))
            .collect();
        assert_eq!(steps, [("car", &[0][..]), ("van", &[1][..])]);
        // Group b: one van only.
        let b = file.groups[1].classes.as_ref().unwrap();
        let pieces = b.split(&file.groups[1].set).unwrap();
        assert_eq!(pieces.len(), 1);
        assert_eq!(pieces[0].0, "van");
        // Without the option no classes are read.
        assert!(read(text).unwrap().groups[0].classes.is_none());
        // An empty class names the line and column.
        let error = read_grouped(
            &b"sequence,time,id,x,y,kind\na,0,p,0,0,\n"[..],
            "g.csv",
            &CsvLayout::default(),
            &GroupColumns::default(),
            Some("kind"),
        )
        .unwrap_err();
        assert!(
            error
                .to_string()
                .starts_with("g.csv, line 2, column 6 (\"kind\")"),
            "{error}"
        );
    }

    #[test]
    fn a_file_without_group_columns_is_one_group() {
        let file = read("time,id,x,y\n0,p,0,0\n1,p,0,1\n").unwrap();
        assert!(!file.has_sequence && !file.has_run);
        assert_eq!(file.groups.len(), 1);
        assert_eq!(
            (
                file.groups[0].sequence.as_str(),
                file.groups[0].run.as_str()
            ),
            ("", "")
        );
        let empty = read("time,id,x,y\n").unwrap();
        assert!(empty.groups.is_empty());
    }

    #[test]
    fn errors_name_file_line_and_column() {
        let error = read("sequence,time,id,x,y\na,0,p,0,0\n,1,p,0,0\n").unwrap_err();
        assert_eq!(
            error.to_string(),
            "g.csv, line 3, column 1 (\"sequence\"): the group value is empty"
        );
        let error = read("sequence,time,id,x,y\na,0,p,0,0\na,0,p,0,1\n").unwrap_err();
        assert!(
            error
                .to_string()
                .starts_with("g.csv, line 3, column 2 (\"time\")"),
            "{error}"
        );
        let error = read("run,time,id,x,y,run\n").unwrap_err();
        assert!(error.to_string().contains("column 6"), "{error}");
        let error = read("run,time,id,x,y\n1,0,p,zero,0\n").unwrap_err();
        assert_eq!(
            error.to_string(),
            "g.csv, line 2, column 4 (\"x\"): expected a number, found \"zero\""
        );
    }

    #[test]
    fn line_numbers_count_physical_lines_whatever_the_line_ends() {
        // Line 4 holds the bad value after a blank line, with CRLF line ends.
        let error = read("sequence,time,id,x,y\r\na,0,p,0,0\r\n\r\na,1,p,bad,0\r\n").unwrap_err();
        assert_eq!(
            error.to_string(),
            "g.csv, line 4, column 4 (\"x\"): expected a number, found \"bad\""
        );
    }

    #[test]
    fn a_group_column_cannot_be_a_default_state_column() {
        let columns = GroupColumns {
            sequence: "sequence".into(),
            run: "x".into(),
        };
        let error = read_grouped_csv(
            &b"time,id,x,y\n0,p,0,0\n"[..],
            "g.csv",
            &CsvLayout::default(),
            &columns,
        );
        assert!(matches!(error, Err(Error::Parameter(_))), "{error:?}");
    }

    #[test]
    fn clashing_names_are_refused() {
        let columns = GroupColumns {
            sequence: "id".into(),
            run: "run".into(),
        };
        let error = read_grouped_csv(
            &b"time,id,x,y\n"[..],
            "g.csv",
            &CsvLayout::default(),
            &columns,
        );
        assert!(matches!(error, Err(Error::Parameter(_))));
    }
}
