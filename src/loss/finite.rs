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
//! 10 points per panel stall near 3e-9 and 12 near 1e-10.
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
use crate::math::normal::{cdf as norm_cdf, pdf};
use gauss_quad::legendre::GaussLegendre;
use std::num::NonZeroUsize;
use std::sync::OnceLock;

/// Gauss-Legendre points per panel of the factor rule.
pub const NODES: usize = 14;

/// The factor is integrated over `[-Z_MAX, Z_MAX]` at most.
pub const Z_MAX: f64 = 7.0;

/// Where `|v| > V_MAX` the conditional default probability is within
/// `N(-V_MAX) = 1.3e-12` of 0 or 1, and the binomial is not evaluated.
pub const V_MAX: f64 = 7.0;

/// Kink breakpoints, in units of the binomial's spread `σ_k` in `z`.
const KINK: [f64; 3] = [-4.0, 0.0, 4.0];
/// Steep-part breakpoints, in units of `s = sqrt((1 - rho) / rho)`.
const STEEP: [f64; 2] = [-2.0, 2.0];
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
/// binomial recurrence's ratios and the Gauss-Legendre rule.
#[derive(Debug, Clone, PartialEq)]
pub struct FinitePool {
    names: usize,
    /// `(n - 1 - k) / (k + 1)`, k = 0 .. n - 2: ratios of binomial(n - 1, .) terms.
    ratios: Vec<f64>,
    /// `ln C(n - 1, k)`, k = 0 .. n - 1, for the logarithmic start.
    ln_choose: Vec<f64>,
    /// Gauss-Legendre nodes and weights on [-1, 1], `None` for the default rule.
    rule: Option<Vec<(f64, f64)>>,
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
        Ok(FinitePool {
            names,
            ratios,
            ln_choose,
            rule: None,
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
        let ln_q = n1 as f64 * q.ln();
        if ln_q > -700.0 {
            // forward from P(Y = 0), no logarithm needed when n1 is small
            let mut t = q.powi(n1 as i32);
            let ratio = p / q;
            let mode = (n1 as f64 + 1.0) * p;
            let mut sum = 0.0;
            for k in 0..j {
                sum += t;
                t *= self.ratios[k] * ratio;
                if (k as f64) > mode && t < 1e-18 * sum {
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
