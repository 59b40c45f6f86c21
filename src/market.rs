//! The market data skewbook prices from, in the code's units (fractions).
//!
//! Readers in [`crate::input`] turn files into these types; everything
//! downstream sees only checked values: spreads, coupons, upfronts, bounds,
//! recoveries and rates are all fractions (0.03, not 3 or 300).

use crate::error::{Error, Problem, Result};
use chrono::NaiveDate;

/// The pool name that means a snapshot's own index pool (in trades files;
/// reserved in pools files).
pub const INDEX_POOL: &str = "index";

/// How a quote is expressed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Quote {
    /// Par running spread, as a fraction (0.006 for 60 bp); no upfront.
    Spread(f64),
    /// Upfront (fraction of notional, paid by the protection buyer) plus a
    /// fixed running coupon (fraction per year).
    Upfront {
        /// Upfront, fraction of the instrument's notional.
        upfront: f64,
        /// Running coupon, fraction per year.
        coupon: f64,
    },
}

impl Quote {
    /// The running coupon paid alongside: the coupon of an upfront quote, 0
    /// for a par-spread quote.
    pub fn coupon(&self) -> f64 {
        match *self {
            Quote::Spread(_) => 0.0,
            Quote::Upfront { coupon, .. } => coupon,
        }
    }

    /// The file's name for the quote kind.
    pub fn kind_name(&self) -> &'static str {
        match self {
            Quote::Spread(_) => "spread_bp",
            Quote::Upfront { .. } => "upfront_pct",
        }
    }

    /// The quote in its file unit (bp for spreads, percent for upfronts),
    /// unrounded: what solvers aim at and repricing errors are measured from.
    pub fn exact_in_file_unit(&self) -> f64 {
        match *self {
            Quote::Spread(s) => s * 1e4,
            Quote::Upfront { upfront, .. } => upfront * 100.0,
        }
    }

    /// The quote in its file unit for display, rounded to 1e-10 of that
    /// unit so that 13.9527 read from a file (and held as 0.139527) prints
    /// as 13.9527 again.
    pub fn in_file_unit(&self) -> f64 {
        (self.exact_in_file_unit() * 1e10).round() / 1e10
    }

    /// The coupon in bp, `None` for a par-spread quote.
    pub fn coupon_bp(&self) -> Option<f64> {
        match *self {
            Quote::Spread(_) => None,
            Quote::Upfront { coupon, .. } => Some((coupon * 1e4 * 1e10).round() / 1e10),
        }
    }
}

/// One index quote of a trade date.
#[derive(Debug, Clone, PartialEq)]
pub struct IndexQuote {
    /// Maturity date (protection runs to the end of this day).
    pub maturity: NaiveDate,
    /// The quote.
    pub quote: Quote,
    /// 1-based line of the row in its file.
    pub line: u64,
}

/// One tranche quote of a trade date.
#[derive(Debug, Clone, PartialEq)]
pub struct TrancheQuote {
    /// Maturity date.
    pub maturity: NaiveDate,
    /// Attachment, fraction of pool notional.
    pub attach: f64,
    /// Detachment, fraction of pool notional (> attach).
    pub detach: f64,
    /// The quote, per unit of tranche notional.
    pub quote: Quote,
    /// 1-based line of the row in its file.
    pub line: u64,
}

impl TrancheQuote {
    /// Tranche width D - A.
    pub fn width(&self) -> f64 {
        self.detach - self.attach
    }
}

/// A continuously compounded Act/365F zero rate at a pillar date.
#[derive(Debug, Clone, PartialEq)]
pub struct ZeroPillar {
    /// Pillar date.
    pub date: NaiveDate,
    /// Zero rate, fraction.
    pub rate: f64,
    /// 1-based line of the row in its file.
    pub line: u64,
}

/// Everything quoted on one trade date.
#[derive(Debug, Clone, PartialEq)]
pub struct MarketDate {
    /// Trade date.
    pub date: NaiveDate,
    /// Recovery given on this date's index rows, if any (they agree).
    pub recovery: Option<f64>,
    /// Index quotes, sorted by maturity.
    pub index: Vec<IndexQuote>,
    /// Tranche quotes, sorted by maturity then attachment.
    pub tranches: Vec<TrancheQuote>,
    /// Zero-rate pillars, sorted by date (empty: flat rate from the command line).
    pub zeros: Vec<ZeroPillar>,
}

/// A snapshot file: one or many trade dates, in date order.
#[derive(Debug, Clone, PartialEq)]
pub struct Snapshot {
    /// Path as the user gave it (`-` for standard input).
    pub path: String,
    /// Trade dates, ascending.
    pub dates: Vec<MarketDate>,
    /// Problems that do not stop every command (for example tranches that do
    /// not tile, which only base correlation needs).
    pub warnings: Vec<Problem>,
}

/// Whether tranches of one maturity, sorted by attachment, tile the capital
/// structure from 0 upward without gaps or overlaps (the top need not reach 100%).
///
/// Bounds compare to 1e-12, so 3% written as 3 or 3.0 tiles with 3.
pub fn tiles_from_zero(sorted: &[&TrancheQuote]) -> bool {
    let mut next = 0.0;
    for t in sorted {
        if (t.attach - next).abs() > 1e-12 {
            return false;
        }
        next = t.detach;
    }
    true
}

/// The snapshot restricted to one trade date, or as it is when `only` is `None`.
///
/// # Errors
/// [`crate::ErrorKind::Usage`] when the date is not in the file.
pub fn select_date(snapshot: &Snapshot, only: Option<chrono::NaiveDate>) -> Result<Snapshot> {
    let Some(d) = only else {
        return Ok(snapshot.clone());
    };
    let dates: Vec<MarketDate> = snapshot
        .dates
        .iter()
        .filter(|m| m.date == d)
        .cloned()
        .collect();
    if dates.is_empty() {
        let have: Vec<String> = snapshot.dates.iter().map(|m| m.date.to_string()).collect();
        return Err(Error::msg(
            crate::ErrorKind::Usage,
            format!(
                "--date {d}: {} has no quotes on that date (it has {})",
                snapshot.path,
                if have.len() > 6 {
                    format!(
                        "{} dates, {} to {}",
                        have.len(),
                        have[0],
                        have[have.len() - 1]
                    )
                } else {
                    have.join(", ")
                }
            ),
        ));
    }
    Ok(Snapshot {
        path: snapshot.path.clone(),
        dates,
        warnings: snapshot.warnings.clone(),
    })
}

/// The dates of a snapshot for a message: all of them up to six, else the
/// count and the first and last.
pub fn date_span(snapshot: &Snapshot) -> String {
    let mut span = DateSpan::default();
    for m in &snapshot.dates {
        span.add(m.date);
    }
    span.to_string()
}

/// The dates of a file, counted as they come, for a message (what
/// [`date_span`] says): all of them up to six, else the count and the
/// first and last.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct DateSpan {
    count: usize,
    /// The first six dates.
    head: Vec<NaiveDate>,
    last: Option<NaiveDate>,
}

impl DateSpan {
    /// Counts one more date.
    pub fn add(&mut self, d: NaiveDate) {
        self.count += 1;
        if self.head.len() < 6 {
            self.head.push(d);
        }
        self.last = Some(d);
    }
}

impl std::fmt::Display for DateSpan {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match (self.head.first(), self.last) {
            (Some(first), Some(last)) if self.count > 6 => {
                write!(f, "{} dates, {first} to {last}", self.count)
            }
            _ => {
                let have: Vec<String> = self.head.iter().map(|d| d.to_string()).collect();
                write!(f, "{}", have.join(", "))
            }
        }
    }
}
