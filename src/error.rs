//! Errors that say where, what, and how to fix.
//!
//! Every problem found in an input file carries a [`Location`] (file, 1-based
//! line, 1-based column and the column's header name) and a message of the
//! form "expected X, found Y". Readers collect *every* problem in a file
//! before returning, so one run shows the user the whole list.

use std::fmt;

/// What went wrong, for callers that want to match on it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ErrorKind {
    /// A file could not be opened or read.
    Io,
    /// An input file broke the format or the rules of the contract.
    InvalidInput,
    /// A quote that no admissible model parameter can reproduce (for
    /// example an index upfront above what the recovery allows).
    Unfittable,
    /// Command-line values that make no sense together.
    Usage,
}

/// Where in an input file a problem sits.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Location {
    /// Path as the user typed it (`-` for standard input).
    pub path: String,
    /// 1-based line number.
    pub line: u64,
    /// 1-based column number (the field index), when the problem is in one cell.
    pub column: Option<usize>,
    /// Header name of that column.
    pub header: Option<String>,
}

impl fmt::Display for Location {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}:{}", self.path, self.line)?;
        if let Some(c) = self.column {
            write!(f, ":{c}")?;
        }
        write!(f, ":")?;
        if let Some(h) = &self.header {
            write!(f, " column \"{h}\":")?;
        }
        Ok(())
    }
}

/// One problem: where it is (when it is in a file) and what it is.
#[derive(Debug, Clone, PartialEq)]
pub struct Problem {
    /// Where the problem sits, when it is in a file.
    pub location: Option<Location>,
    /// What was expected and what was found.
    pub message: String,
}

impl Problem {
    /// A problem with no file position.
    pub fn new(message: impl Into<String>) -> Self {
        Problem {
            location: None,
            message: message.into(),
        }
    }

    /// A problem at a position in a file.
    pub fn at(location: Location, message: impl Into<String>) -> Self {
        Problem {
            location: Some(location),
            message: message.into(),
        }
    }
}

impl fmt::Display for Problem {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match &self.location {
            Some(loc) => write!(f, "{loc} {}", self.message),
            None => write!(f, "{}", self.message),
        }
    }
}

/// The library's error: a kind and one or more located problems.
#[derive(Debug, Clone, PartialEq)]
pub struct Error {
    /// What went wrong.
    pub kind: ErrorKind,
    /// Every problem found (at least one).
    pub problems: Vec<Problem>,
}

impl Error {
    /// An error with a single problem.
    pub fn new(kind: ErrorKind, problem: Problem) -> Self {
        Error {
            kind,
            problems: vec![problem],
        }
    }

    /// An error with a single problem that has no file position.
    pub fn msg(kind: ErrorKind, message: impl Into<String>) -> Self {
        Error::new(kind, Problem::new(message))
    }

    /// The exit status the command line uses for this error (always 2:
    /// bad input or usage).
    pub fn exit_code(&self) -> u8 {
        2
    }
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        for (i, p) in self.problems.iter().enumerate() {
            if i > 0 {
                writeln!(f)?;
            }
            write!(f, "{p}")?;
        }
        Ok(())
    }
}

impl std::error::Error for Error {}

/// Result with the library's [`Error`].
pub type Result<T> = std::result::Result<T, Error>;

/// `x` with at most `digits` significant digits (at least 1), for messages:
/// plain notation from 1e-4 to below 1e6, exponent form outside; trailing
/// zeros dropped.
///
/// ```
/// use skewbook::error::significant;
/// assert_eq!(significant(55.123456789, 6), "55.1235");
/// assert_eq!(significant(1e100, 6), "1e100");
/// assert_eq!(significant(0.000123456789, 6), "0.000123457");
/// assert_eq!(significant(-2.5e-7, 6), "-2.5e-7");
/// assert_eq!(significant(40.0, 6), "40");
/// assert_eq!(significant(999999.7, 6), "1e6");
/// ```
pub fn significant(x: f64, digits: usize) -> String {
    if !x.is_finite() {
        return format!("{x}");
    }
    if x == 0.0 {
        return "0".to_string();
    }
    let digits = digits.max(1);
    // Round once, in exponent form, so the exponent is that of the rounded value.
    let e_form = format!("{:.*e}", digits - 1, x);
    let (mantissa, exponent) = e_form.split_once('e').expect("exponent form");
    let exponent: i32 = exponent.parse().expect("exponent");
    let trim = |s: &str| -> String {
        if s.contains('.') {
            s.trim_end_matches('0').trim_end_matches('.').to_string()
        } else {
            s.to_string()
        }
    };
    if (-4..6).contains(&exponent) {
        let decimals = (digits as i32 - 1 - exponent).max(0) as usize;
        let rounded: f64 = e_form.parse().expect("round trip");
        trim(&format!("{rounded:.decimals$}"))
    } else {
        format!("{}e{exponent}", trim(mantissa))
    }
}
