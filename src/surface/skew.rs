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

use crate::dates::calendar::curve_time;
use crate::error::{Error, ErrorKind, Result};
use crate::math::interp::{Curve1d, Interp};
use crate::solve::chain::{DateImplied, Knot};
use crate::solve::compound::RHO_MAX;
use chrono::NaiveDate;

/// One maturity's base-correlation curve across detachment.
#[derive(Debug, Clone, PartialEq)]
pub struct MaturitySkew {
    /// Tranche maturity.
    pub maturity: NaiveDate,
    /// Curve time of the maturity, (M - trade date) / 365.
    pub time: f64,
    /// The knots, increasing detachment.
    pub knots: Vec<Knot>,
    curve: Curve1d,
}

impl MaturitySkew {
    /// The curve through `knots` (increasing detachment, at least one).
    ///
    /// # Errors
    /// [`ErrorKind::InvalidInput`] for no knots, detachments not strictly
    /// increasing or outside (0, 1), or correlations outside [0, 1].
    pub fn new(
        trade: NaiveDate,
        maturity: NaiveDate,
        knots: Vec<Knot>,
        interp: Interp,
    ) -> Result<Self> {
        if knots
            .iter()
            .any(|k| !(k.detach > 0.0 && k.detach < 1.0 && (0.0..=1.0).contains(&k.rho)))
        {
            return Err(Error::msg(
                ErrorKind::InvalidInput,
                format!("surface {maturity}: knots need detachments in (0, 1) and correlations in [0, 1]"),
            ));
        }
        let x: Vec<f64> = knots.iter().map(|k| k.detach).collect();
        let y: Vec<f64> = knots.iter().map(|k| k.rho).collect();
        let curve = Curve1d::new(&x, &y, interp)?;
        Ok(MaturitySkew {
            maturity,
            time: curve_time(trade, maturity),
            knots,
            curve,
        })
    }

    /// rho at detachment `k` and whether `k` lies outside the knots.
    pub fn rho(&self, k: f64) -> (f64, bool) {
        (self.curve.eval(k), self.curve.is_extrapolated(k))
    }

    /// The lowest and highest knot detachments.
    pub fn knot_range(&self) -> (f64, f64) {
        (
            self.knots.first().map_or(0.0, |k| k.detach),
            self.knots.last().map_or(0.0, |k| k.detach),
        )
    }
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
        Surface::from_knots(d.pool.date, interp, curves)
    }

    /// A surface from knots per maturity (maturities in any order; those
    /// without knots are left out).
    ///
    /// # Errors
    /// As [`MaturitySkew::new`]; a maturity given twice is an error.
    pub fn from_knots(
        date: NaiveDate,
        interp: Interp,
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
            .map(|(m, k)| MaturitySkew::new(date, m, k, interp))
            .collect::<Result<_>>()?;
        Ok(Surface {
            date,
            interp,
            maturities,
        })
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
            let (rho, ex) = m.rho(k);
            Lookup {
                rho,
                extrapolated_detachment: ex,
                extrapolated_maturity: outside,
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
        let (ra, ea) = ma.rho(k);
        let (rb, eb) = mb.rho(k);
        Some(Lookup {
            rho: (1.0 - w) * ra + w * rb,
            extrapolated_detachment: ea || eb,
            extrapolated_maturity: false,
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
        Surface::from_knots(self.date, self.interp, curves)
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
