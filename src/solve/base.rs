//! Base correlation, bootstrapped bottom-up per maturity.
//!
//! # Why bottom-up
//!
//! A quoted tranche [A, D] is valued as the base tranche [0, D] at rho_D
//! minus [0, A] at rho_A, both in pool-notional units with the quoted
//! tranche's own coupon and upfront. The equity tranche fixes rho at its
//! detachment; each tranche above then has one unknown, rho_D, given the
//! rho_A already solved. The base tranche's expected loss falls as its
//! correlation rises, so its value is monotone in every case we know and a
//! solution is unique when it exists; recovery amortisation pulls the
//! outstanding notional both ways, so this is not proved. The solve takes
//! the first sign change from low correlation upward.
//!
//! # No solution is an answer
//!
//! When no rho in [1e-4, 0.9999] reaches the quote, that tranche and every
//! tranche above it at the maturity have no base correlation (the chain is
//! broken). The value is never clamped to the end of the range.

use super::compound::{scan_grid, CORRELATION_TOLERANCE, RHO_MAX, RHO_MIN};
use crate::math::root::{newton_bracketed_hermite, Solution};
use crate::tranche::{BaseLegs, TrancheValuer};

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
        /// Model quotes (file unit) at rho = 1e-4 and at rho = 0.9999;
        /// `None` where the model has no quote (a spread quote on a tranche
        /// with no annuity left).
        range: (Option<f64>, Option<f64>),
    },
    /// The value changes sign in `bracket` but the solver stopped without
    /// converging: a base correlation exists there and is not reported.
    Failed {
        /// The correlations between which the root lies.
        bracket: (f64, f64),
    },
}

/// Solves rho_D for tranche `v` given rho_A at its attachment (ignored when
/// the attachment is 0), bracketing on the ends of the search range.
///
/// # Formula
/// ```text
/// find rho_D:  (prot_D(rho_D) - prot_A(rho_A)) - c (ann_D(rho_D) - ann_A(rho_A)) - u DF(ts) W = 0
/// ```
pub fn base_correlation(v: &TrancheValuer, rho_attach: f64) -> BaseSolve {
    let lower = v.lower_legs(rho_attach);
    let ends = [v.upper_legs(RHO_MIN), v.upper_legs(RHO_MAX)];
    solve_on(v, &lower, &[RHO_MIN, RHO_MAX], &ends).0
}

/// [`base_correlation`] with the upper base tranche's legs already evaluated
/// at each correlation of [`scan_grid`] (as the compound scan has them), and
/// the lower base's legs at rho_A: the bracket comes from the scan for free.
pub fn base_correlation_from_scan(
    v: &TrancheValuer,
    lower: &BaseLegs,
    upper_scan: &[BaseLegs],
) -> BaseSolve {
    base_correlation_with_legs(v, lower, upper_scan).0
}

/// [`base_correlation_from_scan`], and with a solution the upper base's
/// legs at it (the last the solver evaluated), so that the caller can
/// reprice the tranche and start the next link of the chain without
/// valuing that base again.
pub fn base_correlation_with_legs(
    v: &TrancheValuer,
    lower: &BaseLegs,
    upper_scan: &[BaseLegs],
) -> (BaseSolve, Option<BaseLegs>) {
    solve_on(v, lower, &scan_grid(), upper_scan)
}

/// Polishes the first sign change of the value over `rhos` by bracketed
/// Newton (started from the cubic through the values and slopes at the
/// ends of the interval), or reports which side of the range the quote
/// lies on. With a solution, also the upper base's legs there.
fn solve_on(
    v: &TrancheValuer,
    lower: &BaseLegs,
    rhos: &[f64],
    upper: &[BaseLegs],
) -> (BaseSolve, Option<BaseLegs>) {
    let legs: Vec<_> = upper.iter().map(|u| v.combine(lower, u, false)).collect();
    let f: Vec<f64> = legs.iter().map(|l| v.value(l)).collect();
    for i in 0..f.len() - 1 {
        if f[i] * f[i + 1] <= 0.0 {
            // The upper base's legs at the last correlation evaluated.
            let mut last: Option<(f64, BaseLegs)> = None;
            let fdf = |rho: f64| {
                let u = v.upper_legs(rho);
                last = Some((rho, u));
                let l = v.combine(lower, &u, false);
                (v.value(&l), v.d_value(&l))
            };
            let solved = newton_bracketed_hermite(
                fdf,
                (rhos[i], rhos[i + 1]),
                (f[i], f[i + 1]),
                (v.d_value(&legs[i]), v.d_value(&legs[i + 1])),
                CORRELATION_TOLERANCE,
            );
            return match solved {
                Ok(s) => {
                    let at = |rho: f64| {
                        if rho == rhos[i] {
                            upper[i]
                        } else if rho == rhos[i + 1] {
                            upper[i + 1]
                        } else {
                            match last {
                                Some((r, u)) if r == rho => u,
                                _ => v.upper_legs(rho),
                            }
                        }
                    };
                    let u = at(s.value);
                    (BaseSolve::Solved(s), Some(u))
                }
                Err(_) => (
                    BaseSolve::Failed {
                        bracket: (rhos[i], rhos[i + 1]),
                    },
                    None,
                ),
            };
        }
    }
    let q_lo = v.model_quote(&legs[0]);
    let q_hi = v.model_quote(&legs[legs.len() - 1]);
    let quote = v.quote.in_file_unit();
    // A missing model quote (no annuity) is a par spread beyond every number.
    let highest = q_lo.unwrap_or(f64::MAX).max(q_hi.unwrap_or(f64::MAX));
    let side = if quote > highest {
        Side::Above
    } else {
        Side::Below
    };
    (
        BaseSolve::NoSolution {
            side,
            range: (q_lo, q_hi),
        },
        None,
    )
}
