//! # skewbook
//!
//! Implied tranche correlation from credit index and tranche quotes, and
//! real-world PD and asset correlation from default histories.
//!
//! The pricing contract (units, dates, curves, legs) is the project's
//! conventions document; the README states it in brief. In short:
//!
//! - the pool's hazard curve is piecewise constant, bootstrapped from index
//!   quotes ([`curve::hazard`]);
//! - tranches are priced in the large homogeneous pool with the Vasicek
//!   one-factor Gaussian factor ([`loss`], [`tranche`]);
//! - compound correlation (every root per tranche) and base correlation
//!   (bootstrapped bottom-up per maturity) are backed out of quotes
//!   ([`solve`]);
//! - [`consistency`] checks that a maturity's tranche quotes agree with
//!   the index curve;
//! - [`realworld`] calibrates PD and asset correlation from default histories.
//!
//! Inside the library every rate, spread, probability and bound is a
//! fraction; conversion from bp and percent happens once, in [`input`].
//!
//! # The model in a page
//!
//! ```text
//! hazard        h(t) piecewise constant, knots at each index maturity + 1 day
//! survival      S(t) = exp(-∫₀ᵗ h),  PD(t) = 1 - S(t),  DF(t) = exp(-r(t) t)
//! index legs    protection = (1-R) ∫ DF dPD;  annuity = Σ accrual DF(pay) S(end) + accrued on default
//! factor        p(Z, t) = N((G(PD(t)) - √ρ Z) / √(1-ρ)),  Z ~ N(0, 1)
//! base [0, K]   E[min(L, K)] = (1-R) [Φ₂(c, -A; -√ρ) + k N(A)],  k = K/(1-R),
//!               A = (c - √(1-ρ) G(k)) / √ρ,  c = G(PD)
//! tranche legs  protection = Σ DF(pay)(EL(end) - EL(start));
//!               annuity = Σ accrual DF(pay) (N(start) + N(end)) / 2
//! upfront       u DF(settlement) = protection - c · annuity
//! compound ρ    every root of the tranche value at one flat ρ
//! base ρ_D      [A, D] = [0, D] at ρ_D minus [0, A] at ρ_A, bottom-up
//! ```
//!
//! # References
//!
//! - O. Vasicek, "Loan portfolio value", Risk 15(12), 2002: the large-pool
//!   loss distribution ([`loss`], [`realworld::vasicek`]).
//! - A. Genz, "Numerical computation of rectangular bivariate and
//!   trivariate normal and t probabilities", Statistics and Computing 14,
//!   2004: the bivariate normal ([`math::bvn`]).
//! - R. Torresetti, D. Brigo and A. Pallavicini, "Implied correlation in CDO
//!   tranches: a paradigm to be handled with care", 2006: zero or two
//!   compound correlations ([`solve::compound`]).
//! - R. Frey and A. McNeil, "Dependent defaults in models of portfolio
//!   credit risk", Journal of Risk, 2003: the joint-default moment estimator
//!   ([`realworld::estimators`]).
//! - Basel Committee on Banking Supervision, "An Explanatory Note on the
//!   Basel II IRB Risk Weight Functions", 2005 ([`realworld::irb`]).
#![deny(missing_docs)]

pub mod book;
pub mod chart;
pub mod consistency;
pub mod curve;
pub mod dates;
pub mod error;
pub mod flags;
pub mod input;
pub mod loss;
pub mod market;
pub mod math;
pub mod output;
pub mod realworld;
pub mod report;
pub mod solve;
pub mod surface;
pub mod tranche;

pub use error::{Error, ErrorKind, Result};

/// What skewbook's figures are and are not, in one sentence every report
/// that gives risk or capital figures repeats (`loss`, `realworld`; the
/// README's caution says the same at length).
pub const CAUTION: &str = "These are model results, not advice or recommendations: \
they depend on the inputs supplied and on the model's assumptions, and can be wrong \
or misleading where those do not hold. Anyone using them for trading, valuation, risk \
or capital must apply their own firm's model-risk governance and validation, licensed \
professional practice and local regulation.";
