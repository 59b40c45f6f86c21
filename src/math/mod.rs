//! Numerical building blocks: the normal distribution, the bivariate normal
//! CDF, and root finders with their stopping rules.
//!
//! - [`normal`]: the normal CDF, density and inverse;
//! - [`bvn`]: the bivariate normal CDF (Genz 2004);
//! - [`root`]: the stopping rule ([`root::Tolerance`]) kept apart from the
//!   solvers (Brent, bracketed Newton), and what a solve returns.

pub mod bvn;
pub mod normal;
pub mod root;
