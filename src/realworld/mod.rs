//! Real-world calibration from default histories.
//!
//! - [`estimators`]: PD and asset correlation from a default history, five
//!   ways, each with standard errors and 95 % intervals;
//! - [`vasicek`]: the large-pool default-rate / loss distribution (CDF,
//!   density, quantiles, expected shortfall) and the two-quantile inversion;
//! - [`irb`]: the Basel II IRB corporate capital formula as a reference figure.

pub mod estimators;
pub mod irb;
pub mod vasicek;
