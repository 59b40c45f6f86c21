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

use crate::error::{Error, ErrorKind, Result};

/// Checks confidence levels (fractions; the command line checks its
/// percentages first): each in (0, 1), none repeated (a repeated level
/// would repeat a column).
///
/// # Errors
/// [`ErrorKind::Usage`] naming the offending level.
pub fn check_levels(levels: &[f64]) -> Result<()> {
    for (i, &q) in levels.iter().enumerate() {
        if !(q > 0.0 && q < 1.0) {
            return Err(Error::msg(
                ErrorKind::Usage,
                format!(
                    "confidence level: expected a fraction in (0, 1), found {}",
                    crate::error::significant(q, 6)
                ),
            ));
        }
        if levels[..i].contains(&q) {
            return Err(Error::msg(
                ErrorKind::Usage,
                format!(
                    "confidence levels: expected each level once, found {} twice",
                    crate::error::significant(q, 6)
                ),
            ));
        }
    }
    Ok(())
}
