//! The loss distribution two ways: the risk-neutral exceedance curve the
//! skew implies, beside the real-world Vasicek one at a PD and asset
//! correlation estimated from the pool's default history, with a band from
//! the estimate's 95% intervals.
//!
//! # Formula
//! Risk-neutral, per maturity M at its protection end (M + 1 day), from
//! [`crate::surface::diagnostics`] on the grid K_j = j h:
//! ```text
//! e_j = (g(K_(j+1)) - g(K_j)) / h  ≈  P(L > K)  on [K_j, K_(j+1)],   g(K) = E[min(L, K)] at rho(K, M)
//! ```
//! drawn at the middle of each tranchelet, K_j + h / 2.
//!
//! Real-world, at the same K, with the annual PD p and asset correlation
//! rho of one estimator, over the same horizon T (curve time of M + 1 day)
//! and with the pool's loss given default 1 - R:
//! ```text
//! p_T = 1 - (1 - p)^T                         (the annual PD compounded over T years)
//! P(L > K) = 1 - F(K),  F the Vasicek loss CDF at (p_T, rho, LGD = 1 - R)
//! ```
//! The risk-neutral curve is the same one-factor large-pool model with the
//! index curve's PD to M + 1 day and a correlation that varies with K, so
//! the two curves differ only by the PD and the correlation. With a pool
//! of n names (`--names`) the risk-neutral curve is that pool's (knots
//! solved and g computed in it, [`crate::surface::diagnostics::diagnose_with`])
//! while the real-world curve stays Vasicek's large pool, and the chart
//! says so.
//!
//! # The band
//! At each K the band runs from the lowest to the highest P(L > K) over
//! every (p, rho) with p in the estimate's 95% interval for PD and rho in
//! its 95% interval for rho: the box of the two marginal intervals (not a
//! joint confidence region, which would be narrower). P(L > K) rises with
//! p, so the PD interval's ends suffice; in rho it can have one interior
//! extremum, where sqrt(1 - rho) = G(K / LGD) / G(p_T), which is added
//! when it lies inside the rho interval. The band is exact for the box.

use super::frame::{render, tick, Frame, Item, LegendEntry, Sample};
use super::style::{series_style, Marker};
use crate::dates::Schedule;
use crate::error::Result;
use crate::loss::PoolModel;
use crate::math::interp::Interp;
use crate::math::normal::inv_cdf;
use crate::realworld::estimators::{Estimate, Method};
use crate::realworld::vasicek::Vasicek;
use crate::solve::chain::DateImplied;
use crate::surface::diagnostics::diagnose_with;
use crate::surface::diagnostics::ARBITRAGE_TOLERANCE;
use crate::surface::{MaturityDiagnostics, Surface};
use chrono::NaiveDate;

/// The estimators in the order one is chosen for the chart when none is
/// named: the binomial likelihood (counts; handles zero-default years),
/// then the probit likelihood, the moment match, the joint-default moments.
pub const ESTIMATOR_PREFERENCE: [Method; 4] = [
    Method::BinomialMl,
    Method::ProbitMoments,
    Method::MomentMatching,
    Method::JointDefaultMoments,
];

/// The bottom of the chart's probability axis (a fraction, 0.001%); the
/// loss axis ends where every curve has fallen below it.
pub const FLOOR: f64 = 1e-5;

/// A real-world estimate with both 95% intervals: what the chart needs.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RealWorld {
    /// The estimator.
    pub method: Method,
    /// Annual PD, fraction.
    pub pd: f64,
    /// Asset correlation, fraction.
    pub rho: f64,
    /// 95% interval of PD.
    pub pd_ci: [f64; 2],
    /// 95% interval of rho.
    pub rho_ci: [f64; 2],
}

impl RealWorld {
    /// The estimate of `method`, or the first of [`ESTIMATOR_PREFERENCE`],
    /// that has PD and rho in (0, 1) and both intervals; `None` when no
    /// estimate qualifies.
    pub fn choose(estimates: &[Estimate], method: Option<Method>) -> Option<RealWorld> {
        let usable = |e: &Estimate| {
            let (pd, rho, pd_ci, rho_ci) = (e.pd?, e.rho?, e.pd_ci?, e.rho_ci?);
            let inside = |x: f64| x > 0.0 && x < 1.0;
            (inside(pd) && inside(rho) && pd_ci.iter().chain(&rho_ci).all(|&x| inside(x)))
                .then_some(RealWorld {
                    method: e.method,
                    pd,
                    rho,
                    pd_ci,
                    rho_ci,
                })
        };
        let order: Vec<Method> = match method {
            Some(m) => vec![m],
            None => ESTIMATOR_PREFERENCE.to_vec(),
        };
        order.iter().find_map(|m| {
            estimates
                .iter()
                .filter(|e| e.method == *m)
                .find_map(&usable)
        })
    }
}

/// One tranchelet's expected loss, fraction of its width.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Tranchelet {
    /// K_j.
    pub k_from: f64,
    /// K_(j+1).
    pub k_to: f64,
    /// e_j (not clamped: outside [0, 1] is arbitrage).
    pub loss: f64,
}

/// The implied exceedance curve of one interpolation.
#[derive(Debug, Clone, PartialEq)]
pub struct ImpliedExceedance {
    /// The interpolation of the skew.
    pub interp: Interp,
    /// Every tranchelet of the grid, increasing K.
    pub tranchelets: Vec<Tranchelet>,
}

/// The real-world curve at one K.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RealWorldPoint {
    /// Loss level K, fraction of pool notional.
    pub k: f64,
    /// P(L > K) at the estimate.
    pub central: f64,
    /// Lowest P(L > K) over the box of intervals.
    pub low: f64,
    /// Highest P(L > K) over the box of intervals.
    pub high: f64,
}

/// The real-world curve of one maturity.
#[derive(Debug, Clone, PartialEq)]
pub struct RealWorldExceedance {
    /// The estimate used (annual PD).
    pub estimate: RealWorld,
    /// Horizon T, years (curve time of the protection end).
    pub horizon: f64,
    /// PD to the horizon, p_T.
    pub pd_horizon: f64,
    /// Loss given default, 1 - R of the index pool.
    pub lgd: f64,
    /// The curve and its band at the tranchelets' middles.
    pub points: Vec<RealWorldPoint>,
}

/// The exceedance chart of one maturity.
#[derive(Debug, Clone, PartialEq)]
pub struct ExceedanceChart {
    /// Trade date.
    pub date: NaiveDate,
    /// Tranche maturity.
    pub maturity: NaiveDate,
    /// Index pool PD to the protection end.
    pub protection_end_pd: f64,
    /// One curve per interpolation.
    pub implied: Vec<ImpliedExceedance>,
    /// The real-world curve, when an estimate was given.
    pub real_world: Option<RealWorldExceedance>,
    /// Right end of the loss axis (fraction).
    pub k_max: f64,
    /// The pool of the risk-neutral curves.
    pub model: PoolModel,
}

/// An annual PD compounded over `t` years: 1 - (1 - p)^t.
pub fn pd_over(p: f64, t: f64) -> f64 {
    -(t * (-p).ln_1p()).exp_m1()
}

/// P(L > K) of the Vasicek loss distribution.
fn exceed(v: &Vasicek, k: f64) -> f64 {
    1.0 - v.cdf(k)
}

/// The lowest and highest P(L > K) over p in `pd`, rho in `rho` (see the module docs).
///
/// # Errors
/// A PD or rho outside (0, 1), or an LGD outside (0, 1].
pub fn band_at(k: f64, pd: [f64; 2], rho: [f64; 2], lgd: f64) -> Result<(f64, f64)> {
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for p in pd {
        let mut rhos = rho.to_vec();
        let x = k / lgd;
        if x > 0.0 && x < 1.0 {
            let ratio = inv_cdf(x) / inv_cdf(p);
            let star = 1.0 - ratio * ratio;
            if ratio > 0.0 && ratio < 1.0 && star > rho[0] && star < rho[1] {
                rhos.push(star);
            }
        }
        for r in rhos {
            let e = exceed(&Vasicek::new(p, r, lgd)?, k);
            lo = lo.min(e);
            hi = hi.max(e);
        }
    }
    Ok((lo, hi))
}

/// The real-world curve at the tranchelets' middles of `grid`.
fn real_world_curve(
    estimate: &RealWorld,
    horizon: f64,
    lgd: f64,
    ks: &[f64],
) -> Result<RealWorldExceedance> {
    let pd_t = pd_over(estimate.pd, horizon);
    let pd_band = [
        pd_over(estimate.pd_ci[0], horizon),
        pd_over(estimate.pd_ci[1], horizon),
    ];
    let v = Vasicek::new(pd_t, estimate.rho, lgd)?;
    let points = ks
        .iter()
        .map(|&k| {
            let (low, high) = band_at(k, pd_band, estimate.rho_ci, lgd)?;
            Ok(RealWorldPoint {
                k,
                central: exceed(&v, k),
                low,
                high,
            })
        })
        .collect::<Result<_>>()?;
    Ok(RealWorldExceedance {
        estimate: *estimate,
        horizon,
        pd_horizon: pd_t,
        lgd,
        points,
    })
}

/// The diagnostics of `d`'s surface for each of `interps` on a grid of `n`
/// intervals (see [`crate::surface::diagnostics::grid_intervals`]), base
/// expected loss in `model` (the pool `d` was solved in).
///
/// # Errors
/// As [`Surface::from_implied`] and [`diagnose_with`].
pub fn diagnostics_by_interp(
    d: &DateImplied,
    interps: &[Interp],
    n: usize,
    model: PoolModel,
) -> Result<Vec<(Interp, Vec<MaturityDiagnostics>)>> {
    interps
        .iter()
        .map(|&i| {
            let surface = Surface::from_implied(d, i)?;
            Ok((i, diagnose_with(&surface, &d.pool, n, model)?))
        })
        .collect()
}

/// The exceedance chart of every maturity of `d` with knots: the implied
/// curve of each interpolation from its diagnostics (see
/// [`diagnostics_by_interp`], in `model`), and the real-world curve when
/// `real` is given.
///
/// # Errors
/// A real-world estimate outside (0, 1).
pub fn exceedance_charts(
    d: &DateImplied,
    per_interp: &[(Interp, Vec<MaturityDiagnostics>)],
    real: Option<&RealWorld>,
    model: PoolModel,
) -> Result<Vec<ExceedanceChart>> {
    let Some((_, first)) = per_interp.first() else {
        return Ok(Vec::new());
    };
    let lgd = 1.0 - d.pool.recovery;
    let mut out = Vec::new();
    for (m, diag) in first.iter().enumerate() {
        let implied: Vec<ImpliedExceedance> = per_interp
            .iter()
            .map(|(i, diags)| ImpliedExceedance {
                interp: *i,
                tranchelets: diags[m]
                    .grid
                    .windows(2)
                    .filter_map(|w| {
                        w[0].tranchelet_loss.map(|e| Tranchelet {
                            k_from: w[0].k,
                            k_to: w[1].k,
                            loss: e,
                        })
                    })
                    .collect(),
            })
            .collect();
        let ks: Vec<f64> = implied[0]
            .tranchelets
            .iter()
            .map(|t| 0.5 * (t.k_from + t.k_to))
            .collect();
        let horizon = Schedule::new(d.pool.date, diag.maturity).protection_end_time();
        let real_world = real
            .map(|r| real_world_curve(r, horizon, lgd, &ks))
            .transpose()?;
        let last_knot = diag.knots.last().map_or(0.0, |k| k.detach);
        let mut k_end = last_knot * 1.25;
        for c in &implied {
            for t in &c.tranchelets {
                if t.loss.abs() > FLOOR {
                    k_end = k_end.max(t.k_to);
                }
            }
        }
        if let Some(r) = &real_world {
            for p in &r.points {
                if p.high > FLOOR {
                    k_end = k_end.max(p.k);
                }
            }
        }
        let k_max = ((k_end / 0.05).ceil() * 0.05).clamp(0.05, 1.0);
        out.push(ExceedanceChart {
            date: d.pool.date,
            maturity: diag.maturity,
            protection_end_pd: diag.protection_end_pd,
            implied,
            real_world,
            k_max,
            model,
        });
    }
    Ok(out)
}

impl ExceedanceChart {
    /// The chart's file name.
    pub fn file_name(&self) -> String {
        format!("exceedance-{}.svg", self.maturity)
    }

    /// The chart's title.
    pub fn title(&self) -> String {
        format!(
            "Loss exceedance P(L > K) to {}{}",
            self.maturity,
            super::model_suffix(self.model)
        )
    }

    /// The chart as an SVG document: probability on a logarithmic axis
    /// from [`FLOOR`] to 100%, so the tails can be compared. A tranchelet
    /// loss at or below the floor leaves a gap; one below zero (arbitrage)
    /// is marked with a cross on the floor.
    ///
    /// # Errors
    /// A value that is not finite (not expected).
    pub fn svg(&self) -> Result<String> {
        let in_axis = |k: f64| k <= self.k_max + 1e-12;
        let log = |p: f64| (p.max(FLOOR) * 100.0).log10();
        let bottom = log(FLOOR);
        let mut top: f64 = 2.0;
        let mut items = Vec::new();
        let mut legend = Vec::new();
        if let Some(r) = &self.real_world {
            items.push(Item::Band {
                points: r
                    .points
                    .iter()
                    .filter(|p| in_axis(p.k))
                    .map(|p| (p.k * 100.0, log(p.low), log(p.high)))
                    .collect(),
            });
            legend.push(LegendEntry {
                label: "real-world band: PD and rho within their 95% intervals".to_string(),
                sample: Sample::Band,
            });
        }
        let mut below_zero = Vec::new();
        for (i, c) in self.implied.iter().enumerate() {
            let style = series_style(i);
            let mut points = Vec::new();
            for t in c.tranchelets.iter().filter(|t| in_axis(t.k_to)) {
                let k = 50.0 * (t.k_from + t.k_to);
                if t.loss < -ARBITRAGE_TOLERANCE {
                    below_zero.push((k, bottom));
                }
                points.push((t.loss > FLOOR).then(|| (k, log(t.loss))));
                top = top.max(log(t.loss));
            }
            items.push(Item::Line {
                points,
                style,
                marker_every: 0,
            });
            legend.push(LegendEntry {
                label: format!("risk-neutral, skew by {} interpolation", c.interp.name()),
                sample: Sample::Line(style, false),
            });
        }
        let mut subtitle = vec![format!(
            "trade date {}; index PD to {} + 1 day: {}%",
            self.date,
            self.maturity,
            tick(self.protection_end_pd * 100.0, 2)
        )];
        if let Some(r) = &self.real_world {
            let style = series_style(self.implied.len());
            items.push(Item::Line {
                points: r
                    .points
                    .iter()
                    .filter(|p| in_axis(p.k))
                    .map(|p| (p.central > FLOOR).then(|| (p.k * 100.0, log(p.central))))
                    .collect(),
                style,
                marker_every: 0,
            });
            legend.push(LegendEntry {
                label: format!(
                    "real-world Vasicek, {}: PD {}% a year, rho {}%",
                    r.estimate.method.name(),
                    tick(r.estimate.pd * 100.0, 3),
                    tick(r.estimate.rho * 100.0, 2)
                ),
                sample: Sample::Line(style, false),
            });
            subtitle.push(format!(
                "real-world PD over the same {} years: {}% (the annual PD compounded)",
                tick(r.horizon, 2),
                tick(r.pd_horizon * 100.0, 2)
            ));
            if let PoolModel::Names(n) = self.model {
                subtitle.push(format!(
                    "risk-neutral in a pool of {n} names; real-world in the large pool"
                ));
            }
        }
        if !below_zero.is_empty() {
            items.push(Item::Markers {
                points: below_zero,
                marker: Marker::Cross,
                size: 4,
            });
            legend.push(LegendEntry {
                label: "tranchelet loss below zero: arbitrage".to_string(),
                sample: Sample::Marker(Marker::Cross),
            });
        }
        let top = top.ceil();
        let frame = Frame {
            title: self.title(),
            subtitle,
            x_desc: "loss level K (% of pool notional)".to_string(),
            y_desc: "P(loss > K) (%, log scale)".to_string(),
            x: (0.0, self.k_max * 100.0),
            y: (bottom, top),
            x_label: Box::new(|v| tick(v, 2)),
            x_ticks: 10,
            y_label: Box::new(|v| {
                if (v - v.round()).abs() < 1e-9 {
                    tick(10f64.powf(v.round()), 6)
                } else {
                    String::new()
                }
            }),
            y_ticks: (top - bottom) as usize + 1,
        };
        render(&frame, &items, &legend)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pd_over_one_year_is_the_pd_and_compounds() {
        assert!((pd_over(0.02, 1.0) - 0.02).abs() < 1e-15);
        // Two years at 10%: 1 - 0.81 (arithmetic).
        assert!((pd_over(0.1, 2.0) - 0.19).abs() < 1e-15);
    }

    /// The band against a brute-force search over a fine grid of the box
    /// (an independent method): never narrower than the grid's range, and
    /// no wider than rounding.
    #[test]
    fn band_is_the_extremes_over_the_box() -> Result<()> {
        let lgd = 0.6;
        let pd = [0.03, 0.09];
        let rho = [0.05, 0.45];
        for &k in &[0.001, 0.01, 0.02, 0.05, 0.1, 0.3, 0.59] {
            let (lo, hi) = band_at(k, pd, rho, lgd)?;
            let (mut blo, mut bhi) = (f64::INFINITY, f64::NEG_INFINITY);
            for i in 0..=60 {
                for j in 0..=400 {
                    let p = pd[0] + (pd[1] - pd[0]) * i as f64 / 60.0;
                    let r = rho[0] + (rho[1] - rho[0]) * j as f64 / 400.0;
                    let e = 1.0 - Vasicek::new(p, r, lgd)?.cdf(k);
                    blo = blo.min(e);
                    bhi = bhi.max(e);
                }
            }
            assert!(
                lo <= blo + 1e-12 && hi >= bhi - 1e-12,
                "k {k}: {lo} {hi} vs {blo} {bhi}"
            );
            assert!(
                blo - lo < 1e-6 && hi - bhi < 1e-6,
                "k {k}: {lo} {hi} vs {blo} {bhi}"
            );
        }
        Ok(())
    }
}
