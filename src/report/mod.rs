//! One report type per command, each feeding the table, CSV and JSON printers
//! through [`crate::output::Report`].
//!
//! Every report documents its JSON schema: fields, units, and when a field
//! is null. Rates, probabilities and correlations are fractions in JSON;
//! quotes are in their file units (bp for spreads, percent for upfronts).

pub mod curve;
pub mod html;
pub mod implied;
pub mod loss;
pub mod price;
pub mod realworld;
pub mod skew_history;
pub mod stream;
pub mod surface;
pub mod value;

use crate::error::{Error, Result};
use crate::market::{date_span, MarketDate, Snapshot, TrancheQuote};
use crate::output::pct;
use serde::Serialize;

pub use crate::curve::pool::pools_for_all_dates;
pub use crate::market::select_date;

/// Which trade dates of a snapshot (a history) a command runs: one date,
/// or those from `from` to `to`, both included, either end open.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct DateFilter {
    /// Only this date.
    pub date: Option<chrono::NaiveDate>,
    /// No date before this one.
    pub from: Option<chrono::NaiveDate>,
    /// No date after this one.
    pub to: Option<chrono::NaiveDate>,
}

impl DateFilter {
    /// Whether the filter keeps every date.
    pub fn is_all(&self) -> bool {
        self.date.is_none() && self.from.is_none() && self.to.is_none()
    }

    /// Whether the filter keeps `d`.
    pub fn keeps(&self, d: chrono::NaiveDate) -> bool {
        self.date.is_none_or(|x| x == d)
            && self.from.is_none_or(|x| d >= x)
            && self.to.is_none_or(|x| d <= x)
    }

    /// Checks that `from` is not after `to`.
    ///
    /// # Errors
    /// [`crate::ErrorKind::Usage`] when it is.
    fn check(&self) -> Result<()> {
        match (self.from, self.to) {
            (Some(f), Some(t)) if f > t => Err(Error::msg(
                crate::ErrorKind::Usage,
                format!("--from {f} --to {t}: expected --from on or before --to"),
            )),
            _ => Ok(()),
        }
    }

    /// The error of a file `path` with the dates `span` none of which the
    /// filter keeps.
    fn none_kept(&self, path: &str, span: &str) -> Error {
        Error::msg(
            crate::ErrorKind::Usage,
            format!("{} in {path} (it has {span})", self.describe()),
        )
    }

    fn describe(&self) -> String {
        match (self.date, self.from, self.to) {
            (Some(d), _, _) => format!("--date {d}: no quotes on that date"),
            (None, Some(f), Some(t)) => format!("--from {f} --to {t}: no quotes from {f} to {t}"),
            (None, Some(f), None) => format!("--from {f}: no quotes on or after {f}"),
            (None, None, Some(t)) => format!("--to {t}: no quotes on or before {t}"),
            (None, None, None) => "no quotes".to_string(),
        }
    }
}

/// The snapshot restricted to the dates `filter` keeps, with only the
/// warnings of those dates' rows.
///
/// # Errors
/// [`crate::ErrorKind::Usage`] when `from` is after `to`, or no date of
/// the file is kept (the message gives the file's dates).
///
/// ```
/// use chrono::NaiveDate;
/// use skewbook::input::snapshot::read_snapshot;
/// use skewbook::report::{filter_dates, DateFilter};
/// let history = read_snapshot("market-samples/hgx-history-2026-06.csv")?;
/// let d = |s: &str| NaiveDate::parse_from_str(s, "%Y-%m-%d").unwrap();
/// let week = DateFilter { from: Some(d("2026-06-08")), to: Some(d("2026-06-12")), date: None };
/// assert_eq!(filter_dates(&history, &week)?.dates.len(), 5);
/// assert!(filter_dates(&history, &DateFilter { date: Some(d("2026-06-13")), ..week }).is_err());
/// # Ok::<(), skewbook::Error>(())
/// ```
pub fn filter_dates(snapshot: &Snapshot, filter: &DateFilter) -> Result<Snapshot> {
    if filter.is_all() {
        return Ok(snapshot.clone());
    }
    filter.check()?;
    let dates: Vec<MarketDate> = snapshot
        .dates
        .iter()
        .filter(|m| filter.keeps(m.date))
        .cloned()
        .collect();
    if dates.is_empty() {
        return Err(filter.none_kept(&snapshot.path, &date_span(snapshot)));
    }
    let lines: std::collections::HashSet<u64> = dates
        .iter()
        .flat_map(|m| {
            m.index
                .iter()
                .map(|q| q.line)
                .chain(m.tranches.iter().map(|t| t.line))
                .chain(m.zeros.iter().map(|z| z.line))
        })
        .collect();
    let warnings = snapshot
        .warnings
        .iter()
        .filter(|w| w.location.as_ref().is_none_or(|l| lines.contains(&l.line)))
        .cloned()
        .collect();
    Ok(Snapshot {
        path: snapshot.path.clone(),
        dates,
        warnings,
    })
}

/// A quoted tranche as every tranche report shows it: which tranche and
/// its quote, in file units (flattened into each report's tranche object).
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct QuotedTranche {
    /// Maturity, ISO 8601.
    pub maturity: String,
    /// Attachment, percent.
    pub attach_pct: f64,
    /// Detachment, percent.
    pub detach_pct: f64,
    /// `spread_bp` or `upfront_pct`.
    pub quote_kind: &'static str,
    /// The quote in its file unit.
    pub quote: f64,
    /// Coupon of an upfront quote, bp; null for a spread quote.
    pub coupon_bp: Option<f64>,
}

impl QuotedTranche {
    /// CSV headers of these fields, in order.
    pub const CSV_HEADERS: [&'static str; 6] = [
        "maturity",
        "attach_pct",
        "detach_pct",
        "quote_kind",
        "quote",
        "coupon_bp",
    ];

    /// CSV cells of these fields, in the order of [`Self::CSV_HEADERS`].
    pub fn csv_cells(&self) -> [String; 6] {
        use crate::output::csv_num;
        [
            self.maturity.clone(),
            csv_num(Some(self.attach_pct)),
            csv_num(Some(self.detach_pct)),
            self.quote_kind.to_string(),
            csv_num(Some(self.quote)),
            csv_num(self.coupon_bp),
        ]
    }
}

impl From<&TrancheQuote> for QuotedTranche {
    fn from(t: &TrancheQuote) -> Self {
        QuotedTranche {
            maturity: t.maturity.to_string(),
            attach_pct: pct(t.attach),
            detach_pct: pct(t.detach),
            quote_kind: t.quote.kind_name(),
            quote: t.quote.in_file_unit(),
            coupon_bp: t.quote.coupon_bp(),
        }
    }
}
