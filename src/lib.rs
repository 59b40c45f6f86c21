//! # skewbook
//!
//! Implied tranche correlation from credit index and tranche quotes, and
//! real-world PD and asset correlation from default histories.
//!
//! The pricing contract (units, dates, curves, legs) is the project's
//! conventions document; the README states it in brief. In short:
//!
//! - the pool's hazard curve is piecewise constant, bootstrapped from index
//!   quotes ([`curve::hazard`]);
//! - tranches are priced in the large homogeneous pool with the Vasicek
//!   one-factor Gaussian factor ([`loss`], [`tranche`]);
//! - compound correlation (every root per tranche) and base correlation
//!   (bootstrapped bottom-up per maturity) are backed out of quotes
//!   ([`solve`]);
//! - [`realworld`] calibrates PD and asset correlation from default histories.
//!
//! Inside the library every rate, spread, probability and bound is a
//! fraction; conversion from bp and percent happens once, in [`input`].
#![deny(missing_docs)]

pub mod curve;
pub mod dates;
pub mod error;
pub mod input;
pub mod loss;
pub mod market;
pub mod math;
pub mod output;
pub mod realworld;
pub mod report;
pub mod solve;
pub mod tranche;

pub use error::{Error, ErrorKind, Result};
