//! Line bookkeeping beneath the CSV parser: the physical line of each row whatever the line ends,
//! the byte budget that holds one row to [`MAX_RECORD_BYTES`], and the errors that point at a
//! line (a row too long, a ragged row, malformed CSV).

use std::cell::{Cell, RefCell};
use std::collections::VecDeque;
use std::io::{self, Read};
use std::rc::Rc;

use super::header::Columns;
use super::MAX_RECORD_BYTES;
use crate::error::{Error, Location};

/// The CSV parser's read buffer, in bytes.
pub(crate) const READ_BUFFER: usize = 1 << 16;

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
