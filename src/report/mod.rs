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
pub mod surface;
pub mod value;

use crate::market::TrancheQuote;
use crate::output::pct;
use serde::Serialize;

pub use crate::curve::pool::pools_for_all_dates;
pub use crate::market::select_date;

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
