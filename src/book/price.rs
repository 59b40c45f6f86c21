//! One trade valued off the correlation surface.
//!
//! # Formula
//! A tranche [A, D] maturing at T with running coupon c, on pool X (the
//! index, or a bespoke pool with its own curve and recovery), per unit of
//! tranche notional:
//! ```text
//! [A, D] = base [0, D] at rho(D_I, T)  minus  base [0, A] at rho(A_I, T)
//! par spread = P / Ann;   upfront = (P - c Ann) / DF(settlement)
//! pv         = s N (P - c Ann)          s = +1 buyer, -1 seller
//! ```
//! where K_I is the index-equivalent detachment of K ([`super::mapping`]),
//! K itself for index trades. Expected tranche loss is never clamped: below
//! -1e-12 at any schedule date it is reported with `negative_expected_loss`.

use super::mapping::{index_equivalent, Mapping};
use super::market::{Market, TradeTerms, INDEX_POOL};
use crate::dates::Schedule;
use crate::error::{Error, ErrorKind, Result};
use crate::flags::Flag;
use crate::market::Quote;
use crate::tranche::{TrancheSchedule, TrancheValuer};

/// Expected tranche loss below this (fraction of width) is flagged negative.
pub const NEGATIVE_LOSS_TOLERANCE: f64 = 1e-12;

/// A trade's value off the surface.
#[derive(Debug, Clone, PartialEq)]
pub struct Valuation {
    /// rho at which base [0, A] is valued; `None` when A = 0.
    pub rho_attach: Option<f64>,
    /// rho at which base [0, D] is valued; `None` when D = 100%.
    pub rho_detach: Option<f64>,
    /// Index-equivalent attachment K_I (fraction).
    pub index_equivalent_attach: f64,
    /// Index-equivalent detachment K_I (fraction).
    pub index_equivalent_detach: f64,
    /// Protection leg per unit tranche notional.
    pub protection: f64,
    /// Risky annuity per unit tranche notional.
    pub annuity: f64,
    /// P / Ann (fraction), `None` when the annuity vanishes.
    pub par_spread: Option<f64>,
    /// (P - c Ann) / DF(settlement), fraction of tranche notional.
    pub upfront: f64,
    /// Expected tranche loss at the protection end, fraction of the width.
    pub expected_loss: f64,
    /// s N (P - c Ann), currency.
    pub pv: f64,
    /// `extrapolated_detachment`, `extrapolated_maturity`, `negative_expected_loss`,
    /// `several_mappings`, `unattainable_expected_loss`.
    pub flags: Vec<Flag>,
}

/// A trade priced, or the reason it is not.
#[derive(Debug, Clone, PartialEq)]
pub enum Priced {
    /// The trade's value.
    Valued(Valuation),
    /// Not priced: `no_skew` or `no_mapping`.
    NotPriced(Flag),
}

impl Priced {
    /// The value, if priced.
    pub fn valuation(&self) -> Option<&Valuation> {
        match self {
            Priced::Valued(v) => Some(v),
            Priced::NotPriced(_) => None,
        }
    }

    /// The pv, if priced.
    pub fn pv(&self) -> Option<f64> {
        self.valuation().map(|v| v.pv)
    }
}

/// One bound's correlation off the surface.
struct Bound {
    rho: Option<f64>,
    k_index: f64,
    extrapolated_detachment: bool,
    extrapolated_maturity: bool,
    several: bool,
    unattainable: bool,
}

/// Values `t` in `market` under `mapping`.
///
/// # Errors
/// [`ErrorKind::InvalidInput`] for a trade whose pool is not in the market
/// or whose maturity is not after the trade date.
pub fn value_trade(t: &TradeTerms, market: &Market, mapping: Mapping) -> Result<Priced> {
    let pool = market.pool(&t.pool).ok_or_else(|| {
        Error::msg(
            ErrorKind::InvalidInput,
            format!("unknown pool \"{}\"", t.pool),
        )
    })?;
    let schedule = TrancheSchedule::for_pool(pool, t.maturity)?;
    value_trade_on(t, market, mapping, &schedule)
}

/// [`value_trade`] on a schedule already built for the trade's pool and
/// maturity (trades that share both can share it).
///
/// # Errors
/// As [`value_trade`].
pub fn value_trade_on(
    t: &TradeTerms,
    market: &Market,
    mapping: Mapping,
    schedule: &TrancheSchedule,
) -> Result<Priced> {
    evaluate(t, market, mapping, schedule, true)
}

/// The trade's pv alone (no loss path, no flags), `None` when it is not
/// priced: what a risk figure reprices.
///
/// # Errors
/// As [`value_trade`].
pub fn pv_on(
    t: &TradeTerms,
    market: &Market,
    mapping: Mapping,
    schedule: &TrancheSchedule,
) -> Result<Option<f64>> {
    Ok(evaluate(t, market, mapping, schedule, false)?.pv())
}

/// Values a trade; `detail` adds the expected-loss path check and flags.
fn evaluate(
    t: &TradeTerms,
    market: &Market,
    mapping: Mapping,
    schedule: &TrancheSchedule,
    detail: bool,
) -> Result<Priced> {
    if market.surface.is_empty() {
        return Ok(Priced::NotPriced(Flag::NoSkew));
    }
    let pool = market.pool(&t.pool).ok_or_else(|| {
        Error::msg(
            ErrorKind::InvalidInput,
            format!("unknown pool \"{}\"", t.pool),
        )
    })?;
    let tau = Schedule::new(pool.date, t.maturity).protection_end_time();
    let bound = |k: f64| -> Result<Option<Bound>> {
        if k <= 0.0 || k >= 1.0 - 1e-12 {
            return Ok(Some(Bound {
                rho: None,
                k_index: k,
                extrapolated_detachment: false,
                extrapolated_maturity: false,
                several: false,
                unattainable: false,
            }));
        }
        let mapped = if t.pool == INDEX_POOL {
            Some((k, false))
        } else {
            index_equivalent(
                mapping,
                k,
                t.maturity,
                tau,
                &market.index,
                pool,
                &market.surface,
            )?
            .map(|m| (m.k_index, m.several))
        };
        let Some((k_index, several)) = mapped else {
            return Ok(None);
        };
        Ok(market.surface.rho(k_index, t.maturity).map(|l| Bound {
            rho: Some(l.rho),
            k_index,
            extrapolated_detachment: l.extrapolated_detachment,
            extrapolated_maturity: l.extrapolated_maturity,
            several,
            unattainable: l.unattainable_loss,
        }))
    };
    let (Some(a), Some(d)) = (bound(t.tranche.attach())?, bound(t.tranche.detach())?) else {
        return Ok(Priced::NotPriced(Flag::NoMapping));
    };
    let quote = Quote::Upfront {
        upfront: 0.0,
        coupon: t.coupon,
    };
    let v = TrancheValuer::new(schedule, t.tranche, quote)?;
    // A bound at 0 or 100% needs no correlation: any value gives the same legs.
    let rho_a = a.rho.or(d.rho).unwrap_or(0.5);
    let rho_d = d.rho.unwrap_or(rho_a);
    let (legs, losses) = if detail {
        v.legs_and_losses(rho_a, rho_d)
    } else {
        (v.legs(rho_a, rho_d), Vec::new())
    };
    let running = legs.protection - t.coupon * legs.annuity;
    let pv = t.sign * t.notional * running;
    let mut valuation = Valuation {
        rho_attach: a.rho,
        rho_detach: d.rho,
        index_equivalent_attach: a.k_index,
        index_equivalent_detach: d.k_index,
        protection: legs.protection,
        annuity: legs.annuity,
        par_spread: v.model_spread(&legs),
        upfront: v.model_upfront(&legs),
        expected_loss: legs.expected_loss,
        pv,
        flags: Vec::new(),
    };
    if detail {
        let flags = &mut valuation.flags;
        if a.extrapolated_detachment || d.extrapolated_detachment {
            flags.push(Flag::ExtrapolatedDetachment);
        }
        if a.extrapolated_maturity || d.extrapolated_maturity || outside_maturities(market, t) {
            flags.push(Flag::ExtrapolatedMaturity);
        }
        if losses.iter().any(|&x| x < -NEGATIVE_LOSS_TOLERANCE) {
            flags.push(Flag::NegativeExpectedLoss);
        }
        if a.several || d.several {
            flags.push(Flag::SeveralMappings);
        }
        if a.unattainable || d.unattainable {
            flags.push(Flag::UnattainableExpectedLoss);
        }
    }
    Ok(Priced::Valued(valuation))
}

/// Whether the trade's maturity lies outside the surface's maturities
/// (a whole-pool trade reads no correlation but is still outside).
fn outside_maturities(market: &Market, t: &TradeTerms) -> bool {
    match (
        market.surface.maturities.first(),
        market.surface.maturities.last(),
    ) {
        (Some(f), Some(l)) => t.maturity < f.maturity || t.maturity > l.maturity,
        _ => false,
    }
}
