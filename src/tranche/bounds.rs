//! A tranche's bounds, checked once, apart from any contract on it.

use crate::error::{Error, ErrorKind, Result};
use serde::Serialize;

/// Narrowest tranche the library prices, as a fraction of pool notional:
/// below it `1 / W` amplifies rounding in the two base values past any
/// meaning (and a subnormal width overflows).
pub const MIN_WIDTH: f64 = 1e-10;

/// A tranche [A, D] of the pool: `0 <= A < D <= 1`, fractions of pool
/// notional, width at least [`MIN_WIDTH`].
///
/// ```
/// use skewbook::tranche::Tranche;
/// let t = Tranche::new(0.03, 0.07)?;
/// assert!((t.width() - 0.04).abs() < 1e-15);
/// assert!(Tranche::new(0.07, 0.03).is_err());
/// assert!(Tranche::new(0.0, 1.5).is_err());
/// assert!(Tranche::new(0.0, f64::NAN).is_err());
/// # Ok::<(), skewbook::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Tranche {
    attach: f64,
    detach: f64,
}

impl Tranche {
    /// The tranche [attach, detach].
    ///
    /// # Errors
    /// [`ErrorKind::InvalidInput`] unless both are numbers with
    /// `0 <= attach < detach <= 1` and `detach - attach >= MIN_WIDTH`.
    pub fn new(attach: f64, detach: f64) -> Result<Tranche> {
        let ok = (0.0..=1.0).contains(&attach)
            && (0.0..=1.0).contains(&detach)
            && detach - attach >= MIN_WIDTH;
        if ok {
            Ok(Tranche { attach, detach })
        } else {
            Err(Error::msg(
                ErrorKind::InvalidInput,
                format!(
                    "tranche: expected 0 <= attachment < detachment <= 1 with a width of at \
                     least {MIN_WIDTH}, found [{attach}, {detach}]"
                ),
            ))
        }
    }

    /// Attachment A.
    pub fn attach(&self) -> f64 {
        self.attach
    }

    /// Detachment D.
    pub fn detach(&self) -> f64 {
        self.detach
    }

    /// Width W = D - A.
    pub fn width(&self) -> f64 {
        self.detach - self.attach
    }

    /// Whether the tranche ends at 100% (to 1e-12).
    pub fn is_top(&self) -> bool {
        self.detach >= 1.0 - 1e-12
    }

    /// Whether the tranche is the whole pool, [0, 100%].
    pub fn is_whole_pool(&self) -> bool {
        self.attach <= 0.0 && self.is_top()
    }
}
