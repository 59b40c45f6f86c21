//! Pools reader: the quotes of bespoke pools (CSV) to checked [`Pools`].
//!
//! A bespoke pool has its own hazard curve, bootstrapped as the index curve
//! is, from index-style quotes on the snapshot's trade date, and its own
//! recovery (conventions, "Bespoke pools and mapping"). The file (the
//! "Trades file (input)" section names it) has a header row naming these
//! columns, in any order:
//!
//! | column | meaning | unit, allowed values |
//! | --- | --- | --- |
//! | `pool` | the pool's name | text, not empty, not `index` (the snapshot's own pool) |
//! | `maturity` | maturity of the quoted pool contract | ISO 8601 date `YYYY-MM-DD`; one quote per pool and maturity |
//! | `quote_kind` | how the quote is expressed | `spread_bp` or `upfront_pct` |
//! | `quote` | the quote | bp for `spread_bp` (above 0, below 100000); percent for `upfront_pct` (above -100, below 100) |
//! | `coupon_bp` | running coupon of an `upfront_pct` quote | bp per year, 0 <= c < 100000; empty on `spread_bp` rows; the column may be left out when no row is `upfront_pct` |
//! | `recovery_pct` | the pool's recovery | percent, 0 up to (not including) 100; the same on every row of a pool |
//!
//! Then one quote a row, pools and maturities in any order. Units change
//! here: spreads and coupons by 1e4, upfronts and recoveries by 100, so a
//! [`BespokePool`] holds fractions only. Pools come out in the order they
//! first appear in the file, each pool's quotes by maturity.
//!
//! ```text
//! pool,maturity,quote_kind,quote,coupon_bp,recovery_pct
//! blue-energy,2029-06-20,spread_bp,95,,35
//! blue-energy,2031-06-20,spread_bp,120,,35
//! grey-retail,2031-06-20,upfront_pct,4.5,500,25
//! ```
//!
//! # Every problem, located
//!
//! As for snapshots, every problem of the file is reported at once, sorted
//! by line, each as `path:line:col: column "name": expected X, found Y`
//! quoting the cell as written; the file is read as every reader reads CSV
//! (byte-order mark accepted, cells trimmed, blank lines skipped but
//! counted).
//!
//! Whether each maturity comes after the trade date depends on the
//! snapshot: [`check_against`] makes that check once it is read.

use super::cells::{self, invalid, quoted, Header, Row};
use super::trades::INDEX_POOL;
use crate::error::{Location, Problem, Result};
use crate::market::{IndexQuote, Quote};
use chrono::NaiveDate;
use std::collections::HashMap;

/// Column names, in the order the conventions list them.
const COLUMNS: [&str; 6] = [
    "pool",
    "maturity",
    "quote_kind",
    "quote",
    "coupon_bp",
    "recovery_pct",
];
const POOL: usize = 0;
const MATURITY: usize = 1;
const QUOTE_KIND: usize = 2;
const QUOTE: usize = 3;
const COUPON: usize = 4;
const RECOVERY: usize = 5;
/// Columns the header must have: all but `coupon_bp`.
const REQUIRED: [usize; 5] = [POOL, MATURITY, QUOTE_KIND, QUOTE, RECOVERY];

/// One bespoke pool: its recovery and its index-style quotes.
#[derive(Debug, Clone, PartialEq)]
pub struct BespokePool {
    /// The pool's name, as written in the file (never `index`).
    pub name: String,
    /// Recovery, a fraction in [0, 1).
    pub recovery: f64,
    /// The pool's quotes, sorted by maturity (one per maturity).
    pub quotes: Vec<IndexQuote>,
}

/// A checked pools file.
#[derive(Debug, Clone, PartialEq)]
pub struct Pools {
    /// Path as the user gave it (`-` for standard input).
    pub path: String,
    /// The pools, in the order they first appear in the file.
    pub pools: Vec<BespokePool>,
    /// 1-based column of `maturity` in the file, for later located errors.
    pub maturity_column: usize,
    /// Likely mistakes read as written: a pool recovery below 1 (percent),
    /// which looks like a fraction (0.35 for 35%).
    pub warnings: Vec<Problem>,
}

impl Pools {
    /// The pools' names, in file order (for [`super::trades::check_against`]).
    pub fn names(&self) -> Vec<&str> {
        self.pools.iter().map(|p| p.name.as_str()).collect()
    }

    /// The pool named `name`, if the file has it.
    pub fn get(&self, name: &str) -> Option<&BespokePool> {
        self.pools.iter().find(|p| p.name == name)
    }
}

/// Reads a pools file, or standard input when `path` is `-`.
///
/// # Errors
/// [`ErrorKind::Io`](crate::error::ErrorKind::Io) when the file cannot be
/// read; otherwise as [`parse_pools`].
pub fn read_pools(path: &str) -> Result<Pools> {
    let text = crate::input::read_source(path)?;
    parse_pools(&text, path)
}

/// Parses the text of a pools file; `path` is used only in messages and in
/// [`Pools::path`].
///
/// # Errors
/// [`ErrorKind::InvalidInput`](crate::error::ErrorKind::InvalidInput) with
/// one located [`Problem`] per broken rule, all of them, sorted by line:
///
/// - the header: an unknown or repeated column, a missing required column
///   (all but `coupon_bp`), no `coupon_bp` column while a row is
///   `upfront_pct`; an empty file or a header with no rows after it ("no
///   pool rows");
/// - a row with more or fewer cells than the header;
/// - a required cell left empty, or a coupon on a `spread_bp` row;
/// - a pool named `index`, or with the word `inf` or `NaN` in its name (the
///   output would refuse to print it); a `quote_kind` other than `spread_bp` or
///   `upfront_pct`;
/// - a date that is not ISO 8601 `YYYY-MM-DD`, a number that does not
///   parse, or is NaN or infinite;
/// - a number outside its plausible domain (see [`super::domain`]): a
///   spread outside (0, 100000) bp, an upfront outside (-100, 100) percent,
///   a coupon outside [0, 100000) bp, a recovery outside [0, 100) percent;
/// - a second quote of one pool for the same maturity (the message names
///   both lines);
/// - rows of one pool that disagree on the recovery (at the later row).
///
/// # Examples
///
/// ```
/// use skewbook::input::pools::parse_pools;
/// use skewbook::market::Quote;
///
/// let text = "pool,maturity,quote_kind,quote,coupon_bp,recovery_pct\n\
///             blue,2031-06-20,spread_bp,120,,35\n\
///             blue,2029-06-20,upfront_pct,2.5,100,35\n";
/// let pools = parse_pools(text, "pools.csv")?;
/// let blue = &pools.pools[0];
/// assert_eq!(blue.recovery, 0.35);
/// assert_eq!(blue.quotes[0].quote, Quote::Upfront { upfront: 0.025, coupon: 0.01 });
/// assert_eq!(blue.quotes[1].quote, Quote::Spread(0.012));
/// # Ok::<(), skewbook::Error>(())
/// ```
pub fn parse_pools(text: &str, path: &str) -> Result<Pools> {
    let mut problems = Vec::new();
    let records = cells::records(text, path, &mut problems);
    let Some(header) = records.first() else {
        problems.push(cells::empty_file(path, "pool"));
        return Err(invalid(problems));
    };
    let Some(sheet) = cells::header(path, header, &COLUMNS, &mut problems) else {
        return Err(invalid(problems));
    };
    if !sheet.require(REQUIRED, &mut problems) {
        return Err(invalid(problems));
    }
    if records.len() == 1 {
        problems.push(cells::header_only(&sheet, "pool"));
        return Err(invalid(problems));
    }

    let mut rows = Vec::new();
    let mut first_upfront = None;
    for rec in &records[1..] {
        let mut row = Row::new(&sheet, rec, &mut problems);
        if !row.width() {
            continue;
        }
        if row.cell(QUOTE_KIND) == "upfront_pct" && first_upfront.is_none() {
            first_upfront = Some(row.line());
        }
        if let Some(r) = pool_row(row) {
            rows.push(r);
        }
    }
    if let (false, Some(line)) = (sheet.has(COUPON), first_upfront) {
        problems.push(Problem::at(
            sheet.at(sheet.line, COUPON),
            format!(
                "expected a column named \"coupon_bp\" in the header, found none \
                 (upfront_pct quotes need a running coupon, first on line {line})"
            ),
        ));
    }

    let mut warnings = Vec::new();
    let pools = assemble(&sheet, rows, &mut problems, &mut warnings);
    cells::finish(
        Pools {
            path: path.to_string(),
            pools,
            maturity_column: sheet.col(MATURITY).map_or(0, |i| i + 1),
            warnings,
        },
        problems,
    )
}

/// A row that passed every per-row check.
struct PoolRow<'r> {
    line: u64,
    pool: &'r str,
    maturity: NaiveDate,
    quote: Quote,
    /// Recovery (fraction) and the cell as written.
    recovery: (f64, &'r str),
}

/// Checks one row; `Some` only when every cell is right.
fn pool_row<'r>(mut row: Row<'_, 'r, '_>) -> Option<PoolRow<'r>> {
    let pool = row.name(POOL, "a pool name");
    if pool == Some(INDEX_POOL) {
        row.bad(
            POOL,
            "expected a bespoke pool's name (\"index\" is the snapshot's own pool), found \"index\""
                .to_string(),
        );
    }
    let maturity = row.date(MATURITY, "a maturity date");
    let upfront = row
        .one_of(QUOTE_KIND, &["spread_bp", "upfront_pct"])
        .map(|k| k == 1);
    let quote = match upfront {
        Some(false) => row.spread_bp(QUOTE, "a spread in bp", true),
        Some(true) => row
            .number(QUOTE, "an upfront in percent")
            .and_then(|v| row.upfront_pct(QUOTE, v)),
        None => row.number(QUOTE, "a quote"),
    };
    let coupon = match upfront {
        Some(true) if row.header.has(COUPON) => row.coupon_bp(
            COUPON,
            "a running coupon in bp (upfront_pct quotes need one)",
        ),
        Some(true) => None, // reported once, at the header
        Some(false) => {
            row.empty(
                COUPON,
                "a spread_bp",
                "a coupon goes with upfront_pct quotes only",
            );
            Some(0.0)
        }
        None => None,
    };
    let recovery = row.recovery_pct(RECOVERY);
    if !row.ok {
        return None;
    }
    let quote = if upfront? {
        Quote::Upfront {
            upfront: quote? / 100.0,
            coupon: coupon? / 1e4,
        }
    } else {
        Quote::Spread(quote? / 1e4)
    };
    Some(PoolRow {
        line: row.line(),
        pool: pool?,
        maturity: maturity?,
        quote,
        recovery: (recovery? / 100.0, row.cell(RECOVERY)),
    })
}

/// Groups the rows by pool in order of first appearance, with the checks
/// across rows: one quote per pool and maturity, one recovery per pool.
fn assemble(
    sheet: &Header,
    rows: Vec<PoolRow>,
    problems: &mut Vec<Problem>,
    warnings: &mut Vec<Problem>,
) -> Vec<BespokePool> {
    let mut pools: Vec<BespokePool> = Vec::new();
    // Per pool: its index in `pools`, and the first row's recovery text and line.
    let mut first: HashMap<&str, (usize, &str, u64)> = HashMap::new();
    let mut quoted_at: HashMap<(usize, NaiveDate), u64> = HashMap::new();
    for r in &rows {
        let (i, recovery_text, recovery_line) = *first.entry(r.pool).or_insert_with(|| {
            if r.recovery.0 > 0.0 && r.recovery.0 < 0.01 {
                warnings.push(Problem::at(
                    sheet.at(r.line, RECOVERY),
                    format!(
                        "a recovery of {} for pool {} is read as {}%; if it is a fraction, \
                         write it in percent ({} meaning {}%)",
                        quoted(r.recovery.1),
                        quoted(r.pool),
                        r.recovery.1,
                        r.recovery.1,
                        crate::output::significant(r.recovery.0 * 1e4, 6)
                    ),
                ));
            }
            pools.push(BespokePool {
                name: r.pool.to_string(),
                recovery: r.recovery.0,
                quotes: Vec::new(),
            });
            (pools.len() - 1, r.recovery.1, r.line)
        });
        if r.recovery.0 != pools[i].recovery {
            problems.push(Problem::at(
                sheet.at(r.line, RECOVERY),
                format!(
                    "expected the same recovery on every row of pool {}, found {} here and {} on line {recovery_line}",
                    quoted(r.pool),
                    quoted(r.recovery.1),
                    quoted(recovery_text)
                ),
            ));
        }
        if let Some(earlier) = quoted_at.get(&(i, r.maturity)) {
            problems.push(Problem::at(
                sheet.at(r.line, MATURITY),
                format!(
                    "expected one quote per maturity of pool {}, found a second for {} (lines {earlier} and {})",
                    quoted(r.pool),
                    r.maturity,
                    r.line
                ),
            ));
            continue;
        }
        quoted_at.insert((i, r.maturity), r.line);
        pools[i].quotes.push(IndexQuote {
            maturity: r.maturity,
            quote: r.quote,
            line: r.line,
        });
    }
    for p in &mut pools {
        p.quotes.sort_by_key(|q| (q.maturity, q.line));
    }
    pools
}

/// Checks that every pool quote matures after `trade_date`, the date the
/// pools' curves are built on.
///
/// # Errors
/// [`ErrorKind::InvalidInput`](crate::error::ErrorKind::InvalidInput) with
/// one problem per quote maturing on or before `trade_date`, at its
/// `maturity` cell of the pools file, sorted by line.
///
/// # Examples
///
/// ```
/// use chrono::NaiveDate;
/// use skewbook::input::pools::{check_against, parse_pools};
///
/// let text = "pool,maturity,quote_kind,quote,recovery_pct\n\
///             blue,2026-06-18,spread_bp,120,35\n";
/// let pools = parse_pools(text, "pools.csv")?;
/// let day = NaiveDate::from_ymd_opt(2026, 6, 18).unwrap();
/// let e = check_against(&pools, day).unwrap_err();
/// assert_eq!(e.problems[0].to_string(),
///     "pools.csv:2:2: column \"maturity\": expected a maturity after the trade date 2026-06-18, found \"2026-06-18\"");
/// # Ok::<(), skewbook::Error>(())
/// ```
pub fn check_against(pools: &Pools, trade_date: NaiveDate) -> Result<()> {
    let mut problems = Vec::new();
    for q in pools.pools.iter().flat_map(|p| &p.quotes) {
        if q.maturity <= trade_date {
            problems.push(Problem::at(
                Location {
                    path: pools.path.clone(),
                    line: q.line,
                    column: (pools.maturity_column > 0).then_some(pools.maturity_column),
                    header: Some("maturity".to_string()),
                },
                format!(
                    "expected a maturity after the trade date {trade_date}, found {}",
                    quoted(&q.maturity.to_string())
                ),
            ));
        }
    }
    cells::finish((), problems)
}
