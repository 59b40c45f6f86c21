//! Every quoted tranche priced back off the surface: what an interpolation
//! costs the quotes it was built from.
//!
//! # Formula
//! A quoted tranche [A, D] of maturity M with a base-correlation chain
//! (solved, or the top tranche above a solved chain) is valued as a trade:
//! ```text
//! [A, D] = base [0, D] at rho(D, M)  minus  base [0, A] at rho(A, M)
//! error  = model quote - quote       (the quote's unit: bp or percent)
//! ```
//! beside the error the calibrated base curve itself leaves (what
//! `implied` reports): rounding for a tranche with a base correlation of
//! its own, and for the top tranche [A, 100%], which has none, whatever the
//! quote's rounding makes it. `linear` and `pchip` pass through their
//! knots, so the two agree; `expected-loss` agrees when the knots are
//! admissible, and the difference is what the repair costs when they are
//! not.

use super::skew::Surface;
use crate::error::Result;
use crate::market::Quote;
use crate::solve::chain::{BaseOutcome, DateImplied};
use crate::tranche::{Tranche, TrancheSchedule, TrancheValuer};
use chrono::NaiveDate;

/// One quoted tranche priced off the surface.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct QuoteRepricing {
    /// Maturity.
    pub maturity: NaiveDate,
    /// Bounds.
    pub tranche: Tranche,
    /// The quote.
    pub quote: Quote,
    /// rho(A, M); `None` when A = 0.
    pub rho_attach: Option<f64>,
    /// rho(D, M); `None` when D = 100%.
    pub rho_detach: Option<f64>,
    /// Model quote off the surface minus the quote, in the quote's unit
    /// (bp for `spread_bp`, percent for `upfront_pct`); `None` when the
    /// model has no quote (a spread with no annuity left).
    pub error: Option<f64>,
    /// The same off the calibrated base curve (the chain's knots).
    pub chain_error: Option<f64>,
}

/// Every quoted tranche of `implied` with a base correlation of its own, or
/// the top tranche of a solved chain, priced off `surface` (built from the
/// same date), by maturity then attachment.
///
/// # Errors
/// Schedule and bound errors of a tranche (not expected for quotes the
/// chain already priced).
///
/// # References
/// Common practice: a surface built from quotes reprices them.
pub fn reprice_quotes(implied: &DateImplied, surface: &Surface) -> Result<Vec<QuoteRepricing>> {
    let mut out = Vec::new();
    for m in &implied.maturities {
        let priced: Vec<_> = m
            .tranches
            .iter()
            .filter(|t| matches!(t.base, BaseOutcome::Solved { .. } | BaseOutcome::Top { .. }))
            .collect();
        let Some(first) = priced.first() else {
            continue;
        };
        let maturity = first.quote.maturity;
        let schedule = TrancheSchedule::for_pool(&implied.pool, maturity)?;
        for t in priced {
            let q = &t.quote;
            let tranche = Tranche::new(q.attach, q.detach)?;
            let at = |k: f64| -> Option<f64> {
                if k <= 0.0 || k >= 1.0 {
                    None
                } else {
                    surface.rho(k, maturity).map(|l| l.rho)
                }
            };
            let (rho_attach, rho_detach) = (at(q.attach), at(q.detach));
            let v = TrancheValuer::new(&schedule, tranche, q.quote)?;
            let rho_a = rho_attach.or(rho_detach).unwrap_or(0.5);
            let legs = v.legs(rho_a, rho_detach.unwrap_or(rho_a));
            out.push(QuoteRepricing {
                maturity,
                tranche,
                quote: q.quote,
                rho_attach,
                rho_detach,
                error: v
                    .model_quote(&legs)
                    .map(|x| x - q.quote.exact_in_file_unit()),
                chain_error: t.repriced.and_then(|r| r.error),
            });
        }
    }
    Ok(out)
}
