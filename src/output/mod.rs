//! Printers: one report value feeds the table, CSV and JSON writers.
//!
//! Every command builds a report (a serde type) that implements [`Report`];
//! [`write_report`] prints it in the chosen [`Format`] to any `impl Write`,
//! so tests print into a `Vec<u8>`.
//!
//! - **table**: aligned columns for a terminal, numbers right-aligned, one
//!   section per trade date (and maturity) with a title line;
//! - **csv**: one flat table with a header row, plain numbers in file units,
//!   empty cells where a value does not exist, so a spreadsheet opens it as is;
//! - **json**: the report's serde form, pretty-printed; fractions for rates,
//!   probabilities and correlations, `null` where a value does not exist.
//!
//! # The output guard: no NaN, no infinity, no null for a number
//!
//! Values that may not exist are `Option`s; every other number must be
//! finite. [`render`] checks this on every report before a byte is written
//! ([`check_report`]): the report's serde form is walked field by field
//! ([`check_finite`], which sees an `f64` before serde_json would turn a NaN
//! into `null`), and the table or CSV text about to be printed is scanned for
//! a cell that reads `NaN` or `inf` (a number derived while printing, such as
//! `100 x` of a huge value). A non-finite number is a bug: in a debug build
//! (the test suite) it fails a `debug_assert!`; in a release build
//! [`write_report`] returns [`WriteError::NotFinite`] naming the field, the
//! command line prints it and exits 2, and nothing is printed on standard
//! output.
//!
//! Output is rendered in full before it is written, so a write error (a
//! broken pipe included) keeps its [`io::ErrorKind`].
//!
//! # A report in parts
//!
//! A long history's report is printed a few hundred dates at a time by
//! [`PartWriter`], with the bytes [`write_report`] prints for the whole.
//! The guard then checks each part before it is written: a non-finite
//! number stops the printing there, after the parts before it.

mod finite;
mod parts;

pub use finite::{check_finite, NonFinite};
pub use parts::PartWriter;

pub use crate::error::significant;
use serde::Serialize;
use std::io::{self, Write};

/// Output format chosen on the command line.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Format {
    /// Aligned text for a terminal (default).
    #[default]
    Table,
    /// Comma-separated values with a header row.
    Csv,
    /// Pretty-printed JSON.
    Json,
}

/// A rectangular block of text cells with a header row.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Table {
    /// Title line printed above the table (table format only).
    pub title: Option<String>,
    /// Column headers.
    pub headers: Vec<String>,
    /// Rows of cells, each as long as `headers`.
    pub rows: Vec<Vec<String>>,
    /// Lines printed under the table (table format only): notes, flags.
    pub notes: Vec<String>,
}

impl Table {
    /// An empty table with these headers.
    pub fn new<S: AsRef<str>>(headers: &[S]) -> Self {
        Table {
            title: None,
            headers: headers.iter().map(|h| h.as_ref().to_string()).collect(),
            rows: Vec::new(),
            notes: Vec::new(),
        }
    }

    /// Sets the title.
    pub fn with_title(mut self, title: impl Into<String>) -> Self {
        self.title = Some(title.into());
        self
    }

    /// Appends a row.
    pub fn push(&mut self, row: Vec<String>) {
        debug_assert_eq!(row.len(), self.headers.len());
        self.rows.push(row);
    }
}

/// A command's result, printable in every format.
pub trait Report: Serialize {
    /// The sections printed in table format, in order.
    fn sections(&self) -> Vec<Table>;
    /// The single flat table printed in CSV format.
    fn csv(&self) -> Table;
}

/// Why a report was not printed.
#[derive(Debug)]
pub enum WriteError {
    /// A number in the report is NaN or infinite (a bug: see the module
    /// docs); nothing was written.
    NotFinite(NonFinite),
    /// The writer failed; a broken pipe keeps [`io::ErrorKind::BrokenPipe`].
    Io(io::Error),
}

impl std::fmt::Display for WriteError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            WriteError::NotFinite(n) => write!(f, "output guard: {n}"),
            WriteError::Io(e) => write!(f, "writing output: {e}"),
        }
    }
}

impl std::error::Error for WriteError {}

impl From<io::Error> for WriteError {
    fn from(e: io::Error) -> Self {
        WriteError::Io(e)
    }
}

impl From<NonFinite> for WriteError {
    fn from(e: NonFinite) -> Self {
        WriteError::NotFinite(e)
    }
}

/// Checks that `report` holds only finite numbers and that the text
/// `format` would print shows none that is not: the guard of [`render`],
/// without its debug assertion.
///
/// # Errors
/// The first non-finite number, naming the field (JSON path) or the table,
/// column and row where it would have been printed.
pub fn check_report<R: Report>(report: &R, format: Format) -> Result<(), NonFinite> {
    check_finite(report)?;
    match format {
        Format::Table => report
            .sections()
            .iter()
            .try_for_each(|t| check_table(t, "table")),
        Format::Csv => check_table(&report.csv(), "CSV"),
        Format::Json => Ok(()),
    }
}

/// The text of `report` in `format`, after the output guard.
///
/// # Errors
/// [`WriteError::NotFinite`] when the guard finds a NaN or an infinity
/// (after failing a `debug_assert!` in a debug build).
pub fn render<R: Report>(report: &R, format: Format) -> Result<Vec<u8>, WriteError> {
    guard(report, format)?;
    let mut buf = Vec::new();
    match format {
        Format::Table => {
            for (i, t) in report.sections().iter().enumerate() {
                if i > 0 {
                    writeln!(buf)?;
                }
                write_table(&mut buf, t)?;
            }
        }
        Format::Csv => write_csv(&mut buf, &report.csv())?,
        Format::Json => {
            serde_json::to_writer_pretty(&mut buf, report).map_err(io::Error::other)?;
            writeln!(buf)?;
        }
    }
    Ok(buf)
}

/// The output guard of [`render`]: [`check_report`], failing a
/// `debug_assert!` in a debug build.
fn guard<R: Report>(report: &R, format: Format) -> Result<(), NonFinite> {
    let checked = check_report(report, format);
    debug_assert!(
        checked.is_ok(),
        "output guard: {}",
        checked
            .as_ref()
            .map_or_else(|e| e.to_string(), |_| String::new())
    );
    checked
}

/// Prints `report` in `format`: [`render`], then one write.
///
/// # Errors
/// [`WriteError::NotFinite`] from the output guard (nothing is written);
/// [`WriteError::Io`] for any error of the writer, a broken pipe included
/// (the binary treats that one as success).
pub fn write_report<R: Report>(
    w: &mut dyn Write,
    report: &R,
    format: Format,
) -> Result<(), WriteError> {
    let text = render(report, format)?;
    w.write_all(&text)?;
    Ok(())
}

/// A cell, title or note that would print a non-finite number: a word
/// `NaN`, `inf` or `-inf` (as Rust formats them), wherever it stands.
/// The readers refuse names and labels with such a word
/// (`input::trades`, `input::pools`, `input::history`), so that text read
/// from a file never trips this scan.
///
/// ```
/// use skewbook::output::shows_non_finite;
/// assert_eq!(shows_non_finite("0.1..NaN"), Some("NaN"));
/// assert_eq!(shows_non_finite("infra-1"), None);
/// ```
pub fn shows_non_finite(text: &str) -> Option<&'static str> {
    let mut words = text.split(|c: char| !(c.is_ascii_alphanumeric() || c == '-' || c == '+'));
    words.find_map(|w| match w.trim_start_matches(['-', '+']) {
        "NaN" => Some("NaN"),
        "inf" => Some("inf"),
        _ => None,
    })
}

/// Scans the text a table would print.
fn check_table(t: &Table, what: &str) -> Result<(), NonFinite> {
    let title = t.title.as_deref().map_or(String::new(), |s| {
        format!(" \"{}\"", s.lines().next().unwrap_or(""))
    });
    let found = |place: String, value: &str| NonFinite {
        field: format!("{what}{title}, {place}"),
        value: value.to_string(),
    };
    if let Some(v) = t.title.as_deref().and_then(shows_non_finite) {
        return Err(found("title".into(), v));
    }
    for (i, row) in t.rows.iter().enumerate() {
        for (j, cell) in row.iter().enumerate() {
            if let Some(v) = shows_non_finite(cell) {
                let column = t.headers.get(j).map_or("?", |h| h.as_str());
                return Err(found(format!("column \"{column}\", row {}", i + 1), v));
            }
        }
    }
    for note in &t.notes {
        if let Some(v) = shows_non_finite(note) {
            return Err(found(format!("note \"{note}\""), v));
        }
    }
    Ok(())
}

fn looks_numeric(s: &str) -> bool {
    let t = s.trim_start_matches(['-', '+']);
    t.starts_with(|c: char| c.is_ascii_digit() || c == '.')
}

/// Writes an aligned text table: text left-aligned, numbers right-aligned.
pub fn write_table(w: &mut dyn Write, t: &Table) -> io::Result<()> {
    if let Some(title) = &t.title {
        writeln!(w, "{title}")?;
    }
    let n = t.headers.len();
    let mut width: Vec<usize> = t.headers.iter().map(|h| h.chars().count()).collect();
    for r in &t.rows {
        for (j, c) in r.iter().enumerate().take(n) {
            width[j] = width[j].max(c.chars().count());
        }
    }
    let numeric: Vec<bool> = (0..n)
        .map(|j| {
            t.rows
                .iter()
                .filter(|r| r[j] != "-" && !r[j].is_empty())
                .all(|r| looks_numeric(&r[j]))
        })
        .collect();
    let line = |cells: &[String]| -> String {
        let mut s = String::new();
        for (j, c) in cells.iter().enumerate().take(n) {
            if j > 0 {
                s.push_str("  ");
            }
            let pad = width[j] - c.chars().count();
            if numeric[j] {
                s.push_str(&" ".repeat(pad));
                s.push_str(c);
            } else {
                s.push_str(c);
                if j + 1 < n {
                    s.push_str(&" ".repeat(pad));
                }
            }
        }
        s.trim_end().to_string()
    };
    writeln!(w, "{}", line(&t.headers))?;
    for r in &t.rows {
        writeln!(w, "{}", line(r))?;
    }
    for note in &t.notes {
        writeln!(w, "{note}")?;
    }
    Ok(())
}

/// Writes a CSV table with a header row (RFC 4180 quoting).
pub fn write_csv(w: &mut dyn Write, t: &Table) -> io::Result<()> {
    let mut wr = csv::Writer::from_writer(w);
    wr.write_record(&t.headers).map_err(csv_io)?;
    write_csv_rows(&mut wr, t)
}

/// Writes a CSV table's rows (no header) as [`write_csv`] writes them.
fn write_csv_rows(wr: &mut csv::Writer<&mut dyn Write>, t: &Table) -> io::Result<()> {
    for r in &t.rows {
        wr.write_record(r).map_err(csv_io)?;
    }
    wr.flush()
}

/// A CSV error as an I/O error, keeping the kind of one that came from the writer.
fn csv_io(e: csv::Error) -> io::Error {
    match e.into_kind() {
        csv::ErrorKind::Io(e) => e,
        other => io::Error::other(format!("{other:?}")),
    }
}

/// `x` with `decimals` digits after the point; `-0.000` printed as `0.000`.
pub fn fixed(x: f64, decimals: usize) -> String {
    let s = format!("{x:.decimals$}");
    if s.starts_with('-') && s[1..].chars().all(|c| c == '0' || c == '.') {
        s[1..].to_string()
    } else {
        s
    }
}

/// Like [`fixed`], or `missing` when the value does not exist.
pub fn fixed_or(x: Option<f64>, decimals: usize, missing: &str) -> String {
    x.map_or_else(|| missing.to_string(), |v| fixed(v, decimals))
}

/// A number for CSV: shortest round-trip representation (exponent form
/// below 1e-4 in magnitude, so tiny errors stay short), empty when missing.
pub fn csv_num(x: Option<f64>) -> String {
    match x {
        None => String::new(),
        Some(v) if v != 0.0 && v.abs() < 1e-4 => format!("{v:e}"),
        Some(v) => format!("{v}"),
    }
}

/// A fraction as a percentage for display, rounded to 1e-9 percent so a
/// bound read as 7 and stored as 0.07 prints as 7 again.
pub fn pct(x: f64) -> f64 {
    (x * 100.0 * 1e9).round() / 1e9
}

/// A number in scientific notation with `digits` significant digits after the point.
pub fn sci(x: f64, digits: usize) -> String {
    format!("{x:.digits$e}")
}

/// Wraps `text` at `width` columns, continuation lines indented by `indent`.
pub fn wrap(text: &str, width: usize, indent: usize) -> Vec<String> {
    let mut lines = Vec::new();
    let mut cur = String::new();
    for word in text.split_whitespace() {
        if !cur.is_empty() && cur.chars().count() + 1 + word.chars().count() > width {
            lines.push(std::mem::take(&mut cur));
            cur = " ".repeat(indent);
        } else if !cur.is_empty() && !cur.ends_with(' ') {
            cur.push(' ');
        }
        cur.push_str(word);
    }
    if !cur.trim().is_empty() {
        lines.push(cur);
    }
    lines
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn significant_keeps_at_most_the_digits_asked_for() {
        for (x, want) in [
            (60.0, "60"),
            (0.4, "0.4"),
            (-1.0, "-1"),
            (123456.0, "123456"),
            (1234567.0, "1.23457e6"),
            (0.0001, "0.0001"),
            (0.00001234, "1.234e-5"),
            (4.9e-324, "4.94066e-324"),
            (f64::MAX, "1.79769e308"),
            (99.9 / 100.0, "0.999"),
            (0.30000000000000004, "0.3"),
            (f64::NAN, "NaN"),
        ] {
            assert_eq!(significant(x, 6), want, "{x:e}");
        }
        assert_eq!(significant(1.26, 2), "1.3");
        assert_eq!(significant(7.0, 0), "7");
    }

    struct Poisoned(f64);

    impl Serialize for Poisoned {
        fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
            use serde::ser::SerializeStruct;
            let mut st = s.serialize_struct("Poisoned", 1)?;
            st.serialize_field("value", &self.0)?;
            st.end()
        }
    }

    impl Report for Poisoned {
        fn sections(&self) -> Vec<Table> {
            let mut t = Table::new(&["what", "value"]).with_title("poisoned");
            t.push(vec!["value".into(), fixed(100.0 * self.0, 2)]);
            vec![t]
        }
        fn csv(&self) -> Table {
            self.sections().remove(0)
        }
    }

    /// The guard names the field in every format, and a number that only
    /// overflows while printing (100 x 1e307) is caught in the text.
    #[test]
    fn guard_names_the_field_in_every_format() {
        for format in [Format::Table, Format::Csv, Format::Json] {
            let e = check_report(&Poisoned(f64::NAN), format).unwrap_err();
            assert_eq!((e.field.as_str(), e.value.as_str()), ("value", "NaN"));
        }
        assert!(check_report(&Poisoned(1e307), Format::Json).is_ok());
        let e = check_report(&Poisoned(f64::MAX), Format::Table).unwrap_err();
        assert_eq!(e.field, "table \"poisoned\", column \"value\", row 1");
        assert_eq!(e.value, "inf");
        let e = check_report(&Poisoned(-f64::MAX), Format::Csv).unwrap_err();
        assert_eq!(e.field, "CSV \"poisoned\", column \"value\", row 1");
        assert!(render(&Poisoned(0.25), Format::Table).is_ok());
    }

    /// In a debug build (the test suite) a non-finite number fails the
    /// guard's debug assertion ...
    #[cfg(debug_assertions)]
    #[test]
    #[should_panic(expected = "output guard: value: expected a finite number, found NaN")]
    fn guard_is_a_debug_assertion_in_tests() {
        let _ = write_report(&mut Vec::new(), &Poisoned(f64::NAN), Format::Json);
    }

    /// ... and in a release build an error naming the field, with nothing written.
    #[cfg(not(debug_assertions))]
    #[test]
    fn guard_is_an_error_in_release() {
        let mut out = Vec::new();
        let e = write_report(&mut out, &Poisoned(f64::NAN), Format::Json).unwrap_err();
        assert!(matches!(e, WriteError::NotFinite(ref n) if n.field == "value"));
        assert!(out.is_empty());
    }

    #[test]
    fn text_scan_finds_rust_spellings_only() {
        assert_eq!(shows_non_finite("0.1..NaN"), Some("NaN"));
        assert_eq!(shows_non_finite("[inf, -inf]"), Some("inf"));
        assert_eq!(shows_non_finite("-inf"), Some("inf"));
        assert_eq!(shows_non_finite("info: 1e-5, 0.3 infinite"), None);
    }
}
