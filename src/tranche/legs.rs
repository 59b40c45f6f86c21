//! Base-tranche legs over the coupon schedule.
//!
//! # Formula
//! For the base tranche [0, K], in pool-notional units, with EL_K(t) its
//! expected loss and N_K(t) its expected outstanding notional at t, and
//! t_0 = step-in, t_i = end of period i:
//! ```text
//! protection = Σ_i DF(pay_i) (EL_K(t_i) - EL_K(t_(i-1)))
//! annuity    = Σ_i accrual_i DF(pay_i) (N_K(t_(i-1)) + N_K(t_i)) / 2
//! ```
//! Both are linear in EL and N, so their derivatives in rho come from the
//! derivatives of EL and N at each date.

use crate::curve::{DiscountCurve, HazardCurve};
use crate::dates::Schedule;
use crate::loss::{BaseExpectation, BaseTranche, Correlation, Horizon, Method};
use crate::math::normal::inv_cdf;
use chrono::NaiveDate;

/// Everything about a tranche's schedule that does not depend on correlation:
/// discount factors, accruals and the pool default probability at each date.
#[derive(Debug, Clone, PartialEq)]
pub struct TrancheSchedule {
    /// DF(pay_i) per period.
    df_pay: Vec<f64>,
    /// accrual_i DF(pay_i) / 2 per period.
    half_accrual_df: Vec<f64>,
    /// Pool default probability at step-in and at each period end.
    horizons: Vec<Horizon>,
    /// DF at the upfront's settlement date.
    df_settlement: f64,
    /// Maturity.
    maturity: NaiveDate,
}

/// Legs of a base tranche [0, K] in pool-notional units, with their
/// derivatives in rho.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct BaseLegs {
    /// Protection leg.
    pub protection: f64,
    /// Premium annuity (per unit running spread).
    pub annuity: f64,
    /// d protection / d rho.
    pub d_protection: f64,
    /// d annuity / d rho.
    pub d_annuity: f64,
    /// Expected loss E[min(L, K)] at the protection end.
    pub expected_loss: f64,
}

/// A horizon for a default probability the hazard curve produced (always in [0, 1]).
fn horizon(pd: f64) -> Horizon {
    let pd = pd.clamp(0.0, 1.0);
    Horizon { pd, c: inv_cdf(pd) }
}

impl TrancheSchedule {
    /// Precomputes the schedule of a tranche traded on `trade` maturing on `maturity`.
    pub fn new(
        trade: NaiveDate,
        maturity: NaiveDate,
        discount: &DiscountCurve,
        hazard: &HazardCurve,
    ) -> Self {
        let s = Schedule::new(trade, maturity);
        let mut horizons = Vec::with_capacity(s.periods.len() + 1);
        horizons.push(horizon(hazard.default_probability(s.periods[0].t_start)));
        let mut df_pay = Vec::with_capacity(s.periods.len());
        let mut half_accrual_df = Vec::with_capacity(s.periods.len());
        for p in &s.periods {
            let df = discount.df(p.t_pay);
            df_pay.push(df);
            half_accrual_df.push(0.5 * p.accrual * df);
            horizons.push(horizon(hazard.default_probability(p.t_end)));
        }
        TrancheSchedule {
            df_pay,
            half_accrual_df,
            horizons,
            df_settlement: discount.df(s.settlement_time()),
            maturity,
        }
    }

    /// DF at the upfront's settlement date.
    pub fn df_settlement(&self) -> f64 {
        self.df_settlement
    }

    /// Maturity.
    pub fn maturity(&self) -> NaiveDate {
        self.maturity
    }

    /// Pool default probability at the protection end.
    pub fn default_probability(&self) -> f64 {
        self.horizons.last().map_or(0.0, |h| h.pd)
    }

    /// Legs of the base tranche [0, `detach`] at correlation `rho`, pool
    /// units, by the closed form. `detach = 0` gives all zeros.
    ///
    /// `recovery` in [0, 1) and `detach` in [0, 1] are the snapshot reader's
    /// guarantees; outside them (or NaN) the legs are all zero.
    pub fn base_legs(&self, recovery: f64, detach: f64, rho: f64) -> BaseLegs {
        self.base_legs_by(recovery, detach, rho, Method::ClosedForm)
    }

    /// [`Self::base_legs`] with the expectation evaluated by `method`
    /// (closed form, or the independent quadrature over the factor).
    pub fn base_legs_by(&self, recovery: f64, detach: f64, rho: f64, method: Method) -> BaseLegs {
        if detach <= 0.0 {
            return BaseLegs::default();
        }
        let Ok(base) = BaseTranche::new(recovery, detach) else {
            return BaseLegs::default();
        };
        match method {
            // The closed form's fast path: the bivariate normal's rule for
            // this correlation is built once for every date.
            Method::ClosedForm => {
                let corr = Correlation::new(rho);
                self.sum_legs(|h| base.closed_form(h, &corr))
            }
            Method::Quadrature => self.sum_legs(|h| base.expectation(h, rho, method)),
        }
    }

    /// Sums the legs over the schedule from the base expectation at each date.
    fn sum_legs(&self, at: impl Fn(&Horizon) -> BaseExpectation) -> BaseLegs {
        let mut legs = BaseLegs::default();
        let mut prev = at(&self.horizons[0]);
        for (i, h) in self.horizons[1..].iter().enumerate() {
            let cur = at(h);
            let df = self.df_pay[i];
            let w = self.half_accrual_df[i];
            legs.protection += df * (cur.loss - prev.loss);
            legs.d_protection += df * (cur.dloss_drho - prev.dloss_drho);
            legs.annuity += w * (prev.outstanding + cur.outstanding);
            legs.d_annuity += w * (prev.doutstanding_drho + cur.doutstanding_drho);
            prev = cur;
        }
        legs.expected_loss = prev.loss;
        legs
    }
}
