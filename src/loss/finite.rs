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
//! `P(D <= m - 1) = P(Y <= m - 2) + (1 - p) P(Y = m - 1)`). When `m > n`
//! the cap never binds and `E[min(D u, cap)] = u n PD` for every rho.
//! The derivative in rho is taken under the factor integral:
//!
//! ```text
//! E[min(D u, cap)]        = ∫ f(p(z)) phi(z) dz
//! d/drho E[min(D u, cap)] = ∫ f'(p(z)) dp/drho phi(z) dz,
//! dp/drho = phi(v) (c - z / sqrt(rho)) / (2 (1 - rho)^{3/2}),  v = (c - sqrt(rho) z) / sqrt(1 - rho)
//! ```
//!
//! # The rule over the factor
//!
//! The integrand is smooth (a polynomial in `p`, and `p` is smooth in `z`)
//! but has three length scales: the normal density (1 in `z`), the steep
//! part of `p` (width `s = sqrt((1 - rho) / rho)` around `z* = c / sqrt(rho)`,
//! 0.01 at rho = 0.9999), and the rounded kink where the expected default
//! count crosses the cap: `p = k = cap / (n u)` at
//! `z_k = (c - sqrt(1 - rho) G(k)) / sqrt(rho)`, rounded over
//! `σ_k = s sqrt(k (1 - k) / n) / phi(G(k))` (the binomial's spread in `p`,
//! carried to `z`; it shrinks as `1 / sqrt(n)` towards the large pool's kink).
//!
//! The factor is integrated by **composite Gauss-Legendre, [`NODES`] = 14
//! points per panel**, on `[a, b] = [max(-7, z(v = 7)), min(7, z(v = -7))]`,
//! the range where `p` is neither below `N(-7) = 1.3e-12` nor above
//! `1 - 1.3e-12` and the density not below `phi(7)`. Panels break at
//! `z_k` and `z_k ± 4 σ_k`, at `z* ± 2 s`, and at `z = -3, 0, 3`, where
//! inside `(a, b)`: at most 9 panels, 126 nodes (about 90 on average). Left
//! of `a` every name has defaulted (`f = min(n u, cap)`, added in closed
//! form as `min(n u, cap) N(a)`); right of `b` none has. The truncation
//! costs below `3e-12`. On the grid n ∈ {2, 10, 125, 250},
//! PD ∈ [1e-4, 0.8], rho ∈ [1e-4, 0.9999], K ∈ [0.5%, 59%] at R = 40% the
//! rule is within 1e-11 of a 28-point rule and of 30-digit mpmath
//! integrals (`tests/finite.rs`, `tests/reference/finite_fixtures.py`);
//! 10 points per panel stall near 3e-9 and 12 near 1e-10. The derivative
//! is good to about 1e-6 relative at rho = 0.9999 (its integrand reaches
//! further into the truncated tails), 1e-9 elsewhere.
//!
//! # The same rule in v, with f(N(v)) tabulated once
//!
//! In `v = (c - sqrt(rho) z) / sqrt(1 - rho)` (so `p = N(v)`) the integral
//! is a Gaussian average of one fixed function:
//!
//! ```text
//! E[min(D u, cap)] = ∫ F(v) phi((v - mu) / sigma) / sigma dv,   F(v) = f(N(v)),
//! mu = c / sqrt(1 - rho),  sigma = sqrt(rho / (1 - rho))
//! d/drho            = ∫ F'(v) (mu' + sigma' (v - mu) / sigma) phi((v - mu) / sigma) / sigma dv
//! ```
//!
//! `F` depends on the pool, the unit and the cap alone: not on the horizon
//! nor on rho. [`FinitePool::expected_min`] tabulates `F` and `F'` once per
//! base tranche (a uniform grid on `[-7, 7]`, step 1/50 of the kink's
//! width `sqrt(k (1 - k) / n) / phi(G(k))` in `v` and at most 0.004: 3,500
//! points at 125 names), interpolates them by cubic Hermite, and runs the
//! same panels mapped to `v` (`z = -3, 0, 3` is `v = mu + 3 sigma, mu,
//! mu - 3 sigma`; `z* ± 2 s` is `v = ∓2`, needed only where the Gaussian
//! is wider than 1 (rho > 0.5); the kink is `G(k) + σ_k / s`).
//! A node then costs one exponential (a panel's taken together,
//! [`crate::math::exp::exp_in_place`]) and an interpolation instead of the
//! binomial sums: one tranche at 125 names prices in about 16 times the
//! large pool's time (`benches/pricing.rs`), against about 90 times with
//! the sums at every node. The table agrees with the sums evaluated at every node
//! ([`FinitePool::expected_min_direct`]) to 2e-12 on the grid above. Below
//! rho = 0.01 (`sigma < 0.1`) the direct evaluation is used: the Gaussian
//! is then narrower than the table's accuracy rewards.
//!
//! # The binomial sums
//!
//! `C` and `b` come from one pass of the recurrence
//! `P(Y = k + 1) = P(Y = k) (n - 1 - k) / (k + 1) · p / (1 - p)` from
//! `P(Y = 0) = (1 - p)^(n - 1)`, the ratios `(n - 1 - k) / (k + 1)` built
//! once per pool size, stopping early once the terms past the mode are
//! below 1e-18 of the sum. Where `(1 - p)^(n - 1)` would underflow (large
//! `n` or `p` near 1) the pass starts from `P(Y = m - 1)` in logarithms and
//! runs away from the mode, downwards for `C` below the mean or upwards
//! for `1 - C` above it.
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

use super::{BaseExpectation, BaseTranche, Cap, Correlation, Expectation, Horizon};
use crate::error::{Error, ErrorKind, Result};
use crate::math::exp::exp_in_place;
use crate::math::normal::{cdf as norm_cdf, pdf};
use gauss_quad::legendre::GaussLegendre;
use std::num::NonZeroUsize;
use std::sync::{Arc, Mutex, OnceLock};

/// Gauss-Legendre points per panel of the factor rule.
pub const NODES: usize = 14;

/// The factor is integrated over `[-Z_MAX, Z_MAX]` at most.
pub const Z_MAX: f64 = 7.0;

/// Where `|v| > V_MAX` the conditional default probability is within
/// `N(-V_MAX) = 1.3e-12` of 0 or 1, and the binomial is not evaluated.
pub const V_MAX: f64 = 7.0;

/// Exponentials taken together (one panel of the default rule).
const BATCH: usize = 16;
/// Table step in units of the rounded kink's width in `v`.
const TABLE_STEP: f64 = 0.02;
/// Largest table step.
const TABLE_STEP_MAX: f64 = 0.004;
/// Below this correlation the binomial sums are evaluated at every node.
const DIRECT_BELOW: f64 = 0.01;
/// Tables kept per pool (per unit and cap: the bases of a schedule).
const MAX_TABLES: usize = 64;

/// Kink breakpoints, in units of the binomial's spread `σ_k` in `z`.
const KINK: [f64; 3] = [-4.0, 0.0, 4.0];
/// Steep-part breakpoints, in units of `s = sqrt((1 - rho) / rho)`.
const STEEP: [f64; 2] = [-2.0, 2.0];
/// In v the steep part of p matters only where the Gaussian is wider than this.
const STEEP_FROM_SIGMA: f64 = 1.0;
/// Breakpoints for the normal density.
const DENSITY: [f64; 3] = [-3.0, 0.0, 3.0];
/// Most breakpoints: the ends and every kind above.
const MAX_POINTS: usize = 2 + KINK.len() + STEEP.len() + DENSITY.len();

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
/// binomial recurrence's ratios, the Gauss-Legendre rule, and the tables
/// of `f(N(v))` per base tranche (built on first use, shared by clones).
#[derive(Debug)]
pub struct FinitePool {
    names: usize,
    /// `(n - 1 - k) / (k + 1)`, k = 0 .. n - 2: ratios of binomial(n - 1, .) terms.
    ratios: Vec<f64>,
    /// `ln C(n - 1, k)`, k = 0 .. n - 1, for the logarithmic start.
    ln_choose: Vec<f64>,
    /// Gauss-Legendre nodes and weights on [-1, 1], `None` for the default rule.
    rule: Option<Vec<(f64, f64)>>,
    /// Smallest `1 - p` for which `(1 - p)^(n - 1)` stays above 1e-300.
    q_floor: f64,
    /// Tables of `F(v) = f(N(v))` per (unit, cap), built on first use.
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

/// `F(v) = E[min(D u, cap) | p = N(v)]` on a uniform grid of `v` in
/// `[-V_MAX, V_MAX]`, with `F'(v)` times the step, for cubic Hermite
/// interpolation. It depends on the pool, the unit and the cap only: not on
/// the horizon, nor on rho.
#[derive(Debug, Clone, PartialEq)]
struct Table {
    key: (u64, u64),
    top: f64,
    inv_step: f64,
    values: Vec<(f64, f64)>,
}

impl Table {
    /// `F(v)` and `F'(v)` by cubic Hermite interpolation.
    #[inline]
    fn at(&self, v: f64) -> (f64, f64) {
        let s = (v + V_MAX) * self.inv_step;
        let last = self.values.len() - 2;
        let i = (s.max(0.0) as usize).min(last);
        let t = s - i as f64;
        let (f0, d0) = self.values[i];
        let (f1, d1) = self.values[i + 1];
        // Hermite basis on [0, 1], derivatives already scaled by the step
        let t2 = t * t;
        let t3 = t2 * t;
        let f = (2.0 * t3 - 3.0 * t2 + 1.0) * f0
            + (t3 - 2.0 * t2 + t) * d0
            + (3.0 * t2 - 2.0 * t3) * f1
            + (t3 - t2) * d1;
        let df = (6.0 * (t2 - t)) * (f0 - f1)
            + (3.0 * t2 - 4.0 * t + 1.0) * d0
            + (3.0 * t2 - 2.0 * t) * d1;
        (f, df * self.inv_step)
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

    /// The same pool with `nodes` Gauss-Legendre points per panel instead
    /// of [`NODES`] (for convergence checks).
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
    /// See the module docs: `∫ f(p(z)) phi(z) dz` by composite
    /// Gauss-Legendre over the factor.
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
        if let Some(e) = self.edge(h, corr, unit, cap) {
            return e;
        }
        if corr.rho < DIRECT_BELOW {
            // the factor barely moves p: a narrow Gaussian in v, whose
            // rho-derivative through the weight magnifies table error
            return self.expected_min_direct(h, corr, unit, cap, kink);
        }
        let table = self.table(unit, cap, kink);
        self.integrate_table(h, corr, &table, kink)
    }

    /// [`Self::expected_min`] with the binomial sums evaluated afresh at
    /// every node of the rule in `z` (no table): the independent check of
    /// the tabulated `f(N(v))`, and the method the module docs derive.
    ///
    /// # Formula
    ///
    /// See the module docs.
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
    /// let (h, at, cap) = (Horizon::new(0.05)?, Correlation::new(0.3), Cap::new(0.05));
    /// let a = pool.expected_min(&h, &at, 0.6 / 125.0, 0.03, &cap);
    /// let b = pool.expected_min_direct(&h, &at, 0.6 / 125.0, 0.03, &cap);
    /// assert!((a.value - b.value).abs() < 1e-12);
    /// # Ok::<(), skewbook::Error>(())
    /// ```
    pub fn expected_min_direct(
        &self,
        h: &Horizon,
        corr: &Correlation,
        unit: f64,
        cap: f64,
        kink: &Cap,
    ) -> Expectation {
        let n = self.names;
        let nf = n as f64;
        let top = (nf * unit).min(cap);
        if cap <= 0.0 || unit <= 0.0 || h.pd <= 0.0 {
            return Expectation {
                value: 0.0,
                drho: 0.0,
            };
        }
        let m_real = (cap / unit).ceil();
        if m_real > nf {
            return Expectation {
                value: unit * nf * h.pd,
                drho: 0.0,
            };
        }
        let m = (m_real as usize).max(1);
        if h.pd >= 1.0 || n == 1 {
            // one name: min(D u, cap) = D min(u, cap) is linear in p
            if n == 1 {
                return Expectation {
                    value: h.pd * top,
                    drho: 0.0,
                };
            }
            return Expectation {
                value: top,
                drho: 0.0,
            };
        }
        let rho = corr.rho;
        if rho <= 0.0 {
            return self.at_zero_correlation(h, unit, cap, m);
        }
        if rho >= 1.0 {
            return Expectation {
                value: h.pd * top,
                drho: f64::NEG_INFINITY,
            };
        }
        let (sr, s1, c) = (corr.sr, corr.s1, h.c);
        let a0 = (c - s1 * V_MAX) / sr;
        let b0 = (c + s1 * V_MAX) / sr;
        let (a, b) = (a0.max(-Z_MAX), b0.min(Z_MAX));
        let mut value = top * norm_cdf(a0);
        let mut drho = 0.0;
        if a >= b {
            return Expectation { value, drho };
        }
        // breakpoints
        let mut pts = [0.0; MAX_POINTS];
        let mut np = 0;
        let mut push = |z: f64| {
            if z > a && z < b {
                pts[np] = z;
                np += 1;
            }
        };
        let s = s1 / sr;
        if kink.k > 0.0 && kink.k < 1.0 {
            let zk = (c - s1 * kink.g) / sr;
            let spread = s * (kink.k * (1.0 - kink.k) / nf).sqrt() / pdf(kink.g);
            for t in KINK {
                push(zk + t * spread);
            }
        }
        for t in STEEP {
            push(c / sr + t * s);
        }
        for z in DENSITY {
            push(z);
        }
        let mut all = [0.0; MAX_POINTS + 2];
        all[0] = a;
        all[1..=np].copy_from_slice(&pts[..np]);
        all[np + 1] = b;
        let all = &mut all[..np + 2];
        all.sort_unstable_by(f64::total_cmp);
        let rule = self.rule();
        let dscale = 1.0 / (2.0 * (1.0 - rho) * s1);
        let lead = cap - (m - 1) as f64 * unit;
        for w in all.windows(2) {
            let (lo, hi) = (w[0], w[1]);
            if hi - lo <= 1e-13 {
                continue;
            }
            let (mid, half) = (0.5 * (lo + hi), 0.5 * (hi - lo));
            let (mut sv, mut sd) = (0.0, 0.0);
            for &(x, wt) in rule {
                let z = mid + half * x;
                let v = (c - sr * z) / s1;
                let (p, q) = if v < 0.0 {
                    let p = norm_cdf(v);
                    (p, 1.0 - p)
                } else {
                    let q = norm_cdf(-v);
                    (1.0 - q, q)
                };
                let (cdf_below, at) = self.binomial(m - 1, p, q);
                let f = unit * nf * p * cdf_below + cap * (1.0 - cdf_below - q * at);
                let fp = nf * (unit * cdf_below + lead * at);
                let weight = wt * pdf(z);
                sv += weight * f;
                sd += weight * fp * pdf(v) * (c - z / sr);
            }
            value += half * sv;
            drho += half * sd * dscale;
        }
        Expectation { value, drho }
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

    /// The table of `F(v) = f(N(v))` for this unit and cap, built on first use.
    fn table(&self, unit: f64, cap: f64, kink: &Cap) -> Arc<Table> {
        let key = (unit.to_bits(), cap.to_bits());
        if let Some(t) = self.tables().iter().find(|t| t.key == key) {
            return Arc::clone(t);
        }
        let t = Arc::new(self.build_table(unit, cap, kink));
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

    fn build_table(&self, unit: f64, cap: f64, kink: &Cap) -> Table {
        let nf = self.names as f64;
        let m = ((cap / unit).ceil() as usize).clamp(1, self.names);
        // the rounded kink's width in v sets the step
        let width = if kink.k > 0.0 && kink.k < 1.0 {
            (kink.k * (1.0 - kink.k) / nf).sqrt() / pdf(kink.g)
        } else {
            1.0
        };
        let step = (width * TABLE_STEP).min(TABLE_STEP_MAX);
        let points = (2.0 * V_MAX / step).ceil() as usize + 1;
        let step = 2.0 * V_MAX / (points - 1) as f64;
        let lead = cap - (m - 1) as f64 * unit;
        let values = (0..points)
            .map(|i| {
                let v = -V_MAX + i as f64 * step;
                let (p, q) = if v < 0.0 {
                    let p = norm_cdf(v);
                    (p, 1.0 - p)
                } else {
                    let q = norm_cdf(-v);
                    (1.0 - q, q)
                };
                let (below, at) = self.binomial(m - 1, p, q);
                let f = unit * nf * p * below + cap * (1.0 - below - q * at);
                let fp = nf * (unit * below + lead * at);
                (f, fp * pdf(v) * step)
            })
            .collect();
        Table {
            key: (unit.to_bits(), cap.to_bits()),
            top: (nf * unit).min(cap),
            inv_step: 1.0 / step,
            values,
        }
    }

    /// `∫ F(v) phi((v - mu) / sigma) / sigma dv` and its derivative in rho
    /// `∫ F'(v) (mu' + sigma' (v - mu) / sigma) phi((v - mu) / sigma) / sigma dv`,
    /// `mu = c / sqrt(1 - rho)`, `sigma = sqrt(rho / (1 - rho))`: the
    /// factor integral in the variable `v = (c - sqrt(rho) z) / sqrt(1 - rho)`
    /// (`v = mu - sigma z`; `F` is constant beyond `V_MAX`, so no boundary term).
    fn integrate_table(
        &self,
        h: &Horizon,
        corr: &Correlation,
        table: &Table,
        kink: &Cap,
    ) -> Expectation {
        let (sr, s1, c) = (corr.sr, corr.s1, h.c);
        let mu = c / s1;
        let sigma = sr / s1;
        let dmu = c / (2.0 * s1 * s1 * s1);
        let dsigma = 1.0 / (2.0 * sr * s1 * s1 * s1);
        // every name has defaulted beyond V_MAX: the top value, in closed form
        let y_top = (mu - V_MAX) / sigma;
        let mut value = table.top * norm_cdf(y_top);
        let mut drho = 0.0;
        let a = (-V_MAX).max(mu - Z_MAX * sigma);
        let b = V_MAX.min(mu + Z_MAX * sigma);
        if a >= b {
            return Expectation { value, drho };
        }
        let mut pts = [0.0; MAX_POINTS];
        let mut np = 0;
        let mut push = |v: f64| {
            if v > a && v < b {
                pts[np] = v;
                np += 1;
            }
        };
        if kink.k > 0.0 && kink.k < 1.0 {
            let spread = (kink.k * (1.0 - kink.k) / self.names as f64).sqrt() / pdf(kink.g);
            for t in KINK {
                push(kink.g + t * spread);
            }
        }
        // the steep part of p in z (z* ± 2 s) is v = ∓2; the density's
        // breakpoints z = -3, 0, 3 are v = mu + 3 sigma, mu, mu - 3 sigma
        if sigma > STEEP_FROM_SIGMA {
            for t in STEEP {
                push(t);
            }
        }
        for t in DENSITY {
            push(mu - t * sigma);
        }
        let mut all = [0.0; MAX_POINTS + 2];
        all[0] = a;
        all[1..=np].copy_from_slice(&pts[..np]);
        all[np + 1] = b;
        let all = &mut all[..np + 2];
        all.sort_unstable_by(f64::total_cmp);
        let rule = self.rule();
        let norm = crate::math::normal::INV_SQRT_2PI / sigma;
        for w in all.windows(2) {
            let (lo, hi) = (w[0], w[1]);
            if hi - lo <= 1e-13 {
                continue;
            }
            let (mid, half) = (0.5 * (lo + hi), 0.5 * (hi - lo));
            let (mut sv, mut sd) = (0.0, 0.0);
            // the Gaussian weights of a panel in one batch of exponentials
            for chunk in rule.chunks(BATCH) {
                let mut ys = [0.0; BATCH];
                let mut ex = [0.0; BATCH];
                for ((&(x, _), y), e) in chunk.iter().zip(&mut ys).zip(&mut ex) {
                    *y = (mid + half * x - mu) / sigma;
                    *e = -0.5 * *y * *y;
                }
                exp_in_place(&mut ex[..chunk.len()]);
                for ((&(x, wt), &y), &e) in chunk.iter().zip(&ys).zip(&ex) {
                    let g = wt * norm * e;
                    let (f, df) = table.at(mid + half * x);
                    sv += g * f;
                    sd += g * df * (dmu + dsigma * y);
                }
            }
            value += half * sv;
            drho += half * sd;
        }
        Expectation { value, drho }
    }

    /// `(P(Y <= j - 1), P(Y = j))` for `Y ~ binomial(n - 1, p)`, `q = 1 - p`.
    #[inline]
    fn binomial(&self, j: usize, p: f64, q: f64) -> (f64, f64) {
        let n1 = self.names - 1;
        if j > n1 {
            return (1.0, 0.0);
        }
        if p <= 0.0 {
            return (
                if j == 0 { 0.0 } else { 1.0 },
                if j == 0 { 1.0 } else { 0.0 },
            );
        }
        if q <= 0.0 {
            return (0.0, if j == n1 { 1.0 } else { 0.0 });
        }
        if q > self.q_floor {
            // forward from P(Y = 0), no logarithm needed when n1 is small
            let mut t = q.powi(n1 as i32);
            let ratio = p / q;
            // past the mode the terms only fall: check for an early stop there
            let mode = (((n1 as f64 + 1.0) * p) as usize).min(j);
            let mut sum = 0.0;
            for &r in &self.ratios[..mode] {
                sum += t;
                t *= r * ratio;
            }
            for &r in &self.ratios[mode..j] {
                sum += t;
                t *= r * ratio;
                if t < 1e-18 * sum {
                    return (sum, 0.0);
                }
            }
            return (sum, t);
        }
        self.binomial_from_logs(j, p, q)
    }

    /// [`Self::binomial`] starting at `P(Y = j)` in logarithms and summing
    /// away from the mode (no underflow for large pools).
    fn binomial_from_logs(&self, j: usize, p: f64, q: f64) -> (f64, f64) {
        let n1 = self.names - 1;
        let at = (self.ln_choose[j] + j as f64 * p.ln() + (n1 - j) as f64 * q.ln()).exp();
        let mean = n1 as f64 * p;
        if (j as f64) <= mean {
            // P(Y <= j - 1), terms falling downwards from j
            let mut t = at;
            let mut sum = 0.0;
            for k in (1..=j).rev() {
                t *= k as f64 / (n1 - k + 1) as f64 * (q / p);
                sum += t;
                if t < 1e-18 * sum || t == 0.0 {
                    break;
                }
            }
            (sum, at)
        } else {
            // 1 - P(Y >= j), terms falling upwards from j
            let mut t = at;
            let mut upper = at;
            for k in j..n1 {
                t *= (n1 - k) as f64 / (k + 1) as f64 * (p / q);
                upper += t;
                if t < 1e-18 * upper || t == 0.0 {
                    break;
                }
            }
            ((1.0 - upper).max(0.0), at)
        }
    }

    /// rho = 0: every name defaults independently with probability PD.
    fn at_zero_correlation(&self, h: &Horizon, unit: f64, cap: f64, m: usize) -> Expectation {
        let nf = self.names as f64;
        let (p, q) = (h.pd, 1.0 - h.pd);
        let (cdf_below, at) = self.binomial(m - 1, p, q);
        let value = unit * nf * p * cdf_below + cap * (1.0 - cdf_below - q * at);
        // f''(p) = n (n - 1) [(cap - m u) P(W = m - 2) + ((m - 1) u - cap) P(W = m - 1)],
        // W ~ binomial(n - 2, p); d/drho at 0 = f''(PD) phi(c)^2 / 2.
        let drho = if self.names >= 2 {
            let n2 = self.names - 2;
            let pmf = |k: isize| -> f64 {
                if k < 0 || k as usize > n2 {
                    return 0.0;
                }
                let k = k as usize;
                let lg = |x: usize| libm::lgamma(x as f64 + 1.0);
                (lg(n2) - lg(k) - lg(n2 - k) + k as f64 * p.ln() + (n2 - k) as f64 * q.ln()).exp()
            };
            let mi = m as isize;
            let second = nf
                * (nf - 1.0)
                * ((cap - m as f64 * unit) * pmf(mi - 2)
                    + ((m - 1) as f64 * unit - cap) * pmf(mi - 1));
            0.5 * second * pdf(h.c).powi(2)
        } else {
            0.0
        };
        Expectation { value, drho }
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
        let nf = pool.names as f64;
        let (r, k) = (self.recovery, self.detach);
        let lgd = 1.0 - r;
        let zero = Expectation {
            value: 0.0,
            drho: 0.0,
        };
        let loss = if lgd > 0.0 && k > 0.0 {
            pool.expected_min(h, corr, lgd / nf, k, &self.loss_cap)
        } else {
            zero
        };
        let capped_rec = if r > 0.0 && k < 1.0 {
            pool.expected_min(h, corr, r / nf, 1.0 - k, &self.recovery_cap)
        } else {
            zero
        };
        let amortised = r * h.pd - capped_rec.value;
        BaseExpectation {
            loss: loss.value,
            outstanding: k - loss.value - amortised,
            dloss_drho: loss.drho,
            doutstanding_drho: capped_rec.drho - loss.drho,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// `P(Y <= j - 1)` and `P(Y = j)` by a direct sum of
    /// `exp(ln C(n1, k) + k ln p + (n1 - k) ln q)`: the recurrence, its
    /// early stop and the logarithmic start against the textbook formula.
    #[test]
    fn binomial_sums_against_direct_terms() {
        for (names, p) in [
            (2usize, 0.3),
            (125, 0.05),
            (125, 0.6),
            (125, 0.999),
            (10_000, 0.3),
            (10_000, 1e-5),
        ] {
            let pool = FinitePool::new(names).unwrap();
            let n1 = names - 1;
            let lg = |x: usize| libm::lgamma(x as f64 + 1.0);
            let term = |k: usize| {
                (lg(n1) - lg(k) - lg(n1 - k)
                    + k as f64 * f64::ln(p)
                    + (n1 - k) as f64 * f64::ln(1.0 - p))
                .exp()
            };
            // ln C(n1, k) from lgamma carries about 1e-16 * n1 of absolute
            // error in the exponent, so the terms themselves are only good
            // to a few 1e-12 at 10,000 names
            let tol = if names > 1000 { 5e-11 } else { 1e-13 };
            for j in [0, 1, n1 / 7, n1 / 3, n1 / 2, n1] {
                let below: f64 = (0..j).map(term).sum();
                let (c, b) = pool.binomial(j, p, 1.0 - p);
                assert!((c - below).abs() < tol, "{names} {p} {j}: {c} vs {below}");
                assert!(
                    (b - term(j)).abs() < tol,
                    "{names} {p} {j}: {b} vs {}",
                    term(j)
                );
                let (c, b) = pool.binomial_from_logs(j, p, 1.0 - p);
                assert!((c - below).abs() < tol && (b - term(j)).abs() < tol);
            }
        }
    }
}
