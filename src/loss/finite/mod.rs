//! A homogeneous pool of `n` names: exact finite-pool expected tranche
//! loss and outstanding notional in the one-factor Gaussian copula.
//!
//! # The model
//!
//! Each of the `n` names has the pool's default probability `PD = PD(t)`
//! and recovery `R`, and defaults by `t` when
//! `sqrt(rho) Z + sqrt(1 - rho) e_i <= c = G(PD)`. Given the common factor
//! `Z = z` the names default independently with probability
//!
//! ```text
//! p(z) = N((c - sqrt(rho) z) / sqrt(1 - rho))
//! ```
//!
//! so the number of defaults `D` is binomial(n, p(z)). The pool loses
//! `l = (1 - R) / n` and recovers `r = R / n` per default; losses eat the
//! capital structure from the bottom, recoveries amortise it from the top,
//! exactly as in the large pool ([`super::BaseTranche`]), whose limit this
//! is as `n -> inf`.
//!
//! # One expectation: E[min(D u, cap)]
//!
//! For a unit `u` per default and a cap (`u = l`, `cap = K` for the loss of
//! `[0, K]`; `u = r`, `cap = 1 - K` for its amortisation), let
//! `m = ceil(cap / u)`, the first count at which the cap binds. With
//! `Y ~ binomial(n - 1, p)`, `C = P(Y <= m - 2)` and `b = P(Y = m - 1)`:
//!
//! ```text
//! f(p)  = E[min(D u, cap) | p] = u Σ_{k<m} k P(D = k) + cap P(D >= m)
//!       = u n p C + cap (1 - C - (1 - p) b)
//! f'(p) = n Σ_k P(Y = k) (g(k + 1) - g(k)) = n (u C + (cap - (m - 1) u) b)
//! ```
//!
//! (`Σ_{k<m} k P(D = k) = n p P(Y <= m - 2)` and
//! `P(D <= m - 1) = P(Y <= m - 2) + (1 - p) P(Y = m - 1)`; the sums are in
//! [`binomial`]). When `m > n` the cap never binds and
//! `E[min(D u, cap)] = u n PD` for every rho. The expectation is the
//! factor integral `∫ f(p(z)) phi(z) dz`, its derivative in rho taken under
//! the integral.
//!
//! # Two rules for the factor integral
//!
//! - **The tabulated rule** ([`table`], what [`FinitePool::expected_min`]
//!   uses from rho = 0.01): in `v = (c - sqrt(rho) z) / sqrt(1 - rho)`,
//!   where `p = N(v)`, the integral is a Gaussian average of one function
//!   of the pool and the base tranche, `F(v) = f(N(v))`, not of the
//!   horizon nor of rho. `F - cap N(v)` is tabulated once per base tranche
//!   and summed by the trapezoid rule against the Gaussian, with steps
//!   measured on the table; `cap N(v)` averages to `cap PD` in closed form.
//!   A horizon costs no binomial sum, no interpolation and no exponential
//!   per node.
//! - **The direct rule** ([`direct`], [`FinitePool::expected_min_direct`]):
//!   composite Gauss-Legendre in `z`, [`NODES`] points a panel, panels
//!   broken at the kink, the steep part of `p` and `z = -3, 0, 3`, the
//!   binomial sums at every node. It is the independent
//!   check, and the rule below rho = 0.01, where the Gaussian in `v` is
//!   narrower than the table's step rewards.
//!
//! On the grid n ∈ {2, 10, 125, 250}, PD ∈ [1e-4, 0.8],
//! rho ∈ [1e-4, 0.9999], K ∈ [0.5%, 59%] at R = 40%, and beyond it (n up
//! to 1,000, PD from 1e-9 to 1 - 1e-6, rho up to 0.999999), the tabulated
//! rule is within 2e-14 of the direct rule with 48 points a panel, and
//! within 4e-16 of the twelve 30-digit mpmath integrals of
//! `tests/fixtures/finite.json` (`tests/reference/finite_fixtures.py`);
//! `tests/finite.rs` asserts 2e-12 between the two default rules and
//! 1e-11 against 28 points a panel and mpmath. The derivative is good to
//! about 1e-9 relative (1e-6 is asserted at rho = 0.9999, where its
//! integrand reaches further into the tails).
//!
//! # Speed
//!
//! One tranche (two base tranches, 21 dates) at 125 names prices in 0.9 to
//! 1.6 times the large pool's time (`benches/pricing.rs`,
//! `tranche/price/mezzanine_5y_125_names` against
//! `tranche/price/mezzanine_5y`; 1.6 times in instructions), against 16
//! times with Gauss-Legendre panels in `v` over a cubic Hermite table of
//! `F` and about 90 times with the binomial sums at every node.
//! [`BaseTranche::finite_path`] takes every date of a schedule at once, so
//! that the table is looked up and the Gaussian's factors are computed
//! once a correlation.
//!
//! # Edge cases
//!
//! `PD = 0` gives 0; `PD = 1` gives `min(n u, cap)`. `rho = 0`: `p = PD`
//! for every `z`, value `f(PD)` and derivative `f''(PD) phi(c)^2 / 2`
//! (finite, unlike the large pool's). `rho = 1`: all names default
//! together, value `PD min(n u, cap)`, derivative `-inf` as in the large
//! pool.
//!
//! # References
//!
//! - D. Li, "On default correlation: a copula function approach",
//!   J. Fixed Income 9(4), 2000 (the one-factor Gaussian copula).
//! - J. Hull and A. White, "Valuation of a CDO and an n-th to default CDS
//!   without Monte Carlo simulation", J. Derivatives 12(2), 2004
//!   (conditional independence given the factor; their Table 7 is checked
//!   in `tests/finite.rs`).
//! - L. N. Trefethen and J. A. C. Weideman, "The exponentially convergent
//!   trapezoidal rule", SIAM Review 56(3), 2014 (the trapezoid rule's error
//!   for smooth integrands that vanish at both ends, by Poisson summation).

pub mod binomial;
pub mod direct;
pub mod table;

use super::{BaseExpectation, BaseTranche, Cap, Correlation, Expectation, Horizon};
use crate::error::{Error, ErrorKind, Result};
use gauss_quad::legendre::GaussLegendre;
use std::num::NonZeroUsize;
use std::sync::{Arc, Mutex, OnceLock};
use table::Table;

/// Gauss-Legendre points per panel of the direct rule.
pub const NODES: usize = 20;

/// The direct rule integrates the factor over `[-Z_MAX, Z_MAX]` at most.
pub const Z_MAX: f64 = 8.5;

/// Where `|v| > V_MAX` the direct rule takes the conditional default
/// probability as 0 or 1 (it is within `N(-V_MAX) = 1e-17` of them).
pub const V_MAX: f64 = 8.5;

/// Below this correlation the direct rule is used.
const DIRECT_BELOW: f64 = 0.01;
/// Tables kept per pool (per unit and cap: the bases of a schedule).
const MAX_TABLES: usize = 64;

/// A pool model: the large homogeneous pool (the quoting convention), or a
/// homogeneous pool of a finite number of names.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum PoolModel {
    /// Vasicek's large-pool limit ([`BaseTranche::closed_form`]).
    #[default]
    LargePool,
    /// `n` names, binomial given the factor ([`FinitePool`]).
    Names(usize),
}

impl PoolModel {
    /// `large_pool` or `names_125`: the name in JSON and CSV.
    ///
    /// # Example
    ///
    /// ```
    /// use skewbook::loss::PoolModel;
    /// assert_eq!(PoolModel::Names(125).name(), "names_125");
    /// assert_eq!(PoolModel::LargePool.name(), "large_pool");
    /// ```
    pub fn name(self) -> String {
        match self {
            PoolModel::LargePool => "large_pool".to_string(),
            PoolModel::Names(n) => format!("names_{n}"),
        }
    }

    /// A phrase for table titles: `large pool` or `125 names`.
    pub fn describe(self) -> String {
        match self {
            PoolModel::LargePool => "large pool".to_string(),
            PoolModel::Names(n) => format!("{n} names"),
        }
    }
}

/// A homogeneous pool of `n` names with what every evaluation reuses: the
/// binomial recurrence's ratios, and the tables of `f(N(v)) - cap N(v)`
/// per base tranche (built on first use, shared by clones).
#[derive(Debug)]
pub struct FinitePool {
    names: usize,
    /// `(n - 1 - k) / (k + 1)`, k = 0 .. n - 2: ratios of binomial(n - 1, .) terms.
    ratios: Vec<f64>,
    /// `ln C(n - 1, k)`, k = 0 .. n - 1, for the logarithmic start.
    ln_choose: Vec<f64>,
    /// Gauss-Legendre nodes and weights on [-1, 1] when every evaluation
    /// takes the direct rule with them; `None` for the default rules.
    rule: Option<Vec<(f64, f64)>>,
    /// Smallest `1 - p` for which `(1 - p)^(n - 1)` stays above 1e-300.
    q_floor: f64,
    /// Tables of `F(v) - cap N(v)` per (unit, cap), built on first use.
    tables: Mutex<Vec<Arc<Table>>>,
}

impl Clone for FinitePool {
    fn clone(&self) -> FinitePool {
        FinitePool {
            names: self.names,
            ratios: self.ratios.clone(),
            ln_choose: self.ln_choose.clone(),
            rule: self.rule.clone(),
            q_floor: self.q_floor,
            tables: Mutex::new(self.tables().clone()),
        }
    }
}

impl PartialEq for FinitePool {
    /// The same pool size and rule (the tables are a cache).
    fn eq(&self, other: &FinitePool) -> bool {
        self.names == other.names && self.rule == other.rule
    }
}

/// The default rule ([`NODES`] points), built once.
fn default_rule() -> &'static [(f64, f64)] {
    static RULE: OnceLock<Vec<(f64, f64)>> = OnceLock::new();
    RULE.get_or_init(|| legendre(NODES))
}

fn legendre(nodes: usize) -> Vec<(f64, f64)> {
    let n = NonZeroUsize::new(nodes).unwrap_or(NonZeroUsize::MIN);
    GaussLegendre::new(n)
        .iter()
        .map(|(x, w)| (*x, *w))
        .collect()
}

impl FinitePool {
    /// A pool of `names` names with the default rule.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidInput`] when `names` is 0.
    ///
    /// # Example
    ///
    /// ```
    /// use skewbook::loss::FinitePool;
    /// assert_eq!(FinitePool::new(125)?.names(), 125);
    /// assert!(FinitePool::new(0).is_err());
    /// # Ok::<(), skewbook::Error>(())
    /// ```
    pub fn new(names: usize) -> Result<FinitePool> {
        if names == 0 {
            return Err(Error::msg(
                ErrorKind::InvalidInput,
                "finite pool: expected at least 1 name, found 0",
            ));
        }
        let n1 = names - 1;
        let ratios = (0..n1).map(|k| (n1 - k) as f64 / (k + 1) as f64).collect();
        let lg = |x: usize| libm::lgamma(x as f64 + 1.0);
        let ln_choose = (0..=n1).map(|k| lg(n1) - lg(k) - lg(n1 - k)).collect();
        let q_floor = if n1 == 0 {
            0.0
        } else {
            (-690.0 / n1 as f64).exp()
        };
        Ok(FinitePool {
            names,
            ratios,
            ln_choose,
            rule: None,
            q_floor,
            tables: Mutex::default(),
        })
    }

    /// The same pool evaluated by the direct rule alone, with `nodes`
    /// Gauss-Legendre points per panel instead of [`NODES`] (an
    /// independent check of the tabulated rule and of the default direct
    /// rule).
    ///
    /// # Errors
    ///
    /// As [`FinitePool::new`].
    pub fn with_nodes(names: usize, nodes: usize) -> Result<FinitePool> {
        let mut p = FinitePool::new(names)?;
        p.rule = Some(legendre(nodes));
        Ok(p)
    }

    /// Number of names `n`.
    pub fn names(&self) -> usize {
        self.names
    }

    fn rule(&self) -> &[(f64, f64)] {
        self.rule.as_deref().unwrap_or_else(|| default_rule())
    }

    /// `E[min(D u, cap)]` and its derivative in rho, `D` the number of
    /// defaults in the pool at horizon `h`; `kink` holds
    /// `k = cap / (n u)` and `G(k)`.
    ///
    /// # Formula
    ///
    /// See the module docs: `∫ f(p(z)) phi(z) dz` by the tabulated rule
    /// (trapezoid sums in `v`), or the direct rule below rho = 0.01 and for
    /// a pool made by [`FinitePool::with_nodes`].
    ///
    /// # References
    ///
    /// Hull and White (2004), J. Derivatives 12(2).
    ///
    /// # Example
    ///
    /// A cap no count reaches: `E[D u] = n u PD` whatever rho.
    ///
    /// ```
    /// use skewbook::loss::{Cap, Correlation, FinitePool, Horizon};
    /// let pool = FinitePool::new(100)?;
    /// let e = pool.expected_min(&Horizon::new(0.05)?, &Correlation::new(0.3), 0.006, 0.9, &Cap::new(1.5));
    /// assert!((e.value - 0.03).abs() < 1e-15);
    /// # Ok::<(), skewbook::Error>(())
    /// ```
    pub fn expected_min(
        &self,
        h: &Horizon,
        corr: &Correlation,
        unit: f64,
        cap: f64,
        kink: &Cap,
    ) -> Expectation {
        self.expected_min_path(std::slice::from_ref(h), corr, unit, cap, kink)[0]
    }

    /// [`Self::expected_min`] at every horizon of `hs` (the dates of a
    /// schedule): the table is looked up, and what the Gaussian weights
    /// need for this correlation computed, once for all of them.
    ///
    /// # Formula
    ///
    /// As [`Self::expected_min`].
    ///
    /// # References
    ///
    /// Hull and White (2004), J. Derivatives 12(2).
    ///
    /// # Example
    ///
    /// ```
    /// use skewbook::loss::{Cap, Correlation, FinitePool, Horizon};
    /// let pool = FinitePool::new(125)?;
    /// let hs = [Horizon::new(0.01)?, Horizon::new(0.05)?];
    /// let (at, cap) = (Correlation::new(0.3), Cap::new(0.05));
    /// let path = pool.expected_min_path(&hs, &at, 0.6 / 125.0, 0.03, &cap);
    /// let one = pool.expected_min(&hs[1], &at, 0.6 / 125.0, 0.03, &cap);
    /// assert_eq!(path[1], one);
    /// # Ok::<(), skewbook::Error>(())
    /// ```
    pub fn expected_min_path(
        &self,
        hs: &[Horizon],
        corr: &Correlation,
        unit: f64,
        cap: f64,
        kink: &Cap,
    ) -> Vec<Expectation> {
        let mut out = vec![
            Expectation {
                value: 0.0,
                drho: 0.0,
            };
            hs.len()
        ];
        let mut todo = vec![false; hs.len()];
        let mut any = false;
        for ((h, e), t) in hs.iter().zip(&mut out).zip(&mut todo) {
            match self.edge(h, corr, unit, cap) {
                Some(x) => *e = x,
                None if self.rule.is_some() || corr.rho < DIRECT_BELOW => {
                    // the factor barely moves p: the Gaussian in v is
                    // narrower than the table's step
                    *e = self.expected_min_direct(h, corr, unit, cap, kink);
                }
                None => {
                    *t = true;
                    any = true;
                }
            }
        }
        if any {
            self.table(unit, cap, kink)
                .integrate(hs, corr, &todo, &mut out);
        }
        out
    }

    /// The cases with no integral: `Some` value and derivative.
    fn edge(&self, h: &Horizon, corr: &Correlation, unit: f64, cap: f64) -> Option<Expectation> {
        let nf = self.names as f64;
        let top = (nf * unit).min(cap);
        let e = |value, drho| Some(Expectation { value, drho });
        if cap <= 0.0 || unit <= 0.0 || h.pd <= 0.0 {
            return e(0.0, 0.0);
        }
        let m_real = (cap / unit).ceil();
        if m_real > nf {
            return e(unit * nf * h.pd, 0.0);
        }
        if self.names == 1 || h.pd >= 1.0 {
            return e(h.pd * top, 0.0);
        }
        if corr.rho <= 0.0 {
            let m = (m_real as usize).max(1);
            return Some(self.at_zero_correlation(h, unit, cap, m));
        }
        if corr.rho >= 1.0 {
            return e(h.pd * top, f64::NEG_INFINITY);
        }
        None
    }

    /// The table of `F(v) - cap N(v)` for this unit and cap, built on first use.
    fn table(&self, unit: f64, cap: f64, kink: &Cap) -> Arc<Table> {
        let key = (unit.to_bits(), cap.to_bits());
        if let Some(t) = self.tables().iter().find(|t| t.key == key) {
            return Arc::clone(t);
        }
        let t = Arc::new(Table::build(self, unit, cap, kink));
        let mut tables = self.tables();
        if tables.len() >= MAX_TABLES {
            tables.remove(0);
        }
        tables.push(Arc::clone(&t));
        t
    }

    /// The tables, whatever another thread left (a table is complete
    /// before it is pushed, so a poisoned lock holds only whole tables).
    fn tables(&self) -> std::sync::MutexGuard<'_, Vec<Arc<Table>>> {
        self.tables
            .lock()
            .unwrap_or_else(std::sync::PoisonError::into_inner)
    }
}

impl BaseTranche {
    /// Expected loss and outstanding notional of `[0, K]` in a pool of
    /// `pool.names()` names, pool-notional units, with derivatives in rho.
    ///
    /// # Formula
    ///
    /// ```text
    /// loss        = E[min(D (1 - R) / n, K)]
    /// amortised   = R PD - E[min(D R / n, 1 - K)]
    /// outstanding = K - loss - amortised
    /// ```
    ///
    /// each expectation by [`FinitePool::expected_min`].
    ///
    /// # References
    ///
    /// Hull and White (2004), J. Derivatives 12(2); the recovery side
    /// follows the project's conventions (amortisation from the top).
    ///
    /// # Example
    ///
    /// One name: `[0, K]` with `K` below its loss `1 - R` loses `K` exactly
    /// when the name defaults.
    ///
    /// ```
    /// use skewbook::loss::{BaseTranche, Correlation, FinitePool, Horizon};
    /// let e = BaseTranche::new(0.4, 0.3)?.finite(
    ///     &Horizon::new(0.05)?, &Correlation::new(0.3), &FinitePool::new(1)?);
    /// assert!((e.loss - 0.3 * 0.05).abs() < 1e-15);
    /// # Ok::<(), skewbook::Error>(())
    /// ```
    pub fn finite(&self, h: &Horizon, corr: &Correlation, pool: &FinitePool) -> BaseExpectation {
        self.finite_path(std::slice::from_ref(h), corr, pool)[0]
    }

    /// [`Self::finite`] at every horizon of `hs` (the dates of a schedule),
    /// each side's table looked up once ([`FinitePool::expected_min_path`]).
    ///
    /// # Formula
    ///
    /// As [`Self::finite`].
    ///
    /// # References
    ///
    /// Hull and White (2004), J. Derivatives 12(2).
    ///
    /// # Example
    ///
    /// ```
    /// use skewbook::loss::{BaseTranche, Correlation, FinitePool, Horizon};
    /// let (pool, base) = (FinitePool::new(125)?, BaseTranche::new(0.4, 0.07)?);
    /// let hs = [Horizon::new(0.02)?, Horizon::new(0.04)?];
    /// let at = Correlation::new(0.3);
    /// let path = base.finite_path(&hs, &at, &pool);
    /// assert_eq!(path[0], base.finite(&hs[0], &at, &pool));
    /// # Ok::<(), skewbook::Error>(())
    /// ```
    pub fn finite_path(
        &self,
        hs: &[Horizon],
        corr: &Correlation,
        pool: &FinitePool,
    ) -> Vec<BaseExpectation> {
        let nf = pool.names as f64;
        let (r, k) = (self.recovery, self.detach);
        let lgd = 1.0 - r;
        let side = |on: bool, unit: f64, cap: f64, kink: &Cap| {
            if on {
                pool.expected_min_path(hs, corr, unit, cap, kink)
            } else {
                vec![
                    Expectation {
                        value: 0.0,
                        drho: 0.0,
                    };
                    hs.len()
                ]
            }
        };
        let loss = side(lgd > 0.0 && k > 0.0, lgd / nf, k, &self.loss_cap);
        let capped_rec = side(r > 0.0 && k < 1.0, r / nf, 1.0 - k, &self.recovery_cap);
        hs.iter()
            .zip(loss.iter().zip(&capped_rec))
            .map(|(h, (loss, rec))| BaseExpectation {
                loss: loss.value,
                outstanding: k - loss.value - (r * h.pd - rec.value),
                dloss_drho: loss.drho,
                doutstanding_drho: rec.drho - loss.drho,
            })
            .collect()
    }
}
