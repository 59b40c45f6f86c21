//! The market a book is priced in, and the terms of one trade.

use crate::curve::{Pool, PoolBump};
use crate::error::{Error, ErrorKind, Result};
use crate::surface::Surface;
use crate::tranche::Tranche;
use chrono::NaiveDate;

pub use crate::market::INDEX_POOL;

/// The contract of one tranche trade, in the library's units.
#[derive(Debug, Clone, PartialEq)]
pub struct TradeTerms {
    /// `index` or a bespoke pool's name.
    pub pool: String,
    /// Maturity.
    pub maturity: NaiveDate,
    /// Bounds.
    pub tranche: Tranche,
    /// Running coupon, fraction per year.
    pub coupon: f64,
    /// Notional, currency.
    pub notional: f64,
    /// Holder's sign: +1 protection buyer, -1 protection seller.
    pub sign: f64,
}

/// One trade date's market: the index pool, its base-correlation surface,
/// and the bespoke pools (bootstrapped with the date's discount curve).
#[derive(Debug, Clone, PartialEq)]
pub struct Market {
    /// The index pool.
    pub index: Pool,
    /// The index's correlation surface.
    pub surface: Surface,
    /// Bespoke pools by name, in file order.
    pub bespoke: Vec<(String, Pool)>,
}

impl Market {
    /// The pool a trade references: the index for `index`, else a bespoke pool.
    pub fn pool(&self, name: &str) -> Option<&Pool> {
        if name == INDEX_POOL {
            Some(&self.index)
        } else {
            self.bespoke.iter().find(|(n, _)| n == name).map(|(_, p)| p)
        }
    }

    /// A copy with pool `name` bumped (and bootstrapped again), the surface
    /// and the other pools unchanged.
    ///
    /// # Errors
    /// [`ErrorKind::InvalidInput`] for an unknown pool; the bump's own errors.
    pub fn with_pool_bumped(&self, name: &str, bump: PoolBump) -> Result<Market> {
        let mut m = self.clone();
        if name == INDEX_POOL {
            m.index = self.index.bumped(bump)?;
            return Ok(m);
        }
        let slot = m
            .bespoke
            .iter_mut()
            .find(|(n, _)| n == name)
            .ok_or_else(|| {
                Error::msg(ErrorKind::InvalidInput, format!("unknown pool \"{name}\""))
            })?;
        slot.1 = slot.1.bumped(bump)?;
        Ok(m)
    }

    /// A copy with another surface.
    pub fn with_surface(&self, surface: Surface) -> Market {
        Market {
            surface,
            ..self.clone()
        }
    }
}
