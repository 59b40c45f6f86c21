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
//! # Numbers that look like fractions are a warning
//!
//! A recovery below 1, every index spread of a date below 1 bp, every zero
//! rate below 0.1% in size, or every detachment at most 1% is read as
//! written, with a warning in [`Snapshot::warnings`] naming the likely
//! mistake: a fraction typed in a percent or bp column.
//!
//! # Tranches that do not tile are a warning, not an error
//!
//! Tranches of one date and maturity whose bounds, sorted by attachment, do
//! not run from 0 upward without gaps or overlaps are still read: curve and
//! pricing work do not need a tiling, base correlation does. Each break is a
//! [`Problem`] in [`Snapshot::warnings`]; commands decide what to do with it.
//!
//! # A long history, date by date
//!
//! [`DateReader`] reads a regular file whose dates come in ascending
//! blocks one date at a time, by the same rules, keeping only the date
//! being read and the problems found, which it reports as
//! [`parse_snapshot`] does; any other file is for [`read_snapshot`].

use super::cells::{self, invalid, pct, quoted, Header, Record, Row as Cells};
#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::{Problem, Result};
use crate::market::{
    tiles_from_zero, IndexQuote, MarketDate, Quote, Snapshot, TrancheQuote, ZeroPillar,
};
use chrono::NaiveDate;
use std::collections::{BTreeMap, HashMap, HashSet};

mod by_date;
pub use by_date::{DateBlock, DateReader, ReadEnd};

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
const REQUIRED: std::ops::Range<usize> = 0..8;

const DATE: usize = 0;
const INSTRUMENT: usize = 1;
const MATURITY: usize = 2;
const ATTACH: usize = 3;
const DETACH: usize = 4;
const QUOTE_KIND: usize = 5;
const QUOTE: usize = 6;
const COUPON: usize = 7;
const RECOVERY: usize = 8;

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
/// - a number outside its plausible domain (see [`super::domain`]): a
///   spread or coupon outside [0, 100000) bp, an upfront outside (-100,
///   100) percent, a zero rate outside (-50, 50) percent, an attachment
///   neither 0 nor in [0.01, 100] percent, a detachment outside [0.01, 100]
///   percent or less than 0.01 percent above its attachment, a recovery
///   outside [0, 100) percent;
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
    let mut problems = Vec::new();
    let records = cells::records(text, path, &mut problems);

    let Some(sheet) = sheet(path, records.first(), &mut problems) else {
        return Err(invalid(problems));
    };
    if records.len() == 1 {
        problems.push(cells::header_only(&sheet, "quote"));
        return Err(invalid(problems));
    }

    let mut rows = Vec::new();
    let mut rejected = Rejected::default();
    for rec in &records[1..] {
        match row(Cells::new(&sheet, rec, &mut problems)) {
            Some(row) => rows.push(row),
            None => rejected.note(&sheet, rec),
        }
    }

    let snapshot = assemble(&sheet, rows, &rejected, &mut problems);
    cells::finish(snapshot, problems)
}

/// The header of a snapshot file (its first record), or `None` when rows
/// cannot be read: an empty file, no header row, a required column
/// missing. Unknown and repeated names are reported but rows are still
/// checked.
fn sheet<'a>(
    path: &'a str,
    first: Option<&Record>,
    problems: &mut Vec<Problem>,
) -> Option<Header<'a>> {
    let Some(header) = first else {
        problems.push(cells::empty_file(path, "quote"));
        return None;
    };
    let sheet = cells::header(path, header, &COLUMNS, problems)?;
    sheet.require(REQUIRED, problems).then_some(sheet)
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
    fn note(&mut self, sheet: &Header, rec: &Record) {
        let date = sheet
            .col(DATE)
            .and_then(|i| rec.cells.get(i))
            .and_then(|s| cells::parse_iso_date(s.trim()).ok());
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
    fn is_empty(&self) -> bool {
        !self.undated && self.dates.is_empty()
    }
}

fn instrument(c: &mut Cells) -> Option<Instrument> {
    const ALL: [Instrument; 3] = [Instrument::Index, Instrument::Tranche, Instrument::Zero];
    c.one_of(INSTRUMENT, &["index", "tranche", "zero"])
        .map(|i| ALL[i])
}

fn kind(c: &mut Cells) -> Option<Kind> {
    const ALL: [Kind; 3] = [Kind::Spread, Kind::Upfront, Kind::ZeroRate];
    c.one_of(QUOTE_KIND, &ALL.map(Kind::name)).map(|i| ALL[i])
}

/// Checks the whole row; `Some` only when every cell is right.
fn row(mut c: Cells) -> Option<Row> {
    if !c.width() {
        return None;
    }

    let date = c.date(DATE, "a trade date");
    let instrument = instrument(&mut c);
    let maturity = match instrument {
        Some(Instrument::Zero) => c.date(MATURITY, "a pillar date"),
        _ => c.date(MATURITY, "a maturity date"),
    };
    let kind = kind(&mut c);
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
            c.bad(QUOTE_KIND, msg);
        }
    }

    let what = match kind {
        Some(Kind::Spread) => "a spread in bp",
        Some(Kind::Upfront) => "an upfront in percent",
        Some(Kind::ZeroRate) => "a zero rate in percent",
        None => "a quote",
    };
    let quote = match kind {
        Some(Kind::Spread) => c.spread_bp(QUOTE, what, false),
        Some(Kind::Upfront) => c.number(QUOTE, what).and_then(|v| c.upfront_pct(QUOTE, v)),
        Some(Kind::ZeroRate) => c
            .number(QUOTE, what)
            .and_then(|v| c.zero_rate_pct(QUOTE, v)),
        None => {
            c.number(QUOTE, what);
            None
        }
    };

    let mut bounds = None;
    match instrument {
        Some(Instrument::Tranche) => bounds = c.bounds_pct(ATTACH, DETACH),
        Some(i) => {
            let row = i.article();
            c.empty(ATTACH, row, "bounds go on tranche rows");
            c.empty(DETACH, row, "bounds go on tranche rows");
        }
        None => {}
    }

    let mut coupon = None;
    match kind {
        Some(Kind::Upfront) => {
            coupon = c.coupon_bp(
                COUPON,
                "a running coupon in bp (upfront_pct quotes need one)",
            );
        }
        Some(k) => {
            let row = if k == Kind::Spread {
                "a spread_bp"
            } else {
                "a zero_rate_pct"
            };
            c.empty(COUPON, row, "a coupon goes with upfront_pct quotes only");
        }
        None => {}
    }

    let mut recovery = None;
    match instrument {
        Some(Instrument::Index) if !c.cell(RECOVERY).is_empty() => {
            let r = c.recovery_pct(RECOVERY);
            recovery = r.map(|r| (r / 100.0, c.cell(RECOVERY).to_string()));
        }
        Some(Instrument::Index) => {}
        Some(i) => c.empty(RECOVERY, i.article(), "recovery goes on index rows"),
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
                quoted(c.cell(MATURITY))
            );
            c.bad(MATURITY, msg);
        }
    }

    if !c.ok {
        return None;
    }
    let (date, maturity, instrument, kind, quote) = (date?, maturity?, instrument?, kind?, quote?);
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
        line: c.line(),
        date,
        maturity,
        body,
        recovery,
    })
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
    sheet: &Header,
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
        let (day, no_index) = assemble_date(sheet, date, rows, problems, &mut warnings);
        if let Some(p) = no_index.filter(|_| !rejected.covers(date)) {
            problems.push(p);
        }
        dates.push(day);
    }

    Snapshot {
        path: sheet.path.to_string(),
        dates,
        warnings,
    }
}

/// One date's rows (all of them, in line order) checked together and
/// sorted: duplicates and recovery disagreements go to `problems`, the
/// date's warnings to `warnings`. A date with no index quote comes back
/// with its problem apart, for the caller to report unless a rejected row
/// may have been that quote.
fn assemble_date(
    sheet: &Header,
    date: NaiveDate,
    rows: Vec<Row>,
    problems: &mut Vec<Problem>,
    warnings: &mut Vec<Problem>,
) -> (MarketDate, Option<Problem>) {
    // Rows are in line order within a date.
    let mut seen: HashMap<Key, u64> = HashMap::new();
    for r in &rows {
        let key = match &r.body {
            Body::Index(_) => Key::Index(r.maturity),
            Body::Tranche { attach, detach, .. } => Key::Tranche(
                r.maturity,
                (attach + 0.0).to_bits(),
                (detach + 0.0).to_bits(),
            ),
            Body::Zero(_) => Key::Zero(r.maturity),
        };
        let Some(first) = seen.get(&key) else {
            seen.insert(key, r.line);
            continue;
        };
        let what = match &r.body {
            Body::Index(_) => format!(
                "one index quote per maturity on {date}, found a second for {}",
                r.maturity
            ),
            Body::Tranche { attach, detach, .. } => format!(
                "one tranche quote per maturity and bounds on {date}, found a second for {} [{}, {}] percent",
                r.maturity,
                pct(*attach),
                pct(*detach)
            ),
            Body::Zero(_) => format!(
                "one zero rate per pillar date on {date}, found a second for {}",
                r.maturity
            ),
        };
        problems.push(Problem::at(
            sheet.at(r.line, MATURITY),
            format!("expected {what} (lines {first} and {})", r.line),
        ));
    }

    let index_rows: Vec<&Row> = rows
        .iter()
        .filter(|r| matches!(r.body, Body::Index(_)))
        .collect();
    let recovery = index_rows
        .first()
        .and_then(|r| r.recovery.as_ref().map(|x| x.0));
    let recovery_at = index_rows.first().and_then(|r| {
        r.recovery
            .as_ref()
            .map(|(v, text)| (r.line, *v, text.clone()))
    });
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

    let no_index = if index_rows.is_empty() {
        missing_index(sheet, date, &rows)
    } else {
        None
    };

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

    tiling_warnings(sheet, date, &tranches, warnings);
    unit_warnings(
        sheet,
        date,
        recovery_at,
        (&index, &tranches, &zeros),
        warnings,
    );
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

    (
        MarketDate {
            date,
            recovery,
            index,
            tranches,
            zeros,
        },
        no_index,
    )
}

/// The problem of a date without an index quote: its tranches cannot be
/// priced, or it has only zero rows.
fn missing_index(sheet: &Header, date: NaiveDate, rows: &[Row]) -> Option<Problem> {
    let first_tranche = rows.iter().find(|r| matches!(r.body, Body::Tranche { .. }));
    if let Some(t) = first_tranche {
        return Some(Problem::at(
            sheet.at(t.line, DATE),
            format!(
                "expected an index quote on {date} to price its tranches, found none (first tranche on line {})",
                t.line
            ),
        ));
    }
    let z = rows.first()?;
    Some(Problem::at(
        sheet.at(z.line, DATE),
        format!(
            "expected an index quote on {date}, found only zero rows (first on line {}): nothing to price",
            z.line
        ),
    ))
}

/// Warnings for a date whose numbers all look like fractions typed in a
/// percent or bp column: a recovery below 1 (0.4 for 40%), every index
/// spread below 1 bp (0.6 for 60 bp), every zero rate below 0.1 in size
/// (0.0215 for 2.15%), every detachment at most 1 (0.03 for 3%). Each is
/// read as written; the warning names the likely mistake.
fn unit_warnings(
    sheet: &Header,
    date: NaiveDate,
    recovery: Option<(u64, f64, String)>,
    (index, tranches, zeros): (&[IndexQuote], &[TrancheQuote], &[ZeroPillar]),
    warnings: &mut Vec<Problem>,
) {
    use crate::output::significant;
    if let Some((line, r, text)) = recovery {
        if r > 0.0 && r < 0.01 {
            warnings.push(Problem::at(
                sheet.at(line, RECOVERY),
                format!(
                    "a recovery of {} on {date} is read as {}%; if it is a fraction ({} meaning \
                     {}%), write {} (recovery_pct is in percent)",
                    quoted(&text),
                    text,
                    text,
                    significant(r * 1e4, 6),
                    significant(r * 1e4, 6)
                ),
            ));
        }
    }
    let spreads: Vec<(u64, f64)> = index
        .iter()
        .filter_map(|q| match q.quote {
            Quote::Spread(s) => Some((q.line, s * 1e4)),
            Quote::Upfront { .. } => None,
        })
        .collect();
    let largest = spreads.iter().map(|s| s.1).fold(0.0, f64::max);
    if spreads.len() == index.len() && largest > 0.0 && largest < 1.0 {
        warnings.push(Problem::at(
            sheet.at(spreads[0].0, QUOTE),
            format!(
                "every index spread of {date} is below 1 bp (the largest is {}): spreads are in \
                 basis points; if these are percents ({} meaning {} bp), multiply them by 100",
                significant(largest, 6),
                significant(largest, 6),
                significant(largest * 100.0, 6)
            ),
        ));
    }
    let largest = zeros
        .iter()
        .map(|z| z.rate.abs() * 100.0)
        .fold(0.0, f64::max);
    if let (Some(z), true) = (zeros.first(), largest > 0.0 && largest < 0.1) {
        warnings.push(Problem::at(
            sheet.at(z.line, QUOTE),
            format!(
                "every zero rate of {date} is below 0.1% in size (the largest is {}): zero rates \
                 are in percent; if these are fractions ({} meaning {}%), multiply them by 100",
                significant(largest, 6),
                significant(largest, 6),
                significant(largest * 100.0, 6)
            ),
        ));
    }
    let largest = tranches
        .iter()
        .map(|t| t.detach * 100.0)
        .fold(0.0, f64::max);
    if let (Some(t), true) = (tranches.first(), largest <= 1.0) {
        warnings.push(Problem::at(
            sheet.at(t.line, DETACH),
            format!(
                "every detachment of {date} is at most 1% of the pool (the largest is {}): bounds \
                 are in percent; if these are fractions ({} meaning {}%), multiply them by 100",
                significant(largest, 6),
                significant(largest, 6),
                significant(largest * 100.0, 6)
            ),
        ));
    }
}

/// One warning per break in the tiling of each maturity's tranches
/// (`tranches` sorted by maturity then attachment).
fn tiling_warnings(
    sheet: &Header,
    date: NaiveDate,
    tranches: &[TrancheQuote],
    warnings: &mut Vec<Problem>,
) {
    for same in tranches.chunk_by(|a, b| a.maturity == b.maturity) {
        let maturity = same[0].maturity;
        let group: Vec<&TrancheQuote> = same.iter().collect();
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
    }
}
