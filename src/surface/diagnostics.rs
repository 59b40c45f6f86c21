//! Arbitrage diagnostics of a surface: base expected loss on a detachment
//! grid, the implied exceedance curve, and where they break the laws of a
//! loss distribution.
//!
//! # Formula
//! For each maturity M with knots, at its protection end (M + 1 day), on the
//! grid K_j = j h, j = 0 .. 1/h:
//! ```text
//! g(K_j) = E[min(L, K_j)]   at rho = rho(K_j, M);   g(0) = 0,  g(100%) = (1 - R) PD
//! e_j    = (g(K_(j+1)) - g(K_j)) / h                 (tranchelet expected loss ~ P(L > K))
//! ```
//! No arbitrage in detachment: `0 <= e_j <= 1` and `e_j` non-increasing;
//! in maturity: `g_a(K_j) <= g_b(K_j)` for consecutive maturities M_a < M_b,
//! each at its own protection end. Each check has a 1e-12 tolerance.

use super::skew::Surface;
use crate::curve::Pool;
use crate::dates::Schedule;
use crate::error::{Error, ErrorKind, Result};
use crate::loss::{BaseTranche, Correlation, FinitePool, Horizon, PoolModel};
use crate::solve::chain::Knot;
use chrono::NaiveDate;

/// Tolerance of every no-arbitrage check.
pub const ARBITRAGE_TOLERANCE: f64 = 1e-12;

/// Whether a tranchelet loss `e` (fraction of its width) lies outside
/// [0, 1] by more than [`ARBITRAGE_TOLERANCE`].
///
/// ```
/// use skewbook::surface::diagnostics::outside_unit;
/// assert!(outside_unit(-1e-9) && outside_unit(1.0 + 1e-9));
/// assert!(!outside_unit(-1e-13) && !outside_unit(0.4));
/// ```
pub fn outside_unit(e: f64) -> bool {
    (-e).max(e - 1.0) > ARBITRAGE_TOLERANCE
}

/// Whether the exceedance curve rises from one tranchelet loss `e` to the
/// next, `next`, by more than [`ARBITRAGE_TOLERANCE`].
///
/// ```
/// use skewbook::surface::diagnostics::rises;
/// assert!(rises(0.2, 0.2 + 1e-9) && !rises(0.2, 0.1));
/// ```
pub fn rises(e: f64, next: f64) -> bool {
    next - e > ARBITRAGE_TOLERANCE
}

/// One grid point of a maturity.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GridPoint {
    /// Detachment K_j, fraction.
    pub k: f64,
    /// rho(K_j, M); `None` at K = 0 and K = 100%.
    pub rho: Option<f64>,
    /// Base expected loss g(K_j), fraction of pool notional.
    pub base_expected_loss: f64,
    /// Tranchelet expected loss e_j, fraction of its width; `None` at the last point.
    pub tranchelet_loss: Option<f64>,
}

/// A tranchelet loss outside [0, 1]: the worst one.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct OutsideUnit {
    /// K_j.
    pub k_from: f64,
    /// K_(j+1).
    pub k_to: f64,
    /// e_j.
    pub tranchelet_loss: f64,
}

/// A rise of the exceedance curve: the worst one.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Increasing {
    /// K_j, the start of the lower tranchelet.
    pub k_from: f64,
    /// K_(j+2), the end of the upper tranchelet.
    pub k_to: f64,
    /// e_(j+1) - e_j.
    pub rise: f64,
}

/// Base expected loss falling with maturity: the worst point.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MaturityOrder {
    /// The earlier maturity M_a.
    pub earlier_maturity: NaiveDate,
    /// K_j.
    pub k: f64,
    /// g_a(K_j) - g_b(K_j).
    pub excess: f64,
}

/// Counts of violations of each kind.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct Counts {
    /// Tranchelet losses outside [0, 1].
    pub outside_unit: usize,
    /// Rises of the exceedance curve.
    pub increasing: usize,
    /// Grid points where the earlier maturity loses more.
    pub maturity_order: usize,
}

/// The diagnostics of one maturity.
#[derive(Debug, Clone, PartialEq)]
pub struct MaturityDiagnostics {
    /// The maturity M.
    pub maturity: NaiveDate,
    /// Index pool default probability at M + 1 day.
    pub protection_end_pd: f64,
    /// The maturity's knots.
    pub knots: Vec<Knot>,
    /// The grid, j = 0 .. 1/h.
    pub grid: Vec<GridPoint>,
    /// Violations per kind.
    pub counts: Counts,
    /// The worst tranchelet loss outside [0, 1].
    pub worst_outside_unit: Option<OutsideUnit>,
    /// The worst rise.
    pub worst_increasing: Option<Increasing>,
    /// The worst maturity-order violation against the previous maturity.
    pub worst_maturity_order: Option<MaturityOrder>,
}

/// Grid intervals for a step `h` (fraction): 1/h, which must be a whole number.
///
/// # Errors
/// [`ErrorKind::Usage`] when `h` is not in (0, 0.5] or does not divide 100%.
pub fn grid_intervals(h: f64) -> Result<usize> {
    let n = (1.0 / h).round();
    if !(h > 0.0 && h <= 0.5) || (n * h - 1.0).abs() > 1e-9 || n > 1e6 {
        return Err(Error::msg(
            ErrorKind::Usage,
            format!(
                "--step-pct: expected a step in percent that divides 100 (0.1, 0.5, 1, ...), found {}",
                h * 100.0
            ),
        ));
    }
    Ok(n as usize)
}

/// Base expected loss g on the grid for one maturity (index pool curves).
fn grid_losses(
    surface: &Surface,
    pool: &Pool,
    maturity: NaiveDate,
    n: usize,
    finite: Option<&FinitePool>,
) -> Result<(f64, Vec<GridPoint>)> {
    let t_end = Schedule::new(pool.date, maturity).protection_end_time();
    let pd = pool.hazard.default_probability(t_end);
    let horizon = Horizon::new(pd)?;
    let mut grid = Vec::with_capacity(n + 1);
    for j in 0..=n {
        let k = j as f64 / n as f64;
        let (rho, g) = if j == 0 {
            (None, 0.0)
        } else if j == n {
            (None, (1.0 - pool.recovery) * pd)
        } else {
            let rho = surface
                .rho(k, maturity)
                .map(|l| l.rho)
                .ok_or_else(|| Error::msg(ErrorKind::InvalidInput, "surface has no knots"))?;
            let base = BaseTranche::new(pool.recovery, k)?;
            let corr = Correlation::new(rho);
            let g = match finite {
                Some(names) => base.finite(&horizon, &corr, names).loss,
                None => base.closed_form(&horizon, &corr).loss,
            };
            (Some(rho), g)
        };
        grid.push(GridPoint {
            k,
            rho,
            base_expected_loss: g,
            tranchelet_loss: None,
        });
    }
    let h = 1.0 / n as f64;
    for j in 0..n {
        grid[j].tranchelet_loss =
            Some((grid[j + 1].base_expected_loss - grid[j].base_expected_loss) / h);
    }
    Ok((pd, grid))
}

/// The diagnostics of every maturity of `surface`, priced on the index
/// `pool` of the same date, on a grid of `n` intervals (see [`grid_intervals`]).
///
/// # Errors
/// Not expected for a surface built from solved knots.
pub fn diagnose(surface: &Surface, pool: &Pool, n: usize) -> Result<Vec<MaturityDiagnostics>> {
    diagnose_with(surface, pool, n, PoolModel::LargePool)
}

/// [`diagnose`] with the base expected loss g in `model` (the large pool,
/// or a pool of n names, as the surface's knots were solved in).
///
/// # Errors
/// As [`diagnose`]; [`ErrorKind::InvalidInput`] for a pool of 0 names.
pub fn diagnose_with(
    surface: &Surface,
    pool: &Pool,
    n: usize,
    model: PoolModel,
) -> Result<Vec<MaturityDiagnostics>> {
    let finite = match model {
        PoolModel::LargePool => None,
        PoolModel::Names(names) => Some(FinitePool::new(names)?),
    };
    let mut out: Vec<MaturityDiagnostics> = Vec::with_capacity(surface.maturities.len());
    for m in &surface.maturities {
        let (pd, grid) = grid_losses(surface, pool, m.maturity, n, finite.as_ref())?;
        let mut counts = Counts::default();
        let mut worst_outside_unit: Option<OutsideUnit> = None;
        let mut worst_increasing: Option<Increasing> = None;
        let e: Vec<f64> = grid.iter().filter_map(|p| p.tranchelet_loss).collect();
        for (j, &ej) in e.iter().enumerate() {
            let beyond = (-ej).max(ej - 1.0);
            if outside_unit(ej) {
                counts.outside_unit += 1;
                if worst_outside_unit
                    .is_none_or(|w| beyond > (-w.tranchelet_loss).max(w.tranchelet_loss - 1.0))
                {
                    worst_outside_unit = Some(OutsideUnit {
                        k_from: grid[j].k,
                        k_to: grid[j + 1].k,
                        tranchelet_loss: ej,
                    });
                }
            }
            if let Some(&next) = e.get(j + 1) {
                let rise = next - ej;
                if rises(ej, next) {
                    counts.increasing += 1;
                    if worst_increasing.is_none_or(|w| rise > w.rise) {
                        worst_increasing = Some(Increasing {
                            k_from: grid[j].k,
                            k_to: grid[j + 2].k,
                            rise,
                        });
                    }
                }
            }
        }
        let mut worst_maturity_order: Option<MaturityOrder> = None;
        if let Some(prev) = out.last() {
            for (a, b) in prev.grid.iter().zip(&grid) {
                let excess = a.base_expected_loss - b.base_expected_loss;
                if excess > ARBITRAGE_TOLERANCE {
                    counts.maturity_order += 1;
                    if worst_maturity_order.is_none_or(|w| excess > w.excess) {
                        worst_maturity_order = Some(MaturityOrder {
                            earlier_maturity: prev.maturity,
                            k: b.k,
                            excess,
                        });
                    }
                }
            }
        }
        out.push(MaturityDiagnostics {
            maturity: m.maturity,
            protection_end_pd: pd,
            knots: m.knots.clone(),
            grid,
            counts,
            worst_outside_unit,
            worst_increasing,
            worst_maturity_order,
        });
    }
    Ok(out)
}
