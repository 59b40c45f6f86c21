//! Large-homogeneous-pool expected tranche loss and outstanding notional.
//!
//! # The model
//!
//! One horizon `t`, pool default probability `PD = PD(t)`, threshold
//! `c = G(PD)` (`G` the inverse normal CDF), asset correlation `rho`. Given
//! the common factor `Z ~ N(0, 1)` the pool's default fraction is
//!
//! ```text
//! p(Z) = N((c - sqrt(rho) Z) / sqrt(1 - rho))
//! ```
//!
//! (Vasicek large-pool limit), the pool loss is `L = (1 - R) p` and the
//! recovered fraction `Rec = R p`. Losses eat the capital structure from
//! the bottom, recoveries amortise it from the top (conventions.md).
//!
//! Everything reduces to one expectation, `E[min(p(Z), k)]` for a cap `k`,
//! computed two independent ways:
//!
//! - [`closed`]: with the bivariate normal CDF,
//!   `E[min(p, k)] = Phi2(c, -A; -sqrt(rho)) + k N(A)`,
//!   `A = (c - sqrt(1 - rho) G(k)) / sqrt(rho)`, and its analytic
//!   derivative in `rho`;
//! - [`quadrature`]: Gauss-Legendre over the factor, split at the kink
//!   `z_k = A` where `p(z)` crosses `k` and around the steep part of `p`.
//!
//! The two agree to better than 1e-10 (tested on a grid of rho in
//! [1e-4, 0.9999], PD in [1e-6, 0.9], k in (0, 1]).
//!
//! # API in brief
//!
//! - [`Horizon`] holds `PD` and `c = G(PD)`; [`Cap`] holds a cap `k` and
//!   `G(k)`. Both are built once, outside any loop over `rho`, so no inverse
//!   normal is evaluated in the pricer's inner loop.
//! - [`BaseTranche`] is `[0, K]` at a recovery, with its two caps
//!   (`K / (1 - R)` for losses, `(1 - K) / R` for recoveries);
//!   [`BaseTranche::expectation`] gives [`BaseExpectation`] in
//!   **pool-notional units**, with derivatives in `rho`.
//! - [`TrancheBounds`] is `[A, D]`; [`TrancheBounds::expectation`] gives
//!   [`TrancheExpectation`] as **fractions of the width** `W = D - A`.
//! - [`base_tranche`] and [`tranche`] are one-shot conveniences (closed
//!   form) that build the above and evaluate once.
//! - [`Method`] chooses the closed form or the quadrature.
//! - [`finite`]: a pool of `n` names instead of the large-pool limit
//!   ([`FinitePool`], [`BaseTranche::finite`]), chosen by [`PoolModel`].
//! - [`Correlation`] precomputes what depends on `rho` alone (square roots,
//!   the bivariate normal rule); `closed_form(h, &corr)` on both tranche
//!   types is the fast path for valuing many horizons at one `rho`.
//!
//! # Edge cases (no NaN)
//!
//! `rho <= 0` uses the `rho = 0` limit (`p = PD` for every `Z`, so
//! `E[min(p, k)] = min(PD, k)`); `rho >= 1` the `rho = 1` limit (`p` is 0 or
//! 1, `E[min(p, k)] = k PD`); `rho` is clamped to `[0, 1]`. `PD = 0`
//! (`c = -inf`) gives 0, `PD = 1` gives `min(1, k)`, `k >= 1` gives `PD`,
//! `k <= 0` gives 0. `R = 0` has no recovery side, `R = 1` no loss side.
//! The derivative in `rho` is `-inf` where the true one is (at `rho = 1`,
//! and at `rho = 0` when `c = G(k)`); a NaN argument gives NaN.
//!
//! # Nothing is clamped
//!
//! A tranche value is a difference of two base values divided by the width,
//! so for a thin senior tranche it can come out a few 1e-17 below zero (or
//! above one). No expectation here is clamped: rounding shows as rounding,
//! and a negative tranche loss built from two different correlations (a
//! skew that is not arbitrage-free) shows as the negative number it is.
//!
//! # References
//!
//! - O. Vasicek, "Loan portfolio value", Risk 15(12), 2002 (the large-pool
//!   distribution `P(p <= y) = N((sqrt(1 - rho) G(y) - c) / sqrt(rho))`).
//! - A. Genz (2004), Statistics and Computing 14 (the bivariate normal, see
//!   [`crate::math::bvn`]).

pub mod closed;
pub mod finite;
pub mod quadrature;

pub use finite::{FinitePool, PoolModel};

use crate::error::{Error, ErrorKind, Result};
use crate::math::bvn::Bvn;
use crate::math::normal::{cdf as norm_cdf, inv_cdf, pdf};

/// One horizon of the pool: default probability, its normal threshold, and
/// the normal CDF at `±c` that the closed form reads at every correlation.
///
/// Build it with [`Horizon::new`] so that `c = G(pd)` holds.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Horizon {
    /// Pool default probability `PD(t)`, in `[0, 1]`.
    pub pd: f64,
    /// `c = G(PD)`, the inverse normal CDF of `pd` (`-inf` at 0, `+inf` at 1).
    pub c: f64,
    /// `N(c)` (equal to `pd` up to rounding) and `N(-c)`.
    n_c: (f64, f64),
}

impl Horizon {
    /// A horizon with default probability `pd` and `c = G(pd)`.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidInput`] if `pd` is not a number in `[0, 1]`.
    ///
    /// # Example
    ///
    /// ```
    /// use skewbook::loss::Horizon;
    /// let h = Horizon::new(0.5)?;
    /// assert_eq!(h.c, 0.0);
    /// assert!(Horizon::new(1.5).is_err());
    /// # Ok::<(), skewbook::Error>(())
    /// ```
    pub fn new(pd: f64) -> Result<Horizon> {
        check_fraction("default probability", pd)?;
        let c = inv_cdf(pd);
        Ok(Horizon {
            pd,
            c,
            n_c: (norm_cdf(c), norm_cdf(-c)),
        })
    }
}

/// A cap `k` on the default fraction `p`, its threshold `G(k)` and the
/// normal density there.
///
/// For a base tranche `[0, K]` the loss side uses `k = K / (1 - R)` and the
/// recovery side `k = (1 - K) / R`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Cap {
    /// The cap; values `>= 1` mean no cap, `<= 0` cap everything.
    pub k: f64,
    /// `G(k)`: `-inf` for `k <= 0`, `+inf` for `k >= 1`.
    pub g: f64,
    /// `phi(G(k))`, a factor of every rho-derivative at this cap.
    phi_g: f64,
}

impl Cap {
    /// The cap `k` with `g = G(k)` (infinite outside `(0, 1)`).
    ///
    /// # Example
    ///
    /// ```
    /// use skewbook::loss::Cap;
    /// assert_eq!(Cap::new(0.5).g, 0.0);
    /// assert_eq!(Cap::new(2.0).g, f64::INFINITY);
    /// ```
    pub fn new(k: f64) -> Cap {
        let g = inv_cdf(k);
        Cap {
            k,
            g,
            phi_g: pdf(g),
        }
    }
}

/// A correlation `rho` with what the closed form needs precomputed:
/// `sqrt(rho)`, `sqrt(1 - rho)` and the bivariate normal rule at
/// `r = -sqrt(rho)`.
///
/// A tranche valuation at one correlation calls the closed form for every
/// horizon and both caps of both base tranches; building this once per
/// `rho` keeps the per-call cost at one [`Bvn::cdf_with`], one normal CDF
/// and one exponential.
#[derive(Debug, Clone)]
pub struct Correlation {
    rho: f64,
    sr: f64,
    s1: f64,
    /// `2 sqrt(rho) sqrt(1 - rho)`, the derivative's denominator.
    two_sr_s1: f64,
    bvn: Bvn,
}

impl Correlation {
    /// Precompute for `rho`, clamped to `[0, 1]` (NaN stays NaN and gives
    /// NaN values).
    ///
    /// # Example
    ///
    /// ```
    /// use skewbook::loss::Correlation;
    /// assert_eq!(Correlation::new(1.5).rho(), 1.0);
    /// ```
    pub fn new(rho: f64) -> Correlation {
        let rho = rho.clamp(0.0, 1.0);
        let sr = rho.sqrt();
        let s1 = (1.0 - rho).sqrt();
        Correlation {
            rho,
            sr,
            s1,
            two_sr_s1: 2.0 * sr * s1,
            bvn: Bvn::new(-sr),
        }
    }

    /// The (clamped) correlation.
    pub fn rho(&self) -> f64 {
        self.rho
    }
}

/// How `E[min(p(Z), k)]` is evaluated.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Method {
    /// Bivariate normal closed form ([`closed`]); the fast one.
    #[default]
    ClosedForm,
    /// Gauss-Legendre over the factor ([`quadrature`]); an independent check.
    Quadrature,
}

/// `E[min(p(Z), k)]` and its derivative in `rho`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Expectation {
    /// `E[min(p(Z), k)]`.
    pub value: f64,
    /// `d E[min(p(Z), k)] / d rho`.
    pub drho: f64,
}

/// `E[min(p(Z), k)]` and its `rho` derivative by the chosen method.
///
/// # Formula
///
/// ```text
/// E[min(p, k)] = Phi2(c, -A; -sqrt(rho)) + k N(A),   A = (c - sqrt(1-rho) G(k)) / sqrt(rho)
/// d/drho       = -phi(A) phi(G(k)) / (2 sqrt(rho (1 - rho)))
/// ```
///
/// See [`closed::value`] and [`quadrature::value`] for the two evaluations.
///
/// # References
///
/// Vasicek (2002), "Loan portfolio value", Risk 15(12).
///
/// # Example
///
/// At `rho = 0` every name defaults with probability PD:
/// `E[min(p, k)] = min(PD, k)`.
///
/// ```
/// use skewbook::loss::{expected_min, Cap, Horizon, Method};
/// let h = Horizon::new(0.05)?;
/// let e = expected_min(&h, &Cap::new(0.03), 0.0, Method::ClosedForm);
/// assert_eq!(e.value, 0.03);
/// # Ok::<(), skewbook::Error>(())
/// ```
pub fn expected_min(h: &Horizon, cap: &Cap, rho: f64, method: Method) -> Expectation {
    match method {
        Method::ClosedForm => closed::expectation_at(h, cap, &Correlation::new(rho)),
        Method::Quadrature => quadrature::value_and_drho(h, cap, rho),
    }
}

/// Expected loss and outstanding notional of a base tranche `[0, K]`, in
/// pool-notional units, with derivatives in `rho`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BaseExpectation {
    /// `E[min(L, K)]`, in `[0, K]` up to rounding.
    pub loss: f64,
    /// `K - E[min(L, K)] - (E[Rec] - E[min(Rec, 1 - K)])`, in `[0, K]` up to rounding.
    pub outstanding: f64,
    /// `d loss / d rho`.
    pub dloss_drho: f64,
    /// `d outstanding / d rho`.
    pub doutstanding_drho: f64,
}

/// Expected loss and outstanding notional of a tranche `[A, D]`, as
/// fractions of its width `W = D - A`, with derivatives in `rho`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TrancheExpectation {
    /// `E[min(L, D) - min(L, A)] / W`, in `[0, 1]` up to rounding.
    pub loss: f64,
    /// `1 - loss - E[min(Rec, 1 - A) - min(Rec, 1 - D)] / W`, in `[0, 1]` up to rounding.
    pub outstanding: f64,
    /// `d loss / d rho` (per width).
    pub dloss_drho: f64,
    /// `d outstanding / d rho` (per width).
    pub doutstanding_drho: f64,
}

/// A base tranche `[0, K]` at a recovery rate, with its caps precomputed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BaseTranche {
    /// Detachment `K`, a fraction of pool notional.
    pub detach: f64,
    /// Recovery rate `R`.
    pub recovery: f64,
    loss_cap: Cap,
    recovery_cap: Cap,
}

impl BaseTranche {
    /// The base tranche `[0, detach]` at recovery `recovery`.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidInput`] if either is not a number in `[0, 1]`.
    ///
    /// # Example
    ///
    /// ```
    /// use skewbook::loss::BaseTranche;
    /// assert!(BaseTranche::new(0.4, 0.03).is_ok());
    /// assert!(BaseTranche::new(0.4, 3.0).is_err());
    /// ```
    pub fn new(recovery: f64, detach: f64) -> Result<BaseTranche> {
        check_fraction("recovery", recovery)?;
        check_fraction("detachment", detach)?;
        let lgd = 1.0 - recovery;
        let loss_cap = if lgd > 0.0 {
            Cap::new(detach / lgd)
        } else {
            Cap::new(0.0)
        };
        let recovery_cap = if recovery > 0.0 {
            Cap::new((1.0 - detach) / recovery)
        } else {
            Cap::new(0.0)
        };
        Ok(BaseTranche {
            detach,
            recovery,
            loss_cap,
            recovery_cap,
        })
    }

    /// Expected loss and outstanding notional in pool-notional units.
    ///
    /// # Formula
    ///
    /// ```text
    /// loss        = E[min(L, K)]          = (1 - R) E[min(p, K / (1 - R))]
    /// amortised   = E[Rec] - E[min(Rec, 1 - K)] = R PD - R E[min(p, (1 - K) / R)]
    /// outstanding = K - loss - amortised
    /// ```
    ///
    /// Neither is clamped (see the module docs); the derivatives come from
    /// [`expected_min`].
    ///
    /// # References
    ///
    /// Vasicek (2002), "Loan portfolio value", Risk 15(12); the recovery
    /// side follows the project's conventions (amortisation from the top).
    ///
    /// # Example
    ///
    /// `[0, 100%]` loses `(1 - R) PD` and amortises `R PD`, whatever rho:
    ///
    /// ```
    /// use skewbook::loss::{BaseTranche, Horizon, Method};
    /// let h = Horizon::new(0.05)?;
    /// let e = BaseTranche::new(0.4, 1.0)?.expectation(&h, 0.3, Method::ClosedForm);
    /// assert!((e.loss - 0.03).abs() < 1e-16);
    /// assert!((e.outstanding - 0.95).abs() < 1e-15);
    /// # Ok::<(), skewbook::Error>(())
    /// ```
    pub fn expectation(&self, h: &Horizon, rho: f64, method: Method) -> BaseExpectation {
        match method {
            Method::ClosedForm => self.closed_form(h, &Correlation::new(rho)),
            Method::Quadrature => self.assemble(h, |cap| quadrature::value_and_drho(h, cap, rho)),
        }
    }

    /// [`BaseTranche::expectation`] by the closed form at a precomputed
    /// [`Correlation`] (the pricer's inner loop).
    ///
    /// # Formula
    ///
    /// See [`BaseTranche::expectation`].
    ///
    /// # References
    ///
    /// Vasicek (2002), "Loan portfolio value", Risk 15(12).
    ///
    /// # Example
    ///
    /// ```
    /// use skewbook::loss::{BaseTranche, Correlation, Horizon, Method};
    /// let (h, base) = (Horizon::new(0.05)?, BaseTranche::new(0.4, 0.07)?);
    /// let at = Correlation::new(0.3);
    /// assert_eq!(base.closed_form(&h, &at), base.expectation(&h, 0.3, Method::ClosedForm));
    /// # Ok::<(), skewbook::Error>(())
    /// ```
    #[inline]
    pub fn closed_form(&self, h: &Horizon, corr: &Correlation) -> BaseExpectation {
        self.assemble_sides(
            h,
            || closed::expectation_at(h, &self.loss_cap, corr),
            || {
                // A cap at or above 1 caps nothing: E[min(p, k)] = PD for
                // every rho (the edge case of the closed form, without its
                // checks). So for every K up to 1 - R on the recovery side.
                if self.recovery_cap.k >= 1.0 {
                    Expectation {
                        value: if h.pd <= 0.0 { 0.0 } else { h.pd },
                        drho: 0.0,
                    }
                } else {
                    closed::expectation_at(h, &self.recovery_cap, corr)
                }
            },
        )
    }

    #[inline]
    fn assemble(&self, h: &Horizon, expect: impl Fn(&Cap) -> Expectation) -> BaseExpectation {
        self.assemble_sides(h, || expect(&self.loss_cap), || expect(&self.recovery_cap))
    }

    /// Whether the loss side has an expectation to take (`K > 0`, `R < 1`).
    fn has_loss_side(&self) -> bool {
        1.0 - self.recovery > 0.0 && self.detach > 0.0
    }

    /// Whether the recovery side has an expectation to take (`K < 1`, `R > 0`).
    fn has_recovery_side(&self) -> bool {
        self.recovery > 0.0 && self.detach < 1.0
    }

    /// The base tranche's expectation from those of its loss side and
    /// recovery side (each asked for only when that side exists).
    #[inline]
    fn assemble_sides(
        &self,
        h: &Horizon,
        loss_side: impl FnOnce() -> Expectation,
        recovery_side: impl FnOnce() -> Expectation,
    ) -> BaseExpectation {
        let (r, k) = (self.recovery, self.detach);
        let lgd = 1.0 - r;
        let (loss, dloss) = if self.has_loss_side() {
            let e = loss_side();
            (lgd * e.value, lgd * e.drho)
        } else {
            (0.0, 0.0)
        };
        let (capped_rec, dcapped_rec) = if self.has_recovery_side() {
            let e = recovery_side();
            (r * e.value, r * e.drho)
        } else {
            (0.0, 0.0)
        };
        let amortised = r * h.pd - capped_rec;
        BaseExpectation {
            loss,
            outstanding: k - loss - amortised,
            dloss_drho: dloss,
            doutstanding_drho: dcapped_rec - dloss,
        }
    }
}

/// A tranche `[A, D]` at a recovery rate: two base tranches.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TrancheBounds {
    /// `[0, A]`.
    pub lower: BaseTranche,
    /// `[0, D]`.
    pub upper: BaseTranche,
}

impl TrancheBounds {
    /// The tranche `[attach, detach]` at recovery `recovery`.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidInput`] unless `0 <= attach < detach <= 1` and
    /// `recovery` is in `[0, 1]`.
    ///
    /// # Example
    ///
    /// ```
    /// use skewbook::loss::TrancheBounds;
    /// assert!(TrancheBounds::new(0.4, 0.03, 0.07).is_ok());
    /// assert!(TrancheBounds::new(0.4, 0.07, 0.03).is_err());
    /// ```
    pub fn new(recovery: f64, attach: f64, detach: f64) -> Result<TrancheBounds> {
        let lower = BaseTranche::new(recovery, attach)?;
        let upper = BaseTranche::new(recovery, detach)?;
        if attach >= detach {
            return Err(Error::msg(
                ErrorKind::InvalidInput,
                format!(
                    "tranche: expected attachment below detachment, found [{attach}, {detach}]"
                ),
            ));
        }
        Ok(TrancheBounds { lower, upper })
    }

    /// Width `W = D - A`.
    pub fn width(&self) -> f64 {
        self.upper.detach - self.lower.detach
    }

    /// Expected loss and outstanding notional as fractions of the width.
    ///
    /// # Formula
    ///
    /// ```text
    /// loss        = (base_D.loss - base_A.loss) / W
    ///             = E[min(L, D) - min(L, A)] / W
    /// outstanding = (base_D.outstanding - base_A.outstanding) / W
    ///             = 1 - loss - E[min(Rec, 1 - A) - min(Rec, 1 - D)] / W
    /// ```
    ///
    /// Not clamped: thin tranches can come out -1e-17 as differences of
    /// base values.
    ///
    /// # References
    ///
    /// Vasicek (2002), "Loan portfolio value", Risk 15(12).
    ///
    /// # Example
    ///
    /// At `rho = 0` the pool loses exactly `(1 - R) PD = 3%`, so `[0, 3%]` is
    /// wiped out and `[3%, 7%]` untouched:
    ///
    /// ```
    /// use skewbook::loss::{Horizon, Method, TrancheBounds};
    /// let h = Horizon::new(0.05)?;
    /// let equity = TrancheBounds::new(0.4, 0.0, 0.03)?.expectation(&h, 0.0, Method::ClosedForm);
    /// let mezz = TrancheBounds::new(0.4, 0.03, 0.07)?.expectation(&h, 0.0, Method::ClosedForm);
    /// assert!((equity.loss - 1.0).abs() < 1e-15);
    /// assert!(mezz.loss.abs() < 1e-15);
    /// # Ok::<(), skewbook::Error>(())
    /// ```
    pub fn expectation(&self, h: &Horizon, rho: f64, method: Method) -> TrancheExpectation {
        match method {
            Method::ClosedForm => self.closed_form(h, &Correlation::new(rho)),
            Method::Quadrature => self.combine(
                self.lower.expectation(h, rho, method),
                self.upper.expectation(h, rho, method),
            ),
        }
    }

    /// [`TrancheBounds::expectation`] by the closed form at a precomputed
    /// [`Correlation`].
    ///
    /// # Formula
    ///
    /// See [`TrancheBounds::expectation`].
    ///
    /// # References
    ///
    /// Vasicek (2002), "Loan portfolio value", Risk 15(12).
    ///
    /// # Example
    ///
    /// ```
    /// use skewbook::loss::{Correlation, Horizon, TrancheBounds};
    /// let h = Horizon::new(0.05)?;
    /// let whole = TrancheBounds::new(0.4, 0.0, 1.0)?.closed_form(&h, &Correlation::new(0.2));
    /// assert!((whole.loss - 0.03).abs() < 1e-16);
    /// # Ok::<(), skewbook::Error>(())
    /// ```
    #[inline]
    pub fn closed_form(&self, h: &Horizon, corr: &Correlation) -> TrancheExpectation {
        self.combine(
            self.lower.closed_form(h, corr),
            self.upper.closed_form(h, corr),
        )
    }

    fn combine(&self, lo: BaseExpectation, hi: BaseExpectation) -> TrancheExpectation {
        let w = self.width();
        TrancheExpectation {
            loss: (hi.loss - lo.loss) / w,
            outstanding: (hi.outstanding - lo.outstanding) / w,
            dloss_drho: (hi.dloss_drho - lo.dloss_drho) / w,
            doutstanding_drho: (hi.doutstanding_drho - lo.doutstanding_drho) / w,
        }
    }
}

/// One-shot base tranche `[0, detach]` by the closed form, in pool units.
///
/// Evaluates `G` for the horizon's caps each call; in a loop over `rho`
/// build a [`BaseTranche`] once and call [`BaseTranche::expectation`].
///
/// # Formula
///
/// See [`BaseTranche::expectation`].
///
/// # Errors
///
/// [`ErrorKind::InvalidInput`] if `recovery` or `detach` is outside `[0, 1]`.
///
/// # References
///
/// Vasicek (2002), "Loan portfolio value", Risk 15(12).
///
/// # Example
///
/// ```
/// use skewbook::loss::{base_tranche, Horizon};
/// let e = base_tranche(&Horizon::new(0.05)?, 0.4, 0.03, 0.0)?;
/// assert!((e.loss - 0.03).abs() < 1e-16); // rho = 0: L = 3% exactly
/// # Ok::<(), skewbook::Error>(())
/// ```
pub fn base_tranche(h: &Horizon, recovery: f64, detach: f64, rho: f64) -> Result<BaseExpectation> {
    Ok(BaseTranche::new(recovery, detach)?.expectation(h, rho, Method::ClosedForm))
}

/// One-shot tranche `[attach, detach]` by the closed form, per unit width.
///
/// In a loop over `rho` build a [`TrancheBounds`] once instead.
///
/// # Formula
///
/// See [`TrancheBounds::expectation`].
///
/// # Errors
///
/// [`ErrorKind::InvalidInput`] unless `0 <= attach < detach <= 1` and
/// `recovery` is in `[0, 1]`.
///
/// # References
///
/// Vasicek (2002), "Loan portfolio value", Risk 15(12).
///
/// # Example
///
/// ```
/// use skewbook::loss::{tranche, Horizon};
/// let e = tranche(&Horizon::new(0.05)?, 0.4, 0.0, 1.0, 0.5)?;
/// assert!((e.loss - 0.03).abs() < 1e-16); // [0, 100%]: (1 - R) PD
/// # Ok::<(), skewbook::Error>(())
/// ```
pub fn tranche(
    h: &Horizon,
    recovery: f64,
    attach: f64,
    detach: f64,
    rho: f64,
) -> Result<TrancheExpectation> {
    Ok(TrancheBounds::new(recovery, attach, detach)?.expectation(h, rho, Method::ClosedForm))
}

/// Shared edge cases of `E[min(p, k)]`: `Some(value)` when no integral is
/// needed. `rho` must already be clamped to `[0, 1]`.
fn edge_value(h: &Horizon, cap: &Cap, rho: f64) -> Option<f64> {
    let (pd, k) = (h.pd, cap.k);
    if k <= 0.0 || pd <= 0.0 {
        Some(0.0)
    } else if k >= 1.0 {
        Some(pd)
    } else if pd >= 1.0 {
        Some(k)
    } else if rho <= 0.0 {
        Some(pd.min(k))
    } else if rho >= 1.0 {
        Some(k * pd)
    } else {
        None
    }
}

/// Derivative at the edges handled by [`edge_value`].
fn edge_drho(h: &Horizon, cap: &Cap, rho: f64) -> Option<f64> {
    let (pd, k) = (h.pd, cap.k);
    if k <= 0.0 || pd <= 0.0 || k >= 1.0 || pd >= 1.0 {
        Some(0.0)
    } else if rho <= 0.0 {
        // -phi(A) phi(G(k)) / (2 sqrt(rho)) with A = (c - G(k)) / sqrt(rho):
        // 0 unless c = G(k), where it is -inf.
        Some(if h.c == cap.g { f64::NEG_INFINITY } else { 0.0 })
    } else if rho >= 1.0 {
        Some(f64::NEG_INFINITY)
    } else {
        None
    }
}

fn check_fraction(what: &str, x: f64) -> Result<()> {
    if (0.0..=1.0).contains(&x) {
        Ok(())
    } else {
        Err(Error::msg(
            ErrorKind::InvalidInput,
            format!("{what}: expected a fraction in [0, 1], found {x}"),
        ))
    }
}
