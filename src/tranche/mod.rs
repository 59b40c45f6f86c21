//! Tranche legs and prices in the large homogeneous pool.
//!
//! A tranche [A, D] is the difference of two base tranches [0, D] and
//! [0, A], each valued in pool-notional units; per unit of tranche notional
//! divide by the width W = D - A. Compound correlation values both bases at
//! one correlation; base correlation values each at its own.
//!
//! - [`bounds`]: the tranche itself ([`Tranche`]), checked once;
//! - [`legs`]: the rho-independent schedule data of one pool and maturity
//!   ([`TrancheSchedule`]) and base-tranche legs with their derivatives in rho;
//! - [`price`]: tranche legs, value to the protection buyer and model quotes.

pub mod bounds;
pub mod legs;
pub mod price;

pub use bounds::Tranche;
pub use legs::{BaseLegs, TrancheSchedule};
pub use price::{TrancheLegs, TrancheValuer};
