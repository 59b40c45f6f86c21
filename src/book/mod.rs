//! A book of tranche trades priced off the skew: the market they are
//! priced in, bespoke-pool mapping, values and risk.
//!
//! - [`market`]: the index pool, its correlation surface and any bespoke
//!   pools of one trade date ([`Market`]), and its bumped copies;
//! - [`mapping`]: the index-equivalent detachment of a bespoke bound
//!   (`none`, `moneyness`, `tlp`, `probability`);
//! - [`price`]: one trade valued off the surface ([`price::value_trade`]);
//! - [`risk`]: spread, correlation and recovery sensitivities,
//!   jump-to-default and delta, each as a repricing in a bumped market.

pub mod mapping;
pub mod market;
pub mod price;
pub mod risk;

pub use mapping::Mapping;
pub use market::{Market, TradeTerms};
pub use price::{value_trade, Priced, Valuation};

use crate::error::Result;
use crate::loss::PoolModel;
use risk::{BucketedRisk, Risk, RiskContext};

/// Choices for valuing a book.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BookOptions {
    /// Bespoke mapping.
    pub mapping: Mapping,
    /// Names in a pool, for jump-to-default.
    pub names: usize,
    /// Risk figures besides the values.
    pub risk: bool,
    /// Bucketed risk besides the parallel figures.
    pub buckets: bool,
}

impl Default for BookOptions {
    fn default() -> Self {
        BookOptions {
            mapping: Mapping::None,
            names: risk::DEFAULT_NAMES,
            risk: true,
            buckets: false,
        }
    }
}

/// One trade's value and risk.
#[derive(Debug, Clone, PartialEq)]
pub struct TradeResult {
    /// The value, or why the trade is not priced.
    pub priced: Priced,
    /// Risk figures, for a priced trade.
    pub risk: Option<Risk>,
    /// Bucketed risk, when asked for and the trade is priced.
    pub buckets: Option<BucketedRisk>,
}

/// Values every trade of a book in `market`, with its risk. Schedules are
/// shared by trades on the same pool and maturity; bumped markets are built
/// once for the whole book.
///
/// # Errors
/// [`crate::ErrorKind::InvalidInput`] for a trade on an unknown pool or a
/// maturity not after the trade date.
pub fn value_book(
    trades: &[TradeTerms],
    market: &Market,
    opts: &BookOptions,
) -> Result<Vec<TradeResult>> {
    value_book_with(trades, market, opts, PoolModel::LargePool)
}

/// [`value_book`] with every trade priced in `model`: the large pool, or a
/// pool of n names (jump-to-default then leaves n - 1). Bespoke mapping
/// (`tlp`, `probability`) stays a large-pool convention in either model.
///
/// # Errors
/// As [`value_book`]; [`crate::ErrorKind::InvalidInput`] for a pool of 0 names.
pub fn value_book_with(
    trades: &[TradeTerms],
    market: &Market,
    opts: &BookOptions,
    model: PoolModel,
) -> Result<Vec<TradeResult>> {
    let pools: Vec<&str> = if opts.risk {
        trades.iter().map(|t| t.pool.as_str()).collect()
    } else {
        Vec::new()
    };
    let ctx =
        RiskContext::new(market, opts.mapping, opts.names, &pools, opts.buckets)?.with_model(model);
    let mut out = Vec::with_capacity(trades.len());
    for t in trades {
        let schedule = ctx.base_schedules().get(market, &t.pool, t.maturity)?;
        let priced = price::value_trade_on(t, market, opts.mapping, &schedule)?;
        let (risk, buckets) = match priced.valuation().filter(|_| opts.risk) {
            Some(v) => (
                Some(ctx.risk(t, v)?),
                if opts.buckets {
                    Some(ctx.buckets(t, v)?)
                } else {
                    None
                },
            ),
            None => (None, None),
        };
        out.push(TradeResult {
            priced,
            risk,
            buckets,
        });
    }
    Ok(out)
}
