//! Root finding, compound and base correlation.
//!
//! - [`root`]: the stopping rule ([`root::Tolerance`]) kept apart from the
//!   solvers, and what a solve returns ([`root::Solution`]);
//! - [`compound`]: every root of a tranche's value in correlation;
//! - [`base`]: the base-correlation bootstrap per maturity.

pub mod base;
pub mod compound;
pub mod root;
