//! A snapshot file read date by date, for a long history that should not
//! be held whole.
//!
//! [`DateReader`] reads a regular file as it goes and hands over one
//! [`MarketDate`] at a time, checked by the same row and date rules as
//! [`parse_snapshot`](super::parse_snapshot) and equal to what that function
//! gives for the date. It keeps only the rows of the date being read, and
//! the problems it finds.
//!
//! # The usual history layout only
//!
//! A date's rules (duplicates, recovery, an index quote, tiling) need all of
//! its rows, so the reader takes a date as complete when the next row has a
//! later date: the rows of each date must come in one block, and the blocks
//! in ascending date order. A file laid out otherwise stops the reader
//! ([`ReadEnd::NotInDateOrder`]), as does a record the CSV reader cannot
//! read ([`ReadEnd::Unreadable`]: a CSV syntax error, bytes that are not
//! UTF-8); [`read_snapshot`](super::read_snapshot) reads such a file whole.
//!
//! # Every problem, as the whole-file reader reports it
//!
//! At the first problem the reader stops handing over dates but reads on
//! to the end, checking every row and every date; [`DateReader::into_error`]
//! then gives every problem of the file, sorted by line: the error
//! [`parse_snapshot`](super::parse_snapshot) gives for it.

use super::{assemble_date, row, sheet, Rejected, Row};
use crate::error::{Error, Problem};
use crate::input::cells::{self, Header, RecordReader, Row as Cells};
use crate::market::MarketDate;
use chrono::NaiveDate;
use std::fs::File;
use std::io::{BufRead, BufReader};

/// One trade date of a file, with the warnings of its rows (in the order
/// [`parse_snapshot`](super::parse_snapshot) gives them).
#[derive(Debug, Clone, PartialEq)]
pub struct DateBlock {
    /// The date's quotes, sorted as in a [`crate::market::Snapshot`].
    pub date: MarketDate,
    /// Warnings of the date's rows.
    pub warnings: Vec<Problem>,
}

/// Why a [`DateReader`] stopped.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ReadEnd {
    /// The whole file was read, without a problem, date blocks ascending:
    /// the dates handed over are the file's dates.
    Complete,
    /// The whole file was read, date blocks ascending, and it has problems
    /// ([`DateReader::into_error`]).
    Invalid,
    /// A date's rows came after those of a later date.
    NotInDateOrder,
    /// A record could not be read (a CSV syntax error, bytes that are not
    /// UTF-8, a read error).
    Unreadable,
}

/// A snapshot file read date block by date block (see the module docs).
pub struct DateReader<'p> {
    path: &'p str,
    records: RecordReader<BufReader<File>>,
    /// The header, once read (`None` when the file has none to read rows by).
    sheet: Option<Header<'p>>,
    /// The first row of the next date.
    next: Option<Row>,
    /// Whether a record came after the header.
    any_row: bool,
    /// Every problem found.
    problems: Vec<Problem>,
    /// Dates of rows that were refused, and dates without an index quote
    /// with their problem: reported at the end unless a refused row may
    /// have been that quote (as [`super::parse_snapshot`] does).
    rejected: Rejected,
    no_index: Vec<(NaiveDate, Problem)>,
    end: Option<ReadEnd>,
}

/// A UTF-8 byte-order mark.
const BOM: &[u8] = b"\xef\xbb\xbf";

impl<'p> DateReader<'p> {
    /// Opens the snapshot file `path` and reads its header; `None` when it
    /// is not a regular file that can be opened (standard input `-`, a pipe,
    /// a missing file): [`read_snapshot`](super::read_snapshot) reads it, or
    /// says why it cannot.
    pub fn open(path: &'p str) -> Option<DateReader<'p>> {
        if path == "-" {
            return None;
        }
        let file = File::open(path).ok()?;
        if !file.metadata().ok()?.is_file() {
            return None;
        }
        let mut source = BufReader::new(file);
        if source.fill_buf().ok()?.starts_with(BOM) {
            source.consume(BOM.len());
        }
        let mut records = RecordReader::new(source);
        let mut problems = Vec::new();
        let (sheet, end) = match records.next_record(path) {
            Some(Err(_)) => (None, Some(ReadEnd::Unreadable)),
            first => {
                let first = first.and_then(Result::ok);
                (sheet(path, first.as_ref(), &mut problems), None)
            }
        };
        Some(DateReader {
            path,
            records,
            sheet,
            next: None,
            any_row: false,
            problems,
            rejected: Rejected::default(),
            no_index: Vec::new(),
            end,
        })
    }

    /// Why the reader stopped, once it has (`None` while dates remain).
    pub fn end(&self) -> Option<ReadEnd> {
        self.end
    }

    /// Every problem of the file, sorted by line, as
    /// [`parse_snapshot`](super::parse_snapshot) reports them, once the
    /// reader has ended [`ReadEnd::Invalid`]; `None` otherwise.
    pub fn into_error(self) -> Option<Error> {
        (self.end == Some(ReadEnd::Invalid)).then(|| cells::invalid(self.problems))
    }

    /// The rows of the next date, in line order; `None` at the end of the
    /// file or when reading stops (then [`Self::end`] is set, but for the
    /// problems of dates not yet assembled).
    fn next_rows(&mut self) -> Option<Vec<Row>> {
        let Some(sheet) = self.sheet.as_ref() else {
            // No header to read rows by: the file's problem is the header's,
            // unless a byte further on is not UTF-8 (that one is reported
            // alone).
            self.end = Some(ReadEnd::Invalid);
            while let Some(rec) = self.records.next_record(self.path) {
                if rec.is_err() {
                    self.end = Some(ReadEnd::Unreadable);
                }
            }
            return None;
        };
        let mut rows: Vec<Row> = self.next.take().into_iter().collect();
        while let Some(rec) = self.records.next_record(self.path) {
            let Ok(rec) = rec else {
                self.end = Some(ReadEnd::Unreadable);
                return None;
            };
            self.any_row = true;
            let Some(r) = row(Cells::new(sheet, &rec, &mut self.problems)) else {
                self.rejected.note(sheet, &rec);
                continue;
            };
            match rows.first().map(|first| r.date.cmp(&first.date)) {
                None | Some(std::cmp::Ordering::Equal) => rows.push(r),
                Some(std::cmp::Ordering::Greater) => {
                    self.next = Some(r);
                    return Some(rows);
                }
                Some(std::cmp::Ordering::Less) => {
                    self.end = Some(ReadEnd::NotInDateOrder);
                    return None;
                }
            }
        }
        if rows.is_empty() {
            // A header and no rows: "no quote rows".
            let header_only = (!self.any_row).then(|| cells::header_only(sheet, "quote"));
            self.finish(header_only);
            return None;
        }
        Some(rows)
    }

    /// At the end of the file: the problems that need the whole file, and
    /// how the reading ended.
    fn finish(&mut self, header_only: Option<Problem>) {
        self.problems.extend(header_only);
        for (date, p) in self.no_index.drain(..) {
            if !self.rejected.covers(date) {
                self.problems.push(p);
            }
        }
        self.end = Some(match (self.problems.is_empty(), self.rejected.is_empty()) {
            (false, _) => ReadEnd::Invalid,
            (true, true) => ReadEnd::Complete,
            // A refused row always has a problem; if not, the whole-file
            // reader is the judge.
            (true, false) => ReadEnd::Unreadable,
        });
    }
}

impl Iterator for DateReader<'_> {
    type Item = DateBlock;

    /// The next date of the file, checked (see the module docs); after
    /// the first problem, `None`, once the rest of the file is checked.
    fn next(&mut self) -> Option<DateBlock> {
        while self.end.is_none() {
            let rows = self.next_rows()?;
            let sheet = self.sheet.as_ref()?;
            let mut warnings = Vec::new();
            let date = rows.first()?.date;
            let (date, no_index) =
                assemble_date(sheet, date, rows, &mut self.problems, &mut warnings);
            if let Some(p) = no_index {
                self.no_index.push((date.date, p));
            }
            if self.problems.is_empty() && self.no_index.is_empty() && self.rejected.is_empty() {
                return Some(DateBlock { date, warnings });
            }
        }
        None
    }
}
