//! A snapshot file read date by date, for a long history that should not
//! be held whole.
//!
//! [`DateReader`] reads a regular file as it goes and hands over one
//! [`MarketDate`] at a time, checked by the same row and date rules as
//! [`parse_snapshot`](super::parse_snapshot) and equal to what that function
//! gives for the date. It keeps only the rows of the date being read.
//!
//! # The usual history layout only
//!
//! A date's rules (duplicates, recovery, an index quote, tiling) need all of
//! its rows, so the reader takes a date as complete when the next row has a
//! later date: the rows of each date must come in one block, and the blocks
//! in ascending date order. A file laid out otherwise, or with any problem
//! at all, stops the reader ([`ReadEnd::NotInDateOrder`],
//! [`ReadEnd::Problem`]); read it whole with
//! [`read_snapshot`](super::read_snapshot), which reports every problem
//! (the reader stops at the first, so that a bad file costs no more than
//! reading up to it).

use super::{assemble_date, row, sheet, Row};
use crate::error::Problem;
use crate::input::cells::{Header, RecordReader, Row as Cells};
use crate::market::MarketDate;
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
    /// The file has a problem (a bad cell, a date without an index quote,
    /// a CSV or UTF-8 error, no rows ...); reading stopped there.
    Problem,
    /// A date's rows came after those of a later date.
    NotInDateOrder,
}

/// A snapshot file read date block by date block (see the module docs).
pub struct DateReader<'p> {
    path: &'p str,
    records: RecordReader<BufReader<File>>,
    /// The header, once read (`None` when the file has none to read rows by).
    sheet: Option<Header<'p>>,
    /// The first row of the next date.
    next: Option<Row>,
    /// Dates handed over.
    dates: usize,
    /// Where the problems of the rule checks go (the reader stops at the first).
    problems: Vec<Problem>,
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
        let first = match records.next_record(path) {
            Some(Ok(rec)) => Some(rec),
            Some(Err(p)) => {
                problems.push(p);
                None
            }
            None => None,
        };
        let sheet = sheet(path, first.as_ref(), &mut problems);
        let end = (!problems.is_empty()).then_some(ReadEnd::Problem);
        Some(DateReader {
            path,
            records,
            sheet,
            next: None,
            dates: 0,
            problems,
            end,
        })
    }

    /// Why the reader stopped, once it has (`None` while dates remain).
    pub fn end(&self) -> Option<ReadEnd> {
        self.end
    }

    /// The rows of the next date, in line order; `None` at the end of the
    /// file or at a problem (then [`Self::end`] is set).
    fn next_rows(&mut self) -> Option<Vec<Row>> {
        let sheet = self.sheet.as_ref()?;
        let mut rows: Vec<Row> = self.next.take().into_iter().collect();
        while let Some(rec) = self.records.next_record(self.path) {
            let Ok(rec) = rec else {
                self.end = Some(ReadEnd::Problem);
                return None;
            };
            let Some(r) = row(Cells::new(sheet, &rec, &mut self.problems)) else {
                self.end = Some(ReadEnd::Problem);
                return None;
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
            // A header and no rows is a problem ("no quote rows").
            let whole = self.dates > 0;
            self.end = Some(if whole {
                ReadEnd::Complete
            } else {
                ReadEnd::Problem
            });
            return None;
        }
        Some(rows)
    }
}

impl Iterator for DateReader<'_> {
    type Item = DateBlock;

    /// The next date of the file, checked (see the module docs).
    fn next(&mut self) -> Option<DateBlock> {
        if self.end.is_some() {
            return None;
        }
        let rows = self.next_rows()?;
        let sheet = self.sheet.as_ref()?;
        let mut warnings = Vec::new();
        let date = rows.first()?.date;
        let (date, no_index) = assemble_date(sheet, date, rows, &mut self.problems, &mut warnings);
        if no_index.is_some() || !self.problems.is_empty() {
            self.end = Some(ReadEnd::Problem);
            return None;
        }
        self.dates += 1;
        Some(DateBlock { date, warnings })
    }
}
