//! One trade date's curves: recovery, discount curve and bootstrapped hazard curve.

use super::{bootstrap, DiscountCurve, HazardCurve, Pillar};
use crate::error::{Error, ErrorKind, Result};
use crate::market::MarketDate;
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

/// The curves of one trade date.
#[derive(Debug, Clone, PartialEq)]
pub struct PoolCurves {
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
}

impl PoolCurves {
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
        let (hazard, pillars) = bootstrap(md.date, &md.index, &discount, recovery, path)?;
        Ok(PoolCurves {
            date: md.date,
            recovery,
            discount,
            hazard,
            pillars,
        })
    }
}
