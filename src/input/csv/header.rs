//! The header row: where the columns the layout names are, and the messages for a header that
//! lacks one (quoting the header's names only when the line looks like a CSV header).

use super::CsvLayout;
use crate::error::{Error, Location, Result};

/// Where the columns a layout names are in the header.
pub(crate) struct Columns {
    pub(crate) time: usize,
    pub(crate) id: usize,
    pub(crate) state: Vec<usize>,
    pub(crate) names: Vec<String>,
    pub(crate) header_len: usize,
}

/// Finds the time, id and state columns of `layout` in `header`.
///
/// # Errors
/// An empty header, a column the layout names that the header lacks, or a column named twice.
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

/// The position of an optional column (a group or class column), if the header has it once.
///
/// # Errors
/// The header names the column twice: the error points at the second.
pub(crate) fn optional_column(
    names: &[String],
    wanted: &str,
    source: &str,
) -> Result<Option<usize>> {
    let mut positions = names
        .iter()
        .enumerate()
        .filter(|(_, name)| name.as_str() == wanted)
        .map(|(position, _)| position);
    let first = positions.next();
    if let Some(second) = positions.next() {
        return Err(Error::input(
            Location::line(source, 1).with_column(second + 1, wanted),
            format!("the header names the column {wanted:?} twice"),
        ));
    }
    Ok(first)
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
