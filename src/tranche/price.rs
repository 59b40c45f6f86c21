//! Tranche legs, value to the protection buyer, and model quotes.
//!
//! # Formula
//! Per unit of tranche notional, with base legs in pool units,
//! W = D - A and DF(ts) the discount factor to the upfront's settlement:
//! ```text
//! protection = (prot_D(rho_D) - prot_A(rho_A)) / W
//! annuity    = (ann_D(rho_D)  - ann_A(rho_A))  / W
//! value      = protection - c · annuity - u · DF(ts)      (protection buyer)
//! model upfront at coupon c = (protection - c · annuity) / DF(ts)
//! model par spread          = protection / annuity
//! ```
//! A `spread_bp` quote s is the case c = s, u = 0.

use super::bounds::Tranche;
use super::legs::{BaseLegs, TrancheSchedule};
use crate::error::Result;
use crate::loss::{BaseTranche, Correlation};
use crate::market::Quote;

/// Legs of one tranche per unit of tranche notional.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct TrancheLegs {
    /// Protection leg.
    pub protection: f64,
    /// Premium annuity per unit running spread.
    pub annuity: f64,
    /// d protection / d rho_D (with rho_A held; both move for a flat rho
    /// when built by [`TrancheValuer::legs_flat`]).
    pub d_protection: f64,
    /// d annuity / d rho, as for `d_protection`.
    pub d_annuity: f64,
    /// Expected tranche loss at the protection end, fraction of the width.
    /// Not clamped: rounding in a thin senior tranche shows as -1e-17, and a
    /// skew that is not arbitrage-free as a negative number.
    pub expected_loss: f64,
}

/// A tranche with its contract (a quote: running spread, or upfront plus
/// coupon) on a precomputed schedule.
#[derive(Debug, Clone, Copy)]
pub struct TrancheValuer<'a> {
    /// The schedule (discounting, default probabilities, recovery).
    pub schedule: &'a TrancheSchedule,
    /// The tranche's bounds.
    pub tranche: Tranche,
    /// The tranche's quote (its contract terms).
    pub quote: Quote,
    lower: BaseTranche,
    upper: BaseTranche,
}

impl<'a> TrancheValuer<'a> {
    /// The tranche `tranche` with contract `quote` on `schedule`.
    ///
    /// # Errors
    /// Only if the schedule's recovery is not a fraction (the schedule
    /// checks it, so in practice never).
    pub fn new(schedule: &'a TrancheSchedule, tranche: Tranche, quote: Quote) -> Result<Self> {
        Ok(TrancheValuer {
            schedule,
            tranche,
            quote,
            lower: schedule.base(tranche.attach())?,
            upper: schedule.base(tranche.detach())?,
        })
    }

    /// The base tranche [0, A].
    pub fn lower_base(&self) -> &BaseTranche {
        &self.lower
    }

    /// The base tranche [0, D].
    pub fn upper_base(&self) -> &BaseTranche {
        &self.upper
    }

    /// Running spread paid alongside the upfront (the coupon, or the quoted par spread).
    pub fn running(&self) -> f64 {
        match self.quote {
            Quote::Spread(s) => s,
            Quote::Upfront { coupon, .. } => coupon,
        }
    }

    /// Upfront paid by the protection buyer (0 for a par-spread quote).
    pub fn upfront(&self) -> f64 {
        match self.quote {
            Quote::Spread(_) => 0.0,
            Quote::Upfront { upfront, .. } => upfront,
        }
    }

    /// Legs of the upper base [0, D] at `rho` (pool units).
    pub fn upper_legs(&self, rho: f64) -> BaseLegs {
        self.schedule.base_legs(&self.upper, rho)
    }

    /// Legs of the lower base [0, A] at `rho` (pool units).
    pub fn lower_legs(&self, rho: f64) -> BaseLegs {
        self.schedule.base_legs(&self.lower, rho)
    }

    /// Legs with the attachment's base at `rho_attach` and the detachment's
    /// at `rho_detach`. Derivatives are in `rho_detach` only.
    pub fn legs(&self, rho_attach: f64, rho_detach: f64) -> TrancheLegs {
        let d = self.upper_legs(rho_detach);
        let a = self.lower_legs(rho_attach);
        self.combine(&a, &d, false)
    }

    /// Legs at one flat correlation, derivatives in that correlation.
    pub fn legs_flat(&self, rho: f64) -> TrancheLegs {
        // One bivariate normal rule for both bases.
        let corr = Correlation::new(rho);
        let d = self.schedule.base_legs_at(&self.upper, &corr);
        let a = self.schedule.base_legs_at(&self.lower, &corr);
        self.combine(&a, &d, true)
    }

    /// [`Self::legs`] and, in the same pass, the expected tranche loss
    /// (fraction of the width) at step-in and at every period end, with the
    /// bases at their own correlations. Not clamped.
    pub fn legs_and_losses(&self, rho_attach: f64, rho_detach: f64) -> (TrancheLegs, Vec<f64>) {
        let w = self.tranche.width();
        let (d, dp) = self.schedule.base_legs_and_losses(&self.upper, rho_detach);
        let (a, ap) = self.schedule.base_legs_and_losses(&self.lower, rho_attach);
        let path = dp.iter().zip(&ap).map(|(d, a)| (d - a) / w).collect();
        (self.combine(&a, &d, false), path)
    }

    /// The expected tranche loss path alone; see [`Self::legs_and_losses`].
    pub fn expected_losses(&self, rho_attach: f64, rho_detach: f64) -> Vec<f64> {
        self.legs_and_losses(rho_attach, rho_detach).1
    }

    /// The tranche's legs from its two base tranches' legs (pool units):
    /// `(upper - lower) / W`. With `flat`, both bases sit at one correlation
    /// and the derivatives are in it; otherwise the lower base is held and
    /// the derivatives are in the upper base's correlation.
    pub fn combine(&self, lower: &BaseLegs, upper: &BaseLegs, flat: bool) -> TrancheLegs {
        let w = self.tranche.width();
        let held = if flat { 1.0 } else { 0.0 };
        TrancheLegs {
            protection: (upper.protection - lower.protection) / w,
            annuity: (upper.annuity - lower.annuity) / w,
            d_protection: (upper.d_protection - held * lower.d_protection) / w,
            d_annuity: (upper.d_annuity - held * lower.d_annuity) / w,
            expected_loss: (upper.expected_loss - lower.expected_loss) / w,
        }
    }

    /// Value to the protection buyer at the quote, per unit tranche notional.
    pub fn value(&self, legs: &TrancheLegs) -> f64 {
        legs.protection
            - self.running() * legs.annuity
            - self.upfront() * self.schedule.df_settlement()
    }

    /// d value / d rho from the legs' derivatives.
    pub fn d_value(&self, legs: &TrancheLegs) -> f64 {
        legs.d_protection - self.running() * legs.d_annuity
    }

    /// Model upfront (fraction) at the quote's coupon (0 for a spread quote).
    pub fn model_upfront(&self, legs: &TrancheLegs) -> f64 {
        (legs.protection - self.quote.coupon() * legs.annuity) / self.schedule.df_settlement()
    }

    /// Model par spread (fraction) with no upfront; `None` when the annuity
    /// vanishes (a tranche wiped out with certainty).
    pub fn model_spread(&self, legs: &TrancheLegs) -> Option<f64> {
        (legs.annuity > 1e-14).then(|| legs.protection / legs.annuity)
    }

    /// The model quote in the quote's file unit (bp or percent).
    pub fn model_quote(&self, legs: &TrancheLegs) -> Option<f64> {
        match self.quote {
            Quote::Spread(_) => self.model_spread(legs).map(|s| s * 1e4),
            Quote::Upfront { .. } => Some(self.model_upfront(legs) * 100.0),
        }
    }
}
