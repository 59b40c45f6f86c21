//! Special functions (the normal distribution and the bivariate normal CDF)
//! and interpolation of the skew.

pub mod bvn;
pub mod interp;
pub mod normal;
