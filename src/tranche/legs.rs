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

use crate::curve::{DiscountCurve, HazardCurve, Pool};
use crate::dates::Schedule;
use crate::error::{Error, ErrorKind, Result};
use crate::loss::{
    BaseExpectation, BaseTranche, Correlation, FinitePool, Horizon, Method, PoolModel,
};
use chrono::NaiveDate;

/// Everything about a tranche's schedule on one pool that does not depend
/// on correlation: discount factors, accruals, the pool's recovery and its
/// default probability at each date.
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
    /// Pool recovery.
    recovery: f64,
    /// The pool of n names when the model is [`PoolModel::Names`]; `None`
    /// for the large pool.
    finite: Option<FinitePool>,
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

impl TrancheSchedule {
    /// Precomputes the schedule of a tranche on `pool` maturing on `maturity`.
    ///
    /// # Errors
    /// As [`TrancheSchedule::new`].
    pub fn for_pool(pool: &Pool, maturity: NaiveDate) -> Result<Self> {
        TrancheSchedule::new(
            pool.date,
            maturity,
            &pool.discount,
            &pool.hazard,
            pool.recovery,
        )
    }

    /// Precomputes the schedule of a tranche traded on `trade` maturing on
    /// `maturity`, on a pool with these curves and recovery.
    ///
    /// # Errors
    /// [`ErrorKind::InvalidInput`] when the maturity is not after the trade
    /// date, the recovery is outside [0, 1), or the hazard curve gives a
    /// default probability outside [0, 1].
    pub fn new(
        trade: NaiveDate,
        maturity: NaiveDate,
        discount: &DiscountCurve,
        hazard: &HazardCurve,
        recovery: f64,
    ) -> Result<Self> {
        if maturity <= trade {
            return Err(Error::msg(
                ErrorKind::InvalidInput,
                format!(
                    "tranche schedule: maturity {maturity} is not after the trade date {trade}"
                ),
            ));
        }
        if !(0.0..1.0).contains(&recovery) {
            return Err(Error::msg(
                ErrorKind::InvalidInput,
                format!("tranche schedule: expected a recovery in [0, 1), found {recovery}"),
            ));
        }
        let s = Schedule::new(trade, maturity);
        let mut horizons = Vec::with_capacity(s.periods.len() + 1);
        horizons.push(Horizon::new(
            hazard.default_probability(s.periods[0].t_start),
        )?);
        let mut df_pay = Vec::with_capacity(s.periods.len());
        let mut half_accrual_df = Vec::with_capacity(s.periods.len());
        for p in &s.periods {
            let df = discount.df(p.t_pay);
            df_pay.push(df);
            half_accrual_df.push(0.5 * p.accrual * df);
            horizons.push(Horizon::new(hazard.default_probability(p.t_end))?);
        }
        Ok(TrancheSchedule {
            df_pay,
            half_accrual_df,
            horizons,
            df_settlement: discount.df(s.settlement_time()),
            maturity,
            recovery,
            finite: None,
        })
    }

    /// [`Self::for_pool`] priced in `model`: the large pool, or a pool of
    /// n names ([`crate::loss::finite`]). Every leg, solver and report on
    /// the schedule then uses that model.
    ///
    /// # Errors
    /// As [`Self::for_pool`]; [`ErrorKind::InvalidInput`] for a pool of 0 names.
    pub fn for_pool_with(pool: &Pool, maturity: NaiveDate, model: PoolModel) -> Result<Self> {
        TrancheSchedule::for_pool(pool, maturity)?.with_model(model)
    }

    /// This schedule priced in `model`.
    ///
    /// # Errors
    /// [`ErrorKind::InvalidInput`] for a pool of 0 names.
    pub fn with_model(mut self, model: PoolModel) -> Result<Self> {
        self.finite = match model {
            PoolModel::LargePool => None,
            PoolModel::Names(n) => Some(FinitePool::new(n)?),
        };
        Ok(self)
    }

    /// The pool model the legs are priced in.
    pub fn model(&self) -> PoolModel {
        self.finite
            .as_ref()
            .map_or(PoolModel::LargePool, |p| PoolModel::Names(p.names()))
    }

    /// DF at the upfront's settlement date.
    pub fn df_settlement(&self) -> f64 {
        self.df_settlement
    }

    /// Maturity.
    pub fn maturity(&self) -> NaiveDate {
        self.maturity
    }

    /// The pool's recovery.
    pub fn recovery(&self) -> f64 {
        self.recovery
    }

    /// Pool default probability at the protection end.
    pub fn default_probability(&self) -> f64 {
        self.horizons.last().map_or(0.0, |h| h.pd)
    }

    /// The base tranche [0, `detach`] on this schedule's pool.
    ///
    /// # Errors
    /// [`ErrorKind::InvalidInput`] when `detach` is not a number in [0, 1].
    pub fn base(&self, detach: f64) -> Result<BaseTranche> {
        BaseTranche::new(self.recovery, detach)
    }

    /// Legs of a base tranche (made by [`Self::base`]) at correlation `rho`,
    /// pool units, by the closed form. `detach = 0` gives all zeros.
    pub fn base_legs(&self, base: &BaseTranche, rho: f64) -> BaseLegs {
        self.base_legs_by(base, rho, Method::ClosedForm)
    }

    /// [`Self::base_legs`] with the expectation evaluated by `method`
    /// (closed form, or the independent quadrature over the factor). A
    /// finite pool has one evaluation and ignores `method`.
    pub fn base_legs_by(&self, base: &BaseTranche, rho: f64, method: Method) -> BaseLegs {
        if base.detach <= 0.0 {
            return BaseLegs::default();
        }
        if self.finite.is_some() {
            return self.base_legs_at(base, &Correlation::new(rho));
        }
        match method {
            // The closed form's fast path: the bivariate normal's rule for
            // this correlation is built once for every date.
            Method::ClosedForm => self.base_legs_at(base, &Correlation::new(rho)),
            Method::Quadrature => self.sum_legs(|h| base.expectation(h, rho, method)),
        }
    }

    /// [`Self::base_legs`] at a precomputed correlation (the bivariate
    /// normal's rule built once for several base tranches).
    pub fn base_legs_at(&self, base: &BaseTranche, corr: &Correlation) -> BaseLegs {
        if base.detach <= 0.0 {
            return BaseLegs::default();
        }
        match &self.finite {
            // every date at once: one table lookup and one set of Gaussian
            // factors for the correlation
            Some(pool) => self.sum_path(base.finite_path(&self.horizons, corr, pool).into_iter()),
            None => self.sum_legs(|h| base.closed_form(h, corr)),
        }
    }

    /// [`Self::base_legs`] and, in the same pass, the expected loss
    /// E[min(L, K)] at step-in and at every period end (the dates at which
    /// the legs read it), pool units.
    pub fn base_legs_and_losses(&self, base: &BaseTranche, rho: f64) -> (BaseLegs, Vec<f64>) {
        if base.detach <= 0.0 {
            return (BaseLegs::default(), vec![0.0; self.horizons.len()]);
        }
        let corr = Correlation::new(rho);
        let path: Vec<BaseExpectation> = match &self.finite {
            Some(pool) => base.finite_path(&self.horizons, &corr, pool),
            None => self
                .horizons
                .iter()
                .map(|h| base.closed_form(h, &corr))
                .collect(),
        };
        let losses = path.iter().map(|e| e.loss).collect();
        (self.sum_path(path.into_iter()), losses)
    }

    /// Sums the legs over the schedule from the base expectation at each date.
    fn sum_legs(&self, at: impl Fn(&Horizon) -> BaseExpectation) -> BaseLegs {
        self.sum_path(self.horizons.iter().map(at))
    }

    /// Sums the legs from the base expectations at step-in and at every
    /// period end, in order.
    fn sum_path(&self, mut path: impl Iterator<Item = BaseExpectation>) -> BaseLegs {
        let mut legs = BaseLegs::default();
        let Some(mut prev) = path.next() else {
            return legs;
        };
        for ((cur, &df), &w) in path.zip(&self.df_pay).zip(&self.half_accrual_df) {
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
