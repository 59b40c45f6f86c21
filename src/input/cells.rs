//! The CSV core every reader shares: text to records with their true line
//! numbers, a header mapped to known columns, and one row's cells checked
//! with located "expected X, found Y" problems.
//!
//! A reader names its columns once (a `&'static [&str]`, referred to by
//! index), maps the header with [`Header::read`], says which columns it
//! needs with [`Header::require`], and checks each record with a [`Row`].
//! Every problem goes to one list that [`invalid`] sorts by line and
//! column, so a file's problems are all reported at once, in order.
//!
//! # Conventions every reader gets from here
//!
//! - A UTF-8 byte-order mark at the start is accepted.
//! - Blank lines are not rows and are skipped; line numbers still count
//!   them. Lines end at `\n`, `\r\n` or a lone `\r`; a quoted cell may run
//!   over several lines and its row is numbered by its first line.
//! - Cells are trimmed of surrounding whitespace.
//! - Dates are strict ISO 8601 `YYYY-MM-DD`; numbers are finite decimals
//!   (`nan`, `inf` and overflowing exponents are refused).
//! - A cell is quoted back as written (escaped, cut after 60 characters).

use crate::error::{Error, ErrorKind, Location, Problem};
use chrono::NaiveDate;
use std::io::Read;

/// Longest cell text quoted back in a message, in characters.
pub(crate) const QUOTE_CHARS: usize = 60;

/// One non-blank CSV record and the 1-based line it starts on.
pub(crate) struct Record {
    /// 1-based line of the record's first character.
    pub line: u64,
    /// The record's cells, untrimmed.
    pub cells: csv::StringRecord,
}

/// Every non-blank record of `text` with its 1-based line, after a leading
/// byte-order mark is dropped. A CSV syntax error (only possible in
/// pathological input) is reported and ends the reading.
pub(crate) fn records(text: &str, path: &str, problems: &mut Vec<Problem>) -> Vec<Record> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let mut reader = RecordReader::new(text.as_bytes());
    let mut out = Vec::new();
    while let Some(r) = reader.next_record(path) {
        match r {
            Ok(rec) => out.push(rec),
            Err(p) => problems.push(p),
        }
    }
    out
}

/// The records of a CSV source one at a time, with their true line
/// numbers: what [`records`] collects, for a file read as it goes (a long
/// history) instead of held whole. A byte-order mark must be dropped
/// before the source is handed over.
pub(crate) struct RecordReader<R: Read> {
    csv: csv::Reader<Seen<R>>,
    lines: LineCounter,
    /// A record could not be read: reading has ended.
    failed: bool,
}

impl<R: Read> RecordReader<R> {
    /// Starts reading `source`.
    pub fn new(source: R) -> Self {
        let seen = Seen {
            inner: source,
            bytes: Vec::new(),
            base: 0,
        };
        RecordReader {
            csv: csv::ReaderBuilder::new()
                .has_headers(false)
                .flexible(true)
                .from_reader(seen),
            lines: LineCounter { at: 0, line: 1 },
            failed: false,
        }
    }

    /// The next non-blank record; `None` at the end. A record that cannot
    /// be read (a CSV syntax error, bytes that are not UTF-8, a read error)
    /// is one problem at its line, and ends the reading.
    pub fn next_record(&mut self, path: &str) -> Option<Result<Record, Problem>> {
        while !self.failed {
            let mut cells = csv::StringRecord::new();
            match self.csv.read_record(&mut cells) {
                Ok(false) => return None,
                Ok(true) => {
                    let line = cells
                        .position()
                        .map_or(1, |p| self.lines.record_line(self.csv.get_mut(), p.byte()));
                    if cells.len() == 1 && cells[0].trim().is_empty() {
                        continue;
                    }
                    return Some(Ok(Record { line, cells }));
                }
                Err(e) => {
                    self.failed = true;
                    let line = e
                        .position()
                        .map_or(1, |p| self.lines.record_line(self.csv.get_mut(), p.byte()));
                    return Some(Err(Problem::at(
                        plain_location(path, line),
                        format!("expected CSV text, found an unreadable record ({e})"),
                    )));
                }
            }
        }
        None
    }
}

/// A source that keeps the bytes read through it, from byte `base` of the
/// source on, so that line breaks can be counted behind the CSV reader.
struct Seen<R> {
    inner: R,
    bytes: Vec<u8>,
    base: usize,
}

impl<R: Read> Read for Seen<R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        let n = self.inner.read(buf)?;
        self.bytes.extend_from_slice(&buf[..n]);
        Ok(n)
    }
}

/// Bytes already counted that [`Seen`] may keep before it forgets them.
const SEEN_KEPT: usize = 1 << 16;

/// Line numbers from byte offsets.
///
/// # The csv crate's own line numbers are off
///
/// `csv::Position::line` of a record is taken where the reader starts
/// looking for it: before the blank lines in front of it, and before the
/// `\n` of a preceding `\r\n`. So lines are counted here from the byte
/// offset instead: skip the line breaks in front of the record, then count
/// the breaks (`\n`, `\r\n` or a lone `\r`, as csv reads them) before it.
struct LineCounter {
    /// Offset up to which breaks are counted, and the line there.
    at: usize,
    line: u64,
}

impl LineCounter {
    /// Line of the record whose reading began at byte `offset` (offsets
    /// come in increasing order, and the reader has read the record, so
    /// its first byte is in `seen`). Counted bytes are then forgotten.
    fn record_line<R>(&mut self, seen: &mut Seen<R>, offset: u64) -> u64 {
        let (b, base) = (&seen.bytes, seen.base);
        let end = base + b.len();
        let mut start = (offset as usize).clamp(base, end);
        while start < end && (b[start - base] == b'\n' || b[start - base] == b'\r') {
            start += 1;
        }
        if start < self.at {
            return self.line;
        }
        for i in self.at..start {
            let lone_cr = b[i - base] == b'\r' && b.get(i + 1 - base) != Some(&b'\n');
            if b[i - base] == b'\n' || lone_cr {
                self.line += 1;
            }
        }
        self.at = start;
        if self.at - base > SEEN_KEPT {
            seen.bytes.drain(..self.at - base);
            seen.base = self.at;
        }
        self.line
    }
}

/// The error of a file: every problem, sorted by line then column (a
/// problem of a whole line or of the header first); the sort is stable.
pub(crate) fn invalid(mut problems: Vec<Problem>) -> Error {
    problems.sort_by_key(|p| {
        p.location
            .as_ref()
            .map(|l| (l.line, l.column.unwrap_or(0)))
            .unwrap_or((0, 0))
    });
    Error {
        kind: ErrorKind::InvalidInput,
        problems,
    }
}

/// `problems` as an error, or `Ok(value)` when there are none.
pub(crate) fn finish<T>(value: T, problems: Vec<Problem>) -> crate::error::Result<T> {
    if problems.is_empty() {
        Ok(value)
    } else {
        Err(invalid(problems))
    }
}

/// A location naming only the file and the line.
pub(crate) fn plain_location(path: &str, line: u64) -> Location {
    Location {
        path: path.to_string(),
        line,
        column: None,
        header: None,
    }
}

/// The problem of a file with nothing in it; `rows` names its rows
/// ("quote").
pub(crate) fn empty_file(path: &str, rows: &str) -> Problem {
    Problem::at(
        plain_location(path, 1),
        format!("expected a header row and {rows} rows, found an empty file (no {rows} rows)"),
    )
}

/// The problem of a file with a header and no rows after it.
pub(crate) fn header_only(header: &Header, rows: &str) -> Problem {
    Problem::at(
        header.plain(header.line),
        format!("expected {rows} rows after the header, found none (no {rows} rows)"),
    )
}

/// The cell as written, quoted and escaped for a message (long cells cut).
pub(crate) fn quoted(s: &str) -> String {
    if s.chars().count() > QUOTE_CHARS {
        let cut: String = s.chars().take(QUOTE_CHARS).collect();
        format!("{cut:?}...")
    } else {
        format!("{s:?}")
    }
}

/// A fraction as a percent number for messages (7, not 7.000000000000001).
pub(crate) fn pct(x: f64) -> String {
    let v = (x * 100.0 * 1e9).round() / 1e9;
    format!("{}", v + 0.0)
}

/// Why a cell is not an ISO 8601 calendar date.
#[derive(Debug, PartialEq, Eq)]
pub(crate) enum DateError {
    /// Not of the shape `YYYY-MM-DD`.
    Shape,
    /// The right shape, but no such day (`2026-02-30`).
    NoSuchDay,
}

/// Strict `YYYY-MM-DD` (chrono alone would also take `2026-6-9`).
pub(crate) fn parse_iso_date(s: &str) -> Result<NaiveDate, DateError> {
    let b = s.as_bytes();
    let shape = b.len() == 10
        && b[4] == b'-'
        && b[7] == b'-'
        && b.iter()
            .enumerate()
            .all(|(i, c)| i == 4 || i == 7 || c.is_ascii_digit());
    if !shape {
        return Err(DateError::Shape);
    }
    let y: i32 = s[0..4].parse().map_err(|_| DateError::Shape)?;
    let m: u32 = s[5..7].parse().map_err(|_| DateError::Shape)?;
    let d: u32 = s[8..10].parse().map_err(|_| DateError::Shape)?;
    NaiveDate::from_ymd_opt(y, m, d).ok_or(DateError::NoSuchDay)
}

/// Whether `s` looks like `06/18/2026`, `18.06.2026` or `18-06-2026`: a
/// date with the year last.
fn day_month_year(s: &str) -> bool {
    let parts: Vec<&str> = s.split(['/', '.', '-']).collect();
    let digits = |p: &str, n: std::ops::RangeInclusive<usize>| {
        n.contains(&p.len()) && p.bytes().all(|b| b.is_ascii_digit())
    };
    parts.len() == 3
        && digits(parts[0], 1..=2)
        && digits(parts[1], 1..=2)
        && digits(parts[2], 4..=4)
}

/// Why a cell is not a usable number.
#[derive(Debug, PartialEq, Eq)]
pub(crate) enum NumberError {
    /// Not a decimal number at all.
    NotANumber,
    /// NaN, an infinity, or too large for a double.
    NotFinite,
}

/// A finite decimal number. Rust's parser accepts "nan", "inf" and
/// "infinity" (any case) and overflows "1e400" to infinity: all rejected.
pub(crate) fn parse_number(s: &str) -> Result<f64, NumberError> {
    match s.parse::<f64>() {
        Ok(v) if v.is_finite() => Ok(v),
        Ok(_) => Err(NumberError::NotFinite),
        Err(_) => Err(NumberError::NotANumber),
    }
}

/// The header record mapped to the reader's columns; or `None`, with one
/// problem for the whole file, when the first record is no header at all:
///
/// - a file separated by semicolons or tabs (a spreadsheet's regional
///   export), seen as a first row with no known column name that splits
///   into two or more known names at `;` or a tab;
/// - a file whose first row is data (no header row), seen as a first row
///   with no known column name and a cell that is a number or a date.
///
/// One line then says what is wrong, instead of a complaint for every cell
/// of every row.
pub(crate) fn header<'a>(
    path: &'a str,
    rec: &Record,
    names: &'static [&'static str],
    problems: &mut Vec<Problem>,
) -> Option<Header<'a>> {
    let cells: Vec<&str> = rec.cells.iter().map(str::trim).collect();
    let known = |c: &str| names.contains(&c);
    if !cells.iter().any(|c| known(c)) {
        let whole = |message: String| Problem::at(plain_location(path, rec.line), message);
        for (d, name) in [(';', "semicolons"), ('\t', "tabs")] {
            let split = cells
                .iter()
                .flat_map(|c| c.split(d))
                .filter(|c| known(c.trim()))
                .count();
            if split >= 2 {
                let line: Vec<&str> = rec.cells.iter().collect();
                problems.push(whole(format!(
                    "expected comma-separated values, found a header separated by {name} ({}): \
                     save or export the file as CSV with commas between cells and points in numbers",
                    quoted(&line.join(","))
                )));
                return None;
            }
        }
        let data = cells
            .iter()
            .any(|c| parse_number(c).is_ok() || parse_iso_date(c).is_ok());
        if data {
            let shown: Vec<String> = cells.iter().take(4).map(|c| quoted(c)).collect();
            let more = if cells.len() > 4 { ", ..." } else { "" };
            problems.push(whole(format!(
                "expected a header row naming the columns ({}), found a data row ({}{more}): \
                 the file has no header row; add one",
                names.join(", "),
                shown.join(", ")
            )));
            return None;
        }
    }
    Some(Header::read(path, rec, names, problems))
}

/// A header row mapped to a reader's known columns.
pub(crate) struct Header<'a> {
    /// The file as named in messages.
    pub path: &'a str,
    /// 1-based line of the header.
    pub line: u64,
    /// Number of cells in the header.
    pub width: usize,
    /// The reader's column names; a column is referred to by its index here.
    names: &'static [&'static str],
    /// Field index (0-based) of each known column, when present.
    cols: Vec<Option<usize>>,
}

impl<'a> Header<'a> {
    /// Maps the header record: each known name to its field. Every unknown
    /// name and every name seen a second time is a problem at its cell
    /// (the first occurrence is the one used).
    pub fn read(
        path: &'a str,
        header: &Record,
        names: &'static [&'static str],
        problems: &mut Vec<Problem>,
    ) -> Self {
        let mut cols = vec![None; names.len()];
        for (i, raw) in header.cells.iter().enumerate() {
            let name = raw.trim();
            let at = Location {
                path: path.to_string(),
                line: header.line,
                column: Some(i + 1),
                header: Some(name.to_string()),
            };
            match names.iter().position(|c| *c == name) {
                Some(id) => match cols[id] {
                    None => cols[id] = Some(i),
                    Some(first) => problems.push(Problem::at(
                        at,
                        format!(
                            "expected each column once, found {} again (first in column {})",
                            quoted(name),
                            first + 1
                        ),
                    )),
                },
                None => problems.push(Problem::at(
                    at,
                    format!(
                        "expected a column name, one of {}, found {}",
                        names.join(", "),
                        quoted(name)
                    ),
                )),
            }
        }
        Header {
            path,
            line: header.line,
            width: header.cells.len(),
            names,
            cols,
        }
    }

    /// Reports each of the columns `ids` (in the order given) that the
    /// header lacks; true when it has them all.
    pub fn require(
        &self,
        ids: impl IntoIterator<Item = usize>,
        problems: &mut Vec<Problem>,
    ) -> bool {
        let mut complete = true;
        for id in ids {
            if self.cols[id].is_none() {
                complete = false;
                problems.push(Problem::at(
                    Location {
                        path: self.path.to_string(),
                        line: self.line,
                        column: None,
                        header: Some(self.names[id].to_string()),
                    },
                    format!(
                        "expected a column named {} in the header, found none",
                        quoted(self.names[id])
                    ),
                ));
            }
        }
        complete
    }

    /// Field index (0-based) of column `id`, when the header has it.
    pub fn col(&self, id: usize) -> Option<usize> {
        self.cols[id]
    }

    /// Whether the header has column `id`.
    pub fn has(&self, id: usize) -> bool {
        self.cols[id].is_some()
    }

    /// Location of column `id` on `line` (without a column number when the
    /// header lacks the column).
    pub fn at(&self, line: u64, id: usize) -> Location {
        Location {
            path: self.path.to_string(),
            line,
            column: self.cols[id].map(|i| i + 1),
            header: Some(self.names[id].to_string()),
        }
    }

    /// Location of a whole line of the file.
    pub fn plain(&self, line: u64) -> Location {
        plain_location(self.path, line)
    }

    /// Header name of the 0-based field `i`, if it is a known column.
    fn field_name(&self, i: usize) -> Option<String> {
        self.cols
            .iter()
            .position(|c| *c == Some(i))
            .map(|id| self.names[id].to_string())
    }
}

/// One record being checked against its header; every problem goes to
/// `problems` and `ok` turns false at the first.
pub(crate) struct Row<'h, 'r, 'p> {
    /// The file's header.
    pub header: &'h Header<'h>,
    /// The record checked.
    pub rec: &'r Record,
    /// Where problems go.
    pub problems: &'p mut Vec<Problem>,
    /// False once a problem was found in this row.
    pub ok: bool,
}

impl<'h, 'r, 'p> Row<'h, 'r, 'p> {
    /// Starts checking `rec`.
    pub fn new(header: &'h Header<'h>, rec: &'r Record, problems: &'p mut Vec<Problem>) -> Self {
        Row {
            header,
            rec,
            problems,
            ok: true,
        }
    }

    /// 1-based line of the row.
    pub fn line(&self) -> u64 {
        self.rec.line
    }

    /// Location of column `id` in this row.
    pub fn at(&self, id: usize) -> Location {
        self.header.at(self.rec.line, id)
    }

    /// A problem at column `id` of this row.
    pub fn bad(&mut self, id: usize, message: String) {
        self.ok = false;
        self.problems.push(Problem::at(self.at(id), message));
    }

    /// The trimmed cell of column `id` ("" when the column is absent).
    pub fn cell(&self, id: usize) -> &'r str {
        self.header
            .col(id)
            .and_then(|i| self.rec.cells.get(i))
            .map_or("", str::trim)
    }

    /// Whether the row has as many cells as the header; when not, the
    /// problem sits at the first missing or the first extra cell.
    pub fn width(&mut self) -> bool {
        let n = self.rec.cells.len();
        let width = self.header.width;
        if n == width {
            return true;
        }
        let line = self.header.line;
        let (column, header, tail) = if n < width {
            let name = self.header.field_name(n);
            let cell = self.rec.cells.get(0).unwrap_or("");
            let tail = match (n, cell.contains(';'), cell.contains('\t')) {
                (1, true, _) => "the row is separated by semicolons, not commas",
                (1, _, true) => "the row is separated by tabs, not commas",
                _ => "the row ends before this column",
            };
            (n + 1, name, tail.to_string())
        } else {
            let extra: Vec<String> = self.rec.cells.iter().skip(width).map(quoted).collect();
            (width + 1, None, format!("extra cells {}", extra.join(", ")))
        };
        self.ok = false;
        self.problems.push(Problem::at(
            Location {
                path: self.header.path.to_string(),
                line: self.rec.line,
                column: Some(column),
                header,
            },
            format!("expected {width} cells as in the header (line {line}), found {n}: {tail}"),
        ));
        false
    }

    /// A required non-empty text cell; `what` names it for an empty cell.
    pub fn text(&mut self, id: usize, what: &str) -> Option<&'r str> {
        let s = self.cell(id);
        if s.is_empty() {
            self.bad(id, format!("expected {what}, found an empty cell"));
            None
        } else {
            Some(s)
        }
    }

    /// A required name or label that the output can print as it is: not
    /// empty, and without a word the output guard reads as a number that
    /// is not finite (`inf`, `NaN`: see [`crate::output::shows_non_finite`]).
    pub fn name(&mut self, id: usize, what: &str) -> Option<&'r str> {
        let s = self.text(id, what)?;
        if let Some(word) = crate::output::shows_non_finite(s) {
            let msg = format!(
                "expected {what} without the word \"{word}\" (the output would show it where a \
                 number that is not finite is refused), found {}",
                quoted(s)
            );
            self.bad(id, msg);
            return None;
        }
        Some(s)
    }

    /// A required ISO 8601 date; `what` names it for an empty cell.
    pub fn date(&mut self, id: usize, what: &str) -> Option<NaiveDate> {
        let s = self.cell(id);
        if s.is_empty() {
            self.bad(
                id,
                format!("expected {what} (YYYY-MM-DD), found an empty cell"),
            );
            return None;
        }
        match parse_iso_date(s) {
            Ok(d) => Some(d),
            Err(e) => {
                let note = if e == DateError::NoSuchDay {
                    " (no such day)"
                } else if day_month_year(s) {
                    " (a day-month-year or month-day-year date: write it year first, as 2026-06-18)"
                } else {
                    ""
                };
                let msg = format!(
                    "expected an ISO 8601 date YYYY-MM-DD, found {}{note}",
                    quoted(s)
                );
                self.bad(id, msg);
                None
            }
        }
    }

    /// A required finite number; `what` names it for an empty cell.
    pub fn number(&mut self, id: usize, what: &str) -> Option<f64> {
        let s = self.cell(id);
        if s.is_empty() {
            self.bad(id, format!("expected {what}, found an empty cell"));
            return None;
        }
        match parse_number(s) {
            Ok(v) => Some(v),
            Err(NumberError::NotFinite) => {
                let msg = format!("expected a finite number, found {}", quoted(s));
                self.bad(id, msg);
                None
            }
            Err(NumberError::NotANumber) => {
                let msg = format!("expected a number, found {}", quoted(s));
                self.bad(id, msg);
                None
            }
        }
    }

    /// A required number that must satisfy `ok`; `range` describes the
    /// admissible values ("a spread of 0 bp or more").
    pub fn checked(
        &mut self,
        id: usize,
        what: &str,
        range: &str,
        ok: impl Fn(f64) -> bool,
    ) -> Option<f64> {
        let v = self.number(id, what)?;
        self.within(id, v, range, ok)
    }

    /// `v`, the parsed cell of column `id`, when it satisfies `ok`.
    pub fn within(
        &mut self,
        id: usize,
        v: f64,
        range: &str,
        ok: impl Fn(f64) -> bool,
    ) -> Option<f64> {
        if ok(v) {
            Some(v)
        } else {
            let msg = format!("expected {range}, found {}", quoted(self.cell(id)));
            self.bad(id, msg);
            None
        }
    }

    /// A cell that must be empty on this kind of row (`row`: "an index").
    pub fn empty(&mut self, id: usize, row: &str, why: &str) {
        let s = self.cell(id);
        if !s.is_empty() {
            let msg = format!(
                "expected an empty cell on {row} row ({why}), found {}",
                quoted(s)
            );
            self.bad(id, msg);
        }
    }

    /// The index in `options` of the cell's value, which must be one of them.
    pub fn one_of(&mut self, id: usize, options: &[&str]) -> Option<usize> {
        let s = self.cell(id);
        if let Some(i) = options.iter().position(|o| *o == s) {
            return Some(i);
        }
        let found = if s.is_empty() {
            "an empty cell".to_string()
        } else {
            quoted(s)
        };
        let list: Vec<String> = options.iter().map(|o| quoted(o)).collect();
        self.bad(
            id,
            format!("expected one of {}, found {found}", list.join(", ")),
        );
        None
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn iso_dates_are_strict() {
        assert_eq!(
            parse_iso_date("2026-06-19"),
            Ok(NaiveDate::from_ymd_opt(2026, 6, 19).unwrap())
        );
        assert_eq!(parse_iso_date("2026-6-19"), Err(DateError::Shape));
        assert_eq!(parse_iso_date("19/06/2026"), Err(DateError::Shape));
        assert_eq!(parse_iso_date("+2026-06-1"), Err(DateError::Shape));
        assert_eq!(parse_iso_date("2026-02-29"), Err(DateError::NoSuchDay));
        assert_eq!(parse_iso_date("2026-13-01"), Err(DateError::NoSuchDay));
        // Leap day of a leap year (2028 is divisible by 4, not by 100).
        assert!(parse_iso_date("2028-02-29").is_ok());
        // Multibyte text of the right byte length must not panic on slicing.
        assert_eq!(parse_iso_date("ééééé"), Err(DateError::Shape));
    }

    #[test]
    fn numbers_reject_nan_and_infinity() {
        assert_eq!(parse_number("12.5"), Ok(12.5));
        assert_eq!(parse_number("-1e2"), Ok(-100.0));
        for s in [
            "nan",
            "NaN",
            "inf",
            "-inf",
            "infinity",
            "+Infinity",
            "1e400",
        ] {
            assert_eq!(parse_number(s), Err(NumberError::NotFinite), "{s}");
        }
        for s in ["12,5", "3%", "", "1..2", "0x10"] {
            assert_eq!(parse_number(s), Err(NumberError::NotANumber), "{s}");
        }
    }

    #[test]
    fn long_cells_are_cut_in_messages() {
        let long = "x".repeat(100);
        let q = quoted(&long);
        assert_eq!(q, format!("\"{}\"...", "x".repeat(QUOTE_CHARS)));
        assert_eq!(quoted("a\"b"), "\"a\\\"b\"");
    }

    #[test]
    fn percent_printing_hides_binary_noise() {
        assert_eq!(pct(0.07), "7");
        assert_eq!(pct(0.035), "3.5");
        assert_eq!(pct(0.0), "0");
    }

    /// `(line, first cell)` of every record of `text`.
    fn lines_of(text: &str) -> Vec<(u64, String)> {
        let mut problems = Vec::new();
        let recs = records(text, "f.csv", &mut problems);
        assert!(problems.is_empty());
        recs.iter()
            .map(|r| (r.line, r.cells[0].to_string()))
            .collect()
    }

    #[test]
    fn line_numbers_survive_crlf_lone_cr_and_blank_lines() {
        let text = "h\r\na\r\n\r\nb\rc\n\n\nd\n\"e\nf\"\ng";
        let want = [
            (1, "h"),
            (2, "a"),
            (4, "b"),
            (5, "c"),
            (8, "d"),
            (9, "e\nf"),
            (11, "g"),
        ];
        let want: Vec<(u64, String)> = want.iter().map(|(l, s)| (*l, s.to_string())).collect();
        assert_eq!(lines_of(text), want);
    }

    /// A source that hands over one byte a read.
    struct Trickle<'a>(&'a [u8]);

    impl std::io::Read for Trickle<'_> {
        fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
            match (self.0.split_first(), buf.first_mut()) {
                (Some((b, rest)), Some(slot)) => {
                    *slot = *b;
                    self.0 = rest;
                    Ok(1)
                }
                _ => Ok(0),
            }
        }
    }

    /// Read as it comes (one byte a read, then a text long enough that the
    /// counted bytes are forgotten several times), the lines are those of
    /// the text read whole, counted independently here by splitting it.
    #[test]
    fn lines_are_the_same_read_as_it_comes() {
        let mut text = String::new();
        let mut want = Vec::new();
        let mut line = 1;
        for i in 0..20_000u64 {
            let (cell, breaks) = match i % 5 {
                0 => (format!("r{i}"), "\r\n"),
                1 => (format!("r{i}"), "\r"),
                2 => (format!("\"r{i}\nx\""), "\n\n"),
                3 => (format!("r{i}"), "\n \n"),
                _ => (format!("r{i}"), "\n"),
            };
            want.push((line, cell.trim_matches('"').to_string()));
            line += cell.matches('\n').count() as u64
                + breaks.matches('\n').count() as u64
                + breaks
                    .matches('\r')
                    .filter(|_| !breaks.contains("\r\n"))
                    .count() as u64;
            text.push_str(&cell);
            text.push_str(breaks);
        }
        let read = |source: &mut dyn std::io::Read| {
            let mut reader = RecordReader::new(source);
            let mut got = Vec::new();
            while let Some(r) = reader.next_record("f.csv") {
                let r = r.expect("record");
                got.push((r.line, r.cells[0].to_string()));
            }
            got
        };
        assert_eq!(lines_of(&text), want);
        assert_eq!(read(&mut text.as_bytes()), want);
        let short = &text[..2000];
        assert_eq!(read(&mut Trickle(short.as_bytes())), lines_of(short));
    }

    #[test]
    fn records_skip_blank_lines_and_a_byte_order_mark() {
        let mut problems = Vec::new();
        let text = "\u{feff}a,b\r\n\r\n  \r\n1,2\r\n\n3,4";
        let recs = records(text, "f.csv", &mut problems);
        assert!(problems.is_empty());
        let got: Vec<(u64, String)> = recs
            .iter()
            .map(|r| (r.line, r.cells.iter().collect::<Vec<_>>().join("|")))
            .collect();
        assert_eq!(
            got,
            vec![
                (1, "a|b".to_string()),
                (4, "1|2".to_string()),
                (6, "3|4".to_string())
            ]
        );
    }

    const NAMES: &[&str] = &["a", "b", "c"];

    /// The problems of reading `text`'s first record as a header.
    fn header_problems(text: &str) -> (bool, Vec<String>) {
        let mut problems = Vec::new();
        let recs = records(text, "f.csv", &mut problems);
        let read = header("f.csv", &recs[0], NAMES, &mut problems).is_some();
        (read, problems.iter().map(|p| p.to_string()).collect())
    }

    #[test]
    fn a_wrong_delimiter_or_a_data_row_is_one_problem() {
        let (read, m) = header_problems("a;b;c\n1;2;3\n");
        assert!(!read);
        assert_eq!(
            m,
            [
                "f.csv:1: expected comma-separated values, found a header separated by semicolons \
              (\"a;b;c\"): save or export the file as CSV with commas between cells and points in \
              numbers"
            ]
        );
        let (read, m) = header_problems("a\tb\tc\n");
        assert!(
            !read && m.len() == 1 && m[0].contains("separated by tabs"),
            "{m:?}"
        );
        let (read, m) = header_problems("2026-06-18,x,1.5\n");
        assert!(!read);
        assert_eq!(
            m,
            [
                "f.csv:1: expected a header row naming the columns (a, b, c), found a data row \
              (\"2026-06-18\", \"x\", \"1.5\"): the file has no header row; add one"
            ]
        );
        // A header with one known name is a header, whatever else it has.
        let (read, m) = header_problems("a,1\n");
        assert!(read && m.len() == 1, "{m:?}");
        // Unknown names that are not data: the usual per-column problems.
        let (read, m) = header_problems("x,y\n");
        assert!(read && m.len() == 2, "{m:?}");
    }

    #[test]
    fn dates_written_day_or_month_first_get_a_hint() {
        assert!(day_month_year("06/18/2026") && day_month_year("18.06.2026"));
        assert!(day_month_year("1-6-2026"));
        assert!(!day_month_year("2026/06/18") && !day_month_year("06/18/26"));
        let mut problems = Vec::new();
        let recs = records("a,b,c\n06/18/2026,,\n", "f.csv", &mut problems);
        let h = Header::read("f.csv", &recs[0], NAMES, &mut problems);
        Row::new(&h, &recs[1], &mut problems).date(0, "a date");
        assert!(problems[0]
            .message
            .ends_with("write it year first, as 2026-06-18)"));
    }

    #[test]
    fn header_names_unknown_repeated_and_missing_columns() {
        let mut problems = Vec::new();
        let recs = records("\n c ,x,a,c\n", "f.csv", &mut problems);
        let h = Header::read("f.csv", &recs[0], NAMES, &mut problems);
        assert_eq!((h.col(0), h.col(1), h.col(2)), (Some(2), None, Some(0)));
        assert!(!h.require([0, 1, 2], &mut problems));
        let e = invalid(problems);
        let m: Vec<String> = e.problems.iter().map(|p| p.to_string()).collect();
        assert_eq!(
            m,
            vec![
                "f.csv:2: column \"b\": expected a column named \"b\" in the header, found none",
                "f.csv:2:2: column \"x\": expected a column name, one of a, b, c, found \"x\"",
                "f.csv:2:4: column \"c\": expected each column once, found \"c\" again (first in column 1)",
            ]
        );
    }

    #[test]
    fn row_cells_are_trimmed_and_checked_where_they_sit() {
        let mut problems = Vec::new();
        let recs = records("b,a,c\n x , 2026-02-30 ,1e400\n1\n", "f.csv", &mut problems);
        let h = Header::read("f.csv", &recs[0], NAMES, &mut problems);
        let mut row = Row::new(&h, &recs[1], &mut problems);
        assert!(row.width());
        assert_eq!(row.cell(1), "x");
        assert_eq!(row.one_of(1, &["y", "z"]), None);
        assert_eq!(row.date(0, "a date"), None);
        assert_eq!(row.number(2, "a number"), None);
        assert!(!row.ok);
        let mut row = Row::new(&h, &recs[2], &mut problems);
        assert!(!row.width());
        let m: Vec<String> = invalid(problems)
            .problems
            .iter()
            .map(|p| p.to_string())
            .collect();
        assert_eq!(
            m,
            vec![
                "f.csv:2:1: column \"b\": expected one of \"y\", \"z\", found \"x\"",
                "f.csv:2:2: column \"a\": expected an ISO 8601 date YYYY-MM-DD, found \"2026-02-30\" (no such day)",
                "f.csv:2:3: column \"c\": expected a finite number, found \"1e400\"",
                "f.csv:3:2: column \"a\": expected 3 cells as in the header (line 1), found 1: the row ends before this column",
            ]
        );
    }
}
