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

/// Most problems printed for one file before the rest are counted.
pub const MAX_LINES_PER_FILE: usize = 20;

/// The lines to print for `problems`: at most `per_file` of each file, in
/// order, then one line `path: and N more like this` for a file that has
/// more. Problems with no file position count as one more "file".
///
/// A file with a US date in every row of a long history has one problem a
/// row; its first lines show the pattern, and the rest would only bury the
/// other messages.
///
/// ```
/// use skewbook::error::{capped, Location, Problem};
/// let at = |line| Problem::at(
///     Location { path: "q.csv".into(), line, column: Some(1), header: None },
///     "expected a date",
/// );
/// let problems: Vec<Problem> = (2..=31).map(at).collect();
/// let lines = capped(&problems, 20);
/// assert_eq!(lines.len(), 21);
/// assert_eq!(lines[19], "q.csv:21:1: expected a date");
/// assert_eq!(lines[20], "q.csv: and 10 more like this");
/// ```
pub fn capped(problems: &[Problem], per_file: usize) -> Vec<String> {
    let mut log = CappedProblems::new(per_file);
    for p in problems {
        log.push(p);
    }
    log.lines()
}

/// Problems kept as they come, as [`capped`] prints them: the lines of at
/// most `per_file` problems of each file and a count of the rest. For
/// problems too many to keep (the warnings of a long history read date by
/// date).
///
/// ```
/// use skewbook::error::{capped, CappedProblems, Location, Problem};
/// let at = |line| Problem::at(
///     Location { path: "q.csv".into(), line, column: None, header: None },
///     "expected a date",
/// );
/// let problems: Vec<Problem> = (2..=31).map(at).collect();
/// let mut log = CappedProblems::new(20);
/// problems.iter().for_each(|p| log.push(p));
/// assert_eq!(log.lines(), capped(&problems, 20));
/// assert_eq!(log.count(), 30);
/// ```
#[derive(Debug, Clone, Default)]
pub struct CappedProblems {
    per_file: usize,
    /// Files in order of first appearance: (path, lines, problems not shown).
    files: Vec<(Option<String>, Vec<String>, usize)>,
}

impl CappedProblems {
    /// Keeps at most `per_file` lines of each file.
    pub fn new(per_file: usize) -> Self {
        CappedProblems {
            per_file,
            files: Vec::new(),
        }
    }

    /// Takes one more problem.
    pub fn push(&mut self, p: &Problem) {
        let path = p.location.as_ref().map(|l| l.path.as_str());
        let i = match self.files.iter().position(|f| f.0.as_deref() == path) {
            Some(i) => i,
            None => {
                self.files.push((path.map(str::to_string), Vec::new(), 0));
                self.files.len() - 1
            }
        };
        let f = &mut self.files[i];
        if f.1.len() < self.per_file {
            f.1.push(p.to_string());
        } else {
            f.2 += 1;
        }
    }

    /// Problems taken.
    pub fn count(&self) -> usize {
        self.files.iter().map(|f| f.1.len() + f.2).sum()
    }

    /// The lines to print: each file's, then `path: and N more like this`
    /// for a file that has more.
    pub fn lines(&self) -> Vec<String> {
        let mut out = Vec::new();
        for (path, lines, more) in &self.files {
            out.extend(lines.iter().cloned());
            if *more > 0 {
                out.push(match path {
                    Some(p) => format!("{p}: and {more} more like this"),
                    None => format!("and {more} more like this"),
                });
            }
        }
        out
    }
}

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

/// Every value, or one error with the problems of every failure (the first
/// failure's kind), in order: how a history reports all its bad dates at once.
///
/// # Errors
/// As described.
pub fn collect_all<T>(results: Vec<Result<T>>) -> Result<Vec<T>> {
    let mut out = Vec::with_capacity(results.len());
    let mut failure: Option<Error> = None;
    for r in results {
        match r {
            Ok(v) => out.push(v),
            Err(e) => match &mut failure {
                None => failure = Some(e),
                Some(f) => f.problems.extend(e.problems),
            },
        }
    }
    match failure {
        Some(e) => Err(e),
        None => Ok(out),
    }
}
