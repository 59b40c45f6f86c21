//! Base correlation, bootstrapped bottom-up per maturity.
//!
//! # Why bottom-up
//!
//! A quoted tranche [A, D] is valued as the base tranche [0, D] at rho_D
//! minus [0, A] at rho_A, both in pool-notional units with the quoted
//! tranche's own coupon and upfront. The equity tranche fixes rho at its
//! detachment; each tranche above then has one unknown, rho_D, given the
//! rho_A already solved. The base tranche's value is monotone in its
//! correlation, so a solution is unique when it exists.
//!
//! # No solution is an answer
//!
//! When no rho in [1e-4, 0.9999] reaches the quote, that tranche and every
//! tranche above it at the maturity have no base correlation (the chain is
//! broken). The value is never clamped to the end of the range.

use super::compound::{CORRELATION_TOLERANCE, RHO_MAX, RHO_MIN};
use super::root::{newton_bracketed, Solution};
use crate::tranche::TrancheValuer;

/// Which side of the attainable range a quote fell on.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Side {
    /// The quote is below every model quote in the range.
    Below,
    /// The quote is above every model quote in the range.
    Above,
}

/// The outcome of one base-correlation solve.
#[derive(Debug, Clone, PartialEq)]
pub enum BaseSolve {
    /// The base correlation at the detachment.
    Solved(Solution),
    /// No rho in the range reaches the quote.
    NoSolution {
        /// Where the quote lies against the range.
        side: Side,
        /// Model quotes (file unit) at rho = 1e-4 and at rho = 0.9999.
        range: (f64, f64),
    },
}

/// Solves rho_D for tranche `v` given rho_A at its attachment (ignored when
/// the attachment is 0).
///
/// # Formula
/// ```text
/// find rho_D:  (prot_D(rho_D) - prot_A(rho_A)) - c (ann_D(rho_D) - ann_A(rho_A)) - u DF(ts) W = 0
/// ```
pub fn base_correlation(v: &TrancheValuer, rho_attach: f64) -> BaseSolve {
    let lo = v.legs(rho_attach, RHO_MIN);
    let hi = v.legs(rho_attach, RHO_MAX);
    let (f_lo, f_hi) = (v.value(&lo), v.value(&hi));
    if f_lo * f_hi <= 0.0 {
        let fdf = |rho: f64| {
            let legs = v.legs(rho_attach, rho);
            (v.value(&legs), v.d_value(&legs))
        };
        if let Ok(s) = newton_bracketed(fdf, RHO_MIN, RHO_MAX, f_lo, f_hi, CORRELATION_TOLERANCE) {
            return BaseSolve::Solved(s);
        }
    }
    let q_lo = v.model_quote(&lo).unwrap_or(f64::INFINITY);
    let q_hi = v.model_quote(&hi).unwrap_or(f64::INFINITY);
    let quote = v.quote.in_file_unit();
    let side = if quote > q_lo.max(q_hi) {
        Side::Above
    } else {
        Side::Below
    };
    BaseSolve::NoSolution {
        side,
        range: (q_lo, q_hi),
    }
}
