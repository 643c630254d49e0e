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
    /// An error in one tracker's case of a comparison. Shown as the error it carries, with the
    /// tracker and the case put before the message of a parameter, mismatch or solver error
    /// (the others name their file, or say what to do, on their own).
    #[error("{}", Placed { tracker, case, error })]
    InCase {
        /// The tracker's name.
        tracker: String,
        /// The case as messages name it (`sequence "s" run "r"`, or `the only case`).
        case: String,
        /// What went wrong there.
        error: Box<Error>,
    },
}

/// The message of [`Error::InCase`].
struct Placed<'a> {
    tracker: &'a str,
    case: &'a str,
    error: &'a Error,
}

impl fmt::Display for Placed<'_> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let at = |message: &str| format!("tracker {:?}, {}: {message}", self.tracker, self.case);
        match self.error {
            Error::Parameter(m) => Error::Parameter(at(m)).fmt(f),
            Error::Mismatch(m) => Error::Mismatch(at(m)).fmt(f),
            Error::Solver(m) => Error::Solver(at(m)).fmt(f),
            other => other.fmt(f),
        }
    }
}

impl Error {
    /// The error itself, or the one an [`Error::InCase`] carries (what kind of failure it is,
    /// for example for an exit code).
    pub fn underlying(&self) -> &Error {
        match self {
            Error::InCase { error, .. } => error.underlying(),
            other => other,
        }
    }

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

/// Whether a character would act on a terminal (or reorder the text around it) rather than
/// show as itself: C0 controls (among them ESC, which opens ANSI escape sequences), DEL, C1
/// controls, the bidirectional controls, line and paragraph separators, and the byte-order
/// mark (invisible when it is not the first character of a file).
pub fn is_hidden_char(c: char) -> bool {
    matches!(c,
        '\u{0}'..='\u{1f}'
        | '\u{7f}'..='\u{9f}'
        | '\u{61c}'
        | '\u{200e}' | '\u{200f}'
        | '\u{2028}'..='\u{202e}'
        | '\u{2066}'..='\u{2069}'
        | '\u{feff}')
}

/// Text from an input (an id, a name, a header) made safe to show on a terminal: every
/// character of [`is_hidden_char`] is written as an escape, `\t`, `\n`, `\r`, `\0` or `\u{hex}`
/// (so ESC is `\u{1b}`); everything else is unchanged, backslashes included (a file name like
/// `C:\data` stays readable; the JSON and CSV outputs carry the exact text). Borrowed when
/// nothing needed escaping.
pub fn printable(text: &str) -> std::borrow::Cow<'_, str> {
    if !text.chars().any(is_hidden_char) {
        return std::borrow::Cow::Borrowed(text);
    }
    let mut shown = String::with_capacity(text.len() + 8);
    for c in text.chars() {
        match c {
            '\t' => shown.push_str("\\t"),
            '\n' => shown.push_str("\\n"),
            '\r' => shown.push_str("\\r"),
            '\0' => shown.push_str("\\0"),
            c if is_hidden_char(c) => shown.push_str(&format!("\\u{{{:x}}}", u32::from(c))),
            c => shown.push(c),
        }
    }
    std::borrow::Cow::Owned(shown)
}

/// [`printable`] in double quotes: how messages quote a name from an input.
pub fn quoted(text: &str) -> String {
    format!("\"{}\"", printable(text))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn printable_escapes_what_a_terminal_would_act_on() {
        // ESC [ 3 1 m is the ANSI (ECMA-48) "red foreground" sequence; U+202E is the
        // right-to-left override of the Unicode bidirectional algorithm (UAX #9).
        assert_eq!(printable("a\u{1b}[31mb"), "a\\u{1b}[31mb");
        assert_eq!(
            printable("x\u{202e}y\u{7f}\0\t\r\n"),
            "x\\u{202e}y\\u{7f}\\0\\t\\r\\n"
        );
        assert_eq!(printable("\u{feff}time"), "\\u{feff}time");
        assert!(matches!(
            printable("C:\\data\\é"),
            std::borrow::Cow::Borrowed(_)
        ));
        assert_eq!(quoted("id\0"), "\"id\\0\"");
    }

    #[test]
    fn an_error_in_a_case_reads_as_the_message_with_its_place() {
        let placed = |error: Error| Error::InCase {
            tracker: "T\"1".to_string(),
            case: "sequence \"s\" run \"2\"".to_string(),
            error: Box::new(error),
        };
        // The tracker is quoted as Rust's `{:?}` quotes a string (its quote escaped).
        assert_eq!(
            placed(Error::Parameter("the cut-off is too large".into())).to_string(),
            "invalid parameter: tracker \"T\\\"1\", sequence \"s\" run \"2\": the cut-off is too large"
        );
        assert_eq!(
            placed(Error::Solver("no optimum".into())).to_string(),
            "LP solver: tracker \"T\\\"1\", sequence \"s\" run \"2\": no optimum"
        );
        assert_eq!(
            placed(Error::Mismatch("dimensions differ".into())).to_string(),
            "tracker \"T\\\"1\", sequence \"s\" run \"2\": dimensions differ"
        );
        // A budget error says what to do on its own and is shown unchanged.
        let budget = placed(Error::Budget("give more".into()));
        assert_eq!(budget.to_string(), "over the memory budget: give more");
        assert!(matches!(budget.underlying(), Error::Budget(_)));
        // Not a source: the error chain printed by the command would repeat the message.
        assert!(std::error::Error::source(&budget).is_none());
    }
}
