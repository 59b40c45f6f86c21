//! The correlation surface of one trade date and its arbitrage diagnostics.
//!
//! - [`skew`]: the [`Surface`] built from a date's base-correlation curves,
//!   rho(K, T) across detachment (a named interpolation) and maturity
//!   (linear in curve time), flat outside, with extrapolation reported;
//! - [`diagnostics`]: base expected loss on a detachment grid, the implied
//!   exceedance curve (tranchelet expected loss) and the no-arbitrage checks
//!   in detachment and in maturity.

pub mod diagnostics;
pub mod skew;

pub use diagnostics::{diagnose, MaturityDiagnostics};
pub use skew::{Lookup, MaturitySkew, Surface};
