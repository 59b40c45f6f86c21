//! `E[min(p(Z), k)]` in closed form with the bivariate normal CDF.
//!
//! # Derivation
//!
//! `p(Z) > k` exactly when `Z < A = (c - sqrt(1 - rho) G(k)) / sqrt(rho)`,
//! so `E[min(p, k)] = k N(A) + E[p(Z) 1{Z > A}]`. With
//! `p(Z) = P(sqrt(rho) Z + sqrt(1 - rho) e <= c | Z)`, the second term is
//! `P(Y <= c, -Z < -A)` for `Y = sqrt(rho) Z + sqrt(1 - rho) e`, whose
//! correlation with `-Z` is `-sqrt(rho)`: `Phi2(c, -A; -sqrt(rho))`.
//! Differentiating under the integral (the kink term vanishes because
//! `p(A) = k`) gives the derivative in `rho`.

use super::{edge_drho, edge_value, Cap, Correlation, Horizon};
use crate::math::normal::cdf as norm_cdf;
use crate::math::normal::pdf;

/// `E[min(p(Z), k)]` by the closed form.
///
/// `rho` is clamped to `[0, 1]`; the edge cases are those of the module
/// [`crate::loss`] docs. Cost: one bivariate normal, one normal CDF; no
/// inverse normal (both thresholds come precomputed in `h` and `cap`).
///
/// # Formula
///
/// ```text
/// A = (c - sqrt(1 - rho) G(k)) / sqrt(rho)
/// E[min(p, k)] = Phi2(c, -A; -sqrt(rho)) + k N(A)      (0 < k < 1)
///              = PD                                     (k >= 1)
/// ```
///
/// # References
///
/// Vasicek (2002), "Loan portfolio value", Risk 15(12) (the distribution
/// of `p`); Genz (2004) for `Phi2`.
///
/// # Example
///
/// At `rho = 1` the pool defaults entirely with probability PD:
/// `E[min(p, k)] = k PD`.
///
/// ```
/// use skewbook::loss::{closed, Cap, Horizon};
/// let h = Horizon::new(0.05)?;
/// assert!((closed::value(&h, &Cap::new(0.2), 1.0) - 0.01).abs() < 1e-17);
/// # Ok::<(), skewbook::Error>(())
/// ```
#[inline]
pub fn value(h: &Horizon, cap: &Cap, rho: f64) -> f64 {
    value_at(h, cap, &Correlation::new(rho))
}

/// [`value`] at a precomputed [`Correlation`]: the form to use when many
/// horizons and caps are valued at one correlation (no square roots, no
/// trigonometry, no inverse normal per call).
///
/// # Formula
///
/// See [`value`].
///
/// # References
///
/// Vasicek (2002), "Loan portfolio value", Risk 15(12).
///
/// # Example
///
/// ```
/// use skewbook::loss::{closed, Cap, Correlation, Horizon};
/// let (h, cap) = (Horizon::new(0.05)?, Cap::new(0.05));
/// let at = Correlation::new(0.3);
/// assert_eq!(closed::value_at(&h, &cap, &at), closed::value(&h, &cap, 0.3));
/// # Ok::<(), skewbook::Error>(())
/// ```
#[inline]
pub fn value_at(h: &Horizon, cap: &Cap, corr: &Correlation) -> f64 {
    if let Some(v) = edge_value(h, cap, corr.rho) {
        return v;
    }
    let a = (h.c - corr.s1 * cap.g) / corr.sr;
    corr.bvn.cdf(h.c, -a) + cap.k * norm_cdf(a)
}

/// `d E[min(p(Z), k)] / d rho` by the closed form.
///
/// `-inf` at `rho = 1` and at `rho = 0` when `c = G(k)`, where the true
/// derivative diverges; 0 where the expectation does not depend on `rho`.
///
/// # Formula
///
/// ```text
/// d/drho E[min(p, k)] = -phi(A) phi(G(k)) / (2 sqrt(rho (1 - rho)))
/// ```
///
/// # References
///
/// Differentiation of the closed form under the factor integral; the
/// reference sheet's high-precision check (central difference, ~1e-11).
///
/// # Example
///
/// With `k >= 1` the expectation is PD for every rho:
///
/// ```
/// use skewbook::loss::{closed, Cap, Horizon};
/// let h = Horizon::new(0.05)?;
/// assert_eq!(closed::drho(&h, &Cap::new(1.0), 0.3), 0.0);
/// # Ok::<(), skewbook::Error>(())
/// ```
#[inline]
pub fn drho(h: &Horizon, cap: &Cap, rho: f64) -> f64 {
    let rho = rho.clamp(0.0, 1.0);
    drho_roots(h, cap, rho, rho.sqrt(), (1.0 - rho).sqrt())
}

/// [`drho`] at a precomputed [`Correlation`].
///
/// # Formula
///
/// See [`drho`].
///
/// # References
///
/// Vasicek (2002), "Loan portfolio value", Risk 15(12).
///
/// # Example
///
/// ```
/// use skewbook::loss::{closed, Cap, Correlation, Horizon};
/// let (h, cap) = (Horizon::new(0.05)?, Cap::new(0.05));
/// assert_eq!(closed::drho_at(&h, &cap, &Correlation::new(0.3)), closed::drho(&h, &cap, 0.3));
/// # Ok::<(), skewbook::Error>(())
/// ```
#[inline]
pub fn drho_at(h: &Horizon, cap: &Cap, corr: &Correlation) -> f64 {
    drho_roots(h, cap, corr.rho, corr.sr, corr.s1)
}

fn drho_roots(h: &Horizon, cap: &Cap, rho: f64, sr: f64, s1: f64) -> f64 {
    if let Some(d) = edge_drho(h, cap, rho) {
        return d;
    }
    let a = (h.c - s1 * cap.g) / sr;
    let num = pdf(a) * pdf(cap.g);
    if num == 0.0 {
        return 0.0;
    }
    -num / (2.0 * sr * s1)
}
