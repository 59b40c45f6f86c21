//! Special functions: the normal distribution and the bivariate normal CDF.

pub mod bvn;
pub mod normal;
