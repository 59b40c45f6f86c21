//! Numerical building blocks: the normal distribution, the bivariate normal
//! CDF, root finders with their stopping rules, and interpolation.
//!
//! - [`normal`]: the normal CDF, density and inverse;
//! - [`bvn`]: the bivariate normal CDF (Genz 2004);
//! - [`exp`]: a branch-free exponential whose loops vectorise (the
//!   bivariate normal's node sums), and [`erfc`], the complementary error
//!   function around its exponentials so they join such a batch;
//! - [`root`]: the stopping rule ([`root::Tolerance`]) kept apart from the
//!   solvers (Brent, bracketed Newton), and what a solve returns;
//! - [`interp`]: knot interpolation (linear, monotone cubic), isotonic
//!   regression and a shape-preserving concave spline;
//! - [`monotone_convex`]: a rising concave curve whose slope is
//!   interpolated by the monotone convex method (Hagan and West 2006), for
//!   base expected loss.

pub mod bvn;
pub mod erfc;
pub mod exp;
pub mod interp;
pub mod monotone_convex;
pub mod normal;
pub mod root;
