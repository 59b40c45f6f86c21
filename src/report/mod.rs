//! One report type per command, each feeding the table, CSV and JSON printers
//! through [`crate::output::Report`].
//!
//! Every report documents its JSON schema: fields, units, and when a field
//! is null. Rates, probabilities and correlations are fractions in JSON;
//! quotes are in their file units (bp for spreads, percent for upfronts).

pub mod curve;
pub mod implied;
pub mod price;

use crate::curve::{MarketOptions, PoolCurves};
use crate::error::{Error, Result};
use crate::market::{MarketDate, Snapshot};

/// Builds the curves of every date of a snapshot, collecting every date's
/// error into one [`Error`] so a history shows all its bad dates at once.
///
/// # Errors
/// The first error's kind, with the problems of every failing date.
pub fn curves_for_all_dates(
    snapshot: &Snapshot,
    opts: &MarketOptions,
) -> Result<Vec<(MarketDate, PoolCurves)>> {
    let mut out = Vec::with_capacity(snapshot.dates.len());
    let mut failure: Option<Error> = None;
    for md in &snapshot.dates {
        match PoolCurves::build(md, opts, &snapshot.path) {
            Ok(c) => out.push((md.clone(), c)),
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
