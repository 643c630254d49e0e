//! The library's error type. Every error about input names the file, and where it applies the
//! line and the column, so that a user can open the file at the right place.

use std::fmt;

/// Where in an input a problem was found.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Location {
    /// The file name as the user gave it (`-` for standard input is shown as `<stdin>`).
    pub source: String,
    /// 1-based line number in the file, when known.
    pub line: Option<u64>,
    /// 1-based column (field) position and its header name, when the problem is in one field.
    pub column: Option<(usize, String)>,
}

impl Location {
    /// A location naming only the file.
    pub fn file(source: &str) -> Self {
        Location {
            source: source.to_string(),
            line: None,
            column: None,
        }
    }

    /// A location naming a file and a line.
    pub fn line(source: &str, line: u64) -> Self {
        Location {
            source: source.to_string(),
            line: Some(line),
            column: None,
        }
    }

    /// The same location narrowed to one column.
    pub fn with_column(mut self, position: usize, name: &str) -> Self {
        self.column = Some((position, name.to_string()));
        self
    }
}

impl fmt::Display for Location {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.source)?;
        if let Some(line) = self.line {
            write!(f, ", line {line}")?;
        }
        if let Some((position, name)) = &self.column {
            write!(f, ", column {position} ({name:?})")?;
        }
        Ok(())
    }
}

/// Everything that can go wrong in switchyard's library.
#[derive(Debug, thiserror::Error)]
pub enum Error {
    /// A file could not be opened or read.
    #[error("{source_name}: {error}")]
    Io {
        /// The file as the user named it.
        source_name: String,
        /// What the operating system said.
        error: std::io::Error,
    },
    /// The content of an input is not what switchyard reads.
    #[error("{location}: {message}")]
    Input {
        /// Where the problem is.
        location: Location,
        /// What was expected and what was found.
        message: String,
    },
    /// A parameter is outside the range where the metric is defined.
    #[error("invalid parameter: {0}")]
    Parameter(String),
    /// Two inputs that must agree do not (for example their state dimensions).
    #[error("{0}")]
    Mismatch(String),
    /// The LP solver failed or returned a solution that does not pass the checks.
    #[error("LP solver: {0}")]
    Solver(String),
    /// The work would not fit the memory budget; the message says why and what to do.
    #[error("over the memory budget: {0}")]
    Budget(String),
}

impl Error {
    /// An input error at a location.
    pub fn input(location: Location, message: impl Into<String>) -> Self {
        Error::Input {
            location,
            message: message.into(),
        }
    }
}

/// The library's result type.
pub type Result<T, E = Error> = std::result::Result<T, E>;
