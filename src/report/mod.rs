//! One report type per command, each feeding the table, CSV and JSON printers
//! through [`crate::output::Report`].
//!
//! Every report documents its JSON schema: fields, units, and when a field
//! is null. Rates, probabilities and correlations are fractions in JSON;
//! quotes are in their file units (bp for spreads, percent for upfronts).

pub mod curve;
pub mod implied;
pub mod loss;
pub mod price;
pub mod realworld;
pub mod surface;
pub mod value;

use crate::curve::{MarketOptions, Pool};
use crate::error::{Error, Result};
use crate::market::{MarketDate, Snapshot, TrancheQuote};
use crate::output::pct;
use rayon::prelude::*;
use serde::Serialize;

/// Builds the index pool (curves) of every date of a snapshot, collecting
/// every date's error into one [`Error`] so a history shows all its bad
/// dates at once. Dates are bootstrapped in parallel (rayon); the result is
/// in date order whatever the number of threads.
///
/// # Errors
/// The first error's kind, with the problems of every failing date.
pub fn pools_for_all_dates(
    snapshot: &Snapshot,
    opts: &MarketOptions,
) -> Result<Vec<(MarketDate, Pool)>> {
    let pools: Vec<Result<Pool>> = snapshot
        .dates
        .par_iter()
        .map(|md| Pool::build(md, opts, &snapshot.path))
        .collect();
    let pools = all_or_every_error(pools)?;
    Ok(snapshot.dates.iter().cloned().zip(pools).collect())
}

/// Every value, or one error with the problems of every failure (the
/// first failure's kind), in order.
///
/// # Errors
/// As described.
pub(crate) fn all_or_every_error<T>(results: Vec<Result<T>>) -> Result<Vec<T>> {
    let mut out = Vec::with_capacity(results.len());
    let mut failure: Option<Error> = None;
    for r in results {
        match r {
            Ok(v) => out.push(v),
            Err(e) => match &mut failure {
                None => failure = Some(e),
                Some(f) => f.problems.extend(e.problems),
            },
        }
    }
    match failure {
        Some(e) => Err(e),
        None => Ok(out),
    }
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
