//! The one integration-test binary; each module is one area.

/// Bivariate normal CDF: mpmath fixture and identities.
mod bvn;

/// Large homogeneous pool expectations: closed form, quadrature, finite pool,
/// Monte Carlo.
mod lhp;
