//! A pool on one trade date: recovery, discount curve, bootstrapped hazard
//! curve and the quotes behind it, with one way to bump it.

use super::{bootstrap, DiscountCurve, HazardCurve, Pillar};
use crate::error::{Error, ErrorKind, Result};
use crate::market::{IndexQuote, MarketDate, Quote, Snapshot};
use chrono::NaiveDate;

/// Recovery used when neither the snapshot nor the command line gives one.
pub const DEFAULT_RECOVERY: f64 = 0.40;

/// Choices that apply to every date of a run.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MarketOptions {
    /// Recovery (fraction) overriding the snapshot's `recovery_pct`.
    pub recovery: Option<f64>,
    /// Flat continuously compounded rate (fraction) for dates without zero rows.
    pub flat_rate: f64,
}

impl Default for MarketOptions {
    fn default() -> Self {
        MarketOptions {
            recovery: None,
            flat_rate: 0.0,
        }
    }
}

impl MarketOptions {
    /// Checks the values typed on the command line.
    ///
    /// # Errors
    /// [`ErrorKind::Usage`] for a recovery outside [0, 1) or a rate that is
    /// not a finite number in (-1, 1).
    pub fn validate(&self) -> Result<()> {
        if let Some(r) = self.recovery {
            if !(0.0..1.0).contains(&r) {
                return Err(Error::msg(
                    ErrorKind::Usage,
                    format!(
                        "--recovery: expected a percentage in [0, 100), found {}",
                        r * 100.0
                    ),
                ));
            }
        }
        if !self.flat_rate.is_finite() || self.flat_rate.abs() >= 1.0 {
            return Err(Error::msg(
                ErrorKind::Usage,
                format!(
                    "--rate: expected a percentage in (-100, 100), found {}",
                    self.flat_rate * 100.0
                ),
            ));
        }
        Ok(())
    }
}

/// A pool as the pricer sees it on one trade date: recovery, discount
/// curve, hazard curve, and the index-style quotes it was bootstrapped from.
///
/// Built from plain data ([`Pool::from_quotes`]) or a snapshot date
/// ([`Pool::build`]); [`Pool::bumped`] is the one way to get a bumped copy,
/// always bootstrapped again, so a recovery bump reaches both the hazard
/// curve and (through [`crate::tranche::TrancheSchedule::for_pool`]) the
/// tranche legs.
#[derive(Debug, Clone, PartialEq)]
pub struct Pool {
    /// Trade date.
    pub date: NaiveDate,
    /// Recovery in force (command line, else snapshot, else 40%).
    pub recovery: f64,
    /// Discount curve.
    pub discount: DiscountCurve,
    /// Bootstrapped pool hazard curve.
    pub hazard: HazardCurve,
    /// The bootstrapped pillars, shortest maturity first.
    pub pillars: Vec<Pillar>,
    /// The quotes the curve was bootstrapped from, shortest maturity first.
    pub quotes: Vec<IndexQuote>,
    /// The file the quotes came from, for messages.
    pub source: String,
}

/// A change to a pool's market, bootstrapped again by [`Pool::bumped`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum PoolBump {
    /// Every pillar's par spread (protection / annuity on today's curve)
    /// plus this much (a fraction: 0.0001 is 1 bp); the curve is
    /// bootstrapped again from those par spreads.
    ParSpread(f64),
    /// One pillar's par spread plus this much, the others at their par
    /// spreads: a bucketed spread bump.
    PillarParSpread {
        /// Index of the pillar, shortest maturity first.
        pillar: usize,
        /// Amount added, a fraction.
        by: f64,
    },
    /// Recovery plus this much (a fraction: 0.01 is one percentage point);
    /// the curve is bootstrapped again from the same quotes.
    Recovery(f64),
}

impl Pool {
    /// Builds the discount curve and bootstraps the hazard curve of one date.
    ///
    /// # Errors
    /// [`ErrorKind::Unfittable`] when an index quote cannot be fitted;
    /// [`ErrorKind::InvalidInput`] for bad zero pillars.
    pub fn build(md: &MarketDate, opts: &MarketOptions, path: &str) -> Result<Self> {
        let recovery = opts.recovery.or(md.recovery).unwrap_or(DEFAULT_RECOVERY);
        let discount = if md.zeros.is_empty() {
            DiscountCurve::flat(opts.flat_rate)
        } else {
            DiscountCurve::from_zero_pillars(md.date, &md.zeros, path)?
        };
        Pool::from_quotes(md.date, md.index.clone(), recovery, discount, path)
    }

    /// Bootstraps a pool from its index-style quotes (sorted by maturity)
    /// with a given recovery and discount curve; `source` names the file in
    /// messages.
    ///
    /// # Errors
    /// [`ErrorKind::InvalidInput`] for a recovery outside [0, 1);
    /// [`ErrorKind::Unfittable`] when a quote cannot be fitted.
    pub fn from_quotes(
        date: NaiveDate,
        quotes: Vec<IndexQuote>,
        recovery: f64,
        discount: DiscountCurve,
        source: &str,
    ) -> Result<Self> {
        if !(0.0..1.0).contains(&recovery) {
            return Err(Error::msg(
                ErrorKind::InvalidInput,
                format!("{source}: recovery must be in [0, 100%), found {recovery}"),
            ));
        }
        let (hazard, pillars) = bootstrap(date, &quotes, &discount, recovery, source)?;
        Ok(Pool {
            date,
            recovery,
            discount,
            hazard,
            pillars,
            quotes,
            source: source.to_string(),
        })
    }

    /// Par spread of each pillar's index contract on this curve
    /// (protection / annuity), shortest maturity first, fractions.
    pub fn par_spreads(&self) -> Vec<f64> {
        self.pillars
            .iter()
            .map(|p| p.protection / p.annuity)
            .collect()
    }

    /// Pool expected loss to curve time `t`: (1 - R) PD(t).
    pub fn expected_loss(&self, t: f64) -> f64 {
        (1.0 - self.recovery) * self.hazard.default_probability(t)
    }

    /// A copy of the pool with its market bumped and its curve bootstrapped
    /// again (see [`PoolBump`]).
    ///
    /// # Errors
    /// [`ErrorKind::InvalidInput`] when the bumped recovery leaves [0, 1) or
    /// the pillar does not exist; [`ErrorKind::Unfittable`] when a bumped
    /// quote cannot be fitted.
    pub fn bumped(&self, bump: PoolBump) -> Result<Pool> {
        let with_spreads = |add: &dyn Fn(usize) -> f64| -> Vec<IndexQuote> {
            self.quotes
                .iter()
                .zip(self.par_spreads())
                .enumerate()
                .map(|(i, (q, s))| IndexQuote {
                    quote: Quote::Spread(s + add(i)),
                    ..q.clone()
                })
                .collect()
        };
        let (quotes, recovery) = match bump {
            PoolBump::ParSpread(by) => (with_spreads(&|_| by), self.recovery),
            PoolBump::PillarParSpread { pillar, by } => {
                if pillar >= self.quotes.len() {
                    return Err(Error::msg(
                        ErrorKind::InvalidInput,
                        format!(
                            "pillar {pillar} does not exist: the pool has {}",
                            self.quotes.len()
                        ),
                    ));
                }
                (
                    with_spreads(&|i| if i == pillar { by } else { 0.0 }),
                    self.recovery,
                )
            }
            PoolBump::Recovery(by) => (self.quotes.clone(), self.recovery + by),
        };
        Pool::from_quotes(
            self.date,
            quotes,
            recovery,
            self.discount.clone(),
            &self.source,
        )
    }
}

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
    use rayon::prelude::*;
    let pools: Vec<Result<Pool>> = snapshot
        .dates
        .par_iter()
        .map(|md| Pool::build(md, opts, &snapshot.path))
        .collect();
    let pools = crate::error::collect_all(pools)?;
    Ok(snapshot.dates.iter().cloned().zip(pools).collect())
}
