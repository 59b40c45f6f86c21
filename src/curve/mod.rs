//! Discount and pool hazard curves.
//!
//! Both are piecewise-flat in their instantaneous rate (forward rate for the
//! discount curve, hazard rate for the pool), so every leg integral has a
//! closed form on each sub-interval where both are constant:
//!
//! - [`piecewise`]: the shared piecewise-constant rate with its integral;
//! - [`discount`]: zero pillars (or a flat rate) to discount factors;
//! - [`hazard`]: the pool hazard curve and its bootstrap from index quotes;
//! - [`legs`]: index protection and premium legs integrated exactly;
//! - [`pool`]: a pool on one trade date (recovery, curves, quotes) and its bumps.

pub mod discount;
pub mod hazard;
pub mod legs;
pub mod piecewise;
pub mod pool;

pub use discount::DiscountCurve;
pub use hazard::{bootstrap, HazardCurve, Pillar};
pub use pool::{MarketOptions, Pool, PoolBump};
