//! The factor integral by composite Gauss-Legendre in `z`, the binomial
//! sums evaluated at every node: the independent check of the tabulated
//! rule ([`super::table`]) and the rule at small correlation.
//!
//! # Panels
//!
//! The integrand `f(p(z)) phi(z)` is smooth but has three length scales:
//! the normal density (1 in `z`), the steep part of `p` (width
//! `s = sqrt((1 - rho) / rho)` around `z* = c / sqrt(rho)`, 0.01 at
//! rho = 0.9999), and the rounded kink where the expected default count
//! crosses the cap: `p = k = cap / (n u)` at
//! `z_k = (c - sqrt(1 - rho) G(k)) / sqrt(rho)`, rounded over
//! `σ_k = s sqrt(k (1 - k) / n) / phi(G(k))` (the binomial's spread in `p`,
//! carried to `z`; it shrinks as `1 / sqrt(n)` towards the large pool's
//! kink). The rule runs on
//! `[a, b] = [max(-8.5, z(v = 8.5)), min(8.5, z(v = -8.5))]`, the range
//! where `p` is neither below `N(-8.5) = 1e-17` nor above `1 - 1e-17` and
//! the density not below `phi(8.5)`, with panels broken at `z_k` and
//! `z_k ± 4 σ_k`, at `z* ± 2 s`, and at `z = -3, 0, 3`, where inside
//! `(a, b)`: at most 9 panels of [`super::NODES`] = 20 points. Left of `a`
//! every name has defaulted (`f = min(n u, cap)`, added in closed form as
//! `min(n u, cap) N(a)`); right of `b` none has. The truncation costs below
//! 1e-16. With 14 points a panel (and the range `±7`) the rule was within
//! 1e-11 of itself with 28 points on the grid of the module docs; with 20
//! points it is within 3e-14, which makes it a check of the tabulated rule
//! at the 1e-12 level. The derivative in rho
//! is taken under the integral (module docs).

use super::binomial::probabilities;
use super::{FinitePool, V_MAX, Z_MAX};
use crate::loss::{Cap, Correlation, Expectation, Horizon};
use crate::math::normal::{cdf as norm_cdf, pdf};

/// Kink breakpoints, in units of the binomial's spread `σ_k` in `z`.
const KINK: [f64; 3] = [-4.0, 0.0, 4.0];
/// Steep-part breakpoints, in units of `s = sqrt((1 - rho) / rho)`.
const STEEP: [f64; 2] = [-2.0, 2.0];
/// Breakpoints for the normal density.
const DENSITY: [f64; 3] = [-3.0, 0.0, 3.0];
/// Most breakpoints: the ends and every kind above.
const MAX_POINTS: usize = 2 + KINK.len() + STEEP.len() + DENSITY.len();

impl FinitePool {
    /// [`Self::expected_min`] with the binomial sums evaluated afresh at
    /// every node of composite Gauss-Legendre panels in the factor `z` (no
    /// table): the independent check of the tabulated rule, and the rule
    /// below rho = 0.01.
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
                let (p, q) = probabilities(v);
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
}
