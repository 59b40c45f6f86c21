//! The correlation surface of one trade date and its arbitrage diagnostics.
//!
//! - [`skew`]: the [`Surface`] built from a date's base-correlation curves,
//!   rho(K, T) across detachment (a named interpolation) and maturity
//!   (linear in curve time), flat outside, with extrapolation reported;
//! - [`diagnostics`]: base expected loss on a detachment grid, the implied
//!   exceedance curve (tranchelet expected loss) and the no-arbitrage checks
//!   in detachment and in maturity;
//! - [`expected_loss`]: the `expected-loss` interpolation, base expected
//!   loss interpolated by a rising concave spline (repaired to the nearest
//!   admissible knot values when the quotes allow none), and the
//!   correlation read back off it;
//! - [`reprice`]: every quoted tranche priced back off the surface.

pub mod diagnostics;
pub mod expected_loss;
pub mod reprice;
pub mod skew;

pub use diagnostics::{diagnose, MaturityDiagnostics};
pub use skew::{Lookup, MaturitySkew, Surface};

use crate::error::{Error, ErrorKind, Result};
use crate::loss::PoolModel;
use crate::math::interp::Interp;

/// Whether `interp` can run on knots solved in `model`: `expected-loss`
/// converts between correlation and base expected loss in the large pool,
/// so in a pool of n names it is refused.
///
/// # Errors
/// [`ErrorKind::Usage`] for `expected-loss` in a pool of n names.
///
/// # Example
/// ```
/// use skewbook::loss::PoolModel;
/// use skewbook::math::interp::Interp;
/// use skewbook::surface::check_interp_in_model;
/// assert!(check_interp_in_model(Interp::Pchip, PoolModel::Names(125)).is_ok());
/// assert!(check_interp_in_model(Interp::ExpectedLoss, PoolModel::Names(125)).is_err());
/// ```
pub fn check_interp_in_model(interp: Interp, model: PoolModel) -> Result<()> {
    if interp == Interp::ExpectedLoss && model != PoolModel::LargePool {
        return Err(Error::msg(
            ErrorKind::Usage,
            "--interp expected-loss reads correlations back through the large pool: \
             use linear or pchip with --names",
        ));
    }
    Ok(())
}
