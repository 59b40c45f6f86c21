//! Bespoke-pool mapping: the index-equivalent detachment of a bespoke bound.
//!
//! # Formula
//! At the protection end tau of the trade's maturity T, with pool expected
//! losses `EL_P = (1 - R_P) PD_P(tau)`, a bespoke base tranche [0, K] takes
//! the index correlation at K_I:
//! ```text
//! none         K_I = K
//! moneyness    K_I = K EL_I / EL_X
//! tlp          g_I(K_I; rho) / EL_I = g_X(K; rho) / EL_X,          rho = rho(K_I, T)
//! probability  P(L_I <= K_I; rho) = P(L_X <= K; rho),               rho = rho(K_I, T)
//! ```
//! with g_P(K; rho) = E[min(L_P, K)] and, in the large pool,
//! `P(L <= K; rho) = N((sqrt(1-rho) G(x) - G(PD)) / sqrt(rho))`, x = K / (1 - R),
//! and 1 for x >= 1 (Vasicek 2002). `tlp` and `probability` are solved for
//! K_I in [1e-4, 0.9999]: a scan of 200 equal steps, the lowest sign change
//! polished to 1e-10; more than one sign change is reported.
//!
//! None of these is an arbitrage-free price: they are conventions of the
//! trade for carrying an index skew to another pool.

use crate::curve::Pool;
use crate::error::{Error, ErrorKind, Result};
use crate::loss::{BaseTranche, Correlation, Horizon};
use crate::math::normal::{cdf, inv_cdf};
use crate::math::root::{brent, Tolerance};
use crate::surface::Surface;
use chrono::NaiveDate;
use std::fmt;
use std::str::FromStr;

/// How a bespoke detachment is carried to the index skew.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Mapping {
    /// The same detachment.
    #[default]
    None,
    /// Detachment over pool expected loss matched.
    Moneyness,
    /// The base tranche's share of pool expected loss matched (tranche loss proportion).
    Tlp,
    /// The probability that pool loss stays below the detachment matched.
    Probability,
}

impl Mapping {
    /// Every method, in the documentation's order.
    pub const ALL: [Mapping; 4] = [
        Mapping::None,
        Mapping::Moneyness,
        Mapping::Tlp,
        Mapping::Probability,
    ];

    /// The name on the command line and in JSON.
    pub fn name(self) -> &'static str {
        match self {
            Mapping::None => "none",
            Mapping::Moneyness => "moneyness",
            Mapping::Tlp => "tlp",
            Mapping::Probability => "probability",
        }
    }

    /// The sentence the output carries for a mapping other than `none`.
    pub fn note(self) -> Option<&'static str> {
        (self != Mapping::None).then_some(
            "Bespoke correlations are mapped from the index skew by a mapping convention; \
             the results are not arbitrage-free prices.",
        )
    }
}

impl fmt::Display for Mapping {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

impl FromStr for Mapping {
    type Err = Error;
    fn from_str(s: &str) -> Result<Mapping> {
        Mapping::ALL
            .into_iter()
            .find(|m| m.name() == s)
            .ok_or_else(|| {
                Error::msg(
                    ErrorKind::Usage,
                    format!(
                        "--mapping: expected none, moneyness, tlp or probability, found \"{s}\""
                    ),
                )
            })
    }
}

/// Lower end of the mapping search.
pub const MAP_MIN: f64 = 1e-4;
/// Upper end of the mapping search.
pub const MAP_MAX: f64 = 0.9999;
/// Equal steps of the mapping scan.
pub const MAP_STEPS: usize = 200;

/// An index-equivalent detachment.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Mapped {
    /// K_I, fraction of the index pool.
    pub k_index: f64,
    /// Whether the mapping equation changed sign more than once.
    pub several: bool,
}

/// One pool at the protection end: its expected loss and horizon.
#[derive(Debug, Clone, Copy)]
struct PoolAt {
    recovery: f64,
    horizon: Horizon,
    expected_loss: f64,
}

impl PoolAt {
    fn new(pool: &Pool, tau: f64) -> Result<PoolAt> {
        let pd = pool.hazard.default_probability(tau);
        Ok(PoolAt {
            recovery: pool.recovery,
            horizon: Horizon::new(pd)?,
            expected_loss: (1.0 - pool.recovery) * pd,
        })
    }

    /// g(K; rho) = E[min(L, K)].
    fn base_loss(&self, k: f64, rho: f64) -> Result<f64> {
        Ok(BaseTranche::new(self.recovery, k.clamp(0.0, 1.0))?
            .closed_form(&self.horizon, &Correlation::new(rho))
            .loss)
    }

    /// P(L <= K; rho) in the large pool.
    fn loss_cdf(&self, k: f64, rho: f64) -> f64 {
        let x = k / (1.0 - self.recovery);
        if x >= 1.0 {
            return 1.0;
        }
        if x <= 0.0 {
            return 0.0;
        }
        cdf(((1.0 - rho).sqrt() * inv_cdf(x) - self.horizon.c) / rho.sqrt())
    }
}

/// K_I for a bespoke bound `k` (0 < k < 1) of a trade maturing on `maturity`
/// whose protection ends at curve time `tau`; `None` when the mapping
/// equation has no solution in [1e-4, 0.9999] (or the surface is empty).
///
/// # Errors
/// Only for pools whose default probability is not a probability.
#[allow(clippy::too_many_arguments)]
pub fn index_equivalent(
    mapping: Mapping,
    k: f64,
    maturity: NaiveDate,
    tau: f64,
    index: &Pool,
    bespoke: &Pool,
    surface: &Surface,
) -> Result<Option<Mapped>> {
    let mapped = |k_index| Mapped {
        k_index,
        several: false,
    };
    let (i, x) = (PoolAt::new(index, tau)?, PoolAt::new(bespoke, tau)?);
    match mapping {
        Mapping::None => Ok(Some(mapped(k))),
        Mapping::Moneyness => {
            if x.expected_loss <= 0.0 {
                return Ok(None);
            }
            Ok(Some(mapped(k * i.expected_loss / x.expected_loss)))
        }
        Mapping::Tlp | Mapping::Probability => {
            if surface.is_empty() || i.expected_loss <= 0.0 || x.expected_loss <= 0.0 {
                return Ok(None);
            }
            let rho_at = |ki: f64| surface.rho(ki, maturity).map_or(0.0, |l| l.rho);
            let gap = |ki: f64| -> Result<f64> {
                let rho = rho_at(ki);
                Ok(if mapping == Mapping::Tlp {
                    i.base_loss(ki, rho)? / i.expected_loss - x.base_loss(k, rho)? / x.expected_loss
                } else {
                    i.loss_cdf(ki, rho) - x.loss_cdf(k, rho)
                })
            };
            solve_scan(gap)
        }
    }
}

/// The lowest root of `gap` on the 200-step scan of [1e-4, 0.9999],
/// polished by Brent to 1e-10.
fn solve_scan(gap: impl Fn(f64) -> Result<f64>) -> Result<Option<Mapped>> {
    let xs: Vec<f64> = (0..=MAP_STEPS)
        .map(|i| MAP_MIN + (MAP_MAX - MAP_MIN) * i as f64 / MAP_STEPS as f64)
        .collect();
    let fs = xs.iter().map(|&x| gap(x)).collect::<Result<Vec<f64>>>()?;
    let mut roots: Vec<(usize, bool)> = Vec::new(); // (interval, exact at its left end)
    for j in 0..MAP_STEPS {
        if fs[j] == 0.0 {
            roots.push((j, true));
        } else if fs[j] * fs[j + 1] < 0.0 {
            roots.push((j, false));
        }
    }
    if fs[MAP_STEPS] == 0.0 {
        roots.push((MAP_STEPS, true));
    }
    let Some(&(j, exact)) = roots.first() else {
        return Ok(None);
    };
    let several = roots.len() > 1;
    if exact {
        return Ok(Some(Mapped {
            k_index: xs[j],
            several,
        }));
    }
    let tol = Tolerance {
        residual: 0.0,
        width: 1e-14,
        max_iterations: 200,
    };
    // `gap` failed nowhere on the scan and takes the same kind of point
    // inside it; should it fail there, the solve fails loudly below.
    let f = |x: f64| gap(x).unwrap_or(f64::NAN);
    match brent(f, xs[j], xs[j + 1], tol) {
        Ok(s) => Ok(Some(Mapped {
            k_index: s.value,
            several,
        })),
        Err(e) => Err(Error::msg(
            ErrorKind::Unfittable,
            format!(
                "mapping: the solve between detachments {} and {} stopped: {e:?}",
                xs[j],
                xs[j + 1]
            ),
        )),
    }
}
