//! The correlation surface of one trade date and its arbitrage diagnostics.
//!
//! - [`skew`]: the [`Surface`] built from a date's base-correlation curves,
//!   rho(K, T) across detachment (a named interpolation) and maturity
//!   (linear in curve time), flat outside, with extrapolation reported;
//! - [`diagnostics`]: base expected loss on a detachment grid, the implied
//!   exceedance curve (tranchelet expected loss) and the no-arbitrage checks
//!   in detachment and in maturity;
//! - [`expected_loss`]: the `expected-loss` interpolation, base expected
//!   loss interpolated by a rising concave spline (repaired to the nearest
//!   admissible knot values when the quotes allow none), and the
//!   correlation read back off it;
//! - [`reprice`]: every quoted tranche priced back off the surface.

pub mod diagnostics;
pub mod expected_loss;
pub mod reprice;
pub mod skew;

pub use diagnostics::{diagnose, MaturityDiagnostics};
pub use skew::{Lookup, MaturitySkew, Surface};
