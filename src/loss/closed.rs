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

use super::{edge_drho, edge_value, Cap, Correlation, Expectation, Horizon};
use crate::math::bvn::Tails;
use crate::math::erfc;
use crate::math::exp::{exp, exp_in_place};
use crate::math::normal::INV_SQRT_2PI;
use std::f64::consts::FRAC_1_SQRT_2;

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
    expectation_at(h, cap, corr).value
}

/// [`value_at`] and [`drho_at`] together: the pricer's inner loop. They
/// share the kink `A`; the bivariate normal gets `N(±c)` from the horizon
/// and `N(±A)` from one complementary error function, so a call costs the
/// bivariate normal's node sum, one `erfc` and one exponential.
///
/// # Formula
///
/// ```text
/// A = (c - sqrt(1 - rho) G(k)) / sqrt(rho)
/// E[min(p, k)] = Phi2(c, -A; -sqrt(rho)) + k N(A)
/// d/drho       = -phi(A) phi(G(k)) / (2 sqrt(rho (1 - rho)))
/// ```
///
/// `N(A)` and `N(-A)` come from one `erfc(|A| / sqrt 2)`: the smaller
/// directly, the larger as its complement (absolute error below 1.2e-16,
/// the bivariate normal's own).
///
/// # References
///
/// Vasicek (2002), "Loan portfolio value", Risk 15(12); Genz (2004) for
/// `Phi2`.
///
/// # Example
///
/// ```
/// use skewbook::loss::{closed, Cap, Correlation, Horizon};
/// let (h, cap, at) = (Horizon::new(0.05)?, Cap::new(0.05), Correlation::new(0.3));
/// let e = closed::expectation_at(&h, &cap, &at);
/// assert_eq!(e.drho, closed::drho_at(&h, &cap, &at));
/// assert!((e.value - closed::value(&h, &cap, 0.3)).abs() < 1e-16);
/// # Ok::<(), skewbook::Error>(())
/// ```
#[inline]
pub fn expectation_at(h: &Horizon, cap: &Cap, corr: &Correlation) -> Expectation {
    if let Some(value) = edge_value(h, cap, corr.rho) {
        let drho = edge_drho(h, cap, corr.rho).unwrap_or(0.0);
        return Expectation { value, drho };
    }
    let a = (h.c - corr.s1 * cap.g) / corr.sr;
    let m = if corr.bvn.needs_nodes(h.c, -a) {
        corr.bvn.exponentials()
    } else {
        0
    };
    // A buffer just long enough (the angle form's fits the small one).
    if m + 3 <= 24 {
        with_exponentials(h, cap, corr, a, m, &mut [0.0; 24])
    } else {
        with_exponentials(h, cap, corr, a, m, &mut [0.0; 48])
    }
}

/// [`expectation_at`] away from the edges, with a scratch buffer `e` for
/// the horizon's exponentials (`m` of the node sum, then three).
#[inline(always)]
fn with_exponentials(
    h: &Horizon,
    cap: &Cap,
    corr: &Correlation,
    a: f64,
    m: usize,
    e: &mut [f64],
) -> Expectation {
    // Every exponential of this horizon in one SIMD batch: the bivariate
    // normal's node sum, phi(A), and erfc(|A| / sqrt 2)'s two; padded with
    // zeros to whole lanes.
    if m > 0 {
        corr.bvn.cdf_exponents(h.c, -a, &mut e[..m]);
    }
    let tail = erfc::prepare(a.abs() * FRAC_1_SQRT_2);
    let [t0, t1] = tail.exponents();
    (e[m], e[m + 1], e[m + 2]) = (-0.5 * a * a, t0, t1);
    let used = (m + 3).next_multiple_of(4);
    exp_in_place(&mut e[..used]);
    // N(-|A|) directly; N(|A|) as its complement.
    let small = 0.5 * tail.finish([e[m + 1], e[m + 2]]);
    let (n_a, n_minus_a) = if a >= 0.0 {
        (1.0 - small, small)
    } else {
        (small, 1.0 - small)
    };
    let tails = Tails {
        h: h.n_c.0,
        minus_h: h.n_c.1,
        k: n_minus_a,
        minus_k: n_a,
    };
    let value = corr.bvn.cdf_from(h.c, -a, &e[..m], &tails) + cap.k * n_a;
    let num = INV_SQRT_2PI * e[m] * cap.phi_g;
    let drho = if num == 0.0 {
        0.0
    } else {
        -num / corr.two_sr_s1
    };
    Expectation { value, drho }
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
    let num = INV_SQRT_2PI * exp(-0.5 * a * a) * cap.phi_g;
    if num == 0.0 {
        return 0.0;
    }
    -num / (2.0 * sr * s1)
}
