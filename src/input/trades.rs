//! Trades reader: the book of tranche trades to value (CSV) to checked
//! [`Trades`].
//!
//! The format is the "Trades file (input)" section of the conventions. A
//! header row names these columns, in any order, all required:
//!
//! | column | meaning | unit, allowed values |
//! | --- | --- | --- |
//! | `trade_id` | the trade's name | text, not empty, unique in the file |
//! | `pool` | the pool the tranche is written on | `index` (the snapshot's pool) or a pool of the pools file |
//! | `maturity` | the tranche's maturity | ISO 8601 date `YYYY-MM-DD`, after the trade date |
//! | `attach_pct` | attachment | percent of pool notional: 0, or 0.01 <= A < D |
//! | `detach_pct` | detachment | percent of pool notional, A + 0.01 <= D <= 100 |
//! | `coupon_bp` | running coupon | bp per year, 0 <= c < 100000 |
//! | `notional` | tranche notional | currency amount, 0 < N < 1e15 |
//! | `side` | the holder's side | `buy` (protection buyer) or `sell` (protection seller) |
//!
//! Then one trade a row, in any order; the order of the file is kept.
//! Units change here: bounds and coupons come out as fractions (percent /
//! 100, bp / 1e4), the notional as written.
//!
//! ```text
//! trade_id,pool,maturity,attach_pct,detach_pct,coupon_bp,notional,side
//! EQ-1,index,2031-06-20,0,3,500,10000000,sell
//! MZ-7,index,2031-06-20,3,7,100,25000000,buy
//! BSP-2,blue-energy,2029-06-20,3,6,300,5000000,buy
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
//! # Checks that need the snapshot
//!
//! Whether a maturity comes after the trade date, and whether a pool is
//! known, depend on the snapshot and the pools file: [`check_against`]
//! makes those checks, at the same file positions, once they are read.

use super::cells::{self, invalid, quoted, Row};
use crate::error::{Location, Problem, Result};
use chrono::NaiveDate;
use std::collections::HashMap;

/// Column names, in the order the conventions list them.
const COLUMNS: [&str; 8] = [
    "trade_id",
    "pool",
    "maturity",
    "attach_pct",
    "detach_pct",
    "coupon_bp",
    "notional",
    "side",
];
const TRADE_ID: usize = 0;
const POOL: usize = 1;
const MATURITY: usize = 2;
const ATTACH: usize = 3;
const DETACH: usize = 4;
const COUPON: usize = 5;
const NOTIONAL: usize = 6;
const SIDE: usize = 7;

pub use crate::market::INDEX_POOL;

/// The holder's side of a trade.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Side {
    /// Protection buyer: pays the coupon, receives the tranche's losses.
    Buy,
    /// Protection seller: receives the coupon, pays the tranche's losses.
    Sell,
}

impl Side {
    /// The holder's sign s of the conventions: +1 for a buyer, -1 for a seller.
    pub fn sign(&self) -> f64 {
        match self {
            Side::Buy => 1.0,
            Side::Sell => -1.0,
        }
    }

    /// The file's name for the side: `buy` or `sell`.
    pub fn name(&self) -> &'static str {
        match self {
            Side::Buy => "buy",
            Side::Sell => "sell",
        }
    }
}

/// One checked trade, in the code's units.
#[derive(Debug, Clone, PartialEq)]
pub struct Trade {
    /// The trade's name, unique in its file.
    pub trade_id: String,
    /// `index` or the name of a bespoke pool.
    pub pool: String,
    /// Maturity date.
    pub maturity: NaiveDate,
    /// Attachment, fraction of pool notional (0 <= attach < detach).
    pub attach: f64,
    /// Detachment, fraction of pool notional (attach < detach <= 1).
    pub detach: f64,
    /// Running coupon, fraction per year (>= 0).
    pub coupon: f64,
    /// Tranche notional, currency (> 0, finite).
    pub notional: f64,
    /// The holder's side.
    pub side: Side,
    /// 1-based line of the row in its file.
    pub line: u64,
}

/// A checked trades file.
#[derive(Debug, Clone, PartialEq)]
pub struct Trades {
    /// Path as the user gave it (`-` for standard input).
    pub path: String,
    /// The trades, in file order.
    pub trades: Vec<Trade>,
    /// 1-based column of `maturity` in the file, for later located errors.
    pub maturity_column: usize,
    /// 1-based column of `pool` in the file, for later located errors.
    pub pool_column: usize,
}

/// Reads a trades file, or standard input when `path` is `-`.
///
/// # Errors
/// [`ErrorKind::Io`](crate::error::ErrorKind::Io) when the file cannot be
/// read; otherwise as [`parse_trades`].
pub fn read_trades(path: &str) -> Result<Trades> {
    let text = crate::input::read_source(path)?;
    parse_trades(&text, path)
}

/// Parses the text of a trades file; `path` is used only in messages and
/// in [`Trades::path`].
///
/// # Errors
/// [`ErrorKind::InvalidInput`](crate::error::ErrorKind::InvalidInput) with
/// one located [`Problem`] per broken rule, all of them, sorted by line:
///
/// - the header: an unknown or repeated column, a missing column (all are
///   required); an empty file or a header with no rows after it ("no trade
///   rows");
/// - a row with more or fewer cells than the header;
/// - an empty cell; a `trade_id` or `pool` with the word `inf` or `NaN`
///   in it (the output would refuse to print it);
/// - a `trade_id` seen on an earlier line (the message names it);
/// - a maturity that is not an ISO 8601 `YYYY-MM-DD` date;
/// - a number that does not parse, or is NaN or infinite;
/// - a number outside its plausible domain (see [`super::domain`]): an
///   attachment neither 0 nor in [0.01, 100] percent, a detachment outside
///   [0.01, 100] percent or less than 0.01 percent above the attachment, a
///   coupon outside [0, 100000) bp, a notional outside (0, 1e15);
/// - a `side` other than `buy` or `sell`.
///
/// # Examples
///
/// ```
/// use skewbook::input::trades::{parse_trades, Side};
///
/// let text = "trade_id,pool,maturity,attach_pct,detach_pct,coupon_bp,notional,side\n\
///             EQ-1,index,2031-06-20,0,3,500,10000000,sell\n";
/// let book = parse_trades(text, "book.csv")?;
/// let t = &book.trades[0];
/// assert_eq!((t.attach, t.detach, t.coupon), (0.0, 0.03, 0.05));
/// assert_eq!(t.side.sign(), -1.0);
/// assert_eq!(t.line, 2);
/// # Ok::<(), skewbook::Error>(())
/// ```
pub fn parse_trades(text: &str, path: &str) -> Result<Trades> {
    let mut problems = Vec::new();
    let records = cells::records(text, path, &mut problems);
    let Some(header) = records.first() else {
        problems.push(cells::empty_file(path, "trade"));
        return Err(invalid(problems));
    };
    let Some(sheet) = cells::header(path, header, &COLUMNS, &mut problems) else {
        return Err(invalid(problems));
    };
    if !sheet.require(0..COLUMNS.len(), &mut problems) {
        return Err(invalid(problems));
    }
    if records.len() == 1 {
        problems.push(cells::header_only(&sheet, "trade"));
        return Err(invalid(problems));
    }

    let mut trades = Vec::new();
    let mut first_line: HashMap<&str, u64> = HashMap::new();
    for rec in &records[1..] {
        let mut row = Row::new(&sheet, rec, &mut problems);
        if !row.width() {
            continue;
        }
        let id = row.name(TRADE_ID, "a trade id");
        if let Some(id) = id {
            if let Some(first) = first_line.get(id) {
                let msg = format!(
                    "expected each trade_id once, found {} again (first on line {first})",
                    quoted(id)
                );
                row.bad(TRADE_ID, msg);
            } else {
                first_line.insert(id, row.line());
            }
        }
        if let Some(trade) = trade(row, id) {
            trades.push(trade);
        }
    }
    cells::finish(
        Trades {
            path: path.to_string(),
            trades,
            maturity_column: sheet.col(MATURITY).map_or(0, |i| i + 1),
            pool_column: sheet.col(POOL).map_or(0, |i| i + 1),
        },
        problems,
    )
}

/// Checks the cells of a row after its id; `Some` only when the whole row
/// is right.
fn trade(mut row: Row, id: Option<&str>) -> Option<Trade> {
    let pool = row.name(POOL, "a pool name (\"index\" or a pool of the pools file)");
    let maturity = row.date(MATURITY, "a maturity date");
    let bounds = row.bounds_pct(ATTACH, DETACH);
    let coupon = row.coupon_bp(COUPON, "a running coupon in bp");
    let notional = row.notional(NOTIONAL);
    let side = row.one_of(SIDE, &["buy", "sell"]);
    if !row.ok {
        return None;
    }
    Some(Trade {
        trade_id: id?.to_string(),
        pool: pool?.to_string(),
        maturity: maturity?,
        attach: bounds?.0 / 100.0,
        detach: bounds?.1 / 100.0,
        coupon: coupon? / 1e4,
        notional: notional?,
        side: [Side::Buy, Side::Sell][side?],
        line: row.line(),
    })
}

/// Checks the trades against the date they are valued on and the pools
/// there are curves for: each maturity must come after `trade_date`, and
/// each pool must be `index` or one of `known_pools`.
///
/// # Errors
/// [`ErrorKind::InvalidInput`](crate::error::ErrorKind::InvalidInput) with
/// one problem per broken rule, at the trade's `maturity` or `pool` cell
/// of the trades file, sorted by line.
///
/// # Examples
///
/// ```
/// use chrono::NaiveDate;
/// use skewbook::input::trades::{check_against, parse_trades};
///
/// let text = "trade_id,pool,maturity,attach_pct,detach_pct,coupon_bp,notional,side\n\
///             A,index,2031-06-20,0,3,500,1e7,buy\n\
///             B,blue,2026-06-18,3,7,100,1e7,buy\n";
/// let book = parse_trades(text, "book.csv")?;
/// let day = NaiveDate::from_ymd_opt(2026, 6, 18).unwrap();
/// assert!(check_against(&book, day, &["blue"]).is_err());
/// let e = check_against(&book, day, &[]).unwrap_err();
/// assert_eq!(e.problems[0].to_string(),
///     "book.csv:3:2: column \"pool\": expected \"index\" (no other pool is known), found \"blue\"");
/// # Ok::<(), skewbook::Error>(())
/// ```
pub fn check_against(trades: &Trades, trade_date: NaiveDate, known_pools: &[&str]) -> Result<()> {
    let at = |line: u64, column: usize, header: &str| Location {
        path: trades.path.clone(),
        line,
        column: (column > 0).then_some(column),
        header: Some(header.to_string()),
    };
    let expected = if known_pools.is_empty() {
        "\"index\" (no other pool is known)".to_string()
    } else {
        format!("\"index\" or a known pool ({})", name_list(known_pools))
    };
    let mut problems = Vec::new();
    for t in &trades.trades {
        if t.pool != INDEX_POOL && !known_pools.contains(&t.pool.as_str()) {
            problems.push(Problem::at(
                at(t.line, trades.pool_column, "pool"),
                format!("expected {expected}, found {}", quoted(&t.pool)),
            ));
        }
        if t.maturity <= trade_date {
            problems.push(Problem::at(
                at(t.line, trades.maturity_column, "maturity"),
                format!(
                    "expected a maturity after the trade date {trade_date}, found {}",
                    quoted(&t.maturity.to_string())
                ),
            ));
        }
    }
    cells::finish((), problems)
}

/// The names quoted, "one of" them when there are several; at most eight.
fn name_list(names: &[&str]) -> String {
    const SHOWN: usize = 8;
    let list: Vec<String> = names.iter().take(SHOWN).map(|n| quoted(n)).collect();
    let more = if names.len() > SHOWN {
        format!(" and {} more", names.len() - SHOWN)
    } else {
        String::new()
    };
    if names.len() == 1 {
        list.join(", ")
    } else {
        format!("one of {}{more}", list.join(", "))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sides_sign_and_name() {
        assert_eq!(Side::Buy.sign(), 1.0);
        assert_eq!(Side::Sell.sign(), -1.0);
        assert_eq!(Side::Buy.name(), "buy");
        assert_eq!(Side::Sell.name(), "sell");
    }

    #[test]
    fn pool_lists_are_cut_after_eight_names() {
        assert_eq!(name_list(&["a"]), "\"a\"");
        assert_eq!(name_list(&["a", "b"]), "one of \"a\", \"b\"");
        let many: Vec<String> = (0..10).map(|i| format!("p{i}")).collect();
        let many: Vec<&str> = many.iter().map(String::as_str).collect();
        assert!(name_list(&many).ends_with("\"p7\" and 2 more"));
    }
}
