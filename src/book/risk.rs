//! Risk of a trade: each figure is a repricing in a bumped market.
//!
//! # Definitions (holder's sign, currency)
//! ```text
//! spread_01        pv(pool's pillar par spreads + 1 bp, bootstrapped again) - pv
//! correlation_01   pv(every surface knot + 0.01, capped at 0.9999) - pv
//! recovery_01      pv(pool recovery + 1 pp, bootstrapped again from the same quotes) - pv
//! jump_to_default  s N x / W + pv' - pv     (one of n names defaults now)
//! index_01         change under the spread bump of a protection buyer's contract,
//!                  notional N, on the pool's pillar nearest in maturity, at its
//!                  pre-bump par spread
//! delta            spread_01 / index_01
//! ```
//! Base correlations stay at their detachments under every curve bump; a
//! bespoke trade's mapping is solved again on the bumped pool. Each bumped
//! market is built once per run ([`RiskContext::new`]) and shared by every
//! trade on the same pool.

use super::mapping::Mapping;
use super::market::{Market, TradeTerms};
use super::price::{pv_on, Valuation};
use crate::curve::PoolBump;
use crate::error::{Error, ErrorKind, Result};
use crate::loss::PoolModel;
use crate::tranche::{bounds::MIN_WIDTH, Tranche, TrancheSchedule};
use chrono::NaiveDate;
use std::cell::RefCell;
use std::collections::HashMap;
use std::rc::Rc;

/// Tranche schedules of one market's pools, built on first use, priced in
/// one pool model (the large pool unless [`Schedules::with_model`]).
#[derive(Debug, Clone, Default)]
pub struct Schedules {
    built: RefCell<HashMap<(String, NaiveDate), Rc<TrancheSchedule>>>,
    model: PoolModel,
}

impl Schedules {
    /// Empty, for schedules priced in `model`.
    pub fn with_model(model: PoolModel) -> Schedules {
        Schedules {
            built: RefCell::default(),
            model,
        }
    }

    /// The schedule of pool `pool` of `market` to `maturity`.
    ///
    /// # Errors
    /// [`ErrorKind::InvalidInput`] for an unknown pool or a maturity not
    /// after the trade date.
    pub fn get(
        &self,
        market: &Market,
        pool: &str,
        maturity: NaiveDate,
    ) -> Result<Rc<TrancheSchedule>> {
        let key = (pool.to_string(), maturity);
        if let Some(s) = self.built.borrow().get(&key) {
            return Ok(Rc::clone(s));
        }
        let p = market.pool(pool).ok_or_else(|| {
            Error::msg(ErrorKind::InvalidInput, format!("unknown pool \"{pool}\""))
        })?;
        let s = Rc::new(TrancheSchedule::for_pool_with(p, maturity, self.model)?);
        self.built.borrow_mut().insert(key, Rc::clone(&s));
        Ok(s)
    }
}

/// A bumped market with its own schedules (its pools' curves differ).
#[derive(Debug, Clone)]
struct Bumped {
    market: Market,
    schedules: Schedules,
}

impl Bumped {
    fn new(market: Market) -> Bumped {
        Bumped {
            market,
            schedules: Schedules::default(),
        }
    }
}

/// A par-spread bump of 1 bp.
pub const SPREAD_BUMP: f64 = 1e-4;
/// A correlation bump of 0.01 (absolute).
pub const CORRELATION_BUMP: f64 = 0.01;
/// A recovery bump of one percentage point.
pub const RECOVERY_BUMP: f64 = 0.01;
/// Names in the pool for jump-to-default when none is given.
pub const DEFAULT_NAMES: usize = 125;

/// The risk figures of one trade, currency with the holder's sign; `None`
/// where the bumped valuation could not be priced (no mapping, an
/// unfittable bumped curve). Serialised under the contract's field names.
#[derive(Debug, Clone, Copy, PartialEq, Default, serde::Serialize)]
pub struct Risk {
    /// pv under the spread bump minus pv.
    pub spread_01: Option<f64>,
    /// pv under the correlation bump minus pv.
    pub correlation_01: Option<f64>,
    /// pv under the recovery bump minus pv.
    pub recovery_01: Option<f64>,
    /// One name's default now.
    pub jump_to_default: Option<f64>,
    /// The pillar contract's change under the spread bump.
    pub index_01: Option<f64>,
    /// spread_01 / index_01.
    pub delta: Option<f64>,
}

/// Bucketed risk of one trade.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct BucketedRisk {
    /// spread_01 with one pillar of the trade's pool bumped at a time,
    /// shortest first: (pillar maturity, figure).
    pub spread_01: Vec<(NaiveDate, Option<f64>)>,
    /// correlation_01 with one surface knot bumped at a time: (maturity,
    /// detachment, figure).
    pub correlation_01: Vec<(NaiveDate, f64, Option<f64>)>,
}

/// Markets bumped one way each, built once and shared by every trade.
#[derive(Debug, Clone)]
struct PoolBumps {
    name: String,
    spread: Option<Bumped>,
    recovery: Option<Bumped>,
    pillars: Vec<Option<Bumped>>,
}

/// The base market and its bumped copies for one run, with their schedules.
/// Surface bumps leave the pools alone, so they share the base schedules.
#[derive(Debug, Clone)]
pub struct RiskContext<'a> {
    market: &'a Market,
    mapping: Mapping,
    names: usize,
    base: Schedules,
    /// Schedules of the pool left after one default in a finite pool
    /// (n - 1 names); `None` in the large pool, which uses `base`.
    after_default: Option<Schedules>,
    correlation: Option<Market>,
    knots: Vec<Option<Market>>,
    pools: Vec<PoolBumps>,
}

impl<'a> RiskContext<'a> {
    /// Builds the bumped markets for the pools in `pools` (names as trades
    /// give them), with bucketed bumps when `buckets` is set.
    ///
    /// # Errors
    /// Not expected: a bump that cannot be bootstrapped gives `None`
    /// figures, not an error.
    pub fn new(
        market: &'a Market,
        mapping: Mapping,
        names: usize,
        pools: &[&str],
        buckets: bool,
    ) -> Result<RiskContext<'a>> {
        let mut bumps: Vec<PoolBumps> = Vec::new();
        for &name in pools {
            if bumps.iter().any(|b| b.name == name) || market.pool(name).is_none() {
                continue;
            }
            let pillars = if buckets {
                let n = market.pool(name).map_or(0, |p| p.pillars.len());
                (0..n)
                    .map(|pillar| {
                        market
                            .with_pool_bumped(
                                name,
                                PoolBump::PillarParSpread {
                                    pillar,
                                    by: SPREAD_BUMP,
                                },
                            )
                            .ok()
                            .map(Bumped::new)
                    })
                    .collect()
            } else {
                Vec::new()
            };
            bumps.push(PoolBumps {
                name: name.to_string(),
                spread: market
                    .with_pool_bumped(name, PoolBump::ParSpread(SPREAD_BUMP))
                    .ok()
                    .map(Bumped::new),
                recovery: market
                    .with_pool_bumped(name, PoolBump::Recovery(RECOVERY_BUMP))
                    .ok()
                    .map(Bumped::new),
                pillars,
            });
        }
        let correlation = market
            .surface
            .bumped(CORRELATION_BUMP)
            .ok()
            .map(|s| market.with_surface(s));
        let knots = if buckets {
            market
                .surface
                .knots()
                .iter()
                .map(|&(i, j, _, _)| {
                    market
                        .surface
                        .bumped_knot(i, j, CORRELATION_BUMP)
                        .ok()
                        .map(|s| market.with_surface(s))
                })
                .collect()
        } else {
            Vec::new()
        };
        Ok(RiskContext {
            market,
            mapping,
            names: names.max(1),
            base: Schedules::default(),
            after_default: None,
            correlation,
            knots,
            pools: bumps,
        })
    }

    /// The same context with every trade priced in `model`: the base and
    /// bumped markets in it, and after a default a pool of one name fewer
    /// (`Names(n)` leaves `Names(n - 1)`).
    pub fn with_model(mut self, model: PoolModel) -> RiskContext<'a> {
        self.base = Schedules::with_model(model);
        self.after_default = match model {
            PoolModel::Names(n) if n > 1 => Some(Schedules::with_model(PoolModel::Names(n - 1))),
            _ => None,
        };
        for b in &mut self.pools {
            for m in [&mut b.spread, &mut b.recovery]
                .into_iter()
                .flatten()
                .chain(b.pillars.iter_mut().flatten())
            {
                m.schedules = Schedules::with_model(model);
            }
        }
        self
    }

    /// The schedules of the unbumped market's pools.
    pub fn base_schedules(&self) -> &Schedules {
        &self.base
    }

    /// pv of `t` in a market bumped in its pools (own schedules).
    fn pv_bumped(&self, t: &TradeTerms, b: Option<&Bumped>) -> Result<Option<f64>> {
        let Some(b) = b else { return Ok(None) };
        let s = b.schedules.get(&b.market, &t.pool, t.maturity)?;
        pv_on(t, &b.market, self.mapping, &s)
    }

    /// pv of `t` in a market with the base pools (base schedules).
    fn pv_same_pools(&self, t: &TradeTerms, m: Option<&Market>) -> Result<Option<f64>> {
        let Some(m) = m else { return Ok(None) };
        let s = self.base.get(m, &t.pool, t.maturity)?;
        pv_on(t, m, self.mapping, &s)
    }

    /// The risk figures of trade `t` whose base valuation is `base`.
    ///
    /// # Errors
    /// As [`super::value_trade`].
    pub fn risk(&self, t: &TradeTerms, base: &Valuation) -> Result<Risk> {
        let pv = base.pv;
        let diff = |x: Option<f64>| x.map(|x| x - pv);
        let bumps = self.pools.iter().find(|b| b.name == t.pool);
        let spread_market = bumps.and_then(|b| b.spread.as_ref());
        let spread_01 = diff(self.pv_bumped(t, spread_market)?);
        let correlation_01 = diff(self.pv_same_pools(t, self.correlation.as_ref())?);
        let recovery_01 = diff(self.pv_bumped(t, bumps.and_then(|b| b.recovery.as_ref()))?);
        let jump_to_default = self.jump_to_default(t, pv)?;
        let index_01 = spread_market.and_then(|b| self.index_01(t, &b.market));
        let delta = match (spread_01, index_01) {
            (Some(s), Some(i)) if i != 0.0 => Some(s / i),
            _ => None,
        };
        Ok(Risk {
            spread_01,
            correlation_01,
            recovery_01,
            jump_to_default,
            index_01,
            delta,
        })
    }

    /// Bucketed risk of trade `t` (empty unless the context was built with buckets).
    ///
    /// # Errors
    /// As [`super::value_trade`].
    pub fn buckets(&self, t: &TradeTerms, base: &Valuation) -> Result<BucketedRisk> {
        let pv = base.pv;
        let mut out = BucketedRisk::default();
        if let (Some(b), Some(pool)) = (
            self.pools.iter().find(|b| b.name == t.pool),
            self.market.pool(&t.pool),
        ) {
            for (p, m) in pool.pillars.iter().zip(&b.pillars) {
                out.spread_01
                    .push((p.maturity, self.pv_bumped(t, m.as_ref())?.map(|x| x - pv)));
            }
        }
        for ((_, _, maturity, knot), m) in self.market.surface.knots().iter().zip(&self.knots) {
            out.correlation_01.push((
                *maturity,
                knot.detach,
                self.pv_same_pools(t, m.as_ref())?.map(|x| x - pv),
            ));
        }
        Ok(out)
    }

    /// One of n names defaults now at the pool's recovery.
    fn jump_to_default(&self, t: &TradeTerms, pv: f64) -> Result<Option<f64>> {
        let Some(pool) = self.market.pool(&t.pool) else {
            return Ok(None);
        };
        let n = self.names as f64;
        let r = pool.recovery;
        let (l, rec) = ((1.0 - r) / n, r / n);
        let (a, d, w) = (t.tranche.attach(), t.tranche.detach(), t.tranche.width());
        let x = l.min(d) - l.min(a);
        let y = rec.min(1.0 - a) - rec.min(1.0 - d);
        let paid = t.sign * t.notional * x / w;
        let left = w - x - y;
        let shrink = 1.0 - 1.0 / n;
        let a2 = (a - l).max(0.0) / shrink;
        let d2 = (d - l).max(0.0).min(1.0 - l - rec) / shrink;
        if left <= MIN_WIDTH || d2 - a2 < MIN_WIDTH || shrink <= 0.0 {
            return Ok(Some(paid - pv));
        }
        let after = TradeTerms {
            tranche: Tranche::new(a2.min(1.0), d2.min(1.0))?,
            notional: t.notional * left / w,
            ..t.clone()
        };
        let s = self.after_default.as_ref().unwrap_or(&self.base).get(
            self.market,
            &after.pool,
            after.maturity,
        )?;
        Ok(pv_on(&after, self.market, self.mapping, &s)?.map(|p| paid + p - pv))
    }

    /// Change under the spread bump of a protection buyer's contract of
    /// notional N on the trade's pool at the pillar nearest in maturity
    /// (ties: the later), paying that pillar's pre-bump par spread.
    fn index_01(&self, t: &TradeTerms, bumped: &Market) -> Option<f64> {
        let pool = self.market.pool(&t.pool)?;
        let after = bumped.pool(&t.pool)?;
        let gap = |m: NaiveDate| (m - t.maturity).num_days().abs();
        let k = (0..pool.pillars.len()).min_by(|&i, &j| {
            let (pi, pj) = (&pool.pillars[i], &pool.pillars[j]);
            gap(pi.maturity)
                .cmp(&gap(pj.maturity))
                .then(pj.maturity.cmp(&pi.maturity))
        })?;
        let s0 = pool.pillars[k].protection / pool.pillars[k].annuity;
        let p = after.pillars.get(k)?;
        Some(t.notional * (p.protection - s0 * p.annuity))
    }
}
