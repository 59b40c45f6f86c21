//! Snapshot reader: the quotes file (CSV) to a checked [`Snapshot`].
//!
//! The file format is the "Snapshot file" section of the conventions: a
//! header row naming the columns `date`, `instrument`, `maturity`,
//! `attach_pct`, `detach_pct`, `quote_kind`, `quote`, `coupon_bp` and,
//! optionally, `recovery_pct`, in any order; then one quote a row, for any
//! number of trade dates, rows in any order.
//!
//! Units change here and nowhere else: basis points are divided by 1e4 and
//! percentages by 100, so a [`Snapshot`] holds fractions only.
//!
//! # Every problem, located
//!
//! The reader does not stop at the first bad cell: it checks every row and
//! returns all the problems it found as one [`ErrorKind::InvalidInput`]
//! error, sorted by line. Each problem names the file, the 1-based line (the
//! header is line 1, or the line it sits on when blank lines come first), the
//! 1-based column (the field index) and the column's header name, and says
//! "expected X, found Y" quoting the cell as written, for example
//!
//! ```text
//! quotes.csv:43:7: column "quote": expected a number, found "12,5"
//! ```
//!
//! Cells are trimmed of surrounding whitespace. A UTF-8 byte-order mark at
//! the start is accepted. Blank lines anywhere are not rows and are skipped
//! (line numbers still count them); every other line is a row and is either
//! accepted or reported, never silently dropped.
//!
//! # Tranches that do not tile are a warning, not an error
//!
//! Tranches of one date and maturity whose bounds, sorted by attachment, do
//! not run from 0 upward without gaps or overlaps are still read: curve and
//! pricing work do not need a tiling, base correlation does. Each break is a
//! [`Problem`] in [`Snapshot::warnings`]; commands decide what to do with it.

use crate::error::{Error, ErrorKind, Location, Problem, Result};
use crate::market::{
    tiles_from_zero, IndexQuote, MarketDate, Quote, Snapshot, TrancheQuote, ZeroPillar,
};
use chrono::NaiveDate;
use std::collections::{BTreeMap, HashMap, HashSet};

/// Column names, in the order the conventions list them.
const COLUMNS: [&str; 9] = [
    "date",
    "instrument",
    "maturity",
    "attach_pct",
    "detach_pct",
    "quote_kind",
    "quote",
    "coupon_bp",
    "recovery_pct",
];
/// Columns the header must have: all but `recovery_pct`.
const REQUIRED: usize = 8;

const DATE: usize = 0;
const INSTRUMENT: usize = 1;
const MATURITY: usize = 2;
const ATTACH: usize = 3;
const DETACH: usize = 4;
const QUOTE_KIND: usize = 5;
const QUOTE: usize = 6;
const COUPON: usize = 7;
const RECOVERY: usize = 8;

/// Longest cell text quoted back in a message, in characters.
const QUOTE_CHARS: usize = 60;

/// Reads a snapshot file, or standard input when `path` is `-`.
///
/// # Errors
/// [`ErrorKind::Io`] when the file cannot be read; otherwise as
/// [`parse_snapshot`].
pub fn read_snapshot(path: &str) -> Result<Snapshot> {
    let text = crate::input::read_source(path)?;
    parse_snapshot(&text, path)
}

/// Parses the text of a snapshot file; `path` is used only in messages and
/// in [`Snapshot::path`].
///
/// Values are converted to fractions: `spread_bp`, `coupon_bp` by 1e4;
/// `upfront_pct`, `zero_rate_pct`, `attach_pct`, `detach_pct`,
/// `recovery_pct` by 100. Dates come out ascending; per date, index quotes
/// by maturity, tranches by maturity then attachment (then detachment),
/// zero pillars by date.
///
/// # Errors
/// [`ErrorKind::InvalidInput`] with one located [`Problem`] per broken rule,
/// all of them, sorted by line:
///
/// - the header: an unknown or repeated column name, a missing required
///   column (all but `recovery_pct` are required); an empty file or a header
///   with no rows after it ("no quote rows");
/// - a row with more or fewer cells than the header;
/// - a required cell left empty, or a cell that must be empty but is not
///   (bounds on index and zero rows, a coupon on anything but `upfront_pct`
///   rows, a recovery on anything but index rows);
/// - an unknown `instrument` or `quote_kind`, or a kind that does not fit
///   the instrument (zero rows take `zero_rate_pct`, index and tranche rows
///   `spread_bp` or `upfront_pct`);
/// - a date that is not ISO 8601 `YYYY-MM-DD`, a number that does not
///   parse, or is NaN or infinite;
/// - a negative spread or coupon, an upfront or zero rate outside
///   (-100, 100) percent, bounds outside [0, 100] percent or an attachment
///   not below its detachment, a recovery outside [0, 100) percent;
/// - a maturity (pillar date) on or before the trade date;
/// - two quotes of one date for the same instrument, maturity and bounds;
/// - index rows of one date that disagree on the recovery (an empty cell
///   next to a number is a disagreement);
/// - a date with tranches but no index quote, or with zero rows only.
///
/// # Examples
///
/// ```
/// use skewbook::input::snapshot::parse_snapshot;
/// use skewbook::market::Quote;
///
/// let text = "date,instrument,maturity,attach_pct,detach_pct,quote_kind,quote,coupon_bp\n\
///             2026-06-19,index,2031-06-20,,,spread_bp,60,\n\
///             2026-06-19,tranche,2031-06-20,0,3,upfront_pct,35,500\n";
/// let snap = parse_snapshot(text, "q.csv")?;
/// let day = &snap.dates[0];
/// assert_eq!(day.index[0].quote, Quote::Spread(60.0 / 1e4));
/// assert_eq!(day.tranches[0].detach, 0.03);
/// assert_eq!(day.tranches[0].quote, Quote::Upfront { upfront: 0.35, coupon: 0.05 });
/// # Ok::<(), skewbook::Error>(())
/// ```
pub fn parse_snapshot(text: &str, path: &str) -> Result<Snapshot> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let mut problems = Vec::new();
    let records = read_records(text, path, &mut problems);

    let Some((header_line, header)) = records.first() else {
        problems.push(Problem::at(
            plain_location(path, 1),
            "expected a header row and quote rows, found an empty file (no quote rows)",
        ));
        return Err(invalid(problems));
    };
    let Some(sheet) = Sheet::from_header(path, *header_line, header, &mut problems) else {
        return Err(invalid(problems));
    };
    if records.len() == 1 {
        problems.push(Problem::at(
            plain_location(path, *header_line),
            "expected quote rows after the header, found none (no quote rows)",
        ));
        return Err(invalid(problems));
    }

    let mut rows = Vec::new();
    let mut rejected = Rejected::default();
    for (line, rec) in &records[1..] {
        let mut cells = Cells {
            sheet: &sheet,
            rec,
            line: *line,
            problems: &mut problems,
            ok: true,
        };
        match cells.row() {
            Some(row) => rows.push(row),
            None => rejected.note(&sheet, rec),
        }
    }

    let snapshot = assemble(&sheet, rows, &rejected, &mut problems);
    if problems.is_empty() {
        Ok(snapshot)
    } else {
        Err(invalid(problems))
    }
}

fn invalid(mut problems: Vec<Problem>) -> Error {
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

fn plain_location(path: &str, line: u64) -> Location {
    Location {
        path: path.to_string(),
        line,
        column: None,
        header: None,
    }
}

/// The cell as written, quoted and escaped for a message (long cells cut).
fn quoted(s: &str) -> String {
    if s.chars().count() > QUOTE_CHARS {
        let cut: String = s.chars().take(QUOTE_CHARS).collect();
        format!("{cut:?}...")
    } else {
        format!("{s:?}")
    }
}

/// A fraction as a percent number for messages (7, not 7.000000000000001).
fn pct(x: f64) -> String {
    let v = (x * 100.0 * 1e9).round() / 1e9;
    format!("{}", v + 0.0)
}

/// Every non-blank record with its 1-based line. A CSV syntax error (only
/// possible in pathological input) is reported and ends the reading.
fn read_records(
    text: &str,
    path: &str,
    problems: &mut Vec<Problem>,
) -> Vec<(u64, csv::StringRecord)> {
    let mut rdr = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .from_reader(text.as_bytes());
    let mut lines = LineCounter::new(text);
    let mut out = Vec::new();
    for r in rdr.records() {
        match r {
            Ok(rec) => {
                let line = rec.position().map_or(1, |p| lines.record_line(p.byte()));
                if rec.len() == 1 && rec[0].trim().is_empty() {
                    continue;
                }
                out.push((line, rec));
            }
            Err(e) => {
                let line = e.position().map_or(1, |p| lines.record_line(p.byte()));
                problems.push(Problem::at(
                    plain_location(path, line),
                    format!("expected CSV text, found an unreadable record ({e})"),
                ));
                break;
            }
        }
    }
    out
}

/// Line numbers from byte offsets.
///
/// # The csv crate's own line numbers are off
///
/// `csv::Position::line` of a record is taken where the reader starts
/// looking for it: before the blank lines in front of it, and before the
/// `\n` of a preceding `\r\n`. So lines are counted here from the byte
/// offset instead: skip the line breaks in front of the record, then count
/// the breaks (`\n`, `\r\n` or a lone `\r`, as csv reads them) before it.
struct LineCounter<'t> {
    bytes: &'t [u8],
    /// Offset up to which breaks are counted, and the line there.
    at: usize,
    line: u64,
}

impl<'t> LineCounter<'t> {
    fn new(text: &'t str) -> Self {
        LineCounter {
            bytes: text.as_bytes(),
            at: 0,
            line: 1,
        }
    }

    /// Line of the record whose reading began at byte `offset` (offsets
    /// come in increasing order).
    fn record_line(&mut self, offset: u64) -> u64 {
        let b = self.bytes;
        let mut start = (offset as usize).min(b.len());
        while start < b.len() && (b[start] == b'\n' || b[start] == b'\r') {
            start += 1;
        }
        if start < self.at {
            return self.line;
        }
        for i in self.at..start {
            let lone_cr = b[i] == b'\r' && b.get(i + 1) != Some(&b'\n');
            if b[i] == b'\n' || lone_cr {
                self.line += 1;
            }
        }
        self.at = start;
        self.line
    }
}

/// The header: where each known column sits.
struct Sheet<'a> {
    path: &'a str,
    /// Field index (0-based) of each column of [`COLUMNS`], when present.
    cols: [Option<usize>; 9],
    /// Number of cells in the header.
    width: usize,
    header_line: u64,
}

impl<'a> Sheet<'a> {
    /// Maps the header; `None` when a required column is missing (rows
    /// cannot be read then). Unknown and repeated names are reported but
    /// rows are still checked.
    fn from_header(
        path: &'a str,
        line: u64,
        header: &csv::StringRecord,
        problems: &mut Vec<Problem>,
    ) -> Option<Self> {
        let mut cols = [None; 9];
        for (i, raw) in header.iter().enumerate() {
            let name = raw.trim();
            let at = Location {
                path: path.to_string(),
                line,
                column: Some(i + 1),
                header: Some(name.to_string()),
            };
            match COLUMNS.iter().position(|c| *c == name) {
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
                        COLUMNS.join(", "),
                        quoted(name)
                    ),
                )),
            }
        }
        let mut complete = true;
        for id in 0..REQUIRED {
            if cols[id].is_none() {
                complete = false;
                problems.push(Problem::at(
                    Location {
                        path: path.to_string(),
                        line,
                        column: None,
                        header: Some(COLUMNS[id].to_string()),
                    },
                    format!(
                        "expected a column named {} in the header, found none",
                        quoted(COLUMNS[id])
                    ),
                ));
            }
        }
        complete.then_some(Sheet {
            path,
            cols,
            width: header.len(),
            header_line: line,
        })
    }

    /// Location of column `id` on `line` (the column is known to exist, or
    /// the location carries no column).
    fn at(&self, line: u64, id: usize) -> Location {
        Location {
            path: self.path.to_string(),
            line,
            column: self.cols[id].map(|i| i + 1),
            header: Some(COLUMNS[id].to_string()),
        }
    }
}

#[derive(Clone, Copy, PartialEq, Eq)]
enum Instrument {
    Index,
    Tranche,
    Zero,
}

impl Instrument {
    fn article(self) -> &'static str {
        match self {
            Instrument::Index => "an index",
            Instrument::Tranche => "a tranche",
            Instrument::Zero => "a zero",
        }
    }
}

#[derive(Clone, Copy, PartialEq, Eq)]
enum Kind {
    Spread,
    Upfront,
    ZeroRate,
}

impl Kind {
    fn name(self) -> &'static str {
        match self {
            Kind::Spread => "spread_bp",
            Kind::Upfront => "upfront_pct",
            Kind::ZeroRate => "zero_rate_pct",
        }
    }
}

/// What a checked row holds, in fractions.
enum Body {
    Index(Quote),
    Tranche {
        attach: f64,
        detach: f64,
        quote: Quote,
    },
    Zero(f64),
}

/// A row that passed every per-row check.
struct Row {
    line: u64,
    date: NaiveDate,
    maturity: NaiveDate,
    body: Body,
    /// Recovery (fraction) and the cell as written, on index rows.
    recovery: Option<(f64, String)>,
}

/// Dates that have a rejected row: checks that need all of a date's rows
/// (an index quote present, zero rows only) are skipped for them, so a typo
/// in an index row is reported once, not also as "no index quote".
#[derive(Default)]
struct Rejected {
    dates: HashSet<NaiveDate>,
    undated: bool,
}

impl Rejected {
    fn note(&mut self, sheet: &Sheet, rec: &csv::StringRecord) {
        let date = sheet.cols[DATE]
            .and_then(|i| rec.get(i))
            .and_then(|s| parse_iso_date(s.trim()).ok());
        match date {
            Some(d) => {
                self.dates.insert(d);
            }
            None => self.undated = true,
        }
    }
    fn covers(&self, d: NaiveDate) -> bool {
        self.undated || self.dates.contains(&d)
    }
}

/// Why a cell is not an ISO 8601 calendar date.
#[derive(Debug, PartialEq, Eq)]
enum DateError {
    Shape,
    NoSuchDay,
}

/// Strict `YYYY-MM-DD` (chrono alone would also take `2026-6-9`).
fn parse_iso_date(s: &str) -> std::result::Result<NaiveDate, DateError> {
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

/// Why a cell is not a usable number.
#[derive(Debug, PartialEq, Eq)]
enum NumberError {
    NotANumber,
    NotFinite,
}

/// A finite decimal number. Rust's parser accepts "nan", "inf" and
/// "infinity" (any case) and overflows "1e400" to infinity: all rejected.
fn parse_number(s: &str) -> std::result::Result<f64, NumberError> {
    match s.parse::<f64>() {
        Ok(v) if v.is_finite() => Ok(v),
        Ok(_) => Err(NumberError::NotFinite),
        Err(_) => Err(NumberError::NotANumber),
    }
}

/// One row being checked; every problem goes to `problems`, `ok` turns
/// false at the first.
struct Cells<'s, 'r, 'p> {
    sheet: &'s Sheet<'s>,
    rec: &'r csv::StringRecord,
    line: u64,
    problems: &'p mut Vec<Problem>,
    ok: bool,
}

impl Cells<'_, '_, '_> {
    fn bad(&mut self, id: usize, message: String) {
        self.ok = false;
        self.problems
            .push(Problem::at(self.sheet.at(self.line, id), message));
    }

    /// The trimmed cell of column `id` ("" when the optional column is absent).
    fn cell(&self, id: usize) -> &str {
        self.sheet.cols[id]
            .and_then(|i| self.rec.get(i))
            .map_or("", str::trim)
    }

    fn date(&mut self, id: usize, what: &str) -> Option<NaiveDate> {
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

    /// A required number; `what` names it in the message for an empty cell.
    fn number(&mut self, id: usize, what: &str) -> Option<f64> {
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
    fn checked(
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
    fn within(&mut self, id: usize, v: f64, range: &str, ok: impl Fn(f64) -> bool) -> Option<f64> {
        if ok(v) {
            Some(v)
        } else {
            let msg = format!("expected {range}, found {}", quoted(self.cell(id)));
            self.bad(id, msg);
            None
        }
    }

    /// A cell that must be empty on this kind of row.
    fn empty(&mut self, id: usize, row: &str, why: &str) {
        let s = self.cell(id);
        if !s.is_empty() {
            let msg = format!(
                "expected an empty cell on {row} row ({why}), found {}",
                quoted(s)
            );
            self.bad(id, msg);
        }
    }

    fn instrument(&mut self) -> Option<Instrument> {
        let s = self.cell(INSTRUMENT);
        let found = match s {
            "index" => return Some(Instrument::Index),
            "tranche" => return Some(Instrument::Tranche),
            "zero" => return Some(Instrument::Zero),
            "" => "an empty cell".to_string(),
            _ => quoted(s),
        };
        self.bad(
            INSTRUMENT,
            format!("expected one of \"index\", \"tranche\", \"zero\", found {found}"),
        );
        None
    }

    fn kind(&mut self) -> Option<Kind> {
        let s = self.cell(QUOTE_KIND);
        let found = match s {
            "spread_bp" => return Some(Kind::Spread),
            "upfront_pct" => return Some(Kind::Upfront),
            "zero_rate_pct" => return Some(Kind::ZeroRate),
            "" => "an empty cell".to_string(),
            _ => quoted(s),
        };
        self.bad(
            QUOTE_KIND,
            format!(
                "expected one of \"spread_bp\", \"upfront_pct\", \"zero_rate_pct\", found {found}"
            ),
        );
        None
    }

    /// Checks the whole row; `Some` only when every cell is right.
    fn row(&mut self) -> Option<Row> {
        let n = self.rec.len();
        let width = self.sheet.width;
        if n != width {
            let line = self.sheet.header_line;
            let (column, header, tail) = if n < width {
                let name = self.rec_header_name(n);
                (n + 1, name, "the row ends before this column".to_string())
            } else {
                let extra: Vec<String> = self.rec.iter().skip(width).map(quoted).collect();
                (width + 1, None, format!("extra cells {}", extra.join(", ")))
            };
            self.ok = false;
            self.problems.push(Problem::at(
                Location {
                    path: self.sheet.path.to_string(),
                    line: self.line,
                    column: Some(column),
                    header,
                },
                format!("expected {width} cells as in the header (line {line}), found {n}: {tail}"),
            ));
            return None;
        }

        let date = self.date(DATE, "a trade date");
        let instrument = self.instrument();
        let maturity = match instrument {
            Some(Instrument::Zero) => self.date(MATURITY, "a pillar date"),
            _ => self.date(MATURITY, "a maturity date"),
        };
        let kind = self.kind();
        if let (Some(i), Some(k)) = (instrument, kind) {
            let fits = match i {
                Instrument::Zero => k == Kind::ZeroRate,
                Instrument::Index | Instrument::Tranche => k != Kind::ZeroRate,
            };
            if !fits {
                let expected = match i {
                    Instrument::Zero => "\"zero_rate_pct\"",
                    _ => "\"spread_bp\" or \"upfront_pct\"",
                };
                let msg = format!(
                    "expected {expected} on {} row, found {}",
                    i.article(),
                    quoted(k.name())
                );
                self.bad(QUOTE_KIND, msg);
            }
        }

        let what = match kind {
            Some(Kind::Spread) => "a spread in bp",
            Some(Kind::Upfront) => "an upfront in percent",
            Some(Kind::ZeroRate) => "a zero rate in percent",
            None => "a quote",
        };
        let raw = self.number(QUOTE, what);
        let quote = match (kind, raw) {
            (Some(Kind::Spread), Some(v)) => {
                self.within(QUOTE, v, "a spread of 0 bp or more", |v| v >= 0.0)
            }
            (Some(Kind::Upfront), Some(v)) => self.within(
                QUOTE,
                v,
                "an upfront above -100 and below 100 percent",
                |v| v > -100.0 && v < 100.0,
            ),
            (Some(Kind::ZeroRate), Some(v)) => self.within(
                QUOTE,
                v,
                "a zero rate above -100 and below 100 percent",
                |v| v > -100.0 && v < 100.0,
            ),
            _ => None,
        };

        let mut bounds = None;
        match instrument {
            Some(Instrument::Tranche) => {
                let in_range = |v: f64| (0.0..=100.0).contains(&v);
                let a = self.checked(
                    ATTACH,
                    "an attachment in percent",
                    "an attachment from 0 to 100 percent",
                    in_range,
                );
                let d = self.checked(
                    DETACH,
                    "a detachment in percent",
                    "a detachment from 0 to 100 percent",
                    in_range,
                );
                if let (Some(a), Some(d)) = (a, d) {
                    if a >= d {
                        let msg = format!(
                            "expected a detachment above the attachment {} (column {}), found {}",
                            quoted(self.cell(ATTACH)),
                            self.sheet.cols[ATTACH].map_or(0, |i| i + 1),
                            quoted(self.cell(DETACH))
                        );
                        self.bad(DETACH, msg);
                    } else {
                        bounds = Some((a, d));
                    }
                }
            }
            Some(i) => {
                let row = i.article();
                self.empty(ATTACH, row, "bounds go on tranche rows");
                self.empty(DETACH, row, "bounds go on tranche rows");
            }
            None => {}
        }

        let mut coupon = None;
        match kind {
            Some(Kind::Upfront) => {
                coupon = self.checked(
                    COUPON,
                    "a running coupon in bp (upfront_pct quotes need one)",
                    "a coupon of 0 bp or more",
                    |v| v >= 0.0,
                );
            }
            Some(k) => {
                let row = if k == Kind::Spread {
                    "a spread_bp"
                } else {
                    "a zero_rate_pct"
                };
                self.empty(COUPON, row, "a coupon goes with upfront_pct quotes only");
            }
            None => {}
        }

        let mut recovery = None;
        match instrument {
            Some(Instrument::Index) if !self.cell(RECOVERY).is_empty() => {
                let r = self.checked(
                    RECOVERY,
                    "a recovery in percent",
                    "a recovery from 0 up to (not including) 100 percent",
                    |v| (0.0..100.0).contains(&v),
                );
                recovery = r.map(|r| (r / 100.0, self.cell(RECOVERY).to_string()));
            }
            Some(Instrument::Index) => {}
            Some(i) => self.empty(RECOVERY, i.article(), "recovery goes on index rows"),
            None => {}
        }

        if let (Some(d), Some(m)) = (date, maturity) {
            if m <= d {
                let what = if instrument == Some(Instrument::Zero) {
                    "a pillar date"
                } else {
                    "a maturity"
                };
                let msg = format!(
                    "expected {what} after the trade date {d}, found {}",
                    quoted(self.cell(MATURITY))
                );
                self.bad(MATURITY, msg);
            }
        }

        if !self.ok {
            return None;
        }
        let (date, maturity, instrument, kind, quote) =
            (date?, maturity?, instrument?, kind?, quote?);
        let body = match (instrument, kind) {
            (Instrument::Zero, _) => Body::Zero(quote / 100.0),
            (_, Kind::ZeroRate) => return None, // ruled out by the fit check
            (i, k) => {
                let q = if k == Kind::Spread {
                    Quote::Spread(quote / 1e4)
                } else {
                    Quote::Upfront {
                        upfront: quote / 100.0,
                        coupon: coupon? / 1e4,
                    }
                };
                if i == Instrument::Index {
                    Body::Index(q)
                } else {
                    let (a, d) = bounds?;
                    Body::Tranche {
                        attach: a / 100.0,
                        detach: d / 100.0,
                        quote: q,
                    }
                }
            }
        };
        Some(Row {
            line: self.line,
            date,
            maturity,
            body,
            recovery,
        })
    }

    /// Header name of the 0-based field `i`, if it is a known column.
    fn rec_header_name(&self, i: usize) -> Option<String> {
        self.sheet
            .cols
            .iter()
            .position(|c| *c == Some(i))
            .map(|id| COLUMNS[id].to_string())
    }
}

/// What makes two quotes of one date the same instrument.
#[derive(PartialEq, Eq, Hash)]
enum Key {
    Index(NaiveDate),
    Tranche(NaiveDate, u64, u64),
    Zero(NaiveDate),
}

/// Cross-row checks (duplicates, recovery, completeness of a date), then
/// the sorted snapshot and its tiling warnings.
fn assemble(
    sheet: &Sheet,
    rows: Vec<Row>,
    rejected: &Rejected,
    problems: &mut Vec<Problem>,
) -> Snapshot {
    let mut by_date: BTreeMap<NaiveDate, Vec<Row>> = BTreeMap::new();
    for row in rows {
        by_date.entry(row.date).or_default().push(row);
    }

    let mut dates = Vec::new();
    let mut warnings = Vec::new();
    for (date, rows) in by_date {
        // Rows are in line order within a date.
        let mut seen: HashMap<Key, u64> = HashMap::new();
        for r in &rows {
            let (key, what) = match &r.body {
                Body::Index(_) => (
                    Key::Index(r.maturity),
                    format!("one index quote per maturity on {date}, found a second for {}", r.maturity),
                ),
                Body::Tranche { attach, detach, .. } => (
                    Key::Tranche(r.maturity, (attach + 0.0).to_bits(), (detach + 0.0).to_bits()),
                    format!(
                        "one tranche quote per maturity and bounds on {date}, found a second for {} [{}, {}] percent",
                        r.maturity,
                        pct(*attach),
                        pct(*detach)
                    ),
                ),
                Body::Zero(_) => (
                    Key::Zero(r.maturity),
                    format!("one zero rate per pillar date on {date}, found a second for {}", r.maturity),
                ),
            };
            if let Some(first) = seen.get(&key) {
                problems.push(Problem::at(
                    sheet.at(r.line, MATURITY),
                    format!("expected {what} (lines {first} and {})", r.line),
                ));
            } else {
                seen.insert(key, r.line);
            }
        }

        let index_rows: Vec<&Row> = rows
            .iter()
            .filter(|r| matches!(r.body, Body::Index(_)))
            .collect();
        let recovery = index_rows
            .first()
            .and_then(|r| r.recovery.as_ref().map(|x| x.0));
        if let Some(first) = index_rows.first() {
            let describe = |r: &Row| match &r.recovery {
                Some((_, text)) => quoted(text),
                None => "an empty cell".to_string(),
            };
            for r in &index_rows[1..] {
                if r.recovery.as_ref().map(|x| x.0) != first.recovery.as_ref().map(|x| x.0) {
                    problems.push(Problem::at(
                        sheet.at(r.line, RECOVERY),
                        format!(
                            "expected the same recovery on every index row of {date}, found {} here and {} on line {}",
                            describe(r),
                            describe(first),
                            first.line
                        ),
                    ));
                }
            }
        }

        if index_rows.is_empty() && !rejected.covers(date) {
            let first_tranche = rows.iter().find(|r| matches!(r.body, Body::Tranche { .. }));
            if let Some(t) = first_tranche {
                problems.push(Problem::at(
                    sheet.at(t.line, DATE),
                    format!(
                        "expected an index quote on {date} to price its tranches, found none (first tranche on line {})",
                        t.line
                    ),
                ));
            } else if let Some(z) = rows.first() {
                problems.push(Problem::at(
                    sheet.at(z.line, DATE),
                    format!(
                        "expected an index quote on {date}, found only zero rows (first on line {}): nothing to price",
                        z.line
                    ),
                ));
            }
        }

        let mut index = Vec::new();
        let mut tranches = Vec::new();
        let mut zeros = Vec::new();
        for r in rows {
            match r.body {
                Body::Index(quote) => index.push(IndexQuote {
                    maturity: r.maturity,
                    quote,
                    line: r.line,
                }),
                Body::Tranche {
                    attach,
                    detach,
                    quote,
                } => tranches.push(TrancheQuote {
                    maturity: r.maturity,
                    attach,
                    detach,
                    quote,
                    line: r.line,
                }),
                Body::Zero(rate) => zeros.push(ZeroPillar {
                    date: r.maturity,
                    rate,
                    line: r.line,
                }),
            }
        }
        index.sort_by_key(|q| (q.maturity, q.line));
        tranches.sort_by(|a, b| {
            a.maturity
                .cmp(&b.maturity)
                .then(a.attach.total_cmp(&b.attach))
                .then(a.detach.total_cmp(&b.detach))
                .then(a.line.cmp(&b.line))
        });
        zeros.sort_by_key(|z| (z.date, z.line));

        tiling_warnings(sheet, date, &tranches, &mut warnings);
        // Past the last index maturity the hazard curve is only extended flat.
        if let Some(last) = index.last().map(|q| q.maturity) {
            let mut seen = Vec::new();
            for t in tranches.iter().filter(|t| t.maturity > last) {
                if !seen.contains(&t.maturity) {
                    seen.push(t.maturity);
                    warnings.push(Problem::at(
                        sheet.at(t.line, MATURITY),
                        format!(
                            "tranches of {date} maturing {} run past the last index maturity {last}: the hazard curve is extended flat beyond it",
                            t.maturity
                        ),
                    ));
                }
            }
        }

        dates.push(MarketDate {
            date,
            recovery,
            index,
            tranches,
            zeros,
        });
    }

    Snapshot {
        path: sheet.path.to_string(),
        dates,
        warnings,
    }
}

/// One warning per break in the tiling of each maturity's tranches
/// (`tranches` sorted by maturity then attachment).
fn tiling_warnings(
    sheet: &Sheet,
    date: NaiveDate,
    tranches: &[TrancheQuote],
    warnings: &mut Vec<Problem>,
) {
    let mut start = 0;
    while start < tranches.len() {
        let maturity = tranches[start].maturity;
        let end = start
            + tranches[start..]
                .iter()
                .take_while(|t| t.maturity == maturity)
                .count();
        let group: Vec<&TrancheQuote> = tranches[start..end].iter().collect();
        if !tiles_from_zero(&group) {
            let mut next = 0.0;
            let mut below: Option<u64> = None;
            for t in &group {
                if (t.attach - next).abs() > 1e-12 {
                    let from = match below {
                        Some(l) => format!("the detachment on line {l}"),
                        None => "the bottom of the pool".to_string(),
                    };
                    let (lo, hi, what) = if t.attach > next {
                        (next, t.attach, "a gap")
                    } else {
                        (t.attach, next, "an overlap")
                    };
                    warnings.push(Problem::at(
                        sheet.at(t.line, ATTACH),
                        format!(
                            "tranches of {date} maturing {maturity} do not tile from 0: expected an attachment of {} percent ({from}), found {} on line {}: {what} from {} to {} percent",
                            pct(next),
                            pct(t.attach),
                            t.line,
                            pct(lo),
                            pct(hi)
                        ),
                    ));
                }
                next = t.detach;
                below = Some(t.line);
            }
        }
        start = end;
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

    #[test]
    fn line_numbers_survive_crlf_lone_cr_and_blank_lines() {
        let text = "h\r\na\r\n\r\nb\rc\n\n\nd\n\"e\nf\"\ng";
        let mut rdr = csv::ReaderBuilder::new()
            .has_headers(false)
            .from_reader(text.as_bytes());
        let mut lines = LineCounter::new(text);
        let got: Vec<(u64, String)> = rdr
            .records()
            .map(|r| {
                let r = r.expect("record");
                let line = lines.record_line(r.position().expect("position").byte());
                (line, r[0].to_string())
            })
            .collect();
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
        assert_eq!(got, want);
    }
}
