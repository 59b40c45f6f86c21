//! Bivariate normal CDF.
