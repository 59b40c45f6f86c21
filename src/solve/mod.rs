//! Correlations implied by quotes.
//!
//! - [`compound`]: every root of a tranche's value in one flat correlation;
//! - [`base`]: one base-correlation solve given the correlation below;
//! - [`chain`]: a date's implied correlations as data: compound roots per
//!   tranche and the base-correlation curve per maturity, bottom-up, with
//!   where and why a chain broke.
//!
//! The root finders themselves are in [`crate::math::root`].

pub mod base;
pub mod chain;
pub mod compound;

pub use chain::{implied_date, BaseCurve, BaseOutcome, DateImplied, Knot, TrancheImplied};
