//! The standard normal distribution at full double precision.
//!
//! Tails are computed directly (`N(-x)` through `erfc`), never as `1 - N(x)`.
//!
//! # statrs' erfc is not full precision
//!
//! statrs 0.18's `erfc` is off by up to about 1e-10 relative, too coarse for
//! the 1e-10 agreements this crate promises; [`cdf`] uses the full-precision
//! `erfc` carried beside the bivariate normal ([`super::bvn::norm_cdf`]).
//! The inverse uses statrs' `erfc_inv`.

use statrs::function::erf::erfc_inv;
use std::f64::consts::SQRT_2;

/// 1 / sqrt(2 pi).
pub const INV_SQRT_2PI: f64 = 0.398_942_280_401_432_7;

/// Standard normal density phi(x).
pub fn pdf(x: f64) -> f64 {
    INV_SQRT_2PI * (-0.5 * x * x).exp()
}

/// Standard normal CDF N(x) = erfc(-x / sqrt 2) / 2, accurate in both tails.
pub fn cdf(x: f64) -> f64 {
    super::bvn::norm_cdf(x)
}

/// Inverse standard normal CDF G(p) for p in [0, 1]; -inf at 0, +inf at 1.
pub fn inv_cdf(p: f64) -> f64 {
    if p <= 0.0 {
        return f64::NEG_INFINITY;
    }
    if p >= 1.0 {
        return f64::INFINITY;
    }
    -SQRT_2 * erfc_inv(2.0 * p)
}
