//! Index legs integrated exactly under piecewise-flat hazard and forward rates.
//!
//! # Formula
//! On a sub-interval [a, b] where hazard h and forward f are constant, with
//! DS(a) = DF(a) S(a), λ = h + f and Δ = b - a:
//! ```text
//! ∫ DF(t) dPD(t)          = h DS(a) E1,        E1 = (1 - e^(-λΔ)) / λ
//! ∫ (t - a) DF(t) dPD(t)  = h DS(a) E2,        E2 = (1 - e^(-λΔ) (1 + λΔ)) / λ²
//! ```
//! Every period is split at each hazard knot and discount breakpoint inside
//! it. Accrued on default runs from the period start in Act/360 days, so
//! its time weight is (t - start) · 365 / 360 in curve time.

use super::piecewise::PiecewiseConstant;
use super::DiscountCurve;
use crate::dates::Schedule;

/// The two legs of an index (per unit notional).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct IndexLegs {
    /// Protection leg, (1 - R) times the discounted default probability
    /// from step-in to maturity + 1 day.
    pub protection: f64,
    /// Risky annuity: premium leg per unit running spread, with accrued on default.
    pub annuity: f64,
}

/// E1 = ∫₀^Δ e^(-λτ) dτ and E2 = ∫₀^Δ τ e^(-λτ) dτ.
///
/// Below |λΔ| = 0.5 the closed form of E2 loses digits to cancellation
/// (1 - e^(-x)(1 + x) ≈ x²/2), so both use their Taylor series there:
/// E1 = Δ Σ (-x)ⁿ / ((n+1) n!), E2 = Δ² Σ (-x)ⁿ / ((n+2) n!).
fn exp_moments(lambda: f64, dt: f64) -> (f64, f64) {
    if (lambda * dt).abs() < 0.5 {
        exp_moments_series(lambda, dt)
    } else {
        exp_moments_closed(lambda, dt)
    }
}

fn exp_moments_series(lambda: f64, dt: f64) -> (f64, f64) {
    let x = lambda * dt;
    let (mut term, mut s1, mut s2) = (1.0, 0.0, 0.0);
    for n in 0..24 {
        s1 += term / (n + 1) as f64;
        s2 += term / (n + 2) as f64;
        term *= -x / (n + 1) as f64;
    }
    (dt * s1, dt * dt * s2)
}

fn exp_moments_closed(lambda: f64, dt: f64) -> (f64, f64) {
    let x = lambda * dt;
    (
        -(-x).exp_m1() / lambda,
        (1.0 - (-x).exp() * (1.0 + x)) / (lambda * lambda),
    )
}

/// Sorted breakpoints of both curves strictly inside (a, b).
fn breakpoints(a: f64, b: f64, h: &PiecewiseConstant, f: &PiecewiseConstant, out: &mut Vec<f64>) {
    out.clear();
    out.push(a);
    let (mut i, mut j) = (0, 0);
    let (ht, ft) = (h.times(), f.times());
    loop {
        let next = match (ht.get(i), ft.get(j)) {
            (Some(&x), Some(&y)) if x <= y => {
                i += 1;
                x
            }
            (Some(_), Some(&y)) => {
                j += 1;
                y
            }
            (Some(&x), None) => {
                i += 1;
                x
            }
            (None, Some(&y)) => {
                j += 1;
                y
            }
            (None, None) => break,
        };
        if next > a && next < b && next > *out.last().expect("starts with a") {
            out.push(next);
        }
        if next >= b {
            break;
        }
    }
    out.push(b);
}

/// Protection leg and risky annuity of an index with this schedule.
///
/// # Formula
/// ```text
/// protection = (1 - R) ∫_{step-in}^{maturity+1} DF(t) dPD(t)
/// annuity    = Σ_i accrual_i DF(pay_i) S(end_i)
///            + Σ_i ∫_{start_i}^{end_i} ((t - start_i) days / 360) DF(t) dPD(t)
/// ```
///
/// # References
/// The project's conventions document, "Pool hazard curve".
///
/// ```
/// use chrono::NaiveDate;
/// use skewbook::curve::{legs::index_legs, piecewise::PiecewiseConstant, DiscountCurve};
/// use skewbook::dates::Schedule;
/// let trade = NaiveDate::from_ymd_opt(2026, 12, 1).ok_or("date")?;
/// let maturity = NaiveDate::from_ymd_opt(2031, 12, 20).ok_or("date")?;
/// let s = Schedule::new(trade, maturity);
/// // No default risk: no protection, and the annuity is the sum of accruals.
/// let legs = index_legs(&s, &DiscountCurve::flat(0.0), &PiecewiseConstant::flat(0.0), 0.4);
/// let accruals: f64 = s.periods.iter().map(|p| p.accrual).sum();
/// assert_eq!(legs.protection, 0.0);
/// assert!((legs.annuity - accruals).abs() < 1e-14);
/// # Ok::<(), &'static str>(())
/// ```
pub fn index_legs(
    schedule: &Schedule,
    discount: &DiscountCurve,
    hazard: &PiecewiseConstant,
    recovery: f64,
) -> IndexLegs {
    index_legs_of_periods(
        schedule,
        discount,
        hazard,
        recovery,
        0..schedule.periods.len(),
    )
}

/// The legs' contributions of the periods `range` of the schedule only
/// (their sum over a partition of the periods is [`index_legs`]). The
/// bootstrap uses it to price once the periods a new pillar cannot touch.
pub fn index_legs_of_periods(
    schedule: &Schedule,
    discount: &DiscountCurve,
    hazard: &PiecewiseConstant,
    recovery: f64,
    range: std::ops::Range<usize>,
) -> IndexLegs {
    let fwd = discount.forward();
    let mut cuts = Vec::with_capacity(8);
    let (mut default_pv, mut annuity) = (0.0, 0.0);
    for p in &schedule.periods[range] {
        breakpoints(p.t_start, p.t_end, hazard, fwd, &mut cuts);
        let mut accrued = 0.0;
        for w in cuts.windows(2) {
            let (a, b) = (w[0], w[1]);
            let h = hazard.value_at(a);
            if h == 0.0 {
                continue;
            }
            let lambda = h + fwd.value_at(a);
            let ds = (-(hazard.integral(a) + fwd.integral(a))).exp();
            let (e1, e2) = exp_moments(lambda, b - a);
            default_pv += h * ds * e1;
            accrued += h * ds * ((a - p.t_start) * e1 + e2);
        }
        let survival_end = (-hazard.integral(p.t_end)).exp();
        annuity += p.accrual * discount.df(p.t_pay) * survival_end + accrued * 365.0 / 360.0;
    }
    IndexLegs {
        protection: (1.0 - recovery) * default_pv,
        annuity,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn series_and_closed_form_meet() {
        for &(l, dt) in &[
            (0.05, 0.25),
            (1e-3, 0.09),
            (-0.02, 0.3),
            (2.0, 0.25),
            (0.0, 0.25),
            (5.0, 0.3),
        ] {
            let (e1, e2) = exp_moments(l, dt);
            // Midpoint rule on a fine grid as the outside check.
            let n = 20000;
            let (mut i1, mut i2) = (0.0, 0.0);
            for k in 0..n {
                let t = (k as f64 + 0.5) * dt / n as f64;
                i1 += (-l * t).exp() * dt / n as f64;
                i2 += t * (-l * t).exp() * dt / n as f64;
            }
            assert!((e1 - i1).abs() < 1e-9 * e1, "{l} {dt}");
            assert!((e2 - i2).abs() < 1e-9 * e2, "{l} {dt}");
        }
        // Series and closed form agree around the switch at |λΔ| = 0.5.
        for &x in &[0.3, 0.5, 0.7, -0.5] {
            let (s1, s2) = exp_moments_series(x / 0.25, 0.25);
            let (c1, c2) = exp_moments_closed(x / 0.25, 0.25);
            assert!(
                (s1 / c1 - 1.0).abs() < 1e-15 && (s2 / c2 - 1.0).abs() < 1e-14,
                "{x}"
            );
        }
    }
}
