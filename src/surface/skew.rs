//! The correlation surface rho(K, T) of one trade date.
//!
//! # Formula
//! For each tranche maturity M_j with knots (the quoted detachments below
//! 100% that received a base correlation), rho_j(K) interpolates the knots
//! across detachment ([`Interp`]: linear, or monotone cubic), flat outside.
//! Across maturity, with curve times t_j = (M_j - trade date) / 365:
//! ```text
//! rho(K, T) = (1 - w) rho_a(K) + w rho_b(K),   w = (t - t_a) / (t_b - t_a),   t_a <= t <= t_b
//! ```
//! and the nearest maturity's curve before the first and after the last.
//! [0, 0] is worth nothing and [0, 100%] does not depend on correlation, so
//! K = 0 and K = 100% need no correlation.
//!
//! # `expected-loss`: the surface interpolates base expected loss
//! With [`Interp::ExpectedLoss`] each maturity carries a
//! [`BaseLossCurve`] g_j(K) at its protection end (see
//! [`super::expected_loss`]), and the surface holds the index pool's
//! recovery and hazard curve. A maturity T between M_a and M_b interpolates
//! g linearly in curve time at fixed K, and the correlation is the one that
//! gives it at T's own protection end, on the index curve:
//! ```text
//! g_T(K)    = (1 - w) g_a(K) + w g_b(K)
//! rho(K, T) : E[min(L_T, K); rho] = g_T(K),   L_T the index pool loss at T + 1 day
//! ```
//! At a knot maturity this is the maturity's own curve, so quotes reprice.
//! Before the first and after the last knot maturity the nearest
//! maturity's correlation curve rho_j(K) is used (flat in maturity, as for
//! `linear` and `pchip`): g itself cannot be held, since the pool's `E[L]`
//! keeps growing with the horizon. For K >= 1 - R, where no correlation
//! moves the expected loss, rho is interpolated linearly in time between
//! the two maturities' rules. A g_T(K) that no correlation in [1e-4, 0.9999]
//! gives at T's horizon (it can happen between maturities, since the
//! pool's default probability is not linear in time) is reported with
//! rho at the nearer end and [`Lookup::unattainable_loss`] set.
//!
//! The surface is built once on the date's index curve and is not rebuilt
//! when a pool curve is bumped: the correlation at every (K, T) is held.

use super::expected_loss::{correlation_for_loss, BaseLossCurve, IndexLoss};
use crate::curve::Pool;
use crate::dates::calendar::curve_time;
use crate::error::{Error, ErrorKind, Result};
use crate::math::interp::{Curve1d, Interp};
use crate::solve::chain::{DateImplied, Knot};
use crate::solve::compound::RHO_MAX;
use chrono::NaiveDate;

/// How one maturity interpolates across detachment.
#[derive(Debug, Clone, PartialEq)]
enum Across {
    /// rho itself (`linear`, `pchip`).
    Correlation(Curve1d),
    /// Base expected loss (`expected-loss`).
    ExpectedLoss(Box<BaseLossCurve>),
}

/// One maturity's base-correlation curve across detachment.
#[derive(Debug, Clone, PartialEq)]
pub struct MaturitySkew {
    /// Tranche maturity.
    pub maturity: NaiveDate,
    /// Curve time of the maturity, (M - trade date) / 365.
    pub time: f64,
    /// The knots, increasing detachment.
    pub knots: Vec<Knot>,
    across: Across,
}

/// A correlation read off one maturity's curve.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Read {
    rho: f64,
    extrapolated: bool,
    unattainable: bool,
}

impl MaturitySkew {
    /// The curve through `knots` (increasing detachment, at least one),
    /// interpolating base correlation (`linear` or `pchip`).
    ///
    /// # Errors
    /// [`ErrorKind::InvalidInput`] for no knots, detachments not strictly
    /// increasing or outside (0, 1), or correlations outside [0, 1];
    /// [`ErrorKind::Usage`] for [`Interp::ExpectedLoss`], which needs the
    /// index pool ([`MaturitySkew::on_index`]).
    pub fn new(
        trade: NaiveDate,
        maturity: NaiveDate,
        knots: Vec<Knot>,
        interp: Interp,
    ) -> Result<Self> {
        check_knots(maturity, &knots)?;
        let x: Vec<f64> = knots.iter().map(|k| k.detach).collect();
        let y: Vec<f64> = knots.iter().map(|k| k.rho).collect();
        let curve = Curve1d::new(&x, &y, interp)?;
        Ok(MaturitySkew {
            maturity,
            time: curve_time(trade, maturity),
            knots,
            across: Across::Correlation(curve),
        })
    }

    /// The curve through `knots` under `interp`, on the index pool `index`
    /// (which `expected-loss` needs; `linear` and `pchip` ignore it).
    ///
    /// # Errors
    /// As [`MaturitySkew::new`]; curve errors of [`BaseLossCurve::new`].
    pub fn on_index(
        index: &IndexLoss,
        maturity: NaiveDate,
        knots: Vec<Knot>,
        interp: Interp,
    ) -> Result<Self> {
        if interp != Interp::ExpectedLoss {
            return MaturitySkew::new(index.date, maturity, knots, interp);
        }
        check_knots(maturity, &knots)?;
        let curve = BaseLossCurve::new(&knots, index.recovery, index.horizon(maturity)?)?;
        Ok(MaturitySkew {
            maturity,
            time: curve_time(index.date, maturity),
            knots,
            across: Across::ExpectedLoss(Box::new(curve)),
        })
    }

    /// rho at detachment `k` (0 < k < 1) and whether `k` lies outside the
    /// knots. Under `expected-loss`, the correlation at this maturity's own
    /// horizon (see [`MaturitySkew::loss_curve`] for whether it was
    /// attainable).
    pub fn rho(&self, k: f64) -> (f64, bool) {
        let r = self.read(k);
        (r.rho, r.extrapolated)
    }

    fn read(&self, k: f64) -> Read {
        let extrapolated = self.read_range(k);
        match &self.across {
            Across::Correlation(c) => Read {
                rho: c.eval(k),
                extrapolated,
                unattainable: false,
            },
            Across::ExpectedLoss(g) => {
                let r = g.rho(k);
                Read {
                    rho: r.rho,
                    extrapolated,
                    unattainable: r.unattainable(),
                }
            }
        }
    }

    /// The base expected-loss curve under `expected-loss`; `None` otherwise.
    pub fn loss_curve(&self) -> Option<&BaseLossCurve> {
        match &self.across {
            Across::ExpectedLoss(g) => Some(g),
            Across::Correlation(_) => None,
        }
    }

    /// Whether `k` lies outside the knot range.
    fn read_range(&self, k: f64) -> bool {
        let (lo, hi) = self.knot_range();
        k < lo || k > hi
    }

    /// The lowest and highest knot detachments.
    pub fn knot_range(&self) -> (f64, f64) {
        (
            self.knots.first().map_or(0.0, |k| k.detach),
            self.knots.last().map_or(0.0, |k| k.detach),
        )
    }
}

/// Knots in (0, 1) with correlations in [0, 1].
fn check_knots(maturity: NaiveDate, knots: &[Knot]) -> Result<()> {
    if knots
        .iter()
        .any(|k| !(k.detach > 0.0 && k.detach < 1.0 && (0.0..=1.0).contains(&k.rho)))
    {
        return Err(Error::msg(
            ErrorKind::InvalidInput,
            format!(
                "surface {maturity}: knots need detachments in (0, 1) and correlations in [0, 1]"
            ),
        ));
    }
    Ok(())
}

/// A correlation read off the surface.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Lookup {
    /// The base correlation.
    pub rho: f64,
    /// Whether K lay outside the knot range of a maturity used.
    pub extrapolated_detachment: bool,
    /// Whether T lay outside the surface's maturities.
    pub extrapolated_maturity: bool,
    /// `expected-loss` only: the interpolated base expected loss lay outside
    /// what any correlation in [1e-4, 0.9999] gives; `rho` is the nearer end.
    pub unattainable_loss: bool,
}

/// The base-correlation surface of one trade date.
#[derive(Debug, Clone, PartialEq)]
pub struct Surface {
    /// Trade date.
    pub date: NaiveDate,
    /// Interpolation across detachment.
    pub interp: Interp,
    /// Maturities with knots, increasing.
    pub maturities: Vec<MaturitySkew>,
    /// The index pool's recovery and curve (`expected-loss` only).
    index: Option<IndexLoss>,
}

impl Surface {
    /// The surface of a date's implied base correlations: every maturity
    /// with at least one knot (a broken chain keeps the knots below the break).
    ///
    /// # Errors
    /// As [`MaturitySkew::new`] (not expected from solved knots).
    pub fn from_implied(d: &DateImplied, interp: Interp) -> Result<Surface> {
        let curves = d
            .base_curves()
            .into_iter()
            .map(|c| (c.maturity, c.knots.clone()))
            .collect();
        Surface::from_knots_on(&d.pool, interp, curves)
    }

    /// A surface from knots per maturity (maturities in any order; those
    /// without knots are left out), interpolating base correlation.
    ///
    /// # Errors
    /// As [`MaturitySkew::new`] (so [`ErrorKind::Usage`] for
    /// [`Interp::ExpectedLoss`], which needs the index pool:
    /// [`Surface::from_knots_on`]); a maturity given twice is an error.
    pub fn from_knots(
        date: NaiveDate,
        interp: Interp,
        curves: Vec<(NaiveDate, Vec<Knot>)>,
    ) -> Result<Surface> {
        if interp == Interp::ExpectedLoss {
            return Err(Error::msg(
                ErrorKind::Usage,
                "surface: expected-loss needs the index pool (Surface::from_knots_on)",
            ));
        }
        Surface::assemble(date, interp, None, curves)
    }

    /// A surface from knots per maturity on the index pool `pool` of its
    /// date, under any interpolation (`expected-loss` keeps the pool's
    /// recovery and hazard curve; `linear` and `pchip` do not need them).
    ///
    /// # Errors
    /// As [`Surface::from_knots`], and curve errors of [`BaseLossCurve::new`].
    pub fn from_knots_on(
        pool: &Pool,
        interp: Interp,
        curves: Vec<(NaiveDate, Vec<Knot>)>,
    ) -> Result<Surface> {
        let index = (interp == Interp::ExpectedLoss).then(|| IndexLoss::of_pool(pool));
        Surface::assemble(pool.date, interp, index, curves)
    }

    fn assemble(
        date: NaiveDate,
        interp: Interp,
        index: Option<IndexLoss>,
        mut curves: Vec<(NaiveDate, Vec<Knot>)>,
    ) -> Result<Surface> {
        curves.retain(|(_, k)| !k.is_empty());
        curves.sort_by_key(|(m, _)| *m);
        if curves.windows(2).any(|w| w[0].0 == w[1].0) {
            return Err(Error::msg(
                ErrorKind::InvalidInput,
                "surface: a maturity is given twice",
            ));
        }
        let maturities = curves
            .into_iter()
            .map(|(m, k)| match &index {
                Some(ix) => MaturitySkew::on_index(ix, m, k, interp),
                None => MaturitySkew::new(date, m, k, interp),
            })
            .collect::<Result<_>>()?;
        Ok(Surface {
            date,
            interp,
            maturities,
            index,
        })
    }

    /// The index pool's recovery and curve the surface was built on
    /// (`expected-loss` only).
    pub fn index_loss(&self) -> Option<&IndexLoss> {
        self.index.as_ref()
    }

    /// Whether the surface has no knot at all (nothing can be priced off it).
    pub fn is_empty(&self) -> bool {
        self.maturities.is_empty()
    }

    /// rho(K, T) for 0 < K < 1; `None` when the surface is empty.
    pub fn rho(&self, k: f64, maturity: NaiveDate) -> Option<Lookup> {
        let first = self.maturities.first()?;
        let last = self.maturities.last()?;
        let t = curve_time(self.date, maturity);
        let single = |m: &MaturitySkew, outside: bool| {
            let r = m.read(k);
            Lookup {
                rho: r.rho,
                extrapolated_detachment: r.extrapolated,
                extrapolated_maturity: outside,
                unattainable_loss: r.unattainable,
            }
        };
        if t <= first.time {
            return Some(single(first, t < first.time));
        }
        if t >= last.time {
            return Some(single(last, t > last.time));
        }
        let b = self.maturities.partition_point(|m| m.time < t);
        let (ma, mb) = (&self.maturities[b - 1], &self.maturities[b]);
        if mb.time == t {
            return Some(single(mb, false));
        }
        let w = (t - ma.time) / (mb.time - ma.time);
        if let (Some(ga), Some(gb), Some(index)) =
            (ma.loss_curve(), mb.loss_curve(), self.index.as_ref())
        {
            return Some(between_in_loss(ma, mb, ga, gb, index, w, k, maturity));
        }
        let (ra, ea) = ma.rho(k);
        let (rb, eb) = mb.rho(k);
        Some(Lookup {
            rho: (1.0 - w) * ra + w * rb,
            extrapolated_detachment: ea || eb,
            extrapolated_maturity: false,
            unattainable_loss: false,
        })
    }

    /// Every knot moved by `by` (absolute), capped to [0, 0.9999].
    ///
    /// # Errors
    /// Not expected: the knots stay valid.
    pub fn bumped(&self, by: f64) -> Result<Surface> {
        self.bumped_where(by, |_, _| true)
    }

    /// The knot `knot` of maturity `maturity` (indices into
    /// [`Surface::maturities`] and its knots) moved by `by`, capped to
    /// [0, 0.9999]: a bucketed correlation bump.
    ///
    /// # Errors
    /// Not expected: the knots stay valid.
    pub fn bumped_knot(&self, maturity: usize, knot: usize, by: f64) -> Result<Surface> {
        self.bumped_where(by, |m, k| m == maturity && k == knot)
    }

    fn bumped_where(&self, by: f64, which: impl Fn(usize, usize) -> bool) -> Result<Surface> {
        let curves = self
            .maturities
            .iter()
            .enumerate()
            .map(|(i, m)| {
                let knots = m
                    .knots
                    .iter()
                    .enumerate()
                    .map(|(j, k)| Knot {
                        detach: k.detach,
                        rho: if which(i, j) {
                            (k.rho + by).clamp(0.0, RHO_MAX)
                        } else {
                            k.rho
                        },
                    })
                    .collect();
                (m.maturity, knots)
            })
            .collect();
        Surface::assemble(self.date, self.interp, self.index.clone(), curves)
    }

    /// Every knot as (maturity index, knot index, maturity, knot).
    pub fn knots(&self) -> Vec<(usize, usize, NaiveDate, Knot)> {
        self.maturities
            .iter()
            .enumerate()
            .flat_map(|(i, m)| {
                m.knots
                    .iter()
                    .enumerate()
                    .map(move |(j, k)| (i, j, m.maturity, *k))
            })
            .collect()
    }
}

/// `expected-loss` between knot maturities M_a < T < M_b (weight `w` on
/// M_b): g linear in curve time at fixed K, rho from it at T's horizon.
#[allow(clippy::too_many_arguments)]
fn between_in_loss(
    ma: &MaturitySkew,
    mb: &MaturitySkew,
    ga: &BaseLossCurve,
    gb: &BaseLossCurve,
    index: &IndexLoss,
    w: f64,
    k: f64,
    maturity: NaiveDate,
) -> Lookup {
    let extrapolated_detachment = ma.read_range(k) || mb.read_range(k);
    let lookup = |rho: f64, unattainable_loss: bool| Lookup {
        rho,
        extrapolated_detachment,
        extrapolated_maturity: false,
        unattainable_loss,
    };
    if k >= 1.0 - index.recovery {
        let rho = (1.0 - w) * ga.rho_above_top(k).rho + w * gb.rho_above_top(k).rho;
        return lookup(rho, false);
    }
    let target = (1.0 - w) * ga.loss(k) + w * gb.loss(k);
    match index.horizon(maturity) {
        Ok(h) => {
            let r = correlation_for_loss(index.recovery, k, &h, target);
            lookup(r.rho, r.unattainable())
        }
        // A bootstrapped curve's default probability is a probability; should
        // it not be, fall back on the correlation rule and say so.
        Err(_) => {
            let (ra, rb) = (ga.rho(k).rho, gb.rho(k).rho);
            lookup((1.0 - w) * ra + w * rb, true)
        }
    }
}
