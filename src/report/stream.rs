//! A long history run a few hundred dates at a time, in memory that does
//! not grow with the number of dates.
//!
//! A command that reads a snapshot holds the whole file, every date and
//! every date's result before it prints. For a long history that is
//! hundreds of megabytes. [`plan`] reads the file instead in two passes:
//!
//! 1. the first pass reads it date by date
//!    ([`DateReader`]), checking every row and every date rule, and
//!    bootstraps the index curve of every date the [`DateFilter`] keeps,
//!    keeping only counts, the first warnings and any curve errors;
//! 2. [`HistoryPlan::chunks`] reads it again and hands over the dates
//!    kept, [`CHUNK_DATES`] at a time, for the command to compute, print
//!    and drop ([`HistoryPlan::for_each_chunk`] computes a chunk while the
//!    one before is printed).
//!
//! So every problem of the file, the filter's usage errors and every curve
//! error are known before anything is printed, as when the file is read
//! whole.
//!
//! A file with problems is read to its end all the same: [`plan`] returns
//! every problem, sorted by line, as the whole-file reader reports them,
//! keeping only the problems (no bootstrap after the first).
//!
//! # When a file is read whole instead
//!
//! [`plan`] says `None`, and the command reads the file whole
//! ([`crate::input::snapshot::read_snapshot`]) as before, when the file
//! is standard input or not a regular file, when a date's rows are not in
//! one block or the blocks not in ascending date order, and when a record
//! cannot be read (a CSV syntax error, bytes that are not UTF-8): the
//! whole-file reader then reports every problem with the same messages.

use super::DateFilter;
use crate::curve::{MarketOptions, Pool};
use crate::error::{collect_all, CappedProblems, Error, ErrorKind, Result, MAX_LINES_PER_FILE};
use crate::input::snapshot::{DateReader, ReadEnd};
use crate::market::{DateSpan, MarketDate};
use rayon::prelude::*;
use std::time::SystemTime;

/// Dates computed and printed together: enough for every core to have
/// work, few enough that their results take a few megabytes.
pub const CHUNK_DATES: usize = 256;

/// What the first pass over a history found (see the module docs).
#[derive(Debug)]
pub struct HistoryPlan {
    path: String,
    filter: DateFilter,
    stamp: Stamp,
    dates: usize,
    tranches: usize,
    warnings: CappedProblems,
    curve_errors: Option<Error>,
}

/// The size and time of change of a file: how a second pass knows it reads
/// what the first read.
type Stamp = Option<(u64, Option<SystemTime>)>;

fn stamp(path: &str) -> Stamp {
    std::fs::metadata(path)
        .ok()
        .map(|m| (m.len(), m.modified().ok()))
}

/// Reads the history `path` date by date (the first pass of the module
/// docs) with the dates `filter` keeps and the curve options `opts`;
/// `None` when the file is to be read whole instead.
///
/// # Errors
/// [`ErrorKind::InvalidInput`] with every problem of the file, as
/// [`crate::input::snapshot::read_snapshot`] reports them;
/// [`ErrorKind::Usage`] when `from` is after `to` or the filter keeps no
/// date of the file, as [`super::filter_dates`] reports it. Curve errors
/// are not errors here: [`HistoryPlan::curves`] returns them, so that a
/// command checks its own options first, as it does on a file read whole.
pub fn plan(path: &str, filter: &DateFilter, opts: &MarketOptions) -> Result<Option<HistoryPlan>> {
    let before = stamp(path);
    let Some(mut reader) = DateReader::open(path) else {
        return Ok(None);
    };
    let mut tally = Tally {
        span: DateSpan::default(),
        dates: 0,
        tranches: 0,
        warnings: CappedProblems::new(MAX_LINES_PER_FILE),
    };
    let mut curve_errors: Option<Error> = None;
    // Each chunk's curves are bootstrapped while the next chunk is read.
    let mut chunk = tally.read_chunk(&mut reader, filter);
    while !chunk.is_empty() {
        let (built, next) = rayon::join(
            || -> Vec<Result<()>> {
                chunk
                    .par_iter()
                    .map(|md| Pool::build(md, opts, path).map(|_| ()))
                    .collect()
            },
            || tally.read_chunk(&mut reader, filter),
        );
        if let Err(e) = collect_all(built) {
            match &mut curve_errors {
                None => curve_errors = Some(e),
                Some(first) => first.problems.extend(e.problems),
            }
        }
        chunk = next;
    }
    if stamp(path) != before {
        return Ok(None);
    }
    match reader.end() {
        Some(ReadEnd::Complete) => {}
        Some(ReadEnd::Invalid) => return Err(reader.into_error().unwrap_or_else(|| changed(path))),
        _ => return Ok(None),
    }
    filter.check()?;
    if tally.dates == 0 {
        return Err(filter.none_kept(path, &tally.span.to_string()));
    }
    Ok(Some(HistoryPlan {
        path: path.to_string(),
        filter: *filter,
        stamp: before,
        dates: tally.dates,
        tranches: tally.tranches,
        warnings: tally.warnings,
        curve_errors,
    }))
}

/// What the first pass counts as it reads.
struct Tally {
    /// Every date of the file.
    span: DateSpan,
    /// Dates kept, their tranche quotes and warnings.
    dates: usize,
    tranches: usize,
    warnings: CappedProblems,
}

impl Tally {
    /// The next [`CHUNK_DATES`] dates `filter` keeps, counted (fewer at the
    /// end of the file or at a problem).
    fn read_chunk(&mut self, reader: &mut DateReader, filter: &DateFilter) -> Vec<MarketDate> {
        let mut chunk = Vec::with_capacity(CHUNK_DATES);
        for block in reader {
            self.span.add(block.date.date);
            if !filter.keeps(block.date.date) {
                continue;
            }
            self.dates += 1;
            self.tranches += block.date.tranches.len();
            for w in &block.warnings {
                self.warnings.push(w);
            }
            chunk.push(block.date);
            if chunk.len() == CHUNK_DATES {
                break;
            }
        }
        chunk
    }
}

impl HistoryPlan {
    /// The file, as named in messages.
    pub fn path(&self) -> &str {
        &self.path
    }

    /// Dates the filter keeps.
    pub fn dates(&self) -> usize {
        self.dates
    }

    /// Tranche quotes on those dates.
    pub fn tranches(&self) -> usize {
        self.tranches
    }

    /// The warnings of those dates, as the file read whole has them, capped
    /// as they are printed.
    pub fn warnings(&self) -> &CappedProblems {
        &self.warnings
    }

    /// Checks that every date's index curve was bootstrapped.
    ///
    /// # Errors
    /// The curve errors of every date kept (unfittable index quotes, bad
    /// zero pillars), all of them, in date order: what a command gets from
    /// its dates read whole.
    pub fn curves(&self) -> Result<()> {
        match &self.curve_errors {
            Some(e) => Err(e.clone()),
            None => Ok(()),
        }
    }

    /// Reads the file again (the second pass): the dates kept, in order,
    /// [`CHUNK_DATES`] at a time.
    ///
    /// # Errors
    /// [`ErrorKind::Io`] when the file changed since the first pass (then,
    /// or while it is read again).
    pub fn chunks(&self) -> Result<DateChunks<'_>> {
        let reader = DateReader::open(&self.path)
            .filter(|_| stamp(&self.path) == self.stamp)
            .ok_or_else(|| self.changed())?;
        Ok(DateChunks {
            plan: self,
            reader,
            read: 0,
            ended: false,
        })
    }

    /// Computes each chunk of dates kept ([`Self::chunks`]) with `compute`
    /// and hands the results to `emit` in date order. A chunk is computed,
    /// and the next one read, on the thread pool while the result of the
    /// chunk before goes to `emit` on this thread, so printing and reading
    /// take no time from the computing.
    ///
    /// # Errors
    /// [`Self::chunks`]' errors, `compute`'s (the chunks before it emitted)
    /// and `emit`'s, whichever comes first.
    pub fn for_each_chunk<T: Send, E: From<Error>>(
        &self,
        compute: &(dyn Fn(&[MarketDate]) -> Result<T> + Sync),
        emit: &mut dyn FnMut(T) -> std::result::Result<(), E>,
    ) -> std::result::Result<(), E> {
        let mut chunks = self.chunks()?;
        let mut next = chunks.next();
        let mut waiting: Option<T> = None;
        while let Some(chunk) = next.take() {
            let chunk = chunk?;
            let (computed, following, emitted) = std::thread::scope(|s| {
                let work = s.spawn(|| rayon::join(|| compute(&chunk), || chunks.next()));
                let emitted = waiting.take().map_or(Ok(()), &mut *emit);
                let (computed, following) = work
                    .join()
                    .unwrap_or_else(|panic| std::panic::resume_unwind(panic));
                (computed, following, emitted)
            });
            emitted?;
            waiting = Some(computed?);
            next = following;
        }
        match waiting {
            Some(last) => emit(last),
            None => Ok(()),
        }
    }

    /// The error of a file that changed between the passes.
    fn changed(&self) -> Error {
        changed(&self.path)
    }
}

/// The error of a file `path` that changed while it was read.
fn changed(path: &str) -> Error {
    Error::msg(
        ErrorKind::Io,
        format!("{path}: the file changed while it was being read; run the command again"),
    )
}

/// The dates a [`HistoryPlan`] keeps, read again, [`CHUNK_DATES`] at a
/// time ([`HistoryPlan::chunks`]).
pub struct DateChunks<'a> {
    plan: &'a HistoryPlan,
    reader: DateReader<'a>,
    /// Dates handed over.
    read: usize,
    ended: bool,
}

impl Iterator for DateChunks<'_> {
    type Item = Result<Vec<MarketDate>>;

    /// The next dates; an error when the file turns out to have changed
    /// since the first pass.
    fn next(&mut self) -> Option<Self::Item> {
        if self.ended {
            return None;
        }
        let filter = self.plan.filter;
        let chunk: Vec<MarketDate> = (&mut self.reader)
            .map(|block| block.date)
            .filter(|md| filter.keeps(md.date))
            .take(CHUNK_DATES)
            .collect();
        self.read += chunk.len();
        if chunk.len() == CHUNK_DATES {
            return Some(Ok(chunk));
        }
        self.ended = true;
        let whole = self.reader.end() == Some(ReadEnd::Complete) && self.read == self.plan.dates;
        match (whole, chunk.is_empty()) {
            (false, _) => Some(Err(self.plan.changed())),
            (true, true) => None,
            (true, false) => Some(Ok(chunk)),
        }
    }
}
