//! The `expected-loss` interpolation across detachment: base expected loss
//! g(K) = E[min(L, K)] interpolated by a rising concave spline, and the base
//! correlation at any detachment read back off it.
//!
//! # Formula
//! For one maturity M with knots (K_i, rho_i), at its protection end
//! τ = M + 1 day, on the index pool (PD = PD(τ), recovery R, top
//! g_top = (1 - R) PD = `E[L]`):
//! ```text
//! data       (0, 0),  (K_i, g_i = E[min(L, K_i); rho_i]) for K_i < 1 - R,  (1 - R, g_top),  (1, g_top)
//! secants    δ_j = (g_(j+1) - g_j) / w_j,   w_j the interval's width
//! admissible 0 <= δ_j <= 1 and δ_j non-increasing (each to 1e-14)
//! repair     δ* = PAV(δ, weights w) on the intervals up to 1 - R, capped to [0, 1];
//!            g*_i = Σ_(j<i) w_j δ*_j   (the nearest admissible knot values)
//! g(K)       through the (repaired) data, its slope g' = P(L > K) interpolated by the
//!            monotone convex method (Hagan and West 2006) with g'(0) = 1 and
//!            g'(1 - R) = 0; flat beyond 1 - R
//! rho(K)     the rho in [1e-4, 0.9999] with E[min(L, K); rho] = g(K),   0 < K < 1 - R
//! ```
//! g falls strictly with rho for 0 < K < 1 - R (d/drho E[min(p, k)] =
//! -phi(A) phi(G(k)) / (2 sqrt(rho (1 - rho))) < 0), so rho(K) is unique;
//! it is found by Newton's method inside the bracket [1e-4, 0.9999] with the
//! closed-form derivative.
//!
//! # Why this interpolant, with these end slopes
//! g rises with slope P(L > K) in [0, 1] and is concave (its slope falls);
//! any curve with that shape is the base expected loss of some loss
//! distribution, so every tranchelet off it has an expected loss in [0, 1]
//! of its width and the exceedance curve never rises. Two published
//! shape-preserving methods give such a curve: Schumaker's quadratic spline
//! ([`crate::math::interp::ConcaveSpline`]) and the monotone convex method
//! of Hagan and West applied to the slope ([`MonotoneConvex`]). Measured on
//! nine skews known exactly (flat correlations and mixtures of large-pool
//! distributions, investment grade to high yield) and on the samples
//! (`cargo run --example expected_loss_interpolants`; DEVELOPERS.md has
//! the numbers), between the first and the last knot, where most trades
//! sit, the monotone convex curve gives back the true correlation better
//! in eight of the nine and as well in the ninth (largest error 0.017
//! against 0.050 on a flat 30% skew), the true tranchelet losses better on
//! average in all nine, and a smoother correlation curve (its largest
//! second difference on a 0.1% grid 15 and 31 times smaller on the HGX and
//! 3-year KCX knots, 1.1 to 6 times on the others): its slope is
//! continuous, where Schumaker's density is a step function and the
//! correlation read off it kinks at every step. Beyond the last knot
//! Schumaker's spline comes a little closer (by 0.01 to 0.03 in eight of
//! nine); below the first knot neither is better.
//!
//! At the ends it takes the large-pool model's own slopes: P(L > 0) = 1 and
//! P(L > 1 - R) = 0 whenever 0 < PD < 1 and rho < 1, so no probability sits
//! at exactly zero loss or at the largest loss; measured the same way this
//! gives back the correlation above the last knot better than the method's
//! own end rule in eight of nine skews, and below the first knot in five
//! (on a flat 30% skew: 0.013 against 0.34), worse in two. The slope never
//! rests at 1 or 0 over a stretch (see [`MonotoneConvex`]): on a nearly
//! wiped-out equity tranche that would say the pool surely loses at least
//! K, and the correlation would sit at the bottom of its range.
//!
//! # Above 1 - R no correlation is implied
//! For K >= 1 - R, E[min(L, K)] = `E[L]` whatever the correlation. A base
//! tranche there still depends on rho through the recovery side (it is
//! amortised from the top), so rho(K) is then the `linear` interpolation of
//! the (repaired) knot correlations, flat outside: a quote detaching there
//! reprices, and nothing about the expected loss depends on the choice.
//!
//! # When the knots are not admissible
//! Quotes can give knot values that no concave rising g passes through: on
//! steep skews the segment from the last knot to 1 - R often carries more
//! expected loss per unit of width than the segment below it. The knots are
//! then replaced by the nearest admissible values (weighted least squares
//! on the slopes), each violation is named ([`Inadmissible`]), and the
//! knots that moved are listed with their new correlation
//! ([`AdjustedKnot`]); the quotes at those knots no longer reprice.
//!
//! # References
//! - P. S. Hagan and G. West, "Interpolation methods for curve
//!   construction", Applied Mathematical Finance 13 (2006) (the monotone
//!   convex method, [`MonotoneConvex`]).
//! - L. L. Schumaker, "On shape preserving quadratic spline interpolation",
//!   SIAM J. Numer. Anal. 20 (1983) (the alternative measured against).
//! - M. Ayer et al. (1955); R. E. Barlow et al., "Statistical Inference
//!   under Order Restrictions" (1972) (pool-adjacent-violators,
//!   [`isotonic_non_increasing`]).
//! - J. Parcell and J. Wood, "Wiping the smile off your base (correlation
//!   curve)" (2007); J. Garcia and S. Goossens (2008) (interpolating base
//!   expected loss rather than base correlation).
//! - O. Vasicek, "Loan portfolio value", Risk 15(12), 2002 (the large-pool
//!   base expected loss and its rho-derivative).

use crate::curve::{HazardCurve, Pool};
use crate::dates::Schedule;
use crate::error::{Error, ErrorKind, Result};
use crate::loss::{closed, Cap, Correlation, Horizon};
use crate::math::interp::{isotonic_non_increasing, Curve1d, Interp, SLOPE_TOLERANCE};
use crate::math::monotone_convex::MonotoneConvex;
use crate::math::root::{newton_bracketed, Tolerance};
use crate::solve::chain::Knot;
use crate::solve::compound::{RHO_MAX, RHO_MIN};
use chrono::NaiveDate;
use std::fmt;

/// Stop the correlation solve when E[min(L, K); rho] is this close to its
/// target (pool-notional units): far below what a 0.1% tranchelet or a
/// repricing to 1e-8 of a quote can see.
pub const LOSS_RESIDUAL: f64 = 1e-17;

/// Stop the correlation solve when the bracket on rho is this narrow.
pub const RHO_WIDTH: f64 = 1e-15;

/// A repaired knot value within this fraction of E[L] of the calibrated
/// one has not moved (the difference is rounding in the rebuild).
const MOVED: f64 = 1e-12;

/// A drop of the slope below this is rounding, not a probability mass.
const ATOM: f64 = 1e-15;

/// A piece of the slope narrower than this (in detachment) is a mass at its
/// end, not a density: its width is rounding.
const SPIKE: f64 = 1e-12;

/// Slope of g at K = 0: the model's P(L > 0) (see the module docs).
const FIRST_SLOPE: f64 = 1.0;

/// The index pool as the `expected-loss` surface needs it: trade date,
/// recovery and hazard curve (for the default probability at any
/// protection end).
#[derive(Debug, Clone, PartialEq)]
pub struct IndexLoss {
    /// Trade date.
    pub date: NaiveDate,
    /// Index recovery R.
    pub recovery: f64,
    /// Index hazard curve.
    pub hazard: HazardCurve,
}

impl IndexLoss {
    /// What the surface keeps of the index pool.
    pub fn of_pool(pool: &Pool) -> IndexLoss {
        IndexLoss {
            date: pool.date,
            recovery: pool.recovery,
            hazard: pool.hazard.clone(),
        }
    }

    /// Index default probability at the protection end of `maturity`
    /// (maturity + 1 day).
    pub fn default_probability(&self, maturity: NaiveDate) -> f64 {
        let t = Schedule::new(self.date, maturity).protection_end_time();
        self.hazard.default_probability(t)
    }

    /// The horizon at the protection end of `maturity`.
    ///
    /// # Errors
    /// [`ErrorKind::InvalidInput`] if the curve's default probability is not
    /// a probability (not expected from a bootstrapped curve).
    pub fn horizon(&self, maturity: NaiveDate) -> Result<Horizon> {
        Horizon::new(self.default_probability(maturity))
    }
}

/// Where a target base expected loss lies against what the correlations in
/// [1e-4, 0.9999] can give at a horizon.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Reach {
    /// Some correlation in the range gives it.
    Inside,
    /// Above the loss at rho = 1e-4 (the most any rho in the range gives):
    /// rho is reported at 1e-4.
    AboveRange,
    /// Below the loss at rho = 0.9999 (the least): rho is reported at 0.9999.
    BelowRange,
}

/// A correlation read off a base expected loss.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LossCorrelation {
    /// The correlation (at the nearer end of the range when unattainable).
    pub rho: f64,
    /// Whether the target was attainable.
    pub reach: Reach,
}

impl LossCorrelation {
    /// Whether the target lay outside what the range of rho gives.
    pub fn unattainable(&self) -> bool {
        self.reach != Reach::Inside
    }
}

/// The correlation rho in [1e-4, 0.9999] whose base expected loss
/// E[min(L, K); rho] at horizon `h` equals `target` (pool-notional units),
/// for a pool with recovery `recovery` and 0 < `k` < 1 - R.
///
/// # Formula
/// ```text
/// f(rho)  = (1 - R) E[min(p, K / (1 - R)); rho] - target     (falls with rho)
/// f'(rho) = -(1 - R) phi(A) phi(G(k)) / (2 sqrt(rho (1 - rho)))
/// ```
/// Newton's method kept inside the bracket, starting from the secant point;
/// it stops when |f| < [`LOSS_RESIDUAL`] or the bracket is narrower than
/// [`RHO_WIDTH`]. A target above f's value at 1e-4 or below its value at
/// 0.9999 is not attainable: rho is then that end, with the [`Reach`] saying
/// so.
///
/// # References
/// Vasicek (2002), "Loan portfolio value", Risk 15(12).
///
/// ```
/// use skewbook::loss::{BaseTranche, Correlation, Horizon};
/// use skewbook::surface::expected_loss::{correlation_for_loss, Reach};
/// let h = Horizon::new(0.05)?;
/// let g = BaseTranche::new(0.4, 0.07)?.closed_form(&h, &Correlation::new(0.3)).loss;
/// let back = correlation_for_loss(0.4, 0.07, &h, g);
/// assert!((back.rho - 0.3).abs() < 1e-12);
/// assert_eq!(back.reach, Reach::Inside);
/// // more loss than a near-zero correlation gives: not attainable
/// assert_eq!(correlation_for_loss(0.4, 0.07, &h, 0.031).reach, Reach::AboveRange);
/// # Ok::<(), skewbook::Error>(())
/// ```
pub fn correlation_for_loss(recovery: f64, k: f64, h: &Horizon, target: f64) -> LossCorrelation {
    let lgd = 1.0 - recovery;
    let cap = Cap::new(k / lgd);
    let fdf = |rho: f64| {
        let corr = Correlation::new(rho);
        (
            lgd * closed::value_at(h, &cap, &corr) - target,
            lgd * closed::drho_at(h, &cap, &corr),
        )
    };
    let (f_lo, _) = fdf(RHO_MIN);
    let (f_hi, _) = fdf(RHO_MAX);
    if f_lo < 0.0 && f_lo.abs() >= LOSS_RESIDUAL {
        return LossCorrelation {
            rho: RHO_MIN,
            reach: Reach::AboveRange,
        };
    }
    if f_hi > 0.0 && f_hi.abs() >= LOSS_RESIDUAL {
        return LossCorrelation {
            rho: RHO_MAX,
            reach: Reach::BelowRange,
        };
    }
    let inside = |rho| LossCorrelation {
        rho,
        reach: Reach::Inside,
    };
    if f_lo <= 0.0 {
        return inside(RHO_MIN);
    }
    if f_hi >= 0.0 {
        return inside(RHO_MAX);
    }
    let tol = Tolerance {
        residual: LOSS_RESIDUAL,
        width: RHO_WIDTH,
        max_iterations: 100,
    };
    match newton_bracketed(fdf, RHO_MIN, RHO_MAX, f_lo, f_hi, tol) {
        Ok(s) => inside(s.value),
        // Not expected (each step that leaves the bracket bisects it);
        // bisection cannot fail.
        Err(_) => {
            let (mut a, mut b) = (RHO_MIN, RHO_MAX);
            for _ in 0..200 {
                let m = 0.5 * (a + b);
                if fdf(m).0 > 0.0 {
                    a = m;
                } else {
                    b = m;
                }
            }
            inside(0.5 * (a + b))
        }
    }
}

/// Knot values that no rising concave g with slope in [0, 1] passes
/// through, named by their detachments (fractions; `to` may be 1 - R, the
/// pool's largest loss).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Inadmissible {
    /// g falls, or rises faster than the detachment, over [from, to].
    SlopeOutsideUnit {
        /// Lower detachment.
        from: f64,
        /// Upper detachment.
        to: f64,
        /// (g(to) - g(from)) / (to - from).
        slope: f64,
    },
    /// g's slope over [mid, to] exceeds its slope over [from, mid]: g is not
    /// concave there.
    SlopeRises {
        /// Lower detachment.
        from: f64,
        /// Middle detachment.
        mid: f64,
        /// Upper detachment.
        to: f64,
        /// Slope over [from, mid].
        lower: f64,
        /// Slope over [mid, to].
        upper: f64,
    },
}

impl fmt::Display for Inadmissible {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let p = |x: f64| crate::output::pct(x);
        match *self {
            Inadmissible::SlopeOutsideUnit { from, to, slope } => write!(
                f,
                "knots {}% and {}%: base expected loss changes by {slope:.6} of the width between them, outside [0, 1]",
                p(from),
                p(to)
            ),
            Inadmissible::SlopeRises {
                from,
                mid,
                to,
                lower,
                upper,
            } => write!(
                f,
                "knots {}%, {}% and {}%: [{}%, {}%] carries {upper:.6} expected loss per unit of width, more than the {lower:.6} of [{}%, {}%] below it: base expected loss is not concave",
                p(from),
                p(mid),
                p(to),
                p(mid),
                p(to),
                p(from),
                p(mid)
            ),
        }
    }
}

/// A knot whose base expected loss the repair moved.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AdjustedKnot {
    /// Detachment, fraction.
    pub detach: f64,
    /// The calibrated base correlation.
    pub rho: f64,
    /// Base expected loss at the calibrated correlation (pool units).
    pub loss: f64,
    /// The nearest admissible base expected loss.
    pub adjusted_loss: f64,
    /// The correlation that gives it.
    pub adjusted_rho: LossCorrelation,
}

/// The loss distribution a base expected-loss curve implies:
/// P(L > K) = g'(K), so the density is -g'' and a drop in g' is a mass.
#[derive(Debug, Clone, PartialEq)]
pub struct LossDistribution {
    /// P(L = 0) = 1 - g'(0+).
    pub at_zero: f64,
    /// Probability masses at points in (0, 1 - R] where g' drops, (K, mass),
    /// increasing K (the top 1 - R included when g' > 0 just below it).
    pub atoms: Vec<(f64, f64)>,
    /// Density pieces `[from, to, density at from, density at to]`, the
    /// density linear on each, increasing.
    pub density: Vec<[f64; 4]>,
}

/// One maturity's base expected-loss curve across detachment and the
/// correlation it implies.
#[derive(Debug, Clone, PartialEq)]
pub struct BaseLossCurve {
    /// Index default probability at the protection end.
    pub pd: f64,
    /// Index recovery.
    pub recovery: f64,
    /// Base expected loss at each knot at its calibrated correlation
    /// (pool units), one per knot.
    pub knot_losses: Vec<f64>,
    /// Why the knots are not admissible; empty when they are.
    pub inadmissible: Vec<Inadmissible>,
    /// The knots the repair moved; empty when the knots are admissible.
    pub adjusted: Vec<AdjustedKnot>,
    horizon: Horizon,
    spline: MonotoneConvex,
    /// rho at and above 1 - R: linear over the (repaired) knot correlations.
    above_top: Curve1d,
}

impl BaseLossCurve {
    /// The curve through `knots` (increasing detachment, at least one) of a
    /// maturity whose protection end has index horizon `horizon`, on a pool
    /// with recovery `recovery` in [0, 1).
    ///
    /// # Errors
    /// [`ErrorKind::InvalidInput`] for no knots, a recovery of 100% or more,
    /// or knots the spline refuses after repair (not expected).
    pub fn new(knots: &[Knot], recovery: f64, horizon: Horizon) -> Result<BaseLossCurve> {
        if knots.is_empty() {
            return Err(Error::msg(
                ErrorKind::InvalidInput,
                "expected-loss: expected at least one knot, found none",
            ));
        }
        if !(0.0..1.0).contains(&recovery) {
            return Err(Error::msg(
                ErrorKind::InvalidInput,
                format!("expected-loss: expected a recovery below 100%, found {recovery}"),
            ));
        }
        let lgd = 1.0 - recovery;
        let top = lgd * horizon.pd;
        let knot_losses: Vec<f64> = knots
            .iter()
            .map(|k| base_loss(recovery, k.detach, &horizon, k.rho))
            .collect();
        // data up to the top: (0, 0), knots below 1 - R, (1 - R, top)
        let below: Vec<usize> = (0..knots.len())
            .filter(|&i| knots[i].detach < lgd)
            .collect();
        let mut x = vec![0.0];
        let mut y = vec![0.0];
        for &i in &below {
            x.push(knots[i].detach);
            y.push(knot_losses[i]);
        }
        x.push(lgd);
        y.push(top);
        let widths: Vec<f64> = x.windows(2).map(|w| w[1] - w[0]).collect();
        let slopes: Vec<f64> = (0..widths.len())
            .map(|j| (y[j + 1] - y[j]) / widths[j])
            .collect();
        let inadmissible = check_shape(&x, &slopes);
        let mut adjusted = Vec::new();
        let mut rhos: Vec<f64> = knots.iter().map(|k| k.rho).collect();
        if !inadmissible.is_empty() {
            let fit: Vec<f64> = isotonic_non_increasing(&slopes, &widths)
                .into_iter()
                .map(|s| s.clamp(0.0, 1.0))
                .collect();
            // Rebuild g from the fitted slopes. A knot between two blocks
            // of the fit keeps its value (the fit keeps each block's sum),
            // exactly rather than up to rounding.
            let mut g = 0.0;
            for (j, &i) in below.iter().enumerate() {
                g += widths[j] * fit[j];
                let old = y[j + 1];
                if (g - old).abs() <= MOVED * top {
                    g = old;
                } else {
                    y[j + 1] = g;
                    let adjusted_rho = correlation_for_loss(recovery, knots[i].detach, &horizon, g);
                    rhos[i] = adjusted_rho.rho;
                    adjusted.push(AdjustedKnot {
                        detach: knots[i].detach,
                        rho: knots[i].rho,
                        loss: old,
                        adjusted_loss: g,
                        adjusted_rho,
                    });
                }
            }
        }
        if lgd < 1.0 {
            x.push(1.0);
            y.push(top);
        }
        // the flat piece [1 - R, 1] makes the slope at 1 - R zero (the
        // method's collar at a knot next to a zero secant)
        let spline = MonotoneConvex::new(&x, &y, Some(FIRST_SLOPE), None)?;
        let kx: Vec<f64> = knots.iter().map(|k| k.detach).collect();
        let above_top = Curve1d::new(&kx, &rhos, Interp::Linear)?;
        Ok(BaseLossCurve {
            pd: horizon.pd,
            recovery,
            knot_losses,
            inadmissible,
            adjusted,
            horizon,
            spline,
            above_top,
        })
    }

    /// Whether the knots admitted a rising concave g as they were.
    pub fn is_admissible(&self) -> bool {
        self.inadmissible.is_empty()
    }

    /// `E[L]` = (1 - R) PD, where g tops out (at K = 1 - R).
    pub fn top(&self) -> f64 {
        (1.0 - self.recovery) * self.pd
    }

    /// The interpolated base expected loss g(K), pool units: 0 at K <= 0,
    /// `E[L]` at K >= 1 - R.
    pub fn loss(&self, k: f64) -> f64 {
        if k <= 0.0 {
            0.0
        } else if k >= 1.0 - self.recovery {
            self.top()
        } else {
            self.spline.eval(k)
        }
    }

    /// The implied exceedance probability P(L > K) = g'(K) (right-hand
    /// derivative): 1 below 0, 0 from 1 - R on.
    pub fn exceedance(&self, k: f64) -> f64 {
        if k < 0.0 {
            1.0
        } else if k >= 1.0 - self.recovery {
            0.0
        } else {
            self.spline.slope(k)
        }
    }

    /// The correlation at detachment `k` (0 < k < 1) at this maturity's own
    /// horizon: the one that gives g(k) below 1 - R, the knots' linear rule
    /// at and above it.
    pub fn rho(&self, k: f64) -> LossCorrelation {
        if k >= 1.0 - self.recovery {
            return self.rho_above_top(k);
        }
        correlation_for_loss(self.recovery, k, &self.horizon, self.loss(k))
    }

    /// rho at and above 1 - R, where it moves no expected loss: the linear
    /// interpolation of the (repaired) knot correlations, flat outside.
    pub fn rho_above_top(&self, k: f64) -> LossCorrelation {
        LossCorrelation {
            rho: self.above_top.eval(k),
            reach: Reach::Inside,
        }
    }

    /// The loss distribution g implies (see [`LossDistribution`]).
    pub fn distribution(&self) -> LossDistribution {
        let lgd = 1.0 - self.recovery;
        let pieces: Vec<_> = self
            .spline
            .slope_pieces()
            .into_iter()
            .filter(|p| p.from < lgd)
            .collect();
        let at_zero = 1.0 - pieces.first().map_or(0.0, |p| p.slope_from);
        let mut atoms = Vec::new();
        let mut density = Vec::with_capacity(pieces.len());
        for (i, p) in pieces.iter().enumerate() {
            if p.to - p.from > SPIKE {
                density.push([p.from, p.to, p.density_from, p.density_to]);
            } else if p.slope_from - p.slope_to > ATOM {
                // a bend narrower than rounding resolves is a mass
                atoms.push((p.to, p.slope_from - p.slope_to));
            }
            let next = pieces.get(i + 1).map_or(0.0, |q| q.slope_from);
            // joints and knots meet with equal slopes up to rounding; a
            // genuine drop is a probability mass
            if (p.slope_to - next).abs() > ATOM {
                atoms.push((p.to, p.slope_to - next));
            }
        }
        LossDistribution {
            at_zero,
            atoms,
            density,
        }
    }
}

/// (1 - R) E[min(p, K / (1 - R)); rho]: the loss side of
/// [`crate::loss::BaseTranche::closed_form`], evaluated the same way.
fn base_loss(recovery: f64, k: f64, h: &Horizon, rho: f64) -> f64 {
    let lgd = 1.0 - recovery;
    lgd * closed::value_at(h, &Cap::new(k / lgd), &Correlation::new(rho))
}

/// Every way the secant slopes break "in [0, 1] and non-increasing".
fn check_shape(x: &[f64], slopes: &[f64]) -> Vec<Inadmissible> {
    let mut out = Vec::new();
    for (j, &s) in slopes.iter().enumerate() {
        if !(-SLOPE_TOLERANCE..=1.0 + SLOPE_TOLERANCE).contains(&s) {
            out.push(Inadmissible::SlopeOutsideUnit {
                from: x[j],
                to: x[j + 1],
                slope: s,
            });
        }
        if j > 0 && s - slopes[j - 1] > SLOPE_TOLERANCE {
            out.push(Inadmissible::SlopeRises {
                from: x[j - 1],
                mid: x[j],
                to: x[j + 1],
                lower: slopes[j - 1],
                upper: s,
            });
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    /// rho = 0 and rho = 1 limits (Vasicek 2002): at 1e-4 the loss is
    /// nearly min(E[L], K), at 0.9999 nearly K PD; a target beyond either
    /// is out of reach.
    #[test]
    fn reach_is_the_model_range() {
        let h = Horizon::new(0.05).unwrap();
        let (r, k) = (0.4, 0.1);
        let lo = base_loss(r, k, &h, RHO_MAX);
        let hi = base_loss(r, k, &h, RHO_MIN);
        assert!(lo > k * 0.05 && lo < k * 0.05 + 1e-3, "{lo}");
        assert!(hi <= 0.03 && hi > 0.03 - 1e-3, "{hi}");
        assert_eq!(
            correlation_for_loss(r, k, &h, 0.5 * lo).reach,
            Reach::BelowRange
        );
        assert_eq!(correlation_for_loss(r, k, &h, 0.5 * lo).rho, RHO_MAX);
        assert_eq!(correlation_for_loss(r, k, &h, hi + 1e-6).rho, RHO_MIN);
    }

    /// Hand-worked repair: knots whose slopes are 0.8, 0.1, 0.3 over widths
    /// 0.05, 0.1, 0.05 pool the last two into (0.1·0.1 + 0.05·0.3)/0.15.
    #[test]
    fn shape_check_names_the_rise() {
        let x = [0.0, 0.05, 0.15, 0.2];
        let v = check_shape(&x, &[0.8, 0.1, 0.3]);
        assert_eq!(v.len(), 1);
        match v[0] {
            Inadmissible::SlopeRises {
                from,
                mid,
                to,
                lower,
                upper,
            } => {
                assert_eq!((from, mid, to, lower, upper), (0.05, 0.15, 0.2, 0.1, 0.3));
            }
            other => panic!("{other:?}"),
        }
        let fit = isotonic_non_increasing(&[0.8, 0.1, 0.3], &[0.05, 0.1, 0.05]);
        assert!((fit[1] - 0.025 / 0.15).abs() < 1e-15);
    }
}
